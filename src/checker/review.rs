//! The checker's review file: who reviewed which project file (by its SHA-256), a
//! verdict and remarks per detail, general remarks, and the `seamlife verify --json`
//! outputs cited as evidence. [`read_review`] parses it strictly (unknown keys refused,
//! errors at line:column); [`check_review`] holds it against the project's details and
//! input hash and gives the serialisable [`ReviewRecord`] that the report and `assess`
//! show.

use std::collections::{BTreeMap, HashSet};
use std::path::{Component, Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::files::locate::{self, YamlPath};

/// The review file format version this build reads.
pub const REVIEW_VERSION: u32 = 1;

/// Review files larger than this are refused (a verdict for each of many thousand
/// details is well below it).
pub const MAX_REVIEW_BYTES: u64 = 16 * 1024 * 1024;

/// Evidence files (verify reports) larger than this are refused.
pub const MAX_EVIDENCE_BYTES: u64 = 256 * 1024 * 1024;

/// Longest remark accepted, in characters (a remark is a paragraph, not a document).
pub const MAX_REMARK_CHARS: usize = 4000;

/// A verdict on one detail.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    Accepted,
    /// The checker asks a question the engineer must answer.
    Query,
    NotAccepted,
}

impl Verdict {
    pub fn as_str(self) -> &'static str {
        match self {
            Verdict::Accepted => "accepted",
            Verdict::Query => "query",
            Verdict::NotAccepted => "not accepted",
        }
    }

    /// A query or a detail not accepted is open: the engineer must act on it.
    pub fn is_open(self) -> bool {
        self != Verdict::Accepted
    }
}

/// The review file as written.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ReviewFile {
    /// Format version of the review file.
    pub seamlife_review: u32,
    pub reviewer: String,
    pub organisation: String,
    /// Date of the review, YYYY-MM-DD.
    pub date: String,
    /// SHA-256 of the project file the review was written against.
    pub project_sha256: String,
    /// Reference and revision reviewed, as the reviewer states them (shown, not checked).
    #[serde(default)]
    pub reference: Option<String>,
    #[serde(default)]
    pub revision: Option<String>,
    /// General remarks, one paragraph each.
    #[serde(default)]
    pub remarks: Vec<String>,
    #[serde(default)]
    pub details: Vec<DetailReview>,
    #[serde(default)]
    pub evidence: Vec<EvidenceEntry>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct DetailReview {
    pub id: String,
    pub verdict: Verdict,
    /// Required for a query or a detail not accepted.
    #[serde(default)]
    pub remarks: Option<String>,
}

/// A `seamlife verify --json` output cited by path (relative to the review file) and
/// SHA-256.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct EvidenceEntry {
    pub file: String,
    pub sha256: String,
    /// What the reviewer says of it.
    #[serde(default)]
    pub note: Option<String>,
}

/// A review file as read: the parsed file, its text (for locating keys), name and hash.
#[derive(Debug, Clone)]
pub struct Review {
    pub path: PathBuf,
    pub text: String,
    pub sha256: String,
    pub file: ReviewFile,
}

/// One verdict, as shown.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct VerdictRecord {
    pub id: String,
    /// `accepted`, `query` or `not-accepted`.
    pub verdict: Verdict,
    /// `accepted`, `query` or `not accepted`.
    pub verdict_text: String,
    pub open: bool,
    pub remarks: Option<String>,
}

/// What a cited verify report says.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct EvidenceRecord {
    pub file: String,
    pub sha256: String,
    pub note: Option<String>,
    /// `verify`, or `diff` (then `results_file` is the old side, `project_file` the new
    /// one, `values_differing` the changed details and `inputs_differing` the project
    /// changes).
    pub kind: String,
    /// The results model and project that were re-run.
    pub results_file: String,
    pub project_file: String,
    /// The seamlife version that re-ran them.
    pub tool_version: String,
    pub rtol: f64,
    pub agree: bool,
    pub values_compared: usize,
    pub values_differing: usize,
    pub inputs_differing: usize,
    /// One line: what was re-run, with which version, and the outcome.
    pub summary: String,
}

/// Verdict counts over the project's details.
#[derive(Debug, Clone, Default, Serialize, Deserialize, PartialEq)]
pub struct VerdictCounts {
    pub accepted: usize,
    pub query: usize,
    pub not_accepted: usize,
    /// Details of the project the review gives no verdict for.
    pub not_reviewed: usize,
}

