//! Evaluating a parsed expression column-wise: every column name is looked up once, each
//! operation runs over whole columns, and the result is one `Vec<f64>` for the table.
//!
//! Missing values: a row missing in any input column (NaN, infinite or a declared fill
//! value) is NaN in the result. Undefined operations (log or log10 of a value <= 0, sqrt
//! of a negative value, division by zero) and results too large for a number give NaN
//! too, and are counted by kind so the user is told how many rows they cost.
//! What it is not: parsing (see [`super::parse`]), deciding which columns the points use,
//! or the yes-or-no parts of a row condition ([`super::condition`], which calls
//! [`values`] for the numbers it compares).

use crate::derive::parse::{Expr, ExprError, ExprKind, Func, Op, Span};
use crate::settings::Missing;
use crate::table::{Column, ColumnData};
use crate::timecol;

/// Looks a column up by name among the file's columns and the derived ones before it.
pub trait Columns {
    fn get(&self, name: &str) -> Option<&Column>;
    /// Every name, to suggest the nearest one when a name is not found.
    fn names(&self) -> Vec<&str>;
    fn n_rows(&self) -> usize;
}

/// Rows where an operation was undefined, by kind.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Undefined {
    /// What went wrong, such as "log of a value <= 0".
    pub what: String,
    pub rows: usize,
    /// The first such row, as a 1-based data row of the file.
    pub first_row: usize,
}

/// What an undefined input is called, when an input is undefined, and the function.
type Unary = (&'static str, fn(f64) -> bool, fn(f64) -> f64);

/// A value of every row: one number for all, or one per row (NaN where missing).
#[derive(Debug, Clone, PartialEq)]
pub enum Val {
    Scalar(f64),
    Column(Vec<f64>),
}

/// Which cells of a numeric column count as missing, besides NaN and infinities.
#[derive(Debug, Clone, Copy)]
pub enum Fills<'a> {
    /// One list for every column (derived columns read the global list).
    Global(&'a [f64]),
    /// Each column's own list (row conditions; see [`Missing::fills_for`]).
    PerColumn(&'a Missing),
}

impl Fills<'_> {
    fn of(&self, column: &str) -> &[f64] {
        match self {
            Fills::Global(f) => f,
            Fills::PerColumn(m) => m.fills_for(column),
        }
    }
}

struct Ctx<'a> {
    cols: &'a dyn Columns,
    fills: Fills<'a>,
    undefined: Vec<Undefined>,
}

impl Ctx<'_> {
    fn note(&mut self, what: &str, row: usize) {
        match self.undefined.iter_mut().find(|u| u.what == what) {
            Some(u) => u.rows += 1,
            None => self.undefined.push(Undefined { what: what.to_string(), rows: 1, first_row: row + 1 }),
        }
    }
}

/// Evaluates `e` over every row. Returns the values and the undefined operations met.
pub fn evaluate(e: &Expr, cols: &dyn Columns, fills: &[f64]) -> Result<(Vec<f64>, Vec<Undefined>), ExprError> {
    check(e, cols)?;
    let mut cx = Ctx { cols, fills: Fills::Global(fills), undefined: Vec::new() };
    let n = cols.n_rows();
    let mut out = match eval(e, &mut cx)? {
        Val::Scalar(v) => vec![v; n],
        Val::Column(v) => v,
    };
    for (i, x) in out.iter_mut().enumerate() {
        if x.is_infinite() {
            *x = f64::NAN;
            cx.note("result too large for a number", i);
        }
    }
    Ok((out, cx.undefined))
}

/// The value of a numeric part of a row condition (checked first), NaN where missing or
/// undefined; nothing is counted.
pub fn values(e: &Expr, cols: &dyn Columns, fills: Fills) -> Result<Val, ExprError> {
    check(e, cols)?;
    let mut cx = Ctx { cols, fills, undefined: Vec::new() };
    Ok(match eval(e, &mut cx)? {
        Val::Scalar(v) if v.is_infinite() => Val::Scalar(f64::NAN),
        Val::Column(mut v) => {
            v.iter_mut().filter(|x| x.is_infinite()).for_each(|x| *x = f64::NAN);
            Val::Column(v)
        }
        v => v,
    })
}

