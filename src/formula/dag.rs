//! The compiler of the block kernel: formulas to one shared graph of
//! values, then to a flat instruction list over numbered registers. It owns
//! constant folding, common subexpressions, the integer-power expansion, the
//! fusions and the register allocation; what an instruction computes is
//! `lanes.rs`'s, and running the list is `kernel.rs`'s.
//!
//! Folding follows the stack compiler (`compile.rs`) step for step, so the
//! same f64 operations happen in the same order and the results agree to
//! the bit: sums and products are left folds in the tree's order, a leading
//! run of constant terms folds to one constant, `s + (-1)*r` is `s - r`,
//! `(-1)*x` is `-x`, and every variable-free subtree is one constant.

use super::expr::{minus_one, pow_f64, quarter_power, resolve_name, Resolved};
use super::lanes::{select_scalar, Bin, Bits, Un};
use super::{Cond, Expr, FormulaError, Func};
use std::collections::HashMap;

/// A value of the graph: a run-time variable, a constant, or a node.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub(crate) enum Val {
    Const(Bits),
    Var(u32),
    Node(u32),
}

impl Val {
    pub(crate) const ZERO: Val = Val::Const(Bits::ZERO);
    fn num(v: f64) -> Val {
        Val::Const(Bits::of(v))
    }
    fn is(self, v: f64) -> bool {
        self == Val::num(v)
    }
}

/// What a node computes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(crate) enum Op {
    Un(Un),
    Bin(Bin),
    /// `args[0] != 0 ? args[1] : args[2]`.
    Select,
}

impl Op {
    /// How many operands it reads.
    pub(crate) fn arity(self) -> usize {
        match self {
            Op::Un(_) => 1,
            Op::Bin(_) => 2,
            Op::Select => 3,
        }
    }
}

/// A node: an operation on up to three values (unused ones are zero).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(crate) struct Node {
    pub(crate) op: Op,
    pub(crate) args: [Val; 3],
}

/// Builds the graph of a list of formulas, sharing equal subtrees.
pub(crate) struct Graph<'a> {
    pub(crate) nodes: Vec<Node>,
    index: HashMap<Node, u32>,
    vars: &'a [&'a str],
    constants: &'a dyn Fn(&str) -> Option<f64>,
}

