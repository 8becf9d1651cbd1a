//! Integrated quantities as a table: the running integral of an integrand,
//! tabulated once at knots by the double-exponential rule, and evaluated
//! anywhere from the nearest knot by a fixed Gauss–Legendre rule whose
//! accuracy was verified on every segment when the table was built — no
//! quadrature to tolerance per call, no memo, the same arithmetic on the
//! block path and the scalar path.
//!
//! Owns: the verification and refinement of the knots, the cumulative sums
//! (compensated, outward from the anchor, each segment by the verified
//! fixed rule over its halves) and the evaluation. Does not own
//! the integrand (a compiled [`Kernel`] of one output, built by the
//! closure) or the choice of knots (grid edges and breakpoints, given).
//!
//! Accuracy: a point is integrated from its nearest knot, so over at most
//! half a segment. When the table is built, every half segment is integrated
//! both ways — the fixed [`RULE_POINTS`]-point Gauss–Legendre rule (Golub &
//! Welsch 1969, Math. Comp. 23, 221) and the double-exponential rule
//! (Takahasi & Mori 1974, Publ. RIMS 9, 721) — and a segment whose halves
//! disagree by more than [`VERIFY_TOLERANCE`] of their scale is split in two,
//! until they agree. Between a knot and a point closer to it than the half
//! segment the fixed rule is at least as accurate (its error falls with the
//! interval for an integrand smooth on the segment, which breakpoints make
//! every segment).

use super::integrate::{segment, Careful};
use crate::formula::{Kernel, Workspace};
use crate::sample::gauss::GaussLegendre;

/// Nodes of the fixed rule from the nearest knot (exact for polynomials of
/// degree 2n − 1 = 19).
pub const RULE_POINTS: usize = 10;

/// Largest disagreement accepted between the fixed rule and the
/// double-exponential rule on a half segment, relative to its scale
/// (length × largest |integrand| at the nodes): a few times the
/// double-exponential rule's own accuracy (3e-15 to 2e-14, measured; see
/// [`super::integrate::SEGMENT_TOLERANCE`]).
pub const VERIFY_TOLERANCE: f64 = 5e-14;

/// Halvings of one segment at most; beyond, the segment is kept as it is
/// (an integrand that never settles, NaN say, is reported by the checks).
const MAX_SPLITS: u32 = 40;

/// Halvings after which a disagreement that stops shrinking ends the
/// splitting (before, a feature narrower than the segment can make the
/// disagreement erratic).
const SETTLE_DEPTH: u32 = 12;

/// The running integral ∫_anchor^x f of a one-variable integrand.
pub struct Table {
    integrand: Kernel,
    magnitude: Kernel,
    careful: Option<Careful>,
    knots: Vec<f64>,
    values: Vec<f64>,
    /// Segments where the fixed rule could not be verified (an integrable
    /// singularity at an end, say): there the double-exponential rule is
    /// used, as it handles end-point singularities.
    unverified: Vec<bool>,
    nodes: Vec<f64>,
    weights: Vec<f64>,
}

impl Table {
    /// Tabulate ∫_anchor^knot f for every knot (they need not be sorted and
    /// may repeat; the anchor is added), after splitting every segment on
    /// which the fixed rule is not verified. `magnitude` is the size of the
    /// terms the integrand is made of (the sum of their absolute values):
    /// the integrand's rounding is relative to it, so the verification is
    /// too — an integrand whose terms cancel is not refined to chase its
    /// rounding noise. `careful` evaluates the integrand next to one point
    /// (an axis), where the compiled program loses digits.
    pub fn new(
        integrand: Kernel,
        magnitude: Kernel,
        careful: Option<Careful>,
        mut knots: Vec<f64>,
        anchor: f64,
    ) -> Table {
        let rule = GaussLegendre::new(RULE_POINTS).expect("a 10-point rule exists");
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
        let mut table = Table {
            integrand,
            magnitude,
            careful,
            knots: Vec::new(),
            values: Vec::new(),
            unverified: Vec::new(),
            nodes: rule.nodes,
            weights: rule.weights,
        };
        let mut ws = table.integrand.workspace();
        let (refined, unverified) = table.refine(&knots, &mut ws);
        table.unverified = unverified;
        table.values = table.cumulate(&refined, anchor, &mut ws);
        table.knots = refined;
        table
    }

    fn f(&self, x: f64, ws: &mut Workspace) -> f64 {
        if let Some(v) = self.careful.as_ref().and_then(|c| c.at(x)) {
            return v;
        }
        let mut out = [0.0];
        self.integrand.eval(&[x], &mut out, ws);
        out[0]
    }

