//! Tables of a background along its coordinate: rotation curves for disks
//! (v_φ, Ω, v_K, v_φ/v_K, 1 − v_φ/v_K, H/R) and stratification for slabs.
//!
//! Owns: the columns, their units and the text and CSV renderings. Does not
//! own: solving (it reads a [`Background`]).

use crate::background::{Background, Shape};
use crate::closure::ClosureError;
use crate::model::Model;
use crate::units::Dim;

/// A table: named columns with units, and rows of numbers.
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    /// Column names.
    pub names: Vec<String>,
    /// Column units.
    pub units: Vec<String>,
    /// Rows of values.
    pub rows: Vec<Vec<f64>>,
}

/// Tabulate the background at the points `at` (background coordinate).
pub fn tabulate(model: &Model, bg: &dyn Background, at: &[f64]) -> Result<Table, ClosureError> {
    let s = model.coordinate();
    let u = |d: Dim| model.units.unit_string(d);
    let (rho_dim, p_dim) = if model.vertically_integrated {
        (Dim::SURFACE_DENSITY, Dim::new(0, 1, -2, 0))
    } else {
        (Dim::DENSITY, Dim::new(-1, 1, -2, 0))
    };
    let tfac = model.temperature_per_c2();
    let mut cols: Vec<(&str, Dim)> = vec![
        (s, Dim::LENGTH),
        ("rho", rho_dim),
        ("P", p_dim),
        ("c^2", Dim::VELOCITY_SQ),
    ];
    if tfac.is_some() {
        cols.push(("T", Dim::TEMPERATURE));
    }
    let disk = model.shape == Shape::DiskMidplane;
    let phi_s = crate::closure::compile(
        model,
        &model.potential.expr.diff(s),
        &model.potential.origin,
    )?;
    if disk {
        cols.extend([
            ("v_phi", Dim::VELOCITY),
            ("Omega", Dim::FREQUENCY),
            ("v_K", Dim::VELOCITY),
            ("v_phi/v_K", Dim::NONE),
            ("1-v_phi/v_K", Dim::NONE),
            ("H/R", Dim::NONE),
        ]);
    }
    let mut rows = Vec::with_capacity(at.len());
    for &x in at {
        let st = bg.on_line(x);
        let c2 = st.sound_speed_sq();
        let mut row = vec![x, st.density, st.pressure, c2];
        if let Some(t) = tfac {
            row.push(t * c2);
        }
        if disk {
            // Keplerian speed of the potential: v_K² = R ∂Φ/∂R; H = c/Ω_K.
            let vk = (x * phi_s.eval(&[x])).sqrt();
            let ratio = st.rotation() / vk;
            row.extend([
                st.rotation(),
                st.rotation() / x,
                vk,
                ratio,
                1.0 - ratio,
                c2.sqrt() / vk,
            ]);
        }
        rows.push(row);
    }
    Ok(Table {
        names: cols.iter().map(|(n, _)| n.to_string()).collect(),
        units: cols.iter().map(|(_, d)| u(*d)).collect(),
        rows,
    })
}

impl Table {
    /// Aligned text with a header of names and a line of units; values that
    /// are not finite (v_φ/v_K without gravity, Ω on the axis) print as `-`.
    pub fn to_text(&self) -> String {
        let cells: Vec<Vec<String>> = self
            .rows
            .iter()
            .map(|r| r.iter().map(|v| number(*v)).collect())
            .collect();
        let units: Vec<String> = self.units.iter().map(|u| format!("[{u}]")).collect();
        let width: Vec<usize> = (0..self.names.len())
            .map(|j| {
                cells
                    .iter()
                    .map(|r| r[j].len())
                    .chain([self.names[j].len(), units[j].len()])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let line = |items: &[String]| {
            items
                .iter()
                .zip(&width)
                .map(|(c, w)| format!("{c:>w$}"))
                .collect::<Vec<_>>()
                .join("  ")
        };
        let mut out = vec![line(&self.names), line(&units)];
        out.extend(cells.iter().map(|r| line(r)));
        out.join("\n") + "\n"
    }

    /// CSV with a header of `name [units]` and full-precision numbers.
    pub fn to_csv(&self) -> String {
        let head: Vec<String> = self
            .names
            .iter()
            .zip(&self.units)
            .map(|(n, u)| format!("{n} [{u}]"))
            .collect();
        let mut out = head.join(",") + "\n";
        for r in &self.rows {
            out += &r
                .iter()
                .map(|v| format!("{v:e}"))
                .collect::<Vec<_>>()
                .join(",");
            out.push('\n');
        }
        out
    }
}

fn number(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.6e}")
    } else {
        "-".to_string()
    }
}
