//! Streaming rainflow cycle counting (ASTM E1049-85, §5.4.4; clause
//! numbers here are from memory).
//!
//! Each chunk of a few thousand samples goes through three steps:
//!
//! 1. [`TurningPoints`] reduces the samples to reversals (peaks and valleys),
//!    branch-free, into a small buffer. The first sample and the last
//!    reversal candidate are treated as reversals, as ASTM E1049-85 does for
//!    the ends of a record. An optional hysteresis gate suppresses small
//!    reversals.
//! 2. A few branch-free pruning passes over the buffer close the cycles
//!    that the four-point rule can already see inside it (about two thirds
//!    of the reversals go in the first pass).
//! 3. What is left is pushed onto a residue stack ([`RainflowCounter`]).
//!    The four-point / residue formulation used here extracts exactly the
//!    full cycles of the ASTM three-point procedure, and the ranges between
//!    consecutive residue points are exactly its half cycles (start rule
//!    included). Memory is bounded by the residue, never by the record.
//!
//! Why steps 2 and 3 may be mixed freely: a pair of consecutive reversals
//! `b, c` between `a` and `d` closes when `|a-b| > |b-c| <= |c-d|`. Two such
//! pairs never share a point, and closing one leaves every other closable
//! (the range `a-d` that replaces it is at least `|a-b|` and `|c-d|`), so
//! every order of closing reaches the same residue with the same cycles.
//! The same argument gives [`count_slice_parallel`].
//!
//! A record that repeats many times over the design life is counted with
//! [`ResidueMode::Repeated`]: the residue is closed by counting it once more,
//! from its highest peak round to the same peak, the rule of ASTM E1049-85
//! §5.4.5 for repeating histories, so every cycle comes out as a full cycle.

use serde::{Deserialize, Serialize};
use std::hint::select_unpredictable;

/// One counted cycle (or half cycle).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Cycle {
    /// Stress range, `max - min`.
    pub range: f64,
    /// Mean stress, `(min + max) / 2`.
    pub mean: f64,
    /// Lower reversal.
    pub min: f64,
    /// Upper reversal.
    pub max: f64,
    /// 1.0 for a full cycle, 0.5 for a half cycle.
    pub count: f64,
}

impl Cycle {
    /// The cycle between two reversals `a` and `b`, in signal order.
    #[inline(always)]
    pub fn between(a: f64, b: f64, count: f64) -> Cycle {
        let (min, max) = if a <= b { (a, b) } else { (b, a) };
        Cycle {
            // range of a cycle = |a - b| (ASTM E1049-85 §5.4.4; same arithmetic as rainflow 3.2.0)
            range: (a - b).abs(),
            // mean of a cycle = (a + b) / 2, mean of its two reversals (ASTM E1049-85; same arithmetic as rainflow 3.2.0)
            mean: 0.5 * (a + b),
            min,
            max,
            count,
        }
    }
}

/// How the residue left at the end of a record is counted.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum ResidueMode {
    /// Each range of the residue is counted as a half cycle (plain ASTM E1049-85 §5.4.4).
    HalfCycles,
    /// The record repeats over the design life: the residue is closed by
    /// counting it once more from its highest peak round to the same peak
    /// (ASTM E1049-85 §5.4.5), so the largest cycles come out as full cycles.
    /// The result is the cycles of one repetition, all full cycles.
    Repeated,
}

/// Totals of one count.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CountStats {
    /// Samples pushed.
    pub samples: u64,
    /// Reversals found in the record (its first point and last reversal included).
    pub reversals: u64,
    /// Number of full cycles emitted (closing cycles of the residue included in `Repeated` mode).
    pub full_cycles: u64,
    /// Number of half cycles emitted (always 0 in `Repeated` mode).
    pub half_cycles: u64,
    /// Smallest sample (NaN when no sample was pushed).
    pub min: f64,
    /// Largest sample (NaN when no sample was pushed).
    pub max: f64,
}

impl CountStats {
    /// Cycles counted: full cycles plus half of the half cycles.
    pub fn total_cycles(&self) -> f64 {
        // a half cycle counts 0.5 (ASTM E1049-85 §5.4.4)
        self.full_cycles as f64 + 0.5 * self.half_cycles as f64
    }
}

/// A gate that is negative or not a finite number.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error("hysteresis gate must be a finite number >= 0, got {0}")]
pub struct GateError(pub f64);

fn check_gate(gate: f64) -> Result<f64, GateError> {
    if gate.is_finite() && gate >= 0.0 {
        Ok(gate)
    } else {
        Err(GateError(gate))
    }
}

/// Samples handled per inner chunk of the slice path.
const CHUNK: usize = 1024;

