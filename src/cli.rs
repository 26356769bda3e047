//! Command line: parse arguments, read files, call the core's use cases
//! (`fluxbound_core::usecase`, the same ones the HTTP service calls), print,
//! exit. Works offline on files; only `serve` and `keys` open a database.
//!
//! Exit codes: 0 success; 1 the input has problems (each printed where the
//! user gave it: a JSON pointer into a file, or the flag, as in
//! `--tables: unknown table 'nope'`), or `health` found the server
//! unhealthy or unreachable; 2 usage or I/O error. Nothing here panics on user input, and
//! a panic anywhere prints one line instead of a backtrace.

use crate::config::{ClientPolicy, ConnectionLimits, parse_trusted_proxy};
use clap::{Parser, Subcommand, ValueEnum};
use fluxbound_core::assess::{AssessError, LoadCase, LoadError, ReviewFraction};
use fluxbound_core::evaluate::{self, EvaluateRequest};
use fluxbound_core::limits::{self, ReferenceTable, TableSource, UnknownTable};
use fluxbound_core::mitigate;
use fluxbound_core::report::text;
use fluxbound_core::site::{self, Problems, Site};
use fluxbound_core::survey::wire::SurveyDoc;
use fluxbound_core::usecase::{self, Budget, UseCaseError};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Debug, Parser)]
#[command(
    name = "fluxbound",
    version,
    about = "Pre-screen exposure to power-frequency magnetic fields (phasor Biot–Savart).",
    long_about = "Pre-screen exposure to power-frequency magnetic fields (phasor Biot–Savart).\n\n\
        Results are a computed pre-screen. Compliance is decided under local codes by licensed \
        or otherwise qualified assessors."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Compute the RMS flux density of conductors at points (JSON in, JSON out).
    Evaluate {
        /// Input document, or `-` for standard input.
        #[arg(long, short = 'i', value_name = "FILE")]
        input: PathBuf,
        /// Print the result on one line instead of indented.
        #[arg(long)]
        compact: bool,
        /// Answer with these columns (comma-separated), one array per column
        /// in point order, instead of one object per point: x_m, y_m, z_m,
        /// resultant_ut, maximum_ut, resultant_ut@N, maximum_ut@N (N a harmonic order),
        /// inside_conductors. Overrides the document's `output`.
        #[arg(long, value_name = "NAMES", value_delimiter = ',')]
        columns: Option<Vec<String>>,
    },
    /// Validate a site model and list every problem with its JSON pointer.
    Check {
        /// Site model (JSON), or `-` for standard input.
        #[arg(value_name = "FILE")]
        file: PathBuf,
    },
    /// Assess a site's positions and areas against reference-level tables.
    Assess(AssessArgs),
    /// List the built-in reference-level tables, or show one.
    Tables {
        #[command(subcommand)]
        action: Option<TablesAction>,
    },
    /// First crossing and clearance from a position, conductor or point to a µT level or a table's ratio 1.
    Distance(DistanceArgs),
    /// What to change: phase arrangements, load scenarios, moves and passive loops.
    Whatif {
        #[command(subcommand)]
        action: WhatifAction,
    },
    /// Spot-measurement surveys.
    Survey {
        #[command(subcommand)]
        action: SurveyAction,
    },
    /// Run the HTTP API (SQLite in the data directory, or DATABASE_URL).
    Serve(ServeArgs),
    /// Manage API keys in the database `serve` uses.
    Keys {
        #[command(subcommand)]
        action: KeysAction,
    },
    /// Check a running server: GET /healthz; exit 0 on 200, 1 otherwise (for container health checks).
    Health(HealthArgs),
    /// Read routes from a GeoJSON, DXF or CSV file into a site document (printed); what
    /// is left out is listed on standard error.
    Import(ImportArgs),
    /// Write a site's conductors, positions and areas as GeoJSON or DXF.
    Export(ExportArgs),
}

#[derive(Debug, clap::Args)]
pub struct ImportArgs {
    /// The file to import (GeoJSON, DXF or CSV of route vertices), or `-` for standard input (then give --format).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    /// Mapping document (JSON): layers to circuits and phases, circuits, units, origin, rotation, defaults.
    #[arg(long, value_name = "MAP.json")]
    pub mapping: Option<PathBuf>,
    /// File format (default: by the file's extension: .geojson/.json, .dxf, .csv).
    #[arg(long, value_enum)]
    pub format: Option<ImportFormat>,
    /// Write what was skipped and assumed as JSON to this file (plain lines go to standard error anyway).
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum ImportFormat {
    Geojson,
    Dxf,
    Csv,
}

#[derive(Debug, clap::Args)]
pub struct ExportArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// Output format.
    #[arg(long, value_enum)]
    pub format: ExportFormat,
    /// With --format dxf: also write the mapping that imports the drawing back to this file.
    #[arg(long, value_name = "FILE")]
    pub mapping_out: Option<PathBuf>,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum ExportFormat {
    Geojson,
    Dxf,
}

#[derive(Debug, clap::Args)]
pub struct HealthArgs {
    /// Base URL of the server (http only); default: the address in
    /// FLUXBOUND_LISTEN (an unspecified address probed on loopback), else
    /// http://127.0.0.1:8080.
    #[arg(long, value_name = "URL")]
    pub url: Option<String>,
    /// Seconds allowed to connect, and again for the answer.
    #[arg(long, value_name = "S", default_value_t = 5, value_parser = clap::value_parser!(u64).range(1..=3600))]
    pub timeout_s: u64,
}

#[derive(Debug, clap::Args)]
pub struct AssessArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// Table ids, comma-separated (default: the site's own choice, else
    /// icnirp-2010-occupational, eu-2013-35-low, eu-2013-35-limbs).
    #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
    pub tables: Vec<String>,
    /// A custom table (JSON) to load and apply; may be repeated.
    #[arg(long = "table-file", value_name = "FILE")]
    pub table_files: Vec<PathBuf>,
    /// A custom regime (JSON: ordered tiers of table ids with met/exceeded
    /// sentences) to read the results against, beside the built-in ones;
    /// may be repeated.
    #[arg(long = "regime-file", value_name = "FILE")]
    pub regime_files: Vec<PathBuf>,
    /// Currents to assess at.
    #[arg(long, value_enum, default_value_t = LoadArg::Present)]
    pub load: LoadArg,
    /// Ratio from which a result is reported as approaching a level
    /// (0 < fraction < 1; default 0.5).
    #[arg(long, value_name = "FRACTION")]
    pub review_fraction: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Draw the field map of this area (needs --out).
    #[arg(long, value_name = "AREA_ID", requires = "out")]
    pub map: Option<String>,
    /// Where to write the map (SVG).
    #[arg(long, value_name = "FILE", requires = "map")]
    pub out: Option<PathBuf>,
    /// Band the map by the exposure ratio to this table (one of the
    /// assessment's whole-body tables; default: the first that covers the
    /// map, else decades of µT).
    #[arg(long, value_name = "TABLE_ID", requires = "map")]
    pub map_table: Option<String>,
    /// Also write the position results as CSV to this file.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    /// Also write conductors, positions, contours and zones as GeoJSON to this file.
    #[arg(long, value_name = "FILE")]
    pub geojson: Option<PathBuf>,
}

