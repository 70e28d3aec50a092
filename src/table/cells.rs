//! Typing cells into columns as rows arrive: numbers while every cell is a number, then
//! categories from the first cell that is not.
//!
//! A [`ColumnBuilder`] takes one field's bytes at a time (as `csv-core` unescaped them) and
//! appends to its column; nothing is allocated per numeric cell. This module knows nothing
//! of rows, delimiters or files; [`super::reader`] feeds it and words the errors.
//!
//! Rules (this project's, stated here once):
//! - Cells are trimmed of spaces and tabs before anything else, and category levels are the
//!   trimmed texts.
//! - A cell equal to a missing token (also trimmed) is missing: `NaN` in a number column,
//!   [`MISSING_CODE`] in a category column.
//! - A number is what Rust's `f64::from_str` accepts (a leading `+` included) and is not
//!   NaN. Infinite values (`inf`, `1e999`) are stored as missing and counted per column.
//! - When a number column meets its first cell that is neither a number nor missing, it
//!   becomes a category column: the numbers seen so far become level texts written with
//!   Rust's `{}` formatting of `f64` (the shortest text that reads back to the same value,
//!   so `1.50` becomes `1.5`, `1e3` becomes `1000` and `-0` stays `-0`); missing and infinite
//!   cells become missing codes. Levels keep the order of first appearance.
//! - With decimal commas on (the reader turns them on when fields are separated by
//!   semicolons, the common practice of locales that write 1,5 for one and a half), a cell
//!   that is a number once its one comma is read as a decimal point (and that holds no
//!   point) is that number, and is counted.
//! - With text as missing on (the user asked for it, per column), a cell that is neither a
//!   number nor missing is stored as missing and counted; the column stays numeric.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use super::{Column, ColumnData, MISSING_CODE};

/// Hashes level texts for the category index: eight bytes at a time, one multiplication
/// each (the mixing step of the Fx hash used inside rustc, written out here). Much cheaper
/// than the standard library's SipHash on short texts, above all in wasm; the texts come
/// from the user's own file, so resistance to chosen collisions is not needed. Which hash
/// is used changes no result: codes follow the order of first appearance.
#[derive(Default, Clone, Copy)]
pub struct LevelHasher(u64);

const LEVEL_HASH_K: u64 = 0xf135_7aea_2e62_a9c5;

impl LevelHasher {
    #[inline]
    fn add(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(26) ^ word).wrapping_mul(LEVEL_HASH_K);
    }
}

impl Hasher for LevelHasher {
    #[inline]
    fn write(&mut self, mut bytes: &[u8]) {
        while let Some((head, rest)) = bytes.split_first_chunk::<8>() {
            self.add(u64::from_le_bytes(*head));
            bytes = rest;
        }
        if !bytes.is_empty() {
            let mut last = [0u8; 8];
            last[..bytes.len()].copy_from_slice(bytes);
            self.add(u64::from_le_bytes(last) ^ ((bytes.len() as u64) << 59));
        }
    }

    #[inline]
    fn write_u8(&mut self, i: u8) {
        self.add(i as u64);
    }

    #[inline]
    fn write_usize(&mut self, i: usize) {
        self.add(i as u64);
    }

    #[inline]
    fn finish(&self) -> u64 {
        // The table picks buckets from the high bits and tags from the top seven: fold the
        // well-mixed high half into both.
        self.0.rotate_left(20)
    }
}

/// Level text to code.
type LevelIndex = HashMap<String, u32, BuildHasherDefault<LevelHasher>>;

/// Trims ASCII spaces and tabs from both ends.
pub fn trim(mut b: &[u8]) -> &[u8] {
    while let [b' ' | b'\t', rest @ ..] = b {
        b = rest;
    }
    while let [rest @ .., b' ' | b'\t'] = b {
        b = rest;
    }
    b
}

/// The texts that mean "no value", trimmed.
#[derive(Debug, Clone)]
pub struct MissingTokens {
    tokens: Vec<Vec<u8>>,
    /// Some token reads as a finite number, so numbers must be checked against the tokens too.
    any_numeric: bool,
}

