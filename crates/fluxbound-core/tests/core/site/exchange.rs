//! Route import and export (`site/exchange`): DXF and GeoJSON fixtures
//! written by outside libraries (tests/conformance/ezdxf: ezdxf 1.4.2 and
//! GeographicLib 2.1, script committed), CSV rows worked by hand, and round
//! trips of the examples through both export formats.

use fluxbound_core::site::exchange::{
    Format, ImportError, Imported, MappingDoc, export_dxf, export_geojson, export_mapping, import,
};
use fluxbound_core::site::validate_site;
use fluxbound_core::site::wire::{GeoreferenceDoc, SiteDoc};
use serde_json::Value;

const FIXTURES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/conformance/ezdxf");

fn fixture(name: &str) -> Vec<u8> {
    std::fs::read(format!("{FIXTURES}/{name}")).unwrap()
}

fn mapping(name: &str) -> MappingDoc {
    serde_json::from_slice(&fixture(name)).unwrap()
}

fn expected() -> Value {
    serde_json::from_slice(&fixture("expected.json")).unwrap()
}

fn example(name: &str) -> SiteDoc {
    let path = format!("{}/../../examples/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn numbers(v: &Value) -> Vec<f64> {
    match v {
        Value::Number(n) => vec![n.as_f64().unwrap()],
        Value::Array(a) => a.iter().flat_map(numbers).collect(),
        _ => panic!("not numbers: {v}"),
    }
}

/// Every coordinate of `got` within `tol_m` of `want` (same count).
fn assert_close(what: &str, got: &[f64], want: &[f64], tol_m: f64) {
    assert_eq!(got.len(), want.len(), "{what}: {got:?} against {want:?}");
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() <= tol_m, "{what}: {g} against {w} (tolerance {tol_m} m)");
    }
}

/// The imported items match the fixture's list: same ids, in order, and
/// coordinates within `tol_m`.
fn assert_matches(imported: &Imported, want: &Value, tol_m: f64) {
    let site = serde_json::to_value(&imported.site).unwrap();
    for (section, coords) in [("conductors", "path"), ("positions", "at"), ("areas", "polygon")] {
        let got = site[section].as_array().unwrap();
        let exp = want[section].as_array().unwrap();
        let got_ids: Vec<&str> = got.iter().map(|c| c["id"].as_str().unwrap()).collect();
        let exp_ids: Vec<&str> = exp.iter().map(|c| c["id"].as_str().unwrap()).collect();
        assert_eq!(got_ids, exp_ids, "{section}");
        for (g, e) in got.iter().zip(exp) {
            assert_close(&format!("{section} {}", e["id"]), &numbers(&g[coords]), &numbers(&e[coords]), tol_m);
        }
    }
}

#[test]
fn the_ezdxf_drawing_imports_with_every_supported_entity_at_the_coordinates_the_script_wrote() {
    // Source: tests/conformance/ezdxf/generate.py (ezdxf 1.4.2) wrote the
    // drawing in millimetres at national grid coordinates near 2.6e9 mm and
    // computed the site metres itself, by scale · R(30°) · (p − origin).
    // Tolerance 1e-8 m: the grid coordinates carry a rounding of about
    // 2.6e9 × 1.1e-16 ≈ 3e-7 mm = 3e-10 m in each of the two programs.
    let imported = import(Format::Dxf, &fixture("routes.dxf"), &mapping("routes-mapping.json")).unwrap();
    let want = expected();
    assert_matches(&imported, &want["dxf"], 1e-8);
    let site = &imported.site;
    let riser = site.conductors.iter().find(|c| c.id == "riser-n").unwrap();
    assert_eq!(riser.radius_m, 0.015, "the layer gives no radius: the mapping's default");
    assert!(
        imported.notes.iter().any(|n| n == "layer RISER-N: radius_m 0.015 m taken from the mapping's defaults"),
        "{:?}",
        imported.notes
    );
    let cable = site.conductors.iter().find(|c| c.id == "cable-a").unwrap();
    assert_eq!(cable.share, Some(0.5));
    assert!(validate_site(site).is_ok(), "{:?}", validate_site(site).err());
}

