//! The radial curvature of a column-integrated disk's rotation: ∂v_φ²/∂R at
//! (R, z), which the epicyclic frequency κ² = R⁻³ ∂(R² v_φ²)/∂R, the
//! Solberg–Høiland criteria and Toomre's Q need.
//!
//! With the formulas of `column.rs` (g = (∂Φ/∂z)/c², L = ∫₀ᶻ g dz′,
//! q = ln(c²(R, 0)/c²(R, z)), base = ln(ρ_mid c²(R, 0)) or ln(Σ c²(R, 0)))
//!
//!   v_φ² = R (Φ_R + c² (base_R − J − L_R)),
//!   ∂_R v_φ² = v_φ²/R + R (Φ_RR + c²_R (base_R − J − L_R)
//!                              + c² (base_RR − J′ − L_RR)),
//!
//! L_RR = ∫₀ᶻ ∂²g/∂R² dz′: the second R-derivative taken under the integral
//! sign, from `Expr::diff` of the first (as `column.rs` takes the first; no
//! finite differences). Without a surface density J = 0; with one,
//! J = I′/I and J′ = I″/I − J², where I = ∫ e^(q−L) dz over the column,
//! I′ = ∫ e^(q−L)(q_R − L_R) dz and
//! I″ = ∫ e^(q−L)((q_R − L_R)² + q_RR − L_RR) dz, all three integrated here
//! at the radius asked (not read from the normalisation's table).
//!
//! The integrals use the rule and panel tests of `column.rs` (10-point
//! Gauss–Legendre panels, Golub & Welsch 1969, bisected until the panel and
//! its halves agree to [`PANEL_TOLERANCE`] / [`OUTER_TOLERANCE`] of the
//! panel's scale), one point at a time: these are diagnostics of `check`,
//! evaluated at a few hundred points, not the sampled state.
//!
//! Owns: ∂_R v_φ² of the column closure. Does not own: the state itself
//! (`column`, `solved`), the criteria (`criteria`).

use super::column::{ColumnLaws, OUTER_TOLERANCE, PANEL_TOLERANCE};
use super::{ClosureError, Domain};
use crate::formula::{Expr, Kernel, Workspace};
use crate::model::Model;
use crate::sample::gauss::GaussLegendre;

const RULE: usize = 10;
const MAX_DEPTH: u32 = 30;
const OUTER_DEPTH: u32 = 14;
/// "To infinity" ends where e^(q−L) has fallen below this of its peak.
const NEGLIGIBLE: f64 = 1e-19;

/// ∂_R v_φ² of a column closure at any (R, z).
pub struct Curvature {
    /// g, g_R, g_RR over (R, z).
    integrand: Kernel,
    /// q, q_R, q_RR over (R, z).
    weight: Kernel,
    /// Φ_R, Φ_RR, c², ∂_R c², base_R, base_RR over (R, z).
    radial: Kernel,
    nodes: Vec<f64>,
    weights: Vec<f64>,
    /// The column's heights and first panel length, with a surface density.
    surface: Option<((f64, f64), f64)>,
}

/// v_φ² and ∂_R v_φ² at a point, and the surface-density terms used.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Curved {
    /// v_φ² from these integrals (agrees with the background's to the
    /// integrals' tolerance).
    pub v2: f64,
    /// ∂v_φ²/∂R.
    pub v2_r: f64,
    /// The size of the terms of ∂v_φ²/∂R (for the criteria's thresholds).
    pub scale: f64,
}

impl Curvature {
    /// The second derivatives of `cl` (the closure's column laws, `c2` its
    /// c²(R, z)) compiled for `model`; the column heights of a surface density from `domain`.
    pub fn new(
        model: &Model,
        cl: &ColumnLaws,
        c2: &Expr,
        domain: &Domain,
    ) -> Result<Curvature, ClosureError> {
        let lookup = |n: &str| model.lookup(n);
        let vars = ["R", "z"];
        let fail = |error| ClosureError::Formula {
            origin: "d^2/dR^2 of the column integrand".into(),
            error,
        };
        let g_rr = cl.g_r.diff("R").simplify();
        let q_rr = cl.q_r.diff("R").simplify();
        let phi_rr = cl.phi_r.diff("R").simplify();
        let base_rr = cl.base_r.diff("R").simplify();
        let c2 = c2.simplify();
        let c2_r = c2.diff("R").simplify();
        let integrand = Kernel::compile(
            &[("g", &cl.g), ("g_R", &cl.g_r), ("g_RR", &g_rr)],
            &vars,
            &lookup,
        )
        .map_err(fail)?;
        let weight = Kernel::compile(
            &[("q", &cl.q), ("q_R", &cl.q_r), ("q_RR", &q_rr)],
            &vars,
            &lookup,
        )
        .map_err(fail)?;
        let radial = Kernel::compile(
            &[
                ("phi_R", &cl.phi_r),
                ("phi_RR", &phi_rr),
                ("c2", &c2),
                ("c2_R", &c2_r),
                ("base_R", &cl.base_r),
                ("base_RR", &base_rr),
            ],
            &vars,
            &lookup,
        )
        .map_err(fail)?;
        let surface = match &cl.surface {
            None => None,
            Some((_, extent)) => {
                let over = super::column_range(domain, *extent)?;
                let scale = (over.1 - over.0).abs().max(1e-3 * domain.hi.abs());
                let scale = if scale.is_finite() {
                    scale
                } else {
                    domain.hi.abs()
                };
                Some((over, scale))
            }
        };
        let rule = GaussLegendre::new(RULE).expect("a 10-point rule exists");
        Ok(Curvature {
            integrand,
            weight,
            radial,
            nodes: rule.nodes,
            weights: rule.weights,
            surface,
        })
    }

