//! Regulation of the flyback: the output divider on a programmable shunt reference (with trim
//! and tolerance stack), the shunt-reference and optocoupler bias over the CTR range, the
//! small-signal peak-current-mode model (CCM and DCM, Ridley's sampling double pole), type-2
//! compensation with the optocoupler's fast lane, loop margins found numerically at every
//! corner and both CTR extremes, Bode data and plot, line sensing and the bias-winding Zener's
//! output over-voltage trip.
//!
//! Parts are described by parameters, never by part: a [`ShuntReference`], an
//! [`Optocoupler`], a controller's [`FeedbackInput`] and [`LineSenseInput`]. Each part is
//! callable on its own; [`flyback_regulation`] puts them together on a
//! [`crate::flyback::FlybackDesign`] and checks [`regulation_rule_book`].
//!
//! ```
//! use gapwise_core::feedback::{divider_output_voltage, ShuntReference};
//! use gapwise_core::units::si;
//! // 2.5 V·(1 + 38.3 kΩ/10 kΩ) + 2 µA·38.3 kΩ = 12.075 V + 76.6 mV = 12.1516 V
//! let v = divider_output_voltage(si(38.3e3), si(10e3), None, &ShuntReference::generic_2v5()).unwrap();
//! assert!((v.value - 12.1516).abs() < 1e-9);
//! ```
//!
//! Results are design aids; measure the loop on the bench.

mod bias;
mod bode;
mod compensation;
mod divider;
mod line_sense;
mod margins;
mod overvoltage;
mod plant;
mod regulation;
mod report;

pub use bias::{
    optocoupler_bias, BiasPoint, BiasSpec, ControllerFeedback, FeedbackInput, Optocoupler,
    OptocouplerBias,
};
pub use bode::{bode_points, bode_svg, bode_table, BodePoint};
pub use compensation::{
    compensation_type2, loop_gain, margins_of, CompensationTarget, Type2Design, Type2Network,
    MIN_PHASE_BOOST_DEG, MIN_POLE_CAPACITANCE_F,
};
pub use divider::{
    divider_output_range, divider_output_voltage, output_divider, DividerRange, OutputDivider,
    OutputDividerSpec, ShuntReference, Trim, TrimPosition, MAX_TRIM_RATIO,
};
pub use line_sense::{
    line_sense_resistors, LineSense, LineSenseInput, LineSenseSpec, LineThreshold,
};
pub use margins::{loop_margins, LoopMargins, MAX_POINTS, MIN_POINTS};
pub use num_complex::Complex64;
pub use overvoltage::{bias_zener_trip, BiasZenerSpec, BiasZenerTrip};
pub use plant::LoopPlant;
pub use regulation::{
    flyback_regulation, loop_plant_from_flyback, regulation_rule_book, LoopCase, OvervoltageZener,
    Regulation, RegulationSpec, DEFAULT_CROSSOVER_RHP_FRACTION,
    DEFAULT_CROSSOVER_SWITCHING_FRACTION, DEFAULT_POINTS, LOOP_CORNERS,
};
pub use report::regulation_report_markdown;
