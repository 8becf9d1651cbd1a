//! The stability section of `check`: every diagnostic that applies to the
//! background, with its minimum and maximum (and where), where it fails and
//! a one-line meaning. All from exact derivatives — symbolic derivatives of
//! the closure's laws, or for the column closure the exact pressure-gradient
//! acceleration its background returns — never from differences of samples.
//!
//! * Disk lines: Rayleigh's κ² = R⁻³ d(R⁴Ω²)/dR (see [`crate::stability`]),
//!   and for a vertically integrated disk Toomre's Q = c κ/(π G Σ) with c
//!   the isothermal sound speed √(P/Σ) (Toomre 1964, ApJ 139, 1217; Q < 1
//!   is unstable to axisymmetric self-gravitating rings).
//! * Slabs and spheres: N² (Schwarzschild, for the profile's γ).
//! * Stratified disks, at (R, z) points over the grid's heights, with
//!   j = R v_φ and S = ln(P ρ^−γ): κ² = R⁻³ ∂_R j²; the Solberg–Høiland
//!   criteria (Tassoul 1978, Theory of Rotating Stars, §7.3; Rüdiger, Arlt &
//!   Shalybkov 2002, A&A 391, 781; from memory)
//!   (1) R⁻³ ∂_R j² − (1/(γρ)) ∇P·∇S > 0,
//!   (2) −∂_z P (∂_R j² ∂_z S − ∂_z j² ∂_R S) > 0;
//!   the vertical buoyancy N_z² = −(1/(γρ)) ∂_z P ∂_z S; the vertical shear
//!   R ∂Ω/∂z = ∂v_φ/∂z, with the vertical-shear-instability growth time
//!   Ω/(2π |R ∂Ω/∂z|) in local orbits (growth rate of order |R ∂Ω/∂z|,
//!   ≈ |q| h Ω for T ∝ R^q; Nelson, Gressel & Umurhan 2013, MNRAS 435, 2610;
//!   from memory). For the column closure ∂_z v_φ² comes from the thermal
//!   wind relation R ∂_z Ω² = (∂_z P ∂_R ρ − ∂_R P ∂_z ρ)/ρ² (the curl of the
//!   two balances), which needs only first derivatives, and ∂_R v_φ² from
//!   the second R-derivative of the column integrand taken under the
//!   integral sign (`closure::curvature`).
//! * Stratified disks normalised to a surface density Σ(R): Toomre's
//!   Q = c κ/(π G Σ) at the midplane (c = √c²(R, 0), κ² at z = 0; Toomre
//!   1964, ApJ 139, 1217).
//!
//! Owns: the diagnostics and their text. Does not own: N² and κ² on a line
//! (`stability`), the laws (`closure`).

use std::cell::RefCell;
use std::collections::HashMap;
use std::fmt;

use crate::background::{Background, Shape};
use crate::closure::curvature::Curvature;
use crate::closure::{self, show, ClosureError, Domain, Laws};
use crate::formula::{Expr, Program, Workspace};
use crate::grid::Grid;
use crate::model::Model;
use crate::stability::{Valued, THRESHOLD};

/// One diagnostic over the scanned points.
#[derive(Clone, Debug, PartialEq)]
pub struct Diagnostic {
    /// Its name in the report (`kappa^2`, `SH 1`, …).
    pub name: &'static str,
    /// Smallest value and where (the point's coordinates).
    pub min: Extreme,
    /// Largest value and where.
    pub max: Extreme,
    /// Where it fails, in words (None: nowhere, or it has no failure).
    pub fails: Option<String>,
    /// What it means, in one line.
    pub meaning: String,
    /// An extra line of result (the growth time of the shear instability).
    pub note: Option<String>,
}

/// The stability section: the diagnostics and those that do not apply.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Section {
    /// Names of the point coordinates (`R`; `R`, `z`).
    pub coords: Vec<&'static str>,
    /// The diagnostics evaluated.
    pub items: Vec<Diagnostic>,
    /// Diagnostics skipped, with why.
    pub skipped: Vec<String>,
}

