//! Output files written whole or not at all, their provenance, and the progress bar for
//! families.

use anyhow::{Context, Result};
use gapwise_core::report::WriteOptions;
use gapwise_core::script::ProgressFn;
use sha2::{Digest, Sha256};
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Writes every file into `dir` (created if missing) or none of them: each file goes to a
/// temporary name in the same folder first; only when all are written are they renamed to
/// their real names. On an error while writing, the temporaries are removed and nothing
/// else is touched. Returns the paths written.
pub fn write_files_atomically(dir: &Path, files: &[(String, Vec<u8>)]) -> Result<Vec<PathBuf>> {
    fs::create_dir_all(dir).with_context(|| format!("cannot create folder {}", dir.display()))?;
    let stale = remove_stale_temporaries(dir);
    if stale > 0 {
        eprintln!(
            "note: removed {stale} temporary file{} left in {} by an interrupted run",
            if stale == 1 { "" } else { "s" },
            dir.display()
        );
    }
    let mut temps: Vec<(PathBuf, PathBuf)> = Vec::new();
    let pid = std::process::id();
    let written = files.iter().try_for_each(|(name, bytes)| -> Result<()> {
        let target = dir.join(name);
        let temp = dir.join(format!(".{name}.{pid}.gapwise-tmp"));
        temps.push((temp.clone(), target.clone()));
        let mut f = fs::File::create(&temp)
            .with_context(|| format!("cannot write {}", target.display()))?;
        f.write_all(bytes)
            .and_then(|()| f.sync_all())
            .with_context(|| format!("cannot write {}", target.display()))?;
        Ok(())
    });
    if let Err(e) = written {
        remove_all(&temps);
        return Err(e);
    }
    for (i, (temp, target)) in temps.iter().enumerate() {
        if let Err(e) = fs::rename(temp, target) {
            remove_all(&temps[i..]);
            return Err(e).with_context(|| format!("cannot write {}", target.display()));
        }
    }
    Ok(temps.into_iter().map(|(_, t)| t).collect())
}

