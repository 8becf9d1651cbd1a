//! Disks whose temperature varies with height: the vertical balance
//! integrated up each column (design.md §2, last row), and the
//! normalisation of a column to a given surface density.
//!
//! With P = ρ c²(R, z) the vertical balance ∂P/∂z = −ρ ∂Φ/∂z reads
//! ∂ln P/∂z = −g, g = (∂Φ/∂z)/c², so
//!
//!   P(R, z) = P_mid(R) e^(−L),   L(R, z) = ∫₀ᶻ g(R, z′) dz′,
//!   ρ(R, z) = P/c²(R, z),        P_mid = ρ_mid(R) c²(R, 0),
//!
//! and the radial balance R Ω² = ∂Φ/∂R + (1/ρ) ∂P/∂R gives
//!
//!   v_φ² = R (∂Φ/∂R + c² (d ln P_mid/dR − L_R)),  L_R = ∫₀ᶻ ∂g/∂R dz′,
//!
//! the R-derivative taken under the integral sign (∂g/∂R from `Expr::diff`;
//! no finite differences). Both integrals run together, by a 10-point
//! Gauss–Legendre rule (Golub & Welsch 1969, Math. Comp. 23, 221) on panels
//! bisected until the rule on a panel and on its two halves agree to
//! [`PANEL_TOLERANCE`] of the panel's scale (adaptive quadrature in the
//! manner of Kuncir 1962, Comm. ACM 5, 347). Every point is integrated from
//! the midplane by the same sequence of operations on the block path and
//! the scalar path, so the two agree to the bit; on the block path the open
//! panels of all points of the block are evaluated together, one kernel run
//! per round of bisection.
//!
//! Surface density: with Σ(R) given instead of ρ_mid(R), ρ_mid = Σ/I with
//! I(R) = ∫ (ρ/ρ_mid) dz over the grid's vertical extent or to infinity,
//! and d ln ρ_mid/dR = d ln Σ/dR − I′/I, I′ = ∫ (ρ/ρ_mid)(∂_R ln(c²_mid/c²)
//! − L_R) dz, again under the integral sign. ln I and I′/I are tabulated at
//! Chebyshev points in R, the degree doubled until the interpolant
//! (barycentric form, Berrut & Trefethen 2004, SIAM Review 46, 501) agrees
//! with the column integrals at the new points to [`NORM_TOLERANCE`].
//!
//! Owns: the closure's formulas (its entry in the closure table) and the
//! column integrals. Does not own: the background that evaluates them
//! (`solved`) or the verdict (`check`).

use std::cell::RefCell;

use rayon::prelude::*;

use super::laws::{DerivedLaw, Laws, Parts};
use super::table::LawKey;
use super::ClosureError;
use crate::formula::{Expr, Func, Kernel, Workspace};
use crate::model::{ColumnExtent, Model};
use crate::sample::gauss::GaussLegendre;

/// Largest disagreement accepted between the rule on a panel and on its
/// halves, relative to the panel's scale (its length × the largest |g| or
/// |∂g/∂R| at the nodes). The halves, which are kept, are then far more
/// accurate (the rule's error falls as the 20th power of the panel length).
pub const PANEL_TOLERANCE: f64 = 1e-11;

/// Largest disagreement accepted between the Chebyshev interpolant of
/// ln I(R) (absolute, so relative in ρ_mid) and of I′/I (relative to its
/// largest value) and the column integrals at the points of the next level.
pub const NORM_TOLERANCE: f64 = 1e-11;

/// The same for the outer integral of ρ/ρ_mid over a column, whose
/// integrand carries the inner integral's rounding (a few 1e-14).
pub const OUTER_TOLERANCE: f64 = 1e-12;

const RULE: usize = 10;
/// Bisections of an outer panel at most.
const OUTER_DEPTH: u32 = 14;
const MAX_DEPTH: u32 = 30;
const FIRST_PANELS: usize = 1;
/// Chebyshev degrees tried, doubling.
const FIRST_DEGREE: usize = 16;
const MAX_DEGREE: usize = 512;
/// "To infinity" ends where ρ/ρ_mid has fallen below this (its remainder is
/// below the round-off of the column integral).
const NEGLIGIBLE: f64 = 1e-19;

