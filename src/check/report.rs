//! The text of a check report, as `stillpoint check` prints it.
//!
//! Owns: the layout of the report. Does not own: any verdict.

use std::fmt;

use super::{Report, Verdict};

impl Report {
    /// The verdict between switch points, under `label` (`verdict`, or
    /// `pieces` when a jump decides the verdict).
    fn pieces(&self, f: &mut fmt::Formatter<'_>, label: &str) -> fmt::Result {
        let (word, detail) = match &self.verdict {
            Verdict::IdenticallyZero { how } => ("identically zero", format!("how          {how}")),
            Verdict::ZeroToTolerance { max, at } => ("zero to tolerance", self.largest(*max, *at)),
            Verdict::NotEquilibrium { max, at } => ("NOT AN EQUILIBRIUM", self.largest(*max, *at)),
        };
        writeln!(f, "  {label:<12} {word}")?;
        writeln!(f, "  {detail}")
    }

    fn largest(&self, max: f64, at: f64) -> String {
        format!(
            "max residual {max:.3e} (relative) at {} = {}, tolerance {:.1e}",
            self.coordinate,
            position(at),
            self.tolerance
        )
    }
}

impl fmt::Display for Report {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = &self.coordinate;
        writeln!(f, "balance")?;
        let unintended = self.jumps.iter().filter(|j| !j.intended).count();
        if unintended > 0 {
            writeln!(
                f,
                "  verdict      NOT AN EQUILIBRIUM: {unintended} jump{} where the balance \
                 differentiates",
                if unintended == 1 { "" } else { "s" }
            )?;
        } else {
            self.pieces(f, "verdict")?;
        }
        for j in &self.jumps {
            let note = if j.intended {
                " — intended (balance.intended_jumps): not an equilibrium there"
            } else {
                ""
            };
            writeln!(f, "  jump         {}{note}", j.describe(s))?;
        }
        if unintended > 0 {
            self.pieces(f, "pieces")?;
        }
        if let Some(r) = &self.residual_formula {
            writeln!(f, "  residual     {r}")?;
        }
        for line in &self.column {
            writeln!(f, "  {line}")?;
        }
        writeln!(f, "positivity")?;
        for e in &self.positivity {
            let mark = if e.ok() { "ok" } else { "FAILS" };
            let (q, v, at) = (e.quantity, e.min, e.at);
            writeln!(f, "  {q:<12} min {v:.6e} at {s} = {}  {mark}", position(at))?;
        }
        for message in &self.no_equilibrium {
            writeln!(f, "  no equilibrium: {message}")?;
        }
        if let Some((m, at)) = self.discrete {
            writeln!(
                f,
                "discrete imbalance (second-order centred differences at the cell centres)"
            )?;
            writeln!(
                f,
                "  max          {m:.3e} (relative) at {s} = {}",
                position(at)
            )?;
            writeln!(
                f,
                "  a scheme without well-balancing drifts at this level; perturbations much \
                 smaller than it will not survive"
            )?;
        }
        write!(
            f,
            "result         {}",
            if self.passed() { "PASS" } else { "FAIL" }
        )
    }
}

/// A position in a report: six decimals where that reads well, else six
/// significant digits with an exponent (a radius in centimetres is
/// `3.394245e22`, not a 23-digit integer).
pub fn position(x: f64) -> String {
    if x == 0.0 || (1e-4..1e7).contains(&x.abs()) {
        format!("{x:.6}")
    } else {
        format!("{x:.6e}")
    }
}
