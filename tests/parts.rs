//! The pipeline run over a table held in parts (`nervure::parts`, what the Python
//! package's cluster run drives) gives the engine's graph file bit for bit: nodes, edges,
//! counts, layout, summary and every statistic, under every filter, cover and missing-value
//! rule it supports, whatever the parts' sizes. The runs here move the parts' results the
//! way the cluster run does (running sums handed from part to part in table order, the
//! reference points gathered in order, each element clustered from its rows in table
//! order, node pairs counted by row), only in one process.

use std::collections::BTreeMap;

use nervure::cover::{self, Axis};
use nervure::filter::{self, linalg::CrossSums, EXACT_LIMIT};
use nervure::graphfile::{self, GraphFile};
use nervure::parts::{self, LensNeeds, LensPlan, PartNode};
use nervure::points::{self, ColumnSums, RowCounts, SquareSums};
use nervure::rng::SplitMix64;
use nervure::settings::*;
use nervure::table::{Column, ColumnData};
use nervure::Table;

/// Rows `lo..hi` of `t` as a table of their own (categories keep the table's levels).
fn slice(t: &Table, lo: usize, hi: usize) -> Table {
    pick(t, &(lo as u32..hi as u32).collect::<Vec<_>>())
}

fn pick(t: &Table, rows: &[u32]) -> Table {
    let cols = t
        .columns
        .iter()
        .map(|c| match &c.data {
            ColumnData::Number(v) => Column::number(c.name.clone(), rows.iter().map(|&r| v[r as usize]).collect()),
            ColumnData::Category { codes, levels } => Column::category(c.name.clone(), rows.iter().map(|&r| codes[r as usize]).collect(), levels.clone()),
            ColumnData::Time(t) => Column::of(c.name.clone(), ColumnData::Time(t.take(&rows.iter().map(|&r| Some(r as usize)).collect::<Vec<_>>()))),
        })
        .collect();
    Table::from_columns(t.name.clone(), cols).unwrap()
}

/// Tables of the same columns one under the other (a time column's zone as written per
/// row when the pieces' zones differ).
fn stack(pieces: &[Table]) -> Table {
    let cols = pieces[0]
        .columns
        .iter()
        .enumerate()
        .map(|(j, c)| match &c.data {
            ColumnData::Number(_) => Column::number(c.name.clone(), pieces.iter().flat_map(|p| p.columns[j].as_numbers().unwrap().to_vec()).collect()),
            ColumnData::Category { levels, .. } => Column::category(
                c.name.clone(),
                pieces.iter().flat_map(|p| if let ColumnData::Category { codes, .. } = &p.columns[j].data { codes.to_vec() } else { unreachable!() }).collect(),
                levels.clone(),
            ),
            ColumnData::Time(t) => {
                let seconds: Vec<f64> = pieces.iter().flat_map(|p| p.columns[j].as_numbers().unwrap().to_vec()).collect();
                let mut joined = nervure::timecol::Times::new(seconds, t.zone.clone());
                if let nervure::timecol::Zone::PerRow(_) = t.zone {
                    let offsets = pieces.iter().flat_map(|p| p.columns[j].as_times().map(|t| (0..t.len()).map(|r| t.zone.offset_at(r)).collect::<Vec<_>>()).unwrap()).collect();
                    joined.zone = nervure::timecol::Zone::PerRow(std::sync::Arc::new(offsets));
                }
                joined.precision = t.precision;
                joined.shown = t.shown;
                Column::of(c.name.clone(), ColumnData::Time(joined))
            }
        })
        .collect();
    Table::from_columns("element", cols).unwrap()
}

/// A noisy circle in three columns, with gaps, a fill value, a far column and a text
/// column (synthetic, known topology: one loop).
fn table(n: usize, seed: u64) -> Table {
    let mut r = SplitMix64::new(seed);
    let (mut x, mut y, mut z, mut w, mut side, mut at) = (vec![], vec![], vec![], vec![], vec![], vec![]);
    for i in 0..n {
        let t = i as f64 / n as f64 * std::f64::consts::TAU;
        x.push(if i % 97 == 5 { f64::NAN } else { 10.0 * t.cos() + 0.3 * r.normal() });
        y.push(if i % 89 == 7 { -9999.0 } else { 10.0 * t.sin() + 0.3 * r.normal() });
        z.push(0.5 * r.normal() + 100.0);
        w.push(if i % 13 == 0 { f64::NAN } else { r.normal() * 3.0 });
        side.push(if i % 31 == 0 { u32::MAX } else { (i * 3 / n) as u32 });
        // A reading every 10 minutes from 2024-07-15 06:00 UTC, some missing.
        at.push(if i % 43 == 3 { f64::NAN } else { 1_721_023_200.0 + 600.0 * i as f64 });
    }
    Table::from_columns(
        "ring.csv",
        vec![
            Column::number("x", x),
            Column::number("y", y),
            Column::number("z", z),
            Column::number("w", w),
            Column::category("side", side, vec!["east".into(), "north".into(), "west".into()]),
            Column::time("at", at, nervure::timecol::Zone::Offset(7200)),
        ],
    )
    .unwrap()
}

