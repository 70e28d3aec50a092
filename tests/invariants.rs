//! Invariants of the Mapper construction that hold by definition (Singh, Mémoli,
//! Carlsson 2007), checked on seeded random data:
//! - every row of a cover element lands in a node of that element or is noise there;
//! - an edge exists exactly when two nodes share at least `minShared` rows;
//! - the graph does not depend on the order of the rows (up to relabelling);
//! - for rotation-invariant filters, rotating and translating the points leaves the
//!   graph unchanged (distances are unchanged; a fact of the trade);
//! - the same for the balanced cover and the 2-D product cover: each node lies inside its
//!   element, the nodes of an element are exactly its clusters (all its rows when no row
//!   can be noise), and edges are exactly where rows are shared.

use std::collections::BTreeSet;

use nervure::rng::SplitMix64;
use nervure::settings::*;
use nervure::table::{Column, Table};
use nervure::{build, Build};

fn blobs(n: usize, d: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut r = SplitMix64::new(seed);
    let centres: Vec<Vec<f64>> = (0..3).map(|_| (0..d).map(|_| r.normal() * 4.0).collect()).collect();
    (0..n).map(|i| centres[i % 3].iter().map(|c| c + r.normal()).collect()).collect()
}

fn table_of(rows: &[Vec<f64>]) -> Table {
    let d = rows[0].len();
    let cols = (0..d).map(|j| Column::number(format!("x{j}"), rows.iter().map(|r| r[j]).collect())).collect();
    Table::from_columns("t", cols).unwrap()
}

fn settings(d: usize, lens: Lens, clustering: Clustering) -> Settings {
    Settings {
        version: SETTINGS_VERSION,
        columns: (0..d).map(|j| format!("x{j}")).collect(),
        scaling: Scaling::None,
        missing: Missing::default(),
        lens,
        cover: CoverSettings::uniform(8, 0.4),
        clustering,
        edges: EdgeRule { min_shared: 1 },
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    }
}

/// The graph as sets of original row ids: nodes and edges, independent of labels.
fn canonical(b: &Build, original_row: &dyn Fn(u32) -> u32) -> (BTreeSet<Vec<u32>>, BTreeSet<(Vec<u32>, Vec<u32>)>) {
    let sets: Vec<Vec<u32>> = b
        .nerve
        .nodes
        .iter()
        .map(|n| {
            let mut v: Vec<u32> = n.members.iter().map(|&r| original_row(r)).collect();
            v.sort_unstable();
            v
        })
        .collect();
    let edges = b
        .nerve
        .edges
        .iter()
        .map(|e| {
            let (a, c) = (sets[e.a as usize].clone(), sets[e.b as usize].clone());
            if a < c { (a, c) } else { (c, a) }
        })
        .collect();
    (sets.into_iter().collect(), edges)
}

#[test]
fn rows_land_in_a_node_or_are_noise_and_edges_match_shared_rows() {
    let rows = blobs(600, 3, 3);
    let t = table_of(&rows);
    for clustering in [Clustering::Dbscan { eps: 0.8, min_points: 4 }, Clustering::SingleLinkage { gap_bins: 10 }] {
        for min_shared in [1, 3] {
            let mut s = settings(3, Lens::Principal { component: 1 }, clustering.clone());
            s.edges.min_shared = min_shared;
            let b = build(&t, &s).unwrap();
            let in_nodes: BTreeSet<u32> = b.nerve.nodes.iter().flat_map(|n| n.members.iter().copied()).collect();
            assert_eq!(in_nodes.len() + b.summary.noise_rows, b.summary.rows, "{clustering:?}");
            // Nodes of one element are disjoint.
            for (i, a) in b.nerve.nodes.iter().enumerate() {
                for (j, c) in b.nerve.nodes.iter().enumerate().skip(i + 1) {
                    let shared = a.members.iter().filter(|r| c.members.binary_search(r).is_ok()).count();
                    if a.element == c.element {
                        assert_eq!(shared, 0);
                    }
                    let edge = b.nerve.edges.iter().find(|e| (e.a as usize, e.b as usize) == (i, j));
                    assert_eq!(edge.is_some(), shared >= min_shared, "nodes {i} {j} share {shared}");
                    if let Some(e) = edge {
                        assert_eq!(e.shared as usize, shared);
                    }
                }
            }
        }
    }
}

