//! Property tests of the rainflow counter and the binning.
//!
//! What these properties check, precisely:
//! - The cycles equal, exactly, those of the ASTM E1049-85 §5.4.4 rainflow
//!   procedure applied step by step to the record's peaks and valleys (the
//!   oracle below, written from the standard's rules, itself checked on the
//!   standard's example), with seamlife's treatment of the record ends: a
//!   two-sample record gives one half cycle and a constant record no cycle
//!   (PyPI rainflow 3.2.0 gives none and one zero-range half cycle; its golden
//!   counts are compared in tests/rainflow_reference.rs).
//! - HalfCycles mode, gate 0: 2 × full + half = reversals − 1.
//! - Scaling by k > 0 scales ranges and means by k; adding a constant c adds
//!   c to the means only. Exact for integer-valued signals with k a power of
//!   two and c an integer; within rounding (1e-9 relative) for real-valued
//!   signals and any k or c.
//! - Repeated mode gives the same cycles whichever sample the periodic
//!   record starts at, and equals the steady-state cycles of one repetition:
//!   the cycles of three back-to-back copies minus those of two (half
//!   cycles weighing 0.5).
//! - Gate g > 0: every cycle counted has a range > g (both modes); in
//!   Repeated mode the cycles are exactly the ungated ones with range > g.
//!   (In HalfCycles mode nothing more is claimed: an excursion within g of
//!   the start is no reversal, so the end half cycles may differ.)
//! - Any split of the record into slices, and the parallel count by parts,
//!   give the cycles and totals of the whole record counted at once; the
//!   extremes reported are those of the samples.
//! - Binning conserves the cycles: histogram total = matrix total = cycles
//!   counted, and each cell's largest range and weighted mean lie in it;
//!   spectra of the parts of a parallel count, merged, equal the spectrum
//!   of the serial count.

mod common;

use common::{astm_example_cycles, key_sorted, same_within, sort_keys, sorted, ASTM_EXAMPLE};
use proptest::prelude::*;
use seamlife::rainflow::{
    count_slice, count_slice_parallel, cycles, Cycle, RainflowCounter, ResidueMode,
};
use seamlife::spectrum::{BinRule, Spectrum, SpectrumSpec};
use std::collections::BTreeMap;

// ---- the ASTM E1049-85 rainflow procedure, written from the standard's rules ----

/// The peaks and valleys of a record (ASTM E1049-85 §5.4.4 counts them, from
/// memory): runs of equal samples count once, a sample where the direction of the
/// record changes is a peak or valley, and the first and last samples count as
/// reversals too. seamlife's treatment of the record ends, which this follows: a
/// two-sample record gives both samples (one half cycle), and a constant record its
/// first sample only (no cycle). (PyPI rainflow 3.2.0 differs in both; see
/// tests/rainflow_reference.rs.)
fn peaks_and_valleys(xs: &[f64]) -> Vec<f64> {
    let mut kept: Vec<f64> = Vec::new();
    for &x in xs {
        match kept.len() {
            0 => kept.push(x),
            _ if x == kept[kept.len() - 1] => {} // a plateau: the same point
            1 => kept.push(x),
            n => {
                let rising_before = kept[n - 1] > kept[n - 2];
                let rising_now = x > kept[n - 1];
                if rising_before == rising_now {
                    // same direction: the last kept point was no turn; the run goes on
                    kept[n - 1] = x;
                } else {
                    kept.push(x);
                }
            }
        }
    }
    kept
}

/// (count, range, mean) of one counted range from reversal `a` to reversal `b`:
/// range |a − b|, mean (a + b)/2 (ASTM E1049-85 definitions, from memory).
fn counted(a: f64, b: f64, count: f64) -> (f64, f64, f64) {
    (count, (a - b).abs(), 0.5 * (a + b))
}

