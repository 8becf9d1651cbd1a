//! [`Kernel`]: several formulas compiled into one flat program over numbered
//! registers, run over blocks of points (the block path) or at one point
//! (the scalar path), with [`Workspace`], the registers of one thread. It
//! owns running the program and its introspection; compiling is `dag.rs`'s
//! and the arithmetic of each instruction `lanes.rs`'s.
//!
//! # Instruction set
//!
//! Every instruction writes one register (or one output) from up to three
//! operands; an operand is a register, an output computed earlier, a
//! variable (read straight from the caller's input slice) or a constant
//! (one value for every lane). On the block path each instruction is one
//! plain slice loop over the block's lanes; on the scalar path it is one
//! f64 operation. Both run the instruction's one definition in `lanes.rs`:
//!
//! | instruction | meaning |
//! |---|---|
//! | `Neg`, `Recip` | `-x`, `1/x` |
//! | `PowF(c)` | `x.powf(c)`, a constant exponent that is not an integer \|n\| ≤ 64 |
//! | `Call(f)` | a one-argument function (`sqrt`, `exp`, … `abs`) |
//! | `Add`, `Sub`, `Mul` | `x + y`, `x - y`, `x * y` |
//! | `MulRecip` | `x * (1/y)`, the fusion of `Recip` and `Mul` |
//! | `Pow` | `x ^ y` with a run-time exponent (powi for small integers, else powf) |
//! | `Call(f)` (two operands) | `atan2`, `min`, `max` |
//! | `Cmp(op)`, `And`, `Or` | conditions as 1.0 / 0.0 |
//! | `Select` | `c != 0 ? x : y`; both operands are computed, so a NaN in the branch not taken does not leak |
//!
//! An integer power `x^n` (|n| ≤ 64) is no instruction: it is expanded
//! into the multiplications of `powi`'s binary powering (and one `Recip`
//! for n < 0), which is exactly what `powi` computes.
//!
//! # Sharing and registers
//!
//! All outputs are built into one graph whose nodes are hash-consed: a
//! subtree equal to one built before (operands of `+`, `*`, `and`, `or` in
//! either order) is the same node, so `sqrt(R^2 + z^2)` used by three
//! outputs is computed once per point. Folding happens while the graph is
//! built, exactly as the stack compiler folds (same operations, same
//! order), plus identities that hold for every f64 (a NaN stays a NaN):
//! `1*x = x`, `(-1)*x = -x`, `-(-x) = x`; a known condition decides `and`,
//! `or` and `if`. Only nodes some output needs become instructions, in the order
//! they were built (operands first); a product with a reciprocal nothing
//! else reads becomes one `MulRecip`. Each output's instruction writes the
//! caller's output slice directly; every other instruction takes a free
//! register if there is one, and a register is freed after its last
//! reader, so the register file stays small: the disk law set of the
//! benchmark (five outputs, 24 instructions) needs 5 registers.
//!
//! # Lane count
//!
//! A block is [`Kernel::LANES`] = 128 points. Dispatch (one `match` per
//! instruction per block) is spread over the block; registers of 1 KiB,
//! with the input and output windows, stay in the level-1 data cache
//! (48 KiB a core here) even for kernels of dozens of registers. Measured
//! on the benchmark's two law sets (ratio kernel / hand-written, median of
//! 7 runs, two or three runs of the benchmark each):
//!
//! | lanes | 32 | 64 | 128 | 256 | 512 | 1024 |
//! |---|---|---|---|---|---|---|
//! | disk (libm-bound) | 1.05–1.06 | 1.03–1.05 | 1.02–1.07 | 1.08–1.09 | 1.07–1.24 | 1.12–1.13 |
//! | Plummer (arithmetic only) | 1.78–1.89 | 1.73–2.12 | 1.89–2.26 | 2.07–2.12 | 2.11–2.72 | 2.20–2.24 |
//!
//! 64 and 128 are within the noise of this shared machine; 128 keeps the
//! per-block costs lower for long programs.
//!
//! # Measured (`cargo bench --bench evaluator`)
//!
//! "Intel(R) Xeon(R) Processor" (as `lscpu` names it; a KVM guest, 2 cores,
//! 48 KiB L1d and 2 MiB L2 a core), one thread, the default x86-64 target
//! (SSE2), 10^7 points, medians of 7 runs (3 for the stack machine and the
//! scalar path):
//!
//! | law set | kernel | hand-written Rust | ratio | stack machine | kernel, scalar path |
//! |---|---|---|---|---|---|
//! | disk: c2, rho, P, vphi, Phi (26 instructions, 5 registers), by hand with half powers as square roots | 16.1 ns/point | 18.4 ns/point | 0.87 | 438 ns/point (27 × the kernel) | 106 ns/point |
//! | the same, by hand with `powf` | 16.0 ns/point | 33.8 ns/point | 0.47 | — | — |
//! | Plummer: Phi, gR, gz (14 instructions, 4 registers) | 7.5 ns/point | 3.9 ns/point | 1.91 | — | — |
//!
//! The disk set's half powers are square roots (see `pow_f64`) and its
//! `exp` a library call; the kernel's lane loops vectorise the roots and
//! divisions where the hand-written loop, with a call in the middle, does
//! not. On arithmetic alone the kernel's loads and stores between
//! instructions show: each instruction is a pass over the block, where the
//! hand-written loop keeps every temporary in a machine register (and
//! shares a reciprocal the kernel may not, `1/s^3` being `1/(s*s*s)` to the
//! bit).
//!
//! The block path, the scalar path and the stack machine
//! ([`super::StackProgram`]) agree to the bit on random formulas
//! (`tests/formula_props.rs`).