fn settings(lens: Lens) -> Settings {
    let mut s = Settings::plain(vec!["x".into(), "y".into(), "z".into()], lens, CoverSettings::uniform(8, 0.35), Clustering::Dbscan { eps: 0.5, min_points: 4 });
    s.scaling = Scaling::Zscore;
    s.missing.fill_values = vec![-9999.0];
    s.seed = 11;
    s
}

/// An ordered fold: the state handed from part to part in table order.
fn fold<S>(init: S, parts: &[Vec<f64>], mut step: impl FnMut(&mut S, &[f64])) -> S {
    let mut s = init;
    for p in parts {
        step(&mut s, p);
    }
    s
}

/// The graph file of `t` under `s`, computed over the parts cut at `cuts`.
fn run_in_parts(t: &Table, s: &Settings, cuts: &[usize]) -> nervure::Result<GraphFile> {
    parts::check_settings(s)?;
    let mut bounds = vec![0];
    bounds.extend_from_slice(cuts);
    bounds.push(t.n_rows);
    let tables: Vec<(u32, Table)> =
        bounds.windows(2).map(|w| Ok((w[0] as u32, parts::with_derived(&slice(t, w[0], w[1]), s)?))).collect::<nervure::Result<_>>()?;
    // Medians of the median policy over the whole column: an exact order statistic.
    let mut medians = Vec::new();
    for c in points::median_columns(s) {
        let mut all: Vec<f64> = Vec::new();
        for (_, p) in &tables {
            all.extend(parts::present(p, &c, s)?);
        }
        medians.push((c, nervure::missing::median_in_place(&mut all)));
    }
    let chosen: Vec<points::Chosen> = tables.iter().map(|(first, p)| parts::choose(p, s, *first, &medians)).collect::<nervure::Result<_>>()?;
    let mut counts: RowCounts = chosen[0].counts.clone();
    for c in &chosen[1..] {
        counts.add(&c.counts)?;
    }
    parts::check_counts(s, &t.name, &counts)?;
    let columns = s.columns.clone();
    let d = columns.len();
    let raws: Vec<Vec<f64>> = chosen.iter().map(|c| c.raw.clone()).collect();
    let sums = fold(ColumnSums::new(d), &raws, |a, p| a.add_rows(p));
    let squares = (s.scaling == Scaling::Zscore).then(|| fold(SquareSums::new(sums.means()), &raws, |a, p| a.add_rows(p)));
    let scales = points::scales(s.scaling, &columns, &sums, squares.as_ref())?;
    let scaled: Vec<Vec<f64>> = raws.into_iter().map(|r| points::scale_rows(r, &scales)).collect();
    let n: usize = chosen.iter().map(|c| c.rows.len()).sum();
    let all_points: Vec<f64> = scaled.concat();
    let mut lens_index = 0;
    let mut plan = |lens: &Lens| -> nervure::Result<Vec<LensPlan>> {
        let one = |p: LensPlan| (0..scaled.len()).map(|_| p.clone()).collect::<Vec<_>>();
        Ok(match parts::lens_needs(lens) {
            LensNeeds::Column => {
                lens_index += 1;
                one(LensPlan::Column(lens_index - 1))
            }
            LensNeeds::Covariance => {
                let mu = fold(ColumnSums::new(d), &scaled, |a, p| a.add_rows(p)).means();
                let cov = fold(CrossSums::new(mu.clone()), &scaled, |a, p| a.add_rows(p)).finish(1);
                match lens {
                    Lens::Principal { component } => one(LensPlan::principal(*component, n, mu, &cov)?),
                    Lens::Density { bandwidth } => {
                        let kernel = parts::density_kernel(cov, n, *bandwidth)?;
                        let mut refs = Vec::new();
                        for j in filter::reference_points(n, EXACT_LIMIT, s.seed) {
                            refs.extend(kernel.whiten(&all_points[j * d..(j + 1) * d]));
                        }
                        one(LensPlan::Density { kernel, refs })
                    }
                    _ => unreachable!(),
                }
            }
            LensNeeds::Norms => {
                let mu = fold(ColumnSums::new(d), &scaled, |a, p| a.add_rows(p)).means();
                let sq = fold(0.0, &scaled, |a, p| p.chunks_exact(d).for_each(|r| *a += filter::norm_sq(r)));
                one(LensPlan::Rms { mu, mean_sq: sq / n as f64 })
            }
            LensNeeds::References => {
                let mut refs = Vec::new();
                for j in filter::reference_points(n, EXACT_LIMIT, s.seed) {
                    refs.extend_from_slice(&all_points[j * d..(j + 1) * d]);
                }
                let norm = match lens {
                    Lens::Eccentricity { norm } => *norm,
                    _ => Spread::Max,
                };
                one(LensPlan::Spread { norm, refs })
            }
            LensNeeds::AllPoints => {
                let all = parts::knn_values(lens, &all_points, d)?;
                let mut at = 0;
                chosen
                    .iter()
                    .map(|c| {
                        at += c.rows.len();
                        LensPlan::Given(all[at - c.rows.len()..at].to_vec())
                    })
                    .collect()
            }
        })
    };
    let plans1 = plan(&s.lens)?;
    let plans2 = s.lens2.as_ref().map(&mut plan).transpose()?;
    let values = |plans: &[LensPlan], which: &str| -> nervure::Result<Vec<Vec<f64>>> {
        plans.iter().zip(&scaled).zip(&chosen).map(|((p, x), c)| parts::part_lens(p, x, d, &c.rows, &c.lens_columns, which)).collect()
    };
    let lens1 = values(&plans1, "filter")?;
    let lens2 = plans2.as_ref().map(|p| values(p, "second filter (lens2)")).transpose()?;
    let axis_of = |v: &[Vec<f64>], c: &CoverSettings| -> Axis {
        let all: Vec<f64> = v.concat();
        let lo = all.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = all.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        match c.kind {
            CoverKind::Uniform => cover::uniform_axis(lo, hi, c),
            CoverKind::Balanced => {
                let mut sorted = all.clone();
                sorted.sort_unstable_by(f64::total_cmp);
                let wanted = cover::balanced_ranks(sorted.len(), c.intervals, c.overlap);
                let known: BTreeMap<usize, f64> = wanted.iter().map(|&k| (k, sorted[k])).collect();
                Axis { lo, hi, intervals: cover::balanced_intervals_by(sorted.len(), c.intervals, c.overlap, |k| known[&k]) }
            }
        }
    };
    let axis = axis_of(&lens1, &s.cover);
    let axis2 = lens2.as_ref().map(|v| axis_of(v, s.cover2.as_ref().unwrap_or(&s.cover)));
    // Each part's points to elements; an element's rows gathered in table order.
    let n_elements = match &axis2 {
        None => axis.intervals.len(),
        Some(a2) => axis.intervals.len() * a2.intervals.len(),
    };
    let mut elements: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n_elements];
    for (k, _) in chosen.iter().enumerate() {
        let second = axis2.as_ref().map(|a| (a, lens2.as_ref().unwrap()[k].as_slice()));
        for (e, m) in parts::assign(&axis, &lens1[k], second).into_iter().enumerate() {
            elements[e].extend(m.into_iter().map(|i| (k, i as usize)));
        }
    }
    let mut nodes = Vec::new();
    let mut stats = Vec::new();
    let mut memberships: Vec<(u32, u32)> = Vec::new();
    for (e, members) in elements.iter().enumerate() {
        let mut pts = Vec::new();
        let (mut l1, mut l2, mut rows) = (vec![], vec![], vec![]);
        let mut mini_parts = Vec::new();
        for &(k, i) in members {
            pts.extend_from_slice(&scaled[k][i * d..(i + 1) * d]);
            l1.push(lens1[k][i]);
            if let Some(v) = &lens2 {
                l2.push(v[k][i]);
            }
            let row = chosen[k].rows[i];
            rows.push(row);
            mini_parts.push((k, row - tables[k].0));
        }
        let got = parts::element_nodes(&pts, d, &l1, lens2.as_ref().map(|_| l2.as_slice()), &s.clustering, s.min_cluster_share);
        // The element's own table: its rows (all columns, derived ones too) in table order.
        // The element's own table: its rows (all columns, derived ones too) in table order,
        // gathered from the parts that hold them.
        let pieces: Vec<Table> = mini_parts.iter().map(|&(k, r)| pick(&tables[k].1, &[r])).collect();
        let mini = if pieces.is_empty() { pick(&tables[0].1, &[]) } else { stack(&pieces) };
        stats.push(graphfile::statistics_part(&mini, &parts::local_nodes(&got.members), &s.missing));
        for (j, m) in got.members.iter().enumerate() {
            let node_rows: Vec<u32> = m.iter().map(|&p| rows[p as usize]).collect();
            let id = nodes.len() as u32;
            memberships.extend(node_rows.iter().map(|&r| (r, id)));
            nodes.push(PartNode { element: e, size: m.len(), lens: got.lens[j], lens2: got.lens2.as_ref().map(|v| v[j]), rows: Some(node_rows) });
        }
    }
    // The group-by on rows: each row's nodes, their pairs and triples counted.
    memberships.sort_unstable();
    let mut pairs: BTreeMap<(u32, u32), u32> = BTreeMap::new();
    let mut triples: BTreeMap<[u32; 3], u32> = BTreeMap::new();
    let mut rows_in_nodes = 0;
    for group in memberships.chunk_by(|a, b| a.0 == b.0) {
        rows_in_nodes += 1;
        let ids: Vec<u32> = group.iter().map(|m| m.1).collect();
        for i in 0..ids.len() {
            for j in i + 1..ids.len() {
                *pairs.entry((ids[i], ids[j])).or_default() += 1;
                for l in j + 1..ids.len() {
                    *triples.entry([ids[i], ids[j], ids[l]]).or_default() += 1;
                }
            }
        }
    }
    let gathered = parts::Gathered {
        table: parts::table_info(&tables[0].1, &t.name, t.n_rows, &parts::join_time_ranges(&tables.iter().map(|(_, p)| parts::time_ranges(p)).collect::<Vec<_>>())),
        counts,
        axis,
        axis2,
        elements: elements.iter().filter(|e| !e.is_empty()).count(),
        nodes,
        pairs: pairs.into_iter().map(|((a, b), c)| (a, b, c)).collect(),
        triples: triples.into_iter().collect(),
        rows_in_nodes,
        statistics: graphfile::join_statistics(stats)?,
    };
    parts::graph_file(s, gathered)
}

