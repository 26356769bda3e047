//! Records the git commit of the build for result provenance.
//!
//! `FLUXBOUND_BUILD_COMMIT` (compile-time env) is the first 12 hex digits of
//! `HEAD`, or the value of the same variable given to the build (a container
//! build without `.git`), or `unknown`. Outside a git checkout, or without
//! git, the build still succeeds. Cargo re-runs this script only when `HEAD`
//! moves (the file itself, the branch ref it names, or packed refs), not on
//! every source change.

use std::path::{Path, PathBuf};
use std::process::Command;

fn git(args: &[&str]) -> Option<String> {
    let out = Command::new("git").args(args).output().ok()?;
    if !out.status.success() {
        return None;
    }
    let text = String::from_utf8(out.stdout).ok()?.trim().to_string();
    (!text.is_empty()).then_some(text)
}

fn main() {
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-env-changed=FLUXBOUND_BUILD_COMMIT");
    let given = std::env::var("FLUXBOUND_BUILD_COMMIT").ok().filter(|v| !v.trim().is_empty());
    let commit = given.or_else(|| git(&["rev-parse", "--short=12", "HEAD"])).unwrap_or_else(|| "unknown".into());
    watch_head();
    println!("cargo:rustc-env=FLUXBOUND_BUILD_COMMIT={commit}");
}

/// Asks cargo to re-run when `HEAD` or the ref it points to changes. In a
/// linked worktree `HEAD` lives in the worktree's git dir and branch refs
/// in the common dir, so both are asked of git rather than assumed.
fn watch_head() {
    let Some(git_dir) = git(&["rev-parse", "--git-dir"]).map(PathBuf::from) else { return };
    let common = git(&["rev-parse", "--git-common-dir"]).map(PathBuf::from).unwrap_or_else(|| git_dir.clone());
    watch(&git_dir.join("HEAD"));
    if let Some(head_ref) = git(&["symbolic-ref", "-q", "HEAD"]) {
        watch(&git_dir.join(&head_ref));
        watch(&common.join(&head_ref));
    }
    watch(&common.join("packed-refs"));
}

fn watch(path: &Path) {
    if path.exists() {
        println!("cargo:rerun-if-changed={}", path.display());
    }
}