#[test]
fn graph_does_not_depend_on_row_order() {
    let rows = blobs(500, 3, 8);
    let mut perm: Vec<usize> = (0..rows.len()).collect();
    let mut r = SplitMix64::new(99);
    for i in (1..perm.len()).rev() {
        perm.swap(i, r.below(i + 1));
    }
    let shuffled: Vec<Vec<f64>> = perm.iter().map(|&i| rows[i].clone()).collect();
    // Single linkage and DBSCAN with min_points = 1 (every point a core point, so no
    // order-dependent border rows) are both independent of order by definition.
    for clustering in [Clustering::SingleLinkage { gap_bins: 10 }, Clustering::Dbscan { eps: 0.7, min_points: 1 }] {
        let s = settings(3, Lens::Column { column: "x0".into() }, clustering);
        let a = build(&table_of(&rows), &s).unwrap();
        let b = build(&table_of(&shuffled), &s).unwrap();
        assert_eq!(canonical(&a, &|r| r), canonical(&b, &|r| perm[r as usize] as u32));
        assert!(a.summary.nodes > 3);
    }
}

#[test]
fn graph_is_unchanged_by_rotation_and_translation_for_eccentricity() {
    let d = 4;
    let rows = blobs(400, d, 12);
    // A random rotation: Gram-Schmidt on a seeded Gaussian matrix.
    let mut r = SplitMix64::new(5);
    let mut q: Vec<Vec<f64>> = Vec::new();
    while q.len() < d {
        let mut v: Vec<f64> = (0..d).map(|_| r.normal()).collect();
        for u in &q {
            let dot: f64 = v.iter().zip(u).map(|(a, b)| a * b).sum();
            v.iter_mut().zip(u).for_each(|(a, b)| *a -= dot * b);
        }
        let norm = v.iter().map(|a| a * a).sum::<f64>().sqrt();
        q.push(v.into_iter().map(|a| a / norm).collect());
    }
    let moved: Vec<Vec<f64>> = rows
        .iter()
        .map(|p| (0..d).map(|i| q[i].iter().zip(p).map(|(a, b)| a * b).sum::<f64>() + 10.0 * i as f64 - 3.0).collect())
        .collect();
    for norm in [Spread::Rms, Spread::Mean, Spread::Max] {
        let s = settings(d, Lens::Eccentricity { norm }, Clustering::SingleLinkage { gap_bins: 10 });
        let a = build(&table_of(&rows), &s).unwrap();
        let b = build(&table_of(&moved), &s).unwrap();
        assert_eq!(canonical(&a, &|r| r), canonical(&b, &|r| r), "{norm:?}");
    }
    // The neighbour filters read distances only, so they are rotation invariant too.
    for lens in [Lens::DistanceToMeasure { k: 10 }, Lens::NeighbourDistance { k: 6 }, Lens::LInfinityCentrality] {
        let mut s = settings(d, lens.clone(), Clustering::SingleLinkage { gap_bins: 10 });
        s.cover.kind = CoverKind::Balanced;
        let a = build(&table_of(&rows), &s).unwrap();
        let b = build(&table_of(&moved), &s).unwrap();
        assert_eq!(canonical(&a, &|r| r), canonical(&b, &|r| r), "{lens:?}");
        assert!(a.summary.nodes >= 8, "{lens:?}");
    }
}

