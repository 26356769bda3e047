//! The search key of a name: what the case-insensitive name filter
//! compares, computed here in Rust and stored beside the name, so that
//! SQLite and PostgreSQL (whose own `LOWER` differ: SQLite folds ASCII
//! only) give the same answer for any Unicode name.
//!
//! The key is `NFC(fold(NFD(name)))`: Unicode full case folding (Unicode
//! §3.13, default folding, `CaseFolding.txt` statuses C and F, so "ß"
//! becomes "ss") between canonical decomposition and composition. Two
//! names that are canonical caseless matches (§3.13 D145) get the same key,
//! whatever mix of composed and decomposed characters they were typed in;
//! composing at the end keeps "ü" one character, so a search for "u" does
//! not find "über" through its decomposed form. The tables are ICU4X's
//! (`icu_normalizer`, `icu_casemap`, compiled in; no data is loaded at run
//! time).

use icu_casemap::CaseMapper;
use icu_normalizer::{ComposingNormalizer, DecomposingNormalizer};

/// The search key of `name` (see the module docs).
pub fn search_key(name: &str) -> String {
    let decomposed = DecomposingNormalizer::new_nfd().normalize(name);
    let folded = CaseMapper::new().fold_string(&decomposed);
    ComposingNormalizer::new_nfc().normalize(&folded).into_owned()
}

/// A `LIKE` pattern that finds `term` anywhere in a search key: the term's
/// own key with `\`, `%` and `_` escaped (used with `ESCAPE '\'`, which both
/// databases read alike).
pub fn contains_pattern(term: &str) -> String {
    let key = search_key(term);
    let mut pattern = String::with_capacity(key.len() + 2);
    pattern.push('%');
    for c in key.chars() {
        if matches!(c, '\\' | '%' | '_') {
            pattern.push('\\');
        }
        pattern.push(c);
    }
    pattern.push('%');
    pattern
}
