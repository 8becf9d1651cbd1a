//! Grids: coordinates, axes of cell edges, and the layouts we sample on.
//!
//! Owns: the list of coordinates, the grid errors, which combinations of
//! axes form a supported grid, the volume element of each layout, and which
//! background coordinate a grid point maps to. Building a single axis lives
//! in the `axis` submodule. Does not own any sampling rule
//! (see [`crate::sample`]) or physics: the grid never evaluates a background.
//!
//! Supported layouts: the 1D lines `[R]`, `[z]`, `[r]`; in 2D the polar disk
//! `[R, phi]`, the Cartesian box `[x, y]`, its vertical section `[x, z]`, the
//! meridional planes `[R, z]` (cylindrical) and `[r, theta]` (spherical); in
//! 3D the cylindrical `[R, phi, z]`, spherical `[r, theta, phi]` and
//! Cartesian `[x, y, z]` grids. Staggered (face) positions are meant to be
//! added as new methods; the enums are `#[non_exhaustive]`.

mod axis;
mod embed;
mod halo;

use std::f64::consts::{FRAC_PI_2, PI};

use thiserror::Error;

pub use axis::{Axis, Spacing};
pub use embed::Embedding;

use crate::background::Frame;

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
    /// Polar angle from the +z axis, named `theta`, in radians (0 to π).
    Theta,
}

impl Coord {
    /// Every coordinate, in a fixed order.
    pub const ALL: [Coord; 7] = [
        Coord::R,
        Coord::Phi,
        Coord::X,
        Coord::Y,
        Coord::Z,
        Coord::Sph,
        Coord::Theta,
    ];

    /// The name used in files and profiles: `R`, `phi`, `x`, `y`, `z`, `r`,
    /// `theta`.
    pub fn name(self) -> &'static str {
        match self {
            Coord::R => "R",
            Coord::Phi => "phi",
            Coord::X => "x",
            Coord::Y => "y",
            Coord::Z => "z",
            Coord::Sph => "r",
            Coord::Theta => "theta",
        }
    }

    /// The coordinate with this name (case sensitive: `R` and `r` differ).
    pub fn from_name(name: &str) -> Option<Coord> {
        Coord::ALL.into_iter().find(|c| c.name() == name)
    }

    /// Whether the coordinate is an angle (in radians) rather than a length.
    pub fn is_angle(self) -> bool {
        matches!(self, Coord::Phi | Coord::Theta)
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
        "unsupported grid layout [{}]; supported: {SUPPORTED}",
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

/// A `grid.nesting` that does not list the grid's axes once each; the
/// message says which axis is unknown, repeated or missing.
#[derive(Clone, Debug, Error, PartialEq)]
#[error("{0}")]
pub struct NestingError(pub String);

/// The layouts a grid may have, as written in error messages.
pub const SUPPORTED: &str = "[R], [z], [r], [R, phi], [x, y], [x, z], [R, z], [r, theta], \
                             [R, phi, z], [r, theta, phi], [x, y, z]";

/// The arrangement of a grid's axes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Layout {
    /// One axis: `R` (disk midplane), `z` (slab) or `r` (sphere).
    Line(Coord),
    /// `[R, phi]`: a 2D polar disk.
    Polar,
    /// `[x, y]`: a 2D Cartesian box (a disk's midplane, a slab along x or y,
    /// a sphere's equatorial plane).
    Cartesian,
    /// `[x, z]`: a 2D Cartesian section (a slab along x or z, a sphere's
    /// meridional plane).
    Section,
    /// `[R, z]`: the meridional plane of an axisymmetric disk (cylindrical).
    Meridional,
    /// `[r, theta]`: the meridional plane in spherical coordinates.
    SphericalMeridional,
    /// `[R, phi, z]`: 3D cylindrical.
    Cylindrical,
    /// `[r, theta, phi]`: 3D spherical.
    Spherical,
    /// `[x, y, z]`: a 3D Cartesian box.
    Box,
}

impl Layout {
    /// Whether every axis is Cartesian (x, y or z).
    pub fn is_cartesian(self) -> bool {
        matches!(self, Layout::Cartesian | Layout::Section | Layout::Box)
    }
}

