//! The balance check of design.md §3: is the background an equilibrium, how
//! exactly, and would a scheme without well-balancing hold it?
//!
//! * Closed-form pressure (derived rotation, or an audit of given laws): the
//!   residual is built from exact symbolic derivatives and is *identically
//!   zero* when it simplifies to 0 or vanishes at random points in 256-bit
//!   arithmetic, in every piece of a piecewise residual (probabilistic
//!   identity testing, Schwartz 1980, J. ACM 27, 701); otherwise its largest value relative to the largest term of the
//!   balance is reported with where it occurs.
//! * Integrated closures: the balance in integral form from the anchor to
//!   each check point, q(s) − q(anchor) − ∫ f ds with q = ln ρ, P or ln P:
//!   the stored values against an independent composite Gauss–Legendre rule
//!   (20 points per piece, split at kinks), relative to ∫|f|.
//! * Positivity of ρ, P, c² (and v_φ² for disks) over the domain.
//! * The discrete imbalance of the sampled data under second-order centred
//!   differences at the grid's resolution (what an unbalanced scheme sees).
//!
//! Owns: the verdicts and the report text. Does not own: solving or grids.

use std::fmt;

use crate::background::{Background, Shape};
use crate::closure::{self, ClosureError, Domain, Laws};
use crate::formula::Program;
use crate::model::Model;
use crate::sample::gauss::GaussLegendre;

/// The largest relative residual accepted by default (`check --tolerance`).
pub const DEFAULT_TOLERANCE: f64 = 1e-10;

/// How the balance holds.
#[derive(Clone, Debug, PartialEq)]
pub enum Verdict {
    /// The residual is zero as a formula.
    IdenticallyZero {
        /// How that was established.
        how: String,
    },
    /// The residual is within the tolerance (integrated backgrounds, or
    /// laws that balance only approximately).
    ZeroToTolerance {
        /// Largest relative residual.
        max: f64,
        /// Where it occurs.
        at: f64,
    },
    /// The laws do not balance.
    NotEquilibrium {
        /// Largest relative residual.
        max: f64,
        /// Where it occurs.
        at: f64,
    },
}

/// The whole report.
#[derive(Clone, Debug, PartialEq)]
pub struct Report {
    /// The background coordinate name.
    pub coordinate: String,
    /// The verdict on the continuous balance.
    pub verdict: Verdict,
    /// The residual formula, when closed form.
    pub residual_formula: Option<String>,
    /// Minimum of each quantity that must be positive (or, for v_φ², not
    /// negative) with where it occurs: (name, minimum, where, strict).
    pub positivity: Vec<(String, f64, f64, bool)>,
    /// Largest relative imbalance of second-order centred differences of
    /// the sampled state at the grid's cell centres, and where.
    pub discrete: Option<(f64, f64)>,
    /// The tolerance used.
    pub tolerance: f64,
}

impl Report {
    /// True when the balance holds (identically or to tolerance) and every
    /// positive quantity is positive.
    pub fn passed(&self) -> bool {
        !matches!(self.verdict, Verdict::NotEquilibrium { .. })
            && self
                .positivity
                .iter()
                .all(|(_, v, _, strict)| if *strict { *v > 0.0 } else { *v >= 0.0 })
    }
}

/// Run the check of the model's background over the domain. `centres` are
/// the background coordinates of the grid's cell centres along its radial or
/// vertical axis, for the discrete imbalance.
pub fn run(
    model: &Model,
    bg: &dyn Background,
    domain: &Domain,
    centres: &[f64],
    tolerance: f64,
) -> Result<Report, ClosureError> {
    let laws = Laws::build(model)?;
    let (verdict, formula) = match (&laws.integrand, laws.residual(model)) {
        (None, Some((res, terms))) => closed_form(model, domain, &res, &terms, tolerance)?,
        (Some(f), _) => (integral_form(model, bg, domain, f, tolerance)?, None),
        (None, None) => {
            return Err(ClosureError::Incomplete(
                "nothing to check: no pressure law".into(),
            ))
        }
    };
    let mut positivity = Vec::new();
    let pts = domain.scan_points();
    let mut track = |name: &str, strict: bool, f: &dyn Fn(f64) -> f64| {
        let (mut m, mut at) = (f64::INFINITY, f64::NAN);
        for &x in &pts {
            let v = f(x);
            if v < m || v.is_nan() {
                m = v;
                at = x;
            }
        }
        positivity.push((name.to_string(), m, at, strict));
    };
    track("density", true, &|x| bg.at(x).density);
    track("pressure", true, &|x| bg.at(x).pressure);
    track("c^2", true, &|x| bg.at(x).sound_speed_sq());
    if model.shape == Shape::DiskMidplane {
        if let Some(v2) = &laws.rotation_sq {
            let p = closure::compile(model, v2, "rotation")?;
            track("v_phi^2", false, &|x| p.eval(&[x]));
        }
    }
    let discrete = discrete_imbalance(model.shape, bg, centres);
    Ok(Report {
        coordinate: model.coordinate().to_string(),
        verdict,
        residual_formula: formula,
        positivity,
        discrete,
        tolerance,
    })
}

