//! The verdict on a stratified disk integrated up its columns (c²(R, z),
//! or a surface density): the background's ρ, P and v_φ against an
//! independent evaluation of the same integrals by the double-exponential
//! rule (Takahasi & Mori 1974, Publ. RIMS 9, 721) on 32 equal pieces of
//! each column, compiled from the same exact integrands.
//!
//! - vertical balance in integral form: ln P(R, z) − ln P_mid(R) + ∫₀ᶻ
//!   (∂Φ/∂z)/c² dz′ = 0, measured as |ln P − ln P_ref|, the relative
//!   error of P (and of ρ = P/c²);
//! - radial balance: v_φ²/R − ∂Φ/∂R − c² (d ln P_mid/dR − L_R), relative
//!   to its largest term, with L_R and d ln P_mid/dR from the reference.
//!
//! With a surface density, ln I(R) and I′/I of the reference are nested
//! double-exponential integrals over the column, and the report gives the
//! ratio of ρ_mid to the thin-disk estimate Σ/(√(2π) H), H = c(R, 0)/ν,
//! ν² = ∂²Φ/∂z² at the midplane (Ω_K² for a point mass).
//!
//! Owns: the reference and the verdict. Does not own: the closure's
//! formulas or numerics (`closure::column`).

use super::Verdict;
use crate::background::Background;
use crate::closure::column::ColumnLaws;
use crate::closure::integrate::segment;
use crate::closure::{ClosureError, Domain};
use crate::formula::Program;
use crate::model::{ColumnExtent, Model};

const PIECES: usize = 32;

/// Compiled reference formulas in (R, z).
struct Reference {
    g: Program,
    g_r: Program,
    q: Program,
    q_r: Program,
    base: Program,
    base_r: Program,
    phi_r: Program,
    c2: Program,
    c2_mid: Program,
    nu2: Program,
}

impl Reference {
    /// [∫₀ᶻ g, ∫₀ᶻ ∂g/∂R] at (r, ·) from `a` to `b`.
    fn l(&self, r: f64, a: f64, b: f64) -> [f64; 2] {
        let mut out = [0.0; 2];
        for (k, p) in [&self.g, &self.g_r].into_iter().enumerate() {
            let f = |z: f64| p.eval(&[r, z]);
            let h = (b - a) / PIECES as f64;
            out[k] = (0..PIECES)
                .map(|i| segment(&f, a + h * i as f64, a + h * (i + 1) as f64))
                .sum();
        }
        out
    }

    /// [I, I′] from 0 to `end` (finite), nested.
    fn half(&self, r: f64, end: f64) -> [f64; 2] {
        let h = end / PIECES as f64;
        let mut la = [0.0; 2];
        let mut total = [0.0; 2];
        for i in 0..PIECES {
            let (a, b) = (h * i as f64, h * (i + 1) as f64);
            let w = |z: f64, k: usize| {
                let l = self.lg(r, a, z);
                let v = (self.q.eval(&[r, z]) - la[0] - l[0]).exp();
                if k == 0 {
                    v
                } else {
                    v * (self.q_r.eval(&[r, z]) - la[1] - l[1])
                }
            };
            total[0] += segment(&|z| w(z, 0), a, b);
            total[1] += segment(&|z| w(z, 1), a, b);
            let l = self.lg(r, a, b);
            la = [la[0] + l[0], la[1] + l[1]];
        }
        total
    }

    /// [∫ₐᵇ g, ∫ₐᵇ ∂g/∂R] by one double-exponential segment each.
    fn lg(&self, r: f64, a: f64, b: f64) -> [f64; 2] {
        let f = |z: f64| self.g.eval(&[r, z]);
        let fr = |z: f64| self.g_r.eval(&[r, z]);
        [segment(&f, a, b), segment(&fr, a, b)]
    }

    /// The height above which ρ/ρ_mid < 1e-19 (for a column to infinity),
    /// doubling from `start`; None when there is none below 1e6 × start.
    fn top(&self, r: f64, start: f64, up: bool) -> Option<f64> {
        let s = if up { 1.0 } else { -1.0 };
        let mut z = start;
        while z < 1e6 * start {
            let l = self.l(r, 0.0, s * z)[0];
            if self.q.eval(&[r, s * z]) - l < (1e-19f64).ln() {
                return Some(s * z);
            }
            z *= 2.0;
        }
        None
    }

    /// [ln I, I′/I] over `over`.
    fn norm(&self, r: f64, over: (f64, f64), scale: f64) -> Result<[f64; 2], ClosureError> {
        let end = |e: f64, up: bool| -> Result<f64, ClosureError> {
            if e.is_finite() {
                Ok(e)
            } else {
                self.top(r, scale, up).ok_or_else(|| {
                    ClosureError::NoEquilibrium(format!(
                        "the column at R = {r} does not converge to infinity"
                    ))
                })
            }
        };
        let up = self.half(r, end(over.1, true)?);
        let down = self.half(r, end(over.0, false)?);
        let i = up[0] - down[0];
        Ok([i.ln(), (up[1] - down[1]) / i])
    }
}

/// What the column check found: the verdict and lines for the report.
pub(super) struct ColumnCheck {
    pub verdict: Verdict,
    pub lines: Vec<String>,
}

