//! Jumps at switch points. A law that switches formula may jump there, and
//! a jump in a quantity the balance differentiates (P where it is derived,
//! c² where its gradient enters, Φ) is not an equilibrium: differentiating
//! piece by piece loses the delta function at the switch. This module
//! compares the left and right limits of such quantities at every switch.
//!
//! The limits are one-sided quadratic extrapolations from three points at
//! steps h, 2h, 3h on each side, L = 3f(x−h) − 3f(x−2h) + f(x−3h) (exact for
//! quadratics, error h³ f‴/… otherwise), with h = 1e-9 of the coordinate's
//! scale and at most an eighth of the distance to the neighbouring switch
//! or domain end, so the points stay inside their piece. For a law that is
//! continuous there the two limits agree to a few units of rounding (the
//! coefficients sum to 7), far below any tolerance; a jump stands out at its
//! own size.
//!
//! Owns: the one-sided limits and the list of jumps. Does not own: which
//! quantities are differentiated (`closure::Laws::watched`), where the
//! switches are (`closure::switches`), or whether a jump is intended.

use crate::closure::switches::Switch;

/// A quantity that takes different values on the two sides of a switch.
#[derive(Clone, Debug, PartialEq)]
pub struct Jump {
    /// What jumps: `pressure`, `c^2` or `potential`.
    pub quantity: String,
    /// The profile keys of the laws that switch there.
    pub laws: Vec<String>,
    /// Where.
    pub at: f64,
    /// The limit from below.
    pub left: f64,
    /// The limit from above.
    pub right: f64,
    /// The profile declares the jump intended (`balance.intended_jumps`).
    pub intended: bool,
}

impl Jump {
    /// The relative size |right − left| / max(|left|, |right|), between 0
    /// and 2 (1 for a jump to or from zero).
    pub fn relative(&self) -> f64 {
        let big = self.left.abs().max(self.right.abs());
        if big > 0.0 {
            (self.right - self.left).abs() / big
        } else {
            0.0
        }
    }

    /// One line: the laws, the quantity, where, from what to what and the
    /// relative size, with the coordinate named `s`.
    pub fn describe(&self, s: &str) -> String {
        format!(
            "{}: the {} jumps at {s} = {} from {:.6e} to {:.6e} (relative jump {:.3e})",
            self.laws.join(" and "),
            self.quantity,
            crate::closure::show(self.at),
            self.left,
            self.right,
            self.relative()
        )
    }
}

/// The limits of `f` at `x` from the left and from the right, by quadratic
/// extrapolation from steps `h_left` and `h_right`, and the scale of `f`
/// around `x` against which a difference of the two is measured: the largest
/// magnitude sampled plus (|x| + 3h)·|f′| (the sample positions are rounded
/// to a unit in the last place of x, which moves a steep f by that much).
pub fn one_sided_limits(
    f: &dyn Fn(f64) -> f64,
    x: f64,
    (h_left, h_right): (f64, f64),
) -> (f64, f64, f64) {
    let side = |h: f64| {
        let v = [f(x + h), f(x + 2.0 * h), f(x + 3.0 * h)];
        let size = v.iter().fold(0.0f64, |m, y| m.max(y.abs()));
        let slope = ((v[2] - v[0]) / (2.0 * h)).abs();
        let limit = 3.0 * v[0] - 3.0 * v[1] + v[2];
        (
            limit,
            size.max(limit.abs()) + (x.abs() + 3.0 * h.abs()) * slope,
        )
    };
    let (left, sl) = side(-h_left);
    let (right, sr) = side(h_right);
    (left, right, sl.max(sr))
}

/// The steps for the one-sided limits at each of the sorted points `at`
/// inside [lo, hi]: 1e-9 of max(|x|, 1e-3 (hi − lo)), and at most an eighth
/// of the distance to the neighbouring point or domain end.
pub fn steps(at: &[f64], (lo, hi): (f64, f64)) -> Vec<(f64, f64)> {
    (0..at.len())
        .map(|i| {
            let x = at[i];
            let base = 1e-9 * x.abs().max(1e-3 * (hi - lo));
            let prev = if i > 0 { at[i - 1] } else { lo };
            let next = at.get(i + 1).copied().unwrap_or(hi);
            (base.min((x - prev) / 8.0), base.min((next - x) / 8.0))
        })
        .collect()
}

/// Every jump of each named quantity at each switch strictly inside
/// (lo, hi) whose size exceeds `tolerance` relative to the values around it.
/// Quantities that are not finite on either side (a pole) are skipped.
pub fn find(
    quantities: &[(&str, &dyn Fn(f64) -> f64)],
    switches: &[Switch],
    (lo, hi): (f64, f64),
    tolerance: f64,
) -> Vec<Jump> {
    let inside: Vec<&Switch> = switches.iter().filter(|w| w.at > lo && w.at < hi).collect();
    let at: Vec<f64> = inside.iter().map(|w| w.at).collect();
    let mut out = Vec::new();
    for (w, h) in inside.iter().zip(steps(&at, (lo, hi))) {
        for (name, f) in quantities {
            let (left, right, scale) = one_sided_limits(*f, w.at, h);
            if left.is_finite() && right.is_finite() && (right - left).abs() > tolerance * scale {
                out.push(Jump {
                    quantity: name.to_string(),
                    laws: w.laws.clone(),
                    at: w.at,
                    left,
                    right,
                    intended: false,
                });
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(x: f64) -> Vec<Switch> {
        vec![Switch {
            at: x,
            laws: vec!["balance.density".into()],
        }]
    }

    #[test]
    fn a_step_is_a_jump_and_a_kink_is_not() {
        let step = |x: f64| if x < 0.8 { 1e-3 * x } else { x };
        let kink = |x: f64| (x - 0.8).abs() + (-x).exp();
        let smooth = |x: f64| (40.0 * (x - 0.8)).tanh();
        let q: [(&str, &dyn Fn(f64) -> f64); 3] =
            [("pressure", &step), ("c^2", &kink), ("potential", &smooth)];
        let jumps = find(&q, &at(0.8), (0.4, 2.5), 1e-10);
        assert_eq!(jumps.len(), 1, "{jumps:?}");
        let j = &jumps[0];
        assert_eq!(j.quantity, "pressure");
        assert!((j.left - 8e-4).abs() < 1e-15 && (j.right - 0.8).abs() < 1e-12);
        assert!((j.relative() - 0.999).abs() < 1e-12);
        assert!(j
            .describe("R")
            .starts_with("balance.density: the pressure jumps at R = 0.8"));
    }

    #[test]
    fn limits_are_exact_for_quadratics_and_stay_inside_their_piece() {
        // f = (x − 1)² on the right, 0 on the left: continuous, so no jump even
        // where both limits are zero.
        let f = |x: f64| if x < 1.0 { 0.0 } else { (x - 1.0) * (x - 1.0) };
        assert!(find(&[("potential", &f)], &at(1.0), (0.0, 2.0), 1e-10).is_empty());
        // A neighbouring switch 1e-12 away bounds the step.
        let h = steps(&[1.0, 1.0 + 1e-12], (0.0, 2.0));
        assert!(
            h[0].1 < 1.3e-13 && h[1].0 < 1.3e-13 && h[0].0 > 1e-10,
            "{h:?}"
        );
    }
}
