//! `build --estimate` against the build it describes, measured from outside
//! (peak resident memory from `wait4`'s `ru_maxrss`, wall time of the
//! child), and builds refused by the estimate leaving nothing behind.
//! The factor of 2 is the issue's own (issue 11); the figures compared come
//! from the same machine in the same test, the best of three runs each so
//! that other work on the machine disturbs them least.

mod common;
use common::{stillpoint_with as stillpoint, text};
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Run the binary to the end; its wall time and peak resident bytes
/// (`ru_maxrss` of `wait4`, in KiB on Linux). The child is reaped by
/// `wait4` itself, not by `Child::wait`.
#[allow(clippy::zombie_processes)]
fn measured(dir: &Path, args: &[&str]) -> (Duration, u64) {
    let t = Instant::now();
    let child = Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .current_dir(dir)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("run stillpoint");
    let mut status = 0;
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: waits for our own child; `status` and `usage` are writable.
    let pid = unsafe { libc::wait4(child.id() as i32, &mut status, 0, &mut usage) };
    let took = t.elapsed();
    assert_eq!(pid, child.id() as i32, "wait4");
    assert!(
        libc::WIFEXITED(status) && libc::WEXITSTATUS(status) == 0,
        "build {args:?} failed"
    );
    (took, usage.ru_maxrss as u64 * 1024)
}

/// The number after `label` on its line of the estimate.
fn figure(estimate: &str, label: &str) -> f64 {
    let line = estimate
        .lines()
        .find(|l| l.starts_with(label))
        .unwrap_or_else(|| panic!("no `{label}` in:\n{estimate}"));
    line[label.len()..]
        .split_whitespace()
        .next()
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no number in `{line}`"))
}

fn within_two(what: &str, estimate: f64, measured: f64) {
    let ratio = estimate / measured;
    assert!(
        (0.5..=2.0).contains(&ratio),
        "{what}: estimated {estimate}, measured {measured} (ratio {ratio:.2})"
    );
}

#[test]
fn issue11_estimate_within_two_of_measured_memory_and_time() {
    for profile in ["tapered-disk-cartesian", "ring-disk"] {
        let d = tempfile::tempdir().unwrap();
        let mut est_time = f64::INFINITY;
        let (mut time, mut rss) = (f64::INFINITY, 0u64);
        let mut est_mem = 0.0;
        let mut est_bytes = 0.0;
        for round in 0..3 {
            let o = stillpoint(
                d.path(),
                &["build", profile, "--estimate", "-o", "e.h5"],
                &[],
            );
            assert!(o.status.success(), "{}", text(&o));
            let s = String::from_utf8_lossy(&o.stdout).into_owned();
            // An estimate writes nothing (from the second round on, the
            // files of the build before, the HDF5 file and its XDMF
            // description, are there).
            let left: Vec<_> = std::fs::read_dir(d.path())
                .unwrap()
                .map(|e| e.unwrap().file_name())
                .filter(|n| round == 0 || (n != "e.h5" && n != "e.xmf"))
                .collect();
            assert!(left.is_empty(), "{left:?} left by:\n{s}");
            est_time = est_time.min(figure(&s, "expected time"));
            est_mem = figure(&s, "peak memory");
            est_bytes = figure(&s, "output bytes");
            let (t, m) = measured(d.path(), &["build", profile, "-o", "e.h5", "--force"]);
            time = time.min(t.as_secs_f64());
            rss = rss.max(m);
        }
        within_two(&format!("{profile} peak memory"), est_mem, rss as f64);
        within_two(&format!("{profile} time"), est_time, time);
        let size = std::fs::metadata(d.path().join("e.h5")).unwrap().len() as f64;
        within_two(&format!("{profile} output bytes"), est_bytes, size);
    }
}

/// A grid of 10^12 cells: about 70 TB of output, more than any test
/// machine's disk.
fn huge_profile(dir: &Path) -> std::path::PathBuf {
    let src = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/profiles/tapered-disk-cartesian.json"
    );
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(src).unwrap()).unwrap();
    v["grid"]["x"]["cells"] = 1_000_000.into();
    v["grid"]["y"]["cells"] = 1_000_000.into();
    let path = dir.join("huge.json");
    std::fs::write(&path, v.to_string()).unwrap();
    path
}

