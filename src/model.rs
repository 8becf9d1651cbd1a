//! The resolved description of one equilibrium problem: parameters with
//! their values, the laws the user gave, gravity, gas, units and which
//! quantity the solver finds. A [`Model`] is built from a profile
//! (`crate::profile`) and read by closures, checks, tables and `derive`.
//!
//! Owns: the vocabulary of a problem and the lookup of names (parameters and
//! built-in constants). Does not own: JSON, solving, sampling or files.

use std::collections::BTreeMap;

use crate::background::Shape;
use crate::formula::{Expr, FormulaError, Program};
use crate::keys::Keyed;
use crate::units::{Constants, UnitSystem};

/// Which quantity the solver finds from the others.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Unknown {
    /// Disk: v_φ from ρ and c² (exact, symbolic).
    Rotation,
    /// Disk: ρ from v_φ, c² and ρ at an anchor; slab/sphere: P and ρ from c²
    /// and P at an anchor.
    Density,
    /// Disk: P from v_φ, ρ and P at an anchor; slab/sphere: P from ρ and P at
    /// an anchor.
    Pressure,
    /// Nothing: every law is given and the balance is only audited.
    Nothing,
}

impl Keyed for Unknown {
    const KEYS: &'static [(Unknown, &'static str)] = &[
        (Unknown::Rotation, "rotation"),
        (Unknown::Density, "density"),
        (Unknown::Pressure, "pressure"),
        (Unknown::Nothing, "nothing"),
    ];
}

/// How far the column integral of a surface-density normalisation runs
/// (`balance.column`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ColumnExtent {
    /// Over the grid's vertical extent.
    Grid,
    /// From −∞ to +∞ (until the density is negligible).
    Infinity,
}

impl Keyed for ColumnExtent {
    const KEYS: &'static [(ColumnExtent, &'static str)] = &[
        (ColumnExtent::Grid, "grid"),
        (ColumnExtent::Infinity, "infinity"),
    ];
}

/// How a stratified disk's vertical structure is found (`balance.vertical`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Vertical {
    /// Vertically isothermal, in closed form (the default).
    ClosedForm,
    /// c²(R, z) any law: the vertical balance integrated up each column.
    Quadrature,
}

impl Keyed for Vertical {
    const KEYS: &'static [(Vertical, &'static str)] = &[
        (Vertical::ClosedForm, "closed_form"),
        (Vertical::Quadrature, "quadrature"),
    ];
}

/// Where an integrated closure is pinned: the coordinate and the value of
/// the quantity there (density or pressure, depending on the closure).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Anchor {
    /// Coordinate of the anchor point.
    pub at: f64,
    /// Value of the anchored quantity there.
    pub value: f64,
}

/// One law as the user wrote it: the formula and where it came from.
#[derive(Clone, Debug, PartialEq)]
pub struct Law {
    /// The formula in the background coordinate and parameters.
    pub expr: Expr,
    /// Where it was written (a JSON path such as `balance.density`).
    pub origin: String,
}

/// A barotropic gas, P = K ρ^Γ (`gas.barotropic`): closures read P and c² =
/// P/ρ = K ρ^(Γ−1) from ρ, and the enthalpy h = Γ K ρ^(Γ−1)/(Γ−1).
#[derive(Clone, Debug, PartialEq)]
pub struct Barotrope {
    /// K, as written (a formula of parameters).
    pub constant: Expr,
    /// Γ, as written.
    pub exponent: Expr,
    /// The value of Γ (> 1).
    pub exponent_value: f64,
    /// Where it was written (`gas.barotropic`).
    pub origin: String,
}

/// What `balance.torus` gives: the rotation law, the edge condition and the
/// floor outside.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TorusLaws {
    /// Ω = Ω₀ (R/R₀)^(−a).
    pub rotation: crate::torus::RotationLaw,
    /// The inner edge or the Bernoulli constant.
    pub edge: crate::torus::Edge,
    /// Floor density and pressure outside the torus.
    pub floor: (f64, f64),
}

