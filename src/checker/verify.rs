//! `seamlife verify`: re-run a submitted results model's project with this installation
//! and list every input whose hash differs, every version that differs and every value
//! that differs beyond a relative tolerance.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use serde_json::Value;

use crate::catalogue::Library;
use crate::error::Error;
use crate::results::Results;

/// Default relative tolerance on numbers.
pub const DEFAULT_RTOL: f64 = 1e-9;

/// One input file, its hash in the submitted model and now.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct InputCheck {
    /// `project`, `series`, `table` or `family`.
    pub kind: String,
    pub file: String,
    pub submitted_sha256: Option<String>,
    pub current_sha256: Option<String>,
    pub same: bool,
}

/// A version stated in the submitted model and the one of this run.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct VersionCheck {
    /// `results model`, `tool`, `family` or `family data`.
    pub what: String,
    pub submitted: String,
    pub current: String,
    pub same: bool,
    /// False for a difference that alone does not make the results disagree (the
    /// tool version: a newer installation that gives the same numbers agrees).
    pub counts: bool,
}

/// A value of the results that differs.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ValueDifference {
    /// Path in the results model, details named by id: `details[RG3-W01].damage`.
    pub path: String,
    pub submitted: Value,
    pub current: Value,
    /// |a - b| / max(|a|, |b|) for two numbers.
    pub relative: Option<f64>,
}

/// What `verify` found.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct VerifyReport {
    pub results_file: String,
    pub project_file: String,
    pub rtol: f64,
    /// True when no input, counted version or value differs.
    pub agree: bool,
    pub inputs: Vec<InputCheck>,
    pub versions: Vec<VersionCheck>,
    pub values_compared: usize,
    pub values: Vec<ValueDifference>,
    /// Version of the installation that re-ran the project.
    pub tool_version: String,
}

impl VerifyReport {
    pub fn inputs_differing(&self) -> usize {
        self.inputs.iter().filter(|i| !i.same).count()
    }
}

/// The project file of a submitted model: the one given, or the model's file name in
/// the model's folder.
pub fn project_path_for(results_path: &Path, submitted: &Results) -> PathBuf {
    let dir = results_path.parent().unwrap_or(Path::new(""));
    dir.join(&submitted.input.file_name)
}

/// Re-run `project` with `library` the way the submitted model was made (the same
/// shard of details, if it was one part) and compare.
pub fn verify(
    submitted: &Results,
    results_file: &str,
    project: &Path,
    library: &Library,
    rtol: f64,
) -> Result<VerifyReport, Error> {
    let current = rerun(submitted, project, library)?;
    Ok(compare(
        submitted,
        &current,
        results_file,
        &project.display().to_string(),
        rtol,
    ))
}

