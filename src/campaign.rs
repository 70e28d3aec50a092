//! The page's file list as one value: the files loaded (kept one by one, so any can be
//! removed or re-read with another sheet), and an optional plan that splits them into a
//! measurement table and a model table aligned on time. [`Campaign::assemble`] gives the
//! table the graph is built from, with every report the page shows.
//!
//! What it is not: a reader ([`crate::table::ingest`]), a merger ([`crate::table::merge`]) or
//! an aligner ([`crate::align`]); it only decides which of them runs on which files.

use serde::{Deserialize, Serialize};

use crate::align::{self, AlignReport, AlignSpec};
use crate::error::{Error, Result};
use crate::settings::Derived;
use crate::table::ingest;
use crate::table::merge::{FileReport, FileSet, Part};
use crate::table::{ColumnSummary, Table};

/// Which files are measurements, which are the model, and how to align them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Plan {
    pub measurement: Vec<String>,
    pub model: Vec<String>,
    pub align: AlignSpec,
}

/// Everything the file list shows.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CampaignInfo {
    pub files: Vec<FileReport>,
    pub plan: Option<Plan>,
    pub alignment: Option<AlignReport>,
    /// Measurement-minus-model derived columns offered after an alignment.
    pub differences: Vec<Derived>,
}

#[derive(Debug, Clone, Default)]
pub struct Campaign {
    files: FileSet,
    plan: Option<Plan>,
    info: Option<CampaignInfo>,
}

fn merged_name(names: &[&str]) -> String {
    match names {
        [one] => one.to_string(),
        many => format!("{} files", many.len()),
    }
}

impl Campaign {
    pub fn new() -> Self {
        Self::default()
    }

    pub fn files(&self) -> &FileSet {
        &self.files
    }

    /// Drops every file and the plan.
    pub fn clear(&mut self) {
        *self = Campaign::default();
    }

    /// Adds a file read by [`ingest::Ingest`]; one of the same name is replaced.
    pub fn add(&mut self, part: Part) {
        self.files.add(part);
    }

    /// Removes a file; it leaves the plan too, and a plan left without measurement or
    /// model files is dropped.
    pub fn remove(&mut self, name: &str) -> Result<()> {
        self.files.remove(name)?;
        if let Some(p) = &mut self.plan {
            p.measurement.retain(|n| n != name);
            p.model.retain(|n| n != name);
            if p.measurement.is_empty() || p.model.is_empty() {
                self.plan = None;
            }
        }
        Ok(())
    }

    /// Reads another sheet of a loaded spreadsheet.
    pub fn choose_sheet(&mut self, name: &str, sheet: &str) -> Result<()> {
        let part = self.files.get(name).ok_or_else(|| Error::Input(format!("no file named '{name}' is loaded")))?;
        let again = ingest::choose_sheet(part, sheet)?;
        self.files.add(again);
        Ok(())
    }

    /// Sets or clears the alignment plan (checked against the files when assembled).
    pub fn set_plan(&mut self, plan: Option<Plan>) -> Result<()> {
        if let Some(p) = &plan {
            if p.measurement.is_empty() {
                return Err(Error::settings("plan.measurement", "choose at least one measurement file"));
            }
            if p.model.is_empty() {
                return Err(Error::settings("plan.model", "choose at least one model file"));
            }
            if let Some(n) = p.measurement.iter().find(|n| p.model.contains(n)) {
                return Err(Error::settings("plan.model", format!("'{n}' is chosen as both measurement and model; choose it once")));
            }
        }
        self.plan = plan;
        Ok(())
    }

    /// Column summaries of the named files merged (for the alignment dialog's choices).
    pub fn columns_of(&self, names: &[String]) -> Result<Vec<ColumnSummary>> {
        Ok(self.files.merged(names, "")?.0.summaries(&[]))
    }

    /// The table to build graphs from: every file merged, or with a plan the measurement
    /// files merged and the model files merged and aligned onto them.
    pub fn assemble(&mut self) -> Result<Table> {
        let all_names: Vec<&str> = self.files.parts().iter().map(|p| p.table.name.as_str()).collect();
        let (all, files) = self.files.merged(&[], &merged_name(&all_names))?;
        let Some(plan) = self.plan.clone() else {
            self.info = Some(CampaignInfo { files, plan: None, alignment: None, differences: Vec::new() });
            return Ok(all);
        };
        drop(all);
        let names = |v: &[String]| merged_name(&v.iter().map(String::as_str).collect::<Vec<_>>());
        let (meas, _) = self.files.merged(&plan.measurement, &names(&plan.measurement))?;
        let (model, _) = self.files.merged(&plan.model, &names(&plan.model))?;
        let (mut table, report) = align::align(&meas, &model, &plan.align)?;
        table.name = format!("{} + {}", meas.name, model.name);
        let taken: Vec<&str> = table.columns.iter().map(|c| c.name.as_str()).collect();
        let differences = align::differences(&report.pairs, &taken);
        self.info = Some(CampaignInfo { files, plan: Some(plan), alignment: Some(report), differences });
        Ok(table)
    }

