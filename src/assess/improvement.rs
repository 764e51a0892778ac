//! A detail's weld improvement (IIW post-weld treatment): the improved normal-stress
//! category from the family's method and limits. The input checks refuse a detail
//! outside the limits, so here the gain is only computed and stated.

use crate::catalogue::Family;
use crate::input::{ComponentInput, Detail};
use crate::results::ImprovementUsed;

/// The improvement of a detail's normal-stress category, if it names one that applies.
pub(super) fn improved(
    fam: &Family,
    det: &Detail,
    ci: &ComponentInput,
    category: f64,
    fy: f64,
) -> Option<ImprovementUsed> {
    let name = det.improvement.as_ref()?;
    let set = fam.improvements.as_ref()?;
    let m = set.methods.get(name)?;
    let g = m
        .gain(
            &fam.curves.normal.categories_mpa,
            category,
            fy,
            det.thickness_mm,
            ci.stated_max_stress_ratio(),
        )
        .ok()?;
    Some(ImprovementUsed {
        method: name.clone(),
        name: m.name.clone(),
        as_welded_category_mpa: category,
        improved_category_mpa: g.improved_mpa,
        factor: g.factor,
        class_steps: g.class_steps,
        working: g.working,
        curve_variant: m.curve_variant.clone(),
        source: format!("{}; {}", m.source, set.source),
    })
}

/// The note that states the improvement on the detail sheet.
pub(super) fn note(i: &ImprovementUsed) -> String {
    format!(
        "Normal-stress category improved by {} (`{}`): {} MPa as welded, {} MPa improved ({}){} — {}.",
        i.name,
        i.method,
        crate::files::short_num(i.as_welded_category_mpa),
        crate::files::short_num(i.improved_category_mpa),
        i.working,
        i.curve_variant
            .as_ref()
            .map(|v| format!(", on the curve `{v}`"))
            .unwrap_or_default(),
        i.source
    )
}
