//! Typed columns read from a delimited text file.
//!
//! A [`Table`] holds each column as it arrived: numbers as `f64` with `NaN` marking a
//! missing value, categories as codes into a list of levels, date-times as seconds since
//! 1970 UTC with the zone they were written in ([`crate::timecol`]). Rows keep their position in
//! the file: row `i` of the table is data row `i + 1` of the file (the header not counted).
//! This module parses and types; choosing columns, fill values and scaling happen later,
//! in [`crate::points`], so changing them never re-reads the file.

pub(crate) mod cells;
mod encoding;
pub mod icartt;
pub mod ingest;
pub mod marks;
pub mod merge;
mod reader;
pub mod sheet;
mod sniff;
#[cfg(test)]
mod reader_tests;

pub use reader::{ReadOptions, ReadReport, TableReader};

use std::sync::Arc;

use serde::Serialize;

use crate::error::{Error, Result};
use crate::timecol::{self, TextKind, Times};

/// Code marking a missing category value.
pub const MISSING_CODE: u32 = u32::MAX;

/// A column's cells. The values are shared (`Arc`): copies of a table (the file list's
/// and the engine's, say) hold one set of values, and a change makes its own copy.
#[derive(Debug, Clone, PartialEq)]
pub enum ColumnData {
    /// `NaN` marks a missing value.
    Number(Arc<Vec<f64>>),
    /// `codes[i]` indexes `levels`; [`MISSING_CODE`] marks a missing value.
    Category { codes: Arc<Vec<u32>>, levels: Vec<String> },
    /// Instants: seconds since 1970-01-01 00:00 UTC (`NaN` marks a missing value), with the
    /// zone they were written in and their precision. [`Column::as_numbers`] gives the
    /// seconds, so every numeric use reads a time column as numbers.
    Time(Times),
}

#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    pub name: String,
    pub data: ColumnData,
    /// Why a column that began as numbers became a category: the first cell that was not
    /// a number, as (data row counted from 1, the text). `None` for columns typed from the start.
    pub first_text: Option<(usize, String)>,
    /// Units of the values when the file states them (ICARTT headers), for legends.
    pub unit: Option<String>,
    /// Why a text column that looks like dates was not read as time (see
    /// [`crate::timecol::type_text`]); `None` for every other column.
    pub not_time: Option<String>,
}

impl ColumnData {
    pub fn numbers(values: Vec<f64>) -> ColumnData {
        ColumnData::Number(Arc::new(values))
    }

    pub fn categories(codes: Vec<u32>, levels: Vec<String>) -> ColumnData {
        ColumnData::Category { codes: Arc::new(codes), levels }
    }

    /// Instants (seconds since 1970 UTC) written in `zone`.
    pub fn times(seconds: Vec<f64>, zone: timecol::Zone) -> ColumnData {
        ColumnData::Time(Times::new(seconds, zone))
    }
}

impl Column {
    /// A column of `data` with nothing else said about it.
    pub fn of(name: impl Into<String>, data: ColumnData) -> Column {
        Column { name: name.into(), data, first_text: None, unit: None, not_time: None }
    }

    pub fn number(name: impl Into<String>, values: Vec<f64>) -> Column {
        Column::of(name, ColumnData::numbers(values))
    }

    pub fn category(name: impl Into<String>, codes: Vec<u32>, levels: Vec<String>) -> Column {
        Column::of(name, ColumnData::categories(codes, levels))
    }

    pub fn time(name: impl Into<String>, seconds: Vec<f64>, zone: timecol::Zone) -> Column {
        Column::of(name, ColumnData::times(seconds, zone))
    }

    /// A column of text as a reader finds it: a time column when its values are date-times
    /// ([`timecol::type_text`]), else a category column (with the reason when it looks
    /// like dates but was refused).
    pub fn from_text(name: impl Into<String>, codes: Vec<u32>, levels: Vec<String>) -> Column {
        match timecol::type_text(&codes, &levels) {
            TextKind::Time(t) => Column::of(name, ColumnData::Time(t)),
            TextKind::Refused(why) => Column { not_time: Some(why), ..Column::category(name, codes, levels) },
            TextKind::Text => Column::category(name, codes, levels),
        }
    }

    /// The same column with its units stated.
    pub fn with_unit(mut self, unit: Option<String>) -> Column {
        self.unit = unit;
        self
    }

