//! The drift forecast of a state that varies in more than one coordinate:
//! a stratified disk on `[R, z]` or `[r, theta]` (and the 3D layouts with a
//! φ axis, reduced to their meridional plane: the state does not vary
//! along φ), a disk or a sphere on Cartesian axes `[x, y]`, `[x, z]`,
//! `[x, y, z]`. The cell values are sampled the way the file holds them,
//! the unsplit finite-volume residual of [`super::unsplit`] is applied to
//! them at the grid's resolution and with every cell split in 2 and in 4
//! along every axis.
//!
//! The largest acceleration of each resolution is taken over the same
//! region: the cells of the unrefined grid (or block) but the two next to
//! each end of every axis.
//!
//! Cost: the refinements run on the whole grid when its ×4 refinement has
//! at most [`REFINED_CELLS`] cells; otherwise on a block of the grid's own
//! cells around the largest acceleration at the grid's resolution (found
//! on the whole grid, when it has at most [`WHOLE_CELLS`] cells), and the
//! output says which block. In a build (the forecast recorded in the
//! file) both limits are the plane's own cells / 8, within
//! [`BUILD_CELLS_MIN`] and [`REFINED_CELLS`], so the forecast costs a small
//! part of the build (it samples the plane again, 21 or 73 times a block);
//! the block then sits at the centre, and `check` says more.
//!
//! Owns: the plane a state is evaluated on, the blocks, the sampling of
//! the levels. Does not own: the arithmetic (`unsplit`) or the verdict
//! text (`text`).

use super::unsplit::{self, Cells, Metric};
use super::{refine, DriftError, Inputs, Level, Scheme, REFINEMENTS};
use crate::background::{Frame, StateBlock, Want, LANES};
use crate::grid::{Axis, Grid, Layout};
use crate::sample::gauss::NodeFamily;
use crate::sample::{self, SamplingRule};

/// The most cells the ×4 refinement may have.
pub const REFINED_CELLS: usize = 1 << 16;
/// The most cells evaluated at the grid's own resolution.
pub const WHOLE_CELLS: usize = 1 << 20;
/// The least of a build's limits (a plane of 32 x 16 cells is still
/// refined whole).
pub const BUILD_CELLS_MIN: usize = 1 << 13;

/// The plane (or box) a state is evaluated on: its metric and the grid
/// axes it keeps.
pub(super) struct Plan {
    metric: Metric,
    axes: Vec<usize>,
}

impl Plan {
    /// An axis of the plane with fewer than five cells (the scheme leaves
    /// out two at each end), by name.
    pub(super) fn short_axis(&self, grid: &Grid) -> Option<&'static str> {
        self.axes
            .iter()
            .map(|&a| &grid.axes()[a])
            .find(|a| a.cells() < 5)
            .map(|a| a.coord.name())
    }
}

/// The plan for a grid, None when the layout is not one of the above (or
/// the state is a slab, which the line covers).
pub(super) fn plan(grid: &Grid, frame: Frame) -> Option<Plan> {
    let (metric, axes) = match (frame, grid.layout()) {
        (Frame::Slab, _) => return None,
        (_, Layout::Meridional) => (Metric::Cylindrical, vec![0, 1]),
        (_, Layout::Cylindrical) => (Metric::Cylindrical, vec![0, 2]),
        (_, Layout::SphericalMeridional | Layout::Spherical) => (Metric::Spherical, vec![0, 1]),
        (_, Layout::Cartesian | Layout::Section) => (Metric::Cartesian, vec![0, 1]),
        (_, Layout::Box) => (Metric::Cartesian, vec![0, 1, 2]),
        _ => return None,
    };
    Some(Plan { metric, axes })
}

/// The exact gravity components along the grid's axes at the centres of
/// `grid`'s cells (C order), one array per axis.
fn gravity(bg: &dyn crate::background::Background, grid: &Grid) -> Vec<Vec<f64>> {
    let d = grid.axes().len();
    let centres: Vec<Vec<f64>> = grid.axes().iter().map(Axis::centers).collect();
    let shape = grid.shape();
    let mut pts = vec![Vec::with_capacity(grid.len()); d];
    for c in 0..grid.len() {
        let mut rest = c;
        for a in (0..d).rev() {
            pts[a].push(centres[a][rest % shape[a]]);
            rest /= shape[a];
        }
    }
    gravity_at(bg, grid, &pts)
}

