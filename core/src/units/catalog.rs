//! The unit symbols gapwise reads and writes: SI prefixes, named units and display choices.

use super::dimension::Dimension as D;
use super::dimension::Dimension;

/// An SI prefix: its symbol and its factor.
#[derive(Clone, Copy, Debug)]
pub struct Prefix {
    /// Symbol as written (`k`, `m`, `µ`, …).
    pub symbol: &'static str,
    /// Factor (1e3 for `k`).
    pub factor: f64,
}

/// Prefixes accepted when reading units; `u`, `µ` (U+00B5) and `μ` (U+03BC) all mean micro.
pub const READ_PREFIXES: &[Prefix] = &[
    Prefix {
        symbol: "P",
        factor: 1e15,
    },
    Prefix {
        symbol: "T",
        factor: 1e12,
    },
    Prefix {
        symbol: "G",
        factor: 1e9,
    },
    Prefix {
        symbol: "M",
        factor: 1e6,
    },
    Prefix {
        symbol: "k",
        factor: 1e3,
    },
    Prefix {
        symbol: "c",
        factor: 1e-2,
    },
    Prefix {
        symbol: "m",
        factor: 1e-3,
    },
    Prefix {
        symbol: "u",
        factor: 1e-6,
    },
    Prefix {
        symbol: "\u{00B5}",
        factor: 1e-6,
    },
    Prefix {
        symbol: "\u{03BC}",
        factor: 1e-6,
    },
    Prefix {
        symbol: "n",
        factor: 1e-9,
    },
    Prefix {
        symbol: "p",
        factor: 1e-12,
    },
    Prefix {
        symbol: "f",
        factor: 1e-15,
    },
];

/// Prefixes used when writing, by power of a thousand (engineering notation).
pub const WRITE_PREFIXES: &[Prefix] = &[
    Prefix {
        symbol: "f",
        factor: 1e-15,
    },
    Prefix {
        symbol: "p",
        factor: 1e-12,
    },
    Prefix {
        symbol: "n",
        factor: 1e-9,
    },
    Prefix {
        symbol: "µ",
        factor: 1e-6,
    },
    Prefix {
        symbol: "m",
        factor: 1e-3,
    },
    Prefix {
        symbol: "",
        factor: 1.0,
    },
    Prefix {
        symbol: "k",
        factor: 1e3,
    },
    Prefix {
        symbol: "M",
        factor: 1e6,
    },
    Prefix {
        symbol: "G",
        factor: 1e9,
    },
    Prefix {
        symbol: "T",
        factor: 1e12,
    },
];

/// A named unit that can be read, possibly with a prefix.
#[derive(Clone, Copy, Debug)]
pub struct NamedUnit {
    /// Symbol as written.
    pub symbol: &'static str,
    /// Dimension.
    pub dimension: Dimension,
    /// Value of one of this unit in coherent SI.
    pub scale: f64,
    /// Whether an SI prefix may stand before it.
    pub prefixable: bool,
}

const fn unit(
    symbol: &'static str,
    dimension: Dimension,
    scale: f64,
    prefixable: bool,
) -> NamedUnit {
    NamedUnit {
        symbol,
        dimension,
        scale,
        prefixable,
    }
}

/// Every unit symbol the parser knows. `°C` is handled separately (it has an offset).
pub const NAMED_UNITS: &[NamedUnit] = &[
    unit("m", D::LENGTH, 1.0, true),
    unit("g", D::MASS, 1e-3, true),
    unit("s", D::TIME, 1.0, true),
    unit("A", D::CURRENT, 1.0, true),
    unit("K", D::TEMPERATURE, 1.0, true),
    unit("mol", D::AMOUNT, 1.0, true),
    unit("cd", D::LUMINOUS_INTENSITY, 1.0, false),
    unit("V", D::VOLTAGE, 1.0, true),
    unit("W", D::POWER, 1.0, true),
    unit("J", D::ENERGY, 1.0, true),
    unit("C", D::CHARGE, 1.0, true),
    unit("F", D::CAPACITANCE, 1.0, true),
    unit("H", D::INDUCTANCE, 1.0, true),
    unit("Ω", D::RESISTANCE, 1.0, true),
    unit("\u{2126}", D::RESISTANCE, 1.0, true),
    unit("ohm", D::RESISTANCE, 1.0, true),
    unit("Ohm", D::RESISTANCE, 1.0, true),
    unit("S", D::CONDUCTANCE, 1.0, true),
    unit("Hz", D::FREQUENCY, 1.0, true),
    unit("T", D::FLUX_DENSITY, 1.0, true),
    unit("Wb", D::FLUX, 1.0, true),
    unit("N", D::FORCE, 1.0, true),
    unit("Pa", D::PRESSURE, 1.0, true),
    unit("min", D::TIME, 60.0, false),
    unit("h", D::TIME, 3600.0, false),
    unit("%", D::NONE, 0.01, false),
    unit("ppm", D::NONE, 1e-6, false),
    unit("rad", D::ANGLE, 1.0, false),
    unit("deg", D::ANGLE, std::f64::consts::PI / 180.0, false),
    unit("°", D::ANGLE, std::f64::consts::PI / 180.0, false),
];

