//! JSON text → wire types, with the failing location as a JSON pointer and
//! the reason in words a safety officer understands.
//!
//! Shape errors (wrong type, missing or unknown key, malformed JSON) stop
//! deserialisation at the first one; value errors are all collected later by
//! the validator. Before the typed parse, one pass over the document rejects
//! what serde would accept silently: a key given twice in one object (serde
//! keeps the last, so `100` could become `100000` unseen) and a control
//! character in any key or text (the rule of [`crate::text`]: every text is
//! one line, except those under [`MULTI_LINE_KEYS`]). Each control character
//! is reported with its pointer; a repeated key stops the pass.
//!
//! A document is read once on the way that succeeds: the typed read through
//! the [`Strict`] adapter, which watches every key and text. Only when that
//! read fails, or its watch is raised (some text holds a control
//! character, or a map key repeats), is the document walked again, by the
//! scan and then by a typed read that tracks the pointer — so pointers are
//! built only for problems, and the answer is the same as if every
//! document took the long way.
//!
//! Serde's messages name Rust types ("expected f64", "internally tagged
//! enum"); [`plain_words`] rewrites each message shape serde and serde_json
//! produce into the JSON words a user wrote ("a number", "an object").

use super::problem::{Pointer, Problems};
use super::strict::{Strict, Watch};
use crate::text::{multi_line_problem, single_line_problem};
use serde::de::{self, DeserializeOwned, DeserializeSeed, MapAccess, SeqAccess, Visitor};
use std::cell::RefCell;
use std::collections::HashSet;
use std::fmt;

/// Why a JSON text cannot be used: it is not JSON at all (HTTP answers 400),
/// or it is JSON of the wrong shape or with a forbidden text (422).
#[derive(Debug)]
pub enum Unreadable {
    /// A syntax error, in plain words with its line and column.
    Malformed(String),
    /// Shape problems with their pointers.
    Invalid(Problems),
}

/// Parses a JSON document into `T`, reporting the first shape error with its
/// pointer. Trailing content after the document is an error, and so is a
/// key repeated within one object.
pub fn parse_json<T: DeserializeOwned>(text: &str) -> Result<T, Problems> {
    match read_once(text) {
        Some(value) => Ok(value),
        None => read_with_pointers(text),
    }
}

/// [`parse_json`] for callers that answer malformed JSON differently from a
/// shape error (HTTP's 400 against 422): a syntax error anywhere in the
/// text wins over a shape error before it.
pub fn read_json<T: DeserializeOwned>(text: &str) -> Result<T, Unreadable> {
    if let Some(value) = read_once(text) {
        return Ok(value);
    }
    if let Some(why) = json_syntax_error(text) {
        return Err(Unreadable::Malformed(why));
    }
    read_with_pointers(text).map_err(Unreadable::Invalid)
}

/// The one read of a well-formed document: `None` if it fails or if its
/// watch is raised, so that [`read_with_pointers`] finds and describes the
/// problems.
fn read_once<T: DeserializeOwned>(text: &str) -> Option<T> {
    let watch = Watch::default();
    let mut de = serde_json::Deserializer::from_str(text);
    let value = T::deserialize(Strict(&mut de, &watch)).ok()?;
    de.end().ok()?;
    (!watch.raised()).then_some(value)
}

/// The long way: the scan for what the typed read does not see, then the
/// typed read with the pointer of its first error.
fn read_with_pointers<T: DeserializeOwned>(text: &str) -> Result<T, Problems> {
    if let Some(problem) = scan_document(text) {
        return Err(problem);
    }
    let watch = Watch::default();
    let mut de = serde_json::Deserializer::from_str(text);
    let value: T = serde_path_to_error::deserialize(Strict(&mut de, &watch)).map_err(|e| {
        let pointer = pointer_of(e.path());
        let detail = describe(e.inner());
        Problems::one(pointer, detail)
    })?;
    de.end().map_err(|e| Problems::one("", describe(&e)))?;
    Ok(value)
}

