//! Perturbations against closed forms; every reference names its source.
#![allow(clippy::needless_range_loop)]

use super::*;
use crate::background::{Background, Frame, StateBlock};
use crate::closure::Solved;
use crate::profile::{from_text, Loaded};

const SLAB: &str = r#"{
  "name": "t", "units": "code",
  "parameters": { "g0": 1.0, "cs2": 1.0, "P0": 1.0 },
  "gravity": { "uniform": "g0" },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.4 },
  "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": 0, "value": "P0" } },
  "grid": { "z": { "from": 0, "to": 4, "cells": 16 } },
  "perturbations": PERT
}"#;

const DISK: &str = r#"{
  "name": "d", "units": "code",
  "parameters": { "h": 0.05 },
  "gravity": { "point_mass": 1.0 },
  "gas": { "sound_speed_sq": "h^2 / R", "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "R^(-1)" },
  "grid": { "R": { "from": 0.5, "to": 2.0, "cells": 8 }, "phi": { "from": 0, "to": "2*pi", "cells": 16 } },
  "perturbations": PERT
}"#;

fn setup(profile: &str, pert: &str) -> (Loaded, Solved, Perturbations) {
    let text = profile.replace("PERT", pert);
    let l =
        from_text("test", &text, std::path::Path::new("."), &[]).unwrap_or_else(|e| panic!("{e}"));
    let (bg, _) = crate::pipeline::solve(&l).unwrap();
    let p = Perturbations::bind(&l.perturbations, &l.model, &l.grid, &bg).unwrap();
    (l, bg, p)
}

/// Background, change and extra fields at points given in the grid's
/// coordinates, cell indices `cells`.
fn run(
    l: &Loaded,
    bg: &Solved,
    p: &Perturbations,
    grid: &[&[f64]],
    cells: &[u64],
) -> (StateBlock, StateBlock, Vec<Vec<f64>>) {
    let axes: Vec<_> = l.grid.axes().iter().map(|a| a.coord).collect();
    let n = cells.len();
    let mut pts = Points::new();
    pts.fill(&axes, grid, n);
    let mut state = StateBlock::new();
    let frame: Vec<&[f64]> = match bg.frame() {
        Frame::Axisymmetric => vec![pts.col(3), pts.col(2)],
        _ => vec![&grid[0][..n]],
    };
    bg.eval(&frame, Default::default(), &mut state, &mut bg.workspace());
    let mut delta = StateBlock::new();
    let mut extras = vec![vec![0.0; crate::background::LANES]; p.extra_fields().len()];
    p.apply(
        &pts,
        cells,
        &state,
        &mut delta,
        &mut extras,
        &mut Scratch::default(),
    );
    (state, delta, extras)
}

#[test]
fn gaussian_pulse_integral_peak_and_amplitude() {
    // ∫ exp(−(z − c)²/(2w²)) dz = w √(2π) (the Gaussian integral, e.g.
    // Abramowitz & Stegun 1964, eq. 7.4.2 written for a = 1/(2w²); from
    // memory). Integrated with the 200-cell midpoint rule over ±10 w, whose
    // error for a Gaussian is far below 1e-12 (spectral for smooth decaying
    // integrands; common practice, no source).
    let (a, c, w) = (0.3, 2.0, 0.1);
    let pert = format!(
        r#"[{{ "kind": "pulse", "field": "density", "amplitude": {a}, "centre": {{ "z": {c} }}, "width": {{ "z": {w} }} }}]"#
    );
    let (l, bg, p) = setup(SLAB, &pert);
    let n = 200;
    let h = 20.0 * w / n as f64;
    let z: Vec<f64> = (0..n)
        .map(|i| c - 10.0 * w + (i as f64 + 0.5) * h)
        .collect();
    let cells: Vec<u64> = (0..n as u64).collect();
    let (_, d, _) = run(&l, &bg, &p, &[&z], &cells);
    let integral: f64 = d.density[..n].iter().sum::<f64>() * h;
    let want = a * w * (2.0 * std::f64::consts::PI).sqrt();
    assert!(
        (integral / want - 1.0).abs() < 1e-12,
        "{integral} vs {want}"
    );
    // The peak at the centre, of height A; nothing else changes.
    let (_, d, _) = run(&l, &bg, &p, &[&[c - 1e-3, c, c + 1e-3]], &[0, 1, 2]);
    assert!((d.density[1] - a).abs() < 1e-15);
    assert!(d.density[0] < d.density[1] && d.density[2] < d.density[1]);
    assert!(d.pressure[..3].iter().all(|v| v.abs() < 1e-300));
}