/// The nodes of every element, checked against a cover recomputed here from the lens
/// columns (column lenses, so the lens values are the raw columns): nodes of element e are
/// disjoint subsets of e's rows, and with `no_noise` (single linkage, or DBSCAN with
/// minPoints 1: every point is a core point) their union is all of e's rows.
fn check_elements(b: &Build, t: &Table, no_noise: bool) {
    let s = &b.settings;
    let col = |l: &Lens| match l {
        Lens::Column { column } => t.numbers(column, "lens").unwrap().to_vec(),
        _ => panic!("column lenses only"),
    };
    let v1 = col(&s.lens);
    let v2 = s.lens2.as_ref().map(col);
    let c2 = s.cover2.clone().unwrap_or(s.cover.clone());
    let cov = nervure::cover::build(&v1, &s.cover, v2.as_deref().map(|v| (v, &c2)));
    assert_eq!(b.intervals, cov.intervals);
    let mut by_element: Vec<Vec<u32>> = vec![Vec::new(); cov.elements.len()];
    for n in &b.nerve.nodes {
        assert!(n.element < cov.elements.len());
        for &r in &n.members {
            assert!(cov.elements[n.element].binary_search(&r).is_ok(), "row {r} outside element {}", n.element);
        }
        by_element[n.element].extend_from_slice(&n.members);
    }
    for (e, mut got) in by_element.into_iter().enumerate() {
        got.sort_unstable();
        let before = got.len();
        got.dedup();
        assert_eq!(got.len(), before, "nodes of element {e} overlap");
        if no_noise {
            assert_eq!(got, cov.elements[e], "element {e}: every row lands in a node");
        }
    }
    // Edges exactly where rows are shared (minShared as set).
    for (i, a) in b.nerve.nodes.iter().enumerate() {
        for (j, c) in b.nerve.nodes.iter().enumerate().skip(i + 1) {
            let shared = a.members.iter().filter(|r| c.members.binary_search(r).is_ok()).count();
            let edge = b.nerve.edges.iter().find(|e| (e.a as usize, e.b as usize) == (i, j));
            assert_eq!(edge.map(|e| e.shared as usize), (shared >= s.edges.min_shared).then_some(shared), "nodes {i} {j}");
        }
    }
    let in_nodes: BTreeSet<u32> = b.nerve.nodes.iter().flat_map(|n| n.members.iter().copied()).collect();
    assert_eq!(in_nodes.len() + b.summary.noise_rows, b.summary.rows);
}

#[test]
fn balanced_and_product_covers_keep_the_invariants() {
    let rows = blobs(600, 3, 21);
    let t = table_of(&rows);
    let balanced = CoverSettings { intervals: 7, overlap: 0.35, kind: CoverKind::Balanced };
    for (clustering, no_noise) in [
        (Clustering::SingleLinkage { gap_bins: 10 }, true),
        (Clustering::Dbscan { eps: 0.9, min_points: 1 }, true),
        (Clustering::Dbscan { eps: 0.8, min_points: 5 }, false),
    ] {
        for min_shared in [1, 2] {
            // Balanced 1-D.
            let mut s = settings(3, Lens::Column { column: "x0".into() }, clustering.clone());
            s.cover = balanced.clone();
            s.edges.min_shared = min_shared;
            let b = build(&t, &s).unwrap();
            assert!(b.summary.nodes >= 7);
            check_elements(&b, &t, no_noise);
            // Product of a uniform cover of x0 and a balanced cover of x1.
            let mut s2 = settings(3, Lens::Column { column: "x0".into() }, clustering.clone());
            s2.cover = CoverSettings::uniform(5, 0.3);
            s2.lens2 = Some(Lens::Column { column: "x1".into() });
            s2.cover2 = Some(CoverSettings { intervals: 4, overlap: 0.25, kind: CoverKind::Balanced });
            s2.edges.min_shared = min_shared;
            let b2 = build(&t, &s2).unwrap();
            assert_eq!(b2.second.as_ref().unwrap().intervals.len(), 4);
            assert!(b2.nerve.nodes.iter().any(|n| n.element >= 5), "cells beyond the first row are used");
            check_elements(&b2, &t, no_noise);
        }
    }
}

#[test]
fn balanced_and_product_covers_do_not_depend_on_row_order() {
    let rows = blobs(400, 3, 30);
    let mut perm: Vec<usize> = (0..rows.len()).collect();
    let mut r = SplitMix64::new(7);
    for i in (1..perm.len()).rev() {
        perm.swap(i, r.below(i + 1));
    }
    let shuffled: Vec<Vec<f64>> = perm.iter().map(|&i| rows[i].clone()).collect();
    let mut s = settings(3, Lens::Column { column: "x0".into() }, Clustering::SingleLinkage { gap_bins: 10 });
    s.cover = CoverSettings { intervals: 6, overlap: 0.3, kind: CoverKind::Balanced };
    s.lens2 = Some(Lens::Column { column: "x2".into() });
    let a = build(&table_of(&rows), &s).unwrap();
    let b = build(&table_of(&shuffled), &s).unwrap();
    assert_eq!(canonical(&a, &|r| r), canonical(&b, &|r| perm[r as usize] as u32));
    assert!(a.summary.nodes > 6);
}
