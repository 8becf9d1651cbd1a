//! Sampling for high-order schemes against closed forms: cell averages of a
//! piecewise law split at its switch point, and averages to a requested
//! tolerance. These drive the library (profile → closure → background →
//! sampler) as the command line does.

use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, std::path::Path::new("."), &[])
        .unwrap_or_else(|e| panic!("{e}"))
}

/// A Gresho-type vortex on a polar grid: solid-body core, 1/R outer flow,
/// uniform density, and its pressure in closed form given as ρ c² (so the
/// rotation is solved for, v_φ² = R P′/ρ, exactly). The switch at R = a =
/// 0.25 lies inside cell 2 (edges 0.145 … 0.24 … 0.335). `SAMPLING` and
/// `GRID` are replaced by each test.
const VORTEX: &str = r#"{
  "name": "kinked-vortex", "units": "code",
  "parameters": { "rho0": 1.0, "Omega0": 1.0, "a": 0.25, "P_center": 1.0 },
  "gravity": { "potential": "0" },
  "gas": {
    "gamma": 1.4,
    "sound_speed_sq": "(P_center + rho0*Omega0^2*R^2/2 if R < a else P_center + rho0*Omega0^2*a^2 - rho0*Omega0^2*a^4/(2*R^2))/rho0"
  },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "rho0" },
  "grid": GRID,
  "sampling": SAMPLING
}"#;

const POLAR: &str = r#"{
    "R": { "from": 0.05, "to": 1.0, "cells": 10 },
    "phi": { "from": 0, "to": 6.283185307179586, "cells": 4 }
  }"#;

fn vortex(grid: &str, sampling: &str) -> Loaded {
    let text = VORTEX.replace("GRID", grid).replace("SAMPLING", sampling);
    load(&text)
}

/// The closed-form cell averages ⟨P⟩ and ⟨ρ v_φ⟩ over [r1, r2] with the
/// polar volume element R dR. From the radial balance dP/dR = ρ v_φ²/R
/// (Gresho & Chan 1990, Int. J. Numer. Meth. Fluids 11, 621, the vortex's
/// pressure, written from memory and re-derived here): inside R < a,
/// P = P_c + k R²/2; outside, P = P_c + k a² − k a⁴/(2R²), k = ρ Ω². Their
/// antiderivatives with weight R: P_c R²/2 + k R⁴/8 and
/// (P_c + k a²) R²/2 − (k a⁴/2) ln R; ρ v_φ R: ρΩR³/3 and ρΩa²R.
fn vortex_averages(r1: f64, r2: f64) -> (f64, f64) {
    let (pc, k, a, om) = (1.0, 1.0, 0.25f64, 1.0);
    let p_in = |r: f64| pc * r * r / 2.0 + k * r.powi(4) / 8.0;
    let p_out = |r: f64| (pc + k * a * a) * r * r / 2.0 - k * a.powi(4) / 2.0 * r.ln();
    let m_in = |r: f64| om * r.powi(3) / 3.0;
    let m_out = |r: f64| om * a * a * r;
    let piece = |f_in: &dyn Fn(f64) -> f64, f_out: &dyn Fn(f64) -> f64| {
        if r2 <= a {
            f_in(r2) - f_in(r1)
        } else if r1 >= a {
            f_out(r2) - f_out(r1)
        } else {
            f_in(a) - f_in(r1) + f_out(r2) - f_out(a)
        }
    };
    let area = (r2 * r2 - r1 * r1) / 2.0;
    (piece(&p_in, &p_out) / area, piece(&m_in, &m_out) / area)
}

fn worst_vortex_error(l: &Loaded) -> (f64, f64, String) {
    let built = pipeline::build(l, "test", true).unwrap();
    let set = built.sample_all().unwrap();
    let edges = &l.grid.axes()[0].edges;
    let nphi = l.grid.shape()[1];
    let p = &set.get("pressure").unwrap().data;
    let m = &set.get("momentum_phi").unwrap().data;
    let (mut ep, mut em) = (0.0f64, 0.0f64);
    for i in 0..edges.len() - 1 {
        let (pe, me) = vortex_averages(edges[i], edges[i + 1]);
        for j in 0..nphi {
            ep = ep.max((p[i * nphi + j] / pe - 1.0).abs());
            em = em.max((m[i * nphi + j] / me - 1.0).abs());
        }
    }
    (ep, em, set.sampling.clone())
}

