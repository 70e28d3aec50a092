//! Spreadsheets (.xlsx) to a [`Table`], through the `calamine` reader. OpenDocument
//! sheets (.ods), which the same reader could read, are refused with a message: their
//! parser made the page about 40 KB larger than its budget allows.
//!
//! One sheet is read (the first unless one is named). Its first row is the header; each
//! later row is a data row, and a row with no value at all is left out (counted in the
//! report). A column whose values are all numbers is a number column; one whose values
//! are all dates or date-times (cells with a date format; Excel stores serial day numbers)
//! is a time column: the cells are written as ISO 8601 text (`2024-07-15T08:30:00`) and
//! typed as the CSV reader types text ([`crate::table::Column::from_text`]), so a sheet's
//! dates, whether date cells or text, become a time column with no zone written
//! (spreadsheets store none). Any other column is a category column; numbers in it
//! become their shortest text, as the CSV reader does. Empty cells, error cells (`#N/A`)
//! and the CSV reader's missing tokens are missing values.
//!
//! What it is not: a formula evaluator (the value cached in the file is read), nor a reader
//! of merged cells, styles or more than one sheet at a time.

use std::collections::HashMap;
use std::io::Cursor;

use calamine::{Data, Reader, Xlsx};

use super::merge::ReadNote;
use super::{Column, Table, MISSING_CODE};
use crate::error::{Error, Result};

/// Does the file start as a zip archive (the container of .xlsx)?
pub fn looks_like(head: &[u8]) -> bool {
    head.starts_with(b"PK\x03\x04")
}

type Book = Xlsx<Cursor<Vec<u8>>>;

fn open(name: &str, bytes: Vec<u8>) -> Result<(Book, &'static str)> {
    if name.to_ascii_lowercase().ends_with(".ods") {
        return Err(Error::Input(format!(
            "{name}: OpenDocument spreadsheets are not read (their reader would make the page too large); save the sheet as .xlsx or CSV"
        )));
    }
    Xlsx::new(Cursor::new(bytes)).map(|b| (b, "xlsx")).map_err(|e| {
        Error::Input(format!(
            "{name}: the file is a zip archive but not an .xlsx workbook that can be read ({e}); save it as .xlsx, or export the sheet as CSV"
        ))
    })
}

/// Sheet names of a spreadsheet, in workbook order.
pub fn sheet_names(name: &str, bytes: &[u8]) -> Result<Vec<String>> {
    let (book, _) = open(name, bytes.to_vec())?;
    Ok(book.sheet_names())
}

/// ISO 8601 text of a spreadsheet date-time (milliseconds kept when not zero).
fn iso(dt: &calamine::ExcelDateTime) -> String {
    let (y, mo, d, h, mi, s, ms) = dt.to_ymd_hms_milli();
    if ms == 0 {
        format!("{y:04}-{mo:02}-{d:02}T{h:02}:{mi:02}:{s:02}")
    } else {
        format!("{y:04}-{mo:02}-{d:02}T{h:02}:{mi:02}:{s:02}.{ms:03}")
    }
}

enum Cell {
    Missing,
    Number(f64),
    Time(String),
    Text(String),
}

fn cell(d: &Data, missing: &[&str]) -> Cell {
    match d {
        Data::Empty | Data::Error(_) => Cell::Missing,
        Data::Int(i) => Cell::Number(*i as f64),
        Data::Float(x) if x.is_finite() => Cell::Number(*x),
        Data::Float(_) => Cell::Missing,
        Data::Bool(b) => Cell::Text(b.to_string()),
        Data::DateTime(dt) if dt.is_datetime() => Cell::Time(iso(dt)),
        Data::DateTime(dt) => Cell::Number(dt.as_f64() * 86_400.0),
        Data::DateTimeIso(s) => Cell::Time(s.clone()),
        Data::DurationIso(s) => Cell::Text(s.clone()),
        Data::String(s) => {
            let t = s.trim();
            if missing.contains(&t) {
                Cell::Missing
            } else {
                Cell::Text(t.to_string())
            }
        }
    }
}

