//! Damage of every counted cycle, summed in the streaming count.
//!
//! The assessment stage knows a detail's design curve and mean-stress rule; it hands
//! the count a [`CycleRule`] that turns one cycle (its own range, maximum and minimum)
//! into its damage. The count adds each cycle's damage to a [`DamageTally`]: the total,
//! the damage and cycles per curve segment, the cycles below the cut-off, and a copy of
//! the range-mean matrix whose cells hold the damage of their cycles (so each matrix
//! cell, shown as a block, carries the exact sum over its own cycles). Tallies add up
//! like spectra, so the parts of a parallel count are summed and the cycles that close
//! across parts (the seam and the residue) are added when the parts are merged.

use crate::histories::rainflow::Cycle;
use crate::histories::spectrum::{MatrixCell, Spectrum, SpectrumError};
use std::collections::HashMap;
use std::fmt::Debug;
use std::sync::Arc;

/// What one cycle does on a detail's design curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CycleEffect {
    /// Damage of the cycle, its count (1 or 0.5) included.
    pub damage: f64,
    /// 1-based curve segment of its design range; `None` below the cut-off.
    pub segment: Option<usize>,
    /// The mean-stress rule changed its range.
    pub mean_rule_acted: bool,
    /// Its design range γFf·Δσ_eff in MPa (the range the curve was entered with).
    pub design_range_mpa: f64,
}

/// The damage of one cycle on one detail (its curve and corrections).
pub trait CycleRule: Send + Sync + Debug {
    /// Segments of the design curve.
    fn segments(&self) -> usize;
    /// The effect of one cycle; called only for cycles of range > 0.
    fn effect(&self, c: &Cycle) -> CycleEffect;
}

/// A rule shared by the threads of a count.
pub type SharedRule = Arc<dyn CycleRule>;

/// The damage of the cycles of one count on one detail (one pass of the record).
#[derive(Clone, Debug)]
pub struct DamageTally {
    /// The range-mean matrix of the cycles with each cycle weighted by its damage.
    pub cells: Spectrum,
    /// Σ damage of every cycle.
    pub damage: f64,
    /// Per curve segment: (cycles, damage).
    pub bands: Vec<(f64, f64)>,
    /// Cycles whose design range lies below the cut-off.
    pub below: f64,
    /// The mean-stress rule changed the range of some cycle.
    pub acted: bool,
    /// The cycles by design range in fine logarithmic bins, for the searches that
    /// scale every range (reserve factor, required category).
    pub ranges: DesignRanges,
}

/// Mantissa bits that index a bin of [`DesignRanges`]: 2^11 bins per octave.
pub const RANGE_BITS: u32 = 11;
/// Largest ratio of a bin's upper to its lower edge, less one: 2^-11 = 4.88e-4.
pub const RANGE_RESOLUTION: f64 = 1.0 / (1u64 << RANGE_BITS) as f64;
const PAGE: usize = 1 << RANGE_BITS;
/// Bins per chunk of a page, one bit of its `touched` mask each.
const CHUNK: usize = PAGE / 64;
const NO_PAGE: u32 = u32::MAX;
/// Whole cycles held back before they are put into their bins, a rule at a time: the
/// bins of several rules then do not crowd each other out of the cache.
const PENDING: usize = 1024;

/// Cycles counted by design range in bins whose upper edge is at most
/// 1 + [`RANGE_RESOLUTION`] times their lower edge, each bin with its cycles and the
/// smallest and largest design range counted in it. A bin is the value's binary
/// exponent and its first 11 mantissa bits (bins of equal relative width, found
/// without a logarithm); a page of 2^11 bins is made for each octave a range falls in,
/// zeroed by the allocator, and a mask of the page's touched 32-bin chunks keeps the
/// merge of the parallel count's blocks to the bins they hold.
/// With every range scaled by k, a damage sum that takes each bin's cycles at its
/// largest range is never below the exact sum at k and never above the exact sum at
/// k·(1 + resolution); at its smallest range, the other way round (each cycle moves by
/// at most the bin's ratio; common practice: bracketing by bins). Where a bin holds one
/// range only, both are exact.
#[derive(Clone, Debug, Default)]
pub struct DesignRanges {
    /// Page number of each biased binary exponent (2048 of them; `NO_PAGE`: none).
    index: Vec<u32>,
    pages: Vec<Page>,
    /// Design ranges of whole cycles not yet in their bins.
    pending: Vec<f64>,
}

