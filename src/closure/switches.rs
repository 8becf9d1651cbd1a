//! Switch points of piecewise laws: where a condition of a conditional, or
//! the argument of `abs`, or the difference of the arguments of `min` and
//! `max`, changes sign. They become knots of the integrals (so every
//! quadrature segment is smooth), cuts of the check's reference integral and
//! identity test, and the places where `check` compares left and right
//! limits for jumps.
//!
//! How a zero of a switch function g is found, in a coordinate range
//! [lo, hi] with a *fence* of known points (grid edges, the anchor):
//!
//! * **linear** g (no conditions inside, and dg/ds free of s, decided
//!   symbolically): solved by Newton steps with the exact slope, which for a
//!   linear g land on the root to round-off (`z - z1` gives z1 exactly);
//! * otherwise g is split into pieces on which it is **monotone**: the cuts
//!   are the fence, the zeros of g's own inner switch functions (where g may
//!   have a kink or jump; `abs(z - z0) - w` is cut at z0) and the zeros of
//!   dg/ds found by this same method, recursively. On each monotone piece g
//!   has at most one zero, bracketed by a sign change and refined by Brent's
//!   method (Brent 1973, "Algorithms for Minimization without Derivatives",
//!   through `roots`) to adjacent floating-point numbers. A window narrower
//!   than any scan is found this way: `abs(z - z0) < w` switches at z0 ± w
//!   however small w is.
//! * the recursion stops at the [`DEPTH`]-th derivative; there the pieces are
//!   the fence subdivided into [`SUBDIVISION`] parts. So: every zero is found
//!   when the condition is a polynomial of degree ≤ 5 in s (then some
//!   derivative is linear and no sampling is needed), and in general unless
//!   the [`DEPTH`]-th derivative of the condition changes sign twice within
//!   1/[`SUBDIVISION`] of a fence interval (a grid cell).
//!
//! Owns: the switch functions of a formula, their zeros, and the switch
//! points of a model's laws with the laws that switch there. Does not own:
//! what a switch means for the balance (`check`) or integration.

use std::collections::HashMap;

use crate::formula::{Expr, Func, Program, Visit};
use crate::model::Model;

/// Derivatives followed before the search falls back to subdivision.
pub const DEPTH: usize = 4;
/// Parts each fence interval is cut into at the deepest derivative.
pub const SUBDIVISION: usize = 32;

/// A place where one or more given laws change formula.
#[derive(Clone, Debug, PartialEq)]
pub struct Switch {
    /// The coordinate of the switch.
    pub at: f64,
    /// The profile keys of the laws that switch there (`balance.density`).
    pub laws: Vec<String>,
}

/// The differences whose sign switches a piecewise formula: the argument of
/// `abs`, a − b of `min(a, b)` and `max(a, b)`, and lhs − rhs of each
/// comparison, simplified.
pub fn switch_functions(e: &Expr) -> Vec<Expr> {
    let mut out = Vec::new();
    e.walk(&mut |v| match v {
        Visit::Expr(Expr::Call(Func::Abs, a)) if a.len() == 1 => out.push(a[0].simplify()),
        Visit::Expr(Expr::Call(Func::Min | Func::Max, a)) if a.len() == 2 => {
            out.push((a[0].clone() - a[1].clone()).simplify())
        }
        Visit::Cond(crate::formula::Cond::Cmp(_, a, b)) => {
            out.push((a.clone() - b.clone()).simplify())
        }
        _ => {}
    });
    out
}

/// The switch points of `expr` in the open range (lo, hi), sorted: the zeros
/// of its switch functions (see the module documentation for how, and for
/// the guarantee). `fence` holds known points to bracket on, such as the
/// grid's edges; `constants` gives the value of every name but `var`.
pub fn switch_points(
    expr: &Expr,
    var: &str,
    (lo, hi): (f64, f64),
    fence: &[f64],
    constants: &dyn Fn(&str) -> Option<f64>,
) -> Vec<f64> {
    let mut search = Search::new(var, lo, hi, fence, constants);
    let mut out: Vec<f64> = switch_functions(expr)
        .iter()
        .flat_map(|g| search.zeros(g, DEPTH))
        .collect();
    sort_unique(&mut out);
    out
}

/// The switch points in (lo, hi) of every law the model gives (density,
/// sound speed, rotation, pressure, potential), each with the profile keys
/// of the laws that switch there. Derived formulas (v_φ², integrands,
/// residuals) switch only where their laws do: differentiation adds no
/// switch function of its own (`abs` and `min`/`max` switch where their
/// arguments already do).
pub fn law_switches(model: &Model, range: (f64, f64), fence: &[f64]) -> Vec<Switch> {
    let s = model.coordinate();
    let look = |n: &str| model.lookup(n);
    let mut out: Vec<Switch> = Vec::new();
    let laws = [
        &model.density,
        &model.sound_speed_sq,
        &model.rotation,
        &model.pressure,
    ];
    for law in laws
        .into_iter()
        .flatten()
        .chain(std::iter::once(&model.potential))
    {
        for at in switch_points(&law.expr, s, range, fence, &look) {
            match out.iter_mut().find(|w| same_point(w.at, at)) {
                Some(w) if !w.laws.contains(&law.origin) => w.laws.push(law.origin.clone()),
                Some(_) => {}
                None => out.push(Switch {
                    at,
                    laws: vec![law.origin.clone()],
                }),
            }
        }
    }
    out.sort_by(|a, b| a.at.total_cmp(&b.at));
    out
}

