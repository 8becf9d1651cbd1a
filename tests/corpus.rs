//! The bad-input corpus: every file in `tests/corpus/` is one wrong input
//! (a profile, a command line, a folder) with the exact messages and exit
//! status expected. Each case is run with the real binary in an empty
//! folder, and the test asserts:
//!
//! - the exit status is the one the case states (2 bad input, 1 a failed
//!   check), and the process was not ended by a signal;
//! - nothing panicked (no "panicked at" in its output);
//! - standard output and standard error are exactly the recorded text
//!   (the folder's path is written `$DIR`);
//! - the folder holds exactly what it held before: no output file, no
//!   temporary file, nothing existing changed.
//!
//! A case file is a few header lines (`args:`, `status:`, optional `env:`
//! and `setup:`), then sections that start with a line `--- NAME`: each
//! section is a file written into the folder, except `stdout` and `stderr`,
//! the expected texts. `STILLPOINT_BLESS=1 cargo test --test corpus`
//! rewrites those two sections from what the binary prints now (the status
//! is never rewritten: it states the intent). See DEVELOPERS.md.

use std::collections::BTreeMap;
use std::fs;
use std::os::unix::process::ExitStatusExt;
use std::path::{Path, PathBuf};
use std::process::Command;

struct Case {
    path: PathBuf,
    header: Vec<String>,
    args: Vec<String>,
    env: Vec<(String, String)>,
    setup: Vec<String>,
    masks: Vec<String>,
    status: i32,
    files: Vec<(String, String)>,
    stdout: String,
    stderr: String,
}

/// Split a command line at spaces; `'...'` keeps spaces inside one argument.
fn split_args(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut any = false;
    for c in line.chars() {
        match c {
            '\'' => {
                quoted = !quoted;
                any = true;
            }
            ' ' if !quoted => {
                if any {
                    out.push(std::mem::take(&mut cur));
                    any = false;
                }
            }
            _ => {
                cur.push(c);
                any = true;
            }
        }
    }
    if any {
        out.push(cur);
    }
    out
}

fn read_case(path: &Path) -> Case {
    let text = fs::read_to_string(path).unwrap();
    let mut case = Case {
        path: path.to_path_buf(),
        header: Vec::new(),
        args: Vec::new(),
        env: Vec::new(),
        setup: Vec::new(),
        masks: Vec::new(),
        status: -1,
        files: Vec::new(),
        stdout: String::new(),
        stderr: String::new(),
    };
    let mut section: Option<(String, String)> = None;
    let mut sections = Vec::new();
    for line in text.split_inclusive('\n') {
        if let Some(name) = line.strip_prefix("--- ") {
            if let Some(s) = section.take() {
                sections.push(s);
            }
            section = Some((name.trim().to_string(), String::new()));
            continue;
        }
        match &mut section {
            Some((_, body)) => body.push_str(line),
            None => {
                case.header.push(line.trim_end_matches('\n').to_string());
                let l = line.trim();
                if let Some(a) = l.strip_prefix("args:") {
                    case.args = split_args(a.trim());
                } else if let Some(s) = l.strip_prefix("status:") {
                    case.status = s.trim().parse().expect("status: a number");
                } else if let Some(e) = l.strip_prefix("env:") {
                    let (k, v) = e.trim().split_once('=').expect("env: KEY=VALUE");
                    case.env.push((k.to_string(), v.to_string()));
                } else if let Some(s) = l.strip_prefix("setup:") {
                    case.setup.push(s.trim().to_string());
                } else if let Some(s) = l.strip_prefix("mask:") {
                    case.masks.push(s.trim_start().to_string());
                }
            }
        }
    }
    if let Some(s) = section.take() {
        sections.push(s);
    }
    for (name, body) in sections {
        match name.as_str() {
            "stdout" => case.stdout = body,
            "stderr" => case.stderr = body,
            _ => case.files.push((name, body)),
        }
    }
    assert!(!case.args.is_empty(), "{}: no `args:` line", path.display());
    assert!(
        case.status == 1 || case.status == 2,
        "{}: `status:` must be 1 (a failed check) or 2 (bad input)",
        path.display()
    );
    case
}

/// Every file under `dir` (recursively) with its contents; folders as `/`.
fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    let mut out = BTreeMap::new();
    let mut todo = vec![dir.to_path_buf()];
    while let Some(d) = todo.pop() {
        for e in fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            let rel = p.strip_prefix(dir).unwrap().to_path_buf();
            if p.is_dir() {
                out.insert(rel, b"/".to_vec());
                todo.push(p);
            } else {
                out.insert(rel, fs::read(&p).unwrap_or_default());
            }
        }
    }
    out
}

fn setup(dir: &Path, step: &str) {
    let (what, name) = step.split_once(' ').expect("setup: WHAT NAME");
    let p = dir.join(name.trim());
    match what {
        "mkdir" => fs::create_dir_all(&p).unwrap(),
        "file" => fs::write(&p, b"a previous complete file\n").unwrap(),
        other => panic!("unknown setup step `{other}`"),
    }
}

