//! Row conditions: which rows of the table take part ("Keep rows where …"), evaluated
//! column-wise to one verdict per row: yes, no, or unknown.
//!
//! A condition compares values with `<`, `<=`, `==`, `!=`, `>=`, `>`, tests a list with
//! `in (…)` or `not in (…)`, and joins tests with `and`, `or`, `not`. Each side of a
//! comparison is an expression of the derived-column language ([`super::eval`]: file and
//! derived columns, arithmetic, `hour()`, `doy()`, `time()`) or a value.
//!
//! **Kinds.** A side is a number, a date-time (a time column, a text column whose every
//! value reads as a date-time, see [`crate::timecol`], or `time(col)`), a text column, or a value written in
//! quotes. Numbers compare with numbers; date-times with date-times, with a date-time
//! written as text (`time_hour >= '2013-06-01'`, read by [`crate::timecol::parse`] with the
//! column's day order; a text that is not a date-time is an error with a caret; a value
//! without an offset is a clock in the column's offset when all its values carry one, else
//! UTC) or with seconds since 1970 UTC; a text column with a text
//! (`==`, `!=` and `in` only: text values have no order) or with another text column. A
//! text compared with a text column must be one of its values: a value no row holds is an
//! error that names the nearest value, so a typo cannot keep every row (`!=`) or none.
//! A double-quoted text is a value where it faces a text or date-time column or stands in
//! an `in` list, and a column name anywhere else; single quotes always make a value.
//!
//! **Missing values.** A comparison with a missing value (an empty cell, NaN, a fill value
//! of the column under [`crate::settings::Missing::fills_for`], an undefined operation such
//! as a division by zero) is neither true nor false but unknown, and `and`, `or` and `not`
//! follow the three-valued logic of SQL (Kleene's): `not unknown` is unknown, `unknown and
//! no` is no, `unknown or yes` is yes. A row is kept only when its verdict is yes. So:
//! - a missing value never satisfies a comparison: `x > 3`, `x <= 3`, `x == 3` and `x != 3`
//!   all leave a row with `x` missing out, and so does `not (x > 3)`, which keeps exactly
//!   the rows of `x <= 3`;
//! - `x in (a, b)` means `x == a or x == b` (SQL's definition), so a missing `x` is unknown:
//!   neither `x in (…)` nor `x not in (…)` (the same as `not x in (…)`) keeps it;
//! - `x > 3 or y > 3` keeps a row with `x` missing and `y` = 5.
//!
//! This is what pandas gives with its nullable types (`Float64`, `string`, `boolean`:
//! comparisons give `NA`, `&`, `|` and `~` follow Kleene's logic, and a mask's `NA` keeps
//! no row); with NumPy's float NaN, pandas' `!=` and `~` keep the missing rows instead
//! (`NaN != 3` is true in IEEE 754), and `isin` gives false for a missing value, so `~isin`
//! keeps it. `tests/reference/conditions.py` writes both masks on real tables and
//! `tests/conditions.rs` checks the rule against the first and says where it differs
//! from the second.
//!
//! What it is not: parsing ([`super::parse`]) or applying the verdicts to the table
//! ([`crate::subset`]).

use std::collections::HashMap;

use super::eval::{self, edit_distance, lookup, quoted, Columns, Fills, Val};
use super::parse::{Cmp, Expr, ExprError, ExprKind, Func, Span};
use crate::settings::Missing;
use crate::table::{Column, ColumnData, MISSING_CODE};
use crate::timecol::{self, DayOrder};

/// The verdict "no" for a row.
pub const NO: u8 = 0;
/// The verdict "yes": the row is kept.
pub const YES: u8 = 1;
/// Unknown: a value the condition reads is missing; the row is not kept.
pub const UNKNOWN: u8 = 2;

/// One verdict per row ([`NO`], [`YES`] or [`UNKNOWN`]) for the condition `e` (parsed by
/// [`super::parse::parse_condition`]); `missing` says which numbers are missing.
pub fn verdicts(e: &Expr, cols: &dyn Columns, missing: &Missing) -> Result<Vec<u8>, ExprError> {
    let cx = Cx { cols, missing, n: cols.n_rows() };
    test(e, &cx)
}