/// The review held against the project: what the report and `assess --review` show.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ReviewRecord {
    /// File name of the review file (no folders).
    pub file_name: String,
    pub sha256: String,
    pub reviewer: String,
    pub organisation: String,
    pub date: String,
    pub reference: Option<String>,
    pub revision: Option<String>,
    /// The project hash the review was written against, and whether it is the one of
    /// the project assessed now.
    pub project_sha256: String,
    pub current: bool,
    pub remarks: Vec<String>,
    /// Verdicts by detail id (details of the project only).
    pub details: BTreeMap<String, VerdictRecord>,
    /// Verdicts in the project's detail order.
    pub verdicts: Vec<VerdictRecord>,
    /// Open verdicts (queries, then details not accepted), in the project's order.
    pub open: Vec<VerdictRecord>,
    pub counts: VerdictCounts,
    pub evidence: Vec<EvidenceRecord>,
    /// Why the review does not fit the project (stale hash, unknown details), when
    /// accepted with `--allow-stale`; the package prints them.
    pub warnings: Vec<String>,
}

/// Read and parse a review file (size-limited, regular files only, strict keys).
pub fn read_review(path: &Path) -> Result<Review, Error> {
    let text = crate::files::read_text_bounded(
        path,
        MAX_REVIEW_BYTES,
        "review files",
        "a review file holds verdicts and remarks; cite long evidence as files",
    )?;
    parse_review(path, text)
}

/// Parse the text of a review file.
pub fn parse_review(path: &Path, text: String) -> Result<Review, Error> {
    if text.trim().is_empty() {
        return Err(InputError::new(
            InputErrorKind::MissingField,
            Location::file(path),
            "review file is empty",
        )
        .hint("see README.md, \"Recording the review\", for the keys of a review file")
        .into());
    }
    crate::files::yaml::check_controls(path, &text)?;
    let file: ReviewFile = crate::files::yamlde::from_str(&text)
        .map_err(|e| crate::files::located_yaml_error(path, &text, e.to_string(), e.place))?;
    let review = Review {
        path: path.to_path_buf(),
        sha256: crate::files::sha256_hex(text.as_bytes()),
        text,
        file,
    };
    let problems = shape_problems(&review.file);
    if problems.is_empty() {
        return Ok(review);
    }
    Err(Error::Inputs(
        problems
            .into_iter()
            .map(|(p, kind, msg, hint)| {
                InputError::new(kind, review.place(&p), format!("{p}: {msg}")).hint(hint)
            })
            .collect(),
    ))
}

type Problem = (YamlPath, InputErrorKind, String, String);

fn is_date(s: &str) -> bool {
    let b = s.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return false;
    }
    let num = |r: std::ops::Range<usize>| s.get(r).and_then(|x| x.parse::<u32>().ok());
    matches!((num(0..4), num(5..7), num(8..10)), (Some(_), Some(m), Some(d)) if (1..=12).contains(&m) && (1..=31).contains(&d))
        && s.bytes()
            .enumerate()
            .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit())
}

fn is_sha256(s: &str) -> bool {
    s.len() == 64
        && s.bytes()
            .all(|c| c.is_ascii_digit() || (b'a'..=b'f').contains(&c))
}

