//! Semantic checks of a parsed project file against the curve family: everything that
//! serde's schema cannot say (positive numbers, known names, unique ids, calendar
//! dates). Each problem carries its path in the document, located only when reported.

use std::collections::BTreeMap;

use super::schema::*;
use crate::catalogue::{Component, Family, Library};
use crate::error::InputErrorKind;
use crate::files::locate::YamlPath;
use crate::files::{short_num, suggest};

const STRESS_WHY: &str = "values are in MPa; no steel detail sees more than a few thousand MPa, so check the unit (Pa or kPa given as MPa?)";
const COUNT_WHY: &str = "1e15 cycles is beyond any structure's loading; check the number (a typing slip in the exponent?)";

/// Largest stress magnitude accepted in a block (range, mean, maximum, minimum) and
/// for a yield strength, MPa. The strongest structural steels reach about 1 500 MPa;
/// 1e5 MPa is far beyond any of them, so a larger value is a unit mistake (Pa or kPa
/// for MPa), and beyond it damage sums overflow.
pub const MAX_STRESS_MPA: f64 = 1e5;
/// Largest cycle count per occurrence of an event, and largest occurrences per year
/// (each alone; their product is bounded by `histories::MAX_CYCLES_PER_YEAR`).
pub const MAX_COUNT: f64 = 1e15;
/// Longest design life, years. Codes design for 25 to 120 years; 10 000 years is far
/// beyond any structure, and longer lives overflow the cycle sums.
pub const MAX_DESIGN_LIFE_YEARS: f64 = 1e4;
/// Thickest plate, mm: 10 m of steel is no plate of a welded detail.
pub const MAX_THICKNESS_MM: f64 = 1e4;
/// Largest stress concentration factor accepted on a detail (common practice: SCFs of
/// tubular joints rarely exceed 20).
pub const MAX_SCF: f64 = 50.0;
/// Hours in a leap year (366 × 24): no event runs longer in a year.
pub const MAX_HOURS_PER_YEAR: f64 = 8784.0;
/// Partial factors and the damage limit overridden by hand must lie in this range
/// (codes use about 1.0 to 1.35 and damage limits 0.2 to 1.0; outside 0.1 to 10 the
/// value is a typing mistake).
pub const FACTOR_RANGE: (f64, f64) = (0.1, 10.0);
/// Stiffest modulus accepted for a strain record, MPa (steel is 210 000; 1e7 MPa is
/// stiffer than any material).
pub const MAX_MODULUS_MPA: f64 = 1e7;
/// Finest bin width of a counted series, MPa (strain gauges resolve about 0.2 MPa;
/// finer bins carry no information and can make one cell per cycle).
pub const MIN_BIN_WIDTH_MPA: f64 = 1e-3;
/// Most range bins and mean bins of a counted series (more cannot be read in a figure).
pub const MAX_BINS: u32 = 4096;

/// Longest texts, in characters. The reference and revision stand in every page header
/// and the output file name; ids and names stand in table cells; the rest are printed
/// in full in the package, where a page must still hold them.
pub const MAX_ID_CHARS: usize = 64;
pub const MAX_REFERENCE_CHARS: usize = 64;
pub const MAX_REVISION_CHARS: usize = 16;
pub const MAX_NAME_CHARS: usize = 120;
pub const MAX_LINE_CHARS: usize = 300;
pub const MAX_PARAGRAPH_CHARS: usize = 2000;

/// A problem found after parsing, located by its path in the document.
pub(super) struct Problem {
    pub(super) path: YamlPath,
    pub(super) kind: InputErrorKind,
    pub(super) message: String,
    pub(super) hint: Option<String>,
}

mod traffic;

struct Checker {
    problems: Vec<Problem>,
}

impl Checker {
    fn push(
        &mut self,
        path: YamlPath,
        kind: InputErrorKind,
        message: String,
        hint: Option<String>,
    ) {
        self.problems.push(Problem {
            path,
            kind,
            message,
            hint,
        });
    }

    fn positive(&mut self, path: impl Fn() -> YamlPath, what: &str, v: f64) {
        if v.is_nan() {
            self.push(
                path(),
                InputErrorKind::InvalidValue,
                format!("{what} is not a number (NaN)"),
                Some("give a finite positive number".into()),
            );
        } else if !v.is_finite() {
            self.push(
                path(),
                InputErrorKind::InvalidValue,
                format!("{what} is infinite"),
                Some("give a finite positive number".into()),
            );
        } else if v <= 0.0 {
            self.push(
                path(),
                InputErrorKind::InvalidValue,
                format!("{what} must be greater than zero, got {}", short_num(v)),
                Some(if what.contains("range") {
                    "a stress range is max minus min and is always positive; give the sign through max_mpa/min_mpa".into()
                } else {
                    "give a finite positive number".into()
                }),
            );
        }
    }

    /// A positive number no larger than `max`; `why` says what a larger one means.
    fn positive_upto(
        &mut self,
        path: impl Fn() -> YamlPath,
        what: &str,
        v: f64,
        max: f64,
        why: &str,
    ) {
        let before = self.problems.len();
        self.positive(&path, what, v);
        if self.problems.len() == before && v > max {
            self.push(
                path(),
                InputErrorKind::OutOfRange,
                format!(
                    "{what} is {}, above the largest accepted {}",
                    short_num(v),
                    short_num(max)
                ),
                Some(why.into()),
            );
        }
    }

