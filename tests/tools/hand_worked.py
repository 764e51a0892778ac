#!/usr/bin/env python3
"""Worksheet of the hand-worked check values used by the tests.

Every value is worked here from the formulas of the standards, in decimal
arithmetic to 40 digits, independently of seamlife: this script neither
imports nor runs seamlife and reads nothing it writes. The only input file is
the committed golden count of the reference library PyPI rainflow 3.2.0
(tests/data/rainflow/block_loading.cycles.csv).

Formulas (EN 1993-1-9:2005, from memory where the clause says so):
  ΔσC,d = ks·ΔσC/γMf                           eq. (8.2) denominator
  ΔσD   = ΔσC·(2/5)^(1/3)                      Fig. 7.1, eq. (7.2): knee at 5e6
  ΔσL   = ΔσD·(5/100)^(1/5)                    Fig. 7.1, eq. (7.3): cut-off at 1e8
  ΔτL   = ΔτC·(2/100)^(1/5)                    Fig. 7.2
  N     = 2e6·(ΔσC,d/Δσ)^3    for Δσ >= ΔσD,d   eq. (7.1)
  N     = 5e6·(ΔσD,d/Δσ)^5    for ΔσL,d <= Δσ < ΔσD,d   eq. (7.2)
  N     = 2e6·(ΔτC,d/Δτ)^5    for Δτ >= ΔτL,d   eq. (7.2) form of Fig. 7.2
  D     = Σ n/N                                Annex A, A.6 (Palmgren-Miner)
  γFf·ΔσE,2 = ΔσC,d·(D/D_lim)^(1/m1)           eq. (8.2) with A.6
  ks    = (25/t)^0.2                           7.2.2, Table 8.3
IIW (from memory): knee at 1e7, m = 3 above it, m = 22 (or 5) below it.

Run from the crate root: python3 tests/tools/hand_worked.py
"""
import csv
import os
from decimal import Decimal as D, getcontext

getcontext().prec = 40
HERE = os.path.dirname(os.path.abspath(__file__))


def root(x, n):
    return D(x) ** (D(1) / D(n))


def p(name, v):
    print(f"{name:48s} {D(v):.10g}")


def en_normal(cat, gmf=1):
    """(ΔσC,d, ΔσD,d, ΔσL,d) of the EN normal-stress curve."""
    c = D(cat) / D(gmf)
    d = c * root(D(2) / 5, 3)
    return c, d, d * root(D(5) / 100, 5)


def en_endurance(rng, cat, gmf=1):
    """N on the EN normal-stress design curve; None below the cut-off."""
    c, d, l = en_normal(cat, gmf)
    rng = D(rng)
    if rng >= d:
        return D(2e6) * (c / rng) ** 3
    if rng >= l:
        return D(5e6) * (d / rng) ** 5
    return None


def bisect(f, lo, hi):
    """Root of an increasing f on [lo, hi] by plain bisection."""
    for _ in range(200):
        mid = (lo + hi) / 2
        if f(mid) > 0:
            hi = mid
        else:
            lo = mid
    return lo


