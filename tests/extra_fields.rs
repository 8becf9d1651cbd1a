//! The fields written on request (issue 8, parts 2 and 7): the
//! gravitational and pressure-gradient accelerations of the background and
//! the diagnostic fields, against SymPy's closed forms and textbook values
//! (tests/extra_fields_check.py names each source), and the vertical
//! accelerations of a stratified disk's state.

mod common;

use std::path::Path;
use std::process::Command;

use common::{run, stillpoint};
use stillpoint::background::{Background, StateBlock, Want};
use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"))
}

/// A vertically isothermal disk around a point mass, ρ_mid ∝ R^p,
/// c² ∝ R^q (the closed forms of Nelson, Gressel & Umurhan 2013).
const DISK: &str = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "rho0": 1.0, "p": -1.5, "q": -1.0, "h0": 0.05,
                  "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^q" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "rho0*(R/R0)^p" },
  "grid": GRID,
  "sampling": SAMPLING,
  "output": { "fields": FIELDS }
}"#;

/// The power-law disk of `profiles/powerlaw-disk.json` (vertically
/// integrated, Σ ∝ 1/R, c² ∝ R^(−1/2)) on a small polar grid.
const POWERLAW: &str = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "sigma0": 1.0, "p": 1.0, "q": 0.5, "h0": H0,
                  "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^(-q)" },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "sigma0*(R/R0)^(-p)",
               "vertically_integrated": true },
  "grid": { "R": { "from": 0.4, "to": 2.5, "cells": 24, "spacing": "log" }, "phi": { "cells": 4 } },
  "sampling": SAMPLING,
  "output": { "fields": FIELDS }
}"#;

fn profile(template: &str, grid: &str, sampling: &str, fields: &[String]) -> String {
    let list = fields
        .iter()
        .map(|f| format!("\"{f}\""))
        .collect::<Vec<_>>()
        .join(", ");
    template
        .replace("GRID", grid)
        .replace("SAMPLING", sampling)
        .replace("FIELDS", &format!("[{list}]"))
}

fn python(args: &[&str]) {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/extra_fields_check.py");
    let o = Command::new("python3")
        .arg(script)
        .args(args)
        .output()
        .expect("python3 with h5py, numpy and sympy is needed");
    let t = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{t}");
    assert!(o.status.success(), "{t}");
}

fn build(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(format!("{name}.json"));
    std::fs::write(&path, text).unwrap();
    let out = format!("{name}.h5");
    let (code, t) = run(dir, &["build", path.to_str().unwrap(), "-o", &out]);
    assert_eq!(code, Some(0), "{t}");
    dir.join(out).to_str().unwrap().to_string()
}

/// The stratified disk's state carries −∂Φ/∂z and −(1/ρ) ∂P/∂z (they were
/// 0): against SymPy's derivatives of the closed forms, the block path
/// equal to the point path to the bit.
#[test]
fn issue8_stratified_disk_state_has_vertical_accelerations() {
    let grid = r#"{ "R": { "from": 0.5, "to": 2.5, "cells": 8 }, "z": { "from": -0.3, "to": 0.3, "cells": 8 } }"#;
    let l = load(&profile(
        DISK,
        grid,
        r#"{ "rule": "center" }"#,
        &["density".into()],
    ));
    let (bg, _) = pipeline::solve(&l).unwrap();
    let (mut rs, mut zs) = (Vec::new(), Vec::new());
    for i in 0..=10 {
        for j in 0..=8 {
            rs.push(0.5 + 0.2 * i as f64);
            zs.push(-0.3 + 0.075 * j as f64);
        }
    }
    let mut block = StateBlock::new();
    let mut ws = bg.workspace();
    let want = Want {
        accelerations: true,
    };
    bg.eval(&[&rs, &zs], want, &mut block, &mut ws);
    let mut cols: [Vec<f64>; 4] = Default::default();
    for i in 0..rs.len() {
        let s = bg.at(&[rs[i], zs[i]]);
        for (k, (a, b)) in [
            (s.gravity[2], block.gravity[2][i]),
            (s.pressure_accel[2], block.pressure_accel[2][i]),
        ]
        .into_iter()
        .enumerate()
        {
            assert_eq!(
                a.to_bits(),
                b.to_bits(),
                "block and point path, component {k}"
            );
        }
        cols[0].push(s.gravity[0]);
        cols[1].push(s.gravity[2]);
        cols[2].push(s.pressure_accel[0]);
        cols[3].push(s.pressure_accel[2]);
    }
    let json = format!(
        r#"{{"R": {:?}, "z": {:?}, "g_R": {:?}, "g_z": {:?}, "a_R": {:?}, "a_z": {:?}}}"#,
        rs, zs, cols[0], cols[1], cols[2], cols[3]
    );
    let d = tempfile::tempdir().unwrap();
    let path = d.path().join("points.json");
    std::fs::write(&path, json).unwrap();
    python(&["points", path.to_str().unwrap()]);
}

