//! Every recipe in `scripts/` runs, and its own asserts hold.

use super::common::host;
use std::path::Path;

#[test]
fn every_recipe_runs() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("scripts");
    let mut count = 0;
    for entry in std::fs::read_dir(&dir).expect("scripts/ exists") {
        let path = entry.expect("entry").path();
        if path.extension().and_then(|e| e.to_str()) != Some("rhai") {
            continue;
        }
        let source = std::fs::read_to_string(&path).expect("readable");
        let h = host();
        if let Err(e) = h.eval(&source, &path.display().to_string()) {
            panic!("recipe {} failed:\n{e}", path.display());
        }
        count += 1;
    }
    assert!(count > 0, "no recipe found in scripts/");
}

#[test]
fn regulation_recipe_writes_a_bode_plot_and_the_margins() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("scripts/fernbank_regulation.rhai");
    let source = std::fs::read_to_string(&path).expect("readable");
    let h = host();
    let _ = h
        .eval(&source, &path.display().to_string())
        .unwrap_or_else(|e| panic!("{e}"));
    let texts = h.take_texts();
    let svg = texts
        .iter()
        .find(|t| t.name == "fernbank_regulation_bode" && t.extension == "svg")
        .expect("the recipe hands its Bode plot to output_text");
    assert!(svg.text.starts_with("<svg") && svg.text.trim_end().ends_with("</svg>"));
    assert!(svg.text.contains("phase margin"));
    assert!(svg.text.contains(gapwise::SAFETY_CAUTION));
    let tables = h.take_outputs();
    let margins = tables
        .iter()
        .find(|(n, _)| n == "fernbank_regulation_margins")
        .expect("margins table");
    assert_eq!(margins.1.len(), 8, "four corners at both CTR extremes");
    assert_eq!(h.take_failed_checks(), 0, "no regulation rule fails");
}