/// Streaming turning-point (reversal) extraction.
///
/// With `gate == 0` the reversals are exactly those of rainflow 3.2.0's
/// `reversals()`: repeated values (plateaus) are merged, the first sample is
/// a reversal, and a point is a reversal where the sign of the first
/// difference changes. The last point is a reversal too, emitted by
/// [`TurningPoints::finish`]. Two deliberate differences, both for records
/// the reference treats oddly: a two-sample record gives both samples as
/// reversals (rainflow 3.2.0 drops the second one), and a constant record
/// gives a single reversal (rainflow 3.2.0 gives its first and last sample,
/// i.e. a half cycle of zero range).
///
/// With `gate > 0` an extreme is confirmed as a reversal only once the
/// signal has moved back from it by more than `gate`. That holds for the
/// first reversal too: it is the lowest (highest) sample seen before the
/// signal first rises (falls) more than `gate` above (below) it, so the
/// first sample is a reversal only if it is that extreme; a record that
/// never moves more than `gate` has no reversal. The last reversal is the
/// last candidate extreme. Every range between consecutive reversals is
/// then larger than `gate`.
///
/// Samples must be finite; NaN gives unspecified reversals.
#[derive(Clone, Debug)]
pub struct TurningPoints {
    gate: f64,
    /// Plain sign-change detection (gate 0) rather than the hysteresis path.
    exact: bool,
    samples: u64,
    emitted: u64,
    /// gate 0: last sample; gate > 0: current candidate extreme.
    prev: f64,
    /// gate 0: last non-zero first difference (0 while the signal has not moved);
    /// gate > 0: +1 rising, -1 falling, 0 while not yet beyond the gate.
    dir: f64,
    min: f64,
    max: f64,
}

impl TurningPoints {
    /// New extractor. Panics if `gate` is negative or not finite; see [`TurningPoints::try_new`].
    pub fn new(gate: f64) -> TurningPoints {
        match TurningPoints::try_new(gate) {
            Ok(t) => t,
            Err(e) => panic!("{e}"),
        }
    }

    /// New extractor, or an error if `gate` is negative or not finite.
    pub fn try_new(gate: f64) -> Result<TurningPoints, GateError> {
        Ok(TurningPoints {
            gate: check_gate(gate)?,
            exact: gate == 0.0,
            samples: 0,
            emitted: 0,
            prev: f64::NAN,
            dir: 0.0,
            min: f64::NAN,
            max: f64::NAN,
        })
    }

    /// The hysteresis gate.
    pub fn gate(&self) -> f64 {
        self.gate
    }

    /// Samples pushed so far.
    pub fn samples(&self) -> u64 {
        self.samples
    }

    /// Reversals emitted so far.
    pub fn reversals(&self) -> u64 {
        self.emitted
    }

    /// Smallest sample so far (NaN before the first sample).
    ///
    /// Every sample lies between reversals already emitted and the current
    /// candidate, except before the first move beyond the gate, where the
    /// samples are tracked one by one; so only those need looking at.
    pub fn min(&self) -> f64 {
        self.min.min(self.prev)
    }

    /// Largest sample so far (NaN before the first sample).
    pub fn max(&self) -> f64 {
        self.max.max(self.prev)
    }

    #[inline(always)]
    fn start(&mut self, x: f64) {
        self.samples = 1;
        self.emitted = self.exact as u64;
        self.prev = x;
        self.dir = 0.0;
        self.min = x;
        self.max = x;
    }

    /// Feed one sample; returns the reversal it confirms, if any (at most one
    /// per sample; with gate 0 the first sample is itself a reversal).
    #[inline]
    pub fn push(&mut self, x: f64) -> Option<f64> {
        if self.samples == 0 {
            self.start(x);
            return self.exact.then_some(x);
        }
        self.samples += 1;
        let r = if self.exact {
            let d = x - self.prev;
            let r = if d * self.dir < 0.0 {
                Some(self.prev)
            } else {
                None
            };
            if d != 0.0 {
                self.dir = d;
            }
            self.prev = x;
            r
        } else if self.dir == 0.0 {
            // Until the first move beyond the gate the extremes are tracked
            // sample by sample; the first reversal is the extreme the signal
            // has just moved away from by more than the gate.
            let r = if x - self.min > self.gate {
                self.dir = 1.0;
                self.prev = x;
                Some(self.min)
            } else if self.max - x > self.gate {
                self.dir = -1.0;
                self.prev = x;
                Some(self.max)
            } else {
                None
            };
            self.min = self.min.min(x);
            self.max = self.max.max(x);
            r
        } else {
            // work in the rising frame: multiply by the direction sign
            let t = self.dir * x;
            let se = self.dir * self.prev;
            if se - t > self.gate {
                let r = self.prev;
                self.dir = -self.dir;
                self.prev = x;
                Some(r)
            } else {
                if t > se {
                    self.prev = x;
                }
                None
            }
        };
        if let Some(v) = r {
            self.emitted += 1;
            self.min = self.min.min(v);
            self.max = self.max.max(v);
        }
        r
    }

