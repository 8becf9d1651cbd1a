//! Profiles: the user's JSON description of an equilibrium problem, read
//! and validated with an exact path for every error, then resolved into a
//! [`Model`], a [`Grid`], a sampling rule and output settings.
//!
//! Owns: the profile schema (documented in the README's profile reference),
//! `--set` overrides, the bundled profiles. Does not own: solving, sampling
//! or writing.

pub mod bundled;
mod json;
mod perturbations;
mod sections;

use sections::{check_grid_matches, grid, output, potential, sampling};

use std::fmt;
use std::path::{Path, PathBuf};

use serde_json::Value;

use crate::background::Shape;
use crate::formula::{parse_with_names, resolve_parameters, Expr};
use crate::grid::Grid;
use crate::keys::Keyed;
use crate::model::{Anchor, ColumnExtent, Law, Model, Unknown, Vertical};
use crate::output::Precision;
use crate::sample::SamplingRule;
use crate::units::UnitSystem;
pub(crate) use json::closest;
use json::Node;

/// A profile error: the file, the JSON path at fault and what is wrong;
/// for formulas also the formula with a caret under the fault.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub struct ProfileError {
    /// The profile file (or `bundled:<name>`).
    pub file: String,
    /// The JSON path (`grid.R.cells`), or empty for file-level errors.
    pub path: String,
    /// What is wrong.
    pub message: String,
    /// A formula with a caret line, when the fault is inside a formula.
    pub detail: Option<String>,
}

impl ProfileError {
    /// An error at a path of a file.
    pub fn at(file: &str, path: &str, message: impl Into<String>) -> ProfileError {
        ProfileError {
            file: file.to_string(),
            path: path.to_string(),
            message: message.into(),
            detail: None,
        }
    }
}

impl fmt::Display for ProfileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.path.is_empty() {
            write!(f, "{}: {}", self.file, self.message)?;
        } else {
            write!(f, "{}: {}: {}", self.file, self.path, self.message)?;
        }
        if let Some(d) = &self.detail {
            write!(f, "\n{}", indent(d))?;
        }
        Ok(())
    }
}

