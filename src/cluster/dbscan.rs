//! DBSCAN as defined by Ester, Kriegel, Sander, Xu (KDD 1996), on a k-d tree.
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
//! How it is computed (the result is the definition's; only the work differs). The cost
//! does not grow with the number of neighbours a point has: no step lists a point's
//! neighbourhood beyond `min_points`, and the clusters are found as the components of a
//! graph whose edges are sought only between points not yet known to be joined.
//!
//! The index is a k-d tree (leaves of 16) whose nodes split at the median of the axis
//! along which their points vary most ([`Split::Variance`]), built on the points'
//! coordinates along their principal axes (from 3 to 64 columns; the axes of a sample of
//! up to 4096 rows, centred). Every test against a box is made in those coordinates;
//! every distance between two points is made on the points as given, so each pair is
//! judged exactly as the definition (and scikit-learn) judge it. The rotation moves a
//! coordinate by far less than `margin` = 1e-10 · d · (1 + largest |coordinate|), so a box
//! farther than eps + margin holds no neighbour and a box whose farthest corner lies
//! within eps - margin holds only neighbours. (A box bound holds in floating point because
//! a squared distance is a sum of rounded, monotone operations.)
//!
//! Which index, measured (the benchmark's wide table, tests/bench/make_wide.py, 1.5
//! million rows, automatic settings: 12 columns, eps 1.41; its largest cover element,
//! 406 021 points, and a 198 326-point element holding two arcs of the loop that lie
//! close together):
//! - per eps-query, the share of the element whose distance is computed: k-d tree with
//!   box bounds 6.1 %, with bounds by a ball around each node (centroid and radius, the
//!   bound a ball tree or a cover tree prunes with) 24 %, box and ball 6.1 %, splits along
//!   each node's principal direction with ball and box bounds 7.5 %, splits by variance
//!   6.0 %, in principal axes 5.4 %, both 5.3 % (the ball bound is looser than the box in
//!   12 columns, so a cover tree, which prunes by balls alone, was not built);
//! - the two-arc element (where the work is proving that no core point of one arc lies
//!   within eps of the other): 6.6 s with widest-axis splits on the given coordinates,
//!   5.3 s splitting by variance, 4.0 s in principal axes, 1.5 s with both (the first
//!   principal axis runs across the gap between the arcs, and the variance rule splits on
//!   it first). Native, one thread, user time on a loaded 2-core machine, measured while
//!   step 2 below was built (its later devices took the last figure lower still).
//!
//! 1. Core points: a leaf whose box diagonal is within eps and that holds `min_points`
//!    points is all core without a query. Otherwise each point counts its own leaf, then
//!    the rest of the tree nearest box first, a node whose box lies wholly within eps
//!    taken whole, until it has `min_points` (itself included). A core point keeps the
//!    first few neighbours it met; a non-core point keeps all of them (fewer than
//!    `min_points`), which is all its border label needs.
//! 2. Components of the core points: first the kept neighbours are joined (union-find),
//!    which joins most of each cluster for no new distance. Then every pair of sibling
//!    nodes is met once, box against box (the boxes of their core points only): pairs
//!    farther than eps apart are dropped, a pair within eps at its farthest corners is
//!    joined whole, a pair of nodes each known to lie in one component ("whole") and
//!    already joined is dropped, otherwise the larger node is split, the child nearer the
//!    other first. Between two leaves only pairs of points in different components are
//!    measured; when one leaf is whole only the other's points outside its component are
//!    tried. A node is marked whole as soon as it is found so; the children of a whole
//!    node are whole. The work that remains is the proof that two clusters come no
//!    closer than eps, done once per pair of nearby leaves.
//! 3. Labels: clusters are numbered in the order they would be grown (by their lowest
//!    core row); each border point takes the lowest number among its core neighbours
//!    (kept in step 1), i.e. the cluster grown first that reaches it, as the definition
//!    above says; one with no core point within eps is noise.
//!
//! The code is written once, generic over the dimension ([`Dim`]): [`dbscan`] runs it
//! with the dimension fixed at compile time for 1 to 8 columns (constant-length loops,
//! unrolled, no bounds checks) and as a run-time value beyond; same operations, same
//! order, same labels.
//!
//! Memory O(m): the tree's copy of the points in the frame, the points in tree order, the
//! union-find and a few slots per point; no m × m matrix.
//!
//! Not here: choosing eps (see the automatic settings), other metrics, weights.

