//! The profile loader on any text: a profile either resolves or is refused
//! with an error; nothing may panic, overflow the stack or allocate without
//! bound.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if data.len() > 8192 {
        return;
    }
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    // An empty folder: an `edges_file` names nothing that exists.
    let dir = std::env::temp_dir().join("stillpoint-fuzz-empty");
    let _ = stillpoint::profile::from_text("fuzz.json", text, &dir, &[]);
});
