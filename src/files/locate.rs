//! Maps a path in a YAML document (`details[3].material`) to its line and column, so
//! that checks made after parsing can still point at the offending value. Only run
//! when there is something to report.

use yaml_rust2::parser::{Event, MarkedEventReceiver, Parser};
use yaml_rust2::scanner::Marker;

/// One step of a path into a YAML document.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Step {
    Key(String),
    Index(usize),
}

/// A path into a YAML document.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct YamlPath(pub Vec<Step>);

impl YamlPath {
    pub fn root() -> Self {
        YamlPath(Vec::new())
    }

    pub fn key(&self, k: &str) -> Self {
        let mut v = self.0.clone();
        v.push(Step::Key(k.to_string()));
        YamlPath(v)
    }

    pub fn index(&self, i: usize) -> Self {
        let mut v = self.0.clone();
        v.push(Step::Index(i));
        YamlPath(v)
    }
}

impl std::fmt::Display for YamlPath {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut first = true;
        for s in &self.0 {
            match s {
                Step::Key(k) => {
                    if !first {
                        write!(f, ".")?;
                    }
                    write!(f, "{k}")?;
                }
                Step::Index(i) => write!(f, "[{i}]")?,
            }
            first = false;
        }
        Ok(())
    }
}

enum Frame {
    Map {
        key: Option<String>,
        expect_key: bool,
    },
    Seq {
        index: usize,
    },
}

struct Locator<'a> {
    targets: &'a [YamlPath],
    found: Vec<Option<(usize, usize)>>,
    /// Record where each target's key stands rather than its value.
    keys: bool,
    stack: Vec<Frame>,
    path: Vec<Step>,
}

impl Locator<'_> {
    /// Called for every node; returns false when the node was a mapping key.
    fn node(&mut self, mark: Marker) -> Option<Vec<Step>> {
        match self.stack.last_mut() {
            None => Some(Vec::new()),
            Some(Frame::Map { expect_key, .. }) if *expect_key => None,
            Some(Frame::Map { key, .. }) => {
                let mut p = self.path.clone();
                p.push(Step::Key(key.clone().unwrap_or_default()));
                let _ = mark;
                Some(p)
            }
            Some(Frame::Seq { index }) => {
                let mut p = self.path.clone();
                p.push(Step::Index(*index));
                Some(p)
            }
        }
    }

    fn record(&mut self, p: &[Step], mark: Marker) {
        for (i, t) in self.targets.iter().enumerate() {
            if self.found[i].is_none() && t.0 == p {
                // yaml-rust2 columns count from 0; report them from 1.
                self.found[i] = Some((mark.line(), mark.col() + 1));
            }
        }
    }

    fn after_value(&mut self) {
        match self.stack.last_mut() {
            Some(Frame::Map { expect_key, key }) => {
                *expect_key = true;
                *key = None;
            }
            Some(Frame::Seq { index }) => *index += 1,
            None => {}
        }
    }
}

impl MarkedEventReceiver for Locator<'_> {
    fn on_event(&mut self, ev: Event, mark: Marker) {
        match ev {
            Event::Scalar(text, ..) => match self.node(mark) {
                None => {
                    if self.keys {
                        let mut p = self.path.clone();
                        p.push(Step::Key(text.clone()));
                        self.record(&p, mark);
                    }
                    if let Some(Frame::Map { key, expect_key }) = self.stack.last_mut() {
                        *key = Some(text);
                        *expect_key = false;
                    }
                }
                Some(p) => {
                    if !self.keys {
                        self.record(&p, mark);
                    }
                    self.after_value();
                }
            },
            Event::Alias(_) => {
                if let Some(p) = self.node(mark) {
                    if !self.keys {
                        self.record(&p, mark);
                    }
                    self.after_value();
                } else if let Some(Frame::Map { expect_key, .. }) = self.stack.last_mut() {
                    *expect_key = false;
                }
            }
            Event::MappingStart(..) | Event::SequenceStart(..) => {
                let is_map = matches!(ev, Event::MappingStart(..));
                match self.node(mark) {
                    Some(p) => {
                        if !self.keys {
                            self.record(&p, mark);
                        }
                        self.path = p;
                    }
                    None => {
                        // A complex key: treat it as an anonymous key.
                        if let Some(Frame::Map { expect_key, key }) = self.stack.last_mut() {
                            *expect_key = false;
                            *key = Some(String::new());
                        }
                        let mut p = self.path.clone();
                        p.push(Step::Key(String::new()));
                        self.path = p;
                    }
                }
                self.stack.push(if is_map {
                    Frame::Map {
                        key: None,
                        expect_key: true,
                    }
                } else {
                    Frame::Seq { index: 0 }
                });
            }
            Event::MappingEnd | Event::SequenceEnd => {
                self.stack.pop();
                if !self.stack.is_empty() {
                    self.path.pop();
                }
                self.after_value();
            }
            _ => {}
        }
    }
}

