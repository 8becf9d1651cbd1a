//! Barotropic gas P = K ρ^Γ against closed forms: the polytropic slab under
//! uniform gravity, the polytropic envelope around a point mass, a
//! barotropic disk's rotation, and SymPy's residuals of the derived laws
//! (`tests/barotropic_check.py`). Every check names its source beside it.

mod common;

use std::process::Command;

use serde_json::json;
use stillpoint::background::Background;
use stillpoint::check::{self, Verdict};
use stillpoint::closure::derived_laws;
use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, std::path::Path::new("."), &[])
        .unwrap_or_else(|e| panic!("{e}"))
}

fn verdict(l: &Loaded) -> Verdict {
    let (bg, domain) = pipeline::solve(l).unwrap();
    let c = pipeline::centres_for(&l.grid, bg.frame());
    check::run(&l.model, &bg, &domain, &c, 1e-10)
        .unwrap()
        .verdict
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

const SLAB: &str = r#"{
  "name": "polytropic-slab", "units": "code",
  "parameters": { "g0": 2.0, "K": 0.5, "Gam": 1.4, "ztop": 10 },
  "gravity": { "uniform": "g0" },
  "gas": { "barotropic": { "K": "K", "exponent": "Gam" } },
  "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": "ztop", "value": 0 } },
  "grid": { "z": { "from": 0, "to": 9.9, "cells": 64 } }
}"#;

const ENVELOPE: &str = r#"{
  "name": "polytropic-envelope", "units": "code",
  "parameters": { "Mp": 1.5, "K": 0.3, "Gam": 1.3, "rout": 8 },
  "gravity": { "point_mass": "Mp" },
  "gas": { "barotropic": { "K": "K", "exponent": "Gam" } },
  "balance": { "shape": "sphere", "solve_for": "density", "anchor": { "at": "rout", "value": 0 } },
  "grid": { "r": { "from": 0.5, "to": 7.5, "cells": 64 } }
}"#;

const DISK: &str = r#"{
  "name": "polytropic-disk", "units": "code",
  "parameters": { "M": 1.0, "K": 0.002, "Gam": 1.6667, "rho0": 1.0, "p": 1.5 },
  "gravity": { "point_mass": "M" },
  "gas": { "barotropic": { "K": "K", "exponent": "Gam" } },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "rho0*R^(-p)" },
  "grid": { "R": { "from": 0.5, "to": 4, "cells": 64 } }
}"#;

/// Polytropic slab under uniform gravity g with its surface at z_top:
/// h(ρ) = g (z_top − z), so P = K ((Γ−1) g (z_top − z)/(Γ K))^(Γ/(Γ−1)),
/// i.e. P ∝ (1 − z/z_top)^(Γ/(Γ−1)) — the standard textbook result (e.g.
/// Chandrasekhar 1939, An Introduction to the Study of Stellar Structure,
/// ch. IV, the polytropic relation with constant gravity; from memory).
#[test]
fn polytropic_slab_matches_the_textbook_power_law() {
    let l = load(SLAB);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let (g, k, gam, ztop) = (2.0, 0.5, 1.4, 10.0);
    let p_top_free =
        |z: f64| k * ((gam - 1.0) * g * (ztop - z) / (gam * k)).powf(gam / (gam - 1.0));
    let p0 = p_top_free(0.0);
    for i in 0..=99 {
        let z = 0.1 * i as f64;
        let st = bg.on_line(z);
        // The shape P/P(0) = (1 − z/z_top)^(Γ/(Γ−1)).
        let shape = (1.0 - z / ztop).powf(gam / (gam - 1.0));
        assert!(rel(st.pressure / p0, shape) < 1e-13, "z = {z}");
        assert!(rel(st.pressure, k * st.density.powf(gam)) < 1e-13);
    }
    assert!(matches!(verdict(&l), Verdict::IdenticallyZero { .. }));
}

