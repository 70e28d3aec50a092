//! Reader for the field-campaign text standard ICARTT (File Format Standards V1.1, 2008,
//! and V2.0, 2013), format index 1001: one independent variable (time), several
//! dependent variables, comma-separated data lines below a header block.
//!
//! The header layout, as written in the standard (recalled from memory of its text; the
//! test files under `tests/fixtures/icartt/` were written from that memory too):
//!
//! | line | content |
//! | --- | --- |
//! | 1 | `NLHEAD, FFI` — number of header lines, `1001` (V2.0 may add a version field) |
//! | 2-5 | PI name, organisation, data source, mission |
//! | 6 | file volume number, number of volumes |
//! | 7 | start date of the data (UTC) `yyyy, mm, dd`, then the revision date |
//! | 8 | data interval |
//! | 9 | independent variable: name, units[, description] |
//! | 10 | NV, the number of dependent variables |
//! | 11 | NV scale factors |
//! | 12 | NV missing-value flags |
//! | 13 .. 12+NV | each dependent variable: name, units[, description] |
//! | next | NSCOML, then that many special comment lines |
//! | next | NNCOML, then that many normal comment lines; the last is the column header line |
//!
//! Values read: `value * scale factor`; a raw value equal to the variable's missing flag,
//! or to the `LLOD_FLAG` / `ULOD_FLAG` given in the normal comments (`LLOD_FLAG: -7777`),
//! becomes missing (each counted in the notes). The start date plus the independent
//! variable (seconds from midnight UTC of that date) gives a time column `time_utc`
//! (instants in UTC, [`crate::timecol`]). Units go to [`Column::unit`].
//!
//! What it is not: a reader of the other format indices (2110, 2160, 2310), nor a checker
//! of every rule of the standard (names of PIs, revision letters are not checked).
//! Errors name the header line (counted from 1) or the file line of a data row.

use super::merge::{free_name, ReadNote};
use super::{Column, Table};
use crate::timecol::Zone;
use crate::error::{Error, Result};

/// Name of the time column built from the start date and the independent variable.
pub const TIME_COLUMN: &str = "time_utc";

/// Does the file start like an ICARTT file (`<number>, 1001`)?
pub fn looks_like(head: &[u8]) -> bool {
    let head = head.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(head);
    let line_end = head.iter().position(|&b| b == b'\n' || b == b'\r').unwrap_or(head.len());
    let Ok(line) = std::str::from_utf8(&head[..line_end]) else { return false };
    let fields: Vec<&str> = line.split(',').map(str::trim).collect();
    fields.len() >= 2 && fields[0].parse::<u32>().is_ok() && fields[1] == "1001"
}

fn err(name: &str, line: usize, what: &str, message: String) -> Error {
    Error::Input(format!("{name}: ICARTT header line {line} ({what}): {message}"))
}

fn fields(line: &str) -> Vec<&str> {
    line.split(',').map(str::trim).collect()
}

fn numbers(name: &str, lines: &[&str], i: usize, what: &str, want: usize) -> Result<Vec<f64>> {
    let f: Vec<&str> = fields(lines[i]).into_iter().filter(|s| !s.is_empty()).collect();
    if f.len() != want {
        return Err(err(name, i + 1, what, format!("expected {want} values (one per dependent variable), found {}", f.len())));
    }
    f.iter()
        .map(|s| s.parse::<f64>().map_err(|_| err(name, i + 1, what, format!("'{s}' is not a number"))))
        .collect()
}

fn count(name: &str, lines: &[&str], i: usize, what: &str) -> Result<usize> {
    let line = lines.get(i).ok_or_else(|| err(name, i + 1, what, "the header ends before this line; check NLHEAD on line 1".into()))?;
    let first = fields(line)[0];
    first.parse::<usize>().map_err(|_| err(name, i + 1, what, format!("expected a whole number, found '{first}'")))
}

