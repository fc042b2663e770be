//! The layering of docs/architecture.md, checked on the code: each library
//! module imports only modules below it in [`ORDER`], and no two files of
//! one folder import each other in a circle. Read from the `use` lines and
//! `crate::`/`super::` paths outside comments (common practice, no source:
//! a one-way dependency order keeps each layer testable on its own).

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// The library's top-level modules, lowest first: a module may import only
/// modules that come before it.
const ORDER: [&str; 20] = [
    "numeric",
    "limits",
    "geometry",
    "solver",
    "baseline",
    "head",
    "montage",
    "patterns",
    "forward",
    "dictionary",
    "attribution",
    "dipole",
    "cohort",
    "pipeline",
    "demo",
    "validation",
    "io",
    "render",
    "job",
    "batch",
];

/// Arrows that still run up, each with what removes it. Keep this empty.
const KNOWN_EXCEPTIONS: [(&str, &str); 0] = [];

fn src() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("src")
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|e| e == "rs") {
            out.push(p);
        }
    }
}

/// The code of a file without its comments (line comments and doc lines).
fn code(path: &Path) -> String {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .map(|l| l.split("//").next().unwrap_or(""))
        .collect::<Vec<_>>()
        .join("\n")
}

/// The names following `prefix` in `text` (identifiers after `crate::`).
fn names_after(text: &str, prefix: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    for (i, _) in text.match_indices(prefix) {
        let before = text[..i].chars().next_back();
        if before.is_some_and(|c| c.is_alphanumeric() || c == '_') {
            continue;
        }
        let rest = &text[i + prefix.len()..];
        let name: String = rest
            .chars()
            .take_while(|c| c.is_alphanumeric() || *c == '_')
            .collect();
        if !name.is_empty() {
            out.insert(name);
        }
    }
    out
}

/// The top-level module a library file belongs to.
fn module_of(path: &Path) -> Option<String> {
    let rel = path.strip_prefix(src()).ok()?;
    let first = rel
        .components()
        .next()?
        .as_os_str()
        .to_string_lossy()
        .into_owned();
    if first == "bin" || first == "lib.rs" {
        return None;
    }
    Some(first.trim_end_matches(".rs").to_string())
}

#[test]
fn library_modules_import_only_lower_layers() {
    let mut files = Vec::new();
    rust_files(&src(), &mut files);
    let rank: BTreeMap<&str, usize> = ORDER.iter().enumerate().map(|(i, m)| (*m, i)).collect();
    let mut violations = Vec::new();
    let mut seen_exceptions = BTreeSet::new();
    for f in &files {
        let Some(module) = module_of(f) else { continue };
        let Some(&r) = rank.get(module.as_str()) else {
            violations.push(format!("{}: module {module} is not in ORDER", f.display()));
            continue;
        };
        for dep in names_after(&code(f), "crate::") {
            let Some(&d) = rank.get(dep.as_str()) else {
                continue;
            };
            if d > r {
                if KNOWN_EXCEPTIONS.contains(&(module.as_str(), dep.as_str())) {
                    seen_exceptions.insert((module.clone(), dep));
                } else {
                    violations.push(format!(
                        "{}: {module} imports {dep}, a higher layer",
                        f.display()
                    ));
                }
            }
        }
    }
    assert!(violations.is_empty(), "{violations:#?}");
    // An exception that no longer happens must leave the list.
    for (m, d) in KNOWN_EXCEPTIONS {
        assert!(
            seen_exceptions.contains(&(m.to_string(), d.to_string())),
            "{m} -> {d} is listed as an exception but no longer occurs: remove it"
        );
    }
}

/// Files of one folder (siblings) and which siblings each imports through
/// `super::NAME` (or `crate::MODULE::NAME` for the folder's own module).
fn sibling_graph(dir: &Path) -> BTreeMap<String, BTreeSet<String>> {
    let mut siblings = BTreeSet::new();
    for entry in std::fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.extension().is_some_and(|e| e == "rs") {
            let stem = p.file_stem().unwrap().to_string_lossy().into_owned();
            if stem != "mod" && stem != "main" && stem != "lib" {
                siblings.insert(stem);
            }
        } else if p.is_dir() {
            siblings.insert(p.file_name().unwrap().to_string_lossy().into_owned());
        }
    }
    let module = dir.file_name().unwrap().to_string_lossy().into_owned();
    let mut graph = BTreeMap::new();
    for s in &siblings {
        let file = dir.join(format!("{s}.rs"));
        let mut text = String::new();
        if file.is_file() {
            text = code(&file);
        } else {
            let mut inner = Vec::new();
            rust_files(&dir.join(s), &mut inner);
            for f in inner {
                // Inside a sub-folder `super::` names its own siblings.
                text.push_str(&code(&f).replace("super::super::", "super::"));
            }
        }
        let mut deps: BTreeSet<String> = names_after(&text, "super::");
        deps.extend(names_after(&text, &format!("crate::{module}::")));
        deps.retain(|d| d != s && siblings.contains(d));
        graph.insert(s.clone(), deps);
    }
    graph
}

fn find_cycle(graph: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    fn visit(
        n: &str,
        graph: &BTreeMap<String, BTreeSet<String>>,
        stack: &mut Vec<String>,
        done: &mut BTreeSet<String>,
    ) -> Option<Vec<String>> {
        if let Some(i) = stack.iter().position(|s| s == n) {
            return Some(stack[i..].to_vec());
        }
        if done.contains(n) {
            return None;
        }
        stack.push(n.to_string());
        for d in graph.get(n).into_iter().flatten() {
            if let Some(c) = visit(d, graph, stack, done) {
                return Some(c);
            }
        }
        stack.pop();
        done.insert(n.to_string());
        None
    }
    let mut done = BTreeSet::new();
    for n in graph.keys() {
        if let Some(c) = visit(n, graph, &mut Vec::new(), &mut done) {
            return Some(c);
        }
    }
    None
}

#[test]
fn no_two_files_of_a_folder_import_each_other_in_a_circle() {
    let mut dirs = vec![src()];
    let mut circles = Vec::new();
    while let Some(d) = dirs.pop() {
        for entry in std::fs::read_dir(&d).unwrap() {
            let p = entry.unwrap().path();
            if p.is_dir() {
                dirs.push(p);
            }
        }
        if d == src() {
            continue;
        }
        if let Some(c) = find_cycle(&sibling_graph(&d)) {
            circles.push(format!("{}: {}", d.display(), c.join(" -> ")));
        }
    }
    assert!(circles.is_empty(), "{circles:#?}");
}
