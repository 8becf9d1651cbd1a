//! Issue 10: `stillpoint plot`. Every plot kind for every bundled profile
//! where the kind applies, as PNG and as SVG, read back by outside readers
//! (`tests/plots_check.py`: Pillow decodes the PNGs, xml.etree parses the
//! SVGs); the kinds that do not apply are refused with a clear message and
//! leave no file.

mod common;
use common::{stillpoint, text};
use std::path::Path;
use std::process::Command;

/// Small images keep the test quick.
const W: u32 = 360;
const H: u32 = 270;

/// The bundled profiles: name, number of grid axes, whether a torus.
fn bundled() -> Vec<(String, usize, bool)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles");
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.extension().and_then(|x| x.to_str()) != Some("json") {
            continue;
        }
        let v: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap();
        let axes = v["grid"].as_object().unwrap().len();
        let torus = v["balance"].get("torus").is_some();
        let name = p.file_stem().unwrap().to_string_lossy().into_owned();
        out.push((name, axes, torus));
    }
    out.sort();
    assert!(out.len() >= 15, "{out:?}");
    out
}

/// The PNG signature and the IHDR chunk's width and height (W3C PNG
/// specification, sections 5.2 and 11.2.2).
fn png_size(bytes: &[u8]) -> (u32, u32) {
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    assert_eq!(&bytes[12..16], b"IHDR");
    let be = |b: &[u8]| u32::from_be_bytes([b[0], b[1], b[2], b[3]]);
    (be(&bytes[16..20]), be(&bytes[20..24]))
}

#[test]
fn issue10_every_plot_kind_of_every_bundled_profile_is_a_readable_png_and_svg() {
    let d = tempfile::tempdir().unwrap();
    let size = format!("{W}x{H}");
    let mut manifest = Vec::new();
    let mut refused = 0;
    for (name, axes, torus) in bundled() {
        for what in ["curves", "slice", "residual"] {
            let applies = match what {
                "slice" => axes >= 2,
                _ => !torus,
            };
            for ext in ["png", "svg"] {
                let file = format!("{name}-{what}.{ext}");
                let o = stillpoint(
                    d.path(),
                    &["plot", &name, "-o", &file, "--what", what, "--size", &size],
                );
                let path = d.path().join(&file);
                if !applies {
                    refused += 1;
                    assert_eq!(o.status.code(), Some(2), "{file}: {}", text(&o));
                    let why = if what == "slice" {
                        "a slice needs a 2D or 3D grid"
                    } else {
                        "is a torus (balance.torus), solved in (R, z) and not along a line; \
                         plot it with --what slice"
                    };
                    assert!(text(&o).contains(why), "{file}: {}", text(&o));
                    assert!(!path.exists(), "{file} written although refused");
                    continue;
                }
                assert!(o.status.success(), "{file}: {}", text(&o));
                assert!(text(&o).contains(&format!("wrote {file}")), "{}", text(&o));
                let bytes = std::fs::read(&path).unwrap();
                assert!(bytes.len() > 2000, "{file}: {} bytes", bytes.len());
                if ext == "png" {
                    assert_eq!(png_size(&bytes), (W, H), "{file}");
                } else {
                    let t = String::from_utf8(bytes).unwrap();
                    assert!(t.contains("<svg"), "{file}");
                }
                manifest.push(serde_json::json!({
                    "file": path.to_string_lossy(),
                    "width": W,
                    "height": H,
                    "title": name,
                }));
            }
        }
    }
    // 3 one-dimensional profiles refuse slices; the torus refuses curves
    // and residuals; each in two formats.
    assert_eq!(refused, 2 * (3 + 2), "refusals");
    let m = d.path().join("manifest.json");
    std::fs::write(&m, serde_json::to_string(&manifest).unwrap()).unwrap();
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/plots_check.py");
    let o = Command::new("python3")
        .arg(&script)
        .arg(&m)
        .output()
        .expect("python3");
    assert!(o.status.success(), "plots_check.py: {}", text(&o));
    assert!(
        text(&o).contains(&format!("{} images read", manifest.len())),
        "{}",
        text(&o)
    );
}

