//! Statistics of a fatigue test evaluation: least-squares regression of log N on
//! log Δσ (slope free or fixed), the factors of the characteristic curve (prediction
//! and tolerance-limit methods), the non-central t distribution they need, and a
//! maximum-likelihood fit that treats run-outs as censored.
//!
//! All logarithms are to base 10. A line is log N = log a − m·log Δσ, so a falling
//! S-N curve has a positive slope m. The distributions come from statrs; statrs has no
//! non-central t, so its CDF is summed here from statrs' incomplete beta function and
//! inverted by bisection.

use statrs::distribution::{ContinuousCDF, Normal, StudentsT};
use statrs::function::beta::beta_reg;
use statrs::function::gamma::{gamma_ur, ln_gamma};

/// A straight line fitted to (x = log Δσ, y = log N) points.
#[derive(Debug, Clone, PartialEq)]
pub struct LineFit {
    /// Number of points (failures) the line was fitted to.
    pub n: usize,
    /// log a: the intercept of log N at log Δσ = 0.
    pub intercept: f64,
    /// m: log N falls by m per unit of log Δσ.
    pub slope_m: f64,
    /// Standard deviation of log N about the line, on `dof` degrees of freedom.
    pub std_dev: f64,
    /// Degrees of freedom of `std_dev`: n − 2 with the slope free, n − 1 with it fixed.
    pub dof: usize,
    /// Mean of x (log Δσ) of the points.
    pub mean_x: f64,
    /// Sxx = Σ(x − x̄)².
    pub sxx: f64,
    /// Pearson correlation of x and y (free slope only).
    pub correlation: Option<f64>,
    /// Standard error of the fitted slope (free slope only).
    pub slope_std_error: Option<f64>,
    /// Whether the slope was fixed rather than fitted.
    pub slope_fixed: bool,
}

impl LineFit {
    /// Mean log N at x on the line.
    pub fn mean_y(&self, x: f64) -> f64 {
        self.intercept - self.slope_m * x
    }

    /// The leverage term h(x) of the line's estimate at x: 1/n + (x − x̄)²/Sxx with the
    /// slope free, 1/n with it fixed (common practice, least-squares theory).
    pub fn leverage(&self, x: f64) -> f64 {
        let n = self.n as f64;
        if self.slope_fixed {
            1.0 / n
        } else {
            1.0 / n + (x - self.mean_x).powi(2) / self.sxx
        }
    }
}

fn mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len() as f64
}

/// Least-squares line through (x, y) with a free slope; `None` with fewer than three
/// points or all x equal.
pub fn fit_free(x: &[f64], y: &[f64]) -> Option<LineFit> {
    let n = x.len();
    if n < 3 || y.len() != n {
        return None;
    }
    let (mx, my) = (mean(x), mean(y));
    // Sxx, Sxy, Syy about the means (common practice, least squares)
    let sxx: f64 = x.iter().map(|a| (a - mx).powi(2)).sum();
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let syy: f64 = y.iter().map(|b| (b - my).powi(2)).sum();
    if sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    // b = Sxy/Sxx, log a = ȳ − b·x̄ with b = −m (least squares)
    let b = sxy / sxx;
    let intercept = my - b * mx;
    let sse: f64 = x
        .iter()
        .zip(y)
        .map(|(a, v)| (v - (intercept + b * a)).powi(2))
        .sum();
    let dof = n - 2;
    // s² = SSE/(n − 2) (least squares, two fitted parameters)
    let std_dev = (sse / dof as f64).sqrt();
    // r = Sxy/√(Sxx·Syy) (Pearson)
    let correlation = (syy > 0.0).then(|| sxy / (sxx * syy).sqrt());
    Some(LineFit {
        n,
        intercept,
        slope_m: -b,
        std_dev,
        dof,
        mean_x: mx,
        sxx,
        correlation,
        // se(b) = s/√Sxx (least squares)
        slope_std_error: Some(std_dev / sxx.sqrt()),
        slope_fixed: false,
    })
}