    pub fn len(&self) -> usize {
        match &self.data {
            ColumnData::Number(v) => v.len(),
            ColumnData::Category { codes, .. } => codes.len(),
            ColumnData::Time(t) => t.len(),
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The values as numbers: a number column's, or a time column's seconds since 1970 UTC.
    pub fn as_numbers(&self) -> Option<&[f64]> {
        match &self.data {
            ColumnData::Number(v) => Some(v),
            ColumnData::Time(t) => Some(&t.seconds),
            ColumnData::Category { .. } => None,
        }
    }

    /// The column's times, when it is a time column.
    pub fn as_times(&self) -> Option<&Times> {
        match &self.data {
            ColumnData::Time(t) => Some(t),
            _ => None,
        }
    }

    pub fn is_time(&self) -> bool {
        matches!(self.data, ColumnData::Time(_))
    }

    /// Row `row`'s value as text, as exports write it: numbers in Rust's shortest form,
    /// times as ISO 8601 ([`Times::text`]); `None` when missing.
    pub fn text_at(&self, row: usize) -> Option<String> {
        match &self.data {
            ColumnData::Number(v) => (!v[row].is_nan()).then(|| format!("{}", v[row])),
            ColumnData::Category { codes, levels } => (codes[row] != MISSING_CODE).then(|| levels[codes[row] as usize].clone()),
            ColumnData::Time(t) => t.text(row),
        }
    }

    /// Summary for the column list; numeric `fill_values` count as missing (not in time
    /// columns, whose values are instants).
    pub fn summary(&self, fill_values: &[f64]) -> ColumnSummary {
        let mark = marks::mark(self);
        let mut out = ColumnSummary {
            name: self.name.clone(),
            kind: "number",
            missing: 0,
            min: None,
            max: None,
            mean: None,
            levels: None,
            first_text: None,
            text_in_numbers: None,
            not_time: self.not_time.clone(),
            time: None,
            mark,
            unit: self.unit.clone(),
        };
        match &self.data {
            ColumnData::Number(v) | ColumnData::Time(Times { seconds: v, .. }) => {
                let fills = if self.is_time() { &[][..] } else { fill_values };
                let (missing, lo, hi, sum, n) = value_stats(v, fills);
                out.missing = missing;
                out.min = (n > 0).then_some(lo);
                out.max = (n > 0).then_some(hi);
                out.mean = (n > 0).then(|| sum / n as f64);
                if let ColumnData::Time(t) = &self.data {
                    out.kind = "time";
                    out.time = Some(TimeSummary::new(t, out.min, out.max));
                }
            }
            ColumnData::Category { codes, levels } => {
                out.kind = "category";
                out.missing = codes.iter().filter(|&&c| c == MISSING_CODE).count();
                out.levels = Some(levels.len());
                out.first_text = self.first_text.as_ref().map(|(r, t)| FirstText { row: *r, text: t.clone() });
                out.text_in_numbers = self.first_text.as_ref().and_then(|(row, text)| {
                    let share = cells::number_share(codes, levels)?;
                    (share >= MOSTLY_NUMBERS).then(|| TextInNumbers { share, row: *row, text: text.clone() })
                });
            }
        }
        out
    }
}

/// Missing values (`NaN` or one of `fills`), and the least, greatest and sum of the others
/// with their count.
#[inline(never)]
fn value_stats(v: &[f64], fills: &[f64]) -> (usize, f64, f64, f64, usize) {
    let mut missing = 0;
    let (mut lo, mut hi, mut sum, mut n) = (f64::INFINITY, f64::NEG_INFINITY, 0.0, 0usize);
    for &x in v {
        if x.is_nan() || fills.contains(&x) {
            missing += 1;
        } else {
            lo = lo.min(x);
            hi = hi.max(x);
            sum += x;
            n += 1;
        }
    }
    (missing, lo, hi, sum, n)
}

/// Share of a text column's present cells that must be numbers before the page offers to
/// read its other cells as missing (our own rule: more numbers than text means a numeric
/// column with some notes or typos in it; fewer, a column of text).
pub const MOSTLY_NUMBERS: f64 = 0.5;

/// A numeric column with some text cells: the share of present cells that are numbers and
/// the first text cell (data row counted from 1, its text).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TextInNumbers {
    pub share: f64,
    pub row: usize,
    pub text: String,
}

/// A time column in the column list: its zone and its first and last instants written
/// as the exports write them. The graph file carries it for each time column.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct TimeSummary {
    /// "UTC", "+02:00", "offsets differ by row" or "no zone written (read as UTC)".
    pub zone: String,
    /// Seconds east of UTC of every clock, when one offset holds for the column (0 when
    /// none was written); `None` when offsets differ by row (then shown in UTC).
    pub offset: Option<i32>,
    /// Whether offsets were written (the page then writes them too).
    pub zoned: bool,
    /// The precision the values were written with (the exports write them so).
    pub precision: timecol::Precision,
    /// The coarsest precision that writes every value exactly (the page shows them so).
    pub shown: timecol::Precision,
    pub first: Option<String>,
    pub last: Option<String>,
}

