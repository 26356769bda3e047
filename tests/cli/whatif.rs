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
