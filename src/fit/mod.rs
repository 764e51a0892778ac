//! Deriving a detail category from fatigue tests.
//!
//! Data flows one way here too: a test file ([`input`]) and a curve family go into
//! [`evaluate`], which fits log N on log Δσ ([`stats`]) and returns the serialisable
//! [`FitResults`]; the table, `--json`, the family-extension file ([`extension`]) and
//! the PDF sheet (`report::fit_sheet`) read nothing else.

pub mod extension;
pub mod input;
pub mod stats;

use serde::{Deserialize, Serialize};

use crate::assess::SnCurve;
use crate::catalogue::{Component, Family};
use crate::error::{Error, InputError, InputErrorKind};
use crate::results::{CurveResult, ToolInfo, Warning};
use input::TestSet;
use stats::{Band, LineFit};

/// Version of the fit results model (the JSON of `seamlife fit --json`).
pub const FIT_MODEL_VERSION: u32 = 1;
/// Survival probability of the characteristic curve.
pub const SURVIVAL: f64 = 0.95;
/// Confidence level of the characteristic curve.
pub const CONFIDENCE: f64 = 0.75;
/// Fewest failures that can be evaluated: a free-slope line needs three points to
/// leave one degree of freedom for the scatter.
pub const MIN_FAILURES: usize = 3;
/// Below this many failures a warning is given (IIW recommendations 3.7 ask for at
/// least 10 test results for a curve of its own, from memory).
pub const RECOMMENDED_FAILURES: usize = 10;

/// How the characteristic curve is placed below the mean curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// Lower one-sided tolerance limit: 95 % survival with 75 % confidence.
    Tolerance,
    /// Lower one-sided prediction limit at 95 % (EN 1990 Annex D form).
    Prediction,
}

impl Method {
    pub fn as_str(self) -> &'static str {
        match self {
            Method::Tolerance => "tolerance",
            Method::Prediction => "prediction",
        }
    }

    fn band(self) -> Band {
        match self {
            Method::Tolerance => Band::Tolerance {
                survival: SURVIVAL,
                confidence: CONFIDENCE,
            },
            Method::Prediction => Band::Prediction { survival: SURVIVAL },
        }
    }
}

/// What to evaluate and against which family.
#[derive(Debug, Clone)]
pub struct FitOptions {
    pub component: Component,
    /// Fixed slope m; `None`: the first slope of the family's curve for the component.
    pub fixed_slope_m: Option<f64>,
    pub method: Method,
    /// Treat run-outs as censored by maximum likelihood (else they are excluded).
    pub censored: bool,
    /// Date of the evaluation, YYYY-MM-DD.
    pub date: String,
}