/// ASTM E1049-85 §5.4.4 rainflow counting (from memory), its steps in order. X is
/// the range of the two latest points not yet discarded, Y the range just before it,
/// S the starting point of the history.
///   1. Read the next peak or valley; when there are no more, go to step 6.
///   2. With fewer than three points, go to step 1; else form X and Y from the
///      three latest points.
///   3. If X < Y, go to step 1; if X >= Y, go to step 4.
///   4. If Y contains S, go to step 5; else count Y as one cycle, discard both its
///      points and go to step 2.
///   5. Count Y as one half cycle, discard its first point, move S to its second
///      point, and go to step 2.
///   6. Count each range not yet counted as one half cycle.
fn astm_rainflow(reversals: &[f64]) -> Vec<(f64, f64, f64)> {
    let mut cycles = Vec::new();
    // points read and not discarded, oldest first; S is always the oldest one
    let mut points: Vec<f64> = Vec::new();
    for &p in reversals {
        points.push(p); // step 1
        loop {
            let n = points.len();
            if n < 3 {
                break; // step 2
            }
            let (y_from, y_to, x_to) = (points[n - 3], points[n - 2], points[n - 1]);
            if (x_to - y_to).abs() < (y_to - y_from).abs() {
                break; // step 3: X < Y
            }
            if n == 3 {
                // step 5: Y starts at S
                cycles.push(counted(y_from, y_to, 0.5));
                points.remove(0);
            } else {
                // step 4
                cycles.push(counted(y_from, y_to, 1.0));
                points.drain(n - 3..n - 1);
            }
        }
    }
    // step 6
    for pair in points.windows(2) {
        cycles.push(counted(pair[0], pair[1], 0.5));
    }
    sort_keys(&mut cycles);
    cycles
}

#[test]
fn the_procedure_reproduces_the_astm_example() {
    // ASTM E1049-85 rainflow example (Fig. 6 and its table, from memory): reversals
    // -2 1 -3 5 -1 3 -4 4 -2 give half cycles of range 3, 4, 6, 8, 8, 9 and one full
    // cycle of range 4 (mean 1, from -1 to 3)
    assert_eq!(peaks_and_valleys(&ASTM_EXAMPLE), ASTM_EXAMPLE.to_vec());
    assert_eq!(astm_rainflow(&ASTM_EXAMPLE), astm_example_cycles());
    // peaks and valleys of a record with plateaus and runs: 0 0 2 3 3 1 -1 -1 4 4
    // turns at 3 and -1; both ends count (ASTM E1049-85 §5.4.4, from memory)
    assert_eq!(
        peaks_and_valleys(&[0.0, 0.0, 2.0, 3.0, 3.0, 1.0, -1.0, -1.0, 4.0, 4.0]),
        vec![0.0, 3.0, -1.0, 4.0]
    );
    // seamlife's record ends: two samples give one half cycle, a constant record none
    assert_eq!(
        astm_rainflow(&peaks_and_valleys(&[1.5, -2.25])),
        vec![(0.5, 3.75, -0.375)]
    );
    assert_eq!(peaks_and_valleys(&[7.0; 5]), vec![7.0]);
    assert!(astm_rainflow(&peaks_and_valleys(&[7.0; 5])).is_empty());
}

/// Cases per property: 400, or PROPTEST_CASES for a deeper run.
fn cases() -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(400)
}

// ---- signals ----

fn levels() -> impl Strategy<Value = Vec<f64>> {
    // few levels: plateaus, repeated values and tied ranges
    prop::collection::vec(-6i32..=6, 0..120).prop_map(|v| v.into_iter().map(f64::from).collect())
}

fn walk() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(-3i32..=3, 0..200).prop_map(|v| {
        let mut x = 0.0;
        v.into_iter()
            .map(|d| {
                x += f64::from(d);
                x
            })
            .collect()
    })
}

fn real() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(-1000.0f64..1000.0, 0..200)
}

fn integer_signal() -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![levels(), walk()]
}

fn signal() -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![levels(), walk(), real()]
}

