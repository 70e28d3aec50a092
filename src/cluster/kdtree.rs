//! A k-d tree over a row-major slice of points, the one spatial index the clustering
//! methods share: radius queries for DBSCAN, nearest-neighbour queries, the "nearest point
//! in another component" query that drives Borůvka's minimum spanning tree, and the
//! automatic settings' "largest difference of a value within a radius" (`largest_gap_within`).
//!
//! Why our own tree: the number of columns is chosen by the user at run time, while the
//! well-kept k-d tree crates fix the dimension as a const generic parameter at compile
//! time. Compiling one instance per possible dimension is not an option for a page that
//! takes any CSV, so this tree takes `dim` as a plain value.
//!
//! Layout (flat arrays, no per-node allocation): the rows are copied once into tree
//! order, `index` maps a tree position back to the caller's row, and each node holds a
//! contiguous range of positions plus its tight bounding box. Children of a node sit side
//! by side in `nodes`, after their parent. Leaves hold at most [`LEAF_SIZE`] points. The
//! build splits each node at the median of its widest coordinate (found with
//! `select_nth_unstable`, linear time), so the depth is about log2(m / LEAF_SIZE) and the
//! build is O(m log m) even when many points coincide.
//!
//! Distances are Euclidean; comparisons are made on squared distances, so "within r"
//! means `sum (q_i - x_i)^2 <= r * r` as computed in floating point.
//!
//! Not here: other metrics, insertion or deletion after the build, approximate search.

/// Largest number of points in a leaf.
pub const LEAF_SIZE: usize = 16;

/// How a node chooses the axis it is split on (always at the median).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Split {
    /// The axis along which its box is widest (the usual rule; cheap, from the parent's
    /// box cut at the split).
    Widest,
    /// The axis along which its points vary most (largest variance). In wide data with
    /// long-tailed columns the widest axis is often a tail of noise, while the variance
    /// follows where the points are; DBSCAN's tree uses it (see `dbscan.rs`).
    Variance,
}

/// Most rows read to choose a split axis by [`Split::Variance`].
const VARIANCE_SAMPLE: usize = 64;

/// Component label of a node whose points lie in more than one component.
pub const MIXED: u32 = u32::MAX;

#[derive(Debug, Clone, Copy)]
struct Node {
    start: u32,
    end: u32,
    /// 0 for a leaf (the root is never a child); otherwise the left child, the right
    /// child being `children + 1`.
    children: u32,
}

/// A k-d tree over `m` points of dimension `dim`, built once, queried many times.
#[derive(Debug, Clone)]
pub struct KdTree {
    dim: usize,
    /// The points in tree order, row-major.
    data: Vec<f64>,
    /// `index[pos]` is the caller's row number of the point at tree position `pos`.
    index: Vec<u32>,
    nodes: Vec<Node>,
    /// Per node, `dim` lower bounds then `dim` upper bounds.
    bounds: Vec<f64>,
}

/// Buffers a build reuses from split to split (an allocation per split was measurable in wasm).
struct Scratch {
    /// A node's coordinates on its split axis, beside their rows.
    keyed: Vec<(f64, u32)>,
    /// `dim` sums then `dim` sums of squares, for [`Split::Variance`].
    sums: Vec<f64>,
}

/// Values of the points for [`KdTree::largest_gap_within`] ([`KdTree::order_leaves_by`]).
#[derive(Debug, Clone)]
pub struct ValueRanges {
    /// The value at each tree position (each leaf's in increasing order, NaN last).
    by_pos: Vec<f64>,
    /// For a leaf, how many of its points have a value (not NaN).
    valid: Vec<u32>,
    /// Each node's least and greatest value (infinite ends reversed for none).
    node: Vec<(f64, f64)>,
}

/// One answer of a nearest-neighbour query.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Neighbour {
    /// Row number in the slice the tree was built from.
    pub index: usize,
    /// Euclidean distance to the query.
    pub dist: f64,
}

/// Copies one row of a few values (`dst.copy_from_slice(src)`, the lengths equal).
///
/// A value-by-value loop rather than `copy_from_slice`: in wasm a copy whose length is known
/// only at run time compiles to `memory.copy`, which V8 runs as a call out of the compiled
/// code, several times the cost of copying a row of 6 or 12 values one by one (a million
/// rows gathered in node 20: about 50 ns a row by `memory.copy`, 15 to 25 ns by the loop).
/// The tree builds copy every row once or twice: the wasm clustering of the benchmark's
/// demo took 3 to 5 % less with the loop. Natively the loop and `memcpy` cost the same.
#[inline(always)]
pub(crate) fn copy_row(dst: &mut [f64], src: &[f64]) {
    assert_eq!(dst.len(), src.len(), "copy_row: rows of different lengths");
    for (d, &s) in dst.iter_mut().zip(src) {
        *d = s;
    }
}

/// The rows of `points` (`dim` values a row) in the order `rows` gives, row-major.
pub(crate) fn gather_rows(points: &[f64], dim: usize, rows: impl ExactSizeIterator<Item = usize>) -> Vec<f64> {
    let mut out = vec![0.0; rows.len() * dim];
    for (o, r) in out.chunks_exact_mut(dim).zip(rows) {
        copy_row(o, &points[r * dim..(r + 1) * dim]);
    }
    out
}

