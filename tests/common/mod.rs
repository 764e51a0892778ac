//! Helpers shared by the integration tests.
#![allow(dead_code)]

use seamlife::rainflow::Cycle;
use std::cmp::Ordering;

/// (count, range, mean) of each cycle, sorted in a total order.
pub fn key_sorted(cycles: &[Cycle]) -> Vec<(f64, f64, f64)> {
    let mut v: Vec<(f64, f64, f64)> = cycles.iter().map(|c| (c.count, c.range, c.mean)).collect();
    sort_keys(&mut v);
    v
}

pub fn sort_keys(v: &mut [(f64, f64, f64)]) {
    v.sort_by(|a, b| {
        a.0.total_cmp(&b.0)
            .then(a.1.total_cmp(&b.1))
            .then(a.2.total_cmp(&b.2))
    });
}

/// Multisets equal: counts exactly, ranges and means within `tol`.
pub fn assert_same(actual: &[(f64, f64, f64)], expected: &[(f64, f64, f64)], tol: f64, what: &str) {
    assert_eq!(actual.len(), expected.len(), "{what}: number of cycles");
    for (i, (a, e)) in actual.iter().zip(expected).enumerate() {
        assert_eq!(a.0, e.0, "{what}: count of cycle {i}: {a:?} vs {e:?}");
        assert!(
            (a.1 - e.1).abs() <= tol,
            "{what}: range of cycle {i}: {a:?} vs {e:?}"
        );
        assert!(
            (a.2 - e.2).abs() <= tol,
            "{what}: mean of cycle {i}: {a:?} vs {e:?}"
        );
    }
}

/// Multisets equal up to `tol` on range and mean, by greedy matching (order-free,
/// for results that went through rounding and may sort differently).
pub fn same_within(actual: &[(f64, f64, f64)], expected: &[(f64, f64, f64)], tol: f64) -> bool {
    if actual.len() != expected.len() {
        return false;
    }
    let mut used = vec![false; actual.len()];
    'outer: for e in expected {
        for (j, a) in actual.iter().enumerate() {
            if !used[j] && a.0 == e.0 && (a.1 - e.1).abs() <= tol && (a.2 - e.2).abs() <= tol {
                used[j] = true;
                continue 'outer;
            }
        }
        return false;
    }
    true
}

/// Total order on cycles, every field.
pub fn cmp_cycle(a: &Cycle, b: &Cycle) -> Ordering {
    a.count
        .total_cmp(&b.count)
        .then(a.range.total_cmp(&b.range))
        .then(a.mean.total_cmp(&b.mean))
        .then(a.min.total_cmp(&b.min))
        .then(a.max.total_cmp(&b.max))
}

pub fn sorted(mut v: Vec<Cycle>) -> Vec<Cycle> {
    v.sort_by(cmp_cycle);
    v
}
