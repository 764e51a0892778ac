//! Running the external `typst` program: finding it, checking its version, compiling in
//! a temporary build folder, and moving the PDF into place only when it succeeded.

use std::path::{Path, PathBuf};
use std::process::Command;

use super::{BuildFiles, TYPST_VERSION};
use crate::error::Error;

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
    let out = Command::new(&program).arg("--version").output().map_err(|e| Error::Tool {
        message: format!(
            "cannot run typst (`{}`): {e}; the PDF package needs typst-cli {TYPST_VERSION}",
            program.display()
        ),
        hint: format!(
            "install it with `{}` (or `bash .ci/install-tools`), or point --typst / {TYPST_ENV} at it",
            install_command()
        ),
    })?;
    let text = String::from_utf8_lossy(&out.stdout);
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

/// Compile the build files to `out`. The PDF appears only when typst succeeded; with
/// `keep_source` the generated source is copied to `<out stem>-typst/` beside it.
pub fn compile_to(
    tool: &TypstTool,
    build: &BuildFiles,
    out: &Path,
    creation_timestamp: i64,
    pdf_a: bool,
    keep_source: bool,
) -> Result<(), Error> {
    let dir = tempfile::Builder::new()
        .prefix("seamlife-build-")
        .tempdir()
        .map_err(|source| Error::Output {
            path: std::env::temp_dir(),
            source,
        })?;
    write_tree(dir.path(), build)?;
    let out_dir = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let tmp = tempfile::Builder::new()
        .prefix(".seamlife-")
        .suffix(".pdf.part")
        .tempfile_in(&out_dir)
        .map_err(|source| Error::Output {
            path: out.to_path_buf(),
            source,
        })?;
    let mut cmd = Command::new(&tool.program);
    cmd.arg("compile")
        .arg("--root")
        .arg(dir.path())
        .arg("--ignore-system-fonts")
        .arg("--creation-timestamp")
        .arg(creation_timestamp.to_string())
        .arg("--diagnostic-format")
        .arg("human")
        .arg("--format")
        .arg("pdf")
        // Tags multiply the file size (about 5x for a package of detail sheets).
        .arg("--no-pdf-tags");
    if pdf_a {
        cmd.arg("--pdf-standard").arg("a-2b");
    }
    cmd.arg(dir.path().join("main.typ")).arg(tmp.path());
    cmd.env_remove("SOURCE_DATE_EPOCH")
        .env_remove("TYPST_FONT_PATHS")
        .env_remove("TYPST_ROOT")
        .current_dir(dir.path());
    let res = cmd.output().map_err(|e| Error::Tool {
        message: format!("cannot run typst: {e}"),
        hint: format!("install it with `{}`", install_command()),
    })?;
    let keep_dir = || {
        let stem = out
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "package".into());
        out_dir.join(format!("{stem}-typst"))
    };
    let keep_tree = |keep: &Path| -> Result<(), Error> {
        if keep.exists() {
            std::fs::remove_dir_all(keep).map_err(|source| Error::Output {
                path: keep.to_path_buf(),
                source,
            })?;
        }
        write_tree(keep, build)
    };
    if !res.status.success() {
        let mut hint =
            "no PDF was written; rerun with --keep-source to inspect the generated Typst"
                .to_string();
        if keep_source {
            let keep = keep_dir();
            keep_tree(&keep)?;
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
        let stderr = String::from_utf8_lossy(&res.stderr)
            .replace(&dir.path().display().to_string(), "<build>");
        return Err(Error::Report {
            message: explain_failure(&stderr, &main),
            hint: Some(hint),
        });
    }
    tmp.persist(out).map_err(|e| Error::Output {
        path: out.to_path_buf(),
        source: e.error,
    })?;
    if keep_source {
        keep_tree(&keep_dir())?;
    }
    Ok(())
}
