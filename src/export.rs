//! Writing a build out, so a user or a script can rebuild, check or draw it elsewhere:
//!
//! - The graph file (JSON, our own versioned format): [`crate::graphfile`], described in
//!   `docs/graph-file.md`.
//! - GraphML, the open standard (<http://graphml.graphdrawing.org/>, namespace
//!   `http://graphml.graphdrawing.org/xmlns`): undirected graph; node ids `n0, n1, ...` in
//!   node order; node attributes `size` (int), `element` (int, the cover element), `lens`
//!   (double, the mean lens value) and, when given, the colouring shown on the page
//!   ([`colour_attributes`]): for a number column its node statistic (double, named after
//!   the column for the mean, `column (median)`, `column (spread)` or `column (share
//!   above T)` otherwise), for a category column the most common level (string, named
//!   after the column) and its share (double, `column (share)`), for a time column the
//!   mean or median instant as ISO 8601 text (string, in the column's zone) and a spread
//!   or share as a double (the spread in seconds, `column (spread, s)`); no value is
//!   written for a node without one;
//!   edge attribute `shared` (int, rows the two nodes share); graph attributes `settings`
//!   (string, the settings JSON that rebuilds the graph), `rowsUsed`, `rowsLeftOut` (for a
//!   missing value), `rowsSetAside` (by denoising), `rowsNotKept` (by the row condition)
//!   (ints) and, when the settings keep only some rows, `keepRows` (string, the condition). Checked with NetworkX's reader.
//! - Memberships CSV: header `data_row,node`, then one line per (row, node) membership,
//!   by node then row; `data_row` counts the file's data rows from 1 (the header not
//!   counted), `node` is the node's index (the `n` number of the GraphML id).
//! - A short text report: the rows used (and the condition that chose them), the settings,
//!   the summary (a time lens's range as ISO 8601 text) and the caution that goes with any
//!   Mapper graph.
//!
//! What it is not: a reader of these formats (settings are read back from the JSON).

use std::fmt::Write as _;


use crate::engine::{Build, NodeStat, Workbench};
use crate::error::Result;
use crate::settings::Lens;
use crate::table::{ColumnData, Table};

/// One node attribute of a GraphML export: a name and one value per node (`NaN` or `None`
/// for a node without one).
#[derive(Debug, Clone, PartialEq)]
pub struct NodeAttribute {
    pub name: String,
    pub values: AttributeValues,
}

#[derive(Debug, Clone, PartialEq)]
pub enum AttributeValues {
    Double(Vec<f64>),
    Text(Vec<Option<String>>),
}

/// The attributes that carry the page's colouring of the last graph by `column` with
/// `stat` (see the module doc for their names). The values are exactly those the page
/// colours by ([`Workbench::node_values`]).
pub fn colour_attributes(bench: &Workbench, column: &str, stat: NodeStat) -> Result<Vec<NodeAttribute>> {
    let values = bench.node_values(column, stat)?;
    let data = bench.table().and_then(|t| t.column(column)).map(|c| &c.data);
    if let Some(ColumnData::Time(t)) = data {
        return Ok(vec![match stat {
            NodeStat::Mean | NodeStat::Median => NodeAttribute {
                name: if stat == NodeStat::Mean { column.to_string() } else { format!("{column} (median)") },
                values: AttributeValues::Text(values.iter().map(|&x| t.text_of(x)).collect()),
            },
            NodeStat::Spread => NodeAttribute { name: format!("{column} (spread, s)"), values: AttributeValues::Double(values) },
            NodeStat::ShareAbove { threshold } => {
                NodeAttribute { name: format!("{column} (share above {threshold})"), values: AttributeValues::Double(values) }
            }
        }]);
    }
    let levels = match data {
        Some(ColumnData::Category { levels, .. }) => Some(levels.clone()),
        _ => None,
    };
    Ok(match levels {
        Some(levels) => {
            let codes = bench.node_categories(column)?;
            let names = codes.iter().map(|&c| levels.get(c as usize).cloned()).collect();
            vec![
                NodeAttribute { name: column.to_string(), values: AttributeValues::Text(names) },
                NodeAttribute { name: format!("{column} (share)"), values: AttributeValues::Double(values) },
            ]
        }
        None => {
            let name = match stat {
                NodeStat::Mean => column.to_string(),
                NodeStat::Median => format!("{column} (median)"),
                NodeStat::Spread => format!("{column} (spread)"),
                NodeStat::ShareAbove { threshold } => format!("{column} (share above {threshold})"),
            };
            vec![NodeAttribute { name, values: AttributeValues::Double(values) }]
        }
    })
}