#[test]
fn kinked_vortex_average_matches_closed_form() {
    // Split at the switch, 12 points per piece (the outer pressure has a
    // 1/R² term, not a polynomial: 4 points leave 2e-11).
    let twelve = r#"{ "rule": "average", "points": 12 }"#;
    let (ep, em, _) = worst_vortex_error(&vortex(POLAR, twelve));
    assert!(ep < 1e-13 && em < 1e-13, "pressure {ep:e}, momentum {em:e}");
    // The same rule without the cut (the kink inside a 12-point tensor
    // rule) is off by far more in the cell that straddles R = a.
    let l = vortex(POLAR, twelve);
    let edges = &l.grid.axes()[0].edges;
    assert!(edges[2] < 0.25 && edges[3] > 0.25);
    let built = pipeline::build(&l, "test", true).unwrap();
    let gas = pipeline::gas_constants(&l);
    let plain = stillpoint::sample::sample(built.background(), &l.grid, &l.sampling, &gas).unwrap();
    let (pe, _) = vortex_averages(edges[2], edges[3]);
    let off = (plain.get("pressure").unwrap().data[2 * 4] / pe - 1.0).abs();
    // (measured: 6.8e-8, five orders above the cut average's error)
    assert!(off > 1e-8, "uncut average off by only {off:e}");
}

#[test]
fn averages_to_a_tolerance_record_their_estimate() {
    // Smooth in every cell once split: the estimate (n vs n + 2) meets
    // 1e-13, and the description states n and the estimate per field.
    let l = vortex(
        POLAR,
        r#"{ "rule": "average", "tolerance": 1e-13, "points": 2 }"#,
    );
    let (ep, em, sampling) = worst_vortex_error(&l);
    assert!(ep < 1e-13 && em < 1e-13, "pressure {ep:e}, momentum {em:e}");
    assert!(
        sampling.contains("requested relative tolerance 1e-13"),
        "{sampling}"
    );
    assert!(
        sampling.contains("pressure ") && !sampling.contains("NOT MET"),
        "{sampling}"
    );
}

#[test]
fn a_kink_no_cut_removes_is_said_plainly() {
    // On a Cartesian grid the switch R = a is a circle across cells: no
    // axis cut removes it, and the estimate cannot reach 1e-15.
    let l = vortex(
        r#"{"x": {"from": -1, "to": 1, "cells": 8}, "y": {"from": -1, "to": 1, "cells": 8}}"#,
        r#"{ "rule": "average", "tolerance": 1e-15, "points": 40 }"#,
    );
    let built = pipeline::build(&l, "test", true).unwrap();
    let set = built.sample_all().unwrap();
    assert!(
        set.sampling.contains("TOLERANCE NOT MET"),
        "{}",
        set.sampling
    );
}

/// A smooth law (a power law with a Gaussian ring) on a 1D radial grid:
/// cell averages to a tolerance of 1e-14 against mpmath quadrature
/// (tests/highorder_check.py).
#[test]
fn smooth_law_averages_match_mpmath() {
    let text = r#"{
      "name": "ring", "units": "code",
      "parameters": { "rho0": 1.0, "R0": 1.0, "p": 1.5, "A": 2.0, "Rr": 2.0, "w": 0.3, "cs2": 0.01 },
      "gravity": { "point_mass": "1" },
      "gas": { "gamma": 1.4, "sound_speed_sq": "cs2" },
      "balance": {
        "shape": "disk", "solve_for": "rotation",
        "density": "rho0*(R/R0)^(-p)*(1 + A*exp(-(R - Rr)^2/(2*w^2)))"
      },
      "grid": { "R": { "from": 1, "to": 3, "cells": 16 } },
      "sampling": { "rule": "average", "tolerance": 1e-14 }
    }"#;
    let l = load(text);
    let built = pipeline::build(&l, "test", true).unwrap();
    let set = built.sample_all().unwrap();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("averages.json");
    let json = format!(
        r#"{{"params": {{"rho0": 1.0, "R0": 1.0, "p": 1.5, "A": 2.0, "Rr": 2.0, "w": 0.3}},
            "edges": {:?}, "density": {:?}}}"#,
        l.grid.axes()[0].edges,
        set.get("density").unwrap().data
    );
    std::fs::write(&path, json).unwrap();
    let script = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/highorder_check.py");
    let out = std::process::Command::new("python3")
        .arg(script)
        .arg(&path)
        .output()
        .expect("this test needs python3 with mpmath (.ci/run installs it)");
    let report = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(out.status.success(), "{report}");
    assert!(report.contains("agree with mpmath"), "{report}");
    eprintln!("{report}");
}