fn count(xs: &[f64], gate: f64, mode: ResidueMode) -> Vec<(f64, f64, f64)> {
    key_sorted(&cycles(xs, gate, mode).0)
}

/// Cycles per (range, mean), keyed by their bits, half cycles weighing 0.5.
fn weighted(v: &[(f64, f64, f64)]) -> BTreeMap<(u64, u64), f64> {
    let mut m = BTreeMap::new();
    for &(n, r, mean) in v {
        *m.entry((r.to_bits(), mean.to_bits())).or_insert(0.0) += n;
    }
    m
}

/// a − b, dropping empty entries.
fn minus(
    a: &BTreeMap<(u64, u64), f64>,
    b: &BTreeMap<(u64, u64), f64>,
) -> BTreeMap<(u64, u64), f64> {
    let mut d = a.clone();
    for (k, v) in b {
        *d.entry(*k).or_insert(0.0) -= v;
    }
    d.retain(|_, v| *v != 0.0);
    d
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases()))]

    #[test]
    fn agrees_with_the_astm_procedure(xs in signal()) {
        let expected = astm_rainflow(&peaks_and_valleys(&xs));
        prop_assert_eq!(count(&xs, 0.0, ResidueMode::HalfCycles), expected.clone());
        // the per-sample path too
        let mut by_sample = Vec::new();
        let mut c = RainflowCounter::new(0.0);
        for &x in &xs {
            c.push(x, &mut |cy| by_sample.push(cy));
        }
        let stats = c.finish(ResidueMode::HalfCycles, &mut |cy| by_sample.push(cy));
        prop_assert_eq!(key_sorted(&by_sample), expected);
        prop_assert_eq!(stats.reversals, peaks_and_valleys(&xs).len() as u64);
    }

    #[test]
    fn any_split_into_slices_gives_the_same_cycles(
        xs in signal(),
        cuts in prop::collection::vec(0usize..200, 0..6),
        gate in prop_oneof![Just(0.0), 0.0f64..5.0],
        repeated in any::<bool>(),
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let mut cuts: Vec<usize> = cuts.into_iter().map(|c| c.min(xs.len())).collect();
        cuts.sort();
        let mut c = RainflowCounter::new(gate);
        let mut got = Vec::new();
        let mut start = 0;
        for &cut in cuts.iter().chain(std::iter::once(&xs.len())) {
            c.push_slice(&xs[start..cut], &mut |cy| got.push(cy));
            start = cut;
        }
        let s1 = c.finish(mode, &mut |cy| got.push(cy));
        let (whole, s2) = cycles(&xs, gate, mode);
        prop_assert_eq!(sorted(got), sorted(whole));
        prop_assert_eq!(
            (s1.samples, s1.reversals, s1.full_cycles, s1.half_cycles),
            (s2.samples, s2.reversals, s2.full_cycles, s2.half_cycles)
        );
        // extremes NaN for an empty record, hence compared bit for bit
        prop_assert_eq!((s1.min.to_bits(), s1.max.to_bits()), (s2.min.to_bits(), s2.max.to_bits()));
    }

    #[test]
    fn full_and_half_cycles_balance_reversals(xs in signal()) {
        let mut emitted_full = 0u64;
        let mut emitted_half = 0u64;
        let stats = count_slice(&xs, 0.0, ResidueMode::HalfCycles, &mut |c: Cycle| {
            if c.count == 1.0 { emitted_full += 1 } else { emitted_half += 1 }
        });
        prop_assert_eq!((emitted_full, emitted_half), (stats.full_cycles, stats.half_cycles));
        if xs.is_empty() {
            prop_assert_eq!(stats.reversals, 0);
        } else {
            // each full cycle removes two reversals, the residue of R points leaves R - 1 half cycles
            prop_assert_eq!(2 * stats.full_cycles + stats.half_cycles, stats.reversals - 1);
        }
    }

    #[test]
    fn scaling_by_a_power_of_two_scales_ranges_and_means_exactly(
        xs in integer_signal(), j in -8i32..8, repeated in any::<bool>(),
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let k = 2f64.powi(j);
        let scaled: Vec<f64> = xs.iter().map(|x| k * x).collect();
        let mut expected: Vec<(f64, f64, f64)> =
            count(&xs, 0.0, mode).into_iter().map(|(n, r, m)| (n, k * r, k * m)).collect();
        sort_keys(&mut expected);
        prop_assert_eq!(count(&scaled, 0.0, mode), expected);
    }

    #[test]
    fn scaling_real_signals_scales_ranges_and_means(xs in real(), k in 0.001f64..1000.0) {
        let scaled: Vec<f64> = xs.iter().map(|x| k * x).collect();
        let expected: Vec<(f64, f64, f64)> = count(&xs, 0.0, ResidueMode::HalfCycles)
            .into_iter().map(|(n, r, m)| (n, k * r, k * m)).collect();
        prop_assert!(same_within(&count(&scaled, 0.0, ResidueMode::HalfCycles), &expected, 1e-9 * 1000.0 * k));
    }

    #[test]
    fn adding_a_constant_changes_only_means(
        xs in integer_signal(), c in -10_000i32..10_000, repeated in any::<bool>(),
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let c = f64::from(c);
        let shifted: Vec<f64> = xs.iter().map(|x| x + c).collect();
        let mut expected: Vec<(f64, f64, f64)> =
            count(&xs, 0.0, mode).into_iter().map(|(n, r, m)| (n, r, m + c)).collect();
        sort_keys(&mut expected);
        prop_assert_eq!(count(&shifted, 0.0, mode), expected);
    }

    #[test]
    fn adding_a_constant_to_real_signals(xs in real(), c in -1e4f64..1e4) {
        let shifted: Vec<f64> = xs.iter().map(|x| x + c).collect();
        let expected: Vec<(f64, f64, f64)> = count(&xs, 0.0, ResidueMode::HalfCycles)
            .into_iter().map(|(n, r, m)| (n, r, m + c)).collect();
        prop_assert!(same_within(&count(&shifted, 0.0, ResidueMode::HalfCycles), &expected, 1e-9));
    }

    #[test]
    fn repeated_mode_ignores_where_the_period_starts(xs in signal(), at in 0usize..200) {
        let at = if xs.is_empty() { 0 } else { at % xs.len() };
        let mut rotated = xs[at..].to_vec();
        rotated.extend_from_slice(&xs[..at]);
        let (a, sa) = cycles(&xs, 0.0, ResidueMode::Repeated);
        let (b, sb) = cycles(&rotated, 0.0, ResidueMode::Repeated);
        prop_assert!(a.iter().all(|c| c.count == 1.0));
        prop_assert_eq!(sa.half_cycles, 0);
        prop_assert_eq!(sa.full_cycles, sb.full_cycles);
        prop_assert_eq!(sorted(a), sorted(b));
    }

    #[test]
    fn repeated_mode_is_the_steady_state_of_back_to_back_copies(xs in signal()) {
        // cycles of three copies minus cycles of two (half cycles weigh 0.5),
        // counted with the ASTM E1049-85 procedure above
        let two: Vec<f64> = xs.iter().chain(&xs).copied().collect();
        let three: Vec<f64> = two.iter().chain(&xs).copied().collect();
        let per_period = minus(&weighted(&astm_rainflow(&peaks_and_valleys(&three))),
                               &weighted(&astm_rainflow(&peaks_and_valleys(&two))));
        let repeated = weighted(&count(&xs, 0.0, ResidueMode::Repeated));
        prop_assert_eq!(repeated, per_period);
    }

    #[test]
    fn gate_counts_only_ranges_above_it(xs in signal(), g in 0.01f64..8.0) {
        for mode in [ResidueMode::HalfCycles, ResidueMode::Repeated] {
            let (c, _) = cycles(&xs, g, mode);
            for cy in &c {
                prop_assert!(cy.range > g, "{:?} with gate {}", cy, g);
            }
        }
        // a repeated record: exactly the ungated cycles above the gate
        let mut ungated = count(&xs, 0.0, ResidueMode::Repeated);
        ungated.retain(|c| c.1 > g);
        prop_assert_eq!(count(&xs, g, ResidueMode::Repeated), ungated);
    }

    #[test]
    fn binning_conserves_the_cycle_count(
        xs in signal(),
        range_rule in prop_oneof![
            (0.05f64..50.0).prop_map(BinRule::Width),
            (1usize..40).prop_map(BinRule::MaxBins)
        ],
        mean_rule in prop_oneof![
            (0.05f64..50.0).prop_map(BinRule::Width),
            (2usize..40).prop_map(BinRule::MaxBins)
        ],
        repeated in any::<bool>(),
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let mut sp = Spectrum::new(SpectrumSpec { range: range_rule, mean: mean_rule }).unwrap();
        let stats = count_slice(&xs, 0.0, mode, &mut |c| sp.add(&c));
        let total = stats.total_cycles();
        prop_assert_eq!(sp.total_cycles(), total);
        let hist: f64 = sp.histogram().iter().map(|b| b.cycles).sum();
        let cells = sp.matrix();
        let mat: f64 = cells.iter().map(|c| c.cycles).sum();
        // counts are multiples of 0.5, so these sums are exact
        prop_assert_eq!(hist, total);
        prop_assert_eq!(mat, total);
        if let BinRule::MaxBins(n) = range_rule {
            prop_assert!(sp.histogram().iter().all(|b| b.hi_mpa <= n as f64 * sp.range_width_mpa()));
        }
        if let BinRule::MaxBins(n) = mean_rule {
            if let (Some(lo), Some(hi)) = (
                cells.iter().map(|c| c.mean_lo_mpa).reduce(f64::min),
                cells.iter().map(|c| c.mean_hi_mpa).reduce(f64::max),
            ) {
                prop_assert!(((hi - lo) / sp.mean_width_mpa()).round() as usize <= n);
            }
        }
        let eps = 1e-9;
        for c in &cells {
            prop_assert!(c.max_range_mpa >= c.range_lo_mpa - eps && c.max_range_mpa < c.range_hi_mpa + eps, "{:?}", c);
            prop_assert!(c.mean_mpa >= c.mean_lo_mpa - eps && c.mean_mpa < c.mean_hi_mpa + eps, "{:?}", c);
        }
    }
}

