//! The closed-form verdict: a residual built from exact symbolic
//! derivatives is *identically zero* when it simplifies to 0 or vanishes at
//! random points of every piece in 256-bit arithmetic (probabilistic
//! identity testing, Schwartz 1980, J. ACM 27, 701); otherwise its largest
//! value over the scan points, relative to the largest term of the balance
//! at that point, decides between *zero to tolerance* and *not an
//! equilibrium*.
//!
//! Owns: the identity test and the double-precision scan of a residual.
//! Does not own: building the residual (`closure::Laws::residual`).

use super::Verdict;
use crate::closure::{ClosureError, Domain};
use crate::formula::{Expr, Program};
use crate::model::Model;

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

/// The verdict on a closed-form residual `res` with the balance `terms` it
/// sums, and the residual as text. `switches` are the switch points of the
/// laws inside the domain.
pub(super) fn closed_form(
    model: &Model,
    domain: &Domain,
    switches: &[f64],
    (res, terms): (&Expr, &[(String, Expr)]),
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
    // Probabilistic identity test in 256-bit arithmetic: the residual in
    // 256 bits, the size of its largest term (a scale, needed to a few
    // digits) in double precision unless that is not finite.
    let comp = |e: &Expr| model.compile(e).map_err(fail);
    let tps: Vec<Program> = terms
        .iter()
        .map(|(_, t)| comp(t))
        .collect::<Result<_, _>>()?;
    let trials = identity_points(domain, switches);
    let mut worst = 0.0f64;
    let mut ok = true;
    for &x in &trials {
        let look = |n: &str| if n == s { Some(x) } else { model.lookup(n) };
        let r = res.eval_extended(&look).map_err(fail)?;
        let mut scale = tps.iter().map(|p| p.eval(&[x]).abs()).fold(0.0, f64::max);
        if !scale.is_finite() {
            scale = 0.0;
            for (_, t) in terms {
                scale = scale.max(t.eval_extended(&look).map_err(fail)?.abs());
            }
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
    let rp = comp(res)?;
    let (mut max, mut at) = (0.0f64, domain.lo);
    for x in domain.scan_points_with(switches) {
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
/// switch points. A residual that is analytic on each piece and vanishes at
/// random points of every piece is zero; one that is piecewise may vanish on
/// most of the domain and not on a sliver that 24 points over the whole
/// domain would miss.
fn identity_points(domain: &Domain, switches: &[f64]) -> Vec<f64> {
    let mut rng = Uniform(0x5EED_1234_ABCD_0001);
    let mut cuts = vec![domain.lo];
    cuts.extend(
        switches
            .iter()
            .copied()
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

/// A named residual and the balance terms it sums.
pub(super) type Residual<'a> = (&'a str, &'a Expr, &'a [(String, Expr)]);

/// The verdict on the residuals of a balance in (R, z) (a stratified disk:
/// radial and vertical), each with the terms it sums: identically zero when
/// every residual vanishes at random points of the meridional domain (R over
/// the domain, z over `height`) in 256-bit arithmetic; otherwise the largest
/// value over a 64 × 64 scan in double precision, relative to the largest
/// term at that point (reported at its R).
pub(super) fn closed_form_field(
    model: &Model,
    domain: &Domain,
    height: (f64, f64),
    residuals: &[Residual<'_>],
    tol: f64,
) -> Result<Verdict, ClosureError> {
    let fail = |error| ClosureError::Formula {
        origin: "residual".into(),
        error,
    };
    let mut rng = Uniform(0x5EED_1234_ABCD_0002);
    let lo = if domain.axis_at_lo {
        domain.lo + 1e-6 * (domain.hi - domain.lo)
    } else {
        domain.lo
    };
    let point = |u: f64, v: f64| {
        (
            lo + (domain.hi - lo) * u,
            height.0 + (height.1 - height.0) * v,
        )
    };
    let trials: Vec<(f64, f64)> = (0..48)
        .map(|_| point(0.02 + 0.96 * rng.next(), rng.next()))
        .collect();
    let mut worst = 0.0f64;
    let mut ok = true;
    'all: for (_, res, terms) in residuals {
        if res.as_number().is_some_and(|v| v == 0.0) {
            continue;
        }
        for &(r, z) in &trials {
            let look = |n: &str| match n {
                "R" => Some(r),
                "z" => Some(z),
                _ => model.lookup(n),
            };
            let v = res.eval_extended(&look).map_err(fail)?;
            let mut scale = 0.0f64;
            for (_, t) in terms.iter() {
                scale = scale.max(t.eval_extended(&look).map_err(fail)?.abs());
            }
            let rel = if scale > 0.0 {
                v.abs() / scale
            } else {
                v.abs()
            };
            if !rel.is_finite() || rel > 1e-40 {
                ok = false;
                break 'all;
            }
            worst = worst.max(rel);
        }
    }
    if ok {
        let names: Vec<&str> = residuals.iter().map(|r| r.0).collect();
        return Ok(Verdict::IdenticallyZero {
            how: format!(
                "the {} residuals vanish at {} random (R, z) points in 256-bit arithmetic \
                 (largest |residual|/|largest term| = {worst:.1e})",
                names.join(" and "),
                trials.len()
            ),
        });
    }
    let (mut max, mut at) = (0.0f64, domain.lo);
    for (_, res, terms) in residuals {
        let rp = model.compile_field(res).map_err(fail)?;
        let tps: Vec<Program> = terms
            .iter()
            .map(|(_, t)| model.compile_field(t).map_err(fail))
            .collect::<Result<_, _>>()?;
        for i in 0..=64 {
            for j in 0..=64 {
                let (r, z) = point(i as f64 / 64.0, j as f64 / 64.0);
                let scale = tps
                    .iter()
                    .map(|p| p.eval(&[r, z]).abs())
                    .fold(0.0, f64::max);
                let v = rp.eval(&[r, z]).abs();
                let rel = if scale > 0.0 { v / scale } else { v };
                if rel > max || rel.is_nan() {
                    max = rel;
                    at = r;
                }
            }
        }
    }
    Ok(if max <= tol {
        Verdict::ZeroToTolerance { max, at }
    } else {
        Verdict::NotEquilibrium { max, at }
    })
}
