//! The extended persistence diagram of a graph with a real value on each node: for a
//! Mapper graph, the node value is the mean lens value of its rows
//! ([`crate::Build::node_lens`]). It is the summary of the graph's shape whose stability
//! the rest of [`crate::shape`] measures.
//!
//! Definitions (Cohen-Steiner, Edelsbrunner, Harer 2009, "Extending persistence using
//! Poincaré and Lefschetz duality"; read for graphs as in Carrière, Michel, Oudot 2018,
//! §2): the lower-star filtration of the graph (a node enters at its value, an edge at the
//! larger of its ends' values) is followed by the relative part, the upper-star
//! filtration coned off in decreasing order (a node at its value, an edge at the smaller
//! of its ends' values). The pairs of that extended filtration are of four kinds, named
//! here for what they look like in the graph:
//!
//! | [`Kind`] | the papers' name | birth | death |
//! | --- | --- | --- | --- |
//! | `Component` | Ext0 (extended, degree 0) | lowest value of a connected component | its highest value |
//! | `Loop` | Ext1 (extended, degree 1) | value at which the ascending sweep closes the loop | value at which the descending sweep closes it |
//! | `DownBranch` | Ord0 (ordinary, degree 0) | a local minimum | the value where its branch joins an older (lower) one |
//! | `UpBranch` | Rel1 (relative, degree 1) | a local maximum | the value where its branch joins an older (higher) one |
//!
//! So `Component` and `DownBranch` points have birth ≤ death, `Loop` and `UpBranch`
//! points birth ≥ death; their height above or below the diagonal is what counts.
//! There are exactly C `Component` points and E - V + C `Loop` points (zero-length ones
//! kept: they still count a component or a loop); `DownBranch` and `UpBranch` points of
//! length zero (a node that is not a local extremum) are left out, as they lie on the
//! diagonal and no distance sees them.
//!
//! Two ways to compute it, which must agree (tests/shape.rs checks this on random graphs):
//! [`extended_persistence`], the fast one: union-find sweeps up and down with the elder
//! rule for components and branches, and for loops an incremental maximum spanning
//! forest (edge weight = the smaller end's value) along the ascending sweep: each edge
//! that closes a cycle is paired with the lightest edge of that cycle, which then leaves
//! the forest (its death is that edge's weight). Why that is the pairing: the number of
//! loop points born at or below `a` and dying at or above `t` must be the cycle rank of
//! the subgraph on nodes with values in [t, a] (the cycles of that band are exactly the
//! classes of H1 below `a` that die in the descending sweep at `t` or earlier), and the
//! edges left out of a maximum spanning forest of the part below `a`, counted by weight
//! at or above `t`, are that cycle rank. Cost O((V + E) α + L V) for L loops.
//! [`extended_persistence_by_reduction`] is the textbook column reduction over Z/2 of the
//! coned filtration, for checking; it is cubic in the worst case, for small graphs only.
//!
//! Not here: the distance between diagrams ([`super::bottleneck`]) and what is
//! significant ([`super::confidence`]).

use serde::Serialize;

/// Which of the four kinds of extended persistence point; see the module comment.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Kind {
    /// Ext0: a connected component, from its lowest to its highest value.
    Component,
    /// Ext1: an independent loop.
    Loop,
    /// Ord0: a branch going down to a local minimum.
    DownBranch,
    /// Rel1: a branch going up to a local maximum.
    UpBranch,
}

impl Kind {
    pub const ALL: [Kind; 4] = [Kind::Component, Kind::Loop, Kind::DownBranch, Kind::UpBranch];
}

/// One point of the diagram, with the nodes where it is born and dies.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Feature {
    pub kind: Kind,
    pub birth: f64,
    pub death: f64,
    pub birth_node: u32,
    pub death_node: u32,
}

impl Feature {
    /// |death - birth|.
    pub fn persistence(&self) -> f64 {
        (self.death - self.birth).abs()
    }

