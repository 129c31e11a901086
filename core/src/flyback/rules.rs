//! The flyback's default design rules and their evaluation on a design.

use super::spec::{FlybackSpec, ModeTarget, HOUSE_MAX_JUNCTION_CELSIUS};
use crate::error::Result;
use crate::rules::{Comparison, Rule, RuleBook};
use crate::units::{Dimension, ElectricPotential, Quantity};

/// Fraction of the switch voltage rating the drain may reach (common practice, no published
/// source; the demo scenario's house rule is the same 85 %).
pub const DRAIN_DERATING: f64 = 0.85;
/// Fraction of the rectifier voltage rating the reverse voltage may reach (common practice,
/// no published source).
pub const RECTIFIER_DERATING: f64 = 0.8;

/// The default flyback rule book for a spec, with the spec's `rule_limits` applied.
///
/// | id | checks | default limit | reference |
/// |---|---|---|---|
/// | `duty_cycle_limit` | largest duty cycle of the line/load corners | at most `max_duty_cycle` | the controller's limit (spec) |
/// | `drain_voltage_derating` | largest drain peak of all corners, current limit included | at most 85 % of `switch_voltage_rating` | common practice, no published source |
/// | `rectifier_voltage_derating` | reverse voltage / rating, per output with a rating | at most 0.8 | common practice, no published source |
/// | `output_capacitor_ripple_current` | ripple current / rating, per output with a rating | at most 1 | capacitor rating (spec) |
/// | `bulk_capacitor_ripple_current` | bulk ripple current / rating, if a rating is given | at most 1 | capacitor rating (spec) |
/// | `mode_target` | L / L_boundary at low line, full load, if a mode target is given | DCM and boundary: at most 1; CCM: at least 1 | Erickson & Maksimović 3rd ed., ch. 5 |
/// | `bulk_valley_minimum` | bulk valley at low line, full load | at least the voltage at which the duty limit is reached | volt-second balance |
/// | `hold_up_time` | hold-up time from the low-line valley, if required | at least `hold_up_time` | spec |
/// | `switch_junction_temperature` | switch junction at its worst corner | at most `switch_max_junction_temperature` | series thermal resistance |
/// | `rectifier_junction_temperature` | each output rectifier's junction at its worst corner | at most `rectifier_max_junction_temperature` | series thermal resistance |
/// | `short_circuit_settles` | output shorted: shortest on-time over the balance on-time V_rs/(f·(V + V_rs)), worst line | at most 1 (above, the current climbs every cycle) | volt-second balance |
///
/// `bulk_valley_needed` is the design's own minimum for `bulk_valley_minimum`. A rule whose
/// input is not given (a rating, a mode target, a hold-up time) is listed in the design's
/// checks as not applicable, with the reason, never left out.
pub fn flyback_rule_book(
    spec: &FlybackSpec,
    bulk_valley_needed: ElectricPotential,
) -> Result<RuleBook> {
    let mut b = RuleBook::new();
    let n = Quantity::number;
    b.add(Rule::new(
        "duty_cycle_limit",
        "duty cycle at every line and load corner within the controller's maximum",
        "controller maximum duty cycle (spec)",
        Comparison::AtMost,
        n(spec.max_duty_cycle),
        0.03,
    )?);
    b.add(Rule::new(
        "drain_voltage_derating",
        "switch drain voltage with clamp overshoot at most 85 % of its rating",
        "common practice, no published source",
        Comparison::AtMost,
        Quantity::new(
            DRAIN_DERATING * spec.switch_voltage_rating.value,
            Dimension::VOLTAGE,
        ),
        0.03,
    )?);
    b.add(Rule::new(
        "rectifier_voltage_derating",
        "output rectifier reverse voltage at most 80 % of its rating",
        "common practice, no published source",
        Comparison::AtMost,
        n(RECTIFIER_DERATING),
        0.05,
    )?);
    b.add(Rule::new(
        "output_capacitor_ripple_current",
        "output capacitor ripple current within its rating",
        "capacitor ripple current rating (spec)",
        Comparison::AtMost,
        n(1.0),
        0.1,
    )?);
    b.add(Rule::new(
        "bulk_capacitor_ripple_current",
        "bulk capacitor ripple current within its rating",
        "capacitor ripple current rating (spec)",
        Comparison::AtMost,
        n(1.0),
        0.1,
    )?);
    let (cmp, desc, warn) = match spec.mode {
        Some(ModeTarget::Continuous { .. }) => (
            Comparison::AtLeast,
            "continuous conduction at low line, full load: L at least the boundary inductance",
            0.05,
        ),
        Some(ModeTarget::Boundary) => (
            Comparison::AtMost,
            "boundary conduction at low line, full load: L at most the boundary inductance",
            0.0,
        ),
        _ => (
            Comparison::AtMost,
            "discontinuous conduction at every corner: L below the boundary inductance at low line, full load",
            0.02,
        ),
    };
    b.add(Rule::new(
        "mode_target",
        desc,
        "Erickson & Maksimović, 3rd ed. (2020), ch. 5, DCM boundary",
        cmp,
        n(1.0),
        warn,
    )?);
    b.add(Rule::new(
        "bulk_valley_minimum",
        "bulk valley at low line, full load above the voltage at which the duty limit is reached",
        "volt-second balance on the primary inductance",
        Comparison::AtLeast,
        Quantity::from_typed(bulk_valley_needed),
        0.05,
    )?);
    if let Some(t) = spec.hold_up_time {
        b.add(Rule::new(
            "hold_up_time",
            "hold-up time from the low-line valley at full load",
            "spec",
            Comparison::AtLeast,
            Quantity::from_typed(t),
            0.05,
        )?);
    }
    b.add(Rule::new(
        "switch_junction_temperature",
        "switch junction temperature at its worst corner, T_a + P·(R_θjc + R_θca)",
        "series thermal resistance (Hart 2011, heat sinks); the limit is the spec's house limit",
        Comparison::AtMost,
        Quantity::from_typed(spec.switch_thermal.max_junction_temperature),
        0.05,
    )?
    .with_default(Quantity::celsius(HOUSE_MAX_JUNCTION_CELSIUS)));
    b.add(Rule::new(
        "rectifier_junction_temperature",
        "output rectifier junction temperature at its worst corner, T_a + P·(R_θjc + R_θca)",
        "series thermal resistance (Hart 2011, heat sinks); the limit is the spec's house limit",
        Comparison::AtMost,
        Quantity::from_typed(spec.rectifier_thermal.max_junction_temperature),
        0.05,
    )?
    .with_default(Quantity::celsius(HOUSE_MAX_JUNCTION_CELSIUS)));
    b.add(Rule::new(
        "short_circuit_settles",
        "with the output shorted the shortest on-time lets the current settle at the limit",
        "volt-second balance of the magnetising inductance (Erickson & Maksimović 3rd ed., ch. 2)",
        Comparison::AtMost,
        n(1.0),
        0.1,
    )?);
    for (id, limit) in &spec.rule_limits {
        b.set_limit(id, *limit)
            .map_err(|e| e.context(&format!("`rule_limits.{id}`")))?;
    }
    let duty = b.get("duty_cycle_limit")?.limit.value();
    if duty >= 1.0 {
        return Err(crate::Error::out_of_range(format!(
            "`rule_limits.duty_cycle_limit` must be below 1 (a duty cycle), got {}",
            crate::units::format_number(duty)
        )));
    }
    Ok(b)
}
