//! Weld improvement methods of a family (IIW: burr grinding, TIG dressing, hammer and
//! needle peening, high-frequency mechanical impact): the gain on the category and the
//! limits within which the family grants it. A detail names one with `improvement:`.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::{FamilyProblem, YamlPath};

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Improvements {
    pub source: String,
    /// Catalogue keys of the detail types (weld-toe cracks) the methods apply to.
    pub applies_to: Vec<String>,
    pub methods: BTreeMap<String, Improvement>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Improvement {
    pub name: String,
    pub source: String,
    /// The gain by yield strength, the first band whose `fy_up_to_mpa` holds fy.
    pub bands: Vec<GainBand>,
    /// Steps of the category list taken off by stress ratio (HFMI): the first row whose
    /// `r_up_to` holds the largest R of the loading; beyond the last row no gain.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub stress_ratio_steps: Vec<StressRatioStep>,
    /// Largest as-welded category the method may start from.
    #[serde(default)]
    pub max_as_welded_mpa: Option<f64>,
    /// Largest category after improvement.
    #[serde(default)]
    pub max_improved_mpa: Option<f64>,
    #[serde(default)]
    pub fy_min_mpa: Option<f64>,
    #[serde(default)]
    pub fy_max_mpa: Option<f64>,
    #[serde(default)]
    pub thickness_min_mm: Option<f64>,
    #[serde(default)]
    pub thickness_max_mm: Option<f64>,
    /// Largest stress ratio R = σmin/σmax of the loading (blocks with σmax, σmin).
    #[serde(default)]
    pub max_stress_ratio: Option<f64>,
    /// A normal-stress curve variant of the family used after the improvement.
    #[serde(default)]
    pub curve_variant: Option<String>,
}

/// The gain for yield strengths up to `fy_up_to_mpa` (absent: any higher): a factor on
/// the category, or a number of steps up the category list.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct GainBand {
    #[serde(default)]
    pub fy_up_to_mpa: Option<f64>,
    #[serde(default)]
    pub factor: Option<f64>,
    #[serde(default)]
    pub class_steps: Option<u32>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct StressRatioStep {
    pub r_up_to: f64,
    pub minus_steps: u32,
}

impl Improvement {
    /// The band in force for a yield strength.
    pub fn band(&self, fy: f64) -> Option<&GainBand> {
        self.bands
            .iter()
            .find(|b| b.fy_up_to_mpa.is_none_or(|u| fy <= u))
    }

    /// Steps taken off for the largest stress ratio; `None` beyond the last row.
    pub fn ratio_steps(&self, r: f64) -> Option<u32> {
        if self.stress_ratio_steps.is_empty() {
            return Some(0);
        }
        self.stress_ratio_steps
            .iter()
            .find(|s| r <= s.r_up_to)
            .map(|s| s.minus_steps)
    }

    /// Whether the method needs the stress ratio of the loading.
    pub fn needs_stress_ratio(&self) -> bool {
        self.max_stress_ratio.is_some() || !self.stress_ratio_steps.is_empty()
    }
}

impl Improvements {
    pub(super) fn check(&self, fam: &super::Family, path: &YamlPath) -> Result<(), FamilyProblem> {
        for (i, k) in self.applies_to.iter().enumerate() {
            if fam.entry(k).is_none() {
                return Err(FamilyProblem::new(
                    path.key("applies_to").index(i),
                    format!("improvements.applies_to names `{k}`, which is not a catalogue key"),
                ));
            }
        }
        for (name, m) in &self.methods {
            let mp = path.key("methods").key(name);
            if m.bands.is_empty() {
                return Err(FamilyProblem::new(
                    mp.key("bands"),
                    format!("improvement `{name}` gives no gain band"),
                ));
            }
            for (j, b) in m.bands.iter().enumerate() {
                let bp = mp.key("bands").index(j);
                match (b.factor, b.class_steps) {
                    (Some(f), None) if (1.0..=3.0).contains(&f) => {}
                    (None, Some(s)) if (1..=10).contains(&s) => {}
                    _ => {
                        return Err(FamilyProblem::new(
                            bp,
                            format!("improvement `{name}`: each band gives exactly one of factor (1 to 3) or class_steps (1 to 10)"),
                        ))
                    }
                }
            }
            if let Some(v) = &m.curve_variant {
                if !fam.curves.normal.variants.contains_key(v) {
                    return Err(FamilyProblem::new(
                        mp.key("curve_variant"),
                        format!("improvement `{name}`: curve_variant `{v}` is not one of curves.normal.variants"),
                    ));
                }
            }
        }
        Ok(())
    }
}

/// What an improvement gives one detail: the improved category and how it came about.
#[derive(Debug, Clone, PartialEq)]
pub struct Gain {
    pub improved_mpa: f64,
    /// The factor on the category, or the steps up the list (after the R reduction).
    pub factor: Option<f64>,
    pub class_steps: Option<u32>,
    /// e.g. "FAT 80 × 1.3 = 104" or "FAT 80 up 3 steps = 112".
    pub working: String,
}

impl Improvement {
    /// The improved category of an as-welded `category` for yield strength `fy`,
    /// thickness `t` and largest stress ratio `r_max` (when the loading states one), on
    /// the family's list `categories`; or why the method does not apply.
    pub fn gain(
        &self,
        categories: &[f64],
        category: f64,
        fy: f64,
        t: f64,
        r_max: Option<f64>,
    ) -> Result<Gain, String> {
        if let Some(max) = self.max_as_welded_mpa {
            if category > max {
                return Err(format!(
                    "it applies to as-welded categories up to {max} MPa, and this detail's is {category} MPa"
                ));
            }
        }
        if let Some(lo) = self.fy_min_mpa.filter(|lo| fy < *lo) {
            return Err(format!(
                "it needs a yield strength of at least {lo} MPa, and the material has {fy} MPa"
            ));
        }
        if let Some(hi) = self.fy_max_mpa.filter(|hi| fy > *hi) {
            return Err(format!(
                "it is granted up to a yield strength of {hi} MPa, and the material has {fy} MPa"
            ));
        }
        if let Some(lo) = self.thickness_min_mm.filter(|lo| t < *lo) {
            return Err(format!(
                "it needs a plate thickness of at least {lo} mm, and the detail has {t} mm"
            ));
        }
        if let Some(hi) = self.thickness_max_mm.filter(|hi| t > *hi) {
            return Err(format!(
                "it is granted up to a plate thickness of {hi} mm, and the detail has {t} mm"
            ));
        }
        let r = match (self.needs_stress_ratio(), r_max) {
            (false, _) => None,
            (true, Some(r)) => Some(r),
            (true, None) => {
                return Err(
                    "its limits rest on the stress ratio R, and the normal-stress loading does not state it: give every block with max_mpa and min_mpa (or range_mpa with mean_mpa)"
                        .into(),
                )
            }
        };
        if let (Some(lim), Some(r)) = (self.max_stress_ratio, r) {
            if r > lim {
                return Err(format!(
                    "it is granted up to a stress ratio R = {lim}, and the loading reaches R = {r:.3}"
                ));
            }
        }
        let Some(band) = self.band(fy) else {
            return Err(format!("it gives no gain for a yield strength of {fy} MPa"));
        };
        match (band.factor, band.class_steps) {
            (Some(f), _) => {
                // improved category = benefit factor × as-welded category, capped (IIW 6.4)
                let mut v = f * category;
                let mut working = format!("{category} × {f} = {}", round3(v));
                if let Some(cap) = self.max_improved_mpa.filter(|c| v > *c) {
                    v = cap;
                    working.push_str(&format!(", limited to {cap}"));
                }
                Ok(Gain {
                    improved_mpa: v,
                    factor: Some(f),
                    class_steps: None,
                    working,
                })
            }
            (None, Some(steps)) => {
                let minus = match r {
                    Some(r) => self.ratio_steps(r).ok_or_else(|| {
                        format!(
                            "it gives no gain at a stress ratio R = {r:.3}, above the last row of its table ({})",
                            self.stress_ratio_steps.last().map_or(0.0, |s| s.r_up_to)
                        )
                    })?,
                    None => 0,
                };
                let net = steps.saturating_sub(minus);
                let mut sorted = categories.to_vec();
                sorted.sort_by(|a, b| a.total_cmp(b));
                let Some(at) = sorted.iter().position(|c| *c == category) else {
                    return Err(format!(
                        "it steps up the category list, and {category} MPa is not a listed category"
                    ));
                };
                let Some(&v) = sorted.get(at + net as usize) else {
                    return Err(format!(
                        "{net} steps up from {category} MPa run past the top of the category list ({})",
                        sorted.last().copied().unwrap_or(0.0)
                    ));
                };
                let mut v = v;
                let mut working = format!(
                    "{category} up {steps} steps{} = {v}",
                    if minus > 0 {
                        format!(" less {minus} for the stress ratio")
                    } else {
                        String::new()
                    }
                );
                if let Some(cap) = self.max_improved_mpa.filter(|c| v > *c) {
                    v = cap;
                    working.push_str(&format!(", limited to {cap}"));
                }
                Ok(Gain {
                    improved_mpa: v,
                    factor: None,
                    class_steps: Some(net),
                    working,
                })
            }
            (None, None) => Err("its band gives no gain".into()),
        }
    }
}

fn round3(v: f64) -> f64 {
    (v * 1000.0).round() / 1000.0
}
