//! DBSCAN as defined by Ester, Kriegel, Sander, Xu (KDD 1996), on the shared k-d tree.
//!
//! Definitions kept exactly:
//! - the eps-neighbourhood N(p) of a point is every point q with dist(p, q) <= eps,
//!   **p itself included**;
//! - p is a core point when |N(p)| >= min_points;
//! - a cluster is grown from a core point by adding its neighbourhood and continuing from
//!   every core point added (density-reachability); seeds are taken in row order;
//! - a non-core point within eps of a core point is a border point; when core points of
//!   several clusters reach it, it joins the cluster grown first, i.e. the one whose
//!   lowest-numbered core point comes first (the paper leaves this choice to the order);
//! - every other point is noise (`None`).
//!
//! This matches scikit-learn's `DBSCAN(eps, min_samples=min_points, metric='euclidean')`
//! (any `algorithm`) exactly on which points are core and which are noise; border points
//! agree up to the visiting order (scikit-learn also grows clusters from seeds in row
//! order, so on the same row order the partition is expected to be the same; that last
//! point is from memory of its source, the fixtures check it). Cluster numbers here are
//! in order of each cluster's lowest row, which may differ from scikit-learn's.
//!
//! How it is computed (the result is the definition's; only the work differs). All work
//! is on the shared k-d tree, in tree order (the tree's own copy of the points, f64), with
//! box bounds: if the nearest corner of a box is farther than eps from a point (or from
//! another box) no pair can be within eps, and if the farthest corners are within eps
//! every pair is. Both bounds hold in floating point too, because a squared distance is
//! a sum of rounded, monotone operations taken in the same order as for a pair of points.
//! 1. Core points: a leaf whose box diagonal is <= eps and that holds `min_points` points
//!    is all core without a query; otherwise each point counts its own leaf first (often
//!    enough in dense data), then the subtree two levels above its leaf, then the rest
//!    of the tree, stopping at `min_points`.
//! 2. Clusters grow one at a time from seeds in row order, through core points only. The
//!    core points the growing cluster holds in the subtree two levels above a leaf (at
//!    most 4 leaves) are expanded together: their
//!    bounding box meets the tree box against box, and each candidate is checked against
//!    the box, then against the batch's points. Every node counts the core points it
//!    still has without a cluster, so finished subtrees are skipped at once.
//! 3. Border points: each non-core point takes the lowest cluster number among the core
//!    points within eps, i.e. the cluster grown first that reaches it, as the definition
//!    above says; one with no core point within eps is noise.
//!
//! The code is written once, generic over the dimension ([`Dim`]): [`dbscan`] runs it
//! with the dimension fixed at compile time for 1 to 8 columns (constant-length loops,
//! unrolled, no bounds checks) and as a run-time value beyond; same operations, same
//! order, same labels.
//!
//! Memory O(m); no m × m matrix.
//!
//! Not here: choosing eps (see the automatic settings), other metrics, weights.

use super::kdtree::{KdTree, LEAF_SIZE};
use super::Labels;

/// The number of coordinates of a point, known at compile time ([`Fixed`]) or only at run
/// time ([`Any`]). The algorithm below is written once, generic over it; [`dbscan`]
/// chooses [`Fixed`] for the usual small dimensions, so that every distance and box loop
/// has a constant length (unrolled, no bounds checks) and the same code serves any other
/// dimension through [`Any`]. Both run the same floating-point operations in the same
/// order, so the labels do not depend on which one is used.
trait Dim: Copy {
    fn n(self) -> usize;
}

#[derive(Clone, Copy)]
struct Fixed<const D: usize>;

impl<const D: usize> Dim for Fixed<D> {
    #[inline(always)]
    fn n(self) -> usize {
        D
    }
}

#[derive(Clone, Copy)]
struct Any(usize);

impl Dim for Any {
    #[inline(always)]
    fn n(self) -> usize {
        self.0
    }
}

/// How many coordinates a bounded sum adds between two comparisons with its bound.
/// Natively all of them for the fixed dimensions up to 8: a branch-free sum (vectorised)
/// beats stopping early. In wasm (scalar) stopping after each coordinate is faster.
const CHUNK: usize = if cfg!(target_arch = "wasm32") { 1 } else { 8 };

