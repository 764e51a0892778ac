//! A streaming CSV line reader for large tables: reads the file in large pieces, hands
//! out one line at a time with its 1-based number, splits it into cells (RFC 4180
//! quoting within a line), and hashes every byte it reads so that the file's SHA-256
//! comes without a second pass. Memory stays bounded by the longest line allowed.

use std::borrow::Cow;
use std::fs::File;
use std::io::Read;
use std::path::Path;

use sha2::{Digest, Sha256};

/// Longest line accepted: a table row is short; a longer line is refused, not echoed.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Bytes read from the file at a time.
const READ_BYTES: usize = 1 << 20;

/// Why a line could not be read.
#[derive(Debug)]
pub enum LineError {
    Io(std::io::Error),
    /// The line holds more than [`MAX_LINE_BYTES`] bytes.
    TooLong {
        line: u64,
    },
    /// A quoted cell is not closed on its line.
    Quote {
        line: u64,
        column: usize,
    },
    /// The line is not UTF-8.
    NotUtf8 {
        line: u64,
    },
}

/// One line of a CSV file, split into cells.
#[derive(Debug, Default)]
pub struct Row {
    /// 1-based line number.
    pub line: u64,
    text: Vec<u8>,
    /// (start, end, quoted) of each cell within `text`.
    cells: Vec<(usize, usize, bool)>,
}

impl Row {
    pub fn len(&self) -> usize {
        self.cells.len()
    }

    pub fn is_empty(&self) -> bool {
        self.cells.is_empty()
    }

    /// The cell's text, blanks around it removed and quotes undone; "" past the end.
    pub fn cell(&self, i: usize) -> Cow<'_, str> {
        let Some(&(a, b, quoted)) = self.cells.get(i) else {
            return Cow::Borrowed("");
        };
        // The whole line is UTF-8 (checked on reading) and cells split at ASCII bytes.
        let raw = std::str::from_utf8(&self.text[a..b]).unwrap_or("");
        if quoted {
            let t = raw.trim();
            let inner = t
                .strip_prefix('"')
                .and_then(|s| s.strip_suffix('"'))
                .unwrap_or(t);
            Cow::Owned(inner.replace("\"\"", "\""))
        } else {
            Cow::Borrowed(raw.trim())
        }
    }

    /// Raw bytes of a cell without blanks (no unquoting), for fast comparisons.
    pub fn raw(&self, i: usize) -> &[u8] {
        match self.cells.get(i) {
            Some(&(a, b, _)) => self.text[a..b].trim_ascii(),
            None => b"",
        }
    }

    /// 1-based byte column at which cell `i` starts (the line's end past the last cell).
    pub fn column(&self, i: usize) -> usize {
        match self.cells.get(i) {
            Some(&(a, _, _)) => a + 1,
            None => self.text.len() + 1,
        }
    }

    /// True when the line holds nothing but blanks.
    pub fn blank(&self) -> bool {
        self.text.iter().all(|b| b.is_ascii_whitespace())
    }

    fn split(&mut self) -> Result<(), LineError> {
        self.cells.clear();
        let t = &self.text;
        if !t.contains(&b'"') {
            // fast path: no quoting on this line
            let mut start = 0;
            for i in memchr::memchr_iter(b',', t) {
                self.cells.push((start, i, false));
                start = i + 1;
            }
            self.cells.push((start, t.len(), false));
            return Ok(());
        }
        let mut i = 0;
        loop {
            let start = i;
            // leading blanks before an opening quote
            let mut j = i;
            while j < t.len() && (t[j] == b' ' || t[j] == b'\t') {
                j += 1;
            }
            if j < t.len() && t[j] == b'"' {
                let mut k = j + 1;
                loop {
                    match memchr::memchr(b'"', &t[k..]) {
                        None => {
                            return Err(LineError::Quote {
                                line: self.line,
                                column: j + 1,
                            })
                        }
                        Some(q) => {
                            let q = k + q;
                            if q + 1 < t.len() && t[q + 1] == b'"' {
                                k = q + 2;
                            } else {
                                k = q + 1;
                                break;
                            }
                        }
                    }
                }
                let end = match memchr::memchr(b',', &t[k..]) {
                    Some(c) => k + c,
                    None => t.len(),
                };
                self.cells.push((start, end, true));
                if end == t.len() {
                    return Ok(());
                }
                i = end + 1;
            } else {
                let end = match memchr::memchr(b',', &t[i..]) {
                    Some(c) => i + c,
                    None => t.len(),
                };
                self.cells.push((start, end, false));
                if end == t.len() {
                    return Ok(());
                }
                i = end + 1;
            }
        }
    }
}

