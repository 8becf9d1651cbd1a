//! Issue 10: files any tool opens, plots, and command-line habits. The real
//! binary in a temporary folder; outside readers (h5py, meshio, NumPy,
//! pandas, astropy) check the files through `tests/formats_check.py`.

mod common;
use common::{stillpoint, text, variant};
use std::path::Path;
use std::process::Command;

fn ok(dir: &Path, args: &[&str]) -> String {
    let o = stillpoint(dir, args);
    assert!(o.status.success(), "stillpoint {args:?}: {}", text(&o));
    String::from_utf8_lossy(&o.stdout).into_owned()
}

const BUNDLED: [&str; 6] = [
    "quiet-slab",
    "layered-atmosphere",
    "powerlaw-disk",
    "tapered-disk-cartesian",
    "ring-disk",
    "steady-vortex",
];

#[test]
fn issue10_profiles_name_prints_the_bundled_json() {
    let d = tempfile::tempdir().unwrap();
    for name in BUNDLED {
        let printed = ok(d.path(), &["profiles", name]);
        let file = std::fs::read_to_string(format!(
            "{}/profiles/{name}.json",
            env!("CARGO_MANIFEST_DIR")
        ))
        .unwrap();
        assert_eq!(printed, file, "{name}");
        // Saved and built as a user would.
        std::fs::write(d.path().join("mine.json"), &printed).unwrap();
        ok(d.path(), &["check", "mine.json"]);
    }
    let o = stillpoint(d.path(), &["profiles", "powerlaw-dsk"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o)
            .contains("`powerlaw-dsk` is not a bundled profile (did you mean `powerlaw-disk`?)"),
        "{}",
        text(&o)
    );
}

#[test]
fn issue10_completions_and_manual_come_from_the_command_line_definition() {
    let d = tempfile::tempdir().unwrap();
    for shell in ["bash", "zsh", "fish", "elvish", "powershell"] {
        let script = ok(d.path(), &["completions", shell]);
        for verb in ["build", "check", "table", "derive", "profiles", "manual"] {
            assert!(script.contains(verb), "{shell} completion lists {verb}");
        }
    }
    let o = stillpoint(d.path(), &["completions", "tcsh"]);
    assert_eq!(o.status.code(), Some(2));
    let man = ok(d.path(), &["manual"]);
    assert!(
        man.starts_with(".ie") || man.contains(".TH stillpoint 1"),
        "{man}"
    );
    assert!(man.contains(".TH stillpoint 1"));
    for verb in ["build", "check", "completions", "manual"] {
        assert!(man.contains(verb), "manual names {verb}");
    }
}

