//! Grids: coordinates, axes of cell edges, and the layouts we sample on.
//!
//! Owns: the list of coordinates, the grid errors, which combinations of
//! axes form a supported grid, the volume element of each layout, and which
//! background coordinate a grid point maps to. Building a single axis lives
//! in the `axis` submodule. Does not own any sampling rule
//! (see [`crate::sample`]) or physics: the grid never evaluates a background.
//!
//! Supported layouts today are the 1D lines `[R]`, `[z]`, `[r]`, the 2D polar
//! disk `[R, phi]` and the 2D Cartesian disk `[x, y]`. Meridional `[R, z]`,
//! 3D layouts and staggered (face) positions are meant to be added as new
//! [`Layout`] variants and new methods; the enums are `#[non_exhaustive]`.

mod axis;
mod embed;

use std::f64::consts::PI;

use thiserror::Error;

pub use axis::{Axis, Spacing};
pub use embed::Embedding;

/// A coordinate a grid axis can run along.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Coord {
    /// Cylindrical radius `R`.
    R,
    /// Azimuth `phi`, in radians.
    Phi,
    /// Cartesian `x`.
    X,
    /// Cartesian `y`.
    Y,
    /// Cartesian `z` (also the height of a slab or above a disk midplane).
    Z,
    /// Spherical radius, named `r`.
    Sph,
}

impl Coord {
    /// Every coordinate, in a fixed order.
    pub const ALL: [Coord; 6] = [
        Coord::R,
        Coord::Phi,
        Coord::X,
        Coord::Y,
        Coord::Z,
        Coord::Sph,
    ];

    /// The name used in files and profiles: `R`, `phi`, `x`, `y`, `z`, `r`.
    pub fn name(self) -> &'static str {
        match self {
            Coord::R => "R",
            Coord::Phi => "phi",
            Coord::X => "x",
            Coord::Y => "y",
            Coord::Z => "z",
            Coord::Sph => "r",
        }
    }

    /// The coordinate with this name (case sensitive: `R` and `r` differ).
    pub fn from_name(name: &str) -> Option<Coord> {
        Coord::ALL.into_iter().find(|c| c.name() == name)
    }

    /// Whether the coordinate is an angle (in radians) rather than a length.
    pub fn is_angle(self) -> bool {
        self == Coord::Phi
    }
}

impl std::fmt::Display for Coord {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// Errors in building an axis or a grid. Each message names the axis or file
/// and the offending value.
#[derive(Clone, Debug, Error, PartialEq)]
#[non_exhaustive]
pub enum GridError {
    /// An axis asked for zero cells.
    #[error("axis {coord}: needs at least 1 cell")]
    NoCells {
        /// The axis.
        coord: Coord,
    },
    /// An axis with fewer than two edges.
    #[error("axis {coord}: needs at least 2 edges, found {found}")]
    TooFewEdges {
        /// The axis.
        coord: Coord,
        /// The number of edges given.
        found: usize,
    },
    /// An edge that is NaN or infinite.
    #[error("axis {coord}: edge {index} is not finite ({value})")]
    NonFinite {
        /// The axis.
        coord: Coord,
        /// Index of the edge (from 0).
        index: usize,
        /// The value found.
        value: f64,
    },
    /// Edges not strictly increasing.
    #[error(
        "axis {coord}: edges must increase strictly: edge {index} ({value}) ≤ edge {} ({previous})",
        index - 1
    )]
    NotIncreasing {
        /// The axis.
        coord: Coord,
        /// Index of the edge that does not exceed its predecessor.
        index: usize,
        /// Its value.
        value: f64,
        /// The value of the edge before it.
        previous: f64,
    },
    /// A `from`/`to` range that is empty or reversed.
    #[error("axis {coord}: `to` ({to}) must exceed `from` ({from})")]
    EmptyRange {
        /// The axis.
        coord: Coord,
        /// The start given.
        from: f64,
        /// The end given.
        to: f64,
    },
    /// A logarithmic axis that does not start above zero.
    #[error("axis {coord}: logarithmic spacing needs from > 0, got from = {from}")]
    LogNonPositive {
        /// The axis.
        coord: Coord,
        /// The start given.
        from: f64,
    },
    /// An edges file that could not be read.
    #[error("edges file {path}: {message}")]
    FileRead {
        /// The file.
        path: String,
        /// What went wrong.
        message: String,
    },
    /// A bad entry in an edges file.
    #[error("edges file {path}, line {line}: {message}")]
    FileEntry {
        /// The file.
        path: String,
        /// Line number, from 1.
        line: usize,
        /// What went wrong.
        message: String,
    },
    /// A combination of axes that is not a supported grid.
    #[error(
        "unsupported grid layout [{}]; supported: [R], [z], [r], [R, phi], [x, y]",
        coords.iter().map(|c| c.name()).collect::<Vec<_>>().join(", ")
    )]
    Layout {
        /// The axes given, in order.
        coords: Vec<Coord>,
    },
    /// Edges outside the range a coordinate may take in this layout.
    #[error("axis {coord}: {message}")]
    Domain {
        /// The axis.
        coord: Coord,
        /// What is required and what was found.
        message: String,
    },
}

