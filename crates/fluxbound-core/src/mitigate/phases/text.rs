//! The phase search in plain words, for the command line.

use super::{Arrangement, Measure, Method, PhaseSearch};
use std::fmt::Write;

use crate::mitigate::judge::{closing_text, value_text as value};

fn phases(a: &Arrangement) -> String {
    a.phases.iter().map(|(c, p)| format!("{c}: {:?}{:?}{:?}", p[0], p[1], p[2])).collect::<Vec<_>>().join(", ")
}

fn changes(a: &Arrangement) -> String {
    if a.changes.is_empty() {
        return "no change".to_string();
    }
    a.changes.iter().map(|c| format!("{} {:?}→{:?}", c.conductor, c.from, c.to)).collect::<Vec<_>>().join(", ")
}

/// The search as a short report: counting, as built, the ranking, notes.
pub fn phases_text(r: &PhaseSearch) -> String {
    let mut s = String::new();
    let of = match (&r.table, r.measure) {
        (Some(t), Measure::Ratio) => format!("exposure ratio against {} (v{})", t.id, t.version),
        _ => "resultant RMS flux density".to_string(),
    };
    let over = match r.over {
        super::Over::Max => "highest value over",
        super::Over::Mean => "mean of the highest values of",
    };
    let _ = writeln!(s, "Phase arrangements of {} at {} load", r.circuits.join(", "), r.load.name());
    let _ = writeln!(s, "Objective: {over} the targets ({} points), {of}", r.points);
    let _ = writeln!(
        s,
        "Arrangements: {} in all, {} distinct ({})",
        r.counting.all, r.counting.distinct, r.counting.reason
    );
    let method = match (r.method, r.complete) {
        (Method::Exhaustive, _) => "every distinct arrangement evaluated".to_string(),
        (Method::BranchAndBound, true) => format!("branch and bound, {} evaluated, ranking proven", r.evaluated),
        (Method::BranchAndBound, false) => format!(
            "branch and bound stopped by the work budget after {} arrangements: an unexplored one could be lower by up to {}",
            r.evaluated,
            r.optimality_gap.map_or("an unknown amount".to_string(), |g| value(r.measure, g))
        ),
    };
    let _ = writeln!(s, "Search: {method}");
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "As built: {} (worst: {} {}){}",
        value(r.measure, r.as_built.objective),
        r.as_built.worst.kind,
        r.as_built.worst.id,
        r.as_built.rank.map_or(String::new(), |k| format!(", rank {k} of {}", r.counting.distinct))
    );
    let _ = writeln!(s);
    for a in &r.ranked {
        let better = a.improvement_percent.map_or(String::new(), |p| {
            if p >= 0.0 {
                format!(", {p:.1} % lower than as built")
            } else {
                format!(", {:.1} % higher than as built", -p)
            }
        });
        let _ = writeln!(
            s,
            "{:>3}. {}{} — worst {} {}",
            a.rank.unwrap_or(0),
            value(r.measure, a.objective),
            better,
            a.worst.kind,
            a.worst.id
        );
        let _ = writeln!(s, "     phases {}", phases(a));
        let _ = writeln!(s, "     changes {}", changes(a));
    }
    closing_text(&mut s, &r.left_out, &r.warnings, &r.notes, &r.cautions);
    s
}