/// Two switch points closer than a few units in the last place are one.
fn same_point(a: f64, b: f64) -> bool {
    (a - b).abs() <= 4.0 * f64::EPSILON * a.abs().max(b.abs())
}

fn sort_unique(v: &mut Vec<f64>) {
    v.retain(|x| x.is_finite());
    v.sort_by(|a, b| a.total_cmp(b));
    v.dedup_by(|a, b| same_point(*a, *b));
}

/// The state of one search: the range, the fence, and the zeros already
/// found for each switch function (the same inner switch appears at every
/// level of the derivative chain).
struct Search<'a> {
    var: &'a str,
    lo: f64,
    hi: f64,
    fence: Vec<f64>,
    constants: &'a dyn Fn(&str) -> Option<f64>,
    memo: HashMap<String, Vec<f64>>,
}

impl<'a> Search<'a> {
    fn new(
        var: &'a str,
        lo: f64,
        hi: f64,
        fence: &[f64],
        constants: &'a dyn Fn(&str) -> Option<f64>,
    ) -> Search<'a> {
        let mut f: Vec<f64> = fence
            .iter()
            .copied()
            .filter(|x| *x >= lo && *x <= hi)
            .chain([lo, hi])
            .collect();
        sort_unique(&mut f);
        Search {
            var,
            lo,
            hi,
            fence: f,
            constants,
            memo: HashMap::new(),
        }
    }

    fn depends(&self, e: &Expr) -> bool {
        e.names().contains(self.var)
    }

    /// Zeros of g in (lo, hi); `depth` derivatives may still be followed.
    fn zeros(&mut self, g: &Expr, depth: usize) -> Vec<f64> {
        if !self.depends(g) || self.lo.partial_cmp(&self.hi) != Some(std::cmp::Ordering::Less) {
            return Vec::new();
        }
        let key = g.to_string();
        if let Some(z) = self.memo.get(&key) {
            return z.clone();
        }
        let Ok(p) = Program::compile(g, &[self.var], self.constants) else {
            return Vec::new();
        };
        let inner: Vec<Expr> = switch_functions(g)
            .into_iter()
            .filter(|h| self.depends(h))
            .collect();
        let dg = g.diff(self.var);
        let found: Vec<f64> = if inner.is_empty() && !self.depends(&dg) {
            let slope = Program::compile(&dg, &[self.var], self.constants)
                .map(|d| d.eval(&[self.lo]))
                .unwrap_or(f64::NAN);
            linear_root(&|x| p.eval(&[x]), slope, self.lo, self.hi)
                .into_iter()
                .collect()
        } else {
            let mut cuts = self.fence.clone();
            for h in &inner {
                cuts.extend(self.zeros(h, depth));
            }
            if depth > 0 {
                cuts.extend(self.zeros(&dg, depth - 1));
            } else {
                cuts.extend(subdivide(&self.fence, SUBDIVISION));
            }
            sort_unique(&mut cuts);
            bracketed_zeros(&|x| p.eval(&[x]), &cuts)
                .into_iter()
                .filter(|x| *x > self.lo && *x < self.hi)
                .collect()
        };
        self.memo.insert(key, found.clone());
        found
    }
}

/// The root in (lo, hi) of a linear function with the given exact slope:
/// Newton steps from the middle, which land on the root to round-off.
fn linear_root(g: &dyn Fn(f64) -> f64, slope: f64, lo: f64, hi: f64) -> Option<f64> {
    if !slope.is_finite() || slope == 0.0 {
        return None;
    }
    let mut x = 0.5 * (lo + hi);
    for _ in 0..3 {
        let gx = g(x);
        if !gx.is_finite() {
            return None;
        }
        if gx == 0.0 {
            break;
        }
        x -= gx / slope;
    }
    (x > lo && x < hi).then_some(x)
}

/// `parts − 1` evenly spaced points inside each interval of `fence`.
fn subdivide(fence: &[f64], parts: usize) -> Vec<f64> {
    fence
        .windows(2)
        .flat_map(|w| (1..parts).map(move |i| w[0] + (w[1] - w[0]) * i as f64 / parts as f64))
        .collect()
}

/// One zero of g in every interval between consecutive `cuts` (sorted) where
/// g changes sign, and every cut where g is exactly zero.
fn bracketed_zeros(g: &dyn Fn(f64) -> f64, cuts: &[f64]) -> Vec<f64> {
    let values: Vec<f64> = cuts.iter().map(|&x| g(x)).collect();
    let mut out = Vec::new();
    for i in 0..cuts.len() {
        if values[i] == 0.0 {
            out.push(cuts[i]);
        } else if i + 1 < cuts.len() {
            let (fa, fb) = (values[i], values[i + 1]);
            if (fa < 0.0 && fb > 0.0) || (fa > 0.0 && fb < 0.0) {
                out.push(refine(g, cuts[i], cuts[i + 1]));
            }
        }
    }
    out
}

