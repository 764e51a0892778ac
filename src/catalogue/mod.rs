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
use crate::files::locate::YamlPath;

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
    /// SHA-256 of the family file's text; filled by the loader.
    #[serde(skip)]
    pub sha256: String,
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
    /// Only for catalogue entries that name it (`curve_variant` of an entry), never for
    /// a whole project's `basis.curve_variant`.
    #[serde(default)]
    pub entry_only: bool,
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

/// The measure in which a component's check is stated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum UtilisationForm {
    /// (D/D_lim)^(1/m1): the equivalent-range ratio γFf·ΔσE,2/ΔσC,d, e.g. EN 1993-1-9
    /// eq. (8.2).
    RangeRatio,
    /// D/D_lim: the Palmgren-Miner ratio.
    DamageRatio,
    /// γFf·Δσ/ΔσR,d(n): the design range over the design resistance at the cycle count
    /// (constant amplitude only).
    RangeAtCycles,
}

impl UtilisationForm {
    pub fn as_str(self) -> &'static str {
        match self {
            UtilisationForm::RangeRatio => "range-ratio",
            UtilisationForm::DamageRatio => "damage-ratio",
            UtilisationForm::RangeAtCycles => "range-at-cycles",
        }
    }
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Verification {
    /// Form of the check of one stress component (under variable amplitude, and under
    /// constant amplitude unless `constant_amplitude` says otherwise).
    pub utilisation: UtilisationForm,
    pub source: String,
    pub interaction: Option<Interaction>,
    /// How constant-amplitude loading is verified where the code treats it apart.
    #[serde(default)]
    pub constant_amplitude: Option<ConstantAmplitudeCheck>,
}

