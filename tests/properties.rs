//! Property tests of the readers of outside input: the CSV reader, the expression and
//! row-condition parser (and the condition's evaluation) and the settings reader, on generated inputs (the `proptest` crate; cargo-fuzz
//! would need a nightly compiler, which the build machines lack).
//!
//! The number of cases per property is proptest's `PROPTEST_CASES` (256 unless set; CI uses
//! the default, run by hand with e.g. `PROPTEST_CASES=20000 cargo test --test properties`).
//! A failing case is shrunk and its seed saved in `tests/properties.proptest-regressions`, which is
//! committed so it is replayed first on every later run; cases found that way are also kept
//! as plain tests at the end of this file.
//!
//! References: the `csv` crate's writer (RFC 4180 quoting) writes the tables that the
//! reader must read back; Rust's `{}` formatting of `f64` writes numbers that
//! `str::parse::<f64>` reads back exactly (both std's documented round-trip guarantee).

use nervure::derive::{condition, parse_condition, parse_expression};
use nervure::settings::*;
use nervure::table::{ColumnData, MISSING_CODE};
use nervure::{ReadOptions, Settings, Table, TableReader};
use proptest::prelude::*;

/// Feeds `bytes` cut at `cuts` (positions taken modulo the length).
fn read_in_pieces(bytes: &[u8], cuts: &[usize], options: &ReadOptions) -> nervure::Result<Table> {
    let mut at: Vec<usize> = cuts.iter().map(|c| if bytes.is_empty() { 0 } else { c % bytes.len() }).collect();
    at.push(0);
    at.push(bytes.len());
    at.sort_unstable();
    at.dedup();
    let mut r = TableReader::new("p.csv", options.clone());
    for w in at.windows(2) {
        r.push(&bytes[w[0]..w[1]])?;
    }
    r.finish()
}

/// Bytes drawn mostly from the characters that steer the reader (delimiters, quotes, line
/// ends, digits, NUL, byte-order marks, Latin-1 and invalid UTF-8 bytes), and sometimes any byte.
fn csvish_bytes() -> impl Strategy<Value = Vec<u8>> {
    let steer = prop::sample::select(vec![
        b',', b';', b'\t', b'"', b'\n', b'\r', b' ', b'a', b'1', b'.', b'e', b'-', 0xE9, 0x00, 0xFF, 0xFE, 0xEF, 0xBB,
        0xBF, 0xD8, 0xDC,
    ]);
    prop::collection::vec(prop_oneof![4 => steer, 1 => any::<u8>()], 0..1500)
}

#[derive(Debug, Clone)]
enum Cell {
    Number(f64),
    Text(String),
}

impl Cell {
    fn written(&self) -> String {
        match self {
            Cell::Number(x) => format!("{x}"),
            Cell::Text(t) => t.clone(),
        }
    }
}

/// Text that the reader keeps as text: starts with a letter no number starts with, holds
/// no NUL or byte-order mark, and ends in neither a space nor a tab (the reader trims those).
fn text_cell() -> impl Strategy<Value = String> {
    "[^\u{0}\u{FEFF}]{0,12}".prop_map(|s| {
        let mut t = format!("t{s}");
        while t.ends_with([' ', '\t']) {
            t.pop();
        }
        t
    })
}

fn number_cell() -> impl Strategy<Value = f64> {
    prop_oneof![any::<f64>().prop_filter("finite", |x| x.is_finite()), (-1000i32..1000).prop_map(f64::from), -1e6..1e6f64]
}

/// A table as columns of cells: 1 to 6 columns, 1 to 25 rows, each column mostly numbers,
/// mostly texts, or mixed.
fn table_cells() -> impl Strategy<Value = (Vec<String>, Vec<Vec<Cell>>)> {
    (1usize..7, 1usize..26).prop_flat_map(|(cols, rows)| {
        let column = prop_oneof![
            prop::collection::vec(number_cell().prop_map(Cell::Number), rows),
            prop::collection::vec(text_cell().prop_map(Cell::Text), rows),
            prop::collection::vec(prop_oneof![3 => number_cell().prop_map(Cell::Number), 1 => text_cell().prop_map(Cell::Text)], rows),
        ];
        let names = prop::collection::vec("[a-zA-Zé_ ]{0,6}[a-z]", cols)
            .prop_map(|v| v.into_iter().enumerate().map(|(i, n)| format!("h{i}{n}")).collect::<Vec<_>>());
        (names, prop::collection::vec(column, cols))
    })
}

