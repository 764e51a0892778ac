//! Fast reading and counting of CSV records on all cores, one or many channels.
//!
//! The data lines of the file are cut into blocks at fixed byte offsets
//! ([`Ingest::block_bytes`]). Each block is read with positioned reads, its lines
//! (those that start inside it) are split and parsed, and every channel's samples are
//! counted on the block's own thread: moments, extremes, and a rainflow count that
//! starts from the block's first sample ([`RainflowCounter::part_from`]) with its
//! cycles binned into the block's own spectrum. The blocks are then merged in file
//! order ([`RainflowCounter::append_part`], [`Spectrum::merge`]), which gives exactly
//! the cycles of one counter fed the whole record. Block bounds depend on the file
//! only, so the result is the same on any number of threads. With a hysteresis gate
//! (whose state depends on the whole past) the blocks are parsed in parallel and
//! their samples counted in order on the calling thread.
//!
//! Memory: a few blocks per thread at a time, whatever the length of the file.
//!
//! Lines end with LF or CRLF; blank lines are skipped; blanks around a cell are
//! ignored. A file with a quote character or a bare carriage return in its data is
//! handed to the reference reader of [`crate::histories::series`] (the csv crate,
//! which reads quoted cells over several lines), one channel at a time.

use std::fs::File;

use rayon::prelude::*;

use crate::files::csvlines::{parse_f64, parse_f64_prefix, CsvLines, LineError, Row};
use crate::histories::damage::{add_cycle, DamageTally, SharedRule};
use crate::histories::part::OpenCount;
use crate::histories::rainflow::{Cycle, RainflowCounter};
use crate::histories::series::{
    cell_text, counted_series, resolve_column, Column, ColumnRef, CountOptions, CountedSeries,
    Moments, SeriesError, SeriesSpec, MAX_LINE_BYTES, MAX_SERIES_STRESS_MPA,
};
use crate::histories::spectrum::Spectrum;

/// How the file is cut and read.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ingest {
    /// Bytes of data per block (lines are assigned to the block they start in).
    pub block_bytes: usize,
}

impl Default for Ingest {
    fn default() -> Ingest {
        Ingest {
            block_bytes: 2 << 20,
        }
    }
}

/// Which columns to count.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Channels {
    /// These columns, in this order (a column may not be named twice).
    These(Vec<ColumnRef>),
    /// Every column of the header (or of the first row without a header).
    All,
}

/// One counted channel.
#[derive(Clone, Debug, PartialEq)]
pub struct ChannelCount {
    /// The column as named in the header, or its 1-based number without a header.
    pub name: String,
    /// 1-based position in the file.
    pub position: usize,
    /// The count.
    pub counted: CountedSeries,
}

/// One channel's count with the damage tally of each of its rules.
pub type RatedCount = (ChannelCount, Vec<DamageTally>);

/// Samples per channel gathered before they go to the counter.
const CHUNK: usize = 4096;

/// Blocks in flight per thread.
const BLOCKS_PER_THREAD: usize = 3;

/// Where the data lines start and what the header says.
struct Layout {
    file_len: u64,
    /// Byte offset of the first data line (after the header line, or after a
    /// byte-order mark).
    data_start: u64,
    /// 1-based number of the line at `data_start`.
    first_line: u64,
    headers: Vec<String>,
    /// Fields of the first data row.
    first_fields: usize,
}

/// Why the fast reader hands a file to the reference reader.
pub(crate) struct Fallback;

