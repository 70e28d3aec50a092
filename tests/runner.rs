//! The command-line runner end to end: each subcommand's document equals what the library
//! gives in-process for the same table and settings (the page's worker calls the same
//! library: the browser test `tests/browser/runner.test.mjs` closes that loop); every
//! format the page reads; several files stacked and a model aligned on time; exit status
//! and messages; Ctrl-C.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use nervure::graphfile::GraphFile;
use nervure::settings::Settings;
use nervure::Workbench;

const RUNNER: &str = env!("CARGO_BIN_EXE_nervure");

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("nervure-runner-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(args: &[&str]) -> Output {
    Command::new(RUNNER).args(args).output().expect("the runner starts")
}

fn ok(args: &[&str]) -> String {
    let out = run(args);
    assert!(out.status.success(), "nervure {args:?} failed ({:?}):\n{}", out.status.code(), String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout).unwrap()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// A noisy circle with a third column of labels: one loop, a known shape (synthetic).
fn circle_csv(path: &Path, n: usize, seed: u64) {
    let mut r = nervure::rng::SplitMix64::new(seed);
    let mut text = String::from("x,y,side\n");
    for i in 0..n {
        let t = i as f64 / n as f64 * std::f64::consts::TAU;
        let (x, y) = (t.cos() + 0.05 * r.normal(), t.sin() + 0.05 * r.normal());
        text.push_str(&format!("{x},{y},{}\n", if x > 0.0 { "east" } else { "west" }));
    }
    std::fs::write(path, text).unwrap();
}

const CIRCLE_SETTINGS: &str = r#"{"version": 1, "columns": ["x", "y"], "scaling": "none",
  "lens": {"kind": "column", "column": "x"}, "cover": {"intervals": 8, "overlap": 0.35},
  "clustering": {"kind": "dbscan", "eps": 0.25, "minPoints": 3}, "seed": 7}"#;

/// The workbench of one file read as the page reads it, built with `s`.
fn bench_of(path: &Path, s: &Settings) -> Workbench {
    let mut c = nervure::campaign::from_paths(&[path.to_path_buf()], &[], None, None, &mut |_, _, _| {}).unwrap();
    let mut bench = Workbench::new();
    bench.set_table(c.assemble().unwrap());
    bench.run(s, &mut |_, _| {}).unwrap();
    bench
}

