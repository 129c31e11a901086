//! `gapwise design SPEC`: the whole supply from a TOML or JSON specification, printed, and
//! with `--out` written as reports, pictures and the checks CSV through the atomic writer.

use crate::cli::DesignArgs;
use crate::output::Provenance;
use crate::Failure;
use anyhow::{anyhow, Context};
use gapwise_core::report::Record;
use gapwise_core::script::OutputText;
use gapwise_core::supply::{supply_design, supply_report_html, supply_report_markdown, SupplySpec};
use gapwise_core::SAFETY_CAUTION;
use std::io::Write;

/// Reads the specification by its extension: `.toml` or `.json`.
fn read_spec(path: &std::path::Path, text: &str) -> Result<SupplySpec, Failure> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let value: serde_json::Value = match ext.as_deref() {
        Some("toml") => {
            toml::from_str(text).map_err(|e| Failure::Design(anyhow!("{}: {e}", path.display())))?
        }
        Some("json") => serde_json::from_str(text)
            .map_err(|e| Failure::Design(anyhow!("{}: {e}", path.display())))?,
        _ => {
            return Err(Failure::Usage(anyhow!(
                "{}: a specification must be a .toml or .json file",
                path.display()
            )))
        }
    };
    SupplySpec::from_json(value).map_err(|e| Failure::Design(anyhow!("{}: {e}", path.display())))
}

/// Runs `gapwise design`.
pub fn design(args: &DesignArgs) -> Result<(), Failure> {
    let text = std::fs::read_to_string(&args.file)
        .with_context(|| format!("cannot read {}", args.file.display()))
        .map_err(Failure::Usage)?;
    let spec = read_spec(&args.file, &text)?;
    let s = supply_design(&spec).map_err(|e| Failure::Design(anyhow!("{e}")))?;

    let mut stdout = std::io::stdout().lock();
    let _ = writeln!(stdout, "{}\n\n{SAFETY_CAUTION}\n", spec.name);
    let _ = writeln!(stdout, "summary:");
    for f in s.summary().fields() {
        let _ = writeln!(stdout, "  {} = {}", f.name, f.value);
    }
    let _ = writeln!(stdout, "\nchecks:");
    let _ = writeln!(stdout, "{}", s.check_table().to_text().trim_end());
    drop(stdout);

    if let Some(dir) = &args.out {
        let stem = args
            .file
            .file_stem()
            .and_then(|s| s.to_str())
            .unwrap_or("supply")
            .to_string();
        let md = supply_report_markdown(&s, &stem).map_err(|e| Failure::Design(anyhow!("{e}")))?;
        let html = supply_report_html(&s).map_err(|e| Failure::Design(anyhow!("{e}")))?;
        let mut texts = vec![
            OutputText {
                name: stem.clone(),
                extension: "md".into(),
                text: md,
            },
            OutputText {
                name: stem.clone(),
                extension: "html".into(),
                text: html,
            },
        ];
        for sec in gapwise_core::supply::supply_report_sections(&s)
            .map_err(|e| Failure::Design(anyhow!("{e}")))?
        {
            for b in sec.blocks {
                if let gapwise_core::supply::Block::Svg(name, svg) = b {
                    texts.push(OutputText {
                        name: format!("{stem}_{name}"),
                        extension: "svg".into(),
                        text: svg,
                    });
                }
            }
        }
        let tables = vec![(format!("{stem}_checks"), s.check_table())];
        let provenance = Provenance::new(&args.file.display().to_string(), &text, &[]);
        crate::runner::write_outputs(
            &tables,
            &texts,
            Some(dir),
            None,
            &args.write.options(),
            &provenance,
            None,
        )
        .map_err(Failure::Usage)?;
    }
    let failed = s.failed_checks();
    if args.strict && failed > 0 {
        return Err(Failure::Strict {
            failed_checks: failed,
            error_rows: 0,
        });
    }
    Ok(())
}