/// A JSON syntax error in plain words with its line and column, or `None`
/// if `text` is well-formed JSON (for callers that answer malformed JSON
/// differently from a shape error, such as HTTP's 400 against 422).
pub fn json_syntax_error(text: &str) -> Option<String> {
    serde_json::from_str::<de::IgnoredAny>(text).err().filter(|e| !e.is_data()).map(|e| describe(&e))
}

/// Converts serde's path into an RFC 6901 pointer.
fn pointer_of(path: &serde_path_to_error::Path) -> String {
    use serde_path_to_error::Segment;
    let mut p = Pointer::root();
    for seg in path.iter() {
        p = match seg {
            Segment::Seq { index } => p.index(*index),
            Segment::Map { key } => p.key(key),
            Segment::Enum { variant } => p.key(variant),
            Segment::Unknown => p,
        };
    }
    p.to_string()
}

/// serde_json's message in plain words, with the position made plain:
/// "... (line 3, column 7)".
fn describe(e: &serde_json::Error) -> String {
    let text = e.to_string();
    let raw = match text.rfind(" at line ") {
        Some(cut) => &text[..cut],
        None => text.as_str(),
    };
    let msg = plain_words(raw);
    if e.line() > 0 && e.column() > 0 { format!("{msg} (line {}, column {})", e.line(), e.column()) } else { msg }
}

/// One serde or serde_json message in plain words. Each message shape the
/// two crates produce is matched; anything else keeps its text with the
/// Rust words replaced.
pub fn plain_words(raw: &str) -> String {
    if let Some(rest) = raw.strip_prefix("invalid type: ")
        && let Some((got, want)) = rest.split_once(", expected ")
    {
        return format!("{} is given where {} is needed", given(got), needed(want));
    }
    if let Some(rest) = raw.strip_prefix("invalid value: ")
        && let Some((got, want)) = rest.split_once(", expected ")
    {
        return format!("{} is not allowed here: give {}", given(got), needed(want));
    }
    if let Some(rest) = raw.strip_prefix("invalid length ")
        && let Some((n, want)) = rest.split_once(", expected ")
    {
        return format!("this list has {n} item(s) where {} is needed", needed(want));
    }
    if let Some(rest) = raw.strip_prefix("unknown variant ") {
        let (word, choices) = rest.split_once(", expected ").unwrap_or((rest, ""));
        return format!("{} is not one of the accepted words{}", quoted(word), choice_list(choices, ": use "));
    }
    if let Some(rest) = raw.strip_prefix("unknown field ") {
        let (key, known) = rest.split_once(", expected ").unwrap_or((rest, ""));
        let known = known.strip_prefix("one of ").unwrap_or(known);
        let allowed = if rest.ends_with("there are no fields") {
            "; no keys are allowed here".to_string()
        } else {
            choice_list(known, "; the keys allowed here are ")
        };
        let key = key.strip_suffix(", there are no fields").unwrap_or(key);
        return format!("unknown key {} (a misspelling?){allowed}", quoted(key));
    }
    if let Some(key) = raw.strip_prefix("missing field ") {
        return format!("the required key {} is missing", quoted(key));
    }
    if let Some(key) = raw.strip_prefix("duplicate field ") {
        return format!("the key {} is given twice in this object: give it once", quoted(key));
    }
    syntax_words(raw).map_or_else(|| without_jargon(raw), str::to_string)
}

