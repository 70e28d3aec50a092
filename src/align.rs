//! Two tables on one time axis: a second table (model output, another instrument) brought
//! onto the rows of a first (the measurements), by time, matched per group when a key
//! column (site, station, platform) names the group in both.
//!
//! Two methods:
//! - **Nearest**: each measurement row takes the whole model row nearest in time within a
//!   tolerance (inclusive: a distance equal to the tolerance matches), as
//!   `pandas.merge_asof(direction="nearest", tolerance=..., by=...)`. Ties follow pandas:
//!   when the model rows before and after are equally far, the earlier one is taken; among
//!   model rows with the same time, the last of them is taken when at or before the
//!   measurement time and the first of them when after. Checked against pandas in
//!   `tests/reference/fixtures/align.json`.
//! - **Linear**: each numeric model column is interpolated linearly in time between the
//!   model rows that have a value in that column, as `numpy.interp`, except outside the
//!   model's time range, where the value is missing (numpy would repeat the edge value:
//!   a model says nothing there). An optional largest gap leaves rows missing when the two
//!   model rows around them are farther apart than that. Category columns of the model take
//!   the nearest row's value (no tolerance). Checked against numpy in the same fixture.
//!
//! Time columns are time columns (the readers type date-times and ICARTT's `time_utc` so),
//! numbers (taken as seconds since 1970 UTC), or date-time text (read by [`crate::timecol`];
//! a text column the reader did not type as time gives its reason here). The model's columns are added with a
//! prefix (`model_` by default, made unique). Variables present in both tables by the same
//! name become [`Pair`]s, from which [`differences`] makes derived columns
//! (measurement minus model).
//!
//! What it is not: a resampler onto a regular grid, nor a join on anything but time and one key.

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::settings::Derived;
use crate::table::merge::free_name;
use crate::table::{Column, ColumnData, Table, MISSING_CODE};
use crate::timecol;

/// How model rows are brought onto measurement rows.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "camelCase", deny_unknown_fields)]
pub enum Method {
    /// Nearest model row; `tolerance` in seconds (none: any distance).
    Nearest {
        #[serde(default)]
        tolerance: Option<f64>,
    },
    /// Linear interpolation; `maxGap` in seconds (none: any gap is bridged).
    #[serde(rename_all = "camelCase")]
    Linear {
        #[serde(default)]
        max_gap: Option<f64>,
    },
}

fn default_prefix() -> String {
    "model_".into()
}

/// What the alignment dialog chooses.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct AlignSpec {
    pub measurement_time: String,
    pub model_time: String,
    /// Key column of the measurements (site, station); matched with `model_key`.
    #[serde(default)]
    pub measurement_key: Option<String>,
    #[serde(default)]
    pub model_key: Option<String>,
    pub method: Method,
    #[serde(default = "default_prefix")]
    pub prefix: String,
}

/// A variable in both tables: the measurement column and the model column added for it.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Pair {
    pub measurement: String,
    pub model: String,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct AlignReport {
    pub rows: usize,
    /// Rows that received a model row (nearest) or at least one interpolated value (linear).
    pub matched: usize,
    /// Rows without a time value.
    pub no_time: usize,
    /// Rows whose key has no model rows.
    pub no_group: usize,
    /// Model columns added, with their new names.
    pub added: Vec<String>,
    pub pairs: Vec<Pair>,
}

fn check(spec: &AlignSpec) -> Result<()> {
    if spec.measurement_key.is_some() != spec.model_key.is_some() {
        return Err(Error::settings("align.modelKey", "give a key column for both tables, or for neither"));
    }
    let bad = |x: Option<f64>| x.is_some_and(|v| !(v >= 0.0) || !v.is_finite());
    match spec.method {
        Method::Nearest { tolerance } if bad(tolerance) => {
            Err(Error::settings("align.method.tolerance", "the tolerance must be a number of seconds, 0 or more"))
        }
        Method::Linear { max_gap } if bad(max_gap) => {
            Err(Error::settings("align.method.maxGap", "the largest gap must be a number of seconds, 0 or more"))
        }
        _ => Ok(()),
    }
}

