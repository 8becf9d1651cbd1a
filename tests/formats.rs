//! Issue 10: files any tool opens, plots, and command-line habits. The real
//! binary in a temporary folder; outside readers (h5py, meshio, NumPy,
//! pandas, astropy) check the files through `tests/formats_check.py`.

use std::path::Path;
use std::process::{Command, Output};

fn stillpoint(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run stillpoint")
}

fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

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