/// The arrangement of a grid's axes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Layout {
    /// One axis: `R` (disk midplane), `z` (slab) or `r` (sphere).
    Line(Coord),
    /// `[R, phi]`: a 2D polar disk.
    Polar,
    /// `[x, y]`: a 2D Cartesian box holding a disk.
    Cartesian,
}

/// A validated grid: axes in the order the arrays are stored (C order, the
/// last axis varies fastest).
#[derive(Clone, Debug, PartialEq)]
pub struct Grid {
    axes: Vec<Axis>,
    layout: Layout,
}

impl Grid {
    /// A grid from its axes, checking that they form a supported layout and
    /// that their ranges are valid for it (R ≥ 0 on a line, R > 0 on a polar
    /// grid, a phi range of at most 2π, r ≥ 0).
    pub fn new(axes: Vec<Axis>) -> Result<Grid, GridError> {
        for axis in &axes {
            axis.validate()?;
        }
        let coords: Vec<Coord> = axes.iter().map(|a| a.coord).collect();
        let layout = match coords.as_slice() {
            [c @ (Coord::R | Coord::Z | Coord::Sph)] => Layout::Line(*c),
            [Coord::R, Coord::Phi] => Layout::Polar,
            [Coord::X, Coord::Y] => Layout::Cartesian,
            _ => return Err(GridError::Layout { coords }),
        };
        let domain = |coord, message: String| Err(GridError::Domain { coord, message });
        for axis in &axes {
            let (lo, hi) = axis.range();
            match (layout, axis.coord) {
                (Layout::Line(_), Coord::R | Coord::Sph) if lo < 0.0 => {
                    return domain(axis.coord, format!("radii must be ≥ 0, first edge is {lo}"));
                }
                (Layout::Polar, Coord::R) if lo <= 0.0 => {
                    return domain(
                        axis.coord,
                        format!("a polar grid needs R > 0 (the axis R = 0 is singular), first edge is {lo}"),
                    );
                }
                (Layout::Polar, Coord::Phi) if hi - lo > 2.0 * PI * (1.0 + 4.0 * f64::EPSILON) => {
                    return domain(
                        axis.coord,
                        format!(
                            "the phi range must be at most 2π, found {lo} to {hi} ({} rad)",
                            hi - lo
                        ),
                    );
                }
                _ => {}
            }
        }
        Ok(Grid { axes, layout })
    }

    /// The axes, in storage order.
    pub fn axes(&self) -> &[Axis] {
        &self.axes
    }

    /// The layout.
    pub fn layout(&self) -> Layout {
        self.layout
    }

    /// Cells along each axis, in storage order.
    pub fn shape(&self) -> Vec<usize> {
        self.axes.iter().map(Axis::cells).collect()
    }

    /// The total number of cells.
    pub fn len(&self) -> usize {
        self.axes.iter().map(Axis::cells).product()
    }

