//! Helpers shared by the tests of the PDF package: running `seamlife`, and the text
//! and word boxes of a PDF through pdftotext.
#![allow(dead_code)]

use assert_cmd::Command;
use std::path::{Path, PathBuf};
use std::process::Command as Proc;

pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

pub fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

/// Render `project` to `out`; returns (exit code, stdout, stderr).
pub fn render(project: &Path, out: &Path, extra: &[&str]) -> (i32, String, String) {
    let o = seamlife()
        .arg("report")
        .arg(project)
        .arg("-o")
        .arg(out)
        .args(extra)
        .output()
        .unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Text of each page (pdftotext separates pages by form feeds).
pub fn pages(pdf: &Path) -> Vec<String> {
    pages_with(pdf, "-layout")
}

/// Page text in content-stream order (keeps a wrapped table cell together).
pub fn pages_raw(pdf: &Path) -> Vec<String> {
    pages_with(pdf, "-raw")
}

/// The whole output of `pdftotext MODE` (`-layout`, `-raw`, `-bbox`).
pub fn pdftotext(pdf: &Path, mode: &str) -> String {
    let o = Proc::new("pdftotext")
        .args([mode, "-enc", "UTF-8"])
        .arg(pdf)
        .arg("-")
        .output()
        .expect("pdftotext is needed: run `bash .ci/install-tools`");
    assert!(o.status.success());
    String::from_utf8(o.stdout).unwrap()
}

pub fn pages_with(pdf: &Path, mode: &str) -> Vec<String> {
    let text = pdftotext(pdf, mode);
    let mut p: Vec<String> = text.split('\u{c}').map(|s| s.to_string()).collect();
    if p.last().is_some_and(|s| s.trim().is_empty()) {
        p.pop();
    }
    p
}

pub fn json_results(project: &Path) -> serde_json::Value {
    let o = seamlife()
        .arg("assess")
        .arg(project)
        .arg("--json")
        .output()
        .unwrap();
    serde_json::from_slice(&o.stdout).unwrap()
}

pub fn squash(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}
