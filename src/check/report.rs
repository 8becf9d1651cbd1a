//! The text of a check report, as `stillpoint check` prints it.
//!
//! Owns: the layout of the report. Does not own: any verdict.

use std::fmt;

use super::{Report, Verdict};

impl fmt::Display for Report {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = &self.coordinate;
        writeln!(f, "balance")?;
        match &self.verdict {
            Verdict::IdenticallyZero { how } => {
                writeln!(f, "  verdict      identically zero")?;
                writeln!(f, "  how          {how}")?;
            }
            Verdict::ZeroToTolerance { max, at } => {
                writeln!(f, "  verdict      zero to tolerance")?;
                writeln!(
                    f,
                    "  max residual {max:.3e} (relative) at {s} = {at:.6}, tolerance {:.1e}",
                    self.tolerance
                )?;
            }
            Verdict::NotEquilibrium { max, at } => {
                writeln!(f, "  verdict      NOT AN EQUILIBRIUM")?;
                writeln!(
                    f,
                    "  max residual {max:.3e} (relative) at {s} = {at:.6}, tolerance {:.1e}",
                    self.tolerance
                )?;
            }
        }
        if let Some(r) = &self.residual_formula {
            writeln!(f, "  residual     {r}")?;
        }
        writeln!(f, "positivity")?;
        for (name, v, at, strict) in &self.positivity {
            let ok = if *strict { *v > 0.0 } else { *v >= 0.0 };
            let mark = if ok { "ok" } else { "FAILS" };
            writeln!(f, "  {name:<12} min {v:.6e} at {s} = {at:.6}  {mark}")?;
        }
        if let Some((m, at)) = self.discrete {
            writeln!(
                f,
                "discrete imbalance (second-order centred differences at the cell centres)"
            )?;
            writeln!(f, "  max          {m:.3e} (relative) at {s} = {at:.6}")?;
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
