//! The regulation as a Markdown report: summary, divider, bias cases, compensation, margins at
//! every corner and CTR extreme, and rules, with the safety caution.

use super::regulation::Regulation;
use crate::report::{Record, Table, SAFETY_CAUTION};
use std::fmt::Write;

fn record_table(s: &mut String, r: &dyn Record) {
    let _ = writeln!(s, "| quantity | value |\n|---|---|");
    for f in r.fields() {
        let _ = writeln!(s, "| {} | {} |", f.name, f.value);
    }
}

/// The regulation as a Markdown report with the safety caution; `title` heads it.
///
/// No calculation: the summary, the divider, the bias cases, the compensation, the margins
/// table and the rule results, each as a Markdown table, and [`crate::SAFETY_CAUTION`] under
/// the title.
pub fn regulation_report_markdown(regulation: &Regulation, title: &str) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {title}\n");
    let _ = writeln!(s, "> {SAFETY_CAUTION}\n");
    let _ = writeln!(s, "## Summary\n");
    record_table(&mut s, regulation);
    let _ = writeln!(s, "\n## Output divider\n");
    record_table(&mut s, &regulation.divider);
    let _ = writeln!(s, "\n## Shunt reference and optocoupler bias\n");
    record_table(&mut s, &regulation.bias);
    s.push('\n');
    s.push_str(&Table::to_markdown(&regulation.bias.table()));
    let _ = writeln!(s, "\n## Compensation\n");
    record_table(&mut s, &regulation.compensation);
    let _ = writeln!(s, "\n## Loop margins at every corner and CTR extreme\n");
    s.push_str(&Table::to_markdown(&regulation.margins_table()));
    let _ = writeln!(s, "\n## Regulation rules\n");
    s.push_str(&Table::to_markdown(&crate::rules::checks_table(
        &regulation.checks,
    )));
    let _ = writeln!(
        s,
        "\nSmall-signal model valid to half the switching frequency; measure the loop on the \
         bench with a loop analyser before release."
    );
    s
}
