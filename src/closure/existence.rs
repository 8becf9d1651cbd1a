//! Where a solved state is no physical equilibrium: a density, pressure or
//! c² that is not positive, or a v_φ² below zero (gravity cannot hold the
//! pressure gradient). The survey walks sorted scan points, keeps each
//! quantity's minimum and the intervals where it fails, and refines the ends
//! of each interval between the neighbouring scan points to round-off.
//!
//! Owns: the survey and its messages. Does not own: what to do about a
//! failure (`build` refuses, `check` reports it as a failed check, `table`
//! marks the rows).

use crate::background::Background;

/// One quantity over the scan: its minimum, where, and where it fails.
#[derive(Clone, Debug, PartialEq)]
pub struct Extent {
    /// `density`, `pressure`, `c^2` or `v_phi^2`.
    pub quantity: &'static str,
    /// Must be positive (true) or only not negative (false, v_φ²).
    pub strict: bool,
    /// The smallest value met (NaN when a value was not a number).
    pub min: f64,
    /// Where the minimum is.
    pub at: f64,
    /// The intervals where the quantity fails, in order.
    pub failing: Vec<(f64, f64)>,
}

impl Extent {
    /// Whether a value fails: not a number, infinite, or ≤ 0 (< 0 when not
    /// strict).
    pub fn fails(strict: bool, v: f64) -> bool {
        !v.is_finite() || v < 0.0 || (strict && v <= 0.0)
    }

    /// True when the quantity never fails.
    pub fn ok(&self) -> bool {
        self.failing.is_empty()
    }

    /// Where it fails, in words, with the coordinate named `s`; `law` names
    /// what gives v_φ² (`the derived rotation law`). None when it does not.
    pub fn describe(&self, s: &str, law: &str) -> Option<String> {
        let &(a, b) = self.failing.first()?;
        let more = match self.failing.len() {
            1 => String::new(),
            n => format!(
                " and in {} more interval{}",
                n - 1,
                if n == 2 { "" } else { "s" }
            ),
        };
        let (a, b, at) = (show(a), show(b), show(self.at));
        let min = self.min;
        Some(if !min.is_finite() {
            match self.quantity {
                "v_phi^2" => format!("{law} gives v_phi^2 that is not a number at {s} = {at}"),
                q => format!("{q} is not finite at {s} = {at}"),
            }
        } else if self.quantity == "v_phi^2" && a == b {
            format!(
                "{law} needs v_phi^2 < 0 at {s} = {a}{more} (v_phi^2 = {min:.6e}): gravity cannot \
                 hold the pressure gradient there"
            )
        } else if self.quantity == "v_phi^2" {
            format!(
                "{law} needs v_phi^2 < 0 between {s} = {a} and {s} = {b}{more} (minimum v_phi^2 = \
                 {min:.6e} at {s} = {at}): gravity cannot hold the pressure gradient there"
            )
        } else if a == b {
            format!("{} ≤ 0 ({min:e}) at {s} = {a}", self.quantity)
        } else {
            format!(
                "{} ≤ 0 at {s} = {a} through {s} = {b}{more} (minimum {min:.6e} at {s} = {at})",
                self.quantity
            )
        })
    }
}

/// A coordinate for a message, six significant digits.
fn show(x: f64) -> String {
    super::show(x)
}