/// Seconds of every row of a time column (numbers as they are, date-time text parsed).
pub fn time_of(table: &Table, name: &str, field: &str) -> Result<Vec<f64>> {
    let col = table.column(name).ok_or_else(|| Error::settings(field, format!("no column named '{name}' in {}", table.name)))?;
    match &col.data {
        ColumnData::Number(v) => Ok(v.to_vec()),
        ColumnData::Time(t) => Ok(t.seconds.to_vec()),
        ColumnData::Category { codes, .. } => {
            let t = timecol::parse_column(col).map_err(|why| Error::settings(field, format!("{}: {why}", table.name)))?;
            Ok(t.map(codes, timecol::Stamp::seconds))
        }
    }
}

/// Group ids of every row by a key column's text, sharing `ids` between tables.
fn key_ids(table: &Table, name: Option<&str>, field: &str, ids: &mut HashMap<String, u32>) -> Result<Vec<Option<u32>>> {
    let Some(name) = name else { return Ok(vec![Some(0); table.n_rows]) };
    let col = table.column(name).ok_or_else(|| Error::settings(field, format!("no column named '{name}' in {}", table.name)))?;
    let mut id = |text: String| {
        let next = ids.len() as u32;
        *ids.entry(text).or_insert(next)
    };
    Ok(match &col.data {
        ColumnData::Category { codes, levels } => {
            let per_level: Vec<u32> = levels.iter().map(|l| id(l.clone())).collect();
            codes.iter().map(|&c| (c != MISSING_CODE).then(|| per_level[c as usize])).collect()
        }
        ColumnData::Number(v) => v.iter().map(|x| (!x.is_nan()).then(|| id(format!("{x}")))).collect(),
        ColumnData::Time(t) => (0..t.len()).map(|i| t.text(i).map(&mut id)).collect(),
    })
}

/// Model rows of each group, sorted by time (stable: equal times keep file order).
fn groups(times: &[f64], keys: &[Option<u32>], rows: impl Iterator<Item = usize>) -> HashMap<u32, (Vec<f64>, Vec<usize>)> {
    let mut by: HashMap<u32, Vec<usize>> = HashMap::new();
    for r in rows {
        if let (false, Some(k)) = (times[r].is_nan(), keys[r]) {
            by.entry(k).or_default().push(r);
        }
    }
    by.into_iter()
        .map(|(k, mut rows)| {
            rows.sort_by(|&a, &b| times[a].total_cmp(&times[b]));
            (k, (rows.iter().map(|&r| times[r]).collect(), rows))
        })
        .collect()
}

/// Index into sorted `ts` of the nearest time to `t` within `tolerance`, with pandas' ties.
fn nearest(ts: &[f64], t: f64, tolerance: Option<f64>) -> Option<usize> {
    let after_le = ts.partition_point(|&x| x <= t);
    let back = after_le.checked_sub(1);
    let fwd = ts.partition_point(|&x| x < t);
    let within = |d: f64| tolerance.is_none_or(|tol| d <= tol);
    let back = back.filter(|&b| within(t - ts[b]));
    let fwd = (fwd < ts.len()).then_some(fwd).filter(|&f| within(ts[f] - t));
    match (back, fwd) {
        (Some(b), Some(f)) => Some(if t - ts[b] <= ts[f] - t { b } else { f }),
        (b, f) => b.or(f),
    }
}