/// How a dimension is written: candidate (symbol, scale) pairs, largest first. The formatter
/// takes the largest scale that leaves the value at or above one.
#[derive(Clone, Copy, Debug)]
pub struct DisplayUnit {
    /// The dimension this entry writes.
    pub dimension: Dimension,
    /// Base symbol; SI prefixes are put before it when `prefixed` is true.
    pub symbol: &'static str,
    /// Whether engineering prefixes apply (value kept in 1 … 999.9 of the prefixed unit).
    pub prefixed: bool,
    /// Fixed choices (symbol, scale, smallest magnitude written in it) when `prefixed` is
    /// false, largest scale first: a value is written in the first choice whose smallest
    /// magnitude it reaches.
    pub choices: &'static [(&'static str, f64, f64)],
}

const fn prefixed(dimension: Dimension, symbol: &'static str) -> DisplayUnit {
    DisplayUnit {
        dimension,
        symbol,
        prefixed: true,
        choices: &[],
    }
}

const fn fixed(dimension: Dimension, choices: &'static [(&'static str, f64, f64)]) -> DisplayUnit {
    DisplayUnit {
        dimension,
        symbol: "",
        prefixed: false,
        choices,
    }
}

/// The preferred way to write each known dimension.
pub const DISPLAY_UNITS: &[DisplayUnit] = &[
    prefixed(D::VOLTAGE, "V"),
    prefixed(D::CURRENT, "A"),
    prefixed(D::POWER, "W"),
    prefixed(D::RESISTANCE, "Ω"),
    prefixed(D::CONDUCTANCE, "S"),
    prefixed(D::INDUCTANCE, "H"),
    prefixed(D::CAPACITANCE, "F"),
    prefixed(D::FREQUENCY, "Hz"),
    prefixed(D::FLUX_DENSITY, "T"),
    prefixed(D::FLUX, "Wb"),
    prefixed(D::ENERGY, "J"),
    prefixed(D::CHARGE, "C"),
    prefixed(D::TIME, "s"),
    // lengths in the trade's units: millimetres from 10 µm up to a metre (clearances, wire
    // diameters, air gaps, tape), metres above (wire lengths, altitude)
    fixed(
        D::LENGTH,
        &[("m", 1.0, 1.0), ("mm", 1e-3, 1e-5), ("µm", 1e-6, 0.0)],
    ),
    prefixed(D::TEMPERATURE, "K"),
    prefixed(D::FORCE, "N"),
    prefixed(D::PRESSURE, "Pa"),
    prefixed(D::SLEW_RATE, "V/s"),
    prefixed(D::CURRENT_SLEW_RATE, "A/s"),
    prefixed(D::FIELD_STRENGTH, "A/m"),
    prefixed(D::POWER_DENSITY, "W/m³"),
    prefixed(D::THERMAL_RESISTANCE, "K/W"),
    prefixed(D::PERMEABILITY, "H/m"),
    prefixed(D::RESISTIVITY, "Ω·m"),
    prefixed(D::MASS, "kg"),
    fixed(
        D::AREA,
        &[
            ("m²", 1.0, 1.0),
            ("cm²", 1e-4, 1e-4),
            ("mm²", 1e-6, 1e-6),
            ("µm²", 1e-12, 1e-12),
        ],
    ),
    fixed(
        D::VOLUME,
        &[("m³", 1.0, 1.0), ("cm³", 1e-6, 1e-6), ("mm³", 1e-9, 1e-9)],
    ),
    fixed(
        D::AREA_PRODUCT,
        &[("m⁴", 1.0, 1.0), ("cm⁴", 1e-8, 1e-8), ("mm⁴", 1e-12, 1e-12)],
    ),
    fixed(D::CURRENT_DENSITY, &[("A/mm²", 1e6, 1e6)]),
    fixed(D::ANGLE, &[("rad", 1.0, 0.0)]),
    prefixed(D::ANGULAR_FREQUENCY, "rad/s"),
    fixed(
        D::POWER_PER_AREA,
        &[("W/cm²", 1e4, 1e4), ("mW/cm²", 10.0, 10.0)],
    ),
];

/// The display entry for a dimension, if it has one.
pub fn display_unit(dimension: Dimension) -> Option<&'static DisplayUnit> {
    DISPLAY_UNITS.iter().find(|u| u.dimension == dimension)
}

