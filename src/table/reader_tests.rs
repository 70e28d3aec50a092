//! Tests of [`super::TableReader`] as a whole: parsing against Python's `csv` module,
//! chunk boundaries, delimiter detection, header rules, errors, and a throughput measure.
//!
//! Sources: "RFC 4180 s2 rN" is RFC 4180 section 2, rule N; "fixture" is
//! tests/reference/fixtures/csv_cases.json written by tests/reference/csv_cases.py with
//! Python's standard-library `csv` module; "project rule" is a convention stated in the doc
//! comments of `reader.rs` / `cells.rs` (no outside source).

use super::{Column, ColumnData, ReadOptions, ReadReport, Table, TableReader, MISSING_CODE};
use crate::error::Error;

fn read_with(bytes: &[u8], options: &ReadOptions) -> Result<(Table, ReadReport), Error> {
    let mut r = TableReader::new("t.csv", options.clone());
    r.push(bytes)?;
    r.finish_with_report()
}

fn read(bytes: &[u8]) -> (Table, ReadReport) {
    read_with(bytes, &ReadOptions::default()).unwrap_or_else(|e| panic!("{e}"))
}

fn read_chunked(bytes: &[u8], size: usize, options: &ReadOptions) -> Result<(Table, ReadReport), Error> {
    let mut r = TableReader::new("t.csv", options.clone());
    for chunk in bytes.chunks(size) {
        r.push(chunk)?;
    }
    r.finish_with_report()
}

fn error_of(bytes: &[u8]) -> String {
    match read_with(bytes, &ReadOptions::default()) {
        Err(Error::Input(m)) => m,
        other => panic!("expected an input error, got {other:?}"),
    }
}

/// Equality that counts two NaNs as equal (a table's `PartialEq` does not).
fn assert_same_table(a: &Table, b: &Table, what: &str) {
    assert_eq!((a.n_rows, a.delimiter, a.columns.len()), (b.n_rows, b.delimiter, b.columns.len()), "{what}");
    for (x, y) in a.columns.iter().zip(&b.columns) {
        assert_eq!((&x.name, &x.first_text), (&y.name, &y.first_text), "{what}");
        match (&x.data, &y.data) {
            (ColumnData::Number(u), ColumnData::Number(v)) => {
                let bits = |w: &[f64]| w.iter().map(|f| if f.is_nan() { u64::MAX } else { f.to_bits() }).collect::<Vec<_>>();
                assert_eq!(bits(u), bits(v), "{what}: column {}", x.name);
            }
            _ => assert_eq!(x.data, y.data, "{what}: column {}", x.name),
        }
    }
}

fn numbers<'a>(t: &'a Table, name: &str) -> &'a [f64] {
    t.column(name).and_then(Column::as_numbers).unwrap_or_else(|| panic!("no number column {name}"))
}

fn texts(t: &Table, name: &str) -> Vec<Option<String>> {
    match &t.column(name).unwrap().data {
        ColumnData::Category { codes, levels } => codes
            .iter()
            .map(|&c| (c != MISSING_CODE).then(|| levels[c as usize].clone()))
            .collect(),
        other => panic!("column {name} is not a category: {other:?}"),
    }
}

// ---------------------------------------------------------------- reference parses

/// Every fixture case, read by this reader, gives the cells Python's `csv` module gives
/// (after this reader's trimming), as numbers where the text is a number and as level
/// texts otherwise. Missing tokens are turned off so no cell is dropped.
#[test]
fn matches_python_csv_module() {
    let fixture: serde_json::Value =
        serde_json::from_str(include_str!("../../tests/reference/fixtures/csv_cases.json")).unwrap();
    let options = ReadOptions { missing_tokens: vec![], delimiter: Some(b','), ..ReadOptions::default() };
    let trim = |s: &str| s.trim_matches([' ', '\t']).to_string();
    let cases = fixture["cases"].as_array().unwrap();
    assert!(cases.len() >= 15);
    for case in cases {
        let name = case["name"].as_str().unwrap();
        let text = case["text"].as_str().unwrap();
        if case["ends_inside_quotes"].as_bool().unwrap() {
            let e = read_with(text.as_bytes(), &options).unwrap_err().to_string();
            assert!(e.contains("never ends"), "{name}: {e}");
            continue;
        }
        let rows: Vec<Vec<String>> = serde_json::from_value(case["rows"].clone()).unwrap();
        for size in [usize::MAX, 1, 2, 3] {
            let (t, _) = read_chunked(text.as_bytes(), size.min(text.len()), &options)
                .unwrap_or_else(|e| panic!("{name}: {e}"));
            assert_eq!(t.n_rows, rows.len() - 1, "{name}");
            for (j, header) in rows[0].iter().enumerate() {
                let col = &t.columns[j];
                assert_eq!(col.name, trim(header), "{name}");
                let expected: Vec<String> = rows[1..].iter().map(|r| trim(&r[j])).collect();
                match &col.data {
                    ColumnData::Number(v) => {
                        for (x, e) in v.iter().zip(&expected) {
                            assert_eq!(Some(*x), e.parse::<f64>().ok(), "{name}: column {j}, cell {e:?}");
                        }
                    }
                    ColumnData::Category { .. } => {
                        let got: Vec<String> = texts(&t, &col.name).into_iter().map(Option::unwrap).collect();
                        assert_eq!(got, expected, "{name}: column {j}");
                        assert!(expected.iter().any(|e| e.parse::<f64>().is_err()), "{name}: column {j}");
                    }
                    ColumnData::Time(_) => {
                        for e in expected.iter().filter(|e| !e.is_empty()) {
                            assert!(crate::timecol::parse(e, Some(crate::timecol::DayOrder::DayFirst)).is_ok(), "{name}: column {j} read as time, but {e:?} is no date-time");
                        }
                    }
                }
            }
        }
    }
}

