//! Property tests of the formula engine on randomly generated formulas:
//! derivatives against central finite differences, print → parse round
//! trips, value-preserving simplification, and compiled programs against the
//! tree walker; the block kernel against the scalar path and the stack
//! machine, to the bit. Points where a formula is not finite (or not smooth, for the
//! derivative check) are skipped; each property also has a fixed-formula
//! test asserting that the checks actually ran. Conditionals are generated
//! with every comparison, `and`, `or`, `not` and chained comparisons,
//! nested in each other and as operands of everything else.

use proptest::prelude::*;
use stillpoint::formula::{
    parse, CmpOp, Cond, Expr, Func, Kernel, Program, StackProgram, Visit, Workspace,
};

const FUNCS1: [Func; 14] = [
    Func::Sqrt,
    Func::Exp,
    Func::Log,
    Func::Log10,
    Func::Sin,
    Func::Cos,
    Func::Tan,
    Func::Asin,
    Func::Acos,
    Func::Atan,
    Func::Sinh,
    Func::Cosh,
    Func::Tanh,
    Func::Abs,
];
const FUNCS2: [Func; 3] = [Func::Atan2, Func::Min, Func::Max];
const POINTS: [(f64, f64); 7] = [
    (0.37, 1.21),
    (0.83, 0.45),
    (1.37, 1.9),
    (1.71, 0.66),
    (0.55, 0.58),
    (-0.74, 1.13),
    (0.61, -1.42),
];

fn leaf() -> impl Strategy<Value = Expr> {
    prop_oneof![
        Just(Expr::name("x")),
        Just(Expr::name("y")),
        Just(Expr::name("pi")),
        prop::sample::select(vec![0.5, 1.0, 2.0, 3.0, -1.5, 0.25, 1e-3]).prop_map(Expr::num),
    ]
}

const OPS: [CmpOp; 6] = [
    CmpOp::Lt,
    CmpOp::Le,
    CmpOp::Gt,
    CmpOp::Ge,
    CmpOp::Eq,
    CmpOp::Ne,
];

/// Conditions over formulas from `inner`: comparisons, chains `a < b <= c`,
/// and `and`, `or`, `not` of those.
fn condition(inner: BoxedStrategy<Expr>) -> impl Strategy<Value = Cond> {
    let op = || prop::sample::select(OPS.to_vec());
    let cmp = (inner.clone(), op(), inner.clone()).prop_map(|(a, o, b)| Cond::Cmp(o, a, b));
    let chain = (inner.clone(), op(), inner.clone(), op(), inner).prop_map(|(a, o, b, p, c)| {
        Cond::And(
            Box::new(Cond::Cmp(o, a, b.clone())),
            Box::new(Cond::Cmp(p, b, c)),
        )
    });
    prop_oneof![3 => cmp, 1 => chain].prop_recursive(2, 6, 2, |c| {
        prop_oneof![
            (c.clone(), c.clone()).prop_map(|(a, b)| Cond::And(Box::new(a), Box::new(b))),
            (c.clone(), c.clone()).prop_map(|(a, b)| Cond::Or(Box::new(a), Box::new(b))),
            c.prop_map(|a| Cond::Not(Box::new(a))),
        ]
    })
}

fn conditional(inner: BoxedStrategy<Expr>) -> impl Strategy<Value = Expr> {
    (condition(inner.clone()), inner.clone(), inner)
        .prop_map(|(c, a, b)| Expr::If(Box::new(c), Box::new(a), Box::new(b)))
}

/// Formulas made mostly of conditionals: nested in either branch, in
/// conditions, and as operands of sums, products, powers and calls.
fn conditionals() -> impl Strategy<Value = Expr> {
    leaf().prop_recursive(4, 24, 3, |inner| {
        prop_oneof![
            4 => conditional(inner.clone()),
            1 => (inner.clone(), inner.clone()).prop_map(|(a, b)| a - b),
            1 => (inner.clone(), inner.clone()).prop_map(|(a, b)| a * b),
            1 => (inner.clone(), inner.clone()).prop_map(|(a, b)| a / b),
            1 => inner.clone().prop_map(|a| -a),
            1 => (inner.clone(), inner.clone()).prop_map(|(a, b)| a.pow(b)),
            1 => (inner.clone(), prop::sample::select(FUNCS1.to_vec()))
                .prop_map(|(a, f)| Expr::call(f, vec![a])),
        ]
    })
}

