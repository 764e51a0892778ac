//! One stress component of one detail: its category and corrections, the design curve,
//! every block's effective and design range, endurance and damage, the damage by
//! curve band, and the component's warnings.

use super::corrections::{mean_stress_factor, size_correction};
use super::curve::SnCurve;
use super::fmt_cycles;
use super::verify::{Part, Prepared};
use super::ResolvedBasis;
use crate::catalogue::{
    CatalogueEntry, ClassCurve, Component, Family, MeanStressCase, UtilisationForm,
};
use crate::histories::{ComponentHistory, DetailHistory};
use crate::input::{Amplitude, Detail};
use crate::results::*;

/// A component with its category and corrections resolved, ready to assess.
pub(super) struct ComponentSetup<'a> {
    pub(super) comp: Component,
    pub(super) category: f64,
    pub(super) category_source: String,
    pub(super) catalogue_category: Option<f64>,
    pub(super) size: SizeCorrection,
    pub(super) case_key: String,
    pub(super) case: &'a MeanStressCase,
    pub(super) history: std::borrow::Cow<'a, ComponentHistory>,
    /// Constant or variable amplitude as stated in the project file.
    pub(super) amplitude: Option<Amplitude>,
    /// The curve variant in force: the catalogue entry's own (normal stress), else the
    /// project's.
    pub(super) curve_variant: Option<String>,
    /// Where the variant comes from: `catalogue entry` or `project basis`.
    pub(super) curve_from: &'static str,
    /// Environment of the family's published classes: the detail's, else the project's.
    pub(super) environment: Option<String>,
    /// Stress concentration factor on the nominal stress (1 when none is given).
    pub(super) scf: f64,
    /// Factor on the given cycles: the AASHTO pair scales them to the truck-passage
    /// cycles (assess/pair.rs); 1 otherwise.
    pub(super) cycles_scale: f64,
    /// The crane route in place of a spectrum (EN 1991-3 2.12).
    pub(super) crane: Option<CraneRouteUsed>,
    /// The weld improvement in force on the normal-stress category.
    pub(super) improvement: Option<ImprovementUsed>,
}

/// Warnings and notes collected while a detail is assessed.
#[derive(Debug, Default)]
pub(super) struct Findings {
    pub(super) warnings: Vec<Warning>,
    pub(super) notes: Vec<String>,
}

impl Findings {
    pub(super) fn warn(&mut self, code: &str, message: String) {
        self.warnings.push(Warning {
            code: code.into(),
            message,
        });
    }
}

