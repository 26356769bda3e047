//! Strategies: arbitrary JSON, and mutations of a valid JSON document, at
//! the value level (the document stays JSON) and at the text level.

use proptest::prelude::*;
use proptest::sample::Index;
use serde_json::{Map, Value, json};

/// Longest list a mutation inserts: above the site's 5,000-item limits, so
/// those limits are reached, and small enough for thousands of cases.
const LONG_LIST: usize = 6_000;

/// Nesting depth of the deepest inserted value: above serde_json's
/// recursion limit of 128.
const DEEP: usize = 140;

/// Numbers and texts that have broken parsers: the extremes of f64, the
/// signed zero, the smallest subnormal, integers past i64 and u64 range
/// (read as floats), numbers written as text, control and direction
/// characters, the empty text and a very long one.
fn odd_scalar() -> impl Strategy<Value = Value> {
    prop_oneof![
        Just(json!(1e308)),
        Just(json!(-1e308)),
        Just(json!(f64::MAX)),
        Just(json!(-0.0)),
        Just(json!(0)),
        Just(json!(-1)),
        Just(json!(5e-324)),
        Just(json!(u64::MAX)),
        Just(json!(i64::MIN)),
        Just(json!(0.5)),
        Just(json!(3000.000001)),
        Just(json!("50")),
        Just(json!("")),
        Just(json!(" ")),
        Just(json!("\u{0}")),
        Just(json!("a\u{1b}[31mb\u{7f}\u{85}")),
        Just(json!("\u{202e}Ünïcödé 漢字 🙂\u{feff}")),
        Just(json!("x".repeat(70_000))),
        Just(json!(true)),
        Just(Value::Null),
        Just(json!([])),
        Just(json!({})),
        any::<f64>().prop_filter("JSON numbers are finite", |v| v.is_finite()).prop_map(|v| json!(v)),
        any::<i64>().prop_map(|v| json!(v)),
        "[a-zA-Z_~/ -]{0,12}".prop_map(Value::String),
    ]
}

/// Any JSON value of bounded size, with keys from the documents' own words
/// now and then so that some values get past the first unknown key.
pub fn any_json() -> impl Strategy<Value = Value> {
    let key = prop_oneof![
        "[a-z_]{1,10}",
        Just("name".to_string()),
        Just("id".to_string()),
        Just("frequency_hz".to_string()),
        Just("circuits".to_string()),
        Just("conductors".to_string()),
        Just("bands".to_string()),
        Just("kind".to_string()),
    ];
    odd_scalar().prop_recursive(4, 64, 8, move |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..8).prop_map(Value::Array),
            prop::collection::vec((key.clone(), inner), 0..8)
                .prop_map(|kv| Value::Object(kv.into_iter().collect::<Map<String, Value>>())),
        ]
    })
}

/// One change to a document at one of its locations.
#[derive(Debug, Clone)]
pub enum Mutation {
    /// Remove the key (or list item).
    Delete,
    /// Put another value in its place.
    Replace(Value),
    /// A number becomes its text ("50"), text becomes a number, a list an
    /// object: the same content in another type.
    ChangeType,
    /// Wrap the value in a list.
    Wrap,
    /// Add a key nobody knows to an object (or an item to a list).
    AddUnknown(Value),
    /// Repeat a list's first item until the list is long.
    Lengthen(usize),
    /// Nest the value this deep in lists.
    Nest(usize),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        3 => Just(Mutation::Delete),
        4 => odd_scalar().prop_map(Mutation::Replace),
        1 => any_json().prop_map(Mutation::Replace),
        2 => Just(Mutation::ChangeType),
        1 => Just(Mutation::Wrap),
        1 => odd_scalar().prop_map(Mutation::AddUnknown),
        1 => prop_oneof![Just(2usize), Just(17), Just(LONG_LIST)].prop_map(Mutation::Lengthen),
        1 => prop_oneof![Just(3usize), Just(DEEP)].prop_map(Mutation::Nest),
    ]
}

/// One to three mutations, each at a location chosen among those the
/// document has when it is applied.
pub fn mutations() -> impl Strategy<Value = Vec<(Index, Mutation)>> {
    prop::collection::vec((any::<Index>(), mutation()), 1..=3)
}

/// Applies `changes` to a copy of `doc`.
pub fn mutated(doc: &Value, changes: &[(Index, Mutation)]) -> Value {
    let mut doc = doc.clone();
    for (at, change) in changes {
        let locations = locations(&doc);
        apply(&mut doc, &locations[at.index(locations.len())], change);
    }
    doc
}

