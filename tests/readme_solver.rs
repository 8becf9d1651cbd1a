//! Issue 8: the README's section "Reading it from your solver" — its Python
//! block runs, with h5py and NumPy, on the files the section names.

mod common;
use common::{stillpoint, text};

use std::path::Path;
use std::process::Command;

fn variant(dir: &Path, name: &str, out: &str, sampling: serde_json::Value) {
    let o = stillpoint(dir, &["profiles", name]);
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["sampling"] = sampling;
    v["output"]["csv"] = false.into();
    let file = format!("{out}.json");
    std::fs::write(dir.join(&file), v.to_string()).unwrap();
    let o = stillpoint(dir, &["build", &file, "-o", &format!("{out}.h5")]);
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn issue8_readme_solver_block_runs() {
    let readme = include_str!("../README.md");
    let section = readme
        .split("## Reading it from your solver")
        .nth(1)
        .expect("the README section");
    let block = section
        .split("```python\n")
        .nth(1)
        .and_then(|b| b.split("```").next())
        .expect("a python block");
    let d = tempfile::tempdir().unwrap();
    let dir = d.path();
    variant(
        dir,
        "quiet-slab",
        "slab-nodes",
        serde_json::json!({"rule": "gauss-lobatto-nodes", "points": 3}),
    );
    variant(
        dir,
        "quiet-slab",
        "slab-modes",
        serde_json::json!({"rule": "legendre-modes", "modes": 3}),
    );
    let o = stillpoint(dir, &["build", "keplerian-audit", "-o", "ring.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let o = stillpoint(
        dir,
        &[
            "emit",
            "keplerian-audit",
            "--lang",
            "python",
            "-o",
            "ring.py",
        ],
    );
    assert!(o.status.success(), "{}", text(&o));
    let o = Command::new("python3")
        .args(["-c", block])
        .current_dir(dir)
        .output()
        .expect("python3 with h5py and numpy (.ci/run installs them)");
    assert!(o.status.success(), "the README block fails: {}", text(&o));
}
