//! Model warnings: things a valid site may contain that make its field
//! wrong or its result meaningless, reported beside every result and never
//! blocking one.
//!
//! Each warning has a stable `code`, an RFC 6901 pointer into the submitted
//! document and a plain-words `detail`. The checks, with their tolerances:
//!
//! - `open_end`: a path end that lies farther than the larger of the two
//!   radii plus [`CONTACT_TOLERANCE_M`] from every other conductor's axis
//!   (so it is inside neither: conductors laid side by side do not meet) and
//!   is not its own other end, unless the conductor's `continues` marks it.
//!   The thin-wire model sends the current into free space there.
//! - `no_return_path`: the currents of a circuit's conductors (or of the
//!   explicit-current conductors together) do not add up to zero: the
//!   magnitude of their phasor sum exceeds [`NET_CURRENT_TOLERANCE`] of the
//!   largest conductor current, at any spectral line, with the currents of
//!   `site/currents.rs` at the present load (a circuit with no present
//!   current is checked at 1 A, its proportions kept).
//! - `conductors_overlap`: two segments (of different conductors, or
//!   non-adjacent segments of one) whose axes come closer than the sum of
//!   the radii minus [`overlap_tolerance_m`]: conductors laid touching
//!   (distance equal to the sum of the radii) do not warn. Segments joined
//!   at a conductor end (a junction, where an end meets the other segment as
//!   for `open_end`) are not compared.
//! - `inside_conductor`: an evaluation point (a position's height, an
//!   evaluation point) within a conductor's radius plus
//!   [`CONTACT_TOLERANCE_M`] of its axis (inside or touching).
//! - `below_ground`: a conductor vertex, position point, area plane or
//!   evaluation point with z < 0 (fine for a buried cable; a sign slip
//!   otherwise).
//! - `checks_incomplete`: the pairwise search stopped after visiting
//!   [`MAX_CANDIDATE_PAIRS`] box pairs; warnings of the kinds above may be
//!   missing.
//! - `warnings_truncated`: more than [`MAX_WARNINGS`] warnings; the rest
//!   are counted, not listed.
//!
//! Cost: the pairwise checks use sort-and-sweep on axis-aligned boxes
//! (sorted along the axis where the boxes are thinnest against their
//! spread, so the fewest pairs overlap on it), so a site of n segments
//! costs O(n log n) plus the pairs whose boxes overlap on that axis, capped at
//! [`MAX_CANDIDATE_PAIRS`].

use super::model::{Conductor, Drive, Placement, Site};
use super::problem::Pointer;
use super::{Circuit, CircuitLoad, excitation_of};
use crate::field::bound::{point_segment_distance_m, segment_segment_distance_m};
use nalgebra::Point3;
use num_complex::Complex64;
use serde::{Deserialize, Serialize};
use std::collections::HashMap;

/// What a warning is about; the serialised words are stable.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum WarningCode {
    /// A conductor end meets no other conductor: current into free space.
    OpenEnd,
    /// A circuit's conductor currents do not add up to zero.
    NoReturnPath,
    /// Two conductors overlap or cross.
    ConductorsOverlap,
    /// A point lies inside or touches a conductor.
    InsideConductor,
    /// A point lies below ground (z < 0).
    BelowGround,
    /// The pairwise search stopped at its cap; warnings may be missing.
    ChecksIncomplete,
    /// More warnings than listed.
    WarningsTruncated,
}

/// One model warning: never blocks a result, always shown beside it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Warning {
    pub code: WarningCode,
    /// RFC 6901 pointer into the submitted document.
    pub pointer: String,
    /// What is wrong and what to do, in plain words.
    pub detail: String,
}

/// How far beyond touching an end still meets a conductor, and a point
/// still touches one, m (1 mm: coordinates are rarely given finer).
pub const CONTACT_TOLERANCE_M: f64 = 1.0e-3;

/// Net current allowed in a circuit, as a fraction of its largest
/// conductor current (1 %: well above rounding, well below a missing phase
/// or neutral of any real unbalance worth modelling).
pub const NET_CURRENT_TOLERANCE: f64 = 0.01;

/// Pairs of boxes the sweep visits at most (overlapping along the sweep
/// axis; ≈ 1 s at ~50 ns a pair in the worst case, far less when most are
/// rejected by the other two axes).
pub const MAX_CANDIDATE_PAIRS: u64 = 20_000_000;

