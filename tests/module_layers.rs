//! The library's top-level modules form layers: each may import only the
//! modules below it, so the module graph has no cycle. DEVELOPERS.md shows
//! the same order; a new module takes its place in both.
//!
//! The check reads the sources: every `crate::name` path (and every name in
//! a `crate::{...}` list) outside comments and `#[cfg(test)]` modules.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// Bottom to top. A module may import any module earlier in this list.
const LAYERS: [&str; 17] = [
    "domain",
    "error",
    "progress",
    "significance",
    "model",
    "settings",
    "ingest",
    "situations",
    "priors",
    "evaluate",
    "tells",
    "outcomes",
    "league",
    "audit",
    "compare",
    "report",
    "simulate",
];

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

/// The source without comments and without the `#[cfg(test)]` module.
fn code_of(text: &str) -> String {
    let text = match text.find("#[cfg(test)]") {
        Some(i) => &text[..i],
        None => text,
    };
    text.lines().map(|l| l.split("//").next().unwrap_or("")).collect::<Vec<_>>().join("\n")
}

/// The top-level modules a piece of code names through `crate::`.
fn imports(code: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    let ident = |s: &str| s.chars().take_while(|c| c.is_alphanumeric() || *c == '_').collect::<String>();
    let mut rest = code;
    while let Some(i) = rest.find("crate::") {
        rest = &rest[i + "crate::".len()..];
        if let Some(list) = rest.strip_prefix('{') {
            // Top-level names of a `crate::{a::X, b, c::{Y, Z}}` list.
            let mut depth = 0usize;
            let mut start = true;
            for (k, ch) in list.char_indices() {
                match ch {
                    '{' => depth += 1,
                    '}' if depth == 0 => break,
                    '}' => depth -= 1,
                    ',' if depth == 0 => start = true,
                    c if start && (c.is_alphanumeric() || c == '_') => {
                        out.insert(ident(&list[k..]));
                        start = false;
                    }
                    c if !c.is_whitespace() => start = false,
                    _ => {}
                }
            }
        } else {
            out.insert(ident(rest));
        }
    }
    out
}

fn module_of(src: &Path, file: &Path) -> String {
    let rel = file.strip_prefix(src).unwrap();
    let first = rel.components().next().unwrap().as_os_str().to_string_lossy().to_string();
    first.trim_end_matches(".rs").to_string()
}

#[test]
fn every_module_imports_only_layers_below_it() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    files.sort();
    let mut seen = BTreeSet::new();
    let mut wrong = Vec::new();
    for file in &files {
        let module = module_of(&src, file);
        if module == "lib" || module == "main" || module == "cli" {
            continue;
        }
        let Some(level) = LAYERS.iter().position(|m| *m == module) else {
            wrong.push(format!("{}: module `{module}` is not in the layer list; add it here and in DEVELOPERS.md", file.display()));
            continue;
        };
        seen.insert(module.clone());
        let code = code_of(&std::fs::read_to_string(file).unwrap());
        for used in imports(&code) {
            if used == module || used == "self" {
                continue;
            }
            match LAYERS.iter().position(|m| *m == used) {
                Some(l) if l < level => {}
                Some(_) => wrong.push(format!("{}: `{module}` imports `{used}`, which is not below it", file.display())),
                None => wrong.push(format!("{}: `{module}` imports `{used}`, which is not a layer", file.display())),
            }
        }
    }
    assert!(wrong.is_empty(), "layer violations:\n{}", wrong.join("\n"));
    // Every layer listed exists, so the list cannot go stale silently.
    for m in LAYERS {
        assert!(seen.contains(m), "layer `{m}` has no source file");
    }
}

#[test]
fn the_import_reader_sees_paths_and_lists() {
    let code = "use crate::a::B;\nuse crate::{c::D, e, f::{G, H}};\nlet x = crate::g::h();";
    let got: Vec<String> = imports(code).into_iter().collect();
    assert_eq!(got, ["a", "c", "e", "f", "g"]);
    // A commented-out import is not one.
    assert!(imports(&code_of("// use crate::zz::Y;\nfn f() {}")).is_empty());
}