proptest! {
    /// Any bytes, in any chunking, with the delimiter guessed or given: an error or a table
    /// whose columns all have one length, never a panic.
    #[test]
    fn arbitrary_bytes_never_panic(bytes in csvish_bytes(), cuts in prop::collection::vec(any::<usize>(), 0..8), semicolon in any::<bool>()) {
        let options = ReadOptions { delimiter: semicolon.then_some(b';'), ..ReadOptions::default() };
        if let Ok(t) = read_in_pieces(&bytes, &cuts, &options) {
            prop_assert!(t.n_rows > 0);
            for c in &t.columns {
                prop_assert_eq!(c.len(), t.n_rows);
            }
        }
    }

    /// Tables written by the `csv` crate read back cell for cell, in any chunking.
    #[test]
    fn written_tables_read_back_equal((names, columns) in table_cells(), cuts in prop::collection::vec(any::<usize>(), 0..10)) {
        let rows = columns[0].len();
        let mut w = csv::WriterBuilder::new().from_writer(Vec::new());
        w.write_record(&names).unwrap();
        for i in 0..rows {
            w.write_record(columns.iter().map(|c| c[i].written())).unwrap();
        }
        let bytes = w.into_inner().unwrap();
        // No missing tokens, so every cell comes back; the delimiter is given.
        let options = ReadOptions { missing_tokens: vec![], delimiter: Some(b','), ..ReadOptions::default() };
        let t = read_in_pieces(&bytes, &cuts, &options).map_err(|e| TestCaseError::fail(format!("{e}\n{}", String::from_utf8_lossy(&bytes))))?;
        prop_assert_eq!(t.n_rows, rows);
        prop_assert_eq!(t.columns.iter().map(|c| c.name.clone()).collect::<Vec<_>>(), names.clone());
        for (col, cells) in t.columns.iter().zip(&columns) {
            match &col.data {
                ColumnData::Number(v) => {
                    for (x, cell) in v.iter().zip(cells) {
                        match cell {
                            Cell::Number(y) => prop_assert_eq!(x.to_bits(), y.to_bits()),
                            Cell::Text(t) => prop_assert!(false, "text {:?} read as the number {}", t, x),
                        }
                    }
                }
                ColumnData::Category { codes, levels } => {
                    prop_assert!(cells.iter().any(|c| matches!(c, Cell::Text(_))), "an all-number column became categories");
                    for (&code, cell) in codes.iter().zip(cells) {
                        prop_assert_ne!(code, MISSING_CODE);
                        prop_assert_eq!(&levels[code as usize], &cell.written());
                    }
                }
                ColumnData::Time(_) => {
                    for (i, cell) in cells.iter().enumerate() {
                        let written = cell.written();
                        prop_assert!(nervure::timecol::parse(&written, Some(nervure::timecol::DayOrder::DayFirst)).is_ok() || nervure::timecol::parse(&written, Some(nervure::timecol::DayOrder::MonthFirst)).is_ok(), "row {}: {:?} read as time", i, written);
                    }
                }
            }
        }
    }

    /// The expression parser never panics, and its errors point inside the text, on
    /// character boundaries, so the caret line can be drawn.
    #[test]
    fn expression_parser_never_panics(text in prop_oneof![
        "[a-z0-9_ .()+*/^,<>=!&|-]{0,40}",
        "(log|sqrt|abs|min|max|hour|x|y|é|\\(|\\)|\\+|-|\\*|/|\\^|,|1|2\\.5|e3| ){0,20}",
        any::<String>(),
    ]) {
        if let Err(e) = parse_expression(&text) {
            prop_assert!(e.span.start <= e.span.end && e.span.end <= text.len(), "span {:?} outside {:?}", e.span, text);
            prop_assert!(text.is_char_boundary(e.span.start) && text.is_char_boundary(e.span.end), "span {:?} splits a character of {:?}", e.span, text);
            let shown = e.render(&text);
            prop_assert!(shown.starts_with(text.as_str()));
        }
    }

    /// The row-condition parser never panics and its errors point inside the text, on
    /// character boundaries; a condition that parses is evaluated on a table with every
    /// kind of column (numbers with a gap, text with a gap, date-times) or refused with an
    /// error that points inside the text too, never a panic, and gives one verdict per row.
    #[test]
    fn condition_parser_and_evaluation_never_panic(text in prop_oneof![
        "[a-z0-9_ .()+*/,<>=!'\"-]{0,40}",
        "(x|s|t|n|\\(|\\)|<|<=|==|!=|>=|>| and | or |not | in |'a'|'b'|\"x\"|\"s\"|'2024-01-02'|1|2\\.5|-|\\+|,|hour\\(t\\)| ){0,16}",
        any::<String>(),
    ]) {
        let check = |span: nervure::derive::parse::Span, text: &str| {
            span.start <= span.end && span.end <= text.len() && text.is_char_boundary(span.start) && text.is_char_boundary(span.end)
        };
        match parse_condition(&text) {
            Err(e) => {
                prop_assert!(check(e.span, &text), "span {:?} outside {:?}", e.span, text);
                prop_assert!(e.render(&text).starts_with(text.as_str()));
            }
            Ok(e) => match condition::verdicts(&e, &condition_table(), &Missing::default()) {
                Err(e) => prop_assert!(check(e.span, &text), "span {:?} outside {:?}", e.span, text),
                Ok(v) => prop_assert_eq!(v.len(), 4),
            },
        }
    }

    /// Any JSON value is read or refused with a message, never a panic.
    #[test]
    fn settings_reader_never_panics(value in json_value()) {
        let _ = Settings::from_value(value.clone());
        let _ = Settings::from_json(&value.to_string());
    }

    /// A valid document with one field replaced by any JSON is read or refused, never a
    /// panic; when it is read, writing and reading it again gives the same settings.
    #[test]
    fn settings_with_a_field_replaced_never_panic(s in valid_settings(), which in 0usize..13, value in json_value()) {
        let mut v: serde_json::Value = serde_json::from_str(&s.to_json()).unwrap();
        let paths: [&[&str]; 13] = [
            &["version"], &["columns"], &["scaling"], &["missing"], &["lens"], &["cover"], &["cover", "intervals"],
            &["cover", "overlap"], &["clustering"], &["edges", "minShared"], &["seed"], &["derived"], &["keepRows"],
        ];
        let mut slot = &mut v;
        for key in paths[which] {
            slot = &mut slot[*key];
        }
        *slot = value;
        if let Ok(read) = Settings::from_value(v) {
            prop_assert_eq!(Settings::from_json(&read.to_json()).unwrap(), read);
        }
    }

    /// Valid settings written as JSON read back equal.
    #[test]
    fn valid_settings_round_trip(s in valid_settings()) {
        prop_assert!(s.validate().is_ok(), "{:?}", s.validate());
        prop_assert_eq!(Settings::from_json(&s.to_json()).unwrap(), s);
    }
}

