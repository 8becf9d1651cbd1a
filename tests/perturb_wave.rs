//! The linear sound wave against the linearised Euler equations, checked
//! with SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103): the library
//! evaluates the wave on a slab and on a disk; `tests/perturb_wave_check.py`
//! derives the acoustic eigenvector and dispersion relation from the
//! linearised equations symbolically and checks the values against them.
//! Needs python3 with SymPy (`.ci/run` installs it).

use std::process::Command;

use serde_json::{json, Value};
use stillpoint::background::{Background, Frame, StateBlock, LANES};
use stillpoint::perturb::{Perturbations, Points, Scratch};
use stillpoint::profile::from_text;

const SLAB: &str = r#"{
  "name": "s", "units": "code",
  "parameters": { "g0": 1.0, "cs2": 0.8, "P0": 2.0 },
  "gravity": { "uniform": "g0" },
  "gas": { "sound_speed_sq": "cs2", "gamma": 1.6 },
  "balance": { "shape": "slab", "solve_for": "density", "anchor": { "at": 0, "value": "P0" } },
  "grid": { "z": { "from": 0, "to": 3, "cells": 8 } },
  "perturbations": [{ "kind": "sound_wave", "amplitude": 1e-4, "wavevector": { "z": 5.0 }, "phase": 0.3 }]
}"#;

const DISK: &str = r#"{
  "name": "d", "units": "code",
  "gravity": { "point_mass": 1.0 },
  "gas": { "sound_speed_sq": "0.0025 / R", "gamma": 1.4 },
  "balance": { "shape": "disk", "solve_for": "rotation", "density": "R^(-1)" },
  "grid": { "R": { "from": 0.5, "to": 2.0, "cells": 8 }, "phi": { "from": 0, "to": "2*pi", "cells": 8 } },
  "perturbations": [{ "kind": "sound_wave", "amplitude": 1e-6, "wavevector": { "x": 7.0, "y": -2.0 } }]
}"#;

/// The wave at `grid` points of a profile, as the JSON case the checker reads.
fn case(text: &str, grid: &[Vec<f64>]) -> Value {
    let l = from_text("wave", text, std::path::Path::new("."), &[]).unwrap();
    let (bg, _) = stillpoint::pipeline::solve(&l).unwrap();
    let p = Perturbations::bind(&l.perturbations, &l.model, &l.grid, &bg).unwrap();
    let axes: Vec<_> = l.grid.axes().iter().map(|a| a.coord).collect();
    let n = grid[0].len();
    let cols: Vec<&[f64]> = grid.iter().map(|v| &v[..]).collect();
    let mut pts = Points::new();
    pts.fill(&axes, &cols, n);
    let frame: Vec<&[f64]> = match bg.frame() {
        Frame::Axisymmetric => vec![pts.col(3), pts.col(2)],
        _ => vec![&grid[0][..]],
    };
    let mut s = StateBlock::new();
    bg.eval(&frame, Default::default(), &mut s, &mut bg.workspace());
    let mut d = StateBlock::new();
    let cells: Vec<u64> = (0..n as u64).collect();
    p.apply(&pts, &cells, &s, &mut d, &mut [], &mut Scratch::default());
    let record = p.parameters().remove(0);
    let get = |k: &str| record.values.iter().find(|(n, _)| n == k).unwrap().1;
    let points: Vec<Value> = (0..n)
        .map(|i| {
            // Velocity in Cartesian components (the frame basis rotated).
            let v = [d.velocity[0][i], d.velocity[1][i], d.velocity[2][i]];
            let vel = match bg.frame() {
                Frame::Axisymmetric => {
                    let (sn, cs) = pts.col(4)[i].sin_cos();
                    [v[0] * cs - v[1] * sn, v[0] * sn + v[1] * cs, v[2]]
                }
                _ => [0.0, 0.0, v[0]],
            };
            json!({
                "x": pts.col(0)[i], "y": pts.col(1)[i], "z": pts.col(2)[i],
                "rho0": s.density[i], "P0": s.pressure[i],
                "drho": d.density[i], "dP": d.pressure[i], "dv": vel,
            })
        })
        .collect();
    assert!(n <= LANES);
    json!({
        "gamma": l.model.gamma,
        "amplitude": get("amplitude"),
        "k": [get("k_x"), get("k_y"), get("k_z")],
        "phase": get("phase"),
        "points": points,
    })
}

#[test]
fn sound_wave_satisfies_the_linearised_euler_equations() {
    let ok = Command::new("python3")
        .args(["-c", "import sympy"])
        .output()
        .is_ok_and(|o| o.status.success());
    assert!(ok, "python3 with SymPy is required; `.ci/run` installs it");
    let slab = case(SLAB, &[vec![0.1, 0.7, 1.3, 2.9]]);
    let disk = case(DISK, &[vec![0.6, 1.0, 1.5, 1.9], vec![0.2, 1.7, 3.5, 6.0]]);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("wave.json");
    std::fs::write(&path, json!({ "cases": [slab, disk] }).to_string()).unwrap();
    let script =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/perturb_wave_check.py");
    let out = Command::new("python3")
        .arg(&script)
        .arg(&path)
        .output()
        .unwrap();
    print!("{}", String::from_utf8_lossy(&out.stdout));
    eprint!("{}", String::from_utf8_lossy(&out.stderr));
    assert!(out.status.success(), "the SymPy check failed");
}
