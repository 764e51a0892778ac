//! Running the external `typst` program: finding it, checking its version, compiling in
//! a temporary build folder, and moving the PDF into place only when it succeeded.

use std::io::{Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use super::{BuildFiles, TYPST_VERSION};
use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::files::cleanup;
use crate::files::write::{Inputs, PendingFile};

/// Environment variable naming the typst program.
pub const TYPST_ENV: &str = "SEAMLIFE_TYPST";

/// A typst program whose version was checked.
#[derive(Debug, Clone)]
pub struct TypstTool {
    pub program: PathBuf,
    pub version: String,
}

/// The exact command that installs the pinned typst.
pub fn install_command() -> String {
    format!("cargo install --locked typst-cli --version {TYPST_VERSION}")
}

fn major_minor(v: &str) -> Option<(u32, u32)> {
    let mut it = v.split('.');
    let a = it.next()?.parse().ok()?;
    let b = it.next()?.parse().ok()?;
    Some((a, b))
}

/// Find typst: the given path, else `$SEAMLIFE_TYPST`, else `typst` on PATH; check that
/// its major.minor version matches the pinned one.
pub fn find(explicit: Option<&Path>) -> Result<TypstTool, Error> {
    let program = match explicit {
        Some(p) => p.to_path_buf(),
        None => match std::env::var_os(TYPST_ENV) {
            Some(p) if !p.is_empty() => PathBuf::from(p),
            _ => PathBuf::from("typst"),
        },
    };
    let cannot = |e: String| {
        Error::Tool {
        message: format!(
            "cannot run typst (`{}`): {e}; the PDF package needs typst-cli {TYPST_VERSION}",
            program.display()
        ),
        hint: format!(
            "install it with `{}` (or `bash .ci/install-tools`), or point --typst / {TYPST_ENV} at it",
            install_command()
        ),
    }
    };
    let probe = tempfile::tempfile().map_err(|e| cannot(e.to_string()))?;
    let mut child = Command::new(&program)
        .arg("--version")
        .stdin(Stdio::null())
        .stdout(Stdio::from(
            probe.try_clone().map_err(|e| cannot(e.to_string()))?,
        ))
        .stderr(Stdio::null())
        .spawn()
        .map_err(|e| cannot(e.to_string()))?;
    match wait_bounded(&mut child, VERSION_TIMEOUT).map_err(|e| cannot(e.to_string()))? {
        Ended::Exited(_) => {}
        Ended::Interrupted(sig) => return Err(Error::Interrupted(sig)),
        Ended::TimedOut => {
            return Err(cannot(format!(
                "`--version` gave no answer within {} s",
                VERSION_TIMEOUT.as_secs()
            )))
        }
    }
    let mut probe = probe;
    let mut raw = Vec::new();
    let _ = probe.seek(SeekFrom::Start(0));
    let _ = (&mut probe).take(4096).read_to_end(&mut raw);
    let text = String::from_utf8_lossy(&raw);
    let version = text
        .split_whitespace()
        .nth(1)
        .unwrap_or("")
        .trim()
        .to_string();
    let want = major_minor(TYPST_VERSION);
    match major_minor(&version) {
        Some(have) if Some(have) == want => Ok(TypstTool { program, version }),
        _ => Err(Error::Tool {
            message: format!(
                "`{}` reports version `{}`; seamlife's templates need typst {}.x",
                program.display(),
                text.trim(),
                TYPST_VERSION
                    .rsplit_once('.')
                    .map(|x| x.0)
                    .unwrap_or(TYPST_VERSION)
            ),
            hint: format!("install the pinned version with `{}`", install_command()),
        }),
    }
}

fn write_tree(root: &Path, build: &BuildFiles) -> Result<(), Error> {
    for (rel, bytes) in &build.files {
        let p = root.join(rel);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).map_err(|source| Error::Output {
                path: parent.to_path_buf(),
                source,
            })?;
        }
        std::fs::write(&p, bytes).map_err(|source| Error::Output { path: p, source })?;
    }
    Ok(())
}

/// Name the template a generated line came from, from the marker comments.
pub fn template_at(main: &str, line: usize) -> Option<(String, usize)> {
    let lines: Vec<&str> = main.lines().collect();
    let upto = line.min(lines.len());
    for i in (0..upto).rev() {
        if let Some(name) = lines[i].strip_prefix("// seamlife-template: ") {
            return Some((name.trim().to_string(), line - i - 1));
        }
    }
    None
}

