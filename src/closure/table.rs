//! The closure table: one entry per closure — the balance it solves, what it
//! finds, the laws it requires and those it refuses as over-determining,
//! the quantity it integrates (if any, which is also its check form: the
//! closed-form residual or the balance in integral form), and how it builds
//! its formulas. Laws, solving and checking all read this one table, so a
//! new closure (a vertical or a torus closure) is a new entry.
//!
//! Owns: the entries and their formulas (design.md §2). Does not own: the
//! shared start of every closure (`laws`), numbers, or the background built
//! from the formulas (`solved`).

use super::laws::{
    integrand, need, refuse, scaled, DerivedLaw, Gradients, Laws, Parts, SOUND_SPEED,
};
use super::ClosureError;
use crate::background::{Shape, State};
use crate::formula::Expr;
use crate::model::{Law, Model, Unknown};

/// A law a profile may give, for the table's requirements and refusals.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LawKey {
    /// `balance.density`.
    Density,
    /// `gas.sound_speed_sq` or `gas.temperature`.
    SoundSpeed,
    /// `balance.rotation`.
    Rotation,
    /// `balance.pressure`.
    Pressure,
}

impl LawKey {
    fn law(self, m: &Model) -> &Option<Law> {
        match self {
            LawKey::Density => &m.density,
            LawKey::SoundSpeed => &m.sound_speed_sq,
            LawKey::Rotation => &m.rotation,
            LawKey::Pressure => &m.pressure,
        }
    }

    /// Where a profile gives it, for "is required" messages.
    fn key(self) -> &'static str {
        match self {
            LawKey::Density => "balance.density",
            LawKey::SoundSpeed => SOUND_SPEED,
            LawKey::Rotation => "balance.rotation",
            LawKey::Pressure => "balance.pressure",
        }
    }

    /// What it is, for "cannot be given" messages.
    fn label(self) -> &'static str {
        match self {
            LawKey::Density => "density",
            LawKey::SoundSpeed => "sound speed or temperature",
            LawKey::Rotation => "rotation",
            LawKey::Pressure => "pressure",
        }
    }

    /// The law, or an error saying it is required and why.
    pub fn need(self, m: &Model, why: &str) -> Result<Expr, ClosureError> {
        need(self.law(m), self.key(), why)
    }

    /// Nothing, or an error naming the law given that would over-determine
    /// the balance.
    pub fn refuse(self, m: &Model, why: &str) -> Result<(), ClosureError> {
        refuse(self.law(m), self.label(), why)
    }
}

/// Which quantity an integrated closure tabulates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Integrated {
    /// ln ρ (disk, found density).
    LogDensity,
    /// P itself (found pressure).
    Pressure,
    /// ln P (slab or sphere, found pressure and density from c²).
    LogPressure,
}

impl Integrated {
    /// The integrated quantity of a state: ln ρ, P or ln P.
    pub fn of(self, st: &State) -> f64 {
        match self {
            Integrated::LogDensity => st.density.ln(),
            Integrated::Pressure => st.pressure,
            Integrated::LogPressure => st.pressure.ln(),
        }
    }

    /// What the anchor's value is: a density or a pressure.
    pub fn anchored(self) -> &'static str {
        match self {
            Integrated::LogDensity => "density",
            Integrated::Pressure | Integrated::LogPressure => "pressure",
        }
    }
}

/// Which balances an entry serves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Serves {
    /// The disk midplane (or a vertically integrated disk).
    Disk,
    /// Slabs and spheres: hydrostatic along their coordinate.
    Hydrostatic,
    /// Disks with their vertical structure (laws in R and z), vertically
    /// isothermal in closed form.
    Stratified,
    /// Disks with their vertical structure integrated up each column
    /// (`balance.vertical` "quadrature", or a surface density given).
    Column,
    /// Every balance (the audit).
    Any,
}

impl Serves {
    fn serves(self, shape: Shape) -> bool {
        match self {
            Serves::Disk => shape == Shape::DiskMidplane,
            Serves::Hydrostatic => !shape.is_disk(),
            Serves::Stratified => shape == Shape::StratifiedDisk,
            Serves::Column => false,
            Serves::Any => true,
        }
    }
}

/// Which gas an entry is for: the pressure free of the density (a sound
/// speed given or none), or tied to it by a barotrope P = K ρ^Γ.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Gas {
    /// No barotrope (c² given, or P found by integration).
    Free,
    /// `gas.barotropic`.
    Barotropic,
    /// Either (the audit).
    Any,
}

impl Gas {
    /// The gas of a model.
    pub fn of(m: &Model) -> Gas {
        if m.barotrope.is_some() {
            Gas::Barotropic
        } else {
            Gas::Free
        }
    }