#[test]
fn pressure_pulses_keep_density_entropy_or_temperature() {
    let mk = |keep: &str| {
        format!(
            r#"[{{ "kind": "pulse", "field": "pressure", "amplitude": 1e-2, "relative_to": "value", "keep": "{keep}", "centre": {{ "z": 1 }}, "width": {{ "z": 0.5 }} }}]"#
        )
    };
    let z = [0.3, 1.0, 1.7];
    let gamma = 1.4;
    for (keep, law) in [("density", 0), ("entropy", 1), ("temperature", 2)] {
        let (l, bg, p) = setup(SLAB, &mk(keep));
        let (s, d, _) = run(&l, &bg, &p, &[&z], &[0, 1, 2]);
        for i in 0..3 {
            let (rho, pr) = (s.density[i], s.pressure[i]);
            let (rho2, p2) = (rho + d.density[i], pr + d.pressure[i]);
            // A relative amplitude: δP = A P at the centre.
            if i == 1 {
                assert!((d.pressure[i] / pr - 1e-2).abs() < 1e-15);
            }
            let kept = match law {
                0 => rho2 / rho - 1.0,
                // P/ρ^γ, the adiabat (e.g. Landau & Lifshitz, Fluid Mechanics, §2).
                1 => (p2 / rho2.powf(gamma)) / (pr / rho.powf(gamma)) - 1.0,
                _ => (p2 / rho2) / (pr / rho) - 1.0,
            };
            assert!(kept.abs() < 1e-14, "{keep}: {kept}");
        }
    }
}

#[test]
fn polar_pulse_wraps_the_azimuth() {
    let pert = r#"[{ "kind": "pulse", "field": "velocity_phi", "amplitude": 0.1, "relative_to": "sound_speed", "centre": { "R": 1, "phi": 0.05 }, "width": { "R": 0.1, "phi": 0.2 } }]"#;
    let (l, bg, p) = setup(DISK, pert);
    let two_pi = std::f64::consts::TAU;
    // φ = 2π − 0.15 is 0.2 from the centre across the cut, like φ = 0.25.
    let (s, d, _) = run(&l, &bg, &p, &[&[1.0, 1.0], &[two_pi - 0.15, 0.25]], &[0, 1]);
    assert!((d.velocity[1][0] / d.velocity[1][1] - 1.0).abs() < 1e-12);
    let c = (1.4 * s.pressure[0] / s.density[0]).sqrt();
    assert!((d.velocity[1][0] - 0.1 * c * (-0.5f64).exp()).abs() < 1e-15);
    assert!(d.velocity[0][0].abs() < 1e-300);
}

#[test]
fn planet_potential_is_plummer_with_the_indirect_term() {
    let pert = r#"[{ "kind": "planet", "mass_ratio": 1e-3, "orbit_radius": 1.2, "azimuth": 0.7, "softening_scale_heights": 0.6, "indirect": true }]"#;
    let (l, bg, p) = setup(DISK, pert);
    assert_eq!(p.extra_fields(), &[PLANET_POTENTIAL]);
    let (q, a, phip) = (1e-3, 1.2_f64, 0.7_f64);
    // Softening 0.6 H with H = c/Ω_K at the orbit: c² = h²/a, Ω_K² = GM/a³.
    let h = (0.05f64.powi(2) / a).sqrt() / a.powf(-1.5);
    let eps = 0.6 * h;
    let params = p.parameters();
    let soft = params[0]
        .values
        .iter()
        .find(|(n, _)| n == "softening_length")
        .unwrap()
        .1;
    assert!((soft / eps - 1.0).abs() < 1e-14);
    let rr = [0.6, 1.1, 1.2, 1.9];
    let ph = [0.0, 0.6, 0.7, 4.0];
    let (s, d, x) = run(&l, &bg, &p, &[&rr, &ph], &[0, 1, 2, 3]);
    for i in 0..4 {
        // Plummer (1911, MNRAS 71, 460): Φ = −G m/√(d² + ε²), with d² by
        // the law of cosines in the midplane; the indirect term of a frame
        // centred on the star, G m R cos(φ − φ_p)/a² (the indirect part of
        // the disturbing function, Murray & Dermott 1999, Solar System
        // Dynamics, eq. 6.44; from memory).
        let d2 = rr[i] * rr[i] + a * a - 2.0 * rr[i] * a * (ph[i] - phip).cos();
        let want = -q / (d2 + eps * eps).sqrt() + q * rr[i] * (ph[i] - phip).cos() / (a * a);
        assert!(
            (x[0][i] - want).abs() < 1e-14 * want.abs().max(q),
            "{i}: {} vs {want}",
            x[0][i]
        );
        // The gas is left alone, and so is the state's potential.
        assert!(d.density[i].abs() < 1e-300 && d.potential[i].abs() < 1e-300);
        assert!(s.potential[i] < 0.0);
    }
}

