//! `seamlife classes`: list the curve families, or one family's categories and catalogue.

use std::path::Path;

use crate::catalogue::{CatalogueEntry, Component, Family, Library};
use crate::error::{Error, EXIT_FAIL, EXIT_PASS};
use crate::files::short_num;
use crate::results::CAUTION_LINE;

/// The family named on the command line, or an input error with a near-match hint.
fn named<'a>(id: &str, library: &'a Library) -> Result<&'a Family, Error> {
    library.get(id).ok_or_else(|| {
        let ids = library.ids();
        let hint = match crate::input::suggest(id, ids.iter().copied()) {
            Some(n) => format!("did you mean `{n}`?"),
            None => format!("known families: {}", ids.join(", ")),
        };
        Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::UnknownFamily,
                crate::error::Location::file(Path::new("<command line>")),
                format!("unknown curve family `{id}`"),
            )
            .hint(hint),
        )
    })
}

/// `seamlife classes [FAMILY] --search WORDS`: the entries holding every word, best
/// first; exit 1 with the unknown words and near matches when none does.
pub(super) fn search(
    family: Option<&str>,
    args: &[String],
    library: &Library,
) -> Result<i32, Error> {
    let words = crate::catalogue::search::words(args);
    if words.is_empty() {
        return Err(Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::MissingField,
                crate::error::Location::file(Path::new("<command line>")),
                "--search needs at least one word".to_string(),
            )
            .hint("e.g. `seamlife classes en1993-1-9 --search cover plate`"),
        ));
    }
    let families: Vec<&Family> = match family {
        Some(id) => vec![named(id, library)?],
        None => library.families.iter().collect(),
    };
    let mut out = String::new();
    let mut any = false;
    for f in &families {
        let found = crate::catalogue::search::search(f, &words);
        if found.hits.is_empty() {
            if family.is_some() {
                not_found(f, &found, &mut out);
            }
            continue;
        }
        any = true;
        out.push_str(&format!(
            "{} — {} of {} catalogue entries hold every word of `{}`, best first:\n",
            f.id,
            found.hits.len(),
            f.catalogue.len(),
            words.join(" ")
        ));
        let entries: Vec<_> = found.hits.iter().map(|h| h.entry).collect();
        entry_table(&entries, &mut out);
        out.push('\n');
    }
    if !any && family.is_none() {
        out.push_str(&format!(
            "no catalogue entry of any family ({}) holds every word of `{}`\n",
            library.ids().join(", "),
            words.join(" ")
        ));
        out.push_str("  hint: name a family (`seamlife classes ID --search ...`) to see near matches, or use fewer words\n");
    }
    out.push_str(CAUTION_LINE);
    out.push('\n');
    super::output::print_text(&out)?;
    Ok(if any { EXIT_PASS } else { EXIT_FAIL })
}

fn not_found(f: &Family, found: &crate::catalogue::search::Found, out: &mut String) {
    out.push_str(&format!(
        "no {} catalogue entry holds every word of `{}`\n",
        f.id,
        found.words.join(" ")
    ));
    for (w, near) in &found.unknown {
        match near {
            Some(n) => out.push_str(&format!(
                "  hint: `{w}` occurs in no entry; did you mean `{n}`?\n"
            )),
            None => out.push_str(&format!(
                "  hint: `{w}` occurs in no entry; try another word\n"
            )),
        }
    }
    if !found.partial.is_empty() {
        out.push_str(&format!(
            "  entries holding the most words ({} of {}):\n",
            found.partial[0].1,
            found.words.len()
        ));
        for (e, _) in &found.partial {
            out.push_str(&format!("    {}  {}\n", e.key, e.description));
        }
    }
    out.push_str(&format!(
        "  `seamlife classes {}` lists the whole catalogue\n\n",
        f.id
    ));
}

pub(super) fn run(family: Option<&str>, library: &Library) -> Result<i32, Error> {
    let mut out = String::new();
    match family {
        None => {
            out.push_str("Curve families (use `seamlife classes ID` for one):\n\n");
            for f in &library.families {
                out.push_str(&format!(
                    "  {:<12} {} — {} ({} catalogue entries, data {})\n",
                    f.id,
                    f.title,
                    f.edition,
                    f.catalogue.len(),
                    f.data_version
                ));
            }
        }
        Some(id) => family_listing(named(id, library)?, &mut out),
    }
    out.push('\n');
    out.push_str(CAUTION_LINE);
    out.push('\n');
    super::output::print_text(&out)?;
    Ok(EXIT_PASS)
}

