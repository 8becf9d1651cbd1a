//! Each physical constant against its published set, through astropy
//! (`tests/constants_check.py`): CODATA 2018, IAU 2015 B3, IAU 2012 B2.

use std::io::Write;
use std::process::{Command, Stdio};

use stillpoint::units::{self, UnitSystem};

#[test]
fn constants_match_astropy() {
    let values = serde_json::json!({
        "G_SI": units::G_SI,
        "K_B_SI": units::K_B_SI,
        "M_U_SI": units::M_U_SI,
        "GM_SUN_SI": units::GM_SUN_SI,
        "AU_SI": units::AU_SI,
        "M_SUN_SI": units::M_SUN_SI,
        "YEAR_SI": units::YEAR_SI,
        "cgs_G": UnitSystem::Cgs.constants().g,
        "astro_G": UnitSystem::Astro.constants().g,
    });
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/constants_check.py");
    let mut child = Command::new("python3")
        .arg(script)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("python3 is needed for this test (.ci/run installs it with astropy)");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(values.to_string().as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    println!("{text}");
    assert!(
        out.status.success(),
        "astropy disagrees or is missing:\n{text}"
    );
    assert!(text.contains("0 disagreements"));
}
