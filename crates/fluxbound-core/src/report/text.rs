//! Plain-text rendering of an assessment for a terminal or a printout.
//!
//! Layout of our own: a heading block, one block per position with a row
//! per height and a summary row, one block per area, then notes and
//! cautions. Every table is numbered once in the heading so the columns stay
//! narrow.

use super::snake;
use crate::assess::{AreaResult, Assessment, HeightResult, PositionResult, Verdict};
use crate::limits::ReferenceTable;
use std::fmt::Write;

fn num(v: Option<f64>, digits: usize) -> String {
    match v {
        Some(x) => format!("{x:.digits$}"),
        None => "—".to_string(),
    }
}

fn verdict_word(v: Verdict) -> &'static str {
    match v {
        Verdict::Within => "within",
        Verdict::Approaching => "APPROACHING",
        Verdict::Exceeds => "EXCEEDS",
        Verdict::NotCovered => "not covered",
        Verdict::NotComputed => "not computed",
    }
}

fn time_weighted_line(s: &mut String, tw: Option<&crate::assess::TimeWeighted>) {
    if let Some(tw) = tw {
        let _ = writeln!(
            s,
            "    8-h time-weighted {:.2} µT ({} h at the highest value; information only)",
            tw.twa_8h_ut, tw.occupancy_h
        );
    }
}

/// Renders an assessment as aligned plain text.
pub fn assessment_text(a: &Assessment) -> String {
    let mut s = String::new();
    heading(&mut s, a);
    if !a.warnings.is_empty() {
        let _ = writeln!(s);
        s.push_str(&warnings_text(&a.warnings));
    }
    if !a.positions.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "POSITIONS   B in µT RMS; under each table: exposure ratio B / level, and verdict");
        for p in &a.positions {
            position_block(&mut s, a, p);
        }
    }
    if !a.areas.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "AREAS   shares: part of the area at or above the level, and at or above the review fraction of it"
        );
        for ar in &a.areas {
            area_block(&mut s, a, ar);
        }
    }
    summary(&mut s, a);
    let _ = writeln!(s);
    let _ = writeln!(s, "NOTES");
    for n in &a.notes {
        let _ = writeln!(s, "  - {n}");
    }
    cautions(&mut s, &a.cautions);
    s
}

/// The short column name (`T1`, `T2`, …) of a table, numbered in the heading.
fn table_column(a: &Assessment, id: &str) -> String {
    a.tables.iter().position(|t| t.id == id).map(|i| format!("T{}", i + 1)).unwrap_or_default()
}

/// Title, the pre-screen caution, provenance, load case with every phase
/// current, frequency, review fraction and the numbered tables with their
/// full citations.
fn heading(s: &mut String, a: &Assessment) {
    let name = a.site_name.as_deref().unwrap_or("(unnamed site)");
    let _ = writeln!(s, "MAGNETIC FIELD EXPOSURE PRE-SCREEN — {name}");
    let _ = writeln!(s, "Computed pre-screen only: compliance is decided under local codes by qualified assessors.");
    let _ = writeln!(s);
    provenance_lines(s, a.provenance.as_ref());
    let loads: Vec<String> = a.load_case.circuits.iter().map(|c| format!("{} {:.0} A", c.id, c.assessed_a)).collect();
    let _ = writeln!(
        s,
        "Load case     {} ({})",
        a.load_case.kind,
        if loads.is_empty() { "no circuits".into() } else { loads.join(", ") }
    );
    for line in a.load_case.phase_lines() {
        let _ = writeln!(s, "  phases      {line}");
    }
    let _ = writeln!(s, "Frequency     {} Hz", a.frequency_hz);
    let _ = writeln!(s, "Review from   {:.0} % of a level", a.review_fraction * 100.0);
    let _ = writeln!(s, "Tables");
    for (i, t) in a.tables.iter().enumerate() {
        let _ = writeln!(s, "  T{}  {} (v{}) — {}", i + 1, t.id, t.version, t.title);
        let _ = writeln!(s, "       source: {}", t.source);
    }
}

/// When, by which build and from which site document the result was
/// computed (absent only in results stored before provenance existed).
fn provenance_lines(s: &mut String, p: Option<&crate::provenance::Provenance>) {
    let Some(p) = p else {
        let _ = writeln!(s, "Provenance    not recorded (computed before provenance was kept)");
        return;
    };
    let _ = writeln!(s, "Computed      {} (UTC)", p.computed_at);
    let _ = writeln!(s, "Tool          fluxbound {} (build {})", p.tool_version, p.build_commit);
    let _ = writeln!(s, "Site          {}", p.site_source());
    let _ = writeln!(s, "Site SHA-256  {}", p.site_sha256);
    let _ = writeln!(s, "              ({})", p.canonical_form);
}