/// Reads one sheet (`None`: the first) of a spreadsheet held in memory.
pub fn read(name: &str, bytes: &[u8], sheet: Option<&str>) -> Result<(Table, ReadNote)> {
    let (mut book, format) = open(name, bytes.to_vec())?;
    let sheets = book.sheet_names();
    let chosen = match sheet {
        Some(s) if sheets.iter().any(|n| n == s) => s.to_string(),
        Some(s) => {
            return Err(Error::Input(format!("{name}: there is no sheet named '{s}' (sheets: {})", sheets.join(", "))));
        }
        None => sheets.first().cloned().ok_or_else(|| Error::Input(format!("{name}: the spreadsheet has no sheets")))?,
    };
    let range = book
        .worksheet_range(&chosen)
        .map_err(|e| Error::Input(format!("{name}: sheet '{chosen}' cannot be read: {e}")))?;
    let missing = ["", "NA", "NaN", "nan", "N/A"];
    let mut rows = range.rows();
    let header: Vec<String> = rows
        .next()
        .ok_or_else(|| Error::Input(format!("{name}: sheet '{chosen}' is empty; choose a sheet with a header row and data rows")))?
        .iter()
        .enumerate()
        .map(|(i, d)| match cell(d, &[]) {
            Cell::Missing => format!("column_{}", i + 1),
            Cell::Number(x) => format!("{x}"),
            Cell::Time(t) | Cell::Text(t) => t,
        })
        .collect();
    let width = header.len();
    let mut cells: Vec<Vec<Cell>> = (0..width).map(|_| Vec::new()).collect();
    let mut empty_rows = 0usize;
    for row in rows {
        let parsed: Vec<Cell> = (0..width).map(|j| row.get(j).map_or(Cell::Missing, |d| cell(d, &missing))).collect();
        if parsed.iter().all(|c| matches!(c, Cell::Missing)) {
            empty_rows += 1;
            continue;
        }
        for (j, c) in parsed.into_iter().enumerate() {
            cells[j].push(c);
        }
    }
    let n = cells.first().map_or(0, Vec::len);
    if n == 0 {
        return Err(Error::Input(format!("{name}: sheet '{chosen}' has a header row but no data rows; choose another sheet")));
    }
    let mut seen: HashMap<String, usize> = HashMap::new();
    let columns: Vec<Column> = header
        .into_iter()
        .zip(cells)
        .map(|(h, col)| {
            let k = seen.entry(h.clone()).or_insert(0);
            *k += 1;
            let name = if *k == 1 { h } else { format!("{h}_{k}") };
            typed(name, col)
        })
        .collect();
    let mut note = ReadNote { format: format.into(), sheets, sheet: Some(chosen), ..Default::default() };
    if empty_rows > 0 {
        note.rows_left_out = empty_rows;
        note.left_out_why.push(format!("{empty_rows} rows with no value in any column"));
    }
    Ok((Table::from_columns(name, columns)?, note))
}

fn typed(name: String, col: Vec<Cell>) -> Column {
    let all_numbers = col.iter().all(|c| matches!(c, Cell::Missing | Cell::Number(_)));
    if all_numbers {
        let v = col.iter().map(|c| if let Cell::Number(x) = c { *x } else { f64::NAN }).collect();
        return Column::number(name, v);
    }
    let mut levels: Vec<String> = Vec::new();
    let mut index: HashMap<String, u32> = HashMap::new();
    let codes = col
        .into_iter()
        .map(|c| {
            let text = match c {
                Cell::Missing => return MISSING_CODE,
                Cell::Number(x) => format!("{x}"),
                Cell::Time(t) | Cell::Text(t) => t,
            };
            *index.entry(text.clone()).or_insert_with(|| {
                levels.push(text);
                (levels.len() - 1) as u32
            })
        })
        .collect();
    Column::from_text(name, codes, levels)
}
