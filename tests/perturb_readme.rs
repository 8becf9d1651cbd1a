//! The README's example of each kind of perturbation is true (issue 9):
//! every `json` block of its section "Each kind, with an example" is one
//! entry of a `perturbations` list that `check` accepts on a 3D disk
//! `[R, phi, z]` (the bundled `noisy-disk-3d` without its noise), and the
//! blocks show every kind.

use std::path::Path;
use std::process::Command;

const KINDS: [&str; 6] = ["pulse", "planet", "noise", "mode", "sound_wave", "formula"];

/// The `json` blocks between `### Each kind, with an example` and the next
/// heading.
fn snippets(readme: &str) -> Vec<String> {
    let start = readme
        .find("### Each kind, with an example")
        .expect("README has the section \"Each kind, with an example\"");
    let section = &readme[start..];
    let end = section[4..].find("\n#").map_or(section.len(), |e| e + 4);
    let mut out = Vec::new();
    let mut rest = &section[..end];
    while let Some(open) = rest.find("```json\n") {
        let body = &rest[open + 8..];
        let close = body.find("```").expect("a closed block");
        out.push(body[..close].to_string());
        rest = &body[close + 3..];
    }
    out
}

#[test]
fn issue9_readme_examples_of_each_kind_check() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let base: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("profiles/noisy-disk-3d.json")).unwrap(),
    )
    .unwrap();
    let d = tempfile::tempdir().unwrap();
    let mut seen = Vec::new();
    for (i, text) in snippets(&readme).iter().enumerate() {
        let entry: serde_json::Value = serde_json::from_str(text)
            .unwrap_or_else(|e| panic!("README example {i} is not one JSON object: {e}\n{text}"));
        let kind = entry["kind"].as_str().unwrap().to_string();
        let mut profile = base.clone();
        profile["perturbations"] = serde_json::Value::Array(vec![entry]);
        let file = d.path().join(format!("e{i}.json"));
        std::fs::write(&file, profile.to_string()).unwrap();
        let o = Command::new(env!("CARGO_BIN_EXE_stillpoint"))
            .args(["check", file.to_str().unwrap()])
            .output()
            .unwrap();
        let out = format!(
            "{}{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(o.status.success(), "README example {i} ({kind}):\n{out}");
        assert!(
            out.contains(&format!("perturbations[0] ({kind}):")),
            "README example {i}: no report line for the {kind}\n{out}"
        );
        seen.push(kind);
    }
    for k in KINDS {
        assert!(
            seen.iter().any(|s| s == k),
            "README shows no {k} ({seen:?})"
        );
    }
}
