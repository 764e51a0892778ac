//! Report stage: the calculation package. Reads only the results model: Tera templates
//! render Typst source, plots are SVG written in Rust, and the external `typst` program
//! compiles the PDF inside a temporary build folder.

pub mod changes;
pub mod fit_sheet;
mod glyph_ranges;
pub mod glyphs;
pub mod plots;
pub mod population;
pub mod sheets;
pub mod templates;
pub mod typst;

use std::path::{Path, PathBuf};

use serde_json::{json, Value};

use crate::error::Error;
use crate::results::Results;
use population::Population;

/// The typst-cli version the templates are written for (major.minor must match).
pub const TYPST_VERSION: &str = "0.15.1";

/// How to produce the package.
#[derive(Debug, Clone, Default)]
pub struct ReportOptions {
    /// Output PDF; default from the project reference and revision.
    pub output: Option<PathBuf>,
    /// Folder of templates that replace the built-in ones by file name.
    pub templates: Option<PathBuf>,
    /// Keep the generated Typst source and plots beside the PDF.
    pub keep_source: bool,
    /// Produce PDF/A-2b.
    pub pdf_a: bool,
    /// The typst program to run.
    pub typst: Option<PathBuf>,
    /// Fixed creation time (UNIX seconds); default SOURCE_DATE_EPOCH or the project date.
    pub creation_timestamp: Option<i64>,
    /// Time allowed to typst; default [`typst::DEFAULT_TIMEOUT`].
    pub timeout: Option<std::time::Duration>,
    /// The run's inputs, which the PDF and the kept source must not replace.
    pub inputs: crate::files::write::Inputs,
    /// Which details get a full sheet (all are in the summary table).
    pub sheets: sheets::SheetSelection,
    /// The diff against an earlier revision (`--previous`): adds the "changes since"
    /// section and marks changed values.
    pub previous: Option<crate::checker::diff::DiffReport>,
    /// The checker's review held against these results (`report --review`).
    pub review: Option<crate::checker::review::ReviewRecord>,
    /// Files the PDF carries as attachments (the results model, the project file, small
    /// series and table files), and larger ones named by hash only.
    pub attachments: Vec<Attachment>,
}

/// A file embedded in the PDF (or, with no data, only named with its hash).
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct Attachment {
    /// Name inside the PDF: [`RESULTS_ATTACHMENT`], or `project/` and the path of a
    /// project file relative to the project's folder.
    pub name: String,
    pub description: String,
    pub mime_type: String,
    /// `data` (the results model) or `source` (an input file).
    pub relationship: String,
    pub sha256: String,
    pub bytes: u64,
    /// Embedded; false for a file over [`MAX_ATTACHED_BYTES`] named by hash only.
    pub attached: bool,
    #[serde(skip)]
    pub data: Vec<u8>,
}

/// Name of the attached results model.
pub const RESULTS_ATTACHMENT: &str = "seamlife-results.json";
/// Folder of the attached project files inside the PDF's attachment names.
pub const PROJECT_PREFIX: &str = "project/";
/// Series and table files up to this size are attached; larger ones are named by hash.
pub const MAX_ATTACHED_BYTES: u64 = 2 * 1024 * 1024;

impl Attachment {
    /// An input file, attached when small enough.
    pub fn input(name: String, data: Vec<u8>, description: String, mime_type: &str) -> Attachment {
        let bytes = data.len() as u64;
        let attached = bytes <= MAX_ATTACHED_BYTES;
        Attachment {
            name,
            description,
            mime_type: mime_type.into(),
            relationship: "source".into(),
            sha256: crate::files::sha256_hex(&data),
            bytes,
            attached,
            data: if attached { data } else { Vec::new() },
        }
    }

