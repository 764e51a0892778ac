//! Streaming reading of stress or strain time series from CSV files.
//!
//! The file is never loaded whole: records are read one at a time into a
//! reused [`csv::ByteRecord`], converted to MPa and handed on in small
//! chunks, so a file of any length is counted in bounded memory.

use crate::files::text::{escape_controls, short_num, CLIP_CHARS};
use crate::histories::damage::{add_cycle, DamageTally, SharedRule};
use crate::histories::rainflow::{CountStats, Cycle, GateError, RainflowCounter, ResidueMode};
use crate::histories::spectrum::{MatrixCell, RangeBin, Spectrum, SpectrumError, SpectrumSpec};
use serde::Serialize;
use std::fmt;
use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};

/// Samples converted per chunk handed to the counter.
const CHUNK: usize = 4096;

/// Longest line read from a series file, in bytes. A record line holds a few numbers;
/// a longer line means the file is not a record (or a device that never ends a line),
/// and reading it whole would take memory without bound.
pub const MAX_LINE_BYTES: usize = 1024 * 1024;

/// Largest stress magnitude accepted in a series, MPa. The strongest structural steels
/// reach about 1 500 MPa; 1e5 MPa is far beyond any of them, so a larger value is a
/// unit or scale mistake (Pa for MPa, strain for µε), and beyond it ranges and damage
/// sums would overflow.
pub const MAX_SERIES_STRESS_MPA: f64 = 1e5;

/// Marker carried inside the I/O error when a line is too long.
#[derive(Debug)]
struct LineTooLong {
    line: u64,
}

impl fmt::Display for LineTooLong {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "line {} is longer than {MAX_LINE_BYTES} bytes",
            self.line
        )
    }
}

impl std::error::Error for LineTooLong {}

/// A reader that fails, instead of reading on, when a line exceeds [`MAX_LINE_BYTES`].
/// It looks only at the first and last newline of each buffer read, so it costs next to
/// nothing on ordinary records.
struct LineBound<R> {
    inner: R,
    /// Bytes since the last newline.
    run: usize,
    /// Newlines seen.
    newlines: u64,
}

impl<R: Read> Read for LineBound<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        let b = &buf[..n];
        match b.iter().position(|&c| c == b'\n') {
            None => self.run += n,
            Some(first) => {
                if self.run + first > MAX_LINE_BYTES {
                    return Err(std::io::Error::other(LineTooLong {
                        line: self.newlines + 1,
                    }));
                }
                let last = b.iter().rposition(|&c| c == b'\n').unwrap_or(first);
                // Lines wholly inside this buffer are shorter than the buffer; the
                // buffer (64 KiB) is far below the limit, so only the ends matter.
                self.newlines +=
                    1 + b[first + 1..=last].iter().filter(|&&c| c == b'\n').count() as u64;
                self.run = n - last - 1;
            }
        }
        if self.run > MAX_LINE_BYTES {
            return Err(std::io::Error::other(LineTooLong {
                line: self.newlines + 1,
            }));
        }
        Ok(n)
    }
}

type SeriesReader = csv::Reader<LineBound<BufReader<File>>>;

/// Which column holds the signal.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub enum ColumnRef {
    /// By header name (needs `has_header`); matched after trimming blanks.
    Name(String),
    /// By position, 1-based.
    Index(usize),
}

impl fmt::Display for ColumnRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ColumnRef::Name(n) => write!(f, "'{n}'"),
            ColumnRef::Index(i) => write!(f, "{i}"),
        }
    }
}

/// What the values are.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub enum SeriesUnit {
    /// Stress in MPa.
    Mpa,
    /// Strain in µε, turned into stress with Young's modulus.
    Microstrain {
        /// Young's modulus, MPa (210000 for steel, common practice).
        modulus_mpa: f64,
    },
}

/// A time series to read.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SeriesSpec {
    /// CSV file (comma separated; blanks around fields are ignored).
    pub path: PathBuf,
    /// Column holding the signal.
    pub column: ColumnRef,
    /// Whether the first line holds column names.
    pub has_header: bool,
    /// What the values are.
    pub unit: SeriesUnit,
    /// Factor applied to every value (1.0 for none).
    pub scale: f64,
}

