//! `seamlife diff`: what changed between two revisions of a project. Both sides are
//! results models (a project file is assessed first through the ordinary pipeline), so
//! the comparison is the same for project files, results models and details from
//! tables. Details are matched by id; for each detail in both, every input that
//! differs (catalogue entry, category, thickness, material, each loading block, each
//! counted series with its file's SHA-256) and every result that differs (status,
//! utilisation, damage, life, reserve factor, required category) is listed.

use std::collections::HashMap;

use serde::{Deserialize, Serialize};
use serde_json::Value;

use crate::results::{ComponentResult, DetailResult, Results, Status};

/// Numbers that agree within this relative tolerance are the same (the digits a
/// results model carries survive a round trip exactly; this only absorbs the last
/// bit of a recomputation).
pub const DIFF_RTOL: f64 = 1e-12;

/// One side of the comparison.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct DiffSide {
    /// The file as given on the command line.
    pub file: String,
    /// `project` (assessed for the comparison) or `results` (a results model read).
    pub kind: String,
    pub reference: String,
    pub revision: String,
    pub date: String,
    /// SHA-256 of the project file (from the results model).
    pub project_sha256: String,
    pub tool_version: String,
    pub family: String,
    pub family_data_version: String,
    pub details: usize,
}

/// One value that differs.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct Change {
    /// What changed, with its unit in the name: `thickness_mm`,
    /// `normal.category_mpa`, `normal.loading[loaded passage].block[1].range_mpa`,
    /// `normal.series[records/a.csv].sha256`.
    pub item: String,
    /// Value in the old revision (`null`: absent).
    pub old: Value,
    /// Value in the new revision (`null`: absent).
    pub new: Value,
}

/// A detail present in one revision only.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct DetailOnly {
    pub id: String,
    pub location: String,
    pub status: Status,
    pub utilisation: f64,
}

/// How a detail's status moved.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum StatusMove {
    Same,
    Better,
    Worse,
}

/// A detail present in both revisions with something that differs.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct DetailDiff {
    pub id: String,
    /// Location in the new revision.
    pub location: String,
    pub old_status: Status,
    pub new_status: Status,
    pub status_move: StatusMove,
    /// Inputs that differ, in the order of the detail's fields.
    pub inputs: Vec<Change>,
    /// Results that differ.
    pub results: Vec<Change>,
}

/// Everything `diff` found: the diff model (serialisable, read by the report's
/// "changes since" section and citable as evidence).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct DiffReport {
    pub old: DiffSide,
    pub new: DiffSide,
    /// Project header, basis, family and table files that differ.
    pub project: Vec<Change>,
    pub added: Vec<DetailOnly>,
    pub removed: Vec<DetailOnly>,
    pub changed: Vec<DetailDiff>,
    /// Details in both revisions with no difference.
    pub unchanged: usize,
    /// Ids of the details whose status got worse (pass -> fail, fail -> outside the
    /// method), and of added details that do not pass.
    pub worse: Vec<String>,
    pub tool_version: String,
}

impl DiffReport {
    /// True when no status got worse and no added detail fails.
    pub fn no_worse(&self) -> bool {
        self.worse.is_empty()
    }

    /// True when the two revisions give the same inputs and results.
    pub fn is_empty(&self) -> bool {
        self.project.is_empty()
            && self.added.is_empty()
            && self.removed.is_empty()
            && self.changed.is_empty()
    }
}

fn rank(s: Status) -> u8 {
    match s {
        Status::Pass => 0,
        Status::Fail => 1,
        Status::OutsideMethod => 2,
    }
}

/// The side's description from its results model.
pub fn side(r: &Results, file: &str, kind: &str) -> DiffSide {
    DiffSide {
        file: file.to_string(),
        kind: kind.to_string(),
        reference: r.project.reference.clone(),
        revision: r.project.revision.clone(),
        date: r.project.date.clone(),
        project_sha256: r.input.sha256.clone(),
        tool_version: r.tool.version.clone(),
        family: r.family.id.clone(),
        family_data_version: r.family.data_version.clone(),
        details: r.details.len(),
    }
}

/// Collects the changes of one detail or of the project.
struct Changes(Vec<Change>);

