//! The drift forecast (design.md §3, last paragraph): would a scheme
//! without well-balancing hold the state as sampled?
//!
//! The data are sampled the way the file holds them, on a line along the
//! balance coordinate (the grid's own edges along it, and those edges with
//! every cell split in 2 and in 4), and the semi-discrete residual of two
//! standard schemes is applied to them (see [`schemes`]): second-order
//! finite volume on the cell values, and nodal DG of the sampled degree on
//! the node values. From the largest spurious acceleration a at each
//! resolution come the observed order, and the velocity it drives in one
//! dynamical time t (t = c/|g| along a slab or sphere, the time for sound
//! to cross a scale height; t = R/v_φ on a rotating disk), relative to the
//! sound speed c = √(P/ρ): the *drift* δv/c. A relative perturbation of
//! amplitude η drives δv/c of about η (an acoustic wave: δv/c = δP/(γP)),
//! so the verdict compares the drift with η.
//!
//! Covered on a line: every grid with an axis along the balance coordinate
//! of a slab, a sphere or a disk midplane (lines, `[R, phi]`, `[x, y]`,
//! `[x, z]` for a slab along any of its axes, `[r, theta]`, the 3D layouts
//! holding those). A state that varies in more than one coordinate (a
//! stratified disk, a disk or sphere on a Cartesian grid) is forecast on
//! its plane or box by [`multi`], finite volume only (a note says DG is
//! not). A torus is solved apart and has no forecast.
//!
//! Owns: the forecast, its text and its JSON. Does not own: the schemes'
//! arithmetic (`schemes`), sampling, or the balance verdict (`check`).

mod multi;
mod nodal;
mod outside;
pub mod schemes;
pub mod unsplit;

use crate::background::{Background, Shape, StateBlock, Want, LANES};
use crate::grid::{Axis, Coord, Grid, GridError, Layout};
use crate::model::Model;
use crate::sample::gauss::NodeFamily;
use crate::sample::{self, Cuts, GasConstants, SampleError, SamplingRule};
use schemes::{Geometry, Primitives};

