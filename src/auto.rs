//! Automatic first settings: concrete values chosen from the table so that a dropped
//! file gives a readable first graph with no further click. They are a starting point
//! for exploration, written out in full so they can be read, changed and reproduced; a
//! Mapper graph always depends on its settings, and this one is a first hypothesis about
//! the data's shape, not a finding.
//!
//! What the rule aims at (and is measured against, by `bash tests/bench/auto-panel.sh` on
//! real open tables and on shapes of known topology): a graph that is never empty, is not
//! shattered into dust, shows the main shape (a circle's loop, the loops of a chain of
//! rings), and says how it was chosen.
//!
//! # The rule
//!
//! **Fill values.** Any of -99999, -9999, -999, 9999, 99999 that stands at least 3 times in
//! a numeric column and lies far outside that column's other values (beyond the 1st to
//! 99th percentile range stretched five times each way) is declared a fill value (such
//! sentinels are common practice in field data).
//!
//! **Columns.** Numeric columns, with these left out, each with its reason
//! ([`AutoChoice::left_out`], shown in the page's column list):
//! - identifiers and constants, by [`crate::table::marks::mark`] (a flight number is a whole
//!   number, but the distance between flights 1545 and 1546 means nothing), and columns
//!   constant once the fill values are taken out;
//! - columns with values in fewer than half of the rows (each chosen column costs the rows
//!   it misses);
//! - near-duplicates: a column whose Pearson correlation with a column already chosen is
//!   at least [`NEAR_DUPLICATE`] in absolute value, on a seeded sample of up to
//!   [`SAMPLE_ROWS`] rows (a scheduled hour and a scheduled clock time, or a distance and a
//!   flight time, count one direction twice and tilt the distances towards it; common
//!   practice in feature selection, threshold ours).
//!
//! At most [`AUTO_MAX_COLUMNS`] columns are chosen: distances in more dimensions than that
//! concentrate (every row is about as far from every other) and the clustering's spatial
//! index loses its edge. When more candidates remain, the choice follows the data's main
//! directions of variation instead of the file order: on a seeded sample of up to
//! [`SELECTION_ROWS`] rows, the candidates are z-scored (a missing value counts as the
//! column's mean), the leading principal components of that sample are found (Pearson
//! 1901, from the rows' Gram matrix), and the columns are taken in turn, one for each of
//! the first [`SELECTION_COMPONENTS`] components and round again, each time the column
//! most correlated (in absolute value) with that component that is neither chosen nor a
//! near-duplicate of a chosen one. On a gene-expression table this picks genes that carry
//! the main patterns across samples rather than the first genes of the file. The others
//! are listed as "not chosen".
//!
//! **Scaling**: z-score (columns in different units weigh alike; common practice).
//! **Filter**: the first principal component when two or more columns are chosen, else
//! the one column.
//!
//! **Clustering scale.** DBSCAN (Ester et al. 1996) with [`MIN_POINTS`] minimum points
//! (the row itself counted) and eps read off the data's neighbour distances, over a seeded
//! sample of up to 500 rows queried against every row:
//!
//! eps = max( 2^(1/4) · q98(d_15), 2^(3/4) · median(d_+) ),
//!
//! where d_15 is a row's distance to its 15th nearest row ([`SCALE_NEIGHBOURS`], itself
//! first; the 5th, tried first, sat at the percolation edge of noisy curves and left them
//! in pieces) and d_+ its
//! distance to the nearest row not at distance 0. Choosing eps from the k-distances
//! follows Ester et al. 1996, §4.2; the 98th percentile makes at least 49 rows in 50 core
//! points of the whole table (a row with 15 rows within eps has the 5 DBSCAN needs), which a first graph needs because a cover element's slab
//! loses neighbours near its edges. The factors have irrational squares, so on a lattice
//! (evenly spaced or rounded values, whose distances are s·sqrt(m) for whole m) eps
//! never equals a distance that occurs: the old rule took eps on the spacing itself, and
//! a rounding of it below the spacing left every row of an evenly spaced circle in no
//! cluster. The floor on d_+ keeps heavily rounded values (a temperature to 0.1 degree,
//! where most 15th neighbours are at distance 0) from a scale of nothing. eps is written
//! unrounded for the same reason.
//!
//! **Small tables.** On a table of at most [`SCALE_SAMPLE`] rows (where the sample is the
//! whole table and a graph costs milliseconds) eps is raised, when needed, first to 2^(1/4)
//! times the spanning tree's edge at which 4 rows in 5 are joined in one piece (Kruskal's
//! order), then, at the first miss, the cover is made balanced (a gap in the filter's values
//! can leave two consecutive uniform intervals with no row in common, which no eps
//! mends), then eps grows by factors of 1.5, up to [`JOIN_STEPS`] builds in all, until the first graph's
//! largest component holds 80 % of the rows in nodes with at most 10 components: a first
//! graph in one main piece rather than a few islands of a few dozen rows. The groups this
//! joins (the penguins' species) show in the colouring, and a smaller eps parts them again;
//! the rule states what it aims at and stops there.
//!
//! **Dust.** A cluster with fewer rows than [`MIN_CLUSTER_SHARE`] of its cover element is
//! not a node (`minClusterShare`): on a large table DBSCAN finds many small dense groups
//! at the edge of each slab, and each would be a node and often a component of its own.
//! Their rows are counted in no cluster. Our threshold, measured on the panel.
//!
//! **Cover.** Overlap g = [`OVERLAP`], inside the range (1/3, 1/2) that Carrière, Michel,
//! Oudot 2018 give for the gain (see [`crate::shape::suggest`]). The interval length
//! follows their resolution rule with our eps for their δ: r = J / g, where J is how far
//! the filter moves between rows within eps of each other (the 98th percentile, over the
//! sample, of each row's largest filter difference to a row within eps; they take the
//! maximum over all pairs, which one far row decides), so that rows within eps of each
//! other share an interval. The count is the smallest whose length is at most r,
//! clamped to [min([`MIN_INTERVALS`], n / [`ROWS_PER_LEAST_INTERVAL`]) but at least 5,
//! min([`MAX_INTERVALS`], n / [`ROWS_PER_INTERVAL`])] ([`interval_bounds`]): the row count
//! bounds the count from above (an interval of a few rows is all noise), and on wide
//! tables, where eps is a large part of the filter's range, the lower bound keeps the
//! graph from being one blob or a short path. When the filter's values crowd into a small part of their
//! range (the 5th to 95th percentile span less than a third of it, a long tail of a few
//! extreme rows), the cover is balanced (quantile edges, equal rows per interval) so that
//! the bulk of the rows is not in one or two intervals.

