//! The file readers and the time alignment against outside references: pandas.merge_asof
//! and numpy.interp (`tests/reference/fixtures/align.json`), a workbook written by
//! openpyxl (`tests/reference/fixtures/sheet.xlsx`, values in `sheet.json`), and columns of
//! date-time text typed as time as pandas.to_datetime reads them (`times.json`, `typed`).
//! The fixtures come from `tests/reference/make_fixtures.py` (versions pinned in
//! requirements.txt).

use nervure::align::{align, AlignSpec, Method};
use nervure::table::{sheet, Column, ColumnData, Table, MISSING_CODE};
use nervure::timecol::{self, Precision};
use nervure::ReadOptions;
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(|x| x.as_f64().unwrap_or(f64::NAN)).collect()
}

fn category(name: &str, values: &[String]) -> Column {
    let mut levels: Vec<String> = Vec::new();
    let codes = values
        .iter()
        .map(|s| match levels.iter().position(|l| l == s) {
            Some(i) => i as u32,
            None => {
                levels.push(s.clone());
                (levels.len() - 1) as u32
            }
        })
        .collect();
    Column::category(name, codes, levels)
}

fn strings(v: &Value) -> Vec<String> {
    v.as_array().unwrap().iter().map(|x| x.as_str().unwrap().to_string()).collect()
}

#[test]
fn nearest_matches_pandas_merge_asof() {
    let f = fixture("align.json");
    let left = Table::from_columns("left", vec![Column::number("t", floats(&f["left"]["t"])), category("site", &strings(&f["left"]["site"]))]).unwrap();
    let n_right = f["right"]["t"].as_array().unwrap().len();
    let right = Table::from_columns(
        "right",
        vec![
            Column::number("t", floats(&f["right"]["t"])),
            category("site", &strings(&f["right"]["site"])),
            Column::number("ridx", (0..n_right).map(|i| i as f64).collect()),
        ],
    )
    .unwrap();
    for case in f["nearest"].as_array().unwrap() {
        let by = case["by"].as_bool().unwrap();
        let spec = AlignSpec {
            measurement_time: "t".into(),
            model_time: "t".into(),
            measurement_key: by.then(|| "site".into()),
            model_key: by.then(|| "site".into()),
            method: Method::Nearest { tolerance: case["tolerance"].as_f64() },
            prefix: "model_".into(),
        };
        let (t, report) = align(&left, &right, &spec).unwrap();
        let got = t.numbers("model_ridx", "").unwrap();
        let want = floats(&case["ridx"]);
        for (i, (g, w)) in got.iter().zip(&want).enumerate() {
            assert!(g == w || (g.is_nan() && w.is_nan()), "case {case:?}: left row {i}: engine {g}, pandas {w}");
        }
        assert_eq!(report.matched, want.iter().filter(|x| !x.is_nan()).count());
    }
}

#[test]
fn linear_matches_numpy_interp_inside_the_range_and_is_missing_outside() {
    let f = fixture("align.json");
    for case in f["linear"].as_array().unwrap() {
        let site = case["site"].as_str().unwrap();
        let x = floats(&case["x"]);
        let meas = Table::from_columns("m", vec![Column::number("t", x.clone())]).unwrap();
        let model = Table::from_columns("o", vec![Column::number("t", floats(&case["xp"])), Column::number("v", floats(&case["fp"]))]).unwrap();
        let spec = AlignSpec {
            measurement_time: "t".into(),
            model_time: "t".into(),
            measurement_key: None,
            model_key: None,
            method: Method::Linear { max_gap: None },
            prefix: "model_".into(),
        };
        let (t, _) = align(&meas, &model, &spec).unwrap();
        let got = t.numbers("model_v", "").unwrap();
        let want = floats(&case["y"]);
        let edge = floats(&case["yEdge"]);
        let mut outside = 0;
        for i in 0..x.len() {
            if want[i].is_nan() {
                outside += 1;
                assert!(got[i].is_nan(), "site {site}, t {}: outside the model's range must be missing", x[i]);
                assert!(!edge[i].is_nan(), "numpy's default repeats the edge value there");
            } else {
                assert!((got[i] - want[i]).abs() <= 1e-12 * want[i].abs().max(1.0), "site {site}, t {}: {} vs numpy {}", x[i], got[i], want[i]);
            }
        }
        assert!(outside > 0 || site == "b", "the fixture should test the edges somewhere");
    }
}

