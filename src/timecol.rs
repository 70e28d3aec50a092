//! Time: date-time text read as instants, the column type that holds them, and their
//! text form for the page and the exports.
//!
//! The reader ([`crate::table`]) asks [`type_text`] whether a column of text is a column of
//! date-times; when every value is one, written in one form, the column becomes
//! [`ColumnData::Time`]: seconds since 1970-01-01 00:00 UTC (the instant, `NaN` for a
//! missing value) with its [`Zone`] (how the clock was written) and its [`Precision`] (the
//! finest unit any value uses). Because the values are seconds, every numeric consumer
//! (lens, colour, scatter, node statistics, expressions, the contrast ranking) reads a time
//! column as numbers; what must format or read the clock as written comes here.
//!
//! What it is not: a calendar library. No time zone database (only the numeric offsets
//! written in the text), no leap seconds (`:60` is refused), years 0001-9999 only.
//!
//! Forms read (whitespace around the value is ignored):
//!
//! | form | example | note |
//! | --- | --- | --- |
//! | ISO 8601 date | `2024-07-15` | midnight |
//! | ISO 8601 date-time | `2024-07-15T08:30`, `2024-07-15 08:30:15.25` | `T` or one space |
//! | ... with offset | `...Z`, `...+02:00`, `...-0530`, `...+02` | |
//! | year first, slashes | `2024/07/15`, `2024/07/15 08:30[:15]` | |
//! | day first, dots | `15.07.2024`, `15.07.2024 08:30[:15]` | the dotted form is day-first by convention (common practice) |
//! | two numbers, slashes | `15/07/2024 08:30`, `07/15/2024` | ambiguous: see below |
//!
//! `01/02/2024` reads as 1 February (day first) or as 2 January (month first). Such a
//! value is refused unless the column settles it: if some value has a first number above
//! 12 the column is day-first, if some value has a second number above 12 it is
//! month-first; a column with both, or with neither, is refused with a message saying so.
//!
//! A column is read as time only when every present value is a date-time and (this
//! project's rules, as `pandas.to_datetime` refuses the same columns) all are written in one
//! of the four forms above (a date alone and a date with a time of day may mix), and
//! either every value carries an offset or none does. Offsets may differ between rows (a
//! logger's summer and winter offsets): the instants stay exact and the zone is kept per
//! row. A column that looks like dates (at least half of its distinct values are
//! date-times) but is refused keeps its text, and the reason is kept for the column list.
//!
//! A value without an offset is taken as UTC. [`Stamp::seconds`] is the instant (offset
//! applied, as Python's `datetime.timestamp()` of an aware value); the hour of the day and
//! the day of the year read the clock and calendar as written (as Python's `dt.hour` and
//! `dt.timetuple().tm_yday`), so `2024-07-15T10:00+02:00` is hour 10, not 8.
//! Checked against Python's `datetime` and `pandas.to_datetime` in
//! `tests/reference/fixtures/times.json`.

use std::sync::Arc;

use crate::table::{Column, ColumnData, MISSING_CODE};

const DAY: i64 = 86_400;

/// One parsed value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stamp {
    /// The clock as written, in seconds since 1970-01-01 00:00 of the same (written) zone.
    pub local: f64,
    /// Offset east of UTC written in the value, in seconds (0 when none is written).
    pub offset: i32,
    /// An offset (or `Z`) was written.
    pub zoned: bool,
    /// The finest unit written (a date alone, minutes, seconds, parts of a second).
    pub written: Precision,
}

impl Stamp {
    /// Seconds since 1970-01-01 00:00 UTC.
    pub fn seconds(&self) -> f64 {
        self.local - self.offset as f64
    }

    /// Hour of the day as written, with minutes and seconds as a fraction: 13:30 is 13.5.
    pub fn hour_of_day(&self) -> f64 {
        hour_of_day_at(self.local)
    }

    /// Day of the year as written, 1 for 1 January (Python's `tm_yday`).
    pub fn day_of_year(&self) -> f64 {
        day_of_year_at(self.local)
    }
}

fn hour_of_day_at(local: f64) -> f64 {
    local.rem_euclid(DAY as f64) / 3600.0
}

fn day_of_year_at(local: f64) -> f64 {
    let days = (local / DAY as f64).floor() as i64;
    let (y, _, _) = civil_from_days(days);
    (days - days_from_civil(y, 1, 1) + 1) as f64
}

/// Which number comes first in a `NN/NN/YYYY` value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DayOrder {
    DayFirst,
    MonthFirst,
}

/// How a time column's clocks were written.
#[derive(Debug, Clone, PartialEq)]
pub enum Zone {
    /// No offset was written: the clock is taken as UTC.
    Unwritten,
    /// Every value was written with this offset east of UTC, in seconds (`Z` is 0).
    Offset(i32),
    /// Values were written with different offsets: each row's (0 where the row has no value).
    PerRow(Arc<Vec<i32>>),
}

