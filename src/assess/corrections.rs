//! Corrections of a stress range before it meets the S-N curve: mean-stress factors
//! (EN 1993-1-9 7.2.1, IIW f(R)) and the size effect ks (EN 1993-1-9 7.2.2, IIW).

use crate::catalogue::{CatalogueEntry, Component, Family, MeanStressCase};
use crate::input::Detail;
use crate::results::SizeCorrection;

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

pub(super) fn size_correction(
    fam: &Family,
    det: &Detail,
    entry: Option<&CatalogueEntry>,
    comp: Component,
) -> SizeCorrection {
    let th = &fam.thickness;
    // An entry's own size rule replaces the family's reference size and the entry's
    // exponent (joint-classes/README.md, `size_rule`).
    let rule = entry.and_then(|e| e.size_rule.as_ref());
    let reference_mm = rule.map_or(th.reference_mm, |r| r.reference_mm);
    let (exponent, from) = match (
        det.thickness_exponent,
        rule.map(|r| r.exponent)
            .or(entry.and_then(|e| e.thickness_exponent)),
    ) {
        (Some(n), _) => (Some(n), "set by hand on the detail".to_string()),
        (None, Some(n)) if rule.is_some() => (
            Some(n),
            format!(
                "catalogue entry's size rule, reference {reference_mm} mm ({})",
                rule.map_or("", |r| r.source.as_str())
            ),
        ),
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
    let applies = exponent.is_some() && (!th.applies_above_reference_only || t_eff > reference_mm);
    let factor = match (applies, exponent) {
        // ks = (t_ref/t_eff)^n (EN 1993-1-9 7.2.2, IIW 3.3.2, DNV-RP-C203 2.4.3)
        (true, Some(n)) => (reference_mm / t_eff).powf(n),
        _ => 1.0,
    };
    SizeCorrection {
        applies,
        thickness_mm: t,
        effective_thickness_mm: t_eff,
        reference_mm,
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

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn case(fraction: Option<f64>, points: Option<Vec<[f64; 2]>>) -> MeanStressCase {
        MeanStressCase {
            name: "case".into(),
            compressive_fraction: fraction,
            enhancement_points: points,
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(300))]
        // The reserve-factor search scales every cycle's effective range by the factor
        // on the stresses: that holds because both rules depend on σmin/σmax only
        // (EN 1993-1-9 7.2.1(1): tensile part + 0.6 × compressive part, linear in the
        // stresses; IIW f(R), R = σmin/σmax; points of the IIW family file, from memory).
        #[test]
        fn the_mean_stress_factor_does_not_change_when_the_stresses_are_scaled(
            hi in -300.0f64..300.0,
            span in 0.01f64..400.0,
            k in 0.01f64..50.0,
        ) {
            let lo = hi - span;
            for c in [
                case(Some(0.6), None),
                case(None, Some(vec![[-1.0, 1.6], [0.5, 1.0]])),
                case(None, Some(vec![[-1.0, 1.3], [-0.25, 1.0]])),
            ] {
                let f1 = mean_stress_factor(&c, Some(hi), Some(lo));
                let fk = mean_stress_factor(&c, Some(k * hi), Some(k * lo));
                prop_assert!((f1 - fk).abs() <= 1e-12 * f1, "{f1} vs {fk}");
            }
        }
    }
}