fn formula() -> impl Strategy<Value = Expr> {
    leaf().prop_recursive(4, 24, 3, formula_step)
}

/// One level of [`formula`]: an operation on smaller formulas.
fn formula_step(inner: BoxedStrategy<Expr>) -> impl Strategy<Value = Expr> {
    prop_oneof![
        (inner.clone(), inner.clone()).prop_map(|(a, b)| a + b),
        (inner.clone(), inner.clone()).prop_map(|(a, b)| a - b),
        (inner.clone(), inner.clone()).prop_map(|(a, b)| a * b),
        (inner.clone(), inner.clone()).prop_map(|(a, b)| a / b),
        inner.clone().prop_map(|a| -a),
        (
            inner.clone(),
            prop::sample::select(vec![2.0, 3.0, -1.0, -2.0, 0.5, 1.5, -0.5])
        )
            .prop_map(|(a, n)| a.pow(Expr::num(n))),
        (inner.clone(), inner.clone()).prop_map(|(a, b)| a.pow(b)),
        (inner.clone(), prop::sample::select(FUNCS1.to_vec()))
            .prop_map(|(a, f)| Expr::call(f, vec![a])),
        (
            inner.clone(),
            inner.clone(),
            prop::sample::select(FUNCS2.to_vec())
        )
            .prop_map(|(a, b, f)| Expr::call(f, vec![a, b])),
        conditional(inner.clone()),
    ]
}

fn at(e: &Expr, x: f64, y: f64) -> f64 {
    e.eval(&|n| match n {
        "x" => Some(x),
        "y" => Some(y),
        _ => None,
    })
    .expect("only x and y are used")
}

fn at_ext(e: &Expr, x: f64, y: f64) -> f64 {
    e.eval_extended(&|n| match n {
        "x" => Some(x),
        "y" => Some(y),
        _ => None,
    })
    .expect("only x and y are used")
}

/// True when every sub-formula of `e` is finite at the point. Simplification
/// and differentiation keep values where the original is defined throughout;
/// where a part is undefined (x^x for x < 0 inside a condition, say), rules
/// such as 0*u -> 0 legitimately differ, as in every algebra system.
/// Points on a switch of a piecewise formula (the two sides of a condition
/// equal to within 1e-9) are also left out: there the branch taken depends on
/// the last bit of rounding, in f64 as in extended precision.
fn defined(e: &Expr, x: f64, y: f64) -> bool {
    let mut ok = off_switches(e, x, y);
    e.walk(&mut |v| {
        if let Visit::Expr(s) = v {
            ok &= at(s, x, y).is_finite();
        }
    });
    ok
}

/// True when no comparison in `e` is within 1e-9 of its switch at the point.
fn off_switches(e: &Expr, x: f64, y: f64) -> bool {
    let mut ok = true;
    e.walk(&mut |v| {
        if let Visit::Cond(Cond::Cmp(_, a, b)) = v {
            let (a, b) = (at(a, x, y), at(b, x, y));
            ok &= (a - b).abs() > 1e-9 * (1.0 + a.abs().max(b.abs()));
        }
    });
    ok
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * (1.0 + a.abs().max(b.abs()))
}

/// Compare the derivative by x with central differences at every point where
/// the function is smooth and moderate; returns how many points were checked.
fn check_derivative(e: &Expr) -> Result<usize, String> {
    let d = e.diff("x");
    let mut checked = 0;
    for (x, y) in POINTS {
        let f = at(e, x, y);
        let h = 1e-5 * (1.0 + x.abs());
        let fd = |h: f64| (at(e, x + h, y) - at(e, x - h, y)) / (2.0 * h);
        let (fd1, fd2) = (fd(h), fd(h / 2.0));
        let scale = 1.0 + f.abs() + fd2.abs();
        if !defined(e, x, y)
            || !f.is_finite()
            || !fd1.is_finite()
            || !fd2.is_finite()
            || f.abs() > 1e6
            || fd2.abs() > 1e6
        {
            continue;
        }
        // Step halving changes a smooth estimate only at O(h^2): if it moves
        // a lot, a kink, a jump or rounding noise sits nearby.
        if (fd1 - fd2).abs() > 1e-6 * scale {
            continue;
        }
        let dv = at(&d, x, y);
        if (dv - fd2).abs() > 1e-5 * scale {
            return Err(format!(
                "d/dx {e} = {d} at ({x}, {y}): {dv} vs finite difference {fd2}"
            ));
        }
        checked += 1;
    }
    Ok(checked)
}

