//! Every kind of perturbation on every geometry family (issue 9): each
//! kind is built alone on each grid layout where it makes sense — slab,
//! sphere and disk lines, `[R, phi]`, `[x, y]`, `[x, z]`, `[R, z]`,
//! `[r, theta]`, `[R, phi, z]`, `[r, theta, phi]` (disk and sphere), `[x, y, z]` — and the
//! files are read back with h5py (`tests/perturb_matrix_check.py`):
//! `/perturbation` is `/state` − `/background`, the recorded peaks are
//! those of the data, the perturbation is not lost in the projection onto
//! the grid's components, a velocity along a grid component changes that
//! component only, and a sound wave keeps δP = c²δρ, |δv| = c δρ/ρ
//! (c² = γP/ρ; the linear acoustic wave, e.g. Landau & Lifshitz, Fluid
//! Mechanics, §64). Where a kind does not fit, the profile is refused with
//! the key at fault.

mod common;
use common::{stillpoint, text};
use std::path::Path;
use std::process::Command;

/// A geometry: the physics of the profile, its grid, and what it holds.
struct Geometry {
    name: &'static str,
    /// `gravity`, `gas` and `balance` entries of the profile.
    physics: &'static str,
    /// (axis, from, to, cells).
    axes: &'static [(&'static str, f64, f64, usize)],
    /// The velocity components the file writes.
    components: &'static [&'static str],
    /// Directions that are not components but lie in their span.
    other_directions: &'static [&'static str],
    /// Cartesian directions a sound wave may travel along.
    waves: &'static [&'static str],
    disk: bool,
}

const SLAB: &str = r#""parameters": { "g0": 1.0, "cs2": 1.0 },
  "gravity": { "uniform": "g0" },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
  "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": 0, "value": 1 } }"#;

const SLAB_Y: &str = r#""parameters": { "g0": 1.0, "cs2": 1.0 },
  "gravity": { "uniform": "g0" },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
  "balance": { "shape": "slab", "axis": "y", "solve_for": "density", "anchor": { "at": 0, "value": 1 } }"#;

const SPHERE: &str = r#""parameters": { "M": 1.0, "cs2": 0.3 },
  "gravity": { "point_mass": "M" },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
  "balance": { "shape": "sphere", "solve_for": "density", "anchor": { "at": 1, "value": 1 } }"#;

const DISK: &str = r#""parameters": { "h": 0.05 },
  "gravity": { "point_mass": 1.0 },
  "gas": { "sound_speed_sq": "h^2 / R", "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "R^(-1)" }"#;

const STRATIFIED: &str = r#""parameters": { "h0": 0.05 },
  "gravity": { "point_mass": 1.0 },
  "gas": { "sound_speed_sq": "h0^2 * R^(-0.5)", "gamma": 1.4 },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "R^(-2.25)" }"#;

/// The point masses softened (ε = 0.2) for grids that hold the centre.
const SPHERE_SOFT: &str = r#""parameters": { "M": 1.0, "cs2": 0.3 },
  "gravity": { "point_mass": "M", "softening": 0.2 },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
  "balance": { "shape": "sphere", "solve_for": "density", "anchor": { "at": 1, "value": 1 } }"#;

const DISK_SOFT: &str = r#""parameters": { "h": 0.05 },
  "gravity": { "point_mass": 1.0, "softening": 0.2 },
  "gas": { "sound_speed_sq": "h^2 / sqrt(R^2 + 0.04)", "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "(R^2 + 0.04)^(-0.5)" }"#;

const STRATIFIED_SOFT: &str = r#""parameters": { "h0": 0.05 },
  "gravity": { "point_mass": 1.0, "softening": 0.2 },
  "gas": { "sound_speed_sq": "h0^2 * (R^2 + 0.04)^(-0.25)", "gamma": 1.4 },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "(R^2 + 0.04)^(-1.125)" }"#;

const PI: f64 = std::f64::consts::PI;
const MID: f64 = std::f64::consts::FRAC_PI_2;

