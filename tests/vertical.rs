//! Disks with their vertical structure and the 2D/3D geometries of issue 7,
//! against outside references (each named beside its check).

mod common;

use std::path::Path;
use std::process::Command;

use stillpoint::background::Background;
use stillpoint::check::{self, Verdict};
use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"))
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// A vertically isothermal disk around a point mass, ρ_mid ∝ R^p, c² ∝ R^q
/// (the notation of Nelson, Gressel & Umurhan 2013), on a meridional grid.
const DISK: &str = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "rho0": 1.0, "p": -1.5, "q": -1.0, "h0": 0.05,
                  "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^q" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "rho0*(R/R0)^p" },
  "grid": { "R": { "from": 0.5, "to": 2.5, "cells": 40 }, "z": { "from": -0.3, "to": 0.3, "cells": 24 } }
}"#;

/// Nelson, Gressel & Umurhan 2013, MNRAS 435, 2610, §2 (closed forms of the
/// vertically isothermal disk, written here from memory of their eqs. for ρ
/// and Ω, and rederived by hand from the two balances):
///   ρ(R, z) = ρ0 (R/R0)^p exp[(G M / c²) (1/√(R² + z²) − 1/R)],
///   Ω²(R, z) = Ω_K² [(p + q) (H/R)² + (1 + q) − q R/√(R² + z²)],
/// with H = c/Ω_K, Ω_K² = G M / R³.
#[test]
fn vertically_isothermal_density_and_shear_match_nelson_2013() {
    let l = load(DISK);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let (p, q, h0) = (-1.5f64, -1.0f64, 0.05f64);
    let mut worst = (0.0f64, 0.0f64);
    for i in 0..=20 {
        for j in 0..=12 {
            let r = 0.5 + 0.1 * i as f64;
            let z = -0.3 + 0.05 * j as f64;
            let c2 = h0 * h0 * r.powf(q);
            let d = r.hypot(z);
            let rho = r.powf(p) * ((1.0 / d - 1.0 / r) / c2).exp();
            let omk2 = r.powi(-3);
            let hr2 = c2 / (r * r * omk2);
            let om2 = omk2 * ((p + q) * hr2 + (1.0 + q) - q * r / d);
            let st = bg.at(&[r, z]);
            let om = st.rotation() / r;
            worst.0 = worst.0.max(rel(st.density, rho));
            worst.1 = worst.1.max(rel(om * om, om2));
            assert!(rel(st.pressure, rho * c2) < 1e-12, "P at ({r}, {z})");
        }
    }
    // Φ(R, z) − Φ(R, 0) cancels: ~ε (R/z)² |ln(ρ/ρ_mid)| in both the file
    // and this reference, ≲ 1e-13 here.
    assert!(worst.0 < 1e-12 && worst.1 < 1e-13, "{worst:?}");
    eprintln!(
        "largest relative deviation: density {:.1e}, Omega^2 {:.1e}",
        worst.0, worst.1
    );
    // The rotation really varies with height (vertical shear): at R = 1,
    // z = 0.3, Ω²/Ω_K² − 1 differs from the midplane's by q (1 − R/d).
    let (mid, up) = (bg.at(&[1.0, 0.0]), bg.at(&[1.0, 0.3]));
    let shift = up.rotation().powi(2) - mid.rotation().powi(2);
    let want = q * (1.0 - 1.0 / 1.0f64.hypot(0.3));
    assert!(rel(shift, want) < 1e-12, "{shift} vs {want}");
}

