//! A deserializer adapter that accepts structs only as JSON objects, and
//! that watches every text on the way.
//!
//! serde's derived visitors also accept a struct written as an array of its
//! field values (`[50, [], [...]]`), which would bypass the strict key check
//! that makes a misspelt key an error. Wrapping the deserializer routes every
//! struct through `deserialize_map`, so an array there is a type error with a
//! pointer like any other. The wrapping is carried down through maps,
//! sequences, options and object keys, so it holds at every depth.
//!
//! On the way it raises a [`Watch`] flag when a key or a text holds any
//! control character (even a line break, allowed in a few texts), or a key
//! repeats within an object that is not read as a struct (a struct's own
//! visitor refuses a repeated field; a map would keep the last value). The
//! parser reads a document once with this adapter and, only if the flag is
//! raised or the read fails, walks it again to find and describe each
//! problem with its pointer ([`super::parse`]). Values skipped without
//! being read (`deserialize_ignored_any`) are walked too, so no text
//! escapes the watch.

use crate::text::has_control;
use serde::de::IgnoredAny;
use serde::de::{self, DeserializeSeed, Deserializer, MapAccess, SeqAccess, Visitor};
use std::cell::Cell;
use std::collections::HashSet;
use std::fmt;

/// Raised when the document may hold a problem the typed read does not
/// report: a control character in a key or text, or a repeated map key.
#[derive(Default)]
pub(crate) struct Watch {
    raised: Cell<bool>,
}

impl Watch {
    pub fn raised(&self) -> bool {
        self.raised.get()
    }
    fn text(&self, text: &str) {
        if has_control(text) {
            self.raised.set(true);
        }
    }
}

/// The keys seen so far in one object that is not read as a struct.
type Seen = Option<HashSet<String>>;

pub(crate) struct Strict<'w, D>(pub D, pub &'w Watch);
/// `dedup`: the visited object is not a struct, so repeated keys are
/// watched here.
struct StrictVisitor<'w, V> {
    v: V,
    watch: &'w Watch,
    dedup: bool,
}
struct StrictMap<'w, M> {
    m: M,
    watch: &'w Watch,
    seen: Seen,
}
struct StrictSeq<'w, S>(S, &'w Watch);
struct StrictSeed<'w, T>(T, &'w Watch);
/// A key's seed and deserializer: they watch the key's text and, if `seen`
/// is kept, whether it repeats.
struct KeySeed<'w, 's, T> {
    seed: T,
    watch: &'w Watch,
    seen: &'s mut Seen,
}

fn visitor<V>(v: V, watch: &Watch) -> StrictVisitor<'_, V> {
    StrictVisitor { v, watch, dedup: true }
}

macro_rules! forward {
    ($($method:ident),* $(,)?) => {$(
        fn $method<V: Visitor<'de>>(self, v: V) -> Result<V::Value, D::Error> {
            self.0.$method(visitor(v, self.1))
        }
    )*};
}

impl<'de, D: Deserializer<'de>> Deserializer<'de> for Strict<'_, D> {
    type Error = D::Error;
    forward!(
        deserialize_any,
        deserialize_bool,
        deserialize_i8,
        deserialize_i16,
        deserialize_i32,
        deserialize_i64,
        deserialize_i128,
        deserialize_u8,
        deserialize_u16,
        deserialize_u32,
        deserialize_u64,
        deserialize_u128,
        deserialize_f32,
        deserialize_f64,
        deserialize_char,
        deserialize_str,
        deserialize_string,
        deserialize_bytes,
        deserialize_byte_buf,
        deserialize_option,
        deserialize_unit,
        deserialize_seq,
        deserialize_map,
        deserialize_identifier,
    );
    /// A skipped value is walked, so its texts are watched too.
    fn deserialize_ignored_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, D::Error> {
        self.0.deserialize_any(visitor(IgnoredAny, self.1))?;
        v.visit_unit()
    }
    fn deserialize_unit_struct<V: Visitor<'de>>(self, name: &'static str, v: V) -> Result<V::Value, D::Error> {
        self.0.deserialize_unit_struct(name, visitor(v, self.1))
    }
    fn deserialize_newtype_struct<V: Visitor<'de>>(self, name: &'static str, v: V) -> Result<V::Value, D::Error> {
        self.0.deserialize_newtype_struct(name, visitor(v, self.1))
    }
    fn deserialize_tuple<V: Visitor<'de>>(self, len: usize, v: V) -> Result<V::Value, D::Error> {
        self.0.deserialize_tuple(len, visitor(v, self.1))
    }
    fn deserialize_tuple_struct<V: Visitor<'de>>(
        self,
        name: &'static str,
        len: usize,
        v: V,
    ) -> Result<V::Value, D::Error> {
        self.0.deserialize_tuple_struct(name, len, visitor(v, self.1))
    }
    /// The point of the adapter: a struct must be a map (JSON object). Its
    /// own visitor refuses a repeated field, so keys are not kept here.
    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        _fields: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, D::Error> {
        self.0.deserialize_map(StrictVisitor { v, watch: self.1, dedup: false })
    }
    fn deserialize_enum<V: Visitor<'de>>(
        self,
        name: &'static str,
        variants: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, D::Error> {
        self.0.deserialize_enum(name, variants, v)
    }
    fn is_human_readable(&self) -> bool {
        self.0.is_human_readable()
    }
}

macro_rules! forward_visit {
    ($($method:ident: $ty:ty),* $(,)?) => {$(
        fn $method<E: de::Error>(self, v: $ty) -> Result<Self::Value, E> {
            self.v.$method(v)
        }
    )*};
}

