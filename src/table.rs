//! Tables of a background along its coordinate: rotation curves for disks
//! (v_φ, Ω, v_K, v_φ/v_K, 1 − v_φ/v_K, H/R) and stratification for slabs.
//!
//! Rows where the state is no equilibrium (v_φ² < 0, a density or pressure
//! that is not positive) are printed with what can be computed and marked
//! in a last `note` column, present only when some row needs it.
//!
//! Owns: the columns, their units, the marks and the text and CSV
//! renderings. Does not own: solving (it reads a [`Background`]).

use crate::background::Background;
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
    /// For each row, why the state is no equilibrium there, if it is not.
    pub notes: Vec<Option<String>>,
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
    let disk = model.shape.is_disk();
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
    let v2 = match &model.rotation {
        // A given rotation law: v_φ² = v_φ·v_φ is never negative.
        Some(_) => None,
        None if disk => crate::closure::Laws::build(model)?
            .rotation_sq
            .map(|e| crate::closure::compile(model, &e, "rotation"))
            .transpose()?,
        None => None,
    };
    let mut rows = Vec::with_capacity(at.len());
    let mut notes = Vec::with_capacity(at.len());
    for &x in at {
        let st = bg.on_line(x);
        let c2 = st.sound_speed_sq();
        let fails = |v: f64| crate::closure::existence::Extent::fails(true, v);
        let v2x = v2.as_ref().map_or(0.0, |p| p.eval(&[x]));
        notes.push(if fails(st.density) {
            Some(format!("no equilibrium: density {:e}", st.density))
        } else if fails(st.pressure) {
            Some(format!("no equilibrium: pressure {:e}", st.pressure))
        } else if v2x < 0.0 {
            Some(format!("no equilibrium: v_phi^2 = {v2x:.3e} < 0"))
        } else {
            None
        });
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
        notes,
    })
}

impl Table {
    /// Aligned text with a header of names and a line of units; values that
    /// are not finite (v_φ/v_K without gravity, Ω on the axis) print as `-`.
    pub fn to_text(&self) -> String {
        let noted = self.notes.iter().any(Option::is_some);
        let cells: Vec<Vec<String>> = self
            .rows
            .iter()
            .zip(&self.notes)
            .map(|(r, n)| {
                let mut c: Vec<String> = r.iter().map(|v| number(*v)).collect();
                if noted {
                    c.push(n.clone().unwrap_or_default());
                }
                c
            })
            .collect();
        let mut names = self.names.clone();
        let mut units: Vec<String> = self.units.iter().map(|u| format!("[{u}]")).collect();
        if noted {
            names.push("note".into());
            units.push(String::new());
        }
        let width: Vec<usize> = (0..names.len())
            .map(|j| {
                cells
                    .iter()
                    .map(|r| r[j].len())
                    .chain([names[j].len(), units[j].len()])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let line = |items: &[String]| {
            items
                .iter()
                .zip(&width)
                .enumerate()
                .map(|(j, (c, w))| {
                    if j == self.names.len() {
                        format!("{c:<w$}")
                    } else {
                        format!("{c:>w$}")
                    }
                })
                .collect::<Vec<_>>()
                .join("  ")
                .trim_end()
                .to_string()
        };
        let mut out = vec![line(&names), line(&units)];
        out.extend(cells.iter().map(|r| line(r)));
        out.join("\n") + "\n"
    }

    /// CSV with a header of `name [units]` and full-precision numbers (and
    /// a last `note` column when some row is marked).
    pub fn to_csv(&self) -> String {
        let noted = self.notes.iter().any(Option::is_some);
        let mut head: Vec<String> = self
            .names
            .iter()
            .zip(&self.units)
            .map(|(n, u)| format!("{n} [{u}]"))
            .collect();
        if noted {
            head.push("note".into());
        }
        let mut out = head.join(",") + "\n";
        for (r, n) in self.rows.iter().zip(&self.notes) {
            let mut cells: Vec<String> = r.iter().map(|v| crate::output::csv_number(*v)).collect();
            if noted {
                cells.push(n.clone().unwrap_or_default());
            }
            out += &cells.join(",");
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
