//! Magnetics: conductors and wire sizes (this module grows with cores, gaps and windings).

mod conductor;
mod wire;

pub use conductor::{
    copper_resistivity, skin_depth, COPPER_RESISTIVITY_20C, COPPER_TEMPERATURE_COEFFICIENT,
    VACUUM_PERMEABILITY,
};
pub use wire::{
    awg_area, awg_diameter, metric_wire_at_or_above, metric_wire_diameters, wire_dc_resistance,
    AWG_RANGE,
};
