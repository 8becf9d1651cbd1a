//! Builds across MPI ranks (cargo feature `mpi`, issue 11): `mpirun -n 2`
//! and `-n 3` write the same dataset bytes as a serial build of the same
//! profile (compared with h5py, `tests/mpi_check.py`), on a grid whose
//! first axis (301 rows) divides among neither 2 nor 3 ranks, in slabs of
//! 16 rows so that ranks write different numbers of slabs; a refused
//! build leaves nothing behind. Run with
//! `cargo test --features mpi --test mpi` (see `.ci/run`).
#![cfg(feature = "mpi")]

mod common;
use common::text;
use std::path::Path;
use std::process::{Command, Output};

fn serial(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run stillpoint")
}

fn mpirun(dir: &Path, ranks: usize, args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut c = Command::new("mpirun");
    c.args(["--allow-run-as-root", "--oversubscribe", "-n"])
        .arg(ranks.to_string());
    for (k, v) in env {
        c.env(k, v).args(["-x", k]);
    }
    c.arg(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run mpirun (install openmpi-bin)")
}

/// The tapered disk on a Cartesian grid of 301 × 120 cells.
fn profile(dir: &Path) -> String {
    let src = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/profiles/tapered-disk-cartesian.json"
    );
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(src).unwrap()).unwrap();
    v["grid"]["x"]["cells"] = 301.into();
    v["grid"]["y"]["cells"] = 120.into();
    let path = dir.join("disk.json");
    std::fs::write(&path, v.to_string()).unwrap();
    path.to_str().unwrap().to_string()
}

