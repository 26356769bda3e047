//! SVG field map of one area: cells coloured in fixed bands (of the
//! exposure ratio to the map's first table, or of B in decades of µT
//! without one), the same colour for the same band on every map; contour lines at each table's level and review fraction,
//! conductors, positions with verdicts, legend, scale bar, north arrow,
//! title block and the cautions. Line styles (solid / dashed) and labels,
//! not colour, tell the contours apart, so a grey printout still reads.

use super::contour;
use super::labels;
use super::palette;
use crate::assess::{AreaMap, Assessment};
use crate::cautions::CAUTIONS;
use crate::site::Site;
use std::fmt::Write;

const WIDTH: f64 = 1000.0;
const MAP_W: f64 = 640.0;
const MAP_H_MAX: f64 = 560.0;
const MAP_X: f64 = 40.0;
const MAP_Y: f64 = 110.0;

fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// Upper edges of the ratio bands: < 0.1, 0.1–0.25, 0.25–0.5, 0.5–1, 1–2,
/// ≥ 2. Fixed, so a colour means the same ratio on every map; the top two
/// are over the level. (Band edges: our choice, common practice, no source.)
pub const RATIO_BAND_EDGES: [f64; palette::BANDS - 1] = [0.1, 0.25, 0.5, 1.0, 2.0];
/// Upper edges of the µT bands used when no table covers the map: decades
/// from 0.1 µT to 1 mT.
pub const UT_BAND_EDGES: [f64; palette::BANDS - 1] = [0.1, 1.0, 10.0, 100.0, 1000.0];

/// How a map's cells are coloured: by the exposure ratio to one table (the
/// first of the map's tables that covers every frequency at every node),
/// or by the resultant B when none does.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Banding {
    /// Index of the table in `map.tables`, or `None` for µT decades.
    pub table: Option<usize>,
    pub edges: [f64; palette::BANDS - 1],
}

/// The banding of `map` (see [`Banding`]).
pub fn banding(map: &AreaMap) -> Banding {
    match map.tables.iter().position(|t| t.ratio.iter().all(Option::is_some)) {
        Some(t) => Banding { table: Some(t), edges: RATIO_BAND_EDGES },
        None => Banding { table: None, edges: UT_BAND_EDGES },
    }
}

/// The banding of `map` by the ratio to the table `table_id`, or why it
/// cannot be: the table is not among the map's (whole-body tables of the
/// assessment), or it does not cover every frequency at every node, so its
/// ratio is not known everywhere.
pub fn banding_by(map: &AreaMap, table_id: &str) -> Result<Banding, String> {
    let Some(t) = map.tables.iter().position(|t| t.table_id == table_id) else {
        let ids: Vec<&str> = map.tables.iter().map(|t| t.table_id.as_str()).collect();
        return Err(format!(
            "the map can be banded by a whole-body table of the assessment ({}); '{table_id}' is not one of them",
            if ids.is_empty() { "it has none".to_string() } else { ids.join(", ") }
        ));
    };
    if map.tables[t].ratio.iter().any(Option::is_none) {
        return Err(format!(
            "table '{table_id}' does not cover every frequency of the site, so its ratio is not known at every cell: choose another table"
        ));
    }
    Ok(Banding { table: Some(t), edges: RATIO_BAND_EDGES })
}

impl Banding {
    /// Band of a value, 0 the lowest. A value on an edge belongs to the band
    /// above it, and a value that is not a number to the top band: where in
    /// doubt, the higher band (the optimistic error is the dangerous one).
    pub fn band(&self, v: f64) -> usize {
        if v.is_nan() {
            return palette::BANDS - 1;
        }
        self.edges.iter().take_while(|e| v >= **e).count()
    }

    /// Band of node `k` of `map`; `None` inside a conductor (hatched).
    pub fn band_of_node(&self, map: &AreaMap, k: usize) -> Option<usize> {
        if map.inside_conductor[k] {
            return None;
        }
        let v = match self.table {
            Some(t) => map.tables[t].ratio[k].unwrap_or(f64::NAN),
            None => map.b_ut[k],
        };
        Some(self.band(v))
    }
}

/// Plan frame drawn: the area's grid with a margin, so nearby conductors and
/// positions show; everything is clipped to it.
struct View {
    x0: f64,
    y1: f64,
    k: f64,
    /// Drawn size of the frame, px.
    w_px: f64,
    h_px: f64,
}

