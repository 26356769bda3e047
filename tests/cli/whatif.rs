//! `fluxbound whatif phases`: the README's example, from `exceeds` to
//! `within` by re-phasing the second circuit of a cable tray, and its
//! refusals by flag.

use super::{TempPath, assert_rejected_with, fluxbound, manifest_dir, stdout_of};
use serde_json::Value;

const TRAY: &str = "examples/site-control-room-tray.json";

fn worst_verdict(site: &str) -> String {
    let out = fluxbound(&["assess", site, "--format", "json"], None);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let v: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    v["summary"]["worst_verdict"].as_str().unwrap().to_string()
}

#[test]
fn rephasing_the_tray_brings_the_desk_from_exceeds_to_within() {
    let tray = manifest_dir().join(TRAY);
    let tray = tray.to_str().unwrap();
    assert_eq!(worst_verdict(tray), "exceeds");
    let revision = TempPath::unique("tray-revision.json");
    let out = fluxbound(
        &[
            "whatif",
            "phases",
            tray,
            "--circuits",
            "TX1-a,TX1-b",
            "--revision-out",
            revision.to_str().unwrap(),
            "--format",
            "json",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let r: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    assert_eq!(r["counting"]["distinct"], 6);
    assert_eq!(r["method"], "exhaustive");
    assert!(r["ranked"][0]["objective"].as_f64().unwrap() < r["as_built"]["objective"].as_f64().unwrap());
    assert_eq!(worst_verdict(revision.to_str().unwrap()), "within");
    // The plain-words form names the change and carries the cautions.
    let text = stdout_of(&fluxbound(&["whatif", "phases", tray, "--circuits", "TX1-a,TX1-b", "--top", "1"], None));
    assert!(text.contains("TX1-b-A A→C"), "{text}");
    // The feeders share a load: the answer points to the N-1 check.
    assert!(text.contains("Run the N-1 scenarios"), "{text}");
    assert!(text.contains("qualified assessors"), "{text}");
}

#[test]
fn whatif_problems_name_their_flags() {
    let tray = manifest_dir().join(TRAY);
    let out = fluxbound(&["whatif", "phases", tray.to_str().unwrap(), "--circuits", "TX1-a,nope", "--top", "0"], None);
    assert_rejected_with(&out, &["--circuits: the site has no circuit 'nope'", "--top: top must be between 1 and 100"]);
    let out = fluxbound(
        &["whatif", "phases", tray.to_str().unwrap(), "--circuits", "TX1-a", "--table", "no-such-table"],
        None,
    );
    assert_rejected_with(&out, &["--table: unknown table 'no-such-table'"]);
}

/// Writes `text` to a fresh temporary file.
fn file_with(name: &str, text: &str) -> TempPath {
    let p = TempPath::unique(name);
    std::fs::write(&*p, text).unwrap();
    p
}

#[test]
fn scenarios_name_the_worst_and_n_minus_one_needs_load_groups() {
    let tray = manifest_dir().join(TRAY);
    let tray = tray.to_str().unwrap();
    let out = fluxbound(&["whatif", "scenarios", tray, "--format", "json"], None);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let r: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    // Rated (2300 A) against present (2200 A): the ratio scales with the
    // current (Biot–Savart is linear).
    let ratio = |k: usize| r["scenarios"][k]["targets"][0]["ratio"].as_f64().unwrap();
    assert!((ratio(1) / ratio(0) - 2300.0 / 2200.0).abs() < 1e-12, "{r}");
    assert_eq!(r["worst"]["scenario"], "rated");
    // The example's two feeders share one load: with one out, the other
    // carries 4400 A, above its 2300 A rating, and the desk is worst then.
    let out = fluxbound(&["whatif", "scenarios", tray, "--n-minus-1", "--format", "json"], None);
    let r: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    assert_eq!(r["worst"]["scenario"], "TX1: TX1-a out");
    assert_eq!(r["scenarios"][3]["above_rated"][0], "TX1-b");
    assert_eq!(r["scenarios"][3]["load"]["currents_a"]["TX1-b"], 4400.0);
    // Without load groups, N-1 says what to mark.
    let mut plain: Value = serde_json::from_str(&std::fs::read_to_string(tray).unwrap()).unwrap();
    for c in plain["circuits"].as_array_mut().unwrap() {
        c.as_object_mut().unwrap().remove("load_group");
    }
    let plain_file = file_with("tray-no-groups.json", &plain.to_string());
    let out = fluxbound(&["whatif", "scenarios", plain_file.to_str().unwrap(), "--n-minus-1"], None);
    assert_rejected_with(&out, &["--n-minus-1: no circuit of the site has a load_group"]);
    let request = file_with(
        "scenarios.json",
        r#"{"scenarios": [{"name": "x", "load": {"kind": "scale", "factors": {"nope": 2}}}]}"#,
    );
    let out = fluxbound(&["whatif", "scenarios", tray, "--request", request.to_str().unwrap()], None);
    assert_rejected_with(&out, &["/scenarios/0/load/factors/nope: unknown circuit 'nope'"]);
}

#[test]
fn a_move_sideways_finds_the_smallest_move_and_writes_it_as_a_site() {
    let tray = manifest_dir().join(TRAY);
    let tray = tray.to_str().unwrap();
    let revision = TempPath::unique("tray-moved.json");
    let out = fluxbound(
        &["whatif", "move", tray, "--circuits", "TX1-a,TX1-b", "--by", "3,0,0", "--steps", "6", "--revision-out"]
            .into_iter()
            .chain([revision.to_str().unwrap(), "--format", "json"])
            .collect::<Vec<_>>(),
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let r: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    let d = r["smallest"]["distance_m"].as_f64().unwrap();
    assert!(d > 0.0 && d < 0.5, "{d}");
    assert_ne!(worst_verdict(revision.to_str().unwrap()), "exceeds");
    let out = fluxbound(&["whatif", "move", tray, "--conductors", "nope", "--by", "0,0,0", "--steps", "0"], None);
    assert_rejected_with(
        &out,
        &[
            "--conductors: the site has no conductor 'nope'",
            "--by: the move is zero",
            "--steps: steps must be between 1 and 200",
        ],
    );
    let out = fluxbound(&["whatif", "move", tray, "--circuits", "TX1-a", "--by", "1,2"], None);
    assert_rejected_with(&out, &["--by: give three numbers DX,DY,DZ in metres"]);
}

#[test]
fn a_loop_from_a_file_reports_its_current_and_its_problems_by_file() {
    let tray = manifest_dir().join(TRAY);
    let tray = tray.to_str().unwrap();
    let good = file_with(
        "loop.json",
        r#"{"path": [[-0.1, -8, 0.3], [0.6, -8, 0.3], [0.6, 8, 0.3], [-0.1, 8, 0.3]], "wire_radius_m": 0.005,
            "resistance": {"kind": "given", "ohm": 0.01}}"#,
    );
    let text = stdout_of(&fluxbound(&["whatif", "loop", tray, good.to_str().unwrap()], None));
    assert!(text.contains("loop current"), "{text}");
    assert!(text.contains("qualified assessors"), "{text}");
    let bad = file_with(
        "loop-bad.json",
        r#"{"path": [[0, 0, 1], [1, 0, 1], [1, 1, 1]], "wire_radius_m": -1, "resistance": {"kind": "given", "ohm": 0.01}}"#,
    );
    let out = fluxbound(&["whatif", "loop", tray, bad.to_str().unwrap()], None);
    assert_rejected_with(&out, &["/wire_radius_m: the loop's wire radius must be positive"]);
}
