//! Grids: coordinates, axes of cell edges, and the layouts we sample on.
//!
//! Owns: the list of coordinates, how an axis is built (uniform, logarithmic,
//! explicit or read from a file) and validated, which combinations of axes
//! form a supported grid, the volume element of each layout, and which
//! background coordinate a grid point maps to. Does not own any sampling rule
//! (see [`crate::sample`]) or physics: the grid never evaluates a background.
//!
//! Supported layouts today are the 1D lines `[R]`, `[z]`, `[r]`, the 2D polar
//! disk `[R, phi]` and the 2D Cartesian disk `[x, y]`. Meridional `[R, z]`,
//! 3D layouts and staggered (face) positions are meant to be added as new
//! [`Layout`] variants and new methods; the enums are `#[non_exhaustive]`.

use std::f64::consts::PI;
use std::path::Path;

use thiserror::Error;

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

/// How the edges of an axis were chosen (recorded for the user; the edges
/// themselves are the truth).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Spacing {
    /// Equal cell widths.
    Uniform,
    /// Equal ratios of successive edges.
    Log,
    /// Edges given one by one (inline or from a file).
    Explicit,
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

/// One axis of a grid: a coordinate and the edges of its cells.
#[derive(Clone, Debug, PartialEq)]
pub struct Axis {
    /// The coordinate the axis runs along.
    pub coord: Coord,
    /// Cell edges, strictly increasing; `cells() + 1` of them.
    pub edges: Vec<f64>,
    /// How the edges were chosen.
    pub spacing: Spacing,
}

impl Axis {
    /// `cells` equal cells from `from` to `to`.
    pub fn uniform(coord: Coord, from: f64, to: f64, cells: usize) -> Result<Axis, GridError> {
        if cells == 0 {
            return Err(GridError::NoCells { coord });
        }
        let h = (to - from) / cells as f64;
        let mut edges: Vec<f64> = (0..=cells).map(|i| from + h * i as f64).collect();
        edges[cells] = to; // the last edge exactly as given
        Axis::checked(coord, edges, Spacing::Uniform)
    }

    /// `cells` cells from `from` to `to` with a constant ratio between
    /// successive edges; needs `from > 0`.
    pub fn log(coord: Coord, from: f64, to: f64, cells: usize) -> Result<Axis, GridError> {
        if cells == 0 {
            return Err(GridError::NoCells { coord });
        }
        if from.is_nan() || from <= 0.0 {
            return Err(GridError::LogNonPositive { coord, from });
        }
        let step = (to / from).ln() / cells as f64;
        let mut edges: Vec<f64> = (0..=cells)
            .map(|i| from * (step * i as f64).exp())
            .collect();
        edges[0] = from;
        edges[cells] = to;
        Axis::checked(coord, edges, Spacing::Log)
    }

    /// Edges given explicitly: at least 2, finite, strictly increasing.
    pub fn explicit(coord: Coord, edges: Vec<f64>) -> Result<Axis, GridError> {
        Axis::checked(coord, edges, Spacing::Explicit)
    }