/// Polytropic envelope around a point mass M with its surface at r_out:
/// h(ρ) + Φ = Φ(r_out), Φ = −GM/r, so ρ = ((Γ−1) GM (1/r − 1/r_out)/(Γ K))^(1/(Γ−1))
/// (the Bernoulli relation of a barotropic gas solved in closed form; e.g.
/// Shu 1992, The Physics of Astrophysics II: Gas Dynamics, ch. 2 on
/// barotropic flows; from memory).
#[test]
fn polytropic_envelope_matches_the_bernoulli_closed_form() {
    let l = load(ENVELOPE);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let (gm, k, gam, rout) = (1.5, 0.3, 1.3, 8.0);
    for i in 0..=70 {
        let r = 0.5 + 0.1 * i as f64;
        let st = bg.on_line(r);
        let rho = ((gam - 1.0) * gm * (1.0 / r - 1.0 / rout) / (gam * k)).powf(1.0 / (gam - 1.0));
        assert!(
            rel(st.density, rho) < 1e-12,
            "r = {r}: {} vs {rho}",
            st.density
        );
        // Bernoulli: h + Φ is the same everywhere.
        let h = gam * k * st.density.powf(gam - 1.0) / (gam - 1.0);
        assert!((h - gm / r + gm / rout).abs() < 1e-13 * gm / r);
    }
    assert!(matches!(verdict(&l), Verdict::IdenticallyZero { .. }));
}

/// A disk anchored by a density inside the atmosphere: h(ρ_a) + Φ_a fixes
/// the constant (the same Bernoulli relation).
#[test]
fn envelope_anchored_by_a_density_inside() {
    let text = ENVELOPE.replace(
        r#""anchor": { "at": "rout", "value": 0 }"#,
        r#""anchor": { "at": 1, "value": 1.2 }"#,
    );
    let l = load(&text);
    let (bg, _) = pipeline::solve(&l).unwrap();
    assert!(rel(bg.on_line(1.0).density, 1.2) < 1e-14);
    let (gm, k, gam) = (1.5, 0.3, 1.3);
    let h = |rho: f64| gam * k * rho.powf(gam - 1.0) / (gam - 1.0);
    let c = h(1.2) - gm;
    for r in [0.6, 2.0, 3.0] {
        let st = bg.on_line(r);
        assert!(rel(h(st.density) - gm / r, c) < 1e-12);
    }
}

/// Barotropic disk, ρ = ρ0 R^−p: v_φ² = GM/R + R dh/dR with
/// h = ΓKρ^(Γ−1)/(Γ−1), so v_φ² = GM/R − p K Γ ρ0^(Γ−1) R^(−p(Γ−1)) (radial
/// balance v_φ²/R = Φ_R + (1/ρ) dP/dR, design.md §2; the closed form is
/// elementary algebra, common practice, no source).
#[test]
fn barotropic_disk_rotation_closed_form() {
    let l = load(DISK);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let (k, gam, p) = (0.002, 1.6667, 1.5);
    for i in 0..=35 {
        let r = 0.5 + 0.1 * i as f64;
        let v2 = 1.0 / r - p * k * gam * r.powf(-p * (gam - 1.0));
        assert!(rel(bg.on_line(r).rotation().powi(2), v2) < 1e-13, "R = {r}");
    }
    assert!(matches!(verdict(&l), Verdict::IdenticallyZero { .. }));
}