    /// The results model as `assess --json` writes it.
    pub fn results(r: &Results) -> Result<Attachment, Error> {
        let mut data = Vec::new();
        crate::cli::output::write_json(&mut data, r)
            .map_err(|e| Error::Internal(format!("results model as JSON: {e}")))?;
        Ok(Attachment {
            name: RESULTS_ATTACHMENT.into(),
            description:
                "seamlife results model (assess --json); seamlife verify PACKAGE.pdf checks it"
                    .into(),
            mime_type: "application/json".into(),
            relationship: "data".into(),
            sha256: crate::files::sha256_hex(&data),
            bytes: data.len() as u64,
            attached: true,
            data,
        })
    }
}

/// The generated files of one package, before compilation.
#[derive(Debug, Clone)]
pub struct BuildFiles {
    /// (relative path, contents); `main.typ` is the entry point.
    pub files: Vec<(String, Vec<u8>)>,
}

/// Default PDF name: `<reference>-rev<revision>-fatigue.pdf`, with only safe characters.
pub fn default_output_name(r: &Results) -> String {
    let clean = |s: &str| -> String {
        s.chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.' {
                    c
                } else {
                    '_'
                }
            })
            .collect()
    };
    format!(
        "{}-rev{}-fatigue.pdf",
        clean(&r.project.reference),
        clean(&r.project.revision)
    )
}

/// Days since 1970-01-01 of a civil date (proleptic Gregorian; common practice).
fn days_from_civil(y: i64, m: i64, d: i64) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = if y >= 0 { y } else { y - 399 } / 400;
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146097 + doe - 719468
}

/// Latest creation time accepted: 9999-12-31T23:59:59Z, the last second a four-digit
/// year can name (PDF dates have four-digit years, ISO 32000-1 7.9.4, from memory).
pub const MAX_TIMESTAMP: i64 = 253_402_300_799;

/// The creation time written into the PDF: SOURCE_DATE_EPOCH when set, else the
/// project date at 00:00 UTC. Never the clock, so two runs give the same bytes. A
/// SOURCE_DATE_EPOCH that is not a whole number of seconds from 1970 to 9999 is an
/// error (the reproducible-builds convention: a malformed value stops the build); an
/// empty one counts as unset.
pub fn creation_timestamp(r: &Results) -> Result<i64, Error> {
    creation_timestamp_for(&r.project.date)
}

/// SOURCE_DATE_EPOCH when set, else the given YYYY-MM-DD date at 00:00 UTC.
pub fn creation_timestamp_for(date: &str) -> Result<i64, Error> {
    if let Some(raw) = std::env::var_os("SOURCE_DATE_EPOCH") {
        let text = raw.to_string_lossy();
        let t = text.trim();
        if !t.is_empty() {
            return parse_epoch(t);
        }
    }
    let p: Vec<i64> = date.split('-').filter_map(|x| x.parse().ok()).collect();
    Ok(match p.as_slice() {
        [y, m, d] => days_from_civil(*y, *m, *d) * 86_400,
        _ => 0,
    })
}

/// A SOURCE_DATE_EPOCH value: whole seconds from 0 to [`MAX_TIMESTAMP`].
pub fn parse_epoch(t: &str) -> Result<i64, Error> {
    let bad = |msg: String| {
        Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::InvalidValue,
                crate::error::Location::file(Path::new("SOURCE_DATE_EPOCH")),
                msg,
            )
            .hint("set SOURCE_DATE_EPOCH to whole seconds since 1970-01-01 00:00 UTC (e.g. 1795132800), or unset it to date the PDF by the project date"),
        )
    };
    let shown = crate::files::clip(t);
    match t.parse::<i64>() {
        Ok(v) if v < 0 => Err(bad(format!(
            "{shown} is before 1970-01-01; the PDF creation time must not be negative"
        ))),
        Ok(v) if v > MAX_TIMESTAMP => Err(bad(format!("{shown} is after the year 9999"))),
        Ok(v) => Ok(v),
        Err(_) => Err(bad(format!("{shown} is not a whole number of seconds"))),
    }
}

