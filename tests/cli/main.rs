//! The `fluxbound` binary, run as a user would run it: arguments, standard
//! input, files, exit codes, standard output and standard error.

use serde_json::Value;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};

const EXAMPLE: &str = "examples/evaluate-busbar-walkway.json";

fn manifest_dir() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn data(name: &str) -> PathBuf {
    manifest_dir().join("tests").join("cli").join("data").join(name)
}

/// Runs the binary from the crate root with `args`, feeding `stdin` (or
/// nothing: standard input is closed, so a test never hangs on it).
fn fluxbound(args: &[&str], stdin: Option<&str>) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_fluxbound"))
        .args(args)
        .current_dir(manifest_dir())
        .env_remove("RUST_BACKTRACE")
        .env_remove("RUST_LIB_BACKTRACE")
        .stdin(if stdin.is_some() { Stdio::piped() } else { Stdio::null() })
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the fluxbound binary starts");
    if let Some(text) = stdin {
        let mut pipe = child.stdin.take().expect("stdin is piped");
        pipe.write_all(text.as_bytes()).expect("write to the child's stdin");
        // Dropping the pipe closes it, so the child sees end of input.
    }
    child.wait_with_output().expect("the fluxbound binary finishes")
}

fn stdout_of(out: &Output) -> String {
    String::from_utf8(out.stdout.clone()).expect("stdout is UTF-8")
}

fn stderr_of(out: &Output) -> String {
    String::from_utf8(out.stderr.clone()).expect("stderr is UTF-8")
}

/// Writes `text` to a file in the system temp directory whose name no other
/// test (or concurrent test run) uses.
fn temp_file(tag: &str, text: &str) -> PathBuf {
    static COUNTER: AtomicUsize = AtomicUsize::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let nanos = std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map(|d| d.as_nanos()).unwrap_or(0);
    let path = std::env::temp_dir().join(format!("fluxbound-cli-{}-{nanos}-{n}-{tag}.json", std::process::id()));
    std::fs::write(&path, text).expect("write a temp file");
    path
}

/// The sorted keys of a JSON object.
fn keys(v: &Value) -> Vec<&str> {
    let mut k: Vec<&str> = v.as_object().expect("a JSON object").keys().map(String::as_str).collect();
    k.sort_unstable();
    k
}

fn sorted(mut k: Vec<&str>) -> Vec<&str> {
    k.sort_unstable();
    k
}

fn evaluate_stdin(doc: &str) -> Output {
    fluxbound(&["evaluate", "--input", "-"], Some(doc))
}

fn evaluate_ok(doc: &str) -> Value {
    let out = evaluate_stdin(doc);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    serde_json::from_slice(&out.stdout).expect("stdout is one JSON document")
}

/// Relative difference, for comparing computed floats with expected ones.
fn rel_diff(actual: f64, expected: f64) -> f64 {
    (actual - expected).abs() / expected.abs()
}

/// Asserts a rejected input: exit code 1, nothing on stdout, every `needle`
/// on stderr, and no panic text.
fn assert_rejected_with(out: &Output, needles: &[&str]) {
    let stderr = stderr_of(out);
    assert_eq!(out.status.code(), Some(1), "stderr: {stderr}");
    assert!(out.stdout.is_empty(), "stdout should be empty, was: {}", stdout_of(out));
    for needle in needles {
        assert!(stderr.contains(needle), "stderr should contain {needle:?}, was:\n{stderr}");
    }
    assert_no_panic_text(&stderr);
}

fn assert_no_panic_text(stderr: &str) {
    for bad in ["panicked", "RUST_BACKTRACE", "internal error"] {
        assert!(!stderr.contains(bad), "stderr should not contain {bad:?}, was:\n{stderr}");
    }
}

// ---------------------------------------------------------------- evaluate

#[test]
fn evaluating_the_busbar_example_prints_exactly_the_documented_keys() {
    let out = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    let v: Value = serde_json::from_slice(&out.stdout).expect("stdout is one JSON document");

    // `EvaluateResponse` in src/domain/evaluate.rs: a published interface.
    assert_eq!(keys(&v), sorted(vec!["frequency_hz", "points", "segment_point_pairs", "cautions"]));
    for p in v["points"].as_array().expect("points is an array") {
        assert_eq!(keys(p), sorted(vec!["at", "resultant_ut", "maximum_ut", "frequencies", "inside_conductors"]));
        for f in p["frequencies"].as_array().expect("frequencies is an array") {
            assert_eq!(keys(f), sorted(vec!["order", "frequency_hz", "resultant_ut", "maximum_ut", "components_ut"]));
            assert_eq!(keys(&f["components_ut"]), vec!["x", "y", "z"]);
        }
    }
}

