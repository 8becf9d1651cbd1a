//! Closures of disks with their vertical structure (balance.shape
//! `stratified_disk`, laws in R and z; design.md §2, last row).
//!
//! Owns: the vertically isothermal closure, c² = c²(R) and a given
//! midplane density ρ_mid(R):
//!
//!   ρ(R, z) = ρ_mid(R) exp(−(Φ(R, z) − Φ(R, 0))/c²(R)),  P = ρ c²,
//!
//! the full potential (point mass, softened or not, or any Φ(R, z)) rather
//! than the thin-disk Gaussian, and the rotation from the radial balance
//! with exact derivatives, which carries the vertical shear in closed form:
//!
//!   v_φ²(R, z) = R (∂Φ(R, 0)/∂R + ∂c²/∂R + c² ∂ln ρ_mid/∂R
//!                   + (Φ(R, z) − Φ(R, 0)) ∂ln c²/∂R).
//!
//! (For a point mass and power laws these are the closed forms of Nelson,
//! Gressel & Umurhan 2013, MNRAS 435, 2610, §2, for ρ and Ω; checked in
//! `tests/vertical.rs`.) Does not own: the shared start of
//! every closure (`laws`) or the background (`solved`).

use super::laws::{DerivedLaw, Laws, Parts};
use super::table::LawKey;
use super::ClosureError;
use crate::formula::{Expr, Func};
use crate::model::Model;

/// The law `e` must not depend on z (what the closure needs of it).
fn no_height(e: &Expr, key: &str, what: &str) -> Result<(), ClosureError> {
    if e.names().contains("z") {
        return Err(ClosureError::Incomplete(format!("{key}: {what}")));
    }
    Ok(())
}

/// Vertically isothermal disk, ρ_mid(R) and c²(R) given: ρ(R, z) from the
/// vertical balance in closed form, v_φ(R, z) from the radial balance.
pub(super) fn isothermal(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let why = k.why;
    let rho_mid = LawKey::Density.need(m, why)?;
    let c2 = LawKey::SoundSpeed.need(m, why)?;
    no_height(
        &rho_mid,
        "balance.density",
        "a stratified disk takes its midplane density ρ_mid(R); \
         the vertical structure is solved, so the law cannot depend on z",
    )?;
    no_height(
        &c2,
        "gas.sound_speed_sq (or gas.temperature)",
        "a sound speed that varies with height has no closed-form vertical structure: \
         set balance.vertical to \"quadrature\" to integrate each column, or give c^2(R)",
    )?;
    let (r, z) = ("R", "z");
    let phi = laws.potential.clone();
    let zero = [(z.to_string(), Expr::num(0.0))].into_iter().collect();
    let phi_mid = phi.substitute(&zero).simplify();
    let dphi = (phi.clone() - phi_mid.clone()).simplify();
    let rho =
        (rho_mid.clone() * Expr::call(Func::Exp, vec![-(dphi.clone() / c2.clone())])).simplify();
    let p = (rho.clone() * c2.clone()).simplify();
    let c2_r = c2.diff(r);
    let lnrho_r = (rho_mid.diff(r) / rho_mid.clone()).simplify();
    let v2 = (phi_mid.diff(r)
        + c2_r.clone()
        + c2.clone() * lnrho_r
        + dphi.clone() * c2_r.clone() / c2.clone())
    .distribute(k.r)
    .simplify();
    derived.push(DerivedLaw::new(
        "dPhi/dz",
        phi.diff(z),
        "derivative of the potential",
    ));
    derived.push(DerivedLaw::new(
        "rho",
        rho.clone(),
        "rho = rho_mid exp(-(Phi(R, z) - Phi(R, 0))/c^2), the vertical balance in closed form",
    ));
    derived.push(DerivedLaw::new("P", p.clone(), "P = rho c^2"));
    derived.push(DerivedLaw::new(
        "v_phi^2",
        v2.clone(),
        "v_phi^2 = R (dPhi(R,0)/dR + dc^2/dR + c^2 dln rho_mid/dR + (Phi(R,z) - Phi(R,0)) dln c^2/dR), \
         the radial balance with exact derivatives (vertical shear in closed form)",
    ));
    let shear = (v2.diff(z) / Expr::name(r)).simplify();
    derived.push(DerivedLaw::new(
        "d(v_phi^2)/dz / R",
        shear,
        "vertical shear: R dOmega^2/dz (exact derivative)",
    ));
    laws.watched.push(("pressure".into(), p.clone()));
    laws.density = Some(rho);
    laws.pressure = Some(p);
    laws.rotation_sq = Some(v2);
    Ok(())
}

impl Laws {
    /// The vertical balance residual of a stratified disk and its terms,
    /// (1/ρ) ∂P/∂z + ∂Φ/∂z, when the pressure is closed form.
    pub fn vertical_residual(&self, m: &Model) -> Option<(Expr, Vec<(String, Expr)>)> {
        if m.shape != crate::background::Shape::StratifiedDisk {
            return None;
        }
        let rho = self.density.clone()?;
        let p = self.pressure.clone()?;
        let phi_z = self.potential.diff("z");
        let grad = p.diff("z").distribute(&(Expr::num(1.0) / rho));
        let res = (grad.clone() + phi_z.clone()).simplify();
        Some((
            res,
            vec![("(1/rho) dP/dz".into(), grad), ("dPhi/dz".into(), phi_z)],
        ))
    }
}
