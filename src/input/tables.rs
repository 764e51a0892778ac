//! Details and their stresses from CSV tables, as a spreadsheet or a finite-element
//! post-processor exports them.
//!
//! - `details` table: one row per detail, columns named like the project file's detail
//!   keys (`id, location, detail, category, shear_category, material, thickness_mm`,
//!   and optionally `description, toe_distance_mm, mean_stress_case,
//!   thickness_exponent, group, amplitude, shear_amplitude`); an empty cell is "not
//!   given".
//! - `stresses` table (long format): `detail_id, component, event, range_mpa,
//!   max_mpa, min_mpa, mean_mpa, cycles`; each row is one block of one occurrence of
//!   a declared event.
//! - `histories` table (long format): `detail_id, component, event, stress_mpa` in time
//!   order per (detail, component, event); each history is counted by rainflow.
//!
//! Tables are streamed line by line; what is kept is one `Detail` per row of the
//! details table, its blocks, and the history samples. Every error names the table,
//! line and column, and the detail.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use super::schema::*;
use crate::catalogue::Component;
use crate::error::{InputError, InputErrorKind, Location};
use crate::files::csvlines::{parse_f64, CsvLines, LineError, Row};
use crate::files::{shown, suggest};
use crate::results::SeriesFileInfo;

/// A counted stress history from the histories table.
#[derive(Debug, Clone)]
pub struct TableHistory {
    /// Index of the detail in the project's detail list.
    pub detail: usize,
    pub component: Component,
    /// Index of the event in the project's `events`.
    pub event: usize,
    /// Where its stress samples (MPa, time order) lie in [`TableData::samples`]: one
    /// run when the history's rows are together in the table, more when they are not.
    pub runs: Vec<std::ops::Range<usize>>,
    /// Line of the history's first row.
    pub line: u64,
}

impl TableHistory {
    /// The history's samples in time order.
    pub fn samples<'a>(&self, data: &'a TableData) -> std::borrow::Cow<'a, [f64]> {
        match self.runs.as_slice() {
            [] => std::borrow::Cow::Borrowed(&[]),
            [one] => std::borrow::Cow::Borrowed(&data.samples[one.clone()]),
            many => std::borrow::Cow::Owned(
                many.iter()
                    .flat_map(|r| data.samples[r.clone()].iter().copied())
                    .collect(),
            ),
        }
    }
}

/// What the tables added to a project, and how to find a table detail's rows again.
#[derive(Debug, Clone, Default)]
pub struct TableData {
    /// Index of the first table detail in the project's detail list.
    pub first_detail: usize,
    /// Number of details from the details table.
    pub detail_count: usize,
    /// Line of each table detail's row in the details table.
    pub detail_lines: Vec<u64>,
    /// The details table and the stresses table, resolved.
    pub details_path: Option<PathBuf>,
    pub stresses_path: Option<PathBuf>,
    pub histories: Vec<TableHistory>,
    /// The samples of every history, one after another.
    pub samples: Vec<f64>,
    /// Every table file read, resolved.
    pub paths: Vec<PathBuf>,
    /// The table files read, with their hashes (paths as written in the project file).
    pub files: Vec<SeriesFileInfo>,
    /// Details without any stress or history row (left out of the assessment).
    pub unloaded: Vec<(String, u64)>,
}

fn at(path: &Path, line: u64, col: usize) -> Location {
    Location::at(path, line as usize, col)
}

fn line_error(path: &Path, what: &str, e: LineError) -> InputError {
    match e {
        LineError::Io(e) => InputError::new(
            InputErrorKind::Io,
            Location::file(path),
            format!("cannot read the {what} table: {e}"),
        ),
        LineError::TooLong { line } => InputError::new(
            InputErrorKind::TooLarge,
            Location::at(path, line as usize, 1),
            format!(
                "line is longer than {} MiB; a table row is a few hundred bytes",
                crate::files::csvlines::MAX_LINE_BYTES >> 20
            ),
        )
        .hint("check that the file is a comma-separated table with one row per line"),
        LineError::Quote { line, column } => InputError::new(
            InputErrorKind::Syntax,
            at(path, line, column),
            "a quoted cell is not closed on its line",
        )
        .hint("close the quote; cells may not span lines"),
        LineError::NotUtf8 { line } => InputError::new(
            InputErrorKind::Syntax,
            Location::at(path, line as usize, 1),
            "line is not UTF-8 text",
        )
        .hint("save the table as UTF-8 CSV"),
    }
}

