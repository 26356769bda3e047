//! JSON text → wire types, with the failing location as a JSON pointer.
//!
//! Shape errors (wrong type, missing or unknown field, malformed JSON) stop
//! deserialisation at the first one; value errors are all collected later by
//! the validator.

use super::problem::{Pointer, Problems};
use super::strict::Strict;
use serde::de::DeserializeOwned;

/// Parses a JSON document into `T`, reporting the first shape error with its
/// pointer. Trailing content after the document is an error.
pub fn parse_json<T: DeserializeOwned>(text: &str) -> Result<T, Problems> {
    let mut de = serde_json::Deserializer::from_str(text);
    let value: T = serde_path_to_error::deserialize(Strict(&mut de)).map_err(|e| {
        let pointer = pointer_of(e.path());
        let detail = describe(e.inner());
        Problems::one(pointer, detail)
    })?;
    de.end().map_err(|e| Problems::one("", describe(&e)))?;
    Ok(value)
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

/// serde_json's message with its own wording kept, and the position made
/// plain: "... (line 3, column 7)".
fn describe(e: &serde_json::Error) -> String {
    let text = e.to_string();
    let msg = match text.rfind(" at line ") {
        Some(cut) => &text[..cut],
        None => text.as_str(),
    };
    let mut msg = msg.replace("number out of range", "number out of range (not a finite 64-bit value)");
    // Name the JSON shape, not the Rust type behind it.
    if let Some(cut) = msg.find("expected struct ") {
        msg.truncate(cut);
        msg.push_str("expected a JSON object");
    }
    if e.line() > 0 && e.column() > 0 { format!("{msg} (line {}, column {})", e.line(), e.column()) } else { msg }
}