/// Resolve each present component's category (by hand or from the catalogue), size
/// correction and mean-stress case.
pub(super) fn component_setups<'a>(
    fam: &'a Family,
    basis: &ResolvedBasis,
    det: &Detail,
    entry: Option<&CatalogueEntry>,
    hist: &'a DetailHistory,
    fy: f64,
    found: &mut Findings,
) -> Vec<ComponentSetup<'a>> {
    let case_key = det
        .mean_stress_case
        .clone()
        .or_else(|| entry.and_then(|e| e.mean_stress_case.clone()))
        .unwrap_or_else(|| fam.mean_stress.default_case.clone());
    let case = &fam.mean_stress.cases[&case_key];
    let mut setups = Vec::new();
    for (comp, input, h) in [
        (Component::Normal, &det.normal, &hist.normal),
        (Component::Shear, &det.shear, &hist.shear),
    ] {
        let (Some(ci), Some(h)) = (input, h) else {
            continue;
        };
        let from_cat = entry.and_then(|e| e.category(comp));
        let (category, source) = match (ci.category, from_cat) {
            (Some(hand), Some(cat)) if hand != cat => {
                found.warn(
                    "category-contradicts-catalogue",
                    format!(
                        "{} category {hand} set by hand differs from the catalogue's {cat} for `{}`; the hand value is used",
                        comp.as_str(),
                        entry.map(|e| e.key.as_str()).unwrap_or("")
                    ),
                );
                (hand, "hand-over-catalogue")
            }
            (Some(hand), Some(_)) => (hand, "catalogue"),
            (Some(hand), None) => {
                found.notes.push(format!(
                    "{} category {hand} assigned by the engineer without a catalogue entry.",
                    comp.as_str()
                ));
                (hand, "hand")
            }
            (None, Some(cat)) => (cat, "catalogue"),
            (None, None) => (f64::NAN, "missing"),
        };
        // A weld improvement raises the as-welded normal-stress category (IIW 6.4).
        let improvement = match comp {
            Component::Normal => super::improvement::improved(fam, det, ci, category, fy),
            Component::Shear => None,
        };
        let category = improvement
            .as_ref()
            .map_or(category, |i| i.improved_category_mpa);
        if let Some(i) = &improvement {
            found.notes.push(super::improvement::note(i));
        }
        let size = size_correction(fam, det, entry, comp);
        // A catalogue entry's own curve replaces the project's normal-stress curve
        // (joint-classes/README.md, `curve_variant`).
        let entry_variant = match comp {
            Component::Normal => entry.and_then(|e| e.curve_variant.clone()),
            Component::Shear => entry.and_then(|e| e.shear_curve_variant.clone()),
        };
        let (curve_variant, curve_from) = match (
            improvement.as_ref().and_then(|i| i.curve_variant.clone()),
            entry_variant,
        ) {
            (Some(v), _) => (Some(v), "weld improvement"),
            (None, Some(v)) => (Some(v), "catalogue entry"),
            (None, None) => (basis.variant.clone(), "project basis"),
        };
        if comp == Component::Normal
            && entry.is_none()
            && size.exponent.is_none()
            && size.effective_thickness_mm > fam.thickness.reference_mm
        {
            found.warn(
                "size-effect-not-applied",
                format!(
                    "thickness {} mm exceeds the reference {} mm, but the category is set by hand without a catalogue entry and no `thickness_exponent` is given, so no size effect reduces it ({}); set `thickness_exponent` when the detail's table gives a size effect",
                    size.effective_thickness_mm, fam.thickness.reference_mm, fam.thickness.source
                ),
            );
        }
        if let Some(k) = det.scf.filter(|k| *k != 1.0) {
            found.notes.push(format!(
                "{} stress: the given nominal ranges carry a stress concentration factor SCF = {k}; the resistance is stated on nominal stress as ks·ΔσC/SCF (DNV-RP-C203 2.3, from memory).",
                comp.as_str()
            ));
        }
        let crane = ci
            .crane
            .as_ref()
            .and_then(|cr| super::crane::route(fam, comp, cr));
        let history = match &crane {
            Some(c) => std::borrow::Cow::Owned(super::crane::history(fam, basis, c)),
            None => std::borrow::Cow::Borrowed(h),
        };
        if let Some(c) = &crane {
            found.notes.push(super::crane::note(fam, comp, c, basis));
        }
        setups.push(ComponentSetup {
            comp,
            category,
            category_source: source.into(),
            catalogue_category: from_cat,
            size,
            case_key: case_key.clone(),
            case,
            history,
            amplitude: ci.amplitude,
            curve_variant,
            curve_from,
            environment: det
                .environment
                .clone()
                .or_else(|| basis.environment.clone()),
            scf: det.scf.unwrap_or(1.0),
            cycles_scale: super::pair::cycles_scale(
                basis,
                det,
                h.blocks.iter().map(|b| b.cycles_per_year).sum(),
            ),
            crane,
            improvement,
        });
    }
    setups
}

/// The damage of one counted cycle on one component: its own range and mean through
/// the mean-stress rule, γFf, and the design curve (what [`block_results`] and
/// [`damage_sum`] do to a block, done to every cycle in the streaming count).
#[derive(Debug, Clone)]
pub struct CycleDamageRule {
    case: MeanStressCase,
    normal: bool,
    gamma_ff: f64,
    design: SnCurve,
}