/// The bins of one octave.
#[derive(Clone, Debug)]
struct Page {
    /// Biased binary exponent.
    exp: u16,
    /// Bit j: some bin of chunk j holds cycles.
    touched: u64,
    /// Per bin, in one cache line's reach: the bits of its cycles (f64), of its largest
    /// range (f64; 0: none) and the bitwise NOT of the bits of its smallest range (0:
    /// none; for positive values the bits order like the values, so the largest NOT is
    /// the smallest range).
    bins: Vec<[u64; 3]>,
}

impl DesignRanges {
    /// Add `count` cycles of design range `d_mpa` (> 0 and finite; others are skipped).
    #[inline]
    pub fn add(&mut self, d_mpa: f64, count: f64) {
        if !(d_mpa > 0.0 && d_mpa.is_finite()) {
            return;
        }
        if count == 1.0 {
            if self.pending.capacity() == 0 {
                self.pending.reserve_exact(PENDING);
            }
            self.pending.push(d_mpa);
            if self.pending.len() >= PENDING {
                self.flush();
            }
        } else {
            self.put(d_mpa, d_mpa, count);
        }
    }

    /// Put the held-back whole cycles into their bins.
    fn flush(&mut self) {
        let pending = std::mem::take(&mut self.pending);
        for &d in &pending {
            self.put(d, d, 1.0);
        }
        self.pending = pending;
        self.pending.clear();
    }

    /// Add `count` cycles of ranges from `smallest` to `largest`, both in one bin.
    #[inline]
    fn put(&mut self, smallest: f64, largest: f64, count: f64) {
        let bits = smallest.to_bits();
        let e = (bits >> 52) as usize;
        let bin = ((bits >> (52 - RANGE_BITS)) as usize) & (PAGE - 1);
        if self.index.is_empty() {
            self.index = vec![NO_PAGE; 2048];
        }
        let mut p = self.index[e];
        if p == NO_PAGE {
            p = self.pages.len() as u32;
            self.index[e] = p;
            self.pages.push(Page {
                exp: e as u16,
                touched: 0,
                bins: vec![[0; 3]; PAGE],
            });
        }
        let page = &mut self.pages[p as usize];
        page.touched |= 1u64 << (bin / CHUNK);
        let b = &mut page.bins[bin];
        b[0] = (f64::from_bits(b[0]) + count).to_bits();
        // positive finite values: the larger value has the larger bits
        b[1] = b[1].max(largest.to_bits());
        b[2] = b[2].max(!bits);
    }

    /// Add the cycles of another set.
    pub fn merge(&mut self, o: &DesignRanges) {
        for page in &o.pages {
            page.each(|_, smallest, largest, n| self.put(smallest, largest, n));
        }
        for &d in &o.pending {
            self.put(d, d, 1.0);
        }
    }

    /// Every non-empty bin: (smallest range, largest range, cycles), by rising range.
    pub fn bins(&self) -> Vec<(f64, f64, f64)> {
        if !self.pending.is_empty() {
            let mut all = self.clone();
            all.flush();
            return all.bins();
        }
        let mut pages: Vec<&Page> = self.pages.iter().collect();
        pages.sort_by_key(|p| p.exp);
        let mut out = Vec::new();
        for p in pages {
            p.each(|_, smallest, largest, n| out.push((smallest, largest, n)));
        }
        out
    }

    /// Σ cycles.
    pub fn cycles(&self) -> f64 {
        self.bins().iter().map(|b| b.2).sum()
    }
}

