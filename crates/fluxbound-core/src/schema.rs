//! Transitional: hand-written JSON Schemas for the core's documents, kept
//! here (behind the `schema` feature) until the derives replace them.

use serde_json::{Value, json};
use std::borrow::Cow;
use utoipa::openapi::{RefOr, schema::Schema};
use utoipa::{PartialSchema, ToSchema};

pub fn from_json(v: Value) -> RefOr<Schema> {
    serde_json::from_value(v).expect("hand-written schema is valid")
}

/// Declares the schema of a domain type by its JSON Schema.
#[macro_export]
macro_rules! domain_schema {
    ($ty:path, $name:literal, $json:expr) => {
        impl PartialSchema for $ty {
            fn schema() -> RefOr<Schema> {
                $crate::schema::from_json($json)
            }
        }
        impl ToSchema for $ty {
            fn name() -> Cow<'static, str> {
                Cow::Borrowed($name)
            }
        }
    };
}

pub fn r(name: &str) -> Value {
    json!({ "$ref": format!("#/components/schemas/{name}") })
}
pub fn num(desc: &str) -> Value {
    json!({ "type": "number", "description": desc })
}
fn text(desc: &str) -> Value {
    json!({ "type": "string", "description": desc })
}
pub fn arr(items: Value, desc: &str) -> Value {
    json!({ "type": "array", "items": items, "description": desc })
}
fn xyz(desc: &str) -> Value {
    json!({ "type": "array", "items": { "type": "number" }, "minItems": 3, "maxItems": 3, "description": desc })
}
pub fn obj(desc: &str, required: &[&str], props: Value) -> Value {
    json!({ "type": "object", "description": desc, "required": required, "properties": props, "additionalProperties": false })
}
fn one_of(values: &[&str], desc: &str) -> Value {
    json!({ "type": "string", "enum": values, "description": desc })
}

use crate::site::wire as w;