/// The formulas of the closure, in R and z.
#[derive(Clone, Debug)]
pub struct ColumnLaws {
    /// g = (∂Φ/∂z)/c², the integrand of L.
    pub g: Expr,
    /// ∂g/∂R.
    pub g_r: Expr,
    /// ln(c²(R, 0)/c²(R, z)): ln(ρ/ρ_mid) = this − L.
    pub q: Expr,
    /// ∂q/∂R.
    pub q_r: Expr,
    /// ln(ρ_mid c²(R, 0)), or with a surface density ln(Σ c²(R, 0)).
    pub base: Expr,
    /// d base/dR.
    pub base_r: Expr,
    /// ∂Φ/∂R at (R, z).
    pub phi_r: Expr,
    /// c²(R, 0).
    pub c2_mid: Expr,
    /// ∂²Φ/∂z² at z = 0 (ν², for the thin-disk estimate H = c/ν).
    pub nu2: Expr,
    /// Σ(R), when the column is normalised to it, and how far it runs.
    pub surface: Option<(Expr, ColumnExtent)>,
}

fn extent_of(
    surface: Option<ColumnExtent>,
    law: &crate::model::Law,
) -> Option<(Expr, ColumnExtent)> {
    surface.map(|e| (law.expr.clone(), e))
}

fn ln(e: Expr) -> Expr {
    Expr::call(Func::Log, vec![e])
}

/// Stratified disk with c²(R, z): the entry of the closure table.
pub(super) fn layered(
    m: &Model,
    k: &Parts,
    laws: &mut Laws,
    derived: &mut Vec<DerivedLaw>,
) -> Result<(), ClosureError> {
    let c2 = LawKey::SoundSpeed.need(m, k.why)?;
    let (mid, surface) = match (&m.density, &m.surface_density) {
        (Some(_), Some(s)) => {
            return Err(ClosureError::Incomplete(format!(
                "{}: give either balance.density (the midplane density) or \
                 balance.surface_density, not both",
                s.origin
            )))
        }
        (Some(d), None) => (d, None),
        (None, Some(s)) => {
            let extent = m.column.ok_or_else(|| {
                ClosureError::Incomplete(format!(
                    "{}: say how far the column integral runs: balance.column \
                     \"grid\" (the grid's vertical extent) or \"infinity\"",
                    s.origin
                ))
            })?;
            (s, Some(extent))
        }
        (None, None) => {
            return Err(ClosureError::Incomplete(format!(
                "balance.density (the midplane density) or balance.surface_density \
                 is required when {}",
                k.why
            )))
        }
    };
    if mid.expr.names().contains("z") {
        return Err(ClosureError::Incomplete(format!(
            "{}: a stratified disk takes a law of R alone here; the vertical structure is solved",
            mid.origin
        )));
    }
    let (r, z) = ("R", "z");
    let zero = [(z.to_string(), Expr::num(0.0))].into_iter().collect();
    let phi = laws.potential.clone();
    let c2_mid = c2.substitute(&zero).simplify();
    let phi_z = phi.diff(z);
    let g = (phi_z.clone() / c2.clone()).simplify();
    let g_r = g.diff(r).simplify();
    let q = (ln(c2_mid.clone()) - ln(c2.clone())).simplify();
    let q_r = q.diff(r).simplify();
    let base = ln(mid.expr.clone() * c2_mid.clone()).simplify();
    let base_r = base.diff(r).simplify();
    let phi_r = phi.diff(r).simplify();
    let nu2 = phi_z.diff(z).substitute(&zero).simplify();
    derived.push(DerivedLaw::new(
        "dPhi/dz / c^2",
        g.clone(),
        "the integrand g of L = int_0^z g dz' (P = P_mid exp(-L), rho = P/c^2)",
    ));
    derived.push(DerivedLaw::new(
        "d/dR (dPhi/dz / c^2)",
        g_r.clone(),
        "its exact R-derivative, integrated for L_R (under the integral sign)",
    ));
    derived.push(DerivedLaw::new(
        "ln(P_mid)",
        base.clone(),
        if surface.is_some() {
            "ln(Sigma c^2(R, 0)); ln(P_mid) = this - ln(I), I = int rho/rho_mid dz"
        } else {
            "ln(rho_mid c^2(R, 0))"
        },
    ));
    derived.push(DerivedLaw::new(
        "d ln(P_mid)/dR",
        base_r.clone(),
        if surface.is_some() {
            "exact derivative; minus I'/I, I' = int (rho/rho_mid)(dq/dR - L_R) dz, \
             q = ln(c^2(R,0)/c^2)"
        } else {
            "exact derivative"
        },
    ));
    if surface.is_some() {
        derived.push(DerivedLaw::new(
            "dq/dR",
            q_r.clone(),
            "q = ln(c^2(R, 0)/c^2(R, z)), exact derivative",
        ));
    }
    derived.push(DerivedLaw::new(
        "dPhi/dR",
        phi_r.clone(),
        "v_phi^2 = R (dPhi/dR + c^2 (d ln(P_mid)/dR - L_R)), the radial balance",
    ));
    laws.watched.push(("c^2".into(), c2.clone()));
    laws.column = Some(ColumnLaws {
        g,
        g_r,
        q,
        q_r,
        base,
        base_r,
        phi_r,
        c2_mid,
        nu2,
        surface: extent_of(surface, mid),
    });
    Ok(())
}