impl SeriesSpec {
    /// Factor from file value to MPa.
    pub fn factor_to_mpa(&self) -> f64 {
        match self.unit {
            // σ = value · scale
            SeriesUnit::Mpa => self.scale,
            // σ = E·ε with ε = value·1e-6 (Hooke's law, common practice)
            SeriesUnit::Microstrain { modulus_mpa } => 1e-6 * modulus_mpa * self.scale,
        }
    }
}

/// Why a time series could not be read or counted.
#[derive(Debug, thiserror::Error)]
pub enum SeriesError {
    /// The file cannot be opened.
    #[error("cannot open time series file {path}: {source}")]
    Open {
        /// File.
        path: PathBuf,
        /// Cause.
        source: std::io::Error,
    },
    /// The file could not be read or parsed as CSV.
    #[error("cannot read time series file {path}{}: {source}", line_suffix(*line))]
    Read {
        /// File.
        path: PathBuf,
        /// Line where reading failed, when known.
        line: Option<u64>,
        /// Cause.
        source: csv::Error,
    },
    /// No data row at all.
    #[error("time series file {path} holds no samples")]
    Empty {
        /// File.
        path: PathBuf,
    },
    /// A single data row.
    #[error(
        "time series file {path} holds a single sample; at least two are needed to count cycles"
    )]
    TooShort {
        /// File.
        path: PathBuf,
        /// Samples found.
        samples: u64,
    },
    /// A cell that is not a number.
    #[error("time series file {path}, line {line}, column {column}: '{text}'{} is not a number", length_note(*chars))]
    NotNumeric {
        /// File.
        path: PathBuf,
        /// 1-based line in the file.
        line: u64,
        /// Column, as named by the user (and its header name, if any).
        column: String,
        /// Offending cell text, cut to its first 60 characters and an ellipsis when longer.
        text: String,
        /// Length of the whole cell, in characters.
        chars: usize,
    },
    /// NaN or infinite value.
    #[error(
        "time series file {path}, line {line}, column {column}: '{text}'{} is not a finite number", length_note(*chars)
    )]
    NonFinite {
        /// File.
        path: PathBuf,
        /// 1-based line in the file.
        line: u64,
        /// Column, as named by the user (and its header name, if any).
        column: String,
        /// Offending cell text, cut as for `NotNumeric`.
        text: String,
        /// Length of the whole cell, in characters.
        chars: usize,
    },
    /// A stress beyond any structural material, almost always a unit mistake.
    #[error(
        "time series file {path}, line {line}, column {column}: {} MPa (cell '{text}', after unit and scale) is beyond the {} MPa that any stress in a steel detail can reach", short_num(*value_mpa), short_num(MAX_SERIES_STRESS_MPA)
    )]
    OutOfRange {
        /// File.
        path: PathBuf,
        /// 1-based line in the file.
        line: u64,
        /// Column, as named by the user (and its header name, if any).
        column: String,
        /// Offending cell text, cut as for `NotNumeric`.
        text: String,
        /// The value in MPa.
        value_mpa: f64,
    },
    /// A line longer than any record line should be (a file that is not a CSV record,
    /// or a device that never ends a line).
    #[error("time series file {path}, line {line}: the line is longer than {} MiB; a record line holds a few numbers", MAX_LINE_BYTES / (1024 * 1024))]
    LineTooLong {
        /// File.
        path: PathBuf,
        /// 1-based line in the file.
        line: u64,
    },
    /// A column name chosen that the header holds more than once.
    #[error("time series file {path}: the header names column '{name}' {} times (columns {}); a name must pick one column", positions.len(), positions.iter().map(|p| p.to_string()).collect::<Vec<_>>().join(", "))]
    DuplicateColumn {
        /// File.
        path: PathBuf,
        /// The name asked for.
        name: String,
        /// 1-based positions where it occurs.
        positions: Vec<usize>,
    },
    /// A row too short to hold the column.
    #[error(
        "time series file {path}, line {line}: no column {column} (the row has {fields} fields)"
    )]
    ShortRow {
        /// File.
        path: PathBuf,
        /// 1-based line in the file.
        line: u64,
        /// Column, as named by the user (and its header name, if any).
        column: String,
        /// Fields in the row.
        fields: usize,
    },
    /// No column of that name in the header.
    #[error(
        "time series file {path} has no column named '{name}'; columns present: {}",
        list_columns(available)
    )]
    NoSuchColumn {
        /// File.
        path: PathBuf,
        /// Name asked for.
        name: String,
        /// Header names found.
        available: Vec<String>,
    },
    /// Column index past the last column.
    #[error("time series file {path}: column index {index} is out of range; the first row has {columns} column(s), numbered from 1")]
    ColumnOutOfRange {
        /// File.
        path: PathBuf,
        /// Index asked for (1-based).
        index: usize,
        /// Columns in the first row.
        columns: usize,
    },
    /// A sample of a binary record that is not a finite stress within bounds.
    #[error("binary record {path}, sample {sample} (1-based), channel {channel}: {} MPa (after unit and scale) is not a finite stress within ±{} MPa", short_num(*value_mpa), short_num(MAX_SERIES_STRESS_MPA))]
    BadSample {
        /// File.
        path: PathBuf,
        /// 1-based sample (row) number.
        sample: u64,
        /// 1-based channel.
        channel: usize,
        /// The value in MPa.
        value_mpa: f64,
    },
    /// A binary record whose header or size is not right.
    #[error("binary record {path}: {reason}")]
    BadBinary {
        /// File.
        path: PathBuf,
        /// What is wrong.
        reason: String,
    },
    /// The request itself is wrong.
    #[error("invalid time series request: {0}")]
    Invalid(String),
    /// A spectrum part read in place of a time series cannot serve the event.
    #[error("{0}")]
    Part(String),
    /// Bad hysteresis gate.
    #[error(transparent)]
    Gate(#[from] GateError),
    /// Bad binning rule.
    #[error(transparent)]
    Spectrum(#[from] SpectrumError),
}

fn length_note(chars: usize) -> String {
    if chars > CLIP_CHARS {
        format!(" ({chars} characters)")
    } else {
        String::new()
    }
}

/// A cell's text for a message: at most [`CLIP_CHARS`] characters, then an ellipsis;
/// and its whole length in characters.
pub(crate) fn cell_text(cell: &[u8]) -> (String, usize) {
    let t = String::from_utf8_lossy(cell.trim_ascii());
    let chars = t.chars().count();
    if chars <= CLIP_CHARS {
        (escape_controls(&t).into_owned(), chars)
    } else {
        let head: String = t.chars().take(CLIP_CHARS).collect();
        (format!("{}…", escape_controls(&head)), chars)
    }
}

fn line_suffix(line: Option<u64>) -> String {
    match line {
        Some(l) => format!(" at line {l}"),
        None => String::new(),
    }
}

/// Header names listed in a message: at most 20, each cut to 60 characters.
fn list_columns(cols: &[String]) -> String {
    const SHOWN: usize = 20;
    if cols.is_empty() {
        return "none".to_string();
    }
    let mut s = cols
        .iter()
        .take(SHOWN)
        .map(|c| {
            let (t, _) = cell_text(c.as_bytes());
            format!("'{t}'")
        })
        .collect::<Vec<_>>()
        .join(", ");
    if cols.len() > SHOWN {
        s.push_str(&format!(" and {} more", cols.len() - SHOWN));
    }
    s
}

/// Facts about a series that was streamed.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct SeriesInfo {
    /// Samples read.
    pub samples: u64,
    /// Smallest stress, MPa.
    pub min_mpa: f64,
    /// Largest stress, MPa.
    pub max_mpa: f64,
}

