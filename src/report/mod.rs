//! Renderers: pure functions from results to text. No I/O here; the CLI and
//! the HTTP layer write what these return.

pub mod text;