impl CycleDamageRule {
    /// The rule of component `comp` of detail `det` of yield strength `fy_mpa` (`None`
    /// when the detail has no such component).
    pub(super) fn of(
        fam: &Family,
        basis: &ResolvedBasis,
        det: &Detail,
        fy_mpa: f64,
        comp: Component,
    ) -> Option<CycleDamageRule> {
        let entry = det.detail.as_ref().and_then(|k| fam.entry(k));
        let any = DetailHistory {
            normal: Some(ComponentHistory::default()),
            shear: Some(ComponentHistory::default()),
        };
        let mut found = Findings::default();
        let setups = component_setups(fam, basis, det, entry, &any, fy_mpa, &mut found);
        let s = setups.iter().find(|s| s.comp == comp)?;
        let cv = curves(fam, basis, s);
        Some(CycleDamageRule {
            case: s.case.clone(),
            normal: comp == Component::Normal,
            gamma_ff: basis.gamma_ff.value,
            design: cv.design,
        })
    }
}

impl crate::histories::damage::CycleRule for CycleDamageRule {
    fn segments(&self) -> usize {
        self.design.slopes.len()
    }

    #[inline]
    fn effect(
        &self,
        c: &crate::histories::rainflow::Cycle,
    ) -> crate::histories::damage::CycleEffect {
        // the mean-stress rule on the cycle's own σmax, σmin (EN 1993-1-9 7.2.1(1), IIW f(R));
        // shear ranges count in full
        let f = if self.normal {
            mean_stress_factor(&self.case, Some(c.max), Some(c.min))
        } else {
            1.0
        };
        // Design range γFf·Δσ_eff (EN 1993-1-9 eq. (8.2) numerator)
        let design_range = self.gamma_ff * f * c.range;
        let (damage, segment) = match self.design.endurance(design_range) {
            // Palmgren-Miner term nᵢ/Nᵢ of one cycle (EN 1993-1-9 A.6)
            Some((n, seg)) => (c.count / n, Some(seg)),
            None => (0.0, None),
        };
        crate::histories::damage::CycleEffect {
            damage,
            segment,
            mean_rule_acted: (f - 1.0).abs() > 1e-15,
            design_range_mpa: design_range,
        }
    }
}

/// The characteristic and design curves of a component after size correction and γMf.
struct Curves {
    corrected: f64,
    design_ref: f64,
    characteristic: SnCurve,
    design: SnCurve,
    unit: SnCurve,
    ca_limit_ratio: Option<f64>,
    /// Curve reference range over the category, divided by the SCF (1 for a
    /// category-relative curve without SCF): what a category is worth on this curve.
    category_scale: f64,
    class: Option<ClassCurve>,
}

fn curves(fam: &Family, basis: &ResolvedBasis, s: &ComponentSetup) -> Curves {
    let def = fam.curves.get(s.comp);
    // A published class replaces the category-relative segments (joint-classes/README.md,
    // `classes`): its own slopes and knees, through its own range at the reference cycles.
    let class = class_curve(fam, basis, s);
    // The crane route's ΔσE,2 is checked on the first slope alone (EN 1993-1-9 eq. (8.2)
    // at 2·10^6 cycles): one open segment, no knee and no cut-off.
    let crane_segs = super::crane::segments(def);
    let segs = match &class {
        _ if s.crane.is_some() => &crane_segs[..],
        Some(c) => &c.segments[..],
        None => fam
            .segments(s.comp, s.curve_variant.as_deref())
            .unwrap_or(&def.segments),
    };
    let base = class.as_ref().map_or(s.category, |c| c.reference_range_mpa);
    // Resistance on nominal stress: ks·ΔσC/SCF (DNV-RP-C203 2.3: local stress =
    // SCF·nominal stress, from memory; SCF = 1 without one)
    let corrected = s.size.factor * base / s.scf;
    // Design resistance ΔσC,d = ks·ΔσC/γMf (EN 1993-1-9 eq. (8.2) denominator, 7.2.2)
    let design_ref = corrected / basis.gamma_mf.value;
    let characteristic = SnCurve::new(segs, fam.reference_cycles, corrected);
    let design = characteristic.scaled(1.0 / basis.gamma_mf.value);
    let unit = characteristic.scaled(1.0 / corrected);
    let ca_limit_ratio = def
        .constant_amplitude_limit_knee
        .filter(|_| class.as_ref().is_none_or(|c| c.constant_amplitude_limit))
        .and_then(|k| unit.knees.get(k - 1))
        .map(|k| k.1);
    Curves {
        corrected,
        design_ref,
        characteristic,
        design,
        unit,
        ca_limit_ratio,
        category_scale: base / s.category / s.scf,
        class,
    }
}

