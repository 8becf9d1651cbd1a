//! The real binary in a temporary folder: every bundled profile builds and
//! checks, and bad input of each kind gives a clear message, a non-zero exit
//! and no output file. Regression tests are named after the issue they pin.

mod common;
use common::{stillpoint, text};
use std::process::Command;

fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().unwrap()
}

const BUNDLED: [&str; 18] = [
    "quiet-slab",
    "layered-atmosphere",
    "powerlaw-disk",
    "tapered-disk-cartesian",
    "ring-disk",
    "steady-vortex",
    "flared-disk-spherical",
    "softened-disk-box",
    "stratified-box-2d",
    "pulsed-slab",
    "planet-disk",
    "mode-disk",
    "noisy-disk",
    "noisy-disk-3d",
    "warm-layer-disk",
    "thick-torus",
    "polytropic-envelope",
    "planet-envelope-box",
];

#[test]
fn issue2_every_bundled_profile_builds_and_checks() {
    let d = tmp();
    let listing = text(&stillpoint(d.path(), &["profiles"]));
    for name in BUNDLED {
        assert!(listing.contains(name), "profiles lists {name}");
        let out = format!("{name}.h5");
        let o = stillpoint(d.path(), &["build", name, "-o", &out]);
        assert!(o.status.success(), "build {name}: {}", text(&o));
        assert!(d.path().join(&out).is_file());
        let o = stillpoint(d.path(), &["check", name]);
        assert!(o.status.success(), "check {name}: {}", text(&o));
        assert!(text(&o).contains("PASS"));
    }
}

#[test]
fn issue2_build_from_file_writes_csv_for_1d_and_records_overrides() {
    let d = tmp();
    let profile = concat!(env!("CARGO_MANIFEST_DIR"), "/profiles/quiet-slab.json");
    let o = stillpoint(
        d.path(),
        &["build", profile, "-o", "s.h5", "--set", "g0=2.5"],
    );
    assert!(o.status.success(), "{}", text(&o));
    let csv = std::fs::read_to_string(d.path().join("s.csv")).unwrap();
    assert!(csv.lines().any(|l| l.starts_with("z [")), "{csv}");
    // The override is recorded in the file's profile attribute.
    let f = hdf5::File::open(d.path().join("s.h5")).unwrap();
    let prof: hdf5::types::VarLenUnicode = f.attr("profile").unwrap().read_scalar().unwrap();
    assert!(prof.as_str().contains("2.5"), "{}", prof.as_str());
}

#[test]
fn issue2_table_and_derive_print() {
    let d = tmp();
    let o = stillpoint(d.path(), &["table", "powerlaw-disk", "--points", "5"]);
    assert!(o.status.success(), "{}", text(&o));
    let t = text(&o);
    for col in ["v_phi", "Omega", "v_K", "1-v_phi/v_K", "H/R"] {
        assert!(t.contains(col), "{col} in {t}");
    }
    let o = stillpoint(d.path(), &["table", "quiet-slab", "--at", "0,1,H", "--csv"]);
    assert!(o.status.success(), "{}", text(&o));
    assert_eq!(String::from_utf8_lossy(&o.stdout).lines().count(), 4);
    let o = stillpoint(d.path(), &["derive", "powerlaw-disk"]);
    assert!(
        o.status.success() && text(&o).contains("v_phi^2"),
        "{}",
        text(&o)
    );
    let o = stillpoint(d.path(), &["derive", "powerlaw-disk", "--latex"]);
    assert!(
        o.status.success() && text(&o).contains("\\"),
        "{}",
        text(&o)
    );
}

/// Write `profile` into a temp dir, run `build` on it, and return the
/// combined output after asserting a non-zero exit and no output file.
fn bad_build(profile: &str, extra: &[&str]) -> String {
    let d = tmp();
    std::fs::write(d.path().join("p.json"), profile).unwrap();
    let mut args = vec!["build", "p.json", "-o", "out.h5"];
    args.extend(extra);
    let o = stillpoint(d.path(), &args);
    assert_eq!(o.status.code(), Some(2), "expected an error: {}", text(&o));
    assert!(
        !d.path().join("out.h5").exists(),
        "no output file on failure"
    );
    let left: Vec<_> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(left.len(), 1, "only the profile remains: {left:?}");
    text(&o)
}

const GOOD: &str = include_str!("../profiles/quiet-slab.json");

#[test]
fn issue2_malformed_json() {
    let t = bad_build(
        &GOOD.replace("\"units\": \"code\",", "\"units\": \"code\""),
        &[],
    );
    assert!(
        t.contains("p.json") && t.contains("not valid JSON") && t.contains("line"),
        "{t}"
    );
}

#[test]
fn issue2_unknown_key_names_path_and_suggestion() {
    let t = bad_build(&GOOD.replace("\"cells\": 256", "\"cels\": 256"), &[]);
    assert!(
        t.contains("grid.z.cels") && t.contains("did you mean `cells`"),
        "{t}"
    );
}