/// Scratch of one thread's column integrals.
#[derive(Default)]
struct Scratch {
    r: Vec<f64>,
    z: Vec<f64>,
    f: [Vec<f64>; 2],
    ws: Workspace,
    open: Vec<(usize, f64, f64, u32)>,
    next: Vec<(usize, f64, f64, u32)>,
    done: Vec<(usize, f64, [f64; 2])>,
}

thread_local! {
    static SCRATCH: RefCell<Scratch> = RefCell::default();
}

/// The column integrals of a model: L and L_R at any (R, z), and the
/// normalisation table when a surface density is given.
pub struct Column {
    /// Outputs g, ∂g/∂R over (R, z).
    integrand: Kernel,
    /// Outputs q, ∂q/∂R over (R, z).
    weight: Kernel,
    nodes: Vec<f64>,
    weights: Vec<f64>,
    norm: Option<Norm>,
}

/// ln I(R) and I′/I at Chebyshev points of [lo, hi].
struct Norm {
    lo: f64,
    hi: f64,
    ln_i: Vec<f64>,
    ratio: Vec<f64>,
    /// Achieved agreement at the last doubling (ln I, I′/I relative).
    achieved: (f64, f64),
}

/// What the normalisation found, for `check` and the metadata.
#[derive(Clone, Debug, PartialEq)]
pub struct NormReport {
    /// How far the column runs.
    pub extent: ColumnExtent,
    /// Heights integrated over (for "grid"); None for infinity.
    pub over: Option<(f64, f64)>,
    /// Chebyshev points used.
    pub points: usize,
    /// Agreement reached: ln I (absolute) and I′/I (relative).
    pub achieved: (f64, f64),
    /// ρ_mid/(Σ/(√(2π) H)), H = c(R, 0)/ν: smallest and where, largest and
    /// where.
    pub thin_disk_ratio: ((f64, f64), (f64, f64)),
}

impl Column {
    /// Compile the column integrands of `laws` (which hold `ColumnLaws`).
    pub(super) fn new(model: &Model, cl: &ColumnLaws) -> Result<Column, ClosureError> {
        let lookup = |n: &str| model.lookup(n);
        let vars = ["R", "z"];
        let fail = |error| ClosureError::Formula {
            origin: "column integrand".into(),
            error,
        };
        let integrand =
            Kernel::compile(&[("g", &cl.g), ("g_R", &cl.g_r)], &vars, &lookup).map_err(fail)?;
        let weight =
            Kernel::compile(&[("q", &cl.q), ("q_R", &cl.q_r)], &vars, &lookup).map_err(fail)?;
        let rule = GaussLegendre::new(RULE).expect("a 10-point rule exists");
        Ok(Column {
            integrand,
            weight,
            nodes: rule.nodes,
            weights: rule.weights,
            norm: None,
        })
    }

    /// [L, L_R] from a to b at R = r (∫ₐᵇ g dz and ∫ₐᵇ ∂g/∂R dz).
    pub fn integrate(&self, r: f64, a: f64, b: f64) -> [f64; 2] {
        let mut out = [[0.0; 2]];
        self.integrate_many(&[(r, a, b)], &mut out);
        out[0]
    }

    /// [L, L_R] at (r, z): the integrals from the midplane.
    pub fn at(&self, r: f64, z: f64) -> [f64; 2] {
        self.integrate(r, 0.0, z)
    }