#[test]
fn evaluating_the_busbar_example_returns_one_result_per_input_point_in_input_order() {
    let input: Value = serde_json::from_str(&std::fs::read_to_string(manifest_dir().join(EXAMPLE)).unwrap()).unwrap();
    let out = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();

    let asked = input["points"].as_array().unwrap();
    let got = v["points"].as_array().unwrap();
    assert_eq!(got.len(), asked.len());
    for (i, (p, a)) in got.iter().zip(asked).enumerate() {
        let at: Vec<f64> = p["at"].as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect();
        let want: Vec<f64> = a.as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect();
        // Coordinates are echoed, not computed: they round-trip exactly.
        assert_eq!(at, want, "point {i} is out of order or altered");
    }
}

#[test]
fn evaluating_the_busbar_example_carries_the_cautions_about_qualified_assessors() {
    let out = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let cautions: Vec<&str> = v["cautions"].as_array().unwrap().iter().map(|c| c.as_str().unwrap()).collect();
    assert!(!cautions.is_empty());
    assert!(cautions.iter().all(|c| !c.trim().is_empty()));
    assert!(
        cautions.iter().any(|c| c.contains("licensed") && c.contains("qualified assessors")),
        "no caution names licensed or qualified assessors: {cautions:?}"
    );
}

#[test]
fn points_inside_a_conductor_have_a_null_field_and_name_the_conductor() {
    let out = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let points = v["points"].as_array().unwrap();

    // In the example, [12, 0, 1.5] lies on BB1-L2's riser and [3, 3, 0.2] on
    // the axis of aux-feed; the other four points are in free air.
    let inside: Vec<(usize, Vec<&str>)> = points
        .iter()
        .enumerate()
        .filter_map(|(i, p)| {
            let names: Vec<&str> =
                p["inside_conductors"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
            (!names.is_empty()).then_some((i, names))
        })
        .collect();
    assert_eq!(inside, vec![(4, vec!["BB1-L2"]), (5, vec!["aux-feed"])]);

    for (i, p) in points.iter().enumerate() {
        let is_inside = !p["inside_conductors"].as_array().unwrap().is_empty();
        if is_inside {
            assert!(p["resultant_ut"].is_null(), "point {i}: {p}");
            assert!(p["maximum_ut"].is_null(), "point {i}: {p}");
            assert_eq!(p["frequencies"], Value::Array(vec![]), "point {i}");
        } else {
            let resultant = p["resultant_ut"].as_f64().unwrap_or_else(|| panic!("point {i} has a number: {p}"));
            let maximum = p["maximum_ut"].as_f64().unwrap_or_else(|| panic!("point {i} has a number: {p}"));
            assert!(resultant.is_finite() && resultant > 0.0, "point {i}: {resultant}");
            // The field along one direction never exceeds the resultant;
            // 1e-12 relative allows for rounding in the eigen-solve.
            assert!(maximum <= resultant * (1.0 + 1e-12), "point {i}: maximum {maximum} > resultant {resultant}");
            let orders: Vec<u64> =
                p["frequencies"].as_array().unwrap().iter().map(|f| f["order"].as_u64().unwrap()).collect();
            assert_eq!(orders, vec![1, 5, 7], "point {i}: the fundamental and both harmonics of BB1");
        }
    }
}

#[test]
fn the_resultant_over_frequencies_is_the_quadrature_sum_of_each_frequency() {
    let out = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    for (i, p) in v["points"].as_array().unwrap().iter().enumerate() {
        let Some(total) = p["resultant_ut"].as_f64() else {
            continue;
        };
        let sum_sq: f64 =
            p["frequencies"].as_array().unwrap().iter().map(|f| f["resultant_ut"].as_f64().unwrap().powi(2)).sum();
        // Same numbers summed in the same order: only final rounding differs.
        assert!(rel_diff(total, sum_sq.sqrt()) < 1e-12, "point {i}: {total} vs {}", sum_sq.sqrt());
    }
}

#[test]
fn evaluating_from_stdin_prints_the_same_as_evaluating_the_file() {
    let from_file = fluxbound(&["evaluate", "--input", EXAMPLE], None);
    let text = std::fs::read_to_string(manifest_dir().join(EXAMPLE)).unwrap();
    let from_stdin = fluxbound(&["evaluate", "--input", "-"], Some(&text));
    assert_eq!(from_file.status.code(), Some(0), "stderr: {}", stderr_of(&from_file));
    assert_eq!(from_stdin.status.code(), Some(0), "stderr: {}", stderr_of(&from_stdin));
    assert!(!from_file.stdout.is_empty());
    // The computation is deterministic, so the bytes agree, not just the values.
    assert_eq!(stdout_of(&from_stdin), stdout_of(&from_file));
}

/// 1000 A RMS along the x axis over 100 km; points 1 m away on +y and −z.
const LONG_CONDUCTOR: &str = r#"{
    "frequency_hz": 50,
    "conductors": [
        {"id": "long", "radius_m": 0.01, "current": {"rms_a": 1000, "phase_deg": 0},
         "path": [[-50000, 0, 0], [50000, 0, 0]]}
    ],
    "points": [[0, 1, 0], [0, 0, -1]]
}"#;