/// Warnings listed at most; more are counted in one `warnings_truncated`.
pub const MAX_WARNINGS: usize = 200;

/// How much closer than touching two conductors may come before they
/// overlap, m: the smaller of 1 mm and 10 % of the sum of the radii, so that
/// touching cables given to the millimetre do not warn while crossing thin
/// wires (radii 0.1 mm) still do.
pub fn overlap_tolerance_m(radius_sum_m: f64) -> f64 {
    CONTACT_TOLERANCE_M.min(0.1 * radius_sum_m)
}

/// A point checked against the conductors: where it is and how to point at it.
#[derive(Debug, Clone)]
pub(crate) struct Probe {
    pub at: Point3<f64>,
    pub source: ProbeSource,
    /// Probes of one group (a position's heights) give one warning at most.
    pub group: usize,
}

/// Where a probe comes from in the submitted document. Kept as an index and
/// rendered as a pointer only when a warning is emitted, so checking many
/// points allocates nothing per point.
#[derive(Debug, Clone, Copy)]
pub(crate) enum ProbeSource {
    /// `/positions/<i>/at` of a site.
    Position(usize),
    /// `/points/<i>` of an evaluation document.
    Point(usize),
}

impl Probe {
    /// The RFC 6901 pointer to this probe's point.
    pub fn pointer(&self) -> String {
        match self.source {
            ProbeSource::Position(i) => Pointer::root().key("positions").index(i).key("at").to_string(),
            ProbeSource::Point(i) => Pointer::root().key("points").index(i).to_string(),
        }
    }
}

/// Every warning about a checked site.
pub fn site_warnings(site: &Site) -> Vec<Warning> {
    let probes = position_probes(site);
    let mut extra = Vec::new();
    for (i, a) in site.areas().iter().enumerate() {
        if a.height_m < 0.0 {
            let at = Pointer::root().key("areas").index(i).key("height_m");
            extra.push(below_ground(&at.to_string(), &format!("area '{}' is evaluated at {} m", a.id, a.height_m)));
        }
    }
    model_warnings(site.frequency_hz(), site.circuits(), site.conductors(), &probes, extra)
}

fn position_probes(site: &Site) -> Vec<Probe> {
    let mut probes = Vec::new();
    for (i, q) in site.positions().iter().enumerate() {
        let source = ProbeSource::Position(i);
        match &q.placement {
            Placement::Standing { x_m, y_m, heights_m } => {
                for h in heights_m {
                    probes.push(Probe { at: Point3::new(*x_m, *y_m, *h), source, group: i });
                }
            }
            Placement::Point(p) => probes.push(Probe { at: *p, source, group: i }),
        }
    }
    probes
}

/// Every warning about conductors, their circuits and `probes`, followed by
/// `extra` below-ground warnings, in a stable order and capped.
pub(crate) fn model_warnings(
    frequency_hz: f64,
    circuits: &[Circuit],
    conductors: &[Conductor],
    probes: &[Probe],
    extra: Vec<Warning>,
) -> Vec<Warning> {
    let contacts = contacts(conductors, probes);
    let mut out = open_ends(conductors, &contacts.end_met);
    out.extend(no_return(frequency_hz, circuits, conductors));
    out.extend(overlaps(conductors, &contacts.overlaps));
    out.extend(insides(conductors, probes, &contacts.inside));
    out.extend(conductors_below_ground(conductors));
    out.extend(probes_below_ground(probes));
    out.extend(extra);
    if contacts.incomplete {
        out.push(Warning {
            code: WarningCode::ChecksIncomplete,
            pointer: "/conductors".into(),
            detail: format!(
                "the search for open ends, overlapping conductors and points inside conductors stopped after {MAX_CANDIDATE_PAIRS} candidate pairs: warnings of those kinds may be missing"
            ),
        });
    }
    truncate(out)
}

fn truncate(mut out: Vec<Warning>) -> Vec<Warning> {
    if out.len() > MAX_WARNINGS {
        let more = out.len() - MAX_WARNINGS;
        out.truncate(MAX_WARNINGS);
        out.push(Warning {
            code: WarningCode::WarningsTruncated,
            pointer: String::new(),
            detail: format!("{more} more warning(s) are not listed"),
        });
    }
    out
}

