//! Single-linkage clustering with the gap cut of Singh, Mémoli, Carlsson (2007).
//!
//! Single linkage needs no dendrogram here: its merge heights are exactly the edge weights
//! of a Euclidean minimum spanning tree, and cutting the dendrogram at height t gives the
//! components of the spanning tree's edges of weight <= t (Gower & Ross 1969). So
//! [`merge_heights`] returns the sorted spanning-tree weights, which are the values in
//! column 2 of `scipy.cluster.hierarchy.linkage(X, method='single')`.
//!
//! The spanning tree comes from Borůvka's algorithm on the index the clustering methods
//! share (`index.rs`: a k-d tree split by variance, in the points' principal axes from 3
//! columns on): each round, every component finds its shortest edge to another component
//! with one "nearest point in another component" query per point, pruned by subtrees
//! lying wholly inside the asking component and by the best edge that component has found
//! so far. A point whose previous answer still lies in another component keeps it without
//! a new query (the candidate set only shrinks as components merge), and a point whose
//! last known distance to another component already exceeds its component's best edge is
//! skipped (that distance can only grow). There are at most log2(m) rounds; each query is
//! logarithmic on well-spread data, so the whole is O(m log^2 m)-ish in practice, with no
//! m × m matrix. Distances between points are those of the given coordinates, so the
//! weights are exact whatever frame the index uses.
//!
//! Measured against the other way of running Borůvka on the same index, one traversal of
//! pairs of nodes per round (dual tree: a pair is skipped when both nodes lie in one
//! component or when its gap exceeds the worst best edge of the components in either
//! node). Seconds for the whole spanning tree, one thread, natively, on standard normal
//! points (`examples/cluster_bench.rs` on raw points, 2-core machine under load, one run
//! each side by side):
//!
//! | points × columns | per-point queries (this) | pairs of nodes | the previous tree (split at the widest side, no frame) |
//! |---|---|---|---|
//! | 200 000 × 2  | 0.27 | 0.24 | 0.33 |
//! | 100 000 × 3  | 0.21 | 0.25 | 0.24 |
//! | 100 000 × 6  | 1.23 | 4.10 | 1.22 |
//! | 50 000 × 12  | 5.76 | 19.9 | 6.94 |
//!
//! The traversal of pairs only wins in 2 columns, by 10 %, and loses 3.4 times in 6 and 12
//! columns: its bounds stay loose until late in each round, while the per-point queries
//! carry the last answer from round to round. So the per-point queries stay.
//!
//! The cut ([`gap_threshold`]): make a histogram of the m - 1 merge heights with
//! `gap_bins` equal-width bins over **[min height, max height]** (the default range of
//! `numpy.histogram`, and its rule for a value that falls on an inner edge: it belongs
//! to the bin on the right; the last bin is closed). Find the first empty bin; cut every
//! spanning-tree edge whose height is greater than that bin's left edge, keep the others.
//! If no bin is empty, nothing is cut and the rows form one cluster. When all heights are
//! equal (including m = 2) there is no gap and the rows form one cluster; numpy would
//! widen the range to [h - 0.5, h + 0.5], which would put an empty bin below every height
//! and cut everything, so we deliberately do not follow it there.
//!
//! Not here: other linkages (average, complete), other cut rules, non-Euclidean metrics.

use super::index::{dist2, gap2, Any, Dim, Fixed, Index};
use super::kdtree::KdTree;
use super::unionfind::UnionFind;
use super::Labels;

/// One spanning-tree edge between rows `a` and `b` of the input, of Euclidean length
/// `weight`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Edge {
    pub a: usize,
    pub b: usize,
    pub weight: f64,
}

/// A Euclidean minimum spanning tree of the rows of `points` (row-major, `dim` columns):
/// m - 1 edges for m >= 1 rows, none for 0 rows. Edge order is unspecified.
/// Coordinates must be finite.
pub fn minimum_spanning_tree(points: &[f64], dim: usize) -> Vec<Edge> {
    if dim == 0 || points.len() < 2 * dim {
        return Vec::new();
    }
    match dim {
        1 => spanning_tree(points, Fixed::<1>),
        2 => spanning_tree(points, Fixed::<2>),
        3 => spanning_tree(points, Fixed::<3>),
        4 => spanning_tree(points, Fixed::<4>),
        5 => spanning_tree(points, Fixed::<5>),
        6 => spanning_tree(points, Fixed::<6>),
        7 => spanning_tree(points, Fixed::<7>),
        8 => spanning_tree(points, Fixed::<8>),
        _ => spanning_tree(points, Any(dim)),
    }
}

