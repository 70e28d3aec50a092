//! Where each node is drawn and how big its disc is, chosen together so that the drawing
//! can be read: discs do not cover one another, edges run between discs, a loop keeps its
//! hole, and a crowd of tiny components does not push the main shape into a corner.
//!
//! **Discs set the spacing.** A node's disc has an area proportional to its rows: radius
//! [`R_MAX`] · √(rows / most rows of any node), at least [`R_MIN`], in the layout's own
//! length unit. An edge's length is the two radii plus a visible stretch [`GAP`], so large
//! discs stand further apart instead of burying each other and their edges.
//!
//! **Each connected component** is placed on its own:
//! - up to [`STRESS_NODES`] nodes, by stress majorisation (Gansner, Koren, North 2004,
//!   "Graph drawing by stress majorization"): the drawing whose distances best match the
//!   shortest-path distances over those edge lengths, weighted by distance⁻². It starts
//!   from pivot multidimensional scaling (Brandes, Pich 2007, "Eigensolver methods for
//!   progressive multidimensional scaling of large data"), which already draws a loop as a
//!   ring and a chain as a line, so the iterations do not get caught in a folded start;
//! - above that, by the force-directed layout of Fruchterman & Reingold (1991) with
//!   repulsion cut off beyond two edge lengths and found through a grid, so an iteration
//!   costs about O(V + E) instead of O(V²); nodes start along the lens;
//! - then discs that still overlap are pushed apart (at least [`MARGIN`] between any two),
//!   and the component is turned so that its nodes' mean lens value grows left to right
//!   (a graph that follows its filter reads left to right).
//!
//! **Packing.** Components of three nodes or more are set in rows, those of most rows
//! first, in a block; components of one or two nodes go in a compact band under that block
//! or beside it, ordered the same way, so dozens of them take a strip instead of the
//! canvas. The widths of block and band are those, among a few tried, that let the whole
//! be drawn largest on a 4 : 3 canvas. The whole drawing, discs included, is then scaled
//! into [-1, 1].
//!
//! Deterministic for a given seed. Not here: drawing, or how large a disc may grow on a
//! screen (the page caps it and keeps it visible when zoomed out).

use std::cmp::Reverse;
use std::collections::{BinaryHeap, HashMap};

use crate::graph::Nerve;
use crate::rng::SplitMix64;

/// Radius of the largest node's disc, in the layout's length unit (before scaling into [-1, 1]).
pub const R_MAX: f64 = 0.5;
/// The smallest disc radius: a node of very few rows still shows as a disc.
pub const R_MIN: f64 = 0.1;
/// The stretch of an edge left visible between the discs of its two nodes.
pub const GAP: f64 = 0.6;
/// The least distance between the rims of any two discs once overlaps are pushed apart.
pub const MARGIN: f64 = 0.15;
/// Components up to this many nodes are placed by stress majorisation (O(V²) memory and
/// time per iteration); larger ones by the force-directed layout.
pub const STRESS_NODES: usize = 400;
/// Width over height of the block the larger components are packed into.
const ASPECT: f64 = 4.0 / 3.0;
/// Space between packed components.
const SPACE: f64 = 1.0;

/// Positions and disc radii, in the same units: the drawing, discs included, lies in [-1, 1].
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Layout {
    /// One [x, y] per node (y grows downwards, as on a screen).
    pub positions: Vec<[f64; 2]>,
    /// One disc radius per node.
    pub radii: Vec<f64>,
}

/// The disc radius of a node of `rows` rows when the largest node has `most` rows.
pub fn disc_radius(rows: usize, most: usize) -> f64 {
    (R_MAX * (rows as f64 / most.max(1) as f64).sqrt()).max(R_MIN)
}

/// Lays out a graph; `node_lens` is each node's mean lens value.
pub fn layout(nerve: &Nerve, node_lens: &[f64], seed: u64) -> Layout {
    let sizes: Vec<usize> = nerve.nodes.iter().map(|x| x.members.len()).collect();
    layout_sized(nerve, &sizes, node_lens, seed)
}