    /// A finite number of magnitude at most `max`.
    fn finite_upto(
        &mut self,
        path: impl Fn() -> YamlPath,
        what: &str,
        v: f64,
        max: f64,
        why: &str,
    ) {
        let before = self.problems.len();
        self.finite(&path, what, v);
        if self.problems.len() == before && v.abs() > max {
            self.push(
                path(),
                InputErrorKind::OutOfRange,
                format!(
                    "{what} is {}, beyond the accepted ±{}",
                    short_num(v),
                    short_num(max)
                ),
                Some(why.into()),
            );
        }
    }

    /// A text of at most `max` characters.
    fn text_len(
        &mut self,
        path: impl Fn() -> YamlPath,
        what: &str,
        v: &str,
        max: usize,
        why: &str,
    ) {
        let n = v.chars().count();
        if n > max {
            self.push(
                path(),
                InputErrorKind::TooLong,
                format!("{what} is {n} characters long; at most {max} are allowed"),
                Some(why.into()),
            );
        }
    }

    fn finite(&mut self, path: impl Fn() -> YamlPath, what: &str, v: f64) {
        if !v.is_finite() {
            self.push(
                path(),
                InputErrorKind::InvalidValue,
                format!("{what} must be a finite number, got {}", short_num(v)),
                Some("give a finite number in MPa".into()),
            );
        }
    }

    fn option_name(
        &mut self,
        path: impl Fn() -> YamlPath,
        what: &str,
        name: &str,
        options: Vec<String>,
    ) {
        if !options.iter().any(|o| o == name) {
            let hint = match suggest(name, options.iter().map(|s| s.as_str())) {
                Some(n) => format!("did you mean `{n}`?"),
                None if options.is_empty() => format!("this family defines no {what}s"),
                None => format!("this family defines: {}", options.join(", ")),
            };
            self.push(
                path(),
                InputErrorKind::UnknownOption,
                format!("unknown {what} `{name}`"),
                Some(hint),
            );
        }
    }
}

/// A date YYYY-MM-DD with a real month and day (years 1970 to 9999).
pub(crate) fn valid_iso_date(s: &str) -> bool {
    let b = s.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return false;
    }
    let num = |r: std::ops::Range<usize>| s[r].parse::<u32>().ok();
    match (num(0..4), num(5..7), num(8..10)) {
        (Some(y), Some(m), Some(d)) => {
            let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
            let days = [
                31,
                if leap { 29 } else { 28 },
                31,
                30,
                31,
                30,
                31,
                31,
                30,
                31,
                30,
                31,
            ];
            (1970..=9999).contains(&y)
                && (1..=12).contains(&m)
                && d >= 1
                && d <= days[m as usize - 1]
        }
        _ => false,
    }
}

pub(super) fn check(file: &ProjectFile, library: &Library) -> Vec<Problem> {
    let mut c = Checker {
        problems: Vec::new(),
    };
    let family = library.get(&file.basis.family);
    check_header(&mut c, file);
    check_basis(&mut c, file, library, family);
    check_materials(&mut c, file);
    check_events_and_tables(&mut c, file);
    check_details(&mut c, file, family);
    traffic::check_truck_traffic(&mut c, file, family);
    c.problems
}

/// Schema version and the project block: dates, required texts.
fn check_header(c: &mut Checker, file: &ProjectFile) {
    let root = YamlPath::root();
    if file.seamlife != SCHEMA_VERSION {
        c.push(
            root.key("seamlife"),
            InputErrorKind::UnsupportedVersion,
            format!(
                "schema version {} is not supported; this seamlife reads version {SCHEMA_VERSION}",
                file.seamlife
            ),
            Some(format!("set `seamlife: {SCHEMA_VERSION}`")),
        );
    }
    let pr = root.key("project");
    if !valid_iso_date(&file.project.date) {
        c.push(
            pr.key("date"),
            InputErrorKind::InvalidValue,
            format!("date `{}` is not a calendar date", file.project.date),
            Some("write dates as YYYY-MM-DD, e.g. 2026-11-20".into()),
        );
    }
    for (i, r) in file.project.revisions.iter().enumerate() {
        if !valid_iso_date(&r.date) {
            c.push(
                pr.key("revisions").index(i).key("date"),
                InputErrorKind::InvalidValue,
                format!("date `{}` is not a calendar date", r.date),
                Some("write dates as YYYY-MM-DD".into()),
            );
        }
    }
    for (key, value) in [
        ("title", &file.project.title),
        ("reference", &file.project.reference),
        ("revision", &file.project.revision),
        ("prepared_by", &file.project.prepared_by),
    ] {
        if value.trim().is_empty() {
            c.push(
                pr.key(key),
                InputErrorKind::MissingField,
                format!("{key} is empty"),
                Some("the calculation package needs it on every page".into()),
            );
        }
    }
    let p = &file.project;
    let header = "it stands in every page header and in the output file name; use a short code, e.g. KB-2231";
    c.text_len(
        || pr.key("reference"),
        "reference",
        &p.reference,
        MAX_REFERENCE_CHARS,
        header,
    );
    c.text_len(
        || pr.key("revision"),
        "revision",
        &p.revision,
        MAX_REVISION_CHARS,
        "a revision is a short mark, e.g. B or P02",
    );
    c.text_len(
        || pr.key("title"),
        "title",
        &p.title,
        MAX_LINE_CHARS,
        "keep the title to a line or two; put detail in the description of the structure",
    );
    let name = "a name or initials fit here; the package prints it in the title block";
    c.text_len(
        || pr.key("prepared_by"),
        "prepared_by",
        &p.prepared_by,
        MAX_NAME_CHARS,
        name,
    );
    if let Some(v) = &p.checked_by {
        c.text_len(
            || pr.key("checked_by"),
            "checked_by",
            v,
            MAX_NAME_CHARS,
            name,
        );
    }
    for (key, v) in [
        ("client", &p.client),
        ("structure", &p.structure),
        ("specification", &p.specification),
    ] {
        if let Some(v) = v {
            c.text_len(
                || pr.key(key),
                key,
                v,
                MAX_LINE_CHARS,
                "keep it to a line or two",
            );
        }
    }
    for (i, r) in p.revisions.iter().enumerate() {
        let rp = pr.key("revisions").index(i);
        c.text_len(
            || rp.key("revision"),
            "revision",
            &r.revision,
            MAX_REVISION_CHARS,
            "a revision is a short mark, e.g. B or P02",
        );
        c.text_len(
            || rp.key("description"),
            "description",
            &r.description,
            MAX_PARAGRAPH_CHARS,
            "describe the change in a few lines",
        );
        if let Some(v) = &r.by {
            c.text_len(|| rp.key("by"), "by", v, MAX_NAME_CHARS, name);
        }
    }
}

