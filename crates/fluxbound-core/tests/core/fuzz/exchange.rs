//! Route import on arbitrary and damaged files: no panic, whatever the
//! bytes (the DXF reader is an outside crate, so this also checks what it
//! does with truncated and corrupted drawings).

use super::config;
use fluxbound_core::site::exchange::{Format, MappingDoc, import};
use proptest::prelude::*;

fn fixture(name: &str) -> Vec<u8> {
    std::fs::read(format!("{}/tests/conformance/ezdxf/{name}", env!("CARGO_MANIFEST_DIR"))).unwrap()
}

fn mapping() -> MappingDoc {
    serde_json::from_slice(&fixture("routes-mapping.json")).unwrap()
}

/// Every cut of the drawing, at every 97th byte: an error or a site, never a panic.
#[test]
fn every_truncation_of_the_fixture_drawing_is_answered_without_a_panic() {
    let bytes = fixture("routes.dxf");
    let map = mapping();
    for cut in (0..bytes.len()).step_by(97) {
        let _ = import(Format::Dxf, &bytes[..cut], &map);
    }
    let text = fixture("routes.geojson");
    for cut in (0..text.len()).step_by(13) {
        let _ = import(Format::Geojson, &text[..cut], &MappingDoc::default());
    }
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn a_drawing_with_bytes_overwritten_is_answered_without_a_panic(
        edits in proptest::collection::vec((0usize..20_000, any::<u8>()), 1..8)
    ) {
        let mut bytes = fixture("routes.dxf");
        let n = bytes.len();
        for (at, b) in edits {
            bytes[at % n] = b;
        }
        let _ = import(Format::Dxf, &bytes, &mapping());
    }

    #[test]
    fn arbitrary_text_as_any_format_is_answered_without_a_panic(text in ".{0,400}") {
        for f in [Format::Dxf, Format::Geojson, Format::Csv] {
            let _ = import(f, text.as_bytes(), &MappingDoc::default());
        }
    }
}