/// Everything the templates see: the results model as `r`, plus file names of plots.
/// What the package shows besides the results model: the changes since an earlier
/// revision, the checker's review and the files attached to the PDF.
#[derive(Debug, Clone, Default)]
pub struct Extras {
    pub previous: Option<crate::checker::diff::DiffReport>,
    pub review: Option<crate::checker::review::ReviewRecord>,
    pub attachments: Vec<Attachment>,
}

/// `changes` holds the changes since an earlier revision (`null` without one),
/// `review` the checker's review and `attachments` the attached files (from `extras`).
pub fn template_context(
    r: &Results,
    plot_files: &PlotFiles,
    sheets: &Sheets,
    population: &Population,
    changes: Option<&changes::ChangesContext>,
    extras: &Extras,
) -> Value {
    json!({
        "r": r,
        "summary_rows": SummaryRow::all(r, sheets),
        "plots": plot_files,
        "sheets": sheets,
        "population": population,
        "changes": changes,
        "review": extras.review,
        "attachments": extras.attachments,
        "meta": {
            "short_hash": &r.input.sha256[..r.input.sha256.len().min(12)],
            "typst_version": TYPST_VERSION,
            "detail_count": r.details.len(),
        },
    })
}

/// One line of the summary table: the printed fields of a detail, in the table's
/// order (highest utilisation first; equal ones in project order). Built here so
/// that the template neither sorts nor copies whole details (a 10 000-detail table
/// took seconds that way).
#[derive(Debug, Clone, serde::Serialize)]
pub struct SummaryRow<'a> {
    /// Index of the detail in `r.details`.
    pub index: usize,
    pub id: &'a str,
    pub location: &'a str,
    /// The category of each component, in the order of the results.
    pub categories: Vec<SummaryCategory<'a>>,
    pub governing_check: &'a str,
    pub damage: f64,
    pub utilisation: f64,
    pub life_years: Option<f64>,
    pub reserve_factor: Option<f64>,
    pub status: crate::results::Status,
    /// The detail has a full sheet.
    pub sheet: bool,
}

/// A component's category in a summary row.
#[derive(Debug, Clone, serde::Serialize)]
pub struct SummaryCategory<'a> {
    pub component: &'a str,
    pub category_mpa: f64,
}

impl SummaryRow<'_> {
    /// The rows of every detail, highest utilisation first (a stable sort, so equal
    /// utilisations keep the project order, as the utilisation chart has them).
    pub fn all<'a>(r: &'a Results, sheets: &Sheets) -> Vec<SummaryRow<'a>> {
        let mut order: Vec<usize> = (0..r.details.len()).collect();
        order.sort_by(|&a, &b| {
            r.details[b]
                .utilisation
                .total_cmp(&r.details[a].utilisation)
        });
        order
            .into_iter()
            .map(|i| {
                let d = &r.details[i];
                SummaryRow {
                    index: i,
                    id: &d.id,
                    location: &d.location,
                    categories: d
                        .components
                        .iter()
                        .map(|c| SummaryCategory {
                            component: &c.component,
                            category_mpa: c.category_mpa,
                        })
                        .collect(),
                    governing_check: &d.governing_check,
                    damage: d.damage,
                    utilisation: d.utilisation,
                    life_years: d.life_years,
                    reserve_factor: d.reserve_factor,
                    status: d.status,
                    sheet: sheets.has_sheet.get(i).copied().unwrap_or(false),
                }
            })
            .collect()
    }
}

/// The details with a full sheet: their indices in project order, the rule in words,
/// and per detail whether it has one (for the summary table's mark).
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct Sheets {
    pub indices: Vec<usize>,
    pub rule: String,
    pub count: usize,
    /// Ids of the details with a sheet (the summary table marks them).
    pub ids: Vec<String>,
    #[serde(skip)]
    pub has_sheet: Vec<bool>,
}

impl Sheets {
    /// Every detail with a sheet.
    pub fn all(r: &Results) -> Sheets {
        Sheets::of(
            r,
            (0..r.details.len()).collect(),
            "every detail has a sheet".into(),
        )
    }