/// Powers of ten exact in binary.
const POW10: [f64; 16] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
];

/// A decimal number from a cell's bytes (blanks around it allowed), as `str::parse`
/// reads it. Short plain decimals (`-12.375`: at most 15 digits, no exponent) take a
/// fast exact path: the digits as an integer divided by a power of ten, both exact in
/// binary, so one correctly rounded division gives the nearest number (Clinger's fast
/// path, common practice); anything else goes to the standard parser.
pub fn parse_f64(cell: &[u8]) -> Option<f64> {
    let b = cell.trim_ascii();
    let (neg, digits) = match b.first() {
        Some(b'-') => (true, &b[1..]),
        Some(b'+') => (false, &b[1..]),
        _ => (false, b),
    };
    let mut m: u64 = 0;
    let mut n = 0;
    let mut frac = 0;
    let mut dot = false;
    let mut plain = !digits.is_empty() && digits.len() <= 16;
    if plain {
        for &c in digits {
            match c {
                b'0'..=b'9' => {
                    m = m * 10 + (c - b'0') as u64;
                    n += 1;
                    if dot {
                        frac += 1;
                    }
                }
                b'.' if !dot => dot = true,
                _ => {
                    plain = false;
                    break;
                }
            }
        }
    }
    if plain && n > 0 && n <= 15 {
        let v = m as f64 / POW10[frac];
        return Some(if neg { -v } else { v });
    }
    std::str::from_utf8(b).ok()?.parse::<f64>().ok()
}

