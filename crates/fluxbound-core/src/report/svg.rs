//! SVG field map of one area: cells coloured by the resultant on a log
//! scale, contour lines at each table's level and review fraction,
//! conductors, positions with verdicts, legend, scale bar, north arrow,
//! title block and the cautions. Line styles (solid / dashed) and labels,
//! not colour, tell the contours apart, so a grey printout still reads.

use super::contour;
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

/// Log-scale range of the colour bar: from the lowest to the highest
/// in-area value, at least a factor 10 wide.
pub fn colour_range(map: &AreaMap) -> (f64, f64) {
    let vals = map
        .b_ut
        .iter()
        .zip(&map.in_area)
        .zip(&map.inside_conductor)
        .filter(|((_, a), c)| **a && !**c)
        .map(|((b, _), _)| *b);
    let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
    for v in vals.filter(|v| *v > 0.0) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() || hi <= 0.0 {
        return (0.1, 1.0);
    }
    let lo = lo.max(hi * 1e-4);
    if hi / lo < 10.0 { (hi / 10.0, hi) } else { (lo, hi) }
}

/// Position on the colour scale (0–1) of `b_ut` in `range` (log).
pub fn scale_position(b_ut: f64, (lo, hi): (f64, f64)) -> f64 {
    if b_ut <= 0.0 {
        return 0.0;
    }
    ((b_ut.ln() - lo.ln()) / (hi.ln() - lo.ln())).clamp(0.0, 1.0)
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

/// The field map of `map` as an SVG document.
pub fn area_map_svg(site: &Site, a: &Assessment, map: &AreaMap) -> String {
    let mut s = String::new();
    let g = &map.grid;
    let v = View::new(map);
    let bottom = (MAP_Y + v.h_px).max(560.0);
    let height = bottom + 150.0;
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height}" viewBox="0 0 {WIDTH} {height}" font-family="DejaVu Sans, Arial, sans-serif" font-size="12">"#
    );
    let _ = writeln!(s, r##"<rect width="100%" height="100%" fill="#ffffff"/>"##);
    let _ = writeln!(
        s,
        r##"<defs><pattern id="inside" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#000000" stroke-width="2"/></pattern><clipPath id="area"><polygon points="{}"/></clipPath><clipPath id="frame"><rect x="{MAP_X}" y="{MAP_Y}" width="{:.1}" height="{:.1}"/></clipPath></defs>"##,
        map.polygon
            .iter()
            .map(|p| {
                let (x, y) = v.px(p.x, p.y);
                format!("{x:.1},{y:.1}")
            })
            .collect::<Vec<_>>()
            .join(" "),
        v.w_px,
        v.h_px
    );
    let _ = writeln!(
        s,
        r##"<rect x="{MAP_X}" y="{MAP_Y}" width="{:.1}" height="{:.1}" fill="none" stroke="#777777" stroke-width="0.8"/>"##,
        v.w_px, v.h_px
    );
    // Title block.
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
    // Cells, run-length encoded by colour step, clipped to the area.
    let range = colour_range(map);
    let steps = 64.0;
    let _ = writeln!(s, r#"<g clip-path="url(#area)" shape-rendering="crispEdges">"#);
    for j in 0..g.ny {
        let mut i = 0;
        while i < g.nx {
            let k = j * g.nx + i;
            let key = |k: usize| {
                if map.inside_conductor[k] {
                    -1
                } else {
                    (scale_position(map.b_ut[k], range) * (steps - 1.0)).round() as i64
                }
            };
            let c = key(k);
            let mut run = 1;
            while i + run < g.nx && key(k + run) == c {
                run += 1;
            }
            let (x, y) = (g.x0_m + i as f64 * g.spacing_m, g.y0_m + (j + 1) as f64 * g.spacing_m);
            let (px, py) = v.px(x, y);
            let fill = if c < 0 { "url(#inside)".to_string() } else { palette::hex(c as f64 / (steps - 1.0)) };
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
    let outline: Vec<String> = map
        .polygon
        .iter()
        .map(|p| {
            let (x, y) = v.px(p.x, p.y);
            format!("{x:.1},{y:.1}")
        })
        .collect();
    let _ =
        writeln!(s, r##"<polygon points="{}" fill="none" stroke="#000000" stroke-width="1.5"/>"##, outline.join(" "));
    // Contours; tables with identical ratio fields share one line and label.
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
            let lines = contour::isolines(g, &ratio, &map.inside_conductor, level);
            for l in &lines {
                let pts: Vec<String> = l
                    .points
                    .iter()
                    .map(|p| {
                        let (x, y) = v.px(p[0], p[1]);
                        format!("{x:.1},{y:.1}")
                    })
                    .collect();
                let _ = writeln!(
                    s,
                    r##"<polyline points="{}" fill="none" stroke="#000000" stroke-width="{width}" stroke-dasharray="{dash}" clip-path="url(#area)"/>"##,
                    pts.join(" ")
                );
            }
            if let Some(longest) = lines.iter().max_by_key(|l| l.points.len()) {
                let p = longest.points[longest.points.len() * 3 / 4];
                let (x, y) = v.px(p[0], p[1]);
                let b = t.level_ut.map(|l| format!(" ({} µT)", fmt_ut(l * level))).unwrap_or_default();
                let _ = writeln!(
                    s,
                    r##"<text x="{x:.1}" y="{:.1}" font-size="11" stroke="#ffffff" stroke-width="3" paint-order="stroke">{names} {label}{b}</text>"##,
                    y - 4.0
                );
            }
        }
    }
    // Conductors in plan, clipped to the frame.
    let _ = writeln!(s, r#"<g clip-path="url(#frame)">"#);
    for c in &site.conductors {
        let pts: Vec<(f64, f64)> = c.path.iter().map(|p| v.px(p.x, p.y)).collect();
        let len: f64 = pts.windows(2).map(|w| ((w[1].0 - w[0].0).powi(2) + (w[1].1 - w[0].1).powi(2)).sqrt()).sum();
        if len < 2.0 {
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
        let (x, y) = pts[pts.len() / 2];
        let _ = writeln!(
            s,
            r##"<text x="{:.1}" y="{:.1}" font-size="9" fill="#000000" stroke="#ffffff" stroke-width="2.5" paint-order="stroke">{}</text>"##,
            x + 3.0,
            y - 3.0,
            esc(&c.id)
        );
    }
    let _ = writeln!(s, "</g>");
    // Positions with verdicts.
    for (q, r) in site.positions.iter().zip(&a.positions) {
        let (x, y) = match &q.placement {
            crate::site::Placement::Standing { x_m, y_m, .. } => (*x_m, *y_m),
            crate::site::Placement::Point(p) => (p.x, p.y),
        };
        let (px, py) = v.px(x, y);
        if !(MAP_X..=MAP_X + v.w_px).contains(&px) || !(MAP_Y..=MAP_Y + v.h_px).contains(&py) {
            continue;
        }
        let verdict = r.verdict.word();
        let _ = writeln!(
            s,
            r##"<circle cx="{px:.1}" cy="{py:.1}" r="5" fill="#ffffff" stroke="#000000" stroke-width="2"/>"##
        );
        let _ = writeln!(
            s,
            r##"<text x="{:.1}" y="{:.1}" font-size="11" font-weight="bold" stroke="#ffffff" stroke-width="3" paint-order="stroke">{}: {}</text>"##,
            px + 8.0,
            py + 4.0,
            esc(&q.id),
            esc(verdict)
        );
    }
    // Legend: colour bar (log scale).
    let (lx, ly, lh) = (MAP_X + MAP_W + 60.0, MAP_Y + 20.0, 300.0);
    let _ = writeln!(
        s,
        r#"<text x="{lx}" y="{:.1}" font-size="12" font-weight="bold">Resultant flux density</text>"#,
        ly - 22.0
    );
    let _ = writeln!(s, r#"<text x="{lx}" y="{:.1}" font-size="11">µT RMS, log scale</text>"#, ly - 8.0);
    for k in 0..64 {
        let t = k as f64 / 63.0;
        let y = ly + lh * (1.0 - t) - lh / 64.0;
        let _ = writeln!(
            s,
            r#"<rect x="{lx}" y="{y:.2}" width="24" height="{:.2}" fill="{}"/>"#,
            lh / 64.0 + 0.4,
            palette::hex(t)
        );
    }
    let _ = writeln!(s, r##"<rect x="{lx}" y="{ly}" width="24" height="{lh}" fill="none" stroke="#000000"/>"##);
    let (lo, hi) = range;
    let mut ticks = Vec::new();
    let mut d = 10f64.powf(lo.log10().floor());
    while d <= hi * 1.0001 {
        for m in [1.0, 2.0, 5.0] {
            let t = d * m;
            if t >= lo * 0.9999 && t <= hi * 1.0001 {
                ticks.push(t);
            }
        }
        d *= 10.0;
    }
    for t in ticks {
        let y = ly + lh * (1.0 - scale_position(t, range));
        let _ = writeln!(
            s,
            r##"<line x1="{:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#000000"/>"##,
            lx + 24.0,
            lx + 30.0
        );
        let _ = writeln!(s, r#"<text x="{:.1}" y="{:.1}" font-size="11">{}</text>"#, lx + 34.0, y + 4.0, fmt_ut(t));
    }
    let _ = writeln!(
        s,
        r#"<text x="{lx}" y="{:.1}" font-size="11">highest in area: {} µT</text>"#,
        ly + lh + 22.0,
        fmt_ut(hi)
    );
    for (i, t) in map.tables.iter().enumerate() {
        if let Some(l) = t.level_ut {
            let _ = writeln!(
                s,
                r#"<text x="{lx}" y="{:.1}" font-size="11">T{}: level {} µT at {} Hz</text>"#,
                ly + lh + 42.0 + 16.0 * i as f64,
                i + 1,
                fmt_ut(l),
                a.frequency_hz
            );
        }
    }
    // Scale bar and north arrow.
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
    let bearing = site.georeference.map(|g| g.y_axis_bearing_deg).unwrap_or(0.0);
    let (nx, ny) = (MAP_X + MAP_W - 30.0, bottom + 40.0);
    let _ = writeln!(
        s,
        r##"<g transform="translate({nx},{ny}) rotate({:.1})"><polygon points="0,-22 7,6 0,0 -7,6" fill="#000000"/><text x="0" y="-26" font-size="12" text-anchor="middle" font-weight="bold">N</text></g>"##,
        -bearing
    );
    let north_note = if site.georeference.is_some() { "true north" } else { "frame y axis (north by convention)" };
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="9" text-anchor="end">{north_note}</text>"#,
        nx + 30.0,
        ny + 22.0
    );
    // Cautions.
    let cy = bottom + 78.0;
    for (i, c) in CAUTIONS.iter().enumerate() {
        let _ = writeln!(s, r#"<text x="{MAP_X}" y="{:.1}" font-size="10">{}</text>"#, cy + 13.0 * i as f64, esc(c));
    }
    s.push_str("</svg>\n");
    s
}
