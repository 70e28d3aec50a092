//! The settings document: one versioned JSON value that drives the page, the
//! command-line runner and the tests, so any graph a user sees can be rebuilt from a file.
//!
//! Every field has a concrete value (automatic choices are resolved by [`crate::auto`]
//! before they are written here), unknown fields are refused, and [`Settings::validate`]
//! checks ranges before any work starts, naming the field at fault.

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// The settings format this build writes. Version 2 added `denoise` and
/// `minClusterShare`, version 3 `keepRows`; a document of an older version (which has
/// none of the later fields) still reads, with none of them, and is held, and written
/// back, as the current version.
pub const SETTINGS_VERSION: u32 = 3;

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Settings {
    pub version: u32,
    /// Columns whose (scaled) values are the points' coordinates.
    pub columns: Vec<String>,
    pub scaling: Scaling,
    #[serde(default)]
    pub missing: Missing,
    pub lens: Lens,
    pub cover: CoverSettings,
    pub clustering: Clustering,
    #[serde(default)]
    pub edges: EdgeRule,
    /// Seed for every random choice (subsamples, layout start).
    #[serde(default = "default_seed")]
    pub seed: u64,
    /// Numeric columns computed from others, in order; usable wherever a file column is.
    #[serde(default)]
    pub derived: Vec<Derived>,
    /// A second filter: with it the cover is the product of `cover` over `lens` and
    /// `cover2` over `lens2`, a 2-D grid of overlapping cells (see [`crate::cover`]).
    /// Absent (the default) means one filter. The layout and [`crate::engine::Build::node_lens`]
    /// still read the first filter.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lens2: Option<Lens>,
    /// The second filter's 1-D cover; absent means the same as `cover`. Refused without `lens2`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cover2: Option<CoverSettings>,
    /// Rows set aside before the filter because they lie far from the others (see
    /// [`Denoise`]); absent (the default) sets none aside.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub denoise: Option<Denoise>,
    /// A cluster with fewer rows than this share of its cover element's rows is not made a
    /// node: its rows count as in no cluster there (they may still be in a node of an
    /// overlapping element). 0 (the default) keeps every cluster. In [0, 0.5].
    #[serde(default, skip_serializing_if = "is_zero")]
    pub min_cluster_share: f64,
    /// A row condition (version 3): only the rows where it holds take part, as in
    /// `origin == "JFK" and hour(time_hour) >= 6` (the language is in
    /// [`crate::derive::condition`]). Absent, every row takes part; a blank text is refused.
    ///
    /// One text, not a structure of ranges and ticked values: the page's ranges, tick boxes
    /// and time windows write condition text, so the document has one source of truth,
    /// what the user reads is exactly what is applied, and a condition typed by hand
    /// (an `or`, a derived column) needs no second form.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub keep_rows: Option<String>,
}

fn is_zero(x: &f64) -> bool {
    *x == 0.0
}

/// Denoising before the graph: each point's distance to the empirical measure (Chazal,
/// Cohen-Steiner, Mérigot 2011) or distance to its k-th nearest point (itself counted
/// first, as in [`crate::filter::knn`]) is computed over the points, and the rows whose
/// value lies strictly above the `quantile` of those values are set aside: they take no
/// part in the filter, the cover or the clusters, and the summary counts them apart
/// (`rowsSetAside`). The quantile is NumPy's default (linear interpolation between the
/// order statistics). JSON: `{"measure": "distanceToMeasure", "k": 10, "quantile": 0.95}`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Denoise {
    pub measure: DenoiseMeasure,
    /// Neighbours counted, the point itself first; at least 2.
    pub k: usize,
    /// In (0, 1): 0.95 sets aside about one row in twenty.
    pub quantile: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum DenoiseMeasure {
    /// sqrt of the mean squared distance to the k nearest points.
    DistanceToMeasure,
    /// The distance to the k-th nearest point.
    NeighbourDistance,
}

/// Most cells a product cover may have (intervals × intervals2), so that an unlucky
/// setting cannot ask for millions of empty elements.
pub const MAX_CELLS: usize = 250_000;

/// A derived column: `expression` over column names (see [`crate::derive`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Derived {
    pub name: String,
    pub expression: String,
}

