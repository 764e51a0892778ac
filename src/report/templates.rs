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
        "helpers.typ.tera",
        include_str!("../../templates/helpers.typ.tera"),
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
        "truck-pair.typ.tera",
        include_str!("../../templates/truck-pair.typ.tera"),
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
        "changes-marks.typ.tera",
        include_str!("../../templates/changes-marks.typ.tera"),
    ),
    (
        "changes.typ.tera",
        include_str!("../../templates/changes.typ.tera"),
    ),
    (
        "fit-sheet.typ.tera",
        include_str!("../../templates/fit-sheet.typ.tera"),
    ),
];

/// The entry template.
pub const ENTRY: &str = "package.typ.tera";

/// A run of non-space characters longer than this gets extra line-break opportunities,
/// so an id, a reference or a file name without spaces wraps instead of running out of
/// its column. Ordinary words are shorter and are never split. The filters take
/// `run=N` for a narrow column of ids or dates, where a shorter run may break.
pub const LONG_RUN: usize = 20;
/// Within a long run, a break is allowed at least every this many characters.
const RUN_PIECE: usize = 10;

/// After these a long run may break (separators of ids, paths and references).
fn is_separator(c: char) -> bool {
    matches!(
        c,
        '-' | '_'
            | '/'
            | '\\'
            | '.'
            | ':'
            | ','
            | ';'
            | '|'
            | '+'
            | '='
            | '&'
            | '?'
            | ')'
            | ']'
            | '}'
    )
}

/// Marks that belong to the character before them: never break in front of one.
fn joins_previous(c: char) -> bool {
    matches!(c as u32,
        0x0300..=0x036F | 0x200D | 0xFE00..=0xFE0F | 0x1F3FB..=0x1F3FF | 0xE0020..=0xE007F)
}

/// Split `s` into pieces between which a line may break: only runs of more than
/// `long_run` non-space characters are cut, after a separator or every [`RUN_PIECE`]
/// (at most `long_run`) characters. Joining the pieces gives `s` back.
pub fn break_pieces(s: &str, long_run: usize) -> Vec<&str> {
    let long_run = long_run.max(4);
    let piece = RUN_PIECE.min(long_run);
    let chars: Vec<(usize, char)> = s.char_indices().collect();
    let mut cuts: Vec<usize> = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        if chars[i].1.is_whitespace() {
            i += 1;
            continue;
        }
        let start = i;
        while i < chars.len() && !chars[i].1.is_whitespace() {
            i += 1;
        }
        if i - start <= long_run {
            continue;
        }
        let mut since = 0;
        for k in start..i - 1 {
            since += 1;
            let next = chars[k + 1].1;
            // No cut that would leave one or two characters alone at the run's end.
            let by_length = since >= piece && i - (k + 1) >= 3;
            if (is_separator(chars[k].1) || by_length) && !joins_previous(next) {
                cuts.push(chars[k + 1].0);
                since = 0;
            }
        }
    }
    let mut pieces = Vec::with_capacity(cuts.len() + 1);
    let mut from = 0;
    for c in cuts {
        pieces.push(&s[from..c]);
        from = c;
    }
    pieces.push(&s[from..]);
    pieces
}

/// Typst markup between two pieces of a long run: an empty box, which is a line-break
/// opportunity that adds no character to the PDF's text (copying gives the run whole).
const BREAK: &str = "#box();";

/// Escape text for Typst markup: the text becomes a string literal shown verbatim, so
/// nothing in it (`# [ ] $ * _ @ < > \ //` …) is evaluated. Long runs without spaces
/// get line-break opportunities ([`break_pieces`] with [`LONG_RUN`]).
pub fn typst_markup(s: &str) -> String {
    typst_markup_run(s, LONG_RUN)
}

/// [`typst_markup`] with runs over `long_run` characters made breakable.
pub fn typst_markup_run(s: &str, long_run: usize) -> String {
    pieces_as(s, long_run, "#\"", "\";")
}

/// Text set as inline code (`#raw`), escaped like [`typst_markup`] and breakable the same way.
pub fn typst_raw(s: &str, long_run: usize) -> String {
    pieces_as(s, long_run, "#raw(\"", "\");")
}

