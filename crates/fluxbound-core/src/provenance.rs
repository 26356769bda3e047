//! Where a result came from: the canonical site document and its SHA-256,
//! the tool and build, when and from which revision or file.
//!
//! The core stays pure: it never reads the clock or the build. The edges
//! (CLI, service) fill a [`Provenance`] and hand it in; the core only
//! computes the fingerprint, so both edges compute it the same way.
//!
//! # Canonical document
//!
//! The fingerprint is the SHA-256 of the site document serialised by the
//! JSON Canonicalization Scheme (RFC 8785): object members sorted by their
//! keys' UTF-16 code units, no insignificant white space, strings with the
//! minimal JSON escapes (`\"`, `\\`, `\b`, `\f`, `\n`, `\r`, `\t`, other
//! controls as `\u00xx` in lowercase hex, everything else as UTF-8), and
//! numbers written as ECMAScript writes a double (shortest round-trip digits;
//! `1e+21` and `1e-7` but `100` and `0.000001`; `-0` as `0`).
//!
//! The document hashed is the parsed site ([`crate::site::wire::SiteDoc`])
//! serialised again, not the bytes received: key order, white space and
//! number spelling (`1400`, `1400.0`, `1.4e3`) never change the fingerprint,
//! and neither does leaving out a field that has a default.

use serde::{Deserialize, Serialize};
use serde_json::Value;
use sha2::{Digest, Sha256};
use std::fmt::Write as _;

/// What the canonical form is, as the output names it.
pub const CANONICAL_FORM: &str = "SHA-256 of the site document in the RFC 8785 JSON Canonicalization Scheme";

/// Where one result came from. Filled by the caller: the core does not read
/// the clock, the build or the store.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Provenance {
    /// When the result was computed, UTC, RFC 3339 (`2026-12-02T15:04:05.123456Z`).
    pub computed_at: String,
    /// Fluxbound version that computed it.
    pub tool_version: String,
    /// Git commit of the build (12 hex digits), or `unknown` when built
    /// outside a git checkout.
    pub build_commit: String,
    /// Lowercase hex SHA-256 of the canonical site document (see `canonical_form`).
    #[cfg_attr(feature = "schema", schema(pattern = "^[0-9a-f]{64}$"))]
    pub site_sha256: String,
    /// How `site_sha256` was formed.
    pub canonical_form: String,
    /// The stored site revision assessed (service); `null` from a file.
    #[cfg_attr(feature = "schema", schema(required = true, minimum = 1))]
    pub site_revision: Option<i64>,
    /// The site file assessed (CLI); `null` for a stored revision.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_file: Option<String>,
}

impl Provenance {
    /// Where the site came from, in words: `revision 3` or `file site.json`.
    pub fn site_source(&self) -> String {
        match (&self.site_revision, &self.site_file) {
            (Some(r), _) => format!("revision {r}"),
            (None, Some(f)) => format!("file {f}"),
            (None, None) => "not recorded".to_string(),
        }
    }
}

/// The SHA-256 (lowercase hex) of `value`'s RFC 8785 canonical form.
pub fn fingerprint<T: Serialize>(value: &T) -> String {
    // Serialising plain data (no maps with non-string keys) cannot fail.
    let v = serde_json::to_value(value).unwrap_or(Value::Null);
    let digest = Sha256::digest(canonical_json(&v).as_bytes());
    digest.iter().fold(String::with_capacity(64), |mut s, b| {
        let _ = write!(s, "{b:02x}");
        s
    })
}

/// `value` in the RFC 8785 JSON Canonicalization Scheme.
pub fn canonical_json(value: &Value) -> String {
    let mut out = String::new();
    write_value(value, &mut out);
    out
}

fn write_value(value: &Value, out: &mut String) {
    match value {
        Value::Null => out.push_str("null"),
        Value::Bool(b) => out.push_str(if *b { "true" } else { "false" }),
        Value::Number(n) => out.push_str(&es_number(n.as_f64().unwrap_or(0.0))),
        Value::String(s) => write_string(s, out),
        Value::Array(items) => {
            out.push('[');
            for (i, item) in items.iter().enumerate() {
                if i > 0 {
                    out.push(',');
                }
                write_value(item, out);
            }
            out.push(']');
        }
        Value::Object(map) => {
            // RFC 8785 §3.2.3: members sorted by the UTF-16 code units of their keys.
            let mut members: Vec<(&String, &Value)> = map.iter().collect();
            members.sort_by(|a, b| a.0.encode_utf16().cmp(b.0.encode_utf16()));
            out.push('{');
            for (i, (k, v)) in members.into_iter().enumerate() {
                if i > 0 {
                    out.push(',');
                }
                write_string(k, out);
                out.push(':');
                write_value(v, out);
            }
            out.push('}');
        }
    }
}

/// RFC 8785 §3.2.2.2: the JSON string escapes of ECMAScript `JSON.stringify`.
fn write_string(s: &str, out: &mut String) {
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\u{8}' => out.push_str("\\b"),
            '\u{c}' => out.push_str("\\f"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if (c as u32) < 0x20 => {
                let _ = write!(out, "\\u{:04x}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
}

/// A finite double as ECMAScript's `Number.prototype.toString` writes it
/// (ECMA-262 Number::toString, as RFC 8785 §3.2.2.3 requires). Rust's
/// `{:e}` gives the shortest round-trip digits; only the layout differs.
/// JSON cannot carry NaN or infinities, so they never reach here; they
/// would be written as `null`.
pub fn es_number(v: f64) -> String {
    if !v.is_finite() {
        return "null".to_string();
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let sci = format!("{:e}", v.abs());
    let (mantissa, exp) = sci.split_once('e').unwrap_or((&sci, "0"));
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let k = digits.len() as i32;
    // n: the decimal point sits after n digits (ECMA-262's n).
    let n = exp.parse::<i32>().unwrap_or(0) + 1;
    let body = if k <= n && n <= 21 {
        format!("{digits}{}", "0".repeat((n - k) as usize))
    } else if 0 < n && n <= 21 {
        format!("{}.{}", &digits[..n as usize], &digits[n as usize..])
    } else if -6 < n && n <= 0 {
        format!("0.{}{digits}", "0".repeat((-n) as usize))
    } else {
        let sign = if n - 1 < 0 { '-' } else { '+' };
        let rest = if k > 1 { format!(".{}", &digits[1..]) } else { String::new() };
        format!("{}{rest}e{sign}{}", &digits[..1], (n - 1).abs())
    };
    if v < 0.0 { format!("-{body}") } else { body }
}