/// Read the header (if any) and the first data row; `Ok(None)` when the file must go
/// to the reference reader.
fn layout(spec: &SeriesSpec, file: &File) -> Result<Option<Layout>, SeriesError> {
    let path = &spec.path;
    let io = |e: std::io::Error| SeriesError::Read {
        path: path.clone(),
        line: None,
        source: csv::Error::from(e),
    };
    let line_err = |e: LineError| match e {
        LineError::TooLong { line } => SeriesError::LineTooLong {
            path: path.clone(),
            line,
        },
        LineError::Io(e) => io(e),
        // next_raw checks neither quotes nor UTF-8
        LineError::Quote { .. } | LineError::NotUtf8 { .. } => {
            SeriesError::Invalid("unexpected line error while reading the header".to_string())
        }
    };
    let file_len = file.metadata().map_err(io)?.len();
    let mut bom = [0u8; 3];
    let has_bom = file_len >= 3 && {
        read_at(file, &mut bom, 0).map_err(io)?;
        bom == [0xef, 0xbb, 0xbf]
    };
    let mut lines = CsvLines::open(path).map_err(io)?;
    let mut headers = Vec::new();
    let mut data_start = if has_bom { 3 } else { 0 };
    let mut first_line = 1;
    let mut header_seen = !spec.has_header;
    while let Some((no, raw)) = lines.next_raw().map_err(line_err)? {
        if raw.is_empty() {
            continue;
        }
        if raw.contains(&b'"') || raw.contains(&b'\r') {
            return Ok(None);
        }
        if !header_seen {
            let mut row = Row::default();
            let text = String::from_utf8_lossy(raw).into_owned();
            if row.set(no, text.as_bytes()).is_err() {
                return Ok(None);
            }
            headers = (0..row.len())
                .map(|i| String::from_utf8_lossy(row.raw(i)).into_owned())
                .collect();
            header_seen = true;
            data_start = lines.offset();
            first_line = no + 1;
            continue;
        }
        let first_fields = memchr::memchr_iter(b',', raw).count() + 1;
        return Ok(Some(Layout {
            file_len,
            data_start,
            first_line,
            headers,
            first_fields,
        }));
    }
    Err(SeriesError::Empty { path: path.clone() })
}

#[cfg(unix)]
pub(crate) fn read_at(file: &File, buf: &mut [u8], offset: u64) -> std::io::Result<()> {
    use std::os::unix::fs::FileExt;
    file.read_exact_at(buf, offset)
}

