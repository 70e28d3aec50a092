//! Point clouds of known topology for the automatic settings' panel
//! (`examples/auto_panel.rs`) and the tests that pin its targets (`tests/auto_panel.rs`).
//! Each is evenly spaced along its curve (`noise` 0, a lattice of arc length: the case
//! where a scale read off neighbour distances can land exactly on a spacing) or drawn at
//! random along it with Gaussian noise of standard deviation `noise` in each coordinate,
//! from a seeded [`SplitMix64`]. Units: circles of radius 1.
//!
//! Loops by construction: a circle 1, a chain of k rings k, a figure eight 2.

use std::f64::consts::PI;

use nervure::rng::SplitMix64;
use nervure::table::Column;
use nervure::Table;

/// Rows of equal length.
pub type Cloud = Vec<Vec<f64>>;

/// A curve as pieces, each a map from [0, 1) to the plane and its length.
type Piece = (Box<dyn Fn(f64) -> [f64; 2]>, f64);

/// `n` points along the pieces, shared in proportion to their lengths: at even steps of
/// arc length when `noise` is 0, else at uniform random positions plus noise.
fn sample(pieces: &[Piece], n: usize, noise: f64, rng: &mut SplitMix64) -> Cloud {
    let total: f64 = pieces.iter().map(|p| p.1).sum();
    let at = |s: f64| -> [f64; 2] {
        let mut s = s * total;
        for (f, len) in pieces {
            if s < *len {
                return f(s / len);
            }
            s -= len;
        }
        let (f, _) = pieces.last().expect("one piece at least");
        f(1.0 - 1e-12)
    };
    (0..n)
        .map(|i| {
            if noise == 0.0 {
                let p = at(i as f64 / n as f64);
                vec![p[0], p[1]]
            } else {
                let p = at(rng.next_f64());
                vec![p[0] + noise * rng.normal(), p[1] + noise * rng.normal()]
            }
        })
        .collect()
}

fn ring(cx: f64, cy: f64, start: f64) -> Piece {
    (Box::new(move |t: f64| [cx + (start + 2.0 * PI * t).cos(), cy + (start + 2.0 * PI * t).sin()]), 2.0 * PI)
}

fn bar(a: [f64; 2], b: [f64; 2]) -> Piece {
    let len = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
    (Box::new(move |t: f64| [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]), len)
}

/// A circle of radius 1.
pub fn circle(n: usize, noise: f64, seed: u64) -> Cloud {
    sample(&[ring(0.0, 0.0, 0.0)], n, noise, &mut SplitMix64::new(seed))
}

/// `k` rings of radius 1 in a row, centres 3 apart, each joined to the next by a bar of
/// length 1 along the line of centres: k loops, one component.
pub fn chain(k: usize, n: usize, noise: f64, seed: u64) -> Cloud {
    let mut pieces = Vec::new();
    for i in 0..k {
        let cx = 3.0 * i as f64;
        pieces.push(ring(cx, 0.0, 0.0));
        if i + 1 < k {
            pieces.push(bar([cx + 1.0, 0.0], [cx + 2.0, 0.0]));
        }
    }
    sample(&pieces, n, noise, &mut SplitMix64::new(seed))
}

/// A figure eight: two rings of radius 1 that touch at the origin (centres (±1, 0)),
/// 2 loops, one component.
pub fn figure_eight(n: usize, noise: f64, seed: u64) -> Cloud {
    sample(&[ring(-1.0, 0.0, 0.0), ring(1.0, 0.0, PI)], n, noise, &mut SplitMix64::new(seed))
}

/// A planar cloud put in `dim` dimensions: padded with zeros, noise of `noise` added in
/// every coordinate, then a random rotation (Gram-Schmidt on a Gaussian matrix).
pub fn lift(pts: &Cloud, dim: usize, noise: f64, seed: u64) -> Cloud {
    let mut rng = SplitMix64::new(seed);
    let q = rotation(&mut rng, dim);
    pts.iter()
        .map(|p| {
            let x: Vec<f64> = (0..dim).map(|j| p.get(j).copied().unwrap_or(0.0) + noise * rng.normal()).collect();
            (0..dim).map(|i| (0..dim).map(|j| q[j][i] * x[j]).sum::<f64>()).collect()
        })
        .collect()
}

/// A random rotation of `dim` dimensions, as its rows: Gram-Schmidt on Gaussian draws
/// (a draw too close to the span of the rows before it is drawn again).
pub fn rotation(rng: &mut SplitMix64, dim: usize) -> Vec<Vec<f64>> {
    let mut q: Vec<Vec<f64>> = Vec::with_capacity(dim);
    while q.len() < dim {
        let mut v: Vec<f64> = (0..dim).map(|_| rng.normal()).collect();
        for u in &q {
            let dot: f64 = v.iter().zip(u).map(|(a, b)| a * b).sum();
            v.iter_mut().zip(u).for_each(|(a, b)| *a -= dot * b);
        }
        let norm = v.iter().map(|a| a * a).sum::<f64>().sqrt();
        if norm > 1e-6 {
            v.iter_mut().for_each(|a| *a /= norm);
            q.push(v);
        }
    }
    q
}

/// The cloud as a table with columns x0, x1, ...
pub fn table(name: &str, pts: &Cloud) -> Table {
    let d = pts[0].len();
    let cols = (0..d).map(|j| Column::number(format!("x{j}"), pts.iter().map(|p| p[j]).collect())).collect();
    Table::from_columns(name, cols).expect("equal columns")
}

/// One shape of the panel: its name, its table, and its loops by construction.
pub struct Known {
    pub name: String,
    pub table: Table,
    pub loops: usize,
}

/// The panel's shapes: circles evenly spaced and noisy from 200 to 20 000 points, one in
/// 10 dimensions, chains of two and three rings and figure eights, evenly spaced and noisy.
/// With `small_only`, those of at most 2 000 points (what the native tests run).
pub fn panel(small_only: bool) -> Vec<Known> {
    let mut out = Vec::new();
    let mut add = |name: String, pts: Cloud, loops: usize| {
        if !small_only || pts.len() <= 2000 {
            out.push(Known { table: table(&name, &pts), name, loops });
        }
    };
    for n in [200, 400, 2000, 20_000] {
        add(format!("circle, evenly spaced, {n}"), circle(n, 0.0, 1), 1);
    }
    for (n, noise) in [(300, 0.05), (600, 0.1), (5000, 0.1), (20_000, 0.05)] {
        add(format!("circle, noise {noise}, {n}"), circle(n, noise, 2), 1);
    }
    add("circle in 10-D, noise 0.05, 1000".into(), lift(&circle(1000, 0.05, 3), 10, 0.03, 4), 1);
    add("two rings, noise 0.05, 1000".into(), chain(2, 1000, 0.05, 5), 2);
    add("two rings, evenly spaced, 4000".into(), chain(2, 4000, 0.0, 1), 2);
    add("three rings, noise 0.05, 1500".into(), chain(3, 1500, 0.05, 6), 3);
    add("three rings, evenly spaced, 9000".into(), chain(3, 9000, 0.0, 1), 3);
    add("figure eight, noise 0.03, 800".into(), figure_eight(800, 0.03, 7), 2);
    add("figure eight, evenly spaced, 4000".into(), figure_eight(4000, 0.0, 1), 2);
    out
}