#[derive(Debug, clap::Args)]
#[command(group(clap::ArgGroup::new("to").required(true).args(["level_ut", "table"])))]
pub struct DistanceArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// Level, µT RMS (resultant over all frequencies).
    #[arg(long = "level-ut", value_name = "MICROTESLA", allow_negative_numbers = true)]
    pub level_ut: Option<f64>,
    /// Table id: distance to where its exposure ratio Σ B_f / B_RL(f) falls below 1.
    #[arg(long, value_name = "ID")]
    pub table: Option<String>,
    /// A custom table (JSON) that --table may name; may be repeated.
    #[arg(long = "table-file", value_name = "FILE")]
    pub table_files: Vec<PathBuf>,
    /// `position:ID`, `conductor:ID` (middle of its longest segment) or `point:x,y,z` (m).
    #[arg(long, value_name = "ORIGIN")]
    pub from: String,
    /// `shortest` (the smallest clearance over horizontal directions in 5° steps and straight up) or `x,y,z`; default shortest.
    #[arg(long, value_name = "DIRECTION", allow_hyphen_values = true)]
    pub direction: Option<String>,
    /// Currents to search at.
    #[arg(long, value_enum, default_value_t = LoadArg::Present)]
    pub load: LoadArg,
    /// Output format (JSON by default, as before the plain-words table existed).
    #[arg(long, value_enum, default_value_t = Format::Json)]
    pub format: Format,
}

/// Where the database is: `DATABASE_URL=postgres://…` or SQLite in `--data-dir`.
#[derive(Debug, clap::Args)]
pub struct StorageArgs {
    /// Directory of the embedded SQLite database (ignored with DATABASE_URL).
    #[arg(long, env = "FLUXBOUND_DATA_DIR", default_value = "fluxbound-data", value_name = "DIR")]
    pub data_dir: PathBuf,
    /// PostgreSQL URL (postgres://…); unset means the embedded SQLite.
    #[arg(long, env = "DATABASE_URL", hide_env_values = true, value_name = "URL")]
    pub database_url: Option<String>,
}

#[derive(Debug, clap::Args)]
pub struct ServeArgs {
    /// Address to listen on; port 0 picks a free port.
    #[arg(long, env = "FLUXBOUND_LISTEN", default_value = "127.0.0.1:8080", value_name = "ADDR")]
    pub listen: String,
    #[command(flatten)]
    pub storage: StorageArgs,
    /// Seed a demo organisation with the example sites and print a key and a curl line.
    #[arg(long)]
    pub demo: bool,
    /// Log one JSON object per line instead of human-readable lines.
    #[arg(long)]
    pub log_json: bool,
    /// Largest request body, bytes.
    #[arg(long, env = "FLUXBOUND_MAX_BODY_BYTES", default_value_t = 4 * 1024 * 1024)]
    pub max_body_bytes: usize,
    /// Segment-point pairs allowed per synchronous request.
    #[arg(long, env = "FLUXBOUND_MAX_PAIRS", default_value_t = 1_000_000_000)]
    pub max_pairs: u64,
    /// Points allowed per /v1/evaluate request.
    #[arg(long, env = "FLUXBOUND_MAX_POINTS", default_value_t = 200_000)]
    pub max_points: usize,
    /// Requests per second per API key (0 = unlimited).
    #[arg(long, env = "FLUXBOUND_RATE_PER_KEY", default_value_t = 50)]
    pub rate_per_key: u32,
    /// Seconds before a request is answered 503.
    #[arg(long, env = "FLUXBOUND_REQUEST_TIMEOUT_S", default_value_t = 30)]
    pub request_timeout_s: u64,
    #[command(flatten)]
    pub connections: ConnectionArgs,
    #[command(flatten)]
    pub compute: ComputeArgs,
    #[command(flatten)]
    pub clients: ClientArgs,
}

/// Client connection limits (`config::ConnectionLimits`; defaults and
/// reasons there).
#[derive(Debug, clap::Args)]
pub struct ConnectionArgs {
    /// Seconds to receive a whole request head (from when the server waits for one).
    #[arg(
        long,
        env = "FLUXBOUND_HEADER_READ_TIMEOUT_S",
        value_name = "S",
        default_value_t = ConnectionLimits::DEFAULT_HEADER_READ_TIMEOUT.as_secs(),
        value_parser = clap::value_parser!(u64).range(1..)
    )]
    pub header_read_timeout_s: u64,
    /// Seconds a connection with no request in flight may receive nothing before it is closed.
    #[arg(
        long,
        env = "FLUXBOUND_IDLE_TIMEOUT_S",
        value_name = "S",
        default_value_t = ConnectionLimits::DEFAULT_IDLE_TIMEOUT.as_secs(),
        value_parser = clap::value_parser!(u64).range(1..)
    )]
    pub idle_timeout_s: u64,
    /// Seconds for a request body to arrive in full after its head (then 408).
    #[arg(
        long,
        env = "FLUXBOUND_BODY_READ_TIMEOUT_S",
        value_name = "S",
        default_value_t = ConnectionLimits::DEFAULT_BODY_READ_TIMEOUT.as_secs(),
        value_parser = clap::value_parser!(u64).range(1..)
    )]
    pub body_read_timeout_s: u64,
    /// Open client connections at most; at the cap the longest-idle one is closed to admit a new one.
    #[arg(
        long,
        env = "FLUXBOUND_MAX_CONNECTIONS",
        value_name = "N",
        default_value_t = ConnectionLimits::DEFAULT_MAX_CONNECTIONS as u64,
        value_parser = clap::value_parser!(u64).range(1..=1_000_000)
    )]
    pub max_connections: u64,
    /// Seconds a shutdown waits for requests in flight before dropping their connections.
    #[arg(
        long,
        env = "FLUXBOUND_DRAIN_TIMEOUT_S",
        value_name = "S",
        default_value_t = ConnectionLimits::DEFAULT_DRAIN_TIMEOUT.as_secs()
    )]
    pub drain_timeout_s: u64,
}

impl ConnectionArgs {
    fn limits(&self) -> ConnectionLimits {
        use std::time::Duration;
        ConnectionLimits {
            header_read_timeout: Duration::from_secs(self.header_read_timeout_s),
            idle_timeout: Duration::from_secs(self.idle_timeout_s),
            body_read_timeout: Duration::from_secs(self.body_read_timeout_s),
            max_connections: usize::try_from(self.max_connections).unwrap_or(usize::MAX),
            drain_timeout: Duration::from_secs(self.drain_timeout_s),
        }
    }
}

