//! What a file and `check` say about the perturbations: each one's bound
//! parameters, the peak of the sampled perturbation relative to the
//! background, field by field, and each perturbation alone set against the
//! discrete imbalance of the background.
//!
//! Owns: the peak amplitudes, gathered slab by slab from the
//! `background` and `perturbation` groups, and their text. Does not own
//! sampling or writing.

use crate::fields::FieldSpec;

/// The largest |δq|/|q| of density and pressure, and |δv|/c of the
/// velocity components (c = √γ × the background's `sound_speed` field, the
/// adiabatic sound speed √(γP/ρ) that `relative_to: "sound_speed"` means),
/// over the cells seen so far.
#[derive(Clone, Debug, PartialEq)]
pub struct Peaks {
    /// √γ: the adiabatic over the isothermal sound speed.
    pub adiabatic: f64,
    /// (field, peak) of density, pressure and the velocity components.
    pub fields: Vec<(String, f64)>,
    /// (field, max |δΦ|, max |Φ| of the background) of the potential and
    /// a planet's potential: a potential has no natural local scale (Φ
    /// passes through zero), so its peak is relative to the largest |Φ|.
    pub potentials: Vec<(String, f64, f64)>,
}

impl Default for Peaks {
    fn default() -> Self {
        Peaks::new(1.0)
    }
}

