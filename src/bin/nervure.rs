//! Command-line runner: the same settings document as the page, for files too big for a
//! browser tab and for scripts.
//!
//! ```text
//! nervure DATA.csv [--settings S.json] [--write-settings S.json] [--out GRAPH.json] [--summary] [--timings]
//! ```
//! Without `--settings` the automatic first settings are used (and can be written out
//! with `--write-settings`, to edit and pass back). `--summary` prints the summary JSON;
//! `--timings` prints seconds per stage and the peak memory as JSON on standard error;
//! with `--then-overlap G` it then changes the cover's overlap to `G`, builds again on
//! the cached stages (as the page does when the overlap slider moves) and prints that
//! run's stages as a second JSON line, `{"rerun": {...}}`.

use std::io::Read;
use std::process::ExitCode;
use std::time::Instant;

use nervure::table::{ReadOptions, TableReader};
use nervure::{Settings, Workbench};

const USAGE: &str = "usage: nervure DATA.csv [--settings S.json] [--write-settings S.json] [--out GRAPH.json] [--summary] [--timings [--then-overlap G]]";

struct Args {
    data: String,
    settings: Option<String>,
    write_settings: Option<String>,
    out: Option<String>,
    summary: bool,
    timings: bool,
    then_overlap: Option<f64>,
}

fn parse_args() -> Result<Args, String> {
    let mut it = std::env::args().skip(1);
    let mut a = Args { data: String::new(), settings: None, write_settings: None, out: None, summary: false, timings: false, then_overlap: None };
    while let Some(arg) = it.next() {
        let mut value = |name: &str| it.next().ok_or_else(|| format!("{name} needs a file name\n{USAGE}"));
        match arg.as_str() {
            "--settings" => a.settings = Some(value("--settings")?),
            "--write-settings" => a.write_settings = Some(value("--write-settings")?),
            "--out" => a.out = Some(value("--out")?),
            "--summary" => a.summary = true,
            "--timings" => a.timings = true,
            "--then-overlap" => {
                let v = it.next().ok_or_else(|| format!("--then-overlap needs a number\n{USAGE}"))?;
                a.then_overlap = Some(v.parse().map_err(|_| format!("--then-overlap: '{v}' is not a number\n{USAGE}"))?);
            }
            "-h" | "--help" => return Err(USAGE.to_string()),
            s if s.starts_with("--") => return Err(format!("unknown option {s}\n{USAGE}")),
            s if a.data.is_empty() => a.data = s.to_string(),
            s => return Err(format!("one data file at a time (got '{}' and '{s}')\n{USAGE}", a.data)),
        }
    }
    if a.data.is_empty() {
        return Err(USAGE.to_string());
    }
    Ok(a)
}

fn run() -> Result<(), String> {
    let a = parse_args()?;
    let started = Instant::now();
    let name = std::path::Path::new(&a.data).file_name().map_or(a.data.clone(), |n| n.to_string_lossy().into_owned());
    let mut file = std::fs::File::open(&a.data).map_err(|e| format!("cannot open {}: {e}", a.data))?;
    let mut reader = TableReader::new(&name, ReadOptions::default());
    if let Ok(meta) = file.metadata() {
        reader.expect_bytes(meta.len());
    }
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let k = file.read(&mut buf).map_err(|e| format!("cannot read {}: {e}", a.data))?;
        if k == 0 {
            break;
        }
        reader.push(&buf[..k]).map_err(|e| e.to_string())?;
    }
    let table = reader.finish().map_err(|e| e.to_string())?;
    let mut stages: Vec<(String, f64)> = vec![("read".into(), started.elapsed().as_secs_f64())];
    let read_done = Instant::now();
    let mut bench = Workbench::new();
    bench.set_table(table);
    let settings = match &a.settings {
        Some(p) => {
            let text = std::fs::read_to_string(p).map_err(|e| format!("cannot read {p}: {e}"))?;
            Settings::from_json(&text).map_err(|e| format!("{p}: {e}"))?
        }
        None => bench.auto_settings().map_err(|e| e.to_string())?,
    };
    if let Some(p) = &a.write_settings {
        std::fs::write(p, settings.to_json()).map_err(|e| format!("cannot write {p}: {e}"))?;
    }
    let (summary, run_stages) = timed_run(&mut bench, &settings, read_done)?;
    stages.extend(run_stages);
    if let Some(p) = &a.out {
        let b = bench.last().expect("a run just succeeded");
        std::fs::write(p, nervure::export::graph_json(b)).map_err(|e| format!("cannot write {p}: {e}"))?;
    }
    if a.timings {
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
    }
    if let (true, Some(g)) = (a.timings, a.then_overlap) {
        let mut next = settings.clone();
        next.cover.overlap = g;
        let rerun = Instant::now();
        let (second, rerun_stages) = timed_run(&mut bench, &next, rerun)?;
        let fields: Vec<String> = rerun_stages
            .iter()
            .map(|(name, secs)| format!("{}:{secs:.4}", serde_json::json!(name)))
            .chain([format!("\"total\":{:.4}", rerun.elapsed().as_secs_f64()), format!("\"overlap\":{g}"), format!("\"nodes\":{}", second.nodes)])
            .collect();
        eprintln!("{{\"rerun\":{{{}}}}}", fields.join(","));
    }
    if a.summary || a.out.is_none() {
        println!("{}", serde_json::to_string(&summary).expect("summary serialises"));
    }
    Ok(())
}

/// Runs `settings` and times each stage as the engine reports them, the first ("settings")
/// from `since`; a stage lasts until the next one starts.
fn timed_run(bench: &mut Workbench, settings: &Settings, since: Instant) -> Result<(nervure::Summary, Vec<(String, f64)>), String> {
    let mut starts: Vec<(String, Instant)> = vec![("settings".into(), since)];
    let summary = bench
        .run(settings, &mut |stage, _| {
            if starts.last().map(|(s, _)| s.as_str()) != Some(stage) {
                starts.push((stage.to_string(), Instant::now()));
            }
        })
        .map_err(|e| e.to_string())?;
    let end = Instant::now();
    let stages = starts.iter().enumerate().map(|(i, (name, t))| (name.clone(), (starts.get(i + 1).map_or(end, |(_, t)| *t) - *t).as_secs_f64())).collect();
    Ok((summary, stages))
}

/// The process's peak resident memory (Linux: VmHWM), or null elsewhere.
fn peak_memory_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

fn main() -> ExitCode {
    match run() {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("nervure: {e}");
            ExitCode::from(2)
        }
    }
}