#[test]
fn issue2_non_positive_cells() {
    let t = bad_build(&GOOD.replace("\"cells\": 256", "\"cells\": -4"), &[]);
    assert!(
        t.contains("grid.z.cells: expected a positive integer, found -4"),
        "{t}"
    );
}

#[test]
fn issue2_formula_syntax_error_has_caret() {
    let t = bad_build(
        &GOOD.replace("\"H\": \"cs2/g0\"", "\"H\": \"cs2/(g0\""),
        &[],
    );
    assert!(t.contains("parameters.H") && t.contains('^'), "{t}");
}

#[test]
fn issue2_unknown_name_suggests_closest() {
    let t = bad_build(
        &GOOD.replace("\"H\": \"cs2/g0\"", "\"H\": \"cs2/g00\""),
        &[],
    );
    assert!(t.contains("g00") && t.contains("g0"), "{t}");
}

#[test]
fn issue2_parameter_cycle_is_named() {
    let t = bad_build(&GOOD.replace("\"cs2\": 1.0", "\"cs2\": \"H*g0\""), &[]);
    assert!(
        t.contains("cycle") && t.contains("cs2") && t.contains("H"),
        "{t}"
    );
}

#[test]
fn issue2_law_without_equilibrium_names_interval() {
    // Pressure gradient stronger than gravity beyond some radius: v_phi^2 < 0.
    let p = include_str!("../profiles/powerlaw-disk.json").replace("\"h0\": 0.05", "\"h0\": 0.9");
    let t = bad_build(&p, &[]);
    assert!(t.contains("v_phi^2 < 0 between R ="), "{t}");
}

#[test]
fn issue2_non_positive_density() {
    let p =
        include_str!("../profiles/steady-vortex.json").replace("\"rho0\": 1.0", "\"rho0\": -1.0");
    let t = bad_build(&p, &[]);
    assert!(t.contains("density ≤ 0"), "{t}");
}

#[test]
fn issue2_existing_output_needs_force() {
    let d = tmp();
    std::fs::write(d.path().join("out.h5"), b"precious").unwrap();
    let o = stillpoint(d.path(), &["build", "quiet-slab", "-o", "out.h5"]);
    assert!(!o.status.success());
    assert!(text(&o).contains("--force"), "{}", text(&o));
    assert_eq!(std::fs::read(d.path().join("out.h5")).unwrap(), b"precious");
    let o = stillpoint(
        d.path(),
        &["build", "quiet-slab", "-o", "out.h5", "--force"],
    );
    assert!(o.status.success(), "{}", text(&o));
    assert_ne!(std::fs::read(d.path().join("out.h5")).unwrap(), b"precious");
}

#[test]
fn issue2_check_fails_on_unbalanced_laws() {
    let d = tmp();
    let p = include_str!("../profiles/powerlaw-disk.json").replace(
        "\"solve_for\": \"rotation\",",
        "\"solve_for\": \"nothing\", \"rotation\": \"sqrt(G*M/R)\",",
    );
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["check", "p.json"]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o));
    assert!(text(&o).contains("NOT AN EQUILIBRIUM"), "{}", text(&o));
}

#[test]
fn issue2_unknown_override_is_refused() {
    let d = tmp();
    let o = stillpoint(d.path(), &["build", "quiet-slab", "--set", "gg0=3"]);
    assert!(!o.status.success());
    assert!(text(&o).contains("did you mean `g0`"), "{}", text(&o));
}

/// Files written by the real binary, read back with h5py: the balance
/// recomputed from the file's own numbers with numpy second-order
/// differences falls at second order with resolution (tests/h5_balance_check.py).
#[test]
fn issue2_cli_files_balance_at_second_order_in_h5py() {
    let d = tmp();
    let mut files = Vec::new();
    for (name, from, to) in [
        (
            "quiet-slab",
            "\"cells\": 256",
            ["\"cells\": 48", "\"cells\": 96"],
        ),
        (
            "powerlaw-disk",
            "\"cells\": 192",
            ["\"cells\": 40", "\"cells\": 80"],
        ),
    ] {
        let original = std::fs::read_to_string(format!(
            "{}/profiles/{name}.json",
            env!("CARGO_MANIFEST_DIR")
        ))
        .unwrap();
        for (i, cells) in to.iter().enumerate() {
            let p = d.path().join(format!("{name}-{i}.json"));
            let body = original
                .replace(from, cells)
                .replace("\"cells\": 384", "\"cells\": 16");
            std::fs::write(&p, body).unwrap();
            let out = format!("{name}-{i}.h5");
            let o = stillpoint(d.path(), &["build", p.to_str().unwrap(), "-o", &out]);
            assert!(o.status.success(), "{}", text(&o));
            files.push(d.path().join(out));
        }
    }
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/h5_balance_check.py");
    let o = Command::new("python3")
        .arg(script)
        .args(&files)
        .output()
        .expect("python3 with h5py and numpy is needed (.ci/run installs them with pip)");
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn issue2_edges_from_file_and_single_precision_caution() {
    let d = tmp();
    std::fs::write(
        d.path().join("edges.txt"),
        "# z edges of my code's grid\n0\n0.5 1.25\n2\n3.5\n",
    )
    .unwrap();
    let p = GOOD
        .replace(
            r#""z": { "from": 0, "to": "8*H", "cells": 256 }"#,
            r#""z": { "edges_file": "edges.txt" }"#,
        )
        .replace(
            r#""output": { "file": "quiet-slab.h5", "csv": true }"#,
            r#""output": { "precision": "single" }"#,
        );
    assert!(
        p.contains("edges_file") && p.contains("single"),
        "profile rewrite failed"
    );
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "e.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("single precision"), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("e.h5")).unwrap();
    let edges: Vec<f64> = f.dataset("grid/z_edges").unwrap().read_raw().unwrap();
    assert_eq!(edges.len(), 5);
    assert!((edges[2] - 1.25).abs() < 1e-15);
    let cautions: hdf5::types::VarLenUnicode = f.attr("cautions").unwrap().read_scalar().unwrap();
    assert!(cautions.as_str().contains("single precision"));
    // A bad edges file names the file and the line.
    std::fs::write(d.path().join("edges.txt"), "0\n1\nthree\n").unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "f.h5"]);
    assert!(!o.status.success());
    assert!(
        text(&o).contains("edges.txt") && text(&o).contains("line 3"),
        "{}",
        text(&o)
    );
    assert!(!d.path().join("f.h5").exists());
}

