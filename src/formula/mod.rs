//! The formula engine: our own small computer-algebra system for the laws a
//! profile states. It parses plain mathematical text, differentiates,
//! simplifies, compiles to a flat instruction program and prints back as text
//! and LaTeX. It knows nothing of physics: names are just names.
//!
//! This file holds the public contract (types and entry points); the work is
//! split into submodules: `lexer` and `parser` (text to tree, with `hints`
//! for misspelt names), `expr` (tree helpers and f64 evaluation),
//! `simplify`, `diff`, `compile` (the stack machine, kept as the reference),
//! `dag`, `lanes` and `kernel` (the block [`Kernel`] under [`Program`]),
//! `print` (text), `latex`, `legacy` (the rewrite shown for the old
//! `if(c, a, b)` form), `params` (parameter resolution) and `extended`
//! (high-precision evaluation).

use std::collections::{BTreeMap, BTreeSet};
use std::fmt;
use std::ops::Range;

mod compile;
mod dag;
mod diff;
mod expr;
mod extended;
mod hints;
mod kernel;
mod lanes;
mod latex;
pub use latex::latex_lhs;
pub mod code;
mod legacy;
mod lexer;
mod params;
mod parser;
mod print;
mod simplify;

pub use compile::StackProgram;
pub use expr::{func_by_name, func_name, Visit, KEYWORDS};
pub use kernel::{Kernel, Workspace};
pub use params::parameter_using;

/// A function the formula language knows.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[non_exhaustive]
pub enum Func {
    Sqrt,
    Exp,
    Log,
    Log10,
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Atan2,
    Sinh,
    Cosh,
    Tanh,
    Abs,
    Min,
    Max,
}

/// A comparison operator inside a condition.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum CmpOp {
    Lt,
    Le,
    Gt,
    Ge,
    Eq,
    Ne,
}

/// The condition of a conditional `a if condition else b`. A chained
/// comparison `lo < x <= hi` is the conjunction `lo < x and x <= hi`.
#[derive(Clone, Debug, PartialEq)]
pub enum Cond {
    /// `a < b` and the other comparisons.
    Cmp(CmpOp, Expr, Expr),
    /// `c and d`.
    And(Box<Cond>, Box<Cond>),
    /// `c or d`.
    Or(Box<Cond>, Box<Cond>),
    /// `not c`.
    Not(Box<Cond>),
}

/// A formula as a tree. Sums and products are n-ary so that simplification
/// can flatten and collect; subtraction is `a + (-1)*b`, division `a * b^-1`.
#[derive(Clone, Debug, PartialEq)]
pub enum Expr {
    /// A number.
    Num(f64),
    /// A name: a parameter, a coordinate or a built-in constant (`pi`).
    Name(String),
    /// A sum of terms.
    Add(Vec<Expr>),
    /// A product of factors.
    Mul(Vec<Expr>),
    /// A power `base ^ exponent`.
    Pow(Box<Expr>, Box<Expr>),
    /// A function call.
    Call(Func, Vec<Expr>),
    /// The conditional `then if condition else otherwise`.
    If(Box<Cond>, Box<Expr>, Box<Expr>),
}

/// Everything that can go wrong with a formula.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FormulaError {
    /// The text does not parse; `span` is the byte range at fault.
    #[error("{message}")]
    Syntax { span: Range<usize>, message: String },
    /// A name that is neither known nor built in.
    #[error("unknown name `{name}`{}", suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default())]
    UnknownName {
        name: String,
        span: Range<usize>,
        suggestion: Option<String>,
    },
    /// Parameters defined in terms of each other; the cycle is listed in order,
    /// first name repeated at the end (`a -> b -> a`).
    #[error("parameters depend on each other in a cycle: {}", cycle.join(" -> "))]
    Cycle { cycle: Vec<String> },
    /// A function called with the wrong number of arguments.
    #[error("`{name}` takes {expected} argument(s), found {found}")]
    Arity {
        name: String,
        span: Range<usize>,
        expected: usize,
        found: usize,
    },
}

impl FormulaError {
    /// The byte span at fault, if the error has one.
    pub fn span(&self) -> Option<Range<usize>> {
        match self {
            FormulaError::Syntax { span, .. }
            | FormulaError::UnknownName { span, .. }
            | FormulaError::Arity { span, .. } => Some(span.clone()),
            _ => None,
        }
    }
    /// The formula on one line, a caret line under the fault, and the message.
    pub fn render(&self, source: &str) -> String {
        print::render_error(self, source)
    }
}

/// Parse a formula. Any name is accepted.
pub fn parse(source: &str) -> Result<Expr, FormulaError> {
    parser::parse(source, None)
}