/// Least-squares line through (x, y) with the slope fixed at `m`; `None` with fewer
/// than two points.
pub fn fit_fixed(x: &[f64], y: &[f64], m: f64) -> Option<LineFit> {
    let n = x.len();
    if n < 2 || y.len() != n || !(m.is_finite() && m > 0.0) {
        return None;
    }
    // log a = mean of (log N + m·log Δσ) (least squares with one parameter)
    let shifted: Vec<f64> = x.iter().zip(y).map(|(a, b)| b + m * a).collect();
    let intercept = mean(&shifted);
    let sse: f64 = shifted.iter().map(|v| (v - intercept).powi(2)).sum();
    let dof = n - 1;
    let mx = mean(x);
    Some(LineFit {
        n,
        intercept,
        slope_m: m,
        // s² = SSE/(n − 1) (one fitted parameter)
        std_dev: (sse / dof as f64).sqrt(),
        dof,
        mean_x: mx,
        sxx: x.iter().map(|a| (a - mx).powi(2)).sum(),
        correlation: None,
        slope_std_error: None,
        slope_fixed: true,
    })
}

/// Quantile z_p of the standard normal distribution: statrs' quantile, polished by one
/// Newton step on [`normal_cdf`].
pub fn normal_quantile(p: f64) -> f64 {
    let z = Normal::standard().inverse_cdf(p);
    if !z.is_finite() {
        return z;
    }
    // φ(z) = e^(−z²/2)/√(2π)
    let density = (-0.5 * z * z).exp() / (2.0 * std::f64::consts::PI).sqrt();
    z - (normal_cdf(z) - p) / density
}

/// CDF of the standard normal distribution through statrs' regularized upper
/// incomplete gamma function: Φ(−|z|) = ½·Q(½, z²/2). (statrs' `erfc`, behind its
/// normal CDF, is off by up to about 1e-10 relative near z = 1; Q agrees with
/// scipy.stats.norm to about 1e-15, scipy 1.17.1.)
pub fn normal_cdf(z: f64) -> f64 {
    if z.is_nan() {
        return f64::NAN;
    }
    let x = 0.5 * z * z;
    let tail = if x == 0.0 {
        0.5
    } else if x.is_infinite() {
        0.0
    } else {
        0.5 * gamma_ur(0.5, x)
    };
    if z < 0.0 {
        tail
    } else {
        1.0 - tail
    }
}

/// Quantile t_p(ν) of Student's t distribution (statrs); NaN for ν ≤ 0.
pub fn t_quantile(p: f64, dof: f64) -> f64 {
    match StudentsT::new(0.0, 1.0, dof) {
        Ok(t) => t.inverse_cdf(p),
        Err(_) => f64::NAN,
    }
}

/// CDF of the non-central t distribution with `dof` degrees of freedom and
/// non-centrality `delta` at `t`.
pub fn nct_cdf(t: f64, dof: f64, delta: f64) -> f64 {
    if t.is_nan() || dof.is_nan() || dof <= 0.0 || !delta.is_finite() {
        return f64::NAN;
    }
    if t == f64::INFINITY {
        return 1.0;
    }
    if t == f64::NEG_INFINITY {
        return 0.0;
    }
    if t >= 0.0 {
        nct_cdf_upper(t, dof, delta)
    } else {
        // F(t; ν, δ) = 1 − F(−t; ν, −δ) (symmetry of T = (Z + δ)/√(V/ν))
        1.0 - nct_cdf_upper(-t, dof, -delta)
    }
}