use super::index::{box_far_within, diagonal2, dist2, gap2, point_box_far_within, point_box_near, Any, Bounds, Dim, Fixed, Index};
use super::kdtree::{larger, smaller, KdTree};
use super::unionfind::UnionFind;
use super::Labels;

/// No cluster (yet).
const NONE: u32 = u32::MAX;

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

/// The three steps of the module doc. Each step, and the small sweeps around them, is a
/// function of its own, never inlined: as one body they ran in wasm at 2.3 times their
/// native time, as separate functions at 1.4 to 1.8 (the demo's profile under node; V8 optimises a function as a whole and
/// swaps its optimised code in between calls, see [`Work::core_leaf`]); the first
/// clustering of a new page helper gained most.
fn run<D: Dim>(points: &[f64], dim: D, eps: f64, min_points: usize) -> Labels {
    let index = Index::new(points, dim);
    let (tree, margin) = (&index.tree, index.margin);
    let eps2 = eps * eps;
    let near2 = (eps + margin) * (eps + margin);
    // No box is known to hold only neighbours when the margin swallows eps (-1: no squared
    // distance is that small).
    let far2 = if eps > margin { (eps - margin) * (eps - margin) } else if margin == 0.0 { eps2 } else { -1.0 };
    let small = small_boxes(tree, dim, near2);
    let w = Work { tree, frame: tree.tree_points(), data: index.points(), dim, eps2, near2, far2, small };
    let found = w.core_points(min_points.max(1));
    let mut links = w.components(&found);
    let label = w.labels(&found, &mut links);
    by_row(tree, &label)
}

/// Per node: whether its box's diagonal is at most 2 (eps + margin) ([`Work::small`]).
#[inline(never)]
fn small_boxes<D: Dim>(tree: &KdTree, dim: D, near2: f64) -> Vec<bool> {
    (0..tree.node_count()).map(|n| diagonal2(dim, tree.node_box(n)) <= 4.0 * near2).collect()
}

/// The labels by row from the labels by tree position, clusters renumbered.
#[inline(never)]
fn by_row(tree: &KdTree, label: &[u32]) -> Labels {
    let mut labels: Labels = vec![None; tree.len()];
    for (pos, &c) in label.iter().enumerate() {
        if c != NONE {
            labels[tree.row_at(pos)] = Some(c);
        }
    }
    super::renumber(&mut labels);
    labels
}

/// How many neighbours of each core point are kept from its count, to join it with them
/// (module doc, step 2).
const KEPT: usize = 4;

/// What the core counts found, by tree position.
struct Found {
    core: Vec<bool>,
    /// `KEPT` slots per point: for a core point, other points within eps met while
    /// counting (the first ones met; [`NONE`] fills the rest).
    kept: Vec<u32>,
    /// For a non-core point `p`, `near[near_at[p]..near_at[p + 1]]` is every other point
    /// within eps of it (fewer than `min_points`); empty for a core point.
    near: Vec<u32>,
    near_at: Vec<u32>,
}

struct Work<'a, D: Dim> {
    /// The index, over the points' coordinates in the frame (module doc).
    tree: &'a KdTree,
    /// The points in the frame, in tree order: for every test against a box.
    frame: &'a [f64],
    /// The points themselves, in tree order: for every distance between two points.
    data: &'a [f64],
    dim: D,
    /// eps squared: two points are neighbours when their squared distance is at most this.
    eps2: f64,
    /// A box farther than this (squared) from a point or another box holds no neighbour
    /// of theirs: (eps + margin)^2.
    near2: f64,
    /// A box whose farthest corner is within this (squared) holds only neighbours:
    /// (eps - margin)^2.
    far2: f64,
    /// Per node: whether its box's diagonal is at most 2 eps, so that its box can lie
    /// wholly within eps of a point (a cheap test before the exact one).
    small: Vec<bool>,
}