use super::dag::{Graph, Inst, Lowered, Op, Src};
use super::lanes::{lanes, select_scalar, Arg, Bin, Un, LANES};
use super::{func_name, Expr, FormulaError};
use std::fmt;

/// Several formulas compiled together over a list of run-time variables:
/// common subexpressions are computed once per point, constants folded.
/// `Send + Sync`; each thread brings its own [`Workspace`].
#[derive(Clone, Debug)]
pub struct Kernel {
    code: Vec<Inst>,
    n_regs: usize,
    vars: Vec<String>,
    names: Vec<String>,
    outputs: Vec<Src>,
    deps: Vec<Vec<usize>>,
}

/// The registers of one thread: allocated once, grown to fit the largest
/// kernel it has run, reused by every call (the hot loop allocates nothing).
#[derive(Clone, Debug, Default)]
pub struct Workspace {
    blocks: Vec<Vec<f64>>,
    scalars: Vec<f64>,
    /// The block path's uniform values: one entry per variable, register
    /// and output (in that order), `Some` where the whole block holds that
    /// one value.
    uniform: Vec<Option<f64>>,
}

impl Workspace {
    /// An empty workspace; it grows on first use.
    pub fn new() -> Workspace {
        Workspace::default()
    }

    fn fit(&mut self, n_regs: usize) {
        if self.blocks.len() < n_regs {
            self.blocks.resize_with(n_regs, || vec![0.0; LANES]);
        }
        if self.scalars.len() < n_regs {
            self.scalars.resize(n_regs, 0.0);
        }
    }
}

/// One instruction a line (`r2 = Mul(r0, R)`), then the outputs.
impl fmt::Display for Kernel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let src = |s: &Src| match s {
            Src::Reg(r) => format!("r{r}"),
            Src::Out(k) => self.names[*k as usize].clone(),
            Src::Var(v) => self.vars[*v as usize].clone(),
            Src::Const(c) => format!("{c:e}"),
        };
        for i in &self.code {
            let name = match i.op {
                Op::Un(Un::PowF(c)) => format!("PowF[{}]", c.get()),
                Op::Un(Un::Call(g)) | Op::Bin(Bin::Call(g)) => func_name(g).to_string(),
                Op::Un(u) => format!("{u:?}"),
                Op::Bin(b) => format!("{b:?}"),
                Op::Select => "Select".to_string(),
            };
            let args: Vec<String> = i.args[..i.op.arity()].iter().map(src).collect();
            writeln!(f, "{} = {name}({})", src(&i.dst), args.join(", "))?;
        }
        for (k, s) in self.outputs.iter().enumerate() {
            if *s != Src::Out(k as u32) {
                writeln!(f, "{} = {}", self.names[k], src(s))?;
            }
        }
        Ok(())
    }
}

