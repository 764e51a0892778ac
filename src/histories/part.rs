//! Spectrum parts: the count of a record, or of one piece of a longer record, saved
//! before its residue is closed, so that a record counted file by file (days of one
//! campaign counted on different machines) or many records counted one by one merge
//! into exactly the count of the whole.
//!
//! A piece of a record is counted from its first sample without knowing the samples
//! before it ([`RainflowCounter::part_from`], as the parallel blocks of
//! [`crate::histories::ingest`] are): its own full cycles are binned into its spectrum,
//! and what it cannot close yet stays in its residue with its first sample and first
//! move. Joining the pieces in record order ([`OpenCount::join`]) closes the cycles
//! that span them, and the residue rule (repeated or half cycles) acts once, on the
//! joined record ([`OpenCount::finish`]). Closing a full cycle never prevents closing
//! another (see [`crate::histories::rainflow`]), so the cycles are exactly those of one
//! count of the whole record; the bins are exact because widths are fixed or powers of
//! two aligned on zero ([`Spectrum::merge`]). With a hysteresis gate the detector's
//! state at the start of a piece depends on the whole record before it, so a gated
//! count is saved as a whole record only: it merges with others as a separate record,
//! never joined.
//!
//! The file format (JSON, [`PART_FORMAT`] version [`PART_FORMAT_VERSION`]) is
//! [`SpectrumPart`]; its JSON Schema is `seamlife schema spectrum-part`.

use std::io::Read;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{InputError, InputErrorKind, Location};
use crate::files::short_num;
use crate::files::text::{clip, one_line};
use crate::histories::rainflow::{
    residue_fault, CountStats, CounterState, Cycle, RainflowCounter, ResidueMode,
};
use crate::histories::series::{counted_series, CountedSeries, Moments, MAX_SERIES_STRESS_MPA};
use crate::histories::spectrum::{AxisRuleState, BinRule, Spectrum, SpectrumSpec, SpectrumState};
use crate::input::{ResidueInput, SeriesUnitInput};
use crate::input::{MAX_BINS, MAX_STRESS_MPA, MIN_BIN_WIDTH_MPA};

/// A count whose residue is not closed yet: a whole record, or a piece of one that
/// joins with the pieces after it.
#[derive(Clone, Debug)]
pub struct OpenCount {
    /// `None` until the first sample of a piece.
    pub(crate) counter: Option<RainflowCounter>,
    /// Counted as a piece (from its first sample, gate 0): joins with the next piece.
    pub(crate) joinable: bool,
    pub(crate) gate: f64,
    /// First sample, MPa (a piece's is settled only when it is joined).
    pub(crate) first: f64,
    /// First non-zero first difference after `first`, MPa (0 while none).
    pub(crate) first_move: f64,
    pub(crate) spectrum: Spectrum,
    pub(crate) moments: Moments,
    pub(crate) samples: u64,
}

/// Why two counts cannot be joined.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum JoinError {
    /// One of them was counted with a gate (or as a whole record).
    #[error("a count made with a hysteresis gate (or as a whole record) cannot be joined to another piece")]
    NotJoinable,
    /// The bins differ.
    #[error(transparent)]
    Spectrum(#[from] crate::histories::spectrum::SpectrumError),
    /// More samples than a count holds.
    #[error("the joined record would hold more than 2^64 samples or reversals")]
    Overflow,
}

impl OpenCount {
    /// The count of a whole record (the counter takes the first sample as a reversal).
    pub(crate) fn record(gate: f64, spectrum: Spectrum) -> OpenCount {
        OpenCount {
            counter: Some(RainflowCounter::new(gate)),
            joinable: false,
            gate,
            first: 0.0,
            first_move: 0.0,
            spectrum,
            moments: Moments::default(),
            samples: 0,
        }
    }

    /// The count of a piece of a record: joinable with gate 0; with a gate, a whole
    /// record (see the module notes).
    pub(crate) fn piece(gate: f64, spectrum: Spectrum) -> OpenCount {
        if gate != 0.0 {
            return OpenCount::record(gate, spectrum);
        }
        OpenCount {
            counter: None,
            joinable: true,
            ..OpenCount::record(gate, spectrum)
        }
    }

    /// Samples counted.
    pub fn samples(&self) -> u64 {
        self.samples
    }

    /// Joins with the piece after it.
    pub fn joinable(&self) -> bool {
        self.joinable
    }

    /// The hysteresis gate, MPa.
    pub fn gate_mpa(&self) -> f64 {
        self.gate
    }

    /// The spectrum of the cycles closed so far.
    pub fn spectrum(&self) -> &Spectrum {
        &self.spectrum
    }

    /// The residue so far (reversals not yet closed), MPa.
    pub fn residue(&self) -> &[f64] {
        self.counter.as_ref().map_or(&[], |c| c.residue())
    }

    /// Settle the first move of the record once samples starting at `first` with
    /// first move `first_move` follow this count's samples.
    pub(crate) fn note_start(&mut self, first: f64, first_move: f64) {
        if self.samples == 0 {
            self.first = first;
            self.first_move = first_move;
        } else if self.first_move == 0.0 {
            // the first move out of the first sample (first difference, rainflow 3.2.0)
            self.first_move = if first != self.first {
                first - self.first
            } else {
                first_move
            };
        }
    }