impl Section {
    /// The diagnostic named `name`.
    pub fn get(&self, name: &str) -> Option<&Diagnostic> {
        self.items.iter().find(|d| d.name == name)
    }

    /// Plain cautions for every failing diagnostic.
    pub fn cautions(&self) -> Vec<String> {
        self.items
            .iter()
            .filter_map(|d| {
                d.fails.as_ref().map(|w| {
                    if d.name == "Toomre Q" {
                        return format!(
                            "Toomre's Q = c kappa/(pi G Sigma) is below 1 {w}: with the disk's \
                             self-gravity in the simulation this disk is gravitationally \
                             unstable; without it Q has no effect"
                        );
                    }
                    format!(
                        "the background fails the stability criterion {} {w} ({}); it still \
                         builds, but it will not stay put",
                        d.name, d.meaning
                    )
                })
            })
            .collect()
    }

    fn place(&self, x: &[f64]) -> String {
        let parts: Vec<String> = self
            .coords
            .iter()
            .zip(x)
            .map(|(c, v)| format!("{c} = {}", show(*v)))
            .collect();
        parts.join(", ")
    }
}

impl fmt::Display for Section {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "stability (exact derivatives; a value below -{THRESHOLD:e} of its terms fails)"
        )?;
        for d in &self.items {
            if !d.min.0.is_finite() && !d.max.0.is_finite() {
                // No point gave a value: where the state has no
                // equilibrium (or no rotation) there is nothing to judge.
                write!(
                    f,
                    "\n  {:<12} no value at any scan point (the state has no equilibrium there)",
                    d.name
                )?;
                continue;
            }
            let verdict = match &d.fails {
                None => "ok".to_string(),
                Some(w) => format!("FAILS {w}"),
            };
            write!(
                f,
                "\n  {:<12} min {:.6e} at {}, max {:.6e} at {}  {verdict}\n    {}",
                d.name,
                d.min.0,
                self.place(&d.min.1),
                d.max.0,
                self.place(&d.max.1),
                d.meaning
            )?;
            if let Some(n) = &d.note {
                write!(f, "\n    {n}")?;
            }
        }
        for s in &self.skipped {
            write!(f, "\n  {s}")?;
        }
        Ok(())
    }
}

/// A criterion at a point (its coordinates): its value and the size of its
/// terms.
type Criterion<'a> = Box<dyn Fn(&[f64]) -> Valued + 'a>;

/// A value and the point where it occurs.
pub type Extreme = (f64, Vec<f64>);

/// Minimum, maximum (NaN skipped) and the indices of the failing points.
fn scan(
    pts: &[Vec<f64>],
    c: &dyn Fn(&[f64]) -> Valued,
    fails: bool,
) -> (Extreme, Extreme, Vec<usize>) {
    let mut lo = (f64::INFINITY, vec![f64::NAN; 2]);
    let mut hi = (f64::NEG_INFINITY, vec![f64::NAN; 2]);
    let mut bad = Vec::new();
    for (i, p) in pts.iter().enumerate() {
        let (v, size) = c(p);
        if v.is_nan() {
            continue;
        }
        if v < lo.0 {
            lo = (v, p.clone());
        }
        if v > hi.0 {
            hi = (v, p.clone());
        }
        if fails && v < -THRESHOLD * size {
            bad.push(i);
        }
    }
    (lo, hi, bad)
}

/// Where the points `bad` lie, in words.
fn region(pts: &[Vec<f64>], bad: &[usize], coords: &[&str]) -> Option<String> {
    if bad.is_empty() {
        return None;
    }
    let mut out = format!("at {} of {} points", bad.len(), pts.len());
    for (k, c) in coords.iter().enumerate() {
        let (a, b) = bad
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &i| {
                (a.min(pts[i][k]), b.max(pts[i][k]))
            });
        out.push_str(&format!(", {c} from {} to {}", show(a), show(b)));
    }
    Some(out)
}

