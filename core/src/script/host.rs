//! The one configured engine: sandbox limits, a wall-clock budget, print and output sinks.

use super::docs::FunctionDoc;
use crate::report::Table;
use rhai::{Dynamic, Engine, EvalAltResult, ParseError, ParseErrorType, Position, Scope, AST};
use std::fmt;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex, RwLock};
use std::time::{Duration, Instant};

/// Limits for untrusted scripts. Every limit is set explicitly so that debug and release
/// builds, tests and users see the same behaviour; the command line can raise them.
#[derive(Clone, Debug, PartialEq)]
pub struct EngineLimits {
    /// Operations one evaluation may perform (a family variant counts from its caller's count).
    pub max_operations: u64,
    /// Depth of nested function calls (family variants count from their caller's depth);
    /// at most [`MAX_CALL_DEPTH`].
    pub max_call_levels: usize,
    /// Depth of nested expressions at the top level.
    pub max_expr_depth: usize,
    /// Depth of nested expressions inside functions.
    pub max_function_expr_depth: usize,
    /// Longest string, in bytes.
    pub max_string_size: usize,
    /// Largest array.
    pub max_array_size: usize,
    /// Largest object map.
    pub max_map_size: usize,
    /// Variables in one scope.
    pub max_variables: usize,
    /// Functions one script may define.
    pub max_functions: usize,
    /// Wall-clock time one evaluation may take.
    pub time_budget: Duration,
    /// Heap bytes the whole process may hold while a script runs, checked after every
    /// operation (see [`super::memory`]); enforced only when the program installs
    /// [`super::memory::CountingAllocator`]. The default, 128 MiB, also bounds how deep a
    /// chain of closures can nest (about 120 bytes of heap per level, so about a million
    /// levels), and sizes the script stack ([`script_stack_bytes`]: eight bytes of stack per byte of
    /// budget) so that whatever the script builds within it, even a chain with arrays nested
    /// in each captured value that the script itself drops, is dropped without overflow;
    /// what a run leaves is freed without recursion ([`ScriptHost::release_scope`]).
    pub max_memory_bytes: usize,
    /// Total bytes one run may hand to `output_text` and `output_table` together.
    pub max_output_bytes: usize,
}

impl Default for EngineLimits {
    fn default() -> Self {
        Self {
            max_operations: 200_000_000,
            max_call_levels: 64,
            max_expr_depth: 64,
            max_function_expr_depth: 64,
            max_string_size: 1 << 20,
            max_array_size: 1_000_000,
            max_map_size: 1_000_000,
            max_variables: 10_000,
            max_functions: 10_000,
            time_budget: Duration::from_secs(60),
            max_memory_bytes: 128 << 20,
            max_output_bytes: 256 << 20,
        }
    }
}

/// A callback told how many family variants are done out of how many.
pub type ProgressFn = Arc<dyn Fn(usize, usize) + Send + Sync>;
/// A callback that receives each line a script prints.
pub type PrintFn = Arc<dyn Fn(&str) + Send + Sync>;

/// State shared between the host and the functions registered on its engine.
pub(crate) struct HostState {
    epoch: Instant,
    deadline_nanos: AtomicU64,
    budget: Duration,
    interrupt: Arc<AtomicBool>,
    outputs: Mutex<Vec<(String, Table)>>,
    key_orders: RwLock<Arc<super::key_order::KeyOrders>>,
    texts: Mutex<Vec<OutputText>>,
    failed_checks: std::sync::atomic::AtomicUsize,
    printed: Mutex<Vec<String>>,
    print: RwLock<Option<PrintFn>>,
    progress: RwLock<Option<ProgressFn>>,
    /// Constants of the scope a run starts with (earlier prompt lines, `eval --set`), which
    /// functions and closures see like the recipe's own top-level constants.
    session_constants: RwLock<std::collections::HashMap<String, Dynamic>>,
    /// Workers for family variants (see [`HostState::family_pool`]).
    pool: std::sync::OnceLock<Option<rayon::ThreadPool>>,
    /// Report texts made by gapwise functions and the failed checks each shows.
    verdict_texts: Mutex<std::collections::HashMap<u64, usize>>,
    /// Parameters the running recipe declared with `param`, in order.
    params: Mutex<Vec<super::recipe::RecipeParam>>,
    /// Warnings for the runner (keys a configuration ignored), each once.
    warnings: Mutex<Vec<String>>,
    /// Values `--set` gives declared parameters.
    overrides: RwLock<std::collections::HashMap<String, Dynamic>>,
    /// Bytes handed to `output_text` and `output_table` in this run (an estimate for tables:
    /// the text of every cell and header).
    output_bytes: AtomicU64,
    /// The limit on `output_bytes`.
    max_output_bytes: u64,
    /// Stack of the script thread and of each family worker ([`script_stack_bytes`]).
    stack_bytes: usize,
    /// Operations of the whole run, the recipe's and every family variant's together,
    /// counted in steps of [`OPERATION_STEP`] (each context adds a step when its own count
    /// passes a multiple of it).
    operations: AtomicU64,
    /// The limit on `operations` (0: none).
    max_operations: u64,
}

/// Operations between two checks of the clock, the interrupt flag and the whole-run
/// operation count.
const OPERATION_STEP: u64 = 512;

