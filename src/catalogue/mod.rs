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

mod pair;
pub use pair::{AashtoPair, PairCategory};
pub mod crane;
pub mod improvement;
pub mod search;

pub use crane::{CraneLambda, CraneRoute};
pub use improvement::{Improvement, Improvements};

/// Families compiled into the binary so that the tool runs from any folder.
pub const EMBEDDED: &[(&str, &str)] = &[
    (
        "en1993-1-9.yaml",
        include_str!("../../joint-classes/en1993-1-9.yaml"),
    ),
    ("iiw.yaml", include_str!("../../joint-classes/iiw.yaml")),
    (
        "dnv-rp-c203.yaml",
        include_str!("../../joint-classes/dnv-rp-c203.yaml"),
    ),
    (
        "aashto-lrfd.yaml",
        include_str!("../../joint-classes/aashto-lrfd.yaml"),
    ),
    (
        "bs7608.yaml",
        include_str!("../../joint-classes/bs7608.yaml"),
    ),
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
    /// Environments (in air, seawater with cathodic protection, free corrosion) that
    /// choose each published class's curve; absent: one environment, the curves given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub environments: Option<Environments>,
    /// Design curve a number of standard deviations of log N below the mean curve,
    /// where the code publishes mean curves with their scatter (BS 7608).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub design_curve: Option<DesignCurveRule>,
    /// A crane route (EN 1991-3 λ factors) offered to components without a spectrum.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub crane_route: Option<CraneRoute>,
    /// Weld improvement methods (IIW) that a detail may name with `improvement:`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub improvements: Option<Improvements>,
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
    /// Curves in their published form (log a and m per segment), one per class; the
    /// class whose `category_mpa` is a detail's category replaces `segments` for it.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub classes: BTreeMap<String, PublishedClass>,
}

/// One class of a family whose curves are published as N = a·Δσ^(-m) per segment.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct PublishedClass {
    /// The listed category this class stands for (its value in `categories_mpa`).
    pub category_mpa: f64,
    /// Standard deviation of log10 N about the mean curve, where the code gives the
    /// mean curve (the design curve lies `design_curve` standard deviations below).
    #[serde(default)]
    pub log_sd: Option<f64>,
    /// Environment name -> segments in published form.
    pub curves: BTreeMap<String, Vec<PublishedSegment>>,
    pub source: String,
}

/// A segment in published form: log10 N = log_a - m·log10 Δσ, up to `end_cycles`.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct PublishedSegment {
    /// log10 of the intercept a; required on the first segment. On a later segment it
    /// is checked against the knee (the curve continues from the knee).
    #[serde(default)]
    pub log_a: Option<f64>,
    pub slope_m: f64,
    #[serde(default)]
    pub end_cycles: Option<f64>,
    #[serde(default)]
    pub knee_symbol: Option<String>,
    #[serde(default)]
    pub knee_name: Option<String>,
}

/// The environments a family's published classes are given for.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Environments {
    pub default: String,
    pub source: String,
    pub cases: BTreeMap<String, EnvironmentCase>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct EnvironmentCase {
    pub name: String,
    pub source: String,
    /// Whether the curve's constant-amplitude limit knee applies in this environment
    /// (free corrosion: no fatigue limit).
    #[serde(default = "yes")]
    pub constant_amplitude_limit: bool,
}

fn yes() -> bool {
    true
}

/// Mean minus k standard deviations of log N: the default k and its source.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct DesignCurveRule {
    pub default_std_devs: f64,
    pub source: String,
}

/// A size rule of one catalogue entry: its own reference size and exponent.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct SizeRule {
    pub reference_mm: f64,
    pub exponent: f64,
    pub source: String,
}

/// A class curve made ready for the engine: plain segments through a reference range.
#[derive(Debug, Clone)]
pub struct ClassCurve {
    pub class: String,
    pub environment: String,
    pub std_devs: f64,
    /// Range at the family's reference cycles on the first segment's line.
    pub reference_range_mpa: f64,
    pub segments: Vec<Segment>,
    /// Whether the constant-amplitude limit knee applies in this environment.
    pub constant_amplitude_limit: bool,
    pub source: String,
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
    /// The AASHTO LRFD pair: Fatigue I (infinite life, γ·(Δf)max ≤ (ΔF)TH) and
    /// Fatigue II (finite life, γ·(Δf)eff ≤ (A/N)^(1/3)), one of them in force
    /// (`verification.aashto_pair`).
    AashtoPair,
}

