//! The flyback power stage: from a specification to a complete, checked operating point at
//! every corner of line and load.
//!
//! [`flyback_design`] takes a [`FlybackSpec`] and returns a [`FlybackDesign`]: the primary
//! inductance, current limit, turns ratios, bulk capacitor, clamp, post filters, overload
//! power, bias estimate, an [`OperatingPoint`] per corner (currents on every winding, stresses,
//! a [`LossBudget`]) and the rule results of [`flyback_rule_book`].
//!
//! ```
//! use gapwise_core::flyback::{flyback_design, FlybackSpec, OutputWinding};
//! use gapwise_core::units::si;
//! let spec = FlybackSpec::universal(OutputWinding::new(si(12.0), si(1.25)));
//! let d = flyback_design(&spec).unwrap();
//! assert_eq!(d.corners.len(), 6);
//! assert!(d.efficiency > 0.5 && d.efficiency < 1.0);
//! ```

mod clamp;
mod design;
mod losses;
mod operating_point;
mod output;
mod report;
mod rules;
mod short_circuit;
mod spec;
mod thermal;
mod waveform;

pub use clamp::{clamp_dissipation, ClampDesign, CLAMP_CAPACITOR_RIPPLE};
pub use design::{
    flyback_design, BiasEstimate, DerivedDefault, FlybackDesign, OverloadPoint,
    CURRENT_LIMIT_HEADROOM, NO_LOAD_FRACTION, RECTIFIER_DROP_PER_EFOLD,
};
pub use losses::LossBudget;
pub use operating_point::{OperatingPoint, EFFICIENCY_TOLERANCE, MAX_EFFICIENCY_ITERATIONS};
pub use output::{post_filter, PostFilter, SecondaryPoint};
pub use report::design_report_markdown;
pub use rules::{flyback_rule_book, DRAIN_DERATING, RECTIFIER_DERATING};
pub use short_circuit::ShortCircuitPoint;
pub use spec::{
    BiasWinding, BulkChoice, ClampKind, EfficiencyModel, FlybackSpec, InputRange, Leakage,
    LightLoadControl, LossParameters, ModeTarget, OutputWinding, DEFAULT_CLAMP_OVERSHOOT_FRACTION,
    DEFAULT_VALLEY_FRACTION, HOUSE_MAX_JUNCTION_CELSIUS, MIN_CLAMP_OVERSHOOT_FRACTION,
};
pub use thermal::{JunctionTemperature, ThermalPath};
pub use waveform::{boundary_inductance, ConductionMode};