fn moments(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    let mean = v.iter().sum::<f64>() / n;
    let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0);
    (mean, var)
}

#[test]
fn noise_is_the_same_for_any_split_and_has_its_moments() {
    let n = 40_000usize;
    for (dist, var, mu4) in [("uniform", 1.0 / 3.0, 1.0 / 5.0), ("gaussian", 1.0, 3.0)] {
        let pert = format!(
            r#"[{{ "kind": "noise", "field": "density", "amplitude": 1.0, "distribution": "{dist}", "seed": 9 }}]"#
        );
        let (l, bg, p) = setup(SLAB, &pert);
        let mut all = Vec::with_capacity(n);
        for start in (0..n).step_by(200) {
            let cells: Vec<u64> = (start as u64..start as u64 + 200).collect();
            let z = vec![1.0; 200];
            let (_, d, _) = run(&l, &bg, &p, &[&z], &cells);
            all.extend_from_slice(&d.density[..200]);
        }
        // Mean 0 and variance A²/3 (uniform on [−A, A]) or A² (normal);
        // bounds of 6 standard errors: σ/√n for the mean, √((μ₄ − σ⁴)/n)
        // for the variance (large-sample variance of the sample variance,
        // e.g. Kendall & Stuart, The Advanced Theory of Statistics, vol. 1,
        // §10.5; from memory).
        let (mean, v) = moments(&all);
        let nn = n as f64;
        assert!(mean.abs() < 6.0 * (var / nn).sqrt(), "{dist}: mean {mean}");
        assert!(
            (v - var).abs() < 6.0 * ((mu4 - var * var) / nn).sqrt(),
            "{dist}: var {v}"
        );
        // The same cells in another order, in blocks of another size, at
        // another point of the cell: the same bits.
        let cells: Vec<u64> = vec![39_999, 5, 17_003, 0, 123];
        let z = vec![2.5; 5];
        let (_, d, _) = run(&l, &bg, &p, &[&z], &cells);
        for (k, c) in cells.iter().enumerate() {
            assert_eq!(d.density[k].to_bits(), all[*c as usize].to_bits());
        }
    }
}

#[test]
fn band_limited_noise_has_only_its_wavenumbers() {
    let pert = r#"[{ "kind": "noise", "field": "velocity_R", "amplitude": 1e-3, "distribution": "gaussian", "seed": 3, "azimuthal_band": [2, 4] }]"#;
    let (l, bg, p) = setup(DISK, pert);
    // One ring of 16 cells (cells 16..32 of the 8 × 16 grid: R index 1).
    let nphi = 16;
    let phi: Vec<f64> = (0..nphi)
        .map(|j| std::f64::consts::TAU * (j as f64 + 0.5) / nphi as f64)
        .collect();
    let rr = vec![0.7; nphi];
    let cells: Vec<u64> = (16..32).collect();
    let (_, d, _) = run(&l, &bg, &p, &[&rr, &phi], &cells);
    // Discrete Fourier coefficients along φ (exact for m < nphi/2).
    for m in 0..nphi / 2 {
        let (mut c, mut s) = (0.0, 0.0);
        for j in 0..nphi {
            let (sn, cs) = (m as f64 * phi[j]).sin_cos();
            c += d.velocity[0][j] * cs;
            s += d.velocity[0][j] * sn;
        }
        let power = c.hypot(s);
        if (2..=4).contains(&m) {
            assert!(power > 1e-6, "m = {m}: {power}");
        } else {
            assert!(power < 1e-14, "m = {m}: {power}");
        }
    }
}

