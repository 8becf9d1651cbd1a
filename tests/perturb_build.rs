//! Perturbations in built files (issue 9): noise identical to the bit for
//! any thread count and slab size, a sampled sound wave with the chosen
//! amplitude, `/state` a group of its own equal to `/background` plus
//! `/perturbation`. Files are read back with h5py (`tests/core_check.py`,
//! `tests/perturb_check.py`).

mod common;
use common::{stillpoint, text};
use std::path::Path;
use std::process::Command;

fn python(dir: &Path, script: &str, args: &[&str]) {
    let script = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join(script);
    let o = Command::new("python3")
        .arg(script)
        .args(args)
        .current_dir(dir)
        .output()
        .expect("python3 with h5py and numpy is needed (.ci/run installs them with pip)");
    assert!(o.status.success(), "{}", text(&o));
}

fn build(dir: &Path, profile: &str, out: &str, extra: &[&str]) {
    let mut args = vec!["build", profile, "-o", out];
    args.extend(extra);
    let o = stillpoint(dir, &args);
    assert!(
        o.status.success(),
        "build {profile} {extra:?}: {}",
        text(&o)
    );
}

const NOISY_DISK: &str = r#"{
  "name": "noisy", "units": "code",
  "parameters": { "h": 0.05 },
  "gravity": { "point_mass": 1.0 },
  "gas": { "sound_speed_sq": "h^2 / R", "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "R^(-1)" },
  "grid": { "R": { "from": 0.5, "to": 2.0, "cells": 24 }, "phi": { "from": 0, "to": "2*pi", "cells": 20 } },
  "sampling": { "rule": "average", "points": 3 },
  "perturbations": [
    { "kind": "noise", "field": "velocity_R", "amplitude": 1e-3, "relative_to": "sound_speed", "distribution": "gaussian", "seed": 11 },
    { "kind": "noise", "field": "density", "amplitude": 1e-4, "relative_to": "value", "distribution": "uniform", "seed": 11, "azimuthal_band": [1, 5] },
    { "kind": "planet", "mass_ratio": 1e-4, "orbit_radius": 1.0, "softening_scale_heights": 0.6, "indirect": true }
  ]
}"#;

#[test]
fn issue9_noise_identical_for_any_threads_and_slab_size() {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("noisy.json"), NOISY_DISK).unwrap();
    let runs: [(&str, &[&str]); 5] = [
        ("t1.h5", &["--threads", "1"]),
        ("t2.h5", &["--threads", "2"]),
        ("t4.h5", &["--threads", "4"]),
        ("s5.h5", &["--threads", "2", "--slab-rows", "5"]),
        ("s1.h5", &["--threads", "4", "--slab-rows", "1"]),
    ];
    for (file, extra) in runs {
        build(d.path(), "noisy.json", file, extra);
    }
    let names: Vec<&str> = runs.iter().map(|(f, _)| *f).collect();
    python(
        d.path(),
        "core_check.py",
        &["same"].iter().chain(&names).copied().collect::<Vec<_>>(),
    );
    python(d.path(), "perturb_check.py", &["sum", "t1.h5"]);
}

#[test]
fn issue9_sampled_sound_wave_has_the_chosen_amplitude() {
    // An isothermal slab (ρ = (P0/c²) e^(−g z/c²), the barometric law) with
    // a sound wave of δρ/ρ = 1e-6, averaged over cells by a 4-point rule.
    let profile = r#"{
      "name": "wave", "units": "code",
      "parameters": { "g0": 0.5, "cs2": 1.0, "P0": 1.0 },
      "gravity": { "uniform": "g0" },
      "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
      "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": 0, "value": "P0" } },
      "grid": { "z": { "from": 0, "to": 2, "cells": 64 } },
      "sampling": { "rule": "average", "points": 4 },
      "perturbations": [{ "kind": "sound_wave", "amplitude": 1e-6, "wavevector": { "z": 6.283185307179586 }, "phase": 0.25 }]
    }"#;
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("wave.json"), profile).unwrap();
    build(d.path(), "wave.json", "wave.h5", &[]);
    python(
        d.path(),
        "perturb_check.py",
        &[
            "wave",
            "wave.h5",
            "1e-6",
            "6.283185307179586",
            "0.25",
            "1.4",
            "0.5",
            "1.0",
            "1.0",
        ],
    );
    python(d.path(), "perturb_check.py", &["sum", "wave.h5"]);
}

