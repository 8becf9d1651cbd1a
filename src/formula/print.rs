//! Printing: plain text that the parser reads back (minimal parentheses,
//! `a - b`, `a/b`, `x^(-2)`, exactly round-tripping numbers), LaTeX, and the
//! caret rendering of errors. Printing never simplifies.

use super::expr::func_name;
use super::{CmpOp, Cond, Expr, FormulaError, Func};

// Binding strength of what a piece of text is, loosest first.
const SUM: u8 = 1;
const PRODUCT: u8 = 2;
const NEG: u8 = 3;
const POWER: u8 = 4;
const ATOM: u8 = 5;

/// Render an error: the formula, a caret line, the message.
pub(crate) fn render_error(err: &FormulaError, source: &str) -> String {
    let line: String = source
        .chars()
        .map(|c| if c.is_whitespace() { ' ' } else { c })
        .collect();
    match err.span() {
        Some(span) => {
            let start = source
                .get(..span.start.min(source.len()))
                .map_or(0, |s| s.chars().count());
            let width = source
                .get(span.start.min(source.len())..span.end.min(source.len()))
                .map_or(0, |s| s.chars().count())
                .max(1);
            format!("{line}\n{}{}\n{err}", " ".repeat(start), "^".repeat(width))
        }
        None => format!("{line}\n{err}"),
    }
}

/// A number as text that parses back to the same f64.
pub(crate) fn number(v: f64) -> String {
    if v.is_nan() {
        return "(0/0)".into();
    }
    if v.is_infinite() {
        return if v > 0.0 {
            "(1/0)".into()
        } else {
            "(-1/0)".into()
        };
    }
    let a = v.abs();
    if a == 0.0 || (1e-4..1e15).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// Plain text for a tree.
pub(crate) fn text(e: &Expr) -> String {
    piece(e).0
}

fn wrap(p: (String, u8), min: u8) -> String {
    if p.1 >= min {
        p.0
    } else {
        format!("({})", p.0)
    }
}

/// Is this term printed with a leading minus (negative number or coefficient)?
fn negated(e: &Expr) -> Option<Expr> {
    match e {
        Expr::Num(v) if *v < 0.0 => Some(Expr::Num(-v)),
        Expr::Mul(fs) => match fs.first() {
            Some(Expr::Num(c)) if *c < 0.0 => {
                let mut rest = fs.clone();
                #[allow(clippy::float_cmp)] // exactly -1 is printed as a bare minus
                if *c == -1.0 {
                    rest.remove(0);
                } else {
                    rest[0] = Expr::Num(-c);
                }
                Some(if rest.len() == 1 {
                    rest.pop().unwrap()
                } else {
                    Expr::Mul(rest)
                })
            }
            _ => None,
        },
        _ => None,
    }
}

/// Sum terms with a term that has no leading minus first (`1 - x^2`, not
/// `-x^2 + 1`); the order of the rest is kept.
fn positive_first(ts: &[Expr]) -> Vec<&Expr> {
    let mut v: Vec<&Expr> = ts.iter().collect();
    if negated(&ts[0]).is_some() {
        if let Some(j) = ts.iter().position(|t| negated(t).is_none()) {
            let t = v.remove(j);
            v.insert(0, t);
        }
    }
    v
}

/// Text and binding strength.
fn piece(e: &Expr) -> (String, u8) {
    match e {
        Expr::Num(v) if v.is_finite() => (number(*v), if *v < 0.0 { NEG } else { ATOM }),
        Expr::Num(v) => (number(*v), ATOM),
        Expr::Name(n) => (n.clone(), ATOM),
        Expr::Add(ts) if ts.is_empty() => ("0".into(), ATOM),
        Expr::Add(ts) => {
            let mut s = String::new();
            for (i, t) in positive_first(ts).into_iter().enumerate() {
                match (i, negated(t)) {
                    (0, _) => s += &wrap(piece(t), SUM),
                    (_, Some(pos)) => {
                        s += " - ";
                        s += &wrap(piece(&pos), PRODUCT);
                    }
                    (_, None) => {
                        s += " + ";
                        s += &wrap(piece(t), PRODUCT);
                    }
                }
            }
            (s, SUM)
        }
        Expr::Mul(fs) if fs.is_empty() => ("1".into(), ATOM),
        Expr::Mul(_) => {
            if let Some(pos) = negated(e) {
                return (format!("-{}", wrap(piece(&pos), PRODUCT)), PRODUCT);
            }
            product(e)
        }
        // x^(-n) reads as 1/x^n.
        Expr::Pow(_, x) if x.as_number().is_some_and(|v| v < 0.0) => {
            product(&Expr::Mul(vec![e.clone()]))
        }
        Expr::Pow(b, x) => {
            let base = wrap(piece(b), ATOM);
            (format!("{base}^{}", wrap(piece(x), POWER)), POWER)
        }
        Expr::Call(f, args) => {
            let a: Vec<String> = args.iter().map(text).collect();
            (format!("{}({})", func_name(*f), a.join(", ")), ATOM)
        }
        Expr::If(c, a, b) => (
            format!("if({}, {}, {})", cond_text(c), text(a), text(b)),
            ATOM,
        ),
    }
}

/// A product split into numerator and denominator (`x^(-n)` goes below).
fn product(e: &Expr) -> (String, u8) {
    let Expr::Mul(fs) = e else { return piece(e) };
    let mut top = Vec::new();
    let mut bottom = Vec::new();
    for f in fs {
        match f {
            Expr::Pow(b, x) if matches!(**x, Expr::Num(v) if v < 0.0) => {
                let v = x.as_number().unwrap_or(-1.0);
                #[allow(clippy::float_cmp)] // exactly -1 means a plain divisor
                let d = if v == -1.0 {
                    (**b).clone()
                } else {
                    Expr::Pow(b.clone(), Box::new(Expr::Num(-v)))
                };
                bottom.push(d);
            }
            other => top.push(other),
        }
    }
    let mut s = if top.is_empty() {
        "1".to_string()
    } else {
        let parts: Vec<String> = top
            .iter()
            .enumerate()
            .map(|(i, f)| wrap(piece(f), if i == 0 { NEG } else { POWER }))
            .collect();
        parts.join("*")
    };
    if !bottom.is_empty() {
        s += "/";
        if bottom.len() == 1 {
            s += &wrap(piece(&bottom[0]), POWER);
        } else {
            let parts: Vec<String> = bottom.iter().map(|f| wrap(piece(f), POWER)).collect();
            s += &format!("({})", parts.join("*"));
        }
    }
    (s, PRODUCT)
}

fn op_text(op: CmpOp) -> &'static str {
    match op {
        CmpOp::Lt => "<",
        CmpOp::Le => "<=",
        CmpOp::Gt => ">",
        CmpOp::Ge => ">=",
        CmpOp::Eq => "==",
        CmpOp::Ne => "!=",
    }
}