impl MissingTokens {
    pub fn new(tokens: &[String]) -> Self {
        let tokens: Vec<Vec<u8>> = tokens.iter().map(|t| trim(t.as_bytes()).to_vec()).collect();
        let any_numeric = tokens.iter().any(|t| fast_number(t).is_some() || parse_finite(t).is_some());
        MissingTokens { tokens, any_numeric }
    }

    pub fn contains(&self, cell: &[u8]) -> bool {
        self.tokens.iter().any(|t| t.as_slice() == cell)
    }
}

fn parse_finite(b: &[u8]) -> Option<f64> {
    std::str::from_utf8(b).ok()?.parse::<f64>().ok().filter(|x| x.is_finite())
}

/// Exact powers of ten representable in an `f64`.
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Fast path for plain decimals: `[+-]digits[.digits][(e|E)[+-]digits]` with at most 19
/// digits whose value is at most 2^53 and a decimal exponent within ±22. Then the mantissa
/// and the power of ten are both exact `f64`s and one IEEE multiplication or division rounds
/// correctly (Clinger, "How to read floating point numbers accurately", PLDI 1990), so the
/// result equals `f64::from_str`'s. Anything else returns `None` for the general parser.
#[inline]
pub fn fast_number(b: &[u8]) -> Option<f64> {
    match fast_number_prefix(b) {
        Some((x, used)) if used == b.len() => Some(x),
        _ => None,
    }
}

/// [`fast_number`] on the longest start of `b` its grammar takes: the value and the bytes
/// used. It reads `b` byte by byte exactly as [`fast_number`] reads a whole cell and stops
/// at the first byte the grammar cannot take, so when the byte after the `used` ones ends
/// the cell (a delimiter or a line end, neither of them a digit, sign, point or `e`),
/// `fast_number(&b[..used])` is this same value. `None` where [`fast_number`] would give
/// up on every cell that starts this way (too many digits, a mantissa above 2^53, an
/// exponent without digits or out of range).
#[inline]
pub fn fast_number_prefix(b: &[u8]) -> Option<(f64, usize)> {
    let (neg, mut i) = match b.first() {
        Some(b'-') => (true, 1),
        Some(b'+') => (false, 1),
        _ => (false, 0),
    };
    let mut mantissa: u64 = 0;
    let mut digits = 0u32;
    let mut frac_digits = 0i32;
    while i < b.len() && b[i].is_ascii_digit() {
        mantissa = mantissa.wrapping_mul(10).wrapping_add((b[i] - b'0') as u64);
        digits += 1;
        i += 1;
    }
    if i < b.len() && b[i] == b'.' {
        i += 1;
        while i < b.len() && b[i].is_ascii_digit() {
            mantissa = mantissa.wrapping_mul(10).wrapping_add((b[i] - b'0') as u64);
            digits += 1;
            frac_digits += 1;
            i += 1;
        }
    }
    if digits == 0 || digits > 19 {
        return None;
    }
    let mut exp: i32 = 0;
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        i += 1;
        let eneg = match b.get(i) {
            Some(b'-') => {
                i += 1;
                true
            }
            Some(b'+') => {
                i += 1;
                false
            }
            _ => false,
        };
        let start = i;
        while i < b.len() && b[i].is_ascii_digit() && i - start < 4 {
            exp = exp * 10 + (b[i] - b'0') as i32;
            i += 1;
        }
        if i == start {
            return None;
        }
        if eneg {
            exp = -exp;
        }
    }
    if mantissa > (1u64 << 53) {
        return None;
    }
    let e = exp - frac_digits;
    let m = mantissa as f64;
    let x = if e == 0 {
        m
    } else if (1..=22).contains(&e) {
        m * POW10[e as usize]
    } else if (-22..0).contains(&e) {
        m / POW10[(-e) as usize]
    } else {
        return None;
    };
    Some((if neg { -x } else { x }, i))
}

