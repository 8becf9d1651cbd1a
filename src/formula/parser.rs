//! The parser: tokens to an (unsimplified) tree, by recursive descent.
//! Grammar, loosest first:
//!
//! ```text
//! sum     = product (("+" | "-") product)*
//! product = unary (("*" | "/") unary)*
//! unary   = "-" unary | power
//! power   = atom ("^" unary)?          (right-associative, above unary minus)
//! atom    = number | name | name "(" args ")" | "(" sum ")"
//! cond    = conj ("or" conj)* ;  conj = test ("and" test)*
//! test    = "(" cond ")" | sum cmp sum
//! ```
//!
//! It also checks names against a known list and suggests the closest one.

use super::expr::{arity, func_by_name, is_builtin_constant, FUNCS};
use super::lexer::{lex, Tok, Token};
use super::{CmpOp, Cond, Expr, FormulaError};
use std::ops::Range;

/// Parse `src`; with `known`, every name must be in it or built in.
pub(crate) fn parse(src: &str, known: Option<&[&str]>) -> Result<Expr, FormulaError> {
    let toks = lex(src)?;
    let mut p = Parser {
        src,
        toks,
        pos: 0,
        known,
    };
    if p.peek() == &Tok::End {
        return Err(syntax(
            0..src.len(),
            "expected a formula, found end of formula (it is empty)",
        ));
    }
    let e = p.sum()?;
    if p.peek() != &Tok::End {
        let t = p.here();
        return Err(syntax(
            t.span.clone(),
            format!(
                "expected an operator or end of formula, found {}",
                t.tok.describe()
            ),
        ));
    }
    Ok(e)
}

fn syntax(span: Range<usize>, message: impl Into<String>) -> FormulaError {
    FormulaError::Syntax {
        span,
        message: message.into(),
    }
}

/// The closest candidate by edit distance, if reasonably close.
pub(crate) fn suggest<'a>(name: &str, candidates: impl Iterator<Item = &'a str>) -> Option<String> {
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        let d = if c.eq_ignore_ascii_case(name) {
            0
        } else {
            edit_distance(name, c)
        };
        if best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    let limit = (name.chars().count() / 3).clamp(1, 3);
    best.filter(|(d, c)| *d <= limit && *c != name)
        .map(|(_, c)| c.to_string())
}

/// Levenshtein distance over characters.
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

struct Parser<'a> {
    src: &'a str,
    toks: Vec<Token>,
    pos: usize,
    known: Option<&'a [&'a str]>,
}