    /// End of the record: the last reversal (the last distinct sample for
    /// gate 0, the last candidate extreme for gate > 0), or `None` if the
    /// signal never moved (beyond the gate). Further calls return `None`;
    /// pushing samples after `finish` is not meaningful.
    pub fn finish(&mut self) -> Option<f64> {
        if self.samples > 0 && self.dir != 0.0 {
            self.dir = 0.0;
            self.emitted += 1;
            Some(self.prev)
        } else {
            None
        }
    }

    /// Fast path: append the reversals confirmed by `xs` to `out`.
    pub fn extract(&mut self, xs: &[f64], out: &mut Vec<f64>) {
        let mut buf = [0.0f64; CHUNK];
        let mut flags = [0u8; CHUNK];
        for chunk in xs.chunks(CHUNK) {
            let n = self.extract_chunk::<true>(chunk, &mut buf, &mut flags);
            out.extend_from_slice(&buf[..n]);
        }
    }

    /// Reversals of one chunk (`xs.len() <= CHUNK`) into `out`; returns how
    /// many. With `TRACK` false the extremes of the reversals found are left
    /// to the caller (the residue stack always keeps the record's extremes).
    #[inline(always)]
    fn extract_chunk<const TRACK: bool>(
        &mut self,
        xs: &[f64],
        out: &mut [f64; CHUNK],
        flags: &mut [u8; CHUNK],
    ) -> usize {
        debug_assert!(xs.len() <= CHUNK);
        let xs = &xs[..xs.len().min(CHUNK)];
        let mut n = 0usize;
        let mut i = 0usize;
        if self.samples == 0 {
            let Some(&x0) = xs.first() else {
                return 0;
            };
            self.start(x0);
            out[0] = x0;
            n = self.exact as usize;
            i = 1;
        }
        if !self.exact {
            // until the direction is known, go sample by sample
            while self.dir == 0.0 && i < xs.len() {
                if let Some(r) = self.push(xs[i]) {
                    out[n & (CHUNK - 1)] = r;
                    n += 1;
                }
                i += 1;
            }
        }
        let rest = &xs[i..];
        if rest.is_empty() {
            return n;
        }
        let start = n;
        if self.exact && rest.len() >= 2 && flag_reversals(self.prev, self.dir, rest, flags) {
            // no repeated value: the flags are final, compact the flagged points
            const MASK: usize = CHUNK - 1;
            out[n & MASK] = self.prev;
            n += flags[0] as usize;
            for (&x, &f) in rest.iter().zip(&flags[1..rest.len()]) {
                // n <= index within xs < CHUNK, so the mask never wraps
                out[n & MASK] = x;
                n += f as usize;
            }
            let k = rest.len();
            self.prev = rest[k - 1];
            self.dir = rest[k - 1] - rest[k - 2];
        } else if self.exact {
            let mut prev = self.prev;
            let mut dir = self.dir;
            for &x in rest {
                // first difference; a reversal is a change of its sign (rainflow 3.2.0 reversals())
                let d = x - prev;
                // n <= index of x within xs < CHUNK, so the mask never wraps
                out[n & (CHUNK - 1)] = prev;
                n += (d * dir < 0.0) as usize;
                dir = if d != 0.0 { d } else { dir };
                prev = x;
            }
            self.prev = prev;
            self.dir = dir;
        } else {
            let gate = self.gate;
            let mut s = self.dir;
            let mut se = s * self.prev;
            for &x in rest {
                // hysteresis gate in the rising frame: confirm when the signal falls back more than the gate
                let t = s * x;
                let rev = se - t > gate;
                out[n & (CHUNK - 1)] = s * se;
                n += rev as usize;
                let hi = if t > se { t } else { se };
                se = select_unpredictable(rev, -t, hi);
                s = select_unpredictable(rev, -s, s);
            }
            self.dir = s;
            self.prev = s * se;
        }
        if TRACK {
            let (mn, mx) = min_max(&out[start..n], self.min, self.max);
            self.min = mn;
            self.max = mx;
        }
        self.samples += rest.len() as u64;
        self.emitted += (n - start) as u64;
        n
    }
}

/// Gate-0 reversal flags of `xs` (following `prev`, last non-zero first
/// difference `dir`): `flags[k]` is 1 when the point before `xs[k]` is a
/// reversal. Branch-free and vectorisable; returns false, leaving the flags
/// unusable, if two consecutive values are equal (a plateau needs the
/// sample-by-sample path).
#[inline(always)]
fn flag_reversals(prev: f64, dir: f64, xs: &[f64], flags: &mut [u8; CHUNK]) -> bool {
    let k = xs.len().min(CHUNK);
    let xs = &xs[..k];
    if k < 2 {
        return false;
    }
    let d0 = xs[0] - prev;
    // a reversal is a sign change of the first difference (rainflow 3.2.0 reversals())
    flags[0] = (d0 * dir < 0.0) as u8;
    flags[1] = ((xs[1] - xs[0]) * d0 < 0.0) as u8;
    let mut plateau = (d0 == 0.0) as u8 | (xs[1] == xs[0]) as u8;
    for (((f, &a), &b), &c) in flags[2..k]
        .iter_mut()
        .zip(&xs[..k - 2])
        .zip(&xs[1..k - 1])
        .zip(&xs[2..])
    {
        let (d1, d2) = (b - a, c - b);
        *f = (d1 * d2 < 0.0) as u8;
        plateau |= (c == b) as u8;
    }
    plateau == 0
}