const GEOMETRIES: &[Geometry] = &[
    Geometry {
        name: "slab-z",
        physics: SLAB,
        axes: &[("z", 0.0, 2.0, 16)],
        components: &["z"],
        other_directions: &[],
        waves: &["z"],
        disk: false,
    },
    Geometry {
        name: "slab-xz",
        physics: SLAB,
        axes: &[("x", 0.0, 1.0, 8), ("z", 0.0, 2.0, 12)],
        components: &["x", "z"],
        other_directions: &["r", "theta"],
        waves: &["x", "z"],
        disk: false,
    },
    Geometry {
        name: "slab-xy-along-y",
        physics: SLAB_Y,
        axes: &[("x", 0.0, 1.0, 8), ("y", 0.0, 2.0, 12)],
        components: &["x", "y"],
        other_directions: &["phi"],
        waves: &["x", "y"],
        disk: false,
    },
    Geometry {
        name: "slab-xyz",
        physics: SLAB,
        axes: &[("x", 0.0, 1.0, 6), ("y", 0.0, 1.0, 5), ("z", 0.0, 2.0, 8)],
        components: &["x", "y", "z"],
        other_directions: &["R", "phi"],
        waves: &["x", "y", "z"],
        disk: false,
    },
    Geometry {
        name: "sphere-r",
        physics: SPHERE,
        axes: &[("r", 0.5, 2.0, 16)],
        components: &["r"],
        other_directions: &["x"],
        waves: &["x"],
        disk: false,
    },
    Geometry {
        name: "sphere-rtheta",
        physics: SPHERE,
        axes: &[("r", 0.5, 2.0, 8), ("theta", 0.3, 2.8, 8)],
        components: &["r", "theta", "phi"],
        other_directions: &["x", "z"],
        waves: &["x", "y", "z"],
        disk: false,
    },
    Geometry {
        name: "sphere-rthetaphi",
        physics: SPHERE,
        axes: &[
            ("r", 0.5, 2.0, 6),
            ("theta", 0.3, 2.8, 6),
            ("phi", 0.0, 2.0 * PI, 8),
        ],
        components: &["r", "theta", "phi"],
        other_directions: &["x", "y", "R", "z"],
        waves: &["x", "y", "z"],
        disk: false,
    },
    Geometry {
        name: "sphere-xyz",
        physics: SPHERE_SOFT,
        axes: &[
            ("x", -1.5, 1.5, 6),
            ("y", -1.5, 1.5, 6),
            ("z", -1.5, 1.5, 6),
        ],
        components: &["x", "y", "z"],
        other_directions: &["r", "theta"],
        waves: &["x", "y", "z"],
        disk: false,
    },
    Geometry {
        name: "disk-R",
        physics: DISK,
        axes: &[("R", 0.5, 2.0, 16)],
        components: &["R", "phi"],
        other_directions: &["x", "y"],
        waves: &["x", "y"],
        disk: true,
    },
    Geometry {
        name: "disk-Rphi",
        physics: DISK,
        axes: &[("R", 0.5, 2.0, 8), ("phi", 0.0, 2.0 * PI, 16)],
        components: &["R", "phi"],
        other_directions: &["x", "y"],
        waves: &["x", "y"],
        disk: true,
    },
    Geometry {
        name: "disk-xy",
        physics: DISK_SOFT,
        axes: &[("x", -2.0, 2.0, 10), ("y", -2.0, 2.0, 10)],
        components: &["x", "y"],
        other_directions: &["R", "phi"],
        waves: &["x", "y"],
        disk: true,
    },
    Geometry {
        name: "disk-Rz",
        physics: STRATIFIED,
        axes: &[("R", 0.5, 2.0, 8), ("z", -0.1, 0.1, 6)],
        components: &["R", "z", "phi"],
        other_directions: &["x", "r", "theta"],
        waves: &["x", "y", "z"],
        disk: true,
    },
    Geometry {
        name: "disk-rtheta",
        physics: STRATIFIED,
        axes: &[("r", 0.5, 2.0, 8), ("theta", MID - 0.2, MID + 0.2, 6)],
        components: &["r", "theta", "phi"],
        other_directions: &["R", "z"],
        waves: &["x", "y", "z"],
        disk: true,
    },
    Geometry {
        name: "disk-Rphiz",
        physics: STRATIFIED,
        axes: &[
            ("R", 0.5, 2.0, 6),
            ("phi", 0.0, 2.0 * PI, 8),
            ("z", -0.1, 0.1, 4),
        ],
        components: &["R", "phi", "z"],
        other_directions: &["x", "y"],
        waves: &["x", "y", "z"],
        disk: true,
    },
    Geometry {
        name: "disk-rthetaphi",
        physics: STRATIFIED,
        axes: &[
            ("r", 0.5, 2.0, 6),
            ("theta", MID - 0.2, MID + 0.2, 4),
            ("phi", 0.0, 2.0 * PI, 8),
        ],
        components: &["r", "theta", "phi"],
        other_directions: &["x", "y", "R", "z"],
        waves: &["x", "y", "z"],
        disk: true,
    },
    Geometry {
        name: "disk-xyz",
        physics: STRATIFIED_SOFT,
        axes: &[
            ("x", -2.0, 2.0, 8),
            ("y", -2.0, 2.0, 8),
            ("z", -0.1, 0.1, 4),
        ],
        components: &["x", "y", "z"],
        other_directions: &["R", "phi"],
        waves: &["x", "y", "z"],
        disk: true,
    },
];

