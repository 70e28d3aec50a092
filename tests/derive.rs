//! Derived columns and time columns, from the text of an expression to a graph:
//! - the parser (precedence, unary minus, numbers, functions, quoted names) and every
//!   error with the place its caret points at;
//! - evaluation against values computed by hand (common practice: plain arithmetic);
//! - date-time parsing against Python's `datetime` (tests/reference/fixtures/times.json,
//!   written by tests/reference/make_fixtures.py): seconds within 1e-6, hour of day
//!   within 1e-9, day of year exact;
//! - derived columns end to end through `nervure::build` and the `Workbench` cache.

use nervure::derive::{self, parse::ExprKind, parse::Op};
use nervure::settings::{Clustering, CoverSettings, Derived, EdgeRule, Lens, Missing, Scaling};
use nervure::table::{Column, ColumnData};
use nervure::{timecol, Error, ReadOptions, Settings, Table, Workbench};
use serde_json::Value;

fn table() -> Table {
    Table::from_columns(
        "t",
        vec![
            Column::number("water", vec![1.0, 2.0, 4.0, -9999.0, 8.0]),
            Column::number("model", vec![0.5, 2.0, 0.0, 1.0, f64::NAN]),
            Column::number("level (m)", vec![10.0, 20.0, 30.0, 40.0, 50.0]),
            Column::number("a \"b\"", vec![1.0, 1.0, 2.0, 3.0, 5.0]),
            Column::number("débit", vec![1.0; 5]),
            Column::category("site", vec![0, 1, 0, 1, 0], vec!["n".into(), "s".into()]),
            Column::category(
                "when",
                vec![0, 1, 2, 3, 4],
                ["2024-07-15T00:00", "2024-07-15T13:30", "2024-12-31 23:00", "2024-01-01", "2024-07-15T08:00"]
                    .iter()
                    .map(|s| s.to_string())
                    .collect(),
            ),
            Column::category(
                "at",
                vec![0, 1, 2, 3, 4],
                ["2024-07-15T10:00+02:00", "2024-07-15T10:00Z", "2024-12-31T23:00-05:30", "2024-01-01T00:30+01:00", "2024-07-15T08:00Z"]
                    .iter()
                    .map(|s| s.to_string())
                    .collect(),
            ),
            Column::category(
                "mixed",
                vec![0, 1, 0, 1, 0],
                vec!["2024-07-15T10:00".into(), "2024-07-15T10:00+02:00".into()],
            ),
        ],
    )
    .unwrap()
}

fn eval_with(expr: &str, fills: &[f64]) -> Result<(Vec<f64>, derive::DerivedInfo), Error> {
    let t = table();
    let d = [Derived { name: "out".into(), expression: expr.into() }];
    let (cols, mut infos) = derive::derive_columns(&t.columns, t.n_rows, &d, fills)?;
    Ok((cols[0].as_numbers().unwrap().to_vec(), infos.remove(0)))
}

fn eval(expr: &str) -> Vec<f64> {
    eval_with(expr, &[-9999.0]).unwrap_or_else(|e| panic!("{expr}: {e}")).0
}

fn scalar(expr: &str) -> f64 {
    let v = eval(expr);
    assert!(v.iter().all(|x| x.to_bits() == v[0].to_bits()), "{expr} is not constant: {v:?}");
    v[0]
}

/// The message of a derived-column error (the expression, the caret line, the reason).
fn err(expr: &str) -> String {
    match eval_with(expr, &[]) {
        Err(Error::Settings { field, message }) => {
            assert!(field.starts_with("derived[0]."), "{field}");
            message
        }
        other => panic!("{expr}: expected an error, got {other:?}"),
    }
}

#[test]
fn precedence_associativity_and_unary_minus() {
    assert_eq!(scalar("2 + 3 * 4"), 14.0);
    assert_eq!(scalar("(2 + 3) * 4"), 20.0);
    assert_eq!(scalar("2 - 3 - 4"), -5.0);
    assert_eq!(scalar("8 / 4 / 2"), 1.0);
    assert_eq!(scalar("-2 * 3"), -6.0);
    assert_eq!(scalar("2 * -3"), -6.0);
    assert_eq!(scalar("- - 3"), 3.0);
    assert_eq!(scalar("-(1 + 2) * 2"), -6.0);
    assert_eq!(scalar("2 - -3"), 5.0);
    assert_eq!(scalar("1e-3 * 1000"), 1.0);
    assert_eq!(scalar(".5 + 1.5E+1 + 2."), 17.5);
    let e = derive::parse_expression("a - b * c").unwrap();
    match e.kind {
        ExprKind::Binary(Op::Sub, l, r) => {
            assert_eq!(l.kind, ExprKind::Column("a".into()));
            assert!(matches!(r.kind, ExprKind::Binary(Op::Mul, _, _)));
            assert_eq!((r.span.start, r.span.end), (4, 9));
        }
        k => panic!("{k:?}"),
    }
}

