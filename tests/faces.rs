//! Values at cell faces and staggered velocity components (issue 8, part 2:
//! "face values (face centres or face quadrature nodes) and staggered
//! velocity components at faces"): `sampling.faces` and
//! `sampling.staggered_velocity` against closed forms at the face
//! positions, the shapes n + 1 along the axis the faces are normal to, the
//! layout attributes, independence of the slab size, and the XDMF
//! description leaving them out with a note.

mod common;

use std::path::Path;

use common::run;

/// Gauss–Legendre nodes on [−1, 1] for n = 2 and 3 (Abramowitz & Stegun
/// 1964, Table 25.4: ±1/√3; 0, ±√(3/5)).
fn legendre(n: usize) -> Vec<f64> {
    match n {
        2 => vec![-1.0 / 3f64.sqrt(), 1.0 / 3f64.sqrt()],
        3 => vec![-(0.6f64.sqrt()), 0.0, 0.6f64.sqrt()],
        _ => unreachable!(),
    }
}

fn build(dir: &Path, name: &str, text: &str, extra: &[&str]) -> hdf5::File {
    let path = dir.join(format!("{name}.json"));
    std::fs::write(&path, text).unwrap();
    let out = format!("{name}.h5");
    let mut args = vec!["build", path.to_str().unwrap(), "-o", &out];
    args.extend(extra);
    let (code, t) = run(dir, &args);
    assert_eq!(code, Some(0), "{t}");
    hdf5::File::open(dir.join(out)).unwrap()
}

fn read(f: &hdf5::File, name: &str) -> (Vec<usize>, Vec<f64>) {
    let d = f.dataset(name).unwrap_or_else(|e| panic!("{name}: {e}"));
    (d.shape(), d.read_raw::<f64>().unwrap())
}

fn attr(f: &hdf5::File, name: &str, key: &str) -> String {
    let a = f.dataset(name).unwrap().attr(key).unwrap();
    a.read_scalar::<hdf5::types::VarLenUnicode>()
        .unwrap()
        .to_string()
}

fn close(a: f64, b: f64, tol: f64, what: &str) {
    assert!(
        (a - b).abs() <= tol * b.abs().max(1e-300),
        "{what}: {a} vs {b} (relative {:e})",
        (a - b).abs() / b.abs()
    );
}

/// The isothermal layer under uniform gravity: P = P_base exp(−g z/c²),
/// ρ = P/c² (the isothermal atmosphere, e.g. Holton 2004, An Introduction
/// to Dynamic Meteorology, §1.6.2). Its density is integrated (to the
/// closure's tolerance, 1e-10 here is far above it).
const SLAB: &str = r#"{
  "name": "slab", "units": "code",
  "parameters": { "g0": 1.0, "cs2": 0.5, "P_base": 2.0 },
  "gravity": { "uniform": "g0" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2" },
  "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": 0, "value": "P_base" } },
  "grid": { "z": { "from": 0, "to": 4, "cells": 16 } },
  "sampling": { "rule": "average", "points": 4, "faces": "centres", "staggered_velocity": true },
  "output": { "file": "slab.h5" }
}"#;

