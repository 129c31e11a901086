//! The supply's design report: the same sections written as Markdown and as one
//! self-contained HTML file (inline SVG, no external resources), each with the safety caution.

use super::design::SupplyDesign;
use crate::emi::spectrum_svg;
use crate::error::Result;
use crate::feedback::{bode_points, bode_svg};
use crate::magnetics::build_sheet;
use crate::report::{Field, Record, Table, SAFETY_CAUTION};
use crate::units::format_number;
use std::fmt::Write;

/// One piece of a report section.
#[derive(Clone, Debug)]
pub enum Block {
    /// A paragraph of plain text.
    Text(String),
    /// Named values (a record's fields).
    Fields(Vec<Field>),
    /// A table.
    Table(Table),
    /// Preformatted text (the build sheet).
    Pre(String),
    /// An SVG picture: file stem for the Markdown report, the SVG itself.
    Svg(String, String),
}

/// A report section: an id (HTML anchor and Markdown heading), a title and its blocks.
#[derive(Clone, Debug)]
pub struct Section {
    /// Anchor id, snake_case.
    pub id: &'static str,
    /// Heading.
    pub title: &'static str,
    /// Content.
    pub blocks: Vec<Block>,
}

/// The ids of the report's sections, in order (every report has each of them).
pub const REPORT_SECTIONS: &[&str] = &[
    "specification",
    "summary",
    "power_stage",
    "transformer",
    "consistency",
    "regulation",
    "emi_filter",
    "isolation",
    "checks",
];

fn fields_table(fields: &[Field]) -> Table {
    let mut t = Table::new();
    for f in fields {
        t.push_row(vec![
            Field::new("name", f.name.clone()),
            Field::new("value", f.value.to_string()),
        ]);
    }
    t
}