/// Linear interpolation at `t` in sorted `(ts, vs)`; missing outside the range or across a
/// gap wider than `max_gap`.
fn interpolate(ts: &[f64], vs: &[f64], t: f64, max_gap: Option<f64>) -> f64 {
    let (Some(&first), Some(&last)) = (ts.first(), ts.last()) else { return f64::NAN };
    if t < first || t > last {
        return f64::NAN;
    }
    let j = ts.partition_point(|&x| x <= t) - 1;
    if ts[j] == t {
        return vs[j];
    }
    let (t0, t1, v0, v1) = (ts[j], ts[j + 1], vs[j], vs[j + 1]);
    if max_gap.is_some_and(|g| t1 - t0 > g) {
        return f64::NAN;
    }
    v0 + (v1 - v0) * (t - t0) / (t1 - t0)
}

/// Takes rows of a column: `None` gives a missing value.
fn take(col: &Column, rows: &[Option<usize>]) -> ColumnData {
    match &col.data {
        ColumnData::Number(v) => ColumnData::numbers(rows.iter().map(|r| r.map_or(f64::NAN, |r| v[r])).collect()),
        ColumnData::Category { codes, levels } => {
            ColumnData::categories(rows.iter().map(|r| r.map_or(MISSING_CODE, |r| codes[r])).collect(), levels.clone())
        }
        ColumnData::Time(t) => ColumnData::Time(t.take(rows)),
    }
}

/// Brings `model` onto the rows of `meas`. The result has the measurement's rows and
/// columns, then the model's columns (prefixed), and keeps the measurement table's name.
pub fn align(meas: &Table, model: &Table, spec: &AlignSpec) -> Result<(Table, AlignReport)> {
    check(spec)?;
    let mt = time_of(meas, &spec.measurement_time, "align.measurementTime")?;
    let ot = time_of(model, &spec.model_time, "align.modelTime")?;
    let mut ids = HashMap::new();
    let mk = key_ids(meas, spec.measurement_key.as_deref(), "align.measurementKey", &mut ids)?;
    let ok = key_ids(model, spec.model_key.as_deref(), "align.modelKey", &mut ids)?;
    let all = groups(&ot, &ok, 0..model.n_rows);

    let mut report = AlignReport { rows: meas.n_rows, matched: 0, no_time: 0, no_group: 0, added: Vec::new(), pairs: Vec::new() };
    // The nearest model row of every measurement row (tolerance only for the nearest method).
    let tolerance = match spec.method {
        Method::Nearest { tolerance } => tolerance,
        Method::Linear { .. } => None,
    };
    let mut near: Vec<Option<usize>> = Vec::with_capacity(meas.n_rows);
    for i in 0..meas.n_rows {
        let hit = if mt[i].is_nan() {
            report.no_time += 1;
            None
        } else {
            match mk[i].and_then(|k| all.get(&k)) {
                None => {
                    report.no_group += 1;
                    None
                }
                Some((ts, rows)) => nearest(ts, mt[i], tolerance).map(|j| rows[j]),
            }
        };
        near.push(hit);
    }

    let skip: Vec<&str> = {
        let mut s = vec![];
        if matches!(spec.method, Method::Linear { .. }) {
            s.push(spec.model_time.as_str());
        }
        if let Some(k) = &spec.model_key {
            s.push(k.as_str());
        }
        s
    };
    let mut columns = meas.columns.clone();
    let mut any_value = vec![false; meas.n_rows];
    for col in model.columns.iter().filter(|c| !skip.contains(&c.name.as_str())) {
        let taken: Vec<&str> = columns.iter().map(|c| c.name.as_str()).collect();
        let new_name = free_name(&format!("{}{}", spec.prefix, col.name), &taken);
        let data = match (&spec.method, &col.data) {
            (Method::Linear { max_gap }, ColumnData::Number(v)) => {
                let rows_with_value = (0..model.n_rows).filter(|&r| !v[r].is_nan());
                let per = groups(&ot, &ok, rows_with_value);
                let per: HashMap<u32, (Vec<f64>, Vec<f64>)> =
                    per.into_iter().map(|(k, (ts, rows))| (k, (ts, rows.iter().map(|&r| v[r]).collect()))).collect();
                let values = (0..meas.n_rows)
                    .map(|i| match mk[i].and_then(|k| per.get(&k)) {
                        Some((ts, vs)) if !mt[i].is_nan() => interpolate(ts, vs, mt[i], *max_gap),
                        _ => f64::NAN,
                    })
                    .collect::<Vec<f64>>();
                for (i, x) in values.iter().enumerate() {
                    any_value[i] |= !x.is_nan();
                }
                ColumnData::numbers(values)
            }
            _ => take(col, &near),
        };
        if meas.column(&col.name).is_some_and(|m| matches!(m.data, ColumnData::Number(_))) && matches!(data, ColumnData::Number(_)) && col.name != spec.model_time {
            report.pairs.push(Pair { measurement: col.name.clone(), model: new_name.clone() });
        }
        report.added.push(new_name.clone());
        columns.push(Column::of(new_name, data).with_unit(col.unit.clone()));
    }
    report.matched = match spec.method {
        Method::Nearest { .. } => near.iter().filter(|r| r.is_some()).count(),
        Method::Linear { .. } => any_value.iter().filter(|&&b| b).count(),
    };
    let table = Table::from_columns(meas.name.clone(), columns)?;
    Ok((table, report))
}