    /// Whether the grid has no cells (never true for a validated grid).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The background coordinate at a point given by its coordinates in axis
    /// order: z on a slab line, r on a sphere line, R on an R line or a polar
    /// grid, and √(x² + y²) on a Cartesian grid.
    pub fn background_coordinate(&self, point: &[f64]) -> f64 {
        match self.layout {
            Layout::Line(_) | Layout::Polar => point[0],
            Layout::Cartesian => point[0].hypot(point[1]),
        }
    }

    /// The (min, max) of the background coordinate over the whole domain.
    /// On a Cartesian box the minimum is the distance from the origin to the
    /// nearest point of the box (0 if it contains the origin), the maximum
    /// the distance to the farthest corner.
    pub fn background_range(&self) -> (f64, f64) {
        match self.layout {
            Layout::Line(_) | Layout::Polar => self.axes[0].range(),
            Layout::Cartesian => {
                let nearest = |(lo, hi): (f64, f64)| if lo > 0.0 { lo } else { (-hi).max(0.0) };
                let farthest = |(lo, hi): (f64, f64)| lo.abs().max(hi.abs());
                let (x, y) = (self.axes[0].range(), self.axes[1].range());
                (nearest(x).hypot(nearest(y)), farthest(x).hypot(farthest(y)))
            }
        }
    }

    /// The volume element J at a point (coordinates in axis order), such that
    /// the volume of a cell is ∫ J d(axis 1) d(axis 2)…:
    /// `[R]` → R (cylindrical shells per unit height and angle, R dR),
    /// `[z]` → 1 (per unit area), `[r]` → r² (per unit solid angle),
    /// `[R, phi]` → R (R dR dφ), `[x, y]` → 1.
    pub fn volume_element(&self, point: &[f64]) -> f64 {
        match self.layout {
            Layout::Line(Coord::Sph) => point[0] * point[0],
            Layout::Line(Coord::R) | Layout::Polar => point[0],
            _ => 1.0,
        }
    }

    /// The factor of the volume element that belongs to axis `axis` at
    /// coordinate `x`: every layout's volume element is a product of one
    /// factor per axis (R on the R axis of `[R]` and `[R, phi]`, r² on `[r]`,
    /// 1 otherwise), so tensor rules weight each axis on its own.
    pub fn volume_factor(&self, axis: usize, x: f64) -> f64 {
        match (self.layout, axis) {
            (Layout::Line(Coord::Sph), 0) => x * x,
            (Layout::Line(Coord::R) | Layout::Polar, 0) => x,
            _ => 1.0,
        }
    }