    /// Append the piece `next`, which follows this one in the record: the cycles that
    /// close across the seam are binned (and given to `extra`), the spectra and
    /// moments merged.
    pub fn join<F: FnMut(&Cycle)>(
        &mut self,
        next: OpenCount,
        mut extra: F,
    ) -> Result<(), JoinError> {
        if !(self.joinable && next.joinable) {
            return Err(JoinError::NotJoinable);
        }
        let samples = self
            .samples
            .checked_add(next.samples)
            .ok_or(JoinError::Overflow)?;
        if let (Some(a), Some(b)) = (&self.counter, &next.counter) {
            let (sa, sb) = (a.state(), b.state());
            if sa
                .reversals
                .checked_add(sb.reversals)
                .and_then(|r| r.checked_add(1))
                .is_none()
                || sa.full_cycles.checked_add(sb.full_cycles).is_none()
            {
                return Err(JoinError::Overflow);
            }
        }
        // the spectra first, so that bins that do not fit leave this count untouched
        let mut spectrum = self.spectrum.clone();
        spectrum.merge(&next.spectrum)?;
        self.spectrum = spectrum;
        self.moments.merge(&next.moments);
        let (first, first_move) = (next.first, next.first_move);
        match (&mut self.counter, next.counter) {
            (_, None) => {}
            (None, Some(c)) => self.counter = Some(c),
            (Some(a), Some(b)) => {
                let spectrum = &mut self.spectrum;
                a.append_part(b, first, first_move, &mut |c: Cycle| {
                    spectrum.add(&c);
                    extra(&c)
                });
            }
        }
        if next.samples > 0 {
            self.note_start(first, first_move);
        }
        self.samples = samples;
        Ok(())
    }

    /// End of the record: its residue counted as `mode` says (those cycles binned and
    /// given to `extra`); the totals, the spectrum and the moments of the samples.
    pub(crate) fn finish<F: FnMut(&Cycle)>(
        self,
        mode: ResidueMode,
        mut extra: F,
    ) -> (CountStats, Spectrum, Moments) {
        let mut spectrum = self.spectrum;
        let mut sink = |c: Cycle| {
            spectrum.add(&c);
            extra(&c)
        };
        let counter = match (self.joinable, self.counter) {
            (true, Some(piece)) => {
                // a fresh record takes the piece's first sample as its first reversal
                let mut whole = RainflowCounter::new(0.0);
                whole.append_part(piece, self.first, self.first_move, &mut sink);
                whole
            }
            (_, Some(c)) => c,
            (_, None) => RainflowCounter::new(self.gate),
        };
        let stats = counter.finish(mode, &mut sink);
        (stats, spectrum, self.moments)
    }

    /// End of the record (see [`OpenCount::finish`]), described as a counted series.
    pub fn into_series(self, mode: ResidueMode) -> CountedSeries {
        let (stats, spectrum, moments) = self.finish(mode, |_| {});
        counted_series(stats, &spectrum, &moments)
    }
}

/// The `format` of a spectrum part.
pub const PART_FORMAT: &str = "seamlife-spectrum-part";

/// The part format version this build writes.
pub const PART_FORMAT_VERSION: u32 = 1;

/// The part format versions this build reads.
pub const READABLE_PART_VERSIONS: [u32; 1] = [PART_FORMAT_VERSION];

/// Largest spectrum part read (JSON text). A part of fine fixed bins over a wide
/// range is a few MiB; the residue of a record is a few hundred points.
pub const MAX_PART_BYTES: u64 = 256 * 1024 * 1024;

/// A spectrum part file: how the record was counted, the channels, and one or more
/// records (more than one after merging separate records), each with the open count
/// of every channel.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SpectrumPart {
    /// Always `seamlife-spectrum-part`.
    pub format: String,
    /// Version of this format (1).
    pub format_version: u32,
    /// The program that wrote it, with its version (information only).
    pub tool: String,
    /// What the file values were.
    pub unit: SeriesUnitInput,
    /// Young's modulus of a strain record, MPa.
    pub modulus_mpa: Option<f64>,
    /// Factor applied to every file value.
    pub scale: f64,
    /// Hysteresis gate, MPa (a gated part merges only as a separate record).
    pub gate_mpa: f64,
    /// How the residue is counted at the end of a record (when the parts are merged).
    pub residue: ResidueInput,
    /// Range binning: a fixed width or a largest number of power-of-two bins.
    pub range_bins: AxisRuleState,
    /// Mean binning.
    pub mean_bins: AxisRuleState,
    /// Channel names, in the order of each record's `channels`.
    pub channels: Vec<String>,
    /// The records: one for a count or a joined merge, several for separate records.
    pub records: Vec<PartRecord>,
}

/// One record (or piece of one) in a part.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PartRecord {
    /// File names of the files counted, in record order.
    pub files: Vec<String>,
    /// Position of the pieces in the record (`count --sequence N`), when given.
    pub sequence: Option<SequenceRange>,
    /// Counted as a piece (gate 0): joins with the piece that follows it.
    pub joinable: bool,
    /// Each channel's open count, in the order of the part's `channels`.
    pub channels: Vec<ChannelState>,
}

