//! The bottleneck distance between two persistence diagrams, exact.
//!
//! Definition (Cohen-Steiner, Edelsbrunner, Harer 2007, "Stability of persistence
//! diagrams"; the form used for Mapper by Carrière, Michel, Oudot 2018, §2): the smallest
//! δ for which there is a matching of the points of one diagram with the points of the
//! other, any point also allowed to go to the diagonal, in which every matched pair is
//! within δ in the L-infinity distance and every point sent to the diagonal is within δ
//! of it (a point (b, d) is |d - b| / 2 from the diagonal in L-infinity). Between
//! extended diagrams ([`bottleneck`]) points are matched only with points of the same
//! [`Kind`], so the distance is the largest of the four per-kind distances.
//!
//! Method: the distance is one of the candidate values (a pairwise L-infinity distance or
//! a distance to the diagonal), so a binary search over the sorted candidates, each step
//! a perfect-matching test by Hopcroft-Karp (Hopcroft, Karp 1973), finds it exactly. The
//! diagonal is represented by one copy of each point's projection, and copies are joined
//! only when their points are (which loses no matching: see [`Matching::new`]), so the
//! bipartite graph holds only pairs within δ. Candidates above the trivial bound (every
//! point to the diagonal) are never stored. Suited to diagrams of up to a few thousand
//! points per kind; Mapper graphs give far fewer.
//!
//! Not here: which points are significant ([`super::confidence`]).

use super::persistence::{Diagram, Kind};

/// Bottleneck distance between two extended diagrams, matching kind with kind.
pub fn bottleneck(a: &Diagram, b: &Diagram) -> f64 {
    Kind::ALL.iter().map(|&k| bottleneck_points(&a.points(k), &b.points(k))).fold(0.0, f64::max)
}

