//! One file of any format the page reads, told apart by its content (never by its name):
//! a zip archive is a spreadsheet ([`super::sheet`]), a first line `<n>, 1001` is ICARTT
//! ([`super::icartt`]), anything else is delimited text ([`super::TableReader`], streamed).
//!
//! CSV streams chunk by chunk; ICARTT and spreadsheets are held until the end (their
//! headers or zip directories decide how to read what comes before them), which is fine
//! for the sizes those files have. What it is not: the merge of several files
//! ([`super::merge`]).

use super::merge::{Part, ReadNote};
use super::{icartt, sheet, ReadOptions, TableReader};
use crate::error::Result;

/// Bytes held before deciding the format when the first line is longer than a chunk.
const DECIDE_BYTES: usize = 4096;

enum State {
    Undecided(Vec<u8>),
    Csv(TableReader),
    Icartt(Vec<u8>),
    Sheet(Vec<u8>),
}

/// Reads one file pushed in chunks, in order.
pub struct Ingest {
    name: String,
    /// Options of the CSV reader (the other formats have their own rules).
    options: ReadOptions,
    state: State,
    /// The file's size when known (see [`TableReader::expect_bytes`]); 0 otherwise.
    expected_bytes: u64,
}

impl Ingest {
    pub fn new(name: &str, options: ReadOptions) -> Self {
        Ingest { name: name.to_string(), options, state: State::Undecided(Vec::new()), expected_bytes: 0 }
    }

    /// The file's size in bytes, when known: a CSV file's columns are sized for it.
    pub fn expect_bytes(&mut self, total: u64) {
        self.expected_bytes = total;
        if let State::Csv(r) = &mut self.state {
            r.expect_bytes(total);
        }
    }

    pub fn push(&mut self, chunk: &[u8]) -> Result<()> {
        match &mut self.state {
            State::Undecided(head) => {
                head.extend_from_slice(chunk);
                let has_line = head.iter().any(|&b| b == b'\n' || b == b'\r');
                if has_line || head.len() >= DECIDE_BYTES {
                    self.decide()?;
                }
                Ok(())
            }
            State::Csv(r) => r.push(chunk),
            State::Icartt(b) | State::Sheet(b) => {
                b.extend_from_slice(chunk);
                Ok(())
            }
        }
    }

    fn decide(&mut self) -> Result<()> {
        let State::Undecided(head) = std::mem::replace(&mut self.state, State::Icartt(Vec::new())) else { return Ok(()) };
        self.state = if sheet::looks_like(&head) {
            State::Sheet(head)
        } else if icartt::looks_like(&head) {
            State::Icartt(head)
        } else {
            let mut r = TableReader::new(&self.name, self.options.clone());
            r.expect_bytes(self.expected_bytes);
            r.push(&head)?;
            State::Csv(r)
        };
        Ok(())
    }

    /// Ends the file; `sheet` names the sheet of a spreadsheet (the first when `None`).
    pub fn finish(mut self, sheet_name: Option<&str>) -> Result<Part> {
        if matches!(self.state, State::Undecided(_)) {
            self.decide()?;
        }
        match self.state {
            State::Undecided(_) => unreachable!("decided above"),
            State::Csv(r) => {
                let (table, report) = r.finish_with_report()?;
                let note = ReadNote { format: "csv".into(), notes: report.notices, encoding: report.encoding, ..Default::default() };
                Ok(Part { table, note, raw: None })
            }
            State::Icartt(bytes) => {
                let (table, note) = icartt::read(&self.name, &bytes)?;
                Ok(Part { table, note, raw: None })
            }
            State::Sheet(bytes) => {
                let (table, note) = sheet::read(&self.name, &bytes, sheet_name)?;
                Ok(Part { table, note, raw: Some(bytes) })
            }
        }
    }
}

/// Reads one file from disk as the page reads a dropped file (native builds only): in
/// chunks of 1 MiB, its columns sized from the file's size, named by its file name.
/// `sheet` names a workbook's sheet (the first when `None`). `progress(bytes, total)` is
/// called after each chunk.
#[cfg(not(target_arch = "wasm32"))]
pub fn read_path(path: &std::path::Path, options: ReadOptions, sheet: Option<&str>, progress: &mut dyn FnMut(u64, u64)) -> Result<Part> {
    use std::io::Read;
    let shown = path.display();
    let cannot = |what: &str, e: std::io::Error| crate::error::Error::Input(format!("cannot {what} {shown}: {e}"));
    let name = path.file_name().map_or_else(|| shown.to_string(), |n| n.to_string_lossy().into_owned());
    let mut file = std::fs::File::open(path).map_err(|e| cannot("open", e))?;
    let total = file.metadata().map(|m| m.len()).unwrap_or(0);
    if file.metadata().is_ok_and(|m| m.is_dir()) {
        return Err(crate::error::Error::Input(format!("{shown} is a folder; give the data files in it")));
    }
    let mut ingest = Ingest::new(&name, options);
    ingest.expect_bytes(total);
    let mut buf = vec![0u8; 1 << 20];
    let mut done = 0u64;
    loop {
        let k = file.read(&mut buf).map_err(|e| cannot("read", e))?;
        if k == 0 {
            break;
        }
        ingest.push(&buf[..k])?;
        done += k as u64;
        progress(done, total);
    }
    ingest.finish(sheet)
}

/// Re-reads a kept spreadsheet with another sheet.
pub fn choose_sheet(part: &Part, sheet_name: &str) -> Result<Part> {
    let bytes = part.raw.as_ref().ok_or_else(|| {
        crate::error::Error::Input(format!("{} is not a spreadsheet: it has no sheets to choose from", part.table.name))
    })?;
    let (table, note) = sheet::read(&part.table.name, bytes, Some(sheet_name))?;
    Ok(Part { table, note, raw: part.raw.clone() })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_in_small_chunks_is_read_as_csv() {
        let mut i = Ingest::new("a.csv", ReadOptions::default());
        for b in b"x,y\n1,2\n3,4\n".chunks(2) {
            i.push(b).unwrap();
        }
        let p = i.finish(None).unwrap();
        assert_eq!((p.note.format.as_str(), p.table.n_rows), ("csv", 2));
    }

    #[test]
    fn icartt_is_told_by_content_whatever_the_name() {
        let text = std::fs::read(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/icartt/v2_ozone.ict")).unwrap();
        let mut i = Ingest::new("renamed.csv", ReadOptions::default());
        for b in text.chunks(7) {
            i.push(b).unwrap();
        }
        let p = i.finish(None).unwrap();
        assert_eq!(p.note.format, "icartt");
        assert_eq!(p.table.column("O3").unwrap().unit.as_deref(), Some("ppbv"));
    }
}