/// Whether `sum_k term(k)` over the `n` coordinates, added in coordinate order, stays at
/// or below `r2`. Every term is non-negative (a square), so the partial sums only grow,
/// also in floating point (rounding is monotone): the sum exceeds `r2` exactly when a
/// partial sum does, which lets long sums stop after a chunk without changing any answer.
#[inline(always)]
#[allow(clippy::modulo_one)] // CHUNK is 1 in wasm: a check after every coordinate.
fn sum_within(n: usize, r2: f64, term: impl Fn(usize) -> f64) -> bool {
    let mut s = 0.0;
    for k in 0..n {
        s += term(k);
        if ((k + 1) % CHUNK == 0 || k + 1 == n) && s > r2 {
            return false;
        }
    }
    true
}

#[inline(always)]
fn dist2<D: Dim>(d: D, a: &[f64], b: &[f64]) -> f64 {
    let n = d.n();
    a[..n].iter().zip(&b[..n]).map(|(x, y)| (x - y) * (x - y)).sum()
}

/// The larger of two finite values. Unlike `f64::max` (which wasm32 turns into a call to
/// `fmax`, for the NaN rules) a plain comparison: one instruction natively and in wasm.
/// The two differ only on NaN (never here) and on the sign of a zero, which the squares
/// below remove.
#[inline(always)]
fn max(a: f64, b: f64) -> f64 {
    if a > b { a } else { b }
}

/// The gap between the intervals `[alo, ahi]` and `[blo, bhi]` (0 when they meet): the
/// one of `blo - ahi`, `alo - bhi` that is positive (at most one is, as `alo <= ahi` and
/// `blo <= bhi`), otherwise 0. Natively without branches (faster there); in wasm by
/// comparisons, which V8 runs faster than selects. The same value either way.
#[inline(always)]
fn gap(alo: f64, ahi: f64, blo: f64, bhi: f64) -> f64 {
    if cfg!(target_arch = "wasm32") {
        if blo > ahi {
            blo - ahi
        } else if alo > bhi {
            alo - bhi
        } else {
            0.0
        }
    } else {
        max(max(blo - ahi, alo - bhi), 0.0)
    }
}

/// How many levels above a point's leaf its core count looks first.
const NEAR_LEVELS: usize = 2;

/// How many levels above a leaf the core points expanded together are gathered from.
const BATCH_LEVELS: usize = 2;

/// The parent of every node of `tree` (the root's is 0).
fn tree_parents(tree: &KdTree) -> Vec<u32> {
    let mut parent = vec![0u32; tree.node_count()];
    for n in 0..tree.node_count() {
        if let (_, Some(c)) = tree.node(n) {
            parent[c] = n as u32;
            parent[c + 1] = n as u32;
        }
    }
    parent
}

/// No cluster (yet).
const NONE: u32 = u32::MAX;

/// A box as `n` lower and `n` upper bounds.
type Bounds<'a> = (&'a [f64], &'a [f64]);

/// Squared distance between the farthest corners of a box and itself: its diagonal.
#[inline(always)]
fn diagonal2<D: Dim>(d: D, a: Bounds) -> f64 {
    let n = d.n();
    let (lo, hi) = (&a.0[..n], &a.1[..n]);
    let mut far = 0.0;
    for k in 0..n {
        let f = hi[k] - lo[k];
        far += f * f;
    }
    far
}

/// Whether two boxes come within squared distance `r2` (nearest corners).
#[inline(always)]
fn box_near<D: Dim>(d: D, a: Bounds, b: Bounds, r2: f64) -> bool {
    let n = d.n();
    let (alo, ahi, blo, bhi) = (&a.0[..n], &a.1[..n], &b.0[..n], &b.1[..n]);
    sum_within(n, r2, |k| {
        let g = gap(alo[k], ahi[k], blo[k], bhi[k]);
        g * g
    })
}

