//! Simplification to a canonical form. Every rewrite here keeps the value
//! wherever the original is finite (no `sqrt(x^2) -> x`, no splitting a
//! non-integer power of a product with unknown signs). The smart
//! constructors `add`, `mul`, `pow`, `call` and `iff` assume simplified
//! arguments and are shared with differentiation.
//!
//! Canonical form: sums and products are flat, with at least two members,
//! sorted by [`cmp_expr`]; a product carries its numeric coefficient first,
//! a sum its numeric constant last; like terms and like bases are collected.

use super::expr::{apply_f64, cmp_expr, compare_f64};
use super::{Cond, Expr, Func};
use std::cmp::Ordering;

/// Simplify a whole tree.
pub(crate) fn simplify(e: &Expr) -> Expr {
    match e {
        Expr::Num(_) | Expr::Name(_) => e.clone(),
        Expr::Add(v) => add(v.iter().map(simplify).collect()),
        Expr::Mul(v) => mul(v.iter().map(simplify).collect()),
        Expr::Pow(a, b) => pow(simplify(a), simplify(b)),
        Expr::Call(f, v) => call(*f, v.iter().map(simplify).collect()),
        Expr::If(c, a, b) => iff(simplify_cond(c), simplify(a), simplify(b)),
    }
}

#[allow(clippy::float_cmp)] // exact tests for literal neutral/absorbing numbers
fn is(e: &Expr, v: f64) -> bool {
    matches!(e, Expr::Num(x) if *x == v)
}

fn is_integer(v: f64) -> bool {
    v.is_finite() && v.fract() == 0.0
}

/// Split a term into numeric coefficient and the rest (`3*x*y` → 3, `x*y`).
fn split_coeff(e: Expr) -> (f64, Expr) {
    match e {
        Expr::Mul(mut v) if matches!(v.first(), Some(Expr::Num(_))) => {
            let c = match v.remove(0) {
                Expr::Num(c) => c,
                _ => unreachable!(),
            };
            let rest = if v.len() == 1 {
                v.pop().unwrap()
            } else {
                Expr::Mul(v)
            };
            (c, rest)
        }
        other => (1.0, other),
    }
}

/// `c * e` for a simplified `e`, keeping the coefficient in front.
pub(crate) fn scale(c: f64, e: Expr) -> Expr {
    mul(vec![Expr::Num(c), e])
}

/// A simplified sum of simplified terms.
pub(crate) fn add(terms: Vec<Expr>) -> Expr {
    let mut flat = Vec::with_capacity(terms.len());
    let mut constant = 0.0;
    let mut stack = terms;
    stack.reverse();
    while let Some(t) = stack.pop() {
        match t {
            Expr::Add(inner) => stack.extend(inner.into_iter().rev()),
            Expr::Num(v) => constant += v,
            other => flat.push(split_coeff(other)),
        }
    }
    flat.sort_by(|a, b| cmp_expr(&a.1, &b.1));
    let mut out: Vec<Expr> = Vec::with_capacity(flat.len() + 1);
    let mut i = 0;
    while i < flat.len() {
        let mut c = flat[i].0;
        let mut j = i + 1;
        while j < flat.len() && cmp_expr(&flat[i].1, &flat[j].1) == Ordering::Equal {
            c += flat[j].0;
            j += 1;
        }
        if !is(&Expr::Num(c), 0.0) {
            let rest = flat[i].1.clone();
            out.push(if is(&Expr::Num(c), 1.0) {
                rest
            } else {
                scale(c, rest)
            });
        }
        i = j;
    }
    if !is(&Expr::Num(constant), 0.0) || out.is_empty() {
        out.push(Expr::Num(constant));
    }
    if out.len() == 1 {
        out.pop().unwrap()
    } else {
        Expr::Add(out)
    }
}

/// A simplified product of simplified factors.
pub(crate) fn mul(factors: Vec<Expr>) -> Expr {
    let r = mul_depth(factors, 0);
    // A power of a product kept whole (see `pow`) may cancel against the
    // other factors once spread: x*(x*y)^(-1) -> 1/y. Keep what is shorter.
    let spreadable = |f: &Expr| {
        matches!(f, Expr::Pow(b, n) if matches!(**b, Expr::Mul(_))
            && n.as_number().is_some_and(is_integer))
    };
    let Expr::Mul(fs) = &r else { return r };
    if !fs.iter().any(spreadable) {
        return r;
    }
    let spread: Vec<Expr> = fs
        .iter()
        .map(|f| match f {
            Expr::Pow(b, n) if spreadable(f) => match &**b {
                Expr::Mul(inner) => mul_depth(
                    inner
                        .iter()
                        .map(|g| pow(g.clone(), (**n).clone()))
                        .collect(),
                    0,
                ),
                _ => f.clone(),
            },
            _ => f.clone(),
        })
        .collect();
    let alt = mul_depth(spread, 0);
    if size(&alt) < size(&r) {
        alt
    } else {
        r
    }
}

