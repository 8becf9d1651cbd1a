//! The sampler: turns a [`Background`] into fields on a [`Grid`] under a
//! [`SamplingRule`].
//!
//! Owns: the sampling rules (cell-centre point values, cell averages by
//! tensor Gauss–Legendre quadrature weighted by the grid's volume element)
//! and their errors. The streaming [`Sampler`] (slabs of rows, blocks of
//! points, parallel lines) lives in `stream`, what is computed at one point
//! and the names of the fields in `slots`, the quadrature rule in
//! [`gauss`]. Does not own
//! the geometry (see [`crate::grid`]), the background (see
//! [`crate::background`]) or any file format (see [`crate::output`]).
//!
//! Fields, per cell:
//! * `density`, `pressure`, `potential`: the point value, or the volume
//!   average ⟨f⟩ = Σ wᵢ J(xᵢ) f(xᵢ) / Σ wᵢ J(xᵢ) (J the volume element, so
//!   the denominator is the exact cell volume when J is a polynomial);
//! * `momentum_<c>`: ⟨ρ v_c⟩, the average of the pointwise product;
//! * `velocity_<c>`: ⟨ρ v_c⟩/⟨ρ⟩, mass weighted, so that momentum = density ×
//!   velocity holds in the file (with point values it is v_c itself);
//! * `energy`: ⟨P/(γ−1) + ½ρ|v|²⟩, the total energy density — not written
//!   for an isothermal gas (γ = 1), which has no energy equation: P = ρc²
//!   with c² the law's, and the file says so (`gas_law` = `isothermal`);
//! * `sound_speed`: ⟨√(P/ρ)⟩, the isothermal sound speed (not √(γP/ρ));
//! * `temperature`: ⟨(μ m_u/k_B) P/ρ⟩, only when a conversion is given.
//! * on request (`output.fields`, see [`extras`]): the accelerations
//!   `gravity_<c>`, `pressure_acceleration_<c>` and the diagnostic fields,
//!   plain volume averages of their point values.
//! * at faces on request ([`FaceRequest`], [`Sampler::faces`]): point
//!   values of the background at the face centres or face nodes.
//!
//! Velocity components are named by [`Grid::velocity_components`]: the
//! rotation v_φ is projected on e_φ (on a Cartesian grid v_x = −v_φ y/R,
//! v_y = v_φ x/R).

pub mod extras;
pub mod gauss;
mod perturbed;
mod slots;
mod stream;

use thiserror::Error;

use crate::background::Background;
use crate::fields::{Field, FieldSet};
use crate::grid::{Embedding, Grid};
pub use extras::Extras;
use gauss::MAX_POINTS;
pub use stream::{Cuts, Sampler};

/// How a cell's value is taken from the background.
#[derive(Clone, Copy, Debug, PartialEq)]
#[non_exhaustive]
pub enum SamplingRule {
    /// The point value at the cell centre (arithmetic midpoint of each axis).
    Center,
    /// The cell average by a tensor Gauss–Legendre rule with `points` nodes
    /// per axis (1 to 64), weighted by the grid's volume element.
    Average {
        /// Nodes per axis.
        points: usize,
    },
    /// Values at the nodes of a tensor rule in every cell, for nodal
    /// discontinuous-Galerkin codes: `points` nodes per axis of `family`
    /// (Gauss–Legendre 1 to 64, Gauss–Lobatto 2 to 64), the nodes of each
    /// cell as trailing dimensions of the dataset, axis by axis in C order.
    Nodes {
        /// Gauss–Legendre or Gauss–Lobatto nodes.
        family: gauss::NodeFamily,
        /// Nodes per axis.
        points: usize,
    },
    /// DG modal coefficients: in each cell's reference coordinates
    /// ξ ∈ [−1, 1]^d, the L2 projection of every field onto tensor Legendre
    /// polynomials of degree < `modes` per axis, f(ξ) ≈ Σ c_{j…} P_j(ξ₁)…,
    /// P_j(1) = 1, c_j = (2j + 1)/2 ∫ f P_j dξ per axis (no volume factor),
    /// computed with `points` Gauss–Legendre nodes per axis.
    Modes {
        /// Modes per axis (degree < modes).
        modes: usize,
        /// Quadrature nodes per axis (≥ modes).
        points: usize,
    },
    /// Cell averages to a requested relative tolerance: the points per axis
    /// are raised by 2 from `start` until the averages with n and n + 2
    /// points differ by at most `tolerance` relative to each field's largest
    /// magnitude; the n + 2 values are written with the estimate.
    AverageTo {
        /// The relative tolerance (> 0).
        tolerance: f64,
        /// The first n tried.
        start: usize,
    },
}