impl Page {
    /// (bin, smallest, largest, cycles) of every non-empty bin, by rising range.
    fn each(&self, mut f: impl FnMut(usize, f64, f64, f64)) {
        let mut mask = self.touched;
        while mask != 0 {
            let j = mask.trailing_zeros() as usize;
            mask &= mask - 1;
            for (bin, b) in self.bins[j * CHUNK..(j + 1) * CHUNK].iter().enumerate() {
                let n = f64::from_bits(b[0]);
                if n != 0.0 {
                    f(
                        j * CHUNK + bin,
                        f64::from_bits(!b[2]),
                        f64::from_bits(b[1]),
                        n,
                    );
                }
            }
        }
    }
}

impl DamageTally {
    /// Empty tally for `rule`, its cells binned like `start` (at its current widths).
    pub fn new(rule: &dyn CycleRule, start: &Spectrum) -> DamageTally {
        DamageTally {
            cells: start.empty_like(),
            damage: 0.0,
            bands: vec![(0.0, 0.0); rule.segments()],
            below: 0.0,
            acted: false,
            ranges: DesignRanges::default(),
        }
    }

    /// An empty tally like this one (cells at its current widths).
    pub fn empty_like(&self) -> DamageTally {
        DamageTally {
            cells: self.cells.empty_like(),
            damage: 0.0,
            bands: vec![(0.0, 0.0); self.bands.len()],
            below: 0.0,
            acted: false,
            ranges: DesignRanges::default(),
        }
    }

    /// Add one cycle.
    #[inline]
    pub fn add(&mut self, rule: &dyn CycleRule, c: &Cycle) {
        if c.range.is_nan() || c.range <= 0.0 {
            // a cycle of no range does no damage (common practice)
            return;
        }
        let e = rule.effect(c);
        // Palmgren-Miner: D = Σ nᵢ/Nᵢ over every cycle (EN 1993-1-9 A.6, common practice)
        self.damage += e.damage;
        self.acted |= e.mean_rule_acted;
        match e.segment {
            Some(s) if s >= 1 && s <= self.bands.len() => {
                self.bands[s - 1].0 += c.count;
                self.bands[s - 1].1 += e.damage;
            }
            _ => self.below += c.count,
        }
        self.cells.add_block(c.range, c.mean, e.damage);
        self.ranges.add(e.design_range_mpa, c.count);
    }

    /// Add the tally of cycles counted elsewhere (another part of the record).
    pub fn merge(&mut self, o: &DamageTally) -> Result<(), SpectrumError> {
        self.cells.merge(&o.cells)?;
        self.damage += o.damage;
        for (a, b) in self.bands.iter_mut().zip(&o.bands) {
            a.0 += b.0;
            a.1 += b.1;
        }
        self.below += o.below;
        self.acted |= o.acted;
        self.ranges.merge(&o.ranges);
        Ok(())
    }

    /// Bring the damage cells to the widths of the count's own spectrum `counted` (the
    /// tally saw the same cycles, so its widths are at most those).
    pub fn align(&mut self, counted: &Spectrum) -> Result<(), SpectrumError> {
        let mut a = counted.empty_like();
        a.merge(&self.cells)?;
        self.cells = a;
        Ok(())
    }

    /// The damage of each cell of `matrix` (the count's range-mean matrix, with the
    /// same widths as these cells), in its order.
    pub fn cell_damage(&self, matrix: &[MatrixCell]) -> Vec<f64> {
        let key = |c: &MatrixCell| (c.range_lo_mpa.to_bits(), c.mean_lo_mpa.to_bits());
        let by_cell: HashMap<(u64, u64), f64> = self
            .cells
            .matrix()
            .iter()
            .map(|c| (key(c), c.cycles))
            .collect();
        matrix
            .iter()
            .map(|c| by_cell.get(&key(c)).copied().unwrap_or(0.0))
            .collect()
    }
}

/// Each cycle into a spectrum and into the tally of every rule.
#[inline(always)]
pub(crate) fn add_cycle(
    spectrum: &mut Spectrum,
    tallies: &mut [DamageTally],
    rules: &[SharedRule],
    c: &Cycle,
) {
    spectrum.add(c);
    for (t, r) in tallies.iter_mut().zip(rules) {
        t.add(&**r, c);
    }
}