/// Everything an evaluation found; what `--json` writes and the sheet reads.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FitResults {
    pub model_version: u32,
    pub tool: ToolInfo,
    pub date: String,
    pub input: FitInput,
    pub family: FitFamily,
    pub specimens: Vec<SpecimenResult>,
    pub failures: usize,
    pub runouts: usize,
    pub method: MethodInfo,
    /// Least-squares fits to the failures (slope free, slope fixed), then with
    /// `--censored` the maximum-likelihood fits with run-outs censored.
    pub evaluations: Vec<Evaluation>,
    pub category: CategoryResult,
    /// The family's curve through the supported category.
    pub category_curve: Option<CurveResult>,
    pub warnings: Vec<Warning>,
    pub notes: Vec<String>,
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FitInput {
    /// File name only (no folders).
    pub file_name: String,
    pub sha256: String,
    pub bytes: u64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FitFamily {
    pub id: String,
    pub title: String,
    pub edition: String,
    pub data_version: String,
    pub origin: String,
    /// `normal` or `shear`.
    pub component: String,
    pub category_symbol: String,
    pub range_symbol: String,
    pub reference_cycles: f64,
    pub categories_mpa: Vec<f64>,
    /// First slope of the family's curve for the component.
    pub curve_slope_m: f64,
    pub transcription_note: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SpecimenResult {
    pub id: String,
    pub range_mpa: f64,
    pub cycles: f64,
    pub runout: bool,
    pub thickness_mm: Option<f64>,
    pub stress_ratio: Option<f64>,
    pub note: Option<String>,
    pub line: usize,
    /// log N minus the free-slope mean line at its range (failures only).
    pub residual_log10: Option<f64>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MethodInfo {
    /// `tolerance` or `prediction`.
    pub kind: String,
    pub name: String,
    pub survival: f64,
    pub confidence: Option<f64>,
    /// The factor k with the slope free and with it fixed, as text.
    pub formula_free: String,
    pub formula_fixed: String,
    pub source: String,
    /// How run-outs entered.
    pub runouts: String,
    /// Which evaluation supports the category and why.
    pub category_rule: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Evaluation {
    /// `free`, `fixed`, `free-censored`, `fixed-censored`.
    pub id: String,
    pub label: String,
    pub estimator: String,
    pub slope_fixed: bool,
    pub slope_m: f64,
    pub slope_std_error: Option<f64>,
    /// log a of log N = log a − m·log Δσ (base 10).
    pub intercept_log10: f64,
    /// Standard deviation s of log N about the line.
    pub std_dev_log10: f64,
    pub correlation: Option<f64>,
    /// Failures fitted.
    pub n: usize,
    /// Degrees of freedom of s.
    pub dof: usize,
    /// x̄ and Sxx of log Δσ of the failures.
    pub mean_log10_range: f64,
    pub sxx: f64,
    /// Range of the mean line at the reference cycles, MPa.
    pub mean_range_at_reference_mpa: f64,
    /// Where the characteristic line crosses the reference cycles.
    pub characteristic: Option<CharacteristicPoint>,
    pub ml: Option<MlInfo>,
    pub mean_line: Vec<LinePoint>,
    pub characteristic_line: Vec<LinePoint>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CharacteristicPoint {
    /// Δσ_k at the reference cycles, MPa.
    pub range_mpa: f64,
    /// log Δσ_k.
    pub log10_range: f64,
    /// The factor k of log N_k = log a − m·log Δσ − k·s there.
    pub factor_k: f64,
    /// h = 1/n + (x − x̄)²/Sxx (free slope) or 1/n (fixed slope) there.
    pub leverage: f64,
    /// n_e = 1/h.
    pub effective_n: f64,
    /// The quantile the factor is built from: t′ (tolerance) or t (prediction).
    pub quantile: f64,
    /// z_0.95 and δ = z_0.95·√n_e of the non-central t (tolerance method).
    pub normal_quantile: Option<f64>,
    pub noncentrality: Option<f64>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MlInfo {
    /// σ of log N, maximum-likelihood estimate.
    pub sigma_ml: f64,
    pub log_likelihood: f64,
    pub iterations: usize,
    pub converged: bool,
}

/// A point of a line on the S-N plane.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct LinePoint {
    pub range_mpa: f64,
    pub cycles: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CategoryResult {
    /// Id of the evaluation the category rests on.
    pub basis: String,
    pub basis_label: String,
    pub characteristic_range_mpa: Option<f64>,
    /// The largest listed category not above the characteristic range.
    pub category_mpa: Option<f64>,
    /// The characteristic range lies above the highest listed category.
    pub capped: bool,
    pub rule: String,
}

/// What a file is, in words, for messages about inputs and outputs.
pub fn describe_file_type(meta: &std::fs::Metadata) -> &'static str {
    let ft = meta.file_type();
    if ft.is_dir() {
        return "a folder";
    }
    if ft.is_file() {
        return "a regular file";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if ft.is_char_device() {
            return "a character device";
        }
        if ft.is_block_device() {
            return "a block device";
        }
        if ft.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

/// The date YYYY-MM-DD of a day count since 1970-01-01 (proleptic Gregorian; common
/// practice, the inverse of the civil-to-days count).
pub fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = if z >= 0 { z } else { z - 146_096 } / 146_097;
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// Today's date (UTC), or the day of `SOURCE_DATE_EPOCH` when it is set, so that a
/// rerun gives the same bytes.
pub fn today() -> String {
    let secs = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs() as i64)
                .unwrap_or(0)
        });
    let (y, m, d) = civil_from_days(secs.div_euclid(86_400));
    format!("{y:04}-{m:02}-{d:02}")
}

/// The standing cautions of a test evaluation.
pub fn cautions(edition: &str) -> Vec<String> {
    vec![
        format!(
            "The governing code and its National Annex (the family applies {edition}), the project specification and review by a licensed or chartered engineer prevail over this evaluation."
        ),
        "A category derived from tests rests on representative specimens: it holds only for details of the same geometry, material, welding procedure, weld quality, residual stresses and post-weld treatment as those tested, at representative stress ratios; judging that is the engineer's responsibility.".into(),
        "The statistical method and its factors were implemented by the seamlife developers from the sources named, partly from memory; check them, and the family's transcribed curve data, against the documents in force.".into(),
    ]
}

/// One line summary of the cautions for the command line.
pub const CAUTION_LINE: &str = "Caution: the governing code, the project specification and review by a licensed/chartered engineer prevail; a test-derived category rests on representative specimens and holds only for details like them.";

fn bad(set: &TestSet, line: usize, col: usize, msg: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(InputErrorKind::InvalidValue, set.location(line, col), msg).hint(hint),
    )
}

/// Evaluate a test set against a family.
pub fn evaluate(set: &TestSet, family: &Family, opts: &FitOptions) -> Result<FitResults, Error> {
    let curve = family.curves.get(opts.component);
    let curve_slope = curve.segments.first().map_or(3.0, |s| s.slope_m);
    let fixed_m = opts.fixed_slope_m.unwrap_or(curve_slope);
    let failures: Vec<&input::Specimen> = set.specimens.iter().filter(|s| !s.runout).collect();
    let runouts: Vec<&input::Specimen> = set.specimens.iter().filter(|s| s.runout).collect();
    if failures.len() < MIN_FAILURES {
        return Err(bad(
            set,
            set.runout_header.0,
            set.runout_header.1,
            format!(
                "{} failure{} and {} run-out{}: at least {MIN_FAILURES} failures are needed to fit log N on log Δσ",
                failures.len(),
                if failures.len() == 1 { "" } else { "s" },
                runouts.len(),
                if runouts.len() == 1 { "" } else { "s" },
            ),
            "run-outs do not enter the regression; test more specimens to failure",
        ));
    }
    let xf: Vec<f64> = failures.iter().map(|s| s.range_mpa.log10()).collect();
    let yf: Vec<f64> = failures.iter().map(|s| s.cycles.log10()).collect();
    let Some(free) = stats::fit_free(&xf, &yf) else {
        let last = failures[failures.len() - 1];
        return Err(bad(
            set,
            last.line,
            last.range_col,
            format!(
                "all {} failures were tested at one stress range ({} MPa): the slope of log N on log Δσ cannot be fitted",
                failures.len(),
                crate::report::templates::general(last.range_mpa)
            ),
            "test at two or more stress ranges, spread as widely as the detail allows",
        ));
    };
    let fixed = stats::fit_fixed(&xf, &yf, fixed_m)
        .ok_or_else(|| Error::Internal("fixed-slope fit of checked data failed".into()))?;
    let band = opts.method.band();
    let n_ref = family.reference_cycles;
    let y_ref = n_ref.log10();

    // The span of ranges the lines are drawn over.
    let ranges = set.specimens.iter().map(|s| s.range_mpa);
    let lo = ranges.clone().fold(f64::MAX, f64::min);
    let hi = ranges.fold(0.0, f64::max);
    let mut evaluations = vec![
        evaluation("free", "free slope", LS, &free, None, band, y_ref),
        evaluation(
            "fixed",
            &format!(
                "fixed slope m = {}",
                crate::report::templates::general(fixed_m)
            ),
            LS,
            &fixed,
            None,
            band,
            y_ref,
        ),
    ];
    let mut warnings = Vec::new();
    let mut notes = Vec::new();
    if opts.censored {
        let fpts: Vec<(f64, f64)> = xf.iter().copied().zip(yf.iter().copied()).collect();
        let rpts: Vec<(f64, f64)> = runouts
            .iter()
            .map(|s| (s.range_mpa.log10(), s.cycles.log10()))
            .collect();
        for (id, label, start, m) in [
            (
                "free-censored",
                "free slope, run-outs censored",
                &free,
                None,
            ),
            (
                "fixed-censored",
                "fixed slope, run-outs censored",
                &fixed,
                Some(fixed_m),
            ),
        ] {
            let ml = stats::fit_censored(&fpts, &rpts, m, start).ok_or_else(|| {
                Error::Internal("the maximum-likelihood fit found no finite optimum".into())
            })?;
            if !ml.converged {
                warnings.push(Warning {
                    code: "censored-not-converged".into(),
                    message: format!(
                        "the maximum-likelihood fit ({label}) did not settle within {} iterations; treat it with reserve",
                        ml.iterations
                    ),
                });
            }
            // σ scaled by √(n/(n − p)) so that without run-outs it equals the
            // least-squares s (common practice; no code gives a factor for censored data).
            let p = if m.is_some() { 1.0 } else { 2.0 };
            let nf = failures.len() as f64;
            let line = LineFit {
                intercept: ml.intercept,
                slope_m: ml.slope_m,
                std_dev: ml.sigma_ml * (nf / (nf - p)).sqrt(),
                correlation: None,
                slope_std_error: None,
                ..start.clone()
            };
            let label = match m {
                Some(m) => format!(
                    "fixed slope m = {}, run-outs censored",
                    crate::report::templates::general(m)
                ),
                None => label.to_string(),
            };
            evaluations.push(evaluation(id, &label, ML, &line, Some(&ml), band, y_ref));
        }
    }
    let basis = if opts.censored { 3 } else { 1 };

    // Line points over the tested ranges, widened to hold the characteristic range.
    let mut lo = lo;
    for e in &evaluations {
        if let Some(c) = &e.characteristic {
            lo = lo.min(c.range_mpa);
        }
    }
    let (lo, hi) = (lo / 1.3, hi * 1.3);
    let fits: Vec<LineFit> = evaluations
        .iter()
        .map(|e| line_of(e, &free))
        .collect::<Vec<_>>();
    for (e, f) in evaluations.iter_mut().zip(&fits) {
        let (mean, ch) = lines(f, band, lo, hi);
        e.mean_line = mean;
        e.characteristic_line = ch;
    }

    let listed = &curve.categories_mpa;
    let b = &evaluations[basis];
    let dk = b.characteristic.as_ref().map(|c| c.range_mpa);
    let (category_mpa, capped) = match dk {
        Some(v) => round_down(listed, v),
        None => (None, false),
    };
    let category_curve =
        category_mpa.map(|c| SnCurve::new(&curve.segments, family.reference_cycles, c).to_result());
    let sym = family.category_symbol.get(opts.component).clone();
    let rsym = family.range_symbol.get(opts.component).clone();
    let g = crate::report::templates::general;
    let category = CategoryResult {
        basis: b.id.clone(),
        basis_label: b.label.clone(),
        characteristic_range_mpa: dk,
        category_mpa,
        capped,
        rule: format!(
            "the characteristic range at {} cycles of the {} evaluation, rounded down to the next category listed by family {} for {} stress ({} … {} MPa)",
            crate::report::templates::sci_text(n_ref, 0),
            b.label,
            family.id,
            opts.component.as_str(),
            listed.iter().copied().fold(0.0, f64::max),
            listed.iter().copied().fold(f64::MAX, f64::min),
        ),
    };

    // Warnings.
    if failures.len() < RECOMMENDED_FAILURES {
        warnings.push(Warning {
            code: "few-failures".into(),
            message: format!(
                "{} failures remain for the regression; the IIW recommendations ask for at least {RECOMMENDED_FAILURES} (3.7, from memory): the factor k is large and the category uncertain",
                failures.len()
            ),
        });
    }
    let nmin = failures.iter().map(|s| s.cycles).fold(f64::MAX, f64::min);
    let nmax = failures.iter().map(|s| s.cycles).fold(0.0, f64::max);
    if n_ref < nmin || n_ref > nmax {
        warnings.push(Warning {
            code: "extrapolated".into(),
            message: format!(
                "the failures lie between {} and {} cycles; the characteristic range at {} cycles is extrapolated beyond them",
                crate::report::templates::sci_text(nmin, 2),
                crate::report::templates::sci_text(nmax, 2),
                crate::report::templates::sci_text(n_ref, 0)
            ),
        });
    }
    match dk {
        None => warnings.push(Warning {
            code: "no-characteristic-range".into(),
            message: format!(
                "the characteristic line of the {} evaluation does not reach {} cycles within three decades of range: no category can be read",
                b.label,
                crate::report::templates::sci_text(n_ref, 0)
            ),
        }),
        Some(v) if category_mpa.is_none() => warnings.push(Warning {
            code: "below-lowest-category".into(),
            message: format!(
                "the characteristic range {} MPa lies below the lowest listed category {} MPa: the tests support no category of family {}",
                g((v * 100.0).round() / 100.0),
                g(listed.iter().copied().fold(f64::MAX, f64::min)),
                family.id
            ),
        }),
        Some(v) if capped => warnings.push(Warning {
            code: "above-highest-category".into(),
            message: format!(
                "the characteristic range {} MPa lies above the highest listed category; the category is limited to {} MPa",
                g((v * 100.0).round() / 100.0),
                g(category_mpa.unwrap_or(0.0))
            ),
        }),
        _ => {}
    }
    let free_b = if opts.censored { 2 } else { 0 };
    if let (Some(f), Some(x)) = (
        evaluations[free_b].characteristic.as_ref(),
        evaluations[basis].characteristic.as_ref(),
    ) {
        if f.range_mpa < x.range_mpa {
            warnings.push(Warning {
                code: "free-slope-lower".into(),
                message: format!(
                    "with its own slope m = {} the tests give Δσ_k = {} MPa at {} cycles, below the fixed-slope {} MPa; check whether the fixed slope suits this detail",
                    g((evaluations[free_b].slope_m * 100.0).round() / 100.0),
                    g((f.range_mpa * 100.0).round() / 100.0),
                    crate::report::templates::sci_text(n_ref, 0),
                    g((x.range_mpa * 100.0).round() / 100.0),
                ),
            });
        }
    }
    if (fixed_m - curve_slope).abs() > 1e-12 {
        warnings.push(Warning {
            code: "slope-differs-from-family".into(),
            message: format!(
                "the fixed slope m = {} differs from the first slope m = {} of family {}'s {} curve, which a catalogue entry uses: the category is read at {} cycles only",
                g(fixed_m),
                g(curve_slope),
                family.id,
                opts.component.as_str(),
                crate::report::templates::sci_text(n_ref, 0)
            ),
        });
    }

    // Notes on what the data hold.
    notes.push(if runouts.is_empty() {
        "No run-outs.".to_string()
    } else if opts.censored {
        format!(
            "{} run-out{} enter the maximum-likelihood fits as censored results (the specimen would have failed later); the least-squares fits exclude them.",
            runouts.len(),
            if runouts.len() == 1 { "" } else { "s" }
        )
    } else {
        format!(
            "{} run-out{} are shown and excluded from the regression (option --censored treats them as censored by maximum likelihood).",
            runouts.len(),
            if runouts.len() == 1 { "" } else { "s" }
        )
    });
    notes.extend(thickness_notes(set, family));
    notes.extend(ratio_notes(set, opts.component));

    let free_fit = &evaluations[0];
    let specimens = set
        .specimens
        .iter()
        .map(|s| SpecimenResult {
            id: s.id.clone(),
            range_mpa: s.range_mpa,
            cycles: s.cycles,
            runout: s.runout,
            thickness_mm: s.thickness_mm,
            stress_ratio: s.stress_ratio,
            note: s.note.clone(),
            line: s.line,
            residual_log10: (!s.runout).then(|| {
                s.cycles.log10()
                    - (free_fit.intercept_log10 - free_fit.slope_m * s.range_mpa.log10())
            }),
        })
        .collect();
    Ok(FitResults {
        model_version: FIT_MODEL_VERSION,
        tool: ToolInfo {
            name: "seamlife".into(),
            version: env!("CARGO_PKG_VERSION").into(),
        },
        date: opts.date.clone(),
        input: FitInput {
            file_name: set.file_name.clone(),
            sha256: set.sha256.clone(),
            bytes: set.bytes,
        },
        family: FitFamily {
            id: family.id.clone(),
            title: family.title.clone(),
            edition: family.edition.clone(),
            data_version: family.data_version.clone(),
            origin: family.origin.clone(),
            component: opts.component.as_str().into(),
            category_symbol: sym,
            range_symbol: rsym,
            reference_cycles: n_ref,
            categories_mpa: listed.clone(),
            curve_slope_m: curve_slope,
            transcription_note: family.transcription_note.clone(),
        },
        specimens,
        failures: failures.len(),
        runouts: runouts.len(),
        method: method_info(opts, basis == 3),
        evaluations,
        category,
        category_curve,
        warnings,
        notes,
        cautions: cautions(&family.edition),
    })
}

const LS: &str = "least squares, failures only";
const ML: &str = "maximum likelihood, run-outs censored";

/// The largest listed value at or below `v`, and whether `v` lies above them all.
pub fn round_down(listed: &[f64], v: f64) -> (Option<f64>, bool) {
    let c = listed
        .iter()
        .copied()
        .filter(|c| *c <= v * (1.0 + 1e-12))
        .fold(None, |best: Option<f64>, c| {
            Some(best.map_or(c, |b| b.max(c)))
        });
    let top = listed.iter().copied().fold(f64::MIN, f64::max);
    (c, v > top)
}

/// The line an evaluation describes (its leverage comes from the failures' design).
fn line_of(e: &Evaluation, design: &LineFit) -> LineFit {
    LineFit {
        n: e.n,
        intercept: e.intercept_log10,
        slope_m: e.slope_m,
        std_dev: e.std_dev_log10,
        dof: e.dof,
        mean_x: design.mean_x,
        sxx: design.sxx,
        correlation: e.correlation,
        slope_std_error: e.slope_std_error,
        slope_fixed: e.slope_fixed,
    }
}

fn evaluation(
    id: &str,
    label: &str,
    estimator: &str,
    fit: &LineFit,
    ml: Option<&stats::CensoredFit>,
    band: Band,
    y_ref: f64,
) -> Evaluation {
    let characteristic = stats::characteristic_x(fit, band, y_ref).map(|x| {
        let h = fit.leverage(x);
        let k = stats::band_factor(band, h, fit.dof);
        let n_e = 1.0 / h;
        let (quantile, z) = match band {
            Band::Tolerance { survival, .. } => {
                (k * n_e.sqrt(), Some(stats::normal_quantile(survival)))
            }
            Band::Prediction { survival } => (stats::t_quantile(survival, fit.dof as f64), None),
        };
        CharacteristicPoint {
            range_mpa: 10f64.powf(x),
            log10_range: x,
            normal_quantile: z,
            noncentrality: z.map(|z| z * n_e.sqrt()),
            factor_k: k,
            leverage: h,
            effective_n: n_e,
            quantile,
        }
    });
    Evaluation {
        id: id.into(),
        label: label.into(),
        estimator: estimator.into(),
        slope_fixed: fit.slope_fixed,
        slope_m: fit.slope_m,
        slope_std_error: fit.slope_std_error,
        intercept_log10: fit.intercept,
        std_dev_log10: fit.std_dev,
        correlation: fit.correlation,
        n: fit.n,
        dof: fit.dof,
        mean_log10_range: fit.mean_x,
        sxx: fit.sxx,
        // Mean line at N_ref: log Δσ = (log a − log N_ref)/m
        mean_range_at_reference_mpa: 10f64.powf((fit.intercept - y_ref) / fit.slope_m),
        characteristic,
        ml: ml.map(|m| MlInfo {
            sigma_ml: m.sigma_ml,
            log_likelihood: m.log_likelihood,
            iterations: m.iterations,
            converged: m.converged,
        }),
        mean_line: Vec::new(),
        characteristic_line: Vec::new(),
    }
}

/// Mean and characteristic lines as points at 41 ranges from `lo` to `hi` (MPa).
fn lines(fit: &LineFit, band: Band, lo: f64, hi: f64) -> (Vec<LinePoint>, Vec<LinePoint>) {
    let (a, b) = (lo.log10(), hi.log10());
    let mut mean = Vec::new();
    let mut ch = Vec::new();
    for i in 0..=40 {
        let x = a + (b - a) * i as f64 / 40.0;
        let range_mpa = 10f64.powf(x);
        mean.push(LinePoint {
            range_mpa,
            cycles: 10f64.powf(fit.mean_y(x)),
        });
        ch.push(LinePoint {
            range_mpa,
            cycles: 10f64.powf(stats::characteristic_y(fit, band, x)),
        });
    }
    (mean, ch)
}

fn method_info(opts: &FitOptions, censored: bool) -> MethodInfo {
    let runouts = if censored {
        "shown; in the maximum-likelihood fits censored (a run-out at N says the life exceeds N), σ scaled by √(n/(n − p)) with n failures and p fitted line parameters; the band uses the failures' n and spread (a judgement: no code gives factors for censored data)".to_string()
    } else {
        "shown and excluded from the regression".to_string()
    };
    let category_rule = "The category is read from the fixed-slope characteristic line: the family's curve runs through the category with that slope (common practice; IIW recommendations 3.7, from memory). The free-slope line is shown for comparison and a warning is given where it lies lower.".to_string();
    match opts.method {
        Method::Tolerance => MethodInfo {
            kind: "tolerance".into(),
            name: "tolerance-limit method: lower one-sided tolerance limit, 95 % survival with 75 % confidence".into(),
            survival: SURVIVAL,
            confidence: Some(CONFIDENCE),
            formula_free: "log N_k = log a − m·log Δσ − k·s, k = t′(0.75; ν = n − 2, δ = z_0.95·√n_e)/√n_e, 1/n_e = 1/n + (log Δσ − x̄)²/Sxx".into(),
            formula_fixed: "log N_k = log a − m·log Δσ − k·s, k = t′(0.75; ν = n − 1, δ = z_0.95·√n)/√n".into(),
            source: "One-sided tolerance limit of a normal distribution through the non-central t distribution t′ (Owen 1962; factor tables in Natrella 1963, NBS Handbook 91, Table A-7, from memory), applied to log N about the regression line as the IIW recommendations (Hobbacher, 3.7) and the IIW guide on the statistical analysis of fatigue data describe characteristic values at 95 % survival and 75 % confidence (from memory).".into(),
            runouts,
            category_rule,
        },
        Method::Prediction => MethodInfo {
            kind: "prediction".into(),
            name: "prediction method: lower one-sided 95 % prediction limit (EN 1990 Annex D form)".into(),
            survival: SURVIVAL,
            confidence: None,
            formula_free: "log N_k = log a − m·log Δσ − k·s, k = t_0.95(n − 2)·√(1 + 1/n + (log Δσ − x̄)²/Sxx)".into(),
            formula_fixed: "log N_k = log a − m·log Δσ − k·s, k = t_0.95(n − 1)·√(1 + 1/n)".into(),
            source: "EN 1990 Annex D, D7.2 and Table D1 (coefficient of variation unknown): k_n = t_0.95(n − 1)·√(1 + 1/n), which D7.2 says is close to a 75 % confidence level (from memory); the free-slope form is the textbook prediction limit of a regression (common practice).".into(),
            runouts,
            category_rule,
        },
    }
}

fn thickness_notes(set: &TestSet, family: &Family) -> Vec<String> {
    let g = crate::report::templates::general;
    let t_ref = family.thickness.reference_mm;
    let ts: Vec<f64> = set
        .specimens
        .iter()
        .filter_map(|s| s.thickness_mm)
        .collect();
    if !set.has_thickness || ts.is_empty() {
        return vec![format!(
            "No specimen thickness is recorded: whether the family's size rule (reference thickness {} mm) matters cannot be checked.",
            g(t_ref)
        )];
    }
    let lo = ts.iter().copied().fold(f64::MAX, f64::min);
    let hi = ts.iter().copied().fold(0.0, f64::max);
    let mut v = Vec::new();
    let span = if lo == hi {
        format!("{} mm", g(lo))
    } else {
        format!("{} to {} mm (pooled in one regression)", g(lo), g(hi))
    };
    if ts.len() < set.specimens.len() {
        v.push(format!(
            "Thickness recorded for {} of {} specimens.",
            ts.len(),
            set.specimens.len()
        ));
    }
    if hi > t_ref {
        v.push(format!(
            "Specimens {span} are thicker than the family's reference thickness {} mm: the category holds for the tested thickness, and no size exponent is derived from these tests.",
            g(t_ref)
        ));
    } else {
        v.push(format!(
            "Specimens {span}, not above the family's reference thickness {} mm: for thicker members the size effect is not covered by these tests; the catalogue entry written carries no thickness exponent, so the engineer must judge it.",
            g(t_ref)
        ));
    }
    v
}

fn ratio_notes(set: &TestSet, component: Component) -> Vec<String> {
    let g = crate::report::templates::general;
    let rs: Vec<f64> = set
        .specimens
        .iter()
        .filter_map(|s| s.stress_ratio)
        .collect();
    if !set.has_stress_ratio || rs.is_empty() {
        return vec!["No stress ratio is recorded: whether the tests were run at a representative mean stress cannot be checked.".into()];
    }
    let lo = rs.iter().copied().fold(f64::MAX, f64::min);
    let hi = rs.iter().copied().fold(f64::MIN, f64::max);
    let span = if lo == hi {
        format!("R = {}", g(lo))
    } else {
        format!("R from {} to {} (pooled in one regression)", g(lo), g(hi))
    };
    let mut v = vec![format!("Tested at stress ratio {span}.")];
    if component == Component::Normal && hi < 0.5 {
        v.push("Small specimens hold lower residual stresses than welded structures; the IIW recommendations (3.7, from memory) ask for tests at a high stress ratio (R ≥ 0.5) or a correction of the result at low R. No such correction is applied here: the engineer must judge it.".into());
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounding_down_to_the_list() {
        // EN 1993-1-9 Fig. 7.1 list (from memory): 160, 140, 125, ... 36
        let en = [
            160.0, 140.0, 125.0, 112.0, 100.0, 90.0, 80.0, 71.0, 63.0, 56.0, 50.0, 45.0, 40.0, 36.0,
        ];
        assert_eq!(round_down(&en, 88.7), (Some(80.0), false));
        assert_eq!(round_down(&en, 90.0), (Some(90.0), false));
        assert_eq!(round_down(&en, 35.9), (None, false));
        assert_eq!(round_down(&en, 171.0), (Some(160.0), true));
    }

    #[test]
    fn dates_from_day_counts() {
        // 2026-11-20 is day 20777 after 1970-01-01 (common practice, proleptic Gregorian)
        assert_eq!(civil_from_days(20777), (2026, 11, 20));
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(11017), (2000, 3, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
    }
}
