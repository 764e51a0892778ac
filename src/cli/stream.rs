//! Results for large projects, written detail by detail: CSV rows and JSON Lines. The
//! details are assessed in parallel in chunks and written in input order, so memory
//! holds one chunk of results at a time, whatever the project's size.

use crate::assess::{Engine, SummaryBuilder};
use crate::error::Error;
use crate::files::text::data_num;
use crate::results::{DetailResult, Results, ShardInfo, Summary};
use std::io::Write;

/// Details assessed (in parallel) before their results are written.
pub const CHUNK_DETAILS: usize = 4096;

/// The CSV columns of `assess --csv`, one row per detail.
pub const CSV_COLUMNS: [&str; 21] = [
    "id",
    "location",
    "group",
    "detail",
    "status",
    "utilisation",
    "governing_check",
    "damage",
    "damage_limit",
    "life_years",
    "reserve_factor",
    "required_category_mpa",
    "normal_category_mpa",
    "normal_damage",
    "normal_equivalent_range_mpa",
    "normal_required_category_mpa",
    "shear_category_mpa",
    "shear_damage",
    "shear_equivalent_range_mpa",
    "shear_required_category_mpa",
    "warnings",
];

fn opt(v: Option<f64>) -> String {
    v.map(data_num).unwrap_or_default()
}

/// The CSV cells of one detail, in the order of [`CSV_COLUMNS`].
pub fn csv_cells(d: &DetailResult) -> [String; 21] {
    let comp = |name: &str| d.components.iter().find(|c| c.component == name);
    let (n, s) = (comp("normal"), comp("shear"));
    [
        d.id.clone(),
        d.location.clone(),
        d.group.clone().unwrap_or_default(),
        d.detail_key.clone().unwrap_or_default(),
        d.status.as_str().to_string(),
        data_num(d.utilisation),
        d.governing_check.clone(),
        data_num(d.damage),
        data_num(d.damage_limit),
        opt(d.life_years),
        opt(d.reserve_factor),
        opt(d.required_category),
        opt(n.map(|c| c.category_mpa)),
        opt(n.map(|c| c.damage)),
        opt(n.map(|c| c.equivalent_range_mpa)),
        opt(n.and_then(|c| c.required_category_mpa)),
        opt(s.map(|c| c.category_mpa)),
        opt(s.map(|c| c.damage)),
        opt(s.map(|c| c.equivalent_range_mpa)),
        opt(s.and_then(|c| c.required_category_mpa)),
        d.warnings
            .iter()
            .map(|w| w.code.as_str())
            .collect::<Vec<_>>()
            .join(";"),
    ]
}

/// How the details are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StreamFormat {
    Csv,
    JsonLines,
}

/// Assess `range` of the engine's details and write them as `format` to `w`,
/// `on_chunk` seeing the count done after each chunk; `escape` makes control
/// characters visible (for a terminal). `io_err` turns a write failure into the
/// caller's error. Returns the summary of the details written.
pub fn write_details(
    engine: &Engine,
    range: std::ops::Range<usize>,
    format: StreamFormat,
    w: &mut dyn Write,
    escape: bool,
    io_err: &dyn Fn(std::io::Error) -> Error,
    on_chunk: &mut dyn FnMut(usize),
) -> Result<Summary, Error> {
    let mut summary = SummaryBuilder::default();
    let mut each =
        |write: &mut dyn FnMut(&DetailResult) -> Result<(), Error>| -> Result<(), Error> {
            let mut start = range.start;
            while start < range.end {
                let end = (start + CHUNK_DETAILS).min(range.end);
                for d in &engine.assess_range(start..end) {
                    summary.add(d);
                    write(d)?;
                }
                on_chunk(end - range.start);
                start = end;
            }
            Ok(())
        };
    let csv_err = |e: csv::Error| match e.into_kind() {
        csv::ErrorKind::Io(source) => io_err(source),
        other => Error::Internal(format!("csv: {other:?}")),
    };
    match format {
        StreamFormat::Csv => {
            let mut csv = csv::WriterBuilder::new().from_writer(&mut *w);
            csv.write_record(CSV_COLUMNS).map_err(csv_err)?;
            each(&mut |d| {
                let cells = csv_cells(d);
                if escape {
                    csv.write_record(
                        cells
                            .iter()
                            .map(|c| crate::files::escape_controls(c).into_owned()),
                    )
                } else {
                    csv.write_record(&cells)
                }
                .map_err(csv_err)
            })?;
            csv.flush().map_err(io_err)?;
        }
        StreamFormat::JsonLines => {
            each(&mut |d| {
                serde_json::to_writer(&mut *w, d).map_err(|e| match e.io_error_kind() {
                    Some(_) => io_err(e.into()),
                    None => Error::Internal(format!("cannot serialise a detail: {e}")),
                })?;
                w.write_all(b"\n").map_err(io_err)
            })?;
        }
    }
    w.flush().map_err(io_err)?;
    Ok(summary.finish())
}

