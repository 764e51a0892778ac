//! S-N curves built from a family's segment list: reference point, knees, cut-off.

use crate::catalogue::Segment;
use crate::results::{CurvePoint, CurveResult};

/// A multi-segment S-N curve through (reference_cycles, reference_range).
#[derive(Debug, Clone, PartialEq)]
pub struct SnCurve {
    pub reference_cycles: f64,
    pub reference_range: f64,
    pub slopes: Vec<f64>,
    /// (cycles, range) at the end of each bounded segment.
    pub knees: Vec<(f64, f64)>,
    /// Ranges below the last knee cause no damage.
    pub cut_off: bool,
    symbols: Vec<(Option<String>, Option<String>)>,
}

impl SnCurve {
    pub fn new(segments: &[Segment], reference_cycles: f64, reference_range: f64) -> SnCurve {
        let mut knees = Vec::new();
        let mut symbols = Vec::new();
        let (mut n_prev, mut s_prev) = (reference_cycles, reference_range);
        for seg in segments {
            if let Some(n_end) = seg.end_cycles {
                // Range at a knee on a line of slope m: Δσ_end = Δσ_prev·(N_prev/N_end)^(1/m)
                // (EN 1993-1-9 eqs. (7.2), (7.3) form)
                let s_end = s_prev * (n_prev / n_end).powf(1.0 / seg.slope_m);
                knees.push((n_end, s_end));
                symbols.push((seg.knee_symbol.clone(), seg.knee_name.clone()));
                n_prev = n_end;
                s_prev = s_end;
            }
        }
        let cut_off = segments.last().is_some_and(|s| s.end_cycles.is_some());
        SnCurve {
            reference_cycles,
            reference_range,
            slopes: segments.iter().map(|s| s.slope_m).collect(),
            knees,
            cut_off,
            symbols,
        }
    }

    /// The same curve moved to another reference range (a scaled category).
    pub fn scaled(&self, factor: f64) -> SnCurve {
        let mut c = self.clone();
        c.reference_range *= factor;
        for k in &mut c.knees {
            k.1 *= factor;
        }
        c
    }

    /// Endurance N and the 1-based segment for a range; `None` below the cut-off.
    pub fn endurance(&self, range: f64) -> Option<(f64, usize)> {
        // Segment 1 extends without bound to high ranges: N = N_C·(Δσ_C/Δσ)^m1 (eq. (7.1) form)
        if self.knees.is_empty() || range >= self.knees[0].1 {
            let n = self.reference_cycles * (self.reference_range / range).powf(self.slopes[0]);
            return Some((n, 1));
        }
        for i in 1..self.slopes.len() {
            let (n_k, s_k) = self.knees[i - 1];
            match self.knees.get(i) {
                Some(&(_, s_low)) if range < s_low => continue,
                // Segment i+1 through the previous knee: N = N_k·(Δσ_k/Δσ)^m
                _ => return Some((n_k * (s_k / range).powf(self.slopes[i]), i + 1)),
            }
        }
        None
    }

    /// Range on the curve at a given number of cycles (for plots and checks); zero
    /// beyond the cut-off.
    pub fn range_at(&self, cycles: f64) -> f64 {
        let (mut n_prev, mut s_prev) = (self.reference_cycles, self.reference_range);
        for (i, &m) in self.slopes.iter().enumerate() {
            let end = self.knees.get(i).map(|k| k.0);
            // the first line extends without bound to few cycles; a published curve may
            // reach its first knee before the reference cycles (DNV in seawater)
            if i == 0 && cycles <= self.reference_cycles && end.is_none_or(|e| cycles <= e) {
                return s_prev * (n_prev / cycles).powf(1.0 / m);
            }
            match end {
                Some(n_end) if cycles > n_end => {
                    let k = self.knees[i];
                    n_prev = k.0;
                    s_prev = k.1;
                }
                _ => return s_prev * (n_prev / cycles).powf(1.0 / m),
            }
        }
        0.0
    }

    /// Symbol of knee `i` (0-based), when the family names it.
    pub fn knee_symbol(&self, i: usize) -> Option<&str> {
        self.symbols.get(i).and_then(|s| s.0.as_deref())
    }

    /// [`SnCurve::to_result`], without the knees' symbols and names when `lean`.
    pub fn to_result_lean(&self, lean: bool) -> CurveResult {
        let mut r = CurveResult {
            reference_cycles: self.reference_cycles,
            reference_range_mpa: self.reference_range,
            slopes: self.slopes.clone(),
            knees: Vec::new(),
            cut_off: self.cut_off,
        };
        if lean {
            r.knees = self
                .knees
                .iter()
                .map(|&(n, s)| CurvePoint {
                    cycles: n,
                    range_mpa: s,
                    symbol: None,
                    name: None,
                })
                .collect();
            r
        } else {
            self.to_result()
        }
    }

