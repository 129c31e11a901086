//! Hostile scripts through the `gapwise` binary, each under a virtual-memory limit
//! (`ulimit -v`) and a wall-clock bound enforced by killing the process. They check that the
//! sandbox ends every run with a documented exit code (0, 1, 2 or 3) and a clear message —
//! never a panic (101), an abort (134) or a signal — not computed engineering values.
//!
//! The virtual limit must leave room for what a normal run reserves without using: the
//! script thread's stack (1 GiB at the default memory budget, `script_stack_bytes`), one such
//! stack per family worker, the heap up to the memory budget (peak about twice it) and the
//! binary itself.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Virtual memory for one run, in KiB (`ulimit -v`): a 1 GiB stack for the script thread and
/// for each family worker (one per core), plus 1.5 GiB for the heap and the binary.
fn virtual_kib() -> u64 {
    let workers = std::thread::available_parallelism().map_or(2, |n| n.get()) as u64;
    (1 + workers) * (1 << 20) + 1_500_000
}
/// A run still going after this long is killed and counts as a failure (a hang). Generous:
/// the runs themselves stop after their `--time-budget`; this only catches a run that does not.
const WALL_BOUND: Duration = Duration::from_secs(60);

struct Run {
    /// Exit code, or `None` when a signal ended the process.
    code: Option<i32>,
    stderr: String,
    stdout: String,
}

fn workspace_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the repl crate sits in the workspace")
        .to_path_buf()
}