use serde::Serialize;

use crate::cluster::kdtree::{KdTree, Neighbour};
use crate::error::{Error, Result};
use crate::points::{build_points, is_missing};
use crate::rng::SplitMix64;
use crate::settings::*;
use crate::table::marks::{mark, Mark};
use crate::table::Table;

pub const AUTO_MAX_COLUMNS: usize = 12;
/// |Pearson r| at or above which a column counts as a near-duplicate of one chosen.
pub const NEAR_DUPLICATE: f64 = 0.98;
/// Rows sampled for the correlations between candidate columns.
pub const SAMPLE_ROWS: usize = 2000;
/// Rows sampled for the choice among many columns (principal components of the sample).
pub const SELECTION_ROWS: usize = 256;
/// Principal components whose most correlated columns are taken in turn.
pub const SELECTION_COMPONENTS: usize = 6;
pub const MIN_POINTS: usize = 5;
/// The neighbour whose distance sets eps (the row itself counted first).
pub const SCALE_NEIGHBOURS: usize = 15;
/// Smallest share of its cover element a cluster needs to be a node.
pub const MIN_CLUSTER_SHARE: f64 = 0.02;
pub const OVERLAP: f64 = 0.4;
pub const MIN_INTERVALS: usize = 10;
pub const MAX_INTERVALS: usize = 40;
pub const ROWS_PER_INTERVAL: usize = 20;
/// Rows per interval below which the lower bound on the count gives way (to 5): on a few
/// hundred rows, ten slabs part groups that are one piece in the whole table (penguins).
pub const ROWS_PER_LEAST_INTERVAL: usize = 60;
/// Rows sampled for the neighbour distances behind eps and the interval length.
pub const SCALE_SAMPLE: usize = 500;
/// Share of the rows in nodes that the first graph's largest component holds on small
/// tables (see the module comment).
pub const MAIN_SHARE: f64 = 0.8;
/// Most components the first graph of a small table may have.
pub const MAX_PIECES: usize = 10;
/// Most times eps is raised on a small table.
pub const JOIN_STEPS: usize = 6;

/// Leaf size of the k-d tree over the whole table that finds the sample's neighbours. A
/// few hundred queries over up to millions of rows: a shallower tree is quicker to build
/// than the deeper one saves in queries (1.5 million rows × 12 columns: build and queries
/// 0.75 s with leaves of 16, 0.57 s with 256, natively). The answer is the same.
const AUTO_LEAF_SIZE: usize = 256;

/// The automatic settings and what the rule left out.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct AutoChoice {
    pub settings: Settings,
    /// Numeric columns not chosen, in file order, each with its reason.
    pub left_out: Vec<LeftOut>,
    /// The measured scale: q98 of the 15th-neighbour distance and the median distance to
    /// the nearest distinct row, before the factors (for the page's explanation).
    pub kth_distance: f64,
    pub nearest_distinct: f64,
}

/// A numeric column the automatic rule did not choose.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct LeftOut {
    pub column: String,
    pub reason: Reason,
    /// One phrase for the page, e.g. "whole numbers, 3 844 of 336 776 distinct" or
    /// "near-duplicate of 'distance' (r = 0.99)".
    pub why: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Reason {
    Identifier,
    Constant,
    Gaps,
    NearDuplicate,
    NotChosen,
}

/// The automatic settings of `table`; see the module comment.
pub fn auto_settings(table: &Table) -> Result<Settings> {
    auto_choice(table).map(|c| c.settings)
}

