//! Histories stage: turns each component's loading (blocks given in the project file,
//! or measured/simulated series counted by rainflow) into a stress spectrum with
//! cycles per year. The assessment reads only these spectra.

pub mod binary;
pub mod damage;
pub mod ingest;
pub mod part;
pub mod rainflow;
pub mod series;
pub mod spectrum;

use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::catalogue::Component;
use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::histories::series::{ColumnRef, CountOptions, SeriesSpec, SeriesUnit};
use crate::histories::spectrum::{BinRule, Spectrum, SpectrumSpec};
use crate::input::{
    ColumnSelector, ComponentInput, LoadEvent, Project, ResidueInput, SeriesInput, SeriesUnitInput,
    YamlPath,
};
use crate::results::{CountedRecord, SeriesFileInfo};

/// One stress block with cycles per year.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumBlock {
    /// The load event's name (shared by its blocks).
    pub event: Arc<str>,
    /// `given` or `counted`.
    pub origin: &'static str,
    pub range_mpa: f64,
    pub max_mpa: Option<f64>,
    pub min_mpa: Option<f64>,
    pub cycles_per_year: f64,
    /// A cell of a counted series whose cycles' damage was summed cycle by cycle: that
    /// damage per year (the block's range and mean are then the cell's, for display).
    pub damage_per_year: Option<f64>,
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
    /// Per-cycle sums of the counted series (the blocks with `damage_per_year`), per year.
    pub exact: Vec<ExactDamage>,
}

/// The damage of a counted series on one detail, summed over every cycle at its own
/// range and mean (see [`damage`]): per pass of the record, or per year once scaled.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ExactDamage {
    /// Damage of each cell of the record's range-mean matrix, in its order.
    pub cells: Vec<f64>,
    /// Σ damage.
    pub damage: f64,
    /// Per curve segment: (cycles, damage).
    pub bands: Vec<(f64, f64)>,
    /// Cycles below the cut-off.
    pub below: f64,
    /// The mean-stress rule changed the range of some cycle.
    pub acted: bool,
    /// The cycles by design range γFf·Δσ_eff: (smallest range, largest range, cycles)
    /// of each non-empty bin of [`damage::DesignRanges`] (MPa), by rising range; what
    /// the reserve-factor and required-category searches scale.
    pub ranges: Vec<(f64, f64, f64)>,
}

impl ExactDamage {
    fn scaled(&self, k: f64) -> ExactDamage {
        ExactDamage {
            cells: self.cells.iter().map(|d| d * k).collect(),
            damage: self.damage * k,
            bands: self.bands.iter().map(|&(n, d)| (n * k, d * k)).collect(),
            below: self.below * k,
            acted: self.acted,
            ranges: self
                .ranges
                .iter()
                .map(|&(lo, hi, n)| (lo, hi, n * k))
                .collect(),
        }
    }
}

#[derive(Debug, Clone, Default, PartialEq)]
pub struct DetailHistory {
    pub normal: Option<ComponentHistory>,
    pub shear: Option<ComponentHistory>,
}

/// The spectra of a project: series files are counted once, up front (they are read
/// from disk and may fail); each detail's spectrum is then made on demand by
/// [`ProjectHistories::detail`], so that a project of many details never holds every
/// spectrum at once.
#[derive(Debug, Clone, Default)]
pub struct ProjectHistories {
    /// Counted series by (detail index, component, loading index), with the damage
    /// summed cycle by cycle when the count was given the detail's rule.
    records: HashMap<(usize, Component, usize), (CountedRecord, Option<ExactDamage>)>,
    pub series_files: Vec<SeriesFileInfo>,
    /// The series files read, resolved (so that no output is written over one).
    pub series_paths: Vec<PathBuf>,
    /// Findings of the signal stage that belong with a detail's warnings.
    pub notes: Vec<HistoryNote>,
}

/// A finding of the signal stage about one detail (e.g. a gate that removed every
/// cycle of a record). Shaped as a results warning: a stable `code` and a message.
#[derive(Debug, Clone, PartialEq)]
pub struct HistoryNote {
    /// Index of the detail in the project file.
    pub detail: usize,
    pub detail_id: String,
    /// `normal` or `shear`.
    pub component: &'static str,
    pub code: &'static str,
    pub message: String,
}