/// The thin-disk limit: ln(ρ/ρ_mid) = (R/H)² [(1 + x)^(−1/2) − 1], x = z²/R²,
/// whose binomial series (−x/2 + 3x²/8 − 5x³/16 + 35x⁴/128 …) starts with
/// the Gaussian −z²/(2H²) (Pringle 1981, ARA&A 19, 137, the vertical
/// structure of a thin disk; series from memory, standard binomial).
#[test]
fn vertically_isothermal_disk_has_the_gaussian_thin_disk_limit() {
    let l = load(DISK);
    let (bg, _) = pipeline::solve(&l).unwrap();
    let r = 1.0f64;
    let h = 0.05f64; // H/R = h0 at R = R0
    for k in 1..=12 {
        let z = 0.01 * k as f64;
        let x = (z / r).powi(2);
        let got = (bg.at(&[r, z]).density / bg.at(&[r, 0.0]).density).ln();
        let series = (r / h).powi(2) * (-x / 2.0 + 3.0 * x * x / 8.0 - 5.0 * x.powi(3) / 16.0);
        let next = (r / h).powi(2) * 35.0 * x.powi(4) / 128.0;
        // Round-off: Φ(R, z) − Φ(R, 0) cancels to ~ε (R/z)² relative.
        let roundoff = 1e-15 * (r / z).powi(2) * got.abs();
        assert!((got - series).abs() <= 1.01 * next + roundoff, "z = {z}");
        // Gaussian to leading order: relative error O(x).
        let gauss = -z * z / (2.0 * h * h);
        assert!((got - gauss).abs() <= gauss.abs() * x, "z = {z}");
    }
}

#[test]
fn stratified_disk_checks_both_balances_as_identities() {
    let l = load(DISK);
    let (bg, domain) = pipeline::solve(&l).unwrap();
    let c = pipeline::centres_for(&l.grid, l.model.shape.frame());
    let report = check::run(&l.model, &bg, &domain, &c, 1e-10).unwrap();
    match &report.verdict {
        Verdict::IdenticallyZero { how } => {
            assert!(how.contains("radial and vertical"), "{how}")
        }
        v => panic!("{v:?}"),
    }
    // An audit whose rotation ignores the vertical shear (midplane v_φ at
    // every height) is no equilibrium.
    let audit = DISK.replace(
        r#""solve_for": "rotation","#,
        r#""solve_for": "nothing", "rotation": "sqrt(G*M/R + (p + q)*cs2_0*(R/R0)^q)","#,
    );
    let l = load(&audit);
    let (bg, domain) = pipeline::solve_unverified(&l).unwrap();
    let report = check::run(&l.model, &bg, &domain, &c, 1e-10).unwrap();
    assert!(
        matches!(report.verdict, Verdict::NotEquilibrium { .. }),
        "{:?}",
        report.verdict
    );
}

fn stillpoint(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    common::run(dir, args)
}

