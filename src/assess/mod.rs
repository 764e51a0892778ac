//! Assessment stage: design curves after corrections and partial factors,
//! Palmgren-Miner damage, equivalent range, verification, life, reserve factor and
//! required category. Pure functions: no I/O.

pub mod curve;

use crate::catalogue::{CatalogueEntry, Component, Family, MeanStressCase, UtilisationForm};
use crate::histories::{ComponentHistory, DetailHistory, ProjectHistories};
use crate::input::{Detail, Project, ProjectFile};
use crate::results::*;
pub use curve::SnCurve;

/// Relative tolerance on a verification value of exactly 1.0.
const PASS_TOLERANCE: f64 = 1e-12;

/// Factors and limits in force for a project, with their sources.
#[derive(Debug, Clone)]
pub struct ResolvedBasis {
    pub design_life_years: f64,
    pub gamma_ff: FactorUsed,
    pub gamma_mf: FactorUsed,
    pub damage_limit: FactorUsed,
    pub interaction: Option<InteractionRule>,
    pub variant: Option<String>,
}

fn factor(family_value: f64, source: &str, ov: &Option<crate::input::Override>) -> FactorUsed {
    match ov {
        Some(o) => FactorUsed {
            value: o.value,
            source: format!("user override (family value {family_value} from {source})"),
            overridden: true,
            reason: Some(o.reason.clone()),
            family_value,
        },
        None => FactorUsed {
            value: family_value,
            source: source.to_string(),
            overridden: false,
            reason: None,
            family_value,
        },
    }
}

/// Resolve partial factors, damage limit and interaction limit for a project.
pub fn resolve_basis(file: &ProjectFile, fam: &Family) -> ResolvedBasis {
    let b = &file.basis;
    let pf = &fam.partial_factors;
    let row = &pf.gamma_mf.table[b.strategy.as_str()];
    let gmf = match b.consequence {
        crate::input::Consequence::High => row.high,
        crate::input::Consequence::Low => row.low,
    };
    let gmf_source = format!(
        "{} ({}, {} consequence)",
        pf.gamma_mf.source,
        b.strategy.as_str(),
        b.consequence.as_str()
    );
    let (dl, dl_source) = match b
        .damage_case
        .as_ref()
        .and_then(|c| fam.damage_limit.cases.get(c))
    {
        Some(c) => (c.value, c.source.clone()),
        None => (fam.damage_limit.value, fam.damage_limit.source.clone()),
    };
    let interaction = fam.verification.interaction.as_ref().map(|i| {
        let case = b
            .interaction_case
            .as_ref()
            .and_then(|c| i.cases.get(c).map(|v| (c, v)));
        InteractionRule {
            normal_exponent: i.normal_exponent,
            shear_exponent: i.shear_exponent,
            limit: case.map(|(_, v)| v.value).unwrap_or(i.limit),
            case: case.map(|(c, _)| c.clone()),
            source: case
                .map(|(_, v)| v.source.clone())
                .unwrap_or(i.source.clone()),
        }
    });
    ResolvedBasis {
        design_life_years: b.design_life_years,
        gamma_ff: factor(pf.gamma_ff.value, &pf.gamma_ff.source, &b.gamma_ff),
        gamma_mf: factor(gmf, &gmf_source, &b.gamma_mf),
        damage_limit: factor(dl, &dl_source, &b.damage_limit),
        interaction,
        variant: b.curve_variant.clone(),
    }
}

/// Δσ_eff/Δσ for one cycle under a mean-stress case.
pub fn mean_stress_factor(case: &MeanStressCase, max: Option<f64>, min: Option<f64>) -> f64 {
    let (Some(hi), Some(lo)) = (max, min) else {
        return 1.0;
    };
    let range = hi - lo;
    if range <= 0.0 {
        return 1.0;
    }
    if let Some(f) = case.compressive_fraction {
        // EN 1993-1-9 7.2.1(1): tensile part plus a fraction (60 %) of the compressive part
        let tensile = hi.max(0.0) - lo.max(0.0);
        let compressive = (-lo).max(0.0) - (-hi).max(0.0);
        return (tensile + f * compressive) / range;
    }
    match &case.enhancement_points {
        Some(pts) if !pts.is_empty() => {
            // IIW 3.3.3 f(R) (from memory): resistance × f(R), here as range / f(R);
            // a fully compressive cycle takes the enhancement of the lowest R (common practice).
            let f = if hi <= 0.0 {
                pts[0][1]
            } else {
                enhancement(pts, lo / hi)
            };
            1.0 / f
        }
        _ => 1.0,
    }
}

