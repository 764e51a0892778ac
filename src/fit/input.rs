//! Reading a fatigue test file: a CSV table of specimens with `specimen, range_mpa,
//! cycles, runout` and the optional `thickness_mm, stress_ratio, note` columns. Lines
//! that are blank or start with `#` are comments. Every problem is reported with its
//! line and column and a hint; the file type and size are checked before it is opened.

use std::io::Read;
use std::path::{Path, PathBuf};

use crate::error::{Error, InputError, InputErrorKind, Location};

/// Test files larger than this are refused before reading (a test series has at most
/// a few thousand specimens).
pub const MAX_TEST_FILE_BYTES: u64 = 4 * 1024 * 1024;

/// Longest specimen id accepted, in characters.
pub const MAX_ID_CHARS: usize = 64;

/// Most problems reported from one file.
const MAX_PROBLEMS: usize = 30;

/// Longest cell echoed in a message, in characters.
const ECHO_CHARS: usize = 40;

/// The columns a test file may hold.
pub const COLUMNS: [&str; 7] = [
    "specimen",
    "range_mpa",
    "cycles",
    "runout",
    "thickness_mm",
    "stress_ratio",
    "note",
];

/// The columns a test file must hold.
pub const REQUIRED: [&str; 4] = ["specimen", "range_mpa", "cycles", "runout"];

/// One specimen as read, with the place of its cells.
#[derive(Debug, Clone, PartialEq)]
pub struct Specimen {
    pub id: String,
    pub range_mpa: f64,
    pub cycles: f64,
    pub runout: bool,
    pub thickness_mm: Option<f64>,
    pub stress_ratio: Option<f64>,
    pub note: Option<String>,
    /// 1-based line of the row.
    pub line: usize,
    /// 1-based column of the range cell (for errors about the stress levels).
    pub range_col: usize,
}

/// A test file that was read and whose every cell passed its check.
#[derive(Debug, Clone)]
pub struct TestSet {
    pub path: PathBuf,
    /// File name only, so results do not depend on the machine.
    pub file_name: String,
    pub sha256: String,
    pub bytes: u64,
    pub specimens: Vec<Specimen>,
    /// Which optional columns the header names.
    pub has_thickness: bool,
    pub has_stress_ratio: bool,
    /// Line and column of the header's `runout` cell.
    pub runout_header: (usize, usize),
    /// Line of the last data row.
    pub last_line: usize,
}

impl TestSet {
    pub fn location(&self, line: usize, col: usize) -> Location {
        Location::at(&self.path, line, col)
    }
}

/// A cell echoed in a message: at most 40 characters, control characters escaped.
pub fn echo(cell: &str) -> String {
    let mut out: String = cell
        .chars()
        .take(ECHO_CHARS)
        .flat_map(|c| {
            if c.is_control() {
                c.escape_default().collect::<Vec<_>>()
            } else {
                vec![c]
            }
        })
        .collect();
    let n = cell.chars().count();
    if n > ECHO_CHARS {
        out.push_str(&format!("… ({n} characters)"));
    }
    format!("`{out}`")
}

fn problem(path: &Path, line: usize, col: usize, kind: InputErrorKind, msg: String) -> InputError {
    InputError::new(kind, Location::at(path, line, col), msg)
}

/// Check what `path` is before opening it: a regular file (not a folder, FIFO, device
/// or socket) within the size limit.
fn check_file(path: &Path) -> Result<u64, InputError> {
    let meta = std::fs::metadata(path).map_err(|e| crate::files::io_error(path, &e))?;
    if !meta.is_file() {
        return Err(InputError::new(
            InputErrorKind::Io,
            Location::file(path),
            format!(
                "is {}, not a regular file",
                crate::fit::describe_file_type(&meta)
            ),
        )
        .hint("give the path of a CSV file of test results"));
    }
    if meta.len() > MAX_TEST_FILE_BYTES {
        return Err(InputError::new(
            InputErrorKind::TooLarge,
            Location::file(path),
            format!(
                "file is {} bytes; test files are limited to {} MiB",
                meta.len(),
                MAX_TEST_FILE_BYTES / (1024 * 1024)
            ),
        )
        .hint("a test file lists one specimen a line; split or trim the file"));
    }
    Ok(meta.len())
}