    /// The double-exponential rule from `a` to `b`.
    fn de(&self, a: f64, b: f64, ws: &mut Workspace) -> f64 {
        let ws = std::cell::RefCell::new(ws);
        segment(&|x| self.f(x, &mut ws.borrow_mut()), a, b)
    }

    /// A workspace for [`Table::at`] and [`Table::eval`].
    pub fn workspace(&self) -> Workspace {
        self.integrand.workspace()
    }

    /// How far the fixed rule from `a` to `b` is from the
    /// double-exponential rule, relative to [`VERIFY_TOLERANCE`] times the
    /// scale (≤ 1 means verified; NaN counts as verified, the checks report
    /// it).
    fn disagreement(&self, a: f64, b: f64, ws: &mut Workspace) -> f64 {
        let fixed = self.fixed(a, b, ws);
        let de = self.de(a, b, ws);
        let (h, m) = (0.5 * (b - a), 0.5 * (a + b));
        let mut mag = [0.0];
        let scale = self
            .nodes
            .iter()
            .map(|t| {
                self.magnitude.eval(&[m + h * t], &mut mag, ws);
                mag[0].abs()
            })
            .fold(0.0f64, f64::max)
            * (b - a).abs();
        let d = (fixed - de).abs();
        if !d.is_finite() || d == 0.0 {
            0.0
        } else {
            d / (VERIFY_TOLERANCE * scale)
        }
    }

    /// The knots with every unverified segment split, in order. Deep down
    /// (past [`SETTLE_DEPTH`] halvings) splitting also stops where the
    /// disagreement no longer shrinks by half: a floor no subdivision lowers.
    fn refine(&self, knots: &[f64], ws: &mut Workspace) -> (Vec<f64>, Vec<bool>) {
        let mut out = vec![knots[0]];
        let mut unverified = Vec::new();
        for w in knots.windows(2) {
            let mut stack = vec![(w[0], w[1], 0u32, f64::INFINITY)];
            while let Some((a, b, depth, parent)) = stack.pop() {
                let m = 0.5 * (a + b);
                let d = self.disagreement(a, m, ws).max(self.disagreement(b, m, ws));
                let settled = depth >= SETTLE_DEPTH && d > 0.5 * parent;
                if d <= 1.0 || depth >= MAX_SPLITS || settled {
                    out.push(b);
                    unverified.push(d > 1.0);
                } else {
                    // The left half is popped first, so knots stay in order.
                    stack.push((m, b, depth + 1, d));
                    stack.push((a, m, depth + 1, d));
                }
            }
        }
        (out, unverified)
    }