domain_schema!(
    w::SiteDoc,
    "SiteDoc",
    obj(
        "A site model. Frame: metres, x east, y north, z up, ground at z = 0.",
        &["frequency_hz", "conductors"],
        json!({
            "name": text("Site name"),
            "frequency_hz": num("Fundamental frequency, Hz (1–3000)"),
            "circuits": arr(r("CircuitDoc"), "Circuits whose phase currents drive conductors"),
            "conductors": arr(r("ConductorDoc"), "Conductors as polylines"),
            "positions": arr(r("PositionDoc"), "Worker positions"),
            "areas": arr(r("AreaDoc"), "Work areas"),
            "tables": arr(json!({"type": "string"}), "Reference-level table ids the site is assessed against by default"),
        })
    )
);
domain_schema!(
    w::CircuitDoc,
    "CircuitDoc",
    obj(
        "A circuit: balanced phase currents, with optional unbalance and harmonics. Phasors are RMS; positive sequence A = θ, B = θ − 120°, C = θ + 120°.",
        &["id", "kind", "current_a"],
        json!({
            "id": text("Unique circuit id"),
            "kind": one_of(&["three_phase", "single_phase"], "Circuit kind"),
            "current_a": num("Present RMS current per phase, A (0 to 1e6)"),
            "rated_current_a": num("Rated RMS current per phase, A"),
            "sequence": one_of(&["positive", "negative"], "Phase sequence (default positive)"),
            "angle_deg": num("Angle of phase A's phasor, degrees"),
            "phases": r("PhaseOverridesDoc"),
            "harmonics": arr(r("HarmonicDoc"), "Harmonic currents"),
        })
    )
);
domain_schema!(
    w::PhaseOverridesDoc,
    "PhaseOverridesDoc",
    obj(
        "Per-phase deviations from the balanced set (unbalance)",
        &[],
        json!({ "A": r("PhaseOverrideDoc"), "B": r("PhaseOverrideDoc"), "C": r("PhaseOverrideDoc") })
    )
);
domain_schema!(
    w::PhaseOverrideDoc,
    "PhaseOverrideDoc",
    obj(
        "One phase's override",
        &[],
        json!({ "current_a": num("RMS current of this phase, A"), "angle_deg": num("Absolute angle of this phase, degrees") })
    )
);
domain_schema!(
    w::HarmonicDoc,
    "HarmonicDoc",
    obj(
        "A harmonic: RMS percent/100 · |I_p| at angle angle_deg + order · φ_p",
        &["order", "percent"],
        json!({
            "order": { "type": "integer", "minimum": 2, "maximum": 50, "description": "Harmonic order" },
            "percent": num("RMS as percent of the phase's fundamental (0–100)"),
            "angle_deg": num("Angle of phase A's harmonic, degrees"),
        })
    )
);
domain_schema!(
    w::CurrentDoc,
    "CurrentDoc",
    obj(
        "An explicit RMS phasor (fundamental only)",
        &["rms_a"],
        json!({ "rms_a": num("RMS current, A"), "phase_deg": num("Phase angle, degrees") })
    )
);
domain_schema!(
    w::ConductorDoc,
    "ConductorDoc",
    obj(
        "A conductor: a polyline carrying a circuit's phase current (or a share of it), or an explicit phasor",
        &["id", "path", "radius_m"],
        json!({
            "id": text("Unique conductor id"),
            "path": arr(xyz("Vertex [x, y, z], m"), "Vertices in the direction of current flow (at least 2)"),
            "radius_m": num("Conductor radius, m (0.1 mm – 2 m); points inside are flagged"),
            "circuit": text("Circuit id (with phase)"),
            "phase": one_of(&["A", "B", "C", "N"], "Phase of the circuit (N carries the return −(I_A + I_B + I_C))"),
            "share": num("Fraction of the phase current in this conductor, (0, 1]"),
            "current": r("CurrentDoc"),
        })
    )
);
domain_schema!(
    w::PositionDoc,
    "PositionDoc",
    obj(
        "A worker position: a standing point [x, y] evaluated at body heights, or a 3-D point [x, y, z]",
        &["id", "at"],
        json!({
            "id": text("Unique position id"),
            "at": json!({ "type": "array", "items": { "type": "number" }, "minItems": 2, "maxItems": 3, "description": "[x, y] or [x, y, z], m" }),
            "heights_m": arr(json!({"type": "number"}), "Body heights above a standing point, m (default 0.5, 1.0, 1.5)"),
            "body_region": one_of(&["whole_body", "limb"], "Which tables apply"),
            "occupancy_h": num("Hours per day spent here (for the information-only time-weighted average)"),
            "group": one_of(&["general", "implant_wearer"], "implant_wearer is also screened against the implant table"),
        })
    )
);
domain_schema!(
    w::AreaDoc,
    "AreaDoc",
    obj(
        "A work area: a polygon [[x, y], …] at height_m sampled on a square grid",
        &["id", "polygon", "height_m", "spacing_m"],
        json!({
            "id": text("Unique area id"),
            "polygon": arr(json!({ "type": "array", "items": { "type": "number" }, "minItems": 2, "maxItems": 2 }), "Simple polygon, m"),
            "height_m": num("Height of the evaluation plane, m"),
            "spacing_m": num("Grid spacing, m (0.01–100)"),
            "occupancy_h": num("Hours per day spent here"),
        })
    )
);

domain_schema!(
    w::GeoreferenceDoc,
    "GeoreferenceDoc",
    obj(
        "Where the local frame sits on WGS 84 (for GeoJSON exports in longitude and latitude)",
        &["origin_lon_deg", "origin_lat_deg"],
        json!({
            "origin_lon_deg": num("Longitude of the local origin, degrees east"),
            "origin_lat_deg": num("Latitude of the local origin, degrees north (−80 to 80)"),
            "y_axis_bearing_deg": num("Bearing of the local +y axis, degrees clockwise from true north"),
        })
    )
);

use crate::mitigate as m;