/// Days from 1970-01-01 to a civil date (proleptic Gregorian).
fn days_from_civil(y: i64, m: i64, d: i64) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let doy = (153 * (m + if m > 2 { -3 } else { 9 }) + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// A flag from a normal comment line such as `LLOD_FLAG: -7777`.
fn comment_flag(comments: &[&str], key: &str) -> Option<f64> {
    comments.iter().find_map(|l| {
        let (k, v) = l.split_once(':')?;
        (k.trim().eq_ignore_ascii_case(key)).then(|| v.trim().parse::<f64>().ok()).flatten()
    })
}

/// Reads a whole ICARTT file held in memory.
pub fn read(name: &str, bytes: &[u8]) -> Result<(Table, ReadNote)> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let text = std::str::from_utf8(bytes)
        .map_err(|e| Error::Input(format!("{name}: the ICARTT file is not UTF-8 text (byte {}); save it as UTF-8 or ASCII", e.valid_up_to())))?;
    let lines: Vec<&str> = text.lines().collect();
    let first = fields(lines.first().copied().unwrap_or(""));
    let nlhead: usize = first[0].parse().map_err(|_| err(name, 1, "NLHEAD, FFI", format!("'{}' is not a header line count", first[0])))?;
    if first.get(1) != Some(&"1001") {
        return Err(err(name, 1, "NLHEAD, FFI", "only format index 1001 is read; this file has another".into()));
    }
    if lines.len() < nlhead {
        return Err(err(name, 1, "NLHEAD, FFI", format!("says {nlhead} header lines but the file has only {} lines", lines.len())));
    }
    if nlhead < 14 {
        return Err(err(name, 1, "NLHEAD, FFI", format!("{nlhead} header lines is too few for format 1001 (at least 14)")));
    }
    let date = fields(lines[6]);
    let ymd: Vec<i64> = date.iter().take(3).filter_map(|s| s.parse().ok()).collect();
    if ymd.len() != 3 || !(1..=12).contains(&ymd[1]) || !(1..=31).contains(&ymd[2]) {
        return Err(err(name, 7, "dates", format!("expected the start date as 'yyyy, mm, dd', found '{}'", lines[6].trim())));
    }
    let day0 = days_from_civil(ymd[0], ymd[1], ymd[2]) as f64 * 86_400.0;
    let indep = fields(lines[8]);
    let nv = count(name, &lines, 9, "number of dependent variables")?;
    if nv == 0 {
        return Err(err(name, 10, "number of dependent variables", "the file declares no dependent variables".into()));
    }
    let scales = numbers(name, &lines, 10, "scale factors", nv)?;
    let flags = numbers(name, &lines, 11, "missing-value flags", nv)?;
    let var_end = 12 + nv;
    if var_end + 2 > nlhead {
        return Err(err(name, 1, "NLHEAD, FFI", format!("{nlhead} header lines cannot hold {nv} variable lines and the comment counts")));
    }
    let vars: Vec<Vec<&str>> = (12..var_end).map(|i| fields(lines[i])).collect();
    let nscoml = count(name, &lines, var_end, "number of special comment lines")?;
    let ncount_line = var_end + 1 + nscoml;
    let nncoml = count(name, &lines, ncount_line, "number of normal comment lines")?;
    let expected = ncount_line + 1 + nncoml;
    if expected != nlhead {
        return Err(err(
            name,
            1,
            "NLHEAD, FFI",
            format!("says {nlhead} header lines, but the counts in the header add up to {expected}; correct NLHEAD or the comment counts"),
        ));
    }
    let comments = &lines[ncount_line + 1..nlhead];
    let llod = comment_flag(comments, "LLOD_FLAG");
    let ulod = comment_flag(comments, "ULOD_FLAG");

    let mut names: Vec<String> = Vec::with_capacity(nv + 1);
    names.push(indep[0].to_string());
    for (k, v) in vars.iter().enumerate() {
        if v[0].is_empty() {
            return Err(err(name, 13 + k, "variable name and units", "the variable has no name".into()));
        }
        names.push(v[0].to_string());
    }
    let unit_of = |f: &[&str]| f.get(1).filter(|u| !u.is_empty()).map(|u| u.to_string());
    let mut units = vec![unit_of(&indep)];
    units.extend(vars.iter().map(|v| unit_of(v)));

    let mut cols: Vec<Vec<f64>> = vec![Vec::new(); nv + 1];
    let (mut n_missing, mut n_llod, mut n_ulod) = (0usize, 0usize, 0usize);
    let mut blank = 0usize;
    for (i, line) in lines.iter().enumerate().skip(nlhead) {
        if line.trim().is_empty() {
            blank += 1;
            continue;
        }
        let f: Vec<&str> = line.split([',', ' ', '\t']).map(str::trim).filter(|s| !s.is_empty()).collect();
        if f.len() != nv + 1 {
            return Err(Error::Input(format!(
                "{name}: ICARTT data line at file line {}: expected {} values (time and {nv} variables), found {}",
                i + 1,
                nv + 1,
                f.len()
            )));
        }
        for (k, s) in f.iter().enumerate() {
            let raw: f64 = s.parse().map_err(|_| {
                Error::Input(format!("{name}: ICARTT data line at file line {}, column '{}': '{s}' is not a number", i + 1, names[k]))
            })?;
            let v = if k == 0 {
                raw
            } else if raw == flags[k - 1] {
                n_missing += 1;
                f64::NAN
            } else if Some(raw) == llod {
                n_llod += 1;
                f64::NAN
            } else if Some(raw) == ulod {
                n_ulod += 1;
                f64::NAN
            } else {
                raw * scales[k - 1]
            };
            cols[k].push(v);
        }
    }
    if cols[0].is_empty() {
        return Err(Error::Input(format!("{name}: the ICARTT file has a header of {nlhead} lines but no data lines below it")));
    }
    let time: Vec<f64> = cols[0].iter().map(|&s| day0 + s).collect();
    let mut columns: Vec<Column> = Vec::with_capacity(nv + 2);
    let taken: Vec<&str> = names.iter().map(String::as_str).collect();
    let time_name = free_name(TIME_COLUMN, &taken);
    columns.push(Column::time(time_name, time, Zone::Offset(0)));
    for (k, values) in cols.into_iter().enumerate() {
        columns.push(Column::number(names[k].clone(), values).with_unit(units[k].clone()));
    }
    let mut note = ReadNote { format: "icartt".into(), ..Default::default() };
    if blank > 0 {
        note.notes.push(format!("{blank} blank lines below the header skipped"));
    }
    if n_missing > 0 {
        note.notes.push(format!("{n_missing} values equal to a missing-value flag made missing"));
    }
    if n_llod > 0 {
        note.notes.push(format!("{n_llod} values below the lower limit of detection (LLOD_FLAG) made missing"));
    }
    if n_ulod > 0 {
        note.notes.push(format!("{n_ulod} values above the upper limit of detection (ULOD_FLAG) made missing"));
    }
    if scales.iter().any(|&s| s != 1.0) {
        note.notes.push("scale factors applied".into());
    }
    Ok((Table::from_columns(name, columns)?, note))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header(nv_lines: &[&str], scales: &str, flags: &str, normal: &[&str]) -> String {
        let mut h = vec![
            "Doe, Jane".to_string(),
            "Example Institute".into(),
            "Example sonde".into(),
            "EXAMPLE-2013".into(),
            "1, 1".into(),
            "2013, 07, 15, 2013, 08, 01".into(),
            "1".into(),
            "Time_Start, seconds, elapsed seconds from 0 hours UT".into(),
            nv_lines.len().to_string(),
            scales.into(),
            flags.into(),
        ];
        h.extend(nv_lines.iter().map(|s| s.to_string()));
        h.push("0".into());
        h.push(normal.len().to_string());
        h.extend(normal.iter().map(|s| s.to_string()));
        format!("{}, 1001\n{}\n", h.len() + 1, h.join("\n"))
    }

    #[test]
    fn detects_by_the_first_line() {
        assert!(looks_like(b"38, 1001\nDoe"));
        assert!(looks_like(b"\xEF\xBB\xBF38,1001, V02_2016\r\n"));
        assert!(!looks_like(b"time,x\n1,2\n"));
        assert!(!looks_like(b"38, 2110\n"));
    }

    #[test]
    fn applies_scale_factors_flags_and_builds_time() {
        let h = header(
            &["O3, ppbv, ozone", "CO, ppbv, carbon monoxide"],
            "1, 0.1",
            "-9999, -9999",
            &["LLOD_FLAG: -7777", "ULOD_FLAG: -8888", "Time_Start, O3, CO"],
        );
        let text = format!("{h}0, 30.5, 1200\n60, -9999, -7777\n120, -8888, 1300\n");
        let (t, note) = read("f.ict", text.as_bytes()).unwrap();
        assert_eq!(t.n_rows, 3);
        let o3 = t.numbers("O3", "").unwrap();
        assert_eq!(o3[0], 30.5);
        assert!(o3[1].is_nan() && o3[2].is_nan());
        let co = t.numbers("CO", "").unwrap();
        assert!((co[0] - 120.0).abs() < 1e-12 && co[1].is_nan() && (co[2] - 130.0).abs() < 1e-9);
        // 2013-07-15 00:00 UTC is 1373846400 s after 1970 (Python: datetime(2013,7,15,tzinfo=utc).timestamp()).
        assert_eq!(t.numbers(TIME_COLUMN, "").unwrap(), &[1373846400.0, 1373846460.0, 1373846520.0]);
        let time = t.column(TIME_COLUMN).unwrap().as_times().expect("a time column");
        assert_eq!(time.text(1).as_deref(), Some("2013-07-15T00:01Z"));
        assert_eq!(t.column("O3").unwrap().unit.as_deref(), Some("ppbv"));
        assert!(note.notes.iter().any(|n| n.contains("1 values equal to a missing-value flag")), "{:?}", note.notes);
        assert!(note.notes.iter().any(|n| n.contains("LLOD")));
    }

    #[test]
    fn errors_name_the_header_line() {
        let h = header(&["O3, ppbv"], "1, 1", "-9999", &["Time_Start, O3"]);
        let e = read("f.ict", format!("{h}0, 1\n").as_bytes()).unwrap_err().to_string();
        assert!(e.contains("header line 11 (scale factors)"), "{e}");
        let h = header(&["O3, ppbv"], "1", "-9999", &["Time_Start, O3"]).replacen("16, 1001", "19, 1001", 1);
        let e = read("f.ict", format!("{h}0, 1\n0,1\n0,1\n0,1\n").as_bytes()).unwrap_err().to_string();
        assert!(e.contains("header line 1") && e.contains("add up to 16"), "{e}");
        let h = header(&["O3, ppbv"], "1", "-9999", &["Time_Start, O3"]);
        let e = read("f.ict", format!("{h}0, 1, 2\n").as_bytes()).unwrap_err().to_string();
        assert!(e.contains("file line 17"), "{e}");
    }

    fn fixture(name: &str) -> Vec<u8> {
        std::fs::read(format!("{}/tests/fixtures/icartt/{name}", env!("CARGO_MANIFEST_DIR"))).unwrap()
    }

    // Expected values below are worked by hand from the fixture's header (written from
    // memory of the standard): value * scale factor, flags made missing.
    #[test]
    fn reads_the_v2_fixture() {
        let (t, note) = read("v2_ozone.ict", &fixture("v2_ozone.ict")).unwrap();
        assert_eq!(t.n_rows, 5);
        let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, [TIME_COLUMN, "Time_Start", "O3", "NO2", "T_amb"]);
        let temp = t.numbers("T_amb", "").unwrap();
        assert!((temp[0] - 298.15).abs() < 1e-9 && temp[3].is_nan());
        let no2 = t.numbers("NO2", "").unwrap();
        assert!(no2[1].is_nan() && no2[4].is_nan() && no2[2] == 131.0);
        assert!(t.numbers("O3", "").unwrap()[2].is_nan());
        // 10:00 UTC on 2013-07-15 (start date line 7, Time_Start 36000 s).
        assert_eq!(t.numbers(TIME_COLUMN, "").unwrap()[0], 1373846400.0 + 36000.0);
        assert_eq!(t.column("T_amb").unwrap().unit.as_deref(), Some("K"));
        assert_eq!(t.summaries(&[])[2].unit.as_deref(), Some("ppbv"));
        assert!(note.notes.iter().any(|n| n.contains("lower limit")), "{:?}", note.notes);
    }

    #[test]
    fn reads_the_v1_fixture_with_space_separated_data() {
        let (t, _) = read("v1_ozone.ict", &fixture("v1_ozone.ict")).unwrap();
        assert_eq!(t.n_rows, 3);
        assert!(t.numbers("O3", "").unwrap()[1].is_nan());
        assert!(t.numbers("CO", "").unwrap()[2].is_nan());
        assert_eq!(t.numbers("UTC", "").unwrap(), &[43200.0, 43260.0, 43320.0]);
    }
}
