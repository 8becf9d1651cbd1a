//! What the integration tests share: the real binary run in a folder, and
//! its output as one text.
#![allow(dead_code)]

use std::path::Path;
use std::process::{Command, Output};

/// A bundled profile (printed by `stillpoint profiles NAME`) with the
/// changes `edit` makes, written into `dir` as `NAME-variant.json`.
pub fn variant(dir: &Path, name: &str, edit: impl Fn(&mut serde_json::Value)) -> String {
    let o = stillpoint(dir, &["profiles", name]);
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    edit(&mut v);
    let file = format!("{name}-variant.json");
    std::fs::write(dir.join(&file), v.to_string()).unwrap();
    file
}

/// Run the built `stillpoint` with `args` in `dir`.
pub fn stillpoint(dir: &Path, args: &[&str]) -> Output {
    stillpoint_with(dir, args, &[])
}

/// [`stillpoint`] with extra environment variables.
pub fn stillpoint_with(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(args)
        .envs(env.iter().copied())
        .current_dir(dir)
        .output()
        .expect("run stillpoint")
}

/// Standard output then standard error, as text.
pub fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

/// [`stillpoint`]'s exit code and its output as one text.
pub fn run(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    let o = stillpoint(dir, args);
    (o.status.code(), text(&o))
}

/// The (R, z) of a file's first cell (every axis at its first centre), from
/// its grid datasets: (R, …, z) cylindrical, (r, θ, …) spherical or (x, y, z)
/// Cartesian.
pub fn first_cell_rz(f: &hdf5::File) -> (f64, f64) {
    let first = |a: &str| -> Option<f64> {
        let d = f.dataset(&format!("grid/{a}_centers")).ok()?;
        Some(d.read_raw::<f64>().unwrap()[0])
    };
    if let Some(r) = first("R") {
        (r, first("z").unwrap_or(0.0))
    } else if let Some(r) = first("r") {
        let t = first("theta").unwrap_or(std::f64::consts::FRAC_PI_2);
        (r * t.sin(), r * t.cos())
    } else {
        let (x, y) = (first("x").unwrap(), first("y").unwrap_or(0.0));
        (x.hypot(y), first("z").unwrap_or(0.0))
    }
}
