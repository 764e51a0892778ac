//! `seamlife classes`: list the curve families, or one family's categories and catalogue.

use std::path::Path;

use crate::catalogue::{Component, Family, Library};
use crate::error::{Error, EXIT_PASS};
use crate::files::short_num;
use crate::results::CAUTION_LINE;

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
        Some(id) => {
            let Some(f) = library.get(id) else {
                let ids = library.ids();
                let hint = match crate::input::suggest(id, ids.iter().copied()) {
                    Some(n) => format!("did you mean `{n}`?"),
                    None => format!("known families: {}", ids.join(", ")),
                };
                return Err(Error::Input(
                    crate::error::InputError::new(
                        crate::error::InputErrorKind::UnknownFamily,
                        crate::error::Location::file(Path::new("<command line>")),
                        format!("unknown curve family `{id}`"),
                    )
                    .hint(hint),
                ));
            };
            family_listing(f, &mut out);
        }
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
    out.push_str("\nmean-stress cases:\n");
    for (k, c) in &f.mean_stress.cases {
        out.push_str(&format!("  {k:<18} {}\n", c.name));
    }
    out.push_str("\ncatalogue:\n");
    let kw = f
        .catalogue
        .iter()
        .map(|e| e.key.len())
        .max()
        .unwrap_or(3)
        .max(3);
    out.push_str(&format!(
        "  {:<kw$}  {:>6}  {:>6}  {:>4}  description [reference]\n",
        "key", "normal", "shear", "n"
    ));
    for e in &f.catalogue {
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
