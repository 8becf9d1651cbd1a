//! A barotropic torus: P = K ρ^Γ rotating with Ω = Ω₀ (R/R₀)^(−a) (a = 2
//! is constant specific angular momentum ℓ = Ω₀R₀²) in a potential Φ(R, z),
//! a [`Background`] of the axisymmetric frame (R, z).
//!
//! Rotation constant on cylinders makes the centrifugal force a potential,
//! Φ_rot(R) = −∫ v_φ²/R dR, so the balance integrates to the Bernoulli
//! relation h(ρ) + Ψ = C with Ψ = Φ + Φ_rot and h = Γ K ρ^(Γ−1)/(Γ−1)
//! (Papaloizou & Pringle 1984, MNRAS 208, 721, §2, for ℓ constant; the
//! power law is the same argument). The constant C comes from the inner edge
//! (C = Ψ(R_in, 0)) or is given; the pressure maximum (Ψ_R = 0) and the
//! edges on the midplane (h = 0) are found by Brent's method (`roots`).
//! Where h ≤ 0 there is no gas: the user's floor density and pressure fill
//! it, at rest, and balance is given up there (gravity is not opposed).
//!
//! Owns: the torus formulas (Ψ, h, ρ, P, v_φ and the exact derivatives of
//! Φ), its edges, its floor and its balance residuals. Does not own profile
//! reading, grids or verdict wording.

use crate::background::{Background, Frame, State, StateBlock, Want, Workspace};
use crate::formula::{Expr, FormulaError, Kernel};

/// The rotation law Ω = Ω₀ (R/R₀)^(−a).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RotationLaw {
    /// Ω₀, the angular velocity at R₀.
    pub omega0: f64,
    /// R₀.
    pub r0: f64,
    /// a (2: constant specific angular momentum).
    pub a: f64,
}

impl RotationLaw {
    /// Constant specific angular momentum ℓ: Ω = ℓ/R² (a = 2, R₀ = 1).
    pub fn constant_angular_momentum(l: f64) -> RotationLaw {
        RotationLaw {
            omega0: l,
            r0: 1.0,
            a: 2.0,
        }
    }

    /// v_φ = Ω R as a formula of R.
    fn velocity(&self) -> Expr {
        let r = Expr::name("R");
        let scale = Expr::num(self.omega0 * self.r0.powf(self.a));
        (scale * r.pow(Expr::num(1.0 - self.a))).simplify()
    }

    /// Φ_rot = −∫ v_φ²/R dR: −Ω₀²R₀^(2a) R^(2−2a)/(2−2a), or −Ω₀²R₀² ln R
    /// for a = 1.
    fn potential(&self) -> Expr {
        let r = Expr::name("R");
        let s = self.omega0 * self.omega0 * self.r0.powf(2.0 * self.a);
        let e = 2.0 - 2.0 * self.a;
        if e.abs() < 1e-12 {
            (Expr::num(-s) * Expr::call(crate::formula::Func::Log, vec![r])).simplify()
        } else {
            (Expr::num(-s / e) * r.pow(Expr::num(e))).simplify()
        }
    }
}

/// What fixes the Bernoulli constant C.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Edge {
    /// The inner edge on the midplane: C = Ψ(R_in, 0).
    InnerRadius(f64),
    /// C itself.
    Bernoulli(f64),
}

/// Everything a torus is built from.
#[derive(Clone, Debug)]
pub struct TorusSpec {
    /// Φ(R, z), parameters by name.
    pub potential: Expr,
    /// K of P = K ρ^Γ.
    pub k: f64,
    /// Γ (> 1).
    pub gamma: f64,
    /// The rotation law.
    pub rotation: RotationLaw,
    /// The edge condition.
    pub edge: Edge,
    /// Density outside the torus.
    pub floor_density: f64,
    /// Pressure outside the torus.
    pub floor_pressure: f64,
    /// Where the edges are searched for on the midplane (lo > 0, hi).
    pub search: (f64, f64),
    /// Values of the names in the potential (parameters, G).
    pub names: Vec<(String, f64)>,
}