impl Zone {
    /// The offset of row `row`'s clock.
    #[inline]
    pub fn offset_at(&self, row: usize) -> i32 {
        match self {
            Zone::Unwritten => 0,
            Zone::Offset(o) => *o,
            Zone::PerRow(v) => v[row],
        }
    }

    /// One offset for the whole column, when there is one (none written counts as 0).
    pub fn single(&self) -> Option<i32> {
        match self {
            Zone::Unwritten => Some(0),
            Zone::Offset(o) => Some(*o),
            Zone::PerRow(_) => None,
        }
    }

    /// Whether offsets were written.
    pub fn written(&self) -> bool {
        !matches!(self, Zone::Unwritten)
    }

    /// Words for the column list: "UTC", "+02:00", "offsets differ by row" or
    /// "no zone written (read as UTC)".
    pub fn label(&self) -> String {
        match self {
            Zone::Unwritten => "no zone written (read as UTC)".into(),
            Zone::Offset(0) => "UTC".into(),
            Zone::Offset(o) => offset_text(*o),
            Zone::PerRow(_) => "offsets differ by row".into(),
        }
    }
}

/// The finest unit a time column's values were written with (or, for instants that were
/// not read from text, need), which sets how they are written out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum Precision {
    /// Dates alone (every clock at midnight, no offset written).
    Day,
    Minute,
    Second,
    /// Parts of a second (written with six digits, as Python's `isoformat`).
    Fraction,
}

impl Precision {
    /// The coarsest precision that writes `local` (a clock as written) exactly.
    #[inline]
    fn of(local: f64, zoned: bool) -> Precision {
        if local.fract() != 0.0 {
            return Precision::Fraction;
        }
        // Whole seconds of years 0001-9999 fit an i64 exactly; integer remainders are far
        // cheaper than f64's (a call in wasm).
        let whole = local as i64;
        if whole % 60 != 0 {
            Precision::Second
        } else if zoned || whole.rem_euclid(DAY) != 0 {
            Precision::Minute
        } else {
            Precision::Day
        }
    }
}

/// The values of a time column (see the module comment).
#[derive(Debug, Clone, PartialEq)]
pub struct Times {
    /// Seconds since 1970-01-01 00:00 UTC; `NaN` marks a missing value.
    pub seconds: Arc<Vec<f64>>,
    pub zone: Zone,
    /// The finest unit written (exports write the values so).
    pub precision: Precision,
    /// The coarsest precision that writes every value exactly (at least minutes when
    /// offsets are written): the page shows instants to it, so a file that writes `:00`
    /// seconds on every value is shown to the minute (and exported as written).
    pub shown: Precision,
}

impl Times {
    /// Times from instants and their zone; both precisions are the coarsest that writes
    /// every value exactly (at least minutes when offsets are written).
    pub fn new(seconds: Vec<f64>, zone: Zone) -> Times {
        let mut t = Times { seconds: Arc::new(seconds), zone, precision: Precision::Day, shown: Precision::Day };
        t.precision = t.needed_precision();
        t.shown = t.precision;
        t
    }

    /// The coarsest precision that writes every value exactly (see `shown`), found from
    /// the values.
    pub fn needed_precision(&self) -> Precision {
        let written = self.zone.written();
        let mut precision = Precision::Day;
        for (i, &s) in self.seconds.iter().enumerate() {
            if !s.is_nan() {
                precision = precision.max(Precision::of(s + self.zone.offset_at(i) as f64, written));
                if precision == Precision::Fraction {
                    break;
                }
            }
        }
        precision
    }

    pub fn len(&self) -> usize {
        self.seconds.len()
    }

    pub fn is_empty(&self) -> bool {
        self.seconds.is_empty()
    }

    /// The clock of row `row` as written, in seconds since 1970-01-01 of its own zone.
    #[inline]
    pub fn local(&self, row: usize) -> f64 {
        self.seconds[row] + self.zone.offset_at(row) as f64
    }

    /// Row `row` as ISO 8601 text as it was written (its own offset), `None` when missing.
    pub fn text(&self, row: usize) -> Option<String> {
        let s = self.seconds[row];
        (!s.is_nan()).then(|| format_instant(s, self.zone.offset_at(row), self.zone.written(), self.precision))
    }

    /// Any instant (a statistic, a bound) in the column's zone, rounded to the column's
    /// precision (at least minutes, unless it falls on a midnight of a dates-only column);
    /// a column whose offsets differ by row writes it in UTC.
    pub fn text_of(&self, seconds: f64) -> Option<String> {
        statistic_text(seconds, self.zone.single(), self.zone.written(), self.precision)
    }

