//! The checker's review file (`report --review`, `assess --review`), the files a
//! package carries as PDF attachments and `seamlife verify PACKAGE.pdf`. Needs typst
//! and pdftotext (`bash .ci/install-tools`).

mod pdf;

use pdf::*;
use std::path::{Path, PathBuf};

fn demo() -> PathBuf {
    root().join("projects/kestrel-bay-runway.yaml")
}

fn demo_review() -> PathBuf {
    root().join("projects/kestrel-bay-runway.review.yaml")
}

fn run(args: &[&std::ffi::OsStr]) -> (i32, String, String) {
    let o = seamlife().args(args).output().unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

fn os<S: AsRef<std::ffi::OsStr> + ?Sized>(s: &S) -> &std::ffi::OsStr {
    s.as_ref()
}

/// The demo project copied into `dir` with its record, and a review of it with the
/// given body after the header (hash of the copied project).
fn project_copy(dir: &Path) -> PathBuf {
    std::fs::create_dir_all(dir.join("records")).unwrap();
    std::fs::copy(
        root().join("projects/records/rg3-sg4-record.csv"),
        dir.join("records/rg3-sg4-record.csv"),
    )
    .unwrap();
    let p = dir.join("kestrel-bay-runway.yaml");
    std::fs::copy(demo(), &p).unwrap();
    p
}

fn sha256_of(p: &Path) -> String {
    use sha2::{Digest, Sha256};
    let d = Sha256::digest(std::fs::read(p).unwrap());
    d.iter().map(|b| format!("{b:02x}")).collect()
}

fn review_text(hash: &str, details: &str) -> String {
    format!(
        "seamlife_review: 1\nreviewer: T. Vasquez-Hall\norganisation: Example Checking Ltd\ndate: 2026-11-30\nproject_sha256: {hash}\ndetails:\n{details}"
    )
}

#[test]
fn demo_package_carries_results_and_project_and_verifies() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("p.pdf");
    let (code, _, err) = render(&demo(), &out, &[]);
    assert!(code == 0 || code == 1, "{err}");
    let o = std::process::Command::new("pdfdetach")
        .arg("-list")
        .arg(&out)
        .output()
        .unwrap();
    let list = String::from_utf8_lossy(&o.stdout);
    // the three files of the demo: results model, project file, its strain record
    for name in [
        "seamlife-results.json",
        "project/kestrel-bay-runway.yaml",
        "project/records/rg3-sg4-record.csv",
    ] {
        assert!(list.contains(name), "{name} not attached: {list}");
    }
    // the attached results model is the one `assess --json` writes
    let attached = seamlife::checker::package::read_attachments(&out).unwrap();
    let a: serde_json::Value = serde_json::from_slice(&attached["seamlife-results.json"]).unwrap();
    assert_eq!(a, json_results(&demo()));
    assert_eq!(
        attached["project/kestrel-bay-runway.yaml"],
        std::fs::read(demo()).unwrap()
    );
    // verified with a private temporary folder, which is left empty afterwards
    let tmp = dir.path().join("tmp");
    std::fs::create_dir(&tmp).unwrap();
    let o = seamlife()
        .arg("verify")
        .arg(&out)
        .env("TMPDIR", &tmp)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(0), "{stdout}");
    assert!(stdout.contains("AGREE"), "{stdout}");
    assert!(stdout.contains("same     series  records/rg3-sg4-record.csv"));
    assert_eq!(std::fs::read_dir(&tmp).unwrap().count(), 0);
}

/// Replace the attached results model of `pdf` by `f(model)`, written uncompressed.
fn tamper(pdf: &Path, out: &Path, f: impl Fn(&mut serde_json::Value)) {
    let mut doc = lopdf::Document::load(pdf).unwrap();
    let mut target = None;
    for (id, obj) in doc.objects.iter() {
        if let Ok(s) = obj.as_stream() {
            if s.dict.get(b"Type").ok().and_then(|t| t.as_name().ok()) == Some(b"EmbeddedFile")
                && s.dict.get(b"Subtype").ok().and_then(|t| t.as_name().ok())
                    == Some(b"application/json")
            {
                target = Some(*id);
            }
        }
    }
    let id = target.expect("an attached JSON");
    let s = doc.get_object_mut(id).unwrap().as_stream_mut().unwrap();
    let raw = s
        .decompressed_content()
        .unwrap_or_else(|_| s.content.clone());
    let mut v: serde_json::Value = serde_json::from_slice(&raw).unwrap();
    f(&mut v);
    s.dict.remove(b"Filter");
    s.set_plain_content(serde_json::to_vec_pretty(&v).unwrap());
    doc.save(out).unwrap();
}