def engine():
    print("== src/assess/tests.rs")
    # single_block_by_hand: ΔσC 100, γMf 1.35, 1e6 cycles of 60 MPa, 25 years
    c, d, _ = en_normal(100, D("1.35"))
    n = en_endurance(60, 100, D("1.35"))
    dmg = D(1e6) / n
    e2 = 60 * root(D(1e6) / D(2e6), 3)
    p("single: ΔσC,d", c)
    p("single: ΔσD,d", d)
    p("single: N(60)", n)
    p("single: D", dmg)
    p("single: ΔσE,2 = 60·(1e6/2e6)^(1/3)", e2)
    p("single: ΔσE,2/ΔσC,d", e2 / c)
    p("single: D^(1/3)", root(dmg, 3))
    p("single: life = 25/D", 25 / dmg)
    p("single: reserve = D^(-1/3)", 1 / root(dmg, 3))
    p("single: least ΔσC = 1.35·ΔσE,2", D("1.35") * e2)

    # failing_detail_and_required_category: ΔσC 71, γMf 1.15, 1e7 cycles of 60 MPa
    c, d, _ = en_normal(71, D("1.15"))
    p("failing: ΔσC,d", c)
    p("failing: ΔσD,d", d)
    p("failing: D", D(1e7) / en_endurance(60, 71, D("1.15")))
    c90, d90, _ = en_normal(90, D("1.15"))
    p("failing: cat 90 ΔσD,d", d90)
    p("failing: cat 90 D", D(1e7) / en_endurance(60, 90, D("1.15")))
    p("failing: cat 100 ΔσD,d", en_normal(100, D("1.15"))[1])
    p("failing: reserve = ΔσD,d/60", d / 60)

    # constant_amplitude_below_limit_gives_no_damage: ΔσC 80, γMf 1.0, 50 MPa
    _, d, _ = en_normal(80)
    p("ca limit: ΔσD (80)", d)
    p("ca limit: reserve = ΔσD/50", d / 50)

    # cut_off_ignores_small_cycles_with_warning: ΔσC 100, γMf 1.0
    _, _, l = en_normal(100)
    p("cut-off: ΔσL (100)", l)
    p("cut-off: D(80 MPa, 1e4)", D(1e4) / en_endurance(80, 100))

    # size_effect_ks
    ks = root(D(25) / 40, 5)
    p("size: ks = (25/40)^0.2", ks)
    p("size: 90·ks", 90 * ks)

    # iiw_damage_ratio_and_gamma: FAT 90, γM 1.30, 1e6 cycles of 70 MPa
    fd = D(90) / D("1.3")
    knee = fd * root(D(2e6) / D(1e7), 3)
    n = D(2e6) * (fd / 70) ** 3
    dmg = D(1e6) / n
    r6 = fd * root(D(2), 3)
    p("iiw: FATd", fd)
    p("iiw: knee at 1e7", knee)
    p("iiw: N(70)", n)
    p("iiw: D", dmg)
    p("iiw: D/0.5", dmg / D("0.5"))
    p("iiw: ΔσR,d(1e6) = FATd·2^(1/3)", r6)
    p("iiw: 70/ΔσR,d(1e6)", 70 / r6)

    # iiw_m22_tail_and_m5_variant: FAT 100, γM 1.0, 40 MPa
    knee = 100 * root(D(2e6) / D(1e7), 3)
    p("iiw tail: knee (100)", knee)
    p("iiw tail: N(40), m = 22", D(1e7) * (knee / 40) ** 22)
    p("iiw tail: N(40), m = 5", D(1e7) * (knee / 40) ** 5)

    # en_interaction_eq_8_3
    ds = D(1e6) / (D(2e6) * (D(100) / 80) ** 3)
    dt = D(1e6) / (D(2e6) * (D(80) / 60) ** 5)
    p("interaction: D_sigma", ds)
    p("interaction: D_tau", dt)
    p("interaction: sum", ds + dt)
    p("interaction: D_sigma^(1/3)", root(ds, 3))
    p("interaction: D_tau^(1/5)", root(dt, 5))
    k = bisect(lambda k: ds * k**3 + dt * k**5 - 1, D(1), D(2))
    p("interaction: k, D_s·k^3 + D_t·k^5 = 1", k)
    p("interaction: life = 10/sum", 10 / (ds + dt))

    # variable_amplitude_below_limit_still_damages: ΔσC 80, γMf 1.0
    n50 = en_endurance(50, 80)
    n45 = en_endurance(45, 80)
    p("variable: N(50)", n50)
    p("variable: N(45)", n45)
    p("variable: 1e6/N(50)", D(1e6) / n50)
    p("variable: 1e6/N(45)", D(1e6) / n45)
    p("variable: D", D(1e6) / n50 + D(1e6) / n45)