impl<'a> Graph<'a> {
    pub(crate) fn new(vars: &'a [&'a str], constants: &'a dyn Fn(&str) -> Option<f64>) -> Self {
        Graph {
            nodes: Vec::new(),
            index: HashMap::new(),
            vars,
            constants,
        }
    }

    /// The value of a formula (folded, shared with every value built so far).
    pub(crate) fn expr(&mut self, e: &Expr) -> Result<Val, FormulaError> {
        Ok(match e {
            Expr::Num(v) => Val::num(*v),
            Expr::Name(n) => match resolve_name(n, self.vars, self.constants)? {
                Resolved::Var(i) => Val::Var(i as u32),
                Resolved::Const(v) => Val::num(v),
            },
            Expr::Add(ts) => self.chain(ts, 0.0, Bin::Add)?,
            Expr::Mul(fs) if fs.len() == 2 && minus_one(&fs[0]) => {
                let x = self.expr(&fs[1])?;
                self.un(Un::Neg, x)
            }
            Expr::Mul(fs) => self.chain(fs, 1.0, Bin::Mul)?,
            Expr::Pow(b, x) => {
                let (b, x) = (self.expr(b)?, self.expr(x)?);
                self.pow(b, x)
            }
            Expr::Call(f, args) => match args.as_slice() {
                [a] => {
                    let a = self.expr(a)?;
                    self.un(Un::Call(*f), a)
                }
                [a, b] => {
                    let (a, b) = (self.expr(a)?, self.expr(b)?);
                    self.bin(Bin::Call(*f), a, b)
                }
                _ => {
                    return Err(FormulaError::Arity {
                        name: super::func_name(*f).to_string(),
                        span: 0..0,
                        expected: super::expr::arity(*f),
                        found: args.len(),
                    })
                }
            },
            Expr::If(c, a, b) => {
                let c = self.cond(c)?;
                let (a, b) = (self.expr(a)?, self.expr(b)?);
                self.select(c, a, b)
            }
        })
    }

    /// A left fold over sum terms or product factors, in the tree's order.
    fn chain(&mut self, items: &[Expr], empty: f64, op: Bin) -> Result<Val, FormulaError> {
        let mut acc: Option<Val> = None;
        for t in items {
            acc = Some(match (acc, t) {
                (Some(s), Expr::Mul(fs))
                    if op == Bin::Add && fs.len() == 2 && minus_one(&fs[0]) =>
                {
                    let r = self.expr(&fs[1])?;
                    self.bin(Bin::Sub, s, r)
                }
                (Some(s), _) => {
                    let v = self.expr(t)?;
                    self.bin(op, s, v)
                }
                (None, _) => self.expr(t)?,
            });
        }
        Ok(acc.unwrap_or(Val::num(empty)))
    }

    /// A condition as a value that is 1.0 (true) or 0.0 (false).
    fn cond(&mut self, c: &Cond) -> Result<Val, FormulaError> {
        Ok(match c {
            Cond::Cmp(op, a, b) => {
                let (a, b) = (self.expr(a)?, self.expr(b)?);
                self.bin(Bin::Cmp(*op), a, b)
            }
            Cond::And(a, b) => {
                let (a, b) = (self.cond(a)?, self.cond(b)?);
                self.bin(Bin::And, a, b)
            }
            Cond::Or(a, b) => {
                let (a, b) = (self.cond(a)?, self.cond(b)?);
                self.bin(Bin::Or, a, b)
            }
            // A negation is true where its condition's value is 0.
            Cond::Not(c) => {
                let v = self.cond(c)?;
                self.bin(Bin::Cmp(super::CmpOp::Eq), v, Val::ZERO)
            }
        })
    }

    /// `b ^ x` exactly as `pow_f64`: an integer exponent |n| ≤ 64 is
    /// expanded into the multiplications of `powi`'s binary powering
    /// (square-and-multiply from the low bit, then one reciprocal for n < 0),
    /// so that `x^2`, `x^3`, `x^-1` are plain lane loops and their squares
    /// are shared; any other constant exponent is one `powf` instruction.
    fn pow(&mut self, b: Val, x: Val) -> Val {
        let Val::Const(c) = x else {
            return self.bin(Bin::Pow, b, x);
        };
        let c = c.get();
        if let Val::Const(k) = b {
            return Val::num(pow_f64(k.get(), c));
        }
        if let Some((k, roots)) = quarter_power(c) {
            // Exactly as `pow_f64`: roots of b + 0, then an integer power.
            let mut r = self.bin(Bin::Add, b, Val::num(0.0));
            for _ in 0..roots {
                r = self.un(Un::Call(Func::Sqrt), r);
            }
            return self.pow(r, Val::num(f64::from(k)));
        }
        if !(c.fract() == 0.0 && c.abs() <= 64.0) {
            return self.un(Un::PowF(Bits::of(c)), b);
        }
        let n = c as i32;
        let (mut base, mut acc, mut k) = (b, None, n.unsigned_abs());
        loop {
            if k & 1 != 0 {
                acc = Some(match acc {
                    None => base,
                    Some(r) => self.bin(Bin::Mul, r, base),
                });
            }
            k >>= 1;
            if k == 0 {
                break;
            }
            base = self.bin(Bin::Mul, base, base);
        }
        let r = acc.unwrap_or(Val::num(1.0));
        if n < 0 {
            self.un(Un::Recip, r)
        } else {
            r
        }
    }

    fn un(&mut self, op: Un, a: Val) -> Val {
        match (op, a) {
            (_, Val::Const(k)) => Val::num(op.scalar(k.get())),
            (Un::Neg, Val::Node(i)) if self.nodes[i as usize].op == Op::Un(Un::Neg) => {
                self.nodes[i as usize].args[0]
            }
            _ => self.intern(Op::Un(op), [a, Val::ZERO, Val::ZERO]),
        }
    }

    fn bin(&mut self, op: Bin, a: Val, b: Val) -> Val {
        if let (Val::Const(x), Val::Const(y)) = (a, b) {
            return Val::num(op.scalar(x.get(), y.get()));
        }
        // Exact identities only: 1*x is x and (-1)*x is -x for every x (a
        // NaN stays a NaN); a known condition decides `and` and `or`.
        match op {
            Bin::Mul if a.is(1.0) => return b,
            Bin::Mul if b.is(1.0) => return a,
            Bin::Mul if a.is(-1.0) => return self.un(Un::Neg, b),
            Bin::Mul if b.is(-1.0) => return self.un(Un::Neg, a),
            Bin::And | Bin::Or => {
                if let Some((k, c)) = known(a, b) {
                    return match (op == Bin::And, k) {
                        (true, true) | (false, false) => c,
                        (true, false) => Val::ZERO,
                        (false, true) => Val::num(1.0),
                    };
                }
            }
            _ => {}
        }
        let (a, b) = if op.commutes() && b < a {
            (b, a)
        } else {
            (a, b)
        };
        self.intern(Op::Bin(op), [a, b, Val::ZERO])
    }

    fn select(&mut self, c: Val, a: Val, b: Val) -> Val {
        match c {
            Val::Const(k) => select_scalar(k.get(), a, b),
            _ if a == b => a,
            _ => self.intern(Op::Select, [c, a, b]),
        }
    }

    fn intern(&mut self, op: Op, args: [Val; 3]) -> Val {
        let node = Node { op, args };
        if let Some(&i) = self.index.get(&node) {
            return Val::Node(i);
        }
        let i = self.nodes.len() as u32;
        self.nodes.push(node);
        self.index.insert(node, i);
        Val::Node(i)
    }
}