/// [`auto_settings`] with the columns left out and why.
pub fn auto_choice(table: &Table) -> Result<AutoChoice> {
    if table.n_rows < 2 {
        return Err(Error::Data(format!(
            "{} has a single data row; a graph of the data's shape needs at least two rows",
            table.name
        )));
    }
    let fills = sentinel_fill_values(table);
    let (columns, left_out) = choose_columns(table, &fills, 1);
    if columns.is_empty() {
        return Err(Error::Data(format!(
            "{} has no numeric column that varies, is not an identifier and has values in at least half of its rows \
             (constant columns, such as those of a file whose rows are all identical, are left out); check the delimiter and the missing-value markers",
            table.name
        )));
    }
    let lens = if columns.len() >= 2 { Lens::Principal { component: 1 } } else { Lens::Column { column: columns[0].clone() } };
    let mut s = Settings {
        version: SETTINGS_VERSION,
        columns,
        scaling: Scaling::Zscore,
        missing: Missing { fill_values: fills, ..Default::default() },
        lens,
        cover: CoverSettings::uniform(MIN_INTERVALS, OVERLAP),
        clustering: Clustering::Dbscan { eps: 1.0, min_points: MIN_POINTS },
        edges: EdgeRule::default(),
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: MIN_CLUSTER_SHARE,
        keep_rows: None,
    };
    let pts = build_points(table, &s)?;
    let lens = crate::filter::compute_lens(table, &pts, &s)?;
    let n = pts.rows.len();
    let dim = pts.data.ncols();
    let joining = if n <= SCALE_SAMPLE { joining_scale(pts.data.as_slice().expect("contiguous"), dim, MAIN_SHARE) } else { 0.0 };
    let mut scale = scale_of(pts.data.into_raw_vec_and_offset().0, dim, &lens, SCALE_NEIGHBOURS, s.seed);
    if KTH_FACTOR * joining > scale.eps {
        scale.eps = KTH_FACTOR * joining;
        scale.jump = scale.jump.max(joining);
    }
    s.clustering = Clustering::Dbscan { eps: scale.eps, min_points: MIN_POINTS };
    let (lo, hi) = lens.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let (least, most) = interval_bounds(n);
    let wanted = crate::shape::suggest::interval_count(hi - lo, scale.jump / OVERLAP, OVERLAP);
    s.cover.intervals = wanted.clamp(least, most);
    let (q05, q95) = (crate::points::quantile(&lens, 0.05), crate::points::quantile(&lens, 0.95));
    if hi > lo && (q95 - q05) < (hi - lo) / 3.0 {
        s.cover.kind = CoverKind::Balanced;
    }
    if n <= SCALE_SAMPLE {
        one_main_piece(table, &mut s)?;
    }
    Ok(AutoChoice { settings: s, left_out, kth_distance: scale.kth, nearest_distinct: scale.distinct })
}

/// The fewest and most intervals for `n` rows: [min(MIN_INTERVALS, n / 60) but at least
/// 5, min(MAX_INTERVALS, n / ROWS_PER_INTERVAL) but at least the fewest].
pub fn interval_bounds(n: usize) -> (usize, usize) {
    let least = MIN_INTERVALS.min(n / ROWS_PER_LEAST_INTERVAL).max(5);
    (least, MAX_INTERVALS.min(n / ROWS_PER_INTERVAL).max(least))
}

