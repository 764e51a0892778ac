//! Assessment stage: design curves after corrections and partial factors,
//! Palmgren-Miner damage, equivalent range, verification, life, reserve factor and
//! required category. Pure functions: no I/O.
//!
//! `assess` works detail by detail: [`component`] resolves and assesses each stress
//! component, [`verify`] combines them into the detail's checks and searches life,
//! reserve factor and required category; [`basis`] states the rules in force.

mod basis;
mod component;
mod corrections;
pub mod curve;
mod verify;

use crate::catalogue::Family;
use crate::histories::{DetailHistory, ProjectHistories};
use crate::input::{Detail, Project, ProjectFile};
use crate::results::*;
use basis::basis_used;
pub use basis::{resolve_basis, ResolvedBasis};
use component::{assess_component, component_setups, Findings};
pub use corrections::{enhancement, mean_stress_factor};
pub use curve::SnCurve;
use verify::{verify_detail, InteractionCheck};

/// Assess every detail of a project. `family` must be the project's family.
pub fn assess(project: &Project, fam: &Family, histories: &ProjectHistories) -> Results {
    let file = &project.file;
    let basis = resolve_basis(file, fam);
    let interaction = basis.interaction.as_ref().map(|i| InteractionCheck {
        normal_exponent: i.normal_exponent,
        shear_exponent: i.shear_exponent,
        limit: i.limit,
        source: i.source.clone(),
    });
    let mut details = Vec::with_capacity(file.details.len());
    let mut used_keys: Vec<&str> = Vec::new();
    for (det, hist) in file.details.iter().zip(&histories.details) {
        if let Some(k) = &det.detail {
            if !used_keys.contains(&k.as_str()) {
                used_keys.push(k);
            }
        }
        details.push(assess_detail(
            file,
            fam,
            &basis,
            interaction.as_ref(),
            det,
            hist,
        ));
    }
    let catalogue_used = catalogue_used(fam, used_keys);
    let summary = summary(&details);
    let p = &file.project;
    Results {
        model_version: MODEL_VERSION,
        tool: ToolInfo {
            name: "seamlife".into(),
            version: env!("CARGO_PKG_VERSION").into(),
        },
        input: InputInfo {
            file_name: project
                .path
                .file_name()
                .map(|f| f.to_string_lossy().into_owned())
                .unwrap_or_default(),
            sha256: project.sha256.clone(),
            bytes: project.text.len() as u64,
            text: project.text.clone(),
            series_files: histories.series_files.clone(),
        },
        project: ProjectEcho {
            title: p.title.clone(),
            reference: p.reference.clone(),
            revision: p.revision.clone(),
            prepared_by: p.prepared_by.clone(),
            checked_by: p.checked_by.clone(),
            date: p.date.clone(),
            client: p.client.clone(),
            structure: p.structure.clone(),
            specification: p.specification.clone(),
            revisions: p
                .revisions
                .iter()
                .map(|r| RevisionEcho {
                    revision: r.revision.clone(),
                    date: r.date.clone(),
                    description: r.description.clone(),
                    by: r.by.clone(),
                })
                .collect(),
        },
        family: FamilyInfo {
            id: fam.id.clone(),
            title: fam.title.clone(),
            edition: fam.edition.clone(),
            data_version: fam.data_version.clone(),
            transcription_note: fam.transcription_note.clone(),
            origin: if fam.origin.starts_with("<embedded>") {
                "embedded".into()
            } else {
                std::path::Path::new(&fam.origin)
                    .file_name()
                    .map(|f| f.to_string_lossy().into_owned())
                    .unwrap_or_default()
            },
            reference_cycles: fam.reference_cycles,
        },
        basis: basis_used(file, fam, &basis),
        summary,
        details,
        catalogue_used,
        cautions: cautions(&fam.edition),
    }
}

/// The catalogue entries the details refer to, sorted by key, for the appendix.
fn catalogue_used(fam: &Family, mut used_keys: Vec<&str>) -> Vec<CatalogueEntryUsed> {
    used_keys.sort();
    used_keys
        .iter()
        .filter_map(|k| fam.entry(k))
        .map(|e| CatalogueEntryUsed {
            key: e.key.clone(),
            reference: e.reference.clone(),
            description: e.description.clone(),
            normal_category: e.normal_category,
            shear_category: e.shear_category,
            thickness_exponent: e.thickness_exponent,
            mean_stress_case: e.mean_stress_case.clone(),
            curve_variant: e.curve_variant.clone(),
        })
        .collect()
}

fn summary(details: &[DetailResult]) -> Summary {
    let governing = details
        .iter()
        .max_by(|a: &&DetailResult, b: &&DetailResult| a.utilisation.total_cmp(&b.utilisation));
    Summary {
        details: details.len(),
        passed: details.iter().filter(|d| d.status == Status::Pass).count(),
        failed: details.iter().filter(|d| d.status == Status::Fail).count(),
        outside_method: details
            .iter()
            .filter(|d| d.status == Status::OutsideMethod)
            .count(),
        governing_detail: governing.map(|d| d.id.clone()),
        max_utilisation: governing.map(|d| d.utilisation).unwrap_or(0.0),
        warnings: details.iter().map(|d| d.warnings.len()).sum(),
    }
}

fn assess_detail(
    file: &ProjectFile,
    fam: &Family,
    basis: &ResolvedBasis,
    interaction: Option<&InteractionCheck>,
    det: &Detail,
    hist: &DetailHistory,
) -> DetailResult {
    let entry = det.detail.as_ref().and_then(|k| fam.entry(k));
    let fy = file
        .materials
        .get(&det.material)
        .map(|m| m.fy_mpa)
        .unwrap_or(f64::NAN);
    let mut found = Findings::default();
    let setups = component_setups(fam, basis, det, entry, hist, &mut found);
    let mut comps = Vec::with_capacity(setups.len());
    let mut parts = Vec::with_capacity(setups.len());
    let mut outside = false;
    for s in &setups {
        let (c, p, out) = assess_component(fam, basis, s, fy, &mut found);
        comps.push(c);
        parts.push(p);
        outside |= out;
    }
    let v = verify_detail(fam, basis, interaction, &parts, &mut comps);
    let status = if outside {
        Status::OutsideMethod
    } else if v.checks.iter().all(|c| c.passes) {
        Status::Pass
    } else {
        Status::Fail
    };
    // The largest component damage, with the limit of that component's check.
    let (damage, damage_limit) = comps.iter().map(|c| (c.damage, c.damage_limit)).fold(
        (0.0, basis.damage_limit.value),
        |a, b| if b.0 > a.0 { b } else { a },
    );
    DetailResult {
        id: det.id.clone(),
        location: det.location.clone(),
        description: det.description.clone(),
        detail_key: det.detail.clone(),
        catalogue_reference: entry.map(|e| e.reference.clone()),
        catalogue_description: entry.map(|e| e.description.clone()),
        material: det.material.clone(),
        fy_mpa: fy,
        thickness_mm: det.thickness_mm,
        status,
        utilisation: v.utilisation,
        governing_check: v.governing_check,
        checks: v.checks,
        damage,
        damage_limit,
        life_years: v.life_years,
        reserve_factor: v.reserve_factor,
        required_category: v.required_category,
        components: comps,
        interaction: v.interaction,
        warnings: found.warnings,
        notes: found.notes,
    }
}

/// Cycles in engineering form, e.g. 7.50e5.
pub fn fmt_cycles(n: f64) -> String {
    format!("{n:.3e}")
}

#[cfg(test)]
mod tests;