    /// The rows `rows` (`None`: a missing value), zone kept.
    pub fn take(&self, rows: &[Option<usize>]) -> Times {
        let seconds: Vec<f64> = rows.iter().map(|r| r.map_or(f64::NAN, |r| self.seconds[r])).collect();
        let zone = match &self.zone {
            Zone::PerRow(v) => Zone::PerRow(Arc::new(rows.iter().map(|r| r.map_or(0, |r| v[r])).collect())),
            z => z.clone(),
        };
        Times { seconds: Arc::new(seconds), zone, precision: self.precision, shown: self.shown }
    }

    /// Hour of the day as written, per row.
    pub fn hours(&self) -> Vec<f64> {
        (0..self.len()).map(|i| if self.seconds[i].is_nan() { f64::NAN } else { hour_of_day_at(self.local(i)) }).collect()
    }

    /// Day of the year as written, per row.
    pub fn days_of_year(&self) -> Vec<f64> {
        (0..self.len()).map(|i| if self.seconds[i].is_nan() { f64::NAN } else { day_of_year_at(self.local(i)) }).collect()
    }
}

/// `+02:00`, `-05:30` for an offset east of UTC in seconds.
pub fn offset_text(offset: i32) -> String {
    let sign = if offset < 0 { '-' } else { '+' };
    let a = offset.unsigned_abs();
    format!("{sign}{:02}:{:02}", a / 3600, a % 3600 / 60)
}

/// An instant that is a statistic or a bound of a time column, as [`Times::text_of`] writes
/// it: in the column's one offset (`single`; `None` when offsets differ by row: then UTC,
/// written `Z`), rounded to the column's `precision` (at least minutes, unless it falls on a
/// midnight of a dates-only column). Also used for graph files, which carry the column's
/// zone and precision but not its rows.
pub fn statistic_text(seconds: f64, single: Option<i32>, written: bool, precision: Precision) -> Option<String> {
    if !seconds.is_finite() {
        return None;
    }
    let (offset, zoned) = match single {
        Some(o) => (o, written),
        None => (0, true),
    };
    let local = seconds + offset as f64;
    let precision = match precision {
        Precision::Day if local.rem_euclid(DAY as f64) == 0.0 => Precision::Day,
        Precision::Day => Precision::Minute,
        p => p,
    };
    let unit = match precision {
        Precision::Day => DAY as f64,
        Precision::Minute => 60.0,
        Precision::Second => 1.0,
        Precision::Fraction => 0.0,
    };
    let at = if unit > 0.0 { (local / unit).round() * unit - offset as f64 } else { seconds };
    Some(format_instant(at, offset, zoned, precision))
}

/// ISO 8601 text of an instant: the clock at `offset` east of UTC, written to `precision`,
/// with the offset (`Z` for 0) when `zoned`. Parts of a second are written with six digits
/// (microseconds, rounded), as Python's `datetime.isoformat`; `Precision::Day` writes the
/// date alone. Checked against Python in `tests/reference/fixtures/times.json`.
pub fn format_instant(seconds: f64, offset: i32, zoned: bool, precision: Precision) -> String {
    let local = seconds + offset as f64;
    let mut whole = local.floor();
    let mut micros = ((local - whole) * 1e6).round() as i64;
    if micros >= 1_000_000 {
        whole += 1.0;
        micros -= 1_000_000;
    }
    let whole = whole as i64;
    let days = whole.div_euclid(DAY);
    let (y, m, d) = civil_from_days(days);
    let mut out = format!("{y:04}-{m:02}-{d:02}");
    if precision == Precision::Day {
        return out;
    }
    let tod = whole.rem_euclid(DAY);
    out.push_str(&format!("T{:02}:{:02}", tod / 3600, tod % 3600 / 60));
    if precision >= Precision::Second {
        out.push_str(&format!(":{:02}", tod % 60));
    }
    if precision == Precision::Fraction {
        out.push_str(&format!(".{micros:06}"));
    }
    if zoned {
        if offset == 0 {
            out.push('Z');
        } else {
            out.push_str(&offset_text(offset));
        }
    }
    out
}

/// A category column read as time: one stamp per level.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeColumn {
    pub levels: Vec<Stamp>,
    /// The order used for `NN/NN/YYYY` values, when the column has any.
    pub order: Option<DayOrder>,
}

impl TimeColumn {
    /// One value per row: `f(stamp)`, NaN where the row has no value.
    pub fn map(&self, codes: &[u32], f: impl Fn(&Stamp) -> f64) -> Vec<f64> {
        let per_level: Vec<f64> = self.levels.iter().map(f).collect();
        codes.iter().map(|&c| if c == MISSING_CODE { f64::NAN } else { per_level[c as usize] }).collect()
    }

