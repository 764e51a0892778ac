//! The AASHTO LRFD verification form (`verification.utilisation: aashto-pair`): the
//! data of its `verification.aashto_pair` section and its checks on load.
//!
//! Fatigue I (infinite life) compares the factored largest range with the category's
//! constant-amplitude threshold; Fatigue II (finite life) is the Palmgren-Miner sum on
//! the category's m = 3 class curve with γFf, the cycles following from the single-lane
//! truck count. The category letter (C and C′ share a finite-life curve but not a
//! threshold) is named by each catalogue entry.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::{Family, FamilyProblem, SourcedValue, UtilisationForm};
use crate::files::locate::YamlPath;

/// The `verification.aashto_pair` section.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct AashtoPair {
    /// Load factor of the infinite-life check (Fatigue I).
    pub fatigue_i_factor: SourcedValue,
    pub fatigue_i_source: String,
    pub fatigue_ii_source: String,
    /// Where N = days·Y·n·ADTT_SL comes from.
    pub cycles_source: String,
    pub effective_range_source: String,
    /// Which check is in force (the ADTT above which infinite life governs).
    pub in_force_source: String,
    pub days_per_year: f64,
    /// MPa per ksi, for the values the code gives in US units.
    pub ksi_to_mpa: f64,
    /// Category letter -> its data.
    pub categories: BTreeMap<String, PairCategory>,
}

/// One detail category of the pair form.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct PairCategory {
    /// Name of the normal-stress published class holding its finite-life curve.
    pub class: String,
    /// Constant A of N = A·Δf^(-3) in the source's units (ksi³).
    pub constant_ksi3: f64,
    /// Constant-amplitude fatigue threshold (ΔF)TH in ksi and MPa.
    pub threshold_ksi: f64,
    pub threshold_mpa: f64,
    /// 75-year single-lane ADTT above which the detail is designed for infinite life.
    pub infinite_life_adtt: f64,
}

impl PairCategory {
    /// A in MPa³ from the source's ksi³: A·(MPa per ksi)³ (common practice).
    pub fn constant_mpa3(&self, ksi_to_mpa: f64) -> f64 {
        self.constant_ksi3 * ksi_to_mpa.powi(3)
    }
}

impl Family {
    /// The pair form's data, when the family verifies by it.
    pub fn aashto_pair(&self) -> Option<&AashtoPair> {
        match self.verification.utilisation {
            UtilisationForm::AashtoPair => self.verification.aashto_pair.as_ref(),
            _ => None,
        }
    }

    /// The pair category of a catalogue entry (its `category_letter`).
    pub fn pair_category(&self, key: &str) -> Option<(&str, &PairCategory)> {
        let pair = self.aashto_pair()?;
        let letter = self.entry(key)?.category_letter.as_deref()?;
        pair.categories
            .get_key_value(letter)
            .map(|(k, v)| (k.as_str(), v))
    }