/// How to count and bin a series.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CountOptions {
    /// Hysteresis gate, MPa (0 for none).
    pub gate_mpa: f64,
    /// How the residue is counted.
    pub mode: ResidueMode,
    /// Binning of the range histogram and range-mean matrix.
    pub bins: SpectrumSpec,
}

/// A counted and binned series.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CountedSeries {
    /// Counter totals (samples, reversals, cycles, extremes in MPa).
    pub stats: CountStats,
    /// Range histogram (occupied bins, by increasing range).
    pub histogram: Vec<RangeBin>,
    /// Range-mean matrix (occupied cells, by range then mean).
    pub matrix: Vec<MatrixCell>,
    /// Cycles counted, half cycles as 0.5.
    pub total_cycles: f64,
    /// Full cycles counted.
    pub full_cycles: u64,
    /// Half cycles counted.
    pub half_cycles: u64,
    /// Largest range counted, MPa.
    pub max_range_mpa: f64,
    /// Final range bin width, MPa.
    pub range_width_mpa: f64,
    /// Final mean bin width, MPa.
    pub mean_width_mpa: f64,
    /// Every sample had the same value (then there are no cycles).
    pub constant: bool,
    /// Mean of the samples, MPa.
    pub mean_mpa: f64,
    /// Population standard deviation of the samples, MPa.
    pub std_dev_mpa: f64,
}

