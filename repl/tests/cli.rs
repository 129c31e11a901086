//! The `gapwise` binary: exit codes, messages, output files and the prompt on piped stdin.
//! These check behaviour of the command line, not computed engineering values (those are
//! checked against their sources in `tests/integration/`).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// One run of the binary: exit code, stdout and stderr.
struct Run {
    code: i32,
    stdout: String,
    stderr: String,
}

fn finish(out: Output) -> Run {
    Run {
        code: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

fn command(args: &[&str]) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_gapwise"));
    c.args(args)
        .current_dir(workspace_root())
        .env("GAPWISE_HISTORY", "");
    c
}

/// Runs `gapwise ARGS` with `stdin` piped in.
fn gapwise_with_stdin(args: &[&str], stdin: &str, history: Option<&Path>) -> Run {
    let mut c = command(args);
    if let Some(h) = history {
        c.env("GAPWISE_HISTORY", h);
    }
    let mut child = c
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary starts");
    child
        .stdin
        .take()
        .expect("stdin is piped")
        .write_all(stdin.as_bytes())
        .expect("stdin takes the input");
    finish(child.wait_with_output().expect("the binary ends"))
}

fn gapwise(args: &[&str]) -> Run {
    gapwise_with_stdin(args, "", None)
}

fn workspace_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("repl/ sits in the workspace")
        .to_path_buf()
}

/// A fresh, empty folder under the system temp folder.
fn temp_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("gapwise-cli-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp folder");
    d
}

fn write_recipe(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).expect("recipe written");
    p
}

fn file_names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("folder readable")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// A family of three variants whose middle one throws.
const FAMILY_WITH_A_FAILURE: &str = r#"
let t = family(|v| {
    if v.output_voltage > 40 * V { throw "output voltage too high for this recipe"; }
    #{ power: v.output_voltage * v.output_current }
}, [
    #{ output_voltage: 5 * V, output_current: 2 * A },
    #{ output_voltage: 48 * V, output_current: 0.5 * A },
    #{ output_voltage: 12 * V, output_current: 1.25 * A },
]);
output_table("members", t);
"#;

