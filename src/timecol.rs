//! Date-time text read as time: a category column whose every value is a date or a
//! date-time becomes usable as numbers (seconds since 1970-01-01 00:00 UTC, the hour of
//! the day, the day of the year), so a user can derive "hour of day" as a numeric column.
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
//! A value without an offset is taken as UTC. [`Stamp::seconds`] is the instant (offset
//! applied, as Python's `datetime.timestamp()` of an aware value); the hour of the day and
//! the day of the year read the clock and calendar as written (as Python's `dt.hour` and
//! `dt.timetuple().tm_yday`), so `2024-07-15T10:00+02:00` is hour 10, not 8.
//! Checked against Python's `datetime` in `tests/reference/fixtures/times.json`.

use crate::table::{Column, ColumnData, MISSING_CODE};

const DAY: i64 = 86_400;

/// One parsed value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stamp {
    /// The clock as written, in seconds since 1970-01-01 00:00 of the same (written) zone.
    pub local: f64,
    /// Offset east of UTC written in the value, in seconds (0 when none is written).
    pub offset: i32,
}

impl Stamp {
    /// Seconds since 1970-01-01 00:00 UTC.
    pub fn seconds(&self) -> f64 {
        self.local - self.offset as f64
    }

    /// Hour of the day as written, with minutes and seconds as a fraction: 13:30 is 13.5.
    pub fn hour_of_day(&self) -> f64 {
        self.local.rem_euclid(DAY as f64) / 3600.0
    }

    /// Day of the year as written, 1 for 1 January (Python's `tm_yday`).
    pub fn day_of_year(&self) -> f64 {
        let days = (self.local / DAY as f64).floor() as i64;
        let (y, _, _) = civil_from_days(days);
        (days - days_from_civil(y, 1, 1) + 1) as f64
    }
}

/// Which number comes first in a `NN/NN/YYYY` value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DayOrder {
    DayFirst,
    MonthFirst,
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
}

/// Seconds since 1970-01-01 UTC for every row of a time-like category column; `None` for
/// a numeric column or a category column with a value that is not a date-time.
pub fn time_values(col: &Column) -> Option<Vec<f64>> {
    match &col.data {
        ColumnData::Category { codes, .. } => parse_column(col).ok().map(|t| t.map(codes, Stamp::seconds)),
        ColumnData::Number(_) => None,
    }
}

/// Hour of the day (as written) of every row of a time-like column.
pub fn hour_of_day(col: &Column) -> Option<Vec<f64>> {
    match &col.data {
        ColumnData::Category { codes, .. } => parse_column(col).ok().map(|t| t.map(codes, Stamp::hour_of_day)),
        ColumnData::Number(_) => None,
    }
}

/// Day of the year (as written, 1-366) of every row of a time-like column.
pub fn day_of_year(col: &Column) -> Option<Vec<f64>> {
    match &col.data {
        ColumnData::Category { codes, .. } => parse_column(col).ok().map(|t| t.map(codes, Stamp::day_of_year)),
        ColumnData::Number(_) => None,
    }
}

/// Reads every level of a category column as a date-time, or says which value is not one
/// (with the first data row that holds it) and what to do.
pub fn parse_column(col: &Column) -> Result<TimeColumn, String> {
    let (codes, levels) = match &col.data {
        ColumnData::Category { codes, levels } => (codes, levels),
        ColumnData::Number(_) => return Err(format!("column '{}' holds numbers, not date-times", col.name)),
    };
    let row_of = |level: usize| codes.iter().position(|&c| c as usize == level).map_or(0, |r| r + 1);
    let order = slash_order(levels).map_err(|why| format!("column '{}': {why}", col.name))?;
    let mut out = Vec::with_capacity(levels.len());
    for (i, text) in levels.iter().enumerate() {
        match parse(text, order) {
            Ok(s) => out.push(s),
            Err(why) => {
                return Err(format!(
                    "column '{}', data row {}: '{}' is not a date-time ({why}); write it as YYYY-MM-DD HH:MM",
                    col.name,
                    row_of(i),
                    text
                ))
            }
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
        if r.len() >= i + 3 && r[i] == b':' {
            ss = num(r, i + 1, 2)?;
            i += 3;
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
        }
    }
    Ok(Stamp { local: secs as f64 + frac, offset })
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
