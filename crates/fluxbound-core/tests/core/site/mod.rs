//! The site model: validation rules with their RFC 6901 pointers, and the
//! phase-current conventions of `src/domain/site/currents.rs`.

mod currents;
mod validation;
mod warnings;