impl Peaks {
    /// No cells seen yet, for a gas of adiabatic index `gamma`.
    pub fn new(gamma: f64) -> Peaks {
        Peaks {
            adiabatic: gamma.sqrt(),
            fields: Vec::new(),
            potentials: Vec::new(),
        }
    }

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
            if f.name == "potential" || f.name == super::PLANET_POTENTIAL {
                if let Some(r) = find(bg_fields, "potential") {
                    let big = |v: &[f64]| v.iter().fold(0.0, |m: f64, x| m.max(x.abs()));
                    let (d, q) = (big(&alone[k]), big(&background[r]));
                    match self.potentials.iter_mut().find(|(n, ..)| *n == f.name) {
                        Some((_, pd, pq)) => {
                            *pd = pd.max(d);
                            *pq = pq.max(q);
                        }
                        None => self.potentials.push((f.name.clone(), d, q)),
                    }
                }
                continue;
            }
            let Some(r) = reference else { continue };
            let scale = if Some(r) == cs { self.adiabatic } else { 1.0 };
            let peak = alone[k]
                .iter()
                .zip(&background[r])
                .map(|(d, q)| (d / (q * scale)).abs())
                .fold(0.0, f64::max);
            match self.fields.iter_mut().find(|(n, _)| *n == f.name) {
                Some((_, p)) => *p = p.max(peak),
                None => self.fields.push((f.name.clone(), peak)),
            }
        }
    }

    /// Fold in the peaks `other` saw (another part of the grid): the
    /// largest of each, fields first seen here keeping their place.
    pub fn merge(&mut self, other: &Peaks) {
        for (name, p) in &other.fields {
            match self.fields.iter_mut().find(|(n, _)| n == name) {
                Some((_, mine)) => *mine = mine.max(*p),
                None => self.fields.push((name.clone(), *p)),
            }
        }
        for (name, d, q) in &other.potentials {
            match self.potentials.iter_mut().find(|(n, ..)| n == name) {
                Some((_, md, mq)) => {
                    *md = md.max(*d);
                    *mq = mq.max(*q);
                }
                None => self.potentials.push((name.clone(), *d, *q)),
            }
        }
    }

    /// The peaks as JSON text, every number to the bit (for passing
    /// between MPI ranks); [`Peaks::from_json`] reads it back.
    pub fn to_json(&self) -> String {
        let bits = |x: f64| serde_json::Value::from(x.to_bits());
        serde_json::json!({
            "adiabatic": bits(self.adiabatic),
            "fields": self.fields.iter().map(|(n, p)| serde_json::json!([n, bits(*p)])).collect::<Vec<_>>(),
            "potentials": self.potentials.iter().map(|(n, d, q)| serde_json::json!([n, bits(*d), bits(*q)])).collect::<Vec<_>>(),
        })
        .to_string()
    }

    /// The peaks [`Peaks::to_json`] wrote; None for any other text.
    pub fn from_json(text: &str) -> Option<Peaks> {
        let v: serde_json::Value = serde_json::from_str(text).ok()?;
        let num = |v: &serde_json::Value| v.as_u64().map(f64::from_bits);
        let name = |v: &serde_json::Value| v.as_str().map(str::to_string);
        Some(Peaks {
            adiabatic: num(&v["adiabatic"])?,
            fields: v["fields"]
                .as_array()?
                .iter()
                .map(|e| Some((name(&e[0])?, num(&e[1])?)))
                .collect::<Option<_>>()?,
            potentials: v["potentials"]
                .as_array()?
                .iter()
                .map(|e| Some((name(&e[0])?, num(&e[1])?, num(&e[2])?)))
                .collect::<Option<_>>()?,
        })
    }

    /// The peaks of the potentials that change: (field, max |δΦ|/max |Φ|).
    pub fn potential_peaks(&self) -> Vec<(String, f64)> {
        self.potentials
            .iter()
            .filter(|(_, d, _)| *d > 0.0)
            .map(|(n, d, q)| (n.clone(), if *q > 0.0 { d / q } else { *d }))
            .collect()
    }

    /// The largest of every peak (density, pressure, velocities and the
    /// potentials that change).
    pub fn largest(&self) -> f64 {
        self.fields
            .iter()
            .map(|(_, p)| *p)
            .chain(self.potential_peaks().into_iter().map(|(_, p)| p))
            .fold(0.0, f64::max)
    }

    /// One line: `density 1.0e-6, pressure 0, velocity_R 2.0e-3 of the
    /// sound speed, planet_potential 1.2e-3 of max |Φ|`.
    pub fn describe(&self) -> String {
        self.describe_where(|_| true)
    }

    /// [`Peaks::describe`] of the fields that change (peak above zero).
    pub fn describe_changed(&self) -> String {
        self.describe_where(|p| p > 0.0 || p.is_nan())
    }

    fn describe_where(&self, keep: impl Fn(f64) -> bool) -> String {
        self.fields
            .iter()
            .filter(|(_, p)| keep(*p))
            .map(|(n, p)| {
                let of = if n.starts_with("velocity_") {
                    " of the sound speed (gamma P/rho)^(1/2)"
                } else {
                    ""
                };
                format!("{n} {p:.3e}{of}")
            })
            .chain(
                self.potential_peaks()
                    .into_iter()
                    .map(|(n, p)| format!("{n} {p:.3e} of max |potential|")),
            )
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// One perturbation sampled alone (at the cell centres), its peaks, and how
/// they compare with the discrete imbalance of the background.
#[derive(Clone, Debug, PartialEq)]
pub struct Alone {
    /// Where it was written (`perturbations[0]`).
    pub origin: String,
    /// The kind's profile name.
    pub kind: &'static str,
    /// Its peaks relative to the background.
    pub peaks: Peaks,
}

/// Whether a perturbation stands above the discretisation imbalance.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Standing {
    /// Its largest peak is above the imbalance.
    Larger,
    /// Its largest peak is at or below the imbalance.
    Smaller,
    /// There is no imbalance to compare with (fewer than three cells
    /// along the balance coordinate).
    Unknown,
}

impl Alone {
    /// How the largest peak compares with the discrete imbalance
    /// `discrete` (relative, from `check`).
    pub fn standing(&self, discrete: Option<f64>) -> Standing {
        match discrete {
            Some(x) if x.is_finite() => {
                if self.peaks.largest() > x {
                    Standing::Larger
                } else {
                    Standing::Smaller
                }
            }
            _ => Standing::Unknown,
        }
    }

    /// The lines `check` prints: the peaks, then the verdict.
    pub fn lines(&self, discrete: Option<f64>) -> [String; 2] {
        let peaks = match self.peaks.describe_changed() {
            d if d.is_empty() => "changes no field".to_string(),
            d => d,
        };
        let verdict = match (self.standing(discrete), discrete) {
            (Standing::Larger, Some(x)) => {
                format!("larger than the discretisation imbalance ({x:.3e})")
            }
            (Standing::Smaller, Some(x)) => {
                format!("smaller than the discretisation imbalance ({x:.3e})")
            }
            _ => "no discretisation imbalance to compare with (fewer than three cells along the balance coordinate, or a torus, whose balance is not along a line)".to_string(),
        };
        [format!("{} ({}): {peaks}", self.origin, self.kind), verdict]
    }