/// Print, parse, compare values. A parsed formula prints as text that
/// parses to itself (text → tree → text is a fixed point; a built tree may
/// print like another, `-(a/b)` as `-a/b`). Points on a switch are skipped:
/// printing may reorder a sum, which moves a tie by a rounding.
fn check_round_trip(e: &Expr) -> Result<usize, String> {
    let text = e.to_string();
    let back = parse(&text).map_err(|err| format!("`{text}` does not parse: {err}"))?;
    let once = back.to_string();
    let twice = parse(&once)
        .map_err(|err| format!("`{once}` does not parse: {err}"))?
        .to_string();
    if twice != once {
        return Err(format!("`{once}` prints back as `{twice}`"));
    }
    let mut checked = 0;
    for (x, y) in POINTS {
        let (a, b) = (at_ext(e, x, y), at_ext(&back, x, y));
        if a.is_finite() && a.abs() < 1e12 && off_switches(e, x, y) {
            if !close(a, b, 1e-12) {
                return Err(format!(
                    "`{text}` at ({x}, {y}): {a} vs {b} after round trip"
                ));
            }
            checked += 1;
        }
    }
    Ok(checked)
}

fn check_simplify(e: &Expr) -> Result<usize, String> {
    let s = e.simplify();
    let mut checked = 0;
    for (x, y) in POINTS {
        let (a, b) = (at_ext(e, x, y), at_ext(&s, x, y));
        if a.is_finite() && a.abs() < 1e12 && defined(e, x, y) {
            if !close(a, b, 1e-9) {
                return Err(format!("{e} simplified to {s} at ({x}, {y}): {a} vs {b}"));
            }
            checked += 1;
        }
    }
    Ok(checked)
}

fn check_program(e: &Expr) -> Result<usize, String> {
    let p = Program::compile(e, &["x", "y"], &|_| None).map_err(|err| err.to_string())?;
    let mut checked = 0;
    for (x, y) in POINTS {
        let (a, b) = (at(e, x, y), p.eval(&[x, y]));
        if a.is_nan() {
            if !b.is_nan() {
                return Err(format!("{e} at ({x}, {y}): tree gives NaN, program {b}"));
            }
        } else if a.is_finite() {
            if !close(a, b, 1e-12) {
                return Err(format!("{e} at ({x}, {y}): tree {a} vs program {b}"));
            }
            checked += 1;
        }
    }
    Ok(checked)
}

/// Parameters the kernel property folds in as constants: an integer, a
/// fractional and a larger exponent.
fn parameter(n: &str) -> Option<f64> {
    match n {
        "k" => Some(3.0),
        "q" => Some(-0.5),
        "h" => Some(2.5),
        _ => None,
    }
}

/// Formulas for the kernel: those of [`formula`] plus parameters, integer
/// powers up to and past 64, parameter exponents, every comparison, `and`
/// and `or`.
fn kernel_formula() -> impl Strategy<Value = Expr> {
    let leaves = prop_oneof![
        3 => leaf(),
        1 => prop::sample::select(vec!["k", "q", "h"]).prop_map(Expr::name),
        1 => Just(Expr::num(-0.0)),
    ];
    leaves.prop_recursive(4, 24, 3, |inner| {
        prop_oneof![
            4 => formula_step(inner.clone()),
            1 => (
                inner.clone(),
                prop::sample::select(vec![0.0, 1.0, 4.0, 5.0, 7.0, -3.0, 64.0, -64.0, 65.0, 2.5])
            )
                .prop_map(|(a, n)| a.pow(Expr::num(n))),
            1 => (inner.clone(), prop::sample::select(vec!["k", "q", "h"]))
                .prop_map(|(a, p)| a.pow(Expr::name(p))),
            1 => (condition(inner.clone().boxed()), inner.clone(), inner)
                .prop_map(|(c, a, b)| Expr::If(Box::new(c), Box::new(a), Box::new(b))),
        ]
    })
}

