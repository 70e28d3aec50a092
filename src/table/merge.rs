//! Many files, one table: the tables read from several files stacked into one, with a
//! category column naming each row's source file, and a short report per file.
//!
//! Rules (this project's; common practice for stacking tables):
//! - Columns are matched by exact name. The merged table has the union of the columns, in
//!   the order they first appear (file order, then column order).
//! - A column a file lacks is missing on that file's rows: `NaN` for numbers,
//!   [`MISSING_CODE`] for categories.
//! - A column that holds numbers in one file and categories in another becomes a category
//!   column; the numbers become their shortest text (`2`, `1.5`), as the CSV reader does when
//!   a column turns out to hold text. The report of each file whose numbers were turned
//!   into text names the column.
//! - A column that is time in every file that has a value in it stays time: the instants
//!   are stacked, and the zone is the files' common one, or kept per row when the files'
//!   zones differ (a file with no zone written counts as UTC there, as it was read). Time in
//!   one file and numbers or text in another becomes text, times written as ISO 8601
//!   ([`crate::timecol::Times::text`]), reported as above.
//! - A column with no value at all in a file (read as numbers, all missing) takes the kind
//!   it has in the other files.
//! - Units (ICARTT) are kept from the first file that states them; a file stating other
//!   units for the same column is reported.
//!
//! [`FileSet`] keeps the per-file tables, so files can be added and removed later and the
//! merged table is rebuilt from the kept ones. What it is not: a reader (see
//! [`super::ingest`]) or an aligner of tables on time (see [`crate::align`]).

use std::collections::HashMap;

use serde::Serialize;

use super::{Column, ColumnData, Table, MISSING_CODE};
use crate::timecol::{Precision, Times, Zone};
use crate::error::{Error, Result};

/// Preferred name of the column naming each row's file; `_2`, `_3`... are added when a
/// file already has a column of that name.
pub const SOURCE_COLUMN: &str = "source_file";

/// What reading one file found, before merging.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
#[serde(rename_all = "camelCase")]
pub struct ReadNote {
    /// "csv", "icartt" or "xlsx".
    pub format: String,
    /// Rows of the file that did not become table rows.
    pub rows_left_out: usize,
    /// Why, one sentence per reason.
    pub left_out_why: Vec<String>,
    /// Other things worth knowing (values made missing by flags, scale factors applied,
    /// the CSV reader's notices).
    pub notes: Vec<String>,
    /// How a text file's bytes were decoded (the CSV reader's word; empty for the others).
    pub encoding: &'static str,
    /// Sheets of a spreadsheet, and the one read.
    pub sheets: Vec<String>,
    pub sheet: Option<String>,
}

/// The per-file report shown in the page's file list.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct FileReport {
    pub name: String,
    pub rows: usize,
    pub columns: usize,
    /// Columns of the merged table this file does not have (missing on its rows).
    pub lacked: Vec<String>,
    /// This file's number columns stored as text because another file holds text there.
    pub made_text: Vec<String>,
    /// Columns whose units differ from the first file's.
    pub other_units: Vec<String>,
    #[serde(flatten)]
    pub read: ReadNote,
}

/// One file as read.
#[derive(Debug, Clone, PartialEq)]
pub struct Part {
    pub table: Table,
    pub note: ReadNote,
    /// The bytes of a spreadsheet, kept so another sheet can be chosen later.
    pub raw: Option<Vec<u8>>,
}

/// The files loaded so far, in the order they were added.
#[derive(Debug, Clone, Default)]
pub struct FileSet {
    parts: Vec<Part>,
}

impl FileSet {
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a file; a file of the same name is replaced (returns `true` then).
    pub fn add(&mut self, part: Part) -> bool {
        if let Some(p) = self.parts.iter_mut().find(|p| p.table.name == part.table.name) {
            *p = part;
            true
        } else {
            self.parts.push(part);
            false
        }
    }