struct Cx<'a> {
    cols: &'a dyn Columns,
    missing: &'a Missing,
    n: usize,
}

fn and(a: u8, b: u8) -> u8 {
    if a == NO || b == NO {
        NO
    } else if a == UNKNOWN || b == UNKNOWN {
        UNKNOWN
    } else {
        YES
    }
}

fn or(a: u8, b: u8) -> u8 {
    if a == YES || b == YES {
        YES
    } else if a == UNKNOWN || b == UNKNOWN {
        UNKNOWN
    } else {
        NO
    }
}

fn not(a: u8) -> u8 {
    match a {
        YES => NO,
        NO => YES,
        u => u,
    }
}

fn test(e: &Expr, cx: &Cx) -> Result<Vec<u8>, ExprError> {
    match &e.kind {
        ExprKind::And(a, b) => {
            let (mut x, y) = (test(a, cx)?, test(b, cx)?);
            x.iter_mut().zip(&y).for_each(|(p, &q)| *p = and(*p, q));
            Ok(x)
        }
        ExprKind::Or(a, b) => {
            let (mut x, y) = (test(a, cx)?, test(b, cx)?);
            x.iter_mut().zip(&y).for_each(|(p, &q)| *p = or(*p, q));
            Ok(x)
        }
        ExprKind::Not(a) => {
            let mut x = test(a, cx)?;
            x.iter_mut().for_each(|p| *p = not(*p));
            Ok(x)
        }
        ExprKind::Compare(op, a, b) => compare(*op, a, b, cx),
        ExprKind::In(v, items, negated) => {
            let mut x = within(v, items, cx)?;
            if *negated {
                x.iter_mut().for_each(|p| *p = not(*p));
            }
            Ok(x)
        }
        _ => Err(ExprError::new(
            e.span,
            "a row condition says which rows to keep: compare, as in depth > 2, site == 'north' or hour(time) < 12",
        )),
    }
}

/// What one side of a comparison is, before its values are read.
#[derive(Debug, Clone, Copy)]
enum Kind<'a> {
    Number,
    /// Date-times; the day order settles `NN/NN/YYYY` texts compared with them, and a
    /// text written without an offset is read on the clock of this offset (seconds east of
    /// UTC): the column's own, when all its values were written with one, else UTC.
    Time(Option<DayOrder>, i32),
    /// A text column.
    Levels(&'a Column),
    /// A value in quotes.
    Text,
}

/// A date-time column's instants (seconds since 1970 UTC, NaN where missing) and day
/// order, or `None` for a column that is not one.
fn column_times(col: &Column) -> Option<(Vec<f64>, Option<DayOrder>)> {
    match &col.data {
        ColumnData::Time(t) => Some((t.seconds.to_vec(), None)),
        ColumnData::Category { codes, .. } => {
            let t = timecol::parse_column(col).ok()?;
            Some((t.map(codes, timecol::Stamp::seconds), t.order))
        }
        ColumnData::Number(_) => None,
    }
}

/// The clock on which a date-time text without an offset is read when it faces `col`.
fn clock_of(col: &Column) -> i32 {
    match &col.data {
        ColumnData::Time(t) => t.zone.single().unwrap_or(0),
        _ => 0,
    }
}

fn column_kind(col: &Column) -> Kind<'_> {
    match &col.data {
        ColumnData::Number(_) => Kind::Number,
        ColumnData::Time(t) => Kind::Time(None, t.zone.single().unwrap_or(0)),
        ColumnData::Category { .. } => match timecol::parse_column(col) {
            Ok(t) => Kind::Time(t.order, 0),
            Err(_) => Kind::Levels(col),
        },
    }
}

/// The kind of `e` read as a column or an expression (never as a value).
fn kind_of<'a>(e: &Expr, cx: &Cx<'a>) -> Result<Kind<'a>, ExprError> {
    match &e.kind {
        ExprKind::Column(n) | ExprKind::Quoted(n) => Ok(column_kind(lookup(n, e.span, cx.cols)?)),
        ExprKind::Text(_) => Ok(Kind::Text),
        ExprKind::Call(Func::Time, args) => {
            eval::check(e, cx.cols)?;
            let (ExprKind::Column(n) | ExprKind::Quoted(n)) = &args[0].kind else { unreachable!("checked") };
            let col = lookup(n, args[0].span, cx.cols)?;
            Ok(Kind::Time(column_times(col).and_then(|(_, o)| o), clock_of(col)))
        }
        k if k.is_test() => Err(ExprError::new(
            e.span,
            "this part is itself a test (yes or no); compare values, and join tests with and, or, not",
        )),
        _ => Ok(Kind::Number),
    }
}