/// [`layout`] with each node's row count given (`sizes`), for a nerve whose nodes do not
/// list their members (a run in parts, [`crate::parts`]).
pub fn layout_sized(nerve: &Nerve, sizes: &[usize], node_lens: &[f64], seed: u64) -> Layout {
    let n = nerve.nodes.len();
    if n == 0 {
        return Layout::default();
    }
    let most = sizes.iter().copied().max().unwrap_or(1);
    let mut radii: Vec<f64> = sizes.iter().map(|&k| disc_radius(k, most)).collect();
    let comp = nerve.component_of();
    let n_comp = comp.iter().map(|&c| c as usize + 1).max().unwrap_or(0);
    let mut by_comp: Vec<Vec<usize>> = vec![Vec::new(); n_comp];
    for (i, &c) in comp.iter().enumerate() {
        by_comp[c as usize].push(i);
    }
    // Neighbours with (edge length, weight from the rows shared).
    let mut adj: Vec<Vec<(usize, f64, f64)>> = vec![Vec::new(); n];
    for e in &nerve.edges {
        let (a, b) = (e.a as usize, e.b as usize);
        let len = radii[a] + radii[b] + GAP;
        let w = (e.shared as f64).ln_1p();
        adj[a].push((b, len, w));
        adj[b].push((a, len, w));
    }
    let (lmin, lmax) = node_lens.iter().filter(|v| v.is_finite()).fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let flat_lens = !(lmax > lmin);
    let lens: Vec<f64> = (0..n)
        .map(|i| match node_lens.get(i) {
            Some(v) if v.is_finite() && !flat_lens => (v - lmin) / (lmax - lmin),
            _ => 0.5,
        })
        .collect();
    let mut rng = SplitMix64::new(seed ^ 0x6c61_796f_7574);
    let mut pos = vec![[0.0f64; 2]; n];
    for members in &by_comp {
        if members.len() <= STRESS_NODES {
            stress(members, &adj, &lens, &mut pos, &mut rng);
        } else {
            let mean_r = members.iter().map(|&i| radii[i]).sum::<f64>() / members.len() as f64;
            forces(members, &adj, &lens, flat_lens, &mut pos, &mut rng, 2.0 * mean_r + GAP);
        }
        separate(members, &mut pos, &radii, &mut rng);
        if !flat_lens {
            turn_along_lens(members, &mut pos, &lens);
        }
    }
    pack(sizes, &by_comp, &mut pos, &radii);
    normalise(&mut pos, &mut radii);
    Layout { positions: pos, radii }
}

/// Shortest-path distances over the edge lengths, within one component (`local` maps a
/// node to its index in `members`): a k × k row-major matrix.
fn path_lengths(members: &[usize], local: &HashMap<usize, usize>, adj: &[Vec<(usize, f64, f64)>]) -> Vec<f64> {
    let k = members.len();
    let mut dist = vec![f64::INFINITY; k * k];
    let mut heap = BinaryHeap::new();
    for s in 0..k {
        let row = &mut dist[s * k..(s + 1) * k];
        row[s] = 0.0;
        heap.clear();
        // Non-negative floats order as their bit patterns do.
        heap.push(Reverse((0u64, s)));
        while let Some(Reverse((bits, u))) = heap.pop() {
            let d = f64::from_bits(bits);
            if d > row[u] {
                continue;
            }
            for &(v, len, _) in &adj[members[u]] {
                let v = local[&v];
                let nd = d + len;
                if nd < row[v] {
                    row[v] = nd;
                    heap.push(Reverse((nd.to_bits(), v)));
                }
            }
        }
    }
    dist
}

