//! The XDMF description written beside every HDF5 file, so that ParaView,
//! VisIt and other XDMF readers open the pair directly.
//!
//! Owns: whether a grid is described as a rectilinear or a curvilinear
//! mesh, the Cartesian positions of the nodes (cell corners) the
//! curvilinear description needs, which the HDF5 writer stores as
//! `/grid/node_x`, `/grid/node_y` and `/grid/node_z` (one value per node,
//! C order, in the file's length unit), and the XDMF 2 text that points at
//! the HDF5 datasets of each field as cell data.
//!
//! XDMF's rectilinear meshes (`2DRectMesh` with `VXVY`, `3DRectMesh` with
//! `VXVYVZ`) take x along the fastest-varying array index, then y, then z.
//! Our arrays are C-ordered with the grid's first stored axis slowest
//! (design §6), so a Cartesian grid is described rectilinearly, by its
//! `/grid/<axis>_edges`, exactly when it stores x fastest: a box declared
//! `grid.nesting = ["z", "y", "x"]`, a plane `["y", "x"]`. No node
//! positions are written then. Every other grid (polar, cylindrical,
//! spherical, a line, a section `[x, z]`, and a Cartesian grid in its
//! natural order `[x, y, z]`, which a rectilinear description would show
//! mirrored) is a curvilinear (`2DSMesh`/`3DSMesh`) mesh with explicit node
//! positions, which cannot be mis-read: each node carries its own x, y, z;
//! a Cartesian one says in a comment that declaring x fastest gives a
//! rectilinear mesh. A 1D line is a `Polyline` of its cells through the
//! node positions.
//!
//! Fields that are not one value per cell (faces, DG node or mode sets) are
//! left out of the XDMF, each with a note in the file (an XML comment and an
//! `Information` element), never described as cell data. Does not own the
//! HDF5 layout itself ([`super::h5`]) nor any physics.

use std::fmt::Write as _;
use std::ops::Range;
use std::path::Path;

use super::{GroupPlan, OutputError, Precision};
use crate::fields::Placement;
use crate::grid::{Coord, Grid, Layout};

/// Names of the node-position datasets in `/grid`.
pub const NODE_DATASETS: [&str; 3] = ["node_x", "node_y", "node_z"];

/// Whether `grid` is described as a rectilinear mesh through its edges
/// (a Cartesian `[x, y]` or `[x, y, z]` grid stored with x fastest, see the
/// module comment); then the HDF5 file holds no node positions.
pub fn rectilinear(grid: &Grid) -> bool {
    let stored: Vec<Coord> = grid.axes().iter().map(|a| a.coord).collect();
    matches!(grid.layout(), Layout::Cartesian | Layout::Box)
        && matches!(
            stored.as_slice(),
            [Coord::Y, Coord::X] | [Coord::Z, Coord::Y, Coord::X]
        )
}

/// The shape of the node arrays: the edges of every axis.
pub fn node_shape(grid: &Grid) -> Vec<usize> {
    grid.axes().iter().map(|a| a.edges.len()).collect()
}

/// The Cartesian position (x, y, z) of the node with these edge coordinates,
/// one per grid axis, named as the axes are: `x`, `y`, `z` are taken as
/// they are; `R`, `phi`, `z` are cylindrical (x = R cos φ, y = R sin φ);
/// `r`, `theta`, `phi` spherical (x = r sin θ cos φ, y = r sin θ sin φ,
/// z = r cos θ, θ from the +z axis). A coordinate the grid lacks is 0,
/// except θ, which is π/2 (a radial line or a polar grid of `r` lies in the
/// plane z = 0). A 1D line of `R` or `r` lies along the x axis.
pub fn cartesian(names: &[&str], values: &[f64]) -> [f64; 3] {
    let get = |n: &str| names.iter().position(|m| *m == n).map(|i| values[i]);
    if get("x").is_some() || get("y").is_some() {
        return [
            get("x").unwrap_or(0.0),
            get("y").unwrap_or(0.0),
            get("z").unwrap_or(0.0),
        ];
    }
    let phi = get("phi").unwrap_or(0.0);
    let (cyl, z) = match get("r") {
        Some(r) => {
            let theta = get("theta").unwrap_or(std::f64::consts::FRAC_PI_2);
            // sin(π/2) is 1 and cos(π/2) rounds to 6e-17: keep the plane
            // exact when the grid has no θ.
            match get("theta") {
                Some(_) => (r * theta.sin(), r * theta.cos()),
                None => (r, 0.0),
            }
        }
        None => (get("R").unwrap_or(0.0), get("z").unwrap_or(0.0)),
    };
    match get("phi") {
        Some(_) => [cyl * phi.cos(), cyl * phi.sin(), z],
        None => [cyl, 0.0, z],
    }
}