fn explain_failure(stderr: &str, main: &str) -> String {
    let mut msg = format!(
        "typst could not compile the package:\n{}",
        stderr.trim_end()
    );
    // typst points at `main.typ:LINE:COL`
    if let Some(pos) = stderr.find("main.typ:") {
        let rest = &stderr[pos + "main.typ:".len()..];
        let line: Option<usize> = rest.split(':').next().and_then(|s| s.trim().parse().ok());
        if let Some(l) = line {
            let src = main.lines().nth(l.saturating_sub(1)).unwrap_or("").trim();
            match template_at(main, l) {
                Some((name, within)) => msg.push_str(&format!(
                    "\nin template `{name}`, about line {within} of its output: `{src}`"
                )),
                None => msg.push_str(&format!("\ngenerated line {l}: `{src}`")),
            }
        }
    }
    msg
}

/// How long `typst --version` may take before the program is taken for broken.
const VERSION_TIMEOUT: Duration = Duration::from_secs(30);

/// Default time allowed to typst for one package (a 1000-detail package takes about
/// 25 s on a 2-core machine; ten times that and more is generous).
pub const DEFAULT_TIMEOUT: Duration = Duration::from_secs(600);

/// How often the wait for the child looks at its state, the clock and the signals.
const POLL: Duration = Duration::from_millis(25);

/// Most of typst's diagnostics kept for a message, bytes (the end is kept).
const MAX_DIAGNOSTICS: u64 = 64 * 1024;

/// File name of the marker that says a kept-source folder was written by seamlife (and
/// may be replaced by the next `--keep-source` run).
pub const KEEP_MARKER: &str = ".seamlife-source";

const KEEP_MARKER_TEXT: &str = "This folder was written by `seamlife report --keep-source`: the Typst source and figures of the package.\nThe next run with --keep-source for the same PDF replaces the whole folder.\n";

/// How a run of the child ended.
enum Ended {
    Exited(std::process::ExitStatus),
    TimedOut,
    Interrupted(i32),
}

/// Wait for a child, killing it when `timeout` passes or the run is interrupted.
fn wait_bounded(child: &mut Child, timeout: Duration) -> std::io::Result<Ended> {
    let start = Instant::now();
    loop {
        if let Some(st) = child.try_wait()? {
            return Ok(Ended::Exited(st));
        }
        if let Some(sig) = cleanup::interrupted() {
            let _ = child.kill();
            let _ = child.wait();
            return Ok(Ended::Interrupted(sig));
        }
        if start.elapsed() >= timeout {
            let _ = child.kill();
            let _ = child.wait();
            return Ok(Ended::TimedOut);
        }
        std::thread::sleep(POLL);
    }
}

/// The last [`MAX_DIAGNOSTICS`] bytes of a file, as text.
fn tail_text(path: &Path) -> String {
    let Ok(mut f) = std::fs::File::open(path) else {
        return String::new();
    };
    let len = f.metadata().map(|m| m.len()).unwrap_or(0);
    if len > MAX_DIAGNOSTICS {
        let _ = f.seek(SeekFrom::Start(len - MAX_DIAGNOSTICS));
    }
    let mut buf = Vec::new();
    let _ = f.take(MAX_DIAGNOSTICS).read_to_end(&mut buf);
    String::from_utf8_lossy(&buf).into_owned()
}

/// How the package is compiled.
#[derive(Debug, Clone)]
pub struct CompileOptions {
    /// Creation time written into the PDF (UNIX seconds).
    pub creation_timestamp: i64,
    /// Produce PDF/A-2b.
    pub pdf_a: bool,
    /// Keep the generated source in `<out stem>-typst/` beside the PDF.
    pub keep_source: bool,
    /// The templates come from the user (`--templates`): a typesetting failure is then
    /// bad input (exit 2); with the built-in templates it is a fault of seamlife (exit 3).
    pub user_templates: bool,
    /// Time allowed to typst.
    pub timeout: Duration,
    /// The run's inputs: neither the PDF nor the kept source may replace one.
    pub inputs: Inputs,
}

impl Default for CompileOptions {
    fn default() -> Self {
        CompileOptions {
            creation_timestamp: 0,
            pdf_a: false,
            keep_source: false,
            user_templates: false,
            timeout: DEFAULT_TIMEOUT,
            inputs: Inputs::new(),
        }
    }
}

/// The kept-source folder of a PDF: `<out stem>-typst/` beside it.
pub fn keep_dir_for(out: &Path) -> PathBuf {
    let stem = out
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "package".into());
    let dir = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    dir.join(format!("{stem}-typst"))
}