impl HostState {
    fn new(limits: &EngineLimits) -> Self {
        let (budget, max_output_bytes) = (limits.time_budget, limits.max_output_bytes);
        Self {
            stack_bytes: script_stack_bytes(limits.max_memory_bytes),
            operations: AtomicU64::new(0),
            max_operations: limits.max_operations,
            output_bytes: AtomicU64::new(0),
            max_output_bytes: u64::try_from(max_output_bytes).unwrap_or(u64::MAX),
            epoch: Instant::now(),
            deadline_nanos: AtomicU64::new(0),
            budget,
            interrupt: Arc::new(AtomicBool::new(false)),
            outputs: Mutex::new(Vec::new()),
            key_orders: RwLock::new(Arc::default()),
            texts: Mutex::new(Vec::new()),
            failed_checks: std::sync::atomic::AtomicUsize::new(0),
            printed: Mutex::new(Vec::new()),
            print: RwLock::new(None),
            progress: RwLock::new(None),
            session_constants: RwLock::new(std::collections::HashMap::new()),
            pool: std::sync::OnceLock::new(),
            verdict_texts: Mutex::new(std::collections::HashMap::new()),
            params: Mutex::new(Vec::new()),
            warnings: Mutex::new(Vec::new()),
            overrides: RwLock::new(std::collections::HashMap::new()),
        }
    }
    /// Collects the ignored-key warnings noted on this thread (see [`super::spec::Spec`]).
    pub(crate) fn collect_warnings(&self) {
        let new = super::spec::take_thread_warnings();
        if new.is_empty() {
            return;
        }
        if let Ok(mut w) = self.warnings.lock() {
            for t in new {
                if !w.contains(&t) {
                    w.push(t);
                }
            }
        }
    }
    /// A constant of the scope the run started with.
    pub(crate) fn session_constant(&self, name: &str) -> Option<Dynamic> {
        self.session_constants
            .read()
            .ok()
            .and_then(|m| m.get(name).cloned())
    }
    /// True when the run was stopped (Ctrl-C) or ran out of time: families stop too.
    pub(crate) fn should_stop(&self) -> Option<String> {
        if self.interrupt.load(Ordering::Relaxed) {
            Some("script interrupted".to_string())
        } else if self.over_time() {
            Some(format!(
                "script stopped: time budget of {} s exceeded (raise it with --time-budget)",
                self.budget.as_secs_f64()
            ))
        } else {
            None
        }
    }
    pub(crate) fn declare_param(&self, p: super::recipe::RecipeParam) -> Result<(), String> {
        let mut params = self.params.lock().map_err(|_| "parameter list poisoned")?;
        if params.iter().any(|q| q.name == p.name) {
            return Err(format!(
                "param `{}` is declared twice; declare each parameter once",
                p.name
            ));
        }
        params.push(p);
        Ok(())
    }
    pub(crate) fn param_override(&self, name: &str) -> Option<Dynamic> {
        self.overrides
            .read()
            .ok()
            .and_then(|m| m.get(name).cloned())
    }
    fn start_clock(&self) {
        self.interrupt.store(false, Ordering::Relaxed);
        self.operations.store(0, Ordering::Relaxed);
        let deadline = self.epoch.elapsed() + self.budget;
        let nanos = u64::try_from(deadline.as_nanos())
            .unwrap_or(u64::MAX)
            .max(1);
        self.deadline_nanos.store(nanos, Ordering::Relaxed);
    }
    /// Adds one [`OPERATION_STEP`] to the whole run's count; the error once it passes the
    /// limit. Each context (the recipe, every family variant) counts from where its caller
    /// was, so the engine's own limit bounds one chain of calls; this bounds their sum.
    fn count_operations(&self) -> Option<String> {
        if self.max_operations == 0 {
            return None;
        }
        let total = self.operations.fetch_add(OPERATION_STEP, Ordering::Relaxed) + OPERATION_STEP;
        (total > self.max_operations).then(|| {
            format!(
                "script stopped: more than {} operations in the whole run, family variants included (raise the limit with --max-operations)",
                self.max_operations
            )
        })
    }
    fn stop_clock(&self) {
        self.deadline_nanos.store(0, Ordering::Relaxed);
    }
    fn over_time(&self) -> bool {
        let d = self.deadline_nanos.load(Ordering::Relaxed);
        d != 0 && self.epoch.elapsed().as_nanos() > u128::from(d)
    }
    /// Keeps a table for the runner; a second table under the same name is an error (it
    /// would replace the first without a word), and so is a table CSV/JSON cannot write
    /// (a column that mixes dimensions), so the recipe fails where the table is handed over.
    /// Its failed verdicts (cells reading `fail`: a check's status, a worst status) count
    /// toward `--strict`: what reaches an output counts, and only that.
    pub(crate) fn push_output(&self, name: String, table: Table) -> crate::error::Result<()> {
        table
            .columns(&crate::report::WriteOptions::default())
            .map_err(|e| e.context(&format!("output_table `{name}`")))?;
        let mut o = self
            .outputs
            .lock()
            .map_err(|_| crate::error::Error::invalid("the output list is unavailable"))?;
        if o.iter().any(|(n, _)| *n == name) {
            return Err(crate::error::Error::invalid(format!(
                "output_table: a table named `{name}` was already handed over; give each output table its own name"
            )));
        }
        self.count_output(&format!("output_table `{name}`"), table_bytes(&table))?;
        self.note_failed_checks(failed_verdicts(&table));
        o.push((name, table));
        Ok(())
    }
    /// Hands a text to the runner; a report made by a gapwise function brings the failed
    /// checks it shows toward `--strict` (see [`HostState::verdict_text`]).
    pub(crate) fn push_text(&self, text: OutputText) -> crate::error::Result<()> {
        let duplicate = self.texts.lock().is_ok_and(|o| {
            o.iter()
                .any(|t| t.name == text.name && t.extension == text.extension)
        });
        if duplicate {
            // a second text under the same file name would replace the first without a word
            return Err(crate::error::Error::invalid(format!(
                "output_text: `{}.{}` was already handed over; give each output text its own name",
                text.name, text.extension
            )));
        }
        self.count_output(
            &format!("output_text `{}.{}`", text.name, text.extension),
            text.text.len(),
        )?;
        let failed = self
            .verdict_texts
            .lock()
            .ok()
            .and_then(|m| m.get(&text_key(&text.text)).copied())
            .unwrap_or(0);
        self.note_failed_checks(failed);
        if let Ok(mut o) = self.texts.lock() {
            o.push(text);
        }
        Ok(())
    }
    /// Adds `bytes` to the run's output total; an error naming the limit when the total would
    /// pass `max_output_bytes` (nothing is counted then).
    fn count_output(&self, what: &str, bytes: usize) -> crate::error::Result<()> {
        let bytes = u64::try_from(bytes).unwrap_or(u64::MAX);
        let before = self.output_bytes.fetch_add(bytes, Ordering::Relaxed);
        let total = before.saturating_add(bytes);
        if total > self.max_output_bytes {
            self.output_bytes.fetch_sub(bytes, Ordering::Relaxed);
            return Err(crate::error::Error::invalid(format!(
                "{what}: the outputs of this run would reach {total} bytes, over the output limit of {} bytes (max_output_bytes; raise it with --max-output-bytes)",
                self.max_output_bytes
            )));
        }
        Ok(())
    }
    /// Remembers that a report text shows `failed` failed checks, so that handing it to
    /// `output_text` counts them; returns the text.
    pub(crate) fn verdict_text(&self, text: String, failed: usize) -> String {
        if failed > 0 {
            if let Ok(mut m) = self.verdict_texts.lock() {
                m.insert(text_key(&text), failed);
            }
        }
        text
    }
    fn note_failed_checks(&self, n: usize) {
        self.failed_checks.fetch_add(n, Ordering::Relaxed);
    }
    /// The thread pool family variants run on: one worker per core, each with a stack of
    /// [`script_stack_bytes`] (built on first use; with [`SCRIPT_STACK_BYTES`] when the
    /// address space cannot hold that; the global pool if that fails too).
    pub(crate) fn family_pool(&self) -> Option<&rayon::ThreadPool> {
        self.pool
            .get_or_init(|| {
                let build = |bytes: usize| {
                    rayon::ThreadPoolBuilder::new()
                        .thread_name(|i| format!("gapwise-family-{i}"))
                        .stack_size(bytes)
                        .build()
                };
                build(self.stack_bytes)
                    .or_else(|_| build(SCRIPT_STACK_BYTES.min(self.stack_bytes)))
                    .ok()
            })
            .as_ref()
    }
    /// The key orders of the map literals of the scripts run so far (for table columns).
    pub(crate) fn key_orders(&self) -> Arc<super::key_order::KeyOrders> {
        self.key_orders
            .read()
            .map(|k| Arc::clone(&k))
            .unwrap_or_default()
    }
    pub(crate) fn progress(&self) -> Option<ProgressFn> {
        self.progress.read().ok().and_then(|p| p.clone())
    }
    fn print(&self, text: &str) {
        let sink = self.print.read().ok().and_then(|p| p.clone());
        match sink {
            Some(f) => f(text),
            None => {
                if let Ok(mut p) = self.printed.lock() {
                    p.push(text.to_string());
                }
            }
        }
    }
}

