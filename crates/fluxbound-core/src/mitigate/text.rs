//! A distance result in plain words, for the command line.

use super::{DistanceQuantity, DistanceResult};
use std::fmt::Write;

fn metres(d: Option<f64>, range_m: f64) -> String {
    match d {
        Some(d) => format!("{d:.5} m"),
        None => format!("not found within {range_m} m"),
    }
}

fn vector(v: &[f64; 3]) -> String {
    format!("({:.3}, {:.3}, {:.3})", v[0], v[1], v[2])
}

/// The result as lines of plain text: what was searched, both distances,
/// then the notes.
pub fn distance_text(r: &DistanceResult) -> String {
    let mut s = String::new();
    let threshold = match (r.quantity, &r.table, r.level_ut) {
        (DistanceQuantity::ExposureRatio, Some(t), _) => {
            format!("exposure ratio 1 of table {} v{} (sum over frequencies of B/level)", t.id, t.version)
        }
        (_, _, Some(l)) => format!("{l} µT (resultant over all frequencies)"),
        _ => "the threshold".to_string(),
    };
    let _ = writeln!(s, "Distance to {threshold}");
    let _ = writeln!(s, "  from            {}", vector(&r.from));
    let origin = match (r.b_at_origin_ut, r.ratio_at_origin) {
        (None, _) => "inside a conductor (counts as above every level)".to_string(),
        (Some(b), Some(q)) => format!("{b:.4} µT, exposure ratio {q:.4}"),
        (Some(b), None) => format!("{b:.4} µT"),
    };
    let _ = writeln!(s, "  at the origin   {origin}");
    let _ = writeln!(
        s,
        "  clearance       {} along {}",
        metres(r.clearance_m, r.searched_to_m),
        vector(&r.clearance_direction)
    );
    let _ = writeln!(s, "  first crossing  {} along {}", metres(r.distance_m, r.searched_to_m), vector(&r.direction));
    let _ = writeln!(
        s,
        "  searched to     {} m in {} direction(s), within {} m",
        r.searched_to_m, r.directions_searched, r.tolerance_m
    );
    let _ = writeln!(s);
    for note in &r.notes {
        let _ = writeln!(s, "- {note}");
    }
    s
}