/// A deterministic stream of uniform numbers in [0, 1) (xorshift64*,
/// Vigna 2016, ACM TOMS 42, 30) so checks are reproducible.
struct Uniform(u64);
impl Uniform {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn closed_form(
    model: &Model,
    domain: &Domain,
    res: &crate::formula::Expr,
    terms: &[(String, crate::formula::Expr)],
    tol: f64,
) -> Result<(Verdict, Option<String>), ClosureError> {
    let s = model.coordinate();
    let text = Some(res.to_string());
    if res.as_number().is_some_and(|v| v == 0.0) {
        return Ok((
            Verdict::IdenticallyZero {
                how: "the residual simplifies to 0".into(),
            },
            text,
        ));
    }
    let fail = |error| ClosureError::Formula {
        origin: "residual".into(),
        error,
    };
    // Probabilistic identity test in 256-bit arithmetic.
    let trials = identity_points(model, domain);
    let mut worst = 0.0f64;
    let mut ok = true;
    for &x in &trials {
        let look = |n: &str| if n == s { Some(x) } else { model.lookup(n) };
        let r = res.eval_extended(&look).map_err(fail)?;
        let mut scale = 0.0f64;
        for (_, t) in terms {
            scale = scale.max(t.eval_extended(&look).map_err(fail)?.abs());
        }
        if !r.is_finite() || !scale.is_finite() {
            ok = false;
            break;
        }
        let rel = if scale > 0.0 {
            r.abs() / scale
        } else {
            r.abs()
        };
        worst = worst.max(rel);
        if rel > 1e-40 {
            ok = false;
            break;
        }
    }
    if ok {
        return Ok((
            Verdict::IdenticallyZero {
                how: format!(
                    "the residual vanishes at {} random points in 256-bit arithmetic \
                     (largest |residual|/|largest term| = {worst:.1e})",
                    trials.len()
                ),
            },
            text,
        ));
    }
    // Not zero as a formula: measure it in double precision over the domain.
    let comp = |e: &crate::formula::Expr| model.compile(e).map_err(fail);
    let rp = comp(res)?;
    let tps: Vec<Program> = terms
        .iter()
        .map(|(_, t)| comp(t))
        .collect::<Result<_, _>>()?;
    let (mut max, mut at) = (0.0f64, domain.lo);
    for x in domain.scan_points() {
        let scale = tps.iter().map(|p| p.eval(&[x]).abs()).fold(0.0, f64::max);
        let r = rp.eval(&[x]).abs();
        let rel = if scale > 0.0 { r / scale } else { r };
        if rel > max || rel.is_nan() {
            max = rel;
            at = x;
        }
    }
    let v = if max <= tol {
        Verdict::ZeroToTolerance { max, at }
    } else {
        Verdict::NotEquilibrium { max, at }
    };
    Ok((v, text))
}

/// Random points for the identity test: 24 spread over the domain, and, for
/// a piecewise residual, at least two inside every piece between its
/// breakpoints. A residual that is analytic on each piece and vanishes at
/// random points of every piece is zero; one that is piecewise may vanish on
/// most of the domain and not on a sliver that 24 points over the whole
/// domain would miss.
fn identity_points(model: &Model, domain: &Domain) -> Vec<f64> {
    let mut rng = Uniform(0x5EED_1234_ABCD_0001);
    let mut cuts = vec![domain.lo];
    cuts.extend(
        domain
            .switches(model)
            .iter()
            .map(|w| w.at)
            .filter(|x| *x > domain.lo && *x < domain.hi),
    );
    cuts.push(domain.hi);
    let width = domain.hi - domain.lo;
    let mut pts = Vec::new();
    for w in cuts.windows(2) {
        let n = ((24.0 * (w[1] - w[0]) / width).ceil() as usize).max(2);
        for _ in 0..n {
            pts.push(w[0] + (w[1] - w[0]) * (0.02 + 0.96 * rng.next()));
        }
    }
    pts
}

fn integral_form(
    model: &Model,
    bg: &dyn Background,
    domain: &Domain,
    integrand: &crate::formula::Expr,
    tol: f64,
) -> Result<Verdict, ClosureError> {
    let f = closure::compile(model, integrand, "integrand")?;
    let q = |x: f64| {
        let st = bg.at(x);
        match (model.shape, model.unknown) {
            (Shape::DiskMidplane, crate::model::Unknown::Density) => st.density.ln(),
            (_, crate::model::Unknown::Pressure) => st.pressure,
            _ => st.pressure.ln(),
        }
    };
    let anchor = model.anchor.map(|a| a.at).unwrap_or(domain.lo);
    let (lo, hi) = domain.range_with_anchor(model);
    let breaks: Vec<f64> = domain.switches(model).iter().map(|w| w.at).collect();
    let mut pts: Vec<f64> = (0..=400)
        .map(|i| lo + (hi - lo) * i as f64 / 400.0)
        .chain(
            domain
                .knots
                .iter()
                .copied()
                .filter(|k| *k >= domain.lo && *k <= domain.hi),
        )
        .collect();
    pts.sort_by(|a, b| a.total_cmp(b));
    pts.dedup_by(|a, b| (*a - *b).abs() <= 1e-14 * a.abs().max(1.0));
    let rule = GaussLegendre::new(20).expect("20-point rule");
    let (nodes, weights) = (&rule.nodes, &rule.weights);
    let gl = |a: f64, b: f64, g: &dyn Fn(f64) -> f64| -> f64 {
        let (h, m) = (0.5 * (b - a), 0.5 * (a + b));
        nodes
            .iter()
            .zip(weights.iter())
            .map(|(t, w)| w * g(m + h * t))
            .sum::<f64>()
            * h
    };
    // Adaptive bisection on top of the 20-point rule, so that the reference
    // integral stays exact where a law is smooth only inside its pieces (a
    // square-root cusp at the axis, say): halves must agree with the whole.
    // Subdivision stops when the disagreement no longer shrinks, which is
    // the rounding floor of the integrand itself (a difference of large
    // terms, say) — bisecting further would only multiply the work.
    fn adaptive(
        gl: &dyn Fn(f64, f64) -> f64,
        (a, b): (f64, f64),
        whole: f64,
        last: f64,
        depth: u32,
    ) -> f64 {
        let m = 0.5 * (a + b);
        let (l, r) = (gl(a, m), gl(m, b));
        let err = (l + r - whole).abs();
        let settled = err <= 1e-14 * (l.abs() + r.abs());
        if depth == 0 || settled || !(l + r).is_finite() || err > 0.5 * last {
            return l + r;
        }
        adaptive(gl, (a, m), l, err, depth - 1) + adaptive(gl, (m, b), r, err, depth - 1)
    }
    let gl = |a: f64, b: f64, g: &dyn Fn(f64) -> f64| -> f64 {
        let rule = |x: f64, y: f64| gl(x, y, g);
        adaptive(&rule, (a, b), rule(a, b), f64::INFINITY, 30)
    };
    // ∫ f and ∫ |f| over [a, b], split at the breakpoints of piecewise laws.
    let piece = |a: f64, b: f64| -> (f64, f64) {
        let mut cuts = vec![a];
        cuts.extend(
            breaks
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
            (
                i + gl(c[0], c[1], &|x| f.eval(&[x])),
                j + gl(c[0], c[1], &|x| f.eval(&[x]).abs()).abs(),
            )
        })
    };
    // Walk outward from the anchor on both sides, accumulating the
    // independent integral, and compare with the stored values.
    let q0 = q(anchor);
    let (mut max, mut at) = (0.0f64, anchor);
    let up: Vec<f64> = pts.iter().copied().filter(|x| *x > anchor).collect();
    let down: Vec<f64> = pts.iter().rev().copied().filter(|x| *x < anchor).collect();
    for side in [up, down] {
        let (mut prev, mut int, mut abs) = (anchor, 0.0f64, 0.0f64);
        for x in side {
            let (i, j) = piece(prev, x);
            int += i;
            abs += j;
            prev = x;
            let delta = q(x) - q0;
            let scale = abs.max(delta.abs());
            let rel = if scale > 0.0 {
                (delta - int).abs() / scale
            } else {
                (delta - int).abs()
            };
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

/// Largest relative residual of the balance under second-order centred
/// differences at the cell centres: slab/sphere (P₊ − P₋)/(s₊ − s₋) + ρΦ_s,
/// disk ρv²/R − ρΦ_R − P_R, each relative to its largest term.
fn discrete_imbalance(shape: Shape, bg: &dyn Background, centres: &[f64]) -> Option<(f64, f64)> {
    if centres.len() < 3 {
        return None;
    }
    let st: Vec<_> = centres.iter().map(|&x| bg.at(x)).collect();
    let (mut max, mut at) = (0.0f64, centres[0]);
    for i in 1..centres.len() - 1 {
        let ds = centres[i + 1] - centres[i - 1];
        let dp = (st[i + 1].pressure - st[i - 1].pressure) / ds;
        let dphi = (st[i + 1].potential - st[i - 1].potential) / ds;
        let rho = st[i].density;
        let cen = if shape == Shape::DiskMidplane {
            rho * st[i].rotation.powi(2) / centres[i]
        } else {
            0.0
        };
        let r = cen - rho * dphi - dp;
        let scale = cen.abs().max((rho * dphi).abs()).max(dp.abs());
        let rel = if scale > 0.0 {
            r.abs() / scale
        } else {
            r.abs()
        };
        // A value that is not a number is reported, not skipped as a zero.
        if rel > max || rel.is_nan() {
            max = rel;
            at = centres[i];
        }
    }
    Some((max, at))
}

impl fmt::Display for Report {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = &self.coordinate;
        writeln!(f, "balance")?;
        match &self.verdict {
            Verdict::IdenticallyZero { how } => {
                writeln!(f, "  verdict      identically zero")?;
                writeln!(f, "  how          {how}")?;
            }
            Verdict::ZeroToTolerance { max, at } => {
                writeln!(f, "  verdict      zero to tolerance")?;
                writeln!(
                    f,
                    "  max residual {max:.3e} (relative) at {s} = {at:.6}, tolerance {:.1e}",
                    self.tolerance
                )?;
            }
            Verdict::NotEquilibrium { max, at } => {
                writeln!(f, "  verdict      NOT AN EQUILIBRIUM")?;
                writeln!(
                    f,
                    "  max residual {max:.3e} (relative) at {s} = {at:.6}, tolerance {:.1e}",
                    self.tolerance
                )?;
            }
        }
        if let Some(r) = &self.residual_formula {
            writeln!(f, "  residual     {r}")?;
        }
        writeln!(f, "positivity")?;
        for (name, v, at, strict) in &self.positivity {
            let ok = if *strict { *v > 0.0 } else { *v >= 0.0 };
            let mark = if ok { "ok" } else { "FAILS" };
            writeln!(f, "  {name:<12} min {v:.6e} at {s} = {at:.6}  {mark}")?;
        }
        if let Some((m, at)) = self.discrete {
            writeln!(
                f,
                "discrete imbalance (second-order centred differences at the cell centres)"
            )?;
            writeln!(f, "  max          {m:.3e} (relative) at {s} = {at:.6}")?;
            writeln!(
                f,
                "  a scheme without well-balancing drifts at this level; perturbations much \
                 smaller than it will not survive"
            )?;
        }
        write!(
            f,
            "result         {}",
            if self.passed() { "PASS" } else { "FAIL" }
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::background::PointState;

    /// An isothermal slab ρ = P = e^(−z), Φ = z (g = c² = 1), whose density
    /// is not a number at z = 0.5.
    struct Holed;
    impl Background for Holed {
        fn shape(&self) -> Shape {
            Shape::Slab
        }
        fn at(&self, z: f64) -> PointState {
            let rho = if (z - 0.5).abs() < 1e-12 {
                f64::NAN
            } else {
                (-z).exp()
            };
            PointState {
                density: rho,
                pressure: (-z).exp(),
                rotation: 0.0,
                potential: z,
            }
        }
    }

    #[test]
    fn discrete_imbalance_reports_a_value_that_is_not_a_number() {
        let centres: Vec<f64> = (0..11).map(|i| 0.1 * i as f64).collect();
        let (max, at) = discrete_imbalance(Shape::Slab, &Holed, &centres).unwrap();
        assert!(max.is_nan() && (at - 0.5).abs() < 1e-12, "{max} at {at}");
    }
}