/// The pointer of every value in `doc`, the root first.
fn locations(doc: &Value) -> Vec<String> {
    fn walk(v: &Value, at: String, out: &mut Vec<String>) {
        match v {
            Value::Object(map) => {
                for (k, child) in map {
                    walk(child, format!("{at}/{}", k.replace('~', "~0").replace('/', "~1")), out);
                }
            }
            Value::Array(items) => {
                for (i, child) in items.iter().enumerate() {
                    walk(child, format!("{at}/{i}"), out);
                }
            }
            _ => {}
        }
        out.push(at);
    }
    let mut out = Vec::new();
    walk(doc, String::new(), &mut out);
    out.reverse();
    out
}

fn apply(doc: &mut Value, at: &str, change: &Mutation) {
    if let Mutation::Delete = change {
        delete(doc, at);
        return;
    }
    let Some(target) = doc.pointer_mut(at) else { return };
    match change {
        Mutation::Delete => {}
        Mutation::Replace(v) => *target = v.clone(),
        Mutation::ChangeType => *target = other_type(target),
        Mutation::Wrap => *target = json!([target.take()]),
        Mutation::AddUnknown(v) => match target {
            Value::Object(map) => {
                map.insert("unexpected_key".into(), v.clone());
            }
            Value::Array(items) => items.push(v.clone()),
            other => *other = json!({ "unexpected_key": v }),
        },
        Mutation::Lengthen(n) => match target {
            Value::Array(items) if !items.is_empty() => {
                let first = items[0].clone();
                items.resize(*n, first);
            }
            other => *other = Value::Array(vec![json!(1.0); *n]),
        },
        Mutation::Nest(depth) => {
            let mut v = target.take();
            for _ in 0..*depth {
                v = json!([v]);
            }
            *target = v;
        }
    }
}

fn delete(doc: &mut Value, at: &str) {
    let Some((parent, last)) = at.rsplit_once('/') else {
        *doc = Value::Null;
        return;
    };
    match doc.pointer_mut(parent) {
        Some(Value::Object(map)) => {
            map.remove(&last.replace("~1", "/").replace("~0", "~"));
        }
        Some(Value::Array(items)) => {
            if let Ok(i) = last.parse::<usize>()
                && i < items.len()
            {
                items.remove(i);
            }
        }
        _ => {}
    }
}

fn other_type(v: &Value) -> Value {
    match v {
        Value::Number(n) => Value::String(n.to_string()),
        Value::String(s) => s.parse::<f64>().ok().filter(|f| f.is_finite()).map_or(json!(s.len()), |f| json!(f)),
        Value::Array(items) => {
            Value::Object(items.iter().enumerate().map(|(i, item)| (i.to_string(), item.clone())).collect())
        }
        Value::Object(map) => Value::Array(map.values().cloned().collect()),
        Value::Bool(b) => json!(if *b { 1 } else { 0 }),
        Value::Null => json!(false),
    }
}

/// A change to the text of a document: what a hand editor, a truncated
/// upload or a broken encoder does.
#[derive(Debug, Clone)]
pub enum TextEdit {
    /// Remove characters `[from, from + len)`.
    Cut(Index, usize),
    /// Insert a fragment before a character.
    Insert(Index, String),
    /// Keep only the first part (a truncated upload).
    Truncate(Index),
}

pub fn text_edits() -> impl Strategy<Value = Vec<TextEdit>> {
    let fragment = prop_oneof![
        Just("\"".to_string()),
        Just(",".to_string()),
        Just("{".to_string()),
        Just("]".to_string()),
        Just(":".to_string()),
        Just("\\u0000".to_string()),
        Just("\\ud800".to_string()),
        Just("\u{1}".to_string()),
        Just("1e400".to_string()),
        Just("-0".to_string()),
        Just("NaN".to_string()),
        Just("\"name\": \"again\",".to_string()),
        Just("\"frequency_hz\": 60,".to_string()),
        "[ -~]{1,6}",
        any::<char>().prop_map(String::from),
    ];
    let edit = prop_oneof![
        (any::<Index>(), 1usize..8).prop_map(|(at, n)| TextEdit::Cut(at, n)),
        (any::<Index>(), fragment).prop_map(|(at, f)| TextEdit::Insert(at, f)),
        any::<Index>().prop_map(TextEdit::Truncate),
    ];
    prop::collection::vec(edit, 1..=3)
}

/// Applies `edits` to `text`, at character boundaries.
pub fn edited(text: &str, edits: &[TextEdit]) -> String {
    let mut chars: Vec<char> = text.chars().collect();
    for edit in edits {
        let n = chars.len().max(1);
        match edit {
            TextEdit::Cut(at, len) => {
                let from = at.index(n).min(chars.len());
                let to = (from + len).min(chars.len());
                chars.drain(from..to);
            }
            TextEdit::Insert(at, fragment) => {
                let at = at.index(n + 1).min(chars.len());
                chars.splice(at..at, fragment.chars());
            }
            TextEdit::Truncate(at) => chars.truncate(at.index(n)),
        }
    }
    chars.into_iter().collect()
}