/// Runs `gapwise ARGS` under `ulimit -v`, killing it after [`WALL_BOUND`] (then panics).
fn limited(args: &[&str]) -> Run {
    let mut c = Command::new("sh");
    c.arg("-c")
        .arg(format!("ulimit -v {}; exec \"$0\" \"$@\"", virtual_kib()))
        .arg(env!("CARGO_BIN_EXE_gapwise"))
        .args(args)
        .current_dir(workspace_root())
        .env("GAPWISE_HISTORY", "")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    let mut child = c.spawn().expect("sh starts");
    // drain the pipes on threads so that a chatty run cannot block on a full pipe
    let mut out = child.stdout.take().expect("stdout piped");
    let mut err = child.stderr.take().expect("stderr piped");
    let out_t = std::thread::spawn(move || {
        let mut s = Vec::new();
        let _ = out.read_to_end(&mut s);
        s
    });
    let err_t = std::thread::spawn(move || {
        let mut s = Vec::new();
        let _ = err.read_to_end(&mut s);
        s
    });
    let start = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().expect("wait works") {
            break s;
        }
        if start.elapsed() > WALL_BOUND {
            let _ = child.kill();
            let _ = child.wait();
            panic!(
                "gapwise {args:?} was still running after {} s and was killed",
                WALL_BOUND.as_secs()
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    let tail = |b: Vec<u8>| {
        let s = String::from_utf8_lossy(&b).into_owned();
        let cut = s.len().saturating_sub(2000);
        let cut = (cut..=s.len())
            .find(|&i| s.is_char_boundary(i))
            .unwrap_or(0);
        s[cut..].to_string()
    };
    Run {
        code: status.code(),
        stdout: tail(out_t.join().unwrap_or_default()),
        stderr: tail(err_t.join().unwrap_or_default()),
    }
}

/// Evaluates `script` with a small time budget under the limits.
fn hostile_eval(script: &str, extra: &[&str]) -> Run {
    let mut args = Vec::new();
    if !extra.contains(&"--time-budget") {
        args.extend_from_slice(&["--time-budget", "2"]);
    }
    args.extend_from_slice(extra);
    args.push("eval");
    args.push(script);
    limited(&args)
}

fn assert_documented_exit(script: &str, r: &Run) {
    let shown: String = script.chars().take(300).collect();
    match r.code {
        Some(0..=3) => {}
        other => panic!(
            "script `{shown}` ended with {other:?} (a panic, an abort or a signal)\nstderr: {}",
            r.stderr
        ),
    }
    assert!(
        !r.stderr.contains("panicked") && !r.stderr.contains("overflowed its stack"),
        "script `{shown}` panicked: {}",
        r.stderr
    );
}

#[test]
fn a_curry_bomb_meets_the_memory_budget() {
    // each step doubles the function pointer: 40 steps would be 2^40 copies
    let s = r#"let f = Fn("x"); for i in 0..40 { f = f.curry(f); } 1"#;
    let r = hostile_eval(s, &[]);
    assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
    assert!(
        r.stderr.contains("memory budget of 128 MiB exceeded")
            && r.stderr.contains("--max-memory-mib"),
        "{}",
        r.stderr
    );
}

#[test]
fn big_map_keys_meet_the_memory_budget() {
    // every key is a fresh 512 kB string: 10,000 of them would be 5 GB
    let s = r#"let mp = #{}; let k = "x"; for i in 0..19 { k += k; } for i in 0..10000 { mp[k + i] = 1; } mp.len()"#;
    let r = hostile_eval(s, &["--max-memory-mib", "64"]);
    assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
    assert!(
        r.stderr.contains("memory budget of 64 MiB exceeded"),
        "{}",
        r.stderr
    );
}

#[test]
fn captured_values_meet_the_memory_budget() {
    // closures capturing ever more 512 kB strings through a chain of captured arrays
    let s = r#"let k = "x"; for i in 0..19 { k += k; } let c = || 0; for i in 0..10000 { let d = [c, k + i]; c = || d; } 1"#;
    let r = hostile_eval(s, &["--max-memory-mib", "64"]);
    assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
    assert!(r.stderr.contains("memory budget of 64 MiB"), "{}", r.stderr);
}

#[test]
fn a_normal_script_runs_within_a_small_memory_budget() {
    let r = hostile_eval(
        r#"let mp = #{}; for i in 0..1000 { mp["k" + i] = i * V; } mp.len()"#,
        &["--max-memory-mib", "16"],
    );
    assert_eq!(r.code, Some(0), "stderr: {}", r.stderr);
    assert_eq!(r.stdout.trim(), "1000");
}

#[test]
fn output_text_meets_the_total_output_limit() {
    let s = r#"let k = "x"; for i in 0..19 { k += k; } for i in 0..100 { output_text("part" + i, "txt", k); } 1"#;
    let r = hostile_eval(s, &["--max-output-bytes", "2000000"]);
    assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
    assert!(
        r.stderr.contains("output_text `part3.txt`")
            && r.stderr.contains("output limit of 2000000 bytes")
            && r.stderr.contains("--max-output-bytes"),
        "{}",
        r.stderr
    );
}

#[test]
fn output_table_meets_the_total_output_limit() {
    let s = r#"let rows = []; for i in 0..2000 { rows.push(#{name: "row number " + i, v: i * V}); } output_table("big", table(rows)); 1"#;
    let r = hostile_eval(s, &["--max-output-bytes", "10000"]);
    assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
    assert!(
        r.stderr.contains("output_table `big`") && r.stderr.contains("output limit of 10000"),
        "{}",
        r.stderr
    );
    // the same table fits the default limit
    let r = hostile_eval(s, &[]);
    assert_eq!(r.code, Some(0), "stderr: {}", r.stderr);
}

#[test]
fn a_chain_of_a_million_closures_is_shown_and_dropped_without_overflow() {
    // dropped on the script stack, not the main thread's
    let s = "let c = || 0; for i in 0..1000000 { let d = c; c = || d; } c";
    let r = hostile_eval(s, &["--time-budget", "30"]);
    assert_documented_exit(s, &r);
    assert_eq!(r.code, Some(0), "stderr: {}", r.stderr);
    assert!(r.stdout.starts_with("Fn("), "{}", r.stdout);
}

#[test]
fn a_chain_of_ten_million_closures_meets_the_memory_budget_before_the_stack() {
    // each level costs about 120 bytes of heap and, when dropped, about as much stack; the
    // default budget stops the chain near a million levels, which the 256 MiB stack drops
    for s in [
        "let c = || 0; for i in 0..10000000 { let d = c; c = || d; } 1",
        "let a = []; for i in 0..10000000 { let d = a; let f = || d; a = [f]; } 1",
        "fn g() { let c = || 0; for i in 0..10000000 { let d = c; c = || d; } 1 } family(|v| g(), [1, 2])",
    ] {
        let r = hostile_eval(s, &["--time-budget", "30"]);
        assert_documented_exit(s, &r);
        assert_eq!(r.code, Some(1), "stderr: {}", r.stderr);
        assert!(r.stderr.contains("memory budget of 128 MiB"), "{}", r.stderr);
    }
}

#[test]
fn arrays_nested_in_a_closure_chain_are_freed_at_the_end_of_a_run() {
    // cheap in heap, deep in stack: freed level by level when the run ends
    for s in [
        "let c = || 0; for i in 0..10000000 { let d = [[c]]; c = || d; } 1",
        "let c = || 0; for i in 0..300000 { let d = [[c]]; c = || d; } c",
    ] {
        let r = hostile_eval(s, &["--time-budget", "30"]);
        assert_documented_exit(s, &r);
    }
}

/// A script that itself drops a chain of closures with arrays nested in each captured value
/// (about 190 bytes of heap but 470 bytes of stack per level, debug build; six arrays per
/// level: about 1 KB of stack) once overflowed the 256 MiB script stack within the default
/// memory budget and aborted; the stack is now sized from the budget (`script_stack_bytes`).
#[test]
fn a_closure_chain_dropped_by_the_script_ends_cleanly() {
    for s in [
        "let c = || 0; for i in 0..580000 { let d = [[c]]; c = || d; } c = (); 1",
        "let c = || 0; for i in 0..340000 { let d = [[[[[[c]]]]]]; c = || d; } c = (); 1",
    ] {
        let r = hostile_eval(s, &["--time-budget", "30"]);
        assert_documented_exit(s, &r);
    }
}

#[test]
fn a_deep_array_is_compared_printed_and_shown() {
    let s = "let a = []; for i in 0..5000 { a = [a]; } print(a); let shown = `${a}`; shown.len() == 10002 && a == a";
    let r = hostile_eval(s, &["--time-budget", "30"]);
    assert_eq!(r.code, Some(0), "stderr: {}", r.stderr);
    assert!(r.stdout.ends_with("]]]\ntrue\n"), "{}", r.stdout);
}

/// A small seeded generator (xorshift64*), so that every CI run tries the same scripts.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    fn pick<'a>(&mut self, xs: &[&'a str]) -> &'a str {
        xs[self.below(xs.len() as u64) as usize]
    }
    /// A size spread over orders of magnitude, from 1 to about `max`.
    fn size(&mut self, max: u64) -> u64 {
        let digits = (max as f64).log10();
        let e = self.below(1000) as f64 / 1000.0 * digits;
        10f64.powf(e) as u64
    }
}

