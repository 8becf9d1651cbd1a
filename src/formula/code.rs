//! Formulas as source code of other languages (C, Fortran, Python with
//! NumPy): one walker over the tree, parameterised by a small table per
//! language ([`Dialect`]) — operators, how a power is written, the
//! conditional, the spelling of functions and of number literals. Names
//! are mapped by the caller (a parameter to its constant, a coordinate to
//! an argument), so this file knows nothing of physics. Like the text
//! printer it never simplifies.
//!
//! Literals round-trip exactly: Rust's shortest representation of an f64
//! (`{:?}`) reads back as the same double in C99, Fortran (with the
//! `real64` kind suffix) and Python.

use super::print::negated;
use super::{CmpOp, Cond, Expr, Func};

// Binding strength of a piece of code, loosest first.
const SUM: u8 = 1;
const PRODUCT: u8 = 2;
const NEG: u8 = 3;
const ATOM: u8 = 5;

/// How a language writes a power `a ^ b`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PowerStyle {
    /// A call `pow(a, b)`; small integer powers as repeated products,
    /// `b = 1/2` as `sqrt(a)`.
    Call(&'static str),
    /// An operator `a**b` binding tighter than unary minus; an integer
    /// exponent is written as an integer literal.
    Operator,
}

/// How a language writes the conditional `a if c else b`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Conditional {
    /// `(c ? a : b)` (only the branch taken is evaluated).
    Ternary,
    /// A function `f(a, b, c)` (Fortran `merge`; both are evaluated).
    MergeLast(&'static str),
    /// A function `f(c, a, b)` (NumPy `where`; both are evaluated).
    WhereFirst(&'static str),
}

/// The table that makes the walker write one language.
#[derive(Clone, Copy, Debug)]
pub struct Dialect {
    /// The language's name, for messages.
    pub name: &'static str,
    /// Suffix of real literals (`_real64` in Fortran).
    pub literal_suffix: &'static str,
    /// Written for a NaN and for ±infinity.
    pub nan: &'static str,
    pub infinity: &'static str,
    /// Powers.
    pub power: PowerStyle,
    /// Conditionals.
    pub conditional: Conditional,
    /// `and`, `or`, `not` (with spaces as needed).
    pub and: &'static str,
    pub or: &'static str,
    pub not: &'static str,
    /// `!=`.
    pub not_equal: &'static str,
    /// Wrap every comparison in parentheses (NumPy's `&` binds tighter than
    /// `<`).
    pub wrap_comparisons: bool,
    /// The name of each function of the language, in [`super::expr::FUNCS`]
    /// order.
    pub functions: fn(Func) -> &'static str,
}

fn c_function(f: Func) -> &'static str {
    match f {
        Func::Abs => "fabs",
        Func::Min => "fmin",
        Func::Max => "fmax",
        f => super::expr::func_name(f),
    }
}

fn fortran_function(f: Func) -> &'static str {
    super::expr::func_name(f)
}

fn numpy_function(f: Func) -> &'static str {
    match f {
        Func::Sqrt => "np.sqrt",
        Func::Exp => "np.exp",
        Func::Log => "np.log",
        Func::Log10 => "np.log10",
        Func::Sin => "np.sin",
        Func::Cos => "np.cos",
        Func::Tan => "np.tan",
        Func::Asin => "np.arcsin",
        Func::Acos => "np.arccos",
        Func::Atan => "np.arctan",
        Func::Atan2 => "np.arctan2",
        Func::Sinh => "np.sinh",
        Func::Cosh => "np.cosh",
        Func::Tanh => "np.tanh",
        Func::Abs => "np.abs",
        Func::Min => "np.minimum",
        Func::Max => "np.maximum",
    }
}

/// C99 (and CUDA/HIP, which read the same expressions).
pub const C: Dialect = Dialect {
    name: "C",
    literal_suffix: "",
    nan: "NAN",
    infinity: "INFINITY",
    power: PowerStyle::Call("pow"),
    conditional: Conditional::Ternary,
    and: " && ",
    or: " || ",
    not: "!",
    not_equal: "!=",
    wrap_comparisons: false,
    functions: c_function,
};

/// Fortran 2008 (`real64` from `iso_fortran_env`, `ieee_arithmetic` for NaN).
pub const FORTRAN: Dialect = Dialect {
    name: "Fortran",
    literal_suffix: "_real64",
    nan: "ieee_value(0.0_real64, ieee_quiet_nan)",
    infinity: "ieee_value(0.0_real64, ieee_positive_inf)",
    power: PowerStyle::Operator,
    conditional: Conditional::MergeLast("merge"),
    and: " .and. ",
    or: " .or. ",
    not: ".not. ",
    not_equal: "/=",
    wrap_comparisons: true,
    functions: fortran_function,
};