fn default_seed() -> u64 {
    1
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum Scaling {
    /// Values as they are in the file.
    None,
    /// (x - mean) / standard deviation (population, ddof = 0; common practice).
    Zscore,
    /// (x - min) / (max - min).
    MinMax,
}

/// Numeric sentinels that mean "no value" (for example -9999, common practice in field
/// data). Applied after reading, so changing them never re-reads the file.
///
/// JSON: `{"fillValues": [-9999], "perColumn": {"depth": {"fillValues": [0], "policy": "median"}}}`.
/// A column listed in `perColumn` uses its own `fillValues` instead of the global list
/// (absent: the global list) and its own `policy` (absent: `"leaveOut"`). Per-column
/// entries apply to the points (coordinates and filter columns), to node statistics and to
/// the row condition (`keepRows`); derived-column inputs, column summaries and the contrast
/// ranking read the global list.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Missing {
    #[serde(default)]
    pub fill_values: Vec<f64>,
    #[serde(default, skip_serializing_if = "std::collections::BTreeMap::is_empty")]
    pub per_column: std::collections::BTreeMap<String, ColumnMissing>,
}

/// One column's missing-value rule (see [`Missing`]).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct ColumnMissing {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fill_values: Option<Vec<f64>>,
    #[serde(default)]
    pub policy: MissingPolicy,
}

/// What happens to a row with no value in a column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum MissingPolicy {
    /// The row takes no part, and is counted in `Summary.leftOutByColumn`.
    #[default]
    LeaveOut,
    /// The row takes the column's median over the table rows that have a value there
    /// (among the rows `keepRows` keeps, when there is a condition; NumPy's `median`: the mean of the two middle values for an even count), and is
    /// counted in `Summary.filledByColumn`.
    Median,
}

impl Missing {
    /// The values that mean "no value" in `column`.
    pub fn fills_for(&self, column: &str) -> &[f64] {
        match self.per_column.get(column).and_then(|c| c.fill_values.as_ref()) {
            Some(v) => v,
            None => &self.fill_values,
        }
    }

    pub fn policy_for(&self, column: &str) -> MissingPolicy {
        self.per_column.get(column).map_or(MissingPolicy::LeaveOut, |c| c.policy)
    }
}

/// The filter (lens) function.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "camelCase", rename_all_fields = "camelCase", deny_unknown_fields)]
pub enum Lens {
    /// One column's raw values (any numeric column, chosen or not).
    Column { column: String },
    /// Score on principal component `component` (1 = largest variance) of the scaled points.
    Principal { component: usize },
    /// Gaussian kernel density of the scaled points. `bandwidth` is the factor that
    /// multiplies the data covariance's square root, as in SciPy's `gaussian_kde`;
    /// `None` means Scott's rule, n^(-1/(d+4)).
    Density {
        #[serde(default)]
        bandwidth: Option<f64>,
    },
    /// Eccentricity (Singh, Mémoli, Carlsson 2007): how far a point lies from all others.
    Eccentricity {
        #[serde(default)]
        norm: Spread,
    },
    /// Distance to the empirical measure (Chazal, Cohen-Steiner, Mérigot 2011) with mass
    /// parameter m = k / n: the root mean square distance to the point's `k` nearest
    /// points, itself included (see [`crate::filter::knn`]).
    DistanceToMeasure { k: usize },
    /// Distance to the point's `k`-th nearest point, itself counted first (k = 1 gives 0).
    NeighbourDistance { k: usize },
    /// The largest distance to any point. This is eccentricity with p = infinity (Singh,
    /// Mémoli, Carlsson 2007), computed by the same code, under its usual name.
    LInfinityCentrality,
}

/// Which mean of the distances to all other points eccentricity takes
/// (the exponent p of Singh, Mémoli, Carlsson 2007).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum Spread {
    /// p = 1: the mean distance.
    Mean,
    /// p = 2: the root mean square distance (exact at any size).
    #[default]
    Rms,
    /// p = infinity: the largest distance.
    Max,
}

/// An interval cover of the lens's values: uniform (Singh, Mémoli, Carlsson 2007) or
/// balanced (equal numbers of rows); both are defined in [`crate::cover`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct CoverSettings {
    /// Number of intervals, at least 1.
    pub intervals: usize,
    /// Fraction of an interval's length shared with the next one, in [0, 1).
    pub overlap: f64,
    /// `"uniform"` (the default) or `"balanced"`.
    #[serde(default)]
    pub kind: CoverKind,
}