    /// L-infinity distance to the diagonal: |death - birth| / 2.
    pub fn to_diagonal(&self) -> f64 {
        self.persistence() / 2.0
    }
}

#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Diagram {
    /// Sorted by kind, then by decreasing persistence.
    pub features: Vec<Feature>,
}

impl Diagram {
    fn new(mut features: Vec<Feature>) -> Diagram {
        features.sort_by(|a, b| {
            a.kind.cmp(&b.kind).then(b.persistence().total_cmp(&a.persistence())).then(a.birth.total_cmp(&b.birth))
                .then(a.death.total_cmp(&b.death))
                .then(a.birth_node.cmp(&b.birth_node))
                .then(a.death_node.cmp(&b.death_node))
        });
        Diagram { features }
    }

    pub fn of_kind(&self, kind: Kind) -> impl Iterator<Item = &Feature> + '_ {
        self.features.iter().filter(move |f| f.kind == kind)
    }

    pub fn count(&self, kind: Kind) -> usize {
        self.of_kind(kind).count()
    }

    /// (birth, death) of the points of one kind.
    pub fn points(&self, kind: Kind) -> Vec<(f64, f64)> {
        self.of_kind(kind).map(|f| (f.birth, f.death)).collect()
    }
}

/// The diagram of a built Mapper graph, with node values the nodes' mean lens values.
pub fn of_build(b: &crate::Build) -> Diagram {
    let edges: Vec<(u32, u32)> = b.nerve.edges.iter().map(|e| (e.a, e.b)).collect();
    extended_persistence(&b.node_lens, &edges)
}

/// Node order of the sweeps: by value, ties by index (any fixed order gives the same
/// diagram; this one makes the two algorithms comparable point by point).
fn ranks(values: &[f64]) -> (Vec<u32>, Vec<u32>) {
    let mut order: Vec<u32> = (0..values.len() as u32).collect();
    order.sort_by(|&a, &b| values[a as usize].total_cmp(&values[b as usize]).then(a.cmp(&b)));
    let mut rank = vec![0u32; values.len()];
    for (r, &v) in order.iter().enumerate() {
        rank[v as usize] = r as u32;
    }
    (order, rank)
}

fn check(values: &[f64], edges: &[(u32, u32)]) {
    assert!(values.iter().all(|v| v.is_finite()), "extended persistence needs a finite value on every node");
    assert!(
        edges.iter().all(|&(a, b)| a != b && (a as usize) < values.len() && (b as usize) < values.len()),
        "edges must join two different existing nodes"
    );
}

struct Dsu {
    parent: Vec<u32>,
    /// For a root: the node that represents the component (its oldest extremum).
    rep: Vec<u32>,
}

impl Dsu {
    fn new(n: usize) -> Dsu {
        Dsu { parent: (0..n as u32).collect(), rep: (0..n as u32).collect() }
    }
    fn find(&mut self, mut x: u32) -> u32 {
        while self.parent[x as usize] != x {
            let p = self.parent[x as usize];
            self.parent[x as usize] = self.parent[p as usize];
            x = p;
        }
        x
    }
}

/// One union-find sweep in the order `order` (position `pos`): each node joins its
/// earlier neighbours; when two components meet, the one whose extremum came later dies
/// there (elder rule). Returns (dying extremum, meeting node) pairs and the final forest.
fn sweep(order: &[u32], pos: &[u32], adj: &[Vec<u32>]) -> (Vec<(u32, u32)>, Dsu) {
    let mut dsu = Dsu::new(pos.len());
    let mut pairs = Vec::new();
    for &v in order {
        for &u in &adj[v as usize] {
            if pos[u as usize] >= pos[v as usize] {
                continue;
            }
            let (ru, rv) = (dsu.find(u), dsu.find(v));
            if ru == rv {
                continue;
            }
            let (eu, ev) = (dsu.rep[ru as usize], dsu.rep[rv as usize]);
            let (young, old_root, young_root) = if pos[eu as usize] < pos[ev as usize] { (ev, ru, rv) } else { (eu, rv, ru) };
            pairs.push((young, v));
            dsu.parent[young_root as usize] = old_root;
        }
    }
    (pairs, dsu)
}

