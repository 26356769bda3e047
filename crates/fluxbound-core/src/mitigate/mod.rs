//! What-if answers: how far away the field falls below a level or a
//! table's exposure ratio below 1, proven by bounds; which phase
//! arrangement of chosen circuits gives the lowest exposure; load
//! scenarios (named cases and N-1); moves of conductors or positions;
//! passive loops (mutual and self-inductance, the induced current, the
//! field with it); and two assessments side by side. The what-ifs are
//! judged at chosen positions and area grid nodes from one influence
//! matrix ([`judge`]).

pub mod compare;
mod distance;
mod judge;
pub mod loops;
pub mod moves;
mod passive;
pub mod phases;
mod ray;
pub mod scenarios;
mod text;

pub use judge::{LeftOut, Measure, WhatIfBudget, WhatIfError, Worst};

pub use distance::{
    AXIS_EXCLUSION_DEG, DISTANCE_TOLERANCE_M, Direction, DistanceError, DistanceQuantity, DistanceResult,
    DistanceTable, MAX_RANGE_M, Meter, Origin, SHORTEST_STEP_DEG, Target, distance, distance_with, parse_direction,
};
pub use passive::{
    LoopCoupling, LoopResistance, MAX_RADIUS_PER_SEGMENT, MU0_H_PER_M, PassiveLoop, PassiveLoopError, loop_coupling,
    loop_currents, mutual_inductance_h, self_inductance_h, with_loop,
};
pub use ray::RESOLUTION_M;
pub use text::distance_text;
