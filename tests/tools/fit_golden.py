#!/usr/bin/env python3
"""Golden values for `seamlife fit` from scipy.stats and numpy.

Reads the three invented test series tests/data/fit/set_{a,b,c}.csv and writes
tests/data/fit/golden.json: for each series the least-squares regression of log10 N on
log10 range over the failures (scipy.stats.linregress), the fixed-slope fit (m = 3,
numpy), the Student t and non-central t quantiles (scipy.stats.t.ppf, nct.ppf), the
characteristic ranges at 2e6 cycles by the tolerance-limit and prediction methods
(slope fixed and free; the free-slope crossing found with scipy.optimize.brentq), the
EN 1993-1-9 category they round down to, and the maximum-likelihood fit with run-outs
censored (scipy.optimize.minimize). A table of t and non-central t quantiles and CDF
values for the distribution tests follows.

`cargo test` reads the JSON and needs no Python. Rerun only when a series or the
method changes, and commit the output:

    pip install numpy scipy
    python3 tests/tools/fit_golden.py
"""

import csv
import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
from scipy import optimize, stats

HERE = Path(__file__).resolve().parent
DATA = HERE.parent / "data" / "fit"
N_REF = 2.0e6
SURVIVAL = 0.95
CONFIDENCE = 0.75
FIXED_M = 3.0
# EN 1993-1-9 Fig. 7.1 normal-stress categories (as in joint-classes/en1993-1-9.yaml)
EN_CATEGORIES = [160, 140, 125, 112, 100, 90, 80, 71, 63, 56, 50, 45, 40, 36]


def read(name):
    rows = []
    with open(DATA / name, newline="") as f:
        lines = [l for l in f if l.strip() and not l.lstrip().startswith("#")]
    for r in csv.DictReader(lines, skipinitialspace=True):
        rows.append(
            {
                "id": r["specimen"].strip(),
                "range": float(r["range_mpa"]),
                "cycles": float(r["cycles"]),
                "runout": r["runout"].strip().lower() in ("true", "yes", "1"),
            }
        )
    return rows


def factor(method, h, dof):
    """k of log N_k = mean - k*s for leverage h on dof degrees of freedom."""
    if method == "tolerance":
        ne = 1.0 / h
        delta = stats.norm.ppf(SURVIVAL) * math.sqrt(ne)
        return stats.nct.ppf(CONFIDENCE, dof, delta) / math.sqrt(ne)
    return stats.t.ppf(SURVIVAL, dof) * math.sqrt(1.0 + h)


def characteristic(method, loga, m, s, dof, n, xbar, sxx, fixed):
    y = math.log10(N_REF)

    def h(x):
        return 1.0 / n if fixed else 1.0 / n + (x - xbar) ** 2 / sxx

    def g(x):
        return loga - m * x - factor(method, h(x), dof) * s - y

    xm = (loga - y) / m
    lo = xm
    while g(lo) < 0:
        lo -= 0.002
    x = optimize.brentq(g, lo, xm, xtol=1e-14, rtol=4 * np.finfo(float).eps)
    hx = h(x)
    return {
        "log10_range": x,
        "range_mpa": 10**x,
        "factor_k": factor(method, hx, dof),
        "leverage": hx,
    }


def category(v):
    below = [c for c in EN_CATEGORIES if c <= v]
    return max(below) if below else None


def censored_ml(xf, yf, xr, yr, fixed_m, start):
    def nll(p):
        if fixed_m is None:
            a, m, ls = p
        else:
            (a, ls), m = p, fixed_m
        sig = math.exp(ls)
        zf = (yf - (a - m * xf)) / sig
        zr = (yr - (a - m * xr)) / sig
        return float(
            np.sum(ls + 0.5 * zf**2 + 0.5 * math.log(2 * math.pi))
            - np.sum(stats.norm.logsf(zr))
        )

    res = optimize.minimize(
        nll, start, method="Nelder-Mead",
        options={"xatol": 1e-12, "fatol": 1e-14, "maxiter": 100000, "maxfev": 200000},
    )
    res = optimize.minimize(nll, res.x, method="BFGS", options={"gtol": 1e-10})
    p = res.x
    if fixed_m is None:
        return {"intercept": p[0], "slope_m": p[1], "sigma_ml": math.exp(p[2]), "log_likelihood": -res.fun}
    return {"intercept": p[0], "slope_m": fixed_m, "sigma_ml": math.exp(p[1]), "log_likelihood": -res.fun}