/// The larger of two values, neither of them NaN. Unlike `f64::max` (which wasm32 compiles
/// to a call to libm's `fmax`, for its NaN rule: a fifth of the wasm clustering's time went
/// to such calls) a plain comparison: one instruction natively and in wasm. The two differ
/// only on NaN (coordinates are finite) and on the sign of a zero, which no box test or
/// square tells apart.
#[inline(always)]
pub(crate) fn larger(a: f64, b: f64) -> f64 {
    if a > b { a } else { b }
}

/// The smaller of two values, neither of them NaN (see [`larger`]).
#[inline(always)]
pub(crate) fn smaller(a: f64, b: f64) -> f64 {
    if a < b { a } else { b }
}

fn dist2(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum()
}

impl KdTree {
    /// Builds the tree over `points` (row-major, `dim` values a row).
    ///
    /// Panics if `dim` is 0, if `points.len()` is not a multiple of `dim`, or if there are
    /// more than `u32::MAX` rows: these are programming errors upstream, not user input.
    /// Coordinates must be finite (the points stage removes missing values).
    pub fn new(points: &[f64], dim: usize) -> KdTree {
        let (perm, nodes) = Self::order(points, dim, LEAF_SIZE, Split::Widest);
        // The rows in tree order first: then a leaf's rows are contiguous for its box.
        let data = gather_rows(points, dim, perm.iter().map(|&r| r as usize));
        Self::with_rows(dim, data, perm, nodes)
    }

    /// [`KdTree::new`] over rows the caller gives away, with leaves of at most `leaf_size`
    /// points: the rows are put in tree order in place, so the tree costs no second copy
    /// of the points (for one-off trees over a whole table, such as the automatic
    /// settings'). Larger leaves make a shallower tree that is quicker to build (each level
    /// costs a pass over every row) for the price of longer scans in each leaf a query
    /// visits: a good trade for a few hundred queries over a million rows. Answers do not
    /// depend on the leaf size.
    pub fn from_rows(points: Vec<f64>, dim: usize, leaf_size: usize) -> KdTree {
        Self::from_rows_split(points, dim, leaf_size, Split::Widest)
    }

    /// [`KdTree::from_rows`] with the given rule for choosing each node's split axis.
    pub fn from_rows_split(mut points: Vec<f64>, dim: usize, leaf_size: usize, rule: Split) -> KdTree {
        let (perm, nodes) = Self::order(&points, dim, leaf_size.max(1), rule);
        // Row p takes row perm[p], following each cycle of the permutation once.
        let mut moved = vec![false; perm.len()];
        let mut held = vec![0.0; dim];
        for start in 0..perm.len() {
            if moved[start] || perm[start] as usize == start {
                continue;
            }
            copy_row(&mut held, &points[start * dim..(start + 1) * dim]);
            let mut j = start;
            loop {
                moved[j] = true;
                let k = perm[j] as usize;
                if k == start {
                    copy_row(&mut points[j * dim..(j + 1) * dim], &held);
                    break;
                }
                // Row k into row j (k != j), value by value (see `copy_row`).
                for c in 0..dim {
                    points[j * dim + c] = points[k * dim + c];
                }
                j = k;
            }
        }
        Self::with_rows(dim, points, perm, nodes)
    }

    /// The tree order (`perm[pos]` is the caller's row at tree position `pos`) and the nodes.
    fn order(points: &[f64], dim: usize, leaf_size: usize, rule: Split) -> (Vec<u32>, Vec<Node>) {
        assert!(dim > 0, "k-d tree: dimension must be at least 1");
        assert!(points.len() % dim == 0, "k-d tree: {} values do not make rows of {dim}", points.len());
        let m = points.len() / dim;
        assert!(m < u32::MAX as usize, "k-d tree: too many rows ({m})");
        debug_assert!(points.iter().all(|v| v.is_finite()), "k-d tree: non-finite coordinate");

        let mut perm: Vec<u32> = (0..m as u32).collect();
        let mut nodes = vec![Node { start: 0, end: m as u32, children: 0 }];
        // While splitting, each node keeps a loose box: its parent's box cut at the split
        // value (enough to choose the widest axis). Tight boxes are made afterwards, bottom
        // up, from the leaves' points: O(m d) in all instead of a scan per level.
        let mut loose: Vec<f64> = Vec::with_capacity(4 * dim * (m / leaf_size + 1));
        loose.extend(std::iter::repeat(f64::INFINITY).take(dim));
        loose.extend(std::iter::repeat(f64::NEG_INFINITY).take(dim));
        for row in points.chunks_exact(dim) {
            for (k, &v) in row.iter().enumerate() {
                loose[k] = smaller(loose[k], v);
                loose[dim + k] = larger(loose[dim + k], v);
            }
        }
        let mut scratch = Scratch { keyed: Vec::with_capacity(m), sums: vec![0.0; 2 * dim] };
        // Nodes are finished in creation order, so node `i` is processed at step `i`.
        let mut i = 0;
        while i < nodes.len() {
            let Node { start, end, .. } = nodes[i];
            if (end - start) as usize > leaf_size {
                Self::split(points, dim, i, rule, &mut perm, &mut nodes, &mut loose, &mut scratch);
            }
            i += 1;
        }
        (perm, nodes)
    }