/// Piecewise-linear f(R), constant outside the first and last point.
pub fn enhancement(pts: &[[f64; 2]], r: f64) -> f64 {
    if r <= pts[0][0] {
        return pts[0][1];
    }
    for w in pts.windows(2) {
        if r <= w[1][0] {
            let t = (r - w[0][0]) / (w[1][0] - w[0][0]);
            return w[0][1] + t * (w[1][1] - w[0][1]);
        }
    }
    pts[pts.len() - 1][1]
}

/// One component made ready for repeated damage sums (reserve factor, categories).
#[derive(Debug, Clone)]
struct Prepared {
    /// The design curve shape with reference range 1.
    unit: SnCurve,
    /// Constant-amplitude limit as a multiple of the reference range; `None` when the
    /// family has none or the loading is not constant amplitude.
    ca_ratio: Option<f64>,
    /// (γFf·Δσ_eff, cycles per year) per block.
    loads: Vec<(f64, f64)>,
}

impl Prepared {
    /// Damage per year with all ranges × k on a design curve of reference `design_ref`.
    fn damage_per_year(&self, design_ref: f64, k: f64) -> f64 {
        if let Some(ca) = self.ca_ratio {
            let lim = ca * design_ref;
            if self.loads.iter().all(|(r, _)| k * r <= lim) {
                return 0.0;
            }
        }
        self.loads
            .iter()
            .map(|&(r, n)| match self.unit.endurance(k * r / design_ref) {
                // Palmgren-Miner: D = Σ n_i / N_i (EN 1993-1-9 A.5, common practice)
                Some((big_n, _)) => n / big_n,
                None => 0.0,
            })
            .sum()
    }
}

/// The verification of one detail from component damages over a period.
#[derive(Debug, Clone, Copy)]
struct Checks {
    form: UtilisationForm,
    dlim: f64,
    interaction: Option<(f64, f64, f64)>,
}

impl Checks {
    /// Equivalent-range ratio (D/D_lim)^(1/m1) (EN 1993-1-9 eq. (8.2) when D_lim = 1).
    fn ratio(&self, d: f64, m1: f64) -> f64 {
        (d / self.dlim).powf(1.0 / m1)
    }

    fn utilisation(&self, d: f64, m1: f64) -> f64 {
        match self.form {
            UtilisationForm::RangeRatio => self.ratio(d, m1),
            UtilisationForm::DamageRatio => d / self.dlim,
        }
    }

    /// Governing value: the largest of the component utilisations and the interaction
    /// expression over its limit. `parts` is (damage, m1, component).
    fn governing(&self, parts: &[(f64, f64, Component)]) -> (f64, String) {
        let mut best = (0.0, String::new());
        for &(d, m1, c) in parts {
            let u = self.utilisation(d, m1);
            if u > best.0 || best.1.is_empty() {
                best = (u, c.as_str().to_string());
            }
        }
        if let Some(v) = self.interaction_value(parts) {
            if v > best.0 {
                best = (v, "interaction".into());
            }
        }
        best
    }

    /// Interaction expression divided by its limit, when both components are present.
    fn interaction_value(&self, parts: &[(f64, f64, Component)]) -> Option<f64> {
        let (en, es, lim) = self.interaction?;
        let n = parts.iter().find(|p| p.2 == Component::Normal)?;
        let s = parts.iter().find(|p| p.2 == Component::Shear)?;
        // (ratio_σ)^e_σ + (ratio_τ)^e_τ <= limit (EN 1993-1-9 eq. (8.3) form)
        Some((self.ratio(n.0, n.1).powf(en) + self.ratio(s.0, s.1).powf(es)) / lim)
    }
}

