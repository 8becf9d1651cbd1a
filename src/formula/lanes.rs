//! The instruction set of the block kernel ([`super::Kernel`]) and how each
//! instruction runs: on one value (the scalar path) and over the lanes of a
//! block (the block path), and where an instruction reads its operands in a
//! block. It owns the arithmetic of every instruction and nothing else:
//! which instructions a formula becomes, and in which registers, is
//! `dag.rs`'s business; looping over blocks is `kernel.rs`'s.
//!
//! Each instruction's meaning is written once, in `scalar`. The block path
//! calls `scalar` on a constant instruction inside a plain slice loop, so
//! after inlining every arm is one loop the compiler vectorises (where the
//! operation has a vector form: `+ - * /`, `sqrt`, `abs`, comparisons and
//! the select; `exp`, `powf` and the other library functions stay one call
//! per lane). Both paths therefore compute the same f64 operations in the
//! same order and agree to the bit.

use super::dag::{Inst, Op, Src};
use super::expr::{apply_f64, compare_f64, pow_f64};
use super::{CmpOp, Func};
use std::ops::Range;

/// Points per block. Registers hold this many values (1 KiB each), so the
/// register file of a law set stays in the level-1 cache; the choice was
/// measured with `benches/evaluator.rs` (see the module comment of `kernel.rs`).
pub(crate) const LANES: usize = 128;

/// An f64 compared and hashed by its bits, for constants inside hash keys
/// (so `0.0` and `-0.0` are different constants, as they must be).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub(crate) struct Bits(u64);

impl Bits {
    pub(crate) const ZERO: Bits = Bits(0);
    pub(crate) fn of(v: f64) -> Bits {
        Bits(v.to_bits())
    }
    pub(crate) fn get(self) -> f64 {
        f64::from_bits(self.0)
    }
}

/// One-operand instructions.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(crate) enum Un {
    /// `-x`.
    Neg,
    /// `1/x` (what `x^-1` is after the integer-power expansion).
    Recip,
    /// `x.powf(c)` for a constant exponent that is not a small integer.
    PowF(Bits),
    /// A one-argument function of the language.
    Call(Func),
}

/// Two-operand instructions.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(crate) enum Bin {
    Add,
    Sub,
    Mul,
    /// `x * (1/y)`: a product with a reciprocal, fused into one pass; the
    /// same two roundings as `Recip` then `Mul`.
    MulRecip,
    /// `x ^ y` with a run-time exponent (powi for small integers, else powf).
    Pow,
    /// A two-argument function (`atan2`, `min`, `max`).
    Call(Func),
    /// A comparison giving 1.0 or 0.0.
    Cmp(CmpOp),
    /// Both operands non-zero, as 1.0 or 0.0.
    And,
    /// Either operand non-zero, as 1.0 or 0.0.
    Or,
}

fn truth(b: bool) -> f64 {
    if b {
        1.0
    } else {
        0.0
    }
}

impl Un {
    /// The instruction on one value: the definition of its meaning.
    #[inline(always)]
    pub(crate) fn scalar(self, x: f64) -> f64 {
        match self {
            Un::Neg => -x,
            Un::Recip => 1.0 / x,
            Un::PowF(c) => x.powf(c.get()),
            Un::Call(f) => apply_f64(f, x, 0.0),
        }
    }

    /// The instruction over a block: `d[i] = scalar(a[i])`.
    pub(crate) fn block(self, d: &mut [f64], a: Arg) {
        match self {
            Un::Neg => map1(d, a, |x| Un::Neg.scalar(x)),
            Un::Recip => map1(d, a, |x| Un::Recip.scalar(x)),
            Un::PowF(c) => map1(d, a, |x| Un::PowF(c).scalar(x)),
            Un::Call(f) => {
                // One specialised loop per function; anything not listed
                // (a function added later) takes the generic loop, which is
                // slower but computes the same values.
                macro_rules! calls {
                    ($($g:ident)*) => {
                        match f {
                            $(Func::$g => map1(d, a, |x| Un::Call(Func::$g).scalar(x)),)*
                            _ => map1(d, a, |x| Un::Call(f).scalar(x)),
                        }
                    };
                }
                calls!(Sqrt Exp Log Log10 Sin Cos Tan Asin Acos Atan Sinh Cosh Tanh Abs)
            }
        }
    }
}

impl Bin {
    /// The instruction on one pair of values: the definition of its meaning.
    #[inline(always)]
    pub(crate) fn scalar(self, x: f64, y: f64) -> f64 {
        match self {
            Bin::Add => x + y,
            Bin::Sub => x - y,
            Bin::Mul => x * y,
            Bin::MulRecip => x * (1.0 / y),
            Bin::Pow => pow_f64(x, y),
            Bin::Call(f) => apply_f64(f, x, y),
            Bin::Cmp(op) => truth(compare_f64(op, x, y)),
            Bin::And => truth(x != 0.0 && y != 0.0),
            Bin::Or => truth(x != 0.0 || y != 0.0),
        }
    }