#[test]
fn eval_prints_a_power_with_its_unit() {
    let r = gapwise(&["eval", "12 * V * (1.5 * A)"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(r.stdout.trim(), "18 W");
    assert!(r.stderr.is_empty(), "{}", r.stderr);
}

#[test]
fn eval_converts_to_a_chosen_unit() {
    let r = gapwise(&["eval", "(4.7 * uF).to(\"nF\")"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(r.stdout.trim(), "4700 nF");
}

#[test]
fn a_dimension_mismatch_is_a_script_error_with_a_caret() {
    let r = gapwise(&["eval", "1 * mH + 1 * A"]);
    assert_eq!(r.code, 1);
    assert!(r.stdout.is_empty(), "{}", r.stdout);
    assert!(r.stderr.starts_with("error: "), "{}", r.stderr);
    assert!(r.stderr.contains("<eval>:1:"), "{}", r.stderr);
    assert!(r.stderr.contains("1 | 1 * mH + 1 * A"), "{}", r.stderr);
    let caret = r.stderr.lines().last().unwrap_or_default();
    assert!(caret.trim_end().ends_with('^'), "{}", r.stderr);
}

#[test]
fn run_a_file_and_the_same_recipe_from_stdin() {
    let d = temp_dir("run");
    let recipe = "let p = 12 * V * (1.5 * A);\nprint(`power: ${p}`);\n";
    let path = write_recipe(&d, "power.rhai", recipe);
    let from_file = gapwise(&["run", path.to_str().unwrap()]);
    assert_eq!(from_file.code, 0, "{}", from_file.stderr);
    assert_eq!(from_file.stdout.trim(), "power: 18 W");
    let from_stdin = gapwise_with_stdin(&["run", "-"], recipe, None);
    assert_eq!(from_stdin.code, 0, "{}", from_stdin.stderr);
    assert_eq!(from_stdin.stdout, from_file.stdout);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn run_errors_name_the_file_and_line() {
    let d = temp_dir("run-error");
    let path = write_recipe(&d, "bad.rhai", "let a = 1 * V;\nlet b = a + 2 * A;\n");
    let r = gapwise(&["run", path.to_str().unwrap()]);
    assert_eq!(r.code, 1);
    assert!(r.stderr.contains("bad.rhai:2:"), "{}", r.stderr);
    assert!(r.stderr.contains("2 | let b = a + 2 * A;"), "{}", r.stderr);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn set_pushes_quantities_numbers_flags_and_text() {
    let r = gapwise(&[
        "eval",
        "--set",
        "output_voltage=12 V",
        "--set",
        "count=3",
        "--set",
        "hot=true",
        "--set",
        "series=E96",
        "`${output_voltage * count} ${hot} ${series}`",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(r.stdout.trim(), "36 V true E96");
}

/// A recipe with one declared parameter, used everywhere: top level, `fn`, closure, family.
const PARAMS: &str = r#"
const output_voltage = param("output_voltage", 12 * V, "output voltage of the member");
const series = param("series", "E96", "preferred-value series");
fn power(i) { output_voltage * i }
let rows = family(|i| #{inside: output_voltage, power: power(i)}, [1 * A, 2 * A]);
print(`${output_voltage} ${series} ${rows.column("inside")[1]} ${rows.column("power")[1]}`);
"#;

#[test]
fn set_replaces_a_declared_parameter_everywhere() {
    // issue 10: --set changed a name inside the family but not at top level
    let d = temp_dir("set");
    let path = write_recipe(&d, "set.rhai", PARAMS);
    let p = path.to_str().unwrap();
    let r = gapwise(&["run", p]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(r.stdout.trim(), "12 V E96 12 V 24 W");
    let r = gapwise(&[
        "run",
        p,
        "--set",
        "output_voltage=5 V",
        "--set",
        "series=E24",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(r.stdout.trim(), "5 V E24 5 V 10 W");
    let help = gapwise(&["run", p, "--help"]);
    assert_eq!(help.code, 0, "{}", help.stderr);
    assert!(
        help.stdout
            .contains("output_voltage  voltage (V) (default 12 V)")
            && help.stdout.contains("output voltage of the member"),
        "{}",
        help.stdout
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn bad_set_values_are_usage_errors() {
    let d = temp_dir("set-bad");
    let path = write_recipe(&d, "set.rhai", PARAMS);
    let p = path.to_str().unwrap();
    for (arg, expect) in [
        ("output_votage=5 V", "did you mean `output_voltage`?"),
        ("output_voltage=5", "no unit"),
        ("output_voltage=5 A", "expected a voltage"),
        ("mm=1 m", "has no parameter `mm`"),
        ("no equals", "name=value"),
    ] {
        let r = gapwise(&["run", p, "--set", arg]);
        assert_eq!(r.code, 2, "{arg}: {}", r.stderr);
        assert!(r.stderr.contains(expect), "{arg}: {}", r.stderr);
        assert!(r.stdout.is_empty(), "the recipe did not run: {}", r.stdout);
    }
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn a_failing_variant_becomes_an_error_row_in_the_csv() {
    let d = temp_dir("csv");
    let path = write_recipe(&d, "family.rhai", FAMILY_WITH_A_FAILURE);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(
        file_names(&out),
        ["members.csv", "provenance.json"],
        "no temporary files remain"
    );
    assert!(
        r.stderr.is_empty(),
        "nothing on a non-terminal stderr: {}",
        r.stderr
    );
    let csv = std::fs::read_to_string(out.join("members.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines[0], "output_voltage [V],output_current [A],power [W],error",
        "the recipe's order"
    );
    assert_eq!(lines.len(), 4, "{csv}");
    assert!(lines[1].starts_with("5,2,10,"), "{csv}");
    assert!(lines[2].contains("too high"), "{csv}");
    assert!(lines[3].starts_with("12,1.25,15,"), "{csv}");
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn json_output_carries_units_and_the_error() {
    let d = temp_dir("json");
    let path = write_recipe(&d, "family.rhai", FAMILY_WITH_A_FAILURE);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(file_names(&out), ["members.json", "provenance.json"]);
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("members.json")).unwrap())
            .expect("valid JSON");
    assert_eq!(json["format"], "gapwise-table");
    assert_eq!(json["version"], 1);
    let columns = json["columns"].as_array().unwrap();
    let at = |name: &str| columns.iter().position(|c| c["name"] == name).expect(name);
    let rows = json["rows"].as_array().expect("rows");
    assert_eq!(rows.len(), 3);
    assert!(rows[1][at("error")].as_str().unwrap().contains("too high"));
    assert_eq!(rows[2][at("power")].as_f64(), Some(15.0));
    assert_eq!(columns[at("power")]["unit"], "W");
    assert_eq!(columns[at("power")]["dimension"], "power");
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn without_out_tables_print_aligned_on_stdout() {
    let r = gapwise_with_stdin(&["run", "-"], FAMILY_WITH_A_FAILURE, None);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.starts_with("members:\n"), "{}", r.stdout);
    assert!(r.stdout.contains("too high"), "{}", r.stdout);
}

#[test]
fn a_script_error_before_any_output_writes_no_files() {
    let d = temp_dir("nothing");
    let recipe = format!("let broken = 1 * V + 1 * A;\n{FAMILY_WITH_A_FAILURE}\n");
    let path = write_recipe(&d, "broken.rhai", &recipe);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 1);
    assert!(!out.exists() || file_names(&out).is_empty());
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn a_recipe_failing_after_its_outputs_writes_them_marked_incomplete() {
    // issue 10: a recipe whose final assert failed wrote nothing at all
    let d = temp_dir("incomplete");
    let recipe =
        format!("{FAMILY_WITH_A_FAILURE}\nassert(false, \"a final check the recipe makes\");\n");
    let path = write_recipe(&d, "late.rhai", &recipe);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains("a final check the recipe makes"),
        "{}",
        r.stderr
    );
    let names = file_names(&out);
    assert!(names.contains(&"members.csv".to_string()), "{names:?}");
    let marker = std::fs::read_to_string(out.join("INCOMPLETE.txt")).unwrap();
    assert!(
        marker.contains("a final check the recipe makes"),
        "{marker}"
    );
    // a finished run into the same folder removes the marker
    let ok = write_recipe(&d, "ok.rhai", FAMILY_WITH_A_FAILURE);
    let r = gapwise(&["run", ok.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(!out.join("INCOMPLETE.txt").exists());
    std::fs::remove_dir_all(&d).unwrap();
}

const ONE_CHECK: &str = r#"
let rules = rule_book();
rules.add_rule(#{ id: "switch_voltage", description: "drain at most 85 % of 650 V",
                  reference: "house rule", limit: 552.5 * V });
const drain = param("drain", 480 * V, "drain voltage at high line");
let c = rules.check("switch_voltage", drain);
print(c);
output_table("checks", checks_table([c]));
"#;

#[test]
fn strict_exits_3_only_when_a_check_fails() {
    let d = temp_dir("strict");
    let path = write_recipe(&d, "check.rhai", ONE_CHECK);
    let p = path.to_str().unwrap();
    let failing = gapwise(&["run", p, "--strict", "--set", "drain=600 V"]);
    assert_eq!(failing.code, 3, "{}{}", failing.stdout, failing.stderr);
    assert!(
        failing.stderr.contains("1 design-rule check failed"),
        "{}",
        failing.stderr
    );
    let passing = gapwise(&["run", p, "--strict", "--set", "drain=480 V"]);
    assert_eq!(passing.code, 0, "{}", passing.stderr);
    let lenient = gapwise(&["run", p, "--set", "drain=600 V"]);
    assert_eq!(
        lenient.code, 0,
        "without --strict a failed check is reported, not fatal"
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn strict_fails_on_error_rows() {
    // issue 10: --strict exited 0 when variants failed
    let r = gapwise_with_stdin(&["run", "-", "--strict"], FAMILY_WITH_A_FAILURE, None);
    assert_eq!(r.code, 3, "{}", r.stderr);
    assert!(
        r.stderr.contains("1 variant failed (error rows)"),
        "{}",
        r.stderr
    );
    let r = gapwise_with_stdin(&["run", "-"], FAMILY_WITH_A_FAILURE, None);
    assert_eq!(r.code, 0, "{}", r.stderr);
}

#[test]
fn help_and_quit_without_the_colon_are_recognised() {
    let r = gapwise_with_stdin(&[], "help celsius\nquit\nprint(\"after quit\")\n", None);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("celsius(degrees)"), "{}", r.stdout);
    assert!(!r.stdout.contains("after quit"), "{}", r.stdout);
}

#[test]
fn usage_errors_exit_2() {
    let r = gapwise(&["frobnicate"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("frobnicate"), "{}", r.stderr);
    let r = gapwise(&["run", "/no/such/recipe.rhai"]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("cannot read /no/such/recipe.rhai"),
        "{}",
        r.stderr
    );
    let r = gapwise(&["run", "-", "--format", "xml"]);
    assert_eq!(r.code, 2);
    let r = gapwise(&["eval", "1", "--time-budget", "0"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("--time-budget"), "{}", r.stderr);
}

#[test]
fn help_lists_the_exit_codes() {
    for args in [&["--help"][..], &["run", "--help"], &["eval", "--help"]] {
        let r = gapwise(args);
        assert_eq!(r.code, 0);
        for code in [
            "0  success",
            "1  script error",
            "2  usage error",
            "3  with --strict",
        ] {
            assert!(r.stdout.contains(code), "{args:?} {code}: {}", r.stdout);
        }
    }
}

#[test]
fn limit_flags_reach_the_engine() {
    let r = gapwise(&["eval", "--max-operations", "1000", "loop {}"]);
    assert_eq!(r.code, 1);
    assert!(
        r.stderr.contains("more than 1000 operations"),
        "{}",
        r.stderr
    );
    let r = gapwise(&["eval", "--max-call-depth", "8", "fn f(n) { f(n + 1) } f(0)"]);
    assert_eq!(r.code, 1);
    assert!(r.stderr.contains("deeper than 8 levels"), "{}", r.stderr);
}

#[test]
fn the_operation_budget_covers_the_whole_run_across_family_variants() {
    // each variant alone stays well within the budget; five of them together do not (issue
    // 16: each variant used to count from its caller's count, not from one whole-run total)
    let s = "fn busy(v) { let x = 0; for i in 0..150000 { x += i; } #{v: v} } family(|v| busy(v), [1, 2, 3, 4, 5])";
    let one = gapwise(&[
        "eval",
        "--max-operations",
        "1000000",
        "busy(1); fn busy(v) { let x = 0; for i in 0..150000 { x += i; } #{v: v} }",
    ]);
    assert_eq!(one.code, 0, "{}", one.stderr);
    let r = gapwise(&["eval", "--max-operations", "1000000", s]);
    assert_eq!(r.code, 1, "{}", r.stdout);
    assert!(
        r.stderr
            .contains("more than 1000000 operations in the whole run"),
        "{}",
        r.stderr
    );
    let r = gapwise(&["eval", "--max-operations", "5000000", s]);
    assert_eq!(r.code, 0, "{}", r.stderr);
}

#[test]
fn help_shows_a_function_and_suggests_for_typos() {
    let r = gapwise(&["help", "skin_depth"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.starts_with("skin_depth("), "{}", r.stdout);
    assert!(r.stdout.contains("example:"), "{}", r.stdout);
    let r = gapwise(&["help", "skin_dept"]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("did you mean `skin_depth`?"),
        "{}",
        r.stderr
    );
}

#[test]
fn functions_are_listed_by_domain() {
    let r = gapwise(&["functions"]);
    assert_eq!(r.code, 0);
    assert!(r.stdout.contains("passives:"), "{}", r.stdout);
    assert!(r.stdout.contains("resistor_divider"), "{}", r.stdout);
}

#[test]
fn reference_write_replaces_only_between_the_markers() {
    let d = temp_dir("reference");
    let doc = d.join("doc.md");
    std::fs::write(
        &doc,
        "# Doc\n<!-- function-reference:start -->\nstale\n<!-- function-reference:end -->\nend\n",
    )
    .unwrap();
    let r = gapwise(&["reference", "--write", doc.to_str().unwrap()]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let text = std::fs::read_to_string(&doc).unwrap();
    assert!(text.starts_with("# Doc\n<!-- function-reference:start -->\n"));
    assert!(text.ends_with("<!-- function-reference:end -->\nend\n"));
    assert!(!text.contains("stale"));
    let printed = gapwise(&["reference"]).stdout;
    assert!(
        text.contains(printed.trim()),
        "the file holds the printed reference"
    );
    assert_eq!(file_names(&d), ["doc.md"], "no temporary files remain");

    let plain = d.join("plain.md");
    std::fs::write(&plain, "no markers here\n").unwrap();
    let r = gapwise(&["reference", "--write", plain.to_str().unwrap()]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("marker lines"), "{}", r.stderr);
    assert_eq!(
        std::fs::read_to_string(&plain).unwrap(),
        "no markers here\n"
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn the_prompt_keeps_variables_and_functions_across_lines() {
    let d = temp_dir("prompt");
    let history = d.join("sub").join("history.txt");
    let input = "\
let output_voltage = 12 * V
fn power(v, i) {
    v * i
}
power(output_voltage, 1.5 * A)
:vars
1 * mH + 1 * A
let mp = #{ a: 1,
           b: 2 };
mp.b
:frobnicate
:quit
print(\"after quit\")
";
    let r = gapwise_with_stdin(&[], input, Some(&history));
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("gapwise "), "banner: {}", r.stdout);
    assert!(
        r.stdout.contains("mains voltages are lethal"),
        "{}",
        r.stdout
    );
    assert!(r.stdout.contains("\n18 W\n"), "{}", r.stdout);
    assert!(r.stdout.contains("output_voltage = 12 V"), "{}", r.stdout);
    assert!(r.stdout.contains("fn power(v, i)"), "{}", r.stdout);
    assert!(r.stdout.contains("\n2\n"), "{}", r.stdout);
    assert!(!r.stdout.contains("after quit"), "{}", r.stdout);
    assert!(!r.stdout.contains('\x1b'), "no escape codes on a pipe");
    assert!(r.stderr.contains("1 | 1 * mH + 1 * A"), "{}", r.stderr);
    assert!(
        r.stderr.contains("unknown command `:frobnicate`"),
        "{}",
        r.stderr
    );
    let h = std::fs::read_to_string(&history).expect("history written");
    assert!(h.starts_with("#V2\n"), "{h}");
    assert!(h.contains("fn power(v, i) {\\n    v * i\\n}\n"), "{h}");
    assert!(h.contains(":quit"), "{h}");
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn an_error_inside_an_earlier_function_shows_that_functions_line() {
    let input = "fn g(x) {\n  let y = 2;\n  x + y * A\n}\nlet other = 1;\ng(1 * V)\n";
    let r = gapwise_with_stdin(&[], input, None);
    assert!(r.stderr.contains("(in `g`)"), "{}", r.stderr);
    assert!(r.stderr.contains("<prompt>, in `g`:3:"), "{}", r.stderr);
    assert!(r.stderr.contains("3 |   x + y * A"), "{}", r.stderr);
}

#[test]
fn the_prompt_loads_a_recipe_and_keeps_its_functions() {
    let d = temp_dir("load");
    let path = write_recipe(
        &d,
        "lib.rhai",
        "fn double(x) { 2 * x }\nlet base = 3 * V;\n",
    );
    let input = format!(
        ":load {}\ndouble(base)\n:help resistor_divider\n:help double\n:functions\n:constants\n",
        path.display()
    );
    let r = gapwise_with_stdin(&[], &input, None);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("\n6 V\n"), "{}", r.stdout);
    assert!(r.stdout.contains("resistor_divider("), "{}", r.stdout);
    assert!(
        r.stdout.contains("double(x)  (defined in this session)"),
        "{}",
        r.stdout
    );
    assert!(
        r.stdout.contains("defined in this session:\n  double(x)"),
        "{}",
        r.stdout
    );
    assert!(r.stdout.contains(" uF "), "{}", r.stdout);
    assert!(r.stderr.is_empty(), "{}", r.stderr);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn the_fernbank_family_recipe_writes_its_csv() {
    let d = temp_dir("fernbank");
    let r = gapwise(&[
        "run",
        "scripts/fernbank_family.rhai",
        "--out",
        d.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(file_names(&d), ["fernbank_family.csv", "provenance.json"]);
    let csv = std::fs::read_to_string(d.join("fernbank_family.csv")).unwrap();
    let header = csv.lines().next().unwrap_or_default();
    assert!(header.contains("output_voltage [V]"), "{header}");
    assert_eq!(csv.lines().count(), 6, "a header and five members: {csv}");
    std::fs::remove_dir_all(&d).unwrap();
}

const TABLE_AND_TEXT: &str = r##"
output_table("members", table([#{ output_voltage: 5 * V }, #{ output_voltage: 12 * V }]));
output_text("notes", "md", "# Notes\n");
"##;

#[test]
fn texts_go_into_out_and_format_table_prints_the_tables() {
    let d = temp_dir("texts");
    let path = write_recipe(&d, "texts.rhai", TABLE_AND_TEXT);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(
        file_names(&out),
        ["members.csv", "notes.md", "provenance.json"]
    );
    assert_eq!(
        std::fs::read_to_string(out.join("notes.md")).unwrap(),
        "# Notes\n"
    );
    let shown = d.join("shown");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        shown.to_str().unwrap(),
        "--format",
        "table",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(file_names(&shown), ["notes.md", "provenance.json"]);
    assert!(r.stdout.contains("output_voltage [V]"), "{}", r.stdout);
    let r = gapwise(&["run", path.to_str().unwrap()]);
    assert!(
        r.stderr.contains("not written without --out DIR: notes.md"),
        "{}",
        r.stderr
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn an_unwritable_out_folder_is_an_io_error_with_nothing_written() {
    let d = temp_dir("unwritable");
    let path = write_recipe(&d, "texts.rhai", TABLE_AND_TEXT);
    let blocker = d.join("a_file");
    std::fs::write(&blocker, "not a folder").unwrap();
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        blocker.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("cannot create folder"), "{}", r.stderr);
    assert_eq!(file_names(&d), ["a_file", "texts.rhai"]);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn an_unwritable_history_warns_once_and_the_prompt_goes_on() {
    let d = temp_dir("history");
    let blocker = d.join("a_file");
    std::fs::write(&blocker, "not a folder").unwrap();
    let history = blocker.join("history.txt");
    let r = gapwise_with_stdin(&[], "1 + 1\n2 + 2\n", Some(&history));
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stdout.contains("\n2\n") && r.stdout.contains("\n4\n"),
        "{}",
        r.stdout
    );
    assert_eq!(
        r.stderr.matches("cannot write the history").count(),
        1,
        "{}",
        r.stderr
    );
    std::fs::remove_dir_all(&d).unwrap();
}

// ---- issue 10 (outputs, CLI conventions) and issue 16 (output hygiene) ----

/// Reads CSV text with a real CSV reader: the header and the records.
fn read_csv(text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(text.as_bytes());
    let header = r
        .headers()
        .expect("a CSV header")
        .iter()
        .map(str::to_string)
        .collect();
    let rows = r
        .records()
        .map(|rec| {
            rec.expect("a CSV record")
                .iter()
                .map(str::to_string)
                .collect()
        })
        .collect();
    (header, rows)
}

const UNITS_RECIPE: &str = r#"
let t = table([
    #{ inductance: 9.6 * uH, rise: 30 * K, ambient: celsius(40), margin: db_from_power_ratio(4.0), turns: 12 },
    #{ inductance: 1.5 * mH, rise: 45 * K, ambient: celsius(55), margin: db_from_power_ratio(2.0), turns: 7 },
]);
output_table("units", t);
"#;

#[test]
fn csv_and_json_go_to_stdout_with_format_and_no_out_issue_10() {
    let d = temp_dir("stdout-formats");
    let path = write_recipe(&d, "u.rhai", UNITS_RECIPE);
    let r = gapwise(&["run", path.to_str().unwrap(), "--format", "csv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let (header, rows) = read_csv(&r.stdout);
    // the recipe's order, one unit per dimension whatever the values: 9.6 µH and 1.5 mH
    // share µH
    assert_eq!(
        header,
        [
            "inductance [µH]",
            "rise [K]",
            "ambient [°C]",
            "margin [dB]",
            "turns"
        ]
    );
    assert_eq!(rows[0], ["9.6", "30", "40", "6.021", "12"]);
    assert_eq!(rows[1], ["1500", "45", "55", "3.01", "7"]);
    let r = gapwise(&["run", path.to_str().unwrap(), "--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let doc: serde_json::Value = serde_json::from_str(&r.stdout).expect("one JSON document");
    assert_eq!(doc["format"], "gapwise-tables");
    assert_eq!(doc["provenance"]["format"], "gapwise-provenance");
    let t = &doc["tables"][0]["table"];
    assert_eq!(doc["tables"][0]["name"], "units");
    assert_eq!(t["columns"][0]["unit"], "µH");
    assert_eq!(t["columns"][0]["si_factor"], 1e-6);
    assert_eq!(t["columns"][2]["si_offset"], 273.15);
    assert!(
        t["rows"][0][4].is_i64(),
        "integers stay integers: {}",
        t["rows"][0]
    );
    assert_eq!(t["rows"][1][0].as_f64(), Some(1500.0));
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn si_exact_and_bom_flags_issue_10() {
    let d = temp_dir("si-exact");
    let path = write_recipe(&d, "u.rhai", UNITS_RECIPE);
    let out = d.join("out");
    let p = path.to_str().unwrap();
    let r = gapwise(&[
        "run",
        p,
        "--out",
        out.to_str().unwrap(),
        "--si",
        "--exact",
        "--bom",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let bytes = std::fs::read(out.join("units.csv")).unwrap();
    assert!(
        bytes.starts_with("\u{FEFF}".as_bytes()),
        "a byte-order mark first"
    );
    let text = String::from_utf8(bytes).unwrap();
    let (header, rows) = read_csv(text.trim_start_matches('\u{FEFF}'));
    assert_eq!(header[0], "inductance [H]");
    assert_eq!(header[2], "ambient [K]");
    // exact: the number reads back as the computed f64
    assert_eq!(rows[0][0].parse::<f64>().unwrap(), 9.6 * 1e-6);
    assert_eq!(rows[0][2].parse::<f64>().unwrap(), 40.0 + 273.15);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn provenance_names_the_recipe_hash_sets_and_files_issue_10() {
    let d = temp_dir("provenance");
    let recipe = format!("const count = param(\"count\", 1, \"a whole number\");\n{UNITS_RECIPE}");
    let path = write_recipe(&d, "u.rhai", &recipe);
    let out = d.join("out");
    let mut c = command(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--set",
        "count=3",
    ]);
    c.env("SOURCE_DATE_EPOCH", "951868800");
    let r = finish(c.output().unwrap());
    assert_eq!(r.code, 0, "{}", r.stderr);
    let p: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("provenance.json")).unwrap())
            .unwrap();
    assert_eq!(p["format"], "gapwise-provenance");
    assert_eq!(p["version"], 1);
    assert_eq!(p["gapwise_version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(p["date"], "2000-03-01T00:00:00Z");
    assert_eq!(p["set"][0], "count=3");
    assert_eq!(p["recipe"]["path"], path.to_str().unwrap());
    let hash = p["recipe"]["sha256"].as_str().unwrap();
    assert_eq!(hash.len(), 64);
    assert!(p["data_tables"]
        .as_array()
        .unwrap()
        .iter()
        .any(|e| e == "IEC 60664-1:2020"));
    assert_eq!(p["files"][0]["name"], "units.csv");
    // a changed recipe has another hash
    write_recipe(&d, "u.rhai", &format!("{UNITS_RECIPE}\n// changed\n"));
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let q: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("provenance.json")).unwrap())
            .unwrap();
    assert_ne!(q["recipe"]["sha256"].as_str().unwrap(), hash);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn every_output_reads_back_through_a_csv_and_a_json_reader_issue_10() {
    let d = temp_dir("round-trip");
    let mut recipes: Vec<String> = std::fs::read_dir(workspace_root().join("scripts"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "rhai"))
        .map(|p| format!("scripts/{}", p.file_name().unwrap().to_string_lossy()))
        .collect();
    recipes.sort();
    assert!(recipes.len() >= 6, "{recipes:?}");
    for recipe in &recipes {
        for format in ["csv", "json"] {
            let out = d.join(format!("{}-{format}", recipe.replace('/', "_")));
            let r = gapwise(&[
                "run",
                recipe,
                "--out",
                out.to_str().unwrap(),
                "--format",
                format,
            ]);
            assert_eq!(r.code, 0, "{recipe}: {}", r.stderr);
            for name in file_names(&out) {
                let text = std::fs::read_to_string(out.join(&name)).unwrap();
                if name.ends_with(".csv") {
                    let (header, rows) = read_csv(&text);
                    assert!(!header.is_empty(), "{name}");
                    for row in rows {
                        assert_eq!(row.len(), header.len(), "{name}: {row:?}");
                    }
                } else if name.ends_with(".json") {
                    let j: serde_json::Value = serde_json::from_str(&text).expect(&name);
                    if name != "provenance.json" {
                        let n = j["columns"].as_array().unwrap().len();
                        for row in j["rows"].as_array().unwrap() {
                            assert_eq!(row.as_array().unwrap().len(), n, "{name}");
                        }
                    }
                }
            }
        }
    }
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn one_or_two_threads_write_byte_identical_files_issue_10() {
    let d = temp_dir("threads");
    let mut outputs = Vec::new();
    for threads in ["1", "2"] {
        let out = d.join(format!("t{threads}"));
        let mut c = command(&[
            "run",
            "scripts/fernbank_family.rhai",
            "--out",
            out.to_str().unwrap(),
        ]);
        c.env("RAYON_NUM_THREADS", threads);
        let r = finish(c.output().unwrap());
        assert_eq!(r.code, 0, "{}", r.stderr);
        // the table files; provenance.json differs only by its date
        outputs.push(std::fs::read(out.join("fernbank_family.csv")).unwrap());
        let json = d.join(format!("j{threads}"));
        let mut c = command(&[
            "run",
            "scripts/fernbank_family.rhai",
            "--out",
            json.to_str().unwrap(),
            "--format",
            "json",
        ]);
        c.env("RAYON_NUM_THREADS", threads);
        assert_eq!(finish(c.output().unwrap()).code, 0);
        outputs.push(std::fs::read(json.join("fernbank_family.json")).unwrap());
    }
    assert_eq!(outputs[0], outputs[2], "CSV");
    assert_eq!(outputs[1], outputs[3], "JSON");
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn a_column_with_mixed_dimensions_fails_naming_column_and_rows_issue_16() {
    let d = temp_dir("mixed");
    let path = write_recipe(
        &d,
        "m.rhai",
        r#"output_table("mixed", table([#{x: 12 * V}, #{x: 3 * A}]));"#,
    );
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        d.join("out").to_str().unwrap(),
    ]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr
            .contains("column `x` mixes voltage (V) in row 0 and current (A) in row 1"),
        "{}",
        r.stderr
    );
    assert!(!d.join("out").exists(), "nothing written");
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn a_field_a_table_cannot_hold_is_an_error_not_dropped_issue_16() {
    let r = gapwise(&["eval", "table([#{a: 1 * V, b: [1, 2]}])"]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains("table row 0: field `b` is an array"),
        "{}",
        r.stderr
    );
    // in a family it is an error row, the other rows go on
    let r = gapwise(&[
        "eval",
        "let t = family(|v| if v > 1 { #{a: v, b: [v]} } else { #{a: v} }, [1, 2]); t.row(1).error",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("field `b` is an array"), "{}", r.stdout);
    let r = gapwise(&[
        "eval",
        "family(|v| if v > 1 { #{a: v, b: [v]} } else { #{a: v} }, [1, 2]).error_count",
    ]);
    assert_eq!(r.stdout.trim(), "1", "{}", r.stderr);
}

#[test]
fn a_second_output_table_with_the_same_name_is_an_error_issue_16() {
    let d = temp_dir("duplicate");
    let path = write_recipe(
        &d,
        "dup.rhai",
        "output_table(\"a\", table([#{x: 1}]));\noutput_table(\"a\", table([#{x: 2}]));\n",
    );
    let r = gapwise(&["run", path.to_str().unwrap()]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr
            .contains("a table named `a` was already handed over"),
        "{}",
        r.stderr
    );
    assert!(
        r.stderr.contains(":2"),
        "names the second call's line: {}",
        r.stderr
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn stale_temporaries_are_removed_on_the_next_run_issue_16() {
    let d = temp_dir("stale-cli");
    let path = write_recipe(&d, "u.rhai", UNITS_RECIPE);
    let out = d.join("out");
    std::fs::create_dir_all(&out).unwrap();
    // what a run killed while writing leaves behind (pid 0 is never a live user process)
    std::fs::write(out.join(".units.csv.0.gapwise-tmp"), b"half a file").unwrap();
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(file_names(&out), ["provenance.json", "units.csv"]);
    assert!(
        r.stderr.contains("removed 1 temporary file"),
        "{}",
        r.stderr
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn csv_text_cells_are_safe_in_a_spreadsheet_numbers_stay_numbers_issue_16() {
    let d = temp_dir("formula");
    let path = write_recipe(
        &d,
        "f.rhai",
        r#"output_table("t", table([#{note: "=HYPERLINK(1)", v: -5 * V}, #{note: "+1", v: 2 * V}]));"#,
    );
    let r = gapwise(&["run", path.to_str().unwrap(), "--format", "csv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let (_, rows) = read_csv(&r.stdout);
    assert_eq!(rows[0], ["'=HYPERLINK(1)", "-5"]);
    assert_eq!(rows[1], ["'+1", "2"]);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn help_run_shows_the_subcommand_and_help_name_still_shows_a_function_issue_10() {
    let r = gapwise(&["help", "run"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("Usage: gapwise run"), "{}", r.stdout);
    assert!(r.stdout.contains("--format"), "{}", r.stdout);
    let r = gapwise(&["help", "resistor_divider"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("resistor_divider("), "{}", r.stdout);
    let r = gapwise(&["help"]);
    assert!(r.stdout.contains("Usage: gapwise"), "{}", r.stdout);
}

#[test]
fn completions_for_bash_zsh_and_fish_issue_10() {
    for (shell, marker) in [
        ("bash", "complete -F"),
        ("zsh", "#compdef gapwise"),
        ("fish", "complete -c gapwise"),
    ] {
        let r = gapwise(&["completions", shell]);
        assert_eq!(r.code, 0, "{shell}: {}", r.stderr);
        assert!(r.stdout.contains(marker), "{shell}: {}", r.stdout);
        assert!(r.stdout.contains("format"), "{shell}");
    }
    assert_eq!(gapwise(&["completions", "tcsh-like"]).code, 2);
}

#[test]
fn version_names_the_data_table_editions_issue_10() {
    let r = gapwise(&["--version"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    for edition in [
        "IEC 60664-1:2020",
        "IEC 62368-1:2018",
        "CISPR 32",
        "IEC 60063:2015",
    ] {
        assert!(r.stdout.contains(edition), "{edition}: {}", r.stdout);
    }
}

#[test]
fn load_runs_only_recipes_and_never_echoes_another_file_issue_16() {
    let d = temp_dir("load-other");
    let secret = d.join("notes.txt");
    std::fs::write(&secret, "token=do-not-print-me (\n").unwrap();
    let r = gapwise_with_stdin(&[], &format!(":load {}\n", secret.display()), None);
    assert!(r.stderr.contains("`:load` runs recipes"), "{}", r.stderr);
    assert!(!r.stderr.contains("do-not-print-me"), "{}", r.stderr);
    assert!(!r.stdout.contains("do-not-print-me"), "{}", r.stdout);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn headers_and_results_use_derived_units_never_base_units_issue_10() {
    let r = gapwise(&["eval", "3 * V / m"]);
    assert_eq!(r.stdout.trim(), "3 V/m", "{}", r.stderr);
    let d = temp_dir("derived");
    let path = write_recipe(
        &d,
        "e.rhai",
        r#"output_table("t", table([#{field: 3 * V / m, conductance_per_kelvin: 2 * W / K, square: 4 * ohm * ohm}]));"#,
    );
    let r = gapwise(&["run", path.to_str().unwrap(), "--format", "csv"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(
        r.stdout.lines().next(),
        Some("field [V/m],conductance_per_kelvin [W/K],square [Ω²]"),
        "{}",
        r.stdout
    );
    assert!(!r.stdout.contains("kg"), "{}", r.stdout);
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn provenance_of_tables_printed_on_stdout_goes_to_a_file_on_request_issue_10() {
    let d = temp_dir("provenance-file");
    let path = write_recipe(&d, "u.rhai", UNITS_RECIPE);
    let file = d.join("run.provenance.json");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--format",
        "csv",
        "--provenance",
        file.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.starts_with("inductance [µH]"), "{}", r.stdout);
    let p: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&file).unwrap()).unwrap();
    assert_eq!(p["format"], "gapwise-provenance");
    assert_eq!(p["recipe"]["path"], path.to_str().unwrap());
    let both = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        "x",
        "--provenance",
        "y",
    ]);
    assert_eq!(
        both.code, 2,
        "--provenance goes without --out: {}",
        both.stderr
    );
    std::fs::remove_dir_all(&d).unwrap();
}

#[test]
fn run_prints_ignored_keys_as_warnings_issue_16() {
    let dir = temp_dir("ignored-keys");
    let recipe = write_recipe(
        &dir,
        "ignored.rhai",
        "let h = primary_current_harmonic(#{conduction_mode: \"dcm\", valley_current: 0.3 * A, peak_current: 1 * A, duty: 0.45}, 1);\nassert(h > 0 * A, \"a harmonic\");\n",
    );
    let r = gapwise(&["run", recipe.to_str().unwrap()]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stderr.contains(
            "warning: primary_current_harmonic: key `valley_current` was checked but not used"
        ),
        "{}",
        r.stderr
    );
    let r = gapwise(&[
        "eval",
        "primary_current_harmonic(#{conduction_mode: \"dcm\", valley_current: 0.3 * A, peak_current: 1 * A, duty: 0.45}, 1)",
    ]);
    assert!(
        r.stderr.contains("warning: primary_current_harmonic"),
        "{}",
        r.stderr
    );
    let _ = std::fs::remove_dir_all(&dir);
}

// ---- gapwise design: the whole supply from a TOML or JSON specification ----

const DEMO_SPEC: &str = "scripts/fernbank_12v.toml";

/// Checks that the HTML's tags are balanced (void elements and `/>` aside) and returns the
/// number of `<svg>` elements, each of which must close.
fn html_tags_balanced(html: &str) -> Result<usize, String> {
    const VOID: &[&str] = &["meta", "br", "hr", "img", "link", "input"];
    let mut stack: Vec<String> = Vec::new();
    let mut svgs = 0;
    let mut rest = html;
    while let Some(start) = rest.find('<') {
        let after = &rest[start + 1..];
        let end = after
            .find('>')
            .ok_or_else(|| format!("unclosed tag near {:?}", &after[..after.len().min(40)]))?;
        let tag = &after[..end];
        rest = &after[end + 1..];
        if tag.starts_with('!') || tag.starts_with('?') {
            continue;
        }
        if let Some(name) = tag.strip_prefix('/') {
            let name = name.trim().to_ascii_lowercase();
            match stack.pop() {
                Some(open) if open == name => {}
                other => return Err(format!("</{name}> closes {other:?}")),
            }
            continue;
        }
        let name: String = tag
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '-' || *c == ':')
            .collect::<String>()
            .to_ascii_lowercase();
        if name.is_empty() {
            return Err(format!("a '<' that starts no tag: {tag:?}"));
        }
        if name == "svg" {
            svgs += 1;
        }
        if tag.ends_with('/') || VOID.contains(&name.as_str()) {
            continue;
        }
        stack.push(name);
    }
    if stack.is_empty() {
        Ok(svgs)
    } else {
        Err(format!("never closed: {stack:?}"))
    }
}

#[test]
fn the_tag_checker_catches_unbalanced_html() {
    assert_eq!(html_tags_balanced("<p><svg><g/></svg></p>"), Ok(1));
    assert!(html_tags_balanced("<p><svg><g></svg></p>").is_err());
    assert!(html_tags_balanced("<section><svg>").is_err());
}

#[test]
fn design_writes_the_reports_the_pictures_and_the_checks() {
    let dir = temp_dir("design");
    let r = gapwise(&[
        "design",
        DEMO_SPEC,
        "--out",
        dir.to_str().unwrap(),
        "--strict",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stdout.contains("summary:") && r.stdout.contains("checks:"),
        "{}",
        r.stdout
    );
    assert!(r.stdout.contains(gapwise_core::SAFETY_CAUTION));
    assert_eq!(
        file_names(&dir),
        [
            "fernbank_12v.html",
            "fernbank_12v.md",
            "fernbank_12v_bode.svg",
            "fernbank_12v_checks.csv",
            "fernbank_12v_emi_spectrum.svg",
            "provenance.json",
        ]
    );
    let md = std::fs::read_to_string(dir.join("fernbank_12v.md")).unwrap();
    let html = std::fs::read_to_string(dir.join("fernbank_12v.html")).unwrap();
    assert!(md.contains(gapwise_core::SAFETY_CAUTION));
    let caution = gapwise_core::supply::html_escape(gapwise_core::SAFETY_CAUTION);
    assert!(html.contains(&caution));
    for title in [
        "Specification",
        "Summary",
        "Power stage",
        "Transformer",
        "Power stage and transformer consistency",
        "Regulation and loop",
        "EMI input filter",
        "Primary–secondary isolation",
        "Checks",
    ] {
        assert!(
            md.contains(&format!("\n## {title}\n")),
            "Markdown lacks {title}"
        );
    }
    for id in gapwise_core::supply::REPORT_SECTIONS {
        assert!(
            html.contains(&format!("<section id=\"{id}\">")),
            "HTML lacks {id}"
        );
    }
    assert!(
        md.contains("(fernbank_12v_bode.svg)") && md.contains("(fernbank_12v_emi_spectrum.svg)")
    );
    // self-contained: no external resources, no scripts (the SVG namespace is a name, not
    // a resource)
    let without_ns = html.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
    for bad in [
        "<script",
        "<link",
        "src=",
        "href=\"http",
        "url(",
        "http://",
        "https://",
    ] {
        assert!(!without_ns.contains(bad), "the HTML has {bad}");
    }
    let svgs = html_tags_balanced(&html).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(svgs, 2, "the Bode plot and the conducted spectrum, inline");
    assert_eq!(html.matches("</svg>").count(), 2);
    for svg in ["fernbank_12v_bode.svg", "fernbank_12v_emi_spectrum.svg"] {
        let text = std::fs::read_to_string(dir.join(svg)).unwrap();
        html_tags_balanced(&text).unwrap_or_else(|e| panic!("{svg}: {e}"));
    }
    let csv = std::fs::read_to_string(dir.join("fernbank_12v_checks.csv")).unwrap();
    let mut rows = csv::Reader::from_reader(csv.as_bytes());
    let headers = rows.headers().unwrap().clone();
    assert_eq!(&headers[0], "part");
    assert_eq!(&headers[1], "worst_corner");
    let parts: Vec<String> = rows.records().map(|r| r.unwrap()[0].to_string()).collect();
    for part in [
        "power_stage",
        "transformer",
        "regulation",
        "emi_filter",
        "isolation",
    ] {
        assert!(parts.iter().any(|p| p == part), "no {part} rows");
    }
    let prov = std::fs::read_to_string(dir.join("provenance.json")).unwrap();
    assert!(prov.contains("fernbank_12v.toml") && prov.contains("fernbank_12v_checks.csv"));
}

#[test]
fn design_reads_json_with_the_same_names() {
    let dir = temp_dir("design-json");
    let toml_text = std::fs::read_to_string(workspace_root().join(DEMO_SPEC)).unwrap();
    let value: serde_json::Value = toml::from_str(&toml_text).unwrap();
    let json = dir.join("fernbank_12v.json");
    std::fs::write(&json, serde_json::to_string_pretty(&value).unwrap()).unwrap();
    let from_json = gapwise(&["design", json.to_str().unwrap()]);
    let from_toml = gapwise(&["design", DEMO_SPEC]);
    assert_eq!(from_json.code, 0, "{}", from_json.stderr);
    assert_eq!(from_json.stdout, from_toml.stdout);
}

#[test]
fn design_exit_codes() {
    let dir = temp_dir("design-codes");
    let demo = std::fs::read_to_string(workspace_root().join(DEMO_SPEC)).unwrap();
    // an unknown key is a specification error (1), naming the key and the nearest one
    let bad = write_recipe(
        &dir,
        "bad.toml",
        &demo.replace("output_current =", "output_curent ="),
    );
    let r = gapwise(&["design", bad.to_str().unwrap()]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains("output_curent") && r.stderr.contains("output_current"),
        "{}",
        r.stderr
    );
    // a missing file or a file that is neither TOML nor JSON is a usage error (2)
    assert_eq!(gapwise(&["design", "no/such/spec.toml"]).code, 2);
    let txt = write_recipe(&dir, "spec.txt", &demo);
    assert_eq!(gapwise(&["design", txt.to_str().unwrap()]).code, 2);
    // a design with a failed check: 0 without --strict, 3 with it
    let small = write_recipe(
        &dir,
        "small.toml",
        &demo.replace("core = \"E30/15/7\"", "core = \"EF25\""),
    );
    let r = gapwise(&["design", small.to_str().unwrap()]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("fail"), "{}", r.stdout);
    let r = gapwise(&["design", small.to_str().unwrap(), "--strict"]);
    assert_eq!(r.code, 3, "{}", r.stderr);
    assert!(r.stderr.contains("failed (--strict)"), "{}", r.stderr);
}

#[test]
fn ignored_key_warnings_go_into_provenance() {
    let d = temp_dir("prov_warnings");
    let recipe = r#"
let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, zener_tolerance: 0.1});
output_table("one", table([#{ output_voltage: 12 * V }]));
"#;
    let path = write_recipe(&d, "w.rhai", recipe);
    let out = d.join("out");
    let r = gapwise(&[
        "run",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stderr.contains("`zener_tolerance`"), "{}", r.stderr);
    let p: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("provenance.json")).unwrap())
            .unwrap();
    let w = p["warnings"].as_array().expect("a warnings array");
    assert!(
        w.iter()
            .any(|w| w.as_str().unwrap().contains("`zener_tolerance`")),
        "{p}"
    );
    // a recipe without ignored keys has an empty list
    let clean = write_recipe(
        &d,
        "c.rhai",
        "output_table(\"one\", table([#{ v: 12 * V }]));\n",
    );
    let r = gapwise(&[
        "run",
        clean.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let q: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("provenance.json")).unwrap())
            .unwrap();
    assert_eq!(q["warnings"].as_array().map(|a| a.len()), Some(0), "{q}");
    std::fs::remove_dir_all(&d).unwrap();
}