/// Parse a formula whose names must all be in `known` (or built in, like
/// `pi`); an unknown name is reported with its span and the closest known name.
pub fn parse_with_names(source: &str, known: &[&str]) -> Result<Expr, FormulaError> {
    parser::parse(source, Some(known))
}

/// Resolve parameters defined as formulas of each other into numbers, in
/// dependency order. `defs` is (name, formula); `constants` are names with
/// fixed values available to every parameter (e.g. `G`). A cycle is an error
/// naming it.
pub fn resolve_parameters(
    defs: &[(String, Expr)],
    constants: &[(String, f64)],
) -> Result<Vec<(String, f64)>, FormulaError> {
    params::resolve(defs, constants)
}

impl Expr {
    /// A number.
    pub fn num(v: f64) -> Expr {
        Expr::Num(v)
    }
    /// A name.
    pub fn name(n: &str) -> Expr {
        Expr::Name(n.to_string())
    }
    /// `self ^ e` (not simplified).
    pub fn pow(self, e: Expr) -> Expr {
        Expr::Pow(Box::new(self), Box::new(e))
    }
    /// A function call (not simplified). `args` must have the function's
    /// arity (two for `atan2`, `min`, `max`, one otherwise).
    pub fn call(f: Func, args: Vec<Expr>) -> Expr {
        debug_assert_eq!(
            args.len(),
            expr::arity(f),
            "wrong number of arguments for {f:?}"
        );
        Expr::Call(f, args)
    }
    /// The derivative by `name`, simplified.
    pub fn diff(&self, name: &str) -> Expr {
        diff::derivative(self, name).simplify()
    }
    /// A simplified equal formula.
    pub fn simplify(&self) -> Expr {
        simplify::simplify(self)
    }
    /// Replace names by formulas (simultaneously), then simplify.
    pub fn substitute(&self, map: &BTreeMap<String, Expr>) -> Expr {
        expr::substitute(self, map).simplify()
    }
    /// `factor × self` with the product distributed over the terms of a
    /// sum, each term simplified on its own, so that factors cancel term by
    /// term: `R*(a + b/rho)` becomes `R*a + R*b/rho`.
    pub fn distribute(&self, factor: &Expr) -> Expr {
        match self.simplify() {
            Expr::Add(terms) => Expr::Add(
                terms
                    .into_iter()
                    .map(|t| (factor.clone() * t).simplify())
                    .collect(),
            )
            .simplify(),
            other => (factor.clone() * other).simplify(),
        }
    }
    /// Call `f` on every node of the formula (sub-formulas and conditions),
    /// parents before children.
    pub fn walk<'a>(&'a self, f: &mut dyn FnMut(Visit<'a>)) {
        expr::walk(self, f)
    }
    /// The names the formula uses (built-in constants such as `pi` excluded).
    pub fn names(&self) -> BTreeSet<String> {
        let mut out = BTreeSet::new();
        expr::collect_names(self, &mut out);
        out
    }
    /// The value if the formula is a number.
    pub fn as_number(&self) -> Option<f64> {
        match self {
            Expr::Num(v) => Some(*v),
            _ => None,
        }
    }
    /// Evaluate by walking the tree; names come from `lookup`. Returns an
    /// error naming the first name that `lookup` does not know.
    pub fn eval(&self, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<f64, FormulaError> {
        expr::eval(self, lookup)
    }
    /// Evaluate in extended precision (256 bits) and round the result
    /// to f64. Used for probabilistic identity testing.
    pub fn eval_extended(&self, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<f64, FormulaError> {
        extended::eval_extended(self, lookup)
    }
    /// LaTeX for the formula.
    pub fn to_latex(&self) -> String {
        latex::latex(self)
    }
}

impl fmt::Display for Expr {
    /// Plain text that [`parse`] reads back to an equal-valued formula.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&print::text(self))
    }
}

/// One formula compiled to a flat instruction list over a fixed list of
/// variables; names that are not variables are folded in as constants. A
/// [`Kernel`] with one output.
#[derive(Clone, Debug)]
pub struct Program {
    kernel: Kernel,
}

/// Registers the scalar path keeps on the machine stack: a small array for
/// most formulas, a larger one, then the heap.
const INLINE_REGS: [usize; 2] = [8, 64];

impl Program {
    /// Compile `expr` with `vars` as the run-time inputs, in that order;
    /// every other name must be given by `constants`.
    pub fn compile(
        expr: &Expr,
        vars: &[&str],
        constants: &dyn Fn(&str) -> Option<f64>,
    ) -> Result<Program, FormulaError> {
        let kernel = Kernel::compile(&[("", expr)], vars, constants)?;
        Ok(Program { kernel })
    }
    /// Evaluate at one point (`args` in the order of `vars`).
    pub fn eval(&self, args: &[f64]) -> f64 {
        let mut out = [0.0];
        let (k, n) = (&self.kernel, self.kernel.registers());
        if n <= INLINE_REGS[0] {
            k.eval_into(args, &mut [0.0; INLINE_REGS[0]], &mut out);
        } else if n <= INLINE_REGS[1] {
            k.eval_into(args, &mut [0.0; INLINE_REGS[1]], &mut out);
        } else {
            k.eval_into(args, &mut vec![0.0; n], &mut out);
        }
        out[0]
    }
    /// Evaluate over columns of inputs (one slice per variable, equal lengths)
    /// into `out`, in blocks (one workspace allocation per call).
    pub fn eval_columns(&self, columns: &[&[f64]], out: &mut [f64]) {
        let n_vars = self.kernel.vars().len();
        assert!(
            columns.len() >= n_vars,
            "Program::eval_columns: too few columns"
        );
        assert!(
            columns[..n_vars].iter().all(|c| c.len() >= out.len()),
            "Program::eval_columns: a column is shorter than the output"
        );
        let mut ws = self.kernel.workspace();
        self.kernel.run(columns, &mut [out], &mut ws);
    }
    /// The size of the program after constant folding, counted as a stack
    /// machine counts it: instructions plus every read of a variable or a
    /// constant (`k*x + pi` is 5: const, var, mul, const, add).
    pub fn len(&self) -> usize {
        self.kernel.steps()
    }
    /// True if the program has no instructions (never, for a compiled formula).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// The kernel underneath (one output).
    pub fn kernel(&self) -> &Kernel {
        &self.kernel
    }
}

// Operator overloads so closures can build formulas: `a.clone() * b / c`.
macro_rules! binop {
    ($tr:ident, $m:ident, $body:expr) => {
        impl std::ops::$tr for Expr {
            type Output = Expr;
            fn $m(self, rhs: Expr) -> Expr {
                let f: fn(Expr, Expr) -> Expr = $body;
                f(self, rhs)
            }
        }
    };
}
binop!(Add, add, |a, b| Expr::Add(vec![a, b]));
binop!(Sub, sub, |a, b| Expr::Add(vec![
    a,
    Expr::Mul(vec![Expr::Num(-1.0), b])
]));
binop!(Mul, mul, |a, b| Expr::Mul(vec![a, b]));
binop!(Div, div, |a, b| Expr::Mul(vec![
    a,
    Expr::Pow(Box::new(b), Box::new(Expr::Num(-1.0)))
]));
impl std::ops::Neg for Expr {
    type Output = Expr;
    fn neg(self) -> Expr {
        Expr::Mul(vec![Expr::Num(-1.0), self])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn operators_build_formulas_that_simplify() {
        let x = Expr::name("x");
        let e = (x.clone() * Expr::num(2.0) - x.clone()) / x.clone() + -Expr::num(1.0);
        assert!(e.simplify().as_number().is_some_and(|v| v.abs() < 1e-300));
        let d = Expr::call(Func::Sin, vec![x.clone().pow(Expr::num(2.0))]).diff("x");
        assert_eq!(d.to_string(), "2*x*cos(x^2)");
        assert_eq!(Expr::name("x").as_number(), None);
    }

    #[test]
    fn substitute_then_simplify() {
        let e = parse("a*x + b").unwrap();
        let mut m = BTreeMap::new();
        m.insert("a".to_string(), Expr::num(0.0));
        m.insert("b".to_string(), parse("x - 1").unwrap());
        assert_eq!(e.substitute(&m).to_string(), "x - 1");
        let names: Vec<String> = parse("x*pi + rho0").unwrap().names().into_iter().collect();
        assert_eq!(names, vec!["rho0".to_string(), "x".to_string()]);
    }

    #[test]
    fn errors_without_span_render_the_message() {
        let e = FormulaError::Cycle {
            cycle: vec!["a".into(), "b".into(), "a".into()],
        };
        assert_eq!(e.span(), None);
        assert_eq!(
            e.render("a = b"),
            "a = b\nparameters depend on each other in a cycle: a -> b -> a"
        );
        let e = parse_with_names("2*rh0", &["rho0"]).unwrap_err();
        assert_eq!(
            e.render("2*rh0"),
            "2*rh0\n  ^^^\nunknown name `rh0` (did you mean `rho0`?)"
        );
    }
}