/// Whether `b` can stand inside a number [`fast_number_prefix`] reads: a delimiter that is
/// not one of these bytes always ends the number before it.
pub fn in_number_alphabet(b: u8) -> bool {
    b.is_ascii_digit() || matches!(b, b'+' | b'-' | b'.' | b'e' | b'E')
}

/// `[+-]digits,digits[e[+-]digits]` with exactly one comma and no point, read with the
/// comma as the decimal point; finite values only.
pub fn decimal_comma_number(cell: &[u8]) -> Option<f64> {
    if cell.iter().filter(|&&b| b == b',').count() != 1 || cell.contains(&b'.') {
        return None;
    }
    let at = cell.iter().position(|&b| b == b',')?;
    // A digit on at least one side of the comma, and only digits up to the exponent after it.
    let before = &cell[..at];
    let after = &cell[at + 1..];
    let digits_before = before.iter().rev().take_while(|b| b.is_ascii_digit()).count();
    let digits_after = after.iter().take_while(|b| b.is_ascii_digit()).count();
    if digits_before + digits_after == 0 || digits_before != before.len() - before.first().map_or(0, |&b| (b == b'-' || b == b'+') as usize) {
        return None;
    }
    let mut text = Vec::with_capacity(cell.len());
    text.extend_from_slice(before);
    text.push(b'.');
    text.extend_from_slice(after);
    fast_number(&text).or_else(|| parse_finite(&text).filter(|_| after[digits_after..].first().map_or(true, |&b| b == b'e' || b == b'E')))
}

/// Share of the present cells of a text column (`codes` into `levels`) whose text reads as
/// a finite number; `None` when no cell is present.
pub fn number_share(codes: &[u32], levels: &[String]) -> Option<f64> {
    let is_number: Vec<bool> = levels.iter().map(|l| fast_number(l.as_bytes()).is_some() || parse_finite(l.as_bytes()).is_some()).collect();
    let (mut numbers, mut present) = (0usize, 0usize);
    for &c in codes {
        if c != MISSING_CODE {
            present += 1;
            numbers += is_number[c as usize] as usize;
        }
    }
    (present > 0).then(|| numbers as f64 / present as f64)
}

/// A cell's bytes are not valid UTF-8.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NotUtf8;

#[derive(Debug)]
enum Kind {
    Number(Vec<f64>),
    /// `index` maps each level's text to its code; levels are listed by code at the end.
    /// `last` is the code of the last text cell and `last_text` its text: a cell equal to
    /// the one before (dates repeated across stations, a category in runs) is coded
    /// without a look-up.
    Category { codes: Vec<u32>, index: LevelIndex, last: u32, last_text: Vec<u8> },
}

/// One column under construction.
#[derive(Debug)]
pub struct ColumnBuilder {
    name: String,
    kind: Kind,
    first_text: Option<(usize, String)>,
    non_finite: usize,
    decimal_comma: bool,
    text_as_missing: bool,
    /// Cells read through a decimal comma.
    comma_numbers: usize,
    /// Text cells stored as missing, and the first of them (data row, text).
    text_missing: usize,
    first_missing_text: Option<(usize, String)>,
}

impl ColumnBuilder {
    pub fn new(name: String) -> Self {
        ColumnBuilder {
            name,
            kind: Kind::Number(Vec::new()),
            first_text: None,
            non_finite: 0,
            decimal_comma: false,
            text_as_missing: false,
            comma_numbers: 0,
            text_missing: 0,
            first_missing_text: None,
        }
    }

    /// Reads `1,5` as one and a half (see the module comment).
    pub fn with_decimal_comma(mut self, on: bool) -> Self {
        self.decimal_comma = on;
        self
    }

    /// Stores text cells as missing instead of turning the column into categories.
    pub fn with_text_as_missing(mut self, on: bool) -> Self {
        self.text_as_missing = on;
        self
    }

    /// Cells read as numbers through a decimal comma, while the column held numbers.
    pub fn comma_numbers(&self) -> usize {
        self.comma_numbers
    }