/// Resolve a table path against the project folder; refuse one that leaves it (unless
/// allowed) and anything but a regular file.
pub fn resolve_table(
    dir: &Path,
    file: &str,
    allow_outside: bool,
    loc: Location,
) -> Result<PathBuf, InputError> {
    let canon_dir = dir.canonicalize().map_err(|e| {
        InputError::new(
            InputErrorKind::Io,
            loc.clone(),
            format!("cannot resolve the project folder: {e}"),
        )
    })?;
    let canon = dir.join(file).canonicalize().map_err(|e| {
        InputError::new(
            InputErrorKind::Io,
            loc.clone(),
            format!("cannot open table `{}`: {e}", shown(file)),
        )
        .hint("table paths are relative to the project file's folder")
    })?;
    if !allow_outside && !canon.starts_with(&canon_dir) {
        return Err(InputError::new(
            InputErrorKind::PathOutsideProject,
            loc,
            format!("table `{}` lies outside the project folder", shown(file)),
        )
        .hint("move the table into the project folder, or set `tables: {allow_outside_project: true}`"));
    }
    let meta = std::fs::metadata(&canon).map_err(|e| {
        InputError::new(
            InputErrorKind::Io,
            loc.clone(),
            format!("cannot read table `{}`: {e}", shown(file)),
        )
    })?;
    if !meta.is_file() {
        return Err(InputError::new(
            InputErrorKind::Io,
            loc,
            format!("table `{}` is not a regular file", shown(file)),
        )
        .hint("give the path of a CSV file (not a folder, device or pipe)"));
    }
    Ok(canon)
}

/// A header row: column name -> position, refusing unknown and repeated names.
struct Header {
    /// (column name, position) of each column present; a short list, searched by name.
    pos: Vec<(String, usize)>,
}

impl Header {
    fn read(
        path: &Path,
        what: &str,
        lines: &mut CsvLines,
        row: &mut Row,
        known: &[&str],
        required: &[&str],
    ) -> Result<Header, InputError> {
        if !lines.next_row(row).map_err(|e| line_error(path, what, e))? {
            return Err(InputError::new(
                InputErrorKind::MissingField,
                Location::file(path),
                format!("the {what} table is empty"),
            )
            .hint(format!(
                "its first line names the columns: {}",
                required.join(", ")
            )));
        }
        let mut pos: Vec<(String, usize)> = Vec::new();
        for i in 0..row.len() {
            let name = row.cell(i).to_string();
            let loc = at(path, row.line, row.column(i));
            if name.is_empty() {
                return Err(InputError::new(
                    InputErrorKind::MissingField,
                    loc,
                    format!("column {} of the {what} table has no name", i + 1),
                )
                .hint(format!("name every column; known: {}", known.join(", "))));
            }
            if !known.contains(&name.as_str()) {
                let hint = match suggest(&name, known.iter().copied()) {
                    Some(n) => format!("did you mean `{n}`? (known: {})", known.join(", ")),
                    None => format!("known columns: {}", known.join(", ")),
                };
                return Err(InputError::new(
                    InputErrorKind::UnknownKey,
                    loc,
                    format!("unknown column `{}` in the {what} table", shown(&name)),
                )
                .hint(hint));
            }
            if pos.iter().any(|(n, _)| *n == name) {
                return Err(InputError::new(
                    InputErrorKind::DuplicateId,
                    loc,
                    format!("column `{name}` appears twice in the {what} table"),
                )
                .hint("each column may appear once"));
            }
            pos.push((name, i));
        }
        for r in required {
            if !pos.iter().any(|(n, _)| n == r) {
                return Err(InputError::new(
                    InputErrorKind::MissingField,
                    at(path, row.line, 1),
                    format!("the {what} table has no column `{r}`"),
                )
                .hint(format!("its first line must name: {}", required.join(", "))));
            }
        }
        Ok(Header { pos })
    }

    fn get(&self, name: &str) -> Option<usize> {
        self.pos.iter().find(|(n, _)| n == name).map(|p| p.1)
    }
}

/// Reads typed cells of one row, with errors naming the table, line, column and detail.
struct Cells<'a> {
    path: &'a Path,
    row: &'a Row,
    header: &'a Header,
    detail: Option<&'a str>,
}

