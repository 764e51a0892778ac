//! The crane route (EN 1991-3 2.12 with EN 1993-1-9 eq. (8.2)): a component given by
//! the crane's stress-history class, Δσ(max) and φfat instead of a spectrum. It is
//! assessed as one block of ΔσE,2 = λ·φfat·Δσ(max) at the reference cycles over the
//! design life, on the first slope of the curve without knee or cut-off, so that
//! (D/D_lim)^(1/m1) is exactly γFf·ΔσE,2/(ΔσC/γMf) and the reserve factor and the
//! required category follow from the same check.

use std::sync::Arc;

use super::ResolvedBasis;
use crate::catalogue::{Component, CurveDef, Family, Segment};
use crate::histories::{ComponentHistory, SpectrumBlock};
use crate::input::CraneInput;
use crate::results::CraneRouteUsed;

/// The route's figures for one component; `None` when the family offers no route or
/// the class is unknown (both refused by the input checks).
pub(super) fn route(fam: &Family, comp: Component, cr: &CraneInput) -> Option<CraneRouteUsed> {
    let r = fam.crane_route.as_ref()?;
    let lambda = r.classes.get(&cr.stress_history_class)?.get(comp);
    Some(CraneRouteUsed {
        stress_history_class: cr.stress_history_class.clone(),
        lambda,
        lambda_source: r.source.clone(),
        phi_fat: cr.phi_fat,
        max_range_mpa: cr.max_range_mpa,
        // ΔσE,2 = λ·φfat·Δσ(max) (EN 1991-3 2.12.1, eq. (2.16), from memory)
        equivalent_range_mpa: lambda * cr.phi_fat * cr.max_range_mpa,
        rule: r.rule.clone(),
        check_source: r.check_source.clone(),
    })
}

/// One block of ΔσE,2 carrying the reference cycles (2·10⁶) over the design life.
pub(super) fn history(fam: &Family, basis: &ResolvedBasis, c: &CraneRouteUsed) -> ComponentHistory {
    let event: Arc<str> = format!(
        "crane route, class {}: ΔσE,2 = λ·φfat·Δσ(max)",
        c.stress_history_class
    )
    .into();
    ComponentHistory {
        blocks: vec![SpectrumBlock {
            event,
            origin: "crane-route",
            range_mpa: c.equivalent_range_mpa,
            max_mpa: None,
            min_mpa: None,
            // ΔσE,2 is defined at 2·10^6 cycles for the whole design life (EN 1993-1-9
            // 6.2(1), EN 1991-3 2.12.1, from memory)
            cycles_per_year: fam.reference_cycles / basis.design_life_years,
            damage_per_year: None,
        }],
        counted: Vec::new(),
        exact: Vec::new(),
    }
}

/// The first slope of the curve as one open segment (no knee, no cut-off).
pub(super) fn segments(def: &CurveDef) -> Vec<Segment> {
    vec![Segment {
        slope_m: def.segments[0].slope_m,
        end_cycles: None,
        knee_symbol: None,
        knee_name: None,
    }]
}

/// The note that states the route, λ and its clause on the detail sheet.
pub(super) fn note(
    fam: &Family,
    comp: Component,
    c: &CraneRouteUsed,
    basis: &ResolvedBasis,
) -> String {
    format!(
        "{} stress by the crane route: stress-history class {}, λ = {} ({}), φfat = {}, Δσ(max) = {} MPa, so ΔσE,2 = {} × {} × {} = {:.2} MPa ({}); verified as γFf·ΔσE,2 ≤ ΔσC/γMf with γFf = {} ({}). It is entered as {:.0} cycles of ΔσE,2 over the design life on the first slope of the curve.",
        comp.as_str(),
        c.stress_history_class,
        c.lambda,
        c.lambda_source,
        c.phi_fat,
        crate::files::short_num(c.max_range_mpa),
        c.lambda,
        c.phi_fat,
        crate::files::short_num(c.max_range_mpa),
        c.equivalent_range_mpa,
        c.rule,
        basis.gamma_ff.value,
        c.check_source,
        fam.reference_cycles,
    )
}