fn family_listing(f: &Family, out: &mut String) {
    out.push_str(&format!("{} — {}\n{}\n", f.id, f.title, f.edition));
    out.push_str(&format!(
        "data version {}: {}\n\n",
        f.data_version, f.transcription_note
    ));
    for c in [Component::Normal, Component::Shear] {
        let def = f.curves.get(c);
        out.push_str(&format!(
            "{} stress categories {} (MPa at {:.0e} cycles): {}\n",
            c.as_str(),
            f.category_symbol.get(c),
            f.reference_cycles,
            def.categories_mpa
                .iter()
                .map(|x| short_num(*x))
                .collect::<Vec<_>>()
                .join(", ")
        ));
        for (name, v) in &def.variants {
            out.push_str(&format!(
                "  curve variant `{name}`: {}{}\n",
                v.name,
                if v.entry_only {
                    " (for catalogue entries that name it)"
                } else {
                    ""
                }
            ));
        }
    }
    for c in [Component::Normal, Component::Shear] {
        let classes = &f.curves.get(c).classes;
        if !classes.is_empty() {
            out.push_str(&format!(
                "{} stress classes (published log a, m): {}\n",
                c.as_str(),
                classes
                    .iter()
                    .map(|(n, k)| format!("{n} = {}", short_num(k.category_mpa)))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        }
    }
    if let Some(pair) = f.aashto_pair() {
        out.push_str(&format!(
            "category letters (Fatigue I γ = {}, Fatigue II γ = {}; 1 ksi = {} MPa):\n",
            short_num(pair.fatigue_i_factor.value),
            short_num(f.partial_factors.gamma_ff.value),
            pair.ksi_to_mpa
        ));
        for (letter, c) in &pair.categories {
            out.push_str(&format!(
                "  {letter:<4} class {:<3} A = {:.3e} ksi³ = {:.4e} MPa³, (ΔF)TH = {} ksi = {} MPa, infinite life above (ADTT)SL {}\n",
                c.class,
                c.constant_ksi3,
                c.constant_mpa3(pair.ksi_to_mpa),
                short_num(c.threshold_ksi),
                short_num(c.threshold_mpa),
                short_num(c.infinite_life_adtt)
            ));
        }
    }
    if let Some(envs) = &f.environments {
        out.push_str(&format!("environments (default `{}`):\n", envs.default));
        for (k, e) in &envs.cases {
            out.push_str(&format!("  {k:<18} {}\n", e.name));
        }
    }
    if let Some(d) = &f.design_curve {
        out.push_str(&format!(
            "design curves {} standard deviations of log N below the mean by default ({})\n",
            short_num(d.default_std_devs),
            d.source
        ));
    }
    if let Some(r) = &f.crane_route {
        out.push_str(&format!(
            "crane route (`crane:` in place of `loading:`): {} — {}\n  λ normal/shear by class: {}\n  ({})\n",
            r.name,
            r.rule,
            r.classes
                .iter()
                .map(|(k, l)| format!("{k} {}/{}", short_num(l.normal), short_num(l.shear)))
                .collect::<Vec<_>>()
                .join(", "),
            r.source
        ));
    }
    if let Some(set) = &f.improvements {
        out.push_str(&format!(
            "weld improvements (`improvement:` on a detail; {} weld-toe detail types):\n",
            set.applies_to.len()
        ));
        for (k, m) in &set.methods {
            out.push_str(&format!("  {k:<18} {} [{}]\n", m.name, m.source));
        }
    }
    out.push_str("\nmean-stress cases:\n");
    for (k, c) in &f.mean_stress.cases {
        out.push_str(&format!("  {k:<18} {}\n", c.name));
    }
    out.push_str("\ncatalogue:\n");
    let entries: Vec<&CatalogueEntry> = f.catalogue.iter().collect();
    entry_table(&entries, out);
}

/// Catalogue entries as a table: key, categories, size exponent, description and
/// reference.
fn entry_table(entries: &[&CatalogueEntry], out: &mut String) {
    let kw = entries
        .iter()
        .map(|e| e.key.len())
        .max()
        .unwrap_or(3)
        .max(3);
    out.push_str(&format!(
        "  {:<kw$}  {:>6}  {:>6}  {:>4}  description [reference]\n",
        "key", "normal", "shear", "n"
    ));
    for e in entries {
        let o = |v: Option<f64>| v.map(short_num).unwrap_or_else(|| "-".into());
        out.push_str(&format!(
            "  {:<kw$}  {:>6}  {:>6}  {:>4}  {} [{}]{}\n",
            e.key,
            o(e.normal_category),
            o(e.shear_category),
            o(e.size_rule
                .as_ref()
                .map(|r| r.exponent)
                .or(e.thickness_exponent)),
            e.description,
            e.reference,
            e.curve_variant
                .as_ref()
                .map(|v| format!(" (own curve `{v}`)"))
                .unwrap_or_default()
                + &e.size_rule
                    .as_ref()
                    .map(|r| format!(" (own size rule: t_ref {} mm)", short_num(r.reference_mm)))
                    .unwrap_or_default()
        ));
    }
}
