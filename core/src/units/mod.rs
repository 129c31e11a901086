//! Units: `uom` quantities for the native API, a runtime quantity for scripts, and the one
//! parser and formatter that every printed or read value goes through.
//!
//! ```
//! use gapwise_core::units::{parse_quantity, Quantity, Dimension};
//! let c = parse_quantity("4.7 µF", None).unwrap();
//! assert_eq!(c.dimension(), Dimension::CAPACITANCE);
//! assert_eq!(c.to_unit_string("nF").unwrap(), "4700 nF");
//! ```

mod catalog;
mod decibel;
mod dimension;
mod format;
mod parse;
mod quantity;
mod typed;
pub mod validate;

pub use catalog::{NamedUnit, Prefix, COLUMN_UNITS, NAMED_UNITS, SCRIPT_CONSTANTS};
pub use decibel::{DbReference, Decibel};
pub use dimension::Dimension;
pub use format::{
    choose_unit, column_unit, format_number, format_quantity, round_significant, si_unit_symbol,
    unit_symbol, SIGNIFICANT_DIGITS,
};
pub use parse::{parse_quantity, parse_unit, UnitExpr};
pub use quantity::{Quantity, CELSIUS_OFFSET};
pub use typed::{si, TypedQuantity};

/// The `uom` quantity types with `f64` storage used at every public boundary.
pub use uom::si::f64::{
    Area, Capacitance, ElectricCharge, ElectricCurrent, ElectricCurrentDensity, ElectricPotential,
    ElectricalResistance, ElectricalResistivity, Energy, Frequency, HeatFluxDensity, Inductance,
    Length, MagneticFieldStrength, MagneticFlux, MagneticFluxDensity, MagneticPermeability, Power,
    Ratio, TemperatureInterval, ThermalResistance, ThermodynamicTemperature, Time, Volume,
    VolumetricPowerDensity,
};

/// The `uom` SI system, for its unit modules (`si::electric_potential::volt`, …).
pub use uom::si as uom_si;
