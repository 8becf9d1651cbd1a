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
//! | `[r]` | spherical | r | r |
//! | `[R]` | axisymmetric | (R, 0) | R, phi |
//! | `[R, phi]` | axisymmetric | (R, 0) | R, phi |
//! | `[x, y]` | axisymmetric | (√(x² + y²), 0) | x, y |

use super::{Coord, Grid, Layout};
use crate::background::Frame;

/// A grid placed in a frame. Built by [`Grid::embedding`].
#[derive(Clone, Debug, PartialEq)]
pub struct Embedding {
    layout: Layout,
    frame: Frame,
    components: Vec<Coord>,
}

impl Grid {
    /// The grid placed in `frame`, or None when the frame cannot be sampled
    /// on this layout (a slab on an R line, say).
    pub fn embedding(&self, frame: Frame) -> Option<Embedding> {
        let fits = matches!(
            (self.layout(), frame),
            (Layout::Line(Coord::Z), Frame::Slab)
                | (Layout::Line(Coord::Sph), Frame::Spherical)
                | (
                    Layout::Line(Coord::R) | Layout::Polar | Layout::Cartesian,
                    Frame::Axisymmetric
                )
        );
        fits.then(|| Embedding {
            layout: self.layout(),
            frame,
            components: self.velocity_components(),
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
    /// holding an axisymmetric state), so a sampler computes it once and
    /// broadcasts it.
    pub fn active_axes(&self, depends: [bool; 2]) -> Vec<bool> {
        match self.layout {
            Layout::Line(_) => vec![true],
            // (v_R, v_φ) are the polar components themselves: nothing
            // depends on φ.
            Layout::Polar => vec![depends[0], false],
            // Every cell has its own R, and the rotation of e_φ into (x, y)
            // depends on both.
            Layout::Cartesian => vec![true, true],
        }
    }

    /// The frame coordinates of `n` points given by their grid coordinates
    /// (`grid[a]` the coordinate along axis `a`, each of length ≥ n),
    /// written into `out[k][..n]` for each frame coordinate k.
    pub fn to_frame(&self, grid: &[&[f64]], n: usize, out: &mut [Vec<f64>]) {
        match self.layout {
            Layout::Line(_) | Layout::Polar => {
                out[0][..n].copy_from_slice(&grid[0][..n]);
            }
            Layout::Cartesian => {
                let (x, y) = (&grid[0][..n], &grid[1][..n]);
                for ((r, x), y) in out[0][..n].iter_mut().zip(x).zip(y) {
                    *r = (x * x + y * y).sqrt();
                }
            }
        }
        if self.frame == Frame::Axisymmetric {
            out[1][..n].fill(0.0);
        }
    }

    /// The grid components of `n` frame vectors `v` (one slice per frame
    /// basis vector) at points given by their grid coordinates and their
    /// frame coordinates (from [`Embedding::to_frame`]), written into
    /// `out[c][..n]` for each component of [`Embedding::components`]. On a
    /// Cartesian grid e_R = (x, y)/R and e_φ = (−y, x)/R, both taken as zero
    /// on the axis R = 0.
    pub fn project(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        v: &[Vec<f64>; 3],
        n: usize,
        out: &mut [Vec<f64>],
    ) {
        match (self.layout, self.frame) {
            (Layout::Line(Coord::R) | Layout::Polar, _) => {
                out[0][..n].copy_from_slice(&v[0][..n]);
                out[1][..n].copy_from_slice(&v[1][..n]);
            }
            (Layout::Cartesian, _) => {
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
            }
            _ => out[0][..n].copy_from_slice(&v[0][..n]),
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
        assert!(g.embedding(Frame::Slab).is_none());
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