impl Cells<'_> {
    fn loc(&self, col: usize) -> Location {
        at(self.path, self.row.line, self.row.column(col))
    }

    fn who(&self) -> String {
        match self.detail {
            Some(id) => format!("detail `{}`: ", shown(id)),
            None => String::new(),
        }
    }

    fn text(&self, name: &str) -> Option<String> {
        let i = self.header.get(name)?;
        let t = self.row.cell(i);
        (!t.is_empty()).then(|| t.into_owned())
    }

    fn required(&self, name: &str) -> Result<String, InputError> {
        self.text(name).ok_or_else(|| {
            let i = self.header.get(name).unwrap_or(0);
            InputError::new(
                InputErrorKind::MissingField,
                self.loc(i),
                format!("{}`{name}` is empty", self.who()),
            )
            .hint(format!("every row needs a `{name}`"))
        })
    }

    fn number(&self, name: &str) -> Result<Option<f64>, InputError> {
        let Some(i) = self.header.get(name) else {
            return Ok(None);
        };
        let raw = self.row.cell(i);
        if raw.is_empty() {
            return Ok(None);
        }
        match parse_f64(raw.as_bytes()).ok_or(()) {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(InputError::new(
                InputErrorKind::InvalidValue,
                self.loc(i),
                format!(
                    "{}`{name}` is `{}`, not a finite number",
                    self.who(),
                    shown(&raw)
                ),
            )
            .hint("give a finite number (units are in the column name)")),
            Err(_) => Err(InputError::new(
                InputErrorKind::WrongType,
                self.loc(i),
                format!("{}`{name}` is `{}`, not a number", self.who(), shown(&raw)),
            )
            .hint("give a plain decimal number, e.g. `62.5` or `2.0e6`")),
        }
    }

    fn amplitude(&self, name: &str) -> Result<Option<Amplitude>, InputError> {
        let Some(t) = self.text(name) else {
            return Ok(None);
        };
        match t.as_str() {
            "constant" => Ok(Some(Amplitude::Constant)),
            "variable" => Ok(Some(Amplitude::Variable)),
            _ => Err(InputError::new(
                InputErrorKind::InvalidValue,
                self.loc(self.header.get(name).unwrap_or(0)),
                format!("{}`{name}` is `{}`", self.who(), shown(&t)),
            )
            .hint("give `constant`, `variable` or leave the cell empty")),
        }
    }

    fn component(&self) -> Result<Component, InputError> {
        let i = self.header.get("component").unwrap_or(0);
        match self.row.raw(i) {
            b"normal" => Ok(Component::Normal),
            b"shear" => Ok(Component::Shear),
            _ => Err(InputError::new(
                InputErrorKind::InvalidValue,
                self.loc(i),
                format!(
                    "{}component `{}` is neither `normal` nor `shear`",
                    self.who(),
                    shown(&self.row.cell(i))
                ),
            )
            .hint("write `normal` for normal stress Δσ, `shear` for shear stress Δτ")),
        }
    }
}

const DETAIL_COLUMNS: &[&str] = &[
    "id",
    "location",
    "description",
    "detail",
    "category",
    "shear_category",
    "material",
    "thickness_mm",
    "toe_distance_mm",
    "mean_stress_case",
    "thickness_exponent",
    "group",
    "amplitude",
    "shear_amplitude",
];
const DETAIL_REQUIRED: &[&str] = &["id", "location", "material", "thickness_mm"];
const STRESS_COLUMNS: &[&str] = &[
    "detail_id",
    "component",
    "event",
    "range_mpa",
    "max_mpa",
    "min_mpa",
    "mean_mpa",
    "cycles",
];
const STRESS_REQUIRED: &[&str] = &["detail_id", "component", "event", "cycles"];
const HISTORY_COLUMNS: &[&str] = &["detail_id", "component", "event", "stress_mpa"];

/// Category and amplitude cells of a table detail, held until its components appear.
#[derive(Debug, Clone, Copy, Default)]
struct ComponentCells {
    category: Option<f64>,
    amplitude: Option<Amplitude>,
}

/// Everything needed while the tables are read.
struct Reader<'a> {
    dir: &'a Path,
    file: &'a ProjectFile,
    details: Vec<Detail>,
    cells: Vec<[ComponentCells; 2]>,
    ids: HashMap<String, usize>,
    yaml_ids: HashMap<&'a str, usize>,
    events: HashMap<&'a str, usize>,
    data: TableData,
}

