//! Reproducibility (issue 12, part 6): every field dataset records the
//! SHA-256 of its values, checked from outside with h5py and hashlib
//! (`tests/reproduce_check.py`) on 1D, 2D and 3D files, single precision
//! and a torus; the same profile gives the same checksums with any thread
//! count and slab size; `stillpoint confirm` passes an untouched file,
//! rebuilding it from its recorded profile, and fails one whose values
//! changed by one unit in the last place.

mod common;

use std::path::Path;
use std::process::Command;

use common::{stillpoint, text};

fn python(dir: &Path, verb: &str, args: &[&str]) {
    let o = Command::new("python3")
        .arg(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/reproduce_check.py"
        ))
        .arg(verb)
        .args(args)
        .current_dir(dir)
        .output()
        .expect("python3 with h5py and numpy is needed (.ci/run installs them)");
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(
        o.status.success() && out.contains(&format!("{verb}: ok")),
        "{verb}: {out}{}",
        String::from_utf8_lossy(&o.stderr)
    );
}

fn ok(dir: &Path, args: &[&str]) -> String {
    let o = stillpoint(dir, args);
    assert!(o.status.success(), "{args:?}: {}", text(&o));
    text(&o)
}

/// The `checksum` attribute of every field dataset, with its path.
fn checksums(file: &Path) -> Vec<(String, String)> {
    let o = stillpoint(
        file.parent().unwrap(),
        &["confirm", "--no-rebuild", file.to_str().unwrap()],
    );
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(file).unwrap();
    let mut out = Vec::new();
    for g in ["background", "perturbation", "state"] {
        let Ok(group) = f.group(g) else { continue };
        for name in group.member_names().unwrap() {
            let ds = group.dataset(&name).unwrap();
            let sum: hdf5::types::VarLenUnicode =
                ds.attr("checksum").unwrap().read_scalar().unwrap();
            out.push((format!("/{g}/{name}"), sum.as_str().to_string()));
        }
    }
    out.sort();
    out
}

#[test]
fn issue12_checksums_agree_with_hashlib_in_every_dimension() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["build", "quiet-slab", "-o", "one.h5"]);
    ok(d, &["build", "planet-disk", "-o", "two.h5"]);
    ok(d, &["build", "flared-disk-spherical", "-o", "three.h5"]);
    ok(d, &["build", "thick-torus", "-o", "torus.h5"]);
    // Single precision: hashed as the 4-byte values stored.
    let single = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/profiles/softened-disk-box.json"
    ))
    .unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&single).unwrap();
    v["output"]["precision"] = "single".into();
    std::fs::write(d.join("single.json"), v.to_string()).unwrap();
    ok(d, &["build", "single.json", "-o", "single.h5"]);
    python(
        d,
        "sums",
        &["one.h5", "two.h5", "three.h5", "torus.h5", "single.h5"],
    );
}

#[test]
fn issue12_checksums_do_not_depend_on_threads_or_slabs() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["build", "noisy-disk", "-o", "a.h5", "--threads", "1"]);
    ok(
        d,
        &[
            "build",
            "noisy-disk",
            "-o",
            "b.h5",
            "--threads",
            "2",
            "--slab-rows",
            "3",
        ],
    );
    let (a, b) = (checksums(&d.join("a.h5")), checksums(&d.join("b.h5")));
    assert!(!a.is_empty());
    assert_eq!(a, b);
}

#[test]
fn issue12_confirm_rebuilds_and_catches_a_changed_value() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(
        d,
        &["build", "pulsed-slab", "-o", "p.h5", "--set", "eta=2e-6"],
    );
    let t = ok(d, &["confirm", "p.h5"]);
    assert!(
        t.contains("verdict: intact, and reproduced by its profile"),
        "{t}"
    );
    assert!(!t.contains("DIFFERS"), "{t}");
    // The recorded profile holds the override: the rebuild reproduces it.
    assert!(t.contains("rebuilt identical to the bit"), "{t}");

    python(d, "spoil", &["p.h5", "/state/pressure"]);
    let o = stillpoint(d, &["confirm", "p.h5"]);
    let t = text(&o);
    assert_eq!(o.status.code(), Some(1), "{t}");
    assert!(
        t.contains("/state/pressure") && t.contains("DIFFERS from its checksum"),
        "{t}"
    );
    assert!(t.contains("verdict: NOT CONFIRMED"), "{t}");
    // Only that dataset.
    assert_eq!(t.matches("DIFFERS from its checksum").count(), 1, "{t}");

    let o = stillpoint(d, &["confirm", "missing.h5"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains("missing.h5: no such file"),
        "{}",
        text(&o)
    );
}
