//! Curve families as data: the schema of a `joint-classes/*.yaml` file, the families
//! embedded in the binary, and loading from an override folder.
//!
//! A family describes S-N curves (segments, knees, cut-off), partial factors, damage
//! limit, verification form, validity limits, thickness and mean-stress rules, and a
//! catalogue of detail types. Nothing in the engine is specific to one family.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{InputError, InputErrorKind, Location};

/// Families compiled into the binary so that the tool runs from any folder.
pub const EMBEDDED: &[(&str, &str)] = &[
    (
        "en1993-1-9.yaml",
        include_str!("../../joint-classes/en1993-1-9.yaml"),
    ),
    ("iiw.yaml", include_str!("../../joint-classes/iiw.yaml")),
];

/// The current version of the family file format.
pub const FORMAT_VERSION: u32 = 1;

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Family {
    pub format: u32,
    pub id: String,
    pub title: String,
    pub edition: String,
    pub data_version: String,
    pub transcription_note: String,
    /// Cycles at which the category (ΔσC, FAT) is defined.
    pub reference_cycles: f64,
    pub category_symbol: PerComponent<String>,
    pub range_symbol: PerComponent<String>,
    pub curves: PerComponent<CurveDef>,
    pub partial_factors: PartialFactors,
    pub damage_limit: DamageLimit,
    pub verification: Verification,
    pub validity: Validity,
    pub thickness: Thickness,
    pub mean_stress: MeanStress,
    pub catalogue: Vec<CatalogueEntry>,
    /// Where the family came from (embedded or a file); filled by the loader.
    #[serde(skip)]
    pub origin: String,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct PerComponent<T> {
    pub normal: T,
    pub shear: T,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Deserialize, Serialize, Hash)]
#[serde(rename_all = "kebab-case")]
pub enum Component {
    Normal,
    Shear,
}

impl Component {
    pub fn as_str(self) -> &'static str {
        match self {
            Component::Normal => "normal",
            Component::Shear => "shear",
        }
    }
}