// ---------------------------------------------------------------- chunk boundaries

fn corpus() -> Vec<(&'static str, Vec<u8>)> {
    let mut big = String::from("id,x,y,label\n");
    let mut rng = crate::rng::SplitMix64::new(11);
    for i in 0..600 {
        let label = ["alpha", "bêta", "\"quoted, with comma\"", "NA", "日本"][rng.below(5)];
        big.push_str(&format!("{i},{:.5},{},{label}\r\n", rng.normal(), rng.below(1000) as f64 / 8.0));
    }
    vec![
        (
            "crlf, quotes, utf-8, bom",
            "\u{feff}name,score,note\r\n\"Zoë, the \"\"first\"\"\",1.5,\"two\r\nlines\"\r\nÅsa,NA,é\r\n\r\n東京,2e3,\"\"\r\n"
                .as_bytes()
                .to_vec(),
        ),
        ("semicolon, late category", b"a;b\n1;2\n3;4\n5;x\n\n6;\"y;z\"".to_vec()),
        ("tab, no final newline", b"p\tq\n+1\tinf\n-2\t\"3\"\n".to_vec()),
        ("more than 8 KiB", big.into_bytes()),
    ]
}

/// Chunk boundaries anywhere (inside quotes, a CRLF, a UTF-8 character, the BOM) change
/// nothing: every chunk size from 1 to 17 bytes gives the table of a single push.
#[test]
fn chunk_boundaries_do_not_matter() {
    for (what, bytes) in corpus() {
        let (whole, report) = read(&bytes);
        for size in 1..=17 {
            let (t, r) = read_chunked(&bytes, size, &ReadOptions::default()).unwrap_or_else(|e| panic!("{what}: {e}"));
            assert_same_table(&whole, &t, &format!("{what}, chunks of {size}"));
            assert_eq!(report, r, "{what}, chunks of {size}");
        }
    }
}

/// Lines split as plain lines give the table `csv-core` gives: a file that mixes plain
/// lines with quoted ones, CRLF, LF and lone CR line ends, blank lines, lines of spaces,
/// empty fields and a last line without a line end, read both ways at every chunk size
/// from 1 to 40 bytes and whole (`csv-core`'s state machine is the reference here).
#[test]
fn plain_lines_read_as_csv_core_reads_them() {
    let mut rng = crate::rng::SplitMix64::new(5);
    let mut text = String::from("id,x,note\n");
    let ends = ["\n", "\r\n", "\r", "\n\n", "\r\n\r\n", "\n  \n", "\n\r\n"];
    let notes = ["plain", "\"quoted, comma\"", "\"two\r\nlines\"", "", " spaced ", "a\"b", "\"\""];
    for i in 0..400 {
        let x = if rng.below(6) == 0 { String::new() } else { format!("{:.3}", rng.normal()) };
        text.push_str(&format!("{i},{x},{}{}", notes[rng.below(notes.len())], ends[rng.below(ends.len())]));
    }
    text.push_str("400,1.5,last");
    let bytes = text.as_bytes();
    let by_core = |size: usize| {
        let mut r = TableReader::new("t.csv", ReadOptions::default()).csv_core_only();
        for chunk in bytes.chunks(size) {
            r.push(chunk).unwrap();
        }
        r.finish_with_report().unwrap()
    };
    let (reference, report) = by_core(bytes.len());
    assert_eq!(reference.n_rows, 401);
    for size in (1..=40).chain([bytes.len()]) {
        assert_same_table(&reference, &by_core(size).0, &format!("csv-core only, chunks of {size}"));
        let (t, r) = read_chunked(bytes, size, &ReadOptions::default()).unwrap();
        assert_same_table(&reference, &t, &format!("chunks of {size}"));
        assert_eq!(report, r, "chunks of {size}");
    }
}