/// The first and last sequence number of the pieces a record holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SequenceRange {
    /// First piece.
    pub first: u64,
    /// Last piece.
    pub last: u64,
}

/// One channel's open count.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ChannelState {
    /// Samples counted.
    pub samples: u64,
    /// First sample, MPa.
    pub first_mpa: f64,
    /// First non-zero difference after the first sample, MPa (0 while none).
    pub first_move_mpa: f64,
    /// Mean of the samples, MPa.
    pub mean_mpa: f64,
    /// Σ (x − mean)² over the samples, MPa².
    pub sum_sq_dev_mpa2: f64,
    /// The counter: detector state and residue.
    pub counter: CounterState,
    /// The full cycles closed so far, binned.
    pub spectrum: SpectrumState,
}

/// How a part was counted (everything parts must share to be merged).
#[derive(Clone, Debug, PartialEq)]
pub struct PartSettings {
    pub unit: SeriesUnitInput,
    pub modulus_mpa: Option<f64>,
    pub scale: f64,
    pub gate_mpa: f64,
    pub residue: ResidueMode,
    pub bins: SpectrumSpec,
}

impl PartSettings {
    /// The options in the words of a project's series event, for messages.
    pub fn describe(&self) -> String {
        let axis = |name: &str, r: &AxisRuleState| match (r.width_mpa, r.max_bins) {
            (Some(w), _) => format!("{name}_width_mpa {}", short_num(w)),
            (_, Some(n)) => format!("{name} {n}"),
            _ => String::new(),
        };
        format!(
            "unit {}{}, scale {}, gate_mpa {}, {}, {}",
            match self.unit {
                SeriesUnitInput::Mpa => "mpa",
                SeriesUnitInput::Microstrain => "microstrain",
            },
            self.modulus_mpa
                .map(|e| format!(", modulus_mpa {}", short_num(e)))
                .unwrap_or_default(),
            short_num(self.scale),
            short_num(self.gate_mpa),
            axis("bin", &self.bins.range.into()).replace("bin ", "bins "),
            axis("mean_bin", &self.bins.mean.into()).replace("mean_bin ", "mean_bins "),
        )
    }
}

fn residue_input(m: ResidueMode) -> ResidueInput {
    match m {
        ResidueMode::Repeated => ResidueInput::Repeated,
        ResidueMode::HalfCycles => ResidueInput::HalfCycles,
    }
}

/// The residue rule of a part.
pub fn residue_mode(r: ResidueInput) -> ResidueMode {
    match r {
        ResidueInput::Repeated => ResidueMode::Repeated,
        ResidueInput::HalfCycles => ResidueMode::HalfCycles,
    }
}

impl ChannelState {
    /// The saved form of an open count.
    pub fn of(open: &OpenCount) -> ChannelState {
        let (_, mean, m2) = open.moments.parts();
        let counter = match &open.counter {
            Some(c) => c.state(),
            None => RainflowCounter::new(open.gate).state(),
        };
        ChannelState {
            samples: open.samples,
            first_mpa: open.first,
            first_move_mpa: open.first_move,
            mean_mpa: mean,
            sum_sq_dev_mpa2: m2,
            counter,
            spectrum: open.spectrum.state(),
        }
    }

    /// The open count again, every value checked; the error names the JSON path
    /// below `at` of the first bad value.
    pub fn open(&self, joinable: bool, s: &PartSettings, at: &str) -> Result<OpenCount, String> {
        let c = &self.counter;
        let stress = |v: f64, name: &str, limit: f64| {
            if v.is_finite() && v.abs() <= limit {
                Ok(())
            } else {
                Err(format!(
                    "{at}.{name} must be a finite stress within ±{} MPa, got {v}",
                    short_num(limit)
                ))
            }
        };
        let lim = MAX_SERIES_STRESS_MPA;
        stress(self.first_mpa, "first_mpa", lim)?;
        stress(self.first_move_mpa, "first_move_mpa", 2.0 * lim)?;
        stress(self.mean_mpa, "mean_mpa", lim)?;
        stress(c.last_mpa, "counter.last_mpa", lim)?;
        stress(c.direction, "counter.direction", 2.0 * lim)?;
        if s.gate_mpa != 0.0 && ![-1.0, 0.0, 1.0].contains(&c.direction) {
            return Err(format!(
                "{at}.counter.direction of a gated count is -1, 0 or 1, got {}",
                c.direction
            ));
        }
        stress(c.min_mpa, "counter.min_mpa", lim)?;
        stress(c.max_mpa, "counter.max_mpa", lim)?;
        for (i, &r) in c.residue_mpa.iter().enumerate() {
            stress(r, &format!("counter.residue_mpa[{i}]"), lim)?;
        }
        if !(self.sum_sq_dev_mpa2.is_finite() && self.sum_sq_dev_mpa2 >= 0.0) {
            return Err(format!(
                "{at}.sum_sq_dev_mpa2 must be a finite number >= 0, got {}",
                self.sum_sq_dev_mpa2
            ));
        }
        if c.gate_mpa != s.gate_mpa {
            return Err(format!(
                "{at}.counter.gate_mpa is {} but the part's gate_mpa is {}",
                c.gate_mpa, s.gate_mpa
            ));
        }
        if self.samples == 0 || c.samples != self.samples {
            return Err(format!(
                "{at}: samples ({}) must be at least 1 and equal counter.samples ({})",
                self.samples, c.samples
            ));
        }
        if c.min_mpa > c.max_mpa || self.first_mpa < c.min_mpa || self.first_mpa > c.max_mpa {
            return Err(format!(
                "{at}: the first sample {} must lie between counter.min_mpa {} and counter.max_mpa {}",
                self.first_mpa, c.min_mpa, c.max_mpa
            ));
        }
        if let Some(k) = residue_fault(&c.residue_mpa) {
            return Err(format!(
                "{at}.counter.residue_mpa is not a rainflow residue (point {k} does not alternate, or closes a cycle the counter would have closed)"
            ));
        }
        if c.full_cycles > c.reversals || (c.residue_mpa.len() as u64) > c.reversals.max(1) {
            return Err(format!(
                "{at}.counter: {} full cycles and a residue of {} points from {} reversals cannot be",
                c.full_cycles,
                c.residue_mpa.len(),
                c.reversals
            ));
        }
        let spectrum = Spectrum::from_state(s.bins, &self.spectrum)
            .map_err(|e| format!("{at}.spectrum: {e}"))?;
        // an open count has closed full cycles only (weight 1 each, ASTM E1049-85 §5.4.4)
        if spectrum.total_cycles() != c.full_cycles as f64 {
            return Err(format!(
                "{at}: the spectrum holds {} cycles but the counter closed {}",
                spectrum.total_cycles(),
                c.full_cycles
            ));
        }
        let counter = RainflowCounter::from_state(c).map_err(|e| format!("{at}.counter: {e}"))?;
        Ok(OpenCount {
            counter: Some(counter),
            joinable,
            gate: s.gate_mpa,
            first: self.first_mpa,
            first_move: self.first_move_mpa,
            spectrum,
            moments: Moments::from_parts(self.samples as f64, self.mean_mpa, self.sum_sq_dev_mpa2),
            samples: self.samples,
        })
    }
}