/// The state of the search for the components of the core points (module doc, step 2).
struct Links {
    uf: UnionFind,
    /// Per node: its number of core points.
    cores: Vec<u32>,
    /// Per node: its first core point (tree position), or [`NONE`].
    rep: Vec<u32>,
    /// Per node: all its core points are known to lie in one component. Once true it
    /// stays true (components only merge).
    whole: Vec<bool>,
    /// Per node, the box of its core points only (`dim` lower then `dim` upper bounds):
    /// tighter than the node's box where non-core points lie between clusters.
    boxes: Vec<f64>,
    /// Scratch: a leaf's core points with their components.
    roots: Vec<(u32, u32)>,
    /// Scratch: a leaf's core points near another leaf's box.
    near: Vec<u32>,
}

impl Links {
    #[inline(always)]
    fn core_box(&self, n: usize, dim: usize) -> Bounds<'_> {
        self.boxes[2 * dim * n..2 * dim * (n + 1)].split_at(dim)
    }
}

/// No component: a node without core points.
const EMPTY: u32 = u32::MAX - 1;

impl<D: Dim> Work<'_, D> {
    /// The point at tree position `pos`.
    #[inline(always)]
    fn point(&self, pos: usize) -> &[f64] {
        let n = self.dim.n();
        &self.data[pos * n..(pos + 1) * n]
    }

    /// The point at tree position `pos` in the frame's coordinates.
    #[inline(always)]
    fn framed(&self, pos: usize) -> &[f64] {
        let n = self.dim.n();
        &self.frame[pos * n..(pos + 1) * n]
    }

    /// Node `n`'s box, each half of the dimension's length.
    #[inline(always)]
    fn node_box(&self, n: usize) -> Bounds<'_> {
        let d = self.dim.n();
        let (lo, hi) = self.tree.node_box(n);
        (&lo[..d], &hi[..d])
    }

    /// Squared distance from `q` to the nearest corner of node `n`'s box (0 inside it), or
    /// some value above `near2` when it is farther (all that pruning and ordering need).
    #[inline(always)]
    fn gap_to(&self, q: &[f64], n: usize) -> f64 {
        gap2(self.dim, (q, q), self.node_box(n), self.near2)
    }

    /// Squared distance between the nearest corners of two boxes, or some value above
    /// `near2` when it is farther.
    #[inline(always)]
    fn gap_between(&self, a: Bounds, b: Bounds) -> f64 {
        gap2(self.dim, a, b, self.near2)
    }

    /// Step 1 of the module doc: which points are core, with the neighbours met on the way.
    #[inline(never)]
    fn core_points(&self, min_points: usize) -> Found {
        let tree = self.tree;
        let m = tree.len();
        let mut f = Found { core: vec![false; m], kept: vec![NONE; m * KEPT], near: Vec::new(), near_at: Vec::with_capacity(m + 1) };
        let mut stack: Vec<(u32, f64)> = Vec::new();
        let mut met: Vec<u32> = Vec::with_capacity(min_points);
        let leaves: Vec<usize> = tree.leaves().map(|(n, _)| n).collect();
        // Leaves come in tree order of their points, so `near_at` grows in position order.
        let mut by_start: Vec<usize> = leaves;
        by_start.sort_unstable_by_key(|&n| tree.node(n).0.start);
        for leaf in by_start {
            self.core_leaf(leaf, min_points, &mut f, &mut stack, &mut met);
        }
        f.near_at.push(f.near.len() as u32);
        f
    }

    /// [`Work::core_points`] for the points of one leaf. Kept out of line (here and in the
    /// other per-unit steps below) so that it is a function called many times per build:
    /// a wasm engine swaps in its optimised code for a function between calls, never
    /// inside a running one, so a build that ran as one long call would run the first
    /// time entirely on the unoptimised code (about a third slower on a large element).
    #[inline(never)]
    fn core_leaf(&self, leaf: usize, min_points: usize, f: &mut Found, stack: &mut Vec<(u32, f64)>, met: &mut Vec<u32>) {
        let (range, _) = self.tree.node(leaf);
        // A box against itself: the farthest-corner distance is its diagonal. Every point
        // of a leaf that tight and that full is core, with the others as neighbours.
        if range.len() >= min_points && diagonal2(self.dim, self.node_box(leaf)) <= self.far2 {
            for p in range.clone() {
                f.core[p] = true;
                f.near_at.push(f.near.len() as u32);
                let slots = &mut f.kept[p * KEPT..(p + 1) * KEPT];
                for (s, r) in slots.iter_mut().zip(range.clone().filter(|&r| r != p)) {
                    *s = r as u32;
                }
            }
            return;
        }
        for p in range.clone() {
            let q = self.point(p);
            let framed = self.framed(p);
            met.clear();
            // Its own leaf first (in dense data often enough), then the rest of the tree.
            for r in range.clone() {
                if r != p && dist2(self.dim, q, self.point(r)) <= self.eps2 {
                    met.push(r as u32);
                }
            }
            // The point itself counts.
            if met.len() + 1 < min_points {
                self.count_from(q, framed, leaf, min_points - 1, stack, met);
            }
            f.near_at.push(f.near.len() as u32);
            if met.len() + 1 >= min_points {
                f.core[p] = true;
                for (s, &r) in f.kept[p * KEPT..(p + 1) * KEPT].iter_mut().zip(met.iter()) {
                    *s = r;
                }
            } else {
                f.near.extend_from_slice(met);
            }
        }
    }

    /// Adds to `met` the points within eps of `q` outside leaf `skip`, nearest boxes first,
    /// until `met` holds `enough` points (or every such point). A node whose box lies
    /// wholly within eps of `q` is taken whole: its points need no distance.
    #[inline(never)]
    #[allow(clippy::too_many_arguments)]
    fn count_from(&self, q: &[f64], framed: &[f64], skip: usize, enough: usize, stack: &mut Vec<(u32, f64)>, met: &mut Vec<u32>) {
        let tree = self.tree;
        stack.clear();
        stack.push((0, self.gap_to(framed, 0)));
        while let Some((n, near)) = stack.pop() {
            let n = n as usize;
            if n == skip || near > self.near2 {
                continue;
            }
            let (range, children) = tree.node(n);
            if self.small[n] && point_box_far_within(self.dim, framed, self.node_box(n), self.far2) {
                // Every point of the node is within eps: taken without distances, those of
                // q's own leaf (already counted) left out.
                let own = tree.node(skip).0;
                met.extend(range.filter(|r| !own.contains(r)).take(enough - met.len()).map(|r| r as u32));
                if met.len() >= enough {
                    return;
                }
                continue;
            }
            match children {
                Some(c) => {
                    let (dl, dr) = (self.gap_to(framed, c), self.gap_to(framed, c + 1));
                    // Nearer child on top of the stack.
                    if dl <= dr {
                        stack.extend([((c + 1) as u32, dr), (c as u32, dl)]);
                    } else {
                        stack.extend([(c as u32, dl), ((c + 1) as u32, dr)]);
                    }
                }
                None => {
                    for r in range {
                        if dist2(self.dim, q, self.point(r)) <= self.eps2 {
                            met.push(r as u32);
                        }
                    }
                    if met.len() >= enough {
                        return;
                    }
                }
            }
        }
    }
}

