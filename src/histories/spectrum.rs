//! Streaming binning of counted cycles: a range histogram and a range-mean
//! matrix.
//!
//! Bins are half-open, `[k·w, (k+1)·w)`, aligned on multiples of the width
//! `w` (so mean bins straddle zero cleanly). Each matrix cell keeps the
//! cycles counted in it, the largest range counted in it and the
//! cycle-weighted mean, so that a later stage can turn a cell into a
//! conservative block: range = largest range in the cell, mean = weighted
//! mean, hence σmax = mean + range/2 and σmin = mean − range/2.
//!
//! Two rules per axis ([`BinRule`]):
//! - `Width(w)`: fixed width in MPa.
//! - `MaxBins(n)`: the width is the smallest power of two, 2^k MPa with
//!   k >= -16, for which every cycle seen so far fits in at most `n` bins.
//!   It is found on the fly: whenever a cycle falls outside, the width is
//!   doubled and neighbouring bins are merged in pairs, which is exact
//!   because bins are aligned on multiples of the width (bin k of width w is
//!   half of bin floor(k/2) of width 2w). The result is the same whatever the
//!   order of the cycles (bins and cycle counts; the weighted means may
//!   differ in the last bits). Mean bins are aligned on zero, so a mean axis
//!   needs `n >= 2` (means of both signs never share a bin).
//!
//! The range histogram is the marginal of the matrix over the mean axis.
//! Storage is a dense grid while the occupied index box is small, a hash map
//! beyond [`DENSE_CELL_LIMIT`] cells.

use crate::histories::rainflow::Cycle;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, HashMap};

/// Largest dense grid, in cells, before the matrix switches to a hash map.
pub const DENSE_CELL_LIMIT: usize = 1 << 20;

/// Smallest width tried by [`BinRule::MaxBins`]: 2^-16 MPa.
const MIN_WIDTH_EXP: i32 = -16;

/// How one axis is binned.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub enum BinRule {
    /// Fixed bin width in MPa.
    Width(f64),
    /// At most this many bins; the width is a power of two in MPa.
    MaxBins(usize),
}

/// Binning of both axes.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct SpectrumSpec {
    /// Range axis (bins start at 0 MPa).
    pub range: BinRule,
    /// Mean axis.
    pub mean: BinRule,
}

/// A rule that cannot bin.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
pub enum SpectrumError {
    /// Width not finite or not positive.
    #[error("{axis} bin width must be a finite number > 0 MPa, got {width}")]
    BadWidth {
        /// "range" or "mean".
        axis: &'static str,
        /// The width given.
        width: f64,
    },
    /// Spectra with different rules cannot be merged.
    #[error("cannot merge spectra binned by different rules: {ours:?} and {theirs:?}")]
    Mismatch {
        /// Rules of the receiving spectrum.
        ours: SpectrumSpec,
        /// Rules of the other one.
        theirs: SpectrumSpec,
    },
    /// A maximum bin count too small: at least 1 for ranges, 2 for means
    /// (mean bins are aligned on zero, so means of both signs need two).
    #[error("{axis} maximum bin count must be at least {least}, got {got}")]
    TooFewBins {
        /// "range" or "mean".
        axis: &'static str,
        /// Smallest count allowed.
        least: usize,
        /// Count given.
        got: usize,
    },
}

/// One bin of the range histogram.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct RangeBin {
    /// Lower edge (included), MPa.
    pub lo_mpa: f64,
    /// Upper edge (excluded), MPa.
    pub hi_mpa: f64,
    /// Cycles counted in the bin (half cycles count 0.5).
    pub cycles: f64,
}

/// One cell of the range-mean matrix.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct MatrixCell {
    /// Lower range edge (included), MPa.
    pub range_lo_mpa: f64,
    /// Upper range edge (excluded), MPa.
    pub range_hi_mpa: f64,
    /// Lower mean edge (included), MPa.
    pub mean_lo_mpa: f64,
    /// Upper mean edge (excluded), MPa.
    pub mean_hi_mpa: f64,
    /// Cycles counted in the cell (half cycles count 0.5).
    pub cycles: f64,
    /// Largest range counted in the cell, MPa.
    pub max_range_mpa: f64,
    /// Cycle-weighted mean stress of the cell, MPa.
    pub mean_mpa: f64,
}