impl Parser<'_> {
    fn peek(&self) -> &Tok {
        &self.toks[self.pos].tok
    }
    fn here(&self) -> &Token {
        &self.toks[self.pos]
    }
    fn bump(&mut self) -> Token {
        let t = self.toks[self.pos].clone();
        if self.pos + 1 < self.toks.len() {
            self.pos += 1;
        }
        t
    }
    fn column(&self, byte: usize) -> usize {
        self.src[..byte].chars().count() + 1
    }

    fn sum(&mut self) -> Result<Expr, FormulaError> {
        let mut terms = vec![self.product()?];
        loop {
            match self.peek() {
                Tok::Plus => {
                    self.bump();
                    terms.push(self.product()?);
                }
                Tok::Minus => {
                    self.bump();
                    terms.push(negate(self.product()?));
                }
                _ => break,
            }
        }
        Ok(if terms.len() == 1 {
            terms.pop().unwrap()
        } else {
            Expr::Add(terms)
        })
    }

    fn product(&mut self) -> Result<Expr, FormulaError> {
        let mut factors = vec![self.unary()?];
        loop {
            match self.peek() {
                Tok::Star => {
                    self.bump();
                    factors.push(self.unary()?);
                }
                Tok::Slash => {
                    self.bump();
                    factors.push(self.unary()?.pow(Expr::Num(-1.0)));
                }
                _ => break,
            }
        }
        Ok(if factors.len() == 1 {
            factors.pop().unwrap()
        } else {
            Expr::Mul(factors)
        })
    }

    fn unary(&mut self) -> Result<Expr, FormulaError> {
        if self.peek() == &Tok::Minus {
            self.bump();
            return Ok(negate(self.unary()?));
        }
        self.power()
    }

    fn power(&mut self) -> Result<Expr, FormulaError> {
        let base = self.atom()?;
        if self.peek() == &Tok::Caret {
            self.bump();
            let exp = self.unary()?;
            return Ok(base.pow(exp));
        }
        Ok(base)
    }

    fn atom(&mut self) -> Result<Expr, FormulaError> {
        let t = self.bump();
        match t.tok {
            Tok::Num(v) => Ok(Expr::Num(v)),
            Tok::LParen => {
                let e = self.sum()?;
                self.close(t.span.start)?;
                Ok(e)
            }
            Tok::Name(n) => self.name_or_call(n, t.span),
            other => Err(syntax(
                t.span,
                format!(
                    "expected a number, a name or `(`, found {}",
                    other.describe()
                ),
            )),
        }
    }

    fn close(&mut self, open: usize) -> Result<(), FormulaError> {
        if self.peek() == &Tok::RParen {
            self.bump();
            return Ok(());
        }
        let t = self.here();
        Err(syntax(
            t.span.clone(),
            format!(
                "expected `)` to close the `(` opened at column {}, found {}",
                self.column(open),
                t.tok.describe()
            ),
        ))
    }

    fn name_or_call(&mut self, n: String, span: Range<usize>) -> Result<Expr, FormulaError> {
        let is_call = self.peek() == &Tok::LParen;
        if n == "and" || n == "or" {
            return Err(syntax(
                span,
                format!("`{n}` can only join comparisons inside `if(condition, a, b)`"),
            ));
        }
        if n == "if" {
            if !is_call {
                return Err(syntax(span, "`if` must be called as `if(condition, a, b)`"));
            }
            let open = self.bump().span.start;
            let c = self.cond()?;
            self.expect_comma("the condition of `if`")?;
            let a = self.sum()?;
            self.expect_comma("the value of `if` when the condition holds")?;
            let b = self.sum()?;
            self.close(open)?;
            return Ok(Expr::If(Box::new(c), Box::new(a), Box::new(b)));
        }
        if let Some(f) = func_by_name(&n) {
            if !is_call {
                return Err(syntax(
                    span,
                    format!("`{n}` is a function; call it like `{n}(...)`, found no `(` after it"),
                ));
            }
            let open = self.bump().span.start;
            let mut args = Vec::new();
            if self.peek() != &Tok::RParen {
                args.push(self.sum()?);
                while self.peek() == &Tok::Comma {
                    self.bump();
                    args.push(self.sum()?);
                }
            }
            let end = self.here().span.end;
            self.close(open)?;
            if args.len() != arity(f) {
                return Err(FormulaError::Arity {
                    name: n,
                    span: span.start..end,
                    expected: arity(f),
                    found: args.len(),
                });
            }
            return Ok(Expr::Call(f, args));
        }
        if is_call {
            let mut names: Vec<&str> = FUNCS.iter().map(|(_, n)| *n).collect();
            names.push("if");
            let hint = suggest(&n, names.into_iter())
                .map(|s| format!(" (did you mean `{s}`?)"))
                .unwrap_or_default();
            return Err(syntax(span, format!("unknown function `{n}`{hint}")));
        }
        if let Some(known) = self.known {
            if !is_builtin_constant(&n) && !known.contains(&n.as_str()) {
                let suggestion = suggest(&n, known.iter().copied().chain(["pi"]));
                return Err(FormulaError::UnknownName {
                    name: n,
                    span,
                    suggestion,
                });
            }
        }
        Ok(Expr::Name(n))
    }

    fn expect_comma(&mut self, after: &str) -> Result<(), FormulaError> {
        if self.peek() == &Tok::Comma {
            self.bump();
            return Ok(());
        }
        let t = self.here();
        Err(syntax(
            t.span.clone(),
            format!("expected `,` after {after}, found {}", t.tok.describe()),
        ))
    }

    fn is_word(&self, w: &str) -> bool {
        matches!(self.peek(), Tok::Name(n) if n == w)
    }

    fn cond(&mut self) -> Result<Cond, FormulaError> {
        let mut c = self.conj()?;
        while self.is_word("or") {
            self.bump();
            c = Cond::Or(Box::new(c), Box::new(self.conj()?));
        }
        Ok(c)
    }

    fn conj(&mut self) -> Result<Cond, FormulaError> {
        let mut c = self.test()?;
        while self.is_word("and") {
            self.bump();
            c = Cond::And(Box::new(c), Box::new(self.test()?));
        }
        Ok(c)
    }

    fn test(&mut self) -> Result<Cond, FormulaError> {
        // `(` may open a parenthesised condition or an arithmetic group such
        // as `(a + b) < c`: try the condition first, then fall back.
        if self.peek() == &Tok::LParen {
            let save = self.pos;
            let open = self.bump().span.start;
            if let Ok(c) = self.cond() {
                if self.close(open).is_ok() && !self.at_cmp() && !self.at_arith() {
                    return Ok(c);
                }
            }
            self.pos = save;
        }
        let a = self.sum()?;
        let op = match self.peek() {
            Tok::Lt => CmpOp::Lt,
            Tok::Le => CmpOp::Le,
            Tok::Gt => CmpOp::Gt,
            Tok::Ge => CmpOp::Ge,
            Tok::EqEq => CmpOp::Eq,
            Tok::Ne => CmpOp::Ne,
            other => {
                return Err(syntax(
                    self.here().span.clone(),
                    format!(
                        "expected a comparison (`<`, `<=`, `>`, `>=`, `==`, `!=`) in the \
                         condition, found {}",
                        other.describe()
                    ),
                ))
            }
        };
        self.bump();
        let b = self.sum()?;
        Ok(Cond::Cmp(op, a, b))
    }

    fn at_cmp(&self) -> bool {
        matches!(
            self.peek(),
            Tok::Lt | Tok::Le | Tok::Gt | Tok::Ge | Tok::EqEq | Tok::Ne
        )
    }
    fn at_arith(&self) -> bool {
        matches!(
            self.peek(),
            Tok::Plus | Tok::Minus | Tok::Star | Tok::Slash | Tok::Caret
        )
    }
}