#[test]
fn issue11_mpi_builds_match_the_serial_build_byte_for_byte() {
    let d = tempfile::tempdir().unwrap();
    let p = profile(d.path());
    let o = serial(
        d.path(),
        &["build", &p, "-o", "serial.h5", "--slab-rows", "16"],
    );
    assert!(o.status.success(), "{}", text(&o));
    for (ranks, file) in [(2, "n2.h5"), (3, "n3.h5")] {
        let o = mpirun(
            d.path(),
            ranks,
            &["build", &p, "-o", file, "--slab-rows", "16"],
            &[],
        );
        assert!(o.status.success(), "-n {ranks}: {}", text(&o));
        // Rank 0 speaks for all, as a serial build: the HDF5 file and its
        // XDMF description, once each.
        assert_eq!(
            text(&o).matches("wrote ").count(),
            2,
            "rank 0 speaks for all: {}",
            text(&o)
        );
        assert!(
            text(&o).contains(&format!("wrote {}", file.replace(".h5", ".xmf"))),
            "{}",
            text(&o)
        );
    }
    // Two profiles: the polar ring disk (the azimuth broadcast) too.
    let o = mpirun(d.path(), 3, &["build", "ring-disk", "-o", "ring3.h5"], &[]);
    assert!(o.status.success(), "{}", text(&o));
    let o = serial(d.path(), &["build", "ring-disk", "-o", "ring.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    // A perturbed build (velocity noise, counter-based: the same values
    // however the rows are split): /background, /state and /perturbation.
    let o = mpirun(
        d.path(),
        3,
        &["build", "noisy-disk", "-o", "noisy3.h5"],
        &[],
    );
    assert!(o.status.success(), "{}", text(&o));
    let o = serial(d.path(), &["build", "noisy-disk", "-o", "noisy.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    // An audit (not an equilibrium) carries its manufactured forcing.
    let o = mpirun(
        d.path(),
        2,
        &["build", "keplerian-audit", "-o", "audit2.h5"],
        &[],
    );
    assert!(o.status.success(), "{}", text(&o));
    let o = serial(d.path(), &["build", "keplerian-audit", "-o", "audit.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("audit2.h5")).unwrap();
    assert!(f.group("forcing").is_ok());
    drop(f);
    let f = hdf5::File::open(d.path().join("noisy3.h5")).unwrap();
    assert!(f.group("perturbation").is_ok() && f.attr("perturbations_alone").is_ok());
    // The peaks of the perturbation, gathered from every rank's rows, are
    // those of the serial build (the largest of each rank's).
    let peaks = |f: &hdf5::File| -> String {
        let a: hdf5::types::VarLenUnicode =
            f.attr("perturbation_peaks").unwrap().read_scalar().unwrap();
        a.as_str().to_string()
    };
    let one = hdf5::File::open(d.path().join("noisy.h5")).unwrap();
    assert!(peaks(&one).contains("velocity_"), "{}", peaks(&one));
    assert_eq!(peaks(&f), peaks(&one));
    drop((f, one));
    let left: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.'))
        .collect();
    assert!(left.is_empty(), "temporary files left: {left:?}");
    // A plane stored x fastest (grid.nesting): the ranks split its y rows;
    // the same bytes, and the same rectilinear XDMF mesh.
    let text_of = std::fs::read_to_string(&p).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text_of).unwrap();
    v["grid"]["nesting"] = serde_json::json!(["y", "x"]);
    std::fs::write(d.path().join("nested.json"), v.to_string()).unwrap();
    let o = serial(d.path(), &["build", "nested.json", "-o", "nested.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let o = mpirun(
        d.path(),
        3,
        &["build", "nested.json", "-o", "nested3.h5"],
        &[],
    );
    assert!(o.status.success(), "{}", text(&o));
    let x = std::fs::read_to_string(d.path().join("nested3.xmf")).unwrap();
    assert!(
        x.contains(r#"TopologyType="2DRectMesh" NumberOfElements="121 302""#),
        "{x}"
    );
    // Rank 0 writes the XDMF description beside the file, the serial
    // build's text byte for byte apart from the HDF5 file's name.
    for (one, many) in [
        ("serial", "n2"),
        ("serial", "n3"),
        ("ring", "ring3"),
        ("noisy", "noisy3"),
        ("audit", "audit2"),
        ("nested", "nested3"),
    ] {
        let read = |n: &str| std::fs::read_to_string(d.path().join(format!("{n}.xmf"))).unwrap();
        let (a, b) = (read(one), read(many));
        assert!(a.contains(&format!("{one}.h5:/")), "{a}");
        assert_eq!(
            a.replace(&format!("{one}.h5:/"), "FILE:/"),
            b.replace(&format!("{many}.h5:/"), "FILE:/"),
            "{many}.xmf differs from {one}.xmf"
        );
    }
    let check = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/mpi_check.py");
    for files in [
        &["serial.h5", "n2.h5", "n3.h5"][..],
        &["ring.h5", "ring3.h5"][..],
        &["noisy.h5", "noisy3.h5"][..],
        &["audit.h5", "audit2.h5"][..],
        &["nested.h5", "nested3.h5"][..],
    ] {
        let o = Command::new("python3")
            .arg(check)
            .args(files)
            .current_dir(d.path())
            .output()
            .expect("python3 with h5py");
        assert!(o.status.success(), "{}", text(&o));
        assert!(text(&o).contains("identical"), "{}", text(&o));
    }
}

#[test]
fn issue11_mpi_build_refused_leaves_nothing() {
    let d = tempfile::tempdir().unwrap();
    let o = mpirun(
        d.path(),
        2,
        &["build", "ring-disk", "-o", "r.h5"],
        &[("STILLPOINT_ASSUME_FREE_DISK", "1000")],
    );
    assert!(!o.status.success());
    let t = text(&o);
    assert!(t.contains("the output would take"), "{t}");
    assert_eq!(t.matches("error:").count(), 1, "one message: {t}");
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0, "{t}");
    // An existing file is not overwritten without --force.
    std::fs::write(d.path().join("r.h5"), "old").unwrap();
    let o = mpirun(d.path(), 2, &["build", "ring-disk", "-o", "r.h5"], &[]);
    assert!(!o.status.success());
    assert!(text(&o).contains("--force"), "{}", text(&o));
    assert_eq!(std::fs::read(d.path().join("r.h5")).unwrap(), b"old");
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 1);
    // Nor an existing XDMF file: refused before anything is written.
    std::fs::remove_file(d.path().join("r.h5")).unwrap();
    std::fs::write(d.path().join("r.xmf"), "old").unwrap();
    let o = mpirun(d.path(), 2, &["build", "ring-disk", "-o", "r.h5"], &[]);
    assert!(!o.status.success());
    assert!(text(&o).contains("r.xmf: the file exists"), "{}", text(&o));
    assert_eq!(std::fs::read(d.path().join("r.xmf")).unwrap(), b"old");
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 1);
}
