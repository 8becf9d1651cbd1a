//! Closures: solvers that take the laws a model gives and find the missing
//! one, producing a [`Background`] that can be evaluated anywhere in the
//! domain (design.md §2, the one-dimensional rows of the closure table).
//!
//! | shape | finds | from | how |
//! |---|---|---|---|
//! | disk | v_φ | ρ, c² | v_φ² = R(Φ_R + P_R/ρ), exact symbolic derivatives |
//! | disk | ρ | v_φ, c², ρ at anchor | ∂ln ρ/∂R = (v_φ²/R − Φ_R − ∂c²/∂R)/c² |
//! | disk | P | v_φ, ρ, P at anchor | ∂P/∂R = ρ(v_φ²/R − Φ_R) |
//! | slab, sphere | P, ρ | c², P at anchor | ∂ln P/∂s = −Φ_s/c² |
//! | slab, sphere | P | ρ, P at anchor | ∂P/∂s = −ρΦ_s |
//! | slab, sphere | ρ, P | K, Γ (P = Kρ^Γ), ρ at anchor | h(ρ) + Φ = const, closed form |
//! | disk | v_φ | ρ, K, Γ | v_φ² = R(Φ_R + P_R/ρ), P = Kρ^Γ |
//! | stratified disk | ρ(R, z), v_φ(R, z) | ρ_mid(R), c²(R) | closed form (`vertical`) |
//! | stratified disk | ρ(R, z), v_φ(R, z) | ρ_mid(R) or Σ(R), c²(R, z) | column integrals of Φ_z/c² and its R-derivative (`column`) |
//! | any | — | every law | audit only (`check` reports the imbalance) |
//!
//! Owns: building the derived formulas and integrands (`laws`), the
//! backgrounds, the switch points of piecewise laws (`switches`), the
//! existence survey (no equilibrium ⇒ the quantity, the interval and the
//! value; `existence`) and what the potential does at an axis or centre the
//! grid contains (`axis`). Does not own: grids, sampling, files or verdicts.

pub mod axis;
mod barotropic;
pub mod column;
pub mod curvature;
pub mod defined;
mod domain;
pub mod existence;
pub mod integrate;
mod laws;
mod solved;
pub mod switches;
pub mod table;
pub mod tabulate;
mod vertical;

pub use domain::{spaced, Domain};
pub use laws::{derived_laws, DerivedLaw, Gradients, Laws, Parts};

pub use solved::{accelerations, vertical_accelerations, Solved};
pub use table::{closure_for, closure_of, Closure, Gas, Integrated, LawKey, CLOSURES};

use crate::background::Shape;
use crate::formula::{FormulaError, Kernel, Program};
use crate::keys::Keyed;
use crate::model::{Model, Unknown};
use tabulate::Table;

/// Why a closure could not produce an equilibrium.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ClosureError {
    /// The profile lacks a law or an anchor this closure needs, or gives one
    /// it cannot use.
    #[error("{0}")]
    Incomplete(String),
    /// No equilibrium exists somewhere in the domain.
    #[error("no equilibrium: {0}")]
    NoEquilibrium(String),
    /// A formula failed to compile (an unknown name, say).
    #[error("{origin}: {error}")]
    Formula { origin: String, error: FormulaError },
}

/// Compile a formula of the model, an error naming where it came from.
pub fn compile(
    model: &Model,
    expr: &crate::formula::Expr,
    origin: &str,
) -> Result<Program, ClosureError> {
    model.compile(expr).map_err(|error| ClosureError::Formula {
        origin: origin.into(),
        error,
    })
}

/// Solve the model's closure over the domain and refuse a state that is no
/// equilibrium somewhere in it (see [`existence`]), naming where.
pub fn solve(model: &Model, domain: &Domain) -> Result<Solved, ClosureError> {
    let solved = solve_unverified(model, domain)?;
    verify_existence(model, &solved, domain)?;
    Ok(solved)
}