/// The kinds of two sides facing each other: a double-quoted text facing a text or
/// date-time column is a value; both sides double-quoted, the left one is a column.
fn kinds<'a>(a: &Expr, b: &Expr, cx: &Cx<'a>) -> Result<(Kind<'a>, Kind<'a>), ExprError> {
    let is_quoted = |e: &Expr| matches!(e.kind, ExprKind::Quoted(_));
    let as_value = |k: &Kind| matches!(k, Kind::Levels(_) | Kind::Time(..));
    if is_quoted(b) {
        let ka = kind_of(a, cx)?;
        let kb = if as_value(&ka) { Kind::Text } else { kind_of(b, cx)? };
        return Ok((ka, kb));
    }
    let kb = kind_of(b, cx)?;
    let ka = if is_quoted(a) && as_value(&kb) { Kind::Text } else { kind_of(a, cx)? };
    Ok((ka, kb))
}

/// The text of a side read as a value.
fn text_of(e: &Expr) -> &str {
    match &e.kind {
        ExprKind::Text(t) | ExprKind::Quoted(t) => t,
        _ => unreachable!("only quoted sides are values"),
    }
}

/// Numbers (seconds for date-times) of a numeric or date-time side, NaN where missing.
fn numbers_of(e: &Expr, k: Kind, cx: &Cx) -> Result<Val, ExprError> {
    if let (Kind::Time(..), ExprKind::Column(n) | ExprKind::Quoted(n)) = (k, &e.kind) {
        let col = lookup(n, e.span, cx.cols)?;
        return Ok(Val::Column(column_times(col).expect("a date-time column").0));
    }
    eval::values(e, cx.cols, Fills::PerColumn(cx.missing))
}

/// A date-time written as text, in seconds since 1970 UTC, or a caret at the text. A text
/// without an offset is a clock at `clock` seconds east of UTC (the column's offset): a
/// station logging in +02:00 is asked `time >= '2024-07-15 06:00'` in its own hours.
fn time_literal(t: &str, at: Span, order: Option<DayOrder>, clock: i32) -> Result<f64, ExprError> {
    timecol::parse(t, order).map(|s| if s.zoned { s.seconds() } else { s.local - clock as f64 }).map_err(|why| {
        ExprError::new(at, format!("'{t}' is not a date-time ({why}); write it as 2013-06-01 or 2013-06-01 06:00, in quotes"))
    })
}

fn column_name(e: &Expr) -> String {
    match &e.kind {
        ExprKind::Column(n) | ExprKind::Quoted(n) => quoted(n),
        _ => "this side".into(),
    }
}

fn compare(op: Cmp, a: &Expr, b: &Expr, cx: &Cx) -> Result<Vec<u8>, ExprError> {
    let (ka, kb) = kinds(a, b, cx)?;
    match (ka, kb) {
        (Kind::Number | Kind::Time(..), Kind::Number | Kind::Time(..)) => {
            Ok(numeric(op, numbers_of(a, ka, cx)?, numbers_of(b, kb, cx)?, cx.n))
        }
        (Kind::Time(order, clock), Kind::Text) => Ok(numeric(op, numbers_of(a, ka, cx)?, Val::Scalar(time_literal(text_of(b), b.span, order, clock)?), cx.n)),
        (Kind::Text, Kind::Time(order, clock)) => Ok(numeric(op, Val::Scalar(time_literal(text_of(a), a.span, order, clock)?), numbers_of(b, kb, cx)?, cx.n)),
        (Kind::Levels(col), Kind::Text) => levels_vs_text(op, col, a, b),
        (Kind::Text, Kind::Levels(col)) => levels_vs_text(op.flipped(), col, b, a),
        (Kind::Levels(x), Kind::Levels(y)) => {
            if op.is_order() {
                return Err(order_refused(a, op));
            }
            Ok(levels_vs_levels(op, x, y))
        }
        (Kind::Number, Kind::Text) => Err(text_facing_numbers(b, a)),
        (Kind::Text, Kind::Number) => Err(text_facing_numbers(a, b)),
        (Kind::Levels(_), Kind::Number | Kind::Time(..)) => Err(levels_facing(a)),
        (Kind::Number | Kind::Time(..), Kind::Levels(_)) => Err(levels_facing(b)),
        (Kind::Text, Kind::Text) => Err(ExprError::new(
            Span { start: a.span.start, end: b.span.end },
            "two values in quotes: compare a column with a value, as in site == 'north'",
        )),
    }
}

