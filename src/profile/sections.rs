//! The sections of a profile that stand on their own: gravity (the
//! potential), the grid, the sampling rule and the output settings. Each
//! reads its JSON node and reports errors with the node's path.
//!
//! Owns: turning those nodes into a potential law, a [`Grid`], a
//! [`SamplingRule`] and an [`OutputSpec`]. Does not own: parameters, laws of
//! the balance or the order in which sections are read (`mod.rs`).

use std::path::{Path, PathBuf};

use super::json::{closest, Node};
use super::{OutputSpec, ProfileError};
use crate::background::Shape;
use crate::formula::Expr;
use crate::grid::{Axis, Coord, Grid};
use crate::model::{Barotrope, Law, TorusLaws, Unknown};
use crate::output::Precision;
use crate::physics;
use crate::sample::gauss::NodeFamily;
use crate::sample::SamplingRule;
use crate::torus::{Edge, RotationLaw};

/// The potential on the balance coordinate, and in every coordinate of the
/// background's frame (R and z for a disk; the same law for a slab or a
/// sphere).
pub(super) fn potential(
    node: Node,
    shape: Shape,
    consts: &[&str],
) -> Result<(Law, Law), ProfileError> {
    node.only_keys(&["uniform", "point_mass", "softening", "potential"])?;
    let coord = shape.coordinate();
    let mut names: Vec<&str> = consts.to_vec();
    names.push(coord);
    let count = ["uniform", "point_mass", "potential"]
        .iter()
        .filter(|k| node.child(k).is_some())
        .count();
    if count != 1 {
        return Err(node.error("give exactly one of uniform, point_mass, potential"));
    }
    if let Some(g) = node.child("uniform") {
        let g = g.node();
        if shape.is_disk() {
            return Err(g.error(
                "a disk needs a central potential (point_mass or potential), not uniform gravity",
            ));
        }
        if node.child("softening").is_some() {
            return Err(node.error("softening goes with point_mass only"));
        }
        let expr = physics::uniform_potential(shape, g.formula(consts)?);
        let law = Law {
            expr,
            origin: g.path(),
        };
        return Ok((law.clone(), law));
    }
    if let Some(m) = node.child("point_mass") {
        let m = m.node();
        let mass = m.formula(consts)?;
        let softening = match node.child("softening") {
            Some(e) => Some(e.node().formula(consts)?),
            None => None,
        };
        let field = Law {
            expr: physics::point_mass_field(shape, mass.clone(), softening.clone()),
            origin: m.path(),
        };
        let expr = physics::point_mass_potential(shape, mass, softening);
        let line = Law {
            expr,
            origin: m.path(),
        };
        return Ok((line, field));
    }
    let p = node.require("potential")?;
    let p = p.node();
    if node.child("softening").is_some() {
        return Err(node.error("softening goes with point_mass only"));
    }
    if shape.is_disk() {
        names.push("z");
        let e = p.formula(&names)?;
        let mid = e.substitute(&[("z".to_string(), Expr::num(0.0))].into_iter().collect());
        let field = Law {
            expr: e,
            origin: p.path(),
        };
        let line = Law {
            expr: mid,
            origin: p.path(),
        };
        return Ok((line, field));
    }
    let law = Law {
        expr: p.formula(&names)?,
        origin: p.path(),
    };
    Ok((law.clone(), law))
}