impl UtilisationForm {
    pub fn as_str(self) -> &'static str {
        match self {
            UtilisationForm::RangeRatio => "range-ratio",
            UtilisationForm::DamageRatio => "damage-ratio",
            UtilisationForm::RangeAtCycles => "range-at-cycles",
            UtilisationForm::AashtoPair => "aashto-pair",
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
    /// Data of the `aashto-pair` form (load factors, cycle rule, categories).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub aashto_pair: Option<AashtoPair>,
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
    /// Name of one of the family's `curves.shear.variants` whose segments replace the
    /// shear-stress curve of every detail naming this entry (e.g. EN shear studs, m = 8).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub shear_curve_variant: Option<String>,
    /// This entry's own size rule (reference size and exponent), e.g. bolts with a
    /// reference diameter or tubular joints; replaces the family's reference thickness
    /// and the entry's `thickness_exponent`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub size_rule: Option<SizeRule>,
    /// The detail category letter of an `aashto-pair` family (e.g. `C′`): it sets the
    /// threshold and the in-force rule; `normal_category` names its finite-life class.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub category_letter: Option<String>,
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

    /// The published class standing for `category` on a component's curve, if any.
    pub fn class_of(&self, c: Component, category: f64) -> Option<(&str, &PublishedClass)> {
        self.curves
            .get(c)
            .classes
            .iter()
            .find(|(_, k)| k.category_mpa == category)
            .map(|(n, k)| (n.as_str(), k))
    }

    /// The environment in force: the detail's, else the project's, else the family's
    /// default; `None` for a family without environments.
    pub fn environment_in_force(
        &self,
        detail: Option<&str>,
        project: Option<&str>,
    ) -> Option<String> {
        let envs = self.environments.as_ref()?;
        Some(detail.or(project).unwrap_or(&envs.default).to_string())
    }

    /// Names of the family's environments (none for a family without them).
    pub fn environment_names(&self) -> Vec<String> {
        self.environments
            .as_ref()
            .map(|e| e.cases.keys().cloned().collect())
            .unwrap_or_default()
    }

    /// The default number of standard deviations below the mean (0 without a rule).
    pub fn default_std_devs(&self) -> f64 {
        self.design_curve
            .as_ref()
            .map_or(0.0, |d| d.default_std_devs)
    }

    /// The curve of the class standing for `category`, in `environment`, `std_devs`
    /// standard deviations of log N below the mean where the class gives its scatter.
    pub fn class_curve(
        &self,
        c: Component,
        category: f64,
        environment: Option<&str>,
        std_devs: f64,
    ) -> Option<ClassCurve> {
        let (name, class) = self.class_of(c, category)?;
        let env = match environment {
            Some(e) => e.to_string(),
            None => class.curves.keys().next()?.clone(),
        };
        let segs = class.curves.get(&env)?;
        let first = segs.first()?;
        let k = if class.log_sd.is_some() {
            std_devs
        } else {
            0.0
        };
        // design curve: log a_d = log a - k·σ(log N) (BS 7608 design curves, mean minus
        // k standard deviations, from memory)
        let log_a = first.log_a? - k * class.log_sd.unwrap_or(0.0);
        // range at the reference cycles on N = a·Δσ^(-m): Δσ = (a/N)^(1/m) (DNV-RP-C203
        // 2.4.3 / BS 7608 S-N relation, from memory)
        let reference_range_mpa =
            10f64.powf((log_a - self.reference_cycles.log10()) / first.slope_m);
        let ca = self
            .environments
            .as_ref()
            .and_then(|e| e.cases.get(&env))
            .is_none_or(|e| e.constant_amplitude_limit);
        Some(ClassCurve {
            class: name.to_string(),
            environment: env,
            std_devs: k,
            reference_range_mpa,
            segments: segs
                .iter()
                .map(|s| Segment {
                    slope_m: s.slope_m,
                    end_cycles: s.end_cycles,
                    knee_symbol: s.knee_symbol.clone(),
                    knee_name: s.knee_name.clone(),
                })
                .collect(),
            constant_amplitude_limit: ca,
            source: class.source.clone(),
        })
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
        self.check_published()?;
        self.check_pair()?;
        if let Some(r) = &self.crane_route {
            r.check(&root.key("crane_route"))?;
        }
        if let Some(i) = &self.improvements {
            i.check(self, &root.key("improvements"))?;
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
            if let Some(r) = &e.size_rule {
                let rp = ep.key("size_rule");
                positive(
                    rp.key("reference_mm"),
                    "size_rule.reference_mm",
                    r.reference_mm,
                )?;
                if !(0.0..=1.0).contains(&r.exponent) {
                    return Err(FamilyProblem::new(
                        rp.key("exponent"),
                        format!(
                            "catalogue entry `{}`: size_rule.exponent must lie between 0 and 1, got {}",
                            e.key, r.exponent
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
            for (key, variant, comp, word) in [
                (
                    "curve_variant",
                    &e.curve_variant,
                    Component::Normal,
                    "normal",
                ),
                (
                    "shear_curve_variant",
                    &e.shear_curve_variant,
                    Component::Shear,
                    "shear",
                ),
            ] {
                let Some(v) = variant else { continue };
                let names: Vec<&str> = self
                    .curves
                    .get(comp)
                    .variants
                    .keys()
                    .map(|k| k.as_str())
                    .collect();
                if e.category(comp).is_none() {
                    return Err(FamilyProblem::new(
                        ep.key(key),
                        format!(
                            "catalogue entry `{}`: {key} acts on the {word}-stress curve, but the entry gives no {word}_category",
                            e.key
                        ),
                    ));
                }
                if !names.contains(&v.as_str()) {
                    return Err(FamilyProblem::new(
                        ep.key(key),
                        format!(
                            "catalogue entry `{}`: {key} `{v}` is not one of curves.{word}.variants ({})",
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

impl Family {
    /// Environments, design-curve rule and published classes.
    fn check_published(&self) -> Result<(), FamilyProblem> {
        let root = YamlPath::root();
        if let Some(envs) = &self.environments {
            let ep = root.key("environments");
            if !envs.cases.contains_key(&envs.default) {
                return Err(FamilyProblem::new(
                    ep.key("default"),
                    format!(
                        "default environment `{}` is not one of the cases",
                        envs.default
                    ),
                ));
            }
        }
        if let Some(d) = &self.design_curve {
            let k = d.default_std_devs;
            if !(k.is_finite() && (0.0..=4.0).contains(&k)) {
                return Err(FamilyProblem::new(
                    root.key("design_curve").key("default_std_devs"),
                    format!("default_std_devs must lie between 0 and 4, got {k}"),
                ));
            }
        }
        for c in [Component::Normal, Component::Shear] {
            let def = self.curves.get(c);
            let cp = root.key("curves").key(c.as_str());
            if def.classes.is_empty() {
                continue;
            }
            let Some(envs) = &self.environments else {
                return Err(FamilyProblem::new(
                    cp.key("classes"),
                    "published classes need an `environments` section naming the environments their curves are given for",
                ));
            };
            let mut seen: Vec<f64> = Vec::new();
            for (name, class) in &def.classes {
                let kp = cp.key("classes").key(name);
                if !def.categories_mpa.contains(&class.category_mpa) {
                    return Err(FamilyProblem::new(
                        kp.key("category_mpa"),
                        format!(
                            "class `{name}`: category {} is not in the category list",
                            class.category_mpa
                        ),
                    ));
                }
                if seen.contains(&class.category_mpa) {
                    return Err(FamilyProblem::new(
                        kp.key("category_mpa"),
                        format!(
                            "class `{name}`: category {} stands for another class too",
                            class.category_mpa
                        ),
                    ));
                }
                seen.push(class.category_mpa);
                if let Some(sd) = class.log_sd {
                    positive(kp.key("log_sd"), "log_sd", sd)?;
                    if self.design_curve.is_none() {
                        return Err(FamilyProblem::new(
                            kp.key("log_sd"),
                            format!("class `{name}` gives log_sd, but the family has no `design_curve` rule saying how many standard deviations below the mean to design"),
                        ));
                    }
                }
                for env in envs.cases.keys() {
                    if !class.curves.contains_key(env) {
                        return Err(FamilyProblem::new(
                            kp.key("curves"),
                            format!("class `{name}` gives no curve for environment `{env}`"),
                        ));
                    }
                }
                for (env, segs) in &class.curves {
                    let sp = kp.key("curves").key(env);
                    let Some(case) = envs.cases.get(env) else {
                        return Err(FamilyProblem::new(
                            sp,
                            format!("class `{name}`: `{env}` is not one of the environments"),
                        ));
                    };
                    check_published_segments(segs, &sp)?;
                    if let (Some(k), true) = (
                        def.constant_amplitude_limit_knee,
                        case.constant_amplitude_limit,
                    ) {
                        if !(k <= segs.len() && segs[k - 1].end_cycles.is_some()) {
                            return Err(FamilyProblem::new(
                                sp,
                                format!("constant_amplitude_limit_knee {k} names no knee of class `{name}` in `{env}`; set constant_amplitude_limit: false for the environment or give the knee"),
                            ));
                        }
                    }
                }
            }
            for cat in &def.categories_mpa {
                if !def.classes.values().any(|k| k.category_mpa == *cat) {
                    return Err(FamilyProblem::new(
                        cp.key("categories_mpa"),
                        format!("category {cat} has no published class"),
                    ));
                }
            }
        }
        Ok(())
    }
}

/// Published segments: a finite log a on the first, positive slopes, rising knees,
/// an open segment only last, and a later log a that meets the knee within 1 %.
fn check_published_segments(
    segs: &[PublishedSegment],
    path: &YamlPath,
) -> Result<(), FamilyProblem> {
    if segs.is_empty() {
        return Err(FamilyProblem::new(
            path.clone(),
            "at least one segment is needed",
        ));
    }
    let mut knee: Option<(f64, f64)> = None;
    let mut log_a_prev = 0.0;
    for (i, s) in segs.iter().enumerate() {
        let sp = path.index(i);
        positive(sp.key("slope_m"), "slope_m", s.slope_m)?;
        match (i, s.log_a) {
            (0, None) => {
                return Err(FamilyProblem::new(
                    sp,
                    "the first published segment needs log_a",
                ))
            }
            (_, Some(a)) if !a.is_finite() => {
                return Err(FamilyProblem::new(
                    sp.key("log_a"),
                    format!("log_a must be a finite number, got {a}"),
                ))
            }
            (0, Some(a)) => log_a_prev = a,
            (_, Some(a)) => {
                if let Some((n_k, s_k)) = knee {
                    // range of this segment at the knee: log Δσ = (log a - log N)/m
                    let own = 10f64.powf((a - n_k.log10()) / s.slope_m);
                    if ((own - s_k) / s_k).abs() > 0.01 {
                        return Err(FamilyProblem::new(
                            sp.key("log_a"),
                            format!("segment {}: log_a {a} gives {own:.3} MPa at the knee ({n_k:.3e} cycles), but the segment before ends at {s_k:.3} MPa (more than 1 % apart)", i + 1),
                        ));
                    }
                }
                log_a_prev = a;
            }
            (_, None) => {}
        }
        match s.end_cycles {
            Some(n) if n.is_finite() && n > knee.map_or(0.0, |k| k.0) => {
                let s_k = match (knee, s.log_a) {
                    (_, Some(a)) => 10f64.powf((a - n.log10()) / s.slope_m),
                    (Some((n_prev, s_prev)), None) => s_prev * (n_prev / n).powf(1.0 / s.slope_m),
                    (None, None) => 10f64.powf((log_a_prev - n.log10()) / s.slope_m),
                };
                knee = Some((n, s_k));
            }
            Some(n) => {
                return Err(FamilyProblem::new(
                    sp.key("end_cycles"),
                    format!(
                        "segment {}: end_cycles {n} must be finite, positive and rise",
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

/// A problem in a family file: the YAML path of the offending value and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FamilyProblem {
    pub path: YamlPath,
    pub message: String,
}

impl FamilyProblem {
    pub(crate) fn new(path: YamlPath, message: impl Into<String>) -> Self {
        FamilyProblem {
            path,
            message: message.into(),
        }
    }
}

/// A finite number greater than zero, or a problem at `path`.
pub(crate) fn positive(path: YamlPath, what: &str, v: f64) -> Result<(), FamilyProblem> {
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
    const DNV: &str = include_str!("../../joint-classes/dnv-rp-c203.yaml");

    #[test]
    fn embedded_families_load_and_check() {
        let lib = Library::load(None).unwrap();
        assert_eq!(
            lib.ids(),
            vec!["aashto-lrfd", "bs7608", "dnv-rp-c203", "en1993-1-9", "iiw"]
        );
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
        // only the Table 8.7 lattice joints name a curve variant: their own m = 5 curve
        // (EN 1993-1-9 Table 8.7, from memory)
        for e in &en.catalogue {
            assert_eq!(
                e.curve_variant.is_some(),
                e.key.starts_with("lattice-"),
                "{}",
                e.key
            );
        }
        let hj = &en.curves.normal.variants["hollow-joint"];
        assert!(hj.entry_only);
        assert!(hj.segments.iter().all(|s| s.slope_m == 5.0));
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
                "    normal_category: 90\n    thickness_exponent: 0.2   # Table 8.3 details 5-7",
                "    normal_category: 90\n    thickness_exponent: 1.2   # Table 8.3 details 5-7",
                "1.2   # Table 8.3 details 5-7",
                "catalogue[28].thickness_exponent",
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
                "curve_variant `flat` is not one of curves.normal.variants (hollow-joint)",
            ),
            // ... on an entry that has a normal-stress category.
            (
                "    shear_category: 100\n    mean_stress_case: non-welded\n  - key: hollow-seamless",
                "    shear_category: 100\n    curve_variant: flat\n    mean_stress_case: non-welded\n  - key: hollow-seamless",
                "flat\n    mean_stress_case: non-welded\n  - key: hollow-seamless",
                "catalogue[3].curve_variant",
                "gives no normal_category",
            ),
            // A shear_curve_variant must name a shear variant, on a shear entry.
            (
                "    shear_curve_variant: stud      # Table 8.5: m = 8 (from memory)",
                "    shear_curve_variant: studs",
                "studs\n",
                "shear_curve_variant",
                "shear_curve_variant `studs` is not one of curves.shear.variants (stud)",
            ),
            (
                "    description: \"Welded headed shear stud of a composite beam, shear range on the stud's nominal section\"\n    shear_category: 80\n",
                "    description: \"Welded headed shear stud of a composite beam, shear range on the stud's nominal section\"\n    normal_category: 80\n",
                "stud      #",
                "shear_curve_variant",
                "gives no shear_category",
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
                "curve_variant `m4` is not one of curves.normal.variants (improved-m5, m5, non-welded)",
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

    #[test]
    fn published_classes_are_checked_and_located() {
        for (from, to, at, path, what) in [
            // a later log a must meet the knee of the segment before (within 1 %)
            (
                "{log_a: 15.606, slope_m: 5}]\n          seawater-cp: [{log_a: 11.764",
                "{log_a: 15.806, slope_m: 5}]\n          seawater-cp: [{log_a: 11.764",
                "15.806",
                "curves.normal.classes.D.curves.air[1].log_a",
                "more than 1 % apart",
            ),
            (
                "air: [{log_a: 12.164, slope_m: 3",
                "air: [{log_a: .nan, slope_m: 3",
                ".nan, slope_m: 3",
                "curves.normal.classes.D.curves.air[0].log_a",
                "log_a must be a finite number",
            ),
            (
                "free-corrosion: [{log_a: 11.687, slope_m: 3}]",
                "free-corrsion: [{log_a: 11.687, slope_m: 3}]",
                ": [{log_a: 12.164",
                "curves.normal.classes.D.curves",
                "class `D` gives no curve for environment `free-corrosion`",
            ),
            (
                "  default: air",
                "  default: dry",
                "dry",
                "environments.default",
                "default environment `dry` is not one of the cases",
            ),
            (
                "      B1:\n        category_mpa: 160",
                "      B1:\n        category_mpa: 161",
                "161",
                "curves.normal.classes.B1.category_mpa",
                "class `B1`: category 161 is not in the category list",
            ),
            (
                "exponent: 0.25, source: \"DNV-RP-C203 2.4.3: tubular",
                "exponent: 1.25, source: \"DNV-RP-C203 2.4.3: tubular",
                "1.25",
                "size_rule.exponent",
                "size_rule.exponent must lie between 0 and 1, got 1.25",
            ),
        ] {
            assert_refused(DNV, from, to, at, path, what);
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
        assert_eq!(
            lib.ids(),
            vec!["aashto-lrfd", "bs7608", "dnv-rp-c203", "en1993-1-9", "iiw"]
        );
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