impl<D: Dim> Work<'_, D> {
    /// Step 2 of the module doc: the components of the core points, two core points being
    /// joined when they lie within eps of each other.
    #[inline(never)]
    fn components(&self, f: &Found) -> Links {
        let tree = self.tree;
        let (m, nodes) = (tree.len(), tree.node_count());
        let mut cores = vec![0u32; nodes];
        let mut rep = vec![NONE; nodes];
        // Children come after their parent: a reverse sweep sees them first.
        for n in (0..nodes).rev() {
            let (range, children) = tree.node(n);
            (cores[n], rep[n]) = match children {
                Some(c) => (cores[c] + cores[c + 1], if rep[c] != NONE { rep[c] } else { rep[c + 1] }),
                None => (
                    f.core[range.clone()].iter().filter(|&&c| c).count() as u32,
                    range.clone().find(|&p| f.core[p]).map_or(NONE, |p| p as u32),
                ),
            };
        }
        let d = self.dim.n();
        let mut boxes = vec![0.0; 2 * d * nodes];
        for n in (0..nodes).rev() {
            let (range, children) = tree.node(n);
            let (lohi, rest) = boxes[2 * d * n..].split_at_mut(2 * d);
            let (lo, hi) = lohi.split_at_mut(d);
            lo.fill(f64::INFINITY);
            hi.fill(f64::NEG_INFINITY);
            match children {
                Some(c) => {
                    // Children come after their parent.
                    let off = 2 * d * (c - n - 1);
                    let (l, r) = rest[off..off + 4 * d].split_at(2 * d);
                    let ((llo, lhi), (rlo, rhi)) = (l.split_at(d), r.split_at(d));
                    for (((lo, hi), (a, b)), (c, e)) in lo.iter_mut().zip(hi.iter_mut()).zip(llo.iter().zip(rlo)).zip(lhi.iter().zip(rhi)) {
                        *lo = smaller(*a, *b);
                        *hi = larger(*c, *e);
                    }
                }
                None => {
                    for p in range.filter(|&p| f.core[p]) {
                        for ((l, h), &v) in lo.iter_mut().zip(hi.iter_mut()).zip(self.framed(p)) {
                            *l = smaller(*l, v);
                            *h = larger(*h, v);
                        }
                    }
                }
            }
        }
        let mut k = Links { uf: UnionFind::new(m), cores, rep, whole: vec![false; nodes], boxes, roots: Vec::new(), near: Vec::new() };
        // The neighbours met while counting: most of the joins, for no distance.
        for p in (0..m).filter(|&p| f.core[p]) {
            for &q in &f.kept[p * KEPT..(p + 1) * KEPT] {
                if q != NONE && f.core[q as usize] {
                    k.uf.union(p, q as usize);
                }
            }
        }
        self.settle(0, &f.core, &mut k);
        // Then every pair of nodes that may still hold an unjoined pair.
        self.join_within(0, &f.core, &mut k);
        k
    }

    /// Joins the core points of node `n` that lie within eps of each other, then records
    /// whether the node is whole.
    #[inline(never)]
    fn join_within(&self, n: usize, core: &[bool], k: &mut Links) {
        if k.cores[n] == 0 || k.whole[n] {
            return;
        }
        let (range, children) = self.tree.node(n);
        match children {
            None => {
                for a in range.clone().filter(|&a| core[a]) {
                    for b in (a + 1..range.end).filter(|&b| core[b]) {
                        if k.uf.find(a) != k.uf.find(b) && dist2(self.dim, self.point(a), self.point(b)) <= self.eps2 {
                            k.uf.union(a, b);
                        }
                    }
                }
            }
            Some(c) => {
                self.join_within(c, core, k);
                self.join_within(c + 1, core, k);
                let d = self.dim.n();
                let gap2 = self.gap_between(k.core_box(c, d), k.core_box(c + 1, d));
                self.join_between(c, c + 1, gap2, core, k);
            }
        }
        self.settle(n, core, k);
    }

    /// The component all core points of `n` lie in (a union-find root), [`EMPTY`] for a
    /// node without core points, or [`NONE`] when they lie in several; marks the nodes
    /// found whole on the way.
    fn settle(&self, n: usize, core: &[bool], k: &mut Links) -> u32 {
        if k.cores[n] == 0 {
            return EMPTY;
        }
        if k.whole[n] {
            return k.uf.find(k.rep[n] as usize) as u32;
        }
        let (range, children) = self.tree.node(n);
        let got = match children {
            None => {
                let r = k.uf.find(k.rep[n] as usize);
                if range.clone().all(|p| !core[p] || k.uf.find(p) == r) {
                    r as u32
                } else {
                    NONE
                }
            }
            // Both children, even when the first is mixed: the whole nodes below are marked.
            Some(c) => match (self.settle(c, core, k), self.settle(c + 1, core, k)) {
                (EMPTY, b) => b,
                (a, EMPTY) => a,
                (a, b) if a == b => a,
                _ => NONE,
            },
        };
        if got != NONE {
            k.whole[n] = true;
        }
        got
    }

    /// Joins every core point of node `a` to the component of core point `to`.
    fn join_all(&self, a: usize, to: usize, core: &[bool], k: &mut Links) {
        if k.whole[a] {
            k.uf.union(k.rep[a] as usize, to);
        } else {
            for p in self.tree.node(a).0.filter(|&p| core[p]) {
                k.uf.union(p, to);
            }
            k.whole[a] = true;
        }
    }

    /// Joins the core points of node `a` to those of node `b` within eps of them (`a` and
    /// `b` disjoint).
    #[inline(never)]
    fn join_between(&self, a: usize, b: usize, gap2: f64, core: &[bool], k: &mut Links) {
        // No core point, or their boxes too far apart (`gap2`, the squared gap between the
        // boxes of their core points, is computed by the caller, which orders by it).
        if k.cores[a] == 0 || k.cores[b] == 0 || gap2 > self.near2 {
            return;
        }
        // Both whole and already one component: nothing to join.
        if k.whole[a] && k.whole[b] && k.uf.find(k.rep[a] as usize) == k.uf.find(k.rep[b] as usize) {
            return;
        }
        let d = self.dim.n();
        let (ab, bb) = (k.core_box(a, d), k.core_box(b, d));
        if box_far_within(self.dim, ab, bb, self.far2) {
            // Every core point of one is within eps of every core point of the other.
            let (ra, rb) = (k.rep[a] as usize, k.rep[b] as usize);
            self.join_all(a, rb, core, k);
            self.join_all(b, ra, core, k);
            return;
        }
        let (range_a, ca) = self.tree.node(a);
        let (range_b, cb) = self.tree.node(b);
        match (ca, cb) {
            (None, None) => self.join_leaves(a, b, core, k),
            _ => {
                // Split the node with more points (a leaf is never split); its children
                // nearer the other node first, so that a join that prunes the rest comes early.
                let (split, other, c) = match (ca, cb) {
                    (Some(c), None) => (a, b, c),
                    (None, Some(c)) => (b, a, c),
                    (Some(c), Some(d)) => if range_a.len() >= range_b.len() { (a, b, c) } else { (b, a, d) },
                    (None, None) => unreachable!(),
                };
                if k.whole[split] {
                    // The children of a whole node are whole.
                    for ch in [c, c + 1] {
                        k.whole[ch] |= k.cores[ch] > 0;
                    }
                }
                let gap_to_other = |ch: usize| if k.cores[ch] == 0 { f64::INFINITY } else { self.gap_between(k.core_box(ch, d), k.core_box(other, d)) };
                let (gl, gr) = (gap_to_other(c), gap_to_other(c + 1));
                let ((first, g1), (second, g2)) = if gl <= gr { ((c, gl), (c + 1, gr)) } else { ((c + 1, gr), (c, gl)) };
                self.join_between(first, other, g1, core, k);
                self.join_between(second, other, g2, core, k);
            }
        }
    }

    /// [`Work::join_between`] for two leaves `a` and `b`: point against point, only for
    /// pairs whose components differ. When one leaf is whole (the common case) only the
    /// other's core points outside its component are tried, each against its box first;
    /// two whole leaves need one pair within eps.
    fn join_leaves(&self, a: usize, b: usize, core: &[bool], k: &mut Links) {
        let (a, b) = if k.whole[b] && !k.whole[a] { (b, a) } else { (a, b) };
        let d = self.dim.n();
        let Links { uf, whole, boxes, rep, roots, near, .. } = k;
        let core_box = |n: usize| -> Bounds { boxes[2 * d * n..2 * d * (n + 1)].split_at(d) };
        let cores = |n: usize| self.tree.node(n).0.filter(|&p| core[p]);
        if whole[a] {
            let mut ra = uf.find(rep[a] as usize);
            if whole[b] {
                if uf.find(rep[b] as usize) == ra {
                    return;
                }
                // One pair within eps joins them all.
                let bb = core_box(b);
                for p in cores(a).filter(|&p| point_box_near(self.dim, self.framed(p), bb, self.near2)) {
                    if let Some(q) = cores(b).find(|&q| dist2(self.dim, self.point(p), self.point(q)) <= self.eps2) {
                        uf.union(p, q);
                        return;
                    }
                }
                return;
            }
            let ab = core_box(a);
            for q in cores(b) {
                if uf.find(q) == ra || !point_box_near(self.dim, self.framed(q), ab, self.near2) {
                    continue;
                }
                if let Some(p) = cores(a).find(|&p| dist2(self.dim, self.point(p), self.point(q)) <= self.eps2) {
                    // Joined to one of a's points, joined to all of them.
                    uf.union(p, q);
                    ra = uf.find(p);
                }
            }
            return;
        }
        // Neither is whole: every pair of points in different components.
        let bb = core_box(b);
        near.clear();
        near.extend(cores(a).filter(|&p| point_box_near(self.dim, self.framed(p), bb, self.near2)).map(|p| p as u32));
        if near.is_empty() {
            return;
        }
        roots.clear();
        roots.extend(cores(b).map(|q| (q as u32, uf.find(q) as u32)));
        for &p in near.iter() {
            let p = p as usize;
            let mut root = uf.find(p) as u32;
            for i in 0..roots.len() {
                let (q, rq) = roots[i];
                if rq != root && dist2(self.dim, self.point(p), self.point(q as usize)) <= self.eps2 {
                    uf.union(p, q as usize);
                    // Rare (a join): the components read again.
                    root = uf.find(p) as u32;
                    for e in roots.iter_mut() {
                        e.1 = uf.find(e.0 as usize) as u32;
                    }
                }
            }
        }
    }

    /// Step 3 of the module doc: clusters numbered in the order they are grown (by their
    /// lowest core row), each border point given the lowest among its core neighbours.
    #[inline(never)]
    fn labels(&self, f: &Found, k: &mut Links) -> Vec<u32> {
        let tree = self.tree;
        let m = tree.len();
        // Each component's lowest core row, kept at its root.
        let mut lowest = vec![u32::MAX; m];
        for p in (0..m).filter(|&p| f.core[p]) {
            let r = k.uf.find(p);
            lowest[r] = lowest[r].min(tree.row_at(p) as u32);
        }
        let mut order: Vec<u32> = (0..m).filter(|&p| f.core[p] && k.uf.find(p) == p).map(|p| lowest[p]).collect();
        order.sort_unstable();
        let mut label = vec![NONE; m];
        for p in (0..m).filter(|&p| f.core[p]) {
            let r = k.uf.find(p);
            label[p] = order.binary_search(&lowest[r]).expect("every component has its lowest row listed") as u32;
        }
        for p in (0..m).filter(|&p| !f.core[p]) {
            let near = &f.near[f.near_at[p] as usize..f.near_at[p + 1] as usize];
            label[p] = near.iter().filter(|&&q| f.core[q as usize]).map(|&q| label[q as usize]).min().unwrap_or(NONE);
        }
        label
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
        for &dim in &[1usize, 2, 3, 7, 12] {
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

    /// Points on an integer lattice, each row twice: many pairs lie at exactly eps (1, the
    /// lattice step, or sqrt 2), where only the exact distance on the given coordinates
    /// decides. In 3 to 5 columns the index is built in principal axes, so its box tests
    /// must leave the margin; far from the origin (1e6) the margin is widest.
    #[test]
    fn ties_at_exactly_eps_equal_brute_force() {
        let mut rng = SplitMix64::new(32);
        for &dim in &[2usize, 3, 5] {
            for &offset in &[0.0, 1e6] {
                let mut pts = Vec::new();
                for _ in 0..150 {
                    let row: Vec<f64> = (0..dim).map(|_| offset + rng.below(4) as f64).collect();
                    pts.extend(&row);
                    pts.extend(&row);
                }
                for &(eps, min_points) in &[(1.0, 3), (1.0, 8), (2f64.sqrt(), 6), (0.0, 2), (0.5, 1)] {
                    let got = dbscan(&pts, dim, eps, min_points);
                    assert_eq!(got, brute_dbscan(&pts, dim, eps, min_points), "dim {dim}, offset {offset}, eps {eps}, min_points {min_points}");
                }
            }
        }
    }

    /// The benchmark's wide shape, small: a loop and a flare in two columns, four columns
    /// that mix them with noise, six columns of noise; two arcs of the loop in one slab
    /// lie close, so the proof that they stay apart is exercised.
    #[test]
    fn wide_data_equals_brute_force() {
        let mut rng = SplitMix64::new(33);
        let dim = 12;
        let mut pts = Vec::new();
        for _ in 0..900 {
            let a = rng.next_f64() * std::f64::consts::TAU;
            let (x, y) = if rng.next_f64() < 0.85 { (4.0 * a.cos(), 4.0 * a.sin()) } else { (4.0 + 6.0 * rng.next_f64(), 0.5 * rng.normal()) };
            let (x, y) = (x + 0.25 * rng.normal(), y + 0.25 * rng.normal());
            pts.extend([x, y]);
            pts.extend([(0.8, 0.3), (-0.4, 0.9), (0.6, -0.6), (0.2, 0.7)].iter().map(|(p, q)| p * x + q * y + rng.normal()));
            pts.extend((0..6).map(|_| rng.normal()));
        }
        for &(eps, min_points) in &[(2.0, 5), (2.6, 5), (3.0, 20), (3.5, 60)] {
            let got = dbscan(&pts, dim, eps, min_points);
            assert_eq!(got, brute_dbscan(&pts, dim, eps, min_points), "eps {eps}, min_points {min_points}");
        }
        // Only the arcs at the slab |x| < 1 (two clusters or more at these settings).
        let slab: Vec<f64> = pts.chunks_exact(dim).filter(|r| r[0].abs() < 1.0).flatten().copied().collect();
        let got = dbscan(&slab, dim, 2.6, 4);
        assert!(got.iter().flatten().max().is_some_and(|&c| c >= 1), "the slab should hold two clusters or more");
        assert_eq!(got, brute_dbscan(&slab, dim, 2.6, 4));
    }

    /// Dense clumps where whole leaves and whole pairs of nodes lie within eps: the
    /// devices that count and join without distances.
    #[test]
    fn dense_clumps_equal_brute_force() {
        let mut rng = SplitMix64::new(34);
        for &dim in &[1usize, 2, 4, 9] {
            let mut pts = Vec::new();
            for i in 0..1500 {
                let c = (i % 5) as f64 * 3.0;
                pts.extend((0..dim).map(|_| c + 0.05 * rng.normal()));
            }
            for &(eps, min_points) in &[(0.6, 5), (0.6, 400), (0.25, 40), (3.5, 10)] {
                let got = dbscan(&pts, dim, eps, min_points);
                assert_eq!(got, brute_dbscan(&pts, dim, eps, min_points), "dim {dim}, eps {eps}, min_points {min_points}");
            }
        }
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]
        /// Any small set of points (coordinates on a coarse grid, so that ties and repeated
        /// rows are common), any eps and min_points: the brute force's labels.
        #[test]
        fn any_points_equal_brute_force(
            dim in 1usize..13,
            cells in proptest::collection::vec(0u8..6, 1..600),
            eps_steps in 0u8..12,
            min_points in 1usize..12,
            scale in proptest::sample::select(vec![1.0, 0.1, 1000.0]),
        ) {
            let m = cells.len() / dim;
            proptest::prop_assume!(m > 0);
            let pts: Vec<f64> = cells[..m * dim].iter().map(|&c| c as f64 * scale).collect();
            let eps = eps_steps as f64 * 0.5 * scale;
            proptest::prop_assert_eq!(dbscan(&pts, dim, eps, min_points), brute_dbscan(&pts, dim, eps, min_points));
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
