//! Dimensions as exponents of the seven SI base quantities.

use serde::{Deserialize, Serialize};
use std::fmt;

/// Names of the base dimensions, in the order of [`Dimension::exponents`].
pub const BASE_SYMBOLS: [&str; 8] = ["m", "kg", "s", "A", "K", "mol", "cd", "rad"];

/// The dimension of a quantity: exponents of length, mass, time, electric current,
/// thermodynamic temperature, amount of substance and luminous intensity (SI order), and of
/// plane angle. SI counts the radian as dimensionless; gapwise keeps it as a dimension of its
/// own so that an angular frequency (rad/s) is never read as a frequency (Hz): ω = 2π·f is
/// written `angular_frequency(f)`, and `quantity("1 rad/s")` is not 1 Hz.
#[derive(Clone, Copy, PartialEq, Eq, Hash, Debug, Default, Serialize, Deserialize)]
pub struct Dimension {
    /// Exponents of m, kg, s, A, K, mol, cd, rad.
    pub exponents: [i8; 8],
}

macro_rules! dims {
    ($($(#[$doc:meta])* $name:ident = [$($e:expr),*];)*) => {
        $( $(#[$doc])* pub const $name: Dimension = Dimension { exponents: [$($e),*] }; )*
    };
}

impl Dimension {
    dims! {
        /// Dimensionless (a plain number).
        NONE = [0, 0, 0, 0, 0, 0, 0, 0];
        /// Length (m).
        LENGTH = [1, 0, 0, 0, 0, 0, 0, 0];
        /// Area (m²).
        AREA = [2, 0, 0, 0, 0, 0, 0, 0];
        /// Volume (m³).
        VOLUME = [3, 0, 0, 0, 0, 0, 0, 0];
        /// Area product, window area times core area (m⁴).
        AREA_PRODUCT = [4, 0, 0, 0, 0, 0, 0, 0];
        /// Mass (kg).
        MASS = [0, 1, 0, 0, 0, 0, 0, 0];
        /// Time (s).
        TIME = [0, 0, 1, 0, 0, 0, 0, 0];
        /// Frequency (Hz).
        FREQUENCY = [0, 0, -1, 0, 0, 0, 0, 0];
        /// Electric current (A).
        CURRENT = [0, 0, 0, 1, 0, 0, 0, 0];
        /// Temperature (K).
        TEMPERATURE = [0, 0, 0, 0, 1, 0, 0, 0];
        /// Electric potential (V).
        VOLTAGE = [2, 1, -3, -1, 0, 0, 0, 0];
        /// Power (W).
        POWER = [2, 1, -3, 0, 0, 0, 0, 0];
        /// Energy (J).
        ENERGY = [2, 1, -2, 0, 0, 0, 0, 0];
        /// Electric charge (C).
        CHARGE = [0, 0, 1, 1, 0, 0, 0, 0];
        /// Resistance (Ω).
        RESISTANCE = [2, 1, -3, -2, 0, 0, 0, 0];
        /// Conductance (S).
        CONDUCTANCE = [-2, -1, 3, 2, 0, 0, 0, 0];
        /// Capacitance (F).
        CAPACITANCE = [-2, -1, 4, 2, 0, 0, 0, 0];
        /// Inductance (H).
        INDUCTANCE = [2, 1, -2, -2, 0, 0, 0, 0];
        /// Magnetic flux (Wb).
        FLUX = [2, 1, -2, -1, 0, 0, 0, 0];
        /// Magnetic flux density (T).
        FLUX_DENSITY = [0, 1, -2, -1, 0, 0, 0, 0];
        /// Magnetic field strength (A/m).
        FIELD_STRENGTH = [-1, 0, 0, 1, 0, 0, 0, 0];
        /// Permeability (H/m).
        PERMEABILITY = [1, 1, -2, -2, 0, 0, 0, 0];
        /// Resistivity (Ω·m).
        RESISTIVITY = [3, 1, -3, -2, 0, 0, 0, 0];
        /// Current density (A/m²).
        CURRENT_DENSITY = [-2, 0, 0, 1, 0, 0, 0, 0];
        /// Power density by volume (W/m³).
        POWER_DENSITY = [-1, 1, -3, 0, 0, 0, 0, 0];
        /// Power density by area (W/m²).
        POWER_PER_AREA = [0, 1, -3, 0, 0, 0, 0, 0];
        /// Thermal resistance (K/W).
        THERMAL_RESISTANCE = [-2, -1, 3, 0, 1, 0, 0, 0];
        /// Slew rate (V/s).
        SLEW_RATE = [2, 1, -4, -1, 0, 0, 0, 0];
        /// Current slew rate (A/s).
        CURRENT_SLEW_RATE = [0, 0, -1, 1, 0, 0, 0, 0];
        /// Force (N).
        FORCE = [1, 1, -2, 0, 0, 0, 0, 0];
        /// Pressure (Pa).
        PRESSURE = [-1, 1, -2, 0, 0, 0, 0, 0];
        /// Velocity (m/s).
        VELOCITY = [1, 0, -1, 0, 0, 0, 0, 0];
        /// Amount of substance (mol).
        AMOUNT = [0, 0, 0, 0, 0, 1, 0, 0];
        /// Luminous intensity (cd).
        LUMINOUS_INTENSITY = [0, 0, 0, 0, 0, 0, 1, 0];
        /// Plane angle (rad).
        ANGLE = [0, 0, 0, 0, 0, 0, 0, 1];
        /// Angular frequency (rad/s).
        ANGULAR_FREQUENCY = [0, 0, -1, 0, 0, 0, 0, 1];
    }

    /// True for a plain number.
    pub fn is_dimensionless(self) -> bool {
        self.exponents == [0; 8]
    }

    /// The dimension raised to an integer power.
    #[must_use]
    pub fn powi(self, n: i32) -> Dimension {
        let mut e = self.exponents;
        for a in e.iter_mut() {
            *a = (i32::from(*a) * n).clamp(i32::from(i8::MIN), i32::from(i8::MAX)) as i8;
        }
        Dimension { exponents: e }
    }

    /// The dimension of a square root, if every exponent is even.
    pub fn sqrt(self) -> Option<Dimension> {
        if self.exponents.iter().any(|e| e % 2 != 0) {
            return None;
        }
        let mut e = self.exponents;
        for a in e.iter_mut() {
            *a /= 2;
        }
        Some(Dimension { exponents: e })
    }

    /// A short name of what this dimension measures ("voltage", "inductance", …), if it has one.
    pub fn name(self) -> Option<&'static str> {
        NAMES.iter().find(|(d, _)| *d == self).map(|(_, n)| *n)
    }

    /// The dimension written in base units, e.g. `m²·kg·s⁻³·A⁻¹`; empty when dimensionless.
    pub fn base_units(self) -> String {
        let mut parts = Vec::new();
        for (sym, e) in BASE_SYMBOLS.iter().zip(self.exponents) {
            match e {
                0 => {}
                1 => parts.push((*sym).to_string()),
                _ => parts.push(format!("{sym}{}", superscript(e))),
            }
        }
        parts.join("·")
    }

    /// The dimension written in derived SI units where one or two of them fit, e.g. `V/m`,
    /// `W/K`, `Ω²`, `m/s`; base units (`m²·kg·s⁻³·A⁻¹`) only when no such pair exists.
    /// Empty when dimensionless.
    ///
    /// The search tries one named unit raised to a power of ±1 … ±4, then a product of two
    /// named units with such powers, and keeps the writing with the fewest units, then the
    /// smallest sum of powers, then the units earliest in the list (`V` before `W` before
    /// the base units). Common practice, no published source.
    pub fn derived_units(self) -> String {
        if self.is_dimensionless() {
            return String::new();
        }
        derived_writing(self).unwrap_or_else(|| self.base_units())
    }
}

/// Named units a derived writing may use, most preferred first; `single_only` units (Hz)
/// appear only alone (V/s, not V·Hz).
const DERIVED_ATOMS: &[(&str, Dimension, bool)] = &[
    ("V", Dimension::VOLTAGE, false),
    ("W", Dimension::POWER, false),
    ("Ω", Dimension::RESISTANCE, false),
    ("F", Dimension::CAPACITANCE, false),
    ("H", Dimension::INDUCTANCE, false),
    ("T", Dimension::FLUX_DENSITY, false),
    ("Wb", Dimension::FLUX, false),
    ("J", Dimension::ENERGY, false),
    ("C", Dimension::CHARGE, false),
    ("S", Dimension::CONDUCTANCE, false),
    ("N", Dimension::FORCE, false),
    ("Pa", Dimension::PRESSURE, false),
    ("Hz", Dimension::FREQUENCY, true),
    ("A", Dimension::CURRENT, false),
    ("m", Dimension::LENGTH, false),
    ("kg", Dimension::MASS, false),
    ("s", Dimension::TIME, false),
    ("K", Dimension::TEMPERATURE, false),
    ("mol", Dimension::AMOUNT, false),
    ("cd", Dimension::LUMINOUS_INTENSITY, false),
];

/// Index in [`DERIVED_ATOMS`] from which the entries are SI base units.
const BASE_ATOMS_FROM: usize = 13;

const DERIVED_POWERS: [i32; 8] = [1, -1, 2, -2, 3, -3, 4, -4];

fn derived_writing(d: Dimension) -> Option<String> {
    for (sym, atom, _) in DERIVED_ATOMS {
        for p in DERIVED_POWERS {
            if atom.powi(p) == d {
                return Some(write_atoms(&[(sym, p)]));
            }
        }
    }
    // (named derived units used, sum of |powers|, index sum, writing): base units first,
    // so that `A/m²` wins over `T/H` and `m/s` over `W/N`
    let mut best: Option<(usize, i32, usize, String)> = None;
    let derived = |i: usize| usize::from(i < BASE_ATOMS_FROM);
    for (i, (sa, a, single_a)) in DERIVED_ATOMS.iter().enumerate() {
        if *single_a {
            continue;
        }
        for (j, (sb, b, single_b)) in DERIVED_ATOMS.iter().enumerate().skip(i + 1) {
            if *single_b {
                continue;
            }
            for pa in DERIVED_POWERS {
                for pb in DERIVED_POWERS {
                    if a.powi(pa) * b.powi(pb) != d {
                        continue;
                    }
                    let key = (derived(i) + derived(j), pa.abs() + pb.abs(), i + j);
                    if best.as_ref().is_none_or(|b| key < (b.0, b.1, b.2)) {
                        best = Some((key.0, key.1, key.2, write_atoms(&[(sa, pa), (sb, pb)])));
                    }
                }
            }
        }
    }
    best.map(|b| b.3)
}

/// `V/m`, `Ω²`, `A·s`, `m⁻¹`: positive powers joined by `·`, one negative after a `/`.
fn write_atoms(atoms: &[(&&str, i32)]) -> String {
    let power = |s: &str, p: i32| {
        if p == 1 {
            s.to_string()
        } else {
            format!("{s}{}", superscript(p as i8))
        }
    };
    let num: Vec<String> = atoms
        .iter()
        .filter(|a| a.1 > 0)
        .map(|a| power(a.0, a.1))
        .collect();
    let den: Vec<(&&str, i32)> = atoms.iter().filter(|a| a.1 < 0).copied().collect();
    match (num.is_empty(), den.len()) {
        (false, 0) => num.join("·"),
        (false, 1) => format!("{}/{}", num.join("·"), power(den[0].0, -den[0].1)),
        _ => atoms
            .iter()
            .map(|a| power(a.0, a.1))
            .collect::<Vec<_>>()
            .join("·"),
    }
}

impl std::ops::Mul for Dimension {
    type Output = Dimension;
    /// The dimension of a product: exponents add.
    fn mul(self, other: Dimension) -> Dimension {
        let mut e = self.exponents;
        for (a, b) in e.iter_mut().zip(other.exponents) {
            *a = a.saturating_add(b);
        }
        Dimension { exponents: e }
    }
}

impl std::ops::Div for Dimension {
    type Output = Dimension;
    /// The dimension of a quotient: exponents subtract.
    fn div(self, other: Dimension) -> Dimension {
        self * other.powi(-1)
    }
}

const NAMES: &[(Dimension, &str)] = &[
    (Dimension::NONE, "number"),
    (Dimension::LENGTH, "length"),
    (Dimension::AREA, "area"),
    (Dimension::VOLUME, "volume"),
    (Dimension::AREA_PRODUCT, "area product"),
    (Dimension::MASS, "mass"),
    (Dimension::TIME, "time"),
    (Dimension::FREQUENCY, "frequency"),
    (Dimension::CURRENT, "current"),
    (Dimension::TEMPERATURE, "temperature"),
    (Dimension::VOLTAGE, "voltage"),
    (Dimension::POWER, "power"),
    (Dimension::ENERGY, "energy"),
    (Dimension::CHARGE, "charge"),
    (Dimension::RESISTANCE, "resistance"),
    (Dimension::CONDUCTANCE, "conductance"),
    (Dimension::CAPACITANCE, "capacitance"),
    (Dimension::INDUCTANCE, "inductance"),
    (Dimension::FLUX, "magnetic flux"),
    (Dimension::FLUX_DENSITY, "flux density"),
    (Dimension::FIELD_STRENGTH, "magnetic field strength"),
    (Dimension::PERMEABILITY, "permeability"),
    (Dimension::RESISTIVITY, "resistivity"),
    (Dimension::CURRENT_DENSITY, "current density"),
    (Dimension::POWER_DENSITY, "power density"),
    (Dimension::POWER_PER_AREA, "power per area"),
    (Dimension::THERMAL_RESISTANCE, "thermal resistance"),
    (Dimension::SLEW_RATE, "voltage slew rate"),
    (Dimension::CURRENT_SLEW_RATE, "current slew rate"),
    (Dimension::FORCE, "force"),
    (Dimension::PRESSURE, "pressure"),
    (Dimension::VELOCITY, "velocity"),
    (Dimension::AMOUNT, "amount of substance"),
    (Dimension::LUMINOUS_INTENSITY, "luminous intensity"),
    (Dimension::ANGLE, "angle"),
    (Dimension::ANGULAR_FREQUENCY, "angular frequency"),
];

/// Writes an integer exponent in superscript digits (`-3` → `⁻³`).
pub fn superscript(n: i8) -> String {
    let digits = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if n < 0 {
        s.push('⁻');
    }
    for c in n.unsigned_abs().to_string().chars() {
        s.push(digits[c.to_digit(10).unwrap_or(0) as usize]);
    }
    s
}

impl fmt::Display for Dimension {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.name() {
            Some(n) => f.write_str(n),
            None => write!(f, "{}", self.derived_units()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derived_dimensions_compose() {
        // volt-seconds per ampere is an inductance (definition of the henry, SI brochure)
        assert_eq!(
            Dimension::VOLTAGE * Dimension::TIME / Dimension::CURRENT,
            Dimension::INDUCTANCE
        );
        // watt per ampere is a volt
        assert_eq!(Dimension::POWER / Dimension::CURRENT, Dimension::VOLTAGE);
        // 1/sqrt(LC) is a frequency
        let lc = Dimension::INDUCTANCE * Dimension::CAPACITANCE;
        assert_eq!(lc.sqrt().map(|d| d.powi(-1)), Some(Dimension::FREQUENCY));
        assert_eq!(Dimension::VOLTAGE.sqrt(), None);
    }

    #[test]
    fn base_units_text() {
        assert_eq!(Dimension::VOLTAGE.base_units(), "m²·kg·s⁻³·A⁻¹");
        assert_eq!(Dimension::NONE.base_units(), "");
    }

    #[test]
    fn derived_units_text_issue_10() {
        // unnamed dimensions are written in derived units, never in base units (issue 10)
        let d = |e: [i8; 7]| {
            let mut x = [0; 8];
            x[..7].copy_from_slice(&e);
            Dimension { exponents: x }.derived_units()
        };
        assert_eq!(d([1, 1, -3, -1, 0, 0, 0]), "V/m");
        assert_eq!(d([2, 1, -3, 0, -1, 0, 0]), "W/K");
        assert_eq!(d([4, 2, -6, -4, 0, 0, 0]), "Ω²");
        assert_eq!(d([1, 0, -1, 0, 0, 0, 0]), "m/s");
        assert_eq!(Dimension::VOLTAGE.derived_units(), "V");
        assert_eq!(Dimension::NONE.derived_units(), "");
        let field = Dimension::VOLTAGE / Dimension::LENGTH;
        assert_eq!(field.to_string(), "V/m");
        // a dimension no pair of units writes keeps the base units
        assert_eq!(d([1, 1, 1, 1, 1, 0, 0]), "m·kg·s·A·K");
    }
}