/// The smallest stack of the thread every script is parsed and run on, and of each family
/// worker (see [`script_stack_bytes`]). Deep nesting (calls, expressions) ends with a clear
/// error long before it fills this; the memory is reserved, not used, until a script goes deep.
pub const SCRIPT_STACK_BYTES: usize = 256 << 20;

/// The largest script stack [`script_stack_bytes`] reserves per thread (2 GiB).
pub const MAX_SCRIPT_STACK_BYTES: usize = 2 << 30;

/// Stack bytes reserved per unit of the memory budget. A chain of closures costs heap and,
/// when it is dropped (by Rhai, recursively), stack; measured in a debug build here, the
/// worst shapes cost at most about 3 bytes of stack per byte of heap (`let d = [[c]]; c = || d`:
/// about 190 B of heap and 470 B of stack per level; six arrays per level: about 340 B and
/// 1 KB). Eight leaves more than twice that as margin.
const STACK_PER_BUDGET_BYTE: usize = 8;

/// The stack of the script thread and of each family worker for a memory budget of
/// `max_memory_bytes`: eight bytes per byte of budget, at least [`SCRIPT_STACK_BYTES`] and at
/// most [`MAX_SCRIPT_STACK_BYTES`]. Whatever a script can build within the budget, Rhai can
/// then drop recursively without overflowing the stack, for budgets up to 256 MiB (the
/// default is 128 MiB: a 1 GiB stack). Above 256 MiB the stack stays at 2 GiB and a script
/// that nests closures over more than about 600 MiB may still overflow it (documented in
/// README, Reliability). The memory is reserved, not used, until a script goes deep.
pub fn script_stack_bytes(max_memory_bytes: usize) -> usize {
    max_memory_bytes
        .saturating_mul(STACK_PER_BUDGET_BYTE)
        .clamp(SCRIPT_STACK_BYTES, MAX_SCRIPT_STACK_BYTES)
}

