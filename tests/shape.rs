//! The shape stage: extended persistence of small graphs worked out by hand, the fast
//! algorithm against the textbook matrix reduction on random graphs, the bottleneck
//! distance against persim's (fixture) and by hand, and bootstrap confidence and
//! comparisons on shapes whose topology is known by construction (a noisy circle has one
//! loop, a segment none).
//!
//! Definitions: Cohen-Steiner, Edelsbrunner, Harer 2009 (extended persistence);
//! Carrière, Michel, Oudot 2018 (its reading for Mapper graphs, the bootstrap, the
//! parameter rule). Not here: graph building itself (tests/topology.rs).

use std::f64::consts::PI;
use std::time::Instant;

use nervure::engine::Resampler;
use nervure::rng::SplitMix64;
use nervure::settings::{Clustering, CoverSettings, EdgeRule, Lens, Missing, Scaling};
use nervure::shape::bottleneck::bottleneck_points;
use nervure::shape::confidence::diagram_of;
use nervure::shape::persistence::{extended_persistence_by_reduction, of_build};
use nervure::shape::{bootstrap, bottleneck, compare, extended_persistence, suggest, sweep, Diagram, Grid, Kind};
use nervure::table::Column;
use nervure::{Error, Settings, Table, Workbench};
use serde_json::Value;

// ---------------------------------------------------------------------------------------
// Extended persistence by hand. Each graph is small enough to run both sweeps in one's
// head; the reasoning is written beside it. Conventions (module doc of
// nervure::shape::persistence): Component = Ext0 (min, max); Loop = Ext1 (ascending
// closing value, descending closing value); DownBranch = Ord0 (local min, merge value);
// UpBranch = Rel1 (local max, merge value).

fn both(values: &[f64], edges: &[(u32, u32)]) -> Diagram {
    let fast = extended_persistence(values, edges);
    let slow = extended_persistence_by_reduction(values, edges);
    assert_eq!(fast, slow, "union-find and matrix reduction disagree on {values:?} {edges:?}");
    fast
}

#[test]
fn path_with_a_dip_and_a_bump() {
    // Path 0-1-2-3 with values 0, 2, 1, 3. Ascending: 0 is born; 2 (value 1) is a second
    // minimum, its neighbours not yet in; node 1 (value 2) joins both, and the younger
    // minimum (value 1) dies there: a down branch (1, 2). Descending: 3 (value 3) and 1
    // (value 2) are maxima; node 2 (value 1) joins them and the younger (2) dies: an up
    // branch (2, 1). One component from 0 to 3; a tree has no loop.
    let d = both(&[0.0, 2.0, 1.0, 3.0], &[(0, 1), (1, 2), (2, 3)]);
    assert_eq!(d.points(Kind::Component), vec![(0.0, 3.0)]);
    assert_eq!(d.points(Kind::DownBranch), vec![(1.0, 2.0)]);
    assert_eq!(d.points(Kind::UpBranch), vec![(2.0, 1.0)]);
    assert_eq!(d.count(Kind::Loop), 0);
}

#[test]
fn cycle_of_four() {
    // Square 0-1-2-3-0 with values 0, 1, 3, 2: bottom node 0, top node 2. Ascending, each
    // node joins the single component, and the last, node 2 (value 3), closes the loop:
    // born at 3. Descending, the loop closes when node 0 (value 0) joins: dies at 0. One
    // minimum, one maximum: no branch.
    let d = both(&[0.0, 1.0, 3.0, 2.0], &[(0, 1), (1, 2), (2, 3), (0, 3)]);
    assert_eq!(d.points(Kind::Component), vec![(0.0, 3.0)]);
    assert_eq!(d.points(Kind::Loop), vec![(3.0, 0.0)]);
    assert_eq!(d.count(Kind::DownBranch) + d.count(Kind::UpBranch), 0);
}

