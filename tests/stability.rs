//! The stability section of `check` (issue 7, part 7) against outside
//! references, each named beside its check.

mod common;

use std::path::Path;

use stillpoint::criteria::{self, Section};
use stillpoint::pipeline;
use stillpoint::profile::{self, Loaded};

fn load(text: &str) -> Loaded {
    profile::from_text("test", text, Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"))
}

fn bundled(name: &str) -> Loaded {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("profiles/{name}.json"));
    let text = std::fs::read_to_string(&path).unwrap();
    profile::from_text(name, &text, Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"))
}

fn section(l: &Loaded) -> Section {
    let (bg, domain) = pipeline::solve_unverified(l).unwrap();
    criteria::section(&l.model, &bg, &domain, Some(&l.grid)).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// A Keplerian disk: given v_φ = √(GM/R), uniform density, the pressure by
/// integration (uniform, as gravity and rotation balance).
const KEPLER: &str = r#"{
  "name": "kepler", "units": "code",
  "parameters": { "M": 2.0 },
  "gravity": { "point_mass": "M" },
  "gas": { "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "pressure", "density": "1",
               "rotation": "sqrt(G*M/R)", "anchor": { "at": 1, "value": "1" } },
  "grid": { "R": { "from": 0.5, "to": 3.0, "cells": 50 } }
}"#;

/// κ² of a Keplerian disk is Ω² = GM/R³ (textbook: Binney & Tremaine 2008,
/// Galactic Dynamics, 2nd ed., eq. 3.80, κ² = R dΩ²/dR + 4Ω²; κ = Ω for a
/// point mass): the extremes sit at the ends with those values.
#[test]
fn kappa_sq_of_a_keplerian_disk_is_omega_sq() {
    let s = section(&load(KEPLER));
    let k = s.get("kappa^2").expect("kappa^2 listed");
    let om2 = |r: f64| 2.0 / r.powi(3);
    assert!(rel(k.min.0, om2(k.min.1[0])) < 1e-13, "{k:?}");
    assert!(rel(k.max.0, om2(k.max.1[0])) < 1e-13, "{k:?}");
    assert!(rel(k.min.1[0], 3.0) < 1e-12 && rel(k.max.1[0], 0.5) < 1e-12);
    assert!(k.fails.is_none());
    assert!(s.get("Toomre Q").is_none(), "no surface density here");
}

/// Toomre's Q = c κ/(π G Σ) of the bundled power-law disk (vertically
/// integrated, Σ = Σ0 (R/R0)^−p, c² = c0² (R/R0)^−q), against the closed
/// form worked by hand: v_φ² = GM/R − (p + q) c² from the radial balance,
/// κ² = (2 v_φ² + R dv_φ²/dR)/R² = (GM/R − (2 − q)(p + q) c²)/R²
/// (Toomre 1964, ApJ 139, 1217, for Q).
#[test]
fn toomre_q_of_a_power_law_disk_matches_its_closed_form() {
    let l = bundled("powerlaw-disk");
    let s = section(&l);
    let (sigma0, p, q, h0) = (1.0f64, 1.0f64, 0.5f64, 0.05f64);
    let closed = |r: f64| {
        let c2 = h0 * h0 * r.powf(-q);
        let k2 = (1.0 / r - (2.0 - q) * (p + q) * c2) / (r * r);
        c2.sqrt() * k2.sqrt() / (std::f64::consts::PI * sigma0 * r.powf(-p))
    };
    let t = s.get("Toomre Q").expect("Toomre Q listed");
    for (v, at) in [&t.min, &t.max] {
        assert!(rel(*v, closed(at[0])) < 1e-12, "Q = {v} at R = {}", at[0]);
    }
    // Q rises inward here (Q ∝ R^(p - q/2 - 3/2) to leading order).
    assert!(rel(t.min.1[0], 2.5) < 1e-12 && rel(t.max.1[0], 0.4) < 1e-12);
    assert!(
        t.fails.is_some(),
        "Q < 1 everywhere for Sigma0 = 1 around M = 1"
    );
}

/// The bundled vertically isothermal disk (γ = 1.4) is stable by both
/// Solberg–Høiland criteria (Tassoul 1978, Theory of Rotating Stars, §7.3;
/// from memory): entropy rises away from the midplane and j² outward.
#[test]
fn flared_disk_spherical_is_solberg_hoiland_stable() {
    let s = section(&bundled("flared-disk-spherical"));
    for name in ["kappa^2", "SH 1", "SH 2", "N_z^2"] {
        let d = s.get(name).unwrap_or_else(|| panic!("{name} listed"));
        assert!(d.fails.is_none(), "{name}: {d:?}");
        assert!(d.min.0 >= 0.0, "{name}: {d:?}");
    }
    assert!(s.get("SH 1").unwrap().min.0 > 0.1);
}

/// A narrow density ring (Gaussian bump of contrast 1 and width 0.03 at
/// h = 0.05): the pressure gradient across it makes (R v_φ)² fall outward on
/// its inner flank, κ² ≈ Ω² − A c²/w² < 0 (a hand estimate), and the first
/// Solberg–Høiland criterion fails with it.
#[test]
fn a_narrow_ring_fails_rayleigh_and_solberg_hoiland() {
    let ring = r#"{
      "name": "ring", "units": "code",
      "parameters": { "M": 1.0, "h0": 0.05, "cs2_0": "h0^2*G*M" },
      "gravity": { "point_mass": "M" },
      "gas": { "gamma": 1.4, "sound_speed_sq": "cs2_0" },
      "balance": { "shape": "stratified_disk", "solve_for": "rotation",
                   "density": "1 + exp(-(R - 1)^2/0.03^2)" },
      "grid": { "R": { "from": 0.8, "to": 1.2, "cells": 80 }, "z": { "from": -0.1, "to": 0.1, "cells": 8 } }
    }"#;
    let s = section(&load(ring));
    let k = s.get("kappa^2").unwrap();
    assert!(k.fails.is_some() && k.min.0 < 0.0, "{k:?}");
    assert!(s.get("SH 1").unwrap().fails.is_some());
    assert!(!s.cautions().is_empty());
}

