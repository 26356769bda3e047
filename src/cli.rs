//! Command line: parse arguments, read input, call the core, print, exit.
//!
//! Exit codes: 0 success; 1 the input has problems (each printed with its
//! JSON pointer); 2 usage or I/O error. Nothing here panics on user input, and
//! a panic anywhere prints one line instead of a backtrace.

use crate::domain::{evaluate, site};
use clap::{Parser, Subcommand};
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
    },
    /// Validate a site model and list every problem with its JSON pointer.
    Check {
        /// Site model (JSON), or `-` for standard input.
        #[arg(value_name = "FILE")]
        file: PathBuf,
    },
}

/// Failures of a command, each with its exit code.
#[derive(Debug, thiserror::Error)]
pub enum CliError {
    #[error("cannot read {path}: {source}")]
    Read { path: String, source: std::io::Error },
    #[error("{0}")]
    Problems(site::Problems),
    #[error("cannot write output: {0}")]
    Write(std::io::Error),
}

impl CliError {
    pub fn exit_code(&self) -> u8 {
        match self {
            CliError::Problems(_) => 1,
            CliError::Read { .. } | CliError::Write(_) => 2,
        }
    }
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
        Err(CliError::Problems(problems)) => {
            eprintln!("error: the input has {} problem(s):", problems.len());
            for p in problems.iter() {
                eprintln!("  {p}");
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
        Command::Evaluate { input, compact } => {
            let text = read_input(&input)?;
            let response = evaluate::evaluate_json(&text).map_err(CliError::Problems)?;
            let json = if compact { serde_json::to_string(&response) } else { serde_json::to_string_pretty(&response) }
                .expect("serialising plain data cannot fail");
            writeln!(out, "{json}").map_err(CliError::Write)?;
            Ok(ExitCode::SUCCESS)
        }
        Command::Check { file } => {
            let text = read_input(&file)?;
            match site::parse_site(&text) {
                Ok(s) => {
                    writeln!(
                        out,
                        "ok: {} — {} circuit(s), {} conductor(s), {} position(s), {} area(s)",
                        s.name.as_deref().unwrap_or("site"),
                        s.circuits.len(),
                        s.conductors.len(),
                        s.positions.len(),
                        s.areas.len()
                    )
                    .map_err(CliError::Write)?;
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
    }
}

/// Largest input file read (256 MiB): bounds memory on a mistaken path.
const MAX_INPUT_BYTES: u64 = 256 * 1024 * 1024;

fn read_input(path: &Path) -> Result<String, CliError> {
    let name = path.display().to_string();
    let err = |source| CliError::Read { path: name.clone(), source };
    let mut text = String::new();
    if path == Path::new("-") {
        std::io::stdin().take(MAX_INPUT_BYTES + 1).read_to_string(&mut text).map_err(err)?;
    } else {
        std::fs::File::open(path).and_then(|f| f.take(MAX_INPUT_BYTES + 1).read_to_string(&mut text)).map_err(err)?;
    }
    if text.len() as u64 > MAX_INPUT_BYTES {
        return Err(err(std::io::Error::other("input is larger than 256 MiB")));
    }
    Ok(text)
}
