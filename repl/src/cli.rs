//! The command line: every flag defined once, with its help next to it.

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// The exit codes, shown by `gapwise --help`, `gapwise run --help` and `gapwise eval --help`.
macro_rules! exit_codes {
    () => {
        "Exit codes:
  0  success
  1  script error (the message, with file, line, column and a caret, goes to stderr), or
     for `design` a specification that is invalid or cannot be designed
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
// `--version` also names the data-table editions: see `command()`
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
    /// Design a whole supply from a specification file (TOML or JSON, the keys of
    /// `gapwise help supply_design`): print the summary and the checks, and with --out write
    /// the Markdown and HTML reports, the pictures and the checks CSV.
    #[command(after_help = exit_codes!())]
    Design(DesignArgs),
    /// Evaluate one expression and print the result with units.
    #[command(after_help = exit_codes!())]
    Eval(EvalArgs),
    /// Show the help of a subcommand (`gapwise help run`) or of one script function.
    Help {
        /// A subcommand name (run, eval, help, functions, reference, completions), or a
        /// script function or unit constant; subcommand names are looked up first.
        name: Option<String>,
    },
    /// Print a shell completion script: `gapwise completions bash > /etc/bash_completion.d/gapwise`.
    Completions {
        /// The shell: bash, zsh or fish (also elvish, powershell).
        shell: clap_complete::Shell,
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
    /// Folder for the output tables (NAME.csv or NAME.json), texts (NAME.md, NAME.svg, …)
    /// and provenance.json; created if missing. Without it, tables print on stdout.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// How output tables are written: csv or json (files into --out, else on stdout), or
    /// an aligned table on stdout. Default: csv files with --out, an aligned table without.
    #[arg(long, value_enum)]
    pub format: Option<Format>,
    #[command(flatten)]
    pub write: WriteArgs,
    /// Without --out: also write the run's provenance (recipe hash, --set values, date,
    /// data-table editions) to FILE, as --out does into DIR/provenance.json.
    #[arg(long, value_name = "FILE", conflicts_with = "out")]
    pub provenance: Option<PathBuf>,
    /// Exit with code 3 when any design-rule check failed.
    #[arg(long)]
    pub strict: bool,
}

/// Arguments of `gapwise design`.
#[derive(Debug, Args)]
pub struct DesignArgs {
    /// The specification: a `.toml` or `.json` file with the sections power_stage,
    /// transformer, regulation, emi_filter and isolation.
    #[arg(value_name = "SPEC")]
    pub file: PathBuf,
    /// Folder for STEM.md, STEM.html (self-contained, inline SVG), STEM_bode.svg,
    /// STEM_emi_spectrum.svg, STEM_checks.csv and provenance.json (STEM: the spec's file
    /// name without extension); created if missing. Without it, only stdout.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub write: WriteArgs,
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

/// How numbers and units are written in CSV and JSON.
#[derive(Debug, Args)]
pub struct WriteArgs {
    /// Write every quantity column in coherent SI (V, A, H, F, Hz, m, K, …) instead of the
    /// preferred unit of its dimension (µH, µF, kHz, mm, °C; see the README).
    #[arg(long)]
    pub si: bool,
    /// Write numbers exactly (the shortest text that reads back as the same number) instead
    /// of rounded to 4 significant digits; with --si, the computed values bit for bit.
    #[arg(long)]
    pub exact: bool,
    /// Start CSV files with a UTF-8 byte-order mark (for spreadsheets that need one).
    #[arg(long)]
    pub bom: bool,
}

impl WriteArgs {
    /// The table writer's options.
    pub fn options(&self) -> gapwise_core::report::WriteOptions {
        gapwise_core::report::WriteOptions {
            si: self.si,
            exact: self.exact,
            bom: self.bom,
        }
    }
}

/// Limits for the engine; the defaults suit untrusted recipes.
#[derive(Debug, Args)]
pub struct LimitArgs {
    /// Operations one evaluation may perform (a family variant counts from its caller's count).
    #[arg(long, global = true, value_name = "N")]
    pub max_operations: Option<u64>,
    /// Wall-clock seconds one evaluation may take.
    #[arg(long, global = true, value_name = "SECONDS")]
    pub time_budget: Option<f64>,
    /// Depth of nested function calls.
    #[arg(long, global = true, value_name = "N")]
    pub max_call_depth: Option<usize>,
    /// Heap the whole process may hold while a script runs, in MiB (map keys, curried and
    /// captured values count too). Default 128, at most 4096; above the default, a script
    /// nesting millions of closures can overflow the script stack when they are dropped.
    #[arg(long, global = true, value_name = "MIB")]
    pub max_memory_mib: Option<usize>,
    /// Total bytes one run may hand to output_text and output_table.
    #[arg(long, global = true, value_name = "BYTES")]
    pub max_output_bytes: Option<usize>,
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

/// `--version` text: the version, then the editions of the standards whose tables gapwise
/// carries as data.
pub fn long_version() -> String {
    let mut s = format!("{}\ndata tables:", env!("CARGO_PKG_VERSION"));
    for e in gapwise_core::report::DATA_TABLE_EDITIONS {
        s.push_str("\n  ");
        s.push_str(e);
    }
    s
}

/// The command-line definition, with the long version text; help, completions and parsing
/// all come from it.
pub fn command() -> clap::Command {
    use clap::CommandFactory;
    let version: &'static str = Box::leak(long_version().into_boxed_str());
    Cli::command().long_version(version)
}

/// Parses the process's arguments (exits with usage help on errors, as clap does).
pub fn parse() -> Cli {
    use clap::FromArgMatches;
    let matches = command().get_matches();
    Cli::from_arg_matches(&matches).unwrap_or_else(|e| e.exit())
}

#[cfg(test)]
mod tests {
    #[test]
    fn the_command_line_definition_is_consistent() {
        super::command().debug_assert();
    }
}