fn diagnostic(
    coords: &[&str],
    pts: &[Vec<f64>],
    name: &'static str,
    c: &dyn Fn(&[f64]) -> Valued,
    fails: bool,
    meaning: &str,
) -> Diagnostic {
    let (min, max, bad) = scan(pts, c, fails);
    Diagnostic {
        name,
        min,
        max,
        fails: region(pts, &bad, coords),
        meaning: meaning.to_string(),
        note: None,
    }
}

const KAPPA: &str = "Rayleigh (1917): kappa^2 = R^-3 d(R^4 Omega^2)/dR > 0 is stable to \
                     axisymmetric perturbations; < 0 where (R v_phi)^2 falls outward";
const TOOMRE_MID: &str = "Toomre (1964): Q = c kappa/(pi G Sigma), c the midplane sound speed \
                          sqrt(c^2(R, 0)), kappa at z = 0, Sigma the given surface density; Q < 1 is \
                          unstable to axisymmetric rings if the simulation includes the disk's \
                          self-gravity (the background here has none)";
const TOOMRE: &str = "Toomre (1964): Q = c kappa/(pi G Sigma), c the isothermal sound speed \
                      sqrt(P/Sigma); Q < 1 is unstable to axisymmetric rings if the simulation includes the disk's \
                      self-gravity (the background here has none)";
const BUOYANCY: &str =
    "Schwarzschild: N^2 = -(1/(gamma rho)) dP/ds dS/ds > 0, S = ln(P rho^-gamma); \
                        N^2 < 0 is convectively unstable";
const SH1: &str = "Solberg-Hoiland (1): R^-3 d_R j^2 - (1/(gamma rho)) grad P . grad S > 0 \
                   (j = R v_phi, S = ln(P rho^-gamma))";
const SH2: &str = "Solberg-Hoiland (2): -d_z P (d_R j^2 d_z S - d_z j^2 d_R S) > 0; zero at \
                   the midplane (marginal)";
const NZ: &str = "vertical buoyancy N_z^2 = -(1/(gamma rho)) d_z P d_z S > 0: entropy rises \
                  away from the midplane";
const SHEAR: &str = "vertical shear R dOmega/dz = d v_phi/dz: nonzero where the temperature \
                     varies with R (no pass/fail)";

/// The stability section of the model's background over the domain.
pub fn section(
    model: &Model,
    bg: &dyn Background,
    domain: &Domain,
    grid: Option<&Grid>,
) -> Result<Section, ClosureError> {
    match model.shape {
        Shape::StratifiedDisk => stratified(model, bg, domain, grid),
        _ => line(model, bg, domain),
    }
}

/// Disk lines, slabs and spheres.
fn line(model: &Model, bg: &dyn Background, domain: &Domain) -> Result<Section, ClosureError> {
    let s = model.coordinate();
    let mut sec = Section {
        coords: vec![s],
        ..Section::default()
    };
    let coords = sec.coords.clone();
    let xs = domain.scan_points_for(model);
    let pts: Vec<Vec<f64>> = xs.iter().map(|&x| vec![x]).collect();
    if model.shape.is_disk() {
        let k2 = crate::stability::epicyclic(model)?;
        let kc = |p: &[f64]| k2(p[0]);
        let mut d = diagnostic(&coords, &pts, "kappa^2", &kc, true, KAPPA);
        d.fails = crate::stability::negative(&xs, &k2, s, "kappa^2");
        sec.items.push(d);
        if model.vertically_integrated {
            let g = closure::compile(model, &Expr::name("G"), "G")?.eval(&[1.0]);
            let q = |p: &[f64]| {
                let st = bg.on_line(p[0]);
                let (k, _) = k2(p[0]);
                let c = (st.pressure / st.density).sqrt();
                let q = c * k.sqrt() / (std::f64::consts::PI * g * st.density);
                (q - 1.0, q)
            };
            let (min, max, _) = scan(&pts, &q, true);
            let shift = |(v, at): Extreme| (v + 1.0, at);
            let q1 = |x: f64| q(&[x]);
            sec.items.push(Diagnostic {
                name: "Toomre Q",
                min: shift(min),
                max: shift(max),
                fails: crate::stability::negative(&xs, &q1, s, "Q - 1"),
                meaning: TOOMRE.to_string(),
                note: None,
            });
        } else {
            sec.skipped.push(
                "Toomre Q     not available: no surface density (a midplane disk that is not \
                 vertically integrated)"
                    .to_string(),
            );
        }
        return Ok(sec);
    }
    if crate::physics::is_isothermal(model.gamma) {
        sec.skipped.push(
            "N^2          skipped: isothermal gas (gamma = 1), whose perturbations do not \
             conserve entropy"
                .to_string(),
        );
        return Ok(sec);
    }
    let n2 = crate::stability::buoyancy(model, bg)?;
    let nc = |p: &[f64]| n2(p[0]);
    let mut d = diagnostic(&coords, &pts, "N^2", &nc, true, BUOYANCY);
    d.fails = crate::stability::negative(&xs, &n2, s, "N^2");
    sec.items.push(d);
    Ok(sec)
}