/// A disk integrated up its columns: −(1/ρ) ∂P/∂z = ∂Φ/∂z (the balance each
/// column is integrated from), checked here against central differences of
/// the background's own pressure, Richardson-extrapolated from steps 1e-3
/// and 5e-4 (error of order h⁴/H⁴ with the scale height H ≈ 0.05 R, and
/// the column quadrature's round-off over h: 1e-7 is what it can show).
#[test]
fn issue8_column_disk_state_has_vertical_accelerations() {
    let text = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "rho0": 1.0, "h0": 0.05, "cs2_0": "h0^2" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0/R*(1 + 0.5*tanh(abs(z)/(h0*R) - 2))" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "vertical": "quadrature",
               "density": "rho0*R^(-1.5)" },
  "grid": { "R": { "from": 0.5, "to": 2.0, "cells": 8 }, "z": { "from": -0.2, "to": 0.2, "cells": 8 } }
}"#;
    let l = load(text);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let h = 1e-3;
    let mut worst = 0.0f64;
    for &(r, z) in &[(0.7, 0.05), (1.0, -0.08), (1.6, 0.15), (1.9, -0.03)] {
        let s = bg.at(&[r, z]);
        let gz = -z / (r * r + z * z).powf(1.5);
        assert!(
            (s.gravity[2] - gz).abs() <= 1e-14 * gz.abs(),
            "g_z at ({r}, {z})"
        );
        assert!(
            (s.pressure_accel[2] + gz).abs() <= 1e-14 * gz.abs(),
            "a_z = dPhi/dz at ({r}, {z})"
        );
        let d = |h: f64| (bg.at(&[r, z + h]).pressure - bg.at(&[r, z - h]).pressure) / (2.0 * h);
        let fd = -(4.0 * d(h / 2.0) - d(h)) / 3.0 / s.density;
        worst = worst.max((fd - s.pressure_accel[2]).abs() / gz.abs());
    }
    eprintln!("column disk: -(1/rho) dP/dz by central difference vs a_z: {worst:.3e}");
    assert!(worst < 1e-7, "{worst}");
}

/// Velocity, gravity and pressure-gradient components of every grid of the
/// disk.
fn balance_fields(comps: &[&str]) -> Vec<String> {
    let mut f = vec!["density".to_string()];
    for prefix in ["velocity", "gravity", "pressure_acceleration"] {
        for c in comps {
            f.push(format!("{prefix}_{c}"));
        }
    }
    f
}