/// Warning code of a gate that removes every cycle of a record.
pub const GATE_REMOVES_ALL: &str = "gate-removes-all-cycles";

/// The warning for a record whose gate removed every cycle, if it did: the gate is at
/// least the record's whole span, so the series adds no damage.
pub fn gate_note(rec: &CountedRecord) -> Option<String> {
    let cycles = rec.full_cycles + rec.half_cycles;
    if rec.gate_mpa > 0.0 && cycles == 0 && !rec.constant {
        Some(format!(
            "the hysteresis gate of {} MPa removes every cycle of series `{}` (column {}): the record spans only {} MPa from its lowest to its highest value, so it adds no damage; lower `gate_mpa` below the ranges that matter",
            crate::files::short_num(rec.gate_mpa),
            rec.file,
            rec.column,
            crate::files::short_num(rec.max_mpa - rec.min_mpa)
        ))
    } else {
        None
    }
}

/// Most cycles per year a spectrum block may carry. 1e15 a year is about 3·10⁷ cycles
/// every second of the year, beyond any structural loading (common practice: machine
/// vibration lies below a few kHz); a larger figure is a mistake in `per_year`,
/// `cycles` or the record's hours, and would overflow the damage sum.
pub const MAX_CYCLES_PER_YEAR: f64 = 1e15;

impl ProjectHistories {
    /// The spectrum of detail `i` of the project (blocks given, table histories counted
    /// now, series counted at build time).
    pub fn detail(&self, project: &Project, i: usize) -> DetailHistory {
        self.detail_with(project, i, true)
    }

    /// [`ProjectHistories::detail`]; without `records`, the counted records' figures
    /// (histogram, matrix) of table histories are not made and series records not
    /// copied (the blocks are the same).
    pub fn detail_with(&self, project: &Project, i: usize, records: bool) -> DetailHistory {
        let d = &project.file.details[i];
        let comp = |c: Component, input: &Option<ComponentInput>| {
            input
                .as_ref()
                .map(|ci| self.component(project, i, c, ci, records))
        };
        DetailHistory {
            normal: comp(Component::Normal, &d.normal),
            shear: comp(Component::Shear, &d.shear),
        }
    }

    fn component(
        &self,
        project: &Project,
        i: usize,
        comp: Component,
        c: &ComponentInput,
        records: bool,
    ) -> ComponentHistory {
        let mut h = ComponentHistory::default();
        for (k, ev) in c.loading.iter().enumerate() {
            if let Some(blocks) = &ev.blocks {
                given_blocks(ev, blocks, &mut h.blocks);
            }
            if let Some(t) = ev.table_history {
                let rec = table_history(project, ev, t, &mut h.blocks, records);
                h.counted.extend(rec);
            }
            if let Some((rec, exact)) = self.records.get(&(i, comp, k)) {
                let exact = exact.as_ref().map(|e| e.scaled(rec.repeats_per_year));
                cell_blocks(ev, rec, exact.as_ref(), &mut h.blocks);
                h.exact.extend(exact);
                if records {
                    h.counted.push(rec.clone());
                }
            }
        }
        h
    }
}

/// Blocks given in the project file or the stresses table, per year.
fn given_blocks(ev: &LoadEvent, blocks: &[crate::input::Block], out: &mut Vec<SpectrumBlock>) {
    let per_year = ev.per_year.unwrap_or(1.0);
    let name: Arc<str> = ev.event.as_str().into();
    for b in blocks {
        let (range, hi, lo) = match (b.range_mpa, b.mean_mpa, b.max_mpa, b.min_mpa) {
            // σmax = σm + Δσ/2, σmin = σm − Δσ/2 (common practice)
            (Some(r), Some(m), _, _) => (r, Some(m + 0.5 * r), Some(m - 0.5 * r)),
            (Some(r), None, _, _) => (r, None, None),
            // Δσ = σmax − σmin (common practice)
            (None, _, Some(hi), Some(lo)) => (hi - lo, Some(hi), Some(lo)),
            // refused by the input checks
            _ => continue,
        };
        out.push(SpectrumBlock {
            event: name.clone(),
            origin: "given",
            range_mpa: range,
            max_mpa: hi,
            min_mpa: lo,
            cycles_per_year: b.cycles * per_year,
            damage_per_year: None,
        });
    }
}

