//! Streaming CSV reader: bytes in any chunks, in file order, to a typed [`Table`].
//!
//! Parsing is RFC 4180 as implemented by `csv-core`: quoted fields, doubled quotes inside
//! them, CR, LF and CRLF line ends, a UTF-8 byte-order mark dropped. Chunk boundaries may fall
//! anywhere (inside a quoted field, a CRLF or a multi-byte character): `csv-core` keeps its
//! state between calls and each record is typed only once it is whole (lines with no quote
//! are split without it, to the same fields: [`Body::plain_lines`]). The first row is the
//! header; typing rules live in [`super::cells`], delimiter guessing in [`super::sniff`],
//! other encodings in [`super::encoding`].
//!
//! Encodings (this project's rules): a file that starts with a UTF-16 byte-order mark, or
//! whose first bytes are ASCII with a NUL beside every character, is decoded from UTF-16 as
//! it streams; otherwise the bytes are parsed as they are, and a cell (or header name) that
//! is not valid UTF-8 is read as Windows-1252 (Latin-1). Either is said in a notice.
//!
//! This module does not choose columns, fill values or scale anything ([`crate::points`]
//! does), and it does not read files: the page and the command-line runner push bytes.
//!
//! Conventions (this project's): data rows are counted from 1 after the header, skipping
//! blank lines; a line holding only spaces or tabs counts as blank when the table has more
//! than one column; a last line without a line end is read like any other.

use csv_core::{ReadRecordResult, Reader, ReaderBuilder};

use super::cells::{fast_number_prefix, in_number_alphabet, trim, ColumnBuilder, MissingTokens};
use super::encoding::{self, Utf16Decoder};
use super::sniff::{self, Sniffer};
use super::Table;
use crate::error::{Error, Result};

/// How text becomes a table.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Cell texts (after trimming spaces) that mean "no value".
    pub missing_tokens: Vec<String>,
    /// Field delimiter; `None` detects comma, semicolon or tab from the first lines.
    pub delimiter: Option<u8>,
    /// Columns whose text cells are stored as missing values instead of turning the column
    /// into categories (the user's answer to "this numeric column holds some text").
    pub text_as_missing: Vec<String>,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            missing_tokens: ["", "NA", "NaN", "nan", "N/A"].iter().map(|s| s.to_string()).collect(),
            delimiter: None,
            text_as_missing: Vec::new(),
        }
    }
}

/// What the reader saw besides the table itself.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadReport {
    /// Data rows read (the header not counted).
    pub rows: usize,
    /// Bytes pushed.
    pub bytes: u64,
    /// Per column, in table order: infinite values (`inf`, `1e999`) stored as missing.
    pub non_finite_per_column: Vec<usize>,
    /// The delimiter used, given or detected.
    pub delimiter: u8,
    /// How the bytes were decoded: "UTF-8", "UTF-16 little-endian", "UTF-16 big-endian";
    /// cells read as Windows-1252 are told in `notices`.
    pub encoding: &'static str,
    /// Things the reader did that the user should know of (decoding, decimal commas,
    /// infinite values, unnamed columns, text read as missing), one sentence each.
    pub notices: Vec<String>,
}

/// Builds a [`Table`] from chunks of bytes in file order.
///
/// ```
/// use nervure::{ReadOptions, TableReader};
/// let mut r = TableReader::new("t.csv", ReadOptions::default());
/// r.push(b"x,label\n1.5,a\n2,")?;
/// r.push(b"b\n")?;
/// let t = r.finish()?;
/// assert_eq!((t.n_rows, t.columns.len()), (2, 2));
/// # Ok::<(), nervure::Error>(())
/// ```
pub struct TableReader {
    name: String,
    options: ReadOptions,
    bytes_seen: u64,
    /// The start of the file, kept until the delimiter is known and the text checks are done.
    head: Vec<u8>,
    sniffer: Sniffer,
    /// Whether the encoding has been decided (from the first [`sniff::BINARY_PROBE`] bytes).
    settled: bool,
    utf16: Option<Utf16Decoder>,
    /// The UTF-16 file had a byte-order mark.
    utf16_bom: bool,
    scratch: Vec<u8>,
    body: Option<Body>,
    /// After an error every later call returns it again.
    failed: Option<Error>,
    /// Plain lines are split without `csv-core` (see [`Body::plain_lines`]), and typed as
    /// they are split where the delimiter allows ([`Body::typed_line`]); off only to
    /// compare the ways in tests and the throughput measure.
    plain_lines: bool,
    typed_lines: bool,
    /// The file's size in bytes when the caller knows it (0 otherwise), for
    /// [`Body::plan_room`].
    expected_bytes: u64,
}