/// serde_json's syntax messages (its `ErrorCode` texts) in plain words.
fn syntax_words(raw: &str) -> Option<&'static str> {
    Some(match raw {
        "EOF while parsing a value"
        | "EOF while parsing a list"
        | "EOF while parsing an object"
        | "EOF while parsing a string" => "the document ends too early (it is empty or cut off)",
        // serde_json also says this for a number or list where a word is expected.
        "expected value" => {
            "the value here cannot be read: it is missing, is not valid JSON (text needs double quotes), or is not one of the accepted words"
        }
        "trailing comma" => "a comma is followed by nothing: remove the last comma",
        "trailing characters" => "there is more text after the end of the document",
        "key must be a string" => "an object key must be text in double quotes",
        "expected ident" => "a word here is not valid JSON (true, false and null are the only bare words)",
        "invalid number" => "a number here is not valid JSON",
        "number out of range" => "number out of range (not a finite 64-bit value)",
        "invalid escape" => "a backslash escape in a text is not valid JSON",
        "control character (\\u0000-\\u001F) found while parsing a string" => {
            "a text contains a raw control character (such as a line break): remove it (only points_csv and file_text may hold line breaks and tabs, written as \\n and \\t)"
        }
        "recursion limit exceeded" => "the document is nested too deeply",
        "lone leading surrogate in hex escape" | "unexpected end of hex escape" | "invalid unicode code point" => {
            "a \\u escape in a text is not a valid character"
        }
        "expected `:`" => "a colon (:) is missing after an object key",
        "expected `,` or `]`" => "a comma (,) or the closing ] of a list is missing",
        "expected `,` or `}`" => "a comma (,) or the closing } of an object is missing",
        _ => return None,
    })
}

/// What serde says was given (its `Unexpected` display), in JSON words.
fn given(got: &str) -> String {
    let inner = |prefix: &str| got.strip_prefix(prefix).map(|v| v.trim_matches('`').to_string());
    if let Some(v) = got.strip_prefix("string ") {
        return format!("the text {v}");
    }
    if let Some(v) = inner("integer ").or_else(|| inner("floating point ")) {
        return format!("the number {v}");
    }
    if let Some(v) = inner("boolean ") {
        return format!("the word {v}");
    }
    match got {
        "null" | "unit value" | "Option value" => "null (nothing)".to_string(),
        "map" => "an object { }".to_string(),
        "sequence" => "a list [ ]".to_string(),
        other => without_jargon(other),
    }
}

/// What serde says it expected (its `Expected` display), in JSON words.
fn needed(want: &str) -> String {
    let want = want.trim();
    if let Some(n) = want.strip_prefix("an array of length ").or_else(|| want.strip_prefix("a tuple of size ")) {
        return format!("a list of {n} items [ ]");
    }
    if want.starts_with("internally tagged enum") {
        return "an object { } with a \"kind\"".to_string();
    }
    if want.starts_with("struct ") || want.starts_with("a JSON object") {
        return "an object { }".to_string();
    }
    match want {
        "f64" | "f32" => "a number",
        "u8" | "u16" | "u32" | "u64" | "u128" | "usize" => "a whole number (0 or more)",
        "i8" | "i16" | "i32" | "i64" | "i128" | "isize" => "a whole number",
        "a string" | "a borrowed string" | "string" => "text in double quotes",
        "a sequence" | "sequence" | "a tuple" => "a list [ ]",
        "a map" | "map" => "an object { }",
        "a boolean" | "bool" => "true or false",
        "a character" | "char" => "a single character",
        other => return without_jargon(other),
    }
    .to_string()
}

/// "`a`, `b` or `c`" / "one of `a`, `b`" → "'a', 'b' or 'c'" after `lead`
/// (quoted: they are words of the document, not of the message).
fn choice_list(choices: &str, lead: &str) -> String {
    let choices = choices.strip_prefix("one of ").unwrap_or(choices).trim();
    if choices.is_empty() { String::new() } else { format!("{lead}{}", choices.replace('`', "'")) }
}

/// "`word`" → "'word'".
fn quoted(word: &str) -> String {
    format!("'{}'", word.trim().trim_matches('`'))
}