/// The series for t ≥ 0 (Lenth 1989, Applied Statistics algorithm AS 243):
/// F = Φ(−δ) + ½·Σⱼ [pⱼ·I_x(j + ½, ν/2) + qⱼ·I_x(j + 1, ν/2)], x = t²/(t² + ν),
/// pⱼ = e^(−λ)·λʲ/j!, qⱼ = δ·e^(−λ)·λʲ/(√2·Γ(j + 3/2)), λ = δ²/2. The sum runs out
/// from the largest Poisson weight (j = ⌊λ⌋) in both directions until the weights are
/// negligible; the incomplete beta values follow from the two at j = ⌊λ⌋ by the
/// recurrence I_x(a + 1, b) = I_x(a, b) − x^a·(1 − x)^b/(a·B(a, b)), as AS 243 does.
fn nct_cdf_upper(t: f64, dof: f64, delta: f64) -> f64 {
    let head = normal_cdf(-delta);
    let x = t * t / (t * t + dof);
    if x <= 0.0 {
        return head;
    }
    let b = dof / 2.0;
    let lambda = delta * delta / 2.0;
    if lambda == 0.0 {
        // Central t: F = ½ + ½·I_x(½, ν/2)
        return (head + 0.5 * beta_reg(0.5, b, x)).clamp(0.0, 1.0);
    }
    let (ln_x, ln_1mx) = (x.ln(), (-x).ln_1p());
    // g(a) = x^a·(1 − x)^b/(a·B(a, b)), the step of the recurrence in a
    let g =
        |a: f64| (a * ln_x + b * ln_1mx + ln_gamma(a + b) - ln_gamma(a + 1.0) - ln_gamma(b)).exp();
    let j0 = lambda.floor();
    let ln_lambda = lambda.ln();
    // Weights at the mode: pⱼ₀ and qⱼ₀ from their logarithms.
    let p0 = (-lambda + j0 * ln_lambda - ln_gamma(j0 + 1.0)).exp();
    let q0 = delta.signum()
        * (delta.abs().ln() - lambda + j0 * ln_lambda
            - std::f64::consts::SQRT_2.ln()
            - ln_gamma(j0 + 1.5))
        .exp();
    let (ap0, aq0) = (j0 + 0.5, j0 + 1.0);
    let (ip0, iq0) = (beta_reg(ap0, b, x), beta_reg(aq0, b, x));
    const NEGLIGIBLE: f64 = 1e-17;
    const MAX_TERMS: usize = 100_000;
    let mut sum = p0 * ip0 + q0 * iq0;
    // Upward from the mode.
    let (mut p, mut q, mut ip, mut iq) = (p0, q0, ip0, iq0);
    let (mut gp, mut gq) = (g(ap0), g(aq0));
    let (mut ap, mut aq) = (ap0, aq0);
    for _ in 0..MAX_TERMS {
        ip = (ip - gp).max(0.0);
        iq = (iq - gq).max(0.0);
        // g(a + 1) = g(a)·x·(a + b)/(a + 1)
        gp *= x * (ap + b) / (ap + 1.0);
        gq *= x * (aq + b) / (aq + 1.0);
        let j = ap + 0.5; // the new j
        p *= lambda / j;
        q *= lambda / (j + 0.5);
        ap += 1.0;
        aq += 1.0;
        sum += p * ip + q * iq;
        if p + q.abs() < NEGLIGIBLE || ip + iq == 0.0 {
            break;
        }
    }
    // Downward from the mode to j = 0.
    let (mut p, mut q, mut ip, mut iq) = (p0, q0, ip0, iq0);
    let (mut ap, mut aq) = (ap0, aq0);
    let mut j = j0;
    while j >= 1.0 {
        // I_x(a − 1, b) = I_x(a, b) + g(a − 1)
        ip = (ip + g(ap - 1.0)).min(1.0);
        iq = (iq + g(aq - 1.0)).min(1.0);
        p *= j / lambda;
        q *= (j + 0.5) / lambda;
        ap -= 1.0;
        aq -= 1.0;
        j -= 1.0;
        sum += p * ip + q * iq;
        if p + q.abs() < NEGLIGIBLE {
            break;
        }
    }
    (head + 0.5 * sum).clamp(0.0, 1.0)
}