#[test]
fn barotropic_gas_refuses_a_sound_speed_and_other_closures() {
    let text = SLAB.replace(
        r#""gas": { "barotropic""#,
        r#""gas": { "sound_speed_sq": 1, "barotropic""#,
    );
    let e = profile::from_text("t", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert_eq!(e.path, "gas.barotropic");
    assert!(e.message.contains("remove gas.sound_speed_sq"), "{e}");
    let text = SLAB.replace(r#""exponent": "Gam""#, r#""exponent": 1"#);
    let e = profile::from_text("t", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert_eq!(e.path, "gas.barotropic.exponent");
    let text = SLAB.replace(
        r#""solve_for": "density", "anchor""#,
        r#""solve_for": "pressure", "density": "exp(-z)", "anchor""#,
    );
    let e = pipeline::solve(&load(&text)).err().expect("refused");
    assert!(e.to_string().contains("gas.barotropic ties P"), "{e}");
}

/// The same laws handed to SymPy (Meurer et al. 2017, PeerJ Comput. Sci.
/// 3:e103): it differentiates our printed ρ, P and Φ itself, forms the
/// balance residual (hydrostatic P'/ρ + Φ', or the disk's
/// v_φ²/R − Φ_R − P_R/ρ) and compares ρ with the closed forms above.
#[test]
fn sympy_residuals_of_the_barotropic_closed_forms() {
    let mut cases = Vec::new();
    for (text, kind) in [(SLAB, "slab"), (ENVELOPE, "envelope"), (DISK, "disk")] {
        let l = load(text);
        let laws = derived_laws(&l.model).unwrap();
        let get = |n: &str| {
            laws.iter()
                .find(|d| d.name == n)
                .map(|d| d.expr.to_string())
                .unwrap_or_default()
        };
        let mut params: serde_json::Map<String, serde_json::Value> = l
            .model
            .parameters
            .iter()
            .map(|(n, v)| (n.clone(), json!(v)))
            .collect();
        params.insert("G".into(), json!(1.0));
        cases.push(json!({
            "kind": kind,
            "coordinate": l.model.coordinate(),
            "phi": l.model.potential.expr.to_string(),
            "rho": get("rho"),
            "P": get("P"),
            "v_phi^2": get("v_phi^2"),
            "density_law": l.model.density.as_ref().map(|d| d.expr.to_string()),
            "parameters": params,
            "range": [l.grid.axes()[0].range().0, l.grid.axes()[0].range().1],
        }));
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("barotropic.json");
    std::fs::write(&path, serde_json::to_string_pretty(&json!(cases)).unwrap()).unwrap();
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/barotropic_check.py");
    let out = Command::new("python3")
        .arg(script)
        .arg(&path)
        .output()
        .expect("python3 is required (`.ci/run` installs SymPy)");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{text}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    println!("{text}");
    assert!(text.contains("3 cases, 0 disagreements"), "{text}");
}

/// The bundled `planet-envelope-box`: the spherical balance of a polytropic
/// envelope on a 3D Cartesian grid (r = |x|), read with h5py, against the
/// Bernoulli relation h(ρ) + Φ = const solved in closed form (standard
/// textbook result; tests/envelope_box_check.py), at every cell centre;
/// `check` finds it identically zero; the bundled (averaged) file builds.
#[test]
fn issue7_planet_envelope_box_matches_bernoulli() {
    let d = tempfile::tempdir().unwrap();
    let o = common::stillpoint(d.path(), &["profiles", "planet-envelope-box"]);
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["sampling"] = serde_json::json!({ "rule": "center" });
    for a in ["x", "y", "z"] {
        v["grid"][a]["cells"] = 24.into();
    }
    std::fs::write(d.path().join("c.json"), v.to_string()).unwrap();
    let (code, t) = common::run(d.path(), &["build", "c.json", "-o", "c.h5"]);
    assert_eq!(code, Some(0), "{t}");
    let (code, t) = common::run(d.path(), &["check", "planet-envelope-box"]);
    assert_eq!(code, Some(0), "{t}");
    assert!(t.contains("identically zero"), "{t}");
    let (code, t) = common::run(d.path(), &["build", "planet-envelope-box"]);
    assert_eq!(code, Some(0), "{t}");
    let script =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/envelope_box_check.py");
    let o = Command::new("python3")
        .arg(script)
        .arg(d.path().join("c.h5"))
        .args(["M=1", "eps=0.05", "r_out=1", "K=0.8", "Gam=1.4"])
        .output()
        .expect("python3 with h5py and numpy is needed");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{text}");
    assert!(
        o.status.success() && text.contains("envelope box: ok"),
        "{text}"
    );
}
