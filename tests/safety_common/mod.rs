//! Helpers shared by the bad-input and data-safety tests: running the binary with a
//! chosen standard output, small projects, fake typst programs, and folder listings.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

pub fn bin() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_seamlife"))
}

pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

pub fn demo() -> PathBuf {
    root().join("projects/kestrel-bay-runway.yaml")
}

pub fn record() -> PathBuf {
    root().join("projects/records/rg3-sg4-record.csv")
}

/// The binary with arguments, standard input empty.
pub fn cmd(args: &[&str]) -> Command {
    let mut c = Command::new(bin());
    c.args(args).stdin(Stdio::null());
    c
}

/// Run and return (exit code, stdout, stderr).
pub fn run(c: &mut Command) -> (i32, String, String) {
    let o: Output = c.output().expect("run seamlife");
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Run `seamlife ARGS` in `dir` and return (exit code, stdout, stderr).
pub fn run_in(dir: &Path, args: &[&str]) -> (i32, String, String) {
    run(cmd(args).current_dir(dir))
}

/// Run `seamlife ARGS` in `dir` under the umask `mask` (octal text).
pub fn run_umask(dir: &Path, mask: &str, args: &[&str]) -> (i32, String, String) {
    run(Command::new("sh")
        .arg("-c")
        .arg(format!("umask {mask}; exec \"$0\" \"$@\""))
        .arg(bin())
        .args(args)
        .stdin(Stdio::null())
        .current_dir(dir))
}

/// A one-detail EN 1993-1-9 project whose single block is `block` (flow mapping text),
/// with `per_year` and `life` substituted.
pub fn project_with(block: &str, per_year: &str, life: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R-1, revision: A, prepared_by: P, date: 2026-11-20}}
basis: {{family: en1993-1-9, design_life_years: {life}, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: D1
    location: here
    detail: butt-transverse-ground-flush
    material: S355
    thickness_mm: 20
    normal:
      loading:
        - event: e
          per_year: {per_year}
          blocks: [{block}]
"
    )
}

/// A small passing project (exit code 0).
pub fn passing_project() -> String {
    project_with("{range_mpa: 40, cycles: 1}", "10000", "25")
}

/// A one-detail project whose normal stress is a series (lines indented under
/// `series:`), `extra` lines added to the event.
pub fn series_project(series_lines: &str, event_extra: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R-1, revision: A, prepared_by: P, date: 2026-11-20}}
basis: {{family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: M1
    location: gauge
    detail: attachment-longitudinal-over-100
    material: S355
    thickness_mm: 20
    normal:
      loading:
        - event: measured
{event_extra}          series:
{series_lines}"
    )
}

/// `count rec.csv` of the demo's strain record (copied in as `rec.csv`), then `extra`.
pub fn count_args(extra: &[&str]) -> Vec<String> {
    let mut v: Vec<String> = [
        "count",
        "rec.csv",
        "--column",
        "sg4_microstrain",
        "--unit",
        "microstrain",
        "--modulus-mpa",
        "210000",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    v.extend(extra.iter().map(|s| s.to_string()));
    v
}

/// Write `text` to `dir/name` and return the path.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// A fake typst: prints `typst 0.15.1` for `--version`; otherwise runs `body` (sh),
/// where `$out` is the output path (the last argument).
pub fn fake_typst(dir: &Path, name: &str, body: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(
        &p,
        format!(
            "#!/bin/sh\nif [ \"$1\" = \"--version\" ]; then echo 'typst 0.15.1 (fake)'; exit 0; fi\nfor out; do :; done\n{body}\n"
        ),
    )
    .unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o755)).unwrap();
    p
}

/// A minimal file with a PDF header, as a fake typst writes it.
pub const FAKE_PDF: &str = "%PDF-1.7\n% fake package\n%%EOF\n";

/// The body of a fake typst that writes [`FAKE_PDF`] to its output.
pub fn writes_pdf() -> String {
    format!("printf '%s' '{FAKE_PDF}' > \"$out\"")
}

/// `seamlife report p.yaml -o o.pdf --typst FAKE EXTRA...` in `dir`.
pub fn report_with(dir: &Path, fake: &Path, extra: &[&str]) -> (i32, String, String) {
    run(cmd(&["report", "p.yaml", "-o", "o.pdf", "--typst"])
        .arg(fake)
        .args(extra)
        .current_dir(dir))
}

/// No temporary file (`.part`) or set-aside folder (`.old`) is left in `dir`.
pub fn assert_no_temporaries(dir: &Path) {
    let n = names(dir);
    assert!(
        n.iter()
            .all(|x| !x.contains(".part") && !x.ends_with(".old")),
        "{n:?}"
    );
}

/// Names in a folder, sorted.
pub fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Make a named pipe (FIFO) at `p` with mkfifo(1).
pub fn mkfifo(p: &Path) {
    let st = Command::new("mkfifo").arg(p).status().expect("mkfifo");
    assert!(st.success());
}

/// Permission bits of a file.
pub fn mode(p: &Path) -> u32 {
    use std::os::unix::fs::PermissionsExt;
    std::fs::metadata(p).unwrap().permissions().mode() & 0o7777
}

/// The invented runway hall of the batch demo, generated by examples/make_batch.rs:
/// `details` details, `steps`-step histories per event (0: blocks only).
pub fn hall(dir: &Path, details: usize, steps: usize) {
    let st = Command::new(env!("CARGO"))
        .args(["run", "-q", "--example", "make_batch", "--"])
        .arg(dir)
        .args([details.to_string(), steps.to_string()])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .status()
        .unwrap();
    assert!(st.success());
}