/// The deepest call nesting the limits may allow: what [`SCRIPT_STACK_BYTES`] holds with a wide
/// margin in a debug build (measured here: 20,000 levels of a one-line recursive function run,
/// 60,000 overflow). A larger `max_call_levels` is lowered to this.
pub const MAX_CALL_DEPTH: usize = 5000;

/// The largest memory budget, in MiB, the command line allows (4 GiB).
pub const MAX_MEMORY_MIB: usize = 4096;

/// Runs `f` on a thread with a stack of `stack_bytes` ([`script_stack_bytes`]), so that no
/// script can overflow the caller's (smaller, unknown) stack and abort the process. Retries
/// with [`SCRIPT_STACK_BYTES`] when the address space cannot hold the full stack, and falls
/// back to the current thread if no thread can be started at all.
pub(crate) fn on_script_stack<R: Send>(stack_bytes: usize, f: impl FnOnce() -> R + Send) -> R {
    let job = Mutex::new(Some(f));
    let take = || job.lock().ok().and_then(|mut j| j.take());
    let spawned = std::thread::scope(|scope| {
        // the full stack first; if the address space is short (a `ulimit -v`), the smallest
        let spawn = |bytes: usize| {
            std::thread::Builder::new()
                .name("gapwise-script".into())
                .stack_size(bytes)
                .spawn_scoped(scope, || take().map(|f| f()))
        };
        let handle = spawn(stack_bytes)
            .or_else(|_| spawn(SCRIPT_STACK_BYTES.min(stack_bytes)))
            .ok()?;
        match handle.join() {
            Ok(r) => r,
            Err(panic) => std::panic::resume_unwind(panic),
        }
    });
    match spawned {
        Some(r) => r,
        // no thread could be started: run here, on the caller's stack
        None => match take() {
            Some(f) => f(),
            None => unreachable!("the job runs once"),
        },
    }
}

/// Frees values one level at a time, with a work list instead of recursion. Destructive: a
/// captured (shared) value is emptied through the first reference met, so every other
/// reference to it sees `()` — only for values nothing will read again (the end of a run).
fn dismantle(mut work: Vec<Dynamic>) {
    while let Some(mut v) = work.pop() {
        if v.is_shared() {
            if let Some(mut inner) = v.write_lock::<Dynamic>() {
                work.push(std::mem::take(&mut *inner));
            }
            continue;
        }
        if v.is_array() {
            if let Ok(mut a) = v.as_array_mut() {
                work.extend(std::mem::take(&mut *a));
            }
        } else if v.is_map() {
            if let Ok(mut m) = v.as_map_mut() {
                work.extend(std::mem::take(&mut *m).into_values());
            }
        } else if v.is_fnptr() {
            if let Some(mut f) = v.write_lock::<rhai::FnPtr>() {
                work.extend(f.iter_curry_mut().map(std::mem::take));
            }
        }
        drop(v);
    }
}

/// The error of a run that went over the memory budget.
pub(crate) fn memory_message(max: usize) -> String {
    format!(
        "script stopped: memory budget of {} MiB exceeded (values, map keys, curried and captured values all count; raise it with --max-memory-mib)",
        max >> 20
    )
}

/// The size of a table as text, roughly: every header and cell, numbers at 12 bytes each.
fn table_bytes(table: &Table) -> usize {
    let names = table.column_names();
    let header: usize = names.iter().map(|n| n.len() + 1).sum();
    let cells: usize = (0..table.len())
        .map(|i| {
            let errors = table.error(i).map_or(0, str::len);
            errors
                + names
                    .iter()
                    .map(|n| match table.get(i, n) {
                        Some(crate::report::Value::Text(t)) => t.len() + 3,
                        Some(_) => 12,
                        None => 1,
                    })
                    .sum::<usize>()
        })
        .sum();
    header + cells
}

fn text_key(text: &str) -> u64 {
    use std::hash::{Hash, Hasher};
    let mut h = std::collections::hash_map::DefaultHasher::new();
    text.hash(&mut h);
    h.finish()
}

/// Cells of a table that read `fail` (a failed check's status or a worst status).
fn failed_verdicts(table: &Table) -> usize {
    let names = table.column_names().to_vec();
    (0..table.len())
        .map(|i| {
            names
                .iter()
                .filter(|n| {
                    matches!(table.get(i, n), Some(crate::report::Value::Text(t)) if t == "fail")
                })
                .count()
        })
        .sum()
}

/// A text output a script handed to the runner (a report, an SVG plot).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OutputText {
    /// File stem.
    pub name: String,
    /// File extension without the dot (`svg`, `md`, `html`, `txt`).
    pub extension: String,
    /// The content.
    pub text: String,
}

/// A script error with its place: message, source name, line, column and the source line.
#[derive(Clone, Debug, PartialEq)]
pub struct ScriptError {
    /// The message, lowercase where it comes from gapwise.
    pub message: String,
    /// Name of the source (file name, `<prompt>`, `<eval>`).
    pub source_name: String,
    /// Line, from 1, if known.
    pub line: Option<usize>,
    /// Column, from 1, if known.
    pub column: Option<usize>,
    /// The source line, if known.
    pub source_line: Option<String>,
    /// True when the input ended inside an open bracket, block or string.
    pub incomplete: bool,
}