/// The cells of a counted series' range-mean matrix as blocks; with `exact` (per
/// year), each block carries the damage summed over its own cycles.
fn cell_blocks(
    ev: &LoadEvent,
    rec: &CountedRecord,
    exact: Option<&ExactDamage>,
    out: &mut Vec<SpectrumBlock>,
) {
    let name: Arc<str> = ev.event.as_str().into();
    for (j, cell) in rec.matrix.iter().enumerate() {
        // Each cell is one block: its largest range and weighted mean, so every
        // counted cycle is represented at or above its own range (without `exact`,
        // the block's damage is that of the cell's cycles all at that range).
        let r = cell.max_range_mpa;
        if r <= 0.0 {
            continue;
        }
        out.push(SpectrumBlock {
            event: name.clone(),
            origin: "counted",
            range_mpa: r,
            max_mpa: Some(cell.mean_mpa + 0.5 * r),
            min_mpa: Some(cell.mean_mpa - 0.5 * r),
            cycles_per_year: cell.cycles * rec.repeats_per_year,
            damage_per_year: exact.map(|e| e.cells.get(j).copied().unwrap_or(0.0)),
        });
    }
}

/// Default largest number of range bins for a counted series.
pub const DEFAULT_SERIES_BINS: u32 = 64;
/// Default largest number of mean bins of the range-mean matrix.
pub const DEFAULT_MEAN_BINS: u32 = 16;

/// Count the series files of a project, once each however many details refer to the
/// same file (several columns of one file are counted in one pass over it); without
/// per-cycle rules each counted cell enters the damage sum and the searches at its
/// largest range, if assessed (`lint` counts this way and sums no damage).
pub fn build(project: &Project) -> Result<ProjectHistories, Error> {
    build_with(project, &|_, _| None)
}

/// Which per-cycle damage rule a series event of (detail index, component) is counted
/// with; `None` leaves that event to the cells of its range-mean matrix.
pub type RuleFor<'a> = dyn Fn(usize, Component) -> Option<damage::SharedRule> + 'a;

/// One series event of the project file.
struct Request<'p> {
    detail: usize,
    comp: Component,
    loading: usize,
    sp: YamlPath,
    ev: &'p LoadEvent,
    s: &'p SeriesInput,
    rule: Option<damage::SharedRule>,
}

/// Series events that share a file and its reading and counting options.
struct Group {
    spec: SeriesSpec,
    opts: CountOptions,
    path: PathBuf,
    /// Distinct columns, in order of first use.
    columns: Vec<ColumnSelector>,
    /// Requests (indices) of each column.
    users: Vec<Vec<usize>>,
}

