//! Binary records, read without parsing text: raw little-endian float32 or float64
//! samples, channels interleaved row by row (the channel count given), and NumPy
//! `.npy` files (format versions 1, 2 and 3; little-endian `<f4` or `<f8`; one
//! dimension, or two in C order: rows of channels). The header is read here, by
//! hand; the samples are cut into blocks of whole rows and counted as CSV blocks are
//! ([`crate::histories::ingest`]).

use std::fs::File;

use crate::histories::ingest::{
    open_blocks, run_blocks, BlockOut, ChannelCount, Fallback, OpenChannel, Part, Source, Start,
};
use crate::histories::series::{
    ColumnRef, CountOptions, SeriesError, SeriesSpec, MAX_SERIES_STRESS_MPA,
};

/// Largest `.npy` header accepted, bytes (NumPy writes a few hundred).
pub const MAX_NPY_HEADER_BYTES: usize = 1 << 16;

/// Most channels in one record.
pub const MAX_CHANNELS: usize = 4096;

/// How the samples of a binary record are stored.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinaryFormat {
    /// Raw little-endian float32, `channels` per row.
    F32 {
        /// Channels per row.
        channels: usize,
    },
    /// Raw little-endian float64, `channels` per row.
    F64 {
        /// Channels per row.
        channels: usize,
    },
    /// A NumPy `.npy` file (type and shape from its header).
    Npy,
}

/// Where the samples are and how they are stored.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Layout {
    data_start: u64,
    rows: u64,
    channels: usize,
    /// 4 or 8.
    width: usize,
}

fn bad(spec: &SeriesSpec, reason: impl Into<String>) -> SeriesError {
    SeriesError::BadBinary {
        path: spec.path.clone(),
        reason: reason.into(),
    }
}

fn layout(spec: &SeriesSpec, file: &File, format: BinaryFormat) -> Result<Layout, SeriesError> {
    let io = |e: std::io::Error| SeriesError::Read {
        path: spec.path.clone(),
        line: None,
        source: csv::Error::from(e),
    };
    let len = file.metadata().map_err(io)?.len();
    let (data_start, channels, width, rows) = match format {
        BinaryFormat::F32 { channels } | BinaryFormat::F64 { channels } => {
            let width = if matches!(format, BinaryFormat::F32 { .. }) {
                4
            } else {
                8
            };
            if channels == 0 || channels > MAX_CHANNELS {
                return Err(bad(
                    spec,
                    format!("the channel count must be from 1 to {MAX_CHANNELS}, got {channels}"),
                ));
            }
            let row = (channels * width) as u64;
            if len % row != 0 {
                return Err(bad(
                    spec,
                    format!(
                        "{len} bytes is not a whole number of rows of {channels} channel(s) of {width}-byte samples ({row} bytes a row): the file is cut short or the type or channel count is wrong"
                    ),
                ));
            }
            (0, channels, width, len / row)
        }
        BinaryFormat::Npy => npy_header(spec, file, len)?,
    };
    if rows == 0 {
        return Err(SeriesError::Empty {
            path: spec.path.clone(),
        });
    }
    Ok(Layout {
        data_start,
        rows,
        channels,
        width,
    })
}