/// The extent of one quantity `f` over the sorted points `pts`.
pub fn extent(quantity: &'static str, strict: bool, f: &dyn Fn(f64) -> f64, pts: &[f64]) -> Extent {
    let values: Vec<f64> = pts.iter().map(|&x| f(x)).collect();
    let (mut min, mut at) = (f64::INFINITY, pts.first().copied().unwrap_or(f64::NAN));
    for (&x, &v) in pts.iter().zip(&values) {
        if v < min || (v.is_nan() && !min.is_nan()) {
            min = v;
            at = x;
        }
    }
    let bad = |i: usize| Extent::fails(strict, values[i]);
    // The boundary between a good point i and a bad point j (finite values
    // on both sides), to round-off; else the bad point itself.
    let boundary = |i: usize, j: usize| {
        if values[i].is_finite() && values[j].is_finite() {
            super::switches::refine(f, pts[i], pts[j])
        } else {
            pts[j]
        }
    };
    let mut failing = Vec::new();
    let mut i = 0;
    while i < pts.len() {
        if !bad(i) {
            i += 1;
            continue;
        }
        let start = if i > 0 { boundary(i - 1, i) } else { pts[i] };
        let mut j = i;
        while j + 1 < pts.len() && bad(j + 1) {
            j += 1;
        }
        let end = if j + 1 < pts.len() {
            boundary(j + 1, j)
        } else {
            pts[j]
        };
        failing.push((start, end));
        i = j + 1;
    }
    Extent {
        quantity,
        strict,
        min,
        at,
        failing,
    }
}

/// Density, pressure and c² of `bg` (which must be positive) and, when
/// given, v_φ² (which must not be negative), over the sorted points `pts`.
pub fn survey(
    bg: &dyn Background,
    rotation_sq: Option<&dyn Fn(f64) -> f64>,
    pts: &[f64],
) -> Vec<Extent> {
    // Each state once per scan point; points between them (the ends of a
    // failing interval being refined) are evaluated as they come.
    let states: Vec<crate::background::State> = pts.iter().map(|&x| bg.on_line(x)).collect();
    let state = |x: f64| match pts.binary_search_by(|p| p.total_cmp(&x)) {
        Ok(i) => states[i],
        Err(_) => bg.on_line(x),
    };
    let mut out = vec![
        extent("density", true, &|x| state(x).density, pts),
        extent("pressure", true, &|x| state(x).pressure, pts),
        extent("c^2", true, &|x| state(x).sound_speed_sq(), pts),
    ];
    if let Some(v2) = rotation_sq {
        out.push(extent("v_phi^2", false, v2, pts));
    }
    out
}

/// The failures of a survey, in words: those of ρ, P and c² when there are
/// any (they are the cause; a v_φ² derived from them only its symptom),
/// else that of v_φ².
pub fn failures(survey: &[Extent], s: &str, law: &str) -> Vec<String> {
    let given: Vec<String> = survey
        .iter()
        .filter(|e| e.quantity != "v_phi^2")
        .filter_map(|e| e.describe(s, law))
        .collect();
    if !given.is_empty() {
        return given;
    }
    survey.iter().filter_map(|e| e.describe(s, law)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn intervals_are_refined_between_scan_points() {
        // v² = 1 − R² on a coarse scan of [0, 2]: fails on (1, 2].
        let pts: Vec<f64> = (0..=8).map(|i| 0.25 * i as f64).collect();
        let e = extent("v_phi^2", false, &|r: f64| 1.0 - r * r, &pts);
        assert_eq!(e.failing.len(), 1);
        assert!((e.failing[0].0 - 1.0).abs() < 1e-15 && (e.failing[0].1 - 2.0).abs() < 1e-15);
        assert!((e.min + 3.0).abs() < 1e-15 && (e.at - 2.0).abs() < 1e-15);
        let text = e.describe("R", "the derived rotation law").unwrap();
        assert!(
            text.starts_with("the derived rotation law needs v_phi^2 < 0 between R = 1 and R = 2 (minimum v_phi^2 = -3"),
            "{text}"
        );
        // Two separate intervals, and a density that touches zero at R = 1.
        let e = extent("density", true, &|r: f64| (r - 1.0).powi(2) - 0.01, &pts);
        assert_eq!(e.failing.len(), 1, "{:?}", e.failing);
        let e = extent("density", true, &|r: f64| (r - 0.5).sin(), &pts);
        assert!(e
            .describe("R", "")
            .unwrap()
            .contains("≤ 0 at R = 0 through R = 0.5"));
    }
}