#[test]
fn y_shape_forks_upward() {
    // Stem node 3 (value 0) to the fork node 0 (value 1), arms to nodes 1 (value 2) and 2
    // (value 3). Ascending: one minimum, every node joins it: no down branch. Descending:
    // tips 2 and 1 are maxima, they meet at the fork (value 1), the lower tip dies: an up
    // branch (2, 1). One component from 0 to 3.
    let d = both(&[1.0, 2.0, 3.0, 0.0], &[(3, 0), (0, 1), (0, 2)]);
    assert_eq!(d.points(Kind::Component), vec![(0.0, 3.0)]);
    assert_eq!(d.points(Kind::UpBranch), vec![(2.0, 1.0)]);
    assert_eq!(d.count(Kind::DownBranch) + d.count(Kind::Loop), 0);
    // Turned upside down (values negated), the fork points down: the same pair appears as
    // a down branch (-2, -1), the component runs from -3 to 0.
    let d = both(&[-1.0, -2.0, -3.0, 0.0], &[(3, 0), (0, 1), (0, 2)]);
    assert_eq!(d.points(Kind::DownBranch), vec![(-2.0, -1.0)]);
    assert_eq!(d.points(Kind::Component), vec![(-3.0, 0.0)]);
    assert_eq!(d.count(Kind::UpBranch), 0);
}

#[test]
fn figure_eight_two_lobes_on_a_shared_bottom() {
    // Two squares sharing node 0 (value 0). Lobe A: 0-1-2-3-0 with values 1, 2, 1.5; lobe
    // B: 0-4-5-6-0 with values 1.2, 4, 1.1. Ascending: node 2 (value 2) closes lobe A,
    // node 5 (value 4) closes lobe B: loops born at 2 and 4. Descending: the lobes without
    // node 0 are two components with tops 4 and 2; node 0 closes both loops (each dies at
    // 0) and joins the lobes, the lower top dying: an up branch (2, 0). No second
    // minimum: no down branch. Component from 0 to 4.
    let values = [0.0, 1.0, 2.0, 1.5, 1.2, 4.0, 1.1];
    let edges = [(0, 1), (1, 2), (2, 3), (3, 0), (0, 4), (4, 5), (5, 6), (6, 0)];
    let d = both(&values, &edges);
    assert_eq!(d.points(Kind::Component), vec![(0.0, 4.0)]);
    assert_eq!(d.points(Kind::Loop), vec![(4.0, 0.0), (2.0, 0.0)]);
    assert_eq!(d.points(Kind::UpBranch), vec![(2.0, 0.0)]);
    assert_eq!(d.count(Kind::DownBranch), 0);
}

#[test]
fn isolated_nodes_are_components_of_zero_length() {
    let d = both(&[5.0, 7.0], &[]);
    assert_eq!(d.points(Kind::Component), vec![(5.0, 5.0), (7.0, 7.0)]);
    assert_eq!(d.features.len(), 2);
}

// ---------------------------------------------------------------------------------------
// The fast algorithm against the matrix reduction on random graphs, with counts from the
// definition: C component points and E - V + C loop points (the cycle rank; common
// practice), and the band rule that justifies the loop pairing (module doc): the loop
// points born at or below a and dying at or above t are as many as the independent loops
// of the subgraph on nodes with values in [t, a].

fn random_graph(rng: &mut SplitMix64) -> (Vec<f64>, Vec<(u32, u32)>) {
    let n = 1 + rng.below(30);
    let ties = rng.below(2) == 0;
    let values: Vec<f64> = (0..n).map(|_| if ties { rng.below(5) as f64 } else { rng.normal() }).collect();
    let m = if n < 2 { 0 } else { rng.below(2 * n + 3) };
    let mut edges = Vec::with_capacity(m);
    while edges.len() < m {
        let (a, b) = (rng.below(n) as u32, rng.below(n) as u32);
        if a != b {
            edges.push((a.min(b), a.max(b)));
        }
    }
    (values, edges)
}