    /// Splits node `i` at the median of the axis `rule` chooses (for [`Split::Widest`], its
    /// loose box's widest): its rows in `perm` ordered around the median, its two children
    /// pushed, their loose boxes added. Out of line so that a build is many calls of it: a
    /// wasm engine swaps in its optimised code for a function between calls, never inside
    /// a running one.
    #[inline(never)]
    #[allow(clippy::too_many_arguments)]
    fn split(points: &[f64], dim: usize, i: usize, rule: Split, perm: &mut [u32], nodes: &mut Vec<Node>, loose: &mut Vec<f64>, scratch: &mut Scratch) {
        let Node { start, end, .. } = nodes[i];
        let (s, e) = (start as usize, end as usize);
        let base = 2 * dim * i;
        let axis = match rule {
            Split::Widest => (0..dim)
                .max_by(|&a, &b| {
                    let wa = loose[base + dim + a] - loose[base + a];
                    let wb = loose[base + dim + b] - loose[base + b];
                    wa.total_cmp(&wb)
                })
                .unwrap_or(0),
            Split::Variance => Self::most_varied(points, dim, &perm[s..e], &mut scratch.sums),
        };
        let mid = s + (e - s) / 2;
        // The node's coordinates on the axis, gathered beside their rows, so the
        // selection reads one contiguous array instead of jumping through `points`
        // at each comparison (a read from memory per comparison on large tables).
        // Same comparisons in the same order as selecting `perm` through `points`,
        // so the same permutation (a test checks it).
        let keyed = &mut scratch.keyed;
        keyed.clear();
        keyed.extend(perm[s..e].iter().map(|&r| (points[r as usize * dim + axis], r)));
        keyed.select_nth_unstable_by(mid - s, |a, b| a.0.total_cmp(&b.0));
        for (p, &(_, r)) in perm[s..e].iter_mut().zip(keyed.iter()) {
            *p = r;
        }
        let split = points[perm[mid] as usize * dim + axis];
        let children = nodes.len() as u32;
        nodes[i].children = children;
        nodes.push(Node { start, end: mid as u32, children: 0 });
        nodes.push(Node { start: mid as u32, end, children: 0 });
        // The parent's box copied twice, without a buffer of its own (a build makes one
        // split per two leaves; an allocation each was measurable in wasm), value by value
        // (see `copy_row`).
        for _ in 0..2 {
            for c in base..base + 2 * dim {
                loose.push(loose[c]);
            }
        }
        loose[base + 2 * dim * (children as usize - i) + dim + axis] = split;
        loose[base + 2 * dim * (children as usize + 1 - i) + axis] = split;
    }

    /// The axis along which `rows` vary most: the largest sum of squared differences from
    /// the first row's value, corrected by the mean (the variance times the row count,
    /// with less cancellation than from zero). Ties go to the lower axis. A node of more
    /// than [`VARIANCE_SAMPLE`] rows is judged on that many of them, evenly spaced in its
    /// current order (which rows is fixed by the build, so the tree is the same every
    /// time): reading every row through the permutation cost more than the rest of the
    /// build, and the axis needs no more precision.
    fn most_varied(points: &[f64], dim: usize, rows: &[u32], sums: &mut [f64]) -> usize {
        let first = rows[0] as usize * dim;
        let (sum, sq) = sums[..2 * dim].split_at_mut(dim);
        sum.fill(0.0);
        sq.fill(0.0);
        let step = rows.len().div_ceil(VARIANCE_SAMPLE);
        let mut n = 0.0;
        for &r in rows.iter().step_by(step) {
            let x = &points[r as usize * dim..(r as usize + 1) * dim];
            for k in 0..dim {
                let v = x[k] - points[first + k];
                sum[k] += v;
                sq[k] += v * v;
            }
            n += 1.0;
        }
        let spread = |k: usize| sq[k] - sum[k] * sum[k] / n;
        (0..dim).fold(0, |best, k| if spread(k) > spread(best) { k } else { best })
    }

