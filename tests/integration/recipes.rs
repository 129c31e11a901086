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