impl SpectrumPart {
    /// A part of one record: each channel's open count (named), the settings, the
    /// counted file's name and the piece's sequence number.
    pub fn new(
        s: &PartSettings,
        channels: &[(String, OpenCount)],
        file: String,
        sequence: Option<u64>,
    ) -> SpectrumPart {
        SpectrumPart {
            format: PART_FORMAT.into(),
            format_version: PART_FORMAT_VERSION,
            tool: format!("seamlife {}", env!("CARGO_PKG_VERSION")),
            unit: s.unit,
            modulus_mpa: s.modulus_mpa,
            scale: s.scale,
            gate_mpa: s.gate_mpa,
            residue: residue_input(s.residue),
            range_bins: s.bins.range.into(),
            mean_bins: s.bins.mean.into(),
            channels: channels.iter().map(|(n, _)| n.clone()).collect(),
            records: vec![PartRecord {
                files: vec![file],
                sequence: sequence.map(|k| SequenceRange { first: k, last: k }),
                joinable: channels.iter().all(|(_, o)| o.joinable),
                channels: channels.iter().map(|(_, o)| ChannelState::of(o)).collect(),
            }],
        }
    }

    /// The settings, checked.
    pub fn settings(&self) -> Result<PartSettings, String> {
        let range = self
            .range_bins
            .rule()
            .map_err(|e| format!("range_bins: {e}"))?;
        let mean = self
            .mean_bins
            .rule()
            .map_err(|e| format!("mean_bins: {e}"))?;
        let bins = SpectrumSpec { range, mean };
        Spectrum::new(bins).map_err(|e| e.to_string())?;
        // the bounds `count` and a project's series event accept
        for (name, r) in [("range_bins", range), ("mean_bins", mean)] {
            match r {
                BinRule::Width(w) if !(MIN_BIN_WIDTH_MPA..=2.0 * MAX_STRESS_MPA).contains(&w) => {
                    return Err(format!(
                        "{name}.width_mpa must be from {} to {} MPa, got {w}",
                        short_num(MIN_BIN_WIDTH_MPA),
                        short_num(2.0 * MAX_STRESS_MPA)
                    ))
                }
                BinRule::MaxBins(n) if n > MAX_BINS as usize => {
                    return Err(format!(
                        "{name}.max_bins is {n}; at most {MAX_BINS} are read"
                    ))
                }
                _ => {}
            }
        }
        if !(self.scale.is_finite() && self.scale > 0.0) {
            return Err(format!(
                "scale must be a finite number > 0, got {}",
                self.scale
            ));
        }
        if !(self.gate_mpa.is_finite()
            && (0.0..=2.0 * MAX_SERIES_STRESS_MPA).contains(&self.gate_mpa))
        {
            return Err(format!(
                "gate_mpa must be from 0 to {} MPa, got {}",
                short_num(2.0 * MAX_SERIES_STRESS_MPA),
                self.gate_mpa
            ));
        }
        match (self.unit, self.modulus_mpa) {
            (SeriesUnitInput::Microstrain, Some(e)) if e.is_finite() && e > 0.0 => {}
            (SeriesUnitInput::Microstrain, _) => {
                return Err("a strain part needs a finite modulus_mpa > 0".into())
            }
            (SeriesUnitInput::Mpa, None) => {}
            (SeriesUnitInput::Mpa, Some(_)) => {
                return Err("modulus_mpa is given only for a strain part (unit microstrain)".into())
            }
        }
        Ok(PartSettings {
            unit: self.unit,
            modulus_mpa: self.modulus_mpa,
            scale: self.scale,
            gate_mpa: self.gate_mpa,
            residue: residue_mode(self.residue),
            bins,
        })
    }