/// Accumulator of one cell.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct Acc {
    cycles: f64,
    max_range: f64,
    /// Σ count·mean, for the weighted mean.
    sum_mean: f64,
}

impl Acc {
    #[inline(always)]
    fn add(&mut self, range: f64, mean: f64, count: f64) {
        self.cycles += count;
        self.max_range = if range > self.max_range {
            range
        } else {
            self.max_range
        };
        // weighted mean = Σ n_i·m_i / Σ n_i (common practice)
        self.sum_mean += count * mean;
    }

    fn merge(&mut self, o: &Acc) {
        self.cycles += o.cycles;
        self.max_range = self.max_range.max(o.max_range);
        self.sum_mean += o.sum_mean;
    }
}

/// One axis: its rule and current width.
#[derive(Clone, Copy, Debug)]
struct Axis {
    rule: BinRule,
    width: f64,
    /// 1 / width when that is exact (power-of-two widths), else 0.
    inv: f64,
    /// log2 of the width for `MaxBins`.
    exp: i32,
}

impl Axis {
    fn new(rule: BinRule, name: &'static str, least: usize) -> Result<Axis, SpectrumError> {
        match rule {
            BinRule::Width(w) => {
                if !(w.is_finite() && w > 0.0) {
                    return Err(SpectrumError::BadWidth {
                        axis: name,
                        width: w,
                    });
                }
                Ok(Axis {
                    rule,
                    width: w,
                    inv: exact_inverse(w),
                    exp: 0,
                })
            }
            BinRule::MaxBins(n) => {
                if n < least {
                    return Err(SpectrumError::TooFewBins {
                        axis: name,
                        least,
                        got: n,
                    });
                }
                let width = 2f64.powi(MIN_WIDTH_EXP);
                Ok(Axis {
                    rule,
                    width,
                    inv: exact_inverse(width),
                    exp: MIN_WIDTH_EXP,
                })
            }
        }
    }

    #[inline(always)]
    fn index(&self, v: f64) -> i64 {
        // bin k holds [k·w, (k+1)·w): k = floor(v / w)
        let q = if self.inv != 0.0 {
            v * self.inv
        } else {
            v / self.width
        };
        // floor without a library call on baseline x86-64 (truncate, then step down below zero)
        let i = q as i64;
        i - ((i as f64) > q) as i64
    }

    /// Double the width; false once it cannot grow any more.
    fn double(&mut self) -> bool {
        if self.exp >= f64::MAX_EXP - 1 {
            return false;
        }
        self.exp += 1;
        self.width = 2f64.powi(self.exp);
        self.inv = exact_inverse(self.width);
        true
    }

    fn max_bins(&self) -> Option<i64> {
        match self.rule {
            BinRule::MaxBins(n) => Some(n.min(i64::MAX as usize) as i64),
            BinRule::Width(_) => None,
        }
    }
}

/// 1 / w if w is a power of two (then v·(1/w) = v/w exactly), else 0.
fn exact_inverse(w: f64) -> f64 {
    let inv = 1.0 / w;
    let mantissa = |x: f64| x.to_bits() & ((1u64 << 52) - 1);
    if w.is_normal() && inv.is_normal() && mantissa(w) == 0 && mantissa(inv) == 0 {
        inv
    } else {
        0.0
    }
}

/// Inclusive box of indices.
#[derive(Clone, Copy, Debug, PartialEq)]
struct IdxBox {
    r_lo: i64,
    r_hi: i64,
    m_lo: i64,
    m_hi: i64,
}

impl IdxBox {
    fn point(r: i64, m: i64) -> IdxBox {
        IdxBox {
            r_lo: r,
            r_hi: r,
            m_lo: m,
            m_hi: m,
        }
    }

    #[inline(always)]
    fn contains(&self, r: i64, m: i64) -> bool {
        r >= self.r_lo && r <= self.r_hi && m >= self.m_lo && m <= self.m_hi
    }