#[test]
fn issue11_build_too_big_for_the_disk_is_refused_and_leaves_nothing() {
    let d = tempfile::tempdir().unwrap();
    let profiles = tempfile::tempdir().unwrap();
    let huge = huge_profile(profiles.path());
    let huge = huge.to_str().unwrap();
    for args in [
        vec!["build", huge, "-o", "h.h5"],
        vec!["build", huge, "-o", "h.h5", "--csv"],
    ] {
        let o = stillpoint(d.path(), &args, &[]);
        assert_eq!(o.status.code(), Some(2), "{}", text(&o));
        let t = text(&o);
        assert!(t.contains("the output would take"), "{t}");
        assert!(t.contains("free"), "{t}");
        assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0, "{t}");
    }
    // The same through the knob: a bundled profile and 1 MB of disk.
    let o = stillpoint(
        d.path(),
        &["build", "ring-disk", "-o", "r.h5"],
        &[("STILLPOINT_ASSUME_FREE_DISK", "1000000")],
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("STILLPOINT_ASSUME_FREE_DISK"));
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0);
}

#[test]
fn issue11_build_too_big_for_the_memory_is_refused_and_leaves_nothing() {
    let d = tempfile::tempdir().unwrap();
    for extra in [&[][..], &["--estimate"][..]] {
        let mut args = vec!["build", "ring-disk", "-o", "r.h5"];
        args.extend_from_slice(extra);
        let o = stillpoint(
            d.path(),
            &args,
            &[("STILLPOINT_ASSUME_FREE_MEMORY", "4000000")],
        );
        let t = text(&o);
        assert_eq!(o.status.code(), Some(2), "{t}");
        assert!(t.contains("of memory"), "{t}");
        assert!(t.contains("STILLPOINT_ASSUME_FREE_MEMORY"), "{t}");
        assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0, "{t}");
    }
    // A bad knob names itself.
    let o = stillpoint(
        d.path(),
        &["build", "ring-disk", "-o", "r.h5"],
        &[("STILLPOINT_ASSUME_FREE_MEMORY", "lots")],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("STILLPOINT_ASSUME_FREE_MEMORY: expected a number of bytes"));
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0);
}

/// The output size the estimate prints is the file's within 10 % (a bound
/// of this project's choosing: attributes are not counted, the file's own
/// overhead is a fixed allowance) also where the
/// file holds more than one value per cell and field: DG nodes (27 per
/// cell of a box), values at faces and staggered components, and the node
/// positions of a curvilinear XDMF mesh; and a subset of fields
/// (`output.fields`) counts only those. These were 4 to 18 times too small
/// (nodes), 9 % too small (node positions) and counted every field.
#[test]
fn issue11_estimated_output_bytes_follow_what_the_file_holds() {
    use serde_json::json;
    let d = tempfile::tempdir().unwrap();
    let box3 = json!({"x": {"from": 0.8, "to": 1.2, "cells": 24},
                      "y": {"from": 0.3, "to": 0.7, "cells": 24},
                      "z": {"from": 0.01, "to": 0.05, "cells": 24}});
    let cases = [
        (
            "nodes",
            json!({"rule": "gauss-lobatto-nodes", "points": 3}),
            None,
        ),
        (
            "faces",
            json!({"rule": "average", "points": 2, "faces": "gauss-legendre-nodes",
                   "face_points": 3, "staggered_velocity": true}),
            None,
        ),
        (
            "subset",
            json!({"rule": "average", "points": 2}),
            Some(json!(["density", "pressure"])),
        ),
    ];
    for (name, sampling, fields) in cases {
        let file = common::variant(d.path(), "softened-disk-box", |v| {
            v["grid"] = box3.clone();
            v["sampling"] = sampling.clone();
            match &fields {
                Some(f) => v["output"]["fields"] = f.clone(),
                None => {
                    v["output"].as_object_mut().unwrap().remove("fields");
                }
            }
        });
        let out = format!("{name}.h5");
        let o = stillpoint(d.path(), &["build", &file, "--estimate", "-o", &out], &[]);
        assert!(o.status.success(), "{}", text(&o));
        let s = String::from_utf8_lossy(&o.stdout).into_owned();
        let est = figure(&s, "output bytes");
        assert!(s.contains("of node positions"), "{s}");
        let o = stillpoint(d.path(), &["build", &file, "-o", &out], &[]);
        assert!(o.status.success(), "{}", text(&o));
        let size = std::fs::metadata(d.path().join(&out)).unwrap().len() as f64;
        let ratio = est / size;
        assert!(
            (0.9..=1.1).contains(&ratio),
            "{name}: estimated {est}, file {size}: {s}"
        );
        if fields.is_some() {
            assert!(s.contains("2 datasets"), "{s}");
        }
        // The check every build makes before solving counts them too: with
        // 90 % of the file's size free the build is refused.
        let free = format!("{}", (0.9 * size) as u64);
        let o = stillpoint(
            d.path(),
            &["build", &file, "-o", &format!("again-{out}")],
            &[("STILLPOINT_ASSUME_FREE_DISK", free.as_str())],
        );
        assert_eq!(o.status.code(), Some(2), "{name}: {}", text(&o));
        assert!(text(&o).contains("the output would take"), "{}", text(&o));
    }
}