fn cond_text(c: &Cond) -> String {
    match c {
        Cond::Cmp(op, a, b) => format!("{} {} {}", text(a), op_text(*op), text(b)),
        Cond::And(a, b) => format!("{} and {}", cond_and_part(a), cond_and_part(b)),
        Cond::Or(a, b) => format!("{} or {}", cond_text(a), cond_text(b)),
    }
}

fn cond_and_part(c: &Cond) -> String {
    match c {
        Cond::Or(..) => format!("({})", cond_text(c)),
        _ => cond_text(c),
    }
}

// ---------------------------------------------------------------- LaTeX

const GREEK: [&str; 35] = [
    "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa",
    "lambda", "mu", "nu", "xi", "pi", "rho", "sigma", "tau", "upsilon", "phi", "chi", "psi",
    "omega", "Gamma", "Delta", "Theta", "Lambda", "Xi", "Pi", "Sigma", "Upsilon", "Phi", "Psi",
    "Omega", "varphi",
];

/// LaTeX for a name: Greek letters, trailing digits and `_x` as subscripts.
fn latex_name(n: &str) -> String {
    let (head, sub) = match n.split_once('_') {
        Some((h, s)) if !h.is_empty() => (h.to_string(), Some(s.to_string())),
        _ => {
            let cut = n.trim_end_matches(|c: char| c.is_ascii_digit()).len();
            if cut > 0 && cut < n.len() {
                (n[..cut].to_string(), Some(n[cut..].to_string()))
            } else {
                (n.to_string(), None)
            }
        }
    };
    let head = if GREEK.contains(&head.as_str()) {
        format!("\\{head}")
    } else if head.chars().count() > 1 {
        format!("\\mathrm{{{head}}}")
    } else {
        head
    };
    match sub {
        Some(s) => format!("{head}_{{{}}}", s.replace('_', "\\_")),
        None => head,
    }
}