    /// Removes a file by name, or says which names there are.
    pub fn remove(&mut self, name: &str) -> Result<Part> {
        let i = self.position(name)?;
        Ok(self.parts.remove(i))
    }

    pub fn get(&self, name: &str) -> Option<&Part> {
        self.parts.iter().find(|p| p.table.name == name)
    }

    pub fn parts(&self) -> &[Part] {
        &self.parts
    }

    pub fn len(&self) -> usize {
        self.parts.len()
    }

    pub fn is_empty(&self) -> bool {
        self.parts.is_empty()
    }

    pub fn clear(&mut self) {
        self.parts.clear();
    }

    fn position(&self, name: &str) -> Result<usize> {
        self.parts.iter().position(|p| p.table.name == name).ok_or_else(|| {
            let names: Vec<&str> = self.parts.iter().map(|p| p.table.name.as_str()).collect();
            Error::Input(format!("no file named '{name}' is loaded (loaded: {})", names.join(", ")))
        })
    }

    /// The merged table of the named files (all files when `names` is empty), in load order.
    pub fn merged(&self, names: &[String], merged_name: &str) -> Result<(Table, Vec<FileReport>)> {
        if self.parts.is_empty() {
            return Err(Error::Input("no file is loaded yet: open or drop one or more files first".into()));
        }
        let mut chosen: Vec<&Part> = Vec::new();
        if names.is_empty() {
            chosen.extend(self.parts.iter());
        } else {
            for n in names {
                chosen.push(&self.parts[self.position(n)?]);
            }
        }
        merge(&chosen, merged_name)
    }
}

/// A name not among `taken`: `base`, else `base_2`, `base_3`...
pub fn free_name(base: &str, taken: &[&str]) -> String {
    if !taken.contains(&base) {
        return base.to_string();
    }
    (2..).map(|i| format!("{base}_{i}")).find(|n| !taken.contains(&n.as_str())).expect("some name is free")
}

/// What a merged column holds, as the files say so far.
#[derive(Default, Clone, Copy, PartialEq, Eq)]
enum SlotKind {
    /// No file has a value in it yet.
    #[default]
    Empty,
    Number,
    Time,
    Text,
}

impl SlotKind {
    fn of(c: &Column) -> SlotKind {
        match &c.data {
            ColumnData::Number(v) if v.iter().all(|x| x.is_nan()) => SlotKind::Empty,
            ColumnData::Number(_) => SlotKind::Number,
            ColumnData::Time(_) => SlotKind::Time,
            ColumnData::Category { .. } => SlotKind::Text,
        }
    }

    fn with(self, other: SlotKind) -> SlotKind {
        match (self, other) {
            (SlotKind::Empty, k) | (k, SlotKind::Empty) => k,
            (a, b) if a == b => a,
            _ => SlotKind::Text,
        }
    }
}

#[derive(Default)]
struct Slot {
    name: String,
    kind: SlotKind,
    unit: Option<String>,
}

