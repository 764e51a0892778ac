//! Standard output that cannot be written, panics, terminal escapes and the
//! permissions of written files.

mod safety_common;

use safety_common::*;
use std::process::Stdio;

/// The commands whose main output goes to standard output.
fn stdout_commands() -> Vec<Vec<String>> {
    let demo = demo().display().to_string();
    let rec = record().display().to_string();
    vec![
        vec!["assess".into(), demo.clone()],
        vec!["assess".into(), demo.clone(), "--json".into()],
        vec!["assess".into(), demo, "--csv".into()],
        vec!["classes".into()],
        vec!["classes".into(), "en1993-1-9".into()],
        count_args(&[])
            .into_iter()
            .map(|a| if a == "rec.csv" { rec.clone() } else { a })
            .collect(),
    ]
}

#[test]
fn closed_pipe_on_stdout_is_a_clean_error_exit_3() {
    for args in stdout_commands() {
        let args: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
        // A pipe whose reading end is closed before the program starts: every write
        // fails with EPIPE (Rust ignores SIGPIPE, so the error reaches the program).
        let (reader, writer) = std::io::pipe().unwrap();
        drop(reader);
        let (code, _, err) = run(cmd(&args).stdout(Stdio::from(writer)));
        assert_eq!(code, 3, "{args:?}: {err}");
        assert!(
            err.contains("error: cannot write to standard output") && err.contains("Broken pipe"),
            "{args:?}: {err}"
        );
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert!(!err.contains("stack backtrace"), "{args:?}: {err}");
    }
}

#[test]
fn full_disk_on_stdout_is_a_clean_error_exit_3() {
    for args in stdout_commands() {
        let args: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let (code, _, err) = run(cmd(&args).stdout(Stdio::from(full)));
        assert_eq!(code, 3, "{args:?}: {err}");
        assert!(
            err.contains("cannot write to standard output")
                && err.contains("No space left on device"),
            "{args:?}: {err}"
        );
        assert!(err.contains("hint: "), "{err}");
        assert!(!err.contains("panicked"), "{args:?}: {err}");
    }
}

#[test]
fn help_to_a_full_disk_is_an_error_too() {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .unwrap();
    let (code, _, err) = run(cmd(&["--help"]).stdout(Stdio::from(full)));
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("cannot write to standard output"), "{err}");
}

#[test]
fn a_panic_becomes_internal_error_exit_3() {
    let code = seamlife::cli::run_guarded(|| panic!("invariant broken in a test"));
    assert_eq!(code, seamlife::error::EXIT_INTERNAL);
    assert_eq!(seamlife::error::EXIT_INTERNAL, 3);
    // and a run that does not panic keeps its code
    assert_eq!(seamlife::cli::run_guarded(|| 1), 1);
}

#[test]
fn control_characters_in_user_text_never_reach_the_terminal_raw() {
    let dir = tempfile::tempdir().unwrap();
    // ESC (a colour and an OSC title sequence), a C1 CSI and a bidi override.
    let text = passing_project()
        .replace(
            "location: here",
            "location: \"red\\e[31m \\e]0;pwned\\a C1\\x9b2J bidi\\u202e!\"",
        )
        .replace("id: D1", "id: \"D\\e[1m1\"");
    let p = write(dir.path(), "ctl.yaml", &text);
    let (code, out, err) = run(cmd(&["assess"]).arg(&p));
    assert_eq!(code, 0, "{err}");
    for bad in ['\u{1b}', '\u{7}', '\u{9b}', '\u{202e}'] {
        assert!(!out.contains(bad), "raw {bad:?} in the table:\n{out}");
    }
    assert!(out.contains("red\\u{1b}[31m"), "{out}");
    assert!(out.contains("D\\u{1b}[1m1"), "{out}");
    // The JSON keeps the data but escapes every steering character.
    let (_, json, _) = run(cmd(&["assess", "--json"]).arg(&p));
    assert!(!json.contains('\u{1b}') && !json.contains('\u{9b}') && !json.contains('\u{202e}'));
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert!(v["details"][0]["location"]
        .as_str()
        .unwrap()
        .contains("\u{1b}[31m"));
    // An error message quoting user text escapes it too.
    let bad = text.replace("family: en1993-1-9", "family: \"en\\e[2J\"");
    let p = write(dir.path(), "ctl-bad.yaml", &bad);
    let (code, _, err) = run(cmd(&["assess"]).arg(&p));
    assert_eq!(code, 2);
    assert!(!err.contains('\u{1b}'), "{err}");
    assert!(err.contains("unknown curve family `en\\u{1b}[2J`"), "{err}");
    // lint output on a path holding an escape character
    let odd = dir.path().join("odd\u{1b}[7m.yaml");
    std::fs::write(&odd, passing_project()).unwrap();
    let (code, out, err) = run(cmd(&["lint"]).arg(&odd));
    assert_eq!(code, 0, "{err}");
    assert!(
        !out.contains('\u{1b}') && out.contains("odd\\u{1b}[7m.yaml"),
        "{out}"
    );
}