#[cfg(not(unix))]
pub(crate) fn read_at(file: &File, mut buf: &mut [u8], mut offset: u64) -> std::io::Result<()> {
    use std::os::windows::fs::FileExt;
    while !buf.is_empty() {
        match file.seek_read(buf, offset) {
            Ok(0) => return Err(std::io::ErrorKind::UnexpectedEof.into()),
            Ok(k) => {
                buf = &mut buf[k..];
                offset += k as u64;
            }
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok(())
}

/// One channel's share of one block.
pub(crate) struct Part {
    samples: u64,
    moments: Moments,
    first: f64,
    /// First non-zero first difference after `first` (0 while none).
    first_move: f64,
    /// Gate 0: the block's own count, its cycles in `spectrum`.
    counter: Option<RainflowCounter>,
    spectrum: Spectrum,
    /// Gate 0: the damage of the block's own cycles, one tally per rule.
    tallies: Vec<DamageTally>,
    rules: Vec<SharedRule>,
    /// Gate > 0: the samples, counted in order afterwards.
    values: Vec<f64>,
    chunk: Vec<f64>,
}

/// What a block's part of one channel starts from: the spectrum and damage tallies
/// at the widths reached so far, and the per-cycle damage rules.
pub(crate) struct Start {
    pub(crate) spectrum: Spectrum,
    pub(crate) tallies: Vec<DamageTally>,
    pub(crate) rules: Vec<SharedRule>,
}

impl Part {
    pub(crate) fn new(start: &Start) -> Part {
        Part {
            samples: 0,
            moments: Moments::default(),
            first: 0.0,
            first_move: 0.0,
            counter: None,
            spectrum: start.spectrum.empty_like(),
            tallies: start.tallies.iter().map(DamageTally::empty_like).collect(),
            rules: start.rules.clone(),
            values: Vec::new(),
            chunk: Vec::with_capacity(CHUNK),
        }
    }

    /// Take one sample.
    #[inline]
    pub(crate) fn push(&mut self, v: f64, gate: bool) {
        self.chunk.push(v);
        if self.chunk.len() == CHUNK {
            self.flush(gate);
        }
    }

    pub(crate) fn flush(&mut self, gate: bool) {
        if self.chunk.is_empty() {
            return;
        }
        let xs = &self.chunk[..];
        self.moments.add_slice(xs);
        let mut rest = xs;
        if self.samples == 0 {
            self.first = xs[0];
            rest = &xs[1..];
        }
        self.samples += xs.len() as u64;
        if self.first_move == 0.0 {
            let x0 = self.first;
            if let Some(&x) = rest.iter().find(|&&x| x != x0) {
                // the first move out of the first sample (first difference, rainflow 3.2.0)
                self.first_move = x - x0;
            }
        }
        if gate {
            self.values.extend_from_slice(xs);
        } else {
            let first = self.first;
            let counter = self
                .counter
                .get_or_insert_with(|| RainflowCounter::part_from(first));
            let spectrum = &mut self.spectrum;
            if self.rules.is_empty() {
                counter.push_slice(rest, &mut |c: Cycle| spectrum.add(&c));
            } else {
                let (tallies, rules) = (&mut self.tallies, &self.rules[..]);
                counter.push_slice(rest, &mut |c: Cycle| {
                    add_cycle(spectrum, tallies, rules, &c)
                });
            }
        }
        self.chunk.clear();
    }
}

/// What one block gave.
pub(crate) struct BlockOut {
    /// Lines that start in the block (blank ones included).
    pub(crate) lines: u64,
    pub(crate) parts: Vec<Part>,
    /// The first bad line: its number within the block (0-based) and the error
    /// (whose line is filled in on merging).
    pub(crate) error: Option<(u64, SeriesError)>,
}

thread_local! {
    static BLOCK_BUF: std::cell::RefCell<Vec<u8>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// Shared facts of one count.
struct Job<'a> {
    spec: &'a SeriesSpec,
    file: &'a File,
    layout: &'a Layout,
    cols: &'a [Column],
    /// (0-based position, channel index) by increasing position.
    order: Vec<(usize, usize)>,
    factor: f64,
    opts: &'a CountOptions,
    block_bytes: u64,
}

/// A record cut into blocks counted on their own and merged in order.
pub(crate) trait Source: Sync {
    /// Number of blocks.
    fn blocks(&self) -> u64;
    /// Block `k`, its spectra started from `starts` (one per channel); `Err` hands the
    /// whole record to the reference reader.
    fn block(&self, k: u64, starts: &[Start]) -> Result<BlockOut, Fallback>;
    /// Bytes up to the end of block `k` and in all, for progress.
    fn done_bytes(&self, k: u64) -> (u64, u64);
}

impl Source for Job<'_> {
    fn blocks(&self) -> u64 {
        let data = self.layout.file_len - self.layout.data_start;
        data.div_ceil(self.block_bytes)
    }

    fn block(&self, k: u64, starts: &[Start]) -> Result<BlockOut, Fallback> {
        BLOCK_BUF.with(|b| self.block_in(k, starts, &mut b.borrow_mut()))
    }

    fn done_bytes(&self, k: u64) -> (u64, u64) {
        let total = self.layout.file_len - self.layout.data_start;
        ((k * self.block_bytes).min(total), total)
    }
}

impl Job<'_> {
    fn block_in(&self, k: u64, starts: &[Start], buf: &mut Vec<u8>) -> Result<BlockOut, Fallback> {
        let len = self.layout.file_len;
        let start = self.layout.data_start + k * self.block_bytes;
        let end = (start + self.block_bytes).min(len);
        let gate = self.opts.gate_mpa != 0.0;
        let mut out = BlockOut {
            lines: 0,
            parts: Vec::new(),
            error: None,
        };
        out.parts.extend(starts.iter().map(Part::new));
        let io_err = |e: std::io::Error, out: &mut BlockOut| {
            out.error = Some((
                0,
                SeriesError::Read {
                    path: self.spec.path.clone(),
                    line: None,
                    source: csv::Error::from(e),
                },
            ));
        };
        // the byte before the block tells whether a line starts at its first byte
        let from = if k == 0 { start } else { start - 1 };
        let mut have = (end - from) as usize;
        if buf.len() < have {
            buf.resize(have, 0);
        }
        if let Err(e) = read_at(self.file, &mut buf[..have], from) {
            io_err(e, &mut out);
            return Ok(out);
        }
        let mut pos = if k == 0 {
            0
        } else {
            match memchr::memchr(b'\n', &buf[..have]) {
                Some(i) => i + 1,
                None => return Ok(out),
            }
        };
        let limit = (end - from) as usize;
        if pos >= limit {
            return Ok(out);
        }
        // complete the last line that starts in the block
        if end < len && buf[have - 1] != b'\n' {
            let tail_start = memchr::memrchr(b'\n', &buf[pos..have]).map_or(pos, |i| pos + i + 1);
            let mut at = end;
            while at < len && have - tail_start <= MAX_LINE_BYTES {
                let step = (64usize << 10).min((len - at) as usize);
                if buf.len() < have + step {
                    buf.resize(have + step, 0);
                }
                if let Err(e) = read_at(self.file, &mut buf[have..have + step], at) {
                    io_err(e, &mut out);
                    return Ok(out);
                }
                let found = memchr::memchr(b'\n', &buf[have..have + step]);
                have += step;
                at += step as u64;
                if found.is_some() {
                    break;
                }
            }
        }
        let data = &buf[..have];
        if memchr::memchr(b'"', &data[pos..]).is_some() {
            return Err(Fallback);
        }
        // a bare carriage return ends a record for the csv reader: leave it to that
        let bare_cr = |i: usize| pos + i + 1 < have && data[pos + i + 1] != b'\n';
        if memchr::memchr_iter(b'\r', &data[pos..]).any(bare_cr) {
            return Err(Fallback);
        }
        let mut vals = vec![0.0f64; self.cols.len()];
        let eof = from + have as u64 == len;
        while pos < limit {
            let rel = out.lines;
            out.lines += 1;
            if let Some(next) = self.fast_line(data, pos, eof, &mut vals) {
                pos = next;
            } else {
                let (line, next) = match memchr::memchr(b'\n', &data[pos..]) {
                    Some(i) => (&data[pos..pos + i], pos + i + 1),
                    None => (&data[pos..], data.len()),
                };
                pos = next;
                if line.len() > MAX_LINE_BYTES {
                    out.error = Some((
                        rel,
                        SeriesError::LineTooLong {
                            path: self.spec.path.clone(),
                            line: 0,
                        },
                    ));
                    return Ok(out);
                }
                let line = match line.last() {
                    Some(b'\r') => &line[..line.len() - 1],
                    _ => line,
                };
                if line.is_empty() {
                    continue;
                }
                if let Err(e) = self.parse_line(line, &mut vals) {
                    out.error = Some((rel, e));
                    return Ok(out);
                }
            }
            for (p, &v) in out.parts.iter_mut().zip(&vals) {
                p.push(v, gate);
            }
        }
        for p in &mut out.parts {
            p.flush(gate);
        }
        Ok(out)
    }

    /// The common case in one pass over the bytes: every needed cell a short plain
    /// decimal within range, the line well formed. Returns where the next line starts,
    /// or `None` to read the line by [`Job::parse_line`] (which finds any error).
    #[inline]
    fn fast_line(&self, data: &[u8], pos: usize, eof: bool, vals: &mut [f64]) -> Option<usize> {
        let mut a = pos;
        let mut field = 0usize;
        for &(p, ch) in &self.order {
            while field < p {
                // skip a cell
                loop {
                    match data.get(a) {
                        Some(b',') => break,
                        Some(b'\n') | None => return None,
                        Some(_) => a += 1,
                    }
                }
                a += 1;
                field += 1;
            }
            let (x, k) = parse_f64_prefix(&data[a..])?;
            let v = x * self.factor;
            if !(v.is_finite() && v.abs() <= MAX_SERIES_STRESS_MPA) {
                return None;
            }
            vals[ch] = v;
            a += k;
            match data.get(a) {
                Some(b',') => {
                    a += 1;
                    field += 1;
                }
                Some(b'\n' | b'\r') | None => field = usize::MAX,
                Some(_) => return None,
            }
        }
        // the line's end: right here, or after cells not needed
        let next = match data.get(a) {
            Some(b'\n') => a + 1,
            Some(b'\r') if data.get(a + 1) == Some(&b'\n') => a + 2,
            None if eof => a,
            _ if field != usize::MAX && a > pos => a + memchr::memchr(b'\n', &data[a..])? + 1,
            _ => return None,
        };
        (next - pos <= MAX_LINE_BYTES).then_some(next)
    }

    /// The channels' values (MPa) of one line, or the error (its line 0).
    #[inline]
    fn parse_line(&self, line: &[u8], vals: &mut [f64]) -> Result<(), SeriesError> {
        let mut field = 0usize;
        let mut a = 0usize;
        for &(p, ch) in &self.order {
            while field < p {
                match memchr::memchr(b',', &line[a..]) {
                    Some(i) => {
                        a += i + 1;
                        field += 1;
                    }
                    None => {
                        return Err(SeriesError::ShortRow {
                            path: self.spec.path.clone(),
                            line: 0,
                            column: self.cols[ch].label.clone(),
                            fields: field + 1,
                        })
                    }
                }
            }
            let cell = match memchr::memchr(b',', &line[a..]) {
                Some(i) => &line[a..a + i],
                None => &line[a..],
            };
            vals[ch] = self.value(cell, ch)?;
        }
        Ok(())
    }

    #[inline]
    fn value(&self, cell: &[u8], ch: usize) -> Result<f64, SeriesError> {
        if let Some(x) = parse_f64(cell) {
            let v = x * self.factor;
            if v.is_finite() && v.abs() <= MAX_SERIES_STRESS_MPA {
                return Ok(v);
            }
        }
        Err(self.cell_error(cell, ch))
    }

    #[cold]
    fn cell_error(&self, cell: &[u8], ch: usize) -> SeriesError {
        let path = self.spec.path.clone();
        let column = self.cols[ch].label.clone();
        let (text, chars) = cell_text(cell);
        match parse_f64(cell) {
            None => SeriesError::NotNumeric {
                path,
                line: 0,
                column,
                text,
                chars,
            },
            Some(x) if !(x * self.factor).is_finite() => SeriesError::NonFinite {
                path,
                line: 0,
                column,
                text,
                chars,
            },
            Some(x) => SeriesError::OutOfRange {
                path,
                line: 0,
                column,
                text,
                value_mpa: x * self.factor,
            },
        }
    }
}