def curves():
    print("== src/assess/curve.rs, src/report/plots/mod.rs, tests/plots.rs")
    for cat in (160, 100, 90, 80, 71, 36):
        _, d, l = en_normal(cat)
        p(f"EN ΔσC {cat}: ΔσD", d)
        p(f"EN ΔσC {cat}: ΔσL", l)
    for cat in (100, 80):
        p(f"EN ΔτC {cat}: ΔτL", cat * root(D(2) / 100, 5))
    p("EN ΔσC 100: N(50)", en_endurance(50, 100))
    p("EN ΔσC 100: range at 1e4", 100 * root(D(2e6) / D(1e4), 3))
    p("IIW knee/FAT = (2e6/1e7)^(1/3)", root(D(2e6) / D(1e7), 3))
    p("IIW FAT 90 knee", 90 * root(D(2e6) / D(1e7), 3))
    p("IIW (1e7/1e9)^(1/22)", root(D(1e7) / D(1e9), 22))
    for cat, g in ((100, "1.35"), (71, "1.35"), (90, "1.35"), (36, "1.35")):
        c, d, l = en_normal(cat, D(g))
        p(f"EN ΔσC {cat}/γMf {g}: ΔσC,d", c)
        p(f"EN ΔσC {cat}/γMf {g}: ΔσD,d", d)
        p(f"EN ΔσC {cat}/γMf {g}: ΔσL,d", l)


def plots():
    print("== tests/plots.rs fixtures (design range = range, γFf = 1.0)")

    def one(name, rng, n, cat, gmf):
        nn = en_endurance(rng, cat, gmf)
        if nn is None:
            p(f"{name}: {rng} MPa below the cut-off, D", 0)
            return D(0)
        p(f"{name}: N({rng})", nn)
        p(f"{name}: D({rng}, {n})", D(n) / nn)
        return D(n) / nn

    one("labels", 80, 1e5, 100, 1)
    one("labels", 30, 1e6, 100, 1)
    one("gamma", 60, 2e5, 100, D("1.35"))
    dmg = one("equivalent", 50, 4e5, 71, D("1.35"))
    c, _, _ = en_normal(71, D("1.35"))
    p("equivalent: γFf·ΔσE,2 = ΔσC,d·D^(1/3)", c * root(dmg, 3))
    p("equivalent: same as 50·(4e5/2e6)^(1/3)", 50 * root(D(4e5) / D(2e6), 3))
    p("equivalent: ΔσE,2/ΔσC,d = D^(1/3)", root(dmg, 3))
    p("shear: ΔτL (80)", 80 * root(D(2) / 100, 5))
    fk = 90 * root(D(2e6) / D(1e7), 3)
    n = D(1e7) * (fk / 40) ** 22
    p("iiw: N(40), m = 22 below the knee", n)
    p("iiw: D(40, 3e6)", D(3e6) / n)
    one("wide", 120, 1e3, 100, 1)
    one("wide", 4, 1e10, 100, 1)
    one("escape", 70, 2e5, 90, D("1.35"))


def series():
    print("== tests/series_cli.rs (detail category 56, γMf 1.35, 25 years)")
    cat, gmf, years = 56, D("1.35"), 25
    c, d, l = en_normal(cat, gmf)
    p("series: ΔσC,d", c)
    p("series: ΔσD,d", d)
    p("series: ΔσL,d", l)
    # ASTM E1049-85 example ×10 MPa as a repeating history: full cycles of 90, 70,
    # 40 and 30 MPa per repetition (counted by hand in the test), 2000 repetitions a year
    reps = D(2000) * years
    ds = D(0)
    for r in (90, 70, 40, 30):
        nn = en_endurance(r, cat, gmf)
        p(f"series: N({r})", nn)
        ds += reps / nn
    p("series: D of the record", ds)
    db = D(0)
    for r in (70, 45):
        db += D(9000) * years / en_endurance(r, cat, gmf)
    p("series: D of the blocks 70, 45 (9000/year)", db)
    p("series: D of both", ds + db)
    # golden count of PyPI rainflow 3.2.0, block_loading, half cycles, 2000 a year
    path = os.path.join(HERE, "..", "data", "rainflow", "block_loading.cycles.csv")
    dg = D(0)
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            nn = en_endurance(D(row["range"]), cat, gmf)
            if nn is not None:
                dg += D(row["count"]) * reps / nn
    p("series: D of the golden block_loading count", dg)


