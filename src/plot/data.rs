//! The numbers a plot shows, all computed through the library: radial or
//! vertical profiles from [`crate::table::tabulate`], slices from the
//! streaming [`Sampler`], and the residual of the balance from the exact
//! accelerations a background returns ([`Want::accelerations`]).
//!
//! Owns: choosing points, cells and log axes, and the refusals of a plot
//! kind a profile cannot have. Does not own: drawing (`draw.rs`) or physics.

use crate::background::{Background, Shape, StateBlock, Want, LANES};
use crate::grid::{Coord, Layout, Spacing};
use crate::pipeline::{self, Error};
use crate::profile::Loaded;
use crate::sample::Sampler;
use crate::units::Dim;

/// One curve of a panel.
#[derive(Clone, Debug)]
pub struct Series {
    /// Values at the panel's `xs` (NaN where there is none).
    pub ys: Vec<f64>,
}

/// A panel of curves against one coordinate.
#[derive(Clone, Debug)]
pub struct Panel {
    /// Horizontal axis label, with units.
    pub xlabel: String,
    /// Vertical axis label, with units.
    pub ylabel: String,
    /// Points along the horizontal axis.
    pub xs: Vec<f64>,
    /// The curves.
    pub series: Vec<Series>,
    /// Logarithmic axes.
    pub log_x: bool,
    /// Logarithmic vertical axis.
    pub log_y: bool,
    /// A horizontal reference line (value, label), e.g. a tolerance.
    pub reference: Option<(f64, String)>,
}

/// A field on a plane of cells.
#[derive(Clone, Debug)]
pub struct Map {
    /// Horizontal axis label, with units.
    pub xlabel: String,
    /// Vertical axis label, with units.
    pub ylabel: String,
    /// Cell edges along the horizontal axis.
    pub x_edges: Vec<f64>,
    /// Cell edges along the vertical axis.
    pub y_edges: Vec<f64>,
    /// Values, `values[i][j]` at horizontal cell i and vertical cell j.
    pub values: Vec<Vec<f64>>,
    /// The colour bar's label: the field with units.
    pub label: String,
    /// Where the plane lies in a 3D grid (empty for 2D grids).
    pub plane: String,
    /// How the plane's two coordinates map to the page.
    pub shape: Embed,
    /// The page's axis labels, with units, when `shape` is not `Plain`.
    pub page_labels: (String, String),
}

/// How cells of a plane are placed on the page: in their own coordinates,
/// or in their real shape.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Embed {
    /// The plane's coordinates as they are (Cartesian planes, (R, z)).
    Plain,
    /// (R, φ) drawn at x = R cos φ, y = R sin φ.
    Polar,
    /// (r, θ) drawn at R = r sin θ, z = r cos θ (θ from the +z axis).
    Meridional,
}

impl Embed {
    /// The page position of the plane's point (a, b).
    pub fn place(self, a: f64, b: f64) -> (f64, f64) {
        match self {
            Embed::Plain => (a, b),
            Embed::Polar => (a * b.cos(), a * b.sin()),
            Embed::Meridional => (a * b.sin(), a * b.cos()),
        }
    }
}

/// Points along the balance coordinate: `n` over the grid's range, spaced
/// logarithmically when the grid's axis is (as `stillpoint table` does),
/// and whether the axis is drawn logarithmic.
fn line_points(loaded: &Loaded, lo: f64, hi: f64, n: usize) -> (Vec<f64>, bool) {
    let log = loaded.grid.axes()[0].spacing == Spacing::Log && lo > 0.0;
    let xs = crate::closure::spaced(lo, hi, n, log);
    // A log axis where the range spans two decades or more (on fewer,
    // plotters' log ticks leave a single label).
    (xs, lo > 0.0 && hi / lo >= 100.0)
}

