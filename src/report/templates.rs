//! Tera templates for the package, the Typst escaping filter and number formatting.

use std::collections::HashMap;
use std::path::Path;

use serde_json::Value;
use tera::Tera;

use crate::error::Error;

/// The built-in templates; a file of the same name in an override folder replaces one.
pub const BUILT_IN: &[(&str, &str)] = &[
    (
        "package.typ.tera",
        include_str!("../../templates/package.typ.tera"),
    ),
    (
        "style.typ.tera",
        include_str!("../../templates/style.typ.tera"),
    ),
    (
        "title-block.typ.tera",
        include_str!("../../templates/title-block.typ.tera"),
    ),
    (
        "cautions.typ.tera",
        include_str!("../../templates/cautions.typ.tera"),
    ),
    (
        "basis.typ.tera",
        include_str!("../../templates/basis.typ.tera"),
    ),
    (
        "summary.typ.tera",
        include_str!("../../templates/summary.typ.tera"),
    ),
    (
        "detail.typ.tera",
        include_str!("../../templates/detail.typ.tera"),
    ),
    (
        "appendix.typ.tera",
        include_str!("../../templates/appendix.typ.tera"),
    ),
    (
        "fit-sheet.typ.tera",
        include_str!("../../templates/fit-sheet.typ.tera"),
    ),
];

/// The entry template.
pub const ENTRY: &str = "package.typ.tera";

/// Escape text for Typst markup: the text becomes a string literal shown verbatim, so
/// nothing in it (`# [ ] $ * _ @ < > \ //` …) is evaluated.
pub fn typst_markup(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 4);
    out.push_str("#\"");
    push_string_body(&mut out, s);
    out.push_str("\";");
    out
}

/// A Typst string literal (with quotes) for use in code.
pub fn typst_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    push_string_body(&mut out, s);
    out.push('"');
    out
}

fn push_string_body(out: &mut String, s: &str) {
    for ch in s.chars() {
        match ch {
            '\\' => out.push_str("\\\\"),
            '"' => out.push_str("\\\""),
            '\n' => out.push_str("\\n"),
            '\r' => {}
            '\t' => out.push_str("\\t"),
            c if c.is_control() => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
}

fn value_text(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        Value::Null => "—".into(),
        other => other.to_string(),
    }
}

fn arg_usize(args: &HashMap<String, Value>, key: &str, default: usize) -> usize {
    args.get(key)
        .and_then(|v| v.as_u64())
        .map(|x| x as usize)
        .unwrap_or(default)
}

const SUPERSCRIPT: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];

/// Mantissa and exponent of x with `d` decimals in the mantissa.
fn split_sci(x: f64, d: usize) -> (String, i32) {
    let s = format!("{x:.d$e}");
    let (m, e) = s.split_once('e').unwrap_or((&s, "0"));
    (m.to_string(), e.parse().unwrap_or(0))
}

/// x in scientific form for text: `3.763×10⁶`.
pub fn sci_text(x: f64, d: usize) -> String {
    if !x.is_finite() {
        return "—".into();
    }
    if x == 0.0 {
        return "0".into();
    }
    let (m, e) = split_sci(x, d);
    let mut exp = String::new();
    if e < 0 {
        exp.push('⁻');
    }
    for c in e.unsigned_abs().to_string().chars() {
        exp.push(SUPERSCRIPT[c.to_digit(10).unwrap_or(0) as usize]);
    }
    format!("{m}×10{exp}")
}

/// x as a number for text: fixed with `d` decimals in an ordinary range, else scientific.
pub fn num_text(x: f64, d: usize) -> String {
    if !x.is_finite() {
        return "—".into();
    }
    let a = x.abs();
    if a == 0.0 || (1e-3..1e5).contains(&a) {
        format!("{x:.d$}")
    } else {
        sci_text(x, d)
    }
}

/// x for Typst math: `3.763 times 10^(6)`, or fixed with `d` decimals from 1 to 1e5,
/// or `d` significant digits from 1e-3 to 1.
pub fn num_math(x: f64, d: usize) -> String {
    if !x.is_finite() {
        return "oo".into();
    }
    let a = x.abs();
    if a == 0.0 {
        "0".into()
    } else if x.fract() == 0.0 && a < 1e6 {
        format!("{x:.0}")
    } else if (1.0..1e4).contains(&a) {
        format!("{x:.d$}")
    } else if (1e-3..1.0).contains(&a) {
        let decimals = d.max(1) - 1 + (-a.log10().floor()) as usize;
        format!("{x:.decimals$}")
    } else {
        let (m, e) = split_sci(x, d);
        format!("{m} times 10^({e})")
    }
}

fn as_f64(v: &Value) -> Option<f64> {
    v.as_f64()
}

fn filter_typst(v: &Value, _: &HashMap<String, Value>) -> tera::Result<Value> {
    Ok(Value::String(typst_markup(&value_text(v))))
}

fn filter_typst_str(v: &Value, _: &HashMap<String, Value>) -> tera::Result<Value> {
    Ok(Value::String(typst_string(&value_text(v))))
}

fn filter_fixed(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let d = arg_usize(args, "d", 2);
    Ok(Value::String(match as_f64(v) {
        Some(x) => format!("{x:.d$}"),
        None => "—".into(),
    }))
}

fn filter_num(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let d = arg_usize(args, "d", 3);
    Ok(Value::String(match as_f64(v) {
        Some(x) => num_text(x, d),
        None => "—".into(),
    }))
}

fn filter_sci(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let d = arg_usize(args, "d", 3);
    Ok(Value::String(match as_f64(v) {
        Some(x) => sci_text(x, d),
        None => "—".into(),
    }))
}

