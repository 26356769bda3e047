//! A survey as submitted: spot measurements with the meter's uncertainty and
//! the circuit loads at the time.

use serde::{Deserialize, Serialize};

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct SurveyDoc {
    /// Site revision the survey belongs to (API; latest if absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 1))]
    pub revision: Option<i64>,
    /// Survey name.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// When the measurements were taken (RFC 3339 text, e.g. 2026-11-20T09:30:00Z).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 40))]
    pub measured_at: String,
    /// The meter and its stated uncertainty.
    pub meter: MeterDoc,
    /// Expanded (k = 2) uncertainty of the model, percent (default 20;
    /// common practice, no source).
    #[serde(default = "default_model_uncertainty")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 200))]
    pub model_uncertainty_percent: f64,
    /// Circuit loads at the time; circuits not listed are taken at their
    /// present `current_a`.
    #[serde(default)]
    pub loads: Vec<LoadDoc>,
    /// Measurements, or `points_csv` instead.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    #[cfg_attr(feature = "schema", schema(max_items = 10000))]
    pub points: Vec<MeasurementDoc>,
    /// Measurements as CSV text with the header
    /// `id,x_m,y_m,z_m,resultant_ut` and optionally `bx_ut,by_ut,bz_ut`
    /// (a byte-order mark, `;` or tab delimiters and quoted line breaks
    /// are accepted; see `survey/csv.rs`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points_csv: Option<String>,
    /// Delimiter of `points_csv`: `","`, `";"` or a tab (`"\t"`). Detected
    /// from the CSV's header line when absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(pattern = "^(,|;|\t)$"))]
    pub csv_delimiter: Option<String>,
    /// Tables to compare the extrapolated values with (default: the site's,
    /// else the default set).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::table_ids))]
    pub tables: Vec<String>,
}

fn default_model_uncertainty() -> f64 {
    20.0
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct MeterDoc {
    /// Meter model.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
    /// Stated expanded uncertainty (k = 2), percent of reading.
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0, maximum = 100))]
    pub expanded_uncertainty_percent: f64,
    /// What the meter reads (default `resultant`, what a three-axis meter
    /// shows). Each point's reading, given in `resultant_ut` (and the CSV
    /// column of that name), is this quantity, and the model is compared in
    /// the same quantity.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub quantity: Option<MeterQuantity>,
}

/// The field quantity a meter reads (IEC 61786 terms; docs/REFERENCES.md,
/// "Measurement practice").
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum MeterQuantity {
    /// Root-sum-square of three orthogonal RMS components.
    #[default]
    Resultant,
    /// RMS value along the major axis of the polarisation ellipse.
    Maximum,
}

/// One circuit's load at measurement time: a nominal phase current or
/// per-phase RMS currents.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct LoadDoc {
    /// Circuit id in the site.
    pub circuit: String,
    /// Nominal RMS phase current, A (or give phases_a).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub current_a: Option<f64>,
    /// Measured RMS phase currents, A (or give current_a).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phases_a: Option<PhaseCurrentsDoc>,
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct PhaseCurrentsDoc {
    /// Phase A, RMS A.
    #[serde(rename = "A")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub a: f64,
    /// Phase B, RMS A (default: phase A's).
    #[serde(rename = "B", default)]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub b: Option<f64>,
    /// Phase C, RMS A (default: phase A's).
    #[serde(rename = "C", default)]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub c: Option<f64>,
}

/// A spot measurement: `at` is a point `[x, y, z]` or a standing point
/// `[x, y]` at `height_m` (default 1.0 m, the reference height).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct MeasurementDoc {
    /// Measurement id (1–64 characters, unique in the survey).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// `[x, y]` (with height_m) or `[x, y, z]`, m.
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::standing_or_point_m))]
    pub at: Vec<f64>,
    /// Height above a standing point, m (default 1.0).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub height_m: Option<f64>,
    /// The reading, RMS flux density in µT: the resultant, or the maximum
    /// when the meter's `quantity` is `maximum` (the name is kept from when
    /// only resultant meters were accepted).
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e7))]
    pub resultant_ut: f64,
    /// Measured RMS per axis (x, y, z), µT, if the meter gives them.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::axes_ut))]
    pub axes_ut: Option<[f64; 3]>,
}