impl CoverSettings {
    /// A uniform cover with `intervals` intervals and overlap fraction `overlap`.
    pub fn uniform(intervals: usize, overlap: f64) -> Self {
        CoverSettings { intervals, overlap, kind: CoverKind::Uniform }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum CoverKind {
    /// Intervals of equal length over the lens's range.
    #[default]
    Uniform,
    /// Intervals holding equal numbers of rows: quantile edges.
    Balanced,
}

/// How rows inside one cover element are split into clusters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "camelCase", rename_all_fields = "camelCase", deny_unknown_fields)]
pub enum Clustering {
    /// DBSCAN (Ester, Kriegel, Sander, Xu 1996). `min_points` counts the point itself.
    Dbscan { eps: f64, min_points: usize },
    /// Single linkage, cut at the first empty bin of a histogram of merge heights with
    /// `gap_bins` bins (Singh, Mémoli, Carlsson 2007).
    SingleLinkage { gap_bins: usize },
}

/// When two nodes are joined: they share at least `min_shared` rows.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct EdgeRule {
    pub min_shared: usize,
}

impl Default for EdgeRule {
    fn default() -> Self {
        EdgeRule { min_shared: 1 }
    }
}

impl Settings {
    /// Settings with the given points, filter, cover and clustering, and plain choices for
    /// the rest: no scaling, the default missing-value rule, edges at one shared row, seed 1,
    /// no derived column, one filter. For scripts and tests that state only what matters.
    pub fn plain(columns: Vec<String>, lens: Lens, cover: CoverSettings, clustering: Clustering) -> Settings {
        Settings {
            version: SETTINGS_VERSION,
            columns,
            scaling: Scaling::None,
            missing: Missing::default(),
            lens,
            cover,
            clustering,
            edges: EdgeRule::default(),
            seed: 1,
            derived: Vec::new(),
            lens2: None,
            cover2: None,
            denoise: None,
            min_cluster_share: 0.0,
            keep_rows: None,
        }
    }

    /// Reads a settings document, refusing unknown fields and newer versions.
    pub fn from_json(text: &str) -> Result<Settings> {
        let value: serde_json::Value = serde_json::from_str(text)
            .map_err(|e| Error::settings("(document)", format!("not valid JSON: {e}")))?;
        Self::from_value(value)
    }

    /// Reads a settings document given as a JSON value. A document of an older version is
    /// read by that version's rules and held as the current version.
    pub fn from_value(value: serde_json::Value) -> Result<Settings> {
        let version = match value.get("version").and_then(|v| v.as_u64()) {
            None => return Err(Error::settings("version", format!("missing; this build reads versions 1 to {SETTINGS_VERSION}"))),
            Some(0) => return Err(Error::settings("version", format!("0 is not a version; this build reads versions 1 to {SETTINGS_VERSION}"))),
            Some(v) if v > SETTINGS_VERSION as u64 => {
                return Err(Error::settings(
                    "version",
                    format!("the file is version {v}, written by a newer Nervure; this build reads versions 1 to {SETTINGS_VERSION}"),
                ))
            }
            Some(v) => v as u32,
        };
        check_shape(&value, version)?;
        let mut s: Settings = serde_json::from_value(value).map_err(|e| Error::settings("(document)", e.to_string()))?;
        s.version = SETTINGS_VERSION;
        s.validate()?;
        Ok(s)
    }

    /// Reads a settings file's text, with messages that name the file: not JSON, nested
    /// deeper than any settings document (checked before parsing), a graph file instead
    /// of settings; then as [`Settings::from_json`].
    pub fn from_file_text(text: &str, file_name: &str) -> Result<Settings> {
        const MAX_DEPTH: usize = 16;
        let depth = crate::graphfile::json_depth(text);
        if depth > MAX_DEPTH {
            return Err(Error::settings(
                "(document)",
                format!("{file_name} nests {depth} levels deep, and a settings document nests at most {MAX_DEPTH}; choose a settings file saved by Nervure"),
            ));
        }
        let value: serde_json::Value = serde_json::from_str(text)
            .map_err(|e| Error::settings("(document)", format!("{file_name} is not JSON ({e}); choose a settings file saved by Nervure")))?;
        if value.get("format").and_then(|f| f.as_str()) == Some(crate::graphfile::GRAPH_FORMAT) {
            return Err(Error::settings("(document)", format!("{file_name} is a graph file, not a settings document: open it with Open graph…")));
        }
        Self::from_value(value)
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("settings always serialise")
    }