/// Read and check a `.npy` header: (data offset, channels, sample width, rows).
fn npy_header(
    spec: &SeriesSpec,
    file: &File,
    len: u64,
) -> Result<(u64, usize, usize, u64), SeriesError> {
    let read = |buf: &mut [u8], at: u64| -> Result<(), SeriesError> {
        crate::histories::ingest::read_at(file, buf, at).map_err(|_| {
            bad(
                spec,
                format!("the file ({len} bytes) ends inside its .npy header"),
            )
        })
    };
    let mut pre = [0u8; 12];
    read(&mut pre[..10], 0)?;
    // magic string \x93NUMPY, then major and minor version (NumPy format NEP 1)
    if &pre[..6] != b"\x93NUMPY" {
        return Err(bad(
            spec,
            "not a NumPy .npy file (no \\x93NUMPY magic string)",
        ));
    }
    let (header_len, header_at) = match pre[6] {
        1 => (u16::from_le_bytes([pre[8], pre[9]]) as usize, 10u64),
        2 | 3 => {
            read(&mut pre[10..12], 10)?;
            (
                u32::from_le_bytes([pre[8], pre[9], pre[10], pre[11]]) as usize,
                12u64,
            )
        }
        v => {
            return Err(bad(
                spec,
                format!("unknown .npy format version {v}.{}", pre[7]),
            ))
        }
    };
    if header_len > MAX_NPY_HEADER_BYTES {
        return Err(bad(
            spec,
            format!("the .npy header claims {header_len} bytes; at most {MAX_NPY_HEADER_BYTES} are read"),
        ));
    }
    let mut text = vec![0u8; header_len];
    read(&mut text, header_at)?;
    let text = String::from_utf8_lossy(&text);
    let descr =
        dict_value(&text, "descr").ok_or_else(|| bad(spec, "the .npy header has no 'descr'"))?;
    let width = match descr.trim_matches(|c| c == '\'' || c == '"') {
        "<f4" => 4,
        "<f8" => 8,
        d => {
            return Err(bad(
                spec,
                format!(
                    "sample type '{d}' is not read: little-endian float32 ('<f4') or float64 ('<f8') only"
                ),
            ))
        }
    };
    let fortran = dict_value(&text, "fortran_order")
        .ok_or_else(|| bad(spec, "the .npy header has no 'fortran_order'"))?;
    let shape =
        dict_value(&text, "shape").ok_or_else(|| bad(spec, "the .npy header has no 'shape'"))?;
    let dims: Vec<u64> = shape
        .trim_start_matches('(')
        .trim_end_matches(')')
        .split(',')
        .map(str::trim)
        .filter(|d| !d.is_empty())
        .map(|d| d.parse::<u64>())
        .collect::<Result<_, _>>()
        .map_err(|_| {
            bad(
                spec,
                format!("the .npy shape {shape} is not a list of sizes"),
            )
        })?;
    let (rows, channels) = match dims.as_slice() {
        [n] => (*n, 1u64),
        [n, c] => (*n, *c),
        _ => {
            return Err(bad(
                spec,
                format!("the .npy array has shape {shape}; one dimension (samples) or two (samples, channels) are read"),
            ))
        }
    };
    if fortran.trim() != "False" && channels > 1 {
        return Err(bad(
            spec,
            "the .npy array is in Fortran order; write it in C order (numpy.ascontiguousarray)",
        ));
    }
    if channels == 0 || channels > MAX_CHANNELS as u64 {
        return Err(bad(
            spec,
            format!("the .npy array has {channels} channels; from 1 to {MAX_CHANNELS} are read"),
        ));
    }
    let data_start = header_at + header_len as u64;
    let want = rows
        .checked_mul(channels)
        .and_then(|v| v.checked_mul(width as u64))
        .filter(|&b| b <= len.saturating_sub(data_start));
    let Some(bytes) = want else {
        return Err(bad(
            spec,
            format!(
                "the .npy header claims {rows} × {channels} samples of {width} bytes, more than the {} bytes the file holds after its header: the file is cut short or the header is wrong",
                len.saturating_sub(data_start)
            ),
        ));
    };
    if bytes != len - data_start {
        return Err(bad(
            spec,
            format!(
                "the file holds {} bytes after its .npy header, {} more than the {rows} × {channels} samples it claims",
                len - data_start,
                len - data_start - bytes
            ),
        ));
    }
    Ok((data_start, channels as usize, width, rows))
}

/// The text of `key`'s value in a Python dict literal (`{'key': value, ...}`): up to
/// the comma or brace that ends it at depth 0.
fn dict_value<'a>(text: &'a str, key: &str) -> Option<&'a str> {
    let at = text
        .find(&format!("'{key}'"))
        .or_else(|| text.find(&format!("\"{key}\"")))?;
    let rest = &text[at + key.len() + 2..];
    let rest = rest.trim_start().strip_prefix(':')?.trim_start();
    let mut depth = 0i32;
    for (i, c) in rest.char_indices() {
        match c {
            '(' | '[' => depth += 1,
            ')' | ']' => {
                depth -= 1;
                if depth < 0 {
                    return Some(rest[..i].trim());
                }
                if depth == 0 && rest.starts_with('(') {
                    return Some(rest[..=i].trim());
                }
            }
            ',' | '}' if depth == 0 => return Some(rest[..i].trim()),
            _ => {}
        }
    }
    None
}

/// Blocks of whole rows of one binary record.
struct Job<'a> {
    spec: &'a SeriesSpec,
    file: &'a File,
    layout: Layout,
    /// 0-based channels counted.
    chans: Vec<usize>,
    factor: f64,
    gate: bool,
    rows_per_block: u64,
}

thread_local! {
    static BIN_BUF: std::cell::RefCell<Vec<u8>> = const { std::cell::RefCell::new(Vec::new()) };
}