    /// What the last [`Campaign::assemble`] found.
    pub fn info(&self) -> Option<&CampaignInfo> {
        self.info.as_ref()
    }
}

/// Reads files from disk into a file list as the page reads them when they are dropped
/// together (native builds only): each told apart by content, stacked with a
/// `source_file` column when there are several, and with `align` the files named in
/// `model` (by path or file name) aligned onto the others. `progress(file name, bytes,
/// total)` follows the reading.
#[cfg(not(target_arch = "wasm32"))]
pub fn from_paths(
    paths: &[std::path::PathBuf],
    model: &[std::path::PathBuf],
    align: Option<AlignSpec>,
    sheet: Option<&str>,
    progress: &mut dyn FnMut(&str, u64, u64),
) -> Result<Campaign> {
    let name_of = |p: &std::path::Path| p.file_name().map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned());
    let mut c = Campaign::new();
    let mut names: Vec<String> = Vec::new();
    for p in paths.iter().chain(model) {
        let name = name_of(p);
        if names.contains(&name) {
            return Err(Error::Input(format!(
                "two files are named '{name}'; files are told apart by name (as in the page's file list): rename one"
            )));
        }
        let part = ingest::read_path(p, crate::table::ReadOptions::default(), sheet, &mut |done, total| progress(&name, done, total))?;
        names.push(name);
        c.add(part);
    }
    match (model.is_empty(), align) {
        (true, None) => {}
        (true, Some(_)) => return Err(Error::settings("align", "an alignment needs model files: name them with the model option")),
        (false, None) => return Err(Error::settings("align", "model files are aligned on time: give the alignment (time columns and method)")),
        (false, Some(spec)) => {
            let measurement = paths.iter().map(|p| name_of(p)).collect();
            let model = model.iter().map(|p| name_of(p)).collect();
            c.set_plan(Some(Plan { measurement, model, align: spec }))?;
        }
    }
    Ok(c)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::align::Method;
    use crate::table::ingest::Ingest;

    fn add(c: &mut Campaign, name: &str, text: &str) {
        let mut i = Ingest::new(name, crate::table::ReadOptions::default());
        i.push(text.as_bytes()).unwrap();
        c.add(i.finish(None).unwrap());
    }

    #[test]
    fn stations_merged_then_aligned_with_a_model_gives_differences() {
        let mut c = Campaign::new();
        add(&mut c, "up.csv", "t,station,temp\n0,up,10\n3600,up,12\n");
        add(&mut c, "down.csv", "t,station,temp\n0,down,20\n3600,down,21\n");
        add(&mut c, "model.csv", "t,station,temp\n0,up,9\n10800,up,15\n0,down,19\n10800,down,25\n");
        assert_eq!(c.assemble().unwrap().n_rows, 8);
        let plan = Plan {
            measurement: vec!["up.csv".into(), "down.csv".into()],
            model: vec!["model.csv".into()],
            align: AlignSpec {
                measurement_time: "t".into(),
                model_time: "t".into(),
                measurement_key: Some("station".into()),
                model_key: Some("station".into()),
                method: Method::Linear { max_gap: None },
                prefix: "model_".into(),
            },
        };
        c.set_plan(Some(plan)).unwrap();
        let t = c.assemble().unwrap();
        assert_eq!(t.n_rows, 4);
        assert_eq!(t.numbers("model_temp", "").unwrap(), &[9.0, 11.0, 19.0, 21.0]);
        let info = c.info().unwrap();
        assert_eq!(info.differences[0].name, "diff_temp");
        assert_eq!(info.differences[0].expression, "\"temp\" - \"model_temp\"");
        let (with, _) = crate::derive::with_derived(&t, &info.differences, &[]).unwrap();
        assert_eq!(with.numbers("diff_temp", "").unwrap(), &[1.0, 1.0, 1.0, 0.0]);
        c.remove("model.csv").unwrap();
        assert!(c.info().is_some());
        assert_eq!(c.assemble().unwrap().n_rows, 4);
        assert!(c.info().unwrap().plan.is_none(), "the plan leaves with its model file");
    }

    #[test]
    fn a_file_in_both_roles_is_refused() {
        let mut c = Campaign::new();
        let spec = AlignSpec {
            measurement_time: "t".into(),
            model_time: "t".into(),
            measurement_key: None,
            model_key: None,
            method: Method::Nearest { tolerance: None },
            prefix: "model_".into(),
        };
        let e = c.set_plan(Some(Plan { measurement: vec!["a".into()], model: vec!["a".into()], align: spec })).unwrap_err();
        assert!(e.to_string().contains("both"), "{e}");
    }
}