/// Four rows: numbers with a gap, text with a gap, date-times.
fn condition_table() -> Table {
    use nervure::table::Column;
    Table::from_columns(
        "c",
        vec![
            Column::number("x", vec![1.0, f64::NAN, 3.0, -2.0]),
            Column::number("n", vec![0.0, 1.0, 2.0, 3.0]),
            Column::category("s", vec![0, 1, MISSING_CODE, 0], vec!["a".into(), "b".into()]),
            Column::category("t", vec![0, 1, 2, 0], vec!["2024-01-01T10:00Z".into(), "2024-01-02".into(), "2024-01-03 08:00".into()]),
        ],
    )
    .unwrap()
}

fn json_value() -> impl Strategy<Value = serde_json::Value> {
    use serde_json::{json, Value};
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::Bool),
        any::<i64>().prop_map(|i| json!(i)),
        any::<f64>().prop_filter("JSON numbers are finite", |x| x.is_finite()).prop_map(|x| json!(x)),
        prop::sample::select(vec!["version", "columns", "kind", "dbscan", "principal", "zscore", "1", "", "a > 1", "not"]).prop_map(|s| json!(s)),
        ".{0,8}".prop_map(Value::String),
    ];
    leaf.prop_recursive(4, 40, 6, |inner| {
        let keys = prop::sample::select(vec![
            "version", "columns", "scaling", "missing", "lens", "cover", "clustering", "edges", "seed", "derived", "kind",
            "intervals", "overlap", "eps", "minPoints", "gapBins", "component", "bandwidth", "norm", "minShared",
            "fillValues", "name", "expression", "column", "other", "keepRows",
        ]);
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..5).prop_map(Value::Array),
            prop::collection::btree_map(keys.prop_map(String::from), inner, 0..8)
                .prop_map(|m| Value::Object(m.into_iter().collect())),
        ]
    })
}