/// [`build`], the damage of each series event summed over every counted cycle at its
/// own range and mean by the rule `rules` gives for its detail and component, in the
/// streaming count (EN 1993-1-9 A.6 applied cycle by cycle).
pub fn build_with(project: &Project, rules: &RuleFor) -> Result<ProjectHistories, Error> {
    let mut reqs: Vec<Request> = Vec::new();
    for (i, d) in project.file.details.iter().enumerate() {
        for (comp, input) in [(Component::Normal, &d.normal), (Component::Shear, &d.shear)] {
            let Some(c) = input else { continue };
            for (k, ev) in c.loading.iter().enumerate() {
                let Some(s) = &ev.series else { continue };
                let sp = YamlPath::root()
                    .key("details")
                    .index(i)
                    .key(comp.as_str())
                    .key("loading")
                    .index(k)
                    .key("series");
                reqs.push(Request {
                    detail: i,
                    comp,
                    loading: k,
                    sp,
                    ev,
                    s,
                    rule: rules(i, comp),
                });
            }
        }
    }
    // group the events by file and options (the column aside)
    let mut groups: Vec<Group> = Vec::new();
    let mut by_key: HashMap<String, usize> = HashMap::new();
    for (q, r) in reqs.iter().enumerate() {
        let s = r.s;
        let loc = || locate_at(project, &r.sp.key("file"));
        let path = resolve_series_path(&project.dir, &s.file, s.allow_outside_project, &loc)?;
        let key = format!(
            "{}|{}|{:?}|{:?}|{:?}|{:?}|{:?}|{:?}|{:?}|{:?}",
            path.display(),
            s.header,
            s.unit,
            s.modulus_mpa,
            s.scale,
            s.gate_mpa,
            s.residue,
            s.bin_width_mpa,
            s.bins,
            s.mean_bins
        );
        let g = *by_key.entry(key).or_insert_with(|| {
            let (spec, opts) = series_request(&path, s);
            groups.push(Group {
                spec,
                opts,
                path: path.clone(),
                columns: Vec::new(),
                users: Vec::new(),
            });
            groups.len() - 1
        });
        let g = &mut groups[g];
        match g.columns.iter().position(|c| *c == s.column) {
            Some(j) => g.users[j].push(q),
            None => {
                g.columns.push(s.column.clone());
                g.users.push(vec![q]);
            }
        }
    }
    let mut st = State::default();
    let mut out = ProjectHistories::default();
    // per request: the count of its column and the tally of its rule
    let mut done: Vec<Option<(crate::histories::series::CountedSeries, Option<ExactDamage>)>> =
        (0..reqs.len()).map(|_| None).collect();
    let mut failed: Option<(usize, crate::histories::series::SeriesError)> = None;
    for g in &groups {
        match count_group(g, &reqs, &g.columns, &g.users) {
            Ok(per) => {
                for (q, v) in per {
                    done[q] = Some(v);
                }
            }
            Err(_) => {
                // find which column fails (and count the others) one column at a time
                for (col, users) in g.columns.iter().zip(&g.users) {
                    match count_group(
                        g,
                        &reqs,
                        std::slice::from_ref(col),
                        std::slice::from_ref(users),
                    ) {
                        Ok(per) => {
                            for (q, v) in per {
                                done[q] = Some(v);
                            }
                        }
                        Err(e) => {
                            let q = users[0];
                            if failed.as_ref().is_none_or(|(f, _)| q < *f) {
                                failed = Some((q, e));
                            }
                        }
                    }
                }
            }
        }
    }
    if let Some((q, e)) = failed {
        let r = &reqs[q];
        let loc = locate_at(project, &r.sp.key("file"));
        return Err(InputError::new(InputErrorKind::Series, loc, e.to_string())
            .hint(series_hint(&e))
            .into());
    }
    for g in &groups {
        if !st.paths.contains(&g.path) {
            let first = &reqs[g.users[0][0]];
            let digest = crate::files::file_sha256(&g.path).map_err(|e| {
                InputError::new(
                    InputErrorKind::Io,
                    locate_at(project, &first.sp.key("file")),
                    format!("cannot read `{}`: {e}", first.s.file),
                )
            })?;
            st.paths.push(g.path.clone());
            for u in g.users.iter().flatten() {
                let s = reqs[*u].s;
                st.files.entry(s.file.clone()).or_insert(SeriesFileInfo {
                    file: s.file.clone(),
                    sha256: digest.0.clone(),
                    bytes: digest.1,
                });
            }
        } else {
            for u in g.users.iter().flatten() {
                let s = reqs[*u].s;
                if !st.files.contains_key(&s.file) {
                    let digest = crate::files::file_sha256(&g.path).map_err(|e| {
                        InputError::new(
                            InputErrorKind::Io,
                            locate_at(project, &reqs[*u].sp.key("file")),
                            format!("cannot read `{}`: {e}", s.file),
                        )
                    })?;
                    st.files.insert(
                        s.file.clone(),
                        SeriesFileInfo {
                            file: s.file.clone(),
                            sha256: digest.0,
                            bytes: digest.1,
                        },
                    );
                }
            }
        }
    }
    for (q, r) in reqs.iter().enumerate() {
        let Some((cs, exact)) = done[q].take() else {
            return Err(Error::Internal("a series event was not counted".into()));
        };
        let s = r.s;
        let repeats_per_year = match (s.record_hours, s.hours_per_year) {
            // record repeats per year = operating hours per year / record duration
            (Some(rec), Some(per)) => per / rec,
            _ => r.ev.per_year.unwrap_or(1.0),
        };
        let (_, opts) = series_request(Path::new(""), s);
        let mut rec = counted_record(
            cs,
            RecordLabels {
                event: r.ev.event.clone(),
                file: s.file.clone(),
                column: match &s.column {
                    ColumnSelector::Index(i) => format!("column {i}"),
                    ColumnSelector::Name(n) => n.clone(),
                },
                unit: s.unit,
                scale: s.scale.unwrap_or(1.0),
                modulus_mpa: s.modulus_mpa,
                gate_mpa: opts.gate_mpa,
                mode: opts.mode,
                repeats_per_year,
            },
        );
        rec.per_cycle = exact.is_some();
        if let Some(message) = gate_note(&rec) {
            st.notes.push(HistoryNote {
                detail: r.detail,
                detail_id: project.file.details[r.detail].id.clone(),
                component: r.comp.as_str(),
                code: GATE_REMOVES_ALL,
                message,
            });
        }
        let most = rec
            .matrix
            .iter()
            .map(|c| c.cycles * rec.repeats_per_year)
            .fold(0.0, f64::max);
        if most.is_nan() || most > MAX_CYCLES_PER_YEAR {
            let sp = &r.sp;
            return Err(InputError::new(
                InputErrorKind::OutOfRange,
                locate_at(project, sp),
                format!(
                    "{sp}: the record repeated {} times a year gives {} cycles a year in one spectrum cell, more than the {} that any structure sees",
                    crate::files::short_num(rec.repeats_per_year),
                    crate::files::short_num(most),
                    crate::files::short_num(MAX_CYCLES_PER_YEAR)
                ),
            )
            .hint("check `per_year`, or `record_hours` and `hours_per_year`, of this event")
            .into());
        }
        out.records
            .insert((r.detail, r.comp, r.loading), (rec, exact));
    }
    out.series_files = st.files.into_values().collect();
    out.series_paths = st.paths;
    out.notes = st.notes;
    Ok(out)
}