/// Python with NumPy: every operation works on arrays.
pub const NUMPY: Dialect = Dialect {
    name: "Python",
    literal_suffix: "",
    nan: "np.nan",
    infinity: "np.inf",
    power: PowerStyle::Operator,
    conditional: Conditional::WhereFirst("np.where"),
    and: " & ",
    or: " | ",
    not: "~",
    not_equal: "!=",
    wrap_comparisons: true,
    functions: numpy_function,
};

impl Dialect {
    /// A number literal that reads back as exactly `v`.
    pub fn number(&self, v: f64) -> String {
        if v.is_nan() {
            return self.nan.to_string();
        }
        if v.is_infinite() {
            return if v > 0.0 {
                self.infinity.to_string()
            } else {
                format!("(-{})", self.infinity)
            };
        }
        let t = format!("{:?}{}", v.abs(), self.literal_suffix);
        if v.is_sign_negative() {
            format!("(-{t})")
        } else {
            t
        }
    }

    /// Code for `e`, each name written as `name(n)` says.
    pub fn code(&self, e: &Expr, name: &dyn Fn(&str) -> String) -> String {
        Walker { d: self, name }.piece(e).0
    }
}

struct Walker<'a> {
    d: &'a Dialect,
    name: &'a dyn Fn(&str) -> String,
}

/// Text in parentheses unless it binds at least as tightly as `min`; an
/// operand that starts with a minus always goes in parentheses (Fortran
/// refuses `a*-b`).
fn wrap(p: (String, u8), min: u8) -> String {
    if p.1 >= min && !p.0.starts_with('-') {
        p.0
    } else {
        format!("({})", p.0)
    }
}

#[allow(clippy::float_cmp)] // exponents are compared exactly
fn small_integer(v: f64) -> Option<i32> {
    (v.fract() == 0.0 && v.abs() <= 64.0).then_some(v as i32)
}

