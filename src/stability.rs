//! Stability of an equilibrium, from exact derivatives of its laws — never
//! from differences of neighbouring samples, whose rounding noise called
//! stable atmospheres unstable.
//!
//! * Slabs and spheres, Schwarzschild's criterion through the squared
//!   buoyancy (Brunt–Väisälä) frequency
//!   N² = (dΦ/ds)(1/γ · d ln P/ds − d ln ρ/ds),
//!   the 1D form of N² = (g/θ) dθ/dz with the potential temperature
//!   θ ∝ P^(1/γ)/ρ of an ideal gas (e.g. Vallis 2017, Atmospheric and Oceanic
//!   Fluid Dynamics, 2nd ed., §2.10; from memory). The gradients are those
//!   of [`crate::closure::Gradients`]: symbolic derivatives of the laws, and
//!   for an integrated pressure its integrand over the state's P. The layer
//!   is unstable where N² < 0. An isothermal gas (γ = 1) has no such
//!   criterion here: its perturbations do not conserve entropy.
//! * Disks, Rayleigh's criterion (Rayleigh 1917, Proc. R. Soc. A 93, 148)
//!   through the squared epicyclic frequency
//!   κ² = R⁻³ d(R⁴Ω²)/dR = (2 v_φ² + R dv_φ²/dR)/R²,
//!   unstable where κ² < 0, i.e. where (R v_φ)² falls outward.
//! * At a switch point, where a contact or a rotation law may jump, the same
//!   criteria in jump form: the entropy ln P − γ ln ρ must not fall against
//!   gravity across it (heavier gas over lighter), and (R v_φ)² must not
//!   fall outward.
//!
//! Owns: N², κ², and the cautions they lead to. Does not own: the laws, the
//! scan points or the one-sided limits (`check::jumps`).

use crate::background::Background;
use crate::check::jumps;
use crate::closure::existence::extent;
use crate::closure::{self, show, ClosureError, Domain, Laws};
use crate::model::Model;

/// A value of N² or κ² below −THRESHOLD times the size of its terms counts
/// as negative: rounding of the terms and the verified accuracy of an
/// integrated pressure (≤ 1e-10 of the balance) stay orders below it, and a
/// layer that is less unstable than that is neutral in practice (common
/// practice, no source).
pub const THRESHOLD: f64 = 1e-8;

/// A criterion value at a point and the size of the terms it sums.
pub type Valued = (f64, f64);

/// A criterion evaluated at one point: its value and the size of its terms.
pub(crate) type Criterion<'a> = Box<dyn Fn(f64) -> Valued + 'a>;

/// N² and the size of its terms |Φ_s| (|d ln P/ds|/γ + |d ln ρ/ds|) at a
/// point of a slab or sphere (an error for a disk).
pub(crate) fn buoyancy<'a>(
    model: &Model,
    bg: &'a dyn Background,
) -> Result<Criterion<'a>, ClosureError> {
    let laws = Laws::build(model)?;
    let Some(g) = &laws.gradients else {
        return Err(ClosureError::Incomplete(
            "the buoyancy frequency belongs to slabs and spheres".into(),
        ));
    };
    let s = model.coordinate();
    let phi_s = closure::compile(model, &laws.potential.diff(s), "potential")?;
    let dp = closure::compile(model, &g.pressure, "pressure gradient")?;
    let drho = closure::compile(model, &g.density, "density gradient")?;
    let (gamma, per_pressure) = (model.gamma, g.per_pressure);
    Ok(Box::new(move |x| {
        let dlnp = if per_pressure {
            dp.eval(&[x]) / bg.on_line(x).pressure
        } else {
            dp.eval(&[x])
        };
        let (dlnrho, phi) = (drho.eval(&[x]), phi_s.eval(&[x]));
        let n2 = phi * (dlnp / gamma - dlnrho);
        (n2, phi.abs() * (dlnp.abs() / gamma + dlnrho.abs()))
    }))
}

/// N² and the size of its terms at each point of a slab or sphere (see the
/// module documentation).
pub fn buoyancy_sq(
    model: &Model,
    bg: &dyn Background,
    pts: &[f64],
) -> Result<Vec<Valued>, ClosureError> {
    let n2 = buoyancy(model, bg)?;
    Ok(pts.iter().map(|&x| n2(x)).collect())
}

/// κ² and the size of its terms (2|v_φ²| + R|dv_φ²/dR|)/R² at a point of a
/// disk, from the rotation law (given or derived); NaN where v_φ² < 0 (no
/// rotation exists there).
pub(crate) fn epicyclic(model: &Model) -> Result<Criterion<'static>, ClosureError> {
    let laws = Laws::build(model)?;
    let Some(v2) = &laws.rotation_sq else {
        return Err(ClosureError::Incomplete(
            "the epicyclic frequency belongs to rotating disks".into(),
        ));
    };
    let s = model.coordinate();
    let v2p = closure::compile(model, v2, "rotation")?;
    let dv2 = closure::compile(model, &v2.diff(s), "rotation")?;
    Ok(Box::new(move |r| {
        let (v, d) = (v2p.eval(&[r]), dv2.eval(&[r]));
        if v < 0.0 {
            return (f64::NAN, f64::NAN);
        }
        (
            (2.0 * v + r * d) / (r * r),
            (2.0 * v.abs() + (r * d).abs()) / (r * r),
        )
    }))
}

