//! No half-written files (issue 12, part 3): a build killed outright
//! (SIGKILL) in the middle of a large write leaves the target as it was —
//! absent, or the previous complete file to the byte — and the next build
//! of that target removes the temporary file the killed one left; a build
//! stopped by SIGTERM or SIGINT removes its temporary file itself and ends
//! with the signal's status.

mod common;

use std::os::unix::process::ExitStatusExt;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use common::{stillpoint, text};

/// The bundled Cartesian disk with its cell count per axis a parameter `n`.
fn profile(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/profiles/tapered-disk-cartesian.json"
    ))
    .unwrap();
    let text = text
        .replace("\"cells\": 200", "\"cells\": \"n\"")
        .replace("\"k_taper\": 2\n", "\"k_taper\": 2,\n    \"n\": 200\n");
    assert!(text.contains("\"n\": 200"), "profile edit did not apply");
    let p = dir.join("disk.json");
    std::fs::write(&p, text).unwrap();
    p
}

/// A build of about 0.6 GB (2500 × 2500 cells), long enough to be caught
/// while it writes.
fn start_large(dir: &Path, out: &str) -> Child {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args([
            "build",
            "disk.json",
            "--set",
            "n=2500",
            "--force",
            "-o",
            out,
        ])
        .current_dir(dir)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start stillpoint")
}

/// The temporary files of `out` in `dir`.
fn partials(dir: &Path, out: &str) -> Vec<PathBuf> {
    let prefix = format!(".{out}.partial-");
    std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().starts_with(&prefix))
        .map(|e| e.path())
        .collect()
}

/// Waits until the child's temporary file for `out` holds more than 16 MB
/// (the write is under way); panics if the child ends first.
fn wait_for_write(dir: &Path, out: &str, child: &mut Child) -> PathBuf {
    let temp = dir.join(format!(".{out}.partial-{}", child.id()));
    let t = Instant::now();
    loop {
        if std::fs::metadata(&temp).map(|m| m.len()).unwrap_or(0) > 16 << 20 {
            return temp;
        }
        if let Some(s) = child.try_wait().unwrap() {
            panic!("the build ended ({s}) before it was caught writing");
        }
        assert!(t.elapsed() < Duration::from_secs(120), "no write seen");
        std::thread::sleep(Duration::from_millis(10));
    }
}

fn signal(child: &Child, sig: i32) {
    assert_eq!(unsafe { libc::kill(child.id() as i32, sig) }, 0);
}

#[test]
fn issue12_killed_build_leaves_the_previous_file_and_the_next_build_cleans_up() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    profile(d);
    // A previous complete file at the target.
    let o = stillpoint(d, &["build", "disk.json", "--set", "n=40", "-o", "disk.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let before = std::fs::read(d.join("disk.h5")).unwrap();

    let mut child = start_large(d, "disk.h5");
    let temp = wait_for_write(d, "disk.h5", &mut child);
    signal(&child, libc::SIGKILL);
    let status = child.wait().unwrap();
    assert_eq!(status.signal(), Some(libc::SIGKILL));
    assert_eq!(
        std::fs::read(d.join("disk.h5")).unwrap(),
        before,
        "the target must still hold the previous complete file"
    );
    // SIGKILL cannot be caught: the temporary file is left behind…
    assert!(temp.exists(), "the killed build's temporary file");

    // …and the next build of the same target removes it.
    let o = stillpoint(
        d,
        &[
            "build",
            "disk.json",
            "--set",
            "n=50",
            "--force",
            "-o",
            "disk.h5",
        ],
    );
    assert!(o.status.success(), "{}", text(&o));
    assert!(!temp.exists(), "stale temporary file not removed");
    assert!(partials(d, "disk.h5").is_empty());
    assert_ne!(std::fs::read(d.join("disk.h5")).unwrap(), before);

    // Killed before any earlier file existed: no target at all.
    let mut child = start_large(d, "fresh.h5");
    wait_for_write(d, "fresh.h5", &mut child);
    signal(&child, libc::SIGKILL);
    child.wait().unwrap();
    assert!(!d.join("fresh.h5").exists());
}

#[test]
fn issue12_stopped_build_removes_its_temporary_file() {
    for (sig, out) in [(libc::SIGTERM, "term.h5"), (libc::SIGINT, "int.h5")] {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        profile(d);
        let mut child = start_large(d, out);
        let temp = wait_for_write(d, out, &mut child);
        signal(&child, sig);
        let status = child.wait().unwrap();
        assert_eq!(status.signal(), Some(sig), "ended by the signal it got");
        assert!(!temp.exists(), "signal {sig}: temporary file left behind");
        assert!(partials(d, out).is_empty());
        assert!(!d.join(out).exists(), "signal {sig}: a target appeared");
    }
}

#[test]
fn issue12_output_naming_a_folder_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::create_dir(d.join("runs")).unwrap();
    let o = stillpoint(d, &["build", "quiet-slab", "-o", "runs"]);
    assert_eq!(o.status.code(), Some(2));
    let t = text(&o);
    assert!(
        t.contains("runs: is a folder; name the output file inside it"),
        "{t}"
    );
    assert!(!t.contains("--force"), "{t}");
    let o = stillpoint(d, &["build", "quiet-slab", "-o", "runs", "--force"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(d.join("runs").is_dir());
}