/// Quantile of the non-central t distribution: the t with F(t; ν, δ) = p, bracketed
/// and then found by the Illinois variant of regula falsi on [`nct_cdf`] (common
/// practice, numerical root finding).
pub fn nct_quantile(p: f64, dof: f64, delta: f64) -> f64 {
    let valid = p > 0.0 && p < 1.0 && dof > 0.0 && delta.is_finite();
    if !valid {
        return f64::NAN;
    }
    let f = |t: f64| nct_cdf(t, dof, delta) - p;
    let (mut lo, mut hi) = (delta - 1.0, delta + 1.0);
    let (mut flo, mut fhi) = (f(lo), f(hi));
    let mut guard = 0;
    while flo > 0.0 && guard < 200 {
        lo = 2.0 * lo - hi.abs() - 1.0;
        flo = f(lo);
        guard += 1;
    }
    while fhi < 0.0 && guard < 400 {
        hi = 2.0 * hi + lo.abs() + 1.0;
        fhi = f(hi);
        guard += 1;
    }
    let mut side = 0i8;
    for _ in 0..300 {
        if hi - lo <= 1e-13 * hi.abs().max(lo.abs()).max(1.0) {
            break;
        }
        let mut mid = (lo * fhi - hi * flo) / (fhi - flo);
        if !(mid > lo && mid < hi) {
            mid = 0.5 * (lo + hi);
        }
        let fm = f(mid);
        if fm.abs() < 1e-16 {
            return mid;
        }
        if fm < 0.0 {
            lo = mid;
            flo = fm;
            if side == -1 {
                fhi *= 0.5;
            }
            side = -1;
        } else {
            hi = mid;
            fhi = fm;
            if side == 1 {
                flo *= 0.5;
            }
            side = 1;
        }
    }
    0.5 * (lo + hi)
}

/// How the characteristic line is placed below the mean line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Band {
    /// Lower one-sided tolerance limit: survival `survival` with confidence `confidence`.
    Tolerance { survival: f64, confidence: f64 },
    /// Lower one-sided prediction limit for one more test at `survival`.
    Prediction { survival: f64 },
}

/// The factor k of log N_k = mean − k·s for a line estimate with leverage h on ν
/// degrees of freedom.
///
/// - Tolerance: k = t′_γ(ν, z_p·√n_e)/√n_e with n_e = 1/h (one-sided tolerance limit of
///   a normal distribution; Owen 1962, Natrella 1963 Table A-7, from memory).
/// - Prediction: k = t_p(ν)·√(1 + h) (prediction limit; EN 1990 Annex D, D7.2 and
///   Table D1 "Vx unknown" for h = 1/n, from memory).
pub fn band_factor(band: Band, leverage: f64, dof: usize) -> f64 {
    let nu = dof as f64;
    match band {
        Band::Tolerance {
            survival,
            confidence,
        } => {
            let n_e = 1.0 / leverage;
            let delta = normal_quantile(survival) * n_e.sqrt();
            nct_quantile(confidence, nu, delta) / n_e.sqrt()
        }
        Band::Prediction { survival } => t_quantile(survival, nu) * (1.0 + leverage).sqrt(),
    }
}

/// The characteristic line's log N at x: mean − k(x)·s.
pub fn characteristic_y(fit: &LineFit, band: Band, x: f64) -> f64 {
    fit.mean_y(x) - band_factor(band, fit.leverage(x), fit.dof) * fit.std_dev
}

/// The x (log Δσ) at which the characteristic line reaches log N = `y`, searched from
/// the mean line's x toward lower ranges; `None` when the line never gets there within
/// three decades of range (a band that widens faster than the mean line rises) or the
/// fit does not fall.
pub fn characteristic_x(fit: &LineFit, band: Band, y: f64) -> Option<f64> {
    if fit.slope_m.is_nan() || fit.slope_m <= 0.0 {
        return None;
    }
    let g = |x: f64| characteristic_y(fit, band, x) - y;
    // On the mean line log N = y at x_m = (log a − y)/m; the band lies below it.
    let x_m = (fit.intercept - y) / fit.slope_m;
    if fit.slope_fixed {
        // The band is parallel: x = (log a − k·s − y)/m.
        let k = band_factor(band, fit.leverage(x_m), fit.dof);
        return Some((fit.intercept - k * fit.std_dev - y) / fit.slope_m);
    }
    if g(x_m) >= 0.0 {
        return Some(x_m);
    }
    let step = 0.002;
    let mut hi = x_m;
    let mut lo = x_m - step;
    let mut found = false;
    for _ in 0..1500 {
        if g(lo) >= 0.0 {
            found = true;
            break;
        }
        hi = lo;
        lo -= step;
    }
    if !found {
        return None;
    }
    // g(lo) >= 0 > g(hi): bisection.
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if g(mid) >= 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo < 1e-13 {
            break;
        }
    }
    Some(0.5 * (lo + hi))
}