impl TableReader {
    pub fn new(name: &str, options: ReadOptions) -> Self {
        TableReader {
            name: name.to_string(),
            options,
            bytes_seen: 0,
            head: Vec::new(),
            sniffer: Sniffer::default(),
            settled: false,
            utf16: None,
            utf16_bom: false,
            scratch: Vec::new(),
            body: None,
            failed: None,
            plain_lines: true,
            typed_lines: true,
            expected_bytes: 0,
        }
    }

    /// The file's size in bytes, when known: the columns are then sized for the rows the
    /// file is expected to hold instead of growing by doubling (less copying, less memory).
    /// It changes no value read.
    pub fn expect_bytes(&mut self, total: u64) {
        self.expected_bytes = total;
    }

    /// Every line read by `csv-core`, none split as a plain line: for tests that compare.
    #[cfg(test)]
    pub(crate) fn csv_core_only(mut self) -> Self {
        self.plain_lines = false;
        self
    }

    /// Plain lines split on their delimiters, none typed as it is split: for tests that compare.
    #[cfg(test)]
    pub(crate) fn untyped_lines(mut self) -> Self {
        self.typed_lines = false;
        self
    }

    /// Takes the next bytes of the file. Errors name the data row and column.
    pub fn push(&mut self, chunk: &[u8]) -> Result<()> {
        if let Some(e) = &self.failed {
            return Err(e.clone());
        }
        self.bytes_seen += chunk.len() as u64;
        let r = self.push_inner(chunk);
        if let Err(e) = &r {
            self.failed = Some(e.clone());
        }
        r
    }

    pub fn bytes_seen(&self) -> u64 {
        self.bytes_seen
    }

    /// Data rows typed so far (rows still held at the start of the file not counted).
    pub fn rows_read(&self) -> usize {
        self.body.as_ref().map_or(0, |b| b.rows)
    }

    pub fn finish(self) -> Result<Table> {
        self.finish_with_report().map(|(t, _)| t)
    }

    /// Ends the file and returns the table with what the reader counted on the way.
    pub fn finish_with_report(mut self) -> Result<(Table, ReadReport)> {
        if let Some(e) = self.failed.take() {
            return Err(e);
        }
        if self.body.is_none() {
            self.start_body(true)?;
        }
        let mut body = self.body.take().expect("body started");
        if let Some(d) = &mut self.utf16 {
            let mut tail = Vec::new();
            d.finish(&mut tail);
            body.feed(&tail, false).map_err(|m| input_error(&self.name, m))?;
        }
        body.feed(&[], true).map_err(|m| self.input_error(m))?;
        let Some(columns) = body.columns.take() else {
            return Err(self.input_error(
                "the file is empty; choose a CSV file with a header row and at least one data row".into(),
            ));
        };
        if body.rows == 0 {
            return Err(self.input_error(format!(
                "the file has a header row ({}) but no data rows; add rows below the header",
                list_columns(&columns)
            )));
        }
        let notices = self.notices(&body, &columns);
        let report = ReadReport {
            rows: body.rows,
            bytes: self.bytes_seen,
            non_finite_per_column: columns.iter().map(|c| c.non_finite()).collect(),
            delimiter: body.delimiter,
            encoding: self.utf16.as_ref().map_or("UTF-8", |d| d.order().describe()),
            notices,
        };
        let table = Table {
            name: self.name.clone(),
            columns: columns.into_iter().map(ColumnBuilder::finish).collect(),
            n_rows: body.rows,
            delimiter: body.delimiter,
        };
        Ok((table, report))
    }

