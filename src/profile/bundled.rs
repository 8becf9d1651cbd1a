//! The profiles shipped with stillpoint, compiled into the binary so that
//! `stillpoint build NAME` works from any directory. The files themselves
//! live in `profiles/` at the top of the repository.

/// (name, JSON text) of every bundled profile.
pub const BUNDLED: &[(&str, &str)] = &[
    ("quiet-slab", include_str!("../../profiles/quiet-slab.json")),
    (
        "layered-atmosphere",
        include_str!("../../profiles/layered-atmosphere.json"),
    ),
    (
        "powerlaw-disk",
        include_str!("../../profiles/powerlaw-disk.json"),
    ),
    (
        "tapered-disk-cartesian",
        include_str!("../../profiles/tapered-disk-cartesian.json"),
    ),
    ("ring-disk", include_str!("../../profiles/ring-disk.json")),
    (
        "steady-vortex",
        include_str!("../../profiles/steady-vortex.json"),
    ),
    (
        "pulsed-slab",
        include_str!("../../profiles/pulsed-slab.json"),
    ),
    (
        "planet-disk",
        include_str!("../../profiles/planet-disk.json"),
    ),
    ("mode-disk", include_str!("../../profiles/mode-disk.json")),
    ("noisy-disk", include_str!("../../profiles/noisy-disk.json")),
    (
        "noisy-disk-3d",
        include_str!("../../profiles/noisy-disk-3d.json"),
    ),
    (
        "flared-disk-spherical",
        include_str!("../../profiles/flared-disk-spherical.json"),
    ),
    (
        "softened-disk-box",
        include_str!("../../profiles/softened-disk-box.json"),
    ),
    (
        "stratified-box-2d",
        include_str!("../../profiles/stratified-box-2d.json"),
    ),
    (
        "thick-torus",
        include_str!("../../profiles/thick-torus.json"),
    ),
    (
        "warm-layer-disk",
        include_str!("../../profiles/warm-layer-disk.json"),
    ),
    (
        "polytropic-envelope",
        include_str!("../../profiles/polytropic-envelope.json"),
    ),
    (
        "planet-envelope-box",
        include_str!("../../profiles/planet-envelope-box.json"),
    ),
    (
        "keplerian-audit",
        include_str!("../../profiles/keplerian-audit.json"),
    ),
];

/// The text of a bundled profile by name.
pub fn find(name: &str) -> Option<&'static str> {
    BUNDLED.iter().find(|(n, _)| *n == name).map(|(_, t)| *t)
}

/// The `about` line of a bundled profile.
pub fn about(text: &str) -> String {
    serde_json::from_str::<serde_json::Value>(text)
        .ok()
        .and_then(|v| v.get("about").and_then(|a| a.as_str()).map(str::to_string))
        .unwrap_or_default()
}