impl Kernel {
    /// Points per block of the block path.
    pub const LANES: usize = LANES;

    /// Compile `outputs` (name, formula) with `vars` as the run-time inputs,
    /// in that order; every other name must be given by `constants`.
    pub fn compile(
        outputs: &[(&str, &Expr)],
        vars: &[&str],
        constants: &dyn Fn(&str) -> Option<f64>,
    ) -> Result<Kernel, FormulaError> {
        let mut g = Graph::new(vars, constants);
        let vals = outputs
            .iter()
            .map(|(_, e)| g.expr(e))
            .collect::<Result<Vec<_>, _>>()?;
        let Lowered {
            code,
            n_regs,
            outputs: srcs,
            deps,
        } = g.lower(&vals);
        Ok(Kernel {
            code,
            n_regs,
            vars: vars.iter().map(|v| v.to_string()).collect(),
            names: outputs.iter().map(|(n, _)| n.to_string()).collect(),
            outputs: srcs,
            deps,
        })
    }

    /// A workspace sized for this kernel.
    pub fn workspace(&self) -> Workspace {
        let mut ws = Workspace::new();
        ws.fit(self.n_regs);
        ws
    }

    /// Evaluate every output at `n` points, in blocks of [`Kernel::LANES`]: `inputs` has
    /// one slice per variable (in the order of `vars`, each at least `n`
    /// long), `outputs` one slice of length `n` per output.
    pub fn run(&self, inputs: &[&[f64]], outputs: &mut [&mut [f64]], ws: &mut Workspace) {
        assert_eq!(
            outputs.len(),
            self.names.len(),
            "Kernel::run: one slice per output"
        );
        let n = outputs.first().map_or(0, |o| o.len());
        assert!(
            outputs.iter().all(|o| o.len() == n),
            "Kernel::run: output slices differ in length"
        );
        assert!(
            inputs.len() >= self.vars.len(),
            "Kernel::run: too few input slices"
        );
        assert!(
            inputs[..self.vars.len()].iter().all(|c| c.len() >= n),
            "Kernel::run: an input slice is shorter than the output"
        );
        ws.fit(self.n_regs);
        let Workspace {
            blocks: regs,
            uniform,
            ..
        } = ws;
        let nv = self.vars.len();
        let (nr, no) = (self.n_regs, self.outputs.len());
        uniform.clear();
        uniform.resize(nv + nr + no, None);
        for start in (0..n).step_by(LANES) {
            let at = start..n.min(start + LANES);
            let len = at.len();
            // A variable with the same value (bit for bit) in every lane of
            // the block is read as one value, and so is every instruction
            // whose operands are all such: it runs once for the block, on
            // its scalar definition, which gives the same bits as running
            // it lane by lane.
            for (u, x) in uniform[..nv].iter_mut().zip(inputs) {
                let x = &x[at.clone()];
                *u = x
                    .first()
                    .filter(|f| x.iter().all(|v| v.to_bits() == f.to_bits()))
                    .copied();
            }
            uniform[nv..].fill(None);
            for inst in &self.code {
                let splat = lanes(regs, inputs, outputs, &at, uniform, nv, nr).splat(inst);
                if let Some(v) = splat {
                    match inst.dst {
                        Src::Reg(r) => uniform[nv + r as usize] = Some(v),
                        Src::Out(k) => {
                            outputs[k as usize][at.clone()].fill(v);
                            uniform[nv + nr + k as usize] = Some(v);
                        }
                        _ => unreachable!("an instruction writes a register or an output"),
                    }
                    continue;
                }
                // The destination is taken out while the operands are read
                // (it is never one of them), then put back.
                match inst.dst {
                    Src::Reg(r) => {
                        let mut d = std::mem::take(&mut regs[r as usize]);
                        lanes(regs, inputs, outputs, &at, uniform, nv, nr)
                            .exec(inst, &mut d[..len]);
                        regs[r as usize] = d;
                        uniform[nv + r as usize] = None;
                    }
                    Src::Out(k) => {
                        let d = std::mem::take(&mut outputs[k as usize]);
                        lanes(regs, inputs, outputs, &at, uniform, nv, nr)
                            .exec(inst, &mut d[at.clone()]);
                        outputs[k as usize] = d;
                        uniform[nv + nr + k as usize] = None;
                    }
                    _ => unreachable!("an instruction writes a register or an output"),
                }
            }
            // Outputs not written by an instruction: constants, variables,
            // and a value that is also an earlier output.
            for (k, &s) in self.outputs.iter().enumerate() {
                if s != Src::Out(k as u32) {
                    let o = std::mem::take(&mut outputs[k]);
                    match lanes(regs, inputs, outputs, &at, uniform, nv, nr).get(s) {
                        Arg::Lanes(v) => o[at.clone()].copy_from_slice(v),
                        Arg::Splat(c) => o[at.clone()].fill(c),
                    }
                    outputs[k] = o;
                }
            }
        }
    }

