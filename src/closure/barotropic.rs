//! A barotropic gas, P = K ρ^Γ (`gas.barotropic`), in the one-dimensional
//! closures: the pressure and the sound speed follow from the density, and
//! a hydrostatic slab or sphere has the closed form of the Bernoulli
//! relation h(ρ) + Φ = C with the enthalpy h = Γ K ρ^(Γ−1)/(Γ−1) (e.g.
//! Chandrasekhar 1939, *An Introduction to the Study of Stellar Structure*,
//! ch. IV, polytropes; from memory), so nothing is integrated.
//!
//! Owns: the closure entries' formulas for a barotropic gas (slab and sphere
//! solved for density, a disk solved for rotation) and the formulas of the
//! gas law itself (P, c², h and ρ from h), which the torus reuses. Does not
//! own the table (`table`) or numbers.

use super::laws::{DerivedLaw, Gradients, Laws, Parts};
use super::table::LawKey;
use super::ClosureError;
use crate::formula::Expr;
use crate::keys::Keyed;
use crate::model::{Barotrope, Model};

impl Barotrope {
    fn k(&self) -> Expr {
        self.constant.clone()
    }

    fn g(&self) -> Expr {
        self.exponent.clone()
    }

    /// P = K ρ^Γ.
    pub fn pressure(&self, rho: &Expr) -> Expr {
        (self.k() * rho.clone().pow(self.g())).simplify()
    }

    /// c² = P/ρ = K ρ^(Γ−1).
    pub fn sound_speed_sq(&self, rho: &Expr) -> Expr {
        (self.k() * rho.clone().pow(self.g() - Expr::num(1.0))).simplify()
    }

    /// The enthalpy h = Γ K ρ^(Γ−1)/(Γ−1).
    pub fn enthalpy(&self, rho: &Expr) -> Expr {
        (self.g() * self.sound_speed_sq(rho) / (self.g() - Expr::num(1.0))).simplify()
    }

    /// ρ from the enthalpy: ρ = ((Γ−1) h/(Γ K))^(1/(Γ−1)).
    pub fn density_of_enthalpy(&self, h: &Expr) -> Expr {
        let one = Expr::num(1.0);
        let base = (self.g() - one.clone()) * h.clone() / (self.g() * self.k());
        base.pow(one.clone() / (self.g() - one)).simplify()
    }
}

/// The model's barotrope (a closure entry for a barotropic gas is only
/// chosen when there is one).
fn gas(m: &Model) -> Result<&Barotrope, ClosureError> {
    m.barotrope
        .as_ref()
        .ok_or_else(|| ClosureError::Incomplete("gas.barotropic is required".into()))
}

/// Slab or sphere, barotropic gas, ρ at the anchor: h(ρ) + Φ = h(ρ_a) + Φ_a,
/// so ρ(s) = ((Γ−1)/(Γ K) (h_a + Φ_a − Φ(s)))^(1/(Γ−1)) in closed form. An
/// anchor density 0 puts the surface (ρ = 0) at the anchor: the textbook
/// polytropic slab P ∝ (1 − z/z_top)^(Γ/(Γ−1)).
pub(super) fn hydrostatic_density(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let (s, b) = (k.s, gas(m)?);
    let anchor = m.anchor.ok_or_else(|| {
        ClosureError::Incomplete(format!(
            "balance.anchor is required: a barotropic {} is pinned by the density at a point \
             (anchor.at, anchor.value; a density 0 puts the surface there)",
            m.shape.key()
        ))
    })?;
    if anchor.value.is_nan() || anchor.value < 0.0 {
        return Err(ClosureError::NoEquilibrium(format!(
            "balance.anchor.value: the density at the anchor of a barotropic gas must be \
             positive or 0 (the surface), found {}",
            anchor.value
        )));
    }
    let at = [(s.to_string(), Expr::num(anchor.at))]
        .into_iter()
        .collect();
    let phi_a = laws.potential.substitute(&at);
    let h_a = if anchor.value > 0.0 {
        b.enthalpy(&Expr::num(anchor.value))
    } else {
        Expr::num(0.0)
    };
    let h = (h_a + phi_a - laws.potential.clone()).simplify();
    let rho = b.density_of_enthalpy(&h);
    let p = b.pressure(&rho);
    derived.push(DerivedLaw::new(
        "h",
        h,
        "h(rho) + Phi = const (Bernoulli), h = Gamma K rho^(Gamma-1)/(Gamma-1), pinned at the anchor",
    ));
    derived.push(DerivedLaw::new("rho", rho.clone(), "rho of h"));
    derived.push(DerivedLaw::new("P", p.clone(), "P = K rho^Gamma"));
    finish(b, laws, rho, p, s);
    Ok(())
}

/// ρ, P and c² of a barotropic state, and a slab's or sphere's gradients.
fn finish(b: &Barotrope, laws: &mut Laws, rho: Expr, p: Expr, s: &str) {
    laws.gradients = Some(Gradients {
        pressure: p.diff(s),
        per_pressure: true,
        density: (rho.diff(s) / rho.clone()).simplify(),
    });
    laws.watched.push(("pressure".into(), p.clone()));
    laws.sound_speed_sq = Some(b.sound_speed_sq(&rho));
    laws.density = Some(rho);
    laws.pressure = Some(p);
}

/// Disk, barotropic gas, ρ given: P = K ρ^Γ and v_φ² = R (Φ_R + P_R/ρ).
pub(super) fn disk_rotation(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let b = gas(m)?;
    let rho = LawKey::Density.need(m, k.why)?;
    let p = b.pressure(&rho);
    derived.push(DerivedLaw::new("P", p.clone(), "P = K rho^Gamma"));
    super::table::rotation_from_pressure(k, laws, derived, &rho, &p);
    laws.sound_speed_sq = Some(b.sound_speed_sq(&rho));
    Ok(())
}
