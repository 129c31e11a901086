//! A design report as Markdown: summary, corner table, loss budget, overload, derived defaults,
//! no load, short circuit, junction temperatures and rules, with the safety caution.

use super::design::FlybackDesign;
use crate::report::{Record, Table, SAFETY_CAUTION};
use std::fmt::Write;

/// The design as a Markdown report with the safety caution; `title` heads it.
///
/// No calculation: the summary fields, the corner table, the loss budget at low line and full
/// load, the overload table, the derived defaults, the no-load points, the shorted output, the
/// junction temperatures and the rule results of the design, each as a Markdown table, and
/// [`crate::SAFETY_CAUTION`] under the title (the results touch mains isolation and are design
/// aids only).
pub fn design_report_markdown(design: &FlybackDesign, title: &str) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {title}\n");
    let _ = writeln!(s, "> {SAFETY_CAUTION}\n");
    let _ = writeln!(s, "## Summary\n");
    let _ = writeln!(s, "| quantity | value |\n|---|---|");
    for f in design.fields() {
        let _ = writeln!(s, "| {} | {} |", f.name, f.value);
    }
    let _ = writeln!(s, "\n## Corners\n");
    s.push_str(&Table::to_markdown(&design.corner_table()));
    if let Some(c) = design.corners.first() {
        let _ = writeln!(s, "\n## Loss budget at {}\n", c.corner.replace('_', " "));
        s.push_str(&Table::to_markdown(&c.losses.table()));
    }
    let _ = writeln!(s, "\n## Output power at the current limit\n");
    s.push_str(&Table::to_markdown(&design.overload_table()));
    if !design.defaults.is_empty() {
        let _ = writeln!(s, "\n## Values derived from the specification\n");
        s.push_str(&Table::to_markdown(&design.defaults_table()));
    }
    if !design.no_load.is_empty() {
        let _ = writeln!(s, "\n## No load\n");
        let mut t = Table::new();
        for c in &design.no_load {
            t.push_row(c.fields());
        }
        s.push_str(&Table::to_markdown(&t));
    }
    if !design.short_circuit.is_empty() {
        let _ = writeln!(s, "\n## Output shorted\n");
        s.push_str(&Table::to_markdown(&design.short_circuit_table()));
    }
    if !design.junctions.is_empty() {
        let _ = writeln!(s, "\n## Junction temperatures\n");
        s.push_str(&Table::to_markdown(&design.junction_table()));
    }
    let _ = writeln!(s, "\n## Design rules\n");
    s.push_str(&Table::to_markdown(&crate::rules::checks_table(
        &design.checks,
    )));
    let _ = writeln!(
        s,
        "\nThe bias winding voltage is an estimate from rectifier drops only; leakage spikes \
         raise it at heavy load. Transformer losses are an estimate until the transformer is designed."
    );
    s
}
