//! Histories stage: turns each component's loading (blocks given in the project file,
//! or measured/simulated series counted by rainflow) into a stress spectrum with
//! cycles per year. The assessment reads only these spectra.

use std::collections::BTreeMap;

use crate::error::Error;
use crate::input::{ComponentInput, Project, YamlPath};
use crate::results::{CountedRecord, SeriesFileInfo};

/// One stress block with cycles per year.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumBlock {
    pub event: String,
    /// `given` or `counted`.
    pub origin: &'static str,
    pub range_mpa: f64,
    pub max_mpa: Option<f64>,
    pub min_mpa: Option<f64>,
    pub cycles_per_year: f64,
}

impl SpectrumBlock {
    pub fn mean_mpa(&self) -> Option<f64> {
        match (self.max_mpa, self.min_mpa) {
            // mean stress σm = (σmax + σmin)/2 (common practice)
            (Some(hi), Some(lo)) => Some(0.5 * (hi + lo)),
            _ => None,
        }
    }
}

#[derive(Debug, Clone, Default, PartialEq)]
pub struct ComponentHistory {
    pub blocks: Vec<SpectrumBlock>,
    pub counted: Vec<CountedRecord>,
}

#[derive(Debug, Clone, Default, PartialEq)]
pub struct DetailHistory {
    pub normal: Option<ComponentHistory>,
    pub shear: Option<ComponentHistory>,
}

/// All spectra of a project, and the series files that were read.
#[derive(Debug, Clone, Default)]
pub struct ProjectHistories {
    pub details: Vec<DetailHistory>,
    pub series_files: Vec<SeriesFileInfo>,
}

/// Default number of range bins for a counted series when none is given.
pub const DEFAULT_SERIES_BINS: u32 = 64;

/// Build the spectra of every detail. Series files are counted once each, however
/// many details refer to the same file, column and counting options.
pub fn build(project: &Project) -> Result<ProjectHistories, Error> {
    let mut cache: BTreeMap<String, CountedRecord> = BTreeMap::new();
    let mut files: BTreeMap<String, SeriesFileInfo> = BTreeMap::new();
    let mut out = ProjectHistories::default();
    for (i, d) in project.file.details.iter().enumerate() {
        let base = YamlPath::root().key("details").index(i);
        let normal = match &d.normal {
            Some(c) => Some(component(
                project,
                c,
                &base.key("normal"),
                &mut cache,
                &mut files,
            )?),
            None => None,
        };
        let shear = match &d.shear {
            Some(c) => Some(component(
                project,
                c,
                &base.key("shear"),
                &mut cache,
                &mut files,
            )?),
            None => None,
        };
        out.details.push(DetailHistory { normal, shear });
    }
    out.series_files = files.into_values().collect();
    Ok(out)
}

fn component(
    project: &Project,
    c: &ComponentInput,
    path: &YamlPath,
    _cache: &mut BTreeMap<String, CountedRecord>,
    _files: &mut BTreeMap<String, SeriesFileInfo>,
) -> Result<ComponentHistory, Error> {
    let mut h = ComponentHistory::default();
    for (k, ev) in c.loading.iter().enumerate() {
        if ev.series.is_some() {
            let p = path.key("loading").index(k).key("series");
            return Err(crate::error::InputError::new(
                crate::error::InputErrorKind::Series,
                crate::error::Location::file(&project.path),
                format!("{p}: series loading is not supported by this build"),
            )
            .into());
        }
        if let Some(blocks) = &ev.blocks {
            let per_year = ev.per_year.unwrap_or(1.0);
            for b in blocks {
                let (range, hi, lo) = match (b.range_mpa, b.mean_mpa, b.max_mpa, b.min_mpa) {
                    // σmax = σm + Δσ/2, σmin = σm − Δσ/2 (common practice)
                    (Some(r), Some(m), _, _) => (r, Some(m + 0.5 * r), Some(m - 0.5 * r)),
                    (Some(r), None, _, _) => (r, None, None),
                    // Δσ = σmax − σmin (common practice)
                    (None, _, Some(hi), Some(lo)) => (hi - lo, Some(hi), Some(lo)),
                    _ => return Err(Error::Internal("block form was not checked".into())),
                };
                h.blocks.push(SpectrumBlock {
                    event: ev.event.clone(),
                    origin: "given",
                    range_mpa: range,
                    max_mpa: hi,
                    min_mpa: lo,
                    cycles_per_year: b.cycles * per_year,
                });
            }
        }
    }
    Ok(h)
}