#[test]
fn issue10_plot_titles_name_the_overrides_and_refuse_bad_requests() {
    let d = tempfile::tempdir().unwrap();
    let p = |args: &[&str]| stillpoint(d.path(), args);
    let o = p(&[
        "plot",
        "powerlaw-disk",
        "-o",
        "a.svg",
        "--size",
        "400x300",
        "--set",
        "p=1.5",
    ]);
    assert!(o.status.success(), "{}", text(&o));
    let svg = std::fs::read_to_string(d.path().join("a.svg")).unwrap();
    assert!(svg.contains("--set p=1.5"), "the title names the override");
    assert!(svg.contains("powerlaw-disk"));
    // Units on the axes: the disk is in code units, the atmosphere in SI.
    assert!(svg.contains("R [code]"), "axis label with units");
    let o = p(&[
        "plot",
        "layered-atmosphere",
        "-o",
        "b.svg",
        "--size",
        "400x300",
    ]);
    assert!(o.status.success(), "{}", text(&o));
    let svg = std::fs::read_to_string(d.path().join("b.svg")).unwrap();
    assert!(svg.contains("z [m]") && svg.contains("temperature T [K]"));
    assert!(svg.contains("no --set"));

    // A stratified disk's residual has its vertical balance too, which
    // simplifies to 0 for the bundled flared disk (as `check` finds).
    let o = p(&[
        "plot",
        "flared-disk-spherical",
        "-o",
        "r.svg",
        "--what",
        "residual",
        "--size",
        "600x300",
    ]);
    assert!(o.status.success(), "{}", text(&o));
    let svg = std::fs::read_to_string(d.path().join("r.svg")).unwrap();
    assert!(svg.contains("radial balance at z = 0"), "radial panel");
    assert!(
        svg.contains(
            "vertical balance, largest over z in [-0.4754, 0.4754]: the residual simplifies to 0"
        ),
        "vertical panel"
    );

    // Nothing is overwritten without --force.
    let o = p(&["plot", "powerlaw-disk", "-o", "a.svg"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains("the file exists; pass --force"),
        "{}",
        text(&o)
    );
    let o = p(&[
        "plot",
        "powerlaw-disk",
        "-o",
        "a.svg",
        "--force",
        "--size",
        "400x300",
    ]);
    assert!(o.status.success(), "{}", text(&o));

    let refusals: [(&[&str], &str); 5] = [
        (
            &["plot", "powerlaw-disk", "-o", "c.jpg"],
            "c.jpg: the image needs the extension .png or .svg",
        ),
        (
            &[
                "plot",
                "powerlaw-disk",
                "-o",
                "c.png",
                "--field",
                "pressure",
            ],
            "--field: only --what slice shows a field",
        ),
        (
            &[
                "plot",
                "powerlaw-disk",
                "-o",
                "c.png",
                "--what",
                "slice",
                "--field",
                "densty",
            ],
            "`densty` is not a field of bundled:powerlaw-disk (did you mean `density`?)",
        ),
        (
            &["plot", "powerlaw-disk", "-o", "c.png", "--size", "10x10"],
            "expected WIDTHxHEIGHT in pixels",
        ),
        (
            &["plot", "quiet-slab", "-o", "c.png", "--what", "slice"],
            "bundled:quiet-slab has a 1D grid (z); a slice needs a 2D or 3D grid (plot it with \
             --what curves)",
        ),
    ];
    for (args, message) in refusals {
        let o = p(args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", text(&o));
        assert!(text(&o).contains(message), "{args:?}: {}", text(&o));
        assert!(!d.path().join("c.png").exists() && !d.path().join("c.jpg").exists());
    }
}