def series(name):
    rows = read(name)
    fail = [r for r in rows if not r["runout"]]
    runs = [r for r in rows if r["runout"]]
    x = np.log10([r["range"] for r in fail])
    y = np.log10([r["cycles"] for r in fail])
    n = len(x)
    lr = stats.linregress(x, y)
    resid = y - (lr.intercept + lr.slope * x)
    s_free = math.sqrt(float(np.sum(resid**2)) / (n - 2))
    xbar = float(np.mean(x))
    sxx = float(np.sum((x - xbar) ** 2))
    a_fixed = float(np.mean(y + FIXED_M * x))
    s_fixed = math.sqrt(float(np.sum((y + FIXED_M * x - a_fixed) ** 2)) / (n - 1))
    out = {
        "file": name,
        "specimens": len(rows),
        "failures": n,
        "runouts": len(runs),
        "free": {
            "slope_m": -lr.slope,
            "intercept_log10": lr.intercept,
            "correlation": lr.rvalue,
            "slope_std_error": lr.stderr,
            "std_dev_log10": s_free,
            "mean_log10_range": xbar,
            "sxx": sxx,
            "dof": n - 2,
            "mean_range_at_reference_mpa": 10 ** ((lr.intercept - math.log10(N_REF)) / -lr.slope),
        },
        "fixed": {
            "slope_m": FIXED_M,
            "intercept_log10": a_fixed,
            "std_dev_log10": s_fixed,
            "dof": n - 1,
            "mean_range_at_reference_mpa": 10 ** ((a_fixed - math.log10(N_REF)) / FIXED_M),
        },
        "t_ppf_095_n_minus_1": stats.t.ppf(0.95, n - 1),
        "t_ppf_095_n_minus_2": stats.t.ppf(0.95, n - 2),
        "tolerance_factor_fixed": stats.nct.ppf(CONFIDENCE, n - 1, stats.norm.ppf(SURVIVAL) * math.sqrt(n)) / math.sqrt(n),
        "prediction_factor_fixed": stats.t.ppf(SURVIVAL, n - 1) * math.sqrt(1 + 1 / n),
        "characteristic": {},
    }
    for method in ("tolerance", "prediction"):
        for which, fit in (("free", out["free"]), ("fixed", out["fixed"])):
            c = characteristic(
                method, fit["intercept_log10"], fit["slope_m"], fit["std_dev_log10"],
                fit["dof"], n, xbar, sxx, which == "fixed",
            )
            c["category_mpa"] = category(c["range_mpa"])
            out["characteristic"][f"{method}_{which}"] = c
    if runs:
        xr = np.log10([r["range"] for r in runs])
        yr = np.log10([r["cycles"] for r in runs])
        out["censored_free"] = censored_ml(
            x, y, xr, yr, None, [lr.intercept, -lr.slope, math.log(s_free)])
        out["censored_fixed"] = censored_ml(
            x, y, xr, yr, FIXED_M, [a_fixed, math.log(s_fixed)])
    return out


def distributions():
    ppf = []
    for p, df, delta in [
        (0.75, 1, 2.3262), (0.75, 2, 2.849), (0.75, 4, 3.678), (0.75, 9, 5.2016),
        (0.75, 14, 6.3706), (0.75, 29, 9.0094), (0.75, 99, 16.4485), (0.75, 499, 36.78),
        (0.95, 9, 5.2016), (0.05, 9, 5.2016), (0.5, 3, -2.0), (0.75, 6, 0.0),
        (0.999, 5, 3.0), (0.01, 20, -1.5),
    ]:
        ppf.append({"p": p, "dof": df, "delta": delta, "value": float(stats.nct.ppf(p, df, delta))})
    cdf = []
    for t, df, delta in [
        (7.0, 9, 5.2016), (2.0, 4, 3.678), (0.5, 3, 1.0), (-1.0, 5, 0.5),
        (40.0, 99, 36.0), (3.0, 1, 2.0), (-2.0, 12, -3.0),
    ]:
        cdf.append({"t": t, "dof": df, "delta": delta, "value": float(stats.nct.cdf(t, df, delta))})
    tq = [{"p": p, "dof": df, "value": float(stats.t.ppf(p, df))}
          for p, df in [(0.95, 1), (0.95, 3), (0.95, 8), (0.95, 28), (0.975, 10), (0.75, 4)]]
    # one-sided tolerance factors k = nct.ppf(0.75, n-1, z*sqrt(n))/sqrt(n) and
    # prediction factors k = t.ppf(0.95, n-1)*sqrt(1+1/n) for the table checks
    k = []
    for n in (3, 5, 10, 15, 20, 30, 50):
        k.append({
            "n": n,
            "tolerance": float(stats.nct.ppf(0.75, n - 1, stats.norm.ppf(0.95) * math.sqrt(n)) / math.sqrt(n)),
            "prediction": float(stats.t.ppf(0.95, n - 1) * math.sqrt(1 + 1 / n)),
        })
    return {"nct_ppf": ppf, "nct_cdf": cdf, "t_ppf": tq, "factors": k,
            "norm_ppf_095": float(stats.norm.ppf(0.95))}


def main():
    golden = {
        "generator": "tests/tools/fit_golden.py",
        "reference": f"scipy {scipy.__version__}, numpy {np.__version__}, Python {platform.python_version()}",
        "reference_cycles": N_REF,
        "fixed_slope_m": FIXED_M,
        "series": [series(n) for n in ("set_a.csv", "set_b.csv", "set_c.csv")],
        "distributions": distributions(),
    }
    text = json.dumps(golden, indent=1, sort_keys=True) + "\n"
    (DATA / "golden.json").write_text(text)
    print(f"wrote {DATA / 'golden.json'} ({golden['reference']})")


if __name__ == "__main__":
    main()