domain_schema!(
    m::DistanceResult,
    "DistanceResult",
    obj(
        "Distance at which the resultant field first falls below a level along a ray",
        &["level_ut", "from", "direction", "tolerance_m", "searched_to_m"],
        json!({
            "level_ut": num("The level, µT RMS"),
            "from": xyz("Origin, m"),
            "b_at_origin_ut": { "type": ["number", "null"], "description": "Resultant at the origin, µT (null inside a conductor)" },
            "direction": xyz("Unit direction searched"),
            "distance_m": { "type": ["number", "null"], "description": "Distance, m (0 if already below; null if not within searched_to_m)" },
            "at": { "type": ["array", "null"], "items": { "type": "number" }, "description": "The point at that distance, m" },
            "tolerance_m": num("Bisection tolerance, m"),
            "searched_to_m": num("Farthest distance searched, m"),
        })
    )
);

use crate::limits as l;

domain_schema!(
    l::TableDoc,
    "TableDoc",
    obj(
        "A reference-level table: bands of B_RL(f) = coefficient · f^exponent µT RMS",
        &["id", "title", "source", "applies_to", "kind", "bands"],
        json!({
            "id": text("Table id: letters, digits, '.', '-', '_'"),
            "title": text("Title"),
            "source": text("Full citation of the source document"),
            "applies_to": r("AppliesTo"),
            "kind": one_of(&["reference_level", "action_level", "screening"], "What the numbers are"),
            "quantity": one_of(&["b_rms"], "Limited quantity (RMS flux density)"),
            "bands": arr(r("Band"), "Non-overlapping, contiguous except at gaps"),
            "gaps": arr(r("Gap"), "Ranges deliberately not covered"),
            "notes": arr(json!({"type": "string"}), "Verification status and caveats"),
        })
    )
);
domain_schema!(
    l::AppliesTo,
    "AppliesTo",
    obj(
        "Who and which body region a table protects",
        &["population", "body_region"],
        json!({
            "population": one_of(&["workers", "public", "implant_wearers"], "Population"),
            "body_region": one_of(&["whole_body", "limbs"], "Body region"),
        })
    )
);
domain_schema!(
    l::Band,
    "Band",
    obj(
        "from_hz ≤ f < to_hz (a run's last band includes to_hz)",
        &["from_hz", "to_hz", "coefficient", "exponent"],
        json!({ "from_hz": num("Hz"), "to_hz": num("Hz"), "coefficient": num("µT · Hz^-exponent"), "exponent": num("Power of f (−4 to 4)") })
    )
);
domain_schema!(
    l::Gap,
    "Gap",
    obj(
        "A frequency range not covered by the table",
        &["from_hz", "to_hz"],
        json!({ "from_hz": num("Hz"), "to_hz": num("Hz"), "reason": text("Why") })
    )
);

use crate::evaluate as e;

