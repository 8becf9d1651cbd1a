//! Issue 8, part 4: the drift forecast of `check` and of the file metadata
//! (src/drift/): observed orders of the two schemes on smooth backgrounds,
//! the verdict against an amplitude, the resolution it asks for, and the
//! record in the file.

mod common;
use common::{stillpoint, text, variant};

/// The numbers of the forecast's resolution lines of the scheme whose
/// `scheme` line contains `name`: (cells, max acceleration, drift), and
/// its observed orders.
fn scheme(out: &str, name: &str) -> (Vec<(usize, f64, f64)>, Vec<f64>) {
    let lines: Vec<&str> = out
        .lines()
        .skip_while(|l| !l.starts_with("drift forecast"))
        .skip_while(|l| !(l.starts_with("  scheme") && l.contains(name)))
        .skip(1)
        .take_while(|l| l.starts_with("    "))
        .collect();
    let mut levels = Vec::new();
    let mut orders = Vec::new();
    for l in lines {
        let w: Vec<&str> = l.split_whitespace().collect();
        if w.get(1) == Some(&"cells") {
            let after = |key: &str| {
                let i = w.iter().position(|x| *x == key).unwrap();
                w[i + 1].trim_end_matches(',').parse::<f64>().unwrap()
            };
            levels.push((w[0].parse().unwrap(), after("acceleration"), after("drift")));
        } else if l.trim_start().starts_with("observed order") {
            orders = l
                .trim_start()
                .trim_start_matches("observed order")
                .split(',')
                .map(|x| x.trim().parse().unwrap())
                .collect();
        }
    }
    assert_eq!(levels.len(), 3, "{name}: {out}");
    (levels, orders)
}

/// MUSCL with a local Lax–Friedrichs flux is second order on smooth data
/// (Toro 2009, *Riemann Solvers and Numerical Methods for Fluid Dynamics*,
/// the MUSCL approach of ch. 13 and 14 — from memory): the isothermal slab (cell averages, 256 cells)
/// and the power-law disk (log-spaced R, a disk's geometric and
/// centrifugal sources) show 2 ± 0.1 at both refinements.
#[test]
fn issue8_finite_volume_drift_is_second_order_on_smooth_backgrounds() {
    let d = tempfile::tempdir().unwrap();
    for (p, coord) in [("quiet-slab", "z"), ("powerlaw-disk", "R")] {
        let o = stillpoint(d.path(), &["check", p]);
        let out = text(&o);
        assert!(o.status.success(), "{out}");
        let (levels, orders) = scheme(&out, "finite volume");
        assert_eq!(orders.len(), 2, "{out}");
        for q in &orders {
            assert!((q - 2.0).abs() < 0.1, "{p}: order {q}: {out}");
        }
        // The orders are those of the largest accelerations printed.
        for (w, q) in levels.windows(2).zip(&orders) {
            assert!(((w[0].1 / w[1].1).log2() - q).abs() < 0.01, "{p}: {out}");
            assert_eq!(w[1].0, 2 * w[0].0);
        }
        assert!(out.contains(&format!("at {coord} = ")), "{out}");
    }
}

/// Nodal DG of degree k on the slab's node values. The residual at the
/// nodes is the truncation error of the nodal operator: the derivative of
/// the degree-k interpolant, O(h^k) (the solution error of DG is
/// O(h^(k+1)); Hesthaven & Warburton 2008, *Nodal Discontinuous Galerkin
/// Methods*, ch. 4 — from memory). Observed: Gauss–Lobatto nodes give k;
/// Gauss–Legendre nodes give k for odd k and k + 1 for even k (a gain of
/// one order from the symmetric interior nodes: observed here, no source).
#[test]
fn issue8_nodal_dg_drift_converges_at_the_order_of_its_degree() {
    let d = tempfile::tempdir().unwrap();
    let cases = [
        ("gauss-lobatto", 2, 1.0),
        ("gauss-lobatto", 3, 2.0),
        ("gauss-lobatto", 4, 3.0),
        ("gauss-lobatto", 5, 4.0),
        ("gauss-legendre", 2, 1.0),
        ("gauss-legendre", 3, 3.0),
        ("gauss-legendre", 4, 3.0),
        ("gauss-legendre", 5, 5.0),
    ];
    for (family, points, want) in cases {
        let file = variant(d.path(), "quiet-slab", |v| {
            v["sampling"] =
                serde_json::json!({"rule": format!("{family}-nodes"), "points": points});
            v["grid"]["z"]["cells"] = 32.into();
        });
        let o = stillpoint(d.path(), &["check", &file]);
        let out = text(&o);
        let (_, orders) = scheme(&out, &format!("degree {}", points - 1));
        for q in &orders {
            assert!(
                (q - want).abs() < 0.15,
                "{family} {points}: {q} not {want}: {out}"
            );
        }
        assert!(out.contains("node values as the file holds them"), "{out}");
    }
}

