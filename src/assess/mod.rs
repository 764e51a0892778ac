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
mod crane;
pub mod curve;
mod improvement;
mod pair;
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

/// Assess every detail of a project. `family` must be the project's family. Details
/// are assessed in parallel; the results are in input order and equal to a serial run.
pub fn assess(project: &Project, fam: &Family, histories: &ProjectHistories) -> Results {
    let engine = Engine::new(project, fam, histories);
    let details = engine.assess_range(0..project.file.details.len());
    engine.results(details)
}

/// The assessment of one project, detail by detail: what is common to all details is
/// resolved once.
pub struct Engine<'a> {
    project: &'a Project,
    fam: &'a Family,
    histories: &'a ProjectHistories,
    basis: ResolvedBasis,
    interaction: Option<InteractionCheck>,
    lean: bool,
}

impl<'a> Engine<'a> {
    pub fn new(project: &'a Project, fam: &'a Family, histories: &'a ProjectHistories) -> Self {
        let basis = resolve_basis(&project.file, fam);
        let interaction = basis.interaction.as_ref().map(|i| InteractionCheck {
            normal_exponent: i.normal_exponent,
            shear_exponent: i.shear_exponent,
            limit: i.limit,
            source: i.source.clone(),
        });
        Engine {
            project,
            fam,
            histories,
            basis,
            interaction,
            lean: false,
        }
    }

    /// Results for summary rows only (CSV): every number of the details and their
    /// components, but no blocks, bands, counted records or curve labels. Faster and
    /// lighter for large projects; not for the JSON model or the package.
    pub fn lean(mut self) -> Self {
        self.lean = true;
        self
    }

    /// The family the details are assessed with.
    pub fn family(&self) -> &Family {
        self.fam
    }

    /// Number of details in the project.
    pub fn len(&self) -> usize {
        self.project.file.details.len()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Assess detail `i` (its spectrum is made here and dropped after).
    pub fn assess_one(&self, i: usize) -> DetailResult {
        let hist = self.histories.detail_with(self.project, i, !self.lean);
        let mut d = assess_detail(
            &self.project.file,
            self.fam,
            &self.basis,
            self.interaction.as_ref(),
            &self.project.file.details[i],
            &hist,
            self.lean,
        );
        // findings of the signal stage (e.g. a gate that removed every cycle)
        for n in self.histories.notes.iter().filter(|n| n.detail == i) {
            d.warnings.push(Warning {
                code: n.code.into(),
                message: format!("{} stress: {}", n.component, n.message),
            });
        }
        d
    }

    /// Assess a range of details in parallel, in input order.
    pub fn assess_range(&self, range: std::ops::Range<usize>) -> Vec<DetailResult> {
        use rayon::prelude::*;
        range.into_par_iter().map(|i| self.assess_one(i)).collect()
    }

    /// The results model for the given details (a whole project, or a part of it).
    pub fn results(&self, details: Vec<DetailResult>) -> Results {
        let mut r = self.frame();
        let mut sum = SummaryBuilder::default();
        for d in &details {
            sum.add(d);
        }
        r.summary = sum.finish();
        r.catalogue_used = catalogue_used(
            self.fam,
            details.iter().filter_map(|d| d.detail_key.as_deref()),
        );
        r.details = details;
        r
    }

    /// The results model without details: project, family, basis, inputs and cautions.
    pub fn frame(&self) -> Results {
        let project = self.project;
        let fam = self.fam;
        let file = &project.file;
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
                series_files: self.histories.series_files.clone(),
                table_files: project.tables.files.clone(),
                warnings: project.warnings.clone(),
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
                sha256: (!fam.sha256.is_empty()).then(|| fam.sha256.clone()),
            },
            basis: basis_used(file, fam, &self.basis),
            summary: SummaryBuilder::default().finish(),
            shard: None,
            details: Vec::new(),
            catalogue_used: Vec::new(),
            cautions: cautions(&fam.edition),
        }
    }
}

/// The summary counts, gathered detail by detail (for results streamed in parts).
#[derive(Debug, Clone, Default)]
pub struct SummaryBuilder {
    details: usize,
    passed: usize,
    failed: usize,
    outside: usize,
    warnings: usize,
    governing: Option<(f64, String)>,
}