    /// Range checks that need no data. Checks against the table (do the columns exist?)
    /// happen when the points are built.
    pub fn validate(&self) -> Result<()> {
        if self.columns.is_empty() {
            return Err(Error::settings("columns", "choose at least one numeric column"));
        }
        check_cover(&self.cover, "cover")?;
        check_lens(&self.lens, "lens")?;
        match (&self.lens2, &self.cover2) {
            (None, Some(_)) => {
                return Err(Error::settings("cover2", "a second cover needs a second filter: set lens2 or remove cover2"))
            }
            (Some(l2), c2) => {
                check_lens(l2, "lens2")?;
                let c2 = c2.as_ref().unwrap_or(&self.cover);
                check_cover(c2, "cover2")?;
                let cells = self.cover.intervals.saturating_mul(c2.intervals);
                if cells > MAX_CELLS {
                    return Err(Error::settings(
                        "cover2.intervals",
                        format!("{} × {} = {cells} cells; at most {MAX_CELLS}: use fewer intervals on one filter", self.cover.intervals, c2.intervals),
                    ));
                }
            }
            (None, None) => {}
        }
        match &self.clustering {
            Clustering::Dbscan { eps, min_points } => {
                if !(*eps > 0.0) || !eps.is_finite() {
                    return Err(Error::settings("clustering.eps", format!("{eps} must be a positive number")));
                }
                if *min_points == 0 {
                    return Err(Error::settings("clustering.minPoints", "must be at least 1"));
                }
            }
            Clustering::SingleLinkage { gap_bins } => {
                if *gap_bins < 2 {
                    return Err(Error::settings("clustering.gapBins", "must be at least 2"));
                }
            }
        }
        if self.edges.min_shared == 0 {
            return Err(Error::settings("edges.minShared", "must be at least 1"));
        }
        if self.missing.fill_values.iter().any(|v| v.is_nan()) {
            return Err(Error::settings("missing.fillValues", "NaN is always missing; list numbers only"));
        }
        for (col, m) in &self.missing.per_column {
            if m.fill_values.as_ref().is_some_and(|v| v.iter().any(|x| x.is_nan())) {
                return Err(Error::settings(
                    format!("missing.perColumn.{col}.fillValues"),
                    "NaN is always missing; list numbers only",
                ));
            }
        }
        if !(0.0..=0.5).contains(&self.min_cluster_share) {
            return Err(Error::settings("minClusterShare", format!("{} is outside [0, 0.5]", self.min_cluster_share)));
        }
        if let Some(d) = &self.denoise {
            if d.k < 2 {
                return Err(Error::settings("denoise.k", "must be at least 2 (the point itself is its first neighbour)"));
            }
            if !(d.quantile > 0.0 && d.quantile < 1.0) {
                return Err(Error::settings("denoise.quantile", format!("{} is outside (0, 1); 0.95 sets aside about one row in twenty", d.quantile)));
            }
        }
        crate::derive::validate(&self.derived)?;
        if let Some(text) = &self.keep_rows {
            crate::subset::validate(text)?;
        }
        Ok(())
    }
}

/// Fields of the document and of its plain sub-objects, for naming an unknown field with
/// its place (serde's own message names the field but not where it is).
const KNOWN_FIELDS: [(&str, &[&str]); 6] = [
    (
        "",
        &[
            "version", "columns", "scaling", "missing", "lens", "cover", "clustering", "edges", "seed", "derived", "lens2", "cover2",
            "denoise", "minClusterShare", "keepRows",
        ],
    ),
    ("denoise", &["measure", "k", "quantile"]),
    ("cover", &["intervals", "overlap", "kind"]),
    ("cover2", &["intervals", "overlap", "kind"]),
    ("edges", &["minShared"]),
    ("missing", &["fillValues", "perColumn"]),
];

/// Whole-number fields, each at least 1 (`seed` at least 0).
const COUNT_FIELDS: [(&str, &str); 11] = [
    ("denoise", "k"),
    ("cover", "intervals"),
    ("cover2", "intervals"),
    ("lens", "k"),
    ("lens2", "component"),
    ("lens2", "k"),
    ("clustering", "minPoints"),
    ("clustering", "gapBins"),
    ("edges", "minShared"),
    ("lens", "component"),
    ("", "seed"),
];

/// Number fields.
const NUMBER_FIELDS: [(&str, &str); 7] = [
    ("cover", "overlap"),
    ("cover2", "overlap"),
    ("clustering", "eps"),
    ("lens", "bandwidth"),
    ("lens2", "bandwidth"),
    ("denoise", "quantile"),
    ("", "minClusterShare"),
];

fn path(parent: &str, field: &str) -> String {
    if parent.is_empty() {
        field.to_string()
    } else {
        format!("{parent}.{field}")
    }
}

/// Fields that came with a version after the first, and that version.
const LATER_FIELDS: [(&str, u32); 3] = [("denoise", 2), ("minClusterShare", 2), ("keepRows", 3)];

/// Checks, before serde reads the document, what serde would refuse without naming the
/// field's place: unknown fields (and fields newer than the document's `version`),
/// negative or fractional counts, text where a number goes.
fn check_shape(value: &serde_json::Value, version: u32) -> Result<()> {
    let obj = |parent: &str| if parent.is_empty() { value.as_object() } else { value.get(parent).and_then(|v| v.as_object()) };
    let Some(top) = value.as_object() else {
        return Err(Error::settings("(document)", format!("a settings document is a JSON object: {{ \"version\": {SETTINGS_VERSION}, ... }}")));
    };
    for (field, since) in LATER_FIELDS {
        if version < since && top.contains_key(field) {
            return Err(Error::settings(
                field,
                format!("came with settings version {since}, and this document says version {version}; write \"version\": {since}"),
            ));
        }
    }
    if let Some(v) = top.get("keepRows") {
        if !v.is_string() {
            return Err(Error::settings("keepRows", format!("{v} is not a condition; write it as text, as in \"depth > 2\"")));
        }
    }
    for (parent, known) in KNOWN_FIELDS {
        let Some(o) = obj(parent) else { continue };
        if let Some(k) = o.keys().find(|k| !known.contains(&k.as_str())) {
            return Err(Error::settings(
                path(parent, k),
                format!("unknown field; this build does not read it (fields: {})", known.join(", ")),
            ));
        }
    }
    for (parent, field) in COUNT_FIELDS {
        let Some(v) = obj(parent).and_then(|o| o.get(field)) else { continue };
        let least = if field == "seed" { 0 } else { 1 };
        if v.as_u64().is_none() && (v.is_number() || v.is_string() || v.is_boolean()) {
            if v.as_i64() == Some(0) {
                continue; // validate() words the zero case
            }
            return Err(Error::settings(
                path(parent, field),
                format!("{v} is not allowed; use a whole number of at least {least}"),
            ));
        }
    }
    for (parent, field) in NUMBER_FIELDS {
        let Some(v) = obj(parent).and_then(|o| o.get(field)) else { continue };
        if !v.is_number() && !(v.is_null() && field == "bandwidth") {
            return Err(Error::settings(path(parent, field), format!("{v} is not a number")));
        }
    }
    Ok(())
}

fn check_cover(c: &CoverSettings, field: &str) -> Result<()> {
    if c.intervals == 0 {
        return Err(Error::settings(format!("{field}.intervals"), "must be at least 1"));
    }
    if c.intervals > 10_000 {
        return Err(Error::settings(format!("{field}.intervals"), "at most 10000"));
    }
    let g = c.overlap;
    if !(0.0..1.0).contains(&g) || g.is_nan() {
        return Err(Error::settings(format!("{field}.overlap"), format!("{g} is outside [0, 1)")));
    }
    Ok(())
}

fn check_lens(l: &Lens, field: &str) -> Result<()> {
    match l {
        Lens::Principal { component } if *component == 0 => {
            Err(Error::settings(format!("{field}.component"), "components are counted from 1"))
        }
        Lens::Density { bandwidth: Some(b) } if !(*b > 0.0) || !b.is_finite() => {
            Err(Error::settings(format!("{field}.bandwidth"), format!("{b} must be a positive number")))
        }
        Lens::DistanceToMeasure { k } | Lens::NeighbourDistance { k } if *k == 0 => {
            Err(Error::settings(format!("{field}.k"), "must be at least 1 (the point itself counts as its first neighbour)"))
        }
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Settings {
        Settings {
            version: SETTINGS_VERSION,
            columns: vec!["a".into(), "b".into()],
            scaling: Scaling::Zscore,
            missing: Missing { fill_values: vec![-9999.0], ..Default::default() },
            lens: Lens::Principal { component: 1 },
            cover: CoverSettings::uniform(10, 0.3),
            clustering: Clustering::Dbscan { eps: 0.5, min_points: 5 },
            edges: EdgeRule { min_shared: 1 },
            seed: 1,
            derived: vec![Derived { name: "ratio".into(), expression: "a / b".into() }],
            lens2: None,
            cover2: None,
            denoise: None,
            min_cluster_share: 0.0,
            keep_rows: None,
        }
    }

    #[test]
    fn round_trips_through_json() {
        let s = sample();
        assert_eq!(Settings::from_json(&s.to_json()).unwrap(), s);
    }

    #[test]
    fn refuses_unknown_fields_and_names_them() {
        let mut v: serde_json::Value = serde_json::from_str(&sample().to_json()).unwrap();
        v["colour"] = serde_json::json!("red");
        let e = Settings::from_value(v).unwrap_err().to_string();
        assert!(e.contains("colour"), "{e}");
    }

    #[test]
    fn field_names_inside_kinds_are_camel_case() {
        let s = sample();
        assert!(s.to_json().contains("\"minPoints\": 5"), "{}", s.to_json());
        let text = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"density","bandwidth":null},
            "cover":{"intervals":3,"overlap":0.2},"clustering":{"kind":"singleLinkage","gapBins":8}}"#;
        let t = Settings::from_json(text).unwrap();
        assert_eq!(t.clustering, Clustering::SingleLinkage { gap_bins: 8 });
        assert_eq!(t.edges.min_shared, 1);
    }