/// κ² and the size of its terms at each point of a disk.
pub fn epicyclic_sq(model: &Model, pts: &[f64]) -> Result<Vec<Valued>, ClosureError> {
    let k2 = epicyclic(model)?;
    Ok(pts.iter().map(|&x| k2(x)).collect())
}

/// Where the criterion is negative beyond [`THRESHOLD`] of its terms, found
/// on the sorted `pts` with the interval ends refined between them, in
/// words: the first interval, how many more, and the minimum over all with
/// where, the coordinate named `s` and the criterion `name`.
pub(crate) fn negative(
    pts: &[f64],
    criterion: &dyn Fn(f64) -> Valued,
    s: &str,
    name: &str,
) -> Option<String> {
    // Below the threshold the value itself, else never below zero: the
    // failing set of this function is the unstable one.
    let clipped = |x: f64| {
        let (v, size) = criterion(x);
        if v < -THRESHOLD * size {
            v
        } else if v.is_nan() {
            0.0
        } else {
            v.max(0.0)
        }
    };
    let e = extent("criterion", false, &clipped, pts);
    let &(a, b) = e.failing.first()?;
    let more = match e.failing.len() {
        1 => String::new(),
        2 => " and in 1 more interval".to_string(),
        n => format!(" and in {} more intervals", n - 1),
    };
    Some(format!(
        "between {s} = {} and {s} = {}{more} ({name} reaches {:.3e} at {s} = {})",
        show(a),
        show(b),
        e.min,
        show(e.at)
    ))
}

/// Cautions for an unstable equilibrium: Schwarzschild (slabs and spheres,
/// unless isothermal) or Rayleigh (disks), over the domain's scan points and
/// across its switch points. Laws that cannot be built give no caution
/// (solving has reported them already).
pub fn cautions(model: &Model, bg: &dyn Background, domain: &Domain) -> Vec<String> {
    let s = model.coordinate();
    let pts = domain.scan_points_for(model);
    let switches: Vec<f64> = domain
        .switches(model)
        .iter()
        .map(|w| w.at)
        .filter(|x| *x > domain.lo && *x < domain.hi)
        .collect();
    let steps = jumps::steps(&switches, (domain.lo, domain.hi));
    let mut out = Vec::new();
    // Stratified disks: their criteria over (R, z) are cautioned from the
    // stability section (`crate::criteria`), as is Toomre's Q.
    if model.shape == crate::background::Shape::StratifiedDisk {
        return out;
    }
    if model.shape.is_disk() {
        let Ok(k2) = epicyclic(model) else {
            return out;
        };
        if let Some(place) = negative(&pts, &k2, s, "kappa^2") {
            out.push(format!(
                "the rotation law violates the Rayleigh criterion {place}: (R v_phi)^2 \
                 decreases outward, so this equilibrium is dynamically unstable"
            ));
        }
        let l2 = |r: f64| r * r * bg.on_line(r).rotation().powi(2);
        for (&x, &h) in switches.iter().zip(&steps) {
            let (left, right, size) = jumps::one_sided_limits(&l2, x, h);
            if right < left - THRESHOLD * size {
                out.push(format!(
                    "the rotation law violates the Rayleigh criterion at {s} = {}: (R v_phi)^2 \
                     drops outward across the switch from {left:.6e} to {right:.6e}",
                    show(x)
                ));
            }
        }
        return out;
    }
    if crate::physics::is_isothermal(model.gamma) {
        return out;
    }
    let Ok(n2) = buoyancy(model, bg) else {
        return out;
    };
    let gamma = model.gamma;
    if let Some(place) = negative(&pts, &n2, s, "N^2") {
        out.push(format!(
            "the stratification is convectively unstable by the Schwarzschild criterion \
             (gamma = {gamma}) {place}: the entropy falls against gravity"
        ));
    }
    let entropy = |x: f64| {
        let st = bg.on_line(x);
        st.pressure.ln() - gamma * st.density.ln()
    };
    let phi_s = closure::compile(model, &model.potential.expr.diff(s), "potential");
    for (&x, &h) in switches.iter().zip(&steps) {
        let (left, right, size) = jumps::one_sided_limits(&entropy, x, h);
        let up = phi_s.as_ref().map_or(0.0, |p| p.eval(&[x])).signum();
        if (right - left) * up < -THRESHOLD * size {
            out.push(format!(
                "the stratification is convectively unstable at {s} = {} (Schwarzschild \
                 criterion with gamma = {gamma}): the entropy ln P - gamma ln rho falls against \
                 gravity across the switch by {:.3e} (denser gas above lighter)",
                show(x),
                (right - left).abs()
            ));
        }
    }
    out
}