    /// The volume element written out, e.g. `R dR dphi`.
    pub fn volume_element_name(&self) -> &'static str {
        match self.layout {
            Layout::Line(Coord::R) => "R dR",
            Layout::Line(Coord::Sph) => "r^2 dr",
            Layout::Polar => "R dR dphi",
            Layout::Cartesian => "dx dy",
            _ => "dz",
        }
    }

    /// The velocity components written for this grid, in order: the grid's
    /// own axes, plus `phi` on an `[R]` line (the rotation is the point of a
    /// disk line).
    pub fn velocity_components(&self) -> Vec<Coord> {
        match self.layout {
            Layout::Line(Coord::R) => vec![Coord::R, Coord::Phi],
            _ => self.axes.iter().map(|a| a.coord).collect(),
        }
    }

    /// The components of the azimuthal unit vector e_φ at a point, in the
    /// order of [`Grid::velocity_components`], written into `out`. Zero on
    /// slab and sphere lines, and at R = 0 on a Cartesian grid.
    pub fn azimuthal_unit(&self, point: &[f64], out: &mut [f64]) {
        match self.layout {
            Layout::Line(Coord::R) | Layout::Polar => {
                out[0] = 0.0;
                out[1] = 1.0;
            }
            Layout::Cartesian => {
                let r = point[0].hypot(point[1]);
                let (ex, ey) = if r > 0.0 {
                    (-point[1] / r, point[0] / r)
                } else {
                    (0.0, 0.0)
                };
                out[0] = ex;
                out[1] = ey;
            }
            _ => out.iter_mut().for_each(|v| *v = 0.0),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn coordinate_names_round_trip() {
        for c in Coord::ALL {
            assert_eq!(Coord::from_name(c.name()), Some(c));
        }
        assert_eq!(Coord::from_name("r"), Some(Coord::Sph));
        assert_eq!(Coord::from_name("theta"), None);
    }
    #[test]
    fn layouts_are_validated() {
        let r = |a, b| Axis::uniform(Coord::R, a, b, 4).unwrap();
        let phi = |a, b| Axis::uniform(Coord::Phi, a, b, 4).unwrap();
        assert_eq!(
            Grid::new(vec![r(0.0, 1.0)]).unwrap().layout(),
            Layout::Line(Coord::R)
        );
        assert!(Grid::new(vec![r(0.0, 1.0), phi(0.0, 1.0)])
            .unwrap_err()
            .to_string()
            .contains("R > 0"));
        let g = Grid::new(vec![r(0.5, 1.0), phi(0.0, 2.0 * PI)]).unwrap();
        assert_eq!(
            (g.layout(), g.shape(), g.len()),
            (Layout::Polar, vec![4, 4], 16)
        );
        let e = Grid::new(vec![r(0.5, 1.0), phi(0.0, 7.0)])
            .unwrap_err()
            .to_string();
        assert!(e.contains("at most 2π"), "{e}");
        let e = Grid::new(vec![phi(0.0, 1.0), r(0.5, 1.0)])
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "unsupported grid layout [phi, R]; supported: [R], [z], [r], [R, phi], [x, y]"
        );
        let sph = Axis::uniform(Coord::Sph, -1.0, 1.0, 2).unwrap();
        assert!(Grid::new(vec![sph])
            .unwrap_err()
            .to_string()
            .contains("radii must be ≥ 0"));
        assert!(Grid::new(vec![r(-1.0, 1.0)]).is_err());
    }
    #[test]
    fn background_coordinate_and_range() {
        let x = Axis::uniform(Coord::X, -1.0, 3.0, 4).unwrap();
        let y = Axis::uniform(Coord::Y, 2.0, 4.0, 4).unwrap();
        let g = Grid::new(vec![x, y]).unwrap();
        assert!((g.background_coordinate(&[3.0, 4.0]) - 5.0).abs() < 1e-15);
        let (lo, hi) = g.background_range();
        assert!(
            (lo - 2.0).abs() < 1e-15 && (hi - 5.0).abs() < 1e-15,
            "{lo} {hi}"
        );
        let x = Axis::uniform(Coord::X, -1.0, 1.0, 2).unwrap();
        let y = Axis::uniform(Coord::Y, -3.0, -2.0, 2).unwrap();
        let (lo, _) = Grid::new(vec![x, y]).unwrap().background_range();
        assert!((lo - 2.0).abs() < 1e-15, "{lo}");
    }
    #[test]
    fn volume_elements() {
        let line = |c| Grid::new(vec![Axis::uniform(c, 0.0, 1.0, 2).unwrap()]).unwrap();
        assert!((line(Coord::R).volume_element(&[2.0]) - 2.0).abs() < 1e-15);
        assert!((line(Coord::Sph).volume_element(&[2.0]) - 4.0).abs() < 1e-15);
        assert!((line(Coord::Z).volume_element(&[2.0]) - 1.0).abs() < 1e-15);
        let mut e = [0.0; 2];
        let x = Axis::uniform(Coord::X, -1.0, 1.0, 2).unwrap();
        let cart = Grid::new(vec![
            x.clone(),
            Axis {
                coord: Coord::Y,
                ..x
            },
        ])
        .unwrap();
        cart.azimuthal_unit(&[0.0, 2.0], &mut e);
        assert!((e[0] + 1.0).abs() < 1e-15 && e[1].abs() < 1e-15, "{e:?}");
        assert_eq!(
            line(Coord::R).velocity_components(),
            vec![Coord::R, Coord::Phi]
        );
    }
}
