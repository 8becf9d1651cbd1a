//! What a law does as the coordinate approaches the axis (R = 0) or the
//! centre (r = 0) of a grid that contains it. Many regular laws are 0/0
//! there in floating point (a halo potential −GM ln(1 + r/r_s)/r → −GM/r_s),
//! so the value at the point says nothing; the limit does.
//!
//! The limit from above is read off the values at s_k = point + L·10^(−k),
//! k = 2 … 32 (L the extent of the domain), evaluated in 256-bit arithmetic
//! so that cancellations such as ln(1 + 1e-30) stay exact. The law has a
//! finite limit when, over the last eight steps, the change between
//! successive values shrinks by at least 5 % per decade or has fallen below
//! a few units in the last place: f = f₀ + c s^α with α > 0.02 converges,
//! a logarithm (equal steps) or a power with α ≤ 0 does not.
//!
//! The same 0/0 laws make double precision useless right next to the point
//! (ln(1 + 1e-12) keeps four digits of 1e-12): [`unreliable_within`] finds
//! how close to it a compiled law still agrees with 256-bit arithmetic, so
//! that integrals can evaluate the integrand carefully there.
//!
//! Owns: the limit test, its classification of a potential, and the reach
//! of double-precision trouble next to the point. Does not own: the advice
//! given for each case (`closure`, `pipeline`).

use crate::formula::{Expr, Program};

/// How a potential behaves at the axis or centre.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Approach {
    /// Φ and dΦ/ds have finite limits; `value` is Φ's.
    Regular {
        /// The limit of Φ.
        value: f64,
    },
    /// Φ has a finite limit (`value`) but |dΦ/ds| grows without bound.
    SingularGradient {
        /// The limit of Φ.
        value: f64,
    },
    /// Φ itself has no finite limit (a point mass, a logarithm).
    Singular,
}

/// Decades of approach, and how many of the last ones must converge.
const DECADES: std::ops::RangeInclusive<i32> = 2..=32;
const SETTLED: usize = 8;

/// A law in 256-bit arithmetic with `var` = x, rounded to double; NaN when
/// it cannot be evaluated.
fn extended(expr: &Expr, var: &str, x: f64, lookup: &dyn Fn(&str) -> Option<f64>) -> f64 {
    expr.eval_extended(&|n| if n == var { Some(x) } else { lookup(n) })
        .unwrap_or(f64::NAN)
}

/// The limit of `expr` as `var` → `point` from above, or None when it has
/// none; `scale` is the extent of the domain and `lookup` gives every other
/// name.
pub fn limit_from_above(
    expr: &Expr,
    var: &str,
    point: f64,
    scale: f64,
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Option<f64> {
    let values: Vec<f64> = DECADES
        .map(|k| extended(expr, var, point + scale * 10f64.powi(-k), lookup))
        .collect();
    if values.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let steps: Vec<f64> = values.windows(2).map(|w| (w[1] - w[0]).abs()).collect();
    let settled = steps.windows(2).rev().take(SETTLED).all(|d| {
        let ulps = 8.0 * f64::EPSILON * values.last().map_or(0.0, |v| v.abs());
        d[1] <= ulps || d[1] <= d[0] / 1.05
    });
    settled.then(|| *values.last().unwrap_or(&f64::NAN))
}

/// How the potential `phi` behaves as `var` → `point` from above.
pub fn approach(
    phi: &Expr,
    var: &str,
    point: f64,
    scale: f64,
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Approach {
    match limit_from_above(phi, var, point, scale, lookup) {
        None => Approach::Singular,
        Some(value) => match limit_from_above(&phi.diff(var), var, point, scale, lookup) {
            Some(_) => Approach::Regular { value },
            None => Approach::SingularGradient { value },
        },
    }
}

/// The distance from `point` below which the compiled `program` and the
/// 256-bit evaluation of `expr` (the same law) differ by more than 1e-10
/// relative, probed at point + L·10^(−k) for k = 1 … 16 (ten times the
/// farthest probe that disagrees); None when they agree at every probe.
///
/// Why 1e-10: the rounding error of a 0/0 law grows like ε/d² at distance d
/// from the point, so beyond the returned distance it is below 1e-10 and
/// falls fast; its share of an integral over the domain is then below
/// 1e-10 × (distance / L), orders below the balance tolerance.
pub fn unreliable_within(
    expr: &Expr,
    program: &Program,
    var: &str,
    (point, scale): (f64, f64),
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Option<f64> {
    (1..=16).find_map(|k| {
        let dx = scale * 10f64.powi(-k);
        let careful = extended(expr, var, point + dx, lookup);
        let quick = program.eval(&[point + dx]);
        let off = (quick - careful).abs() > 1e-10 * careful.abs() || !quick.is_finite();
        (careful.is_finite() && off).then_some(10.0 * dx)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formula::parse;

    fn at_zero(src: &str) -> Approach {
        let look = |n: &str| match n {
            "G" | "M" => Some(1.0),
            "r_s" => Some(2.0),
            _ => None,
        };
        approach(&parse(src).unwrap(), "r", 0.0, 10.0, &look)
    }

    #[test]
    fn potentials_at_the_centre() {
        // NFW-like halo: −GM ln(1 + r/r_s)/r → −GM/r_s (first-order Taylor
        // expansion of ln(1 + x)); its force tends to GM/(2 r_s²).
        match at_zero("-G*M*log(1 + r/r_s)/r") {
            Approach::Regular { value } => assert!((value + 0.5).abs() < 1e-15, "{value}"),
            a => panic!("{a:?}"),
        }
        assert_eq!(at_zero("-G*M/r"), Approach::Singular);
        assert_eq!(at_zero("log(r)"), Approach::Singular);
        assert!(
            matches!(at_zero("-G*M/sqrt(r^2 + 0.01)"), Approach::Regular { value } if (value + 10.0).abs() < 1e-12)
        );
        // Finite value, unbounded force: Φ = √r.
        assert!(
            matches!(at_zero("sqrt(r)"), Approach::SingularGradient { value } if value.abs() < 1e-14)
        );
    }
}
