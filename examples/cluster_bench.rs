//! Times the clustering of each cover element of a table, one element at a time on one
//! thread (what a pool helper of the page does with each element), for profiling and for
//! comparing two builds of the clustering on the same elements. Prints one line per
//! element and a total; with `--dump DIR` it also writes each element's points as raw
//! little-endian f64 values (row-major) for closer study, and the settings used as
//! `DIR/settings.json` (tests/bench/cluster.mjs clusters the same files as wasm).
//!
//!   cargo build --release --example cluster_bench
//!   $CARGO_TARGET_DIR/release/examples/cluster_bench DATA.csv [--settings S.json] [--element E] [--dump DIR]
//!   $CARGO_TARGET_DIR/release/examples/cluster_bench --from DIR [--passes P]
//!
//! `--from DIR` clusters the elements dumped in DIR (with the settings dumped beside them)
//! in a process that did nothing else before, as the wasm runners of cluster.mjs do, and
//! prints each element's fastest of P passes (default 1): the figure cluster.mjs sets
//! beside the wasm ones, pass by pass in turn with them.
//!
//! Without `--settings` the automatic settings are used, as the page does for a dropped file.

use std::time::Instant;

use nervure::{ReadOptions, Settings, TableReader, Workbench};

/// A digest of the labels (FNV-1a over each label, noise as u32::MAX), to compare two builds.
fn digest(labels: &[Option<u32>]) -> u64 {
    labels.iter().fold(0xcbf29ce484222325u64, |h, l| (h ^ l.unwrap_or(u32::MAX) as u64).wrapping_mul(0x100000001b3))
}

/// Clusters each element dumped in `dir`, `passes` times, and prints its fastest time.
fn from_dumped(dir: &str, passes: usize) {
    let settings = Settings::from_json(&std::fs::read_to_string(format!("{dir}/settings.json")).expect("settings.json in the folder")).expect("settings");
    let dim: usize = std::fs::read_to_string(format!("{dir}/dim")).expect("dim in the folder").trim().parse().expect("dim");
    let mut elements = Vec::new();
    while let Ok(bytes) = std::fs::read(format!("{dir}/element-{}.f64", elements.len())) {
        elements.push(bytes.chunks_exact(8).map(|c| f64::from_le_bytes(c.try_into().unwrap())).collect::<Vec<f64>>());
    }
    let mut fastest = vec![f64::INFINITY; elements.len()];
    let mut digests = vec![0u64; elements.len()];
    for _ in 0..passes {
        for (e, pts) in elements.iter().enumerate() {
            let t = Instant::now();
            let labels = nervure::cluster::cluster(pts, dim, &settings.clustering);
            fastest[e] = fastest[e].min(t.elapsed().as_secs_f64());
            digests[e] = digest(&labels);
        }
    }
    println!("{} elements, {dim} columns, clustering {:?}", elements.len(), settings.clustering);
    for (e, pts) in elements.iter().enumerate() {
        println!("element {e}: {} points, {:.6} s, labels {:016x}", pts.len() / dim, fastest[e], digests[e]);
    }
}