/// (request, its count and exact damage) for every user of a group.
type GroupCounts = Vec<(
    usize,
    (crate::histories::series::CountedSeries, Option<ExactDamage>),
)>;

/// Count `columns` of a group's file in one pass, each with the rules of its users;
/// returns (request, its count and exact damage) for every user.
fn count_group(
    g: &Group,
    reqs: &[Request],
    columns: &[ColumnSelector],
    users: &[Vec<usize>],
) -> Result<GroupCounts, crate::histories::series::SeriesError> {
    use crate::histories::ingest::{count_channels_rated, Channels, Ingest};
    if part::looks_like_part(&g.spec.path) {
        return part_group(g, columns, users);
    }
    let refs: Vec<ColumnRef> = columns.iter().map(column_ref).collect();
    let rules: Vec<Vec<damage::SharedRule>> = users
        .iter()
        .map(|us| us.iter().filter_map(|&q| reqs[q].rule.clone()).collect())
        .collect();
    let counts = count_channels_rated(
        &g.spec,
        &Channels::These(refs),
        &g.opts,
        Ingest::default(),
        &|_, _| {},
        &rules,
    )?;
    let mut out = Vec::new();
    for ((cc, tallies), us) in counts.into_iter().zip(users) {
        let mut tallies = tallies.into_iter();
        for &q in us {
            let exact = reqs[q]
                .rule
                .as_ref()
                .and_then(|_| tallies.next())
                .map(|t| ExactDamage {
                    cells: t.cell_damage(&cc.counted.matrix),
                    damage: t.damage,
                    bands: t.bands.clone(),
                    below: t.below,
                    acted: t.acted,
                    ranges: t.ranges.bins(),
                });
            out.push((q, (cc.counted.clone(), exact)));
        }
    }
    Ok(out)
}