/// Extremes of `xs` together with `mn` and `mx`, four lanes at a time.
#[inline(always)]
fn min_max(xs: &[f64], mn: f64, mx: f64) -> (f64, f64) {
    let mut lo = [mn; 4];
    let mut hi = [mx; 4];
    let mut it = xs.chunks_exact(4);
    for q in &mut it {
        for k in 0..4 {
            lo[k] = if q[k] < lo[k] { q[k] } else { lo[k] };
            hi[k] = if q[k] > hi[k] { q[k] } else { hi[k] };
        }
    }
    for &x in it.remainder() {
        lo[0] = lo[0].min(x);
        hi[0] = hi[0].max(x);
    }
    (
        lo[0].min(lo[1]).min(lo[2].min(lo[3])),
        hi[0].max(hi[1]).max(hi[2].max(hi[3])),
    )
}

/// One branch-free pruning pass over consecutive reversals `src`.
///
/// Removes every pair `src[j], src[j+1]` (both neighbours inside `src`)
/// whose range is smaller than the range before it and not larger than the
/// range after it: exactly the pairs the residue stack would close as full
/// cycles. Such pairs never overlap, and removing one keeps every other one
/// removable (the range spanning a removed pair is at least both ranges it
/// replaces), so pruning first and stacking afterwards closes the same
/// cycles as stacking alone. The kept points go to `dst`, the closed pairs
/// to `ca`/`cb`; returns (kept, closed).
#[inline(always)]
fn prune(
    src: &[f64],
    dst: &mut [f64; CHUNK],
    ca: &mut [f64; CHUNK],
    cb: &mut [f64; CHUNK],
) -> (usize, usize) {
    let n = src.len().min(CHUNK);
    let src = &src[..n];
    if n < 4 {
        dst[..n].copy_from_slice(src);
        return (n, 0);
    }
    const MASK: usize = CHUNK - 1;
    dst[0] = src[0];
    let mut kept = 1usize;
    let mut nc = 0usize;
    let mut m_prev = false;
    let mut r0 = (src[1] - src[0]).abs();
    let mut r1 = (src[2] - src[1]).abs();
    for w in src[1..].windows(3) {
        let (b, c, d) = (w[0], w[1], w[2]);
        let r2 = (d - c).abs();
        // four-point rule of push_reversal on (a, b, c, d): |a-b| > |b-c| <= |c-d|
        let m = (r0 > r1) & (r1 <= r2);
        // nc, kept <= index of b < CHUNK, so the masks never wrap
        ca[nc & MASK] = b;
        cb[nc & MASK] = c;
        nc += m as usize;
        dst[kept & MASK] = b;
        kept += !(m_prev | m) as usize;
        m_prev = m;
        r0 = r1;
        r1 = r2;
    }
    dst[kept & MASK] = src[n - 2];
    kept += !m_prev as usize;
    dst[kept & MASK] = src[n - 1];
    kept += 1;
    (kept, nc)
}

/// Push one reversal onto the residue stack, emitting the full cycles it closes.
///
/// With the last three stack points `a, b, c` and the new reversal `d`, the
/// range `b-c` is a full cycle when `|d - c| >= |c - b|` (ASTM E1049-85
/// §5.4.4, X >= Y) and `|b - a| > |c - b|` (the stack is then exactly the
/// ASTM working list preceded by the points its start rule discarded, so the
/// cycles match the three-point procedure).
#[inline(always)]
fn push_reversal<F: FnMut(Cycle)>(stack: &mut Vec<f64>, full: &mut u64, d: f64, sink: &mut F) {
    let mut n = stack.len();
    while n >= 3 {
        let c = stack[n - 1];
        let b = stack[n - 2];
        let y = (c - b).abs();
        // ASTM E1049-85 §5.4.4: read the next point while X < Y
        if (d - c).abs() < y {
            break;
        }
        // residue form of the start rule: Y must not be preceded by a smaller-or-equal range
        if (b - stack[n - 3]).abs() <= y {
            break;
        }
        sink(Cycle::between(b, c, 1.0));
        *full += 1;
        n -= 2;
        stack.truncate(n);
    }
    stack.push(d);
}

/// Streaming rainflow counter. Memory is the residue stack only.
#[derive(Clone, Debug)]
pub struct RainflowCounter {
    tp: TurningPoints,
    stack: Vec<f64>,
    full: u64,
    /// Buffers of the slice path, made on the first long slice (a short record, such
    /// as one passage of an influence line, never needs them).
    scratch: Option<Box<Scratch>>,
}