#[test]
fn unsupported_and_unmapped_entities_of_the_drawing_are_listed_as_skipped() {
    // Source: the script's list of what it drew that cannot be imported
    // (a CIRCLE, a TEXT, a LINE on an unmapped layer, an LWPOLYLINE with an
    // arc segment, a POINT on a conductor layer): each listed, none more.
    let imported = import(Format::Dxf, &fixture("routes.dxf"), &mapping("routes-mapping.json")).unwrap();
    let want = expected();
    let want: Vec<(String, String)> = want["dxf"]["skipped"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| (s["what"].as_str().unwrap().to_string(), s["layer"].as_str().unwrap().to_string()))
        .collect();
    let got: Vec<(String, String)> =
        imported.skipped.iter().map(|s| (s.what.clone(), s.layer.clone().unwrap_or_default())).collect();
    assert_eq!(got, want, "{:#?}", imported.skipped);
    for s in &imported.skipped {
        assert!(s.at.starts_with("handle "), "{s}");
        assert!(!s.reason.is_empty());
    }
    let bulge = imported.skipped.iter().find(|s| s.what == "LWPOLYLINE").unwrap();
    assert!(bulge.reason.contains("arc"), "{}", bulge.reason);
    let walls = imported.skipped.iter().find(|s| s.layer.as_deref() == Some("WALLS")).unwrap();
    assert!(walls.reason.contains("not in the mapping"), "{}", walls.reason);
}

#[test]
fn the_geojson_in_longitude_and_latitude_imports_at_the_local_points_it_was_made_from() {
    // Source: generate.py chose local points and converted them with
    // GeographicLib 2.1's Geodesic.WGS84.Direct; the import inverts with the
    // geodesic inverse problem. Tolerance 1e-7 m: both solutions are good
    // to about 15 nm (Karney 2013 §9); 0.1 µm leaves margin and stays
    // below the 1 µm the issue asks for.
    let imported =
        import(Format::Geojson, &fixture("routes.geojson"), &mapping("routes-geojson-mapping.json")).unwrap();
    let want = expected();
    assert_matches(&imported, &want["geojson"], 1e-7);
    let ats: Vec<(&str, &str)> = imported.skipped.iter().map(|s| (s.what.as_str(), s.at.as_str())).collect();
    assert_eq!(ats, [("MultiPoint", "/features/5"), ("LineString", "/features/6")]);
    assert!(imported.skipped[1].reason.contains("circuit"), "{}", imported.skipped[1]);
    assert!(imported.notes.iter().any(|n| n.contains("properties not used: name")), "{:?}", imported.notes);
    assert!(imported.notes.iter().any(|n| n.contains("radius_m 0.01")), "{:?}", imported.notes);
    assert!(validate_site(&imported.site).is_ok(), "{:?}", validate_site(&imported.site).err());
}

/// Largest distance between corresponding vertices of two sites of the
/// same shape.
fn largest_vertex_gap_m(a: &SiteDoc, b: &SiteDoc) -> f64 {
    let (a, b) = (serde_json::to_value(a).unwrap(), serde_json::to_value(b).unwrap());
    let mut gap: f64 = 0.0;
    for (section, coords) in [("conductors", "path"), ("positions", "at"), ("areas", "polygon")] {
        let (x, y) = (a[section].as_array().unwrap(), b[section].as_array().unwrap());
        assert_eq!(x.len(), y.len(), "{section}");
        for (p, q) in x.iter().zip(y) {
            let (p, q) = (numbers(&p[coords]), numbers(&q[coords]));
            assert_eq!(p.len(), q.len(), "{section} {}", x[0]["id"]);
            gap = p.iter().zip(&q).map(|(u, v)| (u - v).abs()).fold(gap, f64::max);
        }
    }
    gap
}

/// The two sites are equal once every vertex of `b` is replaced by `a`'s.
fn assert_same_but_vertices(a: &SiteDoc, b: &SiteDoc) {
    let mut b = b.clone();
    for (x, y) in b.conductors.iter_mut().zip(&a.conductors) {
        x.path = y.path.clone();
    }
    for (x, y) in b.positions.iter_mut().zip(&a.positions) {
        x.at = y.at.clone();
    }
    for (x, y) in b.areas.iter_mut().zip(&a.areas) {
        x.polygon = y.polygon.clone();
    }
    assert_eq!(a, &b);
}

#[test]
fn a_site_exported_as_geojson_imports_back_within_a_micrometre_in_local_metres_and_through_longitude_and_latitude() {
    // Requirement of issue 15: a round trip keeps every vertex within 1 µm.
    for georeference in
        [None, Some(GeoreferenceDoc { origin_lon_deg: 9.19, origin_lat_deg: 45.46, y_axis_bearing_deg: -12.5 })]
    {
        for name in [
            "site-switch-room.json",
            "site-furnace-feeder.json",
            "site-control-room-tray.json",
            "site-depot-overhead-line.json",
            "site-busbar-room.json",
        ] {
            let mut site = example(name);
            site.georeference = georeference;
            let text = export_geojson(&site).to_string();
            let back = import(Format::Geojson, text.as_bytes(), &MappingDoc::default()).unwrap();
            assert!(back.skipped.is_empty(), "{name}: {:?}", back.skipped);
            let gap = largest_vertex_gap_m(&site, &back.site);
            assert!(gap <= 1e-6, "{name} georeferenced {}: {gap} m", georeference.is_some());
            assert_same_but_vertices(&site, &back.site);
        }
    }
}