impl Walker<'_> {
    fn piece(&self, e: &Expr) -> (String, u8) {
        let d = self.d;
        match e {
            Expr::Num(v) => (d.number(*v), ATOM),
            Expr::Name(n) => ((self.name)(n), ATOM),
            Expr::Add(ts) if ts.is_empty() => (d.number(0.0), ATOM),
            Expr::Add(ts) => {
                let mut s = String::new();
                for (i, t) in ts.iter().enumerate() {
                    match (i, negated(t)) {
                        (0, Some(pos)) => s += &format!("-{}", wrap(self.piece(&pos), PRODUCT)),
                        (0, None) => s += &wrap(self.piece(t), SUM),
                        (_, Some(pos)) => s += &format!(" - {}", wrap(self.piece(&pos), PRODUCT)),
                        (_, None) => s += &format!(" + {}", wrap(self.piece(t), PRODUCT)),
                    }
                }
                (s, SUM)
            }
            Expr::Mul(fs) if fs.is_empty() => (d.number(1.0), ATOM),
            Expr::Mul(fs) => {
                if let Some(pos) = negated(e) {
                    return (format!("-{}", wrap(self.piece(&pos), PRODUCT)), NEG);
                }
                let mut top = Vec::new();
                let mut bottom = Vec::new();
                for f in fs {
                    match f {
                        Expr::Pow(b, x) if matches!(**x, Expr::Num(v) if v < 0.0) => {
                            let Expr::Num(v) = **x else { unreachable!() };
                            #[allow(clippy::float_cmp)]
                            let den = if v == -1.0 {
                                (**b).clone()
                            } else {
                                Expr::Pow(b.clone(), Box::new(Expr::Num(-v)))
                            };
                            bottom.push(den);
                        }
                        other => top.push(other.clone()),
                    }
                }
                let mut s = if top.is_empty() {
                    d.number(1.0)
                } else {
                    let parts: Vec<String> =
                        top.iter().map(|f| wrap(self.piece(f), NEG + 1)).collect();
                    parts.join("*")
                };
                if !bottom.is_empty() {
                    let parts: Vec<String> = bottom
                        .iter()
                        .map(|f| wrap(self.piece(f), NEG + 1))
                        .collect();
                    if parts.len() == 1 {
                        s += &format!("/{}", parts[0]);
                    } else {
                        s += &format!("/({})", parts.join("*"));
                    }
                }
                (s, PRODUCT)
            }
            Expr::Pow(b, x) => self.power(b, x),
            Expr::Call(f, args) => {
                let a: Vec<String> = args.iter().map(|a| self.piece(a).0).collect();
                (format!("{}({})", (d.functions)(*f), a.join(", ")), ATOM)
            }
            Expr::If(c, a, b) => {
                let (c, a, b) = (self.cond(c).0, self.piece(a).0, self.piece(b).0);
                let s = match d.conditional {
                    Conditional::Ternary => format!("({c} ? {a} : {b})"),
                    Conditional::MergeLast(f) => format!("{f}({a}, {b}, {c})"),
                    Conditional::WhereFirst(f) => format!("{f}({c}, {a}, {b})"),
                };
                (s, ATOM)
            }
        }
    }

    fn power(&self, b: &Expr, x: &Expr) -> (String, u8) {
        let d = self.d;
        let base = wrap(self.piece(b), ATOM);
        let exponent = x.as_number();
        match d.power {
            PowerStyle::Call(pow) => match exponent.and_then(small_integer) {
                Some(0) => (d.number(1.0), ATOM),
                Some(k) if (1..=4).contains(&k.abs()) => {
                    let prod = vec![base; k.unsigned_abs() as usize].join("*");
                    if k > 0 {
                        (format!("({prod})"), ATOM)
                    } else {
                        (format!("({}/({prod}))", d.number(1.0)), ATOM)
                    }
                }
                _ if exponent == Some(0.5) => (format!("sqrt({})", self.piece(b).0), ATOM),
                _ => (
                    format!("{pow}({}, {})", self.piece(b).0, self.piece(x).0),
                    ATOM,
                ),
            },
            PowerStyle::Operator => {
                let ex = match exponent.and_then(small_integer) {
                    Some(k) if k < 0 => format!("({k})"),
                    Some(k) => k.to_string(),
                    None => wrap(self.piece(x), ATOM),
                };
                // `a**b` binds tighter than a unary minus on either side;
                // as an operand it is wrapped like a product would be.
                (format!("({base}**{ex})"), ATOM)
            }
        }
    }

    fn cond(&self, c: &Cond) -> (String, u8) {
        let d = self.d;
        match c {
            Cond::Cmp(op, a, b) => {
                let op = match op {
                    CmpOp::Lt => "<",
                    CmpOp::Le => "<=",
                    CmpOp::Gt => ">",
                    CmpOp::Ge => ">=",
                    CmpOp::Eq => "==",
                    CmpOp::Ne => d.not_equal,
                };
                let s = format!("{} {op} {}", self.piece(a).0, self.piece(b).0);
                if d.wrap_comparisons {
                    (format!("({s})"), ATOM)
                } else {
                    (s, SUM)
                }
            }
            Cond::And(a, b) => (
                format!("({}{}{})", self.cond(a).0, d.and, self.cond(b).0),
                ATOM,
            ),
            Cond::Or(a, b) => (
                format!("({}{}{})", self.cond(a).0, d.or, self.cond(b).0),
                ATOM,
            ),
            Cond::Not(a) => (format!("({}({}))", d.not, self.cond(a).0), ATOM),
        }
    }
}