/// The basis: family, design life, overrides with reasons, named family options.
fn check_basis(c: &mut Checker, file: &ProjectFile, library: &Library, family: Option<&Family>) {
    let root = YamlPath::root();
    let b = root.key("basis");
    if family.is_none() {
        let ids = library.ids();
        let hint = match suggest(&file.basis.family, ids.iter().copied()) {
            Some(n) => format!("did you mean `{n}`? (`seamlife classes` lists the families)"),
            None => format!("known families: {}", ids.join(", ")),
        };
        c.push(
            b.key("family"),
            InputErrorKind::UnknownFamily,
            format!("unknown curve family `{}`", file.basis.family),
            Some(hint),
        );
    }
    c.positive_upto(
        || b.key("design_life_years"),
        "design_life_years",
        file.basis.design_life_years,
        MAX_DESIGN_LIFE_YEARS,
        "structures are designed for 25 to 120 years; 10 000 years is the most accepted",
    );
    for (key, ov) in [
        ("gamma_ff", &file.basis.gamma_ff),
        ("gamma_mf", &file.basis.gamma_mf),
        ("damage_limit", &file.basis.damage_limit),
    ] {
        if let Some(o) = ov {
            let vp = b.key(key).key("value");
            c.positive(|| vp.clone(), key, o.value);
            let (lo, hi) = FACTOR_RANGE;
            if o.value.is_finite() && o.value > 0.0 && !(lo..=hi).contains(&o.value) {
                c.push(
                    vp,
                    InputErrorKind::OutOfRange,
                    format!(
                        "{key} {} lies outside {} to {}",
                        short_num(o.value),
                        short_num(lo),
                        short_num(hi)
                    ),
                    Some("codes use partial factors of about 1.0 to 1.35 and damage limits of 0.2 to 1.0; check the value".into()),
                );
            }
            c.text_len(
                || b.key(key).key("reason"),
                "reason",
                &o.reason,
                MAX_PARAGRAPH_CHARS,
                "state the reason in a few lines",
            );
            if o.reason.trim().is_empty() {
                c.push(
                    b.key(key).key("reason"),
                    InputErrorKind::MissingField,
                    format!("an override of {key} needs a reason"),
                    Some(
                        "state why the family's value does not apply; the report prints it".into(),
                    ),
                );
            }
        }
    }
    if let Some(fam) = family {
        if let Some(case) = &file.basis.damage_case {
            c.option_name(
                || b.key("damage_case"),
                "damage case",
                case,
                fam.damage_limit.cases.keys().cloned().collect(),
            );
        }
        if let Some(v) = &file.basis.curve_variant {
            c.option_name(
                || b.key("curve_variant"),
                "curve variant",
                v,
                fam.variant_names(),
            );
        }
        if let Some(env) = &file.basis.environment {
            c.option_name(
                || b.key("environment"),
                "environment",
                env,
                fam.environment_names(),
            );
        }
        if let Some(k) = &file.basis.std_devs_below_mean {
            let kp = b.key("std_devs_below_mean");
            if fam.design_curve.is_none() {
                c.push(
                    kp.clone(),
                    InputErrorKind::UnknownOption,
                    format!("family `{}` publishes design curves, not mean curves: std_devs_below_mean does not apply", fam.id),
                    Some("remove std_devs_below_mean".into()),
                );
            }
            if !(k.value.is_finite() && (0.0..=4.0).contains(&k.value)) {
                c.push(
                    kp.key("value"),
                    InputErrorKind::OutOfRange,
                    format!("std_devs_below_mean must lie between 0 and 4, got {}", short_num(k.value)),
                    Some("codes design 2 standard deviations below the mean (about 97.7 % survival); 3 for severe consequences".into()),
                );
            }
            if k.reason.trim().is_empty() {
                c.push(
                    kp.key("reason"),
                    InputErrorKind::MissingField,
                    "an override of std_devs_below_mean needs a reason".into(),
                    Some(
                        "state why the family's default does not apply; the report prints it"
                            .into(),
                    ),
                );
            }
        }
        if let Some(ic) = &file.basis.interaction_case {
            let opts = fam
                .verification
                .interaction
                .as_ref()
                .map(|i| i.cases.keys().cloned().collect())
                .unwrap_or_default();
            c.option_name(|| b.key("interaction_case"), "interaction case", ic, opts);
        }
    }
}