fn mul_depth(factors: Vec<Expr>, depth: usize) -> Expr {
    let mut coeff = 1.0;
    let mut flat: Vec<(Expr, Expr)> = Vec::with_capacity(factors.len());
    let mut stack = factors;
    while let Some(f) = stack.pop() {
        match f {
            Expr::Mul(inner) => stack.extend(inner),
            Expr::Num(v) => coeff *= v,
            Expr::Pow(b, e) => flat.push((*b, *e)),
            other => flat.push((other, Expr::Num(1.0))),
        }
    }
    if is(&Expr::Num(coeff), 0.0) {
        return Expr::Num(0.0);
    }
    // exp(a) * exp(b) = exp(a + b).
    let is_exp = |p: &(Expr, Expr)| matches!(p.0, Expr::Call(Func::Exp, _)) && is(&p.1, 1.0);
    if flat.iter().filter(|p| is_exp(p)).count() >= 2 {
        let (exps, mut rest): (Vec<_>, Vec<_>) = flat.into_iter().partition(is_exp);
        let args = exps.into_iter().filter_map(|(b, _)| match b {
            Expr::Call(_, mut a) => a.pop(),
            _ => None,
        });
        match call(Func::Exp, vec![add(args.collect())]) {
            Expr::Num(v) => coeff *= v,
            other => rest.push((other, Expr::Num(1.0))),
        }
        flat = rest;
    }
    flat.sort_by(|a, b| cmp_expr(&a.0, &b.0).then_with(|| cmp_expr(&a.1, &b.1)));
    let mut out: Vec<Expr> = Vec::with_capacity(flat.len());
    let mut again = false;
    let mut i = 0;
    while i < flat.len() {
        let mut j = i + 1;
        while j < flat.len() && cmp_expr(&flat[i].0, &flat[j].0) == Ordering::Equal {
            j += 1;
        }
        let base = flat[i].0.clone();
        let exp = if j == i + 1 {
            flat[i].1.clone()
        } else {
            add(flat[i..j].iter().map(|p| p.1.clone()).collect())
        };
        let f = if j == i + 1 && !is(&exp, 1.0) {
            // A lone factor is already simplified; only rebuild when merged.
            Expr::Pow(Box::new(base), Box::new(exp))
        } else {
            pow(base, exp)
        };
        match f {
            Expr::Num(v) => coeff *= v,
            Expr::Mul(_) => {
                again = true;
                out.push(f);
            }
            other => out.push(other),
        }
        i = j;
    }
    if again && depth < 8 {
        out.push(Expr::Num(coeff));
        return mul_depth(out, depth + 1);
    }
    if is(&Expr::Num(coeff), 0.0) {
        return Expr::Num(0.0);
    }
    out.sort_by(cmp_expr);
    if !is(&Expr::Num(coeff), 1.0) || out.is_empty() {
        out.insert(0, Expr::Num(coeff));
    }
    if out.len() == 1 {
        out.pop().unwrap()
    } else {
        Expr::Mul(out)
    }
}