/// One hostile script, built from a template with random sizes and a random final use.
fn hostile_script(rng: &mut Rng, recipes: &[String]) -> String {
    let use_value = |rng: &mut Rng, v: &str| {
        let ops = [
            "{v} == {v}",
            "print({v}); 1",
            "{v}",
            "`${v}`.len()",
            "{v}.to_string().len()",
            "output_text(\"t\", \"txt\", `${v}`); 1",
            "family(|x| #{n: 1}, [{v}, {v}])",
            "{v} = (); 1",
        ];
        rng.pick(&ops).replace("{v}", v)
    };
    match rng.below(12) {
        0 => {
            let n = rng.size(50_000);
            let tail = use_value(rng, "a");
            format!("let a = []; for i in 0..{n} {{ a = [a]; }} {tail}")
        }
        1 => {
            let n = rng.size(50_000);
            let tail = use_value(rng, "m0");
            format!("let m0 = #{{}}; for i in 0..{n} {{ m0 = #{{inner: m0}}; }} {tail}")
        }
        2 => {
            let body = rng.pick(&[
                "fn r(v) { family(|x| r(x), [v]) } r(1)",
                "fn r(v) { family(|x| r(x), [v, v]) } r(1)",
                "fn r(v) { r(v + 1) } r(1)",
                "fn r(v) { let f = |x| r(x); f.call(v) } r(1)",
                "family(|v| family(|w| family(|z| #{z: z}, [1, 2]), [1, 2]), [1, 2])",
            ]);
            body.to_string()
        }
        3 => {
            let n = rng.size(10_000_000);
            let tail = use_value(rng, "c");
            format!("let c = || 0; for i in 0..{n} {{ let d = c; c = || d; }} {tail}")
        }
        4 => {
            let n = rng.below(60) + 1;
            let tail = use_value(rng, "f");
            format!("let f = Fn(\"x\"); for i in 0..{n} {{ f = f.curry(f); }} {tail}")
        }
        5 => {
            let doublings = rng.below(24);
            let keys = rng.size(100_000);
            format!("let mp = #{{}}; let k = \"x\"; for i in 0..{doublings} {{ k += k; }} for i in 0..{keys} {{ mp[k + i] = k; }} mp.len()")
        }
        6 => {
            let doublings = rng.below(40);
            let tail = use_value(rng, "q");
            format!("let q = \"ab\"; for i in 0..{doublings} {{ q += q; }} {tail}")
        }
        7 => {
            let secs = rng.pick(&["1e300", "-1", "0.5", "3", "1e-9", "NaN", "1.0/0.0"]);
            format!("sleep({secs}); 1")
        }
        8 => {
            let depth = rng.size(100_000) as usize;
            let open = rng.pick(&["(", "[", "#{a:", "|| ", "{ ", "if true { "]);
            let close = match open {
                "(" => ")",
                "[" => "]",
                "#{a:" => "}",
                "{ " | "if true { " => " }",
                _ => "",
            };
            format!("{}1{}", open.repeat(depth), close.repeat(depth))
        }
        9 => {
            let depth = rng.size(20_000) as usize;
            format!("let f = {}0; 1", "|| ".repeat(depth))
        }
        10 => {
            let n = rng.size(5_000);
            format!("let k = \"x\"; for i in 0..16 {{ k += k; }} let c = || 0; for i in 0..{n} {{ let d = [c, k + i]; c = || d; }} 1")
        }
        _ => mutated_recipe(rng, recipes),
    }
}

