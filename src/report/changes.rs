//! The "changes since revision X" context of the package (`report --previous`): built
//! from the diff model only, so the templates mark changed values without comparing
//! anything themselves.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::checker::diff::{Change, DiffReport};

/// One change as the templates show it: the item and both values as text.
#[derive(Debug, Clone, Serialize)]
pub struct ShownChange {
    pub item: String,
    pub old: String,
    pub new: String,
}

/// What changed for one detail of the new revision.
#[derive(Debug, Clone, Serialize)]
pub struct DetailChanges {
    /// `changed` or `added`.
    pub kind: String,
    /// Which shown values differ: `category`, `check`, `damage`, `utilisation`,
    /// `life`, `reserve`, `required`, `status`, `material`, `thickness`, `catalogue`,
    /// `location`, `description`, `loading`; `added` for an added detail.
    pub marks: Vec<String>,
    pub inputs: Vec<ShownChange>,
    pub results: Vec<ShownChange>,
    /// `same`, `better`, `worse` (changed details) or empty (added).
    pub status_move: String,
    /// Status in the old revision (`pass`, `fail`, `outside-method`); empty when added.
    pub old_status: String,
}

/// The `changes` key of the template context.
#[derive(Debug, Clone, Serialize)]
pub struct ChangesContext {
    /// The diff model itself.
    pub diff: DiffReport,
    /// Revision of the old side.
    pub since: String,
    /// Ids of the details of the new revision that are added or changed.
    pub ids: Vec<String>,
    pub details: BTreeMap<String, DetailChanges>,
    pub project: Vec<ShownChange>,
}

fn shown(c: &Change) -> ShownChange {
    ShownChange {
        item: c.item.clone(),
        old: crate::checker::diff::cell(&c.item, &c.old),
        new: crate::checker::diff::cell(&c.item, &c.new),
    }
}

/// The mark a changed item sets.
fn mark_of(item: &str) -> Option<&'static str> {
    let last = item.rsplit('.').next().unwrap_or(item);
    Some(match item {
        "status" => "status",
        "utilisation" => "utilisation",
        "damage" => "damage",
        "life_years" => "life",
        "reserve_factor" => "reserve",
        "required_category_mpa" => "required",
        "governing_check" => "check",
        "material" | "fy_mpa" => "material",
        "thickness_mm" => "thickness",
        "catalogue_entry" => "catalogue",
        "location" => "location",
        "description" => "description",
        _ if last == "category_mpa" => "category",
        _ if item.contains(".loading[") || item.contains(".series[") => "loading",
        _ => return None,
    })
}

/// Build the context from a diff model.
pub fn context(diff: &DiffReport) -> ChangesContext {
    let mut details = BTreeMap::new();
    let mut ids = Vec::new();
    for d in &diff.added {
        ids.push(d.id.clone());
        details.insert(
            d.id.clone(),
            DetailChanges {
                kind: "added".into(),
                marks: vec!["added".into()],
                inputs: Vec::new(),
                results: Vec::new(),
                status_move: String::new(),
                old_status: String::new(),
            },
        );
    }
    for d in &diff.changed {
        ids.push(d.id.clone());
        let mut marks: Vec<String> = Vec::new();
        for c in d.inputs.iter().chain(&d.results) {
            if let Some(m) = mark_of(&c.item) {
                if !marks.iter().any(|k| k == m) {
                    marks.push(m.to_string());
                }
            }
        }
        details.insert(
            d.id.clone(),
            DetailChanges {
                kind: "changed".into(),
                marks,
                inputs: d.inputs.iter().map(shown).collect(),
                results: d.results.iter().map(shown).collect(),
                status_move: serde_json::to_value(d.status_move)
                    .ok()
                    .and_then(|v| v.as_str().map(String::from))
                    .unwrap_or_default(),
                old_status: serde_json::to_value(d.old_status)
                    .ok()
                    .and_then(|v| v.as_str().map(String::from))
                    .unwrap_or_default(),
            },
        );
    }
    ChangesContext {
        diff: diff.clone(),
        since: diff.old.revision.clone(),
        ids,
        details,
        project: diff.project.iter().map(shown).collect(),
    }
}