/// Quotes a column name for the derived-column language (`"a ""b"""`).
fn quoted(name: &str) -> String {
    format!("\"{}\"", name.replace('"', "\"\""))
}

/// One derived column per pair: measurement minus model, named `diff_<measurement>`
/// (made unique against `taken`, the table's columns and derived columns already listed).
pub fn differences(pairs: &[Pair], taken: &[&str]) -> Vec<Derived> {
    let mut names: Vec<String> = taken.iter().map(|s| s.to_string()).collect();
    pairs
        .iter()
        .map(|p| {
            let refs: Vec<&str> = names.iter().map(String::as_str).collect();
            let name = free_name(&format!("diff_{}", p.measurement), &refs);
            names.push(name.clone());
            Derived { name, expression: format!("{} - {}", quoted(&p.measurement), quoted(&p.model)) }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::ReadOptions;

    fn csv(name: &str, text: &str) -> Table {
        Table::from_csv_bytes(name, text.as_bytes(), &ReadOptions::default()).unwrap()
    }

    fn spec(method: Method, key: bool) -> AlignSpec {
        AlignSpec {
            measurement_time: "t".into(),
            model_time: "t".into(),
            measurement_key: key.then(|| "site".into()),
            model_key: key.then(|| "site".into()),
            method,
            prefix: default_prefix(),
        }
    }

    #[test]
    fn nearest_ties_take_the_earlier_row_and_tolerance_is_inclusive() {
        // Tie rule as pandas' merge_asof nearest (checked in the fixture test too).
        let ts = [0.0, 10.0, 10.0, 20.0];
        assert_eq!(nearest(&ts, 5.0, None), Some(0));
        assert_eq!(nearest(&ts, 10.0, None), Some(2));
        assert_eq!(nearest(&ts, 12.0, None), Some(2));
        assert_eq!(nearest(&ts, 16.0, None), Some(3));
        assert_eq!(nearest(&ts, 25.0, Some(5.0)), Some(3));
        assert_eq!(nearest(&ts, 25.5, Some(5.0)), None);
    }

    #[test]
    fn per_group_nearest_and_linear() {
        let meas = csv("m", "t,site,temp\n5,a,1\n5,b,2\n40,a,3\n");
        let model = csv("o", "t,site,temp,flag\n0,a,10,x\n10,a,20,y\n0,b,100,z\n30,b,200,w\n");
        let (t, r) = align(&meas, &model, &spec(Method::Nearest { tolerance: Some(8.0) }, true)).unwrap();
        let m = t.numbers("model_temp", "").unwrap();
        assert_eq!(m[0], 10.0); // tie at 5 between 0 and 10: the earlier
        assert_eq!(m[1], 100.0);
        assert!(m[2].is_nan()); // 30 s from the last model row of site a
        assert_eq!(r.pairs, [Pair { measurement: "temp".into(), model: "model_temp".into() }]);
        assert_eq!(r.matched, 2);
        let (t, _) = align(&meas, &model, &spec(Method::Linear { max_gap: None }, true)).unwrap();
        let m = t.numbers("model_temp", "").unwrap();
        assert_eq!(m[0], 15.0);
        assert!((m[1] - (100.0 + 100.0 * 5.0 / 30.0)).abs() < 1e-12);
        assert!(m[2].is_nan(), "outside the model's range is missing");
        assert!(t.column("model_t").is_none());
        let (t, _) = align(&meas, &model, &spec(Method::Linear { max_gap: Some(20.0) }, true)).unwrap();
        assert!(t.numbers("model_temp", "").unwrap()[1].is_nan(), "gap of 30 s is wider than 20 s");
    }

    #[test]
    fn date_time_text_times_align_with_numeric_seconds() {
        let meas = csv("m", "when,x\n2024-07-15T00:00:30,1\n");
        let model = csv("o", "t,x\n1721001600,5\n1721001660,7\n");
        let s = AlignSpec { measurement_time: "when".into(), ..spec(Method::Linear { max_gap: None }, false) };
        let (t, _) = align(&meas, &model, &s).unwrap();
        // 2024-07-15T00:00:00Z is 1721001600 s (Python datetime).
        assert_eq!(t.numbers("model_x", "").unwrap(), &[6.0]);
    }

    /// Time columns (typed on read) align on their instants, whatever their written zone,
    /// and the model's other time columns come across as time.
    #[test]
    fn time_columns_align_on_instants() {
        let meas = csv("m", "t,x\n2024-07-15T02:00:30+02:00,1\n2024-07-15T03:00+02:00,2\n");
        let model = csv("o", "t,x,seen\n2024-07-15T00:00Z,5,2024/07/14 23:59\n2024-07-15T00:01Z,7,2024/07/15 00:01\n");
        assert!(meas.column("t").unwrap().is_time() && model.column("seen").unwrap().is_time());
        let (t, r) = align(&meas, &model, &spec(Method::Nearest { tolerance: Some(60.0) }, false)).unwrap();
        assert_eq!(t.numbers("model_x", "").unwrap()[0], 5.0, "02:00:30+02:00 is 00:00:30Z: the tie takes the earlier");
        assert!(t.numbers("model_x", "").unwrap()[1].is_nan(), "an hour from any model row");
        assert_eq!(r.matched, 1);
        let seen = t.column("model_seen").unwrap().as_times().expect("stays a time column");
        assert_eq!(seen.text(0).as_deref(), Some("2024-07-14T23:59"));
        let (t, _) = align(&meas, &model, &spec(Method::Linear { max_gap: None }, false)).unwrap();
        assert_eq!(t.numbers("model_x", "").unwrap()[0], 6.0);
    }

    #[test]
    fn errors_name_the_field() {
        let meas = csv("m", "t,x\n1,2\n");
        let e = align(&meas, &meas, &AlignSpec { model_time: "zz".into(), ..spec(Method::Nearest { tolerance: None }, false) }).unwrap_err();
        assert!(e.to_string().contains("align.modelTime") && e.to_string().contains("zz"), "{e}");
        let e = align(&meas, &meas, &spec(Method::Nearest { tolerance: Some(-1.0) }, false)).unwrap_err();
        assert!(e.to_string().contains("tolerance"), "{e}");
    }

    #[test]
    fn differences_quote_names_and_avoid_clashes() {
        let pairs = [Pair { measurement: "water \"t\"".into(), model: "model_water \"t\"".into() }];
        let d = differences(&pairs, &["diff_water \"t\""]);
        assert_eq!(d[0].name, "diff_water \"t\"_2");
        assert_eq!(d[0].expression, "\"water \"\"t\"\"\" - \"model_water \"\"t\"\"\"");
        crate::derive::parse_expression(&d[0].expression).unwrap();
    }
}