/// A maximum-likelihood line with run-outs as right-censored observations.
#[derive(Debug, Clone, PartialEq)]
pub struct CensoredFit {
    pub intercept: f64,
    pub slope_m: f64,
    /// σ of log N, maximum-likelihood estimate (divides by the number of failures).
    pub sigma_ml: f64,
    /// Log-likelihood at the optimum (natural log, log N in base 10).
    pub log_likelihood: f64,
    pub iterations: usize,
    pub converged: bool,
}

/// ln Φ(−z), the log probability of surviving beyond a standard score z, stable for
/// large z (Mills' ratio asymptote beyond z = 35; common practice).
fn ln_survival(z: f64) -> f64 {
    if z < 35.0 {
        normal_cdf(-z).ln()
    } else {
        -0.5 * z * z - z.ln() - 0.5 * (2.0 * std::f64::consts::PI).ln()
    }
}

/// Negative log-likelihood of the censored normal regression (a Tobit-type model):
/// failures contribute ln φ(z)/σ, run-outs ln Φ(−z), z = (log N − (log a − m·log Δσ))/σ.
fn censored_nll(
    failures: &[(f64, f64)],
    runouts: &[(f64, f64)],
    intercept: f64,
    m: f64,
    ln_sigma: f64,
) -> f64 {
    let sigma = ln_sigma.exp();
    let half_ln_2pi = 0.5 * (2.0 * std::f64::consts::PI).ln();
    let mut nll = 0.0;
    for &(x, y) in failures {
        let z = (y - (intercept - m * x)) / sigma;
        nll += ln_sigma + 0.5 * z * z + half_ln_2pi;
    }
    for &(x, y) in runouts {
        let z = (y - (intercept - m * x)) / sigma;
        nll -= ln_survival(z);
    }
    nll
}

/// A function to minimise over a parameter vector.
type Objective<'a> = Box<dyn Fn(&[f64]) -> f64 + 'a>;

/// Maximum-likelihood line with run-outs censored; `fixed_m` fixes the slope. Starts
/// from `start` (the least-squares fit to the failures) and minimises by Nelder-Mead,
/// restarted from its own optimum until it no longer moves.
pub fn fit_censored(
    failures: &[(f64, f64)],
    runouts: &[(f64, f64)],
    fixed_m: Option<f64>,
    start: &LineFit,
) -> Option<CensoredFit> {
    if failures.len() < 2 || start.std_dev.is_nan() || start.std_dev <= 0.0 {
        return None;
    }
    let ln_s0 = start.std_dev.ln();
    let (x0, f): (Vec<f64>, Objective) = match fixed_m {
        Some(m) => (
            vec![start.intercept, ln_s0],
            Box::new(move |p: &[f64]| censored_nll(failures, runouts, p[0], m, p[1])),
        ),
        None => (
            vec![start.intercept, start.slope_m, ln_s0],
            Box::new(move |p: &[f64]| censored_nll(failures, runouts, p[0], p[1], p[2])),
        ),
    };
    let mut best = x0;
    let mut total = 0;
    let mut converged = false;
    for _ in 0..6 {
        let (p, it, ok) = nelder_mead(&f, &best, 0.05, 20_000);
        total += it;
        let moved = p.iter().zip(&best).any(|(a, b)| (a - b).abs() > 1e-9);
        best = p;
        if ok && !moved {
            converged = true;
            break;
        }
    }
    let value = f(&best);
    if !value.is_finite() {
        return None;
    }
    let (intercept, slope_m, ln_sigma) = match fixed_m {
        Some(m) => (best[0], m, best[1]),
        None => (best[0], best[1], best[2]),
    };
    Some(CensoredFit {
        intercept,
        slope_m,
        sigma_ml: ln_sigma.exp(),
        log_likelihood: -value,
        iterations: total,
        converged,
    })
}

