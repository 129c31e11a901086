//! Magnetics: conductors and wire sizes, ferrite cores and materials, gap and inductance,
//! core loss (iGSE), windings (Dowell), temperature rise, and flyback transformer design
//! with a build sheet.

mod conductor;
mod core_loss;
mod cores;
mod from_flyback;
mod gap;
mod material;
mod thermal;
mod transformer;
mod winding;
mod wire;

pub use conductor::{
    copper_resistivity, skin_depth, COPPER_RESISTIVITY_20C, COPPER_TEMPERATURE_COEFFICIENT,
    VACUUM_PERMEABILITY,
};
pub use core_loss::{
    flyback_flux_segments, igse_coefficient, igse_loss_density, igse_loss_density_sampled,
    steinmetz_loss_density, FluxSegment,
};
pub use cores::{
    core_by_size, core_from_built_in_dimensions, core_shapes, Core, CoreFamily,
    PairedCoreDimensions, ToroidDimensions,
};
pub use from_flyback::{transformer_operating_point, TransformerOperatingPoint};
pub use gap::{
    air_gap_for_inductance, effective_gap_from_inductance, fringing_factor, inductance_for_air_gap,
    spacer_for_target_inductance, GapPlacement, GapResult,
};
pub use material::{ferrite_material, ferrite_materials, FerriteMaterial, SteinmetzBand};
pub use thermal::{insulation_class_limit, temperature_rise, temperature_rise_thermal_resistance};
pub use transformer::{
    build_sheet, core_selection, transformer_check, transformer_check_rules, transformer_checks,
    transformer_design, AdditionalOutput, AdditionalOutputResult, BiasWinding, CoreCandidate,
    CoreSelectionSpec, GivenMagnetising, GivenTransformer, TransformerCheck, TransformerDesign,
    TransformerSpec, WindingOrder, WindingSection,
};
pub use winding::{
    choose_wire, dowell_resistance_factor, layer_fit, overall_diameter,
    round_wire_penetration_ratio, winding_copper_loss, CopperLoss, LayerFit, WindingCurrent,
    WireChoice, WireInsulation, WireSystem,
};
pub use wire::{
    awg_area, awg_diameter, metric_wire_at_or_above, metric_wire_diameters, wire_dc_resistance,
    AWG_RANGE,
};
