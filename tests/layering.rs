//! The dependency rule (STYLE.md, "Dependencies point one way"): `src/domain/`
//! is the pure core. It must not name the service's adapters (tokio, axum,
//! sqlx, utoipa, reqwest, hyper, tower) nor do I/O through std (files,
//! network, environment, processes, standard streams, printing).
//!
//! The check is textual and deliberately simple: comments are skipped, and a
//! line is flagged when it names a forbidden crate as a path (`tokio::`), in a
//! `use` or `extern crate`, or names a forbidden std item. It may flag a
//! string literal that spells a forbidden path; that is a price worth paying
//! for a checker with no dependencies and no false negatives on real code.

use std::path::{Path, PathBuf};

/// Crates of the outer layers that the core must never import.
const FORBIDDEN_CRATES: [&str; 7] = ["tokio", "axum", "sqlx", "utoipa", "reqwest", "hyper", "tower"];

/// std items that perform I/O or read the process environment.
const FORBIDDEN_STD: [&str; 13] = [
    "std::fs",
    "std::net",
    "std::env",
    "std::process",
    "std::io::stdin",
    "std::io::stdout",
    "std::io::stderr",
    "println!",
    "eprintln!",
    "print!",
    "eprint!",
    "dbg!",
    "std::os",
];

/// std modules that perform I/O, as they appear inside `use std::{...}`.
const FORBIDDEN_STD_GROUP_ITEMS: [&str; 5] = ["fs", "net", "env", "process", "os"];

fn is_ident_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// Every position where `needle` occurs in `hay` as a whole token: not
/// preceded by an identifier character, and (if `needle` ends in one) not
/// followed by one either.
fn token_positions<'a>(hay: &'a str, needle: &'a str) -> impl Iterator<Item = usize> + 'a {
    hay.match_indices(needle).map(|(i, _)| i).filter(move |&i| {
        let before_ok = !hay[..i].chars().next_back().is_some_and(is_ident_char);
        let ends_in_ident = needle.chars().next_back().is_some_and(is_ident_char);
        let after_ok = !ends_in_ident || !hay[i + needle.len()..].chars().next().is_some_and(is_ident_char);
        before_ok && after_ok
    })
}

fn has_token(hay: &str, needle: &str) -> bool {
    token_positions(hay, needle).next().is_some()
}

/// Removes comments from one line, given whether a block comment is open at
/// its start; returns the code and whether a block comment is open at its end.
/// Doc comments (`///`, `//!`) are comments too.
fn strip_comments(line: &str, mut in_block: bool) -> (String, bool) {
    let mut code = String::new();
    let mut rest = line;
    loop {
        if in_block {
            match rest.find("*/") {
                Some(end) => {
                    rest = &rest[end + 2..];
                    in_block = false;
                }
                None => return (code, true),
            }
        } else {
            let line_comment = rest.find("//");
            let block_comment = rest.find("/*");
            match (line_comment, block_comment) {
                (Some(l), Some(b)) if b < l => {
                    code.push_str(&rest[..b]);
                    rest = &rest[b + 2..];
                    in_block = true;
                }
                (None, Some(b)) => {
                    code.push_str(&rest[..b]);
                    rest = &rest[b + 2..];
                    in_block = true;
                }
                (Some(l), _) => {
                    code.push_str(&rest[..l]);
                    return (code, false);
                }
                (None, None) => {
                    code.push_str(rest);
                    return (code, false);
                }
            }
        }
    }
}

/// What a line of code (comments already removed) does that the core must
/// not, in words; empty if the line is clean.
fn violations_in_code(code: &str) -> Vec<String> {
    let mut found = Vec::new();
    for krate in FORBIDDEN_CRATES {
        let as_path = token_positions(code, krate).any(|i| code[i + krate.len()..].starts_with("::"));
        let as_use =
            ["use ", "use ::", "extern crate "].iter().any(|prefix| has_token(code, &format!("{prefix}{krate}")));
        if as_path || as_use {
            found.push(format!("names the crate `{krate}`"));
        }
    }
    for item in FORBIDDEN_STD {
        if has_token(code, item) {
            found.push(format!("uses `{item}`"));
        }
    }
    // `use std::{fs, io::stdin}` names the modules without `std::` before them.
    for (i, _) in code.match_indices("std::{") {
        let group = &code[i + "std::{".len()..];
        let group = &group[..group.find('}').unwrap_or(group.len())];
        for item in FORBIDDEN_STD_GROUP_ITEMS {
            if has_token(group, item) {
                found.push(format!("uses `std::{item}`"));
            }
        }
        if has_token(group, "stdin") || has_token(group, "stdout") || has_token(group, "stderr") {
            found.push("uses a standard stream".to_string());
        }
    }
    found
}