/// Each piece of `s` as an escaped string between `open` and `close`, joined by [`BREAK`].
fn pieces_as(s: &str, long_run: usize, open: &str, close: &str) -> String {
    let mut out = String::with_capacity(s.len() + 8);
    for (i, piece) in break_pieces(s, long_run).into_iter().enumerate() {
        if i > 0 {
            out.push_str(BREAK);
        }
        out.push_str(open);
        push_string_body(&mut out, piece);
        out.push_str(close);
    }
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

fn filter_typst(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let run = arg_usize(args, "run", LONG_RUN);
    Ok(Value::String(typst_markup_run(&value_text(v), run)))
}

fn filter_typst_raw(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let run = arg_usize(args, "run", LONG_RUN);
    Ok(Value::String(typst_raw(&value_text(v), run)))
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

/// A text file as a listing: each line numbered; a line longer than `width` characters
/// (number included) continues on following lines marked `↪`, so a wrapped line is
/// never mistaken for a line of the file (indentation matters in YAML). A line is cut
/// after a space near the end of the room when there is one, else at the room's end;
/// the pieces of a line joined give it back.
pub fn listing(text: &str, width: usize) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let digits = lines.len().max(1).to_string().len();
    let gutter = digits + 2;
    let room = width.saturating_sub(gutter).max(16);
    let mut out = String::with_capacity(text.len() + lines.len() * (gutter + 1));
    for (i, line) in lines.iter().enumerate() {
        let chars: Vec<char> = line.trim_end_matches('\r').chars().collect();
        let mut rest: &[char] = &chars;
        let mut first = true;
        loop {
            let mut take = rest.len().min(room);
            if take < rest.len() {
                // after the last space in the final third of the room, if any
                if let Some(sp) = rest[room * 2 / 3..room].iter().rposition(|c| *c == ' ') {
                    take = room * 2 / 3 + sp + 1;
                }
            }
            if first {
                out.push_str(&format!("{:>digits$}  ", i + 1));
            } else {
                out.push_str(&format!("{:>digits$}  ", "↪"));
            }
            out.extend(&rest[..take]);
            out.push('\n');
            rest = &rest[take..];
            first = false;
            if rest.is_empty() {
                break;
            }
        }
    }
    out
}

fn filter_listing(v: &Value, args: &HashMap<String, Value>) -> tera::Result<Value> {
    let width = arg_usize(args, "width", 120);
    Ok(Value::String(listing(&value_text(v), width)))
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
            let text = crate::files::read_text_bounded(
                &p,
                crate::files::MAX_TEMPLATE_BYTES,
                "template files",
                "a template is Typst markup of a few kilobytes; put images beside it",
            )
            .map_err(|e| Error::Report {
                message: format!("cannot read template {e}"),
                hint: e.hint,
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
    tera.register_filter("typst_raw", filter_typst_raw);
    tera.register_filter("listing", filter_listing);
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
        assert_eq!(typst_raw("a-b", LONG_RUN), "#raw(\"a-b\");");
    }

    #[test]
    fn listing_numbers_lines_and_marks_continuations() {
        let text = format!("a: 1\nb: {}\n\nc: x\nd: aaaa bbbbbbb cc dd", "y".repeat(30));
        // width 20: a gutter of 1 digit and 2 spaces, then 17 characters of the line;
        // line 5 is cut after its last space among characters 12 to 17
        assert_eq!(
            listing(&text, 20),
            format!(
                "1  a: 1\n2  b: {}\n↪  {}\n3  \n4  c: x\n5  d: aaaa bbbbbbb \n↪  cc dd\n",
                "y".repeat(14),
                "y".repeat(16)
            )
        );
    }

    #[test]
    fn long_runs_get_break_opportunities() {
        // Words and short ids stay whole.
        let prose = "Bottom-flange transverse butt splice, 3.6 m from support A";
        assert_eq!(break_pieces(prose, LONG_RUN), vec![prose]);
        // A run over LONG_RUN characters breaks after separators and every RUN_PIECE.
        let id = "KB-2231-000000000000000-X";
        assert_eq!(
            break_pieces(id, LONG_RUN),
            vec!["KB-", "2231-", "0000000000", "00000-", "X"]
        );
        let p = format!("see {}", "a".repeat(300));
        let pieces = break_pieces(&p, LONG_RUN);
        assert_eq!(pieces.concat(), p);
        assert_eq!(pieces.len(), 30);
        assert!(pieces.iter().all(|x| x.chars().count() <= RUN_PIECE + 4));
        // Never between a character and its combining mark.
        let accents = "e\u{301}".repeat(15);
        assert!(break_pieces(&accents, LONG_RUN)
            .iter()
            .all(|x| !x.starts_with('\u{301}')));
        // A narrow column of ids: runs over 8 characters break.
        assert_eq!(break_pieces("RG3W01AB999", 8), vec!["RG3W01AB", "999"]);
        assert_eq!(
            typst_markup(&"x".repeat(22)),
            format!("#\"{}\";#box();#\"{}\";", "x".repeat(10), "x".repeat(12))
        );
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