/// Nelder-Mead simplex minimisation (Nelder and Mead 1965; reflection 1, expansion 2,
/// contraction ½, shrink ½). Returns the best point, the iterations used and whether
/// the simplex collapsed within tolerance.
fn nelder_mead(
    f: &dyn Fn(&[f64]) -> f64,
    x0: &[f64],
    step: f64,
    max_iter: usize,
) -> (Vec<f64>, usize, bool) {
    let d = x0.len();
    let mut simplex: Vec<(Vec<f64>, f64)> = Vec::with_capacity(d + 1);
    simplex.push((x0.to_vec(), f(x0)));
    for i in 0..d {
        let mut p = x0.to_vec();
        p[i] += step;
        let v = f(&p);
        simplex.push((p, v));
    }
    let order = |s: &mut Vec<(Vec<f64>, f64)>| s.sort_by(|a, b| a.1.total_cmp(&b.1));
    let lerp = |a: &[f64], b: &[f64], t: f64| -> Vec<f64> {
        a.iter().zip(b).map(|(p, q)| p + t * (q - p)).collect()
    };
    for it in 0..max_iter {
        order(&mut simplex);
        let spread = (simplex[d].1 - simplex[0].1).abs();
        let size = simplex[1..]
            .iter()
            .flat_map(|(p, _)| p.iter().zip(&simplex[0].0).map(|(a, b)| (a - b).abs()))
            .fold(0.0, f64::max);
        if spread <= 1e-14 * (1.0 + simplex[0].1.abs()) && size <= 1e-10 {
            return (simplex[0].0.clone(), it, true);
        }
        let centroid: Vec<f64> = (0..d)
            .map(|j| simplex[..d].iter().map(|(p, _)| p[j]).sum::<f64>() / d as f64)
            .collect();
        let worst = simplex[d].clone();
        let reflected = lerp(&centroid, &worst.0, -1.0);
        let fr = f(&reflected);
        if fr < simplex[0].1 {
            let expanded = lerp(&centroid, &worst.0, -2.0);
            let fe = f(&expanded);
            simplex[d] = if fe < fr {
                (expanded, fe)
            } else {
                (reflected, fr)
            };
        } else if fr < simplex[d - 1].1 {
            simplex[d] = (reflected, fr);
        } else {
            let (towards, fw) = if fr < worst.1 {
                (reflected, fr)
            } else {
                (worst.0.clone(), worst.1)
            };
            let contracted = lerp(&centroid, &towards, 0.5);
            let fc = f(&contracted);
            if fc < fw {
                simplex[d] = (contracted, fc);
            } else {
                let best = simplex[0].0.clone();
                for s in simplex.iter_mut().skip(1) {
                    let p = lerp(&best, &s.0, 0.5);
                    let v = f(&p);
                    *s = (p, v);
                }
            }
        }
    }
    order(&mut simplex);
    (simplex[0].0.clone(), max_iter, false)
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ChiSquared, Continuous};

    /// F(t; ν, δ) = ∫ Φ(t·√(v/ν) − δ)·f_χ²(v; ν) dv by Simpson's rule: an independent
    /// route through statrs' chi-squared density (definition of the non-central t).
    fn nct_cdf_by_integral(t: f64, dof: f64, delta: f64) -> f64 {
        let chi = ChiSquared::new(dof).unwrap();
        let hi = dof + 60.0 * (2.0 * dof).sqrt() + 60.0;
        let n = 200_000;
        let h = hi / n as f64;
        let g = |v: f64| {
            let dens = if v == 0.0 { 0.0 } else { chi.pdf(v) };
            normal_cdf(t * (v / dof).sqrt() - delta) * dens
        };
        let mut s = g(0.0) + g(hi);
        for i in 1..n {
            let v = i as f64 * h;
            s += if i % 2 == 1 { 4.0 } else { 2.0 } * g(v);
        }
        s * h / 3.0
    }

    #[test]
    fn series_and_integral_agree() {
        // Two routes to the same CDF (definition of the non-central t); ν ≥ 3 keeps
        // the chi-squared density bounded at 0 for Simpson's rule.
        for (t, dof, delta) in [(3.0, 9.0, 5.2), (2.0, 4.0, 3.68), (8.0, 28.0, 8.9)] {
            let a = nct_cdf(t, dof, delta);
            let b = nct_cdf_by_integral(t, dof, delta);
            assert!((a - b).abs() < 1e-7, "{t} {dof} {delta}: {a} vs {b}");
        }
    }

    #[test]
    fn central_case_is_students_t() {
        // δ = 0: the non-central t is Student's t (definition); t_0.95(9) = 1.833113
        // (scipy.stats.t.ppf(0.95, 9), scipy 1.17.1)
        let q = nct_quantile(0.95, 9.0, 0.0);
        assert!((q - 1.833113).abs() < 1e-6, "{q}");
        assert!((t_quantile(0.95, 9.0) - 1.833113).abs() < 1e-6);
    }

    #[test]
    fn negative_t_uses_the_reflection() {
        // F(−t; ν, δ) = 1 − F(t; ν, −δ) (definition); and F rises with t.
        let a = nct_cdf(-0.5, 6.0, 1.0);
        let b = 1.0 - nct_cdf(0.5, 6.0, -1.0);
        assert!((a - b).abs() < 1e-15);
        assert!(nct_cdf(-0.5, 6.0, 1.0) < nct_cdf(0.0, 6.0, 1.0));
        // F(0; ν, δ) = Φ(−δ) (definition): Φ(−1) = 0.158655
        assert!((nct_cdf(0.0, 6.0, 1.0) - 0.158655).abs() < 1e-6);
    }

    #[test]
    fn fixed_fit_of_exact_points() {
        // Points on log N = 12 − 3·log Δσ: fixed slope 3 recovers log a = 12, s = 0.
        let x = [1.8, 2.0, 2.2];
        let y: Vec<f64> = x.iter().map(|v| 12.0 - 3.0 * v).collect();
        let f = fit_fixed(&x, &y, 3.0).unwrap();
        assert!((f.intercept - 12.0).abs() < 1e-12);
        assert!(f.std_dev < 1e-12);
        let g = fit_free(&x, &y).unwrap();
        assert!((g.slope_m - 3.0).abs() < 1e-12);
        assert!((g.correlation.unwrap() + 1.0).abs() < 1e-12);
        assert!(fit_free(&[2.0, 2.0, 2.0], &[6.0, 6.1, 6.2]).is_none());
    }

    #[test]
    fn censored_without_runouts_is_least_squares() {
        // With no censored points the likelihood is the normal one: the ML line is the
        // least-squares line and σ_ML² = SSE/n (common practice, normal regression).
        let x = [2.3, 2.2, 2.1, 2.0, 1.9, 2.25, 2.05];
        let y = [5.02, 5.41, 5.63, 6.01, 6.22, 5.18, 5.88];
        let ls = fit_free(&x, &y).unwrap();
        let pts: Vec<(f64, f64)> = x.iter().copied().zip(y.iter().copied()).collect();
        let ml = fit_censored(&pts, &[], None, &ls).unwrap();
        assert!(ml.converged);
        assert!((ml.slope_m - ls.slope_m).abs() < 1e-7, "{ml:?} {ls:?}");
        assert!((ml.intercept - ls.intercept).abs() < 1e-6);
        let sse = ls.std_dev.powi(2) * ls.dof as f64;
        assert!((ml.sigma_ml - (sse / 7.0).sqrt()).abs() < 1e-8);
    }
}