/// Put the file line into an error made with line 0.
fn at_line(mut e: SeriesError, n: u64) -> SeriesError {
    match &mut e {
        SeriesError::NotNumeric { line, .. }
        | SeriesError::NonFinite { line, .. }
        | SeriesError::OutOfRange { line, .. }
        | SeriesError::LineTooLong { line, .. }
        | SeriesError::ShortRow { line, .. } => *line = n,
        SeriesError::BadSample { sample, .. } => *sample = n,
        _ => {}
    }
    e
}

/// The whole count of one channel, built block by block in file order.
pub(crate) struct Total {
    pub(crate) open: OpenCount,
    tallies: Vec<DamageTally>,
    rules: Vec<SharedRule>,
}

impl OpenCount {
    /// Append the block part `p`, which follows this count in the record: its own
    /// cycles (binned in its spectrum) merged, the cycles across the seam binned here
    /// and given to `extra`.
    pub(crate) fn take_block<F: FnMut(&Cycle)>(
        &mut self,
        p: Part,
        mut extra: F,
    ) -> Result<(), SeriesError> {
        if p.samples == 0 {
            return Ok(());
        }
        let spectrum = &mut self.spectrum;
        let mut sink = |c: Cycle| {
            spectrum.add(&c);
            extra(&c)
        };
        match (&mut self.counter, p.counter) {
            (Some(t), Some(c)) => t.append_part(c, p.first, p.first_move, &mut sink),
            (Some(t), None) => t.push_slice(&p.values, &mut sink),
            // the first block of a piece: its count is the piece's so far
            (None, Some(c)) => self.counter = Some(c),
            (None, None) => {
                let mut c = RainflowCounter::part_from(p.first);
                c.push_slice(&p.values[1..], &mut sink);
                self.counter = Some(c);
            }
        }
        self.spectrum.merge(&p.spectrum)?;
        self.moments.merge(&p.moments);
        self.note_start(p.first, p.first_move);
        self.samples += p.samples;
        Ok(())
    }
}