const DISK: &str = include_str!("../profiles/powerlaw-disk.json");
const TAPERED: &str = include_str!("../profiles/tapered-disk-cartesian.json");

#[test]
fn issue2_reversed_range_names_from_and_to() {
    let t = bad_build(&GOOD.replace("\"from\": 0,", "\"from\": 9,"), &[]);
    assert!(
        t.contains("grid.z") && t.contains("`to` (8) must exceed `from` (9)"),
        "{t}"
    );
}

#[test]
fn issue2_edges_with_cells_is_refused() {
    let p = GOOD.replace(
        "\"z\": { \"from\": 0, \"to\": \"8*H\", \"cells\": 256 }",
        "\"z\": { \"edges\": [0, 1, 2], \"cells\": 3 }",
    );
    assert_ne!(p, GOOD);
    let t = bad_build(&p, &[]);
    assert!(
        t.contains("grid.z: `edges` and `cells` cannot both be given"),
        "{t}"
    );
}

#[test]
fn issue2_missing_sound_speed_names_the_gas_key() {
    let p = GOOD.replace(", \"sound_speed_sq\": \"cs2\"", "");
    assert_ne!(p, GOOD);
    let t = bad_build(&p, &[]);
    assert!(
        t.contains("gas.sound_speed_sq (or gas.temperature) is required"),
        "{t}"
    );
    assert!(!t.contains("balance.sound_speed_sq"), "{t}");
}

#[test]
fn issue2_negative_anchor_pressure_is_named() {
    let p = include_str!("../profiles/steady-vortex.json")
        .replace("\"P_center\": 1.0", "\"P_center\": -1.0");
    let t = bad_build(&p, &[]);
    assert!(
        t.contains("balance.anchor.value: the pressure at the anchor must be positive, found -1"),
        "{t}"
    );
}

#[test]
fn issue2_negative_density_is_reported_before_rotation() {
    // Σ = 1 − R turns negative at R = 1 inside the grid (0.4 to 2.5): the
    // message must blame the density, not the v_phi^2 it spoils.
    let p = DISK.replace("\"sigma0*(R/R0)^(-p)\"", "\"1 - R\"");
    assert_ne!(p, DISK);
    let t = bad_build(&p, &[]);
    assert!(t.contains("density ≤ 0") && t.contains("at R = 1"), "{t}");
    assert!(!t.contains("v_phi^2"), "{t}");
}

#[test]
fn issue2_unsoftened_point_mass_on_cartesian_grid_is_refused() {
    let p = TAPERED.replace(", \"softening\": \"eps\"", "");
    assert_ne!(p, TAPERED);
    let t = bad_build(&p, &[]);
    assert!(t.contains("the potential is singular at R = 0"), "{t}");
    assert!(t.contains("gravity.softening"), "{t}");
}

#[test]
fn issue2_derived_rotation_on_the_axis_is_zero() {
    // 21 x 21 centred cells put a cell centre on R = 0, where the derived
    // v_phi^2 = R (Φ_R + P_R/ρ) is written with terms in 1/R. A softened
    // star and a regular disk rotate with v_phi → 0 there (regularity on
    // the axis of an axisymmetric flow; no source needed beyond the limit).
    let d = tmp();
    let p = TAPERED.replace("\"cells\": 200", "\"cells\": 21").replace(
        "{ \"rule\": \"average\", \"points\": 3 }",
        "{ \"rule\": \"center\" }",
    );
    assert_ne!(p, TAPERED);
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "out.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("out.h5")).unwrap();
    let vx: Vec<f64> = f.dataset("state/velocity_x").unwrap().read_raw().unwrap();
    let vy: Vec<f64> = f.dataset("state/velocity_y").unwrap().read_raw().unwrap();
    assert!(vx.iter().chain(&vy).all(|v| v.is_finite()));
    let centre = 10 * 21 + 10;
    assert!(vx[centre].abs() < 1e-300 && vy[centre].abs() < 1e-300);
}

