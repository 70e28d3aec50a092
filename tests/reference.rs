//! Checks the engine against reference values computed by NumPy, SciPy, scikit-learn and
//! NetworkX (pinned in tests/reference/requirements.txt) and stored as JSON fixtures by
//! tests/reference/make_fixtures.py. Each fixture names its source in its "source" field;
//! each test names the fixture, the function compared and the tolerance.
//!
//! Not here: shapes whose topology is known by construction (tests/topology.rs), unit
//! tests of one module (next to the module).

use std::collections::{BTreeSet, HashMap};

use ndarray::Array2;
use nervure::settings::{Clustering, CoverSettings, EdgeRule, Lens, Missing, Scaling, Spread};
use nervure::table::Column;
use nervure::{ReadOptions, Settings, Table};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
    let v: Value = serde_json::from_str(&text).unwrap_or_else(|e| panic!("{path} is not JSON: {e}"));
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()), "{name} names no source");
    v
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().expect("array").iter().map(|x| x.as_f64().expect("number")).collect()
}

fn matrix(v: &Value) -> Array2<f64> {
    let rows: Vec<Vec<f64>> = v.as_array().expect("array of rows").iter().map(floats).collect();
    let d = rows[0].len();
    Array2::from_shape_vec((rows.len(), d), rows.concat()).expect("rectangular")
}

fn flat(x: &Array2<f64>) -> Vec<f64> {
    x.as_standard_layout().iter().copied().collect()
}

/// Largest |a - b| / max(|b|, floor): relative error, absolute below `floor`.
fn worst_rel(a: &[f64], b: &[f64], floor: f64) -> (f64, usize) {
    assert_eq!(a.len(), b.len(), "lengths differ");
    a.iter()
        .zip(b)
        .enumerate()
        .map(|(i, (x, y))| ((x - y).abs() / y.abs().max(floor), i))
        .fold((0.0, 0), |acc, v| if v.0 > acc.0 { v } else { acc })
}

fn dist(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum::<f64>().sqrt()
}

// ---------------------------------------------------------------------------------------
// Scaling and principal components: pca_iris.json, pca_wine.json
// (sklearn StandardScaler, sklearn PCA(svd_solver='full')).

fn table_of(name: &str, columns: &[String], data: &Array2<f64>) -> Table {
    let cols = columns.iter().enumerate().map(|(j, c)| Column::number(c.clone(), data.column(j).to_vec())).collect();
    Table::from_columns(name, cols).expect("equal column lengths")
}

fn names(v: &Value) -> Vec<String> {
    v.as_array().unwrap().iter().map(|s| s.as_str().unwrap().to_string()).collect()
}