    /// Evaluate every output at one point (`point` in the order of `vars`)
    /// into `out`, running the same instructions one value at a time.
    pub fn eval(&self, point: &[f64], out: &mut [f64], ws: &mut Workspace) {
        ws.fit(self.n_regs);
        self.eval_into(point, &mut ws.scalars, out);
    }

    /// The scalar path with the caller's registers (at least `registers()`).
    pub(crate) fn eval_into(&self, point: &[f64], regs: &mut [f64], out: &mut [f64]) {
        assert!(
            point.len() >= self.vars.len(),
            "Kernel::eval: too few values"
        );
        assert!(
            out.len() >= self.outputs.len(),
            "Kernel::eval: one value per output"
        );
        let get = |s: Src, regs: &[f64], out: &[f64]| match s {
            Src::Reg(r) => regs[r as usize],
            Src::Var(v) => point[v as usize],
            Src::Out(k) => out[k as usize],
            Src::Const(c) => c,
        };
        for inst in &self.code {
            let a = |k: usize| get(inst.args[k], regs, out);
            let v = match inst.op {
                Op::Un(u) => u.scalar(a(0)),
                Op::Bin(b) => b.scalar(a(0), a(1)),
                Op::Select => select_scalar(a(0), a(1), a(2)),
            };
            match inst.dst {
                Src::Reg(r) => regs[r as usize] = v,
                Src::Out(k) => out[k as usize] = v,
                _ => unreachable!("an instruction writes a register or an output"),
            }
        }
        for k in 0..self.outputs.len() {
            out[k] = get(self.outputs[k], regs, out);
        }
    }

    /// The number of instructions.
    pub fn len(&self) -> usize {
        self.code.len()
    }

    /// True if no output needs an instruction (every one is a constant or
    /// a bare variable).
    pub fn is_empty(&self) -> bool {
        self.code.is_empty()
    }

    /// The number of registers the program uses.
    pub fn registers(&self) -> usize {
        self.n_regs
    }

    /// The run-time variables, in input order.
    pub fn vars(&self) -> &[String] {
        &self.vars
    }

    /// The output names, in output order.
    pub fn outputs(&self) -> &[String] {
        &self.names
    }

    /// The indices (into [`Kernel::vars`]) of the variables output `k`
    /// depends on after folding, ascending: an output that does not list a
    /// variable has the same value whatever that variable is.
    pub fn depends_on(&self, k: usize) -> &[usize] {
        &self.deps[k]
    }