#[test]
fn issue8_faces_of_the_isothermal_slab_are_the_barometric_law_at_the_edges() {
    let dir = tempfile::tempdir().unwrap();
    let f = build(dir.path(), "slab", SLAB, &[]);
    let (_, edges) = read(&f, "grid/z_edges");
    let (shape, rho) = read(&f, "faces_z/density");
    assert_eq!(shape, vec![17]);
    let (_, p) = read(&f, "faces_z/pressure");
    for (i, z) in edges.iter().enumerate() {
        let pz = 2.0 * (-z / 0.5).exp();
        close(p[i], pz, 1e-10, &format!("P at z = {z}"));
        close(rho[i], pz / 0.5, 1e-10, &format!("rho at z = {z}"));
    }
    // The cell fields keep their rule (averages, 16 cells).
    assert_eq!(read(&f, "background/density").0, vec![16]);
    let (shape, v) = read(&f, "staggered/velocity_z");
    assert_eq!(shape, vec![17]);
    assert!(v.iter().all(|v| v.abs() < 1e-300));
    assert_eq!(
        attr(&f, "faces_z/density", "placement"),
        "faces normal to z"
    );
    let s = attr(&f, "faces_z/density", "sampling");
    assert!(s.contains("centres of the faces normal to z"), "{s}");
    assert!(
        attr(&f, "background/density", "sampling").contains("cell averages"),
        "cell datasets keep the file's rule"
    );
    // The XDMF description leaves every face dataset out, with a note.
    let x = std::fs::read_to_string(dir.path().join("slab.xmf")).unwrap();
    assert!(x.contains(r#"<Attribute Name="density""#), "{x}");
    for name in ["faces_z_density", "staggered_velocity_z"] {
        assert!(!x.contains(&format!(r#"Attribute Name="{name}""#)), "{x}");
        assert!(
            x.contains(&format!("<!-- {name} (/")) && x.contains("is left out"),
            "{name}: {x}"
        );
    }
}

/// The power-law disk (vertically integrated): Σ = σ0 (R/R0)^(−p),
/// c² = h0² GM/R0 (R/R0)^(−q) and v_φ² = GM/R − (p + q)c² (Takeuchi & Lin
/// 2002, ApJ 581, 1344, eq. 7 in its vertically integrated form), g_R =
/// −GM/R².
fn powerlaw(grid: &str, sampling: &str, fields: &str) -> String {
    format!(
        r#"{{
  "name": "t", "units": "code",
  "parameters": {{ "M": 1.0, "R0": 1.0, "sigma0": 1.0, "p": 1.0, "q": 0.5, "h0": 0.1,
                  "cs2_0": "h0^2*G*M/R0" }},
  "gravity": {{ "point_mass": "M" }},
  "gas": {{ "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^(-q)" }},
  "balance": {{ "shape": "disk", "solve_for": "rotation", "density": "sigma0*(R/R0)^(-p)",
               "vertically_integrated": true }},
  "grid": {grid},
  "sampling": {sampling},
  "output": {{ {fields} }}
}}"#
    )
}

fn vphi(r: f64) -> f64 {
    (1.0 / r - 1.5 * 0.01 * r.powf(-0.5)).sqrt()
}

#[test]
fn issue8_face_nodes_of_the_power_law_disk_on_a_polar_grid() {
    let dir = tempfile::tempdir().unwrap();
    let grid = r#"{ "R": { "from": 0.5, "to": 2.5, "cells": 10, "spacing": "log" }, "phi": { "cells": 6 } }"#;
    let text = powerlaw(
        grid,
        r#"{ "rule": "average", "points": 3, "faces": "gauss-legendre-nodes", "face_points": 3,
             "staggered_velocity": true }"#,
        r#""fields": ["density", "velocity_R", "velocity_phi", "gravity_R"]"#,
    );
    let f = build(dir.path(), "polar", &text, &[]);
    let (_, re) = read(&f, "grid/R_edges");
    let (_, pe) = read(&f, "grid/phi_edges");
    let x = legendre(3);
    // Faces normal to R: (R edge i, phi cell j, phi node k).
    let (shape, v) = read(&f, "faces_R/velocity_phi");
    assert_eq!(shape, vec![11, 6, 3]);
    let (_, rho) = read(&f, "faces_R/density");
    let (_, g) = read(&f, "faces_R/gravity_R");
    assert_eq!(re.len(), 11);
    for (i, r) in re.iter().enumerate() {
        for jk in 0..18 {
            let k = i * 18 + jk;
            close(v[k], vphi(*r), 1e-13, "faces_R v_phi");
            close(rho[k], 1.0 / r, 1e-14, "faces_R Sigma");
            close(g[k], -1.0 / (r * r), 1e-14, "faces_R g_R");
        }
    }
    // Faces normal to phi: (R cell i, phi edge j, R node k) at R = mid +
    // half x_k.
    let (shape, rho) = read(&f, "faces_phi/density");
    assert_eq!(shape, vec![10, 7, 3]);
    let (_, v) = read(&f, "faces_phi/velocity_phi");
    for i in 0..10 {
        let (mid, half) = (0.5 * (re[i] + re[i + 1]), 0.5 * (re[i + 1] - re[i]));
        for j in 0..7 {
            for (k, xk) in x.iter().enumerate() {
                let r = mid + half * xk;
                let at = (i * 7 + j) * 3 + k;
                close(rho[at], 1.0 / r, 1e-14, "faces_phi Sigma");
                close(v[at], vphi(r), 1e-13, "faces_phi v_phi");
            }
        }
    }
    // output.fields chooses the face fields too; the staggered group is
    // chosen by its own key.
    assert!(f.dataset("faces_R/pressure").is_err());
    assert!(f.dataset("background/pressure").is_err());
    let (shape, vr) = read(&f, "staggered/velocity_R");
    assert_eq!(shape, vec![11, 6]);
    assert!(vr.iter().all(|v| v.abs() < 1e-300));
    let (shape, vp) = read(&f, "staggered/velocity_phi");
    assert_eq!(shape, vec![10, 7]);
    for i in 0..10 {
        let rc = 0.5 * (re[i] + re[i + 1]);
        for j in 0..7 {
            close(vp[i * 7 + j], vphi(rc), 1e-13, "staggered v_phi");
        }
    }
    assert_eq!(pe.len(), 7);
    assert_eq!(
        attr(&f, "faces_phi/density", "placement"),
        "faces normal to phi, 3 values each"
    );
    let s = attr(&f, "faces_R/density", "sampling");
    assert!(
        s.contains("3 Gauss–Legendre nodes per axis of each face normal to R"),
        "{s}"
    );
    // The same file for any slab size and thread count.
    let g = build(
        dir.path(),
        "polar",
        &text,
        &["--force", "--slab-rows", "3", "--threads", "1"],
    );
    for name in [
        "faces_R/velocity_phi",
        "faces_phi/density",
        "staggered/velocity_phi",
    ] {
        let (a, b) = (read(&f, name).1, read(&g, name).1);
        assert!(
            a.iter().zip(&b).all(|(a, b)| a.to_bits() == b.to_bits()),
            "{name}"
        );
    }
}

#[test]
fn issue8_staggered_components_on_a_cartesian_grid_are_the_point_values_at_the_faces() {
    let dir = tempfile::tempdir().unwrap();
    let grid = r#"{ "x": { "from": 0.6, "to": 2.0, "cells": 7 }, "y": { "from": -1.0, "to": 1.0, "cells": 5 } }"#;
    let text = powerlaw(
        grid,
        r#"{ "rule": "center", "faces": "centres", "staggered_velocity": true }"#,
        r#""file": "box.h5""#,
    );
    let f = build(dir.path(), "box", &text, &[]);
    let (_, xe) = read(&f, "grid/x_edges");
    let (_, ye) = read(&f, "grid/y_edges");
    let (_, xc) = read(&f, "grid/x_centers");
    let (_, yc) = read(&f, "grid/y_centers");
    // v = v_φ e_φ: v_x = −v_φ y/R, v_y = v_φ x/R.
    let (shape, vx) = read(&f, "staggered/velocity_x");
    assert_eq!(shape, vec![8, 5]);
    for i in 0..8 {
        for j in 0..5 {
            let (x, y) = (xe[i], yc[j]);
            let r = x.hypot(y);
            let want = -vphi(r) * y / r;
            assert!(
                (vx[i * 5 + j] - want).abs() < 1e-13 * vphi(r),
                "v_x at ({x}, {y})"
            );
        }
    }
    let (shape, vy) = read(&f, "staggered/velocity_y");
    assert_eq!(shape, vec![7, 6]);
    for i in 0..7 {
        for j in 0..6 {
            let (x, y) = (xc[i], ye[j]);
            let r = x.hypot(y);
            let want = vphi(r) * x / r;
            assert!(
                (vy[i * 6 + j] - want).abs() < 1e-13 * vphi(r),
                "v_y at ({x}, {y})"
            );
        }
    }
    // The staggered component is the face value of that component, to the
    // bit.
    for (st, fa) in [
        ("staggered/velocity_x", "faces_x/velocity_x"),
        ("staggered/velocity_y", "faces_y/velocity_y"),
    ] {
        let (a, b) = (read(&f, st).1, read(&f, fa).1);
        assert_eq!(a.len(), b.len());
        assert!(
            a.iter().zip(&b).all(|(a, b)| a.to_bits() == b.to_bits()),
            "{st}"
        );
    }
}

/// The vertically isothermal disk: ρ = ρ0 (R/R0)^p exp(−(Φ(R, z) −
/// Φ(R, 0))/c²(R)), Φ = −GM/√(R² + z²), c² = h0² GM/R0 (R/R0)^q (Nelson,
/// Gressel & Umurhan 2013, MNRAS 435, 2610, section 2).
#[test]
fn issue8_face_nodes_of_a_stratified_disk_on_a_cylindrical_grid() {
    let dir = tempfile::tempdir().unwrap();
    let text = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "rho0": 1.0, "p": -1.5, "q": -1.0, "h0": 0.05,
                  "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^q" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "rho0*(R/R0)^p" },
  "grid": { "R": { "from": 0.8, "to": 1.6, "cells": 4 }, "phi": { "from": 0, "to": 0.5, "cells": 3 },
            "z": { "from": -0.08, "to": 0.1, "cells": 5 } },
  "sampling": { "rule": "gauss-lobatto-nodes", "points": 3, "faces": "gauss-legendre-nodes",
                "face_points": 2 },
  "output": { "fields": ["density"] }
}"#;
    let f = build(dir.path(), "strat", text, &[]);
    let rho = |r: f64, z: f64| {
        let c2 = 0.0025 * r.powi(-1);
        r.powf(-1.5) * ((1.0 / (r * r + z * z).sqrt() - 1.0 / r) / c2).exp()
    };
    let (_, re) = read(&f, "grid/R_edges");
    let (_, ze) = read(&f, "grid/z_edges");
    let x = legendre(2);
    let node =
        |e: &[f64], i: usize, k: usize| 0.5 * (e[i] + e[i + 1]) + 0.5 * (e[i + 1] - e[i]) * x[k];
    // Faces normal to z: (R cell, phi cell, z edge, R node, phi node).
    let (shape, d) = read(&f, "faces_z/density");
    assert_eq!(shape, vec![4, 3, 6, 2, 2]);
    for (at, v) in d.iter().enumerate() {
        let kr = (at / 2) % 2;
        let iz = (at / 4) % 6;
        let ir = at / (4 * 6 * 3);
        close(*v, rho(node(&re, ir, kr), ze[iz]), 1e-13, "faces_z rho");
    }
    // Faces normal to R: (R edge, phi cell, z cell, phi node, z node).
    let (shape, d) = read(&f, "faces_R/density");
    assert_eq!(shape, vec![5, 3, 5, 2, 2]);
    for (at, v) in d.iter().enumerate() {
        let kz = at % 2;
        let iz = (at / 4) % 5;
        let ir = at / (4 * 5 * 3);
        close(*v, rho(re[ir], node(&ze, iz, kz)), 1e-13, "faces_R rho");
    }
    assert_eq!(read(&f, "faces_phi/density").0, vec![4, 4, 5, 2, 2]);
    // The cells keep their own rule (3 Lobatto nodes per axis).
    assert_eq!(read(&f, "background/density").0, vec![4, 3, 5, 3, 3, 3]);
}