/// The published class curve of a component, in its environment and below the mean
/// by the project's number of standard deviations; `None` for category-relative curves.
fn class_curve(fam: &Family, basis: &ResolvedBasis, s: &ComponentSetup) -> Option<ClassCurve> {
    let k = basis.std_devs.as_ref().map_or(0.0, |f| f.value);
    fam.class_curve(s.comp, s.category, s.environment.as_deref(), k)
}

/// Every block with its mean-stress factor and design range (damage still to come);
/// also whether the mean-stress rule changed any range, and the largest design range.
fn block_results(
    s: &ComponentSetup,
    gff: f64,
    years: f64,
    lean: bool,
) -> (Vec<BlockResult>, Vec<(f64, f64)>, bool, f64) {
    let mut blocks = Vec::with_capacity(s.history.blocks.len());
    let mut loads = Vec::with_capacity(s.history.blocks.len());
    let mut acted = false;
    let mut max_range: f64 = 0.0;
    for b in &s.history.blocks {
        // The mean-stress rules act on normal stress only (EN 1993-1-9 7.2.1(1), IIW f(R)):
        // shear ranges count in full.
        let f = match s.comp {
            Component::Normal => mean_stress_factor(s.case, b.max_mpa, b.min_mpa),
            Component::Shear => 1.0,
        };
        // a cell summed cycle by cycle tells below whether the rule acted on its cycles
        if b.max_mpa.is_some() && b.damage_per_year.is_none() && (f - 1.0).abs() > 1e-15 {
            acted = true;
        }
        let eff = f * b.range_mpa;
        // Design range γFf·Δσ_eff (EN 1993-1-9 eq. (8.2) numerator)
        let design_range = gff * eff;
        max_range = max_range.max(gff * b.range_mpa);
        // the AASHTO pair's cycles from truck traffic (assess/pair.rs); factor 1 otherwise
        let cycles_per_year = s.cycles_scale * b.cycles_per_year;
        loads.push((design_range, cycles_per_year));
        let stress_ratio = match (b.max_mpa, b.min_mpa) {
            // stress ratio R = σmin/σmax (common practice)
            (Some(hi), Some(lo)) if hi != 0.0 => Some(lo / hi),
            _ => None,
        };
        blocks.push(BlockResult {
            // a lean result (summary rows only) keeps no block texts
            event: if lean {
                String::new()
            } else {
                b.event.to_string()
            },
            origin: if lean { String::new() } else { b.origin.into() },
            range_mpa: b.range_mpa,
            max_mpa: b.max_mpa,
            min_mpa: b.min_mpa,
            mean_mpa: b.mean_mpa(),
            // amplitude σa = Δσ/2 (common practice)
            amplitude_mpa: 0.5 * b.range_mpa,
            stress_ratio,
            mean_stress_factor: f,
            effective_range_mpa: eff,
            design_range_mpa: design_range,
            cycles_per_year,
            cycles_design_life: cycles_per_year * years,
            segment: None,
            endurance_cycles: None,
            // per year for now; over the design life in damage_sum
            damage: b.damage_per_year.unwrap_or(f64::NAN),
        });
    }
    acted |= s.history.exact.iter().any(|e| e.acted);
    (blocks, loads, acted, max_range)
}