#[test]
fn tampered_results_in_the_pdf_are_found() {
    let dir = tempfile::tempdir().unwrap();
    let good = dir.path().join("good.pdf");
    render(&demo(), &good, &[]);
    let bad = dir.path().join("bad.pdf");
    // damage of the governing bracket lowered by 10 %: an invented tampering
    tamper(&good, &bad, |v| {
        let d = v["details"]
            .as_array_mut()
            .unwrap()
            .iter_mut()
            .find(|d| d["id"] == "RG3-B01")
            .unwrap();
        let x = d["damage"].as_f64().unwrap();
        d["damage"] = serde_json::json!(x * 0.9);
    });
    let (code, stdout, err) = run(&[os("verify"), bad.as_os_str()]);
    assert_eq!(code, 1, "{stdout}{err}");
    assert!(stdout.contains("details[RG3-B01].damage"), "{stdout}");
    assert!(stdout.contains("DIFFERENCES FOUND"));
    // relative difference 0.1 exactly as made: |0.9x - x| / x (arithmetic)
    assert!(stdout.contains("(relative 1.00e-1)"), "{stdout}");
}

#[test]
fn bad_pdfs_give_exit_2_with_a_message() {
    let dir = tempfile::tempdir().unwrap();
    let good = dir.path().join("good.pdf");
    render(&demo(), &good, &[]);
    let bytes = std::fs::read(&good).unwrap();
    // cut short
    let cut = dir.path().join("cut.pdf");
    std::fs::write(&cut, &bytes[..bytes.len() / 3]).unwrap();
    let (code, _, err) = run(&[os("verify"), cut.as_os_str()]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("cannot be read") || err.contains("carries no"),
        "{err}"
    );
    // not a PDF at all
    let text = dir.path().join("notes.pdf");
    std::fs::write(&text, "minutes of the review meeting\n").unwrap();
    let (code, _, err) = run(&[os("verify"), text.as_os_str()]);
    assert_eq!(code, 2);
    assert!(err.contains("not a PDF"), "{err}");
    // larger than the limit (sparse file of 513 MiB)
    let huge = dir.path().join("huge.pdf");
    let f = std::fs::File::create(&huge).unwrap();
    f.set_len(513 * 1024 * 1024).unwrap();
    let (code, _, err) = run(&[os("verify"), huge.as_os_str()]);
    assert_eq!(code, 2);
    assert!(err.contains("limited to 512 MiB"), "{err}");
    // a device
    let (code, _, err) = run(&[os("verify"), os("/dev/zero")]);
    assert_eq!(code, 2, "{err}");
    // a PDF without attachments: a PDF/A package
    let plain = dir.path().join("a.pdf");
    let (_, _, err) = render(&demo(), &plain, &["--pdf-a"]);
    assert!(
        err.contains("PDF/A-2b cannot carry attached files"),
        "{err}"
    );
    let (code, _, err) = run(&[os("verify"), plain.as_os_str()]);
    assert_eq!(code, 2);
    assert!(err.contains("carries no attached files"), "{err}");
}