/// Stress majorisation of one component, started from pivot MDS.
fn stress(members: &[usize], adj: &[Vec<(usize, f64, f64)>], lens: &[f64], pos: &mut [[f64; 2]], rng: &mut SplitMix64) {
    let k = members.len();
    if k == 1 {
        pos[members[0]] = [0.0, 0.0];
        return;
    }
    let local: HashMap<usize, usize> = members.iter().enumerate().map(|(l, &g)| (g, l)).collect();
    let dist = path_lengths(members, &local, adj);
    let mut x = pivot_mds(members, &dist, lens, rng);
    // The start's scale that best matches the distances (weighted least squares).
    let (mut num, mut den) = (0.0, 0.0);
    for i in 0..k {
        for j in i + 1..k {
            let d = dist[i * k + j];
            let l = ((x[i][0] - x[j][0]).powi(2) + (x[i][1] - x[j][1]).powi(2)).sqrt();
            num += l / d;
            den += l * l / (d * d);
        }
    }
    let scale = if den > 0.0 { num / den } else { 1.0 };
    for p in x.iter_mut() {
        *p = [p[0] * scale, p[1] * scale];
    }
    // Gauss-Seidel sweeps of the majorising update, with weights d⁻² (Gansner, Koren,
    // North 2004, eq. 7, solved one node at a time), until nodes move less than 0.002 of
    // the shortest edge on average.
    let max_sweeps = (20_000_000 / (k * k)).clamp(30, 300);
    let edge = dist.iter().filter(|&&d| d > 0.0).fold(f64::INFINITY, |a, &d| a.min(d));
    for _ in 0..max_sweeps {
        let mut moved = 0.0;
        for i in 0..k {
            let (mut sx, mut sy, mut sw) = (0.0, 0.0, 0.0);
            let row = &dist[i * k..(i + 1) * k];
            for j in 0..k {
                if j == i {
                    continue;
                }
                let d = row[j];
                let w = 1.0 / (d * d);
                let (mut dx, mut dy) = (x[i][0] - x[j][0], x[i][1] - x[j][1]);
                let mut l = (dx * dx + dy * dy).sqrt();
                if l < 1e-9 {
                    let a = 2.0 * std::f64::consts::PI * rng.next_f64();
                    (dx, dy, l) = (a.cos(), a.sin(), 1.0);
                }
                sx += w * (x[j][0] + d * dx / l);
                sy += w * (x[j][1] + d * dy / l);
                sw += w;
            }
            let next = [sx / sw, sy / sw];
            moved += ((next[0] - x[i][0]).powi(2) + (next[1] - x[i][1]).powi(2)).sqrt();
            x[i] = next;
        }
        if moved / (k as f64) < 2e-3 * edge {
            break;
        }
    }
    for (l, &g) in members.iter().enumerate() {
        pos[g] = x[l];
    }
}

