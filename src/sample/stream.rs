//! The streaming sampler: a background on a grid, slab by slab along the
//! first axis, in parallel within a slab.
//!
//! Owns: the plan (quadrature nodes and weights per axis with the volume
//! factor folded in; which axes the state varies along; the lane axis), the
//! evaluation of lines of cells over blocks of points, the accumulation of
//! cell averages, and the broadcast of values along axes the state does not
//! vary along. Does not own the rule's nodes (see [`super::gauss`]), the
//! fields' names (see `slots`) or any file.
//!
//! How a slab is computed: every axis along which the state can vary is
//! *active*; the last active axis is the *lane axis*. For each combination
//! of cells (and quadrature nodes) of the other active axes — a *line* — the
//! nodes of every cell of the lane axis are evaluated in blocks of
//! [`LANES`] points: the grid maps them to frame coordinates, the background
//! evaluates the block, the grid rotates its vectors. Lines are independent
//! and run in parallel; each cell's sum is taken in one fixed order (nodes
//! of the first axis outermost), so the values do not depend on the number
//! of threads or on the slab size. Inactive axes are computed once and
//! broadcast.

use std::ops::Range;

use rayon::prelude::*;

use super::extras::{self, Extras};
use super::gauss::GaussLegendre;
use super::perturbed::{self, Perturbed};
use super::slots::{self, Entry, Slots, RHO};
use super::{check_inputs, GasConstants, SampleError, SamplingRule};
use crate::background::{Background, StateBlock, Want, Workspace, LANES};
use crate::fields::{FieldSpec, Location, Placement, Slab};
use crate::grid::{Embedding, Grid};
use crate::perturb::Perturbations;

/// Nodes and weights of the rule on every cell of one axis, flattened as
/// `cell * per_cell + k`; weights include the axis's volume factor.
///
/// A cell holding switch points of a piecewise law (`cuts`) is split there
/// and each piece gets the rule of its own, so that every piece's integrand
/// is smooth. Every cell of the axis then has room for the most pieces of
/// one cell: a cell with fewer takes its own nodes first and repeats its
/// first node with weight zero after them, so an unsplit cell's sum is the
/// same, to the bit, as without cuts.
struct AxisNodes {
    per_cell: usize,
    nodes: Vec<f64>,
    weights: Vec<f64>,
}

impl AxisNodes {
    /// The nodes of `rule` in every cell of one axis as points of their own
    /// (one per "cell" of the refined axis), for nodal values.
    fn nodal(grid: &Grid, axis: usize, rule: &GaussLegendre) -> AxisNodes {
        let mut nodes = Vec::new();
        for w in grid.axes()[axis].edges.windows(2) {
            let (mid, half) = (0.5 * (w[0] + w[1]), 0.5 * (w[1] - w[0]));
            // The ends of a Lobatto rule are the edges themselves.
            nodes.extend(rule.nodes.iter().map(|x| match *x {
                x if x <= -1.0 => w[0],
                x if x >= 1.0 => w[1],
                x => mid + half * x,
            }));
        }
        AxisNodes {
            per_cell: 1,
            weights: vec![1.0; nodes.len()],
            nodes,
        }
    }

    fn new(grid: &Grid, axis: usize, rule: Option<&GaussLegendre>, cuts: &[f64]) -> AxisNodes {
        let edges = &grid.axes()[axis].edges;
        let inside = |w: &[f64]| cuts.iter().filter(|c| **c > w[0] && **c < w[1]).count();
        let pieces = match rule {
            Some(_) => 1 + edges.windows(2).map(inside).max().unwrap_or(0),
            None => 1,
        };
        let per_piece = rule.map_or(1, |r| r.nodes.len());
        let per_cell = per_piece * pieces;
        let mut nodes = Vec::with_capacity((edges.len() - 1) * per_cell);
        let mut weights = Vec::with_capacity(nodes.capacity());
        for w in edges.windows(2) {
            let Some(r) = rule else {
                nodes.push(0.5 * (w[0] + w[1]));
                weights.push(1.0);
                continue;
            };
            let mut ends = vec![w[0]];
            ends.extend(cuts.iter().filter(|c| **c > w[0] && **c < w[1]));
            ends.push(w[1]);
            let first = nodes.len();
            for piece in ends.windows(2) {
                let (mid, half) = (0.5 * (piece[0] + piece[1]), 0.5 * (piece[1] - piece[0]));
                for (x, wt) in r.nodes.iter().zip(&r.weights) {
                    let at = mid + half * x;
                    nodes.push(at);
                    weights.push(half * wt * grid.volume_factor(axis, at));
                }
            }
            let pad = nodes[first];
            nodes.resize(first + per_cell, pad);
            weights.resize(first + per_cell, 0.0);
        }
        AxisNodes {
            per_cell,
            nodes,
            weights,
        }
    }
}