/// The vertex list of a conductor in the document: its own `path`, or
/// the route of the section that generates it (a bar's filaments point at
/// the bar).
/// Where vertex `i` of `c` is stated: in its vertex list, or (a generated
/// conductor whose vertices the document does not list one for one, such as
/// an overhead line's chords, with an empty `vertices_key`) its source.
fn vertex_at(c: &Conductor, i: usize) -> Pointer {
    if c.vertices_key.is_empty() { c.source.clone() } else { c.source.key(c.vertices_key).index(i) }
}

fn xyz(p: &Point3<f64>) -> String {
    format!("({}, {}, {})", p.x, p.y, p.z)
}

// ---- open ends ----------------------------------------------------------

fn open_ends(conductors: &[Conductor], end_met: &[[bool; 2]]) -> Vec<Warning> {
    let mut out = Vec::new();
    // A bar's end is met when the end of any of its filaments is; the bar
    // warns once, by its first filament.
    let mut bar_met: HashMap<String, [bool; 2]> = HashMap::new();
    for (i, c) in conductors.iter().enumerate().filter(|(_, c)| c.cell.is_some()) {
        let met = bar_met.entry(c.source.to_string()).or_default();
        met[0] |= end_met[i][0];
        met[1] |= end_met[i][1];
    }
    for (i, c) in conductors.iter().enumerate() {
        let last = c.path.len() - 1;
        let closed = (c.path[0] - c.path[last]).norm() <= c.radius_m + CONTACT_TOLERANCE_M;
        let met = match c.cell {
            None => end_met[i],
            Some(0) => bar_met.get(&c.source.to_string()).copied().unwrap_or_default(),
            Some(_) => [true; 2],
        };
        for (which, vertex, word) in [(0, 0, "start"), (1, last, "end")] {
            if closed || c.continues[which] || met[which] {
                continue;
            }
            out.push(Warning {
                code: WarningCode::OpenEnd,
                pointer: vertex_at(c, vertex).to_string(),
                detail: format!(
                    "the {word} of conductor '{}' at {} m meets no other conductor: its current flows into free space there and the field near this end is an artefact; connect it, or set continues.{word} if the conductor goes on beyond the model",
                    c.id,
                    xyz(&c.path[vertex])
                ),
            });
        }
    }
    out
}

// ---- net current --------------------------------------------------------

fn no_return(frequency_hz: f64, circuits: &[Circuit], conductors: &[Conductor]) -> Vec<Warning> {
    let loads: Vec<CircuitLoad> = circuits
        .iter()
        .map(|c| if c.current_a > 0.0 { CircuitLoad::PRESENT } else { CircuitLoad::CurrentA(1.0) })
        .collect();
    let drives: Vec<Drive> = conductors.iter().map(|c| c.drive).collect();
    let excitation = excitation_of(frequency_hz, circuits, &drives, &loads);
    // Group conductors by circuit; explicit currents form one extra group.
    let explicit = circuits.len();
    let group_of = |d: &Drive| match d {
        Drive::Phase { circuit, .. } => *circuit,
        Drive::Explicit { .. } => explicit,
    };
    let mut out = Vec::new();
    for g in 0..=explicit {
        let members: Vec<usize> = (0..conductors.len()).filter(|k| group_of(&conductors[*k].drive) == g).collect();
        let Some(&first) = members.first() else { continue };
        let worst = excitation
            .lines
            .iter()
            .filter_map(|line| {
                let net: Complex64 = members.iter().map(|k| line.currents_a[*k]).sum();
                let largest = members.iter().map(|k| line.currents_a[*k].norm()).fold(0.0, f64::max);
                (largest > 0.0 && net.norm() > NET_CURRENT_TOLERANCE * largest)
                    .then_some((line.frequency_hz, net.norm() / largest))
            })
            .max_by(|a, b| a.1.total_cmp(&b.1));
        if let Some((hz, share)) = worst {
            out.push(net_current_warning(g, explicit, circuits, &conductors[first], hz, share));
        }
    }
    out
}