    fn fits(self, gas: Gas) -> bool {
        self == Gas::Any || self == gas
    }
}

/// How an entry builds its formulas into `laws` (the shared ones are there
/// already), listing what it derives for `derive`.
pub type Build = fn(&Model, &Parts, &mut Laws, &mut Vec<DerivedLaw>) -> Result<(), ClosureError>;

/// One closure.
pub struct Closure {
    /// The balances it serves.
    pub serves: Serves,
    /// What it finds (`balance.solve_for`).
    pub unknown: Unknown,
    /// The gas it is for.
    pub gas: Gas,
    /// Laws the profile must give, in the order they are asked for.
    pub requires: &'static [LawKey],
    /// Laws the profile must not give.
    pub refuses: &'static [LawKey],
    /// The tabulated quantity; None for closed forms, which are checked by
    /// their residual.
    pub integrates: Option<Integrated>,
    /// Its formulas.
    pub build: Build,
}

/// Every closure (design.md §2, the one-dimensional rows).
pub static CLOSURES: &[Closure] = &[
    Closure {
        serves: Serves::Disk,
        unknown: Unknown::Rotation,
        gas: Gas::Free,
        requires: &[LawKey::Density, LawKey::SoundSpeed],
        refuses: &[LawKey::Rotation],
        integrates: None,
        build: disk_rotation,
    },
    Closure {
        serves: Serves::Disk,
        unknown: Unknown::Density,
        gas: Gas::Free,
        requires: &[LawKey::Rotation, LawKey::SoundSpeed],
        refuses: &[LawKey::Density],
        integrates: Some(Integrated::LogDensity),
        build: disk_density,
    },
    Closure {
        serves: Serves::Disk,
        unknown: Unknown::Pressure,
        gas: Gas::Free,
        requires: &[LawKey::Rotation, LawKey::Density],
        refuses: &[LawKey::SoundSpeed],
        integrates: Some(Integrated::Pressure),
        build: disk_pressure,
    },
    Closure {
        serves: Serves::Hydrostatic,
        unknown: Unknown::Density,
        gas: Gas::Free,
        requires: &[LawKey::SoundSpeed],
        refuses: &[LawKey::Density],
        integrates: Some(Integrated::LogPressure),
        build: hydrostatic_density,
    },
    Closure {
        serves: Serves::Hydrostatic,
        unknown: Unknown::Pressure,
        gas: Gas::Free,
        requires: &[LawKey::Density],
        refuses: &[LawKey::SoundSpeed],
        integrates: Some(Integrated::Pressure),
        build: hydrostatic_pressure,
    },
    Closure {
        serves: Serves::Hydrostatic,
        unknown: Unknown::Density,
        gas: Gas::Barotropic,
        requires: &[],
        refuses: &[LawKey::Density],
        integrates: None,
        build: super::barotropic::hydrostatic_density,
    },
    Closure {
        serves: Serves::Disk,
        unknown: Unknown::Rotation,
        gas: Gas::Barotropic,
        requires: &[LawKey::Density],
        refuses: &[LawKey::Rotation],
        integrates: None,
        build: super::barotropic::disk_rotation,
    },
    Closure {
        serves: Serves::Stratified,
        unknown: Unknown::Rotation,
        gas: Gas::Free,
        requires: &[LawKey::Density, LawKey::SoundSpeed],
        refuses: &[LawKey::Rotation],
        integrates: None,
        build: super::vertical::isothermal,
    },
    Closure {
        serves: Serves::Column,
        unknown: Unknown::Rotation,
        gas: Gas::Free,
        requires: &[LawKey::SoundSpeed],
        refuses: &[LawKey::Rotation],
        integrates: None,
        build: super::column::layered,
    },
    Closure {
        serves: Serves::Any,
        unknown: Unknown::Nothing,
        gas: Gas::Any,
        requires: &[],
        refuses: &[],
        integrates: None,
        build: audit,
    },
];

/// The entry for a balance, an unknown and a gas, or an error saying there
/// is none.
pub fn closure_for(
    shape: Shape,
    unknown: Unknown,
    gas: Gas,
) -> Result<&'static Closure, ClosureError> {
    CLOSURES
        .iter()
        .find(|c| c.unknown == unknown && c.serves.serves(shape) && c.gas.fits(gas))
        .ok_or_else(|| {
            ClosureError::Incomplete(
                if gas == Gas::Barotropic
                    && unknown == Unknown::Density
                    && shape == Shape::DiskMidplane
                {
                    "balance.solve_for: a barotropic disk solved for density is a torus: give \
                 balance.torus (its rotation law, edge and floor); `check` and `build` read it"
                        .into()
                } else if gas == Gas::Barotropic && unknown != Unknown::Rotation {
                    "balance.solve_for: gas.barotropic ties P = K rho^Gamma to the density, so \
                 solve for density (a slab or a sphere), rotation (a disk with a density law) \
                 or nothing (an audit)"
                        .into()
                } else if gas == Gas::Barotropic && shape == Shape::DiskMidplane {
                    "balance.solve_for: a barotropic disk is solved for rotation".into()
                } else if shape == Shape::StratifiedDisk {
                    "balance.solve_for: a stratified disk is solved for its rotation \
                     (give its midplane density and its sound speed)"
                        .into()
                } else {
                    "balance.solve_for: a slab or a sphere has no rotation to solve for".into()
                },
            )
        })
}