struct Run {
    status: Option<i32>,
    signal: Option<i32>,
    stdout: String,
    stderr: String,
    changed: Vec<String>,
}

fn run(case: &Case) -> Run {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().canonicalize().unwrap();
    for (name, body) in &case.files {
        let p = dir.join(name);
        if let Some(parent) = p.parent() {
            fs::create_dir_all(parent).unwrap();
        }
        fs::write(p, body).unwrap();
    }
    for step in &case.setup {
        setup(&dir, step);
    }
    let before = snapshot(&dir);
    let started = std::time::Instant::now();
    let out = Command::new(env!("CARGO_BIN_EXE_stillpoint"))
        .args(&case.args)
        .envs(case.env.iter().map(|(k, v)| (k, v)))
        .env("COLUMNS", "100")
        .current_dir(&dir)
        .output()
        .unwrap();
    let after = snapshot(&dir);
    let took = started.elapsed().as_secs_f64();
    if took > 2.0 {
        eprintln!("{}: {took:.1} s", case.path.display());
    }
    let mut changed = Vec::new();
    for (p, v) in &after {
        match before.get(p) {
            None => changed.push(format!("{} was left behind", p.display())),
            Some(b) if b != v => changed.push(format!("{} was changed", p.display())),
            _ => {}
        }
    }
    for p in before.keys() {
        if !after.contains_key(p) {
            changed.push(format!("{} was removed", p.display()));
        }
    }
    let d = dir.display().to_string();
    let clean = |b: &[u8]| mask(&String::from_utf8_lossy(b).replace(&d, "$DIR"), &case.masks);
    Run {
        status: out.status.code(),
        signal: out.status.signal(),
        stdout: clean(&out.stdout),
        stderr: clean(&out.stderr),
        changed,
    }
}

/// Replace the number just before each `mask:` text with `#`: for values
/// that differ between runs (the memory the process holds).
fn mask(text: &str, masks: &[String]) -> String {
    let mut out = text.to_string();
    for m in masks {
        let mut from = 0;
        while let Some(i) = out[from..].find(m.as_str()).map(|i| i + from) {
            let end = out[..i].trim_end().len();
            let start = out[..end]
                .rfind(|c: char| !(c.is_ascii_digit() || c == '.'))
                .map_or(0, |j| j + 1);
            out.replace_range(start..end, "#");
            from = start + 1 + (i - end) + m.len();
        }
    }
    out
}

fn bless(case: &Case, r: &Run) {
    let mut text = String::new();
    for h in &case.header {
        text.push_str(h);
        text.push('\n');
    }
    for (name, body) in &case.files {
        text.push_str(&format!("--- {name}\n{body}"));
    }
    text.push_str(&format!("--- stdout\n{}", r.stdout));
    text.push_str(&format!("--- stderr\n{}", r.stderr));
    fs::write(&case.path, text).unwrap();
}

fn cases() -> Vec<Case> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus");
    let mut paths: Vec<PathBuf> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "case"))
        .collect();
    paths.sort();
    paths.iter().map(|p| read_case(p)).collect()
}

#[test]
fn every_bad_input_gets_its_exact_message_and_no_file() {
    let blessing = std::env::var_os("STILLPOINT_BLESS").is_some();
    let cases = cases();
    assert!(cases.len() >= 60, "the corpus has {} cases", cases.len());
    let mut failures = Vec::new();
    for case in &cases {
        let r = run(case);
        let name = case.path.file_name().unwrap().to_string_lossy().to_string();
        let mut wrong = Vec::new();
        if let Some(sig) = r.signal {
            wrong.push(format!("ended by signal {sig}"));
        }
        if r.status != Some(case.status) {
            wrong.push(format!(
                "exit status {:?}, expected {}",
                r.status, case.status
            ));
        }
        if r.stdout.contains("panicked at") || r.stderr.contains("panicked at") {
            wrong.push("panicked".to_string());
        }
        wrong.extend(r.changed.iter().cloned());
        if blessing {
            bless(case, &r);
        } else {
            if r.stdout != case.stdout {
                wrong.push(format!(
                    "stdout differs:\n--- expected\n{}--- found\n{}",
                    case.stdout, r.stdout
                ));
            }
            if r.stderr != case.stderr {
                wrong.push(format!(
                    "stderr differs:\n--- expected\n{}--- found\n{}",
                    case.stderr, r.stderr
                ));
            }
        }
        if !wrong.is_empty() {
            failures.push(format!("{name}: {}", wrong.join("\n")));
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} cases fail:\n\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n\n")
    );
}

#[test]
fn the_runner_sees_a_wrong_message() {
    // The comparison can fail: a case whose recorded message is altered.
    let cases = cases();
    let case = &cases[0];
    let r = run(case);
    assert_eq!(r.stderr, case.stderr);
    assert_ne!(format!("{}x", r.stderr), case.stderr);
    assert_eq!(split_args("a 'b c'  d"), ["a", "b c", "d"]);
}