/// `gas.barotropic`: `{ "K": formula, "exponent": formula }` for P = K ρ^Γ,
/// K > 0 and Γ > 1 (Γ = 1 is an isothermal gas: give gas.sound_speed_sq).
pub(super) fn barotrope(
    node: Node,
    consts: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<Barotrope, ProfileError> {
    node.only_keys(&["K", "exponent"])?;
    let k = node.require("K")?;
    let k = k.node();
    let kv = k.value(consts, lookup)?;
    if kv.is_nan() || kv <= 0.0 {
        return Err(k.error(format!("K must be positive, found {kv}")));
    }
    let g = node.require("exponent")?;
    let g = g.node();
    let gv = g.value(consts, lookup)?;
    if gv.is_nan() || gv <= 1.0 {
        return Err(g.error(format!(
            "the exponent Gamma of P = K rho^Gamma must exceed 1, found {gv} \
             (Gamma = 1 is an isothermal gas: give gas.sound_speed_sq)"
        )));
    }
    Ok(Barotrope {
        constant: k.formula(consts)?,
        exponent: g.formula(consts)?,
        exponent_value: gv,
        origin: node.path(),
    })
}

/// `balance.torus`: the rotation law (`angular_momentum`, or `rotation`:
/// `{ "omega": Ω₀, "at": R₀, "exponent": a }` for Ω = Ω₀ (R/R₀)^(−a)), the
/// edge (`inner_edge` or `bernoulli`) and the `floor` (`density`,
/// `pressure`). Needs a disk solved for density with gas.barotropic and no
/// density or rotation law.
pub(super) fn torus(
    node: Node,
    (shape, unknown, barotropic, given): (Shape, Unknown, bool, &[&Option<Law>]),
    consts: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<TorusLaws, ProfileError> {
    node.only_keys(&[
        "angular_momentum",
        "rotation",
        "inner_edge",
        "bernoulli",
        "floor",
    ])?;
    if shape != Shape::DiskMidplane || unknown != Unknown::Density {
        return Err(node.error(
            "a torus is a disk solved for density: give balance.shape \"disk\" and \
             balance.solve_for \"density\"",
        ));
    }
    if !barotropic {
        return Err(node.error("a torus needs a barotropic gas: give gas.barotropic (K, exponent)"));
    }
    if let Some(l) = given.iter().copied().flatten().next() {
        return Err(node.error(format!(
            "a torus derives its density and rotation: remove {}",
            l.origin
        )));
    }
    let num = |key: &str| -> Result<Option<f64>, ProfileError> {
        node.child(key)
            .map(|c| c.node().value(consts, lookup))
            .transpose()
    };
    let rotation = match (num("angular_momentum")?, node.child("rotation")) {
        (Some(l), None) => RotationLaw::constant_angular_momentum(l),
        (None, Some(r)) => {
            let r = r.node();
            r.only_keys(&["omega", "at", "exponent"])?;
            let v = |k: &str| r.require(k)?.node().value(consts, lookup);
            RotationLaw {
                omega0: v("omega")?,
                r0: v("at")?,
                a: v("exponent")?,
            }
        }
        _ => return Err(node.error("give exactly one of angular_momentum and rotation")),
    };
    let edge = match (num("inner_edge")?, num("bernoulli")?) {
        (Some(r), None) if r > 0.0 => Edge::InnerRadius(r),
        (Some(r), None) => {
            return Err(node.error(format!("inner_edge must be a positive radius, found {r}")))
        }
        (None, Some(c)) => Edge::Bernoulli(c),
        _ => return Err(node.error("give exactly one of inner_edge and bernoulli")),
    };
    let floor = node.require("floor")?;
    let floor = floor.node();
    floor.only_keys(&["density", "pressure"])?;
    let mut fp = [0.0; 2];
    for (v, key) in fp.iter_mut().zip(["density", "pressure"]) {
        let n = floor.require(key)?;
        *v = n.node().value(consts, lookup)?;
        if v.is_nan() || *v <= 0.0 {
            return Err(n.node().error(format!("must be positive, found {v}")));
        }
    }
    Ok(TorusLaws {
        rotation,
        edge,
        floor: (fp[0], fp[1]),
    })
}

pub(super) fn grid(
    node: Node,
    dir: &Path,
    consts: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<Grid, ProfileError> {
    let map = node.object()?;
    if map.is_empty() {
        return Err(node.error("expected at least one axis (R, phi, x, y, z, r or theta)"));
    }
    let mut axes = Vec::new();
    let mut halo = Vec::new();
    let mut halo_nodes = Vec::new();
    let mut edge_values = 0u64;
    for key in map.keys() {
        if key == "nesting" {
            continue;
        }
        let owned = node.require(key)?;
        let ax = owned.node();
        let Some(coord) = Coord::from_name(key) else {
            let names = ["R", "phi", "x", "y", "z", "r", "theta"];
            let hint = closest(key, &names)
                .map(|k| format!(" (did you mean `{k}`?)"))
                .unwrap_or_default();
            return Err(ax.error(format!(
                "unknown axis `{key}`{hint}; axes are R, phi, x, y, z, r, theta"
            )));
        };
        ax.only_keys(&[
            "from",
            "to",
            "cells",
            "spacing",
            "edges",
            "edges_file",
            "halo",
        ])?;
        let layers = match ax.child("halo") {
            None => 0,
            Some(h) => {
                let n = match h.node().value.as_u64() {
                    Some(n) if n <= 64 => n as usize,
                    _ => {
                        return Err(h
                            .node()
                            .error("the ghost layers per side are a whole number from 0 to 64"))
                    }
                };
                // Where an error about these layers is reported.
                halo_nodes.push((axes.len(), h.node().error(String::new())));
                n
            }
        };
        halo.push(layers);
        let err = |e: crate::grid::GridError| ax.error(e.to_string());
        // Explicit edges fix the cells themselves: any other way of choosing
        // them alongside would be silently ignored, so refuse it.
        let explicit = ["edges", "edges_file"]
            .into_iter()
            .find(|k| ax.child(k).is_some());
        if let Some(given) = explicit {
            let extra = ["edges", "edges_file", "from", "to", "cells", "spacing"]
                .into_iter()
                .find(|k| *k != given && ax.child(k).is_some());
            if let Some(extra) = extra {
                return Err(ax.error(format!(
                    "`{given}` and `{extra}` cannot both be given: `{given}` sets the cells; \
                     remove `{extra}`"
                )));
            }
        }
        let axis = if let Some(e) = ax.child("edges") {
            let edges = e
                .node()
                .array()?
                .iter()
                .map(|n| n.node().value(consts, lookup))
                .collect::<Result<Vec<_>, _>>()?;
            Axis::explicit(coord, edges).map_err(err)?
        } else if let Some(f) = ax.child("edges_file") {
            let p = dir.join(f.node().str()?);
            Axis::from_edges_file(coord, &p).map_err(err)?
        } else {
            let (from, to) = match (ax.child("from"), ax.child("to"), coord) {
                (None, None, Coord::Phi) => (0.0, 2.0 * std::f64::consts::PI),
                _ => (
                    ax.require("from")?.node().value(consts, lookup)?,
                    ax.require("to")?.node().value(consts, lookup)?,
                ),
            };
            let cells = cell_count(ax.require("cells")?.node(), consts, lookup)?;
            edge_values += cells as u64 + 1;
            refuse_axis_memory(&ax, key, cells, edge_values)?;
            let log = match ax.child("spacing") {
                Some(s) => s.node().choice(&[(false, "uniform"), (true, "log")])?,
                None => false,
            };
            if log {
                Axis::log(coord, from, to, cells)
            } else {
                Axis::uniform(coord, from, to, cells)
            }
            .map_err(err)?
        };
        axes.push(axis);
    }
    // Every cell has a global index (the noise stream is keyed on it) that
    // a double must hold exactly.
    let total = axes
        .iter()
        .try_fold(1u64, |acc, a| acc.checked_mul(a.cells() as u64))
        .filter(|n| *n <= 1 << 53);
    if total.is_none() {
        let shape: Vec<String> = axes.iter().map(|a| a.cells().to_string()).collect();
        return Err(node.error(format!(
            "{} cells is more than any machine can hold or a cell index can count (2^53); \
             give fewer cells",
            shape.join(" x ")
        )));
    }
    let grid = Grid::new(axes).map_err(|e| node.error(e.to_string()))?;
    let grid =
        grid.with_halo(&halo)
            .map_err(|(a, e)| match halo_nodes.iter().find(|(i, _)| *i == a) {
                Some((_, at)) => ProfileError {
                    message: e.to_string(),
                    ..at.clone()
                },
                None => node.error(e.to_string()),
            })?;
    match node.child("nesting") {
        None => Ok(grid),
        Some(n) => nesting(n.node(), grid),
    }
}

/// `grid.nesting`: the axes of a Cartesian grid listed slowest first, the
/// order its arrays are stored in (`["z", "y", "x"]` puts x fastest).
fn nesting(n: Node, grid: Grid) -> Result<Grid, ProfileError> {
    let have: Vec<&str> = grid.axes().iter().map(|a| a.coord.name()).collect();
    let mut order = Vec::new();
    for item in n.array()? {
        let name = item.node().str()?;
        let coord = Coord::from_name(name)
            .filter(|c| grid.axes().iter().any(|a| a.coord == *c))
            .ok_or_else(|| {
                n.error(format!(
                    "`{name}` is not an axis of the grid [{}]; list its axes once each, slowest first",
                    have.join(", ")
                ))
            })?;
        order.push(coord);
    }
    grid.with_nesting(&order)
        .map_err(|e| n.error(e.to_string()))
}

/// An axis's edges, centres and widths are held whole: refuse before
/// allocating them when they would not fit in the free memory.
fn refuse_axis_memory(
    ax: &Node,
    key: &str,
    cells: usize,
    edge_values: u64,
) -> Result<(), ProfileError> {
    // Edges, centres, widths and a copy while the grid is put together
    // (common practice, no source: a margin, not a measured peak).
    let need = edge_values.saturating_mul(8 * 4);
    let (free, source) = match crate::estimate::room(Path::new(".")) {
        Ok(r) => (r.memory, r.memory_source),
        Err(_) => return Ok(()),
    };
    if need > free {
        return Err(ax.error(format!(
            "axis {key}: {cells} cells need {} for the axes alone, but only {} are free ({source}); \
             give fewer cells",
            crate::estimate::bytes(need),
            crate::estimate::bytes(free)
        )));
    }
    Ok(())
}

/// A number of cells: a positive integer, or a formula of parameters whose
/// value is one (`"N_R"`, `"2*N"`), so that `--set N=512` changes the
/// resolution.
fn cell_count(
    node: Node,
    consts: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<usize, ProfileError> {
    let whole = node.positive_int();
    if whole.is_ok() || node.str().is_err() {
        // A JSON number: a positive integer, or the error saying so.
        return whole;
    }
    let v = node.value(consts, lookup)?;
    let integral = v.round().to_bits() == v.to_bits();
    if integral && (1.0..=1e12).contains(&v) {
        Ok(v as usize)
    } else {
        Err(node.error(format!(
            "expected a positive whole number of cells, the value is {v}"
        )))
    }
}

pub(super) fn check_grid_matches(
    grid: &Grid,
    shape: Shape,
    torus: bool,
    label: &str,
) -> Result<(), ProfileError> {
    use crate::grid::Layout;
    // A torus is solved in (R, z) whatever the grid: midplane grids see its
    // z = 0 plane, grids with height the whole torus.
    let shape = if torus
        && shape == Shape::DiskMidplane
        && grid.axes().len() > 1
        && !matches!(grid.layout(), Layout::Polar | Layout::Cartesian)
    {
        Shape::StratifiedDisk
    } else {
        shape
    };
    let ok = match shape {
        Shape::Slab => matches!(
            grid.layout(),
            Layout::Line(Coord::Z) | Layout::Cartesian | Layout::Section | Layout::Box
        ),
        Shape::Spherical => matches!(
            grid.layout(),
            Layout::Line(Coord::Sph)
                | Layout::SphericalMeridional
                | Layout::Spherical
                | Layout::Cartesian
                | Layout::Section
                | Layout::Box
        ),
        Shape::StratifiedDisk => matches!(
            grid.layout(),
            Layout::Meridional
                | Layout::SphericalMeridional
                | Layout::Cylindrical
                | Layout::Spherical
                | Layout::Box
        ),
        _ => matches!(
            grid.layout(),
            Layout::Line(Coord::R) | Layout::Polar | Layout::Cartesian
        ),
    };
    if ok {
        Ok(())
    } else {
        let want = match shape {
            Shape::Slab => "a slab needs a z axis, or a Cartesian box [x, y], [x, z] or [x, y, z]",
            Shape::Spherical => {
                "a sphere needs an r axis, a spherical grid [r, theta] or [r, theta, phi], \
                 or a Cartesian box [x, y], [x, z] or [x, y, z]"
            }
            Shape::StratifiedDisk => {
                "a stratified disk needs a grid with height: [R, z], [r, theta], \
                 [R, phi, z], [r, theta, phi] or [x, y, z]"
            }
            _ if grid.axes().len() > 1 && !matches!(grid.layout(), Layout::Polar | Layout::Cartesian) => {
                "a disk's midplane needs an R axis, R and phi, or x and y; \
                 for a grid with height use balance.shape \"stratified_disk\" (the vertical structure is solved too)"
            }
            _ => "a disk's midplane needs an R axis, R and phi, or x and y",
        };
        Err(ProfileError::at(
            label,
            "grid",
            format!("the grid does not fit balance.shape: {want}"),
        ))
    }
}

/// `balance.intended_jumps`: a list of the profile keys of given laws
/// (`"balance.density"`) whose jumps at their switch points are intended.
pub(super) fn intended_jumps(node: Node, laws: &[&str]) -> Result<Vec<String>, ProfileError> {
    let mut out = Vec::new();
    for item in node.array()? {
        let item = item.node();
        let key = item.str()?;
        if !laws.contains(&key) {
            let hint = closest(key, laws)
                .map(|k| format!(" (did you mean `{k}`?)"))
                .unwrap_or_default();
            return Err(item.error(format!(
                "`{key}` is not a law of this profile{hint}; its laws are {}",
                laws.join(", ")
            )));
        }
        out.push(key.to_string());
    }
    Ok(out)
}

pub(super) fn sampling(node: Node) -> Result<SamplingRule, ProfileError> {
    node.only_keys(&[
        "rule",
        "points",
        "tolerance",
        "modes",
        "faces",
        "face_points",
        "staggered_velocity",
    ])?;
    let rule = node.require("rule")?.node().choice(&[
        (0, "center"),
        (1, "average"),
        (2, "gauss-legendre-nodes"),
        (3, "gauss-lobatto-nodes"),
        (4, "legendre-modes"),
    ])?;
    if let Some(m) = node.child("modes") {
        if rule != 4 {
            return Err(m
                .node()
                .error("modes goes with rule \"legendre-modes\" only"));
        }
    }
    if rule == 4 {
        let modes = match node.child("modes") {
            Some(m) => m.node().positive_int()?,
            None => 3,
        };
        let points = match node.child("points") {
            Some(p) => p.node().positive_int()?,
            None => (modes + 8).min(64),
        };
        if modes > 32 || points < modes || points > 64 {
            return Err(node.error(format!(
                "sampling: legendre-modes takes 1 to 32 modes and modes to 64 points per axis \
                 (got {modes} modes, {points} points)"
            )));
        }
        if let Some(t) = node.child("tolerance") {
            return Err(t.node().error("tolerance goes with rule \"average\" only"));
        }
        return Ok(SamplingRule::Modes { modes, points });
    }
    if rule >= 2 {
        if let Some(t) = node.child("tolerance") {
            return Err(t.node().error("tolerance goes with rule \"average\" only"));
        }
        let family = if rule == 2 {
            NodeFamily::Legendre
        } else {
            NodeFamily::Lobatto
        };
        let points = match node.child("points") {
            Some(p) => p.node().positive_int()?,
            None => 4,
        };
        if !(family.min_points()..=64).contains(&points) {
            return Err(node.error(format!(
                "sampling.points: {} takes {} to 64 nodes per axis",
                family.name(),
                family.min_points()
            )));
        }
        return Ok(SamplingRule::Nodes { family, points });
    }
    if rule == 0 {
        for key in ["points", "tolerance"] {
            if let Some(p) = node.child(key) {
                return Err(p
                    .node()
                    .error(format!("{key} goes with rule \"average\" only")));
            }
        }
        return Ok(SamplingRule::Center);
    }
    let points = match node.child("points") {
        Some(p) => Some(p.node().positive_int()?),
        None => None,
    };
    if let Some(t) = node.child("tolerance") {
        let tolerance = t
            .node()
            .value
            .as_f64()
            .ok_or_else(|| t.node().error("expected a number, such as 1e-12"))?;
        if !(tolerance.is_finite() && tolerance > 0.0) {
            return Err(t
                .node()
                .error("a relative tolerance must be a number > 0, such as 1e-12"));
        }
        let start = points.unwrap_or(2);
        if start > 62 {
            return Err(node.error(
                "sampling.points: with a tolerance, the first number of points tried is at most 62",
            ));
        }
        return Ok(SamplingRule::AverageTo { tolerance, start });
    }
    let points = points.unwrap_or(4);
    if points > 64 {
        return Err(node.error("sampling.points: at most 64 points per axis"));
    }
    Ok(SamplingRule::Average { points })
}

/// The values at faces asked in the `sampling` section: `faces`
/// (`"centres"` or `"gauss-legendre-nodes"`), `face_points` (nodes per axis
/// of a face, with `"gauss-legendre-nodes"` only, 1 to 64, default 2) and
/// `staggered_velocity` (true or false).
pub(super) fn faces(node: Node) -> Result<crate::sample::FaceRequest, ProfileError> {
    let values = match node.child("faces") {
        None => None,
        Some(f) => Some(
            f.node()
                .choice(&[(0, "centres"), (1, "gauss-legendre-nodes")])?,
        ),
    };
    let points = match node.child("face_points") {
        None => None,
        Some(p) => {
            if values != Some(1) {
                return Err(p.node().error(
                    "face_points goes with faces \"gauss-legendre-nodes\" only (the nodes per \
                     axis of each face)",
                ));
            }
            let n = p.node().positive_int()?;
            if n > 64 {
                return Err(p
                    .node()
                    .error(format!("1 to 64 nodes per axis of a face, got {n}")));
            }
            Some(n)
        }
    };
    let staggered = match node.child("staggered_velocity") {
        None => false,
        Some(s) => s.node().bool()?,
    };
    Ok(crate::sample::FaceRequest {
        values: values.map(|v| (v == 1).then(|| points.unwrap_or(2))),
        staggered,
    })
}

pub(super) fn output(node: Node) -> Result<OutputSpec, ProfileError> {
    node.only_keys(&["file", "csv", "precision", "fields", "deflate", "shuffle"])?;
    let file = match node.child("file") {
        Some(f) => Some(PathBuf::from(f.node().str()?)),
        None => None,
    };
    let csv = match node.child("csv") {
        Some(c) => c.node().bool()?,
        None => false,
    };
    let precision = match node.child("precision") {
        Some(p) => p
            .node()
            .choice(&[(Precision::Double, "double"), (Precision::Single, "single")])?,
        None => Precision::Double,
    };
    let fields = match node.child("fields") {
        None => None,
        Some(list) => {
            let list = list.node();
            let mut names: Vec<String> = Vec::new();
            for item in list.array()? {
                let item = item.node();
                let name = item.str()?;
                if names.iter().any(|n| n == name) {
                    return Err(item.error(format!("`{name}` is listed twice")));
                }
                names.push(name.to_string());
            }
            if names.is_empty() {
                return Err(list.error("list at least one field (or leave output.fields out)"));
            }
            Some(names)
        }
    };
    let deflate = match node.child("deflate") {
        None => None,
        Some(d) => {
            let d = d.node();
            match d.positive_int()? {
                n @ 1..=9 => Some(n as u8),
                n => return Err(d.error(format!("the deflate level is 1 to 9, not {n}"))),
            }
        }
    };
    let shuffle = match node.child("shuffle") {
        Some(c) => c.node().bool()?,
        None => false,
    };
    if shuffle && deflate.is_none() {
        return Err(node
            .error("shuffle only reorders bytes for compression: give deflate (1 to 9) with it"));
    }
    Ok(OutputSpec {
        file,
        csv,
        precision,
        fields,
        filters: crate::output::Filters { deflate, shuffle },
    })
}

/// `balance.edges`: a smooth inner cavity (`cavity`: `radius`, `width`), a
/// smooth outer edge (`rim`: `radius`, `width`) and a `floor`, applied to
/// the density law (or the surface density) *before* the balance is
/// solved: law → floor + law · ½(1 + tanh((R − R_c)/w_c)) ·
/// ½(1 − tanh((R − R_r)/w_r)). The rotation then comes from the tapered
/// law, which stays an exact equilibrium.
pub(super) fn edges(
    node: Node,
    consts: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<Tapered, ProfileError> {
    use crate::formula::Func;
    node.only_keys(&["cavity", "rim", "floor"])?;
    let half = |sign: f64, c: Node| -> Result<(f64, Expr), ProfileError> {
        c.only_keys(&["radius", "width"])?;
        let radius = c.require("radius")?.node().value(consts, lookup)?;
        let w = c.require("width")?;
        let width = w.node().value(consts, lookup)?;
        if radius.is_nan() || radius <= 0.0 {
            return Err(c
                .require("radius")?
                .node()
                .error(format!("{radius} is not a radius; give a positive number")));
        }
        if width.is_nan() || width <= 0.0 {
            return Err(w.node().error(format!(
                "{width} is not a width: give a positive length (the distance over which the \
                 taper rises from 12% to 88%: about a width on either side of the radius)"
            )));
        }
        let arg = (Expr::name("R") - Expr::num(radius)) / Expr::num(width);
        let t =
            Expr::num(0.5) * (Expr::num(1.0) + Expr::num(sign) * Expr::call(Func::Tanh, vec![arg]));
        Ok((radius, t))
    };
    let mut factor: Option<Expr> = None;
    let mut cavity_radius = None;
    if let Some(c) = node.child("cavity") {
        let (r, t) = half(1.0, c.node())?;
        cavity_radius = Some(r);
        factor = Some(t);
    }
    if let Some(c) = node.child("rim") {
        let (r, t) = half(-1.0, c.node())?;
        if let Some(inner) = cavity_radius {
            if r <= inner {
                return Err(c.node().error(format!(
                    "the rim's radius {r} lies inside the cavity's {inner}: nothing would be left"
                )));
            }
        }
        factor = Some(match factor {
            Some(f) => f * t,
            None => t,
        });
    }
    let floor = match node.child("floor") {
        None => None,
        Some(f) => {
            let v = f.node().value(consts, lookup)?;
            if v.is_nan() || v <= 0.0 {
                return Err(f
                    .node()
                    .error(format!("{v} is not a floor: give a positive density")));
            }
            Some(v)
        }
    };
    if factor.is_none() && floor.is_none() {
        return Err(node.error("give at least one of cavity, rim or floor"));
    }
    Ok(Tapered { factor, floor })
}

/// What `balance.edges` does to a law.
pub(super) struct Tapered {
    factor: Option<Expr>,
    floor: Option<f64>,
}

impl Tapered {
    /// law · factor + floor.
    pub(super) fn apply(&self, law: Expr) -> Expr {
        let law = match &self.factor {
            Some(f) => law * f.clone(),
            None => law,
        };
        match self.floor {
            Some(v) => law + Expr::num(v),
            None => law,
        }
    }
}