#[test]
fn a_long_straight_conductor_gives_mu0_i_over_2_pi_r_at_one_metre() {
    // Source: OpenStax University Physics Vol. 2, §12.2, B = µ0 I / (2π R).
    // 1000 A RMS at 1 m: 2e-7 · 1000 / 1 T = 200 µT RMS (derived).
    // The conductor is 100 km long; the finite-segment correction at its
    // midpoint is 1 - L/√(L² + R²) ≈ 2e-10 for L = 50 km, well inside 1e-6.
    let doc = LONG_CONDUCTOR;
    let v = evaluate_ok(doc);
    for (i, p) in v["points"].as_array().unwrap().iter().enumerate() {
        let resultant = p["resultant_ut"].as_f64().unwrap();
        let maximum = p["maximum_ut"].as_f64().unwrap();
        assert!(rel_diff(resultant, 200.0) < 1e-6, "point {i}: resultant {resultant} µT, expected 200 µT");
        // One conductor, one phasor: the field is linearly polarised, so the
        // maximum along one direction is the whole resultant.
        assert!(rel_diff(maximum, resultant) < 1e-9, "point {i}: maximum {maximum} vs resultant {resultant}");
    }
}

#[test]
fn the_field_of_a_straight_conductor_follows_the_right_hand_rule() {
    // Current along +x: at +y the field points along +z; at -z it points along +y.
    let doc = LONG_CONDUCTOR;
    let v = evaluate_ok(doc);
    let component =
        |p: usize, axis: &str| v["points"][p]["frequencies"][0]["components_ut"][axis]["re"].as_f64().unwrap();
    assert!(rel_diff(component(0, "z"), 200.0) < 1e-6, "B_z at +y = {}", component(0, "z"));
    assert!(rel_diff(component(1, "y"), 200.0) < 1e-6, "B_y at -z = {}", component(1, "y"));
    // The other components vanish; 1e-9 µT is far below any meaningful field.
    assert!(component(0, "x").abs() < 1e-9 && component(0, "y").abs() < 1e-9);
    assert!(component(1, "x").abs() < 1e-9 && component(1, "z").abs() < 1e-9);
}

#[test]
fn evaluating_malformed_json_exits_1_with_the_pointer_and_serdes_message() {
    let doc = r#"{"frequency_hz": 50, "conductors": [{"id": "a", "radius_m": , "path": []}], "points": []}"#;
    let out = evaluate_stdin(doc);
    assert_rejected_with(&out, &["/conductors/0/radius_m", "expected value", "line 1"]);
}

#[test]
fn evaluating_truncated_json_exits_1_and_blames_the_whole_document() {
    let out = evaluate_stdin(r#"{"frequency_hz": 50,"#);
    assert_rejected_with(&out, &["(document)", "EOF while parsing"]);
}

#[test]
fn evaluating_a_document_with_an_unknown_field_exits_1_with_its_pointer() {
    let doc = r#"{"frequency_hz": 50, "conductors": [
        {"id": "a", "radius_m": 0.01, "path": [[0, 0, 0], [1, 0, 0]], "current": {"rms_a": 1, "phase": 30}}
    ], "points": []}"#;
    let out = evaluate_stdin(doc);
    assert_rejected_with(&out, &["/conductors/0/current/phase", "unknown field `phase`"]);
}

#[test]
fn evaluating_a_document_given_as_an_array_instead_of_an_object_exits_1() {
    let out = evaluate_stdin("[50, [], [], [[0, 0, 0]]]");
    assert_rejected_with(&out, &["(document)"]);
}

#[test]
fn evaluating_a_conductor_of_zero_radius_exits_1_with_its_pointer() {
    let doc = r#"{"frequency_hz": 50, "conductors": [
        {"id": "a", "radius_m": 0, "path": [[0, 0, 0], [1, 0, 0]], "current": {"rms_a": 1}}
    ], "points": [[0, 1, 0]]}"#;
    let out = evaluate_stdin(doc);
    assert_rejected_with(&out, &["/conductors/0/radius_m", "radius must be positive"]);
}

#[test]
fn evaluating_a_missing_file_exits_2_and_names_the_file() {
    let missing = std::env::temp_dir().join(format!("fluxbound-cli-{}-does-not-exist.json", std::process::id()));
    let missing = missing.to_str().unwrap();
    let out = fluxbound(&["evaluate", "--input", missing], None);
    let stderr = stderr_of(&out);
    assert_eq!(out.status.code(), Some(2), "stderr: {stderr}");
    assert!(out.stdout.is_empty());
    assert!(stderr.contains(missing), "stderr should name {missing}, was: {stderr}");
    assert_no_panic_text(&stderr);
}

