//! Typed columns read from a delimited text file.
//!
//! A [`Table`] holds each column as it arrived: numbers as `f64` with `NaN` marking a
//! missing value, categories as codes into a list of levels. Rows keep their position in
//! the file: row `i` of the table is data row `i + 1` of the file (the header not counted).
//! This module parses and types; choosing columns, fill values and scaling happen later,
//! in [`crate::points`], so changing them never re-reads the file.

mod cells;
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
}

impl ColumnData {
    pub fn numbers(values: Vec<f64>) -> ColumnData {
        ColumnData::Number(Arc::new(values))
    }

    pub fn categories(codes: Vec<u32>, levels: Vec<String>) -> ColumnData {
        ColumnData::Category { codes: Arc::new(codes), levels }
    }
}

impl Column {
    pub fn number(name: impl Into<String>, values: Vec<f64>) -> Column {
        Column { name: name.into(), data: ColumnData::numbers(values), first_text: None, unit: None }
    }

    pub fn category(name: impl Into<String>, codes: Vec<u32>, levels: Vec<String>) -> Column {
        Column { name: name.into(), data: ColumnData::categories(codes, levels), first_text: None, unit: None }
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
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    pub fn as_numbers(&self) -> Option<&[f64]> {
        match &self.data {
            ColumnData::Number(v) => Some(v),
            _ => None,
        }
    }

    /// Summary for the column list; numeric `fill_values` count as missing.
    pub fn summary(&self, fill_values: &[f64]) -> ColumnSummary {
        match &self.data {
            ColumnData::Number(v) => {
                let mut missing = 0;
                let (mut lo, mut hi, mut sum, mut n) = (f64::INFINITY, f64::NEG_INFINITY, 0.0, 0usize);
                for &x in v.iter() {
                    if x.is_nan() || fill_values.contains(&x) {
                        missing += 1;
                    } else {
                        lo = lo.min(x);
                        hi = hi.max(x);
                        sum += x;
                        n += 1;
                    }
                }
                ColumnSummary {
                    name: self.name.clone(),
                    kind: "number",
                    missing,
                    min: (n > 0).then_some(lo),
                    max: (n > 0).then_some(hi),
                    mean: (n > 0).then(|| sum / n as f64),
                    levels: None,
                    first_text: None,
                    unit: self.unit.clone(),
                }
            }
            ColumnData::Category { codes, levels } => ColumnSummary {
                name: self.name.clone(),
                kind: "category",
                missing: codes.iter().filter(|&&c| c == MISSING_CODE).count(),
                min: None,
                max: None,
                mean: None,
                levels: Some(levels.len()),
                first_text: self.first_text.as_ref().map(|(r, t)| FirstText { row: *r, text: t.clone() }),
                unit: self.unit.clone(),
            },
        }
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
    pub first_text: Option<FirstText>,
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
                Error::settings(field, format!("column '{name}' holds categories, not numbers{why}"))
            }),
        }
    }

    pub fn summaries(&self, fill_values: &[f64]) -> Vec<ColumnSummary> {
        self.columns.iter().map(|c| c.summary(fill_values)).collect()
    }
}
