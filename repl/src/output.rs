//! Output files written whole or not at all, and the progress bar for families.

use anyhow::{Context, Result};
use gapwise_core::script::ProgressFn;
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
            draw(most, count, now - start);
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
    if s.shown {
        eprint!("\r\x1b[2K");
        let _ = std::io::stderr().flush();
        s.shown = false;
    }
    s.last_draw = None;
}

fn draw(done: usize, total: usize, elapsed: Duration) {
    const WIDTH: usize = 30;
    let filled = (done * WIDTH).checked_div(total).unwrap_or(0).min(WIDTH);
    let percent = (done * 100).checked_div(total).unwrap_or(0);
    eprint!(
        "\r\x1b[2Kfamily [{}{}] {done}/{total} variants ({percent} %), {:.1} s",
        "#".repeat(filled),
        "-".repeat(WIDTH - filled),
        elapsed.as_secs_f64()
    );
    let _ = std::io::stderr().flush();
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
