//! Perturbations: what is added to the equilibrium to make an initial
//! condition — Gaussian pulses, planets, noise, azimuthal modes, linear
//! sound waves and free formulas.
//!
//! Owns: the description of each kind ([`Perturbation`], read from the
//! profile by `profile`), binding a list of them to a model, grid and
//! background ([`Perturbations::bind`]), and their values over a block of
//! points ([`Perturbations::apply`]): the change δ of density, pressure,
//! potential and velocity (in the frame's basis) and extra fields of their
//! own (a planet's potential). Does not own the background, the sampling
//! rule or any file.
//!
//! Every perturbation is computed from the background state alone, never
//! from another perturbation, and the changes add: the order of a list does
//! not change the result (to round-off of the sum).
//!
//! Noise is drawn from a counter-based stream ([`rng`]) keyed on the seed,
//! the field and the global index of the cell, so it is the same value for
//! every quadrature point of a cell and the same bytes for any thread count,
//! slab size or split of the domain.

mod kinds;
mod points;
pub mod report;
pub mod rng;

pub use kinds::velocity_directions;
pub use points::{column, Points, COORDS};

use crate::background::{Background, StateBlock};
use crate::formula::Expr;
use crate::grid::{Coord, Grid};
use crate::model::Model;
use kinds::{Basis, Bound};

/// A field a perturbation acts on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Field {
    /// Density ρ.
    Density,
    /// Pressure P.
    Pressure,
    /// Gravitational potential Φ.
    Potential,
    /// One velocity component along a coordinate direction (e_R, e_φ, e_z,
    /// e_x, e_y or e_r).
    Velocity(Coord),
}

impl Field {
    /// The field's name in profiles and files (`density`, `velocity_R`, …).
    pub fn name(self) -> String {
        match self {
            Field::Density => "density".into(),
            Field::Pressure => "pressure".into(),
            Field::Potential => "potential".into(),
            Field::Velocity(c) => format!("velocity_{}", c.name()),
        }
    }

    /// The field named `name`, if it is one a perturbation can act on on
    /// `grid` (a velocity component must lie in the span of the components
    /// the grid writes, see [`velocity_directions`]).
    pub fn parse(name: &str, grid: &Grid) -> Option<Field> {
        match name {
            "density" => Some(Field::Density),
            "pressure" => Some(Field::Pressure),
            "potential" => Some(Field::Potential),
            _ => {
                let c = Coord::from_name(name.strip_prefix("velocity_")?)?;
                velocity_directions(grid)
                    .contains(&c)
                    .then_some(Field::Velocity(c))
            }
        }
    }

    /// The names of the fields a perturbation can act on on `grid`.
    pub fn names(grid: &Grid) -> Vec<String> {
        let mut out = vec!["density".into(), "pressure".into(), "potential".into()];
        out.extend(
            velocity_directions(grid)
                .into_iter()
                .map(|c| Field::Velocity(c).name()),
        );
        out
    }

    /// A number for random streams, distinct per field.
    fn stream(self) -> u64 {
        match self {
            Field::Density => 1,
            Field::Pressure => 2,
            Field::Potential => 3,
            Field::Velocity(c) => 10 + Coord::ALL.iter().position(|a| *a == c).unwrap_or(0) as u64,
        }
    }
}

/// What an amplitude is measured in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scale {
    /// In the field's own units.
    Absolute,
    /// A fraction of the local background value of the field.
    Value,
    /// A fraction of the local adiabatic sound speed √(γP/ρ) (velocities).
    SoundSpeed,
}

/// What a pressure change leaves fixed; the density follows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Keep {
    /// ρ unchanged.
    Density,
    /// Entropy unchanged (adiabatic): ρ' = ρ (P'/P)^(1/γ).
    Entropy,
    /// Temperature unchanged: ρ' = ρ P'/P.
    Temperature,
}

