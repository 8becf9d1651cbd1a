//! Tree helpers shared by the rest of the engine: the function table (names,
//! arities, f64 semantics), name collection, substitution, the canonical
//! ordering of trees, and the plain f64 tree-walk evaluator. It does not
//! simplify, parse or print.

use super::{CmpOp, Cond, Expr, FormulaError, Func};
use std::cmp::Ordering;
use std::collections::{BTreeMap, BTreeSet};

/// Every function of the language with its text name, in one list.
pub(crate) const FUNCS: [(Func, &str); 17] = [
    (Func::Sqrt, "sqrt"),
    (Func::Exp, "exp"),
    (Func::Log, "log"),
    (Func::Log10, "log10"),
    (Func::Sin, "sin"),
    (Func::Cos, "cos"),
    (Func::Tan, "tan"),
    (Func::Asin, "asin"),
    (Func::Acos, "acos"),
    (Func::Atan, "atan"),
    (Func::Atan2, "atan2"),
    (Func::Sinh, "sinh"),
    (Func::Cosh, "cosh"),
    (Func::Tanh, "tanh"),
    (Func::Abs, "abs"),
    (Func::Min, "min"),
    (Func::Max, "max"),
];

/// The text name of a function (`Func::Log10` → `"log10"`).
pub fn func_name(f: Func) -> &'static str {
    FUNCS
        .iter()
        .find(|(g, _)| *g == f)
        .map(|(_, n)| *n)
        .unwrap_or("?")
}

/// The function with this text name, if any.
pub fn func_by_name(name: &str) -> Option<Func> {
    FUNCS.iter().find(|(_, n)| *n == name).map(|(f, _)| *f)
}

/// How many arguments a function takes.
pub(crate) fn arity(f: Func) -> usize {
    match f {
        Func::Atan2 | Func::Min | Func::Max => 2,
        _ => 1,
    }
}

/// The words of the conditional `a if c else b` and its connectives; they
/// are not names (a parameter may not be called so).
pub const KEYWORDS: [&str; 5] = ["if", "else", "and", "or", "not"];

/// Names that are always known: the constant `pi`.
pub(crate) fn is_builtin_constant(name: &str) -> bool {
    name == "pi"
}

/// What a compiler makes of a name: a run-time variable (its index) or a
/// constant (a given value, or a built-in constant).
pub(crate) enum Resolved {
    Var(usize),
    Const(f64),
}

/// Resolve a name for compilation: variables first, then `constants`, then
/// built-in constants; anything else is an error with the closest variable.
pub(crate) fn resolve_name(
    n: &str,
    vars: &[&str],
    constants: &dyn Fn(&str) -> Option<f64>,
) -> Result<Resolved, FormulaError> {
    if let Some(i) = vars.iter().position(|v| *v == n) {
        Ok(Resolved::Var(i))
    } else if let Some(v) = constants(n) {
        Ok(Resolved::Const(v))
    } else if is_builtin_constant(n) {
        Ok(Resolved::Const(std::f64::consts::PI))
    } else {
        Err(FormulaError::UnknownName {
            name: n.to_string(),
            span: 0..0,
            suggestion: super::hints::suggest(n, vars.iter().copied()),
        })
    }
}

/// True for the number -1 exactly: `(-1)*x` is an exact negation.
#[allow(clippy::float_cmp)]
pub(crate) fn minus_one(e: &Expr) -> bool {
    matches!(e, Expr::Num(v) if *v == -1.0)
}

/// The exponent of a power taken through square roots: a multiple k/4 of a
/// quarter with |k| ≤ 16 that is not an integer, as (k, roots): the base's
/// square root (`roots` = 1, k even, then the power k/2) or fourth root
/// (`roots` = 2, k odd, then the power k).
pub(crate) fn quarter_power(b: f64) -> Option<(i32, u32)> {
    let k = 4.0 * b;
    if b.fract() == 0.0 || k.fract() != 0.0 || k.abs() > 16.0 {
        return None;
    }
    let k = k as i32;
    Some(if k % 2 == 0 { (k / 2, 1) } else { (k, 2) })
}