    fn include(&self, r: i64, m: i64) -> IdxBox {
        IdxBox {
            r_lo: self.r_lo.min(r),
            r_hi: self.r_hi.max(r),
            m_lo: self.m_lo.min(m),
            m_hi: self.m_hi.max(m),
        }
    }

    /// Index span of each axis.
    fn spans(&self) -> (i128, i128) {
        (
            self.r_hi as i128 - self.r_lo as i128 + 1,
            self.m_hi as i128 - self.m_lo as i128 + 1,
        )
    }

    /// Cells in the box.
    fn cells(&self) -> u128 {
        let nr = (self.r_hi as i128 - self.r_lo as i128 + 1) as u128;
        let nm = (self.m_hi as i128 - self.m_lo as i128 + 1) as u128;
        nr * nm
    }
}

/// Cell storage.
#[derive(Clone, Debug)]
enum Store {
    Empty,
    Dense { bx: IdxBox, cells: Vec<Acc> },
    Sparse(HashMap<(i64, i64), Acc>),
}

impl Store {
    fn entries(&self) -> Vec<((i64, i64), Acc)> {
        match self {
            Store::Empty => Vec::new(),
            Store::Dense { bx, cells } => {
                let nm = (bx.m_hi - bx.m_lo + 1) as usize;
                cells
                    .iter()
                    .enumerate()
                    .filter(|(_, a)| a.cycles != 0.0 || a.max_range != 0.0 || a.sum_mean != 0.0)
                    .map(|(i, a)| ((bx.r_lo + (i / nm) as i64, bx.m_lo + (i % nm) as i64), *a))
                    .collect()
            }
            Store::Sparse(map) => map.iter().map(|(k, a)| (*k, *a)).collect(),
        }
    }

    /// A store holding `entries`, dense over `bx` when small enough.
    fn build(bx: IdxBox, entries: &[((i64, i64), Acc)]) -> Store {
        if bx.cells() <= DENSE_CELL_LIMIT as u128 {
            let nm = (bx.m_hi - bx.m_lo + 1) as usize;
            let nr = (bx.r_hi - bx.r_lo + 1) as usize;
            let mut cells = vec![Acc::default(); nr * nm];
            for &((r, m), a) in entries {
                cells[(r - bx.r_lo) as usize * nm + (m - bx.m_lo) as usize].merge(&a);
            }
            Store::Dense { bx, cells }
        } else {
            let mut map: HashMap<(i64, i64), Acc> = HashMap::with_capacity(entries.len());
            for &(k, a) in entries {
                map.entry(k).or_default().merge(&a);
            }
            Store::Sparse(map)
        }
    }
}

/// Streaming range histogram and range-mean matrix.
#[derive(Clone, Debug)]
pub struct Spectrum {
    range: Axis,
    mean: Axis,
    /// Box of occupied indices (None before the first cycle); up to date
    /// while the store is sparse, recomputed when a dense store overflows.
    used: Option<IdxBox>,
    store: Store,
    total: f64,
    added: u64,
    max_range: f64,
}

impl Spectrum {
    /// New empty spectrum.
    pub fn new(spec: SpectrumSpec) -> Result<Spectrum, SpectrumError> {
        Ok(Spectrum {
            range: Axis::new(spec.range, "range", 1)?,
            mean: Axis::new(spec.mean, "mean", 2)?,
            used: None,
            store: Store::Empty,
            total: 0.0,
            added: 0,
            max_range: 0.0,
        })
    }

    /// An empty spectrum with the same rules at this one's current widths. Cycles
    /// added to it and merged back give the bins and counts of one spectrum fed all
    /// the cycles: a `MaxBins` width only ever grows to the least that fits the
    /// cycles seen, and this one's widths are at most that for all of them.
    pub fn empty_like(&self) -> Spectrum {
        Spectrum {
            range: self.range,
            mean: self.mean,
            used: None,
            store: Store::Empty,
            total: 0.0,
            added: 0,
            max_range: 0.0,
        }
    }

