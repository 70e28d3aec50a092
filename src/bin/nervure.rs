//! Command-line runner: everything the page computes, from a script, over the same
//! settings document, for files too big for a browser tab and for runs repeated over many
//! files. Each subcommand reads the data files (CSV or other delimited text, ICARTT,
//! .xlsx, told apart by content; several files are stacked with a `source_file` column;
//! model files can be aligned on time), builds the graph with the given settings (or the
//! automatic ones) and writes one JSON document to standard output or `--out`. The logic
//! is the core's ([`nervure::results`], [`nervure::graphfile`]); this file reads
//! arguments, reports progress on standard error and writes files.
//!
//! Exit status: 0 done; 1 the engine refused the data or the settings (the message is
//! the page's); 2 the command line is wrong; 130 stopped by Ctrl-C (nothing half written).
//!
//! The form before subcommands, `nervure DATA [--settings S] [--out G] [--summary]
//! [--write-settings S] [--timings [--then-overlap G]]`, still works as `graph` did.

use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Mutex;
use std::time::Instant;

use nervure::align::AlignSpec;
use nervure::settings::Settings;
use nervure::shape::Grid;
use nervure::{results, Workbench};

const HELP: &str = "\
nervure: Mapper graphs and their checks from the command line, with the page's settings document.

usage: nervure COMMAND DATA... [options]