/// `a ^ b` in f64 — the one definition every evaluator of the engine
/// follows, so that they agree bit for bit:
/// * an integer exponent |b| ≤ 64: repeated multiplication (`powi`);
/// * a non-integer multiple of ¼ with |b| ≤ 4 (½, ¾, −1.25, …): a square
///   root, or two, of a + 0 (so that −0 is +0) then an integer power —
///   a few ulp from the exact power and many times faster than `powf`,
///   as laws written in half and quarter powers of the radius are the
///   common case; a negative base is NaN, as it is for `powf`;
/// * anything else: `powf`.
pub(crate) fn pow_f64(a: f64, b: f64) -> f64 {
    if b.fract() == 0.0 && b.abs() <= 64.0 {
        a.powi(b as i32)
    } else if let Some((k, roots)) = quarter_power(b) {
        let mut r = a + 0.0;
        for _ in 0..roots {
            r = r.sqrt();
        }
        r.powi(k)
    } else {
        a.powf(b)
    }
}

/// Apply a function to f64 arguments (`b` is ignored for one-argument ones).
pub(crate) fn apply_f64(f: Func, a: f64, b: f64) -> f64 {
    match f {
        Func::Sqrt => a.sqrt(),
        Func::Exp => a.exp(),
        Func::Log => a.ln(),
        Func::Log10 => a.log10(),
        Func::Sin => a.sin(),
        Func::Cos => a.cos(),
        Func::Tan => a.tan(),
        Func::Asin => a.asin(),
        Func::Acos => a.acos(),
        Func::Atan => a.atan(),
        Func::Atan2 => a.atan2(b),
        Func::Sinh => a.sinh(),
        Func::Cosh => a.cosh(),
        Func::Tanh => a.tanh(),
        Func::Abs => a.abs(),
        // NaN propagates (unlike f64::min) so that both evaluators agree.
        Func::Min => {
            if a.is_nan() || b.is_nan() {
                f64::NAN
            } else if a <= b {
                a
            } else {
                b
            }
        }
        Func::Max => {
            if a.is_nan() || b.is_nan() {
                f64::NAN
            } else if a >= b {
                a
            } else {
                b
            }
        }
    }
}

/// Compare two numbers with a comparison operator.
pub(crate) fn compare_f64(op: CmpOp, a: f64, b: f64) -> bool {
    match op {
        CmpOp::Lt => a < b,
        CmpOp::Le => a <= b,
        CmpOp::Gt => a > b,
        CmpOp::Ge => a >= b,
        #[allow(clippy::float_cmp)] // `==` in a formula means exact equality
        CmpOp::Eq => a == b,
        #[allow(clippy::float_cmp)]
        CmpOp::Ne => a != b,
    }
}