/// A fragment of one of the repository's recipes with a few hostile edits.
fn mutated_recipe(rng: &mut Rng, recipes: &[String]) -> String {
    let text = &recipes[rng.below(recipes.len() as u64) as usize];
    let lines: Vec<&str> = text.lines().collect();
    let start = rng.below(lines.len() as u64) as usize;
    let len = rng.below(40) as usize + 1;
    let mut lines: Vec<String> = lines
        .iter()
        .skip(start)
        .take(len)
        .map(|l| l.to_string())
        .collect();
    for _ in 0..rng.below(4) + 1 {
        if lines.is_empty() {
            break;
        }
        let i = rng.below(lines.len() as u64) as usize;
        match rng.below(6) {
            0 => lines[i] = lines[i].replace(|c: char| c.is_ascii_digit(), "9"),
            1 => lines[i] = lines[i].replace("1", "1e308"),
            2 => lines[i] = lines[i].replace(" * ", " / 0.0 * "),
            3 => {
                let l = lines[i].clone();
                lines.insert(i, l);
            }
            4 => lines[i] = format!("{}{}", "[".repeat(rng.size(2000) as usize), lines[i]),
            _ => {
                let cut = rng.below(lines[i].len() as u64 + 1) as usize;
                let cut = (cut..=lines[i].len())
                    .find(|&c| lines[i].is_char_boundary(c))
                    .unwrap_or(0);
                lines[i].truncate(cut);
            }
        }
    }
    lines.join("\n")
}

#[test]
fn hostile_scripts_end_with_a_documented_exit_code() {
    let recipes: Vec<String> = std::fs::read_dir(workspace_root().join("scripts"))
        .expect("scripts folder")
        .filter_map(|e| e.ok())
        .filter(|e| e.path().extension().is_some_and(|x| x == "rhai"))
        .filter_map(|e| std::fs::read_to_string(e.path()).ok())
        .collect();
    assert!(!recipes.is_empty(), "the repository's recipes are found");
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    let dir = std::env::temp_dir().join(format!("gapwise-hostile-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut codes = [0usize; 4];
    for case in 0..28 {
        let script = hostile_script(&mut rng, &recipes);
        // run as a recipe file, with outputs into a folder, so that writing is covered too
        let file = dir.join(format!("case{case}.rhai"));
        std::fs::write(&file, &script).expect("recipe written");
        let out = dir.join(format!("out{case}"));
        let r = limited(&[
            "--time-budget",
            "1",
            "run",
            file.to_str().expect("utf-8 path"),
            "--out",
            out.to_str().expect("utf-8 path"),
        ]);
        assert_documented_exit(&script, &r);
        if let Some(c @ 0..=3) = r.code {
            codes[c as usize] += 1;
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
    // the generator reaches both ends: scripts that succeed and scripts that are stopped
    assert!(codes[0] > 0 && codes[1] > 0, "exit codes seen: {codes:?}");
}
