//! How a grid sits in a background's frame: the map from a grid point to the
//! frame's coordinates, the rotation of the frame's vectors into the grid's
//! own components, and which grid axes a state can vary along.
//!
//! Owns: those three, for every (layout, frame) pair that fits, over blocks
//! of points (plain slice loops). Does not own the background or the
//! sampling rule.
//!
//! | layout | frame | frame coordinates | grid components |
//! |---|---|---|---|
//! | `[z]` | slab | s = z | z |
//! | `[x, y]`, `[x, z]`, `[x, y, z]` | slab | s = the slab axis | the grid's axes (frame vectors: across the layers, then the other axes in order) |
//! | `[r]`, `[r, theta]`, `[r, theta, phi]` | spherical | r | r (theta, phi) |
//! | `[x, y]`, `[x, z]`, `[x, y, z]` | spherical | r = \|x\| | the grid's axes |
//! | `[R]` | axisymmetric | (R, 0) | R, phi |
//! | `[R, phi]` | axisymmetric | (R, 0) | R, phi |
//! | `[x, y]` | axisymmetric | (√(x² + y²), 0) | x, y |
//! | `[R, z]` | axisymmetric | (R, z) | R, z, phi |
//! | `[R, phi, z]` | axisymmetric | (R, z) | R, phi, z |
//! | `[r, theta]`, `[r, theta, phi]` | axisymmetric | (r sin θ, r cos θ) | r, theta, phi |
//! | `[x, y, z]` | axisymmetric | (√(x² + y²), z) | x, y, z |

use super::{Coord, Grid, Layout};
use crate::background::Frame;

/// A grid placed in a frame. Built by [`Grid::embedding`].
#[derive(Clone, Debug, PartialEq)]
pub struct Embedding {
    layout: Layout,
    frame: Frame,
    components: Vec<Coord>,
    /// The slab axis, as an index of the natural order.
    slab_axis: usize,
    /// For each axis of the natural order, the stored axis holding it (see
    /// [`Grid::natural_order`]): the maps below work in the natural order
    /// and translate at their edges.
    natural: Vec<usize>,
}

impl Grid {
    /// The grid placed in `frame`, or None when the frame cannot be sampled
    /// on this layout (a slab on an R line, say).
    pub fn embedding(&self, frame: Frame) -> Option<Embedding> {
        use Layout::*;
        let fits = match frame {
            Frame::Slab => matches!(self.layout(), Line(Coord::Z) | Cartesian | Section | Box),
            Frame::Spherical => matches!(
                self.layout(),
                Line(Coord::Sph) | SphericalMeridional | Spherical | Cartesian | Section | Box
            ),
            Frame::Axisymmetric => matches!(
                self.layout(),
                Line(Coord::R)
                    | Polar
                    | Cartesian
                    | Meridional
                    | SphericalMeridional
                    | Cylindrical
                    | Spherical
                    | Box
            ),
        };
        fits.then(|| Embedding {
            layout: self.layout(),
            frame,
            components: self.velocity_components(),
            slab_axis: self
                .natural_order()
                .iter()
                .position(|s| *s == self.slab_axis())
                .unwrap_or(0),
            natural: self.natural_order().to_vec(),
        })
    }
}

impl Embedding {
    /// The frame.
    pub fn frame(&self) -> Frame {
        self.frame
    }

    /// The grid's velocity components, in the order vectors are written.
    pub fn components(&self) -> &[Coord] {
        &self.components
    }

    /// For each grid axis, whether the state seen on the grid can vary along
    /// it, given which frame coordinates the background depends on. Along an
    /// axis that is not active every value is the same (φ on a polar grid
    /// holding an axisymmetric state, x and y in a box holding a slab along
    /// z), so a sampler computes it once and broadcasts it.
    pub fn active_axes(&self, depends: [bool; 2]) -> Vec<bool> {
        let natural = self.natural_active(depends);
        let mut out = natural.clone();
        for (k, s) in self.natural.iter().enumerate() {
            out[*s] = natural[k];
        }
        out
    }