#[test]
fn extreme_numbers_print_short_in_messages() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "big.yaml",
        &project_with("{range_mpa: 40, cycles: 1}", "10000", "25")
            .replace("thickness_mm: 20", "thickness_mm: 1.7e308"),
    );
    let (code, _, err) = run(cmd(&["assess"]).arg(&p));
    assert_eq!(code, 2);
    assert!(err.contains("thickness_mm is 1.700e308"), "{err}");
    // no run of digits of the full 309-digit expansion
    assert!(!err.contains("0000000000"), "{err}");
    assert!(err.lines().all(|l| l.chars().count() < 400), "{err}");
}

#[test]
fn written_files_get_ordinary_permissions_under_the_umask() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "p.yaml", &passing_project());
    std::fs::copy(record(), dir.path().join("rec.csv")).unwrap();
    for (mask, want) in [("022", 0o644), ("027", 0o640), ("077", 0o600)] {
        for f in ["r.json", "s.csv", "h.svg"] {
            let _ = std::fs::remove_file(dir.path().join(f));
        }
        let (code, _, err) = run_umask(
            dir.path(),
            mask,
            &["assess", "p.yaml", "--json", "-o", "r.json"],
        );
        assert_eq!(code, 0, "{err}");
        // 0666 less the umask, as for any new file (not tempfile's 0600)
        assert_eq!(mode(&dir.path().join("r.json")), want, "umask {mask}");
        let args = count_args(&["-o", "s.csv", "--svg", "h.svg"]);
        let args: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
        let (code, _, err) = run_umask(dir.path(), mask, &args);
        assert_eq!(code, 0, "{err}");
        assert_eq!(mode(&dir.path().join("s.csv")), want, "umask {mask}");
        assert_eq!(mode(&dir.path().join("h.svg")), want, "umask {mask}");
    }
    // A file written over keeps its own permissions.
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(
        dir.path().join("r.json"),
        std::fs::Permissions::from_mode(0o664),
    )
    .unwrap();
    let (code, _, _) = run_umask(
        dir.path(),
        "022",
        &["assess", "p.yaml", "--json", "-o", "r.json"],
    );
    assert_eq!(code, 0);
    assert_eq!(mode(&dir.path().join("r.json")), 0o664);
    // the starter project of `new`
    let (code, _, err) = run_umask(dir.path(), "022", &["new", "fresh"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(mode(&dir.path().join("fresh/project.yaml")), 0o644);
    // no temporary file left anywhere
    assert_no_temporaries(dir.path());
}

#[test]
fn figures_of_overflowed_results_are_drawn_in_bounded_time() {
    // The input check refuses such values; this checks the second line of defence:
    // the figure code itself ends on results whose numbers overflowed.
    let library = seamlife::catalogue::Library::load(None).unwrap();
    let mut r = seamlife::run_project(&demo(), &library).unwrap();
    let years = r.basis.design_life_years;
    let t = std::time::Instant::now();
    for d in &mut r.details {
        d.utilisation = 1.7e308;
        for c in &mut d.components {
            for b in &mut c.blocks {
                b.range_mpa = 1.7e308;
                b.effective_range_mpa = 1.7e308;
                b.design_range_mpa = 1.7e308;
                b.cycles_design_life = 1e308;
            }
            c.equivalent_range_mpa = 1.7e308;
            c.design_equivalent_range_mpa = 1.7e308;
            c.max_range_mpa = 1.7e308;
            let svg = seamlife::report::plots::sn_diagram(c, years);
            assert!(svg.starts_with("<svg"), "{}", &svg[..svg.len().min(80)]);
            // no axis grew into millions of ticks
            assert!(svg.len() < 2_000_000, "{} bytes", svg.len());
            for rec in &c.counted {
                let h = seamlife::report::plots::histogram(rec);
                assert!(h.len() < 2_000_000);
            }
        }
    }
    let u = seamlife::report::plots::utilisation_chart(&r.details);
    assert!(u.len() < 2_000_000);
    assert!(t.elapsed() < std::time::Duration::from_secs(120));
}
