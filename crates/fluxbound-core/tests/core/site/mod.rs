//! The site model: validation rules with their RFC 6901 pointers, and the
//! phase-current conventions of `crates/fluxbound-core/src/site/currents.rs`.

mod bars;
mod currents;
mod exchange;
mod formations;
mod overhead;
mod plain;
mod validation;
mod warnings;