/// The counts of `columns` read from a spectrum part (`count --spectrum-out`) instead
/// of a time series: the part's records closed with the event's residue rule and
/// summed. A part holds binned cells, not each cycle, so there is no per-cycle damage:
/// each cell enters the damage sum at its largest range (the results say so).
fn part_group(
    g: &Group,
    columns: &[ColumnSelector],
    users: &[Vec<usize>],
) -> Result<GroupCounts, crate::histories::series::SeriesError> {
    use crate::histories::series::SeriesError;
    let bad = SeriesError::Part;
    let read = part::ReadPart::read(&g.spec.path).map_err(|e| {
        bad(format!(
            "{e}{}",
            e.hint
                .as_deref()
                .map(|h| format!(" ({h})"))
                .unwrap_or_default()
        ))
    })?;
    let s = &read.settings;
    let (unit, modulus) = match g.spec.unit {
        SeriesUnit::Mpa => (SeriesUnitInput::Mpa, None),
        SeriesUnit::Microstrain { modulus_mpa } => {
            (SeriesUnitInput::Microstrain, Some(modulus_mpa))
        }
    };
    let path = g.spec.path.display();
    let differs = [
        ("unit", s.unit != unit),
        ("modulus_mpa", s.modulus_mpa != modulus),
        ("scale", s.scale != g.spec.scale),
        ("gate_mpa", s.gate_mpa != g.opts.gate_mpa),
        (
            "bins (bins, bin_width_mpa, mean_bins)",
            s.bins != g.opts.bins,
        ),
    ];
    if let Some((what, _)) = differs.iter().find(|(_, d)| *d) {
        return Err(bad(format!(
            "the spectrum part {path} was counted with another {what} than this event states (the part: {})",
            s.describe()
        )));
    }
    let names = &read.part.channels;
    let mut out = Vec::new();
    for (col, us) in columns.iter().zip(users) {
        let j = match col {
            ColumnSelector::Name(n) => names.iter().position(|c| c == n),
            ColumnSelector::Index(i) => (*i >= 1 && *i <= names.len()).then(|| i - 1),
        };
        let Some(j) = j else {
            return Err(bad(format!(
                "the spectrum part {path} holds no channel {}; it holds {} (a number counts the part's channels from 1)",
                match col {
                    ColumnSelector::Name(n) => crate::files::text::clip(n),
                    ColumnSelector::Index(i) => i.to_string(),
                },
                names.join(", ")
            )));
        };
        let records = read.records.iter().map(|r| vec![r[j].clone()]).collect();
        let counted = part::finish_records(records, g.opts.mode)
            .map_err(|e| bad(e.to_string()))?
            .pop()
            .ok_or_else(|| bad(format!("the spectrum part {path} holds no record")))?;
        for &q in us {
            out.push((q, (counted.clone(), None)));
        }
    }
    Ok(out)
}

fn column_ref(c: &ColumnSelector) -> ColumnRef {
    match c {
        ColumnSelector::Index(i) => ColumnRef::Index(*i),
        ColumnSelector::Name(n) => ColumnRef::Name(n.clone()),
    }
}

/// The reading and counting options of a series event.
fn series_request(path: &Path, s: &SeriesInput) -> (SeriesSpec, CountOptions) {
    let spec = SeriesSpec {
        path: path.to_path_buf(),
        column: column_ref(&s.column),
        has_header: s.header,
        unit: match s.unit {
            SeriesUnitInput::Mpa => SeriesUnit::Mpa,
            SeriesUnitInput::Microstrain => SeriesUnit::Microstrain {
                modulus_mpa: s.modulus_mpa.unwrap_or(0.0),
            },
        },
        scale: s.scale.unwrap_or(1.0),
    };
    let mode = match s.residue.unwrap_or(ResidueInput::Repeated) {
        ResidueInput::Repeated => crate::histories::rainflow::ResidueMode::Repeated,
        ResidueInput::HalfCycles => crate::histories::rainflow::ResidueMode::HalfCycles,
    };
    let range = match (s.bin_width_mpa, s.bins) {
        (Some(w), _) => BinRule::Width(w),
        (None, Some(n)) => BinRule::MaxBins(n as usize),
        (None, None) => BinRule::MaxBins(DEFAULT_SERIES_BINS as usize),
    };
    let opts = CountOptions {
        gate_mpa: s.gate_mpa.unwrap_or(0.0),
        mode,
        bins: SpectrumSpec {
            range,
            mean: BinRule::MaxBins(s.mean_bins.unwrap_or(DEFAULT_MEAN_BINS) as usize),
        },
    };
    (spec, opts)
}

/// What is gathered while the series are counted.
#[derive(Default)]
struct State {
    files: BTreeMap<String, SeriesFileInfo>,
    paths: Vec<PathBuf>,
    notes: Vec<HistoryNote>,
}