    /// The tree over `data`, the rows in tree order (`perm` and `nodes` from [`KdTree::order`]):
    /// each node's tight box, bottom up.
    fn with_rows(dim: usize, data: Vec<f64>, perm: Vec<u32>, nodes: Vec<Node>) -> KdTree {
        let mut bounds = vec![0.0; 2 * dim * nodes.len()];
        for n in (0..nodes.len()).rev() {
            let node = nodes[n];
            let (lohi, rest) = bounds[2 * dim * n..].split_at_mut(2 * dim);
            let (lo, hi) = lohi.split_at_mut(dim);
            lo.fill(f64::INFINITY);
            hi.fill(f64::NEG_INFINITY);
            if node.children == 0 {
                for row in data[node.start as usize * dim..node.end as usize * dim].chunks_exact(dim) {
                    // Zipped rather than indexed: no bounds check per value (they weigh in wasm).
                    for ((l, h), &v) in lo.iter_mut().zip(hi.iter_mut()).zip(row) {
                        *l = smaller(*l, v);
                        *h = larger(*h, v);
                    }
                }
            } else {
                // Children come after their parent.
                let off = 2 * dim * (node.children as usize - n - 1);
                let (l, r) = rest[off..off + 4 * dim].split_at(2 * dim);
                let ((llo, lhi), (rlo, rhi)) = (l.split_at(dim), r.split_at(dim));
                for (((lo, hi), (a, b)), (c, e)) in lo.iter_mut().zip(hi.iter_mut()).zip(llo.iter().zip(rlo)).zip(lhi.iter().zip(rhi)) {
                    *lo = smaller(*a, *b);
                    *hi = larger(*c, *e);
                }
            }
        }
        KdTree { dim, data, index: perm, nodes, bounds }
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.index.len()
    }

    pub fn is_empty(&self) -> bool {
        self.index.is_empty()
    }

    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Number of nodes (leaves and inner nodes).
    pub fn node_count(&self) -> usize {
        self.nodes.len()
    }

    /// The point at tree position `pos`.
    pub fn point_at(&self, pos: usize) -> &[f64] {
        &self.data[pos * self.dim..(pos + 1) * self.dim]
    }

    /// The caller's row number of the point at tree position `pos`.
    pub fn row_at(&self, pos: usize) -> usize {
        self.index[pos] as usize
    }

    /// Squared distances from `q` to the nearest and the farthest point of node `n`'s box.
    fn box_dist2(&self, n: usize, q: &[f64]) -> (f64, f64) {
        let b = &self.bounds[2 * self.dim * n..2 * self.dim * (n + 1)];
        let (lo, hi) = b.split_at(self.dim);
        let (mut near, mut far) = (0.0, 0.0);
        for k in 0..self.dim {
            let (a, c) = (lo[k] - q[k], q[k] - hi[k]);
            let d = if a > 0.0 { a } else if c > 0.0 { c } else { 0.0 };
            near += d * d;
            let f = larger((q[k] - lo[k]).abs(), (hi[k] - q[k]).abs());
            far += f * f;
        }
        (near, far)
    }

    fn box_near2(&self, n: usize, q: &[f64]) -> f64 {
        let b = &self.bounds[2 * self.dim * n..2 * self.dim * (n + 1)];
        let (lo, hi) = b.split_at(self.dim);
        let mut near = 0.0;
        for k in 0..self.dim {
            let (a, c) = (lo[k] - q[k], q[k] - hi[k]);
            let d = if a > 0.0 { a } else if c > 0.0 { c } else { 0.0 };
            near += d * d;
        }
        near
    }

    /// Calls `f(row)` for every point within Euclidean distance `r` of `q` (the boundary
    /// included), in no particular order; `f` returns `false` to stop early. Returns
    /// `false` if it was stopped.
    pub fn visit_within(&self, q: &[f64], r: f64, mut f: impl FnMut(usize) -> bool) -> bool {
        assert_eq!(q.len(), self.dim, "k-d tree: query has {} values, the points have {}", q.len(), self.dim);
        if self.is_empty() || !(r >= 0.0) {
            return true;
        }
        self.within_rec(0, q, r * r, &mut f)
    }

    fn within_rec(&self, n: usize, q: &[f64], r2: f64, f: &mut impl FnMut(usize) -> bool) -> bool {
        let node = self.nodes[n];
        let (near, far) = self.box_dist2(n, q);
        if near > r2 {
            return true;
        }
        let (s, e) = (node.start as usize, node.end as usize);
        if far <= r2 {
            // The whole box is inside the ball: every point is (a point's squared distance
            // never exceeds its box's farthest corner, also in floating point).
            return self.index[s..e].iter().all(|&row| f(row as usize));
        }
        if node.children == 0 {
            for pos in s..e {
                if dist2(q, self.point_at(pos)) <= r2 && !f(self.index[pos] as usize) {
                    return false;
                }
            }
            return true;
        }
        let c = node.children as usize;
        self.within_rec(c, q, r2, f) && self.within_rec(c + 1, q, r2, f)
    }

    /// Calls `f(row)` for every point within distance `r` of `q`.
    pub fn for_each_within(&self, q: &[f64], r: f64, mut f: impl FnMut(usize)) {
        self.visit_within(q, r, |row| {
            f(row);
            true
        });
    }

    /// Clears `out` and fills it with the rows within distance `r` of `q`, in no
    /// particular order. Reuse `out` across queries to avoid allocating.
    pub fn within(&self, q: &[f64], r: f64, out: &mut Vec<usize>) {
        out.clear();
        self.for_each_within(q, r, |row| out.push(row));
    }

    /// Number of points within distance `r` of `q`, counting no further than `limit`.
    pub fn count_within(&self, q: &[f64], r: f64, limit: usize) -> usize {
        let mut count = 0;
        if limit == 0 {
            return 0;
        }
        self.visit_within(q, r, |_| {
            count += 1;
            count < limit
        });
        count
    }