    /// Add one counted cycle (its `count` is the weight).
    #[inline]
    pub fn add(&mut self, c: &Cycle) {
        self.add_block(c.range, c.mean, c.count);
    }

    /// Add `count` cycles of `range` (>= 0) about `mean`, MPa. A block whose
    /// range or mean is not finite is counted in the total but not binned.
    #[inline]
    pub fn add_block(&mut self, range: f64, mean: f64, count: f64) {
        debug_assert!(range.is_finite() && mean.is_finite() && range >= 0.0);
        self.total += count;
        self.added += 1;
        self.max_range = self.max_range.max(range);
        let r = self.range.index(range);
        let m = self.mean.index(mean);
        if let Store::Dense { bx, cells } = &mut self.store {
            if bx.contains(r, m) {
                let nm = (bx.m_hi - bx.m_lo + 1) as usize;
                let i = (r - bx.r_lo) as usize * nm + (m - bx.m_lo) as usize;
                cells[i].add(range, mean, count);
                return;
            }
        }
        self.add_slow(range, mean, count);
    }

    #[cold]
    fn add_slow(&mut self, range: f64, mean: f64, count: f64) {
        if !(range.is_finite() && mean.is_finite()) {
            return;
        }
        let range = range.max(0.0);
        if let Store::Dense { .. } = self.store {
            // the occupied box is kept up to date only off the dense fast path
            self.used = self.store.entries().iter().fold(None, |b, &((r, m), _)| {
                Some(match b {
                    None => IdxBox::point(r, m),
                    Some(b) => b.include(r, m),
                })
            });
        }
        // widen MaxBins axes until the cycle fits
        loop {
            let r = self.range.index(range);
            let m = self.mean.index(mean);
            let want = match self.used {
                None => IdxBox::point(r, m),
                Some(u) => u.include(r, m),
            };
            let r_over = self.range.max_bins().is_some_and(|n| want.r_hi >= n);
            let m_over = self
                .mean
                .max_bins()
                .is_some_and(|n| want.spans().1 > n as i128);
            let r_over = r_over && self.range.double();
            let m_over = m_over && self.mean.double();
            if !(r_over || m_over) {
                break;
            }
            let entries = self.store.entries();
            let mut merged: Vec<((i64, i64), Acc)> = Vec::with_capacity(entries.len());
            // halve the indices of the doubled axes: bin k becomes bin floor(k/2)
            let fr = |k: i64| if r_over { k.div_euclid(2) } else { k };
            let fm = |k: i64| if m_over { k.div_euclid(2) } else { k };
            let mut bx: Option<IdxBox> = None;
            for ((rk, mk), a) in entries {
                let (rk, mk) = (fr(rk), fm(mk));
                bx = Some(match bx {
                    None => IdxBox::point(rk, mk),
                    Some(b) => b.include(rk, mk),
                });
                merged.push(((rk, mk), a));
            }
            self.used = self.used.map(|u| IdxBox {
                r_lo: fr(u.r_lo),
                r_hi: fr(u.r_hi),
                m_lo: fm(u.m_lo),
                m_hi: fm(u.m_hi),
            });
            self.store = match bx {
                None => Store::Empty,
                Some(b) => Store::build(b, &merged),
            };
        }
        let r = self.range.index(range);
        let m = self.mean.index(mean);
        let used = match self.used {
            None => IdxBox::point(r, m),
            Some(u) => u.include(r, m),
        };
        self.used = Some(used);
        match &mut self.store {
            Store::Sparse(map) => {
                map.entry((r, m)).or_default().add(range, mean, count);
            }
            _ => {
                // grow the dense box with slack (amortised), capped by MaxBins
                let mut grow = used;
                let (spr, spm) = used.spans();
                if grow.cells() <= DENSE_CELL_LIMIT as u128 {
                    // both spans are small here, so no overflow below
                    let (sr, sm) = ((spr / 2) as i64, (spm / 2) as i64);
                    grow.r_lo = (used.r_lo - sr).max(0).min(used.r_lo);
                    grow.r_hi = used.r_hi + sr;
                    grow.m_lo = used.m_lo - sm;
                    grow.m_hi = used.m_hi + sm;
                    if let Some(n) = self.range.max_bins() {
                        grow.r_hi = grow.r_hi.min(n - 1).max(used.r_hi);
                    }
                    if let Some(n) = self.mean.max_bins() {
                        let room = (n - spm as i64).max(0);
                        grow.m_lo = used.m_lo - room.min(sm);
                        grow.m_hi = used.m_hi + (room - (used.m_lo - grow.m_lo)).min(sm);
                    }
                }
                // past DENSE_CELL_LIMIT cells the store becomes a hash map (Store::build)
                let entries = self.store.entries();
                self.store = Store::build(grow, &entries);
                match &mut self.store {
                    Store::Dense { bx, cells } => {
                        let nm = (bx.m_hi - bx.m_lo + 1) as usize;
                        let i = (r - bx.r_lo) as usize * nm + (m - bx.m_lo) as usize;
                        cells[i].add(range, mean, count);
                    }
                    Store::Sparse(map) => {
                        map.entry((r, m)).or_default().add(range, mean, count);
                    }
                    Store::Empty => unreachable!("a store was just built over a non-empty box"),
                }
            }
        }
    }