fn main() {
    let mut args = std::env::args().skip(1);
    let data = args.next().expect("usage: cluster_bench DATA.csv [--settings S.json] [--element E] [--dump DIR] | --from DIR [--passes P]");
    if data == "--from" {
        let dir = args.next().expect("--from needs a folder");
        let passes = match (args.next().as_deref(), args.next()) {
            (Some("--passes"), Some(p)) => p.parse::<usize>().expect("passes"),
            (None, _) => 1,
            (Some(a), _) => panic!("unknown option {a}"),
        };
        return from_dumped(&dir, passes.max(1));
    }
    let (mut settings, mut only, mut dump) = (None, None, None);
    while let Some(a) = args.next() {
        let v = args.next().unwrap_or_else(|| panic!("{a} needs a value"));
        match a.as_str() {
            "--settings" => settings = Some(Settings::from_json(&std::fs::read_to_string(&v).expect("settings file")).expect("settings")),
            "--element" => only = Some(v.parse::<usize>().expect("element number")),
            "--dump" => dump = Some(v),
            _ => panic!("unknown option {a}"),
        }
    }
    if data.ends_with(".f64") {
        // A dumped element: NERVURE_DIM, NERVURE_EPS, NERVURE_MIN (or NERVURE_BINS for single linkage).
        let env = |k: &str| std::env::var(k).ok();
        let dim: usize = env("NERVURE_DIM").map_or(12, |v| v.parse().unwrap());
        let method = match env("NERVURE_BINS") {
            Some(b) => nervure::settings::Clustering::SingleLinkage { gap_bins: b.parse().unwrap() },
            None => nervure::settings::Clustering::Dbscan { eps: env("NERVURE_EPS").unwrap().parse().unwrap(), min_points: env("NERVURE_MIN").map_or(5, |v| v.parse().unwrap()) },
        };
        let bytes = std::fs::read(&data).expect("cannot read the points");
        let mut pts: Vec<f64> = bytes.chunks_exact(8).map(|c| f64::from_le_bytes(c.try_into().unwrap())).collect();
        if env("NERVURE_ROTATE").is_some() {
            let x = ndarray::ArrayView2::from_shape((pts.len() / dim, dim), &pts).unwrap();
            let c = nervure::filter::linalg::covariance(x, 1);
            let (vals, vecs) = nervure::filter::linalg::symmetric_eigen(&c);
            println!("eigenvalues {:?}", vals.iter().map(|v| (v * 100.0).round() / 100.0).collect::<Vec<_>>());
            let y = x.dot(&vecs);
            pts = y.iter().copied().collect();
        }
        let t = Instant::now();
        let labels = nervure::cluster::cluster(&pts, dim, &method);
        let k = labels.iter().flatten().max().map_or(0, |&c| c + 1);
        let noise = labels.iter().filter(|l| l.is_none()).count();
        println!("{} points: {:.3} s, {k} clusters, {noise} noise, labels {:016x}", pts.len() / dim, t.elapsed().as_secs_f64(), digest(&labels));
        return;
    }
    let bytes = std::fs::read(&data).expect("cannot read the data file");
    let mut reader = TableReader::new("bench.csv", ReadOptions::default());
    reader.expect_bytes(bytes.len() as u64);
    reader.push(&bytes).expect("read");
    let mut bench = Workbench::new();
    bench.set_table(reader.finish().expect("read"));
    let settings = settings.unwrap_or_else(|| bench.auto_settings().expect("automatic settings"));
    let n = bench.prepare_elements(&settings, &mut |_, _| {}).expect("prepare");
    let dim = bench.point_dim();
    if let Some(d) = &dump {
        std::fs::write(format!("{d}/settings.json"), settings.to_json()).expect("dump");
        std::fs::write(format!("{d}/dim"), dim.to_string()).expect("dump");
    }
    println!("{n} elements, {dim} columns, clustering {:?}", settings.clustering);
    let mut total = 0.0;
    for e in (0..n).filter(|e| only.map_or(true, |o| o == *e)) {
        let pts = bench.element_points(e).expect("element");
        if let Some(d) = &dump {
            let raw: Vec<u8> = pts.iter().flat_map(|v| v.to_le_bytes()).collect();
            std::fs::write(format!("{d}/element-{e}.f64"), raw).expect("dump");
        }
        let t = Instant::now();
        let labels = nervure::cluster::cluster(&pts, dim, &settings.clustering);
        let secs = t.elapsed().as_secs_f64();
        total += secs;
        let k = labels.iter().flatten().max().map_or(0, |&c| c + 1);
        let noise = labels.iter().filter(|l| l.is_none()).count();
        println!("element {e}: {} points, {secs:.6} s, {k} clusters, {noise} noise, labels {:016x}", pts.len() / dim, digest(&labels));
    }
    println!("total {total:.3} s");
}
