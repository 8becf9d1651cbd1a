//! The integral-form verdict of integrated closures: the balance from the
//! anchor to each check point, q(s) − q(anchor) − ∫ f ds with q = ln ρ, P or
//! ln P, the stored values against an independent composite Gauss–Legendre
//! rule (20 points per piece, bisected adaptively, split at the switch points
//! of piecewise laws).
//!
//! The residual is relative to ∫ max_i |t_i| ds along the same path, where
//! t_i are the terms the integrand sums (v_φ²/(R c²), Φ_R/c², ∂c²/∂R/c², …):
//! the size of the balance, not of its net integrand, which is rounding
//! noise where the terms cancel (an exactly Keplerian isothermal disk).
//!
//! Owns: the reference integral and the integral-form residual. Does not own:
//! the integrand (`closure::Laws`) or the tabulated integral it checks.

use super::Verdict;
use crate::background::Background;
use crate::closure::{self, ClosureError, Domain, Laws};
use crate::formula::Program;
use crate::model::Model;
use crate::sample::gauss::GaussLegendre;

/// The verdict on the integrated background `bg` of the model, whose laws
/// are `laws` (with an integrand), at the grid's knots, 401 points over the
/// range and both sides of every switch point in `switches`.
pub(super) fn integral_form(
    model: &Model,
    laws: &Laws,
    bg: &dyn Background,
    domain: &Domain,
    switches: &[f64],
    tol: f64,
) -> Result<Verdict, ClosureError> {
    let Some(integrand) = &laws.integrand else {
        return Err(ClosureError::Incomplete(
            "nothing to integrate: the closure has no integrand".into(),
        ));
    };
    let program = closure::compile(model, integrand, "integrand")?;
    // Next to an axis where the compiled integrand loses digits, evaluate it
    // in 256-bit arithmetic, as the solver does.
    let careful = closure::careful_near_axis(model, domain, integrand, &program);
    let f = |x: f64| {
        careful
            .as_ref()
            .and_then(|c| c.at(x))
            .unwrap_or_else(|| program.eval(&[x]))
    };
    let terms: Vec<Program> = laws
        .integrand_terms
        .iter()
        .map(|t| closure::compile(model, t, "integrand"))
        .collect::<Result<_, _>>()?;
    let largest = |x: f64| {
        terms
            .iter()
            .map(|t| t.eval(&[x]).abs())
            .fold(0.0f64, f64::max)
    };
    let Some(kind) = closure::closure_of(model)?.integrates else {
        return Err(ClosureError::Incomplete(
            "nothing to integrate: the closure integrates no quantity".into(),
        ));
    };
    let q = |x: f64| kind.of(&bg.on_line(x));
    let anchor = model.anchor.map(|a| a.at).unwrap_or(domain.lo);
    let (lo, hi) = domain.range_with_anchor(model);
    let inside = |x: &f64| *x >= domain.lo && *x <= domain.hi;
    let mut pts: Vec<f64> = (0..=400)
        .map(|i| lo + (hi - lo) * i as f64 / 400.0)
        .chain(domain.knots.iter().copied().filter(inside))
        .collect();
    let nudge = 1e-9 * (hi - lo);
    for &w in switches {
        pts.extend([w - nudge, w, w + nudge].into_iter().filter(inside));
    }
    pts.sort_by(|a, b| a.total_cmp(b));
    pts.dedup_by(|a, b| (*a - *b).abs() <= 1e-14 * a.abs().max(1.0));
    let rule = GaussLegendre::new(20).expect("20-point rule");
    let gl = |a: f64, b: f64, g: &dyn Fn(f64) -> f64| -> f64 {
        let once = |x: f64, y: f64| fixed_rule(&rule, x, y, g);
        adaptive(&once, (a, b), once(a, b), f64::INFINITY, 30)
    };
    // ∫ f and ∫ max|t_i| over [a, b], split at the switch points.
    let piece = |a: f64, b: f64| -> (f64, f64) {
        let mut cuts = vec![a];
        cuts.extend(
            switches
                .iter()
                .copied()
                .filter(|x| *x > a.min(b) && *x < a.max(b)),
        );
        cuts.push(b);
        if b < a {
            let n = cuts.len();
            cuts[1..n - 1].reverse();
        }
        cuts.windows(2).fold((0.0, 0.0), |(i, j), c| {
            (i + gl(c[0], c[1], &f), j + gl(c[0], c[1], &largest).abs())
        })
    };
    // Walk outward from the anchor on both sides, accumulating the
    // independent integral, and compare with the stored values.
    let q0 = q(anchor);
    let (mut max, mut at) = (0.0f64, anchor);
    let up: Vec<f64> = pts.iter().copied().filter(|x| *x > anchor).collect();
    let down: Vec<f64> = pts.iter().rev().copied().filter(|x| *x < anchor).collect();
    for side in [up, down] {
        let (mut prev, mut int, mut scale) = (anchor, 0.0f64, 0.0f64);
        for x in side {
            let (i, j) = piece(prev, x);
            int += i;
            scale += j;
            prev = x;
            let miss = (q(x) - q0 - int).abs();
            let rel = if scale > 0.0 { miss / scale } else { miss };
            if rel > max || rel.is_nan() {
                max = rel;
                at = x;
            }
        }
    }
    Ok(if max <= tol {
        Verdict::ZeroToTolerance { max, at }
    } else {
        Verdict::NotEquilibrium { max, at }
    })
}

/// The Gauss–Legendre rule mapped to [a, b].
fn fixed_rule(rule: &GaussLegendre, a: f64, b: f64, g: &dyn Fn(f64) -> f64) -> f64 {
    let (h, m) = (0.5 * (b - a), 0.5 * (a + b));
    rule.nodes
        .iter()
        .zip(&rule.weights)
        .map(|(t, w)| w * g(m + h * t))
        .sum::<f64>()
        * h
}

/// Adaptive bisection on top of a fixed rule, so that the reference integral
/// stays exact where a law is smooth only inside its pieces (a square-root
/// cusp at the axis, say): halves must agree with the whole. Subdivision
/// stops when the disagreement no longer shrinks, which is the rounding floor
/// of the integrand itself (a difference of large terms, say) — bisecting
/// further would only multiply the work.
fn adaptive(
    rule: &dyn Fn(f64, f64) -> f64,
    (a, b): (f64, f64),
    whole: f64,
    last: f64,
    depth: u32,
) -> f64 {
    let m = 0.5 * (a + b);
    let (l, r) = (rule(a, m), rule(m, b));
    let err = (l + r - whole).abs();
    let settled = err <= 1e-14 * (l.abs() + r.abs());
    if depth == 0 || settled || !(l + r).is_finite() || err > 0.5 * last {
        return l + r;
    }
    adaptive(rule, (a, m), l, err, depth - 1) + adaptive(rule, (m, b), r, err, depth - 1)
}