impl SamplingRule {
    /// A human description of the rule on this grid, written into files,
    /// e.g. "cell averages by tensor Gauss–Legendre, 4 points per axis,
    /// weighted by the volume element R dR dphi".
    pub fn describe(&self, grid: &Grid) -> String {
        match self {
            SamplingRule::Center => "cell-centre point values".to_string(),
            SamplingRule::Average { points } => format!(
                "cell averages by tensor Gauss–Legendre, {points} point{} per axis, \
                 weighted by the volume element {}",
                if *points == 1 { "" } else { "s" },
                grid.volume_element_name()
            ),
            SamplingRule::Nodes { family, points } => format!(
                "values at the {points} {} nodes per axis of each cell (tensor product, \
                 C order, nodes as trailing dimensions); reference nodes on [-1, 1]: {}",
                family.name(),
                family
                    .rule(*points)
                    .map(|r| r
                        .nodes
                        .iter()
                        .map(|x| format!("{x}"))
                        .collect::<Vec<_>>()
                        .join(", "))
                    .unwrap_or_default()
            ),
            SamplingRule::Modes { modes, points } => format!(
                "modal coefficients: L2 projection in each cell's reference coordinates \
                 [-1, 1] per axis (no volume factor) onto tensor Legendre polynomials P_j, \
                 P_j(1) = 1, of degree < {modes} per axis; f = sum of c_j P_j, \
                 c_j = (2j+1)/2 times the integral of f P_j; {points}-point Gauss–Legendre \
                 per axis; modes as trailing dimensions, C order"
            ),
            SamplingRule::AverageTo { tolerance, .. } => format!(
                "cell averages by tensor Gauss–Legendre to a relative tolerance of \
                 {tolerance:e}, weighted by the volume element {}",
                grid.volume_element_name()
            ),
        }
    }
}

/// Values at cell faces, written beside the cell fields on request
/// (`sampling.faces`, `sampling.staggered_velocity`): the background, never
/// perturbed, as point values.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub struct FaceRequest {
    /// Every field at the faces normal to each grid axis: None when not
    /// asked; `Some(None)` at the face centres; `Some(Some(n))` at n
    /// Gauss–Legendre nodes per axis of each face.
    pub values: Option<Option<usize>>,
    /// The velocity component along each grid axis at the centres of the
    /// faces normal to it (a staggered mesh).
    pub staggered: bool,
}

impl FaceRequest {
    /// Whether anything is asked.
    pub fn any(&self) -> bool {
        self.values.is_some() || self.staggered
    }
}

/// Gas constants the sampler needs beyond the background.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GasConstants {
    /// Adiabatic index γ for the energy (≥ 1; 1 is an isothermal gas, for
    /// which no energy field is written).
    pub gamma: f64,
    /// μ m_u / k_B, so that T = this × c²; None in code units (no
    /// temperature field is written).
    pub temperature_per_c2: Option<f64>,
    /// Whether density and pressure are vertically integrated (Σ and ∫P dz).
    pub vertically_integrated: bool,
}

/// Errors of the sampler. Point errors name the field, its value and the
/// coordinates of the point.
#[derive(Clone, Debug, Error, PartialEq)]
#[non_exhaustive]
pub enum SampleError {
    /// Density or pressure not above zero.
    #[error("{field} ≤ 0 ({value}) at {at}")]
    NonPositive {
        /// The field.
        field: &'static str,
        /// Its value.
        value: f64,
        /// The point, e.g. "z = 12.5".
        at: String,
    },
    /// A field that is NaN or infinite.
    #[error("{field} is not finite ({value}) at {at}")]
    NonFinite {
        /// The field.
        field: &'static str,
        /// Its value.
        value: f64,
        /// The point, e.g. "x = 0, y = 0 (R = 0)".
        at: String,
    },
    /// A background whose shape does not fit the grid layout.
    #[error("a {shape} background cannot be sampled on a [{axes}] grid")]
    ShapeMismatch {
        /// The background's shape.
        shape: String,
        /// The grid's axes.
        axes: String,
    },
    /// A number of quadrature points out of range.
    #[error("cell averages and nodes need 1 to {MAX_POINTS} points per axis (Gauss–Lobatto at least 2; a tolerance's first try at most 62), got {points}")]
    Points {
        /// The number asked for.
        points: usize,
    },
    /// A tolerance that is not a positive number.
    #[error("sampling.tolerance must be finite and > 0, got {tolerance}")]
    Tolerance {
        /// The value given.
        tolerance: f64,
    },
    /// A bad adiabatic index.
    #[error("the adiabatic index γ must be finite and ≥ 1 (1 is isothermal), got {gamma}")]
    Gamma {
        /// The value given.
        gamma: f64,
    },
    /// A bad temperature conversion.
    #[error("the temperature conversion μ m_u/k_B must be finite and > 0, got {value}")]
    TemperatureScale {
        /// The value given.
        value: f64,
    },
}

