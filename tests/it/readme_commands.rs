//! Issue 22, item 1: the README cannot drift from the binary. Every
//! `patchwise …` (or `cargo run --release -- …`) line of the README's code
//! blocks is taken from the README itself: each must parse (its
//! subcommands and flags exist; checked by appending `--help`, which clap
//! answers only after it has accepted every argument before it), and the
//! ones that need no input file of the user's run as written, in order,
//! in one folder, and must succeed.

use std::path::Path;

use crate::support::cli::patchwise;
use crate::support::scratch;

/// The command lines of the README's code blocks, as argument lists
/// (without the leading `patchwise`), comments and `[optional]` brackets
/// removed.
fn readme_commands() -> Vec<Vec<String>> {
    let readme = Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md");
    let text = std::fs::read_to_string(&readme).unwrap();
    let mut inside = false;
    let mut out = Vec::new();
    for line in text.lines() {
        if line.trim_start().starts_with("```") {
            inside = !inside;
            continue;
        }
        if !inside {
            continue;
        }
        let line = line.split(" #").next().unwrap().trim();
        let rest = if let Some(r) = line.strip_prefix("patchwise ") {
            r
        } else if let Some(r) = line.strip_prefix("cargo run --release -- ") {
            r
        } else {
            continue;
        };
        let args: Vec<String> = rest
            .split_whitespace()
            .map(|a| a.trim_matches(|c| c == '[' || c == ']').to_string())
            .filter(|a| !a.is_empty())
            .collect();
        out.push(args);
    }
    out
}

/// Subcommands that read no file of the user's unless one is named, and
/// finish in about a second: run as written.
fn cheap(args: &[String]) -> bool {
    matches!(
        args.first().map(String::as_str),
        Some("montage" | "check" | "--version" | "--help")
    )
}

#[test]
fn every_readme_command_parses_and_the_cheap_ones_run() {
    let dir = scratch("readme-commands");
    let commands = readme_commands();
    // The README's sections: set-up, demo, attribute, the stages, dipole,
    // batch, compare, the commands table's examples.
    assert!(commands.len() >= 15, "{commands:?}");
    let mut ran = 0;
    for args in &commands {
        let argv: Vec<&str> = args.iter().map(String::as_str).collect();
        if cheap(args) {
            let o = patchwise(&argv, &dir);
            assert!(
                o.status.success(),
                "README: patchwise {}\n{}",
                args.join(" "),
                String::from_utf8_lossy(&o.stderr)
            );
            ran += 1;
        } else {
            let mut with_help = argv.clone();
            with_help.push("--help");
            let o = patchwise(&with_help, &dir);
            assert!(
                o.status.success(),
                "README: patchwise {} does not parse:\n{}",
                args.join(" "),
                String::from_utf8_lossy(&o.stderr)
            );
            assert!(String::from_utf8_lossy(&o.stdout).contains("Usage:"));
        }
    }
    assert!(ran >= 4, "only {ran} README commands ran");
    assert!(dir.join("10-10.tsv").is_file());
}

/// The README's links to docs/ name files that exist.
#[test]
fn readme_links_name_files_that_exist() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("README.md")).unwrap();
    let mut seen = 0;
    for piece in text.split(['`', '(', ')', ' ']) {
        let piece = piece.trim_end_matches(['.', ',', ';', ':']);
        if piece.starts_with("docs/") && piece.ends_with(".md") {
            assert!(root.join(piece).is_file(), "README names {piece}");
            seen += 1;
        }
    }
    assert!(text.contains("docs/result_files.md"));
    assert!(seen >= 10, "{seen}");
}
