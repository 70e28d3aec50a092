//! Which rows take part: the settings' row condition (`keepRows`, "Keep rows where …")
//! evaluated over the table (file and derived columns), before the points are made, so a
//! row it does not keep takes no part in anything after: scaling, the lens, the cover,
//! the clusters, the node statistics of the graph.
//!
//! Rows the condition does not keep are counted apart from rows left out later for a
//! missing value in a chosen column and from rows set aside by denoising ([`crate::points`]); among them, the rows where the
//! condition could not be decided because a value it reads is missing are counted too
//! (the rule for missing values is in [`crate::derive::condition`]).
//!
//! A condition that keeps no row, or a single row, is refused with a message that names
//! it: a graph needs at least two rows, and the caller keeps its previous graph.
//!
//! What it is not: the language ([`crate::derive`]) or the missing-value rule of the
//! chosen columns ([`crate::points`]).

use serde::Serialize;

use crate::derive::{self, condition};
use crate::error::{Error, Result};
use crate::settings::Settings;
use crate::table::{Column, ColumnData, Table, MISSING_CODE};
use crate::timecol;

/// The settings field of the row condition.
pub const FIELD: &str = "keepRows";

/// The rows a condition keeps, and what it set aside.
#[derive(Debug, Clone, PartialEq)]
pub struct RowSubset {
    /// The condition, as written in the settings.
    pub condition: String,
    /// One flag per table row: kept or not.
    pub keep: Vec<bool>,
    pub kept: usize,
    /// Rows not kept (the condition was false or unknown there).
    pub not_kept: usize,
    /// Of `not_kept`, rows where the condition was unknown: a value it reads is missing.
    pub undecided: usize,
}

/// Syntax checks that need no data: the condition parses and is not blank.
pub fn validate(text: &str) -> Result<()> {
    if text.trim().is_empty() {
        return Err(Error::settings(FIELD, "the condition is empty; leave keepRows out to keep every row"));
    }
    derive::parse_condition(text).map_err(|e| Error::settings(FIELD, e.render(text)))?;
    Ok(())
}

/// The rows of `table` (with the settings' derived columns already appended) that the
/// settings' condition keeps, or `None` when there is no condition (every row).
pub fn select(table: &Table, s: &Settings) -> Result<Option<RowSubset>> {
    let Some((keep, undecided)) = flags(table, s)? else { return Ok(None) };
    let kept = keep.iter().filter(|&&k| k).count();
    let first_kept = keep.iter().position(|&k| k);
    check_kept(s, &table.name, table.n_rows, kept, undecided, first_kept)?;
    let text = s.keep_rows.clone().expect("a condition");
    Ok(Some(RowSubset { condition: text, keep, kept, not_kept: table.n_rows - kept, undecided }))
}

/// The condition's verdict on each row of `table` (kept or not) and the number of rows
/// where it could not be decided, with no check on how many rows it keeps; `None` when
/// there is no condition. A run in parts ([`crate::parts`]) calls it on each part (the
/// verdict of a row reads that row alone) and checks the totals with [`check_kept`].
pub fn flags(table: &Table, s: &Settings) -> Result<Option<(Vec<bool>, usize)>> {
    let Some(text) = &s.keep_rows else { return Ok(None) };
    validate(text)?;
    let e = derive::parse_condition(text).expect("validated");
    let verdicts = condition::verdicts(&e, table, &s.missing).map_err(|err| Error::settings(FIELD, err.render(text)))?;
    let keep: Vec<bool> = verdicts.iter().map(|&v| v == condition::YES).collect();
    let undecided = verdicts.iter().filter(|&&v| v == condition::UNKNOWN).count();
    Ok(Some((keep, undecided)))
}

/// Refuses a condition that keeps no row or a single row (0-based `first_kept`) of the
/// `n_rows` rows of the table named `name`.
pub fn check_kept(s: &Settings, name: &str, n_rows: usize, kept: usize, undecided: usize, first_kept: Option<usize>) -> Result<()> {
    let Some(text) = &s.keep_rows else { return Ok(()) };
    let why = if undecided > 0 {
        format!(" ({undecided} of the {n_rows} rows could not be decided: a value the condition reads is missing there)")
    } else {
        String::new()
    };
    match kept {
        0 => Err(Error::settings(
            FIELD,
            format!("no row of {name} satisfies the condition {text}{why}; a graph needs at least two rows: widen the condition or clear it"),
        )),
        1 => {
            let row = first_kept.expect("one row kept") + 1;
            Err(Error::settings(
                FIELD,
                format!("only data row {row} of {name} satisfies the condition {text}{why}; a graph needs at least two rows: widen the condition or clear it"),
            ))
        }
        _ => Ok(()),
    }
}

/// What the page needs to write a condition on one column: a range of numbers, the
/// values of a text column with their counts, or the first and last instant of a
/// date-time column. JSON: `{name, kind: "number" | "category" | "time", missing, min, max,
/// levels: [[value, rows]], moreLevels, first, last}`.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ColumnOverview {
    pub name: String,
    pub kind: &'static str,
    /// Rows with no value (NaN, an empty cell; numeric fill values are not counted here).
    pub missing: usize,
    /// A number column's range; a date-time column's, in seconds since 1970 UTC.
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// A text column's most common values and their row counts, most rows first (ties in
    /// the column's order), at most the number asked for.
    pub levels: Vec<(String, usize)>,
    /// Values of the text column not listed in `levels`.
    pub more_levels: usize,
    /// A date-time column's first and last instants, as ISO 8601 text: in the column's
    /// zone for a time column, in UTC for text that reads as date-times.
    pub first: Option<String>,
    pub last: Option<String>,
    /// The offset (`+02:00`, `+00:00`) on whose clock a condition reads a time written
    /// without one, when the column has a single offset (UTC otherwise).
    pub clock: Option<String>,
}

