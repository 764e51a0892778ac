//! A serde deserializer that reads YAML as a stream of parser events (yaml-rust2's
//! pull parser), so that a large project file is never held as a tree or as a list of
//! all its events: memory grows with the nesting depth, not with the file.
//!
//! Plain scalars are typed by the YAML 1.2 core schema (null, booleans, integers,
//! floats), as serde_yaml does; quoted and block scalars are text. Anchors and
//! aliases are replayed (with a bound on the expansion). Errors carry the path in the
//! document (`details[3].normal`) and the line and column of the event where they
//! arose.

use std::collections::HashMap;
use std::fmt;

use serde::de::{self, DeserializeSeed, IntoDeserializer, Visitor};
use yaml_rust2::parser::{Event, Parser};
use yaml_rust2::scanner::{Marker, TScalarStyle};

use super::locate::{Step, YamlPath};

/// Deepest nesting of mappings and sequences accepted (as serde_yaml's limit).
const MAX_DEPTH: usize = 128;
/// Most events replayed through aliases in one document (a bound on "billion laughs").
const MAX_REPLAYED: usize = 1_000_000;

/// A deserialization error with the path and place where it arose.
#[derive(Debug, Clone)]
pub struct DeError {
    pub message: String,
    /// 1-based line and column.
    pub place: Option<(usize, usize)>,
    /// Path in the document, e.g. `details[0].normal`; empty at the root.
    pub path: String,
}

impl fmt::Display for DeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.path.is_empty() {
            write!(f, "{}", self.message)
        } else {
            write!(f, "{}: {}", self.path, self.message)
        }
    }
}

impl std::error::Error for DeError {}

impl de::Error for DeError {
    fn custom<T: fmt::Display>(msg: T) -> Self {
        DeError {
            message: msg.to_string(),
            place: None,
            path: String::new(),
        }
    }
}

/// Deserialize one YAML document from `text`.
pub fn from_str<T: de::DeserializeOwned>(text: &str) -> Result<T, DeError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut d = Deserializer {
        parser: Parser::new_from_str(text),
        peeked: None,
        replay: Vec::new(),
        anchors: HashMap::new(),
        recording: Vec::new(),
        replayed: 0,
        path: Vec::new(),
        last: None,
        depth: 0,
    };
    let r = d.document::<T>();
    r.map_err(|mut e| {
        if e.place.is_none() {
            e.place = d.last.map(place_of);
        }
        if e.path.is_empty() {
            e.path = YamlPath(d.path.clone()).to_string();
        }
        e
    })
}

fn place_of(m: Marker) -> (usize, usize) {
    // yaml-rust2 lines count from 1 and columns from 0.
    (m.line(), m.col() + 1)
}

/// Events of one node, with their marks.
type Events = Vec<(Event, Marker)>;

struct Deserializer<'a> {
    parser: Parser<std::str::Chars<'a>>,
    peeked: Option<(Event, Marker)>,
    /// Events of an alias still to be handed out, last first.
    replay: Events,
    anchors: HashMap<usize, Events>,
    /// Anchored nodes being recorded: (anchor id, nesting within the node, events).
    recording: Vec<(usize, usize, Events)>,
    replayed: usize,
    path: Vec<Step>,
    /// Mark of the last event handed out.
    last: Option<Marker>,
    depth: usize,
}

fn anchor_of(ev: &Event) -> usize {
    match ev {
        Event::Scalar(_, _, a, _) | Event::SequenceStart(a, _) | Event::MappingStart(a, _) => *a,
        _ => 0,
    }
}