    /// The column's values as [`Times`], rows coded by `codes`.
    pub fn times(&self, codes: &[u32]) -> Times {
        let zoned = self.levels.first().is_some_and(|s| s.zoned);
        let first = self.levels.first().map_or(0, |s| s.offset);
        let same = self.levels.iter().all(|s| s.offset == first);
        let seconds = self.map(codes, Stamp::seconds);
        let zone = match (zoned, same) {
            (false, _) => Zone::Unwritten,
            (true, true) => Zone::Offset(first),
            (true, false) => Zone::PerRow(Arc::new(
                codes.iter().map(|&c| if c == MISSING_CODE { 0 } else { self.levels[c as usize].offset }).collect(),
            )),
        };
        // As written: a file that writes seconds gets its seconds back; shown to the unit
        // the values need (found per distinct text, not per row).
        let precision = self.levels.iter().map(|s| s.written).max().unwrap_or(Precision::Day);
        let shown = self.levels.iter().map(|s| Precision::of(s.local, s.zoned)).max().unwrap_or(Precision::Day);
        Times { seconds: Arc::new(seconds), zone, precision, shown }
    }
}

/// A part of a date-time that expressions read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Part {
    /// Seconds since 1970-01-01 00:00 UTC.
    Seconds,
    /// Hour of the day as written.
    Hour,
    /// Day of the year as written.
    DayOfYear,
}

/// `part` of every row of a time column, or of a text column whose values read as time;
/// an error says why a text column does not (with the first data row that shows it).
pub fn part(col: &Column, part: Part) -> Result<Vec<f64>, String> {
    match &col.data {
        ColumnData::Time(t) => Ok(match part {
            Part::Seconds => t.seconds.to_vec(),
            Part::Hour => t.hours(),
            Part::DayOfYear => t.days_of_year(),
        }),
        ColumnData::Category { codes, .. } => {
            let t = parse_column(col)?;
            Ok(match part {
                Part::Seconds => t.map(codes, Stamp::seconds),
                Part::Hour => t.map(codes, Stamp::hour_of_day),
                Part::DayOfYear => t.map(codes, Stamp::day_of_year),
            })
        }
        ColumnData::Number(_) => Err(format!("column '{}' holds numbers, not date-times", col.name)),
    }
}

/// Seconds since 1970-01-01 UTC for every row of a time column or a time-like category
/// column; `None` for a numeric column or a category column with a value that is not a
/// date-time.
pub fn time_values(col: &Column) -> Option<Vec<f64>> {
    part(col, Part::Seconds).ok()
}

/// Hour of the day (as written) of every row of a time or time-like column.
pub fn hour_of_day(col: &Column) -> Option<Vec<f64>> {
    part(col, Part::Hour).ok()
}

/// Day of the year (as written, 1-366) of every row of a time or time-like column.
pub fn day_of_year(col: &Column) -> Option<Vec<f64>> {
    part(col, Part::DayOfYear).ok()
}

/// Reads every level of a category column as a date-time, or says which value is not one
/// (with the first data row that holds it) and what to do.
pub fn parse_column(col: &Column) -> Result<TimeColumn, String> {
    match &col.data {
        ColumnData::Category { codes, levels } => read_levels(codes, levels).map_err(|why| {
            let sep = if why.starts_with("data row") && !why.contains("time-zone offset") { ", " } else { ": " };
            format!("column '{}'{sep}{why}", col.name)
        }),
        ColumnData::Number(_) => Err(format!("column '{}' holds numbers, not date-times", col.name)),
        ColumnData::Time(_) => Err(format!("column '{}' is already a time column", col.name)),
    }
}

/// What [`type_text`] found in a column of text.
#[derive(Debug, Clone, PartialEq)]
pub enum TextKind {
    /// Every value is a date-time: the column's times.
    Time(Times),
    /// Most values are date-times, but the column is refused: why.
    Refused(String),
    /// Plain text.
    Text,
}

/// Whether a column of text (`codes` into `levels`) is a time column (see the module
/// comment for the rules).
pub fn type_text(codes: &[u32], levels: &[String]) -> TextKind {
    if levels.is_empty() || !date_like(levels) {
        return TextKind::Text;
    }
    match read_levels(codes, levels) {
        Ok(t) => TextKind::Time(t.times(codes)),
        Err(why) => TextKind::Refused(why),
    }
}

