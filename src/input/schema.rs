//! The project file schema (version 1). Every struct refuses unknown keys; units are
//! part of the key names.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// The schema version this build reads.
pub const SCHEMA_VERSION: u32 = 1;

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ProjectFile {
    /// Schema version of the project file.
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
#[derive(Debug, Clone, Deserialize, Serialize)]
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
#[derive(Debug, Clone, Deserialize, Serialize)]
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

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ProjectInfo {
    pub title: String,
    pub reference: String,
    pub revision: String,
    pub prepared_by: String,
    #[serde(default)]
    pub checked_by: Option<String>,
    /// ISO date, YYYY-MM-DD.
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

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Revision {
    pub revision: String,
    pub date: String,
    pub description: String,
    #[serde(default)]
    pub by: Option<String>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
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

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Basis {
    /// Id of a curve family (a file in joint-classes/).
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
}

/// A user's override of a family value; the reason is printed in the report.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Override {
    pub value: f64,
    pub reason: String,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Material {
    pub fy_mpa: f64,
    #[serde(default)]
    pub description: Option<String>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Detail {
    pub id: String,
    pub location: String,
    #[serde(default)]
    pub description: Option<String>,
    /// Key into the family's catalogue; implies categories and corrections.
    #[serde(default)]
    pub detail: Option<String>,
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
    #[serde(default)]
    pub normal: Option<ComponentInput>,
    #[serde(default)]
    pub shear: Option<ComponentInput>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ComponentInput {
    /// Detail category (ΔσC or FAT) in MPa at the family's reference cycles.
    #[serde(default)]
    pub category: Option<f64>,
    /// Constant or variable amplitude, as the engineer states it. Absent: constant when
    /// every block is given in the file with one and the same range, else variable.
    #[serde(default)]
    pub amplitude: Option<Amplitude>,
    pub loading: Vec<LoadEvent>,
}

/// Whether a component's loading is constant or variable amplitude.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
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

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct LoadEvent {
    pub event: String,
    /// Occurrences of the event per year.
    #[serde(default)]
    pub per_year: Option<f64>,
    /// Stress blocks of one occurrence.
    #[serde(default)]
    pub blocks: Option<Vec<Block>>,
    /// A measured or simulated stress history to be counted.
    #[serde(default)]
    pub series: Option<SeriesInput>,
    /// A history from the histories table (index into the project's table histories);
    /// never read from or written to the project file.
    #[serde(skip)]
    pub table_history: Option<usize>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
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
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct SeriesInput {
    /// Path relative to the project file.
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

#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(untagged)]
pub enum ColumnSelector {
    Index(usize),
    Name(String),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum SeriesUnitInput {
    Mpa,
    Microstrain,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ResidueInput {
    Repeated,
    HalfCycles,
}