fn net_current_warning(
    group: usize,
    explicit: usize,
    circuits: &[Circuit],
    first: &Conductor,
    hz: f64,
    share: f64,
) -> Warning {
    let percent = 100.0 * share;
    let (pointer, what) = if group == explicit {
        (first.source.key("current").to_string(), "the currents of the conductors with explicit currents".to_string())
    } else {
        (
            Pointer::root().key("circuits").index(group).to_string(),
            format!("the currents of the conductors of circuit '{}'", circuits[group].id),
        )
    };
    Warning {
        code: WarningCode::NoReturnPath,
        pointer,
        detail: format!(
            "{what} add up to {percent:.0} % of the largest of them at {hz} Hz instead of zero: no return path is modelled, so the field is that of a current that does not come back; add the return conductor (a neutral, the other phases, or the return leg), unless the return is far enough away to ignore"
        ),
    }
}

// ---- overlaps and points inside -----------------------------------------

fn overlaps(conductors: &[Conductor], found: &HashMap<(usize, usize), Overlap>) -> Vec<Warning> {
    let mut keys: Vec<&(usize, usize)> = found.keys().collect();
    keys.sort();
    keys.into_iter()
        .map(|&(a, b)| {
            let o = &found[&(a, b)];
            let (ca, cb) = (&conductors[a], &conductors[b]);
            let other = vertex_at(cb, o.seg_b);
            let whom = if a == b { "itself".to_string() } else { format!("conductor '{}'", cb.id) };
            Warning {
                code: WarningCode::ConductorsOverlap,
                pointer: vertex_at(ca, o.seg_a).to_string(),
                detail: format!(
                    "conductor '{}' (segment from vertex {}) and {whom} (segment from vertex {}, {other}) come within {:.4} m of each other's axis, less than the sum of their radii {:.4} m: they overlap or cross, which real conductors cannot; move them apart (conductors laid touching, at exactly the sum of their radii, are fine)",
                    ca.id,
                    o.seg_a,
                    o.seg_b,
                    o.distance_m,
                    ca.radius_m + cb.radius_m
                ),
            }
        })
        .collect()
}

fn insides(conductors: &[Conductor], probes: &[Probe], inside: &[Option<usize>]) -> Vec<Warning> {
    let mut seen = std::collections::HashSet::new();
    let mut out = Vec::new();
    for (i, hit) in inside.iter().enumerate() {
        let Some(k) = hit else { continue };
        if !seen.insert(probes[i].group) {
            continue;
        }
        out.push(Warning {
            code: WarningCode::InsideConductor,
            pointer: probes[i].pointer(),
            detail: format!(
                "the point {} m lies inside or touches conductor '{}' (radius {} m): the thin-wire field is not computed there; move the point out of the conductor",
                xyz(&probes[i].at),
                conductors[*k].id,
                conductors[*k].radius_m
            ),
        });
    }
    out
}

// ---- below ground -------------------------------------------------------

fn below_ground(pointer: &str, what: &str) -> Warning {
    Warning {
        code: WarningCode::BelowGround,
        pointer: pointer.to_string(),
        detail: format!(
            "{what}, below ground (z < 0): right for a buried cable, otherwise check the sign of the height"
        ),
    }
}

fn conductors_below_ground(conductors: &[Conductor]) -> Vec<Warning> {
    conductors
        .iter()
        .enumerate()
        // A bar warns once, by its first filament.
        .filter(|(_, c)| c.cell.is_none_or(|n| n == 0))
        .filter_map(|(_, c)| {
            let first = c.path.iter().position(|p| p.z < 0.0)?;
            let count = c.path.iter().filter(|p| p.z < 0.0).count();
            let lowest = c.path.iter().map(|p| p.z).fold(f64::INFINITY, f64::min);
            let at = vertex_at(c, first).to_string();
            Some(below_ground(
                &at,
                &format!("conductor '{}' has {count} vertex(es) with z < 0 (lowest z = {lowest} m)", c.id),
            ))
        })
        .collect()
}

fn probes_below_ground(probes: &[Probe]) -> Vec<Warning> {
    let mut seen = std::collections::HashSet::new();
    probes
        .iter()
        .filter(|p| p.at.z < 0.0 && seen.insert(p.group))
        .map(|p| below_ground(&p.pointer(), &format!("the point {} m lies", xyz(&p.at))))
        .collect()
}

// ---- the pairwise search ------------------------------------------------

