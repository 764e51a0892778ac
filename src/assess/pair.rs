//! The AASHTO LRFD pair of checks (verification form `aashto-pair`): Fatigue I for
//! infinite life and Fatigue II for finite life, with the cycle count from the
//! single-lane truck traffic, and which of the two is in force.
//!
//! The Fatigue II damage sum itself is the ordinary Palmgren-Miner sum on the
//! category's m = 3 class curve with γFf = the Fatigue II factor: the block cycles
//! are scaled so that they add up to the truck-passage cycles (their given counts
//! act as weights of the ranges). This module states both checks in their own
//! measures and replaces the detail's verdict by the check in force.

use super::verify::Verdict;
use super::ResolvedBasis;
use crate::catalogue::Family;
use crate::input::{Detail, ProjectFile};
use crate::results::{CheckResult, ComponentResult, TruckPairResult};

/// The pair's project inputs and factors, resolved once per project.
#[derive(Debug, Clone)]
pub struct PairBasis {
    pub fatigue_i_factor: f64,
    pub adtt_single_lane: f64,
    pub cycles_per_truck_passage: f64,
    pub days_per_year: f64,
    pub ksi_to_mpa: f64,
}

/// The pair basis of a project whose family verifies by the pair.
pub(super) fn resolve(file: &ProjectFile, fam: &Family) -> Option<PairBasis> {
    let p = fam.aashto_pair()?;
    Some(PairBasis {
        fatigue_i_factor: p.fatigue_i_factor.value,
        // the input checks require both for a pair family
        adtt_single_lane: file.basis.adtt_single_lane.unwrap_or(f64::NAN),
        cycles_per_truck_passage: file.basis.cycles_per_truck_passage.unwrap_or(f64::NAN),
        days_per_year: p.days_per_year,
        ksi_to_mpa: p.ksi_to_mpa,
    })
}

impl PairBasis {
    /// n of a detail: its own, else the project's.
    fn cycles_per_truck(&self, det: &Detail) -> f64 {
        det.cycles_per_truck_passage
            .unwrap_or(self.cycles_per_truck_passage)
    }

    /// Stress-range cycles per year: 365·n·(ADTT)SL (AASHTO LRFD eq. 6.6.1.2.5-3 for
    /// one year, from memory).
    pub(super) fn cycles_per_year(&self, det: &Detail) -> f64 {
        self.days_per_year * self.cycles_per_truck(det) * self.adtt_single_lane
    }
}

/// Factor on a component's given cycles so that they add up to the truck-passage
/// cycles per year (the given counts weight the ranges); 1 outside the pair form.
pub(super) fn cycles_scale(basis: &ResolvedBasis, det: &Detail, given_per_year: f64) -> f64 {
    match &basis.pair {
        Some(p) if given_per_year > 0.0 => p.cycles_per_year(det) / given_per_year,
        _ => 1.0,
    }
}

fn check(name: &str, form: &str, value: f64, utilisation: f64, source: &str) -> CheckResult {
    CheckResult {
        name: name.into(),
        form: form.into(),
        value,
        limit: 1.0,
        utilisation,
        passes: value <= 1.0 + super::verify::PASS_TOLERANCE,
        source: source.into(),
    }
}