    fn push_inner(&mut self, chunk: &[u8]) -> Result<()> {
        if !self.settled {
            self.head.extend_from_slice(chunk);
            if self.head.len() < sniff::BINARY_PROBE {
                return Ok(());
            }
            self.settle_encoding()?;
        } else {
            let mut scratch = std::mem::take(&mut self.scratch);
            let text: &[u8] = match &mut self.utf16 {
                Some(d) => {
                    scratch.clear();
                    d.decode(chunk, &mut scratch);
                    &scratch
                }
                None => chunk,
            };
            let r = match &mut self.body {
                Some(body) => {
                    let r = body.feed(text, false).map_err(|m| input_error(&self.name, m));
                    // UTF-16 text is decoded to fewer bytes than the file's: no estimate.
                    if self.utf16.is_none() {
                        body.plan_room(self.bytes_seen, self.expected_bytes);
                    }
                    r
                }
                None => {
                    self.head.extend_from_slice(text);
                    self.sniffer.scan(text);
                    Ok(())
                }
            };
            self.scratch = scratch;
            r?;
            if self.body.is_some() {
                return Ok(());
            }
        }
        if self.options.delimiter.is_some() || self.sniffer.has_enough() {
            self.start_body(false)?;
        }
        Ok(())
    }

    /// Decides the encoding from the start of the file (decoding it if it is UTF-16),
    /// refuses binary files and starts guessing the delimiter.
    fn settle_encoding(&mut self) -> Result<()> {
        self.settled = true;
        if let Some((order, bom)) = encoding::detect_utf16(&self.head) {
            let raw = std::mem::take(&mut self.head);
            let mut d = Utf16Decoder::new(order);
            d.decode(&raw[bom..], &mut self.head);
            self.utf16 = Some(d);
            self.utf16_bom = bom > 0;
        }
        sniff::check_text(&self.head).map_err(|m| self.input_error(m))?;
        self.sniffer.scan(&self.head);
        Ok(())
    }

    /// What the user should know about how the file was read.
    fn notices(&self, body: &Body, columns: &[ColumnBuilder]) -> Vec<String> {
        let mut out = Vec::new();
        if let Some(d) = &self.utf16 {
            let how = if self.utf16_bom { "it starts with a UTF-16 byte-order mark" } else { "a NUL byte stands beside every character" };
            let mut n = format!("read as {} text ({how}) and converted to UTF-8", d.order().describe());
            if d.replaced > 0 {
                n.push_str(&format!(
                    "; {} invalid character{} shown as the replacement character",
                    d.replaced,
                    if d.replaced == 1 { "" } else { "s" }
                ));
            }
            out.push(n);
        }
        if body.latin1 > 0 {
            out.push(format!(
                "read as Latin-1 (Windows-1252): {} cell{} {} not valid UTF-8, the first in {}; if accented letters look wrong, \
                 re-save the file as UTF-8 text",
                body.latin1,
                if body.latin1 == 1 { "" } else { "s" },
                if body.latin1 == 1 { "was" } else { "were" },
                body.first_latin1.as_deref().unwrap_or("the file")
            ));
        }
        if !body.unnamed.is_empty() {
            let list: Vec<String> = body.unnamed.iter().map(|i| i.to_string()).collect();
            out.push(format!(
                "column{} {} {} no name in the header row; called 'column N' by position",
                if list.len() == 1 { "" } else { "s" },
                list.join(", "),
                if list.len() == 1 { "has" } else { "have" }
            ));
        }
        let commas: Vec<String> = columns
            .iter()
            .filter(|c| c.is_number() && c.comma_numbers() > 0)
            .map(|c| format!("'{}' ({})", c.name(), c.comma_numbers()))
            .collect();
        if !commas.is_empty() {
            out.push(format!(
                "numbers with a decimal comma (1,5 for one and a half) read as numbers in column{} {}",
                if commas.len() == 1 { "" } else { "s" },
                commas.join(", ")
            ));
        }
        for c in columns.iter().filter(|c| c.non_finite() > 0) {
            out.push(format!(
                "column '{}': {} infinite or too-large value{} (such as inf or 1e999) read as missing",
                c.name(),
                c.non_finite(),
                if c.non_finite() == 1 { "" } else { "s" }
            ));
        }
        for c in columns {
            if let (n, Some((row, text))) = c.text_missing() {
                out.push(format!(
                    "column '{}': {n} text value{} read as missing, as asked (the first: data row {row}, '{text}')",
                    c.name(),
                    if n == 1 { "" } else { "s" }
                ));
            }
        }
        out
    }