/// The results of `project` with this installation, for the same details as
/// `submitted` (its shard, if any).
pub fn rerun(submitted: &Results, project: &Path, library: &Library) -> Result<Results, Error> {
    let loaded = crate::load_checked(project, library, crate::input::LoadOptions::default())?;
    let family = library
        .get(&loaded.project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let engine = crate::assess::Engine::new(&loaded.project, family, &loaded.histories);
    let total = engine.len();
    let range = match &submitted.shard {
        Some(s) if s.parts > 0 && s.part >= 1 && s.part <= s.parts => {
            crate::merge::shard_range(s.part, s.parts, total)
        }
        _ => 0..total,
    };
    let mut r = engine.results(engine.assess_range(range.clone()));
    if let Some(s) = &submitted.shard {
        r.shard = Some(crate::results::ShardInfo {
            part: s.part,
            parts: s.parts,
            first_detail: range.start,
            total_details: total,
        });
    }
    Ok(r)
}

/// Compare a submitted model with a fresh one.
pub fn compare(
    submitted: &Results,
    current: &Results,
    results_file: &str,
    project_file: &str,
    rtol: f64,
) -> VerifyReport {
    let inputs = input_checks(submitted, current);
    let versions = version_checks(submitted, current);
    let mut values = Vec::new();
    let mut compared = 0usize;
    let a = serde_json::to_value(submitted).unwrap_or(Value::Null);
    let b = serde_json::to_value(current).unwrap_or(Value::Null);
    walk("", &a, &b, rtol, &mut values, &mut compared);
    let agree = inputs.iter().all(|i| i.same)
        && versions.iter().all(|v| v.same || !v.counts)
        && values.is_empty();
    VerifyReport {
        results_file: results_file.to_string(),
        project_file: project_file.to_string(),
        rtol,
        agree,
        inputs,
        versions,
        values_compared: compared,
        values,
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
    }
}

fn input_checks(s: &Results, c: &Results) -> Vec<InputCheck> {
    let mut out = vec![InputCheck {
        kind: "project".into(),
        file: s.input.file_name.clone(),
        submitted_sha256: Some(s.input.sha256.clone()),
        current_sha256: Some(c.input.sha256.clone()),
        same: s.input.sha256 == c.input.sha256,
    }];
    let lists = [
        ("series", &s.input.series_files, &c.input.series_files),
        ("table", &s.input.table_files, &c.input.table_files),
    ];
    for (kind, sub, cur) in lists {
        for f in sub {
            let now = cur.iter().find(|g| g.file == f.file);
            out.push(InputCheck {
                kind: kind.into(),
                file: f.file.clone(),
                submitted_sha256: Some(f.sha256.clone()),
                current_sha256: now.map(|g| g.sha256.clone()),
                same: now.is_some_and(|g| g.sha256 == f.sha256),
            });
        }
        for g in cur.iter().filter(|g| !sub.iter().any(|f| f.file == g.file)) {
            out.push(InputCheck {
                kind: kind.into(),
                file: g.file.clone(),
                submitted_sha256: None,
                current_sha256: Some(g.sha256.clone()),
                same: false,
            });
        }
    }
    if s.family.sha256.is_some() {
        out.push(InputCheck {
            kind: "family".into(),
            file: format!("{} ({})", s.family.id, s.family.origin),
            submitted_sha256: s.family.sha256.clone(),
            current_sha256: c.family.sha256.clone(),
            same: s.family.sha256 == c.family.sha256,
        });
    }
    out
}

fn version_checks(s: &Results, c: &Results) -> Vec<VersionCheck> {
    let v = |what: &str, a: String, b: String, counts: bool| VersionCheck {
        what: what.into(),
        same: a == b,
        submitted: a,
        current: b,
        counts,
    };
    vec![
        v(
            "results model",
            s.model_version.to_string(),
            c.model_version.to_string(),
            true,
        ),
        v(
            "tool",
            format!("{} {}", s.tool.name, s.tool.version),
            format!("{} {}", c.tool.name, c.tool.version),
            false,
        ),
        v("family", s.family.id.clone(), c.family.id.clone(), true),
        v(
            "family data",
            s.family.data_version.clone(),
            c.family.data_version.clone(),
            true,
        ),
    ]
}

/// Paths whose difference is reported as an input or a version, not as a value.
fn reported_elsewhere(path: &str) -> bool {
    matches!(
        path,
        "model_version"
            | "tool"
            | "input.file_name"
            | "input.sha256"
            | "input.bytes"
            | "input.text"
            | "input.series_files"
            | "input.table_files"
            | "family.id"
            | "family.data_version"
            | "family.sha256"
    )
}

fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// The key that names the elements of an array (`id`, `name`, `component`, `event`):
/// one every element holds as a string, distinct within each array. Elements are
/// then matched by it, so an added detail does not shift the others.
fn naming_key(x: &[Value], y: &[Value]) -> Option<&'static str> {
    ["id", "name", "component", "event"].into_iter().find(|k| {
        [x, y].iter().all(|arr| {
            let mut seen = std::collections::HashSet::new();
            arr.iter().all(|v| {
                v.get(*k)
                    .and_then(Value::as_str)
                    .is_some_and(|s| seen.insert(s))
            })
        })
    })
}

/// Two numbers agree within `rtol`: |a - b| <= rtol · max(|a|, |b|).
pub fn close(a: f64, b: f64, rtol: f64) -> bool {
    a == b || (a - b).abs() <= rtol * a.abs().max(b.abs())
}