/// State the pair for a detail and make the check in force its verdict. `None` when
/// the family has no pair form or the detail has no normal-stress component.
pub(super) fn verify_pair(
    fam: &Family,
    basis: &ResolvedBasis,
    det: &Detail,
    comps: &[ComponentResult],
    v: &mut Verdict,
) -> Option<TruckPairResult> {
    let pb = basis.pair.as_ref()?;
    let pair = fam.aashto_pair()?;
    let (letter, cat) = fam.pair_category(det.detail.as_deref()?)?;
    let comp = comps.iter().find(|c| c.component == "normal")?;
    let class = fam.curves.normal.classes.get(&cat.class)?;
    let log_a = class.curves.values().next()?.first()?.log_a?;
    let years = basis.design_life_years;
    let n = pb.cycles_per_truck(det);
    let k = pb.ksi_to_mpa;
    // N = 365·Y·n·(ADTT)SL (AASHTO LRFD eq. 6.6.1.2.5-3, from memory)
    let big_n = pb.days_per_year * years * n * pb.adtt_single_lane;
    // A in MPa³ of the class curve, log10 A = log a (the loader checks it against
    // A[ksi³]·6.894757³, common practice)
    let a_mpa3 = 10f64.powf(log_a);
    let blocks = comp.blocks.iter().filter(|b| b.cycles_design_life > 0.0);
    let (mut sum_n, mut sum_n3, mut max_range) = (0.0, 0.0, 0.0f64);
    for b in blocks {
        sum_n += b.cycles_design_life;
        sum_n3 += b.cycles_design_life * b.effective_range_mpa.powi(3);
        max_range = max_range.max(b.effective_range_mpa);
    }
    // effective range (Σ nᵢ·Δfᵢ³ / Σ nᵢ)^(1/3) (AASHTO LRFD C6.6.1.2.5, from memory)
    let eff = if sum_n > 0.0 {
        (sum_n3 / sum_n).cbrt()
    } else {
        0.0
    };
    let g1 = pb.fatigue_i_factor;
    let g2 = basis.gamma_ff.value;
    // Fatigue I: γ·(Δf)max ≤ (ΔF)TH (AASHTO LRFD eq. 6.6.1.2.2-1 with 6.6.1.2.5-1, from memory)
    let design_i = g1 * max_range;
    let ratio_i = design_i / cat.threshold_mpa;
    // Fatigue II: γ·(Δf)eff ≤ (A/N)^(1/3) (AASHTO LRFD eq. 6.6.1.2.2-1 with 6.6.1.2.5-2, from memory)
    let design_ii = g2 * eff;
    let resistance = (a_mpa3 / big_n).cbrt();
    let ratio_ii = design_ii / resistance;
    // design life over finite life: the ratio cubed, m = 3 (AASHTO LRFD eq. 6.6.1.2.5-2)
    let u_ii = ratio_ii.powi(3);
    let life_ii = (u_ii > 0.0).then(|| years / u_ii);
    // infinite life when (ADTT)SL exceeds the category's 75-year value (AASHTO LRFD
    // 6.6.1.2.3, Table 6.6.1.2.3-2, from memory)
    let infinite = pb.adtt_single_lane > cat.infinite_life_adtt;
    let c1 = check(
        "fatigue-i",
        "infinite-life",
        ratio_i,
        ratio_i,
        &pair.fatigue_i_source,
    );
    let c2 = check(
        "fatigue-ii",
        "finite-life",
        ratio_ii,
        u_ii,
        &pair.fatigue_ii_source,
    );
    let in_force = if infinite { &c1 } else { &c2 };
    let in_force_passes = in_force.passes;
    let in_force_name = in_force.name.clone();
    let in_force_u = in_force.utilisation;
    let in_force_ratio = in_force.value;
    // the weakest letter whose own check in force passes, by (A, threshold)
    let required = pair
        .categories
        .iter()
        .filter(|(_, c)| {
            let a = fam
                .curves
                .normal
                .classes
                .get(&c.class)
                .and_then(|k| k.curves.values().next())
                .and_then(|s| s.first())
                .and_then(|s| s.log_a)
                .map_or(0.0, |la| 10f64.powf(la));
            if pb.adtt_single_lane > c.infinite_life_adtt {
                design_i <= c.threshold_mpa * (1.0 + super::verify::PASS_TOLERANCE)
            } else {
                design_ii <= (a / big_n).cbrt() * (1.0 + super::verify::PASS_TOLERANCE)
            }
        })
        .min_by(|x, y| {
            (x.1.constant_ksi3, x.1.threshold_mpa)
                .partial_cmp(&(y.1.constant_ksi3, y.1.threshold_mpa))
                .unwrap_or(std::cmp::Ordering::Equal)
        });
    let in_force_reason = if infinite {
        format!(
            "(ADTT)SL = {} exceeds {} for category {letter}: infinite life, Fatigue I is in force",
            pb.adtt_single_lane, cat.infinite_life_adtt
        )
    } else {
        format!(
            "(ADTT)SL = {} does not exceed {} for category {letter}: finite life, Fatigue II is in force",
            pb.adtt_single_lane, cat.infinite_life_adtt
        )
    };
    v.checks = vec![c1.clone(), c2.clone()];
    v.passes = Some(in_force_passes);
    v.governing_check = in_force_name.clone();
    v.utilisation = in_force_u;
    // life: the finite life under the Fatigue II load, Y/ratio³ (eq. 6.6.1.2.5-2
    // solved for Y); with Fatigue I in force and passing the code asks no finite life
    v.life_years = life_ii;
    // the factor on all ranges that brings the check in force to 1: 1/ratio (both
    // checks are linear in the ranges)
    v.reserve_factor = (in_force_ratio > 0.0).then(|| 1.0 / in_force_ratio);
    v.reserve_factor_upper = None;
    v.required_category = required
        .and_then(|(_, c)| fam.curves.normal.classes.get(&c.class))
        .map(|k| k.category_mpa);
    Some(TruckPairResult {
        category_letter: letter.to_string(),
        adtt_single_lane: pb.adtt_single_lane,
        cycles_per_truck_passage: n,
        cycles_design_life: big_n,
        constant_ksi3: cat.constant_ksi3,
        constant_mpa3: a_mpa3,
        threshold_ksi: cat.threshold_ksi,
        threshold_mpa: cat.threshold_mpa,
        infinite_life_adtt: cat.infinite_life_adtt,
        in_force: in_force_name,
        in_force_reason,
        fatigue_i_factor: g1,
        max_range_mpa: max_range,
        fatigue_i_design_range_mpa: design_i,
        // ksi = MPa / 6.894757 (common practice)
        fatigue_i_design_range_ksi: design_i / k,
        fatigue_i_ratio: ratio_i,
        fatigue_i_passes: c1.passes,
        fatigue_ii_factor: g2,
        effective_range_mpa: eff,
        fatigue_ii_design_range_mpa: design_ii,
        fatigue_ii_design_range_ksi: design_ii / k,
        finite_life_resistance_mpa: resistance,
        finite_life_resistance_ksi: resistance / k,
        fatigue_ii_ratio: ratio_ii,
        fatigue_ii_passes: c2.passes,
        fatigue_ii_life_years: life_ii,
        required_letter: required.map(|(l, _)| l.clone()),
        fatigue_i_source: pair.fatigue_i_source.clone(),
        fatigue_ii_source: pair.fatigue_ii_source.clone(),
        cycles_source: pair.cycles_source.clone(),
        effective_range_source: pair.effective_range_source.clone(),
        in_force_source: pair.in_force_source.clone(),
    })
}

