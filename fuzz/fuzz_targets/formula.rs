//! The formula parser, printer, differentiator and evaluators on any text:
//! nothing may panic, overflow the stack or hang; what parses prints as a
//! text that parses, prints the same once more (printing is a fixed point)
//! and has the same value. The printed text need not give the same tree:
//! the printer puts a term without a minus first in a sum and gathers
//! divisors into one quotient, so the tree read back may order a sum or
//! group a product differently — the same value up to rounding.
#![no_main]

use libfuzzer_sys::fuzz_target;
use stillpoint::formula::{parse, Program};

fn lookup(n: &str) -> Option<f64> {
    match n {
        "x" => Some(0.7),
        "y" => Some(-1.3),
        "pi" => Some(std::f64::consts::PI),
        _ => None,
    }
}

fn same(a: f64, b: f64) -> bool {
    // Printing may reorder a sum, so terms that cancel leave round-off of
    // the size of the terms: an absolute floor as well as a relative one.
    a == b || (a.is_nan() && b.is_nan()) || (a - b).abs() <= 1e-9 * (1.0 + a.abs().max(b.abs()))
}

fuzz_target!(|data: &[u8]| {
    // Formulas are typed by hand: a few hundred characters covers them and
    // keeps each run short.
    if data.len() > 400 {
        return;
    }
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(e) = parse(text) else {
        return;
    };
    let printed = e.to_string();
    let back = match parse(&printed) {
        Ok(b) => b,
        Err(err) => panic!("`{text}` prints as `{printed}`, which does not parse: {err}"),
    };
    let again = back.to_string();
    assert_eq!(again, printed, "`{text}` prints as `{printed}`, then as `{again}`");
    let (a, b) = (e.eval(&lookup), back.eval(&lookup));
    if let (Ok(a), Ok(b)) = (a, b) {
        assert!(same(a, b), "`{text}`: {a} before, {b} after printing");
    }
    let _ = e.eval_extended(&lookup);
    let _ = e.diff("x").simplify().eval(&lookup);
    let _ = e.to_latex();
    if let Ok(p) = Program::compile(&e, &["x", "y"], &|n| lookup(n)) {
        let _ = p.eval(&[0.7, -1.3]);
    }
});