    /// Every record's open counts, checked against the settings and the channels.
    pub fn open(&self) -> Result<(PartSettings, Vec<Vec<OpenCount>>), String> {
        let s = self.settings()?;
        if self.channels.is_empty() {
            return Err("channels: a part holds at least one channel".into());
        }
        for (i, n) in self.channels.iter().enumerate() {
            if self.channels[..i].contains(n) {
                return Err(format!(
                    "channels[{i}]: the channel '{}' is named twice",
                    one_line(n)
                ));
            }
        }
        if self.records.is_empty() {
            return Err("records: a part holds at least one record".into());
        }
        let mut out = Vec::with_capacity(self.records.len());
        for (i, r) in self.records.iter().enumerate() {
            let at = format!("records[{i}]");
            if r.channels.len() != self.channels.len() {
                return Err(format!(
                    "{at}.channels holds {} channels but the part names {}",
                    r.channels.len(),
                    self.channels.len()
                ));
            }
            if r.joinable && s.gate_mpa != 0.0 {
                return Err(format!(
                    "{at}.joinable: a count with a hysteresis gate is never a joinable piece"
                ));
            }
            if let Some(q) = r.sequence {
                if q.first > q.last {
                    return Err(format!(
                        "{at}.sequence: first {} is after last {}",
                        q.first, q.last
                    ));
                }
            }
            let mut chans = Vec::with_capacity(r.channels.len());
            for (j, c) in r.channels.iter().enumerate() {
                chans.push(c.open(r.joinable, &s, &format!("{at}.channels[{j}]"))?);
            }
            out.push(chans);
        }
        Ok((s, out))
    }
}

/// Read a spectrum part: regular files of at most [`MAX_PART_BYTES`], JSON errors at
/// their line and column, unknown keys, other formats and versions refused, and every
/// value checked ([`SpectrumPart::open`]).
pub fn read_part(
    path: &Path,
) -> Result<(SpectrumPart, PartSettings, Vec<Vec<OpenCount>>), InputError> {
    let bytes = crate::files::read_bytes_bounded(
        path,
        MAX_PART_BYTES,
        "spectrum parts",
        "a spectrum part holds bins and a residue, never samples; was this file written by `seamlife count --spectrum-out`?",
    )?;
    let hint = "give the JSON written by `seamlife count --spectrum-out` (or `seamlife merge --spectrum-out`)";
    // the format and version first, so that another file or version gets a plain message
    #[derive(Deserialize)]
    struct Head {
        format: Option<serde_json::Value>,
        format_version: Option<serde_json::Value>,
    }
    let located =
        |e: serde_json::Error, what: &str| crate::files::json_error(path, &e, what).hint(hint);
    let head: Head =
        serde_json::from_slice(&bytes).map_err(|e| located(e, "not a seamlife spectrum part"))?;
    if head.format.as_ref().and_then(|v| v.as_str()) != Some(PART_FORMAT) {
        return Err(InputError::new(
            InputErrorKind::InvalidValue,
            Location::file(path),
            format!("not a seamlife spectrum part: \"format\" must be \"{PART_FORMAT}\""),
        )
        .hint(hint));
    }
    let version = head.format_version.as_ref().and_then(|v| v.as_u64());
    if !version.is_some_and(|v| READABLE_PART_VERSIONS.iter().any(|&r| r as u64 == v)) {
        return Err(InputError::new(
            InputErrorKind::UnsupportedVersion,
            Location::file(path),
            format!(
                "spectrum part format version {} is not read by this seamlife (it reads version {PART_FORMAT_VERSION})",
                match (version, &head.format_version) {
                    (Some(v), _) => v.to_string(),
                    (None, None) => "(none)".to_string(),
                    (None, Some(v)) => clip(&v.to_string()),
                }
            ),
        )
        .hint("count the file again with this seamlife"));
    }
    let part: SpectrumPart =
        serde_json::from_slice(&bytes).map_err(|e| located(e, "bad spectrum part"))?;
    let (settings, records) = part.open().map_err(|m| {
        InputError::new(InputErrorKind::InvalidValue, Location::file(path), format!("bad spectrum part: {}", one_line(&m)))
            .hint("a part is written by seamlife and read as written; count the file again rather than editing the part")
    })?;
    Ok((part, settings, records))
}

/// Whether `path` looks like a spectrum part (its first 4 KiB name the format), to
/// tell parts from results models; the reader then checks it in full.
pub fn looks_like_part(path: &Path) -> bool {
    let Ok(f) = crate::files::open_regular(path) else {
        return false;
    };
    let mut head = Vec::with_capacity(4096);
    if f.take(4096).read_to_end(&mut head).is_err() {
        return false;
    }
    memchr::memmem::find(&head, PART_FORMAT.as_bytes()).is_some()
}

