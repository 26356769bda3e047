//! The field over an area's bounding box on a regular grid, with the
//! exposure ratio of each applicable table: what field maps, contours and
//! boundary polygons are drawn from.

use super::{GridSpec, exposure_ratio, line_levels, table_applies as applies};
use crate::cancel::{Cancel, Cancelled, uncancelled};
use crate::field;
use crate::limits::ReferenceTable;
use crate::site::wire::{BodyRegion, Group};
use crate::site::{Area, CircuitLoad, Site};
use nalgebra::{Point2, Point3};

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

/// Default most grid nodes of one area map (the map is coarsened to fit):
/// 200 × 200 nodes draw a smooth picture and compute in well under a second.
pub const MAP_MAX_CELLS: usize = 40_000;

/// Computes the map of `area` of `site` at the resolved `loads` for the
/// whole-body tables among `tables`, on at most `max_cells` nodes.
pub fn area_map(
    site: &Site,
    loads: &[CircuitLoad],
    tables: &[ReferenceTable],
    area: &Area,
    max_cells: usize,
) -> AreaMap {
    uncancelled(try_area_map(site, loads, tables, area, max_cells, &Cancel::never()))
}

/// [`area_map`] that stops with [`Cancelled`] soon after `cancel` is set.
pub fn try_area_map(
    site: &Site,
    loads: &[CircuitLoad],
    tables: &[ReferenceTable],
    area: &Area,
    max_cells: usize,
    cancel: &Cancel,
) -> Result<AreaMap, Cancelled> {
    let grid = GridSpec::covering(&area.polygon, area.spacing_m, max_cells);
    let points: Vec<Point3<f64>> = grid.nodes_at(area.height_m).collect();
    let filaments = crate::site::filaments(site.conductors());
    let excitation = site.excitation_at(loads);
    let set = field::try_evaluate(&filaments, &points, &excitation, cancel)?;
    let mut inside_conductor = vec![false; points.len()];
    for h in &set.inside {
        inside_conductor[h.point] = true;
    }
    let b_ut: Vec<f64> = (0..points.len()).map(|i| field::total_resultant_ut(set.at(i))).collect();
    let in_area: Vec<bool> = points.iter().map(|p| super::contains(&area.polygon, Point2::new(p.x, p.y))).collect();
    let line_hz: Vec<f64> = excitation.lines.iter().map(|l| l.frequency_hz).collect();
    let tables = tables
        .iter()
        .filter(|t| applies(t, BodyRegion::WholeBody, Group::General))
        .map(|t| {
            let levels = line_levels(t, &line_hz);
            let ratio = (0..points.len())
                .map(|i| exposure_ratio(set.at(i).iter().map(field::resultant_ut), &levels).ok())
                .collect();
            TableRatios { table_id: t.id().to_string(), level_ut: t.level_ut(site.frequency_hz()).ok(), ratio }
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