/// Checks of the file on its own: version, dates, hashes, texts, duplicate ids,
/// remarks on open verdicts.
fn shape_problems(f: &ReviewFile) -> Vec<Problem> {
    let root = YamlPath::root();
    let mut out: Vec<Problem> = Vec::new();
    let mut bad =
        |p: YamlPath, kind, msg: String, hint: &str| out.push((p, kind, msg, hint.into()));
    if f.seamlife_review != REVIEW_VERSION {
        bad(
            root.key("seamlife_review"),
            InputErrorKind::UnsupportedVersion,
            format!(
                "review file version {} is not read by this installation (it reads {REVIEW_VERSION})",
                f.seamlife_review
            ),
            "write `seamlife_review: 1`",
        );
    }
    for (key, v) in [("reviewer", &f.reviewer), ("organisation", &f.organisation)] {
        if v.trim().is_empty() {
            bad(
                root.key(key),
                InputErrorKind::MissingField,
                format!("{key} is blank"),
                "name the checking engineer and the firm",
            );
        } else if v.chars().count() > 200 {
            bad(
                root.key(key),
                InputErrorKind::TooLong,
                format!(
                    "{key} is {} characters long; at most 200",
                    v.chars().count()
                ),
                "shorten it",
            );
        }
    }
    if !is_date(&f.date) {
        bad(
            root.key("date"),
            InputErrorKind::InvalidValue,
            format!(
                "`{}` is not a date YYYY-MM-DD",
                crate::files::shown(&f.date)
            ),
            "write the date of the review as e.g. 2026-11-27",
        );
    }
    if !is_sha256(&f.project_sha256) {
        bad(
            root.key("project_sha256"),
            InputErrorKind::InvalidValue,
            "is not a SHA-256 (64 lower-case hex digits)".into(),
            "copy the project file's SHA-256 from the package appendix or `sha256sum PROJECT.yaml`",
        );
    }
    for (i, r) in f.remarks.iter().enumerate() {
        if r.chars().count() > MAX_REMARK_CHARS {
            bad(
                root.key("remarks").index(i),
                InputErrorKind::TooLong,
                format!(
                    "remark is {} characters long; at most {MAX_REMARK_CHARS}",
                    r.chars().count()
                ),
                "split it into several remarks or cite a document",
            );
        }
    }
    let mut seen = HashSet::new();
    for (i, d) in f.details.iter().enumerate() {
        let p = root.key("details").index(i);
        if !seen.insert(d.id.as_str()) {
            bad(
                p.key("id"),
                InputErrorKind::DuplicateId,
                format!(
                    "detail `{}` has a second verdict",
                    crate::files::shown(&d.id)
                ),
                "give each detail one verdict; put all remarks on it in one entry",
            );
        }
        let remark = d.remarks.as_deref().map(str::trim).unwrap_or("");
        if d.verdict.is_open() && remark.is_empty() {
            bad(
                p.key("verdict"),
                InputErrorKind::MissingField,
                format!("a verdict `{}` needs remarks", d.verdict.as_str()),
                "say what the engineer must answer or change, under `remarks:`",
            );
        }
        if let Some(r) = &d.remarks {
            if r.chars().count() > MAX_REMARK_CHARS {
                bad(
                    p.key("remarks"),
                    InputErrorKind::TooLong,
                    format!(
                        "remarks are {} characters long; at most {MAX_REMARK_CHARS}",
                        r.chars().count()
                    ),
                    "shorten them or cite a document",
                );
            }
        }
    }
    for (i, e) in f.evidence.iter().enumerate() {
        let p = root.key("evidence").index(i);
        if !is_sha256(&e.sha256) {
            bad(
                p.key("sha256"),
                InputErrorKind::InvalidValue,
                "is not a SHA-256 (64 lower-case hex digits)".into(),
                "give `sha256sum` of the cited file",
            );
        }
        if !relative_inside(&e.file) {
            bad(
                p.key("file"),
                InputErrorKind::PathOutsideProject,
                format!(
                    "`{}` is not a path inside the review file's folder",
                    crate::files::shown(&e.file)
                ),
                "give the evidence file relative to the review file, without `..`",
            );
        }
    }
    out
}

/// A relative path of ordinary components only (no root, no `..`).
pub fn relative_inside(p: &str) -> bool {
    !p.is_empty()
        && Path::new(p)
            .components()
            .all(|c| matches!(c, Component::Normal(_) | Component::CurDir))
}

impl Review {
    /// Where a path of the file is, or the file itself.
    pub fn place(&self, p: &YamlPath) -> Location {
        match locate::locate(&self.text, std::slice::from_ref(p))[0] {
            Some((l, c)) => Location::at(&self.path, l, c),
            None => Location::file(&self.path),
        }
    }

    fn file_name(&self) -> String {
        self.path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default()
    }
}