/// Under a position: each table whose worst ratio sums several
/// frequencies, with its terms, and the frequencies a table does not cover.
fn ratio_terms(s: &mut String, a: &Assessment, p: &PositionResult) {
    for c in &p.comparisons {
        let column = table_column(a, &c.table_id);
        if c.per_frequency.len() > 1 {
            let _ = writeln!(
                s,
                "    {column} ratio {} is a sum over {} frequencies (Σ B_f / B_RL(f)):",
                num(c.ratio, 3),
                c.per_frequency.len()
            );
            for f in &c.per_frequency {
                let _ = writeln!(
                    s,
                    "      {:>7} Hz  B_f {:>10.3} µT  B_RL(f) {:>10.3} µT  ratio {:.4}",
                    f.frequency_hz, f.b_ut, f.level_ut, f.ratio
                );
            }
        }
        uncovered_line(s, &column, &c.uncovered_hz);
    }
}

/// The two numbers of a comparison side by side and the rule that decided:
/// "T1 summation 0.900, weighted peak 0.645 → verdict by summation", or
/// why the weighted peak index is missing.
fn rule_line(s: &mut String, column: &str, summation: Option<f64>, wp: &crate::assess::WeightedPeak) {
    let (index, note, decided_by) = (wp.weighted_peak_index, wp.weighted_peak_note.as_deref(), wp.decided_by);
    let wpi = match (index, note) {
        (Some(_), _) => num(index, 3),
        (None, Some(n)) => format!("— ({n})"),
        (None, None) => "—".to_string(),
    };
    let _ = writeln!(
        s,
        "    {column} summation {}, weighted peak {wpi} → verdict by {}",
        num(summation, 3),
        decided_by.word()
    );
}

/// "T2 does not cover 150 Hz, 250 Hz" when a table leaves frequencies out.
fn uncovered_line(s: &mut String, column: &str, uncovered_hz: &[f64]) {
    if !uncovered_hz.is_empty() {
        let list: Vec<String> = uncovered_hz.iter().map(|f| format!("{f} Hz")).collect();
        let _ = writeln!(s, "    {column} not covered: the table has no level at {}", list.join(", "));
    }
}

/// Per table of an area, the frequencies it does not cover.
fn area_uncovered(s: &mut String, a: &Assessment, ar: &AreaResult) {
    for c in &ar.comparisons {
        uncovered_line(s, &table_column(a, &c.table_id), &c.uncovered_hz);
    }
}

/// One position: its line with the verdict, a row per height or point, the
/// mean row when there are several heights, time-weighted value and notes.
fn position_block(s: &mut String, a: &Assessment, p: &PositionResult) {
    let _ = writeln!(s);
    let region = match p.body_region {
        crate::site::wire::BodyRegion::WholeBody => "whole body",
        crate::site::wire::BodyRegion::Limb => "limb",
    };
    let group = match p.group {
        crate::site::wire::Group::General => "",
        crate::site::wire::Group::ImplantWearer => ", implant wearer",
    };
    let _ = writeln!(s, "  {}  ({region}{group})  →  {}", p.id, verdict_word(p.verdict));
    let mut header = format!("    {:<20} {:>11} {:>11}", "height or point", "B resultant", "B major-ax.");
    for c in &p.comparisons {
        let _ = write!(header, "  {:>7} {:<12}", table_column(a, &c.table_id), "");
    }
    let _ = writeln!(s, "{}", header.trim_end());
    for h in &p.heights {
        height_row(s, h);
    }
    if p.heights.len() > 1 {
        let mut row = format!("    {:<20} {:>11} {:>11}", "mean (information)", num(p.mean_resultant_ut, 2), "");
        for c in &p.comparisons {
            let _ = write!(row, "  {:>7} {:<12}", num(c.ratio_of_height_mean, 3), "");
        }
        let _ = writeln!(s, "{}", row.trim_end());
    }
    ratio_terms(s, a, p);
    for c in &p.comparisons {
        rule_line(s, &table_column(a, &c.table_id), c.ratio, &c.weighted_peak);
    }
    time_weighted_line(s, p.time_weighted.as_ref());
    for n in &p.notes {
        let _ = writeln!(s, "    note: {n}");
    }
    regime_lines(s, &p.regimes);
}