#[test]
fn functions_by_hand() {
    assert_eq!(scalar("abs(-2.5)"), 2.5);
    assert!((scalar("log(exp(2))") - 2.0).abs() < 1e-15);
    assert_eq!(scalar("log10(1000)"), 3.0);
    assert_eq!(scalar("sqrt(16)"), 4.0);
    assert_eq!(scalar("min(3, -1) + max(3, -1)"), 2.0);
    assert_eq!(scalar("max(min(1, 2), 0.5)"), 1.0);
}

#[test]
fn quoted_names_with_spaces_and_doubled_quotes() {
    assert_eq!(eval("\"level (m)\" / 10"), vec![1.0, 2.0, 3.0, 4.0, 5.0]);
    assert_eq!(eval("\"a \"\"b\"\"\" * 2"), vec![2.0, 2.0, 4.0, 6.0, 10.0]);
    // A function name is a column name when no '(' follows, and quoting always names a column.
    assert!(err("log + 1").contains("no column named 'log'"));
    assert!(err("\"abs\"(1)").contains("expected an operator"));
}

#[test]
fn columns_missing_values_and_undefined_operations() {
    // water: [1, 2, 4, fill, 8], model: [0.5, 2, 0, 1, NaN].
    let (v, info) = eval_with("water / model", &[-9999.0]).unwrap();
    assert_eq!(v[0], 2.0);
    assert_eq!(v[1], 1.0);
    assert!(v[2].is_nan() && v[3].is_nan() && v[4].is_nan());
    assert_eq!(info.missing, 3);
    assert_eq!(info.undefined.len(), 1);
    assert_eq!((info.undefined[0].what.as_str(), info.undefined[0].rows, info.undefined[0].first_row), ("division by zero", 1, 3));
    let (v, info) = eval_with("log(model) + sqrt(water - 2)", &[-9999.0]).unwrap();
    // Row 1: log(0.5) + sqrt(-1) -> NaN (sqrt); row 2: log 2 + 0; row 3: log(0) -> NaN.
    assert!(v[0].is_nan());
    assert!((v[1] - 2f64.ln()).abs() < 1e-15);
    assert!(v[2].is_nan());
    let what: Vec<(&str, usize, usize)> = info.undefined.iter().map(|u| (u.what.as_str(), u.rows, u.first_row)).collect();
    assert_eq!(what, vec![("log of a value <= 0", 1, 3), ("sqrt of a negative value", 1, 1)]);
    // Without the fill value declared, -9999 is a number like any other.
    let (v, _) = eval_with("water + 1", &[]).unwrap();
    assert_eq!(v[3], -9998.0);
    // min and max keep a missing input missing.
    let v = eval("min(water, model)");
    assert_eq!(v[0], 0.5);
    assert!(v[4].is_nan() && v[3].is_nan());
    // Overflow is counted, not left infinite.
    let (v, info) = eval_with("exp(water * 100)", &[-9999.0]).unwrap();
    assert!(v[4].is_nan() && v[0].is_finite());
    assert!(info.undefined.iter().any(|u| u.what.contains("too large")));
}