fn whole(t: &Table, s: &Settings) -> nervure::Result<GraphFile> {
    let b = nervure::build(t, s)?;
    let t = parts::with_derived(t, s)?;
    Ok(GraphFile::of_build(&b, &t, true))
}

/// The same graph file, text for text, for parts cut at several places (`many`: also
/// at the table's first rows and in seven parts).
fn same_cut(t: &Table, s: &Settings, many: bool) {
    let f = whole(t, s).unwrap();
    assert!(f.nodes.len() > 3 && !f.edges.is_empty(), "a graph worth comparing: {} nodes", f.nodes.len());
    let want = f.to_json();
    let n = t.n_rows;
    let mut all = vec![vec![n / 2], vec![1, 2, n / 3, n - 1]];
    if many {
        all.extend([vec![], (1..7).map(|k| k * n / 7).collect()]);
    }
    for cuts in all {
        let got = run_in_parts(t, s, &cuts).unwrap().to_json();
        if got != want {
            let (a, b) = (got.as_bytes(), want.as_bytes());
            let at = a.iter().zip(b).position(|(x, y)| x != y).unwrap_or(a.len().min(b.len()));
            let lo = at.saturating_sub(200);
            eprintln!("first difference at byte {at}:\n parts: {}\n whole: {}", &got[lo..(at + 200).min(got.len())], &want[lo..(at + 200).min(want.len())]);
        }
        assert!(got == want, "parts cut at {cuts:?} differ from the whole table under {}", s.to_json());
    }
}