#[test]
fn issue8_a_perturbed_build_writes_the_background_at_faces() {
    // A pulse on the slab: /state differs from /background, the faces
    // hold the background (their attribute says so).
    let dir = tempfile::tempdir().unwrap();
    let text = SLAB.replace(
        r#""output""#,
        r#""perturbations": [ { "kind": "pulse", "field": "pressure", "amplitude": 0.1,
             "relative_to": "value", "keep": "entropy", "centre": { "z": 2 },
             "width": { "z": 0.3 } } ], "output""#,
    );
    let text = text.replace(
        r#""output": { "file": "slab.h5" }"#,
        r#""output": { "file": "slab.h5", "fields": ["density", "pressure", "gravity_z", "mach_number"] }"#,
    );
    let f = build(dir.path(), "pulsed", &text, &[]);
    assert!(f.group("perturbation").is_ok());
    // The fields on request are the background's (issue 8 part 2): in
    // /background with an attribute saying so, not in /state.
    for name in ["gravity_z", "mach_number"] {
        let about = attr(&f, &format!("background/{name}"), "about");
        assert!(
            about.contains("of the background (the equilibrium) only"),
            "{about}"
        );
        assert!(
            f.dataset(&format!("state/{name}")).is_err(),
            "{name} in /state"
        );
    }
    let (_, g) = read(&f, "background/gravity_z");
    assert!(g.iter().all(|g| (g + 1.0).abs() < 1e-14), "g = -g0");
    let (_, g) = read(&f, "faces_z/gravity_z");
    assert_eq!(g.len(), 17);
    assert!(
        g.iter().all(|g| (g + 1.0).abs() < 1e-14),
        "g = -g0 at the faces"
    );
    assert!(f.dataset("state/density").is_ok());
    let (_, face) = read(&f, "faces_z/density");
    let (_, edges) = read(&f, "grid/z_edges");
    for (i, z) in edges.iter().enumerate() {
        close(
            face[i],
            4.0 * (-z / 0.5).exp(),
            1e-10,
            "background at the face",
        );
    }
    assert!(attr(&f, "faces_z/density", "sampling").contains("no perturbation"));
}

