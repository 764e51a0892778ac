//! YAML parse errors as input errors with a location, a short message and a hint.

use std::path::Path;

use super::locate::YamlPath;
use super::suggest;
use crate::error::{InputError, InputErrorKind, Location};

/// The words after "`key`" in the error for a required text given as YAML null.
pub const NULL_TEXT: &str = "is empty: YAML reads `~`, `null` or nothing as no value";

/// A document path as serde_yaml prints it (`details[3].normal`), as a [`YamlPath`].
fn parse_path(s: &str) -> Option<YamlPath> {
    let mut p = YamlPath::root();
    for part in s.split('.') {
        let (key, rest) = match part.find('[') {
            Some(i) => (&part[..i], &part[i..]),
            None => (part, ""),
        };
        if !key.is_empty() {
            p = p.key(key);
        }
        for idx in rest.split('[').skip(1) {
            p = p.index(idx.strip_suffix(']')?.parse().ok()?);
        }
    }
    Some(p)
}

/// Turn a serde_yaml error into an input error with location and hint.
pub fn yaml_error(path: &Path, text: &str, e: serde_yaml::Error) -> InputError {
    let raw = e.to_string();
    // serde_yaml appends " at line L column C"; the location is reported separately.
    let msg = match raw.rfind(" at line ") {
        Some(i) => raw[..i].to_string(),
        None => raw.clone(),
    };
    let place = e.location().map(|l| (l.line(), l.column()));
    located_yaml_error(path, text, msg, place)
}

/// Turn a YAML reading error (the message, with the document path as its prefix, and
/// the 1-based line and column where it arose) into an input error with a hint.
pub fn located_yaml_error(
    path: &Path,
    text: &str,
    msg: String,
    place: Option<(usize, usize)>,
) -> InputError {
    if msg.contains("more than one document") {
        let location = match super::locate::document_start(text, 2) {
            Some((l, c)) => Location::at(path, l, c),
            None => Location::file(path),
        };
        return InputError::new(
            InputErrorKind::Syntax,
            location,
            "a second YAML document starts here; a project or family file is one document",
        )
        .hint("remove this `---` line (and what follows, if it belongs to another file)");
    }
    if let Some(offset) = control_offset(&msg) {
        return control_error(path, text, offset);
    }
    if let Some(i) = msg.find(NULL_TEXT) {
        // "details[0].location: `location` is empty: ..." -> locate that key
        let head = &msg[..i];
        let key = backticked(head).last().copied().unwrap_or("");
        let prefix = head.split(": ").next().filter(|p| !p.starts_with('`'));
        let mut at = prefix.and_then(parse_path).unwrap_or_else(YamlPath::root);
        if at.0.last() != Some(&super::locate::Step::Key(key.to_string())) {
            at = at.key(key);
        }
        let location = match super::locate::locate_keys(text, std::slice::from_ref(&at))[0] {
            Some((l, c)) => Location::at(path, l, c),
            None => match place {
                Some((l, c)) => Location::at(path, l, c),
                None => Location::file(path),
            },
        };
        return InputError::new(
            InputErrorKind::MissingField,
            location,
            format!("{at}: {key} is empty (YAML null)"),
        )
        .hint(format!(
            "YAML reads `~`, `null` or nothing as no value: write the {key}, or quote it (\"~\") if a tilde is meant"
        ));
    }
    let location = match place {
        Some((l, c)) => Location::at(path, l, c),
        None => Location::file(path),
    };
    if let (Some(l), Some(c)) = (location.line, location.column) {
        if let Some((token, base)) = non_decimal_at(text, l, c) {
            return InputError::new(
                InputErrorKind::WrongType,
                location,
                super::yamlde::non_decimal_message(&token, base),
            )
            .hint("write the value in decimal, e.g. `16` or `2.5e6` (units are in the key name)");
        }
    }
    let (kind, hint) = classify_serde_message(&msg);
    let msg = shorten_message(&msg);
    let mut err = InputError::new(kind, location, msg);
    err.hint = hint;
    err
}

/// The first control character that YAML text may not hold (C0 other than tab, line
/// feed and carriage return, and DEL), as an input error with its line and column.
pub fn check_controls(path: &Path, text: &str) -> Result<(), InputError> {
    match text
        .bytes()
        .position(|b| (b < 0x20 && b != b'\t' && b != b'\n' && b != b'\r') || b == 0x7f)
    {
        Some(i) => Err(control_error(path, text, i)),
        None => Ok(()),
    }
}

/// The byte offset of "control characters are not allowed at position N".
fn control_offset(msg: &str) -> Option<usize> {
    let rest = &msg[msg.find("control characters are not allowed")?..];
    let i = rest.find("position ")?;
    rest[i + "position ".len()..]
        .split(|c: char| !c.is_ascii_digit())
        .next()?
        .parse()
        .ok()
}

/// A control character in the text: its line, column and code point.
fn control_error(path: &Path, text: &str, offset: usize) -> InputError {
    let bytes = text.as_bytes();
    // libyaml's offset may point at or just before the character; take the first
    // control character from there.
    let at = (offset.min(bytes.len())..bytes.len())
        .chain(0..offset.min(bytes.len()))
        .find(|&i| {
            let b = bytes[i];
            (b < 0x20 && b != b'\t' && b != b'\n' && b != b'\r') || b == 0x7f
        })
        .unwrap_or(offset.min(bytes.len()));
    let before = &bytes[..at];
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    let line_start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    let column = text[line_start..at].chars().count() + 1;
    let code = bytes.get(at).copied().unwrap_or(0);
    let name = if code == 0 { ", a NUL byte" } else { "" };
    InputError::new(
        InputErrorKind::Syntax,
        Location::at(path, line, column),
        format!("control character U+{code:04X}{name}: YAML text may not hold control characters"),
    )
    .hint("remove it; a file full of them is binary or saved in another encoding (save it as UTF-8 text)")
}

/// The hexadecimal, octal or binary number written at (line, column), if one is.
fn non_decimal_at(text: &str, line: usize, column: usize) -> Option<(String, &'static str)> {
    let l = text.lines().nth(line.checked_sub(1)?)?;
    let rest: String = l.chars().skip(column.checked_sub(1)?).collect();
    let token: String = rest
        .chars()
        .take_while(|c| !matches!(c, ',' | '}' | ']' | '#' | ' ' | '\t'))
        .collect();
    let (name, _) = super::yamlde::non_decimal(&token)?;
    Some((token, name))
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