fn latex_number(v: f64) -> String {
    let t = number(v);
    match t.split_once('e') {
        Some((m, x)) => format!("{m} \\times 10^{{{x}}}"),
        None => t,
    }
}

/// LaTeX for a tree.
pub(crate) fn latex(e: &Expr) -> String {
    lpiece(e).0
}

fn lwrap(p: (String, u8), min: u8) -> String {
    if p.1 >= min {
        p.0
    } else {
        format!("\\left({}\\right)", p.0)
    }
}

fn lpiece(e: &Expr) -> (String, u8) {
    match e {
        Expr::Num(v) => (latex_number(*v), if *v < 0.0 { NEG } else { ATOM }),
        Expr::Name(n) => (latex_name(n), ATOM),
        Expr::Add(ts) => {
            let mut s = String::new();
            for (i, t) in positive_first(ts).into_iter().enumerate() {
                match (i, negated(t)) {
                    (0, _) => s += &lwrap(lpiece(t), SUM),
                    (_, Some(p)) => s += &format!(" - {}", lwrap(lpiece(&p), PRODUCT)),
                    (_, None) => s += &format!(" + {}", lwrap(lpiece(t), PRODUCT)),
                }
            }
            (s, SUM)
        }
        Expr::Mul(fs) => {
            if let Some(p) = negated(e) {
                return (format!("-{}", lwrap(lpiece(&p), PRODUCT)), PRODUCT);
            }
            let mut top = Vec::new();
            let mut bottom = Vec::new();
            for f in fs {
                match f {
                    Expr::Pow(b, x) if matches!(**x, Expr::Num(v) if v < 0.0) => {
                        let v = -x.as_number().unwrap_or(-1.0);
                        bottom.push(super::simplify::pow((**b).clone(), Expr::Num(v)));
                    }
                    other => top.push(other.clone()),
                }
            }
            let join = |v: &[Expr]| {
                let parts: Vec<String> = v.iter().map(|f| lwrap(lpiece(f), NEG)).collect();
                parts.join(" \\, ")
            };
            let t = if top.is_empty() { "1".to_string() } else { join(&top) };
            if bottom.is_empty() {
                (t, PRODUCT)
            } else {
                // A lone factor above or below the bar needs no parentheses.
                let lone = |v: &[Expr], joined: String| match v {
                    [one] => latex(one),
                    _ => joined,
                };
                let t = lone(&top, t);
                let b = lone(&bottom, join(&bottom));
                (format!("\\frac{{{t}}}{{{b}}}"), ATOM)
            }
        }
        Expr::Pow(b, x) => {
            if matches!(**x, Expr::Num(v) if v < 0.0) {
                let v = -x.as_number().unwrap_or(-1.0);
                let d = latex(&super::simplify::pow((**b).clone(), Expr::Num(v)));
                return (format!("\\frac{{1}}{{{d}}}"), ATOM);
            }
            // A fraction or root is an atom inside a product, but as the base
            // of a power it needs parentheses: (R/R_0)^{-p}, not R/R_0^{-p}.
            let piece = lpiece(b);
            let base = if ["\\frac", "\\sqrt", "\\begin"].iter().any(|p| piece.0.starts_with(p)) {
                format!("\\left({}\\right)", piece.0)
            } else {
                lwrap(piece, ATOM)
            };
            (format!("{base}^{{{}}}", latex(x)), POWER)
        }
        Expr::Call(Func::Sqrt, a) => (format!("\\sqrt{{{}}}", latex(&a[0])), ATOM),
        Expr::Call(Func::Abs, a) => (format!("\\left|{}\\right|", latex(&a[0])), ATOM),
        Expr::Call(f, args) => {
            let name = match f {
                Func::Exp | Func::Log | Func::Sin | Func::Cos | Func::Tan | Func::Sinh
                | Func::Cosh | Func::Tanh | Func::Min | Func::Max => format!("\\{}", func_name(*f)),
                Func::Log10 => "\\log_{10}".into(),
                Func::Asin => "\\arcsin".into(),
                Func::Acos => "\\arccos".into(),
                Func::Atan => "\\arctan".into(),
                _ => format!("\\operatorname{{{}}}", func_name(*f)),
            };
            let a: Vec<String> = args.iter().map(latex).collect();
            (format!("{name}\\left({}\\right)", a.join(", ")), ATOM)
        }
        Expr::If(c, a, b) => (
            format!(
                "\\begin{{cases}} {} & \\text{{if }} {} \\\\ {} & \\text{{otherwise}} \\end{{cases}}",
                latex(a),
                latex_cond(c),
                latex(b)
            ),
            ATOM,
        ),
    }
}