#[test]
fn issue2_output_into_missing_folder_says_so() {
    let d = tmp();
    let o = stillpoint(d.path(), &["build", "quiet-slab", "-o", "absent/s.h5"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains("the folder absent does not exist"),
        "{}",
        text(&o)
    );
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0);
}

#[test]
fn issue2_table_points_and_negative_at() {
    let d = tmp();
    for n in ["0", "1"] {
        let o = stillpoint(d.path(), &["table", "quiet-slab", "--points", n]);
        assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    }
    let o = stillpoint(d.path(), &["table", "quiet-slab", "--at", "-1,0", "--csv"]);
    assert!(o.status.success(), "{}", text(&o));
    // Isothermal slab with g = c² = 1: ρ = e^(−z), so ρ(−1) = e (closed form).
    let row = text(&o).lines().nth(1).unwrap().to_string();
    let rho: f64 = row.split(',').nth(1).unwrap().parse().unwrap();
    assert!((rho - std::f64::consts::E).abs() < 1e-12, "{row}");
}

#[test]
fn issue2_vertically_integrated_disk_is_named_so() {
    let d = tmp();
    let o = stillpoint(d.path(), &["derive", "powerlaw-disk"]);
    assert!(
        text(&o).contains("vertically integrated disk balance"),
        "{}",
        text(&o)
    );
    let o = stillpoint(d.path(), &["build", "powerlaw-disk", "-o", "d.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("d.h5")).unwrap();
    let b: hdf5::types::VarLenUnicode = f.attr("balance").unwrap().read_scalar().unwrap();
    assert_eq!(b.as_str(), "vertically integrated disk");
}

#[test]
fn issue2_building_an_unbalanced_audit_carries_a_caution() {
    // ρ = e^(−z/(1.01 H)) with c² = g H: the hydrostatic residual is
    // g (1 − 1/1.01) ≈ 9.9e-3 of g everywhere (closed form of the slab).
    let d = tmp();
    let p = GOOD
        .replace(
            "\"solve_for\": \"density\"",
            "\"solve_for\": \"nothing\", \"density\": \"exp(-z/(1.01*H))\"",
        )
        .replace(
            ",\n    \"anchor\": { \"at\": 0, \"value\": \"P_base\" }",
            "",
        );
    assert!(p.contains("nothing") && !p.contains("anchor"), "{p}");
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "a.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    assert!(
        text(&o).contains("caution: the given laws are not an equilibrium"),
        "{}",
        text(&o)
    );
    assert!(text(&o).contains("9.90"), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("a.h5")).unwrap();
    let c: hdf5::types::VarLenUnicode = f.attr("cautions").unwrap().read_scalar().unwrap();
    assert!(c.as_str().contains("not an equilibrium"), "{}", c.as_str());
    let o = stillpoint(d.path(), &["check", "p.json"]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o));
}