/// Text safe inside an XML attribute value or element: `& < > " '` escaped, and the
/// characters XML 1.0 forbids (controls other than tab, newline and carriage return)
/// replaced by U+FFFD.
pub fn xml_escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

/// The graph as GraphML, with `extra` node attributes (the colouring, see
/// [`colour_attributes`]) after the fixed ones.
pub fn graphml(b: &Build, extra: &[NodeAttribute]) -> String {
    let sizes: Vec<usize> = b.nerve.nodes.iter().map(|n| n.members.len()).collect();
    graphml_sized(b, &sizes, extra)
}

/// [`graphml`] with the node sizes given (a graph opened from a graph file written without
/// member rows knows its sizes, not its members: [`crate::Workbench::node_sizes`]).
pub fn graphml_sized(b: &Build, sizes: &[usize], extra: &[NodeAttribute]) -> String {
    let mut x = String::new();
    x.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    x.push_str("<graphml xmlns=\"http://graphml.graphdrawing.org/xmlns\" xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\" xsi:schemaLocation=\"http://graphml.graphdrawing.org/xmlns http://graphml.graphdrawing.org/xmlns/1.0/graphml.xsd\">\n");
    x.push_str("  <key id=\"settings\" for=\"graph\" attr.name=\"settings\" attr.type=\"string\"/>\n");
    for key in ["rowsUsed", "rowsLeftOut", "rowsSetAside", "rowsNotKept"] {
        let _ = writeln!(x, "  <key id=\"{key}\" for=\"graph\" attr.name=\"{key}\" attr.type=\"int\"/>");
    }
    if b.settings.keep_rows.is_some() {
        x.push_str("  <key id=\"keepRows\" for=\"graph\" attr.name=\"keepRows\" attr.type=\"string\"/>\n");
    }
    x.push_str("  <key id=\"size\" for=\"node\" attr.name=\"size\" attr.type=\"int\"/>\n");
    x.push_str("  <key id=\"element\" for=\"node\" attr.name=\"element\" attr.type=\"int\"/>\n");
    x.push_str("  <key id=\"lens\" for=\"node\" attr.name=\"lens\" attr.type=\"double\"/>\n");
    for (k, a) in extra.iter().enumerate() {
        let ty = match a.values {
            AttributeValues::Double(_) => "double",
            AttributeValues::Text(_) => "string",
        };
        let _ = writeln!(x, "  <key id=\"colour{k}\" for=\"node\" attr.name=\"{}\" attr.type=\"{ty}\"/>", xml_escape(&a.name));
    }
    x.push_str("  <key id=\"shared\" for=\"edge\" attr.name=\"shared\" attr.type=\"int\"/>\n");
    x.push_str("  <graph id=\"G\" edgedefault=\"undirected\">\n");
    let settings = serde_json::to_string(&b.settings).expect("settings serialise");
    let _ = writeln!(x, "    <data key=\"settings\">{}</data>", xml_escape(&settings));
    let sm = &b.summary;
    for (key, v) in [("rowsUsed", sm.rows), ("rowsLeftOut", sm.rows_left_out), ("rowsSetAside", sm.rows_set_aside), ("rowsNotKept", sm.rows_not_kept)] {
        let _ = writeln!(x, "    <data key=\"{key}\">{v}</data>");
    }
    if let Some(c) = &b.settings.keep_rows {
        let _ = writeln!(x, "    <data key=\"keepRows\">{}</data>", xml_escape(c));
    }
    for (i, n) in b.nerve.nodes.iter().enumerate() {
        let _ = write!(
            x,
            "    <node id=\"n{i}\"><data key=\"size\">{}</data><data key=\"element\">{}</data><data key=\"lens\">{:?}</data>",
            sizes[i],
            n.element,
            b.node_lens[i]
        );
        for (k, a) in extra.iter().enumerate() {
            match &a.values {
                AttributeValues::Double(v) => {
                    if let Some(c) = v.get(i).filter(|c| c.is_finite()) {
                        let _ = write!(x, "<data key=\"colour{k}\">{c:?}</data>");
                    }
                }
                AttributeValues::Text(v) => {
                    if let Some(Some(t)) = v.get(i) {
                        let _ = write!(x, "<data key=\"colour{k}\">{}</data>", xml_escape(t));
                    }
                }
            }
        }
        x.push_str("</node>\n");
    }
    for e in &b.nerve.edges {
        let _ = writeln!(x, "    <edge source=\"n{}\" target=\"n{}\"><data key=\"shared\">{}</data></edge>", e.a, e.b, e.shared);
    }
    x.push_str("  </graph>\n</graphml>\n");
    x
}

