//! The parser: tokens to an (unsimplified) tree, by recursive descent over
//! Python's precedence. Grammar, loosest first:
//!
//! ```text
//! formula  = either ("if" either "else" formula)?   (right-associative)
//! either   = both ("or" both)*
//! both     = negation ("and" negation)*
//! negation = "not" negation | chain
//! chain    = sum (cmp sum)*             (`lo < x <= hi`: `lo < x and x <= hi`)
//! sum      = product (("+" | "-") product)*
//! product  = unary (("*" | "/") unary)*
//! unary    = "-" unary | power
//! power    = atom ("^" unary)?          (right-associative, above unary minus)
//! atom     = number | name | name "(" formula ("," formula)* ")" | "(" formula ")"
//! ```
//!
//! Each rule yields a value or a condition; the types are checked as the
//! tree is built (the condition after `if` must compare, the operands of
//! arithmetic must be values), so a parenthesis may hold either without
//! backtracking. It also checks names against a known list and suggests the
//! closest one (`hints`). The old call form `if(c, a, b)` is read far enough to print
//! its rewrite (`legacy`) and then refused.

use super::expr::{arity, func_by_name, is_builtin_constant, FUNCS, KEYWORDS};
use super::hints::suggest;
use super::legacy::Legacy;
use super::lexer::{lex, Tok, Token};
use super::{CmpOp, Cond, Expr, FormulaError};
use std::ops::Range;

/// Parse `src`; with `known`, every name must be in it or built in.
pub(crate) fn parse(src: &str, known: Option<&[&str]>) -> Result<Expr, FormulaError> {
    run(src, known).0
}

/// Is `src` refused for being nested deeper than [`MAX_NESTING`]? The
/// printer asks, to fall back to its form with fewer parentheses.
pub(crate) fn too_deep(src: &str) -> bool {
    run(src, None).1
}

/// The parse, and whether the nesting limit was hit.
fn run(src: &str, known: Option<&[&str]>) -> (Result<Expr, FormulaError>, bool) {
    let toks = match lex(src) {
        Ok(t) => t,
        Err(e) => return (Err(e), false),
    };
    let mut p = Parser {
        src,
        toks,
        pos: 0,
        known,
        legacy: Legacy::default(),
        depth: 0,
        too_deep: false,
    };
    let result = p.whole();
    // The old form is reported first: its rewrite is what the user needs
    // before anything else can be read.
    let result = p.legacy.refuse(src).and(result);
    (result, p.too_deep)
}

fn syntax(span: Range<usize>, message: impl Into<String>) -> FormulaError {
    FormulaError::Syntax {
        span,
        message: message.into(),
    }
}

/// What a piece of source parsed to.
enum Node {
    Value(Expr),
    Test(Cond),
}

/// A parsed piece and the bytes it covers (first to last token).
struct Item {
    node: Node,
    span: Range<usize>,
}

impl Item {
    fn value(e: Expr, span: Range<usize>) -> Item {
        Item {
            node: Node::Value(e),
            span,
        }
    }
    fn test(c: Cond, span: Range<usize>) -> Item {
        Item {
            node: Node::Test(c),
            span,
        }
    }
}

const A_CONDITIONAL: &str = "a conditional reads `a if condition else b`";

/// The deepest nesting a formula may have (parentheses, call arguments,
/// `else` branches, `-`, `^`, `not`, each one level): the parser and every
/// walk over the tree recurse, and a deeper formula would exhaust the
/// stack. Hand-written laws stay far below.
pub(crate) const MAX_NESTING: usize = 200;

struct Parser<'a> {
    src: &'a str,
    toks: Vec<Token>,
    pos: usize,
    known: Option<&'a [&'a str]>,
    legacy: Legacy,
    /// Current nesting (see [`MAX_NESTING`]).
    depth: usize,
    /// Set when the nesting limit refused the formula.
    too_deep: bool,
}