/// The local derivatives a stratified disk's criteria need.
#[derive(Clone, Copy, Debug)]
struct Local {
    r: f64,
    rho: f64,
    p: f64,
    rho_r: f64,
    rho_z: f64,
    p_r: f64,
    p_z: f64,
    v2: f64,
    /// ∂_R v_φ², when the closure carries it.
    v2_r: Option<f64>,
    v2_z: f64,
}

fn field(model: &Model, e: &Expr, what: &str) -> Result<Program, ClosureError> {
    model
        .compile_field(&e.simplify())
        .map_err(|error| ClosureError::Formula {
            origin: what.into(),
            error,
        })
}

/// The column integrals [I, I′, I″] per radius (points share radii), and
/// the scratch of the curvature's kernels.
#[derive(Default)]
struct ColumnCache {
    by_r: RefCell<HashMap<u64, Option<Option<[f64; 3]>>>>,
    ws: RefCell<Workspace>,
}

impl ColumnCache {
    /// The integrals at r: Some(None) without a surface density, None where
    /// the column could not be integrated.
    fn get(&self, r: f64, curv: &Curvature, ws: &mut Workspace) -> Option<Option<[f64; 3]>> {
        *self
            .by_r
            .borrow_mut()
            .entry(r.to_bits())
            .or_insert_with(|| curv.column_integrals(r, ws).ok())
    }
}