/// Refuse a kept-source folder that exists but was not written by seamlife (it holds no
/// marker), or that holds one of the run's inputs.
fn check_keep_dir(keep: &Path, inputs: &Inputs) -> Result<(), Error> {
    let bad = |msg: String, hint: &str| {
        Error::Input(
            InputError::new(InputErrorKind::OutputTarget, Location::file(keep), msg).hint(hint),
        )
    };
    let Ok(meta) = std::fs::symlink_metadata(keep) else {
        return Ok(());
    };
    if !meta.is_dir() {
        return Err(bad(
            "exists and is not a folder; --keep-source would replace it".into(),
            "move it away, or write the PDF under another name (-o)",
        ));
    }
    if !keep.join(KEEP_MARKER).is_file() {
        return Err(bad(
            format!("exists and was not written by seamlife (it holds no {KEEP_MARKER}); --keep-source replaces the whole folder, so it is left as it is"),
            "move or rename the folder, or write the PDF under another name (-o)",
        ));
    }
    if let Some(p) = inputs.inside(keep) {
        return Err(bad(
            format!("holds {}, an input of this run", p.display()),
            "keep the inputs elsewhere, or write the PDF under another name (-o)",
        ));
    }
    Ok(())
}

/// A kept-source folder built beside its final place, moved there on commit.
#[derive(Debug)]
struct PendingDir {
    tmp: tempfile::TempDir,
    target: PathBuf,
    _reg: cleanup::Registered,
}

impl PendingDir {
    fn build(keep: &Path, build: &BuildFiles) -> Result<PendingDir, Error> {
        let parent = match keep.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let tmp = tempfile::Builder::new()
            .prefix(".seamlife-")
            .suffix(".typst.part")
            .tempdir_in(&parent)
            .map_err(|source| Error::Output {
                path: keep.to_path_buf(),
                source,
            })?;
        let reg = cleanup::register(tmp.path(), true);
        write_tree(tmp.path(), build)?;
        std::fs::write(tmp.path().join(KEEP_MARKER), KEEP_MARKER_TEXT).map_err(|source| {
            Error::Output {
                path: keep.to_path_buf(),
                source,
            }
        })?;
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            // The temporary folder is created 0700; a kept folder is an ordinary one.
            let mode = 0o777 & !crate::files::write::umask();
            let _ = std::fs::set_permissions(tmp.path(), std::fs::Permissions::from_mode(mode));
        }
        Ok(PendingDir {
            tmp,
            target: keep.to_path_buf(),
            _reg: reg,
        })
    }

    /// Put the folder in place, replacing an earlier kept folder (checked to be one).
    fn commit(self) -> Result<(), Error> {
        let out_err = |source| Error::Output {
            path: self.target.clone(),
            source,
        };
        let new = self.tmp.keep();
        let old = if self.target.exists() {
            let aside = new.with_extension("old");
            std::fs::rename(&self.target, &aside).map_err(out_err)?;
            Some(aside)
        } else {
            None
        };
        if let Err(e) = std::fs::rename(&new, &self.target) {
            // Put the earlier folder back, and drop the new one.
            if let Some(a) = &old {
                let _ = std::fs::rename(a, &self.target);
            }
            let _ = std::fs::remove_dir_all(&new);
            return Err(out_err(e));
        }
        if let Some(a) = old {
            let _ = std::fs::remove_dir_all(a);
        }
        Ok(())
    }
}

/// A compiled package that is not in place yet: [`Compiled::commit`] moves the PDF (and
/// the kept source) into place; dropping it leaves everything as it was before the run.
#[derive(Debug)]
pub struct Compiled {
    pdf: PendingFile,
    keep: Option<PendingDir>,
}

impl Compiled {
    /// The PDF's final path.
    pub fn target(&self) -> &Path {
        self.pdf.target()
    }

    /// Move the kept source and then the PDF into place.
    pub fn commit(self) -> Result<(), Error> {
        if let Some(sig) = cleanup::interrupted() {
            return Err(Error::Interrupted(sig));
        }
        if let Some(k) = self.keep {
            k.commit()?;
        }
        self.pdf.commit()
    }
}

/// Compile the build files to `out` and move the PDF into place. The PDF appears only
/// when typst succeeded and wrote a PDF; with `keep_source` the generated source is
/// kept in `<out stem>-typst/` beside it.
pub fn compile_to(
    tool: &TypstTool,
    build: &BuildFiles,
    out: &Path,
    creation_timestamp: i64,
    pdf_a: bool,
    keep_source: bool,
) -> Result<(), Error> {
    let opts = CompileOptions {
        creation_timestamp,
        pdf_a,
        keep_source,
        ..CompileOptions::default()
    };
    compile(tool, build, out, &opts)?.commit()
}