/// A short plain decimal at the start of `b` (blanks before and after it allowed), as
/// [`parse_f64`] reads it, and the bytes it takes with those blanks; `None` when what is
/// there is not such a number (then the caller reads the cell with [`parse_f64`]). For
/// readers that parse a record in one pass without first splitting it into cells.
#[inline]
pub fn parse_f64_prefix(b: &[u8]) -> Option<(f64, usize)> {
    let mut i = 0;
    while i < b.len() && (b[i] == b' ' || b[i] == b'\t') {
        i += 1;
    }
    let neg = match b.get(i) {
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
    let mut m: u64 = 0;
    let mut n = 0;
    let mut frac = 0;
    let mut dot = false;
    while i < b.len() && i - start < 16 {
        let c = b[i];
        if c.is_ascii_digit() {
            m = m * 10 + (c - b'0') as u64;
            n += 1;
            frac += dot as usize;
        } else if c == b'.' && !dot {
            dot = true;
        } else {
            break;
        }
        i += 1;
    }
    if n == 0 || n > 15 || (i < b.len() && (b[i].is_ascii_digit() || b[i] == b'.')) {
        return None;
    }
    while i < b.len() && (b[i] == b' ' || b[i] == b'\t') {
        i += 1;
    }
    // the digits as an integer over a power of ten, both exact (Clinger's fast path, as parse_f64)
    let v = m as f64 / POW10[frac];
    Some((if neg { -v } else { v }, i))
}

/// A line without its carriage return and, on line 1, a UTF-8 byte-order mark.
fn trim_line(mut line: &[u8], number: u64) -> &[u8] {
    if line.last() == Some(&b'\r') {
        line = &line[..line.len() - 1];
    }
    if number == 1 && line.starts_with(&[0xef, 0xbb, 0xbf]) {
        line = &line[3..];
    }
    line
}

impl Row {
    /// Fill this row from raw line bytes (checked for UTF-8 and split into cells).
    pub fn set(&mut self, line: u64, bytes: &[u8]) -> Result<(), LineError> {
        if std::str::from_utf8(bytes).is_err() {
            return Err(LineError::NotUtf8 { line });
        }
        self.text.clear();
        self.text.extend_from_slice(bytes);
        self.line = line;
        self.split()
    }
}

/// Reads a CSV file line by line, hashing what it reads.
pub struct CsvLines {
    file: File,
    buf: Vec<u8>,
    pos: usize,
    len: usize,
    eof: bool,
    line: u64,
    hasher: Sha256,
    bytes: u64,
}

impl CsvLines {
    pub fn open(path: &Path) -> std::io::Result<CsvLines> {
        Ok(CsvLines {
            file: File::open(path)?,
            buf: vec![0u8; READ_BYTES],
            pos: 0,
            len: 0,
            eof: false,
            line: 0,
            hasher: Sha256::new(),
            bytes: 0,
        })
    }

    fn fill(&mut self) -> std::io::Result<()> {
        // keep the unread tail at the front
        self.buf.copy_within(self.pos..self.len, 0);
        self.len -= self.pos;
        self.pos = 0;
        if self.buf.len() - self.len < READ_BYTES / 2 {
            self.buf.resize(self.len + READ_BYTES, 0);
        }
        let k = loop {
            match self.file.read(&mut self.buf[self.len..]) {
                Ok(k) => break k,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(e),
            }
        };
        self.hasher.update(&self.buf[self.len..self.len + k]);
        self.bytes += k as u64;
        self.len += k;
        if k == 0 {
            self.eof = true;
        }
        Ok(())
    }

    /// Bytes of the file consumed so far: the offset of the next line's first byte.
    pub fn offset(&self) -> u64 {
        self.bytes - (self.len - self.pos) as u64
    }

    /// The next line into `row` (its text and cells); false at the end of the file.
    pub fn next_row(&mut self, row: &mut Row) -> Result<bool, LineError> {
        loop {
            if let Some(nl) = memchr::memchr(b'\n', &self.buf[self.pos..self.len]) {
                let end = self.pos + nl;
                self.line += 1;
                if nl > MAX_LINE_BYTES {
                    return Err(LineError::TooLong { line: self.line });
                }
                self.take(end, end + 1, row)?;
                return Ok(true);
            }
            if self.len - self.pos > MAX_LINE_BYTES {
                return Err(LineError::TooLong {
                    line: self.line + 1,
                });
            }
            if self.eof {
                if self.pos == self.len {
                    return Ok(false);
                }
                self.line += 1;
                let end = self.len;
                self.take(end, end, row)?;
                return Ok(true);
            }
            self.fill().map_err(LineError::Io)?;
        }
    }

    /// The next line as raw bytes in the reader's buffer (no copy, no UTF-8 check, line
    /// end and a first-line byte-order mark removed) with its 1-based number; `None` at
    /// the end of the file. For fast paths that split and check what they use.
    pub fn next_raw(&mut self) -> Result<Option<(u64, &[u8])>, LineError> {
        loop {
            if let Some(nl) = memchr::memchr(b'\n', &self.buf[self.pos..self.len]) {
                let start = self.pos;
                self.line += 1;
                if nl > MAX_LINE_BYTES {
                    return Err(LineError::TooLong { line: self.line });
                }
                self.pos = start + nl + 1;
                return Ok(Some((
                    self.line,
                    trim_line(&self.buf[start..start + nl], self.line),
                )));
            }
            if self.len - self.pos > MAX_LINE_BYTES {
                return Err(LineError::TooLong {
                    line: self.line + 1,
                });
            }
            if self.eof {
                if self.pos == self.len {
                    return Ok(None);
                }
                self.line += 1;
                let start = self.pos;
                self.pos = self.len;
                return Ok(Some((
                    self.line,
                    trim_line(&self.buf[start..self.len], self.line),
                )));
            }
            self.fill().map_err(LineError::Io)?;
        }
    }

    fn take(&mut self, end: usize, next: usize, row: &mut Row) -> Result<(), LineError> {
        let mut line = &self.buf[self.pos..end];
        if line.last() == Some(&b'\r') {
            line = &line[..line.len() - 1];
        }
        if self.line == 1 && line.starts_with(&[0xef, 0xbb, 0xbf]) {
            // a UTF-8 byte-order mark, as spreadsheets write it
            line = &line[3..];
        }
        if std::str::from_utf8(line).is_err() {
            return Err(LineError::NotUtf8 { line: self.line });
        }
        row.text.clear();
        row.text.extend_from_slice(line);
        row.line = self.line;
        self.pos = next;
        row.split()
    }

    /// Read what is left (so the hash covers the whole file) and return the SHA-256 and
    /// the size in bytes.
    pub fn finish(mut self) -> std::io::Result<(String, u64)> {
        while !self.eof {
            self.pos = self.len;
            self.fill()?;
        }
        Ok((crate::files::hex(&self.hasher.finalize()), self.bytes))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rows(text: &str) -> Vec<Vec<String>> {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        std::fs::write(&p, text).unwrap();
        let mut r = CsvLines::open(&p).unwrap();
        let mut row = Row::default();
        let mut out = Vec::new();
        while r.next_row(&mut row).unwrap() {
            out.push((0..row.len()).map(|i| row.cell(i).into_owned()).collect());
        }
        let (h, n) = r.finish().unwrap();
        // SHA-256 of the bytes as read equals the one-pass hash of the file (common practice)
        assert_eq!(h, crate::files::sha256_hex(text.as_bytes()));
        assert_eq!(n, text.len() as u64);
        out
    }

    #[test]
    fn splits_plain_and_quoted_cells() {
        assert_eq!(
            rows("a,b, c\r\n\"x, y\",\"say \"\"hi\"\"\",3\nlast"),
            vec![
                vec!["a", "b", "c"],
                vec!["x, y", "say \"hi\"", "3"],
                vec!["last"]
            ]
        );
    }

    #[test]
    fn fast_numbers_read_as_the_standard_parser_does() {
        // the fast path must give the very number `str::parse` gives (common practice:
        // IEEE 754 round to nearest)
        for t in [
            "0",
            "-0",
            "12",
            "-12.375",
            "0.1",
            "3.14159265358979",
            "999999999999999",
            ".5",
            "5.",
            "+7.25",
            " 42.000 ",
            "1e3",
            "-2.5E-4",
            "12345678901234567",
            "nan",
            "inf",
            "1.2.3",
            "",
            "-",
            ".",
            "0x10",
        ] {
            let want = t.trim().parse::<f64>().ok();
            let got = parse_f64(t.as_bytes());
            match (want, got) {
                (Some(a), Some(b)) => assert!(
                    a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan()),
                    "{t}: {a} vs {b}"
                ),
                (None, None) => {}
                other => panic!("{t}: {other:?}"),
            }
        }
    }

    proptest::proptest! {
        // random plain decimals of up to 15 digits: bit for bit the standard parser
        #[test]
        fn fast_numbers_match_for_any_plain_decimal(
            m in 0u64..1_000_000_000_000_000,
            frac in 0usize..15,
            neg in proptest::bool::ANY,
        ) {
            let digits = m.to_string();
            let t = if frac == 0 || frac >= digits.len() {
                digits.clone()
            } else {
                format!("{}.{}", &digits[..digits.len() - frac], &digits[digits.len() - frac..])
            };
            let t = if neg { format!("-{t}") } else { t };
            let want: f64 = t.parse().unwrap();
            proptest::prop_assert_eq!(parse_f64(t.as_bytes()).map(f64::to_bits), Some(want.to_bits()), "{}", t);
        }
    }

    #[test]
    fn prefix_numbers_read_as_the_cell_parser_does() {
        // where the prefix reader takes a number, parse_f64 of the same cell gives the
        // very same bits (common practice: one formula for both)
        for t in [
            "0",
            "-0",
            "12",
            "-12.375",
            " 0.1 ",
            ".5",
            "5.",
            "+7.25",
            "999999999999999",
            "3.14159265358979",
            "1e3",
            "1234567890123456",
            "12345678901234567",
            "-",
            ".",
            "1.2.3",
            "",
            " ",
            "nan",
            "7x",
        ] {
            match parse_f64_prefix(t.as_bytes()) {
                Some((v, k)) if k == t.len() => {
                    assert_eq!(
                        Some(v.to_bits()),
                        parse_f64(t.as_bytes()).map(f64::to_bits),
                        "{t}"
                    )
                }
                // stopped inside the cell: a reader then takes the cell to parse_f64
                Some((_, k)) => assert!(!matches!(t.as_bytes()[k], b',' | b'\n'), "{t}"),
                None => {}
            }
        }
        assert_eq!(parse_f64_prefix(b"-1.5, 2"), Some((-1.5, 4)));
        assert_eq!(parse_f64_prefix(b"42\n"), Some((42.0, 2)));
        assert_eq!(parse_f64_prefix(b"1e3,"), Some((1.0, 1)));
    }

    #[test]
    fn byte_order_mark_and_empty_cells() {
        assert_eq!(rows("\u{feff}id,,x\n"), vec![vec!["id", "", "x"]]);
    }

    #[test]
    fn unclosed_quote_and_long_line_are_errors() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        std::fs::write(&p, "a,b\n\"open,1\n").unwrap();
        let mut r = CsvLines::open(&p).unwrap();
        let mut row = Row::default();
        assert!(r.next_row(&mut row).unwrap());
        assert!(matches!(
            r.next_row(&mut row),
            Err(LineError::Quote { line: 2, column: 1 })
        ));
        let long = format!("a\n{}\n", "x".repeat(MAX_LINE_BYTES + 10));
        std::fs::write(&p, long).unwrap();
        let mut r = CsvLines::open(&p).unwrap();
        assert!(r.next_row(&mut row).unwrap());
        assert!(matches!(
            r.next_row(&mut row),
            Err(LineError::TooLong { line: 2 })
        ));
    }
}
