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
    /// Measure of a component's check under variable amplitude, and its source.
    pub check_form: UtilisationForm,
    pub check_source: String,
    /// Constant amplitude: measure, the damage limit it is equivalent to, and source.
    pub constant_amplitude: (UtilisationForm, f64, String),
    /// The project's environment for published classes (a detail may name its own).
    pub environment: Option<String>,
    /// Standard deviations of log N below the mean, for families publishing mean curves.
    pub std_devs: Option<FactorUsed>,
    /// The AASHTO pair's traffic and factors (families of the `aashto-pair` form).
    pub pair: Option<super::pair::PairBasis>,
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
    let damage_limit = factor(dl, &dl_source, &b.damage_limit);
    let v = &fam.verification;
    // Constant amplitude follows the family's own rule where it has one (IIW: on the
    // range, D <= 1); otherwise the same check and limit as variable amplitude.
    let constant_amplitude = match &v.constant_amplitude {
        Some(ca) => (ca.form, ca.damage_limit, ca.source.clone()),
        None => (v.utilisation, damage_limit.value, v.source.clone()),
    };
    ResolvedBasis {
        design_life_years: b.design_life_years,
        gamma_ff: factor(pf.gamma_ff.value, &pf.gamma_ff.source, &b.gamma_ff),
        gamma_mf: factor(gmf, &gmf_source, &b.gamma_mf),
        damage_limit,
        interaction,
        variant: b.curve_variant.clone(),
        check_form: v.utilisation,
        check_source: v.source.clone(),
        constant_amplitude,
        environment: fam.environment_in_force(None, b.environment.as_deref()),
        std_devs: fam
            .design_curve
            .as_ref()
            .map(|d| factor(d.default_std_devs, &d.source, &b.std_devs_below_mean)),
        pair: super::pair::resolve(file, fam),
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
    if fam.curves.normal.classes.len() + fam.curves.shear.classes.len() > 0 {
        method.push(format!(
            "Each {} stands for a class whose curve the code publishes as log N = log a − m·log Δσ per segment; that class curve (its own slopes and knees) is used, reduced by ks and γMf as above.",
            fam.category_symbol.normal
        ));
    }
    if let Some(envs) = &fam.environments {
        let env = basis.environment.clone().unwrap_or(envs.default.clone());
        method.push(format!(
            "Environment `{env}` ({}) for every detail that names none; environments: {} ({}).",
            envs.cases.get(&env).map_or("", |e| e.name.as_str()),
            envs.cases
                .iter()
                .map(|(k, e)| format!("`{k}` = {}", e.name))
                .collect::<Vec<_>>()
                .join("; "),
            envs.source
        ));
    }
    if let Some(k) = &basis.std_devs {
        method.push(format!(
            "Design curves lie {} standard deviations of log N below the mean curves (log a_d = log a − k·σ(log N); {}{}).",
            k.value,
            k.source,
            k.reason
                .as_ref()
                .map(|r| format!("; reason: {r}"))
                .unwrap_or_default()
        ));
    }
    method.push(format!(
        "Each stress component is checked {} ({}).",
        form_text(basis.check_form, basis.damage_limit.value),
        basis.check_source
    ));
    method.extend(super::pair::method_lines(fam, basis));
    if let Some(i) = &basis.interaction {
        method.push(format!(
            "Where normal and shear stress act together, (γFf·ΔσE,2/ΔσC,d)^{} + (γFf·ΔτE,2/ΔτC,d)^{} must not exceed {} ({}).",
            i.normal_exponent, i.shear_exponent, i.limit, i.source
        ));
    }
    method.push("The reserve factor is the largest factor on all stress ranges for which every check still passes; the required category is the lowest listed category that passes.".into());
    let ms = &fam.mean_stress;
    let mean_stress_rule = format!(
        "{}; cases: {}; default `{}`. The rule acts on normal stress only, and only on blocks that give max and min (or range and mean); shear ranges count in full.",
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
        utilisation_form: fam.verification.utilisation.as_str().into(),
        verification_source: fam.verification.source.clone(),
        interaction: basis.interaction.clone(),
        curves,
        thickness_rule,
        mean_stress_rule,
        validity_rule: format!(
            "γFf·Δσ ≤ {}·fy and γFf·Δτ ≤ {:.4}·fy ({})",
            v.normal_fy_factor, v.shear_fy_factor, v.source
        ),
        amplitude_rule: amplitude_rule(basis),
        constant_amplitude_form: basis.constant_amplitude.0.as_str().into(),
        constant_amplitude_damage_limit: basis.constant_amplitude.1,
        utilisation_rule: UTILISATION_RULE.into(),
        method,
        judgements: judgements(fam, basis),
    }
}

