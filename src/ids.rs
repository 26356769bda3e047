//! Checked identifiers and timestamps of stored resources.
//!
//! Every stored resource is named by a time-ordered UUID v7 in simple hex
//! (32 lowercase hex digits), so id order is creation order and serves as the
//! pagination cursor. A newtype per resource keeps a site id from being
//! passed where an assessment id is expected; `parse` is the only way in from
//! outside, and a string that is not an id of the right shape is simply not
//! found (`404`), as an id of another organisation is.
//!
//! Timestamps are [`time::OffsetDateTime`] in UTC inside the program and are
//! formatted once, at the edge (storage and JSON), as fixed-width RFC 3339
//! with microseconds, so that text order is time order.

use serde::{Deserialize, Deserializer, Serialize, Serializer};
use std::fmt;
use time::OffsetDateTime;
use time::format_description::FormatItem;
use time::macros::format_description;

/// The JSON Schema pattern of every resource id (documented on path
/// parameters and id fields).
pub const ID_PATTERN: &str = "^[0-9a-f]{32}$";

/// Length of an id in characters (a UUID's 128 bits in hex).
const ID_LEN: usize = 32;

/// Whether `s` has the shape of an id (any resource): also what a page cursor is.
pub fn looks_like_id(s: &str) -> bool {
    s.len() == ID_LEN && s.bytes().all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

/// Stores a type as TEXT through sqlx's `Any` driver: encoded as its text
/// form, decoded by parsing (a stored value that does not parse is an
/// error, reported by the store as unreadable data, never silently used).
macro_rules! stored_as_text {
    ($name:ty, $parse:expr, $text:expr) => {
        impl sqlx::Type<sqlx::Any> for $name {
            fn type_info() -> sqlx::any::AnyTypeInfo {
                <String as sqlx::Type<sqlx::Any>>::type_info()
            }
            fn compatible(ty: &sqlx::any::AnyTypeInfo) -> bool {
                <String as sqlx::Type<sqlx::Any>>::compatible(ty)
            }
        }
        impl<'r> sqlx::Decode<'r, sqlx::Any> for $name {
            fn decode(value: sqlx::any::AnyValueRef<'r>) -> Result<Self, sqlx::error::BoxDynError> {
                let text = <String as sqlx::Decode<'r, sqlx::Any>>::decode(value)?;
                let shown = text.clone();
                ($parse)(text).ok_or_else(|| format!("'{shown}' is not a stored {}", stringify!($name)).into())
            }
        }
        impl<'q> sqlx::Encode<'q, sqlx::Any> for $name {
            fn encode_by_ref(
                &self,
                buf: &mut <sqlx::Any as sqlx::Database>::ArgumentBuffer,
            ) -> Result<sqlx::encode::IsNull, sqlx::error::BoxDynError> {
                <String as sqlx::Encode<'q, sqlx::Any>>::encode(($text)(self), buf)
            }
        }
    };
}

/// What every resource id can do: be parsed from outside text.
pub trait ResourceId: Sized {
    /// The id in `s`, if `s` has the shape of one.
    fn parse(s: &str) -> Option<Self>;
}

macro_rules! resource_id {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, utoipa::ToSchema)]
        #[serde(transparent)]
        #[schema(value_type = String, pattern = "^[0-9a-f]{32}$", example = "01938a6c2b7e7c41a9d3f4e5b6c7d8e9")]
        pub struct $name(String);

        impl $name {
            /// A new time-ordered id.
            pub fn generate() -> Self {
                Self(uuid::Uuid::now_v7().simple().to_string())
            }
            /// The id in `s`, if `s` has the shape of one.
            pub fn parse(s: &str) -> Option<Self> {
                looks_like_id(s).then(|| Self(s.to_string()))
            }
            pub fn as_str(&self) -> &str {
                &self.0
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(&self.0)
            }
        }

        stored_as_text!($name, |s: String| Self::parse(&s), |v: &$name| v.0.clone());

        impl ResourceId for $name {
            fn parse(s: &str) -> Option<Self> {
                Self::parse(s)
            }
        }

        impl<'de> Deserialize<'de> for $name {
            fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                let s = String::deserialize(d)?;
                Self::parse(&s).ok_or_else(|| serde::de::Error::custom("not an id: 32 lowercase hex digits"))
            }
        }
    };
}

resource_id!(
    /// An organisation: the boundary of every query.
    OrgId
);
resource_id!(
    /// A site (its revisions are numbered within it).
    SiteId
);
resource_id!(
    /// A stored assessment.
    AssessmentId
);
resource_id!(
    /// A stored survey.
    SurveyId
);
resource_id!(
    /// A stored what-if result.
    WhatIfId
);
resource_id!(
    /// An API key (its id, never its secret).
    KeyId
);
resource_id!(
    /// A stored custom table, as the database knows it (the table's own id,
    /// chosen by its author, is its `key`).
    TableRecordId
);

/// The one storage and wire format of a timestamp: RFC 3339, UTC, six
/// fractional digits, fixed width.
const FORMAT: &[FormatItem<'static>] =
    format_description!("[year]-[month]-[day]T[hour]:[minute]:[second].[subsecond digits:6]Z");

/// A point in time, UTC.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, utoipa::ToSchema)]
#[schema(value_type = String, format = DateTime, example = "2026-12-02T14:43:36.123456Z")]
pub struct Timestamp(OffsetDateTime);

impl Timestamp {
    pub fn now() -> Self {
        Self(OffsetDateTime::now_utc())
    }
    /// Parses the stored form (any RFC 3339 is accepted and taken to UTC).
    pub fn parse(s: &str) -> Option<Self> {
        OffsetDateTime::parse(s, &time::format_description::well_known::Rfc3339)
            .ok()
            .map(|t| Self(t.to_offset(time::UtcOffset::UTC)))
    }
    /// The fixed-width form written to storage and JSON.
    pub fn format(&self) -> String {
        // Formatting a UTC date with four-digit years cannot fail; an empty
        // string would only come from a year beyond 9999.
        self.0.format(FORMAT).unwrap_or_default()
    }
    pub fn as_offset_date_time(&self) -> OffsetDateTime {
        self.0
    }
}

stored_as_text!(Timestamp, |s: String| Timestamp::parse(&s), |t: &Timestamp| t.format());

impl fmt::Display for Timestamp {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.format())
    }
}

impl Serialize for Timestamp {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.format())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_id_has_thirty_two_lowercase_hex_digits_and_nothing_else_parses() {
        let id = SiteId::generate();
        assert_eq!(SiteId::parse(id.as_str()), Some(id.clone()));
        for bad in [
            "",
            "x",
            &id.as_str().to_uppercase(),
            &format!("{id}0"),
            "../etc/passwd",
            "0123456789abcdef0123456789abcdeg",
        ] {
            assert_eq!(SiteId::parse(bad), None, "{bad:?}");
        }
    }

    #[test]
    fn ids_generated_later_sort_later() {
        let a = AssessmentId::generate();
        std::thread::sleep(std::time::Duration::from_millis(2));
        let b = AssessmentId::generate();
        assert!(a < b, "{a} < {b}");
    }

    #[test]
    fn a_timestamp_round_trips_through_its_fixed_width_text() {
        let t = Timestamp::parse("2026-12-02T14:43:36.123456Z").unwrap();
        assert_eq!(t.format(), "2026-12-02T14:43:36.123456Z");
        let shifted = Timestamp::parse("2026-12-02T15:43:36.123456+01:00").unwrap();
        assert_eq!(shifted, t);
        assert_eq!(Timestamp::now().format().len(), "2026-12-02T14:43:36.123456Z".len());
    }
}
