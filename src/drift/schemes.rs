//! The semi-discrete residual d(ρv)/dt of two standard schemes applied to
//! a state on a line (slab, sphere, disk midplane), as the scheme would see
//! it on its first step: the spurious acceleration of a scheme without
//! well-balancing.
//!
//! * Finite volume, second order: piecewise-linear (MUSCL) reconstruction of
//!   the primitive variables (ρ, v_s, v_φ, P) with the monotonised-central
//!   slope limiter (van Leer 1977, J. Comput. Phys. 23, 276), the local
//!   Lax–Friedrichs (Rusanov) flux (Toro 2009, *Riemann Solvers and
//!   Numerical Methods for Fluid Dynamics*, 3rd ed., ch. 10 — from memory),
//!   fluxes through the face areas A (1, r², R), the geometric pressure
//!   source P̄ (A₊ − A₋)/V (2P/r, P/R to second order), the centrifugal force
//!   ρ̄ v_φ²/R at the centre, and gravity as the exact acceleration at the
//!   cell centre times ρ̄ (midpoint rule).
//! * Nodal discontinuous Galerkin of degree k = n − 1 on the n nodes of each
//!   cell (Hesthaven & Warburton 2008, *Nodal Discontinuous Galerkin
//!   Methods*, weak form of §2.2 with the local Lax–Friedrichs flux of
//!   eq. 2.20 — from memory), with the nodes themselves as the quadrature
//!   (collocation, as in the DG spectral element method), the weak form
//!   weighted by the area factor A, the face states interpolated from the
//!   nodes, gravity and the geometric sources (2P/r; P/R + ρv_φ²/R) exact
//!   at each node.
//!
//! Only the momentum along the line is reported: the state is at rest
//! along it, so density and energy change only through the flux's
//! dissipation of the face jumps. Cells next to the ends of the line are
//! left out (no ghost values: two cells at each end for finite volume,
//! one for DG).
//!
//! Owns: the two residuals over arrays. Does not own: backgrounds, grids,
//! sampling or verdicts (see [`super`]).

/// The geometry of the line: the face area A(x) per unit solid angle.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Geometry {
    /// Plane-parallel: A = 1.
    Slab,
    /// Spherical radius: A = r².
    Sphere,
    /// Cylindrical radius of a disk midplane: A = R (and the centrifugal
    /// force ρv_φ²/R).
    Disk,
}

impl Geometry {
    fn area(self, x: f64) -> f64 {
        match self {
            Geometry::Slab => 1.0,
            Geometry::Sphere => x * x,
            Geometry::Disk => x,
        }
    }

    /// ∫ A dx over [a, b].
    fn volume(self, a: f64, b: f64) -> f64 {
        match self {
            Geometry::Slab => b - a,
            Geometry::Sphere => (b * b * b - a * a * a) / 3.0,
            Geometry::Disk => (b * b - a * a) / 2.0,
        }
    }

    /// The geometric source of the momentum along the line at a point:
    /// 2P/r (sphere), (P + ρv_φ²)/R (disk).
    fn point_source(self, x: f64, rho: f64, vphi: f64, p: f64) -> f64 {
        match self {
            Geometry::Slab => 0.0,
            Geometry::Sphere => 2.0 * p / x,
            Geometry::Disk => (p + rho * vphi * vphi) / x,
        }
    }
}

/// Primitive values at points (cells or nodes): density, velocity along
/// the line, azimuthal velocity (zero but on a disk), pressure.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Primitives {
    /// ρ.
    pub rho: Vec<f64>,
    /// v along the line.
    pub u: Vec<f64>,
    /// v_φ.
    pub w: Vec<f64>,
    /// P.
    pub p: Vec<f64>,
}

/// The momentum flux ρu² + P and the local Lax–Friedrichs flux between a
/// left and a right state (ρ, u, P); `gamma` = 1 is an isothermal gas.
pub(super) fn rusanov(l: [f64; 3], r: [f64; 3], gamma: f64) -> f64 {
    let f = |s: [f64; 3]| s[0] * s[1] * s[1] + s[2];
    let c = |s: [f64; 3]| s[1].abs() + (gamma * s[2] / s[0]).sqrt();
    let a = c(l).max(c(r));
    0.5 * (f(l) + f(r)) - 0.5 * a * (r[0] * r[1] - l[0] * l[1])
}