/// The local derivatives at (R, z): symbolic for the closed form, from the
/// background's exact pressure-gradient acceleration and the thermal wind
/// relation for the column closure.
fn locals<'a>(
    model: &Model,
    bg: &'a dyn Background,
    domain: &Domain,
) -> Result<Box<dyn Fn(f64, f64) -> Local + 'a>, ClosureError> {
    let laws = Laws::build(model)?;
    if let Some(cl) = &laws.column {
        let c2 = laws
            .sound_speed_sq
            .clone()
            .ok_or_else(|| ClosureError::Incomplete("the column closure needs c^2".into()))?;
        let [c, cr, cz] = [c2.clone(), c2.diff("R"), c2.diff("z")]
            .map(|e| field(model, &e, "gas.sound_speed_sq"));
        let (c, cr, cz) = (c?, cr?, cz?);
        // The background returns the radial pressure-gradient acceleration;
        // the vertical one is −∂Φ/∂z, the balance each column is integrated
        // from (∂ ln P/∂z = −Φ_z/c²).
        let phi_z = field(model, &laws.potential.diff("z"), "potential")?;
        let curv = Curvature::new(model, cl, &c2, domain)?;
        let ints = ColumnCache::default();
        return Ok(Box::new(move |r, z| {
            let mut ws = ints.ws.borrow_mut();
            let i = ints.get(r, &curv, &mut ws);
            let v2_r = i
                .map(|i| curv.at(r, z, i, &mut ws).v2_r)
                .unwrap_or(f64::NAN);
            let st = bg.at(&[r, z]);
            let (rho, p) = (st.density, st.pressure);
            let x = [r, z];
            let (p_r, p_z) = (-rho * st.pressure_accel[0], -rho * phi_z.eval(&x));
            let c2 = c.eval(&x);
            // ρ = P/c²: ∇ln ρ = ∇ln P − ∇ln c².
            let rho_r = rho * (p_r / p - cr.eval(&x) / c2);
            let rho_z = rho * (p_z / p - cz.eval(&x) / c2);
            Local {
                r,
                rho,
                p,
                rho_r,
                rho_z,
                p_r,
                p_z,
                v2: st.rotation().powi(2),
                v2_r: Some(v2_r),
                v2_z: r * (p_z * rho_r - p_r * rho_z) / (rho * rho),
            }
        }));
    }
    let (Some(rho), Some(p), Some(v2)) = (&laws.density, &laws.pressure, &laws.rotation_sq) else {
        return Err(ClosureError::Incomplete(
            "the stability of a stratified disk needs rho, P and v_phi^2 in closed form".into(),
        ));
    };
    let list = [
        rho.clone(),
        p.clone(),
        rho.diff("R"),
        rho.diff("z"),
        p.diff("R"),
        p.diff("z"),
        v2.clone(),
        v2.diff("R"),
        v2.diff("z"),
    ];
    let progs: Vec<Program> = list
        .iter()
        .map(|e| field(model, e, "stability"))
        .collect::<Result<_, _>>()?;
    Ok(Box::new(move |r, z| {
        let x = [r, z];
        let v: Vec<f64> = progs.iter().map(|p| p.eval(&x)).collect();
        Local {
            r,
            rho: v[0],
            p: v[1],
            rho_r: v[2],
            rho_z: v[3],
            p_r: v[4],
            p_z: v[5],
            v2: v[6],
            v2_r: Some(v[7]),
            v2_z: v[8],
        }
    }))
}

/// The (R, z) points scanned: up to 49 radii of the domain's scan points
/// (17 for the column closure, whose every point integrates a column) by 25
/// (or 9) heights over the grid's vertical extent.
fn field_points(model: &Model, domain: &Domain, column: bool) -> Vec<Vec<f64>> {
    let xs = domain.scan_points_for(model);
    let (nr, nz) = if column { (17, 9) } else { (49, 25) };
    let step = xs.len().div_ceil(nr).max(1);
    let mut rs: Vec<f64> = xs.iter().copied().step_by(step).collect();
    if rs.last() != xs.last() {
        rs.extend(xs.last());
    }
    let (zlo, zhi) = domain.height.unwrap_or((0.0, 0.0));
    let mut out = Vec::new();
    for &r in &rs {
        for k in 0..nz {
            let z = (zlo * (nz - 1 - k) as f64 + zhi * k as f64) / (nz - 1) as f64;
            out.push(vec![r, z]);
        }
    }
    out
}

/// The (R, z) points of a subset of the grid's cell centres: every axis
/// thinned evenly to at most a few values (fewer for the column closure), so
/// that no point lies outside the grid (a spherical grid covers no box in
/// (R, z)). None when the grid does not sit in the (R, z) frame.
fn grid_points(grid: &Grid, column: bool) -> Option<Vec<Vec<f64>>> {
    let frame = crate::background::Frame::Axisymmetric;
    let emb = grid.embedding(frame)?;
    let axes = grid.axes();
    let per = match (axes.len(), column) {
        (1, _) => return None,
        (2, false) => 33,
        (2, true) => 13,
        (_, false) => 13,
        (_, true) => 6,
    };
    let thin = |c: Vec<f64>| -> Vec<f64> {
        let step = c.len().div_ceil(per).max(1);
        let mut t: Vec<f64> = c.iter().copied().step_by(step).collect();
        if t.last() != c.last() {
            t.extend(c.last());
        }
        t
    };
    let lists: Vec<Vec<f64>> = axes.iter().map(|a| thin(a.centers())).collect();
    let n: usize = lists.iter().map(Vec::len).product();
    let mut cols: Vec<Vec<f64>> = vec![Vec::with_capacity(n); lists.len()];
    for i in 0..n {
        let mut k = i;
        for (a, l) in lists.iter().enumerate().rev() {
            cols[a].push(l[k % l.len()]);
            k /= l.len();
        }
    }
    let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
    let mut out = vec![vec![0.0; n]; 2];
    emb.to_frame(&refs, n, &mut out);
    Some((0..n).map(|i| vec![out[0][i], out[1][i]]).collect())
}

