//! The review fraction: the share of a level from which a result is
//! reported as `approaching`.

use serde::{Deserialize, Serialize};
use std::fmt;

/// A ratio in the open interval (0, 1): results at or above this share of a
/// level are `approaching` (DESIGN.md). Only [`ReviewFraction::new`] builds
/// one, so every holder is valid; on the wire it is a plain JSON number.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(try_from = "f64", into = "f64")]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[cfg_attr(feature = "schema", schema(value_type = f64, exclusive_minimum = 0, exclusive_maximum = 1))]
pub struct ReviewFraction(f64);

/// Why a number is not a review fraction (the message a caller sees).
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error("review fraction must be greater than 0 and less than 1")]
pub struct ReviewFractionError;

impl ReviewFraction {
    /// The default: half the level (DESIGN.md), written once here.
    pub const DEFAULT: ReviewFraction = ReviewFraction(0.5);

    /// Checks `0 < fraction < 1` (NaN and infinities are rejected).
    pub fn new(fraction: f64) -> Result<ReviewFraction, ReviewFractionError> {
        if fraction.is_finite() && fraction > 0.0 && fraction < 1.0 {
            Ok(ReviewFraction(fraction))
        } else {
            Err(ReviewFractionError)
        }
    }

    /// The fraction as a plain number.
    pub fn get(self) -> f64 {
        self.0
    }
}

impl Default for ReviewFraction {
    fn default() -> Self {
        ReviewFraction::DEFAULT
    }
}

impl TryFrom<f64> for ReviewFraction {
    type Error = ReviewFractionError;
    fn try_from(value: f64) -> Result<Self, Self::Error> {
        ReviewFraction::new(value)
    }
}

impl From<ReviewFraction> for f64 {
    fn from(value: ReviewFraction) -> f64 {
        value.0
    }
}

impl std::str::FromStr for ReviewFraction {
    type Err = ReviewFractionError;
    /// Parses a decimal number, as given in a query string or on a command line.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        s.trim().parse::<f64>().map_err(|_| ReviewFractionError).and_then(ReviewFraction::new)
    }
}

impl fmt::Display for ReviewFraction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.0.fmt(f)
    }
}