    pub fn to_result(&self) -> CurveResult {
        CurveResult {
            reference_cycles: self.reference_cycles,
            reference_range_mpa: self.reference_range,
            slopes: self.slopes.clone(),
            knees: self
                .knees
                .iter()
                .zip(&self.symbols)
                .map(|(&(n, s), (sym, name))| CurvePoint {
                    cycles: n,
                    range_mpa: s,
                    symbol: sym.clone(),
                    name: name.clone(),
                })
                .collect(),
            cut_off: self.cut_off,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn seg(m: f64, end: Option<f64>) -> Segment {
        Segment {
            slope_m: m,
            end_cycles: end,
            knee_symbol: None,
            knee_name: None,
        }
    }

    fn en_normal(cat: f64) -> SnCurve {
        SnCurve::new(&[seg(3.0, Some(5e6)), seg(5.0, Some(1e8))], 2e6, cat)
    }

    /// Relative tolerance for a hand-worked value written to 10 significant figures
    /// (rounding at most 5e-10 relative). The values are worked from the formulas in
    /// 40-digit decimal arithmetic by tests/tools/hand_worked.py, independently of seamlife.
    const HAND: f64 = 1e-9;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= HAND * b.abs()
    }

    #[test]
    fn en_knees_follow_the_knee_formulas() {
        // ΔσD = ΔσC·(2/5)^(1/3) (EN 1993-1-9 Fig. 7.1, eq. (7.2): the m = 3 line from
        // 2e6 to 5e6) and ΔσL = ΔσD·(5/100)^(1/5) (Fig. 7.1, eq. (7.3): the m = 5 line
        // from 5e6 to 1e8), hand-worked:
        for (cat, knee_d, knee_l) in [
            (160.0, 117.8890080, 64.75410632),
            (100.0, 73.68062997, 40.47131645),
            (71.0, 52.31324728, 28.73463468),
            (36.0, 26.52502679, 14.56967392),
        ] {
            let c = en_normal(cat);
            assert_eq!((c.knees[0].0, c.knees[1].0), (5e6, 1e8));
            assert!(close(c.knees[0].1, knee_d), "ΔσC {cat}: {:?}", c.knees);
            assert!(close(c.knees[1].1, knee_l), "ΔσC {cat}: {:?}", c.knees);
        }
    }

    #[test]
    fn en_shear_cut_off() {
        // ΔτL = ΔτC·(2/100)^(1/5) (EN 1993-1-9 Fig. 7.2, m = 5 from 2e6 to 1e8, from
        // memory), hand-worked: ΔτC 100 -> 45.73050519, ΔτC 80 -> 36.58440415
        let c = SnCurve::new(&[seg(5.0, Some(1e8))], 2e6, 100.0);
        assert!(close(c.knees[0].1, 45.73050519));
        let c = SnCurve::new(&[seg(5.0, Some(1e8))], 2e6, 80.0);
        assert!(close(c.knees[0].1, 36.58440415));
        assert!(c.endurance(36.0).is_none());
    }

    #[test]
    fn endurance_on_each_segment() {
        let c = en_normal(100.0);
        // At ΔσC: N = 2e6 by definition (EN 1993-1-9 eq. (7.1))
        let (n, s) = c.endurance(100.0).unwrap();
        assert!((n - 2e6).abs() < 1e-3);
        assert_eq!(s, 1);
        // Half the category on m = 3: N = 2e6·2^3 = 1.6e7 > 5e6, so it lies on m = 5:
        // N = 5e6·(73.68062997/50)^5 (EN 1993-1-9 eq. (7.2)), hand-worked: 34744545.49
        let (n, s) = c.endurance(50.0).unwrap();
        assert_eq!(s, 2);
        assert!(close(n, 34744545.49));
        // Below ΔσL = 40.47131645: no damage (EN 1993-1-9 7.1(3) cut-off, hand-worked)
        assert!(c.endurance(40.0).is_none());
    }

    #[test]
    fn open_tail_continues() {
        // IIW normal stress: m = 3 to 1e7, then m = 22 (IIW 3.2.1, from memory)
        let c = SnCurve::new(&[seg(3.0, Some(1e7)), seg(22.0, None)], 2e6, 90.0);
        let k = c.knees[0].1;
        // Knee at 1e7: FAT·(2e6/1e7)^(1/3) = 0.5848035476·FAT (IIW 3.2.1 knee, from
        // memory; hand-worked)
        assert!(close(k / 90.0, 0.5848035476));
        let (n, s) = c.endurance(k * 0.5).unwrap();
        assert_eq!(s, 2);
        // Half the knee range on m = 22: N = 1e7·2^22 (IIW 3.2.1 form, from memory; exact
        // arithmetic save the binary rounding of the knee)
        assert!((n - 1e7 * 2f64.powi(22)).abs() / n < 1e-12);
        assert!(!c.cut_off);
    }

    #[test]
    fn range_at_inverts_endurance() {
        let c = en_normal(80.0);
        for r in [200.0, 80.0, 59.0, 45.0, 33.0] {
            let (n, _) = c.endurance(r).unwrap();
            assert!((c.range_at(n) - r).abs() < 1e-9 * r);
        }
        assert_eq!(c.range_at(2e8), 0.0);
    }
}
