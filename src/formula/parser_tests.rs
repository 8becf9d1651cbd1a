//! Unit tests of the parser: precedence, the conditional, chained
//! comparisons, and the errors with their spans. Precedence follows the
//! Python Language Reference, §6.17 "Operator precedence" (conditional
//! loosest, then `or`, `and`, `not`, comparisons, arithmetic).

use super::*;

fn val(s: &str, x: f64) -> f64 {
    parse(s, None)
        .unwrap_or_else(|e| panic!("{}", e.render(s)))
        .eval(&|n| (n == "x").then_some(x))
        .unwrap()
}

fn err(s: &str) -> FormulaError {
    parse(s, None).unwrap_err()
}

/// The caret line and the message of an error.
fn caret(s: &str) -> (String, String) {
    let r = err(s).render(s);
    let lines: Vec<&str> = r.lines().collect();
    (lines[1].to_string(), lines[2].to_string())
}

#[test]
fn precedence_and_associativity() {
    assert!((val("-x^2", 3.0) + 9.0).abs() < 1e-12);
    assert!((val("2^3^2", 0.0) - 512.0).abs() < 1e-9);
    assert!((val("x^-2", 2.0) - 0.25).abs() < 1e-12);
    assert!((val("1 - x - 1", 5.0) + 5.0).abs() < 1e-12);
    assert!((val("8/x/2", 2.0) - 2.0).abs() < 1e-12);
    assert!(
        (val("atan2(1, x) + min(x, 2) * max(1, 0)", -1.0) - (1f64.atan2(-1.0) - 1.0)).abs() < 1e-12
    );
}

#[test]
fn the_conditional_binds_loosest() {
    // `x + 1 if c else y` is `(x + 1) if c else y`, not `x + (1 if c else y)`.
    assert!((val("x + 1 if x > 0 else 10", 2.0) - 3.0).abs() < 1e-12);
    assert!((val("x + 1 if x > 0 else 10", -2.0) - 10.0).abs() < 1e-12);
    // The else branch reaches to the end: `a if c else b + 1` adds to b only.
    assert!((val("0 if x > 0 else x + 1", -2.0) + 1.0).abs() < 1e-12);
    assert!(val("0 if x > 0 else x + 1", 2.0).abs() < 1e-12);
    // Chained right-associatively.
    let s = "1 if x < 0 else 2 if x < 1 else 3";
    for (x, want) in [(-1.0, 1.0), (0.5, 2.0), (4.0, 3.0)] {
        assert!((val(s, x) - want).abs() < 1e-12, "{s} at {x}");
    }
    // Anywhere a formula may stand: arguments, parentheses, exponents.
    assert!((val("2*(x if x > 0 else -x)", -3.0) - 6.0).abs() < 1e-12);
    assert!((val("max(0 if x > 1 else x, -5)", 0.5) - 0.5).abs() < 1e-12);
    assert!((val("2^(3 if x > 0 else 1)", 1.0) - 8.0).abs() < 1e-12);
    // A conditional inside a comparison and as the then-branch.
    assert!((val("1 if (x if x > 0 else -x) < 2 else 0", -1.0) - 1.0).abs() < 1e-12);
    assert!((val("(5 if x > 2 else 6) if x > 0 else 7", 1.0) - 6.0).abs() < 1e-12);
}

#[test]
fn not_and_or_bind_as_in_python() {
    // not > and > or: `not a or b and c` is `(not a) or (b and c)`.
    let s = "1 if not x > 0 or x > 2 and x < 3 else 0";
    for (x, want) in [(-1.0, 1.0), (1.0, 0.0), (2.5, 1.0), (4.0, 0.0)] {
        assert!((val(s, x) - want).abs() < 1e-12, "{s} at {x}");
    }
    // `not` covers the whole comparison: `not x + 1 < 2` is `not (x + 1 < 2)`.
    assert!((val("1 if not x + 1 < 2 else 0", 3.0) - 1.0).abs() < 1e-12);
    assert!((val("1 if not not x > 0 else 0", 3.0) - 1.0).abs() < 1e-12);
    assert!((val("1 if not (x > 0 and x < 1) else 0", 0.5)).abs() < 1e-12);
    let s = "1 if (x > 0 and x < 1) or x == 5 else (x + 1) * 2";
    assert!((val(s, 0.5) - 1.0).abs() < 1e-12);
    assert!((val(s, 5.0) - 1.0).abs() < 1e-12);
    assert!((val(s, 2.0) - 6.0).abs() < 1e-12);
    assert!((val("1 if (x + 1) * 2 >= 4 else 0", 1.0) - 1.0).abs() < 1e-12);
}