/// Hold a review against the project's detail ids (in project order) and the SHA-256
/// of its project file. A verdict on a detail the project does not have, or a review
/// written against another project hash, is an error; with `allow_stale` each becomes
/// a warning in the record instead (a verdict on an unknown detail is then left out).
pub fn check_review(
    review: &Review,
    detail_ids: &[&str],
    project_sha256: &str,
    allow_stale: bool,
) -> Result<ReviewRecord, Error> {
    let f = &review.file;
    let mut errors = Vec::new();
    let mut warnings = Vec::new();
    let current = f.project_sha256 == project_sha256;
    if !current {
        let msg = format!(
            "the review was written against project SHA-256 {}…, the project assessed now has {}…",
            super::short_hash(&f.project_sha256),
            super::short_hash(project_sha256)
        );
        if allow_stale {
            warnings.push(format!(
                "STALE REVIEW: {msg}; the project changed after the review, so its verdicts may not apply to these results"
            ));
        } else {
            errors.push(
                InputError::new(
                    InputErrorKind::InvalidValue,
                    review.place(&YamlPath::root().key("project_sha256")),
                    format!("project_sha256: {msg}"),
                )
                .hint("review the current revision, or pass --allow-stale to print the review with a stale warning"),
            );
        }
    }
    let known: HashSet<&str> = detail_ids.iter().copied().collect();
    for (i, d) in f.details.iter().enumerate() {
        if known.contains(d.id.as_str()) {
            continue;
        }
        let near = crate::files::suggest(&d.id, detail_ids.iter().copied())
            .map(|s| format!("did you mean `{s}`? "))
            .unwrap_or_default();
        if allow_stale {
            warnings.push(format!(
                "the review gives a verdict on detail `{}`, which the project does not have; it is left out",
                crate::files::shown(&d.id)
            ));
        } else {
            errors.push(
                InputError::new(
                    InputErrorKind::UnknownDetail,
                    review.place(&YamlPath::root().key("details").index(i).key("id")),
                    format!(
                        "details[{i}].id: the project has no detail `{}`",
                        crate::files::shown(&d.id)
                    ),
                )
                .hint(format!(
                    "{near}give the id of a detail of the project (`seamlife assess PROJECT.yaml` lists them), or pass --allow-stale"
                )),
            );
        }
    }
    let evidence = match read_evidence(review) {
        Ok(e) => e,
        Err(mut e) => {
            errors.append(&mut e);
            Vec::new()
        }
    };
    if !errors.is_empty() {
        return Err(Error::Inputs(errors));
    }
    let by_id: BTreeMap<&str, &DetailReview> =
        f.details.iter().map(|d| (d.id.as_str(), d)).collect();
    let mut counts = VerdictCounts::default();
    let mut verdicts = Vec::new();
    for id in detail_ids {
        match by_id.get(id) {
            Some(d) => {
                match d.verdict {
                    Verdict::Accepted => counts.accepted += 1,
                    Verdict::Query => counts.query += 1,
                    Verdict::NotAccepted => counts.not_accepted += 1,
                }
                verdicts.push(VerdictRecord {
                    id: d.id.clone(),
                    verdict: d.verdict,
                    verdict_text: d.verdict.as_str().into(),
                    open: d.verdict.is_open(),
                    remarks: d.remarks.clone(),
                });
            }
            None => counts.not_reviewed += 1,
        }
    }
    let mut open: Vec<VerdictRecord> = verdicts
        .iter()
        .filter(|v| v.verdict == Verdict::Query)
        .cloned()
        .collect();
    open.extend(
        verdicts
            .iter()
            .filter(|v| v.verdict == Verdict::NotAccepted)
            .cloned(),
    );
    Ok(ReviewRecord {
        file_name: review.file_name(),
        sha256: review.sha256.clone(),
        reviewer: f.reviewer.clone(),
        organisation: f.organisation.clone(),
        date: f.date.clone(),
        reference: f.reference.clone(),
        revision: f.revision.clone(),
        project_sha256: f.project_sha256.clone(),
        current,
        remarks: f.remarks.clone(),
        details: verdicts.iter().map(|v| (v.id.clone(), v.clone())).collect(),
        verdicts,
        open,
        counts,
        evidence,
        warnings,
    })
}

/// Read every cited verify report, confirm its hash and summarise it.
/// What a cited `seamlife diff --json` model says: the two revisions compared, with
/// which version, and the counts of the changes.
fn diff_evidence(e: &EvidenceEntry, d: &super::diff::DiffReport) -> EvidenceRecord {
    let side = |s: &super::diff::DiffSide| format!("{} (rev {})", s.file, s.revision);
    let worse = if d.worse.is_empty() {
        "no status worse".to_string()
    } else {
        format!("status worse: {}", d.worse.join(", "))
    };
    EvidenceRecord {
        file: e.file.clone(),
        sha256: e.sha256.clone(),
        note: e.note.clone(),
        kind: "diff".into(),
        results_file: d.old.file.clone(),
        project_file: d.new.file.clone(),
        tool_version: d.tool_version.clone(),
        rtol: 0.0,
        agree: d.worse.is_empty(),
        values_compared: 0,
        values_differing: d.changed.len(),
        inputs_differing: d.project.len(),
        summary: format!(
            "{} compared with {} by seamlife {}: {} added, {} removed, {} changed, {} unchanged details — {worse}",
            side(&d.old),
            side(&d.new),
            d.tool_version,
            d.added.len(),
            d.removed.len(),
            d.changed.len(),
            d.unchanged
        ),
    }
}