    /// Settles the delimiter and parses what was held back.
    fn start_body(&mut self, at_eof: bool) -> Result<()> {
        if !self.settled {
            self.settle_encoding()?;
        }
        let delimiter = match self.options.delimiter {
            Some(d) => {
                if matches!(d, b'"' | b'\r' | b'\n') {
                    return Err(Error::settings(
                        "delimiter",
                        format!("{} cannot separate fields; use a comma, semicolon or tab", describe(d)),
                    ));
                }
                d
            }
            None => self.sniffer.decide(at_eof),
        };
        let head = std::mem::take(&mut self.head);
        let start = if head.starts_with(b"\xEF\xBB\xBF") { 3 } else { 0 };
        let mut body = Body::new(delimiter, MissingTokens::new(&self.options.missing_tokens), self.options.text_as_missing.clone());
        body.split_plain = self.plain_lines;
        body.typed_lines &= self.typed_lines;
        let r = body.feed(&head[start..], false);
        self.body = Some(body);
        r.map_err(|m| self.input_error(m))
    }

    fn input_error(&self, message: String) -> Error {
        input_error(&self.name, message)
    }
}

fn input_error(name: &str, message: String) -> Error {
    if name.is_empty() {
        Error::Input(message)
    } else {
        Error::Input(format!("{name}: {message}"))
    }
}

fn describe(d: u8) -> String {
    match d {
        b',' => "comma".into(),
        b';' => "semicolon".into(),
        b'\t' => "tab".into(),
        b'"' => "the quote character".into(),
        b'\r' | b'\n' => "a line end".into(),
        d if d.is_ascii_graphic() || d == b' ' => format!("'{}'", d as char),
        d => format!("byte 0x{d:02X}"),
    }
}

/// "columns a, b, c", at most eight names.
fn list_columns(columns: &[ColumnBuilder]) -> String {
    const SHOWN: usize = 8;
    let mut s = String::from(if columns.len() == 1 { "column " } else { "columns " });
    for (i, c) in columns.iter().take(SHOWN).enumerate() {
        if i > 0 {
            s.push_str(", ");
        }
        s.push_str(c.name());
    }
    if columns.len() > SHOWN {
        s.push_str(&format!(", ... ({} in all)", columns.len()));
    }
    s
}

/// Tracks, over the bytes of the record being parsed, whether they end inside a quoted field:
/// the same rules `csv-core` follows (RFC 4180 section 2 rules 5 to 7), used only to report
/// a quote that never closes, which `csv-core` accepts silently.
#[derive(Debug, Clone, Copy, PartialEq)]
enum QuoteState {
    FieldStart,
    Unquoted,
    Quoted,
    QuoteInQuoted,
}

impl QuoteState {
    fn scan(mut self, bytes: &[u8], delimiter: u8) -> QuoteState {
        use QuoteState::*;
        for &b in bytes {
            self = match self {
                Quoted if b == b'"' => QuoteInQuoted,
                Quoted => Quoted,
                FieldStart if b == b'"' => Quoted,
                QuoteInQuoted if b == b'"' => Quoted,
                _ if b == delimiter || b == b'\n' || b == b'\r' => FieldStart,
                _ => Unquoted,
            };
        }
        self
    }
}

/// One cell of a line read by [`Body::typed_line`], kept until the whole line is read.
#[derive(Debug, Clone, Copy)]
enum Cell {
    /// A number column's value, read where it stood.
    Number(f64),
    /// Any other cell: its bytes' range in the input.
    Text(usize, usize),
}

/// Appends one field's bytes to `col`; a field that is not UTF-8 is read as Windows-1252,
/// counted, and the first such place remembered for the notice.
#[inline]
fn push_cell(col: &mut ColumnBuilder, raw: &[u8], row: usize, missing: &MissingTokens, latin1: &mut usize, first_latin1: &mut Option<String>) {
    if col.push(raw, row, missing).is_err() {
        let text = encoding::windows_1252(raw);
        col.push(text.as_bytes(), row, missing).expect("decoded text is UTF-8");
        *latin1 += 1;
        if first_latin1.is_none() {
            *first_latin1 = Some(format!("data row {row}, column '{}'", col.name()));
        }
    }
}

