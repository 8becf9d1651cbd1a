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
//!
//! Velocity components are named by [`Grid::velocity_components`]: the
//! rotation v_φ is projected on e_φ (on a Cartesian grid v_x = −v_φ y/R,
//! v_y = v_φ x/R).

pub mod gauss;
mod perturbed;
mod slots;
mod stream;

use thiserror::Error;

use crate::background::Background;
use crate::fields::{Field, FieldSet};
use crate::grid::{Embedding, Grid};
use gauss::MAX_POINTS;
pub use stream::Sampler;

/// How a cell's value is taken from the background.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
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
        }
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
    #[error("cell averages need 1 to {MAX_POINTS} points per axis, got {points}")]
    Points {
        /// The number asked for.
        points: usize,
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
    let sampler = Sampler::new(bg, grid, rule, gas)?;
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
    if let SamplingRule::Average { points } = *rule {
        if !(1..=MAX_POINTS).contains(&points) {
            return Err(SampleError::Points { points });
        }
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
}