/// Lines typed as they are split (numbers read where they stand) give the table
/// `csv-core` gives, cell for cell and with the same report: a seeded file whose cells mix
/// plain numbers with those the fast parser gives back (20 digits, exponents of 5 digits,
/// a bare sign or exponent, spaces around, trailing letters, infinite values, decimal
/// commas), missing tokens, text that turns a number column into categories part-way,
/// Windows-1252 bytes, quoted cells, CRLF and blank lines; with comma and semicolon
/// delimiters, with a missing token that reads as a number, with text read as missing
/// (number columns that meet every kind of cell), and with the file's size
/// given (too small, exact and too large: room in the columns changes no value). Read
/// whole and at chunk sizes 1 to 40 (`csv-core`'s state machine is the reference).
#[test]
fn typed_lines_read_as_csv_core_reads_them() {
    let cells = [
        "1.5", "-0.25", "+3", "42", "7e3", "2.5E-4", "1.", ".5", "0", "-0", "12345678901234567890", "1e99999", "1e", "-",
        "+.", " 4.5", "4.5 ", "4.5x", "inf", "-1e999", "NA", "", "NaN", "1,5", "-9999", "x", "caf\u{e9}", "\"6\"",
        "\"a,b\"", "9007199254740993", "3e-23",
    ];
    // Cells that keep a column numeric (numbers, missing or infinite), for column a.
    let numeric = ["12345678901234567890", "1e99999", "9007199254740993", "3e-23", " 4.5", "4.5 ", "inf", "", "NA", "-9999", "+3", "1.", ".5", "-0"];
    let configurations = [
        (",", vec!["", "NA"], vec![]),
        (";", vec!["", "NA"], vec![]),
        (",", vec!["", "NA", "-9999"], vec![]),
        // Text read as missing keeps c and d numeric while every kind of cell arrives.
        (",", vec!["", "NA"], vec!["c", "d"]),
        (";", vec!["", "NA"], vec!["c", "d"]),
    ];
    for (delimiter, missing, as_missing) in configurations {
        let mut rng = crate::rng::SplitMix64::new(11);
        let mut text = format!("a{d}b{d}c{d}d\n", d = delimiter);
        for row in 0..600 {
            let ncols = 4;
            for k in 0..ncols {
                if k > 0 {
                    text.push_str(delimiter);
                }
                // Columns a and b mostly plain numbers; b meets text only near the end; c and d anything.
                let cell = match k {
                    0 | 1 if rng.below(8) != 0 => format!("{:.3}", rng.normal() * 50.0),
                    0 => numeric[rng.below(numeric.len())].to_string(),
                    1 if row < 500 => "2".to_string(),
                    _ => cells[rng.below(cells.len())].to_string(),
                };
                // A decimal comma is a cell of its own only where commas do not separate.
                text.push_str(if delimiter == "," && cell == "1,5" { "1.5" } else { &cell });
            }
            text.push_str(["\n", "\n", "\n", "\r\n", "\n\n"][rng.below(5)]);
        }
        let mut bytes = text.into_bytes();
        // A Windows-1252 byte in a cell (é), not valid UTF-8.
        let at = bytes.windows(4).position(|w| w == b"caf\xC3").unwrap_or(0);
        if at > 0 {
            bytes.remove(at + 4);
            bytes[at + 3] = 0xE9;
        }
        let options = ReadOptions {
            missing_tokens: missing.iter().map(|t| t.to_string()).collect(),
            text_as_missing: as_missing.iter().map(|t| t.to_string()).collect(),
            ..ReadOptions::default()
        };
        let read = |size: usize, how: &str, expect: u64| {
            let mut r = TableReader::new("t.csv", options.clone());
            r = match how {
                "core" => r.csv_core_only(),
                "untyped" => r.untyped_lines(),
                _ => r,
            };
            r.expect_bytes(expect);
            for chunk in bytes.chunks(size) {
                r.push(chunk).unwrap();
            }
            r.finish_with_report().unwrap()
        };
        let (reference, report) = read(bytes.len(), "core", 0);
        assert_eq!(reference.n_rows, 600);
        assert!(reference.column("a").unwrap().as_numbers().is_some(), "a stays numeric");
        assert!(reference.column("b").unwrap().first_text.is_some(), "b turns into categories part-way");
        let n = bytes.len() as u64;
        for size in (1..=40).chain([4096, bytes.len()]) {
            for (how, expect) in [("typed", 0), ("typed", n / 3), ("typed", n), ("typed", 5 * n), ("untyped", n)] {
                let what = format!("delimiter {delimiter:?}, missing {missing:?}, text as missing {as_missing:?}, {how} lines, size {expect}, chunks of {size}");
                let (t, r) = read(size, how, expect);
                assert_same_table(&reference, &t, &what);
                assert_eq!(report, r, "{what}");
            }
        }
    }
}

