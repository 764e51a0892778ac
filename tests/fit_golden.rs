//! The test evaluation against golden values from scipy.stats and numpy (written by
//! `tests/tools/fit_golden.py` into `tests/data/fit/golden.json`; the reference
//! library and its version are recorded in that file), and the factors against
//! published tables.

use std::path::{Path, PathBuf};

use seamlife::catalogue::{Component, Library};
use seamlife::fit::stats::{self, Band};
use seamlife::fit::{self, FitOptions, FitResults, Method};
use serde_json::Value;

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/fit")
        .join(name)
}

fn golden() -> Value {
    let text = std::fs::read_to_string(data("golden.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

fn num(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("golden value {key} in {v}"))
}

/// |a − b| ≤ tol·max(1, |b|).
fn close(a: f64, b: f64, tol: f64, what: &str) {
    assert!(
        (a - b).abs() <= tol * b.abs().max(1.0),
        "{what}: {a} vs golden {b} (tolerance {tol})"
    );
}

fn evaluate(file: &str, method: Method, censored: bool) -> FitResults {
    let lib = Library::load(None).unwrap();
    let fam = lib.get("en1993-1-9").unwrap();
    let set = fit::input::read_tests(&data(file)).unwrap();
    let opts = FitOptions {
        component: Component::Normal,
        fixed_slope_m: None,
        method,
        censored,
        date: "2026-12-02".into(),
    };
    fit::evaluate(&set, fam, &opts).unwrap()
}

fn eval<'a>(r: &'a FitResults, id: &str) -> &'a fit::Evaluation {
    r.evaluations.iter().find(|e| e.id == id).unwrap()
}

#[test]
fn regressions_match_scipy_linregress_and_numpy() {
    let g = golden();
    for s in g["series"].as_array().unwrap() {
        let file = s["file"].as_str().unwrap();
        let r = evaluate(file, Method::Tolerance, false);
        assert_eq!(r.failures as u64, s["failures"].as_u64().unwrap(), "{file}");
        assert_eq!(r.runouts as u64, s["runouts"].as_u64().unwrap(), "{file}");
        let free = eval(&r, "free");
        let gf = &s["free"];
        // scipy.stats.linregress on the failures (version in golden.json)
        close(free.slope_m, num(gf, "slope_m"), 1e-11, "slope");
        close(
            free.intercept_log10,
            num(gf, "intercept_log10"),
            1e-11,
            "intercept",
        );
        close(
            free.correlation.unwrap(),
            num(gf, "correlation"),
            1e-11,
            "r",
        );
        close(
            free.slope_std_error.unwrap(),
            num(gf, "slope_std_error"),
            1e-10,
            "se(m)",
        );
        close(free.std_dev_log10, num(gf, "std_dev_log10"), 1e-11, "s");
        close(
            free.mean_log10_range,
            num(gf, "mean_log10_range"),
            1e-12,
            "x̄",
        );
        close(free.sxx, num(gf, "sxx"), 1e-11, "Sxx");
        close(
            free.mean_range_at_reference_mpa,
            num(gf, "mean_range_at_reference_mpa"),
            1e-10,
            "mean at 2e6",
        );
        assert_eq!(free.dof as u64, gf["dof"].as_u64().unwrap());
        // numpy: fixed slope m = 3
        let fixed = eval(&r, "fixed");
        let gx = &s["fixed"];
        close(
            fixed.intercept_log10,
            num(gx, "intercept_log10"),
            1e-12,
            "fixed intercept",
        );
        close(
            fixed.std_dev_log10,
            num(gx, "std_dev_log10"),
            1e-11,
            "fixed s",
        );
        close(
            fixed.mean_range_at_reference_mpa,
            num(gx, "mean_range_at_reference_mpa"),
            1e-10,
            "fixed mean at 2e6",
        );
        assert_eq!(fixed.dof as u64, gx["dof"].as_u64().unwrap());
    }
}

