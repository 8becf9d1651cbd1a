//! The barotropic torus against the published analytic solution of
//! Papaloizou & Pringle 1984 (MNRAS 208, 721, §2: the constant specific
//! angular momentum torus in a point-mass potential), and its balance
//! residuals recomputed by SymPy (`tests/torus_check.py`).

mod common;

use std::process::Command;

use serde_json::json;
use stillpoint::background::{Background, Shape, StateBlock, Want};
use stillpoint::formula::Expr;
use stillpoint::physics;
use stillpoint::torus::{Edge, RotationLaw, Torus, TorusSpec};

/// GM = 1, pressure maximum at R0 = 1 (ℓ² = GM R0), K and Γ, floor.
fn spec(edge: Edge, rotation: RotationLaw) -> TorusSpec {
    TorusSpec {
        potential: physics::point_mass_field(Shape::DiskMidplane, Expr::name("M"), None),
        k: 0.05,
        gamma: 5.0 / 3.0,
        rotation,
        edge,
        floor_density: 1e-8,
        floor_pressure: 1e-10,
        search: (0.05, 50.0),
        names: vec![("M".into(), 1.0), ("G".into(), 1.0)],
    }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Papaloizou & Pringle 1984, §2 (equation numbers from memory): with
/// ℓ² = GM R0, h = (GM/R0) [R0/r − R0²/(2R²) − 1/(2d)], so C = −GM/(2 R0 d);
/// on the midplane h = 0 at R/R0 = d ± √(d² − d), and the maximum
/// h = (GM/R0)(1 − 1/d)/2 is at R0.
const D: f64 = 1.2;

fn pp84_edges() -> (f64, f64) {
    let s = (D * D - D).sqrt();
    (D - s, D + s)
}

#[test]
fn constant_angular_momentum_torus_matches_papaloizou_pringle_1984() {
    let c = -1.0 / (2.0 * D);
    let t = Torus::new(spec(
        Edge::Bernoulli(c),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .unwrap();
    let (rin, rout) = pp84_edges();
    assert!(rel(t.inner, rin) < 1e-14, "{} vs {rin}", t.inner);
    assert!(rel(t.outer, rout) < 1e-14, "{} vs {rout}", t.outer);
    assert!(rel(t.centre, 1.0) < 1e-14, "{}", t.centre);
    let (k, g) = (0.05, 5.0 / 3.0);
    let hmax = 0.5 * (1.0 - 1.0 / D);
    let rho_max = ((g - 1.0) * hmax / (g * k)).powf(1.0 / (g - 1.0));
    assert!(rel(t.density_max, rho_max) < 1e-13);
    assert!(rel(t.on_line(1.0).density, rho_max) < 1e-13);
    // The same torus from its inner edge: C and the outer edge come back.
    let u = Torus::new(spec(
        Edge::InnerRadius(rin),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .unwrap();
    assert!(rel(u.bernoulli, c) < 1e-14, "{} vs {c}", u.bernoulli);
    assert!(rel(u.outer, rout) < 1e-13);
    // Inside, ρ from the closed form; outside, the floor at rest.
    for (r, z) in [(1.0f64, 0.1f64), (0.9, -0.15), (1.4, 0.2)] {
        let rr = (r * r + z * z).sqrt();
        let h = 1.0 / rr - 1.0 / (2.0 * r * r) - 1.0 / (2.0 * D);
        let rho = ((g - 1.0) * h / (g * k)).powf(1.0 / (g - 1.0));
        let st = t.at(&[r, z]);
        assert!(rel(st.density, rho) < 1e-12, "({r}, {z})");
        assert!(rel(st.rotation(), 1.0 / r) < 1e-15);
        assert!(!t.floored(r, z));
    }
    for (r, z) in [(0.5, 0.0), (2.0, 0.0), (1.0, 0.6)] {
        assert!(t.floored(r, z));
        let st = t.at(&[r, z]);
        assert!(rel(st.density, 1e-8) < 1e-15 && rel(st.pressure, 1e-10) < 1e-15);
        assert!(st.rotation().abs() < 1e-300);
    }
}

/// Balance residuals inside the torus, radial and vertical, from exact
/// derivatives of ρ and P, at round-off.
#[test]
fn torus_balances_to_round_off_in_both_directions() {
    let t = Torus::new(spec(
        Edge::Bernoulli(-1.0 / (2.0 * D)),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .unwrap();
    let res = t.residuals().unwrap();
    let mut worst = [0.0f64; 2];
    let mut inside = 0;
    for i in 0..40 {
        for j in 0..40 {
            let r = 0.7 + 1.0 * i as f64 / 39.0;
            let z = -0.4 + 0.8 * j as f64 / 39.0;
            if t.floored(r, z) || t.at(&[r, z]).density < 1e-6 {
                continue;
            }
            inside += 1;
            let [a, b] = res(r, z);
            worst = [worst[0].max(a), worst[1].max(b)];
        }
    }
    assert!(inside > 200, "{inside}");
    assert!(worst[0] < 1e-12 && worst[1] < 1e-12, "{worst:?}");
}

/// Ω ∝ R^−a: the pressure maximum is where Ω²R = GM/R², i.e.
/// R_c^(3−2a) = GM/(Ω0² R0^(2a)) (the radial balance with P_R = 0; common
/// practice, no source).
#[test]
fn power_law_rotation_torus_centre() {
    let rot = RotationLaw {
        omega0: 0.9,
        r0: 1.0,
        a: 1.75,
    };
    let t = Torus::new(spec(Edge::InnerRadius(0.5), rot)).unwrap();
    let rc = (1.0 / (0.81f64)).powf(1.0 / (3.0 - 3.5));
    assert!(rel(t.centre, rc) < 1e-13, "{} vs {rc}", t.centre);
    assert!(t.outer > t.centre && t.centre > t.inner);
    let res = t.residuals().unwrap();
    let [a, b] = res(0.5 * (t.centre + t.outer), 0.05);
    assert!(a < 1e-12 && b < 1e-12, "{a} {b}");
}

#[test]
fn block_and_point_agree_to_the_bit() {
    let t = Torus::new(spec(
        Edge::Bernoulli(-1.0 / (2.0 * D)),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .unwrap();
    let r: Vec<f64> = (0..200).map(|i| 0.5 + i as f64 * 0.008).collect();
    let z: Vec<f64> = (0..200).map(|i| -0.3 + i as f64 * 0.003).collect();
    let mut block = StateBlock::new();
    let mut ws = t.workspace();
    t.eval(
        &[&r, &z],
        Want {
            accelerations: true,
        },
        &mut block,
        &mut ws,
    );
    for i in 0..200 {
        let s = t.at(&[r[i], z[i]]);
        assert_eq!(s.density.to_bits(), block.density[i].to_bits());
        assert_eq!(s.pressure.to_bits(), block.pressure[i].to_bits());
        assert_eq!(s.velocity[1].to_bits(), block.velocity[1][i].to_bits());
    }
}

#[test]
fn torus_errors_name_the_cause() {
    // Bernoulli constant below the minimum of Ψ (−GM/(2R0) = −0.5): empty.
    let e = Torus::new(spec(
        Edge::Bernoulli(-0.6),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .err()
    .unwrap();
    assert!(e.to_string().contains("the torus is empty"), "{e}");
    // C ≥ 0: h > 0 out to infinity, the torus never closes.
    let e = Torus::new(spec(
        Edge::Bernoulli(0.01),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .err()
    .unwrap();
    assert!(e.to_string().contains("does not close"), "{e}");
}

/// SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103) differentiates our
/// printed ρ(R, z), P(R, z) and Φ(R, z) itself and evaluates both residuals
/// at 50 digits; it also compares ρ with the closed form of Papaloizou &
/// Pringle 1984 typed in the script.
#[test]
fn sympy_residuals_of_the_torus() {
    let t = Torus::new(spec(
        Edge::Bernoulli(-1.0 / (2.0 * D)),
        RotationLaw::constant_angular_momentum(1.0),
    ))
    .unwrap();
    let f: serde_json::Map<String, serde_json::Value> = t
        .formulas()
        .into_iter()
        .map(|(n, e)| (n.to_string(), json!(e.to_string())))
        .collect();
    let report = json!({"formulas": f, "names": {"M": 1.0, "G": 1.0}, "d": D,
                        "K": 0.05, "Gamma": 5.0 / 3.0});
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("torus.json");
    std::fs::write(&path, report.to_string()).unwrap();
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/torus_check.py");
    let out = Command::new("python3")
        .arg(script)
        .arg(&path)
        .output()
        .expect("python3 is required (`.ci/run` installs SymPy)");
    let text = String::from_utf8_lossy(&out.stdout);
    println!("{text}");
    assert!(
        out.status.success(),
        "{text}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(text.contains("torus: 0 disagreements"), "{text}");
}

fn run(dir: &std::path::Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .current_dir(dir)
        .output()
        .unwrap()
}

/// The bundled torus and envelope build and check; the torus file records
/// its floor and the floored fraction, and its density at a cell centre
/// inside is the closed form of Papaloizou & Pringle 1984 (ℓ² = GM R_max,
/// h = C + GM/r − ℓ²/(2R²) on the midplane).
#[test]
fn bundled_torus_and_envelope_build_and_check() {
    let d = tempfile::tempdir().unwrap();
    for name in ["thick-torus", "polytropic-envelope"] {
        let o = run(d.path(), &["check", name]);
        let out = String::from_utf8_lossy(&o.stdout).to_string();
        assert!(o.status.success() && out.contains("PASS"), "{out}");
        let o = run(d.path(), &["build", name]);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    }
    let o = run(d.path(), &["check", "thick-torus"]);
    let out = String::from_utf8_lossy(&o.stdout).to_string();
    assert!(
        out.contains("balance is given up outside the torus"),
        "{out}"
    );
    let f = hdf5::File::open(d.path().join("thick-torus.h5")).unwrap();
    let attr = |n: &str| -> f64 {
        let v: hdf5::types::VarLenUnicode = f.attr(n).unwrap().read_scalar().unwrap();
        v.as_str().parse().unwrap()
    };
    let frac = attr("floored_fraction");
    assert!(frac > 0.05 && frac < 0.95, "{frac}");
    assert!(rel(attr("floor_density"), 1e-7) < 1e-12);
    let rho = f
        .dataset("background/density")
        .unwrap()
        .read_2d::<f64>()
        .unwrap();
    let x = f
        .dataset("grid/x_centers")
        .unwrap()
        .read_1d::<f64>()
        .unwrap();
    let y = f
        .dataset("grid/y_centers")
        .unwrap()
        .read_1d::<f64>()
        .unwrap();
    let floored = rho.iter().filter(|v| rel(**v, 1e-7) < 1e-12).count();
    assert!(rel(floored as f64 / rho.len() as f64, frac) < 1e-12);
    let c = attr("torus_bernoulli_constant");
    let (k, g) = (0.04, 5.0 / 3.0);
    for (i, j) in [(96, 140), (120, 130), (60, 96)] {
        let r = x[i].hypot(y[j]);
        let h = 1.0 / r - 1.0 / (2.0 * r * r) + c;
        if h > 0.0 {
            let want = ((g - 1.0) * h / (g * k)).powf(1.0 / (g - 1.0));
            assert!(rel(rho[[i, j]], want) < 1e-12, "({i}, {j})");
        } else {
            assert!(rel(rho[[i, j]], 1e-7) < 1e-12);
        }
    }
}

/// Rayleigh's κ² = R⁻³ d(R⁴Ω²)/dR for Ω = Ω0 (R/R0)^−a is (4 − 2a) Ω²
/// (Rayleigh 1917, Proc. R. Soc. A 93, 148; the power-law form is
/// elementary, common practice, no source): 0 for constant ℓ.
#[test]
fn epicyclic_frequency_of_the_rotation_law() {
    for a in [1.75, 2.0] {
        let rot = RotationLaw {
            omega0: if a > 1.9 { 1.0 } else { 0.9 },
            r0: 1.0,
            a,
        };
        let edge = if a > 1.9 {
            Edge::Bernoulli(-1.0 / (2.0 * D))
        } else {
            Edge::InnerRadius(0.5)
        };
        let t = Torus::new(spec(edge, rot)).unwrap();
        for (r, k2, w2) in t.epicyclic_sq(9).unwrap() {
            assert!(
                (k2 - (4.0 - 2.0 * a) * w2).abs() < 1e-13 * w2,
                "a = {a}, R = {r}"
            );
        }
    }
    let d = tempfile::tempdir().unwrap();
    let o = run(d.path(), &["check", "thick-torus"]);
    let out = String::from_utf8_lossy(&o.stdout).to_string();
    assert!(
        out.contains("marginally stable") && out.contains("kappa^2"),
        "{out}"
    );
}

/// A torus is built like every other background: perturbations, plain
/// arrays, the XDMF description, estimates, any thread count (identical
/// bytes) and `confirm` all work on it.
#[test]
fn torus_builds_through_the_common_path() {
    let d = tempfile::tempdir().unwrap();
    let o = run(d.path(), &["profiles", "thick-torus"]);
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["grid"]["x"]["cells"] = 64.into();
    v["grid"]["y"]["cells"] = 64.into();
    v["perturbations"] = serde_json::json!([{
        "kind": "noise", "field": "velocity_R", "amplitude": 1e-3,
        "relative_to": "sound_speed", "distribution": "uniform", "seed": 11
    }]);
    std::fs::write(d.path().join("t.json"), v.to_string()).unwrap();
    let ok = |args: &[&str]| {
        let o = run(d.path(), args);
        let t = format!(
            "{}{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(o.status.success(), "{args:?}: {t}");
        t
    };
    let t = ok(&["build", "t.json", "-o", "a.h5", "--npy", "--threads", "1"]);
    assert!(t.contains("a.xmf"), "{t}");
    ok(&[
        "build",
        "t.json",
        "-o",
        "b.h5",
        "--threads",
        "2",
        "--slab-rows",
        "5",
    ]);
    assert!(d.path().join("a-npy/metadata.json").is_file());
    let t = ok(&["build", "t.json", "-o", "c.h5", "--estimate"]);
    assert!(t.contains("cells"), "{t}");
    assert!(!d.path().join("c.h5").exists());
    let t = ok(&["confirm", "a.h5"]);
    assert!(t.contains("verdict: intact, and reproduced"), "{t}");
    let (a, b) = (
        hdf5::File::open(d.path().join("a.h5")).unwrap(),
        hdf5::File::open(d.path().join("b.h5")).unwrap(),
    );
    for name in [
        "state/velocity_x",
        "perturbation/velocity_x",
        "background/density",
    ] {
        let x: Vec<f64> = a.dataset(name).unwrap().read_raw().unwrap();
        let y: Vec<f64> = b.dataset(name).unwrap().read_raw().unwrap();
        assert_eq!(x, y, "{name}");
        if name.starts_with("perturbation") {
            assert!(x.iter().any(|v| *v != 0.0), "the noise is there");
        }
    }
    // `check` reports the perturbation alone (issue 9, part 3).
    let t = ok(&["check", "t.json"]);
    assert!(
        t.contains("perturbations[0] (noise)") && t.contains("velocity"),
        "{t}"
    );
    // The torus metadata is kept.
    let frac: hdf5::types::VarLenUnicode =
        a.attr("floored_fraction").unwrap().read_scalar().unwrap();
    assert!(frac.as_str().parse::<f64>().unwrap() > 0.0);
}

/// The torus on every grid with height — meridional [R, z] and [r, theta],
/// 3D [R, phi, z], [r, theta, phi] and [x, y, z] — against the closed form
/// of Papaloizou & Pringle 1984 (MNRAS 208, 721, section 2), read with h5py
/// (tests/torus_grids_check.py): the recorded edges, density maximum and
/// Bernoulli constant to 1e-12, the density and the velocity in the grid's
/// own components at every cell centre, and on [r, theta] cell averages
/// against mpmath.quad of ρ r² sin θ over the cell (the volume element).
/// `check` passes on each.
#[test]
fn issue7_torus_on_every_geometry_matches_papaloizou_pringle_1984() {
    let d = tempfile::tempdir().unwrap();
    let o = common::stillpoint(d.path(), &["profiles", "thick-torus"]);
    let base: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let ax = |from: serde_json::Value, to: serde_json::Value, cells: u32| json!({ "from": from, "to": to, "cells": cells });
    let cases = [
        (
            "rz",
            "R,z",
            json!({ "R": ax(0.4.into(), 2.8.into(), 40), "z": ax((-1.2).into(), 1.2.into(), 40) }),
            "center",
        ),
        (
            "rtheta",
            "r,theta",
            json!({ "r": ax(0.4.into(), 2.8.into(), 32), "theta": ax(0.3.into(), 2.84.into(), 32) }),
            "average",
        ),
        (
            "cyl",
            "R,phi,z",
            json!({ "R": ax(0.4.into(), 2.8.into(), 16), "phi": ax(0.into(), "2*pi".into(), 6), "z": ax((-1.2).into(), 1.2.into(), 16) }),
            "center",
        ),
        (
            "sph",
            "r,theta,phi",
            json!({ "r": ax(0.4.into(), 2.8.into(), 16), "theta": ax(0.3.into(), 2.84.into(), 16), "phi": ax(0.into(), "2*pi".into(), 6) }),
            "center",
        ),
        (
            "cart",
            "x,y,z",
            json!({ "x": ax((-2.8).into(), 2.8.into(), 20), "y": ax((-2.8).into(), 2.8.into(), 20), "z": ax((-1.2).into(), 1.2.into(), 10) }),
            "center",
        ),
    ];
    for (name, axes, grid, rule) in cases {
        let mut v = base.clone();
        v["grid"] = grid;
        v["sampling"] = if rule == "average" {
            json!({ "rule": "average", "tolerance": 1e-12 })
        } else {
            json!({ "rule": "center" })
        };
        let json_name = format!("{name}.json");
        std::fs::write(d.path().join(&json_name), v.to_string()).unwrap();
        let file = format!("{name}.h5");
        let (code, t) = common::run(d.path(), &["build", &json_name, "-o", &file]);
        assert_eq!(code, Some(0), "{name}: {t}");
        let (code, t) = common::run(d.path(), &["check", &json_name]);
        assert_eq!(code, Some(0), "{name}: {t}");
        assert!(t.contains("PASS"), "{name}: {t}");
        let script =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/torus_grids_check.py");
        let o = Command::new("python3")
            .arg(script)
            .arg(d.path().join(&file))
            .arg(axes)
            .args([
                "K=0.04",
                "Gam=1.6666666666666667",
                "l=1",
                "R_in=0.62",
                "rho_floor=1e-7",
            ])
            .output()
            .expect("python3 with h5py, numpy and mpmath is needed");
        let text = format!(
            "{}{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        );
        eprintln!("{name}: {text}");
        assert!(
            o.status.success() && text.contains("torus grids: ok"),
            "{name}: {text}"
        );
    }
}

/// The drift forecast of a torus (issue 8, item 4) leaves out the cells
/// whose stencil reaches the floor, where balance is given up: every
/// largest acceleration lies inside the torus, between the edges of the
/// Papaloizou & Pringle 1984 solution (§2, from memory: with ℓ² = GM R0 the
/// midplane edges are d ± √(d² − d) in units of R0, d fixed by the inner
/// edge), and is that of the torus (the floor, at rest under gravity alone,
/// would give GM/R² ~ 10³ near the star). A build records the same.
#[test]
fn issue8_torus_drift_forecast_leaves_the_floor_out() {
    let d = tempfile::tempdir().unwrap();
    // The bundled thick torus: R0 = 1, inner edge 0.62, cells of 0.025.
    let r_in: f64 = 0.62;
    let dd = r_in * r_in / (2.0 * r_in - 1.0);
    let r_out = dd + (dd * dd - dd).sqrt();
    assert!((dd - (dd * dd - dd).sqrt() - r_in).abs() < 1e-12);
    let o = run(d.path(), &["check", "thick-torus"]);
    let out = String::from_utf8_lossy(&o.stdout).to_string();
    assert!(o.status.success(), "{out}");
    assert!(out.contains("unsplit over [x, y]"), "{out}");
    assert!(out.contains("outside the torus are left out"), "{out}");
    let mut seen = 0;
    for line in out.lines().filter(|l| l.contains("max acceleration")) {
        let a: f64 = line
            .split("max acceleration ")
            .nth(1)
            .and_then(|r| r.split_whitespace().next())
            .unwrap()
            .parse()
            .unwrap();
        let xy: Vec<f64> = line
            .split("= (")
            .nth(1)
            .and_then(|r| r.split(')').next())
            .unwrap()
            .split(", ")
            .map(|v| v.parse().unwrap())
            .collect();
        let r = xy[0].hypot(xy[1]);
        assert!(r > r_in + 0.025 / 4.0 && r < r_out - 0.025 / 4.0, "{line}");
        assert!(a > 0.0 && a < 1.0, "{line}");
        seen += 1;
    }
    assert_eq!(seen, 4, "{out}");
    let o = run(d.path(), &["build", "thick-torus", "-o", "t.h5"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let f = hdf5::File::open(d.path().join("t.h5")).unwrap();
    let s: hdf5::types::VarLenUnicode = f.attr("drift_forecast").unwrap().read_scalar().unwrap();
    let v: serde_json::Value = serde_json::from_str(s.as_str()).unwrap();
    assert!(v["notes"].to_string().contains("outside the torus"), "{v}");
    assert_eq!(
        v["schemes"][0]["levels"].as_array().unwrap().len(),
        3,
        "{v}"
    );
    // On a meridional grid the torus is forecast on its plane (R, z), not
    // along the midplane its shape ("disk") names.
    let file = common::variant(d.path(), "thick-torus", |v| {
        v["grid"] = json!({"R": {"from": 0.3, "to": 3.0, "cells": 32},
                           "z": {"from": -1.0, "to": 1.0, "cells": 24}});
    });
    let o = run(d.path(), &["check", &file]);
    let out = String::from_utf8_lossy(&o.stdout).to_string();
    assert!(o.status.success(), "{out}");
    assert!(out.contains("unsplit over [R, z]"), "{out}");
}

/// Diagnostic fields of a torus (issue 8, item 7), which used to be
/// refused: inside, the rotation law's exact derivatives; outside, the
/// floor at rest. For the constant specific angular momentum torus of
/// Papaloizou & Pringle 1984 (§2, from memory) inside: ℓ = R v_φ = ℓ₀
/// (here √(GM R_max) = 1), κ² = 0, ω_z = (1/R) d(R v_φ)/dR = 0, and the
/// Bernoulli function ½v² + h + Φ equals the constant C = −GM/(2 R_max d)
/// with d fixed by the inner edge (d − √(d² − d) = R_in/R_max); outside all
/// of ℓ, κ², ω_z are 0.
#[test]
fn issue8_torus_diagnostic_fields_are_exact() {
    let d = tempfile::tempdir().unwrap();
    let file = common::variant(d.path(), "thick-torus", |v| {
        v["output"]["fields"] = json!([
            "density",
            "vorticity_z",
            "epicyclic_frequency_sq",
            "specific_angular_momentum",
            "bernoulli"
        ]);
    });
    let o = run(d.path(), &["build", &file, "-o", "t.h5"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let f = hdf5::File::open(d.path().join("t.h5")).unwrap();
    let read = |n: &str| -> Vec<f64> {
        f.dataset(&format!("state/{n}"))
            .unwrap()
            .read_raw()
            .unwrap()
    };
    let (rho, w, k2, l, b) = (
        read("density"),
        read("vorticity_z"),
        read("epicyclic_frequency_sq"),
        read("specific_angular_momentum"),
        read("bernoulli"),
    );
    let r_in: f64 = 0.62;
    let dd = r_in * r_in / (2.0 * r_in - 1.0);
    let c = -1.0 / (2.0 * dd);
    let (mut inside, mut outside) = (0, 0);
    for i in 0..rho.len() {
        assert!(
            w[i].abs() < 1e-12 && k2[i].abs() < 1e-12,
            "{i}: {} {}",
            w[i],
            k2[i]
        );
        if rho[i] > 1e-7 {
            inside += 1;
            assert!((l[i] - 1.0).abs() < 1e-13, "{i}: {}", l[i]);
            assert!((b[i] / c - 1.0).abs() < 1e-12, "{i}: {} vs {c}", b[i]);
        } else {
            outside += 1;
            assert_eq!(l[i], 0.0);
        }
    }
    assert!(inside > 1000 && outside > 1000, "{inside} {outside}");
}