/// The field, amplitude and scale shared by pulses, noise, modes and
/// formulas.
#[derive(Clone, Debug, PartialEq)]
pub struct Target {
    /// The field changed.
    pub field: Field,
    /// The amplitude (1 for a formula, whose value is the change).
    pub amplitude: f64,
    /// What the amplitude is measured in.
    pub scale: Scale,
    /// For pressure: what is kept fixed.
    pub keep: Keep,
}

/// Uniform or Gaussian noise.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Distribution {
    /// Uniform on [−A, A].
    Uniform,
    /// Normal with standard deviation A.
    Gaussian,
}

/// A planet's softening length.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Softening {
    /// A length.
    Length(f64),
    /// A fraction of the disk's scale height H = c/Ω_K at the planet's
    /// orbit (c² = P/ρ of the background at (a, z = 0)).
    ScaleHeights(f64),
}

/// One kind of perturbation with its parameters.
#[derive(Clone, Debug, PartialEq)]
pub enum Kind {
    /// A Gaussian A·exp(−Σ_k (q_k − c_k)²/(2 w_k²)) over the named
    /// coordinates (φ differences wrapped to (−π, π]).
    Pulse {
        /// The field and amplitude.
        target: Target,
        /// (coordinate index in [`COORDS`], centre, width).
        axes: Vec<(usize, f64, f64)>,
    },
    /// A planet of mass ratio q on a circular orbit of radius a at azimuth
    /// φ_p in the midplane: Φ_p = −G q M/√(|x − x_p|² + ε²), plus the
    /// indirect term G q M (x·x_p)/a³ in a frame centred on the star.
    Planet {
        /// Planet mass over central mass.
        mass_ratio: f64,
        /// Orbital radius a.
        radius: f64,
        /// Azimuth φ_p.
        azimuth: f64,
        /// Softening length ε.
        softening: Softening,
        /// Add the indirect term.
        indirect: bool,
        /// G M of the central mass.
        central_gm: f64,
        /// Also add Φ_p to the state's potential.
        in_potential: bool,
    },
    /// Random noise A·ξ, ξ from the distribution, per cell.
    Noise {
        /// The field and amplitude.
        target: Target,
        /// The distribution of ξ.
        distribution: Distribution,
        /// The seed.
        seed: u64,
        /// Azimuthal wavenumbers m₁..=m₂ the noise is restricted to.
        band: Option<(u32, u32)>,
    },
    /// A·f_R·f_z·cos(mφ − phase).
    Mode {
        /// The field and amplitude.
        target: Target,
        /// Azimuthal wavenumber.
        m: u32,
        /// Phase.
        phase: f64,
        /// Radial envelope (a formula of the coordinates; None is 1).
        radial: Option<Expr>,
        /// Vertical envelope (None is 1).
        vertical: Option<Expr>,
    },
    /// A linear sound wave travelling along k: δρ/ρ = A cos θ, δv = A c k̂
    /// cos θ, δP = c² δρ, θ = k·x + phase, c² = γP/ρ local.
    SoundWave {
        /// δρ/ρ.
        amplitude: f64,
        /// The wave vector (x, y, z).
        k: [f64; 3],
        /// Phase.
        phase: f64,
    },
    /// A formula of the coordinates and parameters added to a field.
    Formula {
        /// The field (amplitude 1; the scale multiplies the formula).
        target: Target,
        /// The formula.
        expr: Expr,
    },
}

/// A perturbation as written in a profile.
#[derive(Clone, Debug, PartialEq)]
pub struct Perturbation {
    /// Where it was written (`perturbations[2]`), for errors and metadata.
    pub origin: String,
    /// What it is.
    pub kind: Kind,
}

impl Perturbation {
    /// The kind's name in profiles.
    pub fn kind_name(&self) -> &'static str {
        match self.kind {
            Kind::Pulse { .. } => "pulse",
            Kind::Planet { .. } => "planet",
            Kind::Noise { .. } => "noise",
            Kind::Mode { .. } => "mode",
            Kind::SoundWave { .. } => "sound_wave",
            Kind::Formula { .. } => "formula",
        }
    }
}

