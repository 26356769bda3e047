//! Schemas of the coordinate arrays, which the derive cannot bound (a
//! fixed-size array's length, the range of an array's items). Built from the
//! validator's own constants, so the contract and the checks cannot
//! disagree. Only with the `schema` feature.

use super::super::validate::{COORDINATE_LIMIT_M, HEIGHT_RANGE_M, MAX_HEIGHTS, MAX_POLYGON_VERTICES, MAX_VERTICES};
use utoipa::openapi::schema::{Array, ArrayBuilder, ObjectBuilder, SchemaType, Type};

/// A coordinate of the local frame, m: finite and within the site's bound.
fn coordinate_m() -> ObjectBuilder {
    ObjectBuilder::new().schema_type(Type::Number).minimum(Some(-COORDINATE_LIMIT_M)).maximum(Some(COORDINATE_LIMIT_M))
}

/// A point of `min..=max` coordinates, m.
fn point_m(min: usize, max: usize, description: &str) -> ArrayBuilder {
    ArrayBuilder::new().items(coordinate_m()).min_items(Some(min)).max_items(Some(max)).description(Some(description))
}

fn nullable(a: ArrayBuilder) -> ArrayBuilder {
    a.schema_type(SchemaType::from_iter([Type::Array, Type::Null]))
}

/// A conductor's vertices `[[x, y, z], …]`, m.
pub(crate) fn path_m() -> Array {
    ArrayBuilder::new()
        .items(point_m(3, 3, "A vertex `[x, y, z]`, m."))
        .min_items(Some(2))
        .max_items(Some(MAX_VERTICES))
        .description(Some("Vertices `[x, y, z]` in metres, at least 2; current flows from first to last."))
        .build()
}

/// A simple polygon `[[x, y], …]`, m.
pub(crate) fn polygon_m() -> Array {
    ArrayBuilder::new()
        .items(point_m(2, 2, "A vertex `[x, y]`, m."))
        .min_items(Some(3))
        .max_items(Some(MAX_POLYGON_VERTICES))
        .description(Some("Simple polygon `[[x, y], …]`, m (3–1000 vertices)."))
        .build()
}

/// A standing point `[x, y]` or a 3-D point `[x, y, z]`, m.
pub(crate) fn standing_or_point_m() -> Array {
    point_m(2, 3, "A standing point `[x, y]` or a 3-D point `[x, y, z]`, m.").build()
}

/// Evaluation points `[[x, y, z], …]`, m.
pub(crate) fn points_m() -> Array {
    ArrayBuilder::new()
        .items(point_m(3, 3, "A point `[x, y, z]`, m."))
        .description(Some("Points `[x, y, z]`, m (the service bounds how many)."))
        .build()
}

/// Body heights above a standing point, m (or `null` for the defaults).
pub(crate) fn heights_m() -> Array {
    let (lo, hi) = HEIGHT_RANGE_M;
    nullable(
        ArrayBuilder::new()
            .items(ObjectBuilder::new().schema_type(Type::Number).minimum(Some(lo)).maximum(Some(hi)))
            .min_items(Some(1))
            .max_items(Some(MAX_HEIGHTS))
            .description(Some(
                "Body heights above a standing point, m (0–10; default 0.5, 1.0, 1.5); not with a 3-D point.",
            )),
    )
    .build()
}

/// Measured RMS per axis, µT (or `null`).
pub(crate) fn axes_ut() -> Array {
    nullable(
        ArrayBuilder::new()
            .items(ObjectBuilder::new().schema_type(Type::Number).minimum(Some(0.0)))
            .min_items(Some(3))
            .max_items(Some(3))
            .description(Some("Measured RMS per axis (x, y, z), µT, if the meter gives them.")),
    )
    .build()
}

/// Table ids: each non-empty, none twice.
pub(crate) fn table_ids() -> Array {
    ArrayBuilder::new()
        .items(ObjectBuilder::new().schema_type(Type::String).min_length(Some(1)))
        .unique_items(true)
        .description(Some("Reference-level table ids, none twice."))
        .build()
}