/// The verification of constant-amplitude loading, where it differs from the
/// Palmgren-Miner check of variable amplitude (IIW: on the range, i.e. D <= 1).
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ConstantAmplitudeCheck {
    pub form: UtilisationForm,
    /// Damage sum the check is equivalent to (1.0 for a check on the range).
    pub damage_limit: f64,
    pub source: String,
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

    /// Variants a project may choose for all its details (`basis.curve_variant`).
    pub fn variant_names(&self) -> Vec<String> {
        let mut v: Vec<String> = self
            .curves
            .normal
            .variants
            .iter()
            .chain(self.curves.shear.variants.iter())
            .filter(|(_, var)| !var.entry_only)
            .map(|(k, _)| k.clone())
            .collect();
        v.sort();
        v.dedup();
        v
    }

    /// Check every value of a family file; on the first problem, say where it is.
    fn check(&self) -> Result<(), FamilyProblem> {
        let root = YamlPath::root();
        if self.format != FORMAT_VERSION {
            return Err(FamilyProblem::new(
                root.key("format"),
                format!(
                    "family format {} is not supported (this seamlife reads format {FORMAT_VERSION})",
                    self.format
                ),
            ));
        }
        if self.id.trim().is_empty() {
            return Err(FamilyProblem::new(root.key("id"), "id must not be empty"));
        }
        positive(
            root.key("reference_cycles"),
            "reference_cycles",
            self.reference_cycles,
        )?;
        for c in [Component::Normal, Component::Shear] {
            let cp = root.key("curves").key(c.as_str());
            let def = self.curves.get(c);
            check_segments(&def.segments, self.reference_cycles, &cp.key("segments"))?;
            if let Some(k) = def.constant_amplitude_limit_knee {
                if !names_knee(&def.segments, k) {
                    return Err(FamilyProblem::new(
                        cp.key("constant_amplitude_limit_knee"),
                        format!("constant_amplitude_limit_knee {k} does not name a knee"),
                    ));
                }
            }
            for (name, var) in &def.variants {
                let vp = cp.key("variants").key(name).key("segments");
                check_segments(&var.segments, self.reference_cycles, &vp)?;
                // The curve's constant-amplitude knee applies to its variants too.
                if let Some(k) = def.constant_amplitude_limit_knee {
                    if !names_knee(&var.segments, k) {
                        return Err(FamilyProblem::new(
                            vp,
                            format!(
                                "constant_amplitude_limit_knee {k} of curves.{} names no knee of variant `{name}`",
                                c.as_str()
                            ),
                        ));
                    }
                }
            }
            let lp = cp.key("categories_mpa");
            if def.categories_mpa.is_empty() {
                return Err(FamilyProblem::new(lp, "categories_mpa lists no category"));
            }
            for (i, x) in def.categories_mpa.iter().enumerate() {
                positive(lp.index(i), "category", *x)?;
                if let Some(first) = def.categories_mpa[..i].iter().position(|y| y == x) {
                    return Err(FamilyProblem::new(
                        lp.index(i),
                        format!(
                            "category {x} is listed twice (also at position {})",
                            first + 1
                        ),
                    ));
                }
            }
        }
        let pf = root.key("partial_factors");
        positive(
            pf.key("gamma_ff").key("value"),
            "γFf",
            self.partial_factors.gamma_ff.value,
        )?;
        let tp = pf.key("gamma_mf").key("table");
        for strategy in ["safe-life", "damage-tolerant"] {
            if !self.partial_factors.gamma_mf.table.contains_key(strategy) {
                return Err(FamilyProblem::new(
                    tp.clone(),
                    format!("the γMf table has no row `{strategy}`"),
                ));
            }
        }
        let vp = root.key("verification");
        if self.verification.utilisation == UtilisationForm::RangeAtCycles {
            return Err(FamilyProblem::new(
                vp.key("utilisation"),
                "range-at-cycles applies to constant amplitude only; give it under verification.constant_amplitude",
            ));
        }
        if let Some(ca) = &self.verification.constant_amplitude {
            positive(
                vp.key("constant_amplitude").key("damage_limit"),
                "constant-amplitude damage limit",
                ca.damage_limit,
            )?;
        }
        for (strategy, row) in &self.partial_factors.gamma_mf.table {
            for (which, v) in [("low", row.low), ("high", row.high)] {
                // NaN fails the comparison too.
                if !(v.is_finite() && v >= 1.0) {
                    return Err(FamilyProblem::new(
                        tp.key(strategy).key(which),
                        format!("γMf for {strategy}, {which} consequence must be a finite number of at least 1.0, got {v}"),
                    ));
                }
            }
        }
        let dp = root.key("damage_limit");
        positive(dp.key("value"), "damage limit", self.damage_limit.value)?;
        for (name, case) in &self.damage_limit.cases {
            positive(
                dp.key("cases").key(name).key("value"),
                "damage limit",
                case.value,
            )?;
        }
        if let Some(i) = &self.verification.interaction {
            let ip = root.key("verification").key("interaction");
            positive(
                ip.key("normal_exponent"),
                "normal_exponent",
                i.normal_exponent,
            )?;
            positive(ip.key("shear_exponent"), "shear_exponent", i.shear_exponent)?;
            positive(ip.key("limit"), "interaction limit", i.limit)?;
            for (name, case) in &i.cases {
                positive(
                    ip.key("cases").key(name).key("value"),
                    "interaction limit",
                    case.value,
                )?;
            }
        }
        let vp = root.key("validity");
        positive(
            vp.key("normal_fy_factor"),
            "normal_fy_factor",
            self.validity.normal_fy_factor,
        )?;
        positive(
            vp.key("shear_fy_factor"),
            "shear_fy_factor",
            self.validity.shear_fy_factor,
        )?;
        positive(
            root.key("thickness").key("reference_mm"),
            "reference_mm",
            self.thickness.reference_mm,
        )?;
        let mp = root.key("mean_stress");
        if !self
            .mean_stress
            .cases
            .contains_key(&self.mean_stress.default_case)
        {
            return Err(FamilyProblem::new(
                mp.key("default_case"),
                format!(
                    "default_case `{}` is not one of the mean-stress cases",
                    self.mean_stress.default_case
                ),
            ));
        }
        for (name, case) in &self.mean_stress.cases {
            let cp = mp.key("cases").key(name);
            match (&case.compressive_fraction, &case.enhancement_points) {
                (Some(f), None) => {
                    if !(0.0..=1.0).contains(f) {
                        return Err(FamilyProblem::new(
                            cp.key("compressive_fraction"),
                            format!("compressive_fraction must lie between 0 and 1, got {f}"),
                        ));
                    }
                }
                (None, Some(pts)) => {
                    let pp = cp.key("enhancement_points");
                    for (i, p) in pts.iter().enumerate() {
                        if !(p[0].is_finite() && p[1].is_finite()) {
                            return Err(FamilyProblem::new(
                                pp.index(i),
                                format!("point [{}, {}] must be finite numbers", p[0], p[1]),
                            ));
                        }
                        if p[1] < 1.0 {
                            return Err(FamilyProblem::new(
                                pp.index(i),
                                format!("enhancement f must be at least 1, got {}", p[1]),
                            ));
                        }
                        if i > 0 && p[0] <= pts[i - 1][0] {
                            return Err(FamilyProblem::new(
                                pp.index(i),
                                format!(
                                    "R must rise from point to point: {} follows {}",
                                    p[0],
                                    pts[i - 1][0]
                                ),
                            ));
                        }
                    }
                }
                _ => {
                    return Err(FamilyProblem::new(
                        cp,
                        format!(
                            "case `{name}`: give exactly one of compressive_fraction (0..1) or enhancement_points"
                        ),
                    ))
                }
            }
        }
        let mut keys = std::collections::BTreeSet::new();
        for (i, e) in self.catalogue.iter().enumerate() {
            let ep = root.key("catalogue").index(i);
            if !keys.insert(e.key.as_str()) {
                return Err(FamilyProblem::new(
                    ep.key("key"),
                    format!("catalogue key `{}` appears twice", e.key),
                ));
            }
            if e.normal_category.is_none() && e.shear_category.is_none() {
                return Err(FamilyProblem::new(
                    ep,
                    format!("catalogue entry `{}` gives no category", e.key),
                ));
            }
            for c in [Component::Normal, Component::Shear] {
                if let Some(cat) = e.category(c) {
                    if !self.curves.get(c).categories_mpa.contains(&cat) {
                        return Err(FamilyProblem::new(
                            ep.key(&format!("{}_category", c.as_str())),
                            format!(
                                "catalogue entry `{}`: {} category {cat} is not in the category list",
                                e.key,
                                c.as_str()
                            ),
                        ));
                    }
                }
            }
            if let Some(n) = e.thickness_exponent {
                if !(0.0..=1.0).contains(&n) {
                    return Err(FamilyProblem::new(
                        ep.key("thickness_exponent"),
                        format!(
                            "catalogue entry `{}`: thickness_exponent must lie between 0 and 1, got {n}",
                            e.key
                        ),
                    ));
                }
            }
            if let Some(case) = &e.mean_stress_case {
                if !self.mean_stress.cases.contains_key(case) {
                    return Err(FamilyProblem::new(
                        ep.key("mean_stress_case"),
                        format!(
                            "catalogue entry `{}`: unknown mean_stress_case `{case}`",
                            e.key
                        ),
                    ));
                }
            }
            if let Some(v) = &e.curve_variant {
                let names: Vec<&str> = self
                    .curves
                    .normal
                    .variants
                    .keys()
                    .map(|k| k.as_str())
                    .collect();
                if e.normal_category.is_none() {
                    return Err(FamilyProblem::new(
                        ep.key("curve_variant"),
                        format!(
                            "catalogue entry `{}`: curve_variant acts on the normal-stress curve, but the entry gives no normal_category",
                            e.key
                        ),
                    ));
                }
                if !names.contains(&v.as_str()) {
                    return Err(FamilyProblem::new(
                        ep.key("curve_variant"),
                        format!(
                            "catalogue entry `{}`: curve_variant `{v}` is not one of curves.normal.variants ({})",
                            e.key,
                            if names.is_empty() {
                                "none defined".to_string()
                            } else {
                                names.join(", ")
                            }
                        ),
                    ));
                }
            }
        }
        Ok(())
    }
}

