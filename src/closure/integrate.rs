//! Cumulative integration of a one-dimensional integrand between knots.
//!
//! Owns: the double-exponential segment rule (Takahasi & Mori 1974, Publ.
//! RIMS 9, 721, through the `quadrature` crate), the compensated cumulative
//! sum from an anchor, and evaluation at any point from the nearest knot.
//! The knots a caller passes include the switch points of piecewise laws
//! (see [`super::switches`]), so that each segment is smooth. Does not own:
//! physics, or finding the switch points.

use crate::formula::Program;

/// Accuracy requested from each double-exponential segment, relative to the
/// segment's scale |b − a| max|f|. Measured with the `quadrature` crate's
/// rule on smooth integrands over short segments, this target delivers
/// 3e-15 to 2e-14; asking for less than 1e-13 drives the rule to its finest
/// levels, whose tabulated weights are only good to about 3e-14, and makes
/// results worse, not better.
pub const SEGMENT_TOLERANCE: f64 = 1e-12;

/// ∫ₐᵇ f by the double-exponential rule (see [`SEGMENT_TOLERANCE`]), for
/// either order of a and b.
///
/// The rule may meet a non-finite value at an end point (an integrable
/// singularity such as x^(−1/2) at 0; nodes that round onto an end point), and
/// the `quadrature` crate counts such values as 0. Inside the segment a value
/// that is not finite means the integral does not exist there (a law that is
/// NaN, or a pole), so the result is NaN rather than an integral that quietly
/// skipped it.
pub fn segment(f: &dyn Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    if (b - a).abs() == 0.0 {
        return 0.0;
    }
    if b < a {
        // The crate divides the requested error by (b − a)/2: a reversed
        // interval would ask for a negative error and run to the finest
        // level, slower and less accurate (see SEGMENT_TOLERANCE).
        return -segment(f, b, a);
    }
    let m = 0.5 * (a + b);
    let scale = (b - a)
        * [f(a), f(m), f(b)]
            .into_iter()
            .filter(|v| v.is_finite())
            .fold(0.0f64, |s, v| s.max(v.abs()));
    let target = (SEGMENT_TOLERANCE * scale).max(f64::MIN_POSITIVE);
    let broken = std::cell::Cell::new(false);
    let g = |x: f64| {
        let v = f(x);
        if !v.is_finite() && x > a && x < b {
            broken.set(true);
        }
        v
    };
    let integral = quadrature::double_exponential::integrate(g, a, b, target).integral;
    if broken.get() {
        f64::NAN
    } else {
        integral
    }
}

/// An evaluation of the integrand to use next to one point instead of the
/// compiled program: laws that are 0/0 at an axis (a halo potential's
/// ln(1 + r/r_s)/r² − …) lose every digit in double precision next to it,
/// where the double-exponential rule puts many of its nodes.
pub struct Careful {
    /// The point (an axis or centre).
    pub near: f64,
    /// Within this distance of it, `eval` is used.
    pub within: f64,
    /// The careful evaluation (in 256-bit arithmetic, say).
    pub eval: Box<dyn Fn(f64) -> f64 + Send + Sync>,
}

impl Careful {
    /// The careful value at x, or None when x is not close to the point.
    pub fn at(&self, x: f64) -> Option<f64> {
        self.at_point(x).then(|| (self.eval)(x))
    }

    /// Whether x is close enough to the point to be evaluated carefully.
    pub fn at_point(&self, x: f64) -> bool {
        (x - self.near).abs() < self.within
    }
}

/// An integrand with its running integral tabulated at knots, measured from
/// an anchor knot where the integral is zero.
pub struct Cumulative {
    integrand: Program,
    careful: Option<Careful>,
    knots: Vec<f64>,
    values: Vec<f64>,
}

impl Cumulative {
    /// Tabulate ∫_anchor^knot f for every knot. `knots` need not be sorted
    /// and may repeat; the anchor is added to them. `careful` evaluates the
    /// integrand next to one point, where the program is not accurate.
    pub fn new(
        integrand: Program,
        careful: Option<Careful>,
        mut knots: Vec<f64>,
        anchor: f64,
    ) -> Cumulative {
        knots.push(anchor);
        knots.retain(|k| k.is_finite());
        knots.sort_by(|a, b| a.total_cmp(b));
        knots.dedup_by(|a, b| (*a - *b).abs() <= 1e-15 * a.abs().max(b.abs()));
        let ia = knots
            .iter()
            .enumerate()
            .min_by(|(_, a), (_, b)| (*a - anchor).abs().total_cmp(&(*b - anchor).abs()))
            .map(|(i, _)| i)
            .unwrap_or(0);
        knots[ia] = anchor;
        let mut cum = Cumulative {
            integrand,
            careful,
            knots,
            values: Vec::new(),
        };
        cum.values = cum.tabulate(ia);
        cum
    }