/// At least half of the levels read as a date-time under some order, the first of them
/// at once (most text columns are settled by their first level).
fn date_like(levels: &[String]) -> bool {
    let reads = |t: &String| parse(t, Some(DayOrder::DayFirst)).is_ok() || parse(t, Some(DayOrder::MonthFirst)).is_ok();
    if !reads(&levels[0]) && levels.len() < 2 {
        return false;
    }
    let need = levels.len().div_ceil(2);
    let mut hits = 0;
    for (i, t) in levels.iter().enumerate() {
        if reads(t) {
            hits += 1;
            if hits >= need {
                return true;
            }
        }
        if hits + (levels.len() - i - 1) < need {
            return false;
        }
    }
    false
}

/// How a value is written: the four forms of the module comment.
fn form_of(t: &str) -> &'static str {
    let b = t.as_bytes();
    match (b.get(4), b.get(2)) {
        (Some(b'-'), _) => "year-month-day (2024-07-15)",
        (Some(b'/'), _) => "year/month/day (2024/07/15)",
        (_, Some(b'.')) => "day.month.year (15.07.2024)",
        _ => "two numbers and the year with slashes (15/07/2024)",
    }
}

/// [`parse_column`] on bare codes and levels; messages without the column's name.
pub fn read_levels(codes: &[u32], levels: &[String]) -> Result<TimeColumn, String> {
    let row_of = |level: usize| codes.iter().position(|&c| c as usize == level).map_or(0, |r| r + 1);
    let order = slash_order(levels)?;
    let mut out = Vec::with_capacity(levels.len());
    for (i, text) in levels.iter().enumerate() {
        match parse(text, order) {
            Ok(s) => out.push(s),
            Err(why) => {
                return Err(format!(
                    "data row {}: '{}' is not a date-time ({why}); write it as YYYY-MM-DD HH:MM",
                    row_of(i),
                    text
                ))
            }
        }
    }
    if let Some(first) = levels.first() {
        let form = form_of(first.trim());
        if let Some(k) = levels.iter().position(|t| form_of(t.trim()) != form) {
            let (a, b) = (row_of(0).min(row_of(k)), row_of(0).max(row_of(k)));
            let (ta, tb) = if row_of(0) < row_of(k) { (first, &levels[k]) } else { (&levels[k], first) };
            return Err(format!(
                "mixes written forms: data row {a} holds '{}' ({}) and data row {b} holds '{}' ({}); write every value in one form, such as YYYY-MM-DD HH:MM",
                ta.trim(),
                form_of(ta.trim()),
                tb.trim(),
                form_of(tb.trim())
            ));
        }
        if let Some(k) = out.iter().position(|s| s.zoned != out[0].zoned) {
            let (z, u) = if out[0].zoned { (0, k) } else { (k, 0) };
            return Err(format!(
                "data row {} holds '{}' with a time-zone offset and data row {} holds '{}' without one; write every value with its offset (Z for UTC), or none",
                row_of(z),
                levels[z].trim(),
                row_of(u),
                levels[u].trim()
            ));
        }
    }
    Ok(TimeColumn { levels: out, order })
}

/// Settles day-first or month-first for the `NN/NN/YYYY` values of a column.
fn slash_order(levels: &[String]) -> Result<Option<DayOrder>, String> {
    let (mut day_first, mut month_first, mut any) = (None, None, None);
    for t in levels {
        if let Some((a, b)) = two_number_date(t.trim()) {
            any.get_or_insert(t.as_str());
            if a > 12 {
                day_first.get_or_insert(t.as_str());
            }
            if b > 12 {
                month_first.get_or_insert(t.as_str());
            }
        }
    }
    match (any, day_first, month_first) {
        (None, _, _) => Ok(None),
        (_, Some(d), Some(m)) => Err(format!(
            "'{d}' can only be day first and '{m}' can only be month first; write dates as YYYY-MM-DD"
        )),
        (_, Some(_), None) => Ok(Some(DayOrder::DayFirst)),
        (_, None, Some(_)) => Ok(Some(DayOrder::MonthFirst)),
        (Some(t), None, None) => Err(format!(
            "every date such as '{t}' reads both day first and month first; write dates as YYYY-MM-DD"
        )),
    }
}

/// The two leading numbers of a `NN/NN/YYYY...` value.
fn two_number_date(t: &str) -> Option<(u32, u32)> {
    let b = t.as_bytes();
    if b.len() >= 10 && b[2] == b'/' && b[5] == b'/' {
        Some((digits(&b[0..2])?, digits(&b[3..5])?))
    } else {
        None
    }
}

fn digits(b: &[u8]) -> Option<u32> {
    if b.is_empty() || !b.iter().all(u8::is_ascii_digit) {
        return None;
    }
    Some(b.iter().fold(0, |v, &d| v * 10 + (d - b'0') as u32))
}