/// Unit constants offered to scripts: name (ASCII, `u` for micro) and the text the parser reads.
pub const SCRIPT_CONSTANTS: &[(&str, &str)] = &[
    ("V", "V"),
    ("mV", "mV"),
    ("uV", "uV"),
    ("kV", "kV"),
    ("A", "A"),
    ("mA", "mA"),
    ("uA", "uA"),
    ("nA", "nA"),
    ("kA", "kA"),
    ("W", "W"),
    ("mW", "mW"),
    ("uW", "uW"),
    ("kW", "kW"),
    ("Hz", "Hz"),
    ("kHz", "kHz"),
    ("MHz", "MHz"),
    ("GHz", "GHz"),
    ("H", "H"),
    ("mH", "mH"),
    ("uH", "uH"),
    ("nH", "nH"),
    ("F", "F"),
    ("mF", "mF"),
    ("uF", "uF"),
    ("nF", "nF"),
    ("pF", "pF"),
    ("ohm", "ohm"),
    ("mohm", "mohm"),
    ("kohm", "kohm"),
    ("Mohm", "Mohm"),
    ("S", "S"),
    ("mS", "mS"),
    ("uS", "uS"),
    ("T", "T"),
    ("mT", "mT"),
    ("uT", "uT"),
    ("Wb", "Wb"),
    ("mWb", "mWb"),
    ("uWb", "uWb"),
    ("J", "J"),
    ("mJ", "mJ"),
    ("uJ", "uJ"),
    ("nJ", "nJ"),
    ("rad", "rad"),
    ("deg", "deg"),
    ("C", "C"),
    ("mC", "mC"),
    ("uC", "uC"),
    ("nC", "nC"),
    ("s", "s"),
    ("ms", "ms"),
    ("us", "us"),
    ("ns", "ns"),
    ("ps", "ps"),
    ("m", "m"),
    ("cm", "cm"),
    ("mm", "mm"),
    ("um", "um"),
    ("nm", "nm"),
    ("km", "km"),
    ("m2", "m^2"),
    ("cm2", "cm^2"),
    ("mm2", "mm^2"),
    ("m3", "m^3"),
    ("cm3", "cm^3"),
    ("mm3", "mm^3"),
    ("cm4", "cm^4"),
    ("mm4", "mm^4"),
    ("K", "K"),
    ("mK", "mK"),
    ("g", "g"),
    ("kg", "kg"),
    ("N", "N"),
    ("Pa", "Pa"),
    ("kPa", "kPa"),
    ("minute", "min"),
    ("hour", "h"),
    ("percent", "%"),
    ("ppm", "ppm"),
];

/// The unit each dimension is written in as a table column (CSV, JSON, aligned text):
/// (dimension, symbol, scale), where `value_in_si / scale` is the number written. The unit
/// depends only on the dimension, never on the values, so a column has the same unit in
/// every run. The choices are the units a flyback designer reads these values in (common
/// practice, no published source). Absolute temperatures are written in °C; a dimension not
/// listed here is written in coherent SI with its derived symbol (`V/m`, `W/K`).
pub const COLUMN_UNITS: &[(Dimension, &str, f64)] = &[
    (D::VOLTAGE, "V", 1.0),
    (D::CURRENT, "A", 1.0),
    (D::POWER, "W", 1.0),
    (D::RESISTANCE, "Ω", 1.0),
    (D::CONDUCTANCE, "S", 1.0),
    (D::INDUCTANCE, "µH", 1e-6),
    (D::CAPACITANCE, "µF", 1e-6),
    (D::FREQUENCY, "kHz", 1e3),
    (D::FLUX_DENSITY, "mT", 1e-3),
    (D::FLUX, "µWb", 1e-6),
    (D::ENERGY, "µJ", 1e-6),
    (D::CHARGE, "µC", 1e-6),
    (D::TIME, "µs", 1e-6),
    (D::LENGTH, "mm", 1e-3),
    (D::AREA, "mm²", 1e-6),
    (D::VOLUME, "mm³", 1e-9),
    (D::AREA_PRODUCT, "mm⁴", 1e-12),
    (D::MASS, "g", 1e-3),
    (D::TEMPERATURE, "K", 1.0),
    (D::FORCE, "N", 1.0),
    (D::PRESSURE, "kPa", 1e3),
    (D::SLEW_RATE, "V/µs", 1e6),
    (D::CURRENT_SLEW_RATE, "A/µs", 1e6),
    (D::FIELD_STRENGTH, "A/m", 1.0),
    (D::POWER_DENSITY, "kW/m³", 1e3),
    (D::THERMAL_RESISTANCE, "K/W", 1.0),
    (D::PERMEABILITY, "µH/m", 1e-6),
    (D::RESISTIVITY, "Ω·m", 1.0),
    (D::CURRENT_DENSITY, "A/mm²", 1e6),
    (D::POWER_PER_AREA, "mW/cm²", 10.0),
    (D::VELOCITY, "m/s", 1.0),
];