    /// [L, L_R] of every (r, a, b) in `items` into `out`. The panels of all
    /// items that are still open run through the integrand as one block per
    /// round of bisection (the interpreter's cost per instruction is paid
    /// once for many points); each item's accepted panels are summed left
    /// to right, so the result of an item does not depend on the others.
    pub fn integrate_many(&self, items: &[(f64, f64, f64)], out: &mut [[f64; 2]]) {
        SCRATCH.with(|s| self.integrate_with(items, out, &mut s.borrow_mut()))
    }

    fn integrate_with(&self, items: &[(f64, f64, f64)], out: &mut [[f64; 2]], s: &mut Scratch) {
        let n = RULE;
        // Open panels (item, lo, hi, depth) and the accepted ones.
        s.open.clear();
        s.done.clear();
        for (i, &(_, a, b)) in items.iter().enumerate() {
            if a.to_bits() == b.to_bits() {
                continue;
            }
            let h = (b - a) / FIRST_PANELS as f64;
            for k in 0..FIRST_PANELS {
                let hi = if k + 1 == FIRST_PANELS {
                    b
                } else {
                    a + h * (k + 1) as f64
                };
                s.open.push((i, a + h * k as f64, hi, 0));
            }
        }
        while !s.open.is_empty() {
            let m = s.open.len() * 3 * n;
            s.r.clear();
            s.z.clear();
            for &(i, lo, hi, _) in &s.open {
                let mid = 0.5 * (lo + hi);
                for (x0, x1) in [(lo, hi), (lo, mid), (mid, hi)] {
                    let (c, w) = (0.5 * (x0 + x1), 0.5 * (x1 - x0));
                    s.z.extend(self.nodes.iter().map(|t| c + w * t));
                }
                s.r.extend(std::iter::repeat_n(items[i].0, 3 * n));
            }
            for f in s.f.iter_mut() {
                f.resize(m, 0.0);
            }
            {
                let [f0, f1] = &mut s.f;
                self.integrand
                    .run(&[&s.r, &s.z], &mut [&mut f0[..m], &mut f1[..m]], &mut s.ws);
            }
            s.next.clear();
            for (q, &(i, lo, hi, depth)) in s.open.iter().enumerate() {
                let mid = 0.5 * (lo + hi);
                let mut accept = depth >= MAX_DEPTH;
                let mut halves = [0.0; 2];
                let mut good = true;
                for (k, f) in s.f.iter().enumerate() {
                    let f = &f[q * 3 * n..(q + 1) * 3 * n];
                    let whole = self.sum(0.5 * (hi - lo), &f[..n]);
                    let half = self.sum(0.5 * (mid - lo), &f[n..2 * n])
                        + self.sum(0.5 * (hi - mid), &f[2 * n..]);
                    let scale = (hi - lo).abs() * f.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                    if !half.is_finite() {
                        accept = true;
                    }
                    good &= (whole - half).abs() <= PANEL_TOLERANCE * scale;
                    halves[k] = half;
                }
                if accept || good {
                    s.done.push((i, lo, halves));
                } else {
                    s.next.push((i, lo, mid, depth + 1));
                    s.next.push((i, mid, hi, depth + 1));
                }
            }
            std::mem::swap(&mut s.open, &mut s.next);
        }
        // Each item's panels in order along the column (from a towards b),
        // summed with compensation.
        s.done.sort_by(|x, y| {
            x.0.cmp(&y.0).then_with(|| {
                let d = items[x.0].2 - items[x.0].1;
                (x.1 * d.signum()).total_cmp(&(y.1 * d.signum()))
            })
        });
        for o in out.iter_mut() {
            *o = [0.0; 2];
        }
        let mut k0 = 0;
        while k0 < s.done.len() {
            let i = s.done[k0].0;
            let (mut sum, mut comp) = ([0.0f64; 2], [0.0f64; 2]);
            let mut k = k0;
            while k < s.done.len() && s.done[k].0 == i {
                let halves = s.done[k].2;
                for c in 0..2 {
                    let t = sum[c] + halves[c];
                    comp[c] += if sum[c].abs() >= halves[c].abs() {
                        (sum[c] - t) + halves[c]
                    } else {
                        (halves[c] - t) + sum[c]
                    };
                    sum[c] = t;
                }
                k += 1;
            }
            out[i] = [sum[0] + comp[0], sum[1] + comp[1]];
            k0 = k;
        }
    }

