//! Issue 10: the progress bar of `build`. Silent when standard error is not
//! a terminal (a pipe here) and with `--quiet`; on a terminal (a
//! pseudo-terminal made by util-linux `script`) it shows the cells, the
//! cells per second and the time left. `STILLPOINT_PROGRESS_DELAY=0` makes
//! it show from the first slab, so the tests do not depend on the speed of
//! the machine.

use std::path::Path;
use std::process::{Command, Output};

fn build(dir: &Path, extra: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(["build", "powerlaw-disk", "--slab-rows", "4", "--force"])
        .args(extra)
        .env("STILLPOINT_PROGRESS_DELAY", "0")
        .current_dir(dir)
        .output()
        .expect("run stillpoint")
}

#[test]
fn issue10_a_build_prints_nothing_on_standard_error_when_it_is_not_a_terminal() {
    let d = tempfile::tempdir().unwrap();
    for extra in [
        &["-o", "a.h5"][..],
        &["-o", "a.h5", "--threads", "1"],
        &["-o", "a.h5", "--quiet"],
    ] {
        let o = build(d.path(), extra);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert!(
            o.stderr.is_empty(),
            "{extra:?}: stderr holds {:?}",
            String::from_utf8_lossy(&o.stderr)
        );
        let out = String::from_utf8_lossy(&o.stdout);
        assert!(out.contains("wrote a.h5"), "{out}");
        assert!(!out.contains("cells/s"), "{out}");
    }
}

/// Runs the build under `script`, which gives it a pseudo-terminal as
/// standard output and error, and returns what the terminal received.
fn on_terminal(dir: &Path, extra: &str) -> String {
    let bin = env!("CARGO_BIN_EXE_stillpoint");
    let cmd =
        format!("{bin} build powerlaw-disk -o t.h5 --force --slab-rows 4 --threads 1 {extra}");
    let o = Command::new("script")
        .args(["-qec", &cmd, "/dev/null"])
        .env("STILLPOINT_PROGRESS_DELAY", "0")
        .current_dir(dir)
        .output()
        .expect("util-linux `script` is needed for the terminal test");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8_lossy(&o.stdout).into_owned()
}

#[test]
fn issue10_on_a_terminal_the_bar_shows_cells_per_second_and_time_left() {
    let d = tempfile::tempdir().unwrap();
    let seen = on_terminal(d.path(), "");
    assert!(seen.contains("wrote t.h5"), "{seen}");
    // powerlaw-disk has 192 x 384 = 73,728 cells.
    assert!(seen.contains("of 73,728 cells"), "{seen}");
    assert!(seen.contains("cells/s") && seen.contains(" left"), "{seen}");
    // The CSV, .npy and raw outputs are sampled in memory after the HDF5
    // file, under a bar of their own.
    let arrays = on_terminal(d.path(), "--npy");
    assert!(
        arrays.contains("arrays: ") && arrays.contains("wrote t-npy"),
        "{arrays}"
    );
    assert!(!seen.contains("arrays: "), "{seen}");
    let quiet = on_terminal(d.path(), "--npy --quiet");
    assert!(quiet.contains("wrote t.h5"), "{quiet}");
    assert!(!quiet.contains("cells/s"), "{quiet}");
    assert!(quiet.contains("wrote t-npy"), "{quiet}");
}