impl Parser<'_> {
    /// Runs `inner` one level deeper, refusing a formula nested deeper
    /// than [`MAX_NESTING`] at the token where it happens.
    fn nested(
        &mut self,
        inner: fn(&mut Self) -> Result<Item, FormulaError>,
    ) -> Result<Item, FormulaError> {
        if self.depth >= MAX_NESTING {
            self.too_deep = true;
            return Err(syntax(
                self.here().span.clone(),
                format!(
                    "the formula is nested more than {MAX_NESTING} levels deep here (parentheses, \
                     call arguments, conditionals, `-`, `^`, `not`); give inner parts names of \
                     their own under `parameters`"
                ),
            ));
        }
        self.depth += 1;
        let r = inner(self);
        self.depth -= 1;
        r
    }

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
    fn is_word(&self, w: &str) -> bool {
        matches!(self.peek(), Tok::Name(n) if n == w)
    }
    /// An error at the current token: "expected {what}, found {token}{tail}".
    fn expected(&self, what: &str, tail: &str) -> FormulaError {
        let t = self.here();
        syntax(
            t.span.clone(),
            format!("expected {what}, found {}{tail}", t.tok.describe()),
        )
    }

    /// The source of an item, shortened for a message.
    fn quote(&self, span: &Range<usize>) -> String {
        let s = &self.src[span.clone()];
        if s.chars().count() > 40 {
            format!("`{}...`", s.chars().take(37).collect::<String>())
        } else {
            format!("`{s}`")
        }
    }

    /// The item as a value; `role` completes "expected a formula ...".
    fn value(&self, it: Item, role: &str) -> Result<Expr, FormulaError> {
        match it.node {
            Node::Value(e) => Ok(e),
            Node::Test(_) => Err(syntax(
                it.span.clone(),
                format!(
                    "expected a formula{}, found the condition {}; a condition \
                     chooses between values: `a if condition else b`",
                    spaced(role),
                    self.quote(&it.span)
                ),
            )),
        }
    }

    /// The item as a condition; `role` completes "expected a condition ...".
    fn test(&self, it: Item, role: &str) -> Result<Cond, FormulaError> {
        match it.node {
            Node::Test(c) => Ok(c),
            Node::Value(_) => Err(syntax(
                it.span.clone(),
                format!(
                    "expected a condition{}, found the formula {}; a condition \
                     compares (`<`, `<=`, `>`, `>=`, `==`, `!=`), as in `x > 0`",
                    spaced(role),
                    self.quote(&it.span)
                ),
            )),
        }
    }

    fn whole(&mut self) -> Result<Expr, FormulaError> {
        if self.peek() == &Tok::End {
            return Err(syntax(
                0..self.src.len(),
                "expected a formula, found end of formula (it is empty)",
            ));
        }
        let it = self.formula()?;
        if self.is_word("else") {
            return Err(self.expected(
                "an operator or end of formula",
                &format!(" without an `if` before it; {A_CONDITIONAL}"),
            ));
        }
        if self.peek() != &Tok::End {
            return Err(self.expected("an operator or end of formula", ""));
        }
        self.legacy.slot(&it.span);
        self.value(it, "")
    }

    /// A formula slot: the whole, an argument, a parenthesis, a branch.
    fn formula(&mut self) -> Result<Item, FormulaError> {
        let then = self.either()?;
        if !self.is_word("if") {
            return Ok(then);
        }
        let kw = self.bump().span;
        let start = then.span.start;
        let then = self.value(then, "before `if`")?;
        if self.peek() == &Tok::End || self.is_word("else") {
            return Err(self.expected("a condition after `if`", &format!("; {A_CONDITIONAL}")));
        }
        let cond = self.either()?;
        let cond = self.test(cond, "after `if`")?;
        if !self.is_word("else") {
            return Err(self.expected(
                &format!(
                    "`else` and the value when the condition fails (the `if` at column {})",
                    self.column(kw.start)
                ),
                &format!("; {A_CONDITIONAL}"),
            ));
        }
        self.bump();
        if self.peek() == &Tok::End {
            return Err(self.expected("a formula after `else`", ""));
        }
        let other = self.nested(Self::formula)?;
        self.legacy.slot(&other.span);
        let end = other.span.end;
        let other = self.value(other, "after `else`")?;
        Ok(Item::value(
            Expr::If(Box::new(cond), Box::new(then), Box::new(other)),
            start..end,
        ))
    }

    fn either(&mut self) -> Result<Item, FormulaError> {
        self.joined("or", Self::both, |a, b| Cond::Or(Box::new(a), Box::new(b)))
    }

    fn both(&mut self) -> Result<Item, FormulaError> {
        self.joined("and", Self::negation, |a, b| {
            Cond::And(Box::new(a), Box::new(b))
        })
    }

    /// Conditions joined by a connective, left-associative: `next (word next)*`.
    fn joined(
        &mut self,
        word: &str,
        next: fn(&mut Self) -> Result<Item, FormulaError>,
        join: fn(Cond, Cond) -> Cond,
    ) -> Result<Item, FormulaError> {
        let mut it = next(self)?;
        while self.is_word(word) {
            self.bump();
            let start = it.span.start;
            let a = self.test(it, &format!("before `{word}`"))?;
            let b = next(self)?;
            let end = b.span.end;
            let b = self.test(b, &format!("after `{word}`"))?;
            it = Item::test(join(a, b), start..end);
        }
        Ok(it)
    }

    fn negation(&mut self) -> Result<Item, FormulaError> {
        if !self.is_word("not") {
            return self.chain();
        }
        let start = self.bump().span.start;
        let it = self.nested(Self::negation)?;
        let end = it.span.end;
        let c = self.test(it, "after `not`")?;
        Ok(Item::test(Cond::Not(Box::new(c)), start..end))
    }

    fn cmp_op(&self) -> Option<CmpOp> {
        Some(match self.peek() {
            Tok::Lt => CmpOp::Lt,
            Tok::Le => CmpOp::Le,
            Tok::Gt => CmpOp::Gt,
            Tok::Ge => CmpOp::Ge,
            Tok::EqEq => CmpOp::Eq,
            Tok::Ne => CmpOp::Ne,
            _ => return None,
        })
    }

    /// Comparisons, chained as in Python: `a < b <= c` is `a < b and b <= c`.
    fn chain(&mut self) -> Result<Item, FormulaError> {
        let first = self.sum()?;
        let Some(mut op) = self.cmp_op() else {
            return Ok(first);
        };
        let span = first.span.clone();
        let mut lhs = self.value(first, "before a comparison")?;
        let mut cond: Option<Cond> = None;
        let mut end = span.end;
        loop {
            let sym = self.bump().tok.describe();
            let rhs = self.sum()?;
            end = end.max(rhs.span.end);
            let rhs = self.value(rhs, &format!("after {sym}"))?;
            let cmp = Cond::Cmp(op, lhs, rhs.clone());
            cond = Some(match cond {
                None => cmp,
                Some(c) => Cond::And(Box::new(c), Box::new(cmp)),
            });
            lhs = rhs;
            match self.cmp_op() {
                Some(next) => op = next,
                None => break,
            }
        }
        Ok(Item::test(
            cond.expect("one comparison at least"),
            span.start..end,
        ))
    }

    /// A left-associative arithmetic level: `first (op next)*`.
    fn arith(
        &mut self,
        next: fn(&mut Self) -> Result<Item, FormulaError>,
        ops: &[(Tok, &str)],
        build: fn(Vec<Expr>) -> Expr,
        join: fn(&Tok, Expr) -> Expr,
    ) -> Result<Item, FormulaError> {
        let first = next(self)?;
        let Some((_, sym)) = ops.iter().find(|(t, _)| t == self.peek()) else {
            return Ok(first);
        };
        let start = first.span.start;
        let mut end = first.span.end;
        let mut parts = vec![self.value(first, &format!("before `{sym}`"))?];
        while let Some((tok, sym)) = ops.iter().find(|(t, _)| t == self.peek()) {
            self.bump();
            let it = next(self)?;
            end = it.span.end;
            parts.push(join(tok, self.value(it, &format!("after `{sym}`"))?));
        }
        Ok(Item::value(build(parts), start..end))
    }

    fn sum(&mut self) -> Result<Item, FormulaError> {
        self.arith(
            Self::product,
            &[(Tok::Plus, "+"), (Tok::Minus, "-")],
            Expr::Add,
            |t, e| if *t == Tok::Minus { negate(e) } else { e },
        )
    }

    fn product(&mut self) -> Result<Item, FormulaError> {
        self.arith(
            Self::unary,
            &[(Tok::Star, "*"), (Tok::Slash, "/")],
            Expr::Mul,
            |t, e| {
                if *t == Tok::Slash {
                    e.pow(Expr::Num(-1.0))
                } else {
                    e
                }
            },
        )
    }

    fn unary(&mut self) -> Result<Item, FormulaError> {
        if self.peek() != &Tok::Minus {
            return self.power();
        }
        let start = self.bump().span.start;
        let it = self.nested(Self::unary)?;
        let end = it.span.end;
        Ok(Item::value(
            negate(self.value(it, "after `-`")?),
            start..end,
        ))
    }

    fn power(&mut self) -> Result<Item, FormulaError> {
        let base = self.atom()?;
        if self.peek() != &Tok::Caret {
            return Ok(base);
        }
        self.bump();
        let start = base.span.start;
        let base = self.value(base, "before `^`")?;
        let exp = self.nested(Self::unary)?;
        let end = exp.span.end;
        let exp = self.value(exp, "after `^`")?;
        Ok(Item::value(base.pow(exp), start..end))
    }

    fn atom(&mut self) -> Result<Item, FormulaError> {
        let t = self.bump();
        match t.tok {
            Tok::Num(v) => Ok(Item::value(Expr::Num(v), t.span)),
            Tok::LParen => {
                let inner = self.nested(Self::formula)?;
                self.legacy.slot(&inner.span);
                let end = self.close(t.span.start)?;
                Ok(Item {
                    node: inner.node,
                    span: t.span.start..end,
                })
            }
            Tok::Name(n) if KEYWORDS.contains(&n.as_str()) => self.keyword(&n, t.span),
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

    /// Consume `)` and return the byte after it.
    fn close(&mut self, open: usize) -> Result<usize, FormulaError> {
        if self.peek() == &Tok::RParen {
            return Ok(self.bump().span.end);
        }
        Err(self.expected(
            &format!(
                "`)` to close the `(` opened at column {}",
                self.column(open)
            ),
            "",
        ))
    }

    /// A reserved word where a value must start.
    fn keyword(&mut self, word: &str, span: Range<usize>) -> Result<Item, FormulaError> {
        if word == "if" && self.peek() == &Tok::LParen {
            return self.legacy_if(span);
        }
        let why = match word {
            "if" => format!("`if` comes after the value it chooses; {A_CONDITIONAL}"),
            "else" => format!("`else` follows a condition; {A_CONDITIONAL}"),
            "not" => "`not` negates a condition, as in `a if not x < 1 else b`".into(),
            _ => format!("`{word}` joins two conditions, as in `x > 0 {word} x < 1`"),
        };
        Err(syntax(
            span,
            format!("expected a number, a name or `(`, found `{word}`: {why}"),
        ))
    }

    /// The old call form `if(condition, a, b)`, read so that its rewrite can
    /// be printed; the parse as a whole then fails (see `Legacy::refuse`).
    fn legacy_if(&mut self, kw: Range<usize>) -> Result<Item, FormulaError> {
        let open = self.bump().span.start;
        let c = self.either()?;
        let c_span = c.span.clone();
        let c = self.test(c, "as the first argument of `if(...)`")?;
        self.comma("the condition")?;
        let a = self.nested(Self::formula)?;
        let a_span = a.span.clone();
        let a = self.value(a, "as the second argument of `if(...)`")?;
        self.comma("the second argument")?;
        let b = self.nested(Self::formula)?;
        self.legacy.slot(&b.span);
        let b_span = b.span.clone();
        let b = self.value(b, "as the third argument of `if(...)`")?;
        let end = self.close(open)?;
        let whole = kw.start..end;
        self.legacy
            .record(kw, c_span, a_span, b_span, whole.clone());
        Ok(Item::value(
            Expr::If(Box::new(c), Box::new(a), Box::new(b)),
            whole,
        ))
    }

    fn comma(&mut self, after: &str) -> Result<(), FormulaError> {
        if self.peek() == &Tok::Comma {
            self.bump();
            return Ok(());
        }
        Err(self.expected(&format!("`,` after {after} of `if(...)`"), ""))
    }

    fn name_or_call(&mut self, n: String, span: Range<usize>) -> Result<Item, FormulaError> {
        if self.peek() != &Tok::LParen {
            if func_by_name(&n).is_some() {
                return Err(syntax(
                    span,
                    format!("`{n}` is a function; call it like `{n}(...)`, found no `(` after it"),
                ));
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
            return Ok(Item::value(Expr::Name(n), span));
        }
        let Some(f) = func_by_name(&n) else {
            let hint = suggest(&n, FUNCS.iter().map(|(_, n)| *n))
                .map(|s| format!(" (did you mean `{s}`?)"))
                .unwrap_or_default();
            return Err(syntax(span, format!("unknown function `{n}`{hint}")));
        };
        let open = self.bump().span.start;
        let mut args = Vec::new();
        if self.peek() != &Tok::RParen {
            loop {
                let a = self.nested(Self::formula)?;
                self.legacy.slot(&a.span);
                args.push(self.value(a, &format!("as an argument of `{n}`"))?);
                if self.peek() != &Tok::Comma {
                    break;
                }
                self.bump();
            }
        }
        let end = self.close(open)?;
        if args.len() != arity(f) {
            return Err(FormulaError::Arity {
                name: n,
                span: span.start..end,
                expected: arity(f),
                found: args.len(),
            });
        }
        Ok(Item::value(Expr::Call(f, args), span.start..end))
    }
}

/// `role` with a space before it, or nothing.
fn spaced(role: &str) -> String {
    if role.is_empty() {
        String::new()
    } else {
        format!(" {role}")
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
#[path = "parser_tests.rs"]
mod tests;