    /// True if the operands can be swapped without changing any value
    /// (IEEE addition and multiplication are commutative; `min` and `max`
    /// are not for signed zeros, so they are not listed).
    pub(crate) fn commutes(self) -> bool {
        matches!(self, Bin::Add | Bin::Mul | Bin::And | Bin::Or)
    }

    /// The instruction over a block: `d[i] = scalar(a[i], b[i])`.
    pub(crate) fn block(self, d: &mut [f64], a: Arg, b: Arg) {
        macro_rules! each {
            ($($op:expr),*) => {
                match self {
                    $(op if op == $op => map2(d, a, b, |x, y| $op.scalar(x, y)),)*
                    op => map2(d, a, b, |x, y| op.scalar(x, y)),
                }
            };
        }
        each!(
            Bin::Add,
            Bin::Sub,
            Bin::Mul,
            Bin::MulRecip,
            Bin::Pow,
            Bin::Call(Func::Atan2),
            Bin::Call(Func::Min),
            Bin::Call(Func::Max),
            Bin::Cmp(CmpOp::Lt),
            Bin::Cmp(CmpOp::Le),
            Bin::Cmp(CmpOp::Gt),
            Bin::Cmp(CmpOp::Ge),
            Bin::Cmp(CmpOp::Eq),
            Bin::Cmp(CmpOp::Ne),
            Bin::And,
            Bin::Or
        )
    }
}

/// `if c != 0 { x } else { y }`: both operands are computed, one is chosen.
#[inline(always)]
pub(crate) fn select_scalar<T>(c: f64, x: T, y: T) -> T {
    if c != 0.0 {
        x
    } else {
        y
    }
}

/// The select over a block.
pub(crate) fn select_block(d: &mut [f64], c: Arg, a: Arg, b: Arg) {
    let c = match c {
        Arg::Lanes(c) => c,
        Arg::Splat(k) => return map1(d, if k != 0.0 { a } else { b }, |x| x),
    };
    let f = select_scalar;
    match (a, b) {
        (Arg::Lanes(a), Arg::Lanes(b)) => loop3(d, c, a, b, f),
        (Arg::Lanes(a), Arg::Splat(y)) => loop2(d, c, a, |c, x| f(c, x, y)),
        (Arg::Splat(x), Arg::Lanes(b)) => loop2(d, c, b, |c, y| f(c, x, y)),
        (Arg::Splat(x), Arg::Splat(y)) => loop1(d, c, |c| f(c, x, y)),
    }
}

/// An operand over a block: one value per lane, or one value for all.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Arg<'a> {
    Lanes(&'a [f64]),
    Splat(f64),
}

// The loops below are separate functions (never inlined) so that the
// compiler sees the destination as `&mut` (not aliasing the operands) and
// vectorises them without run-time overlap checks.

#[inline(always)]
fn map1(d: &mut [f64], a: Arg, f: impl Fn(f64) -> f64) {
    match a {
        Arg::Lanes(a) => loop1(d, a, f),
        Arg::Splat(x) => d.fill(f(x)),
    }
}

#[inline(always)]
fn map2(d: &mut [f64], a: Arg, b: Arg, f: impl Fn(f64, f64) -> f64) {
    match (a, b) {
        (Arg::Lanes(a), Arg::Lanes(b)) => loop2(d, a, b, f),
        (Arg::Lanes(a), Arg::Splat(y)) => loop1(d, a, |x| f(x, y)),
        (Arg::Splat(x), Arg::Lanes(b)) => loop1(d, b, |y| f(x, y)),
        (Arg::Splat(x), Arg::Splat(y)) => d.fill(f(x, y)),
    }
}

#[inline(never)]
fn loop1(d: &mut [f64], a: &[f64], f: impl Fn(f64) -> f64) {
    let a = &a[..d.len()];
    for (o, &x) in d.iter_mut().zip(a) {
        *o = f(x);
    }
}

#[inline(never)]
fn loop2(d: &mut [f64], a: &[f64], b: &[f64], f: impl Fn(f64, f64) -> f64) {
    let (a, b) = (&a[..d.len()], &b[..d.len()]);
    for ((o, &x), &y) in d.iter_mut().zip(a).zip(b) {
        *o = f(x, y);
    }
}

#[inline(never)]
fn loop3(d: &mut [f64], c: &[f64], a: &[f64], b: &[f64], f: impl Fn(f64, f64, f64) -> f64) {
    let (c, a, b) = (&c[..d.len()], &a[..d.len()], &b[..d.len()]);
    for (((o, &c), &x), &y) in d.iter_mut().zip(c).zip(a).zip(b) {
        *o = f(c, x, y);
    }
}