/// gravity + pressure-gradient acceleration + centrifugal term = 0 in the
/// file, in the grid's own components, on a meridional, a spherical
/// meridional and a Cartesian grid, at cell centres and at Gauss–Legendre
/// nodes; each acceleration against SymPy (h5py reads the file). On the
/// meridional grid also the vorticity (−∂v_φ/∂z, the vertical shear, and
/// (1/R) ∂(R v_φ)/∂R) and κ² against SymPy's derivatives.
#[test]
fn issue8_accelerations_balance_in_the_file() {
    let d = tempfile::tempdir().unwrap();
    let grids: [(&str, &str, &[&str]); 3] = [
        (
            "meridional",
            r#"{ "R": { "from": 0.5, "to": 2.5, "cells": 16 }, "z": { "from": -0.3, "to": 0.3, "cells": 12 } }"#,
            &["R", "z", "phi"],
        ),
        (
            "spherical",
            r#"{ "r": { "from": 0.6, "to": 2.4, "cells": 12 }, "theta": { "from": "pi/2 - 0.3", "to": "pi/2 + 0.3", "cells": 10 } }"#,
            &["r", "theta", "phi"],
        ),
        (
            "box",
            r#"{ "x": { "from": 0.3, "to": 1.5, "cells": 6 }, "y": { "from": -0.6, "to": 0.6, "cells": 6 }, "z": { "from": -0.2, "to": 0.2, "cells": 5 } }"#,
            &["x", "y", "z"],
        ),
    ];
    for (name, grid, comps) in grids {
        for (rule, sampling) in [
            ("center", r#"{ "rule": "center" }"#),
            (
                "nodes:3",
                r#"{ "rule": "gauss-legendre-nodes", "points": 3 }"#,
            ),
        ] {
            let mut fields = balance_fields(comps);
            if name == "meridional" {
                for f in [
                    "vorticity_R",
                    "vorticity_z",
                    "vorticity_phi",
                    "epicyclic_frequency_sq",
                ] {
                    fields.push(f.to_string());
                }
            }
            let text = profile(DISK, grid, sampling, &fields);
            let tag = format!("{name}-{}", rule.replace(':', ""));
            let file = build(d.path(), &tag, &text);
            python(&["balance", &file, rule]);
        }
    }
}

/// The accelerations are sampled by the file's rule: with cell averages
/// each is the volume average (here: a polar grid, where −∂Φ/∂R = −GM/R² has
/// the exact average −GM ln(R₂/R₁)/((R₂² − R₁²)/2) with the volume element
/// R dR; integral by hand).
#[test]
fn issue8_averaged_gravity_is_the_cell_average() {
    let d = tempfile::tempdir().unwrap();
    let fields = vec!["density".to_string(), "gravity_R".to_string()];
    let text = profile(
        POWERLAW,
        "",
        r#"{ "rule": "average", "points": 6 }"#,
        &fields,
    )
    .replace("H0", "0.05");
    let file = build(d.path(), "avg", &text);
    let f = hdf5::File::open(&file).unwrap();
    let g = f
        .dataset("background/gravity_R")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let e = f
        .dataset("grid/R_edges")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let nphi = 4;
    let mut worst = 0.0f64;
    for (i, w) in e.windows(2).enumerate() {
        let exact = -(w[1] / w[0]).ln() / (0.5 * (w[1] * w[1] - w[0] * w[0]));
        for k in 0..nphi {
            worst = worst.max((g[i * nphi + k] - exact).abs() / exact.abs());
        }
    }
    eprintln!("averaged gravity_R vs the exact cell average: {worst:.3e}");
    assert!(worst < 1e-12, "{worst}");
}

/// With a rule to a tolerance the fields on request are compared too
/// (n against n + 2 points): their estimate is in the `sampling` attribute
/// and the averaged gravity meets the tolerance against its exact cell
/// average (the integral by hand of the test above).
#[test]
fn issue8_fields_on_request_meet_the_tolerance() {
    let d = tempfile::tempdir().unwrap();
    let fields = vec![
        "density".to_string(),
        "gravity_R".to_string(),
        "pressure_acceleration_R".to_string(),
    ];
    let text = profile(
        POWERLAW,
        "",
        r#"{ "rule": "average", "tolerance": 1e-13 }"#,
        &fields,
    )
    .replace("H0", "0.05");
    let file = build(d.path(), "tol", &text);
    let f = hdf5::File::open(&file).unwrap();
    let ds = f.dataset("background/gravity_R").unwrap();
    let sampling = ds
        .attr("sampling")
        .unwrap()
        .read_scalar::<hdf5::types::VarLenUnicode>()
        .unwrap()
        .to_string();
    for name in ["gravity_R", "pressure_acceleration_R"] {
        let at = sampling
            .find(&format!("{name} "))
            .unwrap_or_else(|| panic!("no estimate of {name}: {sampling}"));
        let est: f64 = sampling[at + name.len() + 1..]
            .split([',', ';'])
            .next()
            .unwrap()
            .trim()
            .parse()
            .unwrap();
        assert!(est <= 1e-13, "{name} {est}: {sampling}");
    }
    assert!(!sampling.contains("NOT MET"), "{sampling}");
    let g = ds.read_raw::<f64>().unwrap();
    let e = f
        .dataset("grid/R_edges")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let mut worst = 0.0f64;
    for (i, w) in e.windows(2).enumerate() {
        let exact = -(w[1] / w[0]).ln() / (0.5 * (w[1] * w[1] - w[0] * w[0]));
        for k in 0..4 {
            worst = worst.max((g[i * 4 + k] - exact).abs() / exact.abs());
        }
    }
    eprintln!("gravity_R to a tolerance of 1e-13 vs the exact cell average: {worst:.3e}");
    assert!(worst < 1e-13, "{worst}");
}

fn diagnostic_fields() -> Vec<String> {
    [
        "velocity_phi",
        "vorticity_R",
        "vorticity_phi",
        "vorticity_z",
        "specific_angular_momentum",
        "epicyclic_frequency_sq",
        "bernoulli",
        "entropy",
        "mach_number",
    ]
    .map(String::from)
    .to_vec()
}

/// Vorticity, specific angular momentum, Bernoulli function, entropy, Mach
/// number and κ² of a power-law disk against SymPy's closed forms, at cell
/// centres and at Gauss–Legendre nodes.
#[test]
fn issue8_diagnostic_fields_match_sympy() {
    let d = tempfile::tempdir().unwrap();
    for (rule, sampling) in [
        ("center", r#"{ "rule": "center" }"#),
        (
            "nodes:3",
            r#"{ "rule": "gauss-legendre-nodes", "points": 3 }"#,
        ),
    ] {
        let text = profile(POWERLAW, "", sampling, &diagnostic_fields()).replace("H0", "0.05");
        let file = build(d.path(), &rule.replace(':', ""), &text);
        python(&["diagnostics", &file, rule]);
    }
}

/// A nearly pressureless disk (h = 1e-4) is Keplerian: κ = Ω and ω_z = Ω/2
/// (Binney & Tremaine 2008, from memory; see the script).
#[test]
fn issue8_keplerian_epicyclic_frequency_is_omega() {
    let d = tempfile::tempdir().unwrap();
    let text = profile(
        POWERLAW,
        "",
        r#"{ "rule": "center" }"#,
        &diagnostic_fields(),
    )
    .replace("H0", "1e-4");
    let file = build(d.path(), "kepler", &text);
    python(&["keplerian", &file]);
}

/// What cannot be computed exactly is refused at `output.fields`, before
/// any file is written.
#[test]
fn issue8_refused_diagnostics_name_the_key() {
    let d = tempfile::tempdir().unwrap();
    let text = profile(
        POWERLAW,
        "",
        r#"{ "rule": "center" }"#,
        &["bernoulli".to_string()],
    )
    .replace("H0", "0.05")
    .replace(r#""gamma": 1.4"#, r#""gamma": 1"#);
    let path = d.path().join("iso.json");
    std::fs::write(&path, text).unwrap();
    let o = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", "x.h5"]);
    let t = common::text(&o);
    assert_eq!(o.status.code(), Some(2), "{t}");
    assert!(
        t.contains("output.fields") && t.contains("gas.gamma > 1"),
        "{t}"
    );
    assert!(!d.path().join("x.h5").exists());
}

/// Ghost layers (`grid.<axis>.halo`): the axes in the file include the
/// added cells, which continue the axis's spacing, and the background is
/// evaluated there like anywhere else (Σ = σ0 R⁻¹ and
/// v_φ² = GM/R − (p + q) c² of the power-law disk, the closed form of the
/// radial balance, derived by hand: R (Φ_R + (Σc²)_R/Σ)).
#[test]
fn issue8_halo_layers_extend_the_axes_and_hold_the_background() {
    let d = tempfile::tempdir().unwrap();
    let fields = vec!["density".to_string(), "velocity_phi".to_string()];
    let text = profile(POWERLAW, "", r#"{ "rule": "center" }"#, &fields)
        .replace("H0", "0.05")
        .replace(r#""spacing": "log" }"#, r#""spacing": "log", "halo": 2 }"#)
        .replace(
            r#""phi": { "cells": 4 }"#,
            r#""phi": { "cells": 4, "halo": 1 }"#,
        );
    let file = build(d.path(), "halo", &text);
    let f = hdf5::File::open(&file).unwrap();
    let e = f
        .dataset("grid/R_edges")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let c = f
        .dataset("grid/R_centers")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let phi = f
        .dataset("grid/phi_edges")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    assert_eq!(c.len(), 24 + 4);
    assert_eq!(phi.len(), 4 + 2 + 1);
    let ratio = (2.5f64 / 0.4).powf(1.0 / 24.0);
    assert!((e[2] - 0.4).abs() < 1e-15 && (e[26] - 2.5).abs() < 1e-15);
    assert!((e[0] - 0.4 / ratio / ratio).abs() < 1e-14, "{}", e[0]);
    assert!((e[28] - 2.5 * ratio * ratio).abs() < 1e-13, "{}", e[28]);
    let tau = std::f64::consts::TAU;
    assert!((phi[0] + tau / 4.0).abs() < 1e-14 && (phi[6] - 1.25 * tau).abs() < 1e-14);
    let rho = f
        .dataset("background/density")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let v = f
        .dataset("background/velocity_phi")
        .unwrap()
        .read_raw::<f64>()
        .unwrap();
    let nphi = 6;
    let mut worst = 0.0f64;
    for (i, r) in c.iter().enumerate() {
        let c2 = 0.05f64 * 0.05 * r.powf(-0.5);
        let v2 = 1.0 / r - 1.5 * c2;
        for k in 0..nphi {
            worst = worst.max((rho[i * nphi + k] - 1.0 / r).abs() * r);
            worst = worst.max((v[i * nphi + k] * v[i * nphi + k] - v2).abs() / v2);
        }
    }
    eprintln!(
        "halo file: Σ and v_phi^2 against the closed forms, ghost cells included: {worst:.3e}"
    );
    assert!(worst < 1e-13, "{worst}");
    let halo = f
        .attr("halo")
        .unwrap()
        .read_scalar::<hdf5::types::VarLenUnicode>();
    let halo = halo.map(|s| s.to_string()).unwrap_or_default();
    assert!(halo.contains("R: 2, phi: 1"), "{halo}");
}
