//! JSON Schemas of the files seamlife reads and writes, derived from the serde types
//! that read and write them, so they cannot drift from the program. Editors use the
//! project file's schema for completion and validation while typing (a YAML editor
//! extension reads the `# yaml-language-server: $schema=...` line at the top of the
//! file); tools use the results and diff schemas to read `--json` output, and the spectrum
//! part's to read or check what `count --spectrum-out` writes.

use serde_json::Value;

/// The files a schema is published for. A new kind is one variant here, its name, its
/// title and its type in [`schema`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SchemaKind {
    /// The project file (YAML), schema version 1.
    Project,
    /// The results model written by `assess --json`.
    Results,
    /// The diff model written by `diff --json`.
    Diff,
    /// The checker's review file (YAML) of `report --review`.
    Review,
    /// The spectrum part written by `count --spectrum-out` and `merge --spectrum-out`.
    SpectrumPart,
}

/// The review file's schema, kept by hand beside the reader (`checker::review`): it
/// also states the rules serde cannot (a query needs remarks); `tests/checker_review.rs`
/// holds it to the demo review and to what the reader refuses.
const REVIEW_SCHEMA: &str = include_str!("../schemas/review.schema.json");

impl SchemaKind {
    /// Every kind, in the order `seamlife schema --help` lists them.
    pub const ALL: &'static [SchemaKind] = &[
        SchemaKind::Project,
        SchemaKind::Results,
        SchemaKind::Diff,
        SchemaKind::Review,
        SchemaKind::SpectrumPart,
    ];

    pub fn name(self) -> &'static str {
        match self {
            SchemaKind::Project => "project",
            SchemaKind::Results => "results",
            SchemaKind::Diff => "diff",
            SchemaKind::Review => "review",
            SchemaKind::SpectrumPart => "spectrum-part",
        }
    }

    /// The file name the schema is published under (`schemas/` of the source tree).
    pub fn file_name(self) -> String {
        format!("{}.schema.json", self.name())
    }

    fn title(self) -> String {
        match self {
            SchemaKind::Project => format!(
                "seamlife project file, schema version {}",
                crate::input::schema::SCHEMA_VERSION
            ),
            SchemaKind::Results => format!(
                "seamlife results model, version {}",
                crate::results::MODEL_VERSION
            ),
            SchemaKind::Diff => "seamlife diff model (diff --json)".into(),
            SchemaKind::Review => "seamlife review file".into(),
            SchemaKind::SpectrumPart => format!(
                "seamlife spectrum part, format version {}",
                crate::histories::part::PART_FORMAT_VERSION
            ),
        }
    }
}

/// The JSON Schema (draft 2020-12) of one kind of file.
pub fn schema(kind: SchemaKind) -> Value {
    let s = match kind {
        SchemaKind::Project => schemars::schema_for!(crate::input::schema::ProjectFile),
        SchemaKind::Results => schemars::schema_for!(crate::results::Results),
        SchemaKind::Diff => schemars::schema_for!(crate::checker::diff::DiffReport),
        SchemaKind::SpectrumPart => schemars::schema_for!(crate::histories::part::SpectrumPart),
        // kept by hand, with its own title
        SchemaKind::Review => return serde_json::from_str(REVIEW_SCHEMA).unwrap_or(Value::Null),
    };
    let mut v = s.to_value();
    if let Value::Object(m) = &mut v {
        m.insert("title".into(), Value::from(kind.title()));
    }
    v
}

/// The schema as pretty JSON with a final newline, as published.
pub fn schema_text(kind: SchemaKind) -> String {
    if kind == SchemaKind::Review {
        return REVIEW_SCHEMA.to_string();
    }
    let mut t = serde_json::to_string_pretty(&schema(kind)).unwrap_or_default();
    t.push('\n');
    t
}