/// Declared events (named once, positive occurrences) and the table options.
fn check_events_and_tables(c: &mut Checker, file: &ProjectFile) {
    let ep = YamlPath::root().key("events");
    for (i, e) in file.events.iter().enumerate() {
        if e.name.trim().is_empty() {
            c.push(
                ep.index(i).key("name"),
                InputErrorKind::MissingField,
                "event name is empty".into(),
                Some("give each event a short name that the table rows use".into()),
            );
        }
        c.positive(|| ep.index(i).key("per_year"), "per_year", e.per_year);
    }
    if let Some(t) = &file.tables {
        let tp = YamlPath::root().key("tables");
        if let Some(g) = t.histories_gate_mpa {
            if !(g.is_finite() && g >= 0.0) {
                c.push(
                    tp.key("histories_gate_mpa"),
                    InputErrorKind::InvalidValue,
                    format!("histories_gate_mpa must be zero or positive, got {g}"),
                    None,
                );
            }
        }
        if t.details.is_none() && t.stresses.is_none() && t.histories.is_none() {
            c.push(
                tp,
                InputErrorKind::MissingField,
                "`tables:` names no table".into(),
                Some(
                    "give `details:` and `stresses:` (and optionally `histories:`) file paths"
                        .into(),
                ),
            );
        }
    }
}

fn check_materials(c: &mut Checker, file: &ProjectFile) {
    let root = YamlPath::root();
    for (name, m) in &file.materials {
        let mp = root.key("materials").key(name);
        c.positive_upto(
            || mp.key("fy_mpa"),
            "fy_mpa",
            m.fy_mpa,
            MAX_STRESS_MPA,
            STRESS_WHY,
        );
        c.text_len(
            || mp.clone(),
            "material name",
            name,
            MAX_ID_CHARS,
            "use a short grade name, e.g. S355",
        );
        if let Some(d) = &m.description {
            c.text_len(
                || mp.key("description"),
                "description",
                d,
                MAX_LINE_CHARS,
                "keep it to a line or two",
            );
        }
    }
}

/// Every detail: unique id, defined material, positive sizes, catalogue key, and its
/// components against the family (when the family is known).
fn check_details(c: &mut Checker, file: &ProjectFile, family: Option<&Family>) {
    let d = YamlPath::root().key("details");
    if file.details.is_empty() {
        c.push(
            d.clone(),
            InputErrorKind::MissingField,
            "the project lists no details".into(),
            Some(if file.tables.is_some() {
                "the tables hold no detail with stresses; add rows, or entries under `details:`"
                    .into()
            } else {
                "add at least one entry under `details:`, or a details table under `tables:`".into()
            }),
        );
    }
    let mut first_seen: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, det) in file.details.iter().enumerate() {
        let p = || d.index(i);
        c.text_len(
            || p().key("id"),
            "detail id",
            &det.id,
            MAX_ID_CHARS,
            "give each detail a short unique id, e.g. RG2-W01",
        );
        c.text_len(
            || p().key("location"),
            "location",
            &det.location,
            MAX_LINE_CHARS,
            "say where the detail is in a line; put more in `description`",
        );
        if det.location.trim().is_empty() {
            c.push(
                p().key("location"),
                InputErrorKind::MissingField,
                "location is empty".into(),
                Some("say where the detail is; the package prints it on the detail's sheet".into()),
            );
        }
        if let Some(d) = &det.description {
            c.text_len(
                || p().key("description"),
                "description",
                d,
                MAX_PARAGRAPH_CHARS,
                "keep the description to a paragraph",
            );
        }
        if det.id.trim().is_empty() {
            c.push(
                p().key("id"),
                InputErrorKind::MissingField,
                "detail id is empty".into(),
                Some("give each detail a short unique id, e.g. RG2-W01".into()),
            );
        } else if let Some(j) = first_seen.get(det.id.as_str()) {
            c.push(
                p().key("id"),
                InputErrorKind::DuplicateId,
                format!(
                    "duplicate detail id `{}` (first used by details[{j}])",
                    det.id
                ),
                Some("detail ids must be unique within a project".into()),
            );
        } else {
            first_seen.insert(&det.id, i);
        }
        if !file.materials.contains_key(&det.material) {
            let names: Vec<&str> = file.materials.keys().map(|s| s.as_str()).collect();
            let hint = match suggest(&det.material, names.iter().copied()) {
                Some(n) => format!("did you mean `{n}`?"),
                None if names.is_empty() => {
                    format!(
                        "add it under `materials:`, e.g. `{}: {{fy_mpa: 355}}`",
                        det.material
                    )
                }
                None => format!("defined materials: {}", names.join(", ")),
            };
            c.push(
                p().key("material"),
                InputErrorKind::UndefinedMaterial,
                format!(
                    "material `{}` is not defined under `materials:`",
                    det.material
                ),
                Some(hint),
            );
        }
        let size_why = "thickness and distances are in mm; 10 000 mm is the most accepted";
        c.positive_upto(
            || p().key("thickness_mm"),
            "thickness_mm",
            det.thickness_mm,
            MAX_THICKNESS_MM,
            size_why,
        );
        if let Some(l) = det.toe_distance_mm {
            c.positive_upto(
                || p().key("toe_distance_mm"),
                "toe_distance_mm",
                l,
                MAX_THICKNESS_MM * 10.0,
                size_why,
            );
        }
        if let Some(n) = det.thickness_exponent {
            if !(n.is_finite() && (0.0..=1.0).contains(&n)) {
                c.push(
                    p().key("thickness_exponent"),
                    InputErrorKind::InvalidValue,
                    format!("thickness_exponent must lie between 0 and 1, got {n}"),
                    None,
                );
            }
        }
        if let Some(k) = det.scf {
            if !(k.is_finite() && (1.0..=MAX_SCF).contains(&k)) {
                c.push(
                    p().key("scf"),
                    InputErrorKind::OutOfRange,
                    format!("scf must lie between 1 and {MAX_SCF}, got {}", short_num(k)),
                    Some("the stress concentration factor multiplies the nominal stress; it is at least 1".into()),
                );
            }
        }
        if det.normal.is_none() && det.shear.is_none() {
            c.push(
                p(),
                InputErrorKind::MissingField,
                format!(
                    "detail `{}` has neither `normal:` nor `shear:` loading",
                    det.id
                ),
                Some("add a `normal:` or `shear:` component with its loading".into()),
            );
        }
        let Some(fam) = family else { continue };
        let entry = match &det.detail {
            Some(key) => match fam.entry(key) {
                Some(e) => Some(e),
                None => {
                    let keys = fam.catalogue.iter().map(|e| e.key.as_str());
                    let hint = match suggest(key, keys) {
                        Some(n) => format!(
                            "did you mean `{n}`? (`seamlife classes {}` lists them)",
                            fam.id
                        ),
                        None => format!("`seamlife classes {}` lists the catalogue", fam.id),
                    };
                    c.push(
                        p().key("detail"),
                        InputErrorKind::UnknownDetail,
                        format!("`{key}` is not in the {} catalogue", fam.id),
                        Some(hint),
                    );
                    None
                }
            },
            None => None,
        };
        if let Some(env) = &det.environment {
            c.option_name(
                || p().key("environment"),
                "environment",
                env,
                fam.environment_names(),
            );
        }
        if let Some(name) = &det.improvement {
            check_improvement(c, file, fam, det, entry, name, &p);
        }
        if let Some(case) = &det.mean_stress_case {
            c.option_name(
                || p().key("mean_stress_case"),
                "mean-stress case",
                case,
                fam.mean_stress.cases.keys().cloned().collect(),
            );
        }
        for (comp, input) in [
            (Component::Normal, &det.normal),
            (Component::Shear, &det.shear),
        ] {
            let Some(ci) = input else { continue };
            let cp = || p().key(comp.as_str());
            check_component(
                c,
                fam,
                comp,
                ci,
                entry.map(|e| e.category(comp)),
                &cp,
                det.detail.is_some(),
            );
        }
    }
}