impl View {
    fn new(map: &AreaMap) -> View {
        let g = &map.grid;
        let (w, h) = (g.nx as f64 * g.spacing_m, g.ny as f64 * g.spacing_m);
        let margin = (0.1 * w.max(h)).max(1.0);
        let (fw, fh) = (w + 2.0 * margin, h + 2.0 * margin);
        let k = (MAP_W / fw).min(MAP_H_MAX / fh);
        View { x0: g.x0_m - margin, y1: g.y0_m + h + margin, k, w_px: fw * k, h_px: fh * k }
    }
    fn px(&self, x: f64, y: f64) -> (f64, f64) {
        (MAP_X + (x - self.x0) * self.k, MAP_Y + (self.y1 - y) * self.k)
    }
}

fn nice_length(max_m: f64) -> f64 {
    let p = 10f64.powf(max_m.log10().floor());
    [5.0, 2.0, 1.0].iter().map(|m| m * p).find(|l| *l <= max_m).unwrap_or(p)
}

fn fmt_ut(v: f64) -> String {
    if v >= 100.0 {
        format!("{v:.0}")
    } else if v >= 1.0 {
        format!("{v:.1}")
    } else {
        format!("{v:.2}")
    }
}

/// Pixel position in the SVG of plan point (x, y) of `map` (for tests and
/// callers that overlay the map).
pub fn plan_to_px(map: &AreaMap, x: f64, y: f64) -> (f64, f64) {
    View::new(map).px(x, y)
}

/// The field map of `map` as an SVG document, banded by its first table
/// that covers it ([`banding`]).
pub fn area_map_svg(site: &Site, a: &Assessment, map: &AreaMap) -> String {
    area_map_svg_banded(site, a, map, &banding(map))
}

/// The field map of `map` as an SVG document, its cells in the bands of
/// `banding`.
pub fn area_map_svg_banded(site: &Site, a: &Assessment, map: &AreaMap, banding: &Banding) -> String {
    let mut s = String::new();
    let v = View::new(map);
    // The page grows with a tall map; the space below holds the scale bar,
    // north arrow and cautions.
    let bottom = (MAP_Y + v.h_px).max(560.0);
    let footer = provenance_lines(a);
    open_document(&mut s, map, &v, bottom + FOOTER_TOP + FOOTER_LINE * footer.len() as f64 + 10.0);
    provenance_metadata(&mut s, a);
    title_block(&mut s, a, map);
    cells(&mut s, map, &v, banding);
    area_outline(&mut s, map, &v);
    contours(&mut s, a, map, &v);
    conductors(&mut s, site, &v);
    positions(&mut s, site, &v);
    draw_labels(&mut s, &labels_of(site, a, map), &v);
    legend(&mut s, a, map, banding);
    scale_bar_and_north(&mut s, site, &v, bottom);
    cautions(&mut s, bottom);
    provenance_footer(&mut s, &footer, bottom);
    s.push_str("</svg>\n");
    s
}

/// Plan points as an SVG `points` list, px to 0.1.
fn px_list(v: &View, pts: impl Iterator<Item = (f64, f64)>) -> String {
    pts.map(|(x, y)| {
        let (x, y) = v.px(x, y);
        format!("{x:.1},{y:.1}")
    })
    .collect::<Vec<_>>()
    .join(" ")
}

/// The root element, white background, shared definitions (hatching for
/// cells inside conductors, the area and frame clip paths) and the frame.
fn open_document(s: &mut String, map: &AreaMap, v: &View, height: f64) {
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height}" viewBox="0 0 {WIDTH} {height}" font-family="DejaVu Sans, Arial, sans-serif" font-size="12">"#
    );
    let _ = writeln!(s, r##"<rect width="100%" height="100%" fill="#ffffff"/>"##);
    let _ = writeln!(
        s,
        r##"<defs><pattern id="inside" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#000000" stroke-width="2"/></pattern><clipPath id="area"><polygon points="{}"/></clipPath><clipPath id="frame"><rect x="{MAP_X}" y="{MAP_Y}" width="{:.1}" height="{:.1}"/></clipPath></defs>"##,
        px_list(v, map.polygon.iter().map(|p| (p.x, p.y))),
        v.w_px,
        v.h_px
    );
    let _ = writeln!(
        s,
        r##"<rect x="{MAP_X}" y="{MAP_Y}" width="{:.1}" height="{:.1}" fill="none" stroke="#777777" stroke-width="0.8"/>"##,
        v.w_px, v.h_px
    );
}