/// The resolved problem.
#[derive(Clone, Debug)]
pub struct Model {
    /// Short name of the profile.
    pub name: String,
    /// One-line description.
    pub about: String,
    /// Unit system of every number in the problem.
    pub units: UnitSystem,
    /// Parameters with their values, in dependency order.
    pub parameters: Vec<(String, f64)>,
    /// Parameters as the user wrote them (name, formula text).
    pub parameter_text: Vec<(String, String)>,
    /// The balance and its coordinate.
    pub shape: Shape,
    /// What the solver finds.
    pub unknown: Unknown,
    /// Given density law (ρ or Σ).
    pub density: Option<Law>,
    /// Given surface density Σ(R) of a stratified disk (instead of its
    /// midplane density), `balance.surface_density`.
    pub surface_density: Option<Law>,
    /// How far Σ's column integral runs (`balance.column`).
    pub column: Option<ColumnExtent>,
    /// How a stratified disk's vertical structure is found.
    pub vertical: Vertical,
    /// Given squared isothermal sound speed c² (a temperature law is already
    /// converted: c² = k_B T / (μ m_u)).
    pub sound_speed_sq: Option<Law>,
    /// A barotropic gas law P = K ρ^Γ, when given (never beside a sound
    /// speed or a temperature).
    pub barotrope: Option<Barotrope>,
    /// A barotropic torus (`balance.torus`): rotation law, edge condition
    /// and floor; built by [`crate::torus`], not by the closure table.
    pub torus: Option<TorusLaws>,
    /// Given rotation law v_φ.
    pub rotation: Option<Law>,
    /// Given pressure law (audits only).
    pub pressure: Option<Law>,
    /// Gravitational potential Φ in the background coordinate (the midplane
    /// z = 0 for disks).
    pub potential: Law,
    /// Φ in every coordinate of the background's frame: R and z for a disk
    /// (the law as written, not only its midplane); for a slab or a sphere
    /// the same law as `potential`.
    pub potential_field: Law,
    /// Anchor of integrated closures.
    pub anchor: Option<Anchor>,
    /// Adiabatic index γ used for the energy.
    pub gamma: f64,
    /// Mean molecular weight μ, when given (needed for temperatures).
    pub molecular_weight: Option<f64>,
    /// Disk fields are vertically integrated (Σ and ∫P dz) rather than
    /// midplane values.
    pub vertically_integrated: bool,
    /// Profile keys of laws whose jumps at their switch points are intended
    /// (`balance.intended_jumps`): `build` writes such a state with a
    /// caution instead of refusing it.
    pub intended_jumps: Vec<String>,
}

impl Model {
    /// The constants of the model's unit system.
    pub fn constants(&self) -> Constants {
        self.units.constants()
    }

    /// Built-in names available to every formula, with their values in the
    /// model's unit system: `G` always, `k_B` and `m_u` in physical units.
    pub fn builtin_names(units: UnitSystem) -> Vec<(String, f64)> {
        let c = units.constants();
        let mut v = vec![("G".to_string(), c.g)];
        if let (Some(k), Some(m)) = (c.k_b, c.m_u) {
            v.push(("k_B".to_string(), k));
            v.push(("m_u".to_string(), m));
        }
        v
    }

    /// The value of a parameter or built-in name.
    pub fn lookup(&self, name: &str) -> Option<f64> {
        self.parameters
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, v)| *v)
            .or_else(|| {
                Self::builtin_names(self.units)
                    .into_iter()
                    .find(|(n, _)| n == name)
                    .map(|(_, v)| v)
            })
    }

    /// Names as a law on the balance line reads them: the line coordinate
    /// is `x`, a height `z` is the midplane (0), the rest parameters and
    /// built-in names.
    pub fn line_lookup(&self, x: f64) -> impl Fn(&str) -> Option<f64> + '_ {
        let s = self.coordinate();
        move |n: &str| {
            if n == s {
                Some(x)
            } else if n == "z" {
                Some(0.0)
            } else {
                self.lookup(n)
            }
        }
    }

    /// The profile keys of the laws the model gives, potential last
    /// (`balance.density`, `gas.temperature`, `gravity.point_mass`, …).
    pub fn law_keys(&self) -> Vec<&str> {
        [
            &self.density,
            &self.sound_speed_sq,
            &self.rotation,
            &self.pressure,
        ]
        .into_iter()
        .flatten()
        .chain(std::iter::once(&self.potential))
        .map(|l| l.origin.as_str())
        .collect()
    }

    /// The name of the background coordinate (`R`, `z` or `r`).
    pub fn coordinate(&self) -> &'static str {
        self.shape.coordinate()
    }

    /// Compile a formula in the background coordinate, parameters folded in:
    /// a program on the balance line (for a stratified disk, its midplane
    /// z = 0; see [`Model::compile_field`] for (R, z)).
    pub fn compile(&self, expr: &Expr) -> Result<Program, FormulaError> {
        let lookup = |n: &str| self.lookup(n);
        if self.shape.variables().len() > 1 {
            let mid = [("z".to_string(), Expr::num(0.0))].into_iter().collect();
            return Program::compile(&expr.substitute(&mid), &[self.coordinate()], &lookup);
        }
        Program::compile(expr, &[self.coordinate()], &lookup)
    }

    /// Compile a formula in every coordinate its laws may use
    /// ([`Shape::variables`]: (R, z) for a stratified disk).
    pub fn compile_field(&self, expr: &Expr) -> Result<Program, FormulaError> {
        Program::compile(expr, self.shape.variables(), &|n| self.lookup(n))
    }

    /// Parameter values as a substitution map (for closed forms with numbers).
    pub fn parameter_map(&self) -> BTreeMap<String, Expr> {
        self.parameters
            .iter()
            .map(|(n, v)| (n.clone(), Expr::num(*v)))
            .collect()
    }

    /// μ m_u / k_B, so that T = factor × c²; None when the units have no
    /// Boltzmann constant or no molecular weight was given.
    pub fn temperature_per_c2(&self) -> Option<f64> {
        let c = self.constants();
        Some(self.molecular_weight? * c.m_u? / c.k_b?)
    }
}
