//! What a file and `check` say about the perturbations: each one's bound
//! parameters, and the peak of the sampled perturbation relative to the
//! background, field by field.
//!
//! Owns: the peak amplitudes, gathered slab by slab from the
//! `background` and `perturbation` groups, and their text. Does not own
//! sampling or writing.

use crate::fields::FieldSpec;

/// The largest |δq|/|q| of density and pressure, and |δv|/c of the
/// velocity components (c the background's sound speed field), over the
/// cells seen so far.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Peaks {
    /// (field, peak, cell index in C order within the slabs seen).
    pub fields: Vec<(String, f64)>,
}

impl Peaks {
    /// Fold in one slab: `background` and `alone` are the data of the two
    /// groups (fields in the order of `bg_fields` and `alone_fields`).
    pub fn update(
        &mut self,
        bg_fields: &[FieldSpec],
        background: &[Vec<f64>],
        alone_fields: &[FieldSpec],
        alone: &[Vec<f64>],
    ) {
        let find = |fields: &[FieldSpec], name: &str| fields.iter().position(|f| f.name == name);
        let cs = find(bg_fields, "sound_speed");
        for (k, f) in alone_fields.iter().enumerate() {
            let reference = if f.name.starts_with("velocity_") {
                cs
            } else if f.name == "density" || f.name == "pressure" {
                find(bg_fields, &f.name)
            } else {
                None
            };
            let Some(r) = reference else { continue };
            let peak = alone[k]
                .iter()
                .zip(&background[r])
                .map(|(d, q)| (d / q).abs())
                .fold(0.0, f64::max);
            match self.fields.iter_mut().find(|(n, _)| *n == f.name) {
                Some((_, p)) => *p = p.max(peak),
                None => self.fields.push((f.name.clone(), peak)),
            }
        }
    }

    /// One line: `density 1.0e-6, pressure 0, velocity_R 2.0e-3 (of c)`.
    pub fn describe(&self) -> String {
        self.fields
            .iter()
            .map(|(n, p)| {
                let of = if n.starts_with("velocity_") {
                    " of the sound speed"
                } else {
                    ""
                };
                format!("{n} {p:.3e}{of}")
            })
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// The bound parameters of every perturbation as JSON text, for metadata:
/// `[{"origin": "perturbations[0]", "kind": "pulse", "amplitude": …}, …]`.
pub fn parameters_json(records: &[super::Record]) -> String {
    let list: Vec<serde_json::Value> = records
        .iter()
        .map(|r| {
            let mut m = serde_json::Map::new();
            m.insert("origin".into(), r.origin.clone().into());
            m.insert("kind".into(), r.kind.into());
            for (n, v) in &r.values {
                m.insert(n.clone(), serde_json::json!(v));
            }
            serde_json::Value::Object(m)
        })
        .collect();
    serde_json::Value::Array(list).to_string()
}
