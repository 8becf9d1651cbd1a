//! The drift forecast in words (`check`) and as JSON (the file's
//! `drift_forecast` attribute), with the plain verdict.
//!
//! Owns: the layout and the verdict sentences. Does not own: the numbers.

use std::fmt;

use super::{Drift, Forecast, Level, Scheme};
use crate::check::position;

/// Below this drift the scheme holds the state to rounding.
const ROUND_OFF: f64 = 1e-12;

impl Scheme {
    /// The level at the grid's own resolution: the whole grid when the
    /// refinements ran on a block of it.
    pub fn at_grid(&self) -> &Level {
        self.whole.as_ref().unwrap_or(&self.levels[0])
    }

    /// The cells that would bring the drift to `eta` at the last observed
    /// order (along the line, or per axis on a plane), None when refining
    /// does not reduce it.
    fn cells_needed(&self, eta: f64, coordinate: &str) -> Option<String> {
        let p = *self.orders.last()?;
        let l = self.at_grid();
        let factor = (l.drift / eta).powf(1.0 / p);
        if !(p.is_finite() && p > 0.5) {
            return None;
        }
        if self.shape.is_empty() {
            let n = (l.cells as f64 * factor).ceil() as usize;
            return Some(format!("{n} cells along {coordinate}"));
        }
        let per: Vec<String> = self
            .shape
            .iter()
            .map(|(_, n)| ((*n as f64 * factor).ceil() as usize).to_string())
            .collect();
        Some(format!("{} cells on {coordinate}", per.join(" x ")))
    }

    /// The verdict sentence for amplitude `eta`.
    fn verdict(&self, label: &str, eta: Option<f64>, coordinate: &str) -> String {
        let d = self.at_grid().drift;
        if d.is_nan() {
            return format!("{label}: no forecast (the state is not finite somewhere)");
        }
        if d < ROUND_OFF {
            return format!("{label}: holds the state to rounding ({d:.1e})");
        }
        match eta {
            None => format!(
                "{label}: drifts by {d:.2e} of the sound speed in one dynamical time; a \
                 perturbation must be larger than that to stand above the drift (give \
                 --amplitude to compare one)"
            ),
            Some(eta) if d <= eta => format!(
                "{label}: drifts by {d:.2e} of the sound speed in one dynamical time, less than \
                 the amplitude {eta:.2e}: the perturbation stands above the drift"
            ),
            Some(eta) => {
                let cells = match self.cells_needed(eta, coordinate) {
                    Some(n) => format!(
                        "about {n} (observed order {:.2})",
                        self.orders.last().copied().unwrap_or(f64::NAN)
                    ),
                    None => "more cells do not help at the observed order".to_string(),
                };
                format!(
                    "{label}: DRIFTS by {d:.2e} of the sound speed in one dynamical time, more \
                     than the amplitude {eta:.2e}: without well-balancing the perturbation is \
                     lost; it would need {cells}, or a well-balanced scheme"
                )
            }
        }
    }

    fn json(&self) -> serde_json::Value {
        let mut v = serde_json::json!({
            "scheme": self.name,
            "data": self.data,
            "levels": self.levels.iter().map(Level::json).collect::<Vec<_>>(),
            "observed_order": self.orders.iter().map(|o| finite(*o)).collect::<Vec<_>>(),
        });
        if let Some(r) = &self.region {
            v["evaluated"] = r.as_str().into();
            v["cells_per_axis"] = self
                .shape
                .iter()
                .map(|(c, n)| serde_json::json!({"axis": c, "cells": n}))
                .collect();
        }
        if let Some(w) = &self.whole {
            v["whole_grid"] = w.json();
        }
        v
    }
}

impl Level {
    fn json(&self) -> serde_json::Value {
        let at = if self.point.is_empty() {
            finite(self.at)
        } else {
            self.point.iter().map(|x| finite(*x)).collect()
        };
        serde_json::json!({
            "cells": self.cells,
            "max_acceleration": finite(self.acceleration),
            "at": at,
            "max_drift": finite(self.drift),
            "velocity_in_one_dynamical_time": finite(self.velocity),
        })
    }

    /// Where the largest acceleration is, e.g. `0.5` or `(1.2, -0.1)`.
    fn position(&self) -> String {
        if self.point.is_empty() {
            return position(self.at);
        }
        let p: Vec<String> = self.point.iter().map(|x| position(*x)).collect();
        format!("({})", p.join(", "))
    }
}

fn finite(x: f64) -> serde_json::Value {
    if x.is_finite() {
        x.into()
    } else {
        serde_json::Value::Null
    }
}