/// Runs `tests/formats_check.py VERB ARGS…` in `dir`; the test fails if
/// Python or a reader library is missing.
fn python_check(dir: &Path, verb: &str, args: &[String]) {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/formats_check.py");
    let o = Command::new("python3")
        .arg(script)
        .arg(verb)
        .args(args)
        .current_dir(dir)
        .output()
        .expect(
            "python3 with h5py, numpy, vtk, pandas and astropy is needed (.ci/run installs them)",
        );
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(
        o.status.success(),
        "{verb}: {out}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(out.contains(&format!("{verb}: ok")), "{out}");
}

/// Builds every bundled profile in `dir` (and a single-precision slab),
/// returning the HDF5 file names.
fn build_all(dir: &Path, extra: &[&str]) -> Vec<String> {
    let mut files = Vec::new();
    for name in BUNDLED {
        let out = format!("{name}.h5");
        let mut args = vec!["build", name, "-o", &out];
        args.extend(extra);
        ok(dir, &args);
        files.push(out);
    }
    let slab = ok(dir, &["profiles", "quiet-slab"])
        .replace(r#""output": {"#, r#""output": { "precision": "single","#);
    std::fs::write(dir.join("single.json"), slab).unwrap();
    let mut args = vec!["build", "single.json", "-o", "single.h5"];
    args.extend(extra);
    ok(dir, &args);
    files.push("single.h5".into());
    files
}

#[test]
fn issue10_xdmf_beside_every_hdf5_file_is_read_by_vtk() {
    let d = tempfile::tempdir().unwrap();
    let files = build_all(d.path(), &[]);
    let xmf: Vec<String> = files.iter().map(|f| f.replace(".h5", ".xmf")).collect();
    for x in &xmf {
        assert!(d.path().join(x).is_file(), "{x} written");
    }
    python_check(d.path(), "xdmf", &xmf);
    // Nothing existing is overwritten without --force, the XDMF included.
    std::fs::remove_file(d.path().join("quiet-slab.h5")).unwrap();
    let o = stillpoint(d.path(), &["build", "quiet-slab", "-o", "quiet-slab.h5"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains("quiet-slab.xmf: the file exists"),
        "{}",
        text(&o)
    );
    assert!(!d.path().join("quiet-slab.h5").exists());
}

/// Issue 10 part 1: a Cartesian grid may declare the order its axes are
/// stored in (`grid.nesting`, slowest first). Each declared build holds the
/// natural build's numbers transposed, to the bit (h5py and numpy.transpose):
/// a disk in a box with cell noise (the noise is keyed on the natural cell
/// index), a disk in a plane, a planet's envelope (a sphere in a box) in an
/// order that is not x fastest, and a slab in a section. The grids declared
/// with x fastest are rectilinear XDMF meshes that VTK's reader opens as
/// rectilinear grids on the edges; the others stay curvilinear, and a
/// Cartesian one in its natural order says how to get a rectilinear mesh.
#[test]
fn issue10_a_cartesian_grid_declared_x_fastest_is_a_rectilinear_xdmf_mesh() {
    let d = tempfile::tempdir().unwrap();
    let dir = d.path();
    // Distinct cell counts per axis, so that a transposition cannot pass
    // for the identity.
    type Case = (
        &'static str,
        &'static [(&'static str, u64)],
        &'static [&'static str],
        bool,
    );
    let cases: [Case; 4] = [
        (
            "softened-disk-box",
            &[("x", 14), ("y", 12), ("z", 6)],
            &["z", "y", "x"],
            true,
        ),
        (
            "tapered-disk-cartesian",
            &[("x", 30), ("y", 24)],
            &["y", "x"],
            false,
        ),
        (
            "planet-envelope-box",
            &[("x", 10), ("y", 8), ("z", 6)],
            &["y", "x", "z"],
            false,
        ),
        (
            "stratified-box-2d",
            &[("x", 16), ("z", 24)],
            &["z", "x"],
            false,
        ),
    ];
    let mut xmf = Vec::new();
    for (name, cells, order, noise) in cases {
        for nested in [false, true] {
            let file = variant(dir, name, |v| {
                for (axis, n) in cells {
                    v["grid"][axis]["cells"] = serde_json::json!(n);
                }
                if noise {
                    v["perturbations"] = serde_json::json!([{
                        "kind": "noise", "field": "velocity_x", "amplitude": 1e-3,
                        "relative_to": "sound_speed", "distribution": "uniform", "seed": 11
                    }]);
                }
                if nested {
                    v["grid"]["nesting"] = serde_json::json!(order);
                }
            });
            let tag = if nested { "nested" } else { "natural" };
            let json = format!("{name}-{tag}.json");
            std::fs::rename(dir.join(file), dir.join(&json)).unwrap();
            ok(dir, &["build", &json, "-o", &format!("{name}-{tag}.h5")]);
            xmf.push(format!("{name}-{tag}.xmf"));
        }
        let natural: Vec<&str> = cells.iter().map(|(a, _)| *a).collect();
        python_check(
            dir,
            "nesting",
            &[
                format!("{name}-natural.h5"),
                format!("{name}-nested.h5"),
                natural.join(","),
                order.join(","),
            ],
        );
    }
    python_check(dir, "xdmf", &xmf);
    let read = |f: &str| std::fs::read_to_string(dir.join(f)).unwrap();
    let t = read("softened-disk-box-nested.xmf");
    assert!(
        t.contains(r#"TopologyType="3DRectMesh" NumberOfElements="7 13 15""#),
        "{t}"
    );
    assert!(
        t.contains(r#"GeometryType="VXVYVZ""#) && !t.contains("node_x"),
        "{t}"
    );
    let t = read("tapered-disk-cartesian-nested.xmf");
    assert!(
        t.contains(r#"TopologyType="2DRectMesh" NumberOfElements="25 31""#),
        "{t}"
    );
    let t = read("tapered-disk-cartesian-natural.xmf");
    assert!(
        t.contains("2DSMesh") && t.contains(r#"grid.nesting ["y", "x"] (x fastest)"#),
        "{t}"
    );
    let t = read("planet-envelope-box-nested.xmf");
    assert!(
        t.contains("3DSMesh") && t.contains(r#"grid.nesting ["z", "y", "x"]"#),
        "{t}"
    );
    assert!(read("stratified-box-2d-nested.xmf").contains("2DSMesh"));
}

#[test]
fn issue10_npy_and_raw_folders_match_the_hdf5_file_to_the_bit() {
    let d = tempfile::tempdir().unwrap();
    // Perturbed profiles too: the folders hold the state (the initial
    // condition), /state of the HDF5 file, not the background.
    for (name, raw) in [
        ("quiet-slab", vec!["--byte-order", "big"]),
        ("noisy-disk", vec![]),
        ("pulsed-slab", vec!["--array-order", "fortran"]),
        ("powerlaw-disk", vec!["--array-order", "fortran"]),
        (
            "tapered-disk-cartesian",
            vec![
                "--raw-dtype",
                "float32",
                "--byte-order",
                "big",
                "--array-order",
                "fortran",
            ],
        ),
    ] {
        let h5 = format!("{name}.h5");
        let mut args = vec!["build", name, "-o", &h5, "--npy", "--raw"];
        args.extend(raw);
        ok(d.path(), &args);
        python_check(
            d.path(),
            "arrays",
            &[h5.clone(), format!("{name}-npy"), format!("{name}-raw")],
        );
    }
    let meta =
        std::fs::read_to_string(d.path().join("tapered-disk-cartesian-raw/metadata.json")).unwrap();
    assert!(meta.contains(r#""fields_dtype": ">f4""#), "{meta}");
    assert!(
        meta.contains("written in single precision"),
        "float32 caution: {meta}"
    );
    // An existing folder is not replaced without --force.
    let o = stillpoint(
        d.path(),
        &["build", "quiet-slab", "-o", "quiet-slab.h5", "--npy"],
    );
    assert_eq!(o.status.code(), Some(2));
    ok(
        d.path(),
        &[
            "build",
            "quiet-slab",
            "-o",
            "quiet-slab.h5",
            "--npy",
            "--force",
        ],
    );
    let left: Vec<_> = std::fs::read_dir(d.path())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains("partial"))
        .collect();
    assert!(left.is_empty(), "no temporary folder left");
}

#[test]
fn issue10_csv_reads_with_numpy_pandas_and_astropy() {
    let d = tempfile::tempdir().unwrap();
    for name in ["quiet-slab", "layered-atmosphere"] {
        let h5 = format!("{name}.h5");
        ok(d.path(), &["build", name, "-o", &h5, "--csv"]);
        python_check(d.path(), "csv", &[format!("{name}.csv"), h5]);
        let record = std::fs::read_to_string(d.path().join(format!("{name}.csv.json"))).unwrap();
        assert!(record.contains(r#""generator": "stillpoint"#), "{record}");
    }
}

#[test]
fn issue10_the_h5py_example_plots_a_built_file() {
    let d = tempfile::tempdir().unwrap();
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/h5py_slice.py");
    for name in ["powerlaw-disk", "quiet-slab"] {
        ok(d.path(), &["build", name, "-o", &format!("{name}.h5")]);
        let png = format!("{name}.png");
        let o = Command::new("python3")
            .args([script, &format!("{name}.h5"), "-o", &png])
            .current_dir(d.path())
            .output()
            .expect("python3 with h5py and matplotlib (.ci/run installs them)");
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let bytes = std::fs::read(d.path().join(&png)).unwrap();
        assert!(
            bytes.starts_with(b"\x89PNG") && bytes.len() > 10_000,
            "{png}"
        );
    }
}

#[test]
fn issue10_output_fields_filters_and_cell_counts_from_parameters() {
    let d = tempfile::tempdir().unwrap();
    let disk = ok(d.path(), &["profiles", "powerlaw-disk"])
        .replace(
            r#""output": {"#,
            r#""output": { "fields": ["density", "velocity_phi"], "deflate": 4, "shuffle": true,"#,
        )
        .replace(r#""cells": 192"#, r#""cells": "N_R""#)
        .replace(r#""M": 1.0,"#, r#""M": 1.0, "N_R": 16,"#);
    std::fs::write(d.path().join("d.json"), &disk).unwrap();
    ok(
        d.path(),
        &["build", "d.json", "-o", "d.h5", "--set", "N_R=24", "--npy"],
    );
    python_check(d.path(), "arrays", &["d.h5".into(), "d-npy".into()]);
    python_check(d.path(), "xdmf", &["d.xmf".into()]);
    python_check(
        d.path(),
        "subset",
        &[
            "d.h5".into(),
            "density,velocity_phi".into(),
            "shuffle, deflate 4".into(),
            "24".into(),
        ],
    );
    for (from, to, message) in [
        (
            r#""velocity_phi"]"#,
            r#""velocity_ph"]"#,
            "output.fields: `velocity_ph` is not a field of this build (did you mean `velocity_phi`?)",
        ),
        (r#""deflate": 4, "#, "", "give deflate (1 to 9) with it"),
        (r#""deflate": 4"#, r#""deflate": 12"#, "the deflate level is 1 to 9, not 12"),
        (
            r#""N_R": 16"#,
            r#""N_R": 16.5"#,
            "grid.R.cells: expected a positive whole number of cells, the value is 16.5",
        ),
    ] {
        std::fs::write(d.path().join("bad.json"), disk.replace(from, to)).unwrap();
        let o = stillpoint(d.path(), &["build", "bad.json", "-o", "bad.h5"]);
        assert_eq!(o.status.code(), Some(2), "{}", text(&o));
        assert!(text(&o).contains(message), "{}", text(&o));
        assert!(!d.path().join("bad.h5").exists());
    }
}

/// Issue 12: a value the text table prints as `-` (here every column of a
/// row with no equilibrium, R = 0 of the power-law disk, where ρ is
/// infinite) is an empty cell of the CSV, which numpy.genfromtxt and
/// pandas.read_csv read as NaN and astropy's Table.read as masked; the
/// defined row reads back as the numbers of the text table.
#[test]
fn issue12_table_csv_leaves_undefined_values_empty_for_numpy_pandas_and_astropy() {
    let d = tempfile::tempdir().unwrap();
    let shown = ok(d.path(), &["table", "powerlaw-disk", "--at", "0,1"]);
    let row0 = shown.lines().nth(2).unwrap();
    assert_eq!(
        row0.split_whitespace().filter(|c| *c == "-").count(),
        9,
        "{shown}"
    );
    let csv = ok(
        d.path(),
        &["table", "powerlaw-disk", "--at", "0,1", "--csv"],
    );
    assert!(!csv.contains("nan") && !csv.contains("inf,"), "{csv}");
    std::fs::write(d.path().join("t.csv"), &csv).unwrap();
    let script = r#"
import sys, math
import numpy, pandas
from astropy.table import Table
f = sys.argv[1]
a = numpy.genfromtxt(f, delimiter=",", names=True, dtype=None, encoding="utf-8")
p = pandas.read_csv(f)
t = Table.read(f, format="csv")
cols = [c for c in p.columns if c not in ("R [code]", "note")]
assert len(cols) == 9, cols
for c in cols:
    assert math.isnan(p[c][0]), (c, p[c][0])
    assert hasattr(t[c], "mask") and bool(t[c].mask[0]) and not bool(t[c].mask[1]), c
for name in a.dtype.names[1:10]:
    assert math.isnan(a[name][0]), (name, a[name][0])
assert abs(p["rho [code]"][1] - 1.0) < 1e-15 and abs(a[a.dtype.names[1]][1] - 1.0) < 1e-15
assert abs(float(t["H/R [1]"][1]) - 0.05) < 1e-15
print("ok")
"#;
    let o = Command::new("python3")
        .arg("-c")
        .arg(script)
        .arg(d.path().join("t.csv"))
        .output()
        .expect("python3 runs");
    assert!(o.status.success(), "{}", text(&o));
}

/// Issue 11: a build that keeps some fields (`output.fields`) computes only
/// what they need (a mean velocity from the mean momentum and density);
/// what it writes is the full build's to the bit, under cell averages, at
/// nodes and at centres, on a Cartesian box (where the lanes run up z at
/// one R) and on a polar disk.
#[test]
fn issue11_kept_fields_are_the_full_builds_to_the_bit() {
    let d = tempfile::tempdir().unwrap();
    let rules = [
        serde_json::json!({ "rule": "average", "points": 3 }),
        serde_json::json!({ "rule": "gauss-lobatto-nodes", "points": 3 }),
        serde_json::json!({ "rule": "center" }),
    ];
    let kept = ["density", "velocity_x", "momentum_y", "energy"];
    for (name, kept) in [
        ("softened-disk-box", &kept[..]),
        ("powerlaw-disk", &["velocity_phi", "sound_speed"][..]),
    ] {
        for (i, rule) in rules.iter().enumerate() {
            let full = common::variant(d.path(), name, |v| v["sampling"] = rule.clone());
            let full_h5 = format!("{name}-{i}-full.h5");
            ok(d.path(), &["build", &full, "-o", &full_h5]);
            let some = common::variant(d.path(), name, |v| {
                v["sampling"] = rule.clone();
                v["output"]["fields"] = serde_json::json!(kept);
            });
            let some_h5 = format!("{name}-{i}-some.h5");
            ok(d.path(), &["build", &some, "-o", &some_h5]);
            let a = hdf5::File::open(d.path().join(&full_h5)).unwrap();
            let b = hdf5::File::open(d.path().join(&some_h5)).unwrap();
            assert_eq!(
                b.group("background").unwrap().member_names().unwrap().len(),
                kept.len()
            );
            for f in kept {
                let read = |h: &hdf5::File| -> Vec<u64> {
                    let v = h.dataset(&format!("background/{f}")).unwrap();
                    v.read_raw::<f64>()
                        .unwrap()
                        .iter()
                        .map(|x| x.to_bits())
                        .collect()
                };
                assert!(read(&a) == read(&b), "{name}, {rule}: {f} differs");
            }
        }
    }
}
