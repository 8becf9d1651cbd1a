//! `perturbations`: the list of what is added to the equilibrium, read and
//! validated with the JSON path of every fault.
//!
//! Owns: the profile keys of each kind of perturbation and what they must
//! satisfy in the profile's frame and grid. Does not own what a
//! perturbation computes (see [`crate::perturb`]).

use super::json::Node;
use super::ProfileError;
use crate::background::Frame;
use crate::grid::{Coord, Grid};
use crate::perturb::{
    Distribution, Field, Keep, Kind, Perturbation, Scale, Softening, Target, COORDS,
};

/// What the list's formulas and values may use.
pub(super) struct Names<'a> {
    /// Parameters and built-ins.
    pub consts: &'a [&'a str],
    /// Their values.
    pub lookup: &'a dyn Fn(&str) -> Option<f64>,
    /// The frame of the background.
    pub frame: Frame,
    /// The grid.
    pub grid: &'a Grid,
    /// G M of a `gravity.point_mass`, if that is the potential.
    pub central_gm: Option<f64>,
}

const KINDS: [(u8, &str); 6] = [
    (0, "pulse"),
    (1, "planet"),
    (2, "noise"),
    (3, "mode"),
    (4, "sound_wave"),
    (5, "formula"),
];

/// Read the `perturbations` array.
pub(super) fn perturbations(node: Node, names: &Names) -> Result<Vec<Perturbation>, ProfileError> {
    node.array()?
        .iter()
        .map(|item| one(item.node(), names))
        .collect()
}

