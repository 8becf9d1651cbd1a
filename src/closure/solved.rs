//! The solved background of a closure: its laws compiled into one block
//! program (common subexpressions shared between ρ, P, v_φ and Φ) and, for
//! integrated closures, the tabulated integral.
//!
//! Owns: turning laws and a table into a [`Background`] — which outputs the
//! program has, how the integral becomes ρ and P, the accelerations, and the
//! block and scalar paths, which agree to the bit. Does not own which laws a
//! closure needs or derives (`laws`), the table (`tabulate`) or the
//! existence checks (`mod.rs`).

use super::column::Column;
use super::tabulate::Table;
use super::{ClosureError, Integrated, Laws};
use crate::background::{Background, Frame, Shape, State, StateBlock, Want, Workspace};
use crate::formula::{Expr, Func, Kernel, Program};
use crate::model::Model;

thread_local! {
    /// Registers for scalar evaluations ([`Solved::at`]): one set for the
    /// law programs, one for the table's integrand (which may run inside).
    static SCALAR: std::cell::RefCell<(crate::formula::Workspace, crate::formula::Workspace)> =
        std::cell::RefCell::default();
}

/// Positions of the outputs of the law program.
#[derive(Clone, Copy, Debug, Default)]
struct Outputs {
    phi: usize,
    rho: Option<usize>,
    p: Option<usize>,
    c2: Option<usize>,
    v: Option<usize>,
    /// Column closures: ln P_mid (without the normalisation), its
    /// R-derivative, ∂Φ/∂R.
    base: Option<usize>,
    base_r: Option<usize>,
    phi_r: Option<usize>,
}

/// A solved background: compiled laws and, for integrated closures, the
/// tabulated integral.
pub struct Solved {
    shape: Shape,
    /// How many frame coordinates the programs take: 1 (the balance
    /// coordinate), or 2 (R, z) for a stratified disk.
    vars: usize,
    laws: Kernel,
    out: Outputs,
    accel: Kernel,
    rotation_sq: Option<Program>,
    integral: Option<(Integrated, Table, f64)>,
    /// The axis or centre the grid contains, with the limit of Φ there, for
    /// a potential that is 0/0 at the point itself.
    axis_potential: Option<(f64, f64)>,
    /// A stratified disk integrated up its columns.
    column: Option<Column>,
}

/// Buffers of [`Workspace::buffers`]: one per law output, then the integral,
/// the table's nodes and (next) their integrand values, then the two
/// accelerations.
const INTEGRAL: usize = 5;
const NODES: usize = 6;
const ACCEL: usize = 8;

