//! The file readers and the time alignment against outside references: pandas.merge_asof
//! and numpy.interp (`tests/reference/fixtures/align.json`), and a workbook written by
//! openpyxl (`tests/reference/fixtures/sheet.xlsx`, values in `sheet.json`). Both fixtures
//! come from `tests/reference/make_fixtures.py` (versions pinned in requirements.txt).

use nervure::align::{align, AlignSpec, Method};
use nervure::table::{sheet, Column, ColumnData, Table, MISSING_CODE};
use nervure::timecol;
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