impl Total {
    fn take(&mut self, mut p: Part) -> Result<(), SeriesError> {
        let theirs = std::mem::take(&mut p.tallies);
        let (tallies, rules) = (&mut self.tallies, &self.rules[..]);
        self.open.take_block(p, |c| {
            for (t, r) in tallies.iter_mut().zip(rules) {
                t.add(&**r, c);
            }
        })?;
        for (a, b) in self.tallies.iter_mut().zip(&theirs) {
            a.merge(b)?;
        }
        Ok(())
    }
}

/// The factor from file values to MPa, once the options are checked (before any file
/// is read).
pub(crate) fn check_request(spec: &SeriesSpec, opts: &CountOptions) -> Result<f64, SeriesError> {
    let factor = spec.factor_to_mpa();
    if !factor.is_finite() || factor == 0.0 {
        return Err(SeriesError::Invalid(format!(
            "the factor from file values to MPa must be finite and non-zero, got {factor} (scale {}, unit {:?})",
            spec.scale, spec.unit
        )));
    }
    RainflowCounter::try_new(opts.gate_mpa)?;
    Spectrum::new(opts.bins)?;
    Ok(factor)
}

/// Count the channels of a CSV record in one pass over the file, on all cores.
/// `spec.column` is not used; `progress` is told the bytes done and the total.
pub fn count_channels(
    spec: &SeriesSpec,
    channels: &Channels,
    opts: &CountOptions,
    ingest: Ingest,
    progress: &dyn Fn(u64, u64),
) -> Result<Vec<ChannelCount>, SeriesError> {
    Ok(
        count_channels_rated(spec, channels, opts, ingest, progress, &[])?
            .into_iter()
            .map(|(c, _)| c)
            .collect(),
    )
}

