//! Text that is not UTF-8: UTF-16 files decoded to UTF-8 as they stream, and single cells
//! that are not valid UTF-8 read as Windows-1252 (the superset of Latin-1 that spreadsheet
//! exports use).
//!
//! [`detect_utf16`] looks at the start of a file (a byte-order mark, or ASCII text with a NUL
//! beside every character); [`Utf16Decoder`] turns the rest into UTF-8, keeping a byte or a
//! half surrogate pair across chunk ends. [`windows_1252`] decodes one cell. This module does
//! not parse fields or decide what to tell the user; [`super::reader`] does both.
//!
//! Sources: the WHATWG Encoding Standard (index-windows-1252; its UTF-16 decoder, which turns
//! unpaired surrogates and a last odd byte into U+FFFD). Bytes 0x80 to 0x9F other than the
//! five holes map as that index says (cross-checked with Python 3's `cp1252` codec); the five
//! holes (0x81, 0x8D, 0x8F, 0x90, 0x9D), which Python refuses, map to the C1 control of the
//! same number, as the WHATWG index does; every other byte maps to the code point of its value.

/// Byte order of a UTF-16 file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ByteOrder {
    Little,
    Big,
}

impl ByteOrder {
    pub fn describe(self) -> &'static str {
        match self {
            ByteOrder::Little => "UTF-16 little-endian",
            ByteOrder::Big => "UTF-16 big-endian",
        }
    }
}

/// UTF-16 at the start of a file: its byte order and the length of its byte-order mark (0
/// when the order was inferred from NUL bytes: ASCII text in UTF-16 has a NUL beside every
/// character, always on the same side, and no other byte is NUL).
pub fn detect_utf16(head: &[u8]) -> Option<(ByteOrder, usize)> {
    if head.starts_with(&[0xFF, 0xFE]) {
        return Some((ByteOrder::Little, 2));
    }
    if head.starts_with(&[0xFE, 0xFF]) {
        return Some((ByteOrder::Big, 2));
    }
    let n = head.len() & !1;
    if n < 4 {
        return None;
    }
    let (mut even, mut odd) = (0usize, 0usize);
    for (i, &b) in head[..n].iter().enumerate() {
        if b == 0 {
            if i % 2 == 0 {
                even += 1
            } else {
                odd += 1
            }
        }
    }
    // At least a third of the code units are ASCII, and the NULs all sit on one side.
    let units = n / 2;
    match (even, odd) {
        (0, k) if k * 3 >= units => Some((ByteOrder::Little, 0)),
        (k, 0) if k * 3 >= units => Some((ByteOrder::Big, 0)),
        _ => None,
    }
}

/// Streaming UTF-16 to UTF-8.
#[derive(Debug, Clone)]
pub struct Utf16Decoder {
    order: ByteOrder,
    /// A first byte of a code unit whose second byte is in the next chunk.
    odd: Option<u8>,
    /// A high surrogate waiting for its low half.
    high: Option<u16>,
    /// Code units that were not valid UTF-16 (unpaired surrogates), replaced by U+FFFD.
    pub replaced: usize,
}

impl Utf16Decoder {
    pub fn new(order: ByteOrder) -> Self {
        Utf16Decoder { order, odd: None, high: None, replaced: 0 }
    }

    pub fn order(&self) -> ByteOrder {
        self.order
    }

    /// Appends the UTF-8 text of `bytes` to `out`.
    pub fn decode(&mut self, mut bytes: &[u8], out: &mut Vec<u8>) {
        out.reserve(bytes.len() / 2 + 4);
        if let Some(first) = self.odd.take() {
            match bytes.split_first() {
                Some((&second, rest)) => {
                    self.unit(self.join(first, second), out);
                    bytes = rest;
                }
                None => {
                    self.odd = Some(first);
                    return;
                }
            }
        }
        let mut pairs = bytes.chunks_exact(2);
        for p in &mut pairs {
            self.unit(self.join(p[0], p[1]), out);
        }
        if let [last] = pairs.remainder() {
            self.odd = Some(*last);
        }
    }

    /// Ends the text: a lone last byte or high surrogate becomes U+FFFD.
    pub fn finish(&mut self, out: &mut Vec<u8>) {
        if self.odd.take().is_some() || self.high.take().is_some() {
            self.replace(out);
        }
    }

    fn join(&self, a: u8, b: u8) -> u16 {
        match self.order {
            ByteOrder::Little => u16::from_le_bytes([a, b]),
            ByteOrder::Big => u16::from_be_bytes([a, b]),
        }
    }

    fn unit(&mut self, u: u16, out: &mut Vec<u8>) {
        if let Some(h) = self.high.take() {
            if (0xDC00..0xE000).contains(&u) {
                let c = 0x10000 + ((h as u32 - 0xD800) << 10) + (u as u32 - 0xDC00);
                push_char(char::from_u32(c).expect("a surrogate pair is a valid scalar"), out);
                return;
            }
            self.replace(out);
        }
        match u {
            0xD800..=0xDBFF => self.high = Some(u),
            0xDC00..=0xDFFF => self.replace(out),
            _ => push_char(char::from_u32(u as u32).expect("not a surrogate"), out),
        }
    }

