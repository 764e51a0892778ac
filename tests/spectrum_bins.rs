//! Binning rules of the range histogram and range-mean matrix.

use seamlife::rainflow::Cycle;
use seamlife::spectrum::{BinRule, Spectrum, SpectrumSpec};

fn blocks() -> Vec<(f64, f64, f64)> {
    // (range, mean, count): ranges 0..=100 MPa about means -30..=30 MPa
    (0..=100)
        .map(|i| {
            (
                f64::from(i),
                f64::from(i % 61) - 30.0,
                if i % 3 == 0 { 0.5 } else { 1.0 },
            )
        })
        .collect()
}

fn spectrum(order: &[(f64, f64, f64)], range: BinRule, mean: BinRule) -> Spectrum {
    let mut s = Spectrum::new(SpectrumSpec { range, mean }).unwrap();
    for &(r, m, n) in order {
        s.add_block(r, m, n);
    }
    s
}

#[test]
fn max_bins_picks_the_smallest_power_of_two_width() {
    let s = spectrum(&blocks(), BinRule::MaxBins(10), BinRule::MaxBins(8));
    // ranges up to 100 MPa in 10 bins: 100/16 = 6.25 fits, 100/8 = 12.5 does not (bin rule arithmetic)
    assert_eq!(s.range_width_mpa(), 16.0);
    // means -30..30 MPa in 8 bins aligned on 0: width 8 gives bins -4..3 (8 bins),
    // width 4 would need -8..7 (16 bins) (bin rule arithmetic)
    assert_eq!(s.mean_width_mpa(), 8.0);
    let h = s.histogram();
    assert_eq!(h.len(), 7);
    assert_eq!((h[0].lo_mpa, h[0].hi_mpa), (0.0, 16.0));
    assert_eq!((h[6].lo_mpa, h[6].hi_mpa), (96.0, 112.0));
    // 101 blocks, 34 of them half cycles: 67 + 17 = 84 cycles (sum of the blocks)
    assert_eq!(s.total_cycles(), 84.0);
    assert_eq!(h.iter().map(|b| b.cycles).sum::<f64>(), 84.0);
}

#[test]
fn max_bins_result_does_not_depend_on_the_order() {
    let fwd = blocks();
    let mut rev = fwd.clone();
    rev.reverse();
    let mut mixed = fwd.clone();
    mixed.sort_by_key(|a| a.1 as i64 * 7 % 13);
    let a = spectrum(&fwd, BinRule::MaxBins(12), BinRule::MaxBins(5));
    for other in [rev, mixed] {
        let b = spectrum(&other, BinRule::MaxBins(12), BinRule::MaxBins(5));
        // same bins and counts whatever the order (aligned bins merge exactly)
        assert_eq!(a.histogram(), b.histogram());
        let (ma, mb) = (a.matrix(), b.matrix());
        assert_eq!(ma.len(), mb.len());
        for (x, y) in ma.iter().zip(&mb) {
            assert_eq!(
                (x.range_lo_mpa, x.mean_lo_mpa, x.cycles, x.max_range_mpa),
                (y.range_lo_mpa, y.mean_lo_mpa, y.cycles, y.max_range_mpa)
            );
            assert!((x.mean_mpa - y.mean_mpa).abs() < 1e-12);
        }
    }
}

#[test]
fn fixed_width_cells_keep_largest_range_and_weighted_mean() {
    let mut s = Spectrum::new(SpectrumSpec {
        range: BinRule::Width(10.0),
        mean: BinRule::Width(20.0),
    })
    .unwrap();
    // two cycles in cell [40, 50) x [-20, 0), one in [40, 50) x [0, 20)
    s.add(&Cycle::between(-30.0, 12.0, 1.0)); // range 42, mean -9
    s.add(&Cycle::between(-25.0, 23.0, 0.5)); // range 48, mean -1
    s.add(&Cycle::between(-20.0, 25.0, 1.0)); // range 45, mean 2.5
    let m = s.matrix();
    assert_eq!(m.len(), 2);
    let c = m[0];
    assert_eq!(
        (c.range_lo_mpa, c.range_hi_mpa, c.mean_lo_mpa, c.mean_hi_mpa),
        (40.0, 50.0, -20.0, 0.0)
    );
    assert_eq!((c.cycles, c.max_range_mpa), (1.5, 48.0));
    // weighted mean (1·(-9) + 0.5·(-1)) / 1.5 (definition of the cycle-weighted mean)
    assert!((c.mean_mpa - (-9.5 / 1.5)).abs() < 1e-12);
    // conservative block: σmax = mean + range/2, σmin = mean − range/2 (definition of range and mean)
    let (smax, smin) = (
        c.mean_mpa + c.max_range_mpa / 2.0,
        c.mean_mpa - c.max_range_mpa / 2.0,
    );
    assert!((smax - (-9.5 / 1.5 + 24.0)).abs() < 1e-12);
    assert!((smin - (-9.5 / 1.5 - 24.0)).abs() < 1e-12);
    assert_eq!(
        (m[1].mean_lo_mpa, m[1].cycles, m[1].mean_mpa),
        (0.0, 1.0, 2.5)
    );
    let h = s.histogram();
    assert_eq!(h.len(), 1);
    assert_eq!((h[0].lo_mpa, h[0].hi_mpa, h[0].cycles), (40.0, 50.0, 2.5));
}

#[test]
fn merging_spectra_equals_one_spectrum_of_all_cycles() {
    let all = blocks();
    let (a, b) = all.split_at(40);
    for (range, mean) in [
        (BinRule::MaxBins(10), BinRule::MaxBins(8)),
        (BinRule::Width(7.0), BinRule::Width(5.0)),
    ] {
        let mut left = spectrum(a, range, mean);
        let right = spectrum(b, range, mean);
        left.merge(&right).unwrap();
        let whole = spectrum(&all, range, mean);
        // same bins and counts as one spectrum fed with every block (aligned bins merge exactly)
        assert_eq!(left.histogram(), whole.histogram());
        assert_eq!(left.total_cycles(), 84.0);
        assert_eq!(left.range_width_mpa(), whole.range_width_mpa());
        let (x, y) = (left.matrix(), whole.matrix());
        assert_eq!(x.len(), y.len());
        for (p, q) in x.iter().zip(&y) {
            assert_eq!(
                (p.range_lo_mpa, p.mean_lo_mpa, p.cycles, p.max_range_mpa),
                (q.range_lo_mpa, q.mean_lo_mpa, q.cycles, q.max_range_mpa)
            );
            assert!((p.mean_mpa - q.mean_mpa).abs() < 1e-12);
        }
    }
    // different rules do not merge
    let mut s = spectrum(a, BinRule::MaxBins(10), BinRule::MaxBins(8));
    assert!(s
        .merge(&spectrum(b, BinRule::MaxBins(11), BinRule::MaxBins(8)))
        .is_err());
}