/// Samples `bg` on the whole of `grid` under `rule` and holds every field in
/// memory; see the module documentation for the fields and how each is
/// averaged. For large grids stream slabs from a [`Sampler`] instead.
pub fn sample(
    bg: &dyn Background,
    grid: &Grid,
    rule: &SamplingRule,
    gas: &GasConstants,
) -> Result<FieldSet, SampleError> {
    sample_with_cuts(bg, grid, rule, gas, &Cuts::none())
}

/// [`sample`], with cell averages split at the switch points `cuts`.
pub fn sample_with_cuts(
    bg: &dyn Background,
    grid: &Grid,
    rule: &SamplingRule,
    gas: &GasConstants,
    cuts: &Cuts,
) -> Result<FieldSet, SampleError> {
    sample_whole(&Sampler::with_cuts(bg, grid, rule, gas, cuts)?, grid)
}

/// Every field of `sampler` on the whole of `grid` (its grid), in memory.
pub fn sample_whole(sampler: &Sampler<'_>, grid: &Grid) -> Result<FieldSet, SampleError> {
    let slab = sampler.slab(0..grid.shape()[0])?;
    Ok(FieldSet {
        shape: grid.shape(),
        sampling: sampler.sampling().to_string(),
        fields: sampler
            .fields()
            .into_iter()
            .zip(slab.data)
            .map(|(spec, data)| Field {
                name: spec.name,
                dim: spec.dim,
                data,
                placement: spec.placement,
            })
            .collect(),
    })
}

/// The fields a build writes on `grid` for `gas`, in file order, known
/// before the background is solved (what [`Sampler::fields`] returns).
pub fn field_specs(grid: &Grid, gas: &GasConstants) -> Vec<crate::fields::FieldSpec> {
    slots::catalogue(grid, gas, &grid.velocity_components())
        .into_iter()
        .map(|e| e.spec)
        .collect()
}

/// Cells sampled at once while a rule to a tolerance compares n with n + 2.
const ESTIMATE_CELLS: usize = 1 << 16;

/// The sampler of a rule to a tolerance: n = `start`, `start` + 2, … until
/// the largest relative difference between the averages with n and n + 2
/// points per axis, over every cell of each field (relative to the field's
/// largest magnitude), is at most `tolerance`, or n + 2 reaches
/// [`MAX_POINTS`]. Returns the sampler with n + 2 points, its description
/// stating the estimate of each field (and that the tolerance was not met,
/// if so). The comparison runs slab by slab, so memory stays bounded.
pub(crate) fn converge<'a>(
    bg: &'a dyn Background,
    grid: &'a Grid,
    tolerance: f64,
    start: usize,
    gas: &GasConstants,
    cuts: &Cuts,
) -> Result<Sampler<'a>, SampleError> {
    let resolved = resolve_tolerance(bg, grid, tolerance, start, gas, cuts)?;
    resolved.sampler(bg, grid, gas, cuts)
}

/// A rule to a tolerance, resolved: the fixed number of points per axis it
/// converged to, and the description that states what it met. Resolving
/// costs two samplings of the grid per step; callers that need several
/// samplers of one build resolve once and keep this.
#[derive(Clone, Debug)]
pub struct Resolved {
    /// Gauss–Legendre points per axis (the n + 2 of the last comparison).
    pub points: usize,
    /// The rule, the tolerance and the estimate per field, for files.
    pub description: String,
}

impl Resolved {
    /// The sampler with the resolved rule and its description.
    pub fn sampler<'a>(
        &self,
        bg: &'a dyn Background,
        grid: &'a Grid,
        gas: &GasConstants,
        cuts: &Cuts,
    ) -> Result<Sampler<'a>, SampleError> {
        let rule = SamplingRule::Average {
            points: self.points,
        };
        let mut s = Sampler::with_cuts(bg, grid, &rule, gas, cuts)?;
        s.describe_as(self.description.clone());
        Ok(s)
    }
}

/// Resolves a rule to a tolerance (see [`converge`]) without keeping the
/// sampler.
pub fn resolve_tolerance(
    bg: &dyn Background,
    grid: &Grid,
    tolerance: f64,
    start: usize,
    gas: &GasConstants,
    cuts: &Cuts,
) -> Result<Resolved, SampleError> {
    resolve_tolerance_with(bg, grid, tolerance, start, gas, cuts, None)
}

