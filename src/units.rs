//! Unit systems and the physical constants behind them.
//!
//! Owns: the list of unit systems a profile may choose, the value of each
//! constant (G, k_B, m_u) in each system, the cgs value of each base unit, and
//! how a dimension is written as a unit string. Does not own any physics.
//!
//! Every constant names its published source beside its value.

use std::fmt;

use crate::keys::Keyed;

/// CODATA 2018 recommended value of the Newtonian constant of gravitation,
/// in m³ kg⁻¹ s⁻² (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010).
pub const G_SI: f64 = 6.674_30e-11;
/// Boltzmann constant in J K⁻¹, exact in the 2019 SI and in CODATA 2018.
pub const K_B_SI: f64 = 1.380_649e-23;
/// Atomic mass constant m_u in kg (CODATA 2018).
pub const M_U_SI: f64 = 1.660_539_066_60e-27;
/// Nominal solar mass parameter (GM)☉ in m³ s⁻² (IAU 2015 Resolution B3).
pub const GM_SUN_SI: f64 = 1.327_124_4e20;
/// Astronomical unit in m, exact by definition (IAU 2012 Resolution B2).
pub const AU_SI: f64 = 149_597_870_700.0;
/// Julian year in s: 365.25 days of 86 400 s (IAU, as used for light years
/// and the Julian epoch).
pub const YEAR_SI: f64 = 365.25 * 86_400.0;
/// The solar mass unit in kg: (GM)☉ / G, from the two values above. This
/// is how astropy defines its solar mass constant (IAU 2015 with CODATA 2018).
pub const M_SUN_SI: f64 = GM_SUN_SI / G_SI;

/// A physical dimension as integer powers of length, mass, time and
/// temperature.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Dim {
    /// Power of length.
    pub length: i8,
    /// Power of mass.
    pub mass: i8,
    /// Power of time.
    pub time: i8,
    /// Power of temperature.
    pub temperature: i8,
}

impl Dim {
    /// A dimension from its four powers (length, mass, time, temperature).
    pub const fn new(length: i8, mass: i8, time: i8, temperature: i8) -> Self {
        Dim {
            length,
            mass,
            time,
            temperature,
        }
    }
    /// Dimensionless.
    pub const NONE: Dim = Dim::new(0, 0, 0, 0);
    /// Length.
    pub const LENGTH: Dim = Dim::new(1, 0, 0, 0);
    /// Velocity.
    pub const VELOCITY: Dim = Dim::new(1, 0, -1, 0);
    /// Velocity squared (also specific energy and potential).
    pub const VELOCITY_SQ: Dim = Dim::new(2, 0, -2, 0);
    /// Temperature.
    pub const TEMPERATURE: Dim = Dim::new(0, 0, 0, 1);
    /// Volume mass density; a disk that is vertically integrated uses
    /// [`Dim::SURFACE_DENSITY`] instead.
    pub const DENSITY: Dim = Dim::new(-3, 1, 0, 0);
    /// Surface mass density.
    pub const SURFACE_DENSITY: Dim = Dim::new(-2, 1, 0, 0);
    /// Angular velocity.
    pub const FREQUENCY: Dim = Dim::new(0, 0, -1, 0);

    /// The product of two dimensions.
    pub fn times(self, o: Dim) -> Dim {
        Dim::new(
            self.length + o.length,
            self.mass + o.mass,
            self.time + o.time,
            self.temperature + o.temperature,
        )
    }
}

/// The unit system a profile is written in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum UnitSystem {
    /// Dimensionless code units with G = 1. Temperatures are not available
    /// (there is no Boltzmann constant); give the sound speed instead.
    Code,
    /// SI: metre, kilogram, second, kelvin.
    Si,
    /// cgs: centimetre, gram, second, kelvin.
    Cgs,
    /// Astronomical: au, solar mass, Julian year, kelvin.
    Astro,
}

/// One base unit of a physical unit system: what it measures, its symbol,
/// and what it is worth in cgs and in SI units of the same dimension.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BaseUnit {
    /// `length`, `mass`, `time` or `temperature`.
    pub dimension: &'static str,
    /// The unit's symbol (`au`, `M_sun`, `yr`, `K`).
    pub symbol: &'static str,
    /// Its value in cm, g, s or K.
    pub cgs: f64,
    /// Its value in m, kg, s or K.
    pub si: f64,
}

/// The constants of one unit system.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Constants {
    /// Newtonian constant of gravitation.
    pub g: f64,
    /// Boltzmann constant (None in code units).
    pub k_b: Option<f64>,
    /// Atomic mass constant (None in code units).
    pub m_u: Option<f64>,
}

impl UnitSystem {
    /// Whether the system has physical constants (k_B, m_u), so that
    /// temperatures can be converted to sound speeds.
    pub fn is_physical(self) -> bool {
        self != UnitSystem::Code
    }