/// The chosen columns (file order) and the numeric columns left out (file order).
fn choose_columns(table: &Table, fills: &[f64], seed: u64) -> (Vec<String>, Vec<LeftOut>) {
    let mut left_out = Vec::new();
    let mut candidates: Vec<usize> = Vec::new();
    for (j, c) in table.columns.iter().enumerate() {
        let Some(v) = c.as_numbers().filter(|_| !c.is_time()) else { continue };
        let out = |reason, why: String| LeftOut { column: c.name.clone(), reason, why };
        match mark(c) {
            Some(Mark::Identifier { why }) => {
                left_out.push(out(Reason::Identifier, format!("identifier: {why}")));
                continue;
            }
            Some(Mark::Constant { value }) => {
                left_out.push(out(Reason::Constant, format!("constant ({value})")));
                continue;
            }
            None => {}
        }
        let mut present = v.iter().copied().filter(|x| !is_missing(*x, fills));
        let Some(first) = present.next() else {
            left_out.push(out(Reason::Gaps, "no value in any row".into()));
            continue;
        };
        let count = 1 + present.clone().count();
        if present.all(|x| x == first) {
            left_out.push(out(Reason::Constant, "constant once the fill values are taken out".into()));
            continue;
        }
        if count * 2 < v.len() {
            left_out.push(out(Reason::Gaps, format!("values in only {count} of {} rows", v.len())));
            continue;
        }
        candidates.push(j);
    }
    let n = table.n_rows;
    let sample = SplitMix64::new(seed).sample_indices(n, SAMPLE_ROWS);
    let values = |j: usize| -> Vec<f64> {
        let v = table.columns[j].as_numbers().expect("numeric candidate");
        sample.iter().map(|&r| if is_missing(v[r], fills) { f64::NAN } else { v[r] }).collect()
    };
    let mut chosen: Vec<(usize, Vec<f64>)> = Vec::new();
    let mut not_chosen: Vec<(usize, LeftOut)> = Vec::new();
    let name = |j: usize| table.columns[j].name.clone();
    let duplicate_of = |x: &[f64], chosen: &[(usize, Vec<f64>)]| -> Option<(usize, f64)> {
        chosen.iter().map(|(k, y)| (*k, pearson(x, y))).find(|(_, r)| r.abs() >= NEAR_DUPLICATE)
    };
    if candidates.len() <= AUTO_MAX_COLUMNS {
        for &j in &candidates {
            let x = values(j);
            match duplicate_of(&x, &chosen) {
                Some((k, r)) => not_chosen.push((j, near_duplicate(name(j), &name(k), r))),
                None => chosen.push((j, x)),
            }
        }
    } else {
        let order = by_main_directions(table, &candidates, fills, seed);
        for j in order {
            if chosen.len() == AUTO_MAX_COLUMNS {
                break;
            }
            let x = values(j);
            if duplicate_of(&x, &chosen).is_none() {
                chosen.push((j, x));
            }
        }
        for &j in &candidates {
            if chosen.iter().any(|(k, _)| *k == j) {
                continue;
            }
            let x = values(j);
            let lo = match duplicate_of(&x, &chosen) {
                Some((k, r)) => near_duplicate(name(j), &name(k), r),
                None => LeftOut {
                    column: name(j),
                    reason: Reason::NotChosen,
                    why: format!(
                        "one of {} candidate columns, of which the {AUTO_MAX_COLUMNS} most tied to the main directions of variation were taken",
                        candidates.len()
                    ),
                },
            };
            not_chosen.push((j, lo));
        }
    }
    chosen.sort_by_key(|(j, _)| *j);
    left_out.extend(not_chosen.into_iter().map(|(_, l)| l));
    let order = |name: &str| table.index_of(name).unwrap_or(usize::MAX);
    left_out.sort_by_key(|l| order(&l.column));
    (chosen.into_iter().map(|(j, _)| name(j)).collect(), left_out)
}

fn near_duplicate(column: String, of: &str, r: f64) -> LeftOut {
    LeftOut { column, reason: Reason::NearDuplicate, why: format!("near-duplicate of '{of}' (r = {r:.3})") }
}

/// Pearson's correlation over the positions where both have a value (0 when either is
/// constant there or fewer than 3 positions remain).
pub fn pearson(x: &[f64], y: &[f64]) -> f64 {
    let pairs = || x.iter().zip(y).filter(|(a, b)| !a.is_nan() && !b.is_nan());
    let m = pairs().count();
    if m < 3 {
        return 0.0;
    }
    let (mx, my) = pairs().fold((0.0, 0.0), |(a, b), (x, y)| (a + x, b + y));
    let (mx, my) = (mx / m as f64, my / m as f64);
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (a, b) in pairs() {
        sxy += (a - mx) * (b - my);
        sxx += (a - mx) * (a - mx);
        syy += (b - my) * (b - my);
    }
    if sxx > 0.0 && syy > 0.0 {
        sxy / (sxx * syy).sqrt()
    } else {
        0.0
    }
}