/// The pair's rules for the basis section, each with its clause.
pub(super) fn method_lines(fam: &Family, basis: &ResolvedBasis) -> Vec<String> {
    let (Some(pb), Some(p)) = (&basis.pair, fam.aashto_pair()) else {
        return Vec::new();
    };
    vec![
        format!(
            "Truck traffic: single-lane ADTT (ADTT)SL = {} trucks a day, n = {} stress-range cycles per truck passage unless a detail gives its own; N = {}·Y·n·(ADTT)SL over the design life Y = {} years ({}). The block cycles given in the project weight the ranges and are scaled to these cycles.",
            pb.adtt_single_lane, pb.cycles_per_truck_passage, p.days_per_year, basis.design_life_years, p.cycles_source
        ),
        format!(
            "Fatigue I (infinite life): γ·(Δf)max ≤ (ΔF)TH with γ = {} on the largest range ({}; {}).",
            pb.fatigue_i_factor, p.fatigue_i_factor.source, p.fatigue_i_source
        ),
        format!(
            "Fatigue II (finite life): γ·(Δf)eff ≤ (A/N)^(1/3) with γ = {} ({}); (Δf)eff = (Σ nᵢ·Δfᵢ³ / Σ nᵢ)^(1/3) ({}). This equals the Palmgren-Miner sum Σ nᵢ·(γΔfᵢ)³/A ≤ 1 on the m = 3 curve, which the damage columns state.",
            basis.gamma_ff.value, p.fatigue_ii_source, p.effective_range_source
        ),
        format!(
            "Check in force: {}. Both checks are stated; the one in force decides pass or fail, utilisation, life and reserve factor (Fatigue I: utilisation is its stress ratio, without a time scale; Fatigue II: utilisation is design life over finite life, the ratio cubed). The life stated is the finite life under the Fatigue II load whichever check is in force.",
            p.in_force_source
        ),
        format!(
            "Units: the code gives A in ksi³ and (ΔF)TH in ksi; A[MPa³] = A[ksi³]·{k}³ and (ΔF)TH[MPa] = (ΔF)TH[ksi]·{k} (1 ksi = {k} MPa, common practice).",
            k = p.ksi_to_mpa
        ),
    ]
}