impl Solved {
    /// Compile the laws of a closure (and take the table of an integrated
    /// one) into a background.
    pub(super) fn new(
        model: &Model,
        laws: &Laws,
        integral: Option<(Integrated, Table, f64)>,
        axis_potential: Option<(f64, f64)>,
        column: Option<Column>,
    ) -> Result<Solved, ClosureError> {
        let vars = model.shape.variables();
        let s = vars[0];
        let fail = |origin: &str| {
            let origin = origin.to_string();
            move |error| ClosureError::Formula { origin, error }
        };
        let mut list: Vec<(&str, Expr)> = vec![("phi", laws.potential.clone())];
        let mut out = Outputs::default();
        let mut push = |name: &'static str, e: &Option<Expr>| {
            e.as_ref().map(|e| {
                list.push((name, e.clone()));
                list.len() - 1
            })
        };
        out.rho = push("rho", &laws.density);
        out.p = push("P", &laws.pressure);
        out.c2 = push("c2", &laws.sound_speed_sq);
        // A given rotation law keeps its sign (the sense of rotation); a
        // derived one is prograde, v_φ = +√(v_φ²).
        let v = laws.rotation.clone().or_else(|| {
            laws.rotation_sq
                .clone()
                .map(|v2| Expr::call(Func::Sqrt, vec![v2]))
        });
        if model.shape.is_disk() {
            out.v = push("v", &v);
        }
        if let Some(cl) = &laws.column {
            out.base = push("base", &Some(cl.base.clone()));
            out.base_r = push("base_r", &Some(cl.base_r.clone()));
            out.phi_r = push("phi_r", &Some(cl.phi_r.clone()));
        }
        let refs: Vec<(&str, &Expr)> = list.iter().map(|(n, e)| (*n, e)).collect();
        let lookup = |n: &str| model.lookup(n);
        let kernel = Kernel::compile(&refs, vars, &lookup).map_err(fail("laws"))?;
        let [g, a] = accelerations(laws, integral.as_ref().map(|i| i.0), s);
        let mut accel_list = vec![("g", g), ("a", a)];
        if let Some([gz, az]) = vertical_accelerations(laws, model.shape) {
            accel_list.extend([("g_z", gz), ("a_z", az)]);
        }
        let accel_refs: Vec<(&str, &Expr)> = accel_list.iter().map(|(n, e)| (*n, e)).collect();
        let accel = Kernel::compile(&accel_refs, vars, &lookup).map_err(fail("accelerations"))?;
        let rotation_sq = laws
            .rotation_sq
            .as_ref()
            .map(|e| super::compile(model, e, "rotation"))
            .transpose()?;
        Ok(Solved {
            shape: model.shape,
            vars: vars.len(),
            laws: kernel,
            out,
            accel,
            rotation_sq,
            integral,
            axis_potential,
            column,
        })
    }

    /// The column integrals, for a stratified disk integrated up its
    /// columns.
    pub fn column(&self) -> Option<&Column> {
        self.column.as_ref()
    }

    /// ρ, P, v_φ and −(1/ρ) ∂P/∂R of a column closure at (r, z) from the
    /// law outputs c², base, base_r, ∂Φ/∂R: the one combination both paths
    /// use.
    fn column_state(col: &Column, r: f64, [l, l_r]: [f64; 2], o: [f64; 4]) -> [f64; 4] {
        let [c2, base, base_r, phi_r] = o;
        let [ln_i, ratio] = col.norm_at(r);
        let ln_p = base - ln_i - l;
        let p = ln_p.exp();
        let a = -(c2 * (base_r - ratio - l_r));
        let v2 = r * (phi_r - a);
        [p / c2, p, v2.sqrt(), a]
    }

    /// Φ at `s` as the law gives it, without the limit taken at the axis.
    pub(super) fn raw_potential(&self, s: f64) -> f64 {
        let mut o = [0.0; 8];
        SCALAR.with(|w| {
            self.laws
                .eval(&[s, 0.0][..self.vars], &mut o, &mut w.borrow_mut().0)
        });
        o[self.out.phi]
    }

    /// Φ where the law is 0/0 at the axis or centre: its limit there.
    fn potential(&self, s: f64, v: f64) -> f64 {
        match self.axis_potential {
            Some((axis, limit)) if s <= axis && !v.is_finite() => limit,
            _ => v,
        }
    }

    /// v_φ² at `s`, or None when there is no rotation. Derivatives follow
    /// the power rule c·u^(c−1)·u′, finite where u = 0, so the axis needs no
    /// special case: a value that is not a number there is reported.
    pub(super) fn rotation_sq_at(&self, s: f64) -> Option<f64> {
        Some(self.rotation_sq.as_ref()?.eval(&[s]))
    }

    /// Whether evaluating the background reads a tabulated integral.
    pub fn is_integrated(&self) -> bool {
        self.integral.is_some()
    }

    /// ρ and P from the law outputs `o` and the integral `i`: the one
    /// combination both paths use.
    fn combine(&self, o: &dyn Fn(Option<usize>) -> f64, i: f64) -> (f64, f64) {
        match &self.integral {
            None => {
                let rho = o(self.out.rho);
                let p = match self.out.p {
                    Some(_) => o(self.out.p),
                    None => o(self.out.c2) * rho,
                };
                (rho, p)
            }
            Some((kind, _, base)) => match kind {
                Integrated::LogDensity => {
                    let rho = base * i.exp();
                    (rho, rho * o(self.out.c2))
                }
                Integrated::Pressure => (o(self.out.rho), base + i),
                Integrated::LogPressure => {
                    let p = base * i.exp();
                    (p / o(self.out.c2), p)
                }
            },
        }
    }

    /// A vertical acceleration component: the kernel's value for a
    /// stratified disk, 0 where the laws do not depend on z.
    fn vertical(&self, a: f64) -> f64 {
        if self.accel.outputs().len() > 2 {
            a
        } else {
            0.0
        }
    }

    fn velocity(&self, v: f64) -> [f64; 3] {
        match (self.out.v, &self.column) {
            (Some(_), _) | (None, Some(_)) => [0.0, v, 0.0],
            (None, None) => [0.0; 3],
        }
    }
}

