//! Use stillpoint as a library: load a bundled profile, solve its balance,
//! evaluate the background at a few points and sample a few cells of its
//! grid the way `stillpoint build` writes them.
//!
//! `cargo run --example build_and_sample [PROFILE] [NAME=VALUE ...]`
//! (default `powerlaw-disk`); PROFILE may be a file or a bundled name, and
//! each NAME=VALUE overrides a parameter like `--set`.

use stillpoint::pipeline::{self, Error};
use stillpoint::profile;

/// A cell of the first rows of the grid: its centre and its values.
pub struct Cell {
    /// The cell's centre, one coordinate per grid axis.
    pub centre: Vec<f64>,
    /// (field name, value) for every field with one value per cell.
    pub values: Vec<(String, f64)>,
}

/// The background at `points` along the balance coordinate (ρ, P, v_φ) and
/// the first `cells` cells of the grid as sampled.
pub fn run(
    name: &str,
    overrides: &[(String, String)],
    points: &[f64],
    cells: usize,
) -> Result<(Vec<[f64; 4]>, Vec<Cell>), Error> {
    // 1. The profile: a file or a bundled name, with overrides.
    let loaded = profile::load(name, overrides)?;
    // 2. Solve (refusing a state that is no equilibrium on the grid).
    let built = pipeline::build(&loaded, "build_and_sample example", true)?;
    let bg = built.background();
    // 3. The background at points of its line coordinate (the midplane of
    //    a disk), in the frame's coordinates.
    let line = points
        .iter()
        .map(|&s| {
            let st = bg.on_line(s);
            [s, st.density, st.pressure, st.rotation()]
        })
        .collect();
    // 4. Sample the first row of the grid as the writer would.
    let sampler = built.sampler()?;
    let slab = sampler.slab(0..1).map_err(|e| built.sample_error(e))?;
    let axes = loaded.grid.axes();
    let centres: Vec<Vec<f64>> = axes.iter().map(|a| a.centers()).collect();
    let per_row: usize = loaded.grid.shape()[1..].iter().product();
    let fields = sampler.fields();
    let mut out = Vec::new();
    for i in 0..cells.min(per_row) {
        // C order: the last axis runs fastest.
        let mut rest = i;
        let mut centre = vec![0.0; axes.len()];
        for a in (1..axes.len()).rev() {
            centre[a] = centres[a][rest % axes[a].cells()];
            rest /= axes[a].cells();
        }
        centre[0] = centres[0][0];
        let values = fields
            .iter()
            .zip(&slab.data)
            .filter(|(f, _)| f.placement.per_location() == 1)
            .map(|(f, d)| (f.name.clone(), d[i]))
            .collect();
        out.push(Cell { centre, values });
    }
    Ok((line, out))
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let name = args.first().map_or("powerlaw-disk", String::as_str);
    let overrides: Vec<(String, String)> = match args
        .iter()
        .skip(1)
        .map(|a| profile::parse_override(a))
        .collect()
    {
        Ok(o) => o,
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    };
    let loaded = match profile::load(name, &overrides) {
        Ok(l) => l,
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    };
    let (lo, hi) = loaded.grid.axes()[0].range();
    let points: Vec<f64> = (0..5).map(|i| lo + (hi - lo) * i as f64 / 4.0).collect();
    match run(name, &overrides, &points, 3) {
        Ok((line, cells)) => {
            let s = loaded.model.coordinate();
            println!(
                "{} ({}): background on its line",
                loaded.model.name, loaded.source
            );
            println!("{s:>12} {:>14} {:>14} {:>14}", "rho", "P", "v_phi");
            for [x, rho, p, v] in line {
                println!("{x:>12.6} {rho:>14.6e} {p:>14.6e} {v:>14.6e}");
            }
            println!(
                "first cells of the grid, as sampled ({})",
                loaded.sampling.describe(&loaded.grid)
            );
            for c in cells {
                let at: Vec<String> = c.centre.iter().map(|x| format!("{x:.6}")).collect();
                println!("  cell at ({})", at.join(", "));
                for (n, v) in c.values {
                    println!("    {n:<16} {v:.9e}");
                }
            }
        }
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    }
}
