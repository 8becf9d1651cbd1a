//! LaTeX for formulas: Greek letters and subscripts for names, `\\frac` for
//! quotients, `\\left( \\right)` where the tree needs grouping. A
//! conditional is one `cases` environment for a whole chain
//! `a if c1 else b if c2 else d`: a row per branch, `a & \\text{if } c_1`,
//! tried in order (the first row whose condition holds), and a last row
//! `d & \\text{otherwise}`. Comparisons are `<`, `\\le`, `>`, `\\ge`, `=`,
//! `\\neq`; the connectives are words (`\\text{ and }`, `\\text{ or }`,
//! `\\text{not }`), with parentheses around an `and` or `or` inside the
//! other and around a compound condition under `not`. Like the text
//! printer it never simplifies.

use super::expr::func_name;
use super::print::{
    cond_piece, negated, number, positive_first, CondStyle, ATOM, NEG, POWER, PRODUCT, SUM,
};
use super::{CmpOp, Cond, Expr, Func};

const GREEK: [&str; 35] = [
    "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa",
    "lambda", "mu", "nu", "xi", "pi", "rho", "sigma", "tau", "upsilon", "phi", "chi", "psi",
    "omega", "Gamma", "Delta", "Theta", "Lambda", "Xi", "Pi", "Sigma", "Upsilon", "Phi", "Psi",
    "Omega", "varphi",
];

/// LaTeX for a name, by one rule: the name is split at its underscores;
/// the first part is the symbol and the others are its subscripts, joined
/// by commas (`c_s_0` → `c_{s,0}`, `R_in` → `R_{in}`; a Greek name as a
/// subscript is the letter, `v_phi` → `v_{\\phi}`). Trailing digits of
/// a one-letter or Greek symbol are a subscript too (`R0` → `R_{0}`,
/// `rho0` → `\rho_{0}`); any other symbol of several letters is set
/// upright as written, digits included (`cs2` → `\mathrm{cs2}`, `Mdot`
/// → `\mathrm{Mdot}`, `cs2_0` → `\mathrm{cs2}_{0}`).
fn latex_name(n: &str) -> String {
    let mut parts = n.split('_').filter(|p| !p.is_empty());
    let first = parts.next().unwrap_or(n);
    let mut subs: Vec<String> = parts.map(str::to_string).collect();
    let cut = first.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let letters = &first[..cut];
    let symbolic = letters.chars().count() == 1 || GREEK.contains(&letters);
    let head = if cut > 0 && cut < first.len() && symbolic {
        subs.insert(0, first[cut..].to_string());
        letters
    } else {
        first
    };
    let head = if GREEK.contains(&head) {
        format!("\\{head}")
    } else if head.chars().count() > 1 {
        format!("\\mathrm{{{head}}}")
    } else {
        head.to_string()
    };
    if subs.is_empty() {
        head
    } else {
        let subs: Vec<String> = subs
            .into_iter()
            .map(|s| {
                if GREEK.contains(&s.as_str()) {
                    format!("\\{s}")
                } else {
                    s
                }
            })
            .collect();
        format!("{head}_{{{}}}", subs.join(","))
    }
}

/// LaTeX for the left-hand side of a printed law, as `derive` names them:
/// `d ln(P)/dz` → `\frac{\partial \ln P}{\partial z}`, `dPhi/dR` →
/// `\frac{\partial \Phi}{\partial R}`, `c^2` → `c^{2}`, `v_phi^2` →
/// `v_{\phi}^{2}`, and a name by the rule of the formulas' names. Text of
/// another shape is set upright as it is.
pub fn latex_lhs(text: &str) -> String {
    let t = text.trim();
    if let Some((top, var)) = t.strip_prefix('d').and_then(|r| r.split_once("/d")) {
        let var = latex_lhs(var);
        let top = top.trim();
        let top = match top.strip_prefix("ln(").and_then(|r| r.strip_suffix(')')) {
            Some(inner) => format!("\\ln {}", latex_lhs(inner)),
            None => latex_lhs(top),
        };
        return format!("\\frac{{\\partial {top}}}{{\\partial {var}}}");
    }
    if let Some((base, power)) = t.split_once('^') {
        if power.chars().all(|c| c.is_ascii_digit()) && !power.is_empty() {
            return format!("{}^{{{power}}}", latex_lhs(base));
        }
    }
    if !t.is_empty() && t.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
        return latex_name(t);
    }
    format!("\\text{{{}}}", t.replace('\\', "").replace(['{', '}'], ""))
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
            let t = if top.is_empty() {
                "1".to_string()
            } else {
                join(&top)
            };
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
            // sqrt(a)^(2k) is a^k: the square root is defined only where
            // a ≥ 0, and there the two are equal.
            if let (Expr::Call(Func::Sqrt, a), Some(n)) = (&**b, x.as_number()) {
                if n > 0.0 && (n / 2.0).fract().abs() < f64::EPSILON {
                    if (n - 2.0).abs() < f64::EPSILON {
                        return lpiece(&a[0]);
                    }
                    let half = Expr::Pow(Box::new(a[0].clone()), Box::new(Expr::Num(n / 2.0)));
                    return lpiece(&half);
                }
            }
            // A fraction or root is an atom inside a product, but as the base
            // of a power it needs parentheses: (R/R_0)^{-p}, not R/R_0^{-p}.
            let piece = lpiece(b);
            let base = if ["\\frac", "\\sqrt", "\\begin"]
                .iter()
                .any(|p| piece.0.starts_with(p))
            {
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
                Func::Exp
                | Func::Log
                | Func::Sin
                | Func::Cos
                | Func::Tan
                | Func::Sinh
                | Func::Cosh
                | Func::Tanh
                | Func::Min
                | Func::Max => format!("\\{}", func_name(*f)),
                Func::Log10 => "\\log_{10}".into(),
                Func::Asin => "\\arcsin".into(),
                Func::Acos => "\\arccos".into(),
                Func::Atan => "\\arctan".into(),
                _ => format!("\\operatorname{{{}}}", func_name(*f)),
            };
            let a: Vec<String> = args.iter().map(latex).collect();
            (format!("{name}\\left({}\\right)", a.join(", ")), ATOM)
        }
        Expr::If(..) => {
            let mut rows = String::new();
            let mut e = e;
            while let Expr::If(c, a, b) = e {
                rows += &format!("{} & \\text{{if }} {} \\\\ ", latex(a), latex_cond(c));
                e = b;
            }
            (
                format!(
                    "\\begin{{cases}} {rows}{} & \\text{{otherwise}} \\end{{cases}}",
                    latex(e)
                ),
                ATOM,
            )
        }
    }
}