/// Checks every name before any work: it exists, numbers where numbers are read, a
/// date-time column where hour(), doy() or time() read one.
pub fn check(e: &Expr, cols: &dyn Columns) -> Result<(), ExprError> {
    match &e.kind {
        ExprKind::Number(_) => Ok(()),
        ExprKind::Text(t) => Err(ExprError::new(e.span, format!("'{t}' is text, not a number"))),
        k if k.is_test() => Err(ExprError::new(
            e.span,
            "this part says yes or no, it has no number; a comparison compares numbers, texts or times, and and, or, not join such tests",
        )),
        ExprKind::Column(name) | ExprKind::Quoted(name) => match lookup(name, e.span, cols)?.data {
            ColumnData::Number(_) | ColumnData::Time(_) => Ok(()),
            ColumnData::Category { .. } => {
                let hint = if timecol::parse_column(lookup(name, e.span, cols)?).is_ok() {
                    format!("; it reads as date-times: use hour({0}), doy({0}) or time({0})", quoted(name))
                } else {
                    String::new()
                };
                Err(ExprError::new(e.span, format!("column '{name}' holds categories, not numbers{hint}")))
            }
        },
        ExprKind::Neg(a) => check(a, cols),
        ExprKind::Binary(_, a, b) => check(a, cols).and_then(|_| check(b, cols)),
        ExprKind::Call(f, args) if f.reads_time() => {
            let a = &args[0];
            let (ExprKind::Column(name) | ExprKind::Quoted(name)) = &a.kind else {
                return Err(ExprError::new(a.span, format!("{}() reads a date-time column by name, as in {}(when)", f.name(), f.name())));
            };
            let col = lookup(name, a.span, cols)?;
            if let ColumnData::Number(_) = col.data {
                return Err(ExprError::new(a.span, format!("column '{name}' holds numbers; {}() reads a column of date-times such as 2024-07-15 08:30", f.name())));
            }
            match col.data {
                ColumnData::Time(_) => Ok(()),
                _ => timecol::parse_column(col).map(|_| ()).map_err(|why| ExprError::new(a.span, why)),
            }
        }
        ExprKind::Call(_, args) => args.iter().try_for_each(|a| check(a, cols)),
        _ => unreachable!("tests are refused above"),
    }
}

/// A column name as it is written in an expression: bare when it can be, else in double quotes.
pub fn quoted(name: &str) -> String {
    let plain = name.bytes().next().is_some_and(|c| c.is_ascii_alphabetic() || c == b'_') && name.bytes().all(|c| c.is_ascii_alphanumeric() || c == b'_');
    if plain {
        name.to_string()
    } else {
        format!("\"{}\"", name.replace('"', "\"\""))
    }
}

pub(crate) fn lookup<'a>(name: &str, span: Span, cols: &'a dyn Columns) -> Result<&'a Column, ExprError> {
    cols.get(name).ok_or_else(|| {
        let near = cols
            .names()
            .into_iter()
            .map(|c| (edit_distance(&c.to_lowercase(), &name.to_lowercase()), c))
            .filter(|(d, c)| *d <= 2.max(c.chars().count() / 3))
            .min_by_key(|(d, _)| *d)
            .map(|(_, c)| format!("; did you mean {}?", quoted(c)))
            .unwrap_or_default();
        ExprError::new(span, format!("no column named '{name}'{near}"))
    })
}

/// Levenshtein distance over characters (common practice), for "did you mean".
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut prev = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let cur = row[j + 1];
            row[j + 1] = (prev + (ca != cb) as usize).min(row[j] + 1).min(cur + 1);
            prev = cur;
        }
    }
    row[b.len()]
}

fn numbers(name: &str, cx: &Ctx) -> Vec<f64> {
    let col = cx.cols.get(name).expect("checked");
    let v = col.as_numbers().expect("checked");
    let fills = cx.fills.of(name);
    v.iter().map(|&x| if !x.is_finite() || fills.contains(&x) { f64::NAN } else { x }).collect()
}

