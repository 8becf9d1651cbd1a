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