/// The report's sections, with no calculation of their own: the specification as given
/// (each key given or defaulted), the summary, each part's values, the consistency loop, the
/// Bode plot of the worst loop case and the conducted spectrum, the isolation requirement and
/// every check with its worst corner.
pub fn supply_report_sections(s: &SupplyDesign) -> Result<Vec<Section>> {
    let mut spec = Table::new();
    let (mut given_n, mut default_n, mut unset_n) = (0, 0, 0);
    for (key, value, given) in s.spec.listing() {
        // an optional key left out has no value ("—"): the part derives or skips it
        let source = match (given, value == "—") {
            (true, _) => {
                given_n += 1;
                "given"
            }
            (false, false) => {
                default_n += 1;
                "default"
            }
            (false, true) => {
                unset_n += 1;
                "not set"
            }
        };
        spec.push_row(vec![
            Field::new("key", key),
            Field::new("value", value),
            Field::new("source", source),
        ]);
    }
    let worst = s.regulation.worst_case();
    let pts = bode_points(
        &worst.plant,
        &s.regulation.compensation.network,
        worst.ctr,
        crate::feedback::RegulationSpec::default().points,
    )?;
    let bode = bode_svg(
        &pts,
        &worst.margins,
        &format!(
            "Loop at {} ({}, CTR {})",
            worst.corner,
            worst.ctr_case,
            format_number(worst.ctr)
        ),
    );
    let d = &s.power_stage;
    Ok(vec![
        Section {
            id: "specification",
            title: "Specification",
            blocks: vec![
                Block::Text(format!(
                    "{given_n} keys given, {default_n} took their documented defaults, {unset_n} optional keys not set (`gapwise help supply_design`)."
                )),
                Block::Table(spec),
            ],
        },
        Section {
            id: "summary",
            title: "Summary",
            blocks: vec![
                Block::Text(format!(
                    "Worst verdict: {}; {} of {} checks failed.",
                    s.worst_status(),
                    s.failed_checks(),
                    s.checks.len()
                )),
                Block::Fields(s.summary().fields()),
            ],
        },
        Section {
            id: "power_stage",
            title: "Power stage",
            blocks: vec![
                Block::Fields(d.fields()),
                Block::Text("Corners of line and load, and the current limit:".into()),
                Block::Table(d.corner_table()),
                Block::Text("Values the specification left open:".into()),
                Block::Table(d.defaults_table()),
            ],
        },
        Section {
            id: "transformer",
            title: "Transformer",
            blocks: vec![
                Block::Text(format!(
                    "Operating point from the power stage at {}.{}",
                    s.transformer_corner,
                    if s.given_turns.is_some() {
                        " The turns were kept once the consistency loop repeated them; the gap is ground to the power stage's inductance."
                    } else {
                        ""
                    }
                )),
                Block::Fields(s.transformer.fields()),
                Block::Pre(build_sheet(&s.transformer_spec, &s.transformer)),
            ],
        },
        Section {
            id: "consistency",
            title: "Power stage and transformer consistency",
            blocks: vec![
                Block::Text(format!(
                    "The transformer's computed copper + core loss and leakage replace the power stage's estimates until they agree within {} of the output power and {} relative.",
                    format_number(super::LOSS_TOLERANCE),
                    format_number(super::LEAKAGE_TOLERANCE)
                )),
                Block::Table(s.consistency_table()),
            ],
        },
        Section {
            id: "regulation",
            title: "Regulation and loop",
            blocks: vec![
                Block::Fields(s.regulation.fields()),
                Block::Table(s.regulation.margins_table()),
                Block::Svg("bode".into(), bode),
            ],
        },
        Section {
            id: "emi_filter",
            title: "EMI input filter",
            blocks: vec![
                Block::Text(format!("Designed at {}, the corner that needs more differential-mode inductance.", s.emi_corner)),
                Block::Fields(s.emi_filter.fields()),
                Block::Svg("emi_spectrum".into(), spectrum_svg(&s.emi_filter)),
            ],
        },
        Section {
            id: "isolation",
            title: "Primary–secondary isolation",
            blocks: vec![
                Block::Fields(s.barrier_voltage.fields()),
                Block::Fields(s.barrier.fields()),
            ],
        },
        Section {
            id: "checks",
            title: "Checks",
            blocks: vec![Block::Table(s.check_table())],
        },
    ])
}

fn markdown_table(t: &Table) -> String {
    let cols = t.column_names().to_vec();
    let mut s = String::new();
    let _ = writeln!(s, "| {} |", cols.join(" | "));
    let _ = writeln!(s, "|{}", "---|".repeat(cols.len()));
    for r in 0..t.len() {
        let cells: Vec<String> = cols
            .iter()
            .map(|c| {
                t.get(r, c)
                    .map(|v| v.to_string().replace('|', "\\|"))
                    .unwrap_or_default()
            })
            .collect();
        let _ = writeln!(s, "| {} |", cells.join(" | "));
    }
    s
}

/// The report as Markdown, with the safety caution under the title. Pictures are linked as
/// `STEM_NAME.svg` (the caller writes them beside the report with those names).
pub fn supply_report_markdown(s: &SupplyDesign, stem: &str) -> Result<String> {
    let mut out = String::new();
    let _ = writeln!(out, "# {}\n", s.spec.name);
    let _ = writeln!(out, "> {SAFETY_CAUTION}\n");
    for sec in supply_report_sections(s)? {
        let _ = writeln!(out, "## {}\n", sec.title);
        for b in &sec.blocks {
            match b {
                Block::Text(t) => {
                    let _ = writeln!(out, "{t}\n");
                }
                Block::Fields(f) => {
                    let _ = writeln!(out, "{}", markdown_table(&fields_table(f)));
                }
                Block::Table(t) => {
                    let _ = writeln!(out, "{}", markdown_table(t));
                }
                Block::Pre(t) => {
                    let _ = writeln!(out, "```text\n{}\n```\n", t.trim_end());
                }
                Block::Svg(name, _) => {
                    let _ = writeln!(out, "![{name}]({stem}_{name}.svg)\n");
                }
            }
        }
    }
    let _ = writeln!(out, "---\n\n> {SAFETY_CAUTION}");
    Ok(out)
}