/// Buffers of the slice path.
#[derive(Clone, Debug)]
struct Scratch {
    flags: [u8; CHUNK],
    rev: [f64; CHUNK],
    tmp: [f64; CHUNK],
    ca: [f64; CHUNK],
    cb: [f64; CHUNK],
}

/// Slices shorter than this go sample by sample, without the slice path's buffers.
const SHORT_SLICE: usize = 256;

/// Pruning passes per chunk before the reversals go to the stack.
const PRUNE_PASSES: usize = 5;

impl RainflowCounter {
    /// New counter. Panics if `gate` is negative or not finite; see [`RainflowCounter::try_new`].
    pub fn new(gate: f64) -> RainflowCounter {
        match RainflowCounter::try_new(gate) {
            Ok(c) => c,
            Err(e) => panic!("{e}"),
        }
    }

    /// New counter, or an error if `gate` is negative or not finite.
    pub fn try_new(gate: f64) -> Result<RainflowCounter, GateError> {
        Ok(RainflowCounter {
            tp: TurningPoints::try_new(gate)?,
            stack: Vec::with_capacity(256),
            full: 0,
            scratch: None,
        })
    }

    /// The hysteresis gate.
    pub fn gate(&self) -> f64 {
        self.tp.gate()
    }

    /// A gate-0 counter in the state the detector has after `before` (whose
    /// reversals are counted elsewhere): the last sample, counted once more
    /// in `samples`, and the last non-zero first difference.
    fn resumed(before: &[f64]) -> RainflowCounter {
        let mut c = RainflowCounter::new(0.0);
        if let Some(&last) = before.last() {
            let dir = before
                .windows(2)
                .rev()
                .map(|w| w[1] - w[0])
                .find(|&d| d != 0.0)
                .unwrap_or(0.0);
            c.tp.samples = 1;
            c.tp.emitted = 0;
            c.tp.prev = last;
            c.tp.dir = dir;
            c.tp.min = last;
            c.tp.max = last;
        }
        c
    }

    /// A gate-0 counter for a part of a record whose earlier samples are not known
    /// yet (a block of a file parsed on another thread): `first` is the part's first
    /// sample, held as the detector's last sample with no direction, so that the
    /// part's reversals after `first` come out exactly; whether `first` itself is a
    /// reversal is settled by [`RainflowCounter::append_part`].
    pub fn part_from(first: f64) -> RainflowCounter {
        let mut c = RainflowCounter::new(0.0);
        c.tp.samples = 1;
        c.tp.emitted = 0;
        c.tp.prev = first;
        c.tp.dir = 0.0;
        c.tp.min = first;
        c.tp.max = first;
        c
    }

    /// Append the count of the part that follows this (gate-0) record: `part` was
    /// made by [`RainflowCounter::part_from`]`(first)` and fed the part's samples after
    /// `first`; `first_move` is the part's first non-zero first difference (0 when
    /// the part is constant). The state and residue are then those of one counter fed
    /// both parts, and the cycles spanning them go to `sink`; the cycles inside the
    /// part were already counted (closing a pair never prevents another, see the
    /// module notes).
    pub fn append_part<F: FnMut(Cycle)>(
        &mut self,
        part: RainflowCounter,
        first: f64,
        first_move: f64,
        sink: &mut F,
    ) {
        debug_assert!(self.tp.exact && part.tp.exact);
        // `first` through this detector: it confirms the last sample before it as a
        // reversal when the signal turns there (a fresh counter takes it as its first)
        let fresh = self.tp.samples == 0;
        if let Some(r) = self.tp.push(first) {
            push_reversal(&mut self.stack, &mut self.full, r, sink);
        }
        // `first` is a reversal when the move into it and the move out of it differ
        // in sign (rainflow 3.2.0 reversals(): a sign change of the first difference)
        if !fresh && self.tp.dir * first_move < 0.0 {
            push_reversal(&mut self.stack, &mut self.full, first, sink);
            self.tp.emitted += 1;
        }
        for &r in &part.stack {
            push_reversal(&mut self.stack, &mut self.full, r, sink);
        }
        self.full += part.full;
        let tp = &mut self.tp;
        tp.min = tp.min().min(part.tp.min());
        tp.max = tp.max().max(part.tp.max());
        // the part counted `first`, already counted above, as its first sample
        tp.samples += part.tp.samples - 1;
        tp.emitted += part.tp.emitted;
        tp.prev = part.tp.prev;
        if part.tp.dir != 0.0 {
            tp.dir = part.tp.dir;
        }
    }

    /// The residue so far: the reversals not yet closed into full cycles.
    pub fn residue(&self) -> &[f64] {
        &self.stack
    }

    /// Feed one sample.
    #[inline]
    pub fn push<F: FnMut(Cycle)>(&mut self, x: f64, sink: &mut F) {
        if let Some(r) = self.tp.push(x) {
            push_reversal(&mut self.stack, &mut self.full, r, sink);
        }
    }