    fn replace(&mut self, out: &mut Vec<u8>) {
        self.replaced += 1;
        push_char('\u{FFFD}', out);
    }
}

fn push_char(c: char, out: &mut Vec<u8>) {
    let mut buf = [0u8; 4];
    out.extend_from_slice(c.encode_utf8(&mut buf).as_bytes());
}

/// Windows-1252 code points of bytes 0x80 to 0x9F (WHATWG index-windows-1252).
const HIGH_C1: [u16; 32] = [
    0x20AC, 0x0081, 0x201A, 0x0192, 0x201E, 0x2026, 0x2020, 0x2021, 0x02C6, 0x2030, 0x0160, 0x2039, 0x0152,
    0x008D, 0x017D, 0x008F, 0x0090, 0x2018, 0x2019, 0x201C, 0x201D, 0x2022, 0x2013, 0x2014, 0x02DC, 0x2122,
    0x0161, 0x203A, 0x0153, 0x009D, 0x017E, 0x0178,
];

/// One cell's bytes read as Windows-1252.
pub fn windows_1252(bytes: &[u8]) -> String {
    bytes
        .iter()
        .map(|&b| match b {
            0x80..=0x9F => char::from_u32(HIGH_C1[(b - 0x80) as usize] as u32).expect("table holds scalars"),
            _ => b as char,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn utf16(text: &str, order: ByteOrder) -> Vec<u8> {
        text.encode_utf16()
            .flat_map(|u| match order {
                ByteOrder::Little => u.to_le_bytes(),
                ByteOrder::Big => u.to_be_bytes(),
            })
            .collect()
    }

    #[test]
    fn detects_utf16_by_mark_or_nul_bytes() {
        assert_eq!(detect_utf16(&[0xFF, 0xFE, b'a', 0]), Some((ByteOrder::Little, 2)));
        assert_eq!(detect_utf16(&[0xFE, 0xFF, 0, b'a']), Some((ByteOrder::Big, 2)));
        assert_eq!(detect_utf16(&utf16("a,b\n1,2\n", ByteOrder::Little)), Some((ByteOrder::Little, 0)));
        assert_eq!(detect_utf16(&utf16("a,b\n1,2\n", ByteOrder::Big)), Some((ByteOrder::Big, 0)));
        assert_eq!(detect_utf16(b"a,b\n1,2\n"), None);
        // NULs on both sides: a binary file, not UTF-16.
        assert_eq!(detect_utf16(b"\x89PNG\0\0\0\rIHDR\0\x01"), None);
    }

    /// Rust's own UTF-16 encoder (`str::encode_utf16`) is the reference; every chunking of the
    /// bytes decodes to the original text, astral characters (surrogate pairs) included.
    #[test]
    fn decodes_in_any_chunking() {
        let text = "température;débit 🌊\r\n1,5;2\n";
        for order in [ByteOrder::Little, ByteOrder::Big] {
            let bytes = utf16(text, order);
            for size in 1..=bytes.len() {
                let mut d = Utf16Decoder::new(order);
                let mut out = Vec::new();
                for c in bytes.chunks(size) {
                    d.decode(c, &mut out);
                }
                d.finish(&mut out);
                assert_eq!(String::from_utf8(out).unwrap(), text, "{order:?}, chunks of {size}");
                assert_eq!(d.replaced, 0);
            }
        }
    }

    #[test]
    fn unpaired_surrogates_and_odd_ends_become_replacement_characters() {
        // WHATWG UTF-16 decoder: each of these yields U+FFFD.
        let mut d = Utf16Decoder::new(ByteOrder::Little);
        let mut out = Vec::new();
        d.decode(&[0x00, 0xDC, b'a', 0, 0x00, 0xD8, b'b', 0, b'c'], &mut out);
        d.finish(&mut out);
        assert_eq!(String::from_utf8(out).unwrap(), "\u{FFFD}a\u{FFFD}b\u{FFFD}");
        assert_eq!(d.replaced, 3);
    }

    #[test]
    fn windows_1252_matches_the_whatwg_index() {
        // ASCII and 0xA0..0xFF are the code point of the byte (Latin-1).
        assert_eq!(windows_1252(b"caf\xE9 \xC0 \xFF"), "café À ÿ");
        // From index-windows-1252 (and Python's cp1252 codec for the defined bytes).
        assert_eq!(windows_1252(b"\x80\x85\x8A\x92\x93\x94\x96\x99\x9F"), "€…Š’“”–™Ÿ");
        // The five holes map to C1 controls of the same number (WHATWG).
        assert_eq!(windows_1252(b"\x81\x8D\x8F\x90\x9D"), "\u{81}\u{8D}\u{8F}\u{90}\u{9D}");
        for b in 0u8..=255 {
            assert_eq!(windows_1252(&[b]).chars().count(), 1);
        }
    }
}
