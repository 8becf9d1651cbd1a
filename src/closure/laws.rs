//! The symbolic side of a closure: from the model's laws, the formulas the
//! solver evaluates (closed forms and integrands) and the derivatives they
//! use, all by exact symbolic differentiation.
//!
//! Owns: the formulas every closure shares (the potential's derivative, the
//! refusals that hold for all), running a closure's entry of the closure
//! table (`table`), the residual of closed forms and the formulas for
//! `stillpoint derive`. Does not own: which laws each closure needs (the
//! table) or numbers.

use super::ClosureError;
use crate::background::Shape;
use crate::formula::Expr;
use crate::keys::Keyed;
use crate::model::{Model, Unknown};

/// The formulas a closure evaluates, in the background coordinate.
#[derive(Clone, Debug)]
pub struct Laws {
    /// Φ on the background coordinate (z = 0 for disks).
    pub potential: Expr,
    /// ρ, when closed form.
    pub density: Option<Expr>,
    /// c², when given.
    pub sound_speed_sq: Option<Expr>,
    /// P, when closed form.
    pub pressure: Option<Expr>,
    /// v_φ² for disks.
    pub rotation_sq: Option<Expr>,
    /// v_φ itself when the profile gives it (its sign is the sense of
    /// rotation, which v_φ² cannot carry).
    pub rotation: Option<Expr>,
    /// The integrand of integrated closures (d ln ρ/ds, dP/ds or d ln P/ds).
    pub integrand: Option<Expr>,
    /// The terms whose sum is the integrand (v_φ²/(R c²), Φ_R/c², … ): the
    /// scale of the integral-form residual is the integral of the largest of
    /// them, never of their sum, which is rounding noise where they cancel.
    pub integrand_terms: Vec<Expr>,
    /// The quantities whose derivative enters the balance (Φ always; P = ρc²
    /// where P is derived in closed form; c² where the integrand holds
    /// ∂c²/∂R; a given P in audits), by name. At a switch point each must be
    /// continuous: the derivative of a jump is lost when a piecewise law is
    /// differentiated piece by piece. A law that is not differentiated may
    /// jump (a contact: ρ and c² jump with P continuous).
    pub watched: Vec<(String, Expr)>,
    /// Slabs and spheres: the logarithmic gradients of P and ρ.
    pub gradients: Option<Gradients>,
    /// Everything derived, for printing.
    pub derived: Vec<DerivedLaw>,
    /// A stratified disk whose columns are integrated (c²(R, z)): the
    /// integrands and the midplane laws (see `column`).
    pub column: Option<super::column::ColumnLaws>,
}

/// The logarithmic gradients of a slab or sphere, from exact derivatives,
/// for its buoyancy frequency: d ln P/ds and d ln ρ/ds.
#[derive(Clone, Debug)]
pub struct Gradients {
    /// d ln P/ds; or dP/ds when `per_pressure` (an integrated pressure,
    /// whose gradient alone is a formula), to be divided by the state's P.
    pub pressure: Expr,
    /// `pressure` is dP/ds rather than d ln P/ds.
    pub per_pressure: bool,
    /// d ln ρ/ds.
    pub density: Expr,
}

/// A formula the solver derived or differentiated, for printing.
#[derive(Clone, Debug, PartialEq)]
pub struct DerivedLaw {
    /// What it is, e.g. `dPhi/dR` or `v_phi^2`.
    pub name: String,
    /// The formula.
    pub expr: Expr,
    /// How it was obtained.
    pub note: String,
}

impl DerivedLaw {
    pub(super) fn new(name: impl Into<String>, expr: Expr, note: impl Into<String>) -> DerivedLaw {
        DerivedLaw {
            name: name.into(),
            expr,
            note: note.into(),
        }
    }
}

/// What every closure's formulas start from.
pub struct Parts<'a> {
    /// The balance coordinate.
    pub s: &'a str,
    /// The coordinate as a formula.
    pub r: &'a Expr,
    /// ∂Φ/∂s.
    pub phi_s: &'a Expr,
    /// "solving a disk for rotation", for messages.
    pub why: &'a str,
}

/// Record the integrand of an integrated closure, the terms it sums, and
/// list it for `derive`.
pub(super) fn integrand(
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
    name: String,
    (f, terms): (Expr, Vec<Expr>),
    note: &str,
) {
    let note = format!("integrated from the anchor (double-exponential rule){note}");
    derived.push(DerivedLaw::new(name, f.clone(), note));
    laws.integrand = Some(f);
    laws.integrand_terms = terms;
}