/// Why a torus cannot be built.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum TorusError {
    /// An input that cannot make a torus (message names the key).
    #[error("{0}")]
    Input(String),
    /// A formula failed to compile.
    #[error("torus: {0}")]
    Formula(#[from] FormulaError),
}

/// The outputs of the torus kernel, in order.
const OUT: [&str; 7] = ["h", "rho", "P", "v", "phi", "phi_R", "phi_z"];

/// A built torus.
pub struct Torus {
    spec: TorusSpec,
    /// The Bernoulli constant C.
    pub bernoulli: f64,
    /// Inner edge on the midplane.
    pub inner: f64,
    /// Outer edge on the midplane.
    pub outer: f64,
    /// Radius of the pressure (and density) maximum on the midplane.
    pub centre: f64,
    /// The density there.
    pub density_max: f64,
    exprs: Vec<Expr>,
    kernel: Kernel,
}

thread_local! {
    static SCALAR: std::cell::RefCell<crate::formula::Workspace> = std::cell::RefCell::default();
}

/// Brent's method to a few ulp.
struct Tight;

impl roots::Convergency<f64> for Tight {
    fn is_root_found(&mut self, y: f64) -> bool {
        y == 0.0
    }
    fn is_converged(&mut self, a: f64, b: f64) -> bool {
        (a - b).abs() <= 4.0 * f64::EPSILON * a.abs().max(b.abs())
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        iter >= 500
    }
}

/// The first sign change of `f` from `from` towards `to` on a logarithmic
/// scan, refined by Brent's method; None when there is none.
fn first_root(f: &dyn Fn(f64) -> f64, from: f64, to: f64) -> Option<f64> {
    const STEPS: usize = 4000;
    let ratio = (to / from).powf(1.0 / STEPS as f64);
    let (mut a, mut fa) = (from, f(from));
    for i in 1..=STEPS {
        let b = if i == STEPS {
            to
        } else {
            from * ratio.powi(i as i32)
        };
        let fb = f(b);
        if fa == 0.0 {
            return Some(a);
        }
        if fa.is_finite() && fb.is_finite() && (fa < 0.0) != (fb < 0.0) {
            return roots::find_root_brent(a, b, f, &mut Tight).ok();
        }
        (a, fa) = (b, fb);
    }
    None
}

