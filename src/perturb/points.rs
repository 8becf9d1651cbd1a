//! Points in every coordinate a perturbation may be written in: Cartesian
//! x, y, z, cylindrical R and φ, spherical r and θ — filled from whatever
//! coordinates the grid's axes carry.
//!
//! Owns: the list of coordinate names perturbations know and the map from
//! grid coordinates to all of them. Does not own any perturbation.

use crate::background::LANES;
use crate::grid::Coord;

/// The coordinate names a perturbation's formulas and keys may use, in the
/// order of [`Points::columns`].
pub const COORDS: [&str; 7] = ["x", "y", "z", "R", "phi", "r", "theta"];

/// The index in [`COORDS`] of a grid coordinate.
pub fn column(c: Coord) -> usize {
    match c {
        Coord::X => 0,
        Coord::Y => 1,
        Coord::Z => 2,
        Coord::R => 3,
        Coord::Phi => 4,
        Coord::Theta => 6,
        _ => 5,
    }
}

/// A block of up to [`LANES`] points in all seven coordinates (structure of
/// arrays). Allocated once per thread and refilled.
#[derive(Clone, Debug)]
pub struct Points {
    /// Number of points held.
    pub len: usize,
    cols: [Vec<f64>; 7],
}

impl Default for Points {
    fn default() -> Self {
        Points::new()
    }
}

impl Points {
    /// An empty block with room for [`LANES`] points.
    pub fn new() -> Points {
        Points {
            len: 0,
            cols: std::array::from_fn(|_| vec![0.0; LANES]),
        }
    }

    /// The coordinate `c` (an index into [`COORDS`]) of the points held.
    pub fn col(&self, c: usize) -> &[f64] {
        &self.cols[c][..self.len]
    }

    /// All seven coordinates, in the order of [`COORDS`].
    pub fn columns(&self) -> [&[f64]; 7] {
        std::array::from_fn(|c| self.col(c))
    }

    /// Fill from `n` points given on a grid whose axes run along `axes`
    /// (`grid[a]` the coordinate along axis `a`). Coordinates the grid does
    /// not carry follow from the ones it does: a point on an `R` line lies at
    /// φ = 0, z = 0; a point of a slab at x = y = 0; a point on a spherical
    /// radius `r` without θ on the x axis (θ = π/2, φ = 0). φ derived from
    /// (x, y) is `atan2(y, x)`, θ (from the +z axis) `atan2(R, z)`.
    pub fn fill(&mut self, axes: &[Coord], grid: &[&[f64]], n: usize) {
        self.len = n;
        let given = |c: Coord| axes.iter().position(|a| *a == c).map(|a| &grid[a][..n]);
        let [x, y, z, cr, phi, r, th] = &mut self.cols;
        let (x, y, z) = (&mut x[..n], &mut y[..n], &mut z[..n]);
        let (cr, phi, r, th) = (&mut cr[..n], &mut phi[..n], &mut r[..n], &mut th[..n]);
        if let Some(s) = given(Coord::Sph) {
            let (gt, gp) = (given(Coord::Theta), given(Coord::Phi));
            for i in 0..n {
                let t = gt.map_or(std::f64::consts::FRAC_PI_2, |g| g[i]);
                let p = gp.map_or(0.0, |g| g[i]);
                let (st, ct) = t.sin_cos();
                let (sp, cp) = p.sin_cos();
                x[i] = s[i] * st * cp;
                y[i] = s[i] * st * sp;
                z[i] = s[i] * ct;
            }
        } else {
            match given(Coord::Z) {
                Some(g) => z.copy_from_slice(g),
                None => z.fill(0.0),
            }
            let (gx, gy) = (given(Coord::X), given(Coord::Y));
            if gx.is_some() || gy.is_some() {
                match gx {
                    Some(g) => x.copy_from_slice(g),
                    None => x.fill(0.0),
                }
                match gy {
                    Some(g) => y.copy_from_slice(g),
                    None => y.fill(0.0),
                }
            } else if let Some(gr) = given(Coord::R) {
                match given(Coord::Phi) {
                    Some(gp) => {
                        for i in 0..n {
                            let (s, c) = gp[i].sin_cos();
                            x[i] = gr[i] * c;
                            y[i] = gr[i] * s;
                        }
                    }
                    None => {
                        x.copy_from_slice(gr);
                        y.fill(0.0);
                    }
                }
            } else {
                x.fill(0.0);
                y.fill(0.0);
            }
        }
        match given(Coord::R) {
            Some(g) => cr.copy_from_slice(g),
            None => {
                for i in 0..n {
                    cr[i] = x[i].hypot(y[i]);
                }
            }
        }
        match given(Coord::Phi) {
            Some(g) => phi.copy_from_slice(g),
            None => {
                for i in 0..n {
                    phi[i] = y[i].atan2(x[i]);
                }
            }
        }
        match given(Coord::Sph) {
            Some(g) => r.copy_from_slice(g),
            None => {
                for i in 0..n {
                    r[i] = (x[i] * x[i] + y[i] * y[i] + z[i] * z[i]).sqrt();
                }
            }
        }
        match given(Coord::Theta) {
            Some(g) => th.copy_from_slice(g),
            None => {
                for i in 0..n {
                    th[i] = cr[i].atan2(z[i]);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polar_and_cartesian_points_agree() {
        let mut p = Points::new();
        let (rr, ph) = ([2.0, 1.0], [0.5, -1.0]);
        p.fill(&[Coord::R, Coord::Phi], &[&rr, &ph], 2);
        let (x, y) = (p.col(0).to_vec(), p.col(1).to_vec());
        assert!((x[0] - 2.0 * 0.5f64.cos()).abs() < 1e-15);
        let mut q = Points::new();
        q.fill(&[Coord::X, Coord::Y], &[&x, &y], 2);
        for i in 0..2 {
            assert!((q.col(3)[i] - rr[i]).abs() < 1e-15);
            assert!((q.col(4)[i] - ph[i]).abs() < 1e-15);
            assert!((q.col(5)[i] - rr[i]).abs() < 1e-15);
        }
        let mut s = Points::new();
        s.fill(&[Coord::Z], &[&[-3.0]], 1);
        assert!((s.col(5)[0] - 3.0).abs() < 1e-15 && s.col(3)[0].abs() < 1e-300);
        // A spherical point at θ = π/3, φ = π/2: (0, r sin θ, r cos θ).
        let mut sp = Points::new();
        let (t, p) = (std::f64::consts::FRAC_PI_3, std::f64::consts::FRAC_PI_2);
        sp.fill(
            &[Coord::Sph, Coord::Theta, Coord::Phi],
            &[&[2.0], &[t], &[p]],
            1,
        );
        assert!(sp.col(0)[0].abs() < 1e-15 && (sp.col(1)[0] - 3f64.sqrt()).abs() < 1e-15);
        assert!((sp.col(2)[0] - 1.0).abs() < 1e-15 && (sp.col(3)[0] - 3f64.sqrt()).abs() < 1e-15);
    }
}
