//! The prompt: one scope and the script functions kept for the whole session, multi-line
//! input decided by the engine's parser, `:` commands, history appended after every entry.
//! Works the same on a terminal (line editing, completion, hints) and on piped stdin.

use crate::complete::PromptHelper;
use crate::docs_cmd::help_text;
use anyhow::Result;
use gapwise_core::script::docs::listing_text;
use gapwise_core::script::suggest::did_you_mean;
use gapwise_core::script::{EngineLimits, ScriptError, ScriptHost};
use gapwise_core::SAFETY_CAUTION;
use rhai::{Scope, AST};
use std::cell::RefCell;
use std::collections::HashMap;
use std::fs::OpenOptions;
use std::io::{BufRead, IsTerminal, Write};
use std::path::PathBuf;
use std::rc::Rc;

/// The prompt's commands, with what they do (shown by `:help`).
pub const COMMANDS: &[(&str, &str)] = &[
    (":help", "this list; `:help NAME` shows a function's help"),
    (":functions", "every function, grouped by domain"),
    (":constants", "the unit constants (V, mA, uF, kHz, …)"),
    (":vars", "the variables and functions of this session"),
    (
        ":load",
        "`:load FILE` runs a recipe here and keeps its variables and functions",
    ),
    (":quit", "leave (Ctrl-D does too)"),
];

/// The session: the engine, one scope, and the script functions defined so far.
pub struct Session {
    /// The engine.
    pub host: ScriptHost,
    /// Variables and constants of the whole session.
    pub scope: Scope<'static>,
    /// Script functions defined so far (an AST holding functions only).
    pub functions: AST,
    /// For each function defined so far, the entry (or file) that defined it, so that an
    /// error inside it shows the right source line.
    function_sources: HashMap<String, (String, String)>,
}

impl Session {
    /// A new session on a host.
    pub fn new(host: ScriptHost) -> Self {
        Self {
            host,
            scope: Scope::new(),
            functions: AST::empty(),
            function_sources: HashMap::new(),
        }
    }

    /// Compiles and runs one entry in the session scope, keeping the functions it defines.
    /// Returns the result as display text, or `None` when the entry gives no value.
    pub fn eval(&mut self, source: &str, source_name: &str) -> Result<Option<String>, ScriptError> {
        let ast = self
            .host
            .compile_with_scope(&self.scope, source, source_name)?;
        let defined: Vec<String> = ast.iter_functions().map(|f| f.name.to_string()).collect();
        for name in &defined {
            self.function_sources
                .insert(name.clone(), (source.to_string(), source_name.to_string()));
        }
        let merged = self.functions.merge(&ast);
        let result = self.host.run(&merged, &mut self.scope, source, source_name);
        self.functions = merged.clone_functions_only();
        match result {
            Ok(v) => {
                let shown = display_result(&self.host, &v);
                self.host.release(v);
                Ok(shown)
            }
            Err(e) => Err(self.locate_in_earlier_entry(e, &defined)),
        }
    }

    /// An error inside a function defined by an earlier entry carries a line of that entry:
    /// show that entry's line instead of the current one.
    fn locate_in_earlier_entry(&self, mut e: ScriptError, defined_now: &[String]) -> ScriptError {
        if !e.message.contains("in `") {
            return e;
        }
        let innermost = e
            .message
            .rsplit("in `")
            .next()
            .and_then(|rest| rest.split('`').next());
        let Some(name) = innermost else { return e };
        if defined_now.iter().any(|d| d == name) {
            return e;
        }
        if let Some((source, source_name)) = self.function_sources.get(name) {
            e.source_name = format!("{source_name}, in `{name}`");
            e.source_line = e
                .line
                .and_then(|l| source.lines().nth(l.saturating_sub(1)))
                .map(str::to_string);
        }
        e
    }

    /// Names and parameters of the script functions defined in this session.
    pub fn function_signatures(&self) -> Vec<(String, String)> {
        self.functions
            .iter_functions()
            .map(|f| {
                (
                    f.name.to_string(),
                    format!("{}({})", f.name, f.params.join(", ")),
                )
            })
            .collect()
    }
}

/// How an entry's value is shown: nothing for `()`, text without quotes (such as the result
/// of `.to("nF")`), anything else as the engine displays it (quantities with units).
pub fn display_result(host: &ScriptHost, value: &rhai::Dynamic) -> Option<String> {
    if value.is_unit() {
        None
    } else if value.is_string() {
        value.clone().into_string().ok()
    } else {
        Some(host.display(value))
    }
}

