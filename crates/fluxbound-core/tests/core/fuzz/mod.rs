//! Property tests with large case counts, as fuzzing of the documents a user
//! hands in (cargo-fuzz needs a nightly toolchain): the site document, the
//! survey CSV and the survey document around it, and the table and regime
//! documents. Inputs are arbitrary text, arbitrary JSON, and structured
//! mutations of valid documents (a key deleted, a value of another type,
//! odd numbers such as 1e308 or -0, control characters, long lists, deep
//! nesting). Every property: no panic, and every problem says where —
//! a JSON pointer that resolves in the document (to the value, or to the
//! object or list that lacks it), or for CSV a line of the text and a
//! column of its header.
//!
//! Cases per property: `FLUXBOUND_FUZZ_CASES`, default [`CI_CASES`]
//! (bounded for CI); run more by hand, e.g.
//! `FLUXBOUND_FUZZ_CASES=200000 cargo test --release -p fluxbound-core --test core fuzz`.

mod csv;
mod documents;
mod exchange;
mod mutate;

use fluxbound_core::site::Problems;
use proptest::test_runner::Config;
use serde_json::Value;

/// Cases per property when `FLUXBOUND_FUZZ_CASES` is unset: the whole
/// module stays within a few seconds of a debug CI run on two cores.
const CI_CASES: u32 = 2_000;

fn config() -> Config {
    let cases = std::env::var("FLUXBOUND_FUZZ_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(CI_CASES);
    // No regression files: a failing input is printed, and a fix gets its
    // own named test.
    Config { cases, failure_persistence: None, ..Config::default() }
}

/// Whether `pointer` resolves in `doc`: to a value, or to a missing key of
/// an object, or to the next index of a list (a required item that is
/// missing). RFC 6901 escapes are honoured by `Value::pointer`.
fn resolves(doc: &Value, pointer: &str) -> bool {
    if pointer.is_empty() || doc.pointer(pointer).is_some() {
        return true;
    }
    let Some((parent, last)) = pointer.rsplit_once('/') else { return false };
    match doc.pointer(parent) {
        Some(Value::Object(_)) => true,
        Some(Value::Array(items)) => last.parse::<usize>().is_ok_and(|i| i == items.len()),
        _ => false,
    }
}

/// Every problem names a place in `text` (when `text` is JSON at all; for
/// text that is not, the pointer must still be a well-formed pointer) and
/// says something.
fn assert_located(text: &str, problems: &Problems) {
    assert!(!problems.is_empty(), "an error with no problem in it");
    let doc: Option<Value> = serde_json::from_str(text).ok();
    for p in problems.iter() {
        assert!(!p.detail.trim().is_empty(), "a problem without words at {:?}", p.pointer);
        assert!(p.pointer.is_empty() || p.pointer.starts_with('/'), "not a JSON pointer: {:?}", p.pointer);
        if let Some(doc) = &doc {
            assert!(resolves(doc, &p.pointer), "{:?} ({}) does not resolve in {}", p.pointer, p.detail, clip(text));
        }
    }
}

/// The start of a long input, for failure messages.
fn clip(text: &str) -> String {
    text.chars().take(600).collect()
}