#[test]
fn chained_comparisons_mean_a_conjunction() {
    let e = parse("1 if 0 < x <= 2 else 0", None).unwrap();
    let Expr::If(c, ..) = &e else { panic!("{e:?}") };
    let want = parse("1 if 0 < x and x <= 2 else 0", None).unwrap();
    let Expr::If(w, ..) = &want else {
        panic!("{want:?}")
    };
    assert_eq!(c, w);
    for (x, v) in [(0.0, 0.0), (1.0, 1.0), (2.0, 1.0), (2.5, 0.0)] {
        assert!((val("1 if 0 < x <= 2 else 0", x) - v).abs() < 1e-12, "{x}");
    }
    assert!((val("1 if 0 < x < 2 < 3 != x else 0", 1.0) - 1.0).abs() < 1e-12);
}

#[test]
fn a_missing_else_is_pointed_at() {
    let (c, m) = caret("x^2 if x < 1");
    assert_eq!(c, "            ^");
    assert_eq!(
        m,
        "expected `else` and the value when the condition fails (the `if` at column 5), \
         found end of formula; a conditional reads `a if condition else b`"
    );
    let (c, m) = caret("x^2 if x < 1, 2*x");
    assert_eq!(c, "            ^");
    assert!(
        m.starts_with("expected `else`") && m.contains("found `,`"),
        "{m}"
    );
    let (c, m) = caret("1 if x < 1 else");
    assert_eq!(c, "               ^");
    assert_eq!(m, "expected a formula after `else`, found end of formula");
}

#[test]
fn a_dangling_if_is_pointed_at() {
    let (c, m) = caret("x^2 if");
    assert_eq!(c, "      ^");
    assert!(
        m.starts_with("expected a condition after `if`, found end of formula"),
        "{m}"
    );
    let (c, m) = caret("if x < 1 else 2");
    assert_eq!(c, "^^");
    assert!(
        m.contains("found `if`: `if` comes after the value it chooses"),
        "{m}"
    );
    let (c, m) = caret("x else 2");
    assert_eq!(c, "  ^^^^");
    assert!(m.contains("found `else` without an `if` before it"), "{m}");
    let (c, m) = caret("x if y else z");
    assert_eq!(c, "     ^");
    assert!(
        m.starts_with("expected a condition after `if`, found the formula `y`"),
        "{m}"
    );
}

#[test]
fn the_old_call_form_shows_its_rewrite() {
    let (c, m) = caret("if(x < 1, x^2, 2*x)");
    assert_eq!(c, "^^");
    assert_eq!(
        m,
        "`if(...)` is not our syntax: write `x^2 if x < 1 else 2*x`"
    );
    // An operand gets parentheses; the caret is under its `if`.
    let (c, m) = caret("sigma0*R^(-p)*if(R < R_cav, floor, 1)");
    assert_eq!(c, "              ^^");
    assert_eq!(
        m,
        "`if(...)` is not our syntax: write `sigma0*R^(-p)*(floor if R < R_cav else 1)`"
    );
    // Nested: an else branch chains, a then branch is parenthesised.
    let (_, m) = caret("if(z < 1, a, if(z < 2, b, c))");
    assert!(
        m.ends_with("write `a if z < 1 else b if z < 2 else c`"),
        "{m}"
    );
    let (_, m) = caret("if(a < b, if(c < d, 1, 2), 3)");
    assert!(
        m.ends_with("write `(1 if c < d else 2) if a < b else 3`"),
        "{m}"
    );
    let (_, m) = caret("sqrt(if(x > 0 and x < 1, x, 0)) + (if(x < 0, 1, 2))");
    assert!(
        m.ends_with("write `sqrt(x if x > 0 and x < 1 else 0) + (1 if x < 0 else 2)`"),
        "{m}"
    );
    // Each rewrite parses to the same values as the old form meant.
    let nested = "if(x < 0, if(x < -1, 1, 2), if(x > 1, 3, 4))";
    for (old, x, want) in [
        ("if(x < 1, x^2, 2*x)", 0.5, 0.25),
        ("3*if(x < 1, x^2, 2*x)", 3.0, 18.0),
        (nested, -2.0, 1.0),
        (nested, -0.5, 2.0),
        (nested, 2.0, 3.0),
        (nested, 0.5, 4.0),
    ] {
        let m = err(old).to_string();
        let new = m.split('`').nth(3).unwrap();
        assert!((val(new, x) - want).abs() < 1e-12, "{new} at {x}");
    }
    // A malformed old form is reported where it breaks.
    assert!(err("if(x, 1, 2)")
        .to_string()
        .contains("expected a condition"));
    assert!(err("if(x < 1, 2)").to_string().contains("expected `,`"));
}