/// Endurance and damage of every block; returns the damage, the cycles below the
/// cut-off and (cycles, damage) per curve segment.
fn damage_sum(
    blocks: &mut [BlockResult],
    design: &SnCurve,
    ca_applied: bool,
    exact: &[crate::histories::ExactDamage],
    years: f64,
) -> (f64, f64, Vec<(f64, f64)>) {
    let mut damage = 0.0;
    let mut below = 0.0;
    let mut bands: Vec<(f64, f64)> = vec![(0.0, 0.0); design.slopes.len()];
    // The cells of a series counted cycle by cycle: their damage is the sum over their
    // own cycles (each at its own range and mean), and their cycles go to the bands
    // each at its own design range.
    for e in exact {
        below += e.below * years;
        for (a, &(n, d)) in bands.iter_mut().zip(&e.bands) {
            a.0 += n * years;
            if !ca_applied {
                a.1 += d * years;
            }
        }
    }
    for b in blocks.iter_mut() {
        if !b.damage.is_nan() {
            // damage per year summed cycle by cycle, over the design life
            b.damage = if ca_applied { 0.0 } else { b.damage * years };
            if b.damage > 0.0 {
                // the equivalent endurance: n/N of the cell equals its cycles' damage
                b.endurance_cycles = Some(b.cycles_design_life / b.damage);
                b.segment = design
                    .endurance(b.design_range_mpa)
                    .map(|x| x.1)
                    .or(Some(design.slopes.len()));
            }
            damage += b.damage;
            continue;
        }
        b.damage = 0.0;
        match design.endurance(b.design_range_mpa) {
            Some((n, seg)) => {
                b.segment = Some(seg);
                b.endurance_cycles = Some(n);
                if !ca_applied {
                    // Palmgren-Miner: Dᵢ = nᵢ/Nᵢ (EN 1993-1-9 A.6, common practice)
                    b.damage = b.cycles_design_life / n;
                }
                bands[seg - 1].0 += b.cycles_design_life;
                bands[seg - 1].1 += b.damage;
            }
            None => below += b.cycles_design_life,
        }
        damage += b.damage;
    }
    (damage, below, bands)
}

fn knee_symbols(design: &SnCurve) -> Vec<String> {
    (0..design.knees.len())
        .map(|i| {
            design
                .knee_symbol(i)
                .map(str::to_string)
                .unwrap_or_else(|| format!("knee {}", i + 1))
        })
        .collect()
}

/// Damage by curve band, labelled by the knees that bound each band.
fn band_table(
    design: &SnCurve,
    sym: &str,
    knee_syms: &[String],
    bands: &[(f64, f64)],
    below: f64,
) -> Vec<BandDamage> {
    let mut damage_by_band: Vec<BandDamage> = bands
        .iter()
        .enumerate()
        .map(|(i, &(cyc, d))| {
            let upper = if i == 0 { None } else { knee_syms.get(i - 1) };
            let lower = knee_syms.get(i);
            let label = match (lower, upper) {
                (Some(l), None) => format!("{sym} ≥ {l} (m = {})", design.slopes[i]),
                (Some(l), Some(u)) => format!("{l} ≤ {sym} < {u} (m = {})", design.slopes[i]),
                (None, Some(u)) => format!("{sym} < {u} (m = {})", design.slopes[i]),
                (None, None) => format!("all ranges (m = {})", design.slopes[i]),
            };
            BandDamage {
                label,
                cycles_design_life: cyc,
                damage: d,
            }
        })
        .collect();
    if design.cut_off {
        damage_by_band.push(BandDamage {
            label: format!(
                "{sym} < {} (below cut-off, no damage)",
                knee_syms.last().cloned().unwrap_or_default()
            ),
            cycles_design_life: below,
            damage: 0.0,
        });
    }
    damage_by_band
}

/// A descriptive text, left empty in a lean result (summary rows need only numbers).
fn text(lean: bool, f: impl FnOnce() -> String) -> String {
    if lean {
        String::new()
    } else {
        f()
    }
}

