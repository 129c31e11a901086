//! `gapwise run` and `gapwise eval`: one script, non-interactively, then its outputs.

use crate::cli::{EvalArgs, Format, RunArgs};
use crate::output::{write_files_atomically, Progress, Provenance};
use crate::Failure;
use anyhow::{bail, Context};
use gapwise_core::report::{Table, WriteOptions};
use gapwise_core::script::{EngineLimits, OutputText, RecipeParam, ScriptHost};
use gapwise_core::units::parse_quantity;
use rhai::{Dynamic, Scope};
use std::collections::HashMap;
use std::io::{IsTerminal, Read, Write};
use std::path::Path;
use std::sync::Arc;

/// Reads a `--set name=value` argument. The value is a quantity if it parses as one with a
/// unit (`12 V`, `4.7 uF`), else true/false, else a number (whole numbers stay integers),
/// else text.
pub fn parse_set(arg: &str) -> anyhow::Result<(String, Dynamic)> {
    let Some((name, value)) = arg.split_once('=') else {
        bail!("--set `{arg}` must be name=value, e.g. --set output_voltage=\"12 V\"");
    };
    let name = name.trim();
    let mut chars = name.chars();
    let valid = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_');
    if !valid {
        bail!("--set name `{name}` is not a script name (letters, digits and _, not starting with a digit)");
    }
    let value = value.trim();
    let dynamic = match parse_quantity(value, None) {
        Ok(q) if !q.is_dimensionless() => Dynamic::from(q),
        Ok(q) => match value.parse::<i64>() {
            Ok(i) => Dynamic::from_int(i),
            Err(_) => Dynamic::from_float(q.value()),
        },
        Err(_) => match value {
            "true" => Dynamic::TRUE,
            "false" => Dynamic::FALSE,
            _ => Dynamic::from(value.to_string()),
        },
    };
    Ok((name.to_string(), dynamic))
}

/// `eval --set`: constants in the scope (an expression declares no parameters). A name
/// that is a unit constant is refused.
fn scope_with_sets(host: &ScriptHost, sets: &[String]) -> anyhow::Result<Scope<'static>> {
    let mut scope = Scope::new();
    for s in sets {
        let (name, value) = parse_set(s)?;
        if host.constant_names().contains(&name.as_str()) {
            bail!("--set {name}: `{name}` is a unit constant and cannot be redefined");
        }
        scope.push_constant_dynamic(name, value);
    }
    Ok(scope)
}

/// Reads `--set NAME=VALUE` for a recipe: every name must be a parameter the recipe
/// declares, and every value of that parameter's kind and dimension (else a usage error).
fn recipe_overrides(
    sets: &[String],
    params: &[RecipeParam],
    recipe: &str,
) -> anyhow::Result<HashMap<String, Dynamic>> {
    let mut out = HashMap::new();
    for s in sets {
        let Some((name, value)) = s.split_once('=') else {
            bail!("--set `{s}` must be name=value, e.g. --set output_voltage=\"12 V\"");
        };
        let name = name.trim();
        let Some(p) = params.iter().find(|p| p.name == name) else {
            let names: Vec<&str> = params.iter().map(|p| p.name.as_str()).collect();
            let hint = gapwise_core::script::suggest::did_you_mean(name, &names);
            if names.is_empty() {
                bail!("--set {name}: {recipe} declares no parameters (a recipe declares them with `param(\"name\", default, \"description\")`)");
            }
            bail!(
                "--set {name}: {recipe} has no parameter `{name}`{hint} (its parameters: {}; see `gapwise run {recipe} --help`)",
                names.join(", ")
            );
        };
        if out.contains_key(name) {
            bail!("--set {name} is given twice");
        }
        let v = p.parse_override(value).map_err(anyhow::Error::msg)?;
        out.insert(name.to_string(), v);
    }
    Ok(out)
}