/// The parser once the delimiter is known.
struct Body {
    csv: Reader,
    delimiter: u8,
    missing: MissingTokens,
    /// Unescaped bytes of the record being read, and the end of each of its fields.
    out: Vec<u8>,
    out_len: usize,
    ends: Vec<usize>,
    ends_len: usize,
    /// Quote state over the part of the current record seen in earlier calls.
    tail: QuoteState,
    /// `csv-core` stands between records, so the next bytes may be read as plain lines.
    between_records: bool,
    /// Whether plain lines are split here (see [`Body::plain_lines`]), and the field ends
    /// of the one being typed.
    split_plain: bool,
    line_ends: Vec<usize>,
    /// Plain lines are typed field by field straight from the input ([`Body::typed_line`]):
    /// on when the delimiter cannot stand inside a number. `cells` holds one line's cells
    /// until the line is known to be whole and regular.
    typed_lines: bool,
    cells: Vec<Cell>,
    /// `None` until the header row is read.
    columns: Option<Vec<ColumnBuilder>>,
    rows: usize,
    text_as_missing: Vec<String>,
    /// Cells (and header names) read as Windows-1252, and where the first was.
    latin1: usize,
    first_latin1: Option<String>,
    /// 1-based positions of header names that were blank.
    unnamed: Vec<usize>,
}

impl Body {
    fn new(delimiter: u8, missing: MissingTokens, text_as_missing: Vec<String>) -> Body {
        Body {
            csv: ReaderBuilder::new().delimiter(delimiter).build(),
            delimiter,
            missing,
            out: vec![0; 4096],
            out_len: 0,
            ends: vec![0; 64],
            ends_len: 0,
            tail: QuoteState::FieldStart,
            between_records: true,
            split_plain: true,
            line_ends: Vec::with_capacity(64),
            typed_lines: !in_number_alphabet(delimiter),
            cells: Vec::with_capacity(64),
            columns: None,
            rows: 0,
            text_as_missing,
            latin1: 0,
            first_latin1: None,
            unnamed: Vec::new(),
        }
    }

    /// Parses `input`; with `at_eof`, `input` must be empty and the last record is closed.
    fn feed(&mut self, mut input: &[u8], at_eof: bool) -> std::result::Result<(), String> {
        loop {
            if self.between_records && self.split_plain && self.columns.is_some() {
                let used = self.plain_lines(input)?;
                input = &input[used..];
                if input.is_empty() && !at_eof {
                    return Ok(());
                }
            }
            let (res, nin, nout, nend) =
                self.csv.read_record(input, &mut self.out[self.out_len..], &mut self.ends[self.ends_len..]);
            let consumed = &input[..nin];
            input = &input[nin..];
            self.out_len += nout;
            self.ends_len += nend;
            self.between_records = false;
            match res {
                ReadRecordResult::Record => {
                    if at_eof && self.tail == QuoteState::Quoted {
                        return Err(self.unclosed_quote());
                    }
                    self.tail = QuoteState::FieldStart;
                    let (out, ends) = (std::mem::take(&mut self.out), std::mem::take(&mut self.ends));
                    let r = self.record(&out[..self.out_len], &ends[..self.ends_len], 0);
                    (self.out, self.ends) = (out, ends);
                    r?;
                    self.out_len = 0;
                    self.ends_len = 0;
                    self.between_records = true;
                }
                ReadRecordResult::InputEmpty => {
                    self.tail = self.tail.scan(consumed, self.delimiter);
                    return Ok(());
                }
                ReadRecordResult::OutputFull => {
                    self.tail = self.tail.scan(consumed, self.delimiter);
                    let n = self.out.len() * 2;
                    self.out.resize(n, 0);
                }
                ReadRecordResult::OutputEndsFull => {
                    self.tail = self.tail.scan(consumed, self.delimiter);
                    let n = self.ends.len() * 2;
                    self.ends.resize(n, 0);
                }
                ReadRecordResult::End => return Ok(()),
            }
        }
    }