/// Each regime read against a result: the tiers, then its words with their
/// sources.
fn regime_lines(s: &mut String, regimes: &[crate::assess::RegimeResult]) {
    for r in regimes {
        if !r.evaluated {
            // One line: the program's own reason, no tiers to show.
            let why = r.words.first().map(|w| w.text.as_str()).unwrap_or("not read");
            let _ = writeln!(s, "    regime {}: {why}", r.regime);
            continue;
        }
        let _ = writeln!(
            s,
            "    regime {}: highest tier exceeded {}; first tier met {}",
            r.regime,
            r.highest_exceeded.as_deref().unwrap_or("none"),
            r.first_met.as_deref().unwrap_or("none")
        );
        for w in &r.words {
            let _ = writeln!(s, "      {} [{}]", w.text, w.source);
        }
    }
}

/// One height (or point) of a position: B, major axis, each table's ratio
/// and verdict, and the conductors it lies inside.
fn height_row(s: &mut String, h: &HeightResult) {
    let label = match h.height_m {
        Some(z) => format!("{z:.2} m"),
        None => format!("({:.2}, {:.2}, {:.2})", h.at[0], h.at[1], h.at[2]),
    };
    let mut row = format!("    {:<20} {:>11} {:>11}", label, num(h.resultant_ut, 2), num(h.maximum_ut, 2));
    for c in &h.comparisons {
        let _ = write!(row, "  {:>7} {:<12}", num(c.ratio, 3), verdict_word(c.verdict));
    }
    if !h.inside_conductors.is_empty() {
        let _ = write!(row, "  inside {}", h.inside_conductors.join(", "));
    }
    let _ = writeln!(s, "{}", row.trim_end());
}

/// One area: grid and verdict, highest and mean B, cells inside conductors,
/// a row per table with its shares, and the time-weighted value.
fn area_block(s: &mut String, a: &Assessment, ar: &AreaResult) {
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "  {}  (height {:.2} m, grid {:.2} m, {} cells)  →  {}",
        ar.id,
        ar.height_m,
        ar.spacing_m,
        ar.cells,
        verdict_word(ar.verdict)
    );
    let at = ar.max_at.map(|p| format!(" at ({:.2}, {:.2})", p[0], p[1])).unwrap_or_default();
    let _ =
        writeln!(s, "    B highest {} µT{at}, mean {} µT", num(ar.max_resultant_ut, 2), num(ar.mean_resultant_ut, 2));
    // The highest value covers cells, boundary and between samples; say how sure it is.
    if !ar.max_certainty.is_empty() {
        let _ = writeln!(s, "    highest value (cells and boundary): {}", ar.max_certainty);
    }
    if ar.cells_inside_conductors > 0 {
        let _ = writeln!(s, "    {} cells inside conductors are marked and not counted", ar.cells_inside_conductors);
    }
    for c in &ar.comparisons {
        let pct = |v: Option<f64>| v.map(|x| format!("{:.1} %", 100.0 * x)).unwrap_or_else(|| "—".into());
        let _ = writeln!(
            s,
            "    {:>4}  highest ratio {:>7}  share ≥ level {:>7}  share ≥ review {:>7}  {}",
            table_column(a, &c.table_id),
            num(c.max_ratio, 3),
            pct(c.share_at_or_above_level),
            pct(c.share_at_or_above_review),
            verdict_word(c.verdict)
        );
    }
    for c in &ar.comparisons {
        rule_line(s, &table_column(a, &c.table_id), c.max_ratio, &c.weighted_peak);
    }
    time_weighted_line(s, ar.time_weighted.as_ref());
    area_uncovered(s, a, ar);
    regime_lines(s, &ar.regimes);
}

/// The worst verdict and the positions and areas at or near a level.
fn summary(s: &mut String, a: &Assessment) {
    let _ = writeln!(s);
    let _ = writeln!(s, "SUMMARY   worst result: {}", verdict_word(a.summary.worst_verdict));
    let list = |v: &[String]| if v.is_empty() { "none".to_string() } else { v.join(", ") };
    let _ = writeln!(s, "  positions at or above a level:   {}", list(&a.summary.positions_exceeding));
    let _ = writeln!(s, "  positions in the review band:    {}", list(&a.summary.positions_approaching));
    if !a.summary.positions_not_judged.is_empty() {
        let _ = writeln!(s, "  positions not judged:            {}", list(&a.summary.positions_not_judged));
    }
    if !a.areas.is_empty() {
        let _ = writeln!(s, "  areas at or above a level:       {}", list(&a.summary.areas_exceeding));
        let _ = writeln!(s, "  areas in the review band:        {}", list(&a.summary.areas_approaching));
    }
}

