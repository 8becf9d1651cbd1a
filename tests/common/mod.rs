//! What the integration tests share: the real binary run in a folder, and
//! its output as one text.
#![allow(dead_code)]

use std::path::Path;
use std::process::{Command, Output};

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