/// How many field computations run at once, and how long one waits for a
/// slot before its request is answered 503 `busy`.
#[derive(Debug, clap::Args)]
pub struct ComputeArgs {
    /// Field computations running at once [default: the number of cores].
    #[arg(long, env = "FLUXBOUND_MAX_COMPUTATIONS", value_name = "N",
          value_parser = clap::value_parser!(u16).range(1..))]
    pub max_computations: Option<u16>,
    /// Milliseconds a computation waits for a free slot before its request is answered 503 with Retry-After.
    #[arg(long, env = "FLUXBOUND_COMPUTE_QUEUE_MS", default_value_t = crate::service::DEFAULT_COMPUTE_QUEUE_MS, value_name = "MS")]
    pub compute_queue_ms: u64,
}

impl ComputeArgs {
    fn apply(&self, limits: &mut crate::service::Limits) {
        if let Some(n) = self.max_computations {
            limits.max_computations = usize::from(n);
        }
        limits.compute_queue_ms = self.compute_queue_ms;
    }
}

/// How clients are told apart, and their failed authentications.
#[derive(Debug, clap::Args)]
pub struct ClientArgs {
    /// Failed authentications allowed per client address within the window;
    /// past them the address is answered 429 (0 = no limit).
    #[arg(long, env = "FLUXBOUND_AUTH_FAILURES", default_value_t = ClientPolicy::DEFAULT_AUTH_FAILURES)]
    pub auth_failures: u32,
    /// The window of --auth-failures, seconds.
    #[arg(long, env = "FLUXBOUND_AUTH_FAILURE_WINDOW_S", default_value_t = ClientPolicy::DEFAULT_AUTH_FAILURE_WINDOW_S,
          value_parser = clap::value_parser!(u64).range(1..))]
    pub auth_failure_window_s: u64,
    /// A proxy (address or CIDR network) whose X-Forwarded-For names the
    /// client; may be repeated (comma-separated in the variable). Without
    /// one, the TCP peer is the client and X-Forwarded-For is ignored.
    #[arg(long = "trusted-proxy", env = "FLUXBOUND_TRUSTED_PROXIES", value_delimiter = ',',
          value_parser = parse_trusted_proxy, value_name = "ADDR|CIDR")]
    pub trusted_proxies: Vec<ipnet::IpNet>,
    /// Seconds a key found valid is trusted without reading its row again; a key revoked through another replica or the CLI stops working within this time, one revoked through this server at once (0 = read the row on every request).
    #[arg(long, env = "FLUXBOUND_KEY_CACHE_S", default_value_t = crate::service::DEFAULT_KEY_CACHE_S, value_name = "S",
          value_parser = clap::value_parser!(u64).range(0..=300))]
    pub key_cache_s: u64,
}

impl ClientArgs {
    fn into_policy(self) -> ClientPolicy {
        ClientPolicy {
            auth_failures: self.auth_failures,
            auth_failure_window_s: self.auth_failure_window_s,
            trusted_proxies: self.trusted_proxies,
        }
    }
}

#[derive(Debug, Subcommand)]
pub enum WhatifAction {
    /// Rank the phase arrangements of chosen three-phase circuits; write the best as a draft site.
    Phases(PhasesArgs),
    /// Judge named load cases and N-1 cases of load groups in one pass; name the worst.
    Scenarios(ScenariosArgs),
    /// Move conductors or positions, or sweep a move; find the smallest move under a level.
    Move(MoveArgs),
    /// Add a passive loop: its induced current per harmonic and the field without and with it.
    Loop(LoopArgs),
    /// Two assessment results side by side (as written by `assess --format json`): B, ratios, verdicts and the change.
    Compare(CompareArgs),
}

/// What a what-if judges by: the table of the ratio and the targets.
#[derive(Debug, clap::Args)]
pub struct JudgedArgs {
    /// Table of the ratio (default: the site's first table; for scenarios and loops without any: flux density only).
    #[arg(long, value_name = "ID")]
    pub table: Option<String>,
    /// A custom table (JSON) that --table may name; may be repeated.
    #[arg(long = "table-file", value_name = "FILE")]
    pub table_files: Vec<PathBuf>,
    /// Position ids to judge by, comma-separated (default: all).
    #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
    pub positions: Option<Vec<String>>,
    /// Area ids to judge by on their grid nodes, comma-separated (default: all).
    #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
    pub areas: Option<Vec<String>>,
}

#[derive(Debug, clap::Args)]
pub struct ScenariosArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// A scenario request (JSON, the body of the HTTP route): named load cases and more. Without it:
    /// present, rated when every circuit has a rated current, and the flags below.
    #[arg(long, value_name = "FILE")]
    pub request: Option<PathBuf>,
    /// Also generate N-1 cases for every load group (circuits with the same load_group).
    #[arg(long = "n-minus-1")]
    pub n_minus_1: bool,
    /// The load before one circuit of a group goes out (with --n-minus-1).
    #[arg(long, value_enum, default_value_t = LoadArg::Present)]
    pub base: LoadArg,
    #[command(flatten)]
    pub judged: JudgedArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, clap::Args)]
pub struct MoveArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// Conductor ids that move, comma-separated.
    #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
    pub conductors: Vec<String>,
    /// Circuit ids whose conductors all move, comma-separated.
    #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
    pub circuits: Vec<String>,
    /// Position ids that move, comma-separated.
    #[arg(long = "move-positions", value_delimiter = ',', value_name = "ID,ID")]
    pub move_positions: Vec<String>,
    /// The full move in metres: DX,DY,DZ.
    #[arg(long, value_delimiter = ',', value_name = "DX,DY,DZ", required = true, allow_hyphen_values = true)]
    pub by: Vec<f64>,
    /// Steps from no move to the full move (1–200).
    #[arg(long, default_value_t = 1)]
    pub steps: u32,
    /// Every target must be under this (a ratio, default 1; µT with --measure b-ut, then required).
    #[arg(long, allow_hyphen_values = true)]
    pub level: Option<f64>,
    /// What is judged: the exposure ratio against a table, or the resultant in µT.
    #[arg(long, value_enum, default_value_t = MeasureArg::Ratio)]
    pub measure: MeasureArg,
    #[command(flatten)]
    pub judged: JudgedArgs,
    /// Currents to judge at.
    #[arg(long, value_enum, default_value_t = LoadArg::Present)]
    pub load: LoadArg,
    /// Write the site moved by the smallest move found to this file (a draft to review, save and assess).
    #[arg(long = "revision-out", value_name = "FILE")]
    pub revision_out: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, clap::Args)]
pub struct LoopArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// The loop (JSON, the body of the HTTP route): path, wire_radius_m, resistance, and optionally
    /// load, table, positions, areas.
    #[arg(value_name = "LOOP")]
    pub request: PathBuf,
    /// A custom table (JSON) that the loop's table may name; may be repeated.
    #[arg(long = "table-file", value_name = "FILE")]
    pub table_files: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, clap::Args)]
pub struct CompareArgs {
    /// The first assessment result (JSON from `fluxbound assess --format json`), or `-` for standard input.
    #[arg(value_name = "BEFORE")]
    pub before: PathBuf,
    /// The second assessment result; every change is AFTER − BEFORE.
    #[arg(value_name = "AFTER")]
    pub after: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, clap::Args)]