    /// True if output `k` depends on the variable named `var`.
    pub fn uses(&self, k: usize, var: &str) -> bool {
        self.deps[k].iter().any(|&i| self.vars[i] == var)
    }

    /// The size in stack-machine terms: instructions plus every read of a
    /// variable or a constant (what [`super::Program::len`] reports).
    pub(crate) fn steps(&self) -> usize {
        let leaf = |s: &Src| matches!(s, Src::Var(_) | Src::Const(_));
        let reads: usize = self
            .code
            .iter()
            .map(|i| i.args[..i.op.arity()].iter().filter(|s| leaf(s)).count())
            .sum();
        self.code.len() + reads + self.outputs.iter().filter(|s| leaf(s)).count()
    }
}

#[cfg(test)]
mod tests {
    use super::super::{parse, Func};
    use super::*;

    fn kernel(outs: &[&str], vars: &[&str]) -> Kernel {
        let exprs: Vec<Expr> = outs.iter().map(|s| parse(s).unwrap()).collect();
        let named: Vec<(&str, &Expr)> = exprs.iter().map(|e| ("", e)).collect();
        Kernel::compile(&named, vars, &|n| (n == "k").then_some(2.0)).unwrap()
    }

    fn count(k: &Kernel, op: Op) -> usize {
        k.code.iter().filter(|i| i.op == op).count()
    }

    #[test]
    fn a_shared_subexpression_is_computed_once() {
        let alone = kernel(&["sqrt(R^2 + z^2)"], &["R", "z"]);
        assert_eq!(alone.len(), 4, "R*R, z*z, +, sqrt");
        let k = kernel(
            &[
                "sqrt(R^2 + z^2)",
                "k*sqrt(z^2 + R^2)",
                "R + sqrt(R^2 + z^2)",
            ],
            &["R", "z"],
        );
        // One more instruction per extra output, instead of five.
        assert_eq!(k.len(), 6);
        assert_eq!(count(&k, Op::Un(Un::Call(Func::Sqrt))), 1);
        assert_eq!(k.to_string().matches("sqrt(").count(), 1, "{k}");
        let mut out = [0.0; 3];
        k.eval(&[3.0, 4.0], &mut out, &mut k.workspace());
        assert!((out[0] - 5.0).abs() < 1e-15 && (out[1] - 10.0).abs() < 1e-15);
        assert!((out[2] - 8.0).abs() < 1e-15);
    }

    #[test]
    fn registers_are_reused_after_their_last_read() {
        let terms: Vec<String> = (1..=50).map(|i| format!("sin({i}*x)")).collect();
        let k = kernel(&[&terms.join(" + ")], &["x"]);
        assert_eq!(
            k.len(),
            49 + 50 + 49,
            "mul (1*x is x), sin per term, add between"
        );
        assert!(k.registers() <= 3, "{} registers", k.registers());
        // The destination is never an operand of its own instruction.
        for i in &k.code {
            assert!(!i.args.contains(&i.dst), "{i:?}");
        }
    }

    #[test]
    fn integer_powers_expand_and_reciprocals_fuse() {
        let k = kernel(&["x^5", "y/x"], &["x", "y"]);
        // x^5 = x * (x^2)^2: three multiplications, no call.
        assert_eq!(count(&k, Op::Bin(Bin::Mul)), 3);
        assert_eq!(count(&k, Op::Bin(Bin::MulRecip)), 1);
        assert_eq!(k.len(), 4);
        let mut out = [0.0; 2];
        k.eval(&[2.0, 3.0], &mut out, &mut k.workspace());
        assert!((out[0] - 32.0).abs() < 1e-15 && (out[1] - 1.5).abs() < 1e-15);
    }

    #[test]
    fn dependencies_are_read_after_folding() {
        let k = kernel(
            &["2*R", "z + k", "R if 1 < 2 else z", "k^3", "R*z"],
            &["R", "z"],
        );
        let deps: Vec<&[usize]> = (0..5).map(|i| k.depends_on(i)).collect();
        assert_eq!(deps, [&[0][..], &[1], &[0], &[], &[0, 1]]);
        assert!(k.uses(0, "R") && !k.uses(0, "z") && !k.uses(3, "R"));
        assert_eq!(k.vars(), ["R", "z"]);
    }