/// The overview of `col` (see [`ColumnOverview`]), listing at most `max_levels` values.
pub fn overview(col: &Column, max_levels: usize) -> ColumnOverview {
    let mut o = ColumnOverview {
        name: col.name.clone(),
        kind: "number",
        missing: 0,
        min: None,
        max: None,
        levels: Vec::new(),
        more_levels: 0,
        first: None,
        last: None,
        clock: None,
    };
    let range = |v: &[f64]| {
        let present: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
        let lo = present.iter().copied().reduce(f64::min);
        let hi = present.iter().copied().reduce(f64::max);
        (v.len() - present.len(), lo, hi)
    };
    match &col.data {
        ColumnData::Number(v) => (o.missing, o.min, o.max) = range(v),
        ColumnData::Time(t) => {
            o.kind = "time";
            (o.missing, o.min, o.max) = range(&t.seconds);
            o.first = o.min.and_then(|x| t.text_of(x));
            o.last = o.max.and_then(|x| t.text_of(x));
            o.clock = t.zone.single().map(timecol::offset_text);
        }
        ColumnData::Category { codes, levels } => match timecol::time_values(col) {
            Some(seconds) => {
                o.kind = "time";
                (o.missing, o.min, o.max) = range(&seconds);
                o.first = o.min.map(timecol::iso_utc);
                o.last = o.max.map(timecol::iso_utc);
            }
            None => {
                o.kind = "category";
                let mut counts = vec![0usize; levels.len()];
                for &c in codes.iter() {
                    match c {
                        MISSING_CODE => o.missing += 1,
                        c => counts[c as usize] += 1,
                    }
                }
                let mut order: Vec<usize> = (0..levels.len()).filter(|&k| counts[k] > 0).collect();
                order.sort_by_key(|&k| std::cmp::Reverse(counts[k]));
                o.more_levels = order.len().saturating_sub(max_levels);
                o.levels = order.into_iter().take(max_levels).map(|k| (levels[k].clone(), counts[k])).collect();
            }
        },
    }
    o
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    fn table() -> Table {
        Table::from_columns(
            "t.csv",
            vec![
                Column::number("x", vec![1.0, 2.0, f64::NAN, 4.0, 5.0]),
                Column::category("site", vec![0, 1, 0, crate::table::MISSING_CODE, 1], vec!["north".into(), "ridge".into()]),
            ],
        )
        .unwrap()
    }

    fn with(cond: &str) -> Settings {
        let mut s = Settings::plain(vec!["x".into()], crate::settings::Lens::Principal { component: 1 }, crate::settings::CoverSettings::uniform(2, 0.2), crate::settings::Clustering::SingleLinkage { gap_bins: 5 });
        s.keep_rows = Some(cond.into());
        s
    }

    #[test]
    fn counts_kept_not_kept_and_undecided() {
        let r = select(&table(), &with("x > 1 and site == 'ridge'")).unwrap().unwrap();
        // Rows: (1, north) no; (2, ridge) yes; (NaN, north) no (false and unknown is false);
        // (4, missing) unknown; (5, ridge) yes.
        assert_eq!(r.keep, vec![false, true, false, false, true]);
        assert_eq!((r.kept, r.not_kept, r.undecided), (2, 3, 1));
        assert!(select(&table(), &Settings { keep_rows: None, ..with("x > 0") }).unwrap().is_none());
    }

    #[test]
    fn overviews_of_numbers_texts_and_times() {
        let t = table();
        let o = overview(&t.columns[0], 10);
        assert_eq!((o.kind, o.missing, o.min, o.max), ("number", 1, Some(1.0), Some(5.0)));
        let o = overview(&t.columns[1], 1);
        assert_eq!((o.kind, o.missing, o.levels.clone(), o.more_levels), ("category", 1, vec![("north".to_string(), 2)], 1));
        let when = Column::category("when", vec![1, 0, MISSING_CODE], vec!["2013-06-01T04:00:00Z".into(), "2013-06-01 08:00+02:00".into()]);
        let o = overview(&when, 10);
        assert_eq!((o.kind, o.missing), ("time", 1));
        assert_eq!((o.first.as_deref(), o.last.as_deref()), (Some("2013-06-01T04:00:00Z"), Some("2013-06-01T06:00:00Z")));
    }

    #[test]
    fn keeping_no_row_or_one_row_is_refused_naming_the_condition() {
        let e = select(&table(), &with("x > 100")).unwrap_err().to_string();
        assert!(e.starts_with("setting 'keepRows': no row of t.csv satisfies the condition x > 100"), "{e}");
        assert!(e.contains("1 of the 5 rows could not be decided"), "{e}");
        let e = select(&table(), &with("x == 4 or x == 5 and site == 'north'")).unwrap_err().to_string();
        assert!(e.contains("only data row 4 of t.csv satisfies the condition x == 4 or x == 5 and site == 'north'"), "{e}");
        let e = validate("  ").unwrap_err().to_string();
        assert!(e.contains("keepRows") && e.contains("empty"), "{e}");
    }
}