#[test]
fn reserved_words_are_not_names() {
    for (src, col, word) in [
        ("and + 1", 0, "and"),
        ("2*or", 2, "or"),
        ("x + not", 4, "not"),
        ("else", 0, "else"),
    ] {
        let e = err(src);
        assert_eq!(e.span(), Some(col..col + word.len()), "{src}");
        let m = e.to_string();
        assert!(m.contains(&format!("found `{word}`")), "{src}: {m}");
    }
    // Also with a list of known names: a keyword is never looked up.
    let e = parse("if + x", Some(&["x", "if"])).unwrap_err();
    assert!(e.to_string().contains("found `if`"), "{e}");
}

#[test]
fn types_are_checked_where_they_meet() {
    let m = err("x < 1").to_string();
    assert!(
        m.starts_with("expected a formula, found the condition `x < 1`"),
        "{m}"
    );
    let m = err("x and y").to_string();
    assert!(
        m.starts_with("expected a condition before `and`, found the formula `x`"),
        "{m}"
    );
    let m = err("(x < 1) + 2").to_string();
    assert!(m.starts_with("expected a formula before `+`"), "{m}");
    let m = err("sqrt(x < 1)").to_string();
    assert!(m.contains("as an argument of `sqrt`"), "{m}");
    let m = err("1 if not x else 2").to_string();
    assert!(m.contains("after `not`, found the formula `x`"), "{m}");
    let m = err("x < 1 if x > 0 else 2").to_string();
    assert!(m.starts_with("expected a formula before `if`"), "{m}");
    assert_eq!(err("(x < 1) < 2").span(), Some(0..7));
}

#[test]
fn errors_say_what_was_expected_and_found() {
    let e = err("sqrt(x + 1");
    assert_eq!(
        e.to_string(),
        "expected `)` to close the `(` opened at column 5, found end of formula"
    );
    assert_eq!(e.span(), Some(10..10));
    for bad in [
        "", "2 3", "*3", "sqrt", "sqrt + 1", "foo(x)", "x +", "(x", "x and y", "not",
    ] {
        let e = err(bad);
        assert!(e.span().is_some(), "{bad}: {e}");
    }
    assert!(err("2 3").to_string().contains("found number `3`"));
    assert!(err("expp(x)").to_string().contains("did you mean `exp`"));
    let e = err("min(x)");
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
}