    /// Types the whole lines at the start of `input` that hold no quote and no carriage
    /// return (but one before the line feed) straight from the input, and returns the bytes
    /// used; it stops at the first other line, or where no line feed is left, and `csv-core`
    /// reads on from there. On such a line `csv-core` would find exactly the fields between
    /// the delimiters, and it skips an empty line (see its state machine: without a quote
    /// no field can be quoted, and CR, LF and CRLF each end a record), so the table is the
    /// same; the reader tests feed files both ways and at every chunk boundary. Only called
    /// between records (after the header), where `csv-core` holds no part of a record.
    ///
    /// Each line is first offered to [`Body::typed_line`], which reads numbers as it finds
    /// the delimiters; a line it does not take is split here on the delimiters.
    ///
    /// Why: most lines of a large numeric file are plain, and splitting them here, with
    /// `memchr` finding the line ends, takes about half the time of `csv-core`'s byte-by-byte
    /// copy into the record buffer (measured in the ingest benchmark).
    fn plain_lines(&mut self, input: &[u8]) -> std::result::Result<usize, String> {
        let mut used = 0;
        let mut ends = std::mem::take(&mut self.line_ends);
        let delimiter = self.delimiter;
        let mut r = Ok(());
        loop {
            let rest = &input[used..];
            if self.typed_lines {
                if let Some(n) = self.typed_line(rest) {
                    used += n;
                    continue;
                }
            }
            let Some(len) = memchr::memchr(b'\n', rest) else { break };
            let mut line = &rest[..len];
            if let [head @ .., b'\r'] = line {
                line = head;
            }
            if memchr::memchr2(b'"', b'\r', line).is_some() {
                break;
            }
            used += len + 1;
            if line.is_empty() {
                continue;
            }
            ends.clear();
            ends.extend(memchr::memchr_iter(delimiter, line));
            ends.push(line.len());
            r = self.record(line, &ends, 1);
            if r.is_err() {
                break;
            }
        }
        self.line_ends = ends;
        r.map(|()| used)
    }

    /// Reads the line at the start of `input` in one pass when it is whole, plain (no quote,
    /// no carriage return but one before the line feed) and has one field per column, and
    /// returns the bytes used (its line end included); `None` leaves the line, untouched,
    /// to [`Body::plain_lines`] and `csv-core`, which also word any error. An empty line
    /// is skipped, as `csv-core` skips it.
    ///
    /// A cell of a number column is read by [`fast_number_prefix`] where it stands; when
    /// the byte after the number ends the cell, the value is the one [`ColumnBuilder::push`]
    /// would store for that cell (the delimiter cannot stand inside a number: see
    /// `typed_lines`). Any other cell is scanned to its end and typed by `push`. Nothing
    /// is stored before the whole line has been read, so a line given back leaves the
    /// table as it was. An empty line (LF or CRLF) is skipped here too: with a single
    /// column it would otherwise read as one empty cell.
    ///
    /// Why: splitting a line on its delimiters and then parsing each cell reads every
    /// byte twice or more; here a number's bytes are read once. On the benchmark's
    /// 1.5-million-row file (`tests/bench/ingest.mjs`, alternating with the splitting
    /// path): natively 0.59-0.72 s -> 0.50-0.58 s; in Chromium's wasm 176 -> 270 MB/s in
    /// one run; under node no change.
    #[inline]
    fn typed_line(&mut self, input: &[u8]) -> Option<usize> {
        match input {
            [b'\n', ..] => return Some(1),
            [b'\r', b'\n', ..] => return Some(2),
            _ => {}
        }
        let Body { columns, cells, missing, delimiter, rows, latin1, first_latin1, .. } = self;
        let columns = columns.as_mut()?;
        let delimiter = *delimiter;
        let last = columns.len().checked_sub(1)?;
        cells.clear();
        let mut pos = 0;
        let mut line_end = 0;
        for (j, col) in columns.iter().enumerate() {
            if col.takes_parsed(missing) {
                if let Some((x, k)) = fast_number_prefix(&input[pos..]) {
                    let at = pos + k;
                    match input.get(at) {
                        Some(&b) if b == delimiter && j < last => {
                            cells.push(Cell::Number(x));
                            pos = at + 1;
                            continue;
                        }
                        Some(b'\n') if j == last => {
                            cells.push(Cell::Number(x));
                            line_end = at + 1;
                            break;
                        }
                        Some(b'\r') if j == last && input.get(at + 1) == Some(&b'\n') => {
                            cells.push(Cell::Number(x));
                            line_end = at + 2;
                            break;
                        }
                        _ => {}
                    }
                }
            }
            // Any other cell: up to the next delimiter or line end.
            let mut k = pos;
            let ends_line = loop {
                match *input.get(k)? {
                    b if b == delimiter => break false,
                    b'\n' => break true,
                    b'\r' if input.get(k + 1) == Some(&b'\n') => break true,
                    b'"' | b'\r' => return None,
                    _ => k += 1,
                }
            };
            // Too few or too many fields: the general path words the error.
            if ends_line != (j == last) {
                return None;
            }
            cells.push(Cell::Text(pos, k));
            if ends_line {
                line_end = k + if input[k] == b'\r' { 2 } else { 1 };
            } else {
                pos = k + 1;
            }
        }
        let row = *rows + 1;
        for (col, cell) in columns.iter_mut().zip(cells.iter()) {
            match *cell {
                Cell::Number(x) => col.push_parsed(x),
                Cell::Text(a, b) => push_cell(col, &input[a..b], row, missing, latin1, first_latin1),
            }
        }
        *rows = row;
        Some(line_end)
    }

