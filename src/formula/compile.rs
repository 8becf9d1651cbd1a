//! The stack machine: compilation of a tree to a flat stack program, and
//! the interpreter that runs it one point at a time. It was the evaluator
//! under [`super::Program`] before the block kernel (`kernel.rs`); it stays
//! as [`StackProgram`], the reference the kernel is tested against to the
//! bit (`tests/formula_props.rs`) and timed against
//! (`benches/evaluator.rs`). Names that are not run-time variables become
//! constants at compile time, and every subtree without variables is folded
//! to one constant. A conditional evaluates both branches and selects (no side
//! effects exist), so the program has no jumps. The interpreter keeps its
//! stack in a fixed array on the machine stack for ordinary depths, so a
//! call allocates nothing. The tests at the bottom test [`super::Program`].

use super::expr::{apply_f64, compare_f64, minus_one, pow_f64, resolve_name, Resolved};
use super::{CmpOp, Cond, Expr, FormulaError, Func};

/// One instruction.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Op {
    Const(f64),
    Var(usize),
    Add,
    Sub,
    Mul,
    Neg,
    Pow,
    Call1(Func),
    Call2(Func),
    Cmp(CmpOp),
    And,
    Or,
    Not,
    /// Pops else, then, condition; pushes the selected value.
    Select,
}

const INLINE_STACK: usize = 64;

/// A formula compiled for the stack machine: the reference evaluator (slow;
/// use [`super::Program`] or [`super::Kernel`]).
#[derive(Clone, Debug)]
pub struct StackProgram {
    code: Vec<Op>,
    depth: usize,
}

impl StackProgram {
    /// Compile `expr` with `vars` as the run-time inputs, in that order;
    /// every other name must be given by `constants`.
    pub fn compile(
        expr: &Expr,
        vars: &[&str],
        constants: &dyn Fn(&str) -> Option<f64>,
    ) -> Result<StackProgram, FormulaError> {
        let (code, depth) = compile(expr, vars, constants)?;
        Ok(StackProgram { code, depth })
    }
    /// Evaluate at one point (`args` in the order of `vars`).
    pub fn eval(&self, args: &[f64]) -> f64 {
        run(&self.code, self.depth, &|i| args[i])
    }
    /// The number of stack instructions.
    pub fn len(&self) -> usize {
        self.code.len()
    }
    /// True if there are no instructions (never, for a compiled formula).
    pub fn is_empty(&self) -> bool {
        self.code.is_empty()
    }
}

/// Compile; returns the code and the stack depth it needs.
fn compile(
    e: &Expr,
    vars: &[&str],
    constants: &dyn Fn(&str) -> Option<f64>,
) -> Result<(Vec<Op>, usize), FormulaError> {
    let mut c = Compiler {
        code: Vec::new(),
        vars,
        constants,
    };
    c.expr(e)?;
    let depth = max_depth(&c.code);
    Ok((c.code, depth))
}

struct Compiler<'a> {
    code: Vec<Op>,
    vars: &'a [&'a str],
    constants: &'a dyn Fn(&str) -> Option<f64>,
}

impl Compiler<'_> {
    /// Emit code for `e`, then fold it if it used no variable.
    fn expr(&mut self, e: &Expr) -> Result<(), FormulaError> {
        let start = self.code.len();
        self.emit(e)?;
        self.fold(start);
        Ok(())
    }

    fn fold(&mut self, start: usize) {
        let tail = &self.code[start..];
        if tail.len() > 1 && !tail.iter().any(|op| matches!(op, Op::Var(_))) {
            let v = run(tail, max_depth(tail), &|_| 0.0);
            self.code.truncate(start);
            self.code.push(Op::Const(v));
        }
    }

    fn emit(&mut self, e: &Expr) -> Result<(), FormulaError> {
        match e {
            Expr::Num(v) => self.code.push(Op::Const(*v)),
            Expr::Name(n) => self
                .code
                .push(match resolve_name(n, self.vars, self.constants)? {
                    Resolved::Var(i) => Op::Var(i),
                    Resolved::Const(v) => Op::Const(v),
                }),
            Expr::Add(ts) => self.chain(ts, 0.0, Op::Add)?,
            // -1*x is exactly -x.
            Expr::Mul(fs) if fs.len() == 2 && minus_one(&fs[0]) => {
                self.expr(&fs[1])?;
                self.code.push(Op::Neg);
            }
            Expr::Mul(fs) => self.chain(fs, 1.0, Op::Mul)?,
            Expr::Pow(b, x) => {
                self.expr(b)?;
                self.expr(x)?;
                self.code.push(Op::Pow);
            }
            Expr::Call(f, args) => {
                for a in args {
                    self.expr(a)?;
                }
                self.code.push(if args.len() == 2 {
                    Op::Call2(*f)
                } else {
                    Op::Call1(*f)
                });
            }
            Expr::If(c, a, b) => {
                self.cond(c)?;
                self.expr(a)?;
                self.expr(b)?;
                self.code.push(Op::Select);
            }
        }
        Ok(())
    }

    /// A left fold over sum terms or product factors, in the tree's order
    /// (the same order as the tree walker, so results agree bit for bit).
    fn chain(&mut self, items: &[Expr], empty: f64, op: Op) -> Result<(), FormulaError> {
        let start = self.code.len();
        if items.is_empty() {
            self.code.push(Op::Const(empty));
        }
        for (i, t) in items.iter().enumerate() {
            match t {
                // s + (-1*r) is exactly s - r.
                Expr::Mul(fs) if i > 0 && op == Op::Add && fs.len() == 2 && minus_one(&fs[0]) => {
                    self.expr(&fs[1])?;
                    self.code.push(Op::Sub);
                }
                _ => {
                    self.expr(t)?;
                    if i > 0 {
                        self.code.push(op);
                    }
                }
            }
            // Fold a leading run of constant terms (`2*k*x` → `c*x`).
            self.fold(start);
        }
        Ok(())
    }

    fn cond(&mut self, c: &Cond) -> Result<(), FormulaError> {
        match c {
            Cond::Cmp(op, a, b) => {
                self.expr(a)?;
                self.expr(b)?;
                self.code.push(Op::Cmp(*op));
            }
            Cond::And(a, b) | Cond::Or(a, b) => {
                self.cond(a)?;
                self.cond(b)?;
                self.code.push(if matches!(c, Cond::And(..)) {
                    Op::And
                } else {
                    Op::Or
                });
            }
            Cond::Not(a) => {
                self.cond(a)?;
                self.code.push(Op::Not);
            }
        }
        Ok(())
    }
}

