//! The project's basis in force: partial factors, damage limit and interaction rule
//! with their sources (or the engineer's override reasons), and the method text the
//! results state.

use crate::catalogue::{Component, Family, UtilisationForm};
use crate::input::ProjectFile;
use crate::results::*;

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

pub(super) fn basis_used(file: &ProjectFile, fam: &Family, basis: &ResolvedBasis) -> BasisUsed {
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