fn check_component(
    c: &mut Checker,
    fam: &Family,
    comp: Component,
    ci: &ComponentInput,
    from_entry: Option<Option<f64>>,
    cp: &dyn Fn() -> YamlPath,
    has_detail_key: bool,
) {
    let cats = &fam.curves.get(comp).categories_mpa;
    match ci.category {
        Some(cat) => {
            if !cats.contains(&cat) {
                let near = cats
                    .iter()
                    .copied()
                    .min_by(|a, b| (a - cat).abs().total_cmp(&(b - cat).abs()));
                let list = cats
                    .iter()
                    .map(|x| format!("{x}"))
                    .collect::<Vec<_>>()
                    .join(", ");
                c.push(
                    cp().key("category"),
                    InputErrorKind::UnknownCategory,
                    format!(
                        "{} category {cat} is not one of the {} categories",
                        comp.as_str(),
                        fam.id
                    ),
                    Some(match near {
                        Some(n) if cat.is_finite() => {
                            format!("nearest is {n}; the list is {list}")
                        }
                        _ => format!("the list is {list}"),
                    }),
                );
            }
        }
        None => {
            if from_entry.flatten().is_none() {
                let why = if has_detail_key && from_entry.is_some() {
                    format!(
                        "the catalogue entry gives no {} category, and none is set here",
                        comp.as_str()
                    )
                } else {
                    format!(
                        "no {} category: give `category:` or a catalogue `detail:`",
                        comp.as_str()
                    )
                };
                c.push(
                    cp(),
                    InputErrorKind::MissingField,
                    why,
                    Some(format!(
                        "add `category: <{}>` (MPa at 2e6 cycles)",
                        fam.category_symbol.get(comp)
                    )),
                );
            }
        }
    }
    if let Some(cr) = &ci.crane {
        check_crane(c, fam, ci, cr, cp);
        return;
    }
    if ci.amplitude == Some(Amplitude::Constant) {
        check_constant_amplitude(c, ci, cp);
    }
    if ci.loading.is_empty() {
        c.push(
            cp().key("loading"),
            InputErrorKind::MissingField,
            "loading lists no events".into(),
            Some("add at least one event with per_year and blocks".into()),
        );
    }
    for (k, ev) in ci.loading.iter().enumerate() {
        let ep = || cp().key("loading").index(k);
        let sources = [
            ev.blocks.is_some(),
            ev.series.is_some(),
            ev.table_history.is_some(),
        ];
        if sources.iter().filter(|&&x| x).count() != 1 {
            c.push(
                ep(),
                InputErrorKind::MissingField,
                "an event needs exactly one of `blocks:` or `series:`".into(),
                Some("split block loading and a measured series into two events".into()),
            );
        }
        c.text_len(
            || ep().key("event"),
            "event",
            &ev.event,
            MAX_LINE_CHARS,
            "name the event in a few words",
        );
        let timed = ev
            .series
            .as_ref()
            .is_some_and(|s| s.record_hours.is_some() || s.hours_per_year.is_some());
        if ev.per_year.is_some() && timed {
            c.push(
                ep().key("per_year"),
                InputErrorKind::InvalidValue,
                "`per_year` and the series' `record_hours`/`hours_per_year` both say how often the record repeats; give one of them".into(),
                Some("keep `per_year` (repeats of the record per year), or remove it and give `record_hours` with `hours_per_year`".into()),
            );
        }
        match ev.per_year {
            Some(py) => c.positive_upto(
                || ep().key("per_year"),
                "per_year",
                py,
                MAX_COUNT,
                COUNT_WHY,
            ),
            None => {
                let timed = ev
                    .series
                    .as_ref()
                    .is_some_and(|s| s.record_hours.is_some() && s.hours_per_year.is_some());
                if !timed {
                    c.push(
                        ep(),
                        InputErrorKind::MissingField,
                        "missing field `per_year` (occurrences of the event per year)".into(),
                        Some(if ev.series.is_some() {
                            "give `per_year`, or the series' `record_hours` and `hours_per_year`"
                                .into()
                        } else {
                            "add `per_year:`".into()
                        }),
                    );
                }
            }
        }
        if let Some(blocks) = &ev.blocks {
            if blocks.is_empty() {
                c.push(
                    ep().key("blocks"),
                    InputErrorKind::MissingField,
                    "blocks is empty".into(),
                    Some("list at least one {range_mpa, cycles} block".into()),
                );
            }
            for (j, bl) in blocks.iter().enumerate() {
                let bp = || ep().key("blocks").index(j);
                check_block(c, bl, &bp);
                let per_year = ev.per_year.unwrap_or(1.0);
                let total = bl.cycles * per_year;
                if bl.cycles.is_finite()
                    && per_year.is_finite()
                    && bl.cycles <= MAX_COUNT
                    && per_year <= MAX_COUNT
                    && total > crate::histories::MAX_CYCLES_PER_YEAR
                {
                    c.push(
                        bp().key("cycles"),
                        InputErrorKind::OutOfRange,
                        format!(
                            "cycles {} × per_year {} = {} cycles a year, more than the {} accepted",
                            short_num(bl.cycles),
                            short_num(per_year),
                            short_num(total),
                            short_num(crate::histories::MAX_CYCLES_PER_YEAR)
                        ),
                        Some("1e15 cycles a year is about 3·10⁷ every second; check `cycles` (per occurrence) and `per_year`".into()),
                    );
                }
            }
        }
        if let Some(s) = &ev.series {
            check_series(c, s, &ep().key("series"));
        }
    }
}

