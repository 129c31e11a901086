//! The command line: every flag defined once, with its help next to it.

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// The exit codes, shown by `gapwise --help`, `gapwise run --help` and `gapwise eval --help`.
macro_rules! exit_codes {
    () => {
        "Exit codes:
  0  success
  1  script error (the message, with file, line, column and a caret, goes to stderr)
  2  usage error, or a file could not be read or written
  3  with --strict: the run succeeded but at least one design-rule check failed"
    };
}

const AFTER_HELP: &str = concat!(
    exit_codes!(),
    "

Environment:
  GAPWISE_HISTORY  file for the prompt's history (default: the user's data folder,
                   gapwise/history.txt); set it to an empty value to keep no history

Results are design aids: the applicable standard's current edition, local codes and a
qualified person decide; verify by measurement and hipot test."
);

/// Unit-checked design rules for small offline flyback supplies, with a scripting prompt.
///
/// Without a subcommand, gapwise opens the prompt.
#[derive(Debug, Parser)]
#[command(
    name = "gapwise",
    version,
    after_help = AFTER_HELP,
    disable_help_subcommand = true
)]
pub struct Cli {
    /// What to do; without one, the prompt opens.
    #[command(subcommand)]
    pub command: Option<Command>,
    /// Engine limits (apply to the prompt, `run` and `eval`).
    #[command(flatten)]
    pub limits: LimitArgs,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Run a recipe file (or `-` for stdin) and write its output tables.
    #[command(after_help = exit_codes!())]
    Run(RunArgs),
    /// Evaluate one expression and print the result with units.
    #[command(after_help = exit_codes!())]
    Eval(EvalArgs),
    /// Show the help of one script function.
    Help {
        /// The function (or unit constant) name.
        name: String,
    },
    /// List every script function, grouped by domain.
    Functions,
    /// Print the function reference as Markdown, or write it into a file.
    Reference {
        /// Replace the text between the lines `<!-- function-reference:start -->` and
        /// `<!-- function-reference:end -->` in this file instead of printing.
        #[arg(long, value_name = "FILE")]
        write: Option<PathBuf>,
    },
}

/// Arguments of `gapwise run`.
#[derive(Debug, Args)]
#[command(disable_help_flag = true)]
pub struct RunArgs {
    /// The recipe (`.rhai`); `-` reads it from stdin.
    #[arg(value_name = "FILE")]
    pub file: Option<String>,
    /// Show this help; with a recipe, also the parameters it declares (name, kind and unit,
    /// default, meaning).
    #[arg(short = 'h', long = "help")]
    pub help: bool,
    /// Give a parameter the recipe declares with `param(...)` a value: `NAME=VALUE`, read as
    /// the parameter's kind (a quantity of its dimension such as `switching_frequency="100 kHz"`,
    /// a number, true/false or text). An unknown name or a value of the wrong kind or
    /// dimension is a usage error. Repeatable.
    #[arg(long = "set", value_name = "NAME=VALUE")]
    pub set: Vec<String>,
    /// Folder for the output tables (NAME.csv or NAME.json) and texts (NAME.md, NAME.svg, …);
    /// created if missing. Without it, tables print on stdout.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// How output tables are written: csv or json files into --out, or an aligned table on stdout.
    #[arg(long, value_enum, default_value_t = Format::Csv)]
    pub format: Format,
    /// Exit with code 3 when any design-rule check failed.
    #[arg(long)]
    pub strict: bool,
}

/// Arguments of `gapwise eval`.
#[derive(Debug, Args)]
pub struct EvalArgs {
    /// The expression, e.g. `12 * V * (1.5 * A)`.
    #[arg(value_name = "EXPR", allow_hyphen_values = true)]
    pub expression: String,
    /// Define a constant before the expression: `name=value`, read as a quantity
    /// (`output_voltage="12 V"`), else true/false, else a number, else text. Repeatable.
    #[arg(long = "set", value_name = "NAME=VALUE")]
    pub set: Vec<String>,
}

/// Limits for the engine; the defaults suit untrusted recipes.
#[derive(Debug, Args)]
pub struct LimitArgs {
    /// Operations one evaluation may perform (each family variant counts on its own).
    #[arg(long, global = true, value_name = "N")]
    pub max_operations: Option<u64>,
    /// Wall-clock seconds one evaluation may take.
    #[arg(long, global = true, value_name = "SECONDS")]
    pub time_budget: Option<f64>,
    /// Depth of nested function calls.
    #[arg(long, global = true, value_name = "N")]
    pub max_call_depth: Option<usize>,
}

/// How `run` writes output tables.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// NAME.csv files, units in the headers.
    Csv,
    /// NAME.json files: columns with units, rows of numbers.
    Json,
    /// Aligned tables on stdout.
    Table,
}

#[cfg(test)]
mod tests {
    #[test]
    fn the_command_line_definition_is_consistent() {
        use clap::CommandFactory;
        super::Cli::command().debug_assert();
    }
}