#[test]
fn package_with_review_shows_the_verdicts() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("r.pdf");
    let rv = demo_review();
    let (code, _, err) = render(&demo(), &out, &["--review", rv.to_str().unwrap()]);
    assert_eq!(code, 1, "{err}"); // the demo has one failing detail
    let pg = pages(&out);
    let cover = squash(&pg[0]);
    assert!(cover.contains("Review record"), "{cover}");
    assert!(cover.contains("M. Achterberg, CEng"));
    assert!(cover.contains("Tidewell Checking Partnership"));
    // the demo review: 6 accepted, 2 queries, 1 not accepted (projects/kestrel-bay-runway.review.yaml)
    assert!(
        cover.contains("6 accepted, 2 queried, 1 not accepted"),
        "{cover}"
    );
    assert!(cover.contains("Open: RG3-B02 (query); RG3-C01 (query); RG3-B01 (not accepted)"));
    let raw = pages_raw(&out);
    let summary = raw
        .iter()
        .find(|p| p.contains("Checker’s verdicts") || p.contains("Checker's verdicts"))
        .expect("summary with verdicts");
    let s = squash(summary);
    assert!(s.contains("PASS query"), "{s}");
    assert!(s.contains("FAIL not accepted"), "{s}");
    let sheet = raw
        .iter()
        .find(|p| squash(p).contains("Detail RG3-B02") && p.contains("DETAIL SHEET"))
        .unwrap();
    assert!(squash(sheet).contains(
        "Checker: query (M. Achterberg, CEng, 2026-11-27) — The strain record covers half an hour"
    ));
    let (code, stdout, _) = run(&[os("verify"), out.as_os_str()]);
    assert_eq!(code, 0, "{stdout}");
}