def counts():
    print("== tests/series_count.rs")
    p("σ = E·ε = 210000·1000e-6", D(210000) * D(1000) / D(10) ** 6)


def pow10(x):
    return D(10) ** D(x)


def published(log_a, m, n):
    """Range at n cycles on log N = log a - m·log Δσ (DNV-RP-C203 2.4, BS 7608)."""
    return pow10((D(log_a) - D(n).log10()) / D(m))


def dnv():
    print("== tests/codes.rs, DNV-RP-C203 (values from memory)")
    p("DNV D air: Δσ(2e6) = 10^((12.164 - log 2e6)/3)", published("12.164", 3, 2e6))
    p("DNV D air: knee at 1e7", published("12.164", 3, 1e7))
    p("DNV B1 air: Δσ(2e6), m = 4", published("15.117", 4, 2e6))
    p("DNV B1 air: knee at 1e7", published("15.117", 4, 1e7))
    p("DNV W3 air: knee at 1e7", published("10.970", 3, 1e7))
    p("DNV D seawater-cp: knee at 1e6", published("11.764", 3, 1e6))
    p("DNV D seawater-cp: Δσ(2e6) on line 1", published("11.764", 3, 2e6))
    p("DNV D free corrosion: N(100) = 10^(11.687 - 6)", pow10(D("11.687") - 6))
    p("DNV ks D t = 50: (25/50)^0.2", root(D(25) / 50, 5))
    p("DNV tubular t = 64: (32/64)^0.25", root(D(32) / 64, 4))
    # worked damage sum, D curve, 20 years: 80 MPa 1e4/year, 30 MPa 1e6/year
    knee = published("12.164", 3, 1e7)
    n80 = pow10("12.164") / D(80) ** 3
    n30 = D(1e7) * (knee / 30) ** 5
    p("DNV D air: N(80) on m = 3", n80)
    p("DNV D air: N(30) on m = 5 from the knee", n30)
    p("DNV D air: N(30) from log a2 15.606", pow10("15.606") / D(30) ** 5)
    dsum = D(20) * (D(1e4) / n80 + D(1e6) / n30)
    p("DNV D air: D over 20 years", dsum)
    k1 = published("11.764", 3, 1e6)
    m80 = D(1e6) * (k1 / 80) ** 5
    m30 = D(1e6) * (k1 / 30) ** 5
    p("DNV D seawater-cp: N(80) on m = 5 from the knee", m80)
    p("DNV D seawater-cp: D over 20 years", D(20) * (D(1e4) / m80 + D(1e6) / m30))
    f80 = pow10("11.687") / D(80) ** 3
    f30 = pow10("11.687") / D(30) ** 3
    p("DNV D free corrosion: D over 20 years", D(20) * (D(1e4) / f80 + D(1e6) / f30))