    /// Add the cycles of `other`, binned by the same rules (for example
    /// the spectra of the parts of a parallel count). With `MaxBins` the
    /// finer spectrum is first brought to the wider width, which is exact
    /// because bins are aligned on multiples of the width, then widened
    /// further if both together do not fit; the result has the bins and
    /// counts of one spectrum fed with all the cycles.
    pub fn merge(&mut self, other: &Spectrum) -> Result<(), SpectrumError> {
        let spec = |s: &Spectrum| SpectrumSpec {
            range: s.range.rule,
            mean: s.mean.rule,
        };
        if spec(self) != spec(other) {
            return Err(SpectrumError::Mismatch {
                ours: spec(self),
                theirs: spec(other),
            });
        }
        let er = self.range.exp.max(other.range.exp);
        let em = self.mean.exp.max(other.mean.exp);
        // bin k at width 2^e is bin floor(k / 2^(e'-e)) at width 2^e'
        let shift = |k: i64, from: i32, to: i32| k.div_euclid(1i64 << (to - from).min(62));
        let mut map: BTreeMap<(i64, i64), Acc> = BTreeMap::new();
        for s in [&*self, other] {
            for ((r, m), a) in s.store.entries() {
                let key = (shift(r, s.range.exp, er), shift(m, s.mean.exp, em));
                map.entry(key).or_default().merge(&a);
            }
        }
        // both at the wider widths
        while self.range.exp < er {
            self.range.double();
        }
        while self.mean.exp < em {
            self.mean.double();
        }
        self.total += other.total;
        self.added += other.added;
        self.max_range = self.max_range.max(other.max_range);
        // widen MaxBins axes until both together fit, merging bin pairs
        loop {
            let bx = map.keys().fold(None, |b: Option<IdxBox>, &(r, m)| {
                Some(b.map_or(IdxBox::point(r, m), |b| b.include(r, m)))
            });
            let Some(bx) = bx else { break };
            let r_over = self.range.max_bins().is_some_and(|n| bx.r_hi >= n);
            let m_over = self
                .mean
                .max_bins()
                .is_some_and(|n| bx.spans().1 > n as i128);
            let r_over = r_over && self.range.double();
            let m_over = m_over && self.mean.double();
            if !(r_over || m_over) {
                break;
            }
            let mut halved: BTreeMap<(i64, i64), Acc> = BTreeMap::new();
            for ((r, m), a) in map {
                let key = (
                    if r_over { r.div_euclid(2) } else { r },
                    if m_over { m.div_euclid(2) } else { m },
                );
                halved.entry(key).or_default().merge(&a);
            }
            map = halved;
        }
        let entries: Vec<((i64, i64), Acc)> = map.into_iter().collect();
        self.used = entries
            .iter()
            .fold(None, |b: Option<IdxBox>, &((r, m), _)| {
                Some(b.map_or(IdxBox::point(r, m), |b| b.include(r, m)))
            });
        self.store = match self.used {
            None => Store::Empty,
            Some(b) => Store::build(b, &entries),
        };
        Ok(())
    }

