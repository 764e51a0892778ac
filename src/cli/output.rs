//! Output writers shared by the commands: atomic files, the results table, CSV rows.

use std::io::Write;

use crate::error::Error;
use crate::files::text::one_line;
use crate::files::{escape_controls, short_num};
use crate::results::{Results, CAUTION_LINE};

pub use crate::files::write::{write_atomic, write_new, write_output, Inputs};

/// Write to standard output and flush, reporting any failure (a pipe whose reader has
/// gone, a full disk) instead of losing the output silently.
pub fn print_out(bytes: &[u8]) -> Result<(), Error> {
    let mut out = std::io::stdout().lock();
    out.write_all(bytes)
        .and_then(|_| out.flush())
        .map_err(Error::Stdout)
}

/// Write text for the terminal to standard output, control characters made visible.
pub fn print_text(text: &str) -> Result<(), Error> {
    print_out(escape_controls(text).as_bytes())
}

/// Write data (CSV rows) to standard output: as it is to a file or a pipe, with control
/// characters made visible when standard output is a terminal.
pub fn print_data(bytes: &[u8]) -> Result<(), Error> {
    use std::io::IsTerminal;
    if std::io::stdout().is_terminal() {
        print_text(&String::from_utf8_lossy(bytes))
    } else {
        print_out(bytes)
    }
}

/// Write a message to standard error, control characters made visible. Failures are
/// ignored: there is nowhere left to report them.
pub fn print_err(text: &str) {
    let mut err = std::io::stderr().lock();
    let _ = err.write_all(escape_controls(text).as_bytes());
    let _ = err.flush();
}

/// The results model as pretty JSON, streamed to `w` (never held whole in memory),
/// with the characters that steer a terminal but that JSON lets through raw (DEL, C1
/// controls, bidirectional overrides) written as `\\uXXXX` escapes: the same data,
/// safe to show. A newline ends it.
pub fn write_json<W: Write>(w: W, value: &impl serde::Serialize) -> std::io::Result<()> {
    let mut w = std::io::BufWriter::with_capacity(1 << 16, w);
    let mut ser = serde_json::Serializer::with_formatter(&mut w, SafePretty::default());
    value.serialize(&mut ser).map_err(std::io::Error::other)?;
    w.write_all(b"\n")?;
    w.flush()
}

/// serde_json's pretty layout, with steering characters escaped inside strings.
#[derive(Default)]
struct SafePretty(serde_json::ser::PrettyFormatter<'static>);

impl serde_json::ser::Formatter for SafePretty {
    fn write_string_fragment<W: ?Sized + Write>(
        &mut self,
        w: &mut W,
        fragment: &str,
    ) -> std::io::Result<()> {
        let mut rest = fragment;
        while let Some(i) = rest.find(crate::files::text::is_steering) {
            w.write_all(&rest.as_bytes()[..i])?;
            let c = rest[i..].chars().next().unwrap_or(' ');
            write!(w, "\\u{:04x}", c as u32)?;
            rest = &rest[i + c.len_utf8()..];
        }
        w.write_all(rest.as_bytes())
    }

    fn begin_array<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_array(w)
    }
    fn end_array<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_array(w)
    }
    fn begin_array_value<W: ?Sized + Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.0.begin_array_value(w, first)
    }
    fn end_array_value<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_array_value(w)
    }
    fn begin_object<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_object(w)
    }
    fn end_object<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_object(w)
    }
    fn begin_object_key<W: ?Sized + Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.0.begin_object_key(w, first)
    }
    fn begin_object_value<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_object_value(w)
    }
    fn end_object_value<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_object_value(w)
    }
}

/// A number with three decimals for a table cell, scientific when huge.
fn cell3(x: f64) -> String {
    if x.is_finite() && x.abs() < 1e6 {
        format!("{x:.3}")
    } else {
        short_num(x)
    }
}

/// Life in years for a table cell.
pub fn fmt_life(l: Option<f64>) -> String {
    match l {
        None => "no damage".into(),
        Some(y) if !y.is_finite() || y >= 1e6 => short_num(y),
        Some(y) if y >= 100.0 => format!("{y:.0}"),
        Some(y) => format!("{y:.1}"),
    }
}