/// The closest approach found between two conductors (segment indices).
#[derive(Debug, Clone, Copy)]
struct Overlap {
    seg_a: usize,
    seg_b: usize,
    distance_m: f64,
}

/// What the pairwise search found.
struct Contacts {
    /// Per conductor: whether its start and its end meet another conductor.
    end_met: Vec<[bool; 2]>,
    /// Per conductor pair `(a, b)`, a ≤ b: the closest overlapping segments.
    overlaps: HashMap<(usize, usize), Overlap>,
    /// Per probe: the first conductor it lies inside.
    inside: Vec<Option<usize>>,
    incomplete: bool,
}

#[derive(Debug, Clone, Copy)]
enum Item {
    Segment { conductor: usize, index: usize },
    End { conductor: usize, which: usize },
    Probe { index: usize },
}

/// An axis-aligned box with its item.
struct Boxed {
    lo: [f64; 3],
    hi: [f64; 3],
    item: Item,
}

fn boxed(points: &[Point3<f64>], pad_m: f64, item: Item) -> Boxed {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in points {
        for d in 0..3 {
            lo[d] = lo[d].min(p[d] - pad_m);
            hi[d] = hi[d].max(p[d] + pad_m);
        }
    }
    Boxed { lo, hi, item }
}

/// Boxes large enough that every contact tested below implies overlapping
/// boxes: segments padded by radius + tolerance, ends by their own radius,
/// probes not at all.
fn boxes(conductors: &[Conductor], probes: &[Probe]) -> Vec<Boxed> {
    let mut out = Vec::new();
    for (i, c) in conductors.iter().enumerate() {
        for (k, w) in c.path.windows(2).enumerate() {
            out.push(boxed(w, c.radius_m + CONTACT_TOLERANCE_M, Item::Segment { conductor: i, index: k }));
        }
        let last = c.path.len() - 1;
        out.push(boxed(&c.path[..1], c.radius_m, Item::End { conductor: i, which: 0 }));
        out.push(boxed(&c.path[last..], c.radius_m, Item::End { conductor: i, which: 1 }));
    }
    out.extend(probes.iter().enumerate().map(|(i, p)| boxed(&[p.at], 0.0, Item::Probe { index: i })));
    out
}

/// The axis on which the sweep meets the fewest pairs: where the boxes'
/// mean width is smallest against the spread of their centres (a sweep
/// visits about n² · width / spread pairs). Parallel runs laid along one
/// axis, the common case, are swept across it. Any axis gives the same
/// contacts; only the work differs.
fn sweep_axis(boxes: &[Boxed]) -> usize {
    let crowding = |d: usize| {
        let (lo, hi, width) = boxes.iter().fold((f64::INFINITY, f64::NEG_INFINITY, 0.0), |(lo, hi, w), b| {
            let c = 0.5 * (b.lo[d] + b.hi[d]);
            (lo.min(c), hi.max(c), w + (b.hi[d] - b.lo[d]))
        });
        let spread = hi - lo;
        // No spread: every box overlaps every other on this axis.
        if spread > 0.0 { width / spread } else { f64::INFINITY }
    };
    (0..3).min_by(|a, b| crowding(*a).total_cmp(&crowding(*b))).unwrap_or(0)
}

fn contacts(conductors: &[Conductor], probes: &[Probe]) -> Contacts {
    let mut found = Contacts {
        end_met: vec![[false; 2]; conductors.len()],
        overlaps: HashMap::new(),
        inside: vec![None; probes.len()],
        incomplete: false,
    };
    let mut list = boxes(conductors, probes);
    let axis = sweep_axis(&list);
    list.sort_by(|a, b| a.lo[axis].total_cmp(&b.lo[axis]));
    let mut examined: u64 = 0;
    'sweep: for i in 0..list.len() {
        for j in (i + 1)..list.len() {
            if list[j].lo[axis] > list[i].hi[axis] {
                break;
            }
            // Every pair the sweep visits counts, so the cap bounds the work
            // even when boxes overlap along the sweep axis only.
            examined += 1;
            if examined > MAX_CANDIDATE_PAIRS {
                found.incomplete = true;
                break 'sweep;
            }
            let (a, b) = (&list[i], &list[j]);
            if (0..3).any(|d| a.lo[d] > b.hi[d] || b.lo[d] > a.hi[d]) {
                continue;
            }
            pair(conductors, probes, a.item, b.item, &mut found);
            pair(conductors, probes, b.item, a.item, &mut found);
        }
    }
    found
}