/// For `and`/`or` with one constant operand: its truth and the other operand.
fn known(a: Val, b: Val) -> Option<(bool, Val)> {
    match (a, b) {
        (Val::Const(k), c) | (c, Val::Const(k)) => Some((k.get() != 0.0, c)),
        _ => None,
    }
}

/// Where an instruction reads an operand.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Src {
    /// A register (a block-sized buffer on the block path).
    Reg(u32),
    /// A run-time variable, read straight from its input slice.
    Var(u32),
    /// A constant, broadcast to every lane.
    Const(f64),
    /// An output, computed into the caller's output slice.
    Out(u32),
}

/// One instruction: `dst = op(args)`; `dst` (a register or an output) is
/// never one of its operands.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Inst {
    pub(crate) op: Op,
    pub(crate) args: [Src; 3],
    pub(crate) dst: Src,
}

/// The instruction list of a graph with its outputs.
pub(crate) struct Lowered {
    pub(crate) code: Vec<Inst>,
    pub(crate) n_regs: usize,
    pub(crate) outputs: Vec<Src>,
    /// For each output, the variables it depends on (ascending).
    pub(crate) deps: Vec<Vec<usize>>,
}

impl Graph<'_> {
    /// Lower the nodes the outputs need to instructions: fuse a product
    /// with a reciprocal used nowhere else (`x * (1/y)` in one pass), then
    /// write each output's node into its output and give every other
    /// instruction a register, taking a freed one when there is one (a
    /// register is freed after the last instruction that reads it).
    pub(crate) fn lower(mut self, outputs: &[Val]) -> Lowered {
        let uses = self.uses(outputs);
        for i in 0..self.nodes.len() {
            let Node { op, args } = self.nodes[i];
            if op != Op::Bin(Bin::Mul) {
                continue;
            }
            let recip = |v: Val| match v {
                Val::Node(j) if uses[j as usize] == 1 => match self.nodes[j as usize] {
                    Node {
                        op: Op::Un(Un::Recip),
                        args: [y, ..],
                    } => Some(y),
                    _ => None,
                },
                _ => None,
            };
            let fused = match (recip(args[0]), recip(args[1])) {
                (_, Some(y)) => Some([args[0], y, Val::ZERO]),
                (Some(y), None) => Some([args[1], y, Val::ZERO]),
                _ => None,
            };
            if let Some(args) = fused {
                self.nodes[i] = Node {
                    op: Op::Bin(Bin::MulRecip),
                    args,
                };
            }
        }
        let uses = self.uses(outputs);
        let order: Vec<usize> = (0..self.nodes.len()).filter(|&i| uses[i] > 0).collect();
        // An output's node writes the caller's output slice directly (the
        // first output of a node; a repeated one, a constant or a bare
        // variable is copied after the block).
        let mut loc: Vec<Option<Src>> = vec![None; self.nodes.len()];
        for (k, v) in outputs.iter().enumerate() {
            if let Val::Node(j) = *v {
                loc[j as usize].get_or_insert(Src::Out(k as u32));
            }
        }
        let mut last = vec![0usize; self.nodes.len()];
        for (p, &i) in order.iter().enumerate() {
            for j in node_args(&self.nodes[i]) {
                last[j] = p;
            }
        }
        let (mut free, mut n_regs) = (Vec::new(), 0u32);
        let mut code = Vec::with_capacity(order.len());
        for (p, &i) in order.iter().enumerate() {
            let dst = *loc[i].get_or_insert_with(|| {
                Src::Reg(free.pop().unwrap_or_else(|| {
                    n_regs += 1;
                    n_regs - 1
                }))
            });
            let node = self.nodes[i];
            code.push(Inst {
                op: node.op,
                args: node.args.map(|v| to_src(v, &loc)),
                dst,
            });
            let mut done: Vec<usize> = Vec::with_capacity(3);
            for j in node_args(&node) {
                if let (true, Some(Src::Reg(r))) = (last[j] == p && !done.contains(&j), loc[j]) {
                    free.push(r);
                    done.push(j);
                }
            }
        }
        Lowered {
            code,
            n_regs: n_regs as usize,
            outputs: outputs.iter().map(|&v| to_src(v, &loc)).collect(),
            deps: outputs.iter().map(|&v| self.deps(v)).collect(),
        }
    }

    /// How many times each node is read by the nodes the outputs need
    /// (and by the outputs); 0 for a node nothing needs.
    fn uses(&self, outputs: &[Val]) -> Vec<usize> {
        let mut uses = vec![0usize; self.nodes.len()];
        for v in outputs {
            if let Val::Node(j) = v {
                uses[*j as usize] += 1;
            }
        }
        // Arguments come before their users, so one backward sweep suffices.
        for i in (0..self.nodes.len()).rev() {
            if uses[i] > 0 {
                for j in node_args(&self.nodes[i]) {
                    uses[j] += 1;
                }
            }
        }
        uses
    }

    /// The variables a value depends on, ascending.
    fn deps(&self, v: Val) -> Vec<usize> {
        let mut seen = vec![false; self.nodes.len()];
        let mut vars = vec![false; self.vars.len()];
        let mut stack = vec![v];
        while let Some(v) = stack.pop() {
            match v {
                Val::Var(i) => vars[i as usize] = true,
                Val::Node(j) if !seen[j as usize] => {
                    seen[j as usize] = true;
                    stack.extend(self.nodes[j as usize].args);
                }
                _ => {}
            }
        }
        (0..vars.len()).filter(|&i| vars[i]).collect()
    }
}

/// The node indices among a node's operands.
fn node_args(n: &Node) -> impl Iterator<Item = usize> + '_ {
    n.args.iter().filter_map(|v| match v {
        Val::Node(j) => Some(*j as usize),
        _ => None,
    })
}

fn to_src(v: Val, loc: &[Option<Src>]) -> Src {
    match v {
        Val::Const(k) => Src::Const(k.get()),
        Val::Var(i) => Src::Var(i),
        Val::Node(j) => loc[j as usize].expect("operands are placed before their readers"),
    }
}