/// The extended persistence diagram of the graph with node values `values` and edges
/// `edges` (pairs of node indices; parallel edges are allowed and each closes a loop).
/// Fast: union-find and a spanning forest, see the module comment.
pub fn extended_persistence(values: &[f64], edges: &[(u32, u32)]) -> Diagram {
    check(values, edges);
    let n = values.len();
    let (order, rank) = ranks(values);
    let mut adj: Vec<Vec<u32>> = vec![Vec::new(); n];
    for &(a, b) in edges {
        adj[a as usize].push(b);
        adj[b as usize].push(a);
    }
    let mut out = Vec::new();
    let f = |v: u32| values[v as usize];

    // Ascending: down branches and each component's lowest node.
    let (pairs, mut up) = sweep(&order, &rank, &adj);
    for (young, at) in pairs {
        if f(young) < f(at) {
            out.push(Feature { kind: Kind::DownBranch, birth: f(young), death: f(at), birth_node: young, death_node: at });
        }
    }
    // Descending: up branches.
    let down_order: Vec<u32> = order.iter().rev().copied().collect();
    let down_pos: Vec<u32> = rank.iter().map(|&r| n as u32 - 1 - r).collect();
    let (pairs, _) = sweep(&down_order, &down_pos, &adj);
    for (young, at) in pairs {
        if f(young) > f(at) {
            out.push(Feature { kind: Kind::UpBranch, birth: f(young), death: f(at), birth_node: young, death_node: at });
        }
    }
    // Components: lowest and highest node of each.
    let mut top: Vec<Option<u32>> = vec![None; n];
    for &v in &order {
        let r = up.find(v) as usize;
        top[r] = Some(v);
    }
    for v in 0..n as u32 {
        if up.find(v) == v {
            let low = up.rep[v as usize];
            let high = top[v as usize].expect("a root's component holds the root");
            out.push(Feature { kind: Kind::Component, birth: f(low), death: f(high), birth_node: low, death_node: high });
        }
    }
    out.extend(loops(values, &rank, edges));
    Diagram::new(out)
}

/// Loop points by the incremental maximum spanning forest; see the module comment.
fn loops(values: &[f64], rank: &[u32], edges: &[(u32, u32)]) -> Vec<Feature> {
    let n = values.len();
    // Ends of each edge as (lower, upper) in sweep order.
    let ends: Vec<(u32, u32)> = edges.iter().map(|&(a, b)| if rank[a as usize] < rank[b as usize] { (a, b) } else { (b, a) }).collect();
    // Ascending sweep order of edges: by upper end, then lower end (lower-star filtration).
    let mut by_entry: Vec<usize> = (0..edges.len()).collect();
    by_entry.sort_by_key(|&e| (rank[ends[e].1 as usize], rank[ends[e].0 as usize], e));
    // Weight in the descending sweep: an edge enters when its lower end does; a larger
    // key enters earlier. Ties among edges with the same lower end by upper end.
    let weight = |e: usize| (rank[ends[e].0 as usize], rank[ends[e].1 as usize], e);
    let mut forest: Vec<Vec<(u32, u32)>> = vec![Vec::new(); n];
    let mut dsu = Dsu::new(n);
    let mut out = Vec::new();
    let mut seen = vec![u32::MAX; n];
    let mut via: Vec<(u32, u32)> = vec![(0, 0); n];
    let mut queue = std::collections::VecDeque::new();
    for (stamp, &e) in by_entry.iter().enumerate() {
        let (a, b) = ends[e];
        let (ra, rb) = (dsu.find(a), dsu.find(b));
        if ra != rb {
            dsu.parent[ra as usize] = rb;
            forest[a as usize].push((b, e as u32));
            forest[b as usize].push((a, e as u32));
            continue;
        }
        // The forest path from a to b, by breadth-first search.
        queue.clear();
        queue.push_back(a);
        seen[a as usize] = stamp as u32;
        while let Some(x) = queue.pop_front() {
            if x == b {
                break;
            }
            for &(y, ed) in &forest[x as usize] {
                if seen[y as usize] != stamp as u32 {
                    seen[y as usize] = stamp as u32;
                    via[y as usize] = (x, ed);
                    queue.push_back(y);
                }
            }
        }
        let mut lightest = e;
        let mut x = b;
        while x != a {
            let (p, ed) = via[x as usize];
            if weight(ed as usize) < weight(lightest) {
                lightest = ed as usize;
            }
            x = p;
        }
        if lightest != e {
            // e joins the forest in place of the lightest edge of the cycle.
            let (la, lb) = ends[lightest];
            forest[la as usize].retain(|&(_, ed)| ed as usize != lightest);
            forest[lb as usize].retain(|&(_, ed)| ed as usize != lightest);
            forest[a as usize].push((b, e as u32));
            forest[b as usize].push((a, e as u32));
        }
        let low = ends[lightest].0;
        out.push(Feature { kind: Kind::Loop, birth: values[b as usize], death: values[low as usize], birth_node: b, death_node: low });
    }
    out
}