/// No point (yet).
const NONE: u32 = u32::MAX;

/// Borůvka with one "nearest point in another component" query per point (module doc).
/// Everything below is indexed by tree position, for locality.
fn spanning_tree<D: Dim>(points: &[f64], dim: D) -> Vec<Edge> {
    let index = Index::new(points, dim);
    let tree = &index.tree;
    let m = tree.len();
    let s = Search::new(&index, dim);
    let mut edges = Vec::with_capacity(m - 1);
    let mut uf = UnionFind::new(m);
    let mut comp: Vec<u32> = (0..m as u32).collect();
    let mut node_comp = Vec::new();
    // Per point: the last nearest point in another component (or `NONE`) and its squared
    // distance, which stays a lower bound on the current one since the candidate set
    // only shrinks as components merge.
    let mut cache: Vec<(u32, f64)> = vec![(NONE, 0.0); m];
    // Per component (indexed by its representative): best (squared distance, from, to).
    let mut best: Vec<(f64, u32, u32)> = vec![(f64::INFINITY, NONE, NONE); m];
    while edges.len() < m - 1 {
        tree.node_components(&comp, &mut node_comp);
        for p in 0..m {
            let c = comp[p];
            let (t, d2) = cache[p];
            let bound = best[c as usize].0;
            let candidate = if t != NONE && comp[t as usize] != c {
                Some((t as usize, d2))
            } else if d2 >= bound {
                // p's nearest point in another component is no closer than d2 (a lower
                // bound that only grows): it cannot beat the component's best edge.
                None
            } else {
                let found = s.nearest_other(p, c, &comp, &node_comp, bound);
                // An answer below the bound is the true nearest point in another component;
                // no answer means that point lies at least `bound` away.
                cache[p] = found.map_or((NONE, bound), |(t, d2)| (t as u32, d2));
                found
            };
            if let Some((t, d2)) = candidate {
                if d2 < best[c as usize].0 {
                    best[c as usize] = (d2, p as u32, t as u32);
                }
            }
        }
        let before = edges.len();
        for c in 0..m {
            let (d2, a, b) = best[c];
            if a == NONE {
                continue;
            }
            best[c] = (f64::INFINITY, NONE, NONE);
            // Equal-weight choices can close a cycle; the union-find drops one edge of it,
            // which leaves a minimum spanning tree (each cycle's edges all weigh the same).
            if uf.union(a as usize, b as usize) {
                edges.push(Edge { a: tree.row_at(a as usize), b: tree.row_at(b as usize), weight: d2.sqrt() });
            }
        }
        if edges.len() == before {
            // Only possible with non-finite coordinates; stop rather than loop.
            debug_assert!(false, "spanning tree made no progress: non-finite coordinates?");
            break;
        }
        for p in 0..m {
            comp[p] = uf.find(p) as u32;
        }
    }
    edges
}

/// Nearest-point queries on the index: box tests in its frame, distances on the points as
/// given (both in tree order), boxes stretched by the frame's margin (`index.rs`).
struct Search<'a, D: Dim> {
    tree: &'a KdTree,
    frame: &'a [f64],
    data: &'a [f64],
    dim: D,
    margin: f64,
}

impl<'a, D: Dim> Search<'a, D> {
    fn new(index: &'a Index, dim: D) -> Self {
        Search { tree: &index.tree, frame: index.tree.tree_points(), data: index.points(), dim, margin: index.margin }
    }

    /// Squared distance in the frame from `q` to the nearest corner of node `n`'s box.
    #[inline(always)]
    fn near2(&self, q: &[f64], n: usize) -> f64 {
        gap2(self.dim, (q, q), self.tree.node_box(n), f64::INFINITY)
    }

    /// The point nearest to the point at tree position `p` whose component differs from
    /// `own`, if one lies at squared distance (given coordinates) strictly below `bound2`:
    /// its tree position and squared distance. `comp` is the component of each point by
    /// tree position, `node_comp` the output of [`KdTree::node_components`] for it;
    /// subtrees wholly inside `own` are skipped. Which of several tied points is returned
    /// is unspecified.
    fn nearest_other(&self, p: usize, own: u32, comp: &[u32], node_comp: &[u32], bound2: f64) -> Option<(usize, f64)> {
        let n = self.dim.n();
        let q = &self.frame[p * n..(p + 1) * n];
        let x = &self.data[p * n..(p + 1) * n];
        // A box is worth opening while its nearest corner in the frame lies nearer than the
        // best distance so far plus the margin.
        let reach = |b: f64| if self.margin == 0.0 { b } else { let r = b.sqrt() + self.margin; r * r };
        let mut best = (bound2, usize::MAX, reach(bound2));
        self.other_rec(0, self.near2(q, 0), q, x, own, comp, node_comp, &mut best, &reach);
        (best.1 != usize::MAX).then_some((best.1, best.0))
    }

