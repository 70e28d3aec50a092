//! Point clouds of known topology, seeded: circles, segments, a three-armed star, and a
//! lift of a planar cloud into 10 dimensions under a random rotation. Shared by the
//! topology tests (tests/topology.rs) and the layout tests (tests/layout.rs).

use std::f64::consts::PI;

use nervure::rng::SplitMix64;

/// n points as rows of equal length.
pub type Cloud = Vec<Vec<f64>>;

pub fn circle(rng: &mut SplitMix64, n: usize, cx: f64, cy: f64, r: f64, noise: f64) -> Cloud {
    (0..n)
        .map(|_| {
            let t = 2.0 * PI * rng.next_f64();
            let rr = r + noise * rng.normal();
            vec![cx + rr * t.cos(), cy + rr * t.sin()]
        })
        .collect()
}

pub fn segment(rng: &mut SplitMix64, n: usize, a: [f64; 2], b: [f64; 2], noise: f64) -> Cloud {
    (0..n)
        .map(|_| {
            let t = rng.next_f64();
            vec![a[0] + t * (b[0] - a[0]) + noise * rng.normal(), a[1] + t * (b[1] - a[1]) + noise * rng.normal()]
        })
        .collect()
}

/// Three arms of length 2 from the origin, 120 degrees apart.
pub fn tripod(rng: &mut SplitMix64, n_per_arm: usize, noise: f64) -> Cloud {
    let mut pts = Vec::new();
    for k in 0..3 {
        let a = PI / 2.0 + k as f64 * 2.0 * PI / 3.0;
        pts.extend(segment(rng, n_per_arm, [0.0, 0.0], [2.0 * a.cos(), 2.0 * a.sin()], noise));
    }
    pts
}

/// Puts a planar cloud in 10 dimensions: pads with zeros, adds noise of `noise` in every
/// coordinate, then applies a random rotation (Gram-Schmidt on a Gaussian matrix) and a
/// random translation.
pub fn lift(rng: &mut SplitMix64, pts: &Cloud, noise: f64) -> Cloud {
    const D: usize = 10;
    let q = super::shapes::rotation(rng, D);
    let shift: Vec<f64> = (0..D).map(|_| 3.0 * rng.normal()).collect();
    pts.iter()
        .map(|p| {
            let x: Vec<f64> = (0..D).map(|j| p.get(j).copied().unwrap_or(0.0) + noise * rng.normal()).collect();
            (0..D).map(|i| shift[i] + (0..D).map(|j| q[j][i] * x[j]).sum::<f64>()).collect()
        })
        .collect()
}