impl<'de, V: Visitor<'de>> Visitor<'de> for StrictVisitor<'_, V> {
    type Value = V::Value;
    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.v.expecting(f)
    }
    forward_visit!(
        visit_bool: bool, visit_i8: i8, visit_i16: i16, visit_i32: i32, visit_i64: i64, visit_i128: i128,
        visit_u8: u8, visit_u16: u16, visit_u32: u32, visit_u64: u64, visit_u128: u128, visit_f32: f32,
        visit_f64: f64, visit_bytes: &[u8], visit_borrowed_bytes: &'de [u8], visit_byte_buf: Vec<u8>,
    );
    fn visit_char<E: de::Error>(self, v: char) -> Result<Self::Value, E> {
        if v.is_control() {
            self.watch.raised.set(true);
        }
        self.v.visit_char(v)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Self::Value, E> {
        self.watch.text(v);
        self.v.visit_str(v)
    }
    fn visit_borrowed_str<E: de::Error>(self, v: &'de str) -> Result<Self::Value, E> {
        self.watch.text(v);
        self.v.visit_borrowed_str(v)
    }
    fn visit_string<E: de::Error>(self, v: String) -> Result<Self::Value, E> {
        self.watch.text(&v);
        self.v.visit_string(v)
    }
    fn visit_none<E: de::Error>(self) -> Result<Self::Value, E> {
        self.v.visit_none()
    }
    fn visit_unit<E: de::Error>(self) -> Result<Self::Value, E> {
        self.v.visit_unit()
    }
    fn visit_some<D: Deserializer<'de>>(self, d: D) -> Result<Self::Value, D::Error> {
        self.v.visit_some(Strict(d, self.watch))
    }
    fn visit_newtype_struct<D: Deserializer<'de>>(self, d: D) -> Result<Self::Value, D::Error> {
        self.v.visit_newtype_struct(Strict(d, self.watch))
    }
    fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<Self::Value, A::Error> {
        self.v.visit_seq(StrictSeq(seq, self.watch))
    }
    fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<Self::Value, A::Error> {
        let seen = self.dedup.then(HashSet::new);
        self.v.visit_map(StrictMap { m, watch: self.watch, seen })
    }
    fn visit_enum<A: de::EnumAccess<'de>>(self, data: A) -> Result<Self::Value, A::Error> {
        self.v.visit_enum(data)
    }
}

impl<'de, M: MapAccess<'de>> MapAccess<'de> for StrictMap<'_, M> {
    type Error = M::Error;
    fn next_key_seed<K: DeserializeSeed<'de>>(&mut self, seed: K) -> Result<Option<K::Value>, M::Error> {
        self.m.next_key_seed(KeySeed { seed, watch: self.watch, seen: &mut self.seen })
    }
    fn next_value_seed<T: DeserializeSeed<'de>>(&mut self, seed: T) -> Result<T::Value, M::Error> {
        self.m.next_value_seed(StrictSeed(seed, self.watch))
    }
    fn size_hint(&self) -> Option<usize> {
        self.m.size_hint()
    }
}

impl<'de, S: SeqAccess<'de>> SeqAccess<'de> for StrictSeq<'_, S> {
    type Error = S::Error;
    fn next_element_seed<T: DeserializeSeed<'de>>(&mut self, seed: T) -> Result<Option<T::Value>, S::Error> {
        self.0.next_element_seed(StrictSeed(seed, self.1))
    }
    fn size_hint(&self) -> Option<usize> {
        self.0.size_hint()
    }
}

impl<'de, T: DeserializeSeed<'de>> DeserializeSeed<'de> for StrictSeed<'_, T> {
    type Value = T::Value;
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<T::Value, D::Error> {
        self.0.deserialize(Strict(d, self.1))
    }
}

impl<'de, T: DeserializeSeed<'de>> DeserializeSeed<'de> for KeySeed<'_, '_, T> {
    type Value = T::Value;
    /// A JSON key is always text: it is read as text, watched, and handed
    /// to the seed through a plain text deserializer (borrowed where the
    /// JSON has no escapes, so a key costs no allocation). So every map of
    /// a document type must be keyed by text (`BTreeMap<String, _>`): a key
    /// type that serde_json would parse from the text, such as `u32`, would
    /// be refused here.
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<T::Value, D::Error> {
        d.deserialize_str(self)
    }
}

impl<'de, T: DeserializeSeed<'de>> KeySeed<'_, '_, T> {
    fn watch(&mut self, key: &str) {
        self.watch.text(key);
        if let Some(seen) = self.seen.as_mut()
            && !seen.insert(key.to_string())
        {
            self.watch.raised.set(true);
        }
    }
}

impl<'de, T: DeserializeSeed<'de>> Visitor<'de> for KeySeed<'_, '_, T> {
    type Value = T::Value;
    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("an object key")
    }
    fn visit_borrowed_str<E: de::Error>(mut self, v: &'de str) -> Result<T::Value, E> {
        self.watch(v);
        self.seed.deserialize(de::value::BorrowedStrDeserializer::new(v))
    }
    fn visit_str<E: de::Error>(mut self, v: &str) -> Result<T::Value, E> {
        self.watch(v);
        self.seed.deserialize(de::value::StrDeserializer::new(v))
    }
    fn visit_string<E: de::Error>(mut self, v: String) -> Result<T::Value, E> {
        self.watch(&v);
        self.seed.deserialize(de::value::StringDeserializer::new(v))
    }
}