#[test]
fn union_find_agrees_with_matrix_reduction_on_random_graphs() {
    let mut rng = SplitMix64::new(2024);
    for case in 0..600 {
        let (values, edges) = random_graph(&mut rng);
        let d = both(&values, &edges);
        let (c, loops) = nervure::graph::counts(values.len(), &edges);
        assert_eq!(d.count(Kind::Component), c, "case {case}");
        assert_eq!(d.count(Kind::Loop), loops, "case {case}");
        for _ in 0..5 {
            let (mut t, mut a) = (rng.normal() * 1.5, rng.normal() * 1.5);
            if values.iter().all(|v| v.fract() == 0.0) {
                (t, a) = (rng.below(5) as f64, rng.below(5) as f64);
            }
            if t > a {
                std::mem::swap(&mut t, &mut a);
            }
            let inside: Vec<bool> = values.iter().map(|&v| t <= v && v <= a).collect();
            let keep: Vec<u32> = (0..values.len() as u32).filter(|&v| inside[v as usize]).collect();
            let band: Vec<(u32, u32)> = edges
                .iter()
                .filter(|&&(x, y)| inside[x as usize] && inside[y as usize])
                .map(|&(x, y)| (keep.binary_search(&x).unwrap() as u32, keep.binary_search(&y).unwrap() as u32))
                .collect();
            let want = nervure::graph::counts(keep.len(), &band).1;
            let got = d.of_kind(Kind::Loop).filter(|f| f.birth <= a && f.death >= t).count();
            assert_eq!(got, want, "case {case}: band [{t}, {a}]");
        }
    }
}

#[test]
fn fast_version_handles_a_large_graph() {
    // A random tree on 20 000 nodes plus 300 extra edges: E - V + C = 300 loops, far
    // larger than a Mapper graph. The counts must hold and it must be quick (the loop
    // pass costs about one forest search per loop).
    let mut rng = SplitMix64::new(9);
    let n = 20_000usize;
    let values: Vec<f64> = (0..n).map(|_| rng.next_f64()).collect();
    let mut edges: Vec<(u32, u32)> = (1..n).map(|v| (rng.below(v) as u32, v as u32)).collect();
    while edges.len() < n - 1 + 300 {
        let (a, b) = (rng.below(n) as u32, rng.below(n) as u32);
        if a != b {
            edges.push((a.min(b), a.max(b)));
        }
    }
    let t = Instant::now();
    let d = extended_persistence(&values, &edges);
    let took = t.elapsed();
    assert_eq!(d.count(Kind::Loop), 300);
    assert_eq!(d.count(Kind::Component), 1);
    eprintln!("20 000 nodes, 300 loops: {took:?}");
    assert!(took.as_secs_f64() < 5.0, "{took:?}");
}

// ---------------------------------------------------------------------------------------
// Bottleneck distance.

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
    let v: Value = serde_json::from_str(&text).unwrap();
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()), "{name} names no source");
    v
}

fn pairs(v: &Value) -> Vec<(f64, f64)> {
    v.as_array().unwrap().iter().map(|p| (p[0].as_f64().unwrap(), p[1].as_f64().unwrap())).collect()
}

#[test]
fn bottleneck_matches_persim() {
    // Source: persim 0.4.1, persim.bottleneck (tests/reference/fixtures/bottleneck.json).
    // Both take the same candidate values (L-infinity distances, half persistences), so
    // agreement is to rounding: 1e-12.
    let fx = fixture("bottleneck.json");
    for (i, case) in fx["cases"].as_array().unwrap().iter().enumerate() {
        let (a, b) = (pairs(&case["a"]), pairs(&case["b"]));
        let want = case["distance"].as_f64().unwrap();
        let got = bottleneck_points(&a, &b);
        assert!((got - want).abs() <= 1e-12, "case {i}: {got} vs persim {want}");
        // Symmetric, and unchanged when both diagrams are mirrored below the diagonal.
        assert_eq!(bottleneck_points(&b, &a), got, "case {i}: not symmetric");
        let flip = |v: &[(f64, f64)]| v.iter().map(|&(x, y)| (y, x)).collect::<Vec<_>>();
        assert_eq!(bottleneck_points(&flip(&a), &flip(&b)), got, "case {i}: mirrored");
    }
}