impl<'a> Reader<'a> {
    fn event_index(
        &self,
        path: &Path,
        row: &Row,
        col: usize,
        who: &str,
    ) -> Result<usize, InputError> {
        let name = row.cell(col);
        self.events.get(name.as_ref()).copied().ok_or_else(|| {
            let names = self.file.events.iter().map(|e| e.name.as_str());
            let hint = match suggest(&name, names) {
                Some(n) => format!("did you mean `{n}`? Events are declared under `events:` in the project file"),
                None if self.file.events.is_empty() => "declare it under `events:` in the project file, e.g. `- {name: loaded-passage, per_year: 9000}`".to_string(),
                None => format!(
                    "declared events: {}",
                    self.file.events.iter().map(|e| e.name.as_str()).collect::<Vec<_>>().join(", ")
                ),
            };
            InputError::new(
                InputErrorKind::UnknownOption,
                at(path, row.line, row.column(col)),
                format!("detail `{}`: event `{}` is not declared", shown(who), shown(&name)),
            )
            .hint(hint)
        })
    }

    /// The table detail a stress or history row names.
    fn detail_index(&self, path: &Path, row: &Row, col: usize) -> Result<usize, InputError> {
        let id = row.cell(col);
        if let Some(&i) = self.ids.get(id.as_ref()) {
            return Ok(i);
        }
        let loc = at(path, row.line, row.column(col));
        if id.is_empty() {
            return Err(
                InputError::new(InputErrorKind::MissingField, loc, "`detail_id` is empty")
                    .hint("every row names the detail it belongs to"),
            );
        }
        if self.yaml_ids.contains_key(id.as_ref()) {
            return Err(InputError::new(
                InputErrorKind::InvalidValue,
                loc,
                format!(
                    "detail `{}` is defined in the project file, not in the details table",
                    shown(&id)
                ),
            )
            .hint(
                "give its loading in the project file, or move the detail into the details table",
            ));
        }
        let hint = match suggest(&id, self.ids.keys().map(|s| s.as_str()).take(10_000)) {
            Some(n) => format!("did you mean `{n}`?"),
            None => "the id must be one of the details table".into(),
        };
        Err(InputError::new(
            InputErrorKind::UnknownDetail,
            loc,
            format!("unknown detail `{}`", shown(&id)),
        )
        .hint(hint))
    }

    /// The loading list of a table detail's component, creating the component.
    fn loading(&mut self, d: usize, c: Component) -> &mut Vec<LoadEvent> {
        let k = d - self.data.first_detail;
        let cells = self.cells[k][c as usize];
        let det = &mut self.details[k];
        let slot = match c {
            Component::Normal => &mut det.normal,
            Component::Shear => &mut det.shear,
        };
        &mut slot
            .get_or_insert_with(|| ComponentInput {
                category: cells.category,
                amplitude: cells.amplitude,
                loading: Vec::new(),
                crane: None,
            })
            .loading
    }

    fn event_slot(&mut self, d: usize, c: Component, e: usize) -> &mut LoadEvent {
        let ev = &self.file.events[e];
        let loading = self.loading(d, c);
        let pos = match loading.iter().position(|l| l.event == ev.name) {
            Some(p) => p,
            None => {
                loading.push(LoadEvent {
                    event: ev.name.clone(),
                    per_year: Some(ev.per_year),
                    blocks: None,
                    series: None,
                    table_history: None,
                });
                loading.len() - 1
            }
        };
        &mut loading[pos]
    }

