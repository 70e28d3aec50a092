//! The nerve of the clustered cover: one node per cluster, an edge between two nodes that
//! share at least `min_shared` rows (Singh, Mémoli, Carlsson 2007, with the minimum 1 of
//! the nerve raised on request), and the counts read off it: connected components and
//! independent loops (the first Betti number of a graph, E - V + C; common practice).
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

    pub fn degrees(&self) -> Vec<usize> {
        let mut d = vec![0; self.nodes.len()];
        for e in &self.edges {
            d[e.a as usize] += 1;
            d[e.b as usize] += 1;
        }
        d
    }
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
    fn components_labelled_in_node_order() {
        let nodes = vec![node(0, &[0]), node(0, &[1]), node(1, &[0, 2]), node(1, &[1])];
        let n = Nerve::new(nodes, 3, 1);
        assert_eq!(n.component_of(), vec![0, 1, 0, 1]);
        assert_eq!(n.degrees(), vec![1, 1, 1, 1]);
    }
}