/// A simplified power of simplified operands.
pub(crate) fn pow(b: Expr, e: Expr) -> Expr {
    if is(&e, 0.0) || is(&b, 1.0) {
        return Expr::Num(1.0);
    }
    if is(&e, 1.0) {
        return b;
    }
    let en = e.as_number();
    match (b, en) {
        (Expr::Num(x), Some(y)) => {
            let v = super::expr::pow_f64(x, y);
            if v.is_finite() {
                Expr::Num(v)
            } else {
                Expr::Pow(Box::new(Expr::Num(x)), Box::new(e))
            }
        }
        // (x^a)^n = x^(a*n) for integer n; for numeric a, b also unless
        // a is an even integer (then x^a >= 0 even for negative x).
        (Expr::Pow(x, a), Some(n))
            if is_integer(n)
                || a.as_number()
                    .is_some_and(|a| !(is_integer(a) && a % 2.0 == 0.0)) =>
        {
            pow(*x, mul(vec![*a, Expr::Num(n)]))
        }
        // (a*b)^n = a^n * b^n for integer n; a positive numeric factor may
        // always be split off.
        (Expr::Mul(fs), Some(n)) if is_integer(n) => {
            let kept = Expr::Pow(Box::new(Expr::Mul(fs.clone())), Box::new(e));
            let spread = mul(fs.into_iter().map(|f| pow(f, Expr::Num(n))).collect());
            // Only when it shortens: (R/R0)^(-1) -> R0/R, but (R/R0)^2 stays.
            if size(&spread) < size(&kept) {
                spread
            } else {
                kept
            }
        }
        (Expr::Mul(mut fs), Some(n)) if matches!(fs[0], Expr::Num(c) if c > 0.0) => {
            let c = match fs.remove(0) {
                Expr::Num(c) => c,
                _ => unreachable!(),
            };
            let rest = if fs.len() == 1 {
                fs.pop().unwrap()
            } else {
                Expr::Mul(fs)
            };
            mul(vec![
                pow(Expr::Num(c), Expr::Num(n)),
                Expr::Pow(Box::new(rest), Box::new(e)),
            ])
        }
        // exp(u)^n = exp(n*u): exp is positive.
        (Expr::Call(Func::Exp, mut args), Some(n)) => {
            call(Func::Exp, vec![scale(n, args.pop().unwrap())])
        }
        (b, _) => Expr::Pow(Box::new(b), Box::new(e)),
    }
}

/// The number of nodes of a tree (conditions count their expressions).
pub(crate) fn size(e: &Expr) -> usize {
    fn cond_size(c: &Cond) -> usize {
        match c {
            Cond::Cmp(_, a, b) => 1 + size(a) + size(b),
            Cond::And(a, b) | Cond::Or(a, b) => 1 + cond_size(a) + cond_size(b),
            Cond::Not(a) => 1 + cond_size(a),
        }
    }
    match e {
        Expr::Num(_) | Expr::Name(_) => 1,
        Expr::Add(v) | Expr::Mul(v) | Expr::Call(_, v) => 1 + v.iter().map(size).sum::<usize>(),
        Expr::Pow(a, b) => 1 + size(a) + size(b),
        Expr::If(c, a, b) => 1 + cond_size(c) + size(a) + size(b),
    }
}

/// A simplified function call.
pub(crate) fn call(f: Func, args: Vec<Expr>) -> Expr {
    let nums: Vec<f64> = args.iter().filter_map(Expr::as_number).collect();
    if nums.len() == args.len() {
        let v = apply_f64(f, nums[0], nums.get(1).copied().unwrap_or(0.0));
        // Fold exact results only, so that `log(10)` stays readable.
        if v.is_finite() && (is_integer(v) || matches!(f, Func::Abs | Func::Min | Func::Max)) {
            return Expr::Num(v);
        }
    }
    match (f, args.as_slice()) {
        (Func::Abs, [Expr::Call(Func::Abs | Func::Exp | Func::Sqrt | Func::Cosh, _)]) => {
            args.into_iter().next().unwrap()
        }
        (Func::Min | Func::Max, [a, b]) if cmp_expr(a, b) == Ordering::Equal => {
            args.into_iter().next().unwrap()
        }
        _ => Expr::Call(f, args),
    }
}

/// A simplified conditional.
pub(crate) fn iff(c: Cond, a: Expr, b: Expr) -> Expr {
    match const_cond(&c) {
        Some(true) => a,
        Some(false) => b,
        None if cmp_expr(&a, &b) == Ordering::Equal => a,
        None => Expr::If(Box::new(c), Box::new(a), Box::new(b)),
    }
}

/// The truth value of a condition with only numbers in it.
fn const_cond(c: &Cond) -> Option<bool> {
    match c {
        Cond::Cmp(op, a, b) => Some(compare_f64(*op, a.as_number()?, b.as_number()?)),
        Cond::And(a, b) => Some(const_cond(a)? && const_cond(b)?),
        Cond::Or(a, b) => Some(const_cond(a)? || const_cond(b)?),
        Cond::Not(a) => Some(!const_cond(a)?),
    }
}