    #[allow(clippy::too_many_arguments)]
    #[inline(never)]
    fn other_rec(&self, nd: usize, near: f64, q: &[f64], x: &[f64], own: u32, comp: &[u32], node_comp: &[u32], best: &mut (f64, usize, f64), reach: &impl Fn(f64) -> f64) {
        if near >= best.2 || node_comp[nd] == own {
            return;
        }
        let (range, children) = self.tree.node(nd);
        let n = self.dim.n();
        match children {
            None => {
                for pos in range {
                    if comp[pos] != own {
                        let d2 = dist2(self.dim, x, &self.data[pos * n..(pos + 1) * n]);
                        if d2 < best.0 {
                            *best = (d2, pos, reach(d2));
                        }
                    }
                }
            }
            Some(c) => {
                let (dl, dr) = (self.near2(q, c), self.near2(q, c + 1));
                if dl <= dr {
                    self.other_rec(c, dl, q, x, own, comp, node_comp, best, reach);
                    self.other_rec(c + 1, dr, q, x, own, comp, node_comp, best, reach);
                } else {
                    self.other_rec(c + 1, dr, q, x, own, comp, node_comp, best, reach);
                    self.other_rec(c, dl, q, x, own, comp, node_comp, best, reach);
                }
            }
        }
    }
}

/// The m - 1 single-linkage merge heights of the rows of `points`, ascending: the sorted
/// weights of a Euclidean minimum spanning tree (Gower & Ross 1969), equal to column 2
/// of `scipy.cluster.hierarchy.linkage(X, method='single')`.
pub fn merge_heights(points: &[f64], dim: usize) -> Vec<f64> {
    let mut h: Vec<f64> = minimum_spanning_tree(points, dim).iter().map(|e| e.weight).collect();
    h.sort_by(f64::total_cmp);
    h
}

/// The height at which the gap rule cuts: the left edge of the first empty bin of a
/// histogram of `heights` with `bins` equal-width bins over [min, max] (module doc).
/// `None` means no bin is empty (or there are no heights, or all are equal): keep one
/// cluster.
pub fn gap_threshold(heights: &[f64], bins: usize) -> Option<f64> {
    let lo = heights.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = heights.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if bins < 2 || heights.is_empty() || !(hi > lo) {
        return None;
    }
    // Bin edges as numpy.linspace(lo, hi, bins + 1) computes them.
    let step = (hi - lo) / bins as f64;
    let mut edges: Vec<f64> = (0..=bins).map(|i| lo + i as f64 * step).collect();
    edges[bins] = hi;
    let mut counts = vec![0usize; bins];
    let norm = bins as f64 / (hi - lo);
    for &x in heights {
        // numpy.histogram's assignment: scale, then correct by one against the edges.
        let mut i = (((x - lo) * norm) as usize).min(bins - 1);
        if x < edges[i] {
            i -= 1;
        }
        if i != bins - 1 && x >= edges[i + 1] {
            i += 1;
        }
        counts[i] += 1;
    }
    counts.iter().position(|&c| c == 0).map(|j| edges[j])
}