    /// The caution for a perturbation that float32 rounding (half a unit
    /// in the last place, 2^-24 ≈ 6.0e-8 relative) would blur: None when
    /// its largest peak is above 100 times that rounding.
    pub fn single_precision_caution(&self) -> Option<String> {
        let half_ulp = f64::from(f32::EPSILON) / 2.0;
        let peak = self.peaks.largest();
        if peak.is_nan() || peak >= 100.0 * half_ulp {
            return None;
        }
        let what = if peak <= half_ulp {
            "is lost in the rounding".to_string()
        } else {
            format!(
                "keeps only about {:.0} significant bits",
                (peak / half_ulp).log2().max(0.0)
            )
        };
        Some(format!(
            "{} ({}) peaks at {peak:.3e} of the background; in single precision (rounding \
             {half_ulp:.1e} relative) it {what}: write double precision (output.precision: \
             \"double\")",
            self.origin, self.kind
        ))
    }

    /// The caution for a perturbation below the imbalance, None otherwise.
    pub fn caution(&self, discrete: Option<f64>) -> Option<String> {
        match (self.standing(discrete), discrete) {
            (Standing::Smaller, Some(x)) => Some(format!(
                "{} ({}) peaks at {:.3e} of the background, not above the discretisation imbalance {x:.3e}: \
                 a scheme that is not well balanced drifts at that level, and its own imbalance will swamp \
                 this perturbation",
                self.origin,
                self.kind,
                self.peaks.largest()
            )),
            _ => None,
        }
    }
}

/// The perturbations sampled alone as JSON text, for metadata:
/// `[{"origin": …, "kind": …, "peaks": {"pressure": 1e-6, …}, "largest": …,
/// "discrete_imbalance": …, "standing": "larger"}, …]`.
pub fn alone_json(list: &[Alone], discrete: Option<f64>) -> String {
    let items: Vec<serde_json::Value> = list
        .iter()
        .map(|a| {
            let mut peaks = serde_json::Map::new();
            for (n, p) in a
                .peaks
                .fields
                .iter()
                .cloned()
                .chain(a.peaks.potential_peaks())
            {
                peaks.insert(n, serde_json::json!(p));
            }
            let standing = match a.standing(discrete) {
                Standing::Larger => "larger",
                Standing::Smaller => "smaller",
                Standing::Unknown => "unknown",
            };
            serde_json::json!({
                "origin": a.origin,
                "kind": a.kind,
                "peaks": peaks,
                "largest": a.peaks.largest(),
                "discrete_imbalance": discrete,
                "standing": standing,
            })
        })
        .collect();
    serde_json::Value::Array(items).to_string()
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn peaks_merge_to_the_largest_and_travel_as_json_to_the_bit() {
        let a = Peaks {
            adiabatic: 1.4f64.sqrt(),
            fields: vec![("density".into(), 1e-6), ("pressure".into(), 0.1 + 0.2)],
            potentials: vec![("planet_potential".into(), 3.0, 7.0)],
        };
        let b = Peaks {
            adiabatic: a.adiabatic,
            fields: vec![("density".into(), 2e-6), ("velocity_x".into(), 5e-3)],
            potentials: vec![("planet_potential".into(), 1.0, 9.0)],
        };
        assert_eq!(Peaks::from_json(&a.to_json()), Some(a.clone()));
        let mut m = a.clone();
        m.merge(&b);
        assert_eq!(
            m.fields,
            vec![
                ("density".to_string(), 2e-6),
                ("pressure".to_string(), 0.1 + 0.2),
                ("velocity_x".to_string(), 5e-3)
            ]
        );
        assert_eq!(
            m.potentials,
            vec![("planet_potential".to_string(), 3.0, 9.0)]
        );
        let mut empty = Peaks::new(1.4);
        empty.merge(&a);
        assert_eq!(empty.fields, a.fields);
        assert_eq!(Peaks::from_json("{}"), None);
    }
}