#[test]
fn characteristic_ranges_and_categories_match_scipy() {
    let g = golden();
    for s in g["series"].as_array().unwrap() {
        let file = s["file"].as_str().unwrap();
        for (method, name) in [
            (Method::Tolerance, "tolerance"),
            (Method::Prediction, "prediction"),
        ] {
            let r = evaluate(file, method, false);
            for which in ["free", "fixed"] {
                let gc = &s["characteristic"][format!("{name}_{which}")];
                let c = eval(&r, which).characteristic.as_ref().unwrap();
                let what = format!("{file} {name} {which}");
                // scipy.stats.nct.ppf / t.ppf with scipy.optimize.brentq (golden.json)
                close(c.range_mpa, num(gc, "range_mpa"), 1e-9, &what);
                close(c.factor_k, num(gc, "factor_k"), 1e-9, &what);
                close(c.leverage, num(gc, "leverage"), 1e-9, &what);
                close(c.log10_range, num(gc, "log10_range"), 1e-11, &what);
            }
            // The category rests on the fixed slope, rounded down to the EN list.
            let gc = &s["characteristic"][format!("{name}_fixed")];
            assert_eq!(
                r.category.category_mpa,
                gc["category_mpa"].as_f64(),
                "{file} {name}"
            );
        }
    }
}

#[test]
fn factors_match_scipy_t_and_nct() {
    let g = golden();
    let s = &g["series"][0];
    let n = s["failures"].as_u64().unwrap() as f64;
    // t.ppf(0.95, n − 1), t.ppf(0.95, n − 2) (scipy, golden.json)
    close(
        stats::t_quantile(0.95, n - 1.0),
        num(s, "t_ppf_095_n_minus_1"),
        1e-10,
        "t n-1",
    );
    close(
        stats::t_quantile(0.95, n - 2.0),
        num(s, "t_ppf_095_n_minus_2"),
        1e-10,
        "t n-2",
    );
    let tol = Band::Tolerance {
        survival: 0.95,
        confidence: 0.75,
    };
    let pred = Band::Prediction { survival: 0.95 };
    close(
        stats::band_factor(tol, 1.0 / n, n as usize - 1),
        num(s, "tolerance_factor_fixed"),
        1e-10,
        "tolerance factor",
    );
    close(
        stats::band_factor(pred, 1.0 / n, n as usize - 1),
        num(s, "prediction_factor_fixed"),
        1e-10,
        "prediction factor",
    );
    for row in g["distributions"]["factors"].as_array().unwrap() {
        let n = row["n"].as_u64().unwrap() as usize;
        let h = 1.0 / n as f64;
        close(
            stats::band_factor(tol, h, n - 1),
            num(row, "tolerance"),
            1e-10,
            &format!("tolerance n = {n}"),
        );
        close(
            stats::band_factor(pred, h, n - 1),
            num(row, "prediction"),
            1e-10,
            &format!("prediction n = {n}"),
        );
    }
}

#[test]
fn noncentral_t_matches_scipy() {
    let g = golden();
    let d = &g["distributions"];
    for row in d["nct_ppf"].as_array().unwrap() {
        let (p, dof, delta) = (num(row, "p"), num(row, "dof"), num(row, "delta"));
        // scipy.stats.nct.ppf (version in golden.json)
        close(
            stats::nct_quantile(p, dof, delta),
            num(row, "value"),
            1e-9,
            &format!("nct.ppf({p}, {dof}, {delta})"),
        );
    }
    for row in d["nct_cdf"].as_array().unwrap() {
        let (t, dof, delta) = (num(row, "t"), num(row, "dof"), num(row, "delta"));
        // scipy.stats.nct.cdf
        let v = stats::nct_cdf(t, dof, delta);
        assert!(
            (v - num(row, "value")).abs() < 1e-11,
            "nct.cdf({t}, {dof}, {delta}) = {v} vs {}",
            num(row, "value")
        );
    }
    for row in d["t_ppf"].as_array().unwrap() {
        let (p, dof) = (num(row, "p"), num(row, "dof"));
        // scipy.stats.t.ppf
        close(
            stats::t_quantile(p, dof),
            num(row, "value"),
            1e-10,
            &format!("t.ppf({p}, {dof})"),
        );
    }
    // scipy.stats.norm.ppf(0.95)
    close(
        stats::normal_quantile(0.95),
        num(d, "norm_ppf_095"),
        1e-14,
        "z",
    );
}

