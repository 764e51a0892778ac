//! The family-extension file: a complete curve-family file that copies the base
//! family and adds one catalogue entry with the category the tests support and their
//! provenance. Curve families stay data: the file goes into a `--joint-classes`
//! folder, and a project names its id as `basis.family` and the entry as `detail:`.

use std::path::Path;

use crate::catalogue::{CatalogueEntry, Component, Family};
use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::fit::FitResults;
use crate::report::templates::{general, sci_text};

/// Longest catalogue key accepted, in characters.
pub const MAX_KEY_CHARS: usize = 60;

/// A catalogue key: lower-case letters, digits and single hyphens, starting with a
/// letter.
pub fn valid_key(key: &str) -> bool {
    let mut prev_hyphen = true;
    let ok = key.chars().all(|c| {
        let good = c.is_ascii_lowercase() || c.is_ascii_digit() || (c == '-' && !prev_hyphen);
        prev_hyphen = c == '-';
        good
    });
    ok && !key.is_empty()
        && key.len() <= MAX_KEY_CHARS
        && key.starts_with(|c: char| c.is_ascii_lowercase())
        && !key.ends_with('-')
}

/// A default key from the test file's name: `tests-` and the stem in key form.
pub fn default_key(file_name: &str) -> String {
    let stem = Path::new(file_name)
        .file_stem()
        .map(|s| s.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    let mut key = String::from("tests-");
    for c in stem.chars() {
        if c.is_ascii_lowercase() || c.is_ascii_digit() {
            key.push(c);
        } else if !key.ends_with('-') {
            key.push('-');
        }
    }
    let mut key: String = key.chars().take(MAX_KEY_CHARS).collect();
    while key.ends_with('-') {
        key.pop();
    }
    key
}

/// One line of a YAML comment: control characters (a newline in a file name, say)
/// become spaces so that nothing leaves the comment.
fn comment_text(s: &str) -> String {
    s.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// Remove the absent optional values (`key: null`) from mappings, so that the file
/// reads like a hand-written family file.
fn drop_nulls(v: &mut serde_yaml::Value) {
    match v {
        serde_yaml::Value::Mapping(m) => {
            m.retain(|_, x| !x.is_null());
            for (_, x) in m.iter_mut() {
                drop_nulls(x);
            }
        }
        serde_yaml::Value::Sequence(s) => s.iter_mut().for_each(drop_nulls),
        _ => {}
    }
}

/// Build the extended family and its file text. `description` is the engineer's short
/// wording of the tested detail; the provenance is added to it.
pub fn extension(
    base: &Family,
    fit: &FitResults,
    key: &str,
    description: &str,
) -> Result<(Family, String), Error> {
    let bad_key = |msg: String, hint: &str| {
        Error::Input(
            InputError::new(
                InputErrorKind::InvalidValue,
                Location::file(Path::new("--key")),
                msg,
            )
            .hint(hint),
        )
    };
    if !valid_key(key) {
        return Err(bad_key(
            format!("catalogue key `{}` is not a key", comment_text(key)),
            "use lower-case letters, digits and single hyphens, starting with a letter, e.g. kb-bracket-fillet",
        ));
    }
    if base.entry(key).is_some() {
        return Err(bad_key(
            format!("family {} already has a catalogue entry `{key}`", base.id),
            "choose a key of your own with --key",
        ));
    }
    let Some(category) = fit.category.category_mpa else {
        return Err(Error::Input(
            InputError::new(
                InputErrorKind::InvalidValue,
                Location::file(Path::new(&fit.input.file_name)),
                "the tests support no listed category, so no family extension was written",
            )
            .hint("see the warnings above; more or better tests may support a category"),
        ));
    };
    let basis = fit
        .evaluations
        .iter()
        .find(|e| e.id == fit.category.basis)
        .ok_or_else(|| Error::Internal("category basis not among the evaluations".into()))?;
    let dk = fit.category.characteristic_range_mpa.unwrap_or(category);
    let component = if fit.family.component == "shear" {
        Component::Shear
    } else {
        Component::Normal
    };
    let n_ref = sci_text(fit.family.reference_cycles, 0);
    let desc = description.trim();
    let provenance = format!(
        "derived by seamlife fit {ver} on {date} from {nf} failures ({nr} run-outs {ro}) in {file} (SHA-256 {sha}); {method}, {label}: characteristic {sym} = {dk} MPa at {n_ref} cycles, rounded down to category {cat}",
        ver = fit.tool.version,
        date = fit.date,
        nf = fit.failures,
        nr = fit.runouts,
        ro = if basis.ml.is_some() { "censored" } else { "excluded" },
        file = fit.input.file_name,
        sha = fit.input.sha256,
        method = fit.method.name,
        label = basis.label,
        sym = fit.family.range_symbol,
        dk = general((dk * 100.0).round() / 100.0),
        cat = general(category),
    );
    let entry = CatalogueEntry {
        key: key.to_string(),
        reference: format!(
            "Fatigue tests {}, SHA-256 {}",
            fit.input.file_name,
            &fit.input.sha256[..fit.input.sha256.len().min(12)]
        ),
        description: if desc.is_empty() {
            format!("Detail as tested: {provenance}")
        } else {
            format!("{desc}: {provenance}")
        },
        normal_category: (component == Component::Normal).then_some(category),
        shear_category: (component == Component::Shear).then_some(category),
        thickness_exponent: None,
        mean_stress_case: None,
        curve_variant: None,
        shear_curve_variant: None,
        size_rule: None,
        category_letter: None,
    };
    let mut fam = base.clone();
    fam.id = format!("{}-plus-{key}", base.id);
    fam.title = format!("{} with the test-derived entry {key}", base.title);
    fam.data_version = format!("{}+{key}.{}", base.data_version, fit.date);
    fam.transcription_note = format!(
        "{} Entry `{key}` was derived from fatigue tests ({}), not transcribed from the standard; it holds only for details represented by the tested specimens.",
        base.transcription_note.trim_end(),
        fit.input.file_name
    );
    fam.catalogue.push(entry);
    let internal = |e: serde_yaml::Error| Error::Internal(format!("family extension: {e}"));
    let mut value = serde_yaml::to_value(&fam).map_err(internal)?;
    drop_nulls(&mut value);
    let yaml = serde_yaml::to_string(&value).map_err(internal)?;
    let mut text = String::new();
    for line in [
        format!(
            "# seamlife curve family: {} with one catalogue entry derived from fatigue tests.",
            comment_text(&base.id)
        ),
        format!(
            "# Written by `seamlife fit` {} on {}; rerun the fit rather than editing it.",
            fit.tool.version, fit.date
        ),
        format!(
            "# Base family: {}, data version {}, from {}.",
            comment_text(&base.id),
            comment_text(&base.data_version),
            comment_text(&base.origin)
        ),
        format!(
            "# Tests: {}, SHA-256 {}; {} failures, {} run-outs.",
            comment_text(&fit.input.file_name),
            fit.input.sha256,
            fit.failures,
            fit.runouts
        ),
        format!("# Method: {}.", comment_text(&fit.method.name)),
        format!(
            "# Entry `{key}`: {} stress category {} MPa (characteristic {} MPa at {n_ref} cycles).",
            fit.family.component,
            general(category),
            general((dk * 100.0).round() / 100.0)
        ),
        format!(
            "# Use: put this file in a folder, run with `--joint-classes FOLDER`, and name `basis.family: {}` and `detail: {key}` in the project.",
            fam.id
        ),
        "# CAUTION: the governing code, the project specification and review by a licensed or".into(),
        "# chartered engineer prevail; the entry holds only for details represented by the".into(),
        "# tested specimens (geometry, material, welding procedure, quality, stress ratio).".into(),
    ] {
        text.push_str(&line);
        text.push('\n');
    }
    text.push_str(&yaml);
    // The file must load as any family file does.
    let mut checked = crate::catalogue::parse_family(&text, Path::new("<family extension>"))
        .map_err(|e| Error::Internal(format!("the family extension does not load: {e}")))?;
    checked.origin = base.origin.clone();
    Ok((checked, text))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys() {
        assert!(valid_key("kb-bracket-fillet"));
        assert!(valid_key("t2"));
        assert!(!valid_key("KB-bracket"));
        assert!(!valid_key("-a"));
        assert!(!valid_key("a--b"));
        assert!(!valid_key("a-"));
        assert!(!valid_key("2a"));
        assert!(!valid_key(""));
        assert_eq!(
            default_key("Bracket Weld_tests.csv"),
            "tests-bracket-weld-tests"
        );
        assert_eq!(default_key("__.csv"), "tests");
    }
}