    /// [∫ₐˣ g, ∫ₐˣ ∂g/∂R] for every x of `xs` by the fixed rule on [a, x]
    /// (smooth in x, so an outer rule over a panel starting at `a` sees no
    /// jumps from adaptive splitting; its own bisection test covers this
    /// rule's accuracy).
    fn fixed_from(&self, r: f64, a: f64, xs: &[f64], ws: &mut Workspace) -> Vec<[f64; 2]> {
        let n = RULE;
        let mut zs = Vec::with_capacity(xs.len() * n);
        for &x in xs {
            let (c, w) = (0.5 * (a + x), 0.5 * (x - a));
            zs.extend(self.nodes.iter().map(|t| c + w * t));
        }
        let rs = vec![r; zs.len()];
        let (mut f0, mut f1) = (vec![0.0; zs.len()], vec![0.0; zs.len()]);
        self.integrand
            .run(&[&rs, &zs], &mut [&mut f0[..], &mut f1[..]], ws);
        xs.iter()
            .enumerate()
            .map(|(i, &x)| {
                let h = 0.5 * (x - a);
                let at = i * n..(i + 1) * n;
                [self.sum(h, &f0[at.clone()]), self.sum(h, &f1[at])]
            })
            .collect()
    }

    /// Σ wⱼ fⱼ · h in one fixed order.
    fn sum(&self, h: f64, f: &[f64]) -> f64 {
        let mut s = 0.0;
        for (w, v) in self.weights.iter().zip(f) {
            s += w * v;
        }
        s * h
    }

    /// [I, I′] of the column at R = r from the midplane to `end` (signed:
    /// ∫₀^end), or to ±infinity when `end` is infinite; `scale` is a length
    /// that sets the first panels (the grid's height).
    fn half_column(&self, r: f64, end: f64, scale: f64) -> Result<[f64; 2], String> {
        let n = RULE;
        let mut ws = Workspace::new();
        let infinite = end.is_infinite();
        let dir = end.signum();
        // Panels: the finite range in 8, bisected as needed; beyond, panels
        // growing by 3/2 until the density is negligible.
        let first = if infinite {
            scale / 8.0
        } else {
            end.abs() / 8.0
        };
        let mut queue: Vec<(f64, f64, u32)> = Vec::new();
        let (mut a, mut la) = (0.0f64, [0.0f64; 2]);
        let mut total = [0.0f64; 2];
        let mut peak = 0.0f64;
        let mut len = first;
        let next_end = |a: f64, len: &mut f64| -> f64 {
            let b = a + dir * *len;
            if infinite {
                *len *= 1.5;
                b
            } else if (b - end) * dir >= -1e-14 * end.abs() {
                end
            } else {
                b
            }
        };
        let mut zs = vec![0.0; 3 * n];
        let mut rs = vec![r; 3 * n];
        let (mut q, mut qr) = (vec![0.0; 3 * n], vec![0.0; 3 * n]);
        let mut steps = 0usize;
        loop {
            let (lo, hi, depth) = match queue.pop() {
                Some(p) => p,
                None => {
                    if !infinite && a.to_bits() == end.to_bits() {
                        break;
                    }
                    let b = next_end(a, &mut len);
                    (a, b, 0)
                }
            };
            steps += 1;
            if steps > 200_000 {
                return Err(format!(
                    "the column integral at R = {} did not settle",
                    super::show(r)
                ));
            }
            let mid = 0.5 * (lo + hi);
            for (part, (x0, x1)) in [(lo, hi), (lo, mid), (mid, hi)].into_iter().enumerate() {
                let (c, w) = (0.5 * (x0 + x1), 0.5 * (x1 - x0));
                for (j, t) in self.nodes.iter().enumerate() {
                    zs[part * n + j] = c + w * t;
                }
            }
            rs.resize(3 * n, r);
            self.weight
                .run(&[&rs, &zs], &mut [&mut q[..], &mut qr[..]], &mut ws);
            // ρ/ρ_mid and its R-derivative at the nodes (L from the panel's
            // start, whose L is known).
            let mut w = [vec![0.0; 3 * n], vec![0.0; 3 * n]];
            let inner = self.fixed_from(r, lo, &zs, &mut ws);
            for j in 0..3 * n {
                let l = inner[j];
                let (lj, lrj) = (la[0] + l[0], la[1] + l[1]);
                let v = (q[j] - lj).exp();
                w[0][j] = v;
                w[1][j] = v * (qr[j] - lrj);
            }
            let mut good = true;
            let mut halves = [0.0; 2];
            for k in 0..2 {
                let f = &w[k];
                let whole = self.sum(0.5 * (hi - lo), &f[..n]);
                let half = self.sum(0.5 * (mid - lo), &f[n..2 * n])
                    + self.sum(0.5 * (hi - mid), &f[2 * n..]);
                if !half.is_finite() {
                    return Err(format!(
                        "the column integral at R = {} is not finite near z = {}",
                        super::show(r),
                        super::show(mid)
                    ));
                }
                let scale = (hi - lo).abs() * f.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                good &= (whole - half).abs() <= OUTER_TOLERANCE * scale.max(1e-300);
                halves[k] = half;
            }
            if good || depth >= OUTER_DEPTH {
                total[0] += halves[0];
                total[1] += halves[1];
                let l = self.integrate(r, lo, hi);
                la = [la[0] + l[0], la[1] + l[1]];
                a = hi;
                let tail = w[0][2 * n - 1].max(w[0][3 * n - 1]);
                peak = peak.max(w[0].iter().fold(0.0f64, |m, v| m.max(*v)));
                if infinite && queue.is_empty() && tail < NEGLIGIBLE * peak {
                    break;
                }
                if infinite && hi.abs() > 1e6 * scale.max(r) {
                    return Err(format!(
                        "the column at R = {} does not converge to infinity: rho/rho_mid is still \
                         {tail:.3e} at |z| = {} (a potential bounded at large height leaves a \
                         density floor); use balance.column \"grid\"",
                        super::show(r),
                        super::show(hi.abs())
                    ));
                }
            } else {
                queue.push((mid, hi, depth + 1));
                queue.push((lo, mid, depth + 1));
            }
        }
        Ok(total)
    }