fn walk(
    path: &str,
    a: &Value,
    b: &Value,
    rtol: f64,
    out: &mut Vec<ValueDifference>,
    compared: &mut usize,
) {
    if reported_elsewhere(path) {
        return;
    }
    let differ = |out: &mut Vec<ValueDifference>, relative| {
        out.push(ValueDifference {
            path: path.to_string(),
            submitted: a.clone(),
            current: b.clone(),
            relative,
        })
    };
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            for (k, va) in x {
                let p = join(path, k);
                match y.get(k) {
                    Some(vb) => walk(&p, va, vb, rtol, out, compared),
                    None => walk(&p, va, &Value::Null, rtol, out, compared),
                }
            }
            for (k, vb) in y.iter().filter(|(k, _)| !x.contains_key(*k)) {
                walk(&join(path, k), &Value::Null, vb, rtol, out, compared);
            }
        }
        (Value::Array(x), Value::Array(y)) => {
            if let Some(key) = naming_key(x, y) {
                let name = |v: &Value| v.get(key).and_then(Value::as_str).unwrap_or("").to_string();
                for va in x {
                    let p = format!("{path}[{}]", name(va));
                    match y.iter().find(|vb| vb.get(key) == va.get(key)) {
                        Some(vb) => walk(&p, va, vb, rtol, out, compared),
                        None => {
                            *compared += 1;
                            out.push(ValueDifference {
                                path: p,
                                submitted: Value::String("present".into()),
                                current: Value::String("absent".into()),
                                relative: None,
                            })
                        }
                    }
                }
                for vb in y {
                    if !x.iter().any(|va| va.get(key) == vb.get(key)) {
                        *compared += 1;
                        out.push(ValueDifference {
                            path: format!("{path}[{}]", name(vb)),
                            submitted: Value::String("absent".into()),
                            current: Value::String("present".into()),
                            relative: None,
                        });
                    }
                }
            } else {
                for (i, (va, vb)) in x.iter().zip(y).enumerate() {
                    walk(&format!("{path}[{i}]"), va, vb, rtol, out, compared);
                }
                if x.len() != y.len() {
                    *compared += 1;
                    out.push(ValueDifference {
                        path: format!("{path}.length"),
                        submitted: Value::from(x.len()),
                        current: Value::from(y.len()),
                        relative: None,
                    });
                }
            }
        }
        (Value::Number(x), Value::Number(y)) => {
            *compared += 1;
            let (x, y) = (
                x.as_f64().unwrap_or(f64::NAN),
                y.as_f64().unwrap_or(f64::NAN),
            );
            if !close(x, y, rtol) {
                let rel = (x - y).abs() / x.abs().max(y.abs());
                differ(out, Some(rel));
            }
        }
        _ => {
            *compared += 1;
            if a != b {
                differ(out, None);
            }
        }
    }
}

/// A value as shown in a table.
pub fn shown_value(v: &Value) -> String {
    match v {
        Value::Null => "none".into(),
        Value::String(s) => crate::files::shown(s),
        Value::Number(n) => n.to_string(),
        other => {
            let s = other.to_string();
            crate::files::shown(&s)
        }
    }
}

/// The report as a text table; at most `max_values` value differences are listed.
pub fn render(r: &VerifyReport, max_values: usize) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    let _ = writeln!(
        t,
        "verify {} against {} (seamlife {}, rtol {:e})",
        crate::files::text::one_line(&r.results_file),
        crate::files::text::one_line(&r.project_file),
        r.tool_version,
        r.rtol
    );
    let _ = writeln!(t, "\ninputs");
    for i in &r.inputs {
        let mark = if i.same { "same   " } else { "DIFFERS" };
        let h = |h: &Option<String>| {
            h.as_deref()
                .map(|h| super::short_hash(h).to_string())
                .unwrap_or_else(|| "none".into())
        };
        if i.same {
            let _ = writeln!(
                t,
                "  {mark}  {:<7} {}  sha256 {}",
                i.kind,
                crate::files::text::one_line(&i.file),
                h(&i.submitted_sha256)
            );
        } else {
            let _ = writeln!(
                t,
                "  {mark}  {:<7} {}  submitted {}  now {}",
                i.kind,
                crate::files::text::one_line(&i.file),
                h(&i.submitted_sha256),
                h(&i.current_sha256)
            );
        }
    }
    let _ = writeln!(t, "\nversions");
    for v in &r.versions {
        let mark = match (v.same, v.counts) {
            (true, _) => "same   ",
            (false, true) => "DIFFERS",
            (false, false) => "note   ",
        };
        if v.same {
            let _ = writeln!(
                t,
                "  {mark}  {:<13} {}",
                v.what,
                crate::files::shown(&v.submitted)
            );
        } else {
            let _ = writeln!(
                t,
                "  {mark}  {:<13} submitted {}  this installation {}",
                v.what,
                crate::files::shown(&v.submitted),
                crate::files::shown(&v.current)
            );
        }
    }
    let _ = writeln!(
        t,
        "\nvalues: {} compared, {} differ beyond rtol {:e}",
        r.values_compared,
        r.values.len(),
        r.rtol
    );
    for d in r.values.iter().take(max_values) {
        let rel = d
            .relative
            .map(|x| format!("  (relative {x:.2e})"))
            .unwrap_or_default();
        let _ = writeln!(
            t,
            "  {}  submitted {}  now {}{rel}",
            crate::files::text::one_line(&d.path),
            shown_value(&d.submitted),
            shown_value(&d.current)
        );
    }
    if r.values.len() > max_values {
        let _ = writeln!(
            t,
            "  ... and {} more (all are in --json)",
            r.values.len() - max_values
        );
    }
    let _ = writeln!(
        t,
        "\n{}",
        if r.agree {
            "AGREE: the submitted results follow from these inputs with this installation."
        } else {
            "DIFFERENCES FOUND: the submitted results do not follow from these inputs as they are now."
        }
    );
    t
}