/// A table of one column: empty lines (LF and CRLF) are skipped, as `csv-core` skips
/// them, while a line of spaces is a row with an empty cell (project rule: blank lines
/// are skipped only when the table has more than one column); typed lines, untyped lines
/// and `csv-core` alone agree at every chunk size.
#[test]
fn one_column_tables_read_alike_every_way() {
    let bytes = b"x\n1\n\n2\r\n\r\n3\n  \n4.5\r\nNA\n\n5";
    let read = |size: usize, how: &str| {
        let mut r = TableReader::new("t.csv", ReadOptions::default());
        r = match how {
            "core" => r.csv_core_only(),
            "untyped" => r.untyped_lines(),
            _ => r,
        };
        for chunk in bytes.chunks(size) {
            r.push(chunk).unwrap();
        }
        r.finish_with_report().unwrap()
    };
    let (reference, report) = read(bytes.len(), "core");
    let x = numbers(&reference, "x");
    assert_eq!(x.len(), 7, "{x:?}");
    assert_eq!((x[0], x[1], x[2], x[4], x[6]), (1.0, 2.0, 3.0, 4.5, 5.0));
    assert!(x[3].is_nan() && x[5].is_nan(), "a line of spaces and NA are missing cells");
    for size in 1..=bytes.len() {
        for how in ["typed", "untyped"] {
            let (t, r) = read(size, how);
            assert_same_table(&reference, &t, &format!("{how}, chunks of {size}"));
            assert_eq!(report, r, "{how}, chunks of {size}");
        }
    }
}

/// Given the file's size, the number columns are sized for the rows it holds: a little
/// more than needed, not twice as much (project rule, see `Body::plan_room`).
#[test]
fn expected_size_gives_columns_their_room() {
    let mut text = String::from("x,y\n");
    for i in 0..100_000 {
        text.push_str(&format!("{i:06},{}\n", i % 7));
    }
    let mut r = TableReader::new("t.csv", ReadOptions::default());
    r.expect_bytes(text.len() as u64);
    for chunk in text.as_bytes().chunks(1 << 16) {
        r.push(chunk).unwrap();
    }
    let t = r.finish().unwrap();
    let ColumnData::Number(x) = &t.column("x").unwrap().data else { panic!("x is numeric") };
    assert_eq!(x.len(), 100_000);
    // Growing by doubling would end at 131 072.
    assert!(x.capacity() < 110_000, "capacity {} for 100 000 rows", x.capacity());
}

#[test]
fn corpus_tables_hold_the_expected_cells() {
    let c = corpus();
    // RFC 4180 s2 r6-r7 (quoted comma, doubled quotes, line break inside quotes); the BOM is dropped.
    let (t, _) = read(&c[0].1);
    assert_eq!(t.columns.iter().map(|c| c.name.as_str()).collect::<Vec<_>>(), ["name", "score", "note"]);
    assert_eq!(
        texts(&t, "name"),
        [Some("Zoë, the \"first\"".into()), Some("Åsa".into()), Some("東京".into())]
    );
    let s = numbers(&t, "score");
    assert_eq!((s[0], s[2]), (1.5, 2000.0));
    assert!(s[1].is_nan());
    assert_eq!(texts(&t, "note"), [Some("two\r\nlines".into()), Some("é".into()), None]);

    // Detected semicolon; column b turns into categories at data row 3 (project rule).
    let (t, r) = read(&c[1].1);
    assert_eq!((t.delimiter, r.delimiter, t.n_rows), (b';', b';', 4));
    assert_eq!(numbers(&t, "a"), [1.0, 3.0, 5.0, 6.0]);
    assert_eq!(t.column("b").unwrap().first_text, Some((3, "x".to_string())));
    assert_eq!(texts(&t, "b"), [Some("2".into()), Some("4".into()), Some("x".into()), Some("y;z".into())]);

    // Tab; "+1" is a number, "inf" is stored as missing and counted.
    let (t, r) = read(&c[2].1);
    assert_eq!(t.delimiter, b'\t');
    assert_eq!(numbers(&t, "p"), [1.0, -2.0]);
    assert!(numbers(&t, "q")[0].is_nan());
    assert_eq!(numbers(&t, "q")[1], 3.0);
    assert_eq!(r.non_finite_per_column, [0, 1]);

    let (t, r) = read(&c[3].1);
    assert_eq!((t.n_rows, r.rows, r.bytes), (600, 600, c[3].1.len() as u64));
    assert_eq!(numbers(&t, "id")[599], 599.0);
}

// ---------------------------------------------------------------- header rules

#[test]
fn header_names_are_trimmed_and_blanks_named_by_position() {
    // Project rule: empty header cells are named "column N", N counted from 1.
    let (t, _) = read(b" x , ,\"y\",\n1,2,3,4\n");
    let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["x", "column 2", "y", "column 4"]);
}

#[test]
fn duplicate_names_are_refused_naming_both_positions() {
    let e = error_of(b"a,b,a\n1,2,3\n");
    assert!(e.contains("columns 1 and 3 are both named 'a'"), "{e}");
    // A generated name can collide with a given one.
    let e = error_of(b"column 2,,x\n1,2,3\n");
    assert!(e.contains("columns 1 and 2 are both named 'column 2'"), "{e}");
}