/// Solve the model's closure over the domain without refusing a state that
/// is no equilibrium somewhere (a negative v_φ², a density that is not
/// positive): `check` reports where, and `table` marks the rows. Input
/// errors (a missing law, an anchor value that is not positive, a
/// potential singular on the grid) are still errors.
pub fn solve_unverified(model: &Model, domain: &Domain) -> Result<Solved, ClosureError> {
    defined::check(model, &domain.scan_points_for(model))?;
    let laws = Laws::build(model)?;
    let mut integral = None;
    if let Some(integrand) = &laws.integrand {
        let anchor = model.anchor.ok_or_else(|| {
            ClosureError::Incomplete(format!(
                "balance.anchor is required: solving for {} integrates from a reference point",
                model.unknown.key()
            ))
        })?;
        // An anchor outside the grid is allowed: the integral runs to it
        // (and `pipeline::cautions` says so).
        let Some(kind) = closure_of(model)?.integrates else {
            return Err(ClosureError::Incomplete(
                "this closure has an integrand but integrates nothing".into(),
            ));
        };
        // ρ or P at the anchor is a physical density or pressure, whichever
        // closure integrates from it.
        if anchor.value.is_nan() || anchor.value <= 0.0 {
            let what = kind.anchored();
            return Err(ClosureError::NoEquilibrium(format!(
                "balance.anchor.value: the {what} at the anchor must be positive, found {}",
                anchor.value
            )));
        }
        let (lo, hi) = domain.range_with_anchor(model);
        let mut knots = domain.knots.clone();
        knots.extend([lo, hi, anchor.at]);
        knots.extend(domain.switches(model).iter().map(|w| w.at));
        let program = compile(model, integrand, "integrand")?;
        let careful = careful_near_axis(model, domain, integrand, &program);
        let one = |name: &str, e: &crate::formula::Expr| {
            Kernel::compile(&[(name, e)], &[model.coordinate()], &|n| model.lookup(n)).map_err(
                |error| ClosureError::Formula {
                    origin: "integrand".into(),
                    error,
                },
            )
        };
        let table = Table::new(
            one("f", integrand)?,
            one("m", &magnitude(integrand, &laws.integrand_terms))?,
            careful,
            knots,
            anchor.at,
        );
        integral = Some((kind, table, anchor.value));
    }
    let mut axis_potential = None;
    match axis_approach(model, domain) {
        Some(axis::Approach::Singular) => return Err(singular_potential(model, domain)),
        // An integral through an unbounded force cannot be verified to the
        // balance tolerance (the quadrature rules stop short of the point).
        Some(axis::Approach::SingularGradient { .. }) if laws.integrand.is_some() => {
            let (s, place) = (model.coordinate(), axis_word(model));
            return Err(ClosureError::NoEquilibrium(format!(
                "the gravity dPhi/d{s} of {} is unbounded at {s} = {}, which the grid contains \
                 (the potential itself is finite there), and solving for {} integrates through \
                 it: start the grid off the {place}",
                model.potential.origin,
                show(domain.lo),
                model.unknown.key()
            )));
        }
        Some(axis::Approach::Regular { value } | axis::Approach::SingularGradient { value }) => {
            axis_potential = Some((domain.lo, value));
        }
        None => {}
    }
    let column = match &laws.column {
        Some(cl) => {
            let mut col = column::Column::new(model, cl)?;
            if let Some((_, extent)) = &cl.surface {
                let over = column_range(domain, *extent)?;
                col.normalise(domain.lo, domain.hi, over)?;
            }
            Some(col)
        }
        None => None,
    };
    Solved::new(model, &laws, integral, axis_potential, column)
}

/// The heights a surface density's column integral runs over: the grid's,
/// or −∞ to ∞.
pub fn column_range(
    domain: &Domain,
    extent: crate::model::ColumnExtent,
) -> Result<(f64, f64), ClosureError> {
    match extent {
        crate::model::ColumnExtent::Infinity => Ok((f64::NEG_INFINITY, f64::INFINITY)),
        crate::model::ColumnExtent::Grid => domain.height.ok_or_else(|| {
            ClosureError::Incomplete(
                "balance.column \"grid\": the grid has no vertical extent".into(),
            )
        }),
    }
}

/// A 256-bit evaluation of the integrand next to the axis or centre the grid
/// contains, where its compiled form loses digits (see
/// [`axis::unreliable_within`]); None where double precision is fine.
pub fn careful_near_axis(
    model: &Model,
    domain: &Domain,
    integrand: &crate::formula::Expr,
    program: &Program,
) -> Option<integrate::Careful> {
    if !domain.axis_at_lo {
        return None;
    }
    let s = model.coordinate();
    let point = (domain.lo, domain.hi - domain.lo);
    let within = axis::unreliable_within(integrand, program, s, point, &|n| model.lookup(n))?;
    let mut names = model.parameters.clone();
    names.extend(Model::builtin_names(model.units));
    let (expr, var) = (integrand.clone(), s.to_string());
    Some(integrate::Careful {
        near: domain.lo,
        within,
        eval: Box::new(move |x| {
            let look = |n: &str| {
                if n == var {
                    Some(x)
                } else {
                    names.iter().find(|(k, _)| k == n).map(|(_, v)| *v)
                }
            };
            expr.eval_extended(&look).unwrap_or(f64::NAN)
        }),
    })
}