/// The entry of a model. A stratified disk solved for rotation with
/// `balance.vertical` "quadrature" or a surface density integrates its
/// columns.
pub fn closure_of(m: &Model) -> Result<&'static Closure, ClosureError> {
    let columns = m.vertical == crate::model::Vertical::Quadrature || m.surface_density.is_some();
    if m.shape == Shape::StratifiedDisk
        && m.unknown == Unknown::Rotation
        && Gas::of(m) == Gas::Free
        && columns
    {
        if let Some(c) = CLOSURES.iter().find(|c| c.serves == Serves::Column) {
            return Ok(c);
        }
    }
    if m.surface_density.is_some() {
        return Err(ClosureError::Incomplete(
            "balance.surface_density normalises a stratified disk solved for rotation \
             (balance.shape \"stratified_disk\", balance.solve_for \"rotation\")"
                .into(),
        ));
    }
    closure_for(m.shape, m.unknown, Gas::of(m))
}

/// Disk, ρ and c² given: v_φ² = R (∂Φ/∂R + (1/ρ) ∂P/∂R), P = ρc².
fn disk_rotation(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let why = k.why;
    let rho = LawKey::Density.need(m, why)?;
    let c2 = LawKey::SoundSpeed.need(m, why)?;
    let p = (rho.clone() * c2).simplify();
    derived.push(DerivedLaw::new("P", p.clone(), "P = rho c^2"));
    rotation_from_pressure(k, laws, derived, &rho, &p);
    Ok(())
}

/// v_φ² = R (∂Φ/∂R + (1/ρ) ∂P/∂R) for a disk whose ρ and P are closed form.
pub(super) fn rotation_from_pressure(
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
    rho: &Expr,
    p: &Expr,
) {
    let s = k.s;
    let p_r = p.diff(s);
    let grad = p_r.distribute(&(Expr::num(1.0) / rho.clone()));
    let v2 = (k.phi_s.clone() + grad).distribute(k.r);
    derived.push(DerivedLaw::new(format!("dP/d{s}"), p_r, "exact derivative"));
    derived.push(DerivedLaw::new(
        "v_phi^2",
        v2.clone(),
        format!("v_phi^2 = {s} (dPhi/d{s} + (1/rho) dP/d{s})"),
    ));
    laws.watched.push(("pressure".into(), p.clone()));
    laws.density = Some(rho.clone());
    laws.pressure = Some(p.clone());
    laws.rotation_sq = Some(v2);
}

/// Disk, v_φ and c² given: ∂ln ρ/∂R = (v_φ²/R − Φ_R − ∂c²/∂R)/c².
fn disk_density(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let (s, why) = (k.s, k.why);
    let v = LawKey::Rotation.need(m, why)?;
    let c2 = LawKey::SoundSpeed.need(m, why)?;
    let v2 = (v.clone() * v).simplify();
    let c2_r = c2.diff(s);
    let per_c2 = Expr::num(1.0) / c2.clone();
    let cen = v2.clone() / k.r.clone();
    let f = (cen.clone() - k.phi_s.clone() - c2_r.clone()).distribute(&per_c2);
    let terms = scaled(&[&cen, k.phi_s, &c2_r], &per_c2);
    laws.watched.push(("c^2".into(), c2.clone()));
    derived.push(DerivedLaw::new(
        format!("dc^2/d{s}"),
        c2_r,
        "exact derivative",
    ));
    laws.rotation_sq = Some(v2);
    let name = format!("d ln(rho)/d{s}");
    integrand(laws, derived, name, (f, terms), "");
    Ok(())
}

/// Disk, v_φ and ρ given: ∂P/∂R = ρ (v_φ²/R − Φ_R).
fn disk_pressure(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let why = k.why;
    let v = LawKey::Rotation.need(m, why)?;
    let rho = LawKey::Density.need(m, why)?;
    let v2 = (v.clone() * v).simplify();
    let cen = v2.clone() / k.r.clone();
    let f = (cen.clone() - k.phi_s.clone()).distribute(&rho);
    let terms = scaled(&[&cen, k.phi_s], &rho);
    laws.density = Some(rho);
    laws.rotation_sq = Some(v2);
    integrand(laws, derived, format!("dP/d{}", k.s), (f, terms), "");
    Ok(())
}