/// Largest x in (0, ∞) with f(x) <= 1 for a non-decreasing f, by bisection on log x.
/// `None` when f stays <= 1 as far as it is searched.
fn sup_passing(f: impl Fn(f64) -> f64) -> Option<f64> {
    let (mut lo, mut hi);
    if f(1.0) <= 1.0 {
        lo = 1.0;
        hi = 2.0;
        let mut n = 0;
        while f(hi) <= 1.0 {
            lo = hi;
            hi *= 2.0;
            n += 1;
            if n > 1100 {
                return None;
            }
        }
    } else {
        hi = 1.0;
        lo = 0.5;
        let mut n = 0;
        while f(lo) > 1.0 {
            hi = lo;
            lo *= 0.5;
            n += 1;
            if n > 1100 {
                return Some(0.0);
            }
        }
    }
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        if mid <= lo || mid >= hi {
            break;
        }
        if f(mid) <= 1.0 {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi / lo - 1.0 < 1e-13 {
            break;
        }
    }
    Some(lo)
}

struct ComponentSetup<'a> {
    comp: Component,
    category: f64,
    category_source: String,
    catalogue_category: Option<f64>,
    size: SizeCorrection,
    case_key: String,
    case: &'a MeanStressCase,
    history: &'a ComponentHistory,
}

fn size_correction(
    fam: &Family,
    det: &Detail,
    entry: Option<&CatalogueEntry>,
    comp: Component,
) -> SizeCorrection {
    let th = &fam.thickness;
    let (exponent, from) = match (
        det.thickness_exponent,
        entry.and_then(|e| e.thickness_exponent),
    ) {
        (Some(n), _) => (Some(n), "set by hand on the detail".to_string()),
        (None, Some(n)) => (Some(n), "catalogue entry".to_string()),
        (None, None) => (None, "no size effect for this detail".to_string()),
    };
    let exponent = if comp == Component::Normal {
        exponent
    } else {
        None
    };
    let t = det.thickness_mm;
    let t_eff = match (th.effective_thickness, det.toe_distance_mm) {
        // IIW 3.3.2 (from memory): t_eff = 0.5·L when L/t <= 2
        (crate::catalogue::EffectiveThickness::ToeDistance, Some(l)) if l / t <= 2.0 => 0.5 * l,
        _ => t,
    };
    let applies =
        exponent.is_some() && (!th.applies_above_reference_only || t_eff > th.reference_mm);
    let factor = match (applies, exponent) {
        // ks = (t_ref/t_eff)^n (EN 1993-1-9 7.2.2, IIW 3.3.2)
        (true, Some(n)) => (th.reference_mm / t_eff).powf(n),
        _ => 1.0,
    };
    SizeCorrection {
        applies,
        thickness_mm: t,
        effective_thickness_mm: t_eff,
        reference_mm: th.reference_mm,
        exponent,
        factor,
        source: th.source.clone(),
        exponent_from: if comp == Component::Normal {
            from
        } else {
            "size effect acts on normal stress only".into()
        },
    }
}

/// Assess every detail of a project. `family` must be the project's family.
pub fn assess(project: &Project, fam: &Family, histories: &ProjectHistories) -> Results {
    let file = &project.file;
    let basis = resolve_basis(file, fam);
    let checks = Checks {
        form: fam.verification.utilisation,
        dlim: basis.damage_limit.value,
        interaction: basis
            .interaction
            .as_ref()
            .map(|i| (i.normal_exponent, i.shear_exponent, i.limit)),
    };
    let mut details = Vec::with_capacity(file.details.len());
    let mut used_keys: Vec<&str> = Vec::new();
    for (det, hist) in file.details.iter().zip(&histories.details) {
        if let Some(k) = &det.detail {
            if !used_keys.contains(&k.as_str()) {
                used_keys.push(k);
            }
        }
        details.push(assess_detail(file, fam, &basis, &checks, det, hist));
    }
    used_keys.sort();
    let catalogue_used = used_keys
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
        })
        .collect();
    let governing = details
        .iter()
        .max_by(|a: &&DetailResult, b: &&DetailResult| a.utilisation.total_cmp(&b.utilisation));
    let summary = Summary {
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
    };
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