/// [`count_channels`], with the damage of every cycle summed by each of the rules
/// given for a channel (`rules[i]` for channel `i`; missing entries have none): each
/// channel's count with one [`DamageTally`] per rule, in order.
pub fn count_channels_rated(
    spec: &SeriesSpec,
    channels: &Channels,
    opts: &CountOptions,
    ingest: Ingest,
    progress: &dyn Fn(u64, u64),
    rules: &[Vec<SharedRule>],
) -> Result<Vec<RatedCount>, SeriesError> {
    let factor = check_request(spec, opts)?;
    let file = open_series(spec)?;
    let Some(plan) = plan(spec, channels, &file)? else {
        return reference(spec, channels, opts, rules);
    };
    let job = plan.job(spec, &file, factor, opts, ingest);
    match run_blocks(
        spec,
        &job,
        &plan.names,
        opts,
        plan.layout.first_line,
        progress,
        rules,
    )? {
        Some(v) => Ok(v),
        None => reference(spec, channels, opts, rules),
    }
}

/// Count the channels of a CSV record as a piece of a longer record (see
/// [`crate::histories::part`]): each channel's count with its residue left open.
pub fn count_channels_open(
    spec: &SeriesSpec,
    channels: &Channels,
    opts: &CountOptions,
    ingest: Ingest,
    progress: &dyn Fn(u64, u64),
) -> Result<Vec<OpenChannel>, SeriesError> {
    let factor = check_request(spec, opts)?;
    let file = open_series(spec)?;
    let Some(plan) = plan(spec, channels, &file)? else {
        return reference_open(spec, channels, opts);
    };
    let job = plan.job(spec, &file, factor, opts, ingest);
    match open_blocks(spec, &job, &plan.names, opts, progress)? {
        Some(v) => Ok(v),
        None => reference_open(spec, channels, opts),
    }
}

/// Open the series file (regular files only).
pub(crate) fn open_series(spec: &SeriesSpec) -> Result<File, SeriesError> {
    crate::files::open_regular(&spec.path).map_err(|source| SeriesError::Open {
        path: spec.path.clone(),
        source,
    })
}

/// The file's layout and the columns to count.
struct Plan {
    layout: Layout,
    cols: Vec<Column>,
    /// (name, 1-based position) of each channel.
    names: Vec<(String, usize)>,
}

impl Plan {
    fn job<'a>(
        &'a self,
        spec: &'a SeriesSpec,
        file: &'a File,
        factor: f64,
        opts: &'a CountOptions,
        ingest: Ingest,
    ) -> Job<'a> {
        let mut order: Vec<(usize, usize)> = self
            .cols
            .iter()
            .enumerate()
            .map(|(i, c)| (c.pos, i))
            .collect();
        order.sort_unstable();
        Job {
            spec,
            file,
            layout: &self.layout,
            cols: &self.cols,
            order,
            factor,
            opts,
            block_bytes: ingest.block_bytes.max(1) as u64,
        }
    }
}

/// Read the layout and resolve the columns; `None` hands the file to the reference
/// reader.
fn plan(spec: &SeriesSpec, channels: &Channels, file: &File) -> Result<Option<Plan>, SeriesError> {
    let Some(layout) = layout(spec, file)? else {
        return Ok(None);
    };
    let refs: Vec<ColumnRef> = match channels {
        Channels::These(v) => v.clone(),
        Channels::All => {
            let n = if spec.has_header {
                layout.headers.len()
            } else {
                layout.first_fields
            };
            (1..=n).map(ColumnRef::Index).collect()
        }
    };
    if refs.is_empty() {
        return Err(SeriesError::Invalid("no column to count".to_string()));
    }
    let mut cols = Vec::with_capacity(refs.len());
    for r in &refs {
        let c = resolve_column(
            &spec.path,
            r,
            spec.has_header,
            &layout.headers,
            layout.first_fields,
        )?;
        if let Some(prev) = cols.iter().position(|p: &Column| p.pos == c.pos) {
            return Err(SeriesError::Invalid(format!(
                "column {} is chosen twice (as {} and as {r})",
                c.pos + 1,
                refs[prev]
            )));
        }
        cols.push(c);
    }
    let names: Vec<(String, usize)> = cols
        .iter()
        .zip(&refs)
        .map(|(c, r)| (channel_name(&layout.headers, c.pos, r), c.pos + 1))
        .collect();
    Ok(Some(Plan {
        layout,
        cols,
        names,
    }))
}