/// A 1D radial grid may start on the axis: no cell samples R = 0, so a law
/// that is only singular there builds and checks (a vortex whose density
/// rises as R^-1/2 towards its core; its pressure integrand ρv²/R → 0).
#[test]
fn issue2_radial_line_from_the_axis_builds() {
    let d = tmp();
    let p = include_str!("../profiles/steady-vortex.json")
        .replace(
            r#""x": { "from": -1, "to": 1, "cells": 128 },
    "y": { "from": -1, "to": 1, "cells": 128 }"#,
            r#""R": { "from": 0, "to": 1, "cells": 64 }"#,
        )
        .replace(
            r#""density": "rho0""#,
            r#""density": "rho0*(1 + (R/a)^(-0.5))""#,
        );
    assert!(
        p.contains(r#""R": { "from": 0"#) && p.contains("^(-0.5)"),
        "rewrite failed"
    );
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "line.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let o = stillpoint(d.path(), &["check", "p.json"]);
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn issue5_old_conditional_in_a_profile_shows_the_new_form() {
    let p = GOOD.replace(
        "\"sound_speed_sq\": \"cs2\"",
        "\"sound_speed_sq\": \"cs2*if(z < H, 1, 2)\"",
    );
    assert_ne!(p, GOOD);
    let t = bad_build(&p, &[]);
    assert!(t.contains("gas.sound_speed_sq"), "{t}");
    assert!(
        t.contains("`if(...)` is not our syntax: write `cs2*(1 if z < H else 2)`"),
        "{t}"
    );
    assert!(t.contains("    cs2*if(z < H, 1, 2)\n        ^^\n"), "{t}");
    // The new form builds (a kink at z = H, no jump).
    let d = tmp();
    let p = GOOD.replace(
        "\"sound_speed_sq\": \"cs2\"",
        "\"sound_speed_sq\": \"cs2*(1 if not z >= H else z/H)\"",
    );
    std::fs::write(d.path().join("p.json"), p).unwrap();
    let o = stillpoint(d.path(), &["build", "p.json", "-o", "out.h5"]);
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn issue5_reserved_words_are_not_parameter_names() {
    for word in ["if", "else", "and", "or", "not"] {
        let p = GOOD.replace(
            "\"P_base\": 1.0",
            &format!("\"P_base\": 1.0, \"{word}\": 2"),
        );
        let t = bad_build(&p, &[]);
        assert!(
            t.contains(&format!("parameters.{word}"))
                && t.contains(&format!("`{word}` cannot be a parameter name"))
                && t.contains("if, else, and, or, not are reserved"),
            "{t}"
        );
    }
}

/// Run `verb` on `profile` written into a fresh folder; returns the folder
/// (so files can be inspected), the exit code and the combined output.
fn run_on(profile: &str, args: &[&str]) -> (tempfile::TempDir, Option<i32>, String) {
    let d = tmp();
    std::fs::write(d.path().join("p.json"), profile).unwrap();
    let mut all = vec![args[0], "p.json"];
    all.extend(&args[1..]);
    let o = stillpoint(d.path(), &all);
    (d, o.status.code(), text(&o))
}

/// `check` exits 1 naming the law, the place and the size of the jump, and
/// `build` refuses (exit 2, no file) with the same facts and the advice.
fn assert_jump_refused(profile: &str, facts: &[&str]) {
    let (_d, code, t) = run_on(profile, &["check"]);
    assert_eq!(code, Some(1), "{t}");
    assert!(t.contains("NOT AN EQUILIBRIUM"), "{t}");
    for f in facts {
        assert!(t.contains(f), "check output lacks `{f}`: {t}");
    }
    let t = bad_build(profile, &[]);
    for f in facts.iter().chain(&["tanh", "balance.intended_jumps"]) {
        assert!(t.contains(f), "build error lacks `{f}`: {t}");
    }
}

/// Σ ∝ R^−p with a cavity Σ × 1e-3 inside R_cav = 0.8 and derived rotation:
/// P = Σc² jumps by 1000 and the balance differentiates P. Used to pass as
/// identically zero. The relative jump is 1 − 1e-3.
#[test]
fn issue5_cavity_disk_jump_is_not_an_equilibrium() {
    let p = DISK
        .replace(
            "\"sigma0*(R/R0)^(-p)\"",
            "\"sigma0*R^(-p)*(floor if R < R_cav else 1)\"",
        )
        .replace(
            "\"h0\": 0.05,",
            "\"h0\": 0.05, \"R_cav\": 0.8, \"floor\": 1e-3,",
        )
        .replace("\"cells\": 384", "\"cells\": 8");
    assert!(p.contains("R_cav"), "rewrite failed");
    assert_jump_refused(
        &p,
        &[
            "balance.density",
            "jumps at R = 0.8",
            "relative jump 9.990e-1",
        ],
    );
    // Declared intended: the build writes the file with a caution, and check
    // passes with the jump listed.
    let intended = p.replace(
        "\"vertically_integrated\": true",
        "\"vertically_integrated\": true, \"intended_jumps\": [\"balance.density\"]",
    );
    let (d, code, t) = run_on(&intended, &["build", "-o", "cav.h5"]);
    assert_eq!(code, Some(0), "{t}");
    let f = hdf5::File::open(d.path().join("cav.h5")).unwrap();
    let c: hdf5::types::VarLenUnicode = f.attr("cautions").unwrap().read_scalar().unwrap();
    assert!(
        c.as_str().contains("intended by balance.intended_jumps"),
        "{}",
        c.as_str()
    );
    let (_d, code, t) = run_on(&intended, &["check"]);
    assert_eq!(code, Some(0), "{t}");
    assert!(t.contains("intended (balance.intended_jumps)"), "{t}");
    // A key that is not a law of the profile is refused by name.
    let typo = intended.replace("[\"balance.density\"]", "[\"balance.densty\"]");
    let t = bad_build(&typo, &[]);
    assert!(
        t.contains("balance.intended_jumps[0]") && t.contains("did you mean `balance.density`"),
        "{t}"
    );
}

/// c² = 0.01 inside R = 1, 0.02 outside, with Σ given and rotation derived:
/// P = Σc² doubles at R = 1 (relative jump 1/2).
#[test]
fn issue5_two_level_sound_speed_jump_is_not_an_equilibrium() {
    let p = DISK
        .replace("\"cs2_0*(R/R0)^(-q)\"", "\"0.01 if R < 1 else 0.02\"")
        .replace("\"cells\": 384", "\"cells\": 8");
    assert!(p.contains("0.02"), "rewrite failed");
    assert_jump_refused(
        &p,
        &[
            "gas.sound_speed_sq",
            "jumps at R = 1 ",
            "relative jump 5.000e-1",
        ],
    );
}

/// An audit of a slab whose pressure (and density) halve at z = 1: each
/// side balances (P = ρ = e^(−z) times a constant, g = c² = 1), but P jumps
/// by 1/2 where the balance differentiates it.
#[test]
fn issue5_halving_slab_audit_jump_is_not_an_equilibrium() {
    let p = r#"{ "name": "halving", "units": "code",
      "parameters": { "g0": 1.0 },
      "gravity": { "uniform": "g0" },
      "gas": { "gamma": 1.4 },
      "balance": { "shape": "slab", "solve_for": "nothing",
         "density": "exp(-z)*(1 if z < 1 else 0.5)", "pressure": "exp(-z)*(1 if z < 1 else 0.5)" },
      "grid": { "z": { "from": 0, "to": 3, "cells": 64 } } }"#;
    assert_jump_refused(
        p,
        &[
            "balance.pressure",
            "jumps at z = 1 ",
            "relative jump 5.000e-1",
        ],
    );
}

/// Contacts are equilibria: a slab solved for density with c² doubling at
/// z = 1 (ρ halves, P continuous: ∂ln P/∂z = −g/c² holds no derivative of
/// c²), and a slab solved for pressure whose density halves at z = 1 (the
/// pressure integral only sees ρ). Both check PASS and build without caution.
#[test]
fn issue5_contact_discontinuities_pass() {
    let contact = GOOD.replace(
        "\"sound_speed_sq\": \"cs2\"",
        "\"sound_speed_sq\": \"cs2 if z < 1 else 2*cs2\"",
    );
    let density_step = GOOD
        .replace(
            "\"gamma\": 1.4, \"sound_speed_sq\": \"cs2\"",
            "\"gamma\": 1.4",
        )
        .replace(
            "\"solve_for\": \"density\"",
            "\"solve_for\": \"pressure\", \"density\": \"exp(-z)*(1 if z < 1 else 0.5)\"",
        );
    for p in [contact, density_step] {
        assert_ne!(p, GOOD, "rewrite failed");
        let (_d, code, t) = run_on(&p, &["check"]);
        assert_eq!(code, Some(0), "{t}");
        assert!(t.contains("PASS") && !t.contains("jump"), "{t}");
        let (_d, code, t) = run_on(&p, &["build", "-o", "c.h5"]);
        assert_eq!(code, Some(0), "{t}");
        assert!(!t.contains("caution"), "{t}");
    }
}

/// A disk whose pressure gradient outgrows gravity (h0 = 0.9): the derived
/// v_φ² = GM/R − (p + q)c² (Takeuchi & Lin 2002, ApJ 581, 1344, eq. 7 in
/// its vertically integrated form) with c² = h0² GM R^(−q) is negative for
/// R > (1/((p + q) h0²))^(1/(1 − q)) = 0.677404 and reaches
/// 0.4 − 1.5·0.81/√2.5 = −0.368434 at R = 2.5. `check` reports that as a
/// failed check (exit 1) with the interval and the minimum; `table` prints
/// every row and marks the impossible ones; `build` refuses (exit 2).
#[test]
fn issue5_check_reports_negative_rotation_as_a_failed_check() {
    let d = tmp();
    let o = stillpoint(d.path(), &["check", "powerlaw-disk", "--set", "h0=0.9"]);
    let t = text(&o);
    assert_eq!(o.status.code(), Some(1), "{t}");
    let r0 = (1.0f64 / (1.5 * 0.81)).powf(2.0);
    assert!((r0 - 0.677404).abs() < 5e-7, "{r0}");
    for want in [
        "v_phi^2      min -3.684335e-1 at R = 2.500000  FAILS",
        "v_phi^2 < 0 between R = 0.677404 and R = 2.5",
        "result         FAIL",
    ] {
        assert!(t.contains(want), "`{want}` in {t}");
    }
    let o = stillpoint(
        d.path(),
        &["table", "powerlaw-disk", "--set", "h0=0.9", "--points", "5"],
    );
    let t = text(&o);
    assert_eq!(o.status.code(), Some(0), "{t}");
    let rows: Vec<&str> = t.lines().skip(2).collect();
    assert_eq!(rows.len(), 5, "{t}");
    assert!(
        !rows[0].contains("no equilibrium") && !rows[1].contains("no equilibrium"),
        "{t}"
    );
    assert!(
        rows[2..]
            .iter()
            .all(|r| r.contains("no equilibrium: v_phi^2 =")),
        "{t}"
    );
    assert!(rows[4].contains("-3.684e-1"), "{t}");
    let t = bad_build(&DISK.replace("\"h0\": 0.05", "\"h0\": 0.9"), &[]);
    assert!(t.contains("v_phi^2 < 0 between R = 0.677404"), "{t}");
    // Σ = 1 − R: no equilibrium from R = 1 outward; check names the cause.
    let (_d, code, t) = run_on(
        &DISK.replace("\"sigma0*(R/R0)^(-p)\"", "\"1 - R\""),
        &["check"],
    );
    assert_eq!(code, Some(1), "{t}");
    assert!(
        t.contains("no equilibrium: density ≤ 0 at R = 1 through R = 2.5 (minimum -1.500000e0"),
        "{t}"
    );
}

/// The singularity test reads the potential law itself: a halo potential
/// −GM ln(1 + r/r_s)/r is finite at r = 0 (its limit is −GM/r_s) and builds
/// from the centre; a potential law −GM/r is singular there and is refused
/// with advice for a law (start off the centre), not for a point mass; an
/// unsoftened point mass gets the softening advice; Φ = √r is finite but its
/// force is not, which the file's cautions say.
#[test]
fn issue5_halo_potential_builds_from_the_centre() {
    let halo = r#"{ "name": "halo", "units": "code",
      "parameters": { "M": 1.0, "r_s": 1.0, "cs2": 0.3 },
      "gravity": { "potential": "-G*M*log(1 + r/r_s)/r" },
      "gas": { "gamma": 1.4, "sound_speed_sq": "cs2" },
      "balance": { "shape": "sphere", "solve_for": "density", "anchor": { "at": 1, "value": 1 } },
      "grid": { "r": { "from": 0, "to": 10, "cells": 64 } } }"#;
    let (d, code, t) = run_on(halo, &["build", "-o", "halo.h5"]);
    assert_eq!(code, Some(0), "{t}");
    assert!(!t.contains("singular") && !t.contains("caution"), "{t}");
    let f = hdf5::File::open(d.path().join("halo.h5")).unwrap();
    let phi: Vec<f64> = f.dataset("state/potential").unwrap().read_raw().unwrap();
    let r: Vec<f64> = f.dataset("grid/r_centers").unwrap().read_raw().unwrap();
    assert!(
        (phi[0] + r[0].ln_1p() / r[0]).abs() < 1e-15,
        "{} at r = {}",
        phi[0],
        r[0]
    );
    let (_d, code, t) = run_on(halo, &["check"]);
    assert_eq!(code, Some(0), "{t}");

    let law = halo.replace("-G*M*log(1 + r/r_s)/r", "-G*M/r");
    let t = bad_build(&law, &[]);
    assert!(t.contains("the potential is singular at r = 0"), "{t}");
    assert!(
        t.contains("start the grid off the centre") && t.contains("gravity.potential"),
        "{t}"
    );
    assert!(!t.contains("soften"), "{t}");
    let point = halo.replace(
        r#""potential": "-G*M*log(1 + r/r_s)/r""#,
        r#""point_mass": "M""#,
    );
    let t = bad_build(&point, &[]);
    assert!(
        t.contains("soften the point mass (gravity.softening)"),
        "{t}"
    );

    // Φ = √R: finite on the axis, unbounded force. With a closed-form
    // closure (rotation derived, v_φ² = R Φ_R → 0) the file is written with
    // a caution; an integrated one cannot be verified through it and is
    // refused with the same advice.
    let disk = r#"{ "name": "cusp", "units": "code",
      "parameters": { "cs2": 0.01 },
      "gravity": { "potential": "sqrt(R)" },
      "gas": { "sound_speed_sq": "cs2" },
      "balance": { "shape": "disk", "solve_for": "rotation", "density": "1" },
      "grid": { "R": { "from": 0, "to": 2, "cells": 32 } } }"#;
    let (_d, code, t) = run_on(disk, &["build", "-o", "cusp.h5"]);
    assert_eq!(code, Some(0), "{t}");
    assert!(
        t.contains("caution: the gravity dPhi/dR grows without bound towards R = 0"),
        "{t}"
    );
    let t = bad_build(&halo.replace("-G*M*log(1 + r/r_s)/r", "sqrt(r)"), &[]);
    assert!(
        t.contains("unbounded at r = 0") && t.contains("start the grid off the centre"),
        "{t}"
    );
}