#[test]
fn bottleneck_by_hand() {
    // (0, 4) against (1, 4): moving it costs max(|0 - 1|, |4 - 4|) = 1; sending both to the
    // diagonal costs max(2, 1.5) = 2. So 1.
    assert_eq!(bottleneck_points(&[(0.0, 4.0)], &[(1.0, 4.0)]), 1.0);
    // (0, 10) against (0, 2) and (8, 10): matched to either costs 8, to the diagonal 5
    // (the other two then go to the diagonal at 1 each). So 5.
    assert_eq!(bottleneck_points(&[(0.0, 10.0)], &[(0.0, 2.0), (8.0, 10.0)]), 5.0);
    // (0, 4), (10, 12) against (0, 4.5): the long points pair at 0.5, (10, 12) goes to the
    // diagonal at 1. So 1.
    assert_eq!(bottleneck_points(&[(0.0, 4.0), (10.0, 12.0)], &[(0.0, 4.5)]), 1.0);
    // On extended diagrams, kind with kind.
    let loop_a = extended_persistence(&[0.0, 1.0, 2.0], &[(0, 1), (1, 2), (0, 2)]);
    let path = extended_persistence(&[0.0, 1.0, 2.0], &[(0, 1), (1, 2)]);
    // Same component (0, 2); the loop (2, 0) has nothing to pair with: 1.
    assert_eq!(bottleneck(&loop_a, &path), 1.0);
    let loop_b = extended_persistence(&[0.5, 1.0, 2.0], &[(0, 1), (1, 2), (0, 2)]);
    // Component (0, 2) vs (0.5, 2): 0.5; loop (2, 0) vs (2, 0.5): 0.5.
    assert_eq!(bottleneck(&loop_a, &loop_b), 0.5);
}

#[test]
fn bottleneck_keeps_kinds_apart() {
    // A triangle with values 0, 2, 2 has a component (0, 2) and a loop (2, 0). The fork
    // with node 0 (value 0) joined to two tips of value 2 has the same component and an
    // up branch (2, 0): the lower-ranked tip dies where the tips meet. The two diagrams
    // hold the same points, but a loop cannot pair with a branch, so each goes to the
    // diagonal at |0 - 2| / 2 = 1; matched blind to kind they would be 0 apart.
    let triangle = extended_persistence(&[0.0, 2.0, 2.0], &[(0, 1), (0, 2), (1, 2)]);
    let fork = extended_persistence(&[0.0, 2.0, 2.0], &[(0, 1), (0, 2)]);
    assert_eq!(triangle.points(Kind::Loop), vec![(2.0, 0.0)]);
    assert_eq!(fork.points(Kind::UpBranch), vec![(2.0, 0.0)]);
    assert_eq!(triangle.points(Kind::Component), fork.points(Kind::Component));
    assert_eq!(bottleneck(&triangle, &fork), 1.0);
    let all = |d: &Diagram| d.features.iter().map(|f| (f.birth, f.death)).collect::<Vec<_>>();
    assert_eq!(bottleneck_points(&all(&triangle), &all(&fork)), 0.0);
}

// ---------------------------------------------------------------------------------------
// Known shapes through the pipeline. A noisy circle (radius 1, radial noise sd 0.03) and
// a noisy segment (from (-1, 0) to (1, 0), sd 0.03), 400 points each, lens = x, 6
// intervals at overlap 0.3 (length 0.44), DBSCAN eps 0.35 minPoints 3. Why eps 0.35: the
// largest gap between n uniform angles is about (2 pi / n) ln n (common practice), 0.09
// for n = 400, and a bootstrap draw keeps about 63 % of the distinct points, widening the
// gaps by about 1.6; so eps must sit well above 0.15, while in the circle's inner
// intervals the two arcs are at least 1.3 apart. The circle's graph then has one loop
// (tests/topology.rs checks the same construction with other settings); the segment's
// graph is a path.

fn cloud_table(name: &str, pts: &[(f64, f64)]) -> Table {
    Table::from_columns(
        name,
        vec![Column::number("x", pts.iter().map(|p| p.0).collect()), Column::number("y", pts.iter().map(|p| p.1).collect())],
    )
    .unwrap()
}

fn circle(seed: u64, n: usize) -> Table {
    let mut rng = SplitMix64::new(seed);
    let pts: Vec<(f64, f64)> = (0..n)
        .map(|_| {
            let t = 2.0 * PI * rng.next_f64();
            let r = 1.0 + 0.03 * rng.normal();
            (r * t.cos(), r * t.sin())
        })
        .collect();
    cloud_table("circle", &pts)
}