    /// Clears `out` and fills it with the `k` points nearest to `q` (fewer if the tree is
    /// smaller), closest first. Distances are exact; among points at the same distance
    /// from `q` which ones are returned is unspecified.
    pub fn nearest(&self, q: &[f64], k: usize, out: &mut Vec<Neighbour>) {
        assert_eq!(q.len(), self.dim, "k-d tree: query has {} values, the points have {}", q.len(), self.dim);
        out.clear();
        if k == 0 || self.is_empty() {
            return;
        }
        // (squared distance, row) kept sorted; k is small in practice.
        let mut best: Vec<(f64, u32)> = Vec::with_capacity(k + 1);
        self.nearest_rec(0, self.box_near2(0, q), q, k, &mut best);
        out.extend(best.into_iter().map(|(d2, row)| Neighbour { index: row as usize, dist: d2.sqrt() }));
    }

    fn nearest_rec(&self, n: usize, near: f64, q: &[f64], k: usize, best: &mut Vec<(f64, u32)>) {
        if best.len() == k && near >= best[k - 1].0 {
            return;
        }
        let node = self.nodes[n];
        if node.children == 0 {
            for pos in node.start as usize..node.end as usize {
                let d2 = dist2(q, self.point_at(pos));
                if best.len() < k || d2 < best[k - 1].0 {
                    let at = best.partition_point(|&(b, _)| b <= d2);
                    best.insert(at, (d2, self.index[pos]));
                    best.truncate(k);
                }
            }
            return;
        }
        let c = node.children as usize;
        let (dl, dr) = (self.box_near2(c, q), self.box_near2(c + 1, q));
        if dl <= dr {
            self.nearest_rec(c, dl, q, k, best);
            self.nearest_rec(c + 1, dr, q, k, best);
        } else {
            self.nearest_rec(c + 1, dr, q, k, best);
            self.nearest_rec(c, dl, q, k, best);
        }
    }

    /// Puts each leaf's points in increasing order of `values` (one per caller's row; NaN
    /// last) and returns the values in tree order with each node's least and greatest: the
    /// input of [`KdTree::largest_gap_within`]. The leaves keep the same points and boxes,
    /// so the other queries' answers do not change. NaN values are passed over, as
    /// `f64::max` passes them over.
    pub fn order_leaves_by(&mut self, values: &[f64]) -> ValueRanges {
        assert_eq!(values.len(), self.len(), "k-d tree: {} values for {} points", values.len(), self.len());
        let dim = self.dim;
        let mut by_pos = vec![f64::NAN; self.len()];
        let mut valid = vec![0u32; self.nodes.len()];
        let mut node = vec![(f64::INFINITY, f64::NEG_INFINITY); self.nodes.len()];
        let mut keyed: Vec<(f64, u32)> = Vec::new();
        let mut rows: Vec<f64> = Vec::new();
        let mut old_index: Vec<u32> = Vec::new();
        // Children come after their parents, so a reverse sweep sees children first.
        for n in (0..self.nodes.len()).rev() {
            let Node { start, end, children } = self.nodes[n];
            if children != 0 {
                let (l, r) = (node[children as usize], node[children as usize + 1]);
                node[n] = (l.0.min(r.0), l.1.max(r.1));
                continue;
            }
            let (s, e) = (start as usize, end as usize);
            keyed.clear();
            keyed.extend((s..e).map(|pos| (values[self.index[pos] as usize], pos as u32)));
            keyed.sort_unstable_by(|a, b| a.0.is_nan().cmp(&b.0.is_nan()).then(a.0.total_cmp(&b.0)));
            // The leaf's rows gathered in the new order, then written back over it.
            rows.clear();
            old_index.clear();
            for &(_, old) in &keyed {
                // Value by value (see `copy_row`).
                for c in old as usize * dim..(old as usize + 1) * dim {
                    rows.push(self.data[c]);
                }
                old_index.push(self.index[old as usize]);
            }
            self.data[s * dim..e * dim].copy_from_slice(&rows);
            self.index[s..e].copy_from_slice(&old_index);
            for (k, &(v, _)) in keyed.iter().enumerate() {
                by_pos[s + k] = v;
            }
            let count = keyed.iter().take_while(|(v, _)| !v.is_nan()).count();
            valid[n] = count as u32;
            if count > 0 {
                node[n] = (keyed[0].0, keyed[count - 1].0);
            }
        }
        ValueRanges { by_pos, valid, node }
    }

    /// The largest `|value - centre|` over the points within distance `r` of `q` (0 if
    /// there are none), for the values given to [`KdTree::order_leaves_by`]. Equal to the
    /// largest over [`KdTree::for_each_within`]'s rows, found without visiting each (at a
    /// million rows a ball can hold a hundred thousand): a node whose value range cannot
    /// raise the largest found so far is skipped, a node whose box lies inside the ball
    /// gives its range's ends without a scan, and a leaf is read from both ends of its
    /// value order, each end stopping at its first point inside the ball.
    pub fn largest_gap_within(&self, q: &[f64], r: f64, centre: f64, ranges: &ValueRanges) -> f64 {
        assert_eq!(q.len(), self.dim, "k-d tree: query has {} values, the points have {}", q.len(), self.dim);
        assert_eq!(ranges.node.len(), self.nodes.len(), "k-d tree: value ranges of another tree");
        let mut best = 0.0;
        if !self.is_empty() && r >= 0.0 {
            self.gap_rec(0, q, r * r, centre, ranges, &mut best);
        }
        best
    }