const LATEX: CondStyle = CondStyle {
    expr: latex,
    op: |op| match op {
        CmpOp::Lt => "<",
        CmpOp::Le => "\\le",
        CmpOp::Gt => ">",
        CmpOp::Ge => "\\ge",
        CmpOp::Eq => "=",
        CmpOp::Ne => "\\neq",
    },
    and: " \\text{ and } ",
    or: " \\text{ or } ",
    not: "\\text{not } ",
    open: "\\left(",
    close: "\\right)",
    // Words carry no precedence a reader knows: `(a and b) or c`.
    group_and_in_or: true,
};

fn latex_cond(c: &Cond) -> String {
    cond_piece(c, &LATEX).0
}

#[cfg(test)]
mod tests {
    use super::super::parse;
    use super::*;

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
        // One rule for names (issue 10): digits after a multi-letter name
        // stay upright with it; underscores give comma-separated subscripts.
        assert_eq!(l("cs2"), "\\mathrm{cs2}");
        assert_eq!(l("cs2_0"), "\\mathrm{cs2}_{0}");
        assert_eq!(l("c_s_0"), "c_{s,0}");
        assert_eq!(l("h0 + x1"), "h_{0} + x_{1}");
        assert_eq!(l("v_phi"), "v_{\\phi}");
        assert_eq!(
            latex_lhs("d ln(P)/dz"),
            "\\frac{\\partial \\ln P}{\\partial z}"
        );
        assert_eq!(latex_lhs("dPhi/dR"), "\\frac{\\partial \\Phi}{\\partial R}");
        assert_eq!(latex_lhs("v_phi^2"), "v_{\\phi}^{2}");
        assert_eq!(latex_lhs("c^2"), "c^{2}");
        // sqrt(x)^2 is x where the root is defined; sqrt(x)^4 is x^2.
        assert_eq!(l("sqrt(x)^2"), "x");
        assert_eq!(l("sqrt(a + b)^2*c"), "\\left(a + b\\right) \\, c");
        assert_eq!(l("sqrt(x)^4"), "x^{2}");
        assert_eq!(l("(a + b)^2"), "\\left(a + b\\right)^{2}");
        assert_eq!(
            l("0 if x < 1 else x"),
            "\\begin{cases} 0 & \\text{if } x < 1 \\\\ x & \\text{otherwise} \\end{cases}"
        );
    }

    #[test]
    fn latex_of_a_conditional_is_one_cases_environment() {
        let l = |s: &str| latex(&parse(s).unwrap());
        assert_eq!(
            l("rho0 if R < R_in else rho0*(R/R_in)^(-p) if R <= R_out else 0"),
            "\\begin{cases} \\rho_{0} & \\text{if } R < R_{in} \\\\ \\rho_{0} \\, \\left(\\frac{R}{R_{in}}\\right)^{-p} \
             & \\text{if } R \\le R_{out} \\\\ 0 & \\text{otherwise} \\end{cases}"
        );
        assert_eq!(
            l("1 if 0 <= x < 1 and not y >= 2 or x != 3 else 0"),
            "\\begin{cases} 1 & \\text{if } \\left(0 \\le x < 1 \\text{ and } \\text{not } y \\ge 2\\right) \
             \\text{ or } x \\neq 3 \\\\ 0 & \\text{otherwise} \\end{cases}"
        );
        assert_eq!(
            l("1 if not (x < 1 or y == 2) else 0"),
            "\\begin{cases} 1 & \\text{if } \\text{not } \\left(x < 1 \\text{ or } y = 2\\right) \\\\ \
             0 & \\text{otherwise} \\end{cases}"
        );
        // As a factor it needs no parentheses; as a base it gets them.
        assert_eq!(
            l("2*(x if x > 0 else 0)^2"),
            "2 \\, \\left(\\begin{cases} x & \\text{if } x > 0 \\\\ 0 & \\text{otherwise} \\end{cases}\\right)^{2}"
        );
    }
}