/// [`resolve_tolerance`], with the fields asked for on request (`extras`:
/// accelerations, diagnostics) compared too, so that every field written
/// meets the tolerance and its estimate is stated.
pub fn resolve_tolerance_with<'a>(
    bg: &'a dyn Background,
    grid: &'a Grid,
    tolerance: f64,
    start: usize,
    gas: &GasConstants,
    cuts: &Cuts,
    extras: Option<&'a Extras>,
) -> Result<Resolved, SampleError> {
    let with = |s: Sampler<'a>| -> Sampler<'a> {
        match extras {
            Some(x) => s.with_extras(x),
            None => s,
        }
    };
    let shape = grid.shape();
    let row: usize = shape[1..].iter().product();
    let rows = (ESTIMATE_CELLS / row.max(1)).max(1);
    let mut n = start;
    loop {
        let lo = with(Sampler::with_cuts(
            bg,
            grid,
            &SamplingRule::Average { points: n },
            gas,
            cuts,
        )?);
        let hi = with(Sampler::with_cuts(
            bg,
            grid,
            &SamplingRule::Average { points: n + 2 },
            gas,
            cuts,
        )?);
        let names: Vec<String> = hi.fields().into_iter().map(|f| f.name).collect();
        let (mut diff, mut scale) = (vec![0.0f64; names.len()], vec![0.0f64; names.len()]);
        let mut from = 0;
        while from < shape[0] {
            let to = (from + rows).min(shape[0]);
            let (a, b) = (lo.slab(from..to)?, hi.slab(from..to)?);
            for (k, (a, b)) in a.data.iter().zip(&b.data).enumerate() {
                for (x, y) in a.iter().zip(b) {
                    diff[k] = diff[k].max((x - y).abs());
                    scale[k] = scale[k].max(y.abs());
                }
            }
            from = to;
        }
        let estimate: Vec<f64> = diff
            .iter()
            .zip(&scale)
            .map(|(d, s)| if *s > 0.0 { d / s } else { 0.0 })
            .collect();
        let worst = estimate.iter().fold(0.0f64, |m, e| m.max(*e));
        if worst <= tolerance || n + 2 >= MAX_POINTS {
            let per_field: Vec<String> = names
                .iter()
                .zip(&estimate)
                .map(|(f, e)| format!("{f} {e:.1e}"))
                .collect();
            let met = if worst <= tolerance {
                String::new()
            } else {
                format!(
                    "; TOLERANCE NOT MET at {MAX_POINTS} points per axis (a kink or \
                     singularity inside cells that no cut removes)"
                )
            };
            let text = format!(
                "{}, requested relative tolerance {tolerance:e}; estimated relative error \
                 (largest difference from {n} points, per field): {}{met}",
                SamplingRule::Average { points: n + 2 }.describe(grid),
                per_field.join(", ")
            );
            return Ok(Resolved {
                points: n + 2,
                description: text,
            });
        }
        n += 2;
    }
}