/// Slab or sphere, c² given: ∂ln P/∂s = −Φ_s/c², ρ = P/c².
fn hydrostatic_density(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let s = k.s;
    let c2 = LawKey::SoundSpeed.need(m, k.why)?;
    let f = (-(k.phi_s.clone() / c2.clone())).simplify();
    let terms = vec![f.clone()];
    // d ln ρ = d ln P − d ln c² (ρ = P/c²).
    laws.gradients = Some(Gradients {
        pressure: f.clone(),
        per_pressure: false,
        density: (f.clone() - c2.diff(s) / c2).simplify(),
    });
    let name = format!("d ln(P)/d{s}");
    integrand(laws, derived, name, (f, terms), "; rho = P/c^2");
    Ok(())
}

/// Slab or sphere, ρ given: ∂P/∂s = −ρ Φ_s.
fn hydrostatic_pressure(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let s = k.s;
    let rho = LawKey::Density.need(m, k.why)?;
    let f = (-(rho.clone() * k.phi_s.clone())).simplify();
    let terms = vec![f.clone()];
    laws.gradients = Some(Gradients {
        pressure: f.clone(),
        per_pressure: true,
        density: (rho.diff(s) / rho.clone()).simplify(),
    });
    laws.density = Some(rho);
    integrand(laws, derived, format!("dP/d{s}"), (f, terms), "");
    Ok(())
}

/// Every law given: nothing is solved; `check` reports the imbalance.
fn audit(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    _derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let s = k.s;
    let rho = LawKey::Density.need(m, "auditing a set of laws")?;
    let p = match (&m.pressure, &m.sound_speed_sq, &m.barotrope) {
        (Some(p), None, None) => p.expr.clone(),
        (None, Some(c2), None) => (rho.clone() * c2.expr.clone()).simplify(),
        (None, None, Some(b)) => {
            laws.sound_speed_sq = Some(b.sound_speed_sq(&rho));
            b.pressure(&rho)
        }
        _ => {
            return Err(ClosureError::Incomplete(
                "auditing needs exactly one of balance.pressure, a sound speed \
                 (gas.sound_speed_sq or gas.temperature) and gas.barotropic"
                    .into(),
            ))
        }
    };
    if m.shape.is_disk() {
        let v = LawKey::Rotation.need(m, "auditing a disk")?;
        laws.rotation_sq = Some((v.clone() * v).simplify());
    } else {
        laws.gradients = Some(Gradients {
            pressure: p.diff(s),
            per_pressure: true,
            density: (rho.diff(s) / rho.clone()).simplify(),
        });
    }
    laws.watched.push(("pressure".into(), p.clone()));
    laws.density = Some(rho);
    laws.pressure = Some(p);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::keys::Keyed;

    #[test]
    fn one_entry_per_balance_and_unknown() {
        for shape in [Shape::Slab, Shape::Spherical, Shape::DiskMidplane] {
            for (unknown, _) in Unknown::KEYS {
                let found: Vec<_> = CLOSURES
                    .iter()
                    .filter(|c| {
                        c.unknown == *unknown && c.serves.serves(shape) && c.gas.fits(Gas::Free)
                    })
                    .collect();
                let expect =
                    usize::from(!(shape != Shape::DiskMidplane && *unknown == Unknown::Rotation));
                assert_eq!(found.len(), expect, "{shape:?} {unknown:?}");
            }
        }
        assert!(closure_for(Shape::Slab, Unknown::Rotation, Gas::Free).is_err());
        let c = closure_for(Shape::DiskMidplane, Unknown::Density, Gas::Free).unwrap();
        assert_eq!(c.integrates, Some(Integrated::LogDensity));
    }

    #[test]
    fn barotropic_entries_are_closed_forms() {
        for shape in [Shape::Slab, Shape::Spherical] {
            let c = closure_for(shape, Unknown::Density, Gas::Barotropic).unwrap();
            assert_eq!(c.integrates, None);
            assert!(closure_for(shape, Unknown::Pressure, Gas::Barotropic).is_err());
        }
        let c = closure_for(Shape::DiskMidplane, Unknown::Rotation, Gas::Barotropic).unwrap();
        assert_eq!(c.integrates, None);
        let c = closure_for(Shape::Slab, Unknown::Nothing, Gas::Barotropic).unwrap();
        assert_eq!(c.gas, Gas::Any);
    }
}