/// A part read from its file.
#[derive(Clone, Debug)]
pub struct ReadPart {
    /// Where it was read from.
    pub path: PathBuf,
    /// The file as written.
    pub part: SpectrumPart,
    /// Its settings, checked.
    pub settings: PartSettings,
    /// Each record's open counts, one per channel.
    pub records: Vec<Vec<OpenCount>>,
}

impl ReadPart {
    /// Read and check the part at `path`.
    pub fn read(path: &Path) -> Result<ReadPart, InputError> {
        let (part, settings, records) = read_part(path)?;
        Ok(ReadPart {
            path: path.to_path_buf(),
            part,
            settings,
            records,
        })
    }
}

/// Parts merged: the merged part (for a further merge) and its records' open counts.
#[derive(Clone, Debug)]
pub struct MergedParts {
    /// The merged part as it is written.
    pub part: SpectrumPart,
    /// Its settings (the residue rule the merge applies).
    pub settings: PartSettings,
    /// Each record's open counts, one per channel.
    pub records: Vec<Vec<OpenCount>>,
}

fn bins_text(r: &AxisRuleState) -> String {
    match (r.width_mpa, r.max_bins) {
        (Some(w), _) => format!("{} MPa wide", short_num(w)),
        (_, Some(n)) => format!("at most {n} (power-of-two widths)"),
        _ => "not given".into(),
    }
}

fn mismatch(
    a: &ReadPart,
    b: &ReadPart,
    what: &str,
    va: String,
    vb: String,
    hint: &str,
) -> InputError {
    InputError::new(
        InputErrorKind::InvalidValue,
        Location::file(&b.path),
        format!(
            "cannot merge: {what} is {} here but {} in {}",
            one_line(&vb),
            one_line(&va),
            a.path.display()
        ),
    )
    .hint(hint)
}

const RECOUNT_HINT: &str = "parts merge only when counted with the same --unit, --modulus-mpa, --scale, --gate-mpa and bins (--bin-width-mpa or --bins, --mean-bins); count the odd file again with the options of the others";