def bs7608():
    """BS 7608 (1993 class data, from memory): log N = log C0 - d·σ - m·log Sr up to
    1e7 cycles, slope m + 2 beyond; free corrosion: life / 2, slope m throughout;
    thickness (16/t)^0.25 for t > 16 mm."""
    def design_log(log_c0, sd, d=2):
        return D(log_c0) - D(d) * D(sd)

    def rng(log_c, m, n):
        return pow10((D(log_c) - D(n).log10()) / D(m))

    dd = design_log("12.6007", "0.2095")
    p("BS D: Sr(2e6), d = 2", rng(dd, 3, 2e6))
    p("BS D: Sr(1e7) knee, d = 2", rng(dd, 3, 1e7))
    p("BS B: Sr(1e7) knee, m = 4, d = 2", rng(design_log("15.3697", "0.1821"), 4, 1e7))
    p("BS C: Sr(2e6), m = 3.5, d = 2", rng(design_log("14.0342", "0.2041"), D("3.5"), 2e6))
    p("BS F: Sr(2e6), d = 3", rng(design_log("12.2370", "0.2183", 3), 3, 2e6))
    p("BS F: Sr(2e6), d = 0 (mean)", rng(D("12.2370"), 3, 2e6))
    p("BS S1: Sr(2e6), m = 8, d = 2", rng(design_log("23.3284", "0.5296"), 8, 2e6))
    p("BS ks t = 25: (16/25)^0.25", root(D(16) / 25, 4))
    # worked damage sum, class F, 20 years: 80 MPa 1e4/year, 30 MPa 1e6/year
    fl = design_log("12.2370", "0.2183")
    knee = rng(fl, 3, 1e7)
    n80 = pow10(fl) / D(80) ** 3
    n30 = D(1e7) * (knee / 30) ** 5
    p("BS F air: knee", knee)
    p("BS F air: D over 20 years", D(20) * (D(1e4) / n80 + D(1e6) / n30))
    # free corrosion: the file enters log C0 - log 2 = 11.93597 rounded to 11.9360
    fc = D("11.9360") - 2 * D("0.2183")
    p("BS F free corrosion: D over 20 years",
      D(20) * (D(1e4) * D(80) ** 3 + D(1e6) * D(30) ** 3) / pow10(fc))
    # constant amplitude 35 MPa, 1e6 a year, 20 years: below the knee, no damage in
    # air; with cathodic protection no limit, m + 2 = 5 from the knee
    p("BS F seawater-cp: D(35 MPa CA)", D(20) * D(1e6) / (D(1e7) * (knee / 35) ** 5))


def aashto():
    """AASHTO LRFD 6.6.1.2 (from memory): A[MPa³] = A[ksi³]·6.894757³;
    N = 365·Y·n·ADTT_SL; Fatigue I γ = 1.75, Fatigue II γ = 0.80."""
    k = D("6.894757")
    p("AASHTO A: A in MPa³ = 250e8·k³", D("250e8") * k ** 3)
    p("AASHTO A: log10 A[MPa³]", (D("250e8") * k ** 3).log10())
    p("AASHTO E′: A in MPa³ = 3.9e8·k³", D("3.9e8") * k ** 3)
    p("AASHTO A: (ΔF)TH = 24 ksi in MPa", 24 * k)
    p("AASHTO E′: (ΔF)TH = 2.6 ksi in MPa", D("2.6") * k)
    n = D(365) * 75 * 1 * 900
    p("AASHTO N = 365·75·1·900", n)
    # category E′ (curve log A = 11.1066 as in the family), spectrum 0.7×17 + 0.3×24 MPa
    eff = root(D("0.7") * D(17) ** 3 + D("0.3") * D(24) ** 3, 3)
    res = root(pow10("11.1066") / n, 3)
    r2 = D("0.8") * eff / res
    p("AASHTO E′: (Δf)eff", eff)
    p("AASHTO E′: (A/N)^(1/3)", res)
    p("AASHTO E′: Fatigue II ratio", r2)
    p("AASHTO E′: Fatigue II ratio cubed (D)", r2 ** 3)
    p("AASHTO E′: finite life 75/ratio³", 75 / r2 ** 3)
    p("AASHTO E′: Fatigue I ratio 1.75·24/17.9", D("1.75") * 24 / D("17.9"))
    # category C′, 31 MPa, ADTT 900 > 745: Fatigue I in force
    p("AASHTO C′: Fatigue I ratio 1.75·31/82.7", D("1.75") * 31 / D("82.7"))
    p("AASHTO C′: Fatigue II ratio", D("0.8") * 31 / root(pow10("12.159") / n, 3))