    fn gap_rec(&self, n: usize, q: &[f64], r2: f64, centre: f64, ranges: &ValueRanges, best: &mut f64) {
        // Whether `p` is within the ball, the sum stopping early once past it (most points
        // a leaf's ends offer are outside).
        let inside = |q: &[f64], p: &[f64], r2: f64| {
            super::index::sum_within(q.len(), r2, |k| {
                let d = q[k] - p[k];
                d * d
            })
        };
        let reach = |n: usize| {
            let (lo, hi) = ranges.node[n];
            larger(hi - centre, centre - lo)
        };
        // Also false for a node with no value (its range is empty: the reach is -inf).
        if !(reach(n) > *best) {
            return;
        }
        let (near, far) = self.box_dist2(n, q);
        if near > r2 {
            return;
        }
        let children = self.nodes[n].children;
        if far <= r2 {
            // The whole box is inside the ball (see `within_rec`): its range's ends are values of its points.
            *best = reach(n);
            return;
        }
        if children == 0 {
            // The leaf's points are in value order (NaN last): from the largest value down
            // and from the smallest up, each stopping at its first point inside the ball.
            let start = self.nodes[n].start as usize;
            let end = start + ranges.valid[n] as usize;
            for pos in (start..end).rev() {
                let v = ranges.by_pos[pos];
                if !(v - centre > *best) {
                    break;
                }
                if inside(q, self.point_at(pos), r2) {
                    *best = v - centre;
                    break;
                }
            }
            for pos in start..end {
                let v = ranges.by_pos[pos];
                if !(centre - v > *best) {
                    break;
                }
                if inside(q, self.point_at(pos), r2) {
                    *best = centre - v;
                    break;
                }
            }
            return;
        }
        // The child that could give more first: the other is then more often skipped.
        let c = children as usize;
        let (first, second) = if reach(c) >= reach(c + 1) { (c, c + 1) } else { (c + 1, c) };
        self.gap_rec(first, q, r2, centre, ranges, best);
        self.gap_rec(second, q, r2, centre, ranges, best);
    }

    /// Fills `out` with one label per node: the component shared by all its points, or
    /// [`MIXED`]. `comp` gives the component of each point by *tree position*.
    pub fn node_components(&self, comp: &[u32], out: &mut Vec<u32>) {
        assert_eq!(comp.len(), self.len());
        out.clear();
        out.resize(self.nodes.len(), MIXED);
        // Children come after their parents, so a reverse sweep sees children first.
        for n in (0..self.nodes.len()).rev() {
            let node = self.nodes[n];
            out[n] = if node.children == 0 {
                let s = &comp[node.start as usize..node.end as usize];
                match s.first() {
                    Some(&c) if s.iter().all(|&x| x == c) => c,
                    _ => MIXED,
                }
            } else {
                let c = node.children as usize;
                if out[c] == out[c + 1] { out[c] } else { MIXED }
            };
        }
    }

    /// The caller's row numbers of the points in node `n`.
    pub fn rows_in(&self, n: usize) -> &[u32] {
        let node = self.nodes[n];
        &self.index[node.start as usize..node.end as usize]
    }

    /// Node `n`'s range of tree positions and its left child (`None` for a leaf; the
    /// right child is the left one plus 1). Node 0 is the root; children come after
    /// their parent.
    pub fn node(&self, n: usize) -> (std::ops::Range<usize>, Option<usize>) {
        let node = self.nodes[n];
        (node.start as usize..node.end as usize, (node.children != 0).then_some(node.children as usize))
    }

    /// Node `n`'s tight box: `dim` lower bounds and `dim` upper bounds.
    pub fn node_box(&self, n: usize) -> (&[f64], &[f64]) {
        self.bounds[2 * self.dim * n..2 * self.dim * (n + 1)].split_at(self.dim)
    }

    /// The points in tree order, row-major (`point_at(pos)` is a row of it).
    pub fn tree_points(&self) -> &[f64] {
        &self.data
    }

    /// Every leaf's node number with the squared length of its box's diagonal (an upper
    /// bound on the squared distance between any two of its points).
    pub fn leaves(&self) -> impl Iterator<Item = (usize, f64)> + '_ {
        self.nodes.iter().enumerate().filter(|(_, n)| n.children == 0).map(move |(i, _)| {
            let (lo, hi) = self.node_box(i);
            (i, lo.iter().zip(hi).map(|(a, c)| (c - a) * (c - a)).sum())
        })
    }
}

#[cfg(test)]
mod tests {
    //! Every query is checked against a brute-force scan over all points (common practice:
    //! the scan is the definition of the query).
    use super::*;
    use crate::rng::SplitMix64;

    fn random_points(rng: &mut SplitMix64, m: usize, dim: usize) -> Vec<f64> {
        (0..m * dim).map(|_| rng.next_f64() * 10.0 - 5.0).collect()
    }