/// The candidates in the order the many-columns rule takes them (see the module
/// comment): for components 1..m in turn, the next most correlated column.
fn by_main_directions(table: &Table, candidates: &[usize], fills: &[f64], seed: u64) -> Vec<usize> {
    let rows = SplitMix64::new(seed ^ 0x5EED).sample_indices(table.n_rows, SELECTION_ROWS);
    let m = rows.len();
    let c = candidates.len();
    // z[i * c + j]: row i of the sample, candidate j, z-scored (missing -> 0, the mean).
    let mut z = vec![0.0; m * c];
    for (j, &col) in candidates.iter().enumerate() {
        let v = table.columns[col].as_numbers().expect("numeric candidate");
        let vals: Vec<f64> = rows.iter().map(|&r| if is_missing(v[r], fills) { f64::NAN } else { v[r] }).collect();
        let present: Vec<f64> = vals.iter().copied().filter(|x| !x.is_nan()).collect();
        let mean = present.iter().sum::<f64>() / present.len().max(1) as f64;
        let sd = (present.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / present.len().max(1) as f64).sqrt();
        for (i, x) in vals.iter().enumerate() {
            z[i * c + j] = if x.is_nan() || !(sd > 0.0) { 0.0 } else { (x - mean) / sd };
        }
    }
    // The Gram matrix of the sample's rows: its eigenvectors are the principal
    // components' scores (up to scale), at a cost of m² c instead of c² m.
    let mut gram = ndarray::Array2::<f64>::zeros((m, m));
    for a in 0..m {
        for b in a..m {
            let g: f64 = z[a * c..(a + 1) * c].iter().zip(&z[b * c..(b + 1) * c]).map(|(x, y)| x * y).sum();
            gram[[a, b]] = g;
            gram[[b, a]] = g;
        }
    }
    let (vals, vecs) = leading_eigenvectors(&gram, SELECTION_COMPONENTS.min(m), seed);
    let top: Vec<usize> = (0..vals.len()).filter(|&k| vals[k] > 1e-9 * vals[0].max(f64::MIN_POSITIVE)).collect();
    if top.is_empty() {
        return candidates.to_vec();
    }
    // |correlation| of each candidate with each component's scores (both centred).
    let norm = |j: usize| (0..m).map(|i| z[i * c + j] * z[i * c + j]).sum::<f64>().sqrt();
    let norms: Vec<f64> = (0..c).map(norm).collect();
    let mut ranked: Vec<Vec<usize>> = top
        .iter()
        .map(|&k| {
            let u = vecs.column(k);
            let un = u.iter().map(|x| x * x).sum::<f64>().sqrt();
            let mut corr: Vec<(f64, usize)> = (0..c)
                .map(|j| {
                    let dot: f64 = (0..m).map(|i| z[i * c + j] * u[i]).sum();
                    (if norms[j] > 0.0 && un > 0.0 { (dot / (norms[j] * un)).abs() } else { 0.0 }, j)
                })
                .collect();
            corr.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
            corr.into_iter().map(|(_, j)| j).collect()
        })
        .collect();
    let mut order = Vec::with_capacity(c);
    let mut taken = vec![false; c];
    let mut pos = vec![0usize; ranked.len()];
    while order.len() < c {
        let mut moved = false;
        for (k, list) in ranked.iter_mut().enumerate() {
            while pos[k] < list.len() && taken[list[pos[k]]] {
                pos[k] += 1;
            }
            if pos[k] < list.len() {
                let j = list[pos[k]];
                taken[j] = true;
                order.push(candidates[j]);
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    order
}

/// The `k` leading eigenvalues (decreasing) and eigenvectors (columns) of the symmetric
/// positive semi-definite `a`, by orthogonal iteration (Golub, Van Loan, "Matrix
/// Computations", §8.2.4: Q ← orth(A Q), here 200 rounds from a seeded Gaussian start).
/// Only the ranking of columns by these directions is read, so a few digits suffice.
fn leading_eigenvectors(a: &ndarray::Array2<f64>, k: usize, seed: u64) -> (Vec<f64>, ndarray::Array2<f64>) {
    let m = a.nrows();
    let mut r = SplitMix64::new(seed ^ 0xE16E);
    let mut q = ndarray::Array2::from_shape_fn((m, k), |_| r.normal());
    let orth = |q: &mut ndarray::Array2<f64>| {
        for j in 0..q.ncols() {
            for i in 0..j {
                let dot = q.column(i).dot(&q.column(j));
                let ci = q.column(i).to_owned();
                q.column_mut(j).scaled_add(-dot, &ci);
            }
            let norm = q.column(j).dot(&q.column(j)).sqrt();
            if norm > 0.0 {
                q.column_mut(j).mapv_inplace(|x| x / norm);
            }
        }
    };
    orth(&mut q);
    for _ in 0..200 {
        q = a.dot(&q);
        orth(&mut q);
    }
    let vals: Vec<f64> = (0..k).map(|j| q.column(j).dot(&a.dot(&q.column(j)))).collect();
    (vals, q)
}

/// The clustering scale and the filter's movement at that scale (see the module comment).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    pub eps: f64,
    /// q98 of the distance to the k-th nearest row.
    pub kth: f64,
    /// Median distance to the nearest row at a distance above 0 (0 if none was found).
    pub distinct: f64,
    /// q98 over the sample of the largest filter difference to a row within eps.
    pub jump: f64,
}

/// Factors with irrational squares (see the module comment).
const KTH_FACTOR: f64 = 1.189_207_115_002_721; // 2^(1/4)
const DISTINCT_FACTOR: f64 = 1.681_792_830_507_429; // 2^(3/4)

/// [`Scale`] of `points` (row-major, `dim` values a row) with filter values `lens`, over a
/// seeded sample of [`SCALE_SAMPLE`] rows; the tree is built over `points` in place.
pub fn scale_of(points: Vec<f64>, dim: usize, lens: &[f64], k: usize, seed: u64) -> Scale {
    let n = points.len() / dim.max(1);
    if n == 0 {
        return Scale { eps: 1.0, kth: 0.0, distinct: 0.0, jump: 0.0 };
    }
    let chosen = SplitMix64::new(seed).sample_indices(n, SCALE_SAMPLE);
    let queries: Vec<f64> = chosen.iter().flat_map(|&i| points[i * dim..(i + 1) * dim].iter().copied()).collect();
    let mut tree = KdTree::from_rows(points, dim, AUTO_LEAF_SIZE);
    let mut near: Vec<Neighbour> = Vec::with_capacity(k);
    let mut kth = Vec::with_capacity(chosen.len());
    let mut distinct = Vec::with_capacity(chosen.len());
    for q in queries.chunks_exact(dim) {
        tree.nearest(q, k.min(n), &mut near);
        kth.push(near.last().map_or(0.0, |nb| nb.dist));
        // The nearest row at a distance above 0: look further while all found are at 0.
        let mut want = k.min(n);
        loop {
            if let Some(nb) = near.iter().find(|nb| nb.dist > 0.0) {
                distinct.push(nb.dist);
                break;
            }
            if want >= n || want >= 4096 {
                break;
            }
            want = (want * 4).min(n);
            tree.nearest(q, want, &mut near);
        }
    }
    let q98 = crate::points::quantile(&kth, 0.98);
    let med = if distinct.is_empty() { 0.0 } else { crate::points::quantile(&distinct, 0.5) };
    let mut eps = (KTH_FACTOR * q98).max(DISTINCT_FACTOR * med);
    if !(eps > 0.0) || !eps.is_finite() {
        eps = 1.0;
    }
    // The largest filter difference within eps, by the tree's bounded query: the same value
    // as the largest over every row within eps, without visiting each (on the demo data at
    // 1.5 million rows that visit read about 100 000 rows a query, a third of the time from
    // the last byte read to the table shown).
    let ranges = tree.order_leaves_by(lens);
    let jumps: Vec<f64> =
        chosen.iter().zip(queries.chunks_exact(dim)).map(|(&i, q)| tree.largest_gap_within(q, eps, lens[i], &ranges)).collect();
    Scale { eps, kth: q98, distinct: med, jump: crate::points::quantile(&jumps, 0.98) }
}

/// On a small table (a build costs milliseconds): eps raised by factors of 1.5 (at most
/// [`JOIN_STEPS`] times) until the graph's largest component holds [`MAIN_SHARE`] of the
/// rows in nodes and there are at most [`MAX_PIECES`] components. 1.5² is rational and
/// 2^(1/4)² is not, so eps stays off every lattice distance.
///
/// A gap in the filter's values (an empty stretch between two groups) can leave two
/// consecutive intervals with no row in common, and then no eps joins them: at the first
/// miss the cover becomes balanced, whose consecutive intervals always share rows.
fn one_main_piece(table: &Table, s: &mut Settings) -> Result<()> {
    for step in 0..JOIN_STEPS {
        let b = crate::engine::build(table, s)?;
        if b.nerve.largest_share() >= MAIN_SHARE && b.summary.components <= MAX_PIECES {
            break;
        }
        if step == 0 && s.cover.kind == CoverKind::Uniform {
            s.cover.kind = CoverKind::Balanced;
            continue;
        }
        if let Clustering::Dbscan { eps, .. } = &mut s.clustering {
            *eps *= 1.5;
        }
    }
    Ok(())
}

/// The smallest distance t at which the graph joining rows closer than t has a component
/// holding `share` of the rows: the edges of the minimum spanning tree (Prim, O(n² d),
/// for small tables only) taken shortest first, as Kruskal's algorithm takes them.
pub fn joining_scale(points: &[f64], dim: usize, share: f64) -> f64 {
    let n = points.len() / dim.max(1);
    if n < 2 {
        return 0.0;
    }
    let p = |i: usize| &points[i * dim..(i + 1) * dim];
    let d = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum::<f64>().sqrt();
    let mut best = vec![f64::INFINITY; n];
    let mut from = vec![0usize; n];
    let mut done = vec![false; n];
    let mut edges: Vec<(f64, usize, usize)> = Vec::with_capacity(n - 1);
    let mut cur = 0;
    done[0] = true;
    for _ in 1..n {
        for j in 0..n {
            if !done[j] {
                let dj = d(p(cur), p(j));
                if dj < best[j] {
                    best[j] = dj;
                    from[j] = cur;
                }
            }
        }
        let next = (0..n).filter(|&j| !done[j]).min_by(|&a, &b| best[a].total_cmp(&best[b])).expect("rows remain");
        edges.push((best[next], from[next], next));
        done[next] = true;
        cur = next;
    }
    edges.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut parent: Vec<usize> = (0..n).collect();
    let mut size = vec![1usize; n];
    fn root(p: &mut [usize], mut i: usize) -> usize {
        while p[i] != i {
            p[i] = p[p[i]];
            i = p[i];
        }
        i
    }
    let want = (share * n as f64).ceil() as usize;
    for (len, a, b) in edges {
        let (ra, rb) = (root(&mut parent, a), root(&mut parent, b));
        if ra != rb {
            parent[rb] = ra;
            size[ra] += size[rb];
            if size[ra] >= want {
                return len;
            }
        }
    }
    0.0
}

/// Sentinels that the table's numeric columns use as "no value"; see the module comment.
pub fn sentinel_fill_values(table: &Table) -> Vec<f64> {
    const CANDIDATES: [f64; 5] = [-99999.0, -9999.0, -999.0, 9999.0, 99999.0];
    let mut found = Vec::new();
    for col in table.columns.iter().filter_map(|c| c.as_numbers()) {
        for &v in &CANDIDATES {
            if found.contains(&v) {
                continue;
            }
            let hits = col.iter().filter(|&&x| x == v).count();
            if hits < 3 {
                continue;
            }
            let mut rest: Vec<f64> = col.iter().copied().filter(|x| x.is_finite() && !CANDIDATES.contains(x)).collect();
            if rest.len() < 10 {
                continue;
            }
            rest.sort_by(|a, b| a.partial_cmp(b).unwrap());
            let q = |f: f64| rest[((rest.len() - 1) as f64 * f).round() as usize];
            let (lo, hi) = (q(0.01), q(0.99));
            let span = (hi - lo).max(f64::MIN_POSITIVE);
            if v < lo - 5.0 * span || v > hi + 5.0 * span {
                found.push(v);
            }
        }
    }
    found.sort_by(|a, b| a.partial_cmp(b).unwrap());
    found
}

/// The `q` quantile, over a seeded sample of up to `sample` rows, of the distance from a
/// row to its `k`-th nearest row (the row itself counted first, at distance 0).
/// The tree is built over `points` in place (no second copy of a whole table's points).
pub fn knn_distance_quantile(points: Vec<f64>, dim: usize, k: usize, q: f64, sample: usize, seed: u64) -> f64 {
    let n = points.len() / dim.max(1);
    if n == 0 {
        return 1.0;
    }
    let chosen = SplitMix64::new(seed).sample_indices(n, sample);
    let queries: Vec<f64> = chosen.iter().flat_map(|&i| points[i * dim..(i + 1) * dim].iter().copied()).collect();
    let k = k.min(n);
    let tree = KdTree::from_rows(points, dim, AUTO_LEAF_SIZE);
    let mut near = Vec::with_capacity(k);
    let mut kth: Vec<f64> = queries
        .chunks_exact(dim)
        .map(|q| {
            tree.nearest(q, k, &mut near);
            near.last().map_or(0.0, |nb| nb.dist)
        })
        .collect();
    kth.sort_by(|a, b| a.partial_cmp(b).unwrap());
    let pos = ((kth.len() - 1) as f64 * q).round() as usize;
    kth[pos]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    #[test]
    fn picks_varied_numeric_columns_and_a_data_driven_eps() {
        let mut r = SplitMix64::new(1);
        let n = 300;
        let t = Table::from_columns(
            "t",
            vec![
                Column::number("x", (0..n).map(|_| r.normal()).collect()),
                Column::number("flat", vec![3.0; n]),
                Column::number("gappy", (0..n).map(|i| if i % 3 == 0 { r.normal() } else { f64::NAN }).collect()),
                Column::number("y", (0..n).map(|_| r.normal()).collect()),
                Column::number("record", (0..n).map(|i| i as f64).collect()),
                Column::category("site", vec![0; n], vec!["a".into()]),
            ],
        )
        .unwrap();
        let c = auto_choice(&t).unwrap();
        let s = &c.settings;
        assert_eq!(s.columns, vec!["x", "y"]);
        assert_eq!(s.lens, Lens::Principal { component: 1 });
        let reasons: Vec<(&str, Reason)> = c.left_out.iter().map(|l| (l.column.as_str(), l.reason)).collect();
        assert_eq!(reasons, vec![("flat", Reason::Constant), ("gappy", Reason::Gaps), ("record", Reason::Identifier)]);
        assert_eq!(interval_bounds(300), (5, 15));
        assert_eq!(interval_bounds(64), (5, 5));
        assert_eq!(interval_bounds(7000), (10, 40));
        assert!((5..=15).contains(&s.cover.intervals));
        assert!(s.cover.intervals <= 300 / ROWS_PER_INTERVAL);
        match s.clustering {
            Clustering::Dbscan { eps, min_points } => {
                assert_eq!(min_points, 5);
                assert!(eps > 0.05 && eps < 1.5, "eps {eps}");
                assert_eq!(eps, (KTH_FACTOR * c.kth_distance).max(DISTINCT_FACTOR * c.nearest_distinct));
            }
            _ => panic!("expected DBSCAN"),
        }
        assert_eq!(s.min_cluster_share, MIN_CLUSTER_SHARE);
        s.validate().unwrap();
    }

    #[test]
    fn near_duplicates_are_left_out_naming_the_column_kept() {
        let mut r = SplitMix64::new(4);
        let n = 400;
        let a: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        // b is 3a + 1 plus a little noise: r about 0.9994; c is independent.
        let b: Vec<f64> = a.iter().map(|x| 3.0 * x + 1.0 + 0.1 * r.normal()).collect();
        let cc: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let t = Table::from_columns("t", vec![Column::number("a", a), Column::number("b", b), Column::number("c", cc)]).unwrap();
        let choice = auto_choice(&t).unwrap();
        assert_eq!(choice.settings.columns, vec!["a", "c"]);
        assert_eq!(choice.left_out.len(), 1);
        assert_eq!(choice.left_out[0].reason, Reason::NearDuplicate);
        assert!(choice.left_out[0].why.contains("'a'"), "{}", choice.left_out[0].why);
    }

    #[test]
    fn many_columns_are_chosen_by_the_main_directions_not_the_file_order() {
        // 60 columns: the first 40 are pure noise, the last 20 share two hidden patterns
        // (10 each, plus a little noise). The main directions of variation are the two
        // patterns, so the chosen columns come from the last 20, from both groups.
        let mut r = SplitMix64::new(9);
        let n = 300;
        let p1: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let p2: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let mut cols = Vec::new();
        for j in 0..60 {
            let v: Vec<f64> = (0..n)
                .map(|i| match j {
                    0..=39 => r.normal(),
                    40..=49 => 3.0 * p1[i] + 0.8 * r.normal(),
                    _ => 3.0 * p2[i] + 0.8 * r.normal(),
                })
                .collect();
            cols.push(Column::number(format!("g{j}"), v));
        }
        let t = Table::from_columns("t", cols).unwrap();
        let choice = auto_choice(&t).unwrap();
        let picked: Vec<usize> = choice.settings.columns.iter().map(|c| c[1..].parse().unwrap()).collect();
        assert_eq!(picked.len(), AUTO_MAX_COLUMNS);
        let from_patterns = picked.iter().filter(|&&j| j >= 40).count();
        assert!(from_patterns >= 2 && picked.iter().any(|&j| (40..50).contains(&j)) && picked.iter().any(|&j| j >= 50), "{picked:?}");
        assert!(picked.iter().filter(|&&j| j < AUTO_MAX_COLUMNS).count() < AUTO_MAX_COLUMNS, "not the file's first columns: {picked:?}");
        assert_eq!(choice.left_out.len(), 60 - AUTO_MAX_COLUMNS);
        assert!(choice.left_out.iter().all(|l| matches!(l.reason, Reason::NotChosen | Reason::NearDuplicate)));
    }

    #[test]
    fn eps_is_never_a_lattice_distance() {
        // Evenly spaced values 0, 1, ..., 399 (a 1-D lattice): every 5th-neighbour
        // distance is exactly 2 and every nearest distinct row is at 1; eps must lie
        // strictly between lattice distances, so DBSCAN's "within eps" is never a tie.
        let p: Vec<f64> = (0..400).map(f64::from).collect();
        let lens = p.clone();
        let s = scale_of(p, 1, &lens, 5, 1);
        assert_eq!((s.kth, s.distinct), (2.0, 1.0));
        assert!(s.eps > 2.0 && s.eps < 3.0 && (s.eps - s.eps.round()).abs() > 0.1, "eps {}", s.eps);
        // Rounded values with many repeats (each value 20 times): d_5 is 0, the floor holds.
        let p: Vec<f64> = (0..400).map(|i| f64::from(i / 20)).collect();
        let s = scale_of(p.clone(), 1, &p, 5, 1);
        assert_eq!(s.kth, 0.0);
        assert_eq!(s.distinct, 1.0);
        assert!(s.eps > 1.0 && s.eps < 2.0, "eps {}", s.eps);
    }

    #[test]
    fn joining_scale_is_the_spanning_tree_edge_that_makes_the_main_piece() {
        // Three groups on a line, by hand: 0, 1, 2 (gaps 1), then 10, 11 (gap 8 before
        // them), then 30 (gap 19). 4 of 6 rows (two thirds) need the edge of length 8;
        // 5 of 6 need 8 too; all 6 need 19.
        let p = [0.0, 1.0, 2.0, 10.0, 11.0, 30.0];
        assert_eq!(joining_scale(&p, 1, 0.5), 1.0);
        assert_eq!(joining_scale(&p, 1, 0.8), 8.0);
        assert_eq!(joining_scale(&p, 1, 1.0), 19.0);
    }

    #[test]
    fn detects_far_sentinels_but_not_plausible_values() {
        let mut r = SplitMix64::new(2);
        let mut a: Vec<f64> = (0..200).map(|_| 20.0 + r.normal()).collect();
        a[3] = -9999.0;
        a[50] = -9999.0;
        a[90] = -9999.0;
        // -999 here is inside the column's own spread, so it is data, not a sentinel.
        let b: Vec<f64> = (0..200).map(|i| if i % 50 == 0 { -999.0 } else { -1000.0 + i as f64 * 10.5 + r.normal() }).collect();
        let t = Table::from_columns("t", vec![Column::number("a", a), Column::number("b", b)]).unwrap();
        assert_eq!(sentinel_fill_values(&t), vec![-9999.0]);
        let s = auto_settings(&t).unwrap();
        assert_eq!(s.missing.fill_values, vec![-9999.0]);
    }

    #[test]
    fn kth_distance_counts_the_row_itself() {
        // Points 0, 1, 3, 6 on a line: the 2nd nearest (self first) of 0 is at 1, of 6 is at 3.
        let p = [0.0, 1.0, 3.0, 6.0];
        assert_eq!(knn_distance_quantile(p.to_vec(), 1, 2, 0.0, 10, 1), 1.0);
        assert_eq!(knn_distance_quantile(p.to_vec(), 1, 2, 1.0, 10, 1), 3.0);
    }

    #[test]
    fn refuses_a_table_without_numbers() {
        let t = Table::from_columns("words.csv", vec![Column::category("a", vec![0, 0], vec!["x".into()])]).unwrap();
        assert!(auto_settings(&t).unwrap_err().to_string().contains("words.csv"));
    }
}