    fn natural_active(&self, depends: [bool; 2]) -> Vec<bool> {
        use Layout::*;
        let nd = self.axis_count();
        match (self.frame, self.layout) {
            (_, Line(_)) => vec![true],
            (Frame::Slab, _) => (0..nd).map(|a| a == self.slab_axis).collect(),
            // r alone: angles are broadcast (the state is at rest).
            (Frame::Spherical, SphericalMeridional | Spherical) => {
                (0..nd).map(|a| a == 0).collect()
            }
            (Frame::Spherical, _) => vec![true; nd],
            // (v_R, v_φ) are the polar components themselves: nothing
            // depends on φ.
            (_, Polar) => vec![depends[0], false],
            (_, Meridional) => vec![depends[0], depends[1]],
            (_, Cylindrical) => vec![depends[0], false, depends[1]],
            // r and θ both move R, z and the rotation of (e_R, e_z).
            (_, SphericalMeridional) => vec![true, true],
            (_, Spherical) => vec![true, true, false],
            // Every cell has its own R, and the rotation of e_φ into (x, y)
            // depends on both.
            (_, Box) => vec![true, true, depends[1]],
            _ => vec![true; nd],
        }
    }

    fn axis_count(&self) -> usize {
        match self.layout {
            Layout::Line(_) => 1,
            Layout::Cylindrical | Layout::Spherical | Layout::Box => 3,
            _ => 2,
        }
    }

    /// The frame coordinates of `n` points given by their grid coordinates
    /// (`grid[a]` the coordinate along axis `a`, each of length ≥ n),
    /// written into `out[k][..n]` for each frame coordinate k.
    pub fn to_frame(&self, grid: &[&[f64]], n: usize, out: &mut [Vec<f64>]) {
        use Layout::*;
        let natural: Vec<&[f64]> = self.natural.iter().map(|s| grid[*s]).collect();
        let grid = &natural[..];
        let copy = |out: &mut Vec<f64>, from: &[f64]| out[..n].copy_from_slice(&from[..n]);
        match (self.frame, self.layout) {
            (_, Line(_)) => copy(&mut out[0], grid[0]),
            (Frame::Slab, _) => copy(&mut out[0], grid[self.slab_axis]),
            (Frame::Spherical, SphericalMeridional | Spherical) => copy(&mut out[0], grid[0]),
            (Frame::Spherical, _) => {
                for i in 0..n {
                    let mut r = 0.0f64;
                    for g in grid {
                        r = r.hypot(g[i]);
                    }
                    out[0][i] = r;
                }
            }
            (_, Polar | Meridional | Cylindrical) => copy(&mut out[0], grid[0]),
            (_, SphericalMeridional | Spherical) => {
                let (r, t) = (&grid[0][..n], &grid[1][..n]);
                for i in 0..n {
                    let (s, c) = t[i].sin_cos();
                    out[0][i] = r[i] * s;
                    out[1][i] = r[i] * c;
                }
            }
            _ => {
                let (x, y) = (&grid[0][..n], &grid[1][..n]);
                for ((r, x), y) in out[0][..n].iter_mut().zip(x).zip(y) {
                    *r = (x * x + y * y).sqrt();
                }
            }
        }
        if self.frame == Frame::Axisymmetric {
            match self.layout {
                Meridional => copy(&mut out[1], grid[1]),
                Cylindrical | Box => copy(&mut out[1], grid[2]),
                SphericalMeridional | Spherical => {}
                _ => out[1][..n].fill(0.0),
            }
        }
    }

    /// The grid components of `n` frame vectors `v` (one slice per frame
    /// basis vector) at points given by their grid coordinates and their
    /// frame coordinates (from [`Embedding::to_frame`]), written into
    /// `out[c][..n]` for each component of [`Embedding::components`]. On a
    /// Cartesian grid e_R = (x, y)/R and e_φ = (−y, x)/R, both taken as zero
    /// on the axis R = 0 (and e_r = x/|x| zero at the centre); on a
    /// spherical grid e_R = sin θ e_r + cos θ e_θ, e_z = cos θ e_r − sin θ e_θ.
    pub fn project(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        v: &[Vec<f64>; 3],
        n: usize,
        out: &mut [Vec<f64>],
    ) {
        use Layout::*;
        let nc = self.components.len();
        if let (Frame::Spherical, Cartesian | Section | Box) = (self.frame, self.layout) {
            // Works by coordinate name, in the stored order.
            return self.project_spherical_cartesian(grid, frame, v, n, out);
        }
        let natural: Vec<&[f64]> = self.natural.iter().map(|s| grid[*s]).collect();
        let grid = &natural[..];
        // The stored components moved into the natural order and back (the
        // buffers are swapped, not copied); components past the grid's axes
        // (v_φ on a line or a meridional plane) stay where they are.
        let permuted = !self.natural.iter().enumerate().all(|(k, s)| k == *s);
        if permuted {
            self.reorder(out, true);
        }
        self.project_natural(grid, frame, v, n, nc, out);
        if permuted {
            self.reorder(out, false);
        }
    }

