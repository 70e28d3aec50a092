//! Shapes whose topology is known by construction, run through the whole pipeline
//! (`nervure::build`), asserting the graph's connected components, independent loops
//! (E - V + C) and, for the branching shape, its leaves (nodes of degree 1).
//!
//! Each shape is a seeded noisy sample, in the plane and again in 10 dimensions under a
//! random rotation and translation, and each is tried with three seeds. The settings are
//! stated beside each shape with the reason they give the right answer (a filter suited
//! to the shape, an eps well below the gap between the parts that must stay apart and
//! well above the spacing of neighbouring points). Points are not rescaled
//! (scaling "none"), so eps is in the shape's own units.
//!
//! Not here: comparisons with outside libraries (tests/reference.rs).

mod common;

use common::clouds::{circle, lift, segment, tripod, Cloud};
use nervure::rng::SplitMix64;
use nervure::settings::{Clustering, CoverSettings, EdgeRule, Lens, Missing, Scaling, Spread};
use nervure::table::Column;
use nervure::{Build, Settings, Table};

const SEEDS: [u64; 3] = [1, 2, 3];

fn run(name: &str, pts: &Cloud, lens: Lens, intervals: usize, overlap: f64, eps: f64, min_points: usize) -> Build {
    let d = pts[0].len();
    let names: Vec<String> = (0..d).map(|j| format!("c{j}")).collect();
    let cols = names.iter().enumerate().map(|(j, c)| Column::number(c.clone(), pts.iter().map(|p| p[j]).collect())).collect();
    let table = Table::from_columns(name, cols).unwrap();
    let s = Settings {
        version: 1,
        columns: names,
        scaling: Scaling::None,
        missing: Missing::default(),
        lens,
        cover: CoverSettings::uniform(intervals, overlap),
        clustering: Clustering::Dbscan { eps, min_points },
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    nervure::build(&table, &s).unwrap_or_else(|e| panic!("{name}: {e}"))
}

/// Asserts components and loops, and that the shape was not mostly thrown away as noise
/// (at most 2 % of rows in no node; common practice for a clean sample).
fn expect(name: &str, b: &Build, components: usize, loops: usize) {
    let s = &b.summary;
    let got = (s.components, s.loops);
    assert_eq!(got, (components, loops), "{name}: (components, loops) {got:?}, want {:?}; {s:?}", (components, loops));
    assert!(s.noise_rows * 50 <= s.rows, "{name}: {} of {} rows are noise", s.noise_rows, s.rows);
}

fn leaves(b: &Build) -> usize {
    b.nerve.degrees().iter().filter(|&&d| d == 1).count()
}

// ---------------------------------------------------------------------------------------
// A noisy circle: one component, one loop.
//
// Radius 1, radial noise sd 0.03, 800 points (about 127 per unit of arc). Filter: the x
// coordinate, 10 intervals, overlap 0.3 (interval length 0.27): each end interval holds
// one arc through x = ±1, each inner interval two arcs at least 1.18 apart. DBSCAN eps
// 0.15 (about 35 neighbours along the arc, far below 1.18), minPoints 5.

#[test]
fn circle_has_one_loop() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let pts = circle(&mut rng, 800, 0.0, 0.0, 1.0, 0.03);
        let b = run("circle", &pts, Lens::Column { column: "c0".into() }, 10, 0.3, 0.15, 5);
        expect(&format!("circle seed {seed}"), &b, 1, 1);
    }
}

// The same circle in 10-D, rotated and translated, noise sd 0.02 in every coordinate
// (about 0.09 between two points off the plane, so eps grows to 0.2). Filter: principal
// component 1, which is rotation-invariant and lies in the circle's plane (variance 0.5
// there against 0.0004 off it), so it slices the circle as a coordinate does.

#[test]
fn circle_in_10d_under_rotation_has_one_loop() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let flat = circle(&mut rng, 800, 0.0, 0.0, 1.0, 0.03);
        let pts = lift(&mut rng, &flat, 0.02);
        let b = run("circle 10-D", &pts, Lens::Principal { component: 1 }, 10, 0.3, 0.2, 5);
        expect(&format!("circle 10-D seed {seed}"), &b, 1, 1);
    }
}

// ---------------------------------------------------------------------------------------
// Two disjoint circles: two components, two loops.
//
// Radius 1, centres (0, 3) and (0, -3), nearest points 4 apart. Filter: x, which both
// circles span, so each is sliced as the single circle above; eps 0.15 is far below 4.
// In 10-D: principal component 2 (component 1 runs between the centres, variance 9.5;
// component 2 lies along x, variance 0.5).