/// Read and check a test file.
pub fn read_tests(path: &Path) -> Result<TestSet, Error> {
    check_file(path)?;
    let io = |e: std::io::Error| crate::files::io_error(path, &e);
    let file = std::fs::File::open(path).map_err(io)?;
    let mut bytes = Vec::new();
    // Read one byte past the limit, so that a file that grew after the check is caught.
    file.take(MAX_TEST_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if bytes.len() as u64 > MAX_TEST_FILE_BYTES {
        return Err(InputError::new(
            InputErrorKind::TooLarge,
            Location::file(path),
            format!(
                "file grew past {} MiB while it was read",
                MAX_TEST_FILE_BYTES / (1024 * 1024)
            ),
        )
        .hint("give a test file that is not being written to")
        .into());
    }
    let sha256 = crate::files::sha256_hex(&bytes);
    let n = bytes.len() as u64;
    let text = String::from_utf8(bytes).map_err(|e| {
        let upto = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = upto.iter().filter(|b| **b == b'\n').count() + 1;
        let col = upto.iter().rev().take_while(|b| **b != b'\n').count() + 1;
        InputError::new(
            InputErrorKind::Syntax,
            Location::at(path, line, col),
            "file is not valid UTF-8 text",
        )
        .hint("save the file as UTF-8 CSV")
    })?;
    let mut set = parse_tests(path, &text)?;
    set.sha256 = sha256;
    set.bytes = n;
    Ok(set)
}

/// One cell of a CSV line: its text (unquoted, trimmed) and 1-based column.
struct Cell {
    text: String,
    col: usize,
}

/// Split a CSV line into cells. A cell may be quoted with `"`; `""` inside quotes is a
/// quote (RFC 4180). Returns the column of an unterminated quote as the error.
fn split_line(line: &str) -> Result<Vec<Cell>, usize> {
    let chars: Vec<char> = line.chars().collect();
    let mut cells = Vec::new();
    let mut i = 0;
    loop {
        // Skip leading blanks of the cell.
        while i < chars.len() && (chars[i] == ' ' || chars[i] == '\t') {
            i += 1;
        }
        let col = i + 1;
        let mut text = String::new();
        if i < chars.len() && chars[i] == '"' {
            let open = i + 1;
            i += 1;
            loop {
                if i >= chars.len() {
                    return Err(open);
                }
                if chars[i] == '"' {
                    if i + 1 < chars.len() && chars[i + 1] == '"' {
                        text.push('"');
                        i += 2;
                        continue;
                    }
                    i += 1;
                    break;
                }
                text.push(chars[i]);
                i += 1;
            }
            // Anything up to the next comma after the closing quote is kept.
            while i < chars.len() && chars[i] != ',' {
                text.push(chars[i]);
                i += 1;
            }
        } else {
            while i < chars.len() && chars[i] != ',' {
                text.push(chars[i]);
                i += 1;
            }
        }
        cells.push(Cell {
            text: text.trim().to_string(),
            col,
        });
        if i >= chars.len() {
            break;
        }
        i += 1; // the comma
    }
    Ok(cells)
}

/// A run-out cell: true/false, yes/no, 1/0 (any case).
fn parse_bool(s: &str) -> Option<bool> {
    match s.to_ascii_lowercase().as_str() {
        "true" | "yes" | "1" => Some(true),
        "false" | "no" | "0" => Some(false),
        _ => None,
    }
}

/// A number cell that must be finite and greater than zero.
fn positive_cell(cell: &Cell, what: &str) -> Result<f64, (String, &'static str)> {
    let v: f64 = cell.text.parse().map_err(|_| {
        (
            format!("{what}: {} is not a number", echo(&cell.text)),
            "write a plain number such as 180 or 1.52e5 (no units, a point as decimal mark)",
        )
    })?;
    if !v.is_finite() {
        return Err((
            format!("{what}: {} is not a finite number", echo(&cell.text)),
            "NaN and infinite values cannot be evaluated; give the measured value",
        ));
    }
    if v <= 0.0 {
        return Err((
            format!("{what} must be greater than zero, got {v}"),
            "stress ranges, cycle counts and thicknesses are positive",
        ));
    }
    Ok(v)
}

/// Parse test-file text (`path` is used for messages).
pub fn parse_tests(path: &Path, text: &str) -> Result<TestSet, Error> {
    let mut problems: Vec<InputError> = Vec::new();
    let mut header: Option<(usize, Vec<(usize, usize)>)> = None; // (line, [(column index, col)])
    let mut index: [Option<usize>; 7] = [None; 7];
    let mut specimens: Vec<Specimen> = Vec::new();
    let mut last_line = 0;
    let mut runout_header = (1, 1);
    for (i, raw) in text.split('\n').enumerate() {
        if problems.len() >= MAX_PROBLEMS {
            break;
        }
        let line_no = i + 1;
        let line = raw.strip_suffix('\r').unwrap_or(raw);
        let trimmed = line.trim_start();
        if trimmed.is_empty() || trimmed.starts_with('#') {
            continue;
        }
        let cells = match split_line(line) {
            Ok(c) => c,
            Err(col) => {
                problems.push(
                    problem(
                        path,
                        line_no,
                        col,
                        InputErrorKind::Syntax,
                        "a quoted cell has no closing quote".into(),
                    )
                    .hint("close the quote, or remove it"),
                );
                continue;
            }
        };
        if header.is_none() {
            let mut cols = Vec::new();
            let mut bad = false;
            for (k, c) in cells.iter().enumerate() {
                let name = c.text.to_ascii_lowercase();
                match COLUMNS.iter().position(|n| *n == name) {
                    Some(j) if index[j].is_some() => {
                        bad = true;
                        problems.push(
                            problem(
                                path,
                                line_no,
                                c.col,
                                InputErrorKind::DuplicateId,
                                format!("column `{name}` appears twice in the header"),
                            )
                            .hint("give each column once"),
                        );
                    }
                    Some(j) => {
                        index[j] = Some(k);
                        cols.push((k, c.col));
                        if COLUMNS[j] == "runout" {
                            runout_header = (line_no, c.col);
                        }
                    }
                    None => {
                        bad = true;
                        let mut e = problem(
                            path,
                            line_no,
                            c.col,
                            InputErrorKind::UnknownKey,
                            format!("unknown column {}", echo(&c.text)),
                        );
                        e.hint = Some(match crate::files::suggest(&name, COLUMNS) {
                            Some(s) => {
                                format!("did you mean `{s}`? (columns: {})", COLUMNS.join(", "))
                            }
                            None => format!("the columns are {}", COLUMNS.join(", ")),
                        });
                        problems.push(e);
                    }
                }
            }
            let missing: Vec<&str> = REQUIRED
                .iter()
                .enumerate()
                .filter(|(j, _)| index[*j].is_none())
                .map(|(_, n)| *n)
                .collect();
            if !missing.is_empty() && !bad {
                let present: Vec<String> = cells.iter().map(|c| echo(&c.text)).collect();
                problems.push(
                    problem(
                        path,
                        line_no,
                        1,
                        InputErrorKind::MissingField,
                        format!(
                            "the header lacks the column{} {} (it has {})",
                            if missing.len() > 1 { "s" } else { "" },
                            missing.join(", "),
                            present.join(", ")
                        ),
                    )
                    .hint("the first line that is not a comment names the columns: specimen, range_mpa, cycles, runout (and optionally thickness_mm, stress_ratio, note)"),
                );
            }
            if bad || !missing.is_empty() {
                // Rows cannot be read against a broken header.
                break;
            }
            header = Some((line_no, cols));
            continue;
        }
        last_line = line_no;
        let width = header.as_ref().map_or(0, |h| h.1.len());
        if cells.len() != width {
            let col = if cells.len() > width {
                cells[width].col
            } else {
                line.chars().count() + 1
            };
            problems.push(
                problem(
                    path,
                    line_no,
                    col,
                    InputErrorKind::Syntax,
                    format!("this row has {} cells; the header has {width}", cells.len()),
                )
                .hint("give one cell per column, separated by commas (an empty cell for a missing optional value)"),
            );
            continue;
        }
        let cell = |name: &str| -> Option<&Cell> {
            COLUMNS
                .iter()
                .position(|n| *n == name)
                .and_then(|j| index[j])
                .map(|k| &cells[k])
        };
        let before = problems.len();
        let mut push = |c: &Cell, kind: InputErrorKind, msg: String, hint: &str| {
            problems.push(problem(path, line_no, c.col, kind, msg).hint(hint));
        };
        let id_cell = cell("specimen").expect("required column");
        let id = id_cell.text.clone();
        if id.is_empty() {
            push(
                id_cell,
                InputErrorKind::MissingField,
                "the specimen id is empty".into(),
                "give every specimen an id",
            );
        } else if id.chars().count() > MAX_ID_CHARS {
            push(
                id_cell,
                InputErrorKind::InvalidValue,
                format!(
                    "the specimen id {} is longer than {MAX_ID_CHARS} characters",
                    echo(&id)
                ),
                "use a short id such as KB-07",
            );
        } else if id.chars().any(|c| c.is_control()) {
            push(
                id_cell,
                InputErrorKind::InvalidValue,
                format!("the specimen id {} holds a control character", echo(&id)),
                "use letters, digits and punctuation only",
            );
        }
        let mut number = |name: &str, what: &str| -> Option<f64> {
            let c = cell(name)?;
            match positive_cell(c, what) {
                Ok(v) => Some(v),
                Err((msg, hint)) => {
                    push(c, InputErrorKind::InvalidValue, msg, hint);
                    None
                }
            }
        };
        let range = number("range_mpa", "range_mpa (stress range, MPa)");
        let cycles = number("cycles", "cycles (to failure or run-out)");
        let thickness = match cell("thickness_mm") {
            Some(c) if !c.text.is_empty() => number("thickness_mm", "thickness_mm"),
            _ => None,
        };
        let ro_cell = cell("runout").expect("required column");
        let runout = parse_bool(&ro_cell.text);
        if runout.is_none() {
            problems.push(
                problem(
                    path,
                    line_no,
                    ro_cell.col,
                    InputErrorKind::InvalidValue,
                    format!("runout: {} is not yes or no", echo(&ro_cell.text)),
                )
                .hint("write true/false, yes/no or 1/0: true for a specimen that did not fail"),
            );
        }
        let mut ratio = None;
        if let Some(c) = cell("stress_ratio") {
            if !c.text.is_empty() {
                match c.text.parse::<f64>() {
                    Ok(r) if r.is_finite() && r != 1.0 => ratio = Some(r),
                    Ok(1.0) => problems.push(
                        problem(
                            path,
                            line_no,
                            c.col,
                            InputErrorKind::InvalidValue,
                            "stress_ratio R = σmin/σmax = 1 has no stress range".into(),
                        )
                        .hint("give R of the test, e.g. 0.1"),
                    ),
                    _ => problems.push(
                        problem(
                            path,
                            line_no,
                            c.col,
                            InputErrorKind::InvalidValue,
                            format!("stress_ratio: {} is not a finite number", echo(&c.text)),
                        )
                        .hint("give R = σmin/σmax of the test, e.g. 0.1 or -1"),
                    ),
                }
            }
        }
        let note = cell("note")
            .map(|c| c.text.clone())
            .filter(|s| !s.is_empty());
        if problems.len() > before {
            continue;
        }
        if let (Some(range_mpa), Some(cycles), Some(runout)) = (range, cycles, runout) {
            if let Some(first) = specimens.iter().find(|s| s.id == id) {
                problems.push(
                    problem(
                        path,
                        line_no,
                        id_cell.col,
                        InputErrorKind::DuplicateId,
                        format!(
                            "specimen id {} is given twice (first on line {})",
                            echo(&id),
                            first.line
                        ),
                    )
                    .hint("give every specimen its own id"),
                );
                continue;
            }
            specimens.push(Specimen {
                id,
                range_mpa,
                cycles,
                runout,
                thickness_mm: thickness,
                stress_ratio: ratio,
                note,
                line: line_no,
                range_col: cell("range_mpa").map_or(1, |c| c.col),
            });
        }
    }
    if problems.is_empty() && header.is_none() {
        problems.push(
            InputError::new(
                InputErrorKind::MissingField,
                Location::at(path, 1, 1),
                "the file holds no header and no specimens",
            )
            .hint("the first line names the columns: specimen, range_mpa, cycles, runout"),
        );
    }
    if problems.is_empty() && specimens.is_empty() {
        let line = header.as_ref().map_or(1, |h| h.0);
        problems.push(
            InputError::new(
                InputErrorKind::MissingField,
                Location::at(path, line, 1),
                "the file names its columns but lists no specimen",
            )
            .hint("add one line per specimen below the header"),
        );
    }
    if !problems.is_empty() {
        return Err(if problems.len() == 1 {
            Error::Input(problems.remove(0))
        } else {
            Error::Inputs(problems)
        });
    }
    let has = |name: &str| {
        COLUMNS
            .iter()
            .position(|n| *n == name)
            .is_some_and(|j| index[j].is_some())
    };
    Ok(TestSet {
        path: path.to_path_buf(),
        file_name: path
            .file_name()
            .map(|f| f.to_string_lossy().into_owned())
            .unwrap_or_default(),
        sha256: String::new(),
        bytes: text.len() as u64,
        specimens,
        has_thickness: has("thickness_mm"),
        has_stress_ratio: has("stress_ratio"),
        runout_header,
        last_line,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<TestSet, Error> {
        parse_tests(Path::new("t.csv"), text)
    }

    #[test]
    fn quoted_cells_and_columns() {
        let c = split_line(r#"A-1, "x, ""y""" ,3"#).unwrap();
        assert_eq!(c.len(), 3);
        assert_eq!(c[1].text, r#"x, "y""#);
        assert_eq!(c[1].col, 6);
        assert_eq!(c[2].col, 18);
        assert!(split_line(r#"a,"open"#).is_err());
    }

    #[test]
    fn columns_in_any_order_with_comments() {
        let s =
            parse("# tests\nrunout,cycles,specimen,range_mpa\n\nno,1.5e5,A1,180\nyes,1e7,A2,60\n")
                .unwrap();
        assert_eq!(s.specimens.len(), 2);
        assert_eq!(s.specimens[0].id, "A1");
        assert_eq!(s.specimens[0].cycles, 1.5e5);
        assert!(s.specimens[1].runout);
        assert_eq!(s.specimens[1].line, 5);
        assert_eq!(s.runout_header, (2, 1));
        assert!(!s.has_thickness);
    }

    #[test]
    fn every_bad_cell_is_located() {
        let e = parse("specimen,range_mpa,cycles,runout\nA,abc,-3,maybe\n").unwrap_err();
        let v = e.input_errors();
        assert_eq!(v.len(), 3);
        assert_eq!(
            (v[0].location.line, v[0].location.column),
            (Some(2), Some(3))
        );
        assert_eq!(v[1].location.column, Some(7));
        assert_eq!(v[2].location.column, Some(10));
    }
}