fn segment(seed: u64, n: usize) -> Table {
    let mut rng = SplitMix64::new(seed);
    let pts: Vec<(f64, f64)> = (0..n).map(|_| (-1.0 + 2.0 * rng.next_f64() + 0.03 * rng.normal(), 0.03 * rng.normal())).collect();
    cloud_table("segment", &pts)
}

fn settings() -> Settings {
    Settings {
        version: 1,
        columns: vec!["x".into(), "y".into()],
        scaling: Scaling::None,
        missing: Missing::default(),
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
        lens: Lens::Column { column: "x".into() },
        cover: CoverSettings::uniform(6, 0.3),
        clustering: Clustering::Dbscan { eps: 0.35, min_points: 3 },
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
    }
}

fn go(_: f64) -> bool {
    true
}

#[test]
fn resampler_on_all_rows_gives_the_built_graph_s_diagram() {
    let t = circle(1, 400);
    let s = settings();
    let b = nervure::build(&t, &s).unwrap();
    let r = Resampler::new(&t, &s).unwrap();
    let all: Vec<u32> = (0..r.len() as u32).collect();
    assert_eq!(diagram_of(&r, &all, &s), of_build(&b));
    assert_eq!(of_build(&b).count(Kind::Loop), b.summary.loops);
}

#[test]
fn noisy_circle_has_one_significant_loop() {
    for seed in [1, 2] {
        let t0 = Instant::now();
        let c = bootstrap(&circle(seed, 400), &settings(), 25, 0.05, seed, &mut go).unwrap();
        assert_eq!(c.diagram.count(Kind::Loop), 1, "seed {seed}: {:?}", c.diagram);
        assert_eq!(c.significant_count(Kind::Loop), 1, "seed {seed}: threshold {} diagram {:?}", c.threshold, c.diagram);
        assert_eq!(c.distances.len(), 25);
        assert!(c.threshold < 0.5, "seed {seed}: threshold {}", c.threshold);
        eprintln!("circle seed {seed}: threshold {:.3}, B = 25 in {:?}", c.threshold, t0.elapsed());
    }
}

#[test]
fn segment_has_no_significant_loop() {
    for seed in [1, 2] {
        let c = bootstrap(&segment(seed, 400), &settings(), 25, 0.05, seed, &mut go).unwrap();
        assert_eq!(c.significant_count(Kind::Loop), 0, "seed {seed}: {:?}", c.diagram);
        // The segment's one component spans the lens range, far above any threshold.
        assert_eq!(c.significant_count(Kind::Component), 1, "seed {seed}");
    }
}

#[test]
fn same_shape_is_within_threshold_and_loop_against_segment_is_not() {
    let s = settings();
    let same = compare(&circle(3, 400), &circle(4, 400), &s, 20, 0.05, 7, &mut go).unwrap();
    assert!(!same.differ, "two circles: distance {} threshold {}", same.distance, same.threshold);
    let other = compare(&circle(3, 400), &segment(4, 400), &s, 20, 0.05, 7, &mut go).unwrap();
    assert!(other.differ, "circle vs segment: distance {} threshold {}", other.distance, other.threshold);
    // The circle's loop, about 0.8 from the diagonal, has nothing to pair with.
    assert!(other.distance > 0.5, "{}", other.distance);
}

#[test]
fn bootstrap_can_be_cancelled_and_reports_progress() {
    let mut seen = Vec::new();
    let r = bootstrap(&circle(1, 120), &settings(), 10, 0.05, 1, &mut |x| {
        seen.push(x);
        x < 0.3
    });
    assert_eq!(r.unwrap_err(), Error::Cancelled);
    assert!(seen.windows(2).all(|w| w[0] <= w[1]) && seen.len() >= 2);
    // Same seed, same distances.
    let a = bootstrap(&circle(1, 120), &settings(), 5, 0.05, 3, &mut go).unwrap();
    let b = bootstrap(&circle(1, 120), &settings(), 5, 0.05, 3, &mut go).unwrap();
    assert_eq!(a.distances, b.distances);
}

// ---------------------------------------------------------------------------------------
// Suggested settings (Carrière, Michel, Oudot 2018 rule; nervure::shape::suggest).