    #[test]
    fn refuses_newer_version() {
        let mut v: serde_json::Value = serde_json::from_str(&sample().to_json()).unwrap();
        v["version"] = serde_json::json!(SETTINGS_VERSION + 1);
        let e = Settings::from_value(v).unwrap_err().to_string();
        assert!(e.contains("newer") && e.contains(&format!("versions 1 to {SETTINGS_VERSION}")), "{e}");
    }

    #[test]
    fn a_row_condition_round_trips_and_older_documents_still_read() {
        // With and without a condition.
        let mut s = sample();
        s.keep_rows = Some("station in (\"north\", 'ridge') and hour(time) >= 6".into());
        let text = s.to_json();
        assert!(text.contains("\"keepRows\": \"station in (\\\"north\\\", 'ridge') and hour(time) >= 6\""), "{text}");
        assert_eq!(Settings::from_json(&text).unwrap(), s);
        assert!(!sample().to_json().contains("keepRows"), "no condition writes no field");
        // A version 1 document (written before conditions existed) reads, keeps every row,
        // and is held (and written back) as the current version.
        let old = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"principal","component":1},
            "cover":{"intervals":3,"overlap":0.2},"clustering":{"kind":"singleLinkage","gapBins":8}}"#;
        let t = Settings::from_json(old).unwrap();
        assert_eq!((t.version, t.keep_rows.clone()), (3, None));
        assert!(t.to_json().contains("\"version\": 3"));
        // A document cannot carry a field of a later version: keepRows came with version 3.
        let mut v: serde_json::Value = serde_json::from_str(old).unwrap();
        v["keepRows"] = serde_json::json!("a > 0");
        let e = Settings::from_value(v.clone()).unwrap_err().to_string();
        assert!(e.starts_with("setting 'keepRows': came with settings version 3, and this document says version 1"), "{e}");
        v["version"] = serde_json::json!(2);
        assert!(Settings::from_value(v.clone()).unwrap_err().to_string().contains("this document says version 2; write \"version\": 3"));
        v["version"] = serde_json::json!(3);
        assert_eq!(Settings::from_value(v.clone()).unwrap().keep_rows.as_deref(), Some("a > 0"));
        // Unknown fields are still refused, naming the field; the condition must be text.
        v["keepRowz"] = serde_json::json!("a > 0");
        assert!(Settings::from_value(v.clone()).unwrap_err().to_string().contains("'keepRowz': unknown field"));
        v.as_object_mut().unwrap().remove("keepRowz");
        v["keepRows"] = serde_json::json!(["a > 0"]);
        assert!(Settings::from_value(v.clone()).unwrap_err().to_string().contains("'keepRows': [\"a > 0\"] is not a condition"));
        // A blank or malformed condition is refused with the caret message.
        v["keepRows"] = serde_json::json!(" ");
        assert!(Settings::from_value(v.clone()).unwrap_err().to_string().contains("leave keepRows out"));
        v["keepRows"] = serde_json::json!("a >= 2 and or b");
        let e = Settings::from_value(v).unwrap_err().to_string();
        assert_eq!(e, "setting 'keepRows': a >= 2 and or b\n           ^^ expected a column name, a number or a value here, found the word 'or' (quote a column of that name: \"or\")");
    }

    #[test]
    fn version_2_fields_round_trip_and_version_1_documents_still_read() {
        let mut s = sample();
        s.denoise = Some(Denoise { measure: DenoiseMeasure::DistanceToMeasure, k: 10, quantile: 0.95 });
        s.min_cluster_share = 0.02;
        let text = s.to_json();
        assert!(text.contains("\"denoise\"") && text.contains("\"distanceToMeasure\"") && text.contains("\"minClusterShare\": 0.02"), "{text}");
        assert_eq!(Settings::from_json(&text).unwrap(), s);
        // Neither field is written when unused.
        assert!(!sample().to_json().contains("denoise") && !sample().to_json().contains("minClusterShare"));
        let old = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"principal","component":1},
            "cover":{"intervals":3,"overlap":0.2},"clustering":{"kind":"dbscan","eps":0.5,"minPoints":5}}"#;
        let t = Settings::from_json(old).unwrap();
        assert_eq!((t.version, t.denoise.clone(), t.min_cluster_share), (SETTINGS_VERSION, None, 0.0), "held as the current version");
        let err = |v: serde_json::Value| Settings::from_value(v).unwrap_err().to_string();
        let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
        v["denoise"]["quantile"] = serde_json::json!(1.0);
        assert!(err(v).contains("'denoise.quantile'"));
        let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
        v["denoise"]["k"] = serde_json::json!(1);
        assert!(err(v).contains("'denoise.k'"));
        let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
        v["denoise"]["radius"] = serde_json::json!(1);
        assert!(err(v).contains("denoise.radius"));
        let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
        v["minClusterShare"] = serde_json::json!(0.7);
        assert!(err(v).contains("'minClusterShare'"));
    }

    #[test]
    fn validates_ranges_naming_the_field() {
        let mut s = sample();
        s.cover.overlap = 1.0;
        assert!(s.validate().unwrap_err().to_string().contains("cover.overlap"));
        let mut s = sample();
        s.cover.intervals = 0;
        assert!(s.validate().unwrap_err().to_string().contains("cover.intervals"));
        let mut s = sample();
        s.clustering = Clustering::Dbscan { eps: 0.0, min_points: 3 };
        assert!(s.validate().unwrap_err().to_string().contains("clustering.eps"));
    }

    #[test]
    fn derived_columns_default_to_none_and_are_checked() {
        let text = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"principal","component":1},
            "cover":{"intervals":3,"overlap":0.2},"clustering":{"kind":"singleLinkage","gapBins":8}}"#;
        assert!(Settings::from_json(text).unwrap().derived.is_empty());
        let mut s = sample();
        s.derived[0].expression = "a / (b".into();
        let e = s.validate().unwrap_err().to_string();
        assert!(e.contains("derived[0].expression") && e.contains("a / (b\n      ^"), "{e}");
        let mut s = sample();
        s.derived.push(s.derived[0].clone());
        assert!(s.validate().unwrap_err().to_string().contains("derived[1].name"));
        let mut v: serde_json::Value = serde_json::from_str(&sample().to_json()).unwrap();
        v["derived"][0]["formula"] = serde_json::json!("a");
        assert!(Settings::from_value(v).unwrap_err().to_string().contains("formula"));
    }

    #[test]
    fn new_fields_round_trip_and_default() {
        let mut s = sample();
        s.lens = Lens::DistanceToMeasure { k: 12 };
        s.lens2 = Some(Lens::LInfinityCentrality);
        s.cover2 = Some(CoverSettings { intervals: 4, overlap: 0.2, kind: CoverKind::Balanced });
        s.missing.per_column.insert("b".into(), ColumnMissing { fill_values: Some(vec![0.0]), policy: MissingPolicy::Median });
        let text = s.to_json();
        assert!(text.contains("\"kind\": \"distanceToMeasure\"") && text.contains("\"kind\": \"lInfinityCentrality\""), "{text}");
        assert!(text.contains("\"perColumn\"") && text.contains("\"policy\": \"median\"") && text.contains("\"kind\": \"balanced\""), "{text}");
        assert_eq!(Settings::from_json(&text).unwrap(), s);
        // Documents written before these fields existed still read, with the defaults.
        let old = r#"{"version":1,"columns":["a"],"scaling":"none","lens":{"kind":"neighbourDistance","k":3},
            "missing":{"fillValues":[-1],"perColumn":{"a":{}}},
            "cover":{"intervals":3,"overlap":0.2},"clustering":{"kind":"singleLinkage","gapBins":8}}"#;
        let t = Settings::from_json(old).unwrap();
        assert_eq!(t.cover.kind, CoverKind::Uniform);
        assert_eq!((t.lens2.clone(), t.cover2.clone()), (None, None));
        assert_eq!(t.missing.policy_for("a"), MissingPolicy::LeaveOut);
        assert_eq!(t.missing.fills_for("a"), &[-1.0]);
        // One filter writes no lens2 / cover2 / perColumn fields at all.
        assert!(!sample().to_json().contains("lens2") && !sample().to_json().contains("perColumn"));
    }

    #[test]
    fn new_fields_are_checked_naming_the_field() {
        let err = |s: &Settings| s.validate().unwrap_err().to_string();
        let mut s = sample();
        s.lens = Lens::NeighbourDistance { k: 0 };
        assert!(err(&s).contains("'lens.k'"), "{}", err(&s));
        let mut s = sample();
        s.lens2 = Some(Lens::DistanceToMeasure { k: 0 });
        assert!(err(&s).contains("'lens2.k'"), "{}", err(&s));
        let mut s = sample();
        s.cover2 = Some(CoverSettings::uniform(3, 0.1));
        assert!(err(&s).contains("'cover2'") && err(&s).contains("lens2"), "{}", err(&s));
        let mut s = sample();
        s.lens2 = Some(Lens::Principal { component: 2 });
        s.cover2 = Some(CoverSettings::uniform(3, 1.5));
        assert!(err(&s).contains("'cover2.overlap'"), "{}", err(&s));
        s.cover2 = Some(CoverSettings::uniform(1000, 0.1));
        s.cover.intervals = 1000;
        assert!(err(&s).contains("'cover2.intervals'") && err(&s).contains("1000000 cells"), "{}", err(&s));
        s.cover2 = None;
        s.cover.intervals = 10;
        assert!(s.validate().is_ok(), "cover2 absent means the same as cover");
        let mut s = sample();
        s.missing.per_column.insert("b".into(), ColumnMissing { fill_values: Some(vec![f64::NAN]), policy: MissingPolicy::LeaveOut });
        assert!(err(&s).contains("'missing.perColumn.b.fillValues'"), "{}", err(&s));
        let mut v: serde_json::Value = serde_json::from_str(&sample().to_json()).unwrap();
        v["cover"]["kind"] = serde_json::json!("quantile");
        assert!(Settings::from_value(v).unwrap_err().to_string().contains("quantile"));
        let mut v: serde_json::Value = serde_json::from_str(&sample().to_json()).unwrap();
        v["missing"]["perColumn"] = serde_json::json!({"b": {"policy": "mean"}});
        assert!(Settings::from_value(v).unwrap_err().to_string().contains("mean"));
    }
}
