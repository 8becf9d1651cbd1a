//! Cells the forecast leaves out because the state is no equilibrium there
//! (a torus's floor, where balance is given up): a cell is *outside* when
//! its centre or a corner is, and a cell is left out when any cell within
//! two of it along an axis is outside (the reach of the MUSCL stencil and
//! its face fluxes), so that every acceleration kept is that of the
//! equilibrium alone.
//!
//! Owns: the mask. Does not own what is outside (the caller's test on the
//! meridional position (R, z)) or the schemes.

use crate::grid::Grid;

/// The meridional position (R, z) of a point of `grid` with coordinates
/// `x` (one per axis, in the grid's order): R from (x, y), R, or r sin θ;
/// z from z or r cos θ (0 when the grid has neither).
pub(super) fn meridional(grid: &Grid, x: &[f64]) -> (f64, f64) {
    let names: Vec<&str> = grid.axes().iter().map(|a| a.coord.name()).collect();
    let get = |n: &str| names.iter().position(|m| *m == n).map(|i| x[i]);
    if let Some(r) = get("r") {
        let theta = get("theta").unwrap_or(std::f64::consts::FRAC_PI_2);
        return (r * theta.sin(), r * theta.cos());
    }
    let cyl = match (get("x"), get("y")) {
        (None, None) => get("R").unwrap_or(0.0),
        (a, b) => a.unwrap_or(0.0).hypot(b.unwrap_or(0.0)),
    };
    (cyl, get("z").unwrap_or(0.0))
}

/// [`mask`] repeated for the `per_cell` points (DG nodes) of each cell.
pub(super) fn mask_points(
    grid: &Grid,
    outside: &dyn Fn(f64, f64) -> bool,
    per_cell: usize,
) -> Vec<bool> {
    mask(grid, outside)
        .into_iter()
        .flat_map(|s| std::iter::repeat_n(s, per_cell))
        .collect()
}

/// Per cell of `grid` (C order), whether the forecast leaves it out.
fn mask(grid: &Grid, outside: &dyn Fn(f64, f64) -> bool) -> Vec<bool> {
    let shape = grid.shape();
    let d = shape.len();
    let n = grid.len();
    let axes = grid.axes();
    let centres: Vec<Vec<f64>> = axes.iter().map(|a| a.centers()).collect();
    let mut out = vec![false; n];
    let mut x = vec![0.0; d];
    for (c, o) in out.iter_mut().enumerate() {
        let idx = unflatten(c, &shape);
        for (k, i) in idx.iter().enumerate() {
            x[k] = centres[k][*i];
        }
        let (r, z) = meridional(grid, &x);
        let mut hit = outside(r, z);
        for corner in 0..(1usize << d) {
            if hit {
                break;
            }
            for (k, i) in idx.iter().enumerate() {
                x[k] = axes[k].edges[i + ((corner >> k) & 1)];
            }
            let (r, z) = meridional(grid, &x);
            hit = outside(r, z);
        }
        *o = hit;
    }
    // Dilate by two cells along each axis.
    let mut left_out = out.clone();
    for (c, l) in left_out.iter_mut().enumerate() {
        if *l {
            continue;
        }
        let idx = unflatten(c, &shape);
        'axes: for k in 0..d {
            let mut stride = 1;
            for s in &shape[k + 1..] {
                stride *= s;
            }
            for off in [-2isize, -1, 1, 2] {
                let j = idx[k] as isize + off;
                if j >= 0 && (j as usize) < shape[k] {
                    let other = (c as isize + off * stride as isize) as usize;
                    if out[other] {
                        *l = true;
                        break 'axes;
                    }
                }
            }
        }
    }
    left_out
}

fn unflatten(mut c: usize, shape: &[usize]) -> Vec<usize> {
    let mut idx = vec![0; shape.len()];
    for k in (0..shape.len()).rev() {
        idx[k] = c % shape[k];
        c /= shape[k];
    }
    idx
}