    /// Cycles added, weighted by their counts (half cycles count 0.5).
    pub fn total_cycles(&self) -> f64 {
        self.total
    }

    /// Number of `add` calls.
    pub fn entries_added(&self) -> u64 {
        self.added
    }

    /// Largest range added, MPa (0 when empty).
    pub fn max_range_mpa(&self) -> f64 {
        self.max_range
    }

    /// Current range bin width, MPa.
    pub fn range_width_mpa(&self) -> f64 {
        self.range.width
    }

    /// Current mean bin width, MPa.
    pub fn mean_width_mpa(&self) -> f64 {
        self.mean.width
    }

    /// Occupied range bins, by increasing range.
    pub fn histogram(&self) -> Vec<RangeBin> {
        let mut bins: BTreeMap<i64, f64> = BTreeMap::new();
        for ((r, _), a) in self.store.entries() {
            *bins.entry(r).or_insert(0.0) += a.cycles;
        }
        let w = self.range.width;
        bins.into_iter()
            .filter(|(_, c)| *c != 0.0)
            .map(|(r, cycles)| RangeBin {
                lo_mpa: r as f64 * w,
                hi_mpa: (r + 1) as f64 * w,
                cycles,
            })
            .collect()
    }

    /// Occupied matrix cells, by increasing range then increasing mean.
    pub fn matrix(&self) -> Vec<MatrixCell> {
        let mut e = self.store.entries();
        e.retain(|(_, a)| a.cycles != 0.0);
        e.sort_by_key(|(k, _)| *k);
        let (wr, wm) = (self.range.width, self.mean.width);
        e.into_iter()
            .map(|((r, m), a)| MatrixCell {
                range_lo_mpa: r as f64 * wr,
                range_hi_mpa: (r + 1) as f64 * wr,
                mean_lo_mpa: m as f64 * wm,
                mean_hi_mpa: (m + 1) as f64 * wm,
                cycles: a.cycles,
                max_range_mpa: a.max_range,
                // weighted mean of the cell = Σ n_i·m_i / Σ n_i (common practice)
                mean_mpa: a.sum_mean / a.cycles,
            })
            .collect()
    }
}

/// How one axis is binned, as a spectrum part stores it: exactly one of the two.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct AxisRuleState {
    /// Fixed bin width, MPa.
    pub width_mpa: Option<f64>,
    /// At most this many bins, widths powers of two in MPa.
    pub max_bins: Option<u64>,
}

impl From<BinRule> for AxisRuleState {
    fn from(r: BinRule) -> AxisRuleState {
        match r {
            BinRule::Width(w) => AxisRuleState {
                width_mpa: Some(w),
                max_bins: None,
            },
            BinRule::MaxBins(n) => AxisRuleState {
                width_mpa: None,
                max_bins: Some(n as u64),
            },
        }
    }
}

impl AxisRuleState {
    /// The rule, or why there is none.
    pub fn rule(&self) -> Result<BinRule, String> {
        match (self.width_mpa, self.max_bins) {
            (Some(w), None) => Ok(BinRule::Width(w)),
            (None, Some(n)) => usize::try_from(n)
                .map(BinRule::MaxBins)
                .map_err(|_| format!("max_bins {n} is too large")),
            _ => Err("give exactly one of width_mpa and max_bins".into()),
        }
    }
}

/// One occupied cell of a saved spectrum: bin indices at the saved widths (bin `k`
/// holds `[k·w, (k+1)·w)`) and the cell's accumulators.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CellState {
    /// Range bin index.
    pub range_bin: i64,
    /// Mean bin index.
    pub mean_bin: i64,
    /// Cycles in the cell (half cycles count 0.5).
    pub cycles: f64,
    /// Largest range counted in the cell, MPa.
    pub max_range_mpa: f64,
    /// Σ count·mean of the cell's cycles, MPa (the weighted mean is this / cycles).
    pub mean_sum_mpa: f64,
}