    fn read_details(&mut self, path: &Path) -> Result<(String, u64), InputError> {
        let mut lines = CsvLines::open(path).map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the details table: {e}"),
            )
        })?;
        let mut row = Row::default();
        let header = Header::read(
            path,
            "details",
            &mut lines,
            &mut row,
            DETAIL_COLUMNS,
            DETAIL_REQUIRED,
        )?;
        while lines
            .next_row(&mut row)
            .map_err(|e| line_error(path, "details", e))?
        {
            if row.blank() {
                continue;
            }
            let probe = Cells {
                path,
                row: &row,
                header: &header,
                detail: None,
            };
            let id = probe.required("id")?;
            let c = Cells {
                detail: Some(&id),
                ..probe
            };
            let id_col = header.get("id").unwrap_or(0);
            if let Some(&j) = self.yaml_ids.get(id.as_str()) {
                return Err(InputError::new(
                    InputErrorKind::DuplicateId,
                    c.loc(id_col),
                    format!(
                        "duplicate detail id `{}`: the project file defines it too (details[{j}])",
                        shown(&id)
                    ),
                )
                .hint("detail ids must be unique across the project file and the tables"));
            }
            if let Some(&j) = self.ids.get(id.as_str()) {
                let first = self.data.detail_lines[j - self.data.first_detail];
                return Err(InputError::new(
                    InputErrorKind::DuplicateId,
                    c.loc(id_col),
                    format!(
                        "duplicate detail id `{}` (first on line {first})",
                        shown(&id)
                    ),
                )
                .hint("detail ids must be unique across the project file and the tables"));
            }
            let det = Detail {
                id: id.clone(),
                location: c.required("location")?,
                description: c.text("description"),
                detail: c.text("detail"),
                material: c.required("material")?,
                thickness_mm: c.number("thickness_mm")?.ok_or_else(|| {
                    InputError::new(
                        InputErrorKind::MissingField,
                        c.loc(header.get("thickness_mm").unwrap_or(0)),
                        format!("detail `{}`: `thickness_mm` is empty", shown(&id)),
                    )
                    .hint("every detail needs its plate thickness in mm")
                })?,
                toe_distance_mm: c.number("toe_distance_mm")?,
                mean_stress_case: c.text("mean_stress_case"),
                thickness_exponent: c.number("thickness_exponent")?,
                group: c.text("group"),
                environment: None,
                cycles_per_truck_passage: None,
                scf: None,
                improvement: None,
                normal: None,
                shear: None,
            };
            let cells = [
                ComponentCells {
                    category: c.number("category")?,
                    amplitude: c.amplitude("amplitude")?,
                },
                ComponentCells {
                    category: c.number("shear_category")?,
                    amplitude: c.amplitude("shear_amplitude")?,
                },
            ];
            let index = self.data.first_detail + self.details.len();
            self.ids.insert(id, index);
            self.details.push(det);
            self.cells.push(cells);
            self.data.detail_lines.push(row.line);
        }
        lines.finish().map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the details table: {e}"),
            )
        })
    }

    fn read_stresses(&mut self, path: &Path) -> Result<(String, u64), InputError> {
        let mut lines = CsvLines::open(path).map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the stresses table: {e}"),
            )
        })?;
        let mut row = Row::default();
        let header = Header::read(
            path,
            "stresses",
            &mut lines,
            &mut row,
            STRESS_COLUMNS,
            STRESS_REQUIRED,
        )?;
        if header.get("range_mpa").is_none()
            && (header.get("max_mpa").is_none() || header.get("min_mpa").is_none())
        {
            return Err(InputError::new(
                InputErrorKind::MissingField,
                at(path, 1, 1),
                "the stresses table needs a `range_mpa` column, or `max_mpa` and `min_mpa`",
            )
            .hint("a block gives its range (optionally with `mean_mpa`) or its max and min"));
        }
        let id_col = header.get("detail_id").unwrap_or(0);
        let ev_col = header.get("event").unwrap_or(0);
        while lines
            .next_row(&mut row)
            .map_err(|e| line_error(path, "stresses", e))?
        {
            if row.blank() {
                continue;
            }
            let d = self.detail_index(path, &row, id_col)?;
            let (comp, e, block) = {
                let id = self.details[d - self.data.first_detail].id.as_str();
                let c = Cells {
                    path,
                    row: &row,
                    header: &header,
                    detail: Some(id),
                };
                let comp = c.component()?;
                let e = self.event_index(path, &row, ev_col, id)?;
                let range = c.number("range_mpa")?;
                let mean = c.number("mean_mpa")?;
                let max = c.number("max_mpa")?;
                let min = c.number("min_mpa")?;
                if range.is_some() && (max.is_some() || min.is_some()) {
                    let col = header
                        .get(if max.is_some() { "max_mpa" } else { "min_mpa" })
                        .unwrap_or(0);
                    return Err(InputError::new(
                    InputErrorKind::InvalidValue,
                    c.loc(col),
                    format!("detail `{}`: the row gives both `range_mpa` and max/min", shown(id)),
                )
                .hint("give `range_mpa` (optionally with `mean_mpa`), or `max_mpa` and `min_mpa`, not both"));
                }
                let cycles = c.number("cycles")?.ok_or_else(|| {
                    InputError::new(
                        InputErrorKind::MissingField,
                        c.loc(header.get("cycles").unwrap_or(0)),
                        format!("detail `{}`: `cycles` is empty", shown(id)),
                    )
                    .hint("give the cycles of this block per occurrence of the event")
                })?;
                let block = Block {
                    range_mpa: range,
                    mean_mpa: mean,
                    max_mpa: max,
                    min_mpa: min,
                    cycles,
                };
                (comp, e, block)
            };
            self.event_slot(d, comp, e)
                .blocks
                .get_or_insert_with(Vec::new)
                .push(block);
        }
        lines.finish().map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the stresses table: {e}"),
            )
        })
    }

    fn read_histories(&mut self, path: &Path) -> Result<(String, u64), InputError> {
        let mut lines = CsvLines::open(path).map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the histories table: {e}"),
            )
        })?;
        let mut row = Row::default();
        let header = Header::read(
            path,
            "histories",
            &mut lines,
            &mut row,
            HISTORY_COLUMNS,
            HISTORY_COLUMNS,
        )?;
        let (id_col, comp_col, ev_col, s_col) = (
            header.get("detail_id").unwrap_or(0),
            header.get("component").unwrap_or(1),
            header.get("event").unwrap_or(2),
            header.get("stress_mpa").unwrap_or(3),
        );
        let mut index: HashMap<(usize, u8, usize), usize> = HashMap::new();
        // the key of the previous row and its history, to skip look-ups in a run
        let mut last_key: Vec<u8> = Vec::new();
        let mut last: Option<usize> = None;
        let mut key = Vec::new();
        // Fast path for the usual layout (columns in the order detail_id, component,
        // event, stress_mpa; no quotes): a row of the same history as the one before
        // starts with the same bytes up to its third comma, so only its number is read.
        let ordered = (id_col, comp_col, ev_col, s_col) == (0, 1, 2, 3);
        let mut last_prefix: Vec<u8> = Vec::new();
        loop {
            let next = lines
                .next_raw()
                .map_err(|e| line_error(path, "histories", e))?;
            let Some((line_no, bytes)) = next else { break };
            if ordered && !last_prefix.is_empty() && bytes.starts_with(&last_prefix) {
                let rest = &bytes[last_prefix.len()..];
                if let (Some(h), None) = (last, memchr::memchr2(b',', b'"', rest)) {
                    if let Some(v) = parse_f64(rest).filter(|v| v.is_finite()) {
                        let at = self.data.samples.len();
                        self.data.samples.push(v);
                        let runs = &mut self.data.histories[h].runs;
                        match runs.last_mut() {
                            Some(r) if r.end == at => r.end = at + 1,
                            _ => runs.push(at..at + 1),
                        }
                        continue;
                    }
                }
            }
            // the prefix of this line, for the next one
            last_prefix.clear();
            if ordered && !bytes.contains(&b'"') {
                if let Some(c3) = memchr::memchr_iter(b',', bytes).nth(2) {
                    last_prefix.extend_from_slice(&bytes[..=c3]);
                }
            }
            row.set(line_no, bytes)
                .map_err(|e| line_error(path, "histories", e))?;
            if row.blank() {
                continue;
            }
            key.clear();
            for col in [id_col, comp_col, ev_col] {
                key.extend_from_slice(row.raw(col));
                key.push(0);
            }
            let h = match last {
                Some(h) if key == last_key => h,
                _ => {
                    let d = self.detail_index(path, &row, id_col)?;
                    let id = self.details[d - self.data.first_detail].id.clone();
                    let c = Cells {
                        path,
                        row: &row,
                        header: &header,
                        detail: Some(&id),
                    };
                    let comp = c.component()?;
                    let e = self.event_index(path, &row, ev_col, &id)?;
                    let h = match index.get(&(d, comp as u8, e)) {
                        Some(&h) => h,
                        None => {
                            let h = self.data.histories.len();
                            self.data.histories.push(TableHistory {
                                detail: d,
                                component: comp,
                                event: e,
                                runs: Vec::new(),
                                line: row.line,
                            });
                            index.insert((d, comp as u8, e), h);
                            let slot = self.event_slot(d, comp, e);
                            if slot.table_history.is_some() || slot.blocks.is_some() {
                                return Err(InputError::new(
                                    InputErrorKind::InvalidValue,
                                    at(path, row.line, row.column(ev_col)),
                                    format!(
                                        "detail `{}`: event `{}` of its {} stress has rows in the stresses table too",
                                        shown(&id),
                                        self.file.events[e].name,
                                        comp.as_str()
                                    ),
                                )
                                .hint("give one event's stresses as blocks or as a history, not both"));
                            }
                            slot.table_history = Some(h);
                            h
                        }
                    };
                    last_key.clone_from(&key);
                    last = Some(h);
                    h
                }
            };
            let raw = row.raw(s_col);
            let v = std::str::from_utf8(raw)
                .ok()
                .and_then(|t| t.parse::<f64>().ok());
            match v {
                Some(v) if v.is_finite() => {
                    let at = self.data.samples.len();
                    self.data.samples.push(v);
                    let runs = &mut self.data.histories[h].runs;
                    match runs.last_mut() {
                        Some(r) if r.end == at => r.end = at + 1,
                        _ => runs.push(at..at + 1),
                    }
                }
                _ => {
                    let id =
                        &self.details[self.data.histories[h].detail - self.data.first_detail].id;
                    return Err(InputError::new(
                        if v.is_some() {
                            InputErrorKind::InvalidValue
                        } else {
                            InputErrorKind::WrongType
                        },
                        at(path, row.line, row.column(s_col)),
                        format!(
                            "detail `{}`: `stress_mpa` is `{}`, not a finite number",
                            shown(id),
                            shown(&row.cell(s_col))
                        ),
                    )
                    .hint(
                        "give the stress in MPa as a plain number; fill or cut gaps in a history",
                    ));
                }
            }
        }
        lines.finish().map_err(|e| {
            InputError::new(
                InputErrorKind::Io,
                Location::file(path),
                format!("cannot read the histories table: {e}"),
            )
        })
    }
}

