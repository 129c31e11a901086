//! `gapwise help NAME`, `gapwise functions` and `gapwise reference [--write FILE]`.

use crate::output::write_files_atomically;
use crate::Failure;
use anyhow::{bail, Context};
use gapwise_core::script::docs::{listing_text, reference_markdown};
use gapwise_core::script::suggest::did_you_mean;
use gapwise_core::script::{EngineLimits, ScriptHost};
use std::path::Path;

/// The line that opens the generated function reference in a Markdown file.
pub const REFERENCE_START: &str = "<!-- function-reference:start -->";
/// The line that closes it.
pub const REFERENCE_END: &str = "<!-- function-reference:end -->";

/// Help text for a function or unit constant, or an error with a did-you-mean.
pub fn help_text(host: &ScriptHost, name: &str) -> Result<String, String> {
    if let Some(doc) = host.doc(name) {
        return Ok(doc.to_text());
    }
    if host.constant_names().contains(&name) {
        let value = host
            .eval(name, "<help>")
            .map(|v| host.display(&v))
            .unwrap_or_default();
        return Ok(format!(
            "{name}  (unit constant)\n  equals {value}; multiply a number by it: `2.5 * {name}`\n"
        ));
    }
    let mut names: Vec<&str> = host.docs().iter().map(|d| d.name).collect();
    names.extend(host.constant_names());
    Err(format!(
        "no function or constant named `{name}`{}",
        did_you_mean(name, &names)
    ))
}

/// `gapwise help NAME`.
pub fn help(name: &str, limits: EngineLimits) -> Result<(), Failure> {
    let host = ScriptHost::new(limits);
    match help_text(&host, name) {
        Ok(text) => {
            print!("{text}");
            Ok(())
        }
        Err(message) => Err(Failure::Usage(anyhow::anyhow!(
            "{message} (see `gapwise functions`)"
        ))),
    }
}

/// `gapwise functions`.
pub fn functions(limits: EngineLimits) -> Result<(), Failure> {
    let host = ScriptHost::new(limits);
    print!("{}", listing_text(host.docs()));
    Ok(())
}

/// `gapwise reference [--write FILE]`.
pub fn reference(write: Option<&Path>, limits: EngineLimits) -> Result<(), Failure> {
    let host = ScriptHost::new(limits);
    let markdown = reference_markdown(host.docs());
    match write {
        None => {
            print!("{markdown}");
            Ok(())
        }
        Some(path) => {
            let old = std::fs::read_to_string(path)
                .with_context(|| format!("cannot read {}", path.display()))?;
            let new = replace_between_markers(&old, &markdown)
                .with_context(|| format!("cannot update {}", path.display()))?;
            if new != old {
                let dir = match path.parent() {
                    Some(p) if !p.as_os_str().is_empty() => p,
                    _ => Path::new("."),
                };
                let file_name = path
                    .file_name()
                    .context("the file to write has no name")?
                    .to_string_lossy()
                    .to_string();
                write_files_atomically(dir, &[(file_name, new.into_bytes())])?;
            }
            Ok(())
        }
    }
}

/// Replaces the text between the start and end markers with a blank line and `content`
/// (markers kept), the layout the README test expects.
pub fn replace_between_markers(text: &str, content: &str) -> anyhow::Result<String> {
    let missing = || {
        anyhow::anyhow!(
            "the marker lines {REFERENCE_START} and {REFERENCE_END} are missing; \
             add them where the function reference belongs"
        )
    };
    let (head, rest) = text.split_once(REFERENCE_START).ok_or_else(missing)?;
    let Some((_, tail)) = rest.split_once(REFERENCE_END) else {
        if text.contains(REFERENCE_END) {
            bail!("the line {REFERENCE_END} comes before {REFERENCE_START}");
        }
        return Err(missing());
    };
    Ok(format!(
        "{head}{REFERENCE_START}\n\n{content}{REFERENCE_END}{tail}"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markers_replace_only_the_inside_and_are_idempotent() {
        let text = format!("# T\n{REFERENCE_START}\nold\n{REFERENCE_END}\ntail\n");
        let once = replace_between_markers(&text, "new body\n\n").unwrap();
        assert_eq!(
            once,
            format!("# T\n{REFERENCE_START}\n\nnew body\n\n{REFERENCE_END}\ntail\n")
        );
        assert_eq!(
            replace_between_markers(&once, "new body\n\n").unwrap(),
            once
        );
    }

    #[test]
    fn missing_or_misordered_markers_are_errors() {
        assert!(replace_between_markers("no markers\n", "x").is_err());
        let reversed = format!("{REFERENCE_END}\n{REFERENCE_START}\n");
        assert!(replace_between_markers(&reversed, "x").is_err());
    }
}