/// The model warnings block: a heading line, then one line per warning
/// (code, pointer, detail). Empty when there are none.
pub fn warnings_text(warnings: &[crate::site::Warning]) -> String {
    let mut s = String::new();
    if warnings.is_empty() {
        return s;
    }
    let _ = writeln!(s, "MODEL WARNINGS ({})   the results stand, but the model may not be right here", warnings.len());
    for w in warnings {
        let at = if w.pointer.is_empty() { "(document)" } else { &w.pointer };
        let _ = writeln!(s, "  - {} at {at}: {}", snake(&w.code), w.detail);
    }
    s
}

/// The closing block every result carries.
fn cautions(s: &mut String, cautions: &[String]) {
    let _ = writeln!(s);
    let _ = writeln!(s, "CAUTIONS");
    for c in cautions {
        let _ = writeln!(s, "  - {c}");
    }
}

/// One line per table: id, kind, who, and its level at 50 and 60 Hz.
pub fn tables_text(tables: &[ReferenceTable]) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{:<30} {:<16} {:<28} {:>10} {:>10}", "id", "kind", "applies to", "50 Hz µT", "60 Hz µT");
    for t in tables {
        let a = t.applies_to();
        let who = format!("{}, {}", snake(&a.population), snake(&a.body_region));
        let lv = |f: f64| t.level_ut(f).map(|v| format!("{v:.1}")).unwrap_or_else(|_| "—".into());
        let _ =
            writeln!(s, "{:<30} {:<16} {:<28} {:>10} {:>10}", t.id(), snake(&t.doc().kind), who, lv(50.0), lv(60.0));
    }
    s
}

/// One table in full: title, source, bands and notes.
pub fn table_text(t: &ReferenceTable) -> String {
    let d = t.doc();
    let mut s = String::new();
    let _ = writeln!(s, "{} (version {})", d.id, t.version());
    let _ = writeln!(s, "{}", d.title);
    let _ = writeln!(
        s,
        "kind: {}; applies to: {}, {}",
        snake(&d.kind),
        snake(&d.applies_to.population),
        snake(&d.applies_to.body_region)
    );
    let _ = writeln!(s, "source: {}", d.source);
    let _ = writeln!(s);
    let _ = writeln!(s, "  {:>12} {:>12}   B_RL(f), µT RMS", "from Hz", "to Hz");
    for b in &d.bands {
        let formula = if b.exponent == 0.0 {
            format!("{}", b.coefficient)
        } else {
            format!("{:e} · f^{}", b.coefficient, b.exponent)
        };
        let _ = writeln!(s, "  {:>12} {:>12}   {formula}", b.from_hz, b.to_hz);
    }
    for g in &d.gaps {
        let _ = writeln!(
            s,
            "  {:>12} {:>12}   (not covered{})",
            g.from_hz,
            g.to_hz,
            g.reason.as_ref().map(|r| format!(": {r}")).unwrap_or_default()
        );
    }
    if !d.notes.is_empty() {
        let _ = writeln!(s);
        for n in &d.notes {
            let _ = writeln!(s, "note: {n}");
        }
    }
    coverage_lines(&mut s, t);
    s
}

/// The table's holes within 1 Hz–10 MHz in plain words, or that it has none.
fn coverage_lines(s: &mut String, t: &ReferenceTable) {
    let holes = crate::limits::coverage_holes(t);
    let _ = writeln!(s);
    if holes.is_empty() {
        let _ = writeln!(s, "coverage: every frequency from 1 Hz to 10 MHz has a level.");
    }
    for h in &holes {
        let _ = writeln!(s, "hole: {}", h.words);
    }
}

/// Plain-text survey reconciliation, load fit and extrapolation.
pub fn survey_text(site_name: Option<&str>, s: &crate::survey::SurveyAnalysis) -> String {
    let mut out = String::new();
    let r = &s.reconciliation;
    let _ = writeln!(out, "SURVEY RECONCILIATION — {}", site_name.unwrap_or("(unnamed site)"));
    let _ = writeln!(
        out,
        "Measured at {}; meter ±{:.0} % and model ±{:.0} % (expanded, k = 2); the meter reads the {}, the model gives the same",
        s.measured_at,
        r.meter_expanded_uncertainty_percent,
        r.model_expanded_uncertainty_percent,
        snake(&r.meter_quantity)
    );
    reconciliation_block(&mut out, r);
    load_fit_block(&mut out, &s.load_fit);
    extrapolation_block(&mut out, s.extrapolation.as_ref());
    for n in &s.notes {
        let _ = writeln!(out, "note: {n}");
    }
    if !s.warnings.is_empty() {
        let _ = writeln!(out);
        out.push_str(&warnings_text(&s.warnings));
    }
    cautions(&mut out, &s.cautions);
    out
}