/// Each term times `factor`, simplified.
pub(super) fn scaled(terms: &[&Expr], factor: &Expr) -> Vec<Expr> {
    terms
        .iter()
        .map(|t| ((*t).clone() * factor.clone()).simplify())
        .collect()
}

/// The law `key` (a full profile path such as `balance.density`) or an error
/// saying that it is required and why.
pub(super) fn need(
    law: &Option<crate::model::Law>,
    key: &str,
    why: &str,
) -> Result<Expr, ClosureError> {
    law.as_ref()
        .map(|l| l.expr.clone())
        .ok_or_else(|| ClosureError::Incomplete(format!("{key} is required when {why}")))
}

pub(super) fn refuse(
    law: &Option<crate::model::Law>,
    key: &str,
    why: &str,
) -> Result<(), ClosureError> {
    match law {
        Some(l) => Err(ClosureError::Incomplete(format!(
            "{}: a {key} law cannot be given when {why} (it would over-determine the balance)",
            l.origin
        ))),
        None => Ok(()),
    }
}

/// Where a profile gives the sound speed.
pub(super) const SOUND_SPEED: &str = "gas.sound_speed_sq (or gas.temperature)";

impl Laws {
    /// Build the formulas of the model's closure.
    pub fn build(m: &Model) -> Result<Laws, ClosureError> {
        let s = m.coordinate();
        // A stratified disk's balance holds in (R, z): its potential is the
        // field, not its midplane.
        let phi = match m.shape {
            Shape::StratifiedDisk => m.potential_field.expr.clone(),
            _ => m.potential.expr.clone(),
        };
        let phi_s = phi.diff(s);
        let mut derived = vec![DerivedLaw::new(
            format!("dPhi/d{s}"),
            phi_s.clone(),
            "derivative of the potential",
        )];
        let mut laws = Laws {
            potential: phi,
            density: None,
            sound_speed_sq: m.sound_speed_sq.as_ref().map(|l| l.expr.clone()),
            pressure: None,
            rotation_sq: None,
            rotation: m.rotation.as_ref().map(|l| l.expr.clone()),
            integrand: None,
            integrand_terms: Vec::new(),
            watched: Vec::new(),
            gradients: None,
            derived: Vec::new(),
            column: None,
        };
        let disk = m.shape.is_disk();
        let r = Expr::name(s);
        if !disk {
            refuse(&m.rotation, "rotation", "the balance is a slab or a sphere")?;
        }
        let why = format!("solving a {} for {}", m.shape.key(), m.unknown.key());
        if m.unknown != Unknown::Nothing {
            // Every closure derives P (P = ρ c², or by integration): a given
            // pressure law would be ignored, and the file would carry another.
            refuse(&m.pressure, "pressure", &why)?;
        }
        let closure = super::table::closure_of(m)?;
        for key in closure.requires {
            key.need(m, &why)?;
        }
        for key in closure.refuses {
            key.refuse(m, &why)?;
        }
        (closure.build)(
            m,
            &Parts {
                s,
                r: &r,
                phi_s: &phi_s,
                why: &why,
            },
            &mut laws,
            &mut derived,
        )?;
        laws.watched
            .push(("potential".into(), laws.potential.clone()));
        laws.derived = derived;
        Ok(laws)
    }

    /// The balance residual and its terms as formulas, when the pressure is
    /// closed form: disk v²/R − Φ_R − P_R/ρ; slab/sphere P_s/ρ + Φ_s.
    pub fn residual(&self, m: &Model) -> Option<(Expr, Vec<(String, Expr)>)> {
        let s = m.coordinate();
        let rho = self.density.clone()?;
        let p = self.pressure.clone()?;
        let phi_s = self.potential.diff(s);
        let grad = p.diff(s).distribute(&(Expr::num(1.0) / rho));
        if m.shape.is_disk() {
            let cen = (self.rotation_sq.clone()? / Expr::name(s)).simplify();
            let res = (cen.clone() - phi_s.clone() - grad.clone()).simplify();
            Some((
                res,
                vec![
                    ("v_phi^2/R".into(), cen),
                    ("dPhi/dR".into(), phi_s),
                    ("(1/rho) dP/dR".into(), grad),
                ],
            ))
        } else {
            let res = (grad.clone() + phi_s.clone()).simplify();
            Some((
                res,
                vec![
                    (format!("(1/rho) dP/d{s}"), grad),
                    (format!("dPhi/d{s}"), phi_s),
                ],
            ))
        }
    }
}

/// The formulas `stillpoint derive` prints for a model.
pub fn derived_laws(m: &Model) -> Result<Vec<DerivedLaw>, ClosureError> {
    Ok(Laws::build(m)?.derived)
}