/// Whether positive values spanning two decades or more want a log axis
/// (common practice, no source).
pub fn spans_decades(values: &[f64]) -> bool {
    let finite = values.iter().copied().filter(|v| v.is_finite());
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in finite {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    lo > 0.0 && hi.is_finite() && hi / lo >= 100.0
}

fn refuse_torus(loaded: &Loaded, what: &str) -> Result<(), Error> {
    if loaded.model.torus.is_some() {
        return Err(Error::Usage(format!(
            "plot --what {what}: {} is a torus (balance.torus), solved in (R, z) and not along a \
             line; plot it with --what slice (`stillpoint check` reports its residuals)",
            loaded.source
        )));
    }
    Ok(())
}

/// Profiles along the balance coordinate: ρ, P, T (or c² without a
/// temperature), and for disks v_φ/v_K, 1 − v_φ/v_K and H/R; the text of
/// a caution when some points are no equilibrium.
pub fn curves(loaded: &Loaded, n: usize) -> Result<(Vec<Panel>, Option<String>), Error> {
    refuse_torus(loaded, "curves")?;
    let (bg, domain) = pipeline::solve_unverified(loaded)?;
    let (xs, log_x) = line_points(loaded, domain.lo, domain.hi, n);
    let t =
        crate::table::tabulate(&loaded.model, &bg, &xs).map_err(|e| Error::closure(loaded, e))?;
    let s = loaded.model.coordinate();
    let xlabel = format!("{s} [{}]", loaded.model.units.unit_string(Dim::LENGTH));
    let mut wanted = vec![("rho", "density ρ"), ("P", "pressure P")];
    if t.names.iter().any(|n| n == "T") {
        wanted.push(("T", "temperature T"));
    } else {
        wanted.push(("c^2", "sound speed squared c²"));
    }
    if loaded.model.shape.is_disk() {
        wanted.extend([
            ("v_phi/v_K", "v_φ/v_K"),
            ("1-v_phi/v_K", "1 − v_φ/v_K"),
            ("H/R", "aspect ratio H/R = c/v_K"),
        ]);
    }
    let vertically = loaded.model.vertically_integrated;
    let mut panels = Vec::new();
    for (col, label) in wanted {
        let Some(j) = t.names.iter().position(|n| n == col) else {
            continue;
        };
        let ys: Vec<f64> = t.rows.iter().map(|r| r[j]).collect();
        let label = match (col, vertically) {
            ("rho", true) => "surface density Σ",
            ("P", true) => "vertically integrated pressure",
            _ => label,
        };
        let log_y = spans_decades(&ys);
        panels.push(Panel {
            xlabel: xlabel.clone(),
            ylabel: format!("{label} [{}]", t.units[j]),
            xs: xs.clone(),
            series: vec![Series { ys }],
            log_x,
            log_y,
            reference: None,
        });
    }
    let bad = t.notes.iter().filter(|n| n.is_some()).count();
    let caution = (bad > 0).then(|| {
        format!(
            "caution: no equilibrium at {bad} of {} points (`stillpoint table` marks them)",
            xs.len()
        )
    });
    Ok((panels, caution))
}

/// The residual of the balance along the balance coordinate (the midplane
/// of a disk), relative to its largest term: |v_φ²/R − ∂Φ/∂R − ∂P/∂R/ρ|
/// for disks, |∂Φ/∂s + ∂P/∂s/ρ| for slabs and spheres, from the exact
/// accelerations of the solved background; for a stratified disk with a
/// closed-form pressure a second panel holds the vertical balance (see
/// [`vertical`]). Values below [`FLOOR`] (exact zeros among them) are drawn
/// at it, and the returned note says how many on the first panel.
pub fn residual(loaded: &Loaded, n: usize) -> Result<(Vec<Panel>, Option<String>), Error> {
    refuse_torus(loaded, "residual")?;
    let (bg, domain) = pipeline::solve_unverified(loaded)?;
    let (xs, log_x) = line_points(loaded, domain.lo, domain.hi, n);
    let disk = loaded.model.shape.is_disk();
    let zeros = vec![0.0; LANES];
    let mut ws = bg.workspace();
    let mut block = StateBlock::new();
    let mut ys = Vec::with_capacity(xs.len());
    for chunk in xs.chunks(LANES) {
        let coords: Vec<&[f64]> = match bg.frame().dims() {
            1 => vec![chunk],
            _ => vec![chunk, &zeros[..chunk.len()]],
        };
        let want = Want {
            accelerations: true,
        };
        bg.eval(&coords, want, &mut block, &mut ws);
        for (i, &x) in chunk.iter().enumerate() {
            let v = block.velocity[1][i];
            let cen = if disk { v * v / x } else { 0.0 };
            let (g, a) = (block.gravity[0][i], block.pressure_accel[0][i]);
            let scale = cen.abs().max(g.abs()).max(a.abs());
            let r = (cen + g + a).abs();
            ys.push(if scale > 0.0 { r / scale } else { r });
        }
    }
    let low = ys.iter().filter(|y| **y < FLOOR).count();
    for y in &mut ys {
        if *y < FLOOR {
            *y = FLOOR;
        }
    }
    let what = match loaded.model.shape {
        Shape::StratifiedDisk => "radial balance at z = 0",
        s if s.is_disk() => "radial balance",
        _ => "hydrostatic balance",
    };
    let s = loaded.model.coordinate();
    let note = (low > 0).then(|| {
        format!(
            "{low} of {} values below {FLOOR:.0e} (exact zeros included) drawn at {FLOOR:.0e}",
            xs.len()
        )
    });
    let xlabel = format!("{s} [{}]", loaded.model.units.unit_string(Dim::LENGTH));
    let reference = Some((
        crate::check::DEFAULT_TOLERANCE,
        format!("check tolerance {:.0e}", crate::check::DEFAULT_TOLERANCE),
    ));
    let mut panels = vec![Panel {
        xlabel: xlabel.clone(),
        ylabel: format!("relative residual of the {what} [1]"),
        xs: xs.clone(),
        series: vec![Series { ys }],
        log_x,
        log_y: true,
        reference: reference.clone(),
    }];
    if let Some((ys, zero)) = vertical(loaded, &domain, &xs)? {
        let (z0, z1) = domain.height.unwrap_or((0.0, 0.0));
        let how = if zero {
            ": the residual simplifies to 0"
        } else {
            ""
        };
        panels.push(Panel {
            xlabel,
            ylabel: format!(
                "vertical balance, largest over z in [{}, {}]{how} [1]",
                super::draw::tick(z0, z1 - z0),
                super::draw::tick(z1, z1 - z0)
            ),
            xs,
            series: vec![Series { ys }],
            log_x,
            log_y: true,
            reference,
        });
    }
    Ok((panels, note))
}

/// The vertical balance of a stratified disk with a closed-form pressure,
/// |(1/ρ) ∂P/∂z + ∂Φ/∂z| over its largest term, from the residual formula
/// `check` uses (`Laws::vertical_residual`, exact derivatives) evaluated
/// in double precision: for each R of `xs` the largest over 33 heights of
/// the grid's range (at least [`FLOOR`]), and whether the residual
/// simplified to 0 as a formula. None for other balances.
fn vertical(
    loaded: &Loaded,
    domain: &crate::closure::Domain,
    xs: &[f64],
) -> Result<Option<(Vec<f64>, bool)>, Error> {
    let m = &loaded.model;
    let (Shape::StratifiedDisk, Some((z0, z1))) = (m.shape, domain.height) else {
        return Ok(None);
    };
    let laws = crate::closure::Laws::build(m).map_err(|e| Error::closure(loaded, e))?;
    let Some((res, terms)) = laws.vertical_residual(m) else {
        return Ok(None);
    };
    let compile = |e: &crate::formula::Expr| {
        m.compile_field(e).map_err(|error| {
            Error::closure(
                loaded,
                crate::closure::ClosureError::Formula {
                    origin: "vertical residual".into(),
                    error,
                },
            )
        })
    };
    let zero = res.as_number().is_some_and(|v| v == 0.0);
    let res = compile(&res)?;
    let terms = terms
        .iter()
        .map(|(_, t)| compile(t))
        .collect::<Result<Vec<_>, _>>()?;
    let n = 33;
    Ok(Some((
        xs.iter()
            .map(|&r| {
                let mut worst = FLOOR;
                for k in 0..n {
                    let z = z0 + (z1 - z0) * k as f64 / (n - 1) as f64;
                    let v = res.eval(&[r, z]).abs();
                    let scale = terms
                        .iter()
                        .map(|t| t.eval(&[r, z]).abs())
                        .fold(0.0, f64::max);
                    let rel = if scale > 0.0 { v / scale } else { v };
                    if rel.is_nan() {
                        return f64::NAN;
                    }
                    worst = worst.max(rel);
                }
                worst
            })
            .collect(),
        zero,
    )))
}

/// The least relative residual drawn on the log axis: a tenth of the
/// double-precision epsilon (2.2e-16).
pub const FLOOR: f64 = 1e-17;

fn axis_label(loaded: &Loaded, c: Coord) -> String {
    let unit = if c.is_angle() {
        "rad".to_string()
    } else {
        loaded.model.units.unit_string(Dim::LENGTH)
    };
    let name = match c {
        Coord::Phi => "φ",
        Coord::Theta => "θ",
        other => other.name(),
    };
    format!("{name} [{unit}]")
}

/// The names of the fields a slice can show, for error messages.
fn names(specs: &[crate::fields::FieldSpec]) -> String {
    specs
        .iter()
        .map(|f| f.name.as_str())
        .collect::<Vec<_>>()
        .join(", ")
}

/// A field on the grid's plane: the whole grid when it is 2D; for a 3D
/// grid the meridional plane φ = first cell (cylindrical and spherical
/// grids) or the plane of z nearest 0 (Cartesian boxes). The state is
/// shown (the equilibrium plus its perturbations); polar (R, φ) and
/// spherical (r, θ) planes are drawn in their real shape (see [`Embed`]).
pub fn slice(loaded: &Loaded, field: &str) -> Result<Map, Error> {
    let grid = &loaded.grid;
    let axes = grid.axes();
    if axes.len() == 1 {
        return Err(Error::Usage(format!(
            "plot --what slice: {} has a 1D grid ({}); a slice needs a 2D or 3D grid (plot it \
             with --what curves)",
            loaded.source,
            axes[0].coord.name()
        )));
    }
    let built;
    let torus;
    let sampler: Sampler<'_> = if loaded.model.torus.is_some() {
        torus = crate::torus_run::torus(loaded)?;
        let bg: &dyn Background = &torus;
        Sampler::new(bg, grid, &loaded.sampling, &pipeline::gas_constants(loaded)).map_err(
            |error| Error::Sample {
                source_label: loaded.source.clone(),
                error,
            },
        )?
    } else {
        built = pipeline::build(loaded, "", true)?;
        built.sampler()?
    };
    let groups = sampler.groups();
    let group = groups.iter().position(|(g, _)| *g == "state").unwrap_or(0);
    let offset: usize = groups[..group].iter().map(|(_, f)| f.len()).sum();
    let specs = &groups[group].1;
    let Some(k) = specs.iter().position(|f| f.name == field) else {
        let list: Vec<&str> = specs.iter().map(|f| f.name.as_str()).collect();
        let hint = crate::profile::closest(field, &list)
            .map(|n| format!(" (did you mean `{n}`?)"))
            .unwrap_or_default();
        return Err(Error::Usage(format!(
            "plot --field: `{field}` is not a field of {}{hint}; its fields are {}",
            loaded.source,
            names(specs)
        )));
    };
    let spec = &specs[k];
    if spec.placement.per_location() != 1 || !spec.placement.extra.is_empty() {
        return Err(Error::Usage(format!(
            "plot --what slice: {} samples {} values per cell ({}); a slice shows one value per \
             cell: plot a copy of the profile with sampling.rule `center` or `average`",
            loaded.source,
            spec.placement.per_location(),
            sampler.sampling()
        )));
    }
    let shape = grid.shape();
    let slab = sampler.slab(0..shape[0]).map_err(|error| Error::Sample {
        source_label: loaded.source.clone(),
        error,
    })?;
    let data = &slab.data[offset + k];
    // The two axes shown, and the cell of the third.
    let (h, v, cut) = match grid.layout() {
        Layout::Cylindrical => (0, 2, Some((1, 0))),
        Layout::Spherical => (0, 1, Some((2, 0))),
        // Cartesian grids: x across, the second axis up, whatever the
        // grid's nesting.
        _ if axes.len() == 3 => {
            let n = grid.natural_order();
            let c = axes[n[2]].centers();
            let j = (0..c.len())
                .min_by(|a, b| c[*a].abs().total_cmp(&c[*b].abs()))
                .unwrap_or(0);
            (n[0], n[1], Some((n[2], j)))
        }
        _ => (grid.natural_order()[0], grid.natural_order()[1], None),
    };
    let at = |i: usize, j: usize| -> f64 {
        let mut idx = [0usize; 3];
        idx[h] = i;
        idx[v] = j;
        if let Some((a, c)) = cut {
            idx[a] = c;
        }
        let flat = match shape.len() {
            2 => idx[0] * shape[1] + idx[1],
            _ => (idx[0] * shape[1] + idx[1]) * shape[2] + idx[2],
        };
        data[flat]
    };
    let values = (0..shape[h])
        .map(|i| (0..shape[v]).map(|j| at(i, j)).collect())
        .collect();
    let plane = match cut {
        Some((a, c)) => format!(
            "plane {} = {:.4} (cell {c} of {})",
            axes[a].coord.name(),
            axes[a].centers()[c],
            shape[a]
        ),
        None => String::new(),
    };
    let unit = loaded.model.units.unit_string(spec.dim);
    let length = loaded.model.units.unit_string(Dim::LENGTH);
    let (shape, page_labels) = match (axes[h].coord, axes[v].coord) {
        (Coord::R, Coord::Phi) => (
            Embed::Polar,
            (format!("x [{length}]"), format!("y [{length}]")),
        ),
        (Coord::Sph, Coord::Theta) => (
            Embed::Meridional,
            (format!("R [{length}]"), format!("z [{length}]")),
        ),
        _ => (Embed::Plain, (String::new(), String::new())),
    };
    Ok(Map {
        shape,
        page_labels,
        xlabel: axis_label(loaded, axes[h].coord),
        ylabel: axis_label(loaded, axes[v].coord),
        x_edges: axes[h].edges.clone(),
        y_edges: axes[v].edges.clone(),
        values,
        label: format!("{} [{unit}]", spec.name),
        plane,
    })
}
