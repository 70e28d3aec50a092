//! Node positions for drawing: a force-directed layout (Fruchterman & Reingold 1991)
//! with repulsion cut off beyond two ideal edge lengths and found through a grid, so one
//! iteration costs about O(V + E) instead of O(V²).
//!
//! Nodes start along the lens (x = the node's mean lens value), so a graph that follows
//! its filter reads left to right. Deterministic for a given seed. Positions are scaled
//! into [-1, 1]; components are packed side by side so none drifts away.

use std::collections::HashMap;

use crate::graph::Nerve;
use crate::rng::SplitMix64;

/// One [x, y] per node.
pub fn layout(nerve: &Nerve, node_lens: &[f64], seed: u64) -> Vec<[f64; 2]> {
    let n = nerve.nodes.len();
    if n == 0 {
        return Vec::new();
    }
    let comp = nerve.component_of();
    let n_comp = comp.iter().map(|&c| c as usize + 1).max().unwrap_or(0);
    let mut by_comp: Vec<Vec<usize>> = vec![Vec::new(); n_comp];
    for (i, &c) in comp.iter().enumerate() {
        by_comp[c as usize].push(i);
    }
    let mut adj: Vec<Vec<(usize, f64)>> = vec![Vec::new(); n];
    for e in &nerve.edges {
        let w = (e.shared as f64).ln_1p();
        adj[e.a as usize].push((e.b as usize, w));
        adj[e.b as usize].push((e.a as usize, w));
    }
    let (lmin, lmax) = node_lens.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let flat_lens = !(lmax > lmin);
    let lspan = if flat_lens { 1.0 } else { lmax - lmin };
    let mut rng = SplitMix64::new(seed ^ 0x6c61_796f_7574);
    let mut pos = vec![[0.0f64; 2]; n];
    // Lay out each component in its own unit box, then pack the boxes in rows.
    let mut boxes = Vec::with_capacity(n_comp);
    for members in &by_comp {
        let k = members.len();
        let side = (k as f64).sqrt().max(1.0);
        for &i in members {
            let t = if flat_lens { rng.next_f64() } else { (node_lens.get(i).copied().unwrap_or(0.0) - lmin) / lspan };
            pos[i] = [t * side, rng.next_f64() * side];
        }
        relax(members, &adj, &mut pos, side);
        boxes.push(bounds(members, &pos));
    }
    // Pack: larger components first, in rows whose width is about the square root of the total area.
    let mut order: Vec<usize> = (0..n_comp).collect();
    order.sort_by_key(|&c| std::cmp::Reverse(by_comp[c].len()));
    let area: f64 = boxes.iter().map(|b| (b.2 - b.0 + 1.0) * (b.3 - b.1 + 1.0)).sum();
    let row_width = area.sqrt().max(boxes.iter().map(|b| b.2 - b.0 + 1.0).fold(0.0, f64::max));
    let (mut x, mut y, mut row_h) = (0.0, 0.0, 0.0f64);
    for c in order {
        let (x0, y0, x1, y1) = boxes[c];
        let (w, h) = (x1 - x0 + 1.0, y1 - y0 + 1.0);
        if x > 0.0 && x + w > row_width {
            x = 0.0;
            y += row_h;
            row_h = 0.0;
        }
        for &i in &by_comp[c] {
            pos[i] = [pos[i][0] - x0 + x + 0.5, pos[i][1] - y0 + y + 0.5];
        }
        x += w;
        row_h = row_h.max(h);
    }
    normalise(&mut pos);
    pos
}

