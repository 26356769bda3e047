//! The survey CSV: arbitrary text, and CSV built from valid rows with odd
//! cells (numbers such as 1e308, -0, a decimal comma, NaN; quotes, line
//! breaks inside quotes, a byte-order mark, blank lines, CRLF) and then
//! edited. Every problem must name a line of the text (`line N` with N
//! between 1 and the number of lines) and, when it names a column, one the
//! text holds.

use super::config;
use super::mutate::{TextEdit, edited, text_edits};
use fluxbound_core::survey::{CSV_OPTIONAL_COLUMNS, CSV_REQUIRED_COLUMNS, parse_measurements, parse_measurements_with};
use proptest::prelude::*;

/// Checks one problem text against the CSV `text` it is about.
fn assert_located(text: &str, problem: &str) {
    let lines = text.split('\n').count() as u64;
    let rest = problem.strip_prefix("line ").unwrap_or_else(|| panic!("no line in {problem:?}"));
    let digits: String = rest.chars().take_while(char::is_ascii_digit).collect();
    let line: u64 = digits.parse().unwrap_or_else(|_| panic!("no line number in {problem:?}"));
    assert!((1..=lines.max(1)).contains(&line), "{problem:?}: the text has {lines} line(s)");
    let rest = &rest[digits.len()..];
    if let Some(column) = rest.strip_prefix(", column ") {
        let known = CSV_REQUIRED_COLUMNS.iter().chain(CSV_OPTIONAL_COLUMNS.iter());
        let named = known.clone().any(|c| column.starts_with(&format!("{c}: ")));
        // An unknown column is named as read: quotes removed (a doubled
        // quote inside stands for one), so compare without quotes.
        let unquoted = text.replace('"', "");
        let unknown =
            column.split_once(": unknown column").is_some_and(|(name, _)| unquoted.contains(&name.replace('"', "")));
        assert!(named || unknown, "{problem:?} names a column the text does not have");
    } else {
        assert!(rest.starts_with(": "), "{problem:?}");
    }
}

fn check(text: &str, delimiter: Option<u8>) {
    let result = match delimiter {
        Some(d) => parse_measurements_with(text, Some(d)),
        None => parse_measurements(text),
    };
    if let Err(problems) = result {
        assert!(!problems.is_empty(), "an error with no problem in it");
        for p in &problems {
            assert_located(text, p);
        }
    }
}

/// A cell as spreadsheets and hands write them.
fn cell() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => (-1.0e4..1.0e4f64).prop_map(|v| v.to_string()),
        1 => prop_oneof![
            Just("1e308".to_string()),
            Just("-1e308".to_string()),
            Just("1e309".to_string()),
            Just("-0".to_string()),
            Just("5e-324".to_string()),
            Just("12,5".to_string()),
            Just("1.234,5".to_string()),
            Just("NaN".to_string()),
            Just("inf".to_string()),
            Just("".to_string()),
            Just(" 7 ".to_string()),
            Just("\"3\"".to_string()),
            Just("\"a \"\"quoted\"\" id\"".to_string()),
            Just("\"two\nlines\"".to_string()),
            Just("\u{0}".to_string()),
            Just("ü;漢\t".to_string()),
        ],
        1 => "[ -~]{0,8}",
    ]
}

/// A header: the required columns, some optional ones, maybe an unknown
/// one, in any order.
fn header() -> impl Strategy<Value = Vec<String>> {
    let optional = prop::sample::subsequence(CSV_OPTIONAL_COLUMNS.to_vec(), 0..=3);
    let unknown = prop_oneof![3 => Just(None), 1 => "[a-z_ ]{1,8}".prop_map(Some)];
    (optional, unknown, any::<prop::sample::Index>()).prop_map(|(optional, unknown, at)| {
        let mut columns: Vec<String> =
            CSV_REQUIRED_COLUMNS.iter().chain(optional.iter()).map(|c| c.to_string()).collect();
        columns.extend(unknown);
        let k = at.index(columns.len());
        columns.rotate_left(k);
        columns
    })
}

/// A CSV text: header, rows (sometimes a cell short or long), a delimiter,
/// CRLF or LF, a byte-order mark and blank lines now and then.
fn csv_text() -> impl Strategy<Value = (String, u8)> {
    let rows = prop::collection::vec(prop::collection::vec(cell(), 4..=9), 0..12);
    let delimiter = prop::sample::select(vec![b',', b';', b'\t']);
    (header(), rows, delimiter, any::<bool>(), any::<bool>(), any::<bool>()).prop_map(
        |(header, rows, delimiter, crlf, bom, blank)| {
            let d = char::from(delimiter).to_string();
            let end = if crlf { "\r\n" } else { "\n" };
            let mut text = if bom { "\u{feff}".to_string() } else { String::new() };
            text.push_str(&header.join(&d));
            for (i, row) in rows.iter().enumerate() {
                text.push_str(end);
                if blank && i % 3 == 0 {
                    text.push_str(end);
                }
                text.push_str(&row.join(&d));
            }
            (text, delimiter)
        },
    )
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn arbitrary_text_as_survey_csv_never_panics_and_every_problem_names_a_line(
        text in prop::collection::vec(
            prop_oneof![
                4 => prop::sample::select(vec![',', ';', '\t', '"', '\n', '\r', '.', '-', 'e', '0', '1', '5', ' ', '\u{feff}']),
                1 => any::<char>(),
            ],
            0..300,
        ).prop_map(|c| c.into_iter().collect::<String>()),
    ) {
        check(&text, None);
    }

    #[test]
    fn arbitrary_bytes_as_survey_csv_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..300)) {
        check(&String::from_utf8_lossy(&bytes), None);
    }

    #[test]
    fn built_and_edited_survey_csv_never_panics_and_every_problem_names_a_line_and_column(
        (text, delimiter) in csv_text(),
        given in any::<bool>(),
        edits in prop_oneof![1 => Just(Vec::<TextEdit>::new()), 2 => text_edits()],
    ) {
        let text = edited(&text, &edits);
        check(&text, given.then_some(delimiter));
    }
}