    /// Neumaier-compensated running sums outward from the anchor (which is
    /// one of the knots); each segment is the fixed rule over its two
    /// halves, the rule the double-exponential one verified there.
    fn cumulate(&self, knots: &[f64], anchor: f64, ws: &mut Workspace) -> Vec<f64> {
        let ia = knots
            .iter()
            .position(|k| k.to_bits() == anchor.to_bits())
            .unwrap_or(0);
        let mut values = vec![0.0; knots.len()];
        let mut run = |range: &mut dyn Iterator<Item = (usize, usize)>| {
            let (mut sum, mut comp) = (0.0f64, 0.0f64);
            for (from, to) in range {
                let (a, b) = (knots[from], knots[to]);
                let m = 0.5 * (a + b);
                let piece = if self.unverified[from.min(to)] {
                    self.de(a, b, ws)
                } else {
                    self.fixed(a, m, ws) + self.fixed(m, b, ws)
                };
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

    /// The fixed rule from `a` to `b` (either order).
    fn fixed(&self, a: f64, b: f64, ws: &mut Workspace) -> f64 {
        let (h, m) = (0.5 * (b - a), 0.5 * (a + b));
        let mut f = [0.0; RULE_POINTS];
        for (v, t) in f.iter_mut().zip(&self.nodes) {
            *v = self.f(m + h * t, ws);
        }
        self.sum(h, &f)
    }

    /// Σ wⱼ fⱼ · h, in one fixed order (both paths use it).
    fn sum(&self, h: f64, f: &[f64]) -> f64 {
        let mut s = 0.0;
        for (w, v) in self.weights.iter().zip(f) {
            s += w * v;
        }
        s * h
    }

    /// The knot nearest to `x` (the lower on a tie), or None for a point
    /// that is not finite.
    fn nearest(&self, x: f64) -> Option<usize> {
        if !x.is_finite() || self.knots.is_empty() {
            return None;
        }
        let i = self.knots.partition_point(|k| *k < x);
        Some(match i {
            0 => 0,
            i if i == self.knots.len() => i - 1,
            i if (x - self.knots[i - 1]) <= (self.knots[i] - x) => i - 1,
            i => i,
        })
    }

    /// Whether the piece from knot `k` to `x` lies in an unverified segment.
    fn needs_de(&self, k: usize, x: f64) -> bool {
        let seg = if x > self.knots[k] {
            k
        } else {
            k.wrapping_sub(1)
        };
        self.unverified.get(seg).copied().unwrap_or(false)
    }

    /// ∫_anchor^x f (the scalar path).
    pub fn at(&self, x: f64, ws: &mut Workspace) -> f64 {
        let Some(k) = self.nearest(x) else {
            return f64::NAN;
        };
        let a = self.knots[k];
        if x.to_bits() == a.to_bits() {
            return self.values[k];
        }
        if self.needs_de(k, x) {
            return self.values[k] + self.de(a, x, ws);
        }
        self.values[k] + self.fixed(a, x, ws)
    }

    /// ∫_anchor^x f at every x of `xs` into `out` (the block path): the
    /// nodes of every point are evaluated as one block. `nodes` and `f` are
    /// scratch buffers.
    pub fn eval(
        &self,
        xs: &[f64],
        out: &mut [f64],
        nodes: &mut Vec<f64>,
        f: &mut Vec<f64>,
        ws: &mut Workspace,
    ) {
        let n = RULE_POINTS;
        nodes.clear();
        for &x in xs {
            match self.nearest(x) {
                Some(k) => {
                    let a = self.knots[k];
                    let (h, m) = (0.5 * (x - a), 0.5 * (a + x));
                    nodes.extend(self.nodes.iter().map(|t| m + h * t));
                }
                None => nodes.extend(std::iter::repeat_n(f64::NAN, n)),
            }
        }
        f.resize(nodes.len(), 0.0);
        self.integrand.run(&[nodes], &mut [&mut f[..]], ws);
        if let Some(c) = &self.careful {
            for (v, x) in f.iter_mut().zip(nodes.iter()) {
                if let Some(careful) = c.at(*x) {
                    *v = careful;
                }
            }
        }
        for (i, (&x, o)) in xs.iter().zip(out.iter_mut()).enumerate() {
            *o = match self.nearest(x) {
                None => f64::NAN,
                Some(k) if x.to_bits() == self.knots[k].to_bits() => self.values[k],
                Some(k) if self.needs_de(k, x) => self.values[k] + self.de(self.knots[k], x, ws),
                Some(k) => {
                    let h = 0.5 * (x - self.knots[k]);
                    self.values[k] + self.sum(h, &f[i * n..(i + 1) * n])
                }
            };
        }
    }

    /// The knots, sorted (after refinement).
    pub fn knots(&self) -> &[f64] {
        &self.knots
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formula::parse;

    fn table(src: &str, knots: Vec<f64>, anchor: f64) -> Table {
        let e = parse(src).unwrap();
        let k = Kernel::compile(&[("f", &e)], &["x"], &|_| None).unwrap();
        let m = Kernel::compile(&[("m", &e)], &["x"], &|_| None).unwrap();
        Table::new(k, m, None, knots, anchor)
    }

    #[test]
    fn block_and_scalar_paths_agree_to_the_bit_and_to_the_closed_form() {
        // ∫₀ˣ cos t dt = sin x (elementary calculus).
        let t = table("cos(x)", (0..=8).map(|i| i as f64).collect(), 0.0);
        let xs: Vec<f64> = (0..300).map(|i| -0.5 + i as f64 * 0.029).collect();
        let mut out = vec![0.0; xs.len()];
        let (mut nodes, mut f) = (Vec::new(), Vec::new());
        let mut ws = t.integrand.workspace();
        t.eval(&xs, &mut out, &mut nodes, &mut f, &mut ws);
        for (x, v) in xs.iter().zip(&out) {
            assert_eq!(v.to_bits(), t.at(*x, &mut ws).to_bits(), "x = {x}");
            assert!((v - x.sin()).abs() < 1e-14, "x = {x}: {v} vs {}", x.sin());
        }
    }

    #[test]
    fn a_sharp_integrand_is_refined_until_the_rule_is_verified() {
        // A narrow Lorentzian: ∫ dx/(1 + (x/w)²) = w atan(x/w) (elementary
        // calculus). Two knots only: the segment must be split.
        let w = 1e-3;
        let src = format!("1/(1 + (x/{w})^2)");
        let t = table(&src, vec![-1.0, 1.0], -1.0);
        assert!(t.knots().len() > 10, "{} knots", t.knots().len());
        let mut ws = t.integrand.workspace();
        for x in [-0.5f64, -0.01, -1e-4, 0.0, 3e-4, 0.2, 0.9] {
            let want = w * ((x / w).atan() - (-1.0f64 / w).atan());
            let got = t.at(x, &mut ws);
            assert!(
                (got - want).abs() < 1e-13 * (w * std::f64::consts::PI),
                "{x}: {got} {want}"
            );
        }
    }
}