fn one(node: Node, names: &Names) -> Result<Perturbation, ProfileError> {
    node.object()?;
    let kind = node.require("kind")?.node().choice(&KINDS)?;
    let keys: &[&str] = match kind {
        0 => &[
            "kind",
            "field",
            "amplitude",
            "relative_to",
            "keep",
            "centre",
            "width",
        ],
        1 => &[
            "kind",
            "mass_ratio",
            "orbit_radius",
            "azimuth",
            "softening",
            "softening_scale_heights",
            "indirect",
            "in_potential",
            "central_mass",
        ],
        2 => &[
            "kind",
            "field",
            "amplitude",
            "relative_to",
            "keep",
            "distribution",
            "seed",
            "azimuthal_band",
        ],
        3 => &[
            "kind",
            "field",
            "amplitude",
            "relative_to",
            "keep",
            "m",
            "phase",
            "radial_envelope",
            "vertical_envelope",
        ],
        4 => &["kind", "amplitude", "wavevector", "phase"],
        _ => &["kind", "field", "formula", "relative_to", "keep"],
    };
    node.only_keys(keys)?;
    let value = |key: &str| -> Result<Option<f64>, ProfileError> {
        match node.child(key) {
            Some(n) => Ok(Some(n.node().value(names.consts, names.lookup)?)),
            None => Ok(None),
        }
    };
    let required = |key: &str| -> Result<f64, ProfileError> {
        let n = node.require(key)?;
        n.node().value(names.consts, names.lookup)
    };
    let positive = |key: &str| -> Result<f64, ProfileError> {
        let v = required(key)?;
        if v > 0.0 {
            Ok(v)
        } else {
            Err(node
                .require(key)?
                .node()
                .error(format!("must be positive, found {v}")))
        }
    };
    let mut formula_names: Vec<&str> = names.consts.to_vec();
    formula_names.extend(COORDS);
    let formula = |key: &str| -> Result<Option<crate::formula::Expr>, ProfileError> {
        match node.child(key) {
            Some(n) => Ok(Some(n.node().formula(&formula_names)?)),
            None => Ok(None),
        }
    };
    // An azimuth φ about the z axis: a disk's, or a sphere's (r, θ, φ);
    // a slab's layers have no axis to turn about.
    let needs_azimuth = |what: &str| -> Result<(), ProfileError> {
        if names.frame == Frame::Slab {
            Err(node.error(format!(
                "{what} needs an azimuth: it works on a disk or a sphere (balance.shape \"disk\", \"stratified_disk\" or \"sphere\"), not on a slab"
            )))
        } else {
            Ok(())
        }
    };
    let kind = match kind {
        0 => {
            let t = target(node, names, true)?;
            let centre = node.require("centre")?;
            let centre = centre.node();
            let width = node.require("width")?;
            let width = width.node();
            width.only_keys(
                &centre
                    .object()?
                    .keys()
                    .map(String::as_str)
                    .collect::<Vec<_>>(),
            )?;
            let mut axes = Vec::new();
            for key in centre.object()?.keys() {
                let c = centre.require(key)?;
                let Some(col) = COORDS.iter().position(|k| k == key) else {
                    return Err(c.node().error(format!(
                        "`{key}` is not a coordinate; a centre is given in {}",
                        COORDS.join(", ")
                    )));
                };
                let at = c.node().value(names.consts, names.lookup)?;
                let w = width.require(key)?;
                let wv = w.node().value(names.consts, names.lookup)?;
                if wv <= 0.0 {
                    return Err(w.node().error(format!("must be positive, found {wv}")));
                }
                axes.push((col, at, wv));
            }
            if axes.is_empty() {
                return Err(centre.error("give the centre in at least one coordinate"));
            }
            Kind::Pulse { target: t, axes }
        }
        1 => {
            if names.frame != Frame::Axisymmetric {
                return Err(node.error("a planet needs a disk (balance.shape \"disk\")"));
            }
            let softening = match (value("softening")?, value("softening_scale_heights")?) {
                (Some(l), None) if l >= 0.0 => Softening::Length(l),
                (None, Some(f)) if f >= 0.0 => Softening::ScaleHeights(f),
                (Some(_), Some(_)) => {
                    return Err(node.error(
                        "give either softening (a length) or softening_scale_heights, not both",
                    ))
                }
                (None, None) => {
                    return Err(node.error(
                        "give softening (a length) or softening_scale_heights (a fraction of the scale height at the orbit)",
                    ))
                }
                _ => return Err(node.error("the softening must not be negative")),
            };
            let central_gm = match (value("central_mass")?, names.central_gm) {
                (Some(m), _) => m * (names.lookup)("G").unwrap_or(1.0),
                (None, Some(gm)) => gm,
                (None, None) => {
                    return Err(
                        node.error("central_mass is required when the gravity is not a point_mass")
                    )
                }
            };
            let flag = |key: &str| -> Result<bool, ProfileError> {
                node.child(key).map_or(Ok(false), |n| n.node().bool())
            };
            Kind::Planet {
                mass_ratio: positive("mass_ratio")?,
                radius: positive("orbit_radius")?,
                azimuth: value("azimuth")?.unwrap_or(0.0),
                softening,
                indirect: flag("indirect")?,
                central_gm,
                in_potential: flag("in_potential")?,
            }
        }
        2 => {
            let t = target(node, names, true)?;
            let distribution = node.require("distribution")?.node().choice(&[
                (Distribution::Uniform, "uniform"),
                (Distribution::Gaussian, "gaussian"),
            ])?;
            let seed_node = node.require("seed")?;
            let seed = seed_node
                .node()
                .value
                .as_u64()
                .ok_or_else(|| seed_node.node().expected("a non-negative integer"))?;
            let band = match node.child("azimuthal_band") {
                None => None,
                Some(b) => {
                    let b = b.node();
                    needs_azimuth("an azimuthal band")?;
                    let items = b.array()?;
                    let m: Vec<Option<u64>> =
                        items.iter().map(|i| i.node().value.as_u64()).collect();
                    match m[..] {
                        [Some(a), Some(c)] if a <= c && c <= 100_000 => Some((a as u32, c as u32)),
                        _ => return Err(b.expected(
                            "[m_min, m_max], two non-negative integers with m_min ≤ m_max ≤ 100000",
                        )),
                    }
                }
            };
            Kind::Noise {
                target: t,
                distribution,
                seed,
                band,
            }
        }
        3 => {
            needs_azimuth("a mode")?;
            let t = target(node, names, true)?;
            let m_node = node.require("m")?;
            let m = m_node
                .node()
                .value
                .as_u64()
                .filter(|m| *m <= 100_000)
                .ok_or_else(|| m_node.node().expected("a non-negative integer"))?;
            Kind::Mode {
                target: t,
                m: m as u32,
                phase: value("phase")?.unwrap_or(0.0),
                radial: formula("radial_envelope")?,
                vertical: formula("vertical_envelope")?,
            }
        }
        4 => {
            let kv = node.require("wavevector")?;
            let kv = kv.node();
            kv.only_keys(&["x", "y", "z"])?;
            let mut k = [0.0; 3];
            for (i, c) in [Coord::X, Coord::Y, Coord::Z].into_iter().enumerate() {
                if let Some(n) = kv.child(c.name()) {
                    k[i] = n.node().value(names.consts, names.lookup)?;
                    if k[i].abs() > 0.0
                        && Field::parse(&Field::Velocity(c).name(), names.grid).is_none()
                    {
                        return Err(n.node().error(format!(
                            "this grid writes no velocity along {c} (its directions are {}): the wave cannot travel along it", crate::perturb::velocity_directions(names.grid).iter().map(|c| c.name()).collect::<Vec<_>>().join(", ")
                        )));
                    }
                }
            }
            if k.iter().all(|c| c.abs() < f64::MIN_POSITIVE) {
                return Err(kv.error("the wave vector must not be zero"));
            }
            Kind::SoundWave {
                amplitude: required("amplitude")?,
                k,
                phase: value("phase")?.unwrap_or(0.0),
            }
        }
        _ => Kind::Formula {
            target: target(node, names, false)?,
            expr: node.require("formula")?.node().formula(&formula_names)?,
        },
    };
    Ok(Perturbation {
        origin: node.path(),
        kind,
    })
}

