//! Logging: human-readable lines by default, JSON by flag; level from
//! `RUST_LOG` (default `info`). Logs go to standard error.

use crate::config::LogFormat;
use tracing_subscriber::EnvFilter;

/// Installs the global subscriber once; later calls are ignored (tests).
pub fn init(format: LogFormat) {
    let filter = EnvFilter::try_from_default_env().unwrap_or_else(|_| EnvFilter::new("info,sqlx=warn,tower_http=warn"));
    use std::io::IsTerminal;
    let ansi = std::io::stderr().is_terminal();
    let builder = tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr)
        .with_target(false)
        .with_ansi(ansi);
    let _ = match format {
        LogFormat::Human => builder.try_init(),
        LogFormat::Json => builder.json().flatten_event(true).try_init(),
    };
}
