//! Marks on columns that are in the table but are not measurements: identifiers (record
//! numbers, flight or sample numbers, tail numbers, sample codes) and constants. The page's
//! column list shows the mark with its reason, and the automatic choice of columns leaves
//! marked columns out (a flight number is a whole number, but the distance between flights
//! 1545 and 1546 means nothing).
//!
//! What it is not: a verdict. A marked column can still be ticked by hand; the mark only
//! says why it was not chosen automatically.
//!
//! The rule (heuristics of our own, stated so they can be argued with; tried on the open
//! tables of `tests/data/open_tables.py`):
//! - **constant**: every present value is the same (a `year` column of a one-year file);
//! - **identifier, by values**: a numeric column of whole numbers with at least
//!   [`MIN_RECORDS`] present values of which at least 99 % are distinct (record and row
//!   numbers; measured whole numbers repeat: ozone in parts per billion, 153 days, 67 values);
//! - **identifier, by name**: a numeric column of whole numbers with at least
//!   [`MIN_LABELS`] distinct values whose name has an identifier word (`id`, `no`, `nr`,
//!   `num`, `number`, `code`, `key`, `index`, `idx`, `serial`), or is one word naming a thing
//!   that is counted rather than measured (`flight`, `sample`, `record`, `station`, …:
//!   [`COUNTED_THINGS`]). Words are the name split at spaces, punctuation and lower-to-upper
//!   case changes (`SampleNumber` → sample, number), compared in lower case;
//! - **identifier, text**: a text column with at least [`MIN_LABELS`] levels that are at
//!   least half as many as its present values (sample codes), or with more than
//!   [`MANY_LEVELS`] levels (tail numbers): too many to colour by or to compare; but not
//!   a text column whose present cells are mostly numbers ([`super::MOSTLY_NUMBERS`]): that
//!   is a measurement with a few text cells, which the page offers to read as missing;
//! - a time column is never an identifier (its values are instants, however distinct);
//!   it is a constant when every present instant is the same.

use super::{Column, ColumnData, MISSING_CODE};

/// Present values a column needs before "every value distinct" is read as an identifier.
pub const MIN_RECORDS: usize = 50;
/// Distinct values a named column needs before it is read as an identifier (fewer are
/// more likely groups: a few stations, a few runs).
pub const MIN_LABELS: usize = 20;
/// Levels past which a text column is a label of single records, not a grouping.
pub const MANY_LEVELS: usize = 1000;

/// Words that mark a column of numbers as labels wherever they stand in its name.
pub const IDENTIFIER_WORDS: [&str; 11] = ["id", "ids", "no", "nr", "num", "number", "code", "key", "index", "idx", "serial"];

/// Nouns for things that are counted, not measured: a whole-number column named by one of
/// them alone is a label (flight 1545, sample 12, station 4).
pub const COUNTED_THINGS: [&str; 16] = [
    "flight", "sample", "record", "row", "station", "site", "well", "batch", "lot", "patient", "subject", "case",
    "order", "item", "trial", "specimen",
];

/// Why a column is not a measurement.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
#[serde(tag = "kind", rename_all = "camelCase")]
pub enum Mark {
    /// Labels of records; `why` is one phrase for the column list.
    Identifier { why: String },
    /// One value throughout; `value` as the column list shows it.
    Constant { value: String },
}

/// The mark of `col`, if any (see the module comment).
pub fn mark(col: &Column) -> Option<Mark> {
    match &col.data {
        ColumnData::Number(v) => number_mark(&col.name, v),
        ColumnData::Category { codes, levels } => text_mark(codes, levels),
        ColumnData::Time(t) => {
            let mut present = t.seconds.iter().copied().filter(|x| !x.is_nan());
            let first = present.next()?;
            present.all(|x| x == first).then(|| Mark::Constant { value: t.text_of(first).unwrap_or_default() })
        }
    }
}