impl Changes {
    fn value(&mut self, item: impl Into<String>, old: Value, new: Value) {
        let same = match (&old, &new) {
            (Value::Number(a), Value::Number(b)) => match (a.as_f64(), b.as_f64()) {
                (Some(a), Some(b)) => super::verify::close(a, b, DIFF_RTOL),
                _ => a == b,
            },
            _ => old == new,
        };
        if !same {
            self.0.push(Change {
                item: item.into(),
                old,
                new,
            });
        }
    }
    fn num(&mut self, item: impl Into<String>, old: f64, new: f64) {
        self.value(item, num(old), num(new));
    }
    fn opt(&mut self, item: impl Into<String>, old: Option<f64>, new: Option<f64>) {
        self.value(item, opt(old), opt(new));
    }
    fn text(&mut self, item: impl Into<String>, old: &str, new: &str) {
        self.value(item, Value::from(old), Value::from(new));
    }
    fn opt_text(&mut self, item: impl Into<String>, old: Option<&str>, new: Option<&str>) {
        self.value(
            item,
            old.map(Value::from).into(),
            new.map(Value::from).into(),
        );
    }
}

fn num(x: f64) -> Value {
    serde_json::Number::from_f64(x)
        .map(Value::Number)
        .unwrap_or(Value::Null)
}

fn opt(x: Option<f64>) -> Value {
    x.map(num).unwrap_or(Value::Null)
}

fn status_value(s: Status) -> Value {
    serde_json::to_value(s).unwrap_or(Value::Null)
}

/// Compare two results models, `old` then `new`.
pub fn diff(old: &Results, new: &Results, old_side: DiffSide, new_side: DiffSide) -> DiffReport {
    let project = project_changes(old, new);
    let old_by_id: HashMap<&str, &DetailResult> =
        old.details.iter().map(|d| (d.id.as_str(), d)).collect();
    let new_by_id: HashMap<&str, &DetailResult> =
        new.details.iter().map(|d| (d.id.as_str(), d)).collect();
    let only = |d: &DetailResult| DetailOnly {
        id: d.id.clone(),
        location: d.location.clone(),
        status: d.status,
        utilisation: d.utilisation,
    };
    let mut added = Vec::new();
    let mut changed = Vec::new();
    let mut worse = Vec::new();
    let mut unchanged = 0;
    for d in &new.details {
        let Some(o) = old_by_id.get(d.id.as_str()) else {
            if d.status != Status::Pass {
                worse.push(d.id.clone());
            }
            added.push(only(d));
            continue;
        };
        let inputs = detail_inputs(o, d, &old.input.series_files, &new.input.series_files);
        let results = detail_results(o, d);
        if inputs.is_empty() && results.is_empty() {
            unchanged += 1;
            continue;
        }
        let status_move = match rank(d.status).cmp(&rank(o.status)) {
            std::cmp::Ordering::Greater => StatusMove::Worse,
            std::cmp::Ordering::Less => StatusMove::Better,
            std::cmp::Ordering::Equal => StatusMove::Same,
        };
        if status_move == StatusMove::Worse {
            worse.push(d.id.clone());
        }
        changed.push(DetailDiff {
            id: d.id.clone(),
            location: d.location.clone(),
            old_status: o.status,
            new_status: d.status,
            status_move,
            inputs,
            results,
        });
    }
    let removed = old
        .details
        .iter()
        .filter(|d| !new_by_id.contains_key(d.id.as_str()))
        .map(only)
        .collect();
    DiffReport {
        old: old_side,
        new: new_side,
        project,
        added,
        removed,
        changed,
        unchanged,
        worse,
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
    }
}