/// A perturbation that cannot be set up on this model, grid or background.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{origin}: {message}")]
pub struct PerturbError {
    /// The profile path of the perturbation.
    pub origin: String,
    /// What is wrong.
    pub message: String,
}

/// The name of the extra field holding the planets' potential.
pub const PLANET_POTENTIAL: &str = "planet_potential";

/// Perturbations bound to a model, a grid and a background, ready to be
/// applied to blocks of points.
pub struct Perturbations {
    items: Vec<Bound>,
    basis: Basis,
    gamma: f64,
    extras: Vec<&'static str>,
}

/// The parameters a perturbation was bound with, for metadata.
#[derive(Clone, Debug, PartialEq)]
pub struct Record {
    /// Where it was written (`perturbations[0]`).
    pub origin: String,
    /// The kind's profile name.
    pub kind: &'static str,
    /// (name, value) of each parameter.
    pub values: Vec<(String, f64)>,
}

/// Scratch one thread reuses for every block.
#[derive(Debug, Default)]
pub struct Scratch {
    shape: Vec<f64>,
    env: Vec<f64>,
    ws: crate::formula::Workspace,
}

impl Perturbations {
    /// Bind `list` to `model`, `grid` and `bg` (compiles formulas, finds a
    /// planet's scale height from the background). Errors name the
    /// perturbation at fault.
    pub fn bind(
        list: &[Perturbation],
        model: &Model,
        grid: &Grid,
        bg: &dyn Background,
    ) -> Result<Perturbations, PerturbError> {
        let items = list
            .iter()
            .map(|p| Bound::new(p, model, grid, bg))
            .collect::<Result<Vec<_>, _>>()?;
        let extras = if items.iter().any(Bound::is_planet) {
            vec![PLANET_POTENTIAL]
        } else {
            Vec::new()
        };
        Ok(Perturbations {
            items,
            basis: Basis::new(bg.frame(), grid),
            gamma: model.gamma,
            extras,
        })
    }

    /// True when there is nothing to apply.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    /// The names of the extra fields [`Perturbations::apply`] fills, in the
    /// order of its `extras` argument.
    pub fn extra_fields(&self) -> &[&'static str] {
        &self.extras
    }

    /// The parameters each perturbation was bound with — resolved values
    /// such as a planet's softening length — for metadata.
    pub fn parameters(&self) -> Vec<Record> {
        self.items.iter().map(Bound::parameters).collect()
    }

    /// The changes at `pts.len` points with background states `bg` and
    /// global cell indices `cells` (C order over the whole grid): δ of
    /// density, pressure, potential and velocity (frame basis) into `delta`
    /// (overwritten; accelerations untouched), extra fields into `extras`
    /// (one slice per [`Perturbations::extra_fields`], overwritten).
    pub fn apply(
        &self,
        pts: &Points,
        cells: &[u64],
        bg: &StateBlock,
        delta: &mut StateBlock,
        extras: &mut [Vec<f64>],
        scratch: &mut Scratch,
    ) {
        let n = pts.len;
        delta.len = n;
        delta.density[..n].fill(0.0);
        delta.pressure[..n].fill(0.0);
        delta.potential[..n].fill(0.0);
        for v in &mut delta.velocity {
            v[..n].fill(0.0);
        }
        for e in extras.iter_mut() {
            e[..n].fill(0.0);
        }
        scratch.shape.resize(n.max(scratch.shape.len()), 0.0);
        scratch.env.resize(n.max(scratch.env.len()), 0.0);
        let ctx = kinds::Ctx {
            basis: self.basis,
            gamma: self.gamma,
            pts,
            cells,
            bg,
        };
        for item in &self.items {
            item.apply(&ctx, delta, extras, scratch);
        }
    }
}

#[cfg(test)]
mod tests;
