//! The command line. `main.rs` only calls [`main`]; everything here is reachable from
//! tests through the binary.

mod assess;
mod classes;
mod count;
mod diff;
mod fit;
mod lint;
mod merge;
mod merge_spectra;
mod new;
pub mod output;
pub mod progress;
mod report;
mod schema;
pub mod stream;
mod verify;

use std::path::PathBuf;

use clap::{Parser, Subcommand};

use crate::catalogue::Library;
use crate::error::{Error, EXIT_BAD_INPUT, EXIT_FAIL, EXIT_INTERNAL, EXIT_PASS};
use crate::results::{Results, Status};
pub use assess::{shard_range, AssessArgs};
pub use count::{CountArgs, FormatArg, ResidueArg, UnitArg};
pub use diff::DiffArgs;
pub use fit::{fit_table, FitArgs, MethodArg, StressArg};
pub use output::{fmt_life, print_err, print_out, table, write_atomic};
pub use report::ReportArgs;
pub use verify::VerifyArgs;

#[derive(Parser, Debug)]
#[command(
    name = "seamlife",
    version,
    about = "Fatigue assessment of welded steel details by the nominal-stress (detail category) method",
    after_help = "Exit codes: 0 all details pass, 1 some detail fails or lies outside the method, 2 bad input, 3 internal error, missing tool or unwritable standard output, 130/143 stopped by SIGINT/SIGTERM.\n\nThe governing code, the project specification and review by a licensed/chartered engineer prevail over this tool's output."
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
    /// Merge the JSON results of the parts of a sharded run (`assess --shard K/N --json`), or
    /// spectrum parts (`count --spectrum-out`) into the spectrum of the whole record.
    Merge(merge::MergeArgs),
    /// Check a project file without assessing it.
    Lint {
        /// Project file (YAML).
        file: PathBuf,
    },
    /// List curve families, or the categories and catalogue of one family.
    Classes {
        /// Family id, e.g. en1993-1-9.
        family: Option<String>,
        /// Find catalogue entries holding all these words (in key, description or
        /// reference; case-insensitive), best first. Without FAMILY: every family.
        #[arg(long, num_args = 1.., value_name = "WORDS")]
        search: Option<Vec<String>>,
    },
    /// Write a starter project into a new folder.
    New {
        /// Folder to create (it must not hold a project.yaml yet).
        dir: PathBuf,
    },
    /// Re-run a submitted results model's project and list every input, version and
    /// value that differs (exit 0 agree, 1 differences, 2 bad input).
    Verify(VerifyArgs),
    /// Compare two revisions (project files or results models): details added, removed
    /// and changed, every input and result that differs (exit 1 when a status got worse).
    Diff(diff::DiffArgs),
    /// Print the JSON Schema of a project file, a results model or a diff model (for
    /// editor completion and validation, and for tools reading --json).
    Schema(schema::SchemaArgs),
}

/// Parse arguments, run, print errors, and return the process exit code. A panic
/// anywhere below becomes an "internal error" message and exit code 3; SIGINT and
/// SIGTERM stop the run, remove its temporary files and give 128 + the signal number.
pub fn main() -> i32 {
    // A standard output closed before the start is not seen here: the Rust runtime
    // gives a closed descriptor /dev/null, so output to it is discarded as with
    // `>/dev/null`. A closed pipe (EPIPE) or a full disk is reported by `print_out`.
    install_signal_handlers();
    run_guarded(main_inner)
}

fn main_inner() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() {
                EXIT_BAD_INPUT
            } else {
                EXIT_PASS
            };
            if e.use_stderr() {
                print_err(&e.render().to_string());
                return code;
            }
            // --help and --version go to standard output, which may be closed or full.
            return match output::print_out(e.render().to_string().as_bytes()) {
                Ok(()) => code,
                Err(err) => {
                    report_error(&err);
                    err.exit_code()
                }
            };
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

/// Run `f`, turning a panic into a short "internal error" message on standard error and
/// exit code 3 (never a raw backtrace). Temporary files are removed as the panic
/// unwinds.
pub fn run_guarded(f: impl FnOnce() -> i32 + std::panic::UnwindSafe) -> i32 {
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(|info| {
        let what = info
            .payload()
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| info.payload().downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown cause".into());
        let place = info
            .location()
            .map(|l| format!(" at {}:{}", l.file(), l.line()))
            .unwrap_or_default();
        print_err(&format!(
            "error: internal error: {}{place}\n  hint: this is a fault in seamlife, not in the input; please report it with the project file attached\n",
            crate::files::text::one_line(&what)
        ));
    }));
    let r = std::panic::catch_unwind(f);
    std::panic::set_hook(previous);
    match r {
        Ok(code) => code,
        Err(_) => {
            crate::files::cleanup::remove_all();
            EXIT_INTERNAL
        }
    }
}

