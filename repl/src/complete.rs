//! Tab completion and the signature hint at the prompt.
//!
//! Completes functions (from their help), unit constants, session variables and functions,
//! prompt commands, file names after `:load`, and fields after `name.`: record fields,
//! map keys, and a table's columns (as `column("NAME")`) and properties.

use crate::prompt::{Session, COMMANDS};
use gapwise_core::report::Table;
use gapwise_core::script::convert::value_to_dynamic;
use gapwise_core::script::ScriptRecord;
use rhai::Dynamic;
use rustyline::completion::{Completer, FilenameCompleter, Pair};
use rustyline::highlight::Highlighter;
use rustyline::hint::Hinter;
use rustyline::validate::Validator;
use rustyline::{Context, Helper};
use std::borrow::Cow;
use std::cell::RefCell;
use std::rc::Rc;

const KEYWORDS: &[&str] = &[
    "let", "const", "fn", "if", "else", "while", "loop", "for", "in", "break", "continue",
    "return", "throw", "true", "false", "print", "switch",
];

fn is_ident(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// Start (byte index) of the identifier that ends at `pos`.
fn word_start(line: &str, pos: usize) -> usize {
    line[..pos]
        .char_indices()
        .rev()
        .take_while(|(_, c)| is_ident(*c))
        .last()
        .map_or(pos, |(i, _)| i)
}

/// The completions for `line` with the cursor at `pos`: the start of the replaced text and
/// the candidates, sorted.
pub fn candidates(session: &Session, line: &str, pos: usize) -> (usize, Vec<String>) {
    let before = &line[..pos];
    let trimmed = before.trim_start();
    if trimmed.starts_with(':') {
        return command_candidates(session, before);
    }
    let start = word_start(line, pos);
    let word = &line[start..pos];
    let mut out: Vec<String> = if start > 0 && before[..start].ends_with('.') {
        let path_end = start - 1;
        let path_start = before[..path_end]
            .char_indices()
            .rev()
            .take_while(|(_, c)| is_ident(*c) || *c == '.')
            .last()
            .map_or(path_end, |(i, _)| i);
        let path = &before[path_start..path_end];
        match resolve(session, path) {
            Some(v) => fields_of(&v),
            None => Vec::new(),
        }
    } else {
        let mut names: Vec<String> = session
            .host
            .docs()
            .iter()
            .map(|d| d.name.to_string())
            .collect();
        names.extend(session.host.constant_names().iter().map(|c| c.to_string()));
        names.extend(session.scope.iter_raw().map(|(n, _, _)| n.to_string()));
        names.extend(session.function_signatures().into_iter().map(|(n, _)| n));
        names.extend(KEYWORDS.iter().map(|k| k.to_string()));
        names
    };
    out.retain(|c| c.starts_with(word) && c != word);
    out.sort();
    out.dedup();
    (start, out)
}

fn command_candidates(session: &Session, before: &str) -> (usize, Vec<String>) {
    let lead = before.len() - before.trim_start().len();
    let text = before.trim_start();
    match text.split_once(char::is_whitespace) {
        None => {
            let mut v: Vec<String> = COMMANDS
                .iter()
                .map(|(c, _)| c.to_string())
                .filter(|c| c.starts_with(text))
                .collect();
            v.sort();
            (lead, v)
        }
        Some((":help", rest)) => {
            let start = before.len() - rest.trim_start().len();
            let word = &before[start..];
            let mut v: Vec<String> = session
                .host
                .docs()
                .iter()
                .map(|d| d.name.to_string())
                .chain(session.host.constant_names().iter().map(|c| c.to_string()))
                .filter(|n| n.starts_with(word))
                .collect();
            v.sort();
            v.dedup();
            (start, v)
        }
        _ => (before.len(), Vec::new()),
    }
}

/// The value of `a` or `a.b.c` in the session scope, following map keys and record fields.
fn resolve(session: &Session, path: &str) -> Option<Dynamic> {
    let mut parts = path.split('.');
    let first = parts.next().filter(|p| !p.is_empty())?;
    let mut value = session.scope.get(first)?.flatten_clone();
    for p in parts {
        let next = if let Some(m) = value.read_lock::<rhai::Map>() {
            m.get(p).cloned()
        } else if let Some(r) = value.read_lock::<ScriptRecord>() {
            r.get(p).map(value_to_dynamic)
        } else {
            None
        };
        value = next?;
    }
    Some(value)
}

/// What can follow `value.`.
fn fields_of(value: &Dynamic) -> Vec<String> {
    if let Some(r) = value.read_lock::<ScriptRecord>() {
        return r.names().into_iter().map(str::to_string).collect();
    }
    if let Some(m) = value.read_lock::<rhai::Map>() {
        return m.keys().map(|k| k.to_string()).collect();
    }
    if let Some(t) = value.read_lock::<Table>() {
        let mut v: Vec<String> = [
            "rows",
            "error_count",
            "columns",
            "row(",
            "to_csv()",
            "to_json()",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        v.extend(t.column_names().iter().map(|c| format!("column(\"{c}\")")));
        return v;
    }
    if value.read_lock::<gapwise_core::units::Quantity>().is_some() {
        return vec!["to(\"".to_string()];
    }
    // custom result types (e.g. a flyback design) list their own properties
    gapwise_core::script::property_names(value)
}

/// The signature to show while typing a call: the function whose `(` is still open before
/// the cursor, or the function name just typed.
pub fn signature_hint(session: &Session, line: &str, pos: usize) -> Option<String> {
    if pos != line.len() || line.trim_start().starts_with(':') {
        return None;
    }
    let name = open_call(&line[..pos]).or_else(|| {
        let s = word_start(line, pos);
        Some(&line[s..pos]).filter(|w| !w.is_empty())
    })?;
    if let Some(doc) = session.host.doc(name) {
        let required: Vec<&str> = doc
            .keys
            .iter()
            .filter(|k| k.default == gapwise_core::script::ParamDefault::Required)
            .map(|k| k.name)
            .collect();
        return Some(if required.is_empty() {
            format!("    {}", doc.signature())
        } else {
            format!("    {}  keys: {}", doc.signature(), required.join(", "))
        });
    }
    session
        .function_signatures()
        .into_iter()
        .find(|(n, _)| n == name)
        .map(|(_, sig)| format!("    {sig}"))
}

/// The name before the innermost `(` still open in `text` (ignoring brackets in strings).
fn open_call(text: &str) -> Option<&str> {
    let mut stack: Vec<(usize, char)> = Vec::new();
    let mut in_string = false;
    let mut escaped = false;
    for (i, c) in text.char_indices() {
        if in_string {
            match c {
                _ if escaped => escaped = false,
                '\\' => escaped = true,
                '"' => in_string = false,
                _ => {}
            }
            continue;
        }
        match c {
            '"' => in_string = true,
            '(' | '[' | '{' => stack.push((i, c)),
            ')' | ']' | '}' => {
                stack.pop();
            }
            _ => {}
        }
    }
    let &(open, _) = stack.iter().rev().find(|(_, c)| *c == '(')?;
    let head = text[..open].trim_end();
    let s = word_start(head, head.len());
    Some(&head[s..]).filter(|w| !w.is_empty())
}

/// The line editor's helper: completion, hints, dimmed hint text.
pub struct PromptHelper {
    session: Rc<RefCell<Session>>,
    files: FilenameCompleter,
}

impl PromptHelper {
    /// A helper reading the session's names.
    pub fn new(session: Rc<RefCell<Session>>) -> Self {
        Self {
            session,
            files: FilenameCompleter::new(),
        }
    }
}

impl Completer for PromptHelper {
    type Candidate = Pair;

    fn complete(
        &self,
        line: &str,
        pos: usize,
        ctx: &Context<'_>,
    ) -> rustyline::Result<(usize, Vec<Pair>)> {
        if line.trim_start().starts_with(":load ") {
            return self.files.complete(line, pos, ctx);
        }
        let Ok(session) = self.session.try_borrow() else {
            return Ok((pos, Vec::new()));
        };
        let (start, names) = candidates(&session, line, pos);
        Ok((
            start,
            names
                .into_iter()
                .map(|n| Pair {
                    display: n.clone(),
                    replacement: n,
                })
                .collect(),
        ))
    }
}

impl Hinter for PromptHelper {
    type Hint = String;

    fn hint(&self, line: &str, pos: usize, _ctx: &Context<'_>) -> Option<String> {
        let session = self.session.try_borrow().ok()?;
        signature_hint(&session, line, pos)
    }
}

impl Highlighter for PromptHelper {
    fn highlight_hint<'h>(&self, hint: &'h str) -> Cow<'h, str> {
        Cow::Owned(format!("\x1b[2m{hint}\x1b[0m"))
    }
}