#[test]
fn every_error_points_at_its_character() {
    let cases: &[(&str, &str)] = &[
        ("water - modl", "water - modl\n        ^^^^ no column named 'modl'; did you mean model?"),
        ("water +", "water +\n       ^ expected a column name, a number, '(' or '-', found the end"),
        ("(water + 1", "(water + 1\n          ^ expected ')' to close the '(' at character 1, found the end"),
        ("water model", "water model\n      ^^^^^ expected an operator (+ - * /) or the end, found 'model'"),
        ("min(water", "min(water\n         ^ expected ',' or ')' to close the '(' at character 4, found the end"),
        ("min(water)", "min(water)\n^^^^^^^^^^ min() takes 2 arguments, got 1"),
        ("sqrt(1, 2)", "sqrt(1, 2)\n^^^^^^^^^^ sqrt() takes 1 argument, got 2"),
        ("water * \"level", "water * \"level\n        ^ this quoted name has no closing '\"'"),
        ("water # 2", "water # 2\n      ^ unexpected character '#'"),
        ("1e+ * water", "1e+ * water\n ^^ expected digits after the exponent 'e', as in 1e-3"),
        ("2water", "2water\n^^ a number runs into a name"),
        ("\"\" + 1", "\"\" + 1\n^^ a quoted name cannot be empty"),
        ("", "\n^ expected a column name, a number, '(' or '-', found the end"),
        ("water, 1", "water, 1\n     ^ expected an operator (+ - * /) or the end, found ','"),
        ("site * 2", "site * 2\n^^^^ column 'site' holds categories, not numbers"),
        ("water + hour(water)", "water + hour(water)\n             ^^^^^ column 'water' holds numbers; hour() reads a column of date-times"),
        ("doy(when + 1)", "doy(when + 1)\n    ^^^^^^^^ doy() reads a date-time column by name, as in doy(when)"),
        ("hour(site)", "hour(site)\n     ^^^^ column 'site', data row 1: 'n' is not a date-time"),
        ("log(-1)", "log(-1)\n^^^^^^^ log of a value <= 0: -1"),
        ("fog(water)", "fog(water)\n^^^ no function named 'fog'; the functions are abs, log"),
        // Carets count characters, not bytes: "débit" is 7 characters and 8 bytes.
        ("\"débit\" + x", "\"débit\" + x\n          ^ no column named 'x'"),
        ("\"débt\" + 1", "\"débt\" + 1\n^^^^^^ no column named 'débt'; did you mean \"débit\"?"),
        ("when * 2", "when * 2\n^^^^ column 'when' holds categories, not numbers; it reads as date-times: use hour(when), doy(when) or time(when)"),
        ("hour(mixed)", "hour(mixed)\n     ^^^^^ column 'mixed': data row 2 holds '2024-07-15T10:00+02:00' with a time-zone offset and data row 1 holds '2024-07-15T10:00' without one"),
    ];
    for (expr, want) in cases {
        let got = err(expr);
        assert!(got.starts_with(want), "expression {expr:?}\n--- got:\n{got}\n--- want (prefix):\n{want}");
    }
}

#[test]
fn settings_errors_name_the_field_and_order_matters() {
    let t = table();
    let d = |n: &str, e: &str| Derived { name: n.into(), expression: e.into() };
    let e = derive::derive_columns(&t.columns, t.n_rows, &[d("water", "model * 2")], &[]).unwrap_err().to_string();
    assert!(e.contains("derived[0].name") && e.contains("already a column of the file"), "{e}");
    let e = derive::derive_columns(&t.columns, t.n_rows, &[d("a", "b + 1"), d("b", "water")], &[]).unwrap_err().to_string();
    assert!(e.contains("derived[0].expression") && e.contains("only the ones listed before it"), "{e}");
    let (cols, _) = derive::derive_columns(&t.columns, t.n_rows, &[d("b", "water * 2"), d("a", "b + 1")], &[]).unwrap();
    assert_eq!(cols[1].as_numbers().unwrap()[0], 3.0);
}

#[test]
fn time_functions_read_the_clock_as_written() {
    // when: 2024-07-15T00:00, 13:30 the same day, 2024-12-31 23:00, 2024-01-01, 08:00 (no zone written).
    assert_eq!(eval("hour(when)"), vec![0.0, 13.5, 23.0, 0.0, 8.0]);
    assert_eq!(eval("doy(when)"), vec![197.0, 197.0, 366.0, 1.0, 197.0]);
    let t = eval("time(when)");
    assert_eq!(t[3], 1_704_067_200.0); // 2024-01-01T00:00Z (common practice: `date -u -d 2024-01-01 +%s`)
    assert_eq!(t[4] - t[0], 8.0 * 3600.0);
    // at: offsets that differ by row; the hour is the clock as written, the instant exact.
    assert_eq!(eval("hour(at)"), vec![10.0, 10.0, 23.0, 0.5, 8.0]);
    assert_eq!(eval("doy(at)"), vec![197.0, 197.0, 366.0, 1.0, 197.0]);
    let a = eval("time(at)");
    assert_eq!(a[0], t[4], "10:00+02:00 is 08:00 UTC");
    assert_eq!(a[1] - a[0], 2.0 * 3600.0);
    assert_eq!(a[3], 1_704_067_200.0 - 1800.0);
    // The same functions on the column typed as time give the same values.
    let typed = Table::from_columns("t", vec![Column::from_text("at", vec![0, 1, 2, 3, 4], table().column("at").map(|c| match &c.data {
        ColumnData::Category { levels, .. } => levels.clone(),
        _ => unreachable!(),
    }).unwrap())]).unwrap();
    assert!(typed.columns[0].is_time());
    assert_eq!(timecol::hour_of_day(&typed.columns[0]).unwrap(), vec![10.0, 10.0, 23.0, 0.5, 8.0]);
    assert_eq!(timecol::time_values(&typed.columns[0]).unwrap(), a);
}

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()));
    v
}

