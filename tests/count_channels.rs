//! `seamlife count` over several columns in one pass: the long spectrum CSV holds, per
//! channel, exactly the rows of a one-column run; statistics and figures per channel;
//! bad requests exit with code 2 and write nothing.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

fn record() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/records/rg3-sg4-record.csv")
}

/// A three-channel record made of the demo record's values (column 2 as written, its
/// negative, and half of it); invented numbers for the test.
fn three(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(record()).unwrap();
    let mut out = String::from("t_s,left,right,mid\n");
    for (i, l) in text.lines().skip(1).enumerate() {
        let v: f64 = l.split(',').nth(1).unwrap().trim().parse().unwrap();
        out.push_str(&format!("{i},{v},{},{}\n", -v, 0.5 * v));
    }
    let p = dir.join("three.csv");
    std::fs::write(&p, out).unwrap();
    p
}

fn count(args: &[&str]) -> (i32, String, String) {
    let o = seamlife().arg("count").args(args).output().unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn columns_in_one_pass_equal_one_run_per_column() {
    let dir = tempfile::tempdir().unwrap();
    let f = three(dir.path());
    let f = f.to_str().unwrap();
    let long = dir.path().join("long.csv");
    let stats = dir.path().join("stats.csv");
    let svg = dir.path().join("h-{channel}.svg");
    let (code, _, err) = count(&[
        f,
        "--columns",
        "mid,left",
        "--gate-mpa",
        "1",
        "-o",
        long.to_str().unwrap(),
        "--stats",
        stats.to_str().unwrap(),
        "--svg",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let long = std::fs::read_to_string(&long).unwrap();
    assert!(
        long.starts_with("channel,range_mpa,mean_mpa,cycles,"),
        "{long}"
    );
    for name in ["mid", "left"] {
        let (code, one, err) = count(&[f, "--column", name, "--gate-mpa", "1"]);
        assert_eq!(code, 0, "{err}");
        let mine: Vec<String> = long
            .lines()
            .filter_map(|l| l.strip_prefix(&format!("{name},")).map(str::to_string))
            .collect();
        let theirs: Vec<String> = one.lines().skip(1).map(str::to_string).collect();
        assert!(!theirs.is_empty());
        assert_eq!(mine, theirs, "{name}");
        assert!(dir.path().join(format!("h-{name}.svg")).is_file());
    }
    assert!(!dir.path().join("h-right.svg").exists());
    let stats = std::fs::read_to_string(&stats).unwrap();
    let rows: Vec<&str> = stats.lines().collect();
    assert_eq!(rows.len(), 3, "{stats}");
    assert!(rows[0].starts_with("channel,samples,reversals,full_cycles"));
    assert!(rows[1].starts_with("mid,") && rows[2].starts_with("left,"));
}

#[test]
fn all_columns_counts_every_column() {
    let dir = tempfile::tempdir().unwrap();
    let f = three(dir.path());
    let (code, out, err) = count(&[f.to_str().unwrap(), "--all-columns"]);
    assert_eq!(code, 0, "{err}");
    for name in ["t_s", "left", "right", "mid"] {
        assert!(
            out.lines().any(|l| l.starts_with(&format!("{name},"))),
            "{name}"
        );
        assert!(err.contains(&format!("[{name}]")), "{err}");
    }
    // the mirrored channel has the same ranges as the original (rainflow ranges are
    // unchanged by a sign change, ASTM E1049-85 definition of range)
    let cycles = |n: &str| -> f64 {
        out.lines()
            .filter(|l| l.starts_with(&format!("{n},")))
            .map(|l| l.split(',').nth(3).unwrap().parse::<f64>().unwrap())
            .sum()
    };
    assert_eq!(cycles("left"), cycles("right"));
}

#[test]
fn bad_channel_requests_exit_2_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = three(dir.path());
    let f = f.to_str().unwrap();
    let o = dir.path().join("o.csv");
    let o = o.to_str().unwrap();
    let plain = dir.path().join("h.svg");
    for (args, want) in [
        (
            vec!["--columns", "left,right", "--svg", plain.to_str().unwrap()],
            "{channel}",
        ),
        (vec!["--columns", "left,nope"], "no column named 'nope'"),
        (vec!["--columns", "left,2"], "chosen twice"),
        (vec!["--columns", "left,0"], "start at 1"),
    ] {
        let mut a = vec![f, "-o", o];
        a.extend(args.iter().copied());
        let (code, _, err) = count(&a);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(err.contains(want), "{args:?}: {err}");
        assert!(!Path::new(o).exists() && !plain.exists());
    }
    // --column and --columns together are refused by the argument parser
    let (code, _, _) = count(&[f, "--column", "left", "--columns", "right"]);
    assert_eq!(code, 2);
}
