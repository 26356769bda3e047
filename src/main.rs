//! The `fluxbound` binary: everything lives in the library; see `cli.rs`.

/// mimalloc instead of the system allocator: a request allocates a few
/// hundred small blocks (parsed document, pointers, answer text), and
/// glibc's malloc and free were 11 % of the server's CPU time on the
/// evaluate request of `bench/load/run.sh` (`perf record`, 2026-12-03).
/// The core does not depend on it; the in-process API tests run on the
/// system allocator.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    fluxbound::cli::main()
}