fn numeric(op: Cmp, a: Val, b: Val, n: usize) -> Vec<u8> {
    let one = |x: f64, y: f64| if x.is_nan() || y.is_nan() { UNKNOWN } else if op.holds(x, y) { YES } else { NO };
    match (a, b) {
        (Val::Scalar(x), Val::Scalar(y)) => vec![one(x, y); n],
        (Val::Column(v), Val::Scalar(y)) => v.iter().map(|&x| one(x, y)).collect(),
        (Val::Scalar(x), Val::Column(w)) => w.iter().map(|&y| one(x, y)).collect(),
        (Val::Column(v), Val::Column(w)) => v.iter().zip(&w).map(|(&x, &y)| one(x, y)).collect(),
    }
}

fn order_refused(levels: &Expr, op: Cmp) -> ExprError {
    ExprError::new(
        levels.span,
        format!(
            "column {} holds text values, which have no order for '{}'; compare them with ==, != or in ('a', 'b')",
            column_name(levels),
            op.symbol()
        ),
    )
}

fn text_facing_numbers(text: &Expr, numbers: &Expr) -> ExprError {
    let t = text_of(text);
    let hint = if t.trim().parse::<f64>().is_ok() { format!(": write {} without quotes", t.trim()) } else { String::new() };
    ExprError::new(text.span, format!("'{t}' is text, and {} holds numbers{hint}", column_name(numbers)))
}

fn levels_facing(levels: &Expr) -> ExprError {
    ExprError::new(
        levels.span,
        format!(
            "column {} holds text values, not numbers or times; compare it with a value in quotes, as in {} == 'north'",
            column_name(levels),
            column_name(levels)
        ),
    )
}

/// The index of `text` among the column's levels, or an error at `at` naming the nearest.
fn level_index(col: &Column, text: &str, at: Span) -> Result<u32, ExprError> {
    let ColumnData::Category { levels, .. } = &col.data else { unreachable!("a text column") };
    if let Some(k) = levels.iter().position(|l| l == text) {
        return Ok(k as u32);
    }
    let lower = text.to_lowercase();
    let near = levels
        .iter()
        .map(|l| (if l.to_lowercase() == lower { 0 } else { edit_distance(&l.to_lowercase(), &lower) }, l))
        .filter(|(d, l)| *d <= 2.max(l.chars().count() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, l)| format!("; did you mean '{l}'?"));
    let hint = near.unwrap_or_else(|| {
        let shown: Vec<String> = levels.iter().take(5).map(|l| format!("'{l}'")).collect();
        let more = if levels.len() > 5 { format!(", … ({} values in all)", levels.len()) } else { String::new() };
        format!("; its values include {}{more}", shown.join(", "))
    });
    Err(ExprError::new(at, format!("no row of column {} holds the value '{text}'{hint}", quoted(&col.name))))
}

fn levels_vs_text(op: Cmp, col: &Column, levels: &Expr, text: &Expr) -> Result<Vec<u8>, ExprError> {
    if op.is_order() {
        return Err(order_refused(levels, op));
    }
    let k = level_index(col, text_of(text), text.span)?;
    let ColumnData::Category { codes, .. } = &col.data else { unreachable!("a text column") };
    let (hit, miss) = if op == Cmp::Eq { (YES, NO) } else { (NO, YES) };
    Ok(codes.iter().map(|&c| if c == MISSING_CODE { UNKNOWN } else if c == k { hit } else { miss }).collect())
}