/// Where the history goes: `$GAPWISE_HISTORY` if set (empty: none), else the user's data
/// folder, `gapwise/history.txt`.
fn history_path() -> Option<PathBuf> {
    match std::env::var_os("GAPWISE_HISTORY") {
        Some(p) if p.is_empty() => None,
        Some(p) => Some(PathBuf::from(p)),
        None => dirs::data_dir().map(|d| d.join("gapwise").join("history.txt")),
    }
}

/// Appends entries to the history file after every entry (in the line editor's format),
/// warning once and going on without history if the file cannot be written.
struct History {
    path: Option<PathBuf>,
}

impl History {
    fn append(&mut self, entry: &str) {
        let Some(path) = &self.path else { return };
        let result = (|| -> std::io::Result<()> {
            if let Some(dir) = path.parent() {
                std::fs::create_dir_all(dir)?;
            }
            let mut f = OpenOptions::new().create(true).append(true).open(path)?;
            let mut text = String::new();
            if f.metadata()?.len() == 0 {
                text.push_str("#V2\n");
            }
            text.push_str(&entry.replace('\\', "\\\\").replace('\n', "\\n"));
            text.push('\n');
            f.write_all(text.as_bytes())
        })();
        if let Err(e) = result {
            eprintln!(
                "warning: cannot write the history to {}: {e}; going on without history",
                path.display()
            );
            self.path = None;
        }
    }
}

/// How many history entries are kept across sessions.
const HISTORY_KEEP: usize = 5000;

/// Keeps the last `keep` entries of the history file (rewritten through a temporary file and a
/// rename, so a crash never loses the history). Errors are ignored: history is a convenience.
fn trim_history(path: &std::path::Path, keep: usize) {
    let Ok(text) = std::fs::read_to_string(path) else {
        return;
    };
    let entries: Vec<&str> = text.lines().filter(|l| *l != "#V2").collect();
    if entries.len() <= keep {
        return;
    }
    let mut out = String::from("#V2\n");
    for e in &entries[entries.len() - keep..] {
        out.push_str(e);
        out.push('\n');
    }
    let tmp = path.with_extension("txt.tmp");
    if std::fs::write(&tmp, out).is_ok() && std::fs::rename(&tmp, path).is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
}

/// What reading a line gave.
enum Read {
    Line(String),
    Interrupted,
    End,
}

/// A source of lines: the line editor on a terminal, or plain stdin.
enum Input {
    Editor(Box<rustyline::Editor<PromptHelper, rustyline::history::FileHistory>>),
    Piped(std::io::StdinLock<'static>),
}

impl Input {
    fn read(&mut self, prompt: &str) -> Read {
        match self {
            Input::Editor(ed) => match ed.readline(prompt) {
                Ok(l) => Read::Line(l),
                Err(rustyline::error::ReadlineError::Interrupted) => Read::Interrupted,
                Err(rustyline::error::ReadlineError::Eof) => Read::End,
                Err(e) => {
                    eprintln!("error: cannot read the terminal: {e}");
                    Read::End
                }
            },
            Input::Piped(stdin) => {
                let mut line = String::new();
                match stdin.read_line(&mut line) {
                    Ok(0) => Read::End,
                    Ok(_) => {
                        let trimmed = line.trim_end_matches(['\n', '\r']).len();
                        line.truncate(trimmed);
                        Read::Line(line)
                    }
                    Err(e) => {
                        eprintln!("error: cannot read stdin: {e}");
                        Read::End
                    }
                }
            }
        }
    }