/// How long the main thread has, after SIGINT or SIGTERM, to stop its work and remove
/// its temporary files before the signal thread removes them and exits.
const INTERRUPT_GRACE: std::time::Duration = std::time::Duration::from_secs(3);

/// SIGINT and SIGTERM set the interruption flag (the typst wait stops and kills the
/// child); if the run has not ended within [`INTERRUPT_GRACE`], the registered
/// temporary files are removed and the process exits with 128 + the signal. A second
/// signal exits at once, after the same removal.
fn install_signal_handlers() {
    #[cfg(unix)]
    {
        use signal_hook::consts::{SIGINT, SIGTERM};
        let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]) else {
            return;
        };
        let _ = std::thread::Builder::new()
            .name("seamlife-signals".into())
            .spawn(move || {
                let Some(sig) = signals.forever().next() else {
                    return;
                };
                crate::files::cleanup::request_interrupt(sig);
                let at = std::time::Instant::now();
                loop {
                    let again = signals.pending().next().is_some();
                    if again || at.elapsed() >= INTERRUPT_GRACE {
                        crate::files::cleanup::remove_all();
                        print_err(&format!("error: {}\n", Error::Interrupted(sig)));
                        std::process::exit(crate::error::EXIT_SIGNAL_BASE + sig);
                    }
                    std::thread::sleep(std::time::Duration::from_millis(20));
                }
            });
    }
}

/// Print an error with its location and hint to standard error.
pub fn report_error(e: &Error) {
    let mut text = String::new();
    let inputs = e.input_errors();
    if inputs.is_empty() {
        text.push_str(&format!("error: {e}\n"));
        if let Some(h) = e.hint() {
            text.push_str(&format!("  hint: {h}\n"));
        }
    } else {
        for ie in &inputs {
            text.push_str(&format!("error: {ie}\n"));
            if let Some(h) = &ie.hint {
                text.push_str(&format!("  hint: {h}\n"));
            }
        }
        if inputs.len() > 1 {
            text.push_str(&format!(
                "{} problems found; nothing was assessed.\n",
                inputs.len()
            ));
        }
    }
    print_err(&text);
}

pub fn run(cli: &Cli) -> Result<i32, Error> {
    let library = Library::load(cli.joint_classes.as_deref())?;
    let jc = cli.joint_classes.as_deref();
    match &cli.command {
        Command::Assess(a) => assess::run(a, &library, jc),
        Command::Report(a) => report::run(a, &library, jc),
        Command::Count(a) => count::run(a),
        Command::Fit(a) => fit::run(a, &library),
        Command::Merge(a) => merge::run(a),
        Command::Lint { file } => lint::run(file, &library),
        Command::Classes { family, search } => match search {
            Some(words) => classes::search(family.as_deref(), words, &library),
            None => classes::run(family.as_deref(), &library),
        },
        Command::New { dir } => new::run(dir, &library),
        Command::Verify(a) => verify::run(a, &library),
        Command::Diff(a) => diff::run(a, &library),
        Command::Schema(a) => schema::run(a),
    }
}

/// Every file a project run read: the project file, its series files, the family files
/// of `--joint-classes` and the templates of `--templates`. No output may be one of them.
fn run_inputs(
    run: &crate::ProjectRun,
    joint_classes: Option<&std::path::Path>,
    templates: Option<&std::path::Path>,
) -> output::Inputs {
    inputs_of(
        &run.project_path,
        &run.series_paths,
        &run.table_paths,
        joint_classes,
        templates,
    )
}

/// The files a run reads, which no output may replace.
fn inputs_of(
    project: &std::path::Path,
    series: &[std::path::PathBuf],
    tables: &[std::path::PathBuf],
    joint_classes: Option<&std::path::Path>,
    templates: Option<&std::path::Path>,
) -> output::Inputs {
    let mut inputs = output::Inputs::new();
    inputs.add(project, "the project file");
    for p in series {
        inputs.add(p, "a series file of the project");
    }
    for p in tables {
        inputs.add(p, "a table of the project");
    }
    if let Some(d) = joint_classes {
        inputs.add_folder(d, "a curve-family file of --joint-classes");
    }
    if let Some(d) = templates {
        inputs.add_folder(d, "a template of --templates");
    }
    inputs
}

/// Print the notes of the signal stage (e.g. a gate that removed every cycle) on
/// standard error.
fn print_notes(notes: &[crate::histories::HistoryNote]) {
    for n in notes {
        print_err(&format!(
            "warning: {}: {}\n",
            crate::files::text::one_line(&n.detail_id),
            crate::files::text::one_line(&n.message)
        ));
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