/// `-e`, folding a literal number.
fn negate(e: Expr) -> Expr {
    match e {
        Expr::Num(v) => Expr::Num(-v),
        other => Expr::Mul(vec![Expr::Num(-1.0), other]),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn val(s: &str, x: f64) -> f64 {
        parse(s, None)
            .unwrap()
            .eval(&|n| (n == "x").then_some(x))
            .unwrap()
    }

    #[test]
    fn precedence_and_associativity() {
        assert!((val("-x^2", 3.0) + 9.0).abs() < 1e-12);
        assert!((val("2^3^2", 0.0) - 512.0).abs() < 1e-9);
        assert!((val("x^-2", 2.0) - 0.25).abs() < 1e-12);
        assert!((val("1 - x - 1", 5.0) + 5.0).abs() < 1e-12);
        assert!((val("8/x/2", 2.0) - 2.0).abs() < 1e-12);
        assert!(
            (val("atan2(1, x) + min(x, 2) * max(1, 0)", -1.0) - (1f64.atan2(-1.0) - 1.0)).abs()
                < 1e-12
        );
    }

    #[test]
    fn conditions_with_and_or_and_parentheses() {
        let s = "if((x > 0 and x < 1) or x == 5, 1, (x + 1) * 2)";
        assert!((val(s, 0.5) - 1.0).abs() < 1e-12);
        assert!((val(s, 5.0) - 1.0).abs() < 1e-12);
        assert!((val(s, 2.0) - 6.0).abs() < 1e-12);
        assert!((val("if((x + 1) * 2 >= 4, 1, 0)", 1.0) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn errors_say_what_was_expected_and_found() {
        let e = parse("sqrt(x + 1", None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "expected `)` to close the `(` opened at column 5, found end of formula"
        );
        assert_eq!(e.span(), Some(10..10));
        for bad in [
            "",
            "2 3",
            "*3",
            "sqrt",
            "sqrt + 1",
            "foo(x)",
            "x +",
            "(x",
            "if(x, 1, 2)",
            "x and y",
        ] {
            let e = parse(bad, None).unwrap_err();
            assert!(e.span().is_some(), "{bad}: {e}");
        }
        assert!(parse("2 3", None)
            .unwrap_err()
            .to_string()
            .contains("found number `3`"));
        assert!(parse("expp(x)", None)
            .unwrap_err()
            .to_string()
            .contains("did you mean `exp`"));
        let e = parse("min(x)", None).unwrap_err();
        assert!(matches!(
            e,
            FormulaError::Arity {
                expected: 2,
                found: 1,
                ..
            }
        ));
        assert_eq!(e.span(), Some(0..6));
    }

    #[test]
    fn known_names_and_suggestions() {
        let known = ["rho0", "R_in", "x"];
        assert!(parse("rho0 * x + pi", Some(&known)).is_ok());
        let e = parse("rh0 * x", Some(&known)).unwrap_err();
        assert_eq!(
            e,
            FormulaError::UnknownName {
                name: "rh0".into(),
                span: 0..3,
                suggestion: Some("rho0".into())
            }
        );
        let e = parse("x + zzzzzz", Some(&known)).unwrap_err();
        assert!(matches!(
            e,
            FormulaError::UnknownName {
                suggestion: None,
                ..
            }
        ));
        assert_eq!(edit_distance("kitten", "sitting"), 3);
    }
}
