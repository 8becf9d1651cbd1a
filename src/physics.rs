//! Gravity and gas as formulas: the potentials a profile can name and the
//! ideal-gas link between temperature and sound speed. Everything here
//! returns an [`Expr`] in the background coordinate so that closures can
//! differentiate it exactly and `derive` can print it.
//!
//! Owns: the physics of each potential and of the ideal-gas closure. Does
//! not own: reading profiles (`profile`) or solving (`closure`).

use crate::background::Shape;
use crate::formula::{Expr, Func};

/// Uniform gravity of strength `g` along the slab coordinate: Φ = g s.
pub fn uniform_potential(shape: Shape, g: Expr) -> Expr {
    (g * Expr::name(shape.coordinate())).simplify()
}

/// A point mass `mass` at the origin, Φ = −G M / s, optionally softened as
/// a Plummer (1911, MNRAS 71, 460) sphere: Φ = −G M / √(s² + ε²). `G` stays
/// a name, resolved in the model's unit system. R and r are never negative;
/// a slab's z is, so an unsoftened slab uses |z|.
pub fn point_mass_potential(shape: Shape, mass: Expr, softening: Option<Expr>) -> Expr {
    let s = Expr::name(shape.coordinate());
    let gm = Expr::name("G") * mass;
    match softening {
        Some(eps) => {
            let r2 = s.clone() * s + eps.clone() * eps;
            -gm * Expr::call(Func::Sqrt, vec![r2]).pow(Expr::num(-1.0))
        }
        None if shape == Shape::Slab => -gm / Expr::call(Func::Abs, vec![s]),
        None => -gm / s,
    }
    .simplify()
}

/// The point-mass potential in every coordinate of the balance's frame: for
/// a disk Φ(R, z) = −G M / √(R² + z² + ε²) (Plummer-softened with ε when
/// given); for a slab or a sphere the same law as [`point_mass_potential`].
pub fn point_mass_field(shape: Shape, mass: Expr, softening: Option<Expr>) -> Expr {
    if !shape.is_disk() {
        return point_mass_potential(shape, mass, softening);
    }
    let (r, z) = (Expr::name("R"), Expr::name("z"));
    let mut r2 = r.clone() * r + z.clone() * z;
    if let Some(eps) = softening {
        r2 = r2 + eps.clone() * eps;
    }
    (-(Expr::name("G") * mass) * Expr::call(Func::Sqrt, vec![r2]).pow(Expr::num(-1.0))).simplify()
}

/// The isothermal sound speed squared of an ideal gas at temperature `t`
/// with mean molecular weight `mu`: c² = k_B T / (μ m_u). `k_B` and `m_u`
/// stay names (built-ins of physical unit systems) so derived laws print
/// readably.
pub fn sound_speed_sq_from_temperature(t: Expr, mu: Expr) -> Expr {
    (Expr::name("k_B") * t / (mu * Expr::name("m_u"))).simplify()
}

/// Whether an adiabatic index means an isothermal gas: γ = 1 (to a few
/// units in the last place), P = ρc² with no energy equation of its own.
pub fn is_isothermal(gamma: f64) -> bool {
    (gamma - 1.0).abs() <= 4.0 * f64::EPSILON
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(e: &Expr, s: &str, x: f64, extra: &[(&str, f64)]) -> f64 {
        e.eval(&|n| {
            if n == s {
                Some(x)
            } else {
                extra.iter().find(|(k, _)| *k == n).map(|(_, v)| *v)
            }
        })
        .unwrap()
    }

    #[test]
    fn plummer_potential_and_its_force() {
        // Plummer (1911): Φ = −GM/√(r² + ε²), ∂Φ/∂r = GM r/(r² + ε²)^(3/2).
        let phi = point_mass_potential(Shape::Spherical, Expr::name("M"), Some(Expr::num(0.5)));
        let k = [("G", 2.0), ("M", 3.0)];
        let r: f64 = 1.5;
        let want = -6.0 / (r * r + 0.25).sqrt();
        assert!((at(&phi, "r", r, &k) - want).abs() < 1e-15);
        let force = at(&phi.diff("r"), "r", r, &k);
        assert!((force - 6.0 * r / (r * r + 0.25).powf(1.5)).abs() < 1e-15);
    }

    #[test]
    fn unsoftened_slab_uses_the_distance() {
        let phi = point_mass_potential(Shape::Slab, Expr::num(1.0), None);
        assert!((at(&phi, "z", -2.0, &[("G", 1.0)]) + 0.5).abs() < 1e-15);
    }

    #[test]
    fn ideal_gas_sound_speed() {
        // c² = k_B T/(μ m_u): T = 300 K, μ = 2 in SI (CODATA 2018 constants).
        let c2 = sound_speed_sq_from_temperature(Expr::num(300.0), Expr::num(2.0));
        let v = at(
            &c2,
            "z",
            0.0,
            &[("k_B", crate::units::K_B_SI), ("m_u", crate::units::M_U_SI)],
        );
        let want = crate::units::K_B_SI * 300.0 / (2.0 * crate::units::M_U_SI);
        assert!((v / want - 1.0).abs() < 1e-15);
    }
}