/// Removes temporaries (`.NAME.PID.gapwise-tmp`) that an interrupted run left in `dir`: those
/// of a process that no longer runs (on Linux, no `/proc/PID`; elsewhere, older than an
/// hour). A run in progress into the same folder keeps its own. Returns how many went.
pub fn remove_stale_temporaries(dir: &Path) -> usize {
    let Ok(entries) = fs::read_dir(dir) else {
        return 0;
    };
    let me = std::process::id();
    let mut removed = 0;
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().to_string();
        let Some(pid) = temporary_owner(&name) else {
            continue;
        };
        if pid == me || process_is_running(pid, &entry) {
            continue;
        }
        if fs::remove_file(entry.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// The process id in a temporary's name `.NAME.PID.gapwise-tmp`, if it is one.
fn temporary_owner(name: &str) -> Option<u32> {
    let rest = name.strip_prefix('.')?.strip_suffix(".gapwise-tmp")?;
    let (_, pid) = rest.rsplit_once('.')?;
    pid.parse().ok()
}

fn process_is_running(pid: u32, entry: &fs::DirEntry) -> bool {
    let proc = Path::new("/proc");
    if proc.join("self").exists() {
        return proc.join(pid.to_string()).exists();
    }
    entry
        .metadata()
        .and_then(|m| m.modified())
        .ok()
        .and_then(|t| t.elapsed().ok())
        .is_none_or(|age| age < Duration::from_secs(3600))
}

/// Where a run's outputs came from: written as `provenance.json` beside the files in
/// `--out`, and inside the JSON document on stdout. The runner fills it; a run that
/// ended early sets `incomplete`.
#[derive(Clone, Debug, PartialEq)]
pub struct Provenance {
    /// gapwise's version.
    pub gapwise_version: String,
    /// The recipe as given on the command line (`<stdin>` for `-`).
    pub recipe: String,
    /// SHA-256 of the recipe's bytes, lowercase hex.
    pub recipe_sha256: String,
    /// The `--set NAME=VALUE` arguments, in order, as given.
    pub sets: Vec<String>,
    /// When the run happened, UTC, RFC 3339 (`SOURCE_DATE_EPOCH` overrides the clock).
    pub date: String,
    /// The editions of the standards whose tables the results rest on.
    pub data_tables: Vec<String>,
    /// True when the recipe failed after handing over these outputs.
    pub incomplete: bool,
    /// The warnings the run printed (ignored keys, stringified fields, ...), in order, so
    /// a reviewer of the output folder sees them without the terminal log.
    pub warnings: Vec<String>,
}

impl Provenance {
    /// The sidecar's file name in `--out`.
    pub const FILE_NAME: &'static str = "provenance.json";

    /// The provenance of a run of `source` (read from `recipe`) with these `--set` values,
    /// dated now (or at `SOURCE_DATE_EPOCH`).
    pub fn new(recipe: &str, source: &str, sets: &[String]) -> Self {
        let seconds = std::env::var("SOURCE_DATE_EPOCH")
            .ok()
            .and_then(|s| s.trim().parse::<i64>().ok())
            .unwrap_or_else(|| {
                std::time::SystemTime::now()
                    .duration_since(std::time::UNIX_EPOCH)
                    .map(|d| d.as_secs() as i64)
                    .unwrap_or(0)
            });
        Self {
            gapwise_version: env!("CARGO_PKG_VERSION").to_string(),
            recipe: recipe.to_string(),
            recipe_sha256: sha256_hex(source.as_bytes()),
            sets: sets.to_vec(),
            date: rfc3339_utc(seconds),
            data_tables: gapwise_core::report::DATA_TABLE_EDITIONS
                .iter()
                .map(|s| s.to_string())
                .collect(),
            incomplete: false,
            warnings: Vec::new(),
        }
    }

    /// The sidecar document, layout `gapwise-provenance` version 1, with the SHA-256 of
    /// every file written beside it, as pretty JSON (keys in the documented order).
    pub fn to_json(&self, options: &WriteOptions, files: &[(String, Vec<u8>)]) -> String {
        let doc = ProvenanceJson {
            format: "gapwise-provenance",
            version: 1,
            gapwise_version: &self.gapwise_version,
            recipe: RecipeJson {
                path: &self.recipe,
                sha256: &self.recipe_sha256,
            },
            set: &self.sets,
            date: &self.date,
            data_tables: &self.data_tables,
            units: if options.si { "si" } else { "preferred" },
            exact: options.exact,
            complete: !self.incomplete,
            warnings: &self.warnings,
            files: files
                .iter()
                .map(|(name, bytes)| FileJson {
                    name,
                    sha256: sha256_hex(bytes),
                })
                .collect(),
        };
        serde_json::to_string_pretty(&doc).unwrap_or_else(|_| "{}".into())
    }
}

#[derive(serde::Serialize)]
struct ProvenanceJson<'a> {
    format: &'a str,
    version: u32,
    gapwise_version: &'a str,
    recipe: RecipeJson<'a>,
    set: &'a [String],
    date: &'a str,
    data_tables: &'a [String],
    units: &'a str,
    exact: bool,
    complete: bool,
    warnings: &'a [String],
    files: Vec<FileJson<'a>>,
}

#[derive(serde::Serialize)]
struct RecipeJson<'a> {
    path: &'a str,
    sha256: &'a str,
}

#[derive(serde::Serialize)]
struct FileJson<'a> {
    name: &'a str,
    sha256: String,
}

/// SHA-256 of `bytes` as lowercase hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Seconds since 1970-01-01 UTC as `YYYY-MM-DDTHH:MM:SSZ` (the proleptic Gregorian
/// calendar; days to civil date by the well-known era algorithm, common practice).
pub fn rfc3339_utc(seconds: i64) -> String {
    let days = seconds.div_euclid(86_400);
    let secs = seconds.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        secs / 3600,
        secs / 60 % 60,
        secs % 60
    )
}

fn remove_all(temps: &[(PathBuf, PathBuf)]) {
    for (temp, _) in temps {
        let _ = fs::remove_file(temp);
    }
}

/// A one-line progress bar on stderr for families. It appears once a family has run for
/// about half a second, and is cleared when the family ends or the run finishes.
#[derive(Clone, Default)]
pub struct Progress {
    state: Arc<Mutex<ProgressState>>,
}