/// The exact gravity components along the grid's axes at the points
/// `at` (one coordinate array per axis of `grid`).
fn gravity_at(
    bg: &dyn crate::background::Background,
    grid: &Grid,
    at: &[Vec<f64>],
) -> Vec<Vec<f64>> {
    let d = grid.axes().len();
    let embed = grid
        .embedding(bg.frame())
        .expect("the sampler accepted this grid");
    let n = at[0].len();
    let mut out = vec![Vec::with_capacity(n); d];
    let (mut ws, mut block) = (bg.workspace(), StateBlock::new());
    let mut frame: Vec<Vec<f64>> = vec![vec![0.0; LANES]; 3];
    let mut comps: Vec<Vec<f64>> = vec![vec![0.0; LANES]; embed.components().len()];
    let mut pts: Vec<Vec<f64>> = vec![vec![0.0; LANES]; d];
    let dims = bg.frame().dims();
    for start in (0..n).step_by(LANES) {
        let m = LANES.min(n - start);
        for a in 0..d {
            pts[a][..m].copy_from_slice(&at[a][start..start + m]);
        }
        let g: Vec<&[f64]> = pts.iter().map(|v| &v[..m]).collect();
        embed.to_frame(&g, m, &mut frame);
        let f: Vec<&[f64]> = frame[..dims].iter().map(|v| &v[..m]).collect();
        bg.eval(
            &f,
            Want {
                accelerations: true,
            },
            &mut block,
            &mut ws,
        );
        embed.project(&g, &f, &block.gravity, m, &mut comps);
        for (o, c) in out.iter_mut().zip(&comps) {
            o.extend_from_slice(&c[..m]);
        }
    }
    out
}

/// The state of `grid` sampled under `rule`: ρ, the velocity components
/// along its axes, v_φ on a meridional plane, P.
fn sampled(
    inp: &Inputs<'_>,
    plan: &Plan,
    grid: &Grid,
    rule: &SamplingRule,
) -> Result<Cells, DriftError> {
    let set = sample::sample_with_cuts(inp.bg, grid, rule, &inp.gas, inp.cuts)?;
    let get = |name: &str| set.get(name).map(|f| f.data.clone());
    let rho = get("density").unwrap_or_default();
    let n = rho.len();
    let v: Vec<Vec<f64>> = grid
        .axes()
        .iter()
        .map(|a| get(&format!("velocity_{}", a.coord.name())).unwrap_or_else(|| vec![0.0; n]))
        .collect();
    let w = match plan.metric {
        Metric::Cartesian => vec![0.0; n],
        _ => get("velocity_phi").unwrap_or_else(|| vec![0.0; n]),
    };
    Ok(Cells {
        shape: grid.shape(),
        p: get("pressure").unwrap_or_default(),
        rho,
        v,
        w,
    })
}

/// An audit's manufactured forcing (its velocity is the force density),
/// sampled under `rule`, added to the gravity components `g` as f/ρ.
fn add_forcing(
    inp: &Inputs<'_>,
    grid: &Grid,
    rule: &SamplingRule,
    rho: &[f64],
    g: &mut [Vec<f64>],
) -> Result<(), DriftError> {
    if let Some(f) = inp.forcing {
        let fs = sample::sample_with_cuts(f, grid, rule, &inp.gas, inp.cuts)?;
        for (a, ga) in grid.axes().iter().zip(g.iter_mut()) {
            if let Some(field) = fs.get(&format!("velocity_{}", a.coord.name())) {
                for ((g, f), r) in ga.iter_mut().zip(&field.data).zip(rho) {
                    *g += f / r;
                }
            }
        }
    }
    Ok(())
}

/// One evaluated grid: its cells and the acceleration components.
struct Evaluated {
    grid: Grid,
    /// Per cell, whether it is left out (its stencil reaches where the
    /// state is no equilibrium, see [`super::outside`]).
    skip: Vec<bool>,
    cells: Cells,
    gravity: Vec<Vec<f64>>,
    acc: Vec<Vec<f64>>,
}

fn evaluate(
    inp: &Inputs<'_>,
    plan: &Plan,
    grid: Grid,
    rule: &SamplingRule,
) -> Result<Evaluated, DriftError> {
    let cells = sampled(inp, plan, &grid, rule)?;
    let mut g = gravity(inp.bg, &grid);
    add_forcing(inp, &grid, rule, &cells.rho, &mut g)?;
    let edges: Vec<Vec<f64>> = grid.axes().iter().map(|a| a.edges.clone()).collect();
    let acc = unsplit::finite_volume(plan.metric, &edges, &cells, &g, inp.model.gamma);
    let skip = inp.outside.map_or_else(
        || vec![false; grid.len()],
        |f| super::outside::mask_points(&grid, f, 1),
    );
    Ok(Evaluated {
        skip,
        grid,
        cells,
        gravity: g,
        acc,
    })
}