    /// Feed many samples (fast path).
    pub fn push_slice<F: FnMut(Cycle)>(&mut self, xs: &[f64], sink: &mut F) {
        if xs.len() < SHORT_SLICE && self.scratch.is_none() {
            // a few samples: one at a time, the same reversals and cycles
            for &x in xs {
                self.push(x, sink);
            }
            return;
        }
        let Scratch {
            flags,
            rev,
            tmp,
            ca,
            cb,
        } = &mut **self.scratch.get_or_insert_with(|| {
            Box::new(Scratch {
                flags: [0; CHUNK],
                rev: [0.0; CHUNK],
                tmp: [0.0; CHUNK],
                ca: [0.0; CHUNK],
                cb: [0.0; CHUNK],
            })
        });
        for chunk in xs.chunks(CHUNK) {
            let mut len = self.tp.extract_chunk::<false>(chunk, rev, flags);
            let (mut src, mut dst) = (&mut *rev, &mut *tmp);
            for _ in 0..PRUNE_PASSES {
                if len < 16 {
                    break;
                }
                let (kept, closed) = prune(&src[..len], dst, ca, cb);
                for (&a, &b) in ca[..closed].iter().zip(&cb[..closed]) {
                    sink(Cycle::between(a, b, 1.0));
                }
                self.full += closed as u64;
                len = kept;
                std::mem::swap(&mut src, &mut dst);
            }
            for &r in &src[..len] {
                push_reversal(&mut self.stack, &mut self.full, r, sink);
            }
        }
    }

    /// End of the record: count the residue as `mode` says.
    pub fn finish<F: FnMut(Cycle)>(mut self, mode: ResidueMode, sink: &mut F) -> CountStats {
        if let Some(r) = self.tp.finish() {
            push_reversal(&mut self.stack, &mut self.full, r, sink);
        }
        // Closing a pair b, c needs a < c < b <= d (b a peak) or the mirror
        // image, so the record's largest and smallest reversals are never
        // all closed: the residue holds the extremes the slice path left out.
        let (min, max) = min_max(&self.stack, self.tp.min(), self.tp.max());
        let mut half = 0u64;
        match mode {
            ResidueMode::HalfCycles => {
                for w in self.stack.windows(2) {
                    sink(Cycle::between(w[0], w[1], 0.5));
                    half += 1;
                }
            }
            ResidueMode::Repeated => {
                self.full += close_residue(&self.stack, self.tp.gate(), sink);
            }
        }
        CountStats {
            samples: self.tp.samples(),
            reversals: self.tp.reversals(),
            full_cycles: self.full,
            half_cycles: half,
            min,
            max,
        }
    }
}

/// A counter between two samples, as a spectrum part saves it: the detector's state
/// and the residue. [`RainflowCounter::from_state`] gives back a counter that goes on
/// exactly as the saved one would.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CounterState {
    /// Hysteresis gate, MPa.
    pub gate_mpa: f64,
    /// Samples pushed.
    pub samples: u64,
    /// Reversals emitted so far.
    pub reversals: u64,
    /// Full cycles closed so far.
    pub full_cycles: u64,
    /// Gate 0: the last sample; gate > 0: the current candidate extreme, MPa.
    pub last_mpa: f64,
    /// Gate 0: the last non-zero first difference, MPa (0 while the signal has not
    /// moved); gate > 0: +1 rising, -1 falling, 0 while not yet beyond the gate.
    pub direction: f64,
    /// Smallest sample or reversal tracked by the detector, MPa.
    pub min_mpa: f64,
    /// Largest sample or reversal tracked by the detector, MPa.
    pub max_mpa: f64,
    /// The reversals not yet closed into full cycles, in signal order, MPa.
    pub residue_mpa: Vec<f64>,
}

impl RainflowCounter {
    /// The counter's state, to be saved.
    pub fn state(&self) -> CounterState {
        CounterState {
            gate_mpa: self.tp.gate,
            samples: self.tp.samples,
            reversals: self.tp.emitted,
            full_cycles: self.full,
            last_mpa: self.tp.prev,
            direction: self.tp.dir,
            min_mpa: self.tp.min,
            max_mpa: self.tp.max,
            residue_mpa: self.stack.clone(),
        }
    }

    /// A counter in a saved state. The caller checks the values (finite, within the
    /// stress limit); only the gate is checked here.
    pub fn from_state(s: &CounterState) -> Result<RainflowCounter, GateError> {
        let mut c = RainflowCounter::try_new(s.gate_mpa)?;
        c.tp.samples = s.samples;
        c.tp.emitted = s.reversals;
        c.full = s.full_cycles;
        c.tp.prev = s.last_mpa;
        c.tp.dir = s.direction;
        c.tp.min = s.min_mpa;
        c.tp.max = s.max_mpa;
        c.stack = s.residue_mpa.clone();
        Ok(c)
    }
}