/// Single-linkage clusters of the rows of `points` cut by the gap rule with `gap_bins`
/// bins. Clusters are numbered in order of their lowest row. Every row gets a cluster.
pub fn single_linkage(points: &[f64], dim: usize, gap_bins: usize) -> Labels {
    if dim == 0 || points.is_empty() {
        return Vec::new();
    }
    let m = points.len() / dim;
    let edges = minimum_spanning_tree(points, dim);
    let mut heights: Vec<f64> = edges.iter().map(|e| e.weight).collect();
    heights.sort_by(f64::total_cmp);
    let threshold = gap_threshold(&heights, gap_bins);
    let mut uf = UnionFind::new(m);
    for e in &edges {
        if threshold.map_or(true, |t| e.weight <= t) {
            uf.union(e.a, e.b);
        }
    }
    let mut id = vec![u32::MAX; m];
    let mut next = 0;
    (0..m)
        .map(|i| {
            let r = uf.find(i);
            if id[r] == u32::MAX {
                id[r] = next;
                next += 1;
            }
            Some(id[r])
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    fn d(points: &[f64], dim: usize, i: usize, j: usize) -> f64 {
        (0..dim).map(|k| (points[i * dim + k] - points[j * dim + k]).powi(2)).sum::<f64>().sqrt()
    }

    /// Prim's algorithm on the complete graph, O(m^2) time and O(m) memory: the textbook
    /// definition (common practice), used only to check the fast path on small data.
    fn prim_weights(points: &[f64], dim: usize) -> Vec<f64> {
        let m = points.len() / dim;
        if m < 2 {
            return vec![];
        }
        let mut in_tree = vec![false; m];
        let mut key = vec![f64::INFINITY; m];
        key[0] = 0.0;
        let mut out = Vec::new();
        for step in 0..m {
            let u = (0..m).filter(|&v| !in_tree[v]).min_by(|&a, &b| key[a].total_cmp(&key[b])).unwrap();
            in_tree[u] = true;
            if step > 0 {
                out.push(key[u]);
            }
            for v in 0..m {
                if !in_tree[v] {
                    key[v] = key[v].min(d(points, dim, u, v));
                }
            }
        }
        out.sort_by(f64::total_cmp);
        out
    }

    #[test]
    fn spanning_tree_equals_prim_on_random_data() {
        let mut rng = SplitMix64::new(21);
        for &dim in &[1usize, 2, 3, 7, 12] {
            for &m in &[1usize, 2, 3, 17, 100, 600] {
                let pts: Vec<f64> = (0..m * dim).map(|_| rng.normal()).collect();
                let edges = minimum_spanning_tree(&pts, dim);
                assert_eq!(edges.len(), m - 1);
                // It is a spanning tree: m - 1 edges joining everything.
                let mut uf = UnionFind::new(m);
                for e in &edges {
                    assert!(uf.union(e.a, e.b), "cycle in the tree");
                    assert!((e.weight - d(&pts, dim, e.a, e.b)).abs() < 1e-12);
                }
                let fast = merge_heights(&pts, dim);
                let slow = prim_weights(&pts, dim);
                assert_eq!(fast.len(), slow.len());
                for (a, b) in fast.iter().zip(&slow) {
                    assert!((a - b).abs() <= 1e-12 * b.max(1.0), "dim {dim}, m {m}: {a} vs {b}");
                }
                let total_fast: f64 = fast.iter().sum();
                let total_slow: f64 = slow.iter().sum();
                assert!((total_fast - total_slow).abs() <= 1e-9 * total_slow.max(1.0));
            }
        }
    }

    #[test]
    fn nearest_other_component_equals_brute_force() {
        // The query on the shared index, in 3 and 7 columns (principal-axes frame, with its
        // margin) and 1, 2 (the points as given); the brute force is the definition.
        let mut rng = SplitMix64::new(13);
        for &dim in &[1usize, 2, 3, 7] {
            let m = 700;
            let pts: Vec<f64> = (0..m * dim).map(|_| rng.normal() * 3.0).collect();
            let index = Index::new(&pts, Any(dim));
            let s = Search::new(&index, Any(dim));
            let at = |pos: usize| &index.points()[pos * dim..(pos + 1) * dim];
            // Components by slabs along the first frame axis, so that whole subtrees share
            // a label and the pruning path is exercised, plus a few scattered ones.
            let comp: Vec<u32> = (0..m)
                .map(|pos| {
                    let x = index.tree.point_at(pos)[0];
                    if pos % 97 == 0 { 9 } else { ((x + 15.0) / 7.5) as u32 }
                })
                .collect();
            let mut node_comp = Vec::new();
            index.tree.node_components(&comp, &mut node_comp);
            assert!(node_comp.iter().any(|&c| c != crate::cluster::kdtree::MIXED), "dim {dim}: no node inside one component");
            for p in 0..m {
                let own = comp[p];
                let want = (0..m).filter(|&j| comp[j] != own).map(|j| dist2(Any(dim), at(p), at(j))).min_by(f64::total_cmp);
                let got = s.nearest_other(p, own, &comp, &node_comp, f64::INFINITY);
                assert_eq!(got.map(|g| g.1), want, "dim {dim}, pos {p}");
                // A bound at or below the true answer finds nothing.
                if let Some(d2) = want {
                    assert_eq!(s.nearest_other(p, own, &comp, &node_comp, d2), None);
                }
            }
        }
    }

    #[test]
    fn spanning_tree_with_duplicates_and_ties() {
        // A 6 × 6 integer grid, each point twice: many zero and many equal heights.
        let mut pts = Vec::new();
        for _ in 0..2 {
            for i in 0..6 {
                for j in 0..6 {
                    pts.extend([i as f64, j as f64]);
                }
            }
        }
        let h = merge_heights(&pts, 2);
        assert_eq!(h.len(), 71);
        // 36 duplicate pairs joined at height 0, then 35 grid steps of length 1.
        assert_eq!(h.iter().filter(|&&x| x == 0.0).count(), 36);
        assert_eq!(h.iter().filter(|&&x| x == 1.0).count(), 35);
        assert_eq!(h, prim_weights(&pts, 2));
    }

    #[test]
    fn gap_rule_hand_computed() {
        // 1-D points 0, 1, 5, 6, 20. Spanning tree edges: 0-1 (1), 1-5 (4), 5-6 (1),
        // 6-20 (14). Sorted heights [1, 1, 4, 14]; min 1, max 14.
        let pts = [0.0, 1.0, 5.0, 6.0, 20.0];
        assert_eq!(merge_heights(&pts, 1), vec![1.0, 1.0, 4.0, 14.0]);
        // 4 bins of width 13/4 = 3.25: [1, 4.25) [4.25, 7.5) [7.5, 10.75) [10.75, 14].
        // Counts 3, 0, 0, 1: the first empty bin is bin 1, left edge 4.25. Only the
        // 14 edge lies above: two clusters {0, 1, 5, 6} and {20}.
        assert_eq!(gap_threshold(&[1.0, 1.0, 4.0, 14.0], 4), Some(4.25));
        assert_eq!(single_linkage(&pts, 1, 4), vec![Some(0), Some(0), Some(0), Some(0), Some(1)]);
        // 13 bins of width 1: [1,2) [2,3) [3,4) [4,5) ... [13,14]. Counts 2, 0, 0, 1, ..., 1
        // (4 sits on an inner edge and goes right, as in numpy.histogram). First empty bin
        // is bin 1, left edge 2: the 4 and 14 edges are cut, three clusters.
        assert_eq!(gap_threshold(&[1.0, 1.0, 4.0, 14.0], 13), Some(2.0));
        assert_eq!(single_linkage(&pts, 1, 13), vec![Some(0), Some(0), Some(1), Some(1), Some(2)]);
        // 2 bins: [1, 7.5) [7.5, 14], counts 3, 1: no empty bin, one cluster.
        assert_eq!(gap_threshold(&[1.0, 1.0, 4.0, 14.0], 2), None);
        assert_eq!(single_linkage(&pts, 1, 2), vec![Some(0); 5]);
    }

    #[test]
    fn gap_rule_on_blobs() {
        let mut rng = SplitMix64::new(22);
        let dim = 3;
        // Two blobs of 200 points, sd 1, centres (0,0,0) and (30,30,30): within-blob merge
        // heights stay below about 2, the one bridging height is about 45, so a histogram of 10 bins over
        // [min, max] has empty bins between them.
        let mut two = Vec::new();
        for i in 0..400 {
            let c = if i % 2 == 0 { 0.0 } else { 30.0 };
            for _ in 0..dim {
                two.push(c + rng.normal());
            }
        }
        let labels = single_linkage(&two, dim, 10);
        let want: Labels = (0..400).map(|i| Some((i % 2) as u32)).collect();
        assert_eq!(labels, want);

        // One blob of 400 uniform points in a cube: heights spread without a wide gap.
        let one: Vec<f64> = (0..400 * dim).map(|_| rng.next_f64()).collect();
        let h = merge_heights(&one, dim);
        assert_eq!(gap_threshold(&h, 5), None, "heights {:?}", &h[h.len() - 5..]);
        assert_eq!(single_linkage(&one, dim, 5), vec![Some(0); 400]);
    }

    #[test]
    fn small_and_degenerate_inputs() {
        assert_eq!(single_linkage(&[], 2, 10), Vec::<Option<u32>>::new());
        assert_eq!(single_linkage(&[], 0, 10), Vec::<Option<u32>>::new());
        assert_eq!(single_linkage(&[3.0, 4.0], 2, 10), vec![Some(0)]);
        // Two points: one height, no gap.
        assert_eq!(single_linkage(&[0.0, 0.0, 5.0, 5.0], 2, 10), vec![Some(0), Some(0)]);
        // All points identical: all heights 0.
        assert_eq!(single_linkage(&[1.0; 40], 2, 10), vec![Some(0); 20]);
    }
}