/// Pivot multidimensional scaling (Brandes, Pich 2007): up to 50 pivots chosen far apart
/// (the first the node lowest on the lens), the k × m matrix of squared distances to them
/// double-centred, and the nodes placed on its two leading singular directions (power
/// iteration on the m × m product).
fn pivot_mds(members: &[usize], dist: &[f64], lens: &[f64], rng: &mut SplitMix64) -> Vec<[f64; 2]> {
    let k = members.len();
    let m = k.min(50);
    let first = (0..k).min_by(|&a, &b| lens[members[a]].total_cmp(&lens[members[b]]).then(a.cmp(&b))).unwrap_or(0);
    let mut pivots = vec![first];
    let mut nearest: Vec<f64> = (0..k).map(|v| dist[first * k + v]).collect();
    while pivots.len() < m {
        let far = (0..k).max_by(|&a, &b| nearest[a].total_cmp(&nearest[b]).then(b.cmp(&a))).unwrap_or(0);
        pivots.push(far);
        for v in 0..k {
            nearest[v] = nearest[v].min(dist[far * k + v]);
        }
    }
    // c[v][p] = -1/2 (d² - row mean - column mean + grand mean)
    let mut c = vec![0.0f64; k * m];
    for v in 0..k {
        for (p, &q) in pivots.iter().enumerate() {
            c[v * m + p] = dist[q * k + v].powi(2);
        }
    }
    let row_mean: Vec<f64> = (0..k).map(|v| c[v * m..(v + 1) * m].iter().sum::<f64>() / m as f64).collect();
    let col_mean: Vec<f64> = (0..m).map(|p| (0..k).map(|v| c[v * m + p]).sum::<f64>() / k as f64).collect();
    let grand = row_mean.iter().sum::<f64>() / k as f64;
    for v in 0..k {
        for p in 0..m {
            c[v * m + p] = -0.5 * (c[v * m + p] - row_mean[v] - col_mean[p] + grand);
        }
    }
    // s = cᵀc (m × m), then its two leading eigenvectors.
    let mut s = vec![0.0f64; m * m];
    for v in 0..k {
        let row = &c[v * m..(v + 1) * m];
        for a in 0..m {
            for b in a..m {
                s[a * m + b] += row[a] * row[b];
            }
        }
    }
    for a in 0..m {
        for b in 0..a {
            s[a * m + b] = s[b * m + a];
        }
    }
    let mut vecs: Vec<Vec<f64>> = Vec::new();
    for _ in 0..2 {
        let mut v: Vec<f64> = (0..m).map(|_| rng.next_f64() - 0.5).collect();
        for _ in 0..200 {
            let mut w: Vec<f64> = (0..m).map(|a| (0..m).map(|b| s[a * m + b] * v[b]).sum()).collect();
            for u in &vecs {
                let dot: f64 = w.iter().zip(u).map(|(a, b)| a * b).sum();
                w.iter_mut().zip(u).for_each(|(a, b)| *a -= dot * b);
            }
            let norm = w.iter().map(|a| a * a).sum::<f64>().sqrt();
            if norm < 1e-12 {
                break;
            }
            w.iter_mut().for_each(|a| *a /= norm);
            v = w;
        }
        vecs.push(v);
    }
    let mut x: Vec<[f64; 2]> = (0..k)
        .map(|v| {
            let row = &c[v * m..(v + 1) * m];
            let at = |u: &[f64]| row.iter().zip(u).map(|(a, b)| a * b).sum::<f64>();
            [at(&vecs[0]), at(&vecs[1])]
        })
        .collect();
    // A start with every node in one place (no spread to find) falls back to the lens.
    let spread = x.iter().map(|p| p[0].abs() + p[1].abs()).fold(0.0, f64::max);
    if !(spread > 1e-12) || x.iter().any(|p| !p[0].is_finite() || !p[1].is_finite()) {
        for (v, p) in x.iter_mut().enumerate() {
            *p = [lens[members[v]] * k as f64, rng.next_f64() * k as f64];
        }
    }
    x
}

/// The force-directed layout of a large component, with edges of about `unit` length.
fn forces(members: &[usize], adj: &[Vec<(usize, f64, f64)>], lens: &[f64], flat_lens: bool, pos: &mut [[f64; 2]], rng: &mut SplitMix64, unit: f64) {
    let k = members.len();
    let side = (k as f64).sqrt().max(1.0);
    for &i in members {
        let t = if flat_lens { rng.next_f64() } else { lens[i] };
        pos[i] = [t * side, rng.next_f64() * side];
    }
    relax(members, adj, pos, side);
    for &i in members {
        pos[i] = [pos[i][0] * unit, pos[i][1] * unit];
    }
}

