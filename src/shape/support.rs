//! The nodes that carry each point of an extended persistence diagram, so a page can
//! show on the graph which loop, branch or component a point stands for.
//!
//! For each [`Kind`] (definitions in [`super::persistence`]; sweeps in its node order,
//! by value with ties by index):
//! - `Component`: every node of the connected component of its lowest node.
//! - `DownBranch` born at a local minimum m, dying at node j: the nodes connected to m
//!   through nodes that come before j in the ascending sweep (the branch as it was when
//!   it merged), and j itself.
//! - `UpBranch`: the same in the descending sweep.
//! - `Loop` born at node b, dying at node t: a shortest cycle through b among the nodes
//!   whose values lie between t's and b's (inclusive, in sweep order). One exists: the
//!   cycle the ascending sweep closed at b lies in that band (its lightest edge has t as
//!   lower end). It is one cycle that carries the loop; others in the same band may too.
//!
//! Not here: computing the diagram ([`super::persistence`]).

use std::collections::VecDeque;

use super::persistence::{Diagram, Feature, Kind};

/// For each feature of `diagram` (in order), its nodes, increasing.
pub fn supports(values: &[f64], edges: &[(u32, u32)], diagram: &Diagram) -> Vec<Vec<u32>> {
    let n = values.len();
    let mut order: Vec<u32> = (0..n as u32).collect();
    order.sort_by(|&a, &b| values[a as usize].total_cmp(&values[b as usize]).then(a.cmp(&b)));
    let mut rank = vec![0usize; n];
    for (r, &v) in order.iter().enumerate() {
        rank[v as usize] = r;
    }
    let mut adj: Vec<Vec<u32>> = vec![Vec::new(); n];
    for &(a, b) in edges {
        adj[a as usize].push(b);
        adj[b as usize].push(a);
    }
    diagram.features.iter().map(|f| support(f, &rank, &adj)).collect()
}

fn support(f: &Feature, rank: &[usize], adj: &[Vec<u32>]) -> Vec<u32> {
    let (b, d) = (f.birth_node, f.death_node);
    let mut out = match f.kind {
        Kind::Component => reach(b, adj, |_| true),
        Kind::DownBranch => {
            let mut v = reach(b, adj, |u| rank[u as usize] < rank[d as usize]);
            v.push(d);
            v
        }
        Kind::UpBranch => {
            let mut v = reach(b, adj, |u| rank[u as usize] > rank[d as usize]);
            v.push(d);
            v
        }
        Kind::Loop => {
            let (lo, hi) = (rank[d as usize].min(rank[b as usize]), rank[d as usize].max(rank[b as usize]));
            shortest_cycle_through(b, adj, |u| (lo..=hi).contains(&rank[u as usize]))
        }
    };
    out.sort_unstable();
    out.dedup();
    out
}

/// Nodes reachable from `start` through nodes that satisfy `keep` (`start` always kept).
fn reach(start: u32, adj: &[Vec<u32>], keep: impl Fn(u32) -> bool) -> Vec<u32> {
    let mut seen = vec![false; adj.len()];
    seen[start as usize] = true;
    let mut out = vec![start];
    let mut i = 0;
    while i < out.len() {
        let x = out[i];
        i += 1;
        for &y in &adj[x as usize] {
            if !seen[y as usize] && keep(y) {
                seen[y as usize] = true;
                out.push(y);
            }
        }
    }
    out
}