    pub fn of(r: &Results, indices: Vec<usize>, rule: String) -> Sheets {
        let mut has_sheet = vec![false; r.details.len()];
        for &i in &indices {
            has_sheet[i] = true;
        }
        Sheets {
            count: indices.len(),
            ids: indices.iter().map(|&i| r.details[i].id.clone()).collect(),
            indices,
            rule,
            has_sheet,
        }
    }
}

/// Plot file names, by detail index and component (empty for a detail without sheet).
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct PlotFiles {
    pub utilisation: String,
    /// The population figures (empty names when the section is not shown).
    pub distribution: String,
    pub by_type: String,
    pub by_group: String,
    /// details[i] -> one entry per component, in the order of the results.
    pub details: Vec<Vec<ComponentPlots>>,
}

#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct ComponentPlots {
    pub sn: String,
    /// One (histogram, matrix) pair per counted record of the component.
    pub counted: Vec<CountedPlots>,
}

#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct CountedPlots {
    pub histogram: String,
    pub matrix: String,
}

/// Render plots, templates and the echoed project file into build files.
pub fn build_files(r: &Results, template_dir: Option<&Path>) -> Result<BuildFiles, Error> {
    build_files_for(r, template_dir, &Sheets::all(r))
}

/// Build files with sheets for the chosen details only (figures drawn for those only).
pub fn build_files_for(
    r: &Results,
    template_dir: Option<&Path>,
    sheets: &Sheets,
) -> Result<BuildFiles, Error> {
    build_files_with(r, template_dir, sheets, &Extras::default())
}

/// [`build_files_for`] with the diff against an earlier revision, the review and the
/// attachments.
pub fn build_files_with(
    r: &Results,
    template_dir: Option<&Path>,
    sheets: &Sheets,
    extras: &Extras,
) -> Result<BuildFiles, Error> {
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    let mut pf = PlotFiles {
        utilisation: "plots/utilisation.svg".into(),
        details: Vec::with_capacity(r.details.len()),
        ..PlotFiles::default()
    };
    files.push((
        pf.utilisation.clone(),
        plots::utilisation_chart(&r.details).into_bytes(),
    ));
    let population = Population::of(r);
    if population.shown {
        pf.distribution = "plots/population-distribution.svg".into();
        files.push((
            pf.distribution.clone(),
            plots::utilisation_distribution(&population.bins, population.details).into_bytes(),
        ));
        pf.by_type = "plots/population-by-type.svg".into();
        files.push((
            pf.by_type.clone(),
            plots::utilisation_spread(
                &spread_title("detail type", &population.by_type, population.types_total),
                &population.by_type,
            )
            .into_bytes(),
        ));
        if !population.by_group.is_empty() {
            pf.by_group = "plots/population-by-group.svg".into();
            files.push((
                pf.by_group.clone(),
                plots::utilisation_spread(
                    &spread_title("group", &population.by_group, population.groups_total),
                    &population.by_group,
                )
                .into_bytes(),
            ));
        }
    }
    for (i, d) in r.details.iter().enumerate() {
        let mut comps = Vec::new();
        if !sheets.has_sheet[i] {
            pf.details.push(comps);
            continue;
        }
        for c in &d.components {
            let sn = format!("plots/d{i:05}-{}-sn.svg", c.component);
            files.push((
                sn.clone(),
                plots::sn_diagram(c, r.basis.design_life_years).into_bytes(),
            ));
            let mut counted = Vec::new();
            for (k, rec) in c.counted.iter().enumerate() {
                let h = format!("plots/d{i:05}-{}-rec{k}-hist.svg", c.component);
                let m = format!("plots/d{i:05}-{}-rec{k}-matrix.svg", c.component);
                files.push((h.clone(), plots::histogram(rec).into_bytes()));
                files.push((m.clone(), plots::matrix_heatmap(rec).into_bytes()));
                counted.push(CountedPlots {
                    histogram: h,
                    matrix: m,
                });
            }
            comps.push(ComponentPlots { sn, counted });
        }
        pf.details.push(comps);
    }
    let changes = extras.previous.as_ref().map(changes::context);
    let ctx = template_context(r, &pf, sheets, &population, changes.as_ref(), extras);
    let mut main = templates::render(&ctx, template_dir)?;
    // The attachments are added after the templates, so a replaced template cannot
    // drop them; each file's bytes come from the build folder.
    main.push_str("\n// seamlife: attached files\n");
    for (k, a) in extras.attachments.iter().filter(|a| a.attached).enumerate() {
        let file = format!("attach/{k:04}.bin");
        main.push_str(&format!(
            "#pdf.attach({}, read({}, encoding: none), relationship: {}, mime-type: {}, description: {})\n",
            templates::typst_string(&a.name),
            templates::typst_string(&file),
            templates::typst_string(&a.relationship),
            templates::typst_string(&a.mime_type),
            templates::typst_string(&a.description),
        ));
        files.push((file, a.data.clone()));
    }
    files.push(("main.typ".into(), main.into_bytes()));
    files.push(("project.yaml".into(), r.input.text.clone().into_bytes()));
    Ok(BuildFiles { files })
}

