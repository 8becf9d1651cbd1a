//! The semi-discrete residual of nodal DG on a grid of two or three axes:
//! the line scheme of [`super::schemes::nodal_dg`] (weak form on the nodes,
//! collocated quadrature, local Lax–Friedrichs flux; Hesthaven & Warburton
//! 2008, *Nodal Discontinuous Galerkin Methods*, ch. 2 and 6 — from
//! memory) on tensor-product cells, for mass and every in-plane momentum
//! component, in the coordinates of [`Metric`].
//!
//! With J the volume density (volume = ∫ J dq), A_b = J/h_b the area
//! density of the faces normal to axis b and F_b the flux along b, the
//! conservation law J ∂_t U + Σ_b ∂_b (A_b F_b) = J S is tested with the
//! Lagrange polynomial ℓ_i of node i over the reference cell. With the
//! nodes as quadrature (weights w, half widths h), at node i
//!
//!   ∂_t U_i = S_i + Σ_b [Σ_j w_j D_b[j][i_b] A_b F_b(x_j)
//!                        − ℓ_{i_b}(1) A_b F̂⁺ + ℓ_{i_b}(−1) A_b F̂⁻] / (w_{i_b} h_b J_i),
//!
//! the sum over j along the line of i in direction b, F̂± the Rusanov
//! flux between the values the two cells' node polynomials take on the
//! face, at the transverse nodes of i. The sources are gravity ρg, the
//! pressure's geometric source P (∂_a A_a)/J with (∂_a A_a)/J taken by the
//! same discrete operator applied to A_a alone (so that uniform pressure
//! at rest is held to rounding in every metric, as the finite-volume
//! scheme's P (A₊ − A₋)/V does; exact anyway where A is a polynomial of
//! low degree, as on Cartesian and `[R, z]` cells) and the inertial terms
//! of [`Metric`]. The acceleration reported
//! is (∂_t(ρv) − v ∂_tρ)/ρ at each node, as for the finite-volume scheme.
//! Cells at an end of any axis (no neighbour) are NaN.
//!
//! Owns: the residual over arrays. Does not own: sampling, blocks or
//! verdicts (see [`super::multi`]).

use super::schemes::{barycentric, derivative_matrix, lagrange_at};
use super::unsplit::{flux, rusanov, Cells, Metric, State};