/// The parameters of a recipe, as `gapwise run RECIPE --help` lists them.
pub fn params_help(recipe: &str, params: &[RecipeParam]) -> String {
    let mut s = format!("Parameters of {recipe} (give them with --set NAME=VALUE):\n");
    if params.is_empty() {
        s.push_str("  (none: the recipe declares no parameters with `param(...)`)\n");
        return s;
    }
    let w = params.iter().map(|p| p.name.len()).max().unwrap_or(0);
    for p in params {
        s.push_str(&format!(
            "  {:w$}  {} (default {})\n  {:w$}  {}\n",
            p.name,
            p.kind(),
            p.default_text(),
            "",
            p.description
        ));
    }
    s
}

/// Script `print` goes to stdout as it happens; a progress bar on stderr (only when it is
/// a terminal) is cleared before each printed line. Returns the bar, if any.
pub fn attach_print_and_progress(host: &ScriptHost) -> Option<Progress> {
    let progress = crate::output::progress_wanted().then(|| {
        let p = Progress::default();
        host.set_progress(Some(p.callback()));
        p
    });
    let bar = progress.clone();
    host.set_print(Some(Arc::new(move |line: &str| {
        if let Some(b) = &bar {
            b.clear_line();
        }
        let mut out = std::io::stdout().lock();
        let _ = writeln!(out, "{line}");
        let _ = out.flush();
    })));
    progress
}

fn read_source(file: &str) -> anyhow::Result<(String, String)> {
    if file == "-" {
        let mut s = String::new();
        std::io::stdin()
            .read_to_string(&mut s)
            .context("cannot read the recipe from stdin")?;
        Ok((s, "<stdin>".to_string()))
    } else {
        let s = std::fs::read_to_string(file).with_context(|| format!("cannot read {file}"))?;
        Ok((s, file.to_string()))
    }
}

/// `gapwise run FILE`: reads the recipe's parameters, applies `--set`, runs the recipe,
/// then writes its output tables and texts. When the recipe fails after handing over
/// outputs, they are still written, with `INCOMPLETE.txt` saying why, and the run exits 1.
pub fn run(args: &RunArgs, limits: EngineLimits) -> Result<(), Failure> {
    let Some(file) = args.file.as_deref() else {
        print_run_help();
        return Ok(());
    };
    let (source, source_name) = read_source(file)?;
    let host = ScriptHost::new(limits);
    let ast = host.compile(&source, &source_name)?;
    let params = host.recipe_params(&ast, &source, &source_name)?;
    if args.help {
        print_run_help();
        println!();
        print!("{}", params_help(&source_name, &params));
        return Ok(());
    }
    let overrides = recipe_overrides(&args.set, &params, &source_name)?;
    host.set_overrides(overrides);
    let progress = attach_print_and_progress(&host);
    let mut scope = Scope::new();
    let result = host.run(&ast, &mut scope, &source, &source_name);
    host.release_scope(scope);
    let result = result.map(|v| host.release_value(v));
    if let Some(p) = &progress {
        p.finish();
    }
    let warnings = host.take_warnings();
    for w in &warnings {
        eprintln!("warning: {w}");
    }
    let outputs = host.take_outputs();
    let texts = host.take_texts();
    let mut provenance = Provenance::new(&source_name, &source, &args.set);
    provenance.warnings = warnings;
    if let Err(e) = result {
        if args.out.is_some() && (!outputs.is_empty() || !texts.is_empty()) {
            let note = format!(
                "INCOMPLETE: {source_name} stopped with an error after handing over these outputs; they are what it produced before the error, not a finished run.\n\n{e}\n"
            );
            if let Err(w) = write_outputs(
                &outputs,
                &texts,
                args.out.as_deref(),
                args.format,
                &args.write.options(),
                &provenance,
                Some(&note),
            ) {
                eprintln!("error: {w:#}");
            }
        }
        return Err(e.into());
    }
    write_outputs(
        &outputs,
        &texts,
        args.out.as_deref(),
        args.format,
        &args.write.options(),
        &provenance,
        None,
    )?;
    if let Some(file) = &args.provenance {
        write_provenance_file(file, &provenance, &args.write.options())?;
    }
    let failed = host.take_failed_checks();
    let error_rows: usize = outputs.iter().map(|(_, t)| t.error_count()).sum();
    if args.strict && (failed > 0 || error_rows > 0) {
        return Err(Failure::Strict {
            failed_checks: failed,
            error_rows,
        });
    }
    Ok(())
}