    /// The build's row order as it was made before the coordinates were gathered for the
    /// selection: `select_nth_unstable_by` on the rows themselves, comparing through
    /// `points`. The tree must put the rows in exactly this order.
    fn order_selecting_through_points(points: &[f64], dim: usize) -> Vec<u32> {
        let m = points.len() / dim;
        let mut perm: Vec<u32> = (0..m as u32).collect();
        let mut nodes = vec![(0usize, m)];
        let mut loose: Vec<f64> = vec![f64::INFINITY; dim];
        loose.extend(std::iter::repeat(f64::NEG_INFINITY).take(dim));
        for row in points.chunks_exact(dim) {
            for (k, &v) in row.iter().enumerate() {
                loose[k] = loose[k].min(v);
                loose[dim + k] = loose[dim + k].max(v);
            }
        }
        let mut i = 0;
        while i < nodes.len() {
            let (s, e) = nodes[i];
            if e - s > LEAF_SIZE {
                let base = 2 * dim * i;
                let axis = (0..dim)
                    .max_by(|&a, &b| {
                        (loose[base + dim + a] - loose[base + a]).total_cmp(&(loose[base + dim + b] - loose[base + b]))
                    })
                    .unwrap_or(0);
                let mid = s + (e - s) / 2;
                perm[s..e].select_nth_unstable_by(mid - s, |&a, &b| {
                    points[a as usize * dim + axis].total_cmp(&points[b as usize * dim + axis])
                });
                let split = points[perm[mid] as usize * dim + axis];
                let children = nodes.len();
                nodes.push((s, mid));
                nodes.push((mid, e));
                let parent: Vec<f64> = loose[base..base + 2 * dim].to_vec();
                loose.extend_from_slice(&parent);
                loose[base + 2 * dim * (children - i) + dim + axis] = split;
                loose.extend_from_slice(&parent);
                loose[base + 2 * dim * (children + 1 - i) + axis] = split;
            }
            i += 1;
        }
        perm
    }

    #[test]
    fn row_order_is_that_of_selecting_through_the_points() {
        let mut rng = SplitMix64::new(11);
        for &(m, dim) in &[(1usize, 1usize), (17, 2), (1000, 3), (5000, 12), (20000, 2)] {
            let mut points = random_points(&mut rng, m, dim);
            let tree = KdTree::new(&points, dim);
            assert_eq!(tree.index, order_selecting_through_points(&points, dim), "{m} x {dim}");
            // Many equal coordinates (values on a coarse grid, whole rows repeated).
            for v in points.iter_mut() {
                *v = (*v).round();
            }
            let tree = KdTree::new(&points, dim);
            assert_eq!(tree.index, order_selecting_through_points(&points, dim), "{m} x {dim} on a grid");
        }
    }

    #[test]
    fn a_tree_over_given_rows_is_the_tree_over_borrowed_rows() {
        let mut rng = SplitMix64::new(12);
        for &(m, dim) in &[(0usize, 3usize), (1, 1), (17, 2), (1000, 3), (5000, 12)] {
            let mut points = random_points(&mut rng, m, dim);
            for round in [false, true] {
                if round {
                    points.iter_mut().for_each(|v| *v = v.round());
                }
                let (a, b) = (KdTree::new(&points, dim), KdTree::from_rows(points.clone(), dim, LEAF_SIZE));
                assert_eq!((&a.data, &a.index, &a.bounds), (&b.data, &b.index, &b.bounds), "{m} x {dim}");
                assert_eq!(a.nodes.len(), b.nodes.len());
            }
        }
    }

    fn brute_within(points: &[f64], dim: usize, q: &[f64], r: f64) -> Vec<usize> {
        (0..points.len() / dim).filter(|&i| dist2(q, &points[i * dim..(i + 1) * dim]) <= r * r).collect()
    }

    #[test]
    fn radius_queries_equal_brute_force() {
        let mut rng = SplitMix64::new(11);
        let mut got = Vec::new();
        for &dim in &[1usize, 2, 3, 7] {
            for &m in &[0usize, 1, 5, 17, 300, 2000] {
                let pts = random_points(&mut rng, m, dim);
                // Both split rules.
                for tree in [KdTree::new(&pts, dim), KdTree::from_rows_split(pts.clone(), dim, LEAF_SIZE, Split::Variance)] {
                    assert_eq!(tree.len(), m);
                    // Radii chosen so that answers range from empty to nearly everything.
                    for &r in &[0.0, 0.3, 1.0, 2.5, 6.0, 40.0] {
                        for t in 0..20 {
                            // Half the queries at data points (the point itself must be found at r = 0).
                            let q: Vec<f64> = if t % 2 == 0 && m > 0 {
                                let i = rng.below(m);
                                pts[i * dim..(i + 1) * dim].to_vec()
                            } else {
                                (0..dim).map(|_| rng.next_f64() * 12.0 - 6.0).collect()
                            };
                            tree.within(&q, r, &mut got);
                            got.sort_unstable();
                            let want = brute_within(&pts, dim, &q, r);
                            assert_eq!(got, want, "dim {dim}, m {m}, r {r}");
                            let limit = 3;
                            assert_eq!(tree.count_within(&q, r, limit), want.len().min(limit));
                        }
                    }
                }
            }
        }
    }

