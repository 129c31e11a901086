//! Passive parts: preferred-number series (IEC 60063), resistor dividers, reactance and
//! LC resonance.

mod divider;
pub(crate) mod e_series;
mod reactance;

pub use divider::{resistor_divider, Divider, DividerSpec};
pub use e_series::{
    nearest_preferred, preferred_at_or_above, preferred_at_or_below, preferred_values_between,
    ESeries,
};
pub use reactance::{
    capacitance_for_resonance, capacitive_reactance, inductance_for_resonance, inductive_reactance,
    lc_characteristic_impedance, lc_resonant_frequency,
};