pub struct PhasesArgs {
    /// Site model (JSON), or `-` for standard input.
    #[arg(value_name = "SITE")]
    pub site: PathBuf,
    /// Ids of the three-phase circuits whose phase order may change, comma-separated.
    #[arg(long, value_delimiter = ',', value_name = "ID,ID", required = true)]
    pub circuits: Vec<String>,
    /// What to minimise: the exposure ratio against a table, or the resultant in µT.
    #[arg(long, value_enum, default_value_t = MeasureArg::Ratio)]
    pub measure: MeasureArg,
    /// How the targets combine: the highest value, or the mean of each target's highest.
    #[arg(long, value_enum, default_value_t = OverArg::Max)]
    pub over: OverArg,
    #[command(flatten)]
    pub judged: JudgedArgs,
    /// Currents to compare at.
    #[arg(long, value_enum, default_value_t = LoadArg::Present)]
    pub load: LoadArg,
    /// How many of the best arrangements to list (1–100).
    #[arg(long, default_value_t = 10)]
    pub top: usize,
    /// Write the site with the best arrangement applied to this file (a draft to review, save and assess).
    #[arg(long = "revision-out", value_name = "FILE")]
    pub revision_out: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum MeasureArg {
    /// Exposure ratio Σ B_f / B_RL(f) against one table.
    Ratio,
    /// Resultant RMS flux density, µT.
    BUt,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum OverArg {
    /// The highest value over all targets.
    Max,
    /// The mean over targets of each target's highest value.
    Mean,
}

#[derive(Debug, Subcommand)]
pub enum SurveyAction {
    /// Compare measurements with the model, fit the circuit loads, and extrapolate to rated load.
    Reconcile {
        /// Site model (JSON).
        #[arg(value_name = "SITE")]
        site: PathBuf,
        /// Survey (JSON).
        #[arg(value_name = "SURVEY")]
        survey: PathBuf,
        /// Tables for the extrapolated values (default: the survey's, the site's, else the default set).
        #[arg(long, value_delimiter = ',', value_name = "ID,ID")]
        tables: Vec<String>,
        /// Ratio from which an extrapolated value is reported as approaching
        /// a level (0 < fraction < 1; default 0.5).
        #[arg(long, value_name = "FRACTION")]
        review_fraction: Option<f64>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
    },
}

#[derive(Debug, Subcommand)]
pub enum KeysAction {
    /// Create a key (and the organisation if needed); prints the secret alone.
    Create {
        /// Organisation name.
        #[arg(long)]
        org: String,
        /// viewer, assessor or admin.
        #[arg(long, value_parser = ["viewer", "assessor", "admin"])]
        role: String,
        /// A note on what the key is for.
        #[arg(long)]
        label: Option<String>,
        #[command(flatten)]
        storage: StorageArgs,
    },
    /// List an organisation's keys (never their secrets).
    List {
        #[arg(long)]
        org: String,
        #[command(flatten)]
        storage: StorageArgs,
    },
    /// Revoke a key by id (running servers refuse it within their --key-cache-s, 2 s by default).
    Revoke {
        #[arg(long)]
        org: String,
        /// Key id (from `keys list`).
        id: String,
        #[command(flatten)]
        storage: StorageArgs,
    },
}

#[derive(Debug, Subcommand)]
pub enum TablesAction {
    /// Show one table's bands, source and notes.
    Show {
        /// Table id (see `fluxbound tables`).
        id: String,
        /// Output format.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
    },
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum LoadArg {
    /// Each circuit's present current.
    Present,
    /// Each circuit's rated current.
    Rated,
}

impl From<LoadArg> for LoadCase {
    fn from(load: LoadArg) -> LoadCase {
        match load {
            LoadArg::Present => LoadCase::Present,
            LoadArg::Rated => LoadCase::Rated,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned plain text.
    Table,
    /// JSON.
    Json,
}

/// Failures of a command, each with its exit code.
#[derive(Debug, thiserror::Error)]
pub enum CliError {
    #[error("cannot read {path}: {source}")]
    Read { path: String, source: std::io::Error },
    /// Problems with the input, each addressed where the user gave it: a
    /// JSON pointer into a file, or a flag (`--tables: unknown table 'nope'`).
    #[error("the input has {} problem(s)", .0.len())]
    Problems(Vec<String>),
    #[error("cannot write output: {0}")]
    Write(std::io::Error),
    #[error("unknown table '{0}' (see `fluxbound tables`)")]
    UnknownTable(String),
    #[error("{0}")]
    App(#[from] crate::app::AppError),
    #[error("{0}")]
    Service(#[from] crate::service::ServiceError),
    #[error("server error: {0}")]
    Serve(std::io::Error),
    #[error("{0}")]
    Health(#[from] crate::health::HealthError),
}

impl CliError {
    pub fn exit_code(&self) -> u8 {
        match self {
            // A container runtime reads 1 as unhealthy and reserves 2.
            CliError::Problems(_) | CliError::UnknownTable(_) | CliError::Health(_) => 1,
            CliError::Read { .. } | CliError::Write(_) | CliError::App(_) | CliError::Serve(_) => 2,
            CliError::Service(e) if e.is_client_error() => 1,
            CliError::Service(_) => 2,
        }
    }

    /// Problems of a document the user gave as a file: their pointers are
    /// into that file.
    fn in_file(problems: Problems) -> CliError {
        CliError::Problems(problems.iter().map(|p| p.to_string()).collect())
    }

    /// One problem with a flag.
    fn flag(flag: &str, detail: impl std::fmt::Display) -> CliError {
        CliError::Problems(vec![format!("{flag}: {detail}")])
    }
}

/// Lines of a use case's error, addressed in the command line: the lists
/// and values given as flags by their flag, the documents' own problems by
/// their pointers into the files.
fn problem_lines(e: UseCaseError) -> Vec<String> {
    let in_file = |p: Problems| p.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    match e {
        UseCaseError::UnknownTables(unknown) => unknown.iter().map(unknown_table_line).collect(),
        UseCaseError::Assess(a) => assess_lines(a),
        UseCaseError::Load(l) => load_lines(l),
        UseCaseError::Survey(p) | UseCaseError::Evaluate(p) | UseCaseError::OverBudget(p) => in_file(p),
        UseCaseError::WhatIf(p) => p.iter().map(whatif_line).collect(),
        UseCaseError::UnknownArea(id) => vec![format!("--map: the site has no area '{id}'")],
        UseCaseError::MapTable(detail) => vec![format!("--map-table: {detail}")],
        UseCaseError::Distance { arg, detail } | UseCaseError::DistanceOverBudget { arg, detail } => {
            vec![format!("--{}: {detail}", arg.name().replace('_', "-"))]
        }
        // The command line's budget has a flag nobody sets.
        UseCaseError::Cancelled => vec![e.to_string()],
    }
}

impl From<UseCaseError> for CliError {
    fn from(e: UseCaseError) -> Self {
        CliError::Problems(problem_lines(e))
    }
}

fn unknown_table_line(u: &UnknownTable) -> String {
    match u.list {
        TableSource::Request | TableSource::Default => {
            format!("--tables: unknown table '{}' (see `fluxbound tables`)", u.id)
        }
        // The site's or the survey's own `tables`: a pointer into that file.
        TableSource::Site => format!("/tables/{} (site file): {u} (see `fluxbound tables`)", u.index),
        TableSource::Survey => format!("/tables/{} (survey file): {u} (see `fluxbound tables`)", u.index),
    }
}

fn load_lines(l: LoadError) -> Vec<String> {
    let mut lines: Vec<String> = l.in_load.iter().map(|p| format!("--load: {}", p.detail)).collect();
    lines.extend(l.in_site.iter().map(|p| p.to_string()));
    lines
}

fn assess_lines(a: AssessError) -> Vec<String> {
    let mut lines = Vec::new();
    if a.no_tables {
        lines.push(format!("--tables: {}", fluxbound_core::assess::NO_TABLES));
    }
    lines.extend(load_lines(LoadError { in_load: a.in_load, in_site: a.in_site }));
    lines
}

/// Entry point used by `main.rs`.
pub fn main() -> ExitCode {
    std::panic::set_hook(Box::new(|info| {
        eprintln!("fluxbound: internal error ({info}); please report it with the input that caused it");
    }));
    let cli = Cli::parse();
    let mut stdout = std::io::stdout().lock();
    match run(cli, &mut stdout) {
        Ok(code) => code,
        Err(CliError::Write(e)) if e.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
        Err(CliError::Problems(lines)) => {
            eprintln!("error: the input has {} problem(s):", lines.len());
            for line in &lines {
                eprintln!("  {line}");
            }
            ExitCode::from(1)
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}

/// Runs one command, writing its result to `out`.
pub fn run(cli: Cli, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    match cli.command {
        Command::Evaluate { input, compact, columns } => evaluate_command(&input, compact, columns.as_deref(), out),
        Command::Check { file } => check_command(&file, out),
        Command::Assess(args) => assess_command(&args, out),
        Command::Tables { action } => tables_command(action, out),
        Command::Distance(args) => distance_command(&args, out),
        Command::Whatif { action: WhatifAction::Phases(args) } => phases_command(&args, out),
        Command::Whatif { action: WhatifAction::Scenarios(args) } => scenarios_command(&args, out),
        Command::Whatif { action: WhatifAction::Move(args) } => move_command(&args, out),
        Command::Whatif { action: WhatifAction::Loop(args) } => loop_command(&args, out),
        Command::Whatif { action: WhatifAction::Compare(args) } => compare_command(&args, out),
        Command::Survey { action: SurveyAction::Reconcile { site, survey, tables, review_fraction, format } } => {
            survey_command(&SurveyInputs { site, survey, tables, review_fraction }, format, out)
        }
        Command::Serve(args) => serve(args),
        Command::Keys { action } => keys(action, out),
        Command::Health(args) => health_command(&args, out),
        Command::Import(args) => import_command(&args, out),
        Command::Export(args) => export_command(&args, out),
    }
}

fn import_command(args: &ImportArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::site::exchange::{self, Format as FileFormat, ImportError};
    let format = match args.format {
        Some(ImportFormat::Geojson) => FileFormat::Geojson,
        Some(ImportFormat::Dxf) => FileFormat::Dxf,
        Some(ImportFormat::Csv) => FileFormat::Csv,
        None => FileFormat::from_extension(&args.file.display().to_string()).ok_or_else(|| {
            CliError::flag("--format", "the file's extension names no format: give geojson, dxf or csv")
        })?,
    };
    let mapping: exchange::MappingDoc = match &args.mapping {
        None => exchange::MappingDoc::default(),
        Some(m) => site::parse_json(&read_input(m)?).map_err(|p| mapping_lines(m, &p))?,
    };
    let bytes = read_input_bytes(&args.file)?;
    let imported = exchange::import(format, &bytes, &mapping).map_err(|e| match e {
        ImportError::File(p) => CliError::Problems(p.iter().map(|q| format!("{}: {q}", args.file.display())).collect()),
        ImportError::Mapping(p) => match &args.mapping {
            Some(m) => mapping_lines(m, &p),
            None => CliError::Problems(p.iter().map(|q| format!("--mapping: needed: {q}")).collect()),
        },
    })?;
    for s in &imported.skipped {
        eprintln!("{s}");
    }
    for n in &imported.notes {
        eprintln!("note: {n}");
    }
    if let Some(path) = &args.report {
        let report = serde_json::json!({"skipped": imported.skipped, "notes": imported.notes});
        write_file(path, &format!("{report:#}\n"))?;
    }
    // The document is printed only if it is a valid site, so that what
    // lands in site.json can be assessed as it is.
    site::validate_site(&imported.site)
        .map_err(|p| CliError::Problems(p.iter().map(|q| format!("imported site {q}")).collect()))?;
    write_json(out, &imported.site)?;
    Ok(ExitCode::SUCCESS)
}

/// Problems of the mapping file, named by its flag and path.
fn mapping_lines(path: &Path, problems: &Problems) -> CliError {
    CliError::Problems(problems.iter().map(|p| format!("--mapping {}: {p}", path.display())).collect())
}

fn export_command(args: &ExportArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::site::exchange;
    let (doc, _checked) = read_site_doc(&args.site)?;
    match args.format {
        ExportFormat::Geojson => write_json(out, &exchange::export_geojson(&doc))?,
        ExportFormat::Dxf => {
            out.write_all(&exchange::export_dxf(&exchange::flatten(&doc))).map_err(CliError::Write)?;
            if let Some(path) = &args.mapping_out {
                write_file(
                    path,
                    &format!("{:#}\n", serde_json::json!(exchange::export_mapping(&exchange::flatten(&doc)))),
                )?;
            }
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn health_command(args: &HealthArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use crate::health::{self, Target};
    let target = match &args.url {
        Some(url) => Target::parse(url)?,
        None => Target::of_listen(&std::env::var("FLUXBOUND_LISTEN").unwrap_or_else(|_| health::DEFAULT_ADDR.into()))?,
    };
    let report = health::check(&target, std::time::Duration::from_secs(args.timeout_s))?;
    writeln!(out, "{report}").map_err(CliError::Write)?;
    Ok(ExitCode::SUCCESS)
}

/// `--columns` wins over the document's `output` (which is still checked):
/// the flag is the later, more specific choice of the person running it.
/// The answer is written as it is computed point by point, through a buffer,
/// never held as one text.
fn evaluate_command(
    input: &Path,
    compact: bool,
    columns: Option<&[String]>,
    out: &mut dyn Write,
) -> Result<ExitCode, CliError> {
    let text = read_input(input)?;
    let req: EvaluateRequest = site::parse_json(&text).map_err(CliError::in_file)?;
    drop(text);
    let mut ev = evaluate::validate_request(&req).map_err(CliError::in_file)?;
    drop(req);
    if let Some(names) = columns {
        let cols = evaluate::parse_columns(names, &ev.orders()).map_err(|problems| {
            CliError::Problems(problems.into_iter().map(|(_, why)| format!("--columns: {why}")).collect())
        })?;
        ev.set_output(evaluate::Output::Columns(cols));
    }
    let answer = usecase::evaluate_checked(ev, &Budget::offline())?;
    let mut buffered = std::io::BufWriter::with_capacity(1 << 16, out);
    evaluate::write_evaluated(&mut buffered, &answer, compact).map_err(CliError::Write)?;
    buffered.flush().map_err(CliError::Write)?;
    Ok(ExitCode::SUCCESS)
}

fn check_command(file: &Path, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    let text = read_input(file)?;
    match site::parse_site(&text) {
        Ok(s) => {
            writeln!(
                out,
                "ok: {} — {} circuit(s), {} conductor(s), {} position(s), {} area(s)",
                s.name().unwrap_or("site"),
                s.circuits().len(),
                s.conductors().len(),
                s.positions().len(),
                s.areas().len()
            )
            .map_err(CliError::Write)?;
            for n in s.input_notes().iter() {
                writeln!(out, "  note: {n}").map_err(CliError::Write)?;
            }
            // Warnings never fail the check: the site is valid, only suspect.
            write!(out, "{}", text::warnings_text(&usecase::site_warnings(&s))).map_err(CliError::Write)?;
            Ok(ExitCode::SUCCESS)
        }
        Err(problems) => {
            writeln!(out, "{} problem(s):", problems.len()).map_err(CliError::Write)?;
            for p in problems.iter() {
                writeln!(out, "  {p}").map_err(CliError::Write)?;
            }
            Ok(ExitCode::from(1))
        }
    }
}

fn tables_command(action: Option<TablesAction>, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    match action {
        None => write!(out, "{}", text::tables_text(limits::builtin_tables())).map_err(CliError::Write)?,
        Some(TablesAction::Show { id, format }) => {
            let t = limits::builtin_table(&id).ok_or(CliError::UnknownTable(id))?;
            match format {
                Format::Json => write_json(out, t)?,
                Format::Table => write!(out, "{}", text::table_text(t)).map_err(CliError::Write)?,
            }
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn write_json<T: serde::Serialize>(out: &mut dyn Write, value: &T) -> Result<(), CliError> {
    let json = serde_json::to_string_pretty(value).expect("serialising plain data cannot fail");
    writeln!(out, "{json}").map_err(CliError::Write)
}

fn write_file(path: &Path, text: &str) -> Result<(), CliError> {
    std::fs::write(path, text).map_err(CliError::Write)
}

fn read_site(path: &Path) -> Result<Site, CliError> {
    site::parse_site(&read_input(path)?).map_err(CliError::in_file)
}

/// The site document as parsed (for its fingerprint) and the checked site.
fn read_site_doc(path: &Path) -> Result<(site::wire::SiteDoc, Site), CliError> {
    let doc: site::wire::SiteDoc = site::parse_json(&read_input(path)?).map_err(CliError::in_file)?;
    let checked = site::validate_site(&doc).map_err(CliError::in_file)?;
    Ok((doc, checked))
}

/// How a site file is named in a result's provenance.
fn file_label(path: &Path) -> String {
    if path == Path::new("-") { "standard input".to_string() } else { path.display().to_string() }
}

/// `--review-fraction`, checked (absent means the default).
fn review_fraction_flag(value: Option<f64>) -> Result<ReviewFraction, CliError> {
    value.map_or(Ok(ReviewFraction::DEFAULT), |v| {
        ReviewFraction::new(v).map_err(|e| CliError::flag("--review-fraction", e))
    })
}

/// Each `--table-file`, parsed and checked; a problem names the flag and
/// the file, with its pointer into that file.
fn read_table_files(paths: &[PathBuf]) -> Result<Vec<ReferenceTable>, CliError> {
    paths
        .iter()
        .map(|f| {
            limits::parse_table(&read_input(f)?).map_err(|problems| {
                CliError::Problems(problems.iter().map(|p| format!("--table-file {}: {p}", f.display())).collect())
            })
        })
        .collect()
}

/// Each `--regime-file`, checked; an id already used by a built-in regime
/// or an earlier file is refused (a result would name it twice).
fn read_regime_files(paths: &[PathBuf]) -> Result<Vec<limits::Regime>, CliError> {
    let mut regimes: Vec<limits::Regime> = Vec::new();
    for f in paths {
        let r = limits::parse_regime(&read_input(f)?).map_err(|problems| {
            CliError::Problems(problems.iter().map(|p| format!("--regime-file {}: {p}", f.display())).collect())
        })?;
        limits::add_custom_regime(&mut regimes, r)
            .map_err(|detail| CliError::flag("--regime-file", format!("{}: {detail}", f.display())))?;
    }
    Ok(regimes)
}

/// The tables of an assessment: the chosen ids (the `--tables` list, else
/// the site's, else the defaults) looked up among the table files and the
/// built-ins, then every table file itself.
fn assessment_tables(
    flag: &[String],
    site: &Site,
    custom: Vec<ReferenceTable>,
) -> Result<Vec<ReferenceTable>, CliError> {
    let choice = limits::choose_tables(flag, &[], site.tables());
    let mut tables = limits::resolve_tables(&choice, &custom).map_err(UseCaseError::UnknownTables)?;
    tables.extend(custom);
    Ok(tables)
}

fn assess_command(args: &AssessArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    let (doc, site) = read_site_doc(&args.site)?;
    let custom = read_table_files(&args.table_files)?;
    let tables = assessment_tables(&args.tables, &site, custom)?;
    let review_fraction = review_fraction_flag(args.review_fraction)?;
    let load = LoadCase::from(args.load);
    let budget = Budget::offline();
    let regimes = read_regime_files(&args.regime_files)?;
    let result = usecase::assess_site(&site, &load, &tables, review_fraction, &budget)?
        .with_provenance(crate::service::provenance_now(&doc, None, Some(file_label(&args.site))));
    let result = if regimes.is_empty() { result } else { result.with_regimes(&regimes) };
    if let (Some(area_id), Some(path)) = (&args.map, &args.out) {
        let band = args.map_table.as_deref();
        write_file(path, &usecase::area_map_svg(&site, &result, &load, &tables, area_id, band, &budget)?)?;
    }
    if let Some(path) = &args.csv {
        write_file(path, &usecase::export_csv(&result))?;
    }
    if let Some(path) = &args.geojson {
        let doc = usecase::export_geojson(&site, &result, &load, &tables, &budget)?;
        write_file(path, &serde_json::to_string_pretty(&doc).expect("plain data"))?;
    }
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", text::assessment_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn distance_command(args: &DistanceArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    let site = read_site(&args.site)?;
    let to = match (&args.table, args.level_ut) {
        (Some(id), _) => usecase::DistanceTo::Table(id.clone()),
        (None, Some(level)) => usecase::DistanceTo::LevelUt(level),
        (None, None) => return Err(CliError::flag("--level-ut", "give --level-ut or --table")),
    };
    let query = usecase::DistanceQuery::new(&args.from, args.direction.as_deref(), to)?;
    let custom = read_table_files(&args.table_files)?;
    let result = usecase::distance(&site, &LoadCase::from(args.load), &query, &custom, &Budget::offline())?;
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", mitigate::distance_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn phases_command(args: &PhasesArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::mitigate::phases::{Over, PhaseSearchDoc, phases_text};
    let (doc, site) = read_site_doc(&args.site)?;
    let req = PhaseSearchDoc {
        circuits: args.circuits.clone(),
        load: LoadCase::from(args.load),
        measure: measure_of(args.measure),
        over: match args.over {
            OverArg::Max => Over::Max,
            OverArg::Mean => Over::Mean,
        },
        table: args.judged.table.clone(),
        positions: args.judged.positions.clone(),
        areas: args.judged.areas.clone(),
        top: args.top,
    };
    let custom = read_table_files(&args.judged.table_files)?;
    let result = usecase::search_phases(&site, &doc, &req, &custom, &Budget::offline())?;
    if let Some(path) = &args.revision_out {
        write_file(path, &serde_json::to_string_pretty(&result.revision).expect("plain data"))?;
    }
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", phases_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn compare_command(args: &CompareArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    if args.before == Path::new("-") && args.after == Path::new("-") {
        return Err(CliError::Problems(vec!["AFTER: standard input is already BEFORE; give a file".to_string()]));
    }
    let before = read_assessment("BEFORE", &args.before);
    let after = read_assessment("AFTER", &args.after);
    let (before, after) = match (before, after) {
        (Ok(b), Ok(a)) => (b, a),
        (b, a) => return Err(CliError::Problems(b.err().into_iter().chain(a.err()).flatten().collect())),
    };
    let result = mitigate::compare::compare(&before, &after);
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", mitigate::compare::comparison_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

/// An assessment result from a file, or its problems named by the
/// argument (`BEFORE`, `AFTER`) and the file, with pointers into it.
fn read_assessment(arg: &str, path: &Path) -> Result<fluxbound_core::assess::Assessment, Vec<String>> {
    use fluxbound_core::site::Unreadable;
    let at = format!("{arg} ({})", file_label(path));
    let text = read_input(path).map_err(|e| match e {
        CliError::Read { source, .. } => vec![format!("{at}: cannot be read: {source}")],
        other => vec![format!("{at}: {other}")],
    })?;
    site::read_json(&text).map_err(|e| match e {
        Unreadable::Malformed(why) => vec![format!("{at}: not valid JSON: {why}")],
        Unreadable::Invalid(problems) => {
            let mut lines =
                vec![format!("{at}: not an assessment result (write one with `fluxbound assess SITE --format json`)")];
            lines.extend(problems.iter().map(|p| format!("{at} {p}")));
            lines
        }
    })
}

/// A what-if request's problem, addressed by the flag that set the value
/// its pointer names.
fn whatif_line(p: &fluxbound_core::site::Problem) -> String {
    let mut keys = p.pointer.trim_start_matches('/').split('/');
    let key = keys.next().unwrap_or("");
    match key {
        "circuits" | "table" | "positions" | "areas" | "top" | "load" | "steps" | "level" | "measure" | "base" => {
            format!("--{key}: {}", p.detail)
        }
        "by_m" => format!("--by: {}", p.detail),
        "n_minus_1" => format!("--n-minus-1: {}", p.detail),
        "moving" => match keys.next() {
            Some("positions") => format!("--move-positions: {}", p.detail),
            Some(k @ ("conductors" | "circuits")) => format!("--{k}: {}", p.detail),
            _ => format!("--conductors, --circuits or --move-positions: {}", p.detail),
        },
        _ => p.to_string(),
    }
}

/// Problems of a what-if request read from `file`: those under the
/// `in_file` keys addressed by the file and the pointer into it, the others
/// by their flag.
fn request_file_error(file: &Path, e: UseCaseError, in_file: &[&str]) -> CliError {
    match e {
        UseCaseError::WhatIf(p) => CliError::Problems(
            p.iter()
                .map(|x| {
                    let key = x.pointer.trim_start_matches('/').split('/').next().unwrap_or("");
                    if in_file.is_empty() || in_file.contains(&key) {
                        format!("{}: {x}", file.display())
                    } else {
                        whatif_line(x)
                    }
                })
                .collect(),
        ),
        other => CliError::from(other),
    }
}

fn scenarios_command(args: &ScenariosArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::mitigate::scenarios::{NMinusOne, ScenariosDoc, scenarios_text};
    let site = read_site(&args.site)?;
    let mut req: ScenariosDoc = match &args.request {
        Some(path) => site::parse_json(&read_input(path)?)
            .map_err(|p| CliError::Problems(p.iter().map(|x| format!("{}: {x}", path.display())).collect()))?,
        None => ScenariosDoc::default(),
    };
    if args.n_minus_1 {
        req.n_minus_1 = Some(NMinusOne { base: LoadCase::from(args.base) });
    }
    if args.judged.table.is_some() {
        req.table = args.judged.table.clone();
    }
    if args.judged.positions.is_some() {
        req.positions = args.judged.positions.clone();
    }
    if args.judged.areas.is_some() {
        req.areas = args.judged.areas.clone();
    }
    let custom = read_table_files(&args.judged.table_files)?;
    let result = usecase::run_scenarios(&site, &req, &custom, &Budget::offline()).map_err(|e| match &args.request {
        Some(path) => request_file_error(path, e, &["scenarios"]),
        None => CliError::from(e),
    })?;
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", scenarios_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn move_command(args: &MoveArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::mitigate::moves::{MoveDoc, Moving, move_text};
    let (doc, site) = read_site_doc(&args.site)?;
    let by: [f64; 3] =
        args.by.as_slice().try_into().map_err(|_| CliError::flag("--by", "give three numbers DX,DY,DZ in metres"))?;
    let req = MoveDoc {
        moving: Moving {
            conductors: args.conductors.clone(),
            circuits: args.circuits.clone(),
            positions: args.move_positions.clone(),
        },
        by_m: by,
        steps: args.steps,
        level: args.level,
        measure: measure_of(args.measure),
        load: LoadCase::from(args.load),
        table: args.judged.table.clone(),
        positions: args.judged.positions.clone(),
        areas: args.judged.areas.clone(),
    };
    let custom = read_table_files(&args.judged.table_files)?;
    let result = usecase::run_move(&site, &doc, &req, &custom, &Budget::offline())?;
    if let (Some(path), Some(rev)) = (&args.revision_out, &result.revision) {
        write_file(path, &serde_json::to_string_pretty(rev).expect("plain data"))?;
    }
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", move_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn loop_command(args: &LoopArgs, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use fluxbound_core::mitigate::loops::{LoopDoc, loop_text};
    let site = read_site(&args.site)?;
    let path = &args.request;
    let req: LoopDoc = site::parse_json(&read_input(path)?)
        .map_err(|p| CliError::Problems(p.iter().map(|x| format!("{}: {x}", path.display())).collect()))?;
    let custom = read_table_files(&args.table_files)?;
    let result =
        usecase::run_loop(&site, &req, &custom, &Budget::offline()).map_err(|e| request_file_error(path, e, &[]))?;
    match args.format {
        Format::Json => write_json(out, &result)?,
        Format::Table => write!(out, "{}", loop_text(&result)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn measure_of(m: MeasureArg) -> fluxbound_core::mitigate::Measure {
    match m {
        MeasureArg::Ratio => fluxbound_core::mitigate::Measure::Ratio,
        MeasureArg::BUt => fluxbound_core::mitigate::Measure::BUt,
    }
}

/// What `survey reconcile` reads.
struct SurveyInputs {
    site: PathBuf,
    survey: PathBuf,
    tables: Vec<String>,
    review_fraction: Option<f64>,
}

fn survey_command(inputs: &SurveyInputs, format: Format, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    let site = read_site(&inputs.site)?;
    let doc: SurveyDoc = site::parse_json(&read_input(&inputs.survey)?).map_err(CliError::in_file)?;
    let survey = usecase::check_survey(&site, &doc)?;
    let choice = limits::choose_tables(&inputs.tables, survey.tables(), site.tables());
    let tables = limits::resolve_tables(&choice, &[]).map_err(UseCaseError::UnknownTables)?;
    let review_fraction = review_fraction_flag(inputs.review_fraction)?;
    let analysis = usecase::analyse_survey(&survey, &tables, review_fraction, &Budget::offline())?;
    match format {
        Format::Json => write_json(out, &analysis)?,
        Format::Table => write!(out, "{}", text::survey_text(site.name(), &analysis)).map_err(CliError::Write)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn runtime() -> Result<tokio::runtime::Runtime, CliError> {
    tokio::runtime::Builder::new_multi_thread().enable_all().build().map_err(CliError::Serve)
}

fn storage_config(storage: StorageArgs) -> crate::config::Config {
    crate::config::Config {
        data_dir: storage.data_dir,
        database_url: storage.database_url,
        ..crate::config::Config::new()
    }
}

fn serve(args: ServeArgs) -> Result<ExitCode, CliError> {
    use crate::config::LogFormat;
    crate::telemetry::init(if args.log_json { LogFormat::Json } else { LogFormat::Human });
    let mut config = storage_config(args.storage);
    config.listen = args.listen;
    config.demo = args.demo;
    config.limits.body_bytes = args.max_body_bytes;
    config.limits.max_pairs = args.max_pairs;
    config.limits.max_points = args.max_points;
    config.limits.rate_per_key = args.rate_per_key;
    config.limits.request_timeout_s = args.request_timeout_s;
    config.connections = args.connections.limits();
    args.compute.apply(&mut config.limits);
    config.limits.key_cache_s = args.clients.key_cache_s;
    config.clients = args.clients.into_policy();
    runtime()?.block_on(async move {
        let app = crate::app::App::build(&config).await?;
        if let Some(demo) = &app.demo {
            let addr = app.local_addr();
            eprintln!("\nDemo organisation ready. API key (assessor role; shown once):\n  {}\n", demo.key);
            for (id, name) in &demo.site_ids {
                eprintln!("  site {id}  {name}");
            }
            if let Some((id, _)) = demo.site_ids.first() {
                eprintln!(
                    "\nAssess the first site at rated load:\n  curl -s -X POST -H 'Authorization: Bearer {}' -H 'Content-Type: application/json' \\\n    -d '{{\"load\": {{\"kind\": \"rated\"}}}}' http://{addr}/v1/sites/{id}/assessments\n\nAPI docs: http://{addr}/docs\n",
                    demo.key
                );
            }
        }
        app.serve(crate::app::shutdown_signal()).await.map_err(CliError::Serve)
    })?;
    Ok(ExitCode::SUCCESS)
}

fn keys(action: KeysAction, out: &mut dyn Write) -> Result<ExitCode, CliError> {
    use crate::service::{Role, Service};
    let rt = runtime()?;
    rt.block_on(async move {
        let (storage, org) = match &action {
            KeysAction::Create { storage, org, .. }
            | KeysAction::List { storage, org }
            | KeysAction::Revoke { storage, org, .. } => (
                StorageArgs { data_dir: storage.data_dir.clone(), database_url: storage.database_url.clone() },
                org.clone(),
            ),
        };
        let config = storage_config(storage);
        let store = crate::app::open_store(&config).await?;
        let service = Service::new(store, config.limits.clone());
        let result = match action {
            KeysAction::Create { role, label, .. } => {
                let role = Role::parse(&role).unwrap_or(Role::Viewer);
                let (_, secret) = service.keys_create_for_org(&org, role, label.as_deref()).await?;
                writeln!(out, "{secret}").map_err(CliError::Write)
            }
            KeysAction::List { .. } => {
                for k in service.keys_list_for_org(&org).await? {
                    let state = if k.revoked_at.is_some() { "revoked" } else { "active" };
                    writeln!(
                        out,
                        "{}  {:<8}  {:<7}  {}  {}",
                        k.id,
                        k.role,
                        state,
                        k.created_at,
                        k.label.unwrap_or_default()
                    )
                    .map_err(CliError::Write)?;
                }
                Ok(())
            }
            KeysAction::Revoke { id, .. } => {
                let key_id = crate::ids::KeyId::parse(&id).ok_or_else(|| {
                    CliError::Problems(vec![format!("ID: '{id}' is not a key id (32 lowercase hex digits)")])
                })?;
                service.keys_revoke_for_org(&org, &key_id).await?;
                writeln!(out, "revoked {id}").map_err(CliError::Write)
            }
        };
        service.store().close().await;
        result
    })?;
    Ok(ExitCode::SUCCESS)
}

/// Largest input file read (256 MiB): bounds memory on a mistaken path.
const MAX_INPUT_BYTES: u64 = 256 * 1024 * 1024;

/// [`read_input`] for files that need not be text (a binary DXF).
fn read_input_bytes(path: &Path) -> Result<Vec<u8>, CliError> {
    let name = path.display().to_string();
    let err = |source| CliError::Read { path: name.clone(), source };
    let mut bytes = Vec::new();
    if path == Path::new("-") {
        std::io::stdin().take(MAX_INPUT_BYTES + 1).read_to_end(&mut bytes).map_err(err)?;
    } else {
        std::fs::File::open(path).and_then(|f| f.take(MAX_INPUT_BYTES + 1).read_to_end(&mut bytes)).map_err(err)?;
    }
    if bytes.len() as u64 > MAX_INPUT_BYTES {
        return Err(err(std::io::Error::other("input is larger than 256 MiB")));
    }
    Ok(bytes)
}

fn read_input(path: &Path) -> Result<String, CliError> {
    let bytes = read_input_bytes(path)?;
    String::from_utf8(bytes).map_err(|e| CliError::Read {
        path: path.display().to_string(),
        source: std::io::Error::new(std::io::ErrorKind::InvalidData, e.utf8_error()),
    })
}