/// Whether the farthest corners of two boxes are within squared distance `r2` (so every
/// pair of their points is).
#[inline(always)]
fn box_far_within<D: Dim>(d: D, a: Bounds, b: Bounds, r2: f64) -> bool {
    let n = d.n();
    let (alo, ahi, blo, bhi) = (&a.0[..n], &a.1[..n], &b.0[..n], &b.1[..n]);
    sum_within(n, r2, |k| {
        let f = max(bhi[k] - alo[k], ahi[k] - blo[k]);
        f * f
    })
}

/// Whether a point is within squared distance `r2` of a box (nearest corner).
#[inline(always)]
fn point_box_near<D: Dim>(d: D, q: &[f64], b: Bounds, r2: f64) -> bool {
    let n = d.n();
    let (q, lo, hi) = (&q[..n], &b.0[..n], &b.1[..n]);
    sum_within(n, r2, |k| {
        let g = gap(q[k], q[k], lo[k], hi[k]);
        g * g
    })
}

/// DBSCAN labels for the rows of `points` (row-major, `dim` columns).
pub fn dbscan(points: &[f64], dim: usize, eps: f64, min_points: usize) -> Labels {
    if dim == 0 || points.is_empty() {
        return Vec::new();
    }
    match dim {
        1 => run(points, Fixed::<1>, eps, min_points),
        2 => run(points, Fixed::<2>, eps, min_points),
        3 => run(points, Fixed::<3>, eps, min_points),
        4 => run(points, Fixed::<4>, eps, min_points),
        5 => run(points, Fixed::<5>, eps, min_points),
        6 => run(points, Fixed::<6>, eps, min_points),
        7 => run(points, Fixed::<7>, eps, min_points),
        8 => run(points, Fixed::<8>, eps, min_points),
        _ => run(points, Any(dim), eps, min_points),
    }
}

fn run<D: Dim>(points: &[f64], dim: D, eps: f64, min_points: usize) -> Labels {
    let tree = KdTree::new(points, dim.n());
    let m = tree.len();
    let w = Work { tree: &tree, data: tree.tree_points(), dim, eps2: eps * eps };
    let leaves: Vec<usize> = tree.leaves().map(|(n, _)| n).collect();

    let core = w.core_points(&leaves, min_points);
    let labels_pos = w.expand(&core);
    let mut labels: Labels = vec![None; m];
    for (pos, &c) in labels_pos.iter().enumerate() {
        if c != NONE {
            labels[tree.row_at(pos)] = Some(c);
        }
    }
    super::renumber(&mut labels);
    labels
}

struct Work<'a, D: Dim> {
    tree: &'a KdTree,
    data: &'a [f64],
    dim: D,
    eps2: f64,
}