fn max_depth(code: &[Op]) -> usize {
    let (mut d, mut m) = (0usize, 0usize);
    for op in code {
        match op {
            Op::Const(_) | Op::Var(_) => d += 1,
            Op::Neg | Op::Not | Op::Call1(_) => {}
            Op::Select => d -= 2,
            _ => d -= 1,
        }
        m = m.max(d);
    }
    m
}

/// Run a program; `var(i)` gives the i-th input.
fn run(code: &[Op], depth: usize, var: &dyn Fn(usize) -> f64) -> f64 {
    if depth <= INLINE_STACK {
        let mut stack = [0.0f64; INLINE_STACK];
        exec(code, &mut stack, var)
    } else {
        let mut stack = vec![0.0f64; depth];
        exec(code, &mut stack, var)
    }
}

fn exec(code: &[Op], st: &mut [f64], var: &dyn Fn(usize) -> f64) -> f64 {
    let mut sp = 0usize;
    let truth = |b: bool| if b { 1.0 } else { 0.0 };
    for op in code {
        match *op {
            Op::Const(v) => {
                st[sp] = v;
                sp += 1;
            }
            Op::Var(i) => {
                st[sp] = var(i);
                sp += 1;
            }
            Op::Neg => st[sp - 1] = -st[sp - 1],
            Op::Not => st[sp - 1] = truth(st[sp - 1] == 0.0),
            Op::Call1(f) => st[sp - 1] = apply_f64(f, st[sp - 1], 0.0),
            Op::Select => {
                let c = st[sp - 3] != 0.0;
                st[sp - 3] = if c { st[sp - 2] } else { st[sp - 1] };
                sp -= 2;
            }
            binary => {
                let (a, b) = (st[sp - 2], st[sp - 1]);
                st[sp - 2] = match binary {
                    Op::Add => a + b,
                    Op::Sub => a - b,
                    Op::Mul => a * b,
                    Op::Pow => pow_f64(a, b),
                    Op::Call2(f) => apply_f64(f, a, b),
                    Op::Cmp(c) => truth(compare_f64(c, a, b)),
                    Op::And => truth(a != 0.0 && b != 0.0),
                    Op::Or => truth(a != 0.0 || b != 0.0),
                    _ => unreachable!("unary and stack ops are handled above"),
                };
                sp -= 1;
            }
        }
    }
    st[0]
}

#[cfg(test)]
mod tests {
    use super::super::{parse, Program};

    fn prog(src: &str, vars: &[&str]) -> Program {
        Program::compile(&parse(src).unwrap(), vars, &|n| (n == "k").then_some(2.0)).unwrap()
    }

    #[test]
    fn constants_are_folded() {
        let p = prog("k*sqrt(k + 2) * x + pi", &["x"]);
        assert_eq!(p.len(), 5, "const, var, mul, const, add");
        let v = p.eval(&[3.0]);
        assert!((v - (12.0 + std::f64::consts::PI)).abs() < 1e-12);
    }

    #[test]
    fn conditionals_select() {
        let p = prog("-x if x < 0 or y > 5 else x*y", &["x", "y"]);
        assert!((p.eval(&[-2.0, 1.0]) - 2.0).abs() < 1e-15);
        assert!((p.eval(&[2.0, 3.0]) - 6.0).abs() < 1e-15);
        assert!((p.eval(&[2.0, 6.0]) + 2.0).abs() < 1e-15);
        let p = prog("1 if not 0 < x < k else 2", &["x"]);
        assert!((p.eval(&[1.0]) - 2.0).abs() < 1e-15);
        assert!((p.eval(&[3.0]) - 1.0).abs() < 1e-15);
        // not (NaN < 2) holds: a comparison with NaN is false.
        assert!((p.eval(&[f64::NAN]) - 1.0).abs() < 1e-15);
    }

    #[test]
    fn columns_and_errors() {
        let p = prog("x^2 + y", &["x", "y"]);
        let mut out = [0.0; 3];
        p.eval_columns(&[&[1.0, 2.0, 3.0], &[0.5, 0.5, 0.5]], &mut out);
        assert!((out[2] - 9.5).abs() < 1e-15);
        let e = Program::compile(&parse("x + q").unwrap(), &["x"], &|_| None).unwrap_err();
        assert!(matches!(e, super::FormulaError::UnknownName { ref name, .. } if name == "q"));
    }

    #[test]
    fn deep_formulas_use_a_heap_stack() {
        let mut src = "x".to_string();
        for _ in 0..100 {
            src = format!("x + ({src})");
        }
        let p = prog(&src, &["x"]);
        assert!((p.eval(&[1.0]) - 101.0).abs() < 1e-12);
    }

    #[test]
    fn program_is_send_and_sync() {
        fn check<T: Send + Sync>() {}
        check::<Program>();
    }
}
