//! The field over an area's bounding box on a regular grid, with the
//! exposure ratio of each applicable table: what field maps, contours and
//! boundary polygons are drawn from.

use super::{LoadCase, applies};
use crate::field;
use crate::limits::ReferenceTable;
use crate::site::wire::{BodyRegion, Group};
use crate::site::{Pointer, Problems, Site};
use nalgebra::{Point2, Point3};

/// A regular grid of nodes at `(x0 + (i + ½)·s, y0 + (j + ½)·s)`,
/// `i < nx`, `j < ny`, stored row by row (`j · nx + i`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridSpec {
    pub x0_m: f64,
    pub y0_m: f64,
    pub spacing_m: f64,
    pub nx: usize,
    pub ny: usize,
}

impl GridSpec {
    /// The bounding box of `polygon` at `spacing_m`, coarsened if needed so
    /// that it has at most `max_cells` nodes.
    pub fn covering(polygon: &[Point2<f64>], spacing_m: f64, max_cells: usize) -> GridSpec {
        let (mut x0, mut y0, mut x1, mut y1) = (f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY);
        for p in polygon {
            (x0, y0, x1, y1) = (x0.min(p.x), y0.min(p.y), x1.max(p.x), y1.max(p.y));
        }
        let (w, h) = ((x1 - x0).max(spacing_m), (y1 - y0).max(spacing_m));
        let s = spacing_m.max((w * h / max_cells.max(1) as f64).sqrt());
        // A hair below the quotient, so 1.2 / 0.1 = 12.000000000000002 is 12.
        let nx = (w / s * (1.0 - 1e-12)).ceil().max(1.0) as usize;
        let ny = (h / s * (1.0 - 1e-12)).ceil().max(1.0) as usize;
        GridSpec { x0_m: x0, y0_m: y0, spacing_m: s, nx, ny }
    }
    pub fn len(&self) -> usize {
        self.nx * self.ny
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Plan coordinates of node `(i, j)`, m.
    pub fn node(&self, i: usize, j: usize) -> (f64, f64) {
        (self.x0_m + (i as f64 + 0.5) * self.spacing_m, self.y0_m + (j as f64 + 0.5) * self.spacing_m)
    }
}

/// Exposure ratio of one table at every node.
#[derive(Debug, Clone, PartialEq)]
pub struct TableRatios {
    pub table_id: String,
    /// The table's level at the fundamental, µT.
    pub level_ut: Option<f64>,
    /// `Σ_f B_f / B_RL(f)` per node; `None` where a frequency present is not
    /// covered by the table.
    pub ratio: Vec<Option<f64>>,
}

/// The field over an area.
#[derive(Debug, Clone, PartialEq)]
pub struct AreaMap {
    pub area_id: String,
    pub height_m: f64,
    pub polygon: Vec<Point2<f64>>,
    pub grid: GridSpec,
    /// Resultant RMS flux density per node, µT (0 inside conductors).
    pub b_ut: Vec<f64>,
    /// Node lies inside a conductor (no thin-wire field there).
    pub inside_conductor: Vec<bool>,
    /// Node lies inside the area's polygon.
    pub in_area: Vec<bool>,
    pub tables: Vec<TableRatios>,
}

/// Computes the map of area `area_index` at `load` for the whole-body
/// tables among `tables`, on at most `max_cells` nodes.
pub fn area_map(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    area_index: usize,
    max_cells: usize,
) -> Result<AreaMap, Problems> {
    let area = site.areas.get(area_index).ok_or_else(|| {
        let mut p = Problems::default();
        p.push(&Pointer::root().key("area"), "no such area");
        p
    })?;
    let loads = load.resolve(site, &Pointer::root().key("load"))?;
    let grid = GridSpec::covering(&area.polygon, area.spacing_m, max_cells);
    let points: Vec<Point3<f64>> = (0..grid.ny)
        .flat_map(|j| (0..grid.nx).map(move |i| (i, j)))
        .map(|(i, j)| {
            let (x, y) = grid.node(i, j);
            Point3::new(x, y, area.height_m)
        })
        .collect();
    let filaments = crate::site::filaments(&site.conductors);
    let excitation = site.excitation_at(&loads);
    let set = field::evaluate(&filaments, &points, &excitation);
    let mut inside_conductor = vec![false; points.len()];
    for h in &set.inside {
        inside_conductor[h.point] = true;
    }
    let b_ut: Vec<f64> = (0..points.len()).map(|i| field::total_resultant_ut(set.at(i))).collect();
    let in_area: Vec<bool> = points.iter().map(|p| super::contains(&area.polygon, Point2::new(p.x, p.y))).collect();
    let tables = tables
        .iter()
        .filter(|t| applies(t, BodyRegion::WholeBody, Group::General))
        .map(|t| {
            let levels: Vec<Option<f64>> = excitation.lines.iter().map(|l| t.level_ut(l.frequency_hz).ok()).collect();
            let ratio = (0..points.len())
                .map(|i| {
                    let mut r = 0.0;
                    for (b, level) in set.at(i).iter().zip(&levels) {
                        let b = field::resultant_ut(b);
                        match level {
                            _ if b <= 0.0 => {}
                            Some(l) => r += b / l,
                            None => return None,
                        }
                    }
                    Some(r)
                })
                .collect();
            TableRatios { table_id: t.id().to_string(), level_ut: t.level_ut(site.frequency_hz).ok(), ratio }
        })
        .collect();
    Ok(AreaMap {
        area_id: area.id.clone(),
        height_m: area.height_m,
        polygon: area.polygon.clone(),
        grid,
        b_ut,
        inside_conductor,
        in_area,
        tables,
    })
}
