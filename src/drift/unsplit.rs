//! The semi-discrete residual of the second-order finite-volume scheme of
//! [`super::schemes`] on a grid of two or three axes, applied dimension by
//! dimension and summed (unsplit): along each axis the same MUSCL
//! reconstruction of the primitive variables with the monotonised-central
//! limiter (van Leer 1977, J. Comput. Phys. 23, 276) and the same local
//! Lax–Friedrichs (Rusanov) flux (Toro 2009, *Riemann Solvers and
//! Numerical Methods for Fluid Dynamics*, 3rd ed., ch. 10 — from memory),
//! now for mass and every in-plane momentum component, the fluxes taken
//! through the exact face areas of the cell and divided by its exact
//! volume.
//!
//! The geometric sources of the curvilinear coordinates (the momentum
//! equations in cylindrical and spherical coordinates, e.g. Mihalas &
//! Mihalas 1984, *Foundations of Radiation Hydrodynamics*, §2 — from
//! memory), the pressure part written as P̄ (A₊ − A₋)/V as in the 1D
//! scheme, so that uniform pressure is held exactly:
//!
//! * `[R, z]`: R-momentum P/R + ρv_φ²/R;
//! * `[r, theta]`: r-momentum 2P/r + ρ(v_θ² + v_φ²)/r, θ-momentum
//!   P cot θ/r + ρ(v_φ² cot θ − v_r v_θ)/r;
//! * Cartesian axes: none.
//!
//! Gravity is the exact acceleration at the cell centre times ρ̄. The
//! acceleration reported is (d(ρv)/dt − v dρ/dt)/ρ̄ per in-plane
//! component (the velocity a state at rest or in rotation would pick up);
//! the azimuthal momentum of a meridional plane is not reported. Cells
//! within two of an end of any axis are left out (no ghost values).
//!
//! Owns: the residual over arrays. Does not own: sampling, blocks or
//! verdicts (see [`super::multi`]).

use super::schemes::mc;

/// The coordinates of the grid's axes, which fix face areas, volumes and
/// geometric sources.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Metric {
    /// Two or three Cartesian axes.
    Cartesian,
    /// The meridional plane `[R, z]` (per radian of φ).
    Cylindrical,
    /// The meridional plane `[r, theta]` (per radian of φ).
    Spherical,
}

impl Metric {
    /// The volume of the cell `lo`..`hi`.
    fn volume(self, lo: &[f64], hi: &[f64]) -> f64 {
        match self {
            Metric::Cartesian => lo.iter().zip(hi).map(|(a, b)| b - a).product(),
            Metric::Cylindrical => 0.5 * (hi[0] * hi[0] - lo[0] * lo[0]) * (hi[1] - lo[1]),
            Metric::Spherical => {
                (hi[0].powi(3) - lo[0].powi(3)) / 3.0 * (lo[1].cos() - hi[1].cos())
            }
        }
    }

    /// The area of the face normal to `axis` at coordinate `at`, spanning
    /// the cell `lo`..`hi` along the other axes.
    fn area(self, axis: usize, at: f64, lo: &[f64], hi: &[f64]) -> f64 {
        match (self, axis) {
            (Metric::Cartesian, _) => (0..lo.len())
                .filter(|&b| b != axis)
                .map(|b| hi[b] - lo[b])
                .product(),
            (Metric::Cylindrical, 0) => at * (hi[1] - lo[1]),
            (Metric::Cylindrical, _) => 0.5 * (hi[0] * hi[0] - lo[0] * lo[0]),
            (Metric::Spherical, 0) => at * at * (lo[1].cos() - hi[1].cos()),
            (Metric::Spherical, _) => at.sin() * 0.5 * (hi[0] * hi[0] - lo[0] * lo[0]),
        }
    }

