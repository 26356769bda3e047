//! Label placement for the pictures: every label inside the frame and off
//! every other label and marker, near what it names, with a leader line
//! where it had to move away.
//!
//! Text boxes are estimated, not measured (the SVG is drawn by the
//! viewer's font): [`CHAR_EM`] em per character (bold [`BOLD_CHAR_EM`]) and
//! [`LINE_EM`] em per line, on the wide side of a sans-serif font's average
//! so the boxes hold the drawn text (our choice, no source).
//!
//! The placement is greedy in the order given (put what matters first):
//! around its anchor, on rings of growing radius in eight directions, the
//! first box that lies inside the frame and overlaps no box already placed
//! and no obstacle (markers) is taken; failing that, the free spot of a
//! coarse scan of the frame nearest the anchor. A label that finds no
//! room at all is returned as not placed, so the picture can list it
//! elsewhere instead of printing it over another.

/// Width of one character, em (bold: [`BOLD_CHAR_EM`]).
pub const CHAR_EM: f64 = 0.62;
/// Width of one bold character, em.
pub const BOLD_CHAR_EM: f64 = 0.68;
/// Height of one line, em.
pub const LINE_EM: f64 = 1.25;
/// Distance from its anchor beyond which a label gets a leader line, px.
pub const LEADER_PX: f64 = 16.0;

/// An axis-aligned box, px (y down).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rect {
    pub x: f64,
    pub y: f64,
    pub w: f64,
    pub h: f64,
}

impl Rect {
    /// True if the two boxes share interior points (touching is allowed).
    pub fn overlaps(&self, o: &Rect) -> bool {
        self.x < o.x + o.w && o.x < self.x + self.w && self.y < o.y + o.h && o.y < self.y + self.h
    }
    /// True if `self` lies wholly inside `frame`.
    pub fn inside(&self, frame: &Rect) -> bool {
        self.x >= frame.x
            && self.y >= frame.y
            && self.x + self.w <= frame.x + frame.w
            && self.y + self.h <= frame.y + frame.h
    }
    /// A square of half-side `r` around a point.
    pub fn around((x, y): (f64, f64), r: f64) -> Rect {
        Rect { x: x - r, y: y - r, w: 2.0 * r, h: 2.0 * r }
    }
    fn centre(&self) -> (f64, f64) {
        (self.x + self.w / 2.0, self.y + self.h / 2.0)
    }
}

/// A label to place: its lines of text, font size (px), weight, and the
/// point it names (px).
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    pub lines: Vec<String>,
    pub size: f64,
    pub bold: bool,
    pub anchor: (f64, f64),
}

impl Request {
    /// Estimated width and height of the text, px.
    pub fn extent(&self) -> (f64, f64) {
        let em = if self.bold { BOLD_CHAR_EM } else { CHAR_EM };
        let chars = self.lines.iter().map(|l| l.chars().count()).max().unwrap_or(0);
        (chars as f64 * em * self.size + 2.0, self.lines.len() as f64 * LINE_EM * self.size)
    }
}

/// Where a label went: its box, and whether it needs a leader line back to
/// its anchor. `None` when no room was found.
#[derive(Debug, Clone, PartialEq)]
pub struct Placed {
    pub request: Request,
    pub rect: Option<Rect>,
    pub leader: bool,
}

/// Places `requests` in order inside `frame`, off each other and off
/// `obstacles` (see the module docs).
pub fn place(requests: &[Request], frame: Rect, obstacles: &[Rect]) -> Vec<Placed> {
    let mut taken: Vec<Rect> = obstacles.to_vec();
    let mut out = Vec::with_capacity(requests.len());
    for r in requests {
        let (w, h) = r.extent();
        let free = |b: &Rect, taken: &[Rect]| b.inside(&frame) && !taken.iter().any(|t| t.overlaps(b));
        let mut chosen = None;
        'rings: for radius in [4.0, 9.0, 16.0, 26.0, 40.0, 60.0, 90.0] {
            for k in 0..8 {
                let angle = k as f64 * std::f64::consts::FRAC_PI_4;
                let (dx, dy) = (radius * angle.cos(), -radius * angle.sin());
                // The box on the side of the offset: to the right of a point
                // right of the anchor, above a point above it, and so on.
                let (x, y) = (r.anchor.0 + dx - lead(dx, w), r.anchor.1 + dy - lead(dy, h));
                let b = Rect { x, y, w, h };
                if free(&b, &taken) {
                    chosen = Some(b);
                    break 'rings;
                }
            }
        }
        if chosen.is_none() {
            // A scan of the frame in steps of a third of the box; the free
            // spot nearest the anchor wins.
            let (sx, sy) = ((w / 3.0).max(2.0), (h / 3.0).max(2.0));
            let mut best: Option<(f64, Rect)> = None;
            let mut y = frame.y;
            while y + h <= frame.y + frame.h {
                let mut x = frame.x;
                while x + w <= frame.x + frame.w {
                    let b = Rect { x, y, w, h };
                    if free(&b, &taken) {
                        let (cx, cy) = b.centre();
                        let d = (cx - r.anchor.0).hypot(cy - r.anchor.1);
                        if best.is_none_or(|(bd, _)| d < bd) {
                            best = Some((d, b));
                        }
                    }
                    x += sx;
                }
                y += sy;
            }
            chosen = best.map(|(_, b)| b);
        }
        let leader = chosen.is_some_and(|b| {
            let (cx, cy) = b.centre();
            (cx - r.anchor.0).hypot(cy - r.anchor.1) > LEADER_PX + b.w.max(b.h) / 2.0
        });
        if let Some(b) = chosen {
            taken.push(b);
        }
        out.push(Placed { request: r.clone(), rect: chosen, leader });
    }
    out
}

/// How far a box of `extent` starts before its offset `d` from the anchor:
/// all of it on the negative side, none on the positive, half when the
/// offset is (nearly) zero.
fn lead(d: f64, extent: f64) -> f64 {
    if d < -0.5 {
        extent
    } else if d > 0.5 {
        0.0
    } else {
        extent / 2.0
    }
}

/// Splits `ids` joined by ", " into lines of at most `width` characters
/// (an id longer than that stands on its own line).
pub fn wrap_list(ids: &[&str], width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for (i, id) in ids.iter().enumerate() {
        let piece = if i + 1 < ids.len() { format!("{id},") } else { id.to_string() };
        match lines.last_mut() {
            Some(l) if l.chars().count() + 1 + piece.chars().count() <= width => {
                l.push(' ');
                l.push_str(&piece);
            }
            _ => lines.push(piece),
        }
    }
    lines
}
