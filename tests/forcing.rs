//! Issue 8, part 6: the manufactured forcing of an audit (`solve_for:
//! nothing`; src/forcing.rs): the force density in the file against SymPy,
//! added back to the audited residual (Roache 2002, *Code Verification by
//! the Method of Manufactured Solutions*, J. Fluids Eng. 124, 4), chosen by
//! `output.fields`, emitted as code (C compiled with gcc, Python run with
//! NumPy) and used by the drift forecast.

mod common;
use common::{stillpoint, text, variant};

use std::path::Path;
use std::process::Command;

/// The bundled ring on Keplerian rotation, sampled at the cell centres of
/// a radial line.
fn ring(dir: &Path) -> String {
    variant(dir, "keplerian-audit", |v| {
        v["sampling"] = serde_json::json!({"rule": "center"});
        v["grid"] = serde_json::json!({"R": {"from": 0.5, "to": 1.5, "cells": 128}});
    })
}

/// An isothermal slab whose density falls 1 % too slowly (the audit of
/// tests/cli.rs, `issue2_building_an_unbalanced_audit_carries_a_caution`).
fn slab(dir: &Path) -> String {
    variant(dir, "quiet-slab", |v| {
        v["balance"] = serde_json::json!({
            "shape": "slab", "solve_for": "nothing", "density": "exp(-z/(1.01*H))"
        });
        v["sampling"] = serde_json::json!({"rule": "center"});
    })
}

fn python(dir: &Path, script: &str, args: &[&str]) -> String {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/").to_string() + script;
    let o = Command::new("python3")
        .arg(&path)
        .args(args)
        .current_dir(dir)
        .output()
        .expect("python3 with h5py, numpy and sympy is needed (.ci/run installs them)");
    assert!(o.status.success(), "{script}: {}", text(&o));
    assert!(text(&o).contains("all checks passed"), "{}", text(&o));
    text(&o)
}

#[test]
fn issue8_manufactured_forcing_cancels_the_audited_residual_sympy() {
    let d = tempfile::tempdir().unwrap();
    for file in [ring(d.path()), slab(d.path())] {
        let o = stillpoint(d.path(), &["check", &file]);
        let out = text(&o);
        assert_eq!(
            o.status.code(),
            Some(1),
            "an audit that does not balance: {out}"
        );
        let residual = out
            .lines()
            .find_map(|l| l.trim_start().strip_prefix("residual"))
            .map(str::trim)
            .unwrap_or_else(|| panic!("no residual in {out}"));
        let h5 = format!("{file}.h5");
        let o = stillpoint(d.path(), &["build", &file, "-o", &h5]);
        assert!(o.status.success(), "{}", text(&o));
        let said = python(d.path(), "forcing_check.py", &[&h5, residual]);
        println!("{file}: {said}");
        // The drift forecast adds the forcing to both schemes.
        assert!(out.contains("add the manufactured forcing"), "{out}");
    }
}