impl ScriptError {
    /// An error at a position of a source.
    pub(crate) fn at(message: String, pos: Position, source: &str, source_name: &str) -> Self {
        Self::locate(message, pos, source, source_name)
    }

    fn locate(message: String, pos: Position, source: &str, source_name: &str) -> Self {
        let line = pos.line();
        let mut column = pos.position();
        let mut source_line =
            line.and_then(|l| source.lines().nth(l.saturating_sub(1)).map(str::to_string));
        if let Some(text) = &source_line {
            let (shown, col) = elide_line(text, column.unwrap_or(1));
            source_line = Some(shown);
            column = column.map(|_| col);
        }
        Self {
            message: elide_message(&message),
            source_name: source_name.to_string(),
            line,
            column,
            source_line,
            incomplete: false,
        }
    }

    pub(crate) fn from_parse(e: &ParseError, source: &str, source_name: &str) -> Self {
        let incomplete = is_incomplete(e, source);
        let mut s = Self::locate(e.err_type().to_string(), e.position(), source, source_name);
        s.incomplete = incomplete;
        s
    }

    pub(crate) fn from_eval(
        e: &EvalAltResult,
        source: &str,
        source_name: &str,
        limits: &EngineLimits,
    ) -> Self {
        let mut context = Vec::new();
        let mut pos = e.position();
        let mut cur = e;
        loop {
            match cur {
                EvalAltResult::ErrorInFunctionCall(name, _, inner, p) => {
                    if !name.starts_with("anon$") {
                        context.push(format!("in `{name}`"));
                    }
                    if !p.is_none() {
                        pos = *p;
                    }
                    cur = inner;
                }
                EvalAltResult::ErrorInModule(_, inner, _) => cur = inner,
                _ => break,
            }
        }
        if !cur.position().is_none() {
            pos = cur.position();
        }
        let base = match cur {
            EvalAltResult::ErrorRuntime(d, _) => d.to_string(),
            EvalAltResult::ErrorTerminated(d, _) => d.to_string(),
            EvalAltResult::ErrorTooManyOperations(_) => format!(
                "script stopped: more than {} operations (raise the limit with --max-operations)",
                limits.max_operations
            ),
            EvalAltResult::ErrorStackOverflow(_) => format!(
                "script stopped: calls nested deeper than {} levels (raise the limit with --max-call-depth)",
                limits.max_call_levels
            ),
            EvalAltResult::ErrorDataTooLarge(what, _) => format!(
                "script stopped: {what} exceeds its size limit (strings {} bytes, arrays {} items, maps {} keys)",
                limits.max_string_size, limits.max_array_size, limits.max_map_size
            ),
            EvalAltResult::ErrorTooManyModules(_) | EvalAltResult::ErrorModuleNotFound(..) => {
                "scripts cannot import modules or files; load a recipe with `gapwise run` or `:load`".to_string()
            }
            other => {
                let text = other.to_string();
                let suffix = format!(" ({})", other.position());
                text.strip_suffix(&suffix).map(str::to_string).unwrap_or(text)
            }
        };
        let message = if context.is_empty() {
            base
        } else {
            format!("{base} ({})", context.join(", "))
        };
        Self::locate(message, pos, source, source_name)
    }
}

/// Longest source line an error shows whole; a longer one shows a window around the column.
const SHOWN_LINE_CHARS: usize = 120;
/// Longest message shown whole; a longer one (a huge input repeated) is cut in the middle.
const SHOWN_MESSAGE_CHARS: usize = 600;

/// A window of a long source line around the error's column, with `…` where it was cut, and
/// the column within the window.
fn elide_line(line: &str, column: usize) -> (String, usize) {
    let chars: Vec<char> = line.chars().collect();
    if chars.len() <= SHOWN_LINE_CHARS {
        return (line.to_string(), column);
    }
    let col = column.saturating_sub(1).min(chars.len());
    let start = col.saturating_sub(SHOWN_LINE_CHARS / 2);
    let end = (start + SHOWN_LINE_CHARS).min(chars.len());
    let mut shown = String::new();
    let mut new_col = col - start + 1;
    if start > 0 {
        shown.push('…');
        new_col += 1;
    }
    shown.extend(&chars[start..end]);
    if end < chars.len() {
        shown.push('…');
    }
    (shown, new_col)
}

/// A message of at most about [`SHOWN_MESSAGE_CHARS`] characters, cut in the middle.
fn elide_message(message: &str) -> String {
    let n = message.chars().count();
    if n <= SHOWN_MESSAGE_CHARS {
        return message.to_string();
    }
    let head: String = message.chars().take(SHOWN_MESSAGE_CHARS / 2).collect();
    let tail: String = message.chars().skip(n - SHOWN_MESSAGE_CHARS / 2).collect();
    format!(
        "{head} … ({} characters left out) … {tail}",
        n - SHOWN_MESSAGE_CHARS
    )
}