/// With an amplitude the verdict says whether the drift exceeds it and
/// which resolution would hold it; a check at that resolution confirms it
/// (the second-order extrapolation is reached to within 10 %).
#[test]
fn issue8_drift_verdict_names_the_resolution_needed() {
    let d = tempfile::tempdir().unwrap();
    let o = stillpoint(d.path(), &["check", "quiet-slab", "--amplitude", "1e-6"]);
    let out = text(&o);
    assert!(o.status.success(), "{out}");
    let line = out
        .lines()
        .find(|l| l.contains("verdict      finite volume: DRIFTS"))
        .unwrap_or_else(|| panic!("{out}"));
    let cells: usize = line
        .split("about ")
        .nth(1)
        .and_then(|r| r.split(' ').next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("{line}"));
    let (levels, orders) = scheme(&out, "finite volume");
    // From the printed (rounded) drift and order: the same to 1 %.
    let want = 256.0 * (levels[0].2 / 1e-6).powf(1.0 / orders[1]);
    assert!((cells as f64 / want - 1.0).abs() < 0.01, "{line}: {want}");
    assert!(
        out.contains("caution: a scheme without well-balancing drifts"),
        "{out}"
    );
    assert!(
        out.contains("at this resolution nodal DG of degree"),
        "{out}"
    );
    // At that resolution the drift is at the amplitude.
    let file = variant(d.path(), "quiet-slab", |v| {
        v["grid"]["z"]["cells"] = cells.into();
    });
    let o = stillpoint(d.path(), &["check", &file, "--amplitude", "1e-6"]);
    let out = text(&o);
    let (levels, _) = scheme(&out, "finite volume");
    assert!(levels[0].2 < 1.1e-6, "{out}");
    assert!(out.contains("less than the amplitude"), "{out}");
    // A bad amplitude is refused with the option named.
    let o = stillpoint(d.path(), &["check", "quiet-slab", "--amplitude=0"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("--amplitude"), "{}", text(&o));
}

/// A build records the forecast in its metadata (`drift_forecast`, JSON),
/// the same numbers `check` prints; a stratified disk says it is not
/// covered.
#[test]
fn issue8_drift_forecast_is_recorded_in_the_file() {
    let d = tempfile::tempdir().unwrap();
    let o = stillpoint(d.path(), &["build", "quiet-slab", "-o", "slab.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("slab.h5")).unwrap();
    let s: hdf5::types::VarLenUnicode = f.attr("drift_forecast").unwrap().read_scalar().unwrap();
    let v: serde_json::Value = serde_json::from_str(s.as_str()).unwrap();
    let fv = &v["schemes"][0];
    let levels = fv["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 3);
    let o = stillpoint(d.path(), &["check", "quiet-slab"]);
    let (printed, _) = scheme(&text(&o), "finite volume");
    for (l, p) in levels.iter().zip(&printed) {
        let a = l["max_acceleration"].as_f64().unwrap();
        assert!((a / p.1 - 1.0).abs() < 1e-3, "{a} vs {}", p.1);
        assert_eq!(l["cells"].as_u64().unwrap() as usize, p.0);
    }
    for q in fv["observed_order"].as_array().unwrap() {
        assert!((q.as_f64().unwrap() - 2.0).abs() < 0.1, "{v}");
    }
    // A stratified disk is now forecast on its plane (it used to say "not
    // evaluated: a stratified disk"); a plane with fewer than five cells
    // along an axis is not.
    let o = stillpoint(d.path(), &["check", "warm-layer-disk"]);
    assert!(
        text(&o).contains("drift forecast") && text(&o).contains("unsplit over [r, theta]"),
        "{}",
        text(&o)
    );
    let file = variant(d.path(), "noisy-disk-3d", |v| {
        v["grid"]["z"]["cells"] = 4.into();
    });
    let o = stillpoint(d.path(), &["check", &file]);
    assert!(
        text(&o).contains("not evaluated: fewer than five cells along z"),
        "{}",
        text(&o)
    );
}

/// A bundled profile with the grid replaced by `grid` and its
/// perturbations removed, written as `TAG.json`.
fn on_grid(dir: &std::path::Path, name: &str, tag: &str, grid: serde_json::Value) -> String {
    let file = variant(dir, name, |v| {
        v["grid"] = grid.clone();
        v.as_object_mut().unwrap().remove("perturbations");
    });
    let to = format!("{tag}.json");
    std::fs::rename(dir.join(file), dir.join(&to)).unwrap();
    to
}

/// The smooth states on planes and boxes of the multi-dimensional
/// forecast, with the plane it runs on and the cells per level's growth.
fn smooth_planes(dir: &std::path::Path) -> Vec<(String, &'static str, usize)> {
    use serde_json::json;
    vec![
        // A stratified disk below z = H, away from the midplane and from
        // the height z ≈ 1.34 H where the density has a maximum along R.
        (
            on_grid(
                dir,
                "noisy-disk-3d",
                "rz",
                json!({"R": {"from": 1.0, "to": 2.0, "cells": 32},
                       "z": {"from": 0.01, "to": 0.05, "cells": 16}}),
            ),
            "[R, z]",
            4,
        ),
        // The same on [R, phi, z]: evaluated on its meridional plane.
        (
            on_grid(
                dir,
                "noisy-disk-3d",
                "rphiz",
                json!({"R": {"from": 1.0, "to": 2.0, "cells": 32}, "phi": {"cells": 4},
                       "z": {"from": 0.01, "to": 0.05, "cells": 16}}),
            ),
            "[R, z]",
            4,
        ),
        (
            on_grid(
                dir,
                "noisy-disk-3d",
                "rtheta",
                json!({"r": {"from": 1.0, "to": 2.0, "cells": 32},
                       "theta": {"from": "pi/2 - 0.05", "to": "pi/2 - 0.01", "cells": 16}}),
            ),
            "[r, theta]",
            4,
        ),
        // A disk on Cartesian axes, off the axis and off the lines
        // y = √2 x and x = √2 y where v_x and v_y have extrema.
        (
            on_grid(
                dir,
                "tapered-disk-cartesian",
                "disk-xy",
                json!({"x": {"from": 1.0, "to": 1.6, "cells": 32},
                       "y": {"from": 0.1, "to": 0.6, "cells": 32}}),
            ),
            "[x, y]",
            4,
        ),
        // A sphere on Cartesian axes, away from its centre and surface.
        (
            on_grid(
                dir,
                "polytropic-envelope",
                "sphere-xy",
                json!({"x": {"from": 0.3, "to": 0.6, "cells": 32},
                       "y": {"from": 0.3, "to": 0.6, "cells": 32}}),
            ),
            "[x, y]",
            4,
        ),
        (
            on_grid(
                dir,
                "noisy-disk-3d",
                "disk-xyz",
                json!({"x": {"from": 1.0, "to": 1.6, "cells": 10},
                       "y": {"from": 0.1, "to": 0.6, "cells": 10},
                       "z": {"from": 0.02, "to": 0.1, "cells": 10}}),
            ),
            "[x, y, z]",
            8,
        ),
    ]
}

/// The unsplit MUSCL scheme with a local Lax–Friedrichs flux is second
/// order on smooth data in several dimensions too (Toro 2009, *Riemann
/// Solvers and Numerical Methods for Fluid Dynamics*, ch. 16 on
/// multidimensional schemes — from memory): a stratified disk on [R, z]
/// and on [r, theta], a disk and a sphere on [x, y], a disk on [x, y, z]
/// show 2 ± 0.1 at both refinements.
#[test]
fn issue8_finite_volume_drift_is_second_order_on_planes_and_boxes() {
    let d = tempfile::tempdir().unwrap();
    for (file, plane, growth) in smooth_planes(d.path()) {
        let o = stillpoint(d.path(), &["check", &file]);
        let out = text(&o);
        assert!(o.status.success(), "{out}");
        let (levels, orders) = scheme(&out, &format!("unsplit over {plane}"));
        assert_eq!(orders.len(), 2, "{out}");
        for q in &orders {
            assert!((q - 2.0).abs() < 0.1, "{plane}: order {q}: {out}");
        }
        for (w, q) in levels.windows(2).zip(&orders) {
            assert!(((w[0].1 / w[1].1).log2() - q).abs() < 0.01, "{out}");
            assert_eq!(w[1].0, growth * w[0].0, "{out}");
        }
        let coords = plane.replace('[', "(").replace(']', ")");
        assert!(out.contains(&format!("at {coords} = (")), "{out}");
        assert!(out.contains("whole ("), "{out}");
        assert!(
            out.contains(
                "nodal DG is forecast for files of DG nodes or modes: this one holds cell values"
            ),
            "{out}"
        );
        assert!(!out.contains("observed order is below 2"), "{out}");
    }
}

/// At a smooth extremum (a disk's midplane) the MC limiter clips the
/// slopes and the largest acceleration falls only as the first power of
/// the cell size: TVD schemes are first order at extrema (Harten 1983,
/// J. Comput. Phys. 49, 357 — from memory); the rate 1 within 0.1 here is
/// observed, no source. The output says why the order is below 2.
#[test]
fn issue8_drift_at_a_midplane_is_first_order_and_says_why() {
    let d = tempfile::tempdir().unwrap();
    let file = on_grid(
        d.path(),
        "noisy-disk-3d",
        "midplane",
        serde_json::json!({"R": {"from": 1.0, "to": 2.0, "cells": 32},
                           "z": {"from": -0.05, "to": 0.05, "cells": 16}}),
    );
    let o = stillpoint(d.path(), &["check", &file]);
    let out = text(&o);
    let (_, orders) = scheme(&out, "unsplit over [R, z]");
    for q in &orders {
        assert!((q - 1.0).abs() < 0.1, "order {q}: {out}");
    }
    assert!(out.contains("observed order is below 2"), "{out}");
    assert!(out.contains("smooth extremum"), "{out}");
}

/// On a plane the verdict names the cells per axis; a check at that
/// resolution (past the whole-grid limit, so refined on a stated block)
/// brings the drift at the grid's resolution to the amplitude within 10 %.
#[test]
fn issue8_plane_verdict_names_the_cells_per_axis() {
    let d = tempfile::tempdir().unwrap();
    let grid = |n: usize| {
        serde_json::json!({"x": {"from": 1.0, "to": 1.6, "cells": n},
                           "y": {"from": 0.1, "to": 0.6, "cells": n}})
    };
    let file = on_grid(d.path(), "tapered-disk-cartesian", "cartesian-32", grid(32));
    let o = stillpoint(d.path(), &["check", &file, "--amplitude", "1e-4"]);
    let out = text(&o);
    let line = out
        .lines()
        .find(|l| l.contains("verdict      finite volume: DRIFTS"))
        .unwrap_or_else(|| panic!("{out}"));
    let cells: Vec<usize> = line
        .split("about ")
        .nth(1)
        .and_then(|r| r.split(" cells on (x, y)").next())
        .map(|r| r.split(" x ").map(|n| n.parse().unwrap()).collect())
        .unwrap_or_else(|| panic!("{line}"));
    let (levels, orders) = scheme(&out, "unsplit over [x, y]");
    let want = 32.0 * (levels[0].2 / 1e-4).powf(1.0 / orders[1]);
    assert_eq!(cells.len(), 2, "{line}");
    for n in &cells {
        assert!((*n as f64 / want - 1.0).abs() < 0.01, "{line}: {want}");
    }
    assert!(
        out.contains("caution: a scheme without well-balancing drifts"),
        "{out}"
    );
    let file = on_grid(
        d.path(),
        "tapered-disk-cartesian",
        "cartesian-n",
        grid(cells[0]),
    );
    let o = stillpoint(d.path(), &["check", &file, "--amplitude", "1e-4"]);
    let out = text(&o);
    assert!(
        out.contains("refined on a block of 64 x 64 of them"),
        "{out}"
    );
    let whole = out
        .lines()
        .find(|l| l.contains("whole grid at its resolution:"))
        .unwrap_or_else(|| panic!("{out}"));
    let w: Vec<&str> = whole.split_whitespace().collect();
    let at = w.iter().position(|x| *x == "drift").unwrap();
    let drift: f64 = w[at + 1].parse().unwrap();
    assert!(drift < 1.1e-4 && drift > 0.9e-4, "{whole}");
    let (levels, _) = scheme(&out, "unsplit over [x, y]");
    assert_eq!(levels[0].0, 64 * 64, "{out}");
}

/// A build of a stratified disk on [R, z] records the plane's forecast in
/// `drift_forecast`: what was evaluated, the positions as (R, z), the same
/// numbers `check` prints, and the note that DG is not forecast there.
#[test]
fn issue8_plane_drift_forecast_is_recorded_in_the_file() {
    let d = tempfile::tempdir().unwrap();
    let (file, _, _) = smooth_planes(d.path()).remove(0);
    let o = stillpoint(d.path(), &["build", &file, "-o", "rz.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("rz.h5")).unwrap();
    let s: hdf5::types::VarLenUnicode = f.attr("drift_forecast").unwrap().read_scalar().unwrap();
    let v: serde_json::Value = serde_json::from_str(s.as_str()).unwrap();
    assert_eq!(v["coordinate"], "(R, z)", "{v}");
    let fv = &v["schemes"][0];
    assert!(
        fv["evaluated"]
            .as_str()
            .unwrap()
            .contains("whole (32 x 16 cells)"),
        "{v}"
    );
    assert_eq!(fv["cells_per_axis"][1]["axis"], "z", "{v}");
    let o = stillpoint(d.path(), &["check", &file]);
    let (printed, _) = scheme(&text(&o), "unsplit over [R, z]");
    let levels = fv["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 3);
    for (l, p) in levels.iter().zip(&printed) {
        let a = l["max_acceleration"].as_f64().unwrap();
        assert!((a / p.1 - 1.0).abs() < 1e-3, "{a} vs {}", p.1);
        assert_eq!(l["cells"].as_u64().unwrap() as usize, p.0);
        assert_eq!(l["at"].as_array().unwrap().len(), 2, "{v}");
    }
    for q in fv["observed_order"].as_array().unwrap() {
        assert!((q.as_f64().unwrap() - 2.0).abs() < 0.1, "{v}");
    }
    assert!(v["notes"][0].as_str().unwrap().contains("nodal DG"), "{v}");
    assert!(v["verdict"][0]
        .as_str()
        .unwrap()
        .starts_with("finite volume"));
}

/// The forecast a build records on a plane costs a small part of the build:
/// at most an eighth of the plane's cells per refinement level (here 256 x
/// 256 cells: a block of 22 x 22, refined to 88 x 88 = 7744 cells), at the
/// centre, and the file says that `check` evaluates the whole grid, which
/// `check` does. (The bound is this project's choice: a 2D build took twice
/// as long when its forecast sampled the whole plane again.)
#[test]
fn issue11_a_builds_forecast_is_bounded_to_a_part_of_the_build() {
    let d = tempfile::tempdir().unwrap();
    let file = on_grid(
        d.path(),
        "tapered-disk-cartesian",
        "wide",
        serde_json::json!({"x": {"from": 1.0, "to": 1.6, "cells": 256},
                           "y": {"from": 0.1, "to": 0.6, "cells": 256}}),
    );
    let o = stillpoint(d.path(), &["build", &file, "-o", "wide.h5"]);
    assert!(o.status.success(), "{}", text(&o));
    let f = hdf5::File::open(d.path().join("wide.h5")).unwrap();
    let s: hdf5::types::VarLenUnicode = f.attr("drift_forecast").unwrap().read_scalar().unwrap();
    let v: serde_json::Value = serde_json::from_str(s.as_str()).unwrap();
    let fv = &v["schemes"][0];
    let evaluated = fv["evaluated"].as_str().unwrap();
    assert!(evaluated.contains("a block of 22 x 22"), "{v}");
    assert!(
        evaluated.contains("`stillpoint check` evaluates the whole grid"),
        "{v}"
    );
    let cells: Vec<u64> = fv["levels"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["cells"].as_u64().unwrap())
        .collect();
    assert_eq!(cells, [22 * 22, 44 * 44, 88 * 88], "{v}");
    assert!(cells.iter().all(|c| *c as usize <= 256 * 256 / 8));
    let o = stillpoint(d.path(), &["check", &file]);
    let out = text(&o);
    assert!(out.contains("whole grid at its resolution:"), "{out}");
    assert!(out.contains("refined on a block of 64 x 64"), "{out}");
}

/// Nodal DG on planes and boxes (issue 8, item 4): on a file of DG nodes
/// the forecast applies nodal DG of the sampled degree k, unsplit, to the
/// node values, on the finite-volume forecast's cells. The observed orders
/// on smooth states, each within 0.1 (as measured, no source; the same
/// pattern as on a line, see `issue8_nodal_dg_converges_at_the_order_of_its_degree`):
/// k on Gauss–Lobatto nodes; on Gauss–Legendre nodes k + 1 for k = 2 on
/// the meridional planes, where the gas is at rest in the plane, and k on
/// the rotating Cartesian disk.
#[test]
fn issue8_nodal_dg_on_planes_and_boxes_converges_at_the_measured_orders() {
    use serde_json::json;
    let d = tempfile::tempdir().unwrap();
    let rz = json!({"R": {"from": 1.0, "to": 2.0, "cells": 16},
                    "z": {"from": 0.01, "to": 0.05, "cells": 8}});
    let rt = json!({"r": {"from": 1.0, "to": 2.0, "cells": 16},
                    "theta": {"from": "pi/2 - 0.05", "to": "pi/2 - 0.01", "cells": 8}});
    let xy = json!({"x": {"from": 1.0, "to": 1.6, "cells": 12},
                    "y": {"from": 0.1, "to": 0.6, "cells": 12}});
    let box3 = json!({"x": {"from": 0.8, "to": 1.2, "cells": 6},
                      "y": {"from": 0.3, "to": 0.7, "cells": 6},
                      "z": {"from": 0.01, "to": 0.05, "cells": 6}});
    let cases = [
        (
            "noisy-disk-3d",
            &rz,
            "[R, z]",
            "gauss-lobatto-nodes",
            3,
            2.0,
        ),
        (
            "noisy-disk-3d",
            &rz,
            "[R, z]",
            "gauss-legendre-nodes",
            3,
            3.0,
        ),
        (
            "noisy-disk-3d",
            &rt,
            "[r, theta]",
            "gauss-legendre-nodes",
            3,
            3.0,
        ),
        (
            "noisy-disk-3d",
            &rt,
            "[r, theta]",
            "gauss-lobatto-nodes",
            2,
            1.0,
        ),
        (
            "tapered-disk-cartesian",
            &xy,
            "[x, y]",
            "gauss-legendre-nodes",
            4,
            3.0,
        ),
        (
            "tapered-disk-cartesian",
            &xy,
            "[x, y]",
            "gauss-lobatto-nodes",
            3,
            2.0,
        ),
        (
            "softened-disk-box",
            &box3,
            "[x, y, z]",
            "gauss-lobatto-nodes",
            3,
            2.0,
        ),
    ];
    for (k, (name, grid, plane, rule, points, want)) in cases.into_iter().enumerate() {
        let file = common::variant(d.path(), name, |v| {
            v["grid"] = grid.clone();
            v.as_object_mut().unwrap().remove("perturbations");
            v["sampling"] = json!({"rule": rule, "points": points});
            if let Some(o) = v["output"].as_object_mut() {
                o.remove("fields");
            }
            v["name"] = format!("dg-{k}").into();
        });
        let o = stillpoint(d.path(), &["check", &file]);
        let out = text(&o);
        let dg = format!("nodal DG of degree {} on {points}", points - 1);
        assert!(out.contains(&format!("{dg} ")), "{out}");
        let (levels, orders) = scheme(&out, &format!("unsplit over {plane}, local"));
        assert_eq!(levels.len(), 3, "{out}");
        assert_eq!(orders.len(), 2, "{out}");
        for q in &orders {
            assert!(
                (q - want).abs() < 0.1,
                "{name} {plane} {rule} {points}: order {q}: {out}"
            );
        }
        assert!(!out.contains("this one holds cell values"), "{out}");
    }
}