/// The crane route (EN 1991-3 2.12): a family that offers it, a known stress-history
/// class, Δσ(max) and φfat in bounds, and no loading or amplitude beside it.
fn check_crane(
    c: &mut Checker,
    fam: &Family,
    ci: &ComponentInput,
    cr: &crate::input::CraneInput,
    cp: &dyn Fn() -> YamlPath,
) {
    let kp = || cp().key("crane");
    match &fam.crane_route {
        None => c.push(
            kp(),
            InputErrorKind::UnknownOption,
            format!("family `{}` offers no crane route", fam.id),
            Some("the crane route (stress-history class, λ and φfat) belongs to the EN family (basis.family: en1993-1-9); give `loading:` blocks here".into()),
        ),
        Some(route) => c.option_name(
            || kp().key("stress_history_class"),
            "stress-history class",
            &cr.stress_history_class,
            route.classes.keys().cloned().collect(),
        ),
    }
    c.positive_upto(
        || kp().key("max_range_mpa"),
        "max_range_mpa",
        cr.max_range_mpa,
        MAX_STRESS_MPA,
        STRESS_WHY,
    );
    let phi = cr.phi_fat;
    if !(phi.is_finite() && (1.0..=MAX_PHI_FAT).contains(&phi)) {
        c.push(
            kp().key("phi_fat"),
            InputErrorKind::OutOfRange,
            format!(
                "phi_fat must lie between 1 and {MAX_PHI_FAT}, got {}",
                short_num(phi)
            ),
            Some("φfat is the dynamic factor for fatigue of EN 1991-3 2.12.1, at least 1".into()),
        );
    }
    if !ci.loading.is_empty() {
        c.push(
            cp().key("loading"),
            InputErrorKind::InvalidValue,
            "give either `loading:` or `crane:`, not both: the crane route replaces the spectrum"
                .into(),
            Some("remove `loading:` to use ΔσE,2 = λ·φfat·Δσ(max), or remove `crane:`".into()),
        );
    }
    if ci.amplitude.is_some() {
        c.push(
            cp().key("amplitude"),
            InputErrorKind::InvalidValue,
            "`amplitude` does not apply to the crane route: ΔσE,2 is a damage-equivalent range of variable loading".into(),
            Some("remove `amplitude:`".into()),
        );
    }
}