/// A validated grid: axes in the order the arrays are stored (C order, the
/// last axis varies fastest).
#[derive(Clone, Debug, PartialEq)]
pub struct Grid {
    axes: Vec<Axis>,
    layout: Layout,
    slab_axis: usize,
    /// Ghost layers per side of each axis (see `halo.rs`).
    halo: Vec<usize>,
    /// For each axis of the layout's natural order (`[x, y, z]`, …), the
    /// index of the stored axis that holds it: the identity unless a
    /// Cartesian grid declared its own nesting (see [`Grid::with_nesting`]).
    natural: Vec<usize>,
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
            [Coord::X, Coord::Z] => Layout::Section,
            [Coord::R, Coord::Z] => Layout::Meridional,
            [Coord::Sph, Coord::Theta] => Layout::SphericalMeridional,
            [Coord::R, Coord::Phi, Coord::Z] => Layout::Cylindrical,
            [Coord::Sph, Coord::Theta, Coord::Phi] => Layout::Spherical,
            [Coord::X, Coord::Y, Coord::Z] => Layout::Box,
            _ => return Err(GridError::Layout { coords }),
        };
        let domain = |coord, message: String| Err(GridError::Domain { coord, message });
        for axis in &axes {
            let (lo, hi) = axis.range();
            match (layout, axis.coord) {
                (
                    Layout::Line(_) | Layout::Meridional | Layout::SphericalMeridional,
                    Coord::R | Coord::Sph,
                ) if lo < 0.0 => {
                    return domain(axis.coord, format!("radii must be ≥ 0, first edge is {lo}"));
                }
                (
                    Layout::Polar | Layout::Cylindrical | Layout::Spherical,
                    Coord::R | Coord::Sph,
                ) if lo <= 0.0 => {
                    return domain(
                        axis.coord,
                        format!(
                            "a grid with a phi axis needs {} > 0 (the axis is singular), first edge is {lo}",
                            axis.coord
                        ),
                    );
                }
                (_, Coord::Theta) if lo < 0.0 || hi > PI * (1.0 + 4.0 * f64::EPSILON) => {
                    return domain(
                        axis.coord,
                        format!("theta must lie in [0, π], found {lo} to {hi}"),
                    );
                }
                (_, Coord::Phi) if hi - lo > 2.0 * PI * (1.0 + 4.0 * f64::EPSILON) => {
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
        let slab_axis = coords
            .iter()
            .position(|c| *c == Coord::Z)
            .unwrap_or(coords.len() - 1);
        Ok(Grid {
            halo: vec![0; axes.len()],
            natural: (0..axes.len()).collect(),
            axes,
            layout,
            slab_axis,
        })
    }

    /// The same grid with a slab's layers stacked along `coord` (one of its
    /// Cartesian axes). By default a slab is stratified along z when the
    /// grid has a z axis, else along its last axis (y on `[x, y]`).
    pub fn stratified_along(mut self, coord: Coord) -> Result<Grid, GridError> {
        let found = self.axes.iter().position(|a| a.coord == coord);
        match found {
            Some(i) if matches!(coord, Coord::X | Coord::Y | Coord::Z) => {
                self.slab_axis = i;
                Ok(self)
            }
            _ => Err(GridError::Domain {
                coord,
                message: format!(
                    "a slab can be stratified only along one of the grid's Cartesian axes ({})",
                    self.axes
                        .iter()
                        .filter(|a| matches!(a.coord, Coord::X | Coord::Y | Coord::Z))
                        .map(|a| a.coord.name())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            }),
        }
    }

    /// The axis a slab is stratified along (see [`Grid::stratified_along`]).
    pub fn slab_axis(&self) -> usize {
        self.slab_axis
    }

    /// The same Cartesian grid with its axes stored in the order `order`,
    /// slowest first (the profile key `grid.nesting`): `[z, y, x]` stores a
    /// box with x varying fastest. `order` must name each of the grid's
    /// axes once; other layouts keep their own order. Arrays stay C-ordered
    /// in the stored order (design §6); the layout, the slab axis and the
    /// ghost layers follow their axes.
    pub fn with_nesting(mut self, order: &[Coord]) -> Result<Grid, NestingError> {
        let names = |c: &[Coord]| c.iter().map(|c| c.name()).collect::<Vec<_>>().join(", ");
        // In the natural order, whatever order the grid is stored in now.
        let have: Vec<Coord> = (0..self.axes.len())
            .map(|k| self.natural_axis(k).coord)
            .collect();
        if !self.layout.is_cartesian() {
            return Err(NestingError(format!(
                "only a Cartesian grid ([x, y], [x, z], [x, y, z]) may declare its nesting; \
                 the grid [{}] keeps its own order",
                names(&have)
            )));
        }
        for (i, c) in order.iter().enumerate() {
            if !have.contains(c) {
                return Err(NestingError(format!(
                    "`{c}` is not an axis of the grid [{}]",
                    names(&have)
                )));
            }
            if order[..i].contains(c) {
                return Err(NestingError(format!("`{c}` is listed twice")));
            }
        }
        if let Some(missing) = have.iter().find(|c| !order.contains(c)) {
            return Err(NestingError(format!(
                "`{missing}` is missing: list every axis of the grid [{}] once, slowest first",
                names(&have)
            )));
        }
        // Stored position of each natural axis.
        let natural: Vec<usize> = have
            .iter()
            .map(|c| order.iter().position(|o| o == c).unwrap_or(0))
            .collect();
        let mut axes = Vec::with_capacity(order.len());
        let mut halo = vec![0; order.len()];
        for (k, &s) in natural.iter().enumerate() {
            halo[s] = self.halo[self.natural[k]];
        }
        for c in order {
            let k = have.iter().position(|h| h == c).unwrap_or(0);
            axes.push(self.axes[self.natural[k]].clone());
        }
        let slab_coord = self.axes[self.slab_axis].coord;
        self.slab_axis = order.iter().position(|c| *c == slab_coord).unwrap_or(0);
        self.axes = axes;
        self.halo = halo;
        self.natural = natural;
        Ok(self)
    }

    /// Whether the axes are stored in the layout's natural order.
    pub fn is_natural_order(&self) -> bool {
        self.natural.iter().enumerate().all(|(k, s)| k == *s)
    }

    /// For each axis of the layout's natural order (`[x, y, z]` for a box),
    /// the index of the stored axis holding it.
    pub fn natural_order(&self) -> &[usize] {
        &self.natural
    }

    /// The `k`-th axis of the layout's natural order (x for k = 0 on a
    /// Cartesian grid, whatever its nesting).
    pub fn natural_axis(&self, k: usize) -> &Axis {
        &self.axes[self.natural[k]]
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
            Layout::Cartesian => point[self.natural[0]].hypot(point[self.natural[1]]),
            _ => point[0],
        }
    }

    /// The (min, max) of the frame's first coordinate (the line a closure
    /// is solved along: s of a slab, r of a sphere, R of a disk) over the
    /// whole domain. On a Cartesian box the minimum is the distance from the
    /// origin (or the axis) to the nearest point of the box, 0 if it contains
    /// it, the maximum the distance to the farthest corner; on a spherical
    /// grid holding a disk R = r sin θ.
    pub fn background_range(&self, frame: Frame) -> (f64, f64) {
        let nearest = |(lo, hi): (f64, f64)| if lo > 0.0 { lo } else { (-hi).max(0.0) };
        let farthest = |(lo, hi): (f64, f64)| lo.abs().max(hi.abs());
        let norm = |axes: &[Axis]| {
            let (mut n, mut f) = (0.0f64, 0.0f64);
            for a in axes {
                n = n.hypot(nearest(a.range()));
                f = f.hypot(farthest(a.range()));
            }
            (n, f)
        };
        match (frame, self.layout) {
            (Frame::Slab, _) => self.axes[self.slab_axis].range(),
            (Frame::Spherical, l) if l.is_cartesian() => norm(&self.axes),
            (Frame::Axisymmetric, Layout::Cartesian | Layout::Box) => {
                norm(&[self.natural_axis(0).clone(), self.natural_axis(1).clone()])
            }
            (Frame::Axisymmetric, Layout::SphericalMeridional | Layout::Spherical) => {
                let (r0, r1) = self.axes[0].range();
                let (t0, t1) = self.axes[1].range();
                let lo = t0.sin().min(t1.sin()).max(0.0);
                let hi = if (t0..=t1).contains(&FRAC_PI_2) {
                    1.0
                } else {
                    t0.sin().max(t1.sin())
                };
                (r0 * lo, r1 * hi)
            }
            _ => self.axes[0].range(),
        }
    }

    /// The range of heights z over the domain when the grid holds a state of
    /// `frame` in (R, z) and has height ([R, z], [R, phi, z], [x, y, z], and
    /// z = r cos θ on [r, theta], [r, theta, phi]); None otherwise.
    pub fn height_range(&self, frame: Frame) -> Option<(f64, f64)> {
        if frame != Frame::Axisymmetric {
            return None;
        }
        match self.layout {
            Layout::Meridional => Some(self.axes[1].range()),
            Layout::Cylindrical | Layout::Box => Some(self.natural_axis(2).range()),
            Layout::SphericalMeridional | Layout::Spherical => {
                let (r0, r1) = self.axes[0].range();
                let (t0, t1) = self.axes[1].range();
                let z = [r0 * t0.cos(), r1 * t0.cos(), r0 * t1.cos(), r1 * t1.cos()];
                let lo = z.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = z.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                Some((lo, hi))
            }
            _ => None,
        }
    }

    /// The volume element J at a point (coordinates in axis order), such that
    /// the volume of a cell is ∫ J d(axis 1) d(axis 2)…: the product of the
    /// per-axis factors of [`Grid::volume_factor`] (R dR on `[R]`, r² dr on
    /// `[r]`, R dR dφ dz, r² sin θ dr dθ dφ, 1 on Cartesian axes).
    pub fn volume_element(&self, point: &[f64]) -> f64 {
        point
            .iter()
            .enumerate()
            .map(|(a, x)| self.volume_factor(a, *x))
            .product()
    }

    /// The factor of the volume element that belongs to axis `axis` at
    /// coordinate `x`: every layout's volume element is a product of one
    /// factor per axis (R on the R axis of `[R]`, `[R, phi]`, `[R, z]` and
    /// `[R, phi, z]`; r² on an r axis; sin θ on a theta axis; 1 otherwise),
    /// so tensor rules weight each axis on its own.
    pub fn volume_factor(&self, axis: usize, x: f64) -> f64 {
        match self.axes[axis].coord {
            Coord::R => x,
            Coord::Sph => x * x,
            Coord::Theta => x.sin(),
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
            Layout::Section => "dx dz",
            Layout::Meridional => "R dR dz",
            Layout::SphericalMeridional => "r^2 sin(theta) dr dtheta",
            Layout::Cylindrical => "R dR dphi dz",
            Layout::Spherical => "r^2 sin(theta) dr dtheta dphi",
            Layout::Box => "dx dy dz",
            _ => "dz",
        }
    }

    /// The velocity components written for this grid, in order: the grid's
    /// own axes, plus `phi` on an `[R]` line and on the meridional planes
    /// `[R, z]` and `[r, theta]` (the rotation is the point of a disk).
    pub fn velocity_components(&self) -> Vec<Coord> {
        let mut c: Vec<Coord> = self.axes.iter().map(|a| a.coord).collect();
        if matches!(
            self.layout,
            Layout::Line(Coord::R) | Layout::Meridional | Layout::SphericalMeridional
        ) {
            c.push(Coord::Phi);
        }
        c
    }

    /// The components of the azimuthal unit vector e_φ at a point, in the
    /// order of [`Grid::velocity_components`], written into `out`. Zero on
    /// slab and sphere lines, on a section `[x, z]`, and on the axis R = 0
    /// of a Cartesian grid.
    pub fn azimuthal_unit(&self, point: &[f64], out: &mut [f64]) {
        out.iter_mut().for_each(|v| *v = 0.0);
        match self.layout {
            Layout::Cartesian | Layout::Box => {
                let (ix, iy) = (self.natural[0], self.natural[1]);
                let r = point[ix].hypot(point[iy]);
                if r > 0.0 {
                    out[ix] = -point[iy] / r;
                    out[iy] = point[ix] / r;
                }
            }
            Layout::Line(Coord::R) | Layout::Polar | Layout::Cylindrical => out[1] = 1.0,
            Layout::Meridional | Layout::SphericalMeridional | Layout::Spherical => out[2] = 1.0,
            _ => {}
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
        assert_eq!(Coord::from_name("theta"), Some(Coord::Theta));
        assert_eq!(Coord::from_name("Theta"), None);
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
            format!("unsupported grid layout [phi, R]; supported: {SUPPORTED}")
        );
        let sph = Axis::uniform(Coord::Sph, -1.0, 1.0, 2).unwrap();
        assert!(Grid::new(vec![sph])
            .unwrap_err()
            .to_string()
            .contains("radii must be ≥ 0"));
        assert!(Grid::new(vec![r(-1.0, 1.0)]).is_err());
        let theta = |a, b| Axis::uniform(Coord::Theta, a, b, 4).unwrap();
        let e = Grid::new(vec![
            Axis::uniform(Coord::Sph, 1.0, 2.0, 2).unwrap(),
            theta(0.0, 4.0),
        ])
        .unwrap_err()
        .to_string();
        assert!(e.contains("theta must lie in [0, π]"), "{e}");
        let z = Axis::uniform(Coord::Z, -1.0, 1.0, 2).unwrap();
        let e = Grid::new(vec![r(0.0, 1.0), phi(0.0, 1.0), z])
            .unwrap_err()
            .to_string();
        assert!(e.contains("R > 0"), "{e}");
    }

    #[test]
    fn three_dimensional_volume_elements_and_ranges() {
        let pi = std::f64::consts::PI;
        let g = Grid::new(vec![
            Axis::uniform(Coord::Sph, 1.0, 2.0, 2).unwrap(),
            Axis::uniform(Coord::Theta, pi / 6.0, pi / 3.0, 2).unwrap(),
            Axis::uniform(Coord::Phi, 0.0, 1.0, 2).unwrap(),
        ])
        .unwrap();
        // r² sin θ (the spherical volume element).
        let j = g.volume_element(&[2.0, pi / 6.0, 0.5]);
        assert!((j - 2.0).abs() < 1e-15, "{j}");
        assert_eq!(g.volume_element_name(), "r^2 sin(theta) dr dtheta dphi");
        // R = r sin θ over r in [1, 2], θ in [π/6, π/3]: [1/2, √3].
        let (lo, hi) = g.background_range(Frame::Axisymmetric);
        assert!(
            (lo - 0.5).abs() < 1e-15 && (hi - 3f64.sqrt()).abs() < 1e-15,
            "{lo} {hi}"
        );
        let (lo, hi) = g.background_range(Frame::Spherical);
        assert!((lo - 1.0).abs() < 1e-15 && (hi - 2.0).abs() < 1e-15);
        let b = |c| Axis::uniform(c, 1.0, 2.0, 2).unwrap();
        let boxed = Grid::new(vec![b(Coord::X), b(Coord::Y), b(Coord::Z)]).unwrap();
        let (lo, hi) = boxed.background_range(Frame::Spherical);
        assert!((lo - 3f64.sqrt()).abs() < 1e-15 && (hi - 12f64.sqrt()).abs() < 1e-15);
        let (lo, hi) = boxed.background_range(Frame::Slab);
        assert!((lo - 1.0).abs() < 1e-15 && (hi - 2.0).abs() < 1e-15);
        let cyl = Grid::new(vec![
            b(Coord::R),
            Axis::uniform(Coord::Phi, 0.0, 1.0, 2).unwrap(),
            b(Coord::Z),
        ])
        .unwrap();
        assert!((cyl.volume_element(&[1.5, 0.2, 1.1]) - 1.5).abs() < 1e-15);
    }
    #[test]
    fn background_coordinate_and_range() {
        let x = Axis::uniform(Coord::X, -1.0, 3.0, 4).unwrap();
        let y = Axis::uniform(Coord::Y, 2.0, 4.0, 4).unwrap();
        let g = Grid::new(vec![x, y]).unwrap();
        assert!((g.background_coordinate(&[3.0, 4.0]) - 5.0).abs() < 1e-15);
        let (lo, hi) = g.background_range(Frame::Axisymmetric);
        assert!(
            (lo - 2.0).abs() < 1e-15 && (hi - 5.0).abs() < 1e-15,
            "{lo} {hi}"
        );
        let x = Axis::uniform(Coord::X, -1.0, 1.0, 2).unwrap();
        let y = Axis::uniform(Coord::Y, -3.0, -2.0, 2).unwrap();
        let (lo, _) = Grid::new(vec![x, y])
            .unwrap()
            .background_range(Frame::Axisymmetric);
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