/// Count a history of the histories table: every cycle is its own block (its range and
/// mean, so damage and the mean-stress rule act on each cycle exactly), times the
/// event's occurrences per year.
fn table_history(
    project: &Project,
    ev: &LoadEvent,
    index: usize,
    out: &mut Vec<SpectrumBlock>,
    records: bool,
) -> Option<CountedRecord> {
    use crate::histories::rainflow::{count_slice, ResidueMode};
    let h = &project.tables.histories[index];
    let opts = project.file.tables.as_ref();
    let mode = match opts.and_then(|t| t.histories_residue) {
        Some(ResidueInput::Repeated) => ResidueMode::Repeated,
        // one occurrence counted on its own: the residue as half cycles (ASTM E1049-85)
        _ => ResidueMode::HalfCycles,
    };
    let gate = opts.and_then(|t| t.histories_gate_mpa).unwrap_or(0.0);
    let per_year = ev.per_year.unwrap_or(1.0);
    let name: Arc<str> = ev.event.as_str().into();
    let mut spec = records.then(|| {
        Spectrum::new(SpectrumSpec {
            range: BinRule::MaxBins(DEFAULT_SERIES_BINS as usize),
            mean: BinRule::MaxBins(DEFAULT_MEAN_BINS as usize),
        })
        .expect("default bin rules are valid")
    });
    let stats = count_slice(&h.samples(&project.tables), gate, mode, &mut |c| {
        if let Some(s) = &mut spec {
            s.add(&c);
        }
        if c.range > 0.0 {
            out.push(SpectrumBlock {
                event: name.clone(),
                origin: "counted",
                range_mpa: c.range,
                max_mpa: Some(c.max),
                min_mpa: Some(c.min),
                cycles_per_year: c.count * per_year,
                damage_per_year: None,
            });
        }
    });
    let spec = spec?;
    let samples = h.samples(&project.tables);
    let n = samples.len() as f64;
    // mean and standard deviation of the samples (common practice)
    let mean = samples.iter().sum::<f64>() / n.max(1.0);
    let var = samples.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n.max(1.0);
    let table = project
        .file
        .tables
        .as_ref()
        .and_then(|t| t.histories.clone())
        .unwrap_or_default();
    let rec = CountedRecord {
        event: ev.event.clone(),
        file: table,
        column: "stress_mpa".into(),
        unit: "MPa".into(),
        scale: 1.0,
        modulus_mpa: None,
        samples: stats.samples,
        reversals: stats.reversals,
        full_cycles: stats.full_cycles,
        half_cycles: stats.half_cycles,
        min_mpa: stats.min,
        max_mpa: stats.max,
        mean_mpa: mean,
        std_dev_mpa: var.sqrt(),
        constant: stats.reversals < 2,
        gate_mpa: gate,
        residue: match mode {
            ResidueMode::Repeated => "repeated".into(),
            ResidueMode::HalfCycles => "half-cycles".into(),
        },
        repeats_per_year: per_year,
        bin_width_mpa: spec.range_width_mpa(),
        mean_bin_width_mpa: spec.mean_width_mpa(),
        histogram: spec.histogram(),
        matrix: spec.matrix(),
        per_cycle: true,
    };
    Some(rec)
}

/// Resolve a series path against the project folder, refusing one that leaves it
/// unless explicitly allowed.
pub fn resolve_series_path(
    project_dir: &Path,
    file: &str,
    allow_outside: bool,
    loc: &dyn Fn() -> Location,
) -> Result<PathBuf, InputError> {
    let joined = project_dir.join(file);
    let canon_dir = project_dir.canonicalize().map_err(|e| {
        InputError::new(
            InputErrorKind::Io,
            loc(),
            format!("cannot resolve the project folder: {e}"),
        )
    })?;
    let canon = joined.canonicalize().map_err(|e| {
        InputError::new(
            InputErrorKind::Io,
            loc(),
            format!("cannot open series file `{file}`: {e}"),
        )
        .hint("series paths are relative to the project file's folder")
    })?;
    if !allow_outside && !canon.starts_with(&canon_dir) {
        return Err(InputError::new(
            InputErrorKind::PathOutsideProject,
            loc(),
            format!("series file `{file}` lies outside the project folder"),
        )
        .hint("move the record into the project folder, or set `allow_outside_project: true` on this series"));
    }
    Ok(canon)
}