/// γ = 1, the isothermal gas of everyday disk simulations: the profile and
/// the sampler accept it, no energy field is written (there is no energy
/// equation), the file says `gas_law = isothermal`, and the convective
/// caution does not apply (even to a layer with dc²/dz = −0.45 g, steeper
/// than the adiabatic −g(γ − 1)/γ = −0.4 g of γ = 5/3, which with γ = 5/3 is
/// cautioned). γ < 1 is refused by name.
#[test]
fn issue5_isothermal_gas_builds() {
    let iso = GOOD.replace("\"gamma\": 1.4", "\"gamma\": 1");
    assert_ne!(iso, GOOD, "rewrite failed");
    let (d, code, t) = run_on(&iso, &["build", "-o", "iso.h5"]);
    assert_eq!(code, Some(0), "{t}");
    assert!(!t.contains("caution"), "{t}");
    let f = hdf5::File::open(d.path().join("iso.h5")).unwrap();
    let names = f.group("state").unwrap().member_names().unwrap();
    assert!(
        !names.iter().any(|n| n == "energy") && names.iter().any(|n| n == "pressure"),
        "{names:?}"
    );
    let law: hdf5::types::VarLenUnicode = f.attr("gas_law").unwrap().read_scalar().unwrap();
    assert_eq!(law.as_str(), "isothermal");
    let (_d, code, t) = run_on(&iso, &["check"]);
    assert_eq!(code, Some(0), "{t}");

    let steep = GOOD.replace(
        "\"sound_speed_sq\": \"cs2\"",
        "\"sound_speed_sq\": \"cs2*(4 - 0.45*z)\"",
    );
    let (_d, _, t) = run_on(
        &steep.replace("\"gamma\": 1.4", "\"gamma\": 1.6666666666666667"),
        &["check"],
    );
    assert!(t.contains("convectively unstable"), "{t}");
    let (_d, code, t) = run_on(
        &steep.replace("\"gamma\": 1.4", "\"gamma\": 1"),
        &["build", "-o", "s.h5"],
    );
    assert_eq!(code, Some(0), "{t}");
    assert!(!t.contains("convectively"), "{t}");

    let t = bad_build(&GOOD.replace("\"gamma\": 1.4", "\"gamma\": 0.9"), &[]);
    assert!(
        t.contains("gas.gamma: must be at least 1 (1 is an isothermal gas), found 0.9"),
        "{t}"
    );
}