domain_schema!(
    e::EvaluateRequest,
    "EvaluateRequest",
    obj(
        "Conductors and points; the document of `fluxbound evaluate`",
        &["frequency_hz", "conductors", "points"],
        json!({
            "frequency_hz": num("Fundamental frequency, Hz"),
            "circuits": arr(r("CircuitDoc"), "Optional circuits for conductors given by circuit and phase"),
            "conductors": arr(r("ConductorDoc"), "Conductors"),
            "points": arr(xyz("Point [x, y, z], m"), "Evaluation points"),
        })
    )
);
domain_schema!(
    e::EvaluateResponse,
    "EvaluateResponse",
    obj(
        "Field at every point in input order",
        &["frequency_hz", "points", "segment_point_pairs", "cautions"],
        json!({
            "frequency_hz": num("Fundamental, Hz"),
            "points": arr(r("PointResult"), "One per input point"),
            "segment_point_pairs": { "type": "integer", "description": "Work done" },
            "cautions": arr(json!({"type": "string"}), "Cautions that apply to every result"),
        })
    )
);
domain_schema!(
    e::PointResult,
    "PointResult",
    obj(
        "Field at one point; null values and inside_conductors when the point lies inside a conductor",
        &["at", "resultant_ut", "maximum_ut", "frequencies", "inside_conductors"],
        json!({
            "at": xyz("The point, m"),
            "resultant_ut": { "type": ["number", "null"], "description": "Resultant RMS flux density over all frequencies (quadrature sum), µT" },
            "maximum_ut": { "type": ["number", "null"], "description": "RMS along the direction of largest field, µT" },
            "frequencies": arr(r("FrequencyResult"), "Per frequency"),
            "inside_conductors": arr(json!({"type": "string"}), "Conductors the point lies inside"),
        })
    )
);
domain_schema!(
    e::FrequencyResult,
    "FrequencyResult",
    obj(
        "Field at one frequency",
        &["order", "frequency_hz", "resultant_ut", "maximum_ut", "components_ut"],
        json!({
            "order": { "type": "integer", "description": "Harmonic order (1 = fundamental)" },
            "frequency_hz": num("Hz"),
            "resultant_ut": num("Resultant RMS, µT"),
            "maximum_ut": num("Major semi-axis of the polarisation ellipse (RMS), µT"),
            "components_ut": r("ComponentsUt"),
        })
    )
);
domain_schema!(
    e::ComponentsUt,
    "ComponentsUt",
    obj(
        "Complex RMS components, µT",
        &["x", "y", "z"],
        json!({ "x": r("ComplexUt"), "y": r("ComplexUt"), "z": r("ComplexUt") })
    )
);
domain_schema!(
    e::ComplexUt,
    "ComplexUt",
    obj(
        "A complex value, µT RMS",
        &["re", "im"],
        json!({ "re": num("Real part, µT"), "im": num("Imaginary part, µT") })
    )
);

use crate::assess as a;

domain_schema!(
    a::LoadCase,
    "LoadCase",
    json!({
        "description": "The currents to assess at",
        "oneOf": [
            obj("Each circuit's present current_a", &["kind"], json!({ "kind": one_of(&["present"], "") })),
            obj("Each circuit's rated_current_a", &["kind"], json!({ "kind": one_of(&["rated"], "") })),
            obj("Explicit nominal RMS phase currents by circuit id, A", &["kind", "currents_a"], json!({
                "kind": one_of(&["currents"], ""),
                "currents_a": { "type": "object", "additionalProperties": { "type": "number" } },
            })),
            obj("Factors on the present currents by circuit id", &["kind", "factors"], json!({
                "kind": one_of(&["scale"], ""),
                "factors": { "type": "object", "additionalProperties": { "type": "number" } },
            })),
        ]
    })
);
domain_schema!(
    a::Assessment,
    "Assessment",
    json!({
        "type": "object",
        "description": "An assessment result. B values are resultant RMS flux density in µT; ratio = Σ_f B_f / B_RL(f); verdicts: within, approaching, exceeds, not_covered, not_computed.",
        "required": ["frequency_hz", "load_case", "review_fraction", "tables", "positions", "areas", "summary", "notes", "cautions"],
        "properties": {
            "site_name": { "type": ["string", "null"] },
            "frequency_hz": num("Fundamental, Hz"),
            "load_case": { "type": "object", "description": "kind and per-circuit present_a / assessed_a, A" },
            "review_fraction": num("Ratio from which a result is approaching"),
            "tables": arr(json!({ "type": "object", "description": "id, version, title, kind, applies_to, source" }), "Tables used, pinned by version"),
            "positions": arr(json!({ "type": "object", "description": "Per position: heights[] (height_m, resultant_ut, maximum_ut, comparisons), max_resultant_ut, mean_resultant_ut, comparisons[] (table_id, ratio, verdict, worst_height_m, ratio_of_height_mean, level_ut), verdict, time_weighted" }), "Positions"),
            "areas": arr(json!({ "type": "object", "description": "Per area: cells, cells_inside_conductors, max_resultant_ut, max_at, mean_resultant_ut, comparisons[] (table_id, max_ratio, share_at_or_above_level, share_at_or_above_review, verdict), verdict" }), "Areas"),
            "summary": { "type": "object", "description": "worst_verdict and the ids of positions and areas exceeding or approaching" },
            "notes": arr(json!({"type": "string"}), "How the numbers were formed"),
            "cautions": arr(json!({"type": "string"}), "Cautions that apply to every result"),
        }
    })
);