/// The nodes of a shortest cycle through `s` in the subgraph of nodes satisfying `keep`,
/// by breadth-first search from `s`: each node remembers which neighbour of `s` its path
/// leaves by; the shortest cycle closes at an edge between two different such branches
/// (or a second edge from `s` into a branch). Empty when there is none.
fn shortest_cycle_through(s: u32, adj: &[Vec<u32>], keep: impl Fn(u32) -> bool) -> Vec<u32> {
    let n = adj.len();
    const NONE: u32 = u32::MAX;
    let mut parent = vec![NONE; n];
    let mut branch = vec![NONE; n];
    let mut dist = vec![usize::MAX; n];
    dist[s as usize] = 0;
    let mut queue = VecDeque::from([s]);
    let mut order = Vec::new();
    while let Some(x) = queue.pop_front() {
        order.push(x);
        for &y in &adj[x as usize] {
            if dist[y as usize] == usize::MAX && keep(y) {
                dist[y as usize] = dist[x as usize] + 1;
                parent[y as usize] = x;
                branch[y as usize] = if x == s { y } else { branch[x as usize] };
                queue.push_back(y);
            }
        }
    }
    // Best closing edge (u, w): both reached, from different branches, not a tree edge.
    let mut best: Option<(usize, u32, u32)> = None;
    for &u in &order {
        let mut tree_edge_to_parent_used = false;
        for &w in &adj[u as usize] {
            if dist[w as usize] == usize::MAX {
                continue;
            }
            // Skip one copy of the tree edge u -> parent(u) (parallel copies close cycles).
            if parent[u as usize] == w && !tree_edge_to_parent_used {
                tree_edge_to_parent_used = true;
                continue;
            }
            if parent[w as usize] == u {
                continue; // seen from w's side
            }
            let closes = if u == s || w == s { true } else { branch[u as usize] != branch[w as usize] };
            if closes {
                let len = dist[u as usize] + dist[w as usize] + 1;
                if best.is_none_or(|(l, _, _)| len < l) {
                    best = Some((len, u, w));
                }
            }
        }
    }
    let Some((_, u, w)) = best else { return Vec::new() };
    let mut out = Vec::new();
    for mut x in [u, w] {
        while x != NONE {
            out.push(x);
            x = parent[x as usize];
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::extended_persistence;

    fn of(values: &[f64], edges: &[(u32, u32)], kind: Kind) -> Vec<Vec<u32>> {
        let d = extended_persistence(values, edges);
        let s = supports(values, edges, &d);
        d.features.iter().zip(s).filter(|(f, _)| f.kind == kind).map(|(_, s)| s).collect()
    }

    #[test]
    fn loop_of_a_square_with_a_tail_is_the_square() {
        // Square 0-1-2-3-0 (values 0, 1, 3, 2) with a tail 2-4-5 going higher (4, 5):
        // the loop is born at node 2 (value 3) and dies at node 0; its cycle is the square.
        let v = [0.0, 1.0, 3.0, 2.0, 4.0, 5.0];
        let e = [(0, 1), (1, 2), (2, 3), (0, 3), (2, 4), (4, 5)];
        assert_eq!(of(&v, &e, Kind::Loop), vec![vec![0, 1, 2, 3]]);
        assert_eq!(of(&v, &e, Kind::Component), vec![vec![0, 1, 2, 3, 4, 5]]);
    }

    #[test]
    fn two_loops_each_get_their_own_cycle() {
        // Figure eight sharing node 0 (value 0): lobe A = 0-1-2-0 (values 1, 2), lobe
        // B = 0-3-4-0 (values 3, 4). Born at 2 and at 4; shortest cycles are the lobes.
        let v = [0.0, 1.0, 2.0, 3.0, 4.0];
        let e = [(0, 1), (1, 2), (0, 2), (0, 3), (3, 4), (0, 4)];
        let mut loops = of(&v, &e, Kind::Loop);
        loops.sort();
        assert_eq!(loops, vec![vec![0, 1, 2], vec![0, 3, 4]]);
    }

    #[test]
    fn branches_of_a_y_are_their_arms() {
        // Y opening upward: stem 0-1 (values 0, 1), arms 1-2-3 (2, 4) and 1-4-5 (2.5, 3).
        // Descending: maxima 3 (value 4) and 5 (value 3) meet at node 1; the younger (5)
        // dies there: the up branch is the arm 4, 5 and the meeting node 1.
        let v = [0.0, 1.0, 2.0, 4.0, 2.5, 3.0];
        let e = [(0, 1), (1, 2), (2, 3), (1, 4), (4, 5)];
        assert_eq!(of(&v, &e, Kind::UpBranch), vec![vec![1, 4, 5]]);
        assert!(of(&v, &e, Kind::DownBranch).is_empty());
    }

    #[test]
    fn parallel_edges_give_a_two_node_cycle() {
        assert_eq!(of(&[0.0, 3.0], &[(0, 1), (0, 1)], Kind::Loop), vec![vec![0, 1]]);
    }
}