impl Source for Job<'_> {
    fn blocks(&self) -> u64 {
        self.layout.rows.div_ceil(self.rows_per_block)
    }

    fn block(&self, k: u64, starts: &[Start]) -> Result<BlockOut, Fallback> {
        let l = self.layout;
        let r0 = k * self.rows_per_block;
        let r1 = (r0 + self.rows_per_block).min(l.rows);
        let row_bytes = l.channels * l.width;
        let mut out = BlockOut {
            lines: r1 - r0,
            parts: starts.iter().map(Part::new).collect(),
            error: None,
        };
        BIN_BUF.with(|b| {
            let buf = &mut *b.borrow_mut();
            let n = (r1 - r0) as usize * row_bytes;
            if buf.len() < n {
                buf.resize(n, 0);
            }
            let at = l.data_start + r0 * row_bytes as u64;
            if let Err(e) = crate::histories::ingest::read_at(self.file, &mut buf[..n], at) {
                out.error = Some((
                    0,
                    SeriesError::Read {
                        path: self.spec.path.clone(),
                        line: None,
                        source: csv::Error::from(e),
                    },
                ));
                return;
            }
            for (i, row) in buf[..n].chunks_exact(row_bytes).enumerate() {
                for (p, &c) in out.parts.iter_mut().zip(&self.chans) {
                    let b = &row[c * l.width..(c + 1) * l.width];
                    let x = if l.width == 4 {
                        f32::from_le_bytes([b[0], b[1], b[2], b[3]]) as f64
                    } else {
                        f64::from_le_bytes([b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7]])
                    };
                    let v = x * self.factor;
                    if !(v.is_finite() && v.abs() <= MAX_SERIES_STRESS_MPA) {
                        out.error = Some((
                            i as u64,
                            SeriesError::BadSample {
                                path: self.spec.path.clone(),
                                sample: 0,
                                channel: c + 1,
                                value_mpa: v,
                            },
                        ));
                        return;
                    }
                    p.push(v, self.gate);
                }
            }
            for p in &mut out.parts {
                p.flush(self.gate);
            }
        });
        Ok(out)
    }

    fn done_bytes(&self, k: u64) -> (u64, u64) {
        let row = (self.layout.channels * self.layout.width) as u64;
        (
            (k * self.rows_per_block).min(self.layout.rows) * row,
            self.layout.rows * row,
        )
    }
}

/// Count the channels of a binary record (1-based `channels`; `None`: all) in one
/// pass on all cores. Channels are chosen by number only (a binary record has no
/// names); each is named by its number.
pub fn count_binary(
    spec: &SeriesSpec,
    format: BinaryFormat,
    channels: Option<&[ColumnRef]>,
    opts: &CountOptions,
    block_bytes: usize,
    progress: &dyn Fn(u64, u64),
) -> Result<Vec<ChannelCount>, SeriesError> {
    let file = crate::histories::ingest::open_series(spec)?;
    let (job, names) = plan(spec, &file, format, channels, opts, block_bytes)?;
    Ok(run_blocks(spec, &job, &names, opts, 1, progress, &[])?
        .ok_or_else(|| bad(spec, "internal: a binary block asked for the text reader"))?
        .into_iter()
        .map(|(c, _)| c)
        .collect())
}

/// [`count_binary`] as a piece of a longer record (see [`crate::histories::part`]):
/// each channel's count with its residue left open.
pub fn count_binary_open(
    spec: &SeriesSpec,
    format: BinaryFormat,
    channels: Option<&[ColumnRef]>,
    opts: &CountOptions,
    block_bytes: usize,
    progress: &dyn Fn(u64, u64),
) -> Result<Vec<OpenChannel>, SeriesError> {
    let file = crate::histories::ingest::open_series(spec)?;
    let (job, names) = plan(spec, &file, format, channels, opts, block_bytes)?;
    open_blocks(spec, &job, &names, opts, progress)?
        .ok_or_else(|| bad(spec, "internal: a binary block asked for the text reader"))
}

/// The job of counting `channels` of the record, and each channel's name and number.
fn plan<'a>(
    spec: &'a SeriesSpec,
    file: &'a File,
    format: BinaryFormat,
    channels: Option<&[ColumnRef]>,
    opts: &CountOptions,
    block_bytes: usize,
) -> Result<(Job<'a>, Vec<(String, usize)>), SeriesError> {
    let factor = crate::histories::ingest::check_request(spec, opts)?;
    let l = layout(spec, file, format)?;
    let chans: Vec<usize> = match channels {
        None => (0..l.channels).collect(),
        Some(refs) => {
            let mut v = Vec::with_capacity(refs.len());
            for r in refs {
                let c = match r {
                    ColumnRef::Index(i) if (1..=l.channels).contains(i) => i - 1,
                    ColumnRef::Index(i) => {
                        return Err(SeriesError::ColumnOutOfRange {
                            path: spec.path.clone(),
                            index: *i,
                            columns: l.channels,
                        })
                    }
                    ColumnRef::Name(n) => {
                        return Err(SeriesError::Invalid(format!(
                            "channel '{n}': the channels of a binary record are chosen by number (1 to {})",
                            l.channels
                        )))
                    }
                };
                if v.contains(&c) {
                    return Err(SeriesError::Invalid(format!(
                        "channel {} is chosen twice",
                        c + 1
                    )));
                }
                v.push(c);
            }
            v
        }
    };
    if chans.is_empty() {
        return Err(SeriesError::Invalid("no channel to count".to_string()));
    }
    let row_bytes = (l.channels * l.width) as u64;
    let job = Job {
        spec,
        file,
        layout: l,
        chans: chans.clone(),
        factor,
        gate: opts.gate_mpa != 0.0,
        rows_per_block: (block_bytes as u64 / row_bytes).max(1),
    };
    let names: Vec<(String, usize)> = chans
        .iter()
        .map(|&c| ((c + 1).to_string(), c + 1))
        .collect();
    Ok((job, names))
}