/// Running mean and variance (Welford's algorithm, common practice).
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct Moments {
    n: f64,
    mean: f64,
    m2: f64,
}

impl Moments {
    pub(crate) fn add(&mut self, x: f64) {
        // Welford: δ = x − mean; mean += δ/n; M2 += δ·(x − mean)
        self.n += 1.0;
        let d = x - self.mean;
        self.mean += d / self.n;
        self.m2 += d * (x - self.mean);
    }

    /// Add many samples: their own mean and sum of squared deviations (two passes
    /// that vectorise), folded in by [`Moments::merge`].
    pub(crate) fn add_slice(&mut self, xs: &[f64]) {
        if xs.is_empty() {
            return;
        }
        let n = xs.len() as f64;
        // mean = Σx/n; M2 = Σ(x − mean)² (two-pass variance, common practice)
        let mean = sum4(xs.iter().copied()) / n;
        let m2 = sum4(xs.iter().map(|&x| (x - mean) * (x - mean)));
        self.merge(&Moments { n, mean, m2 });
    }

    /// Fold in the moments of samples that follow (Chan, Golub and LeVeque's pairwise
    /// update, common practice).
    pub(crate) fn merge(&mut self, o: &Moments) {
        if o.n == 0.0 {
            return;
        }
        if self.n == 0.0 {
            *self = *o;
            return;
        }
        // n = na + nb; δ = mean_b − mean_a; mean = mean_a + δ·nb/n; M2 = M2a + M2b + δ²·na·nb/n
        let n = self.n + o.n;
        let d = o.mean - self.mean;
        self.mean += d * o.n / n;
        self.m2 += o.m2 + d * d * self.n * o.n / n;
        self.n = n;
    }

    /// Samples, mean and sum of squared deviations, as a spectrum part saves them.
    pub(crate) fn parts(&self) -> (f64, f64, f64) {
        (self.n, self.mean, self.m2)
    }

    /// Moments from their saved parts (checked by the caller).
    pub(crate) fn from_parts(n: f64, mean: f64, m2: f64) -> Moments {
        Moments { n, mean, m2 }
    }

    fn std_dev(&self) -> f64 {
        if self.n > 0.0 {
            (self.m2 / self.n).sqrt()
        } else {
            0.0
        }
    }
}

/// Sum in four lanes (so that the compiler may vectorise it).
fn sum4(xs: impl Iterator<Item = f64>) -> f64 {
    let mut acc = [0.0f64; 4];
    for (i, x) in xs.enumerate() {
        acc[i & 3] += x;
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3])
}

/// Resolved column and its label for messages.
pub(crate) struct Column {
    /// 0-based position.
    pub(crate) pos: usize,
    pub(crate) label: String,
}