    /// Text cells stored as missing, and the first one (data row, text).
    pub fn text_missing(&self) -> (usize, Option<&(usize, String)>) {
        (self.text_missing, self.first_missing_text.as_ref())
    }

    /// Whether the column still holds numbers.
    pub fn is_number(&self) -> bool {
        matches!(self.kind, Kind::Number(_))
    }

    pub fn name(&self) -> &str {
        &self.name
    }

    /// Infinite cells met while the column held numbers.
    pub fn non_finite(&self) -> usize {
        self.non_finite
    }

    /// When the column has room for fewer than `expected` cells in all, makes room for
    /// `target` (the reader's estimate from the file's size, see `Body::plan_room`): a
    /// column that grows by doubling copies its values each time and may end with up to
    /// half of its memory unused.
    pub fn plan_room(&mut self, expected: usize, target: usize) {
        fn room<T>(v: &mut Vec<T>, expected: usize, target: usize) {
            if v.capacity() < expected {
                v.reserve_exact(target.saturating_sub(v.len()));
            }
        }
        match &mut self.kind {
            Kind::Number(values) => room(values, expected, target),
            Kind::Category { codes, .. } => room(codes, expected, target),
        }
    }

    /// Whether a cell that [`fast_number`] reads (with no spaces around it) may be stored
    /// with [`Self::push_parsed`]: the column holds numbers and no missing token reads as
    /// a number (otherwise [`Self::push`] must compare the cell with the tokens).
    #[inline]
    pub fn takes_parsed(&self, missing: &MissingTokens) -> bool {
        self.is_number() && !missing.any_numeric
    }

    /// Appends a value [`fast_number`] read from a whole cell, exactly as [`Self::push`]
    /// would store that cell; only where [`Self::takes_parsed`] said so.
    #[inline]
    pub fn push_parsed(&mut self, x: f64) {
        match &mut self.kind {
            Kind::Number(values) => values.push(x),
            Kind::Category { .. } => unreachable!("push_parsed on a category column"),
        }
    }

    /// Appends one cell; `row` is the data row counted from 1 (for `first_text`).
    #[inline]
    pub fn push(&mut self, raw: &[u8], row: usize, missing: &MissingTokens) -> Result<(), NotUtf8> {
        let cell = trim(raw);
        match &mut self.kind {
            Kind::Number(values) => {
                if let Some(x) = fast_number(cell) {
                    if !missing.any_numeric || !missing.contains(cell) {
                        values.push(x);
                        return Ok(());
                    }
                }
                let text = std::str::from_utf8(cell).map_err(|_| NotUtf8)?;
                if missing.contains(cell) {
                    values.push(f64::NAN);
                    return Ok(());
                }
                match text.parse::<f64>() {
                    Ok(x) if x.is_finite() => values.push(x),
                    Ok(x) if x.is_infinite() => {
                        values.push(f64::NAN);
                        self.non_finite += 1;
                    }
                    _ if self.decimal_comma && decimal_comma_number(cell).is_some() => {
                        values.push(decimal_comma_number(cell).expect("checked"));
                        self.comma_numbers += 1;
                    }
                    _ if self.text_as_missing => {
                        values.push(f64::NAN);
                        self.text_missing += 1;
                        if self.first_missing_text.is_none() {
                            self.first_missing_text = Some((row, text.to_string()));
                        }
                    }
                    // Not a number (or a "NaN" the user did not list as missing).
                    _ => {
                        self.become_category(row, text);
                        self.push_text(text);
                    }
                }
            }
            Kind::Category { .. } => {
                let text = std::str::from_utf8(cell).map_err(|_| NotUtf8)?;
                if missing.contains(cell) {
                    if let Kind::Category { codes, .. } = &mut self.kind {
                        codes.push(MISSING_CODE);
                    }
                } else {
                    self.push_text(text);
                }
            }
        }
        Ok(())
    }