/// Merge parts given in record order: with `separate`, as separate records (each keeps
/// its own residue, closed on its own); otherwise as consecutive pieces of one record,
/// joined in the order given. `residue` overrides the parts' residue rule (they must
/// agree without it). Refuses parts counted otherwise (unit, scale, gate, bins,
/// channels), the same count given twice, and pieces whose sequence numbers are out
/// of order, repeated or missing.
pub fn merge_parts(
    parts: Vec<ReadPart>,
    separate: bool,
    residue: Option<ResidueMode>,
) -> Result<MergedParts, InputError> {
    let Some(a) = parts.first() else {
        return Err(InputError::new(
            InputErrorKind::InvalidValue,
            Location::file(Path::new("-")),
            "no part to merge",
        ));
    };
    for b in &parts[1..] {
        let (pa, pb) = (&a.part, &b.part);
        let unit = |p: &SpectrumPart| match p.unit {
            SeriesUnitInput::Mpa => "MPa".to_string(),
            SeriesUnitInput::Microstrain => format!(
                "µε with a modulus of {} MPa",
                short_num(p.modulus_mpa.unwrap_or(f64::NAN))
            ),
        };
        let checks: [(&str, String, String); 5] = [
            ("the unit", unit(pa), unit(pb)),
            ("the scale", short_num(pa.scale), short_num(pb.scale)),
            (
                "the hysteresis gate",
                format!("{} MPa", short_num(pa.gate_mpa)),
                format!("{} MPa", short_num(pb.gate_mpa)),
            ),
            (
                "the range bins",
                bins_text(&pa.range_bins),
                bins_text(&pb.range_bins),
            ),
            (
                "the mean bins",
                bins_text(&pa.mean_bins),
                bins_text(&pb.mean_bins),
            ),
        ];
        for (what, va, vb) in checks {
            if va != vb {
                return Err(mismatch(a, b, what, va, vb, RECOUNT_HINT));
            }
        }
        // the texts above are short; the values themselves must agree exactly
        if a.settings.scale != b.settings.scale
            || a.settings.modulus_mpa != b.settings.modulus_mpa
            || a.settings.gate_mpa != b.settings.gate_mpa
            || a.settings.bins != b.settings.bins
        {
            return Err(mismatch(
                a,
                b,
                "a counting option",
                format!("{:?}", a.settings),
                format!("{:?}", b.settings),
                RECOUNT_HINT,
            ));
        }
        if pa.channels != pb.channels {
            return Err(mismatch(
                a,
                b,
                "the channels",
                pa.channels.join(", "),
                pb.channels.join(", "),
                "count every file with the same --column, --columns or --all-columns (same names, same order)",
            ));
        }
        if residue.is_none() && pa.residue != pb.residue {
            let t = |r: ResidueInput| match r {
                ResidueInput::Repeated => "repeated".to_string(),
                ResidueInput::HalfCycles => "half-cycles".to_string(),
            };
            return Err(mismatch(
                a,
                b,
                "the residue rule",
                t(pa.residue),
                t(pb.residue),
                "give the rule for the merged record with `seamlife merge --residue repeated|half-cycles`",
            ));
        }
    }
    // the same count given twice (the same file counted twice, or a part copied)
    for (i, b) in parts.iter().enumerate() {
        for a in &parts[..i] {
            for rb in &b.part.records {
                let same = |ra: &&PartRecord| ra.channels == rb.channels && ra.files == rb.files;
                if let Some(ra) = a.part.records.iter().find(same) {
                    return Err(InputError::new(
                        InputErrorKind::DuplicateId,
                        Location::file(&b.path),
                        format!(
                            "cannot merge: this part holds the same count as {} (of {})",
                            a.path.display(),
                            one_line(&ra.files.join(", "))
                        ),
                    )
                    .hint("give each part once; two parts with the same count come from the same file counted twice"));
                }
            }
        }
    }
    let mut settings = a.settings.clone();
    if let Some(m) = residue {
        settings.residue = m;
    }
    let mut head = a.part.clone();
    head.residue = residue_input(settings.residue);
    head.tool = format!("seamlife {}", env!("CARGO_PKG_VERSION"));
    if separate {
        let mut records = Vec::new();
        let mut saved = Vec::new();
        for p in parts {
            saved.extend(p.part.records);
            records.extend(p.records);
        }
        head.records = saved;
        return Ok(MergedParts {
            part: head,
            settings,
            records,
        });
    }
    let with_seq = parts
        .iter()
        .filter(|p| p.part.records.iter().any(|r| r.sequence.is_some()))
        .count();
    // a single record needs no join, whatever it was counted with
    let alone = parts.len() == 1;
    let mut joined: Option<(PartRecord, Vec<OpenCount>)> = None;
    for p in parts {
        if p.records.len() != 1 {
            return Err(InputError::new(
                InputErrorKind::InvalidValue,
                Location::file(&p.path),
                format!(
                    "cannot join: this part holds {} separate records, not one piece of a record",
                    p.records.len()
                ),
            )
            .hint("merge it with --separate, or merge the pieces of each record first"));
        }
        let rec = p.part.records[0].clone();
        if !rec.joinable && !alone {
            return Err(InputError::new(
                InputErrorKind::InvalidValue,
                Location::file(&p.path),
                format!(
                    "cannot join: this part was counted with a hysteresis gate of {} MPa, whose state at the start of a file depends on the whole record before it",
                    short_num(p.settings.gate_mpa)
                ),
            )
            .hint("count the pieces with --gate-mpa 0 to join them, count the whole record in one file, or merge the parts as separate records with --separate"));
        }
        if with_seq != 0 && rec.sequence.is_none() {
            return Err(InputError::new(
                InputErrorKind::InvalidValue,
                Location::file(&p.path),
                "cannot join: this part has no sequence number but others have",
            )
            .hint("count every piece with --sequence N (its position in the record), or none"));
        }
        let opens = p.records.into_iter().next().unwrap_or_default();
        match &mut joined {
            None => joined = Some((rec, opens)),
            Some((acc, counts)) => {
                if let (Some(qa), Some(qb)) = (acc.sequence, rec.sequence) {
                    let at = |m: String, h: &str| {
                        InputError::new(InputErrorKind::InvalidValue, Location::file(&p.path), m)
                            .hint(h)
                    };
                    if qb.first <= qa.last {
                        return Err(at(
                            format!(
                                "cannot join: piece {}{} comes after piece {} (out of order or given twice)",
                                qb.first,
                                if qb.last > qb.first { format!("..{}", qb.last) } else { String::new() },
                                qa.last
                            ),
                            "give the parts in record order (sorted by their sequence numbers), each once",
                        ));
                    }
                    if qb.first > qa.last + 1 {
                        return Err(at(
                            format!(
                                "cannot join: pieces {} to {} are missing before piece {}",
                                qa.last + 1,
                                qb.first - 1,
                                qb.first
                            ),
                            "count the missing files and give their parts too; a record joined across a gap would count false cycles at the seam",
                        ));
                    }
                    acc.sequence = Some(SequenceRange {
                        first: qa.first,
                        last: qb.last,
                    });
                }
                acc.files.extend(rec.files);
                for (x, y) in counts.iter_mut().zip(opens) {
                    x.join(y, |_| {}).map_err(|e| {
                        InputError::new(
                            InputErrorKind::InvalidValue,
                            Location::file(&p.path),
                            format!("cannot join: {e}"),
                        )
                        .hint(RECOUNT_HINT)
                    })?;
                }
            }
        }
    }
    let Some((mut rec, counts)) = joined else {
        return Err(InputError::new(
            InputErrorKind::InvalidValue,
            Location::file(Path::new("-")),
            "no part to merge",
        ));
    };
    rec.channels = counts.iter().map(ChannelState::of).collect();
    head.records = vec![rec];
    Ok(MergedParts {
        part: head,
        settings,
        records: vec![counts],
    })
}