/// What "utilisation" means in every family's results.
pub const UTILISATION_RULE: &str = "Utilisation is the design life divided by the fatigue life, the time at which the first check reaches its limit: for one stress component it is D/D_lim, for combined stresses the interaction check's share; it grows in proportion to time, so life = design life / utilisation, and a detail passes when it is at most 1.0. Each check is also stated in its own measure (stress ratio, damage ratio or interaction sum); the governing check is the one with the largest utilisation, which also limits life and reserve factor.";

/// A check's form in words.
fn form_text(form: UtilisationForm, dlim: f64) -> String {
    match form {
        UtilisationForm::RangeRatio => format!("by the equivalent-range ratio γFf·ΔσE,2/ΔσC,d = (D/D_lim)^(1/m₁) ≤ 1.0 with D_lim = {dlim}, ΔσE,2 being the constant range at the reference cycles that uses the same fraction of the damage limit on the first curve segment"),
        UtilisationForm::DamageRatio => format!("by the Palmgren-Miner ratio D/D_lim ≤ 1.0 with D_lim = {dlim}"),
        UtilisationForm::AashtoPair => format!("by the AASHTO LRFD pair, Fatigue I and Fatigue II, stated below; the Fatigue II damage sum is the Palmgren-Miner sum with D_lim = {dlim}"),
        UtilisationForm::RangeAtCycles => format!("on the range: the design range γFf·Δσ must not exceed the design resistance ΔσR,d at the applied number of cycles (equivalent to D ≤ {dlim})"),
    }
}

/// How constant amplitude is told apart and verified.
fn amplitude_rule(basis: &ResolvedBasis) -> String {
    let (form, dlim, source) = &basis.constant_amplitude;
    format!(
        "A component is constant amplitude when the project file says so (`amplitude: constant`), or, when it says nothing, when every block is given in the file with one and the same design range; blocks of different ranges and every counted record are variable amplitude. The constant-amplitude fatigue limit acts on constant-amplitude loading only. Constant amplitude is checked {} ({source}); variable amplitude {} ({}).",
        form_text(*form, *dlim),
        form_text(basis.check_form, basis.damage_limit.value),
        basis.check_source
    )
}

/// The judgement calls the engine makes, stated for the checker.
fn judgements(fam: &Family, basis: &ResolvedBasis) -> Vec<String> {
    let mut out = Vec::new();
    for c in [Component::Normal, Component::Shear] {
        let def = fam.curves.get(c);
        let segs = fam
            .segments(c, basis.variant.as_deref())
            .unwrap_or(&def.segments);
        if let Some(k) = def.constant_amplitude_limit_knee {
            if let Some(next) = segs.get(k) {
                let sym = segs[k - 1]
                    .knee_symbol
                    .clone()
                    .unwrap_or_else(|| format!("knee {k}"));
                out.push(format!(
                    "Under variable amplitude, {} cycles below {sym} still damage, on the m = {} segment{}; only constant-amplitude loading at or below {sym} is free of damage.",
                    c.as_str(),
                    next.slope_m,
                    if next.end_cycles.is_some() { " down to the cut-off" } else { "" }
                ));
            }
        }
    }
    if fam
        .mean_stress
        .cases
        .values()
        .any(|c| c.enhancement_points.as_ref().is_some_and(|p| !p.is_empty()))
    {
        out.push("A fully compressive cycle (σmax ≤ 0) takes the largest enhancement f(R) of its mean-stress case, that of the lowest stress ratio given (common practice; the code defines f(R) by the stress ratio, which does not order compressive cycles).".into());
    }
    out.push(
        "Mean-stress rules act on normal stress only; shear stress ranges count in full.".into(),
    );
    out.push("Every cycle of a counted record enters the damage sum and the mean-stress rule at its own range and mean (EN 1993-1-9 A.6, term by term); the range-mean matrix is for display. The reserve-factor and required-category searches scale every cycle's design range γFf·Δσ_eff (both mean-stress rules depend on σmin/σmax only, so a factor on the stresses is a factor on the effective range): the count keeps the cycles in bins of design range no wider than 1 part in 2048 with the smallest and largest range of each, and the searches take each bin at its largest range, so the reserve factor is never above the exact one and at most 1 part in 2048 below it (exact where a bin holds one range; the results give, as the other end of the bracket, the factor with each bin at its smallest range), and the detail's own category is judged by the exact damage. A spectrum part holds cells only: its cells enter both the damage and the searches at their largest range.".into());
    out
}
