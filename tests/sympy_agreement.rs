//! Agreement with SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103).
//!
//! Every formula of `tests/data/formulas.txt` is parsed, simplified and
//! differentiated by our engine and evaluated (in extended precision) at
//! random points; the results go to a JSON file that `tests/sympy_check.py`
//! re-derives and re-evaluates with SymPy. Parameters (`param` lines) are
//! resolved with `resolve_parameters` and checked the same way. A formula
//! with `@ name = value, ...` is also evaluated at that point, which must be
//! finite for us; SymPy's reference there is its limit from above in the
//! variable (so a removable 0/0 in SymPy's own derivative is no excuse).
//!
//! Set `SYMPY_AGREEMENT_KEEP=FILE` to keep a copy of the JSON report.
//! Needs python3 with SymPy; `.ci/run` installs it (`pip install sympy`).

use serde_json::{json, Map, Value};
use std::collections::BTreeMap;
use std::path::Path;
use std::process::Command;
use stillpoint::formula::{parse, resolve_parameters, Expr};

/// A small deterministic generator (xorshift64*), so runs are repeatable.
struct Rng(u64);

impl Rng {
    fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let u = (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64;
        lo + (hi - lo) * u
    }
}

fn build_report() -> Value {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("tests/data/formulas.txt")).expect("formula list");
    let mut defs: Vec<(String, Expr)> = Vec::new();
    let mut cases: Vec<(String, String, BTreeMap<String, f64>)> = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if let Some(rest) = line.strip_prefix("param ") {
            let (name, src) = rest.split_once('=').expect("param name = formula");
            let e =
                parse(src.trim()).unwrap_or_else(|e| panic!("line {}: {}", i + 1, e.render(src)));
            defs.push((name.trim().to_string(), e));
        } else {
            let (var, rest) = line.split_once('|').expect("variable | formula");
            let (src, at) = rest.split_once('@').unwrap_or((rest, ""));
            let fixed = at
                .split(',')
                .filter(|a| !a.trim().is_empty())
                .map(|a| {
                    let (n, v) = a.split_once('=').expect("@ name = value");
                    (n.trim().to_string(), v.trim().parse().expect("a number"))
                })
                .collect();
            cases.push((var.trim().to_string(), src.trim().to_string(), fixed));
        }
    }
    let params = resolve_parameters(&defs, &[]).expect("parameters resolve");
    let param_values: BTreeMap<String, f64> = params.iter().cloned().collect();

    // Each parameter with the values of the names its formula uses.
    let param_json: Vec<Value> = defs
        .iter()
        .map(|(name, e)| {
            let env: Map<String, Value> = e
                .names()
                .into_iter()
                .map(|n| (n.clone(), json!(param_values[&n])))
                .collect();
            json!({"name": name, "formula": e.to_string(), "env": env, "value": param_values[name]})
        })
        .collect();

    let mut rng = Rng(0x5EED_CAFE_F00D_1234);
    let mut formulas = Vec::new();
    let mut pinned = 0;
    for (var, src, fixed) in &cases {
        let e = parse(src).unwrap_or_else(|err| panic!("{}", err.render(src)));
        let simplified = e.simplify();
        let derivative = e.diff(var);
        let names: Vec<String> = e.names().into_iter().collect();
        let mut points = Vec::new();
        let mut tries = 0;
        while tries < 40 && points.len() < 4 + usize::from(!fixed.is_empty()) {
            // The fixed point first, then random ones.
            let pin = tries == 0 && !fixed.is_empty();
            tries += 1;
            let values: BTreeMap<String, f64> = names
                .iter()
                .map(|n| {
                    let v = (pin.then(|| fixed.get(n).copied()).flatten())
                        .or_else(|| param_values.get(n).copied())
                        .unwrap_or_else(|| rng.uniform(0.3, 0.95));
                    (n.clone(), v)
                })
                .collect();
            let look = |n: &str| values.get(n).copied();
            let f = e.eval_extended(&look).expect("all names have values");
            let df = derivative
                .eval_extended(&look)
                .expect("all names have values");
            assert!(
                !pin || (f.is_finite() && df.is_finite()),
                "{src} at {values:?}: f = {f}, d/d{var} {derivative} = {df}"
            );
            if f.is_finite() && df.is_finite() {
                points.push(json!({"values": values, "f": f, "df": df, "fixed": pin}));
            }
        }
        assert!(
            points.len() >= 2,
            "{src}: too few points where it is finite"
        );
        pinned += usize::from(!fixed.is_empty());
        formulas.push(json!({
            "formula": src,
            "var": var,
            "names": names,
            "simplified": simplified.to_string(),
            "derivative": derivative.to_string(),
            "points": points,
        }));
    }
    assert!(pinned >= 3, "the fixed points were not read: {pinned}");
    json!({"parameters": param_json, "formulas": formulas})
}

fn python_with_sympy() -> bool {
    Command::new("python3")
        .args(["-c", "import sympy"])
        .output()
        .is_ok_and(|o| o.status.success())
}

#[test]
fn formulas_agree_with_sympy() {
    assert!(
        python_with_sympy(),
        "python3 with SymPy is required for this test; `.ci/run` installs it \
         (or run `pip install sympy`)"
    );
    let report = build_report();
    let n = report["formulas"].as_array().map_or(0, Vec::len);
    assert!(
        n >= 60,
        "the formula list should hold at least 60 formulas, has {n}"
    );
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("formulas.json");
    std::fs::write(&path, serde_json::to_string_pretty(&report).unwrap()).unwrap();
    // For debugging the checker itself: keep a copy of what was sent.
    if let Some(keep) = std::env::var_os("SYMPY_AGREEMENT_KEEP") {
        std::fs::copy(&path, keep).expect("copy the report");
    }
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/sympy_check.py");
    let out = Command::new("python3")
        .arg(&script)
        .arg(&path)
        .output()
        .expect("run python3");
    let stdout = String::from_utf8_lossy(&out.stdout);
    print!("{stdout}");
    eprint!("{}", String::from_utf8_lossy(&out.stderr));
    assert!(
        out.status.success(),
        "SymPy disagrees with the formula engine:\n{stdout}"
    );
    assert!(
        stdout.contains(&format!("sympy: {n} formulas, 0 disagreements")),
        "{stdout}"
    );
}