impl<D: Dim> Work<'_, D> {
    #[inline(always)]
    fn point(&self, pos: usize) -> &[f64] {
        let n = self.dim.n();
        &self.data[pos * n..(pos + 1) * n]
    }

    /// Node `n`'s box, each half of the dimension's length.
    #[inline(always)]
    fn node_box(&self, n: usize) -> Bounds<'_> {
        let d = self.dim.n();
        let (lo, hi) = self.tree.node_box(n);
        (&lo[..d], &hi[..d])
    }

    /// Whether each point (by tree position) has at least `min_points` points within eps,
    /// itself included.
    ///
    /// Each point counts its own leaf, then the subtree of the leaf's ancestor
    /// [`NEAR_LEVELS`] levels up (where its neighbours mostly are), then the rest of the
    /// tree, stopping as soon as it reaches `min_points`; every point is counted once.
    fn core_points(&self, leaves: &[usize], min_points: usize) -> Vec<bool> {
        let mut core = vec![false; self.tree.len()];
        let mut stack: Vec<usize> = Vec::new();
        let parent = tree_parents(self.tree);
        for &leaf in leaves {
            self.core_leaf(leaf, min_points, &parent, &mut core, &mut stack);
        }
        core
    }

    /// [`Work::core_points`] for the points of one leaf. Kept out of line (here and in the
    /// other per-unit steps below) so that it is a function called many times per build:
    /// a wasm engine swaps in its optimised code for a function between calls, never
    /// inside a running one, so a build that ran as one long call would run the first
    /// time entirely on the unoptimised code (about a third slower on a large element).
    #[inline(never)]
    fn core_leaf(&self, leaf: usize, min_points: usize, parent: &[u32], core: &mut [bool], stack: &mut Vec<usize>) {
        let tree = self.tree;
        let (range, _) = tree.node(leaf);
        let lb = self.node_box(leaf);
        // A box against itself: the farthest-corner distance is its diagonal.
        if range.len() >= min_points && diagonal2(self.dim, lb) <= self.eps2 {
            core[range].iter_mut().for_each(|c| *c = true);
            return;
        }
        let mut local = leaf;
        for _ in 0..NEAR_LEVELS {
            if local != 0 {
                local = parent[local] as usize;
            }
        }
        for p in range.clone() {
            let q = self.point(p);
            // Its own leaf first: in dense data that is often enough.
            let mut count = range.clone().filter(|&r| dist2(self.dim, q, self.point(r)) <= self.eps2).count();
            if count < min_points && local != leaf {
                self.count_from(q, local, leaf, &mut count, min_points, stack);
            }
            if count < min_points && local != 0 {
                self.count_from(q, 0, local, &mut count, min_points, stack);
            }
            core[p] = count >= min_points;
        }
    }

    /// Adds to `count` the points within eps of `q` in the subtree of `start`, leaving out
    /// the subtree of `skip`; stops once `count` reaches `min_points`.
    fn count_from(&self, q: &[f64], start: usize, skip: usize, count: &mut usize, min_points: usize, stack: &mut Vec<usize>) {
        let tree = self.tree;
        stack.clear();
        stack.push(start);
        while let Some(node) = stack.pop() {
            if node == skip || !point_box_near(self.dim, q, self.node_box(node), self.eps2) {
                continue;
            }
            let (nr, children) = tree.node(node);
            if let Some(c) = children {
                stack.extend([c + 1, c]);
                continue;
            }
            for r in nr {
                if dist2(self.dim, q, self.point(r)) <= self.eps2 {
                    *count += 1;
                }
            }
            if *count >= min_points {
                return;
            }
        }
    }

    /// Grows the clusters one at a time from seeds in row order: a cluster takes every
    /// point within eps of its core points, continuing from each core point it takes.
    /// Returns each point's cluster (by tree position), numbered in growing order, or
    /// [`NONE`].
    ///
    /// The clusters' core points are found first, then each border point is given the
    /// cluster grown first among those whose core points reach it: the lowest number
    /// among its core neighbours (a cluster, once grown, has taken every point within
    /// eps of its core points, so a border point goes to the first cluster that reaches
    /// it). Growing only through core points leaves the non-core points out of every
    /// scan.
    ///
    /// Two devices keep the growing cheap without changing the result (which points a
    /// cluster takes does not depend on the order its core points are expanded in): the
    /// core points of one small subtree ([`BATCH_LEVELS`] above a leaf) are expanded
    /// together, meeting nodes by box against box;
    /// and every node counts the core points it still has without a cluster, so finished
    /// subtrees are skipped at once.
    fn expand(&self, core: &[bool]) -> Vec<u32> {
        let tree = self.tree;
        let (m, nodes, dim) = (tree.len(), tree.node_count(), self.dim.n());
        let parent = tree_parents(tree);
        let mut leaf_of = vec![0u32; m];
        // Core points per node, leaves first, each parent after its children.
        let mut cores = vec![0u32; nodes];
        for n in (0..nodes).rev() {
            let (range, children) = tree.node(n);
            cores[n] = match children {
                Some(c) => cores[c] + cores[c + 1],
                None => {
                    range.clone().for_each(|p| leaf_of[p] = n as u32);
                    core[range].iter().filter(|&&c| c).count() as u32
                }
            };
        }
        let mut open = cores.clone();
        let mut pos_of_row = vec![0u32; m];
        for pos in 0..m {
            pos_of_row[tree.row_at(pos)] = pos as u32;
        }
        let take = |open: &mut [u32], pos: usize| {
            let mut n = leaf_of[pos] as usize;
            loop {
                open[n] -= 1;
                if n == 0 {
                    break;
                }
                n = parent[n] as usize;
            }
        };
        let mut label = vec![NONE; m];
        let mut expanded = vec![false; m];
        let mut stack: Vec<usize> = Vec::new();
        let mut batch: Vec<usize> = Vec::with_capacity(LEAF_SIZE << BATCH_LEVELS);
        let mut found: Vec<usize> = Vec::new();
        let mut nodes_todo: Vec<usize> = Vec::new();
        let (mut lo, mut hi) = (vec![0.0; dim], vec![0.0; dim]);
        let mut next = 0u32;
        for row in 0..m {
            let seed = pos_of_row[row] as usize;
            if !core[seed] || label[seed] != NONE {
                continue;
            }
            let c = next;
            next += 1;
            label[seed] = c;
            take(&mut open, seed);
            stack.push(seed);
            while let Some(p) = stack.pop() {
                if expanded[p] {
                    continue;
                }
                let leaf = leaf_of[p] as usize;
                let mut group = leaf;
                for _ in 0..BATCH_LEVELS {
                    group = parent[group] as usize;
                }
                batch.clear();
                for r in tree.node(group).0 {
                    if core[r] && !expanded[r] && label[r] == c {
                        expanded[r] = true;
                        batch.push(r);
                    }
                }
                lo.copy_from_slice(self.point(batch[0]));
                hi.copy_from_slice(self.point(batch[0]));
                for &b in &batch[1..] {
                    for (k, &v) in self.point(b).iter().enumerate() {
                        lo[k] = lo[k].min(v);
                        hi[k] = hi[k].max(v);
                    }
                }
                self.unlabelled_core_near((&lo[..], &hi[..]), &batch, core, &label, &open, &mut found, &mut nodes_todo);
                for &q in &found {
                    label[q] = c;
                    take(&mut open, q);
                    stack.push(q);
                }
            }
        }
        // Border points: the lowest cluster number among the core points within eps.
        for p in 0..m {
            if !core[p] {
                label[p] = self.border_label(p, core, &cores, &label, &mut nodes_todo);
            }
        }
        label
    }

    /// Into `found`, the core points without a cluster yet that lie within eps of some
    /// point of `batch` (whose bounding box is `bb`), skipping nodes with no open core
    /// point left. Out of line: see [`Work::core_leaf`].
    #[inline(never)]
    #[allow(clippy::too_many_arguments)]
    fn unlabelled_core_near(&self, bb: Bounds, batch: &[usize], core: &[bool], label: &[u32], open: &[u32], found: &mut Vec<usize>, nodes_todo: &mut Vec<usize>) {
        let tree = self.tree;
        found.clear();
        nodes_todo.clear();
        nodes_todo.push(0);
        while let Some(n) = nodes_todo.pop() {
            if open[n] == 0 {
                continue;
            }
            let nb = self.node_box(n);
            if !box_near(self.dim, bb, nb, self.eps2) {
                continue;
            }
            let (range, children) = tree.node(n);
            if box_far_within(self.dim, bb, nb, self.eps2) {
                // Every point of the node is within eps of every batch point.
                found.extend(range.filter(|&q| core[q] && label[q] == NONE));
            } else if let Some(ch) = children {
                nodes_todo.extend([ch + 1, ch]);
            } else {
                for q in range {
                    if !core[q] || label[q] != NONE {
                        continue;
                    }
                    let x = self.point(q);
                    if point_box_near(self.dim, x, bb, self.eps2) && batch.iter().any(|&b| dist2(self.dim, self.point(b), x) <= self.eps2) {
                        found.push(q);
                    }
                }
            }
        }
    }

    /// The cluster of non-core point `p`: the lowest cluster number among the core points
    /// within eps, or [`NONE`]. `cores` counts each node's core points. Out of line: see
    /// [`Work::core_leaf`].
    #[inline(never)]
    fn border_label(&self, p: usize, core: &[bool], cores: &[u32], label: &[u32], nodes_todo: &mut Vec<usize>) -> u32 {
        let tree = self.tree;
        let q = self.point(p);
        let mut best = NONE;
        nodes_todo.clear();
        nodes_todo.push(0);
        while let Some(n) = nodes_todo.pop() {
            if cores[n] == 0 || !point_box_near(self.dim, q, self.node_box(n), self.eps2) {
                continue;
            }
            let (range, children) = tree.node(n);
            if let Some(ch) = children {
                nodes_todo.extend([ch + 1, ch]);
                continue;
            }
            for r in range {
                if core[r] && label[r] < best && dist2(self.dim, q, self.point(r)) <= self.eps2 {
                    best = label[r];
                }
            }
        }
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    /// DBSCAN straight from the definitions with O(m^2) distance checks (no matrix kept):
    /// core points, clusters as connected components of core points within eps of each
    /// other, each border point given to the cluster whose lowest core row is smallest,
    /// clusters numbered by lowest row.
    fn brute_dbscan(points: &[f64], dim: usize, eps: f64, min_points: usize) -> Labels {
        let m = points.len() / dim;
        let close = |i: usize, j: usize| {
            (0..dim).map(|k| (points[i * dim + k] - points[j * dim + k]).powi(2)).sum::<f64>() <= eps * eps
        };
        let core: Vec<bool> = (0..m).map(|i| (0..m).filter(|&j| close(i, j)).count() >= min_points).collect();
        // Components of the core graph, each named by its lowest core row.
        let mut comp = vec![usize::MAX; m];
        for s in 0..m {
            if !core[s] || comp[s] != usize::MAX {
                continue;
            }
            comp[s] = s;
            let mut todo = vec![s];
            while let Some(p) = todo.pop() {
                for q in 0..m {
                    if core[q] && comp[q] == usize::MAX && close(p, q) {
                        comp[q] = s;
                        todo.push(q);
                    }
                }
            }
        }
        let mut raw: Vec<Option<usize>> = (0..m)
            .map(|i| {
                if core[i] {
                    Some(comp[i])
                } else {
                    (0..m).filter(|&j| core[j] && close(i, j)).map(|j| comp[j]).min()
                }
            })
            .collect();
        // Renumber by lowest row.
        let mut names: Vec<usize> = Vec::new();
        let labels = raw
            .iter_mut()
            .map(|l| {
                l.map(|c| match names.iter().position(|&n| n == c) {
                    Some(k) => k as u32,
                    None => {
                        names.push(c);
                        (names.len() - 1) as u32
                    }
                })
            })
            .collect();
        labels
    }

    #[test]
    fn hand_made_chain_with_borders_and_noise() {
        // 1-D, eps 1, min_points 3 (the point itself counts).
        // N(0) = {0, 1}: 2 < 3, not core; N(1) = {0, 1, 2} and N(2) = {1, 2, 3}: core;
        // N(3) = {2, 3}: border. 10, 11, 12: only 11 is core, 10 and 12 are its borders.
        // 20 is alone: noise.
        let pts = [0.0, 1.0, 2.0, 3.0, 10.0, 11.0, 12.0, 20.0];
        assert_eq!(
            dbscan(&pts, 1, 1.0, 3),
            vec![Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), None]
        );
        // min_points 4: no point has 4 neighbours, everything is noise.
        assert_eq!(dbscan(&pts, 1, 1.0, 4), vec![None; 8]);
        // min_points 1: every point is core; clusters are the eps-connected pieces.
        assert_eq!(
            dbscan(&pts, 1, 1.0, 1),
            vec![Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), Some(2)]
        );
    }

    #[test]
    fn contested_border_point_goes_to_the_cluster_grown_first() {
        // eps 1, min_points 4. Two crosses, centres (-1, 0) and (1, 0), each centre with
        // three arms at distance 1 (so |N(centre)| = 5, core); the arms have only their
        // centre (and b) near, so they are border points. b = (0, 0) is within 1 of both
        // centres but |N(b)| = 3: a border point both clusters reach.
        let b = [0.0, 0.0];
        let right = [[1.0, 0.0], [2.0, 0.0], [1.0, 1.0], [1.0, -1.0]]; // centre first
        let left = [[-1.0, 0.0], [-2.0, 0.0], [-1.0, 1.0], [-1.0, -1.0]];
        let noise = [5.0, 5.0];

        // Order 1: b, right centre and arms, left centre and arms, noise. The right
        // centre (row 1) is the first core row, so its cluster is grown first and takes b.
        let mut pts = b.to_vec();
        right.iter().chain(&left).for_each(|p| pts.extend(p));
        pts.extend(noise);
        let want1 = vec![Some(0), Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), Some(1), None];
        assert_eq!(dbscan(&pts, 2, 1.0, 4), want1);

        // Order 2: a right arm, the left centre, b, the right centre, the other arms. The
        // left centre (row 1) is now the first core row, so b goes left. Numbering is by
        // lowest row, so the right cluster (row 0) is 0 and the left one (row 1) is 1.
        let rows = [right[1], left[0], b, right[0], right[2], right[3], left[1], left[2], left[3], noise];
        let pts: Vec<f64> = rows.iter().flatten().copied().collect();
        let want2 = vec![Some(0), Some(1), Some(1), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), None];
        assert_eq!(dbscan(&pts, 2, 1.0, 4), want2);
    }

    #[test]
    fn equals_brute_force_on_random_data() {
        let mut rng = SplitMix64::new(31);
        for &dim in &[1usize, 2, 3, 7] {
            // Three blobs plus uniform background: core, border and noise all occur.
            let m = 400;
            let mut pts = Vec::with_capacity(m * dim);
            for i in 0..m {
                let centre = [0.0, 4.0, 8.0][i % 3];
                let bg = i % 7 == 0;
                for _ in 0..dim {
                    pts.push(if bg { rng.next_f64() * 14.0 - 3.0 } else { centre + 0.8 * rng.normal() });
                }
            }
            for &(eps, min_points) in &[(0.3, 3), (0.6, 5), (1.0, 10), (1.5, 4), (0.5, 1)] {
                let eps = eps * (dim as f64).sqrt();
                let got = dbscan(&pts, dim, eps, min_points);
                let want = brute_dbscan(&pts, dim, eps, min_points);
                assert_eq!(got, want, "dim {dim}, eps {eps}, min_points {min_points}");
            }
        }
    }

    /// Timing on points from a file of raw f64 values (row-major), e.g. one cover element
    /// written out by a script: `NERVURE_DBSCAN_POINTS=FILE NERVURE_DBSCAN_DIM=6
    /// cargo test --release --lib dbscan::tests::timing_file -- --ignored --nocapture`.
    #[test]
    #[ignore]
    fn timing_file() {
        let Ok(path) = std::env::var("NERVURE_DBSCAN_POINTS") else { return };
        let dim: usize = std::env::var("NERVURE_DBSCAN_DIM").map_or(6, |d| d.parse().unwrap());
        let eps: f64 = std::env::var("NERVURE_DBSCAN_EPS").map_or(0.3, |d| d.parse().unwrap());
        let min_points: usize = std::env::var("NERVURE_DBSCAN_MIN").map_or(10, |d| d.parse().unwrap());
        let bytes = std::fs::read(path).unwrap();
        let pts: Vec<f64> = bytes.chunks_exact(8).map(|c| f64::from_le_bytes(c.try_into().unwrap())).collect();
        let t = std::time::Instant::now();
        let tree = KdTree::new(&pts, dim);
        println!("{} points; tree {:.3} s", tree.len(), t.elapsed().as_secs_f64());
        let t = std::time::Instant::now();
        let labels = dbscan(&pts, dim, eps, min_points);
        let k = labels.iter().flatten().max().map_or(0, |&c| c + 1);
        let noise = labels.iter().filter(|l| l.is_none()).count();
        println!("dbscan {:.3} s: {k} clusters, {noise} noise", t.elapsed().as_secs_f64());
    }

    #[test]
    fn empty_and_single() {
        assert_eq!(dbscan(&[], 3, 1.0, 2), Vec::<Option<u32>>::new());
        assert_eq!(dbscan(&[1.0, 2.0], 2, 1.0, 1), vec![Some(0)]);
        assert_eq!(dbscan(&[1.0, 2.0], 2, 1.0, 2), vec![None]);
    }
}
