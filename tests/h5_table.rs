//! Issue 10: h5py reads every dataset and attribute of a 1D, a 2D and a 3D
//! file and checks the values against the tool's `table` output
//! (`tests/h5_table_check.py`, which names its sources). The bundled
//! profiles are built with cell-centre point values so that each cell holds
//! the state at its centre; the 3D file is a stratified disk on a
//! cylindrical grid with a cell centre on the midplane.

mod common;
use common::{stillpoint, text};
use std::path::Path;
use std::process::Command;

/// The bundled profile `name` with cell-centre sampling, and `grid` in
/// place of its grid when given, saved as `NAME.json` in `dir`.
fn centred(dir: &Path, name: &str, grid: Option<serde_json::Value>) -> String {
    let o = stillpoint(dir, &["profiles", name]);
    assert!(o.status.success(), "{}", text(&o));
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["sampling"] = serde_json::json!({ "rule": "center" });
    if let Some(g) = grid {
        v["grid"] = g;
    }
    let file = format!("{name}.json");
    std::fs::write(dir.join(&file), serde_json::to_string_pretty(&v).unwrap()).unwrap();
    file
}

#[test]
fn issue10_h5py_reads_every_dataset_and_attribute_and_matches_table() {
    let d = tempfile::tempdir().unwrap();
    let cases = [
        // 1D, SI units with a temperature.
        (centred(d.path(), "layered-atmosphere", None), "1D", 300),
        // 2D polar, axisymmetric: every azimuth equals the table.
        (centred(d.path(), "powerlaw-disk", None), "2D", 192 * 384),
        // 3D cylindrical [R, phi, z]: 5 z cells, the middle one on z = 0.
        (
            centred(
                d.path(),
                "flared-disk-spherical",
                Some(serde_json::json!({
                    "R": { "from": 0.6, "to": 2.0, "cells": 12 },
                    "phi": { "cells": 4 },
                    "z": { "from": -0.15, "to": 0.15, "cells": 5 }
                })),
            ),
            "3D",
            12 * 4,
        ),
    ];
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/h5_table_check.py");
    for (profile, dims, cells) in cases {
        let h5 = profile.replace(".json", ".h5");
        let o = stillpoint(d.path(), &["build", &profile, "-o", &h5]);
        assert!(o.status.success(), "{dims}: {}", text(&o));
        assert!(
            text(&o).contains("cell-centre point values"),
            "{}",
            text(&o)
        );
        let o = Command::new("python3")
            .args([script, env!("CARGO_BIN_EXE_stillpoint"), &profile, &h5])
            .current_dir(d.path())
            .output()
            .expect("python3 with h5py and numpy is needed (.ci/run installs them)");
        let out = text(&o);
        assert!(o.status.success(), "{dims}: {out}");
        assert!(out.contains(": ok"), "{dims}: {out}");
        assert!(
            out.contains(&format!("agree with `table` on {cells} cells")),
            "{dims}: {out}"
        );
        for field in ["density", "pressure", "sound_speed", "energy", "potential"] {
            assert!(out.contains(field), "{dims}: {field} compared: {out}");
        }
    }
}