/// `field`, `amplitude` (when `amplitude`), `relative_to` and `keep`.
fn target(node: Node, names: &Names, amplitude: bool) -> Result<Target, ProfileError> {
    let f = node.require("field")?;
    let f = f.node();
    let name = f.str()?;
    let field = Field::parse(name, names.grid).ok_or_else(|| {
        f.error(format!(
            "`{name}` is not a field a perturbation can change here; the fields are {}",
            Field::names(names.grid).join(", ")
        ))
    })?;
    let amp = if amplitude {
        let a = node.require("amplitude")?;
        a.node().value(names.consts, names.lookup)?
    } else {
        1.0
    };
    let scale = match node.child("relative_to") {
        None => Scale::Absolute,
        Some(r) => {
            let r = r.node();
            let s = r.choice(&[(Scale::Value, "value"), (Scale::SoundSpeed, "sound_speed")])?;
            if s == Scale::SoundSpeed && !matches!(field, Field::Velocity(_)) {
                return Err(r.error(format!(
                    "an amplitude relative to the sound speed is a velocity; {name} takes \"value\" or no relative_to"
                )));
            }
            s
        }
    };
    let keep = match (node.child("keep"), field) {
        (Some(k), Field::Pressure) => k.node().choice(&[
            (Keep::Density, "density"),
            (Keep::Entropy, "entropy"),
            (Keep::Temperature, "temperature"),
        ])?,
        (Some(k), _) => return Err(k.node().error("keep goes with field \"pressure\" only")),
        (None, Field::Pressure) => return Err(node.error(
            "a pressure change needs keep: \"density\", \"entropy\" (adiabatic) or \"temperature\"",
        )),
        (None, _) => Keep::Density,
    };
    Ok(Target {
        field,
        amplitude: amp,
        scale,
        keep,
    })
}