/// The unit record of our own: `/scales` names the system and G, and holds
/// for each base dimension its symbol and its value in cgs and SI; the old
/// root attributes are gone. Files in every unit system are read back with
/// h5py and compared with astropy's units and constants
/// (tests/h5_scales_check.py: IAU 2012 B2 au, IAU 2015 B3 solar mass,
/// Julian year, CODATA 2018 G).
#[test]
fn issue5_unit_record_of_our_own() {
    let d = tmp();
    let ring = include_str!("../profiles/ring-disk.json")
        .replace("\"cells\": 240", "\"cells\": 16")
        .replace("\"cells\": 256", "\"cells\": 4");
    let layered = include_str!("../profiles/layered-atmosphere.json");
    let cases = [
        ("astro", ring),
        ("si", layered.to_string()),
        (
            "cgs",
            layered.replace("\"units\": \"si\"", "\"units\": \"cgs\""),
        ),
        ("code", GOOD.to_string()),
    ];
    let mut files = Vec::new();
    for (units, p) in cases {
        assert!(p.contains(&format!("\"units\": \"{units}\"")), "{units}");
        let name = format!("{units}.json");
        std::fs::write(d.path().join(&name), p).unwrap();
        let out = format!("{units}.h5");
        let o = stillpoint(d.path(), &["build", &name, "-o", &out]);
        assert!(o.status.success(), "{units}: {}", text(&o));
        files.push(d.path().join(out));
    }
    let f = hdf5::File::open(&files[0]).unwrap();
    // The unit record is the group /scales, not root attributes.
    let names = f.attr_names().unwrap();
    assert!(names.iter().all(|n| !n.starts_with("unit")), "{names:?}");
    let length = f.group("scales/length").unwrap();
    let symbol: hdf5::types::VarLenUnicode = length.attr("symbol").unwrap().read_scalar().unwrap();
    assert_eq!(symbol.as_str(), "au");
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/h5_scales_check.py");
    let o = Command::new("python3")
        .arg(script)
        .args(&files)
        .output()
        .expect("python3 with h5py and astropy is needed (.ci/run installs them with pip)");
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("all checks passed"), "{}", text(&o));
}

