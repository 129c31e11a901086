//! The README stays true: its function reference is generated from the same help metadata
//! the prompt shows, and the commands it gives name files that exist.

use super::common::host;
use gapwise::script::docs::reference_markdown;
use std::path::Path;

const START: &str = "<!-- function-reference:start -->";
const END: &str = "<!-- function-reference:end -->";

fn readme_path() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")
}

#[test]
fn function_reference_is_current() {
    let text = std::fs::read_to_string(readme_path()).expect("README.md exists");
    let (head, rest) = text.split_once(START).expect("README has the start marker");
    let (_, tail) = rest.split_once(END).expect("README has the end marker");
    let generated = reference_markdown(host().docs());
    let expected = format!("{head}{START}\n\n{generated}{END}{tail}");
    if text != expected {
        if std::env::var_os("GAPWISE_UPDATE_README").is_some() {
            std::fs::write(readme_path(), expected).expect("README.md writable");
        } else {
            panic!(
                "README.md's function reference is stale; regenerate it with \
                 `GAPWISE_UPDATE_README=1 cargo test -p gapwise --test integration readme` \
                 or `cargo run -p gapwise-repl -- reference --write README.md`"
            );
        }
    }
}

#[test]
fn readme_commands_name_real_files() {
    let text = std::fs::read_to_string(readme_path()).expect("README.md exists");
    assert!(
        text.contains("cargo test --workspace"),
        "README gives the test command"
    );
    let run = text
        .lines()
        .find(|l| l.trim_start().starts_with("cargo run") && l.contains(" run scripts/"))
        .expect("README gives the main job command");
    let script = run
        .split_whitespace()
        .find(|w| w.starts_with("scripts/"))
        .expect("a recipe");
    assert!(
        Path::new(env!("CARGO_MANIFEST_DIR")).join(script).exists(),
        "{script} exists"
    );
    assert!(
        text.contains("Caution"),
        "README carries the safety caution"
    );
    // every example and recipe the README names exists
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut named = 0;
    for part in text.split("cargo run --example ").skip(1) {
        let name: String = part
            .chars()
            .take_while(|c| c.is_alphanumeric() || *c == '_')
            .collect();
        assert!(
            root.join("examples").join(format!("{name}.rs")).exists(),
            "README names example {name}, which does not exist"
        );
        named += 1;
    }
    assert!(named >= 1, "README names the examples");
    for part in text
        .split('`')
        .filter(|p| p.ends_with(".rhai") && !p.contains(' '))
    {
        let path = if part.starts_with("scripts/") {
            root.join(part)
        } else {
            root.join("scripts").join(part)
        };
        assert!(
            path.exists(),
            "README names recipe {part}, which does not exist"
        );
    }
}

#[test]
fn readme_names_the_toolchain_the_workspace_asks_for() {
    let text = std::fs::read_to_string(readme_path()).expect("README.md exists");
    let manifest =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("Cargo.toml"))
            .expect("Cargo.toml exists");
    let version = manifest
        .lines()
        .find_map(|l| l.trim().strip_prefix("rust-version = \""))
        .and_then(|v| v.strip_suffix('"'))
        .expect("the workspace sets rust-version");
    assert!(
        text.contains(&format!("{version} or newer")),
        "README should name Rust {version} or newer, as Cargo.toml's rust-version does"
    );
}