// ---------------------------------------------------------------- line handling

#[test]
fn blank_lines_are_skipped_and_do_not_count_as_rows() {
    // Project rule (also what Python's csv module yields as empty rows, see fixture "blank lines").
    let (t, _) = read(b"\n\na,b\n1,2\n\n  \t \n3,x\n\n\n");
    assert_eq!(t.n_rows, 2);
    assert_eq!(numbers(&t, "a"), [1.0, 3.0]);
    assert_eq!(t.column("b").unwrap().first_text, Some((2, "x".to_string())));
}

#[test]
fn single_column_keeps_whitespace_lines_as_missing() {
    // Project rule: with one column a line of spaces is a cell, and an empty cell is missing.
    let (t, _) = read(b"a\n1\n  \n\"\"\n2\n\n");
    let v = numbers(&t, "a");
    assert_eq!(v.len(), 4);
    assert_eq!((v[0], v[3]), (1.0, 2.0));
    assert!(v[1].is_nan() && v[2].is_nan());
}

#[test]
fn last_line_may_lack_a_line_break() {
    // RFC 4180 s2 r2.
    let (t, _) = read(b"a,b\r\n1,\"x\"");
    assert_eq!(t.n_rows, 1);
    assert_eq!(texts(&t, "b"), [Some("x".into())]);
}

#[test]
fn lone_cr_ends_lines() {
    // Common practice (old Mac files); Python's csv module agrees (fixture "cr only").
    let (t, _) = read(b"a,b\r1,2\r3,4\r");
    assert_eq!(numbers(&t, "b"), [2.0, 4.0]);
}

// ---------------------------------------------------------------- options