fn category_cell(d: &crate::results::DetailResult) -> String {
    // the AASHTO pair: the category letter with its finite-life class label
    if let Some(t) = &d.truck_pair {
        return format!(
            "{} ({})",
            t.category_letter,
            d.components
                .first()
                .map_or(String::new(), |c| short_num(c.category_mpa))
        );
    }
    d.components
        .iter()
        .map(|c| {
            let cat = short_num(c.category_mpa);
            if c.component == "shear" {
                format!("τ{cat}")
            } else {
                cat
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(n - 1).collect();
        t.push('…');
        t
    }
}

/// One detail of the readable table: its cells, and its warnings as printed lines.
#[derive(Debug, Clone)]
pub struct TableRow {
    cells: [String; 7],
    warnings: Vec<String>,
}

impl TableRow {
    pub fn of(d: &crate::results::DetailResult) -> TableRow {
        TableRow {
            cells: [
                one_line(&d.id).into_owned(),
                truncate(&one_line(&d.location), 44),
                category_cell(d),
                cell3(d.damage),
                cell3(d.utilisation),
                fmt_life(d.life_years),
                d.status.as_str().into(),
            ],
            warnings: d
                .warnings
                .iter()
                .map(|w| format!("warning: {}: {}\n", one_line(&d.id), one_line(&w.message)))
                .collect(),
        }
    }
}

/// The readable table printed by `assess`.
pub fn table(r: &Results) -> String {
    let rows: Vec<TableRow> = r.details.iter().map(TableRow::of).collect();
    render_table(r, &r.summary, &rows)
}

/// The readable table from the results frame (project, family, basis), the summary
/// and the rows, so that a large project never holds its whole results model.
pub fn render_table(r: &Results, s: &crate::results::Summary, details: &[TableRow]) -> String {
    let head: [String; 7] = [
        "id".into(),
        "location".into(),
        "category MPa".into(),
        "damage".into(),
        "utilisation".into(),
        "life years".into(),
        "status".into(),
    ];
    let rows: Vec<&[String; 7]> = std::iter::once(&head)
        .chain(details.iter().map(|d| &d.cells))
        .collect();
    let mut widths = [0usize; 7];
    for row in &rows {
        for (w, c) in widths.iter_mut().zip(row.iter()) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out = String::new();
    out.push_str(&format!(
        "{} {} rev {} | family {} | design life {} years | γFf {} γMf {} D_lim {}{}\n\n",
        one_line(&r.project.reference),
        one_line(&r.project.title),
        one_line(&r.project.revision),
        one_line(&r.family.id),
        short_num(r.basis.design_life_years),
        short_num(r.basis.gamma_ff.value),
        short_num(r.basis.gamma_mf.value),
        short_num(r.basis.damage_limit.value),
        if r.basis.constant_amplitude_damage_limit != r.basis.damage_limit.value
            || r.basis.constant_amplitude_form != r.basis.utilisation_form
        {
            format!(
                " (constant amplitude: {}, D ≤ {})",
                r.basis.constant_amplitude_form,
                short_num(r.basis.constant_amplitude_damage_limit)
            )
        } else {
            String::new()
        }
    ));
    for (i, row) in rows.iter().enumerate() {
        let mut line = String::new();
        for (j, (c, w)) in row.iter().zip(widths).enumerate() {
            let pad = w - c.chars().count();
            // numbers right-aligned, text left-aligned
            if (3..=5).contains(&j) && i > 0 {
                line.push_str(&" ".repeat(pad));
                line.push_str(c);
            } else {
                line.push_str(c);
                line.push_str(&" ".repeat(pad));
            }
            line.push_str("  ");
        }
        out.push_str(line.trim_end());
        out.push('\n');
        if i == 0 {
            let total: usize = widths.iter().sum::<usize>() + 2 * 6;
            out.push_str(&"-".repeat(total));
            out.push('\n');
        }
    }
    out.push('\n');
    out.push_str(&format!(
        "{} details: {} pass, {} fail, {} outside the method; governing {} at utilisation {}\n",
        s.details,
        s.passed,
        s.failed,
        s.outside_method,
        one_line(s.governing_detail.as_deref().unwrap_or("-")),
        cell3(s.max_utilisation)
    ));
    for d in details {
        for w in &d.warnings {
            out.push_str(w);
        }
    }
    out.push_str(CAUTION_LINE);
    out.push('\n');
    out
}

/// Write a streamed output into `path` (through a `.part` file renamed into place only
/// after the last byte, so a failed run leaves nothing) or, without a path, to standard
/// output. `f` gets the buffered writer, the error for a failed write, and whether
/// standard output is a terminal (where text must be escaped).
pub fn write_streamed<T>(
    path: Option<&std::path::Path>,
    inputs: &Inputs,
    f: impl FnOnce(&mut dyn Write, &dyn Fn(std::io::Error) -> Error, bool) -> Result<T, Error>,
) -> Result<T, Error> {
    use std::io::IsTerminal;
    match path {
        Some(path) => {
            let mut file = crate::files::write::PendingFile::new(path, inputs, ".part")?;
            let err = |source| Error::Output {
                path: path.to_path_buf(),
                source,
            };
            let mut w = std::io::BufWriter::with_capacity(1 << 20, file.file());
            let t = f(&mut w, &err, false)?;
            drop(w);
            file.commit()?;
            Ok(t)
        }
        None => {
            let stdout = std::io::stdout();
            let terminal = stdout.is_terminal();
            let mut w = std::io::BufWriter::with_capacity(1 << 20, stdout.lock());
            f(&mut w, &Error::Stdout, terminal)
        }
    }
}