impl Deserializer<'_> {
    fn err_at(&self, m: Marker, msg: impl Into<String>) -> DeError {
        DeError {
            message: msg.into(),
            place: Some(place_of(m)),
            path: YamlPath(self.path.clone()).to_string(),
        }
    }

    /// The next event from the parser, aliases expanded, anchored nodes recorded.
    fn pull(&mut self) -> Result<(Event, Marker), DeError> {
        let (ev, m) = match self.replay.pop() {
            Some(x) => x,
            None => {
                let (ev, m) = self.parser.next_token().map_err(|e| DeError {
                    message: e.info().to_string(),
                    place: Some(place_of(*e.marker())),
                    path: YamlPath(self.path.clone()).to_string(),
                })?;
                if let Event::Alias(id) = ev {
                    let Some(events) = self.anchors.get(&id) else {
                        return Err(self.err_at(m, "an alias refers to no anchor"));
                    };
                    self.replayed += events.len();
                    if self.replayed > MAX_REPLAYED {
                        return Err(self.err_at(
                            m,
                            "aliases expand to more than a million values; write the document out",
                        ));
                    }
                    self.replay.extend(events.iter().rev().cloned());
                    return self.pull();
                }
                (ev, m)
            }
        };
        // Record into every open anchored node; close those that end here.
        let opens = matches!(ev, Event::MappingStart(..) | Event::SequenceStart(..));
        let closes = matches!(ev, Event::MappingEnd | Event::SequenceEnd);
        let mut done = Vec::new();
        for (i, (_, nest, events)) in self.recording.iter_mut().enumerate() {
            events.push((ev.clone(), m));
            if opens {
                *nest += 1;
            } else if closes {
                *nest -= 1;
            }
            if *nest == 0 {
                done.push(i);
            }
        }
        for i in done.into_iter().rev() {
            let (id, _, events) = self.recording.remove(i);
            self.anchors.insert(id, events);
        }
        let a = anchor_of(&ev);
        if a != 0 {
            let nest = usize::from(opens);
            if nest == 0 {
                self.anchors.insert(a, vec![(ev.clone(), m)]);
            } else {
                self.recording.push((a, nest, vec![(ev.clone(), m)]));
            }
        }
        Ok((ev, m))
    }

    fn next(&mut self) -> Result<(Event, Marker), DeError> {
        let x = match self.peeked.take() {
            Some(x) => x,
            None => self.pull()?,
        };
        self.last = Some(x.1);
        Ok(x)
    }

    fn peek(&mut self) -> Result<&(Event, Marker), DeError> {
        if self.peeked.is_none() {
            let x = self.pull()?;
            self.peeked = Some(x);
        }
        Ok(self.peeked.as_ref().expect("peeked just set"))
    }

    fn document<T: de::DeserializeOwned>(&mut self) -> Result<T, DeError> {
        match self.next()? {
            (Event::StreamStart, _) => {}
            (_, m) => return Err(self.err_at(m, "the text is not a YAML stream")),
        }
        match self.next()? {
            (Event::DocumentStart, _) => {}
            (Event::StreamEnd, m) => {
                return Err(self.err_at(m, "the file holds no YAML document"));
            }
            (_, m) => return Err(self.err_at(m, "a YAML document was expected")),
        }
        let v = T::deserialize(&mut *self)?;
        self.path.clear();
        loop {
            match self.next()? {
                (Event::DocumentEnd, _) | (Event::Nothing, _) => {}
                (Event::StreamEnd, _) => return Ok(v),
                (Event::DocumentStart, m) => {
                    return Err(self.err_at(m, SECOND_DOCUMENT));
                }
                (_, m) => return Err(self.err_at(m, "unexpected content after the document")),
            }
        }
    }

    /// Skip one whole node.
    fn skip(&mut self) -> Result<(), DeError> {
        let mut nest = 0usize;
        loop {
            match self.next()?.0 {
                Event::MappingStart(..) | Event::SequenceStart(..) => nest += 1,
                Event::MappingEnd | Event::SequenceEnd => nest = nest.saturating_sub(1),
                _ => {}
            }
            if nest == 0 {
                return Ok(());
            }
        }
    }

    fn enter(&mut self, m: Marker) -> Result<(), DeError> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            return Err(self.err_at(m, "the document nests deeper than 128 levels"));
        }
        Ok(())
    }
}

/// The message for a second document in the stream (the files stage words the error).
pub const SECOND_DOCUMENT: &str = "more than one document";

/// What a plain scalar is under the YAML 1.2 core schema.
enum Plain {
    Null,
    Bool(bool),
    Int(i128),
    Float(f64),
    Str,
}

fn resolve_plain(s: &str) -> Plain {
    match s {
        "" | "~" | "null" | "Null" | "NULL" => return Plain::Null,
        "true" | "True" | "TRUE" => return Plain::Bool(true),
        "false" | "False" | "FALSE" => return Plain::Bool(false),
        ".inf" | ".Inf" | ".INF" | "+.inf" | "+.Inf" | "+.INF" => {
            return Plain::Float(f64::INFINITY)
        }
        "-.inf" | "-.Inf" | "-.INF" => return Plain::Float(f64::NEG_INFINITY),
        ".nan" | ".NaN" | ".NAN" => return Plain::Float(f64::NAN),
        _ => {}
    }
    if let Some((_, radix)) = non_decimal(s) {
        let digits = &s.trim_start_matches(['+', '-'])[2..];
        if let Ok(v) = i128::from_str_radix(digits, radix) {
            return Plain::Int(if s.starts_with('-') { -v } else { v });
        }
        return Plain::Str;
    }
    let body = s.strip_prefix(['+', '-']).unwrap_or(s);
    if !body.is_empty() && body.bytes().all(|b| b.is_ascii_digit()) {
        if let Ok(v) = s.parse::<i128>() {
            return Plain::Int(v);
        }
    }
    if is_yaml_float(body) {
        if let Ok(v) = s.parse::<f64>() {
            return Plain::Float(v);
        }
    }
    Plain::Str
}