/// Stratified disks: κ², Solberg–Høiland, N_z², the vertical shear.
fn stratified(
    model: &Model,
    bg: &dyn Background,
    domain: &Domain,
    grid: Option<&Grid>,
) -> Result<Section, ClosureError> {
    let mut sec = Section {
        coords: vec!["R", "z"],
        ..Section::default()
    };
    let coords = sec.coords.clone();
    let column = Laws::build(model)?.column.is_some();
    let at = locals(model, bg, domain)?;
    let pts = grid
        .and_then(|g| grid_points(g, column))
        .unwrap_or_else(|| field_points(model, domain, column));
    let locs: Vec<Local> = pts.iter().map(|p| at(p[0], p[1])).collect();
    let gamma = model.gamma;
    let index = |p: &[f64]| {
        pts.iter()
            .position(|q| q[0].to_bits() == p[0].to_bits() && q[1].to_bits() == p[1].to_bits())
            .expect("a scanned point")
    };
    let loc = |p: &[f64]| locs[index(p)];
    // Entropy gradient and the size of its terms.
    let ds = |l: &Local| {
        let sr = l.p_r / l.p - gamma * l.rho_r / l.rho;
        let sz = l.p_z / l.p - gamma * l.rho_z / l.rho;
        let ar = (l.p_r / l.p).abs() + gamma * (l.rho_r / l.rho).abs();
        let az = (l.p_z / l.p).abs() + gamma * (l.rho_z / l.rho).abs();
        (sr, sz, ar, az)
    };
    let j2r = |l: &Local| {
        l.v2_r.map(|d| {
            (
                2.0 * l.r * l.v2 + l.r * l.r * d,
                2.0 * l.r * l.v2.abs() + (l.r * l.r * d).abs(),
            )
        })
    };
    let k2: Criterion = Box::new(|p| {
        let l = loc(p);
        let (v, s) = j2r(&l).unwrap_or((f64::NAN, f64::NAN));
        let r3 = l.r.powi(3);
        (v / r3, s / r3)
    });
    sec.items
        .push(diagnostic(&coords, &pts, "kappa^2", &k2, true, KAPPA));
    let isothermal = crate::physics::is_isothermal(gamma);
    if isothermal {
        sec.skipped.push(
            "SH 1, SH 2, N_z^2   skipped: isothermal gas (gamma = 1), whose perturbations do not \
             conserve entropy"
                .to_string(),
        );
    } else {
        {
            let sh1: Criterion = Box::new(|p| {
                let l = loc(p);
                let (sr, sz, ar, az) = ds(&l);
                let (k, ks) = j2r(&l).unwrap_or((f64::NAN, f64::NAN));
                let r3 = l.r.powi(3);
                let b = (l.p_r * sr + l.p_z * sz) / (gamma * l.rho);
                let bs = ((l.p_r * ar).abs() + (l.p_z * az).abs()) / (gamma * l.rho);
                (k / r3 - b, ks / r3 + bs)
            });
            sec.items
                .push(diagnostic(&coords, &pts, "SH 1", &sh1, true, SH1));
            let sh2: Criterion = Box::new(|p| {
                let l = loc(p);
                let (sr, sz, ar, az) = ds(&l);
                let (k, ks) = j2r(&l).unwrap_or((f64::NAN, f64::NAN));
                let jz = l.r * l.r * l.v2_z;
                (
                    -l.p_z * (k * sz - jz * sr),
                    l.p_z.abs() * (ks * az + jz.abs() * ar),
                )
            });
            sec.items
                .push(diagnostic(&coords, &pts, "SH 2", &sh2, true, SH2));
        }
        let nz: Criterion = Box::new(|p| {
            let l = loc(p);
            let (_, sz, _, az) = ds(&l);
            (
                -l.p_z * sz / (gamma * l.rho),
                (l.p_z * az).abs() / (gamma * l.rho),
            )
        });
        sec.items
            .push(diagnostic(&coords, &pts, "N_z^2", &nz, true, NZ));
    }
    let shear: Criterion = Box::new(|p| {
        let l = loc(p);
        (l.v2_z / (2.0 * l.v2.sqrt()), 0.0)
    });
    let mut d = diagnostic(&coords, &pts, "R dOmega/dz", &shear, false, SHEAR);
    // Fastest growth: smallest Ω/(2π |R ∂Ω/∂z|).
    let mut best: Option<(f64, usize)> = None;
    for (i, l) in locs.iter().enumerate() {
        let omega = l.v2.sqrt() / l.r;
        let rate = (l.v2_z / (2.0 * l.v2.sqrt())).abs();
        if rate > THRESHOLD * omega {
            let t = omega / (2.0 * std::f64::consts::PI * rate);
            if best.is_none_or(|(b, _)| t < b) {
                best = Some((t, i));
            }
        }
    }
    d.note = Some(match best {
        Some((t, i)) => format!(
            "vertical-shear instability: growth time of order {t:.3e} local orbits at fastest \
             ({}; rate ~ |R dOmega/dz|, Nelson, Gressel & Umurhan 2013, from memory); it grows \
             only where the gas cools fast (thermal relaxation much shorter than an orbit)",
            sec.place(&pts[i])
        ),
        None => "vertical-shear instability does not apply: no vertical shear (|R dOmega/dz| \
                 below 1e-8 Omega everywhere)"
            .to_string(),
    });
    sec.items.push(d);
    if let Some(sigma) = &model.surface_density {
        sec.items
            .push(toomre_mid(model, &sigma.expr, domain, &*at)?);
    }
    Ok(sec)
}