/// Why a forecast could not be made (a sampling error of the refined
/// lines: the state is not finite or not positive there).
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DriftError {
    /// Sampling the line failed.
    #[error("drift forecast: {0}")]
    Sample(#[from] SampleError),
    /// The refined line is not a grid (cannot happen for a valid grid).
    #[error("drift forecast: {0}")]
    Grid(#[from] GridError),
    /// No quadrature rule of that many points.
    #[error("drift forecast: no {0}-point node rule")]
    Rule(usize),
}

/// The refinements of the grid's own cells the forecast samples.
pub const REFINEMENTS: [usize; 3] = [1, 2, 4];

/// One resolution of one scheme.
#[derive(Clone, Debug, PartialEq)]
pub struct Level {
    /// Cells along the line.
    pub cells: usize,
    /// Largest |spurious acceleration| (code or physical units).
    pub acceleration: f64,
    /// Where it occurs (the first coordinate of `point` on a plane).
    pub at: f64,
    /// Where it occurs on a plane or box, one coordinate per axis (empty
    /// on a line).
    pub point: Vec<f64>,
    /// Largest drift δv/c = |a| t / c.
    pub drift: f64,
    /// The velocity |a| t there.
    pub velocity: f64,
}

impl Level {
    /// A level of `cells` cells before any point is considered.
    fn empty(cells: usize) -> Level {
        Level {
            cells,
            acceleration: 0.0,
            at: f64::NAN,
            point: Vec::new(),
            drift: 0.0,
            velocity: 0.0,
        }
    }
}

/// One scheme at the three resolutions.
#[derive(Clone, Debug, PartialEq)]
pub struct Scheme {
    /// Its name and the source of the method.
    pub name: String,
    /// What it was applied to.
    pub data: String,
    /// At the grid's resolution, refined by 2 and by 4.
    pub levels: Vec<Level>,
    /// The observed orders log₂(a_N / a_2N), log₂(a_2N / a_4N).
    pub orders: Vec<f64>,
    /// On a plane or box refined on a block: the whole grid at its own
    /// resolution (the levels are the block's).
    pub whole: Option<Level>,
    /// On a plane or box: what was evaluated, in words.
    pub region: Option<String>,
    /// On a plane or box: cells per axis at the grid's resolution.
    pub shape: Vec<(String, usize)>,
}

/// The forecast of a covered state.
#[derive(Clone, Debug, PartialEq)]
pub struct Forecast {
    /// The balance coordinate.
    pub coordinate: String,
    /// Second-order finite volume.
    pub finite_volume: Scheme,
    /// Nodal DG of the sampled degree (None when the rule is not nodal or
    /// modal).
    pub dg: Option<Scheme>,
    /// The perturbation amplitude compared with, and where it comes from.
    pub amplitude: Option<(f64, String)>,
    /// DG drift at the grid's resolution by degree 1 to 6 (what order
    /// would be needed), when an amplitude is known.
    pub by_degree: Vec<(usize, f64)>,
    /// Whether the manufactured forcing was added (an audit).
    pub forced: bool,
    /// What the forecast leaves out, in words.
    pub notes: Vec<String>,
}

/// The forecast, or why there is none.
#[derive(Clone, Debug, PartialEq)]
pub enum Drift {
    /// The forecast.
    Covered(Box<Forecast>),
    /// In words, why this state is not covered.
    NotCovered(String),
}

/// What the forecast needs of a build.
pub struct Inputs<'a> {
    /// The model (shape, γ).
    pub model: &'a Model,
    /// The background.
    pub bg: &'a dyn Background,
    /// The grid of the file.
    pub grid: &'a Grid,
    /// The sampling rule of the file.
    pub rule: &'a SamplingRule,
    /// The gas constants of the sampler.
    pub gas: GasConstants,
    /// The switch points cell averages are split at.
    pub cuts: &'a Cuts,
    /// The manufactured forcing of an audit (its velocity is the force
    /// density, see [`crate::forcing`]), added to both schemes as a source.
    pub forcing: Option<&'a dyn Background>,
    /// Whether the forecast is part of a build, which bounds its cost on a
    /// plane or box to a fraction of the build's own (see [`multi`]);
    /// `check` evaluates up to the larger limits.
    pub in_build: bool,
    /// Where the state is no equilibrium, by meridional position (R, z):
    /// a torus's floor. Cells whose stencil reaches it are left out.
    pub outside: Option<&'a (dyn Fn(f64, f64) -> bool + Sync)>,
}

/// The line the forecast runs on: its geometry, coordinate and the grid
/// axis whose edges it takes; Err with the reason when not covered.
fn line_of(model: &Model, grid: &Grid) -> Result<(Geometry, Coord, usize), String> {
    let axes = grid.axes();
    match model.shape {
        Shape::Slab => Ok((Geometry::Slab, Coord::Z, grid.slab_axis())),
        Shape::Spherical if axes[0].coord == Coord::Sph => Ok((Geometry::Sphere, Coord::Sph, 0)),
        Shape::DiskMidplane if axes[0].coord == Coord::R => Ok((Geometry::Disk, Coord::R, 0)),
        Shape::StratifiedDisk => Err("a stratified disk varies in R and z; the forecast covers \
             states along one coordinate (slab, sphere, disk midplane)"
            .into()),
        _ => {
            Err(format!(
            "the grid [{}] has no axis along {}; the forecast runs along the balance coordinate",
            axes.iter().map(|a| a.coord.name()).collect::<Vec<_>>().join(", "),
            model.coordinate()
        ))
        }
    }
}

/// Every cell of `edges` split into `r` equal cells.
fn refine(edges: &[f64], r: usize) -> Vec<f64> {
    let mut out = vec![edges[0]];
    for w in edges.windows(2) {
        for k in 1..=r {
            out.push(if k == r {
                w[1]
            } else {
                w[0] + (w[1] - w[0]) * k as f64 / r as f64
            });
        }
    }
    out
}

/// The exact gravitational acceleration along the line at `xs`.
fn gravity_at(bg: &dyn Background, xs: &[f64]) -> Vec<f64> {
    let mut ws = bg.workspace();
    let mut block = StateBlock::new();
    let mut out = Vec::with_capacity(xs.len());
    let zeros = vec![0.0; LANES];
    for chunk in xs.chunks(LANES) {
        let coords: Vec<&[f64]> = match bg.frame().dims() {
            1 => vec![chunk],
            _ => vec![chunk, &zeros[..chunk.len()]],
        };
        bg.eval(
            &coords,
            Want {
                accelerations: true,
            },
            &mut block,
            &mut ws,
        );
        out.extend_from_slice(&block.gravity[0][..chunk.len()]);
    }
    out
}

/// The exact gravity at `xs` plus, for an audit, the manufactured force
/// density sampled under `rule` on `grid` divided by the density `rho`.
fn sources(
    inp: &Inputs<'_>,
    grid: &Grid,
    rule: &SamplingRule,
    coord: Coord,
    xs: &[f64],
    rho: &[f64],
) -> Result<Vec<f64>, DriftError> {
    let mut g = gravity_at(inp.bg, xs);
    if let Some(f) = inp.forcing {
        let set = sample::sample_with_cuts(f, grid, rule, &inp.gas, inp.cuts)?;
        let name = format!("velocity_{}", coord.name());
        if let Some(field) = set.get(&name) {
            for ((g, f), r) in g.iter_mut().zip(&field.data).zip(rho) {
                *g += f / r;
            }
        }
    }
    Ok(g)
}

/// The primitive values of a field set sampled on a line along `coord`.
fn primitives(set: &crate::fields::FieldSet, coord: Coord) -> Primitives {
    let get = |name: &str| set.get(name).map(|f| f.data.clone());
    let rho = get("density").unwrap_or_default();
    let zeros = vec![0.0; rho.len()];
    Primitives {
        u: get(&format!("velocity_{}", coord.name())).unwrap_or_else(|| zeros.clone()),
        w: get("velocity_phi").unwrap_or(zeros),
        p: get("pressure").unwrap_or_default(),
        rho,
    }
}

/// The largest acceleration and drift over the points `xs` (NaN entries are
/// the cells the scheme leaves out).
fn level(
    cells: usize,
    xs: &[f64],
    acc: &[f64],
    v: &Primitives,
    g: &[f64],
    disk: bool,
    skip: &[bool],
) -> Level {
    let mut l = Level::empty(cells);
    for i in 0..xs.len() {
        if skip.get(i).copied().unwrap_or(false) {
            continue;
        }
        let a = acc[i].abs();
        if acc[i].is_nan() && !v.rho[i].is_nan() {
            continue;
        }
        let c = (v.p[i] / v.rho[i]).sqrt();
        let t = if disk && v.w[i].abs() > 0.0 {
            xs[i] / v.w[i].abs()
        } else {
            c / g[i].abs()
        };
        if a > l.acceleration || a.is_nan() {
            l.acceleration = a;
            l.at = xs[i];
        }
        let d = a * t / c;
        if d.is_finite() && d > l.drift {
            l.drift = d;
            l.velocity = a * t;
        }
    }
    l
}

/// The note of a forecast that leaves cells out (see [`outside`]).
fn outside_note(inp: &Inputs<'_>) -> Option<String> {
    inp.outside.map(|_| {
        "cells within two of the floor outside the torus are left out at every resolution \
         (balance is given up there, so any scheme moves the floor); the largest \
         acceleration is that of the torus itself, usually beside its surface, where the \
         density falls to zero with a steepening slope and the order drops"
            .to_string()
    })
}

/// Per point of a line of `grid` with `per_cell` points in each cell,
/// whether it is left out (see [`outside`]); empty when nothing is.
fn skip_of(inp: &Inputs<'_>, grid: &Grid, per_cell: usize) -> Vec<bool> {
    inp.outside
        .map_or_else(Vec::new, |f| outside::mask_points(grid, f, per_cell))
}

pub(crate) fn orders(levels: &[Level]) -> Vec<f64> {
    levels
        .windows(2)
        .map(|w| (w[0].acceleration / w[1].acceleration).log2())
        .collect()
}

/// The forecast of the background of `inp`, with `amplitude` the
/// perturbation's relative amplitude (from `--amplitude` or the largest
/// peak of the profile's perturbations) and where it comes from.
pub fn forecast(inp: &Inputs<'_>, amplitude: Option<(f64, String)>) -> Result<Drift, DriftError> {
    // A torus varies in R and z whatever the model's shape says: on a
    // grid with a plane of its own it is forecast there.
    if inp.outside.is_some() && inp.grid.axes().len() > 1 {
        if let Some(plan) = multi::plan(inp.grid, inp.bg.frame()) {
            return match plan.short_axis(inp.grid) {
                Some(a) => Ok(Drift::NotCovered(format!(
                    "fewer than five cells along {a}"
                ))),
                None => forecast_plane(inp, &plan, amplitude),
            };
        }
    }
    let (geom, coord, axis) = match line_of(inp.model, inp.grid) {
        Ok(l) => l,
        Err(why) => {
            return match multi::plan(inp.grid, inp.bg.frame()) {
                Some(plan) => match plan.short_axis(inp.grid) {
                    Some(a) => Ok(Drift::NotCovered(format!(
                        "fewer than five cells along {a}"
                    ))),
                    None => forecast_plane(inp, &plan, amplitude),
                },
                None => Ok(Drift::NotCovered(why)),
            };
        }
    };
    let edges = inp.grid.axes()[axis].edges.clone();
    if edges.len() < 6 {
        return Ok(Drift::NotCovered(format!(
            "fewer than five cells along {}",
            inp.model.coordinate()
        )));
    }
    let disk = geom == Geometry::Disk;
    let gamma = inp.model.gamma;
    let cell_rule = cell_rule(inp.rule);
    let line = |e: Vec<f64>| -> Result<Grid, DriftError> {
        let ax = Axis::explicit(coord, e)?;
        Ok(Grid::new(vec![ax])?)
    };
    let mut fv = Vec::new();
    for r in REFINEMENTS {
        let grid = line(refine(&edges, r))?;
        debug_assert_eq!(grid.layout(), Layout::Line(coord));
        let set = sample::sample_with_cuts(inp.bg, &grid, &cell_rule.0, &inp.gas, inp.cuts)?;
        let v = primitives(&set, coord);
        let xs = grid.axes()[0].centers();
        let g = sources(inp, &grid, &cell_rule.0, coord, &xs, &v.rho)?;
        let acc = schemes::finite_volume(geom, &grid.axes()[0].edges, &v, &g, gamma);
        let skip = skip_of(inp, &grid, 1);
        fv.push(level(xs.len(), &xs, &acc, &v, &g, disk, &skip));
    }
    let finite_volume = Scheme {
        name: "second-order finite volume: MUSCL, monotonised-central slopes (van Leer 1977), \
               local Lax-Friedrichs (Rusanov) flux (Toro 2009, ch. 10)"
            .into(),
        data: cell_rule.1,
        orders: orders(&fv),
        levels: fv,
        whole: None,
        region: None,
        shape: Vec::new(),
    };
    let nodal = nodal_of(inp.rule);
    let dg_run = |family: NodeFamily, points: usize, e: &[f64]| -> Result<Level, DriftError> {
        let grid = line(e.to_vec())?;
        let rule = family.rule(points).ok_or(DriftError::Rule(points))?;
        let set = sample::sample_with_cuts(
            inp.bg,
            &grid,
            &SamplingRule::Nodes { family, points },
            &inp.gas,
            inp.cuts,
        )?;
        let v = primitives(&set, coord);
        let xs = schemes::node_points(e, &rule.nodes);
        let g = sources(
            inp,
            &grid,
            &SamplingRule::Nodes { family, points },
            coord,
            &xs,
            &v.rho,
        )?;
        let acc = schemes::nodal_dg(geom, e, &rule.nodes, &rule.weights, &v, &g, gamma);
        let skip = skip_of(inp, &grid, points);
        Ok(level(e.len() - 1, &xs, &acc, &v, &g, disk, &skip))
    };
    let dg = match nodal {
        Some((family, points, data)) => {
            let mut levels = Vec::new();
            for r in REFINEMENTS {
                levels.push(dg_run(family, points, &refine(&edges, r))?);
            }
            Some(Scheme {
                name: format!(
                    "nodal DG of degree {} on {} {} nodes per cell, local Lax-Friedrichs flux \
                     (Hesthaven & Warburton 2008)",
                    points - 1,
                    points,
                    family.name()
                ),
                data: data.into(),
                orders: orders(&levels),
                levels,
                whole: None,
                region: None,
                shape: Vec::new(),
            })
        }
        None => None,
    };
    let mut by_degree = Vec::new();
    if let Some((eta, _)) = &amplitude {
        let family = nodal.map_or(NodeFamily::Legendre, |n| n.0);
        for degree in 1..=6 {
            let l = dg_run(family, degree + 1, &edges)?;
            by_degree.push((degree, l.drift));
            if l.drift <= *eta {
                break;
            }
        }
    }
    Ok(Drift::Covered(Box::new(Forecast {
        coordinate: inp.model.coordinate().to_string(),
        finite_volume,
        dg,
        amplitude,
        by_degree,
        forced: inp.forcing.is_some(),
        notes: outside_note(inp).into_iter().collect(),
    })))
}

/// The rule of the finite-volume cells: the file's own when it holds cell
/// values, else 4-point Gauss–Legendre averages; and what it samples.
fn cell_rule(rule: &SamplingRule) -> (SamplingRule, String) {
    match rule {
        SamplingRule::Center | SamplingRule::Average { .. } | SamplingRule::AverageTo { .. } => {
            (*rule, "the cell values as the file holds them".to_string())
        }
        _ => (
            SamplingRule::Average { points: 4 },
            "cell averages (4-point Gauss–Legendre, sampled for the forecast: the file holds \
             nodes or modes)"
                .to_string(),
        ),
    }
}

/// The forecast of a state that varies in more than one coordinate (see
/// [`multi`]): finite volume, and nodal DG when the file holds DG nodes or
/// modes, on the same cells.
fn forecast_plane(
    inp: &Inputs<'_>,
    plan: &multi::Plan,
    amplitude: Option<(f64, String)>,
) -> Result<Drift, DriftError> {
    let (rule, data) = cell_rule(inp.rule);
    let (finite_volume, ranges) = multi::finite_volume(inp, plan, &rule, data)?;
    let mut notes = Vec::new();
    let nodal = nodal_of(inp.rule);
    if nodal.is_none() {
        notes.push(
            "nodal DG is forecast for files of DG nodes or modes: this one holds cell values, \
             so only the finite-volume scheme is evaluated"
                .to_string(),
        );
    }
    notes.extend(outside_note(inp));
    if finite_volume.orders.iter().any(|o| *o < 1.5) {
        notes.push(
            "the observed order is below 2: the largest acceleration sits where MUSCL is \
             locally first order, which the monotonised-central limiter makes it at a smooth \
             extremum (a disk's midplane, the axis of a Cartesian disk) and at a kink (common \
             practice, no source); the drift there falls only in proportion to the cells"
                .to_string(),
        );
    }
    let dg = match nodal {
        Some((family, points, data)) => Some(multi::nodal_dg(
            inp,
            plan,
            &ranges,
            finite_volume.region.clone(),
            (family, points, data.to_string()),
            &REFINEMENTS,
        )?),
        None => None,
    };
    let mut by_degree = Vec::new();
    if let Some((eta, _)) = &amplitude {
        let family = nodal.map_or(NodeFamily::Legendre, |n| n.0);
        for degree in 1..=6 {
            let s = multi::nodal_dg(
                inp,
                plan,
                &ranges,
                None,
                (family, degree + 1, String::new()),
                &[1],
            )?;
            let drift = s.levels[0].drift;
            by_degree.push((degree, drift));
            if drift <= *eta {
                break;
            }
        }
    }
    Ok(Drift::Covered(Box::new(Forecast {
        coordinate: multi::coordinates(inp.grid, plan),
        finite_volume,
        dg,
        amplitude,
        by_degree,
        forced: inp.forcing.is_some(),
        notes,
    })))
}

/// The nodes a nodal DG forecast runs on: the file's own, or for modes
/// Gauss–Legendre nodes of the modes' degree; None for cell values.
fn nodal_of(rule: &SamplingRule) -> Option<(NodeFamily, usize, &'static str)> {
    match rule {
        SamplingRule::Nodes { family, points } => {
            Some((*family, *points, "the node values as the file holds them"))
        }
        SamplingRule::Modes { modes, .. } => Some((
            NodeFamily::Legendre,
            *modes,
            "values at Gauss–Legendre nodes of the modes' degree (sampled for the forecast: the \
             file holds modal coefficients)",
        )),
        _ => None,
    }
}

mod text;