    /// Whether the column is normalised to a surface density.
    pub fn has_surface(&self) -> bool {
        self.surface.is_some()
    }

    fn sum(&self, h: f64, f: &[f64]) -> f64 {
        self.weights.iter().zip(f).map(|(w, v)| w * v).sum::<f64>() * h
    }

    /// The 3 outputs of `k` at the rule's nodes on [a, b] (R = r).
    fn nodes_on(&self, k: &Kernel, r: f64, a: f64, b: f64, ws: &mut Workspace) -> [[f64; RULE]; 3] {
        let (c, w) = (0.5 * (a + b), 0.5 * (b - a));
        let mut out = [[0.0; RULE]; 3];
        let mut o = [0.0; 3];
        for (j, t) in self.nodes.iter().enumerate() {
            k.eval(&[r, c + w * t], &mut o, ws);
            for i in 0..3 {
                out[i][j] = o[i];
            }
        }
        out
    }

    /// [L, L_R, L_RR] = ∫ₐᵇ [g, g_R, g_RR] dz at R = r, adaptive.
    pub fn inner(&self, r: f64, a: f64, b: f64, ws: &mut Workspace) -> [f64; 3] {
        let mut total = [0.0; 3];
        if a.to_bits() == b.to_bits() {
            return total;
        }
        let mut stack = vec![(a, b, 0u32)];
        while let Some((lo, hi, depth)) = stack.pop() {
            let mid = 0.5 * (lo + hi);
            let whole = self.nodes_on(&self.integrand, r, lo, hi, ws);
            let left = self.nodes_on(&self.integrand, r, lo, mid, ws);
            let right = self.nodes_on(&self.integrand, r, mid, hi, ws);
            let mut good = true;
            let mut halves = [0.0; 3];
            for i in 0..3 {
                let w = self.sum(0.5 * (hi - lo), &whole[i]);
                let h =
                    self.sum(0.5 * (mid - lo), &left[i]) + self.sum(0.5 * (hi - mid), &right[i]);
                let big = whole[i]
                    .iter()
                    .chain(&left[i])
                    .chain(&right[i])
                    .fold(0.0f64, |m, v| m.max(v.abs()));
                good &= (w - h).abs() <= PANEL_TOLERANCE * (hi - lo).abs() * big || !h.is_finite();
                halves[i] = h;
            }
            if good || depth >= MAX_DEPTH {
                for i in 0..3 {
                    total[i] += halves[i];
                }
            } else {
                stack.push((mid, hi, depth + 1));
                stack.push((lo, mid, depth + 1));
            }
        }
        total
    }