/// Toomre's Q at the midplane of a stratified disk normalised to Σ(R): at
/// up to 33 radii of the domain's scan points, Q = c(R, 0) κ(R, 0)/(π G Σ).
fn toomre_mid(
    model: &Model,
    sigma: &Expr,
    domain: &Domain,
    at: &dyn Fn(f64, f64) -> Local,
) -> Result<Diagnostic, ClosureError> {
    let g = closure::compile(model, &Expr::name("G"), "G")?.eval(&[1.0]);
    let sig = closure::compile(model, sigma, "balance.surface_density")?;
    let c2 = Laws::build(model)?
        .sound_speed_sq
        .ok_or_else(|| ClosureError::Incomplete("Toomre's Q needs c^2".into()))?;
    let c2 = field(model, &c2, "gas.sound_speed_sq")?;
    let xs = domain.scan_points_for(model);
    let step = xs.len().div_ceil(33).max(1);
    let mut rs: Vec<f64> = xs.iter().copied().step_by(step).collect();
    if rs.last() != xs.last() {
        rs.extend(xs.last());
    }
    let pts: Vec<Vec<f64>> = rs.iter().map(|&r| vec![r, 0.0]).collect();
    let qs: Vec<f64> = rs
        .iter()
        .map(|&r| {
            let l = at(r, 0.0);
            let k2 = l.v2_r.map_or(f64::NAN, |d| (2.0 * l.v2 + r * d) / (r * r));
            c2.eval(&[r, 0.0]).sqrt() * k2.sqrt() / (std::f64::consts::PI * g * sig.eval(&[r]))
        })
        .collect();
    let q = |p: &[f64]| {
        let i = rs
            .iter()
            .position(|r| r.to_bits() == p[0].to_bits())
            .expect("a scanned radius");
        (qs[i] - 1.0, qs[i])
    };
    let coords = ["R", "z"];
    let mut d = diagnostic(&coords, &pts, "Toomre Q", &q, true, TOOMRE_MID);
    d.min.0 += 1.0;
    d.max.0 += 1.0;
    Ok(d)
}