#[test]
fn two_circles_have_two_components_and_two_loops() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let mut pts = circle(&mut rng, 700, 0.0, 3.0, 1.0, 0.03);
        pts.extend(circle(&mut rng, 700, 0.0, -3.0, 1.0, 0.03));
        let b = run("two circles", &pts, Lens::Column { column: "c0".into() }, 10, 0.3, 0.15, 5);
        expect(&format!("two circles seed {seed}"), &b, 2, 2);
        let pts = lift(&mut rng, &pts, 0.02);
        let b = run("two circles 10-D", &pts, Lens::Principal { component: 2 }, 10, 0.3, 0.2, 5);
        expect(&format!("two circles 10-D seed {seed}"), &b, 2, 2);
    }
}

// ---------------------------------------------------------------------------------------
// A figure eight: one component, two loops.
//
// Two unit circles touching at the origin (centres (±1, 0)), 700 points each. Filter: x,
// 11 intervals, overlap 0.3, so the middle interval is [-0.25, 0.25] and holds the
// crossing as one X-shaped cluster; its neighbours [-0.6, -0.1] and [0.1, 0.6] hold two
// arcs of one circle each, at least 0.87 apart. eps 0.15. In 10-D: principal component 1
// (along the centres, variance 1.5 against 0.5).

#[test]
fn figure_eight_has_two_loops() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let mut pts = circle(&mut rng, 700, -1.0, 0.0, 1.0, 0.03);
        pts.extend(circle(&mut rng, 700, 1.0, 0.0, 1.0, 0.03));
        let b = run("figure eight", &pts, Lens::Column { column: "c0".into() }, 11, 0.3, 0.15, 5);
        expect(&format!("figure eight seed {seed}"), &b, 1, 2);
        let pts = lift(&mut rng, &pts, 0.02);
        let b = run("figure eight 10-D", &pts, Lens::Principal { component: 1 }, 11, 0.3, 0.2, 5);
        expect(&format!("figure eight 10-D seed {seed}"), &b, 1, 2);
    }
}

// ---------------------------------------------------------------------------------------
// Two separate segments: two components, no loop.
//
// Parallel segments from (0, 0) to (6, 0) and from (0, 2) to (6, 2), noise sd 0.03, 400
// points each (about 67 per unit). Filter: x, 8 intervals, overlap 0.25: every interval
// holds one piece of each segment, 2 apart; eps 0.2. In 10-D: principal component 1
// (along the segments, variance 3 against 1 across).

#[test]
fn two_segments_have_two_components_and_no_loop() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let mut pts = segment(&mut rng, 400, [0.0, 0.0], [6.0, 0.0], 0.03);
        pts.extend(segment(&mut rng, 400, [0.0, 2.0], [6.0, 2.0], 0.03));
        let b = run("two segments", &pts, Lens::Column { column: "c0".into() }, 8, 0.25, 0.2, 5);
        expect(&format!("two segments seed {seed}"), &b, 2, 0);
        let pts = lift(&mut rng, &pts, 0.02);
        let b = run("two segments 10-D", &pts, Lens::Principal { component: 1 }, 8, 0.25, 0.25, 5);
        expect(&format!("two segments 10-D seed {seed}"), &b, 2, 0);
    }
}

// ---------------------------------------------------------------------------------------
// A Y: one component, no loop, three leaves.
//
// Three arms of length 2 from the origin, 120 degrees apart, 300 points each, noise sd
// 0.03. Filter: RMS eccentricity (Singh, Mémoli, Carlsson 2007), which is
// rotation-invariant and grows along each arm: by symmetry, a point at distance r from the
// centre has eccentricity sqrt(r² + 4/3) (from 1.15 at the centre to 2.31 at a tip). With
// 8 intervals, overlap 0.3, the lowest interval holds the centre out to r = 0.70 (one
// cluster), the next starts at r = 0.58 where the arms are 1.0 apart, and the highest
// holds the three tips: a tree with 3 leaves. eps 0.2, and 0.25 in 10-D.

#[test]
fn y_has_three_leaves() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let pts = tripod(&mut rng, 300, 0.03);
        let lens = Lens::Eccentricity { norm: Spread::Rms };
        let b = run("Y", &pts, lens.clone(), 8, 0.3, 0.2, 5);
        expect(&format!("Y seed {seed}"), &b, 1, 0);
        assert_eq!(leaves(&b), 3, "Y seed {seed}: degrees {:?}", b.nerve.degrees());
        let pts = lift(&mut rng, &pts, 0.02);
        let b = run("Y 10-D", &pts, lens, 8, 0.3, 0.25, 5);
        expect(&format!("Y 10-D seed {seed}"), &b, 1, 0);
        assert_eq!(leaves(&b), 3, "Y 10-D seed {seed}: degrees {:?}", b.nerve.degrees());
    }
}

// ---------------------------------------------------------------------------------------
// The demo file (demo/make_demo.py, invented): water temperature and dissolved oxygen
// follow the hour of day with oxygen three hours ahead, so one day traces one loop
// (demo/README.md). Filter: principal component 1 of the two columns z-scored, 12
// intervals, overlap 0.35; DBSCAN eps 0.2, minPoints 8, which leaves the sparse hole's
// few points as noise. -9999 is declared a fill value (the file's conductivity sentinel;
// not a chosen column here, so it changes nothing but is what a user would set).