    /// [∫ w, ∫ w (q_R − L_R), ∫ w ((q_R − L_R)² + q_RR − L_RR)] with
    /// w = e^(q−L), from the midplane to `end` (signed; infinite ends run
    /// until w is negligible).
    fn half_column(
        &self,
        r: f64,
        end: f64,
        scale: f64,
        ws: &mut Workspace,
    ) -> Result<[f64; 3], String> {
        let infinite = end.is_infinite();
        let dir = end.signum();
        let mut len = if infinite {
            scale / 8.0
        } else {
            end.abs() / 8.0
        };
        let mut queue: Vec<(f64, f64, u32)> = Vec::new();
        let (mut a, mut la) = (0.0f64, [0.0f64; 3]);
        let mut total = [0.0f64; 3];
        let mut peak = 0.0f64;
        let mut steps = 0usize;
        loop {
            let (lo, hi, depth) = match queue.pop() {
                Some(p) => p,
                None => {
                    if !infinite && a.to_bits() == end.to_bits() {
                        break;
                    }
                    let b = a + dir * len;
                    let b = if infinite {
                        len *= 1.5;
                        b
                    } else if (b - end) * dir >= -1e-14 * end.abs() {
                        end
                    } else {
                        b
                    };
                    (a, b, 0)
                }
            };
            steps += 1;
            if steps > 100_000 {
                return Err(format!(
                    "the column at R = {} did not settle",
                    super::show(r)
                ));
            }
            let mid = 0.5 * (lo + hi);
            let mut f = [[0.0; 3 * RULE]; 3];
            for (part, (x0, x1)) in [(lo, hi), (lo, mid), (mid, hi)].into_iter().enumerate() {
                let (c, w) = (0.5 * (x0 + x1), 0.5 * (x1 - x0));
                let q = self.nodes_on(&self.weight, r, x0, x1, ws);
                for (j, t) in self.nodes.iter().enumerate() {
                    let z = c + w * t;
                    let l = self.inner_fixed(r, lo, z, ws);
                    let (l0, l1, l2) = (la[0] + l[0], la[1] + l[1], la[2] + l[2]);
                    let v = (q[0][j] - l0).exp();
                    let d = q[1][j] - l1;
                    f[0][part * RULE + j] = v;
                    f[1][part * RULE + j] = v * d;
                    f[2][part * RULE + j] = v * (d * d + q[2][j] - l2);
                }
            }
            let mut good = true;
            let mut halves = [0.0; 3];
            for k in 0..3 {
                let whole = self.sum(0.5 * (hi - lo), &f[k][..RULE]);
                let half = self.sum(0.5 * (mid - lo), &f[k][RULE..2 * RULE])
                    + self.sum(0.5 * (hi - mid), &f[k][2 * RULE..]);
                if !half.is_finite() {
                    return Err(format!(
                        "the column integral at R = {} is not finite near z = {}",
                        super::show(r),
                        super::show(mid)
                    ));
                }
                let big = (hi - lo).abs() * f[k].iter().fold(0.0f64, |m, v| m.max(v.abs()));
                good &= (whole - half).abs() <= OUTER_TOLERANCE * big.max(1e-300);
                halves[k] = half;
            }
            if good || depth >= OUTER_DEPTH {
                for k in 0..3 {
                    total[k] += halves[k];
                }
                let l = self.inner(r, lo, hi, ws);
                la = [la[0] + l[0], la[1] + l[1], la[2] + l[2]];
                a = hi;
                let tail = f[0][2 * RULE - 1].max(f[0][3 * RULE - 1]);
                peak = peak.max(f[0].iter().fold(0.0f64, |m, v| m.max(*v)));
                if infinite && queue.is_empty() && tail < NEGLIGIBLE * peak {
                    break;
                }
                if infinite && hi.abs() > 1e6 * scale.max(r) {
                    return Err(format!(
                        "the column at R = {} does not converge to infinity",
                        super::show(r)
                    ));
                }
            } else {
                queue.push((mid, hi, depth + 1));
                queue.push((lo, mid, depth + 1));
            }
        }
        Ok(total)
    }

    /// ∫ from `a` to `x` of [g, g_R, g_RR] by one fixed rule (smooth in x,
    /// as `column.rs` does for its outer integral).
    fn inner_fixed(&self, r: f64, a: f64, x: f64, ws: &mut Workspace) -> [f64; 3] {
        let f = self.nodes_on(&self.integrand, r, a, x, ws);
        let h = 0.5 * (x - a);
        [self.sum(h, &f[0]), self.sum(h, &f[1]), self.sum(h, &f[2])]
    }

    /// [I, I′, I″] of the column at R = r.
    pub fn column_integrals(&self, r: f64, ws: &mut Workspace) -> Result<Option<[f64; 3]>, String> {
        let Some((over, scale)) = self.surface else {
            return Ok(None);
        };
        let up = self.half_column(r, over.1, scale, ws)?;
        let down = self.half_column(r, over.0, scale, ws)?;
        Ok(Some([up[0] - down[0], up[1] - down[1], up[2] - down[2]]))
    }

    /// v_φ² and ∂_R v_φ² at (r, z); `ints` the column's [I, I′, I″] at r
    /// when a surface density normalises it (see
    /// [`Curvature::column_integrals`]).
    pub fn at(&self, r: f64, z: f64, ints: Option<[f64; 3]>, ws: &mut Workspace) -> Curved {
        let [_, l_r, l_rr] = self.inner(r, 0.0, z, ws);
        let mut o = [0.0; 6];
        self.radial.eval(&[r, z], &mut o, ws);
        let [phi_r, phi_rr, c2, c2_r, base_r, base_rr] = o;
        let (j, j_r) = match ints {
            Some([i, i1, i2]) => {
                let j = i1 / i;
                (j, i2 / i - j * j)
            }
            None => (0.0, 0.0),
        };
        let lnp_r = base_r - j - l_r;
        let lnp_rr = base_rr - j_r - l_rr;
        let v2 = r * (phi_r + c2 * lnp_r);
        let terms = [phi_rr, c2_r * lnp_r, c2 * lnp_rr];
        let v2_r = v2 / r + r * terms.iter().sum::<f64>();
        let scale = (v2 / r).abs() + r * terms.iter().map(|t| t.abs()).sum::<f64>();
        Curved { v2, v2_r, scale }
    }
}