    /// [ln I, I′/I] at R = r over `over` (z0 ≤ 0 ≤ z1, or infinite ends).
    fn normalisation(&self, r: f64, over: (f64, f64), scale: f64) -> Result<[f64; 2], String> {
        let up = self.half_column(r, over.1, scale)?;
        let down = self.half_column(r, over.0, scale)?;
        // ∫_{z0}^{z1} = ∫_0^{z1} − ∫_0^{z0}.
        let i = up[0] - down[0];
        let di = up[1] - down[1];
        if i.is_nan() || i <= 0.0 {
            return Err(format!(
                "the column integral of rho/rho_mid at R = {} is {i}: the column is empty",
                super::show(r)
            ));
        }
        Ok([i.ln(), di / i])
    }

    /// Tabulate the normalisation over R in [lo, hi] for columns over
    /// `over` (the grid's heights; infinite ends for "infinity").
    pub(super) fn normalise(
        &mut self,
        lo: f64,
        hi: f64,
        over: (f64, f64),
    ) -> Result<(), ClosureError> {
        let scale = (over.1 - over.0).abs().max(1e-3 * hi.abs());
        let scale = if scale.is_finite() { scale } else { hi.abs() };
        if !(over.0 <= 0.0 && over.1 >= 0.0) {
            return Err(ClosureError::Incomplete(format!(
                "balance.column \"grid\": the grid's heights ({} to {}) must contain the \
                 midplane z = 0",
                super::show(over.0),
                super::show(over.1)
            )));
        }
        let at = |k: usize, n: usize| {
            let t = (std::f64::consts::PI * k as f64 / n as f64).cos();
            0.5 * (lo + hi) + 0.5 * (hi - lo) * t
        };
        let eval = |xs: Vec<f64>| -> Result<Vec<[f64; 2]>, ClosureError> {
            xs.par_iter()
                .map(|&r| self.normalisation(r, over, scale))
                .collect::<Result<Vec<_>, _>>()
                .map_err(ClosureError::NoEquilibrium)
        };
        let mut n = FIRST_DEGREE;
        let mut vals = eval((0..=n).map(|k| at(k, n)).collect())?;
        loop {
            let m = 2 * n;
            let new = eval((0..n).map(|k| at(2 * k + 1, m)).collect())?;
            let norm = Norm {
                lo,
                hi,
                ln_i: vals.iter().map(|v| v[0]).collect(),
                ratio: vals.iter().map(|v| v[1]).collect(),
                achieved: (0.0, 0.0),
            };
            let big = vals
                .iter()
                .chain(&new)
                .fold(0.0f64, |s, v| s.max(v[1].abs()))
                .max(1e-300);
            let (mut e0, mut e1) = (0.0f64, 0.0f64);
            for (k, v) in new.iter().enumerate() {
                let [a, b] = norm.eval(at(2 * k + 1, m));
                e0 = e0.max((a - v[0]).abs());
                e1 = e1.max((b - v[1]).abs() / big);
            }
            let mut merged = Vec::with_capacity(m + 1);
            for k in 0..=m {
                merged.push(if k % 2 == 0 { vals[k / 2] } else { new[k / 2] });
            }
            vals = merged;
            n = m;
            if (e0 <= NORM_TOLERANCE && e1 <= NORM_TOLERANCE) || n >= MAX_DEGREE {
                if !(e0 <= NORM_TOLERANCE && e1 <= NORM_TOLERANCE) {
                    return Err(ClosureError::NoEquilibrium(format!(
                        "balance.surface_density: the column integral I(R) could not be \
                         tabulated to {NORM_TOLERANCE:e} with {MAX_DEGREE} Chebyshev points \
                         (reached {e0:.1e} in ln I, {e1:.1e} in I'/I): is a law not smooth in R?"
                    )));
                }
                self.norm = Some(Norm {
                    lo,
                    hi,
                    ln_i: vals.iter().map(|v| v[0]).collect(),
                    ratio: vals.iter().map(|v| v[1]).collect(),
                    achieved: (e0, e1),
                });
                return Ok(());
            }
        }
    }