/// Parses one value. `order` settles `NN/NN/YYYY` values (refused when `None`).
pub fn parse(text: &str, order: Option<DayOrder>) -> Result<Stamp, String> {
    let t = text.trim();
    let b = t.as_bytes();
    if b.len() < 10 {
        return Err("too short for a date".into());
    }
    let (y, m, d) = match (b[4], b[2], b[5]) {
        (b'-', _, _) if b[7] == b'-' => (num(b, 0, 4)?, num(b, 5, 2)?, num(b, 8, 2)?),
        (b'/', _, _) if b[7] == b'/' => (num(b, 0, 4)?, num(b, 5, 2)?, num(b, 8, 2)?),
        (_, b'.', b'.') => (num(b, 6, 4)?, num(b, 3, 2)?, num(b, 0, 2)?),
        (_, b'/', b'/') => {
            let (p, q, y) = (num(b, 0, 2)?, num(b, 3, 2)?, num(b, 6, 4)?);
            match order {
                Some(DayOrder::DayFirst) => (y, q, p),
                Some(DayOrder::MonthFirst) => (y, p, q),
                None => return Err("ambiguous: day first or month first?".into()),
            }
        }
        _ => return Err("expected YYYY-MM-DD, YYYY/MM/DD, DD.MM.YYYY or NN/NN/YYYY".into()),
    };
    let iso = b[4] == b'-';
    check_date(y, m, d)?;
    let mut secs = days_from_civil(y as i64, m, d) * DAY;
    let mut frac = 0.0;
    let mut offset = 0i32;
    let mut zoned = false;
    let mut written = Precision::Day;
    let rest = &b[10..];
    if !rest.is_empty() {
        let sep = rest[0];
        if !(sep == b' ' || (iso && (sep == b'T' || sep == b't'))) {
            return Err(format!("expected {} before the time", if iso { "'T' or a space" } else { "a space" }));
        }
        let r = &rest[1..];
        if r.len() < 5 || r[2] != b':' {
            return Err("expected the time as HH:MM".into());
        }
        let (hh, mm) = (num(r, 0, 2)?, num(r, 3, 2)?);
        let mut i = 5;
        let mut ss = 0;
        written = Precision::Minute;
        if r.len() >= i + 3 && r[i] == b':' {
            ss = num(r, i + 1, 2)?;
            i += 3;
            written = Precision::Second;
            if iso && r.len() > i && (r[i] == b'.' || r[i] == b',') {
                let start = i + 1;
                let mut j = start;
                while j < r.len() && r[j].is_ascii_digit() {
                    j += 1;
                }
                if j == start || j - start > 9 {
                    return Err("expected 1 to 9 digits after the decimal point of the seconds".into());
                }
                frac = digits(&r[start..j]).expect("digits") as f64 / 10f64.powi((j - start) as i32);
                i = j;
                written = Precision::Fraction;
            }
        }
        if hh > 23 || mm > 59 || ss > 59 {
            return Err(format!("{hh:02}:{mm:02}:{ss:02} is not a time of day (00:00:00 to 23:59:59)"));
        }
        secs += (hh * 3600 + mm * 60 + ss) as i64;
        let z = &r[i..];
        if !z.is_empty() {
            if !iso {
                return Err(format!("unexpected '{}' after the time", String::from_utf8_lossy(z)));
            }
            offset = parse_offset(z)?;
            zoned = true;
        }
    }
    Ok(Stamp { local: secs as f64 + frac, offset, zoned, written })
}

fn parse_offset(z: &[u8]) -> Result<i32, String> {
    if z == b"Z" || z == b"z" {
        return Ok(0);
    }
    let sign = match z[0] {
        b'+' => 1,
        b'-' => -1,
        _ => return Err(format!("unexpected '{}' after the time (an offset is Z, +hh:mm or -hh:mm)", String::from_utf8_lossy(z))),
    };
    let (h, m) = match z.len() {
        3 => (num(z, 1, 2)?, 0),
        5 => (num(z, 1, 2)?, num(z, 3, 2)?),
        6 if z[3] == b':' => (num(z, 1, 2)?, num(z, 4, 2)?),
        _ => return Err(format!("offset '{}' is not +hh:mm, +hhmm or +hh", String::from_utf8_lossy(z))),
    };
    if h > 23 || m > 59 {
        return Err(format!("offset '{}' is out of range", String::from_utf8_lossy(z)));
    }
    Ok(sign * (h * 3600 + m * 60) as i32)
}

fn num(b: &[u8], at: usize, len: usize) -> Result<u32, String> {
    b.get(at..at + len).and_then(digits).ok_or_else(|| format!("expected {len} digits at character {}", at + 1))
}

fn is_leap(y: i64) -> bool {
    (y % 4 == 0 && y % 100 != 0) || y % 400 == 0
}

fn days_in_month(y: i64, m: u32) -> u32 {
    match m {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        _ if is_leap(y) => 29,
        _ => 28,
    }
}

