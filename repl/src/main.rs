//! `gapwise`: the prompt, the recipe runner and the help commands.
//!
//! This crate is the only place with IO: the terminal, files, the command line. The
//! calculations, the engine and the help text come from `gapwise-core`.

mod cli;
mod complete;
mod design_cmd;
mod docs_cmd;
mod output;
mod prompt;
mod runner;

use cli::{Command, LimitArgs};
use gapwise_core::script::{EngineLimits, ScriptError};
use std::process::ExitCode;
use std::time::Duration;

/// Counts heap bytes so that the engine can enforce the memory budget (`--max-memory-mib`).
#[global_allocator]
static ALLOC: gapwise_core::script::memory::CountingAllocator =
    gapwise_core::script::memory::CountingAllocator;

/// Why a command did not succeed; each maps to one exit code (documented in `--help`).
#[derive(Debug)]
pub enum Failure {
    /// The script failed (exit code 1).
    Script(ScriptError),
    /// A specification that is invalid or cannot be designed (exit code 1).
    Design(anyhow::Error),
    /// Bad usage or an IO error (exit code 2).
    Usage(anyhow::Error),
    /// `--strict`: design-rule checks in the outputs failed, or variants became error rows
    /// (exit code 3).
    Strict {
        /// Failed checks that reached an output.
        failed_checks: usize,
        /// Error rows in the output tables.
        error_rows: usize,
    },
}

impl From<anyhow::Error> for Failure {
    fn from(e: anyhow::Error) -> Self {
        Failure::Usage(e)
    }
}

impl From<ScriptError> for Failure {
    fn from(e: ScriptError) -> Self {
        Failure::Script(e)
    }
}

fn main() -> ExitCode {
    gapwise_core::script::memory::CountingAllocator::activate();
    let cli = cli::parse();
    let result = limits(&cli.limits)
        .map_err(Failure::Usage)
        .and_then(|limits| match cli.command {
            None => prompt::run(limits).map_err(Failure::Usage),
            Some(Command::Run(args)) => runner::run(&args, limits),
            Some(Command::Eval(args)) => runner::eval(&args, limits),
            Some(Command::Design(args)) => design_cmd::design(&args),
            Some(Command::Help { name }) => help(name.as_deref(), limits),
            Some(Command::Completions { shell }) => {
                let mut cmd = cli::command();
                clap_complete::generate(shell, &mut cmd, "gapwise", &mut std::io::stdout());
                Ok(())
            }
            Some(Command::Functions) => docs_cmd::functions(limits),
            Some(Command::Reference { write }) => docs_cmd::reference(write.as_deref(), limits),
        });
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Script(e)) => {
            eprintln!("{e}");
            ExitCode::from(1)
        }
        Err(Failure::Design(e)) => {
            eprintln!("error: {e:#}");
            ExitCode::from(1)
        }
        Err(Failure::Usage(e)) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
        Err(Failure::Strict {
            failed_checks,
            error_rows,
        }) => {
            let mut parts = Vec::new();
            if failed_checks > 0 {
                parts.push(format!(
                    "{failed_checks} design-rule check{} failed",
                    if failed_checks == 1 { "" } else { "s" }
                ));
            }
            if error_rows > 0 {
                parts.push(format!(
                    "{error_rows} variant{} failed (error rows)",
                    if error_rows == 1 { "" } else { "s" }
                ));
            }
            eprintln!("error: {} (--strict)", parts.join(" and "));
            ExitCode::from(3)
        }
    }
}

/// `gapwise help [NAME]`: a subcommand's help when NAME is one (`help run`), else the help
/// of a script function or unit constant; without NAME, the program's help.
fn help(name: Option<&str>, limits: EngineLimits) -> Result<(), Failure> {
    let mut cmd = cli::command();
    let sub = match name {
        None => None,
        Some(n) => match cmd.find_subcommand_mut(n) {
            Some(s) => Some(s.clone().bin_name(format!("gapwise {n}"))),
            None => return docs_cmd::help(n, limits),
        },
    };
    let text = match sub {
        Some(mut s) => s.render_long_help(),
        None => cmd.render_long_help(),
    };
    use std::io::Write;
    let _ = write!(std::io::stdout().lock(), "{text}");
    Ok(())
}

/// The engine limits: the core's defaults, raised or lowered by the limit flags.
fn limits(args: &LimitArgs) -> anyhow::Result<EngineLimits> {
    let mut l = EngineLimits::default();
    if let Some(n) = args.max_operations {
        anyhow::ensure!(n > 0, "--max-operations must be at least 1, got {n}");
        l.max_operations = n;
    }
    if let Some(n) = args.max_call_depth {
        anyhow::ensure!(
            (1..=gapwise_core::script::MAX_CALL_DEPTH).contains(&n),
            "--max-call-depth must be from 1 to {} (what the script thread's stack holds), got {n}",
            gapwise_core::script::MAX_CALL_DEPTH
        );
        l.max_call_levels = n;
    }
    if let Some(s) = args.time_budget {
        anyhow::ensure!(
            s.is_finite() && s > 0.0 && s <= 1.0e9,
            "--time-budget must be a positive number of seconds (at most 1e9 s), got {s}"
        );
        l.time_budget = Duration::from_secs_f64(s);
    }
    if let Some(n) = args.max_memory_mib {
        anyhow::ensure!(
            (16..=gapwise_core::script::MAX_MEMORY_MIB).contains(&n),
            "--max-memory-mib must be from 16 to {} MiB, got {n}",
            gapwise_core::script::MAX_MEMORY_MIB
        );
        l.max_memory_bytes = n << 20;
    }
    if let Some(n) = args.max_output_bytes {
        anyhow::ensure!(n > 0, "--max-output-bytes must be at least 1, got {n}");
        l.max_output_bytes = n;
    }
    Ok(l)
}