impl Validator for PromptHelper {}

impl Helper for PromptHelper {}

#[cfg(test)]
mod tests {
    use super::*;
    use gapwise_core::script::ScriptHost;

    fn session_with(source: &str) -> Session {
        let mut s = Session::new(ScriptHost::default());
        s.eval(source, "<test>").unwrap();
        s
    }

    #[test]
    fn completes_functions_constants_and_variables() {
        let s = session_with("let output_voltage = 12 * V;");
        let (start, c) = candidates(&s, "x = output_vo", 13);
        assert_eq!(start, 4);
        assert_eq!(c, ["output_voltage"]);
        let (_, c) = candidates(&s, "skin_de", 7);
        assert!(c.contains(&"skin_depth".to_string()), "{c:?}");
        let (_, c) = candidates(&s, "4.7 * uF + 1 * u", 16);
        assert!(
            c.contains(&"uF".to_string()) && c.contains(&"uH".to_string()),
            "{c:?}"
        );
    }

    #[test]
    fn completes_fields_of_records_maps_and_tables() {
        let s = session_with(
            "let d = resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V});\n\
             let mp = #{inner: #{gain: 2}, vout: 5 * V};\n\
             let t = table([#{power: 1 * W}]);",
        );
        let (start, c) = candidates(&s, "d.upp", 5);
        assert_eq!(start, 2);
        assert!(c.iter().any(|n| n == "upper_resistor"), "{c:?}");
        let (_, c) = candidates(&s, "mp.", 3);
        assert_eq!(c, ["inner", "vout"]);
        let (_, c) = candidates(&s, "mp.inner.g", 10);
        assert_eq!(c, ["gain"]);
        let (_, c) = candidates(&s, "t.", 2);
        assert!(c.contains(&"column(\"power\")".to_string()), "{c:?}");
        let (_, c) = candidates(&s, "nothing.", 8);
        assert!(c.is_empty());
    }

    #[test]
    fn completes_fields_of_a_flyback_design() {
        let s = session_with(
            "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A});",
        );
        let (_, c) = candidates(&s, "d.primary_ind", 13);
        assert_eq!(c, ["primary_inductance"]);
    }

    #[test]
    fn completes_commands_and_help_names() {
        let s = session_with("1");
        assert_eq!(candidates(&s, ":qu", 3), (0, vec![":quit".to_string()]));
        let (start, c) = candidates(&s, ":help skin", 10);
        assert_eq!(start, 6);
        assert!(c.contains(&"skin_depth".to_string()));
    }

    #[test]
    fn hints_the_signature_of_the_open_call() {
        let s = session_with("fn gain(a, b) { a / b }");
        let h = signature_hint(&s, "let x = lc_resonant_frequency(1 * uH, ", 38).unwrap();
        assert!(h.contains("lc_resonant_frequency("), "{h}");
        let h = signature_hint(&s, "gain(3, ", 8).unwrap();
        assert!(h.contains("gain(a, b)"), "{h}");
        assert_eq!(signature_hint(&s, "print(\"(\")", 10), None);
        assert_eq!(open_call("f(\"(\", g(1), "), Some("f"));
    }
}