/// The number after `key` in `line` (`pressure 9.759e-7` → 9.759e-7).
fn number_after(line: &str, key: &str) -> f64 {
    let at = line
        .find(key)
        .unwrap_or_else(|| panic!("no `{key}` in {line:?}"));
    line[at + key.len()..]
        .split([' ', ',', ')'])
        .find(|s| !s.is_empty())
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| panic!("no number after `{key}` in {line:?}"))
}

#[test]
fn issue9_check_reports_each_perturbation_against_the_imbalance() {
    // The bundled pulsed slab: an adiabatic pressure pulse of δP/P = 1e-6,
    // centred at (x, z) = (0, 1.5) with widths 0.1, on a 128 × 128 grid of
    // [−2, 2] × [0, 4]. Both centre coordinates fall on cell edges, so the
    // nearest cell centres lie 1/64 off in x and z and the sampled peak is
    // the Gaussian's closed form 1e-6 exp(−2 (1/64)²/(2 · 0.1²)) there.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let o = stillpoint(root, &["check", "profiles/pulsed-slab.json"]);
    let out = text(&o);
    assert!(o.status.success(), "{out}");
    let lines: Vec<&str> = out.lines().collect();
    let at = lines
        .iter()
        .position(|l| l.contains("perturbations[0] (pulse)"))
        .unwrap_or_else(|| panic!("no line for the pulse in {out}"));
    let want = 1e-6 * (-2.0 * (1.0f64 / 64.0).powi(2) / (2.0 * 0.01)).exp();
    let got = number_after(lines[at], "pressure");
    assert!((got / want - 1.0).abs() < 1e-3, "{got} vs {want}: {out}");
    // Keeping entropy, δρ/ρ = (1 + δP/P)^(1/γ) − 1 ≈ (δP/P)/γ (γ = 1.4).
    let rho = number_after(lines[at], "density");
    assert!((rho / (want / 1.4) - 1.0).abs() < 1e-3, "{rho}: {out}");
    // The verdict beside the discrete imbalance `check` prints above.
    let imbalance = lines
        .iter()
        .skip_while(|l| !l.starts_with("discrete imbalance"))
        .find(|l| l.trim_start().starts_with("max"))
        .map(|l| number_after(l, "max"))
        .unwrap_or_else(|| panic!("no discrete imbalance in {out}"));
    let verdict = lines[at + 1].trim();
    let word = if got > imbalance { "larger" } else { "smaller" };
    assert!(
        verdict.starts_with(&format!("{word} than the discretisation imbalance (")),
        "{verdict} (peak {got}, imbalance {imbalance})"
    );
    assert!((number_after(verdict, "imbalance (") / imbalance - 1.0).abs() < 1e-3);
    if word == "smaller" {
        assert!(
            out.contains("caution: perturbations[0] (pulse)") && out.contains("swamp"),
            "{out}"
        );
    }
    // A build records the same comparison in its metadata.
    let d = tempfile::tempdir().unwrap();
    let profile = root.join("profiles/pulsed-slab.json");
    build(d.path(), profile.to_str().unwrap(), "slab.h5", &[]);
    python(
        d.path(),
        "perturb_check.py",
        &["alone", "slab.h5", "0", "pressure", &format!("{want:e}")],
    );
}

#[test]
fn issue9_bundled_3d_disk_has_uniform_velocity_noise() {
    // noisy-disk-3d: uniform noise of 1e-2 of the sound speed in v_R, v_φ
    // and v_z on 24 × 32 × 12 cells, checked against the moments of the
    // uniform distribution (tests/perturb_check.py names the source).
    let d = tempfile::tempdir().unwrap();
    build(d.path(), "noisy-disk-3d", "n3.h5", &[]);
    python(
        d.path(),
        "perturb_check.py",
        &[
            "uniform",
            "n3.h5",
            "1e-2",
            "velocity_R",
            "velocity_phi",
            "velocity_z",
        ],
    );
    python(d.path(), "perturb_check.py", &["sum", "n3.h5"]);
}