fn same(t: &Table, s: &Settings) {
    same_cut(t, s, true)
}

#[test]
fn principal_component_with_zscore_gaps_and_fill_values() {
    same(&table(1500, 1), &settings(Lens::Principal { component: 1 }));
}

#[test]
fn column_filter_min_max_and_the_median_policy() {
    let mut s = settings(Lens::Column { column: "w".into() });
    s.scaling = Scaling::MinMax;
    s.missing.per_column.insert("x".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
    s.missing.per_column.insert("w".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
    s.clustering = Clustering::Dbscan { eps: 0.08, min_points: 3 };
    same(&table(1200, 2), &s);
}

#[test]
fn density_over_the_stated_reference_sample() {
    // More points than the exact limit, so the reference points are the seeded sample.
    let t = table(EXACT_LIMIT + 200, 3);
    let mut s = settings(Lens::Density { bandwidth: None });
    s.cover = CoverSettings::uniform(6, 0.3);
    same_cut(&t, &s, false);
}

#[test]
fn eccentricities_and_centrality() {
    let t = table(EXACT_LIMIT + 200, 4);
    same(&t, &settings(Lens::Eccentricity { norm: Spread::Rms }));
    for lens in [Lens::Eccentricity { norm: Spread::Mean }, Lens::LInfinityCentrality] {
        same_cut(&t, &settings(lens), false);
    }
}

#[test]
fn neighbour_filters_on_one_machine() {
    same(&table(900, 5), &settings(Lens::DistanceToMeasure { k: 8 }));
    same(&table(900, 5), &settings(Lens::NeighbourDistance { k: 5 }));
}

#[test]
fn balanced_cover_product_cover_and_triangles() {
    let t = table(2000, 6);
    let mut s = settings(Lens::Principal { component: 1 });
    s.cover = CoverSettings { intervals: 7, overlap: 0.6, kind: CoverKind::Balanced };
    same(&t, &s);
    let f = whole(&t, &s).unwrap();
    assert!(f.summary.filled_loops < f.summary.loops, "overlap above one half makes triangles to fill");
    s.cover = CoverSettings::uniform(5, 0.3);
    s.lens2 = Some(Lens::Column { column: "w".into() });
    s.cover2 = Some(CoverSettings { intervals: 3, overlap: 0.25, kind: CoverKind::Balanced });
    same(&t, &s);
}

#[test]
fn derived_columns_single_linkage_shares_and_edge_minimum() {
    let t = table(1500, 7);
    let mut s = settings(Lens::Column { column: "r".into() });
    s.derived = vec![Derived { name: "r".into(), expression: "x * x + y * y".into() }];
    s.columns = vec!["x".into(), "y".into(), "r".into()];
    s.min_cluster_share = 0.05;
    s.edges.min_shared = 3;
    same(&t, &s);
    s.clustering = Clustering::SingleLinkage { gap_bins: 10 };
    same(&t, &s);
}

#[test]
fn the_engine_messages_name_the_same_rows() {
    // A filter column without a value in every row that takes part is not possible; a
    // constant column refused by the z-score is, and so is a component that does not exist.
    let t = table(300, 8);
    let mut s = settings(Lens::Principal { component: 4 });
    assert_eq!(run_in_parts(&t, &s, &[100, 200]).unwrap_err().to_string(), whole(&t, &s).unwrap_err().to_string());
    s.lens = Lens::Principal { component: 1 };
    s.columns = vec!["x".into(), "z".into()];
    let mut c = t.clone();
    c.columns[2] = Column::number("z", vec![4.0; 300]);
    assert_eq!(run_in_parts(&c, &s, &[100, 200]).unwrap_err().to_string(), whole(&c, &s).unwrap_err().to_string());
    s.denoise = Some(Denoise { measure: DenoiseMeasure::NeighbourDistance, k: 3, quantile: 0.9 });
    assert!(run_in_parts(&t, &s, &[]).unwrap_err().to_string().contains("denoise"));
}

/// A row condition (on a time column, a text column and a number) keeps the same rows
/// in parts, its medians and counts among the kept rows; a time column is chosen as a
/// number (its instants) and its statistics and first and last instant are the engine's.
#[test]
fn row_condition_and_a_time_column() {
    let t = table(1500, 9);
    let mut s = settings(Lens::Principal { component: 1 });
    s.columns = vec!["x".into(), "y".into(), "at".into()];
    s.missing.per_column.insert("x".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
    s.keep_rows = Some("side != 'north' and w > -5".into());
    same(&t, &s);
    // A condition that keeps no row is refused with the engine's words.
    s.keep_rows = Some("z > 1000".into());
    let none = whole(&t, &s).unwrap_err().to_string();
    assert!(none.contains("no row of ring.csv"), "{none}");
    assert_eq!(run_in_parts(&t, &s, &[500, 1000]).unwrap_err().to_string(), none);
}

/// A column read in parts from its cells' text gets the engine reader's type, values and
/// levels, wherever its first text stands (numbers before it become texts as the reader
/// writes them; after it, texts are kept as written).
#[test]
fn cells_read_in_parts_as_the_reader_reads_the_file() {
    use nervure::parts::{read_cells, CellsMode};
    let cells = ["1.50", "", "2", "NA", " 3 ", "x7", "1.50", "4", "NaN", "x7", "2"];
    let csv = std::iter::once("i,v".to_string()).chain(cells.iter().enumerate().map(|(i, c)| format!("{i},{c}"))).collect::<Vec<_>>().join("\n") + "\n";
    let whole = Table::from_csv_bytes("t.csv", csv.as_bytes(), &Default::default()).unwrap();
    let want = &whole.columns[1];
    let first_text = 5;
    for cut in [1, 3, 5, 6, 9] {
        let mut parts = Vec::new();
        for (lo, hi) in [(0, cut), (cut, cells.len())] {
            let mode = if hi <= first_text { CellsMode::NumbersAsText } else if lo > first_text { CellsMode::Text } else { CellsMode::Auto };
            parts.push(read_cells("v", cells[lo..hi].iter().copied(), lo, mode).unwrap());
        }
        // Levels joined in order of first appearance, codes mapped onto them.
        let mut levels: Vec<String> = Vec::new();
        let mut codes = Vec::new();
        for p in &parts {
            let ColumnData::Category { codes: c, levels: l } = &p.data else { panic!("a text column in every part") };
            let map: Vec<u32> = l
                .iter()
                .map(|t| match levels.iter().position(|x| x == t) {
                    Some(k) => k as u32,
                    None => {
                        levels.push(t.clone());
                        levels.len() as u32 - 1
                    }
                })
                .collect();
            codes.extend(c.iter().map(|&k| if k == u32::MAX { k } else { map[k as usize] }));
        }
        let ColumnData::Category { codes: wc, levels: wl } = &want.data else { panic!("the reader makes it text") };
        assert_eq!((&codes, &levels), (&wc.to_vec(), wl), "cut at {cut}");
        let holder = &parts[if cut > first_text { 0 } else { 1 }];
        assert_eq!(holder.first_text, want.first_text, "the part holding the first text names it as the reader does");
    }
    // A column of numbers only reads as numbers in every part, missing markers as NaN.
    let nums = ["1", "", "2.5", "NA", "-3e2"];
    let a = read_cells("n", nums[..2].iter().copied(), 0, CellsMode::Auto).unwrap();
    let b = read_cells("n", nums[2..].iter().copied(), 2, CellsMode::Auto).unwrap();
    let got: Vec<f64> = a.as_numbers().unwrap().iter().chain(b.as_numbers().unwrap()).copied().collect();
    assert_eq!(format!("{got:?}"), format!("{:?}", [1.0, f64::NAN, 2.5, f64::NAN, -300.0]));
}

/// The column filter under the median policy with a row condition: the filter's fills
/// are the median of the kept rows, as the points' own fills are (the engine's filter
/// once took the whole column's median there while the points took the kept rows', and
/// the run in parts, which takes the kept rows' for both, differed from it).
#[test]
fn column_filter_median_among_the_kept_rows() {
    let t = table(1200, 12);
    let mut s = settings(Lens::Column { column: "x".into() });
    s.scaling = Scaling::None;
    s.missing.per_column.insert("x".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
    s.keep_rows = Some("side == 'west'".into());
    let x = t.columns[0].as_numbers().unwrap();
    let ColumnData::Category { codes, .. } = &t.columns[4].data else { unreachable!() };
    let mut kept: Vec<f64> = (0..t.n_rows).filter(|&r| codes[r] == 2 && x[r].is_finite()).map(|r| x[r]).collect();
    let median = nervure::missing::median_in_place(&mut kept).unwrap();
    let pts = points::build_points(&t, &s).unwrap();
    let (lens, _) = nervure::engine::lens_stage(&t, &pts, &s).unwrap();
    let filled: Vec<f64> = pts.rows.iter().zip(&lens).filter(|(&r, _)| x[r as usize].is_nan()).map(|(_, &v)| v).collect();
    assert!(!filled.is_empty(), "some filled rows are kept");
    assert!(filled.iter().all(|&v| v == median), "filter values of filled rows are the kept rows' median {median}: {filled:?}");
    same(&t, &s);
}