    /// The column as text from here on: numbers read so far become their texts as
    /// [`ColumnBuilder::push`] writes them when a text turns up, and every later cell is
    /// kept as text. A run over a table in parts ([`crate::parts::read_cells`]) reads so
    /// the parts before and after the part where a column's first text stands.
    pub fn as_text(mut self) -> Self {
        if matches!(self.kind, Kind::Number(_)) {
            self.become_category(0, "");
            self.first_text = None;
        }
        self
    }

    fn become_category(&mut self, row: usize, text: &str) {
        let Kind::Number(values) = &self.kind else { return };
        let mut codes = Vec::with_capacity(values.len() + 1);
        let mut index = LevelIndex::default();
        for &x in values {
            if x.is_nan() {
                codes.push(MISSING_CODE);
            } else {
                let level = format!("{x}");
                let next = index.len() as u32;
                codes.push(*index.entry(level).or_insert(next));
            }
        }
        self.kind = Kind::Category { codes, index, last: MISSING_CODE, last_text: Vec::new() };
        self.first_text = Some((row, text.to_string()));
    }

    #[inline]
    fn push_text(&mut self, text: &str) {
        let Kind::Category { codes, index, last, last_text } = &mut self.kind else { unreachable!("push_text on a number column") };
        if *last != MISSING_CODE && last_text.as_slice() == text.as_bytes() {
            codes.push(*last);
            return;
        }
        let code = match index.get(text) {
            Some(&c) => c,
            None => {
                let c = index.len() as u32;
                index.insert(text.to_string(), c);
                c
            }
        };
        *last = code;
        last_text.clear();
        last_text.extend_from_slice(text.as_bytes());
        codes.push(code);
    }

    /// The column: numbers, or text typed by [`Column::from_text`] (a time column when its
    /// values are date-times).
    pub fn finish(self) -> Column {
        self.finish_typed(true)
    }