fn filter_math(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let d = arg_usize(args, "d", 3);
    Ok(Value::String(match as_f64(v) {
        Some(x) => num_math(x, d),
        None => "oo".into(),
    }))
}

/// A plain number as short as it can be: 112, 1.35, 0.2; scientific when huge or tiny.
pub fn general(x: f64) -> String {
    if !x.is_finite() {
        return "—".into();
    }
    if x.fract() == 0.0 && x.abs() < 1e7 {
        return format!("{x:.0}");
    }
    let a = x.abs();
    if (1e-3..1e7).contains(&a) {
        let s = format!("{x:.6}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        sci_text(x, 3)
    }
}

fn filter_general(v: &Value, _: &HashMap<String, Value>) -> tera::Result<Value> {
    Ok(Value::String(match as_f64(v) {
        Some(x) => general(x),
        None => "—".into(),
    }))
}

/// Life in years, or a word when unbounded.
fn filter_life(v: &Value, _: &HashMap<String, Value>) -> tera::Result<Value> {
    Ok(Value::String(match as_f64(v) {
        Some(y) if y >= 1e5 => sci_text(y, 2),
        Some(y) if y >= 100.0 => format!("{y:.0}"),
        Some(y) => format!("{y:.1}"),
        None => "no damage".into(),
    }))
}

/// Build the template set: built-ins, then the override folder's `*.tera` files.
pub fn engine(template_dir: Option<&Path>) -> Result<Tera, Error> {
    let mut tera = Tera::default();
    tera.autoescape_on(vec![]);
    let mut sources: Vec<(String, String)> = BUILT_IN
        .iter()
        .map(|(n, t)| (n.to_string(), t.to_string()))
        .collect();
    if let Some(dir) = template_dir {
        let rd = std::fs::read_dir(dir).map_err(|e| Error::Report {
            message: format!("cannot read template folder {}: {e}", dir.display()),
            hint: Some("--templates must name a folder of *.typ.tera files".into()),
        })?;
        let mut paths: Vec<_> = rd
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "tera"))
            .collect();
        paths.sort();
        for p in paths {
            let name = p
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default();
            let text = std::fs::read_to_string(&p).map_err(|e| Error::Report {
                message: format!("cannot read template {}: {e}", p.display()),
                hint: None,
            })?;
            match sources.iter_mut().find(|(n, _)| *n == name) {
                Some(slot) => slot.1 = text,
                None => sources.push((name, text)),
            }
        }
    }
    // A marker at the head of each template lets a typesetting error name its template.
    let marked: Vec<(String, String)> = sources
        .into_iter()
        .map(|(n, t)| {
            // A raw block is not trimmed by a `{#-` comment at the template's head.
            let body = format!("{{% raw %}}\n// seamlife-template: {n}\n{{% endraw %}}{t}");
            (n, body)
        })
        .collect();
    tera.add_raw_templates(marked).map_err(|e| Error::Report {
        message: format!("template error: {}", tera_chain(&e)),
        hint: Some(
            "fix the template named above; `--templates` files replace the built-in ones by name"
                .into(),
        ),
    })?;
    tera.register_filter("typst", filter_typst);
    tera.register_filter("typst_str", filter_typst_str);
    tera.register_filter("fixed", filter_fixed);
    tera.register_filter("num", filter_num);
    tera.register_filter("sci", filter_sci);
    tera.register_filter("math", filter_math);
    tera.register_filter("life", filter_life);
    tera.register_filter("g", filter_general);
    Ok(tera)
}

/// Tera's error with its causes, one line.
pub fn tera_chain(e: &tera::Error) -> String {
    let mut s = e.to_string();
    let mut src = std::error::Error::source(e);
    while let Some(x) = src {
        s.push_str(": ");
        s.push_str(&x.to_string());
        src = x.source();
    }
    s
}

/// Render the package source.
pub fn render(ctx: &Value, template_dir: Option<&Path>) -> Result<String, Error> {
    let tera = engine(template_dir)?;
    let context =
        tera::Context::from_value(ctx.clone()).map_err(|e| Error::Internal(e.to_string()))?;
    tera.render(ENTRY, &context).map_err(|e| Error::Report {
        message: format!("template error: {}", tera_chain(&e)),
        hint: Some("the template context is described in templates/README.md".into()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escaping_makes_a_string_literal() {
        assert_eq!(typst_markup(r#"a"b\c"#), r#"#"a\"b\\c";"#);
        assert_eq!(typst_markup("x\ny"), "#\"x\\ny\";");
        assert_eq!(typst_string("#[x]"), "\"#[x]\"");
    }

    #[test]
    fn number_forms() {
        assert_eq!(sci_text(3.7632e6, 3), "3.763×10⁶");
        assert_eq!(sci_text(2.5e-5, 2), "2.50×10⁻⁵");
        assert_eq!(num_text(0.5234, 3), "0.523");
        assert_eq!(num_text(4.5e5, 2), "4.50×10⁵");
        assert_eq!(num_math(2e6, 1), "2.0 times 10^(6)");
        assert_eq!(num_math(25000.0, 3), "25000");
        assert_eq!(sci_text(0.0, 2), "0");
        assert_eq!(num_math(74.074, 2), "74.07");
        assert_eq!(num_math(0.0057162, 4), "0.005716");
        assert_eq!(num_math(0.1429, 4), "0.1429");
        assert_eq!(general(112.0), "112");
        assert_eq!(general(1.35), "1.35");
        assert_eq!(general(0.8660254037844386), "0.866025");
    }
}
