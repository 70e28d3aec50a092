//! Writing a build out: the graph as JSON (our own format, described here) so a user or a
//! script can rebuild, check or draw it elsewhere.
//!
//! Graph JSON: `{"format": "nervure-graph", "version": 1, "settings": {...}, "summary":
//! {...}, "nodes": [{"id", "element", "size", "lens", "rows": [1-based data rows]}],
//! "edges": [{"source", "target", "shared"}]}`.

use serde_json::json;

use crate::engine::Build;

pub fn graph_json(b: &Build) -> String {
    let nodes: Vec<_> = b
        .nerve
        .nodes
        .iter()
        .enumerate()
        .map(|(i, n)| {
            json!({
                "id": i,
                "element": n.element,
                "size": n.members.len(),
                "lens": b.node_lens[i],
                "rows": n.members.iter().map(|&r| r as usize + 1).collect::<Vec<_>>(),
            })
        })
        .collect();
    let edges: Vec<_> = b.nerve.edges.iter().map(|e| json!({"source": e.a, "target": e.b, "shared": e.shared})).collect();
    serde_json::to_string(&json!({
        "format": "nervure-graph",
        "version": 1,
        "settings": b.settings,
        "summary": b.summary,
        "nodes": nodes,
        "edges": edges,
    }))
    .expect("graph serialises")
}