#[test]
fn suggested_settings_follow_the_rule_and_recover_the_circle() {
    let t = circle(5, 400);
    let s = settings();
    let sg = suggest(&t, &s, 1).unwrap();
    // Subsample size ceil(n / (ln n)^1.5) for n = 400: 400 / 5.99^1.5 = 27.3 -> 28.
    assert_eq!(sg.subsample_size, 28);
    assert_eq!(sg.hausdorff.len(), 10);
    let mean = sg.hausdorff.iter().sum::<f64>() / 10.0;
    assert!((sg.delta - mean).abs() < 1e-15);
    // 28 of 400 points on a unit circle leave gaps; the largest uncovered stretch is
    // several times the mean spacing 2 pi / 28 = 0.22, and below the radius.
    assert!(sg.delta > 0.05 && sg.delta < 1.0, "delta {}", sg.delta);
    // The lens is x, 1-Lipschitz: no jump between neighbours can exceed their distance.
    assert!(sg.largest_lens_jump <= sg.delta + 1e-12);
    assert!((sg.resolution - sg.largest_lens_jump / 0.4).abs() < 1e-12);
    let n = sg.settings.cover.intervals;
    let span = 2.0 * 1.1; // about; the exact span is the lens range
    assert!(n >= 1 && (span / sg.resolution) < (n as f64 + 2.0), "intervals {n}");
    assert_eq!(sg.settings.clustering, Clustering::Dbscan { eps: sg.delta, min_points: 1 });
    assert!(!sg.changes.is_empty());
    assert!(sg.warnings.is_empty(), "{:?}", sg.warnings);
    let b = nervure::build(&t, &sg.settings).unwrap();
    assert_eq!((b.summary.components, b.summary.loops), (1, 1), "{:?} with {:?}", b.summary, sg.settings.cover);
    let len = (b.lens_range.1 - b.lens_range.0) / (n as f64 - (n as f64 - 1.0) * 0.4);
    assert!(len <= sg.resolution + 1e-12, "interval length {len} above resolution {}", sg.resolution);
}

/// The paper's setting (Carrière, Michel, Oudot 2018): points sampled on a curve with a
/// filter whose Reeb graph is known, here a unit circle under its height y (Reeb graph: a
/// loop). As n grows the estimated scale δ_n shrinks (their estimator goes to 0 with the
/// sampling distance), the resolution follows it, and the suggested graph has the Reeb
/// graph's 1 component and 1 loop at every size, with the paper's own count in use.
#[test]
fn suggested_settings_behave_as_the_paper_describes_on_a_circle_under_its_height() {
    let mut deltas = Vec::new();
    for n in [500, 2000, 8000] {
        let mut rng = nervure::rng::SplitMix64::new(n as u64);
        let (x, y): (Vec<f64>, Vec<f64>) = (0..n)
            .map(|_| {
                let t = 2.0 * std::f64::consts::PI * rng.next_f64();
                (t.cos() + 0.01 * rng.normal(), t.sin() + 0.01 * rng.normal())
            })
            .unzip();
        let t = Table::from_columns("circle", vec![Column::number("x", x), Column::number("y", y)]).unwrap();
        let s = Settings::plain(vec!["x".into(), "y".into()], Lens::Column { column: "y".into() }, CoverSettings::uniform(5, 0.3), Clustering::Dbscan { eps: 0.1, min_points: 5 });
        let sg = suggest(&t, &s, 1).unwrap();
        assert!(!sg.fallback, "n = {n}: {:?}", sg.warnings);
        assert_eq!(sg.settings.cover.intervals, sg.paper_intervals);
        let b = nervure::build(&t, &sg.settings).unwrap();
        assert_eq!((b.summary.components, b.summary.loops), (1, 1), "n = {n}: {:?} with {:?}", b.summary, sg.settings.cover);
        deltas.push(sg.delta);
    }
    assert!(deltas[0] > deltas[1] && deltas[1] > deltas[2], "δ_n should shrink as n grows: {deltas:?}");
}