/// Where `residue` is not a residue the counter can leave: the 1-based position of a
/// point that does not alternate with its neighbours, or of the first point of a pair
/// that the four-point rule would have closed (ASTM E1049-85 §5.4.4, as
/// `push_reversal`); `None` for a valid residue.
pub fn residue_fault(residue: &[f64]) -> Option<usize> {
    if let Some(i) = residue.windows(2).position(|w| w[0] == w[1]) {
        return Some(i + 2);
    }
    for (i, w) in residue.windows(3).enumerate() {
        // a residue alternates: each inner point is a peak or a valley
        if (w[1] - w[0]) * (w[2] - w[1]) >= 0.0 {
            return Some(i + 2);
        }
    }
    for (i, w) in residue.windows(4).enumerate() {
        let y = (w[2] - w[1]).abs();
        if (w[3] - w[2]).abs() >= y && (w[1] - w[0]).abs() > y {
            return Some(i + 2);
        }
    }
    None
}

/// Close the residue of a record that repeats: all its cycles as full cycles.
/// Returns the number of cycles emitted.
fn close_residue<F: FnMut(Cycle)>(residue: &[f64], gate: f64, sink: &mut F) -> u64 {
    let mut r = residue.to_vec();
    // The residue alternates peak/valley inside; only the junction of its
    // last point with its first may not be a reversal of the repeated record.
    loop {
        let n = r.len();
        if n < 2 {
            return 0;
        }
        if r[n - 1] == r[0] {
            // plateau across the junction
            r.pop();
            continue;
        }
        if n >= 3 {
            // a point whose neighbours lie on either side of it is no reversal
            let (a, b, c) = (r[n - 2], r[n - 1], r[0]);
            if (b > a) == (c > b) {
                r.pop();
                continue;
            }
            let (a, b, c) = (r[n - 1], r[0], r[1]);
            if (b > a) == (c > b) {
                r.remove(0);
                continue;
            }
        }
        if gate > 0.0 && n >= 4 && (r[n - 1] - r[0]).abs() <= gate {
            // The move across the junction is within the gate: in the
            // repeated record these two points are no reversals. Both
            // ranges next to the pair exceed the gate, so the pair would
            // close as a cycle <= gate; drop it as the gate would.
            r.pop();
            r.remove(0);
            continue;
        }
        break;
    }
    // Count the closed record from its highest peak round to the same peak (ASTM E1049-85 §5.4.5).
    let n = r.len();
    let mut m = 0;
    for (i, &v) in r.iter().enumerate() {
        if v > r[m] {
            m = i;
        }
    }
    let mut stack = Vec::with_capacity(n + 1);
    let mut full = 0u64;
    for k in 0..=n {
        push_reversal(&mut stack, &mut full, r[(m + k) % n], sink);
    }
    // What is left is [M, a1, M, a2, ..., M]: each pair of equal half cycles is one full cycle.
    for pair in stack.windows(2).step_by(2) {
        debug_assert!(pair[0] == r[m]);
        sink(Cycle::between(pair[0], pair[1], 1.0));
        full += 1;
    }
    full
}

/// Count a whole record held in memory.
pub fn count_slice<F: FnMut(Cycle)>(
    samples: &[f64],
    gate: f64,
    mode: ResidueMode,
    sink: &mut F,
) -> CountStats {
    let mut c = RainflowCounter::new(gate);
    c.push_slice(samples, sink);
    c.finish(mode, sink)
}

/// Collect the cycles of a record held in memory (convenience over [`count_slice`]).
pub fn cycles(samples: &[f64], gate: f64, mode: ResidueMode) -> (Vec<Cycle>, CountStats) {
    let mut v = Vec::new();
    let stats = count_slice(samples, gate, mode, &mut |c| v.push(c));
    (v, stats)
}

/// Records shorter than this many samples per thread are counted serially.
pub const PARALLEL_MIN_PART: usize = 4096;