/// Bottleneck distance between two diagrams given as (birth, death) points; points may
/// lie on either side of the diagonal. Values must be finite.
pub fn bottleneck_points(a: &[(f64, f64)], b: &[(f64, f64)]) -> f64 {
    assert!(a.iter().chain(b).all(|p| p.0.is_finite() && p.1.is_finite()), "bottleneck distance needs finite points");
    let half = |p: &(f64, f64)| (p.1 - p.0).abs() / 2.0;
    // Everything to the diagonal is always a matching.
    let trivial = a.iter().chain(b).map(half).fold(0.0, f64::max);
    if trivial == 0.0 {
        return 0.0;
    }
    let m = Matching::new(a, b);
    let mut cand: Vec<f64> = a.iter().chain(b).map(half).collect();
    for p in a {
        m.for_each_near(p, trivial, |q| cand.push(linf(p, q)));
    }
    cand.push(0.0);
    cand.sort_by(f64::total_cmp);
    cand.dedup();
    // Smallest feasible candidate; the largest (the trivial bound) is feasible.
    let (mut lo, mut hi) = (0usize, cand.iter().rposition(|&c| c <= trivial).expect("trivial is a candidate"));
    while lo < hi {
        let mid = (lo + hi) / 2;
        if m.perfect(cand[mid]) {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    cand[lo]
}

fn linf(p: &(f64, f64), q: &(f64, f64)) -> f64 {
    (p.0 - q.0).abs().max((p.1 - q.1).abs())
}

/// The bipartite graph of a matching test. Left: the points of A, then one diagonal copy
/// per point of B. Right: the points of B, then one diagonal copy per point of A.
/// Edges within δ: A_i–B_j and their copies D(B_j)–D(A_i) when |A_i - B_j| ≤ δ;
/// A_i–D(A_i) and D(B_j)–B_j when the point is within δ of the diagonal. A perfect
/// matching of this graph exists exactly when one exists with every diagonal copy joined
/// to every other (the usual construction): given the latter, the A–B pairs it uses have
/// their copies joined here, and the remaining copies pair as before.
struct Matching {
    /// Points of B sorted by birth, with their original index.
    b_sorted: Vec<((f64, f64), usize)>,
    a_sorted: Vec<((f64, f64), usize)>,
    a: Vec<(f64, f64)>,
    b: Vec<(f64, f64)>,
}

impl Matching {
    fn new(a: &[(f64, f64)], b: &[(f64, f64)]) -> Matching {
        let sort = |v: &[(f64, f64)]| {
            let mut s: Vec<((f64, f64), usize)> = v.iter().copied().zip(0..).collect();
            s.sort_by(|x, y| x.0 .0.total_cmp(&y.0 .0));
            s
        };
        Matching { b_sorted: sort(b), a_sorted: sort(a), a: a.to_vec(), b: b.to_vec() }
    }

    /// Calls `f` with every point of B within δ of `p` (L-infinity).
    fn for_each_near(&self, p: &(f64, f64), delta: f64, mut f: impl FnMut(&(f64, f64))) {
        near(&self.b_sorted, p, delta, |q, _| f(q));
    }

    fn adjacency(&self, delta: f64) -> (Vec<usize>, Vec<u32>) {
        let (n, m) = (self.a.len(), self.b.len());
        let half = |p: &(f64, f64)| (p.1 - p.0).abs() / 2.0;
        let mut start = Vec::with_capacity(n + m + 1);
        let mut to = Vec::new();
        start.push(0);
        for (i, p) in self.a.iter().enumerate() {
            near(&self.b_sorted, p, delta, |_, j| to.push(j as u32));
            if half(p) <= delta {
                to.push((m + i) as u32);
            }
            start.push(to.len());
        }
        for (j, q) in self.b.iter().enumerate() {
            if half(q) <= delta {
                to.push(j as u32);
            }
            near(&self.a_sorted, q, delta, |_, i| to.push((m + i) as u32));
            start.push(to.len());
        }
        (start, to)
    }

    /// Is there a perfect matching at threshold δ?
    fn perfect(&self, delta: f64) -> bool {
        let (start, to) = self.adjacency(delta);
        let size = self.a.len() + self.b.len();
        hopcroft_karp(size, size, &start, &to) == size
    }
}

/// Points of `sorted` (by birth) within δ of `p` in L-infinity, with their indices.
fn near(sorted: &[((f64, f64), usize)], p: &(f64, f64), delta: f64, mut f: impl FnMut(&(f64, f64), usize)) {
    let from = sorted.partition_point(|(q, _)| q.0 < p.0 - delta);
    for (q, j) in &sorted[from..] {
        if q.0 > p.0 + delta {
            break;
        }
        if (q.1 - p.1).abs() <= delta {
            f(q, *j);
        }
    }
}

/// Size of a maximum matching of a bipartite graph (left vertices `0..nl`, adjacency in
/// CSR form `start`/`to` into right vertices `0..nr`), by Hopcroft and Karp (1973).
pub fn hopcroft_karp(nl: usize, nr: usize, start: &[usize], to: &[u32]) -> usize {
    const FREE: u32 = u32::MAX;
    let mut left_match = vec![FREE; nl];
    let mut right_match = vec![FREE; nr];
    let mut dist = vec![u32::MAX; nl];
    let mut queue = Vec::with_capacity(nl);
    let mut matched = 0;
    // Greedy start.
    for l in 0..nl {
        for &r in &to[start[l]..start[l + 1]] {
            if right_match[r as usize] == FREE {
                right_match[r as usize] = l as u32;
                left_match[l] = r;
                matched += 1;
                break;
            }
        }
    }
    let mut next = vec![0usize; nl];
    let mut stack: Vec<usize> = Vec::new();
    loop {
        // Breadth-first layers from the free left vertices.
        queue.clear();
        for l in 0..nl {
            if left_match[l] == FREE {
                dist[l] = 0;
                queue.push(l);
            } else {
                dist[l] = u32::MAX;
            }
        }
        let mut found = false;
        let mut head = 0;
        while head < queue.len() {
            let l = queue[head];
            head += 1;
            for &r in &to[start[l]..start[l + 1]] {
                let l2 = right_match[r as usize];
                if l2 == FREE {
                    found = true;
                } else if dist[l2 as usize] == u32::MAX {
                    dist[l2 as usize] = dist[l] + 1;
                    queue.push(l2 as usize);
                }
            }
        }
        if !found {
            return matched;
        }
        // Depth-first augmenting paths along the layers (iterative).
        next.iter_mut().enumerate().for_each(|(l, x)| *x = start[l]);
        for root in 0..nl {
            if left_match[root] != FREE {
                continue;
            }
            stack.clear();
            stack.push(root);
            let mut augmented = false;
            while let Some(&l) = stack.last() {
                if next[l] == start[l + 1] {
                    dist[l] = u32::MAX;
                    stack.pop();
                    continue;
                }
                let r = to[next[l]] as usize;
                next[l] += 1;
                let l2 = right_match[r];
                if l2 == FREE {
                    // Flip the path held on the stack, ending at r.
                    let mut r = r as u32;
                    while let Some(l) = stack.pop() {
                        let prev = left_match[l];
                        left_match[l] = r;
                        right_match[r as usize] = l as u32;
                        r = prev;
                    }
                    augmented = true;
                    break;
                } else if dist[l2 as usize] == dist[l] + 1 {
                    stack.push(l2 as usize);
                }
            }
            if augmented {
                matched += 1;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matching_size_of_a_small_graph() {
        // Left 0 - {0, 1}, left 1 - {0}, left 2 - {1}: at most 2 (right has two vertices).
        let start = [0, 2, 3, 4];
        let to = [0, 1, 0, 1];
        assert_eq!(hopcroft_karp(3, 2, &start, &to), 2);
        // A path needing augmentation: greedy takes 0-0, then 1 must reroute 0 to 1.
        let start = [0, 2, 3];
        let to = [0, 1, 0];
        assert_eq!(hopcroft_karp(2, 2, &start, &to), 2);
    }

    #[test]
    fn empty_and_diagonal_only() {
        assert_eq!(bottleneck_points(&[], &[]), 0.0);
        assert_eq!(bottleneck_points(&[(1.0, 1.0)], &[]), 0.0);
        assert_eq!(bottleneck_points(&[(0.0, 4.0)], &[]), 2.0);
    }
}
