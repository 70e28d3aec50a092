//! The nerve of the clustered cover: one node per cluster, an edge between two nodes that
//! share at least `min_shared` rows (Singh, Mémoli, Carlsson 2007, with the minimum 1 of
//! the nerve raised on request), and the counts read off it: connected components and
//! independent loops (the first Betti number of a graph, E - V + C; common practice).
//!
//! The graph is the nerve's 1-skeleton. Where three nodes share rows the nerve also has a
//! triangle, and a loop of the graph that runs round such a triangle is not a loop of the
//! nerve. That happens whenever three cover elements meet: in a 1-D cover with overlap
//! above one half, and at the corners of a 2-D cover. [`Nerve::filled_loops`] counts the
//! loops that remain once those triangles are filled: the first Betti number of the
//! nerve's 2-skeleton over Z/2, b1 = E - V + C - rank(boundary of the triangles)
//! (standard simplicial homology; the rank by column reduction over Z/2 as in Edelsbrunner,
//! Letscher, Zomorodian 2002). The page shows both numbers where they differ.
//!
//! Node statistics over table columns live in [`crate::engine`]; this module knows rows
//! only as numbers.

use std::collections::HashMap;

use petgraph::graph::UnGraph;
use petgraph::unionfind::UnionFind;

#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// Index of the cover element the cluster came from.
    pub element: usize,
    /// Table row indices of the cluster's members, increasing.
    pub members: Vec<u32>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Edge {
    pub a: u32,
    pub b: u32,
    /// Number of rows the two nodes share.
    pub shared: u32,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Nerve {
    pub nodes: Vec<Node>,
    /// Sorted by (a, b), a < b.
    pub edges: Vec<Edge>,
}

impl Nerve {
    /// Joins nodes that share at least `min_shared` rows. `n_rows` bounds the row indices.
    pub fn new(nodes: Vec<Node>, n_rows: usize, min_shared: usize) -> Nerve {
        // For each row, the nodes that hold it (CSR layout: no allocation per row).
        let mut start = vec![0u32; n_rows + 1];
        for node in &nodes {
            for &r in &node.members {
                start[r as usize + 1] += 1;
            }
        }
        for i in 0..n_rows {
            start[i + 1] += start[i];
        }
        let mut fill = start.clone();
        let mut holders = vec![0u32; start[n_rows] as usize];
        for (k, node) in nodes.iter().enumerate() {
            for &r in &node.members {
                holders[fill[r as usize] as usize] = k as u32;
                fill[r as usize] += 1;
            }
        }
        let mut shared: HashMap<(u32, u32), u32> = HashMap::new();
        for r in 0..n_rows {
            let hs = &holders[start[r] as usize..start[r + 1] as usize];
            for (i, &a) in hs.iter().enumerate() {
                for &b in &hs[i + 1..] {
                    *shared.entry((a.min(b), a.max(b))).or_insert(0) += 1;
                }
            }
        }
        let mut edges: Vec<Edge> =
            shared.into_iter().filter(|&(_, c)| c as usize >= min_shared).map(|((a, b), c)| Edge { a, b, shared: c }).collect();
        edges.sort_unstable_by_key(|e| (e.a, e.b));
        Nerve { nodes, edges }
    }

    pub fn to_petgraph(&self) -> UnGraph<usize, u32> {
        let mut g = UnGraph::with_capacity(self.nodes.len(), self.edges.len());
        for n in &self.nodes {
            g.add_node(n.members.len());
        }
        for e in &self.edges {
            g.add_edge(petgraph::graph::NodeIndex::new(e.a as usize), petgraph::graph::NodeIndex::new(e.b as usize), e.shared);
        }
        g
    }

    /// (components, loops).
    pub fn counts(&self) -> (usize, usize) {
        let pairs: Vec<(u32, u32)> = self.edges.iter().map(|e| (e.a, e.b)).collect();
        counts(self.nodes.len(), &pairs)
    }

    /// The number of distinct rows in each connected component, largest first (a row in
    /// two nodes of one component counts once).
    pub fn component_rows(&self) -> Vec<usize> {
        let mut out: Vec<usize> = self.rows_by_component(&self.component_of()).into_iter().map(|r| r as usize).collect();
        out.sort_unstable_by(|a, b| b.cmp(a));
        out
    }

    /// Share of the rows in nodes that the largest component holds (0 for no node).
    pub fn largest_share(&self) -> f64 {
        let rows = self.component_rows();
        let total: usize = rows.iter().sum();
        if total == 0 {
            0.0
        } else {
            rows[0] as f64 / total as f64
        }
    }

    /// Triangles of the nerve: triples of nodes `a < b < c`, pairwise joined by edges, that
    /// share at least `min_shared` rows all three (the same minimum as for edges), sorted.
    /// Nodes of one cover element hold disjoint rows, so the three come from three elements.
    pub fn triangles(&self, min_shared: usize) -> Vec<[u32; 3]> {
        let n = self.nodes.len();
        let mut adj: Vec<Vec<u32>> = vec![Vec::new(); n];
        for e in &self.edges {
            adj[e.a as usize].push(e.b);
        }
        let mut out = Vec::new();
        for e in &self.edges {
            // Common neighbours above b of a and b: both lists increase (edges are sorted).
            let (na, nb) = (&adj[e.a as usize], &adj[e.b as usize]);
            let (mut i, mut j) = (0, 0);
            while i < na.len() && j < nb.len() {
                match na[i].cmp(&nb[j]) {
                    std::cmp::Ordering::Less => i += 1,
                    std::cmp::Ordering::Greater => j += 1,
                    std::cmp::Ordering::Equal => {
                        let c = na[i];
                        if c > e.b && shares_at_least(&self.nodes[e.a as usize].members, &self.nodes[e.b as usize].members, &self.nodes[c as usize].members, min_shared.max(1)) {
                            out.push([e.a, e.b, c]);
                        }
                        i += 1;
                        j += 1;
                    }
                }
            }
        }
        out.sort_unstable();
        out
    }

    /// Loops of the nerve once its triangles (see [`Nerve::triangles`]) are filled: never
    /// more than the graph's loops of [`Nerve::counts`].
    pub fn filled_loops(&self, min_shared: usize) -> usize {
        filled_loops(self.nodes.len(), &self.edges, &self.triangles(min_shared))
    }

    /// Component index of every node, numbered in order of each component's first node.
    pub fn component_of(&self) -> Vec<u32> {
        let mut uf = UnionFind::<u32>::new(self.nodes.len());
        for e in &self.edges {
            uf.union(e.a, e.b);
        }
        let mut label = HashMap::new();
        (0..self.nodes.len() as u32)
            .map(|i| {
                let next = label.len() as u32;
                *label.entry(uf.find(i)).or_insert(next)
            })
            .collect()
    }

    /// The number of distinct rows in each component, indexed by [`Nerve::component_of`]'s
    /// labels (a row held by nodes of two components, possible when edges need more than
    /// one shared row, counts in both).
    pub fn rows_by_component(&self, comp: &[u32]) -> Vec<u32> {
        let n_comp = comp.iter().map(|&c| c as usize + 1).max().unwrap_or(0);
        let rows = self.nodes.iter().flat_map(|n| n.members.last()).map(|&r| r as usize + 1).max().unwrap_or(0);
        // Nodes taken component by component; the last component that counted each row.
        let mut order: Vec<usize> = (0..self.nodes.len()).collect();
        order.sort_by_key(|&i| comp[i]);
        let mut seen = vec![u32::MAX; rows];
        let mut out = vec![0u32; n_comp];
        for i in order {
            let c = comp[i];
            for &r in &self.nodes[i].members {
                if seen[r as usize] != c {
                    seen[r as usize] = c;
                    out[c as usize] += 1;
                }
            }
        }
        out
    }

    pub fn degrees(&self) -> Vec<usize> {
        let mut d = vec![0; self.nodes.len()];
        for e in &self.edges {
            d[e.a as usize] += 1;
            d[e.b as usize] += 1;
        }
        d
    }
}

/// Whether three increasing row lists have at least `k` rows in common.
fn shares_at_least(a: &[u32], b: &[u32], c: &[u32], k: usize) -> bool {
    let (mut i, mut j, mut l, mut found) = (0, 0, 0, 0);
    while i < a.len() && j < b.len() && l < c.len() {
        let m = a[i].max(b[j]).max(c[l]);
        if a[i] == m && b[j] == m && c[l] == m {
            found += 1;
            if found >= k {
                return true;
            }
            i += 1;
            j += 1;
            l += 1;
        } else {
            if a[i] < m {
                i += 1;
            }
            if b[j] < m {
                j += 1;
            }
            if c[l] < m {
                l += 1;
            }
        }
    }
    false
}

/// Loops of a nerve once its `triangles` (sorted, each side an edge of `edges`, which are
/// sorted by (a, b)) are filled: E - V + C less the rank over Z/2 of the triangles'
/// boundaries. [`Nerve::filled_loops`] finds the triangles from the member rows; a run in
/// parts ([`crate::parts`]) from its group-by on rows.
pub fn filled_loops(n_nodes: usize, edges: &[Edge], triangles: &[[u32; 3]]) -> usize {
    let pairs: Vec<(u32, u32)> = edges.iter().map(|e| (e.a, e.b)).collect();
    let (_, loops) = counts(n_nodes, &pairs);
    if triangles.is_empty() {
        return loops;
    }
    let edge_index = |a: u32, b: u32| -> u32 { edges.binary_search_by_key(&(a, b), |e| (e.a, e.b)).expect("a triangle's sides are edges") as u32 };
    // Column reduction over Z/2: each column is the sorted edge indices of one triangle's
    // boundary; a column reduced to nothing is a dependency, the others count to the rank.
    let mut owner: HashMap<u32, Vec<u32>> = HashMap::new();
    let mut rank = 0;
    for t in triangles {
        let mut col = vec![edge_index(t[0], t[1]), edge_index(t[0], t[2]), edge_index(t[1], t[2])];
        col.sort_unstable();
        while let Some(&low) = col.last() {
            match owner.get(&low) {
                Some(other) => col = xor_sorted(&col, other),
                None => {
                    owner.insert(low, col);
                    rank += 1;
                    break;
                }
            }
        }
    }
    loops - rank
}

/// Symmetric difference of two increasing lists (addition of two chains over Z/2).
fn xor_sorted(a: &[u32], b: &[u32]) -> Vec<u32> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    let (mut i, mut j) = (0, 0);
    while i < a.len() || j < b.len() {
        if j == b.len() || (i < a.len() && a[i] < b[j]) {
            out.push(a[i]);
            i += 1;
        } else if i == a.len() || b[j] < a[i] {
            out.push(b[j]);
            j += 1;
        } else {
            i += 1;
            j += 1;
        }
    }
    out
}

