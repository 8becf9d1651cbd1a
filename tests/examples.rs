//! Issue 10: the library example `examples/build_and_sample.rs`, compiled
//! here as a module and run on the bundled power-law disk, against the
//! disk's closed form.
//!
//! The vertically integrated power-law disk Σ = Σ₀ (R/R₀)^(−p) with
//! c² = c₀² (R/R₀)^(−q) around a point mass (G = M = R₀ = Σ₀ = 1 in the
//! profile) has P = Σc² and, from the radial balance
//! v_φ²/R = ∂Φ/∂R + (1/Σ) ∂P/∂R, v_φ² = 1/R − (p + q) c₀² R^(−q): the
//! sub-Keplerian rotation of a pressure-supported disk, v_φ² = v_K² (1 −
//! (p + q) c²/v_K²) (derived here in one line; the same form as e.g.
//! Armitage 2010, *Astrophysics of Planet Formation*, §4.2, from memory).
//! A cell average of Σ over [R_a, R_b] weighted by R dR is
//! 2 (R_b − R_a) / (R_b² − R_a²) = 2 / (R_a + R_b), which the profile's
//! 3-point Gauss–Legendre rule integrates exactly.

#[allow(dead_code)]
#[path = "../examples/build_and_sample.rs"]
mod example;

#[test]
fn issue10_the_library_example_builds_and_samples_the_power_law_disk() {
    let points = [0.5, 1.0, 2.0];
    let (line, cells) = example::run("powerlaw-disk", &[], &points, 3).expect("example runs");
    let (p, q, c0) = (1.0, 0.5, 0.05f64 * 0.05);
    let rel = |a: f64, b: f64| ((a - b) / b).abs();
    for [r, rho, pr, v] in line {
        assert!(rel(rho, 1.0 / r) < 1e-14, "Σ({r}) = {rho}");
        assert!(rel(pr, c0 * r.powf(-1.5)) < 1e-14, "P({r}) = {pr}");
        let v2 = 1.0 / r - (p + q) * c0 * r.powf(-q);
        assert!(rel(v * v, v2) < 1e-13, "v_φ²({r}) = {} vs {v2}", v * v);
    }
    // The first cells of the log-spaced R axis 0.4 … 2.5 (192 cells).
    let (ra, rb) = (0.4f64, 0.4 * (2.5f64 / 0.4).powf(1.0 / 192.0));
    assert_eq!(cells.len(), 3);
    for c in &cells {
        let density = c.values.iter().find(|(n, _)| n == "density").unwrap().1;
        assert!(rel(density, 2.0 / (ra + rb)) < 1e-13, "{density}");
        assert!(rel(c.centre[0], 0.5 * (ra + rb)) < 1e-12);
    }
    // The cells of one row lie along φ (the last axis runs fastest).
    assert!(cells[1].centre[1] > cells[0].centre[1]);
    // An override reaches the library as it reaches `--set`.
    let set = [("p".to_string(), "2".to_string())];
    let (line, _) = example::run("powerlaw-disk", &set, &[2.0], 0).unwrap();
    assert!(
        rel(line[0][1], 0.25) < 1e-14,
        "Σ(2) with p = 2: {}",
        line[0][1]
    );
}