/// The same disk on a meridional spherical grid [r, theta]: R = r sin θ,
/// z = r cos θ; and v_φ² = (GM/R)((p + q) h0² + 1 + q − qR/√(R² + z²))
/// (Nelson, Gressel & Umurhan 2013, their eq. 13, from memory; here q = −1
/// and c²/v_K² = h0² everywhere).
#[test]
fn issue8_faces_on_a_spherical_grid() {
    let dir = tempfile::tempdir().unwrap();
    let text = r#"{
  "name": "t", "units": "code",
  "parameters": { "M": 1.0, "R0": 1.0, "rho0": 1.0, "p": -1.5, "q": -1.0, "h0": 0.05,
                  "cs2_0": "h0^2*G*M/R0" },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0*(R/R0)^q" },
  "balance": { "shape": "stratified_disk", "solve_for": "rotation", "density": "rho0*(R/R0)^p" },
  "grid": { "r": { "from": 0.7, "to": 1.5, "cells": 6, "spacing": "log" },
            "theta": { "from": "pi/2 - 0.1", "to": "pi/2 + 0.12", "cells": 5 } },
  "sampling": { "rule": "average", "points": 2, "faces": "centres", "staggered_velocity": true }
}"#;
    let f = build(dir.path(), "sph", text, &[]);
    let (_, re) = read(&f, "grid/r_edges");
    let (_, te) = read(&f, "grid/theta_edges");
    let (_, rc) = read(&f, "grid/r_centers");
    let (_, tc) = read(&f, "grid/theta_centers");
    let state = |r: f64, t: f64| {
        let (cr, z) = (r * t.sin(), r * t.cos());
        let c2 = 0.0025 / cr;
        let rho = cr.powf(-1.5) * ((1.0 / (cr * cr + z * z).sqrt() - 1.0 / cr) / c2).exp();
        let v = (1.0 / cr * (-2.5 * 0.0025 + cr / (cr * cr + z * z).sqrt())).sqrt();
        (rho, v)
    };
    let (shape, d) = read(&f, "faces_theta/density");
    assert_eq!(shape, vec![6, 6]);
    let (_, v) = read(&f, "faces_theta/velocity_phi");
    for i in 0..6 {
        for j in 0..6 {
            let (rho, vp) = state(rc[i], te[j]);
            close(d[i * 6 + j], rho, 1e-13, "faces_theta rho");
            close(v[i * 6 + j], vp, 1e-12, "faces_theta v_phi");
        }
    }
    let (shape, d) = read(&f, "faces_r/density");
    assert_eq!(shape, vec![7, 5]);
    for i in 0..7 {
        for j in 0..5 {
            close(d[i * 5 + j], state(re[i], tc[j]).0, 1e-13, "faces_r rho");
        }
    }
    // A meridional grid carries v_phi as a third component; the staggered
    // group holds the components along the grid's axes, both zero here.
    for (name, shape) in [
        ("staggered/velocity_r", vec![7, 5]),
        ("staggered/velocity_theta", vec![6, 6]),
    ] {
        let (s, v) = read(&f, name);
        assert_eq!(s, shape, "{name}");
        assert!(v.iter().all(|v| v.abs() < 1e-300), "{name}");
    }
    assert!(f.dataset("staggered/velocity_phi").is_err());
}
