//! The project file schema (version 1). Every struct refuses unknown keys; units are
//! part of the key names.

use std::collections::BTreeMap;

use serde::{Deserialize, Deserializer, Serialize};

impl ProjectFile {
    /// Give back the spare capacity of every list (a list read from YAML grows by
    /// doubling; a project of 100 000 details would keep about a third of its memory
    /// unused).
    pub fn shrink(&mut self) {
        self.project.revisions.shrink_to_fit();
        self.details.shrink_to_fit();
        for d in &mut self.details {
            for c in [&mut d.normal, &mut d.shear].into_iter().flatten() {
                c.loading.shrink_to_fit();
                for ev in &mut c.loading {
                    if let Some(b) = &mut ev.blocks {
                        b.shrink_to_fit();
                    }
                }
            }
        }
    }
}

/// The schema version this build reads.
pub const SCHEMA_VERSION: u32 = 1;

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ProjectFile {
    /// Schema version of the project file.
    #[schemars(range(min = 1, max = 1))]
    pub seamlife: u32,
    pub project: ProjectInfo,
    pub basis: Basis,
    #[serde(default)]
    pub materials: BTreeMap<String, Material>,
    /// Load events that table rows refer to by name.
    #[serde(default)]
    pub events: Vec<EventDecl>,
    /// Details and their stresses from CSV tables.
    #[serde(default)]
    pub tables: Option<Tables>,
    #[serde(default)]
    pub details: Vec<Detail>,
}

/// A load event declared once for the table rows that name it.
#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct EventDecl {
    pub name: String,
    /// Occurrences of the event per year.
    pub per_year: f64,
    #[serde(default)]
    pub description: Option<String>,
}