/// One line per membership: `data_row,node` (see the module doc).
pub fn memberships_csv(b: &Build) -> String {
    let total: usize = b.nerve.nodes.iter().map(|n| n.members.len()).sum();
    let mut out = String::with_capacity(14 + total * 10);
    out.push_str("data_row,node\n");
    for (i, n) in b.nerve.nodes.iter().enumerate() {
        for &r in &n.members {
            let _ = writeln!(out, "{},{i}", r as usize + 1);
        }
    }
    out
}

/// " (9 of them single nodes)" after a count of components, or "" when none is one node.
pub fn single_nodes_note(s: &crate::engine::Summary) -> String {
    match (s.single_node_components, s.components) {
        (0, _) => String::new(),
        (1, 1) => " (a single node)".into(),
        (k, c) if k == c => " (all single nodes)".into(),
        (1, _) => " (1 of them a single node)".into(),
        (k, _) => format!(" ({k} of them single nodes)"),
    }
}

/// A short plain-text account of a build: what file, which settings, what came out, and
/// the caution that goes with any Mapper graph. With the `table` the graph was built from,
/// a lens that is a time column has its range written as ISO 8601 text.
pub fn report(b: &Build, file_name: &str, table: Option<&Table>) -> String {
    let s = &b.summary;
    let mut t = String::new();
    let _ = writeln!(t, "Nervure graph of {file_name}\n");
    if let Some(c) = &b.settings.keep_rows {
        let _ = writeln!(t, "Rows kept where: {c}");
        let why = if s.rows_not_kept_missing > 0 {
            format!(" ({} of them because a value the condition reads is missing)", s.rows_not_kept_missing)
        } else {
            String::new()
        };
        let _ = writeln!(t, "Rows not kept by that condition: {}{why}", s.rows_not_kept);
    }
    let _ = writeln!(t, "Rows used: {} ({} left out for a missing value)", s.rows, s.rows_left_out);
    for (c, k) in &s.left_out_by_column {
        let _ = writeln!(t, "  '{c}' had no value in {k} rows");
    }
    let _ = writeln!(t, "Nodes: {}, edges: {}, connected components: {}{}, independent loops: {}", s.nodes, s.edges, s.components, single_nodes_note(s), s.loops);
    if s.filled_loops != s.loops {
        let _ = writeln!(
            t,
            "Loops once the triangles where three nodes share rows are filled: {} (the other {} run round such triangles)",
            s.filled_loops,
            s.loops - s.filled_loops
        );
    }
    if let Some(d) = &b.settings.denoise {
        let what = match d.measure {
            crate::settings::DenoiseMeasure::DistanceToMeasure => "distance to a measure",
            crate::settings::DenoiseMeasure::NeighbourDistance => "k-th neighbour distance",
        };
        let _ = writeln!(
            t,
            "Rows set aside before the filter: {} (their {what} with k = {} lies above its {} quantile); they are in no node and not counted in the rows used",
            s.rows_set_aside, d.k, d.quantile
        );
    }
    let _ = writeln!(t, "Cover elements holding rows: {}; rows in no node (noise): {}", s.elements, s.noise_rows);
    let lens_times = match &b.settings.lens {
        Lens::Column { column } => table.and_then(|t| t.column(column)).and_then(|c| c.as_times().map(|t| (column, t))),
        _ => None,
    };
    match lens_times {
        Some((column, times)) => {
            let text = |x: f64| times.text_of(x).unwrap_or_else(|| "—".into());
            let _ = writeln!(t, "Lens range: {} to {} (time column '{column}', {})", text(b.lens_range.0), text(b.lens_range.1), times.zone.label());
        }
        None => {
            let _ = writeln!(t, "Lens range: {} to {}", b.lens_range.0, b.lens_range.1);
        }
    }
    let _ = writeln!(t, "\nSettings (load this to rebuild the same graph):\n{}\n", b.settings.to_json());
    t.push_str(
        "Caution: a Mapper graph depends on its settings (the lens, the number of intervals and \
their overlap, the clustering). Its nodes, edges and loops are a hypothesis about the shape of \
the data, to be checked: change the settings a little and see whether the feature stays, and \
look at the rows behind it.\n",
    );
    t
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::*;
    use crate::table::{Column, Table};

    /// Two separate arcs of points along x: a small graph with a known number of nodes.
    fn small_build() -> Build {
        small_build_where(None)
    }

    /// The same with a row condition (`<` and `>` to be escaped in XML).
    fn small_build_where(condition: Option<&str>) -> Build {
        let x: Vec<f64> = (0..40).map(|i| if i < 20 { i as f64 * 0.1 } else { 10.0 + (i - 20) as f64 * 0.1 }).collect();
        let t = Table::from_columns("t", vec![Column::number("x", x.clone()), Column::number("y", x.iter().map(|v| v * 0.5).collect())]).unwrap();
        let mut s = Settings::plain(vec!["x".into(), "y".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(8, 0.3), Clustering::Dbscan { eps: 0.3, min_points: 1 });
        s.keep_rows = condition.map(String::from);
        crate::engine::build(&t, &s).unwrap()
    }

    #[test]
    fn report_and_graphml_say_which_rows_were_kept() {
        let b = small_build_where(Some("x < 1.45 or x > 10.45 and y != 5.5"));
        // By hand: x = 0.0 .. 1.4 (15 rows), and 10.5 .. 11.9 (15 rows; y = 5.25 .. 5.95, never 5.5
        // exactly since 11.0 * 0.5 is not among them: x steps from 10.0 by 0.1 in floating point).
        let kept = b.nerve.nodes.iter().flat_map(|n| n.members.iter().copied()).collect::<std::collections::BTreeSet<u32>>();
        assert_eq!(b.summary.rows + b.summary.rows_not_kept, 40);
        assert!(kept.iter().all(|&r| r < 15 || r >= 25), "{kept:?}");
        let r = report(&b, "t.csv", None);
        assert!(r.contains("Rows kept where: x < 1.45 or x > 10.45 and y != 5.5\n"), "{r}");
        assert!(r.contains(&format!("Rows not kept by that condition: {}\n", b.summary.rows_not_kept)), "{r}");
        let g = graphml(&b, &[]);
        assert!(g.contains("<data key=\"keepRows\">x &lt; 1.45 or x &gt; 10.45 and y != 5.5</data>"), "{g}");
        assert!(g.contains(&format!("<data key=\"rowsNotKept\">{}</data>", b.summary.rows_not_kept)));
        assert!(!graphml(&small_build(), &[]).contains("keepRows"));
        assert!(!report(&small_build(), "t.csv", None).contains("Rows kept where"));
    }

    const NAME: &str = "a&b <c> \"d\" 'e'";

    #[test]
    fn the_report_says_how_many_rows_were_set_aside() {
        // 0, 1, ..., 38 and 1000: 3rd-neighbour distances 1 inside, 2 at the two ends, 962
        // at 1000; the 0.95 quantile is 2 (NumPy's rule), so 1000 alone is set aside.
        let x: Vec<f64> = (0..40).map(|i| if i == 39 { 1000.0 } else { i as f64 }).collect();
        let t = Table::from_columns("t", vec![Column::number("x", x)]).unwrap();
        let mut s = Settings::plain(vec!["x".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(4, 0.3), Clustering::Dbscan { eps: 0.3, min_points: 1 });
        s.denoise = Some(Denoise { measure: DenoiseMeasure::NeighbourDistance, k: 3, quantile: 0.95 });
        let b = crate::engine::build(&t, &s).unwrap();
        assert_eq!(b.summary.rows_set_aside, 1);
        let r = report(&b, "t.csv", None);
        assert!(r.contains("Rows set aside before the filter: 1 (their k-th neighbour distance with k = 3 lies above its 0.95 quantile)"), "{r}");
        assert!(crate::graphfile::GraphFile::of_build(&b, &t, true).to_json().contains("\"rowsSetAside\":1"));
    }

    #[test]
    fn escapes_every_special_character() {
        assert_eq!(xml_escape(NAME), "a&amp;b &lt;c&gt; &quot;d&quot; &apos;e&apos;");
        assert_eq!(xml_escape("x\u{1}y"), "x\u{FFFD}y");
    }

    #[test]
    fn graphml_counts_and_escaping_natively() {
        let b = small_build();
        let colour: Vec<f64> = (0..b.nerve.nodes.len()).map(|i| if i == 0 { f64::NAN } else { i as f64 }).collect();
        let g = graphml(&b, &[NodeAttribute { name: NAME.into(), values: AttributeValues::Double(colour) }]);
        assert!(b.nerve.nodes.len() >= 4 && !b.nerve.edges.is_empty());
        assert_eq!(g.matches("<node ").count(), b.nerve.nodes.len());
        assert_eq!(g.matches("<edge ").count(), b.nerve.edges.len());
        assert_eq!(g.matches("<data key=\"colour0\">").count(), b.nerve.nodes.len() - 1, "no value for the NaN node");
        assert!(g.contains("attr.name=\"a&amp;b &lt;c&gt; &quot;d&quot; &apos;e&apos;\""));
        // Every '&' starts one of the five predefined entities; no raw '<' outside tags.
        for (i, _) in g.match_indices('&') {
            let rest = &g[i..];
            assert!(["&amp;", "&lt;", "&gt;", "&quot;", "&apos;"].iter().any(|e| rest.starts_with(e)), "bad entity at {i}");
        }
        assert!(!g.contains("<c>"));
        assert!(g.contains(&format!("&quot;version&quot;:{}", crate::settings::SETTINGS_VERSION)), "settings JSON as an escaped string");
    }

    #[test]
    fn graphml_reads_back_with_networkx() {
        // Without a row condition, and with one that has '<' and '>' to escape.
        for condition in [None, Some("x < 1.45 or x > 10.45")] {
            graphml_with_networkx(condition);
        }
    }

    fn graphml_with_networkx(condition: Option<&str>) {
        let b = small_build_where(condition);
        let colour: Vec<f64> = (0..b.nerve.nodes.len()).map(|i| i as f64 * 0.5).collect();
        let dir = std::env::temp_dir().join(format!("nervure-graphml-{}-{}", std::process::id(), condition.is_some()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("small.graphml");
        std::fs::write(&path, graphml(&b, &[NodeAttribute { name: NAME.into(), values: AttributeValues::Double(colour) }])).unwrap();
        let python = std::env::var("NERVURE_PYTHON").unwrap_or_else(|_| "python3".into());
        let has_networkx = std::process::Command::new(&python).args(["-c", "import networkx"]).output().is_ok_and(|o| o.status.success());
        if !has_networkx {
            // tests/run.sh (and so CI) sets NERVURE_PYTHON to a venv with networkx: there a
            // missing reader is a failure, not a skip.
            assert!(std::env::var_os("NERVURE_PYTHON").is_none(), "NERVURE_PYTHON={python} cannot import networkx");
            eprintln!(
                "SKIPPED, not a pass: {python} cannot import networkx, so the GraphML file was not read back; \
                 set NERVURE_PYTHON to a Python with networkx (tests/reference/requirements.txt)"
            );
            let _ = std::fs::remove_dir_all(&dir);
            return;
        }
        let script = format!("{}/tests/reference/check_graphml.py", env!("CARGO_MANIFEST_DIR"));
        let out = std::process::Command::new(&python)
            .arg(&script)
            .arg(&path)
            .arg(b.nerve.nodes.len().to_string())
            .arg(b.nerve.edges.len().to_string())
            .arg(NAME)
            .arg(b.nerve.edges.iter().map(|e| e.shared as usize).sum::<usize>().to_string())
            .args(condition.map(|c| [c.to_string(), b.summary.rows_not_kept.to_string()]).into_iter().flatten())
            .output()
            .unwrap();
        let _ = std::fs::remove_dir_all(&dir);
        let text = format!("{}{}", String::from_utf8_lossy(&out.stdout), String::from_utf8_lossy(&out.stderr));
        assert!(out.status.success(), "check_graphml.py failed:\n{text}");
        eprintln!("{}", text.trim());
    }

    #[test]
    fn memberships_one_line_per_membership_with_1_based_rows() {
        let b = small_build();
        let csv = memberships_csv(&b);
        let mut lines = csv.lines();
        assert_eq!(lines.next(), Some("data_row,node"));
        let body: Vec<(usize, usize)> = lines.map(|l| {
            let (r, n) = l.split_once(',').unwrap();
            (r.parse().unwrap(), n.parse().unwrap())
        }).collect();
        assert_eq!(body.len(), b.nerve.nodes.iter().map(|n| n.members.len()).sum::<usize>());
        for (r, n) in &body {
            assert!(b.nerve.nodes[*n].members.contains(&(*r as u32 - 1)));
        }
        assert!(body.iter().all(|(r, _)| *r >= 1 && *r <= 40));
    }

    /// A time column as the lens and the colour: the report's lens range and the GraphML
    /// colour attribute are ISO 8601 text in the column's zone.
    #[test]
    fn times_are_written_as_iso_text() {
        // Hourly from 2024-07-15T00:00+02:00 (1720994400 s, common practice: `date -u -d 2024-07-14T22:00Z +%s`).
        let start = 1_720_994_400.0;
        let x: Vec<f64> = (0..40).map(|i| if i < 20 { i as f64 * 0.1 } else { 10.0 + (i - 20) as f64 * 0.1 }).collect();
        let when: Vec<f64> = (0..40).map(|i| start + i as f64 * 3600.0).collect();
        let t = Table::from_columns("t", vec![Column::number("x", x.clone()), Column::time("when", when, crate::timecol::Zone::Offset(7200))]).unwrap();
        let s = Settings::plain(vec!["x".into()], Lens::Column { column: "when".into() }, CoverSettings::uniform(8, 0.3), Clustering::Dbscan { eps: 0.3, min_points: 1 });
        let mut w = Workbench::new();
        w.set_table(t.clone());
        w.run(&s, &mut |_, _| {}).unwrap();
        let b = w.last().unwrap();
        let r = report(b, "t.csv", Some(&t));
        assert!(r.contains("Lens range: 2024-07-15T00:00+02:00 to 2024-07-16T15:00+02:00 (time column 'when', +02:00)"), "{r}");
        let attrs = colour_attributes(&w, "when", NodeStat::Mean).unwrap();
        let AttributeValues::Text(texts) = &attrs[0].values else { panic!("a time colour is text") };
        assert!(texts.iter().all(|t| t.as_deref().is_some_and(|t| t.starts_with("2024-07-1") && t.ends_with("+02:00"))), "{texts:?}");
        let g = graphml(b, &attrs);
        assert!(g.contains("attr.name=\"when\" attr.type=\"string\""));
    }

    #[test]
    fn report_carries_settings_summary_and_caution() {
        let b = small_build();
        let r = report(&b, "arcs.csv", None);
        assert!(r.contains("arcs.csv"));
        assert!(r.contains(&format!("Nodes: {}, edges: {}", b.summary.nodes, b.summary.edges)));
        assert!(r.contains("hypothesis"));
        let start = r.find('{').unwrap();
        let end = r.rfind('}').unwrap();
        assert_eq!(Settings::from_json(&r[start..=end]).unwrap(), b.settings);
        assert!(r.contains(&format!("connected components: {}, independent loops", b.summary.components)), "no single node here: {r}");
    }

    #[test]
    fn report_counts_single_node_components_apart() {
        let mut b = small_build();
        b.summary.components = 12;
        b.summary.single_node_components = 9;
        assert!(report(&b, "t.csv", None).contains("connected components: 12 (9 of them single nodes), independent loops"));
        let mut note = |k: usize, c: usize| {
            b.summary.single_node_components = k;
            b.summary.components = c;
            single_nodes_note(&b.summary)
        };
        assert_eq!(note(1, 3), " (1 of them a single node)");
        assert_eq!(note(4, 4), " (all single nodes)");
        assert_eq!(note(1, 1), " (a single node)");
        assert_eq!(note(0, 5), "");
    }
}
