//! Results for large projects, written detail by detail: CSV rows and JSON Lines. The
//! details are assessed in parallel in chunks and written in input order, so memory
//! holds one chunk of results at a time, whatever the project's size.

use std::io::Write;
use std::path::Path;

use crate::assess::{Engine, SummaryBuilder};
use crate::error::Error;
use crate::results::{DetailResult, Summary};

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
    v.map(|x| format!("{x}")).unwrap_or_default()
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
        format!("{}", d.utilisation),
        d.governing_check.clone(),
        format!("{}", d.damage),
        format!("{}", d.damage_limit),
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

/// Where the stream goes: a file written whole or not at all, or standard output.
enum Out {
    File {
        tmp: tempfile::NamedTempFile,
        buf: std::io::BufWriter<std::fs::File>,
    },
    Stdout(std::io::BufWriter<std::io::Stdout>),
}

impl Out {
    fn writer(&mut self) -> &mut dyn Write {
        match self {
            Out::File { buf, .. } => buf,
            Out::Stdout(w) => w,
        }
    }
}

fn out_error(path: &Path) -> impl Fn(std::io::Error) -> Error + '_ {
    move |source| Error::Output {
        path: path.to_path_buf(),
        source,
    }
}

/// Assess `range` of the engine's details and write them as `format` to `output` (or
/// standard output), `on_chunk` seeing the count done after each chunk. Returns the
/// summary of the details written.
pub fn write_details(
    engine: &Engine,
    range: std::ops::Range<usize>,
    format: StreamFormat,
    output: Option<&Path>,
    on_chunk: &mut dyn FnMut(usize),
) -> Result<Summary, Error> {
    let stdout_path = Path::new("<standard output>");
    let mut out = match output {
        Some(path) => {
            let dir = match path.parent() {
                Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                _ => std::path::PathBuf::from("."),
            };
            let tmp = tempfile::Builder::new()
                .prefix(".seamlife-")
                .suffix(".part")
                .tempfile_in(&dir)
                .map_err(out_error(path))?;
            let file = tmp.reopen().map_err(out_error(path))?;
            Out::File {
                tmp,
                buf: std::io::BufWriter::with_capacity(1 << 20, file),
            }
        }
        None => Out::Stdout(std::io::BufWriter::with_capacity(
            1 << 20,
            std::io::stdout(),
        )),
    };
    let err_path = output.unwrap_or(stdout_path);
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
    let w = out.writer();
    match format {
        StreamFormat::Csv => {
            let mut csv = csv::WriterBuilder::new().from_writer(w);
            csv.write_record(CSV_COLUMNS)
                .map_err(|e| csv_error(err_path, e))?;
            each(&mut |d| {
                csv.write_record(csv_cells(d))
                    .map_err(|e| csv_error(err_path, e))
            })?;
            csv.flush().map_err(out_error(err_path))?;
        }
        StreamFormat::JsonLines => {
            each(&mut |d| {
                serde_json::to_writer(&mut *w, d).map_err(|e| match e.io_error_kind() {
                    Some(_) => Error::Output {
                        path: err_path.to_path_buf(),
                        source: e.into(),
                    },
                    None => Error::Internal(format!("cannot serialise a detail: {e}")),
                })?;
                w.write_all(b"\n").map_err(out_error(err_path))
            })?;
        }
    }
    match out {
        Out::File { tmp, mut buf } => {
            buf.flush().map_err(out_error(err_path))?;
            let file = buf
                .into_inner()
                .map_err(|e| out_error(err_path)(e.into_error()))?;
            file.sync_all().map_err(out_error(err_path))?;
            drop(file);
            let path = output.unwrap_or(stdout_path);
            tmp.persist(path).map_err(|e| out_error(path)(e.error))?;
        }
        Out::Stdout(mut w) => w.flush().map_err(out_error(err_path))?,
    }
    Ok(summary.finish())
}

fn csv_error(path: &Path, e: csv::Error) -> Error {
    match e.into_kind() {
        csv::ErrorKind::Io(source) => Error::Output {
            path: path.to_path_buf(),
            source,
        },
        other => Error::Internal(format!("csv: {other:?}")),
    }
}