/// Compile the build files for `out` without touching `out` yet: the PDF waits in a
/// temporary file beside it until [`Compiled::commit`].
pub fn compile(
    tool: &TypstTool,
    build: &BuildFiles,
    out: &Path,
    opts: &CompileOptions,
) -> Result<Compiled, Error> {
    let keep = keep_dir_for(out);
    if opts.keep_source {
        check_keep_dir(&keep, &opts.inputs)?;
    }
    let pdf = PendingFile::new(out, &opts.inputs, ".pdf.part")?;
    let dir = tempfile::Builder::new()
        .prefix("seamlife-build-")
        .tempdir()
        .map_err(|source| Error::Output {
            path: std::env::temp_dir(),
            source,
        })?;
    let _reg = cleanup::register(dir.path(), true);
    write_tree(dir.path(), build)?;
    let diag = dir.path().join(".typst-diagnostics.txt");
    let diag_file = std::fs::File::create(&diag).map_err(|source| Error::Output {
        path: diag.clone(),
        source,
    })?;
    let mut cmd = Command::new(&tool.program);
    cmd.arg("compile")
        .arg("--root")
        .arg(dir.path())
        .arg("--ignore-system-fonts")
        .arg("--creation-timestamp")
        .arg(opts.creation_timestamp.to_string())
        .arg("--diagnostic-format")
        .arg("human")
        .arg("--format")
        .arg("pdf")
        // Tags multiply the file size (about 5x for a package of detail sheets).
        .arg("--no-pdf-tags");
    if opts.pdf_a {
        cmd.arg("--pdf-standard").arg("a-2b");
    }
    cmd.arg(dir.path().join("main.typ")).arg(pdf.path());
    cmd.env_remove("SOURCE_DATE_EPOCH")
        .env_remove("TYPST_FONT_PATHS")
        .env_remove("TYPST_ROOT")
        .current_dir(dir.path())
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::from(diag_file));
    let mut child = cmd.spawn().map_err(|e| Error::Tool {
        message: format!("cannot run typst: {e}"),
        hint: format!("install it with `{}`", install_command()),
    })?;
    let ended = wait_bounded(&mut child, opts.timeout).map_err(|e| Error::Tool {
        message: format!("cannot wait for typst: {e}"),
        hint: "check the typst program".into(),
    })?;
    let status = match ended {
        Ended::Exited(st) => st,
        Ended::Interrupted(sig) => return Err(Error::Interrupted(sig)),
        Ended::TimedOut => {
            return Err(Error::Tool {
                message: format!(
                    "typst did not finish within {} s and was stopped; no PDF was written",
                    opts.timeout.as_secs()
                ),
                hint: "a very large package may need more time: raise --typst-timeout SECONDS"
                    .into(),
            })
        }
    };
    let fault = |message: String, hint: String| -> Error {
        if opts.user_templates {
            Error::Report {
                message,
                hint: Some(hint),
            }
        } else {
            Error::Typesetting {
                message,
                hint: format!("{hint}; with the built-in templates this is a fault in seamlife, not in the input: please report it with the project file attached"),
            }
        }
    };
    if !status.success() {
        let mut hint =
            "no PDF was written; rerun with --keep-source to inspect the generated Typst"
                .to_string();
        if opts.keep_source {
            PendingDir::build(&keep, build)?.commit()?;
            hint = format!(
                "no PDF was written; the generated Typst is in {}",
                keep.display()
            );
        }
        let main = build
            .files
            .iter()
            .find(|(n, _)| n == "main.typ")
            .map(|(_, b)| String::from_utf8_lossy(b).into_owned())
            .unwrap_or_default();
        let stderr = tail_text(&diag).replace(&dir.path().display().to_string(), "<build>");
        return Err(fault(explain_failure(&stderr, &main), hint));
    }
    check_pdf(pdf.path()).map_err(|what| {
        fault(
            format!(
                "typst reported success but {what}; the earlier PDF, if any, is left as it was"
            ),
            "no PDF was written".into(),
        )
    })?;
    let keep = if opts.keep_source {
        Some(PendingDir::build(&keep, build)?)
    } else {
        None
    };
    Ok(Compiled { pdf, keep })
}

/// Whether a file is a PDF: not empty, and starting with the `%PDF-` header
/// (ISO 32000-1 7.5.2, from memory).
fn check_pdf(path: &Path) -> Result<(), String> {
    let mut head = [0u8; 5];
    let mut f = std::fs::File::open(path).map_err(|e| format!("its output cannot be read: {e}"))?;
    let len = f.metadata().map(|m| m.len()).unwrap_or(0);
    if len == 0 {
        return Err("wrote nothing (an empty file)".into());
    }
    match f.read_exact(&mut head) {
        Ok(()) if &head == b"%PDF-" => Ok(()),
        _ => Err(format!(
            "wrote {len} bytes that are not a PDF (no %PDF- header)"
        )),
    }
}
