//! Disks whose temperature varies with height (issue 7, part 3) and disks
//! normalised to a surface density (part 4), against outside references
//! (each named beside its check).

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use stillpoint::background::Background;
use stillpoint::check::{self, Verdict};
use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"))
}

/// A warm surface layer over a cool midplane: c² rises by A across
/// |z| = zt H (H = h0 R) over a width dzt H. Invented numbers.
const WARM: &str = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "rho0": 1.0, "p": -1.5, "q": -1.0, "h0": 0.05,
                  "cs2_0": "h0^2*G*M/R0", "A": 4.0, "zt": 3.0, "dzt": 0.3 },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^q*(1 + (A - 1)*0.5*(1 + tanh((abs(z)/(h0*R) - zt)/dzt)))" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "vertical": "quadrature",
               "density": "rho0*(R/R0)^p" },
  "sampling": { "rule": "center" },
  "grid": { "R": { "from": 0.5, "to": 2.5, "cells": 40 }, "z": { "from": -0.3, "to": 0.3, "cells": 24 } }
}"#;

/// The parameters of WARM for the Python checks.
const WARM_ARGS: [&str; 9] = [
    "M=1", "h0=0.05", "p=-1.5", "q=-1", "A=4", "zt=3", "dzt=0.3", "rho0=1", "R0=1",
];

fn stillpoint(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    common::run(dir, args)
}

fn python(script: &str, args: &[&str]) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join(script);
    let o = Command::new("python3")
        .arg(path)
        .args(args)
        .output()
        .expect("python3 with h5py, numpy and mpmath is needed");
    let t = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    eprintln!("{t}");
    assert!(o.status.success(), "{script}: {t}");
    t
}