/// The node positions of the nodes whose first index lies in `rows` (of
/// the first axis's edges), C-ordered: the x, y and z arrays. The same
/// values as [`cartesian`] at every node (the same operations), with the
/// sines and cosines of θ and φ taken once per edge.
pub fn node_rows(grid: &Grid, rows: Range<usize>) -> [Vec<f64>; 3] {
    let axes = grid.axes();
    let names: Vec<&str> = axes.iter().map(|a| a.coord.name()).collect();
    let shape = node_shape(grid);
    let inner: usize = shape[1..].iter().product();
    let mut out: [Vec<f64>; 3] = Default::default();
    for v in &mut out {
        v.reserve(rows.len() * inner);
    }
    let pos = |n: &str| names.iter().position(|m| *m == n);
    let edges = |a: usize| &axes[a].edges;
    let trig = |n: &str| {
        pos(n).map(|a| {
            let e = edges(a);
            (
                e.iter().map(|t| t.sin()).collect::<Vec<_>>(),
                e.iter().map(|t| t.cos()).collect::<Vec<_>>(),
            )
        })
    };
    let separate = pos("x").is_none() && pos("y").is_none();
    let (theta, phi) = if separate {
        (trig("theta"), trig("phi"))
    } else {
        (None, None)
    };
    let (at_r, at_theta, at_phi) = (pos("r"), pos("theta"), pos("phi"));
    let (at_cyl, at_z) = (pos("R"), pos("z"));
    let mut idx = vec![0usize; shape.len()];
    let mut point = vec![0.0; shape.len()];
    for i0 in rows {
        idx[0] = i0;
        idx[1..].fill(0);
        for _ in 0..inner {
            for (a, p) in point.iter_mut().enumerate() {
                *p = edges(a)[idx[a]];
            }
            let p = if separate {
                let get = |a: Option<usize>| a.map(|a| point[a]);
                let (cyl, z) = match get(at_r) {
                    Some(r) => match (&theta, at_theta) {
                        (Some((sin, cos)), Some(a)) => (r * sin[idx[a]], r * cos[idx[a]]),
                        _ => (r, 0.0),
                    },
                    None => (get(at_cyl).unwrap_or(0.0), get(at_z).unwrap_or(0.0)),
                };
                match (&phi, at_phi) {
                    (Some((sin, cos)), Some(a)) => [cyl * cos[idx[a]], cyl * sin[idx[a]], z],
                    _ => [cyl, 0.0, z],
                }
            } else {
                cartesian(&names, &point)
            };
            for (v, c) in out.iter_mut().zip(p) {
                v.push(c);
            }
            for a in (1..shape.len()).rev() {
                idx[a] += 1;
                if idx[a] < shape[a] {
                    break;
                }
                idx[a] = 0;
            }
        }
    }
    out
}