#[test]
fn issue8_forcing_fields_are_selected_like_other_fields() {
    let d = tempfile::tempdir().unwrap();
    let file = variant(d.path(), "keplerian-audit", |v| {
        v["output"]["fields"] = serde_json::json!(["density", "forcing_R"]);
    });
    let o = stillpoint(d.path(), &["build", &file, "-o", "k.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("k.h5")).unwrap();
    assert_eq!(
        f.group("forcing").unwrap().member_names().unwrap(),
        ["forcing_R"]
    );
    assert_eq!(
        f.group("background").unwrap().member_names().unwrap(),
        ["density"]
    );
    // A solved profile has no forcing.
    let o = stillpoint(d.path(), &["build", "quiet-slab", "-o", "q.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let q = hdf5::File::open(d.path().join("q.h5")).unwrap();
    assert!(q.group("forcing").is_err());
    // Asking for a forcing field there names the fields that exist.
    let bad = variant(d.path(), "quiet-slab", |v| {
        v["output"]["fields"] = serde_json::json!(["forcing_z"]);
    });
    let o = stillpoint(d.path(), &["build", &bad, "-o", "b.h5"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("output.fields"), "{}", text(&o));
}

/// The emitted `_forcing` functions (C with gcc, Fortran with gfortran,
/// Python with NumPy) give the file's values at the cell centres to 1e-13
/// relative.
#[test]
fn issue8_emitted_forcing_matches_the_file() {
    let d = tempfile::tempdir().unwrap();
    let file = ring(d.path());
    let o = stillpoint(d.path(), &["build", &file, "-o", "k.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("k.h5")).unwrap();
    let r: Vec<f64> = f.dataset("grid/R_centers").unwrap().read_raw().unwrap();
    let want: Vec<f64> = f.dataset("forcing/forcing_R").unwrap().read_raw().unwrap();
    let scale = want.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let compare = |got: &[f64], lang: &str| {
        assert_eq!(got.len(), want.len(), "{lang}");
        for (g, w) in got.iter().zip(&want) {
            assert!((g - w).abs() <= 1e-13 * scale, "{lang}: {g} vs {w}");
        }
    };
    let points: Vec<String> = r.iter().map(|x| format!("{x:e}")).collect();
    // Python.
    let o = stillpoint(d.path(), &["emit", &file, "--lang", "python", "-o", "k.py"]);
    assert!(o.status.success(), "{}", text(&o));
    let script = format!(
        "import k, numpy as np\nR = np.array([{}])\nf = k.stillpoint_keplerian_audit_forcing(R)\n\
         print(' '.join(repr(float(v)) for v in f[0]))\nassert np.all(f[1] == 0) and np.all(f[2] == 0)\n",
        points.join(", ")
    );
    let o = Command::new("python3")
        .args(["-c", &script])
        .current_dir(d.path())
        .output()
        .expect("python3 with numpy");
    assert!(o.status.success(), "{}", text(&o));
    let got: Vec<f64> = String::from_utf8_lossy(&o.stdout)
        .split_whitespace()
        .map(|v| v.parse().unwrap())
        .collect();
    compare(&got, "python");
    // C99 with gcc.
    let o = stillpoint(d.path(), &["emit", &file, "--lang", "c", "-o", "k.h"]);
    assert!(o.status.success(), "{}", text(&o));
    let main = format!(
        "#include <stdio.h>\n#include \"k.h\"\nint main(void) {{\n  const double R[] = {{{}}};\n  \
         for (unsigned i = 0; i < sizeof R / sizeof R[0]; i++) {{\n    double f[3];\n    \
         stillpoint_keplerian_audit_forcing(R[i], f);\n    printf(\"%.17g\\n\", f[0]);\n  }}\n  \
         return 0;\n}}\n",
        points.join(", ")
    );
    std::fs::write(d.path().join("main.c"), main).unwrap();
    let o = Command::new("gcc")
        .args([
            "-std=c99", "-Wall", "-Werror", "-O1", "main.c", "-o", "main", "-lm",
        ])
        .current_dir(d.path())
        .output()
        .expect("gcc is needed (.ci/run installs it)");
    assert!(o.status.success(), "gcc: {}", text(&o));
    let o = Command::new(d.path().join("main")).output().unwrap();
    let got: Vec<f64> = String::from_utf8_lossy(&o.stdout)
        .split_whitespace()
        .map(|v| v.parse().unwrap())
        .collect();
    compare(&got, "c");
    // Fortran 2008 with gfortran; the points are read from a file.
    let o = stillpoint(
        d.path(),
        &["emit", &file, "--lang", "fortran", "-o", "k.f90"],
    );
    assert!(o.status.success(), "{}", text(&o));
    std::fs::write(d.path().join("r.txt"), points.join("\n") + "\n").unwrap();
    let main = format!(
        "program main\n  use iso_fortran_env, only: real64\n  \
         use stillpoint_keplerian_audit_mod\n  implicit none\n  real(real64) :: r, f(3)\n  \
         integer :: i\n  open(10, file='r.txt', status='old')\n  do i = 1, {}\n    \
         read(10, *) r\n    call stillpoint_keplerian_audit_forcing(r, f)\n    \
         print '(es26.17e3)', f(1)\n  end do\nend program main\n",
        points.len()
    );
    std::fs::write(d.path().join("main.f90"), main).unwrap();
    let o = Command::new("gfortran")
        .args([
            "-std=f2008",
            "-Wall",
            "-Werror",
            "-O1",
            "k.f90",
            "main.f90",
            "-o",
            "mainf",
        ])
        .current_dir(d.path())
        .output()
        .expect("gfortran is needed (.ci/run installs it)");
    assert!(o.status.success(), "gfortran: {}", text(&o));
    let o = Command::new(d.path().join("mainf"))
        .current_dir(d.path())
        .output()
        .unwrap();
    let got: Vec<f64> = String::from_utf8_lossy(&o.stdout)
        .split_whitespace()
        .map(|v| v.parse().unwrap())
        .collect();
    compare(&got, "fortran");
}
