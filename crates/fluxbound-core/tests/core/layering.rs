//! The dependency rule, enforced by Cargo and checked here from `cargo
//! metadata`: the core's normal (non-dev, non-optional) dependency graph
//! contains no framework, runtime, database, HTTP, logging, clock or
//! randomness crate. Schema derives (`utoipa`) are allowed only behind the
//! core's optional `schema` feature, which this walk does not follow.

use serde_json::Value;
use std::collections::{BTreeSet, HashMap};
use std::process::Command;

/// Crates of the outer layers, and of effects the core must not have.
const FORBIDDEN: [&str; 16] = [
    "tokio",
    "axum",
    "hyper",
    "tower",
    "tower-http",
    "sqlx",
    "reqwest",
    "utoipa",
    "utoipa-swagger-ui",
    "clap",
    "tracing",
    "tracing-subscriber",
    "rand",
    "getrandom",
    "time",
    "uuid",
];

/// The host's target triple, so that `cargo metadata` needs no crates for
/// other platforms (it then works offline).
fn host_triple() -> String {
    let out = Command::new("rustc").arg("-vV").output().expect("rustc runs");
    let text = String::from_utf8(out.stdout).expect("rustc prints UTF-8");
    text.lines().find_map(|l| l.strip_prefix("host: ")).expect("rustc -vV names the host").to_string()
}

fn metadata() -> Value {
    let manifest = concat!(env!("CARGO_MANIFEST_DIR"), "/Cargo.toml");
    let host = host_triple();
    let out = Command::new(env!("CARGO"))
        .args(["metadata", "--format-version", "1", "--locked", "--offline", "--filter-platform", &host])
        .args(["--manifest-path", manifest])
        .output()
        .expect("cargo metadata runs");
    assert!(out.status.success(), "cargo metadata failed: {}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("cargo metadata prints JSON")
}

/// Names of every package reachable from the core through normal
/// dependencies, starting from the core's own non-optional ones.
fn core_normal_graph(meta: &Value) -> BTreeSet<String> {
    let packages: HashMap<&str, &Value> =
        meta["packages"].as_array().unwrap().iter().map(|p| (p["id"].as_str().unwrap(), p)).collect();
    let nodes: HashMap<&str, &Value> =
        meta["resolve"]["nodes"].as_array().unwrap().iter().map(|n| (n["id"].as_str().unwrap(), n)).collect();
    let core = packages.values().find(|p| p["name"] == "fluxbound-core").expect("the core is a workspace member");
    let direct: BTreeSet<&str> = core["dependencies"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|d| d["kind"].is_null() && d["optional"] == false)
        .map(|d| d["name"].as_str().unwrap())
        .collect();
    let is_normal = |dep: &Value| dep["dep_kinds"].as_array().unwrap().iter().any(|k| k["kind"].is_null());
    let mut stack: Vec<&str> = nodes[core["id"].as_str().unwrap()]["deps"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|d| is_normal(d) && direct.contains(packages[d["pkg"].as_str().unwrap()]["name"].as_str().unwrap()))
        .map(|d| d["pkg"].as_str().unwrap())
        .collect();
    let mut seen = BTreeSet::new();
    let mut names = BTreeSet::new();
    while let Some(id) = stack.pop() {
        if !seen.insert(id) {
            continue;
        }
        names.insert(packages[id]["name"].as_str().unwrap().to_string());
        for d in nodes[id]["deps"].as_array().unwrap() {
            if is_normal(d) {
                stack.push(d["pkg"].as_str().unwrap());
            }
        }
    }
    names
}

#[test]
fn the_core_depends_on_no_framework_runtime_database_clock_or_randomness_crate() {
    let names = core_normal_graph(&metadata());
    assert!(names.contains("nalgebra") && names.contains("rayon"), "the walk found the core's graph: {names:?}");
    let bad: Vec<&str> = FORBIDDEN.iter().copied().filter(|f| names.contains(*f)).collect();
    assert!(bad.is_empty(), "forbidden crates in the core's normal dependency graph: {bad:?}");
}

#[test]
fn schema_derives_stay_behind_the_optional_feature() {
    let meta = metadata();
    let core = meta["packages"].as_array().unwrap().iter().find(|p| p["name"] == "fluxbound-core").unwrap();
    let utoipa = core["dependencies"].as_array().unwrap().iter().find(|d| d["name"] == "utoipa");
    if let Some(u) = utoipa {
        assert_eq!(u["optional"], true, "utoipa must be optional in the core");
    }
}