/// The nodal DG acceleration components at every node (one array per
/// axis; cell-major, the nodes of a cell as trailing indices in C order,
/// `nodes.len()` per axis): `values` holds the node values (its `shape` is
/// the cells per axis), `gravity` the exact components at the nodes.
pub fn nodal_dg(
    metric: Metric,
    edges: &[Vec<f64>],
    nodes: &[f64],
    weights: &[f64],
    values: &Cells,
    gravity: &[Vec<f64>],
    gamma: f64,
) -> Vec<Vec<f64>> {
    let d = edges.len();
    let q = nodes.len();
    let shape = &values.shape;
    let per: usize = q.pow(d as u32);
    let ncells: usize = shape.iter().product();
    let n = ncells * per;
    let mut out = vec![vec![f64::NAN; n]; d];
    if shape.iter().any(|&s| s < 3) {
        return out;
    }
    let lambda = barycentric(nodes);
    let dm = derivative_matrix(nodes, &lambda);
    let (left, right) = (
        lagrange_at(nodes, &lambda, -1.0),
        lagrange_at(nodes, &lambda, 1.0),
    );
    // Strides of cells and of nodes within a cell.
    let mut cstride = vec![1; d];
    let mut nstride = vec![1; d];
    for a in (0..d - 1).rev() {
        cstride[a] = cstride[a + 1] * shape[a + 1];
        nstride[a] = nstride[a + 1] * q;
    }
    // The state the polynomial of the line of node `first` (local index 0
    // along b) of cell c takes where `basis` is evaluated.
    let end = |c: usize, b: usize, first: usize, basis: &[f64]| -> State {
        let (mut rho, mut m, mut p) = (0.0, [0.0; 3], 0.0);
        for (j, l) in basis.iter().enumerate() {
            let g = c * per + first + j * nstride[b];
            rho += l * values.rho[g];
            p += l * values.p[g];
            for (a, ma) in m.iter_mut().enumerate().take(d) {
                *ma += l * values.rho[g] * values.v[a][g];
            }
        }
        State {
            rho,
            v: std::array::from_fn(|a| m[a] / rho),
            w: 0.0,
            p,
        }
    };
    let mut cidx = vec![0usize; d];
    let mut x = vec![0.0; d];
    let mut du = vec![[0.0f64; 4]; per];
    let mut geo = vec![[0.0f64; 3]; per];
    for c in 0..ncells {
        let mut rest = c;
        for a in 0..d {
            cidx[a] = rest / cstride[a];
            rest %= cstride[a];
        }
        if (0..d).any(|a| cidx[a] == 0 || cidx[a] + 1 >= shape[a]) {
            continue;
        }
        let mid: Vec<f64> = (0..d)
            .map(|a| 0.5 * (edges[a][cidx[a]] + edges[a][cidx[a] + 1]))
            .collect();
        let half: Vec<f64> = (0..d)
            .map(|a| 0.5 * (edges[a][cidx[a] + 1] - edges[a][cidx[a]]))
            .collect();
        let point = |local: usize, x: &mut [f64]| {
            let mut rest = local;
            for a in 0..d {
                x[a] = mid[a] + half[a] * nodes[rest / nstride[a]];
                rest %= nstride[a];
            }
        };
        du.iter_mut().for_each(|u| *u = [0.0; 4]);
        for b in 0..d {
            // Every line of the cell along b, by its first node.
            for first in (0..per).filter(|l| (l / nstride[b]).is_multiple_of(q)) {
                let fp = rusanov(
                    &end(c, b, first, &right),
                    &end(c + cstride[b], b, first, &left),
                    b,
                    gamma,
                );
                let fm = rusanov(
                    &end(c - cstride[b], b, first, &right),
                    &end(c, b, first, &left),
                    b,
                    gamma,
                );
                point(first, &mut x);
                x[b] = edges[b][cidx[b] + 1];
                let ap = metric.densities(&x).1[b];
                x[b] = edges[b][cidx[b]];
                let am = metric.densities(&x).1[b];
                // A_b and A_b F_b at the line's nodes.
                let area: Vec<f64> = (0..q)
                    .map(|j| {
                        point(first + j * nstride[b], &mut x);
                        metric.densities(&x).1[b]
                    })
                    .collect();
                let fl: Vec<[f64; 4]> = (0..q)
                    .map(|j| {
                        flux(&values.state(c * per + first + j * nstride[b]), b)
                            .map(|f| area[j] * f)
                    })
                    .collect();
                for i in 0..q {
                    let l = first + i * nstride[b];
                    point(l, &mut x);
                    let jac = metric.densities(&x).0;
                    let den = weights[i] * half[b] * jac;
                    for k in 0..2 + d - 1 {
                        let mut t = -(right[i] * ap * fp[k] - left[i] * am * fm[k]);
                        for (j, f) in fl.iter().enumerate() {
                            t += weights[j] * dm[j][i] * f[k];
                        }
                        du[l][k] += t / den;
                    }
                    // The same operator on A_b alone: (∂_b A_b)/J as the
                    // scheme differentiates it.
                    let mut t = -(right[i] * ap - left[i] * am);
                    for (j, a) in area.iter().enumerate() {
                        t += weights[j] * dm[j][i] * a;
                    }
                    geo[l][b] = -t / den;
                }
            }
        }
        for (l, u) in du.iter().enumerate() {
            point(l, &mut x);
            let g = c * per + l;
            let s = values.state(g);
            let inertial = metric.inertial(&x, &s);
            for a in 0..d {
                let src = s.rho * gravity[a][g] + s.p * geo[l][a] + inertial[a];
                out[a][g] = (u[1 + a] + src - s.v[a] * u[0]) / s.rho;
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Uniform pressure at rest, no gravity: held to rounding in every
    /// metric on Gauss–Legendre and Gauss–Lobatto nodes (the pressure's
    /// geometric source balances the change of face area: common
    /// practice, no source).
    #[test]
    fn uniform_pressure_is_held_in_every_metric() {
        let edges =
            |n: usize, a: f64, h: f64| -> Vec<f64> { (0..=n).map(|i| a + h * i as f64).collect() };
        for family in [
            crate::sample::gauss::NodeFamily::Legendre,
            crate::sample::gauss::NodeFamily::Lobatto,
        ] {
            let rule = family.rule(3).unwrap();
            for (metric, e) in [
                (
                    Metric::Cartesian,
                    vec![edges(5, -1.0, 0.2), edges(4, 0.0, 0.1)],
                ),
                (
                    Metric::Cylindrical,
                    vec![edges(5, 0.5, 0.2), edges(4, -0.4, 0.1)],
                ),
                (
                    Metric::Spherical,
                    vec![edges(5, 0.5, 0.2), edges(4, 0.9, 0.15)],
                ),
                (
                    Metric::Cartesian,
                    vec![edges(4, 0.0, 0.1), edges(3, 0.0, 0.2), edges(3, 1.0, 0.3)],
                ),
            ] {
                let shape: Vec<usize> = e.iter().map(|e| e.len() - 1).collect();
                let d = shape.len();
                let n = shape.iter().product::<usize>() * 3usize.pow(d as u32);
                let c = Cells {
                    shape: shape.clone(),
                    rho: vec![2.0; n],
                    v: vec![vec![0.0; n]; d],
                    w: vec![0.0; n],
                    p: vec![3.0; n],
                };
                let a = nodal_dg(
                    metric,
                    &e,
                    &rule.nodes,
                    &rule.weights,
                    &c,
                    &vec![vec![0.0; n]; d],
                    1.4,
                );
                let held = a.iter().flatten().filter(|v| !v.is_nan());
                assert!(held.clone().count() > 0);
                assert!(
                    held.clone().all(|v| v.abs() < 1e-11),
                    "{metric:?} {family:?}"
                );
            }
        }
    }

    /// On Cartesian axes a state that varies along the first axis only
    /// gives the line scheme's acceleration along it and none across.
    #[test]
    fn a_state_along_one_axis_gives_the_line_scheme() {
        let rule = crate::sample::gauss::NodeFamily::Legendre.rule(3).unwrap();
        let (nx, ny, q) = (6, 3, 3);
        let ex: Vec<f64> = (0..=nx).map(|i| 0.1 * i as f64).collect();
        let ey: Vec<f64> = (0..=ny).map(|i| 0.3 * i as f64).collect();
        let xs = super::super::schemes::node_points(&ex, &rule.nodes);
        let line = super::super::schemes::Primitives {
            rho: xs.iter().map(|x| 1.3 * (-x).exp()).collect(),
            u: vec![0.0; xs.len()],
            w: vec![0.0; xs.len()],
            p: xs.iter().map(|x| (-x).exp()).collect(),
        };
        let g1 = vec![-0.7; xs.len()];
        let want = super::super::schemes::nodal_dg(
            super::super::schemes::Geometry::Slab,
            &ex,
            &rule.nodes,
            &rule.weights,
            &line,
            &g1,
            1.4,
        );
        // Node (cell i, cell j, node k, node l) takes the line's value at
        // cell i, node k.
        let n = nx * ny * q * q;
        let of = |g: usize| {
            let (cell, local) = (g / (q * q), g % (q * q));
            (cell / ny) * q + local / q
        };
        let c = Cells {
            shape: vec![nx, ny],
            rho: (0..n).map(|g| line.rho[of(g)]).collect(),
            v: vec![vec![0.0; n]; 2],
            w: vec![0.0; n],
            p: (0..n).map(|g| line.p[of(g)]).collect(),
        };
        let g = vec![vec![-0.7; n], vec![0.0; n]];
        let a = nodal_dg(
            Metric::Cartesian,
            &[ex, ey],
            &rule.nodes,
            &rule.weights,
            &c,
            &g,
            1.4,
        );
        for k in 0..n {
            let (i, j) = ((k / (q * q)) / ny, (k / (q * q)) % ny);
            if (1..nx - 1).contains(&i) && j == 1 {
                assert!(
                    (a[0][k] - want[of(k)]).abs() < 1e-13,
                    "{k}: {} {}",
                    a[0][k],
                    want[of(k)]
                );
                assert!(a[1][k].abs() < 1e-13);
            }
        }
    }
}