/// `value` as pretty JSON (steering characters escaped), every line after the first
/// indented by `indent` spaces, without a final newline.
fn pretty(value: &impl serde::Serialize, indent: usize) -> std::io::Result<Vec<u8>> {
    let mut buf = Vec::new();
    super::output::write_json(&mut buf, value)?;
    while buf.last() == Some(&b'\n') {
        buf.pop();
    }
    if indent == 0 {
        return Ok(buf);
    }
    // strings never hold a raw line end (JSON escapes it), so every newline is layout
    let pad = " ".repeat(indent);
    let mut out = Vec::with_capacity(buf.len() + buf.len() / 8);
    for (i, line) in buf.split(|&b| b == b'\n').enumerate() {
        if i > 0 {
            out.push(b'\n');
            out.extend_from_slice(pad.as_bytes());
        }
        out.extend_from_slice(line);
    }
    Ok(out)
}

/// Writes a results model as JSON piece by piece, in the field order of a streamed
/// run: the frame, the details one by one, then the summary (known only at the end),
/// the catalogue entries used and the cautions.
struct ModelWriter<'w, 'e> {
    w: &'w mut dyn Write,
    io_err: &'e dyn Fn(std::io::Error) -> Error,
    first: bool,
}

impl ModelWriter<'_, '_> {
    fn put(&mut self, bytes: &[u8]) -> Result<(), Error> {
        self.w.write_all(bytes).map_err(self.io_err)
    }

    fn field(&mut self, name: &str, v: &impl serde::Serialize) -> Result<(), Error> {
        let mut b = format!("  \"{name}\": ").into_bytes();
        b.extend(pretty(v, 2).map_err(self.io_err)?);
        b.extend_from_slice(b",\n");
        self.put(&b)
    }

    fn head(&mut self, frame: &Results, shard: &Option<ShardInfo>) -> Result<(), Error> {
        self.put(b"{\n")?;
        self.field("model_version", &frame.model_version)?;
        self.field("tool", &frame.tool)?;
        self.field("input", &frame.input)?;
        self.field("project", &frame.project)?;
        self.field("family", &frame.family)?;
        self.field("basis", &frame.basis)?;
        self.field("shard", shard)?;
        self.put(b"  \"details\": [")
    }

    fn detail(&mut self, d: &DetailResult) -> Result<(), Error> {
        let sep: &[u8] = if self.first { b"\n    " } else { b",\n    " };
        self.first = false;
        self.put(sep)?;
        let b = pretty(d, 4).map_err(self.io_err)?;
        self.put(&b)
    }

    fn tail(
        &mut self,
        summary: &Summary,
        used: &[crate::results::CatalogueEntryUsed],
        cautions: &[String],
    ) -> Result<(), Error> {
        let close: &[u8] = if self.first { b"],\n" } else { b"\n  ],\n" };
        self.put(close)?;
        self.field("summary", summary)?;
        self.field("catalogue_used", &used)?;
        let mut last = b"  \"cautions\": ".to_vec();
        last.extend(pretty(&cautions, 2).map_err(self.io_err)?);
        last.extend_from_slice(b"\n}\n");
        self.put(&last)?;
        self.w.flush().map_err(self.io_err)
    }
}

/// The whole results model as JSON, its details assessed and written chunk by chunk
/// (the summary, known only at the end, follows the details). Returns the summary.
pub fn write_model(
    engine: &Engine,
    range: std::ops::Range<usize>,
    shard: Option<ShardInfo>,
    w: &mut dyn Write,
    io_err: &dyn Fn(std::io::Error) -> Error,
    on_chunk: &mut dyn FnMut(usize),
) -> Result<Summary, Error> {
    let frame = engine.frame();
    let mut mw = ModelWriter {
        w,
        io_err,
        first: true,
    };
    mw.head(&frame, &shard)?;
    let mut summary = SummaryBuilder::default();
    let mut keys = std::collections::BTreeSet::new();
    let mut start = range.start;
    while start < range.end {
        let end = (start + CHUNK_DETAILS).min(range.end);
        for d in &engine.assess_range(start..end) {
            summary.add(d);
            if let Some(k) = &d.detail_key {
                if !keys.contains(k.as_str()) {
                    keys.insert(k.clone());
                }
            }
            mw.detail(d)?;
        }
        on_chunk(end - range.start);
        start = end;
    }
    let summary = summary.finish();
    let used = crate::assess::catalogue_used(engine.family(), keys.iter().map(|k| k.as_str()));
    mw.tail(&summary, &used, &frame.cautions)?;
    Ok(summary)
}

/// A results model held in memory (e.g. merged from parts), written in the same
/// layout as [`write_model`], so that a merge of parts gives the very bytes of the
/// unsharded run.
pub fn write_results(
    r: &Results,
    w: &mut dyn Write,
    io_err: &dyn Fn(std::io::Error) -> Error,
) -> Result<(), Error> {
    let mut mw = ModelWriter {
        w,
        io_err,
        first: true,
    };
    mw.head(r, &r.shard)?;
    for d in &r.details {
        mw.detail(d)?;
    }
    mw.tail(&r.summary, &r.catalogue_used, &r.cautions)
}