/// The same diagram by the standard persistence algorithm (column reduction over Z/2) on
/// the coned extended filtration: the cone vertex, then the lower-star filtration of the
/// graph, then the cone over each node and edge in decreasing upper-star order. For
/// checking [`extended_persistence`] on small graphs.
pub fn extended_persistence_by_reduction(values: &[f64], edges: &[(u32, u32)]) -> Diagram {
    check(values, edges);
    let n = values.len();
    let m = edges.len();
    let (_, rank) = ranks(values);
    let ends: Vec<(u32, u32)> = edges.iter().map(|&(a, b)| if rank[a as usize] < rank[b as usize] { (a, b) } else { (b, a) }).collect();
    #[derive(Clone, Copy)]
    enum Cell {
        Apex,
        Node(u32),
        Edge(usize),
        ConeNode(u32),
        ConeEdge(usize),
    }
    // Filtration keys: (part, key...) compared lexicographically.
    let mut cells: Vec<((u8, i64, u8, i64), Cell)> = Vec::with_capacity(1 + 2 * (n + m));
    cells.push(((0, 0, 0, 0), Cell::Apex));
    for v in 0..n {
        cells.push(((1, rank[v] as i64, 0, 0), Cell::Node(v as u32)));
        cells.push(((2, -(rank[v] as i64), 0, 0), Cell::ConeNode(v as u32)));
    }
    for (e, &(lo, hi)) in ends.iter().enumerate() {
        cells.push(((1, rank[hi as usize] as i64, 1, rank[lo as usize] as i64), Cell::Edge(e)));
        cells.push(((2, -(rank[lo as usize] as i64), 1, -(rank[hi as usize] as i64)), Cell::ConeEdge(e)));
    }
    cells.sort_by_key(|c| c.0);
    let mut index_node = vec![0usize; n];
    let mut index_cone_node = vec![0usize; n];
    let mut index_edge = vec![0usize; m];
    for (i, (_, c)) in cells.iter().enumerate() {
        match *c {
            Cell::Node(v) => index_node[v as usize] = i,
            Cell::ConeNode(v) => index_cone_node[v as usize] = i,
            Cell::Edge(e) => index_edge[e] = i,
            _ => {}
        }
    }
    let apex = 0usize;
    let mut columns: Vec<Vec<usize>> = cells
        .iter()
        .map(|(_, c)| {
            let mut b = match *c {
                Cell::Apex | Cell::Node(_) => vec![],
                Cell::Edge(e) => vec![index_node[ends[e].0 as usize], index_node[ends[e].1 as usize]],
                Cell::ConeNode(v) => vec![apex, index_node[v as usize]],
                Cell::ConeEdge(e) => vec![index_edge[e], index_cone_node[ends[e].0 as usize], index_cone_node[ends[e].1 as usize]],
            };
            b.sort_unstable();
            b
        })
        .collect();
    let mut owner: Vec<Option<usize>> = vec![None; cells.len()];
    let mut out = Vec::new();
    let f = |v: u32| values[v as usize];
    for j in 0..columns.len() {
        while let Some(&low) = columns[j].last() {
            match owner[low] {
                Some(k) => {
                    let other = std::mem::take(&mut columns[k]);
                    columns[j] = sym_diff(&columns[j], &other);
                    columns[k] = other;
                }
                None => break,
            }
        }
        let Some(&i) = columns[j].last() else { continue };
        owner[i] = Some(j);
        let feature = match (cells[i].1, cells[j].1) {
            (Cell::Node(v), Cell::Edge(e)) => {
                let at = ends[e].1;
                (f(v) < f(at)).then_some(Feature { kind: Kind::DownBranch, birth: f(v), death: f(at), birth_node: v, death_node: at })
            }
            (Cell::Node(v), Cell::ConeNode(w)) => Some(Feature { kind: Kind::Component, birth: f(v), death: f(w), birth_node: v, death_node: w }),
            (Cell::Edge(e), Cell::ConeEdge(k)) => {
                let (b, d) = (ends[e].1, ends[k].0);
                Some(Feature { kind: Kind::Loop, birth: f(b), death: f(d), birth_node: b, death_node: d })
            }
            (Cell::ConeNode(v), Cell::ConeEdge(k)) => {
                let at = ends[k].0;
                (f(v) > f(at)).then_some(Feature { kind: Kind::UpBranch, birth: f(v), death: f(at), birth_node: v, death_node: at })
            }
            _ => unreachable!("no other pairs in a coned graph filtration"),
        };
        out.extend(feature);
    }
    Diagram::new(out)
}

