//! Shapes of known topology through the balanced cover and the 2-D product cover: the
//! graph must find the shape's components and loops (its first Betti number, counted on
//! the graph as E - V + C). The shapes are synthetic, their topology known by construction.
//!
//! Not here: the 1-D uniform cover on the same shapes (tests/topology.rs).

use nervure::rng::SplitMix64;
use nervure::settings::*;
use nervure::table::{Column, Table};
use nervure::Build;

const SEEDS: [u64; 3] = [1, 2, 3];

/// `n` points on the unit circle at uniform angles, radial noise sd 0.03.
fn circle(seed: u64, n: usize) -> Table {
    let mut r = SplitMix64::new(seed);
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for _ in 0..n {
        let t = r.next_f64() * std::f64::consts::TAU;
        let rad = 1.0 + 0.03 * r.normal();
        x.push(rad * t.cos());
        y.push(rad * t.sin());
    }
    Table::from_columns("circle", vec![Column::number("x", x), Column::number("y", y)]).unwrap()
}

fn settings(cover: CoverSettings, lens2: Option<Lens>) -> Settings {
    let s = Settings {
        version: SETTINGS_VERSION,
        columns: vec!["x".into(), "y".into()],
        scaling: Scaling::None,
        missing: Missing::default(),
        lens: Lens::Column { column: "x".into() },
        cover: cover.clone(),
        clustering: Clustering::Dbscan { eps: 0.15, min_points: 5 },
        edges: EdgeRule::default(),
        seed: 1,
        derived: Vec::new(),
        cover2: lens2.as_ref().map(|_| cover),
        lens2,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    s.validate().unwrap();
    s
}

fn expect(name: &str, b: &Build, components: usize, loops: usize) {
    let s = &b.summary;
    assert_eq!((s.components, s.loops), (components, loops), "{name}: {s:?}");
    // At most 2 % of rows in no node (common practice for a clean sample).
    assert!(s.noise_rows * 50 <= s.rows, "{name}: {} noise rows of {}", s.noise_rows, s.rows);
}

// A noisy circle, filters (x, y), a 3 × 3 product cover with overlap 0.2, uniform or
// balanced: 1 component, 1 loop, and the graph is a cycle of 8 nodes.
//
// Why. Uniform: the range is about [-1.09, 1.09], so the intervals are about
// [-1.09, -0.25], [-0.42, 0.42], [0.25, 1.09]. The middle cell lies inside radius 0.6, so
// the circle (radius 1 ± 0.1) misses it and crosses the 8 border cells, each in one arc.
// Cells next to each other around the ring share a band the circle crosses (for example
// y in [0.25, 0.42] at x ≈ 0.95), so consecutive arcs share rows: 8 edges. Any other two
// border cells meet at most in a corner square |x|, |y| in [0.25, 0.42], inside radius
// 0.6, which the circle misses: no further edges, so no triangles add graph loops.
// Balanced: on a circle at uniform angles x = cos θ has quantile function
// Q(p) = -cos(π p); the rank bounds [0, 0.385], [0.308, 0.692], [0.615, 1] give intervals
// about [-1.09, -0.35], [-0.57, 0.57], [0.35, 1.09], corner squares inside radius 0.81,
// and the same 8-cycle. DBSCAN eps 0.15 with about 127 points per unit of arc keeps each
// arc in one cluster.
#[test]
fn circle_through_a_product_cover_is_one_loop_of_eight_nodes() {
    for seed in SEEDS {
        let t = circle(seed, 800);
        for kind in [CoverKind::Uniform, CoverKind::Balanced] {
            let s = settings(CoverSettings { intervals: 3, overlap: 0.2, kind }, Some(Lens::Column { column: "y".into() }));
            let b = nervure::build(&t, &s).unwrap();
            let name = format!("circle seed {seed} {kind:?}");
            expect(&name, &b, 1, 1);
            assert_eq!(b.summary.nodes, 8, "{name}");
            assert!(b.nerve.degrees().iter().all(|&d| d == 2), "{name}: a cycle");
            // The middle cell (1, 1) = element 4 holds no node.
            assert!(b.nerve.nodes.iter().all(|n| n.element != 4), "{name}");
        }
    }
}

// A noisy circle, filter x alone, a balanced cover of 10 intervals with overlap 0.3:
// 1 component, 1 loop. Why: the two end intervals hold one arc each (rank bounds [0, 0.137]
// and [0.863, 1], x beyond ±0.90, one arc through x = ±1); every inner interval starts at
// |x| <= 0.955, where the upper and lower arcs are at least 2·sqrt(1 - 0.955²) ≈ 0.59 apart,
// far above eps 0.15, so it holds two clusters; consecutive intervals share rows on both
// arcs. The graph is one cycle.
#[test]
fn circle_through_a_balanced_cover_is_one_loop() {
    for seed in SEEDS {
        let t = circle(seed, 800);
        let s = settings(CoverSettings { intervals: 10, overlap: 0.3, kind: CoverKind::Balanced }, None);
        let b = nervure::build(&t, &s).unwrap();
        expect(&format!("balanced circle seed {seed}"), &b, 1, 1);
        assert_eq!(b.summary.nodes, 18);
    }
}

// Two circles far apart (the second shifted by 8 along x), filters (x, y), a 3 × 3
// uniform product cover with overlap 0.2: 2 components, 2 loops, 8 nodes.
//
// Why. The x range is about [-1.09, 9.09], so the x intervals are about [-1.09, 2.83],
// [2.04, 5.96], [5.18, 9.09]: each circle lies in one x interval (the first circle ends at
// 1.09 < 2.04, the second starts at 6.91 > 5.96) and the middle column of cells is empty.
// Within a circle's column the y intervals [-1.09, -0.25], [-0.42, 0.42], [0.25, 1.09]
// cut it into a bottom arc, a left and a right arc, and a top arc; the bottom and top
// arcs each share rows with both side arcs (the bands |y| in [0.25, 0.42]), the side arcs
// are 1.8 apart and the top and bottom cells do not overlap: a 4-cycle per circle.
//
// A caution this test was written after: with more x intervals, cells that meet only at a
// corner can hold the same rows of a circle, and four nodes sharing rows pairwise add
// triangles, each counted as a loop by E - V + C. The loop count of a graph is not the
// nerve's first Betti number once three cover elements can share a row, which a 2-D
// product cover with overlap allows.
#[test]
fn two_circles_through_a_product_cover_are_two_loops() {
    for seed in SEEDS {
        let a = circle(seed, 800);
        let b = circle(seed + 100, 800);
        let x: Vec<f64> = a.numbers("x", "x").unwrap().iter().copied().chain(b.numbers("x", "x").unwrap().iter().map(|v| v + 8.0)).collect();
        let y: Vec<f64> = a.numbers("y", "y").unwrap().iter().chain(b.numbers("y", "y").unwrap()).copied().collect();
        let t = Table::from_columns("two", vec![Column::number("x", x), Column::number("y", y)]).unwrap();
        let s = settings(CoverSettings::uniform(3, 0.2), Some(Lens::Column { column: "y".into() }));
        let g = nervure::build(&t, &s).unwrap();
        let name = format!("two circles seed {seed}");
        expect(&name, &g, 2, 2);
        assert_eq!(g.summary.nodes, 8, "{name}");
        assert!(g.nerve.nodes.iter().all(|n| g.cell(n.element).0 != 1), "{name}: the middle column is empty");
    }
}