/// Count a record held in memory on up to `threads` threads.
///
/// The record is cut into contiguous parts. Each thread finds the reversals
/// of its part (starting from the state the sample-by-sample detector would
/// have there: the previous sample and the last non-zero first difference
/// before the part), closes the full cycles inside it and keeps its residue.
/// The residues are then pushed, in order, onto the first part's residue,
/// which closes the cycles spanning parts, and the end of the record is
/// counted as `mode` says. Closing a full cycle never prevents closing
/// another, so the cycles are exactly those of [`count_slice`] (in another
/// order).
///
/// Each thread folds its cycles into its own accumulator made by `init`;
/// the cycles closed while merging go to the first one. Returns the totals
/// and the accumulators, one per part. With a gate (whose state depends on
/// the whole past), one thread, or a short record, the count is serial and
/// there is one accumulator.
pub fn count_slice_parallel<A, I, F>(
    samples: &[f64],
    gate: f64,
    mode: ResidueMode,
    threads: usize,
    init: I,
    fold: F,
) -> (CountStats, Vec<A>)
where
    A: Send,
    I: Fn() -> A + Sync,
    F: Fn(&mut A, Cycle) + Sync,
{
    let n = samples.len();
    let threads = threads.max(1).min(n / PARALLEL_MIN_PART).max(1);
    if gate != 0.0 || threads == 1 {
        let mut acc = init();
        let stats = count_slice(samples, gate, mode, &mut |c| fold(&mut acc, c));
        return (stats, vec![acc]);
    }
    let bounds: Vec<usize> = (0..=threads).map(|t| t * n / threads).collect();
    let (init, fold) = (&init, &fold);
    let parts: Vec<(RainflowCounter, A)> = std::thread::scope(|scope| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                let part = &samples[bounds[t]..bounds[t + 1]];
                let before = &samples[..bounds[t]];
                scope.spawn(move || {
                    let mut acc = init();
                    let mut c = RainflowCounter::resumed(before);
                    c.push_slice(part, &mut |cy| fold(&mut acc, cy));
                    (c, acc)
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().unwrap_or_else(|e| std::panic::resume_unwind(e)))
            .collect()
    });
    let mut parts = parts.into_iter();
    let (mut head, acc0) = parts.next().expect("at least one part");
    let mut accs = vec![acc0];
    for (part, acc) in parts {
        let acc0 = &mut accs[0];
        let mut sink = |cy| fold(acc0, cy);
        for &r in &part.stack {
            push_reversal(&mut head.stack, &mut head.full, r, &mut sink);
        }
        head.full += part.full;
        let tp = &mut head.tp;
        tp.min = tp.min().min(part.tp.min());
        tp.max = tp.max().max(part.tp.max());
        // a resumed part counts the sample before it once too many
        tp.samples += part.tp.samples - 1;
        tp.emitted += part.tp.emitted;
        tp.prev = part.tp.prev;
        tp.dir = part.tp.dir;
        accs.push(acc);
    }
    let acc0 = &mut accs[0];
    let stats = head.finish(mode, &mut |cy| fold(acc0, cy));
    (stats, accs)
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    fn slice_reversals(xs: &[f64], gate: f64) -> Vec<f64> {
        let mut tp = TurningPoints::new(gate);
        let mut v = Vec::new();
        tp.extract(xs, &mut v);
        v.extend(tp.finish());
        v
    }

    fn pushed_reversals(xs: &[f64], gate: f64) -> Vec<f64> {
        let mut tp = TurningPoints::new(gate);
        let mut v: Vec<f64> = xs.iter().filter_map(|&x| tp.push(x)).collect();
        v.extend(tp.finish());
        v
    }

    pub(crate) fn lcg_signal(n: usize, seed: u64, levels: u64) -> Vec<f64> {
        // small integer levels give many plateaus and ties
        let mut s = seed;
        (0..n)
            .map(|_| {
                s = s
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                ((s >> 33) % levels) as f64
            })
            .collect()
    }

    #[test]
    fn slice_and_sample_paths_agree() {
        for seed in 0..20u64 {
            let xs = lcg_signal(5000, seed, 7);
            for gate in [0.0, 0.5, 1.0, 2.5] {
                assert_eq!(slice_reversals(&xs, gate), pushed_reversals(&xs, gate));
            }
        }
    }

    #[test]
    fn gate_path_at_zero_matches_exact_path() {
        // the hysteresis path driven with a zero gate must give the plateau-merging reversals
        for seed in 0..20u64 {
            let xs = lcg_signal(3000, seed, 5);
            let exact = slice_reversals(&xs, 0.0);
            for by_sample in [false, true] {
                let mut tp = TurningPoints::new(0.0);
                tp.exact = false;
                let mut v = Vec::new();
                if by_sample {
                    v.extend(xs.iter().filter_map(|&x| tp.push(x)));
                } else {
                    tp.extract(&xs, &mut v);
                }
                v.extend(tp.finish());
                assert_eq!(exact, v, "seed {seed}");
            }
        }
    }

    #[test]
    fn two_samples_give_one_half_cycle() {
        // both end points are reversals (ASTM E1049-85 treatment of record ends, from memory)
        let (c, s) = cycles(&[0.0, 10.0], 0.0, ResidueMode::HalfCycles);
        assert_eq!(s.reversals, 2);
        assert_eq!(c, vec![Cycle::between(0.0, 10.0, 0.5)]);
    }

    #[test]
    fn constant_gives_nothing() {
        // a constant record has no range to count (common practice)
        let (c, s) = cycles(&[3.0; 10], 0.0, ResidueMode::Repeated);
        assert!(c.is_empty());
        assert_eq!(s.reversals, 1);
        assert_eq!((s.min, s.max), (3.0, 3.0));
    }

    #[test]
    fn bad_gate_is_an_error() {
        // the gate is a finite number >= 0 (definition of the gate)
        assert!(RainflowCounter::try_new(-1.0).is_err());
        assert!(RainflowCounter::try_new(f64::NAN).is_err());
        assert!(TurningPoints::try_new(f64::INFINITY).is_err());
        assert_eq!(RainflowCounter::try_new(2.0).unwrap().gate(), 2.0);
    }
}