fn project_changes(o: &Results, n: &Results) -> Vec<Change> {
    let mut c = Changes(Vec::new());
    let (p, q) = (&o.project, &n.project);
    c.text("project.title", &p.title, &q.title);
    c.text("project.reference", &p.reference, &q.reference);
    c.text("project.revision", &p.revision, &q.revision);
    c.text("project.date", &p.date, &q.date);
    c.text("project.prepared_by", &p.prepared_by, &q.prepared_by);
    c.opt_text(
        "project.checked_by",
        p.checked_by.as_deref(),
        q.checked_by.as_deref(),
    );
    c.opt_text("project.client", p.client.as_deref(), q.client.as_deref());
    c.opt_text(
        "project.structure",
        p.structure.as_deref(),
        q.structure.as_deref(),
    );
    c.opt_text(
        "project.specification",
        p.specification.as_deref(),
        q.specification.as_deref(),
    );
    let row = |r: &crate::results::RevisionEcho| {
        Value::from(format!(
            "{} {}{}",
            r.date,
            r.description,
            r.by.as_deref()
                .map(|b| format!(" ({b})"))
                .unwrap_or_default()
        ))
    };
    for r in &p.revisions {
        let now = q.revisions.iter().find(|x| x.revision == r.revision);
        c.value(
            format!("project.revisions[{}]", r.revision),
            row(r),
            now.map(row).unwrap_or(Value::Null),
        );
    }
    for r in q.revisions.iter() {
        if !p.revisions.iter().any(|x| x.revision == r.revision) {
            c.value(
                format!("project.revisions[{}]", r.revision),
                Value::Null,
                row(r),
            );
        }
    }
    c.text("family.id", &o.family.id, &n.family.id);
    c.text(
        "family.data_version",
        &o.family.data_version,
        &n.family.data_version,
    );
    c.opt_text(
        "family.sha256",
        o.family.sha256.as_deref(),
        n.family.sha256.as_deref(),
    );
    let (a, b) = (&o.basis, &n.basis);
    c.num(
        "basis.design_life_years",
        a.design_life_years,
        b.design_life_years,
    );
    c.text("basis.strategy", &a.strategy, &b.strategy);
    c.text("basis.consequence", &a.consequence, &b.consequence);
    c.num("basis.gamma_ff", a.gamma_ff.value, b.gamma_ff.value);
    c.num("basis.gamma_mf", a.gamma_mf.value, b.gamma_mf.value);
    c.num(
        "basis.damage_limit",
        a.damage_limit.value,
        b.damage_limit.value,
    );
    for f in &o.input.table_files {
        let now = n.input.table_files.iter().find(|g| g.file == f.file);
        c.opt_text(
            format!("table[{}].sha256", f.file),
            Some(&f.sha256),
            now.map(|g| g.sha256.as_str()),
        );
    }
    for g in &n.input.table_files {
        if !o.input.table_files.iter().any(|f| f.file == g.file) {
            c.opt_text(format!("table[{}].sha256", g.file), None, Some(&g.sha256));
        }
    }
    c.0
}

fn detail_inputs(
    o: &DetailResult,
    d: &DetailResult,
    old_files: &[crate::results::SeriesFileInfo],
    new_files: &[crate::results::SeriesFileInfo],
) -> Vec<Change> {
    let mut c = Changes(Vec::new());
    c.text("location", &o.location, &d.location);
    c.opt_text(
        "description",
        o.description.as_deref(),
        d.description.as_deref(),
    );
    c.opt_text(
        "catalogue_entry",
        o.detail_key.as_deref(),
        d.detail_key.as_deref(),
    );
    c.text("material", &o.material, &d.material);
    c.num("fy_mpa", o.fy_mpa, d.fy_mpa);
    c.num("thickness_mm", o.thickness_mm, d.thickness_mm);
    c.opt_text("group", o.group.as_deref(), d.group.as_deref());
    for name in component_names(&o.components, &d.components) {
        let a = o.components.iter().find(|k| k.component == name);
        let b = d.components.iter().find(|k| k.component == name);
        match (a, b) {
            (Some(a), Some(b)) => component_inputs(
                &mut c,
                &name,
                a,
                b,
                (o.thickness_mm, d.thickness_mm),
                old_files,
                new_files,
            ),
            (a, b) => c.value(
                format!("{name}.component"),
                a.map(|_| Value::from("present")).into(),
                b.map(|_| Value::from("present")).into(),
            ),
        }
    }
    c.0
}

fn component_names(a: &[ComponentResult], b: &[ComponentResult]) -> Vec<String> {
    let mut names: Vec<String> = a.iter().map(|k| k.component.clone()).collect();
    for k in b {
        if !names.contains(&k.component) {
            names.push(k.component.clone());
        }
    }
    names
}

/// Event names in first-seen order over both sides.
fn events<'a>(a: &'a ComponentResult, b: &'a ComponentResult, origin: &str) -> Vec<&'a str> {
    let mut out: Vec<&str> = Vec::new();
    for blk in a.blocks.iter().chain(&b.blocks) {
        if blk.origin == origin && !out.contains(&blk.event.as_str()) {
            out.push(&blk.event);
        }
    }
    out
}