/// Read the tables a project names. `loc` locates the `tables:` entries for messages.
/// The table details are returned in file order, ready to follow the project file's
/// own details (indices from `file.details.len()`).
pub fn read_tables(
    dir: &Path,
    file: &ProjectFile,
    loc: &dyn Fn(&str) -> Location,
) -> Result<(Vec<Detail>, TableData), InputError> {
    let Some(t) = &file.tables else {
        return Ok((Vec::new(), TableData::default()));
    };
    let mut r = Reader {
        dir,
        file,
        details: Vec::new(),
        cells: Vec::new(),
        ids: HashMap::new(),
        yaml_ids: file
            .details
            .iter()
            .enumerate()
            .map(|(i, d)| (d.id.as_str(), i))
            .collect(),
        events: HashMap::new(),
        data: TableData {
            first_detail: file.details.len(),
            ..TableData::default()
        },
    };
    for (i, e) in file.events.iter().enumerate() {
        if r.events.insert(e.name.as_str(), i).is_some() {
            return Err(InputError::new(
                InputErrorKind::DuplicateId,
                loc("events"),
                format!("event `{}` is declared twice", shown(&e.name)),
            )
            .hint("each event name may be declared once"));
        }
    }
    let resolve = |key: &str, f: &str| resolve_table(r.dir, f, t.allow_outside_project, loc(key));
    let mut files = Vec::new();
    if let Some(f) = &t.details {
        let p = resolve("details", f)?;
        let h = r.read_details(&p)?;
        files.push(file_info(f, h.0, h.1));
        r.data.paths.push(p.clone());
        r.data.details_path = Some(p);
    } else if t.stresses.is_some() || t.histories.is_some() {
        return Err(InputError::new(
            InputErrorKind::MissingField,
            loc("tables"),
            "`tables:` names stresses or histories but no `details` table",
        )
        .hint("the rows of the stresses and histories tables refer to the details table"));
    }
    if let Some(f) = &t.stresses {
        let p = resolve("stresses", f)?;
        let h = r.read_stresses(&p)?;
        files.push(file_info(f, h.0, h.1));
        r.data.paths.push(p.clone());
        r.data.stresses_path = Some(p);
    }
    if let Some(f) = &t.histories {
        let p = resolve("histories", f)?;
        let h = r.read_histories(&p)?;
        files.push(file_info(f, h.0, h.1));
        r.data.paths.push(p);
    }
    r.data.files = files;
    r.data.detail_count = r.details.len();
    // Details without any row are left out of the assessment (and reported).
    let mut kept = Vec::with_capacity(r.details.len());
    let mut lines = Vec::with_capacity(r.details.len());
    let mut renumber = vec![usize::MAX; r.details.len()];
    for (k, d) in r.details.into_iter().enumerate() {
        if d.normal.is_none() && d.shear.is_none() {
            r.data.unloaded.push((d.id, r.data.detail_lines[k]));
        } else {
            renumber[k] = r.data.first_detail + kept.len();
            kept.push(d);
            lines.push(r.data.detail_lines[k]);
        }
    }
    if !r.data.unloaded.is_empty() {
        for h in &mut r.data.histories {
            h.detail = renumber[h.detail - r.data.first_detail];
        }
    }
    r.data.detail_lines = lines;
    r.data.detail_count = kept.len();
    Ok((kept, r.data))
}

