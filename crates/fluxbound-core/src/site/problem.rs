//! Validation problems addressed by RFC 6901 JSON pointers.

use serde::Serialize;
use std::fmt;

/// One problem with an input document: where (an RFC 6901 JSON pointer into
/// the submitted document) and what, in plain words.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Problem {
    pub pointer: String,
    pub detail: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let at = if self.pointer.is_empty() { "(document)" } else { &self.pointer };
        write!(f, "{at}: {}", self.detail)
    }
}

/// Every problem found in one document, in document order.
#[derive(Debug, Clone, PartialEq, Eq, Default, Serialize, thiserror::Error)]
#[error("{} problem(s) in the document, first: {}", .0.len(), .0.first().map(|p| p.to_string()).unwrap_or_default())]
pub struct Problems(pub Vec<Problem>);

impl Problems {
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }
    pub fn len(&self) -> usize {
        self.0.len()
    }
    pub fn iter(&self) -> std::slice::Iter<'_, Problem> {
        self.0.iter()
    }
    /// A single problem at a pointer given as text.
    pub fn one(pointer: impl Into<String>, detail: impl Into<String>) -> Problems {
        Problems(vec![Problem { pointer: pointer.into(), detail: detail.into() }])
    }
    /// Records a problem at `at`.
    pub fn push(&mut self, at: &Pointer, detail: impl Into<String>) {
        self.0.push(Problem { pointer: at.to_string(), detail: detail.into() });
    }
    /// `Ok(value)` if nothing was recorded, else the problems.
    pub fn into_result<T>(self, value: T) -> Result<T, Problems> {
        if self.0.is_empty() { Ok(value) } else { Err(self) }
    }
}

/// An RFC 6901 JSON pointer under construction.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Pointer(String);

impl Pointer {
    /// The whole document (`""`).
    pub fn root() -> Self {
        Pointer(String::new())
    }
    /// Appends an object key, escaping `~` as `~0` and `/` as `~1`.
    ///
    /// One allocation of the exact size: validation builds a pointer for
    /// every conductor it walks, so this is on the path of every request.
    pub fn key(&self, key: &str) -> Self {
        let extra = key.bytes().filter(|b| matches!(b, b'~' | b'/')).count();
        let mut out = String::with_capacity(self.0.len() + 1 + key.len() + extra);
        out.push_str(&self.0);
        out.push('/');
        if extra == 0 {
            out.push_str(key);
        } else {
            for c in key.chars() {
                match c {
                    '~' => out.push_str("~0"),
                    '/' => out.push_str("~1"),
                    c => out.push(c),
                }
            }
        }
        Pointer(out)
    }
    /// The pointer to a sibling key: `/a/b` → `/a/key`.
    pub fn parent_key(self, key: &str) -> Self {
        let cut = self.0.rfind('/').unwrap_or(0);
        Pointer(self.0[..cut].to_string()).key(key)
    }
    /// Appends an array index (one allocation, sized for any index).
    pub fn index(&self, i: usize) -> Self {
        use std::fmt::Write;
        let mut out = String::with_capacity(self.0.len() + 21);
        out.push_str(&self.0);
        // Writing to a String cannot fail.
        let _ = write!(out, "/{i}");
        Pointer(out)
    }
}

impl fmt::Display for Pointer {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}