    /// Moves the stored components of `out` into the natural order
    /// (`to_natural`) or back.
    fn reorder(&self, out: &mut [Vec<f64>], to_natural: bool) {
        let nd = self.natural.len();
        let taken: Vec<Vec<f64>> = out[..nd].iter_mut().map(std::mem::take).collect();
        for (k, v) in taken.into_iter().enumerate() {
            let to = if to_natural {
                self.natural.iter().position(|s| *s == k).unwrap_or(k)
            } else {
                self.natural[k]
            };
            out[to] = v;
        }
    }

    fn project_natural(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        v: &[Vec<f64>; 3],
        n: usize,
        nc: usize,
        out: &mut [Vec<f64>],
    ) {
        use Layout::*;
        match (self.frame, self.layout) {
            (Frame::Slab, _) => {
                // v[0] across the layers, v[1] and v[2] along the grid's
                // other axes in order (a slab at rest has them zero).
                let mut other = 1;
                for (c, o) in out[..nc].iter_mut().enumerate() {
                    if c == self.slab_axis {
                        o[..n].copy_from_slice(&v[0][..n]);
                    } else {
                        o[..n].copy_from_slice(&v[other][..n]);
                        other += 1;
                    }
                }
            }
            (Frame::Spherical, Line(_) | SphericalMeridional | Spherical) => {
                for (c, o) in out[..nc].iter_mut().enumerate() {
                    o[..n].copy_from_slice(&v[c][..n]);
                }
            }
            (Frame::Spherical, _) => self.project_spherical_cartesian(grid, frame, v, n, out),
            (_, Line(Coord::R) | Polar) => {
                out[0][..n].copy_from_slice(&v[0][..n]);
                out[1][..n].copy_from_slice(&v[1][..n]);
            }
            (_, Meridional) => {
                out[0][..n].copy_from_slice(&v[0][..n]);
                out[1][..n].copy_from_slice(&v[2][..n]);
                out[2][..n].copy_from_slice(&v[1][..n]);
            }
            (_, Cylindrical) => {
                for (c, o) in out[..3].iter_mut().enumerate() {
                    o[..n].copy_from_slice(&v[c][..n]);
                }
            }
            (_, SphericalMeridional | Spherical) => {
                let t = &grid[1][..n];
                for i in 0..n {
                    let (s, c) = t[i].sin_cos();
                    let (vr, vp, vz) = (v[0][i], v[1][i], v[2][i]);
                    out[0][i] = vr * s + vz * c;
                    out[1][i] = vr * c - vz * s;
                    out[2][i] = vp;
                }
            }
            _ => {
                let (x, y, rr) = (&grid[0][..n], &grid[1][..n], &frame[0][..n]);
                for i in 0..n {
                    let r = rr[i];
                    let (c, s) = if r > 0.0 {
                        (x[i] / r, y[i] / r)
                    } else {
                        (0.0, 0.0)
                    };
                    let (vr, vp) = (v[0][i], v[1][i]);
                    out[0][i] = vr * c + vp * -s;
                    out[1][i] = vr * s + vp * c;
                }
                if self.layout == Box {
                    out[2][..n].copy_from_slice(&v[2][..n]);
                }
            }
        }
    }