    /// Edges read from a text file: numbers separated by white space or new
    /// lines; everything after `#` on a line is a comment.
    pub fn from_edges_file(coord: Coord, path: &Path) -> Result<Axis, GridError> {
        let shown = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| GridError::FileRead {
            path: shown.clone(),
            message: e.to_string(),
        })?;
        let mut edges = Vec::new();
        for (n, line) in text.lines().enumerate() {
            let content = line.split('#').next().unwrap_or("");
            for word in content.split_whitespace() {
                let value: f64 = word.parse().map_err(|_| GridError::FileEntry {
                    path: shown.clone(),
                    line: n + 1,
                    message: format!("`{word}` is not a number"),
                })?;
                if !value.is_finite() {
                    return Err(GridError::FileEntry {
                        path: shown.clone(),
                        line: n + 1,
                        message: format!("edge `{word}` is not finite"),
                    });
                }
                edges.push(value);
            }
        }
        Axis::explicit(coord, edges).map_err(|e| match e {
            GridError::TooFewEdges { .. } | GridError::NotIncreasing { .. } => {
                GridError::FileRead {
                    path: shown,
                    message: e.to_string(),
                }
            }
            other => other,
        })
    }

    fn checked(coord: Coord, edges: Vec<f64>, spacing: Spacing) -> Result<Axis, GridError> {
        let axis = Axis {
            coord,
            edges,
            spacing,
        };
        axis.validate()?;
        Ok(axis)
    }

    /// Checks that the edges are at least 2, finite and strictly increasing.
    pub fn validate(&self) -> Result<(), GridError> {
        let coord = self.coord;
        if self.edges.len() < 2 {
            return Err(GridError::TooFewEdges {
                coord,
                found: self.edges.len(),
            });
        }
        for (index, &value) in self.edges.iter().enumerate() {
            if !value.is_finite() {
                return Err(GridError::NonFinite {
                    coord,
                    index,
                    value,
                });
            }
            if index > 0 {
                let previous = self.edges[index - 1];
                if value <= previous {
                    return Err(GridError::NotIncreasing {
                        coord,
                        index,
                        value,
                        previous,
                    });
                }
            }
        }
        Ok(())
    }

    /// The number of cells.
    pub fn cells(&self) -> usize {
        self.edges.len() - 1
    }

    /// Cell centres, the arithmetic midpoints of the edges (also on
    /// logarithmic axes, where this is not the geometric centre).
    pub fn centers(&self) -> Vec<f64> {
        self.edges.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect()
    }

    /// The first and last edge.
    pub fn range(&self) -> (f64, f64) {
        (self.edges[0], self.edges[self.edges.len() - 1])
    }
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
    fn uniform_and_log_axes() {
        let a = Axis::uniform(Coord::Z, -1.0, 1.0, 4).unwrap();
        assert_eq!(a.cells(), 4);
        let c = a.centers();
        assert!((c[0] + 0.75).abs() < 1e-15 && (c[3] - 0.75).abs() < 1e-15);
        let l = Axis::log(Coord::R, 1.0, 100.0, 2).unwrap();
        assert!((l.edges[1] - 10.0).abs() < 1e-13);
        assert!((l.centers()[0] - 5.5).abs() < 1e-13, "arithmetic midpoint");
        assert_eq!(
            Axis::log(Coord::R, 0.0, 1.0, 3),
            Err(GridError::LogNonPositive {
                coord: Coord::R,
                from: 0.0
            })
        );
        assert_eq!(
            Axis::uniform(Coord::Z, 0.0, 1.0, 0),
            Err(GridError::NoCells { coord: Coord::Z })
        );
    }

    #[test]
    fn explicit_edges_are_checked() {
        let e = Axis::explicit(Coord::Z, vec![0.0, 1.0, 2.0, 2.5, 2.5]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "axis z: edges must increase strictly: edge 4 (2.5) ≤ edge 3 (2.5)"
        );
        let e = Axis::explicit(Coord::Z, vec![0.0, f64::NAN]).unwrap_err();
        assert!(e.to_string().contains("edge 1 is not finite"), "{e}");
        let e = Axis::explicit(Coord::Z, vec![1.0]).unwrap_err();
        assert_eq!(
            e,
            GridError::TooFewEdges {
                coord: Coord::Z,
                found: 1
            }
        );
    }

    #[test]
    fn edges_file_with_comments_and_errors() {
        let dir = tempfile::tempdir().unwrap();
        let good = dir.path().join("edges.txt");
        std::fs::write(&good, "# radii\n0.5 1.0\n2.0 # outer\n\n4.0\n").unwrap();
        let a = Axis::from_edges_file(Coord::R, &good).unwrap();
        assert_eq!(a.cells(), 3);
        assert_eq!(a.spacing, Spacing::Explicit);
        let bad = dir.path().join("bad.txt");
        std::fs::write(&bad, "1\n2\nthree\n").unwrap();
        let e = Axis::from_edges_file(Coord::R, &bad)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("bad.txt, line 3: `three` is not a number"),
            "{e}"
        );
        let missing = Axis::from_edges_file(Coord::R, &dir.path().join("none.txt")).unwrap_err();
        assert!(matches!(missing, GridError::FileRead { .. }));
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