/// `[0-9]+(\.[0-9]*)?([eE][-+]?[0-9]+)?` or `\.[0-9]+(...)`: a YAML 1.2 float body.
fn is_yaml_float(b: &str) -> bool {
    let (mant, exp) = match b.find(['e', 'E']) {
        Some(i) => (&b[..i], Some(&b[i + 1..])),
        None => (b, None),
    };
    let (int, frac) = match mant.find('.') {
        Some(i) => (&mant[..i], Some(&mant[i + 1..])),
        None => (mant, None),
    };
    let digits = |s: &str| s.bytes().all(|c| c.is_ascii_digit());
    let mant_ok = digits(int)
        && frac.is_none_or(digits)
        && (!int.is_empty() || frac.is_some_and(|f| !f.is_empty()));
    let exp_ok = exp.is_none_or(|e| {
        let e = e.strip_prefix(['+', '-']).unwrap_or(e);
        !e.is_empty() && digits(e)
    });
    mant_ok && exp_ok
}

/// The name and radix of a hexadecimal, octal or binary number (`0x10`, `0o17`, `0b1`).
pub fn non_decimal(s: &str) -> Option<(&'static str, u32)> {
    let d = s.strip_prefix(['+', '-']).unwrap_or(s);
    let (name, radix) = match d.get(..2)? {
        "0x" | "0X" => ("a hexadecimal", 16),
        "0o" | "0O" => ("an octal", 8),
        "0b" | "0B" => ("a binary", 2),
        _ => return None,
    };
    (d.len() > 2 && d[2..].chars().all(|c| c.is_digit(radix) || c == '_')).then_some((name, radix))
}

/// Methods that read like another one (`deserialize_u8` as `deserialize_u64`).
macro_rules! forward {
    ($to:ident => $($name:ident)*) => {
        $(fn $name<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
            self.$to(v)
        })*
    };
}