#[test]
fn assess_lists_open_queries() {
    let (code, stdout, err) = run(&[
        os("assess"),
        demo().as_os_str(),
        os("--review"),
        demo_review().as_os_str(),
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(stdout.contains("6 accepted, 2 queries, 1 not accepted, 0 not reviewed"));
    let open = &stdout[stdout.find("open:").unwrap()..];
    let lines: Vec<&str> = open.lines().skip(1).take(3).collect();
    assert!(lines[0].contains("QUERY") && lines[0].contains("RG3-B02"));
    assert!(lines[1].contains("QUERY") && lines[1].contains("RG3-C01"));
    assert!(lines[2].contains("NOT ACCEPTED") && lines[2].contains("RG3-B01"));
    assert!(stdout.contains("2401 values compared, 0 differ, 0 inputs differ — agree"));
}

#[test]
fn unknown_detail_is_located_and_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    let p = project_copy(dir.path());
    let rv = dir.path().join("rv.yaml");
    std::fs::write(
        &rv,
        review_text(
            &sha256_of(&p),
            "  - id: RG3-W01\n    verdict: accepted\n  - id: RG3-B03\n    verdict: accepted\n",
        ),
    )
    .unwrap();
    let (code, stdout, err) = run(&[os("assess"), p.as_os_str(), os("--review"), rv.as_os_str()]);
    assert_eq!(code, 2, "{err}");
    assert!(stdout.is_empty());
    // line 9, column 9: the id of the second verdict in the text above
    assert!(
        err.contains("rv.yaml:9:9: details[1].id: the project has no detail `RG3-B03`"),
        "{err}"
    );
    assert!(
        err.contains("did you mean `RG3-B01`?") || err.contains("did you mean `RG3-B02`?"),
        "{err}"
    );
    let out = dir.path().join("x.pdf");
    let (code, _, _) = render(&p, &out, &["--review", rv.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(!out.exists());
}

#[test]
fn stale_review_is_an_error_or_a_printed_warning() {
    let dir = tempfile::tempdir().unwrap();
    let p = project_copy(dir.path());
    let rv = dir.path().join("rv.yaml");
    // written against the project before a change
    std::fs::write(
        &rv,
        review_text(&sha256_of(&p), "  - id: RG3-W01\n    verdict: accepted\n"),
    )
    .unwrap();
    let mut text = std::fs::read_to_string(&p).unwrap();
    text.push_str("# changed after the review\n");
    std::fs::write(&p, text).unwrap();
    let out = dir.path().join("x.pdf");
    let (code, _, err) = render(&p, &out, &["--review", rv.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("rv.yaml:5:17: project_sha256: the review was written against"),
        "{err}"
    );
    assert!(!out.exists());
    let (code, _, err) = render(
        &p,
        &out,
        &["--review", rv.to_str().unwrap(), "--allow-stale"],
    );
    assert_eq!(code, 1, "{err}");
    assert!(
        err.contains("warning:") && err.contains("STALE REVIEW"),
        "{err}"
    );
    let cover = squash(&pages(&out)[0]);
    assert!(cover.contains("Warning: STALE REVIEW"), "{cover}");
    assert!(cover.contains("not the project file of this package"));
    let summary = pages(&out)
        .into_iter()
        .map(|p| squash(&p))
        .find(|p| p.contains("Checker’s verdicts"))
        .unwrap();
    assert!(summary.contains("the review was written against another revision"));
}

#[test]
fn hostile_review_files_give_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    let p = project_copy(dir.path());
    let hash = sha256_of(&p);
    let check = |name: &str, body: &[u8], want: &str| {
        let rv = dir.path().join(name);
        std::fs::write(&rv, body).unwrap();
        let (code, stdout, err) =
            run(&[os("assess"), p.as_os_str(), os("--review"), rv.as_os_str()]);
        assert_eq!(code, 2, "{name}: {err}");
        assert!(stdout.is_empty(), "{name}");
        assert!(err.contains(want), "{name}: {err}");
    };
    // unknown key, with its place
    check(
        "key.yaml",
        review_text(
            &hash,
            "  - id: RG3-W01\n    verdict: accepted\n    verdit: query\n",
        )
        .as_bytes(),
        "key.yaml:9:5",
    );
    // a verdict that is not one of the three
    check(
        "verdict.yaml",
        review_text(&hash, "  - id: RG3-W01\n    verdict: approved\n").as_bytes(),
        "verdict.yaml:8:14",
    );
    // a query without remarks
    check(
        "query.yaml",
        review_text(&hash, "  - id: RG3-W01\n    verdict: query\n").as_bytes(),
        "needs remarks",
    );
    // NUL byte inside a remark
    check(
        "nul.yaml",
        review_text(
            &hash,
            "  - id: RG3-W01\n    verdict: accepted\n    remarks: a\0b\n",
        )
        .as_bytes(),
        "nul.yaml:9:",
    );
    // a size bomb: 17 MiB of remarks
    let mut big = review_text(&hash, "  - id: RG3-W01\n    verdict: accepted\n").into_bytes();
    big.extend(b"remarks:\n");
    while big.len() < 17 * 1024 * 1024 {
        big.extend(b"  - padding padding padding padding padding padding padding\n");
    }
    check("big.yaml", &big, "review files are limited to 16 MiB");
    // an evidence file whose hash is not the cited one
    std::fs::write(dir.path().join("ev.json"), "{}").unwrap();
    check(
        "ev.yaml",
        format!(
            "{}evidence:\n  - file: ev.json\n    sha256: {}\n",
            review_text(&hash, "  - id: RG3-W01\n    verdict: accepted\n"),
            "0".repeat(64)
        )
        .as_bytes(),
        "evidence[0].sha256: the file `ev.json` has SHA-256",
    );
    // a device and a missing file
    let (code, _, err) = run(&[os("assess"), p.as_os_str(), os("--review"), os("/dev/zero")]);
    assert_eq!(code, 2);
    assert!(err.contains("not a regular file"), "{err}");
    let (code, _, _) = run(&[
        os("assess"),
        p.as_os_str(),
        os("--review"),
        dir.path().join("none.yaml").as_os_str(),
    ]);
    assert_eq!(code, 2);
}

#[test]
fn demo_review_validates_against_its_json_schema() {
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("schemas/review.schema.json")).unwrap(),
    )
    .unwrap();
    let v = jsonschema::validator_for(&schema).unwrap();
    let yaml: serde_yaml::Value =
        serde_yaml::from_str(&std::fs::read_to_string(demo_review()).unwrap()).unwrap();
    let doc = serde_json::to_value(yaml).unwrap();
    let errors: Vec<String> = v.iter_errors(&doc).map(|e| e.to_string()).collect();
    assert!(errors.is_empty(), "{errors:?}");
    // and the schema refuses what the reader refuses: an unknown key, a query without remarks
    let mut bad = doc.clone();
    bad["details"][0]["verdit"] = serde_json::json!("query");
    assert!(!v.is_valid(&bad));
    let mut bad = doc.clone();
    bad["details"][4] = serde_json::json!({"id": "RG3-B02", "verdict": "query"});
    assert!(!v.is_valid(&bad));
    // the demo review is current: written against the demo project as it is
    let text = std::fs::read_to_string(demo_review()).unwrap();
    assert!(text.contains(&format!("project_sha256: {}", sha256_of(&demo()))));
}

#[test]
fn package_from_a_results_model_attaches_inputs_found_beside_it() {
    let dir = tempfile::tempdir().unwrap();
    let p = project_copy(dir.path());
    let json = dir.path().join("r.json");
    let o = seamlife()
        .args(["assess", "--json", "-o"])
        .arg(&json)
        .arg(&p)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let beside = dir.path().join("beside.pdf");
    let (code, _, err) = render(&json, &beside, &[]);
    assert_eq!(code, 1, "{err}");
    let (code, stdout, _) = run(&[os("verify"), beside.as_os_str()]);
    assert_eq!(code, 0, "{stdout}");
    // the model alone: the record is named by hash only, and verify asks for the project
    let alone = tempfile::tempdir().unwrap();
    let json2 = alone.path().join("r.json");
    std::fs::copy(&json, &json2).unwrap();
    let pdf2 = alone.path().join("alone.pdf");
    let (code, _, err) = render(&json2, &pdf2, &[]);
    assert_eq!(code, 1, "{err}");
    let (code, _, err) = run(&[os("verify"), pdf2.as_os_str()]);
    assert_eq!(code, 2);
    assert!(
        err.contains("names 1 input file(s) by hash only")
            && err.contains("records/rg3-sg4-record.csv"),
        "{err}"
    );
    // with the project given, the attached model is checked against it
    let (code, stdout, err) = run(&[os("verify"), pdf2.as_os_str(), p.as_os_str()]);
    assert_eq!(code, 0, "{stdout}{err}");
}

#[test]
fn a_diff_model_is_cited_as_evidence() {
    let dir = tempfile::tempdir().unwrap();
    let p = project_copy(dir.path());
    let hash = sha256_of(&p);
    // the diff of the demo's revision A against revision B, as the checker ran it
    let diff = dir.path().join("ab.diff.json");
    let (code, _, err) = run(&[
        os("diff"),
        root()
            .join("projects/kestrel-bay-runway-rev-a.yaml")
            .as_os_str(),
        p.as_os_str(),
        os("--json"),
        os("-o"),
        diff.as_os_str(),
    ]);
    // exit 1: RG3-B01, added in revision B, fails
    assert_eq!(code, 1, "{err}");
    let rv = dir.path().join("rv.yaml");
    std::fs::write(
        &rv,
        format!(
            "{}evidence:\n  - file: ab.diff.json\n    sha256: {}\n    note: revision A against B\n",
            review_text(&hash, "  - id: RG3-W01\n    verdict: accepted\n"),
            sha256_of(&diff)
        ),
    )
    .unwrap();
    let (code, stdout, err) = run(&[os("assess"), p.as_os_str(), os("--review"), rv.as_os_str()]);
    assert_eq!(code, 1, "{err}");
    // the counts of the demo's revisions (README "Comparing revisions"): 2 added, 1 changed, 6 unchanged
    assert!(
        stdout.contains("kestrel-bay-runway-rev-a.yaml (rev A) compared with"),
        "{stdout}"
    );
    assert!(
        stdout
            .contains("2 added, 0 removed, 1 changed, 6 unchanged details — status worse: RG3-B01"),
        "{stdout}"
    );
    // a JSON file that is neither report is refused with its place
    std::fs::write(dir.path().join("other.json"), "{\"a\": 1}").unwrap();
    std::fs::write(
        &rv,
        format!(
            "{}evidence:\n  - file: other.json\n    sha256: {}\n",
            review_text(&hash, "  - id: RG3-W01\n    verdict: accepted\n"),
            sha256_of(&dir.path().join("other.json"))
        ),
    )
    .unwrap();
    let (code, _, err) = run(&[os("assess"), p.as_os_str(), os("--review"), rv.as_os_str()]);
    assert_eq!(code, 2);
    assert!(
        err.contains(
            "neither a `seamlife verify --json` report nor a `seamlife diff --json` model"
        ),
        "{err}"
    );
}