/// Line and column (both 1-based) where the `n`-th document (1-based) of a YAML stream
/// starts, if there is one.
pub fn document_start(text: &str, n: usize) -> Option<(usize, usize)> {
    struct Docs {
        n: usize,
        seen: usize,
        found: Option<(usize, usize)>,
    }
    impl MarkedEventReceiver for Docs {
        fn on_event(&mut self, ev: Event, mark: Marker) {
            if matches!(ev, Event::DocumentStart) {
                self.seen += 1;
                if self.seen == self.n && self.found.is_none() {
                    self.found = Some((mark.line(), mark.col() + 1));
                }
            }
        }
    }
    let mut d = Docs {
        n,
        seen: 0,
        found: None,
    };
    let mut parser = Parser::new_from_str(text);
    let _ = parser.load(&mut d, true);
    d.found
}

/// Line and column (both 1-based) of each target path's value; `None` where the path
/// is not in the document or the document does not parse.
pub fn locate(text: &str, targets: &[YamlPath]) -> Vec<Option<(usize, usize)>> {
    run_locator(text, targets, false)
}

/// Line and column (both 1-based) of each target path's key (the last step must be a
/// key); for a value that is empty, where the key stands is where to look.
pub fn locate_keys(text: &str, targets: &[YamlPath]) -> Vec<Option<(usize, usize)>> {
    run_locator(text, targets, true)
}

fn run_locator(text: &str, targets: &[YamlPath], keys: bool) -> Vec<Option<(usize, usize)>> {
    let mut loc = Locator {
        targets,
        found: vec![None; targets.len()],
        keys,
        stack: Vec::new(),
        path: Vec::new(),
    };
    let mut parser = Parser::new_from_str(text);
    let _ = parser.load(&mut loc, false);
    loc.found
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_nested_values() {
        let text = "a: 1\nlist:\n  - id: x\n    m: S355\n  - id: y\n    m: S275\n";
        let p = YamlPath::root().key("list").index(1).key("m");
        let q = YamlPath::root().key("a");
        let r = locate(text, &[p, q, YamlPath::root().key("nope")]);
        // "    m: S275" is line 6; the value starts at column 8 (1-based)
        assert_eq!(r[0], Some((6, 8)));
        assert_eq!(r[1], Some((1, 4)));
        assert_eq!(r[2], None);
    }

    #[test]
    fn flow_style_is_tracked() {
        let text = "d:\n  - {id: a, blocks: [{r: 1}, {r: 2}]}\n";
        let p = YamlPath::root()
            .key("d")
            .index(0)
            .key("blocks")
            .index(1)
            .key("r");
        let r = locate(text, &[p]);
        assert_eq!(r[0], Some((2, 34)));
    }

    #[test]
    fn keys_are_found_for_empty_values() {
        let text = "a:\n  - e:\n    n: 1\n";
        let p = YamlPath::root().key("a").index(0).key("e");
        // "  - e:" is line 2; the key starts at column 5 (1-based)
        assert_eq!(locate_keys(text, std::slice::from_ref(&p))[0], Some((2, 5)));
    }

    #[test]
    fn path_display() {
        let p = YamlPath::root().key("details").index(3).key("material");
        assert_eq!(p.to_string(), "details[3].material");
    }
}
