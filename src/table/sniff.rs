//! The first bytes of a file: is it UTF-8 text at all, and which delimiter does it use?
//!
//! [`check_text`] refuses UTF-16 and binary files before any parsing. [`Sniffer`] counts
//! comma, semicolon and tab outside quotes, line by line, over the first lines of the file,
//! and [`Sniffer::decide`] picks the one that splits every line into the same number of
//! fields. This module does not parse fields; [`super::reader`] does, with `csv-core`.

/// Candidate delimiters, in order of preference when several fit equally well.
pub const CANDIDATES: [u8; 3] = [b',', b';', b'\t'];
/// Lines looked at to choose the delimiter.
pub const MAX_LINES: usize = 20;
/// Bytes looked at to choose the delimiter.
pub const MAX_BYTES: usize = 64 * 1024;
/// Bytes searched for a NUL byte, the sign of a binary file.
pub const BINARY_PROBE: usize = 8 * 1024;

/// Refuses UTF-16 text (by its byte-order mark, or by NUL bytes in every other position)
/// and binary files (a NUL byte in the first [`BINARY_PROBE`] bytes). `head` is the start of
/// the file. The message says what to do.
pub fn check_text(head: &[u8]) -> Result<(), String> {
    const RESAVE: &str = "re-save it as UTF-8 text (CSV, UTF-8) and load it again";
    if head.starts_with(&[0xFF, 0xFE]) || head.starts_with(&[0xFE, 0xFF]) {
        return Err(format!("this file is UTF-16 text (it starts with a UTF-16 byte-order mark); {RESAVE}"));
    }
    let probe = &head[..head.len().min(BINARY_PROBE)];
    if !probe.contains(&0) {
        return Ok(());
    }
    let (mut even, mut odd) = (0usize, 0usize);
    for (i, &b) in probe.iter().enumerate() {
        if b == 0 {
            if i % 2 == 0 {
                even += 1
            } else {
                odd += 1
            }
        }
    }
    // ASCII text in UTF-16 has a NUL beside every character, always on the same side.
    if (even == 0 || odd == 0) && (even + odd) * 4 >= probe.len() {
        return Err(format!("this file looks like UTF-16 text without a byte-order mark; {RESAVE}"));
    }
    Err("this looks like a binary file, not text (it holds NUL bytes near the start); \
         choose a CSV or other delimited text file"
        .to_string())
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum State {
    FieldStart,
    Unquoted,
    Quoted,
    /// A quote inside a quoted field: it closes the field unless another quote follows.
    QuoteInQuoted,
}

/// Counts candidate delimiters outside quotes, per line, fed in chunks.
///
/// A quote opens a quoted field only as the first byte of a field (after a line start or
/// any candidate delimiter), as in RFC 4180 section 2 rules 5 to 7; line ends inside quotes
/// do not end the line. Blank lines are not counted.
#[derive(Debug, Clone)]
pub struct Sniffer {
    lines: Vec<[usize; 3]>,
    current: [usize; 3],
    line_has_content: bool,
    state: State,
    scanned: usize,
}

impl Default for Sniffer {
    fn default() -> Self {
        Sniffer { lines: Vec::new(), current: [0; 3], line_has_content: false, state: State::FieldStart, scanned: 0 }
    }
}

impl Sniffer {
    /// Whether enough has been seen to decide: [`MAX_LINES`] lines or [`MAX_BYTES`] bytes.
    pub fn has_enough(&self) -> bool {
        self.lines.len() >= MAX_LINES || self.scanned >= MAX_BYTES
    }

    /// Scans the next bytes of the file (those past the limits are ignored).
    pub fn scan(&mut self, bytes: &[u8]) {
        for &b in bytes {
            if self.has_enough() {
                return;
            }
            self.scanned += 1;
            let delim = CANDIDATES.iter().position(|&c| c == b);
            let term = b == b'\n' || b == b'\r';
            self.state = match self.state {
                State::Quoted => {
                    if b == b'"' {
                        State::QuoteInQuoted
                    } else {
                        State::Quoted
                    }
                }
                State::FieldStart if b == b'"' => {
                    self.line_has_content = true;
                    State::Quoted
                }
                State::QuoteInQuoted if b == b'"' => State::Quoted,
                _ if term => {
                    self.end_line();
                    State::FieldStart
                }
                _ => {
                    self.line_has_content = true;
                    match delim {
                        Some(k) => {
                            self.current[k] += 1;
                            State::FieldStart
                        }
                        None => State::Unquoted,
                    }
                }
            };
        }
    }

    fn end_line(&mut self) {
        if self.line_has_content {
            self.lines.push(self.current);
        }
        self.current = [0; 3];
        self.line_has_content = false;
    }

    /// The delimiter that gives the same non-zero count on every line looked at; ties go to
    /// the earlier of [`CANDIDATES`]. The last, unfinished line counts only at the end of the
    /// file or when it is the only line. When no candidate is consistent, the one most frequent
    /// on the first line wins (comma when none appears): the reader's field-count check then
    /// names the row that does not fit.
    pub fn decide(&self, at_eof: bool) -> u8 {
        let mut lines: Vec<[usize; 3]> = self.lines.clone();
        if self.line_has_content && (at_eof || lines.is_empty()) && lines.len() < MAX_LINES {
            lines.push(self.current);
        }
        let Some(first) = lines.first() else { return b',' };
        for (k, &c) in CANDIDATES.iter().enumerate() {
            if first[k] > 0 && lines.iter().all(|l| l[k] == first[k]) {
                return c;
            }
        }
        let mut best = 0;
        for k in 1..CANDIDATES.len() {
            if first[k] > first[best] {
                best = k;
            }
        }
        CANDIDATES[best]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sniff(text: &str, at_eof: bool) -> u8 {
        let mut s = Sniffer::default();
        s.scan(text.as_bytes());
        s.decide(at_eof)
    }

    // The expectations below follow the rule stated on `decide` (this project's rule).

    #[test]
    fn picks_the_consistent_delimiter() {
        assert_eq!(sniff("a,b,c\n1,2,3\n", true), b',');
        assert_eq!(sniff("a;b;c\n1,5;2,5;3\n", true), b';');
        assert_eq!(sniff("a\tb\n1\t2\n", true), b'\t');
        // Semicolon count is 1 on both lines; comma is 0 on the header.
        assert_eq!(sniff("x;y\n1,25;3\n", true), b';');
    }

    #[test]
    fn ignores_delimiters_inside_quotes() {
        // Commas appear 1, 3, 1 times overall but only once outside quotes on each line.
        assert_eq!(sniff("a;b\n\"1,2,3\";4\n\"x,y\";5\n", true), b';');
        // A line end inside quotes does not end the line.
        assert_eq!(sniff("a,b\n\"multi\nline\",2\n3,4\n", true), b',');
        // A doubled quote stays inside the field.
        assert_eq!(sniff("a;b\n\"say \"\"hi, there\"\"\";2\n", true), b';');
    }

    #[test]
    fn ties_prefer_comma_then_semicolon() {
        assert_eq!(sniff("a,b;c\n1,2;3\n", true), b',');
        assert_eq!(sniff("a;b\tc\n1;2\t3\n", true), b';');
    }

    #[test]
    fn falls_back_when_nothing_is_consistent() {
        assert_eq!(sniff("onlyone\n1\n2\n", true), b',');
        assert_eq!(sniff("a;b;c\n1;2\n", true), b';');
    }

    #[test]
    fn unfinished_last_line_counts_only_at_end_of_file() {
        // Mid-stream the cut-short "4;5" is ignored and comma fits both whole lines; at the
        // end of the file "4;5" is a whole line, has no comma, and semicolon fits all three.
        assert_eq!(sniff("a;b,c\n1;2,3\n4;5", false), b',');
        assert_eq!(sniff("a;b,c\n1;2,3\n4;5", true), b';');
    }

    #[test]
    fn stops_after_the_line_limit() {
        let mut text = String::from("a,b\n");
        for _ in 0..MAX_LINES {
            text.push_str("1,2\n");
        }
        text.push_str("1;2;3;4\n"); // beyond the limit: not looked at
        let mut s = Sniffer::default();
        s.scan(text.as_bytes());
        assert!(s.has_enough());
        assert_eq!(s.decide(true), b',');
    }

    #[test]
    fn refuses_utf16_and_binary() {
        assert!(check_text(b"a,b\n1,2\n").is_ok());
        let e = check_text(&[0xFF, 0xFE, b'a', 0]).unwrap_err();
        assert!(e.contains("UTF-16"), "{e}");
        let e = check_text(&[0xFE, 0xFF, 0, b'a']).unwrap_err();
        assert!(e.contains("UTF-16"), "{e}");
        let utf16le: Vec<u8> = "a,b\n1,2\n".bytes().flat_map(|b| [b, 0]).collect();
        let e = check_text(&utf16le).unwrap_err();
        assert!(e.contains("UTF-16"), "{e}");
        let e = check_text(b"\x89PNG\r\n\x1a\n\0\0\0\rIHDR and more bytes of a picture").unwrap_err();
        assert!(e.contains("binary"), "{e}");
        // A NUL beyond the probe is not looked at.
        let mut late = vec![b'a'; BINARY_PROBE];
        late.push(0);
        assert!(check_text(&late).is_ok());
    }
}