impl<T> PerComponent<T> {
    pub fn get(&self, c: Component) -> &T {
        match c {
            Component::Normal => &self.normal,
            Component::Shear => &self.shear,
        }
    }
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CurveDef {
    /// Segments from the reference point downward in range (upward in cycles).
    pub segments: Vec<Segment>,
    /// 1-based knee index: when every design range is at or below the range at this
    /// knee, constant-amplitude rules give no damage.
    #[serde(default)]
    pub constant_amplitude_limit_knee: Option<usize>,
    pub categories_mpa: Vec<f64>,
    pub source: String,
    #[serde(default)]
    pub variants: BTreeMap<String, CurveVariant>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CurveVariant {
    pub name: String,
    pub segments: Vec<Segment>,
    pub source: String,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Segment {
    pub slope_m: f64,
    /// Cycles where this segment ends. Absent on the last segment: the line continues
    /// without a cut-off. Present on the last segment: ranges below cause no damage.
    #[serde(default)]
    pub end_cycles: Option<f64>,
    #[serde(default)]
    pub knee_symbol: Option<String>,
    #[serde(default)]
    pub knee_name: Option<String>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct PartialFactors {
    pub gamma_ff: SourcedValue,
    pub gamma_mf: GammaMfTable,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct SourcedValue {
    pub value: f64,
    pub source: String,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct GammaMfTable {
    pub source: String,
    pub table: BTreeMap<String, ConsequenceRow>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ConsequenceRow {
    pub low: f64,
    pub high: f64,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct DamageLimit {
    pub value: f64,
    pub source: String,
    #[serde(default)]
    pub cases: BTreeMap<String, SourcedValue>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum UtilisationForm {
    /// (D/D_lim)^(1/m1): the equivalent-range ratio, e.g. EN 1993-1-9 eq. (8.2).
    RangeRatio,
    /// D/D_lim: the Palmgren-Miner ratio.
    DamageRatio,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Verification {
    pub utilisation: UtilisationForm,
    pub source: String,
    pub interaction: Option<Interaction>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Interaction {
    pub normal_exponent: f64,
    pub shear_exponent: f64,
    pub limit: f64,
    pub source: String,
    #[serde(default)]
    pub cases: BTreeMap<String, SourcedValue>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Validity {
    pub normal_fy_factor: f64,
    pub shear_fy_factor: f64,
    pub source: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum EffectiveThickness {
    /// t_eff = t.
    Plate,
    /// t_eff = 0.5·L when L/t <= 2 (L: toe-to-toe distance), otherwise t.
    ToeDistance,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Thickness {
    pub reference_mm: f64,
    pub applies_above_reference_only: bool,
    pub effective_thickness: EffectiveThickness,
    pub source: String,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MeanStress {
    pub default_case: String,
    pub source: String,
    pub cases: BTreeMap<String, MeanStressCase>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MeanStressCase {
    pub name: String,
    /// Fraction of the compressive part of a range that counts (EN 1993-1-9 7.2.1 form).
    #[serde(default)]
    pub compressive_fraction: Option<f64>,
    /// Piecewise-linear enhancement f(R) of the resistance, as (R, f) points, constant
    /// outside the first and last point (IIW f(R) form). Empty: f = 1.
    #[serde(default)]
    pub enhancement_points: Option<Vec<[f64; 2]>>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CatalogueEntry {
    pub key: String,
    pub reference: String,
    pub description: String,
    #[serde(default)]
    pub normal_category: Option<f64>,
    #[serde(default)]
    pub shear_category: Option<f64>,
    /// Exponent n of the size correction (t_ref/t_eff)^n; absent: no size effect.
    #[serde(default)]
    pub thickness_exponent: Option<f64>,
    #[serde(default)]
    pub mean_stress_case: Option<String>,
    /// Name of one of the family's `curves.normal.variants` whose segments replace the
    /// normal-stress curve of every detail naming this entry, whatever the project's
    /// `basis.curve_variant` (which still governs the shear curve and other details).
    /// Absent: the normal curve of the project (main curve or its chosen variant).
    #[serde(default)]
    pub curve_variant: Option<String>,
}

impl CatalogueEntry {
    pub fn category(&self, c: Component) -> Option<f64> {
        match c {
            Component::Normal => self.normal_category,
            Component::Shear => self.shear_category,
        }
    }
}

impl Family {
    pub fn entry(&self, key: &str) -> Option<&CatalogueEntry> {
        self.catalogue.iter().find(|e| e.key == key)
    }

    /// Segments of a component's curve, with an optional named variant.
    pub fn segments(&self, c: Component, variant: Option<&str>) -> Option<&[Segment]> {
        let def = self.curves.get(c);
        match variant {
            None => Some(&def.segments),
            Some(v) => match def.variants.get(v) {
                Some(var) => Some(&var.segments),
                // A variant named for one component only leaves the other unchanged.
                None if self.has_variant(v) => Some(&def.segments),
                None => None,
            },
        }
    }

    pub fn has_variant(&self, v: &str) -> bool {
        self.curves.normal.variants.contains_key(v) || self.curves.shear.variants.contains_key(v)
    }

    pub fn variant_names(&self) -> Vec<String> {
        let mut v: Vec<String> = self
            .curves
            .normal
            .variants
            .keys()
            .chain(self.curves.shear.variants.keys())
            .cloned()
            .collect();
        v.sort();
        v.dedup();
        v
    }

    /// Check the internal consistency of a family file.
    fn check(&self) -> Result<(), String> {
        if self.format != FORMAT_VERSION {
            return Err(format!(
                "family format {} is not supported (this seamlife reads format {FORMAT_VERSION})",
                self.format
            ));
        }
        if !(self.reference_cycles.is_finite() && self.reference_cycles > 0.0) {
            return Err("reference_cycles must be a positive number".into());
        }
        for c in [Component::Normal, Component::Shear] {
            let def = self.curves.get(c);
            check_segments(&def.segments, self.reference_cycles)
                .map_err(|e| format!("curves.{}: {e}", c.as_str()))?;
            for (name, var) in &def.variants {
                check_segments(&var.segments, self.reference_cycles)
                    .map_err(|e| format!("curves.{}.variants.{name}: {e}", c.as_str()))?;
            }
            if let Some(k) = def.constant_amplitude_limit_knee {
                if k == 0 || k > def.segments.len() || def.segments[k - 1].end_cycles.is_none() {
                    return Err(format!(
                        "curves.{}.constant_amplitude_limit_knee {k} does not name a knee",
                        c.as_str()
                    ));
                }
            }
            if def.categories_mpa.is_empty()
                || def
                    .categories_mpa
                    .iter()
                    .any(|x| !(x.is_finite() && *x > 0.0))
            {
                return Err(format!(
                    "curves.{}.categories_mpa must list positive numbers",
                    c.as_str()
                ));
            }
        }
        for strategy in ["safe-life", "damage-tolerant"] {
            let row = self
                .partial_factors
                .gamma_mf
                .table
                .get(strategy)
                .ok_or_else(|| format!("partial_factors.gamma_mf.table has no row `{strategy}`"))?;
            if !(row.low >= 1.0 && row.high >= 1.0) {
                return Err(format!("γMf for {strategy} must be at least 1.0"));
            }
        }
        if !self
            .mean_stress
            .cases
            .contains_key(&self.mean_stress.default_case)
        {
            return Err(format!(
                "mean_stress.default_case `{}` is not one of the cases",
                self.mean_stress.default_case
            ));
        }
        for (name, case) in &self.mean_stress.cases {
            match (&case.compressive_fraction, &case.enhancement_points) {
                (Some(f), None) if (0.0..=1.0).contains(f) => {}
                (None, Some(pts)) => {
                    if pts.windows(2).any(|w| w[1][0] <= w[0][0])
                        || pts.iter().any(|p| p[1].is_nan() || p[1] < 1.0)
                    {
                        return Err(format!(
                            "mean_stress.cases.{name}: points need rising R and f >= 1"
                        ));
                    }
                }
                _ => {
                    return Err(format!(
                        "mean_stress.cases.{name}: give exactly one of compressive_fraction (0..1) or enhancement_points"
                    ))
                }
            }
        }
        let mut keys = std::collections::BTreeSet::new();
        for e in &self.catalogue {
            if !keys.insert(e.key.as_str()) {
                return Err(format!("catalogue key `{}` appears twice", e.key));
            }
            if e.normal_category.is_none() && e.shear_category.is_none() {
                return Err(format!("catalogue entry `{}` gives no category", e.key));
            }
            for c in [Component::Normal, Component::Shear] {
                if let Some(cat) = e.category(c) {
                    if !self.curves.get(c).categories_mpa.contains(&cat) {
                        return Err(format!(
                            "catalogue entry `{}`: {} category {cat} is not in the category list",
                            e.key,
                            c.as_str()
                        ));
                    }
                }
            }
            if let Some(case) = &e.mean_stress_case {
                if !self.mean_stress.cases.contains_key(case) {
                    return Err(format!(
                        "catalogue entry `{}`: unknown mean_stress_case `{case}`",
                        e.key
                    ));
                }
            }
            if let Some(v) = &e.curve_variant {
                if e.normal_category.is_none() {
                    return Err(format!(
                        "catalogue entry `{}`: curve_variant acts on the normal-stress curve, but the entry gives no normal_category",
                        e.key
                    ));
                }
                if !self.curves.normal.variants.contains_key(v) {
                    return Err(format!(
                        "catalogue entry `{}`: curve_variant `{v}` is not one of curves.normal.variants",
                        e.key
                    ));
                }
            }
        }
        Ok(())
    }
}

fn check_segments(segs: &[Segment], reference_cycles: f64) -> Result<(), String> {
    if segs.is_empty() {
        return Err("at least one segment is needed".into());
    }
    let mut last_end = reference_cycles;
    for (i, s) in segs.iter().enumerate() {
        if !(s.slope_m.is_finite() && s.slope_m > 0.0) {
            return Err(format!("segment {}: slope_m must be positive", i + 1));
        }
        match s.end_cycles {
            Some(n) if n.is_finite() && n > last_end => last_end = n,
            Some(_) => {
                return Err(format!(
                    "segment {}: end_cycles must rise and exceed the reference cycles",
                    i + 1
                ))
            }
            None if i + 1 != segs.len() => {
                return Err(format!(
                    "segment {}: only the last segment may omit end_cycles",
                    i + 1
                ))
            }
            None => {}
        }
    }
    Ok(())
}

/// The set of families available to a run.
#[derive(Debug, Clone)]
pub struct Library {
    pub families: Vec<Family>,
}

impl Library {
    /// The embedded families, replaced or extended by `*.yaml` files in `override_dir`.
    pub fn load(override_dir: Option<&Path>) -> Result<Library, InputError> {
        let mut families: BTreeMap<String, Family> = BTreeMap::new();
        for (name, text) in EMBEDDED {
            let fam = parse_family(text, &PathBuf::from(format!("<embedded>/{name}")))?;
            families.insert(fam.id.clone(), fam);
        }
        if let Some(dir) = override_dir {
            let entries = std::fs::read_dir(dir).map_err(|e| {
                InputError::new(
                    InputErrorKind::Io,
                    Location::file(dir),
                    format!("cannot read the joint-classes folder: {e}"),
                )
                .hint("point --joint-classes at a folder holding family *.yaml files")
            })?;
            let mut paths: Vec<PathBuf> = entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|x| x == "yaml" || x == "yml"))
                .collect();
            paths.sort();
            for p in paths {
                let text = crate::input::read_text_limited(&p)?;
                let fam = parse_family(&text, &p)?;
                families.insert(fam.id.clone(), fam);
            }
        }
        Ok(Library {
            families: families.into_values().collect(),
        })
    }

    pub fn get(&self, id: &str) -> Option<&Family> {
        self.families.iter().find(|f| f.id == id)
    }

    pub fn ids(&self) -> Vec<&str> {
        self.families.iter().map(|f| f.id.as_str()).collect()
    }
}

/// Parse and check one family file.
pub fn parse_family(text: &str, path: &Path) -> Result<Family, InputError> {
    let mut fam: Family =
        serde_yaml::from_str(text).map_err(|e| crate::input::yaml_error(path, text, e))?;
    fam.check().map_err(|msg| {
        InputError::new(
            InputErrorKind::InvalidFamily,
            Location::file(path),
            format!("family `{}`: {msg}", fam.id),
        )
        .hint("see joint-classes/README.md for the family format")
    })?;
    fam.origin = path.display().to_string();
    Ok(fam)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_families_load_and_check() {
        let lib = Library::load(None).unwrap();
        assert_eq!(lib.ids(), vec!["en1993-1-9", "iiw"]);
        let en = lib.get("en1993-1-9").unwrap();
        // EN 1993-1-9 Fig. 7.1: 14 normal-stress categories 160 ... 36
        assert_eq!(en.curves.normal.categories_mpa.len(), 14);
        // EN 1993-1-9 Table 3.1: safe life, high consequence γMf = 1.35
        assert_eq!(en.partial_factors.gamma_mf.table["safe-life"].high, 1.35);
    }

    #[test]
    fn iiw_unwelded_entries_name_the_m5_base_metal_curve() {
        let lib = Library::load(None).unwrap();
        let iiw = lib.get("iiw").unwrap();
        // IIW 3.2: unwelded steel base metal m = 5 to the knee at 1e7, m = 22 beyond (from memory)
        let v = &iiw.curves.normal.variants["non-welded"];
        assert_eq!(v.segments[0].slope_m, 5.0);
        assert_eq!(v.segments[0].end_cycles, Some(1.0e7));
        assert_eq!(v.segments[1].slope_m, 22.0);
        for key in ["rolled-plate-plain", "plate-machine-cut"] {
            assert_eq!(
                iiw.entry(key).unwrap().curve_variant.as_deref(),
                Some("non-welded"),
                "{key}"
            );
        }
        // IIW details 412 and 413: cruciform as welded 71, fillet toe 63 (from memory)
        assert_eq!(
            iiw.entry("cruciform-full-penetration")
                .unwrap()
                .normal_category,
            Some(71.0)
        );
        assert_eq!(
            iiw.entry("cruciform-fillet-toe").unwrap().normal_category,
            Some(63.0)
        );
        // IIW 3.5.2: ends of longitudinal stiffeners n = 0.3 (from memory)
        assert_eq!(
            iiw.entry("attachment-longitudinal-over-300")
                .unwrap()
                .thickness_exponent,
            Some(0.3)
        );
    }

    #[test]
    fn bad_segments_are_refused() {
        let segs = vec![
            Segment {
                slope_m: 3.0,
                end_cycles: None,
                knee_symbol: None,
                knee_name: None,
            },
            Segment {
                slope_m: 5.0,
                end_cycles: Some(1e8),
                knee_symbol: None,
                knee_name: None,
            },
        ];
        assert!(check_segments(&segs, 2e6).is_err());
    }
}