    #[test]
    fn blocks_of_any_length_match_the_scalar_path() {
        // Outputs that are constants, variables, repeats of an earlier
        // output, and an output read by a later one.
        let srcs = [
            "x^-2 if x < 0.5 else sqrt(x)",
            "7",
            "x",
            "exp(-x)*k",
            "exp(-x)",
            "k*exp(-x)",
        ];
        let k = kernel(&srcs, &["x"]);
        assert_eq!(k.len(), 8, "{k}");
        let mut ws = Workspace::new();
        let l = Kernel::LANES;
        for n in [0, 1, l - 1, l, l + 1, 2 * l + 1, 1000] {
            let x: Vec<f64> = (0..n).map(|i| i as f64 / 97.0 - 1.0).collect();
            let mut outs = vec![vec![f64::NAN; n]; 6];
            let mut slices: Vec<&mut [f64]> = outs.iter_mut().map(|o| &mut o[..]).collect();
            k.run(&[&x], &mut slices, &mut ws);
            let mut p = [0.0; 6];
            for (i, &xi) in x.iter().enumerate() {
                k.eval(&[xi], &mut p, &mut ws);
                assert!((p[5] - 2.0 * (-xi).exp()).abs() < 1e-15 && (p[1] - 7.0).abs() < 1e-15);
                for j in 0..6 {
                    let (a, b) = (outs[j][i], p[j]);
                    assert!(a.to_bits() == b.to_bits() || a.is_nan() && b.is_nan());
                }
            }
        }
    }

    /// A variable that holds one value over a block is read once, and so
    /// is everything computed from it alone: the values are still those of
    /// the scalar path to the bit, also when a register that held such a
    /// value is reused for one that varies, and in the next block, where
    /// the variable varies.
    #[test]
    fn a_variable_uniform_over_a_block_gives_the_scalar_bits() {
        let srcs = [
            "exp(-(R/0.4)^4)*R^-1.5 + sqrt(R^2 + z^2 + 0.01)",
            "(1 - exp(-R))*exp(-z^2/(2*R^2)) if R > 0.5 else -R",
            "R*z",
            "k*R",
            "sin(R)*cos(z) + R^0.3",
        ];
        let k = kernel(&srcs, &["R", "z"]);
        let mut ws = Workspace::new();
        let l = Kernel::LANES;
        let n = 3 * l + 5;
        // R constant over the first block and part of the second, then
        // varying; z constant over the third block.
        let r: Vec<f64> = (0..n)
            .map(|i| {
                if i < l + 7 {
                    0.7
                } else {
                    0.3 + i as f64 / 200.0
                }
            })
            .collect();
        let z: Vec<f64> = (0..n)
            .map(|i| {
                if (2 * l..3 * l).contains(&i) {
                    -0.25
                } else {
                    (i as f64 / 37.0).sin()
                }
            })
            .collect();
        for (r, z) in [(&r, &z), (&z, &r)] {
            let mut outs = vec![vec![f64::NAN; n]; srcs.len()];
            let mut slices: Vec<&mut [f64]> = outs.iter_mut().map(|o| &mut o[..]).collect();
            k.run(&[r, z], &mut slices, &mut ws);
            let mut p = [0.0; 5];
            for i in 0..n {
                k.eval(&[r[i], z[i]], &mut p, &mut ws);
                for j in 0..srcs.len() {
                    let (a, b) = (outs[j][i], p[j]);
                    assert!(
                        a.to_bits() == b.to_bits() || a.is_nan() && b.is_nan(),
                        "output {j} at {i}: {a} against {b}"
                    );
                }
            }
        }
    }

    #[test]
    fn kernel_and_workspace_are_send_and_sync() {
        fn check<T: Send + Sync>() {}
        check::<Kernel>();
        check::<Workspace>();
    }
}