def catalogues():
    print("== tests/codes.rs, tests/crane_route.rs, tests/improvements.rs (values from memory)")
    p("EN bolt d = 36: (30/36)^0.25", root(D(30) / 36, 4))
    ref = D(90) / D("1.35")
    p("EN Table 8.7 (m = 5): D of 1e6 × 60 MPa", D(1e6) / (D(2e6) * (ref / 60) ** 5))
    p("EN crane S4 normal: 0.5·1.1·100·1.35/80", D("0.5") * D("1.1") * 100 * D("1.35") / 80)
    p("EN crane S4 shear: 0.66·1.1·40·1.35/80", D("0.66") * D("1.1") * 40 * D("1.35") / 80)
    a = D("0.5") * D("1.1") * 100 * D("1.35") / 80
    b = D("0.66") * D("1.1") * 40 * D("1.35") / 80
    p("EN crane S4: eq. (8.3) a^3 + b^5", a ** 3 + b ** 5)
    for fat in (104, 80):
        ref = D(fat) / D("1.3")
        knee = ref * (D(2e6) / D(1e7)) ** (D(1) / D(3))
        n30 = D(1e7) * (knee / 30) ** 22
        n80 = D(2e6) * (ref / 80) ** 3
        p(f"IIW FAT {fat}: D over 20 years, 1e4 × 80 + 1e6 × 30", D(20) * (D(1e4) / n80 + D(1e6) / n30))



def stud():
    """EN 1993-1-9 Table 8.5 shear studs (m = 8, from memory) against the ordinary
    shear curve (m = 5, Fig. 7.2): 1e6 cycles of 40 MPa, category 80, gamma_Mf 1.35."""
    print("== tests/codes.rs, EN shear studs (values from memory)")
    base = D(80) / (D("1.35") * D(40))
    n8 = D(2) * D(10) ** 6 * base ** 8
    p("EN stud: N on m = 8", n8)
    p("EN stud: D on m = 8", D(10) ** 6 / n8)
    p("EN lap joint shear: D on m = 5", D(10) ** 6 / (D(2) * D(10) ** 6 * base ** 5))

def reserve():
    """Reserve factor and required category of a counted record, cycle by cycle:
    the ASTM E1049-85 example ×10 MPa as a repeating history (full cycles of 90, 70,
    40 and 30 MPa from 50..-40, 40..-30, 30..-10 and 10..-20), 2000 repetitions a year
    over 25 years, category 56, γMf 1.35, D_lim = 1 (EN 1993-1-9 A.6)."""
    print("== tests/series_damage.rs, reserve factor and required category per cycle")
    reps = D(2000) * 25
    cycles = {
        # Δσ_eff = tensile part + 0.6·compressive part (EN 1993-1-9 7.2.1(1))
        "stress-relieved": [D(50) + D("0.6") * 40, D(40) + D("0.6") * 30,
                            D(30) + D("0.6") * 10, D(10) + D("0.6") * 20],
        "as-welded": [D(90), D(70), D(40), D(30)],
    }
    cats = [36, 40, 45, 50, 56, 63, 71, 80, 90, 100, 112, 125, 140, 160]
    for case, rs in cycles.items():
        def dmg(k, cat=56):
            total = D(0)
            for r in rs:
                nn = en_endurance(k * r, cat, D("1.35"))
                if nn is not None:
                    total += reps / nn
            return total
        p(f"{case}: D at k = 1", dmg(D(1)))
        p(f"{case}: reserve factor (D(k) = 1)", bisect(lambda k: dmg(k) - 1, D("0.1"), D(10)))
        first = next(c for c in cats if dmg(D(1), c) <= 1)
        p(f"{case}: lowest passing category", first)
        below = [c for c in cats if c < first]
        if below:
            p(f"{case}: D at the category below it ({below[-1]})", dmg(D(1), below[-1]))
        p(f"{case}: D at the lowest passing category", dmg(D(1), first))


if __name__ == "__main__":
    engine()
    curves()
    plots()
    series()
    counts()
    dnv()
    bs7608()
    aashto()
    catalogues()
    stud()
    reserve()
