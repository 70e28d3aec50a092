//! The settings document: one versioned JSON value that drives the page, the
//! command-line runner and the tests, so any graph a user sees can be rebuilt from a file.
//!
//! Every field has a concrete value (automatic choices are resolved by [`crate::auto`]
//! before they are written here), unknown fields are refused, and [`Settings::validate`]
//! checks ranges before any work starts, naming the field at fault.

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// The settings format this build writes and reads.
pub const SETTINGS_VERSION: u32 = 1;

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
}

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
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Missing {
    #[serde(default)]
    pub fill_values: Vec<f64>,
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

/// The uniform interval cover of the lens's range (Singh, Mémoli, Carlsson 2007).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct CoverSettings {
    /// Number of intervals, at least 1.
    pub intervals: usize,
    /// Fraction of an interval's length shared with the next one, in [0, 1).
    pub overlap: f64,
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
    /// Reads a settings document, refusing unknown fields and newer versions.
    pub fn from_json(text: &str) -> Result<Settings> {
        let value: serde_json::Value = serde_json::from_str(text)
            .map_err(|e| Error::settings("(document)", format!("not valid JSON: {e}")))?;
        Self::from_value(value)
    }

    pub fn from_value(value: serde_json::Value) -> Result<Settings> {
        match value.get("version").and_then(|v| v.as_u64()) {
            None => return Err(Error::settings("version", "missing; this build reads version 1")),
            Some(v) if v as u32 > SETTINGS_VERSION => {
                return Err(Error::settings(
                    "version",
                    format!("the file is version {v}, written by a newer Nervure; this build reads version {SETTINGS_VERSION}"),
                ))
            }
            _ => {}
        }
        check_shape(&value)?;
        let s: Settings = serde_json::from_value(value).map_err(|e| Error::settings("(document)", e.to_string()))?;
        s.validate()?;
        Ok(s)
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
        if self.cover.intervals == 0 {
            return Err(Error::settings("cover.intervals", "must be at least 1"));
        }
        if self.cover.intervals > 10_000 {
            return Err(Error::settings("cover.intervals", "at most 10000"));
        }
        let g = self.cover.overlap;
        if !(0.0..1.0).contains(&g) || g.is_nan() {
            return Err(Error::settings("cover.overlap", format!("{g} is outside [0, 1)")));
        }
        match &self.lens {
            Lens::Principal { component } if *component == 0 => {
                return Err(Error::settings("lens.component", "components are counted from 1"))
            }
            Lens::Density { bandwidth: Some(b) } if !(*b > 0.0) || !b.is_finite() => {
                return Err(Error::settings("lens.bandwidth", format!("{b} must be a positive number")))
            }
            _ => {}
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
        crate::derive::validate(&self.derived)?;
        Ok(())
    }
}

/// Fields of the document and of its plain sub-objects, for naming an unknown field with
/// its place (serde's own message names the field but not where it is).
const KNOWN_FIELDS: [(&str, &[&str]); 4] = [
    ("", &["version", "columns", "scaling", "missing", "lens", "cover", "clustering", "edges", "seed", "derived"]),
    ("cover", &["intervals", "overlap"]),
    ("edges", &["minShared"]),
    ("missing", &["fillValues"]),
];

/// Whole-number fields, each at least 1 (`seed` at least 0).
const COUNT_FIELDS: [(&str, &str); 6] = [
    ("cover", "intervals"),
    ("clustering", "minPoints"),
    ("clustering", "gapBins"),
    ("edges", "minShared"),
    ("lens", "component"),
    ("", "seed"),
];

/// Number fields.
const NUMBER_FIELDS: [(&str, &str); 3] = [("cover", "overlap"), ("clustering", "eps"), ("lens", "bandwidth")];

fn path(parent: &str, field: &str) -> String {
    if parent.is_empty() {
        field.to_string()
    } else {
        format!("{parent}.{field}")
    }
}

/// Checks, before serde reads the document, what serde would refuse without naming the
/// field's place: unknown fields, negative or fractional counts, text where a number goes.
fn check_shape(value: &serde_json::Value) -> Result<()> {
    let obj = |parent: &str| if parent.is_empty() { value.as_object() } else { value.get(parent).and_then(|v| v.as_object()) };
    if value.as_object().is_none() {
        return Err(Error::settings("(document)", "a settings document is a JSON object: { \"version\": 1, ... }"));
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

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Settings {
        Settings {
            version: 1,
            columns: vec!["a".into(), "b".into()],
            scaling: Scaling::Zscore,
            missing: Missing { fill_values: vec![-9999.0] },
            lens: Lens::Principal { component: 1 },
            cover: CoverSettings { intervals: 10, overlap: 0.3 },
            clustering: Clustering::Dbscan { eps: 0.5, min_points: 5 },
            edges: EdgeRule { min_shared: 1 },
            seed: 1,
            derived: vec![Derived { name: "ratio".into(), expression: "a / b".into() }],
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
        v["version"] = serde_json::json!(2);
        let e = Settings::from_value(v).unwrap_err().to_string();
        assert!(e.contains("newer"), "{e}");
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
}