/// Validates everything that does not depend on a point, and places the grid
/// in the background's frame.
fn check_inputs(
    bg: &dyn Background,
    grid: &Grid,
    rule: &SamplingRule,
    gas: &GasConstants,
) -> Result<Embedding, SampleError> {
    let Some(embed) = grid.embedding(bg.frame()) else {
        let axes: Vec<&str> = grid.axes().iter().map(|a| a.coord.name()).collect();
        let coords = bg.frame().coordinates().join(", ");
        return Err(SampleError::ShapeMismatch {
            shape: format!("{:?} (coordinates {coords})", bg.frame()),
            axes: axes.join(", "),
        });
    };
    match *rule {
        SamplingRule::Average { points } if !(1..=MAX_POINTS).contains(&points) => {
            return Err(SampleError::Points { points });
        }
        SamplingRule::Nodes { family, points }
            if !(family.min_points()..=MAX_POINTS).contains(&points) =>
        {
            return Err(SampleError::Points { points });
        }
        SamplingRule::Modes { modes, points }
            if modes == 0 || points < modes || points > MAX_POINTS =>
        {
            return Err(SampleError::Points { points });
        }
        SamplingRule::AverageTo { start, .. } if !(1..=MAX_POINTS - 2).contains(&start) => {
            return Err(SampleError::Points { points: start });
        }
        SamplingRule::AverageTo { tolerance, .. }
            if !(tolerance.is_finite() && tolerance > 0.0) =>
        {
            return Err(SampleError::Tolerance { tolerance });
        }
        _ => {}
    }
    if !(gas.gamma.is_finite() && gas.gamma >= 1.0) {
        return Err(SampleError::Gamma { gamma: gas.gamma });
    }
    if let Some(value) = gas.temperature_per_c2 {
        if !(value.is_finite() && value > 0.0) {
            return Err(SampleError::TemperatureScale { value });
        }
    }
    Ok(embed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::background::{Frame, State};
    use crate::grid::{Axis, Coord};

    const GAS: GasConstants = GasConstants {
        gamma: 1.4,
        temperature_per_c2: None,
        vertically_integrated: false,
    };

    /// ρ = e^(−z), P = ρ, Φ = z: an isothermal slab with g = c² = 1.
    struct Slab;
    impl Background for Slab {
        fn frame(&self) -> Frame {
            Frame::Slab
        }
        fn at(&self, x: &[f64]) -> State {
            let rho = (-x[0]).exp();
            State::at_rest(rho, rho, x[0])
        }
    }

    /// ρ = 1/R, P = ρ/10, v_φ = R^(−1/2), Φ = −1/R (not balanced; a test law).
    struct Disk;
    impl Background for Disk {
        fn frame(&self) -> Frame {
            Frame::Axisymmetric
        }
        fn depends_on(&self) -> [bool; 2] {
            [true, false]
        }
        fn at(&self, x: &[f64]) -> State {
            let r = x[0];
            State::rotating(1.0 / r, 0.1 / r, -1.0 / r, r.powf(-0.5))
        }
    }

    fn data<'a>(set: &'a FieldSet, name: &str) -> &'a [f64] {
        &set.get(name)
            .unwrap_or_else(|| panic!("no field {name}"))
            .data
    }

    #[test]
    fn slab_average_matches_exact_integral() {
        // ⟨e^(−z)⟩ over [a, b] = (e^(−a) − e^(−b))/(b − a), elementary calculus.
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 10.0, 7).unwrap()]).unwrap();
        let set = sample(&Slab, &grid, &SamplingRule::Average { points: 12 }, &GAS).unwrap();
        let edges = &grid.axes()[0].edges;
        for (i, rho) in data(&set, "density").iter().enumerate() {
            let (a, b) = (edges[i], edges[i + 1]);
            let exact = ((-a).exp() - (-b).exp()) / (b - a);
            assert!(
                (rho / exact - 1.0).abs() < 1e-14,
                "cell {i}: {rho} vs {exact}"
            );
        }
        // Φ = z is linear: its average is the midpoint.
        let centers = grid.axes()[0].centers();
        for (phi, c) in data(&set, "potential").iter().zip(&centers) {
            assert!((phi - c).abs() < 1e-13);
        }
        assert!(data(&set, "velocity_z").iter().all(|v| v.abs() < 1e-300));
        assert!(set.get("temperature").is_none());
        assert!(set.sampling.contains("12 points per axis") && set.sampling.contains("dz"));
    }

    #[test]
    fn polar_averages_weighted_by_r() {
        // With weight R dR dφ: ⟨1/R⟩ = (b − a)/((b² − a²)/2) = 2/(a + b), and
        // ⟨ρ v_φ⟩ = ⟨R^(−3/2)⟩ = 2(√b − √a)/((b² − a²)/2).
        let r = Axis::log(Coord::R, 0.5, 5.0, 6).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 3).unwrap();
        let grid = Grid::new(vec![r, phi]).unwrap();
        let set = sample(&Disk, &grid, &SamplingRule::Average { points: 16 }, &GAS).unwrap();
        let edges = &grid.axes()[0].edges;
        let (rho, mom, vel) = (
            data(&set, "density"),
            data(&set, "momentum_phi"),
            data(&set, "velocity_phi"),
        );
        for i in 0..6 {
            let (a, b) = (edges[i], edges[i + 1]);
            let area = 0.5 * (b * b - a * a);
            for j in 0..3 {
                let k = i * 3 + j;
                assert!((rho[k] / (2.0 / (a + b)) - 1.0).abs() < 1e-14, "cell {k}");
                let exact = 2.0 * (b.sqrt() - a.sqrt()) / area;
                assert!(
                    (mom[k] / exact - 1.0).abs() < 1e-13,
                    "cell {k}: {} vs {exact}",
                    mom[k]
                );
                assert!((rho[k] * vel[k] / mom[k] - 1.0).abs() < 1e-15);
            }
        }
        assert!(data(&set, "velocity_R").iter().all(|v| v.abs() < 1e-300));
        assert!(set.sampling.ends_with("R dR dphi"), "{}", set.sampling);
    }

    /// ρ = r, P = 1, Φ = 0 (a test law, no balance).
    struct Shell;
    impl Background for Shell {
        fn frame(&self) -> Frame {
            Frame::Spherical
        }
        fn at(&self, x: &[f64]) -> State {
            State::at_rest(x[0], 1.0, 0.0)
        }
    }

    #[test]
    fn spherical_grid_averages_weighted_by_r2_sin_theta() {
        // With weight r² sin θ: ⟨r⟩ over [a, b] = (3/4)(b⁴ − a⁴)/(b³ − a³),
        // whatever the angles (elementary calculus).
        let pi = std::f64::consts::PI;
        let grid = Grid::new(vec![
            Axis::uniform(Coord::Sph, 0.5, 2.0, 3).unwrap(),
            Axis::uniform(Coord::Theta, 0.1, pi - 0.1, 4).unwrap(),
            Axis::uniform(Coord::Phi, 0.0, 2.0 * pi, 2).unwrap(),
        ])
        .unwrap();
        let set = sample(&Shell, &grid, &SamplingRule::Average { points: 3 }, &GAS).unwrap();
        let edges = &grid.axes()[0].edges;
        let rho = data(&set, "density");
        for (k, v) in rho.iter().enumerate() {
            let i = k / 8;
            let (a, b) = (edges[i], edges[i + 1]);
            let exact = 0.75 * (b.powi(4) - a.powi(4)) / (b.powi(3) - a.powi(3));
            assert!((v / exact - 1.0).abs() < 1e-14, "cell {k}: {v} vs {exact}");
        }
        assert!(set.sampling.ends_with("r^2 sin(theta) dr dtheta dphi"));
        // The same law in a box: the cell-centre value is |x|.
        let b = |c| Axis::uniform(c, 1.0, 3.0, 2).unwrap();
        let boxed = Grid::new(vec![b(Coord::X), b(Coord::Y), b(Coord::Z)]).unwrap();
        let set = sample(&Shell, &boxed, &SamplingRule::Center, &GAS).unwrap();
        let rho = data(&set, "density");
        assert!(
            (rho[7] - (3.0f64 * 6.25).sqrt()).abs() < 1e-14,
            "{}",
            rho[7]
        );
        assert!(
            (rho[0] - (3.0f64 * 2.25).sqrt()).abs() < 1e-14,
            "{}",
            rho[0]
        );
    }

    #[test]
    fn cartesian_rotation_and_energy() {
        let x = Axis::uniform(Coord::X, 1.0, 3.0, 2).unwrap();
        let y = Axis::uniform(Coord::Y, -2.0, 2.0, 2).unwrap();
        let grid = Grid::new(vec![x, y]).unwrap();
        let gas = GasConstants {
            temperature_per_c2: Some(3.0),
            ..GAS
        };
        let set = sample(&Disk, &grid, &SamplingRule::Center, &gas).unwrap();
        // Cell (1, 0) is centred at x = 2.5, y = −1: v = v_φ (−y, x)/R.
        let (x, y) = (2.5f64, -1.0f64);
        let r = x.hypot(y);
        let v = r.powf(-0.5);
        let k = 2;
        assert!((data(&set, "velocity_x")[k] - v * (-y) / r).abs() < 1e-15);
        assert!((data(&set, "velocity_y")[k] - v * x / r).abs() < 1e-15);
        assert!((data(&set, "momentum_y")[k] - v * x / r / r).abs() < 1e-15);
        let energy = 0.1 / r / 0.4 + 0.5 * v * v / r;
        assert!((data(&set, "energy")[k] / energy - 1.0).abs() < 1e-15);
        assert!((data(&set, "sound_speed")[k] - 0.1f64.sqrt()).abs() < 1e-15);
        assert!((data(&set, "temperature")[k] - 0.3).abs() < 1e-15);
    }

    #[test]
    fn point_errors_name_field_value_and_place() {
        let x = Axis::explicit(Coord::X, vec![-1.5, -0.5, 0.5, 1.5]).unwrap();
        let grid = Grid::new(vec![
            x.clone(),
            Axis {
                coord: Coord::Y,
                ..x
            },
        ])
        .unwrap();
        let e = sample(&Disk, &grid, &SamplingRule::Center, &GAS).unwrap_err();
        assert_eq!(
            e.to_string(),
            "density is not finite (inf) at x = 0, y = 0 (R = 0)"
        );
        let grid = Grid::new(vec![Axis::uniform(Coord::R, -3.0, -1.0, 1).unwrap()]);
        assert!(grid.is_err());
        struct Negative;
        impl Background for Negative {
            fn frame(&self) -> Frame {
                Frame::Slab
            }
            fn at(&self, x: &[f64]) -> State {
                State::at_rest(1.0 - x[0], 1.0, 0.0)
            }
        }
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 5.0, 2).unwrap()]).unwrap();
        let e = sample(&Negative, &grid, &SamplingRule::Center, &GAS).unwrap_err();
        assert_eq!(e.to_string(), "density ≤ 0 (-0.25) at z = 1.25");
    }

    #[test]
    fn input_errors() {
        let grid = Grid::new(vec![Axis::uniform(Coord::R, 1.0, 2.0, 2).unwrap()]).unwrap();
        assert!(matches!(
            sample(&Slab, &grid, &SamplingRule::Center, &GAS),
            Err(SampleError::ShapeMismatch { .. })
        ));
        assert_eq!(
            sample(&Disk, &grid, &SamplingRule::Average { points: 65 }, &GAS),
            Err(SampleError::Points { points: 65 })
        );
        let gas = GasConstants { gamma: 0.9, ..GAS };
        assert_eq!(
            sample(&Disk, &grid, &SamplingRule::Center, &gas),
            Err(SampleError::Gamma { gamma: 0.9 })
        );
        // γ = 1, an isothermal gas: every field but the energy.
        let gas = GasConstants { gamma: 1.0, ..GAS };
        let set = sample(&Disk, &grid, &SamplingRule::Center, &gas).unwrap();
        assert!(set.get("energy").is_none() && set.get("pressure").is_some());
        let set = sample(&Disk, &grid, &SamplingRule::Center, &GAS).unwrap();
        let names: Vec<&str> = set.fields.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(
            names,
            [
                "density",
                "pressure",
                "velocity_R",
                "velocity_phi",
                "momentum_R",
                "momentum_phi",
                "energy",
                "sound_speed",
                "potential"
            ]
        );
    }

    /// ρ = 2 + z^k (a test law; P = ρ, Φ = z).
    struct Poly(i32);
    impl Background for Poly {
        fn frame(&self) -> Frame {
            Frame::Slab
        }
        fn at(&self, x: &[f64]) -> State {
            let rho = 2.0 + x[0].powi(self.0);
            State::at_rest(rho, rho, x[0])
        }
    }

    #[test]
    fn nodal_values_sit_at_the_rule_nodes() {
        // Slab: node k of cell i is at mid + half·x_k; the value is the law
        // there, and Lobatto end nodes are the cell edges, so neighbouring
        // cells agree at their shared edge.
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 3.0, 5).unwrap()]).unwrap();
        for family in [gauss::NodeFamily::Legendre, gauss::NodeFamily::Lobatto] {
            let rule = SamplingRule::Nodes { family, points: 5 };
            let set = sample(&Slab, &grid, &rule, &GAS).unwrap();
            let f = set.get("density").unwrap();
            assert_eq!(f.placement.extra, vec![5]);
            assert_eq!(f.placement.shape(&grid.shape()), vec![5, 5]);
            let r = family.rule(5).unwrap();
            let edges = &grid.axes()[0].edges;
            for i in 0..5 {
                let (mid, half) = (
                    0.5 * (edges[i] + edges[i + 1]),
                    0.5 * (edges[i + 1] - edges[i]),
                );
                for k in 0..5 {
                    let z = mid + half * r.nodes[k];
                    assert!(
                        (f.data[i * 5 + k] / (-z).exp() - 1.0).abs() < 1e-15,
                        "{family:?} {i} {k}"
                    );
                }
            }
            if family == gauss::NodeFamily::Lobatto {
                for i in 0..4 {
                    assert_eq!(f.data[i * 5 + 4].to_bits(), f.data[(i + 1) * 5].to_bits());
                }
            }
            assert!(set.sampling.contains(family.name()), "{}", set.sampling);
        }
        // Polar grid: nodes as trailing dimensions [cell R, cell phi, node R,
        // node phi]; the state varies with R only.
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 3).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 2).unwrap();
        let grid = Grid::new(vec![r, phi]).unwrap();
        let rule = SamplingRule::Nodes {
            family: gauss::NodeFamily::Lobatto,
            points: 3,
        };
        let set = sample(&Disk, &grid, &rule, &GAS).unwrap();
        let f = set.get("density").unwrap();
        assert_eq!(f.data.len(), 3 * 2 * 3 * 3);
        for (idx, v) in f.data.iter().enumerate() {
            let (kr, i) = ((idx / 3) % 3, idx / 18);
            let rr = 1.0 + (i as f64 + 0.5 * (1.0 + [-1.0, 0.0, 1.0][kr])) / 3.0;
            assert!((v * rr - 1.0).abs() < 1e-15, "index {idx}: {v} at R = {rr}");
        }
    }

    #[test]
    fn node_sums_exact_to_degree_of_the_family() {
        // Σ_k w_k ρ(x_k) · half / h is the cell average: exact for z^k up to
        // degree 2n − 1 (Gauss–Legendre) and 2n − 3 (Gauss–Lobatto);
        // ∫ z^k dz = (b^(k+1) − a^(k+1))/(k+1).
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.5, 2.0, 3).unwrap()]).unwrap();
        let edges = grid.axes()[0].edges.clone();
        for family in [gauss::NodeFamily::Legendre, gauss::NodeFamily::Lobatto] {
            for n in family.min_points()..=8 {
                let r = family.rule(n).unwrap();
                let rule = SamplingRule::Nodes { family, points: n };
                for k in 0..=family.exact_degree(n) as i32 {
                    let set = sample(&Poly(k), &grid, &rule, &GAS).unwrap();
                    let d = &set.get("density").unwrap().data;
                    for i in 0..3 {
                        let (a, b) = (edges[i], edges[i + 1]);
                        let sum: f64 =
                            (0..n).map(|q| r.weights[q] * d[i * n + q]).sum::<f64>() / 2.0;
                        let exact =
                            2.0 + (b.powi(k + 1) - a.powi(k + 1)) / ((k + 1) as f64 * (b - a));
                        assert!(
                            (sum / exact - 1.0).abs() < 1e-14,
                            "{family:?} n {n} z^{k} cell {i}"
                        );
                    }
                }
            }
        }
    }

    /// Σ_j c_j P_j(ξ) for one cell (Bonnet's recurrence for P_j).
    fn reconstruct(c: &[f64], xi: f64) -> f64 {
        let (mut p0, mut p1) = (1.0, xi);
        let mut sum = c[0];
        for (j, cj) in c.iter().enumerate().skip(1) {
            sum += cj * p1;
            let jf = j as f64;
            (p0, p1) = (p1, ((2.0 * jf + 1.0) * xi * p1 - jf * p0) / (jf + 1.0));
        }
        sum
    }

    #[test]
    fn modes_reproduce_polynomials_and_converge() {
        // A polynomial of degree < modes is its own L2 projection: the
        // coefficients rebuild it at any ξ (Legendre series, e.g. A&S 22.2.10
        // orthogonality, from memory).
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.5, 2.0, 3).unwrap()]).unwrap();
        let edges = grid.axes()[0].edges.clone();
        let rule = SamplingRule::Modes {
            modes: 4,
            points: 6,
        };
        for k in 0..4 {
            let set = sample(&Poly(k), &grid, &rule, &GAS).unwrap();
            let c = &set.get("density").unwrap().data;
            for i in 0..3 {
                for xi in [-1.0, -0.37, 0.0, 0.81, 1.0] {
                    let z = 0.5 * (edges[i] + edges[i + 1]) + 0.5 * (edges[i + 1] - edges[i]) * xi;
                    let f = reconstruct(&c[i * 4..i * 4 + 4], xi);
                    assert!(
                        (f / (2.0 + z.powi(k)) - 1.0).abs() < 1e-14,
                        "z^{k} cell {i} ξ {xi}"
                    );
                }
            }
        }
        // Smooth law e^(−z): the projection of degree < 3 errs by O(h³)
        // (L2 projection onto degree p: error O(h^(p+1)), common practice,
        // no source); observed order from 8, 16, 32 cells within 0.15 of 3.
        let mut errs = Vec::new();
        for cells in [8, 16, 32] {
            let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 2.0, cells).unwrap()]).unwrap();
            let rule = SamplingRule::Modes {
                modes: 3,
                points: 10,
            };
            let set = sample(&Slab, &grid, &rule, &GAS).unwrap();
            let c = &set.get("density").unwrap().data;
            let edges = &grid.axes()[0].edges;
            let mut worst = 0.0f64;
            for i in 0..cells {
                for xi in [-1.0, -0.5, 0.0, 0.5, 1.0] {
                    let z = 0.5 * (edges[i] + edges[i + 1]) + 0.5 * (edges[i + 1] - edges[i]) * xi;
                    worst = worst.max((reconstruct(&c[i * 3..i * 3 + 3], xi) - (-z).exp()).abs());
                }
            }
            errs.push(worst);
        }
        for w in errs.windows(2) {
            let order = (w[0] / w[1]).log2();
            assert!((order - 3.0).abs() < 0.15, "order {order} from {errs:?}");
        }
        // Polar grid, a state of R alone: coefficients [cell R, cell phi,
        // mode R, mode phi]; every mode with j_phi > 0 vanishes, and the
        // R modes rebuild 1/R at the cell's nodes.
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 3).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 2).unwrap();
        let grid = Grid::new(vec![r, phi]).unwrap();
        let rule = SamplingRule::Modes {
            modes: 3,
            points: 12,
        };
        let set = sample(&Disk, &grid, &rule, &GAS).unwrap();
        let c = &set.get("density").unwrap().data;
        assert_eq!(c.len(), 3 * 2 * 3 * 3);
        for (idx, v) in c.iter().enumerate() {
            if idx % 3 != 0 {
                assert!(v.abs() < 1e-14, "index {idx}: {v}"); // round-off of ~0.7
            }
        }
        let radial: Vec<f64> = (0..3).map(|jr| c[18 + jr * 3]).collect(); // cell (1, 0)
        let rr = 1.0 + (1.0 + 0.5 * (1.0 + 0.3)) / 3.0;
        assert!((reconstruct(&radial, 0.3) * rr - 1.0).abs() < 1e-3);
    }
}
