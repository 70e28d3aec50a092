//! The split pipeline the page's pool of workers uses (points, lens and cover in one
//! place; each cover element clustered elsewhere from its points alone; the graph built
//! from the labels) gives the same build as the one-call pipeline. Common practice: the
//! split must be a pure re-arrangement of the same computation, so the check is equality.

use nervure::cluster;
use nervure::rng::SplitMix64;
use nervure::settings::*;
use nervure::table::{Column, Table};
use nervure::Workbench;

fn table(n: usize, seed: u64) -> Table {
    let mut r = SplitMix64::new(seed);
    let d = 4;
    let centres: Vec<Vec<f64>> = (0..3).map(|_| (0..d).map(|_| r.normal() * 3.0).collect()).collect();
    let rows: Vec<Vec<f64>> = (0..n).map(|i| centres[i % 3].iter().map(|c| c + r.normal()).collect()).collect();
    let cols = (0..d).map(|j| Column::number(format!("x{j}"), rows.iter().map(|row| row[j]).collect())).collect();
    Table::from_columns("t", cols).unwrap()
}

fn settings(clustering: Clustering, overlap: f64) -> Settings {
    Settings {
        version: SETTINGS_VERSION,
        columns: (0..4).map(|j| format!("x{j}")).collect(),
        scaling: Scaling::Zscore,
        missing: Missing::default(),
        lens: Lens::Principal { component: 1 },
        cover: CoverSettings::uniform(10, overlap),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
        clustering,
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
    }
}

#[test]
fn labels_made_elsewhere_give_the_same_build() {
    let t = table(3000, 5);
    let quiet = &mut |_: &str, _: f64| {};
    for (clustering, overlap) in [
        (Clustering::Dbscan { eps: 0.4, min_points: 5 }, 0.3),
        (Clustering::Dbscan { eps: 0.25, min_points: 3 }, 0.5),
        (Clustering::SingleLinkage { gap_bins: 10 }, 0.4),
    ] {
        let s = settings(clustering.clone(), overlap);
        let mut whole = Workbench::new();
        whole.set_table(t.clone());
        whole.run(&s, quiet).unwrap();

        let mut split = Workbench::new();
        split.set_table(t.clone());
        let n = split.prepare_elements(&s, quiet).unwrap();
        assert_eq!(n, 10);
        let dim = split.point_dim();
        assert_eq!(dim, 4);
        // Elements clustered in reverse order, as a pool may finish them.
        let mut labels = vec![Vec::new(); n];
        for e in (0..n).rev() {
            labels[e] = cluster::cluster(&split.element_points(e).unwrap(), dim, &clustering);
        }
        split.run_with_labels(&s, labels, quiet).unwrap();
        assert_eq!(split.last().unwrap(), whole.last().unwrap(), "{clustering:?}");

        // Nothing left to cluster once the graph is built: the page then just runs.
        assert_eq!(split.prepare_elements(&s, quiet).unwrap(), 0);
    }
}

#[test]
fn labels_of_the_wrong_shape_are_refused() {
    let t = table(500, 6);
    let quiet = &mut |_: &str, _: f64| {};
    let s = settings(Clustering::Dbscan { eps: 0.4, min_points: 5 }, 0.3);
    let mut w = Workbench::new();
    w.set_table(t);
    let n = w.prepare_elements(&s, quiet).unwrap();
    let e = w.run_with_labels(&s, vec![Vec::new(); n], quiet).unwrap_err().to_string();
    assert!(e.contains("do not match"), "{e}");
}

/// A build cancelled after `prepare_elements` (the page's Cancel while the pool clusters)
/// leaves the engine's stages on the cancelled settings; running the graph shown again
/// takes them back, without a rebuild, so what reads them (the lens histogram, the
/// element points) is the shown graph's again. Common practice: a cancelled operation
/// leaves the state it found.
#[test]
fn running_the_shown_settings_after_a_cancelled_prepare_takes_their_stages_back() {
    let t = table(3000, 7);
    let quiet = &mut |_: &str, _: f64| {};
    let shown = settings(Clustering::Dbscan { eps: 0.4, min_points: 5 }, 0.3);
    let mut bench = Workbench::new();
    bench.set_table(t);
    bench.run(&shown, quiet).unwrap();
    let build = bench.last().unwrap().clone();
    let histogram = bench.lens_histogram(20, 0).unwrap();
    let sizes = bench.element_sizes();

    let mut cancelled = shown.clone();
    cancelled.lens = Lens::Column { column: "x2".into() };
    cancelled.cover = CoverSettings::uniform(7, 0.45);
    assert_eq!(bench.prepare_elements(&cancelled, quiet).unwrap(), 7);
    assert_ne!(bench.element_sizes(), sizes);
    // The stages moved: the shown graph's lens values are gone.
    assert!(bench.lens_histogram(20, 0).is_err());

    bench.run(&shown, quiet).unwrap();
    assert_eq!(bench.last().unwrap(), &build);
    assert_eq!(bench.element_sizes(), sizes);
    assert_eq!(bench.lens_histogram(20, 0).unwrap(), histogram);
}