fn print_run_help() {
    use clap::CommandFactory;
    let mut cmd = crate::cli::Cli::command();
    if let Some(run) = cmd.find_subcommand_mut("run") {
        let _ = run.print_help();
    }
}

/// Writes tables and texts into `out` (whole or not at all) with a `provenance.json`
/// beside them, or prints tables on stdout: aligned text by default, CSV or JSON with
/// `--format`. On stdout, JSON is one document holding every table and the provenance;
/// CSV is the bare table (tables after the first are preceded by a blank line and a
/// `# table: NAME` line). With `incomplete`, the folder also gets `INCOMPLETE.txt` saying
/// why; a finished run removes a marker an earlier one left.
#[allow(clippy::too_many_arguments)]
pub fn write_outputs(
    tables: &[(String, Table)],
    texts: &[OutputText],
    out: Option<&Path>,
    format: Option<Format>,
    options: &WriteOptions,
    provenance: &Provenance,
    incomplete: Option<&str>,
) -> anyhow::Result<()> {
    let table_error = |name: &str, e: gapwise_core::Error| anyhow::anyhow!("table {name}: {e}");
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    if let Some(note) = incomplete {
        files.push((INCOMPLETE_MARKER.to_string(), note.as_bytes().to_vec()));
    }
    match (out, format) {
        (None, None | Some(Format::Table)) | (Some(_), Some(Format::Table)) => {
            for (name, table) in tables {
                print_table(name, table);
            }
        }
        (None, Some(Format::Csv)) => {
            let mut stdout = std::io::stdout().lock();
            for (i, (name, table)) in tables.iter().enumerate() {
                let csv = table.to_csv(options).map_err(|e| table_error(name, e))?;
                if i > 0 {
                    let _ = writeln!(stdout, "\n# table: {name}");
                }
                let _ = stdout.write_all(csv.as_bytes());
            }
        }
        (None, Some(Format::Json)) => {
            // one document: {"format": "gapwise-tables", "version": 1, "provenance": {…},
            // "tables": [{"name": …, "table": <gapwise-table document>}]}
            let mut doc = String::from("{\n\"format\": \"gapwise-tables\",\n\"version\": 1,\n");
            doc.push_str("\"provenance\": ");
            doc.push_str(&provenance.to_json(options, &[]));
            doc.push_str(",\n\"tables\": [");
            for (i, (name, table)) in tables.iter().enumerate() {
                let json = table.to_json(options).map_err(|e| table_error(name, e))?;
                doc.push_str(if i == 0 { "\n" } else { ",\n" });
                doc.push_str(&format!(
                    "{{\"name\": {}, \"table\": {}}}",
                    serde_json::to_string(name)?,
                    json.trim_end()
                ));
            }
            doc.push_str("\n]\n}\n");
            let _ = std::io::stdout().lock().write_all(doc.as_bytes());
        }
        (Some(_), Some(Format::Json)) => {
            for (name, table) in tables {
                let json = table.to_json(options).map_err(|e| table_error(name, e))?;
                files.push((format!("{name}.json"), json.into_bytes()));
            }
        }
        (Some(_), None | Some(Format::Csv)) => {
            for (name, table) in tables {
                let csv = table.to_csv(options).map_err(|e| table_error(name, e))?;
                files.push((format!("{name}.csv"), csv.into_bytes()));
            }
        }
    }
    match out {
        Some(dir) => {
            for t in texts {
                files.push((
                    format!("{}.{}", t.name, t.extension),
                    t.text.clone().into_bytes(),
                ));
            }
            if incomplete.is_none() && !files.is_empty() {
                // a finished run replaces the marker a failed run left
                let _ = std::fs::remove_file(dir.join(INCOMPLETE_MARKER));
            }
            if !files.is_empty() {
                let sidecar = provenance.to_json(options, &files);
                files.push((
                    Provenance::FILE_NAME.to_string(),
                    (sidecar + "\n").into_bytes(),
                ));
                let written = write_files_atomically(dir, &files)?;
                // silent on success unless someone is watching
                if std::io::stderr().is_terminal() {
                    for path in written {
                        eprintln!("wrote {}", path.display());
                    }
                }
            }
        }
        None if !texts.is_empty() => {
            let names: Vec<String> = texts
                .iter()
                .map(|t| format!("{}.{}", t.name, t.extension))
                .collect();
            eprintln!("note: not written without --out DIR: {}", names.join(", "));
        }
        None => {}
    }
    Ok(())
}