/// A row per point (measured, model, ratio, allowed difference, flag) and
/// the summary line.
fn reconciliation_block(out: &mut String, r: &crate::survey::Reconciliation) {
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "    {:<16} {:>12} {:>12} {:>8} {:>12}  flag",
        "point", "measured µT", "model µT", "ratio", "allowed ±µT"
    );
    for p in &r.points {
        let _ = writeln!(
            out,
            "    {:<16} {:>12.2} {:>12} {:>8} {:>12}  {}",
            p.id,
            p.measured_ut,
            num(p.model_ut, 2),
            num(p.ratio, 3),
            num(p.allowed_difference_ut, 2),
            if p.flagged { "OUTSIDE UNCERTAINTY" } else { "" }
        );
    }
    let sm = &r.summary;
    let _ = writeln!(
        out,
        "    median ratio {}, range {} – {}, geometric spread {}, {} of {} flagged; worst: {}",
        num(sm.median_ratio, 3),
        num(sm.min_ratio, 3),
        num(sm.max_ratio, 3),
        num(sm.geometric_spread, 3),
        sm.flagged,
        sm.points,
        if sm.worst.is_empty() { "none".into() } else { sm.worst.join(", ") }
    );
}

/// A row per circuit (stated, scale ± error, fitted, status), the residual
/// line and the fit's notes.
fn load_fit_block(out: &mut String, f: &crate::survey::LoadFit) {
    let _ = writeln!(out);
    let _ = writeln!(out, "LOAD FIT (least squares on the measurements; scale = fitted / stated current)");
    for c in &f.circuits {
        let status = snake(&c.status);
        let _ = writeln!(
            out,
            "    {:<20} stated {:>9.1} A   scale {:>7} ± {:<7}  fitted {:>9} A   {status}",
            c.circuit,
            c.stated_a,
            num(c.scale, 3),
            num(c.scale_std_error, 3),
            num(c.fitted_a, 1)
        );
    }
    let _ = writeln!(
        out,
        "    residual {:.2} % RMS, reduced χ² {}, {} iterations{}",
        100.0 * f.residual_rms_relative,
        num(f.reduced_chi2, 2),
        f.iterations,
        if f.converged { "" } else { " (not converged)" }
    );
    let state = match f.status {
        crate::survey::FitState::Converged => "converged",
        crate::survey::FitState::NotConverged => "NOT CONVERGED: no fitted currents",
        crate::survey::FitState::IllConditioned => "ILL-CONDITIONED: no fitted currents",
    };
    let t = &f.thresholds;
    let condition = f.condition_number.map_or("—".to_string(), |c| format!("{c:.2e}"));
    let _ = writeln!(out, "    fit: {state}; condition number {condition}");
    let _ = writeln!(
        out,
        "    thresholds: unidentifiable below sensitivity {:e}; poorly determined above ± {} on the scale; ill-conditioned above condition number {:e}; at most {} iterations",
        t.unidentifiable_below_sensitivity,
        t.poorly_determined_above_scale_std_error,
        t.ill_conditioned_above_condition_number,
        t.max_iterations
    );
    for n in &f.notes {
        let _ = writeln!(out, "    note: {n}");
    }
}

/// A row per point (measured × factor = extrapolated, each table's ratio
/// and verdict) and the assumptions; or why there is none.
fn extrapolation_block(out: &mut String, e: Option<&crate::survey::Extrapolation>) {
    let _ = writeln!(out);
    let Some(e) = e else {
        let _ = writeln!(out, "EXTRAPOLATION TO RATED LOAD: not possible (see notes)");
        return;
    };
    let _ = writeln!(out, "EXTRAPOLATION TO RATED LOAD");
    for p in &e.points {
        let cmp: Vec<String> = p
            .comparisons
            .iter()
            .map(|c| format!("{} {} {}", c.table_id, num(c.ratio, 3), verdict_word(c.verdict)))
            .collect();
        let _ = writeln!(
            out,
            "    {:<16} {:>10.2} µT × {:>7} = {:>10} µT   {}{}",
            p.id,
            p.measured_ut,
            num(p.factor, 3),
            num(p.extrapolated_ut, 2),
            cmp.join("; "),
            if p.flagged { "   FLAGGED: outside uncertainty in the reconciliation" } else { "" }
        );
    }
    for a in &e.assumptions {
        let _ = writeln!(out, "    assumption: {a}");
    }
}
