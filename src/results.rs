//! The results model: everything the assessment found, in a serialisable form. It is
//! the only thing the report stage reads, and what `--json` writes.
//!
//! Units are in the field names. Values that can be unbounded (a life with no damage)
//! are `null` in JSON.

use serde::{Deserialize, Serialize};

pub const MODEL_VERSION: u32 = 2;

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct Results {
    pub model_version: u32,
    pub tool: ToolInfo,
    pub input: InputInfo,
    pub project: ProjectEcho,
    pub family: FamilyInfo,
    pub basis: BasisUsed,
    pub summary: Summary,
    /// Set when the details are one part of a project (`assess --shard K/N`).
    pub shard: Option<ShardInfo>,
    pub details: Vec<DetailResult>,
    /// Catalogue entries referred to by the details, for the appendix.
    pub catalogue_used: Vec<CatalogueEntryUsed>,
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct ToolInfo {
    pub name: String,
    pub version: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct InputInfo {
    /// File name only (no folders), so results do not depend on the machine.
    pub file_name: String,
    pub sha256: String,
    pub bytes: u64,
    /// The project file, verbatim.
    pub text: String,
    /// Series files read, with their hashes.
    pub series_files: Vec<SeriesFileInfo>,
    /// Table files read (details, stresses, histories), with their hashes.
    pub table_files: Vec<SeriesFileInfo>,
    /// Input-level warnings (e.g. table details without stress rows, left out).
    pub warnings: Vec<Warning>,
}

/// Which part of a project's details a results model holds.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct ShardInfo {
    /// 1-based part number.
    pub part: usize,
    pub parts: usize,
    /// Index of the part's first detail in the whole project.
    pub first_detail: usize,
    /// Details in the whole project.
    pub total_details: usize,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct SeriesFileInfo {
    /// Path as written in the project file.
    pub file: String,
    pub sha256: String,
    pub bytes: u64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct ProjectEcho {
    pub title: String,
    pub reference: String,
    pub revision: String,
    pub prepared_by: String,
    pub checked_by: Option<String>,
    pub date: String,
    pub client: Option<String>,
    pub structure: Option<String>,
    pub specification: Option<String>,
    pub revisions: Vec<RevisionEcho>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct RevisionEcho {
    pub revision: String,
    pub date: String,
    pub description: String,
    pub by: Option<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct FamilyInfo {
    pub id: String,
    pub title: String,
    pub edition: String,
    pub data_version: String,
    pub transcription_note: String,
    /// `embedded` or the override file name.
    pub origin: String,
    pub reference_cycles: f64,
    /// SHA-256 of the family file the run used, so that a checker can confirm the very
    /// curve data (absent in models written before it was recorded).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sha256: Option<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct FactorUsed {
    pub value: f64,
    /// Where the value comes from (clause), or the family's value when overridden.
    pub source: String,
    pub overridden: bool,
    /// The user's stated reason for an override.
    pub reason: Option<String>,
    /// The family's value, shown beside an override.
    pub family_value: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CurveSegmentInfo {
    pub slope_m: f64,
    /// Cycles where the segment ends; `null`: continues without cut-off.
    pub end_cycles: Option<f64>,
    pub knee_symbol: Option<String>,
    pub knee_name: Option<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CurveRuleInfo {
    pub component: String,
    pub symbol: String,
    pub category_symbol: String,
    pub segments: Vec<CurveSegmentInfo>,
    /// Range at or below which constant-amplitude loading causes no damage, as the
    /// 1-based knee index.
    pub constant_amplitude_limit_knee: Option<usize>,
    pub variant: Option<String>,
    pub source: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct BasisUsed {
    pub design_life_years: f64,
    pub strategy: String,
    pub consequence: String,
    pub gamma_ff: FactorUsed,
    pub gamma_mf: FactorUsed,
    pub damage_limit: FactorUsed,
    pub utilisation_form: String,
    pub verification_source: String,
    pub interaction: Option<InteractionRule>,
    pub curves: Vec<CurveRuleInfo>,
    pub thickness_rule: String,
    pub mean_stress_rule: String,
    pub validity_rule: String,
    /// How constant-amplitude loading is told apart and verified.
    pub amplitude_rule: String,
    /// The check form and damage limit for constant amplitude (the family's own, or
    /// the variable-amplitude ones).
    pub constant_amplitude_form: String,
    pub constant_amplitude_damage_limit: f64,
    /// What "utilisation" means, the same for every family.
    pub utilisation_rule: String,
    pub method: Vec<String>,
    /// Judgement calls the engine makes where the code leaves room, stated so that a
    /// checker can challenge them.
    pub judgements: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct InteractionRule {
    pub normal_exponent: f64,
    pub shear_exponent: f64,
    pub limit: f64,
    pub case: Option<String>,
    pub source: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct Summary {
    pub details: usize,
    pub passed: usize,
    pub failed: usize,
    pub outside_method: usize,
    /// The detail with the highest utilisation.
    pub governing_detail: Option<String>,
    pub max_utilisation: f64,
    pub warnings: usize,
}

#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum Status {
    Pass,
    Fail,
    /// A range exceeds the validity limit: the nominal-stress high-cycle method does
    /// not cover the detail.
    OutsideMethod,
}

impl Status {
    pub fn as_str(self) -> &'static str {
        match self {
            Status::Pass => "PASS",
            Status::Fail => "FAIL",
            Status::OutsideMethod => "OUTSIDE METHOD",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct Warning {
    pub code: String,
    pub message: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct DetailResult {
    pub id: String,
    pub location: String,
    pub description: Option<String>,
    pub detail_key: Option<String>,
    pub catalogue_reference: Option<String>,
    pub catalogue_description: Option<String>,
    pub material: String,
    pub fy_mpa: f64,
    pub thickness_mm: f64,
    /// The detail's group (a girder, a bay, a member type), when given.
    pub group: Option<String>,
    pub status: Status,
    /// Design life over fatigue life: the largest utilisation of the checks (pass when
    /// <= 1). For one stress component it is D/D_lim.
    pub utilisation: f64,
    /// The check that limits life and reserve factor: `normal`, `shear` or `interaction`.
    pub governing_check: String,
    /// Every check of the detail, each in its own measure.
    pub checks: Vec<CheckResult>,
    /// The largest component damage over the design life.
    pub damage: f64,
    /// The damage limit of that component's check.
    pub damage_limit: f64,
    pub life_years: Option<f64>,
    /// Factor on all stress ranges that brings the governing check to its limit. For a
    /// detail with records counted cycle by cycle (`per_cycle`), the searches scale
    /// the counted cycles' design ranges held in bins no wider than 1 part in 2048
    /// (upper edge over lower edge, less one): this is then the factor found with each
    /// cycle at the largest range of its bin — never above the exact factor, at most
    /// that relative width below it, and exact where each bin holds one range.
    pub reserve_factor: Option<f64>,
    /// For such a detail, the factor found with each counted cycle at the smallest
    /// range of its bin: never below the exact factor, so the exact factor lies between
    /// `reserve_factor` and this. Absent when no cycles are binned.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reserve_factor_upper: Option<f64>,
    /// Lowest catalogue category of the governing component that passes (counted
    /// cycles at their bins' largest ranges, as for `reserve_factor`; the detail's own
    /// category is judged by the exact damage).
    pub required_category: Option<f64>,
    pub components: Vec<ComponentResult>,
    pub interaction: Option<InteractionResult>,
    pub warnings: Vec<Warning>,
    pub notes: Vec<String>,
    /// The AASHTO LRFD pair (Fatigue I and Fatigue II) of a family of the
    /// `aashto-pair` form; absent for other families.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub truck_pair: Option<TruckPairResult>,
}

/// The AASHTO LRFD pair of one detail: Fatigue I (infinite life) and Fatigue II
/// (finite life), each in its own measure, and which one is in force.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct TruckPairResult {
    /// Detail category letter, e.g. `C′`.
    pub category_letter: String,
    pub adtt_single_lane: f64,
    pub cycles_per_truck_passage: f64,
    /// Stress-range cycles over the design life N = days·Y·n·(ADTT)SL.
    pub cycles_design_life: f64,
    /// A of N = A·Δf^(-3): the source's ksi³ and the curve's MPa³.
    pub constant_ksi3: f64,
    pub constant_mpa3: f64,
    /// Constant-amplitude fatigue threshold (ΔF)TH.
    pub threshold_ksi: f64,
    pub threshold_mpa: f64,
    /// 75-year single-lane ADTT above which infinite life governs (the category's).
    pub infinite_life_adtt: f64,
    /// `fatigue-i` or `fatigue-ii`: the check that decides pass or fail.
    pub in_force: String,
    pub in_force_reason: String,
    /// Fatigue I: γ, the largest range, γ·(Δf)max (MPa and ksi), ratio to (ΔF)TH.
    pub fatigue_i_factor: f64,
    pub max_range_mpa: f64,
    pub fatigue_i_design_range_mpa: f64,
    pub fatigue_i_design_range_ksi: f64,
    pub fatigue_i_ratio: f64,
    pub fatigue_i_passes: bool,
    /// Fatigue II: γ, the effective range (Σ nΔf³/Σ n)^(1/3), γ·(Δf)eff (MPa and
    /// ksi), the resistance (A/N)^(1/3) (MPa and ksi) and the ratio.
    pub fatigue_ii_factor: f64,
    pub effective_range_mpa: f64,
    pub fatigue_ii_design_range_mpa: f64,
    pub fatigue_ii_design_range_ksi: f64,
    pub finite_life_resistance_mpa: f64,
    pub finite_life_resistance_ksi: f64,
    pub fatigue_ii_ratio: f64,
    pub fatigue_ii_passes: bool,
    /// Finite life under the Fatigue II load, years (none without a range).
    pub fatigue_ii_life_years: Option<f64>,
    /// Lowest category letter for which the check in force passes (none: no letter).
    pub required_letter: Option<String>,
    pub fatigue_i_source: String,
    pub fatigue_ii_source: String,
    pub cycles_source: String,
    pub effective_range_source: String,
    pub in_force_source: String,
}

/// One verification of a detail, stated in its own measure.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CheckResult {
    /// `normal`, `shear` or `interaction`.
    pub name: String,
    /// `range-ratio` (γFf·ΔσE,2/ΔσC,d), `damage-ratio` (D/D_lim), `range-at-cycles`
    /// (γFf·Δσ/ΔσR,d(n)) or `interaction` (the interaction sum).
    pub form: String,
    pub value: f64,
    pub limit: f64,
    /// Design life over the life at which this check reaches its limit.
    pub utilisation: f64,
    pub passes: bool,
    pub source: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct InteractionResult {
    pub normal_ratio: f64,
    pub shear_ratio: f64,
    pub normal_exponent: f64,
    pub shear_exponent: f64,
    /// normal_ratio^normal_exponent + shear_ratio^shear_exponent
    pub value: f64,
    pub limit: f64,
    pub source: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct SizeCorrection {
    pub applies: bool,
    pub thickness_mm: f64,
    pub effective_thickness_mm: f64,
    pub reference_mm: f64,
    pub exponent: Option<f64>,
    /// ks (EN) or f(t) (IIW); 1.0 when it does not apply.
    pub factor: f64,
    pub source: String,
    pub exponent_from: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct MeanStressCorrection {
    pub case: String,
    pub case_name: String,
    /// `compressive-fraction` or `enhancement`.
    pub rule: String,
    pub source: String,
    /// False for shear: the mean-stress rules act on normal stress only.
    pub applies: bool,
    /// Whether the rule changed any range.
    pub acted: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CurvePoint {
    pub cycles: f64,
    pub range_mpa: f64,
    pub symbol: Option<String>,
    pub name: Option<String>,
}

/// An S-N curve fixed by its reference point and knees (all MPa and cycles).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CurveResult {
    pub reference_cycles: f64,
    pub reference_range_mpa: f64,
    pub slopes: Vec<f64>,
    /// Knee points, one per segment end.
    pub knees: Vec<CurvePoint>,
    /// True when ranges below the last knee cause no damage.
    pub cut_off: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct BlockResult {
    pub event: String,
    /// `given` for a block of the project file, `counted` for a rainflow cell.
    pub origin: String,
    pub range_mpa: f64,
    pub max_mpa: Option<f64>,
    pub min_mpa: Option<f64>,
    pub mean_mpa: Option<f64>,
    pub amplitude_mpa: f64,
    /// σmin/σmax; `null` when σmax = 0 or unknown.
    pub stress_ratio: Option<f64>,
    /// Δσ_eff/Δσ from the mean-stress rule (1.0 when it does not act).
    pub mean_stress_factor: f64,
    pub effective_range_mpa: f64,
    /// γFf · effective range.
    pub design_range_mpa: f64,
    pub cycles_per_year: f64,
    pub cycles_design_life: f64,
    /// 1-based curve segment; `null` below the cut-off.
    pub segment: Option<usize>,
    pub endurance_cycles: Option<f64>,
    pub damage: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct BandDamage {
    pub label: String,
    pub cycles_design_life: f64,
    pub damage: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct ComponentResult {
    pub component: String,
    pub symbol: String,
    pub category_symbol: String,
    /// Category used (ΔσC, FAT), MPa.
    pub category_mpa: f64,
    /// `catalogue`, `hand` or `hand-over-catalogue`.
    pub category_source: String,
    pub catalogue_category_mpa: Option<f64>,
    pub size: SizeCorrection,
    pub mean_stress: MeanStressCorrection,
    /// size factor · category
    pub corrected_category_mpa: f64,
    pub gamma_mf: f64,
    pub gamma_ff: f64,
    /// size factor · category / γMf
    pub design_category_mpa: f64,
    pub characteristic_curve: CurveResult,
    pub design_curve: CurveResult,
    /// A named curve variant in force for this component; `null`: the family's main
    /// curve.
    pub curve_variant: Option<CurveVariantUsed>,
    pub constant_amplitude_limit_mpa: Option<f64>,
    /// `constant` or `variable`.
    pub amplitude: String,
    /// Why: stated in the project file, or what the blocks show.
    pub amplitude_basis: String,
    /// True when the loading was constant amplitude at or below its limit.
    pub constant_amplitude_rule_applied: bool,
    /// Design resistance at the applied cycle count, for a check on the range
    /// (`range-at-cycles`).
    pub resistance_at_cycles_mpa: Option<f64>,
    pub blocks: Vec<BlockResult>,
    pub damage_by_band: Vec<BandDamage>,
    pub damage_per_year: f64,
    pub damage: f64,
    /// Damage limit of this component's check (constant or variable amplitude).
    pub damage_limit: f64,
    /// Slope used for the equivalent range (first segment).
    pub equivalent_slope_m: f64,
    /// ΔσE,2: the constant range at the reference cycles that uses the same fraction of
    /// the damage limit, γFf·ΔσE,2 = ΔσC,d·(D/D_lim)^(1/m1); with D_lim = 1 the usual
    /// damage-equivalent range.
    pub equivalent_range_mpa: f64,
    /// γFf · ΔσE,2
    pub design_equivalent_range_mpa: f64,
    /// (D/D_lim)^(1/m1) = γFf·ΔσE,2/ΔσC,d
    pub range_ratio: f64,
    /// D/D_lim: design life over this component's fatigue life.
    pub utilisation: f64,
    pub life_years: Option<f64>,
    pub required_category_mpa: Option<f64>,
    pub cycles_design_life: f64,
    pub cycles_below_cut_off: f64,
    pub max_range_mpa: f64,
    pub validity_limit_mpa: f64,
    pub counted: Vec<CountedRecord>,
    /// Environment of the family's published class curve, where the family has them.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub environment: Option<String>,
    /// Stress concentration factor on the given nominal stress, where one is given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scf: Option<f64>,
    /// The crane route used in place of a spectrum (EN 1991-3 2.12), if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub crane_route: Option<CraneRouteUsed>,
    /// The weld improvement applied to the normal-stress category, if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub improvement: Option<ImprovementUsed>,
}

/// A measured or simulated record counted by rainflow for one loading event.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CountedRecord {
    pub event: String,
    pub file: String,
    pub column: String,
    pub unit: String,
    pub scale: f64,
    pub modulus_mpa: Option<f64>,
    pub samples: u64,
    pub reversals: u64,
    pub full_cycles: u64,
    pub half_cycles: u64,
    pub min_mpa: f64,
    pub max_mpa: f64,
    pub mean_mpa: f64,
    pub std_dev_mpa: f64,
    pub constant: bool,
    pub gate_mpa: f64,
    /// `repeated` or `half-cycles`.
    pub residue: String,
    pub repeats_per_year: f64,
    pub bin_width_mpa: f64,
    pub mean_bin_width_mpa: f64,
    pub histogram: Vec<HistogramBin>,
    pub matrix: Vec<MatrixCell>,
    /// True when every counted cycle entered the damage sum at its own range and mean;
    /// false when each range-mean cell entered at its largest range.
    pub per_cycle: bool,
}

/// Histogram bins and matrix cells are the counting stage's own serialisable types.
pub use crate::histories::spectrum::{MatrixCell, RangeBin as HistogramBin};

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CatalogueEntryUsed {
    pub key: String,
    pub reference: String,
    pub description: String,
    pub normal_category: Option<f64>,
    pub shear_category: Option<f64>,
    pub thickness_exponent: Option<f64>,
    pub mean_stress_case: Option<String>,
    pub curve_variant: Option<String>,
}

/// A curve variant a component was assessed on.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct CurveVariantUsed {
    pub name: String,
    pub description: String,
    /// `catalogue entry` (the detail type's own curve) or `project basis`.
    pub from: String,
    pub source: String,
}

/// The standing cautions printed by the command line and in the package.
pub fn cautions(family_edition: &str) -> Vec<String> {
    vec![
        format!(
            "The governing code and its National Annex (this package applies {family_edition}), the project specification and review by a licensed or chartered engineer prevail over this output."
        ),
        "Assigning the detail category and defining the nominal stress ranges is the engineer's responsibility; seamlife checks arithmetic, not the choice of detail.".into(),
        "Curve and catalogue data were transcribed by the seamlife developers, partly from memory; check every value against the edition in force.".into(),
        "The nominal-stress method covers high-cycle fatigue only; ranges beyond the validity limit need a low-cycle assessment.".into(),
    ]
}

/// One line for terminal output.
pub const CAUTION_LINE: &str = "Caution: the governing code, the project specification and review by a licensed/chartered engineer prevail; category assignment is the engineer's responsibility; check transcribed curve data against the edition in force.";

/// The crane route of a component: ΔσE,2 = λ·φfat·Δσ(max) with the λ of its
/// stress-history class (EN 1991-3 2.12), and the clauses.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct CraneRouteUsed {
    pub stress_history_class: String,
    /// λ of the class for this component's stress (normal or shear).
    pub lambda: f64,
    pub lambda_source: String,
    pub phi_fat: f64,
    pub max_range_mpa: f64,
    /// ΔσE,2 = λ·φfat·Δσ(max), MPa.
    pub equivalent_range_mpa: f64,
    pub rule: String,
    pub check_source: String,
}

/// A weld improvement applied to a component's category, with its working and source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct ImprovementUsed {
    pub method: String,
    pub name: String,
    pub as_welded_category_mpa: f64,
    pub improved_category_mpa: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub factor: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub class_steps: Option<u32>,
    pub working: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub curve_variant: Option<String>,
    pub source: String,
}