/// Stacks the parts' tables. One part gives its table unchanged (no source column).
pub fn merge(parts: &[&Part], merged_name: &str) -> Result<(Table, Vec<FileReport>)> {
    // The union of columns, and whether each is text anywhere.
    let mut slots: Vec<Slot> = Vec::new();
    let mut index: HashMap<&str, usize> = HashMap::new();
    for p in parts {
        for c in &p.table.columns {
            let i = *index.entry(c.name.as_str()).or_insert_with(|| {
                slots.push(Slot { name: c.name.clone(), ..Default::default() });
                slots.len() - 1
            });
            slots[i].kind = slots[i].kind.with(SlotKind::of(c));
            if slots[i].unit.is_none() {
                slots[i].unit = c.unit.clone();
            }
        }
    }
    let reports: Vec<FileReport> = parts
        .iter()
        .map(|p| {
            let t = &p.table;
            let lacked = slots.iter().filter(|s| t.column(&s.name).is_none()).map(|s| s.name.clone()).collect();
            let made_text = t
                .columns
                .iter()
                .filter(|c| {
                    let k = SlotKind::of(c);
                    matches!(k, SlotKind::Number | SlotKind::Time) && slots[index[c.name.as_str()]].kind == SlotKind::Text
                })
                .map(|c| c.name.clone())
                .collect();
            let other_units = t
                .columns
                .iter()
                .filter(|c| c.unit.is_some() && c.unit != slots[index[c.name.as_str()]].unit)
                .map(|c| c.name.clone())
                .collect();
            FileReport {
                name: t.name.clone(),
                rows: t.n_rows,
                columns: t.columns.len(),
                lacked,
                made_text,
                other_units,
                read: p.note.clone(),
            }
        })
        .collect();
    if parts.len() == 1 {
        let mut t = parts[0].table.clone();
        t.name = merged_name.to_string();
        return Ok((t, reports));
    }
    let total: usize = parts.iter().map(|p| p.table.n_rows).sum();
    let mut columns = Vec::with_capacity(slots.len() + 1);
    for s in &slots {
        let col = match s.kind {
            SlotKind::Text => stack_text(parts, &s.name, total),
            SlotKind::Time => stack_times(parts, &s.name, total),
            SlotKind::Number | SlotKind::Empty => stack_numbers(parts, &s.name, total),
        };
        columns.push(Column::of(s.name.clone(), col).with_unit(s.unit.clone()));
    }
    let taken: Vec<&str> = slots.iter().map(|s| s.name.as_str()).collect();
    let source = free_name(SOURCE_COLUMN, &taken);
    let mut codes = Vec::with_capacity(total);
    let mut levels: Vec<String> = Vec::new();
    for p in parts {
        // Names are unique within a FileSet; a repeated name still gets one level.
        let code = match levels.iter().position(|l| *l == p.table.name) {
            Some(c) => c,
            None => {
                levels.push(p.table.name.clone());
                levels.len() - 1
            }
        } as u32;
        codes.extend(std::iter::repeat_n(code, p.table.n_rows));
    }
    columns.insert(0, Column::category(source, codes, levels));
    let table = Table::from_columns(merged_name, columns)?;
    Ok((table, reports))
}

fn stack_numbers(parts: &[&Part], name: &str, total: usize) -> ColumnData {
    let mut out = Vec::with_capacity(total);
    for p in parts {
        match p.table.column(name).map(|c| &c.data) {
            Some(ColumnData::Number(v)) => out.extend_from_slice(v),
            _ => out.extend(std::iter::repeat_n(f64::NAN, p.table.n_rows)),
        }
    }
    ColumnData::numbers(out)
}

fn stack_times(parts: &[&Part], name: &str, total: usize) -> ColumnData {
    let mut seconds = Vec::with_capacity(total);
    let zones: Vec<Option<&Zone>> = parts.iter().map(|p| p.table.column(name).and_then(Column::as_times).map(|t| &t.zone)).collect();
    let first = zones.iter().flatten().next().copied().cloned().unwrap_or(Zone::Unwritten);
    let one_zone = !matches!(first, Zone::PerRow(_)) && zones.iter().flatten().all(|z| **z == first);
    let mut offsets = Vec::with_capacity(if one_zone { 0 } else { total });
    for (p, zone) in parts.iter().zip(&zones) {
        match p.table.column(name).and_then(Column::as_times) {
            Some(t) => {
                seconds.extend_from_slice(&t.seconds);
                if !one_zone {
                    offsets.extend((0..t.len()).map(|i| zone.map_or(0, |z| z.offset_at(i))));
                }
            }
            None => {
                seconds.extend(std::iter::repeat_n(f64::NAN, p.table.n_rows));
                if !one_zone {
                    offsets.extend(std::iter::repeat_n(0, p.table.n_rows));
                }
            }
        }
    }
    let zone = if one_zone { first } else { Zone::PerRow(std::sync::Arc::new(offsets)) };
    let times = || parts.iter().filter_map(|p| p.table.column(name).and_then(Column::as_times));
    let precision = times().map(|t| t.precision).max().unwrap_or(Precision::Minute);
    let shown = times().map(|t| t.shown).max().unwrap_or(Precision::Minute);
    // Rows in UTC beside rows with an offset are written with one: at least minutes.
    let (precision, shown) = if zone.written() { (precision.max(Precision::Minute), shown.max(Precision::Minute)) } else { (precision, shown) };
    ColumnData::Time(Times { seconds: std::sync::Arc::new(seconds), precision, shown, zone })
}

