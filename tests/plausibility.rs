//! Plausibility cautions: values the unit system makes implausible are
//! built or checked, but with a caution naming the likely cause. The
//! thresholds (H/R > 1, |v| > c/10) are common practice, no source; the
//! speed of light is the SI 2019 definition, 299 792 458 m/s.

mod common;

use common::{stillpoint, text};

fn disk_with(dir: &std::path::Path, edit: impl Fn(&mut serde_json::Value)) -> String {
    let mut p: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/profiles/powerlaw-disk.json"
        ))
        .unwrap(),
    )
    .unwrap();
    edit(&mut p);
    std::fs::write(dir.join("p.json"), p.to_string()).unwrap();
    let o = stillpoint(dir, &["check", "p.json"]);
    text(&o)
}

#[test]
fn a_mass_in_grams_under_astronomical_units_is_named() {
    let dir = tempfile::tempdir().unwrap();
    // A solar mass in grams, 1.989e33, where astro units take solar masses:
    // v_K = sqrt(G M / R) with G = 4 pi^2 au^3 Msun^-1 yr^-2 at R = 0.4 au is
    // 2 pi sqrt(1.989e33/0.4) = 4.43e17 au/yr, against c = 63 241 au/yr.
    let t = disk_with(dir.path(), |p| {
        p["units"] = "astro".into();
        p["parameters"]["M"] = 1.989e33.into();
    });
    assert!(t.contains("caution: v_phi reaches 4.4"), "{t}");
    assert!(t.contains("times the speed of light"), "{t}");
    assert!(t.contains("a mass in grams under units: astro"), "{t}");
    // A solar mass in solar masses: no such caution.
    let t = disk_with(dir.path(), |p| p["units"] = "astro".into());
    assert!(!t.contains("speed of light"), "{t}");
}

#[test]
fn a_disk_thicker_than_wide_is_named() {
    let dir = tempfile::tempdir().unwrap();
    // H/R = h0 (R/R0)^((1-q)/2) with the bundled q = 0.5: h0 = 2 gives
    // H/R = 2 (2.5)^0.25 = 2.51 at the outer edge (pressure support makes
    // v_phi a little smaller than v_K; the table's H/R is c/v_K).
    let t = disk_with(dir.path(), |p| p["parameters"]["h0"] = 2.0.into());
    assert!(t.contains("caution: H/R reaches 2.51487 at R = 2.5"), "{t}");
    let t = disk_with(dir.path(), |_| {});
    assert!(!t.contains("H/R reaches"), "{t}");
}

#[test]
fn a_radial_axis_below_zero_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let t = disk_with(dir.path(), |p| {
        p["grid"] = serde_json::json!({ "R": { "from": -1, "to": 2.5, "cells": 32 } });
        p["balance"]["density"] = "sigma0".into();
        p["gas"]["sound_speed_sq"] = "cs2_0".into();
        p["gravity"] = serde_json::json!({ "point_mass": "M", "softening": 0.5 });
    });
    // Refused outright by the grid (the caution in the cautions covers
    // any radial domain that reaches below zero another way).
    assert!(
        t.contains("grid: axis R: radii must be ≥ 0, first edge is -1"),
        "{t}"
    );
}

#[test]
fn the_root_attribute_gamma_is_a_number() {
    // Readers get a float, not a text to parse (the bundled slab's 1.4).
    let dir = tempfile::tempdir().unwrap();
    let o = stillpoint(dir.path(), &["build", "quiet-slab", "--reproducible"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(dir.path().join("quiet-slab.h5")).unwrap();
    let gamma: f64 = f.attr("gamma").unwrap().read_scalar().unwrap();
    assert_eq!(gamma, 1.4);
    let meta: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("quiet-slab.csv.json")).unwrap(),
    )
    .unwrap();
    assert!(
        meta["gamma"].is_number() || meta.get("gamma").is_none(),
        "{meta}"
    );
}

#[test]
fn a_central_mass_or_surface_density_in_the_wrong_units_is_named() {
    let dir = tempfile::tempdir().unwrap();
    // A solar mass typed as 1 under SI units is 1 kg; at R = 0.4 m,
    // v_K = sqrt(G M / R) and M = R v_K^2 / G = 1 kg comes back.
    let t = disk_with(dir.path(), |p| p["units"] = "si".into());
    assert!(t.contains("caution: the central mass is 1 kg"), "{t}");
    assert!(t.contains("units: si takes masses in kg"), "{t}");
    // A surface density of 1700 g cm^-2 (a common textbook disk value at
    // 1 au, from memory) typed under astro units, where it means 1700
    // M_sun au^-2; Σ = sigma0 R^-1 peaks at R = 0.4 with 4250 M_sun au^-2 =
    // 4250 x 1.98841e30 kg / (1.495978707e11 m)^2 = 3.776e11 kg m^-2.
    let t = disk_with(dir.path(), |p| {
        p["units"] = "astro".into();
        p["parameters"]["sigma0"] = 1700.0.into();
    });
    assert!(t.contains("caution: the surface density reaches"), "{t}");
    assert!(
        t.contains("4250 M_sun au^-2 at R = 0.4, that is 3.776"),
        "{t}"
    );
    assert!(!t.contains("the central mass is"), "{t}");
    // The same surface density in M_sun au^-2 (1700 g cm^-2 = 1.9e-5):
    // no caution.
    let t = disk_with(dir.path(), |p| {
        p["units"] = "astro".into();
        p["parameters"]["sigma0"] = 1.9e-5.into();
    });
    assert!(!t.contains("surface density reaches"), "{t}");
}