/// Count the blocks of `src` wave by wave on all cores and merge them in order; the
/// number of the first line (or sample) of the record is `first_line`. `None` when
/// the record must go to the reference reader.
pub(crate) fn run_blocks(
    spec: &SeriesSpec,
    src: &dyn Source,
    names: &[(String, usize)],
    opts: &CountOptions,
    first_line: u64,
    progress: &dyn Fn(u64, u64),
    rules: &[Vec<SharedRule>],
) -> Result<Option<Vec<RatedCount>>, SeriesError> {
    let Some(totals) = merge_blocks(src, names.len(), opts, first_line, progress, rules, false)?
    else {
        return Ok(None);
    };
    let mut out = Vec::with_capacity(names.len());
    for (t, (name, position)) in totals.into_iter().zip(names) {
        if t.open.samples < 2 {
            return Err(SeriesError::TooShort {
                path: spec.path.clone(),
                samples: t.open.samples,
            });
        }
        let (mut tallies, rules) = (t.tallies, t.rules);
        let (stats, spectrum, moments) = t.open.finish(opts.mode, |c| {
            for (d, r) in tallies.iter_mut().zip(&rules) {
                d.add(&**r, c);
            }
        });
        for d in &mut tallies {
            d.align(&spectrum)?;
        }
        out.push((
            ChannelCount {
                name: name.clone(),
                position: *position,
                counted: counted_series(stats, &spectrum, &moments),
            },
            tallies,
        ));
    }
    Ok(Some(out))
}

/// One channel counted as a piece of a longer record (see [`crate::histories::part`]).
#[derive(Clone, Debug)]
pub struct OpenChannel {
    /// The column as named in the header, or its 1-based number.
    pub name: String,
    /// 1-based position in the file.
    pub position: usize,
    /// The count, its residue not closed.
    pub open: OpenCount,
}

/// [`run_blocks`] for pieces: each channel's count left open.
pub(crate) fn open_blocks(
    spec: &SeriesSpec,
    src: &dyn Source,
    names: &[(String, usize)],
    opts: &CountOptions,
    progress: &dyn Fn(u64, u64),
) -> Result<Option<Vec<OpenChannel>>, SeriesError> {
    let Some(totals) = merge_blocks(src, names.len(), opts, 1, progress, &[], true)? else {
        return Ok(None);
    };
    let mut out = Vec::with_capacity(names.len());
    for (t, (name, position)) in totals.into_iter().zip(names) {
        if t.open.samples == 0 {
            return Err(SeriesError::Empty {
                path: spec.path.clone(),
            });
        }
        out.push(OpenChannel {
            name: name.clone(),
            position: *position,
            open: t.open,
        });
    }
    Ok(Some(out))
}

/// The blocks of `src` counted and merged in order, each channel's count left open
/// (as a piece with `piece`, else as a whole record).
fn merge_blocks(
    src: &dyn Source,
    channels: usize,
    opts: &CountOptions,
    first_line: u64,
    progress: &dyn Fn(u64, u64),
    rules: &[Vec<SharedRule>],
    piece: bool,
) -> Result<Option<Vec<Total>>, SeriesError> {
    let mut totals = Vec::with_capacity(channels);
    for i in 0..channels {
        let spectrum = Spectrum::new(opts.bins)?;
        RainflowCounter::try_new(opts.gate_mpa)?;
        let rules = rules.get(i).cloned().unwrap_or_default();
        let tallies = rules
            .iter()
            .map(|r| DamageTally::new(&**r, &spectrum))
            .collect();
        let open = if piece {
            OpenCount::piece(opts.gate_mpa, spectrum)
        } else {
            OpenCount::record(opts.gate_mpa, spectrum)
        };
        totals.push(Total {
            open,
            tallies,
            rules,
        });
    }
    let blocks = src.blocks();
    let wave = (rayon::current_num_threads() * BLOCKS_PER_THREAD).max(1) as u64;
    let mut line = first_line;
    let mut k = 0u64;
    while k < blocks {
        let k1 = (k + wave).min(blocks);
        let starts: Vec<Start> = totals
            .iter()
            .map(|t| Start {
                spectrum: t.open.spectrum.empty_like(),
                tallies: t.tallies.iter().map(DamageTally::empty_like).collect(),
                rules: t.rules.clone(),
            })
            .collect();
        let outs: Vec<Result<BlockOut, Fallback>> = (k..k1)
            .into_par_iter()
            .map(|b| src.block(b, &starts))
            .collect();
        for out in outs {
            let Ok(out) = out else {
                return Ok(None);
            };
            if let Some((rel, e)) = out.error {
                return Err(at_line(e, line + rel));
            }
            line += out.lines;
            for (t, p) in totals.iter_mut().zip(out.parts) {
                t.take(p)?;
            }
        }
        k = k1;
        let (done, total) = src.done_bytes(k);
        progress(done, total);
    }
    Ok(Some(totals))
}