/// The monotonised-central limited slope from the left and right
/// differences (per unit length).
pub(super) fn mc(a: f64, b: f64) -> f64 {
    if a * b <= 0.0 {
        0.0
    } else {
        a.signum() * (2.0 * a.abs()).min(2.0 * b.abs()).min(0.5 * (a + b).abs())
    }
}

/// The finite-volume acceleration d(ρv)/dt / ρ̄ of each cell (NaN for the
/// two cells at each end): `edges` n + 1, `cells` the n cell values,
/// `gravity` the exact acceleration along the line at the centres.
pub fn finite_volume(
    geom: Geometry,
    edges: &[f64],
    cells: &Primitives,
    gravity: &[f64],
    gamma: f64,
) -> Vec<f64> {
    let n = cells.rho.len();
    let mut out = vec![f64::NAN; n];
    if n < 5 {
        return out;
    }
    let xc: Vec<f64> = (0..n).map(|i| 0.5 * (edges[i] + edges[i + 1])).collect();
    let vars = [&cells.rho, &cells.u, &cells.p];
    // Slopes of (ρ, u, P) in cells 1..n-1.
    let slope = |v: &[f64], i: usize| {
        mc(
            (v[i] - v[i - 1]) / (xc[i] - xc[i - 1]),
            (v[i + 1] - v[i]) / (xc[i + 1] - xc[i]),
        )
    };
    // Face i+1/2 between cells i and i+1 (1 ≤ i, i + 1 ≤ n − 2).
    let face = |i: usize| {
        let e = edges[i + 1];
        let l: [f64; 3] = std::array::from_fn(|k| vars[k][i] + slope(vars[k], i) * (e - xc[i]));
        let r: [f64; 3] =
            std::array::from_fn(|k| vars[k][i + 1] + slope(vars[k], i + 1) * (e - xc[i + 1]));
        rusanov(l, r, gamma)
    };
    for i in 2..n - 2 {
        let (a, b) = (edges[i], edges[i + 1]);
        let (al, ar) = (geom.area(a), geom.area(b));
        let v = geom.volume(a, b);
        let (rho, w, p) = (cells.rho[i], cells.w[i], cells.p[i]);
        let mut dm = -(ar * face(i) - al * face(i - 1)) / v + rho * gravity[i];
        dm += match geom {
            Geometry::Slab => 0.0,
            Geometry::Sphere => p * (ar - al) / v,
            Geometry::Disk => p * (ar - al) / v + rho * w * w / xc[i],
        };
        out[i] = dm / rho;
    }
    out
}

/// The positions of the reference `nodes` (on [−1, 1]) in every cell of
/// `edges`, cell after cell.
pub(super) fn node_points(edges: &[f64], nodes: &[f64]) -> Vec<f64> {
    edges
        .windows(2)
        .flat_map(|w| {
            let (m, h) = (0.5 * (w[0] + w[1]), 0.5 * (w[1] - w[0]));
            nodes.iter().map(move |t| m + h * t)
        })
        .collect()
}

/// Barycentric weights of the nodes.
pub(super) fn barycentric(nodes: &[f64]) -> Vec<f64> {
    (0..nodes.len())
        .map(|j| {
            1.0 / (0..nodes.len())
                .filter(|&k| k != j)
                .map(|k| nodes[j] - nodes[k])
                .product::<f64>()
        })
        .collect()
}

/// The Lagrange basis of `nodes` at `x` (x not a node, or exactly one).
pub(super) fn lagrange_at(nodes: &[f64], lambda: &[f64], x: f64) -> Vec<f64> {
    if let Some(j) = nodes.iter().position(|&t| (t - x).abs() < 1e-15) {
        let mut v = vec![0.0; nodes.len()];
        v[j] = 1.0;
        return v;
    }
    let terms: Vec<f64> = nodes.iter().zip(lambda).map(|(t, l)| l / (x - t)).collect();
    let sum: f64 = terms.iter().sum();
    terms.iter().map(|t| t / sum).collect()
}

/// D[j][i] = ℓ_i'(ξ_j), the derivative of the i-th Lagrange polynomial at
/// node j.
pub(super) fn derivative_matrix(nodes: &[f64], lambda: &[f64]) -> Vec<Vec<f64>> {
    let n = nodes.len();
    let mut d = vec![vec![0.0; n]; n];
    for j in 0..n {
        let mut diag = 0.0;
        for i in 0..n {
            if i != j {
                d[j][i] = lambda[i] / lambda[j] / (nodes[j] - nodes[i]);
                diag -= d[j][i];
            }
        }
        d[j][j] = diag;
    }
    d
}