fn component_inputs(
    c: &mut Changes,
    name: &str,
    a: &ComponentResult,
    b: &ComponentResult,
    thickness: (f64, f64),
    old_files: &[crate::results::SeriesFileInfo],
    new_files: &[crate::results::SeriesFileInfo],
) {
    c.num(
        format!("{name}.category_mpa"),
        a.category_mpa,
        b.category_mpa,
    );
    c.text(
        format!("{name}.category_source"),
        &a.category_source,
        &b.category_source,
    );
    c.opt(
        format!("{name}.thickness_exponent"),
        a.size.exponent,
        b.size.exponent,
    );
    // t_eff is listed only where it is not the plate thickness (a toe distance of
    // the IIW rule), so a thickness change is not listed twice.
    if a.size.effective_thickness_mm != thickness.0 || b.size.effective_thickness_mm != thickness.1
    {
        c.num(
            format!("{name}.effective_thickness_mm"),
            a.size.effective_thickness_mm,
            b.size.effective_thickness_mm,
        );
    }
    c.text(
        format!("{name}.mean_stress_case"),
        &a.mean_stress.case,
        &b.mean_stress.case,
    );
    c.opt_text(
        format!("{name}.curve_variant"),
        a.curve_variant.as_ref().map(|v| v.name.as_str()),
        b.curve_variant.as_ref().map(|v| v.name.as_str()),
    );
    c.text(format!("{name}.amplitude"), &a.amplitude, &b.amplitude);
    // Blocks given in the project file or a table: matched by event and position.
    for ev in events(a, b, "given") {
        let xs: Vec<_> = a
            .blocks
            .iter()
            .filter(|k| k.origin == "given" && k.event == ev)
            .collect();
        let ys: Vec<_> = b
            .blocks
            .iter()
            .filter(|k| k.origin == "given" && k.event == ev)
            .collect();
        let at = format!("{name}.loading[{ev}]");
        if xs.is_empty() || ys.is_empty() {
            c.value(
                format!("{at}.blocks"),
                Value::from(xs.len()),
                Value::from(ys.len()),
            );
            continue;
        }
        for (i, (x, y)) in xs.iter().zip(&ys).enumerate() {
            let p = format!("{at}.block[{}]", i + 1);
            if x.max_mpa.is_some() && y.max_mpa.is_some() {
                // σmax and σmin given (or a mean): the range follows from them
                c.opt(format!("{p}.max_mpa"), x.max_mpa, y.max_mpa);
                c.opt(format!("{p}.min_mpa"), x.min_mpa, y.min_mpa);
            } else {
                c.num(format!("{p}.range_mpa"), x.range_mpa, y.range_mpa);
                c.opt(format!("{p}.max_mpa"), x.max_mpa, y.max_mpa);
                c.opt(format!("{p}.min_mpa"), x.min_mpa, y.min_mpa);
            }
            c.num(
                format!("{p}.cycles_per_year"),
                x.cycles_per_year,
                y.cycles_per_year,
            );
        }
        c.value(
            format!("{at}.blocks"),
            Value::from(xs.len()),
            Value::from(ys.len()),
        );
    }
    // Counted series: matched by event; the file by its SHA-256.
    let mut evs: Vec<&str> = Vec::new();
    for r in a.counted.iter().chain(&b.counted) {
        if !evs.contains(&r.event.as_str()) {
            evs.push(&r.event);
        }
    }
    let hash = |files: &[crate::results::SeriesFileInfo], f: &str| {
        files
            .iter()
            .find(|s| s.file == f)
            .map(|s| Value::from(s.sha256.as_str()))
            .unwrap_or(Value::Null)
    };
    for ev in evs {
        let x = a.counted.iter().find(|r| r.event == ev);
        let y = b.counted.iter().find(|r| r.event == ev);
        let at = format!("{name}.series[{ev}]");
        let (Some(x), Some(y)) = (x, y) else {
            c.value(
                format!("{at}.file"),
                x.map(|r| Value::from(r.file.as_str())).into(),
                y.map(|r| Value::from(r.file.as_str())).into(),
            );
            continue;
        };
        c.text(format!("{at}.file"), &x.file, &y.file);
        c.value(
            format!("{at}.sha256"),
            hash(old_files, &x.file),
            hash(new_files, &y.file),
        );
        c.text(format!("{at}.column"), &x.column, &y.column);
        c.text(format!("{at}.unit"), &x.unit, &y.unit);
        c.num(format!("{at}.scale"), x.scale, y.scale);
        c.opt(format!("{at}.modulus_mpa"), x.modulus_mpa, y.modulus_mpa);
        c.num(format!("{at}.gate_mpa"), x.gate_mpa, y.gate_mpa);
        c.text(format!("{at}.residue"), &x.residue, &y.residue);
        c.num(
            format!("{at}.repeats_per_year"),
            x.repeats_per_year,
            y.repeats_per_year,
        );
        c.num(
            format!("{at}.bin_width_mpa"),
            x.bin_width_mpa,
            y.bin_width_mpa,
        );
        c.value(
            format!("{at}.samples"),
            Value::from(x.samples),
            Value::from(y.samples),
        );
    }
}