// ------------------------------------------------------------------- check

#[test]
fn checking_a_valid_site_exits_0_and_prints_ok() {
    let out = fluxbound(&["check", data("site-valid.json").to_str().unwrap()], None);
    let stdout = stdout_of(&out);
    assert_eq!(out.status.code(), Some(0), "stdout: {stdout}\nstderr: {}", stderr_of(&out));
    assert!(stdout.starts_with("ok"), "stdout: {stdout}");
    assert!(stdout.contains("3 conductor(s)"), "stdout: {stdout}");
}

#[test]
fn checking_a_site_from_stdin_reads_standard_input() {
    let text = std::fs::read_to_string(data("site-valid.json")).unwrap();
    let out = fluxbound(&["check", "-"], Some(&text));
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    assert!(stdout_of(&out).starts_with("ok"));
}

#[test]
fn checking_an_invalid_site_exits_1_and_lists_every_problem_with_its_pointer() {
    let out = fluxbound(&["check", data("site-invalid.json").to_str().unwrap()], None);
    let stdout = stdout_of(&out);
    assert_eq!(out.status.code(), Some(1), "stdout: {stdout}\nstderr: {}", stderr_of(&out));
    assert!(!stdout.starts_with("ok"), "stdout: {stdout}");
    assert!(stdout.contains("4 problem(s)"), "stdout: {stdout}");
    for (pointer, detail) in [
        ("/frequency_hz", "frequency must be between 1 and 3000 Hz"),
        ("/conductors/0/radius_m", "radius must be positive"),
        ("/conductors/1/circuit", "unknown circuit 'T9'"),
        ("/areas/0/polygon", "a polygon needs at least 3 vertices"),
    ] {
        let line = format!("{pointer}: {detail}");
        assert!(stdout.contains(&line), "missing {line:?} in:\n{stdout}");
    }
    assert_no_panic_text(&stderr_of(&out));
}

#[test]
fn checking_a_site_written_to_a_temp_file_reports_a_problem_in_a_position() {
    let site = r#"{"frequency_hz": 60,
        "conductors": [{"id": "c", "radius_m": 0.01, "current": {"rms_a": 10}, "path": [[0, 0, 0], [5, 0, 0]]}],
        "positions": [{"id": "p", "at": [1, 2, 3, 4]}, {"id": "p", "at": [1, 2]}]}"#;
    let path = temp_file("positions", site);
    let out = fluxbound(&["check", path.to_str().unwrap()], None);
    let _ = std::fs::remove_file(&path);
    let stdout = stdout_of(&out);
    assert_eq!(out.status.code(), Some(1), "stdout: {stdout}");
    assert!(stdout.contains("/positions/0/at"), "stdout: {stdout}");
    assert!(stdout.contains("/positions/1/id"), "duplicate id, stdout: {stdout}");
}

#[test]
fn checking_a_site_with_a_shape_error_exits_1_with_its_pointer() {
    let site =
        r#"{"frequency_hz": 50, "conductors": [], "areas": [{"id": "a", "polygon": [], "height_m": 1, "spacing": 1}]}"#;
    let path = temp_file("shape", site);
    let out = fluxbound(&["check", path.to_str().unwrap()], None);
    let _ = std::fs::remove_file(&path);
    let all = format!("{}{}", stdout_of(&out), stderr_of(&out));
    assert_eq!(out.status.code(), Some(1), "output: {all}");
    assert!(all.contains("/areas/0/spacing"), "output: {all}");
    assert_no_panic_text(&stderr_of(&out));
}

#[test]
fn checking_a_missing_file_exits_2_and_names_the_file() {
    let missing = data("no-such-site.json");
    let missing = missing.to_str().unwrap();
    let out = fluxbound(&["check", missing], None);
    let stderr = stderr_of(&out);
    assert_eq!(out.status.code(), Some(2), "stderr: {stderr}");
    assert!(stderr.contains(missing), "stderr: {stderr}");
}

// -------------------------------------------------------------------- help

#[test]
fn help_exits_0_and_lists_the_evaluate_and_check_commands() {
    let out = fluxbound(&["--help"], None);
    let stdout = stdout_of(&out);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr_of(&out));
    assert!(stdout.contains("evaluate"), "stdout: {stdout}");
    assert!(stdout.contains("check"), "stdout: {stdout}");
    assert!(stdout.contains("qualified assessors"), "the long help carries the main caution: {stdout}");
}

#[test]
fn running_without_a_command_is_a_usage_error_with_exit_code_2() {
    let out = fluxbound(&[], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    assert!(stderr_of(&out).contains("Usage"), "stderr: {}", stderr_of(&out));
}