/// Settings for a test, built as a value (not parsed) so these tests do not depend on the
/// settings document's spelling; `validate` still checks the ranges.
fn settings(columns: &[String], lens: Lens, intervals: usize, overlap: f64, clustering: Clustering) -> Settings {
    let s = Settings {
        version: 1,
        columns: columns.to_vec(),
        scaling: Scaling::Zscore,
        missing: Missing::default(),
        lens,
        cover: CoverSettings::uniform(intervals, overlap),
        clustering,
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    s.validate().expect("test settings are valid");
    s
}

/// The engine's z-score is StandardScaler's (ddof = 0). Tolerance 1e-12 absolute
/// (values are of order 1; both sides are one subtraction and one division).
#[test]
fn zscore_matches_standard_scaler() {
    for name in ["pca_iris.json", "pca_wine.json"] {
        let f = fixture(name);
        let cols = names(&f["columns"]);
        let t = table_of(name, &cols, &matrix(&f["data"]));
        let s = settings(&cols, Lens::Principal { component: 1 }, 10, 0.3, Clustering::Dbscan { eps: 0.5, min_points: 5 });
        let p = nervure::points::build_points(&t, &s).unwrap();
        let want = matrix(&f["zscored"]);
        let got = flat(&p.data);
        let (w, i) = worst_rel(&got, &flat(&want), 1.0);
        assert!(w < 1e-12, "{name}: z-score differs from StandardScaler by {w:e} at flat index {i}");
    }
}

/// Scores on components 1-3 equal scikit-learn's up to the sign of each component.
/// Tolerance 1e-9 absolute (scores are of order 1-5; the eigenvalues are well apart).
/// The scores' variance (ddof = 1) must equal `explained_variance_`, relative 1e-9.
#[test]
fn principal_scores_match_scikit_learn_pca() {
    for name in ["pca_iris.json", "pca_wine.json"] {
        let f = fixture(name);
        let z = matrix(&f["zscored"]);
        let ev = floats(&f["explained_variance"]);
        for k in 0..3 {
            let want = floats(&f["scores"][k]);
            let got = nervure::filter::principal_scores(z.view(), k + 1).unwrap();
            let dot: f64 = got.iter().zip(&want).map(|(a, b)| a * b).sum();
            let sign = if dot < 0.0 { -1.0 } else { 1.0 };
            let flipped: Vec<f64> = got.iter().map(|v| v * sign).collect();
            let worst = flipped.iter().zip(&want).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
            assert!(worst < 1e-9, "{name} component {}: worst score difference {worst:e}", k + 1);
            let n = got.len() as f64;
            let mean = got.iter().sum::<f64>() / n;
            let var = got.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
            assert!((var - ev[k]).abs() / ev[k] < 1e-9, "{name} component {}: variance {var} vs {}", k + 1, ev[k]);
        }
    }
}

// ---------------------------------------------------------------------------------------
// Density: kde.json (scipy.stats.gaussian_kde evaluated at the data points).

/// Exact density equals SciPy's normalised values, Scott's rule and factor 0.5, on a
/// seeded 2-D mixture (250 points) and iris z-scored (4-D). Tolerance 1e-9 relative.
#[test]
fn density_matches_scipy_gaussian_kde() {
    let f = fixture("kde.json");
    for case in f["cases"].as_array().unwrap() {
        let x = matrix(&case["points"]);
        let bw = case["bandwidth"].as_f64();
        let want = floats(&case["density"]);
        let got = nervure::filter::density(x.view(), bw).unwrap();
        let (w, i) = worst_rel(&got, &want, 1e-300);
        assert!(
            w < 1e-9,
            "{} bandwidth {bw:?}: worst relative difference {w:e} at point {i} (engine {}, SciPy {}, ratio {})",
            case["label"], got[i], want[i], got[i] / want[i]
        );
    }
}

// ---------------------------------------------------------------------------------------
// Eccentricity: eccentricity.json (cdist and NumPy, definition of Singh, Mémoli, Carlsson 2007).

/// Mean, RMS and max eccentricity of iris z-scored. Tolerance 1e-10 relative.
#[test]
fn eccentricity_matches_pairwise_distance_definition() {
    let f = fixture("eccentricity.json");
    let x = matrix(&f["points"]);
    for (spread, key) in [(Spread::Mean, "mean"), (Spread::Rms, "rms"), (Spread::Max, "max")] {
        let want = floats(&f[key]);
        let got = nervure::filter::eccentricity(x.view(), spread).unwrap();
        let (w, i) = worst_rel(&got, &want, 1e-12);
        assert!(w < 1e-10, "{key}: worst relative difference {w:e} at point {i} ({} vs {})", got[i], want[i]);
    }
}

// ---------------------------------------------------------------------------------------
// DBSCAN: dbscan.json (sklearn.cluster.DBSCAN labels_ and core_sample_indices_).

/// Core points and noise must be exactly scikit-learn's, and the core points must be
/// split into the same clusters (up to renaming). A border point (within eps of a core
/// point, not core itself) may differ only when core points of two or more clusters reach
/// it: DBSCAN (Ester et al. 1996) gives it to whichever cluster reaches it first, so that
/// choice is order-dependent. Cluster numbers must follow each cluster's lowest point
/// index (the engine's documented numbering).
#[test]
fn dbscan_matches_scikit_learn() {
    let f = fixture("dbscan.json");
    for case in f["cases"].as_array().unwrap() {
        let label = format!("{} eps {}", case["label"], case["eps"]);
        assert_eq!(case["pairs_within_1e-9_of_eps"].as_u64(), Some(0), "{label}: distance ties at eps");
        let x = matrix(&case["points"]);
        let (n, d) = x.dim();
        let eps = case["eps"].as_f64().unwrap();
        let min_points = case["min_samples"].as_u64().unwrap() as usize;
        let want: Vec<i64> = case["labels"].as_array().unwrap().iter().map(|v| v.as_i64().unwrap()).collect();
        let core_want: BTreeSet<usize> =
            case["core_sample_indices"].as_array().unwrap().iter().map(|v| v.as_u64().unwrap() as usize).collect();

        // Neighbourhoods by brute force (at most 300 points): distance <= eps, self included.
        let pts = flat(&x);
        let row = |i: usize| &pts[i * d..(i + 1) * d];
        let neigh: Vec<Vec<usize>> = (0..n).map(|i| (0..n).filter(|&j| dist(row(i), row(j)) <= eps).collect()).collect();
        let core: Vec<bool> = neigh.iter().map(|v| v.len() >= min_points).collect();
        let core_set: BTreeSet<usize> = (0..n).filter(|&i| core[i]).collect();
        assert_eq!(core_set, core_want, "{label}: this test's core rule disagrees with scikit-learn's");

        let got = nervure::cluster::cluster(&pts, d, &Clustering::Dbscan { eps, min_points });
        assert_eq!(got.len(), n, "{label}: one label per point");

        let noise_got: BTreeSet<usize> = (0..n).filter(|&i| got[i].is_none()).collect();
        let noise_want: BTreeSet<usize> = (0..n).filter(|&i| want[i] < 0).collect();
        assert_eq!(noise_got, noise_want, "{label}: noise points differ");

        // Core points: the same partition, through a one-to-one renaming.
        let mut to_ref: HashMap<u32, i64> = HashMap::new();
        let mut from_ref: HashMap<i64, u32> = HashMap::new();
        for &i in &core_set {
            let g = got[i].unwrap_or_else(|| panic!("{label}: core point {i} labelled noise"));
            assert_eq!(*to_ref.entry(g).or_insert(want[i]), want[i], "{label}: engine cluster {g} spans two reference clusters");
            assert_eq!(*from_ref.entry(want[i]).or_insert(g), g, "{label}: reference cluster {} split by the engine", want[i]);
        }
        let n_ref = want.iter().filter(|&&l| l >= 0).collect::<BTreeSet<_>>().len();
        assert_eq!(to_ref.len(), n_ref, "{label}: number of clusters");

        // Border points.
        let mut ambiguous = 0;
        for i in (0..n).filter(|&i| !core[i] && want[i] >= 0) {
            let reach: BTreeSet<i64> = neigh[i].iter().filter(|&&j| core[j]).map(|&j| want[j]).collect();
            let g = got[i].unwrap_or_else(|| panic!("{label}: border point {i} labelled noise"));
            let mapped = to_ref.get(&g).copied().unwrap_or_else(|| panic!("{label}: border point {i} in a cluster with no core point"));
            assert!(reach.contains(&mapped), "{label}: border point {i} put in a cluster that does not reach it");
            if reach.len() == 1 {
                assert_eq!(mapped, want[i], "{label}: border point {i} reachable from one cluster only");
            } else {
                ambiguous += 1;
            }
        }
        eprintln!("{label}: {} core, {} noise, {ambiguous} border points reachable from two clusters", core_set.len(), noise_got.len());

        // Numbering: clusters appear in order 0, 1, 2, ... by lowest point index.
        let mut next = 0;
        for l in got.iter().flatten() {
            assert!(*l <= next, "{label}: cluster {l} appears before cluster {next}");
            if *l == next {
                next += 1;
            }
        }
    }
}

// ---------------------------------------------------------------------------------------
// Single linkage: linkage.json (scipy.cluster.hierarchy.linkage(X, 'single'), column 2).

/// The n - 1 merge heights, ascending, equal SciPy's. Tolerance 1e-10 absolute
/// (distances of order 0.1-1). Iris holds duplicate rows, so some heights are 0.
#[test]
fn merge_heights_match_scipy_single_linkage() {
    let f = fixture("linkage.json");
    for case in f["cases"].as_array().unwrap() {
        let x = matrix(&case["points"]);
        let want = floats(&case["merge_heights"]);
        let got = nervure::cluster::linkage::merge_heights(&flat(&x), x.ncols());
        assert_eq!(got.len(), want.len(), "{}: number of merges", case["label"]);
        let worst = got.iter().zip(&want).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        assert!(worst < 1e-10, "{}: worst merge height difference {worst:e}", case["label"]);
    }
}

// ---------------------------------------------------------------------------------------
// Graph counts: graphs.json (networkx.gnm_random_graph, number_connected_components).

/// Components and cycle rank E - V + C of nine seeded random graphs, exact.
#[test]
fn graph_counts_match_networkx() {
    let f = fixture("graphs.json");
    for case in f["cases"].as_array().unwrap() {
        let n = case["n"].as_u64().unwrap() as usize;
        let edges: Vec<(u32, u32)> = case["edges"]
            .as_array()
            .unwrap()
            .iter()
            .map(|e| (e[0].as_u64().unwrap() as u32, e[1].as_u64().unwrap() as u32))
            .collect();
        let want = (case["components"].as_u64().unwrap() as usize, case["cycle_rank"].as_u64().unwrap() as usize);
        assert_eq!(nervure::graph::counts(n, &edges), want, "gnm_random_graph({n}, {}, seed={})", case["m"], case["seed"]);
    }
}

// ---------------------------------------------------------------------------------------
// Iris species: iris_species.json (sklearn load_iris; Fisher 1936).

/// Setosa is set apart from the other two species (Fisher 1936; the fixture stores the
/// smallest z-scored distance from a setosa row to any other row, 1.56). With DBSCAN
/// eps = 1.0, below that gap, no cluster can chain a setosa row to another species, so
/// every node must be all setosa or free of setosa (versicolor and virginica overlap and
/// may share nodes), and no edge may join a setosa node to another node. The lens is
/// principal component 1 of the z-scored four measurements, 10 intervals, overlap 0.3,
/// minPoints 3 (settings chosen for this test, not from a source).
#[test]
fn iris_setosa_nodes_share_no_edge_with_other_species() {
    let f = fixture("iris_species.json");
    let gap = f["setosa_gap_zscored"].as_f64().unwrap();
    assert!(gap > 1.0, "the fixture's gap {gap} must exceed eps");
    let cols = names(&f["columns"]);
    let t = table_of("iris", &cols, &matrix(&f["data"]));
    let species = names(&f["species"]);
    let s = settings(&cols, Lens::Principal { component: 1 }, 10, 0.3, Clustering::Dbscan { eps: 1.0, min_points: 3 });
    let b = nervure::build(&t, &s).unwrap();
    let is_setosa: Vec<bool> = b
        .nerve
        .nodes
        .iter()
        .enumerate()
        .map(|(k, node)| {
            let setosa = node.members.iter().filter(|&&r| species[r as usize] == "setosa").count();
            assert!(
                setosa == 0 || setosa == node.members.len(),
                "node {k} holds {setosa} setosa rows and {} others",
                node.members.len() - setosa
            );
            setosa > 0
        })
        .collect();
    assert!(is_setosa.iter().any(|&s| s) && is_setosa.iter().any(|&s| !s), "expected setosa and other nodes");
    for e in &b.nerve.edges {
        assert_eq!(is_setosa[e.a as usize], is_setosa[e.b as usize], "edge {}-{} joins setosa to another species", e.a, e.b);
    }
    assert!(b.summary.components >= 2, "setosa must be its own component: {:?}", b.summary);
    // Every setosa row is in a node or counted as noise.
    let covered: BTreeSet<u32> = b.nerve.nodes.iter().flat_map(|n| n.members.iter().copied()).collect();
    assert_eq!(b.summary.rows - covered.len(), b.summary.noise_rows, "noise count");
}

// ---------------------------------------------------------------------------------------
// Ingest: penguins.csv and penguins.json (palmerpenguins' shipped CSV, 'NA' cells).

/// Reading the palmerpenguins CSV gives 344 rows, numbers where the file has numbers,
/// 'NA' counted as missing, and the min, max and mean NumPy computed (relative 1e-12).
#[test]
fn penguins_csv_reads_as_the_package_ships_it() {
    let f = fixture("penguins.json");
    let path = format!("{}/tests/reference/fixtures/penguins.csv", env!("CARGO_MANIFEST_DIR"));
    let bytes = std::fs::read(&path).unwrap();
    let t = Table::from_csv_bytes("penguins.csv", &bytes, &ReadOptions::default()).unwrap();
    assert_eq!(t.n_rows as u64, f["rows"].as_u64().unwrap());
    assert_eq!(t.columns.iter().map(|c| c.name.clone()).collect::<Vec<_>>(), names(&f["columns"]));
    let summaries = t.summaries(&[]);
    for (name, want) in f["numbers"].as_object().unwrap() {
        let s = summaries.iter().find(|s| &s.name == name).unwrap();
        assert_eq!(s.kind, "number", "{name}");
        assert_eq!(s.missing as u64, want["missing"].as_u64().unwrap(), "{name} missing");
        for (got, key) in [(s.min, "min"), (s.max, "max"), (s.mean, "mean")] {
            let w = want[key].as_f64().unwrap();
            let g = got.unwrap_or_else(|| panic!("{name}: no {key}"));
            assert!((g - w).abs() <= 1e-12 * w.abs(), "{name} {key}: {g} vs {w}");
        }
    }
    for (name, want) in f["categories"].as_object().unwrap() {
        let s = summaries.iter().find(|s| &s.name == name).unwrap();
        assert_eq!(s.kind, "category", "{name}");
        assert_eq!(s.missing as u64, want["missing"].as_u64().unwrap(), "{name} missing");
        assert_eq!(s.levels, Some(want["levels"].as_array().unwrap().len()), "{name} levels");
    }
}

// ---------------------------------------------------------------------------------------
// Denoising: denoise.json (scikit-learn's NearestNeighbors and NumPy's quantile on the
// palmerpenguins measurements; see make_fixtures.py, denoise_fixture).

/// The rows set aside by `settings.denoise` are exactly those scikit-learn's distances and
/// NumPy's quantile set aside, for both measures and three (k, quantile) pairs.
#[test]
fn denoising_sets_aside_the_rows_scikit_learn_sets_aside() {
    use nervure::settings::{Denoise, DenoiseMeasure};
    let f = fixture("denoise.json");
    let path = format!("{}/tests/reference/fixtures/penguins.csv", env!("CARGO_MANIFEST_DIR"));
    let t = Table::from_csv_bytes("penguins.csv", &std::fs::read(&path).unwrap(), &ReadOptions::default()).unwrap();
    let columns: Vec<String> = f["columns"].as_array().unwrap().iter().map(|c| c.as_str().unwrap().to_string()).collect();
    let cases = f["cases"].as_array().unwrap();
    assert_eq!(cases.len(), 6);
    for c in cases {
        // The comparison is exact only if no value sits on the threshold within rounding.
        assert!(c["nearest_to_threshold"].as_f64().unwrap() > 1e-9, "{c}");
        let mut s = Settings::plain(columns.clone(), Lens::Principal { component: 1 }, CoverSettings::uniform(5, 0.3), Clustering::Dbscan { eps: 0.5, min_points: 5 });
        s.scaling = nervure::settings::Scaling::Zscore;
        s.denoise = Some(Denoise {
            measure: if c["measure"] == "distanceToMeasure" { DenoiseMeasure::DistanceToMeasure } else { DenoiseMeasure::NeighbourDistance },
            k: c["k"].as_u64().unwrap() as usize,
            quantile: c["quantile"].as_f64().unwrap(),
        });
        let p = nervure::points::build_points(&t, &s).unwrap();
        let got: Vec<u64> = p.set_aside.iter().map(|&r| r as u64 + 1).collect();
        let want: Vec<u64> = c["set_aside_data_rows"].as_array().unwrap().iter().map(|v| v.as_u64().unwrap()).collect();
        assert!(!want.is_empty());
        assert_eq!(got, want, "{c}");
        assert_eq!(p.rows.len() + p.set_aside.len() + p.left_out, t.n_rows);
    }
}