/// Subexpressions that occur more than once in `outputs` (and are more
/// than a name, a number or a short product), pulled out as temporaries:
/// the temporaries in the order they must be computed (each may use the
/// ones before), named `prefix` and a number, and the outputs using them.
/// Values are unchanged: a shared subexpression is the same computation.
pub fn share(outputs: &[Expr], prefix: &str) -> (Vec<(String, Expr)>, Vec<Expr>) {
    use std::collections::HashMap;
    let key = |e: &Expr| format!("{e:?}");
    let mut count: HashMap<String, usize> = HashMap::new();
    for o in outputs {
        o.walk(&mut |v| {
            if let super::Visit::Expr(e) = v {
                if !matches!(e, Expr::Num(_) | Expr::Name(_)) {
                    *count.entry(key(e)).or_default() += 1;
                }
            }
        });
    }
    struct State<'a> {
        count: &'a HashMap<String, usize>,
        names: HashMap<String, String>,
        temps: Vec<(String, Expr)>,
        prefix: &'a str,
    }
    fn rewrite(e: &Expr, st: &mut State<'_>) -> Expr {
        let k = format!("{e:?}");
        if let Some(n) = st.names.get(&k) {
            return Expr::Name(n.clone());
        }
        let kids = |v: &[Expr], st: &mut State<'_>| -> Vec<Expr> {
            v.iter().map(|x| rewrite(x, st)).collect()
        };
        let r = match e {
            Expr::Num(_) | Expr::Name(_) => return e.clone(),
            Expr::Add(v) => Expr::Add(kids(v, st)),
            Expr::Mul(v) => Expr::Mul(kids(v, st)),
            Expr::Call(f, v) => Expr::Call(*f, kids(v, st)),
            Expr::Pow(a, b) => Expr::Pow(Box::new(rewrite(a, st)), Box::new(rewrite(b, st))),
            Expr::If(c, a, b) => {
                let c = rewrite_cond(c, st);
                Expr::If(
                    Box::new(c),
                    Box::new(rewrite(a, st)),
                    Box::new(rewrite(b, st)),
                )
            }
        };
        // A short product or power (`R*R`, `x^2`) is cheaper written again.
        let worth = super::simplify::size(e) > 3;
        if worth && st.count.get(&k).copied().unwrap_or(0) > 1 {
            let n = format!("{}{}", st.prefix, st.temps.len());
            st.temps.push((n.clone(), r));
            st.names.insert(k, n.clone());
            return Expr::Name(n);
        }
        r
    }
    fn rewrite_cond(c: &Cond, st: &mut State<'_>) -> Cond {
        match c {
            Cond::Cmp(op, a, b) => Cond::Cmp(*op, rewrite(a, st), rewrite(b, st)),
            Cond::And(a, b) => {
                Cond::And(Box::new(rewrite_cond(a, st)), Box::new(rewrite_cond(b, st)))
            }
            Cond::Or(a, b) => {
                Cond::Or(Box::new(rewrite_cond(a, st)), Box::new(rewrite_cond(b, st)))
            }
            Cond::Not(a) => Cond::Not(Box::new(rewrite_cond(a, st))),
        }
    }
    let mut st = State {
        count: &count,
        names: HashMap::new(),
        temps: Vec::new(),
        prefix,
    };
    let out = outputs.iter().map(|o| rewrite(o, &mut st)).collect();
    (st.temps, out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formula::parse;

    fn show(d: &Dialect, src: &str) -> String {
        d.code(&parse(src).unwrap(), &|n| n.to_string())
    }

    #[test]
    fn one_tree_three_languages() {
        let src = "rho0*(R/R0)^(-1.5) if R < 2 and not R == 1 else -x^2/(3*y)";
        assert_eq!(
            show(&C, src),
            "((R < 2.0 && (!(R == 1.0))) ? rho0/pow(R/R0, 1.5) : (-(x*x))/(3.0*y))"
        );
        assert_eq!(
            show(&FORTRAN, src),
            "merge(rho0/((R/R0)**1.5_real64), (-(x**2))/(3.0_real64*y), \
             ((R < 2.0_real64) .and. (.not. ((R == 1.0_real64)))))"
        );
        assert_eq!(
            show(&NUMPY, src),
            "np.where(((R < 2.0) & (~((R == 1.0)))), rho0/((R/R0)**1.5), (-(x**2))/(3.0*y))"
        );
    }

    #[test]
    fn shared_subexpressions_become_temporaries_in_dependency_order() {
        let a = parse("exp(-x^2/s) + sqrt(exp(-x^2/s) + 1)").unwrap();
        let b = parse("3*exp(-x^2/s)").unwrap();
        let (temps, outs) = share(&[a.clone(), b.clone()], "@t");
        // exp(...) is computed once, in the last temporary.
        let exps = |e: &Expr| {
            let mut n = 0;
            e.walk(&mut |v| {
                n += usize::from(matches!(
                    v,
                    crate::formula::Visit::Expr(Expr::Call(Func::Exp, _))
                ))
            });
            n
        };
        let total: usize = temps
            .iter()
            .map(|t| exps(&t.1))
            .chain(outs.iter().map(exps))
            .sum();
        assert_eq!(total, 1, "{temps:?} {outs:?}");
        // The outputs with the temporaries put back (last first) are the
        // originals (substitution simplifies, so compare simplified).
        let mut back = outs.clone();
        for (n, t) in temps.iter().rev() {
            let one = [(n.clone(), t.clone())].into_iter().collect();
            back = back.iter().map(|o| o.substitute(&one)).collect();
        }
        assert_eq!(back, vec![a.simplify(), b.simplify()]);
    }

    #[test]
    fn literals_round_trip() {
        for v in [0.1, 1e-300, 6.674_30e-11, 1.0 / 3.0, 123_456_789.0, 2.0] {
            let t = C.number(v);
            assert_eq!(t.parse::<f64>().unwrap().to_bits(), v.to_bits(), "{t}");
            let f = FORTRAN.number(v);
            let f = f.trim_end_matches("_real64");
            assert_eq!(f.parse::<f64>().unwrap().to_bits(), v.to_bits(), "{f}");
        }
        assert_eq!(C.number(-0.5), "(-0.5)");
        assert_eq!(C.number(f64::NAN), "NAN");
    }
}
