//! The command line. `main.rs` only calls [`main`]; everything here is reachable from
//! tests through the binary.

mod assess;
mod classes;
mod count;
mod fit;
mod lint;
mod new;
pub mod output;
mod report;

use std::io::Write;
use std::path::PathBuf;

use clap::{Parser, Subcommand};

use crate::catalogue::Library;
use crate::error::{Error, EXIT_BAD_INPUT, EXIT_FAIL, EXIT_PASS};
use crate::results::{Results, Status};
pub use assess::AssessArgs;
pub use count::{CountArgs, ResidueArg, UnitArg};
pub use fit::{fit_table, FitArgs, MethodArg, StressArg};
pub use output::{csv_summary, fmt_life, table, write_atomic};
pub use report::ReportArgs;

#[derive(Parser, Debug)]
#[command(
    name = "seamlife",
    version,
    about = "Fatigue assessment of welded steel details by the nominal-stress (detail category) method",
    after_help = "Exit codes: 0 all details pass, 1 some detail fails or lies outside the method, 2 bad input, 3 internal error or missing tool.\n\nThe governing code, the project specification and review by a licensed/chartered engineer prevail over this tool's output."
)]
pub struct Cli {
    /// Folder of curve-family files that replace or add to the built-in families.
    #[arg(
        long,
        global = true,
        env = "SEAMLIFE_JOINT_CLASSES",
        value_name = "DIR"
    )]
    pub joint_classes: Option<PathBuf>,

    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Assess every detail of a project and print a summary table.
    Assess(AssessArgs),
    /// Assess a project and write the PDF calculation package (needs typst).
    Report(ReportArgs),
    /// Rainflow-count a stress or strain time series (CSV) into a range-mean spectrum.
    Count(CountArgs),
    /// Derive a detail category from fatigue test results (CSV) and write it as a family extension.
    Fit(FitArgs),
    /// Check a project file without assessing it.
    Lint {
        /// Project file (YAML).
        file: PathBuf,
    },
    /// List curve families, or the categories and catalogue of one family.
    Classes {
        /// Family id, e.g. en1993-1-9.
        family: Option<String>,
    },
    /// Write a starter project into a new folder.
    New {
        /// Folder to create (it must not hold a project.yaml yet).
        dir: PathBuf,
    },
}

/// Parse arguments, run, print errors, and return the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() {
                EXIT_BAD_INPUT
            } else {
                EXIT_PASS
            };
            let _ = e.print();
            return code;
        }
    };
    match run(&cli) {
        Ok(code) => code,
        Err(e) => {
            report_error(&e);
            e.exit_code()
        }
    }
}

/// Print an error with its location and hint to standard error.
pub fn report_error(e: &Error) {
    let mut err = std::io::stderr().lock();
    let inputs = e.input_errors();
    if inputs.is_empty() {
        let _ = writeln!(err, "error: {e}");
        if let Some(h) = e.hint() {
            let _ = writeln!(err, "  hint: {h}");
        }
    } else {
        for ie in &inputs {
            let _ = writeln!(err, "error: {ie}");
            if let Some(h) = &ie.hint {
                let _ = writeln!(err, "  hint: {h}");
            }
        }
        if inputs.len() > 1 {
            let _ = writeln!(
                err,
                "{} problems found; nothing was assessed.",
                inputs.len()
            );
        }
    }
}

pub fn run(cli: &Cli) -> Result<i32, Error> {
    let library = Library::load(cli.joint_classes.as_deref())?;
    match &cli.command {
        Command::Assess(a) => assess::run(a, &library),
        Command::Report(a) => report::run(a, &library),
        Command::Count(a) => count::run(a),
        Command::Fit(a) => fit::run(a, &library),
        Command::Lint { file } => lint::run(file, &library),
        Command::Classes { family } => classes::run(family.as_deref(), &library),
        Command::New { dir } => new::run(dir, &library),
    }
}

/// The exit code for a set of results.
pub fn exit_code_for(r: &Results) -> i32 {
    if r.details.iter().all(|d| d.status == Status::Pass) {
        EXIT_PASS
    } else {
        EXIT_FAIL
    }
}