/// Printed text parses back to a tree that prints as the same text, with
/// the same value: unary minus binds tighter than `*` and `/` and looser
/// than `^` (`-x^2` is `-(x^2)`, `-x*y` is `(-x)*y`), and a minus is never
/// printed against another minus, since `--1.5` folds into `1.5`.
#[test]
fn unary_minus_prints_back_as_itself() {
    let x = || Expr::Name("x".into());
    let n = Expr::Num;
    let neg = |e: Expr| Expr::Mul(vec![n(-1.0), e]);
    let cases = [
        // Trees the property test found (tests/formula_props.rs).
        (
            Expr::Mul(vec![Expr::Mul(vec![n(-1.0), x(), x()]), x()]),
            "(-x*x)*x",
        ),
        (Expr::Mul(vec![n(-1.0), x(), x()]), "-x*x"),
        (
            neg(Expr::Mul(vec![Expr::Mul(vec![x(), x()]), x()])),
            "-((x*x)*x)",
        ),
        (neg(Expr::Mul(vec![n(1.0), n(-1.5)])), "-(1*(-1.5))"),
        (neg(Expr::Mul(vec![n(1.0), x()])), "-(1*x)"),
        // Negation of a negative literal, of a negation, of powers.
        (neg(n(-1.5)), "-1*(-1.5)"),
        (neg(neg(n(0.5))), "-1*(-0.5)"),
        (neg(neg(x())), "-(-x)"),
        (neg(Expr::Mul(vec![n(-1.5), x()])), "-(-1.5*x)"),
        (
            Expr::Mul(vec![neg(Expr::Mul(vec![n(-1.5), x()])), x()]),
            "-(-1.5*x)*x",
        ),
        (neg(Expr::Pow(Box::new(x()), Box::new(n(2.0)))), "-x^2"),
        (Expr::Pow(Box::new(neg(x())), Box::new(n(2.0))), "(-x)^2"),
        (Expr::Pow(Box::new(x()), Box::new(neg(x()))), "x^(-x)"),
        (Expr::Pow(Box::new(x()), Box::new(neg(n(0.5)))), "1/x^0.5"),
        (Expr::Mul(vec![x(), neg(x())]), "x*(-x)"),
        (Expr::Add(vec![x(), neg(neg(x()))]), "x - (-x)"),
        (
            Expr::Add(vec![x(), Expr::Mul(vec![neg(x()), x()])]),
            "x + (-x*x)",
        ),
        (Expr::Add(vec![x(), neg(n(-1.5))]), "x + (-1*(-1.5))"),
    ];
    for (tree, want) in cases {
        let text = tree.to_string();
        assert_eq!(text, want, "{tree:?}");
        let back = parse(&text, None).unwrap_or_else(|e| panic!("{}", e.render(&text)));
        assert_eq!(back.to_string(), text, "{back:?}");
        let at = |e: &Expr| e.eval(&|v| (v == "x").then_some(0.7)).unwrap();
        assert_eq!(at(&back).to_bits(), at(&tree).to_bits(), "{text}");
    }
    // Text with a minus prints as it was written.
    for s in [
        "-x*x", "-x/y", "(-x*x)*x", "-(x*y)", "-2*x", "x*-y", "-(-x)", "--x", "x - -x",
    ] {
        let once = parse(s, None).unwrap().to_string();
        assert_eq!(parse(&once, None).unwrap().to_string(), once, "{s}");
    }
}

#[test]
fn nesting_deeper_than_the_limit_is_refused_at_its_token() {
    let ok = format!("{}x{}", "(".repeat(MAX_NESTING), ")".repeat(MAX_NESTING));
    assert!(parse(&ok, None).is_ok());
    for deep in [
        format!("{}x{}", "(".repeat(20_000), ")".repeat(20_000)),
        format!("{}x", "-".repeat(20_000)),
        format!("{}x", "2^".repeat(20_000)),
        format!(
            "sin({}x{})",
            "(".repeat(MAX_NESTING),
            ")".repeat(MAX_NESTING)
        ),
    ] {
        match parse(&deep, None) {
            Err(FormulaError::Syntax { message, .. }) => {
                assert!(message.contains("nested more than 200 levels"), "{message}")
            }
            other => panic!("{other:?}"),
        }
    }
}

#[test]
fn nested_minus_signs_print_in_linear_time() {
    // Found by fuzzing: each minus printed its operand twice, so 19 of
    // them took 15 s. 60 now print at once and read back the same.
    let text = format!("{}fff----100", "-".repeat(60));
    let e = parse(&text, None).unwrap();
    let started = std::time::Instant::now();
    let printed = e.to_string();
    assert!(
        started.elapsed().as_secs_f64() < 5.0,
        "{:?}",
        started.elapsed()
    );
    let back = parse(&printed, None).unwrap();
    assert_eq!(back.to_string(), printed);
}