/// The location of a path in the project file (only called on an error: locating
/// re-reads the YAML).
fn locate_at(project: &Project, p: &YamlPath) -> Location {
    match crate::input::locate::locate(&project.text, std::slice::from_ref(p))[0] {
        Some((l, c)) => Location::at(&project.path, l, c),
        None => Location::file(&project.path),
    }
}

/// How a counted record is described in the results.
#[derive(Debug, Clone)]
pub struct RecordLabels {
    pub event: String,
    pub file: String,
    pub column: String,
    pub unit: SeriesUnitInput,
    pub scale: f64,
    pub modulus_mpa: Option<f64>,
    pub gate_mpa: f64,
    pub mode: crate::histories::rainflow::ResidueMode,
    pub repeats_per_year: f64,
}

/// The results-model form of a counted series.
pub fn counted_record(
    cs: crate::histories::series::CountedSeries,
    l: RecordLabels,
) -> CountedRecord {
    CountedRecord {
        event: l.event,
        file: l.file,
        column: l.column,
        unit: match l.unit {
            SeriesUnitInput::Mpa => "MPa".into(),
            SeriesUnitInput::Microstrain => "µε".into(),
        },
        scale: l.scale,
        modulus_mpa: l.modulus_mpa,
        samples: cs.stats.samples,
        reversals: cs.stats.reversals,
        full_cycles: cs.stats.full_cycles,
        half_cycles: cs.stats.half_cycles,
        min_mpa: cs.stats.min,
        max_mpa: cs.stats.max,
        mean_mpa: cs.mean_mpa,
        std_dev_mpa: cs.std_dev_mpa,
        constant: cs.constant,
        gate_mpa: l.gate_mpa,
        residue: match l.mode {
            crate::histories::rainflow::ResidueMode::Repeated => "repeated".into(),
            crate::histories::rainflow::ResidueMode::HalfCycles => "half-cycles".into(),
        },
        repeats_per_year: l.repeats_per_year,
        bin_width_mpa: cs.range_width_mpa,
        mean_bin_width_mpa: cs.mean_width_mpa,
        histogram: cs.histogram,
        matrix: cs.matrix,
        per_cycle: false,
    }
}

/// What to do about a series error.
pub fn series_hint(e: &crate::histories::series::SeriesError) -> String {
    use crate::histories::series::SeriesError as E;
    match e {
        E::Open { .. } => "check the path (relative to the project file) and the file permissions".into(),
        E::Read { .. } => "the file must be comma-separated text".into(),
        E::Empty { .. } => "the record holds no samples; check the file and `header:`".into(),
        E::TooShort { .. } => "a record needs at least two samples to hold a cycle".into(),
        E::NotNumeric { .. } => "clean the cell, or choose the right `column:` (and `header:` if the first line holds names)".into(),
        E::NonFinite { .. } => "remove or repair NaN/infinite samples (gaps in a record must be filled or cut out)".into(),
        E::ShortRow { .. } => "every row must hold the chosen column".into(),
        E::NoSuchColumn { .. } => "choose one of the names listed, or a 1-based column number (`column:` in a project, `--column` for `seamlife count`)".into(),
        E::ColumnOutOfRange { .. } => "column numbers start at 1".into(),
        E::OutOfRange { .. } => "check the unit and scale: values must be in MPa (or µε with `unit: microstrain` and the modulus)".into(),
        E::LineTooLong { .. } => "the file must be a comma-separated record with one sample per line".into(),
        E::DuplicateColumn { .. } => "rename one of the columns in the header, or choose the column by its number".into(),
        E::BadSample { .. } => "remove or repair NaN, infinite or out-of-range samples; check the unit, scale and sample type".into(),
        E::BadBinary { .. } => "give the sample type and channel count the record was written with (--format, --channels), or a NumPy .npy file of little-endian float32/float64".into(),
        E::Invalid(_) | E::Gate(_) | E::Spectrum(_) => "check the series options (scale, modulus, gate, bins)".into(),
        E::Part(_) => "the file is a spectrum part (`seamlife count --spectrum-out`): the event must state the options it was counted with (unit, modulus_mpa, scale, gate_mpa, bins or bin_width_mpa, mean_bins) and name one of its channels".into(),
    }
}