/// Each channel's count over all `records` (one list of channel counts per record):
/// every record's residue closed as `mode` says, then the records summed (cycles per
/// bin, totals, extremes, moments).
pub fn finish_records(
    records: Vec<Vec<OpenCount>>,
    mode: ResidueMode,
) -> Result<Vec<CountedSeries>, InputError> {
    let mut sums: Vec<Option<(CountStats, Spectrum, Moments)>> = Vec::new();
    for rec in records {
        if sums.is_empty() {
            sums.resize_with(rec.len(), || None);
        }
        for (slot, open) in sums.iter_mut().zip(rec) {
            let (st, sp, mo) = open.finish(mode, |_| {});
            match slot {
                None => *slot = Some((st, sp, mo)),
                Some((s, p, m)) => {
                    // separate records add up: cycles per bin, totals, extremes (common practice)
                    s.samples = s.samples.saturating_add(st.samples);
                    s.reversals = s.reversals.saturating_add(st.reversals);
                    s.full_cycles = s.full_cycles.saturating_add(st.full_cycles);
                    s.half_cycles = s.half_cycles.saturating_add(st.half_cycles);
                    s.min = s.min.min(st.min);
                    s.max = s.max.max(st.max);
                    p.merge(&sp).map_err(|e| {
                        InputError::new(
                            InputErrorKind::InvalidValue,
                            Location::file(Path::new("-")),
                            e.to_string(),
                        )
                    })?;
                    m.merge(&mo);
                }
            }
        }
    }
    Ok(sums
        .into_iter()
        .flatten()
        .map(|(st, sp, mo)| counted_series(st, &sp, &mo))
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::histories::rainflow::count_slice;

    /// Small integer levels about zero: many plateaus and ties at the seams.
    fn lcg(n: usize, seed: u64, levels: u64) -> Vec<f64> {
        let v = crate::histories::rainflow::tests::lcg_signal(n, seed, levels);
        v.into_iter().map(|x| x - 3.0).collect()
    }

    fn bins() -> SpectrumSpec {
        SpectrumSpec {
            range: BinRule::MaxBins(32),
            mean: BinRule::MaxBins(8),
        }
    }

    /// A piece counted from its first sample, as a reader counts a file.
    fn piece(xs: &[f64]) -> OpenCount {
        let mut o = OpenCount::piece(0.0, Spectrum::new(bins()).unwrap());
        let first = xs[0];
        let first_move = xs.iter().find(|&&x| x != first).map_or(0.0, |&x| x - first);
        let mut c = RainflowCounter::part_from(first);
        let sp = &mut o.spectrum;
        c.push_slice(&xs[1..], &mut |cy: Cycle| sp.add(&cy));
        o.counter = Some(c);
        o.note_start(first, first_move);
        o.moments.add_slice(xs);
        o.samples = xs.len() as u64;
        o
    }

    /// Through the JSON of a part and back, checked as a read part is.
    fn saved(o: &OpenCount) -> OpenCount {
        let st = ChannelState::of(o);
        let text = serde_json::to_string(&st).unwrap();
        let back: ChannelState = serde_json::from_str(&text).unwrap();
        assert_eq!(back, st, "the saved state reads back bit for bit");
        let s = PartSettings {
            unit: SeriesUnitInput::Mpa,
            modulus_mpa: None,
            scale: 1.0,
            gate_mpa: 0.0,
            residue: ResidueMode::Repeated,
            bins: bins(),
        };
        back.open(true, &s, "x").unwrap()
    }

    #[test]
    fn pieces_joined_after_saving_count_as_the_whole_record() {
        // reference: the serial count of the whole record by the same counter (held to
        // rainflow 3.2.0 in tests/rainflow_reference.rs)
        for seed in 0..30u64 {
            let xs = lcg(3000 + 37 * seed as usize, seed, 3 + seed % 6);
            let mut cuts: Vec<usize> = lcg(6, seed + 99, 1 << 20)
                .iter()
                .map(|v| (*v + 3.0) as usize % xs.len())
                .filter(|&c| c > 0)
                .collect();
            cuts.extend([1, xs.len() - 1]);
            cuts.sort_unstable();
            cuts.dedup();
            let mut bounds = vec![0];
            bounds.extend(cuts);
            bounds.push(xs.len());
            for mode in [ResidueMode::Repeated, ResidueMode::HalfCycles] {
                let mut whole = Spectrum::new(bins()).unwrap();
                let stats = count_slice(&xs, 0.0, mode, &mut |c| whole.add(&c));
                let mut joined: Option<OpenCount> = None;
                for w in bounds.windows(2) {
                    let p = saved(&piece(&xs[w[0]..w[1]]));
                    match &mut joined {
                        None => joined = Some(p),
                        Some(j) => j.join(p, |_| {}).unwrap(),
                    }
                }
                let (st, sp, _) = joined.unwrap().finish(mode, |_| {});
                assert_eq!(st, stats, "seed {seed}");
                let key = |s: &Spectrum| {
                    s.matrix()
                        .iter()
                        .map(|c| (c.range_lo_mpa, c.mean_lo_mpa, c.cycles, c.max_range_mpa))
                        .collect::<Vec<_>>()
                };
                assert_eq!(key(&sp), key(&whole), "seed {seed}");
            }
        }
    }

    #[test]
    fn a_gated_count_does_not_join() {
        // the gate's state at a seam depends on the whole record before it (module notes)
        let mut a = OpenCount::piece(1.0, Spectrum::new(bins()).unwrap());
        let b = OpenCount::piece(1.0, Spectrum::new(bins()).unwrap());
        assert!(!a.joinable());
        assert_eq!(a.join(b, |_| {}), Err(JoinError::NotJoinable));
    }
}