impl<'de> de::Deserializer<'de> for &mut Deserializer<'_> {
    type Error = DeError;

    fn deserialize_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::Scalar(s, TScalarStyle::Plain, _, None) => match resolve_plain(&s) {
                Plain::Null => v.visit_unit(),
                Plain::Bool(b) => v.visit_bool(b),
                Plain::Int(i) => match (u64::try_from(i), i64::try_from(i)) {
                    (Ok(u), _) => v.visit_u64(u),
                    (_, Ok(n)) => v.visit_i64(n),
                    _ => v.visit_f64(i as f64),
                },
                Plain::Float(f) => v.visit_f64(f),
                Plain::Str => v.visit_string(s),
            },
            Event::Scalar(s, _, _, _) => v.visit_string(s),
            Event::SequenceStart(..) => self.seq(m, v),
            Event::MappingStart(..) => self.map(m, v),
            _ => Err(self.err_at(m, "a value was expected here")),
        }
    }

    forward!(deserialize_any => deserialize_bool);

    fn deserialize_f64<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::Scalar(s, TScalarStyle::Plain, _, None) => {
                if let Some((name, _)) = non_decimal(&s) {
                    return Err(self.err_at(m, non_decimal_message(&s, name)));
                }
                match resolve_plain(&s) {
                    Plain::Int(i) => v.visit_f64(i as f64),
                    Plain::Float(f) => v.visit_f64(f),
                    Plain::Null => Err(de::Error::invalid_type(de::Unexpected::Unit, &v)),
                    Plain::Bool(b) => Err(de::Error::invalid_type(de::Unexpected::Bool(b), &v)),
                    Plain::Str => Err(de::Error::invalid_type(de::Unexpected::Str(&s), &v)),
                }
            }
            other => Err(self.not_a_number(other, m, &v)),
        }
    }

    forward!(deserialize_f64 => deserialize_f32);

    fn deserialize_u64<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::Scalar(s, TScalarStyle::Plain, _, None) => {
                if let Some((name, _)) = non_decimal(&s) {
                    return Err(self.err_at(m, non_decimal_message(&s, name)));
                }
                match resolve_plain(&s) {
                    Plain::Int(i) => match (u64::try_from(i), i64::try_from(i)) {
                        (Ok(u), _) => v.visit_u64(u),
                        (_, Ok(n)) => v.visit_i64(n),
                        _ => Err(self.err_at(m, format!("the number {s} is too large"))),
                    },
                    Plain::Float(f) => Err(de::Error::invalid_type(de::Unexpected::Float(f), &v)),
                    Plain::Null => Err(de::Error::invalid_type(de::Unexpected::Unit, &v)),
                    Plain::Bool(b) => Err(de::Error::invalid_type(de::Unexpected::Bool(b), &v)),
                    Plain::Str => Err(de::Error::invalid_type(de::Unexpected::Str(&s), &v)),
                }
            }
            other => Err(self.not_a_number(other, m, &v)),
        }
    }

    forward!(deserialize_u64 => deserialize_u8 deserialize_u16 deserialize_u32
        deserialize_i8 deserialize_i16 deserialize_i32 deserialize_i64);

    fn deserialize_str<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::Scalar(s, ..) => v.visit_string(s),
            Event::SequenceStart(..) => Err(de::Error::invalid_type(de::Unexpected::Seq, &v)),
            Event::MappingStart(..) => Err(de::Error::invalid_type(de::Unexpected::Map, &v)),
            _ => Err(self.err_at(m, "a text was expected here")),
        }
    }

    forward!(deserialize_str => deserialize_string deserialize_char deserialize_identifier);

    forward!(deserialize_any => deserialize_bytes deserialize_byte_buf deserialize_unit);

    fn deserialize_option<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let is_null = matches!(
            self.peek()?,
            (Event::Scalar(s, TScalarStyle::Plain, _, None), _)
                if matches!(s.as_str(), "" | "~" | "null" | "Null" | "NULL")
        );
        if is_null {
            self.next()?;
            v.visit_none()
        } else {
            v.visit_some(self)
        }
    }

    fn deserialize_unit_struct<V: Visitor<'de>>(
        self,
        _: &'static str,
        v: V,
    ) -> Result<V::Value, DeError> {
        self.deserialize_any(v)
    }
    fn deserialize_newtype_struct<V: Visitor<'de>>(
        self,
        _: &'static str,
        v: V,
    ) -> Result<V::Value, DeError> {
        v.visit_newtype_struct(self)
    }

    fn deserialize_seq<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::SequenceStart(..) => self.seq(m, v),
            Event::MappingStart(..) => Err(de::Error::invalid_type(de::Unexpected::Map, &v)),
            Event::Scalar(s, ..) => Err(scalar_type_error(&s, &v)),
            _ => Err(self.err_at(m, "a list was expected here")),
        }
    }

    fn deserialize_tuple<V: Visitor<'de>>(self, _: usize, v: V) -> Result<V::Value, DeError> {
        self.deserialize_seq(v)
    }
    fn deserialize_tuple_struct<V: Visitor<'de>>(
        self,
        _: &'static str,
        _: usize,
        v: V,
    ) -> Result<V::Value, DeError> {
        self.deserialize_seq(v)
    }

    fn deserialize_map<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::MappingStart(..) => self.map(m, v),
            Event::SequenceStart(..) => Err(de::Error::invalid_type(de::Unexpected::Seq, &v)),
            Event::Scalar(s, ..) => Err(scalar_type_error(&s, &v)),
            _ => Err(self.err_at(m, "a mapping was expected here")),
        }
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _: &'static str,
        _: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, DeError> {
        self.deserialize_map(v)
    }

    fn deserialize_enum<V: Visitor<'de>>(
        self,
        _: &'static str,
        _: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, DeError> {
        let (ev, m) = self.next()?;
        match ev {
            Event::Scalar(s, ..) => v.visit_enum(s.into_deserializer()),
            _ => Err(self.err_at(m, "a name was expected here")),
        }
    }

    fn deserialize_ignored_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        let is_node = matches!(
            self.peek()?.0,
            Event::MappingStart(..) | Event::SequenceStart(..)
        );
        if is_node {
            self.skip()?;
        } else {
            self.next()?;
        }
        v.visit_unit()
    }
}