fn detail_results(o: &DetailResult, d: &DetailResult) -> Vec<Change> {
    let mut c = Changes(Vec::new());
    c.value("status", status_value(o.status), status_value(d.status));
    c.num("utilisation", o.utilisation, d.utilisation);
    c.num("damage", o.damage, d.damage);
    c.opt("life_years", o.life_years, d.life_years);
    c.opt("reserve_factor", o.reserve_factor, d.reserve_factor);
    c.opt(
        "required_category_mpa",
        o.required_category,
        d.required_category,
    );
    c.text("governing_check", &o.governing_check, &d.governing_check);
    for name in component_names(&o.components, &d.components) {
        let a = o.components.iter().find(|k| k.component == name);
        let b = d.components.iter().find(|k| k.component == name);
        if let (Some(a), Some(b)) = (a, b) {
            c.num(
                format!("{name}.design_category_mpa"),
                a.design_category_mpa,
                b.design_category_mpa,
            );
            c.num(format!("{name}.damage"), a.damage, b.damage);
            c.num(
                format!("{name}.equivalent_range_mpa"),
                a.equivalent_range_mpa,
                b.equivalent_range_mpa,
            );
        }
    }
    c.0
}

/// A value as shown in the table and the CSV: numbers short, strings as they are,
/// `null` as "none".
pub fn shown(v: &Value) -> String {
    match v {
        Value::Null => "none".into(),
        Value::String(s) => s.clone(),
        Value::Number(n) => match n.as_f64() {
            Some(x) if n.is_f64() => crate::files::text::data_num(x),
            _ => n.to_string(),
        },
        other => other.to_string(),
    }
}

/// A shorter form for tables: hashes cut to 12 digits, numbers to 4 decimals (or 5
/// significant digits in exponent form when very large or small).
pub fn cell(item: &str, v: &Value) -> String {
    match v {
        Value::String(s) if item.ends_with("sha256") => super::short_hash(s).to_string(),
        Value::String(s) if item == "status" => s.to_uppercase(),
        Value::Number(n) if n.is_f64() => {
            let x = n.as_f64().unwrap_or(f64::NAN);
            if x != 0.0 && (x.abs() >= 1e6 || x.abs() < 1e-3) {
                format!("{x:.4e}")
            } else {
                let s = format!("{x:.4}");
                let s = s.trim_end_matches('0').trim_end_matches('.');
                s.to_string()
            }
        }
        other => shown(other),
    }
}

fn side_line(s: &DiffSide) -> String {
    format!(
        "{} rev {} of {} ({} {}, sha256 {})",
        s.reference,
        s.revision,
        s.date,
        s.kind,
        s.file,
        super::short_hash(&s.project_sha256)
    )
}