#[test]
fn every_command_gives_the_librarys_document() {
    let d = dir("commands");
    let data = d.join("circle.csv");
    circle_csv(&data, 400, 3);
    let sp = d.join("s.json");
    std::fs::write(&sp, CIRCLE_SETTINGS).unwrap();
    let (data_s, sp_s) = (data.to_str().unwrap(), sp.to_str().unwrap());
    let s = Settings::from_json(CIRCLE_SETTINGS).unwrap();
    let mut bench = bench_of(&data, &s);
    let table = bench.table().unwrap().clone();

    let graph = ok(&["graph", data_s, "--settings", sp_s, "--quiet"]);
    assert_eq!(graph.trim_end(), bench.graph_file(true).unwrap().to_json());
    let file = GraphFile::from_json(&graph, "graph.json").unwrap();
    assert_eq!((file.summary.components, file.summary.loops), (1, 1), "a circle: one component, one loop");

    let diagram = ok(&["diagram", data_s, "--settings", sp_s, "-q"]);
    assert_eq!(diagram.trim_end(), serde_json::to_string(&nervure::results::diagram(bench.last().unwrap())).unwrap());

    let resample = ok(&["resample", data_s, "--settings", sp_s, "-q", "--draws", "15", "--alpha", "0.1", "--seed", "4"]);
    let want = nervure::results::resample(&table, &s, 15, 0.1, 4, &mut |_, _| true).unwrap();
    assert_eq!(resample.trim_end(), serde_json::to_string(&want).unwrap());

    let grid = ok(&["grid", data_s, "--settings", sp_s, "-q", "--intervals", "4,8", "--overlaps", "0.2,0.35", "--eps", "0.2,0.3"]);
    let g = nervure::shape::Grid { intervals: vec![4, 8], overlaps: vec![0.2, 0.35], eps: vec![0.2, 0.3] };
    let want = nervure::results::grid(&table, &s, &g, 0, 0.05, 1, &mut |_, _| true).unwrap();
    assert_eq!(grid.trim_end(), serde_json::to_string(&want).unwrap());
    assert_eq!(want.cells.len(), 8);

    let suggest = ok(&["suggest", data_s, "--settings", sp_s, "-q", "--seed", "9"]);
    assert_eq!(suggest.trim_end(), serde_json::to_string(&nervure::shape::suggest(&table, &s, 9).unwrap()).unwrap());

    let explain = ok(&["explain", data_s, "--settings", sp_s, "-q", "--nodes", "0,1"]);
    assert_eq!(explain.trim_end(), serde_json::to_string(&bench.explain(&[0, 1]).unwrap()).unwrap());

    // A second table by swapped columns: y takes x's values and x takes y's.
    let compare = ok(&["compare", data_s, "--settings", sp_s, "-q", "--swap", "x=y,y=x", "--draws", "6"]);
    let second = nervure::shape::swap::second_table(&table, &[("y".into(), "x".into()), ("x".into(), "y".into())], &s).unwrap();
    let want = nervure::results::compare(&table, &second, &s, 6, 0.05, 1, &mut |_, _| true).unwrap();
    assert_eq!(compare.trim_end(), serde_json::to_string(&want).unwrap());

    // And a second table from a file (another draw of the same circle).
    let other = d.join("other.csv");
    circle_csv(&other, 400, 11);
    let out = ok(&["compare", data_s, "--settings", sp_s, "-q", "--with", other.to_str().unwrap(), "--draws", "6"]);
    let b2 = bench_of(&other, &s);
    let want = nervure::results::compare(&table, b2.table().unwrap(), &s, 6, 0.05, 1, &mut |_, _| true).unwrap();
    assert_eq!(out.trim_end(), serde_json::to_string(&want).unwrap());

    // Automatic settings, written out and read back, give the same graph.
    let auto = ok(&["settings", data_s, "-q"]);
    let auto_s = Settings::from_json(&auto).unwrap();
    let mut fresh = Workbench::new();
    fresh.set_table(table.clone());
    assert_eq!(auto_s, fresh.auto_settings().unwrap());
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn graph_writes_every_export_whole() {
    let d = dir("exports");
    let data = d.join("circle.csv");
    circle_csv(&data, 300, 5);
    let sp = d.join("s.json");
    std::fs::write(&sp, CIRCLE_SETTINGS).unwrap();
    let p = |n: &str| d.join(n).to_str().unwrap().to_string();
    ok(&["graph", &p("circle.csv"), "--settings", &p("s.json"), "-q", "--out", &p("g.json"), "--no-rows", "--graphml", &p("g.graphml"), "--colour", "y", "--stat", "median", "--memberships", &p("m.csv"), "--report", &p("r.txt")]);
    let s = Settings::from_json(CIRCLE_SETTINGS).unwrap();
    let bench = bench_of(&data, &s);
    let b = bench.last().unwrap();
    assert_eq!(std::fs::read_to_string(p("g.json")).unwrap(), bench.graph_file(false).unwrap().to_json());
    let extra = nervure::export::colour_attributes(&bench, "y", nervure::NodeStat::Median).unwrap();
    assert_eq!(std::fs::read_to_string(p("g.graphml")).unwrap(), nervure::export::graphml(b, &extra));
    assert_eq!(std::fs::read_to_string(p("m.csv")).unwrap(), nervure::export::memberships_csv(b));
    assert!(std::fs::read_to_string(p("r.txt")).unwrap().contains("hypothesis"));
    let left: Vec<_> = std::fs::read_dir(&d).unwrap().filter_map(|e| e.ok()).filter(|e| e.file_name().to_string_lossy().ends_with(".part")).collect();
    assert!(left.is_empty(), "no temporary file is left");
    let _ = std::fs::remove_dir_all(&d);
}

/// The form before subcommands keeps working for scripts: summary on standard output,
/// the graph file with --out.
#[test]
fn the_old_form_still_works() {
    let d = dir("old");
    let data = d.join("circle.csv");
    circle_csv(&data, 300, 5);
    let sp = d.join("s.json");
    std::fs::write(&sp, CIRCLE_SETTINGS).unwrap();
    let out = d.join("g.json");
    let summary = ok(&[data.to_str().unwrap(), "--settings", sp.to_str().unwrap()]);
    let v: serde_json::Value = serde_json::from_str(&summary).unwrap();
    assert_eq!(v["loops"], 1);
    let quiet = ok(&[data.to_str().unwrap(), "--settings", sp.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(quiet.is_empty(), "with --out and no --summary nothing is printed: {quiet}");
    let f = GraphFile::from_json(&std::fs::read_to_string(&out).unwrap(), "g.json").unwrap();
    assert_eq!(f.summary.loops, 1);
    let ws = d.join("auto.json");
    ok(&[data.to_str().unwrap(), "--write-settings", ws.to_str().unwrap(), "--summary"]);
    assert!(Settings::from_json(&std::fs::read_to_string(&ws).unwrap()).is_ok());
    let _ = std::fs::remove_dir_all(&d);
}

/// ICARTT (fixture written from the format standard) and .xlsx (written by openpyxl,
/// tests/reference/fixtures/sheet.xlsx) are told apart by content, whatever their names.
#[test]
fn reads_icartt_and_workbooks_by_content() {
    let d = dir("formats");
    let ict = d.join("renamed.csv");
    std::fs::copy(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/icartt/v2_ozone.ict"), &ict).unwrap();
    let sp = d.join("s.json");
    std::fs::write(&sp, r#"{"version": 1, "columns": ["O3", "T_amb"], "scaling": "none", "lens": {"kind": "column", "column": "O3"},
        "cover": {"intervals": 1, "overlap": 0.1}, "clustering": {"kind": "dbscan", "eps": 1000, "minPoints": 1}}"#).unwrap();
    let g = ok(&["graph", ict.to_str().unwrap(), "--settings", sp.to_str().unwrap(), "-q"]);
    let f = GraphFile::from_json(&g, "g").unwrap();
    let t = f.table.unwrap();
    let o3 = t.columns.iter().find(|c| c.name == "O3").expect("the ICARTT variables are columns");
    assert_eq!(o3.unit.as_deref(), Some("ppbv"));
    assert!(t.columns.iter().any(|c| c.name == "time_utc"));
    let xlsx = d.join("book.data");
    std::fs::copy(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/reference/fixtures/sheet.xlsx"), &xlsx).unwrap();
    let o = run(&["settings", xlsx.to_str().unwrap(), "-q"]);
    let text = format!("{}{}", String::from_utf8_lossy(&o.stdout), stderr(&o));
    assert!(!text.contains("binary"), "a workbook is read as one: {text}");
    let bad = run(&["settings", xlsx.to_str().unwrap(), "-q", "--sheet", "nope"]);
    assert_eq!(bad.status.code(), Some(1));
    assert!(stderr(&bad).contains("nope"), "{}", stderr(&bad));
    let _ = std::fs::remove_dir_all(&d);
}

/// Several files are stacked with a `source_file` column, as the page's file list does;
/// a model file is aligned on time and the differences added.
#[test]
fn stacks_files_and_aligns_a_model() {
    let d = dir("stack");
    std::fs::write(d.join("up.csv"), "t,station,temp,flow\n0,up,10,1\n3600,up,12,2\n7200,up,13,2.5\n10800,up,12,2\n").unwrap();
    std::fs::write(d.join("down.csv"), "t,station,temp,flow\n0,down,20,5\n3600,down,21,6\n7200,down,23,7\n10800,down,22,6.5\n").unwrap();
    std::fs::write(d.join("model.csv"), "t,station,temp\n0,up,9\n10800,up,15\n0,down,19\n10800,down,25\n").unwrap();
    let p = |n: &str| d.join(n).to_str().unwrap().to_string();
    let out = run(&["graph", &p("up.csv"), &p("down.csv")]);
    assert!(out.status.success(), "{}", stderr(&out));
    let f = GraphFile::from_json(&String::from_utf8_lossy(&out.stdout), "g").unwrap();
    let t = f.table.unwrap();
    assert_eq!((t.name.as_str(), t.rows), ("2 files", 8));
    assert!(t.columns.iter().any(|c| c.name == "source_file"));
    assert!(stderr(&out).contains("up.csv: 4 rows"), "the file list is reported: {}", stderr(&out));

    let align = r#"{"measurementTime": "t", "modelTime": "t", "measurementKey": "station", "modelKey": "station", "method": {"kind": "linear"}}"#;
    let s = ok(&["settings", &p("up.csv"), &p("down.csv"), "--model", &p("model.csv"), "--align", align, "--differences", "-q"]);
    let s = Settings::from_json(&s).unwrap();
    assert_eq!(s.derived.len(), 1);
    assert_eq!((s.derived[0].name.as_str(), s.derived[0].expression.as_str()), ("diff_temp", "\"temp\" - \"model_temp\""));
    let spec = d.join("align.json");
    std::fs::write(&spec, align).unwrap();
    let one_node = r#"{"version": 1, "columns": ["temp", "flow"], "scaling": "none", "lens": {"kind": "column", "column": "temp"},
        "cover": {"intervals": 1, "overlap": 0.1}, "clustering": {"kind": "dbscan", "eps": 100, "minPoints": 1}}"#;
    std::fs::write(d.join("one.json"), one_node).unwrap();
    let g = ok(&["graph", &p("up.csv"), &p("down.csv"), "--model", &p("model.csv"), "--align", spec.to_str().unwrap(), "--settings", &p("one.json"), "-q"]);
    let f = GraphFile::from_json(&g, "g").unwrap();
    let names: Vec<String> = f.table.as_ref().unwrap().columns.iter().map(|c| c.name.clone()).collect();
    assert!(names.contains(&"model_temp".to_string()), "{names:?}");
    // numpy.interp between the model's rows: up at 3600 s is 9 + (15 - 9) / 3 = 11.
    let stats = f.statistics.iter().find(|c| c.name() == "model_temp").unwrap();
    let nervure::graphfile::ColumnStats::Number { min, max, .. } = stats else { panic!("a number column") };
    let lo = min.iter().flatten().cloned().fold(f64::INFINITY, f64::min);
    let hi = max.iter().flatten().cloned().fold(f64::NEG_INFINITY, f64::max);
    assert_eq!((lo, hi), (9.0, 25.0));

    let o = run(&["graph", &p("up.csv"), "--model", &p("model.csv")]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("'align'"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&d);
}

/// Status 1 and the engine's own message for a refusal; 2 for a wrong command line.
#[test]
fn exit_status_and_messages() {
    let d = dir("status");
    let data = d.join("circle.csv");
    circle_csv(&data, 200, 5);
    let data_s = data.to_str().unwrap();
    let bad = d.join("bad.json");
    let text = CIRCLE_SETTINGS.replace("\"overlap\": 0.35", "\"overlap\": 1.5");
    std::fs::write(&bad, &text).unwrap();
    let o = run(&["graph", data_s, "--settings", bad.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    let engine = Settings::from_json(&text).unwrap_err().to_string();
    assert_eq!(stderr(&o).lines().last().unwrap(), format!("nervure: {engine}"));
    let missing = d.join("missing.json");
    std::fs::write(&missing, CIRCLE_SETTINGS.replace("[\"x\", \"y\"]", "[\"x\", \"depth\"]")).unwrap();
    let o = run(&["graph", data_s, "--settings", missing.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("no column named 'depth'"), "{}", stderr(&o));
    let deep = d.join("deep.json");
    std::fs::write(&deep, "[".repeat(50_000) + &"]".repeat(50_000)).unwrap();
    let o = run(&["graph", data_s, "--settings", deep.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("nests 50000 levels"), "{}", stderr(&o));
    for args in [&["graph"][..], &["frobnicate", data_s], &["grid", data_s, "-q"], &["graph", data_s, "--draws", "5"], &["explain", data_s, "-q"], &[data_s, "--nope"]] {
        let o = run(args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(stderr(&o).starts_with("nervure: "), "{args:?}: {}", stderr(&o));
    }
    let o = run(&["--help"]);
    assert!(o.status.success() && String::from_utf8_lossy(&o.stdout).contains("resample"));
    let o = run(&["graph", d.join("absent.csv").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("cannot open"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&d);
}

/// Ctrl-C (SIGINT) during a long resampling test: status 130, a line saying so, and no
/// result file, whole or partial.
#[cfg(unix)]
#[test]
fn ctrl_c_stops_cleanly() {
    use std::io::{BufRead, BufReader};
    let d = dir("interrupt");
    let data = d.join("circle.csv");
    circle_csv(&data, 3000, 5);
    let sp = d.join("s.json");
    std::fs::write(&sp, CIRCLE_SETTINGS).unwrap();
    let out = d.join("result.json");
    let mut child = Command::new(RUNNER)
        .args(["resample", data.to_str().unwrap(), "--settings", sp.to_str().unwrap(), "--draws", "100000", "--out", out.to_str().unwrap()])
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let mut err = BufReader::new(child.stderr.take().unwrap());
    let mut line = String::new();
    while err.read_line(&mut line).unwrap() > 0 && !line.contains("resample") {
        line.clear();
    }
    assert!(line.contains("resample"), "the resampling started");
    let killed = Command::new("kill").args(["-INT", &child.id().to_string()]).status().unwrap();
    assert!(killed.success());
    let status = child.wait().unwrap();
    let mut rest = String::new();
    std::io::Read::read_to_string(&mut err, &mut rest).unwrap();
    assert_eq!(status.code(), Some(130), "{rest}");
    assert!(rest.contains("stopped (Ctrl-C)"), "{rest}");
    assert!(!out.exists());
    assert_eq!(std::fs::read_dir(&d).unwrap().count(), 2, "only the data and the settings are there");
    let _ = std::fs::remove_dir_all(&d);
}

/// A real open table (palmerpenguins 0.1.6, penguins): every command runs on it with
/// automatic settings, and the graph file's node statistics are the values the engine
/// colours by (pandas checks them in python/tests).
#[test]
fn an_open_table_through_every_command() {
    let Ok(dir_) = std::env::var("NERVURE_DATA") else {
        eprintln!("skipped: NERVURE_DATA is not set (tests/run.sh sets it); penguins not read");
        return;
    };
    let data = Path::new(&dir_).join("penguins.csv");
    let data_s = data.to_str().unwrap();
    let g = ok(&["graph", data_s, "-q"]);
    let f = GraphFile::from_json(&g, "penguins.graph.json").unwrap();
    assert_eq!(f.table.as_ref().unwrap().rows, 344);
    let mut bench = Workbench::new();
    let mut c = nervure::campaign::from_paths(&[data.clone()], &[], None, None, &mut |_, _, _| {}).unwrap();
    bench.set_table(c.assemble().unwrap());
    let s = bench.auto_settings().unwrap();
    assert_eq!(f.settings, s);
    bench.run(&s, &mut |_, _| {}).unwrap();
    let means = bench.node_values("body_mass_g", nervure::NodeStat::Mean).unwrap();
    let from_file = f.column("body_mass_g").unwrap().values(nervure::NodeStat::Mean).unwrap();
    assert_eq!(means.len(), from_file.len());
    for (a, b) in means.iter().zip(&from_file) {
        assert!(a == b || (a.is_nan() && b.is_nan()));
    }
    for cmd in [&["diagram", data_s, "-q"][..], &["resample", data_s, "-q", "--draws", "10"], &["grid", data_s, "-q", "--intervals", "3,5", "--overlaps", "0.3"], &["suggest", data_s, "-q"], &["explain", data_s, "-q", "--nodes", "0"], &["compare", data_s, "-q", "--swap", "bill_length_mm=bill_depth_mm", "--draws", "5"]] {
        let out = ok(cmd);
        assert!(serde_json::from_str::<serde_json::Value>(&out).is_ok(), "{cmd:?}");
    }
}