fn latex_cond(c: &Cond) -> String {
    match c {
        Cond::Cmp(op, a, b) => {
            let o = match op {
                CmpOp::Lt => "<",
                CmpOp::Le => "\\le",
                CmpOp::Gt => ">",
                CmpOp::Ge => "\\ge",
                CmpOp::Eq => "=",
                CmpOp::Ne => "\\ne",
            };
            format!("{} {o} {}", latex(a), latex(b))
        }
        Cond::And(a, b) => format!("{} \\text{{ and }} {}", latex_cond(a), latex_cond(b)),
        Cond::Or(a, b) => format!(
            "\\left({} \\text{{ or }} {}\\right)",
            latex_cond(a),
            latex_cond(b)
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::super::parse;
    use super::*;

    fn rt(s: &str) -> String {
        text(&parse(s).unwrap())
    }

    #[test]
    fn text_forms_are_minimal() {
        assert_eq!(rt("a - b"), "a - b");
        assert_eq!(rt("a / b"), "a/b");
        assert_eq!(rt("-x^2"), "-x^2");
        assert_eq!(rt("(-x)^2"), "(-x)^2");
        assert_eq!(rt("x^(-2)"), "1/x^2");
        assert_eq!(rt("x^(-y)"), "x^(-y)");
        assert_eq!(rt("-x^2 + 1"), "1 - x^2");
        assert_eq!(rt("a - (b + c)"), "a - (b + c)");
        assert_eq!(rt("(a*b)^c"), "(a*b)^c");
        assert_eq!(rt("x^y^z"), "x^y^z");
        assert_eq!(rt("(x^y)^z"), "(x^y)^z");
        assert_eq!(rt("a/(b*c)"), "a/(b*c)");
        assert_eq!(
            rt("if(x < 1 and (y > 2 or y < 0), 1e-12, 2.5)"),
            "if(x < 1 and (y > 2 or y < 0), 1e-12, 2.5)"
        );
    }

    #[test]
    fn numbers_round_trip_exactly() {
        for v in [0.1, 1e-12, 6.674e-8, 1.0 / 3.0, 2.0e300, 123456.0, 5e-324] {
            let back: f64 = number(v).parse().unwrap();
            assert_eq!(back.to_bits(), v.to_bits(), "{v}");
        }
    }

    #[test]
    fn latex_forms() {
        let l = |s: &str| latex(&parse(s).unwrap());
        assert_eq!(l("rho0/R_in"), "\\frac{\\rho_{0}}{R_{in}}");
        assert_eq!(l("(R/R0)^(-p)"), "\\left(\\frac{R}{R_{0}}\\right)^{-p}");
        assert_eq!(l("sqrt(x)^3"), "\\left(\\sqrt{x}\\right)^{3}");
        assert_eq!(l("sqrt(phi) * pi"), "\\sqrt{\\phi} \\, \\pi");
        assert_eq!(
            l("Omega_K + k_B + Mdot"),
            "\\Omega_{K} + k_{B} + \\mathrm{Mdot}"
        );
        assert_eq!(l("exp(-x^2)"), "\\exp\\left(-x^{2}\\right)");
        assert_eq!(l("(a + b)^2"), "\\left(a + b\\right)^{2}");
        assert!(l("if(x < 1, 0, x)").starts_with("\\begin{cases} 0 & \\text{if } x < 1"));
    }

    #[test]
    fn errors_render_with_carets() {
        let src = "rho0*(R/R0";
        let e = parse(src).unwrap_err();
        let r = render_error(&e, src);
        let lines: Vec<&str> = r.lines().collect();
        assert_eq!(lines[0], src);
        assert_eq!(lines[1], "          ^");
        assert!(lines[2].contains("column 6"));
        let e = parse("x + foo(2)").unwrap_err();
        assert_eq!(
            render_error(&e, "x + foo(2)").lines().nth(1),
            Some("    ^^^")
        );
    }
}