/// Constant or variable amplitude, and why: the engineer's statement, else what the
/// blocks show. A counted record is always variable amplitude.
fn amplitude_of(
    s: &ComponentSetup,
    loads: &[(f64, f64)],
    found: &mut Findings,
) -> (Amplitude, String) {
    if s.crane.is_some() {
        return (
            Amplitude::Variable,
            "EN 1991-3 crane route: ΔσE,2 stands for the variable loading of the design life at 2·10⁶ cycles".into(),
        );
    }
    let counted =
        !s.history.counted.is_empty() || s.history.blocks.iter().any(|b| b.origin != "given");
    let one_range = !loads.is_empty()
        && loads
            .iter()
            .all(|(r, _)| (r - loads[0].0).abs() <= 1e-12 * loads[0].0);
    match s.amplitude {
        Some(Amplitude::Constant) if one_range && !counted => {
            (Amplitude::Constant, "stated in the project file".into())
        }
        Some(Amplitude::Constant) => {
            let (lo, hi) = loads
                .iter()
                .fold((f64::INFINITY, 0.0f64), |(lo, hi), &(r, _)| {
                    (lo.min(r), hi.max(r))
                });
            found.warn(
                "amplitude-not-constant",
                format!(
                    "{} loading is stated as constant amplitude, but its design ranges run from {lo:.2} to {hi:.2} MPa after the mean-stress rule; it is assessed as variable amplitude",
                    s.comp.as_str()
                ),
            );
            (
                Amplitude::Variable,
                "stated constant, but the design ranges differ".into(),
            )
        }
        Some(Amplitude::Variable) => (Amplitude::Variable, "stated in the project file".into()),
        None if counted => (
            Amplitude::Variable,
            "counted from a record: variable amplitude".into(),
        ),
        None if one_range => (
            Amplitude::Constant,
            "every block is given with one and the same design range".into(),
        ),
        None => (
            Amplitude::Variable,
            "the given blocks differ in design range".into(),
        ),
    }
}

/// The design resistance at n cycles for a check on the range under constant
/// amplitude: the design curve down to the constant-amplitude fatigue limit, and that
/// limit beyond it (constant amplitude at or below it does not damage).
fn resistance_at(design: &SnCurve, ca_limit: Option<f64>, n: f64) -> f64 {
    let on_curve = design.range_at(n);
    match ca_limit {
        Some(lim) => on_curve.max(lim),
        None => on_curve,
    }
}

/// The published class a component used, stated as its curve.
fn class_used(fam: &Family, c: &ClassCurve) -> CurveVariantUsed {
    let env = fam
        .environments
        .as_ref()
        .and_then(|e| e.cases.get(&c.environment));
    let mut description = format!(
        "class {} in published form, {}",
        c.class,
        env.map_or(c.environment.clone(), |e| e.name.clone())
    );
    if c.std_devs > 0.0 {
        description.push_str(&format!(
            ", design curve {} standard deviations of log N below the mean",
            c.std_devs
        ));
    }
    if !c.constant_amplitude_limit {
        description.push_str(", no constant-amplitude fatigue limit");
    }
    CurveVariantUsed {
        name: format!("{} {}", c.class, c.environment),
        description,
        from: "published class".into(),
        source: match env {
            Some(e) => format!("{}; {}", c.source, e.source),
            None => c.source.clone(),
        },
    }
}

