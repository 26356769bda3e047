//! What-if answers: how far away the field falls below a level.

mod distance;

pub use distance::{
    DISTANCE_TOLERANCE_M, Direction, DistanceResult, MAX_RANGE_M, Origin, distance_to_level, parse_direction,
};