/// `out` = `from`, or NaN where the closure has no such law.
fn copy_or_nan(out: &mut [f64], from: Option<&[f64]>) {
    match from {
        Some(v) => out.copy_from_slice(v),
        None => out.fill(f64::NAN),
    }
}

/// `out` = `a` × `b`, or NaN where the closure has no `b`.
fn mul_or_nan(out: &mut [f64], a: &[f64], b: Option<&[f64]>) {
    match b {
        Some(b) => {
            for ((o, a), b) in out.iter_mut().zip(a).zip(b) {
                *o = a * b;
            }
        }
        None => out.fill(f64::NAN),
    }
}

/// −∂Φ/∂s and −(1/ρ) ∂P/∂s as formulas in the balance coordinate. For an
/// integrated closure the integrand f is the derivative of the integrated
/// quantity: ln ρ (P = ρc², so −∂P/∂s/ρ = −(c² f + ∂c²/∂s)), P (−f/ρ) or
/// ln P (−c² f).
pub fn accelerations(laws: &Laws, kind: Option<Integrated>, s: &str) -> [Expr; 2] {
    let nan = || Expr::num(f64::NAN);
    let g = (-laws.potential.diff(s)).simplify();
    let a = match (kind, &laws.integrand) {
        (None, _) => match (&laws.pressure, &laws.density) {
            (Some(p), Some(rho)) => -(p.diff(s) / rho.clone()),
            _ => nan(),
        },
        (Some(Integrated::LogDensity), Some(f)) => match &laws.sound_speed_sq {
            Some(c2) => -(c2.clone() * f.clone() + c2.diff(s)),
            None => nan(),
        },
        (Some(Integrated::Pressure), Some(f)) => match &laws.density {
            Some(rho) => -(f.clone() / rho.clone()),
            None => nan(),
        },
        (Some(Integrated::LogPressure), Some(f)) => match &laws.sound_speed_sq {
            Some(c2) => -(c2.clone() * f.clone()),
            None => nan(),
        },
        (Some(_), None) => nan(),
    };
    [g, a.simplify()]
}

/// The vertical components −∂Φ/∂z and −(1/ρ) ∂P/∂z of a stratified disk, as
/// formulas in (R, z) (None for other shapes): exact derivatives of the
/// closed-form ρ and P. A disk integrated up its columns has
/// ln P = ln P_mid(R) − ∫₀ᶻ (∂Φ/∂z)/c² dz′ (design.md §2, last row), whose
/// z-derivative is −(∂Φ/∂z)/c² exactly (the fundamental theorem of
/// calculus, no quadrature), so −(1/ρ) ∂P/∂z = −c² ∂ln P/∂z = ∂Φ/∂z.
pub fn vertical_accelerations(laws: &Laws, shape: Shape) -> Option<[Expr; 2]> {
    if shape != Shape::StratifiedDisk {
        return None;
    }
    let phi_z = laws.potential.diff("z").simplify();
    let a = match (&laws.pressure, &laws.density, &laws.column) {
        (Some(p), Some(rho), _) => (-(p.diff("z") / rho.clone())).simplify(),
        (_, _, Some(_)) => phi_z.clone(),
        _ => Expr::num(f64::NAN),
    };
    Some([(-phi_z).simplify(), a])
}

