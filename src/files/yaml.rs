//! YAML parse errors as input errors with a location, a short message and a hint.

use std::path::Path;

use super::suggest;
use crate::error::{InputError, InputErrorKind, Location};

/// Turn a serde_yaml error into an input error with location and hint.
pub fn yaml_error(path: &Path, _text: &str, e: serde_yaml::Error) -> InputError {
    let raw = e.to_string();
    // serde_yaml appends " at line L column C"; the location is reported separately.
    let msg = match raw.rfind(" at line ") {
        Some(i) => raw[..i].to_string(),
        None => raw.clone(),
    };
    let location = match e.location() {
        Some(l) => Location::at(path, l.line(), l.column()),
        None => Location::file(path),
    };
    let (kind, hint) = classify_serde_message(&msg);
    let msg = shorten_message(&msg);
    let mut err = InputError::new(kind, location, msg);
    err.hint = hint;
    err
}

/// "unknown field `x`, expected one of ..." -> "unknown key `x`"; the list goes to the hint.
fn shorten_message(msg: &str) -> String {
    for (needle, word) in [
        ("unknown field `", "unknown key `"),
        ("unknown variant `", "unknown value `"),
    ] {
        if let Some(i) = msg.find(needle) {
            let rest = &msg[i + needle.len()..];
            if let Some(j) = rest.find('`') {
                return format!("{}{word}{}`", &msg[..i], &rest[..j]);
            }
        }
    }
    msg.to_string()
}

fn backticked(s: &str) -> Vec<&str> {
    s.split('`').skip(1).step_by(2).collect()
}

fn classify_serde_message(msg: &str) -> (InputErrorKind, Option<String>) {
    for (needle, kind, what) in [
        ("unknown field `", InputErrorKind::UnknownKey, "key"),
        ("unknown variant `", InputErrorKind::InvalidValue, "value"),
    ] {
        if let Some(i) = msg.find(needle) {
            let tail = &msg[i..];
            let words = backticked(tail);
            let Some((bad, allowed)) = words.split_first() else {
                break;
            };
            let list = allowed
                .iter()
                .map(|a| format!("`{a}`"))
                .collect::<Vec<_>>()
                .join(", ");
            let hint = match suggest(bad, allowed.iter().copied()) {
                Some(near) => format!("did you mean `{near}`? (allowed: {list})"),
                None if allowed.is_empty() => format!("remove the {what} `{bad}`"),
                None => format!("allowed {what}s here: {list}"),
            };
            return (kind, Some(hint));
        }
    }
    if let Some(i) = msg.find("missing field `") {
        let name = backticked(&msg[i..]).first().copied().unwrap_or("");
        return (
            InputErrorKind::MissingField,
            Some(format!(
                "add `{name}:` to this entry (see README.md, input format)"
            )),
        );
    }
    if msg.contains("duplicate field") || msg.contains("duplicate entry") {
        return (
            InputErrorKind::Syntax,
            Some("each key may appear once in a mapping".into()),
        );
    }
    if msg.contains("invalid type") {
        let hint = if msg.contains("expected f64") || msg.contains("expected u32") {
            "give a plain number here (units are in the key name), e.g. `62` or `2.0e6`"
        } else {
            "check the value's type against the input format in README.md"
        };
        return (InputErrorKind::WrongType, Some(hint.into()));
    }
    (
        InputErrorKind::Syntax,
        Some("check indentation and that every `key: value` pair is well formed".into()),
    )
}
