//! The one rule for text that people give: no control characters.
//!
//! A control character is any `char::is_control` one: Unicode category Cc,
//! which is U+0000–U+001F (NUL, tab, line breaks, escape, …), U+007F
//! (delete) and the C1 controls U+0080–U+009F. None belongs in a name, a
//! label, an id or a sentence: they corrupt printouts, logs and terminals
//! (an escape sequence can rewrite what an operator sees), PostgreSQL
//! cannot store NUL at all, and SQLite would store it silently, so the two
//! databases would differ. Lone surrogates cannot occur (Rust strings are
//! valid UTF-8, and JSON's `\uD800` escapes are refused by the parser).
//!
//! Every other character is allowed: letters of any script, combining
//! marks, emoji, and the invisible formatting characters (category Cf, such
//! as a zero-width joiner), which some scripts need.
//!
//! Only a text that is a whole file by nature may hold line breaks and
//! tabs: [`multi_line_problem`] (the CSV of a survey's measurements is the
//! one such field). Everything else is one line: [`single_line_problem`].
//! Callers in the core, the service and the HTTP edge all ask these two
//! functions, so the rule and its words are the same everywhere.

/// The characters a multi-line text may hold beside printable ones: tab,
/// line feed and carriage return (CSV files use all three).
pub const LAYOUT_CHARACTERS: [char; 3] = ['\t', '\n', '\r'];

/// True if `text` holds any control character, layout ones included: the
/// cheap test a caller runs first, before asking which rule applies.
pub fn has_control(text: &str) -> bool {
    text.bytes().any(|b| b < 0x20 || b == 0x7f) || (!text.is_ascii() && text.chars().any(char::is_control))
}

/// Why `text` cannot be a one-line text (a name, label, id, title,
/// sentence or query value), in plain words, or `None` if it can.
///
/// ```
/// use fluxbound_core::text::single_line_problem;
/// assert_eq!(single_line_problem("Bay 4"), None);
/// assert_eq!(
///     single_line_problem("Bay\u{0}4").as_deref(),
///     Some("text must not contain control characters (found U+0000, NUL, at character 4)")
/// );
/// ```
pub fn single_line_problem(text: &str) -> Option<String> {
    first_control(text, &[])
}

/// Why `text` cannot be a multi-line text (one that may hold tabs and line
/// breaks, such as CSV), or `None` if it can.
pub fn multi_line_problem(text: &str) -> Option<String> {
    first_control(text, &LAYOUT_CHARACTERS)
}

/// The first control character not in `allowed`, described with its code
/// point, its name where it has a common one, and its 1-based position in
/// characters (what an editor's column shows on one line).
fn first_control(text: &str, allowed: &[char]) -> Option<String> {
    let (at, c) = text.chars().enumerate().find(|(_, c)| c.is_control() && !allowed.contains(c))?;
    let name = match common_name(c) {
        Some(n) => format!(", {n},"),
        None => String::new(),
    };
    Some(format!("text must not contain control characters (found U+{:04X}{name} at character {})", c as u32, at + 1))
}

/// The names people know control characters by.
fn common_name(c: char) -> Option<&'static str> {
    Some(match c {
        '\0' => "NUL",
        '\t' => "a tab",
        '\n' => "a line feed",
        '\r' => "a carriage return",
        '\u{1b}' => "escape",
        '\u{7f}' => "delete",
        _ => return None,
    })
}
