//! The starter project written by `seamlife new`.

/// The schema file `seamlife new` writes beside the starter, named by its first line.
pub const STARTER_SCHEMA_FILE: &str = "project.schema.json";

/// A small project that passes `seamlife lint`: edit it rather than start from nothing.
/// Its first line names [`STARTER_SCHEMA_FILE`] for editors.
pub const STARTER_PROJECT: &str = r#"# yaml-language-server: $schema=project.schema.json
# seamlife project file (schema version 1). The line above points YAML editor
# extensions to the schema beside this file (`seamlife schema project` writes it
# again), for completion and checks while typing; `seamlife lint` has the last word.
# Units are in the key names: MPa, mm, years, cycles.
# The values below only show the shape of the file: replace each with your
# project's own. They describe no real structure.
seamlife: 1
project:
  title: New fatigue assessment
  reference: P-0001
  revision: A
  prepared_by: Your Name
  checked_by: Checker Name
  date: 2026-01-01
  revisions:
    - {revision: A, date: 2026-01-01, description: First issue}
basis:
  family: en1993-1-9          # `seamlife classes` lists the families
  design_life_years: 50
  strategy: safe-life         # safe-life | damage-tolerant
  consequence: high           # high | low
materials:
  S355: {fy_mpa: 355}
details:
  - id: D01
    location: describe where the detail is
    detail: butt-transverse-ground-flush   # `seamlife classes en1993-1-9` lists the keys
    material: S355
    thickness_mm: 20
    normal:
      loading:
        - event: describe the load event
          per_year: 10000
          blocks:
            - {range_mpa: 40, cycles: 1}
            - {range_mpa: 15, cycles: 3}
"#;