/// A spectrum saved so that it merges with others exactly as the spectrum itself.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SpectrumState {
    /// Current range bin width, MPa.
    pub range_width_mpa: f64,
    /// Current mean bin width, MPa.
    pub mean_width_mpa: f64,
    /// Occupied cells, by range bin then mean bin.
    pub cells: Vec<CellState>,
}

/// Largest cycle count a saved cell or spectrum may hold: 2^52, below which sums of
/// whole and half cycles are exact in f64 (and two such sums never reach infinity).
pub const MAX_SAVED_CYCLES: f64 = 4_503_599_627_370_496.0;

impl Spectrum {
    /// The spectrum's binning rules.
    pub fn spec(&self) -> SpectrumSpec {
        SpectrumSpec {
            range: self.range.rule,
            mean: self.mean.rule,
        }
    }

    /// The spectrum as saved in a part.
    pub fn state(&self) -> SpectrumState {
        let mut e = self.store.entries();
        e.retain(|(_, a)| a.cycles != 0.0);
        e.sort_by_key(|(k, _)| *k);
        SpectrumState {
            range_width_mpa: self.range.width,
            mean_width_mpa: self.mean.width,
            cells: e
                .into_iter()
                .map(|((r, m), a)| CellState {
                    range_bin: r,
                    mean_bin: m,
                    cycles: a.cycles,
                    max_range_mpa: a.max_range,
                    mean_sum_mpa: a.sum_mean,
                })
                .collect(),
        }
    }