/// Rust's words for JSON shapes replaced by JSON's own, for a message no
/// rule above matched.
fn without_jargon(text: &str) -> String {
    const WORDS: [(&str, &str); 12] = [
        ("internally tagged enum", "object with a \"kind\""),
        ("untagged enum", "value"),
        ("enum", "choice"),
        ("variant", "choice"),
        ("struct", "object"),
        ("sequence", "list"),
        ("map", "object"),
        ("f64", "number"),
        ("f32", "number"),
        ("u32", "whole number"),
        ("u64", "whole number"),
        ("usize", "whole number"),
    ];
    let mut out = text.replace('`', "'");
    for (rust, json) in WORDS {
        out = out.replace(rust, json);
    }
    out
}

/// Keys whose text values are files by nature and may hold tabs and line
/// breaks ([`crate::text::multi_line_problem`]): a survey's measurements as
/// CSV, and its delimiter (which may be a tab); a file sent for import
/// (`file_text`). Every other text is one line.
pub const MULTI_LINE_KEYS: [&str; 3] = ["points_csv", "csv_delimiter", "file_text"];

/// What the typed parse would not see: every control character in a key or
/// a text, and the first key repeated within one object (which stops the
/// pass). A syntax error is left to the typed parse, which reports it with
/// its pointer.
fn scan_document(text: &str) -> Option<Problems> {
    let found = RefCell::new(Problems::default());
    let mut de = serde_json::Deserializer::from_str(text);
    let _ = Scan { at: Pointer::root(), multi_line: false, found: &found }.deserialize(&mut de);
    let found = found.into_inner();
    (!found.is_empty()).then_some(found)
}

/// A walk over any JSON value that records control characters and stops at
/// the first repeated key.
struct Scan<'a> {
    at: Pointer,
    /// The value sits under one of [`MULTI_LINE_KEYS`].
    multi_line: bool,
    found: &'a RefCell<Problems>,
}

impl Scan<'_> {
    fn stop<E: de::Error>(&self, at: &Pointer, detail: &str) -> E {
        self.found.borrow_mut().push(at, detail);
        E::custom("stopped")
    }
    fn check_text(&self, at: &Pointer, text: &str, multi_line: bool) {
        let problem = if multi_line { multi_line_problem(text) } else { single_line_problem(text) };
        if let Some(why) = problem {
            self.found.borrow_mut().push(at, why);
        }
    }
}

impl<'de> DeserializeSeed<'de> for Scan<'_> {
    type Value = ();
    fn deserialize<D: de::Deserializer<'de>>(self, d: D) -> Result<(), D::Error> {
        d.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for Scan<'_> {
    type Value = ();
    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("any JSON value")
    }
    fn visit_bool<E: de::Error>(self, _: bool) -> Result<(), E> {
        Ok(())
    }
    fn visit_i64<E: de::Error>(self, _: i64) -> Result<(), E> {
        Ok(())
    }
    fn visit_u64<E: de::Error>(self, _: u64) -> Result<(), E> {
        Ok(())
    }
    fn visit_f64<E: de::Error>(self, _: f64) -> Result<(), E> {
        Ok(())
    }
    fn visit_unit<E: de::Error>(self) -> Result<(), E> {
        Ok(())
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<(), E> {
        self.check_text(&self.at, v, self.multi_line);
        Ok(())
    }
    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
        let mut i = 0;
        let item = |i| Scan { at: self.at.index(i), multi_line: self.multi_line, found: self.found };
        while seq.next_element_seed(item(i))?.is_some() {
            i += 1;
        }
        Ok(())
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<(), A::Error> {
        let mut seen = HashSet::new();
        while let Some(key) = map.next_key::<String>()? {
            let at = self.at.key(&key);
            self.check_text(&at, &key, false);
            if !seen.insert(key.clone()) {
                let detail = format!(
                    "the key '{key}' is given twice in this object: give it once (programs differ on which value wins)"
                );
                return Err(self.stop(&at, &detail));
            }
            let multi_line = MULTI_LINE_KEYS.contains(&key.as_str());
            map.next_value_seed(Scan { at, multi_line, found: self.found })?;
        }
        Ok(())
    }
}