impl Forecast {
    /// The plain verdicts, one per scheme (and the DG degree that would
    /// hold the amplitude at this resolution).
    pub fn verdicts(&self) -> Vec<String> {
        let eta = self.amplitude.as_ref().map(|a| a.0);
        let s = &self.coordinate;
        let mut out = vec![self.finite_volume.verdict("finite volume", eta, s)];
        if self.forced {
            let (who, whose) = if self.finite_volume.region.is_some() {
                ("the finite-volume scheme adds", "its")
            } else {
                ("both schemes add", "their")
            };
            out.insert(
                0,
                format!(
                    "the laws do not balance (solve_for: nothing): {who} the manufactured \
                     forcing (the file's /forcing group) as a source, so what remains is {whose} \
                     discretisation error"
                ),
            );
        }
        if let Some(dg) = &self.dg {
            out.push(dg.verdict("nodal DG", eta, s));
        }
        if let (Some(eta), Some((k, d))) = (eta, self.by_degree.last()) {
            let fv = self.finite_volume.at_grid().drift;
            if fv > eta || self.dg.as_ref().is_some_and(|g| g.levels[0].drift > eta) {
                out.push(if *d <= eta {
                    format!(
                        "at this resolution nodal DG of degree {k} drifts by {d:.2e}, below the \
                         amplitude"
                    )
                } else {
                    format!("no nodal DG up to degree {k} holds the amplitude at this resolution")
                });
            }
        }
        out
    }

    /// Whether a scheme without well-balancing drifts by more than the
    /// amplitude (None without an amplitude).
    pub fn drifts(&self) -> Option<bool> {
        let eta = self.amplitude.as_ref()?.0;
        let dg = self.dg.as_ref().map_or(0.0, |g| g.levels[0].drift);
        Some(self.finite_volume.at_grid().drift.max(dg) > eta)
    }

    /// The JSON record written into files.
    pub fn json(&self) -> serde_json::Value {
        serde_json::json!({
            "coordinate": self.coordinate,
            "drift": "velocity the spurious acceleration drives in one dynamical time, relative \
                      to the sound speed sqrt(P/rho)",
            "schemes": std::iter::once(&self.finite_volume).chain(&self.dg)
                .map(Scheme::json).collect::<Vec<_>>(),
            "amplitude": self.amplitude.as_ref().map(|a| serde_json::json!({
                "value": a.0, "from": a.1 })),
            "dg_drift_by_degree": self.by_degree.iter()
                .map(|(k, d)| serde_json::json!({"degree": k, "drift": finite(*d)}))
                .collect::<Vec<_>>(),
            "with_manufactured_forcing": self.forced,
            "notes": self.notes,
            "verdict": self.verdicts(),
        })
    }
}

impl Drift {
    /// The JSON record written into files (`drift_forecast`).
    pub fn json(&self) -> String {
        match self {
            Drift::Covered(f) => f.json().to_string(),
            Drift::NotCovered(why) => serde_json::json!({ "not_covered": why }).to_string(),
        }
    }
}

fn scheme(f: &mut fmt::Formatter<'_>, s: &Scheme, coordinate: &str) -> fmt::Result {
    writeln!(f, "  scheme       {}", s.name)?;
    writeln!(f, "    data       {}", s.data)?;
    if let Some(r) = &s.region {
        writeln!(f, "    evaluated  {r}")?;
    }
    let line = |l: &Level| {
        format!(
            "max acceleration {:.3e} at {coordinate} = {}, drift {:.3e} (velocity {:.3e} in one \
             dynamical time)",
            l.acceleration,
            l.position(),
            l.drift,
            l.velocity
        )
    };
    if let Some(w) = &s.whole {
        writeln!(
            f,
            "    whole grid at its resolution: {} cells  {}",
            w.cells,
            line(w)
        )?;
    }
    for l in &s.levels {
        writeln!(f, "    {:>6} cells  {}", l.cells, line(l))?;
    }
    let o: Vec<String> = s.orders.iter().map(|o| format!("{o:.2}")).collect();
    writeln!(f, "    observed order {}", o.join(", "))
}

impl fmt::Display for Drift {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "drift forecast (schemes without well-balancing applied to the sampled background, \
             at the grid's resolution and refined by 2 and 4)"
        )?;
        let fc = match self {
            Drift::NotCovered(why) => return write!(f, "  not evaluated: {why}"),
            Drift::Covered(fc) => fc,
        };
        let s = &fc.coordinate;
        writeln!(
            f,
            "  drift        dv/c, the velocity the spurious acceleration drives in one dynamical \
             time (c/|g|, or R/v_phi on a disk) over the sound speed; cells next to the ends are \
             left out"
        )?;
        scheme(f, &fc.finite_volume, s)?;
        if let Some(dg) = &fc.dg {
            scheme(f, dg, s)?;
        }
        for n in &fc.notes {
            writeln!(f, "  note         {n}")?;
        }
        if let Some((eta, from)) = &fc.amplitude {
            writeln!(f, "  amplitude    {eta:.3e} ({from})")?;
        }
        let v = fc.verdicts();
        for (i, line) in v.iter().enumerate() {
            write!(f, "  verdict      {line}")?;
            if i + 1 < v.len() {
                writeln!(f)?;
            }
        }
        Ok(())
    }
}