/// A problem in a family file: the YAML path of the offending value and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FamilyProblem {
    pub path: YamlPath,
    pub message: String,
}

impl FamilyProblem {
    fn new(path: YamlPath, message: impl Into<String>) -> Self {
        FamilyProblem {
            path,
            message: message.into(),
        }
    }
}

/// A finite number greater than zero, or a problem at `path`.
fn positive(path: YamlPath, what: &str, v: f64) -> Result<(), FamilyProblem> {
    let message = if v.is_nan() {
        format!("{what} is not a number (NaN)")
    } else if v.is_infinite() {
        format!("{what} is infinite")
    } else if v <= 0.0 {
        format!("{what} must be greater than zero, got {v}")
    } else {
        return Ok(());
    };
    Err(FamilyProblem::new(path, message))
}

/// Whether 1-based knee `k` ends a segment with `end_cycles` (a knee) in `segs`.
fn names_knee(segs: &[Segment], k: usize) -> bool {
    k != 0 && k <= segs.len() && segs[k - 1].end_cycles.is_some()
}

fn check_segments(
    segs: &[Segment],
    reference_cycles: f64,
    path: &YamlPath,
) -> Result<(), FamilyProblem> {
    if segs.is_empty() {
        return Err(FamilyProblem::new(
            path.clone(),
            "at least one segment is needed",
        ));
    }
    let mut last_end = reference_cycles;
    for (i, s) in segs.iter().enumerate() {
        let sp = path.index(i);
        positive(sp.key("slope_m"), "slope_m", s.slope_m)?;
        match s.end_cycles {
            Some(n) if n.is_finite() && n > last_end => last_end = n,
            Some(n) => {
                return Err(FamilyProblem::new(
                    sp.key("end_cycles"),
                    format!(
                        "segment {}: end_cycles {n} must be finite, rise and exceed the reference cycles",
                        i + 1
                    ),
                ))
            }
            None if i + 1 != segs.len() => {
                return Err(FamilyProblem::new(
                    sp,
                    format!(
                        "segment {}: only the last segment may omit end_cycles",
                        i + 1
                    ),
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
        Library::load_from(EMBEDDED, override_dir)
    }

    /// As [`Library::load`], with the built-in set given. Within the built-in set, and
    /// within the override folder, each id may appear once; a folder file may replace a
    /// built-in family of the same id.
    fn load_from(
        embedded: &[(&str, &str)],
        override_dir: Option<&Path>,
    ) -> Result<Library, InputError> {
        let mut families: BTreeMap<String, Family> = BTreeMap::new();
        let mut built_in: BTreeMap<String, PathBuf> = BTreeMap::new();
        for (name, text) in embedded {
            let path = PathBuf::from(format!("<embedded>/{name}"));
            let fam = parse_family(text, &path)?;
            unique_id(&mut built_in, &fam.id, &path, text)?;
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
            let mut in_folder: BTreeMap<String, PathBuf> = BTreeMap::new();
            for p in paths {
                let text = crate::files::read_text_limited(&p)?;
                let fam = parse_family(&text, &p)?;
                unique_id(&mut in_folder, &fam.id, &p, &text)?;
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

/// Record that `path` gives family `id`; an error at its `id:` when another file of
/// the same set already gave it.
fn unique_id(
    seen: &mut BTreeMap<String, PathBuf>,
    id: &str,
    path: &Path,
    text: &str,
) -> Result<(), InputError> {
    if let Some(first) = seen.get(id) {
        return Err(InputError::new(
            InputErrorKind::InvalidFamily,
            locate_in(path, text, &YamlPath::root().key("id")),
            format!(
                "family id `{id}` is given by both {} and {}",
                first.display(),
                path.display()
            ),
        )
        .hint("give each family file in the folder its own id, or remove one of the two files"));
    }
    seen.insert(id.to_string(), path.to_path_buf());
    Ok(())
}

/// file:line:col of the value at `at` in `text`, or the file alone when not found.
fn locate_in(path: &Path, text: &str, at: &YamlPath) -> Location {
    match crate::files::locate::locate(text, std::slice::from_ref(at))[0] {
        Some((line, col)) => Location::at(path, line, col),
        None => Location::file(path),
    }
}

/// Parse and check one family file.
pub fn parse_family(text: &str, path: &Path) -> Result<Family, InputError> {
    let mut fam: Family =
        serde_yaml::from_str(text).map_err(|e| crate::files::yaml_error(path, text, e))?;
    fam.check().map_err(|p| {
        InputError::new(
            InputErrorKind::InvalidFamily,
            locate_in(path, text, &p.path),
            format!("family `{}`: {}: {}", fam.id, p.path, p.message),
        )
        .hint("see joint-classes/README.md for the family format")
    })?;
    fam.origin = path.display().to_string();
    fam.sha256 = crate::files::sha256_hex(text.as_bytes());
    Ok(fam)
}

#[cfg(test)]
mod tests {
    use super::*;

    const EN: &str = include_str!("../../joint-classes/en1993-1-9.yaml");
    const IIW: &str = include_str!("../../joint-classes/iiw.yaml");

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
    fn en_catalogue_steps_with_attachment_length_without_ks() {
        let lib = Library::load(None).unwrap();
        let en = lib.get("en1993-1-9").unwrap();
        // EN 1993-1-9 Table 8.4 details 6-7: 80 for ℓ <= 50 mm, 71 for 50 < ℓ <= 80 mm,
        // no size factor (from memory)
        for (key, cat) in [
            ("attachment-transverse-l-upto-50", 80.0),
            ("attachment-transverse-l-50-80", 71.0),
            ("stiffener-vertical-l-upto-50", 80.0),
            ("stiffener-vertical-l-50-80", 71.0),
        ] {
            let e = en.entry(key).unwrap();
            assert_eq!(e.normal_category, Some(cat), "{key}");
            assert_eq!(e.thickness_exponent, None, "{key}");
        }
        // EN 1993-1-9 Table 8.5 details 1-2: ℓ > 300 mm and t > 50 mm gives 40, and the
        // thickness is inside the category: no ks (from memory)
        let e = en.entry("cruciform-toe-l-over-300-t-over-50").unwrap();
        assert_eq!(e.normal_category, Some(40.0));
        assert_eq!(e.thickness_exponent, None);
        // EN 1993-1-9 Table 8.10: detail 1 rolled 160, detail 2 full penetration 71,
        // details 3-4 partial penetration or fillet 36* (from memory)
        assert_eq!(
            en.entry("crane-web-flange-rolled").unwrap().normal_category,
            Some(160.0)
        );
        assert_eq!(
            en.entry("crane-web-flange-full-penetration")
                .unwrap()
                .normal_category,
            Some(71.0)
        );
        // EN 1993-1-9 Table 8.3 details 14 and 15: backing strip 71 and 50 (from memory)
        assert_eq!(
            en.entry("butt-transverse-backing-strip-edge-under-10")
                .unwrap()
                .normal_category,
            Some(50.0)
        );
        // no EN entry names a curve variant: EN has one normal-stress curve shape
        assert!(en.catalogue.iter().all(|e| e.curve_variant.is_none()));
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

    /// Parse `base` with `from` replaced once by `to`; the error and the changed text.
    fn refused(base: &str, from: &str, to: &str) -> (InputError, String) {
        assert_eq!(base.matches(from).count(), 1, "`{from}` must occur once");
        let text = base.replacen(from, to, 1);
        let err = parse_family(&text, Path::new("fam.yaml")).unwrap_err();
        (err, text)
    }

    /// 1-based line and column of `needle` in `text`.
    fn place(text: &str, needle: &str) -> (usize, usize) {
        let at = text.find(needle).unwrap();
        let before = &text[..at];
        let line = before.matches('\n').count() + 1;
        let col = before.chars().rev().take_while(|c| *c != '\n').count() + 1;
        (line, col)
    }

    /// The error names `path`, says `what`, and sits at `value_start` in the text.
    fn assert_refused(base: &str, from: &str, to: &str, value_start: &str, path: &str, what: &str) {
        let (err, text) = refused(base, from, to);
        assert_eq!(err.kind, InputErrorKind::InvalidFamily, "{err}");
        let (line, col) = place(&text, value_start);
        assert_eq!(
            err.location,
            Location::at(Path::new("fam.yaml"), line, col),
            "{err}"
        );
        assert!(err.message.contains(path), "`{path}` not in: {err}");
        assert!(err.message.contains(what), "`{what}` not in: {err}");
    }

    #[test]
    fn each_value_is_checked_and_located() {
        for (from, to, at, path, what) in [
            // Invalid values in the shipped EN file, each reported at its own line:column.
            (
                "damage_limit:\n  value: 1.0",
                "damage_limit:\n  value: 0",
                "0\n  # Annex A",
                "damage_limit.value",
                "damage limit must be greater than zero, got 0",
            ),
            (
                "{slope_m: 3, end_cycles: 5.0e6",
                "{slope_m: -3, end_cycles: 5.0e6",
                "-3, end_cycles",
                "curves.normal.segments[0].slope_m",
                "slope_m must be greater than zero, got -3",
            ),
            (
                "{slope_m: 5, end_cycles: 1.0e8, knee_symbol: \"ΔσL\"",
                "{slope_m: .nan, end_cycles: 1.0e8, knee_symbol: \"ΔσL\"",
                ".nan",
                "curves.normal.segments[1].slope_m",
                "slope_m is not a number (NaN)",
            ),
            (
                "{slope_m: 5, end_cycles: 1.0e8, knee_symbol: \"ΔτL\"",
                "{slope_m: .inf, end_cycles: 1.0e8, knee_symbol: \"ΔτL\"",
                ".inf",
                "curves.shear.segments[0].slope_m",
                "slope_m is infinite",
            ),
            (
                "  reference_mm: 25",
                "  reference_mm: 0",
                "0\n  applies",
                "thickness.reference_mm",
                "reference_mm must be greater than zero",
            ),
            (
                "40, 36]",
                "40, 36, 71]",
                "71]",
                "curves.normal.categories_mpa[14]",
                "category 71 is listed twice (also at position 8)",
            ),
            (
                "reference_cycles: 2.0e6",
                "reference_cycles: 0.0",
                "0.0",
                "reference_cycles",
                "reference_cycles must be greater than zero",
            ),
            (
                "gamma_ff: {value: 1.0",
                "gamma_ff: {value: 0",
                "0, source",
                "partial_factors.gamma_ff.value",
                "γFf must be greater than zero",
            ),
            (
                "safe-life: {low: 1.15, high: 1.35}",
                "safe-life: {low: 1.15, high: .nan}",
                ".nan",
                "partial_factors.gamma_mf.table.safe-life.high",
                "at least 1.0, got NaN",
            ),
            (
                "damage-tolerant: {low: 1.00, high: 1.15}\n",
                "damage-tolerant: {low: 1.00, high: 1.15}\n      inspected: {low: 0.9, high: 1.0}\n",
                "0.9",
                "partial_factors.gamma_mf.table.inspected.low",
                "at least 1.0, got 0.9",
            ),
            (
                "    normal_exponent: 3",
                "    normal_exponent: 0",
                "0\n    shear_exponent",
                "verification.interaction.normal_exponent",
                "normal_exponent must be greater than zero",
            ),
            (
                "    limit: 1.0",
                "    limit: -1.0",
                "-1.0",
                "verification.interaction.limit",
                "interaction limit must be greater than zero",
            ),
            (
                "  normal_fy_factor: 1.5",
                "  normal_fy_factor: 0",
                "0\n  shear_fy",
                "validity.normal_fy_factor",
                "normal_fy_factor must be greater than zero",
            ),
            (
                "      compressive_fraction: 0.6\n    non-welded",
                "      compressive_fraction: 1.5\n    non-welded",
                "1.5\n    non-welded",
                "mean_stress.cases.stress-relieved.compressive_fraction",
                "between 0 and 1, got 1.5",
            ),
            (
                "    normal_category: 90\n    thickness_exponent: 0.2",
                "    normal_category: 90\n    thickness_exponent: 1.2",
                "1.2",
                "catalogue[11].thickness_exponent",
                "thickness_exponent must lie between 0 and 1, got 1.2",
            ),
            (
                "  - key: plate-gas-cut-regular",
                "  - key: plate-machine-cut-dressed",
                "plate-machine-cut-dressed\n    reference: \"Table 8.1, detail 5",
                "catalogue[2].key",
                "appears twice",
            ),
            (
                "    normal_category: 125\n    mean_stress_case",
                "    normal_category: 120\n    mean_stress_case",
                "120",
                "catalogue[2].normal_category",
                "normal category 120 is not in the category list",
            ),
            // A catalogue curve_variant must name a normal-stress variant ...
            (
                "    normal_category: 160\n    mean_stress_case: non-welded\n  - key: plate-machine",
                "    normal_category: 160\n    mean_stress_case: non-welded\n    curve_variant: flat\n  - key: plate-machine",
                "flat\n  - key: plate-machine",
                "catalogue[0].curve_variant",
                "curve_variant `flat` is not one of curves.normal.variants (none defined)",
            ),
            // ... on an entry that has a normal-stress category.
            (
                "    shear_category: 100\n",
                "    shear_category: 100\n    curve_variant: flat\n",
                "flat\n    mean_stress_case: non-welded\n  # ---- Table 8.2",
                "catalogue[3].curve_variant",
                "gives no normal_category",
            ),
        ] {
            assert_refused(EN, from, to, at, path, what);
        }
    }

    #[test]
    fn iiw_values_are_checked_too() {
        for (from, to, at, path, what) in [
            (
                "      value: 0.2\n",
                "      value: .nan\n",
                ".nan",
                "damage_limit.cases.varying-mean.value",
                "damage limit is not a number (NaN)",
            ),
            (
                "    curve_variant: non-welded  # IIW 3.2: unwelded steel m = 5 (from memory)\n  - key: plate-machine-cut",
                "    curve_variant: m4\n  - key: plate-machine-cut",
                "m4",
                "catalogue[0].curve_variant",
                "curve_variant `m4` is not one of curves.normal.variants (m5, non-welded)",
            ),
            (
                "[[-1.0, 1.6], [0.5, 1.0]]",
                "[[-1.0, 1.6], [.nan, 1.0]]",
                "[.nan",
                "mean_stress.cases.low-residual.enhancement_points[1]",
                "must be finite numbers",
            ),
            (
                "[[-1.0, 1.3], [-0.25, 1.0]]",
                "[[-1.0, 1.3], [-1.0, 1.0]]",
                "[-1.0, 1.0]",
                "mean_stress.cases.moderate-residual.enhancement_points[1]",
                "R must rise",
            ),
            // The curve's constant-amplitude knee (1) must be a knee of each variant as well.
            (
                "          - {slope_m: 5, end_cycles: 1.0e7, knee_symbol: \"Δσk\", knee_name: \"knee point\"}\n          - {slope_m: 22}\n",
                "          - {slope_m: 5}\n",
                "- {slope_m: 5}\n        source: \"IIW recommendations 3.2, unwelded",
                "curves.normal.variants.non-welded.segments",
                "names no knee of variant `non-welded`",
            ),
            (
                "    cases:\n      proportional:\n        value: 1.0",
                "    cases:\n      proportional:\n        value: 0",
                "0\n        source: \"IIW 4.2",
                "verification.interaction.cases.proportional.value",
                "interaction limit must be greater than zero",
            ),
        ] {
            assert_refused(IIW, from, to, at, path, what);
        }
    }

    fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn duplicate_ids_in_one_set_are_refused() {
        // Two built-in files with one id.
        let err = Library::load_from(&[("a.yaml", EN), ("b.yaml", EN)], None).unwrap_err();
        let (line, col) = place(EN, "en1993-1-9\ntitle");
        assert_eq!(
            err.location,
            Location::at(Path::new("<embedded>/b.yaml"), line, col)
        );
        assert!(
            err.message.contains(
                "family id `en1993-1-9` is given by both <embedded>/a.yaml and <embedded>/b.yaml"
            ),
            "{err}"
        );
        // Two folder files with one id.
        let dir = tempfile::tempdir().unwrap();
        let firm = EN.replace("id: en1993-1-9", "id: firm-en");
        let a = write(dir.path(), "a.yaml", &firm);
        let b = write(dir.path(), "b.yml", &firm);
        let err = Library::load(Some(dir.path())).unwrap_err();
        assert_eq!(err.location, Location::at(&b, line, col));
        assert!(
            err.message.contains(&format!(
                "given by both {} and {}",
                a.display(),
                b.display()
            )),
            "{err}"
        );
    }

    #[test]
    fn a_folder_file_may_replace_a_built_in_family() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "en.yaml",
            &EN.replace("data_version: \"", "data_version: \"firm-"),
        );
        let lib = Library::load(Some(dir.path())).unwrap();
        assert_eq!(lib.ids(), vec!["en1993-1-9", "iiw"]);
        let en = lib.get("en1993-1-9").unwrap();
        assert!(en.data_version.starts_with("firm-"));
        assert_eq!(en.origin, p.display().to_string());
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
        let at = YamlPath::root().key("segments");
        let p = check_segments(&segs, 2e6, &at).unwrap_err();
        assert_eq!(p.path.to_string(), "segments[0]");
        assert!(p
            .message
            .contains("only the last segment may omit end_cycles"));
    }
}