#[test]
fn modes_formulas_and_their_sum_commute() {
    let a = r#"{ "kind": "mode", "field": "density", "amplitude": 1e-2, "relative_to": "value", "m": 3, "phase": 0.4, "radial_envelope": "exp(-(R-1)^2/0.1)" }"#;
    let b = r#"{ "kind": "formula", "field": "density", "formula": "1e-3 * x * y" }"#;
    let c = r#"{ "kind": "noise", "field": "pressure", "keep": "entropy", "amplitude": 1e-4, "relative_to": "value", "distribution": "uniform", "seed": 1 }"#;
    let rr = [0.8, 1.0, 1.3];
    let ph = [0.1, 2.0, 5.0];
    let (l, bg, p) = setup(DISK, &format!("[{a}, {b}, {c}]"));
    let (s, d1, _) = run(&l, &bg, &p, &[&rr, &ph], &[0, 1, 2]);
    let (l2, bg2, p2) = setup(DISK, &format!("[{c}, {b}, {a}]"));
    let (_, d2, _) = run(&l2, &bg2, &p2, &[&rr, &ph], &[0, 1, 2]);
    for i in 0..3 {
        assert!((d1.density[i] - d2.density[i]).abs() < 1e-16 * s.density[i]);
        assert!((d1.pressure[i] - d2.pressure[i]).abs() < 1e-16 * s.pressure[i]);
        let want =
            1e-2 * s.density[i] * (-(rr[i] - 1.0).powi(2) / 0.1).exp() * (3.0 * ph[i] - 0.4).cos()
                + 1e-3 * rr[i] * rr[i] * ph[i].cos() * ph[i].sin();
        let rho_from_p = d1.density[i] - want;
        // The pressure noise moves ρ along the adiabat: δρ/ρ ≈ δP/(γP).
        assert!((rho_from_p / s.density[i] - d1.pressure[i] / (1.4 * s.pressure[i])).abs() < 1e-8);
    }
}

#[test]
fn sound_wave_is_in_the_linear_eigen_relation() {
    let pert = r#"[{ "kind": "sound_wave", "amplitude": 1e-5, "wavevector": { "x": 3, "y": 4 } }]"#;
    let (l, bg, p) = setup(DISK, pert);
    let rr = [0.9, 1.4];
    let ph = [0.3, 2.5];
    let (s, d, _) = run(&l, &bg, &p, &[&rr, &ph], &[0, 1]);
    for i in 0..2 {
        let c2 = 1.4 * s.pressure[i] / s.density[i];
        // δP = c² δρ and |δv| = c δρ/ρ along k̂ = (0.6, 0.8) (the acoustic
        // wave, e.g. Landau & Lifshitz, Fluid Mechanics, §64).
        assert!((d.pressure[i] / (c2 * d.density[i]) - 1.0).abs() < 1e-14);
        let (sn, cs) = ph[i].sin_cos();
        let vx = d.velocity[0][i] * cs - d.velocity[1][i] * sn;
        let vy = d.velocity[0][i] * sn + d.velocity[1][i] * cs;
        let u = c2.sqrt() * d.density[i] / s.density[i];
        assert!((vx - 0.6 * u).abs() < 1e-14 * u.abs() && (vy - 0.8 * u).abs() < 1e-14 * u.abs());
    }
}

#[test]
fn profile_errors_name_the_key() {
    let text = SLAB.replace(
        "PERT",
        r#"[{ "kind": "pulse", "field": "pressure", "amplitude": 1, "centre": { "z": 1 }, "width": { "z": 1 } }]"#,
    );
    let e = from_text("t.json", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert_eq!(e.path, "perturbations[0]");
    assert!(e.message.contains("keep"), "{e}");
    let text = SLAB.replace("PERT", r#"[{ "kind": "noise", "field": "velocity_x", "amplitude": 1, "distribution": "uniform", "seed": 1 }]"#);
    let e = from_text("t.json", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert_eq!(e.path, "perturbations[0].field");
    assert!(e.message.contains("velocity_z"), "{e}");
    let text = SLAB.replace(
        "PERT",
        r#"[{ "kind": "planet", "mass_ratio": 1e-3, "orbit_radius": 1, "softening": 0.1 }]"#,
    );
    let e = from_text("t.json", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert!(e.message.contains("disk"), "{e}");
    let text = SLAB.replace("PERT", r#"[{ "kind": "wobble" }]"#);
    let e = from_text("t.json", &text, std::path::Path::new("."), &[]).unwrap_err();
    assert_eq!(e.path, "perturbations[0].kind");
}