#[test]
fn censored_fits_match_scipy_optimize() {
    let g = golden();
    for s in g["series"].as_array().unwrap() {
        if s.get("censored_free").is_none() {
            continue;
        }
        let file = s["file"].as_str().unwrap();
        let r = evaluate(file, Method::Tolerance, true);
        assert_eq!(r.category.basis, "fixed-censored");
        for (id, key) in [
            ("free-censored", "censored_free"),
            ("fixed-censored", "censored_fixed"),
        ] {
            let e = eval(&r, id);
            let gc = &s[key];
            let ml = e.ml.as_ref().unwrap();
            assert!(ml.converged, "{file} {id}");
            // scipy.optimize.minimize (Nelder-Mead, then BFGS) on the same likelihood
            close(e.intercept_log10, num(gc, "intercept"), 1e-6, id);
            close(e.slope_m, num(gc, "slope_m"), 1e-6, id);
            close(ml.sigma_ml, num(gc, "sigma_ml"), 1e-6, id);
            close(ml.log_likelihood, num(gc, "log_likelihood"), 1e-9, id);
            // The band scales σ_ML by √(n/(n − p)).
            let p = if id.starts_with("fixed") { 1.0 } else { 2.0 };
            let n = e.n as f64;
            close(
                e.std_dev_log10,
                ml.sigma_ml * (n / (n - p)).sqrt(),
                1e-12,
                id,
            );
        }
    }
}

#[test]
fn tolerance_factors_match_published_table() {
    // One-sided tolerance factors k for 95 % of the population with 75 % confidence:
    // Natrella, Experimental Statistics (NBS Handbook 91, 1963), Table A-7 (from memory),
    // printed to three decimals.
    let band = Band::Tolerance {
        survival: 0.95,
        confidence: 0.75,
    };
    for (n, k) in [(5, 2.463), (10, 2.104), (15, 1.991), (30, 1.869)] {
        let got = stats::band_factor(band, 1.0 / n as f64, n - 1);
        assert!((got - k).abs() < 0.0006, "n = {n}: {got} vs table {k}");
    }
}

#[test]
fn prediction_factors_match_en1990_table_d1() {
    // EN 1990 Annex D, Table D1, k_n for the 5 % fractile with Vx unknown (from memory),
    // printed to two decimals; n = 15 is not a column of that table.
    let band = Band::Prediction { survival: 0.95 };
    for (n, k) in [
        (3, 3.37),
        (4, 2.63),
        (5, 2.33),
        (6, 2.18),
        (10, 1.92),
        (30, 1.73),
    ] {
        let got = stats::band_factor(band, 1.0 / n as f64, n - 1);
        assert!((got - k).abs() < 0.006, "n = {n}: {got} vs table {k}");
    }
}

fn same_json(a: &Value, b: &Value, at: &str) {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            assert!(
                (x - y).abs() <= 1e-14 * y.abs().max(1e-300),
                "{at}: {x} vs {y}"
            );
        }
        (Value::Array(x), Value::Array(y)) => {
            assert_eq!(x.len(), y.len(), "{at}");
            for (i, (p, q)) in x.iter().zip(y).enumerate() {
                same_json(p, q, &format!("{at}[{i}]"));
            }
        }
        (Value::Object(x), Value::Object(y)) => {
            assert_eq!(x.len(), y.len(), "{at}");
            for (k, p) in x {
                same_json(p, &y[k], &format!("{at}.{k}"));
            }
        }
        _ => assert_eq!(a, b, "{at}"),
    }
}

#[test]
fn json_of_the_command_equals_the_library_model() {
    let out = assert_cmd::Command::cargo_bin("seamlife")
        .unwrap()
        .args(["fit", "--json", "--date", "2026-12-02"])
        .arg(data("set_b.csv"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let cli: Value = serde_json::from_slice(&out.stdout).unwrap();
    let lib = serde_json::to_value(evaluate("set_b.csv", Method::Tolerance, false)).unwrap();
    // serde_json reads floats to within an ulp or so; everything else must be equal.
    same_json(&cli, &lib, "$");
    let cli: FitResults = serde_json::from_value(cli).unwrap();
    // set B: seven failures, so the few-failures warning (IIW 3.7, from memory: 10).
    assert!(cli.warnings.iter().any(|w| w.code == "few-failures"));
    // the golden category for set B, tolerance method, fixed slope
    let g = golden();
    assert_eq!(
        cli.category.category_mpa,
        g["series"][1]["characteristic"]["tolerance_fixed"]["category_mpa"].as_f64()
    );
}