#[derive(Default)]
struct ProgressState {
    /// The family being run: variant count, callbacks seen, most variants done, start.
    current: Option<(usize, usize, usize, Instant)>,
    shown: bool,
    last_draw: Option<Instant>,
    bar: Option<indicatif::ProgressBar>,
}

/// Whether a progress bar may be drawn: stderr is a terminal that moves the cursor
/// (`TERM` is not `dumb`).
pub fn progress_wanted() -> bool {
    use std::io::IsTerminal;
    std::io::stderr().is_terminal() && !dumb_terminal(std::env::var("TERM").ok().as_deref())
}

fn dumb_terminal(term: Option<&str>) -> bool {
    term == Some("dumb")
}

/// The bar's layout: rate and time left, coloured unless `NO_COLOR` is set (to anything
/// not empty, as no-color.org asks).
fn bar_template(no_color: bool) -> &'static str {
    if no_color {
        "family [{bar:24}] {pos}/{len} ({percent} %), {rate}, ETA {time_left}"
    } else {
        "family [{bar:24.cyan/blue}] {pos}/{len} ({percent} %), {rate}, ETA {time_left}"
    }
}

fn no_color() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

const SHOW_AFTER: Duration = Duration::from_millis(500);
const REDRAW_EVERY: Duration = Duration::from_millis(100);

impl Progress {
    /// The callback to hand to `ScriptHost::set_progress`.
    pub fn callback(&self) -> ProgressFn {
        let me = self.clone();
        Arc::new(move |done, total| me.update(done, total))
    }

    fn update(&self, done: usize, total: usize) {
        let Ok(mut s) = self.state.lock() else { return };
        // Variants finish in parallel, so callbacks arrive in any order: a family is over
        // when it has reported once per variant.
        let (count, seen, most, start) = match s.current {
            Some((t, seen, most, start)) if t == total => (t, seen + 1, most.max(done), start),
            _ => (total, 1, done, Instant::now()),
        };
        if seen >= count {
            s.current = None;
            clear(&mut s);
            return;
        }
        s.current = Some((count, seen, most, start));
        let now = Instant::now();
        let due = !matches!(s.last_draw, Some(t) if now - t < REDRAW_EVERY);
        if now - start >= SHOW_AFTER && due {
            s.shown = true;
            s.last_draw = Some(now);
            let bar = s
                .bar
                .get_or_insert_with(|| new_bar(count, most, now - start));
            bar.set_position(most as u64);
        }
    }

    /// Clears the bar's line so that a printed line does not mix with it; the bar comes
    /// back at its next update.
    pub fn clear_line(&self) {
        if let Ok(mut s) = self.state.lock() {
            clear(&mut s);
        }
    }

    /// Clears the bar (call at the end of a run, also after an error).
    pub fn finish(&self) {
        if let Ok(mut s) = self.state.lock() {
            s.current = None;
            clear(&mut s);
        }
    }
}

fn clear(s: &mut ProgressState) {
    if let Some(bar) = s.bar.take() {
        bar.finish_and_clear();
    }
    if s.shown {
        let _ = std::io::stderr().flush();
        s.shown = false;
    }
    s.last_draw = None;
}

/// A bar created when it first shows, at the variants already done, so that its rate
/// counts only what it saw.
/// Variants per second since the family started (the mean over the whole run, steadier
/// than a recent-window estimate when variants finish in bursts).
fn mean_rate(state: &indicatif::ProgressState) -> f64 {
    let secs = state.elapsed().as_secs_f64();
    if secs > 0.0 {
        state.pos() as f64 / secs
    } else {
        0.0
    }
}