/// The serde "invalid type" error for a scalar where a list or mapping belongs.
fn scalar_type_error<'de, V: Visitor<'de>>(s: &str, v: &V) -> DeError {
    match resolve_plain(s) {
        Plain::Null => de::Error::invalid_type(de::Unexpected::Unit, v),
        Plain::Bool(b) => de::Error::invalid_type(de::Unexpected::Bool(b), v),
        Plain::Float(f) => de::Error::invalid_type(de::Unexpected::Float(f), v),
        Plain::Int(i) => match i64::try_from(i) {
            Ok(n) => de::Error::invalid_type(de::Unexpected::Signed(n), v),
            Err(_) => de::Error::invalid_type(de::Unexpected::Str(s), v),
        },
        Plain::Str => de::Error::invalid_type(de::Unexpected::Str(s), v),
    }
}

/// "`0x10` is a hexadecimal number; numbers are written in plain decimal here".
pub fn non_decimal_message(token: &str, name: &str) -> String {
    format!("`{token}` is {name} number; numbers are written in plain decimal here")
}

impl Deserializer<'_> {
    /// The error for a quoted text, a list or a mapping where a number belongs.
    fn not_a_number<'de, V: Visitor<'de>>(&self, ev: Event, m: Marker, v: &V) -> DeError {
        match ev {
            Event::Scalar(s, ..) => de::Error::invalid_type(de::Unexpected::Str(&s), v),
            Event::SequenceStart(..) => de::Error::invalid_type(de::Unexpected::Seq, v),
            Event::MappingStart(..) => de::Error::invalid_type(de::Unexpected::Map, v),
            _ => self.err_at(m, "a number was expected here"),
        }
    }

    fn seq<'de, V: Visitor<'de>>(&mut self, m: Marker, v: V) -> Result<V::Value, DeError> {
        self.enter(m)?;
        let r = v.visit_seq(Seq { de: self, index: 0 })?;
        // The visitor may stop early (a fixed-length tuple): skip to the end.
        loop {
            match self.peek()?.0 {
                Event::SequenceEnd => {
                    self.next()?;
                    break;
                }
                _ => self.skip()?,
            }
        }
        self.depth -= 1;
        Ok(r)
    }

    fn map<'de, V: Visitor<'de>>(&mut self, m: Marker, v: V) -> Result<V::Value, DeError> {
        self.enter(m)?;
        let r = v.visit_map(Map {
            de: self,
            start: m,
            keyed: false,
        })?;
        self.depth -= 1;
        Ok(r)
    }
}

struct Seq<'a, 'b> {
    de: &'a mut Deserializer<'b>,
    index: usize,
}

impl<'de> de::SeqAccess<'de> for Seq<'_, '_> {
    type Error = DeError;

    fn next_element_seed<T: DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, DeError> {
        if matches!(self.de.peek()?.0, Event::SequenceEnd) {
            return Ok(None);
        }
        self.de.path.push(Step::Index(self.index));
        let v = seed.deserialize(&mut *self.de)?;
        self.de.path.pop();
        self.index += 1;
        Ok(Some(v))
    }
}

struct Map<'a, 'b> {
    de: &'a mut Deserializer<'b>,
    start: Marker,
    /// A key was read and its value not yet.
    keyed: bool,
}

impl<'de> de::MapAccess<'de> for Map<'_, '_> {
    type Error = DeError;

    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, DeError> {
        if matches!(self.de.peek()?.0, Event::MappingEnd) {
            self.de.next()?;
            // A field found missing at the end is reported where the mapping starts.
            self.de.last = Some(self.start);
            return Ok(None);
        }
        let key = match self.de.peek()? {
            (Event::Scalar(s, ..), _) => s.clone(),
            _ => String::new(),
        };
        let k = seed.deserialize(&mut *self.de)?;
        self.de.path.push(Step::Key(key));
        self.keyed = true;
        Ok(Some(k))
    }