    /// The running integral at every knot from the knot `ia` (the anchor).
    fn tabulate(&self, ia: usize) -> Vec<f64> {
        let knots = &self.knots;
        let f = |x: f64| self.integrand(x);
        let mut values = vec![0.0; knots.len()];
        // Neumaier-compensated running sums outward from the anchor.
        let mut run = |range: &mut dyn Iterator<Item = (usize, usize)>| {
            let (mut sum, mut comp) = (0.0f64, 0.0f64);
            for (from, to) in range {
                let piece = segment(&f, knots[from], knots[to]);
                let t = sum + piece;
                comp += if sum.abs() >= piece.abs() {
                    (sum - t) + piece
                } else {
                    (piece - t) + sum
                };
                sum = t;
                values[to] = sum + comp;
            }
        };
        run(&mut (ia..knots.len() - 1).map(|i| (i, i + 1)));
        run(&mut (1..=ia).rev().map(|i| (i, i - 1)));
        values
    }

    /// ∫_anchor^x f, from the nearest knot — or from the knot on the other
    /// side of x when the nearest one is the careful point of [`Careful`]
    /// and x is not (the rule's nodes crowd at both ends of a segment, and
    /// careful evaluation is slow).
    pub fn at(&self, x: f64) -> f64 {
        if !x.is_finite() || self.knots.is_empty() {
            return f64::NAN;
        }
        let i = self.knots.partition_point(|k| *k < x);
        let k = match i {
            0 => 0,
            i if i == self.knots.len() => i - 1,
            i if (x - self.knots[i - 1]) <= (self.knots[i] - x) => i - 1,
            i => i,
        };
        let careful = |y: f64| self.careful.as_ref().is_some_and(|c| c.at_point(y));
        let k = if careful(self.knots[k]) && !careful(x) && k + 1 < self.knots.len() && i > k {
            k + 1
        } else {
            k
        };
        let f = |s: f64| self.integrand(s);
        self.values[k] + segment(&f, self.knots[k], x)
    }

    /// The integrand at x (carefully next to the point of [`Careful`]).
    pub fn integrand(&self, x: f64) -> f64 {
        self.careful
            .as_ref()
            .and_then(|c| c.at(x))
            .unwrap_or_else(|| self.integrand.eval(&[x]))
    }

    /// The knots, sorted.
    pub fn knots(&self) -> &[f64] {
        &self.knots
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::cell::Cell;

    #[test]
    fn descending_segment_costs_what_the_ascending_one_does() {
        // ∫₀¹ eˣ dx = e − 1 (elementary calculus); the reversed interval is
        // its negative and must converge as fast, not run to the rule's
        // finest level because the requested error came out negative.
        let calls = Cell::new(0usize);
        let f = |x: f64| {
            calls.set(calls.get() + 1);
            x.exp()
        };
        let up = segment(&f, 0.0, 1.0);
        let n_up = calls.replace(0);
        let down = segment(&f, 1.0, 0.0);
        let n_down = calls.get();
        let exact = std::f64::consts::E - 1.0;
        // 2e-14 relative: the accuracy this module documents (measured).
        assert!(
            (up - exact).abs() < 2e-14 * exact && (down + exact).abs() < 2e-14 * exact,
            "{up} {down} {exact}"
        );
        assert_eq!(
            n_down, n_up,
            "evaluations: ascending {n_up}, descending {n_down}"
        );
    }

    #[test]
    fn integrand_not_a_number_inside_a_segment_is_not_integrated_as_zero() {
        // √(1 − x) is NaN on (1, 2]: there is no integral over [0, 2].
        let f = |x: f64| (1.0 - x).sqrt();
        assert!(segment(&f, 0.0, 2.0).is_nan());
        assert!(segment(&f, 2.0, 0.0).is_nan());
        // An integrable singularity at an end point is still integrated:
        // ∫₀¹ x^(−1/2) dx = 2 (elementary calculus). The crate's node table
        // stops short of the end point, which costs ~3e-7 here (measured).
        let g = |x: f64| 1.0 / x.sqrt();
        let v = segment(&g, 0.0, 1.0);
        assert!((v - 2.0).abs() < 1e-6, "{v}");
    }
}
