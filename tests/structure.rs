//! The shape of the library, checked: modules import only from their own layer or the layers below
//! (the list is the one in DEVELOPERS.md, "Architecture"), no source file runs over 500 lines, no
//! function outside test code over 80 lines, and every module opens with a `//!` comment saying what it
//! is for. The limits are the project's own (common practice, no source); a failure names the file and
//! line to look at.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Layers from the bottom: a module may use `crate::X` only when X's layer is at most its own.
const LAYERS: &[&[&str]] = &[
    &["units", "error", "outfile", "textfile"],
    &["frame", "setup", "physics", "lever", "synth"],
    &["source"],
    &["spot", "calib"],
    &["track"],
    &["analysis"],
    &["export", "plan"],
    &["record"],
];

const MAX_FILE_LINES: usize = 500;
const MAX_FN_LINES: usize = 80;

fn layer_of(module: &str) -> Option<usize> {
    LAYERS.iter().position(|l| l.contains(&module))
}

fn src_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("src")
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<_> = std::fs::read_dir(dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .collect();
    entries.sort();
    for p in entries {
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// The library's top-level module a file under src/ belongs to (`None` for lib.rs, main.rs and the
/// command layer, which may use everything).
fn top_module(path: &Path) -> Option<String> {
    let rel = path.strip_prefix(src_dir()).ok()?;
    let first = rel.components().next()?.as_os_str().to_str()?.to_string();
    let name = first.trim_end_matches(".rs").to_string();
    match name.as_str() {
        "lib" | "main" | "cli" => None,
        _ => Some(name),
    }
}

/// The code of a line with its `//` comment and the contents of its string literals removed (a crude
/// lexer, enough for this crate's code: raw strings with `#` are not used across lines).
fn code_of(line: &str) -> String {
    let mut out = String::new();
    let mut chars = line.chars().peekable();
    let mut in_str = false;
    while let Some(c) = chars.next() {
        if in_str {
            match c {
                '\\' => {
                    chars.next();
                }
                '"' => {
                    in_str = false;
                    out.push('"');
                }
                _ => {}
            }
            continue;
        }
        match c {
            '"' => {
                in_str = true;
                out.push('"');
            }
            '/' if chars.peek() == Some(&'/') => break,
            '\'' => {
                // A char literal such as '{' or '\n'; a lifetime has no closing quote close by.
                let rest: String = chars.clone().take(3).collect();
                if let Some(escaped) = rest.strip_prefix('\\') {
                    if let Some(end) = escaped.find('\'') {
                        for _ in 0..end + 2 {
                            chars.next();
                        }
                    }
                } else if rest.chars().nth(1) == Some('\'') {
                    chars.next();
                    chars.next();
                }
                out.push('\'');
            }
            _ => out.push(c),
        }
    }
    out
}

/// The 0-based line where a `#[cfg(test)] mod` starts, or the end of the file.
fn test_code_start(lines: &[&str]) -> usize {
    lines
        .windows(2)
        .position(|w| w[0].trim() == "#[cfg(test)]" && w[1].trim_start().starts_with("mod "))
        .unwrap_or(lines.len())
}

/// Functions and their lengths in lines, from the `fn` line to its closing brace.
fn functions(lines: &[&str]) -> Vec<(usize, String, usize)> {
    let end = test_code_start(lines);
    let mut out = Vec::new();
    let mut i = 0;
    while i < end {
        let code = code_of(lines[i]);
        let Some(name) = fn_name(&code) else {
            i += 1;
            continue;
        };
        let (mut depth, mut opened, mut j) = (0i64, false, i);
        while j < lines.len() {
            let c = code_of(lines[j]);
            for ch in c.chars() {
                match ch {
                    '{' => {
                        depth += 1;
                        opened = true;
                    }
                    '}' => depth -= 1,
                    _ => {}
                }
            }
            if (opened && depth <= 0) || (!opened && c.trim_end().ends_with(';')) {
                break;
            }
            j += 1;
        }
        if opened {
            out.push((i + 1, name, j - i + 1));
            i = j + 1;
        } else {
            i += 1;
        }
    }
    out
}

fn fn_name(code: &str) -> Option<String> {
    let words: Vec<&str> = code.split_whitespace().collect();
    let k = words.iter().position(|w| *w == "fn")?;
    let prefix_ok = words[..k].iter().all(|w| {
        w.starts_with("pub")
            || matches!(*w, "const" | "async" | "unsafe" | "extern" | "default")
            || w.starts_with('"')
    });
    if !prefix_ok {
        return None;
    }
    let name: String = words
        .get(k + 1)?
        .chars()
        .take_while(|c| c.is_alphanumeric() || *c == '_')
        .collect();
    (!name.is_empty()).then_some(name)
}

/// `crate::X` paths a line of code names, X being a top-level module.
fn crate_uses(code: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = code;
    while let Some(k) = rest.find("crate::") {
        let before = rest[..k].chars().last();
        let tail = &rest[k + "crate::".len()..];
        if !before.is_some_and(|c| c.is_alphanumeric() || c == '_' || c == '$') {
            let name: String = tail
                .chars()
                .take_while(|c| c.is_alphanumeric() || *c == '_')
                .collect();
            if !name.is_empty() {
                out.push(name);
            }
        }
        rest = tail;
    }
    out
}

fn all_files() -> Vec<PathBuf> {
    let mut files = Vec::new();
    rust_files(&src_dir(), &mut files);
    assert!(
        files.len() > 20,
        "found only {} files under src/",
        files.len()
    );
    files
}

fn read(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

#[test]
fn every_library_module_has_a_layer() {
    let mut missing = Vec::new();
    for p in all_files() {
        if let Some(m) = top_module(&p) {
            if layer_of(&m).is_none() {
                missing.push(format!("{} (module {m})", p.display()));
            }
        }
    }
    assert!(
        missing.is_empty(),
        "modules not in the layer list (add them to LAYERS here and to DEVELOPERS.md):\n{}",
        missing.join("\n")
    );
}

#[test]
fn no_module_imports_one_above_it() {
    let mut bad = Vec::new();
    for p in all_files() {
        let Some(m) = top_module(&p) else { continue };
        let Some(own) = layer_of(&m) else { continue };
        for (n, line) in read(&p).lines().enumerate() {
            for used in crate_uses(&code_of(line)) {
                if let Some(l) = layer_of(&used) {
                    if l > own {
                        bad.push(format!("{}:{}: {m} uses crate::{used}", p.display(), n + 1));
                    }
                }
            }
        }
    }
    assert!(
        bad.is_empty(),
        "imports pointing up the layers:\n{}",
        bad.join("\n")
    );
}

#[test]
fn no_file_over_the_limit() {
    let mut long = BTreeMap::new();
    for p in all_files() {
        let n = read(&p).lines().count();
        if n > MAX_FILE_LINES {
            long.insert(p.display().to_string(), n);
        }
    }
    assert!(
        long.is_empty(),
        "files over {MAX_FILE_LINES} lines: {long:?}"
    );
}

#[test]
fn no_function_over_the_limit() {
    let mut long = Vec::new();
    for p in all_files() {
        let text = read(&p);
        let lines: Vec<&str> = text.lines().collect();
        for (line, name, n) in functions(&lines) {
            if n > MAX_FN_LINES {
                long.push(format!("{}:{line}: fn {name} is {n} lines", p.display()));
            }
        }
    }
    assert!(
        long.is_empty(),
        "functions over {MAX_FN_LINES} lines (outside test code):\n{}",
        long.join("\n")
    );
}

#[test]
fn every_module_says_what_it_is_for() {
    let mut bare = Vec::new();
    for p in all_files() {
        let text = read(&p);
        let first = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
        if !first.starts_with("//!") {
            bare.push(p.display().to_string());
        }
    }
    assert!(
        bare.is_empty(),
        "files without a //! comment first: {bare:?}"
    );
}

#[test]
fn the_checker_sees_what_it_should() {
    // The checker itself, on code whose answers are known.
    let text = "fn a() {\n    let s = \"}\";\n    let c = '{';\n}\npub(crate) fn b(x: u8) -> u8 {\n    x\n}\nfn c();\n#[cfg(test)]\nmod tests {\n    fn d() {}\n}\n";
    let lines: Vec<&str> = text.lines().collect();
    let found: Vec<(usize, String, usize)> = functions(&lines);
    assert_eq!(
        found,
        vec![(1, "a".to_string(), 4), (5, "b".to_string(), 3)],
        "function spans"
    );
    assert_eq!(
        crate_uses(&code_of(
            "use crate::spot::{Tracker}; let x = crate::units::Seconds(1.0); // crate::cli"
        )),
        vec!["spot".to_string(), "units".to_string()]
    );
    assert_eq!(layer_of("track"), Some(4));
    assert!(layer_of("analysis") > layer_of("track"));
}