impl Torus {
    /// Build the torus: formulas, the constant C, the pressure maximum and
    /// the edges.
    pub fn new(spec: TorusSpec) -> Result<Torus, TorusError> {
        let (k, g) = (spec.k, spec.gamma);
        if !(k > 0.0 && g > 1.0) {
            return Err(TorusError::Input(format!(
                "gas.barotropic: a torus needs K > 0 and Gamma > 1, found K = {k}, Gamma = {g}"
            )));
        }
        let (fd, fp) = (spec.floor_density, spec.floor_pressure);
        if !(fd > 0.0 && fp > 0.0) {
            return Err(TorusError::Input(format!(
                "balance.torus.floor: the floor density and pressure must be positive, found \
                 {fd} and {fp}"
            )));
        }
        let look = |n: &str| spec.names.iter().find(|(k, _)| k == n).map(|(_, v)| *v);
        let phi = spec.potential.clone();
        let psi = (phi.clone() + spec.rotation.potential()).simplify();
        let psi_r = psi.diff("R");
        let vars = ["R", "z"];
        let mid = |e: &Expr| -> Result<Box<dyn Fn(f64) -> f64>, FormulaError> {
            let p = crate::formula::Program::compile(e, &vars, &look)?;
            Ok(Box::new(move |r| p.eval(&[r, 0.0])))
        };
        let (psi_mid, psi_r_mid) = (mid(&psi)?, mid(&psi_r)?);
        let (lo, hi) = spec.search;
        let start = match spec.edge {
            Edge::InnerRadius(r) => r,
            Edge::Bernoulli(_) => lo,
        };
        // The pressure maximum: Ψ falls (Ψ_R < 0) inside it and rises outside.
        let centre = first_root(&|r| psi_r_mid(r), start, hi).ok_or_else(|| {
            TorusError::Input(format!(
                "balance.torus: the effective potential Psi = Phi + Phi_rot has no minimum on \
                 the midplane between R = {start} and {hi}: gravity and rotation never balance \
                 there, so no torus exists (rotation too fast or too slow)"
            ))
        })?;
        let bernoulli = match spec.edge {
            Edge::InnerRadius(r) => psi_mid(r),
            Edge::Bernoulli(c) => c,
        };
        let h_mid = |r: f64| bernoulli - psi_mid(r);
        if h_mid(centre) <= 0.0 {
            return Err(TorusError::Input(format!(
                "balance.torus: the Bernoulli constant {bernoulli} lies below the effective \
                 potential's minimum {} at R = {centre}: the torus is empty",
                psi_mid(centre)
            )));
        }
        let inner = match spec.edge {
            Edge::InnerRadius(r) => r,
            Edge::Bernoulli(_) => {
                // Inward from the centre: the first radius where h = 0.
                first_root(&h_mid, centre, lo).ok_or_else(|| {
                    TorusError::Input(format!(
                        "balance.torus: the torus does not close inside R = {centre} down to \
                         R = {lo}"
                    ))
                })?
            }
        };
        let outer = first_root(&h_mid, centre, hi).ok_or_else(|| {
            TorusError::Input(format!(
                "balance.torus: the torus does not close on the midplane out to R = {hi} (h > 0 \
                 there): lower the Bernoulli constant or move the inner edge outward"
            ))
        })?;
        let h = (Expr::num(bernoulli) - psi).simplify();
        let b = crate::model::Barotrope {
            constant: Expr::num(k),
            exponent: Expr::num(g),
            exponent_value: g,
            origin: String::new(),
        };
        let rho = b.density_of_enthalpy(&h);
        let p = b.pressure(&rho);
        let exprs = vec![
            h,
            rho,
            p,
            spec.rotation.velocity(),
            phi.clone(),
            phi.diff("R"),
            phi.diff("z"),
        ];
        let outs: Vec<(&str, &Expr)> = OUT.iter().copied().zip(exprs.iter()).collect();
        let kernel = Kernel::compile(&outs, &vars, &look)?;
        let hc = h_mid(centre);
        let density_max = ((g - 1.0) * hc / (g * k)).powf(1.0 / (g - 1.0));
        Ok(Torus {
            spec,
            bernoulli,
            inner,
            outer,
            centre,
            density_max,
            exprs,
            kernel,
        })
    }

    /// The formulas, by name: h, rho, P, v, phi, phi_R, phi_z (for
    /// `derive` and outside checks).
    pub fn formulas(&self) -> Vec<(&'static str, &Expr)> {
        OUT.iter().copied().zip(self.exprs.iter()).collect()
    }

    /// Rayleigh's epicyclic frequency κ² = R⁻³ d(R⁴Ω²)/dR (exact symbolic
    /// derivative of the rotation law) and Ω², at `n` midplane radii from
    /// the inner to the outer edge: (R, κ², Ω²) each.
    pub fn epicyclic_sq(&self, n: usize) -> Result<Vec<(f64, f64, f64)>, TorusError> {
        let r = Expr::name("R");
        let omega_sq = (self.spec.rotation.velocity().pow(Expr::num(2.0))
            / r.clone().pow(Expr::num(2.0)))
        .simplify();
        let k2 = ((r.clone().pow(Expr::num(4.0)) * omega_sq.clone()).diff("R")
            / r.pow(Expr::num(3.0)))
        .simplify();
        let look = |_: &str| None;
        let k2 = crate::formula::Program::compile(&k2, &["R"], &look)?;
        let w2 = crate::formula::Program::compile(&omega_sq, &["R"], &look)?;
        Ok((0..n)
            .map(|i| {
                let x = self.inner + (self.outer - self.inner) * i as f64 / (n - 1).max(1) as f64;
                (x, k2.eval(&[x]), w2.eval(&[x]))
            })
            .collect())
    }

    /// The floor density and pressure.
    pub fn floor(&self) -> (f64, f64) {
        (self.spec.floor_density, self.spec.floor_pressure)
    }