fn basis_used(file: &ProjectFile, fam: &Family, basis: &ResolvedBasis) -> BasisUsed {
    let mut curves = Vec::new();
    let mut method = vec![
        "Damage is summed by the Palmgren-Miner rule, D = Σ nᵢ/Nᵢ, over the design life.".to_string(),
        format!(
            "Nᵢ is read from the design S-N curve at the design range γFf·Δσᵢ; the curve passes through the reduced category ks·{}/γMf at {:.0e} cycles.",
            fam.category_symbol.normal, fam.reference_cycles
        ),
    ];
    for c in [Component::Normal, Component::Shear] {
        let def = fam.curves.get(c);
        let (segs, variant, source) = match basis
            .variant
            .as_ref()
            .and_then(|v| def.variants.get(v).map(|x| (v, x)))
        {
            Some((v, var)) => (&var.segments, Some(v.clone()), var.source.clone()),
            None => (&def.segments, None, def.source.clone()),
        };
        let mut text = format!("{} stress curve: ", c.as_str());
        let mut from = format!("{:.0e}", fam.reference_cycles);
        for (i, s) in segs.iter().enumerate() {
            if i > 0 {
                text.push_str(", then ");
            }
            match s.end_cycles {
                Some(n) => {
                    text.push_str(&format!(
                        "m = {} to {:.0e} cycles ({})",
                        s.slope_m,
                        n,
                        s.knee_symbol.clone().unwrap_or_else(|| "knee".into())
                    ));
                    from = format!("{n:.0e}");
                }
                None => text.push_str(&format!(
                    "m = {} beyond {from} cycles without cut-off",
                    s.slope_m
                )),
            }
        }
        if segs.last().is_some_and(|s| s.end_cycles.is_some()) {
            text.push_str("; ranges below the last knee cause no damage (cut-off)");
        }
        if let Some(k) = def.constant_amplitude_limit_knee {
            text.push_str(&format!(
                "; constant-amplitude loading (one design range) at or below the range at knee {k} causes no damage (constant-amplitude fatigue limit)"
            ));
        }
        text.push('.');
        method.push(text);
        curves.push(CurveRuleInfo {
            component: c.as_str().into(),
            symbol: fam.range_symbol.get(c).clone(),
            category_symbol: fam.category_symbol.get(c).clone(),
            segments: segs
                .iter()
                .map(|s| CurveSegmentInfo {
                    slope_m: s.slope_m,
                    end_cycles: s.end_cycles,
                    knee_symbol: s.knee_symbol.clone(),
                    knee_name: s.knee_name.clone(),
                })
                .collect(),
            constant_amplitude_limit_knee: def.constant_amplitude_limit_knee,
            variant,
            source,
        });
    }
    method.push(match fam.verification.utilisation {
        UtilisationForm::RangeRatio => "Utilisation is the equivalent-range ratio γFf·ΔσE,2/(ks·ΔσC/γMf) = (D/D_lim)^(1/m₁), with ΔσE,2 the constant range at the reference cycles that does the same damage on the first curve segment.".into(),
        UtilisationForm::DamageRatio => "Utilisation is the damage ratio D/D_lim.".into(),
    });
    if let Some(i) = &basis.interaction {
        method.push(format!(
            "Where normal and shear stress act together, (γFf·ΔσE,2/ΔσC,d)^{} + (γFf·ΔτE,2/ΔτC,d)^{} must not exceed {} ({}).",
            i.normal_exponent, i.shear_exponent, i.limit, i.source
        ));
    }
    method.push("The reserve factor is the largest factor on all stress ranges for which the governing check still passes; the required category is the lowest listed category that passes.".into());
    let ms = &fam.mean_stress;
    let mean_stress_rule = format!(
        "{}; cases: {}; default `{}`. The rule acts only on blocks that give max and min (or range and mean).",
        ms.source,
        ms.cases
            .iter()
            .map(|(k, c)| format!("`{k}` = {}", c.name))
            .collect::<Vec<_>>()
            .join("; "),
        ms.default_case
    );
    let th = &fam.thickness;
    let thickness_rule = format!(
        "Size factor (t_ref/t_eff)^n with t_ref = {} mm{}{}, on normal stress of details whose catalogue entry gives n ({}).",
        th.reference_mm,
        if th.applies_above_reference_only { ", only for t_eff > t_ref" } else { "" },
        match th.effective_thickness {
            crate::catalogue::EffectiveThickness::Plate => ", t_eff = t",
            crate::catalogue::EffectiveThickness::ToeDistance => ", t_eff = 0.5·L when L/t ≤ 2 (L toe distance), else t",
        },
        th.source
    );
    let v = &fam.validity;
    BasisUsed {
        design_life_years: basis.design_life_years,
        strategy: file.basis.strategy.as_str().into(),
        consequence: file.basis.consequence.as_str().into(),
        gamma_ff: basis.gamma_ff.clone(),
        gamma_mf: basis.gamma_mf.clone(),
        damage_limit: basis.damage_limit.clone(),
        utilisation_form: match fam.verification.utilisation {
            UtilisationForm::RangeRatio => "range-ratio".into(),
            UtilisationForm::DamageRatio => "damage-ratio".into(),
        },
        verification_source: fam.verification.source.clone(),
        interaction: basis.interaction.clone(),
        curves,
        thickness_rule,
        mean_stress_rule,
        validity_rule: format!(
            "γFf·Δσ ≤ {}·fy and γFf·Δτ ≤ {:.4}·fy ({})",
            v.normal_fy_factor, v.shear_fy_factor, v.source
        ),
        method,
    }
}