impl Background for Solved {
    fn frame(&self) -> Frame {
        self.shape.frame()
    }

    /// Closures balance along one coordinate (a disk's laws are those of its
    /// midplane), except a stratified disk's, in (R, z).
    fn depends_on(&self) -> [bool; 2] {
        [true, self.vars > 1]
    }

    fn workspace(&self) -> Workspace {
        Workspace {
            buffers: (0..ACCEL + 4).map(|_| Vec::new()).collect(),
            kernels: vec![
                self.laws.workspace(),
                self.accel.workspace(),
                self.integral
                    .as_ref()
                    .map_or_else(crate::formula::Workspace::new, |(_, t, _)| t.workspace()),
            ],
        }
    }

    fn at(&self, x: &[f64]) -> State {
        let s = x[0];
        let xs = &x[..self.vars];
        let mut o = [0.0; 8];
        let mut a = [0.0; 4];
        // The registers of this thread's scalar evaluations, reused.
        let i = SCALAR.with(|w| {
            let (laws, table) = &mut *w.borrow_mut();
            self.laws.eval(xs, &mut o, laws);
            self.accel
                .eval(xs, &mut a[..self.accel.outputs().len()], laws);
            match &self.integral {
                Some((_, t, _)) => t.at(s, table),
                None => 0.0,
            }
        });
        let get = |k: Option<usize>| k.map_or(f64::NAN, |k| o[k]);
        let (density, pressure, v, pa) = match &self.column {
            Some(col) => {
                let outs = [self.out.c2, self.out.base, self.out.base_r, self.out.phi_r];
                let l = col.at(s, x[1]);
                let [rho, p, v, pa] = Self::column_state(col, s, l, outs.map(get));
                (rho, p, v, pa)
            }
            None => {
                let (rho, p) = self.combine(&get, i);
                (rho, p, get(self.out.v), a[1])
            }
        };
        State {
            density,
            pressure,
            potential: self.potential(s, o[self.out.phi]),
            velocity: self.velocity(v),
            gravity: [a[0], 0.0, self.vertical(a[2])],
            pressure_accel: [pa, 0.0, self.vertical(a[3])],
        }
    }