    /// Makes room in every column for the rows the file is expected to hold: the rows read
    /// so far scaled from the `seen` bytes to the file's `total`, plus 3 %, reserved once
    /// the columns run short of it (with 5 % more), so they grow in a few exact steps
    /// instead of by doubling (which copies every value and can leave up to half of a
    /// column's memory unused). Nothing is done before 256 rows have been read or when the
    /// size is unknown (`total` 0).
    fn plan_room(&mut self, seen: u64, total: u64) {
        let Some(columns) = &mut self.columns else { return };
        if total == 0 || seen == 0 || self.rows < 256 {
            return;
        }
        let expected = (self.rows as f64 * total.max(seen) as f64 / seen as f64 * 1.03) as usize;
        for col in columns.iter_mut() {
            col.plan_room(expected, expected + expected / 20);
        }
    }

    fn unclosed_quote(&self) -> String {
        let whereabouts = match self.columns {
            None => "the header row".to_string(),
            Some(_) => format!("data row {}", self.rows + 1),
        };
        format!(
            "a quoted field that starts on {whereabouts} never ends: the file ends inside quotes; \
             add the closing quote (\") or remove the stray one"
        )
    }

    /// Handles one record: field `i` ends at `ends[i]` in `text`, and the next field starts
    /// `gap` bytes later (0 in `csv-core`'s record buffer, 1 for the delimiter of a plain line).
    fn record(&mut self, text: &[u8], ends: &[usize], gap: usize) -> std::result::Result<(), String> {
        let n_fields = ends.len();
        let blank = n_fields == 1 && trim(&text[..ends[0]]).is_empty();
        let Some(columns) = &mut self.columns else {
            if !blank {
                let header = self.header(text, ends)?;
                self.columns = Some(header);
            }
            return Ok(());
        };
        if blank && columns.len() > 1 {
            return Ok(());
        }
        let row = self.rows + 1;
        if n_fields != columns.len() {
            return Err(format!(
                "data row {row} has {n_fields} field{} but the header has {} ({}); check that row for \
                 a missing or extra {} or a stray quote",
                if n_fields == 1 { "" } else { "s" },
                columns.len(),
                list_columns(columns),
                describe(self.delimiter),
            ));
        }
        let mut start = 0;
        for (col, &end) in columns.iter_mut().zip(ends) {
            push_cell(col, &text[start..end], row, &self.missing, &mut self.latin1, &mut self.first_latin1);
            start = end + gap;
        }
        self.rows = row;
        Ok(())
    }

    fn header(&mut self, text: &[u8], ends: &[usize]) -> std::result::Result<Vec<ColumnBuilder>, String> {
        let mut names: Vec<String> = Vec::with_capacity(ends.len());
        let mut start = 0;
        for (i, &end) in ends.iter().enumerate() {
            let raw = trim(&text[start..end]);
            let text = match std::str::from_utf8(raw) {
                Ok(t) => t.to_string(),
                Err(_) => {
                    self.latin1 += 1;
                    if self.first_latin1.is_none() {
                        self.first_latin1 = Some(format!("the header row (column {})", i + 1));
                    }
                    encoding::windows_1252(raw)
                }
            };
            if text.is_empty() {
                self.unnamed.push(i + 1);
                names.push(format!("column {}", i + 1));
            } else {
                names.push(text);
            }
            start = end;
        }
        let mut seen = std::collections::HashMap::with_capacity(names.len());
        for (i, name) in names.iter().enumerate() {
            if let Some(j) = seen.insert(name.as_str(), i) {
                return Err(format!(
                    "columns {} and {} are both named '{name}'; give each column its own name in the header row",
                    j + 1,
                    i + 1
                ));
            }
        }
        let comma = self.delimiter == b';';
        Ok(names
            .into_iter()
            .map(|n| {
                let as_missing = self.text_as_missing.contains(&n);
                ColumnBuilder::new(n).with_decimal_comma(comma).with_text_as_missing(as_missing)
            })
            .collect())
    }
}