/// Symmetric difference of two sorted lists (addition of Z/2 columns).
fn sym_diff(a: &[usize], b: &[usize]) -> Vec<usize> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        match a[i].cmp(&b[j]) {
            std::cmp::Ordering::Less => {
                out.push(a[i]);
                i += 1;
            }
            std::cmp::Ordering::Greater => {
                out.push(b[j]);
                j += 1;
            }
            std::cmp::Ordering::Equal => {
                i += 1;
                j += 1;
            }
        }
    }
    out.extend_from_slice(&a[i..]);
    out.extend_from_slice(&b[j..]);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn triangle_has_one_component_and_one_loop() {
        // Values 0, 1, 2 on a triangle: the ascending sweep closes the loop with the edge
        // (1, 2) at value 2; the descending sweep closes it with edge (0, 1) or (0, 2),
        // entering at value 0. Component from 0 to 2. No branch: one minimum, one maximum.
        let d = extended_persistence(&[0.0, 1.0, 2.0], &[(0, 1), (1, 2), (0, 2)]);
        assert_eq!(d.points(Kind::Component), vec![(0.0, 2.0)]);
        assert_eq!(d.points(Kind::Loop), vec![(2.0, 0.0)]);
        assert_eq!(d.count(Kind::DownBranch) + d.count(Kind::UpBranch), 0);
        assert_eq!(d, extended_persistence_by_reduction(&[0.0, 1.0, 2.0], &[(0, 1), (1, 2), (0, 2)]));
    }

    #[test]
    fn parallel_edges_make_a_loop() {
        let d = extended_persistence(&[0.0, 3.0], &[(0, 1), (0, 1)]);
        assert_eq!(d.points(Kind::Loop), vec![(3.0, 0.0)]);
    }
}