#[test]
fn demo_temperature_and_oxygen_make_one_loop() {
    let path = format!("{}/demo/river-sensors.csv", env!("CARGO_MANIFEST_DIR"));
    let bytes = std::fs::read(&path).unwrap();
    let table = Table::from_csv_bytes("river-sensors.csv", &bytes, &nervure::ReadOptions::default()).unwrap();
    let s = Settings {
        version: 1,
        columns: vec!["water_temp_c".into(), "dissolved_oxygen_mg_l".into()],
        scaling: Scaling::Zscore,
        missing: Missing { fill_values: vec![-9999.0], ..Default::default() },
        lens: Lens::Principal { component: 1 },
        cover: CoverSettings::uniform(12, 0.35),
        clustering: Clustering::Dbscan { eps: 0.2, min_points: 8 },
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    let b = nervure::build(&table, &s).unwrap();
    expect("demo temperature-oxygen", &b, 1, 1);
}

// ---------------------------------------------------------------------------------------
// Two filters at once (a 2-D product cover) and triangles of the nerve.
//
// With a grid of cells, up to four cells meet at a corner; their nodes form triangles in
// the graph, and E - V + C counts every one of them as a loop. The nerve's first Betti
// number with those triangles filled (`filledLoops`) does not. By the nerve theorem
// (Borsuk 1948; a cover whose cells meet the shape in convex pieces has a nerve with the
// shape's homotopy type) a filled square gives no loop and an annulus gives one.
//
// Square: 4000 uniform points in [0, 1]², filters x and y, 5 × 5 intervals, overlap 0.3
// (cell side 0.263, corner overlaps 0.079 square, about 25 points each); eps 0.06 (spacing
// about 0.016), minPoints 3: one cluster per cell. Annulus: 6000 points between radii 0.5
// and 1, 6 × 6 intervals, overlap 0.35, eps 0.08.

fn run_grid(name: &str, pts: &Cloud, intervals: usize, overlap: f64, eps: f64) -> Build {
    let cols = (0..2).map(|j| Column::number(format!("c{j}"), pts.iter().map(|p| p[j]).collect())).collect();
    let table = Table::from_columns(name, cols).unwrap();
    let s = Settings {
        version: 1,
        columns: vec!["c0".into(), "c1".into()],
        scaling: Scaling::None,
        missing: Missing::default(),
        lens: Lens::Column { column: "c0".into() },
        cover: CoverSettings::uniform(intervals, overlap),
        clustering: Clustering::Dbscan { eps, min_points: 3 },
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
        lens2: Some(Lens::Column { column: "c1".into() }),
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    nervure::build(&table, &s).unwrap_or_else(|e| panic!("{name}: {e}"))
}

#[test]
fn filled_square_under_a_grid_cover_has_no_loop_once_triangles_are_filled() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let pts: Cloud = (0..4000).map(|_| vec![rng.next_f64(), rng.next_f64()]).collect();
        let b = run_grid("square", &pts, 5, 0.3, 0.06);
        let s = &b.summary;
        assert_eq!(s.nodes, 25, "square seed {seed}: one node per cell; {s:?}");
        assert_eq!(s.components, 1);
        assert!(s.loops > 0, "square seed {seed}: the graph has triangle loops; {s:?}");
        assert_eq!(s.filled_loops, 0, "square seed {seed}: {s:?}");
    }
}

#[test]
fn annulus_under_a_grid_cover_has_one_loop_once_triangles_are_filled() {
    for seed in SEEDS {
        let mut rng = SplitMix64::new(seed);
        let mut pts: Cloud = Vec::new();
        while pts.len() < 6000 {
            let (x, y) = (2.0 * rng.next_f64() - 1.0, 2.0 * rng.next_f64() - 1.0);
            let r = (x * x + y * y).sqrt();
            if (0.5..=1.0).contains(&r) {
                pts.push(vec![x, y]);
            }
        }
        let b = run_grid("annulus", &pts, 6, 0.35, 0.08);
        let s = &b.summary;
        assert_eq!(s.components, 1, "annulus seed {seed}: {s:?}");
        assert!(s.loops > 1, "annulus seed {seed}: the graph overstates; {s:?}");
        assert_eq!(s.filled_loops, 1, "annulus seed {seed}: {s:?}");
    }
}

#[test]
fn filled_loops_equal_graph_loops_for_one_filter_below_half_overlap() {
    // With one filter and overlap below one half no three intervals meet, so the nerve has
    // no triangle and the two counts agree (by the definition of the uniform cover).
    let mut rng = SplitMix64::new(7);
    let pts = circle(&mut rng, 800, 0.0, 0.0, 1.0, 0.03);
    let b = run("circle", &pts, Lens::Column { column: "c0".into() }, 10, 0.3, 0.15, 5);
    assert!(b.nerve.triangles(1).is_empty());
    assert_eq!(b.summary.filled_loops, b.summary.loops);
}
