//! Text helpers for messages: numbers that stay short however large they are, user text
//! cut to a readable length, and control characters made visible so that nothing a file
//! holds can steer the terminal.

use std::borrow::Cow;

/// A number for a message or a table cell: plain in an ordinary range (`62`, `0.25`,
/// `1.35`), scientific when huge or tiny (`1.700e308`), never hundreds of digits.
pub fn short_num(x: f64) -> String {
    if x.is_nan() {
        return "NaN".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "inf".into() } else { "-inf".into() };
    }
    let a = x.abs();
    if a == 0.0 {
        return "0".into();
    }
    if (1e-4..1e9).contains(&a) {
        // The shortest text that reads back as the same number, which is short here.
        let s = format!("{x}");
        if s.len() <= 16 {
            return s;
        }
        let t = format!("{x:.6}");
        return t.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    format!("{x:.3e}")
}

/// A number for a data file (CSV): the shortest text that reads back as the same
/// number, in exponent form when very large or small (`1.7e308`, never 309 digits).
pub fn data_num(x: f64) -> String {
    let a = x.abs();
    if a == 0.0 || !x.is_finite() || (1e-5..1e16).contains(&a) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// Longest user text quoted whole in a message, in characters.
pub const CLIP_CHARS: usize = 60;

/// User text for a message: whole when short, else its first [`CLIP_CHARS`] characters,
/// an ellipsis and the full length (`'12345…' (200000000 characters)`), control
/// characters escaped.
pub fn clip(s: &str) -> String {
    let n = s.chars().count();
    if n <= CLIP_CHARS {
        format!("'{}'", escape_controls(s))
    } else {
        let head: String = s.chars().take(CLIP_CHARS).collect();
        format!("'{}…' ({n} characters)", escape_controls(&head))
    }
}

/// Whether a character would act on a terminal rather than show: C0 controls other
/// than tab and newline, DEL, C1 controls, and the bidirectional overrides and
/// isolates that reorder what is shown.
pub fn is_steering(c: char) -> bool {
    matches!(c,
        '\u{0}'..='\u{8}' | '\u{b}'..='\u{1f}' | '\u{7f}'..='\u{9f}'
        | '\u{200e}' | '\u{200f}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

/// Text with every steering character shown as a Rust-style escape (`\u{1b}`); tab and
/// newline are kept. Borrowed when nothing needs escaping.
pub fn escape_controls(s: &str) -> Cow<'_, str> {
    if !s.chars().any(is_steering) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        if is_steering(c) {
            out.push_str(&format!("\\u{{{:x}}}", c as u32));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// Text on one line for a message: as [`escape_controls`], and newlines and tabs also
/// escaped.
pub fn one_line(s: &str) -> Cow<'_, str> {
    if !s
        .chars()
        .any(|c| is_steering(c) || c == '\n' || c == '\t' || c == '\r')
    {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if is_steering(c) => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_stay_short() {
        assert_eq!(short_num(62.0), "62");
        assert_eq!(short_num(0.25), "0.25");
        assert_eq!(short_num(1.35), "1.35");
        assert_eq!(short_num(-22.5), "-22.5");
        assert_eq!(short_num(1.7e308), "1.700e308");
        assert_eq!(short_num(2.5e-7), "2.500e-7");
        assert_eq!(short_num(f64::INFINITY), "inf");
        assert_eq!(short_num(0.1 + 0.2), "0.3");
        assert!(short_num(f64::MAX).len() < 12);
        assert_eq!(data_num(1.7e308), "1.7e308");
        assert_eq!(data_num(62.5), "62.5");
        assert_eq!(data_num(1.7e308).parse::<f64>().unwrap(), 1.7e308);
    }

    #[test]
    fn controls_are_escaped() {
        assert_eq!(escape_controls("a\u{1b}[31mb"), "a\\u{1b}[31mb");
        assert_eq!(escape_controls("tab\tnl\n"), "tab\tnl\n");
        assert_eq!(escape_controls("\u{9b}2J"), "\\u{9b}2J");
        assert_eq!(escape_controls("x\u{202e}y"), "x\\u{202e}y");
        assert_eq!(one_line("a\nb"), "a\\nb");
        assert!(matches!(escape_controls("plain Δσ"), Cow::Borrowed(_)));
    }

    #[test]
    fn long_text_is_clipped_with_its_length() {
        let long = "9".repeat(500);
        let c = clip(&long);
        assert!(c.starts_with("'999"));
        assert!(c.ends_with("…' (500 characters)"), "{c}");
        assert_eq!(c.chars().filter(|&x| x == '9').count(), CLIP_CHARS);
        assert_eq!(clip("abc"), "'abc'");
    }
}