    /// The base units of length, mass, time and temperature, in that order;
    /// None in code units.
    pub fn base_units(self) -> Option<[BaseUnit; 4]> {
        let (l, m, t) = match self {
            UnitSystem::Code => return None,
            UnitSystem::Si => (
                ("length", "m", 100.0),
                ("mass", "kg", 1000.0),
                ("time", "s", 1.0),
            ),
            UnitSystem::Cgs => (
                ("length", "cm", 1.0),
                ("mass", "g", 1.0),
                ("time", "s", 1.0),
            ),
            UnitSystem::Astro => (
                ("length", "au", AU_SI * 100.0),
                ("mass", "M_sun", M_SUN_SI * 1000.0),
                ("time", "yr", YEAR_SI),
            ),
        };
        // cgs and SI differ by 100 in length and 1000 in mass.
        let unit =
            |(dimension, symbol, cgs): (&'static str, &'static str, f64), per_si: f64| BaseUnit {
                dimension,
                symbol,
                cgs,
                si: cgs / per_si,
            };
        Some([
            unit(l, 100.0),
            unit(m, 1000.0),
            unit(t, 1.0),
            unit(("temperature", "K", 1.0), 1.0),
        ])
    }

    /// The constants in this system.
    pub fn constants(self) -> Constants {
        // Conversion from SI: a quantity of dimension L^a M^b T^c is divided
        // by (unit_L/m)^a (unit_M/kg)^b (unit_T/s)^c.
        let (l, m, t) = match self {
            UnitSystem::Code => {
                return Constants {
                    g: 1.0,
                    k_b: None,
                    m_u: None,
                }
            }
            UnitSystem::Si => (1.0, 1.0, 1.0),
            UnitSystem::Cgs => (0.01, 0.001, 1.0),
            UnitSystem::Astro => (AU_SI, M_SUN_SI, YEAR_SI),
        };
        let conv = |si: f64, a: i32, b: i32, c: i32| si / (l.powi(a) * m.powi(b) * t.powi(c));
        Constants {
            g: conv(G_SI, 3, -1, -2),
            k_b: Some(conv(K_B_SI, 2, 1, -2)),
            m_u: Some(conv(M_U_SI, 0, 1, 0)),
        }
    }

    /// A dimension written as a unit string, e.g. `g cm^-3`; code units are
    /// written `code`, dimensionless quantities `1`.
    pub fn unit_string(self, dim: Dim) -> String {
        if dim == Dim::NONE {
            return "1".to_string();
        }
        let Some(base) = self.base_units() else {
            return "code".to_string();
        };
        let powers = [dim.mass, dim.length, dim.time, dim.temperature];
        let symbols = [
            base[1].symbol,
            base[0].symbol,
            base[2].symbol,
            base[3].symbol,
        ];
        let mut parts = Vec::new();
        for (p, s) in powers.iter().zip(symbols) {
            match p {
                0 => {}
                1 => parts.push(s.to_string()),
                _ => parts.push(format!("{s}^{p}")),
            }
        }
        parts.join(" ")
    }
}

impl Keyed for UnitSystem {
    const KEYS: &'static [(UnitSystem, &'static str)] = &[
        (UnitSystem::Code, "code"),
        (UnitSystem::Si, "si"),
        (UnitSystem::Cgs, "cgs"),
        (UnitSystem::Astro, "astro"),
    ];
}

impl fmt::Display for UnitSystem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Reference values typed from CODATA 2018 (NIST SP 961, 2019) and the
    // IAU resolutions named above; the Python test `tests/constants_check.py`
    // checks the same values against astropy.constants.
    #[test]
    fn cgs_constants_match_codata_2018() {
        let c = UnitSystem::Cgs.constants();
        assert!((c.g / 6.674_30e-8 - 1.0).abs() < 1e-15);
        assert!((c.k_b.unwrap() / 1.380_649e-16 - 1.0).abs() < 1e-15);
        assert!((c.m_u.unwrap() / 1.660_539_066_60e-24 - 1.0).abs() < 1e-15);
    }

    #[test]
    fn astro_g_is_close_to_four_pi_squared() {
        // Kepler's third law in au, M_sun, yr gives G ≈ 4π² (textbook; the
        // Julian year differs from the sidereal year by ~2e-5).
        let g = UnitSystem::Astro.constants().g;
        let four_pi2 = 4.0 * std::f64::consts::PI.powi(2);
        assert!((g / four_pi2 - 1.0).abs() < 1e-4, "{g}");
    }

    #[test]
    fn unit_strings() {
        assert_eq!(UnitSystem::Cgs.unit_string(Dim::DENSITY), "g cm^-3");
        assert_eq!(UnitSystem::Si.unit_string(Dim::VELOCITY), "m s^-1");
        assert_eq!(UnitSystem::Code.unit_string(Dim::VELOCITY), "code");
    }
}