fn file_info(f: &str, sha256: String, bytes: u64) -> SeriesFileInfo {
    SeriesFileInfo {
        file: f.to_string(),
        sha256,
        bytes,
    }
}

impl TableData {
    /// The index of the table detail a problem path points into, if any.
    pub fn detail_of(&self, path: &crate::files::locate::YamlPath) -> Option<usize> {
        use crate::files::locate::Step;
        match path.0.as_slice() {
            [Step::Key(d), Step::Index(k), ..]
                if d == "details"
                    && *k >= self.first_detail
                    && *k < self.first_detail + self.detail_count =>
            {
                Some(*k)
            }
            _ => None,
        }
    }

    /// Where in the tables a problem found by the project checks lies: the detail's row
    /// and the cell of the field, or the stress row of a block. `None` for a problem
    /// outside the table details. Reads the table again (only on the error path).
    pub fn locate(
        &self,
        file: &ProjectFile,
        path: &crate::files::locate::YamlPath,
    ) -> Option<Location> {
        use crate::files::locate::Step;
        let k = self.detail_of(path)?;
        let det = &file.details[k];
        let rest = &path.0[2..];
        let details = self.details_path.as_deref()?;
        let line = self.detail_lines[k - self.first_detail];
        let (comp, tail) = match rest {
            [Step::Key(c), tail @ ..] if c == "normal" || c == "shear" => (Some(c.as_str()), tail),
            _ => (None, rest),
        };
        match (comp, tail) {
            // a field of the details row
            (None, [Step::Key(field), ..]) => Some(cell_location(details, line, field)),
            (None, _) => Some(Location::at(details, line as usize, 1)),
            (Some(c), [Step::Key(l), Step::Index(e), more @ ..]) if l == "loading" => {
                let input = if c == "normal" {
                    &det.normal
                } else {
                    &det.shear
                };
                let ev = input.as_ref()?.loading.get(*e)?;
                let stresses = self.stresses_path.as_deref()?;
                let (block, field) = match more {
                    [Step::Key(b), Step::Index(j), Step::Key(f), ..] if b == "blocks" => {
                        (*j, Some(f.as_str()))
                    }
                    [Step::Key(b), Step::Index(j)] if b == "blocks" => (*j, None),
                    _ => (0, None),
                };
                stress_row_location(stresses, &det.id, c, &ev.event, block, field)
                    .or_else(|| Some(Location::file(stresses)))
            }
            (Some(c), [Step::Key(f), ..]) => {
                let column = match (c, f.as_str()) {
                    ("normal", "category") => "category",
                    ("shear", "category") => "shear_category",
                    ("normal", "amplitude") => "amplitude",
                    ("shear", "amplitude") => "shear_amplitude",
                    _ => "id",
                };
                Some(cell_location(details, line, column))
            }
            (Some(c), _) => Some(cell_location(
                details,
                line,
                if c == "normal" {
                    "category"
                } else {
                    "shear_category"
                },
            )),
        }
    }
}