fn stack_text(parts: &[&Part], name: &str, total: usize) -> ColumnData {
    let mut codes = Vec::with_capacity(total);
    let mut levels: Vec<String> = Vec::new();
    let mut index: HashMap<String, u32> = HashMap::new();
    let mut code_of = |text: String, levels: &mut Vec<String>| -> u32 {
        if let Some(&c) = index.get(&text) {
            return c;
        }
        let c = levels.len() as u32;
        levels.push(text.clone());
        index.insert(text, c);
        c
    };
    for p in parts {
        match p.table.column(name).map(|c| &c.data) {
            Some(ColumnData::Category { codes: own, levels: own_levels }) => {
                let map: Vec<u32> = own_levels.iter().map(|l| code_of(l.clone(), &mut levels)).collect();
                codes.extend(own.iter().map(|&c| if c == MISSING_CODE { MISSING_CODE } else { map[c as usize] }));
            }
            Some(ColumnData::Number(v)) => {
                for &x in v.iter() {
                    codes.push(if x.is_nan() { MISSING_CODE } else { code_of(format!("{x}"), &mut levels) });
                }
            }
            Some(ColumnData::Time(t)) => {
                for i in 0..t.len() {
                    codes.push(t.text(i).map_or(MISSING_CODE, |text| code_of(text, &mut levels)));
                }
            }
            None => codes.extend(std::iter::repeat_n(MISSING_CODE, p.table.n_rows)),
        }
    }
    ColumnData::categories(codes, levels)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::ReadOptions;

    fn part(name: &str, csv: &str) -> Part {
        Part { table: Table::from_csv_bytes(name, csv.as_bytes(), &ReadOptions::default()).unwrap(), note: ReadNote::default(), raw: None }
    }

    fn text_of(t: &Table, col: &str, row: usize) -> Option<String> {
        t.column(col).unwrap().text_at(row)
    }

    #[test]
    fn same_columns_are_appended_with_the_source_named() {
        let a = part("a.csv", "t,x\n1,10\n2,20\n");
        let b = part("b.csv", "t,x\n3,30\n");
        let (t, reports) = merge(&[&a, &b], "merged").unwrap();
        assert_eq!(t.n_rows, 3);
        assert_eq!(t.columns[0].name, SOURCE_COLUMN);
        assert_eq!(t.numbers("x", "x").unwrap(), &[10.0, 20.0, 30.0]);
        assert_eq!(text_of(&t, SOURCE_COLUMN, 0).as_deref(), Some("a.csv"));
        assert_eq!(text_of(&t, SOURCE_COLUMN, 2).as_deref(), Some("b.csv"));
        assert!(reports.iter().all(|r| r.lacked.is_empty()));
        assert_eq!(reports[1].rows, 1);
    }

    #[test]
    fn different_columns_give_the_union_with_missing_values() {
        let a = part("a.csv", "t,x,site\n1,10,up\n");
        let b = part("b.csv", "t,y\n2,5\n");
        let (t, reports) = merge(&[&a, &b], "m").unwrap();
        let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, [SOURCE_COLUMN, "t", "x", "site", "y"]);
        assert!(t.numbers("x", "x").unwrap()[1].is_nan());
        assert!(t.numbers("y", "y").unwrap()[0].is_nan());
        assert_eq!(text_of(&t, "site", 1), None);
        assert_eq!(reports[0].lacked, ["y"]);
        assert_eq!(reports[1].lacked, ["x", "site"]);
    }

    #[test]
    fn number_in_one_file_and_text_in_another_becomes_text() {
        let a = part("a.csv", "id\n7\n1.5\n");
        let b = part("b.csv", "id\nA7\n");
        let (t, reports) = merge(&[&a, &b], "m").unwrap();
        assert_eq!(text_of(&t, "id", 0).as_deref(), Some("7"));
        assert_eq!(text_of(&t, "id", 1).as_deref(), Some("1.5"));
        assert_eq!(text_of(&t, "id", 2).as_deref(), Some("A7"));
        assert_eq!(reports[0].made_text, ["id"]);
        assert!(reports[1].made_text.is_empty());
    }

    #[test]
    fn time_columns_stack_as_time_across_forms_and_zones() {
        let a = part("a.csv", "t,x\n2024-07-15T10:00+02:00,1\n2024-07-15T11:00+02:00,2\n");
        let b = part("b.csv", "t,x\n2024/07/15 09:30,3\n");
        let c = part("c.csv", "x,t\n4,\n");
        let (t, reports) = merge(&[&a, &b, &c], "m").unwrap();
        let times = t.column("t").unwrap().as_times().expect("stays time");
        assert_eq!(times.text(0).as_deref(), Some("2024-07-15T10:00+02:00"));
        assert_eq!(times.seconds[2] - times.seconds[0], 1.5 * 3600.0, "09:30 with no zone read as UTC");
        assert!(times.seconds[3].is_nan(), "c.csv's column has no value: it takes the others' kind");
        assert!(matches!(times.zone, Zone::PerRow(_)));
        assert!(reports.iter().all(|r| r.made_text.is_empty()));
        // One zone in every file: kept as it is.
        let (t, _) = merge(&[&a, &a.clone()], "m").unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(t.column("t").unwrap().as_times().unwrap().zone, Zone::Offset(7200));
        // Time against text: text, times written as ISO 8601, reported.
        let d = part("d.csv", "t,x\nlater,5\n");
        let (t, reports) = merge(&[&a, &d], "m").unwrap();
        assert_eq!(text_of(&t, "t", 0).as_deref(), Some("2024-07-15T10:00+02:00"));
        assert_eq!(text_of(&t, "t", 2).as_deref(), Some("later"));
        assert_eq!(reports[0].made_text, ["t"]);
    }

    #[test]
    fn source_column_name_avoids_a_clash() {
        let a = part("a.csv", "source_file,x\nq,1\n");
        let b = part("b.csv", "x\n2\n");
        let (t, _) = merge(&[&a, &b], "m").unwrap();
        assert_eq!(t.columns[0].name, "source_file_2");
        assert_eq!(text_of(&t, "source_file", 0).as_deref(), Some("q"));
    }

    #[test]
    fn files_can_be_removed_and_the_table_rebuilt() {
        let mut set = FileSet::new();
        set.add(part("a.csv", "x\n1\n"));
        set.add(part("b.csv", "x\n2\n3\n"));
        set.add(part("c.csv", "x,z\n4,1\n"));
        assert_eq!(set.merged(&[], "m").unwrap().0.n_rows, 4);
        set.remove("c.csv").unwrap();
        let (t, _) = set.merged(&[], "m").unwrap();
        assert_eq!(t.n_rows, 3);
        assert!(t.column("z").is_none());
        let err = set.remove("nope.csv").unwrap_err().to_string();
        assert!(err.contains("a.csv, b.csv"), "{err}");
        assert!(set.add(part("a.csv", "x\n9\n")), "same name replaces");
        assert_eq!(set.merged(&["a.csv".into()], "m").unwrap().0.numbers("x", "x").unwrap(), &[9.0]);
    }
}