/// Writes the provenance document alone to `file` (for tables printed on stdout).
fn write_provenance_file(
    file: &Path,
    provenance: &Provenance,
    options: &WriteOptions,
) -> anyhow::Result<()> {
    let name = file
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .ok_or_else(|| anyhow::anyhow!("--provenance needs a file name, got {}", file.display()))?;
    let dir = file
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let text = provenance.to_json(options, &[]) + "\n";
    write_files_atomically(dir, &[(name, text.into_bytes())])?;
    Ok(())
}

fn print_table(name: &str, table: &Table) {
    let mut out = std::io::stdout().lock();
    let _ = writeln!(out, "{name}:");
    let _ = writeln!(out, "{}", table.to_text().trim_end());
}

/// The file that marks an output folder whose recipe failed part-way.
pub const INCOMPLETE_MARKER: &str = "INCOMPLETE.txt";

/// `gapwise eval 'EXPR'`: evaluates and prints the result with units.
pub fn eval(args: &EvalArgs, limits: EngineLimits) -> Result<(), Failure> {
    let host = ScriptHost::new(limits);
    let mut scope = scope_with_sets(&host, &args.set)?;
    let progress = attach_print_and_progress(&host);
    let source = &args.expression;
    let result = host
        .compile_with_scope(&scope, source, "<eval>")
        .and_then(|ast| host.run(&ast, &mut scope, source, "<eval>"));
    if let Some(p) = &progress {
        p.finish();
    }
    for w in host.take_warnings() {
        eprintln!("warning: {w}");
    }
    host.release_scope(scope);
    let value = result?;
    let shown = crate::prompt::display_result(&host, &value);
    host.release_value(value);
    if let Some(text) = shown {
        println!("{text}");
    }
    for (name, table) in host.take_outputs() {
        print_table(&name, &table);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use gapwise_core::units::Quantity;

    #[test]
    fn set_values_take_the_most_specific_type() {
        let (n, v) = parse_set("output_voltage=12 V").unwrap();
        assert_eq!(n, "output_voltage");
        let q = v.read_lock::<Quantity>().map(|q| *q).unwrap();
        assert!((q.value() - 12.0).abs() < 1e-12);
        assert!(!q.is_dimensionless());
        assert_eq!(parse_set("strict=true").unwrap().1.as_bool(), Ok(true));
        assert_eq!(parse_set("count=3").unwrap().1.as_int(), Ok(3));
        assert_eq!(parse_set("ratio=0.25").unwrap().1.as_float(), Ok(0.25));
        let text = parse_set("series=E96").unwrap().1;
        assert_eq!(text.into_string().unwrap(), "E96");
    }

    #[test]
    fn bad_set_arguments_are_usage_errors() {
        assert!(parse_set("no_equals_sign").is_err());
        assert!(parse_set("1x=3").is_err());
        assert!(parse_set("=3").is_err());
    }
}
