//! Outputs never replace an input, a folder or a device; the PDF appears only when
//! typst really wrote one; typst is bounded in time and stopped on a signal; the
//! kept source never wipes a folder seamlife did not write. A fake typst (a shell
//! script that answers `--version` with 0.15.1) stands in for the misbehaving cases.

mod safety_common;

use safety_common::*;
use std::time::{Duration, Instant};

/// A folder with a passing project `p.yaml` and a copy of the demo record `rec.csv`.
fn workdir() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "p.yaml", &passing_project());
    std::fs::copy(record(), dir.path().join("rec.csv")).unwrap();
    dir
}

fn run_strs(dir: &std::path::Path, args: &[String]) -> (i32, String, String) {
    let a: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    run_in(dir, &a)
}

#[test]
fn an_output_never_overwrites_an_input() {
    let dir = workdir();
    let d = dir.path();
    let project = std::fs::read(d.join("p.yaml")).unwrap();
    let record_bytes = std::fs::read(d.join("rec.csv")).unwrap();
    let fake = fake_typst(d, "typst", &writes_pdf());
    let fake = fake.to_str().unwrap();
    for args in [
        vec!["assess", "p.yaml", "-o", "p.yaml"],
        vec!["assess", "p.yaml", "--json", "-o", "./p.yaml"],
        vec!["report", "p.yaml", "-o", "p.yaml", "--typst", fake],
    ] {
        let (code, _, err) = run_in(d, &args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(
            err.contains("is the project file")
                && err.contains("never writes an output over one of its inputs"),
            "{args:?}: {err}"
        );
    }
    // the same file by another name (a hard link) is still the input
    std::fs::hard_link(d.join("p.yaml"), d.join("alias.yaml")).unwrap();
    let (code, _, err) = run_in(d, &["assess", "p.yaml", "-o", "alias.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("alias.yaml: is the project file"), "{err}");
    for extra in [
        vec!["-o", "rec.csv"],
        vec!["--svg", "rec.csv"],
        vec!["--matrix-svg", "./rec.csv"],
    ] {
        let (code, _, err) = run_strs(d, &count_args(&extra));
        assert_eq!(code, 2, "{extra:?}: {err}");
        assert!(err.contains("is the series file being counted"), "{err}");
    }
    // two outputs of one name
    let (code, _, err) = run_strs(d, &count_args(&["--svg", "x.svg", "--matrix-svg", "x.svg"]));
    assert_eq!(code, 2);
    assert!(err.contains("named for two outputs"), "{err}");
    // a series file of the project is an input too
    let sp = series_project(
        "            file: rec.csv\n            column: sg4_microstrain\n            unit: microstrain\n            modulus_mpa: 210000\n",
        "          per_year: 2000\n",
    );
    write(d, "s.yaml", &sp);
    let (code, _, err) = run_in(d, &["assess", "s.yaml", "--csv", "-o", "rec.csv"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("is a series file of the project"), "{err}");
    // nothing was touched
    assert_eq!(std::fs::read(d.join("p.yaml")).unwrap(), project);
    assert_eq!(std::fs::read(d.join("rec.csv")).unwrap(), record_bytes);
    assert!(!d.join("x.svg").exists());
    assert!(
        names(d).iter().all(|n| !n.ends_with(".part")),
        "{:?}",
        names(d)
    );
}

#[test]
fn a_folder_is_never_an_output() {
    let dir = workdir();
    let d = dir.path();
    std::fs::create_dir(d.join("out")).unwrap();
    for target in [".", "out", "out/", "missing-folder/"] {
        let (code, _, err) = run_in(d, &["assess", "p.yaml", "--json", "-o", target]);
        assert_eq!(code, 2, "{target}: {err}");
        assert!(err.contains("folder"), "{target}: {err}");
    }
    assert!(d.join("out").is_dir());
    assert_eq!(names(&d.join("out")).len(), 0);
    // `new` onto an existing file, and onto a folder holding a project
    let (code, _, err) = run_in(d, &["new", "p.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("p.yaml: exists and is not a folder"), "{err}");
    let (code, _, _) = run_in(d, &["new", "fresh"]);
    assert_eq!(code, 0);
    let before = std::fs::read(d.join("fresh/project.yaml")).unwrap();
    let (code, _, err) = run_in(d, &["new", "fresh"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("already exists; seamlife new will not overwrite it"),
        "{err}"
    );
    assert_eq!(std::fs::read(d.join("fresh/project.yaml")).unwrap(), before);
}

#[test]
fn a_character_device_is_written_directly_never_replaced() {
    let dir = workdir();
    let d = dir.path();
    let (code, _, err) = run_in(d, &["assess", "p.yaml", "--json", "-o", "/dev/null"]);
    assert_eq!(code, 0, "{err}");
    use std::os::unix::fs::FileTypeExt;
    assert!(std::fs::metadata("/dev/null")
        .unwrap()
        .file_type()
        .is_char_device());
    // a device that cannot take the data is a write error, and nothing is left over
    let (code, _, err) = run_in(d, &["assess", "p.yaml", "--json", "-o", "/dev/full"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("cannot write /dev/full"), "{err}");
    assert!(std::fs::metadata("/dev/full")
        .unwrap()
        .file_type()
        .is_char_device());
    // the counted spectrum to /dev/stdout goes to standard output
    let (code, out, err) = run_strs(d, &count_args(&["-o", "/dev/stdout"]));
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with("range_mpa,mean_mpa,cycles"), "{out}");
    assert_no_temporaries(d);
}

#[test]
fn a_named_pipe_nobody_reads_fails_at_once() {
    let dir = workdir();
    let d = dir.path();
    mkfifo(&d.join("fifo.json"));
    let t = Instant::now();
    let (code, _, err) = run_in(d, &["assess", "p.yaml", "--json", "-o", "fifo.json"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("cannot write fifo.json"), "{err}");
    assert!(t.elapsed() < Duration::from_secs(20));
}

#[test]
fn typst_that_writes_nothing_or_garbage_leaves_the_old_pdf() {
    let dir = workdir();
    let d = dir.path();
    std::fs::write(d.join("o.pdf"), "old package").unwrap();
    for (name, body, what) in [
        ("nothing", "exit 0", "wrote nothing"),
        ("garbage", "echo 'not a pdf at all' > \"$out\"", "not a PDF"),
    ] {
        let fake = fake_typst(d, name, body);
        let (code, _, err) = report_with(d, &fake, &[]);
        // the built-in templates: a fault of seamlife, exit 3
        assert_eq!(code, 3, "{name}: {err}");
        assert!(
            err.contains("typst reported success but") && err.contains(what),
            "{err}"
        );
        assert_eq!(
            std::fs::read_to_string(d.join("o.pdf")).unwrap(),
            "old package"
        );
        // with a user's templates folder the same failure is bad input, exit 2
        std::fs::create_dir_all(d.join("tpl")).unwrap();
        let (code, _, err) = report_with(d, &fake, &["--templates", "tpl"]);
        assert_eq!(code, 2, "{name}: {err}");
        assert_eq!(
            std::fs::read_to_string(d.join("o.pdf")).unwrap(),
            "old package"
        );
    }
    assert_no_temporaries(d);
}

#[test]
fn typst_failing_on_the_built_in_templates_is_exit_3() {
    let dir = workdir();
    let d = dir.path();
    let fake = fake_typst(d, "fails", "echo 'error: unexpected failure' >&2; exit 1");
    let (code, _, err) = report_with(d, &fake, &[]);
    assert_eq!(code, 3, "{err}");
    assert!(
        err.contains("typst could not compile") && err.contains("unexpected failure"),
        "{err}"
    );
    assert!(err.contains("fault in seamlife"), "{err}");
    assert!(!d.join("o.pdf").exists());
}

#[test]
fn a_good_pdf_is_placed_with_ordinary_permissions() {
    let dir = workdir();
    let d = dir.path();
    let fake = fake_typst(d, "ok", &writes_pdf());
    let (code, out, err) = run_umask(
        d,
        "022",
        &[
            "report",
            "p.yaml",
            "-o",
            "o.pdf",
            "--typst",
            fake.to_str().unwrap(),
        ],
    );
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("wrote o.pdf"), "{out}");
    assert_eq!(std::fs::read_to_string(d.join("o.pdf")).unwrap(), FAKE_PDF);
    assert_eq!(mode(&d.join("o.pdf")), 0o644);
}

#[test]
fn no_pdf_is_left_when_the_status_line_cannot_be_printed() {
    let dir = workdir();
    let d = dir.path();
    let fake = fake_typst(d, "ok", &writes_pdf());
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .unwrap();
    let (code, _, err) = run(cmd(&["report", "p.yaml", "-o", "o.pdf", "--typst"])
        .arg(&fake)
        .current_dir(d)
        .stdout(std::process::Stdio::from(full)));
    assert_eq!(code, 3, "{err}");
    assert!(!d.join("o.pdf").exists());
    assert_no_temporaries(d);
}

#[test]
fn typst_that_never_ends_is_stopped_at_the_timeout() {
    let dir = workdir();
    let d = dir.path();
    let tmp = d.join("tmp");
    std::fs::create_dir(&tmp).unwrap();
    let fake = fake_typst(d, "sleeper", "exec sleep 600");
    let t = Instant::now();
    let (code, _, err) = run(cmd(&[
        "report",
        "p.yaml",
        "-o",
        "o.pdf",
        "--typst-timeout",
        "2",
        "--typst",
    ])
    .arg(&fake)
    .env("TMPDIR", &tmp)
    .current_dir(d));
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("did not finish within 2 s"), "{err}");
    assert!(err.contains("--typst-timeout"), "{err}");
    assert!(t.elapsed() < Duration::from_secs(60));
    assert!(!d.join("o.pdf").exists());
    assert_no_temporaries(d);
    // the build folder is gone
    assert_eq!(names(&tmp), Vec::<String>::new());
    // a zero or absurd timeout is refused by the argument parser
    let (code, _, _) = run_in(d, &["report", "p.yaml", "--typst-timeout", "0"]);
    assert_eq!(code, 2);
}

#[test]
fn sigterm_during_typesetting_stops_typst_and_removes_temporaries() {
    // 128 + 15 (SIGTERM), as a shell reports a run ended by the signal
    interrupt_during_typesetting("-TERM", 143, "SIGTERM");
}

#[test]
fn sigint_during_typesetting_stops_typst_and_removes_temporaries() {
    // 128 + 2 (SIGINT)
    interrupt_during_typesetting("-INT", 130, "SIGINT");
}

fn interrupt_during_typesetting(flag: &str, want: i32, name: &str) {
    let dir = workdir();
    let d = dir.path();
    let tmp = d.join("tmp");
    std::fs::create_dir(&tmp).unwrap();
    // The fake typst records its pid, then waits; it must not outlive seamlife.
    let pidfile = d.join("typst.pid");
    let fake = fake_typst(
        d,
        "sleeper",
        &format!("echo $$ > '{}'; exec sleep 600", pidfile.display()),
    );
    std::fs::write(d.join("o.pdf"), "old package").unwrap();
    let child = cmd(&[
        "report",
        "p.yaml",
        "-o",
        "o.pdf",
        "--keep-source",
        "--typst",
    ])
    .arg(&fake)
    .env("TMPDIR", &tmp)
    .current_dir(d)
    .stdout(std::process::Stdio::piped())
    .stderr(std::process::Stdio::piped())
    .spawn()
    .unwrap();
    let start = Instant::now();
    while !pidfile.exists() && start.elapsed() < Duration::from_secs(60) {
        std::thread::sleep(Duration::from_millis(50));
    }
    assert!(pidfile.exists(), "typst never started");
    let typst_pid: i32 = std::fs::read_to_string(&pidfile)
        .unwrap()
        .trim()
        .parse()
        .unwrap();
    let st = std::process::Command::new("kill")
        .arg(flag)
        .arg(child.id().to_string())
        .status()
        .unwrap();
    assert!(st.success());
    let out = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(want), "{err}");
    assert!(err.contains(&format!("interrupted by {name}")), "{err}");
    // typst is gone
    let alive = std::path::Path::new(&format!("/proc/{typst_pid}")).exists()
        && !std::fs::read_to_string(format!("/proc/{typst_pid}/stat"))
            .unwrap_or_default()
            .contains(") Z ");
    assert!(!alive, "typst {typst_pid} still runs");
    // the old PDF is untouched; no partial file, no build folder, no kept source
    assert_eq!(
        std::fs::read_to_string(d.join("o.pdf")).unwrap(),
        "old package"
    );
    assert_no_temporaries(d);
    assert!(!d.join("o-typst").exists());
    assert_eq!(names(&tmp), Vec::<String>::new());
}

#[test]
fn keep_source_never_wipes_a_folder_seamlife_did_not_write() {
    let dir = workdir();
    let d = dir.path();
    let fake = fake_typst(d, "ok", &writes_pdf());
    let fake = fake.to_str().unwrap();
    std::fs::create_dir(d.join("o-typst")).unwrap();
    std::fs::write(d.join("o-typst/notes.txt"), "my own notes").unwrap();
    let (code, _, err) = run_in(
        d,
        &[
            "report",
            "p.yaml",
            "-o",
            "o.pdf",
            "--keep-source",
            "--typst",
            fake,
        ],
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("o-typst: exists and was not written by seamlife"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(d.join("o-typst/notes.txt")).unwrap(),
        "my own notes"
    );
    assert!(!d.join("o.pdf").exists());
    // A folder of its own is replaced whole.
    let own = [
        "report",
        "p.yaml",
        "-o",
        "k.pdf",
        "--keep-source",
        "--typst",
        fake,
    ];
    let (code, _, err) = run_in(d, &own);
    assert_eq!(code, 0, "{err}");
    let keep = d.join("k-typst");
    assert!(keep.join("main.typ").is_file() && keep.join(".seamlife-source").is_file());
    std::fs::write(keep.join("stale.txt"), "from before").unwrap();
    let (code, _, err) = run_umask(d, "022", &own);
    assert_eq!(code, 0, "{err}");
    assert!(keep.join("main.typ").is_file());
    assert!(!keep.join("stale.txt").exists());
    // an ordinary folder (0777 less the umask), not the temporary folder's 0700
    assert_eq!(mode(&keep), 0o755);
    assert_no_temporaries(d);
}

#[test]
fn a_kept_source_is_written_when_typst_fails_and_no_pdf() {
    let dir = workdir();
    let d = dir.path();
    let fake = fake_typst(d, "fails", "echo 'error: boom' >&2; exit 1");
    let (code, _, err) = report_with(d, &fake, &["--keep-source"]);
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("the generated Typst is in"), "{err}");
    assert!(d.join("o-typst/main.typ").is_file());
    assert!(!d.join("o.pdf").exists());
}
