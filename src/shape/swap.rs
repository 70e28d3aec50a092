//! A second table made from the first, for a comparison with the same settings:
//! - [`swapped`]: the same rows with some columns standing in for others, so that two
//!   column sets of one file can be compared: measured values against a model's, say (the
//!   settings name `temp`; the second table's `temp` holds the file's `temp_model`);
//! - [`subset`]: the same table with other rows kept (one station against another, day
//!   against night): the second table's settings are the first's with its own row
//!   condition ([`second_settings`]).
//!
//! The comparison itself is [`super::confidence::compare`] (and `compare_pair`).
//! Not here: reading files ([`crate::table`]) or derived columns (the caller leaves
//! those out and the second table's run makes its own).

use crate::error::{Error, Result};
use crate::settings::Settings;
use crate::subset::RowSubset;
use crate::table::Table;

/// The second table of a comparison of two subsets: `table` (with the derived columns of
/// `settings` appended, which are left out of the result: the second table's run makes
/// its own) under the row condition `condition`, checked here (it must keep at least two
/// rows). Returns the table, named after the condition, and the rows it keeps.
pub fn subset(table: &Table, settings: &Settings, condition: &str) -> Result<(Table, RowSubset)> {
    let s = second_settings(settings, Some(condition));
    let rows = crate::subset::select(table, &s)?.expect("a condition was given");
    let derived: Vec<&str> = settings.derived.iter().map(|d| d.name.as_str()).collect();
    let columns = table.columns.iter().filter(|c| !derived.contains(&c.name.as_str())).cloned().collect();
    let t = Table::from_columns(format!("{} (rows where {condition})", table.name), columns)?;
    Ok((t, rows))
}

/// The settings of a comparison's second table: the first's, with the second's own row
/// condition when it is a subset (`rows`), else unchanged.
pub fn second_settings(settings: &Settings, rows: Option<&str>) -> Settings {
    match rows {
        Some(c) => Settings { keep_rows: Some(c.to_string()), ..settings.clone() },
        None => settings.clone(),
    }
}

/// `table` with each `(stands_in, for_column)` pair applied: the column named `for_column`
/// gets the values of `stands_in` (both must exist and be of the same kind). Columns named
/// in `leave_out` (derived columns of the last run) are dropped. The pairs are applied at
/// once, so two columns can trade places.
pub fn swapped(table: &Table, pairs: &[(String, String)], leave_out: &[String], name: &str) -> Result<Table> {
    if pairs.is_empty() {
        return Err(Error::settings("column swap", "choose at least one column to stand in for another"));
    }
    let find = |n: &str| {
        table.column(n).ok_or_else(|| Error::settings("column swap", format!("no column named '{n}' in {}", table.name)))
    };
    let mut columns = Vec::with_capacity(table.columns.len());
    for c in table.columns.iter().filter(|c| !leave_out.contains(&c.name)) {
        let mut c = c.clone();
        if let Some((from, _)) = pairs.iter().find(|(_, to)| *to == c.name) {
            let src = find(from)?;
            if src.as_numbers().is_some() != c.as_numbers().is_some() {
                return Err(Error::settings("column swap", format!("'{from}' and '{}' are not of the same kind (numbers against categories)", c.name)));
            }
            c.data = src.data.clone();
            c.first_text = src.first_text.clone();
        }
        columns.push(c);
    }
    if let Some((_, to)) = pairs.iter().find(|(_, to)| !columns.iter().any(|c| &c.name == to)) {
        return Err(Error::settings("column swap", format!("no column named '{to}' in {}", table.name)));
    }
    Table::from_columns(name, columns)
}

/// The second table of a comparison by swapped columns, as the page makes it: `pairs`
/// are `(stands_in, for_column)`; the derived columns of `settings` are left out (the
/// second table's run makes its own); the name says what stands in for what.
pub fn second_table(table: &Table, pairs: &[(String, String)], settings: &crate::settings::Settings) -> Result<Table> {
    let words: Vec<String> = pairs.iter().map(|(from, to)| format!("{to} ← {from}")).collect();
    let name = format!("{} ({})", table.name, words.join(", "));
    let leave_out: Vec<String> = settings.derived.iter().map(|d| d.name.clone()).collect();
    swapped(table, pairs, &leave_out, &name)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    fn t() -> Table {
        Table::from_columns("t.csv", vec![Column::number("a", vec![1.0, 2.0]), Column::number("b", vec![3.0, 4.0]), Column::number("d", vec![0.0, 0.0])]).unwrap()
    }

    #[test]
    fn columns_stand_in_and_can_trade_places() {
        let s = swapped(&t(), &[("b".into(), "a".into()), ("a".into(), "b".into())], &["d".into()], "t.csv (b, a)").unwrap();
        assert_eq!(s.name, "t.csv (b, a)");
        assert_eq!(s.columns.iter().map(|c| c.name.as_str()).collect::<Vec<_>>(), ["a", "b"]);
        assert_eq!(s.numbers("a", "x").unwrap(), [3.0, 4.0]);
        assert_eq!(s.numbers("b", "x").unwrap(), [1.0, 2.0]);
    }

    #[test]
    fn unknown_columns_are_named_in_the_error() {
        let e = swapped(&t(), &[("zz".into(), "a".into())], &[], "x").unwrap_err().to_string();
        assert!(e.contains("'zz'"), "{e}");
        let e = swapped(&t(), &[("a".into(), "yy".into())], &[], "x").unwrap_err().to_string();
        assert!(e.contains("'yy'"), "{e}");
        assert!(swapped(&t(), &[], &[], "x").is_err());
    }
}