fn read_evidence(review: &Review) -> Result<Vec<EvidenceRecord>, Vec<InputError>> {
    let dir = review.path.parent().unwrap_or(Path::new(""));
    let mut out = Vec::new();
    let mut errors = Vec::new();
    for (i, e) in review.file.evidence.iter().enumerate() {
        let at = |key: &str| review.place(&YamlPath::root().key("evidence").index(i).key(key));
        let path = dir.join(&e.file);
        let text = match crate::files::read_text_bounded(
            &path,
            MAX_EVIDENCE_BYTES,
            "evidence files",
            "cite the JSON written by `seamlife verify --json`",
        ) {
            Ok(t) => t,
            Err(err) => {
                errors.push(
                    InputError::new(
                        err.kind,
                        at("file"),
                        format!(
                            "evidence[{i}].file `{}`: {}",
                            crate::files::shown(&e.file),
                            err.message
                        ),
                    )
                    .hint(err.hint.unwrap_or_default()),
                );
                continue;
            }
        };
        let actual = crate::files::sha256_hex(text.as_bytes());
        if actual != e.sha256 {
            errors.push(
                InputError::new(
                    InputErrorKind::InvalidValue,
                    at("sha256"),
                    format!(
                        "evidence[{i}].sha256: the file `{}` has SHA-256 {}…, the review cites {}…",
                        crate::files::shown(&e.file),
                        super::short_hash(&actual),
                        super::short_hash(&e.sha256)
                    ),
                )
                .hint("the evidence changed after the review was written: cite the file as it is now (`sha256sum FILE`) or restore it"),
            );
            continue;
        }
        let verify: Result<super::verify::VerifyReport, _> = serde_json::from_str(&text);
        let report = match verify {
            Ok(r) => r,
            Err(err) => match serde_json::from_str::<super::diff::DiffReport>(&text) {
                Ok(d) => {
                    out.push(diff_evidence(e, &d));
                    continue;
                }
                Err(_) => {
                    errors.push(
                        InputError::new(
                            InputErrorKind::WrongType,
                            Location::at(&path, err.line().max(1), err.column().max(1)),
                            format!(
                                "neither a `seamlife verify --json` report nor a `seamlife diff --json` model: {err}"
                            ),
                        )
                        .hint("cite the JSON written by `seamlife verify ... --json` or `seamlife diff OLD NEW --json`"),
                    );
                    continue;
                }
            },
        };
        let inputs_differing = report.inputs_differing();
        let summary = format!(
            "{} re-run against {} with seamlife {} (rtol {:e}): {} values compared, {} differ, {} inputs differ — {}",
            report.results_file,
            report.project_file,
            report.tool_version,
            report.rtol,
            report.values_compared,
            report.values.len(),
            inputs_differing,
            if report.agree { "agree" } else { "differences found" }
        );
        out.push(EvidenceRecord {
            file: e.file.clone(),
            sha256: e.sha256.clone(),
            note: e.note.clone(),
            kind: "verify".into(),
            results_file: report.results_file.clone(),
            project_file: report.project_file.clone(),
            tool_version: report.tool_version.clone(),
            rtol: report.rtol,
            agree: report.agree,
            values_compared: report.values_compared,
            values_differing: report.values.len(),
            inputs_differing,
            summary,
        });
    }
    if errors.is_empty() {
        Ok(out)
    } else {
        Err(errors)
    }
}

/// The review as text after the `assess` table: counts, then every open verdict.
pub fn render_open(r: &ReviewRecord) -> String {
    use crate::files::text::one_line;
    use std::fmt::Write;
    let mut t = String::new();
    let _ = writeln!(
        t,
        "\nreview {} by {} ({}), {}: {} accepted, {} queries, {} not accepted, {} not reviewed",
        one_line(&r.file_name),
        one_line(&r.reviewer),
        one_line(&r.organisation),
        one_line(&r.date),
        r.counts.accepted,
        r.counts.query,
        r.counts.not_accepted,
        r.counts.not_reviewed
    );
    for w in &r.warnings {
        let _ = writeln!(t, "warning: {}", one_line(w));
    }
    if r.open.is_empty() {
        let _ = writeln!(t, "no open queries");
    } else {
        let _ = writeln!(t, "open:");
        for v in &r.open {
            let _ = writeln!(
                t,
                "  {:<12} {}  {}",
                v.verdict.as_str().to_uppercase(),
                one_line(&v.id),
                one_line(v.remarks.as_deref().unwrap_or(""))
            );
        }
    }
    for e in &r.evidence {
        let _ = writeln!(
            t,
            "evidence: {}: {}",
            one_line(&e.file),
            one_line(&e.summary)
        );
    }
    t
}