/// CSV tables of details, stress blocks and stress histories (paths relative to the
/// project file).
#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Tables {
    /// One row per detail.
    #[serde(default)]
    pub details: Option<String>,
    /// Stress blocks per detail, component and event occurrence.
    #[serde(default)]
    pub stresses: Option<String>,
    /// Stress histories per detail, component and event occurrence, in time order.
    #[serde(default)]
    pub histories: Option<String>,
    /// How the residue of a counted history is closed (default: half cycles, one
    /// occurrence of the event being counted on its own).
    #[serde(default)]
    pub histories_residue: Option<ResidueInput>,
    /// Hysteresis gate for the histories, MPa.
    #[serde(default)]
    pub histories_gate_mpa: Option<f64>,
    /// Allow table files outside the project folder.
    #[serde(default)]
    pub allow_outside_project: bool,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ProjectInfo {
    #[serde(deserialize_with = "text_title")]
    pub title: String,
    #[serde(deserialize_with = "text_reference")]
    pub reference: String,
    #[serde(deserialize_with = "text_revision")]
    pub revision: String,
    #[serde(deserialize_with = "text_prepared_by")]
    pub prepared_by: String,
    #[serde(default)]
    pub checked_by: Option<String>,
    /// ISO date, YYYY-MM-DD.
    #[serde(deserialize_with = "text_date")]
    #[schemars(pattern(r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$"))]
    pub date: String,
    #[serde(default)]
    pub client: Option<String>,
    #[serde(default)]
    pub structure: Option<String>,
    /// The project specification the assessment answers to.
    #[serde(default)]
    pub specification: Option<String>,
    #[serde(default)]
    pub revisions: Vec<Revision>,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Revision {
    #[serde(deserialize_with = "text_revision")]
    pub revision: String,
    #[serde(deserialize_with = "text_date")]
    pub date: String,
    #[serde(deserialize_with = "text_description")]
    pub description: String,
    #[serde(default)]
    pub by: Option<String>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum Strategy {
    SafeLife,
    DamageTolerant,
}

impl Strategy {
    pub fn as_str(self) -> &'static str {
        match self {
            Strategy::SafeLife => "safe-life",
            Strategy::DamageTolerant => "damage-tolerant",
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum Consequence {
    High,
    Low,
}

impl Consequence {
    pub fn as_str(self) -> &'static str {
        match self {
            Consequence::High => "high",
            Consequence::Low => "low",
        }
    }
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Basis {
    /// Id of a curve family (a file in joint-classes/).
    #[serde(deserialize_with = "text_family")]
    pub family: String,
    pub design_life_years: f64,
    pub strategy: Strategy,
    pub consequence: Consequence,
    #[serde(default)]
    pub gamma_ff: Option<Override>,
    #[serde(default)]
    pub gamma_mf: Option<Override>,
    #[serde(default)]
    pub damage_limit: Option<Override>,
    /// A named damage-limit case of the family (e.g. IIW `varying-mean`).
    #[serde(default)]
    pub damage_case: Option<String>,
    /// A named curve variant of the family (e.g. IIW `m5`).
    #[serde(default)]
    pub curve_variant: Option<String>,
    /// A named interaction case of the family (e.g. IIW `proportional`).
    #[serde(default)]
    pub interaction_case: Option<String>,
    /// Environment of the family's published classes for every detail (e.g. DNV
    /// `seawater-cp`); a detail's own `environment` takes precedence.
    #[serde(default)]
    pub environment: Option<String>,
    /// Design curve this many standard deviations of log N below the mean, in place of
    /// the family's default (families that publish mean curves, e.g. BS 7608).
    #[serde(default)]
    pub std_devs_below_mean: Option<Override>,
    /// Single-lane average daily truck traffic (ADTT)SL over the design life, for the
    /// AASHTO LRFD pair (families with the `aashto-pair` verification form).
    #[serde(default)]
    pub adtt_single_lane: Option<f64>,
    /// Stress-range cycles per truck passage n (AASHTO LRFD Table 6.6.1.2.5-2); a
    /// detail may give its own.
    #[serde(default)]
    pub cycles_per_truck_passage: Option<f64>,
}

/// A user's override of a family value; the reason is printed in the report.
#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Override {
    pub value: f64,
    #[serde(deserialize_with = "text_reason")]
    pub reason: String,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Material {
    pub fy_mpa: f64,
    #[serde(default)]
    pub description: Option<String>,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Detail {
    #[serde(deserialize_with = "text_id")]
    pub id: String,
    #[serde(deserialize_with = "text_location")]
    pub location: String,
    #[serde(default)]
    pub description: Option<String>,
    /// Key into the family's catalogue; implies categories and corrections.
    #[serde(default)]
    pub detail: Option<String>,
    #[serde(deserialize_with = "text_material")]
    pub material: String,
    pub thickness_mm: f64,
    /// Toe-to-toe distance L for families whose effective thickness uses it.
    #[serde(default)]
    pub toe_distance_mm: Option<f64>,
    /// Mean-stress case of the family (e.g. EN `stress-relieved`, IIW `low-residual`).
    #[serde(default)]
    pub mean_stress_case: Option<String>,
    /// Exponent of the size correction when set by hand (overrides the catalogue).
    #[serde(default)]
    pub thickness_exponent: Option<f64>,
    /// A group name for summaries and figures (a girder, a bay, a member type).
    #[serde(default)]
    pub group: Option<String>,
    /// Environment of this detail (a family's environments, e.g. `free-corrosion`).
    #[serde(default)]
    pub environment: Option<String>,
    /// Stress concentration factor on the given nominal stress (>= 1), where the
    /// detail's curve is for a local stress (e.g. DNV tubular joints).
    #[serde(default)]
    pub scf: Option<f64>,
    /// Stress-range cycles per truck passage n of this detail (AASHTO pair), in place
    /// of the project's.
    #[serde(default)]
    pub cycles_per_truck_passage: Option<f64>,
    /// A weld improvement method of the family (e.g. IIW `tig-dressing`), acting on
    /// the normal-stress category of the catalogue entry.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub improvement: Option<String>,
    #[serde(default)]
    pub normal: Option<ComponentInput>,
    #[serde(default)]
    pub shear: Option<ComponentInput>,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ComponentInput {
    /// Detail category (ΔσC or FAT) in MPa at the family's reference cycles.
    #[serde(default)]
    pub category: Option<f64>,
    /// Constant or variable amplitude, as the engineer states it. Absent: constant when
    /// every block is given in the file with one and the same range, else variable.
    #[serde(default)]
    pub amplitude: Option<Amplitude>,
    #[serde(default)]
    pub loading: Vec<LoadEvent>,
    /// The crane route in place of `loading` (families with a `crane_route`, EN):
    /// ΔσE,2 = λ·φfat·Δσ(max).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub crane: Option<CraneInput>,
}

/// A component loaded by a crane, given by the crane's stress-history class instead of
/// a spectrum (EN 1991-3 2.12).
#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CraneInput {
    /// Stress-history class S0 ... S9 of the crane (EN 1991-3 Table 2.11 / 2.12).
    #[serde(deserialize_with = "text_stress_history_class")]
    pub stress_history_class: String,
    /// Stress range from the maximum crane load, MPa (Δσ(max) or Δτ(max)).
    pub max_range_mpa: f64,
    /// Dynamic factor for fatigue φfat (EN 1991-3 2.12.1).
    pub phi_fat: f64,
}

/// Whether a component's loading is constant or variable amplitude.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum Amplitude {
    Constant,
    Variable,
}

impl Amplitude {
    pub fn as_str(self) -> &'static str {
        match self {
            Amplitude::Constant => "constant",
            Amplitude::Variable => "variable",
        }
    }
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct LoadEvent {
    #[serde(deserialize_with = "text_event")]
    pub event: String,
    /// Occurrences of the event per year.
    #[serde(default)]
    pub per_year: Option<f64>,
    /// Stress blocks of one occurrence.
    #[serde(default)]
    pub blocks: Option<Vec<Block>>,
    /// A measured or simulated stress history to be counted (boxed: most events have
    /// blocks, and an inline series would triple the size of every event).
    #[serde(default)]
    pub series: Option<Box<SeriesInput>>,
    /// A history from the histories table (index into the project's table histories);
    /// never read from or written to the project file.
    #[serde(skip)]
    pub table_history: Option<usize>,
}

#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Block {
    #[serde(default)]
    pub range_mpa: Option<f64>,
    #[serde(default)]
    pub mean_mpa: Option<f64>,
    #[serde(default)]
    pub max_mpa: Option<f64>,
    #[serde(default)]
    pub min_mpa: Option<f64>,
    pub cycles: f64,
}

/// A stress or strain time series in a CSV file, counted by rainflow.
#[derive(Debug, Clone, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SeriesInput {
    /// Path relative to the project file.
    #[serde(deserialize_with = "text_file")]
    pub file: String,
    /// Column header name, or a 1-based column number.
    pub column: ColumnSelector,
    #[serde(default = "yes")]
    pub header: bool,
    pub unit: SeriesUnitInput,
    /// Young's modulus for strain records, MPa.
    #[serde(default)]
    pub modulus_mpa: Option<f64>,
    #[serde(default)]
    pub scale: Option<f64>,
    /// Duration of the record in hours, with `record_repeats_per_year`, or use the
    /// event's `per_year` as record occurrences per year.
    #[serde(default)]
    pub record_hours: Option<f64>,
    #[serde(default)]
    pub hours_per_year: Option<f64>,
    /// Ranges at or below this gate (MPa) are removed before counting.
    #[serde(default)]
    pub gate_mpa: Option<f64>,
    #[serde(default)]
    pub residue: Option<ResidueInput>,
    #[serde(default)]
    pub bin_width_mpa: Option<f64>,
    #[serde(default)]
    pub bins: Option<u32>,
    /// Number of mean-stress bins of the range-mean matrix (at least 2).
    #[serde(default)]
    pub mean_bins: Option<u32>,
    /// Allow a file outside the project folder.
    #[serde(default)]
    pub allow_outside_project: bool,
}

fn yes() -> bool {
    true
}

#[derive(Debug, Clone, PartialEq, Serialize, schemars::JsonSchema)]
#[serde(untagged)]
pub enum ColumnSelector {
    Index(usize),
    Name(String),
}

impl<'de> Deserialize<'de> for ColumnSelector {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl serde::de::Visitor<'_> for V {
            type Value = ColumnSelector;

            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("a header name, or a column number counted from 1")
            }

            fn visit_u64<E: serde::de::Error>(self, v: u64) -> Result<ColumnSelector, E> {
                usize::try_from(v)
                    .map(ColumnSelector::Index)
                    .map_err(|_| E::custom(format!("column number {v} is too large")))
            }

            fn visit_i64<E: serde::de::Error>(self, v: i64) -> Result<ColumnSelector, E> {
                if v < 1 {
                    Err(E::custom(format!(
                        "column numbers start at 1, got {v}; give the header name or a number from 1"
                    )))
                } else {
                    self.visit_u64(v as u64)
                }
            }

            fn visit_f64<E: serde::de::Error>(self, v: f64) -> Result<ColumnSelector, E> {
                Err(E::custom(format!(
                    "column {v} is not a whole number; give the header name or a number from 1"
                )))
            }

            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<ColumnSelector, E> {
                Ok(ColumnSelector::Name(v.to_string()))
            }

            fn visit_bool<E: serde::de::Error>(self, v: bool) -> Result<ColumnSelector, E> {
                Err(E::custom(format!(
                    "column `{v}` is neither a header name nor a column number"
                )))
            }

            fn visit_unit<E: serde::de::Error>(self) -> Result<ColumnSelector, E> {
                Err(E::custom(
                    "column is empty (null); give the header name or a number from 1",
                ))
            }
        }
        d.deserialize_any(V)
    }
}

