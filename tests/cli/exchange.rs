//! `fluxbound import` and `fluxbound export`.

use super::{TempPath, fluxbound, stderr_of, stdout_of};
use serde_json::Value;

#[test]
fn import_prints_the_busbar_room_site_and_lists_what_it_skipped_on_standard_error() {
    let out =
        fluxbound(&["import", "examples/busbar-room.dxf", "--mapping", "examples/busbar-room-mapping.json"], None);
    assert!(out.status.success(), "{}", stderr_of(&out));
    let site: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    assert_eq!(site["conductors"].as_array().unwrap().len(), 4);
    let err = stderr_of(&out);
    assert!(
        err.contains("skipped LWPOLYLINE at handle") && err.contains("on layer WALLS: the layer is not in the mapping"),
        "{err}"
    );
    assert!(err.contains("skipped TEXT at handle"), "{err}");
}

#[test]
fn import_writes_the_skipped_items_as_json_when_asked() {
    let report = TempPath::unique("report.json");
    let out = fluxbound(
        &[
            "import",
            "examples/busbar-room.dxf",
            "--mapping",
            "examples/busbar-room-mapping.json",
            "--report",
            report.to_str().unwrap(),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr_of(&out));
    let r: Value = serde_json::from_str(&std::fs::read_to_string(&*report).unwrap()).unwrap();
    assert_eq!(r["skipped"].as_array().unwrap().len(), 2, "{r}");
    assert_eq!(r["skipped"][0]["layer"], "WALLS");
}

#[test]
fn an_exported_site_imports_back_to_the_same_document() {
    let geo = TempPath::unique("site.geojson");
    let out = fluxbound(&["export", "examples/site-switch-room.json", "--format", "geojson"], None);
    assert!(out.status.success(), "{}", stderr_of(&out));
    std::fs::write(&*geo, out.stdout).unwrap();
    let back = fluxbound(&["import", geo.to_str().unwrap()], None);
    assert!(back.status.success(), "{}", stderr_of(&back));
    let original: Value = serde_json::from_str(
        &std::fs::read_to_string(super::manifest_dir().join("examples/site-switch-room.json")).unwrap(),
    )
    .unwrap();
    let imported: Value = serde_json::from_str(&stdout_of(&back)).unwrap();
    assert_eq!(imported["conductors"].as_array().unwrap().len(), original["conductors"].as_array().unwrap().len());
    assert_eq!(imported["conductors"][0]["path"], original["conductors"][0]["path"]);
}

#[test]
fn export_dxf_writes_the_mapping_that_reads_it_back() {
    let (dxf, map) = (TempPath::unique("site.dxf"), TempPath::unique("map.json"));
    let out = fluxbound(
        &["export", "examples/site-switch-room.json", "--format", "dxf", "--mapping-out", map.to_str().unwrap()],
        None,
    );
    assert!(out.status.success(), "{}", stderr_of(&out));
    std::fs::write(&*dxf, out.stdout).unwrap();
    let back = fluxbound(&["import", dxf.to_str().unwrap(), "--mapping", map.to_str().unwrap()], None);
    assert!(back.status.success(), "{}", stderr_of(&back));
    assert_eq!(stderr_of(&back), "", "nothing skipped, nothing assumed");
}

#[test]
fn import_of_a_file_without_a_known_extension_names_the_format_flag() {
    let out = fluxbound(&["import", "README.md"], None);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr_of(&out).contains("--format: the file's extension names no format"), "{}", stderr_of(&out));
}

#[test]
fn a_mapping_problem_names_the_mapping_flag_and_its_pointer() {
    let map =
        super::temp_file("map", r#"{"layers": {"BB-L1": {"kind": "conductor", "phase": "A", "radius_m": 0.01}}}"#);
    let out = fluxbound(&["import", "examples/busbar-room.dxf", "--mapping", map.to_str().unwrap()], None);
    assert_eq!(out.status.code(), Some(1));
    let err = stderr_of(&out);
    assert!(
        err.contains("--mapping ") && err.contains("/layers/BB-L1/circuit: a conductor layer needs the circuit"),
        "{err}"
    );
}
