//! The isolation report: every barrier's required against provided distances, checked through
//! the rules mechanism, as a table and as text carrying the safety caution.

use super::barrier::BarrierRequirement;
use crate::error::Result;
use crate::report::{Field, Table, SAFETY_CAUTION};
use crate::rules::{CheckResult, Comparison, Rule};
use crate::units::validate::non_negative;
use crate::units::{Length, Quantity};

/// What the layout and the transformer actually provide across one barrier (each optional).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ProvidedInsulation {
    /// Shortest clearance measured across the barrier.
    pub clearance: Option<Length>,
    /// Shortest creepage measured in the product (bobbin, housing, wiring).
    pub creepage: Option<Length>,
    /// Shortest creepage measured on the printed board.
    pub creepage_printed_board: Option<Length>,
    /// Thickness of solid insulation (ignored for thin sheet).
    pub distance_through_insulation: Option<Length>,
    /// Thin-sheet layers used.
    pub thin_sheet_layers: Option<i64>,
    /// True when each layer alone passes the grade's electric strength test (then fewer layers
    /// are needed); false when only any two together are known to pass it.
    pub thin_sheet_each_layer_tested: bool,
}

/// Warning margin of the checks on measured distances (clearance, creepage): a provided
/// distance within 5 % of the requirement passes with a warning, leaving room for layout and
/// measurement tolerance (common practice, no published source). Construction minimums
/// (distance through insulation, thin-sheet layers) pass without a warning when met exactly.
pub const ISOLATION_WARN_MARGIN: f64 = 0.05;

fn check(
    out: &mut Vec<CheckResult>,
    r: &BarrierRequirement,
    what: &str,
    required: Quantity,
    provided: Option<Quantity>,
    reference: &str,
    warn_margin: f64,
) -> Result<()> {
    if let Some(p) = provided {
        let rule = Rule::new(
            &format!("{}_{what}", r.barrier.as_str()),
            &format!(
                "{} {} {}",
                r.barrier.as_str(),
                r.grade,
                what.replace('_', " ")
            ),
            reference,
            Comparison::AtLeast,
            required,
            warn_margin,
        )?;
        out.push(rule.check(p)?);
    }
    Ok(())
}

/// Checks what a barrier provides against what it requires: one check per provided value,
/// id `<barrier>_<quantity>`, comparison at least, the governing rule as the reference.
/// Values not provided are not checked (and appear as blank in [`isolation_table`]).
pub fn barrier_checks(
    requirement: &BarrierRequirement,
    provided: &ProvidedInsulation,
) -> Result<Vec<CheckResult>> {
    let len = |name: &str, l: Option<Length>| -> Result<Option<Quantity>> {
        l.map(|l| non_negative(name, l).map(Quantity::from_typed))
            .transpose()
    };
    let mut out = Vec::new();
    let r = requirement;
    check(
        &mut out,
        r,
        "clearance",
        Quantity::from_typed(r.clearance),
        len("provided_clearance", provided.clearance)?,
        &r.clearance_rule,
        ISOLATION_WARN_MARGIN,
    )?;
    check(
        &mut out,
        r,
        "creepage",
        Quantity::from_typed(r.creepage),
        len("provided_creepage", provided.creepage)?,
        &r.creepage_rule,
        ISOLATION_WARN_MARGIN,
    )?;
    check(
        &mut out,
        r,
        "creepage_printed_board",
        Quantity::from_typed(r.creepage_printed_board),
        len(
            "provided_creepage_printed_board",
            provided.creepage_printed_board,
        )?,
        &r.creepage_printed_board_rule,
        ISOLATION_WARN_MARGIN,
    )?;
    check(
        &mut out,
        r,
        "distance_through_insulation",
        Quantity::from_typed(r.distance_through_insulation),
        len(
            "provided_distance_through_insulation",
            provided.distance_through_insulation,
        )?,
        &r.solid_insulation_rule,
        0.0,
    )?;
    if let Some(n) = provided.thin_sheet_layers {
        if n < 0 {
            return Err(crate::Error::invalid(format!(
                "`provided_thin_sheet_layers` must be zero or more, got {n}"
            )));
        }
        let needed = if provided.thin_sheet_each_layer_tested {
            r.thin_sheet_layers_each_passing
        } else {
            r.thin_sheet_layers_any_two_passing
        };
        check(
            &mut out,
            r,
            "thin_sheet_layers",
            Quantity::number(needed as f64),
            Some(Quantity::number(n as f64)),
            &r.solid_insulation_rule,
            0.0,
        )?;
    }
    Ok(out)
}

/// One row per barrier: grade, required and provided distances, the test voltage and the
/// worst status of its checks.
pub fn isolation_table(rows: &[(BarrierRequirement, ProvidedInsulation)]) -> Result<Table> {
    let mut t = Table::new();
    for (r, p) in rows {
        let checks = barrier_checks(r, p)?;
        let status = crate::rules::worst_status(&checks);
        let opt = |l: Option<Length>| match l {
            Some(l) => Field::quantity("", l).value,
            None => crate::report::Value::Text("-".into()),
        };
        t.push_row(vec![
            Field::new("barrier", r.barrier.as_str()),
            Field::new("grade", r.grade.as_str()),
            Field::quantity("clearance_required", r.clearance),
            Field::new("clearance_provided", opt(p.clearance)),
            Field::quantity("creepage_required", r.creepage),
            Field::new("creepage_provided", opt(p.creepage)),
            Field::quantity("creepage_printed_board_required", r.creepage_printed_board),
            Field::new(
                "creepage_printed_board_provided",
                opt(p.creepage_printed_board),
            ),
            Field::quantity("test_voltage_rms", r.test_voltage_rms),
            Field::new(
                "status",
                if checks.is_empty() {
                    "not checked".to_string()
                } else {
                    status.to_string()
                },
            ),
        ]);
    }
    Ok(t)
}

/// A text report: the safety caution, the barrier table, each barrier's governing rules, and
/// what the requirements do not cover.
pub fn isolation_report(rows: &[(BarrierRequirement, ProvidedInsulation)]) -> Result<String> {
    let mut s = format!("{SAFETY_CAUTION}\n\nIsolation barriers\n\n");
    s.push_str(&isolation_table(rows)?.to_text());
    for (r, _) in rows {
        s.push_str(&format!(
            "\n{} ({}):\n  impulse: {}\n  clearance: {}\n  clearance, each procedure: {}\n  creepage: {}\n  creepage on the printed board: {}\n  solid insulation: {}\n  test voltage: {}\n  not covered: {}\n",
            r.barrier.as_str(),
            r.grade,
            r.impulse_rule,
            r.clearance_rule,
            r.clearance_components_rule,
            r.creepage_rule,
            r.creepage_printed_board_rule,
            r.solid_insulation_rule,
            r.test_voltage_rule,
            r.not_covered
        ));
    }
    Ok(s)
}