/// A weld improvement: a family that gives it, a known method, a catalogue entry it
/// applies to, a normal-stress component, and the method's limits met.
fn check_improvement(
    c: &mut Checker,
    file: &ProjectFile,
    fam: &Family,
    det: &crate::input::Detail,
    entry: Option<&crate::catalogue::CatalogueEntry>,
    name: &str,
    p: &dyn Fn() -> YamlPath,
) {
    let ip = || p().key("improvement");
    let Some(set) = &fam.improvements else {
        c.push(
            ip(),
            InputErrorKind::UnknownOption,
            format!("family `{}` gives no weld improvement factors", fam.id),
            Some("improvement factors (burr grinding, TIG dressing, peening, HFMI) are given by the IIW family; remove `improvement:` or assess with basis.family: iiw".into()),
        );
        return;
    };
    let Some(m) = set.methods.get(name) else {
        c.option_name(
            ip,
            "improvement",
            name,
            set.methods.keys().cloned().collect(),
        );
        return;
    };
    let refuse = |c: &mut Checker, why: String, hint: String| {
        c.push(
            ip(),
            InputErrorKind::InvalidValue,
            format!(
                "improvement `{name}` cannot be used on detail `{}`: {why}",
                det.id
            ),
            Some(hint),
        );
    };
    let Some(e) = entry else {
        refuse(
            c,
            "it applies to catalogue detail types, and the detail names none".into(),
            format!(
                "give `detail:` with one of the types in `seamlife classes {}`",
                fam.id
            ),
        );
        return;
    };
    if !set.applies_to.contains(&e.key) {
        refuse(
            c,
            format!(
                "the family grants it for weld-toe details only, and `{}` is not one of them",
                e.key
            ),
            format!(
                "`seamlife classes {}` lists the detail types an improvement applies to",
                fam.id
            ),
        );
        return;
    }
    let Some(ci) = &det.normal else {
        refuse(
            c,
            "it acts on the normal-stress category, and the detail has no `normal:` component"
                .into(),
            "add the normal-stress loading, or remove `improvement:`".into(),
        );
        return;
    };
    let Some(category) = ci.category.or(e.normal_category) else {
        return;
    };
    let Some(fy) = file.materials.get(&det.material).map(|m| m.fy_mpa) else {
        return;
    };
    if let Err(why) = m.gain(
        &fam.curves.normal.categories_mpa,
        category,
        fy,
        det.thickness_mm,
        ci.stated_max_stress_ratio(),
    ) {
        refuse(
            c,
            why,
            format!(
                "{} ({}); remove `improvement:` to assess the weld as welded",
                m.name, m.source
            ),
        );
    }
}

/// Largest dynamic factor φfat accepted (EN 1991-3 2.12.1 values lie near 1.0-1.3;
/// a larger figure is a slip; common practice).
pub const MAX_PHI_FAT: f64 = 3.0;

/// Loading stated as constant amplitude must be blocks of one range: a counted record
/// is variable amplitude by nature.
fn check_constant_amplitude(c: &mut Checker, ci: &ComponentInput, cp: &dyn Fn() -> YamlPath) {
    let mut first: Option<f64> = None;
    for (k, ev) in ci.loading.iter().enumerate() {
        let ep = || cp().key("loading").index(k);
        if ev.series.is_some() {
            c.push(
                ep().key("series"),
                InputErrorKind::InvalidValue,
                "`amplitude: constant` cannot take a counted record: a measured or simulated series is variable amplitude".into(),
                Some("remove `amplitude: constant`, or give the loading as blocks of one range".into()),
            );
            continue;
        }
        for (j, bl) in ev.blocks.iter().flatten().enumerate() {
            let range = match (bl.range_mpa, bl.max_mpa, bl.min_mpa) {
                (Some(r), _, _) => r,
                // Δσ = σmax − σmin (common practice)
                (None, Some(hi), Some(lo)) => hi - lo,
                _ => continue,
            };
            match first {
                None => first = Some(range),
                Some(r0) if (range - r0).abs() > 1e-9 * r0.abs() => c.push(
                    ep().key("blocks").index(j),
                    InputErrorKind::InvalidValue,
                    format!("`amplitude: constant` needs one stress range, but this block has {range} MPa and an earlier one {r0} MPa"),
                    Some("blocks of different ranges are variable amplitude: remove `amplitude: constant` or use `amplitude: variable`".into()),
                ),
                Some(_) => {}
            }
        }
    }
}

fn check_block(c: &mut Checker, bl: &Block, bp: &dyn Fn() -> YamlPath) {
    match (bl.range_mpa, bl.mean_mpa, bl.max_mpa, bl.min_mpa) {
        (Some(r), mean, None, None) => {
            c.positive_upto(|| bp().key("range_mpa"), "range_mpa", r, MAX_STRESS_MPA, STRESS_WHY);
            if let Some(m) = mean {
                c.finite_upto(|| bp().key("mean_mpa"), "mean_mpa", m, MAX_STRESS_MPA, STRESS_WHY);
            }
        }
        (None, None, Some(hi), Some(lo)) => {
            c.finite_upto(|| bp().key("max_mpa"), "max_mpa", hi, MAX_STRESS_MPA, STRESS_WHY);
            c.finite_upto(|| bp().key("min_mpa"), "min_mpa", lo, MAX_STRESS_MPA, STRESS_WHY);
            if hi.is_finite() && lo.is_finite() && hi <= lo {
                c.push(
                    bp().key("max_mpa"),
                    InputErrorKind::InvalidValue,
                    format!("max_mpa {} must exceed min_mpa {}", short_num(hi), short_num(lo)),
                    Some("the range is max_mpa - min_mpa and must be positive".into()),
                );
            }
        }
        _ => c.push(
            bp(),
            InputErrorKind::MissingField,
            "a block needs `range_mpa` (optionally with `mean_mpa`) or both `max_mpa` and `min_mpa`".into(),
            Some("e.g. {range_mpa: 62, cycles: 1} or {max_mpa: 40, min_mpa: -22, cycles: 1}".into()),
        ),
    }
    c.positive_upto(
        || bp().key("cycles"),
        "cycles",
        bl.cycles,
        MAX_COUNT,
        COUNT_WHY,
    );
}

