//! Derived columns: numeric columns computed from others by a small arithmetic language
//! (`log(flow) - 2 * "water level"`, `hour(when)`), so they can be chosen as point
//! coordinates, as the lens column, for colouring and in node details like any column
//! of the file.
//!
//! [`derive_columns`] evaluates the settings' `derived` list in order (each may read the
//! file's columns and the derived ones listed before it) and returns the new columns;
//! the caller appends them to its table once per change of that list (see
//! [`crate::engine::Workbench`]), never per run.
//! What it is not: a general formula language (no if-then-else, no text results, no row offsets).
//!
//! - [`parse`]: text to syntax tree with spans, and errors that point at a character.
//! - [`eval`]: column-wise evaluation, missing values and undefined operations.
//! - [`condition`]: row conditions ("Keep rows where …"), the same language with
//!   comparisons, `in`, `and`, `or`, `not`, evaluated to yes, no or unknown per row.

pub mod condition;
pub mod eval;
pub mod parse;

use serde::Serialize;

use crate::error::{Error, Result};
use crate::settings::Derived;
use crate::table::{Column, Table};

pub use eval::Undefined;
pub use parse::{parse as parse_expression, parse_condition, Expr, ExprError};

/// What evaluating one derived column found, for the page to show beside it.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct DerivedInfo {
    pub name: String,
    /// Rows whose value is missing (an input was missing or an operation undefined).
    pub missing: usize,
    pub undefined: Vec<Undefined>,
}

/// The file's columns plus the derived columns made so far.
struct Lookup<'a> {
    base: &'a [Column],
    made: &'a [Column],
    n_rows: usize,
}

/// A table's columns (file and derived, when the caller has appended them) for row conditions.
impl eval::Columns for Table {
    fn get(&self, name: &str) -> Option<&Column> {
        self.column(name)
    }
    fn names(&self) -> Vec<&str> {
        self.columns.iter().map(|c| c.name.as_str()).collect()
    }
    fn n_rows(&self) -> usize {
        self.n_rows
    }
}

impl eval::Columns for Lookup<'_> {
    fn get(&self, name: &str) -> Option<&Column> {
        self.base.iter().chain(self.made).find(|c| c.name == name)
    }
    fn names(&self) -> Vec<&str> {
        self.base.iter().chain(self.made).map(|c| c.name.as_str()).collect()
    }
    fn n_rows(&self) -> usize {
        self.n_rows
    }
}

/// The settings field of derived column `i`'s expression, for error messages.
fn field(i: usize, part: &str) -> String {
    format!("derived[{i}].{part}")
}

/// Syntax checks that need no data: a name, no name twice, an expression that parses.
pub fn validate(derived: &[Derived]) -> Result<()> {
    for (i, d) in derived.iter().enumerate() {
        if d.name.trim().is_empty() {
            return Err(Error::settings(field(i, "name"), "give the derived column a name"));
        }
        if derived[..i].iter().any(|e| e.name == d.name) {
            return Err(Error::settings(field(i, "name"), format!("'{}' is listed twice; choose another name", d.name)));
        }
        parse::parse(&d.expression).map_err(|e| Error::settings(field(i, "expression"), e.render(&d.expression)))?;
    }
    Ok(())
}

/// Evaluates every derived column of the settings against the file's columns `base`
/// (which must not hold derived columns already). Numeric `fill_values` count as missing
/// inputs. Errors name the settings field and point at the part of the expression at fault.
pub fn derive_columns(base: &[Column], n_rows: usize, derived: &[Derived], fill_values: &[f64]) -> Result<(Vec<Column>, Vec<DerivedInfo>)> {
    validate(derived)?;
    let mut made: Vec<Column> = Vec::with_capacity(derived.len());
    let mut infos = Vec::with_capacity(derived.len());
    for (i, d) in derived.iter().enumerate() {
        if base.iter().any(|c| c.name == d.name) {
            return Err(Error::settings(
                field(i, "name"),
                format!("'{}' is already a column of the file; choose another name", d.name),
            ));
        }
        let e = parse::parse(&d.expression).expect("validated");
        let cols = Lookup { base, made: &made, n_rows };
        let (values, undefined) = eval::evaluate(&e, &cols, fill_values).map_err(|err| {
            let later = derived[i + 1..].iter().any(|l| err.message.contains(&format!("'{}'", l.name)));
            let hint = if later { " (a derived column can read only the ones listed before it)" } else { "" };
            Error::settings(field(i, "expression"), format!("{}{hint}", err.render(&d.expression)))
        })?;
        infos.push(DerivedInfo { name: d.name.clone(), missing: values.iter().filter(|x| x.is_nan()).count(), undefined });
        made.push(Column::number(d.name.clone(), values));
    }
    Ok((made, infos))
}

/// A copy of `table` with the derived columns appended (one-shot runs; the workbench
/// appends in place instead).
pub fn with_derived(table: &Table, derived: &[Derived], fill_values: &[f64]) -> Result<(Table, Vec<DerivedInfo>)> {
    let (made, infos) = derive_columns(&table.columns, table.n_rows, derived, fill_values)?;
    let mut t = table.clone();
    t.columns.extend(made);
    Ok((t, infos))
}