/// The cylindrical radius at a centre (for the rotation time R/v_φ).
fn cylindrical_radius(metric: Metric, x: &[f64]) -> f64 {
    match metric {
        Metric::Cylindrical => x[0],
        Metric::Spherical => x[0] * x[1].sin(),
        Metric::Cartesian => x[0].hypot(x[1]),
    }
}

/// The largest |acceleration| and drift of an evaluated grid refined by
/// `r`, and the flat index of the cell of the largest acceleration. Cells
/// within 2r of an end of an axis are left out: the same two cells of the
/// unrefined grid at every resolution, so that the levels compare the same
/// region.
fn level(e: &Evaluated, metric: Metric, rotating: bool, r: usize) -> (Level, Option<usize>) {
    let shape = e.grid.shape();
    let d = shape.len();
    let centres: Vec<Vec<f64>> = e.grid.axes().iter().map(Axis::centers).collect();
    let mut l = Level::empty(e.grid.len());
    let mut argmax = None;
    let mut x = vec![0.0; d];
    for c in 0..e.grid.len() {
        if e.skip[c] {
            continue;
        }
        let nan = e.acc.iter().any(|a| a[c].is_nan());
        if nan && !e.cells.rho[c].is_nan() {
            continue;
        }
        let mut rest = c;
        let mut margin = false;
        for k in (0..d).rev() {
            let i = rest % shape[k];
            margin |= i < 2 * r || i + 2 * r >= shape[k];
            x[k] = centres[k][i];
            rest /= shape[k];
        }
        if margin {
            continue;
        }
        consider(&mut l, &mut argmax, c, &x, e, metric, rotating);
    }
    (l, argmax)
}

fn dims(shape: &[usize]) -> String {
    shape
        .iter()
        .map(|n| n.to_string())
        .collect::<Vec<_>>()
        .join(" x ")
}

/// The finite-volume forecast on the plane of `plan`, with `rule` the
/// cell rule and `data` what it samples.
pub(super) fn finite_volume(
    inp: &Inputs<'_>,
    plan: &Plan,
    rule: &SamplingRule,
    data: String,
) -> Result<(Scheme, Vec<(usize, usize)>), DriftError> {
    let axes: Vec<&Axis> = plan.axes.iter().map(|&a| &inp.grid.axes()[a]).collect();
    let names: Vec<&str> = axes.iter().map(|a| a.coord.name()).collect();
    let shape: Vec<usize> = axes.iter().map(|a| a.cells()).collect();
    let d = shape.len();
    let rotating = inp.bg.frame() == Frame::Axisymmetric;
    let grid_of = |ranges: &[(usize, usize)], r: usize| -> Result<Grid, DriftError> {
        let ax = axes
            .iter()
            .zip(ranges)
            .map(|(a, &(s, e))| Axis::explicit(a.coord, refine(&a.edges[s..=e], r)))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Grid::new(ax)?)
    };
    let full: Vec<(usize, usize)> = shape.iter().map(|&n| (0, n)).collect();
    let total: usize = shape.iter().product();
    let growth = 4usize.pow(d as u32);
    let plane = format!("[{}]", names.join(", "));
    let mut region = if plan.axes.len() < inp.grid.axes().len() {
        format!(
            "the meridional plane {plane} of the file's cells (the state does not vary along phi)"
        )
    } else {
        format!("the grid {plane}")
    };
    let (refined_cap, whole_cap) = if inp.in_build {
        let cap = (total / 8).clamp(BUILD_CELLS_MIN, REFINED_CELLS);
        (cap, cap)
    } else {
        (REFINED_CELLS, WHOLE_CELLS)
    };
    let (ranges, whole) = if total * growth <= refined_cap {
        region = format!(
            "{region}, whole ({} cells) at every resolution",
            dims(&shape)
        );
        (full, None)
    } else {
        let side = ((refined_cap / growth) as f64).powf(1.0 / d as f64).floor() as usize;
        let (centre, whole) = if total <= whole_cap {
            let e = evaluate(inp, plan, grid_of(&full, 1)?, rule)?;
            let (l, at) = level(&e, plan.metric, rotating, 1);
            let mut idx = vec![0; d];
            let mut rest = at.unwrap_or(total / 2);
            for k in (0..d).rev() {
                idx[k] = rest % shape[k];
                rest /= shape[k];
            }
            (idx, Some(l))
        } else {
            (shape.iter().map(|n| n / 2).collect(), None)
        };
        let ranges: Vec<(usize, usize)> = shape
            .iter()
            .zip(&centre)
            .map(|(&n, &c)| {
                let len = side.min(n);
                let s = c.saturating_sub(len / 2).min(n - len);
                (s, s + len)
            })
            .collect();
        let block: Vec<String> = names
            .iter()
            .zip(&ranges)
            .map(|(c, (s, e))| format!("{c} cells {s}..{}", e - 1))
            .collect();
        let sizes: Vec<usize> = ranges.iter().map(|(s, e)| e - s).collect();
        region = format!(
            "{region} ({} cells); refined on a block of {} of them ({}, counted from 0) {}, \
             to bound the cost; the observed order is that of the block",
            dims(&shape),
            dims(&sizes),
            block.join(", "),
            if whole.is_some() {
                "around the largest acceleration at the grid's resolution, which is taken \
                 over the whole grid"
            } else if inp.in_build && total <= WHOLE_CELLS {
                "at the centre (a build bounds the forecast to a small part of its own cost: \
                 the drift at the grid's resolution is that of the block; `stillpoint check` \
                 evaluates the whole grid)"
            } else {
                "at the centre (the grid is too large to evaluate whole: the drift at its \
                 resolution is that of the block)"
            },
        );
        (ranges, whole)
    };
    let mut levels = Vec::new();
    for r in REFINEMENTS {
        let e = evaluate(inp, plan, grid_of(&ranges, r)?, rule)?;
        levels.push(level(&e, plan.metric, rotating, r).0);
    }
    let scheme = Scheme {
        name: format!(
            "second-order finite volume, unsplit over {plane}: MUSCL, monotonised-central \
             slopes (van Leer 1977), local Lax-Friedrichs (Rusanov) flux (Toro 2009, ch. 10)"
        ),
        data,
        orders: super::orders(&levels),
        levels,
        whole,
        region: Some(region),
        shape: names
            .iter()
            .zip(&shape)
            .map(|(c, n)| (c.to_string(), *n))
            .collect(),
    };
    Ok((scheme, ranges))
}