fn profile(g: &Geometry, perturbation: &str) -> String {
    let grid: Vec<String> = g
        .axes
        .iter()
        .map(|(a, lo, hi, n)| format!(r#""{a}": {{ "from": {lo:?}, "to": {hi:?}, "cells": {n} }}"#))
        .collect();
    format!(
        "{{ \"name\": \"{}\", \"units\": \"code\",\n  {},\n  \"grid\": {{ {} }},\n  \"perturbations\": [{perturbation}] }}",
        g.name,
        g.physics,
        grid.join(", ")
    )
}

/// A pulse centred in the middle of the grid, a third of each axis wide.
fn pulse(g: &Geometry, field: &str, extra: &str) -> String {
    let centre: Vec<String> = g
        .axes
        .iter()
        .map(|(a, lo, hi, _)| format!(r#""{a}": {:?}"#, 0.5 * (lo + hi) + 0.1 * (hi - lo)))
        .collect();
    let width: Vec<String> = g
        .axes
        .iter()
        .map(|(a, lo, hi, _)| format!(r#""{a}": {:?}"#, (hi - lo) / 3.0))
        .collect();
    format!(
        r#"{{ "kind": "pulse", "field": "{field}", "amplitude": 1e-3, {extra} "centre": {{ {} }}, "width": {{ {} }} }}"#,
        centre.join(", "),
        width.join(", ")
    )
}

/// (case name, perturbation, grid component it must change alone or "",
/// what the checker tests besides the common checks).
fn cases(g: &Geometry) -> Vec<(String, String, String, &'static str)> {
    let mut out = vec![
        (
            "pulse-density".into(),
            pulse(g, "density", r#""relative_to": "value","#),
            String::new(),
            "",
        ),
        (
            "pulse-pressure-entropy".into(),
            pulse(g, "pressure", r#""relative_to": "value", "keep": "entropy","#),
            String::new(),
            "",
        ),
        (
            "noise-density".into(),
            r#"{ "kind": "noise", "field": "density", "amplitude": 1e-3, "relative_to": "value", "distribution": "uniform", "seed": 5 }"#.into(),
            String::new(),
            "",
        ),
        (
            "formula-pressure".into(),
            r#"{ "kind": "formula", "field": "pressure", "formula": "1e-3 * (1 + cos(3*x + 2*y + z))", "relative_to": "value", "keep": "temperature" }"#.into(),
            String::new(),
            "",
        ),
    ];
    for c in g.components {
        let f = format!("velocity_{c}");
        out.push((
            format!("pulse-{f}"),
            pulse(g, &f, r#""relative_to": "sound_speed","#),
            f.clone(),
            "",
        ));
        out.push((
            format!("noise-{f}"),
            format!(
                r#"{{ "kind": "noise", "field": "{f}", "amplitude": 1e-3, "relative_to": "sound_speed", "distribution": "gaussian", "seed": 9 }}"#
            ),
            f.clone(),
            "",
        ));
    }
    for c in g.other_directions {
        out.push((
            format!("formula-velocity_{c}"),
            format!(
                r#"{{ "kind": "formula", "field": "velocity_{c}", "formula": "1e-4 * (2 + sin(x + y + z))" }}"#
            ),
            String::new(),
            "",
        ));
    }
    for k in g.waves {
        out.push((
            format!("sound_wave-{k}"),
            format!(
                r#"{{ "kind": "sound_wave", "amplitude": 1e-4, "wavevector": {{ "{k}": 3.0 }}, "phase": 0.4 }}"#
            ),
            String::new(),
            "wave",
        ));
    }
    // An azimuthal mode turns about the z axis: disks and spheres have
    // one; the check script compares it with its formula cell by cell.
    if g.disk || g.name.starts_with("sphere") {
        out.push((
            "mode".into(),
            r#"{ "kind": "mode", "field": "density", "amplitude": 1e-3, "relative_to": "value", "m": 2, "phase": 0.5, "radial_envelope": "exp(-(R - 1.2)^2/0.2)" }"#.into(),
            String::new(),
            "mode",
        ));
        // On a Cartesian grid the coefficients are drawn per ring in R:
        // the check script fits each ring with the band's harmonics.
        let cartesian = g.axes.iter().any(|a| a.0 == "x");
        out.push((
            "noise-band".into(),
            r#"{ "kind": "noise", "field": "density", "amplitude": 1e-3, "relative_to": "value", "distribution": "gaussian", "seed": 4, "azimuthal_band": [1, 3] }"#.into(),
            String::new(),
            if cartesian { "band" } else { "" },
        ));
    }
    if g.disk {
        out.push((
            "planet".into(),
            r#"{ "kind": "planet", "mass_ratio": 1e-3, "orbit_radius": 1.2, "azimuth": 0.3, "softening": 0.1, "indirect": true, "in_potential": true }"#.into(),
            String::new(),
            "planet",
        ));
    }
    out
}

#[test]
fn issue9_every_kind_on_every_geometry() {
    let d = tempfile::tempdir().unwrap();
    let mut manifest = Vec::new();
    let mut failed = Vec::new();
    for g in GEOMETRIES {
        for (case, pert, target, extra) in cases(g) {
            let stem = format!("{}-{case}", g.name);
            let json = format!("{stem}.json");
            std::fs::write(d.path().join(&json), profile(g, &pert)).unwrap();
            let file = format!("{stem}.h5");
            let o = stillpoint(d.path(), &["build", &json, "-o", &file]);
            if !o.status.success() {
                failed.push(format!("{stem}: {}", text(&o)));
                continue;
            }
            manifest.push(serde_json::json!({
                "file": file, "target": target, "extra": extra,
            }));
        }
    }
    assert!(failed.is_empty(), "builds failed:\n{}", failed.join("\n"));
    std::fs::write(
        d.path().join("manifest.json"),
        serde_json::Value::Array(manifest).to_string(),
    )
    .unwrap();
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/perturb_matrix_check.py");
    let o = Command::new("python3")
        .arg(script)
        .arg("manifest.json")
        .current_dir(d.path())
        .output()
        .expect("python3 with h5py and numpy is needed (.ci/run installs them with pip)");
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn issue9_kinds_that_do_not_fit_are_refused_naming_the_key() {
    let by_name = |n: &str| GEOMETRIES.iter().find(|g| g.name == n).unwrap();
    let planet =
        r#"{ "kind": "planet", "mass_ratio": 1e-3, "orbit_radius": 1.2, "softening": 0.1 }"#;
    let mode = r#"{ "kind": "mode", "field": "density", "amplitude": 1e-3, "m": 2 }"#;
    let velocity = |c: &str| {
        format!(
            r#"{{ "kind": "noise", "field": "velocity_{c}", "amplitude": 1e-3, "distribution": "uniform", "seed": 1 }}"#
        )
    };
    let wave = |k: &str| {
        format!(r#"{{ "kind": "sound_wave", "amplitude": 1e-4, "wavevector": {{ "{k}": 1 }} }}"#)
    };
    let band = r#"{ "kind": "noise", "field": "density", "amplitude": 1e-3, "distribution": "uniform", "seed": 1, "azimuthal_band": [1, 2] }"#;
    // (geometry, perturbation, the key the message names, words it holds)
    let refused: Vec<(&str, String, &str, &[&str])> = vec![
        (
            "slab-xz",
            planet.into(),
            "perturbations[0]",
            &["planet", "balance.shape"],
        ),
        (
            "sphere-rtheta",
            planet.into(),
            "perturbations[0]",
            &["balance.shape"],
        ),
        (
            "slab-xyz",
            mode.into(),
            "perturbations[0]",
            &["mode", "balance.shape"],
        ),
        (
            "slab-z",
            velocity("x"),
            "perturbations[0].field",
            &["velocity_z"],
        ),
        (
            "sphere-r",
            velocity("theta"),
            "perturbations[0].field",
            &["velocity_r"],
        ),
        (
            "disk-Rphi",
            velocity("z"),
            "perturbations[0].field",
            &["velocity_R", "velocity_phi"],
        ),
        (
            "disk-xy",
            velocity("theta"),
            "perturbations[0].field",
            &["velocity_x"],
        ),
        (
            "slab-xz",
            velocity("y"),
            "perturbations[0].field",
            &["velocity_x", "velocity_z"],
        ),
        (
            "disk-Rphi",
            wave("z"),
            "perturbations[0].wavevector.z",
            &["no velocity along z"],
        ),
        (
            "slab-z",
            wave("x"),
            "perturbations[0].wavevector.x",
            &["no velocity along x"],
        ),
        ("slab-xz", band.into(), "perturbations[0]", &["azimuth"]),
    ];
    let d = tempfile::tempdir().unwrap();
    for (k, (geometry, pert, key, words)) in refused.iter().enumerate() {
        let json = format!("r{k}.json");
        std::fs::write(d.path().join(&json), profile(by_name(geometry), pert)).unwrap();
        let out = format!("r{k}.h5");
        for args in [vec!["check", &json], vec!["build", &json, "-o", &out]] {
            let o = stillpoint(d.path(), &args);
            let t = text(&o);
            assert_eq!(
                o.status.code(),
                Some(2),
                "{geometry} {pert}: not refused\n{t}"
            );
            assert!(t.contains(key), "{geometry} {pert}: no `{key}` in\n{t}");
            for w in *words {
                assert!(t.contains(w), "{geometry} {pert}: no `{w}` in\n{t}");
            }
            assert!(
                !d.path().join(&out).exists(),
                "{geometry}: a file was written"
            );
        }
    }
}