fn valid_settings() -> impl Strategy<Value = Settings> {
    let lens = prop_oneof![
        "[a-z]{1,5}".prop_map(|column| Lens::Column { column }),
        (1usize..6).prop_map(|component| Lens::Principal { component }),
        prop::option::of(0.01f64..5.0).prop_map(|bandwidth| Lens::Density { bandwidth }),
        prop::sample::select(vec![Spread::Mean, Spread::Rms, Spread::Max]).prop_map(|norm| Lens::Eccentricity { norm }),
        (1usize..20).prop_map(|k| Lens::DistanceToMeasure { k }),
        (1usize..20).prop_map(|k| Lens::NeighbourDistance { k }),
        Just(Lens::LInfinityCentrality),
    ];
    let clustering = prop_oneof![
        (1e-6f64..100.0, 1usize..50).prop_map(|(eps, min_points)| Clustering::Dbscan { eps, min_points }),
        (2usize..100).prop_map(|gap_bins| Clustering::SingleLinkage { gap_bins }),
    ];
    (
        prop::collection::vec("[a-z]{1,6}", 1..5),
        prop::sample::select(vec![Scaling::None, Scaling::Zscore, Scaling::MinMax]),
        prop::collection::vec(-1e5f64..1e5, 0..3),
        lens,
        (1usize..10_001, 0.0f64..0.999),
        clustering,
        1usize..10,
        any::<u64>(),
        prop::option::of(prop::sample::select(vec!["a > 1", "s in ('x', \"y\") and not (b != 2.5)", "hour(t) >= 6 or t < '2013-06-01'"])),
    )
        .prop_map(|(columns, scaling, fill_values, lens, (intervals, overlap), clustering, min_shared, seed, keep)| Settings {
            version: SETTINGS_VERSION,
            columns,
            scaling,
            missing: Missing { fill_values, ..Missing::default() },
            lens,
            cover: CoverSettings::uniform(intervals, overlap),
            clustering,
            edges: EdgeRule { min_shared },
            seed,
            derived: Vec::new(),
            lens2: None,
            cover2: None,
            denoise: None,
            min_cluster_share: 0.0,
            keep_rows: keep.map(String::from),
        })
}

// ---------------------------------------------------------------- cases found

/// Found by `valid_settings_round_trip`: serde_json's default float parser read
/// 0.9308617255483492 back as 0.9308617255483491 (one unit in the last place), so a saved
/// settings file did not rebuild the same cover. Fixed by its `float_roundtrip` feature.
#[test]
fn overlap_reads_back_bit_for_bit() {
    let text = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"column","column":"a"},
        "cover":{"intervals":1,"overlap":0.9308617255483492},"clustering":{"kind":"dbscan","eps":1e-6,"minPoints":1}}"#;
    let s = Settings::from_json(text).unwrap();
    assert_eq!(s.cover.overlap.to_bits(), 0.9308617255483492f64.to_bits());
    assert_eq!(Settings::from_json(&s.to_json()).unwrap(), s);
}