fn with_grid(profile: &str, grid: &str) -> String {
    let start = profile.find(r#""grid": {"#).unwrap();
    format!("{}\"grid\": {grid}\n}}", &profile[..start])
}

fn build(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(format!("{name}.json"));
    std::fs::write(&path, text).unwrap();
    let out = format!("{name}.h5");
    let (code, t) = stillpoint(dir, &["build", path.to_str().unwrap(), "-o", &out]);
    assert_eq!(code, Some(0), "{name}: {t}");
    dir.join(out)
}

/// ρ and v_φ of the written file against mpmath at 30 digits (mpmath.quad
/// for the column, mpmath.diff for ∂P/∂R; tests/column_check.py) at
/// scattered cells, some high in the surface layer: relative error ≤ 1e-10.
#[test]
fn issue7_warm_layer_matches_mpmath() {
    let d = tempfile::tempdir().unwrap();
    let file = build(d.path(), "warm", WARM);
    let mut args = vec![file.to_str().unwrap()];
    args.extend(WARM_ARGS);
    python("column_check.py", &args);
}

/// `check` finds both balances zero to tolerance against its own
/// independent reference, `derive` prints the integrand and its exact
/// R-derivative, and block and point paths agree to the bit.
#[test]
fn issue7_warm_layer_checks_and_derives() {
    let l = load(WARM);
    let (bg, domain) = pipeline::solve(&l).unwrap();
    let c = pipeline::centres_for(&l.grid, l.model.shape.frame());
    let report = check::run(&l.model, &bg, &domain, &c, 1e-10).unwrap();
    match report.verdict {
        Verdict::ZeroToTolerance { max, .. } => assert!(max < 1e-12, "{max}"),
        v => panic!("{v:?}"),
    }
    let text = report.to_string();
    assert!(
        text.contains("vertical") && text.contains("radial"),
        "{text}"
    );
    let d = tempfile::tempdir().unwrap();
    let path = d.path().join("warm.json");
    std::fs::write(&path, WARM).unwrap();
    let (code, t) = stillpoint(d.path(), &["derive", path.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{t}");
    assert!(
        t.contains("dPhi/dz / c^2 = ") && t.contains("d/dR (dPhi/dz / c^2) = "),
        "{t}"
    );
    // The midplane: L = 0, so ρ = ρ_mid exactly as the law gives it.
    let st = bg.at(&[1.3, 0.0]);
    assert!((st.density - 1.3f64.powf(-1.5)).abs() < 1e-15 * st.density);
    // Block path against point path, to the bit.
    let rs: Vec<f64> = (0..100).map(|i| 0.55 + 0.0194 * i as f64).collect();
    let zs: Vec<f64> = (0..100).map(|i| -0.29 + 0.0058 * i as f64).collect();
    let mut ws = bg.workspace();
    let mut block = stillpoint::background::StateBlock::new();
    bg.eval(
        &[&rs, &zs],
        stillpoint::background::Want {
            accelerations: true,
        },
        &mut block,
        &mut ws,
    );
    for i in 0..rs.len() {
        let st = bg.at(&[rs[i], zs[i]]);
        assert_eq!(st.density.to_bits(), block.density[i].to_bits(), "{i}");
        assert_eq!(
            st.velocity[1].to_bits(),
            block.velocity[1][i].to_bits(),
            "{i}"
        );
    }
}

/// Every geometry the stratified disk supports, with every sampling rule,
/// builds and checks; a cell-centre value is ρ(R, z) of that centre.
#[test]
fn issue7_warm_layer_on_every_geometry_and_rule() {
    let d = tempfile::tempdir().unwrap();
    let grids = [
        (
            "merid",
            r#"{ "R": { "from": 0.5, "to": 2, "cells": 8 }, "z": { "from": -0.2, "to": 0.2, "cells": 6 } }"#,
        ),
        (
            "rtheta",
            r#"{ "r": { "from": 0.5, "to": 2, "cells": 8 }, "theta": { "from": 1.4, "to": 1.7, "cells": 6 } }"#,
        ),
        (
            "cyl",
            r#"{ "R": { "from": 0.5, "to": 2, "cells": 6 }, "phi": { "cells": 4 }, "z": { "from": -0.2, "to": 0.2, "cells": 4 } }"#,
        ),
        (
            "sph",
            r#"{ "r": { "from": 0.5, "to": 2, "cells": 6 }, "theta": { "from": 1.4, "to": 1.7, "cells": 4 }, "phi": { "cells": 4 } }"#,
        ),
        (
            "box",
            r#"{ "x": { "from": 0.5, "to": 2, "cells": 6 }, "y": { "from": 0.5, "to": 2, "cells": 5 }, "z": { "from": -0.2, "to": 0.2, "cells": 4 } }"#,
        ),
    ];
    let rules = [
        r#"{ "rule": "center" }"#,
        r#"{ "rule": "average", "points": 3 }"#,
        r#"{ "rule": "gauss-legendre-nodes", "points": 2 }"#,
        r#"{ "rule": "gauss-lobatto-nodes", "points": 3 }"#,
        r#"{ "rule": "legendre-modes", "modes": 2, "points": 3 }"#,
    ];
    let l = load(WARM);
    let (bg, _) = pipeline::solve(&l).unwrap();
    for (name, grid) in grids {
        for (k, rule) in rules.iter().enumerate() {
            let text = with_grid(WARM, grid).replace(r#"{ "rule": "center" }"#, rule);
            let path = d.path().join(format!("{name}{k}.json"));
            std::fs::write(&path, &text).unwrap();
            let (code, t) = stillpoint(d.path(), &["check", path.to_str().unwrap()]);
            assert_eq!(code, Some(0), "{name} {rule}: {t}");
            let out = format!("{name}{k}.h5");
            let (code, t) = stillpoint(d.path(), &["build", path.to_str().unwrap(), "-o", &out]);
            assert_eq!(code, Some(0), "{name} {rule}: {t}");
            if k != 0 {
                continue;
            }
            let f = hdf5::File::open(d.path().join(&out)).unwrap();
            let rho: Vec<f64> = f.dataset("state/density").unwrap().read_raw().unwrap();
            let (r, z) = common::first_cell_rz(&f);
            let want = bg.at(&[r, z]).density;
            assert!(
                (rho[0] - want).abs() < 1e-13 * want,
                "{name}: {} vs {want} at ({r}, {z})",
                rho[0]
            );
        }
    }
}

/// h5py recomputes both balances from two meridional files of the warm
/// layer, through the layer (|z| ≤ 0.25): second order
/// (tests/vertical_check.py).
#[test]
fn issue7_warm_layer_balances_converge_at_second_order() {
    let d = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for (n, m) in [(40, 96), (80, 192)] {
        let grid = format!(
            r#"{{ "R": {{ "from": 0.5, "to": 2.5, "cells": {n} }}, "z": {{ "from": -0.3, "to": 0.3, "cells": {m} }} }}"#
        );
        files.push(build(d.path(), &format!("m{n}"), &with_grid(WARM, &grid)));
    }
    let f: Vec<&str> = files.iter().map(|p| p.to_str().unwrap()).collect();
    python("vertical_check.py", &[f[0], f[1], "0.25"]);
}

/// WARM normalised to Σ = Σ0 (R/R0)^(−1) instead of its midplane density.
fn surface(extent: &str) -> String {
    WARM.replace(
        r#""density": "rho0*(R/R0)^p""#,
        &format!(r#""surface_density": "sigma0*(R/R0)^(-1)", "column": "{extent}""#),
    )
    .replace(r#""dzt": 0.3 }"#, r#""dzt": 0.3, "sigma0": 0.002 }"#)
}

/// The isothermal thin-disk limit: ρ_mid → Σ/(√(2π) H), H = c/Ω_K (the
/// Gaussian vertical profile of a thin disk; Armitage 2010, "Astrophysics of
/// Planet Formation", §2 on vertical structure, from memory). The full
/// point-mass potential adds, for H/R = h, ρ_mid √(2π) H/Σ = 1 − (9/8) h² +
/// O(h⁴) (from ln(ρ/ρ_mid) = −u²/2 + 3h²u⁴/8 + …, u = z/H, and the
/// Gaussian moment ⟨u⁴⟩ = 3; derived here, not from a source).
#[test]
fn issue7_surface_density_has_the_thin_disk_limit() {
    let iso = surface("infinity")
        .replace(
            "*(1 + (A - 1)*0.5*(1 + tanh((abs(z)/(h0*R) - zt)/dzt)))",
            "",
        )
        .replace(r#""vertical": "quadrature","#, "");
    let mut last = f64::INFINITY;
    for h in [0.1f64, 0.05, 0.025] {
        let text = iso.replace(r#""h0": 0.05"#, &format!(r#""h0": {h}"#));
        let l = load(&text);
        let (bg, _) = pipeline::solve(&l).unwrap();
        for r in [0.7f64, 1.0, 2.0] {
            let sigma = 0.002 / r;
            let big_h = h * r;
            let ratio =
                bg.at(&[r, 0.0]).density * (2.0 * std::f64::consts::PI).sqrt() * big_h / sigma;
            let dev = (ratio - (1.0 - 9.0 / 8.0 * h * h)).abs();
            assert!(dev < 3.0 * h.powi(4), "h {h}, R {r}: {ratio}, {dev:e}");
            assert!((1.0 - ratio) < last, "h {h}: {ratio}");
            if r == 2.0 {
                last = 1.0 - ratio;
            }
        }
    }
}

/// The written density of a disk normalised over the grid's heights,
/// integrated over each column by h5py, recovers Σ(R) at the order of the
/// midpoint rule (tests/surface_check.py); `check` reports the thin-disk
/// ratio and passes; to infinity it passes too.
#[test]
fn issue7_surface_density_column_recovers_sigma() {
    let d = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for m in [24, 48] {
        let grid = format!(
            r#"{{ "R": {{ "from": 0.5, "to": 2.5, "cells": 12 }}, "z": {{ "from": -0.3, "to": 0.3, "cells": {m} }} }}"#
        );
        files.push(build(
            d.path(),
            &format!("s{m}"),
            &with_grid(&surface("grid"), &grid),
        ));
    }
    let f: Vec<&str> = files.iter().map(|p| p.to_str().unwrap()).collect();
    python("surface_check.py", &[f[0], f[1], "0.002", "1", "-1"]);
    for extent in ["grid", "infinity"] {
        let path = d.path().join(format!("{extent}.json"));
        std::fs::write(&path, surface(extent)).unwrap();
        let (code, t) = stillpoint(d.path(), &["check", path.to_str().unwrap()]);
        assert_eq!(code, Some(0), "{extent}: {t}");
        assert!(
            t.contains("thin disk") && t.contains("rho_mid / (Sigma/(sqrt(2 pi) H))"),
            "{t}"
        );
    }
    // Both laws, or a surface density without its extent, are refused.
    let both = surface("grid").replace(
        r#""surface_density""#,
        r#""density": "rho0*(R/R0)^p", "surface_density""#,
    );
    let no_extent = surface("grid").replace(r#", "column": "grid""#, "");
    for (name, text, key) in [
        ("both", both, "surface_density"),
        ("none", no_extent, "balance.column"),
    ] {
        let path = d.path().join(format!("{name}.json"));
        std::fs::write(&path, text).unwrap();
        let (code, t) = stillpoint(d.path(), &["check", path.to_str().unwrap()]);
        assert_eq!(code, Some(2), "{name}: {t}");
        assert!(t.contains(key), "{name}: {t}");
    }
}

/// A density falling so steeply that pressure outweighs gravity has no
/// rotation (v_φ² < 0): `build` stops, names where, and writes nothing.
#[test]
fn issue7_column_without_rotation_is_refused() {
    let d = tempfile::tempdir().unwrap();
    let text = WARM.replace("rho0*(R/R0)^p", "rho0*(R/R0)^(-500)");
    let path = d.path().join("steep.json");
    std::fs::write(&path, text).unwrap();
    let (code, t) = stillpoint(
        d.path(),
        &["build", path.to_str().unwrap(), "-o", "steep.h5"],
    );
    assert_eq!(code, Some(2), "{t}");
    assert!(t.contains("v_phi^2 < 0") && t.contains("(R, z) = ("), "{t}");
    assert!(!d.path().join("steep.h5").exists());
}

/// ∂v_φ²/∂R of the column closure (the second R-derivative of the integrand
/// under the integral sign, `closure::curvature`) at points in and above
/// the warm layer: v_φ² agrees with the background's, and κ² with mpmath
/// at 30 digits (tests/curvature_check.py, mpmath.quad + mpmath.diff) to
/// 1e-10; `check` lists κ² and both Solberg–Høiland criteria, all stable.
#[test]
fn issue7_column_kappa_matches_mpmath() {
    let l = load(WARM);
    let (bg, domain) = pipeline::solve(&l).unwrap();
    let lines = curvature_lines(&l, &bg, &domain);
    let d = tempfile::tempdir().unwrap();
    let pts = d.path().join("points.txt");
    std::fs::write(&pts, lines).unwrap();
    let mut args = vec![pts.to_str().unwrap(), "warm"];
    args.extend(WARM_ARGS);
    python("curvature_check.py", &args);
    let c = pipeline::centres_for(&l.grid, l.model.shape.frame());
    let report = check::run(&l.model, &bg, &domain, &c, 1e-10).unwrap();
    let sec = stillpoint::criteria::section(&l.model, &bg, &domain, Some(&l.grid)).unwrap();
    for name in ["kappa^2", "SH 1", "SH 2", "N_z^2"] {
        let dg = sec.get(name).unwrap_or_else(|| panic!("{name}: {sec}"));
        assert!(dg.fails.is_none() && dg.min.0 > 0.0, "{name}: {sec}");
    }
    assert!(!report.to_string().contains("not available"), "{report}");
}

/// "v2r R z value" lines of `Curvature` at points in and above the layer,
/// after checking its v_φ² against the background's.
fn curvature_lines(
    l: &Loaded,
    bg: &dyn Background,
    domain: &stillpoint::closure::Domain,
) -> String {
    use stillpoint::closure::curvature::Curvature;
    let laws = stillpoint::closure::Laws::build(&l.model).unwrap();
    let cl = laws.column.as_ref().unwrap();
    let c2 = laws.sound_speed_sq.as_ref().unwrap();
    let curv = Curvature::new(&l.model, cl, c2, domain).unwrap();
    let mut ws = stillpoint::formula::Workspace::new();
    let mut out = String::new();
    for r in [0.6f64, 1.0, 1.7, 2.4] {
        let ints = curv.column_integrals(r, &mut ws).unwrap();
        for u in [0.0f64, 1.5, 3.0, 4.5] {
            let z = u * 0.05 * r;
            let c = curv.at(r, z, ints, &mut ws);
            let v2 = bg.at(&[r, z]).rotation().powi(2);
            assert!(
                (c.v2 / v2 - 1.0).abs() < 1e-11,
                "R {r} z {z}: {} {v2}",
                c.v2
            );
            out.push_str(&format!("v2r {r:e} {z:e} {:.17e}\n", c.v2_r));
        }
    }
    out
}

/// Toomre's Q at the midplane of a vertically isothermal disk normalised
/// to Σ over the grid's heights: against mpmath (Q = c κ/(π G Σ), Toomre
/// 1964, ApJ 139, 1217; tests/curvature_check.py) to 1e-10 at the
/// section's extremes and at four radii, and against the closed form of a
/// Keplerian disk, κ = Ω_K, Q_K = c Ω_K/(π G Σ), to the pressure
/// correction O(h²) (common practice, no source for the bound).
#[test]
fn issue7_toomre_q_of_a_stratified_disk_matches_mpmath() {
    let text = surface("grid")
        .replace(
            "*(1 + (A - 1)*0.5*(1 + tanh((abs(z)/(h0*R) - zt)/dzt)))",
            "",
        )
        .replace(r#""vertical": "quadrature","#, "");
    let l = load(&text);
    let (bg, domain) = pipeline::solve(&l).unwrap();
    let sec = stillpoint::criteria::section(&l.model, &bg, &domain, Some(&l.grid)).unwrap();
    let q = sec.get("Toomre Q").unwrap_or_else(|| panic!("{sec}"));
    assert!(q.fails.is_none(), "{sec}");
    let mut lines = String::new();
    for (v, at) in [&q.min, &q.max] {
        lines.push_str(&format!("Q {:e} {:.17e}\n", at[0], v));
        // Keplerian closed form: c = h0 (G M/R)^1/2 ... here c^2 = h0^2/R
        // (G = M = R0 = 1), Ω_K = R^-3/2, Σ = 0.002/R.
        let r = at[0];
        let qk = (0.05f64.powi(2) / r).sqrt() * r.powf(-1.5) / (std::f64::consts::PI * 0.002 / r);
        let dev = (v / qk - 1.0).abs();
        assert!(
            dev < 5.0 * 0.05f64.powi(2) && dev > 1e-6,
            "R {r}: Q {v}, Q_K {qk}"
        );
    }
    // Four radii straight from the curvature (the section's own path).
    use stillpoint::closure::curvature::Curvature;
    let laws = stillpoint::closure::Laws::build(&l.model).unwrap();
    let curv = Curvature::new(
        &l.model,
        laws.column.as_ref().unwrap(),
        laws.sound_speed_sq.as_ref().unwrap(),
        &domain,
    )
    .unwrap();
    assert!(curv.has_surface());
    let mut ws = stillpoint::formula::Workspace::new();
    for r in [0.6f64, 1.0, 1.7, 2.4] {
        let ints = curv.column_integrals(r, &mut ws).unwrap();
        let c = curv.at(r, 0.0, ints, &mut ws);
        let v2 = bg.at(&[r, 0.0]).rotation().powi(2);
        assert!((c.v2 / v2 - 1.0).abs() < 1e-11, "R {r}: {} {v2}", c.v2);
        let kappa = ((2.0 * c.v2 + r * c.v2_r) / (r * r)).sqrt();
        let qv = (0.05f64.powi(2) / r).sqrt() * kappa / (std::f64::consts::PI * 0.002 / r);
        lines.push_str(&format!("Q {r:e} {qv:.17e}\n"));
        for u in [1.0f64, 2.5] {
            let z = u * 0.05 * r;
            let c = curv.at(r, z, ints, &mut ws);
            lines.push_str(&format!("v2r {r:e} {z:e} {:.17e}\n", c.v2_r));
        }
    }
    let d = tempfile::tempdir().unwrap();
    let pts = d.path().join("points.txt");
    std::fs::write(&pts, lines).unwrap();
    python(
        "curvature_check.py",
        &[
            pts.to_str().unwrap(),
            "sigma",
            "M=1",
            "h0=0.05",
            "q=-1",
            "sigma0=0.002",
            "zmax=0.3",
            "R0=1",
        ],
    );
}