fn channel_name(headers: &[String], pos: usize, r: &ColumnRef) -> String {
    match (headers.get(pos), r) {
        (Some(h), _) if !h.is_empty() => h.clone(),
        (_, ColumnRef::Name(n)) => n.clone(),
        _ => (pos + 1).to_string(),
    }
}

/// The reference reader, channel by channel (files with quoted cells).
fn reference(
    spec: &SeriesSpec,
    channels: &Channels,
    opts: &CountOptions,
    rules: &[Vec<SharedRule>],
) -> Result<Vec<RatedCount>, SeriesError> {
    let none = Vec::new();
    let counts = reference_each(spec, channels, |i, s| {
        crate::histories::series::count_series_reference_rated(
            s,
            opts,
            rules.get(i).unwrap_or(&none),
        )
    })?;
    Ok(counts
        .into_iter()
        .map(|(name, position, (counted, tallies))| {
            (
                ChannelCount {
                    name,
                    position,
                    counted,
                },
                tallies,
            )
        })
        .collect())
}

/// The reference reader for pieces (see [`count_channels_open`]).
fn reference_open(
    spec: &SeriesSpec,
    channels: &Channels,
    opts: &CountOptions,
) -> Result<Vec<OpenChannel>, SeriesError> {
    let gate = opts.gate_mpa != 0.0;
    let counts = reference_each(spec, channels, |_, s| {
        let mut open = OpenCount::piece(opts.gate_mpa, Spectrum::new(opts.bins)?);
        let mut failed = None;
        let read = crate::histories::series::stream_series(s, |xs| {
            let start = Start {
                spectrum: open.spectrum.empty_like(),
                tallies: Vec::new(),
                rules: Vec::new(),
            };
            let mut part = Part::new(&start);
            for &x in xs {
                part.push(x, gate);
            }
            part.flush(gate);
            if let Err(e) = open.take_block(part, |_| {}) {
                failed.get_or_insert(e);
            }
        });
        match read {
            // a piece of one sample is a piece still, as in the fast reader: it closes
            // no cycle of its own, and its sample takes part in the seams
            Err(SeriesError::TooShort { samples: 1, .. }) | Ok(_) => {}
            Err(e) => return Err(e),
        }
        match failed {
            Some(e) => Err(e),
            None if open.samples == 0 => Err(SeriesError::Empty {
                path: spec.path.clone(),
            }),
            None => Ok(open),
        }
    })?;
    Ok(counts
        .into_iter()
        .map(|(name, position, open)| OpenChannel {
            name,
            position,
            open,
        })
        .collect())
}

/// Each chosen channel counted by `one` (given its index and a spec for its column),
/// with its name and 1-based position.
fn reference_each<T>(
    spec: &SeriesSpec,
    channels: &Channels,
    mut one: impl FnMut(usize, &SeriesSpec) -> Result<T, SeriesError>,
) -> Result<Vec<(String, usize, T)>, SeriesError> {
    let refs: Vec<ColumnRef> = match channels {
        Channels::These(v) => v.clone(),
        Channels::All => {
            let n = crate::histories::series::column_names(spec)?.len();
            (1..=n).map(ColumnRef::Index).collect()
        }
    };
    let names = if spec.has_header {
        crate::histories::series::column_names(spec)?
    } else {
        Vec::new()
    };
    let mut out = Vec::new();
    for (i, r) in refs.into_iter().enumerate() {
        let s = SeriesSpec {
            column: r.clone(),
            ..spec.clone()
        };
        let counted = one(i, &s)?;
        let pos = match &r {
            ColumnRef::Index(i) => i - 1,
            ColumnRef::Name(n) => names.iter().position(|h| h == n.trim()).unwrap_or(0),
        };
        out.push((channel_name(&names, pos, &r), pos + 1, counted));
    }
    Ok(out)
}

/// Count one column (the fast reader; see [`count_channels`]).
pub fn count_one(spec: &SeriesSpec, opts: &CountOptions) -> Result<CountedSeries, SeriesError> {
    let mut v = count_channels(
        spec,
        &Channels::These(vec![spec.column.clone()]),
        opts,
        Ingest::default(),
        &|_, _| {},
    )?;
    Ok(v.remove(0).counted)
}
