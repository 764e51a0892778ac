//! Typed errors. Input errors carry a file location and a hint; each error knows the
//! process exit code the command line should return.

use std::fmt;
use std::path::{Path, PathBuf};

/// Exit code: every detail passes.
pub const EXIT_PASS: i32 = 0;
/// Exit code: at least one detail fails or is outside the method.
pub const EXIT_FAIL: i32 = 1;
/// Exit code: the input could not be used.
pub const EXIT_BAD_INPUT: i32 = 2;
/// Exit code: internal error, a missing external tool, or standard output that cannot
/// be written (closed pipe, full disk).
pub const EXIT_INTERNAL: i32 = 3;
/// Exit code base for a run stopped by a signal: 128 + the signal number (130 for
/// SIGINT, 143 for SIGTERM), as shells report it.
pub const EXIT_SIGNAL_BASE: i32 = 128;

/// A place in an input file. Line and column are 1-based.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    pub file: PathBuf,
    pub line: Option<usize>,
    pub column: Option<usize>,
}

impl Location {
    pub fn file(path: &Path) -> Location {
        Location {
            file: path.to_path_buf(),
            line: None,
            column: None,
        }
    }

    pub fn at(path: &Path, line: usize, column: usize) -> Location {
        Location {
            file: path.to_path_buf(),
            line: Some(line),
            column: Some(column),
        }
    }
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file.display())?;
        if let Some(l) = self.line {
            write!(f, ":{l}")?;
            if let Some(c) = self.column {
                write!(f, ":{c}")?;
            }
        }
        Ok(())
    }
}

/// What went wrong with an input, for callers (and tests) that branch on it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InputErrorKind {
    Io,
    TooLarge,
    Syntax,
    UnknownKey,
    MissingField,
    WrongType,
    InvalidValue,
    UnsupportedVersion,
    UnknownFamily,
    InvalidFamily,
    UnknownCategory,
    UnknownDetail,
    UnknownOption,
    DuplicateId,
    UndefinedMaterial,
    Series,
    PathOutsideProject,
    /// An output path that must not be written: an input, a folder, a disk device.
    OutputTarget,
    /// A value beyond the bounds of the method or of physics.
    OutOfRange,
    /// A text longer than the report can show.
    TooLong,
}

/// A problem with a project file, a family file or a series file.
#[derive(Debug, Clone, thiserror::Error)]
#[error("{location}: {message}")]
pub struct InputError {
    pub kind: InputErrorKind,
    pub location: Location,
    pub message: String,
    pub hint: Option<String>,
}

impl InputError {
    pub fn new(kind: InputErrorKind, location: Location, message: impl Into<String>) -> Self {
        InputError {
            kind,
            location,
            message: message.into(),
            hint: None,
        }
    }

    pub fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }
}

/// Every error the library returns.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    #[error(transparent)]
    Input(#[from] InputError),
    /// Several input problems found together (all are reported).
    #[error("{}", .0.iter().map(|e| e.to_string()).collect::<Vec<_>>().join("\n"))]
    Inputs(Vec<InputError>),
    /// An external program (typst) is missing or of the wrong version.
    #[error("{message}")]
    Tool { message: String, hint: String },
    /// The report could not be produced (template or typesetting failure).
    #[error("{message}")]
    Report {
        message: String,
        hint: Option<String>,
    },
    /// Writing an output failed.
    #[error("cannot write {path}: {source}")]
    Output {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// typst failed on the built-in templates: a fault of seamlife, not of the input.
    #[error("{message}")]
    Typesetting { message: String, hint: String },
    /// Standard output could not be written (closed pipe, full disk, closed descriptor).
    #[error("cannot write to standard output: {0}")]
    Stdout(#[source] std::io::Error),
    /// The run was stopped by a signal; temporary files were removed.
    #[error("interrupted by {}; no output was written and temporary files were removed", signal_name(*.0))]
    Interrupted(i32),
    /// A bug: an invariant of the program did not hold.
    #[error("internal error: {0}")]
    Internal(String),
}

/// SIGINT, SIGTERM or "signal N".
pub fn signal_name(sig: i32) -> String {
    match sig {
        2 => "SIGINT".into(),
        15 => "SIGTERM".into(),
        1 => "SIGHUP".into(),
        n => format!("signal {n}"),
    }
}

impl Error {
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) | Error::Inputs(_) => EXIT_BAD_INPUT,
            Error::Report { .. } => EXIT_BAD_INPUT,
            Error::Output { .. } => EXIT_BAD_INPUT,
            Error::Tool { .. }
            | Error::Internal(_)
            | Error::Typesetting { .. }
            | Error::Stdout(_) => EXIT_INTERNAL,
            Error::Interrupted(sig) => EXIT_SIGNAL_BASE + sig,
        }
    }

    pub fn hint(&self) -> Option<&str> {
        match self {
            Error::Input(e) => e.hint.as_deref(),
            Error::Inputs(v) => v.first().and_then(|e| e.hint.as_deref()),
            Error::Tool { hint, .. } => Some(hint),
            Error::Report { hint, .. } => hint.as_deref(),
            Error::Output { .. } => Some("check that the folder exists and is writable"),
            Error::Typesetting { hint, .. } => Some(hint),
            Error::Stdout(_) => Some(
                "the program reading the output stopped, or the disk is full; use -o FILE to write to a file",
            ),
            Error::Interrupted(_) => None,
            Error::Internal(_) => Some("please report this with the project file attached"),
        }
    }
}

impl Error {
    /// The input errors inside, one or many.
    pub fn input_errors(&self) -> Vec<&InputError> {
        match self {
            Error::Input(e) => vec![e],
            Error::Inputs(v) => v.iter().collect(),
            _ => Vec::new(),
        }
    }
}

pub type Result<T, E = Error> = std::result::Result<T, E>;