/// Wide data: the demo's rows in its 12 columns (invented data; the point is the shape of
/// the table, a few thousand rows in 12 dimensions). The paper's count is below 3 there
/// (see the module comment of `nervure::shape::suggest`); the suggestion says why and
/// gives the automatic rule's cover, a usable count.
#[test]
fn suggestion_on_wide_data_says_why_and_gives_a_usable_count() {
    let path = format!("{}/demo/river-sensors.csv", env!("CARGO_MANIFEST_DIR"));
    let table = Table::from_csv_bytes("river-sensors.csv", &std::fs::read(&path).unwrap(), &Default::default()).unwrap();
    let mut s = nervure::auto::auto_settings(&table).unwrap();
    let numeric: Vec<String> = table.columns.iter().filter(|c| c.as_numbers().is_some()).map(|c| c.name.clone()).take(12).collect();
    s.columns = numeric;
    s.lens = Lens::Principal { component: 1 };
    let sg = suggest(&table, &s, 1).unwrap();
    assert!(sg.paper_intervals < nervure::shape::suggest::MIN_USABLE, "paper's count {}", sg.paper_intervals);
    assert!(sg.fallback);
    assert!(sg.settings.cover.intervals >= nervure::auto::MIN_INTERVALS, "{:?}", sg.settings.cover);
    assert!(sg.warnings.iter().any(|w| w.contains("dimensions") && w.contains("automatic rule")), "{:?}", sg.warnings);
    let b = nervure::build(&table, &sg.settings).unwrap();
    assert!(b.summary.nodes >= sg.settings.cover.intervals, "{:?}", b.summary);
}

// ---------------------------------------------------------------------------------------
// Sweep.

#[test]
fn sweep_cells_match_single_builds() {
    let t = circle(6, 400);
    let mut bench = Workbench::new();
    bench.set_table(t.clone());
    let grid = Grid { intervals: vec![4, 6, 9], overlaps: vec![0.2, 0.4], eps: vec![] };
    let cells = sweep(&mut bench, &settings(), &grid, 0, 0.05, 1, &mut go).unwrap();
    assert_eq!(cells.len(), 6);
    for c in &cells {
        let mut s = settings();
        s.cover = CoverSettings::uniform(c.intervals, c.overlap);
        let b = nervure::build(&t, &s).unwrap();
        assert_eq!((c.components, c.loops, c.nodes), (b.summary.components, b.summary.loops, b.summary.nodes));
        assert!(c.significant.is_none());
    }
    let grid = Grid { intervals: vec![6], overlaps: vec![0.3], eps: vec![0.35, 0.05] };
    let cells = sweep(&mut bench, &settings(), &grid, 8, 0.05, 1, &mut go).unwrap();
    assert_eq!(cells.len(), 2);
    assert_eq!(cells[0].significant_loops, Some(1), "{:?}", cells[0]);
    assert!(cells.iter().all(|c| c.threshold.is_some()));
    let cancelled = sweep(&mut bench, &settings(), &grid, 0, 0.05, 1, &mut |x| x < 0.4);
    assert_eq!(cancelled.unwrap_err(), Error::Cancelled);
}

// ---------------------------------------------------------------------------------------
// Timing on the demo (run with `cargo test --release --test shape -- --ignored --nocapture`).

#[test]
#[ignore]
fn time_bootstrap_100_on_the_demo() {
    let path = format!("{}/demo/river-sensors.csv", env!("CARGO_MANIFEST_DIR"));
    let bytes = std::fs::read(&path).unwrap();
    let table = Table::from_csv_bytes("river-sensors.csv", &bytes, &Default::default()).unwrap();
    let mut bench = Workbench::new();
    bench.set_table(table.clone());
    let s = bench.auto_settings().unwrap();
    let t0 = Instant::now();
    let b = nervure::build(&table, &s).unwrap();
    let one = t0.elapsed();
    let t0 = Instant::now();
    let c = bootstrap(&table, &s, 100, 0.05, s.seed, &mut go).unwrap();
    let all = t0.elapsed();
    eprintln!(
        "river-sensors: {} rows, {} nodes, {} edges; one build {:?}; B = 100 bootstrap {:?}; threshold {:.4}; significant {} of {} features ({} loops of {})",
        b.summary.rows,
        b.summary.nodes,
        b.summary.edges,
        one,
        all,
        c.threshold,
        c.total_significant(),
        c.diagram.features.len(),
        c.significant_count(Kind::Loop),
        c.diagram.count(Kind::Loop)
    );
    let t0 = Instant::now();
    let sg = suggest(&table, &s, 1).unwrap();
    eprintln!("suggest {:?}: delta {:.4}, intervals {}, changes {:?}, warnings {:?}", t0.elapsed(), sg.delta, sg.settings.cover.intervals, sg.changes, sg.warnings);
}