fn assess_detail(
    file: &ProjectFile,
    fam: &Family,
    basis: &ResolvedBasis,
    checks: &Checks,
    det: &Detail,
    hist: &DetailHistory,
) -> DetailResult {
    let entry = det.detail.as_ref().and_then(|k| fam.entry(k));
    let fy = file
        .materials
        .get(&det.material)
        .map(|m| m.fy_mpa)
        .unwrap_or(f64::NAN);
    let mut warnings = Vec::new();
    let mut notes = Vec::new();
    let case_key = det
        .mean_stress_case
        .clone()
        .or_else(|| entry.and_then(|e| e.mean_stress_case.clone()))
        .unwrap_or_else(|| fam.mean_stress.default_case.clone());
    let case = &fam.mean_stress.cases[&case_key];

    let mut setups = Vec::new();
    for (comp, input, h) in [
        (Component::Normal, &det.normal, &hist.normal),
        (Component::Shear, &det.shear, &hist.shear),
    ] {
        let (Some(ci), Some(h)) = (input, h) else {
            continue;
        };
        let from_cat = entry.and_then(|e| e.category(comp));
        let (category, source) = match (ci.category, from_cat) {
            (Some(hand), Some(cat)) if hand != cat => {
                warnings.push(Warning {
                    code: "category-contradicts-catalogue".into(),
                    message: format!(
                        "{} category {hand} set by hand differs from the catalogue's {cat} for `{}`; the hand value is used",
                        comp.as_str(),
                        entry.map(|e| e.key.as_str()).unwrap_or("")
                    ),
                });
                (hand, "hand-over-catalogue")
            }
            (Some(hand), Some(_)) => (hand, "catalogue"),
            (Some(hand), None) => {
                notes.push(format!(
                    "{} category {hand} assigned by the engineer without a catalogue entry.",
                    comp.as_str()
                ));
                (hand, "hand")
            }
            (None, Some(cat)) => (cat, "catalogue"),
            (None, None) => (f64::NAN, "missing"),
        };
        setups.push(ComponentSetup {
            comp,
            category,
            category_source: source.into(),
            catalogue_category: from_cat,
            size: size_correction(fam, det, entry, comp),
            case_key: case_key.clone(),
            case,
            history: h,
        });
    }

    let gff = basis.gamma_ff.value;
    let gmf = basis.gamma_mf.value;
    let years = basis.design_life_years;
    let mut prepared: Vec<(Prepared, f64)> = Vec::new();
    let mut comps = Vec::new();
    let mut outside = false;
    for s in &setups {
        let segs = fam
            .segments(s.comp, basis.variant.as_deref())
            .unwrap_or(&fam.curves.get(s.comp).segments);
        let def = fam.curves.get(s.comp);
        let corrected = s.size.factor * s.category;
        // Design resistance ΔσC,d = ks·ΔσC/γMf (EN 1993-1-9 eq. (8.2) denominator, 7.2.2)
        let design_ref = corrected / gmf;
        let characteristic = SnCurve::new(segs, fam.reference_cycles, corrected);
        let design = characteristic.scaled(1.0 / gmf);
        let unit = characteristic.scaled(1.0 / corrected);
        let ca_limit_ratio = def
            .constant_amplitude_limit_knee
            .map(|k| unit.knees[k - 1].1);
        let ca_limit = ca_limit_ratio.map(|r| r * design_ref);

        let validity_limit = fy
            * match s.comp {
                Component::Normal => fam.validity.normal_fy_factor,
                Component::Shear => fam.validity.shear_fy_factor,
            };
        let mut blocks = Vec::with_capacity(s.history.blocks.len());
        let mut loads = Vec::with_capacity(s.history.blocks.len());
        let mut acted = false;
        let mut max_range: f64 = 0.0;
        for b in &s.history.blocks {
            let f = mean_stress_factor(s.case, b.max_mpa, b.min_mpa);
            if b.max_mpa.is_some() && (f - 1.0).abs() > 1e-15 {
                acted = true;
            }
            let eff = f * b.range_mpa;
            // Design range γFf·Δσ_eff (EN 1993-1-9 eq. (8.2) numerator)
            let design_range = gff * eff;
            max_range = max_range.max(gff * b.range_mpa);
            loads.push((design_range, b.cycles_per_year));
            let stress_ratio = match (b.max_mpa, b.min_mpa) {
                // stress ratio R = σmin/σmax (common practice)
                (Some(hi), Some(lo)) if hi != 0.0 => Some(lo / hi),
                _ => None,
            };
            blocks.push(BlockResult {
                event: b.event.clone(),
                origin: b.origin.into(),
                range_mpa: b.range_mpa,
                max_mpa: b.max_mpa,
                min_mpa: b.min_mpa,
                mean_mpa: b.mean_mpa(),
                // amplitude σa = Δσ/2 (common practice)
                amplitude_mpa: 0.5 * b.range_mpa,
                stress_ratio,
                mean_stress_factor: f,
                effective_range_mpa: eff,
                design_range_mpa: design_range,
                cycles_per_year: b.cycles_per_year,
                cycles_design_life: b.cycles_per_year * years,
                segment: None,
                endurance_cycles: None,
                damage: 0.0,
            });
        }
        // Constant amplitude: every block has the same design range.
        let constant_amplitude = !loads.is_empty()
            && loads
                .iter()
                .all(|(r, _)| (r - loads[0].0).abs() <= 1e-12 * loads[0].0);
        let ca_ratio = if constant_amplitude {
            ca_limit_ratio
        } else {
            None
        };
        let ca_applied = match ca_limit {
            Some(lim) => constant_amplitude && loads[0].0 <= lim,
            None => false,
        };
        let mut damage = 0.0;
        let mut below = 0.0;
        let nseg = design.slopes.len();
        let mut bands: Vec<(f64, f64)> = vec![(0.0, 0.0); nseg];
        for b in &mut blocks {
            match design.endurance(b.design_range_mpa) {
                Some((n, seg)) => {
                    b.segment = Some(seg);
                    b.endurance_cycles = Some(n);
                    if !ca_applied {
                        // Palmgren-Miner: Dᵢ = nᵢ/Nᵢ (EN 1993-1-9 A.5, common practice)
                        b.damage = b.cycles_design_life / n;
                    }
                    bands[seg - 1].0 += b.cycles_design_life;
                    bands[seg - 1].1 += b.damage;
                }
                None => below += b.cycles_design_life,
            }
            damage += b.damage;
        }
        let sym = fam.range_symbol.get(s.comp);
        let knee_syms: Vec<String> = design
            .to_result()
            .knees
            .iter()
            .enumerate()
            .map(|(i, k)| {
                k.symbol
                    .clone()
                    .unwrap_or_else(|| format!("knee {}", i + 1))
            })
            .collect();
        let mut damage_by_band: Vec<BandDamage> = bands
            .iter()
            .enumerate()
            .map(|(i, &(cyc, d))| {
                let upper = if i == 0 { None } else { knee_syms.get(i - 1) };
                let lower = knee_syms.get(i);
                let label = match (lower, upper) {
                    (Some(l), None) => format!("{sym} ≥ {l} (m = {})", design.slopes[i]),
                    (Some(l), Some(u)) => format!("{l} ≤ {sym} < {u} (m = {})", design.slopes[i]),
                    (None, Some(u)) => format!("{sym} < {u} (m = {})", design.slopes[i]),
                    (None, None) => format!("all ranges (m = {})", design.slopes[i]),
                };
                BandDamage {
                    label,
                    cycles_design_life: cyc,
                    damage: d,
                }
            })
            .collect();
        if design.cut_off {
            damage_by_band.push(BandDamage {
                label: format!(
                    "{sym} < {} (below cut-off, no damage)",
                    knee_syms.last().cloned().unwrap_or_default()
                ),
                cycles_design_life: below,
                damage: 0.0,
            });
        }
        let total_cycles: f64 = blocks.iter().map(|b| b.cycles_design_life).sum();
        if below > 0.0 && !ca_applied {
            warnings.push(Warning {
                code: "cycles-below-cut-off".into(),
                message: format!(
                    "{} of {} {} cycles over the design life lie below the cut-off {} = {:.1} MPa and are ignored",
                    fmt_cycles(below),
                    fmt_cycles(total_cycles),
                    s.comp.as_str(),
                    knee_syms.last().cloned().unwrap_or_default(),
                    design.knees.last().map(|k| k.1).unwrap_or(0.0)
                ),
            });
        }
        if ca_applied {
            notes.push(format!(
                "Constant-amplitude {} loading at or below the constant-amplitude fatigue limit {:.1} MPa: no damage is counted.",
                s.comp.as_str(),
                ca_limit.unwrap_or(0.0)
            ));
        }
        if max_range > validity_limit {
            outside = true;
            warnings.push(Warning {
                code: "validity-limit-exceeded".into(),
                message: format!(
                    "largest {} range γFf·{sym} = {:.1} MPa exceeds the validity limit {:.1} MPa ({}): outside the nominal-stress high-cycle method, a low-cycle fatigue check is needed",
                    s.comp.as_str(),
                    max_range,
                    validity_limit,
                    fam.validity.source
                ),
            });
        }
        let rule_can_act = s.case.compressive_fraction.is_some_and(|f| f < 1.0)
            || s.case
                .enhancement_points
                .as_ref()
                .is_some_and(|p| !p.is_empty());
        if rule_can_act && s.history.blocks.iter().any(|b| b.max_mpa.is_none()) {
            warnings.push(Warning {
                code: "mean-stress-not-applied".into(),
                message: format!(
                    "mean-stress case `{}` cannot act on {} blocks given as a range only; the full range is used for them",
                    s.case_key,
                    s.comp.as_str()
                ),
            });
        }
        let m1 = design.slopes[0];
        let damage_per_year = damage / years;
        // Equivalent range at the reference cycles: γFf·ΔσE,2 = ΔσC,d·D^(1/m1) (EN 1993-1-9 eq. (8.2), A.5)
        let design_equivalent = design_ref * damage.powf(1.0 / m1);
        comps.push(ComponentResult {
            component: s.comp.as_str().into(),
            symbol: sym.clone(),
            category_symbol: fam.category_symbol.get(s.comp).clone(),
            category_mpa: s.category,
            category_source: s.category_source.clone(),
            catalogue_category_mpa: s.catalogue_category,
            size: s.size.clone(),
            mean_stress: MeanStressCorrection {
                case: s.case_key.clone(),
                case_name: s.case.name.clone(),
                rule: if s.case.compressive_fraction.is_some() {
                    "compressive-fraction".into()
                } else {
                    "enhancement".into()
                },
                source: fam.mean_stress.source.clone(),
                acted,
            },
            corrected_category_mpa: corrected,
            gamma_mf: gmf,
            gamma_ff: gff,
            design_category_mpa: design_ref,
            characteristic_curve: characteristic.to_result(),
            design_curve: design.to_result(),
            constant_amplitude_limit_mpa: ca_limit,
            constant_amplitude_rule_applied: ca_applied,
            blocks,
            damage_by_band,
            damage_per_year,
            damage,
            damage_limit: checks.dlim,
            equivalent_slope_m: m1,
            equivalent_range_mpa: design_equivalent / gff,
            design_equivalent_range_mpa: design_equivalent,
            range_ratio: checks.ratio(damage, m1),
            utilisation: checks.utilisation(damage, m1),
            life_years: if damage_per_year > 0.0 {
                // life = D_lim / (D per year) (Palmgren-Miner, linear in time)
                Some(checks.dlim / damage_per_year)
            } else {
                None
            },
            required_category_mpa: None,
            cycles_design_life: total_cycles,
            cycles_below_cut_off: below,
            max_range_mpa: max_range,
            validity_limit_mpa: validity_limit,
            counted: s.history.counted.clone(),
        });
        prepared.push((
            Prepared {
                unit,
                ca_ratio,
                loads,
            },
            design_ref,
        ));
    }

    // Verification over the design life.
    let parts: Vec<(f64, f64, Component)> = comps
        .iter()
        .zip(&setups)
        .map(|(c, s)| (c.damage, c.equivalent_slope_m, s.comp))
        .collect();
    let (utilisation, governing_check) = checks.governing(&parts);
    let interaction = match (checks.interaction, parts.len()) {
        (Some((en, es, lim)), 2) => {
            let rn = checks.ratio(parts[0].0, parts[0].1);
            let rs = checks.ratio(parts[1].0, parts[1].1);
            Some(InteractionResult {
                normal_ratio: rn,
                shear_ratio: rs,
                normal_exponent: en,
                shear_exponent: es,
                value: rn.powf(en) + rs.powf(es),
                limit: lim,
                source: basis
                    .interaction
                    .as_ref()
                    .map(|i| i.source.clone())
                    .unwrap_or_default(),
            })
        }
        _ => None,
    };

    // Life: the largest number of years for which the governing check passes.
    let per_year: Vec<(f64, f64, Component)> = prepared
        .iter()
        .zip(&parts)
        .map(|((p, r), part)| (p.damage_per_year(*r, 1.0), part.1, part.2))
        .collect();
    let life_years = if per_year.iter().all(|p| p.0 <= 0.0) {
        None
    } else {
        sup_passing(|t| {
            let at: Vec<_> = per_year.iter().map(|&(d, m, c)| (d * t, m, c)).collect();
            checks.governing(&at).0
        })
    };

    // Reserve factor: the largest factor on all ranges for which the check passes.
    let check_at = |k: f64, cats: &[f64]| -> f64 {
        let at: Vec<_> = prepared
            .iter()
            .zip(&parts)
            .zip(cats)
            .map(|(((p, _), part), &r)| (p.damage_per_year(r, k) * years, part.1, part.2))
            .collect();
        checks.governing(&at).0
    };
    let refs: Vec<f64> = prepared.iter().map(|(_, r)| *r).collect();
    let reserve_factor = if prepared.is_empty() {
        None
    } else {
        sup_passing(|k| check_at(k, &refs))
    };

    // Required category, per component: lowest listed category that passes with the
    // other components unchanged.
    for (i, s) in setups.iter().enumerate() {
        let mut cats = fam.curves.get(s.comp).categories_mpa.clone();
        cats.sort_by(|a, b| a.total_cmp(b));
        let found = cats.into_iter().find(|&cat| {
            let mut r = refs.clone();
            r[i] = s.size.factor * cat / gmf;
            check_at(1.0, &r) <= 1.0 + PASS_TOLERANCE
        });
        comps[i].required_category_mpa = found;
    }
    let governing_comp = match governing_check.as_str() {
        "interaction" => comps
            .iter()
            .max_by(|a, b| a.utilisation.total_cmp(&b.utilisation))
            .map(|c| c.component.clone()),
        other => Some(other.to_string()),
    };
    let required_category = comps
        .iter()
        .find(|c| Some(&c.component) == governing_comp.as_ref())
        .and_then(|c| c.required_category_mpa);

    let status = if outside {
        Status::OutsideMethod
    } else if utilisation <= 1.0 + PASS_TOLERANCE {
        Status::Pass
    } else {
        Status::Fail
    };
    let damage = comps.iter().map(|c| c.damage).fold(0.0, f64::max);
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
        utilisation,
        governing_check,
        damage,
        damage_limit: checks.dlim,
        life_years,
        reserve_factor,
        required_category,
        components: comps,
        interaction,
        warnings,
        notes,
    }
}

/// Cycles in engineering form, e.g. 7.50e5.
pub fn fmt_cycles(n: f64) -> String {
    format!("{n:.3e}")
}

#[cfg(test)]
mod tests;