/// Switch points of piecewise laws, in one coordinate of the background's
/// frame: grid axes of that name (R on a polar or meridional grid, z on a
/// slab, r on a sphere) split their cells there when averaging. Other axes
/// (x and y for a switch in R) are not split.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Cuts {
    /// The coordinate's name (`R`, `z`, `r`).
    pub coordinate: String,
    /// The switch points, in that coordinate.
    pub at: Vec<f64>,
}

impl Cuts {
    /// No cuts.
    pub fn none() -> Cuts {
        Cuts::default()
    }

    /// The cuts that fall on grid axis `axis`.
    fn on_axis(&self, grid: &Grid, axis: usize) -> &[f64] {
        if grid.axes()[axis].coord.name() == self.coordinate {
            &self.at
        } else {
            &[]
        }
    }
}

/// Buffers one thread reuses for every block.
struct ThreadBuffers {
    grid: Vec<Vec<f64>>,
    frame: Vec<Vec<f64>>,
    velocity: Vec<Vec<f64>>,
    state: StateBlock,
    bg: Workspace,
    values: Vec<Vec<f64>>,
    bad: Vec<(usize, slots::Failure)>,
    weight: Vec<f64>,
    perturbed: Option<perturbed::Buffers>,
    extras: Option<extras::Buffers>,
}

