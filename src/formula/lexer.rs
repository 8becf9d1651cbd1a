//! The lexer: formula text to tokens with byte spans. It knows the shapes of
//! numbers, names and operators, not the grammar (that is `parser`).

use super::FormulaError;
use std::ops::Range;

/// One token kind.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Tok {
    Num(f64),
    Name(String),
    Plus,
    Minus,
    Star,
    Slash,
    Caret,
    LParen,
    RParen,
    Comma,
    Lt,
    Le,
    Gt,
    Ge,
    EqEq,
    Ne,
    End,
}

/// A token and where it sits in the source.
#[derive(Clone, Debug)]
pub(crate) struct Token {
    pub tok: Tok,
    pub span: Range<usize>,
}

impl Tok {
    /// How the token reads in an error message.
    pub fn describe(&self) -> String {
        match self {
            Tok::Num(v) => format!("number `{v}`"),
            Tok::Name(n) if super::expr::KEYWORDS.contains(&n.as_str()) => format!("`{n}`"),
            Tok::Name(n) => format!("name `{n}`"),
            Tok::End => "end of formula".to_string(),
            other => format!("`{}`", other.symbol()),
        }
    }

    fn symbol(&self) -> &'static str {
        match self {
            Tok::Plus => "+",
            Tok::Minus => "-",
            Tok::Star => "*",
            Tok::Slash => "/",
            Tok::Caret => "^",
            Tok::LParen => "(",
            Tok::RParen => ")",
            Tok::Comma => ",",
            Tok::Lt => "<",
            Tok::Le => "<=",
            Tok::Gt => ">",
            Tok::Ge => ">=",
            Tok::EqEq => "==",
            Tok::Ne => "!=",
            _ => "?",
        }
    }
}

/// Split the source into tokens; the last token is always `End`.
pub(crate) fn lex(src: &str) -> Result<Vec<Token>, FormulaError> {
    let b = src.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        if c.is_ascii_whitespace() {
            i += 1;
            continue;
        }
        let start = i;
        if c.is_ascii_digit() || (c == b'.' && b.get(i + 1).is_some_and(u8::is_ascii_digit)) {
            while i < b.len() && b[i].is_ascii_digit() {
                i += 1;
            }
            if i < b.len() && b[i] == b'.' {
                i += 1;
                while i < b.len() && b[i].is_ascii_digit() {
                    i += 1;
                }
            }
            if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
                let mut j = i + 1;
                if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
                    j += 1;
                }
                if j < b.len() && b[j].is_ascii_digit() {
                    while j < b.len() && b[j].is_ascii_digit() {
                        j += 1;
                    }
                    i = j;
                }
            }
            let text = &src[start..i];
            let v: f64 = text.parse().map_err(|_| FormulaError::Syntax {
                span: start..i,
                message: format!("`{text}` is not a number"),
            })?;
            if !v.is_finite() {
                return Err(FormulaError::Syntax {
                    span: start..i,
                    message: format!(
                        "`{text}` is beyond the largest double (1.8e308); write the value in units where it is smaller"
                    ),
                });
            }
            out.push(Token {
                tok: Tok::Num(v),
                span: start..i,
            });
            continue;
        }
        if c.is_ascii_alphabetic() || c == b'_' {
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
                i += 1;
            }
            out.push(Token {
                tok: Tok::Name(src[start..i].to_string()),
                span: start..i,
            });
            continue;
        }
        let two = b.get(i + 1).copied();
        let (tok, len) = match (c, two) {
            (b'<', Some(b'=')) => (Tok::Le, 2),
            (b'>', Some(b'=')) => (Tok::Ge, 2),
            (b'=', Some(b'=')) => (Tok::EqEq, 2),
            (b'!', Some(b'=')) => (Tok::Ne, 2),
            (b'<', _) => (Tok::Lt, 1),
            (b'>', _) => (Tok::Gt, 1),
            (b'+', _) => (Tok::Plus, 1),
            (b'-', _) => (Tok::Minus, 1),
            (b'*', Some(b'*')) => {
                return Err(FormulaError::Syntax {
                    span: i..i + 2,
                    message: "expected an operator, found `**`; powers are written `^`".into(),
                })
            }
            (b'*', _) => (Tok::Star, 1),
            (b'/', _) => (Tok::Slash, 1),
            (b'^', _) => (Tok::Caret, 1),
            (b'(', _) => (Tok::LParen, 1),
            (b')', _) => (Tok::RParen, 1),
            (b',', _) => (Tok::Comma, 1),
            (b'=', _) => {
                return Err(FormulaError::Syntax {
                    span: i..i + 1,
                    message: "expected a formula, found `=`; comparisons are written `==`".into(),
                })
            }
            _ => {
                let ch = src[i..].chars().next().unwrap_or('?');
                return Err(FormulaError::Syntax {
                    span: i..i + ch.len_utf8(),
                    message: format!(
                        "expected a number, name, operator or parenthesis, found `{ch}`"
                    ),
                });
            }
        };
        out.push(Token {
            tok,
            span: i..i + len,
        });
        i += len;
    }
    out.push(Token {
        tok: Tok::End,
        span: b.len()..b.len(),
    });
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(s: &str) -> Vec<Tok> {
        lex(s).unwrap().into_iter().map(|t| t.tok).collect()
    }

    #[test]
    fn numbers_in_all_forms() {
        for (s, v) in [
            ("1", 1.0),
            ("2.5", 2.5),
            ("1e-3", 1e-3),
            (".5", 0.5),
            ("3E+2", 300.0),
        ] {
            match &kinds(s)[0] {
                Tok::Num(x) => assert!((x - v).abs() < 1e-15, "{s}"),
                t => panic!("{s}: {t:?}"),
            }
        }
        // `2e` is a number followed by the name `e`, not an exponent.
        assert_eq!(kinds("2e")[1], Tok::Name("e".into()));
    }

    #[test]
    fn names_and_operators_with_spans() {
        let t = lex("rho0 <= R_in").unwrap();
        assert_eq!(t[0].tok, Tok::Name("rho0".into()));
        assert_eq!(t[1].tok, Tok::Le);
        assert_eq!(t[1].span, 5..7);
        assert_eq!(t[2].span, 8..12);
        assert_eq!(t[3].tok, Tok::End);
    }

    #[test]
    fn bad_characters_are_reported_with_span() {
        let e = lex("x $ 2").unwrap_err();
        assert_eq!(e.span(), Some(2..3));
        assert!(lex("x ** 2").is_err());
    }
}