fn number_mark(name: &str, values: &[f64]) -> Option<Mark> {
    let mut present = values.iter().copied().filter(|x| !x.is_nan());
    let first = present.next()?;
    if present.clone().all(|x| x == first) {
        return Some(Mark::Constant { value: format_number(first) });
    }
    if !values.iter().all(|x| x.is_nan() || (x.fract() == 0.0 && x.is_finite())) {
        return None;
    }
    let n = values.iter().filter(|x| !x.is_nan()).count();
    if n >= MIN_RECORDS {
        if let Some(distinct) = nearly_all_distinct(values, n) {
            return Some(Mark::Identifier { why: format!("whole numbers, {} of {} distinct", distinct, n) });
        }
    }
    let words = name_words(name);
    let id_word = words.iter().find(|w| IDENTIFIER_WORDS.contains(&w.as_str()));
    let thing = (words.len() == 1 && COUNTED_THINGS.contains(&words[0].as_str())).then(|| &words[0]);
    let word = id_word.or(thing)?;
    let distinct = distinct_up_to(values, MIN_LABELS);
    (distinct >= MIN_LABELS).then(|| Mark::Identifier { why: format!("whole numbers named '{word}'") })
}

fn text_mark(codes: &[u32], levels: &[String]) -> Option<Mark> {
    let present = codes.iter().filter(|&&c| c != MISSING_CODE).count();
    // Levels no row uses (none today, but a level list is not a promise) do not count.
    let used = {
        let mut seen = vec![false; levels.len()];
        for &c in codes.iter().filter(|&&c| c != MISSING_CODE) {
            seen[c as usize] = true;
        }
        seen.iter().filter(|&&s| s).count()
    };
    if used == 1 {
        let only = codes.iter().find(|&&c| c != MISSING_CODE).map(|&c| levels[c as usize].clone())?;
        return Some(Mark::Constant { value: only });
    }
    if super::cells::number_share(codes, levels).is_some_and(|share| share >= super::MOSTLY_NUMBERS) {
        return None;
    }
    if used > MANY_LEVELS {
        return Some(Mark::Identifier { why: format!("{used} distinct texts") });
    }
    (used >= MIN_LABELS && used * 2 >= present)
        .then(|| Mark::Identifier { why: format!("{used} distinct texts in {present} rows") })
}

/// The words of a column name, in lower case: split at anything not a letter or digit and
/// where a lower-case letter is followed by an upper-case one.
pub fn name_words(name: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut cur = String::new();
    let mut prev_lower = false;
    for ch in name.chars() {
        if !ch.is_alphanumeric() {
            if !cur.is_empty() {
                words.push(std::mem::take(&mut cur));
            }
            prev_lower = false;
            continue;
        }
        if ch.is_uppercase() && prev_lower && !cur.is_empty() {
            words.push(std::mem::take(&mut cur));
        }
        prev_lower = ch.is_lowercase() || ch.is_ascii_digit();
        cur.extend(ch.to_lowercase());
    }
    if !cur.is_empty() {
        words.push(cur);
    }
    words
}

/// The number of distinct present values when at least 99 % of the `n` present values are
/// distinct; stops at the first repeat too many (measured whole numbers repeat within the
/// first few hundred rows, so a large column is not read to its end).
fn nearly_all_distinct(values: &[f64], n: usize) -> Option<usize> {
    let allowed = n - (n * 99).div_ceil(100);
    let mut seen: std::collections::HashSet<u64> = std::collections::HashSet::with_capacity(n.min(1 << 16));
    let mut repeats = 0;
    for &x in values.iter().filter(|x| !x.is_nan()) {
        // Whole numbers only reach here; +0.0 for -0.0 so the two count as one value.
        if !seen.insert((x + 0.0).to_bits()) {
            repeats += 1;
            if repeats > allowed {
                return None;
            }
        }
    }
    Some(n - repeats)
}

/// Distinct present values, counting no further than `cap`.
fn distinct_up_to(values: &[f64], cap: usize) -> usize {
    let mut seen: Vec<f64> = Vec::with_capacity(cap);
    for &x in values.iter().filter(|x| !x.is_nan()) {
        if !seen.contains(&x) {
            seen.push(x);
            if seen.len() >= cap {
                break;
            }
        }
    }
    seen.len()
}