fn new_bar(total: usize, done: usize, elapsed: Duration) -> indicatif::ProgressBar {
    let style = indicatif::ProgressStyle::with_template(bar_template(no_color()))
        .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
        .with_key(
            "rate",
            |state: &indicatif::ProgressState, w: &mut dyn std::fmt::Write| {
                let _ = write!(w, "{:.0} variants/s", mean_rate(state));
            },
        )
        .with_key(
            "time_left",
            |state: &indicatif::ProgressState, w: &mut dyn std::fmt::Write| {
                let rate = mean_rate(state);
                let left = state.len().unwrap_or(0).saturating_sub(state.pos()) as f64;
                let _ = if rate > 0.0 {
                    write!(w, "{:.0} s", (left / rate).ceil())
                } else {
                    write!(w, "?")
                };
            },
        )
        .progress_chars("#>-");
    indicatif::ProgressBar::with_draw_target(
        Some(total as u64),
        indicatif::ProgressDrawTarget::stderr(),
    )
    .with_style(style)
    .with_position(done as u64)
    .with_elapsed(elapsed)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("gapwise-output-{tag}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        d
    }

    #[test]
    fn writes_every_file_and_leaves_no_temporaries() {
        let d = temp_dir("ok");
        let files = vec![
            ("a.csv".to_string(), b"x\n1\n".to_vec()),
            ("b.md".to_string(), b"# b\n".to_vec()),
        ];
        let written = write_files_atomically(&d, &files).unwrap();
        assert_eq!(written.len(), 2);
        assert_eq!(fs::read(d.join("a.csv")).unwrap(), b"x\n1\n");
        let mut names: Vec<String> = fs::read_dir(&d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
            .collect();
        names.sort();
        assert_eq!(names, ["a.csv", "b.md"]);
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_failing_file_writes_nothing() {
        let d = temp_dir("fail");
        fs::create_dir_all(&d).unwrap();
        // a name inside a folder that does not exist cannot be created
        let files = vec![
            ("good.csv".to_string(), b"1\n".to_vec()),
            ("missing/bad.csv".to_string(), b"2\n".to_vec()),
        ];
        assert!(write_files_atomically(&d, &files).is_err());
        assert_eq!(fs::read_dir(&d).unwrap().count(), 0);
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn stale_temporaries_of_a_dead_run_go_and_a_live_runs_stay_issue_16() {
        let d = temp_dir("stale");
        fs::create_dir_all(&d).unwrap();
        // pid 0 never names a user process (no /proc/0); our own pid is alive
        let dead = d.join(".family.csv.0.gapwise-tmp");
        let live = d.join(format!(".other.csv.{}.gapwise-tmp", std::process::id()));
        let unrelated = d.join(".keep.0.txt");
        for p in [&dead, &live, &unrelated] {
            fs::write(p, b"partial").unwrap();
        }
        write_files_atomically(&d, &[("a.csv".to_string(), b"1\n".to_vec())]).unwrap();
        assert!(!dead.exists());
        assert!(live.exists());
        assert!(unrelated.exists());
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn temporary_names_are_recognised() {
        assert_eq!(temporary_owner(".a.csv.123.gapwise-tmp"), Some(123));
        assert_eq!(temporary_owner("a.csv"), None);
        assert_eq!(temporary_owner(".a.csv.x.gapwise-tmp"), None);
    }

    #[test]
    fn dates_and_hashes_for_provenance() {
        // 1970-01-01 and 2000-03-01 (leap year), by the Gregorian calendar
        assert_eq!(rfc3339_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(rfc3339_utc(951_868_800), "2000-03-01T00:00:00Z");
        assert_eq!(rfc3339_utc(86_399), "1970-01-01T23:59:59Z");
        // SHA-256 of the empty string (FIPS 180-4 test vector, value recalled from memory)
        assert_eq!(
            sha256_hex(b""),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }

    #[test]
    fn the_bar_honours_no_color_and_dumb_terminals() {
        assert!(!bar_template(true).contains(".cyan"));
        assert!(bar_template(false).contains(".cyan"));
        assert!(
            bar_template(true).contains("{time_left}") && bar_template(true).contains("{rate}")
        );
        assert!(dumb_terminal(Some("dumb")));
        assert!(!dumb_terminal(Some("xterm-256color")));
        assert!(!dumb_terminal(None));
    }

    #[test]
    fn progress_ends_a_family_after_one_report_per_variant() {
        let p = Progress::default();
        let f = p.callback();
        f(2, 3);
        f(3, 3);
        assert!(p.state.lock().unwrap().current.is_some());
        f(1, 3); // a late report from another thread
        assert!(p.state.lock().unwrap().current.is_none());
    }
}
