//! Where a table gives no level: the holes between its bands and below or
//! above its covered range, within the span the project assesses (1 Hz to
//! 10 MHz, the scope of ICNIRP 2010). A frequency in a hole makes every
//! comparison against the table `not_covered`, so the holes are listed in
//! plain words wherever a table is shown.

use super::table::ReferenceTable;
use serde::Serialize;

/// The span within which holes are reported, Hz: 1 Hz to 10 MHz.
pub const COVERAGE_SPAN_HZ: (f64, f64) = (1.0, 1.0e7);

/// A frequency range, inside [`COVERAGE_SPAN_HZ`], where a table gives no level.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct CoverageHole {
    /// Lower edge, Hz.
    pub from_hz: f64,
    /// Upper edge, Hz (greater than from_hz).
    pub to_hz: f64,
    /// The hole in plain words, with the declared reason when there is one.
    pub words: String,
}

/// Every hole of `table` within [`COVERAGE_SPAN_HZ`], lowest first: below the
/// first band, between bands (declared gaps), above the last band.
pub fn coverage_holes(table: &ReferenceTable) -> Vec<CoverageHole> {
    let (lo, hi) = COVERAGE_SPAN_HZ;
    let bands = table.bands(); // sorted by from_hz, contiguous except at declared gaps
    let mut holes = Vec::new();
    let mut covered_to = lo;
    for b in bands {
        if b.from_hz > covered_to {
            holes.push((covered_to, b.from_hz.min(hi)));
        }
        covered_to = covered_to.max(b.to_hz);
    }
    if covered_to < hi {
        holes.push((covered_to, hi));
    }
    holes.into_iter().filter(|(a, b)| b > a).map(|(a, b)| hole(table, a, b)).collect()
}

/// One hole with its words; a declared gap's reason is quoted.
fn hole(table: &ReferenceTable, from_hz: f64, to_hz: f64) -> CoverageHole {
    let (lo, hi) = COVERAGE_SPAN_HZ;
    let place = if from_hz <= lo {
        format!("below {} Hz (down to {lo} Hz)", to_hz)
    } else if to_hz >= hi {
        format!("above {} Hz (up to {hi:e} Hz)", from_hz)
    } else {
        format!("between {} Hz and {} Hz", from_hz, to_hz)
    };
    let reason = table
        .doc()
        .gaps
        .iter()
        .find(|g| g.from_hz <= from_hz && g.to_hz >= to_hz)
        .and_then(|g| g.reason.as_deref())
        .map(|r| format!(" ({r})"))
        .unwrap_or_default();
    let words = format!(
        "{place} this table gives no level{reason}: a field component there is reported as not covered, never \
         compared."
    );
    CoverageHole { from_hz, to_hz, words }
}
