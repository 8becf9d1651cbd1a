//! `balance.edges` (issue 7, part 6): a smooth inner cavity, an outer rim
//! and a floor applied to the density law before the balance is solved.

mod common;

use std::path::Path;
use std::process::Command;

/// A vertically integrated power-law disk with a cavity, a rim and a
/// floor. Invented numbers.
const LINE: &str = r#"{
  "name": "tapered-line", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "sigma0": 1.0, "p": 1.0, "h0": 0.05, "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^(-1)" },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "sigma0*(R/R0)^(-p)",
               "vertically_integrated": true,
               "edges": { "cavity": { "radius": 0.6, "width": 0.1 }, "rim": { "radius": 2.0, "width": 0.3 }, "floor": 1e-6 } },
  "grid": { "R": { "from": 0.3, "to": 2.5, "cells": 200 } },
  "sampling": { "rule": "center" }
}"#;

/// The same taper on the midplane density of a vertically isothermal
/// stratified disk on [R, z].
fn strat() -> String {
    LINE.replace(r#""shape": "disk""#, r#""shape": "stratified_disk""#)
        .replace(r#""vertically_integrated": true,"#, "")
        .replace(
            r#""grid": { "R": { "from": 0.3, "to": 2.5, "cells": 200 } }"#,
            r#""grid": { "R": { "from": 0.3, "to": 2.5, "cells": 48 }, "z": { "from": -0.2, "to": 0.2, "cells": 16 } }"#,
        )
}

/// `check` stays exact (identically zero) with the taper, on a line and on
/// a stratified disk, and the files hold the tapered law: h5py against the
/// closed form (tests/edges_check.py). Bad values are refused at their key.
#[test]
fn issue7_edges_keep_the_balance_exact() {
    let d = tempfile::tempdir().unwrap();
    let s = strat();
    for (name, text) in [("line", LINE), ("strat", s.as_str())] {
        let json = format!("{name}.json");
        std::fs::write(d.path().join(&json), text).unwrap();
        let (code, t) = common::run(d.path(), &["check", &json]);
        assert_eq!(code, Some(0), "{name}: {t}");
        assert!(
            t.contains("identically zero") && t.contains("tanh"),
            "{name}: {t}"
        );
        let (code, t) = common::run(d.path(), &["build", &json, "-o", &format!("{name}.h5")]);
        assert_eq!(code, Some(0), "{name}: {t}");
    }
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/edges_check.py");
    let o = Command::new("python3")
        .arg(script)
        .arg(d.path().join("line.h5"))
        .arg(d.path().join("strat.h5"))
        .args(["0.6", "0.1", "2.0", "0.3", "1e-6", "0.05"])
        .output()
        .expect("python3 with h5py and numpy is needed");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{text}");
    assert!(o.status.success() && text.contains("edges: ok"), "{text}");
    for (bad, key) in [
        (r#""width": 0.1"#, "balance.edges.cavity.width"),
        (r#""radius": 2.0"#, "balance.edges.rim"),
        (r#""floor": 1e-6"#, "balance.edges.floor"),
    ] {
        let wrong = match key {
            "balance.edges.cavity.width" => r#""width": 0"#,
            "balance.edges.rim" => r#""radius": 0.5"#,
            _ => r#""floor": -1"#,
        };
        std::fs::write(d.path().join("bad.json"), LINE.replace(bad, wrong)).unwrap();
        let (code, t) = common::run(d.path(), &["check", "bad.json"]);
        assert_eq!(code, Some(2), "{key}: {t}");
        assert!(t.contains(key), "{key}: {t}");
    }
}