/// Escapes text for HTML.
pub fn html_escape(t: &str) -> String {
    let mut s = String::with_capacity(t.len());
    for c in t.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&#39;"),
            _ => s.push(c),
        }
    }
    s
}

fn html_table(t: &Table) -> String {
    let cols = t.column_names().to_vec();
    let mut s = String::from("<table>\n<thead><tr>");
    for c in &cols {
        let _ = write!(s, "<th>{}</th>", html_escape(c));
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    for r in 0..t.len() {
        s.push_str("<tr>");
        for c in &cols {
            let v = t.get(r, c).map(|v| v.to_string()).unwrap_or_default();
            let class = match v.as_str() {
                "fail" => " class=\"fail\"",
                "warn" => " class=\"warn\"",
                _ => "",
            };
            let _ = write!(s, "<td{class}>{}</td>", html_escape(&v));
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table>\n");
    s
}

/// The SVG with anything before its root element (an XML declaration, a comment) removed,
/// so that it can sit inside HTML.
fn inline_svg(svg: &str) -> &str {
    svg.find("<svg").map_or(svg, |i| &svg[i..])
}

/// The report as one self-contained HTML file: inline style, inline SVG, no scripts and no
/// external resources; the safety caution at the top and the bottom.
pub fn supply_report_html(s: &SupplyDesign) -> Result<String> {
    let title = html_escape(&s.spec.name);
    let caution = html_escape(SAFETY_CAUTION);
    let mut out = String::new();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{title}</title>\n\
<style>\nbody{{font-family:sans-serif;margin:2em;max-width:70em}}\ntable{{border-collapse:collapse;margin:0.5em 0 1.5em 0;font-size:0.85em}}\n\
td,th{{border:1px solid #bbb;padding:0.2em 0.5em;text-align:left}}\nth{{background:#eee}}\ntd.fail{{background:#f4c7c3}}\ntd.warn{{background:#fce8b2}}\n\
.caution{{border:2px solid #a00;padding:0.5em 1em;background:#fff4f4}}\npre{{background:#f6f6f6;padding:0.5em;overflow-x:auto}}\n\
.table-wrap{{overflow-x:auto}}\n</style>\n</head>\n<body>\n<h1>{title}</h1>\n<p class=\"caution\">{caution}</p>\n<nav><ul>\n"
    );
    let sections = supply_report_sections(s)?;
    for sec in &sections {
        let _ = writeln!(
            out,
            "<li><a href=\"#{}\">{}</a></li>",
            sec.id,
            html_escape(sec.title)
        );
    }
    out.push_str("</ul></nav>\n");
    for sec in &sections {
        let _ = writeln!(
            out,
            "<section id=\"{}\">\n<h2>{}</h2>",
            sec.id,
            html_escape(sec.title)
        );
        for b in &sec.blocks {
            match b {
                Block::Text(t) => {
                    let _ = writeln!(out, "<p>{}</p>", html_escape(t));
                }
                Block::Fields(f) => {
                    let _ = write!(
                        out,
                        "<div class=\"table-wrap\">{}</div>",
                        html_table(&fields_table(f))
                    );
                }
                Block::Table(t) => {
                    let _ = write!(out, "<div class=\"table-wrap\">{}</div>", html_table(t));
                }
                Block::Pre(t) => {
                    let _ = writeln!(out, "<pre>{}</pre>", html_escape(t.trim_end()));
                }
                Block::Svg(_, svg) => {
                    let _ = writeln!(out, "<figure>{}</figure>", inline_svg(svg).trim_end());
                }
            }
        }
        out.push_str("</section>\n");
    }
    let _ = write!(
        out,
        "<footer><p class=\"caution\">{caution}</p></footer>\n</body>\n</html>\n"
    );
    Ok(out)
}