    /// The geometric momentum sources at the cell centre `x` (see the
    /// module documentation); `da[a]` = A₊ − A₋ along axis a, `vol` the
    /// volume.
    fn sources(self, x: &[f64], s: &State, da: &[f64], vol: f64) -> [f64; 3] {
        let p = s.p;
        let f = self.inertial(x, s);
        match self {
            Metric::Cartesian => [0.0; 3],
            Metric::Cylindrical => [p * da[0] / vol + f[0], 0.0, 0.0],
            Metric::Spherical => [p * da[0] / vol + f[0], p * da[1] / vol + f[1], 0.0],
        }
    }

    /// The inertial (centrifugal and Coriolis-like) part of the geometric
    /// momentum sources at `x` (see the module documentation).
    pub(super) fn inertial(self, x: &[f64], s: &State) -> [f64; 3] {
        let (rho, v, w) = (s.rho, &s.v, s.w);
        match self {
            Metric::Cartesian => [0.0; 3],
            Metric::Cylindrical => [rho * w * w / x[0], 0.0, 0.0],
            Metric::Spherical => {
                let cot = x[1].cos() / x[1].sin();
                [
                    rho * (v[1] * v[1] + w * w) / x[0],
                    rho * (w * w * cot - v[0] * v[1]) / x[0],
                    0.0,
                ]
            }
        }
    }

    /// At the point `x`: the volume density J (volume = ∫ J dq) and the
    /// area densities A_b = J/h_b of the faces normal to each axis.
    pub(super) fn densities(self, x: &[f64]) -> (f64, [f64; 3]) {
        match self {
            Metric::Cartesian => (1.0, [1.0; 3]),
            Metric::Cylindrical => (x[0], [x[0], x[0], 0.0]),
            Metric::Spherical => {
                let s = x[1].sin();
                let r = x[0];
                (r * r * s, [r * r * s, r * s, 0.0])
            }
        }
    }
}

/// Cell values on a grid of two or three axes, flattened in C order (the
/// last axis varies fastest).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Cells {
    /// Cells along each axis.
    pub shape: Vec<usize>,
    /// ρ.
    pub rho: Vec<f64>,
    /// The velocity components along the grid's axes.
    pub v: Vec<Vec<f64>>,
    /// v_φ of a meridional plane (zero on Cartesian axes).
    pub w: Vec<f64>,
    /// P.
    pub p: Vec<f64>,
}

/// A primitive state at a point.
#[derive(Clone, Copy, Debug)]
pub(super) struct State {
    pub(super) rho: f64,
    pub(super) v: [f64; 3],
    pub(super) w: f64,
    pub(super) p: f64,
}

impl Cells {
    /// The primitive state at index `c` (a cell, or a node of a DG file).
    pub(super) fn state(&self, c: usize) -> State {
        State {
            rho: self.rho[c],
            v: std::array::from_fn(|b| self.v.get(b).map_or(0.0, |v| v[c])),
            w: self.w[c],
            p: self.p[c],
        }
    }
}

/// The physical flux of mass and momentum (slots 0, 1..=3) along `axis`
/// of the state `s`.
pub(super) fn flux(s: &State, axis: usize) -> [f64; 4] {
    let m = s.rho * s.v[axis];
    std::array::from_fn(|k| match k {
        0 => m,
        k if k - 1 == axis => m * s.v[k - 1] + s.p,
        k => m * s.v[k - 1],
    })
}

/// The local Lax–Friedrichs flux of mass and momentum (slots 0, 1..=3)
/// through a face normal to `axis` between the states `l` and `r`.
pub(super) fn rusanov(l: &State, r: &State, axis: usize, gamma: f64) -> [f64; 4] {
    let speed = |s: &State| s.v[axis].abs() + (gamma * s.p / s.rho).sqrt();
    let a = speed(l).max(speed(r));
    let flux = |s: &State| flux(s, axis);
    let cons = |s: &State| -> [f64; 4] {
        std::array::from_fn(|k| if k == 0 { s.rho } else { s.rho * s.v[k - 1] })
    };
    let (fl, fr, ul, ur) = (flux(l), flux(r), cons(l), cons(r));
    std::array::from_fn(|k| 0.5 * (fl[k] + fr[k]) - 0.5 * a * (ur[k] - ul[k]))
}