fn levels_vs_levels(op: Cmp, x: &Column, y: &Column) -> Vec<u8> {
    let (ColumnData::Category { codes: cx, levels: lx }, ColumnData::Category { codes: cy, levels: ly }) = (&x.data, &y.data) else {
        unreachable!("text columns")
    };
    let of_y: HashMap<&str, u32> = ly.iter().enumerate().map(|(i, l)| (l.as_str(), i as u32)).collect();
    let same: Vec<Option<u32>> = lx.iter().map(|l| of_y.get(l.as_str()).copied()).collect();
    let (hit, miss) = if op == Cmp::Eq { (YES, NO) } else { (NO, YES) };
    cx.iter()
        .zip(cy.iter())
        .map(|(&a, &b)| {
            if a == MISSING_CODE || b == MISSING_CODE {
                UNKNOWN
            } else if same[a as usize] == Some(b) {
                hit
            } else {
                miss
            }
        })
        .collect()
}

/// A value of an `in` list.
enum Item<'e> {
    Number(f64),
    Text(&'e str),
}

fn item(e: &Expr) -> Result<Item<'_>, ExprError> {
    match &e.kind {
        ExprKind::Number(v) => Ok(Item::Number(*v)),
        ExprKind::Neg(inner) => match inner.kind {
            ExprKind::Number(v) => Ok(Item::Number(-v)),
            _ => Err(not_a_value(e)),
        },
        ExprKind::Text(t) | ExprKind::Quoted(t) => Ok(Item::Text(t)),
        _ => Err(not_a_value(e)),
    }
}

fn not_a_value(e: &Expr) -> ExprError {
    ExprError::new(e.span, "a list after 'in' holds values: numbers, or texts in quotes")
}

/// `value in (items)`: yes when the value equals an item, unknown when it is missing.
fn within(value: &Expr, items: &[Expr], cx: &Cx) -> Result<Vec<u8>, ExprError> {
    if let ExprKind::Text(t) = &value.kind {
        return Err(ExprError::new(value.span, format!("'{t}' is a value; put a column before 'in', as in site in ('a', 'b')")));
    }
    let k = kind_of(value, cx)?;
    let items: Vec<(Item, Span)> = items.iter().map(|e| item(e).map(|i| (i, e.span))).collect::<Result<_, _>>()?;
    match k {
        Kind::Levels(col) => {
            let mut wanted = vec![false; match &col.data {
                ColumnData::Category { levels, .. } => levels.len(),
                ColumnData::Number(_) | ColumnData::Time(_) => 0,
            }];
            for (i, span) in &items {
                match i {
                    Item::Text(t) => wanted[level_index(col, t, *span)? as usize] = true,
                    Item::Number(v) => {
                        return Err(ExprError::new(
                            *span,
                            format!("column {} holds text values: write the value in quotes, '{v}'", quoted(&col.name)),
                        ))
                    }
                }
            }
            let ColumnData::Category { codes, .. } = &col.data else { unreachable!("a text column") };
            Ok(codes.iter().map(|&c| if c == MISSING_CODE { UNKNOWN } else if wanted[c as usize] { YES } else { NO }).collect())
        }
        Kind::Number | Kind::Time(..) => {
            let mut wanted = Vec::with_capacity(items.len());
            for (i, span) in &items {
                wanted.push(match (i, k) {
                    (Item::Number(v), _) => *v,
                    (Item::Text(t), Kind::Time(order, clock)) => time_literal(t, *span, order, clock)?,
                    (Item::Text(t), _) => {
                        let hint = if t.trim().parse::<f64>().is_ok() { format!(": write {} without quotes", t.trim()) } else { String::new() };
                        return Err(ExprError::new(*span, format!("'{t}' is text, and {} holds numbers{hint}", column_name(value))));
                    }
                });
            }
            let one = |x: f64| if x.is_nan() { UNKNOWN } else if wanted.contains(&x) { YES } else { NO };
            Ok(match numbers_of(value, k, cx)? {
                Val::Scalar(x) => vec![one(x); cx.n],
                Val::Column(v) => v.iter().map(|&x| one(x)).collect(),
            })
        }
        Kind::Text => unreachable!("a value before 'in' is refused above; a quoted name there is a column"),
    }
}
