//! Benchmark D of issue 11 (`cargo bench --bench integrated`): a 1D
//! integrated closure at 10^6 points, on one thread, the way stillpoint
//! evaluates it — the running integral tabulated once at knots and each
//! point integrated from its nearest knot by the verified fixed rule (see
//! `closure/tabulate.rs`) — against integrating each point separately from
//! the reference point (the anchor) with the same quadrature, the
//! double-exponential rule of the table (`closure::integrate::segment`,
//! Takahasi & Mori 1974, Publ. RIMS 9, 721), piece by piece between the
//! switch points of the piecewise law so that every piece is smooth.
//!
//! The closure is the bundled `layered-atmosphere`: a slab in uniform
//! gravity with a piecewise-linear temperature, ln P integrated from the
//! surface, d ln P/dz = −g μ m_u/(k_B T(z)) (hydrostatic balance of an
//! ideal gas). The stillpoint path is timed from the solve (the table is
//! built inside it) to the last pressure, so the table's cost is counted.
//! Before the ratio is judged, the pressures of the two paths are compared
//! at every point: the largest relative difference must be ≤ 1e-12, so the
//! two cannot silently do different work. Target: ≥ 20× faster.
#![deny(clippy::float_cmp)]

use std::hint::black_box;
use std::time::{Duration, Instant};

use stillpoint::background::{Background, StateBlock, Want, LANES};
use stillpoint::closure::integrate::segment;
use stillpoint::formula::Program;

const N: usize = 1_000_000;
const REPS: usize = 5;
const TARGET: f64 = 20.0;
const ACCURACY: f64 = 1e-12;

fn main() {
    let loaded = stillpoint::profile::load("layered-atmosphere", &[]).expect("bundled profile");
    let m = &loaded.model;
    let (lo, hi) = loaded.grid.background_range(loaded.model.shape.frame());
    // Points spread over the grid, ends excluded, not on the knots.
    let zs: Vec<f64> = (0..N)
        .map(|i| lo + (hi - lo) * (i as f64 + 0.5) / N as f64)
        .collect();

    // stillpoint: solve (tabulate) and evaluate the pressure over blocks.
    let table_path = || {
        let (bg, _) = stillpoint::pipeline::solve(&loaded).expect("solves");
        let mut ws = bg.workspace();
        let mut st = StateBlock::new();
        let mut p = Vec::with_capacity(N);
        for block in zs.chunks(LANES) {
            bg.eval(&[block], Want::default(), &mut st, &mut ws);
            p.extend_from_slice(&st.pressure[..block.len()]);
        }
        p
    };

    // Each point by itself: P = P_surf exp(∫ from the anchor), piece by
    // piece between the switch points of the temperature law.
    let laws = stillpoint::closure::derived_laws(m).expect("derived laws");
    let dlnp = laws
        .iter()
        .find(|d| d.name.starts_with("d ln(P)"))
        .expect("the closure integrates ln P");
    let f = Program::compile(&dlnp.expr, &["z"], &|n| m.lookup(n)).expect("compiles");
    let anchor = m.anchor.expect("an anchor");
    let p_anchor = anchor.value;
    let mut breaks: Vec<f64> = ["z1", "z2", "z3"]
        .iter()
        .map(|n| m.lookup(n).expect("switch point"))
        .collect();
    breaks.sort_by(f64::total_cmp);
    let integrand = |z: f64| f.eval(&[z]);
    let point_path = || {
        zs.iter()
            .map(|&z| {
                let (a, b) = (anchor.at.min(z), anchor.at.max(z));
                let mut cuts = vec![a];
                cuts.extend(breaks.iter().copied().filter(|k| *k > a && *k < b));
                cuts.push(b);
                let mut sum: f64 = cuts
                    .windows(2)
                    .map(|w| segment(&integrand, w[0], w[1]))
                    .sum();
                if z < anchor.at {
                    sum = -sum;
                }
                p_anchor * sum.exp()
            })
            .collect::<Vec<f64>>()
    };

    let table = table_path();
    // The per-point path is timed once (about a minute on this machine);
    // this run also gives the values compared.
    let t = Instant::now();
    let points = point_path();
    let tp = t.elapsed();
    let worst = table
        .iter()
        .zip(&points)
        .map(|(a, b)| ((a - b) / b).abs())
        .fold(0.0f64, f64::max);
    println!("benchmark D: layered-atmosphere, ln P integrated at {N} points, one thread");
    println!("largest relative difference of P between the two paths: {worst:.2e} (must be <= {ACCURACY:.0e})");
    assert!(
        worst <= ACCURACY,
        "the two paths disagree: {worst:.3e} > {ACCURACY:.0e}"
    );

    let mut tt: Vec<Duration> = (0..REPS)
        .map(|_| {
            let t = Instant::now();
            black_box(table_path());
            t.elapsed()
        })
        .collect();
    tt.sort();
    let (mt, mp) = (tt[tt.len() / 2], tp);
    let ratio = mp.as_secs_f64() / mt.as_secs_f64();
    println!(
        "table (solve + {N} points): median {:.4} s, fastest {:.4} s",
        mt.as_secs_f64(),
        tt[0].as_secs_f64()
    );
    println!(
        "each point from the anchor:   {:.4} s (one run)",
        mp.as_secs_f64()
    );
    println!(
        "ratio {ratio:.1}x (against the median table run; {:.1}x against the fastest); target >= {TARGET}x: {}",
        mp.as_secs_f64() / tt[0].as_secs_f64(),
        if ratio >= TARGET { "met" } else { "MISSED" }
    );
}