/// How the potential behaves at the axis or centre, when the grid contains
/// it (see [`axis`]).
pub fn axis_approach(model: &Model, domain: &Domain) -> Option<axis::Approach> {
    domain.axis_at_lo.then(|| {
        axis::approach(
            &model.potential.expr,
            model.coordinate(),
            domain.lo,
            domain.hi - domain.lo,
            &|n| model.lookup(n),
        )
    })
}

/// "axis" for a disk, "centre" for a sphere.
pub fn axis_word(model: &Model) -> &'static str {
    if model.shape == Shape::Spherical {
        "centre"
    } else {
        "axis"
    }
}

/// The error for a potential with no finite limit at the axis or centre
/// the grid contains, with advice that fits the gravity given.
fn singular_potential(model: &Model, domain: &Domain) -> ClosureError {
    let (s, at, place) = (model.coordinate(), show(domain.lo), axis_word(model));
    let advice = if model.potential.origin == "gravity.point_mass" {
        format!("soften the point mass (gravity.softening) or start the grid off the {place}")
    } else {
        format!(
            "start the grid off the {place}, or give a potential ({}) that is finite there",
            model.potential.origin
        )
    };
    ClosureError::NoEquilibrium(format!(
        "the potential is singular at {s} = {at}, which the grid contains: {advice}"
    ))
}

/// The survey of ρ, P, c² and v_φ² of a solved state over the scan points
/// of the domain (see [`existence::survey`]).
pub fn survey(model: &Model, bg: &Solved, domain: &Domain) -> Vec<existence::Extent> {
    let pts = domain.scan_points_for(model);
    let v2 = |x: f64| bg.rotation_sq_at(x).unwrap_or(0.0);
    let rotation: Option<&dyn Fn(f64) -> f64> = bg.rotation_sq_at(domain.lo).map(|_| &v2 as _);
    existence::survey(bg, rotation, &pts)
}

/// What gives v_φ², for messages.
pub fn rotation_law_name(model: &Model) -> &'static str {
    if model.unknown == Unknown::Rotation {
        "the derived rotation law"
    } else {
        "the rotation law"
    }
}

/// The size of the terms an integrand sums, Σ|tᵢ| (|f| when none are
/// listed): the scale its rounding is relative to.
fn magnitude(f: &crate::formula::Expr, terms: &[crate::formula::Expr]) -> crate::formula::Expr {
    use crate::formula::{Expr, Func};
    let abs = |t: &Expr| Expr::call(Func::Abs, vec![t.clone()]);
    match terms {
        [] => abs(f),
        ts => Expr::Add(ts.iter().map(abs).collect()),
    }
}

/// Stop with a clear error where the solved state is not an equilibrium:
/// density, pressure or c² not positive or not finite (first: they are the
/// cause), v_φ² < 0 (an interval), a potential that is not finite.
fn verify_existence(model: &Model, bg: &Solved, domain: &Domain) -> Result<(), ClosureError> {
    let s = model.coordinate();
    let survey = survey(model, bg, domain);
    let failures = existence::failures(&survey, s, rotation_law_name(model));
    if let Some(message) = failures.into_iter().next() {
        let cause = root_cause(model, &survey)
            .map(|c| format!("; {c}"))
            .unwrap_or_default();
        return Err(ClosureError::NoEquilibrium(format!("{message}{cause}")));
    }
    if bg.column().is_some() {
        if let Some((_, message)) = column::meridional_failure(bg, domain) {
            return Err(ClosureError::NoEquilibrium(message));
        }
    }
    if let Some(x) = domain
        .scan_points_for(model)
        .into_iter()
        .find(|&x| !bg.raw_potential(x).is_finite())
    {
        return Err(ClosureError::NoEquilibrium(format!(
            "the potential is not finite at {s} = {}",
            show(x)
        )));
    }
    Ok(())
}