impl TimeSummary {
    /// The summary of `t` whose first and last instants are `min` and `max` (seconds).
    pub fn new(t: &Times, min: Option<f64>, max: Option<f64>) -> TimeSummary {
        TimeSummary {
            zone: t.zone.label(),
            offset: t.zone.single(),
            zoned: t.zone.written(),
            precision: t.precision,
            shown: t.shown,
            first: min.and_then(|x| t.text_of(x)),
            last: max.and_then(|x| t.text_of(x)),
        }
    }

    /// An instant of this column (a node's first or last) as [`Times::text_of`] writes it.
    pub fn text_of(&self, seconds: f64) -> Option<String> {
        timecol::statistic_text(seconds, self.offset, self.zoned, self.precision)
    }
}

/// What the page's column list shows.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ColumnSummary {
    pub name: String,
    pub kind: &'static str,
    pub missing: usize,
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub mean: Option<f64>,
    /// Number of distinct values of a category column.
    pub levels: Option<usize>,
    /// For a column that began with numbers: the first cell that was not one.
    pub first_text: Option<FirstText>,
    /// A mostly numeric column with some text: what the page's "read as missing" offer says.
    pub text_in_numbers: Option<TextInNumbers>,
    /// Why a column that looks like dates is not a time column.
    pub not_time: Option<String>,
    /// For a time column: its zone, precision, first and last instants.
    pub time: Option<TimeSummary>,
    /// Why the column is not a measurement (an identifier, a constant), if it looks so.
    pub mark: Option<marks::Mark>,
    /// Units stated by the file (ICARTT), absent when none were.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FirstText {
    pub row: usize,
    pub text: String,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The file's name, as the user knows it.
    pub name: String,
    pub columns: Vec<Column>,
    pub n_rows: usize,
    /// The delimiter the reader used.
    pub delimiter: u8,
}

impl Table {
    /// A table from ready columns (tests, generated data). All columns must have one length.
    pub fn from_columns(name: impl Into<String>, columns: Vec<Column>) -> Result<Table> {
        let n_rows = columns.first().map_or(0, |c| c.len());
        if let Some(c) = columns.iter().find(|c| c.len() != n_rows) {
            return Err(Error::Input(format!("column '{}' has {} values, expected {n_rows}", c.name, c.len())));
        }
        Ok(Table { name: name.into(), columns, n_rows, delimiter: b',' })
    }

    /// Reads a whole file held in memory. The page streams instead, through [`TableReader`].
    pub fn from_csv_bytes(name: &str, bytes: &[u8], options: &ReadOptions) -> Result<Table> {
        let mut r = TableReader::new(name, options.clone());
        r.push(bytes)?;
        r.finish()
    }

    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.columns.iter().position(|c| c.name == name)
    }

    pub fn column(&self, name: &str) -> Option<&Column> {
        self.columns.iter().find(|c| c.name == name)
    }

    /// A numeric column by name, or an error that says what is there instead.
    pub fn numbers(&self, name: &str, field: &str) -> Result<&[f64]> {
        match self.column(name) {
            None => Err(Error::settings(field, format!("no column named '{name}' in {}", self.name))),
            Some(c) => c.as_numbers().ok_or_else(|| {
                let why = c
                    .first_text
                    .as_ref()
                    .map(|(r, t)| format!(" (data row {r} holds '{t}')"))
                    .unwrap_or_default();
                let why = if why.is_empty() { c.not_time.as_ref().map(|w| format!(" (not read as time: {w})")).unwrap_or_default() } else { why };
                Error::settings(field, format!("column '{name}' holds categories, not numbers{why}"))
            }),
        }
    }

    pub fn summaries(&self, fill_values: &[f64]) -> Vec<ColumnSummary> {
        self.columns.iter().map(|c| c.summary(fill_values)).collect()
    }
}
