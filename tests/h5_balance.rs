//! End-to-end check of sampler and HDF5 writer: analytic equilibria are
//! sampled at two resolutions, written to HDF5, and the Python script
//! `tests/h5_balance_check.py` recomputes the balance from the files' own
//! numbers (h5py + numpy), checks it converges at second order, and checks
//! the attributes. A deliberately unbalanced disk must make the script fail.

use std::path::{Path, PathBuf};
use std::process::Command;

use stillpoint::background::{Background, Frame, State};
use stillpoint::fields::FieldSet;
use stillpoint::grid::{Axis, Coord, Grid};
use stillpoint::output::{commit, write_hdf5, Document, Metadata, Precision};
use stillpoint::sample::{sample, GasConstants, SamplingRule};
use stillpoint::units::UnitSystem;

/// Isothermal slab in uniform gravity: ρ = ρ0 exp(−z/H), P = c²ρ, Φ = g z,
/// H = c²/g (hydrostatic atmosphere; e.g. Clarke & Carswell 2007, Principles
/// of Astrophysical Fluid Dynamics, ch. on hydrostatic equilibrium).
struct IsothermalSlab {
    rho0: f64,
    c2: f64,
    g: f64,
}

impl Background for IsothermalSlab {
    fn frame(&self) -> Frame {
        Frame::Slab
    }
    fn at(&self, x: &[f64]) -> State {
        let z = x[0];
        let rho = self.rho0 * (-z * self.g / self.c2).exp();
        State::at_rest(rho, self.c2 * rho, self.g * z)
    }
}

/// Midplane of a power-law disk: Σ = Σ0 R^(−p), c² = c0² R^(−q), Φ = −GM/R,
/// v_φ² = GM/R − (p + q) c², the pressure-corrected rotation (e.g. Takeuchi &
/// Lin 2002, ApJ 581, 1344). With `pressure_corrected: false` the rotation is
/// Keplerian, which does not balance.
struct PowerLawDisk {
    gm: f64,
    sigma0: f64,
    c0_sq: f64,
    p: f64,
    q: f64,
    pressure_corrected: bool,
}

impl Background for PowerLawDisk {
    fn frame(&self) -> Frame {
        Frame::Axisymmetric
    }
    fn depends_on(&self) -> [bool; 2] {
        [true, false]
    }
    fn at(&self, x: &[f64]) -> State {
        let r = x[0];
        let sigma = self.sigma0 * r.powf(-self.p);
        let c2 = self.c0_sq * r.powf(-self.q);
        let correction = if self.pressure_corrected {
            (self.p + self.q) * c2
        } else {
            0.0
        };
        State::rotating(
            sigma,
            sigma * c2,
            -self.gm / r,
            (self.gm / r - correction).sqrt(),
        )
    }
}

fn disk(pressure_corrected: bool) -> PowerLawDisk {
    PowerLawDisk {
        gm: 1.0,
        sigma0: 1.0,
        c0_sq: 0.05f64.powi(2),
        p: 1.0,
        q: 0.5,
        pressure_corrected,
    }
}

fn write(dir: &Path, name: &str, bg: &dyn Background, grid: &Grid, rule: SamplingRule) -> PathBuf {
    let gas = GasConstants {
        gamma: 1.4,
        temperature_per_c2: None,
        vertically_integrated: bg.frame() == Frame::Axisymmetric,
    };
    let set: FieldSet = sample(bg, grid, &rule, &gas).expect("sampling");
    let metadata = Metadata {
        profile_json: format!("{{\"test\": \"{name}\"}}"),
        command_line: "cargo test --test h5_balance".into(),
        generator: Metadata::generator_name(),
        units: UnitSystem::Code,
        cautions: vec![],
        extra: vec![("test_case".into(), name.into())],
        reproducible: false,
    };
    let doc = Document {
        grid,
        background: &set,
        state: &set,
        metadata: &metadata,
    };
    let path = dir.join(format!("{name}.h5"));
    commit(&path, false, |p| write_hdf5(&doc, p, Precision::Double)).expect("writing");
    path
}

/// Writes the slab and disk files at 64 and 128 cells per balance axis.
fn write_cases(dir: &Path, disk_bg: &PowerLawDisk) -> Vec<PathBuf> {
    let slab = IsothermalSlab {
        rho0: 2.0,
        c2: 0.5,
        g: 2.0,
    };
    let mut files = Vec::new();
    for n in [64, 128] {
        for (tag, rule) in [
            ("centre", SamplingRule::Center),
            ("avg4", SamplingRule::Average { points: 4 }),
        ] {
            let z = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 1.0, n).unwrap()]).unwrap();
            files.push(write(dir, &format!("slab_{tag}_{n}"), &slab, &z, rule));
            let r = Grid::new(vec![Axis::uniform(Coord::R, 1.0, 3.0, n).unwrap()]).unwrap();
            files.push(write(dir, &format!("disk_{tag}_{n}"), disk_bg, &r, rule));
            let polar = Grid::new(vec![
                Axis::log(Coord::R, 0.5, 2.5, n).unwrap(),
                Axis::uniform(Coord::Phi, 0.0, std::f64::consts::TAU, 8).unwrap(),
            ])
            .unwrap();
            files.push(write(
                dir,
                &format!("polar_{tag}_{n}"),
                disk_bg,
                &polar,
                rule,
            ));
        }
    }
    files
}

fn run_check(files: &[PathBuf]) -> (bool, String) {
    let probe = Command::new("python3")
        .args(["-c", "import h5py, numpy"])
        .output();
    match probe {
        Ok(out) if out.status.success() => {}
        _ => panic!(
            "this test needs python3 with h5py and numpy (`pip install h5py numpy`; .ci/run installs them)"
        ),
    }
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/h5_balance_check.py");
    let out = Command::new("python3")
        .arg(script)
        .args(files)
        .output()
        .expect("running python3");
    let report = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.success(), report)
}

#[test]
fn written_equilibria_balance_at_second_order() {
    let dir = tempfile::tempdir().unwrap();
    let files = write_cases(dir.path(), &disk(true));
    let (ok, report) = run_check(&files);
    println!("{report}");
    assert!(ok, "balance check failed:\n{report}");
    assert!(report.contains("all checks passed"), "{report}");
}

#[test]
fn keplerian_rotation_without_pressure_correction_fails_the_check() {
    let dir = tempfile::tempdir().unwrap();
    let files = write_cases(dir.path(), &disk(false));
    let (ok, report) = run_check(&files);
    println!("{report}");
    assert!(!ok, "an unbalanced disk passed the check:\n{report}");
    assert!(
        report.contains("disk [R] (cell-centre point values): 64 -> 128 cells"),
        "{report}"
    );
    assert!(report.contains("is not second order"), "{report}");
    let slab_lines: Vec<&str> = report
        .lines()
        .filter(|l| l.starts_with("slab [z]") && l.contains(" -> "))
        .collect();
    assert_eq!(slab_lines.len(), 2, "{report}");
    assert!(
        slab_lines.iter().all(|l| l.ends_with(" ok")),
        "the balanced slab must still pass:\n{report}"
    );
}
