//! Verification of one detail: the checks over a period, and the searches for life,
//! reserve factor and required category on the same checks.

use super::component::ComponentSetup;
use super::curve::SnCurve;
use super::ResolvedBasis;
use crate::catalogue::{Component, Family, UtilisationForm};
use crate::results::{ComponentResult, InteractionResult};

/// Relative tolerance on a verification value of exactly 1.0.
pub(super) const PASS_TOLERANCE: f64 = 1e-12;

/// One component made ready for repeated damage sums (reserve factor, categories).
#[derive(Debug, Clone)]
pub(super) struct Prepared {
    /// The design curve shape with reference range 1.
    pub(super) unit: SnCurve,
    /// Constant-amplitude limit as a multiple of the reference range; `None` when the
    /// family has none or the loading is not constant amplitude.
    pub(super) ca_ratio: Option<f64>,
    /// (γFf·Δσ_eff, cycles per year) per block.
    pub(super) loads: Vec<(f64, f64)>,
}

impl Prepared {
    /// Damage per year with all ranges × k on a design curve of reference `design_ref`.
    pub(super) fn damage_per_year(&self, design_ref: f64, k: f64) -> f64 {
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
pub(super) struct Checks {
    pub(super) form: UtilisationForm,
    pub(super) dlim: f64,
    pub(super) interaction: Option<(f64, f64, f64)>,
}

impl Checks {
    /// Equivalent-range ratio (D/D_lim)^(1/m1) (EN 1993-1-9 eq. (8.2) when D_lim = 1).
    pub(super) fn ratio(&self, d: f64, m1: f64) -> f64 {
        (d / self.dlim).powf(1.0 / m1)
    }

    pub(super) fn utilisation(&self, d: f64, m1: f64) -> f64 {
        match self.form {
            UtilisationForm::RangeRatio => self.ratio(d, m1),
            UtilisationForm::DamageRatio => d / self.dlim,
        }
    }

    /// Governing value: the largest of the component utilisations and the interaction
    /// expression over its limit. `parts` is (damage, m1, component).
    pub(super) fn governing(&self, parts: &[(f64, f64, Component)]) -> (f64, String) {
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
pub(super) fn sup_passing(f: impl Fn(f64) -> f64) -> Option<f64> {
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

/// The verification of one detail over the design life, with the searches that rest on
/// it.
pub(super) struct Verdict {
    pub(super) utilisation: f64,
    pub(super) governing_check: String,
    pub(super) interaction: Option<InteractionResult>,
    pub(super) life_years: Option<f64>,
    pub(super) reserve_factor: Option<f64>,
    pub(super) required_category: Option<f64>,
}

/// Verify a detail from its assessed components; fills each component's required
/// category.
pub(super) fn verify_detail(
    fam: &Family,
    basis: &ResolvedBasis,
    checks: &Checks,
    setups: &[ComponentSetup],
    comps: &mut [ComponentResult],
    prepared: &[(Prepared, f64)],
) -> Verdict {
    let gmf = basis.gamma_mf.value;
    let years = basis.design_life_years;
    // Verification over the design life.
    let parts: Vec<(f64, f64, Component)> = comps
        .iter()
        .zip(setups)
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
    Verdict {
        utilisation,
        governing_check,
        interaction,
        life_years,
        reserve_factor,
        required_category,
    }
}