/// Issue 8, part 3: in single precision the caution says whether rounding
/// destroys the balance (the discrete imbalance of the rounded values
/// against that of float64, `check`'s second-order centred differences)
/// and whether a perturbation survives the rounding (float32 keeps 24
/// bits: IEEE 754-2008, binary32).
#[test]
fn issue8_single_precision_caution_measures_what_rounding_does() {
    let d = tmp();
    for (name, wanted) in [
        ("powerlaw-disk", "the rounding destroys the balance"),
        ("quiet-slab", "the discretisation error dominates"),
        ("pulsed-slab", "keeps only about 4 significant bits"),
    ] {
        let o = stillpoint(d.path(), &["profiles", name]);
        let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        v["output"]["precision"] = "single".into();
        let file = format!("{name}-single.json");
        std::fs::write(d.path().join(&file), v.to_string()).unwrap();
        let o = stillpoint(d.path(), &["check", &file]);
        assert!(text(&o).contains(wanted), "{name}: {}", text(&o));
        let out = format!("{name}-single.h5");
        let o = stillpoint(d.path(), &["build", &file, "-o", &out]);
        assert!(o.status.success(), "{}", text(&o));
        let f = hdf5::File::open(d.path().join(&out)).unwrap();
        let c: hdf5::types::VarLenUnicode = f.attr("cautions").unwrap().read_scalar().unwrap();
        assert!(c.as_str().contains(wanted), "{name}: {}", c.as_str());
        assert_eq!(
            c.as_str().matches("written in single precision").count(),
            1,
            "one single-precision caution: {}",
            c.as_str()
        );
    }
}