impl SummaryBuilder {
    pub fn add(&mut self, d: &DetailResult) {
        self.details += 1;
        match d.status {
            Status::Pass => self.passed += 1,
            Status::Fail => self.failed += 1,
            Status::OutsideMethod => self.outside += 1,
        }
        self.warnings += d.warnings.len();
        // the first detail of the highest utilisation governs
        if self
            .governing
            .as_ref()
            .is_none_or(|(u, _)| d.utilisation.total_cmp(u).is_gt())
        {
            self.governing = Some((d.utilisation, d.id.clone()));
        }
    }

    pub fn finish(&self) -> Summary {
        Summary {
            details: self.details,
            passed: self.passed,
            failed: self.failed,
            outside_method: self.outside,
            governing_detail: self.governing.as_ref().map(|g| g.1.clone()),
            max_utilisation: self.governing.as_ref().map(|g| g.0).unwrap_or(0.0),
            warnings: self.warnings,
        }
    }
}

/// The catalogue entries the details refer to, sorted by key, for the appendix.
pub fn catalogue_used<'k>(
    fam: &Family,
    keys: impl Iterator<Item = &'k str>,
) -> Vec<CatalogueEntryUsed> {
    let used: std::collections::BTreeSet<&str> = keys.collect();
    used.iter()
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

fn assess_detail(
    file: &ProjectFile,
    fam: &Family,
    basis: &ResolvedBasis,
    interaction: Option<&InteractionCheck>,
    det: &Detail,
    hist: &DetailHistory,
    lean: bool,
) -> DetailResult {
    let entry = det.detail.as_ref().and_then(|k| fam.entry(k));
    let fy = file
        .materials
        .get(&det.material)
        .map(|m| m.fy_mpa)
        .unwrap_or(f64::NAN);
    let mut found = Findings::default();
    let setups = component_setups(fam, basis, det, entry, hist, fy, &mut found);
    let mut comps = Vec::with_capacity(setups.len());
    let mut parts = Vec::with_capacity(setups.len());
    let mut outside = false;
    for s in &setups {
        let (c, p, out) = assess_component(fam, basis, s, fy, &mut found, lean);
        comps.push(c);
        parts.push(p);
        outside |= out;
    }
    let mut v = verify_detail(fam, basis, interaction, &parts, &mut comps);
    // the AASHTO pair replaces the verdict by its check in force (assess/pair.rs)
    let truck_pair = pair::verify_pair(fam, basis, det, &comps, &mut v);
    let status = if outside {
        Status::OutsideMethod
    } else if v
        .passes
        .unwrap_or_else(|| v.checks.iter().all(|c| c.passes))
    {
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
        group: det.group.clone(),
        status,
        utilisation: v.utilisation,
        governing_check: v.governing_check,
        checks: v.checks,
        damage,
        damage_limit,
        life_years: v.life_years,
        reserve_factor: v.reserve_factor,
        reserve_factor_upper: v.reserve_factor_upper,
        required_category: v.required_category,
        components: comps,
        interaction: v.interaction,
        warnings: found.warnings,
        notes: found.notes,
        truck_pair,
    }
}

/// The per-cycle damage rules of a project's details, for the streaming count of its
/// series ([`crate::histories::build_with`]): the curve and corrections of each
/// detail's component, as [`Engine`] assesses it.
pub fn cycle_rules<'a>(
    project: &'a Project,
    fam: &'a Family,
) -> impl Fn(usize, crate::catalogue::Component) -> Option<crate::histories::damage::SharedRule> + 'a
{
    let basis = resolve_basis(&project.file, fam);
    move |i, comp| {
        let det = project.file.details.get(i)?;
        let fy = project
            .file
            .materials
            .get(&det.material)
            .map(|m| m.fy_mpa)
            .unwrap_or(f64::NAN);
        let rule = component::CycleDamageRule::of(fam, &basis, det, fy, comp)?;
        Some(std::sync::Arc::new(rule) as crate::histories::damage::SharedRule)
    }
}

/// Cycles in engineering form, e.g. 7.50e5.
pub fn fmt_cycles(n: f64) -> String {
    format!("{n:.3e}")
}

#[cfg(test)]
mod tests;