    /// Checks of the pair form on load: the section is there exactly when the form is,
    /// every number is finite and positive, each letter's class exists and its log A
    /// and threshold agree with the ksi values, and every catalogue entry names a
    /// letter whose class is its category.
    pub(super) fn check_pair(&self) -> Result<(), FamilyProblem> {
        let vp = YamlPath::root().key("verification");
        let pp = vp.key("aashto_pair");
        let form = self.verification.utilisation;
        let pair = match (&self.verification.aashto_pair, form) {
            (None, UtilisationForm::AashtoPair) => {
                return Err(FamilyProblem::new(
                    vp.key("utilisation"),
                    "verification form aashto-pair needs a verification.aashto_pair section (load factors, cycle rule, categories)",
                ))
            }
            (Some(_), f) if f != UtilisationForm::AashtoPair => {
                return Err(FamilyProblem::new(
                    pp,
                    format!(
                        "verification.aashto_pair is given, but the verification form is {}; set utilisation: aashto-pair or remove the section",
                        f.as_str()
                    ),
                ))
            }
            (Some(p), _) => p,
            (None, _) => {
                // other forms: no entry may name a category letter
                for (i, e) in self.catalogue.iter().enumerate() {
                    if e.category_letter.is_some() {
                        return Err(FamilyProblem::new(
                            YamlPath::root().key("catalogue").index(i).key("category_letter"),
                            format!("catalogue entry `{}`: category_letter belongs to the aashto-pair verification form", e.key),
                        ));
                    }
                }
                return Ok(());
            }
        };
        super::positive(
            pp.key("fatigue_i_factor").key("value"),
            "fatigue_i_factor",
            pair.fatigue_i_factor.value,
        )?;
        super::positive(pp.key("days_per_year"), "days_per_year", pair.days_per_year)?;
        super::positive(pp.key("ksi_to_mpa"), "ksi_to_mpa", pair.ksi_to_mpa)?;
        if pair.categories.is_empty() {
            return Err(FamilyProblem::new(
                pp.key("categories"),
                "aashto_pair.categories lists no category",
            ));
        }
        for (letter, cat) in &pair.categories {
            let cp = pp.key("categories").key(letter);
            super::positive(cp.key("constant_ksi3"), "constant_ksi3", cat.constant_ksi3)?;
            super::positive(cp.key("threshold_ksi"), "threshold_ksi", cat.threshold_ksi)?;
            super::positive(cp.key("threshold_mpa"), "threshold_mpa", cat.threshold_mpa)?;
            super::positive(
                cp.key("infinite_life_adtt"),
                "infinite_life_adtt",
                cat.infinite_life_adtt,
            )?;
            let Some(class) = self.curves.normal.classes.get(&cat.class) else {
                return Err(FamilyProblem::new(
                    cp.key("class"),
                    format!(
                        "category {letter}: `{}` is not one of curves.normal.classes",
                        cat.class
                    ),
                ));
            };
            // (ΔF)TH[MPa] = (ΔF)TH[ksi]·MPa per ksi (common practice), to 0.5 %
            let th = cat.threshold_ksi * pair.ksi_to_mpa;
            if ((cat.threshold_mpa - th) / th).abs() > 0.005 {
                return Err(FamilyProblem::new(
                    cp.key("threshold_mpa"),
                    format!(
                        "category {letter}: threshold_mpa {} differs from threshold_ksi {} × {} = {th:.2} MPa by more than 0.5 %",
                        cat.threshold_mpa, cat.threshold_ksi, pair.ksi_to_mpa
                    ),
                ));
            }
            // every environment's first segment: log A[MPa³] = log(A[ksi³]·k³), m = 3
            let want = cat.constant_mpa3(pair.ksi_to_mpa).log10();
            for (env, segs) in &class.curves {
                let first = &segs[0];
                let ok_a = first.log_a.is_some_and(|a| (a - want).abs() <= 5e-4);
                if !ok_a || segs.len() != 1 || first.slope_m != 3.0 {
                    return Err(FamilyProblem::new(
                        YamlPath::root()
                            .key("curves")
                            .key("normal")
                            .key("classes")
                            .key(&cat.class)
                            .key("curves")
                            .key(env),
                        format!(
                            "class `{}` (category {letter}) must be one segment of m = 3 with log_a = log10({} ksi³ × {}³) = {want:.4}",
                            cat.class, cat.constant_ksi3, pair.ksi_to_mpa
                        ),
                    ));
                }
            }
        }
        for (i, e) in self.catalogue.iter().enumerate() {
            let ep = YamlPath::root().key("catalogue").index(i);
            if e.shear_category.is_some() {
                return Err(FamilyProblem::new(
                    ep.key("shear_category"),
                    format!(
                        "catalogue entry `{}`: the aashto-pair checks act on normal stress ranges only",
                        e.key
                    ),
                ));
            }
            let Some(letter) = &e.category_letter else {
                return Err(FamilyProblem::new(
                    ep,
                    format!(
                        "catalogue entry `{}` needs a category_letter (one of {})",
                        e.key,
                        pair.categories
                            .keys()
                            .cloned()
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                ));
            };
            let Some(cat) = pair.categories.get(letter) else {
                return Err(FamilyProblem::new(
                    ep.key("category_letter"),
                    format!(
                        "catalogue entry `{}`: category_letter `{letter}` is not one of {}",
                        e.key,
                        pair.categories
                            .keys()
                            .cloned()
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                ));
            };
            let class_cat = self.curves.normal.classes[&cat.class].category_mpa;
            if e.normal_category != Some(class_cat) {
                return Err(FamilyProblem::new(
                    ep.key("normal_category"),
                    format!(
                        "catalogue entry `{}`: category {letter} stands for class `{}` of category {class_cat}, but the entry gives {:?}",
                        e.key, cat.class, e.normal_category
                    ),
                ));
            }
        }
        Ok(())
    }
}