/// A node met while walking a formula: a sub-formula or a condition.
#[derive(Clone, Copy, Debug)]
pub enum Visit<'a> {
    /// A sub-formula (the formula itself first).
    Expr(&'a Expr),
    /// A condition of a conditional (and each part of a compound one).
    Cond(&'a Cond),
}

/// Call `f` on every node of `e`, parents before children.
pub(crate) fn walk<'a>(e: &'a Expr, f: &mut dyn FnMut(Visit<'a>)) {
    f(Visit::Expr(e));
    match e {
        Expr::Num(_) | Expr::Name(_) => {}
        Expr::Add(v) | Expr::Mul(v) | Expr::Call(_, v) => v.iter().for_each(|x| walk(x, f)),
        Expr::Pow(a, b) => {
            walk(a, f);
            walk(b, f);
        }
        Expr::If(c, a, b) => {
            walk_cond(c, f);
            walk(a, f);
            walk(b, f);
        }
    }
}

fn walk_cond<'a>(c: &'a Cond, f: &mut dyn FnMut(Visit<'a>)) {
    f(Visit::Cond(c));
    match c {
        Cond::Cmp(_, a, b) => {
            walk(a, f);
            walk(b, f);
        }
        Cond::And(a, b) | Cond::Or(a, b) => {
            walk_cond(a, f);
            walk_cond(b, f);
        }
        Cond::Not(a) => walk_cond(a, f),
    }
}

/// The names a formula uses, built-in constants excluded.
pub(crate) fn collect_names(e: &Expr, out: &mut BTreeSet<String>) {
    walk(e, &mut |v| {
        if let Visit::Expr(Expr::Name(n)) = v {
            if !is_builtin_constant(n) {
                out.insert(n.clone());
            }
        }
    });
}

/// Replace names simultaneously (no simplification).
pub(crate) fn substitute(e: &Expr, map: &BTreeMap<String, Expr>) -> Expr {
    map_tree(e, &|x| match x {
        Expr::Name(n) => map.get(n).cloned(),
        _ => None,
    })
}

/// Rebuild a tree bottom-up, replacing any node for which `f` returns `Some`
/// (the replacement is not visited again).
pub(crate) fn map_tree(e: &Expr, f: &dyn Fn(&Expr) -> Option<Expr>) -> Expr {
    if let Some(r) = f(e) {
        return r;
    }
    match e {
        Expr::Num(_) | Expr::Name(_) => e.clone(),
        Expr::Add(v) => Expr::Add(v.iter().map(|x| map_tree(x, f)).collect()),
        Expr::Mul(v) => Expr::Mul(v.iter().map(|x| map_tree(x, f)).collect()),
        Expr::Call(g, v) => Expr::Call(*g, v.iter().map(|x| map_tree(x, f)).collect()),
        Expr::Pow(a, b) => Expr::Pow(Box::new(map_tree(a, f)), Box::new(map_tree(b, f))),
        Expr::If(c, a, b) => Expr::If(
            Box::new(map_cond(c, f)),
            Box::new(map_tree(a, f)),
            Box::new(map_tree(b, f)),
        ),
    }
}

fn map_cond(c: &Cond, f: &dyn Fn(&Expr) -> Option<Expr>) -> Cond {
    match c {
        Cond::Cmp(op, a, b) => Cond::Cmp(*op, map_tree(a, f), map_tree(b, f)),
        Cond::And(a, b) => Cond::And(Box::new(map_cond(a, f)), Box::new(map_cond(b, f))),
        Cond::Or(a, b) => Cond::Or(Box::new(map_cond(a, f)), Box::new(map_cond(b, f))),
        Cond::Not(a) => Cond::Not(Box::new(map_cond(a, f))),
    }
}

/// A total order on trees, used to put sums and products in canonical order.
/// A power sorts next to its base (`x < x^2 < y`): the key of `b^e` is
/// `(b, Some(e))` and of any other node `(node, None)`.
pub(crate) fn cmp_expr(a: &Expr, b: &Expr) -> Ordering {
    fn split(e: &Expr) -> (&Expr, Option<&Expr>) {
        match e {
            Expr::Pow(b, x) => (b, Some(x)),
            _ => (e, None),
        }
    }
    let (ba, ea) = split(a);
    let (bb, eb) = split(b);
    cmp_node(ba, bb).then_with(|| match (ea, eb) {
        (None, None) => Ordering::Equal,
        (None, Some(_)) => Ordering::Less,
        (Some(_), None) => Ordering::Greater,
        (Some(x), Some(y)) => cmp_expr(x, y),
    })
}

fn cmp_node(a: &Expr, b: &Expr) -> Ordering {
    fn rank(e: &Expr) -> u8 {
        match e {
            Expr::Num(_) => 0,
            Expr::Name(_) => 1,
            Expr::Pow(..) => 2,
            Expr::Mul(_) => 3,
            Expr::Add(_) => 4,
            Expr::Call(..) => 5,
            Expr::If(..) => 6,
        }
    }
    match (a, b) {
        (Expr::Num(x), Expr::Num(y)) => x.total_cmp(y),
        (Expr::Name(x), Expr::Name(y)) => x.cmp(y),
        (Expr::Pow(..), Expr::Pow(..)) => cmp_expr(a, b),
        (Expr::Add(x), Expr::Add(y)) | (Expr::Mul(x), Expr::Mul(y)) => cmp_slices(x, y),
        (Expr::Call(f, x), Expr::Call(g, y)) => f.cmp(g).then_with(|| cmp_slices(x, y)),
        (Expr::If(c, x, y), Expr::If(d, u, v)) => cmp_cond(c, d)
            .then_with(|| cmp_expr(x, u))
            .then_with(|| cmp_expr(y, v)),
        _ => rank(a).cmp(&rank(b)),
    }
}

fn cmp_slices(x: &[Expr], y: &[Expr]) -> Ordering {
    for (a, b) in x.iter().zip(y) {
        let o = cmp_expr(a, b);
        if o != Ordering::Equal {
            return o;
        }
    }
    x.len().cmp(&y.len())
}

fn cmp_cond(c: &Cond, d: &Cond) -> Ordering {
    match (c, d) {
        (Cond::Cmp(o, a, b), Cond::Cmp(p, u, v)) => o
            .cmp(p)
            .then_with(|| cmp_expr(a, u))
            .then_with(|| cmp_expr(b, v)),
        (Cond::And(a, b), Cond::And(u, v)) | (Cond::Or(a, b), Cond::Or(u, v)) => {
            cmp_cond(a, u).then_with(|| cmp_cond(b, v))
        }
        (Cond::Not(a), Cond::Not(u)) => cmp_cond(a, u),
        _ => cond_rank(c).cmp(&cond_rank(d)),
    }
}

fn cond_rank(c: &Cond) -> u8 {
    match c {
        Cond::Cmp(..) => 0,
        Cond::And(..) => 1,
        Cond::Or(..) => 2,
        Cond::Not(..) => 3,
    }
}

/// Evaluate a tree in f64.
pub(crate) fn eval(e: &Expr, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<f64, FormulaError> {
    Ok(match e {
        Expr::Num(v) => *v,
        Expr::Name(n) => match lookup(n) {
            Some(v) => v,
            None if is_builtin_constant(n) => std::f64::consts::PI,
            None => {
                return Err(FormulaError::UnknownName {
                    name: n.clone(),
                    span: 0..0,
                    suggestion: None,
                })
            }
        },
        Expr::Add(v) => {
            let mut s = 0.0;
            for (i, x) in v.iter().enumerate() {
                let t = eval(x, lookup)?;
                s = if i == 0 { t } else { s + t };
            }
            s
        }
        Expr::Mul(v) => {
            let mut s = 1.0;
            for (i, x) in v.iter().enumerate() {
                let t = eval(x, lookup)?;
                s = if i == 0 { t } else { s * t };
            }
            s
        }
        Expr::Pow(a, b) => pow_f64(eval(a, lookup)?, eval(b, lookup)?),
        Expr::Call(f, args) => {
            let a = eval(&args[0], lookup)?;
            let b = match args.get(1) {
                Some(x) => eval(x, lookup)?,
                None => 0.0,
            };
            apply_f64(*f, a, b)
        }
        Expr::If(c, a, b) => {
            if eval_cond(c, lookup)? {
                eval(a, lookup)?
            } else {
                eval(b, lookup)?
            }
        }
    })
}

fn eval_cond(c: &Cond, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<bool, FormulaError> {
    Ok(match c {
        Cond::Cmp(op, a, b) => compare_f64(*op, eval(a, lookup)?, eval(b, lookup)?),
        Cond::And(a, b) => eval_cond(a, lookup)? & eval_cond(b, lookup)?,
        Cond::Or(a, b) => eval_cond(a, lookup)? | eval_cond(b, lookup)?,
        Cond::Not(a) => !eval_cond(a, lookup)?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn x() -> Expr {
        Expr::name("x")
    }

    #[test]
    fn function_table_round_trips() {
        for (f, n) in FUNCS {
            assert_eq!(func_by_name(n), Some(f));
            assert_eq!(func_name(f), n);
        }
        assert_eq!(func_by_name("e"), None);
    }

    #[test]
    fn eval_walks_the_tree() {
        let e = x() * x() + Expr::num(1.0) / x();
        let v = eval(&e, &|n| (n == "x").then_some(2.0)).unwrap();
        assert!((v - 4.5).abs() < 1e-15);
        let pi = eval(&Expr::name("pi"), &|_| None).unwrap();
        assert!((pi - std::f64::consts::PI).abs() < 1e-15);
        let err = eval(&Expr::name("q"), &|_| None).unwrap_err();
        assert!(matches!(err, FormulaError::UnknownName { ref name, .. } if name == "q"));
    }

    #[test]
    fn names_exclude_pi_and_substitution_is_simultaneous() {
        let e = x() * Expr::name("y") + Expr::name("pi");
        let names: Vec<_> = e.names().into_iter().collect();
        assert_eq!(names, vec!["x".to_string(), "y".to_string()]);
        let mut m = BTreeMap::new();
        m.insert("x".to_string(), Expr::name("y"));
        m.insert("y".to_string(), Expr::name("x"));
        let s = substitute(&e, &m);
        let v = eval(&s, &|n| match n {
            "x" => Some(3.0),
            "y" => Some(5.0),
            _ => None,
        })
        .unwrap();
        assert!((v - (15.0 + std::f64::consts::PI)).abs() < 1e-12);
    }

    #[test]
    fn order_puts_powers_next_to_their_base() {
        let x2 = x().pow(Expr::num(2.0));
        assert_eq!(cmp_expr(&x(), &x2), Ordering::Less);
        assert_eq!(cmp_expr(&x2, &Expr::name("y")), Ordering::Less);
        assert_eq!(cmp_expr(&x2, &x2), Ordering::Equal);
    }

    #[test]
    fn walk_reaches_comparisons_under_not() {
        // Switch points are collected from every comparison a walk visits.
        let e = super::super::parse("1 if not (x < 2 or not y > 3) else 0").unwrap();
        let mut cmps = Vec::new();
        e.walk(&mut |v| {
            if let Visit::Cond(Cond::Cmp(op, _, b)) = v {
                cmps.push((*op, b.as_number()));
            }
        });
        assert_eq!(cmps, vec![(CmpOp::Lt, Some(2.0)), (CmpOp::Gt, Some(3.0))]);
    }

    #[test]
    fn quarter_powers_are_accurate_and_keep_the_special_values() {
        // Against the power evaluated in 256-bit arithmetic: within
        // (|4b| + 4) ulp, the bound of two roots and the multiplications of
        // the integer power (each a half-ulp rounding, the roots' errors
        // multiplied by the power's degree).
        let e = super::super::parse("x^b").unwrap();
        for i in 0..400 {
            let x =
                10f64.powf(-6.0 + 12.0 * f64::from(i) / 399.0) * (1.0 + 0.37 * f64::from(i % 7));
            for k in (-16i32..=16).filter(|k| k % 4 != 0) {
                let b = f64::from(k) / 4.0;
                let got = pow_f64(x, b);
                let look = |n: &str| match n {
                    "x" => Some(x),
                    "b" => Some(b),
                    _ => None,
                };
                let want = e.eval_extended(&look).unwrap();
                let ulps = ((got - want) / want).abs() / f64::EPSILON;
                let bound = f64::from(k.abs() + 4);
                assert!(ulps <= bound, "{x}^{b}: {ulps} ulp (bound {bound})");
            }
        }
        assert!(pow_f64(-0.0, -0.5).is_infinite() && pow_f64(-0.0, -0.5) > 0.0);
        assert_eq!(pow_f64(-0.0, 0.5).to_bits(), 0.0f64.to_bits());
        assert!(pow_f64(-2.0, 0.5).is_nan() && pow_f64(f64::NAN, 0.25).is_nan());
        assert!(pow_f64(f64::INFINITY, 0.75).is_infinite());
        assert_eq!(pow_f64(f64::INFINITY, -1.5).to_bits(), 0.0f64.to_bits());
        assert_eq!(quarter_power(2.5), Some((5, 1)));
        assert_eq!(quarter_power(-0.75), Some((-3, 2)));
        assert_eq!(quarter_power(4.25), None);
        assert_eq!(quarter_power(2.0), None);
    }

    #[test]
    fn min_max_propagate_nan() {
        assert!(apply_f64(Func::Min, f64::NAN, 1.0).is_nan());
        assert!((apply_f64(Func::Max, 2.0, 1.0) - 2.0).abs() < 1e-15);
        assert!((pow_f64(2.0, -2.0) - 0.25).abs() < 1e-15);
    }
}