#[test]
fn date_times_match_python_datetime() {
    let f = fixture("times.json");
    let cases = f["cases"].as_array().unwrap();
    assert!(cases.len() > 100);
    for c in cases {
        let text = c["text"].as_str().unwrap();
        let s = timecol::parse(text, None).unwrap_or_else(|e| panic!("{text}: {e}"));
        let (w, h, d) = (c["seconds"].as_f64().unwrap(), c["hour"].as_f64().unwrap(), c["doy"].as_f64().unwrap());
        assert!((s.seconds() - w).abs() < 1e-6, "{text}: seconds {} vs python {w}", s.seconds());
        assert!((s.hour_of_day() - h).abs() < 1e-9, "{text}: hour {} vs python {h}", s.hour_of_day());
        assert_eq!(s.day_of_year(), d, "{text}");
    }
    // The same through columns (one per written form, with and without offsets: a column
    // mixes neither) and the expression language, as text and typed as time.
    let mut groups: std::collections::BTreeMap<(u8, u8, bool), Vec<&Value>> = Default::default();
    for c in cases {
        let text = c["text"].as_str().unwrap();
        let b = text.as_bytes();
        groups.entry((b[4], b[2], timecol::parse(text, None).unwrap().zoned)).or_default().push(c);
    }
    assert!(groups.len() >= 5, "forms: {:?}", groups.keys());
    for group in groups.values() {
        let texts: Vec<String> = group.iter().map(|c| c["text"].as_str().unwrap().to_string()).collect();
        let n = texts.len();
        let t = Table::from_columns("t", vec![Column::category("at", (0..n as u32).collect(), texts.clone())]).unwrap();
        let d = [Derived { name: "s".into(), expression: "time(at)".into() }, Derived { name: "h".into(), expression: "hour(at)".into() }];
        let (cols, _) = derive::derive_columns(&t.columns, n, &d, &[]).unwrap_or_else(|e| panic!("{texts:?}: {e}"));
        for (i, c) in group.iter().enumerate() {
            assert!((cols[0].as_numbers().unwrap()[i] - c["seconds"].as_f64().unwrap()).abs() < 1e-6);
            assert!((cols[1].as_numbers().unwrap()[i] - c["hour"].as_f64().unwrap()).abs() < 1e-9);
        }
        assert_eq!(timecol::time_values(&t.columns[0]).unwrap(), cols[0].as_numbers().unwrap());
        let typed = Column::from_text("at", (0..n as u32).collect(), texts.clone());
        assert!(typed.is_time(), "{texts:?}: {:?}", typed.not_time);
        assert_eq!(typed.as_numbers().unwrap(), cols[0].as_numbers().unwrap());
        assert_eq!(timecol::hour_of_day(&typed).unwrap(), cols[1].as_numbers().unwrap());
    }
}

#[test]
fn slash_dates_are_settled_by_the_column_or_refused_like_python_cannot_decide() {
    let f = fixture("times.json");
    for c in f["columns"].as_array().unwrap() {
        let values: Vec<String> = c["values"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_string()).collect();
        let n = values.len() as u32;
        let col = Column::category("d", (0..n).collect(), values.clone());
        match c["seconds"].as_array() {
            Some(want) => {
                let got = timecol::time_values(&col).unwrap_or_else(|| panic!("{values:?} refused"));
                for (g, w) in got.iter().zip(want) {
                    assert!((g - w.as_f64().unwrap()).abs() < 1e-6, "{values:?} with {}: {g} vs {w}", c["format"]);
                }
            }
            None => assert!(timecol::parse_column(&col).is_err(), "{values:?} should be refused"),
        }
    }
    for t in f["refused"].as_array().unwrap() {
        let t = t.as_str().unwrap();
        assert!(timecol::parse(t, None).is_err(), "{t} is refused by Python but accepted here");
    }
}

fn settings(lens: &str) -> Settings {
    Settings {
        version: 1,
        columns: vec!["x".into(), "y".into()],
        scaling: Scaling::Zscore,
        missing: Missing { fill_values: vec![-9999.0], ..Default::default() },
        lens: Lens::Column { column: lens.into() },
        cover: CoverSettings::uniform(6, 0.3),
        clustering: Clustering::Dbscan { eps: 0.6, min_points: 3 },
        edges: EdgeRule::default(),
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    }
}