/// The nodal DG acceleration d(ρv)/dt / ρ at every node (cell-major, n
/// nodes per cell; NaN in the first and last cells): `nodes` and `weights`
/// the reference rule on [−1, 1], `values` and `gravity` at the nodes.
pub fn nodal_dg(
    geom: Geometry,
    edges: &[f64],
    nodes: &[f64],
    weights: &[f64],
    values: &Primitives,
    gravity: &[f64],
    gamma: f64,
) -> Vec<f64> {
    let k = nodes.len();
    let cells = edges.len() - 1;
    let mut out = vec![f64::NAN; cells * k];
    if cells < 3 {
        return out;
    }
    let lambda = barycentric(nodes);
    let d = derivative_matrix(nodes, &lambda);
    let (left, right) = (
        lagrange_at(nodes, &lambda, -1.0),
        lagrange_at(nodes, &lambda, 1.0),
    );
    let dot = |basis: &[f64], c: usize, f: &dyn Fn(usize) -> f64| -> f64 {
        basis
            .iter()
            .enumerate()
            .map(|(j, b)| b * f(c * k + j))
            .sum()
    };
    // (ρ, u, P) at the left and right end of cell c; u from the momentum.
    let end = |basis: &[f64], c: usize| -> [f64; 3] {
        let rho = dot(basis, c, &|i| values.rho[i]);
        let m = dot(basis, c, &|i| values.rho[i] * values.u[i]);
        [rho, m / rho, dot(basis, c, &|i| values.p[i])]
    };
    let flux = |c: usize| rusanov(end(&right, c), end(&left, c + 1), gamma);
    for c in 1..cells - 1 {
        let (a, b) = (edges[c], edges[c + 1]);
        let (mid, jac) = (0.5 * (a + b), 0.5 * (b - a));
        let (fa, fb) = (flux(c - 1), flux(c));
        let x: Vec<f64> = nodes.iter().map(|t| mid + jac * t).collect();
        for i in 0..k {
            let g = c * k + i;
            let mut rhs = -(right[i] * geom.area(b) * fb - left[i] * geom.area(a) * fa);
            for j in 0..k {
                let q = c * k + j;
                let f = values.rho[q] * values.u[q] * values.u[q] + values.p[q];
                rhs += weights[j] * geom.area(x[j]) * f * d[j][i];
            }
            let (rho, w, p) = (values.rho[g], values.w[g], values.p[g]);
            let dm = rhs / (weights[i] * jac * geom.area(x[i]))
                + rho * gravity[g]
                + geom.point_source(x[i], rho, w, p);
            out[g] = dm / rho;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Uniform pressure, no gravity: both schemes hold it exactly in every
    /// geometry (the geometric source balances the area change: common
    /// practice, no source).
    #[test]
    fn uniform_pressure_is_held_in_every_geometry() {
        for geom in [Geometry::Slab, Geometry::Sphere, Geometry::Disk] {
            let n = 12;
            let edges: Vec<f64> = (0..=n).map(|i| 1.0 + 0.1 * i as f64).collect();
            let c = Primitives {
                rho: vec![2.0; n],
                u: vec![0.0; n],
                w: vec![0.0; n],
                p: vec![3.0; n],
            };
            let a = finite_volume(geom, &edges, &c, &vec![0.0; n], 1.4);
            assert!(
                a[2..n - 2].iter().all(|v| v.abs() < 1e-12),
                "{geom:?} {a:?}"
            );
            let rule = crate::sample::gauss::GaussLegendre::new(3).unwrap();
            let m = n * 3;
            let v = Primitives {
                rho: vec![2.0; m],
                u: vec![0.0; m],
                w: vec![0.0; m],
                p: vec![3.0; m],
            };
            let a = nodal_dg(
                geom,
                &edges,
                &rule.nodes,
                &rule.weights,
                &v,
                &vec![0.0; m],
                1.4,
            );
            assert!(
                a[3..m - 3].iter().all(|v| v.abs() < 1e-11),
                "{geom:?} {a:?}"
            );
        }
    }

    /// The monotonised-central slope: the central difference on smooth
    /// monotone data, zero at an extremum (van Leer 1977).
    #[test]
    fn mc_limiter() {
        assert!((mc(1.0, 1.2) - 1.1).abs() < 1e-15);
        assert!(mc(1.0, -1.0).abs() < 1e-15);
        assert!((mc(0.1, 5.0) - 0.2).abs() < 1e-15);
    }
}