fn format_number(x: f64) -> String {
    if x.fract() == 0.0 && x.abs() < 1e15 {
        format!("{}", x as i64)
    } else {
        format!("{x}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn num(name: &str, v: Vec<f64>) -> Option<Mark> {
        mark(&Column::number(name, v))
    }

    fn text(values: &[&str]) -> Option<Mark> {
        let mut levels: Vec<String> = Vec::new();
        let codes = values
            .iter()
            .map(|v| {
                if v.is_empty() {
                    return MISSING_CODE;
                }
                match levels.iter().position(|l| l == v) {
                    Some(i) => i as u32,
                    None => {
                        levels.push(v.to_string());
                        (levels.len() - 1) as u32
                    }
                }
            })
            .collect();
        mark(&Column::category("c", codes, levels))
    }

    #[test]
    fn splits_names_into_words() {
        assert_eq!(name_words("Sample Number"), vec!["sample", "number"]);
        assert_eq!(name_words("SampleNumber"), vec!["sample", "number"]);
        assert_eq!(name_words("tail_num"), vec!["tail", "num"]);
        assert_eq!(name_words("Delta 15 N (o/oo)"), vec!["delta", "15", "n", "o", "oo"]);
        assert_eq!(name_words("pH"), vec!["p", "h"]);
    }

    #[test]
    fn record_numbers_are_identifiers_and_measured_whole_numbers_are_not() {
        let rows: Vec<f64> = (1..=200).map(f64::from).collect();
        assert!(matches!(num("r", rows), Some(Mark::Identifier { .. })));
        // Whole-number measurements repeat (degrees, minutes of delay).
        let temps: Vec<f64> = (0..200).map(|i| f64::from(50 + i % 40)).collect();
        assert_eq!(num("Temp", temps), None);
        // Fractional measurements are never identifiers, however distinct.
        let x: Vec<f64> = (0..600).map(|i| i as f64 * 0.37).collect();
        assert_eq!(num("mean radius", x), None);
        // Too few rows to tell.
        assert_eq!(num("r", (1..=20).map(f64::from).collect()), None);
    }

    #[test]
    fn named_labels_need_whole_numbers_and_enough_values() {
        let flights: Vec<f64> = (0..400).map(|i| f64::from((i * 37) % 300 + 1)).collect();
        assert!(matches!(num("flight", flights.clone()), Some(Mark::Identifier { .. })));
        assert!(matches!(num("Sample Number", flights.clone()), Some(Mark::Identifier { .. })));
        // A word inside a longer name is not a thing counted: flight_time is a duration.
        assert_eq!(num("flight_time", flights.clone()), None);
        // Five stations are groups, not labels of single records.
        let few: Vec<f64> = (0..400).map(|i| f64::from(i % 5)).collect();
        assert_eq!(num("station", few), None);
        let fractional: Vec<f64> = flights.iter().map(|x| x + 0.5).collect();
        assert_eq!(num("flight", fractional), None);
    }

    #[test]
    fn constants_are_marked_with_their_value() {
        assert_eq!(num("year", vec![2013.0, f64::NAN, 2013.0]), Some(Mark::Constant { value: "2013".into() }));
        assert_eq!(text(&["Anvers", "", "Anvers"]), Some(Mark::Constant { value: "Anvers".into() }));
        assert_eq!(num("empty", vec![f64::NAN; 3]), None);
    }

    #[test]
    fn text_labels_and_groupings() {
        let ids: Vec<String> = (0..100).map(|i| format!("N{}A{}", i / 2, i % 2)).collect();
        let ids: Vec<&str> = ids.iter().map(String::as_str).collect();
        assert!(matches!(text(&ids), Some(Mark::Identifier { .. })));
        let groups: Vec<&str> = (0..300).map(|i| ["EWR", "JFK", "LGA"][i % 3]).collect();
        assert_eq!(text(&groups), None);
        // Measurements with a stray text cell are not labels, however distinct.
        let mut measured: Vec<String> = (0..100).map(|i| format!("{}", i as f64 * 0.37)).collect();
        measured[4] = "n/a".into();
        let measured: Vec<&str> = measured.iter().map(String::as_str).collect();
        assert_eq!(text(&measured), None);
    }
}