    fn sorted(rows: &[u32]) -> Vec<usize> {
        let mut v: Vec<usize> = rows.iter().map(|&r| r as usize).collect();
        v.sort_unstable();
        v
    }

    /// The bounded query gives exactly the largest gap over the brute-force ball, including
    /// with NaN values (passed over), ties and repeated points.
    #[test]
    fn largest_gap_within_equals_the_largest_over_the_ball() {
        let mut rng = SplitMix64::new(13);
        for &dim in &[1usize, 2, 5] {
            for &m in &[1usize, 17, 300, 3000] {
                // Points on a coarse grid (many coincide) and values with repeats and NaN.
                let pts: Vec<f64> = (0..m * dim).map(|_| (rng.below(9) as f64) - 4.0).collect();
                let values: Vec<f64> =
                    (0..m).map(|i| if i % 23 == 5 { f64::NAN } else { (rng.below(50) as f64) * 0.25 }).collect();
                for mut tree in [KdTree::new(&pts, dim), KdTree::from_rows(pts.clone(), dim, 64)] {
                    let before: Vec<Vec<usize>> = (0..tree.node_count()).map(|n| sorted(tree.rows_in(n))).collect();
                    let ranges = tree.order_leaves_by(&values);
                    // The same points in every node, each row with its own coordinates.
                    assert_eq!(before, (0..tree.node_count()).map(|n| sorted(tree.rows_in(n))).collect::<Vec<_>>());
                    for pos in 0..m {
                        let row = tree.row_at(pos);
                        assert_eq!(tree.point_at(pos), &pts[row * dim..(row + 1) * dim]);
                    }
                    for &r in &[0.0, 1.0, 2.5, 6.0, 40.0] {
                        for _ in 0..15 {
                            let i = rng.below(m);
                            let q = &pts[i * dim..(i + 1) * dim];
                            let centre = values[(i + 1) % m];
                            let want = brute_within(&pts, dim, q, r)
                                .into_iter()
                                .fold(0.0, |most: f64, j| most.max((values[j] - centre).abs()));
                            let got = tree.largest_gap_within(q, r, centre, &ranges);
                            assert!(got == want || (got.is_nan() && want.is_nan()), "dim {dim}, m {m}, r {r}: {got} against {want}");
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn knn_queries_equal_brute_force() {
        let mut rng = SplitMix64::new(12);
        let mut got = Vec::new();
        for &dim in &[1usize, 2, 3, 7, 12] {
            for &m in &[1usize, 10, 500, 3000] {
                let pts = random_points(&mut rng, m, dim);
                // The default leaves, and the large ones the automatic settings use.
                let trees = [KdTree::new(&pts, dim), KdTree::from_rows(pts.clone(), dim, 256)];
                for (tree, &k) in trees.iter().flat_map(|t| [1usize, 5, 16, 40].iter().map(move |k| (t, k))) {
                    for _ in 0..20 {
                        let q: Vec<f64> = (0..dim).map(|_| rng.next_f64() * 12.0 - 6.0).collect();
                        tree.nearest(&q, k, &mut got);
                        let mut all: Vec<(f64, usize)> =
                            (0..m).map(|i| (dist2(&q, &pts[i * dim..(i + 1) * dim]).sqrt(), i)).collect();
                        all.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
                        all.truncate(k);
                        // Random real coordinates: no ties, so rows must match too.
                        let got_pairs: Vec<(f64, usize)> = got.iter().map(|n| (n.dist, n.index)).collect();
                        assert_eq!(got_pairs, all, "dim {dim}, m {m}, k {k}");
                    }
                }
            }
        }
    }

    #[test]
    fn duplicates_keep_leaves_small_and_queries_right() {
        // 1000 copies of one point and 1000 of another: the build must still split.
        let mut pts = vec![1.0, 2.0].repeat(1000);
        pts.extend([4.0, 6.0].repeat(1000));
        let tree = KdTree::new(&pts, 2);
        assert!(tree.node_count() > 2000 / LEAF_SIZE);
        let mut out = Vec::new();
        tree.within(&[1.0, 2.0], 0.0, &mut out);
        out.sort_unstable();
        assert_eq!(out, (0..1000).collect::<Vec<_>>());
        tree.within(&[1.0, 2.0], 5.0, &mut out);
        assert_eq!(out.len(), 2000, "distance 5 exactly is inside the closed ball");
        tree.within(&[1.0, 2.0], 4.999, &mut out);
        assert_eq!(out.len(), 1000);
    }

    #[test]
    fn rows_map_back_to_input() {
        let mut rng = SplitMix64::new(14);
        let pts = random_points(&mut rng, 100, 3);
        let tree = KdTree::new(&pts, 3);
        let mut seen = vec![false; 100];
        for pos in 0..100 {
            let r = tree.row_at(pos);
            assert_eq!(tree.point_at(pos), &pts[r * 3..r * 3 + 3]);
            seen[r] = true;
        }
        assert!(seen.iter().all(|&s| s));
    }
}