/// The warm-layer disk turned over: a cool layer (c² a quarter of the
/// midplane's above three scale heights) makes the entropy fall upward where
/// c² drops faster than adiabatically, d ln c²/dz < ((γ−1)/γ) d ln P/dz, so
/// N_z² < 0 there (Schwarzschild); the bundled warm layer is stable. (The
/// cool variant is given a midplane density: its surface-density
/// normalisation does not tabulate to the column closure's tolerance.)
#[test]
fn a_cool_surface_layer_is_convectively_unstable() {
    let warm = bundled("warm-layer-disk");
    let ok = section(&warm);
    assert!(ok.get("N_z^2").unwrap().fails.is_none());
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/warm-layer-disk.json");
    let text = std::fs::read_to_string(path)
        .unwrap()
        .replace(r#""warm": 4.0"#, r#""warm": 0.25"#)
        .replace(
            r#""surface_density": "sigma0*(R/R0)^(-1)","#,
            r#""density": "(R/R0)^(-1.5)""#,
        )
        .replace(r#""column": "infinity""#, "");
    let cool = load(&text);
    let s = section(&cool);
    let n = s.get("N_z^2").unwrap();
    assert!(n.fails.is_some() && n.min.0 < 0.0, "{n:?}");
    assert!(
        n.min.1[1].abs() > 2.0 * 0.05 * n.min.1[0],
        "in the layer: {n:?}"
    );
}

/// The vertical shear R ∂Ω/∂z against the closed form of Nelson, Gressel &
/// Umurhan 2013, MNRAS 435, 2610 (their Ω(R, z), as in tests/vertical.rs):
/// Ω² = Ω_K² [(p + q)(H/R)² + (1 + q) − q R/√(R² + z²)], so
/// R ∂Ω/∂z = R Ω_K² q R z (R² + z²)^(−3/2) / (2Ω).
#[test]
fn vertical_shear_matches_nelson_2013() {
    let s = section(&bundled("flared-disk-spherical"));
    let (p, q, h0) = (-1.5f64, -1.0f64, 0.06f64);
    let shear = |r: f64, z: f64| {
        let omk2 = r.powi(-3);
        let c2 = h0 * h0 * r.powf(q);
        let d = r.hypot(z);
        let om2 = omk2 * ((p + q) * c2 / (r * r * omk2) + (1.0 + q) - q * r / d);
        r * omk2 * q * r * z / d.powi(3) / (2.0 * om2.sqrt())
    };
    let d = s.get("R dOmega/dz").unwrap();
    for (v, at) in [&d.min, &d.max] {
        assert!(rel(*v, shear(at[0], at[1])) < 1e-10, "{v} at {at:?}");
    }
    let note = d.note.as_deref().unwrap();
    assert!(
        note.contains("local orbits") && note.contains("cools fast"),
        "{note}"
    );
}

/// `check` prints the stability section for every bundled profile, with the
/// diagnostics that apply to it, and `check --help` names them all.
#[test]
fn issue7_check_lists_stability_for_every_bundled_profile() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let expect: &[(&str, &[&str])] = &[
        (
            "flared-disk-spherical",
            &["kappa^2", "SH 1", "SH 2", "N_z^2", "R dOmega/dz"],
        ),
        (
            "noisy-disk-3d",
            &["kappa^2", "SH 1", "SH 2", "N_z^2", "R dOmega/dz"],
        ),
        (
            "softened-disk-box",
            &["kappa^2", "SH 1", "N_z^2", "R dOmega/dz"],
        ),
        (
            "warm-layer-disk",
            &[
                "kappa^2",
                "SH 1",
                "SH 2",
                "N_z^2",
                "R dOmega/dz",
                "Toomre Q",
            ],
        ),
        ("powerlaw-disk", &["kappa^2", "Toomre Q"]),
        ("ring-disk", &["kappa^2"]),
        ("steady-vortex", &["kappa^2"]),
        ("quiet-slab", &["N^2"]),
        ("layered-atmosphere", &["N^2"]),
        ("stratified-box-2d", &["N^2"]),
        ("polytropic-envelope", &["N^2"]),
        ("planet-envelope-box", &["N^2"]),
        ("thick-torus", &["kappa^2"]),
    ];
    for (name, items) in expect {
        let path = format!("profiles/{name}.json");
        let o = common::stillpoint(dir, &["check", &path]);
        let out = common::text(&o);
        assert_eq!(o.status.code(), Some(0), "{name}: {out}");
        assert!(out.contains("\nstability"), "{name}: {out}");
        for i in *items {
            assert!(out.contains(i), "{name} lacks {i}: {out}");
        }
    }
    let o = common::stillpoint(dir, &["check", "--help"]);
    let help = common::text(&o);
    for i in [
        "kappa^2",
        "SH 1",
        "SH 2",
        "N^2",
        "N_z^2",
        "R dOmega/dz",
        "Toomre Q",
    ] {
        assert!(help.contains(i), "help lacks {i}");
    }
}