#[test]
fn given_delimiter_is_used_as_is() {
    let opts = ReadOptions { delimiter: Some(b','), ..ReadOptions::default() };
    let (t, _) = read_with(b"a;b\n1;2\n", &opts).unwrap();
    assert_eq!(t.columns.len(), 1);
    assert_eq!(t.columns[0].name, "a;b");
    let opts = ReadOptions { delimiter: Some(b'|'), ..ReadOptions::default() };
    let (t, r) = read_with(b"a|b\n1|2\n", &opts).unwrap();
    assert_eq!((t.columns.len(), r.delimiter), (2, b'|'));
    let opts = ReadOptions { delimiter: Some(b'"'), ..ReadOptions::default() };
    match read_with(b"a,b\n1,2\n", &opts) {
        Err(Error::Settings { field, message }) => {
            assert_eq!(field, "delimiter");
            assert!(message.contains("quote"), "{message}");
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn decimal_commas_with_semicolons_read_as_numbers_and_say_so() {
    // Project rule (cells.rs): with ';' between fields, "1,5" is one and a half.
    let (t, r) = read(b"x;y;z\n1,5;2;a\n2,25;3;b\n-0,5;4,0e1;c\n");
    assert_eq!(t.delimiter, b';');
    assert_eq!(numbers(&t, "x"), [1.5, 2.25, -0.5]);
    assert_eq!(numbers(&t, "y"), [2.0, 3.0, 40.0]);
    assert!(r.notices.iter().any(|n| n.contains("decimal comma") && n.contains("'x' (3)") && n.contains("'y' (1)")), "{:?}", r.notices);
    // With commas between fields a comma cannot be a decimal point: "1,5" stays two fields.
    let (t, r) = read(b"x,y\n1,5\n2,6\n");
    assert_eq!(numbers(&t, "x"), [1.0, 2.0]);
    assert!(r.notices.is_empty(), "{:?}", r.notices);
    // A thousands point with a decimal comma (1.234,5) is not read as a number: text.
    let (t, _) = read(b"x;y\n1.234,5;1\n2;2\n");
    assert_eq!(texts(&t, "x"), [Some("1.234,5".into()), Some("2".into())]);
}

#[test]
fn custom_missing_tokens() {
    let opts = ReadOptions { missing_tokens: vec!["-".into(), " ? ".into()], delimiter: None, ..ReadOptions::default() };
    let (t, _) = read_with(b"a,b\n-,1\n?,2\n3,\n", &opts).unwrap();
    let a = numbers(&t, "a");
    assert!(a[0].is_nan() && a[1].is_nan());
    assert_eq!(a[2], 3.0);
    // "" is no longer missing: an empty cell is text.
    assert_eq!(texts(&t, "b"), [Some("1".into()), Some("2".into()), Some("".into())]);
    assert_eq!(t.column("b").unwrap().first_text, Some((3, String::new())));
}

#[test]
fn infinite_values_are_missing_and_counted() {
    let (t, r) = read(b"a,b\n1,inf\n2,-1e999\n3,4\n4,+Infinity\n");
    let b = numbers(&t, "b");
    assert!(b[0].is_nan() && b[1].is_nan() && b[3].is_nan());
    assert_eq!(b[2], 4.0);
    assert_eq!(r.non_finite_per_column, [0, 3]);
}

#[test]
fn a_long_header_line_still_sets_the_delimiter() {
    // Over 64 KiB before the first line end: the sniffer decides from the unfinished line.
    let names: Vec<String> = (0..12_000).map(|i| format!("c{i}")).collect();
    let text = format!("{}\n{}\n", names.join(";"), vec!["1"; 12_000].join(";"));
    assert!(text.find('\n').unwrap() > super::sniff::MAX_BYTES);
    for size in [1000, 65_537, text.len()] {
        let (t, _) = read_chunked(text.as_bytes(), size, &ReadOptions::default()).unwrap();
        assert_eq!((t.delimiter, t.columns.len(), t.n_rows), (b';', 12_000, 1));
    }
}

// ---------------------------------------------------------------- errors

#[test]
fn empty_files() {
    for bytes in [&b""[..], b"\xEF\xBB\xBF", b"\n\r\n\n", b"   \n\n"] {
        let e = error_of(bytes);
        assert!(e.contains("the file is empty"), "{bytes:?}: {e}");
    }
}

#[test]
fn header_without_rows() {
    let e = error_of(b"a,b\n\n\n");
    assert!(e.contains("header row (columns a, b) but no data rows"), "{e}");
}

#[test]
fn ragged_row_names_row_counts_and_columns() {
    let mut text = String::from("a,b,c,d,e,f\n");
    for i in 0..16 {
        text.push_str(&format!("{i},1,2,3,4,5\n"));
        if i == 7 {
            text.push('\n'); // blank lines do not count
        }
    }
    text.push_str("16,1,2,3,4\n17,1,2,3,4,5\n");
    for size in [1, 7, text.len()] {
        let e = read_chunked(text.as_bytes(), size, &ReadOptions::default()).unwrap_err().to_string();
        assert!(e.starts_with("t.csv: data row 17 has 5 fields but the header has 6 (columns a, b, c, d, e, f)"), "{e}");
        assert!(e.contains("comma"), "{e}");
    }
    let e = error_of(b"a,b\n1,2,3\n");
    assert!(e.contains("data row 1 has 3 fields but the header has 2"), "{e}");
}

#[test]
fn unclosed_quote_names_the_row_where_it_starts() {
    let text = b"a,b\n1,2\n3,4\n\"open,5\n6,7\n8,9\n";
    for size in 1..=17 {
        let e = read_chunked(text, size, &ReadOptions::default()).unwrap_err().to_string();
        assert!(e.contains("a quoted field that starts on data row 3 never ends"), "chunks of {size}: {e}");
    }
    // Past the first 8 KiB the reader streams: the quote state must survive chunk ends.
    let mut long = b"a,b\n".to_vec();
    long.extend(std::iter::repeat(&b"1,2\n"[..]).take(3000).flatten());
    long.extend(b"3,\"open\n4,5\n");
    for size in [1, 2, 5, 13, 4096, long.len()] {
        let e = read_chunked(&long, size, &ReadOptions::default()).unwrap_err().to_string();
        assert!(e.contains("starts on data row 3001 never ends"), "chunks of {size}: {e}");
    }
    let e = error_of(b"a,\"b\n1,2\n");
    assert!(e.contains("starts on the header row never ends"), "{e}");
    // A closed quote at the very end is fine, and so is a doubled quote before it.
    for ok in [&b"a,b\n1,\"x\""[..], b"a,b\n1,\"x\"\"\"", b"a,b\n1,\"\""] {
        read_with(ok, &ReadOptions::default()).unwrap_or_else(|e| panic!("{ok:?}: {e}"));
    }
}

#[test]
fn latin1_cells_are_decoded_and_the_first_is_named() {
    // Windows-1252 bytes: 0xE9 is é, 0xB0 is °, 0x80 is € (WHATWG index-windows-1252).
    let text = b"temp\xE9rature (\xB0C);d\xE9bit\n12,5;caf\xE9\n13;\x80\n";
    for size in [1, 3, text.len()] {
        let (t, r) = read_chunked(text, size, &ReadOptions::default()).unwrap();
        assert_eq!(t.columns[0].name, "température (°C)");
        assert_eq!(t.columns[1].name, "débit");
        assert_eq!(numbers(&t, "température (°C)"), [12.5, 13.0]);
        assert_eq!(texts(&t, "débit"), [Some("café".into()), Some("€".into())]);
        let n = r.notices.iter().find(|n| n.contains("Latin-1")).unwrap_or_else(|| panic!("{:?}", r.notices));
        assert!(n.starts_with("read as Latin-1 (Windows-1252): 4 cells were not valid UTF-8, the first in the header row (column 1)"), "{n}");
    }
    let (_, r) = read(b"a,b\n1,x\n2,caf\xE9\n");
    assert!(r.notices[0].contains("1 cell was not valid UTF-8, the first in data row 2, column 'b'"), "{:?}", r.notices);
    // Valid UTF-8 gives no notice.
    let (t, r) = read("a,b\n1,café\n".as_bytes());
    assert_eq!(texts(&t, "b"), [Some("café".into())]);
    assert!(r.notices.is_empty());
}

#[test]
fn utf16_files_are_decoded_and_binary_files_refused() {
    let text = "x;étiquette\r\n1,5;a\r\n2,5;b\r\n";
    let le: Vec<u8> = [0xFF, 0xFE].into_iter().chain(text.encode_utf16().flat_map(u16::to_le_bytes)).collect();
    let be: Vec<u8> = [0xFE, 0xFF].into_iter().chain(text.encode_utf16().flat_map(u16::to_be_bytes)).collect();
    let le_bare: Vec<u8> = text.encode_utf16().flat_map(u16::to_le_bytes).collect();
    for (bytes, what) in [(&le, "little-endian"), (&be, "big-endian"), (&le_bare, "little-endian")] {
        for size in [1, 3, 8, bytes.len()] {
            let (t, r) = read_chunked(bytes, size, &ReadOptions::default()).unwrap_or_else(|e| panic!("{what}: {e}"));
            assert_eq!(t.columns[1].name, "étiquette");
            assert_eq!(numbers(&t, "x"), [1.5, 2.5], "{what}, chunks of {size}");
            assert_eq!(texts(&t, "étiquette"), [Some("a".into()), Some("b".into())]);
            assert!(r.encoding.ends_with(what) && r.notices[0].contains(what), "{:?}", r.notices);
        }
    }
    // A long UTF-16 file streams past the first 8 KiB.
    let mut long = String::from("a,b\n");
    for i in 0..5000 {
        long.push_str(&format!("{i},{}\n", i % 7));
    }
    let bytes: Vec<u8> = [0xFF, 0xFE].into_iter().chain(long.encode_utf16().flat_map(u16::to_le_bytes)).collect();
    let (t, _) = read_chunked(&bytes, 4097, &ReadOptions::default()).unwrap();
    assert_eq!(t.n_rows, 5000);
    assert_eq!(numbers(&t, "a")[4999], 4999.0);
    let e = error_of(b"a,b\n1,\0\x01\x02\n");
    assert!(e.contains("this looks like a binary file, not text"), "{e}");
    let e = error_of(b"\x89PNG\r\n\x1a\n\0\0\0\rIHDR\0\0\x01\0\0\0\x01\x08\x06\0\0\0\x1f\x15\xc4\x89");
    assert!(e.contains("binary file"), "{e}");
}

#[test]
fn text_in_a_numeric_column_is_named_or_read_as_missing_on_request() {
    let text = b"a,b\n1,2\n2,oops\n3,4\n4,n/a?\n";
    let (t, r) = read(text);
    // By default the column becomes categories and says why (project rule, cells.rs).
    assert_eq!(t.column("b").unwrap().first_text, Some((2, "oops".into())));
    assert!(r.notices.is_empty());
    let e = t.numbers("b", "columns").unwrap_err().to_string();
    assert_eq!(e, "setting 'columns': column 'b' holds categories, not numbers (data row 2 holds 'oops')");
    let opts = ReadOptions { text_as_missing: vec!["b".into()], ..ReadOptions::default() };
    let (t, r) = read_with(text, &opts).unwrap();
    let b = numbers(&t, "b");
    assert_eq!((b[0], b[2]), (2.0, 4.0));
    assert!(b[1].is_nan() && b[3].is_nan());
    assert_eq!(r.notices, ["column 'b': 2 text values read as missing, as asked (the first: data row 2, 'oops')"]);
}

#[test]
fn unnamed_columns_are_named_by_position_and_said() {
    let (t, r) = read(b"a,,c, \n1,2,3,4\n");
    let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["a", "column 2", "c", "column 4"]);
    assert_eq!(r.notices, ["columns 2, 4 have no name in the header row; called 'column N' by position"]);
}

#[test]
fn infinities_and_overflow_are_counted_in_a_notice() {
    let (_, r) = read(b"a,b\n1,inf\n2,1e999\n3,-1e400\n");
    assert_eq!(r.non_finite_per_column, [0, 3]);
    assert_eq!(r.notices, ["column 'b': 3 infinite or too-large values (such as inf or 1e999) read as missing"]);
}

#[test]
fn errors_stick() {
    let mut r = TableReader::new("t.csv", ReadOptions::default());
    let mut text = b"a,b\n".to_vec();
    text.extend(std::iter::repeat(&b"1,2\n"[..]).take(3000).flatten());
    text.extend(b"1,2,3\n");
    let first = r.push(&text).unwrap_err();
    assert_eq!(r.push(b"4,5\n").unwrap_err(), first);
    assert_eq!(r.finish().unwrap_err(), first);
}

// ---------------------------------------------------------------- progress

#[test]
fn rows_read_reports_progress() {
    let mut text = String::from("x,y\n");
    for i in 0..5000 {
        text.push_str(&format!("{i},{}\n", i * 2));
    }
    let mut r = TableReader::new("t.csv", ReadOptions::default());
    let mut last = 0;
    let mut moved = 0;
    for chunk in text.as_bytes().chunks(4096) {
        r.push(chunk).unwrap();
        assert!(r.rows_read() >= last);
        if r.rows_read() > last {
            moved += 1;
        }
        last = r.rows_read();
    }
    assert!(moved > 5, "progress moved only {moved} times");
    assert_eq!(r.bytes_seen(), text.len() as u64);
    let t = r.finish().unwrap();
    assert_eq!(t.n_rows, 5000);
    assert_eq!(numbers(&t, "y")[4999], 9998.0);
}

// ---------------------------------------------------------------- throughput

/// About 100 MB of numeric CSV, 8 columns: `shortest` writes 2 of them with Rust's `{}`
/// (up to 17 significant digits, beyond the parser's fast path), the others with 4 decimals
/// or as integers; otherwise all columns have 4 decimals.
fn numeric_text(shortest: bool) -> String {
    let mut rng = crate::rng::SplitMix64::new(3);
    let mut text = String::from("a,b,c,d,e,f,g,h\n");
    while text.len() < 100_000_000 {
        for k in 0..8 {
            let x = rng.normal() * 100.0;
            if k > 0 {
                text.push(',');
            }
            match k {
                0 if shortest => text.push_str(&format!("{}", (x * 10.0) as i64)),
                6 | 7 if shortest => text.push_str(&format!("{x}")),
                _ => text.push_str(&format!("{x:.4}")),
            }
        }
        text.push('\n');
    }
    text
}

fn mb_per_s(bytes: usize, start: std::time::Instant) -> f64 {
    bytes as f64 / 1e6 / start.elapsed().as_secs_f64()
}

/// Throughput, pushed in 1 MiB chunks, with two baselines on the same text: `csv-core` alone
/// and `f64::from_str` alone. Run with
/// `cargo test --release --lib table::reader_tests::throughput -- --ignored --nocapture`.
#[test]
#[ignore]
fn throughput() {
    // Best of three runs of each: the machine may be shared.
    fn best<T>(bytes: usize, mut f: impl FnMut() -> T) -> (f64, T) {
        let mut rate = 0.0f64;
        let mut out = None;
        for _ in 0..3 {
            let start = std::time::Instant::now();
            let r = f();
            rate = rate.max(mb_per_s(bytes, start));
            out = Some(r);
        }
        (rate, out.unwrap())
    }
    for shortest in [false, true] {
        let text = numeric_text(shortest);
        let (core_rate, fields) = best(text.len(), || {
            let mut core = csv_core::Reader::new();
            let (mut out, mut ends, mut input, mut fields) = (vec![0u8; 4096], vec![0usize; 64], text.as_bytes(), 0usize);
            loop {
                let (res, nin, _, nend) = core.read_record(input, &mut out, &mut ends);
                input = &input[nin..];
                fields += nend;
                match res {
                    csv_core::ReadRecordResult::End => break,
                    csv_core::ReadRecordResult::Record | csv_core::ReadRecordResult::InputEmpty => {}
                    other => panic!("{other:?}"),
                }
            }
            fields
        });
        let (parse_rate, sum) = best(text.len(), || {
            let mut sum = 0.0;
            for cell in text.as_bytes().split(|&b| b == b',' || b == b'\n').skip(8) {
                sum += std::str::from_utf8(cell).unwrap().parse::<f64>().unwrap_or(0.0);
            }
            sum
        });
        let read = |core_only: bool| {
            let mut r = TableReader::new("big.csv", ReadOptions::default());
            if core_only {
                r = r.csv_core_only();
            }
            for chunk in text.as_bytes().chunks(1 << 20) {
                r.push(chunk).unwrap();
            }
            r.finish().unwrap()
        };
        let (core_reader_rate, _) = best(text.len(), || read(true));
        let (rate, t) = best(text.len(), || read(false));
        assert!(t.columns.iter().all(|c| c.as_numbers().is_some()));
        let total: f64 = t.columns.iter().flat_map(|c| c.as_numbers().unwrap()).sum();
        assert!((total - sum).abs() <= 1e-6 * sum.abs().max(1.0), "{total} vs {sum}");
        println!(
            "{}: {:.1} MB, {fields} fields, {} rows; reader {rate:.0} MB/s (every line through csv-core: \
             {core_reader_rate:.0} MB/s); csv-core alone {core_rate:.0} MB/s; f64::from_str alone {parse_rate:.0} MB/s",
            if shortest { "mixed, 2 of 8 columns with 17 digits" } else { "4 decimals" },
            text.len() as f64 / 1e6,
            t.n_rows,
        );
    }
}