/// Assess one component over the design life. Returns its result, what the detail's
/// verification needs of it, and whether a range lies beyond the validity limit.
pub(super) fn assess_component(
    fam: &Family,
    basis: &ResolvedBasis,
    s: &ComponentSetup,
    fy: f64,
    found: &mut Findings,
    lean: bool,
) -> (ComponentResult, Part, bool) {
    let gff = basis.gamma_ff.value;
    let gmf = basis.gamma_mf.value;
    let years = basis.design_life_years;
    let cv = curves(fam, basis, s);
    let ca_limit = cv.ca_limit_ratio.map(|r| r * cv.design_ref);
    let validity_limit = fy
        * match s.comp {
            Component::Normal => fam.validity.normal_fy_factor,
            Component::Shear => fam.validity.shear_fy_factor,
        };
    let (mut blocks, loads, acted, max_range) = block_results(s, gff, years, lean);
    let (amplitude, amplitude_basis) = amplitude_of(s, &loads, found);
    let constant_amplitude = amplitude == Amplitude::Constant;
    let ca_ratio = if constant_amplitude {
        cv.ca_limit_ratio
    } else {
        None
    };
    // The constant-amplitude fatigue limit acts on constant-amplitude loading only
    // (EN 1993-1-9 7.1 and Fig. 7.1; IIW knee point): every design range at or below it.
    let ca_applied = match ca_limit {
        Some(lim) => constant_amplitude && loads.iter().all(|(r, _)| *r <= lim),
        None => false,
    };
    let (damage, below, bands) =
        damage_sum(&mut blocks, &cv.design, ca_applied, &s.history.exact, years);
    let sym = fam.range_symbol.get(s.comp);
    let knee_syms = knee_symbols(&cv.design);
    let damage_by_band = if lean {
        Vec::new()
    } else {
        band_table(&cv.design, sym, &knee_syms, &bands, below)
    };
    let total_cycles: f64 = blocks.iter().map(|b| b.cycles_design_life).sum();
    if below > 0.0 && !ca_applied {
        found.warn(
            "cycles-below-cut-off",
            format!(
                "{} of {} {} cycles over the design life lie below the cut-off {} = {:.1} MPa and are ignored",
                fmt_cycles(below),
                fmt_cycles(total_cycles),
                s.comp.as_str(),
                knee_syms.last().cloned().unwrap_or_default(),
                cv.design.knees.last().map(|k| k.1).unwrap_or(0.0)
            ),
        );
    }
    if ca_applied {
        found.notes.push(format!(
            "Constant-amplitude {} loading at or below the constant-amplitude fatigue limit {:.1} MPa: no damage is counted.",
            s.comp.as_str(),
            ca_limit.unwrap_or(0.0)
        ));
    }
    let outside = max_range > validity_limit;
    if outside {
        found.warn(
            "validity-limit-exceeded",
            format!(
                "largest {} range γFf·{sym} = {:.1} MPa exceeds the validity limit {:.1} MPa ({}): outside the nominal-stress high-cycle method, a low-cycle fatigue check is needed",
                s.comp.as_str(),
                max_range,
                validity_limit,
                fam.validity.source
            ),
        );
    }
    let rule_can_act = s.case.compressive_fraction.is_some_and(|f| f < 1.0)
        || s.case
            .enhancement_points
            .as_ref()
            .is_some_and(|p| !p.is_empty());
    if s.comp == Component::Normal
        && s.crane.is_none()
        && rule_can_act
        && s.history.blocks.iter().any(|b| b.max_mpa.is_none())
    {
        found.warn(
            "mean-stress-not-applied",
            format!(
                "mean-stress case `{}` cannot act on normal-stress blocks given as a range only; the full range is used for them",
                s.case_key
            ),
        );
    }
    let (form, dlim, source) = if let (Some(_), Some(route)) = (&s.crane, &fam.crane_route) {
        (
            basis.check_form,
            basis.damage_limit.value,
            text(lean, || route.check_source.clone()),
        )
    } else if constant_amplitude {
        let (f, d, s) = &basis.constant_amplitude;
        (*f, *d, text(lean, || s.clone()))
    } else {
        (
            basis.check_form,
            basis.damage_limit.value,
            text(lean, || basis.check_source.clone()),
        )
    };
    let range_check = match form {
        UtilisationForm::RangeAtCycles => Some((
            loads.iter().map(|l| l.0).fold(0.0, f64::max),
            resistance_at(&cv.design, ca_limit, total_cycles),
        )),
        _ => None,
    };
    let m1 = cv.design.slopes[0];
    let damage_per_year = damage / years;
    let u = damage / dlim;
    // Equivalent range at the reference cycles, at the damage limit:
    // γFf·ΔσE,2 = ΔσC,d·(D/D_lim)^(1/m1) (EN 1993-1-9 eq. (8.2) with A.6; IIW equivalent range)
    let design_equivalent = cv.design_ref * u.powf(1.0 / m1);
    let result = ComponentResult {
        component: s.comp.as_str().into(),
        symbol: text(lean, || sym.clone()),
        category_symbol: text(lean, || fam.category_symbol.get(s.comp).clone()),
        category_mpa: s.category,
        category_source: s.category_source.clone(),
        catalogue_category_mpa: s.catalogue_category,
        size: if lean {
            SizeCorrection {
                source: String::new(),
                exponent_from: String::new(),
                ..s.size.clone()
            }
        } else {
            s.size.clone()
        },
        mean_stress: MeanStressCorrection {
            case: s.case_key.clone(),
            case_name: text(lean, || s.case.name.clone()),
            rule: if s.case.compressive_fraction.is_some() {
                "compressive-fraction".into()
            } else {
                "enhancement".into()
            },
            source: text(lean, || fam.mean_stress.source.clone()),
            applies: s.comp == Component::Normal,
            acted,
        },
        corrected_category_mpa: cv.corrected,
        gamma_mf: gmf,
        gamma_ff: gff,
        design_category_mpa: cv.design_ref,
        characteristic_curve: cv.characteristic.to_result_lean(lean),
        design_curve: cv.design.to_result_lean(lean),
        curve_variant: match &cv.class {
            Some(c) if !lean => Some(class_used(fam, c)),
            _ => s
                .curve_variant
                .as_ref()
                .filter(|v| !lean && fam.curves.get(s.comp).variants.contains_key(*v))
                .map(|v| CurveVariantUsed {
                    name: v.clone(),
                    description: fam.curves.get(s.comp).variants[v].name.clone(),
                    from: s.curve_from.into(),
                    source: fam.curves.get(s.comp).variants[v].source.clone(),
                }),
        },
        constant_amplitude_limit_mpa: ca_limit,
        amplitude: amplitude.as_str().into(),
        amplitude_basis,
        constant_amplitude_rule_applied: ca_applied,
        resistance_at_cycles_mpa: range_check.map(|r| r.1),
        blocks,
        damage_by_band,
        damage_per_year,
        damage,
        damage_limit: dlim,
        equivalent_slope_m: m1,
        equivalent_range_mpa: design_equivalent / gff,
        design_equivalent_range_mpa: design_equivalent,
        // (D/D_lim)^(1/m1) = γFf·ΔσE,2/ΔσC,d (EN 1993-1-9 eq. (8.2))
        range_ratio: u.powf(1.0 / m1),
        utilisation: u,
        life_years: if damage_per_year > 0.0 {
            // life = D_lim / (D per year) (Palmgren-Miner, linear in time)
            Some(dlim / damage_per_year)
        } else {
            None
        },
        required_category_mpa: None,
        cycles_design_life: total_cycles,
        cycles_below_cut_off: below,
        max_range_mpa: max_range,
        validity_limit_mpa: validity_limit,
        counted: if lean {
            Vec::new()
        } else {
            s.history.counted.clone()
        },
        environment: cv.class.as_ref().map(|c| c.environment.clone()),
        scf: (s.scf != 1.0).then_some(s.scf),
        crane_route: s.crane.clone(),
        improvement: s.improvement.clone(),
    };
    // The searches scale every design range. The cells of a record counted cycle by
    // cycle enter them as its cycles' design ranges in fine bins (histories::damage::
    // DesignRanges), each bin at the largest range counted in it (conservative) and,
    // for the other end of the bracket, at its smallest; other blocks at their own
    // ranges.
    let mut search = Vec::new();
    let mut search_low = Vec::new();
    for (l, b) in loads.iter().zip(&s.history.blocks) {
        if b.damage_per_year.is_none() {
            search.push(*l);
            search_low.push(*l);
        }
    }
    for e in &s.history.exact {
        for &(lo, hi, n) in &e.ranges {
            search.push((hi, n));
            search_low.push((lo, n));
        }
    }
    let low = (!s.history.exact.is_empty()).then(|| Prepared::new(&cv.unit, ca_ratio, search_low));
    let part = Part {
        comp: s.comp,
        m1,
        dlim,
        form,
        source,
        prepared: Prepared::new(&cv.unit, ca_ratio, search),
        low,
        design_ref: cv.design_ref,
        // what one MPa of category is worth on this curve: ks × (class reference
        // range / category) / SCF, so the required-category search meets the same curve
        size_factor: s.size.factor * cv.category_scale,
        range_check,
    };
    (result, part, outside)
}