fn open(spec: &SeriesSpec) -> Result<SeriesReader, SeriesError> {
    let file = crate::files::open_regular(&spec.path).map_err(|source| SeriesError::Open {
        path: spec.path.clone(),
        source,
    })?;
    Ok(csv::ReaderBuilder::new()
        .has_headers(spec.has_header)
        .flexible(true)
        .buffer_capacity(1 << 16)
        .from_reader(LineBound {
            inner: BufReader::with_capacity(1 << 16, file),
            run: 0,
            newlines: 0,
        }))
}

/// 1-based line on which the record at `pos` starts.
///
/// The csv reader's own line count lags one line behind on files with CRLF
/// line ends (rust-csv issue #395), so on this error path the file is read
/// once more up to the record's byte offset and its newlines are counted.
/// The offset points either at the record's first byte or at the `\n` of
/// the CRLF before it, so the newlines among the first `offset + 1` bytes
/// are the lines before the record in both cases.
fn record_line(path: &Path, pos: &csv::Position) -> u64 {
    let count = || -> std::io::Result<u64> {
        let mut f = BufReader::new(crate::files::open_regular(path)?).take(pos.byte() + 1);
        let mut buf = vec![0u8; 1 << 16];
        let mut newlines = 0u64;
        loop {
            let k = f.read(&mut buf)?;
            if k == 0 {
                break;
            }
            newlines += buf[..k].iter().filter(|&&b| b == b'\n').count() as u64;
        }
        Ok(newlines + 1)
    };
    count().unwrap_or(pos.line())
}

fn read_err(path: &Path, e: csv::Error) -> SeriesError {
    if let csv::ErrorKind::Io(io) = e.kind() {
        if let Some(t) = io.get_ref().and_then(|x| x.downcast_ref::<LineTooLong>()) {
            return SeriesError::LineTooLong {
                path: path.to_path_buf(),
                line: t.line,
            };
        }
    }
    let line = e.position().map(|p| record_line(path, p));
    SeriesError::Read {
        path: path.to_path_buf(),
        line,
        source: e,
    }
}

fn resolve(
    spec: &SeriesSpec,
    rdr: &mut SeriesReader,
    first: Option<&csv::ByteRecord>,
) -> Result<Column, SeriesError> {
    let headers = header_names(spec, rdr)?;
    resolve_column(
        &spec.path,
        &spec.column,
        spec.has_header,
        &headers,
        first.map_or(0, |r| r.len()),
    )
}

fn header_names(spec: &SeriesSpec, rdr: &mut SeriesReader) -> Result<Vec<String>, SeriesError> {
    Ok(if spec.has_header {
        rdr.byte_headers()
            .map_err(|e| read_err(&spec.path, e))?
            .iter()
            .map(|h| String::from_utf8_lossy(h.trim_ascii()).into_owned())
            .collect()
    } else {
        Vec::new()
    })
}

/// The header names of a series file (none without a header), by the reference reader.
pub(crate) fn column_names(spec: &SeriesSpec) -> Result<Vec<String>, SeriesError> {
    let mut rdr = open(spec)?;
    if spec.has_header {
        return header_names(spec, &mut rdr);
    }
    let mut rec = csv::ByteRecord::new();
    rdr.read_byte_record(&mut rec)
        .map_err(|e| read_err(&spec.path, e))?;
    Ok((1..=rec.len()).map(|i| i.to_string()).collect())
}