fn check_series(c: &mut Checker, s: &SeriesInput, sp: &YamlPath) {
    if let ColumnSelector::Index(0) = s.column {
        c.push(
            sp.key("column"),
            InputErrorKind::InvalidValue,
            "column numbers start at 1".into(),
            Some("give the header name, or 1 for the first column".into()),
        );
    }
    match (s.unit, s.modulus_mpa) {
        (SeriesUnitInput::Microstrain, None) => c.push(
            sp.clone(),
            InputErrorKind::MissingField,
            "a strain record needs `modulus_mpa`".into(),
            Some("e.g. `modulus_mpa: 210000` for steel".into()),
        ),
        (_, Some(e)) => c.positive_upto(
            || sp.key("modulus_mpa"),
            "modulus_mpa",
            e,
            MAX_MODULUS_MPA,
            "the modulus is in MPa: 210000 for steel",
        ),
        _ => {}
    }
    if let Some(f) = s.scale {
        c.positive(|| sp.key("scale"), "scale", f);
    }
    if let Some(h) = s.record_hours {
        c.positive(|| sp.key("record_hours"), "record_hours", h);
    }
    if let Some(h) = s.hours_per_year {
        c.positive_upto(
            || sp.key("hours_per_year"),
            "hours_per_year",
            h,
            MAX_HOURS_PER_YEAR,
            "a year has 8784 hours at most (366 days of 24 hours)",
        );
    }
    c.text_len(
        || sp.key("file"),
        "file",
        &s.file,
        4096,
        "give a path of ordinary length",
    );
    if let ColumnSelector::Name(n) = &s.column {
        c.text_len(
            || sp.key("column"),
            "column",
            n,
            MAX_LINE_CHARS,
            "name the column as its header does",
        );
    }
    if s.record_hours.is_some() != s.hours_per_year.is_some() {
        c.push(
            sp.clone(),
            InputErrorKind::MissingField,
            "`record_hours` and `hours_per_year` go together".into(),
            Some("give both, or neither and use the event's `per_year`".into()),
        );
    }
    if let Some(g) = s.gate_mpa {
        if !(g.is_finite() && g >= 0.0) {
            c.push(
                sp.key("gate_mpa"),
                InputErrorKind::InvalidValue,
                format!("gate_mpa must be zero or positive, got {}", short_num(g)),
                None,
            );
        } else if g > 2.0 * MAX_STRESS_MPA {
            c.push(
                sp.key("gate_mpa"),
                InputErrorKind::OutOfRange,
                format!(
                    "gate_mpa is {}, above any range a record can hold",
                    short_num(g)
                ),
                Some(STRESS_WHY.into()),
            );
        }
    }
    if let Some(w) = s.bin_width_mpa {
        let before = c.problems.len();
        c.positive_upto(
            || sp.key("bin_width_mpa"),
            "bin_width_mpa",
            w,
            2.0 * MAX_STRESS_MPA,
            STRESS_WHY,
        );
        if c.problems.len() == before && w < MIN_BIN_WIDTH_MPA {
            c.push(
                sp.key("bin_width_mpa"),
                InputErrorKind::OutOfRange,
                format!(
                    "bin_width_mpa {} is finer than the {} MPa accepted",
                    short_num(w),
                    short_num(MIN_BIN_WIDTH_MPA)
                ),
                Some("strain gauges resolve about 0.2 MPa; finer bins carry no information".into()),
            );
        }
    }
    if s.bins == Some(0) {
        c.push(
            sp.key("bins"),
            InputErrorKind::InvalidValue,
            "bins must be at least 1".into(),
            None,
        );
    }
    for (key, v) in [("bins", s.bins), ("mean_bins", s.mean_bins)] {
        if v.is_some_and(|n| n > MAX_BINS) {
            c.push(
                sp.key(key),
                InputErrorKind::OutOfRange,
                format!(
                    "{key} is {}; at most {MAX_BINS} are accepted",
                    v.unwrap_or(0)
                ),
                Some("a figure cannot show more bins than that".into()),
            );
        }
    }
    if s.mean_bins.is_some_and(|n| n < 2) {
        c.push(
            sp.key("mean_bins"),
            InputErrorKind::InvalidValue,
            "mean_bins must be at least 2 (bins sit on both sides of zero mean)".into(),
            None,
        );
    }
    if s.bins.is_some() && s.bin_width_mpa.is_some() {
        c.push(
            sp.clone(),
            InputErrorKind::InvalidValue,
            "give `bins` or `bin_width_mpa`, not both".into(),
            None,
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates() {
        assert!(valid_iso_date("2026-11-20"));
        assert!(valid_iso_date("2024-02-29"));
        assert!(!valid_iso_date("2023-02-29"));
        assert!(!valid_iso_date("20-11-2026"));
    }

    #[test]
    fn suggestions() {
        assert_eq!(
            suggest("thicknes_mm", ["id", "thickness_mm", "material"]),
            Some("thickness_mm")
        );
        assert_eq!(suggest("zzz", ["id", "thickness_mm"]), None);
    }
}