fn indent(s: &str) -> String {
    s.lines()
        .map(|l| format!("    {l}"))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Where and how to write the output.
#[derive(Clone, Debug, PartialEq)]
pub struct OutputSpec {
    /// The HDF5 file named in the profile (relative to the working directory).
    pub file: Option<PathBuf>,
    /// Also write a CSV table (1D grids).
    pub csv: bool,
    /// Floating-point precision of the HDF5 datasets.
    pub precision: Precision,
    /// The fields to write (`output.fields`); None writes every field.
    pub fields: Option<Vec<String>>,
    /// HDF5 filters of the field datasets (`output.deflate`,
    /// `output.shuffle`).
    pub filters: crate::output::Filters,
}

/// A profile read, validated and resolved.
#[derive(Clone, Debug)]
pub struct Loaded {
    /// Where it came from (a path or `bundled:<name>`).
    pub source: String,
    /// The profile text after `--set` overrides, as recorded in outputs.
    pub json_text: String,
    /// The problem.
    pub model: Model,
    /// The grid.
    pub grid: Grid,
    /// The sampling rule.
    pub sampling: SamplingRule,
    /// Values at cell faces on request (`sampling.faces`,
    /// `sampling.staggered_velocity`).
    pub faces: crate::sample::FaceRequest,
    /// Output settings.
    pub output: OutputSpec,
    /// What is added to the equilibrium (`perturbations`), in profile order.
    pub perturbations: Vec<crate::perturb::Perturbation>,
}

/// Names no parameter may take: coordinates and built-ins.
pub const RESERVED: [&str; 15] = [
    "R", "phi", "x", "y", "z", "r", "pi", "G", "k_B", "m_u", "if", "else", "and", "or", "not",
];

/// Parse a `--set NAME=VALUE` argument.
pub fn parse_override(arg: &str) -> Result<(String, String), String> {
    match arg.split_once('=') {
        Some((n, v)) if !n.trim().is_empty() && !v.trim().is_empty() => {
            Ok((n.trim().to_string(), v.trim().to_string()))
        }
        _ => Err(format!("expected NAME=VALUE, found `{arg}`")),
    }
}

/// Read a profile from a path, or a bundled profile by name, apply the
/// overrides and resolve it.
pub fn load(arg: &str, overrides: &[(String, String)]) -> Result<Loaded, ProfileError> {
    let path = Path::new(arg);
    let (label, text, dir) = if path.is_file() {
        let text = std::fs::read_to_string(path)
            .map_err(|e| ProfileError::at(arg, "", format!("cannot read the file: {e}")))?;
        (
            arg.to_string(),
            text,
            path.parent().map(Path::to_path_buf).unwrap_or_default(),
        )
    } else if let Some(text) = bundled::find(arg) {
        (
            format!("bundled:{arg}"),
            text.to_string(),
            PathBuf::from("."),
        )
    } else {
        let names: Vec<&str> = bundled::BUNDLED.iter().map(|(n, _)| *n).collect();
        let hint = closest(arg, &names)
            .map(|n| format!(" (did you mean `{n}`?)"))
            .unwrap_or_default();
        return Err(ProfileError::at(
            arg,
            "",
            format!(
                "no such file, and no bundled profile of that name{hint}; `stillpoint profiles` lists them"
            ),
        ));
    };
    from_text(&label, &text, &dir, overrides)
}

/// Resolve a profile from its text. `dir` is where relative paths inside it
/// (edge files) are looked up.
pub fn from_text(
    label: &str,
    text: &str,
    dir: &Path,
    overrides: &[(String, String)],
) -> Result<Loaded, ProfileError> {
    let mut root: Value = serde_json::from_str(text).map_err(|e| {
        ProfileError::at(
            label,
            "",
            format!(
                "not valid JSON: {} (line {}, column {})",
                strip_pos(&e.to_string()),
                e.line(),
                e.column()
            ),
        )
    })?;
    apply_overrides(&mut root, label, overrides)?;
    let json_text = serde_json::to_string_pretty(&root).unwrap_or_default();
    let top = Node::root(&root, label);
    top.only_keys(&[
        "name",
        "about",
        "units",
        "parameters",
        "gravity",
        "gas",
        "balance",
        "grid",
        "sampling",
        "output",
        "perturbations",
    ])?;
    let name = top.require("name")?.node().str()?.to_string();
    let about = match top.child("about") {
        Some(n) => n.node().str()?.to_string(),
        None => String::new(),
    };
    let units = match top.child("units") {
        Some(n) => units_choice(&n.node())?,
        None => UnitSystem::Code,
    };

    // Parameters, resolved in dependency order.
    let builtins = Model::builtin_names(units);
    let mut param_text = Vec::new();
    let mut defs = Vec::new();
    if let Some(p) = top.child("parameters") {
        let p = p.node();
        let map = p.object()?;
        let names: Vec<&str> = map.keys().map(String::as_str).collect();
        let mut known: Vec<&str> = names.clone();
        known.extend(builtins.iter().map(|(n, _)| n.as_str()));
        for key in &names {
            let child = p.require(key)?;
            let node = child.node();
            if RESERVED.contains(key) || !is_identifier(key) {
                return Err(node.error(format!(
                    "`{key}` cannot be a parameter name: names are letters, digits and _, and {} are reserved",
                    RESERVED.join(", ")
                )));
            }
            let expr = node.formula(&known)?;
            let text = match node.value {
                Value::String(s) => s.clone(),
                v => v.to_string(),
            };
            param_text.push((key.to_string(), text));
            defs.push((key.to_string(), expr));
        }
    }
    let parameters = resolve_parameters(&defs, &builtins)
        .map_err(|e| ProfileError::at(label, "parameters", e.to_string()))?;
    for (n, v) in &parameters {
        if !v.is_finite() {
            return Err(ProfileError::at(
                label,
                &format!("parameters.{n}"),
                format!("evaluates to {v}"),
            ));
        }
    }
    let lookup = |n: &str| {
        parameters
            .iter()
            .find(|(k, _)| k == n)
            .map(|(_, v)| *v)
            .or_else(|| builtins.iter().find(|(k, _)| k == n).map(|(_, v)| *v))
    };
    let mut consts: Vec<&str> = parameters.iter().map(|(n, _)| n.as_str()).collect();
    consts.extend(builtins.iter().map(|(n, _)| n.as_str()));

    // Balance.
    let balance_owned = top.require("balance")?;
    let balance = balance_owned.node();
    balance.only_keys(&[
        "shape",
        "solve_for",
        "density",
        "rotation",
        "pressure",
        "anchor",
        "vertically_integrated",
        "intended_jumps",
        "axis",
        "torus",
        "vertical",
        "surface_density",
        "column",
        "edges",
    ])?;
    let shape = balance.require("shape")?.node().choice(Shape::KEYS)?;
    let unknown = balance.require("solve_for")?.node().choice(Unknown::KEYS)?;
    let mut law_names = consts.clone();
    law_names.extend(shape.variables());
    let law = |key: &str| -> Result<Option<Law>, ProfileError> {
        match balance.child(key) {
            None => Ok(None),
            Some(n) => Ok(Some(Law {
                expr: n.node().formula(&law_names)?,
                origin: n.node().path(),
            })),
        }
    };
    let mut density = law("density")?;
    let rotation = law("rotation")?;
    let pressure = law("pressure")?;
    let mut surface_density = law("surface_density")?;
    if let Some(e) = balance.child("edges") {
        let e = e.node();
        if !shape.is_disk() {
            return Err(e.error(
                "edges taper a disk's density in R: give balance.shape \"disk\" or \"stratified_disk\"",
            ));
        }
        let tapered = sections::edges(e, &consts, &lookup)?;
        match (&mut surface_density, &mut density) {
            (Some(l), _) | (None, Some(l)) => l.expr = tapered.apply(l.expr.clone()),
            (None, None) => return Err(e.error(
                "edges taper the density law: give balance.density (or balance.surface_density)",
            )),
        }
    }
    let vertical = match balance.child("vertical") {
        None => Vertical::ClosedForm,
        Some(n) => {
            let v = n.node().choice(Vertical::KEYS)?;
            if shape != Shape::StratifiedDisk {
                return Err(n.node().error(
                    "only a stratified disk (balance.shape \"stratified_disk\") has a vertical structure to solve",
                ));
            }
            v
        }
    };
    let column = match balance.child("column") {
        None => None,
        Some(n) => {
            let c = n.node().choice(ColumnExtent::KEYS)?;
            if surface_density.is_none() {
                return Err(n.node().error(
                    "balance.column says how far the column integral of balance.surface_density runs; give the surface density too",
                ));
            }
            Some(c)
        }
    };
    if let (Some(s), true) = (&surface_density, shape != Shape::StratifiedDisk) {
        return Err(ProfileError::at(
            label,
            &s.origin,
            "a surface density normalises a stratified disk's columns (balance.shape \"stratified_disk\"); a vertically integrated disk gives Σ as balance.density".to_string(),
        ));
    }
    let anchor = match balance.child("anchor") {
        None => None,
        Some(a) => {
            let a = a.node();
            a.only_keys(&["at", "value"])?;
            Some(Anchor {
                at: a.require("at")?.node().value(&consts, &lookup)?,
                value: a.require("value")?.node().value(&consts, &lookup)?,
            })
        }
    };
    let vertically_integrated = match balance.child("vertically_integrated") {
        Some(n) => {
            let b = n.node().bool()?;
            if b && shape != Shape::DiskMidplane {
                return Err(n.node().error(if shape == Shape::StratifiedDisk {
                    "a stratified disk is not vertically integrated: give its midplane density (its vertical structure is solved)"
                } else {
                    "only a disk can be vertically integrated"
                }));
            }
            b
        }
        None => false,
    };

    // Gravity.
    let gravity_owned = top.require("gravity")?;
    let (potential, potential_field) = potential(gravity_owned.node(), shape, &consts)?;

    // Gas.
    let gas_owned = top.require("gas")?;
    let gas = gas_owned.node();
    gas.only_keys(&[
        "gamma",
        "sound_speed_sq",
        "temperature",
        "molecular_weight",
        "barotropic",
    ])?;
    let gamma = match gas.child("gamma") {
        Some(g) => g.node().value(&consts, &lookup)?,
        None => 5.0 / 3.0,
    };
    if gamma < 1.0 {
        return Err(ProfileError::at(
            label,
            "gas.gamma",
            format!("must be at least 1 (1 is an isothermal gas), found {gamma}"),
        ));
    }
    let molecular_weight = match gas.child("molecular_weight") {
        Some(m) => {
            let v = m.node().value(&consts, &lookup)?;
            if v <= 0.0 {
                return Err(m.node().error(format!("must be positive, found {v}")));
            }
            // The formula as written (a parameter name, say) so that derived
            // laws print `mu` rather than its decimal value.
            Some((v, m.node().formula(&consts)?))
        }
        None => None,
    };
    let sound_speed_sq = match (gas.child("sound_speed_sq"), gas.child("temperature")) {
        (Some(_), Some(t)) => {
            return Err(t
                .node()
                .error("give either gas.sound_speed_sq or gas.temperature, not both"))
        }
        (Some(c), None) => Some(Law {
            expr: c.node().formula(&law_names)?,
            origin: c.node().path(),
        }),
        (None, Some(t)) => {
            let node = t.node();
            if !units.is_physical() {
                return Err(node.error(
                    "a temperature needs physical units (units: si, cgs or astro); in code units give gas.sound_speed_sq",
                ));
            };
            let Some((_, mu)) = molecular_weight.clone() else {
                return Err(ProfileError::at(
                    label,
                    "gas.molecular_weight",
                    "this key is required with gas.temperature (c^2 = k_B T / (mu m_u))",
                ));
            };
            let t_expr = node.formula(&law_names)?;
            let expr = crate::physics::sound_speed_sq_from_temperature(t_expr, mu);
            Some(Law {
                expr,
                origin: node.path(),
            })
        }
        (None, None) => None,
    };

    let barotrope = match gas.child("barotropic") {
        None => None,
        Some(b) => {
            if let Some(other) = ["sound_speed_sq", "temperature"]
                .into_iter()
                .find(|k| gas.child(k).is_some())
            {
                return Err(b.node().error(format!(
                    "a barotropic gas fixes P = K rho^Gamma and so its sound speed: remove gas.{other}"
                )));
            }
            Some(sections::barotrope(b.node(), &consts, &lookup)?)
        }
    };

    // Grid, sampling, output.
    let grid_owned = top.require("grid")?;
    let mut grid = grid(grid_owned.node(), dir, &consts, &lookup)?;
    if let Some(a) = balance.child("axis") {
        let a = a.node();
        if shape != Shape::Slab {
            return Err(a.error("only a slab has an axis to be stratified along"));
        }
        let name = a.str()?;
        let coord = crate::grid::Coord::from_name(name)
            .filter(|c| grid.axes().iter().any(|ax| ax.coord == *c))
            .ok_or_else(|| {
                a.error(format!(
                    "`{name}` is not an axis of the grid; give one of {}",
                    grid.axes()
                        .iter()
                        .map(|ax| ax.coord.name())
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            })?;
        grid = grid
            .stratified_along(coord)
            .map_err(|e| a.error(e.to_string()))?;
    }
    check_grid_matches(&grid, shape, balance.child("torus").is_some(), label)?;
    let sampling = match top.child("sampling") {
        None => SamplingRule::Center,
        Some(s) => sampling(s.node())?,
    };
    let faces = match top.child("sampling") {
        None => crate::sample::FaceRequest::default(),
        Some(s) => sections::faces(s.node())?,
    };
    let output = match top.child("output") {
        None => OutputSpec {
            file: None,
            csv: false,
            precision: Precision::Double,
            fields: None,
            filters: crate::output::Filters::default(),
        },
        Some(o) => output(o.node())?,
    };

    let central_gm = match gravity_owned.node().child("point_mass") {
        Some(m) => Some(m.node().value(&consts, &lookup)? * lookup("G").unwrap_or(1.0)),
        None => None,
    };
    let perturbations = match top.child("perturbations") {
        None => Vec::new(),
        Some(p) => perturbations::perturbations(
            p.node(),
            &perturbations::Names {
                consts: &consts,
                lookup: &lookup,
                frame: shape.frame(),
                grid: &grid,
                central_gm,
            },
        )?,
    };

    let torus = match balance.child("torus") {
        Some(t) => {
            let given = [&density, &rotation, &pressure];
            let what = (shape, unknown, barotrope.is_some(), &given[..]);
            Some(sections::torus(t.node(), what, &consts, &lookup)?)
        }
        None => None,
    };
    let mut model = Model {
        name,
        about,
        units,
        parameters,
        parameter_text: param_text,
        shape,
        unknown,
        density,
        surface_density,
        column,
        vertical,
        sound_speed_sq,
        barotrope,
        torus,
        rotation,
        pressure,
        potential,
        potential_field,
        anchor,
        gamma,
        molecular_weight: molecular_weight.map(|(v, _)| v),
        vertically_integrated,
        intended_jumps: Vec::new(),
    };
    if let Some(list) = balance.child("intended_jumps") {
        model.intended_jumps = sections::intended_jumps(list.node(), &model.law_keys())?;
    }
    Ok(Loaded {
        source: label.to_string(),
        json_text,
        model,
        grid,
        sampling,
        faces,
        output,
        perturbations,
    })
}

fn strip_pos(msg: &str) -> String {
    match msg.rfind(" at line ") {
        Some(i) => msg[..i].to_string(),
        None => msg.to_string(),
    }
}

fn is_identifier(s: &str) -> bool {
    let mut c = s.chars();
    matches!(c.next(), Some(ch) if ch.is_ascii_alphabetic() || ch == '_')
        && c.all(|ch| ch.is_ascii_alphanumeric() || ch == '_')
}

fn apply_overrides(
    root: &mut Value,
    label: &str,
    overrides: &[(String, String)],
) -> Result<(), ProfileError> {
    if overrides.is_empty() {
        return Ok(());
    }
    let Some(params) = root.get_mut("parameters").and_then(Value::as_object_mut) else {
        return Err(ProfileError::at(
            label,
            "parameters",
            "--set needs a parameters object in the profile",
        ));
    };
    for (name, value) in overrides {
        if !params.contains_key(name) {
            let keys: Vec<&str> = params.keys().map(String::as_str).collect();
            let hint = closest(name, &keys)
                .map(|k| format!(" (did you mean `{k}`?)"))
                .unwrap_or_default();
            return Err(ProfileError::at(
                label,
                "parameters",
                format!(
                    "--set {name}=…: no parameter `{name}`{hint}; known: {}",
                    keys.join(", ")
                ),
            ));
        }
        let v = match value.parse::<f64>() {
            Ok(x) if x.is_finite() => serde_json::Number::from_f64(x).map(Value::Number),
            Ok(x) => {
                return Err(ProfileError::at(
                    label,
                    &format!("parameters.{name}"),
                    format!(
                        "--set {name}={value}: {} is not a value a parameter can take; give a finite number (such as 1.5e-3) or a formula of the other parameters",
                        if x.is_nan() { "NaN".to_string() } else { format!("{x} (beyond the largest double, 1.8e308)") }
                    ),
                ))
            }
            Err(_) => None,
        }
        .unwrap_or_else(|| Value::String(value.clone()));
        if let Value::String(text) = &v {
            // A word that names nothing: say so at the command line, not
            // inside the formula it became.
            if let Ok(e) = crate::formula::parse(text) {
                let keys: Vec<&str> = params.keys().map(String::as_str).collect();
                for n in e.names() {
                    if !keys.contains(&n.as_str()) && !RESERVED.contains(&n.as_str()) {
                        let hint = closest(&n, &keys)
                            .map(|k| format!(" (did you mean `{k}`?)"))
                            .unwrap_or_default();
                        return Err(ProfileError::at(
                            label,
                            &format!("parameters.{name}"),
                            format!(
                                "--set {name}={value}: `{n}` is neither a number nor a parameter{hint}; give a finite number (such as 1.5e-3) or a formula of the parameters {}",
                                keys.join(", ")
                            ),
                        ));
                    }
                }
            }
        }
        params.insert(name.clone(), v);
    }
    Ok(())
}

/// Parse a formula over the model's names (parameters, built-ins and the
/// background coordinate) — for `--at` lists and similar user input.
pub fn formula_for(model: &Model, text: &str) -> Result<Expr, crate::formula::FormulaError> {
    let builtins = Model::builtin_names(model.units);
    let mut known: Vec<&str> = model.parameters.iter().map(|(n, _)| n.as_str()).collect();
    known.extend(builtins.iter().map(|(n, _)| n.as_str()));
    parse_with_names(text, &known)
}

/// The unit system, with the names people write for the astronomical one
/// (`AU`, `au`, `solar`) pointing to `astro` rather than to the closest
/// spelling (`si`).
fn units_choice(node: &Node<'_>) -> Result<UnitSystem, ProfileError> {
    if let Some(s) = node.value.as_str() {
        let lower = s.to_ascii_lowercase();
        let meant = match lower.as_str() {
            "au" | "solar" | "astronomical" | "msun" | "yr" => Some("astro"),
            "mks" | "m" | "kg" => Some("si"),
            "cm" | "gram" | "g" => Some("cgs"),
            "g=1" | "none" | "dimensionless" => Some("code"),
            _ if lower != s && UnitSystem::KEYS.iter().any(|(_, k)| *k == lower) => Some(
                UnitSystem::KEYS
                    .iter()
                    .find(|(_, k)| *k == lower)
                    .map(|(_, k)| *k)
                    .unwrap_or("code"),
            ),
            _ => None,
        };
        if let Some(k) = meant {
            let keys: Vec<&str> = UnitSystem::KEYS.iter().map(|(_, k)| *k).collect();
            return Err(node.error(format!(
                "expected one of {}, found \"{s}\" (did you mean `{k}`? {})",
                keys.join(", "),
                match k {
                    "astro" => "au, solar mass and Julian year",
                    "si" => "metre, kilogram, second",
                    "cgs" => "centimetre, gram, second",
                    _ => "G = 1",
                }
            )));
        }
    }
    node.choice(UnitSystem::KEYS)
}