fn long_signal() -> impl Strategy<Value = Vec<f64>> {
    // long enough to cross the counter's internal chunks many times
    (any::<u64>(), 2000usize..30_000, 1u32..12).prop_map(|(seed, n, levels)| {
        use rand::{Rng, SeedableRng};
        let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
        let mut x = 0.0;
        (0..n)
            .map(|_| {
                x += f64::from(rng.gen_range(0..=levels)) - f64::from(levels) / 2.0;
                x
            })
            .collect()
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases() / 10))]

    #[test]
    fn long_signals_agree_with_the_astm_procedure(xs in long_signal(), gate in prop_oneof![Just(0.0), 0.5f64..4.0]) {
        if gate == 0.0 {
            prop_assert_eq!(count(&xs, 0.0, ResidueMode::HalfCycles), astm_rainflow(&peaks_and_valleys(&xs)));
        }
        // the per-sample path (no pruning) and the slice path agree, gated or not
        for mode in [ResidueMode::HalfCycles, ResidueMode::Repeated] {
            let mut by_sample = Vec::new();
            let mut c = RainflowCounter::new(gate);
            for &x in &xs {
                c.push(x, &mut |cy| by_sample.push(cy));
            }
            c.finish(mode, &mut |cy| by_sample.push(cy));
            prop_assert_eq!(sorted(by_sample), sorted(cycles(&xs, gate, mode).0));
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases() / 10))]

    #[test]
    fn parallel_count_equals_serial(
        xs in long_signal(), threads in 2usize..8, repeated in any::<bool>(),
        plateau_at_cut in any::<bool>(),
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let mut xs = xs;
        if plateau_at_cut {
            // a long plateau across the first cut, so a part starts inside it
            let cut = xs.len() / threads;
            let (lo, hi) = (cut.saturating_sub(50), (cut + 50).min(xs.len()));
            let v = xs[lo];
            for x in &mut xs[lo..hi] {
                *x = v;
            }
        }
        let (stats, parts) = count_slice_parallel(&xs, 0.0, mode, threads, Vec::new, |v: &mut Vec<Cycle>, c| v.push(c));
        prop_assert_eq!(parts.len(), threads.min(xs.len() / seamlife::rainflow::PARALLEL_MIN_PART).max(1));
        let got: Vec<Cycle> = parts.into_iter().flatten().collect();
        let (serial, serial_stats) = cycles(&xs, 0.0, mode);
        prop_assert_eq!(sorted(got), sorted(serial));
        prop_assert_eq!(stats, serial_stats);
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases() / 10))]

    #[test]
    fn binning_parts_of_a_parallel_count_then_merging_equals_serial_binning(
        xs in long_signal(), threads in 2usize..6,
        range_bins in 1usize..60, mean_bins in 2usize..30,
    ) {
        let spec = SpectrumSpec { range: BinRule::MaxBins(range_bins), mean: BinRule::MaxBins(mean_bins) };
        let (_, parts) = count_slice_parallel(
            &xs, 0.0, ResidueMode::HalfCycles, threads,
            || Spectrum::new(spec).unwrap(),
            |s: &mut Spectrum, c| s.add(&c),
        );
        let mut parts = parts.into_iter();
        let mut merged = parts.next().unwrap();
        for p in parts {
            merged.merge(&p).unwrap();
        }
        let mut serial = Spectrum::new(spec).unwrap();
        count_slice(&xs, 0.0, ResidueMode::HalfCycles, &mut |c| serial.add(&c));
        prop_assert_eq!(merged.range_width_mpa(), serial.range_width_mpa());
        prop_assert_eq!(merged.mean_width_mpa(), serial.mean_width_mpa());
        prop_assert_eq!(merged.histogram(), serial.histogram());
        let (a, b) = (merged.matrix(), serial.matrix());
        prop_assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(&b) {
            prop_assert_eq!(
                (x.range_lo_mpa, x.mean_lo_mpa, x.cycles, x.max_range_mpa),
                (y.range_lo_mpa, y.mean_lo_mpa, y.cycles, y.max_range_mpa)
            );
            // sums of count·mean taken in another order
            prop_assert!((x.mean_mpa - y.mean_mpa).abs() <= 1e-9 * (1.0 + y.mean_mpa.abs()));
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases()))]

    #[test]
    fn extremes_are_those_of_the_samples(
        xs in prop_oneof![signal(), long_signal()],
        gate in prop_oneof![Just(0.0), 0.0f64..5.0],
        repeated in any::<bool>(), threads in 1usize..4,
    ) {
        let mode = if repeated { ResidueMode::Repeated } else { ResidueMode::HalfCycles };
        let (_, stats) = cycles(&xs, gate, mode);
        let (pstats, _) = count_slice_parallel(&xs, gate, mode, threads, || (), |_: &mut (), _| {});
        if xs.is_empty() {
            prop_assert!(stats.min.is_nan() && stats.max.is_nan());
        } else {
            // extremes of the record, by direct search
            let lo = xs.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            prop_assert_eq!((stats.min, stats.max), (lo, hi));
            prop_assert_eq!((pstats.min, pstats.max), (lo, hi));
        }
    }
}