/// Title of a by-type or by-group figure, saying when only the highest rows are shown.
fn spread_title(what: &str, rows: &[population::PopulationRow], total: usize) -> String {
    if rows.len() < total {
        format!(
            "Utilisation by {what}: the {} highest of {total}",
            rows.len()
        )
    } else {
        format!("Utilisation by {what}")
    }
}

/// Produce the PDF package; returns the path written.
pub fn write_report(r: &Results, opts: &ReportOptions) -> Result<PathBuf, Error> {
    let c = prepare_report(r, opts)?;
    let out = c.target().to_path_buf();
    c.commit()?;
    Ok(out)
}

/// Produce the PDF package up to the last step: the PDF waits beside its place until
/// [`typst::Compiled::commit`], so a caller can still fail (and leave no PDF) after
/// typesetting.
pub fn prepare_report(r: &Results, opts: &ReportOptions) -> Result<typst::Compiled, Error> {
    let ts = match opts.creation_timestamp {
        Some(t) => t,
        None => creation_timestamp(r)?,
    };
    let tool = typst::find(opts.typst.as_deref())?;
    let out = opts
        .output
        .clone()
        .unwrap_or_else(|| PathBuf::from(default_output_name(r)));
    // Refuse a bad output before the work of typesetting.
    crate::files::write::check_target(&out, &opts.inputs)?;
    let (indices, rule) = opts.sheets.select(r)?;
    // PDF/A-2 cannot carry attachments (ISO 19005-2 6.8 allows only PDF/A files inside;
    // typst refuses them there).
    let extras = Extras {
        previous: opts.previous.clone(),
        review: opts.review.clone(),
        attachments: if opts.pdf_a {
            Vec::new()
        } else {
            opts.attachments.clone()
        },
    };
    let build = build_files_with(
        r,
        opts.templates.as_deref(),
        &Sheets::of(r, indices, rule),
        &extras,
    )?;
    if let Some(sig) = crate::files::cleanup::interrupted() {
        return Err(Error::Interrupted(sig));
    }
    let copts = typst::CompileOptions {
        creation_timestamp: ts,
        pdf_a: opts.pdf_a,
        keep_source: opts.keep_source,
        user_templates: opts.templates.is_some(),
        timeout: opts.timeout.unwrap_or(typst::DEFAULT_TIMEOUT),
        inputs: opts.inputs.clone(),
    };
    typst::compile(&tool, &build, &out, &copts)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_days() {
        // 2026-11-20 is 20777 days after 1970-01-01 (common practice, proleptic Gregorian)
        assert_eq!(days_from_civil(2026, 11, 20), 20777);
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 11017);
    }
}