    fn remember(&mut self, entry: &str) {
        if let Input::Editor(ed) = self {
            let _ = ed.add_history_entry(entry);
        }
    }
}

/// Opens the prompt and runs it until `:quit` or the end of input.
pub fn run(limits: EngineLimits) -> Result<()> {
    let host = ScriptHost::new(limits);
    let terminal = std::io::stdin().is_terminal() && std::io::stdout().is_terminal();
    let progress = crate::runner::attach_print_and_progress(&host);
    let session = Rc::new(RefCell::new(Session::new(host)));
    let mut history = History {
        path: history_path(),
    };
    if let Some(p) = &history.path {
        trim_history(p, HISTORY_KEEP);
    }
    let mut input = if terminal {
        let config = rustyline::Config::builder()
            .auto_add_history(false)
            .completion_type(rustyline::CompletionType::List)
            .build();
        let mut ed = rustyline::Editor::with_config(config)?;
        ed.set_helper(Some(PromptHelper::new(session.clone())));
        if let Some(p) = &history.path {
            let _ = ed.load_history(p);
        }
        Input::Editor(Box::new(ed))
    } else {
        Input::Piped(std::io::stdin().lock())
    };
    // Ctrl-C while a script runs stops that script, not the prompt (while a line is being
    // read, the line editor handles Ctrl-C itself). Installed after the line editor, which
    // sets up signal handling of its own when it is created.
    let flag = session.borrow().host.interrupt_flag();
    if let Err(e) =
        ctrlc::set_handler(move || flag.store(true, std::sync::atomic::Ordering::Relaxed))
    {
        eprintln!("warning: Ctrl-C cannot stop running scripts here ({e})");
    }

    println!(
        "gapwise {} — unit-checked design rules for small offline flyback supplies",
        env!("CARGO_PKG_VERSION")
    );
    println!("{SAFETY_CAUTION}");
    println!("Type :help for commands, :functions for the functions, :quit to leave.");

    let mut buffer = String::new();
    loop {
        let prompt = if buffer.is_empty() {
            "gapwise> "
        } else {
            "   ...> "
        };
        let line = match input.read(prompt) {
            Read::Line(l) => l,
            Read::Interrupted => {
                if buffer.is_empty() {
                    println!("(type :quit or press Ctrl-D to leave)");
                } else {
                    buffer.clear();
                    println!("(input cleared)");
                }
                continue;
            }
            Read::End => {
                if !buffer.trim().is_empty() {
                    // show what is wrong with the unfinished entry
                    let entry = std::mem::take(&mut buffer);
                    history.append(entry.trim_end());
                    run_entry(&session, &entry, "<prompt>");
                }
                break;
            }
        };
        if buffer.is_empty() {
            let trimmed = line.trim();
            if trimmed.is_empty() {
                continue;
            }
            if trimmed.starts_with(':') {
                history.append(trimmed);
                input.remember(trimmed);
                if command(&session, trimmed) == Flow::Quit {
                    break;
                }
                continue;
            }
            if let Some(cmd) = bare_command(&session.borrow(), trimmed) {
                history.append(trimmed);
                input.remember(trimmed);
                println!("(prompt commands start with a colon: running `{cmd}`)");
                if command(&session, &cmd) == Flow::Quit {
                    break;
                }
                continue;
            }
        }
        buffer.push_str(&line);
        buffer.push('\n');
        if !session.borrow().host.is_complete(&buffer) {
            continue;
        }
        let entry = std::mem::take(&mut buffer);
        let entry = entry.trim_end();
        history.append(entry);
        input.remember(entry);
        run_entry(&session, entry, "<prompt>");
        if let Some(p) = &progress {
            p.finish();
        }
    }
    Ok(())
}

/// Runs one entry and prints its value or its error; notes outputs meant for the runner.
fn run_entry(session: &Rc<RefCell<Session>>, source: &str, source_name: &str) {
    let mut s = session.borrow_mut();
    match s.eval(source, source_name) {
        Ok(Some(text)) => println!("{text}"),
        Ok(None) => {}
        Err(e) => eprintln!("{e}"),
    }
    for w in s.host.take_warnings() {
        eprintln!("warning: {w}");
    }
    let tables: Vec<String> = s.host.take_outputs().into_iter().map(|(n, _)| n).collect();
    let texts: Vec<String> = s
        .host
        .take_texts()
        .into_iter()
        .map(|t| format!("{}.{}", t.name, t.extension))
        .collect();
    if !tables.is_empty() || !texts.is_empty() {
        let mut names = tables;
        names.extend(texts);
        println!(
            "note: outputs are written by `gapwise run FILE --out DIR`, not at the prompt: {}",
            names.join(", ")
        );
    }
    s.host.take_failed_checks();
}

/// A prompt command typed without its colon (`help`, `help NAME`, `quit`, `exit`, `vars`,
/// `functions`, `constants`), unless the word is one of the session's own variables.
pub fn bare_command(session: &Session, line: &str) -> Option<String> {
    let (word, arg) = match line.split_once(char::is_whitespace) {
        Some((w, a)) => (w, a.trim()),
        None => (line, ""),
    };
    let known = ["help", "quit", "exit", "vars", "functions", "constants"];
    if !known.contains(&word) || session.scope.contains(word) {
        return None;
    }
    let arg_ok = match word {
        "help" => arg.is_empty() || arg.chars().all(|c| c.is_ascii_alphanumeric() || c == '_'),
        _ => arg.is_empty(),
    };
    arg_ok.then(|| format!(":{line}"))
}

#[derive(PartialEq, Eq)]
enum Flow {
    Go,
    Quit,
}

fn command(session: &Rc<RefCell<Session>>, line: &str) -> Flow {
    let (name, arg) = match line.split_once(char::is_whitespace) {
        Some((n, a)) => (n, a.trim()),
        None => (line, ""),
    };
    match name {
        ":quit" | ":exit" => return Flow::Quit,
        ":help" if arg.is_empty() => {
            for (c, what) in COMMANDS {
                println!("  {c:11} {what}");
            }
            println!("Write script lines as they are, e.g. `12 * V * (1.5 * A)`; an entry continues over lines while a bracket is open.");
        }
        ":help" => {
            let s = session.borrow();
            if let Some((_, sig)) = s.function_signatures().into_iter().find(|(n, _)| n == arg) {
                println!("{sig}  (defined in this session)");
            } else {
                match help_text(&s.host, arg) {
                    Ok(text) => print!("{text}"),
                    Err(message) => eprintln!("error: {message}"),
                }
            }
        }
        ":functions" => {
            let s = session.borrow();
            print!("{}", listing_text(s.host.docs()));
            let mine = s.function_signatures();
            if !mine.is_empty() {
                println!("defined in this session:");
                for (_, sig) in mine {
                    println!("  {sig}");
                }
            }
        }
        ":constants" => {
            let s = session.borrow();
            let mut line = String::from(" ");
            for c in s.host.constant_names() {
                if line.len() + c.len() > 78 {
                    println!("{line}");
                    line = String::from(" ");
                }
                line.push(' ');
                line.push_str(c);
            }
            println!("{line}");
        }
        ":vars" => vars(&session.borrow()),
        ":load" if arg.is_empty() => {
            eprintln!("error: `:load` needs a file, e.g. `:load scripts/fernbank_family.rhai`")
        }
        // only recipes: an error in a loaded file shows its line, which must not become a
        // way to print lines of any file (issue 16)
        ":load" if !arg.ends_with(".rhai") => eprintln!(
            "error: `:load` runs recipes (files ending in .rhai); `{}` is not one",
            elide(arg, 200)
        ),
        ":load" => match std::fs::read_to_string(arg) {
            Ok(source) => run_entry(session, &source, arg),
            Err(e) => eprintln!("error: cannot read {arg}: {e}"),
        },
        other => {
            let names: Vec<&str> = COMMANDS.iter().map(|(c, _)| *c).collect();
            eprintln!(
                "error: unknown command `{other}`{} (type :help)",
                did_you_mean(other, &names)
            );
        }
    }
    Flow::Go
}

/// `text` cut to about `max` characters, with the number of characters left out.
fn elide(text: &str, max: usize) -> String {
    let n = text.chars().count();
    if n <= max {
        return text.to_string();
    }
    let head: String = text.chars().take(max).collect();
    format!("{head}… ({} more characters)", n - max)
}

/// `:vars`: every variable with its value (one line each), then the session's functions.
fn vars(s: &Session) {
    if s.scope.is_empty() && s.functions.iter_functions().next().is_none() {
        println!("(no variables yet: `let x = 12 * V;` makes one)");
        return;
    }
    for (name, constant, value) in s.scope.iter() {
        let text = s.host.display(&value);
        let shown = if text.contains('\n') {
            let first = text
                .lines()
                .next()
                .unwrap_or_default()
                .trim_end_matches(':');
            format!(
                "{} ({} lines; type `{name}` to see it)",
                first,
                text.lines().count()
            )
        } else {
            text
        };
        let kind = if constant { "const " } else { "" };
        println!("  {kind}{name} = {shown}");
    }
    for (_, sig) in s.function_signatures() {
        println!("  fn {sig}");
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn trimming_keeps_the_newest_entries() {
        let dir = std::env::temp_dir().join(format!("gapwise-history-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("history.txt");
        let mut text = String::from("#V2\n");
        for i in 0..10 {
            text.push_str(&format!("entry {i}\n"));
        }
        std::fs::write(&path, text).unwrap();
        super::trim_history(&path, 3);
        let kept = std::fs::read_to_string(&path).unwrap();
        assert_eq!(kept, "#V2\nentry 7\nentry 8\nentry 9\n");
        let _ = std::fs::remove_dir_all(&dir);
    }
}