fn check_date(y: u32, m: u32, d: u32) -> Result<(), String> {
    if y == 0 {
        return Err("year 0000 is before year 0001".into());
    }
    if !(1..=12).contains(&m) {
        return Err(format!("month {m} is outside 1-12"));
    }
    let k = days_in_month(y as i64, m);
    if d == 0 || d > k {
        return Err(format!("day {d} is outside 1-{k} for {y:04}-{m:02}"));
    }
    Ok(())
}

/// An instant (seconds since 1970-01-01 00:00 UTC) as ISO 8601 text in UTC:
/// `2013-06-01T04:00:00Z`, with milliseconds when the instant has a fraction of a second.
/// [`parse`] reads it back to the same instant (to the millisecond).
pub fn iso_utc(seconds: f64) -> String {
    let whole = seconds.floor();
    let days = (whole / DAY as f64).floor() as i64;
    let in_day = (whole as i64) - days * DAY;
    let (y, m, d) = civil_from_days(days);
    let (hh, mm, ss) = (in_day / 3600, in_day % 3600 / 60, in_day % 60);
    let ms = ((seconds - whole) * 1000.0).round() as i64;
    if ms == 0 {
        format!("{y:04}-{m:02}-{d:02}T{hh:02}:{mm:02}:{ss:02}Z")
    } else if ms >= 1000 {
        iso_utc(whole + 1.0)
    } else {
        format!("{y:04}-{m:02}-{d:02}T{hh:02}:{mm:02}:{ss:02}.{ms:03}Z")
    }
}

/// Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant, "chrono-Compatible
/// Low-Level Date Algorithms", days_from_civil).
pub fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = m as i64;
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + d as i64 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// The inverse of [`days_from_civil`] (same source, civil_from_days).
pub fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + if m <= 2 { 1 } else { 0 };
    (y, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_round_trip_and_known_days() {
        // 2000-03-01 is day 11017 after 1970-01-01 (common practice: 30 years of 365 days + 7 leap days + 59 days).
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 30 * 365 + 7 + 60);
        for z in (-800_000..800_000).step_by(997) {
            let (y, m, d) = civil_from_days(z);
            assert_eq!(days_from_civil(y, m, d), z);
        }
    }

    #[test]
    fn iso_text_reads_back_to_the_same_instant() {
        // 2013-01-01T06:00:00Z is 1 357 020 000 s (common practice: `date -u -d 2013-01-01T06:00Z +%s`).
        assert_eq!(iso_utc(1_357_020_000.0), "2013-01-01T06:00:00Z");
        assert_eq!(iso_utc(-1.5), "1969-12-31T23:59:58.500Z");
        for s in [0.0, 1_357_020_000.0, 951_782_400.25, -86_400.0 * 365.0, 4_102_444_799.0] {
            assert!((parse(&iso_utc(s), None).unwrap().seconds() - s).abs() < 1e-3, "{s}: {}", iso_utc(s));
        }
    }

    #[test]
    fn offsets_shift_the_instant_but_not_the_clock() {
        let s = parse("2024-07-15T10:00+02:00", None).unwrap();
        assert_eq!(s.hour_of_day(), 10.0);
        let u = parse("2024-07-15T08:00Z", None).unwrap();
        assert_eq!(s.seconds(), u.seconds());
    }

    #[test]
    fn refusals_say_why() {
        assert!(parse("2023-02-29", None).unwrap_err().contains("day 29"));
        assert!(parse("2024-13-01", None).unwrap_err().contains("month 13"));
        assert!(parse("2024-01-01T24:00", None).unwrap_err().contains("time of day"));
        assert!(parse("01/02/2024", None).unwrap_err().contains("ambiguous"));
        assert!(parse("2024-01-01T10:00:60", None).is_err());
        assert!(parse("15.07.2024 10:00Z", None).is_err());
    }

    fn levels(v: &[&str]) -> (Vec<u32>, Vec<String>) {
        ((0..v.len() as u32).collect(), v.iter().map(|s| s.to_string()).collect())
    }

    #[test]
    fn text_columns_are_typed_as_time_or_say_why_not() {
        let (c, l) = levels(&["2013-01-01T06:00:00Z", "2013-01-01T07:00:00Z"]);
        let TextKind::Time(t) = type_text(&c, &l) else { panic!("not time") };
        assert_eq!((t.zone.clone(), t.precision), (Zone::Offset(0), Precision::Second));
        assert_eq!(t.text(1).as_deref(), Some("2013-01-01T07:00:00Z"), "written back as it was written");
        let (c, l) = levels(&["2012/01/01", "2012/01/02"]);
        let TextKind::Time(t) = type_text(&c, &l) else { panic!("not time") };
        assert_eq!((t.zone.clone(), t.precision), (Zone::Unwritten, Precision::Day));
        assert_eq!(t.text(0).as_deref(), Some("2012-01-01"));
        // Offsets that differ by row: kept per row, each row written with its own.
        let (c, l) = levels(&["2024-03-30T12:00+01:00", "2024-03-31T12:00+02:00"]);
        let TextKind::Time(t) = type_text(&c, &l) else { panic!("not time") };
        assert!(matches!(t.zone, Zone::PerRow(_)));
        assert_eq!(t.text(1).as_deref(), Some("2024-03-31T12:00+02:00"));
        assert_eq!(t.seconds[1] - t.seconds[0], 23.0 * 3600.0);
        assert_eq!(t.text_of(t.seconds[1]).as_deref(), Some("2024-03-31T10:00Z"), "a bound of such a column is written in UTC");
        // Plain text is not looked at twice; dates with a stray text keep their reason.
        assert_eq!(type_text(&levels(&["north", "south"]).0, &levels(&["north", "south"]).1), TextKind::Text);
        let (c, l) = levels(&["2024-07-15", "2024-07-16", "soon"]);
        let TextKind::Refused(why) = type_text(&c, &l) else { panic!("not refused") };
        assert!(why.contains("data row 3") && why.contains("'soon'"), "{why}");
        let (c, l) = levels(&["2024-07-15", "16.07.2024"]);
        let TextKind::Refused(why) = type_text(&c, &l) else { panic!("not refused") };
        assert!(why.contains("mixes written forms") && why.contains("data row 2"), "{why}");
        let (c, l) = levels(&["01/02/2024", "03/04/2024"]);
        let TextKind::Refused(why) = type_text(&c, &l) else { panic!("not refused") };
        assert!(why.contains("both day first and month first"), "{why}");
        // A date alone and a date with a time of day may mix.
        let (c, l) = levels(&["2024-07-15", "2024-07-15 06:30"]);
        let TextKind::Time(t) = type_text(&c, &l) else { panic!("not time") };
        assert_eq!(t.precision, Precision::Minute);
        assert_eq!(t.text(0).as_deref(), Some("2024-07-15T00:00"));
    }

    #[test]
    fn instants_are_written_as_iso_8601() {
        // 2024-07-15T08:30:15Z is 1721032215 s after 1970 (common practice: `date -u -d 2024-07-15T08:30:15Z +%s`).
        let s = 1_721_032_215.0;
        assert_eq!(format_instant(s, 0, true, Precision::Second), "2024-07-15T08:30:15Z");
        assert_eq!(format_instant(s, 7200, true, Precision::Minute), "2024-07-15T10:30+02:00");
        assert_eq!(format_instant(s, -19800, true, Precision::Second), "2024-07-15T03:00:15-05:30");
        assert_eq!(format_instant(s, 0, false, Precision::Day), "2024-07-15");
        assert_eq!(format_instant(s + 0.25, 0, false, Precision::Fraction), "2024-07-15T08:30:15.250000");
        assert_eq!(format_instant(s - 0.0000004, 0, false, Precision::Fraction), "2024-07-15T08:30:15.000000", "rounded up across the second");
        assert_eq!(format_instant(-0.5, 0, true, Precision::Fraction), "1969-12-31T23:59:59.500000Z");
        // Every parsed text written back at its own precision is the text (ISO forms).
        for t in ["2024-07-15T10:00+02:00", "1969-12-31T23:59:59.500000", "0001-01-01T00:00", "9999-12-31T23:59:59Z", "2000-02-29"] {
            let st = parse(t, None).unwrap();
            assert_eq!(format_instant(st.seconds(), st.offset, st.zoned, st.written), t);
        }
    }

    #[test]
    fn a_column_settles_the_slash_order_or_is_refused() {
        let col = |v: &[&str]| Column::category("t", (0..v.len() as u32).collect(), v.iter().map(|s| s.to_string()).collect());
        assert_eq!(parse_column(&col(&["01/02/2024", "13/02/2024"])).unwrap().order, Some(DayOrder::DayFirst));
        assert_eq!(parse_column(&col(&["01/02/2024", "02/13/2024"])).unwrap().order, Some(DayOrder::MonthFirst));
        let e = parse_column(&col(&["01/02/2024", "03/04/2024"])).unwrap_err();
        assert!(e.contains("both day first and month first"), "{e}");
        let e = parse_column(&col(&["13/02/2024", "02/13/2024"])).unwrap_err();
        assert!(e.contains("can only be"), "{e}");
        let e = parse_column(&col(&["2024-01-01", "soon"])).unwrap_err();
        assert!(e.contains("data row 2") && e.contains("'soon'"), "{e}");
    }
}