fn is_incomplete(e: &ParseError, source: &str) -> bool {
    match e.err_type() {
        ParseErrorType::UnexpectedEOF => true,
        ParseErrorType::MissingToken(..) => {
            // the parser reached the end of the input while a bracket was open
            let text = source.trim_end();
            let last_line = text.lines().count().max(1);
            let last_len = text.lines().last().map_or(0, |l| l.chars().count());
            match (e.position().line(), e.position().position()) {
                (Some(l), _) if l > last_line => true,
                (Some(l), Some(c)) => l == last_line && c > last_len,
                (Some(l), None) => l >= last_line,
                (None, _) => true,
            }
        }
        ParseErrorType::BadInput(rhai::LexError::UnterminatedString) => true,
        _ => false,
    }
}

impl fmt::Display for ScriptError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "error: {}", self.message)?;
        if let (Some(l), Some(src)) = (self.line, &self.source_line) {
            let col = self.column.unwrap_or(1);
            writeln!(f, "  --> {}:{}:{}", self.source_name, l, col)?;
            let gutter = l.to_string().len();
            writeln!(f, "{:gutter$} |", "")?;
            writeln!(f, "{l} | {src}")?;
            write!(f, "{:gutter$} | {}^", "", " ".repeat(col.saturating_sub(1)))?;
        } else if let Some(l) = self.line {
            write!(f, "  --> {}:{}", self.source_name, l)?;
        }
        Ok(())
    }
}

impl std::error::Error for ScriptError {}

/// The scripting host: one engine, built once, immutable after construction, with the
/// gapwise functions, unit constants and sandbox limits. Runs on one host are sequential
/// (outputs and printed lines are collected per host); family variants run in parallel.
pub struct ScriptHost {
    engine: Engine,
    state: Arc<HostState>,
    docs: Vec<&'static FunctionDoc>,
    limits: EngineLimits,
    protected: super::recipe::ProtectedNames,
}

impl ScriptHost {
    /// Builds the engine with the given limits: no module imports, no file, network or
    /// environment access, `eval` disabled, every limit set, a wall-clock budget enforced
    /// through the progress callback.
    pub fn new(limits: EngineLimits) -> Self {
        Self::with_extensions(limits, |_| {})
    }

    /// Builds the engine like [`ScriptHost::new`], then lets the embedding program register
    /// its own functions and types (a company's house calculations) before the engine is
    /// frozen. Functions added here have no help entry unless the program documents them.
    pub fn with_extensions(mut limits: EngineLimits, extend: impl FnOnce(&mut Engine)) -> Self {
        limits.max_call_levels = limits.max_call_levels.min(MAX_CALL_DEPTH);
        let state = Arc::new(HostState::new(&limits));
        let mut engine = Engine::new_raw();
        {
            use rhai::packages::Package;
            rhai::packages::StandardPackage::new().register_into_engine(&mut engine);
        }
        engine.set_module_resolver(rhai::module_resolvers::DummyModuleResolver::new());
        engine.set_max_modules(0);
        engine.disable_symbol("eval");
        engine.set_max_operations(limits.max_operations);
        engine.set_max_call_levels(limits.max_call_levels);
        engine.set_max_expr_depths(limits.max_expr_depth, limits.max_function_expr_depth);
        engine.set_max_string_size(limits.max_string_size);
        engine.set_max_array_size(limits.max_array_size);
        engine.set_max_map_size(limits.max_map_size);
        engine.set_max_variables(limits.max_variables);
        engine.set_max_functions(limits.max_functions);
        engine.set_optimization_level(rhai::OptimizationLevel::Simple);
        // whole-number division gives the real quotient: built-in operators must not bypass
        // the registered ones
        engine.set_fast_operators(false);
        let st = state.clone();
        let max_memory = limits.max_memory_bytes;
        engine.on_progress(move |ops| {
            if let Some(used) = super::memory::allocated_bytes() {
                if used > max_memory {
                    return Some(Dynamic::from(memory_message(max_memory)));
                }
            }
            if ops % OPERATION_STEP != 0 {
                return None;
            }
            st.count_operations()
                .or_else(|| st.should_stop())
                .map(Dynamic::from)
        });
        let st = state.clone();
        engine.on_print(move |s| st.print(s));
        let st = state.clone();
        engine.on_debug(move |s, _, pos| st.print(&format!("[debug {pos}] {s}")));
        let mut docs = Vec::new();
        super::register_all(&mut engine, &mut docs, &state, &limits);
        extend(&mut engine);
        let protected = super::recipe::ProtectedNames::from_engine(&engine);
        Self {
            engine,
            state,
            docs,
            limits,
            protected,
        }
    }