#[test]
fn xlsx_written_by_openpyxl_reads_back_the_same_values() {
    let f = fixture("sheet.json");
    let bytes = std::fs::read(format!("{}/tests/reference/fixtures/sheet.xlsx", env!("CARGO_MANIFEST_DIR"))).unwrap();
    assert!(sheet::looks_like(&bytes));
    assert_eq!(sheet::sheet_names("sheet.xlsx", &bytes).unwrap(), strings(&f["sheets"]));
    let (t, note) = sheet::read("sheet.xlsx", &bytes, None).unwrap();
    assert_eq!(note.sheet.as_deref(), Some("stations"));
    let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, strings(&f["header"]));
    assert_eq!(t.n_rows, 4);
    // Dates: ISO text as Python's isoformat() wrote it, and seconds since 1970 as its timestamp().
    let when = t.column("when").unwrap();
    let times = when.as_times().expect("dates should be a time column");
    assert_eq!(times.zone, timecol::Zone::Unwritten, "spreadsheets store no zone");
    let iso: Vec<String> = (0..t.n_rows).map(|i| times.text(i).unwrap()).collect();
    assert_eq!(iso, strings(&f["when_iso"]), "written back as Python's isoformat() wrote them");
    assert_eq!(timecol::time_values(when).unwrap(), floats(&f["when_seconds"]));
    let ColumnData::Category { codes, levels } = &t.column("station").unwrap().data else { panic!() };
    let st: Vec<String> = codes.iter().map(|&c| levels[c as usize].clone()).collect();
    assert_eq!(st, strings(&f["station"]));
    assert_eq!(t.numbers("water_temp_c", "").unwrap(), floats(&f["water_temp_c"]));
    let flow = t.numbers("flow", "").unwrap();
    let want = floats(&f["flow"]);
    assert!(flow[1].is_nan() && want[1].is_nan(), "the empty cell is missing");
    assert_eq!((flow[0], flow[2], flow[3]), (want[0], want[2], want[3]));
    let (t2, _) = sheet::read("sheet.xlsx", &bytes, Some("notes")).unwrap();
    assert_eq!(t2.numbers("v", "").unwrap(), &[1.5]);
    let e = sheet::read("sheet.xlsx", &bytes, Some("nope")).unwrap_err().to_string();
    assert!(e.contains("stations, notes"), "{e}");
    assert_ne!(codes[0], MISSING_CODE);
}

#[test]
fn opendocument_sheets_are_refused_with_what_to_do() {
    let bytes = std::fs::read(format!("{}/tests/reference/fixtures/sheet.xlsx", env!("CARGO_MANIFEST_DIR"))).unwrap();
    let e = sheet::read("campaign.ods", &bytes, None).unwrap_err().to_string();
    assert!(e.contains("campaign.ods") && e.contains(".xlsx or CSV"), "{e}");
    let e = sheet::read("broken.xlsx", b"PK\x03\x04 not really a zip", None).unwrap_err().to_string();
    assert!(e.contains("broken.xlsx") && e.contains("export the sheet as CSV"), "{e}");
}