/// Converged when the bracket spans a few units in the last place, or g is
/// exactly zero.
struct RoundOff;

impl roots::Convergency<f64> for RoundOff {
    fn is_root_found(&mut self, y: f64) -> bool {
        y == 0.0
    }
    fn is_converged(&mut self, a: f64, b: f64) -> bool {
        (a - b).abs() <= 2.0 * f64::EPSILON * a.abs().max(b.abs()) + f64::MIN_POSITIVE
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        iter >= 400
    }
}

/// The zero of g between a and b (where g changes sign) to round-off: by
/// Brent's method, or by bisection when an end value is infinite (Brent's
/// interpolation needs finite values) or Brent does not converge.
pub(crate) fn refine(g: &dyn Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    let (ga, gb) = (g(a), g(b));
    if ga.is_finite() && gb.is_finite() {
        if let Ok(r) = roots::find_root_brent(a, b, g, &mut RoundOff) {
            return r;
        }
    }
    let (mut a, mut b, negative_at_a) = (a, b, ga < 0.0);
    for _ in 0..2100 {
        let m = 0.5 * (a + b);
        // a and b adjacent floating-point numbers: the bracket cannot shrink.
        if m.to_bits() == a.to_bits() || m.to_bits() == b.to_bits() {
            break;
        }
        let gm = g(m);
        if gm == 0.0 {
            return m;
        }
        if (gm < 0.0) == negative_at_a {
            a = m;
        } else {
            b = m;
        }
    }
    0.5 * (a + b)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formula::parse;

    fn points(src: &str, lo: f64, hi: f64, fence: &[f64]) -> Vec<f64> {
        let consts = |n: &str| match n {
            "z0" => Some(12.3456),
            "w" => Some(2e-4),
            "z1" => Some(11_000.0),
            _ => None,
        };
        switch_points(&parse(src).unwrap(), "z", (lo, hi), fence, &consts)
    }

    #[test]
    fn linear_conditions_are_solved_to_round_off() {
        assert_eq!(points("1 if z < z1 else 2", 0.0, 84_852.0, &[]), [11_000.0]);
        let r = points("1 if 3*z + 1 > 0 else 2", -5.0, 5.0, &[]);
        assert_eq!(r.len(), 1);
        assert!((r[0] + 1.0 / 3.0).abs() <= f64::EPSILON, "{r:?}");
    }

    #[test]
    fn a_window_narrower_than_any_scan_is_found() {
        // |z − z0| < w switches at z0 ± w (w = 2e-4 on a range of 30).
        let fence: Vec<f64> = (0..=100).map(|i| 0.01 + 0.2999 * i as f64).collect();
        let r = points("4 if abs(z - z0) < w else 1", 0.01, 30.0, &fence);
        let want = [12.3456 - 2e-4, 12.3456, 12.3456 + 2e-4];
        assert_eq!(r.len(), 3, "{r:?}");
        for (got, want) in r.iter().zip(want) {
            assert!(
                (got - want).abs() <= 4.0 * f64::EPSILON * want,
                "{got} vs {want}"
            );
        }
    }

    #[test]
    fn two_zeros_inside_one_fence_interval_are_both_found() {
        // (z − 1)² − 1e-8 < 0 on [0, 3] with no fence inside: zeros 1 ± 1e-4,
        // separated by the zero of the derivative at z = 1.
        let r = points("1 if (z - 1)^2 - 1e-8 < 0 else 0", 0.0, 3.0, &[]);
        assert_eq!(r.len(), 2, "{r:?}");
        assert!((r[0] - (1.0 - 1e-4)).abs() < 1e-15 && (r[1] - (1.0 + 1e-4)).abs() < 1e-15);
        // A transcendental condition: exp(−z) < 0.1 at z = ln 10.
        let r = points("1 if exp(-z) < 0.1 else 0", 0.0, 5.0, &[]);
        assert_eq!(r.len(), 1);
        assert!((r[0] - 10f64.ln()).abs() < 4e-16, "{r:?}");
    }

    #[test]
    fn min_max_and_conditions_of_constants() {
        let r = points("min(z, 2) + max(z - 3, 0)", 0.0, 5.0, &[]);
        assert_eq!(r, [2.0, 3.0]);
        assert!(points("z if z1 < 3 else 2*z", 0.0, 5.0, &[]).is_empty());
    }

    #[test]
    fn refine_handles_infinite_ends() {
        // 1/z − 1 changes sign between 0 (+∞) and 2.
        let r = refine(&|z: f64| 1.0 / z - 1.0, 0.0, 2.0);
        assert!((r - 1.0).abs() < 1e-15, "{r}");
    }
}