    /// The engine, for embedding (compile and call functions directly).
    pub fn engine(&self) -> &Engine {
        &self.engine
    }
    /// The limits the engine was built with.
    pub fn limits(&self) -> &EngineLimits {
        &self.limits
    }
    /// Help of every registered function.
    pub fn docs(&self) -> &[&'static FunctionDoc] {
        &self.docs
    }
    /// Help of one function.
    pub fn doc(&self, name: &str) -> Option<&'static FunctionDoc> {
        self.docs.iter().find(|d| d.name == name).copied()
    }
    /// Names of the unit constants scripts can use (`V`, `mA`, `uF`, …).
    pub fn constant_names(&self) -> Vec<&'static str> {
        super::api_units::constant_names()
    }
    /// A flag that stops the running evaluation when set (the prompt sets it on Ctrl-C); the
    /// script then ends with the error "script interrupted". Cleared when a run starts.
    pub fn interrupt_flag(&self) -> Arc<AtomicBool> {
        self.state.interrupt.clone()
    }
    /// Sends printed lines to a callback instead of collecting them.
    pub fn set_print(&self, f: Option<PrintFn>) {
        if let Ok(mut p) = self.state.print.write() {
            *p = f;
        }
    }
    /// Sets the callback told about family progress.
    pub fn set_progress(&self, f: Option<ProgressFn>) {
        if let Ok(mut p) = self.state.progress.write() {
            *p = f;
        }
    }
    /// Warnings since the last call, each once: keys given to a function that the
    /// configuration does not use (they were still checked). The runner prints them on stderr.
    pub fn take_warnings(&self) -> Vec<String> {
        self.state
            .warnings
            .lock()
            .map(|mut w| std::mem::take(&mut *w))
            .unwrap_or_default()
    }
    /// Lines printed since the last call (when no print callback is set).
    pub fn take_printed(&self) -> Vec<String> {
        self.state
            .printed
            .lock()
            .map(|mut p| std::mem::take(&mut *p))
            .unwrap_or_default()
    }
    /// Tables a script handed to `output_table` since the last call, in order.
    pub fn take_outputs(&self) -> Vec<(String, Table)> {
        self.state
            .outputs
            .lock()
            .map(|mut o| std::mem::take(&mut *o))
            .unwrap_or_default()
    }

    /// Text outputs (reports, plots) a script handed to `output_text` since the last call.
    pub fn take_texts(&self) -> Vec<OutputText> {
        self.state
            .texts
            .lock()
            .map(|mut o| std::mem::take(&mut *o))
            .unwrap_or_default()
    }
    /// Failed design-rule checks in the outputs handed to the runner since the last call
    /// (tables and reports; for the runner's strict mode). Checks that are made but never
    /// reach an output do not count.
    pub fn take_failed_checks(&self) -> usize {
        self.state.failed_checks.swap(0, Ordering::Relaxed)
    }

    /// Compiles a script; `source_name` appears in error messages. A script that redefines
    /// a built-in function or names a variable like a unit constant is refused here.
    pub fn compile(&self, source: &str, source_name: &str) -> Result<AST, ScriptError> {
        let ast = on_script_stack(self.state.stack_bytes, || self.engine.compile(source))
            .map_err(|e| ScriptError::from_parse(&e, source, source_name))?;
        self.protected.check(&ast, source, source_name)?;
        Ok(ast)
    }

    /// The parameters a compiled recipe declares with `param(...)` at its top level, with
    /// their defaults, found by running only those declarations (the recipe itself does not
    /// run).
    pub fn recipe_params(
        &self,
        ast: &AST,
        source: &str,
        source_name: &str,
    ) -> Result<Vec<super::recipe::RecipeParam>, ScriptError> {
        let decl = super::recipe::declarations_only(ast);
        let saved = self.take_overrides();
        let r = self.run(&decl, &mut Scope::new(), source, source_name);
        self.set_overrides(saved);
        let _ = self.take_printed();
        r.map(drop)?;
        Ok(self.take_params())
    }

    /// Gives declared parameters their `--set` values for the next runs.
    pub fn set_overrides(&self, values: std::collections::HashMap<String, Dynamic>) {
        if let Ok(mut o) = self.state.overrides.write() {
            *o = values;
        }
    }
    fn take_overrides(&self) -> std::collections::HashMap<String, Dynamic> {
        self.state
            .overrides
            .write()
            .map(|mut o| std::mem::take(&mut *o))
            .unwrap_or_default()
    }
    /// Parameters declared since the last call.
    pub fn take_params(&self) -> Vec<super::recipe::RecipeParam> {
        self.state
            .params
            .lock()
            .map(|mut p| std::mem::take(&mut *p))
            .unwrap_or_default()
    }

    /// Compiles with the variables of a scope known (constants may be folded).
    pub fn compile_with_scope(
        &self,
        scope: &Scope,
        source: &str,
        source_name: &str,
    ) -> Result<AST, ScriptError> {
        let ast = on_script_stack(self.state.stack_bytes, || {
            self.engine.compile_with_scope(scope, source)
        })
        .map_err(|e| ScriptError::from_parse(&e, source, source_name))?;
        self.protected.check(&ast, source, source_name)?;
        Ok(ast)
    }

    /// Runs a compiled script in a scope under the time budget and returns its last value.
    /// `source` is used to show the failing line.
    pub fn run(
        &self,
        ast: &AST,
        scope: &mut Scope,
        source: &str,
        source_name: &str,
    ) -> Result<Dynamic, ScriptError> {
        if let Ok(mut c) = self.state.session_constants.write() {
            c.clear();
            for (name, constant, value) in scope.iter_raw() {
                if constant {
                    c.insert(name.to_string(), value.clone());
                }
            }
        }
        if let Ok(mut p) = self.state.params.lock() {
            p.clear();
        }
        self.state.output_bytes.store(0, Ordering::Relaxed);
        if let Ok(mut k) = self.state.key_orders.write() {
            Arc::make_mut(&mut k).learn(source, ast, self.limits.max_expr_depth);
        }
        self.state.start_clock();
        let r = on_script_stack(self.state.stack_bytes, || {
            let r = self.engine.eval_ast_with_scope::<Dynamic>(scope, ast);
            self.state.collect_warnings();
            r
        });
        self.state.stop_clock();
        r.map_err(|e| {
            self.with_signature(ScriptError::from_eval(
                &e,
                source,
                source_name,
                &self.limits,
            ))
        })
    }

    /// When a gapwise function was called with arguments of the wrong number or types, says
    /// what it takes instead of the engine's bare "function not found".
    fn with_signature(&self, mut e: ScriptError) -> ScriptError {
        if let Some(rest) = e.message.strip_prefix("Variable not found: ") {
            let name = rest.split([' ', '(']).next().unwrap_or(rest).to_string();
            let names: Vec<&str> = self
                .protected
                .constants
                .iter()
                .copied()
                .filter(|c| c.chars().count() >= 3)
                .collect();
            let hint = super::suggest::did_you_mean(&name, &names);
            let inside = e.message.contains(" (in `");
            e.message = format!(
                "no variable `{name}`{hint}{}",
                if inside {
                    " (a function sees its arguments, the recipe's top-level `const`s and `param`s, not the recipe's `let` variables)"
                } else {
                    ""
                }
            );
            return e;
        }
        let Some(rest) = e.message.strip_prefix("Function not found: ") else {
            return e;
        };
        let (name, given) = rest.split_once(' ').unwrap_or((rest, "()"));
        let Some(doc) = self.doc(name) else {
            if !self.protected.functions.contains(name) {
                let names: Vec<&str> = self
                    .protected
                    .functions
                    .iter()
                    .map(String::as_str)
                    .collect();
                let hint = super::suggest::did_you_mean(name, &names);
                if !hint.is_empty() {
                    e.message = format!("no function `{name}`{hint} (see `:functions`)");
                }
            }
            return e;
        };
        let params: Vec<String> = doc
            .params
            .iter()
            .map(|p| format!("{}: {}", p.name, p.kind.describe()))
            .collect();
        let tail = e
            .message
            .find(" (in `")
            .map(|i| e.message[i..].to_string())
            .unwrap_or_default();
        let given = given.strip_suffix(&tail).unwrap_or(given);
        // the engine's type names, in the words of the help
        let given = given
            .trim_start_matches('(')
            .trim_end_matches(')')
            .split(", ")
            .filter(|t| !t.is_empty())
            .map(|t| match t {
                "i64" => "integer",
                "f64" => "number",
                "&str | ImmutableString | String" => "text",
                "Quantity" => "quantity",
                "bool" => "flag",
                other => other,
            })
            .collect::<Vec<_>>()
            .join(", ");
        let given = if given.is_empty() {
            "no arguments".to_string()
        } else {
            format!("({given})")
        };
        e.message = format!(
            "`{name}` cannot take {given}; it takes {}({}) (see `:help {name}`){tail}",
            name,
            params.join(", ")
        );
        e
    }

    /// Compiles and runs a script in a fresh scope.
    pub fn eval(&self, source: &str, source_name: &str) -> Result<Dynamic, ScriptError> {
        let ast = self.compile(source, source_name)?;
        self.run(&ast, &mut Scope::new(), source, source_name)
    }

    /// Calls a script-defined function of a compiled script under the time budget.
    pub fn call(
        &self,
        ast: &AST,
        name: &str,
        args: impl rhai::FuncArgs + Send,
    ) -> Result<Dynamic, ScriptError> {
        self.state.start_clock();
        let r = on_script_stack(self.state.stack_bytes, || {
            let r = self
                .engine
                .call_fn::<Dynamic>(&mut Scope::new(), ast, name, args);
            self.state.collect_warnings();
            r
        });
        self.state.stop_clock();
        r.map_err(|e| self.with_signature(ScriptError::from_eval(&e, "", name, &self.limits)))
    }

    /// True when the text is a complete script, false while brackets, blocks or a string
    /// are still open (the prompt then reads another line). Uses the engine's own parser.
    pub fn is_complete(&self, source: &str) -> bool {
        match self.engine.compile(source) {
            Ok(_) => true,
            Err(e) => !is_incomplete(&e, source),
        }
    }

    /// Formats a script value for display: quantities with units, records one field per
    /// line, tables aligned.
    pub fn display(&self, value: &Dynamic) -> String {
        // deep values recurse: format on the script stack, not the caller's
        on_script_stack(self.state.stack_bytes, || {
            super::api_units::display_value(value)
        })
    }

    /// Drops values (a run's scope, its result) on a thread with the script stack: a deeply
    /// nested value (a chain of closures) drops recursively and could overflow the caller's
    /// smaller stack.
    pub fn release<T: Send>(&self, value: T) {
        on_script_stack(self.state.stack_bytes, move || drop(value));
    }

    /// Drops a finished run's scope for good (see [`ScriptHost::release_value`]).
    pub fn release_scope(&self, scope: Scope<'static>) {
        let values: Vec<Dynamic> = scope.into_iter().map(|(_, v, _)| v).collect();
        on_script_stack(self.state.stack_bytes, move || dismantle(values));
    }

    /// Drops a finished run's value for good without recursion (on the script stack, taking
    /// arrays, maps, curried and captured values apart one level at a time), so that a chain
    /// of closures deeper than any stack is freed without overflowing it. Values captured by
    /// closures are emptied in place: use it only when nothing that shares them will run
    /// again (the end of `gapwise run` or `eval`; a prompt session keeps its values, so it
    /// uses [`ScriptHost::release`]).
    pub fn release_value(&self, value: Dynamic) {
        on_script_stack(self.state.stack_bytes, move || dismantle(vec![value]));
    }
}

impl Default for ScriptHost {
    fn default() -> Self {
        Self::new(EngineLimits::default())
    }
}
