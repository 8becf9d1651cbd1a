//! Outputs in progress. Every output is written under a temporary name
//! beside its target, `.<name>.partial-<pid>`, and renamed into place only
//! when complete and flushed (see [`super::commit`]). While it is written
//! its name is registered here, so that a build stopped by SIGINT (Ctrl-C),
//! SIGTERM or SIGHUP removes it before the process ends
//! ([`stop_on_signals`]). A process killed outright (SIGKILL, a crash of
//! the machine) cannot clean up: the next build of the same target removes
//! temporary files whose process no longer runs ([`remove_stale`]).

use std::ffi::OsString;
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// Temporary outputs of this process being written now.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// The temporary name of `target` for the process `pid`.
pub fn temp_path(target: &Path, pid: u32) -> PathBuf {
    let mut name = OsString::from(".");
    name.push(target.file_name().unwrap_or_default());
    name.push(format!(".partial-{pid}"));
    target.with_file_name(name)
}

/// A temporary output registered for removal on a signal; dropping it
/// takes it off the list (it does not remove the file).
#[must_use]
pub struct Pending(PathBuf);

/// Registers `temp` (a file or a folder) as being written.
pub fn register(temp: &Path) -> Pending {
    if let Ok(mut p) = PENDING.lock() {
        p.push(temp.to_path_buf());
    }
    Pending(temp.to_path_buf())
}

impl Drop for Pending {
    fn drop(&mut self) {
        if let Ok(mut p) = PENDING.lock() {
            if let Some(i) = p.iter().position(|q| *q == self.0) {
                p.swap_remove(i);
            }
        }
    }
}

/// Removes every registered temporary output (files and folders).
fn remove_pending() {
    // A signal may arrive while another thread holds the list: take it
    // regardless, the process is about to end.
    let list = match PENDING.lock() {
        Ok(p) => p.clone(),
        Err(poisoned) => poisoned.into_inner().clone(),
    };
    for p in list {
        if p.is_dir() {
            let _ = fs::remove_dir_all(&p);
        } else {
            let _ = fs::remove_file(&p);
        }
    }
}

/// Starts a thread that, on SIGINT, SIGTERM or SIGHUP, removes every
/// temporary output in progress and then ends the process as that signal
/// would have (so the exit status reports the signal).
pub fn stop_on_signals() -> std::io::Result<()> {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP])?;
    std::thread::Builder::new()
        .name("stop-on-signal".into())
        .spawn(move || {
            if let Some(sig) = signals.forever().next() {
                remove_pending();
                let _ = signal_hook::low_level::emulate_default_handler(sig);
                // Not reached for these signals (their default ends the
                // process); end without running exit handlers, which could
                // touch files other threads are writing.
                unsafe { libc::_exit(128 + sig) };
            }
        })?;
    Ok(())
}

/// Whether the process `pid` runs (it may be another user's).
fn alive(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return false;
    };
    // Signal 0 checks for existence without sending anything.
    if unsafe { libc::kill(pid, 0) } == 0 {
        return true;
    }
    std::io::Error::last_os_error().raw_os_error() != Some(libc::ESRCH)
}

/// Removes the temporary outputs of `target` left by processes that no
/// longer run (a build killed outright); returns what it removed. Those of
/// running processes (another build of the same target) are left alone.
pub fn remove_stale(target: &Path) -> Vec<PathBuf> {
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let Some(name) = target.file_name() else {
        return Vec::new();
    };
    let prefix = format!(".{}.partial-", name.to_string_lossy());
    let Ok(entries) = fs::read_dir(dir) else {
        return Vec::new();
    };
    let mut removed = Vec::new();
    for e in entries.flatten() {
        let file = e.file_name();
        let file = file.to_string_lossy();
        let Some(pid) = file.strip_prefix(&prefix) else {
            continue;
        };
        let Ok(pid) = pid.parse::<u32>() else {
            continue;
        };
        if pid == std::process::id() || alive(pid) {
            continue;
        }
        let path = e.path();
        let gone = if path.is_dir() {
            fs::remove_dir_all(&path)
        } else {
            fs::remove_file(&path)
        };
        if gone.is_ok() {
            removed.push(path);
        }
    }
    removed
}

/// Flushes a finished temporary output to the disk: the file, or every
/// file of a folder and the folder itself.
pub fn flush(temp: &Path) -> std::io::Result<()> {
    if temp.is_dir() {
        for e in fs::read_dir(temp)? {
            let p = e?.path();
            if p.is_file() {
                fs::File::open(&p)?.sync_all()?;
            }
        }
    }
    fs::File::open(temp)?.sync_all()
}

/// Flushes the folder holding `path`, so that a rename into it is on the
/// disk too (best effort: not every file system allows it).
pub fn flush_parent(path: &Path) {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stale_partials_of_dead_processes_are_removed_and_live_ones_kept() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("disk.h5");
        // A pid above the kernel's largest (pid_max ≤ 2^22) runs nowhere.
        let dead = temp_path(&target, 4_194_305 + 7);
        let mine = temp_path(&target, std::process::id());
        let other = dir.path().join(".other.h5.partial-1");
        for p in [&dead, &mine, &other] {
            fs::write(p, b"x").unwrap();
        }
        let removed = remove_stale(&target);
        assert_eq!(removed, vec![dead.clone()]);
        assert!(!dead.exists() && mine.exists() && other.exists());
    }

    #[test]
    fn registered_outputs_leave_the_list_when_dropped() {
        let p = PathBuf::from("/nonexistent/.x.partial-1");
        {
            let _g = register(&p);
            assert!(PENDING.lock().unwrap().contains(&p));
        }
        assert!(!PENDING.lock().unwrap().contains(&p));
    }
}