/// The column `column` among `headers` (with a header) or among the `first_fields`
/// fields of the first row (without one).
pub(crate) fn resolve_column(
    path: &Path,
    column: &ColumnRef,
    has_header: bool,
    headers: &[String],
    first_fields: usize,
) -> Result<Column, SeriesError> {
    match column {
        ColumnRef::Name(name) => {
            if !has_header {
                return Err(SeriesError::Invalid(format!(
                    "column '{name}' is chosen by name but the file is read without a header line"
                )));
            }
            let want = name.trim();
            let found: Vec<usize> = headers
                .iter()
                .enumerate()
                .filter(|(_, h)| *h == want)
                .map(|(i, _)| i)
                .collect();
            match found.as_slice() {
                [pos] => Ok(Column {
                    pos: *pos,
                    label: format!("'{}'", escape_controls(want)),
                }),
                [] => Err(SeriesError::NoSuchColumn {
                    path: path.to_path_buf(),
                    name: escape_controls(name).into_owned(),
                    available: headers.to_vec(),
                }),
                many => Err(SeriesError::DuplicateColumn {
                    path: path.to_path_buf(),
                    name: escape_controls(want).into_owned(),
                    positions: many.iter().map(|p| p + 1).collect(),
                }),
            }
        }
        ColumnRef::Index(i) => {
            if *i == 0 {
                return Err(SeriesError::Invalid(
                    "column index is 1-based; 0 does not name a column".to_string(),
                ));
            }
            let columns = if has_header {
                headers.len()
            } else {
                first_fields
            };
            if *i > columns {
                return Err(SeriesError::ColumnOutOfRange {
                    path: path.to_path_buf(),
                    index: *i,
                    columns,
                });
            }
            let label = match headers.get(i - 1) {
                Some(h) if !h.is_empty() => format!("{i} ('{}')", cell_text(h.as_bytes()).0),
                _ => format!("{i}"),
            };
            Ok(Column { pos: i - 1, label })
        }
    }
}

/// Parse one cell, blanks around it ignored; `None` if not a number.
/// (Trimming here rather than in the csv reader, whose trimming copies
/// every record.)
#[inline]
fn parse_cell(bytes: &[u8]) -> Option<f64> {
    std::str::from_utf8(bytes.trim_ascii())
        .ok()?
        .parse::<f64>()
        .ok()
}

/// Stream the stress values of a series, in MPa, in chunks of a few
/// thousand samples. `f` sees every sample exactly once, in order.
///
/// Errors: the file cannot be opened or read, a cell is not a finite
/// number, the column does not exist, or the file holds fewer than two
/// samples (checked at the end, after `f` has seen what there was).
pub fn stream_series<F: FnMut(&[f64])>(
    spec: &SeriesSpec,
    mut f: F,
) -> Result<SeriesInfo, SeriesError> {
    let factor = spec.factor_to_mpa();
    if !factor.is_finite() || factor == 0.0 {
        return Err(SeriesError::Invalid(format!(
            "the factor from file values to MPa must be finite and non-zero, got {factor} (scale {}, unit {:?})",
            spec.scale, spec.unit
        )));
    }
    let mut rdr = open(spec)?;
    let mut rec = csv::ByteRecord::new();
    let have_first = rdr
        .read_byte_record(&mut rec)
        .map_err(|e| read_err(&spec.path, e))?;
    if !have_first {
        return Err(SeriesError::Empty {
            path: spec.path.clone(),
        });
    }
    let col = resolve(spec, &mut rdr, Some(&rec))?;
    let mut buf = vec![0.0f64; CHUNK];
    let mut n = 0usize;
    let mut samples = 0u64;
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    loop {
        let line = || rec.position().map_or(0, |p| record_line(&spec.path, p));
        let Some(cell) = rec.get(col.pos) else {
            return Err(SeriesError::ShortRow {
                path: spec.path.clone(),
                line: line(),
                column: col.label.clone(),
                fields: rec.len(),
            });
        };
        let v = match parse_cell(cell) {
            Some(v) if v.is_finite() => v * factor,
            Some(_) => {
                let (text, chars) = cell_text(cell);
                return Err(SeriesError::NonFinite {
                    path: spec.path.clone(),
                    line: line(),
                    column: col.label.clone(),
                    text,
                    chars,
                });
            }
            None => {
                let (text, chars) = cell_text(cell);
                return Err(SeriesError::NotNumeric {
                    path: spec.path.clone(),
                    line: line(),
                    column: col.label.clone(),
                    text,
                    chars,
                });
            }
        };
        if !v.is_finite() {
            // finite value overflowing once scaled
            let (text, chars) = cell_text(cell);
            return Err(SeriesError::NonFinite {
                path: spec.path.clone(),
                line: line(),
                column: col.label.clone(),
                text,
                chars,
            });
        }
        if v.abs() > MAX_SERIES_STRESS_MPA {
            return Err(SeriesError::OutOfRange {
                path: spec.path.clone(),
                line: line(),
                column: col.label.clone(),
                text: cell_text(cell).0,
                value_mpa: v,
            });
        }
        lo = lo.min(v);
        hi = hi.max(v);
        buf[n] = v;
        n += 1;
        samples += 1;
        if n == CHUNK {
            f(&buf);
            n = 0;
        }
        if !rdr
            .read_byte_record(&mut rec)
            .map_err(|e| read_err(&spec.path, e))?
        {
            break;
        }
    }
    if n > 0 {
        f(&buf[..n]);
    }
    if samples < 2 {
        return Err(SeriesError::TooShort {
            path: spec.path.clone(),
            samples,
        });
    }
    Ok(SeriesInfo {
        samples,
        min_mpa: lo,
        max_mpa: hi,
    })
}