fn with_grid(profile: &str, grid: &str) -> String {
    let start = profile.find(r#""grid""#).unwrap();
    format!("{}\"grid\": {grid}\n}}", &profile[..start])
}

/// Every 2D and 3D geometry that holds a stratified disk builds and checks,
/// writes the grid's own components, and is the same state: the density at
/// a cell centre is ρ(R, z) of that centre.
#[test]
fn issue7_stratified_disk_on_every_geometry() {
    let d = tempfile::tempdir().unwrap();
    let grids = [
        (
            "merid",
            r#"{ "R": { "from": 0.5, "to": 2, "cells": 8 }, "z": { "from": -0.2, "to": 0.2, "cells": 6 } }"#,
            vec!["R", "z", "phi"],
        ),
        (
            "rtheta",
            r#"{ "r": { "from": 0.5, "to": 2, "cells": 8 }, "theta": { "from": 1.4, "to": 1.7, "cells": 6 } }"#,
            vec!["r", "theta", "phi"],
        ),
        (
            "cyl",
            r#"{ "R": { "from": 0.5, "to": 2, "cells": 6 }, "phi": { "cells": 4 }, "z": { "from": -0.2, "to": 0.2, "cells": 4 } }"#,
            vec!["R", "phi", "z"],
        ),
        (
            "sph",
            r#"{ "r": { "from": 0.5, "to": 2, "cells": 6 }, "theta": { "from": 1.4, "to": 1.7, "cells": 4 }, "phi": { "cells": 4 } }"#,
            vec!["r", "theta", "phi"],
        ),
        (
            "box",
            r#"{ "x": { "from": 0.5, "to": 2, "cells": 6 }, "y": { "from": 0.5, "to": 2, "cells": 5 }, "z": { "from": -0.2, "to": 0.2, "cells": 4 } }"#,
            vec!["x", "y", "z"],
        ),
    ];
    let l = load(DISK);
    let (bg, _) = pipeline::solve(&l).unwrap();
    for (name, grid, comps) in grids {
        let path = d.path().join(format!("{name}.json"));
        std::fs::write(&path, with_grid(DISK, grid)).unwrap();
        let (code, t) = stillpoint(d.path(), &["check", path.to_str().unwrap()]);
        assert_eq!(code, Some(0), "{name}: {t}");
        let out = format!("{name}.h5");
        let (code, t) = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", &out]);
        assert_eq!(code, Some(0), "{name}: {t}");
        let f = hdf5::File::open(d.path().join(&out)).unwrap();
        for c in &comps {
            assert!(
                f.dataset(&format!("state/velocity_{c}")).is_ok(),
                "{name}: velocity_{c}"
            );
        }
        let rho = f.dataset("state/density").unwrap();
        let shape = rho.shape();
        assert_eq!(
            shape.len(),
            comps.len() - usize::from(name == "merid" || name == "rtheta")
        );
        let rho: Vec<f64> = rho.read_raw().unwrap();
        // The first cell (all axes at their first centre): point values.
        let (r, z) = common::first_cell_rz(&f);
        assert!(
            rel(rho[0], bg.at(&[r, z]).density) < 1e-13,
            "{name}: {} at ({r}, {z})",
            rho[0]
        );
    }
}

/// A slab in 2D and 3D boxes, along the chosen axis, and a sphere in a box;
/// refusals name the key at fault.
#[test]
fn issue7_slabs_and_spheres_in_boxes() {
    let d = tempfile::tempdir().unwrap();
    let slab = include_str!("../profiles/quiet-slab.json");
    let cases = [
        (with_grid(slab, r#"{ "x": { "from": 0, "to": 1, "cells": 3 }, "z": { "from": 0, "to": 8, "cells": 16 } }"#), 0),
        (with_grid(slab, r#"{ "x": { "from": 0, "to": 1, "cells": 3 }, "y": { "from": 0, "to": 1, "cells": 2 }, "z": { "from": 0, "to": 8, "cells": 16 } }"#), 0),
        (with_grid(slab, r#"{ "x": { "from": 0, "to": 8, "cells": 16 }, "y": { "from": 0, "to": 1, "cells": 3 } }"#).replace(r#""solve_for": "density","#, r#""solve_for": "density", "axis": "x","#), 0),
        (with_grid(slab, r#"{ "x": { "from": 0, "to": 8, "cells": 16 }, "y": { "from": 0, "to": 1, "cells": 3 } }"#).replace(r#""solve_for": "density","#, r#""solve_for": "density", "axis": "r","#), 2),
        (with_grid(slab, r#"{ "R": { "from": 1, "to": 8, "cells": 16 }, "z": { "from": 0, "to": 1, "cells": 3 } }"#), 2),
    ];
    for (i, (text, want)) in cases.iter().enumerate() {
        let path = d.path().join(format!("s{i}.json"));
        std::fs::write(&path, text).unwrap();
        let out = format!("s{i}.h5");
        let (code, t) = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", &out]);
        assert_eq!(code, Some(*want), "case {i}: {t}");
        if *want != 0 {
            assert!(
                t.contains("balance.axis") || t.contains("does not fit"),
                "case {i}: {t}"
            );
            assert!(!d.path().join(&out).exists());
            continue;
        }
        // Exponential atmosphere ρ ∝ e^(−z/H) along the slab axis, the same
        // in every column (Clarke & Carswell 2007, §3).
        let f = hdf5::File::open(d.path().join(&out)).unwrap();
        let rho = f.dataset("state/density").unwrap();
        let shape = rho.shape();
        let v: Vec<f64> = rho.read_raw().unwrap();
        let along = if i == 2 { 0 } else { shape.len() - 1 };
        let stride: usize = shape[along + 1..].iter().product();
        let last = v[(shape[along] - 1) * stride];
        assert!(
            last < v[0] * 1e-2,
            "case {i}: no stratification along axis {along}"
        );
        assert!(
            rel(
                v[v.len() - 1],
                v[(shape[along] - 1) * stride + (v.len() - 1) % stride]
            ) < 1e-15
                || along == 0
        );
    }
    // A midplane disk on a grid with height is refused with the shape to use.
    let disk = DISK.replace("stratified_disk", "disk");
    let path = d.path().join("mid.json");
    std::fs::write(&path, &disk).unwrap();
    let (code, t) = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", "mid.h5"]);
    assert_eq!(code, Some(2), "{t}");
    assert!(t.contains("stratified_disk"), "{t}");
    // A sound speed that varies with height is not the closed form.
    let warm = DISK.replace("cs2_0*(R/R0)^q\"", "cs2_0*(R/R0)^q*(1 + z^2)\"");
    let path = d.path().join("warm.json");
    std::fs::write(&path, &warm).unwrap();
    let (code, t) = stillpoint(d.path(), &["check", path.to_str().unwrap()]);
    assert_eq!(code, Some(2), "{t}");
    assert!(
        t.contains("gas.sound_speed_sq") && t.contains("height"),
        "{t}"
    );
}

/// h5py reads meridional files at two resolutions and recomputes the radial
/// and vertical balances from the file's own numbers: both converge at
/// second order (tests/vertical_check.py).
#[test]
fn issue7_h5py_recomputes_both_balances_at_second_order() {
    let d = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for (n, m) in [(40, 48), (80, 96)] {
        let grid = format!(
            r#"{{ "R": {{ "from": 0.5, "to": 2.5, "cells": {n} }}, "z": {{ "from": -0.15, "to": 0.15, "cells": {m} }} }}"#
        );
        let path = d.path().join(format!("m{n}.json"));
        std::fs::write(&path, with_grid(DISK, &grid)).unwrap();
        let out = format!("m{n}.h5");
        let (code, t) = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", &out]);
        assert_eq!(code, Some(0), "{t}");
        files.push(d.path().join(out));
    }
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/vertical_check.py");
    let o = Command::new("python3")
        .arg(script)
        .args(&files)
        .output()
        .expect("python3 with h5py and numpy is needed");
    let t = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{t}");
    assert!(o.status.success(), "{t}");
}

/// SymPy differentiates the closed forms `derive` prints and finds both
/// residuals zero (tests/vertical_sympy_check.py).
#[test]
fn issue7_sympy_finds_both_residuals_zero() {
    let d = tempfile::tempdir().unwrap();
    let path = d.path().join("disk.json");
    std::fs::write(&path, DISK).unwrap();
    let (code, t) = stillpoint(d.path(), &["derive", path.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{t}");
    let printed = d.path().join("derive.txt");
    std::fs::write(&printed, &t).unwrap();
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/vertical_sympy_check.py");
    // The parameters of DISK (h0 = 0.05: cs2_0 = 1/400).
    let o = Command::new("python3")
        .arg(script)
        .arg(&printed)
        .args([
            "G=1",
            "M=1",
            "R0=1",
            "rho0=1",
            "p=-3/2",
            "q=-1",
            "cs2_0=1/400",
        ])
        .output()
        .expect("python3 with sympy is needed");
    let t = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{t}");
    assert!(o.status.success(), "{t}");
}