fn relax(members: &[usize], adj: &[Vec<(usize, f64, f64)>], pos: &mut [[f64; 2]], side: f64) {
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
            for &(j, _, w) in &adj[i] {
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

/// Pushes apart any two discs of a component closer than [`MARGIN`] rim to rim, half the
/// shortfall each, in sweeps over a grid of cells one largest diameter wide, until none
/// is left or after 60 sweeps (10 above 2 000 nodes: there the page draws discs at its
/// smallest size anyway, and each sweep costs tens of milliseconds).
fn separate(members: &[usize], pos: &mut [[f64; 2]], radii: &[f64], rng: &mut SplitMix64) {
    if members.len() < 2 {
        return;
    }
    let r_most = members.iter().map(|&i| radii[i]).fold(0.0, f64::max);
    let cell = 2.0 * r_most + MARGIN;
    let mut grid: HashMap<(i64, i64), Vec<usize>> = HashMap::new();
    let sweeps = if members.len() <= 2000 { 60 } else { 10 };
    for _ in 0..sweeps {
        grid.clear();
        for &i in members {
            grid.entry(cell_of(pos[i], cell)).or_default().push(i);
        }
        let mut overlaps = false;
        for &i in members {
            let (cx, cy) = cell_of(pos[i], cell);
            for dx in -1..=1 {
                for dy in -1..=1 {
                    let Some(list) = grid.get(&(cx + dx, cy + dy)) else { continue };
                    for &j in list {
                        if j <= i {
                            continue;
                        }
                        let need = radii[i] + radii[j] + MARGIN;
                        let (mut ex, mut ey) = (pos[j][0] - pos[i][0], pos[j][1] - pos[i][1]);
                        let mut d = (ex * ex + ey * ey).sqrt();
                        if d >= need {
                            continue;
                        }
                        if d < 1e-9 {
                            let a = 2.0 * std::f64::consts::PI * rng.next_f64();
                            (ex, ey, d) = (a.cos(), a.sin(), 1.0);
                            let push = need / 2.0;
                            pos[i] = [pos[i][0] - ex * push, pos[i][1] - ey * push];
                            pos[j] = [pos[j][0] + ex * push, pos[j][1] + ey * push];
                        } else {
                            // A little beyond the shortfall, so the sweeps end.
                            let push = (need - d) * 0.51 / d;
                            pos[i] = [pos[i][0] - ex * push, pos[i][1] - ey * push];
                            pos[j] = [pos[j][0] + ex * push, pos[j][1] + ey * push];
                        }
                        overlaps = true;
                    }
                }
            }
        }
        if !overlaps {
            break;
        }
    }
}

/// Turns a component about its centre so that its nodes' lens values grow along +x (the
/// direction of the covariance of lens and position).
fn turn_along_lens(members: &[usize], pos: &mut [[f64; 2]], lens: &[f64]) {
    let k = members.len() as f64;
    if members.len() < 2 {
        return;
    }
    let (mx, my, ml) = members.iter().fold((0.0, 0.0, 0.0), |a, &i| (a.0 + pos[i][0] / k, a.1 + pos[i][1] / k, a.2 + lens[i] / k));
    let (gx, gy) = members.iter().fold((0.0, 0.0), |a, &i| (a.0 + (lens[i] - ml) * (pos[i][0] - mx), a.1 + (lens[i] - ml) * (pos[i][1] - my)));
    let norm = (gx * gx + gy * gy).sqrt();
    if !(norm > 1e-12) {
        return;
    }
    let (c, s) = (gx / norm, gy / norm);
    for &i in members {
        let (x, y) = (pos[i][0] - mx, pos[i][1] - my);
        pos[i] = [mx + c * x + s * y, my - s * x + c * y];
    }
}

/// Bounds of a set of discs: (x0, y0, x1, y1).
fn bounds(members: &[usize], pos: &[[f64; 2]], radii: &[f64]) -> (f64, f64, f64, f64) {
    members.iter().fold((f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY), |b, &i| {
        let r = radii[i];
        (b.0.min(pos[i][0] - r), b.1.min(pos[i][1] - r), b.2.max(pos[i][0] + r), b.3.max(pos[i][1] + r))
    })
}

/// Components with the top left corner each is placed at.
type Placed = Vec<(usize, f64, f64)>;

/// Sets the components side by side: those of three nodes or more in rows of a block,
/// most rows first, each row centred; those of one or two nodes in a compact band under the
/// block or beside it. The widths of the block and of the band are chosen among a few so
/// that the whole drawing is shown largest in a box of [`ASPECT`].
fn pack(node_rows: &[usize], by_comp: &[Vec<usize>], pos: &mut [[f64; 2]], radii: &[f64]) {
    let rows = |c: usize| by_comp[c].iter().map(|&i| node_rows[i]).sum::<usize>();
    let mut order: Vec<usize> = (0..by_comp.len()).collect();
    // By rows, as the page's hiding of small components counts them: what it hides is then
    // the end of each row of the packing, not holes in the middle.
    order.sort_by_key(|&c| (Reverse(rows(c)), Reverse(by_comp[c].len()), c));
    let boxes: Vec<(f64, f64, f64, f64)> = by_comp.iter().map(|m| bounds(m, pos, radii)).collect();
    let sizes: Vec<(f64, f64)> = boxes.iter().map(|b| (b.2 - b.0, b.3 - b.1)).collect();
    let (shapes, small): (Vec<usize>, Vec<usize>) = order.iter().copied().partition(|&c| by_comp[c].len() >= 3);
    let area = |list: &[usize], space: f64| list.iter().map(|&c| (sizes[c].0 + space) * (sizes[c].1 + space)).sum::<f64>();
    let widest = |list: &[usize]| list.iter().map(|&c| sizes[c].0).fold(0.0, f64::max);
    // The score of a layout of extent w × h: the scale at which it fits a box of the aspect.
    let score = |w: f64, h: f64| (ASPECT / w.max(1e-9)).min(1.0 / h.max(1e-9));
    let placed: Placed = if shapes.is_empty() {
        let width = (area(&small, GAP / 2.0) * ASPECT).sqrt().max(widest(&small));
        shelf(&small, &sizes, width, GAP / 2.0).0
    } else {
        // The block's width and the band's are tried at a few multiples of a width that
        // would make the block about the aspect; the best whole is kept.
        let base = (area(&shapes, SPACE) * ASPECT).sqrt();
        let mut best: Option<(f64, Placed)> = None;
        for f in [0.75, 1.0, 1.25, 1.5, 2.0] {
            let (block, (bw, bh)) = shelf(&shapes, &sizes, (base * f).max(widest(&shapes)), SPACE);
            let mut keep = |sc: f64, band: Placed| {
                if best.as_ref().map_or(true, |b| sc > b.0) {
                    best = Some((sc, block.iter().copied().chain(band).collect()));
                }
            };
            if small.is_empty() {
                keep(score(bw, bh), Vec::new());
                continue;
            }
            // The band under the block, or beside it.
            for g in [0.5, 0.75, 1.0, 1.5, 2.0, 3.0] {
                let (band, (w, h)) = shelf(&small, &sizes, (bw * g).max(widest(&small)), GAP / 2.0);
                let dx = (bw - w) / 2.0;
                keep(score(bw.max(w), bh + SPACE + h), band.into_iter().map(|(c, x, y)| (c, x + dx, y + bh + SPACE)).collect());
            }
            for g in [0.1, 0.2, 0.35, 0.5, 0.75, 1.0] {
                let (band, (w, h)) = shelf(&small, &sizes, (bw * g).max(widest(&small)), GAP / 2.0);
                let dy = (bh - h).max(0.0) / 2.0;
                keep(score(bw + SPACE + w, bh.max(h)), band.into_iter().map(|(c, x, y)| (c, x + bw + SPACE, y + dy)).collect());
            }
        }
        best.expect("tried at least once").1
    };
    for (c, x, y) in placed {
        let (x0, y0, _, _) = boxes[c];
        for &i in &by_comp[c] {
            pos[i] = [pos[i][0] - x0 + x, pos[i][1] - y0 + y];
        }
    }
}

/// Rows of boxes (`list` in order) no wider than `width` unless one box is, `space`
/// apart, each row centred and each box centred in its row's height. Returns each box's
/// top left corner and the extent of the whole.
fn shelf(list: &[usize], sizes: &[(f64, f64)], width: f64, space: f64) -> (Placed, (f64, f64)) {
    let mut out = Vec::with_capacity(list.len());
    let (mut y, mut used) = (0.0, 0.0f64);
    let mut k = 0;
    while k < list.len() {
        let (mut end, mut w) = (k, 0.0);
        while end < list.len() && (end == k || w + space + sizes[list[end]].0 <= width) {
            w += sizes[list[end]].0 + if end > k { space } else { 0.0 };
            end += 1;
        }
        used = used.max(w);
        let h = list[k..end].iter().map(|&c| sizes[c].1).fold(0.0, f64::max);
        let mut x = (width.max(w) - w) / 2.0;
        for &c in &list[k..end] {
            out.push((c, x, y + (h - sizes[c].1) / 2.0));
            x += sizes[c].0 + space;
        }
        y += h + space;
        k = end;
    }
    // Rows were centred in `width`; the extent reported is the part used, so shift back.
    let shift = (width.max(used) - used) / 2.0;
    for p in out.iter_mut() {
        p.1 -= shift;
    }
    (out, (used, (y - space).max(0.0)))
}

/// Scales the drawing, discs included, into [-1, 1], centred.
fn normalise(pos: &mut [[f64; 2]], radii: &mut [f64]) {
    let all: Vec<usize> = (0..pos.len()).collect();
    let (x0, y0, x1, y1) = bounds(&all, pos, radii);
    let span = (x1 - x0).max(y1 - y0).max(1e-12);
    let (cx, cy) = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
    for p in pos.iter_mut() {
        *p = [(p[0] - cx) / span * 2.0, (p[1] - cy) / span * 2.0];
    }
    for r in radii.iter_mut() {
        *r = *r / span * 2.0;
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
        for (p, r) in a.positions.iter().zip(&a.radii) {
            assert!(p[0].is_finite() && p[1].is_finite() && *r > 0.0);
            assert!(p[0].abs() + r <= 1.0 + 1e-9 && p[1].abs() + r <= 1.0 + 1e-9, "{p:?} r {r}");
        }
    }

    #[test]
    fn neighbours_end_closer_than_the_average_pair() {
        let g = cycle(30);
        let p = layout(&g, &vec![0.0; 30], 1).positions;
        let d = |i: usize, j: usize| ((p[i][0] - p[j][0]).powi(2) + (p[i][1] - p[j][1]).powi(2)).sqrt();
        let edge_mean = g.edges.iter().map(|e| d(e.a as usize, e.b as usize)).sum::<f64>() / g.edges.len() as f64;
        let all_mean = (0..30).flat_map(|i| (0..30).map(move |j| (i, j))).filter(|(i, j)| i < j).map(|(i, j)| d(i, j)).sum::<f64>() / 435.0;
        assert!(edge_mean < 0.5 * all_mean, "edge {edge_mean} all {all_mean}");
    }

    #[test]
    fn disc_area_follows_rows() {
        // Area ∝ rows: a node of a quarter of the rows has half the radius.
        assert!((disc_radius(400, 400) - R_MAX).abs() < 1e-12);
        assert!((disc_radius(100, 400) - R_MAX / 2.0).abs() < 1e-12);
        assert_eq!(disc_radius(1, 1_000_000), R_MIN);
    }

    #[test]
    fn a_large_component_is_laid_out_by_forces_and_keeps_its_discs_apart() {
        let k = STRESS_NODES + 50;
        let g = cycle(k);
        let lay = layout(&g, &(0..k).map(|i| i as f64).collect::<Vec<_>>(), 2);
        let (p, r) = (&lay.positions, &lay.radii);
        let mut close = 0;
        for i in 0..k {
            for j in i + 1..k {
                let d = ((p[i][0] - p[j][0]).powi(2) + (p[i][1] - p[j][1]).powi(2)).sqrt();
                if d < r[i] + r[j] {
                    close += 1;
                }
            }
        }
        assert_eq!(close, 0, "overlapping discs");
    }
}