/// A required text: YAML null (`~`, `null` or nothing) is refused instead of being
/// read as the text "~"; a quoted "~" stays text. `key` names the field in the message
/// (the files stage locates it).
fn text_named<'de, D: Deserializer<'de>>(d: D, key: &str) -> Result<String, D::Error> {
    match Option::<String>::deserialize(d)? {
        Some(s) => Ok(s),
        None => Err(serde::de::Error::custom(format!(
            "`{key}` {}",
            crate::files::yaml::NULL_TEXT
        ))),
    }
}

macro_rules! required_texts {
    ($($f:ident => $key:literal),* $(,)?) => {
        $(fn $f<'de, D: Deserializer<'de>>(d: D) -> Result<String, D::Error> {
            text_named(d, $key)
        })*
    };
}

required_texts! {
    text_title => "title",
    text_reference => "reference",
    text_revision => "revision",
    text_prepared_by => "prepared_by",
    text_date => "date",
    text_description => "description",
    text_family => "family",
    text_reason => "reason",
    text_id => "id",
    text_location => "location",
    text_material => "material",
    text_event => "event",
    text_file => "file",
    text_stress_history_class => "stress_history_class",
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum SeriesUnitInput {
    Mpa,
    Microstrain,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum ResidueInput {
    Repeated,
    HalfCycles,
}

impl ComponentInput {
    /// The largest stress ratio R = σmin/σmax of the blocks given with σmax > 0, when
    /// every block states its mean (max/min or range with mean) and no series, table
    /// history or crane route is given; `None` otherwise.
    pub fn stated_max_stress_ratio(&self) -> Option<f64> {
        if self.crane.is_some() || self.loading.is_empty() {
            return None;
        }
        let mut r_max = f64::NEG_INFINITY;
        for ev in &self.loading {
            if ev.series.is_some() || ev.table_history.is_some() {
                return None;
            }
            for b in ev.blocks.as_ref()? {
                let (hi, lo) = match (b.range_mpa, b.mean_mpa, b.max_mpa, b.min_mpa) {
                    // σmax = σm + Δσ/2, σmin = σm − Δσ/2 (common practice)
                    (Some(r), Some(m), _, _) => (m + 0.5 * r, m - 0.5 * r),
                    (None, _, Some(hi), Some(lo)) => (hi, lo),
                    _ => return None,
                };
                if hi > 0.0 {
                    // R = σmin/σmax (common practice)
                    r_max = r_max.max(lo / hi);
                }
            }
        }
        r_max.is_finite().then_some(r_max)
    }
}
