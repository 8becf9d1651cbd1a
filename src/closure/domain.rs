//! The coordinate range a background must cover, the knots where integrals
//! are tabulated, and the points scanned for existence and stability —
//! with the switch points of a model's laws added (see `switches`).
//!
//! Owns: the domain and its scan points. Does not own: finding the switch
//! points or what is done at the points.

use super::switches;
use crate::model::Model;

/// The coordinate range the background must cover and the knots (grid edges
/// and other sample points) where integrated closures tabulate their integral.
#[derive(Clone, Debug, PartialEq)]
pub struct Domain {
    /// Lowest coordinate.
    pub lo: f64,
    /// Highest coordinate.
    pub hi: f64,
    /// Points where an integral is tabulated (for example the cell edges).
    pub knots: Vec<f64>,
    /// `lo` is the axis or centre (R = 0 or r = 0) of a grid that contains
    /// it but never samples it (cell centres and Gauss points lie off it), so
    /// scans start just off it: many laws are finite there only as a limit.
    pub axis_at_lo: bool,
    /// The range of heights z the grid covers, for a balance in (R, z) (a
    /// stratified disk); None on grids without height.
    pub height: Option<(f64, f64)>,
}

impl Domain {
    /// Points to scan for positivity and existence: the knots plus a uniform
    /// set of 4001 points (see [`Domain::scan_points_with`] for the points a
    /// piecewise law adds).
    pub fn scan_points(&self) -> Vec<f64> {
        let n = 4000;
        let lo = if self.axis_at_lo {
            self.lo + 1e-9 * (self.hi - self.lo)
        } else {
            self.lo
        };
        let mut pts: Vec<f64> = (0..=n)
            .map(|i| lo + (self.hi - lo) * i as f64 / n as f64)
            .collect();
        pts.extend(
            self.knots
                .iter()
                .copied()
                .filter(|k| *k >= lo && *k <= self.hi),
        );
        pts.sort_by(|a, b| a.total_cmp(b));
        pts.dedup_by(|a, b| a.to_bits() == b.to_bits());
        pts
    }

    /// The scan points with the switch points of piecewise laws added, a
    /// point just inside each side of every switch and one in the middle of
    /// every piece between switches, so that a piece narrower than the
    /// uniform spacing is still looked at.
    pub fn scan_points_with(&self, switches: &[f64]) -> Vec<f64> {
        let mut pts = self.scan_points();
        let first = pts.first().copied().unwrap_or(self.lo);
        let mut cuts: Vec<f64> = switches
            .iter()
            .copied()
            .filter(|x| *x > first && *x < self.hi)
            .collect();
        cuts.sort_by(|a, b| a.total_cmp(b));
        let nudge = 1e-9 * (self.hi - self.lo);
        let mut edges = vec![first];
        edges.extend(&cuts);
        edges.push(self.hi);
        for w in edges.windows(2) {
            let inset = nudge.min(0.25 * (w[1] - w[0]));
            pts.extend([w[0] + inset, 0.5 * (w[0] + w[1]), w[1] - inset]);
        }
        pts.extend(cuts);
        pts.sort_by(|a, b| a.total_cmp(b));
        pts.dedup_by(|a, b| a.to_bits() == b.to_bits());
        pts
    }

    /// The scan points with the switch points of the model's laws (see
    /// [`Domain::scan_points_with`]).
    pub fn scan_points_for(&self, model: &Model) -> Vec<f64> {
        let switches: Vec<f64> = self.switches(model).iter().map(|w| w.at).collect();
        self.scan_points_with(&switches)
    }

    /// The switch points of the model's laws inside this domain (and up to
    /// the anchor, when it lies outside), bracketed on its knots.
    pub fn switches(&self, model: &Model) -> Vec<switches::Switch> {
        let (lo, hi) = self.range_with_anchor(model);
        let mut fence = self.knots.clone();
        fence.extend(model.anchor.map(|a| a.at));
        switches::law_switches(model, (lo, hi), &fence)
    }

    /// The domain's range stretched to include the model's anchor.
    pub fn range_with_anchor(&self, model: &Model) -> (f64, f64) {
        match model.anchor {
            Some(a) => (self.lo.min(a.at), self.hi.max(a.at)),
            None => (self.lo, self.hi),
        }
    }
}

/// `n` points from `lo` to `hi`, both ends included, evenly spaced, or
/// logarithmically (`log`, for `lo` > 0): where tables, plots and survey
/// scans look along a line.
pub fn spaced(lo: f64, hi: f64, n: usize, log: bool) -> Vec<f64> {
    (0..n)
        .map(|i| {
            let t = i as f64 / (n.max(2) - 1) as f64;
            if log {
                lo * (hi / lo).powf(t)
            } else {
                lo + (hi - lo) * t
            }
        })
        .collect()
}
