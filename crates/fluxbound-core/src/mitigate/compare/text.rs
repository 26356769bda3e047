//! A comparison in plain words, for the command line.

use super::{Change, ComparedSide, Comparison, ItemChange, OneSideOnly, WorstItem};
use std::fmt::Write;

fn b(v: Option<f64>) -> String {
    v.map_or("not computed".to_string(), |v| format!("{v:.2} µT"))
}

fn ratio(v: Option<f64>) -> String {
    v.map_or("—".to_string(), |v| format!("{v:.3}"))
}

/// `+12.50 µT (+25.0 %)`, or the words of a missing number.
fn change(c: &Change, unit: &str, digits: usize) -> String {
    match (c.delta, c.percent, &c.note) {
        (Some(d), Some(p), _) => format!("{d:+.digits$}{unit} ({p:+.1} %)"),
        (Some(d), None, Some(n)) => format!("{d:+.digits$}{unit} ({n})"),
        (Some(d), None, None) => format!("{d:+.digits$}{unit}"),
        (None, _, n) => n.clone().unwrap_or_default(),
    }
}

fn source(s: &ComparedSide) -> String {
    let mut parts = vec![s.site_name.as_deref().map_or("(no name)".to_string(), |n| format!("'{n}'"))];
    parts.push(format!("{} load", s.load_case));
    if let Some(id) = &s.assessment_id {
        parts.push(format!("assessment {id}"));
    }
    if let Some(r) = s.site_revision {
        parts.push(format!("revision {r}"));
    }
    if let Some(f) = &s.site_file {
        parts.push(format!("file {f}"));
    }
    if let Some(sha) = &s.site_sha256 {
        parts.push(format!("SHA-256 {}…", super::short(sha)));
    }
    parts.join(", ")
}

fn tables(s: &ComparedSide) -> String {
    s.tables.iter().map(|t| format!("{} v{}", t.id, t.version)).collect::<Vec<_>>().join(", ")
}

fn worst(w: &Option<WorstItem>) -> String {
    match w {
        None => "nothing assessed".to_string(),
        Some(w) => {
            let r = match (&w.table_id, w.ratio) {
                (Some(t), Some(r)) => format!(", ratio {r:.3} against {t}"),
                _ => String::new(),
            };
            format!("{} {} {}{r}", w.verdict.word(), w.kind, w.id)
        }
    }
}

fn items(s: &mut String, title: &str, list: &[ItemChange]) {
    if list.is_empty() {
        return;
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "{title}");
    for i in list {
        let _ = writeln!(
            s,
            "  {:<16} B {} → {}  {}  {}",
            i.id,
            b(i.b_before_ut),
            b(i.b_after_ut),
            change(&i.b_change, " µT", 2),
            i.verdict.words
        );
        for t in &i.tables {
            let _ = writeln!(
                s,
                "  {:<16} {:<28} ratio {} → {}  {}  {}",
                "",
                t.table_id,
                ratio(t.ratio_before),
                ratio(t.ratio_after),
                change(&t.ratio_change, "", 3),
                t.verdict.words
            );
        }
    }
}

fn only(s: &mut String, side: &str, o: &OneSideOnly) {
    for (kind, ids) in [("positions", &o.positions), ("areas", &o.areas)] {
        if !ids.is_empty() {
            let _ = writeln!(s, "Only {side}: {kind} {}", ids.join(", "));
        }
    }
}

/// The comparison as a short report: both sides, the summary, each
/// position and area, what is on one side only, notes and cautions.
pub fn comparison_text(c: &Comparison) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "Comparison of two assessments (changes are after − before)");
    let _ = writeln!(s, "  before  {}", source(&c.before));
    let _ = writeln!(s, "          tables: {}", tables(&c.before));
    let _ = writeln!(s, "  after   {}", source(&c.after));
    let _ = writeln!(s, "          tables: {}", tables(&c.after));
    let m = &c.summary;
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Verdicts: {} improved, {} worse, {} unchanged, {} not comparable",
        m.improved, m.worse, m.unchanged, m.not_comparable
    );
    let _ = writeln!(s, "Worst before: {}", worst(&m.worst_before));
    let _ = writeln!(s, "Worst after:  {}", worst(&m.worst_after));
    items(&mut s, "Positions", &c.positions);
    items(&mut s, "Areas", &c.areas);
    if !(c.only_before.positions.is_empty()
        && c.only_before.areas.is_empty()
        && c.only_after.positions.is_empty()
        && c.only_after.areas.is_empty())
    {
        let _ = writeln!(s);
        only(&mut s, "before", &c.only_before);
        only(&mut s, "after", &c.only_after);
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Notes:");
    for n in &c.notes {
        let _ = writeln!(s, "- {n}");
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Cautions:");
    for n in &c.cautions {
        let _ = writeln!(s, "- {n}");
    }
    s
}