    /// [`ColumnBuilder::finish`]; with `typed` false a column of text stays a category
    /// column even when its values are date-times: one part of a column read by
    /// [`crate::parts::read_cells`], typed later from the whole column's levels.
    pub fn finish_typed(self, typed: bool) -> Column {
        match self.kind {
            Kind::Number(values) => Column::of(self.name, ColumnData::numbers(values)),
            Kind::Category { codes, index, .. } => {
                let mut levels = vec![String::new(); index.len()];
                for (text, code) in index {
                    levels[code as usize] = text;
                }
                if !typed {
                    let mut col = Column::category(self.name, codes, levels);
                    col.first_text = self.first_text;
                    return col;
                }
                let mut col = Column::from_text(self.name, codes, levels);
                if !col.is_time() {
                    col.first_text = self.first_text;
                }
                col
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn defaults() -> MissingTokens {
        MissingTokens::new(&crate::table::ReadOptions::default().missing_tokens)
    }

    fn build(cells: &[&str], missing: &MissingTokens) -> (Column, usize) {
        let mut b = ColumnBuilder::new("c".into());
        for (i, c) in cells.iter().enumerate() {
            b.push(c.as_bytes(), i + 1, missing).unwrap();
        }
        let n = b.non_finite();
        (b.finish(), n)
    }

    #[test]
    fn trim_removes_spaces_and_tabs_only() {
        assert_eq!(trim(b"  a b\t "), b"a b");
        assert_eq!(trim(b" \t "), b"");
        assert_eq!(trim(b"\xA0x"), b"\xA0x");
    }

    /// The fast path must agree bit for bit with `f64::from_str` (the reference) wherever it
    /// answers. Strings are drawn from a seeded generator over the characters numbers use.
    #[test]
    fn fast_path_agrees_with_std_parse() {
        let alphabet = b"0123456789012345678901234567890123456789.+-eE";
        let mut rng = crate::rng::SplitMix64::new(7);
        let mut answered = 0;
        for _ in 0..200_000 {
            let len = 1 + rng.below(24);
            let s: Vec<u8> = (0..len).map(|_| alphabet[rng.below(alphabet.len())]).collect();
            let text = std::str::from_utf8(&s).unwrap();
            if let Some(x) = fast_number(&s) {
                answered += 1;
                let y: f64 = text.parse().unwrap_or_else(|_| panic!("fast path accepted {text:?}, std did not"));
                assert_eq!(x.to_bits(), y.to_bits(), "{text:?}");
            }
        }
        assert!(answered > 10_000, "fast path answered only {answered} times");
        for text in ["0.1", "-0", "+3.25", "1e22", "9007199254740992", "123.456e-5", ".5", "5.", "-.5e+2"] {
            let x = fast_number(text.as_bytes()).unwrap();
            assert_eq!(x.to_bits(), text.parse::<f64>().unwrap().to_bits(), "{text}");
        }
        for text in ["", ".", "e5", "1e", "1e+", "+", "1.2.3", "0x10", "1_000", "inf", "9007199254740993"] {
            assert_eq!(fast_number(text.as_bytes()), None, "{text}");
        }
    }

    #[test]
    fn numbers_and_missing() {
        let (c, n) = build(&[" 1.5 ", "+2", "NA", "", "-3e2", "inf", "-1e999", "nan"], &defaults());
        let v = c.as_numbers().unwrap();
        assert_eq!(&v[..2], &[1.5, 2.0]);
        assert!(v[2].is_nan() && v[3].is_nan() && v[5].is_nan() && v[6].is_nan() && v[7].is_nan());
        assert_eq!(v[4], -300.0);
        assert_eq!(n, 2, "inf and -1e999 are infinite");
        assert_eq!(c.first_text, None);
    }

    #[test]
    fn first_text_turns_numbers_into_levels() {
        let (c, _) = build(&["1.50", "NA", "1e3", "red", "1.5", " red ", "blue", ""], &defaults());
        assert_eq!(c.first_text, Some((4, "red".to_string())));
        match &c.data {
            ColumnData::Category { codes, levels } => {
                assert_eq!(levels, &["1.5", "1000", "red", "blue"]);
                assert_eq!(codes[..], [0, MISSING_CODE, 1, 2, 0, 2, 3, MISSING_CODE]);
            }
            other => panic!("expected a category column, got {other:?}"),
        }
    }

    /// Runs of one text (coded without a look-up) and texts whose hashes are computed from
    /// partial eight-byte words keep the codes of first appearance.
    #[test]
    fn repeated_texts_keep_their_codes() {
        let cells = ["a", "a", "", "a", "b", "b", "a", "2024-07-15T00:00", "2024-07-15T00:00", "2024-07-15T01:00", "b", "a\0"];
        let (c, _) = build(&cells, &defaults());
        match &c.data {
            ColumnData::Category { codes, levels } => {
                assert_eq!(levels, &["a", "b", "2024-07-15T00:00", "2024-07-15T01:00", "a\0"]);
                assert_eq!(codes[..], [0, 0, MISSING_CODE, 0, 1, 1, 0, 2, 2, 3, 1, 4]);
            }
            other => panic!("expected a category column, got {other:?}"),
        }
    }

    #[test]
    fn nan_text_not_listed_as_missing_is_text() {
        let (c, _) = build(&["1", "NaN"], &MissingTokens::new(&["".to_string()]));
        assert_eq!(c.first_text, Some((2, "NaN".to_string())));
    }

    #[test]
    fn numeric_missing_token_wins_over_the_number() {
        let (c, _) = build(&["1", "-999", " -999 ", "2"], &MissingTokens::new(&["-999".to_string()]));
        let v = c.as_numbers().unwrap();
        assert_eq!(v[0], 1.0);
        assert!(v[1].is_nan() && v[2].is_nan());
        assert_eq!(v[3], 2.0);
    }

    #[test]
    fn invalid_utf8_is_reported() {
        let mut b = ColumnBuilder::new("c".into());
        assert_eq!(b.push(b"caf\xE9", 1, &defaults()), Err(NotUtf8));
        let mut b = ColumnBuilder::new("c".into());
        b.push(b"x", 1, &defaults()).unwrap();
        assert_eq!(b.push(b"\xFF", 2, &defaults()), Err(NotUtf8));
    }
}