/// Where the block path reads: the registers, the caller's inputs and
/// outputs, the lanes `at` of the current block, and which variables,
/// registers and outputs hold one value in every lane of it (`uniform`:
/// variables, then registers from `nv`, then outputs from `nv + nr`).
pub(crate) struct Lanes<'a> {
    regs: &'a [Vec<f64>],
    inputs: &'a [&'a [f64]],
    outputs: &'a [&'a mut [f64]],
    at: Range<usize>,
    uniform: &'a [Option<f64>],
    nv: usize,
    nr: usize,
}

impl<'a> Lanes<'a> {
    fn uniform(&self, s: Src) -> Option<f64> {
        let k = match s {
            Src::Var(v) => v as usize,
            Src::Reg(r) => self.nv + r as usize,
            Src::Out(k) => self.nv + self.nr + k as usize,
            Src::Const(c) => return Some(c),
        };
        self.uniform.get(k).copied().flatten()
    }

    pub(crate) fn get(&self, s: Src) -> Arg<'a> {
        if let Some(c) = self.uniform(s) {
            return Arg::Splat(c);
        }
        match s {
            Src::Reg(r) => Arg::Lanes(&self.regs[r as usize][..self.at.len()]),
            Src::Var(v) => Arg::Lanes(&self.inputs[v as usize][self.at.clone()]),
            Src::Out(k) => Arg::Lanes(&self.outputs[k as usize][self.at.clone()]),
            Src::Const(c) => Arg::Splat(c),
        }
    }

    /// The value of an instruction whose operands all hold one value in
    /// every lane, from its scalar definition; None if one varies.
    pub(crate) fn splat(&self, inst: &Inst) -> Option<f64> {
        let arity = inst.op.arity();
        let mut a = [0.0; 3];
        for (k, s) in inst.args[..arity].iter().enumerate() {
            a[k] = self.uniform(*s)?;
        }
        Some(match inst.op {
            Op::Un(u) => u.scalar(a[0]),
            Op::Bin(b) => b.scalar(a[0], a[1]),
            Op::Select => select_scalar(a[0], a[1], a[2]),
        })
    }

    /// Run one instruction into `d` (the destination's lanes).
    pub(crate) fn exec(&self, inst: &Inst, d: &mut [f64]) {
        let arg = |k: usize| self.get(inst.args[k]);
        match inst.op {
            Op::Un(u) => u.block(d, arg(0)),
            Op::Bin(b) => b.block(d, arg(0), arg(1)),
            Op::Select => select_block(d, arg(0), arg(1), arg(2)),
        }
    }
}

pub(crate) fn lanes<'a>(
    regs: &'a [Vec<f64>],
    inputs: &'a [&'a [f64]],
    outputs: &'a [&'a mut [f64]],
    at: &Range<usize>,
    uniform: &'a [Option<f64>],
    nv: usize,
    nr: usize,
) -> Lanes<'a> {
    Lanes {
        regs,
        inputs,
        outputs,
        at: at.clone(),
        uniform,
        nv,
        nr,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every binary instruction's block loop agrees with its scalar
    /// definition, for every mix of lane and splat operands.
    #[test]
    fn block_loops_match_scalar_definitions() {
        let xs = [-2.0, -0.0, 0.0, 0.5, 3.0, f64::NAN, f64::INFINITY];
        let ys = [1.5, 0.0, -0.0, 2.0, -3.0, 1.0, f64::NAN];
        let funcs = [Func::Atan2, Func::Min, Func::Max].map(Bin::Call);
        let cmps = [CmpOp::Le, CmpOp::Ne].map(Bin::Cmp);
        let ops = [
            Bin::Add,
            Bin::Sub,
            Bin::Mul,
            Bin::MulRecip,
            Bin::Pow,
            Bin::And,
            Bin::Or,
        ]
        .into_iter()
        .chain(funcs)
        .chain(cmps);
        let same = |a: f64, b: f64| a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan());
        for op in ops {
            let mut d = [0.0; 7];
            op.block(&mut d, Arg::Lanes(&xs), Arg::Lanes(&ys));
            for i in 0..7 {
                assert!(same(d[i], op.scalar(xs[i], ys[i])), "{op:?} at {i}");
            }
            op.block(&mut d, Arg::Splat(2.0), Arg::Lanes(&ys));
            assert!(same(d[3], op.scalar(2.0, ys[3])), "{op:?} splat");
        }
        let mut d = [0.0; 7];
        Un::Call(Func::Sqrt).block(&mut d, Arg::Lanes(&xs));
        assert!(same(d[4], 3.0f64.sqrt()) && d[0].is_nan());
        let c = [1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0];
        select_block(&mut d, Arg::Lanes(&c), Arg::Lanes(&xs), Arg::Splat(9.0));
        assert!(same(d[0], -2.0) && same(d[1], 9.0) && d[5].to_bits() == 9.0f64.to_bits());
    }
}
