//! Characters the package fonts cannot draw. typst runs with `--ignore-system-fonts`, so
//! only its embedded fonts are available; a character none of them maps comes out as an
//! empty box. The commands warn about such characters before the package is made,
//! naming the project-file field they are in.

use std::path::Path;

use serde_yaml::Value;

use super::glyph_ranges::COVERED;
use crate::files::locate::{locate, YamlPath};

/// At most this many warning lines are printed for one project file.
pub const MAX_WARNINGS: usize = 20;

/// Characters that are never drawn, so need no glyph: controls (typst shows line
/// breaks and tabs as space) and the invisible formatting marks that the shaper removes
/// (Unicode default-ignorable code points, the common ones).
fn invisible(c: char) -> bool {
    c.is_control()
        || matches!(c as u32,
            0x00AD            // soft hyphen
            | 0x034F          // combining grapheme joiner
            | 0x200B..=0x200F // zero-width space, joiners, direction marks
            | 0x202A..=0x202E // direction embeddings
            | 0x2060..=0x2064 // word joiner, invisible operators
            | 0xFE00..=0xFE0F // variation selectors
            | 0xFEFF          // zero-width no-break space
            | 0xE0000..=0xE0FFF)
}

/// True when some embedded font has a glyph for `c` (or it needs none).
pub fn drawable(c: char) -> bool {
    if invisible(c) {
        return true;
    }
    let cp = c as u32;
    // COVERED is sorted and disjoint: find the last range starting at or before cp.
    let i = COVERED.partition_point(|&(start, _)| start <= cp);
    i > 0 && cp <= COVERED[i - 1].1
}

/// The distinct characters of `text` that no embedded font can draw, in order of first
/// appearance.
pub fn undrawable(text: &str) -> Vec<char> {
    let mut out: Vec<char> = Vec::new();
    for c in text.chars() {
        if !drawable(c) && !out.contains(&c) {
            out.push(c);
        }
    }
    out
}

/// One undrawable character in one field of the project file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Finding {
    /// Path of the field, e.g. `details[2].location`.
    pub path: YamlPath,
    /// True when the character is in a mapping key (a material name), not a value.
    pub in_key: bool,
    pub ch: char,
}

fn walk(v: &Value, path: &YamlPath, out: &mut Vec<Finding>) {
    match v {
        Value::String(s) => out.extend(undrawable(s).into_iter().map(|ch| Finding {
            path: path.clone(),
            in_key: false,
            ch,
        })),
        Value::Sequence(items) => {
            for (i, item) in items.iter().enumerate() {
                walk(item, &path.index(i), out);
            }
        }
        Value::Mapping(map) => {
            for (k, item) in map {
                let name = match k {
                    Value::String(s) => s.clone(),
                    other => serde_yaml::to_string(other)
                        .map(|s| s.trim().to_string())
                        .unwrap_or_default(),
                };
                let p = path.key(&name);
                out.extend(undrawable(&name).into_iter().map(|ch| Finding {
                    path: p.clone(),
                    in_key: true,
                    ch,
                }));
                walk(item, &p, out);
            }
        }
        Value::Tagged(t) => walk(&t.value, path, out),
        Value::Null | Value::Bool(_) | Value::Number(_) => {}
    }
}

/// Every undrawable character in the text fields of a project file (YAML text), field
/// by field in document order. Text that does not parse gives no findings (the parser
/// reports it).
pub fn project_findings(yaml_text: &str) -> Vec<Finding> {
    let mut out = Vec::new();
    if let Ok(v) = serde_yaml::from_str::<Value>(yaml_text) {
        walk(&v, &YamlPath::root(), &mut out);
    }
    out
}

/// Warning lines for the undrawable characters of a project file, with line and column
/// of each field, at most [`MAX_WARNINGS`] of them plus a count of the rest.
pub fn warnings(file: &Path, yaml_text: &str) -> Vec<String> {
    let found = project_findings(yaml_text);
    if found.is_empty() {
        return Vec::new();
    }
    let shown = &found[..found.len().min(MAX_WARNINGS)];
    let targets: Vec<YamlPath> = shown.iter().map(|f| f.path.clone()).collect();
    let places = locate(yaml_text, &targets);
    let mut lines: Vec<String> = shown
        .iter()
        .zip(places)
        .map(|(f, place)| {
            let at = match place {
                Some((l, c)) => format!("{}:{l}:{c}", file.display()),
                None => file.display().to_string(),
            };
            format!(
                "warning: {at}: {}{}: character U+{:04X} cannot be drawn by the package fonts and will show as a box; replace it (the fonts cover Latin, Greek, Cyrillic and mathematical symbols)",
                f.path,
                if f.in_key { " (name)" } else { "" },
                f.ch as u32
            )
        })
        .collect();
    if found.len() > shown.len() {
        lines.push(format!(
            "warning: {}: {} more characters the package fonts cannot draw",
            file.display(),
            found.len() - shown.len()
        ));
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_is_sorted_and_disjoint() {
        for w in COVERED.windows(2) {
            assert!(w[0].0 <= w[0].1 && w[0].1 + 1 < w[1].0, "{w:?}");
        }
    }

    #[test]
    fn coverage_of_the_embedded_fonts() {
        // Drawable: ASCII, Latin-1, Greek, Cyrillic, the symbols the templates use
        // (cmaps of the typst-assets 0.15.1 fonts, read by tests/tools/font_coverage.py).
        for c in "Az09#[]$ ØÆÅß ΔστγΣ Жж ≤≥×⁰¹⁶⁻ —–▸✓".chars() {
            assert!(drawable(c), "{c:?} U+{:04X}", c as u32);
        }
        // Not drawable: an emoji, CJK, Thai (none of those fonts maps them); each once.
        assert_eq!(undrawable("ok 😀 桥 ก 😀"), vec!['😀', '桥', 'ก']);
        // Line breaks, tabs and invisible marks need no glyph.
        assert!(undrawable("a\nb\tc\u{200b}d\u{fe0f}").is_empty());
    }

    #[test]
    fn findings_name_the_field() {
        let text = "project:\n  title: Slipway 😀\nmaterials:\n  S355桥: {fy_mpa: 355}\ndetails:\n  - id: A\n    location: ok\n  - id: B\n    location: north 🚧 bay\n";
        let f = project_findings(text);
        let named: Vec<(String, bool, char)> = f
            .iter()
            .map(|x| (x.path.to_string(), x.in_key, x.ch))
            .collect();
        assert_eq!(
            named,
            vec![
                ("project.title".to_string(), false, '😀'),
                ("materials.S355桥".to_string(), true, '桥'),
                ("details[1].location".to_string(), false, '🚧'),
            ]
        );
        let w = warnings(Path::new("p.yaml"), text);
        assert_eq!(w.len(), 3);
        // "    location: north 🚧 bay" is line 9, its value starts at column 15
        assert!(
            w[2].starts_with(
                "warning: p.yaml:9:15: details[1].location: character U+1F6A7 cannot be drawn"
            ),
            "{}",
            w[2]
        );
        assert!(
            w[1].contains("materials.S355桥 (name): character U+6865"),
            "{}",
            w[1]
        );
    }

    #[test]
    fn many_findings_are_summarised() {
        let mut text = String::from("details:\n");
        for i in 0..30 {
            text.push_str(&format!("  - id: D{i}\n    location: bay 😀\n"));
        }
        let w = warnings(Path::new("p.yaml"), &text);
        assert_eq!(w.len(), MAX_WARNINGS + 1);
        assert!(w[MAX_WARNINGS].ends_with("10 more characters the package fonts cannot draw"));
    }
}