/// A background prepared for sampling on a grid under a rule. Produces the
/// fields of [`Sampler::fields`] for any range of rows of the first axis.
pub struct Sampler<'a> {
    bg: &'a dyn Background,
    grid: &'a Grid,
    embed: Embedding,
    gas: GasConstants,
    averaged: bool,
    /// Nodes per axis of a nodal rule (values at each node of each cell),
    /// None otherwise.
    nodal: Option<usize>,
    /// The grid axis whose faces this sampler evaluates (see
    /// [`Sampler::faces`]); None for cells.
    face: Option<usize>,
    /// A modal rule: modes per axis and the projection matrix of the nodal
    /// values (see [`super::gauss::projection`]).
    modal: Option<(usize, Vec<f64>)>,
    /// Points per axis the lines run over: the cells, or cells × nodes.
    shape: Vec<usize>,
    axes: Vec<AxisNodes>,
    active: Vec<bool>,
    lane: usize,
    slots: Slots,
    entries: Vec<Entry>,
    sampling: String,
    /// Perturbations added at every point, when there are any.
    perturb: Option<Perturbed<'a>>,
    /// Fields sampled on request, with their first slot and slot count.
    extras: Option<(&'a Extras, usize, usize)>,
    /// The groups of fields a slab holds, in order: (name, count).
    groups: Vec<(&'static str, usize)>,
    /// Reduced arrays of earlier slabs, for reuse.
    scratch: std::sync::Mutex<Vec<Vec<f64>>>,
    /// Per field, whether a slab holds its values (see [`Sampler::keeping`]).
    kept: Vec<bool>,
    /// Per value slot, whether a kept field needs it: computed at each
    /// point (`need`, one bit per slot of the state) and summed over the
    /// nodes of a cell (`summed`).
    need: u64,
    summed: Vec<bool>,
}

impl<'a> Sampler<'a> {
    /// Prepare `bg` on `grid` under `rule`; errors for inputs that do not fit
    /// (a frame the grid cannot hold, a bad rule or gas constant).
    pub fn new(
        bg: &'a dyn Background,
        grid: &'a Grid,
        rule: &SamplingRule,
        gas: &GasConstants,
    ) -> Result<Sampler<'a>, SampleError> {
        Self::with_cuts(bg, grid, rule, gas, &Cuts::none())
    }

    /// [`Sampler::new`], with cell averages split at the switch points
    /// `cuts`; a rule to a tolerance raises the points per axis until the
    /// estimate meets it (see [`super::converge`]).
    pub fn with_cuts(
        bg: &'a dyn Background,
        grid: &'a Grid,
        rule: &SamplingRule,
        gas: &GasConstants,
        cuts: &Cuts,
    ) -> Result<Sampler<'a>, SampleError> {
        let embed = check_inputs(bg, grid, rule, gas)?;
        let (gauss, nodal) = match rule {
            SamplingRule::Average { points } => (GaussLegendre::new(*points), None),
            SamplingRule::AverageTo { tolerance, start } => {
                return super::converge(bg, grid, *tolerance, *start, gas, cuts)
            }
            SamplingRule::Nodes { family, points } => (family.rule(*points), Some(*points)),
            SamplingRule::Modes { points, .. } => (GaussLegendre::new(*points), Some(*points)),
            SamplingRule::Center => (None, None),
        };
        let axes = (0..grid.axes().len())
            .map(|a| match (nodal, gauss.as_ref()) {
                (Some(_), Some(r)) => AxisNodes::nodal(grid, a, r),
                _ => AxisNodes::new(grid, a, gauss.as_ref(), cuts.on_axis(grid, a)),
            })
            .collect();
        let k = nodal.unwrap_or(1);
        let shape = grid.shape().iter().map(|c| c * k).collect();
        let active = embed.active_axes(bg.depends_on());
        // The last active axis of the layout's natural order, so that a
        // grid's nesting does not change the order of any sum (see `line`).
        let lane = grid
            .natural_order()
            .iter()
            .rev()
            .copied()
            .find(|a| active[*a])
            .unwrap_or(0);
        let slots = Slots {
            ncomp: embed.components().len(),
        };
        let modal = match (rule, gauss.as_ref()) {
            (SamplingRule::Modes { modes, .. }, Some(r)) => {
                Some((*modes, super::gauss::projection(*modes, r)))
            }
            _ => None,
        };
        let mut entries = slots::catalogue(grid, gas, embed.components());
        if let Some(n) = modal.as_ref().map(|m| m.0).or(nodal) {
            for e in &mut entries {
                e.spec.placement.extra = vec![n; grid.axes().len()];
            }
        }
        let groups = vec![("background", entries.len())];
        Ok(Sampler {
            bg,
            grid,
            embed,
            gas: *gas,
            averaged: gauss.is_some() && nodal.is_none(),
            nodal,
            face: None,
            modal,
            shape,
            axes,
            active,
            lane,
            slots,
            entries,
            sampling: rule.describe(grid),
            perturb: None,
            extras: None,
            groups,
            scratch: std::sync::Mutex::new(Vec::new()),
            kept: Vec::new(),
            need: u64::MAX,
            summed: Vec::new(),
        })
    }

    /// The background at the faces normal to grid axis `axis`: point
    /// values at the centre of each face (`nodes` None: the edges of that
    /// axis, the cell centres of the others), or at the tensor
    /// Gauss–Legendre nodes of each face (`nodes` per axis of the face, the
    /// nodes as trailing dimensions in C order of the other axes). Every
    /// field of the catalogue, placed on those faces: n + 1 along `axis`.
    /// A slab of cell rows holds the faces of those rows (and the closing
    /// face in the last slab, for faces normal to the first axis). No
    /// perturbation is added: faces carry the equilibrium.
    pub fn faces(
        bg: &'a dyn Background,
        grid: &'a Grid,
        axis: usize,
        nodes: Option<usize>,
        gas: &GasConstants,
    ) -> Result<Sampler<'a>, SampleError> {
        // The face of a line is a point: its centre.
        let nodes = nodes.filter(|_| grid.axes().len() > 1);
        let rule = match nodes {
            None => SamplingRule::Center,
            Some(points) => SamplingRule::Nodes {
                family: super::gauss::NodeFamily::Legendre,
                points,
            },
        };
        let mut s = Sampler::with_cuts(bg, grid, &rule, gas, &Cuts::none())?;
        let edges = grid.axes()[axis].edges.clone();
        s.shape[axis] = edges.len();
        s.axes[axis] = AxisNodes {
            per_cell: 1,
            weights: vec![1.0; edges.len()],
            nodes: edges,
        };
        s.face = Some(axis);
        let nd = grid.axes().len();
        for e in &mut s.entries {
            e.spec.placement = Placement {
                location: Location::Face { axis },
                extra: nodes.map_or(Vec::new(), |n| vec![n; nd - 1]),
            };
        }
        let name = grid.axes()[axis].coord.name();
        s.sampling = match nodes {
            None => format!(
                "point values of the background at the centres of the faces normal to {name} \
                 (the edges of {name}, the cell centres of the other axes); no perturbation"
            ),
            Some(n) => format!(
                "point values of the background at the {n} Gauss–Legendre nodes per axis of \
                 each face normal to {name} (tensor product over the other axes, C order, \
                 nodes as trailing dimensions; the edges of {name}); reference nodes on \
                 [-1, 1]: {}; no perturbation",
                super::gauss::NodeFamily::Legendre
                    .rule(n)
                    .map(|r| r
                        .nodes
                        .iter()
                        .map(|x| format!("{x}"))
                        .collect::<Vec<_>>()
                        .join(", "))
                    .unwrap_or_default()
            ),
        };
        Ok(s)
    }

    /// This sampler with only the fields `keep` marks (one flag per field
    /// of [`Sampler::fields`]) computed: the others are empty arrays in
    /// every slab, and the values only they need are not computed. The
    /// kept fields' values are the same to the bit. A perturbed sampler is
    /// returned unchanged (its fields are computed together).
    pub fn keeping(mut self, keep: &[bool]) -> Sampler<'a> {
        if self.perturb.is_some() || keep.len() != self.entries.len() || keep.iter().all(|k| *k) {
            return self;
        }
        let base = self.slots.len() - 1;
        let mut summed = vec![false; self.value_slots()];
        // Fields sampled on request are summed whenever there are any.
        summed[base..].fill(true);
        let mut need = 0u64;
        let (mom, vel, nc) = (self.slots.mom(), self.slots.vel(), self.slots.ncomp);
        for (e, k) in self.entries.iter().zip(keep) {
            if !*k || e.slot >= base {
                continue;
            }
            if self.averaged && (vel..vel + nc).contains(&e.slot) {
                // A mean velocity is the mean momentum over the mean density.
                let c = e.slot - vel;
                summed[mom + c] = true;
                summed[RHO] = true;
                need |= 1 << (mom + c) | 1 << RHO;
            } else {
                summed[e.slot] = true;
            }
            need |= 1 << e.slot;
        }
        self.kept = keep.to_vec();
        self.need = need;
        self.summed = summed;
        self
    }

    /// Whether field `k` is computed (see [`Sampler::keeping`]).
    fn is_kept(&self, k: usize) -> bool {
        self.kept.get(k).copied().unwrap_or(true)
    }

    /// Whether value slot `s` is summed over a cell's nodes.
    fn is_summed(&self, s: usize) -> bool {
        self.summed.get(s).copied().unwrap_or(true)
    }

    /// The fields every slab holds, in order (the groups' fields one
    /// after the other, see [`Sampler::groups`]).
    pub fn fields(&self) -> Vec<FieldSpec> {
        self.entries.iter().map(|e| e.spec.clone()).collect()
    }

    /// Add `p` to the background at every point before the cell's sum.
    /// Slabs then hold three groups: `background` (the equilibrium),
    /// `state` (equilibrium plus perturbations, the same fields) and
    /// `perturbation` (the perturbation alone: density, pressure,
    /// potential, velocity and momentum components, and extra fields such
    /// as a planet's potential). Every axis is sampled (a perturbation may
    /// vary along any).
    pub fn perturbed(mut self, p: &'a Perturbations) -> Sampler<'a> {
        if p.is_empty() {
            return self;
        }
        debug_assert!(self.extras.is_none(), "perturb before adding extras");
        let pt = Perturbed::new(p, self.grid, self.slots);
        let (state, alone) = pt.entries(&self.entries);
        let nb = self.entries.len();
        self.groups = vec![
            ("background", nb),
            ("state", state.len()),
            ("perturbation", alone.len()),
        ];
        self.entries.extend(state);
        self.entries.extend(alone);
        self.active = vec![true; self.grid.axes().len()];
        self.lane = self.grid.natural_order()[self.active.len() - 1];
        self.perturb = Some(pt);
        self
    }

    /// Sample the fields of `x` too (the accelerations and diagnostic
    /// fields asked for in `output.fields`), at the same points and by the
    /// same rule, appended to the `background` group. Call after
    /// [`Sampler::perturbed`]: they are fields of the equilibrium.
    pub fn with_extras(mut self, x: &'a Extras) -> Sampler<'a> {
        if x.is_empty() {
            return self;
        }
        let placement = self.entries[0].spec.placement.clone();
        let specs = x.specs(self.embed.components(), &placement);
        let first = self.value_slots();
        let at = self.groups[0].1;
        let new: Vec<Entry> = specs
            .into_iter()
            .enumerate()
            .map(|(k, spec)| Entry {
                spec,
                slot: first + k,
            })
            .collect();
        let count = new.len();
        self.entries.splice(at..at, new);
        self.groups[0].1 += count;
        self.extras = Some((x, first, count));
        self
    }

    /// The groups a slab holds, in order, with their fields.
    pub fn groups(&self) -> Vec<(&'static str, Vec<FieldSpec>)> {
        let mut at = 0;
        self.groups
            .iter()
            .map(|(name, n)| {
                let f = self.entries[at..at + n].iter().map(|e| e.spec.clone());
                at += n;
                (*name, f.collect())
            })
            .collect()
    }

    /// Value slots of a point: the background's, and with perturbations
    /// the perturbed state's and the perturbation's.
    fn value_slots(&self) -> usize {
        self.slots.len() - 1
            + self.perturb.as_ref().map_or(0, Perturbed::extra_slots)
            + self.extras.map_or(0, |e| e.2)
    }

    /// Values the reduced array of a slab of `rows` rows holds (for memory
    /// estimates): slots per point times the cells of the active axes.
    pub fn reduced_len(&self, rows: usize) -> usize {
        let shape = self.grid.shape();
        let cells: usize = (0..shape.len())
            .map(|a| match (a, self.active[a]) {
                (_, false) => 1,
                (0, true) => rows.min(shape[0]),
                (_, true) => shape[a],
            })
            .product();
        cells * (self.value_slots() + 1)
    }

    /// The description of the sampling rule, for files.
    pub fn sampling(&self) -> &str {
        &self.sampling
    }

    /// Replaces the description (a rule to a tolerance adds what it met).
    pub(crate) fn describe_as(&mut self, text: String) {
        self.sampling = text;
    }

    /// The fields for the cells `rows` of the first axis. Errors name the
    /// first bad point in C order of cells.
    pub fn slab(&self, rows: Range<usize>) -> Result<Slab, SampleError> {
        self.slab_into(rows, Vec::new())
    }

    /// [`Sampler::slab`], reusing the arrays of an earlier slab (`reuse`,
    /// the `data` of a slab that was written) so that a stream of slabs
    /// allocates its memory once.
    pub fn slab_into(&self, rows: Range<usize>, reuse: Vec<Vec<f64>>) -> Result<Slab, SampleError> {
        let n0 = self.grid.shape()[0];
        // Faces normal to the first axis: the slab's faces (the closing one
        // in the last slab).
        let own = match self.face {
            Some(0) if rows.end == n0 => rows.start..rows.end + 1,
            _ => rows.clone(),
        };
        let Some(n) = self.nodal else {
            let mut slab = self.points_into(own, reuse)?;
            slab.rows = rows;
            return Ok(slab);
        };
        // Nodal values: the lines run over every node as a point of its own
        // (cells × n per axis; faces × 1 along the axis faces are normal
        // to); the values are then regrouped cell (or face) by cell, nodes
        // as trailing dimensions.
        let nd = self.grid.axes().len();
        let per_axis: Vec<usize> = (0..nd)
            .map(|a| if self.face == Some(a) { 1 } else { n })
            .collect();
        let points =
            self.points_into(own.start * per_axis[0]..own.end * per_axis[0], Vec::new())?;
        let mut out_shape = self.grid.shape();
        if let Some(a) = self.face {
            out_shape[a] += 1;
        }
        out_shape[0] = own.len();
        let per_cell: usize = per_axis.iter().product();
        let total: usize = out_shape.iter().product::<usize>() * per_cell;
        let mut data = reuse;
        data.resize_with(points.data.len(), Vec::new);
        for (d, src) in data.iter_mut().zip(&points.data) {
            d.clear();
            if src.is_empty() {
                continue; // a field not kept
            }
            d.resize(total, 0.0);
            let mut cell = vec![0usize; nd];
            let mut node = vec![0usize; nd];
            for (i, v) in d.iter_mut().enumerate() {
                // i = (cell multi-index, node multi-index) in C order.
                let mut rest = i;
                for a in (0..nd).rev() {
                    node[a] = rest % per_axis[a];
                    rest /= per_axis[a];
                }
                for a in (0..nd).rev() {
                    cell[a] = rest % out_shape[a];
                    rest /= out_shape[a];
                }
                let mut j = 0;
                for a in 0..nd {
                    j = j * out_shape[a] * per_axis[a] + cell[a] * per_axis[a] + node[a];
                }
                *v = src[j];
            }
        }
        if let Some((modes, m)) = &self.modal {
            for d in data.iter_mut().filter(|d| !d.is_empty()) {
                *d = project(d, nd, n, *modes, m);
            }
        }
        Ok(Slab { rows, data })
    }

    /// The slot values at the points `rows` of the first axis (cells, or
    /// nodes of a nodal rule), one value per point.
    fn points_into(&self, rows: Range<usize>, reuse: Vec<Vec<f64>>) -> Result<Slab, SampleError> {
        let shape = self.shape.clone();
        let nd = shape.len();
        // The reduced grid: active axes keep their cells (the first axis only
        // the slab's rows), inactive ones have one.
        let red_rows = if self.active[0] { rows.clone() } else { 0..1 };
        let red: Vec<Range<usize>> = (0..nd)
            .map(|a| match (a, self.active[a]) {
                (0, _) => red_rows.clone(),
                (_, true) => 0..shape[a],
                (_, false) => 0..1,
            })
            .collect();
        // Lines: every combination of cells of the active axes but the lane
        // axis, in C order.
        let outer: Vec<usize> = (0..nd)
            .filter(|a| self.active[*a] && *a != self.lane)
            .collect();
        let lines: usize = outer.iter().map(|a| red[*a].len()).product();
        let per_line = (self.value_slots() + 1) * red[self.lane].len();
        // One reduced array for the slab, reused from slab to slab.
        let mut reduced = self
            .scratch
            .lock()
            .ok()
            .and_then(|mut p| p.pop())
            .unwrap_or_default();
        reduced.clear();
        reduced.resize(lines * per_line, 0.0);
        let computed: Vec<Result<(), SampleError>> = reduced
            .par_chunks_mut(per_line.max(1))
            .enumerate()
            .map_init(
                || self.buffers(),
                |buf, (line, acc)| {
                    let mut cell = vec![0usize; nd];
                    let mut rest = line;
                    for &a in outer.iter().rev() {
                        cell[a] = red[a].start + rest % red[a].len();
                        rest /= red[a].len();
                    }
                    self.line(&cell, &outer, red[self.lane].clone(), acc, buf)
                },
            )
            .collect();
        let result = computed
            .into_iter()
            .collect::<Result<(), SampleError>>()
            .map(|()| self.expand(&reduced, per_line, rows, &red, reuse));
        if let Ok(mut p) = self.scratch.lock() {
            p.push(reduced);
        }
        result
    }

    fn buffers(&self) -> ThreadBuffers {
        let nd = self.grid.axes().len();
        let lanes = |k: usize| (0..k).map(|_| vec![0.0; LANES]).collect::<Vec<_>>();
        ThreadBuffers {
            grid: lanes(nd),
            frame: lanes(2),
            velocity: lanes(self.slots.ncomp),
            state: StateBlock::new(),
            bg: self.bg.workspace(),
            values: lanes(self.value_slots()),
            bad: Vec::new(),
            weight: vec![0.0; LANES],
            perturbed: self.perturb.as_ref().map(Perturbed::buffers),
            extras: self.extras.map(|(x, ..)| x.buffers(self.slots.ncomp)),
        }
    }

    /// The slot values of the cells `cells` of the lane axis (all of them,
    /// or the slab's rows when the lane axis is the first), for the cells
    /// `cell` of the outer axes (inactive axes at cell 0), slot-major: slot
    /// s of lane cell c at `s * cells.len() + c`.
    fn line(
        &self,
        cell: &[usize],
        outer: &[usize],
        cells: Range<usize>,
        acc: &mut [f64],
        buf: &mut ThreadBuffers,
    ) -> Result<(), SampleError> {
        let vol = self.value_slots();
        let lane = &self.axes[self.lane];
        // The nodes of the cells `cells` of the lane axis.
        let first = cells.start * lane.per_cell;
        let ncells = cells.len();
        let nlane = ncells * lane.per_cell;
        // The first failure of a lane cell: (cell, node index in the cell,
        // error); kept only when something fails.
        let mut failed: Vec<(usize, usize, SampleError)> = Vec::new();
        let outer_nodes: usize = outer.iter().map(|a| self.axes[*a].per_cell).product();
        let nd = cell.len();
        let mut point = vec![0.0; nd];
        let dims = self.embed.frame().dims();
        for qo in 0..outer_nodes {
            // Coordinates and weight of this combination of outer nodes; an
            // inactive axis sits at its first node.
            let mut weight = 1.0;
            // In the layout's natural order: the nodes are combined, and
            // their weights multiplied, in the same order whatever the
            // grid's nesting, so the sums are the same to the bit.
            let mut rest = qo;
            for &a in self.grid.natural_order().iter().rev() {
                if a == self.lane {
                    continue;
                }
                let ax = &self.axes[a];
                let k = if outer.contains(&a) {
                    let k = cell[a] * ax.per_cell + rest % ax.per_cell;
                    rest /= ax.per_cell;
                    weight *= ax.weights[k];
                    k
                } else {
                    0
                };
                point[a] = ax.nodes[k];
            }
            // Blocks hold whole cells, so that each cell's sum is taken in one
            // order whatever the slab (the first axis's rows may start
            // anywhere).
            let step = (LANES / lane.per_cell).max(1) * lane.per_cell;
            for start in (0..nlane).step_by(step) {
                let n = step.min(nlane - start);
                for (a, (g, p)) in buf.grid.iter_mut().zip(&point).enumerate() {
                    if a == self.lane {
                        g[..n].copy_from_slice(&lane.nodes[first + start..first + start + n]);
                    } else {
                        g[..n].fill(*p);
                    }
                }
                let grid_lanes: Vec<&[f64]> = buf.grid.iter().map(|v| &v[..n]).collect();
                self.embed.to_frame(&grid_lanes, n, &mut buf.frame);
                let frame: Vec<&[f64]> = buf.frame[..dims].iter().map(|v| &v[..n]).collect();
                let want = Want {
                    accelerations: self.extras.is_some_and(|x| x.0.needs_accelerations()),
                };
                self.bg.eval(&frame, want, &mut buf.state, &mut buf.bg);
                self.embed.project(
                    &grid_lanes,
                    &frame,
                    &buf.state.velocity,
                    n,
                    &mut buf.velocity,
                );
                slots::fill_block(
                    &buf.state,
                    &buf.velocity,
                    n,
                    &self.gas,
                    &mut buf.values,
                    &mut buf.bad,
                    self.need,
                );
                let pc = lane.per_cell;
                let c0 = start / pc;
                if let (Some(p), Some(pb)) = (&self.perturb, buf.perturbed.as_mut()) {
                    let base = (0..nd)
                        .filter(|a| *a != self.lane)
                        .map(|a| cell[a] as u64 * p.strides[a])
                        .sum();
                    p.block(
                        &grid_lanes,
                        &frame,
                        n,
                        (base, self.lane, cells.start + c0, pc),
                        &buf.state,
                        &buf.velocity,
                        &self.embed,
                        &self.gas,
                        pb,
                        &mut buf.values,
                        &mut buf.bad,
                    );
                }
                if let (Some((x, first, count)), Some(xb)) = (self.extras, buf.extras.as_mut()) {
                    x.fill(
                        &grid_lanes,
                        &frame,
                        &buf.state,
                        n,
                        &self.embed,
                        xb,
                        &mut buf.values[first..first + count],
                        &mut buf.bad,
                    );
                }
                for (w, lw) in buf.weight[..n]
                    .iter_mut()
                    .zip(&lane.weights[first + start..first + start + n])
                {
                    *w = weight * lw;
                }
                for &(i, e) in &buf.bad {
                    let k = start + i;
                    let (c, q) = (c0 + i / pc, qo * pc + k % pc);
                    buf.weight[i] = 0.0;
                    match failed.iter_mut().find(|f| f.0 == c) {
                        Some(f) if q >= f.1 => {}
                        found => {
                            point[self.lane] = lane.nodes[first + k];
                            let err = slots::point_error(e, self.grid, &point);
                            match found {
                                Some(f) => *f = (c, q, err),
                                None => failed.push((c, q, err)),
                            }
                        }
                    }
                }
                let w = &buf.weight[..n];
                let cells = c0..c0 + n / pc;
                for (s, v) in buf.values.iter().enumerate() {
                    let sums = &mut acc[s * ncells..(s + 1) * ncells][cells.clone()];
                    if self.averaged {
                        if self.is_summed(s) {
                            // Σ over the cell's nodes of this block, then added.
                            add_cell_sums(sums, w, &v[..n], pc);
                        }
                    } else {
                        sums.copy_from_slice(&v[..n]);
                    }
                }
                if self.averaged {
                    let sums = &mut acc[vol * ncells..][cells];
                    for (sum, w) in sums.iter_mut().zip(w.chunks(pc)) {
                        let mut t = 0.0;
                        for w in w {
                            t += w;
                        }
                        *sum += t;
                    }
                }
            }
        }
        if let Some((_, _, e)) = failed.into_iter().min_by_key(|f| f.0) {
            return Err(e);
        }
        if self.averaged {
            let (head, volume) = acc.split_at_mut(vol * ncells);
            for sums in head.chunks_mut(ncells) {
                for (s, v) in sums.iter_mut().zip(volume.iter()) {
                    *s /= v;
                }
            }
            // Mass-weighted velocity: momentum = density × velocity.
            let (mom, vel) = (self.slots.mom(), self.slots.vel());
            for comp in 0..self.slots.ncomp {
                for c in 0..ncells {
                    acc[(vel + comp) * ncells + c] =
                        acc[(mom + comp) * ncells + c] / acc[RHO * ncells + c];
                }
            }
            if let Some(p) = &self.perturb {
                p.normalise(acc, ncells);
            }
        }
        Ok(())
    }

    /// The slab's fields from the lines (each slot-major, in C order of the
    /// outer active axes), broadcast along inactive axes. The output is
    /// written in runs along the last axis: a copy of a line's values when
    /// the last axis is the lane axis, one value repeated when it is
    /// inactive.
    fn expand(
        &self,
        reduced: &[f64],
        per_line: usize,
        rows: Range<usize>,
        red: &[Range<usize>],
        mut data: Vec<Vec<f64>>,
    ) -> Slab {
        let shape = self.shape.clone();
        let nd = shape.len();
        let last = nd - 1;
        // A lane axis followed by an active axis (a grid stored out of its
        // natural order, whose lane is the natural order's last active
        // axis): every cell is gathered on its own.
        let gather = self.active[self.lane + 1..].iter().any(|a| *a);
        let run = if gather {
            1
        } else if last == 0 {
            rows.len()
        } else {
            shape[last]
        };
        let steps = if gather { nd } else { last };
        let ncells = red[self.lane].len();
        let mut out_shape = shape.clone();
        out_shape[0] = rows.len();
        let cells: usize = out_shape.iter().product();
        // The runs in order: (line, lane cell) of each.
        let outer: Vec<usize> = (0..nd)
            .filter(|a| self.active[*a] && *a != self.lane)
            .collect();
        let mut runs = Vec::with_capacity(cells / run.max(1));
        let mut idx = vec![0usize; nd];
        for _ in 0..cells / run.max(1) {
            let (mut line, mut c) = (0usize, 0usize);
            for &a in &outer {
                let i = if a == 0 { rows.start + idx[0] } else { idx[a] };
                line = line * red[a].len() + (i - red[a].start);
            }
            if self.lane != last {
                let a = self.lane;
                let i = if a == 0 { rows.start + idx[0] } else { idx[a] };
                c = i - red[a].start;
            }
            runs.push((line, c));
            for a in (0..steps).rev() {
                idx[a] += 1;
                if idx[a] < out_shape[a] {
                    break;
                }
                idx[a] = 0;
            }
        }
        data.resize_with(self.entries.len(), Vec::new);
        data.par_iter_mut()
            .zip(self.entries.par_iter())
            .enumerate()
            .for_each(|(k, (d, e))| {
                d.clear();
                if !self.is_kept(k) {
                    return;
                }
                d.reserve(cells);
                for &(line, c) in &runs {
                    let line = &reduced[line * per_line..(line + 1) * per_line];
                    let values = &line[e.slot * ncells..(e.slot + 1) * ncells];
                    if self.lane == last {
                        d.extend_from_slice(values);
                    } else {
                        d.extend(std::iter::repeat_n(values[c], run));
                    }
                }
            });
        Slab { rows, data }
    }
}

/// `sums[c] += Σ_j w[c pc + j] v[c pc + j]` for each cell c of `pc` nodes,
/// the terms added in node order from 0 (the same sum for every `pc`;
/// the common node counts have loops of their own, unrolled).
fn add_cell_sums(sums: &mut [f64], w: &[f64], v: &[f64], pc: usize) {
    fn fixed<const P: usize>(sums: &mut [f64], w: &[f64], v: &[f64]) {
        for ((sum, w), v) in sums
            .iter_mut()
            .zip(w.chunks_exact(P))
            .zip(v.chunks_exact(P))
        {
            let mut t = 0.0;
            for j in 0..P {
                t += w[j] * v[j];
            }
            *sum += t;
        }
    }
    match pc {
        1 => fixed::<1>(sums, w, v),
        2 => fixed::<2>(sums, w, v),
        3 => fixed::<3>(sums, w, v),
        4 => fixed::<4>(sums, w, v),
        5 => fixed::<5>(sums, w, v),
        _ => {
            for ((sum, w), v) in sums.iter_mut().zip(w.chunks(pc)).zip(v.chunks(pc)) {
                let mut t = 0.0;
                for (w, v) in w.iter().zip(v) {
                    t += w * v;
                }
                *sum += t;
            }
        }
    }
}

/// The modal coefficients of every cell from its q^nd node values (cells
/// one after another): c[j…] = Σ_k Π_a m[j_a q + k_a] f[k…], in one fixed
/// order of terms.
fn project(values: &[f64], nd: usize, q: usize, modes: usize, m: &[f64]) -> Vec<f64> {
    let per_node = q.pow(nd as u32);
    let per_mode = modes.pow(nd as u32);
    let mut out = Vec::with_capacity(values.len() / per_node * per_mode);
    let (mut j, mut k) = (vec![0usize; nd], vec![0usize; nd]);
    for cell in values.chunks(per_node) {
        for jm in 0..per_mode {
            let mut rest = jm;
            for a in (0..nd).rev() {
                j[a] = rest % modes;
                rest /= modes;
            }
            let mut sum = 0.0;
            for (kn, f) in cell.iter().enumerate() {
                let mut rest = kn;
                for a in (0..nd).rev() {
                    k[a] = rest % q;
                    rest /= q;
                }
                let mut w = *f;
                for a in 0..nd {
                    w *= m[j[a] * q + k[a]];
                }
                sum += w;
            }
            out.push(sum);
        }
    }
    out
}