/// Characters XML reserves, escaped for attribute values and text.
fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn dims(shape: &[usize]) -> String {
    shape
        .iter()
        .map(|n| n.to_string())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The XDMF text for an HDF5 file named `h5_name` (a name relative to the
/// XDMF file's folder) holding `grid` and the field groups `groups`. The
/// grid is titled `title`. When a group links to another, its fields are
/// described once, by the linking group's name and the target's datasets
/// (`/background/density` for `/state/density`, the same numbers);
/// fields of other written groups are named `<group>_<field>`, those of
/// the group `state` by their own names.
pub fn xdmf_text(
    h5_name: &str,
    grid: &Grid,
    groups: &[GroupPlan],
    precision: Precision,
    title: &str,
) -> String {
    let h5 = escape(h5_name);
    let nodes = node_shape(grid);
    let cells = grid.shape();
    let mut x = String::new();
    let _ = writeln!(x, r#"<?xml version="1.0" encoding="utf-8"?>"#);
    let _ = writeln!(x, r#"<!DOCTYPE Xdmf SYSTEM "Xdmf.dtd" []>"#);
    let _ = writeln!(x, r#"<Xdmf Version="2.0">"#);
    let _ = writeln!(x, "  <Domain>");
    let _ = writeln!(
        x,
        r#"    <Grid Name="{}" GridType="Uniform">"#,
        escape(title)
    );
    if nodes.len() == 1 {
        // A line is a polyline of its cells (XDMF readers give a structured
        // mesh of one row of nodes no cells): the segment connectivity is
        // written inline, two node numbers a cell.
        let n = cells[0];
        let _ = write!(
            x,
            r#"      <Topology TopologyType="Polyline" NumberOfElements="{n}" NodesPerElement="2"><DataItem Dimensions="{n} 2" NumberType="Int" Format="XML">"#
        );
        for i in 0..n {
            let _ = write!(x, "{}{i} {}", if i == 0 { "" } else { " " }, i + 1);
        }
        let _ = writeln!(x, "</DataItem></Topology>");
    } else if rectilinear(grid) {
        let (topology, geometry) = if nodes.len() == 2 {
            ("2DRectMesh", "VXVY")
        } else {
            ("3DRectMesh", "VXVYVZ")
        };
        let _ = writeln!(
            x,
            r#"      <Topology TopologyType="{topology}" NumberOfElements="{}"/>"#,
            dims(&nodes)
        );
        let _ = writeln!(x, r#"      <Geometry GeometryType="{geometry}">"#);
        // x first: the fastest index, then y (and z).
        for a in grid.axes().iter().rev() {
            let _ = writeln!(
                x,
                r#"        <DataItem Dimensions="{}" NumberType="Float" Precision="8" Format="HDF">{h5}:/grid/{}_edges</DataItem>"#,
                a.edges.len(),
                a.coord.name()
            );
        }
        let _ = writeln!(x, "      </Geometry>");
    } else {
        if matches!(grid.layout(), Layout::Cartesian | Layout::Box) {
            let fastest = if nodes.len() == 2 {
                r#"["y", "x"]"#
            } else {
                r#"["z", "y", "x"]"#
            };
            let _ = writeln!(
                x,
                "      <!-- a curvilinear mesh through /grid/node_x, node_y, node_z: the arrays \
                 store x slowest; declaring grid.nesting {fastest} (x fastest) gives a \
                 rectilinear mesh through the axis edges, and no node datasets -->"
            );
        }
        let topology = if nodes.len() == 2 {
            "2DSMesh"
        } else {
            "3DSMesh"
        };
        let _ = writeln!(
            x,
            r#"      <Topology TopologyType="{topology}" NumberOfElements="{}"/>"#,
            dims(&nodes)
        );
    }
    if !rectilinear(grid) {
        let _ = writeln!(x, r#"      <Geometry GeometryType="X_Y_Z">"#);
        for name in NODE_DATASETS {
            let _ = writeln!(
                x,
                r#"        <DataItem Dimensions="{}" NumberType="Float" Precision="8" Format="HDF">{h5}:/grid/{name}</DataItem>"#,
                dims(&nodes)
            );
        }
        let _ = writeln!(x, "      </Geometry>");
    }
    let axis_names: Vec<&str> = grid.axes().iter().map(|a| a.coord.name()).collect();
    let bytes = match precision {
        Precision::Double => 8,
        Precision::Single => 4,
    };
    let linked: Vec<&str> = groups.iter().filter_map(|g| g.link_to.as_deref()).collect();
    for g in groups {
        // A group others link to is described through the link, and a link
        // points at its target's datasets: XDMF readers do not all follow
        // HDF5 soft links (VTK's, which ParaView uses, does not).
        if g.link_to.is_none() && linked.contains(&g.name.as_str()) {
            continue;
        }
        let stored = g.link_to.as_deref().unwrap_or(&g.name);
        for f in &g.fields {
            let shown = if g.name == "state" {
                f.name.clone()
            } else {
                format!("{}_{}", g.name, f.name)
            };
            if f.placement != Placement::cell() {
                let why = format!(
                    "{shown} (/{}/{}, {}) is left out: XDMF cell data holds one value per cell; \
                     read it from the HDF5 file",
                    g.name,
                    f.name,
                    f.placement.describe(&axis_names)
                );
                let _ = writeln!(x, "      <!-- {} -->", why.replace("--", "- -"));
                let _ = writeln!(
                    x,
                    r#"      <Information Name="left_out" Value="{}"/>"#,
                    escape(&why)
                );
                continue;
            }
            let _ = writeln!(
                x,
                r#"      <Attribute Name="{}" AttributeType="Scalar" Center="Cell">"#,
                escape(&shown)
            );
            let _ = writeln!(
                x,
                r#"        <DataItem Dimensions="{}" NumberType="Float" Precision="{bytes}" Format="HDF">{h5}:/{}/{}</DataItem>"#,
                dims(&cells),
                escape(stored),
                escape(&f.name)
            );
            let _ = writeln!(x, "      </Attribute>");
        }
    }
    let _ = writeln!(x, "    </Grid>");
    let _ = writeln!(x, "  </Domain>");
    let _ = writeln!(x, "</Xdmf>");
    x
}

/// Writes [`xdmf_text`] to `path` for the HDF5 file `h5` (replacing any
/// file there; use [`super::commit`] for a safe replacement). The XDMF file
/// names the HDF5 file by its file name: keep the two in one folder.
pub fn write_xdmf(
    path: &Path,
    h5: &Path,
    grid: &Grid,
    groups: &[GroupPlan],
    precision: Precision,
    title: &str,
) -> Result<(), OutputError> {
    let name = h5
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let text = xdmf_text(&name, grid, groups, precision, title);
    std::fs::write(path, text).map_err(|e| OutputError::io(path, e))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fields::{FieldSpec, Location};
    use crate::grid::{Axis, Coord};
    use crate::units::Dim;

    #[test]
    fn polar_nodes_are_cartesian_positions() {
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 1).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, std::f64::consts::FRAC_PI_2, 1).unwrap();
        let grid = Grid::new(vec![r, phi]).unwrap();
        let [x, y, z] = node_rows(&grid, 0..2);
        // Nodes (R, phi) = (1, 0), (1, π/2), (2, 0), (2, π/2).
        let want_x = [1.0, 0.0, 2.0, 0.0];
        let want_y = [0.0, 1.0, 0.0, 2.0];
        for i in 0..4 {
            assert!((x[i] - want_x[i]).abs() < 1e-15, "{x:?}");
            assert!((y[i] - want_y[i]).abs() < 1e-15, "{y:?}");
            assert!(z[i].abs() < 1e-300);
        }
    }

    #[test]
    fn face_fields_are_left_out_with_a_note() {
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 1.0, 4).unwrap()]).unwrap();
        let face = FieldSpec {
            name: "velocity_z".into(),
            dim: Dim::VELOCITY,
            placement: Placement {
                location: Location::Face { axis: 0 },
                extra: vec![],
            },
        };
        let cell = FieldSpec {
            name: "density".into(),
            dim: Dim::DENSITY,
            placement: Placement::cell(),
        };
        let groups = [GroupPlan {
            name: "state".into(),
            fields: vec![cell, face],
            link_to: None,
            sampling: None,
            about: Vec::new(),
        }];
        let t = xdmf_text("a&b.h5", &grid, &groups, Precision::Double, "slab");
        assert!(t.contains(r#"<Attribute Name="density""#), "{t}");
        assert!(t.contains("a&amp;b.h5:/state/density"), "{t}");
        assert!(!t.contains(r#"Name="velocity_z""#), "{t}");
        assert!(t.contains("velocity_z (/state/velocity_z, faces normal to z) is left out"));
        assert!(
            t.contains(r#"TopologyType="Polyline" NumberOfElements="4""#),
            "{t}"
        );
        assert!(t.contains(">0 1 1 2 2 3 3 4</DataItem>"), "{t}");
    }
}