    /// [ln I, I′/I] at r, or zeros when the column is not normalised.
    pub fn norm_at(&self, r: f64) -> [f64; 2] {
        self.norm.as_ref().map_or([0.0; 2], |n| n.eval(r))
    }

    /// What the normalisation found: `thin` gives c²(R, 0) and ν² at R.
    pub fn norm_report(
        &self,
        extent: ColumnExtent,
        over: (f64, f64),
        thin: &dyn Fn(f64) -> (f64, f64),
    ) -> Option<NormReport> {
        let n = self.norm.as_ref()?;
        let (mut lo, mut hi) = ((f64::INFINITY, n.lo), (f64::NEG_INFINITY, n.lo));
        for k in 0..=200 {
            let r = n.lo + (n.hi - n.lo) * k as f64 / 200.0;
            let (c2, nu2) = thin(r);
            let h = (c2 / nu2).sqrt();
            // ρ_mid / (Σ/(√(2π) H)) = √(2π) H / I.
            let ratio = (2.0 * std::f64::consts::PI).sqrt() * h / n.eval(r)[0].exp();
            if ratio < lo.0 {
                lo = (ratio, r);
            }
            if ratio > hi.0 {
                hi = (ratio, r);
            }
        }
        Some(NormReport {
            extent,
            over: (extent == ColumnExtent::Grid).then_some(over),
            points: n.ln_i.len(),
            achieved: n.achieved,
            thin_disk_ratio: (lo, hi),
        })
    }
}

impl Norm {
    /// The barycentric Chebyshev interpolant (second kind) at r.
    fn eval(&self, r: f64) -> [f64; 2] {
        let n = self.ln_i.len() - 1;
        let t = (2.0 * r - (self.lo + self.hi)) / (self.hi - self.lo);
        let (mut num, mut den) = ([0.0f64; 2], 0.0f64);
        for k in 0..=n {
            let xk = (std::f64::consts::PI * k as f64 / n as f64).cos();
            let d = t - xk;
            if d == 0.0 {
                return [self.ln_i[k], self.ratio[k]];
            }
            let mut w = if k % 2 == 0 { 1.0 } else { -1.0 };
            if k == 0 || k == n {
                w *= 0.5;
            }
            let c = w / d;
            num[0] += c * self.ln_i[k];
            num[1] += c * self.ratio[k];
            den += c;
        }
        [num[0] / den, num[1] / den]
    }
}