    fn next_value_seed<V: DeserializeSeed<'de>>(&mut self, seed: V) -> Result<V::Value, DeError> {
        let v = seed.deserialize(&mut *self.de)?;
        if self.keyed {
            self.de.path.pop();
            self.keyed = false;
        }
        Ok(v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Deserialize;
    use std::collections::BTreeMap;

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(deny_unknown_fields)]
    struct Doc {
        name: String,
        n: u32,
        x: f64,
        #[serde(default)]
        opt: Option<String>,
        list: Vec<Item>,
        #[serde(default)]
        map: BTreeMap<String, f64>,
    }

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(deny_unknown_fields, rename_all = "kebab-case")]
    enum Kind {
        SafeLife,
        DamageTolerant,
    }

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(deny_unknown_fields)]
    struct Item {
        k: Kind,
        v: Option<f64>,
    }

    #[test]
    fn reads_block_and_flow_styles() {
        let d: Doc = from_str(
            "name: a b\nn: 3\nx: 2.5e6\nopt: ~\nlist:\n  - {k: safe-life, v: 1}\n  - k: damage-tolerant\n    v: null\nmap: {S355: 355, 'q': .5}\n",
        )
        .unwrap();
        assert_eq!(d.name, "a b");
        assert_eq!((d.n, d.x), (3, 2.5e6));
        assert_eq!(d.opt, None);
        assert_eq!(
            d.list[0],
            Item {
                k: Kind::SafeLife,
                v: Some(1.0)
            }
        );
        assert_eq!(d.list[1].v, None);
        assert_eq!(d.map["S355"], 355.0);
        assert_eq!(d.map["q"], 0.5);
    }

    #[test]
    fn anchors_and_aliases_are_replayed() {
        let d: Doc = from_str(
            "name: &n shared\nn: 1\nx: 1\nopt: *n\nlist:\n  - &i {k: safe-life, v: 2}\n  - *i\n",
        )
        .unwrap();
        assert_eq!(d.opt.as_deref(), Some("shared"));
        assert_eq!(d.list.len(), 2);
        assert_eq!(d.list[1], d.list[0]);
    }

    #[test]
    fn errors_carry_path_and_place() {
        let e =
            from_str::<Doc>("name: a\nn: 1\nx: 1\nlist:\n  - {k: safe-life, w: 1}\n").unwrap_err();
        assert_eq!(e.path, "list[0]");
        assert!(e.message.contains("unknown field `w`"), "{e}");
        assert_eq!(e.place, Some((5, 20)));
        let e = from_str::<Doc>("name: a\nn: 1\nx: twelve\nlist: []\n").unwrap_err();
        assert_eq!(e.path, "x");
        assert!(e
            .message
            .contains("invalid type: string \"twelve\", expected f64"));
        assert_eq!(e.place, Some((3, 4)));
        let e = from_str::<Doc>("name: a\nn: 1\nx: 0x10\nlist: []\n").unwrap_err();
        assert!(e.message.contains("`0x10` is a hexadecimal number"), "{e}");
        let e = from_str::<Doc>("name: a\nx: 1\nlist: []\n").unwrap_err();
        assert!(e.message.contains("missing field `n`"), "{e}");
        assert_eq!(e.place.map(|p| p.0), Some(1));
        let e = from_str::<Doc>("name: a\nn: 1\nx: 1\nlist: []\n---\nname: b\n").unwrap_err();
        assert_eq!(e.message, SECOND_DOCUMENT);
        assert_eq!(e.place.map(|p| p.0), Some(5));
        let e = from_str::<Doc>("name: a\n  n: : 1\n").unwrap_err();
        assert!(e.place.is_some_and(|p| p.0 == 2), "{e:?}");
    }

    #[test]
    fn plain_scalars_follow_the_core_schema() {
        assert!(matches!(resolve_plain("12"), Plain::Int(12)));
        assert!(matches!(resolve_plain("-3"), Plain::Int(-3)));
        assert!(matches!(resolve_plain("1e3"), Plain::Float(x) if x == 1000.0));
        assert!(matches!(resolve_plain(".5"), Plain::Float(x) if x == 0.5));
        assert!(matches!(resolve_plain("5."), Plain::Float(x) if x == 5.0));
        assert!(matches!(resolve_plain(".inf"), Plain::Float(x) if x.is_infinite()));
        assert!(matches!(resolve_plain("0o17"), Plain::Int(15)));
        assert!(matches!(resolve_plain("e3"), Plain::Str));
        assert!(matches!(resolve_plain("1.2.3"), Plain::Str));
        assert!(matches!(resolve_plain("~"), Plain::Null));
        assert!(matches!(resolve_plain("S355"), Plain::Str));
        assert!(matches!(resolve_plain("2026-11-20"), Plain::Str));
    }

    #[test]
    fn deep_nesting_is_refused() {
        let deep = format!("{}{}", "[".repeat(200), "]".repeat(200));
        let e = from_str::<serde_json::Value>(&deep).unwrap_err();
        assert!(e.message.contains("deeper than 128"), "{e}");
    }
}