/// Point `c` of `e` (a cell or a node) at position `x` into the largest
/// acceleration and drift of `l`.
fn consider(
    l: &mut Level,
    argmax: &mut Option<usize>,
    c: usize,
    x: &[f64],
    e: &Evaluated,
    metric: Metric,
    rotating: bool,
) {
    let norm = |v: &[Vec<f64>]| v.iter().map(|a| a[c] * a[c]).sum::<f64>().sqrt();
    let a = norm(&e.acc);
    let (rho, p) = (e.cells.rho[c], e.cells.p[c]);
    let cs = (p / rho).sqrt();
    let speed = (norm(&e.cells.v).powi(2) + e.cells.w[c].powi(2)).sqrt();
    let t = if rotating && speed > 0.0 {
        cylindrical_radius(metric, x) / speed
    } else {
        cs / norm(&e.gravity)
    };
    if a > l.acceleration || a.is_nan() {
        l.acceleration = a;
        l.at = x[0];
        l.point = x.to_vec();
        *argmax = Some(c);
    }
    let drift = a * t / cs;
    if drift.is_finite() && drift > l.drift {
        l.drift = drift;
        l.velocity = a * t;
    }
}

/// The nodal DG values of `grid` (`points` nodes of `family` per axis),
/// their residual and the node positions.
fn evaluate_nodes(
    inp: &Inputs<'_>,
    plan: &Plan,
    grid: Grid,
    family: NodeFamily,
    points: usize,
) -> Result<(Evaluated, Vec<Vec<f64>>), DriftError> {
    let rule = family.rule(points).ok_or(DriftError::Rule(points))?;
    let nodes = SamplingRule::Nodes { family, points };
    let cells = sampled(inp, plan, &grid, &nodes)?;
    let n = cells.rho.len();
    let d = grid.axes().len();
    // Node positions: cells in C order, the nodes of each as trailing
    // indices in C order.
    let shape = grid.shape();
    let per = points.pow(d as u32);
    let mut at = vec![Vec::with_capacity(n); d];
    for g in 0..n {
        let (mut cell, mut local) = (g / per, g % per);
        let mut idx = vec![(0, 0); d];
        for a in (0..d).rev() {
            idx[a] = (cell % shape[a], local % points);
            cell /= shape[a];
            local /= points;
        }
        for (a, (i, k)) in idx.into_iter().enumerate() {
            let e = &grid.axes()[a].edges;
            let (m, h) = (0.5 * (e[i] + e[i + 1]), 0.5 * (e[i + 1] - e[i]));
            at[a].push(m + h * rule.nodes[k]);
        }
    }
    let mut g = gravity_at(inp.bg, &grid, &at);
    add_forcing(inp, &grid, &nodes, &cells.rho, &mut g)?;
    let edges: Vec<Vec<f64>> = grid.axes().iter().map(|a| a.edges.clone()).collect();
    let acc = super::nodal::nodal_dg(
        plan.metric,
        &edges,
        &rule.nodes,
        &rule.weights,
        &cells,
        &g,
        inp.model.gamma,
    );
    let skip = inp.outside.map_or_else(
        || vec![false; n],
        |f| super::outside::mask_points(&grid, f, per),
    );
    Ok((
        Evaluated {
            skip,
            grid,
            cells,
            gravity: g,
            acc,
        },
        at,
    ))
}