/// Rainflow count a series, handing each cycle (MPa) to `sink`.
pub fn count_series_with<F: FnMut(Cycle)>(
    spec: &SeriesSpec,
    gate_mpa: f64,
    mode: ResidueMode,
    sink: &mut F,
) -> Result<CountStats, SeriesError> {
    let mut counter = RainflowCounter::try_new(gate_mpa)?;
    stream_series(spec, |xs| counter.push_slice(xs, sink))?;
    Ok(counter.finish(mode, sink))
}

/// Rainflow count and bin a series: the fast reader on all cores
/// ([`crate::histories::ingest`]); the same result as [`count_series_reference`].
pub fn count_series(spec: &SeriesSpec, opts: &CountOptions) -> Result<CountedSeries, SeriesError> {
    crate::histories::ingest::count_one(spec, opts)
}

/// Rainflow count and bin a series with the reference reader: the csv crate, one
/// record at a time on one thread (quoted cells over several lines are read too).
pub fn count_series_reference(
    spec: &SeriesSpec,
    opts: &CountOptions,
) -> Result<CountedSeries, SeriesError> {
    Ok(count_series_reference_rated(spec, opts, &[])?.0)
}

/// [`count_series_reference`], with the damage of every cycle summed by each rule.
pub fn count_series_reference_rated(
    spec: &SeriesSpec,
    opts: &CountOptions,
    rules: &[SharedRule],
) -> Result<(CountedSeries, Vec<DamageTally>), SeriesError> {
    let mut spectrum = Spectrum::new(opts.bins)?;
    let mut tallies: Vec<DamageTally> = rules
        .iter()
        .map(|r| DamageTally::new(&**r, &spectrum))
        .collect();
    let mut counter = RainflowCounter::try_new(opts.gate_mpa)?;
    let mut moments = Moments::default();
    let mut sink = |c: Cycle| add_cycle(&mut spectrum, &mut tallies, rules, &c);
    stream_series(spec, |xs| {
        for &x in xs {
            moments.add(x);
        }
        counter.push_slice(xs, &mut sink);
    })?;
    let stats = counter.finish(opts.mode, &mut sink);
    for d in &mut tallies {
        d.align(&spectrum)?;
    }
    Ok((counted_series(stats, &spectrum, &moments), tallies))
}

/// The counted series from the counter's totals, the spectrum and the moments.
pub(crate) fn counted_series(
    stats: CountStats,
    spectrum: &Spectrum,
    moments: &Moments,
) -> CountedSeries {
    CountedSeries {
        stats,
        histogram: spectrum.histogram(),
        matrix: spectrum.matrix(),
        total_cycles: stats.total_cycles(),
        full_cycles: stats.full_cycles,
        half_cycles: stats.half_cycles,
        max_range_mpa: spectrum.max_range_mpa(),
        range_width_mpa: spectrum.range_width_mpa(),
        mean_width_mpa: spectrum.mean_width_mpa(),
        constant: stats.min == stats.max,
        mean_mpa: moments.mean,
        std_dev_mpa: moments.std_dev(),
    }
}