    /// A spectrum binned by `spec` from its saved state, every value checked: widths
    /// that the rules can reach, cells inside the bins allowed and each cell's largest
    /// range inside its own bin, counts finite, positive, whole or half, and at most
    /// [`MAX_SAVED_CYCLES`] in all. The error says what is wrong, for a message.
    pub fn from_state(spec: SpectrumSpec, s: &SpectrumState) -> Result<Spectrum, String> {
        let mut sp = Spectrum::new(spec).map_err(|e| e.to_string())?;
        for (axis, width, name) in [
            (&mut sp.range, s.range_width_mpa, "range"),
            (&mut sp.mean, s.mean_width_mpa, "mean"),
        ] {
            match axis.rule {
                BinRule::Width(w) => {
                    if width != w {
                        return Err(format!(
                            "{name}_width_mpa is {width} but the {name} bins are {w} MPa wide"
                        ));
                    }
                }
                BinRule::MaxBins(_) => {
                    while axis.width < width {
                        if !axis.double() {
                            break;
                        }
                    }
                    if axis.width != width {
                        return Err(format!(
                            "{name}_width_mpa {width} is not a power of two from 2^{MIN_WIDTH_EXP} MPa up"
                        ));
                    }
                }
            }
        }
        let mut entries = Vec::with_capacity(s.cells.len());
        let mut seen = std::collections::HashSet::with_capacity(s.cells.len());
        let mut total = 0.0f64;
        let mut bx: Option<IdxBox> = None;
        for (i, c) in s.cells.iter().enumerate() {
            let at = format!("cells[{i}]");
            let (r, m) = (c.range_bin, c.mean_bin);
            if !seen.insert((r, m)) {
                return Err(format!("{at}: the cell ({r}, {m}) is given twice"));
            }
            if !(c.cycles.is_finite() && c.cycles > 0.0 && c.cycles <= MAX_SAVED_CYCLES) {
                return Err(format!(
                    "{at}: cycles must be a number > 0 and at most 2^52, got {}",
                    c.cycles
                ));
            }
            // a count is a sum of whole and half cycles (ASTM E1049-85 §5.4.4)
            if (2.0 * c.cycles).fract() != 0.0 {
                return Err(format!(
                    "{at}: cycles must be whole or half cycles, got {}",
                    c.cycles
                ));
            }
            let lo = r as f64 * sp.range.width;
            let hi = (r as f64 + 1.0) * sp.range.width;
            let x = c.max_range_mpa;
            let top = 2.0 * crate::histories::series::MAX_SERIES_STRESS_MPA;
            if r < 0 || !(x.is_finite() && x >= lo && x < hi && x <= top) || sp.range.index(x) != r
            {
                return Err(format!(
                    "{at}: max_range_mpa {x} does not lie in range bin {r} ([{lo}, {hi}) MPa)"
                ));
            }
            // every mean lies within the stress limit, so the cell's bin does too
            let limit = crate::histories::series::MAX_SERIES_STRESS_MPA;
            let wm = sp.mean.width;
            if !(c.mean_sum_mpa.is_finite() && (m as f64 * wm).abs() <= limit + wm) {
                return Err(format!(
                    "{at}: mean bin {m} or mean_sum_mpa {} lies beyond ±{limit} MPa",
                    c.mean_sum_mpa
                ));
            }
            total += c.cycles;
            bx = Some(bx.map_or(IdxBox::point(r, m), |b| b.include(r, m)));
            entries.push((
                (r, m),
                Acc {
                    cycles: c.cycles,
                    max_range: x,
                    sum_mean: c.mean_sum_mpa,
                },
            ));
        }
        if total > MAX_SAVED_CYCLES {
            return Err(format!(
                "the cells hold {total} cycles; at most 2^52 are read"
            ));
        }
        if let Some(b) = bx {
            if sp.range.max_bins().is_some_and(|n| b.r_hi >= n) {
                return Err(format!(
                    "range bin {} lies beyond the {} range bins allowed",
                    b.r_hi,
                    sp.range.max_bins().unwrap_or(0)
                ));
            }
            if sp.mean.max_bins().is_some_and(|n| b.spans().1 > n as i128) {
                return Err(format!(
                    "the mean bins span {} bins, more than the {} allowed",
                    b.spans().1,
                    sp.mean.max_bins().unwrap_or(0)
                ));
            }
        }
        sp.max_range = entries.iter().fold(0.0, |a, (_, c)| c.max_range.max(a));
        sp.total = total;
        sp.added = entries.len() as u64;
        sp.used = bx;
        sp.store = match bx {
            None => Store::Empty,
            Some(b) => Store::build(b, &entries),
        };
        Ok(sp)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(r: BinRule, m: BinRule) -> SpectrumSpec {
        SpectrumSpec { range: r, mean: m }
    }

    #[test]
    fn dense_grows_into_sparse_and_keeps_counts() {
        let mut s = Spectrum::new(spec(BinRule::Width(1e-3), BinRule::Width(1e-3))).unwrap();
        s.add_block(1.0002, 0.0001, 1.0);
        assert!(matches!(s.store, Store::Dense { .. }));
        // 5e6 x 3e6 bins of 1e-3 MPa would exceed DENSE_CELL_LIMIT
        s.add_block(5000.0, -3000.0, 0.5);
        assert!(matches!(s.store, Store::Sparse(_)));
        s.add_block(1.0004, 0.0003, 2.0);
        let m = s.matrix();
        // the blocks above: two in cell [1.000, 1.001) x [0.000, 0.001), one far away
        assert_eq!(m.len(), 2);
        assert_eq!(m[0].cycles, 3.0);
        assert_eq!(m[0].max_range_mpa, 1.0004);
        // weighted mean (1·0.0001 + 2·0.0003) / 3
        assert!((m[0].mean_mpa - 0.0007 / 3.0).abs() < 1e-15);
        assert_eq!(m[1].cycles, 0.5);
        assert_eq!(s.total_cycles(), 3.5);
    }

    #[test]
    fn bad_rules_are_errors() {
        // rules of BinRule: widths finite > 0, at least 1 range bin and 2 mean bins
        assert!(Spectrum::new(spec(BinRule::Width(0.0), BinRule::Width(1.0))).is_err());
        assert!(Spectrum::new(spec(BinRule::Width(1.0), BinRule::Width(f64::NAN))).is_err());
        assert!(Spectrum::new(spec(BinRule::MaxBins(0), BinRule::Width(1.0))).is_err());
        assert!(Spectrum::new(spec(BinRule::Width(1.0), BinRule::MaxBins(1))).is_err());
        assert!(Spectrum::new(spec(BinRule::MaxBins(1), BinRule::MaxBins(2))).is_ok());
    }
}