/// Tests one ordered pair of items; each unordered pair is offered both ways.
fn pair(conductors: &[Conductor], probes: &[Probe], x: Item, y: Item, found: &mut Contacts) {
    match (x, y) {
        (Item::End { conductor: a, which }, Item::Segment { conductor: b, index })
            if a != b && !conductors[a].same_bar(&conductors[b]) =>
        {
            let (ca, cb) = (&conductors[a], &conductors[b]);
            let end = if which == 0 { ca.path[0] } else { ca.path[ca.path.len() - 1] };
            if end_meets(&end, ca.radius_m, cb, index) {
                found.end_met[a][which] = true;
            }
        }
        (Item::Probe { index: p }, Item::Segment { conductor: b, index }) => {
            let cb = &conductors[b];
            let d = point_segment_distance_m(&probes[p].at, &cb.path[index], &cb.path[index + 1]);
            if d <= cb.radius_m + CONTACT_TOLERANCE_M && found.inside[p].is_none_or(|k| b < k) {
                found.inside[p] = Some(b);
            }
        }
        (Item::Segment { conductor: a, index: sa }, Item::Segment { conductor: b, index: sb }) if (a, sa) < (b, sb) => {
            segment_pair(conductors, (a, sa), (b, sb), found);
        }
        _ => {}
    }
}

fn segment_pair(conductors: &[Conductor], (a, sa): (usize, usize), (b, sb): (usize, usize), found: &mut Contacts) {
    if a == b && sa.abs_diff(sb) <= 1 {
        return; // neighbours on one path share a vertex by construction
    }
    if conductors[a].same_bar(&conductors[b]) {
        return; // the filaments of one bar fill its cross-section together
    }
    let (ca, cb) = (&conductors[a], &conductors[b]);
    let (p1, q1, p2, q2) = (&ca.path[sa], &ca.path[sa + 1], &cb.path[sb], &cb.path[sb + 1]);
    let sum = ca.radius_m + cb.radius_m;
    let d = segment_segment_distance_m(p1, q1, p2, q2);
    if d >= sum - overlap_tolerance_m(sum) || joined_at_an_end(conductors, (a, sa), (b, sb)) {
        return;
    }
    let entry = found.overlaps.entry((a, b)).or_insert(Overlap { seg_a: sa, seg_b: sb, distance_m: d });
    if d < entry.distance_m {
        *entry = Overlap { seg_a: sa, seg_b: sb, distance_m: d };
    }
}

/// Whether one of the two segments carries a conductor end that meets the
/// other segment: a junction (a go conductor meeting its return, a tee),
/// where the conductors touch by design.
fn joined_at_an_end(conductors: &[Conductor], x: (usize, usize), y: (usize, usize)) -> bool {
    // Ends that continue beyond the model are not junctions.
    let ends_of = |(c, s): (usize, usize)| {
        let cc = &conductors[c];
        let mut ends = Vec::new();
        if s == 0 && !cc.continues[0] {
            ends.push(cc.path[0]);
        }
        if s + 2 == cc.path.len() && !cc.continues[1] {
            ends.push(cc.path[cc.path.len() - 1]);
        }
        ends
    };
    let (cx, cy) = (&conductors[x.0], &conductors[y.0]);
    ends_of(x).iter().any(|e| end_meets(e, cx.radius_m, cy, y.1))
        || ends_of(y).iter().any(|e| end_meets(e, cy.radius_m, cx, x.1))
}

/// Whether a path end (of a conductor of radius `r_end_m`) meets segment
/// `index` of `other`: it lies within the larger of the two radii plus
/// [`CONTACT_TOLERANCE_M`] of that segment's axis, i.e. inside one of the
/// two conductors where they join. Conductors merely laid side by side
/// (axes the sum of the radii apart) do not meet.
fn end_meets(end: &Point3<f64>, r_end_m: f64, other: &Conductor, index: usize) -> bool {
    let d = point_segment_distance_m(end, &other.path[index], &other.path[index + 1]);
    d <= r_end_m.max(other.radius_m) + CONTACT_TOLERANCE_M
}