/// A circle of 120 points: x = cos, y = sin, r2 = x^2 + y^2 (1 up to noise) written out.
fn circle(with_precomputed: bool) -> Table {
    let n = 120;
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for i in 0..n {
        let a = i as f64 / n as f64 * std::f64::consts::TAU;
        let r = 1.0 + 0.02 * ((i * 7) % 5) as f64;
        x.push(r * a.cos());
        y.push(r * a.sin());
    }
    let mut cols = vec![Column::number("x", x.clone()), Column::number("y", y.clone())];
    if with_precomputed {
        cols.push(Column::number("angle_like", x.iter().zip(&y).map(|(a, b)| a * 2.0 - b).collect()));
    }
    Table::from_columns("circle", cols).unwrap()
}

#[test]
fn a_derived_lens_column_gives_the_same_graph_as_the_column_written_out() {
    let mut s = settings("angle_like");
    let want = nervure::build(&circle(true), &s).unwrap();
    s.derived = vec![Derived { name: "angle_like".into(), expression: "x * 2 - y".into() }];
    let got = nervure::build(&circle(false), &s).unwrap();
    assert_eq!(got.nerve, want.nerve);
    assert_eq!(got.summary, want.summary);
    assert_eq!(got.summary.loops, 1, "a circle read along a linear lens keeps its loop");
}

#[test]
fn the_workbench_recomputes_derived_columns_only_when_they_change() {
    let mut w = Workbench::new();
    w.set_table(circle(false));
    let mut s = settings("lensed");
    s.derived = vec![Derived { name: "lensed".into(), expression: "x * 2 - y".into() }];
    let first = w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!(w.table().unwrap().columns.len(), 3);
    assert_eq!(w.derived_info()[0].name, "lensed");
    // The derived column colours nodes and appears in node details like a file column.
    assert_eq!(w.node_values("lensed", nervure::NodeStat::Mean).unwrap().len(), first.nodes);
    assert!(w.node_detail(0).unwrap().columns.iter().any(|c| c.name == "lensed" && c.kind == "number"));
    // A changed expression under the same name is a different lens: the cache must not keep it.
    let mut stages = Vec::new();
    s.derived[0].expression = "y".into();
    let second = w.run(&s, &mut |st, _| stages.push(st.to_string())).unwrap();
    assert!(stages.contains(&"points".to_string()), "{stages:?}");
    let direct = {
        let mut t = circle(false);
        let yv = t.columns[1].as_numbers().unwrap().to_vec();
        t.columns.push(Column::number("lensed", yv));
        let mut p = settings("lensed");
        p.derived.clear();
        nervure::build(&t, &p).unwrap().summary
    };
    assert_eq!(second, direct);
    assert_eq!(w.table().unwrap().columns.len(), 3, "derived columns are replaced, not stacked");
    // An error leaves the previous derived columns and build in place.
    s.derived[0].expression = "y + nope".into();
    let e = w.run(&s, &mut |_, _| {}).unwrap_err().to_string();
    assert!(e.contains("derived[0].expression") && e.contains("^^^^ no column named 'nope'"), "{e}");
    assert_eq!(w.last().unwrap().summary, second);
    assert!(matches!(&w.table().unwrap().columns[2].data, ColumnData::Number(v) if v[5] == w.table().unwrap().columns[1].as_numbers().unwrap()[5]));
    // Dropping the list drops the columns.
    s.derived.clear();
    s.lens = Lens::Column { column: "x".into() };
    w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!(w.table().unwrap().columns.len(), 2);
}

#[test]
fn hour_of_day_from_a_csv_file_as_a_lens() {
    let mut csv = String::from("when,flow\n");
    for i in 0..96 {
        // Every 15 minutes over one day; flow follows the hour.
        csv.push_str(&format!("2024-07-15T{:02}:{:02}:00Z,{}\n", i / 4, (i % 4) * 15, (i / 4) as f64 * 0.5));
    }
    let t = Table::from_csv_bytes("day.csv", csv.as_bytes(), &ReadOptions::default()).unwrap();
    let when = t.column("when").unwrap().as_times().expect("read as a time column");
    assert_eq!(when.zone, timecol::Zone::Offset(0));
    let mut s = settings("hour");
    s.columns = vec!["flow".into(), "hour".into()];
    s.derived = vec![Derived { name: "hour".into(), expression: "hour(when)".into() }];
    let b = nervure::build(&t, &s).unwrap();
    assert_eq!(b.lens_range, (0.0, 23.75));
    assert_eq!(b.summary.rows, 96);
}