/// line:col of a named column's cell on a line of a table (column 1 when the table
/// has no such column).
fn cell_location(path: &Path, line: u64, column: &str) -> Location {
    let find = || -> Option<usize> {
        let mut lines = CsvLines::open(path).ok()?;
        let mut row = Row::default();
        lines.next_row(&mut row).ok()?;
        let pos = (0..row.len()).find(|&i| row.cell(i) == column)?;
        while lines.next_row(&mut row).ok()? {
            if row.line == line {
                return Some(row.column(pos));
            }
        }
        None
    };
    Location::at(path, line as usize, find().unwrap_or(1))
}

/// The `block`-th stress row of (detail, component, event), at the cell of `field`.
fn stress_row_location(
    path: &Path,
    id: &str,
    component: &str,
    event: &str,
    block: usize,
    field: Option<&str>,
) -> Option<Location> {
    let mut lines = CsvLines::open(path).ok()?;
    let mut row = Row::default();
    lines.next_row(&mut row).ok()?;
    let col = |name: &str| (0..row.len()).find(|&i| row.cell(i) == name);
    let (ci, cc, ce) = (col("detail_id")?, col("component")?, col("event")?);
    let cf = field.and_then(col);
    let mut seen = 0;
    while lines.next_row(&mut row).ok()? {
        if row.cell(ci) == id && row.cell(cc) == component && row.cell(ce) == event {
            if seen == block {
                let c = cf.map(|i| row.column(i)).unwrap_or(1);
                return Some(Location::at(path, row.line as usize, c));
            }
            seen += 1;
        }
    }
    None
}