/// The metadata of a column closure: how its integrals were taken and, with
/// a surface density, what the normalisation found (JSON text).
pub fn metadata(
    model: &Model,
    solved: &super::Solved,
    domain: &super::Domain,
) -> Result<Vec<(String, String)>, ClosureError> {
    let Some(col) = solved.column() else {
        return Ok(Vec::new());
    };
    let laws = Laws::build(model)?;
    let Some(cl) = laws.column else {
        return Ok(Vec::new());
    };
    let mut out = vec![(
        "column_integration".to_string(),
        format!(
            "ln P = ln P_mid - int_0^z (dPhi/dz)/c^2 dz' and its exact R-derivative, by \
             10-point Gauss-Legendre panels bisected until panel and halves agree to \
             {PANEL_TOLERANCE:e} of the panel's scale"
        ),
    )];
    if let Some((_, extent)) = &cl.surface {
        let over = super::column_range(domain, *extent)?;
        let c2 = super::compile(model, &cl.c2_mid, "c^2 at the midplane")?;
        let nu2 = super::compile(model, &cl.nu2, "d2Phi/dz2 at the midplane")?;
        let thin = |r: f64| (c2.eval(&[r]), nu2.eval(&[r]));
        if let Some(rep) = col.norm_report(*extent, over, &thin) {
            let ((lo, at_lo), (hi, at_hi)) = rep.thin_disk_ratio;
            let span = match rep.over {
                Some((a, b)) => format!("[{a}, {b}]"),
                None => "\"infinity\"".into(),
            };
            out.push((
                "surface_density_normalisation".to_string(),
                format!(
                    "{{\"column\": {span}, \"chebyshev_points\": {}, \"agreement_ln_I\": {:e}, \
                     \"agreement_dI_over_I\": {:e}, \"rho_mid_over_thin_disk\": {{\"min\": {lo}, \
                     \"at_R\": {at_lo}, \"max\": {hi}, \"max_at_R\": {at_hi}}}, \
                     \"thin_disk\": \"Sigma/(sqrt(2 pi) H), H = c(R,0)/nu, nu^2 = d2Phi/dz2 at z = 0\"}}",
                    rep.points, rep.achieved.0, rep.achieved.1
                ),
            ));
        }
    }
    Ok(out)
}

/// Where a column-integrated state is no equilibrium off the midplane
/// (the positivity survey runs along it): v_φ² < 0, or a density that is
/// not positive, on a 33 × 33 scan of the meridional domain. The R of the
/// first such point and a message, or None.
pub fn meridional_failure(
    bg: &dyn crate::background::Background,
    domain: &super::Domain,
) -> Option<(f64, String)> {
    let height = domain.height.unwrap_or((0.0, 0.0));
    let lo = if domain.axis_at_lo {
        domain.lo + 1e-3 * (domain.hi - domain.lo)
    } else {
        domain.lo
    };
    for i in 0..=32 {
        for j in 0..=32 {
            let r = lo + (domain.hi - lo) * i as f64 / 32.0;
            let z = height.0 + (height.1 - height.0) * j as f64 / 32.0;
            let st = bg.at(&[r, z]);
            let what = if !(st.density.is_finite() && st.density > 0.0) {
                "the density is not positive (or not finite)"
            } else if !st.rotation().is_finite() {
                "v_phi^2 < 0 (or not finite): the radial balance has no rotation"
            } else {
                continue;
            };
            return Some((
                r,
                format!(
                    "{what} at (R, z) = ({}, {}) (33 x 33 scan of the meridional domain)",
                    super::show(r),
                    super::show(z)
                ),
            ));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chebyshev_interpolant_is_exact_at_nodes_and_close_between() {
        // Barycentric interpolation of exp on [1, 3] (Berrut & Trefethen
        // 2004): degree 32 is exact to round-off for an entire function.
        let n = 32;
        let at = |k: usize| 2.0 + (std::f64::consts::PI * k as f64 / n as f64).cos();
        let norm = Norm {
            lo: 1.0,
            hi: 3.0,
            ln_i: (0..=n).map(|k| at(k).exp()).collect(),
            ratio: (0..=n).map(|k| at(k).sin()).collect(),
            achieved: (0.0, 0.0),
        };
        for x in [1.0, 1.3, 2.0, 2.77, 3.0] {
            let [a, b] = norm.eval(x);
            assert!((a - x.exp()).abs() < 1e-13 * x.exp(), "{x}");
            assert!((b - x.sin()).abs() < 1e-14, "{x}");
        }
    }
}