/// The report as a text table for the terminal.
pub fn render(r: &DiffReport) -> String {
    use crate::files::text::one_line;
    use std::fmt::Write;
    let mut t = String::new();
    let _ = writeln!(t, "old  {}", one_line(&side_line(&r.old)));
    let _ = writeln!(t, "new  {}", one_line(&side_line(&r.new)));
    let width = |lists: &[&[Change]]| {
        lists
            .iter()
            .flat_map(|l| l.iter())
            .map(|c| c.item.chars().count())
            .max()
            .unwrap_or(0)
    };
    let rows = |t: &mut String, kind: &str, list: &[Change], w: usize| {
        for c in list {
            let _ = writeln!(
                t,
                "    {kind:<6}  {:<w$}  {} -> {}",
                one_line(&c.item),
                one_line(&cell(&c.item, &c.old)),
                one_line(&cell(&c.item, &c.new)),
            );
        }
    };
    if !r.project.is_empty() {
        let _ = writeln!(t, "\nproject ({} changes)", r.project.len());
        rows(&mut t, "input", &r.project, width(&[&r.project]));
    }
    let onlys = |t: &mut String, title: &str, list: &[DetailOnly]| {
        if list.is_empty() {
            return;
        }
        let _ = writeln!(t, "\n{title} ({})", list.len());
        for d in list {
            let _ = writeln!(
                t,
                "  {}  {}  utilisation {}  {}",
                one_line(&d.id),
                d.status.as_str(),
                cell("", &num(d.utilisation)),
                one_line(&d.location)
            );
        }
    };
    onlys(&mut t, "added details", &r.added);
    onlys(&mut t, "removed details", &r.removed);
    if !r.changed.is_empty() {
        let _ = writeln!(t, "\nchanged details ({})", r.changed.len());
    }
    for d in &r.changed {
        let mv = match d.status_move {
            StatusMove::Same => "",
            StatusMove::Better => "  (better)",
            StatusMove::Worse => "  (WORSE)",
        };
        let _ = writeln!(
            t,
            "  {}  {} -> {}{mv}  {}",
            one_line(&d.id),
            d.old_status.as_str(),
            d.new_status.as_str(),
            one_line(&d.location)
        );
        let w = width(&[&d.inputs, &d.results]);
        rows(&mut t, "input", &d.inputs, w);
        rows(&mut t, "result", &d.results, w);
    }
    let _ = writeln!(
        t,
        "\n{} added, {} removed, {} changed, {} unchanged",
        r.added.len(),
        r.removed.len(),
        r.changed.len(),
        r.unchanged
    );
    if r.worse.is_empty() {
        let _ = writeln!(t, "no status got worse");
    } else {
        let _ = writeln!(
            t,
            "STATUS WORSE: {} (a status got worse, or an added detail does not pass)",
            one_line(&r.worse.join(", "))
        );
    }
    t
}

/// A CSV cell: as [`shown`], absent as an empty cell.
fn csv_value(v: &Value) -> String {
    match v {
        Value::Null => String::new(),
        other => shown(other),
    }
}

/// The CSV header of [`csv_rows`].
pub const CSV_HEADER: [&str; 6] = [
    "detail_id",
    "change",
    "item",
    "old_value",
    "new_value",
    "status_move",
];

/// One row per change: `change` is `project`, `added`, `removed`, `input` or `result`;
/// an added or removed detail gives its status and utilisation as two rows.
pub fn csv_rows(r: &DiffReport) -> Vec<[String; 6]> {
    let mut rows = Vec::new();
    for c in &r.project {
        rows.push([
            String::new(),
            "project".into(),
            c.item.clone(),
            csv_value(&c.old),
            csv_value(&c.new),
            String::new(),
        ]);
    }
    for (kind, list) in [("added", &r.added), ("removed", &r.removed)] {
        for d in list {
            let (status, util) = (
                shown(&status_value(d.status)),
                crate::files::text::data_num(d.utilisation),
            );
            let (so, sn, uo, un) = if kind == "added" {
                (String::new(), status, String::new(), util)
            } else {
                (status, String::new(), util, String::new())
            };
            rows.push([
                d.id.clone(),
                kind.into(),
                "status".into(),
                so,
                sn,
                String::new(),
            ]);
            rows.push([
                d.id.clone(),
                kind.into(),
                "utilisation".into(),
                uo,
                un,
                String::new(),
            ]);
        }
    }
    for d in &r.changed {
        let mv = shown(&serde_json::to_value(d.status_move).unwrap_or(Value::Null));
        for (kind, list) in [("input", &d.inputs), ("result", &d.results)] {
            for c in list {
                rows.push([
                    d.id.clone(),
                    kind.into(),
                    c.item.clone(),
                    csv_value(&c.old),
                    csv_value(&c.new),
                    mv.clone(),
                ]);
            }
        }
    }
    rows
}