use crate::survey;
use crate::survey::wire as sv;

domain_schema!(
    sv::SurveyDoc,
    "SurveyDoc",
    obj(
        "A survey: spot measurements with the meter's uncertainty and the circuit loads at the time",
        &["measured_at", "meter"],
        json!({
            "revision": { "type": "integer", "description": "Site revision (default: latest)" },
            "name": text("Survey name"),
            "measured_at": text("When measured (RFC 3339)"),
            "meter": r("MeterDoc"),
            "model_uncertainty_percent": num("Expanded (k = 2) model uncertainty, percent (default 20)"),
            "loads": arr(r("LoadDoc"), "Circuit loads at the time; unlisted circuits at their present current_a"),
            "points": arr(r("MeasurementDoc"), "Measurements (or points_csv)"),
            "points_csv": text("Measurements as CSV: header id,x_m,y_m,z_m,resultant_ut and optionally bx_ut,by_ut,bz_ut; metres and µT RMS"),
            "tables": arr(json!({"type": "string"}), "Tables for the extrapolated values"),
        })
    )
);
domain_schema!(
    sv::MeterDoc,
    "MeterDoc",
    obj(
        "The meter",
        &["expanded_uncertainty_percent"],
        json!({ "model": text("Meter model"), "expanded_uncertainty_percent": num("Stated expanded (k = 2) uncertainty, percent of reading") })
    )
);
domain_schema!(
    sv::LoadDoc,
    "LoadDoc",
    obj(
        "A circuit's load at measurement time",
        &["circuit"],
        json!({ "circuit": text("Circuit id"), "current_a": num("Nominal RMS phase current, A"), "phases_a": r("PhaseCurrentsDoc") })
    )
);
domain_schema!(
    sv::PhaseCurrentsDoc,
    "PhaseCurrentsDoc",
    obj(
        "Measured RMS phase currents, A",
        &["A"],
        json!({ "A": num("Phase A, A"), "B": num("Phase B, A"), "C": num("Phase C, A") })
    )
);
domain_schema!(
    sv::MeasurementDoc,
    "MeasurementDoc",
    obj(
        "A spot measurement",
        &["id", "at", "resultant_ut"],
        json!({
            "id": text("Measurement id"),
            "at": json!({ "type": "array", "items": { "type": "number" }, "minItems": 2, "maxItems": 3, "description": "[x, y] (with height_m) or [x, y, z], m" }),
            "height_m": num("Height above a standing point, m (default 1.0)"),
            "resultant_ut": num("Measured resultant RMS flux density, µT"),
            "axes_ut": xyz("Measured RMS per axis, µT"),
        })
    )
);
domain_schema!(
    survey::SurveyAnalysis,
    "SurveyAnalysis",
    json!({
        "type": "object",
        "description": "reconciliation (per point measured_ut, model_ut, ratio, difference_ut, allowed_difference_ut, flagged; summary), load_fit (per circuit stated_a, scale, fitted_a, scale_std_error, status: fitted | at_bound | unidentifiable | ill_conditioned), extrapolation (per point factor, extrapolated_ut, comparisons; assumptions), notes, cautions",
        "required": ["measured_at", "reconciliation", "load_fit", "notes", "cautions"],
        "properties": {
            "measured_at": text("When measured"),
            "reconciliation": { "type": "object" },
            "load_fit": { "type": "object" },
            "extrapolation": { "type": ["object", "null"] },
            "notes": arr(json!({"type": "string"}), "Notes"),
            "cautions": arr(json!({"type": "string"}), "Cautions that apply to every result"),
        }
    })
);