/// Site name, area and load case, the numbered tables, and how to read the
/// contours.
fn title_block(s: &mut String, a: &Assessment, map: &AreaMap) {
    let name = esc(a.site_name.as_deref().unwrap_or("(unnamed site)"));
    let _ = writeln!(s, r#"<text x="{MAP_X}" y="30" font-size="18" font-weight="bold">{name}</text>"#);
    let _ = writeln!(
        s,
        r#"<text x="{MAP_X}" y="52" font-size="13">Field map of area {} at {:.2} m above ground — load case: {}</text>"#,
        esc(&map.area_id),
        map.height_m,
        esc(&a.load_case.kind)
    );
    let tables: Vec<String> =
        map.tables.iter().enumerate().map(|(i, t)| format!("T{} = {}", i + 1, t.table_id)).collect();
    let _ = writeln!(s, r#"<text x="{MAP_X}" y="72" font-size="12">Tables: {}</text>"#, esc(&tables.join(", ")));
    let _ = writeln!(
        s,
        r#"<text x="{MAP_X}" y="90" font-size="11">Contours: solid = at the level (ratio 1); dashed = review fraction ({:.0} %). Hatched = inside a conductor.</text>"#,
        a.review_fraction * 100.0
    );
}

/// Cells, run-length encoded by band along each row (fewer elements),
/// clipped to the area.
fn cells(s: &mut String, map: &AreaMap, v: &View, banding: &Banding) {
    let g = &map.grid;
    let key = |k: usize| banding.band_of_node(map, k);
    let _ = writeln!(s, r#"<g clip-path="url(#area)" shape-rendering="crispEdges">"#);
    for j in 0..g.ny {
        let mut i = 0;
        while i < g.nx {
            let k = j * g.nx + i;
            let c = key(k);
            let mut run = 1;
            while i + run < g.nx && key(k + run) == c {
                run += 1;
            }
            let (x, y) = (g.x0_m + i as f64 * g.spacing_m, g.y0_m + (j + 1) as f64 * g.spacing_m);
            let (px, py) = v.px(x, y);
            let fill = c.map_or_else(|| "url(#inside)".to_string(), palette::band_hex);
            // 0.3 px overlap hides hairline seams between runs in viewers.
            let _ = writeln!(
                s,
                r#"<rect x="{px:.2}" y="{py:.2}" width="{:.2}" height="{:.2}" fill="{fill}"/>"#,
                run as f64 * g.spacing_m * v.k + 0.3,
                g.spacing_m * v.k + 0.3
            );
            i += run;
        }
    }
    let _ = writeln!(s, "</g>");
}

fn area_outline(s: &mut String, map: &AreaMap, v: &View) {
    let _ = writeln!(
        s,
        r##"<polygon points="{}" fill="none" stroke="#000000" stroke-width="1.5"/>"##,
        px_list(v, map.polygon.iter().map(|p| (p.x, p.y)))
    );
}

/// Contours at each table's level and review fraction; tables with
/// identical ratio fields share one line and one label.
fn contours(s: &mut String, a: &Assessment, map: &AreaMap, v: &View) {
    let mut drawn: Vec<usize> = Vec::new();
    for (ti, t) in map.tables.iter().enumerate() {
        if drawn.iter().any(|&d| map.tables[d].ratio == t.ratio) {
            continue;
        }
        drawn.push(ti);
        let names: Vec<String> = map
            .tables
            .iter()
            .enumerate()
            .filter(|(_, o)| o.ratio == t.ratio)
            .map(|(i, _)| format!("T{}", i + 1))
            .collect();
        let names = names.join(", ");
        let Some(ratio) = t.ratio.iter().copied().collect::<Option<Vec<f64>>>() else { continue };
        for (level, dash, width, label) in [(1.0, "none", 2.4, "100 %"), (a.review_fraction, "7 4", 1.4, "review")] {
            let style = ContourStyle { level, dash, width, label: format!("{names} {label}") };
            contour_level(s, map, v, &ratio, t.level_ut, &style);
        }
    }
}

/// How one contour level is drawn and labelled.
struct ContourStyle {
    /// Exposure ratio of the line.
    level: f64,
    /// SVG dash array (`none` for solid).
    dash: &'static str,
    /// Stroke width, px.
    width: f64,
    /// Label before the level in µT.
    label: String,
}

/// The isolines of `ratio` at one level, and a label on the longest one
/// (three quarters along it, clear of the ends).
fn contour_level(s: &mut String, map: &AreaMap, v: &View, ratio: &[f64], level_ut: Option<f64>, st: &ContourStyle) {
    let lines = contour::clipped_isolines(&map.grid, ratio, &map.inside_conductor, st.level, &map.polygon);
    for l in &lines {
        let _ = writeln!(
            s,
            r##"<polyline points="{}" fill="none" stroke="#000000" stroke-width="{}" stroke-dasharray="{}" clip-path="url(#area)"/>"##,
            px_list(v, l.points.iter().map(|p| (p[0], p[1]))),
            st.width,
            st.dash
        );
    }
    if let Some(longest) = lines.iter().max_by_key(|l| l.points.len()) {
        let p = longest.points[longest.points.len() * 3 / 4];
        let (x, y) = v.px(p[0], p[1]);
        let b = level_ut.map(|l| format!(" ({} µT)", fmt_ut(l * st.level))).unwrap_or_default();
        let _ = writeln!(
            s,
            r##"<text x="{x:.1}" y="{:.1}" font-size="11" stroke="#ffffff" stroke-width="3" paint-order="stroke">{}{b}</text>"##,
            y - 4.0,
            st.label
        );
    }
}

/// Conductors in plan, clipped to the frame; one seen end-on (under 2 px
/// long in plan) is a small square. Labels are placed by [`labels_of`].
fn conductors(s: &mut String, site: &Site, v: &View) {
    let _ = writeln!(s, r#"<g clip-path="url(#frame)">"#);
    // A bar once, along its axis.
    for c in crate::site::bar::drawn(site.conductors()) {
        let pts: Vec<(f64, f64)> = c.path.iter().map(|p| v.px(p.x, p.y)).collect();
        if end_on(&pts) {
            let (x, y) = pts[0];
            let _ =
                writeln!(s, r##"<rect x="{:.1}" y="{:.1}" width="5" height="5" fill="#000000"/>"##, x - 2.5, y - 2.5);
        } else {
            let text: Vec<String> = pts.iter().map(|(x, y)| format!("{x:.1},{y:.1}")).collect();
            let _ = writeln!(
                s,
                r##"<polyline points="{}" fill="none" stroke="#000000" stroke-width="1.2"/>"##,
                text.join(" ")
            );
        }
    }
    let _ = writeln!(s, "</g>");
}

/// True if a conductor's drawn path is under 2 px long (seen end-on).
fn end_on(pts: &[(f64, f64)]) -> bool {
    pts.windows(2).map(|w| (w[1].0 - w[0].0).hypot(w[1].1 - w[0].1)).sum::<f64>() < 2.0
}

/// The plan point of a position (its standing spot or its point).
fn position_xy(q: &crate::site::Position) -> (f64, f64) {
    match &q.placement {
        crate::site::Placement::Standing { x_m, y_m, .. } => (*x_m, *y_m),
        crate::site::Placement::Point(p) => (p.x, p.y),
    }
}

/// The frame of the plan of `map` in the SVG, px: labels stay inside it.
pub fn frame_px(map: &AreaMap) -> labels::Rect {
    frame(&View::new(map))
}

/// The frame of the plan, px.
fn frame(v: &View) -> labels::Rect {
    labels::Rect { x: MAP_X, y: MAP_Y, w: v.w_px, h: v.h_px }
}

/// Positions inside the frame, as markers (their labels are placed by
/// [`labels_of`]).
fn positions(s: &mut String, site: &Site, v: &View) {
    let f = frame(v);
    for q in site.positions() {
        let (x, y) = position_xy(q);
        let (px, py) = v.px(x, y);
        if labels::Rect::around((px, py), 0.0).inside(&f) {
            let _ = writeln!(
                s,
                r##"<circle cx="{px:.1}" cy="{py:.1}" r="5" fill="#ffffff" stroke="#000000" stroke-width="2"/>"##
            );
        }
    }
}

/// Labels of the map: each position inside the frame with its verdict
/// (first, they matter most), then the conductors, those whose label
/// points lie within 10 px of each other (a bundle, a bar's phases seen
/// end-on) as one group listing its members; all placed inside the frame,
/// off each other and off the position markers (see [`labels`]).
pub fn labels_of(site: &Site, a: &Assessment, map: &AreaMap) -> Vec<labels::Placed> {
    let v = View::new(map);
    let f = frame(&v);
    let mut requests = Vec::new();
    let mut obstacles = Vec::new();
    for (q, r) in site.positions().iter().zip(&a.positions) {
        let (x, y) = position_xy(q);
        let anchor = v.px(x, y);
        if !labels::Rect::around(anchor, 0.0).inside(&f) {
            continue;
        }
        obstacles.push(labels::Rect::around(anchor, 6.5));
        let line = format!("{}: {}", q.id, r.verdict.word());
        requests.push(labels::Request { lines: vec![line], size: 11.0, bold: true, anchor });
    }
    // Conductors: the label point is the middle of the drawn path's part
    // inside the frame (sampled), so a conductor crossing the frame is
    // named where it is seen.
    // A conductor joins the group with a member within 10 px (single
    // linkage); the group is labelled at its first member's point.
    struct Group {
        anchor: (f64, f64),
        members: Vec<(f64, f64)>,
        ids: Vec<String>,
    }
    let mut groups: Vec<Group> = Vec::new();
    for c in crate::site::bar::drawn(site.conductors()) {
        let pts: Vec<(f64, f64)> = c.path.iter().map(|p| v.px(p.x, p.y)).collect();
        let mut seen: Vec<(f64, f64)> = Vec::new();
        for w in pts.windows(2) {
            for k in 0..=32 {
                let t = f64::from(k) / 32.0;
                let p = (w[0].0 + t * (w[1].0 - w[0].0), w[0].1 + t * (w[1].1 - w[0].1));
                if labels::Rect::around(p, 0.0).inside(&f) {
                    seen.push(p);
                }
            }
        }
        if pts.len() == 1 && labels::Rect::around(pts[0], 0.0).inside(&f) {
            seen.push(pts[0]);
        }
        let Some(&anchor) = seen.get(seen.len() / 2) else { continue };
        if end_on(&pts) {
            obstacles.push(labels::Rect::around(anchor, 3.0));
        }
        let near = |m: &(f64, f64)| (m.0 - anchor.0).hypot(m.1 - anchor.1) <= 10.0;
        match groups.iter_mut().find(|g| g.members.iter().any(near)) {
            Some(g) => {
                g.members.push(anchor);
                g.ids.push(c.id.clone());
            }
            None => groups.push(Group { anchor, members: vec![anchor], ids: vec![c.id.clone()] }),
        }
    }
    for g in groups {
        let ids: Vec<&str> = g.ids.iter().map(String::as_str).collect();
        requests.push(labels::Request { lines: labels::wrap_list(&ids, 28), size: 9.0, bold: false, anchor: g.anchor });
    }
    labels::place(&requests, f, &obstacles)
}

/// Draws placed labels (white halo, leader lines where moved away), and
/// lists under the frame those that found no room.
fn draw_labels(s: &mut String, placed: &[labels::Placed], v: &View) {
    let mut unplaced = Vec::new();
    for p in placed {
        let r = &p.request;
        let Some(b) = p.rect else {
            unplaced.push(r.lines.join(" "));
            continue;
        };
        if p.leader {
            let cx = r.anchor.0.clamp(b.x, b.x + b.w);
            let cy = r.anchor.1.clamp(b.y, b.y + b.h);
            let _ = writeln!(
                s,
                r##"<line x1="{:.1}" y1="{:.1}" x2="{cx:.1}" y2="{cy:.1}" stroke="#555555" stroke-width="0.8"/>"##,
                r.anchor.0, r.anchor.1
            );
        }
        let weight = if r.bold { r#" font-weight="bold""# } else { "" };
        let _ = write!(
            s,
            r##"<text x="{:.1}" y="{:.1}" font-size="{}"{weight} fill="#000000" stroke="#ffffff" stroke-width="2.5" paint-order="stroke">"##,
            b.x + 1.0,
            b.y,
            r.size
        );
        let line_h = labels::LINE_EM * r.size;
        for (i, line) in r.lines.iter().enumerate() {
            // Baseline at 0.9 of each line's box.
            let dy = if i == 0 { 0.9 * line_h } else { line_h };
            let _ = write!(s, r#"<tspan x="{:.1}" dy="{dy:.1}">{}</tspan>"#, b.x + 1.0, esc(line));
        }
        let _ = writeln!(s, "</text>");
    }
    if !unplaced.is_empty() {
        let _ = writeln!(
            s,
            r#"<text x="{MAP_X}" y="{:.1}" font-size="10">Not labelled on the plan for lack of room: {}</text>"#,
            MAP_Y + v.h_px + 14.0,
            esc(&unplaced.join("; "))
        );
    }
}

/// Legend position: left edge and top of the band swatches, and the
/// height of one swatch, px.
const LEGEND_X: f64 = MAP_X + MAP_W + 60.0;
const LEGEND_Y: f64 = MAP_Y + 20.0;
const SWATCH_H: f64 = 30.0;

/// The bands, highest on top, each with its range (in ratio and in µT at
/// the fundamental when coloured by a table), the highest value in the
/// area, and each table's level.
fn legend(s: &mut String, a: &Assessment, map: &AreaMap, banding: &Banding) {
    let (lx, ly) = (LEGEND_X, LEGEND_Y);
    let table = banding.table.map(|t| (t, &map.tables[t]));
    let (title, subtitle) = match table {
        Some((t, _)) => (format!("Exposure ratio to T{}", t + 1), format!("fixed bands; µT at {} Hz", a.frequency_hz)),
        None => ("Resultant flux density".to_string(), "µT RMS, fixed decades".to_string()),
    };
    let _ =
        writeln!(s, r#"<text x="{lx}" y="{:.1}" font-size="12" font-weight="bold">{}</text>"#, ly - 22.0, esc(&title));
    let _ = writeln!(s, r#"<text x="{lx}" y="{:.1}" font-size="11">{}</text>"#, ly - 8.0, esc(&subtitle));
    let edges = banding.edges;
    // Edges print as written (0.1, 0.25, 1000): they are round by choice.
    let num = |v: f64| format!("{v}");
    for band in 0..palette::BANDS {
        let y = ly + SWATCH_H * (palette::BANDS - 1 - band) as f64;
        let _ = writeln!(
            s,
            r##"<rect x="{lx}" y="{y:.1}" width="24" height="{SWATCH_H}" fill="{}" stroke="#000000" stroke-width="0.6"/>"##,
            palette::band_hex(band)
        );
        let range = match band {
            0 => format!("< {}", num(edges[0])),
            b if b == palette::BANDS - 1 => format!("≥ {}", num(edges[b - 1])),
            b => format!("{} – {}", num(edges[b - 1]), num(edges[b])),
        };
        let in_ut = match table.and_then(|(_, t)| t.level_ut) {
            Some(level) => match band {
                0 => format!("  (< {} µT)", fmt_ut(edges[0] * level)),
                b if b == palette::BANDS - 1 => format!("  (≥ {} µT)", fmt_ut(edges[b - 1] * level)),
                b => format!("  ({} – {} µT)", fmt_ut(edges[b - 1] * level), fmt_ut(edges[b] * level)),
            },
            None if table.is_none() => " µT".to_string(),
            None => String::new(),
        };
        let _ = writeln!(
            s,
            r#"<text x="{:.1}" y="{:.1}" font-size="11">{}</text>"#,
            lx + 32.0,
            y + SWATCH_H / 2.0 + 4.0,
            esc(&format!("{range}{in_ut}"))
        );
    }
    let below = ly + SWATCH_H * palette::BANDS as f64;
    let highest = map
        .b_ut
        .iter()
        .zip(&map.in_area)
        .zip(&map.inside_conductor)
        .filter(|((_, a), c)| **a && !**c)
        .map(|((b, _), _)| *b)
        .fold(0.0f64, f64::max);
    let _ = writeln!(
        s,
        r#"<text x="{lx}" y="{:.1}" font-size="11">highest in area: {} µT</text>"#,
        below + 22.0,
        fmt_ut(highest)
    );
    for (i, t) in map.tables.iter().enumerate() {
        if let Some(l) = t.level_ut {
            let _ = writeln!(
                s,
                r#"<text x="{lx}" y="{:.1}" font-size="11">T{}: level {} µT at {} Hz</text>"#,
                below + 42.0 + 16.0 * i as f64,
                i + 1,
                fmt_ut(l),
                a.frequency_hz
            );
        }
    }
}

/// A scale bar of a round length about a quarter of the map's width, and a
/// north arrow: true north with a georeference, else the frame's y axis.
fn scale_bar_and_north(s: &mut String, site: &Site, v: &View, bottom: f64) {
    let bar_m = nice_length(MAP_W / v.k / 4.0);
    let (bx, by) = (MAP_X, bottom + 24.0);
    let _ = writeln!(s, r##"<rect x="{bx}" y="{by}" width="{:.1}" height="6" fill="#000000"/>"##, bar_m * v.k);
    let _ = writeln!(s, r#"<text x="{bx}" y="{:.1}" font-size="11">0</text>"#, by + 20.0);
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="11" text-anchor="end">{bar_m} m</text>"#,
        bx + bar_m * v.k,
        by + 20.0
    );
    let bearing = site.georeference().map(|g| g.y_axis_bearing_deg).unwrap_or(0.0);
    let (nx, ny) = (MAP_X + MAP_W - 30.0, bottom + 40.0);
    let _ = writeln!(
        s,
        r##"<g transform="translate({nx},{ny}) rotate({:.1})"><polygon points="0,-22 7,6 0,0 -7,6" fill="#000000"/><text x="0" y="-26" font-size="12" text-anchor="middle" font-weight="bold">N</text></g>"##,
        -bearing
    );
    let north_note = if site.georeference().is_some() { "true north" } else { "frame y axis (north by convention)" };
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="9" text-anchor="end">{north_note}</text>"#,
        nx + 30.0,
        ny + 22.0
    );
}

fn cautions(s: &mut String, bottom: f64) {
    let cy = bottom + 78.0;
    for (i, c) in CAUTIONS.iter().enumerate() {
        let _ = writeln!(s, r#"<text x="{MAP_X}" y="{:.1}" font-size="10">{}</text>"#, cy + 13.0 * i as f64, esc(c));
    }
}

/// The provenance and assessed phase currents as machine-readable JSON in
/// the document's `<metadata>` (SVG 1.1 §5.11), beside the printed footer.
fn provenance_metadata(s: &mut String, a: &Assessment) {
    let doc = serde_json::json!({
        "provenance": a.provenance,
        "load_case": a.load_case,
        "tables": a.tables,
    });
    let _ = writeln!(s, "<metadata>{}</metadata>", esc(&doc.to_string()));
}

/// Where the provenance footer starts below the map's bottom, and its line
/// pitch, px (under the cautions, which end near `bottom + 130`).
const FOOTER_TOP: f64 = 148.0;
const FOOTER_LINE: f64 = 11.0;

/// The footer printed under the cautions: when, by which build, from which
/// site document; every phase current; each table's citation.
fn provenance_lines(a: &Assessment) -> Vec<String> {
    let mut lines = Vec::new();
    match &a.provenance {
        Some(p) => {
            lines.push(format!(
                "Computed {} UTC by fluxbound {} (build {}) from site {}",
                p.computed_at,
                p.tool_version,
                p.build_commit,
                p.site_source()
            ));
            lines.push(format!("Site SHA-256 {} (RFC 8785 canonical JSON)", p.site_sha256));
        }
        None => lines.push("Provenance not recorded (computed before provenance was kept)".to_string()),
    }
    lines.push(format!("Load case {}: {}", a.load_case.kind, a.load_case.phase_lines().join("; ")));
    for (i, t) in a.tables.iter().enumerate() {
        lines.push(format!("T{} = {} v{}: {}", i + 1, t.id, t.version, t.source));
    }
    lines
}

fn provenance_footer(s: &mut String, lines: &[String], bottom: f64) {
    for (i, line) in lines.iter().enumerate() {
        let y = bottom + FOOTER_TOP + FOOTER_LINE * i as f64;
        let _ = writeln!(s, r#"<text x="{MAP_X}" y="{y:.1}" font-size="9">{}</text>"#, esc(line));
    }
}