commands (each writes one JSON document to standard output, or to --out FILE):
  graph      the graph file: graph, layout, settings, summary, per-node statistics of every column
  diagram    the graph's extended persistence diagram, with the nodes carrying each feature
  resample   the resampling test of each feature      [--draws B] [--alpha A] [--seed N]
  grid       a grid of settings: --intervals 4,6,8 --overlaps 0.2,0.3 [--eps 0.1,0.2]
             [--draws B (0: no resampling, the default)] [--alpha A] [--seed N]
  suggest    settings suggested by the parameter rule  [--seed N]
  compare    the shape of a second table under the same settings:
             --with FILE... (another table), or --swap COLUMN=OTHER,... (COLUMN takes OTHER's values)
             [--draws B] [--alpha A] [--seed N]
  explain    how the rows of some nodes differ from the rest: --nodes 3,5,8, or the rows
             where a condition holds: --rows-where \"station == 'north' and hour(time) < 6\"
  settings   the automatic settings for the data (edit them and pass them back)

data and settings (every command):
  DATA...                 one or more files: CSV or delimited text, ICARTT (.ict), .xlsx workbooks
  --settings S.json       the settings document (as exported by the page); without it, automatic settings
  --write-settings S.json also write the settings used
  --model FILE            a model file to align onto the data on time (repeatable); needs --align
  --align SPEC            the alignment, as JSON text or a JSON file: {\"measurementTime\": \"t\",
                          \"modelTime\": \"t\", \"method\": {\"kind\": \"nearest\", \"tolerance\": 600}}
                          (also \"measurementKey\", \"modelKey\", \"prefix\"; method \"linear\" with \"maxGap\")
  --differences           with automatic settings, add the measurement-minus-model columns
  --sheet NAME            the sheet of .xlsx workbooks (the first by default)
  --out FILE              write the result there instead of standard output
  --quiet                 no progress on standard error

graph only:
  --no-rows               leave the member rows out of the graph file (for tables of many millions of rows)
  --graphml FILE          also write GraphML (with --colour COLUMN [--stat mean|median|spread])
  --memberships FILE      also write the memberships CSV (data_row,node)
  --report FILE           also write the text report
  --summary               print the summary JSON (the graph file then needs --out)

exit status: 0 done, 1 the data or settings were refused (the message is the page's),
2 a wrong command line, 130 stopped by Ctrl-C.
A Mapper graph depends on its settings: it is a hypothesis about the data to check, not a finding.";

const COMMANDS: [&str; 8] = ["graph", "diagram", "resample", "grid", "suggest", "compare", "explain", "settings"];

/// What went wrong, and so the exit status.
enum Failure {
    /// The command line (status 2).
    Usage(String),
    /// The engine refused the data or the settings, or a file could not be read or
    /// written (status 1).
    Refused(String),
}

impl From<nervure::Error> for Failure {
    fn from(e: nervure::Error) -> Self {
        Failure::Refused(e.to_string())
    }
}

fn usage(m: impl Into<String>) -> Failure {
    Failure::Usage(m.into())
}

#[derive(Default)]
struct Args {
    command: String,
    old_form: bool,
    data: Vec<PathBuf>,
    model: Vec<PathBuf>,
    align: Option<String>,
    differences: bool,
    sheet: Option<String>,
    settings: Option<PathBuf>,
    write_settings: Option<PathBuf>,
    out: Option<PathBuf>,
    quiet: bool,
    summary: bool,
    timings: bool,
    then_overlap: Option<f64>,
    no_rows: bool,
    graphml: Option<PathBuf>,
    colour: Option<String>,
    stat: Option<String>,
    memberships: Option<PathBuf>,
    report: Option<PathBuf>,
    draws: Option<usize>,
    alpha: Option<f64>,
    seed: Option<u64>,
    intervals: Option<Vec<usize>>,
    overlaps: Option<Vec<f64>>,
    eps: Option<Vec<f64>>,
    with: Vec<PathBuf>,
    swap: Option<Vec<(String, String)>>,
    nodes: Option<Vec<usize>>,
    rows_where: Option<String>,
}

fn list<T: std::str::FromStr>(flag: &str, text: &str) -> Result<Vec<T>, Failure> {
    text.split(',')
        .map(|p| p.trim())
        .filter(|p| !p.is_empty())
        .map(|p| p.parse().map_err(|_| usage(format!("{flag}: '{p}' is not a number (give a list such as 4,6,8)"))))
        .collect()
}

fn parse_args(raw: Vec<String>) -> Result<Args, Failure> {
    let mut a = Args::default();
    let mut it = raw.into_iter().peekable();
    match it.peek().map(String::as_str) {
        None => return Err(usage(format!("give a command and data files, such as: nervure graph data.csv --out graph.json\n\n{HELP}"))),
        Some("-h" | "--help" | "help") => return Err(usage(HELP)),
        Some(c) if COMMANDS.contains(&c) => a.command = it.next().expect("peeked"),
        Some(c) if !c.starts_with('-') && !Path::new(c).exists() && !c.contains('.') => {
            return Err(usage(format!("unknown command '{c}'; the commands are {}\n(nervure --help says more)", COMMANDS.join(", "))))
        }
        Some(_) => {
            a.command = "graph".into();
            a.old_form = true;
        }
    }
    while let Some(arg) = it.next() {
        let mut value = |flag: &str| it.next().ok_or_else(|| usage(format!("{flag} needs a value (nervure --help)")));
        let number = |flag: &str, v: String| -> Result<f64, Failure> { v.parse().map_err(|_| usage(format!("{flag}: '{v}' is not a number"))) };
        match arg.as_str() {
            "--settings" => a.settings = Some(value(&arg)?.into()),
            "--write-settings" => a.write_settings = Some(value(&arg)?.into()),
            "--out" => a.out = Some(value(&arg)?.into()),
            "--model" => a.model.push(value(&arg)?.into()),
            "--align" => a.align = Some(value(&arg)?),
            "--differences" => a.differences = true,
            "--sheet" => a.sheet = Some(value(&arg)?),
            "--quiet" | "-q" => a.quiet = true,
            "--summary" => a.summary = true,
            "--timings" => a.timings = true,
            "--then-overlap" => {
                let v = value(&arg)?;
                a.then_overlap = Some(number("--then-overlap", v)?);
            }
            "--no-rows" => a.no_rows = true,
            "--graphml" => a.graphml = Some(value(&arg)?.into()),
            "--colour" | "--color" => a.colour = Some(value(&arg)?),
            "--stat" => a.stat = Some(value(&arg)?),
            "--memberships" => a.memberships = Some(value(&arg)?.into()),
            "--report" => a.report = Some(value(&arg)?.into()),
            "--draws" => {
                let v = value(&arg)?;
                a.draws = Some(v.parse().map_err(|_| usage(format!("--draws: '{v}' is not a whole number")))?);
            }
            "--alpha" => {
                let v = value(&arg)?;
                a.alpha = Some(number("--alpha", v)?);
            }
            "--seed" => {
                let v = value(&arg)?;
                a.seed = Some(v.parse().map_err(|_| usage(format!("--seed: '{v}' is not a whole number from 0")))?);
            }
            "--intervals" => a.intervals = Some(list("--intervals", &value(&arg)?)?),
            "--overlaps" => a.overlaps = Some(list("--overlaps", &value(&arg)?)?),
            "--eps" => a.eps = Some(list("--eps", &value(&arg)?)?),
            "--with" => a.with.push(value(&arg)?.into()),
            "--swap" => {
                let v = value(&arg)?;
                let pairs = v
                    .split(',')
                    .map(|p| match p.split_once('=') {
                        Some((to, from)) if !to.trim().is_empty() && !from.trim().is_empty() => Ok((from.trim().to_string(), to.trim().to_string())),
                        _ => Err(usage(format!("--swap: '{p}' is not COLUMN=OTHER (COLUMN takes the values of OTHER)"))),
                    })
                    .collect::<Result<Vec<_>, _>>()?;
                a.swap = Some(pairs);
            }
            "--nodes" => a.nodes = Some(list("--nodes", &value(&arg)?)?),
            "--rows-where" => a.rows_where = Some(value(&arg)?),
            "-h" | "--help" => return Err(usage(HELP)),
            s if s.starts_with('-') && s.len() > 1 => return Err(usage(format!("unknown option {s} (nervure --help)"))),
            s => a.data.push(s.into()),
        }
    }
    if a.data.is_empty() {
        return Err(usage(format!("{}: give at least one data file (nervure --help)", a.command)));
    }
    if a.old_form && a.data.len() > 1 {
        return Err(usage(format!(
            "several data files need a command: nervure graph {} ... (the form without a command reads one file)",
            a.data.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(" ")
        )));
    }
    let wrong = |flag: &str, commands: &str| usage(format!("{flag} belongs to {commands}, not to {}", a.command));
    let only = |cond: bool, flag: &str, commands: &str, ok: &[&str]| if cond && !ok.contains(&a.command.as_str()) { Err(wrong(flag, commands)) } else { Ok(()) };
    only(a.no_rows || a.graphml.is_some() || a.memberships.is_some() || a.report.is_some() || a.summary, "--no-rows, --graphml, --memberships, --report and --summary", "graph", &["graph"])?;
    only(a.draws.is_some() || a.alpha.is_some(), "--draws and --alpha", "resample, grid and compare", &["resample", "grid", "compare"])?;
    only(a.seed.is_some(), "--seed", "resample, grid, suggest and compare", &["resample", "grid", "compare", "suggest"])?;
    only(a.intervals.is_some() || a.overlaps.is_some() || a.eps.is_some(), "--intervals, --overlaps and --eps", "grid", &["grid"])?;
    only(!a.with.is_empty() || a.swap.is_some(), "--with and --swap", "compare", &["compare"])?;
    only(a.nodes.is_some() || a.rows_where.is_some(), "--nodes and --rows-where", "explain", &["explain"])?;
    if a.nodes.is_some() && a.rows_where.is_some() {
        return Err(usage("explain takes --nodes or --rows-where, not both"));
    }
    only(a.timings, "--timings", "graph", &["graph"])?;
    if a.then_overlap.is_some() && !a.timings {
        return Err(usage("--then-overlap goes with --timings"));
    }
    if a.colour.is_some() && a.graphml.is_none() {
        return Err(usage("--colour sets the colouring written into the GraphML file: give --graphml FILE too"));
    }
    Ok(a)
}

/// Progress on standard error: one line rewritten in place on a terminal, otherwise a
/// line per stage and per tenth of a long step.
struct Progress {
    quiet: bool,
    tty: bool,
    last: Option<(String, u32)>,
    started: Instant,
}

impl Progress {
    fn new(quiet: bool) -> Progress {
        Progress { quiet, tty: std::io::stderr().is_terminal(), last: None, started: Instant::now() }
    }

    fn show(&mut self, label: &str, fraction: f64) {
        self.show_with(label, "", fraction)
    }

    /// `label` and its percentage, with `detail` after it ("12 of 100"); off a terminal,
    /// one line per tenth.
    fn show_with(&mut self, label: &str, detail: &str, fraction: f64) {
        if self.quiet {
            return;
        }
        let pct = (fraction.clamp(0.0, 1.0) * 100.0) as u32;
        let step = if self.tty { pct } else { pct / 10 * 10 };
        if self.last.as_ref() == Some(&(label.to_string(), step)) && (!self.tty || detail.is_empty()) {
            return;
        }
        self.last = Some((label.to_string(), step));
        let line = format!("nervure: {label} {step:>3} % {detail} ({:.1} s)", self.started.elapsed().as_secs_f64());
        let mut err = std::io::stderr().lock();
        if self.tty {
            let _ = write!(err, "\r\x1b[2K{line}");
            if pct >= 100 {
                let _ = writeln!(err);
            }
        } else {
            let _ = writeln!(err, "{line}");
        }
    }

    fn done(&mut self) {
        if !self.quiet && self.tty && self.last.as_ref().is_some_and(|(_, p)| *p < 100) {
            eprintln!();
        }
        self.last = None;
    }
}

fn stage_label(stage: &str) -> &str {
    match stage {
        "points" => "preparing the points",
        "lens" => "computing the lens",
        "cover" => "covering the lens range",
        "clusters" => "clustering each interval",
        "graph" => "joining clusters that share rows",
        "layout" => "laying out the graph",
        other => other,
    }
}

/// The file being written now, removed if Ctrl-C comes before it is complete.
static WRITING: Mutex<Option<PathBuf>> = Mutex::new(None);

/// Writes `text` to `path` whole or not at all: into a temporary file beside it, then
/// renamed over it.
fn write_whole(path: &Path, text: &str) -> Result<(), Failure> {
    let tmp = path.with_file_name(format!(".{}.{}.part", path.file_name().map_or("out".into(), |n| n.to_string_lossy()), std::process::id()));
    *WRITING.lock().expect("no panic while holding it") = Some(tmp.clone());
    let done = std::fs::write(&tmp, text).and_then(|_| std::fs::rename(&tmp, path));
    *WRITING.lock().expect("no panic while holding it") = None;
    done.map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        Failure::Refused(format!("cannot write {}: {e}", path.display()))
    })
}

/// The result document: to `--out`, or to standard output.
fn emit(out: &Option<PathBuf>, text: &str) -> Result<(), Failure> {
    match out {
        Some(p) => write_whole(p, text),
        None => {
            let mut o = std::io::stdout().lock();
            writeln!(o, "{text}").and_then(|_| o.flush()).map_err(|e| Failure::Refused(format!("cannot write to standard output: {e}")))
        }
    }
}

fn json<T: serde::Serialize>(v: &T) -> String {
    serde_json::to_string(v).expect("results serialise")
}

/// Text given inline (starting with `{`) or the contents of the file it names.
fn inline_or_file(text: &str) -> Result<String, Failure> {
    if text.trim_start().starts_with('{') {
        Ok(text.to_string())
    } else {
        std::fs::read_to_string(text).map_err(|e| Failure::Refused(format!("cannot read {text}: {e}")))
    }
}

/// The table of `paths` (with the model files aligned), as the page assembles it.
fn read_table(paths: &[PathBuf], model: &[PathBuf], align: Option<AlignSpec>, sheet: Option<&str>, p: &mut Progress) -> Result<(nervure::Table, Vec<nervure::settings::Derived>), Failure> {
    let mut campaign = nervure::campaign::from_paths(paths, model, align, sheet, &mut |name, done, total| {
        p.show(&format!("reading {name}"), if total > 0 { done as f64 / total as f64 } else { 1.0 });
    })?;
    p.done();
    let table = campaign.assemble()?;
    let info = campaign.info().expect("just assembled");
    if !p.quiet && (info.files.len() > 1 || info.alignment.is_some()) {
        for f in &info.files {
            let lacked = if f.lacked.is_empty() { String::new() } else { format!("; lacks {}", f.lacked.join(", ")) };
            eprintln!("nervure: {}: {} rows, {} columns{lacked}", f.name, f.rows, f.columns);
        }
    }
    Ok((table, info.differences.clone()))
}

fn read_settings(path: &Path) -> Result<Settings, Failure> {
    let text = std::fs::read_to_string(path).map_err(|e| Failure::Refused(format!("cannot read {}: {e}", path.display())))?;
    let name = path.file_name().map_or_else(|| path.display().to_string(), |n| n.to_string_lossy().into_owned());
    Ok(Settings::from_file_text(&text, &name)?)
}

/// Runs the graph of `s`, with progress; returns the summary and each stage's seconds.
fn build(bench: &mut Workbench, s: &Settings, p: &mut Progress, since: Instant) -> Result<(nervure::Summary, Vec<(String, f64)>), Failure> {
    let mut starts: Vec<(String, Instant)> = vec![("settings".into(), since)];
    let summary = bench.run(s, &mut |stage, fraction| {
        if starts.last().map(|(s, _)| s.as_str()) != Some(stage) {
            starts.push((stage.to_string(), Instant::now()));
        }
        p.show(stage_label(stage), fraction);
    })?;
    p.show("graph built", 1.0);
    p.done();
    let end = Instant::now();
    let stages = starts.iter().enumerate().map(|(i, (name, t))| (name.clone(), (starts.get(i + 1).map_or(end, |(_, t)| *t) - *t).as_secs_f64())).collect();
    Ok((summary, stages))
}

fn run(a: Args) -> Result<(), Failure> {
    let started = Instant::now();
    let mut p = Progress::new(a.quiet || a.old_form);
    let align = a.align.as_deref().map(inline_or_file).transpose()?.map(|t| {
        serde_json::from_str::<AlignSpec>(&t).map_err(|e| Failure::Refused(format!("setting 'align': {e}")))
    });
    let align = align.transpose()?;
    let (table, differences) = read_table(&a.data, &a.model, align, a.sheet.as_deref(), &mut p)?;
    let read_secs = started.elapsed().as_secs_f64();
    let read_done = Instant::now();
    let mut bench = Workbench::new();
    bench.set_table(table);
    let settings = match &a.settings {
        Some(path) => read_settings(path)?,
        None => {
            let mut s = bench.auto_settings()?;
            if a.differences {
                s.derived.extend(differences);
            }
            s
        }
    };
    if a.differences && a.settings.is_some() {
        return Err(usage("--differences adds columns to the automatic settings; with --settings, list them in the document's derived columns"));
    }
    if let Some(p) = &a.write_settings {
        write_whole(p, &(settings.to_json() + "\n"))?;
    }
    if a.command == "settings" {
        return emit(&a.out, &settings.to_json());
    }
    if a.command == "suggest" {
        // The rule reads the table and the settings' columns, scaling and filter; the
        // page asks it on the table with the shown graph's derived columns.
        if !settings.derived.is_empty() {
            build(&mut bench, &settings, &mut p, read_done)?;
        }
        let table = bench.table().expect("set above");
        p.show("estimating the clustering scale", 0.0);
        let s = nervure::shape::suggest(table, &settings, a.seed.unwrap_or(1))?;
        p.show("estimating the clustering scale", 1.0);
        p.done();
        return emit(&a.out, &json(&s));
    }
    let (summary, stages) = build(&mut bench, &settings, &mut p, read_done)?;
    let draws = a.draws.unwrap_or(if a.command == "grid" { 0 } else { 100 });
    let alpha = a.alpha.unwrap_or(0.05);
    let seed = a.seed.unwrap_or(1);
    let table = bench.table().expect("set above");
    match a.command.as_str() {
        "graph" => {
            let b = bench.last().expect("a run just succeeded");
            if let Some(path) = &a.graphml {
                let extra = match &a.colour {
                    None => Vec::new(),
                    Some(c) => {
                        let stat = nervure::NodeStat::from_json(&serde_json::Value::String(a.stat.clone().unwrap_or_else(|| "mean".into())))?;
                        nervure::export::colour_attributes(&bench, c, stat)?
                    }
                };
                write_whole(path, &nervure::export::graphml(b, &extra))?;
            }
            if let Some(path) = &a.memberships {
                write_whole(path, &nervure::export::memberships_csv(b))?;
            }
            if let Some(path) = &a.report {
                write_whole(path, &nervure::export::report(b, &table.name, Some(&table)))?;
            }
            let file = bench.graph_file(!a.no_rows)?;
            if a.out.is_some() || !(a.summary || a.old_form) {
                emit(&a.out, &file.to_json())?;
            }
            if a.timings {
                let mut all = vec![("read".to_string(), read_secs)];
                all.extend(stages);
                print_timings(&all, started, &mut bench, &settings, a.then_overlap)?;
            }
            if a.summary || (a.old_form && a.out.is_none()) {
                println!("{}", json(&summary));
            }
        }
        "diagram" => emit(&a.out, &json(&results::diagram(bench.last().expect("built"))))?,
        "resample" => {
            let out = results::resample(table, &settings, draws, alpha, seed, &mut steps(&mut p, "resample"))?;
            p.done();
            emit(&a.out, &json(&out))?;
        }
        "grid" => {
            let (Some(intervals), Some(overlaps)) = (a.intervals.clone(), a.overlaps.clone()) else {
                return Err(usage("grid needs --intervals (such as 4,6,8,10) and --overlaps (such as 0.2,0.3,0.4)"));
            };
            let g = Grid { intervals, overlaps, eps: a.eps.clone().unwrap_or_default() };
            let out = results::grid(table, &settings, &g, draws, alpha, seed, &mut steps(&mut p, "grid cell"))?;
            p.done();
            emit(&a.out, &json(&out))?;
        }
        "compare" => {
            let second = match (&a.swap, a.with.is_empty()) {
                (Some(pairs), true) => nervure::shape::swap::second_table(table, pairs, &settings)?,
                (None, false) => read_table(&a.with, &[], None, a.sheet.as_deref(), &mut p)?.0,
                _ => return Err(usage("compare needs one second table: --with FILE... (another table) or --swap COLUMN=OTHER,...")),
            };
            let mut bench_b = Workbench::new();
            bench_b.set_table(second);
            bench_b.run(&settings, &mut |_, _| {}).map_err(|e| Failure::Refused(format!("second table: {e}")))?;
            let table = bench.table().expect("set above");
            let out = results::compare(table, bench_b.table().expect("set above"), &settings, draws, alpha, seed, &mut steps(&mut p, "resample (both tables)"))?;
            p.done();
            emit(&a.out, &json(&out))?;
        }
        "explain" => {
            let out = match (&a.nodes, &a.rows_where) {
                (Some(nodes), _) => bench.explain(nodes)?,
                (None, Some(condition)) => bench.explain_where(condition)?,
                (None, None) => {
                    return Err(usage(
                        "explain needs --nodes (such as 3,5,8: node numbers as in the graph file and the page) or --rows-where CONDITION",
                    ))
                }
            };
            emit(&a.out, &json(&out))?;
        }
        other => unreachable!("command {other} checked when parsed"),
    }
    Ok(())
}

/// Progress of a step-wise computation: "label k of n".
fn steps<'a>(p: &'a mut Progress, label: &'a str) -> impl FnMut(usize, usize) -> bool + 'a {
    move |done, total| {
        p.show_with(label, &format!("{done} of {total}"), if total > 0 { done as f64 / total as f64 } else { 1.0 });
        true
    }
}

/// `--timings`: seconds per stage and the peak memory as one JSON line on standard error;
/// with `--then-overlap G`, the cover's overlap changed to G and built again on the cached
/// stages (as the page does when the overlap slider moves), as a second line `{"rerun": {...}}`.
fn print_timings(stages: &[(String, f64)], started: Instant, bench: &mut Workbench, settings: &Settings, then_overlap: Option<f64>) -> Result<(), Failure> {
    let fields: Vec<String> = stages
        .iter()
        .map(|(name, secs)| format!("{}:{secs:.4}", serde_json::json!(name)))
        .chain([
            format!("\"total\":{:.4}", started.elapsed().as_secs_f64()),
            format!("\"peakMemoryBytes\":{}", serde_json::json!(peak_memory_bytes())),
            format!("\"threads\":{}", std::thread::available_parallelism().map_or(1, |n| n.get())),
        ])
        .collect();
    eprintln!("{{{}}}", fields.join(","));
    if let Some(g) = then_overlap {
        let mut next = settings.clone();
        next.cover.overlap = g;
        let rerun = Instant::now();
        let (second, rerun_stages) = build(bench, &next, &mut Progress::new(true), rerun)?;
        let fields: Vec<String> = rerun_stages
            .iter()
            .map(|(name, secs)| format!("{}:{secs:.4}", serde_json::json!(name)))
            .chain([format!("\"total\":{:.4}", rerun.elapsed().as_secs_f64()), format!("\"overlap\":{g}"), format!("\"nodes\":{}", second.nodes)])
            .collect();
        eprintln!("{{\"rerun\":{{{}}}}}", fields.join(","));
    }
    Ok(())
}

/// The process's peak resident memory (Linux: VmHWM), or null elsewhere.
fn peak_memory_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

fn main() -> ExitCode {
    // Ctrl-C (and SIGTERM) end the run at once: a result file being written is removed,
    // so none is left half written, and the exit status says so.
    let _ = ctrlc::set_handler(|| {
        if let Some(tmp) = WRITING.lock().ok().and_then(|mut w| w.take()) {
            let _ = std::fs::remove_file(tmp);
        }
        eprintln!("\nnervure: stopped (Ctrl-C); nothing more was written");
        std::process::exit(130);
    });
    let outcome = parse_args(std::env::args().skip(1).collect()).and_then(run);
    match outcome {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Usage(m)) if m == HELP => {
            println!("{HELP}");
            ExitCode::SUCCESS
        }
        Err(Failure::Usage(m)) => {
            eprintln!("nervure: {m}");
            ExitCode::from(2)
        }
        Err(Failure::Refused(m)) => {
            eprintln!("nervure: {m}");
            ExitCode::from(1)
        }
    }
}