/// The finite-volume acceleration of each cell, one array per axis
/// component (NaN for cells within two of an end of any axis): `edges`
/// per axis, `gravity` the exact acceleration components at the centres.
pub fn finite_volume(
    metric: Metric,
    edges: &[Vec<f64>],
    cells: &Cells,
    gravity: &[Vec<f64>],
    gamma: f64,
) -> Vec<Vec<f64>> {
    let d = edges.len();
    let shape = &cells.shape;
    let n: usize = shape.iter().product();
    let mut out = vec![vec![f64::NAN; n]; d];
    if shape.iter().any(|&s| s < 5) {
        return out;
    }
    let mut stride = vec![1; d];
    for a in (0..d - 1).rev() {
        stride[a] = stride[a + 1] * shape[a + 1];
    }
    let xc: Vec<Vec<f64>> = edges
        .iter()
        .map(|e| e.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect())
        .collect();
    // The primitive variables in order ρ, v_0..v_{d-1}, v_φ, P.
    let mut vars: Vec<&[f64]> = vec![&cells.rho];
    vars.extend(cells.v.iter().map(|v| v.as_slice()));
    vars.push(&cells.w);
    vars.push(&cells.p);
    let to_state = |s: &[f64]| State {
        rho: s[0],
        v: std::array::from_fn(|b| if b < d { s[1 + b] } else { 0.0 }),
        w: s[d + 1],
        p: s[d + 2],
    };
    // The state reconstructed in cell c (index i along axis a) at x.
    let at = |c: usize, a: usize, i: usize, x: f64| -> State {
        let s = stride[a];
        let vals: Vec<f64> = vars
            .iter()
            .map(|v| {
                let slope = mc(
                    (v[c] - v[c - s]) / (xc[a][i] - xc[a][i - 1]),
                    (v[c + s] - v[c]) / (xc[a][i + 1] - xc[a][i]),
                );
                v[c] + slope * (x - xc[a][i])
            })
            .collect();
        to_state(&vals)
    };
    // The flux through the face between cell c (index i along a) and the
    // next cell along a.
    let face = |c: usize, a: usize, i: usize| -> [f64; 4] {
        let e = edges[a][i + 1];
        rusanov(&at(c, a, i, e), &at(c + stride[a], a, i + 1, e), a, gamma)
    };
    let mut idx = vec![0usize; d];
    let (mut lo, mut hi, mut x, mut da) = (vec![0.0; d], vec![0.0; d], vec![0.0; d], vec![0.0; d]);
    for c in 0..n {
        let mut rest = c;
        for a in 0..d {
            idx[a] = rest / stride[a];
            rest %= stride[a];
        }
        if (0..d).any(|a| idx[a] < 2 || idx[a] + 2 >= shape[a]) {
            continue;
        }
        for a in 0..d {
            lo[a] = edges[a][idx[a]];
            hi[a] = edges[a][idx[a] + 1];
            x[a] = xc[a][idx[a]];
        }
        let vol = metric.volume(&lo, &hi);
        let mut du = [0.0; 4];
        for a in 0..d {
            let (am, ap) = (
                metric.area(a, lo[a], &lo, &hi),
                metric.area(a, hi[a], &lo, &hi),
            );
            let (fm, fp) = (face(c - stride[a], a, idx[a] - 1), face(c, a, idx[a]));
            for k in 0..4 {
                du[k] -= (ap * fp[k] - am * fm[k]) / vol;
            }
            da[a] = ap - am;
        }
        let s = cells.state(c);
        let src = metric.sources(&x, &s, &da, vol);
        for b in 0..d {
            let dm = du[1 + b] + src[b] + s.rho * gravity[b][c];
            out[b][c] = (dm - s.v[b] * du[0]) / s.rho;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn uniform(shape: &[usize], p: impl Fn(usize) -> f64) -> Cells {
        let n = shape.iter().product();
        Cells {
            shape: shape.to_vec(),
            rho: vec![2.0; n],
            v: vec![vec![0.0; n]; shape.len()],
            w: vec![0.0; n],
            p: (0..n).map(p).collect(),
        }
    }

    /// Uniform pressure at rest, no gravity: held to rounding in every
    /// metric (the geometric source balances the change of face area:
    /// common practice, no source).
    #[test]
    fn uniform_pressure_is_held_in_every_metric() {
        let edges =
            |n: usize, a: f64, h: f64| -> Vec<f64> { (0..=n).map(|i| a + h * i as f64).collect() };
        for (metric, e) in [
            (
                Metric::Cartesian,
                vec![edges(9, -1.0, 0.2), edges(8, 0.0, 0.1)],
            ),
            (
                Metric::Cylindrical,
                vec![edges(9, 0.5, 0.2), edges(8, -0.4, 0.1)],
            ),
            (
                Metric::Spherical,
                vec![edges(9, 0.5, 0.2), edges(8, 0.9, 0.15)],
            ),
            (
                Metric::Cartesian,
                vec![edges(6, 0.0, 0.1), edges(7, 0.0, 0.2), edges(5, 1.0, 0.3)],
            ),
        ] {
            let shape: Vec<usize> = e.iter().map(|e| e.len() - 1).collect();
            let c = uniform(&shape, |_| 3.0);
            let n = c.rho.len();
            let g = vec![vec![0.0; n]; shape.len()];
            let a = finite_volume(metric, &e, &c, &g, 1.4);
            let held = a.iter().flatten().filter(|v| !v.is_nan());
            assert!(held.clone().count() > 0);
            assert!(held.clone().all(|v| v.abs() < 1e-12), "{metric:?} {a:?}");
        }
    }

    /// On Cartesian axes a state that varies along the first axis only
    /// gives the 1D slab scheme's acceleration along it and none across
    /// (the unsplit sum reduces to the 1D scheme: common practice, no
    /// source).
    #[test]
    fn a_state_along_one_axis_gives_the_line_scheme() {
        let nx = 12;
        let ex: Vec<f64> = (0..=nx).map(|i| 0.1 * i as f64).collect();
        let ey: Vec<f64> = (0..=6).map(|i| 0.3 * i as f64).collect();
        let xc: Vec<f64> = ex.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect();
        let p1: Vec<f64> = xc.iter().map(|x| (-x).exp()).collect();
        let rho1: Vec<f64> = xc.iter().map(|x| 1.3 * (-x).exp()).collect();
        let g1 = vec![-0.7; nx];
        let line = super::super::schemes::Primitives {
            rho: rho1.clone(),
            u: vec![0.0; nx],
            w: vec![0.0; nx],
            p: p1.clone(),
        };
        let want = super::super::schemes::finite_volume(
            super::super::schemes::Geometry::Slab,
            &ex,
            &line,
            &g1,
            1.4,
        );
        let shape = [nx, 6];
        let mut c = uniform(&shape, |k| p1[k / 6]);
        c.rho = (0..nx * 6).map(|k| rho1[k / 6]).collect();
        let g = vec![(0..nx * 6).map(|k| g1[k / 6]).collect(), vec![0.0; nx * 6]];
        let a = finite_volume(Metric::Cartesian, &[ex, ey], &c, &g, 1.4);
        for (k, (ax, ay)) in a[0].iter().zip(&a[1]).enumerate() {
            let (i, j) = (k / 6, k % 6);
            if (2..nx - 2).contains(&i) && (2..4).contains(&j) {
                assert!((ax - want[i]).abs() < 1e-14, "{k}: {ax} {}", want[i]);
                assert!(ay.abs() < 1e-14);
            } else {
                assert!(ax.is_nan());
            }
        }
    }
}