fn same_bits(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan())
}

/// Run several formulas as one kernel over `xy` (block path), at each point
/// (scalar path) and one by one on the stack machine; all must agree to the
/// bit. Returns the number of values compared.
fn check_kernel(es: &[Expr], xy: &[(f64, f64)]) -> Result<usize, String> {
    let vars = ["x", "y"];
    let named: Vec<(&str, &Expr)> = es.iter().map(|e| ("f", e)).collect();
    let k = Kernel::compile(&named, &vars, &parameter).map_err(|e| e.to_string())?;
    let stack: Vec<StackProgram> = es
        .iter()
        .map(|e| StackProgram::compile(e, &vars, &parameter).unwrap())
        .collect();
    let (x, y): (Vec<f64>, Vec<f64>) = xy.iter().copied().unzip();
    let mut cols = vec![vec![0.0; xy.len()]; es.len()];
    let mut outs: Vec<&mut [f64]> = cols.iter_mut().map(|c| &mut c[..]).collect();
    let mut ws = Workspace::new();
    k.run(&[&x, &y], &mut outs, &mut ws);
    let mut point = vec![0.0; es.len()];
    for (i, &(x, y)) in xy.iter().enumerate() {
        k.eval(&[x, y], &mut point, &mut ws);
        for (j, p) in stack.iter().enumerate() {
            let (b, s, m) = (cols[j][i], point[j], p.eval(&[x, y]));
            if !same_bits(b, s) || !same_bits(s, m) {
                return Err(format!(
                    "{} at ({x:e}, {y:e}): block {b:e}, scalar {s:e}, stack machine {m:e}",
                    es[j]
                ));
            }
        }
    }
    Ok(xy.len() * es.len())
}

/// Numbers of points around one and two blocks, and none.
fn block_lengths() -> Vec<usize> {
    let l = Kernel::LANES;
    vec![0, 1, 2, l - 1, l, l + 1, 2 * l + 3, 5 * l / 2]
}

fn coordinate() -> impl Strategy<Value = f64> {
    prop_oneof![
        6 => -3.0..3.0f64,
        1 => prop::sample::select(vec![0.0, -0.0, 1.0, -1.0, 0.5, f64::INFINITY, f64::NAN]),
    ]
}

/// Random formula *texts* as a user types them: parentheses where they
/// are not needed, minus signs before anything, quotients in a row — the
/// shapes a parsed tree has and a built one may not.
fn typed_text() -> impl Strategy<Value = String> {
    let leaf = prop::sample::select(vec!["x", "y", "2", "1.5", "0.5", "pi"]).prop_map(String::from);
    leaf.prop_recursive(5, 48, 4, |inner| {
        let two = (inner.clone(), inner.clone());
        prop_oneof![
            two.clone().prop_map(|(a, b)| format!("{a} + {b}")),
            two.clone().prop_map(|(a, b)| format!("{a} - {b}")),
            two.clone().prop_map(|(a, b)| format!("{a}*{b}")),
            two.clone().prop_map(|(a, b)| format!("{a}/{b}")),
            two.clone().prop_map(|(a, b)| format!("{a}^{b}")),
            inner.clone().prop_map(|a| format!("-{a}")),
            inner.clone().prop_map(|a| format!("({a})")),
            inner.clone().prop_map(|a| format!("sin({a})")),
            (inner.clone(), inner.clone(), inner.clone(), inner.clone())
                .prop_map(|(a, b, c, d)| format!("({a} if {b} < {c} else {d})")),
        ]
    })
}