    /// A spherical frame's (e_r, e_θ, e_φ) vectors on a Cartesian grid: the
    /// grid's axes are a subset of (x, y, z), the missing ones at 0.
    fn project_spherical_cartesian(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        v: &[Vec<f64>; 3],
        n: usize,
        out: &mut [Vec<f64>],
    ) {
        let at = |c: Coord, i: usize| {
            self.components
                .iter()
                .position(|k| *k == c)
                .map_or(0.0, |a| grid[a][i])
        };
        for i in 0..n {
            let (x, y, z, r) = (
                at(Coord::X, i),
                at(Coord::Y, i),
                at(Coord::Z, i),
                frame[0][i],
            );
            let rc = x.hypot(y);
            let (er, et, ep) = if r > 0.0 {
                let (st, ct) = (rc / r, z / r);
                let (cp, sp) = if rc > 0.0 {
                    (x / rc, y / rc)
                } else {
                    (1.0, 0.0)
                };
                (
                    [x / r, y / r, z / r],
                    [ct * cp, ct * sp, -st],
                    [-sp, cp, 0.0],
                )
            } else {
                ([0.0; 3], [0.0; 3], [0.0; 3])
            };
            for (c, k) in self.components.iter().enumerate() {
                let j = match k {
                    Coord::X => 0,
                    Coord::Y => 1,
                    _ => 2,
                };
                out[c][i] = v[0][i] * er[j] + v[1][i] * et[j] + v[2][i] * ep[j];
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Axis;

    #[test]
    fn cartesian_rotation_of_the_azimuthal_vector() {
        let x = Axis::uniform(Coord::X, -1.0, 1.0, 2).unwrap();
        let y = Axis {
            coord: Coord::Y,
            ..x.clone()
        };
        let g = Grid::new(vec![x, y]).unwrap();
        let e = g.embedding(Frame::Axisymmetric).unwrap();
        let (xs, ys) = ([3.0, 0.0], [4.0, 0.0]);
        let mut f = vec![vec![0.0; 2], vec![0.0; 2]];
        e.to_frame(&[&xs, &ys], 2, &mut f);
        assert!((f[0][0] - 5.0).abs() < 1e-15 && f[1][0].abs() < 1e-300);
        let v = [vec![0.0, 0.0], vec![1.0, 1.0], vec![0.0, 0.0]];
        let mut out = vec![vec![0.0; 2], vec![0.0; 2]];
        let fr: Vec<&[f64]> = f.iter().map(|v| &v[..]).collect();
        e.project(&[&xs, &ys], &fr, &v, 2, &mut out);
        // e_φ at (3, 4) is (−4, 3)/5; on the axis it is taken as zero.
        assert!((out[0][0] + 0.8).abs() < 1e-15 && (out[1][0] - 0.6).abs() < 1e-15);
        assert!(out[0][1].abs() < 1e-300 && out[1][1].abs() < 1e-300);
        assert_eq!(e.active_axes([true, false]), vec![true, true]);
        // Issue 7 lets a slab stand in a Cartesian box (along y here, the
        // last axis); a polar grid still cannot hold one.
        assert_eq!(
            g.embedding(Frame::Slab).unwrap().active_axes([true, false]),
            vec![false, true]
        );
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 3).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 4).unwrap();
        assert!(Grid::new(vec![r, phi])
            .unwrap()
            .embedding(Frame::Slab)
            .is_none());
    }

    fn project_one(g: &Grid, frame: Frame, point: &[f64], v: [f64; 3]) -> (Vec<f64>, Vec<f64>) {
        let e = g.embedding(frame).unwrap();
        let cols: Vec<Vec<f64>> = point.iter().map(|x| vec![*x]).collect();
        let grid: Vec<&[f64]> = cols.iter().map(|c| &c[..]).collect();
        let mut f = vec![vec![0.0], vec![0.0]];
        e.to_frame(&grid, 1, &mut f);
        let fr: Vec<&[f64]> = f.iter().map(|v| &v[..]).collect();
        let v = [vec![v[0]], vec![v[1]], vec![v[2]]];
        let mut out = vec![vec![0.0]; e.components().len()];
        e.project(&grid, &fr, &v, 1, &mut out);
        (
            f.iter().map(|c| c[0]).collect(),
            out.iter().map(|c| c[0]).collect(),
        )
    }

    fn close(a: &[f64], b: &[f64]) -> bool {
        a.len() == b.len() && a.iter().zip(b).all(|(a, b)| (a - b).abs() < 1e-14)
    }

    #[test]
    fn three_dimensional_embeddings() {
        let ax = |c, a, b| Axis::uniform(c, a, b, 2).unwrap();
        let pi = std::f64::consts::PI;
        // Spherical grid holding a disk: R = r sin θ, z = r cos θ, and
        // (v_R, v_φ, v_z) = (1, 2, 3) at θ = π/6 gives v_r = sin θ + 3 cos θ,
        // v_θ = cos θ − 3 sin θ (the spherical unit vectors, e.g. Arfken &
        // Weber, Mathematical Methods for Physicists, §2.5).
        let sph = Grid::new(vec![
            ax(Coord::Sph, 1.0, 3.0),
            ax(Coord::Theta, 0.0, pi),
            ax(Coord::Phi, 0.0, 1.0),
        ])
        .unwrap();
        let t = pi / 6.0;
        let (f, v) = project_one(&sph, Frame::Axisymmetric, &[2.0, t, 0.3], [1.0, 2.0, 3.0]);
        assert!(close(&f, &[2.0 * t.sin(), 2.0 * t.cos()]), "{f:?}");
        assert!(
            close(&v, &[t.sin() + 3.0 * t.cos(), t.cos() - 3.0 * t.sin(), 2.0]),
            "{v:?}"
        );
        assert_eq!(
            sph.embedding(Frame::Axisymmetric)
                .unwrap()
                .active_axes([true, true]),
            vec![true, true, false]
        );
        assert_eq!(
            sph.embedding(Frame::Spherical)
                .unwrap()
                .active_axes([true, false]),
            vec![true, false, false]
        );
        // Cartesian box holding a disk: e_φ = (−y, x, 0)/R, e_z = e_z.
        let boxed = Grid::new(vec![
            ax(Coord::X, -1.0, 1.0),
            ax(Coord::Y, -1.0, 1.0),
            ax(Coord::Z, -1.0, 1.0),
        ])
        .unwrap();
        let (f, v) = project_one(
            &boxed,
            Frame::Axisymmetric,
            &[3.0, 4.0, -0.5],
            [0.0, 1.0, 2.0],
        );
        assert!(
            close(&f, &[5.0, -0.5]) && close(&v, &[-0.8, 0.6, 2.0]),
            "{f:?} {v:?}"
        );
        assert_eq!(
            boxed
                .embedding(Frame::Axisymmetric)
                .unwrap()
                .active_axes([true, false]),
            vec![true, true, false]
        );
        // A sphere in the box: r = |x|, v_r e_r = (x, y, z)/r.
        let (f, v) = project_one(&boxed, Frame::Spherical, &[1.0, 2.0, 2.0], [3.0, 0.0, 0.0]);
        assert!(
            close(&f[..1], &[3.0]) && close(&v, &[1.0, 2.0, 2.0]),
            "{f:?} {v:?}"
        );
        // A slab along y in the box.
        let along_y = boxed.clone().stratified_along(Coord::Y).unwrap();
        let (f, v) = project_one(&along_y, Frame::Slab, &[1.0, 2.0, 3.0], [5.0, 0.0, 0.0]);
        assert!(
            close(&f[..1], &[2.0]) && close(&v, &[0.0, 5.0, 0.0]),
            "{f:?} {v:?}"
        );
        assert!(boxed.stratified_along(Coord::R).is_err());
        // Meridional and cylindrical grids: (R, z) as they are; v_φ last on
        // [R, z], in the middle on [R, phi, z].
        let mer = Grid::new(vec![ax(Coord::R, 0.0, 2.0), ax(Coord::Z, -1.0, 1.0)]).unwrap();
        let (f, v) = project_one(&mer, Frame::Axisymmetric, &[1.5, 0.25], [1.0, 2.0, 3.0]);
        assert!(
            close(&f, &[1.5, 0.25]) && close(&v, &[1.0, 3.0, 2.0]),
            "{f:?} {v:?}"
        );
        assert_eq!(
            mer.velocity_components(),
            vec![Coord::R, Coord::Z, Coord::Phi]
        );
        let cyl = Grid::new(vec![
            ax(Coord::R, 0.5, 2.0),
            ax(Coord::Phi, 0.0, 1.0),
            ax(Coord::Z, -1.0, 1.0),
        ])
        .unwrap();
        let (f, v) = project_one(
            &cyl,
            Frame::Axisymmetric,
            &[1.5, 0.3, 0.25],
            [1.0, 2.0, 3.0],
        );
        assert!(
            close(&f, &[1.5, 0.25]) && close(&v, &[1.0, 2.0, 3.0]),
            "{f:?} {v:?}"
        );
        assert_eq!(
            cyl.embedding(Frame::Axisymmetric)
                .unwrap()
                .active_axes([true, true]),
            vec![true, false, true]
        );
    }

    #[test]
    fn a_slab_carries_horizontal_vectors_on_the_other_axes() {
        // The slab frame's vectors: across the layers, then the grid's
        // other axes in order (a perturbation's horizontal velocity).
        let ax = |c, a, b| Axis::uniform(c, a, b, 2).unwrap();
        let boxed = Grid::new(vec![
            ax(Coord::X, -1.0, 1.0),
            ax(Coord::Y, -1.0, 1.0),
            ax(Coord::Z, 0.0, 1.0),
        ])
        .unwrap();
        let (_, v) = project_one(&boxed, Frame::Slab, &[0.5, 0.5, 0.5], [1.0, 2.0, 3.0]);
        assert!(close(&v, &[2.0, 3.0, 1.0]), "{v:?}");
        let along_y = boxed.stratified_along(Coord::Y).unwrap();
        let (_, v) = project_one(&along_y, Frame::Slab, &[0.5, 0.5, 0.5], [1.0, 2.0, 3.0]);
        assert!(close(&v, &[2.0, 1.0, 3.0]), "{v:?}");
        let section = Grid::new(vec![ax(Coord::X, 0.0, 1.0), ax(Coord::Z, 0.0, 1.0)]).unwrap();
        let (_, v) = project_one(&section, Frame::Slab, &[0.5, 0.5], [1.0, 2.0, 0.0]);
        assert!(close(&v, &[2.0, 1.0]), "{v:?}");
    }

    #[test]
    fn a_nested_box_maps_and_projects_by_coordinate() {
        // The box of `three_dimensional_embeddings` stored [z, y, x]: the
        // same frame coordinates and components, each at its stored place.
        let ax = |c, a, b| Axis::uniform(c, a, b, 2).unwrap();
        let boxed = Grid::new(vec![
            ax(Coord::X, -1.0, 1.0),
            ax(Coord::Y, -1.0, 1.0),
            ax(Coord::Z, -1.0, 1.0),
        ])
        .unwrap()
        .with_nesting(&[Coord::Z, Coord::Y, Coord::X])
        .unwrap();
        assert_eq!(boxed.natural_order(), &[2, 1, 0]);
        assert_eq!(
            boxed.velocity_components(),
            vec![Coord::Z, Coord::Y, Coord::X]
        );
        let (f, v) = project_one(
            &boxed,
            Frame::Axisymmetric,
            &[-0.5, 4.0, 3.0],
            [0.0, 1.0, 2.0],
        );
        assert!(
            close(&f, &[5.0, -0.5]) && close(&v, &[2.0, 0.6, -0.8]),
            "{f:?} {v:?}"
        );
        assert_eq!(
            boxed
                .embedding(Frame::Axisymmetric)
                .unwrap()
                .active_axes([true, false]),
            vec![false, true, true]
        );
        let (f, v) = project_one(&boxed, Frame::Spherical, &[2.0, 2.0, 1.0], [3.0, 0.0, 0.0]);
        assert!(
            close(&f[..1], &[3.0]) && close(&v, &[2.0, 2.0, 1.0]),
            "{f:?} {v:?}"
        );
        // A slab across z: the other axes in the natural order (x, y).
        let (_, v) = project_one(&boxed, Frame::Slab, &[0.5, 0.5, 0.5], [1.0, 2.0, 3.0]);
        assert!(close(&v, &[1.0, 3.0, 2.0]), "{v:?}");
        let e = boxed
            .clone()
            .with_nesting(&[Coord::Z, Coord::Z, Coord::X])
            .unwrap_err();
        assert_eq!(e.to_string(), "`z` is listed twice");
    }

    #[test]
    fn polar_grids_broadcast_over_phi() {
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 3).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 4).unwrap();
        let g = Grid::new(vec![r, phi]).unwrap();
        let e = g.embedding(Frame::Axisymmetric).unwrap();
        assert_eq!(e.active_axes([true, false]), vec![true, false]);
        assert_eq!(e.components(), &[Coord::R, Coord::Phi]);
    }
}