/// The verdict on the column closure of `model` (formulas `cl`) as the
/// background `bg` evaluates it, over the domain and its heights.
pub(super) fn column_form(
    model: &Model,
    cl: &ColumnLaws,
    bg: &dyn Background,
    domain: &Domain,
    tol: f64,
) -> Result<ColumnCheck, ClosureError> {
    let fail = |error| ClosureError::Formula {
        origin: "column check".into(),
        error,
    };
    let c = |e: &crate::formula::Expr| model.compile_field(e).map_err(fail);
    let re = Reference {
        g: c(&cl.g)?,
        g_r: c(&cl.g_r)?,
        q: c(&cl.q)?,
        q_r: c(&cl.q_r)?,
        base: c(&cl.base)?,
        base_r: c(&cl.base_r)?,
        phi_r: c(&cl.phi_r)?,
        c2: c(model
            .sound_speed_sq
            .as_ref()
            .map(|l| &l.expr)
            .ok_or_else(|| ClosureError::Incomplete("no sound speed".into()))?)?,
        c2_mid: c(&cl.c2_mid)?,
        nu2: c(&cl.nu2)?,
    };
    let height = domain.height.unwrap_or((0.0, 0.0));
    let lo = if domain.axis_at_lo {
        domain.lo + 1e-3 * (domain.hi - domain.lo)
    } else {
        domain.lo
    };
    let over = match &cl.surface {
        Some((_, extent)) => Some(crate::closure::column_range(domain, *extent)?),
        None => None,
    };
    let scale = (height.1 - height.0).abs().max(1e-3 * domain.hi.abs());
    let (nr, nz) = (9usize, 9usize);
    let (mut vmax, mut vat) = (0.0f64, lo);
    let (mut rmax, mut rat) = (0.0f64, lo);
    let mut ratios = Vec::new();
    for i in 0..nr {
        let r = lo + (domain.hi - lo) * (0.03 + 0.94 * i as f64 / (nr - 1) as f64);
        let [ln_i, ratio] = match over {
            Some(o) => re.norm(r, o, scale)?,
            None => [0.0, 0.0],
        };
        if over.is_some() {
            let h = (re.c2_mid.eval(&[r, 0.0]) / re.nu2.eval(&[r, 0.0])).sqrt();
            ratios.push(((2.0 * std::f64::consts::PI).sqrt() * h / ln_i.exp(), r));
        }
        for j in 0..nz {
            let z = height.0 + (height.1 - height.0) * (0.02 + 0.96 * j as f64 / (nz - 1) as f64);
            let st = bg.at(&[r, z]);
            let [l, l_r] = re.l(r, 0.0, z);
            let ln_p_ref = re.base.eval(&[r, z]) - ln_i - l;
            let dv = (st.pressure.ln() - ln_p_ref).abs();
            if dv > vmax || dv.is_nan() {
                (vmax, vat) = (dv, r);
            }
            let c2 = re.c2.eval(&[r, z]);
            let cen = st.rotation().powi(2) / r;
            let phi_r = re.phi_r.eval(&[r, z]);
            let grad = c2 * (re.base_r.eval(&[r, z]) - ratio - l_r);
            let res = cen - phi_r - grad;
            let scale = cen.abs().max(phi_r.abs()).max(grad.abs());
            let rel = if scale > 0.0 {
                res.abs() / scale
            } else {
                res.abs()
            };
            if rel > rmax || rel.is_nan() {
                (rmax, rat) = (rel, r);
            }
        }
    }
    let mut lines = vec![
        format!(
            "vertical     |ln P - ln P_ref| max {vmax:.3e} (the relative error of P and rho) at R = {vat:.6}"
        ),
        format!("radial       max residual {rmax:.3e} (relative) at R = {rat:.6}"),
        format!(
            "reference    the same integrands by the double-exponential rule, {PIECES} pieces per \
             column, at {nr} x {nz} (R, z) points"
        ),
    ];
    if let (Some((_, extent)), Some(o)) = (&cl.surface, over) {
        let (lo_r, hi_r) = ratios.iter().fold(
            ((f64::INFINITY, 0.0), (f64::NEG_INFINITY, 0.0)),
            |(a, b), &x| (if x.0 < a.0 { x } else { a }, if x.0 > b.0 { x } else { b }),
        );
        let span = match extent {
            ColumnExtent::Grid => format!("over the grid's heights {} to {}", o.0, o.1),
            ColumnExtent::Infinity => "to infinity".to_string(),
        };
        lines.push(format!(
            "surface      rho_mid = Sigma / int (rho/rho_mid) dz, the column {span}"
        ));
        lines.push(format!(
            "thin disk    rho_mid / (Sigma/(sqrt(2 pi) H)) from {:.6} (R = {:.4}) to {:.6} (R = {:.4}); \
             H = c(R,0)/nu, nu^2 = d2Phi/dz2 at z = 0",
            lo_r.0, lo_r.1, hi_r.0, hi_r.1
        ));
    }
    let bad = crate::closure::column::meridional_failure(bg, domain);
    if let Some((r, message)) = bad {
        lines.push(format!("no equilibrium: {message}"));
        return Ok(ColumnCheck {
            verdict: Verdict::NotEquilibrium {
                max: f64::INFINITY,
                at: r,
            },
            lines,
        });
    }
    let max = vmax.max(rmax);
    let at = if vmax >= rmax { vat } else { rat };
    let verdict = if max <= tol {
        Verdict::ZeroToTolerance { max, at }
    } else {
        Verdict::NotEquilibrium { max, at }
    };
    Ok(ColumnCheck { verdict, lines })
}