pub(crate) fn simplify_cond(c: &Cond) -> Cond {
    match c {
        Cond::Cmp(op, a, b) => Cond::Cmp(*op, simplify(a), simplify(b)),
        Cond::And(a, b) => {
            let (a, b) = (simplify_cond(a), simplify_cond(b));
            match (const_cond(&a), const_cond(&b)) {
                (Some(true), _) => b,
                (_, Some(true)) => a,
                (Some(false), _) => a,
                (_, Some(false)) => b,
                _ => Cond::And(Box::new(a), Box::new(b)),
            }
        }
        Cond::Or(a, b) => {
            let (a, b) = (simplify_cond(a), simplify_cond(b));
            match (const_cond(&a), const_cond(&b)) {
                (Some(false), _) => b,
                (_, Some(false)) => a,
                (Some(true), _) => a,
                (_, Some(true)) => b,
                _ => Cond::Or(Box::new(a), Box::new(b)),
            }
        }
        // not not c = c; `not (a < b)` is not rewritten as `a >= b`, which
        // differs where a comparison meets a NaN.
        Cond::Not(a) => match simplify_cond(a) {
            Cond::Not(inner) => *inner,
            a => Cond::Not(Box::new(a)),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::super::parse;

    fn s(src: &str) -> String {
        parse(src).unwrap().simplify().to_string()
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * (1.0 + a.abs().max(b.abs()))
    }

    #[test]
    fn neutral_and_absorbing_elements() {
        assert_eq!(s("x + 0"), "x");
        assert_eq!(s("x * 1"), "x");
        assert_eq!(s("x * 0"), "0");
        assert_eq!(s("x ^ 1"), "x");
        assert_eq!(s("x ^ 0"), "1");
        assert_eq!(s("x - x"), "0");
        assert_eq!(s("2*x/x"), "2");
        assert_eq!(s("2 + 3*4"), "14");
    }

    #[test]
    fn collecting_terms_and_powers() {
        assert_eq!(s("2*x + 3*x"), "5*x");
        assert_eq!(s("x*x^2"), "x^3");
        assert_eq!(s("x^0.5 * x^1.5"), "x^2");
        assert_eq!(s("(x^2)^3"), "x^6");
        assert_eq!(s("(2*x*y)^2"), "(2*x*y)^2");
        assert_eq!(s("(x/y)^(-1)"), "y/x");
        assert_eq!(s("x*(x*y)^(-1)"), "1/y");
        assert_eq!(s("y*x + x*y"), "2*x*y");
        assert_eq!(s("(a + (b + c)) - c"), "a + b");
        assert_eq!(s("exp(x)^2"), "exp(2*x)");
        assert_eq!(s("exp(x)^2 * exp(-x) * y"), "y*exp(x)");
        assert_eq!(s("exp(x) * exp(-x)"), "1");
    }

    #[test]
    fn domain_unsafe_rewrites_are_not_made() {
        // (x^2)^0.5 is |x|, not x; sqrt(x^2) and sqrt(x)^2 stay as they are.
        let e = parse("(x^2)^0.5").unwrap().simplify();
        let v = e.eval(&|_| Some(-3.0)).unwrap();
        assert!(close(v, 3.0));
        assert_eq!(s("sqrt(x^2)"), "sqrt(x^2)");
        assert_eq!(s("sqrt(x)^2"), "sqrt(x)^2");
        // (x*y)^0.5 with both negative is defined; splitting it would not be.
        let e = parse("(x*y)^0.5").unwrap().simplify();
        assert!(close(e.eval(&|_| Some(-2.0)).unwrap(), 2.0));
    }

    #[test]
    fn equal_expressions_compare_equal() {
        let a = parse("b*a + 3 - c^2").unwrap().simplify();
        let b = parse("-c*c + 1 + a*b + 2").unwrap().simplify();
        assert_eq!(a, b);
    }

    #[test]
    fn conditions_fold() {
        assert_eq!(s("x if 1 < 2 else y"), "x");
        assert_eq!(s("x if x < 2 or 3 > 2 else y"), "x");
        assert_eq!(s("y if x < 2 else y"), "y");
        assert_eq!(s("x if not 1 < 2 else y"), "y");
        assert_eq!(s("x if not not x < 2 else y"), "x if x < 2 else y");
        // `not a < b` is not `a >= b`: they differ where a is NaN.
        assert_eq!(s("x if not x < 2 else y"), "x if not x < 2 else y");
        assert_eq!(s("min(x, x) + abs(exp(x))"), "x + exp(x)");
        assert_eq!(s("sqrt(4) + log(10) - log(10)"), "2");
    }
}
