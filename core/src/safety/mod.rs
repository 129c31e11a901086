//! Mains isolation: rated impulse voltage, clearance, creepage, altitude, reinforced rules,
//! grooves, solid and thin-sheet insulation, electric strength test voltages, safety capacitors,
//! touch current and capacitor discharge, from IEC 60664-1:2020 and IEC 62368-1:2018
//! (edition 3).
//!
//! Every table lives in [`tables`] with its standard, edition, table number and provenance;
//! lookups refuse values outside a table's range. Every result names the rule and the table
//! row that set it. The values were typed from memory (`value recalled from memory`): check
//! them against the current edition. Results are design aids: see [`crate::SAFETY_CAUTION`].
//!
//! ```
//! use gapwise_core::safety::*;
//! use gapwise_core::units::si;
//! let c = creepage_distance(&CreepageSpec {
//!     working_voltage_rms: si(250.0),
//!     pollution_degree: PollutionDegree::Two,
//!     material_group: MaterialGroup::IIIb,
//!     grade: InsulationGrade::Reinforced,
//!     printed_board: false,
//!     minimum_clearance: None,
//!     round_interpolated: false,
//! }).unwrap();
//! assert!((c.creepage.value - 5.0e-3).abs() < 1e-12);
//! ```

mod barrier;
mod capacitors;
mod classes;
mod clearance;
mod creepage;
mod from_flyback;
mod high_frequency;
mod impulse;
mod report;
pub mod tables;
mod transformer;
mod working_voltage;

pub use barrier::{barrier_requirements, BarrierRequirement, BarrierSpec};
pub use capacitors::{
    largest_y_capacitance, safety_capacitor_class, x_discharge_resistor, y_capacitor_touch_current,
    DischargeResistor, DischargeSpec, SafetyCapacitorClass, YCapacitanceLimit,
};
pub use classes::{
    Barrier, FieldCase, InsulationGrade, MaterialGroup, OvervoltageCategory, PollutionDegree,
};
pub use clearance::{
    clearance_distance, clearance_for_working_voltage, reinforced_withstand_voltage, Clearance,
    ClearanceSpec, WorkingClearanceSpec,
};
pub use creepage::{creepage_distance, minimum_groove_width, Creepage, CreepageSpec, GrooveWidth};
pub use from_flyback::{
    flyback_design_working_voltage, flyback_waveform_working_voltage, primary_swing_peak,
    BarrierVoltageEstimates, WorkingVoltageMethod,
};
pub use high_frequency::{high_frequency_clearance, high_frequency_creepage, HighFrequencySpec};
pub use impulse::{altitude_correction, rated_impulse_voltage, AltitudeCorrection, RatedImpulse};
pub use report::{
    barrier_checks, isolation_report, isolation_table, ProvidedInsulation, ISOLATION_WARN_MARGIN,
};
pub use tables::HIGH_FREQUENCY_LIMIT_HZ;
pub use transformer::{transformer_insulation, TransformerInsulation, WindingConstruction};
pub use working_voltage::{flyback_working_voltage, BarrierWorkingVoltage, FlybackBarrierSpec};
