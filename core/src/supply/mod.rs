//! The whole supply from one specification: [`supply_design`] runs the power stage, the
//! transformer (made consistent with the power stage), regulation, the EMI input filter and
//! the primary–secondary barrier, and collects every check. Each part stays callable on its
//! own; the specification ([`SupplySpec`]) is one serde structure whose keys, defaults and
//! help come from one definition ([`SUPPLY_SECTIONS`]).

mod design;
mod report;
mod spec;

pub use design::{
    consistent_power_stage, supply_design, ConsistencyStep, ConsistentStage, SupplyCheck,
    SupplyDesign, SupplySummary, LEAKAGE_TOLERANCE, LOSS_TOLERANCE, MAX_CONSISTENCY_ITERATIONS,
};
pub use report::{
    html_escape, supply_report_html, supply_report_markdown, supply_report_sections, Block,
    Section, REPORT_SECTIONS,
};
pub use spec::{
    check_keys, read_key, EmiFilterSection, IsolationSection, KeyDefault, KeyKind,
    PowerStageSection, RegulationSection, RuleLimits, SpecField, SpecKey, SupplySpec,
    TransformerSection, SUPPLY_SECTIONS,
};