/// A coordinate for a message: six significant digits, so that scan points
/// such as 0.9979750000000001 read as 0.997975.
pub(crate) fn show(x: f64) -> String {
    let rounded: f64 = format!("{x:.5e}").parse().unwrap_or(x);
    if rounded.abs() >= 1e-4 && rounded.abs() < 1e7 || rounded == 0.0 {
        rounded.to_string()
    } else {
        format!("{rounded:e}")
    }
}

/// Why a survey fails, when a given law is the cause: the first law that
/// must be positive (a density, pressure, temperature or c² as written in
/// the profile) and is not, at the first failing point, with the parameters
/// it uses that are zero or negative, down to the ones that made them so
/// (`cs2_0 = -2.5e-3 ← M = -1`). None when every given law is positive
/// there (the failure is then the closure's, and its message says so).
pub fn root_cause(model: &Model, survey: &[existence::Extent]) -> Option<String> {
    let s = model.coordinate();
    let failing = survey
        .iter()
        .filter(|e| !e.ok())
        .min_by_key(|e| e.quantity == "v_phi^2")?;
    let points = [failing.failing[0].0, failing.at, failing.failing[0].1];
    let laws = [
        model.sound_speed_sq.as_ref(),
        model.density.as_ref(),
        model.pressure.as_ref(),
    ];
    for &x in &points {
        let lookup = model.line_lookup(x);
        for law in laws.iter().flatten() {
            let v = law.expr.eval(&lookup).unwrap_or(f64::NAN);
            if v > 0.0 && v.is_finite() {
                continue;
            }
            let what = match law.origin.as_str() {
                "gas.temperature" => "the temperature law".to_string(),
                "gas.sound_speed_sq" => "the sound-speed law (c^2)".to_string(),
                o => format!("the law {o}"),
            };
            let value = if law.origin == "gas.temperature" {
                "not positive".to_string()
            } else {
                show(v)
            };
            let mut cause = format!(
                "the cause is {what} `{}` ({}), {value} at {s} = {}",
                law.expr,
                law.origin,
                show(x)
            );
            let blamed = blamed_parameters(model, &law.expr);
            if !blamed.is_empty() {
                cause.push_str(&format!(
                    ": it uses {}; check the sign and units of these parameters (and any --set)",
                    blamed.join(", ")
                ));
            } else {
                cause
                    .push_str(": change the law or the grid so that it stays positive on the grid");
            }
            return Some(cause);
        }
    }
    None
}

/// The parameters an expression uses that are zero or negative, each with
/// the zero or negative parameters its own formula uses (`cs2_0 = -2.5e-3
/// (from M = -1)`).
fn blamed_parameters(model: &Model, expr: &crate::formula::Expr) -> Vec<String> {
    let value = |n: &str| {
        model
            .parameters
            .iter()
            .find(|(p, _)| p == n)
            .map(|(_, v)| *v)
    };
    let text = |n: &str| {
        model
            .parameter_text
            .iter()
            .find(|(p, _)| p == n)
            .map(|(_, t)| t.clone())
    };
    // Zero or negative parameters reachable from `names`, nearest first.
    fn reach(
        names: std::collections::BTreeSet<String>,
        value: &dyn Fn(&str) -> Option<f64>,
        text: &dyn Fn(&str) -> Option<String>,
        depth: usize,
    ) -> Vec<String> {
        let mut out = Vec::new();
        for n in names {
            let Some(v) = value(&n) else { continue };
            if v > 0.0 {
                continue;
            }
            let inner = text(&n)
                .and_then(|t| crate::formula::parse(&t).ok())
                .filter(|_| depth < 8)
                .map(|e| reach(e.names(), value, text, depth + 1))
                .unwrap_or_default();
            if inner.is_empty() {
                out.push(format!("{n} = {}", show(v)));
            } else {
                out.push(format!("{n} = {} (from {})", show(v), inner.join(", ")));
            }
        }
        out
    }
    reach(expr.names(), &value, &text, 0)
}

#[cfg(test)]
mod tests {
    use super::show;

    #[test]
    fn coordinates_in_messages_have_six_significant_digits() {
        assert_eq!(show(0.997_975_000_000_000_1), "0.997975");
        assert_eq!(show(1.778_125_000_000_000_2), "1.77813");
        assert_eq!(show(2.5), "2.5");
        assert_eq!(show(0.0), "0");
        assert_eq!(show(1.414_213_562_373_095e-9), "1.41421e-9");
        assert_eq!(show(-6.0e7), "-6e7");
    }
}