fn relax(members: &[usize], adj: &[Vec<(usize, f64)>], pos: &mut [[f64; 2]], side: f64) {
    let k = members.len();
    if k < 2 {
        return;
    }
    let ideal = side / (k as f64).sqrt(); // = 1 for side = √k
    // Small components get every pair's repulsion; large ones a cut-off through a grid.
    let cut = if k <= 600 { f64::INFINITY } else { 2.0 * ideal };
    let iterations = if k < 500 { 300 } else if k < 2000 { 150 } else { 80 };
    let mut temp = side * 0.1;
    let cool = temp / iterations as f64;
    let mut disp = vec![[0.0f64; 2]; pos.len()];
    let mut grid: HashMap<(i64, i64), Vec<usize>> = HashMap::new();
    for _ in 0..iterations {
        grid.clear();
        for &i in members {
            grid.entry(cell_of(pos[i], cut)).or_default().push(i);
        }
        for &i in members {
            disp[i] = [0.0, 0.0];
            let (cx, cy) = cell_of(pos[i], cut);
            let reach = if cut.is_finite() { 1 } else { 0 };
            for dx in -reach..=reach {
                for dy in -reach..=reach {
                    if let Some(cell) = grid.get(&(cx + dx, cy + dy)) {
                        for &j in cell {
                            if j == i {
                                continue;
                            }
                            let (mut ex, mut ey) = (pos[i][0] - pos[j][0], pos[i][1] - pos[j][1]);
                            let mut dist = (ex * ex + ey * ey).sqrt();
                            if dist < 1e-9 {
                                // Coincident nodes: push apart along a direction fixed by their indices.
                                let a = (i * 7919 + j * 104729) as f64;
                                ex = a.cos();
                                ey = a.sin();
                                dist = 1e-3;
                            }
                            if dist < cut {
                                let f = ideal * ideal / dist;
                                disp[i][0] += ex / dist * f;
                                disp[i][1] += ey / dist * f;
                            }
                        }
                    }
                }
            }
            for &(j, w) in &adj[i] {
                let (ex, ey) = (pos[i][0] - pos[j][0], pos[i][1] - pos[j][1]);
                let dist = (ex * ex + ey * ey).sqrt().max(1e-9);
                let f = dist * dist / ideal * (0.5 + 0.5 * w.min(3.0));
                disp[i][0] -= ex / dist * f;
                disp[i][1] -= ey / dist * f;
            }
        }
        for &i in members {
            let (dx, dy) = (disp[i][0], disp[i][1]);
            let len = (dx * dx + dy * dy).sqrt();
            if len > 0.0 {
                let step = len.min(temp);
                pos[i][0] += dx / len * step;
                pos[i][1] += dy / len * step;
            }
        }
        temp = (temp - cool).max(side * 0.002);
    }
}

/// Grid cell of a position; with no cut-off every node shares one cell.
fn cell_of(p: [f64; 2], cut: f64) -> (i64, i64) {
    if cut.is_finite() {
        ((p[0] / cut).floor() as i64, (p[1] / cut).floor() as i64)
    } else {
        (0, 0)
    }
}

fn bounds(members: &[usize], pos: &[[f64; 2]]) -> (f64, f64, f64, f64) {
    members.iter().fold((f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY), |b, &i| {
        (b.0.min(pos[i][0]), b.1.min(pos[i][1]), b.2.max(pos[i][0]), b.3.max(pos[i][1]))
    })
}

fn normalise(pos: &mut [[f64; 2]]) {
    let all: Vec<usize> = (0..pos.len()).collect();
    let (x0, y0, x1, y1) = bounds(&all, pos);
    let span = (x1 - x0).max(y1 - y0).max(1e-12);
    let (cx, cy) = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
    for p in pos.iter_mut() {
        *p = [(p[0] - cx) / span * 2.0, (p[1] - cy) / span * 2.0];
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::{Nerve, Node};

    fn cycle(k: usize) -> Nerve {
        let nodes = (0..k).map(|i| Node { element: i, members: vec![i as u32, ((i + 1) % k) as u32] }).collect();
        Nerve::new(nodes, k, 1)
    }

    #[test]
    fn positions_are_finite_in_range_and_deterministic() {
        let g = cycle(40);
        let lens: Vec<f64> = (0..40).map(|i| i as f64).collect();
        let a = layout(&g, &lens, 3);
        assert_eq!(a, layout(&g, &lens, 3));
        assert!(a.iter().all(|p| p[0].is_finite() && p[1].is_finite() && p[0].abs() <= 1.0 + 1e-9 && p[1].abs() <= 1.0 + 1e-9));
    }

    #[test]
    fn neighbours_end_closer_than_the_average_pair() {
        let g = cycle(30);
        let p = layout(&g, &vec![0.0; 30], 1);
        let d = |i: usize, j: usize| ((p[i][0] - p[j][0]).powi(2) + (p[i][1] - p[j][1]).powi(2)).sqrt();
        let edge_mean = g.edges.iter().map(|e| d(e.a as usize, e.b as usize)).sum::<f64>() / g.edges.len() as f64;
        let all_mean = (0..30).flat_map(|i| (0..30).map(move |j| (i, j))).filter(|(i, j)| i < j).map(|(i, j)| d(i, j)).sum::<f64>() / 435.0;
        assert!(edge_mean < 0.5 * all_mean, "edge {edge_mean} all {all_mean}");
    }
}