/// The largest acceleration and drift over the nodes of `e` (positions
/// `at`), the cells within 2r of an end of an axis left out, as for the
/// finite-volume levels.
fn level_nodes(e: &Evaluated, at: &[Vec<f64>], metric: Metric, rotating: bool, r: usize) -> Level {
    let shape = e.grid.shape();
    let d = shape.len();
    let per = e.cells.rho.len() / e.grid.len().max(1);
    let mut l = Level::empty(e.grid.len());
    let mut argmax = None;
    let mut x = vec![0.0; d];
    for g in 0..e.cells.rho.len() {
        if e.skip[g] {
            continue;
        }
        let nan = e.acc.iter().any(|a| a[g].is_nan());
        if nan && !e.cells.rho[g].is_nan() {
            continue;
        }
        let mut rest = g / per;
        let mut margin = false;
        for k in (0..d).rev() {
            let i = rest % shape[k];
            margin |= i < 2 * r || i + 2 * r >= shape[k];
            rest /= shape[k];
        }
        if margin {
            continue;
        }
        for (k, xk) in x.iter_mut().enumerate() {
            *xk = at[k][g];
        }
        consider(&mut l, &mut argmax, g, &x, e, metric, rotating);
    }
    l
}

/// The nodal DG forecast on the plane of `plan`, on the cells `ranges` of
/// the grid's own (the finite-volume forecast's region), at `points` nodes
/// of `family` per axis.
pub(super) fn nodal_dg(
    inp: &Inputs<'_>,
    plan: &Plan,
    ranges: &[(usize, usize)],
    region: Option<String>,
    (family, points, data): (NodeFamily, usize, String),
    refinements: &[usize],
) -> Result<Scheme, DriftError> {
    let axes: Vec<&Axis> = plan.axes.iter().map(|&a| &inp.grid.axes()[a]).collect();
    let names: Vec<&str> = axes.iter().map(|a| a.coord.name()).collect();
    let rotating = inp.bg.frame() == Frame::Axisymmetric;
    let mut levels = Vec::new();
    for &r in refinements {
        let ax = axes
            .iter()
            .zip(ranges)
            .map(|(a, &(s, e))| Axis::explicit(a.coord, refine(&a.edges[s..=e], r)))
            .collect::<Result<Vec<_>, _>>()?;
        let (e, at) = evaluate_nodes(inp, plan, Grid::new(ax)?, family, points)?;
        levels.push(level_nodes(&e, &at, plan.metric, rotating, r));
    }
    Ok(Scheme {
        name: format!(
            "nodal DG of degree {} on {} {} nodes per axis of each cell, unsplit over [{}], \
             local Lax-Friedrichs flux (Hesthaven & Warburton 2008)",
            points - 1,
            points,
            family.name(),
            names.join(", ")
        ),
        data,
        orders: super::orders(&levels),
        levels,
        whole: None,
        region,
        shape: names
            .iter()
            .zip(&axes)
            .map(|(c, a)| (c.to_string(), a.cells()))
            .collect(),
    })
}

/// The names of the plane's axes, e.g. `(R, z)`.
pub(super) fn coordinates(grid: &Grid, plan: &Plan) -> String {
    let names: Vec<&str> = plan
        .axes
        .iter()
        .map(|&a| grid.axes()[a].coord.name())
        .collect();
    format!("({})", names.join(", "))
}