/// Whole columns of date-time text through the CSV reader, against pandas 3.1.1's
/// `to_datetime` (fixture `times.json`, `typed`): which columns are time, their instants,
/// and each value written back as Python's `isoformat` writes it at the column's precision.
/// Where our rule and pandas' defaults differ, the difference is stated here, one by one.
#[test]
fn text_columns_are_typed_as_time_as_pandas_reads_them() {
    let f = fixture("times.json");
    // Ours: Some(precision) for a time column, None for text; and whether pandas' defaults agree.
    let expected: &[(&str, Option<Precision>, &str)] = &[
        ("iso with Z, seconds", Some(Precision::Second), "agree"),
        ("iso, minutes, no zone", Some(Precision::Minute), "agree"),
        ("dates", Some(Precision::Day), "agree"),
        ("dates with a gap", Some(Precision::Day), "agree"),
        ("year first, slashes", Some(Precision::Day), "agree"),
        ("year first, slashes, minutes", Some(Precision::Minute), "agree"),
        ("day first, dots", Some(Precision::Second), "agree"),
        ("one offset", Some(Precision::Minute), "agree"),
        ("negative offset, seconds", Some(Precision::Second), "agree"),
        // pandas refuses mixed offsets unless told utc=True; we keep each row's offset, and
        // the instants are those of utc=True.
        ("offsets differ by row", Some(Precision::Minute), "pandas refuses by default"),
        // pandas infers one format from the first value; we read ISO 8601 value by value, as
        // its format="ISO8601" does.
        ("fractions of a second", Some(Precision::Fraction), "pandas refuses by default"),
        // pandas infers month first from the first value and fails on 13/02; the column
        // settles day first, as its dayfirst=True reads it.
        ("slash dates settled day first", Some(Precision::Minute), "pandas refuses by default"),
        // Both readings are possible for every value: pandas silently takes month first; we
        // keep the text and say why.
        ("slash dates both ways", None, "pandas reads month first"),
        ("mixed forms", None, "agree"),
        ("with and without an offset", None, "agree"),
        // ISO 8601 allows a date alone beside a date with a time of day (format="ISO8601").
        ("a date and a date-time", Some(Precision::Minute), "pandas refuses by default"),
        ("dates and a word", None, "agree"),
    ];
    let typed = f["typed"].as_array().unwrap();
    assert_eq!(typed.len(), expected.len());
    for (c, &(name, want, note)) in typed.iter().zip(expected) {
        assert_eq!(c["name"].as_str().unwrap(), name);
        let pandas_ok = c["default"].as_str().unwrap() == "ok";
        match note {
            "agree" => assert_eq!(pandas_ok, want.is_some(), "{name}: pandas says {}", c["default"]),
            "pandas refuses by default" => assert!(!pandas_ok && want.is_some(), "{name}"),
            _ => assert!(pandas_ok && want.is_none(), "{name}"),
        }
        let values: Vec<Option<&str>> = c["values"].as_array().unwrap().iter().map(Value::as_str).collect();
        let csv = format!("when,x\n{}", values.iter().enumerate().map(|(i, v)| format!("{},{i}\n", v.unwrap_or(""))).collect::<String>());
        let t = Table::from_csv_bytes("t.csv", csv.as_bytes(), &ReadOptions::default()).unwrap();
        let col = t.column("when").unwrap();
        let Some(precision) = want else {
            assert!(col.as_times().is_none(), "{name}: read as time");
            let why = col.not_time.as_deref().unwrap_or_else(|| panic!("{name}: no reason kept"));
            assert!(why.contains("data row") || why.contains("both day first and month first"), "{name}: {why}");
            continue;
        };
        let times = col.as_times().unwrap_or_else(|| panic!("{name}: not time: {:?}", col.not_time));
        assert_eq!(times.precision, precision, "{name}");
        let key = match precision {
            Precision::Day => "date",
            Precision::Minute => "minutes",
            Precision::Second => "seconds",
            Precision::Fraction => "microseconds",
        };
        for (i, (s, iso)) in c["seconds"].as_array().unwrap().iter().zip(c["iso"].as_array().unwrap()).enumerate() {
            match s.as_f64() {
                None => assert!(times.seconds[i].is_nan() && times.text(i).is_none(), "{name}, row {i}"),
                Some(s) => {
                    assert!((times.seconds[i] - s).abs() < 1e-6, "{name}, row {i}: {} vs pandas {s}", times.seconds[i]);
                    // Python writes UTC as +00:00 where the file and we write Z.
                    let python = iso[key].as_str().unwrap().replace("+00:00", "Z");
                    assert_eq!(times.text(i).unwrap(), python, "{name}, row {i}");
                }
            }
        }
    }
}
