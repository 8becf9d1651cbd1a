//! Printing as text that the parser reads back: minimal parentheses,
//! `a - b`, `a/b`, `x^(-2)`, exactly round-tripping numbers, a conditional
//! in parentheses when it is an operand, `a < b and b < c` as the chain
//! `a < b < c`. Also the caret rendering of errors, and the precedence and
//! spelling of conditions that `latex` shares. Printing never simplifies;
//! LaTeX is `latex`.

use super::expr::func_name;
use super::{CmpOp, Cond, Expr, FormulaError};

// Binding strength of what a piece of text is, loosest first.
pub(super) const CONDITIONAL: u8 = 0;
pub(super) const SUM: u8 = 1;
pub(super) const PRODUCT: u8 = 2;
pub(super) const NEG: u8 = 3;
pub(super) const POWER: u8 = 4;
pub(super) const ATOM: u8 = 5;

/// Longest formula text an error shows; a longer one is cut to a window
/// around the caret, with `…` where text was left out.
const SHOWN: usize = 120;

/// Render an error: the formula, a caret line, the message.
pub(crate) fn render_error(err: &FormulaError, source: &str) -> String {
    let chars: Vec<char> = source
        .chars()
        .map(|c| if c.is_whitespace() { ' ' } else { c })
        .collect();
    let Some(span) = err.span() else {
        let line: String = if chars.len() > SHOWN {
            chars[..SHOWN].iter().chain(['…'].iter()).collect()
        } else {
            chars.iter().collect()
        };
        return format!("{line}\n{err}");
    };
    let start = source
        .get(..span.start.min(source.len()))
        .map_or(0, |s| s.chars().count());
    let width = source
        .get(span.start.min(source.len())..span.end.min(source.len()))
        .map_or(0, |s| s.chars().count())
        .max(1);
    // The window of text shown: all of it, or SHOWN characters around the caret.
    let (from, to) = if chars.len() <= SHOWN {
        (0, chars.len())
    } else {
        let from = start.saturating_sub(SHOWN / 2).min(chars.len() - SHOWN);
        (from, from + SHOWN)
    };
    let mut line = String::new();
    let mut caret_at = start - from.min(start);
    if from > 0 {
        line.push('…');
        caret_at += 1;
    }
    line.extend(&chars[from..to]);
    if to < chars.len() {
        line.push('…');
    }
    let width = width.min(to.saturating_sub(start).max(1));
    format!(
        "{line}\n{}{}\n{err}",
        " ".repeat(caret_at),
        "^".repeat(width)
    )
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

/// `wrap` for the operand right after an operator or a minus: text that
/// starts with a minus goes in parentheses too, so that a minus is never
/// printed against another (`--1.5` reads back as `1.5`, a literal).
fn wrap_after(p: (String, u8), min: u8) -> String {
    if p.0.starts_with('-') {
        format!("({})", p.0)
    } else {
        wrap(p, min)
    }
}

/// The literal number this text reads back as, if it is one (`1.5`,
/// `-(0.5)`, `-0`): the parser folds a minus into a literal, so a minus in
/// front of a negative one would change the number, not negate a tree.
fn reads_as_number(t: &str) -> Option<f64> {
    let mut s = t;
    let mut negative = false;
    loop {
        if let Some(r) = s.strip_prefix('-') {
            negative = !negative;
            s = r;
        } else if let Some(r) = s.strip_prefix('(').and_then(|r| r.strip_suffix(')')) {
            // A wrong split, as in `(a)*(b)`, leaves a parenthesis behind
            // and so no number.
            s = r;
        } else {
            break;
        }
    }
    if !s.starts_with(|c: char| c.is_ascii_digit()) {
        return None;
    }
    let v: f64 = s.parse().ok()?;
    Some(if negative { -v } else { v })
}

fn reads_as_negative_number(t: &str) -> bool {
    reads_as_number(t).is_some_and(f64::is_sign_negative)
}

/// A power's exponent when it reads back as a negative literal: `x^(-n)`
/// then prints as `1/x^n`, however the tree spells `-n`.
fn negative_exponent(x: &Expr) -> Option<f64> {
    match x {
        Expr::Num(v) => Some(*v),
        Expr::Mul(_) if numeric_only(x) => reads_as_number(&text(x)),
        _ => None,
    }
    .filter(|v| *v < 0.0)
}

/// Only numbers, sums, products and powers: the trees whose text can read
/// back as one number. Checked before printing a subtree to ask that, so
/// that nested minus signs print in linear, not exponential, time.
fn numeric_only(e: &Expr) -> bool {
    match e {
        Expr::Num(_) => true,
        Expr::Add(ts) | Expr::Mul(ts) => ts.iter().all(numeric_only),
        Expr::Pow(b, x) => numeric_only(b) && numeric_only(x),
        Expr::Name(_) | Expr::Call(..) | Expr::If(..) => false,
    }
}

/// Is this term printed with a leading minus (negative number or coefficient)?
pub(super) fn negated(e: &Expr) -> Option<Expr> {
    match e {
        Expr::Num(v) if *v < 0.0 => Some(Expr::Num(-v)),
        Expr::Mul(fs) => match fs.first() {
            Some(Expr::Num(c)) if *c < 0.0 => {
                let mut rest = fs.clone();
                #[allow(clippy::float_cmp)] // exactly -1 is printed as a bare minus
                if *c == -1.0 {
                    // `-(-1.5)` would read back as the literal 1.5: the
                    // product prints as `-1*(-1.5)` instead.
                    if let [r] = &fs[1..] {
                        if numeric_only(r) && reads_as_negative_number(&text(r)) {
                            return None;
                        }
                    }
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
pub(super) fn positive_first(ts: &[Expr]) -> Vec<&Expr> {
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
        Expr::Num(v) if v.is_finite() => {
            (number(*v), if v.is_sign_negative() { NEG } else { ATOM })
        }
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
                        s += &wrap_after(piece(&pos), PRODUCT);
                    }
                    (_, None) => {
                        s += " + ";
                        s += &wrap_after(piece(t), PRODUCT);
                    }
                }
            }
            (s, SUM)
        }
        Expr::Mul(fs) if fs.is_empty() => ("1".into(), ATOM),
        Expr::Mul(_) => {
            if let Some(pos) = negated(e) {
                // `-` applies to a unary (a power or another minus), and
                // the result is a unary that can lead a product bare:
                // `-x^2`, `-(-x)`, `-(x + 1)`. A product after the minus
                // prints as one product, `-x*y`, which reads back as
                // `(-x)*y` and prints the same.
                let p = piece(&pos);
                // `-1*x` would read back as the coefficient -1, printed `-x`.
                let bare_product = p.1 == PRODUCT
                    && !p.0.starts_with('-')
                    && !p.0.starts_with("1*")
                    && !leads_with_product(&pos);
                let level = if bare_product { PRODUCT } else { NEG };
                return (format!("-{}", wrap_after(p, level)), level);
            }
            product(e)
        }
        // x^(-n) reads as 1/x^n.
        Expr::Pow(_, x) if negative_exponent(x).is_some() => product(&Expr::Mul(vec![e.clone()])),
        Expr::Pow(b, x) => {
            let base = wrap(piece(b), ATOM);
            (format!("{base}^{}", wrap(piece(x), POWER)), POWER)
        }
        Expr::Call(f, args) => {
            let a: Vec<String> = args.iter().map(text).collect();
            (format!("{}({})", func_name(*f), a.join(", ")), ATOM)
        }
        Expr::If(c, a, b) => (
            format!(
                "{} if {} else {}",
                wrap(piece(a), SUM),
                cond_text(c),
                text(b)
            ),
            CONDITIONAL,
        ),
    }
}

/// Does the product print with a product in parentheses first, as in
/// `(x*y)*z`? A minus in front, `-(x*y)*z`, would read back as the factor
/// `-x*y` in parentheses, so that negation keeps its own parentheses.
fn leads_with_product(e: &Expr) -> bool {
    let Expr::Mul(fs) = e else { return false };
    fs.iter()
        .find(|f| !matches!(f, Expr::Pow(_, x) if negative_exponent(x).is_some()))
        .is_some_and(|f| piece(f).1 == PRODUCT)
}

/// A product split into numerator and denominator (`x^(-n)` goes below).
fn product(e: &Expr) -> (String, u8) {
    let Expr::Mul(fs) = e else { return piece(e) };
    let mut top = Vec::new();
    let mut bottom = Vec::new();
    for f in fs {
        match f {
            Expr::Pow(b, x) if negative_exponent(x).is_some() => {
                let v = negative_exponent(x).unwrap_or(-1.0);
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

// Binding strength of a condition, loosest first.
pub(super) const OR: u8 = 1;
pub(super) const AND: u8 = 2;
pub(super) const NOT: u8 = 3;
pub(super) const COMPARISON: u8 = 4;

/// How a printer spells the parts of a condition.
pub(super) struct CondStyle {
    pub expr: fn(&Expr) -> String,
    pub op: fn(CmpOp) -> &'static str,
    pub and: &'static str,
    pub or: &'static str,
    pub not: &'static str,
    pub open: &'static str,
    pub close: &'static str,
    /// Put an `and` that is an operand of `or` in parentheses.
    pub group_and_in_or: bool,
}

const TEXT: CondStyle = CondStyle {
    expr: |e| wrap(piece(e), SUM),
    op: op_text,
    and: " and ",
    or: " or ",
    not: "not ",
    open: "(",
    close: ")",
    group_and_in_or: false,
};

fn cond_text(c: &Cond) -> String {
    cond_piece(c, &TEXT).0
}

/// The parts of a conjunction, left to right (`and` is associative).
fn conjuncts<'a>(c: &'a Cond, out: &mut Vec<&'a Cond>) {
    match c {
        Cond::And(a, b) => {
            conjuncts(a, out);
            conjuncts(b, out);
        }
        other => out.push(other),
    }
}

/// Text and binding strength of a condition in a style.
pub(super) fn cond_piece(c: &Cond, st: &CondStyle) -> (String, u8) {
    let wrap = |p: (String, u8), min: u8| {
        if p.1 >= min {
            p.0
        } else {
            format!("{}{}{}", st.open, p.0, st.close)
        }
    };
    match c {
        Cond::Cmp(op, a, b) => (
            format!("{} {} {}", (st.expr)(a), (st.op)(*op), (st.expr)(b)),
            COMPARISON,
        ),
        Cond::And(..) => {
            let mut parts = Vec::new();
            conjuncts(c, &mut parts);
            // Comparisons that share an operand print as one chain.
            let mut out: Vec<String> = Vec::new();
            let mut tail: Option<&Expr> = None;
            for p in parts {
                match (p, tail) {
                    (Cond::Cmp(op, a, b), Some(t)) if a == t => {
                        let last = out.last_mut().expect("a chain has a first link");
                        *last += &format!(" {} {}", (st.op)(*op), (st.expr)(b));
                        tail = Some(b);
                    }
                    _ => {
                        out.push(wrap(cond_piece(p, st), AND + 1));
                        tail = match p {
                            Cond::Cmp(_, _, b) => Some(b),
                            _ => None,
                        };
                    }
                }
            }
            if out.len() == 1 {
                return (out.pop().unwrap_or_default(), COMPARISON);
            }
            (out.join(st.and), AND)
        }
        Cond::Or(a, b) => {
            let operand = |c: &Cond| {
                let p = cond_piece(c, st);
                let min = if st.group_and_in_or && p.1 == AND {
                    AND + 1
                } else {
                    OR
                };
                wrap(p, min)
            };
            (format!("{}{}{}", operand(a), st.or, operand(b)), OR)
        }
        Cond::Not(a) => (format!("{}{}", st.not, wrap(cond_piece(a, st), NOT)), NOT),
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
            rt("1e-12 if x < 1 and (y > 2 or y < 0) else 2.5"),
            "1e-12 if x < 1 and (y > 2 or y < 0) else 2.5"
        );
    }

    #[test]
    fn conditionals_print_with_python_precedence() {
        // The form read back is the form printed: no parentheses that the
        // grammar does not need, and every one it does.
        for s in [
            "x + 1 if x > 0 else y",
            "a if c > 1 else b if c > 0 else d",
            "(a if c > 1 else b) if c > 0 else d",
            "2*(x if x > 0 else -x)",
            "-(x if x > 0 else 1)",
            "x^(2 if x > 0 else 3)",
            "(x if x > 0 else 1)^2",
            "(x if x > 0 else 1) + y",
            "y - (x if x > 0 else 1)",
            "sqrt(x if x > 0 else 0)",
            "1 if (x if x > 0 else -x) < 2 else 0",
            "1 if not x < 1 else 0",
            "1 if not (x < 1 and y < 2) else 0",
            "1 if not x < 1 or y < 2 and x > 0 else 0",
            "1 if (x < 1 or y < 2) and x > 0 else 0",
            "1 if 0 < x <= y < 3 else 0",
            "1 if 0 < x and y < 3 else 0",
        ] {
            assert_eq!(rt(s), s);
        }
        // Spelled out, a chain prints as one.
        assert_eq!(rt("1 if 0 < x and x <= 2 else 0"), "1 if 0 < x <= 2 else 0");
    }

    #[test]
    fn numbers_round_trip_exactly() {
        for v in [0.1, 1e-12, 6.674e-8, 1.0 / 3.0, 2.0e300, 123456.0, 5e-324] {
            let back: f64 = number(v).parse().unwrap();
            assert_eq!(back.to_bits(), v.to_bits(), "{v}");
        }
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