    /// Whether (R, z) lies outside the torus (the floor, no balance).
    pub fn floored(&self, r: f64, z: f64) -> bool {
        let mut o = [0.0; 7];
        SCALAR.with(|w| self.kernel.eval(&[r, z], &mut o, &mut w.borrow_mut()));
        o[0].is_nan() || o[0] <= 0.0
    }

    /// The state from the kernel's outputs `o` (in the order of `OUT`): the
    /// one combination the scalar and block paths share.
    fn state(&self, r: f64, o: &[f64; 7]) -> State {
        let g = [-o[5], 0.0, -o[6]];
        if o[0] > 0.0 {
            // −∇P/ρ = −∇h = ∇Φ − v_φ²/R e_R.
            let cen = o[3] * o[3] / r;
            State {
                density: o[1],
                pressure: o[2],
                potential: o[4],
                velocity: [0.0, o[3], 0.0],
                gravity: g,
                pressure_accel: [o[5] - cen, 0.0, o[6]],
            }
        } else {
            let (fd, fp) = self.floor();
            State {
                density: fd,
                pressure: fp,
                potential: o[4],
                velocity: [0.0; 3],
                gravity: g,
                pressure_accel: [0.0; 3],
            }
        }
    }

    /// The relative balance residuals (radial, vertical) at (R, z) inside
    /// the torus, from exact symbolic derivatives of ρ and P (not of h):
    /// v_φ²/R − Φ_R − P_R/ρ and −Φ_z − P_z/ρ, each over its largest term.
    pub fn residuals(&self) -> Result<impl Fn(f64, f64) -> [f64; 2] + '_, TorusError> {
        let [_, rho, p, v, _, phi_r, phi_z] = &self.exprs[..] else {
            unreachable!("seven formulas")
        };
        let per_rho = Expr::num(1.0) / rho.clone();
        let terms = [
            (v.clone() * v.clone() / Expr::name("R")).simplify(),
            phi_r.clone(),
            p.diff("R").distribute(&per_rho),
            phi_z.clone(),
            p.diff("z").distribute(&per_rho),
        ];
        let outs: Vec<(&str, &Expr)> = terms.iter().map(|t| ("t", t)).collect();
        let look = |n: &str| {
            self.spec
                .names
                .iter()
                .find(|(k, _)| k == n)
                .map(|(_, v)| *v)
        };
        let k = Kernel::compile(&outs, &["R", "z"], &look)?;
        Ok(move |r: f64, z: f64| {
            let mut t = [0.0; 5];
            k.eval(&[r, z], &mut t, &mut crate::formula::Workspace::new());
            let radial = (t[0] - t[1] - t[2]).abs() / t[0].abs().max(t[1].abs()).max(t[2].abs());
            let vertical = (t[3] + t[4]).abs() / t[3].abs().max(t[4].abs()).max(f64::MIN_POSITIVE);
            [radial, vertical]
        })
    }
}

impl Background for Torus {
    fn frame(&self) -> Frame {
        Frame::Axisymmetric
    }

    fn at(&self, x: &[f64]) -> State {
        let mut o = [0.0; 7];
        SCALAR.with(|w| self.kernel.eval(&x[..2], &mut o, &mut w.borrow_mut()));
        self.state(x[0], &o)
    }

    fn workspace(&self) -> Workspace {
        Workspace {
            buffers: (0..OUT.len()).map(|_| Vec::new()).collect(),
            kernels: vec![self.kernel.workspace()],
        }
    }

    fn eval(&self, coords: &[&[f64]], _want: Want, out: &mut StateBlock, ws: &mut Workspace) {
        let n = coords[0].len();
        for b in ws.buffers.iter_mut() {
            b.resize(n.max(b.len()), 0.0);
        }
        {
            let mut outs: Vec<&mut [f64]> = ws.buffers.iter_mut().map(|b| &mut b[..n]).collect();
            self.kernel.run(&coords[..2], &mut outs, &mut ws.kernels[0]);
        }
        for (i, r) in coords[0].iter().enumerate() {
            let o: [f64; 7] = std::array::from_fn(|k| ws.buffers[k][i]);
            out.set(i, &self.state(*r, &o));
        }
        out.len = n;
    }
}