    fn eval(&self, coords: &[&[f64]], want: Want, out: &mut StateBlock, ws: &mut Workspace) {
        let s = coords[0];
        let n = s.len();
        let nout = self.laws.outputs().len();
        for b in ws.buffers.iter_mut() {
            b.resize(n.max(b.len()), 0.0);
        }
        let (laws_ws, rest) = ws.kernels.split_at_mut(1);
        let (accel_ws, table_ws) = rest.split_at_mut(1);
        {
            let mut outs: Vec<&mut [f64]> =
                ws.buffers[..nout].iter_mut().map(|b| &mut b[..n]).collect();
            self.laws
                .run(&coords[..self.vars], &mut outs, &mut laws_ws[0]);
        }
        if let Some((_, t, _)) = &self.integral {
            let (head, tail) = ws.buffers.split_at_mut(NODES);
            let (nodes, values) = tail.split_at_mut(1);
            t.eval(
                s,
                &mut head[INTEGRAL][..n],
                &mut nodes[0],
                &mut values[0],
                &mut table_ws[0],
            );
        }
        let b = &ws.buffers;
        let col = |k: Option<usize>| k.map(|k| &b[k][..n]);
        let (rho, p) = (&mut out.density[..n], &mut out.pressure[..n]);
        match &self.integral {
            None => {
                copy_or_nan(rho, col(self.out.rho));
                match (col(self.out.p), col(self.out.c2)) {
                    (Some(pv), _) => p.copy_from_slice(pv),
                    (None, Some(c2)) => {
                        for ((p, c), r) in p.iter_mut().zip(c2).zip(rho.iter()) {
                            *p = c * r;
                        }
                    }
                    (None, None) => p.fill(f64::NAN),
                }
            }
            Some((kind, _, base)) => {
                let i = &b[INTEGRAL][..n];
                let c2 = col(self.out.c2);
                match kind {
                    Integrated::LogDensity => {
                        for (r, i) in rho.iter_mut().zip(i) {
                            *r = base * i.exp();
                        }
                        mul_or_nan(p, rho, c2);
                    }
                    Integrated::Pressure => {
                        copy_or_nan(rho, col(self.out.rho));
                        for (p, i) in p.iter_mut().zip(i) {
                            *p = base + i;
                        }
                    }
                    Integrated::LogPressure => {
                        for (p, i) in p.iter_mut().zip(i) {
                            *p = base * i.exp();
                        }
                        match c2 {
                            Some(c2) => {
                                for ((r, p), c) in rho.iter_mut().zip(p.iter()).zip(c2) {
                                    *r = p / c;
                                }
                            }
                            None => rho.fill(f64::NAN),
                        }
                    }
                }
            }
        }
        for (o, (phi, s)) in out.potential[..n]
            .iter_mut()
            .zip(b[self.out.phi][..n].iter().zip(s))
        {
            *o = self.potential(*s, *phi);
        }
        out.velocity[0][..n].fill(0.0);
        out.velocity[2][..n].fill(0.0);
        match col(self.out.v) {
            Some(v) => out.velocity[1][..n].copy_from_slice(v),
            None => out.velocity[1][..n].fill(0.0),
        }
        if want.accelerations {
            let k = self.accel.outputs().len();
            let mut outs: Vec<&mut [f64]> = ws.buffers[ACCEL..ACCEL + k]
                .iter_mut()
                .map(|b| &mut b[..n])
                .collect();
            self.accel
                .run(&coords[..self.vars], &mut outs, &mut accel_ws[0]);
            let b = &ws.buffers[ACCEL..];
            out.gravity[0][..n].copy_from_slice(&b[0][..n]);
            out.pressure_accel[0][..n].copy_from_slice(&b[1][..n]);
            out.gravity[1][..n].fill(0.0);
            out.pressure_accel[1][..n].fill(0.0);
            if k > 2 {
                out.gravity[2][..n].copy_from_slice(&b[2][..n]);
                out.pressure_accel[2][..n].copy_from_slice(&b[3][..n]);
            } else {
                out.gravity[2][..n].fill(0.0);
                out.pressure_accel[2][..n].fill(0.0);
            }
        }
        if let Some(col) = &self.column {
            let b = &ws.buffers;
            let z = coords[1];
            let cols = [self.out.c2, self.out.base, self.out.base_r, self.out.phi_r];
            if let [Some(c2), Some(base), Some(base_r), Some(phi_r)] =
                cols.map(|k| k.map(|k| &b[k][..n]))
            {
                let items: Vec<(f64, f64, f64)> = (0..n).map(|i| (s[i], 0.0, z[i])).collect();
                let mut ls = vec![[0.0; 2]; n];
                col.integrate_many(&items, &mut ls);
                for i in 0..n {
                    let o = [c2[i], base[i], base_r[i], phi_r[i]];
                    let [r, p, v, a] = Self::column_state(col, s[i], ls[i], o);
                    out.density[i] = r;
                    out.pressure[i] = p;
                    out.velocity[1][i] = v;
                    if want.accelerations {
                        out.pressure_accel[0][i] = a;
                    }
                }
            }
        }
        out.len = n;
    }
}