// ---------------------------------------------------------------------------------------
// Step-wise versions (for the page's worker, which must see a cancel between draws):
// the same arguments give exactly the one-shot results, whatever the step size.

#[test]
fn stepwise_bootstrap_equals_one_shot() {
    use nervure::shape::Bootstrap;
    let t = circle(1, 200);
    let s = settings();
    let once = bootstrap(&t, &s, 12, 0.1, 9, &mut go).unwrap();
    for k in [1, 5, 12, 100] {
        let mut b = Bootstrap::new(&t, &s, 12, 0.1, 9).unwrap();
        assert_eq!(b.diagram(), &once.diagram);
        let mut seen = vec![b.done()];
        while !b.is_finished() {
            seen.push(b.step(k));
        }
        assert_eq!(*seen.last().unwrap(), 12);
        assert!(seen.windows(2).all(|w| w[1] > w[0] && w[1] - w[0] <= k), "step {k}: {seen:?}");
        assert_eq!(b.finish(), once, "step size {k}");
    }
    // finish() before the last step runs the rest.
    let mut b = Bootstrap::new(&t, &s, 12, 0.1, 9).unwrap();
    b.step(3);
    assert_eq!(b.finish(), once);
    // A different seed draws differently (the check above can fail).
    assert_ne!(Bootstrap::new(&t, &s, 12, 0.1, 10).unwrap().finish().distances, once.distances);
    assert!(Bootstrap::new(&t, &s, 0, 0.1, 9).unwrap_err().to_string().contains("draw"));
}

#[test]
fn stepwise_comparison_equals_one_shot() {
    use nervure::shape::Comparing;
    let s = settings();
    let (a, b) = (circle(3, 200), segment(4, 200));
    let once = compare(&a, &b, &s, 8, 0.05, 7, &mut go).unwrap();
    let mut c = Comparing::new(&a, &b, &s, 8, 0.05, 7).unwrap();
    assert_eq!(c.total(), 16);
    let mut steps = 0;
    while c.done() < c.total() {
        c.step(3);
        steps += 1;
    }
    assert_eq!(steps, 6); // ceil(16 / 3)
    assert_eq!(c.finish(), once);
}

#[test]
fn stepwise_sweep_equals_one_shot() {
    use nervure::shape::Sweeping;
    let t = circle(6, 300);
    let mut bench = Workbench::new();
    bench.set_table(t.clone());
    let grid = Grid { intervals: vec![4, 6], overlaps: vec![0.2, 0.4], eps: vec![0.35, 0.2] };
    let once = sweep(&mut bench, &settings(), &grid, 4, 0.1, 3, &mut go).unwrap();
    let mut sw = Sweeping::new(&t, &settings(), &grid, 4, 0.1, 3).unwrap();
    assert_eq!(sw.total(), 8);
    assert_eq!(sw.step(3).unwrap(), 3);
    assert_eq!(sw.cells(), &once[..3]);
    assert_eq!(sw.finish().unwrap(), once);
    // Each cell's threshold is the bootstrap of that cell's own settings (its cover too).
    for c in &once {
        let s = nervure::shape::sweep::cell_settings(&settings(), c.intervals, c.overlap, c.eps);
        assert_eq!(c.threshold, Some(bootstrap(&t, &s, 4, 0.1, 3, &mut go).unwrap().threshold), "{c:?}");
        assert_eq!(c.nodes, nervure::build(&t, &s).unwrap().summary.nodes, "{c:?}");
    }
    let bad = Grid { intervals: vec![], overlaps: vec![0.2], eps: vec![] };
    assert!(Sweeping::new(&t, &settings(), &bad, 0, 0.1, 3).is_err());
}