/// Connected components and cycle rank (E - V + C) of a simple graph given by its edges.
pub fn counts(n_nodes: usize, edges: &[(u32, u32)]) -> (usize, usize) {
    let g: UnGraph<(), ()> = UnGraph::from_edges(edges.iter().copied());
    let mut g = g;
    while g.node_count() < n_nodes {
        g.add_node(());
    }
    let c = petgraph::algo::connected_components(&g);
    (c, (edges.len() + c).saturating_sub(n_nodes))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn node(element: usize, m: &[u32]) -> Node {
        Node { element, members: m.to_vec() }
    }

    #[test]
    fn component_rows_count_each_row_once() {
        // Nodes 0-1 joined (rows 0, 1, 2, 3: row 2 in both), node 2 alone (row 5), node 3
        // alone (rows 6, 7, 8).
        let nodes = vec![node(0, &[0, 1, 2]), node(1, &[2, 3]), node(1, &[5]), node(2, &[6, 7, 8])];
        let n = Nerve::new(nodes, 9, 1);
        assert_eq!(n.component_rows(), vec![4, 3, 1]);
        assert_eq!(n.largest_share(), 0.5);
        assert_eq!(Nerve::new(Vec::new(), 3, 1).largest_share(), 0.0);
    }

    #[test]
    fn edges_exactly_where_rows_are_shared() {
        let nodes = vec![node(0, &[0, 1, 2]), node(1, &[2, 3]), node(1, &[5]), node(2, &[3, 4, 5])];
        let n = Nerve::new(nodes.clone(), 6, 1);
        assert_eq!(n.edges, vec![Edge { a: 0, b: 1, shared: 1 }, Edge { a: 1, b: 3, shared: 1 }, Edge { a: 2, b: 3, shared: 1 }]);
        for i in 0..nodes.len() {
            for j in i + 1..nodes.len() {
                let common = nodes[i].members.iter().filter(|r| nodes[j].members.contains(r)).count();
                assert_eq!(common > 0, n.edges.iter().any(|e| (e.a as usize, e.b as usize) == (i, j)));
            }
        }
        assert_eq!(n.counts(), (1, 0));
        let strict = Nerve::new(nodes, 6, 2);
        assert!(strict.edges.is_empty());
        assert_eq!(strict.counts(), (4, 0));
    }

    #[test]
    fn cycle_rank_of_small_graphs_by_hand() {
        // A triangle: 3 - 3 + 1 = 1 loop. Two triangles sharing a vertex: 6 - 5 + 1 = 2.
        assert_eq!(counts(3, &[(0, 1), (1, 2), (0, 2)]), (1, 1));
        assert_eq!(counts(5, &[(0, 1), (1, 2), (0, 2), (2, 3), (3, 4), (2, 4)]), (1, 2));
        // Isolated nodes count as components.
        assert_eq!(counts(4, &[(0, 1)]), (3, 0));
        assert_eq!(counts(0, &[]), (0, 0));
    }

    #[test]
    fn filled_triangles_by_hand() {
        // Three nodes from three elements, pairwise sharing rows. With row 9 in all three the
        // triangle is filled: the graph has 1 loop, the nerve none. Without it (rows shared
        // only pairwise) the loop is a loop of the nerve too.
        let filled = Nerve::new(vec![node(0, &[0, 1, 9]), node(1, &[1, 2, 9]), node(2, &[0, 2, 9])], 10, 1);
        assert_eq!(filled.counts(), (1, 1));
        assert_eq!(filled.triangles(1), vec![[0, 1, 2]]);
        assert_eq!(filled.filled_loops(1), 0);
        // Raising the minimum to 2 shared rows keeps the edges (each pair shares 2) but
        // empties the triangle (the three share 1 row).
        assert_eq!(filled.counts(), Nerve::new(filled.nodes.clone(), 10, 2).counts());
        assert_eq!(Nerve::new(filled.nodes.clone(), 10, 2).filled_loops(2), 1);
        let hollow = Nerve::new(vec![node(0, &[0, 1]), node(1, &[1, 2]), node(2, &[0, 2])], 3, 1);
        assert_eq!(hollow.counts(), (1, 1));
        assert!(hollow.triangles(1).is_empty());
        assert_eq!(hollow.filled_loops(1), 1);
    }

    #[test]
    fn a_filled_tetrahedron_boundary_has_no_loop() {
        // Four nodes, every triple sharing a row, no row in all four: the boundary of a
        // tetrahedron, a sphere (b1 = 0, b2 = 1). The graph K4 has 6 - 4 + 1 = 3 loops; the
        // four triangles have rank 3 (their sum is zero over Z/2), so 3 - 3 = 0.
        let nodes = vec![node(0, &[0, 1, 2]), node(1, &[0, 1, 3]), node(2, &[0, 2, 3]), node(3, &[1, 2, 3])];
        let n = Nerve::new(nodes, 4, 1);
        assert_eq!(n.counts(), (1, 3));
        assert_eq!(n.triangles(1).len(), 4);
        assert_eq!(n.filled_loops(1), 0);
    }

    #[test]
    fn components_labelled_in_node_order() {
        let nodes = vec![node(0, &[0]), node(0, &[1]), node(1, &[0, 2]), node(1, &[1])];
        let n = Nerve::new(nodes, 3, 1);
        assert_eq!(n.component_of(), vec![0, 1, 0, 1]);
        assert_eq!(n.degrees(), vec![1, 1, 1, 1]);
        // Rows {0, 2} and {1}: shared rows count once.
        assert_eq!(n.rows_by_component(&n.component_of()), vec![2, 1]);
    }

    #[test]
    fn a_row_in_two_components_counts_in_each() {
        // With edges needing 2 shared rows, nodes 0 and 2 share only row 1: three
        // components, and row 1 counts in the first and the third.
        let nodes = vec![node(0, &[0, 1, 5]), node(1, &[0, 5, 6]), node(1, &[1, 3]), node(2, &[4])];
        let n = Nerve::new(nodes, 7, 2);
        let comp = n.component_of();
        assert_eq!(comp, vec![0, 0, 1, 2]);
        assert_eq!(n.rows_by_component(&comp), vec![4, 2, 1]);
        assert_eq!(n.degrees(), vec![1, 1, 0, 0]);
    }
}