#[test]
fn a_site_exported_as_dxf_imports_back_within_a_micrometre_with_the_exported_mapping() {
    // Requirement of issue 15: a round trip keeps every vertex within 1 µm.
    for name in ["site-switch-room.json", "site-furnace-feeder.json", "site-control-room-tray.json"] {
        let site = example(name);
        let drawing = export_dxf(&site);
        let back = import(Format::Dxf, &drawing, &export_mapping(&site)).unwrap();
        assert!(back.skipped.is_empty(), "{name}: {:?}", back.skipped);
        let gap = largest_vertex_gap_m(&site, &back.site);
        assert!(gap <= 1e-6, "{name}: {gap} m");
        let mut want = site.clone();
        want.tables.clear(); // a drawing carries no tables
        assert_same_but_vertices(&want, &back.site);
        assert!(export_dxf(&site) == drawing, "{name}: the export is the same each time");
    }
}

#[test]
fn csv_rows_are_ordered_by_seq_and_grouped_by_conductor_in_the_order_first_seen() {
    // Worked by hand: rows of "b" come first, "a"'s seq 2 before seq 1 in
    // the file; in millimetres, 1500 mm = 1.5 m (radius_m stays metres).
    let text = "conductor_id,seq,x_m,y_m,z_m,circuit,phase,radius_m\n\
                b,1,0,1000,0,T1,B,0.01\n\
                a,2,1500,0,0,T1,A,0.01\n\
                a,1,0,0,0,,,\n\
                b,2,1500,1000,0,,,\n";
    let mut map: MappingDoc =
        serde_json::from_str(r#"{"units": "mm", "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 100}]}"#)
            .unwrap();
    let imported = import(Format::Csv, text.as_bytes(), &map).unwrap();
    let ids: Vec<&str> = imported.site.conductors.iter().map(|c| c.id.as_str()).collect();
    assert_eq!(ids, ["b", "a"]);
    assert_eq!(imported.site.conductors[1].path, vec![[0.0, 0.0, 0.0], [1.5, 0.0, 0.0]]);
    assert_eq!(imported.site.conductors[1].radius_m, 0.01);
    map.circuits.clear();
    let imported = import(Format::Csv, text.as_bytes(), &map).unwrap();
    assert!(imported.site.conductors.is_empty());
    assert_eq!(imported.skipped.len(), 2, "an undeclared circuit skips both, listed: {:?}", imported.skipped);
}

#[test]
fn a_csv_with_a_repeated_seq_or_a_bad_number_is_refused_with_its_line() {
    let text = "conductor_id,seq,x_m,y_m,z_m\na,1,0,0,0\na,1,1,0,0\na,2,x,0,0\n";
    let Err(ImportError::File(p)) = import(Format::Csv, text.as_bytes(), &MappingDoc::default()) else {
        panic!("accepted")
    };
    let details: Vec<&str> = p.iter().map(|q| q.detail.as_str()).collect();
    assert!(details.iter().any(|d| d.starts_with("line 4, column x_m")), "{details:?}");
    let text = "conductor_id,seq,x_m,y_m,z_m\na,1,0,0,0\na,1,1,0,0\n";
    let Err(ImportError::File(p)) = import(Format::Csv, text.as_bytes(), &MappingDoc::default()) else {
        panic!("accepted")
    };
    assert!(p.0[0].detail.starts_with("line 3, column seq"), "{p:?}");
}

#[test]
fn a_mapping_whose_conductor_layer_names_an_undeclared_circuit_is_refused_with_a_pointer() {
    let map: MappingDoc =
        serde_json::from_str(r#"{"layers": {"L/1": {"kind": "conductor", "circuit": "X", "phase": "A"}}}"#).unwrap();
    let Err(ImportError::Mapping(p)) = import(Format::Dxf, &fixture("routes.dxf"), &map) else { panic!("accepted") };
    let pointers: Vec<&str> = p.iter().map(|q| q.pointer.as_str()).collect();
    assert_eq!(pointers, ["/layers/L~11/circuit", "/layers/L~11/radius_m"]);
}

#[test]
fn a_drawing_without_units_needs_units_in_the_mapping() {
    let mut site = example("site-switch-room.json");
    site.georeference = None;
    let text = String::from_utf8(export_dxf(&site)).unwrap();
    // $INSUNITS 6 (metres) → 0 (unitless): the value is two lines after the name.
    let mut lines: Vec<&str> = text.lines().collect();
    let k = lines.iter().position(|l| l.trim() == "$INSUNITS").expect("the header states units");
    assert_eq!(lines[k + 2].trim(), "6");
    lines[k + 2] = "0";
    let unitless = lines.join("\n");
    let mut map = export_mapping(&site);
    map.units = None;
    let Err(ImportError::Mapping(p)) = import(Format::Dxf, unitless.as_bytes(), &map) else { panic!("accepted") };
    assert_eq!(p.0[0].pointer, "/units");
    map.units = Some(fluxbound_core::site::exchange::Units::Millimetre);
    let back = import(Format::Dxf, unitless.as_bytes(), &map).unwrap();
    // Worked by hand: the first vertex, 1.0 m in the drawing, read as
    // 1.0 mm = 0.001 m (tolerance: one rounding of the division).
    assert_eq!(site.conductors[0].path[0][0], 1.0);
    assert!((back.site.conductors[0].path[0][0] - 0.001).abs() < 1e-18);
}

#[test]
fn text_that_is_not_a_drawing_or_not_geojson_is_refused_in_plain_words() {
    for (format, body) in [(Format::Dxf, "hello"), (Format::Geojson, "{\"type\": \"Nothing\"}"), (Format::Geojson, "{")]
    {
        let Err(ImportError::File(p)) = import(format, body.as_bytes(), &MappingDoc::default()) else {
            panic!("{body} accepted")
        };
        assert!(!p.0[0].detail.is_empty());
    }
}

#[test]
fn a_phase_search_over_an_imported_circuit_writes_a_revision_that_validates_and_changes_only_phases() {
    // Imported conductors are ordinary ones: the search's write-back by
    // conductor id applies, no generated-section hook is needed.
    use fluxbound_core::mitigate::phases::{Measure, PhaseSearchDoc, SearchBudget, search_phases};
    let root = format!("{}/../../examples", env!("CARGO_MANIFEST_DIR"));
    let map: MappingDoc =
        serde_json::from_slice(&std::fs::read(format!("{root}/busbar-room-mapping.json")).unwrap()).unwrap();
    let imported = import(Format::Dxf, &std::fs::read(format!("{root}/busbar-room.dxf")).unwrap(), &map).unwrap();
    let doc = imported.site;
    let site = validate_site(&doc).unwrap();
    let req = PhaseSearchDoc { measure: Measure::BUt, ..PhaseSearchDoc::for_circuits(vec!["TR1-LV".into()]) };
    let found = search_phases(&site, &doc, &req, None, &SearchBudget::unlimited()).unwrap();
    let revision = found.revision;
    assert!(validate_site(&revision).is_ok(), "{:?}", validate_site(&revision).err());
    let mut before: Vec<String> = doc.conductors.iter().map(|c| format!("{:?}", c.phase)).collect();
    let mut after: Vec<String> = revision.conductors.iter().map(|c| format!("{:?}", c.phase)).collect();
    before.sort();
    after.sort();
    assert_eq!(before, after, "a re-phasing permutes the phases");
    for (a, b) in doc.conductors.iter().zip(&revision.conductors) {
        assert_eq!((&a.id, &a.path, a.radius_m), (&b.id, &b.path, b.radius_m));
    }
}

#[test]
fn overhead_lines_and_formations_reach_a_drawing_as_the_conductors_they_generate() {
    // A DXF has no place for a line's structures or a formation's sets: the
    // export draws what they generate (validate_site's own expansion), and
    // the drawing reads back as that many conductors at the same vertices.
    for name in ["site-depot-overhead-line.json", "site-busbar-room.json"] {
        let site = example(name);
        let expanded = validate_site(&site).unwrap();
        let flat = fluxbound_core::site::exchange::flatten(&site);
        assert!(flat.overhead_lines.is_empty() && flat.formations.is_empty());
        let drawing = export_dxf(&flat);
        let back = import(Format::Dxf, &drawing, &export_mapping(&flat)).unwrap();
        assert!(back.skipped.is_empty(), "{name}: {:?}", back.skipped);
        let again = validate_site(&back.site).unwrap();
        // Bars expand again from their cross-section in both; every other
        // conductor is one polyline either way.
        assert_eq!(again.conductors().len(), expanded.conductors().len(), "{name}");
        for (a, b) in expanded.conductors().iter().zip(again.conductors()) {
            assert_eq!(a.id, b.id, "{name}");
            for (p, q) in a.path.iter().zip(&b.path) {
                assert!((p - q).norm() <= 1e-6, "{name} {}: {p} vs {q}", a.id);
            }
        }
    }
}
