//! The old conditional `if(condition, a, b)` is not our syntax. The parser
//! reads it far enough to know where its parts are; this module remembers
//! them and turns the whole formula into the new form,
//! `a if condition else b`, for the error message, with parentheses where a
//! conditional is an operand. It does not parse.

use super::FormulaError;
use std::ops::Range;

/// One old-form conditional: where its parts sit in the source.
struct Node {
    keyword: Range<usize>,
    cond: Range<usize>,
    then: Range<usize>,
    other: Range<usize>,
    whole: Range<usize>,
    /// It fills a formula slot on its own (the whole formula, an argument,
    /// a parenthesis, an `else` branch), so it needs no parentheses.
    bare: bool,
}

/// The old-form conditionals met while parsing.
#[derive(Default)]
pub(crate) struct Legacy {
    nodes: Vec<Node>,
}

impl Legacy {
    /// Remember an old-form conditional.
    pub(crate) fn record(
        &mut self,
        keyword: Range<usize>,
        cond: Range<usize>,
        then: Range<usize>,
        other: Range<usize>,
        whole: Range<usize>,
    ) {
        self.nodes.push(Node {
            keyword,
            cond,
            then,
            other,
            whole,
            bare: false,
        });
    }

    /// `span` is a whole formula slot: an old-form conditional that is all
    /// of it needs no parentheses in the rewrite.
    pub(crate) fn slot(&mut self, span: &Range<usize>) {
        if let Some(n) = self.nodes.iter_mut().find(|n| n.whole == *span) {
            n.bare = true;
        }
    }

    /// An error at the first old-form conditional showing the formula in
    /// the new form, or Ok when there is none.
    pub(crate) fn refuse(&self, src: &str) -> Result<(), FormulaError> {
        let Some(first) = self.nodes.iter().min_by_key(|n| n.keyword.start) else {
            return Ok(());
        };
        Err(FormulaError::Syntax {
            span: first.keyword.clone(),
            message: format!(
                "`if(...)` is not our syntax: write `{}`",
                self.rewrite(src, 0..src.len()).trim()
            ),
        })
    }

    /// The source in `range` with every old-form conditional in it rewritten.
    fn rewrite(&self, src: &str, range: Range<usize>) -> String {
        let mut inner: Vec<&Node> = self
            .nodes
            .iter()
            .filter(|n| n.whole.start >= range.start && n.whole.end <= range.end)
            .collect();
        inner.sort_by_key(|n| n.whole.start);
        let mut out = String::new();
        let mut at = range.start;
        for n in inner {
            if n.whole.start < at {
                continue; // inside one already rewritten
            }
            out += &src[at..n.whole.start];
            let text = format!(
                "{} if {} else {}",
                self.rewrite(src, n.then.clone()),
                self.rewrite(src, n.cond.clone()),
                self.rewrite(src, n.other.clone())
            );
            out += &if n.bare { text } else { format!("({text})") };
            at = n.whole.end;
        }
        out += &src[at..range.end];
        out
    }
}