/// Checks one file's text; returns `(line number, line, reasons)` for every
/// offending line. Multi-line `use` groups are checked as one statement,
/// reported at their first line.
fn violations_in_source(text: &str) -> Vec<(usize, String, Vec<String>)> {
    let mut out = Vec::new();
    let mut in_block = false;
    let mut pending_use: Option<(usize, String, String)> = None;
    for (n, line) in text.lines().enumerate() {
        let lineno = n + 1;
        let (code, still_in_block) = strip_comments(line, in_block);
        in_block = still_in_block;
        if let Some((start, first, mut stmt)) = pending_use.take() {
            stmt.push(' ');
            stmt.push_str(&code);
            if code.contains(';') {
                let reasons = violations_in_code(&stmt);
                if !reasons.is_empty() {
                    out.push((start, first, reasons));
                }
            } else {
                pending_use = Some((start, first, stmt));
            }
            continue;
        }
        let reasons = violations_in_code(&code);
        if !reasons.is_empty() {
            out.push((lineno, line.to_string(), reasons));
        } else if has_token(&code, "use") && code.contains('{') && !code.contains(';') {
            pending_use = Some((lineno, line.to_string(), code));
        }
    }
    out
}

fn rust_files_under(dir: &Path, out: &mut Vec<PathBuf>) {
    let entries = std::fs::read_dir(dir).unwrap_or_else(|e| panic!("cannot read {}: {e}", dir.display()));
    for entry in entries {
        let path = entry.expect("directory entry").path();
        if path.is_dir() {
            rust_files_under(&path, out);
        } else if path.extension().is_some_and(|x| x == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn the_domain_layer_imports_no_adapter_crate_and_does_no_io() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let domain = root.join("src").join("domain");
    let mut files = Vec::new();
    rust_files_under(&domain, &mut files);
    files.sort();
    assert!(!files.is_empty(), "found no .rs files under {}", domain.display());

    let mut report = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).unwrap_or_else(|e| panic!("cannot read {}: {e}", file.display()));
        let shown = file.strip_prefix(root).unwrap_or(file).display().to_string();
        for (line, code, reasons) in violations_in_source(&text) {
            report.push(format!("{shown}:{line}: {} — {}", reasons.join(", "), code.trim()));
        }
    }
    assert!(
        report.is_empty(),
        "src/domain/ must stay pure (no adapter crates, no I/O); {} offending line(s):\n{}",
        report.len(),
        report.join("\n")
    );
}

#[test]
fn the_checker_flags_a_use_of_an_adapter_crate() {
    for line in [
        "use tokio::runtime;",
        "use axum;",
        "    let pool = sqlx::SqlitePool::connect(url);",
        "#[derive(utoipa::ToSchema)]",
        "pub use ::hyper::Body;",
        "extern crate tower;",
        "let c = reqwest::Client::new(); // make a client",
    ] {
        assert!(!violations_in_source(line).is_empty(), "the checker missed `{line}`");
    }
}

#[test]
fn the_checker_flags_io_from_std() {
    for line in [
        "use std::fs;",
        "let text = std::fs::read_to_string(path)?;",
        "let addr: std::net::SocketAddr = s.parse()?;",
        "let v = std::env::var(\"HOME\");",
        "std::process::exit(1);",
        "std::io::stdin().read_line(&mut s)?;",
        "println!(\"{x}\");",
        "    eprintln!(\"warning\");",
        "use std::{collections::HashMap, fs};",
    ] {
        assert!(!violations_in_source(line).is_empty(), "the checker missed `{line}`");
    }
}

#[test]
fn the_checker_flags_a_forbidden_module_in_a_multi_line_use_group() {
    let text = "use std::{\n    collections::HashMap,\n    env,\n};\nfn f() {}\n";
    let found = violations_in_source(text);
    assert_eq!(found.len(), 1, "{found:?}");
    assert_eq!(found[0].0, 1, "reported at the line where the `use` starts");
}

#[test]
fn the_checker_ignores_comments_and_lookalike_names() {
    let text = "\
//! Unlike the service, this module never touches tokio or axum.
/// Runs off the async threads (not on tokio::spawn): see DESIGN.md.
// use tokio::runtime;
/* std::fs::read is not used here */
/*
   println!(\"block comment\");
*/
use std::collections::HashMap;
use std::fmt;
let my_tokio::x = 1; let watchtower::y = 2;
let tokio_like = 3;
let s = self.hyper_parameter;
pub fn iter(&self) -> std::slice::Iter<'_, Problem> { todo!() }
let x = 1; // tokio::spawn would be wrong here
p.push(at, \"current must not be negative (use the angle to reverse a phasor)\");
";
    let found = violations_in_source(text);
    assert!(found.is_empty(), "false positives: {found:?}");
}