fn eval(e: &Expr, cx: &mut Ctx) -> Result<Val, ExprError> {
    Ok(match &e.kind {
        ExprKind::Number(v) => Val::Scalar(*v),
        ExprKind::Column(name) | ExprKind::Quoted(name) => Val::Column(numbers(name, cx)),
        ExprKind::Neg(a) => map1(eval(a, cx)?, |x| -x),
        ExprKind::Binary(op, a, b) => {
            let (a, b) = (eval(a, cx)?, eval(b, cx)?);
            binary(*op, a, b, cx)
        }
        ExprKind::Call(f, args) if f.reads_time() => {
            let (ExprKind::Column(name) | ExprKind::Quoted(name)) = &args[0].kind else { unreachable!("checked") };
            let col = cx.cols.get(name).expect("checked");
            let part = match f {
                Func::Hour => timecol::Part::Hour,
                Func::Doy => timecol::Part::DayOfYear,
                _ => timecol::Part::Seconds,
            };
            Val::Column(timecol::part(col, part).map_err(|why| ExprError::new(args[0].span, why))?)
        }
        ExprKind::Call(f, args) if f.arity() == 2 => {
            let (a, b) = (eval(&args[0], cx)?, eval(&args[1], cx)?);
            // NaN in either input is missing, so NaN out (f64::min would drop it).
            let pick: fn(f64, f64) -> f64 = if *f == Func::Min { f64::min } else { f64::max };
            zip(a, b, |x, y| if x.is_nan() || y.is_nan() { f64::NAN } else { pick(x, y) })
        }
        ExprKind::Call(f, args) => {
            let a = eval(&args[0], cx)?;
            let (what, bad, g): Unary = match f {
                Func::Abs => ("", |_| false, f64::abs),
                Func::Exp => ("", |_| false, f64::exp),
                Func::Log => ("log of a value <= 0", |x| x <= 0.0, f64::ln),
                Func::Log10 => ("log10 of a value <= 0", |x| x <= 0.0, f64::log10),
                Func::Sqrt => ("sqrt of a negative value", |x| x < 0.0, f64::sqrt),
                _ => unreachable!("handled above"),
            };
            match a {
                Val::Scalar(x) if bad(x) => {
                    return Err(ExprError::new(e.span, format!("{what}: {x}")));
                }
                Val::Scalar(x) => Val::Scalar(g(x)),
                Val::Column(mut v) => {
                    for (i, x) in v.iter_mut().enumerate() {
                        if bad(*x) {
                            *x = f64::NAN;
                            cx.note(what, i);
                        } else {
                            *x = g(*x);
                        }
                    }
                    Val::Column(v)
                }
            }
        }
        ExprKind::Text(_)
        | ExprKind::Compare(..)
        | ExprKind::In(..)
        | ExprKind::And(..)
        | ExprKind::Or(..)
        | ExprKind::Not(_) => unreachable!("refused by check"),
    })
}

fn map1(v: Val, f: impl Fn(f64) -> f64) -> Val {
    match v {
        Val::Scalar(x) => Val::Scalar(f(x)),
        Val::Column(mut v) => {
            v.iter_mut().for_each(|x| *x = f(*x));
            Val::Column(v)
        }
    }
}

fn zip(a: Val, b: Val, f: impl Fn(f64, f64) -> f64) -> Val {
    match (a, b) {
        (Val::Scalar(x), Val::Scalar(y)) => Val::Scalar(f(x, y)),
        (Val::Column(mut v), Val::Scalar(y)) => {
            v.iter_mut().for_each(|x| *x = f(*x, y));
            Val::Column(v)
        }
        (Val::Scalar(x), Val::Column(mut v)) => {
            v.iter_mut().for_each(|y| *y = f(x, *y));
            Val::Column(v)
        }
        (Val::Column(mut v), Val::Column(w)) => {
            v.iter_mut().zip(&w).for_each(|(x, &y)| *x = f(*x, y));
            Val::Column(v)
        }
    }
}

fn binary(op: Op, a: Val, b: Val, cx: &mut Ctx) -> Val {
    match op {
        Op::Add => zip(a, b, |x, y| x + y),
        Op::Sub => zip(a, b, |x, y| x - y),
        Op::Mul => zip(a, b, |x, y| x * y),
        Op::Div => {
            // Division by zero is undefined: NaN, counted (x / 0 would be infinite in f64).
            let zero_rows: Vec<usize> = match (&a, &b) {
                (Val::Column(v), Val::Column(w)) => (0..w.len()).filter(|&i| w[i] == 0.0 && !v[i].is_nan()).collect(),
                (Val::Scalar(x), Val::Column(w)) if !x.is_nan() => (0..w.len()).filter(|&i| w[i] == 0.0).collect(),
                (Val::Column(v), Val::Scalar(y)) if *y == 0.0 => (0..v.len()).filter(|&i| !v[i].is_nan()).collect(),
                (Val::Scalar(_), Val::Scalar(y)) if *y == 0.0 => (0..cx.cols.n_rows()).collect(),
                _ => Vec::new(),
            };
            for &i in &zero_rows {
                cx.note("division by zero", i);
            }
            zip(a, b, |x, y| if y == 0.0 { f64::NAN } else { x / y })
        }
    }
}