/// Texts nested close to the parser's limit of 200 levels: a chain of
/// steps, each adding one to three levels (a minus, a parenthesis, `^`).
fn deep_text() -> impl Strategy<Value = String> {
    let step = prop::sample::select(vec![
        ("-", ""),
        ("-(", ")"),
        ("1 - -(", ")"),
        ("y*-(", ")"),
        ("2^-(", ")"),
        ("y/2/(", ")"),
        ("y/-2/(", ")"),
        ("-y - 2 + (", ")"),
        ("(1 if y < 2 else -(", "))"),
        ("sin(-", ")"),
        ("(--", ")"),
    ]);
    prop::collection::vec(step, 40..160).prop_map(|steps| {
        let open: String = steps.iter().map(|s| s.0).collect();
        let close: String = steps.iter().rev().map(|s| s.1).collect();
        format!("{open}x{close}")
    })
}

/// A parsed text prints as a text that parses, prints the same once more
/// and has the same value at the points.
fn check_typed(src: &str) -> Result<(), String> {
    let Ok(e) = parse(src) else { return Ok(()) };
    let once = e.to_string();
    let back = parse(&once).map_err(|err| format!("`{src}` prints as `{once}`: {err}"))?;
    let twice = back.to_string();
    if twice != once {
        return Err(format!("`{src}` prints as `{once}`, then as `{twice}`"));
    }
    for (x, y) in POINTS {
        let (a, b) = (at(&e, x, y), at(&back, x, y));
        // Deep nests of powers, quotients and sines can be so ill-conditioned
        // that rounding alone (the printed tree groups divisors differently)
        // changes the value: where a relative nudge of 1e-12 to the point
        // moves the value by more than 1e-6, the value says nothing about
        // the printing and is not compared.
        let nudged = at(&e, x * (1.0 + 1e-12), y * (1.0 + 1e-12));
        let conditioned = close(a, nudged, 1e-6);
        if a.is_finite()
            && a.abs() < 1e12
            && conditioned
            && off_switches(&e, x, y)
            && !close(a, b, 1e-9)
        {
            return Err(format!("`{src}` at ({x}, {y}): {a}, printed {b}"));
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    #[test]
    fn typed_text_prints_as_a_fixed_point(src in typed_text()) {
        check_typed(&src).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn deep_text_prints_within_the_nesting_limit(src in deep_text()) {
        check_typed(&src).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn kernel_block_scalar_and_stack_machine_agree_to_the_bit(
        es in prop::collection::vec(kernel_formula(), 1..4),
        n in prop::sample::select(block_lengths()),
        seed in prop::collection::vec((coordinate(), coordinate()), 3 * Kernel::LANES),
    ) {
        check_kernel(&es, &seed[..n]).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn derivative_matches_finite_differences(e in formula()) {
        check_derivative(&e).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn print_parse_round_trip_keeps_values(e in formula()) {
        check_round_trip(&e).map_err(TestCaseError::fail)?;
        check_round_trip(&e.simplify()).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn print_parse_round_trip_keeps_conditionals(e in conditionals()) {
        check_round_trip(&e).map_err(TestCaseError::fail)?;
        check_round_trip(&e.simplify()).map_err(TestCaseError::fail)?;
        check_round_trip(&e.diff("x")).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn conditionals_compile_simplify_and_differentiate(e in conditionals()) {
        check_program(&e).map_err(TestCaseError::fail)?;
        check_simplify(&e).map_err(TestCaseError::fail)?;
        check_derivative(&e).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn simplify_keeps_values(e in formula()) {
        check_simplify(&e).map_err(TestCaseError::fail)?;
    }

    #[test]
    fn program_matches_tree_walk(e in formula()) {
        check_program(&e).map_err(TestCaseError::fail)?;
        check_program(&e.diff("x")).map_err(TestCaseError::fail)?;
    }
}

/// The same checks on fixed formulas, asserting that points were checked
/// (so the skipping rules cannot silently make the properties vacuous).
#[test]
fn checks_run_on_fixed_formulas() {
    let srcs = [
        "x^3*y - sin(x)/x",
        "atan2(y, x) * exp(-x^2) + log10(x + y)",
        "(x^2 if x < 1 else 2*x - 1) + abs(x - y) + min(x, y)*max(x, 2*y)",
        "(x/y)^(-1.5) + sqrt(x)^2 + x^y + asin(x/2) + acos(x/3)",
        "tanh(x) + cosh(x)/sinh(y) + tan(x/2) - atan(x*y)",
        // Rewrites that are only valid for positive bases must not happen.
        "((x - 1)^2)^0.5 + (x^2*y^2)^1.5 + (x*y)^0.5 + ((x + y)^4)^0.25",
        // Conditionals as operands, chained, with not/and/or and chains.
        "2*(x^2 if not x < 0.5 else y) + (sin(x) if -1 < y <= 1.5 and x > 0 or y > 1.8 \
         else x*y if x != y else 0)^2",
        "exp(x if 0.4 < x < 1.5 else -x)*(x^3 if not (y < 0 or y > 1.5) else cos(x))",
    ];
    for s in srcs {
        let e = parse(s).unwrap();
        assert!(check_derivative(&e).unwrap() >= 4, "{s}");
        assert!(check_round_trip(&e).unwrap() >= 4, "{s}");
        assert!(check_simplify(&e).unwrap() >= 4, "{s}");
        assert!(check_program(&e).unwrap() >= 4, "{s}");
    }
}

/// The printer findings of the fuzz target, pinned: a negated divisor in
/// a quotient (`(-p)*q` printed once with and once without parentheses),
/// and about a hundred nested minus signs, which printed with a
/// parenthesis per minus past the nesting limit and did not read back.
#[test]
fn fuzz_findings_of_the_printer() {
    for src in [
        "sin(1.5)/(-y)/2",
        "x/((-y)*x)",
        "((-sin(y)) - 0.5) + 2",
        "y/2 + 0.5^(-2)*(-1.5)",
        "8/-1/0",
        "-1*0\t-8-0* 0\t-8-00",
        "-1*-1*0\t- 5*8- 5*80-\ty\t- 5*8- 5*80-\tx-\t-8-0 ",
        "-1*-1*0\t- 5*8- 5*80-\ty- 5*80-\tx-\t-- 5*80-\tx-8-0 ",
        &format!("{}x{}", "-(".repeat(100), ")".repeat(100)),
        &format!("{}x", "-".repeat(199)),
        &format!("{}x{}", "2^-(".repeat(66), ")".repeat(66)),
    ] {
        assert!(parse(src).is_ok(), "{src}");
        check_typed(src).unwrap();
    }
}

/// The derivative check catches a wrong derivative (guards the tolerance).
#[test]
fn finite_differences_would_catch_an_error() {
    let e = parse("x^3").unwrap();
    let wrong = parse("3*x^2 + 1e-3").unwrap();
    let (x, h) = (0.8_f64, 1e-5);
    let fd = (at(&e, x + h, 0.0) - at(&e, x - h, 0.0)) / (2.0 * h);
    assert!((at(&wrong, x, 0.0) - fd).abs() > 1e-5 * (1.0 + fd.abs()));
}

/// The kernel check on fixed formulas: a NaN in the branch not taken does
/// not leak, and 300 points (full blocks and a partial one)
/// agrees with the scalar path and the stack machine to the bit.
#[test]
fn kernel_agrees_on_fixed_formulas() {
    let srcs = [
        "sqrt(x) if x > 0 and not_used_below < 1 else 0",
        "(sqrt(x) if x > 0 else -1) + (log(y) if y <= 0 or x == 1 else y^k)",
        "(x if not x < y else y) + (1 if -1 < x <= 2 else 0)",
        "x^q + x^h + x^65 + x^-64 + (x*y)^k + min(x, -0)*max(y, 0)",
        "atan2(y, x) * exp(-x^2) + abs(x - y) - x/y",
    ];
    let es: Vec<Expr> = srcs
        .iter()
        .map(|s| parse(&s.replace("not_used_below", "y")).unwrap())
        .collect();
    let xy: Vec<(f64, f64)> = (0..300)
        .map(|i| (i as f64 / 50.0 - 3.0, 1.5 - i as f64 / 120.0))
        .collect();
    assert_eq!(check_kernel(&es, &xy), Ok(1500));
    let k = Kernel::compile(&[("f", &es[0])], &["x", "y"], &parameter).unwrap();
    let mut out = [f64::NAN];
    k.eval(&[-1.0, 0.0], &mut out, &mut k.workspace());
    assert!(out[0].abs() < 1e-300, "sqrt(-1) in the branch not taken");
}
