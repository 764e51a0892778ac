//! Spectrum parts (`count --spectrum-out`, `merge`): a record counted file by file and
//! merged equals the count of the whole file; separate records equal the sum of their
//! own counts; channels merge one by one; gated parts join never; and every bad part
//! is refused with exit code 2, a located message and a hint, writing nothing.
//!
//! The check values are the counts of the same program on the whole record (itself
//! held to PyPI rainflow 3.2.0 in tests/rainflow_reference.rs): cycles per bin, bin
//! edges, largest ranges, samples, reversals, full and half cycles and extremes must
//! be equal exactly; the cycle-weighted means and the sample mean and standard
//! deviation are sums taken in another order, so they agree to 1e-9 relative
//! (common practice for floating-point sums).

mod safety_common;

use safety_common::{cmd, record, run};
use std::path::{Path, PathBuf};

fn seamlife(args: &[&str]) -> (i32, String, String) {
    run(&mut cmd(args))
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// Samples of small integer levels (many plateaus and ties, so that seams fall on
/// plateaus and turning points); invented numbers for the test.
fn lcg(n: usize, seed: u64, levels: u64) -> Vec<f64> {
    let mut x = seed;
    (0..n)
        .map(|_| {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((x >> 33) % levels) as f64 * 3.0 - 20.0
        })
        .collect()
}

/// A CSV file of one or more columns `names` with the rows `rows`.
fn write_csv(path: &Path, names: &[&str], rows: &[Vec<f64>]) {
    let mut t = names.join(",");
    t.push('\n');
    for r in rows {
        let cells: Vec<String> = r.iter().map(|v| v.to_string()).collect();
        t.push_str(&cells.join(","));
        t.push('\n');
    }
    std::fs::write(path, t).unwrap();
}

/// The rows of the demo record (column 2, µε).
fn demo_rows() -> Vec<Vec<f64>> {
    std::fs::read_to_string(record())
        .unwrap()
        .lines()
        .skip(1)
        .map(|l| vec![l.split(',').nth(1).unwrap().trim().parse().unwrap()])
        .collect()
}

/// `rows` cut at `cuts` into files `stem-K.csv` (K from 1) in `dir`.
fn split(
    dir: &Path,
    stem: &str,
    names: &[&str],
    rows: &[Vec<f64>],
    cuts: &[usize],
) -> Vec<PathBuf> {
    let mut bounds = vec![0];
    bounds.extend_from_slice(cuts);
    bounds.push(rows.len());
    bounds
        .windows(2)
        .enumerate()
        .map(|(k, w)| {
            let p = dir.join(format!("{stem}-{}.csv", k + 1));
            write_csv(&p, names, &rows[w[0]..w[1]]);
            p
        })
        .collect()
}

/// Count each file as a part (with its sequence number) and return the part paths.
fn parts(files: &[PathBuf], opts: &[&str]) -> Vec<PathBuf> {
    files
        .iter()
        .enumerate()
        .map(|(k, f)| {
            // one part name per set of options, so that sets do not overwrite each other
            let tag: String = opts
                .concat()
                .chars()
                .filter(|c| c.is_ascii_alphanumeric())
                .collect();
            let p = f.with_extension(format!("{tag}.part.json"));
            let seq = (k + 1).to_string();
            let mut args = vec!["count", s(f), "--spectrum-out", s(&p), "--sequence", &seq];
            args.extend_from_slice(opts);
            let (code, out, err) = seamlife(&args);
            assert_eq!(code, 0, "{err}");
            assert!(
                out.is_empty(),
                "no CSV on standard output with --spectrum-out: {out}"
            );
            p
        })
        .collect()
}

fn read(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap()
}

/// Spectrum CSVs equal: every cell except `mean_mpa` as text, means to 1e-9.
fn assert_same_spectrum(a: &str, b: &str) {
    let (la, lb): (Vec<&str>, Vec<&str>) = (a.lines().collect(), b.lines().collect());
    assert_eq!(la.len(), lb.len(), "rows differ:\n{a}\n---\n{b}");
    assert!(la.len() > 2, "a spectrum with cycles: {a}");
    let head: Vec<&str> = la[0].split(',').collect();
    assert_eq!(la[0], lb[0]);
    let mean_col = head.iter().position(|h| *h == "mean_mpa").unwrap();
    for (x, y) in la[1..].iter().zip(&lb[1..]) {
        for (i, (u, v)) in x.split(',').zip(y.split(',')).enumerate() {
            if i == mean_col {
                let (u, v): (f64, f64) = (u.parse().unwrap(), v.parse().unwrap());
                assert!((u - v).abs() <= 1e-9 * u.abs().max(1.0), "{x} vs {y}");
            } else {
                assert_eq!(u, v, "{x} vs {y}");
            }
        }
    }
}

/// Statistics CSVs equal: mean and standard deviation to 1e-9, the rest as text.
fn assert_same_stats(a: &str, b: &str) {
    let (la, lb): (Vec<&str>, Vec<&str>) = (a.lines().collect(), b.lines().collect());
    assert_eq!(la.len(), lb.len());
    assert_eq!(la[0], lb[0]);
    let head: Vec<&str> = la[0].split(',').collect();
    for (x, y) in la[1..].iter().zip(&lb[1..]) {
        for ((h, u), v) in head.iter().zip(x.split(',')).zip(y.split(',')) {
            if *h == "mean_mpa" || *h == "std_dev_mpa" {
                let (u, v): (f64, f64) = (u.parse().unwrap(), v.parse().unwrap());
                assert!((u - v).abs() <= 1e-9 * u.abs().max(1.0), "{h}: {x} vs {y}");
            } else if *h != "channel" {
                assert_eq!(u, v, "{h}: {x} vs {y}");
            }
        }
    }
}

/// The whole file counted once: (spectrum CSV, statistics CSV).
fn whole(dir: &Path, file: &Path, opts: &[&str]) -> (String, String) {
    let (o, st) = (dir.join("whole.csv"), dir.join("whole-stats.csv"));
    let mut args = vec!["count", s(file), "-o", s(&o), "--stats", s(&st)];
    args.extend_from_slice(opts);
    let (code, _, err) = seamlife(&args);
    assert_eq!(code, 0, "{err}");
    (read(&o), read(&st))
}

/// The parts merged: (spectrum CSV, statistics CSV).
fn merged(dir: &Path, parts: &[PathBuf], opts: &[&str]) -> (String, String) {
    let (o, st) = (dir.join("merged.csv"), dir.join("merged-stats.csv"));
    let _ = std::fs::remove_file(&o);
    let mut args = vec!["merge"];
    args.extend(parts.iter().map(|p| s(p)));
    args.extend_from_slice(&["-o", s(&o), "--stats", s(&st)]);
    args.extend_from_slice(opts);
    let (code, _, err) = seamlife(&args);
    assert_eq!(code, 0, "{err}");
    (read(&o), read(&st))
}

fn stat(stats: &str, name: &str) -> String {
    let l: Vec<&str> = stats.lines().collect();
    let i = l[0].split(',').position(|h| h == name).unwrap();
    l[1].split(',').nth(i).unwrap().to_string()
}

#[test]
fn a_record_in_2_and_5_files_merges_into_the_whole_count() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let strain = [
        "--unit",
        "microstrain",
        "--modulus-mpa",
        "210000",
        "--column",
        "1",
    ];
    let rows = demo_rows();
    let file = d.join("whole-record.csv");
    write_csv(&file, &["sg4_microstrain"], &rows);
    for residue in ["repeated", "half-cycles"] {
        let mut opts = strain.to_vec();
        opts.extend_from_slice(&["--residue", residue]);
        let (w, ws) = whole(d, &file, &opts);
        let n = rows.len();
        for cuts in [vec![n / 2], vec![n / 5, 2 * n / 5, 3 * n / 5, 4 * n / 5]] {
            let files = split(
                d,
                &format!("day{}", cuts.len()),
                &["sg4_microstrain"],
                &rows,
                &cuts,
            );
            let p = parts(&files, &opts);
            let (m, ms) = merged(d, &p, &[]);
            assert_same_spectrum(&w, &m);
            assert_same_stats(&ws, &ms);
            // the seams matter: the pieces counted as separate records give other counts
            let (sep, seps) = merged(d, &p, &["--separate"]);
            assert_ne!(
                stat(&ws, "full_cycles"),
                stat(&seps, "full_cycles"),
                "{sep}"
            );
        }
        if residue == "half-cycles" {
            assert_ne!(stat(&ws, "half_cycles"), "0", "the residue as half cycles");
        } else {
            assert_eq!(
                stat(&ws, "half_cycles"),
                "0",
                "a repeated record has full cycles only"
            );
        }
    }
}

#[test]
fn seams_on_plateaus_turning_points_and_constant_pieces_merge_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for seed in 0..4u64 {
        let mut v = lcg(3000, seed, 6);
        // a constant stretch across a seam, and a one-sample piece
        for x in &mut v[1000..1300] {
            *x = 4.0;
        }
        let rows: Vec<Vec<f64>> = v.iter().map(|&x| vec![x]).collect();
        let file = d.join("lcg.csv");
        write_csv(&file, &["s"], &rows);
        let cuts = [1, 2, 1100, 1200, 1299, 1300, 1301, 2999];
        for residue in ["repeated", "half-cycles"] {
            let opts = [
                "--column",
                "s",
                "--bin-width-mpa",
                "0.5",
                "--residue",
                residue,
            ];
            let (w, ws) = whole(d, &file, &opts);
            let files = split(d, "piece", &["s"], &rows, &cuts);
            let p = parts(&files, &opts);
            let (m, ms) = merged(d, &p, &[]);
            assert_same_spectrum(&w, &m);
            assert_same_stats(&ws, &ms);
        }
    }
}

#[test]
fn the_residue_rule_acts_once_at_the_end_and_merge_can_choose_it() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows: Vec<Vec<f64>> = lcg(4000, 9, 9).into_iter().map(|x| vec![x]).collect();
    let file = d.join("r.csv");
    write_csv(&file, &["s"], &rows);
    let files = split(d, "r", &["s"], &rows, &[1000, 2500]);
    // parts counted with the default (repeated), merged as half cycles
    let p = parts(&files, &["--column", "s"]);
    let (w, ws) = whole(d, &file, &["--column", "s", "--residue", "half-cycles"]);
    let (m, ms) = merged(d, &p, &["--residue", "half-cycles"]);
    assert_same_spectrum(&w, &m);
    assert_same_stats(&ws, &ms);
    assert_eq!(stat(&ms, "residue"), "half-cycles");
    // parts of differing rules need the rule given
    let q = d.join("r-3.half.json");
    let (code, _, err) = seamlife(&[
        "count",
        s(&files[2]),
        "--column",
        "s",
        "--residue",
        "half-cycles",
        "--spectrum-out",
        s(&q),
        "--sequence",
        "3",
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = seamlife(&["merge", s(&p[0]), s(&p[1]), s(&q)]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("residue rule") && err.contains("--residue"),
        "{err}"
    );
}

/// Sum of separate counts: each file's rows brought to the merged widths (bins are
/// aligned on multiples of power-of-two widths, so a finer bin lies in one coarser).
fn summed_cells(
    csvs: &[String],
    wr: f64,
    wm: f64,
) -> std::collections::BTreeMap<(i64, i64), (f64, f64)> {
    let mut out = std::collections::BTreeMap::new();
    for c in csvs {
        for l in c.lines().skip(1) {
            let f: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            let (range, cycles, rlo, mlo) = (f[0], f[2], f[3], f[5]);
            let key = ((rlo / wr).floor() as i64, (mlo / wm).floor() as i64);
            let e = out.entry(key).or_insert((0.0, 0.0));
            e.0 += cycles;
            e.1 = f64::max(e.1, range);
        }
    }
    out
}

#[test]
fn separate_records_equal_the_sum_of_their_own_counts() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut csvs = Vec::new();
    let mut parts_ = Vec::new();
    let (mut samples, mut full, mut half) = (0u64, 0u64, 0u64);
    for (k, seed) in [3u64, 5, 8].iter().enumerate() {
        let rows: Vec<Vec<f64>> = lcg(2000 + 700 * k, *seed, 11)
            .into_iter()
            .map(|x| vec![x])
            .collect();
        let f = d.join(format!("rec{k}.csv"));
        write_csv(&f, &["s"], &rows);
        let opts = ["--column", "s", "--residue", "half-cycles"];
        let (w, ws) = whole(d, &f, &opts);
        samples += stat(&ws, "samples").parse::<u64>().unwrap();
        full += stat(&ws, "full_cycles").parse::<u64>().unwrap();
        half += stat(&ws, "half_cycles").parse::<u64>().unwrap();
        csvs.push(w);
        let p = d.join(format!("rec{k}.part.json"));
        let mut args = vec!["count", s(&f), "--spectrum-out", s(&p)];
        args.extend_from_slice(&opts);
        assert_eq!(seamlife(&args).0, 0);
        parts_.push(p);
    }
    let (m, ms) = merged(d, &parts_, &["--separate"]);
    // the sums of the separate counts (common practice: separate records add up)
    assert_eq!(stat(&ms, "samples"), samples.to_string());
    assert_eq!(stat(&ms, "full_cycles"), full.to_string());
    assert_eq!(stat(&ms, "half_cycles"), half.to_string());
    let wr: f64 = stat(&ms, "range_bin_width_mpa").parse().unwrap();
    let wm: f64 = stat(&ms, "mean_bin_width_mpa").parse().unwrap();
    let want = summed_cells(&csvs, wr, wm);
    let got = summed_cells(&[m], wr, wm);
    assert_eq!(want, got);
    // hierarchical: (1, 2) then 3 equals all three at once
    let p12 = d.join("p12.part.json");
    let (code, _, err) = seamlife(&[
        "merge",
        s(&parts_[0]),
        s(&parts_[1]),
        "--separate",
        "--spectrum-out",
        s(&p12),
        "-o",
        s(&d.join("x.csv")),
    ]);
    assert_eq!(code, 0, "{err}");
    let (m2, ms2) = merged(d, &[p12.clone(), parts_[2].clone()], &["--separate"]);
    assert_eq!(summed_cells(&[m2], wr, wm), want);
    assert_same_stats(&ms, &ms2);
    // a part of several records is not one piece of a record
    let (code, _, err) = seamlife(&["merge", s(&p12), s(&parts_[2])]);
    assert_eq!(code, 2);
    assert!(
        err.contains("separate records") && err.contains("--separate"),
        "{err}"
    );
}

#[test]
fn hierarchical_joins_equal_one_join() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows: Vec<Vec<f64>> = lcg(6000, 21, 13).into_iter().map(|x| vec![x]).collect();
    let file = d.join("h.csv");
    write_csv(&file, &["s"], &rows);
    let files = split(d, "h", &["s"], &rows, &[1000, 2000, 3000, 4500]);
    let p = parts(&files, &["--column", "s"]);
    let (a, b) = (d.join("a.part.json"), d.join("b.part.json"));
    let tmp = d.join("tmp.csv");
    for (out, set) in [(&a, &p[..3]), (&b, &p[3..])] {
        let mut args = vec!["merge"];
        args.extend(set.iter().map(|x| s(x)));
        args.extend_from_slice(&["--spectrum-out", s(out), "-o", s(&tmp)]);
        let (code, _, err) = seamlife(&args);
        assert_eq!(code, 0, "{err}");
    }
    let (w, ws) = whole(d, &file, &["--column", "s"]);
    let (m, ms) = merged(d, &[a.clone(), b.clone()], &[]);
    assert_same_spectrum(&w, &m);
    assert_same_stats(&ws, &ms);
    let joined: serde_json::Value = serde_json::from_str(&read(&a)).unwrap();
    assert_eq!(joined["records"][0]["sequence"]["first"], 1);
    assert_eq!(joined["records"][0]["sequence"]["last"], 3);
    assert_eq!(joined["records"][0]["files"].as_array().unwrap().len(), 3);
}

#[test]
fn channels_merge_one_by_one() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let a = lcg(5000, 1, 7);
    let b = lcg(5000, 2, 5);
    let rows: Vec<Vec<f64>> = a.iter().zip(&b).map(|(&x, &y)| vec![x, y, x - y]).collect();
    let names = ["left", "right", "diff"];
    let file = d.join("m.csv");
    write_csv(&file, &names, &rows);
    let files = split(d, "m", &names, &rows, &[1234, 3000]);
    let opts = ["--columns", "diff,left"];
    let p = parts(&files, &opts);
    let (w, ws) = whole(d, &file, &opts);
    let (m, ms) = merged(d, &p, &[]);
    assert!(m.starts_with("channel,"), "{m}");
    assert_same_spectrum(&w, &m);
    assert_same_stats(&ws, &ms);
    // each channel equals its own one-column merge
    let one = parts(&files, &["--column", "left"]);
    let (m1, _) = merged(d, &one, &[]);
    let mine: Vec<&str> = m.lines().filter_map(|l| l.strip_prefix("left,")).collect();
    let theirs: Vec<&str> = m1.lines().skip(1).collect();
    assert_eq!(mine, theirs);
    // parts of other channels do not merge
    let (code, _, err) = seamlife(&["merge", s(&p[0]), s(&one[1])]);
    assert_eq!(code, 2);
    assert!(err.contains("channels"), "{err}");
}

#[test]
fn gated_parts_merge_only_as_separate_records() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows: Vec<Vec<f64>> = lcg(3000, 4, 9).into_iter().map(|x| vec![x]).collect();
    let files = split(d, "g", &["s"], &rows, &[1500]);
    let p = parts(&files, &["--column", "s", "--gate-mpa", "4"]);
    let out = d.join("g.csv");
    let (code, _, err) = seamlife(&["merge", s(&p[0]), s(&p[1]), "-o", s(&out)]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("hysteresis gate") && err.contains("--separate"),
        "{err}"
    );
    assert!(!out.exists());
    let (code, _, err) = seamlife(&["merge", s(&p[0]), s(&p[1]), "-o", s(&out), "--separate"]);
    assert_eq!(code, 0, "{err}");
    // each part alone equals the gated count of its file
    let (w, _) = whole(d, &files[0], &["--column", "s", "--gate-mpa", "4"]);
    let (m, _) = merged(d, &p[..1], &[]);
    assert_same_spectrum(&w, &m);
}

/// A change made to a part.
type Edit = Box<dyn Fn(&mut serde_json::Value)>;

/// A valid part to spoil: the demo record's first 3000 rows.
fn good_part(d: &Path) -> (PathBuf, serde_json::Value) {
    let rows: Vec<Vec<f64>> = demo_rows().into_iter().take(3000).collect();
    let f = d.join("good.csv");
    write_csv(&f, &["sg4"], &rows);
    let p = d.join("good.part.json");
    let (code, _, err) = seamlife(&["count", s(&f), "--column", "sg4", "--spectrum-out", s(&p)]);
    assert_eq!(code, 0, "{err}");
    let v = serde_json::from_str(&read(&p)).unwrap();
    (p, v)
}

/// Merging `bad` (after a good part) fails with code 2, names the file, says `want`
/// and gives a hint, and writes no output.
fn refused(d: &Path, good: &Path, bad: &Path, want: &str) {
    let out = d.join("refused.csv");
    let (code, stdout, err) = seamlife(&["merge", s(good), s(bad), "--separate", "-o", s(&out)]);
    assert_eq!(code, 2, "{want}: {err}");
    assert!(err.contains(s(bad)), "{want}: the file is named: {err}");
    assert!(err.contains(want), "{want}: {err}");
    assert!(err.contains("hint"), "{want}: {err}");
    assert!(stdout.is_empty());
    assert!(!out.exists(), "{want}: nothing written");
}

fn spoiled(
    d: &Path,
    name: &str,
    v: &serde_json::Value,
    edit: impl Fn(&mut serde_json::Value),
) -> PathBuf {
    let mut v = v.clone();
    edit(&mut v);
    let p = d.join(name);
    std::fs::write(&p, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    p
}

#[test]
fn bad_parts_are_refused_with_a_located_message() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let (good, v) = good_part(d);
    let text = read(&good);
    // malformed JSON: cut short, located at its line and column
    let cut = d.join("cut.part.json");
    std::fs::write(&cut, &text[..text.len() / 2]).unwrap();
    refused(d, &good, &cut, "EOF while parsing");
    let (_, _, err) = seamlife(&["merge", s(&good), s(&cut)]);
    assert!(
        err.contains(&format!("{}:", s(&cut))) && err.contains("not a seamlife spectrum part"),
        "{err}"
    );
    // NaN and infinity are no JSON numbers
    let nan = d.join("nan.part.json");
    std::fs::write(&nan, text.replacen("\"scale\": 1.0", "\"scale\": NaN", 1)).unwrap();
    refused(d, &good, &nan, "expected value");
    let inf = d.join("inf.part.json");
    std::fs::write(&inf, text.replacen("\"scale\": 1.0", "\"scale\": 1e999", 1)).unwrap();
    refused(d, &good, &inf, "number out of range");
    let set_cell = |v: &mut serde_json::Value, key: &str, x: serde_json::Value| {
        v["records"][0]["channels"][0]["spectrum"]["cells"][0][key] = x;
    };
    let cases: Vec<(&str, &str, Edit)> = vec![
        (
            "unknown.part.json",
            "unknown field `colour`",
            Box::new(|v| v["colour"] = "red".into()),
        ),
        (
            "version.part.json",
            "format version 99",
            Box::new(|v| v["format_version"] = 99.into()),
        ),
        (
            "format.part.json",
            "not a seamlife spectrum part",
            Box::new(|v| v["format"] = "something-else".into()),
        ),
        (
            "negative.part.json",
            "cycles must be a number > 0",
            Box::new(move |v| set_cell(v, "cycles", (-1.0).into())),
        ),
        // 1.7e308 cycles would overflow to infinity when summed with another part
        (
            "huge-count.part.json",
            "at most 2^52",
            Box::new(move |v| set_cell(v, "cycles", 1.7e308.into())),
        ),
        (
            "fraction.part.json",
            "whole or half cycles",
            Box::new(move |v| set_cell(v, "cycles", 0.3.into())),
        ),
        (
            "outside.part.json",
            "does not lie in range bin",
            Box::new(move |v| set_cell(v, "max_range_mpa", 1e4.into())),
        ),
        (
            "width.part.json",
            "power of two",
            Box::new(|v| {
                v["records"][0]["channels"][0]["spectrum"]["range_width_mpa"] = 3.0.into()
            }),
        ),
        (
            "residue.part.json",
            "not a rainflow residue",
            Box::new(|v| {
                let r = &mut v["records"][0]["channels"][0]["counter"]["residue_mpa"];
                let x = r[1].clone();
                r[2] = x;
            }),
        ),
        (
            "stress.part.json",
            "finite stress",
            Box::new(|v| v["records"][0]["channels"][0]["first_mpa"] = 1e9.into()),
        ),
        (
            "total.part.json",
            "the counter closed",
            Box::new(|v| {
                let c = &mut v["records"][0]["channels"][0]["counter"]["full_cycles"];
                *c = (c.as_u64().unwrap() + 1).into();
            }),
        ),
        (
            "samples.part.json",
            "equal counter.samples",
            Box::new(|v| v["records"][0]["channels"][0]["samples"] = 0.into()),
        ),
        (
            "gate.part.json",
            "joinable",
            Box::new(|v| {
                v["gate_mpa"] = 1.0.into();
                v["records"][0]["channels"][0]["counter"]["gate_mpa"] = 1.0.into();
            }),
        ),
        (
            "bins.part.json",
            "exactly one of width_mpa and max_bins",
            Box::new(|v| v["range_bins"]["width_mpa"] = 2.0.into()),
        ),
        // bins finer than count accepts would give bin indices near the integer limit
        (
            "fine.part.json",
            "width_mpa must be from 0.001",
            Box::new(|v| {
                v["range_bins"] = serde_json::json!({"width_mpa": 1e-300, "max_bins": null});
                v["records"][0]["channels"][0]["spectrum"]["range_width_mpa"] = 1e-300.into();
            }),
        ),
        (
            "far-mean.part.json",
            "lies beyond",
            Box::new(move |v| set_cell(v, "mean_bin", 4_000_000_000_000i64.into())),
        ),
        (
            "channels.part.json",
            "holds 1 channels but the part names 2",
            Box::new(|v| v["channels"] = serde_json::json!(["a", "b"])),
        ),
    ];
    for (name, want, edit) in cases {
        let bad = spoiled(d, name, &v, edit);
        refused(d, &good, &bad, want);
    }
}

#[test]
fn parts_that_do_not_belong_together_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows: Vec<Vec<f64>> = lcg(4000, 17, 9).into_iter().map(|x| vec![x]).collect();
    let files = split(d, "day", &["s"], &rows, &[1000, 2000, 3000]);
    let p = parts(&files, &["--column", "s"]);
    let out = d.join("out.csv");
    let merge = |args: &[&Path]| {
        let mut v: Vec<&str> = vec!["merge"];
        v.extend(args.iter().map(|x| s(x)));
        v.extend_from_slice(&["-o", s(&out)]);
        seamlife(&v)
    };
    let check = |(code, _, err): (i32, String, String), want: &str| {
        assert_eq!(code, 2, "{want}: {err}");
        assert!(err.contains(want), "{want}: {err}");
        assert!(err.contains("hint"), "{err}");
        assert!(!out.exists());
    };
    check(merge(&[&p[1], &p[0]]), "out of order");
    check(merge(&[&p[0], &p[2]]), "pieces 2 to 2 are missing");
    check(merge(&[&p[0], &p[0]]), "given twice");
    let copy = d.join("copy.part.json");
    std::fs::copy(&p[1], &copy).unwrap();
    check(merge(&[&p[1], &copy]), "same count");
    // other bins, unit, scale
    let other = |opts: &[&str], name: &str| {
        let q = d.join(name);
        let mut a = vec![
            "count",
            s(&files[1]),
            "--column",
            "s",
            "--spectrum-out",
            s(&q),
            "--sequence",
            "2",
        ];
        a.extend_from_slice(opts);
        assert_eq!(seamlife(&a).0, 0);
        q
    };
    check(
        merge(&[&p[0], &other(&["--bins", "32"], "b32.json")]),
        "the range bins",
    );
    check(
        merge(&[&p[0], &other(&["--bin-width-mpa", "2"], "w2.json")]),
        "2 MPa wide",
    );
    check(
        merge(&[&p[0], &other(&["--mean-bins", "8"], "m8.json")]),
        "the mean bins",
    );
    check(
        merge(&[&p[0], &other(&["--scale", "2"], "s2.json")]),
        "the scale",
    );
    check(
        merge(&[
            &p[0],
            &other(
                &["--unit", "microstrain", "--modulus-mpa", "210000"],
                "ue.json",
            ),
        ]),
        "the unit",
    );
    // a part without a sequence number among numbered ones
    let q = d.join("nos.json");
    assert_eq!(
        seamlife(&[
            "count",
            s(&files[1]),
            "--column",
            "s",
            "--spectrum-out",
            s(&q)
        ])
        .0,
        0
    );
    check(merge(&[&p[0], &q]), "no sequence number");
    // results options on spectrum parts, spectrum options on results models
    let (code, _, err) = seamlife(&["merge", s(&safety_common::demo()), "--separate"]);
    assert_eq!(code, 2, "{err}");
}

#[test]
fn outputs_never_overwrite_a_part_and_odd_files_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let (good, _) = good_part(d);
    let before = read(&good);
    for flag in ["-o", "--spectrum-out", "--stats"] {
        let (code, _, err) = seamlife(&["merge", s(&good), flag, s(&good)]);
        assert_eq!(code, 2, "{flag}: {err}");
        assert_eq!(read(&good), before, "{flag}: the part is untouched");
    }
    // count never writes its part over the series file
    let f = d.join("good.csv");
    let (code, _, err) = seamlife(&["count", s(&f), "--column", "sg4", "--spectrum-out", s(&f)]);
    assert_eq!(code, 2, "{err}");
    // a folder, a device, and a file beyond the size limit (sparse, never read)
    let big = d.join("big.part.json");
    std::fs::File::create(&big)
        .unwrap()
        .set_len(257 << 20)
        .unwrap();
    for (bad, want) in [
        (d.to_path_buf(), "not a regular file"),
        (PathBuf::from("/dev/zero"), "not a regular file"),
        (big, "limited to 256 MiB"),
    ] {
        let out = d.join("o.csv");
        let (code, _, err) = seamlife(&["merge", s(&good), s(&bad), "--separate", "-o", s(&out)]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains(want), "{want}: {err}");
        assert!(!out.exists());
    }
}

#[test]
fn binary_and_quoted_pieces_merge_into_the_whole_csv_count() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let v = lcg(5000, 31, 8);
    let rows: Vec<Vec<f64>> = v.iter().map(|&x| vec![x]).collect();
    let file = d.join("b.csv");
    write_csv(&file, &["s"], &rows);
    let (w, ws) = whole(d, &file, &["--column", "1"]);
    let cuts = [0usize, 1700, 1701, 3900, 5000];
    // raw little-endian float64 pieces, read without parsing
    let mut bin = Vec::new();
    for (k, c) in cuts.windows(2).enumerate() {
        let f = d.join(format!("b-{}.f64", k + 1));
        let bytes: Vec<u8> = v[c[0]..c[1]].iter().flat_map(|x| x.to_le_bytes()).collect();
        std::fs::write(&f, bytes).unwrap();
        bin.push(f);
    }
    let p = parts(&bin, &["--format", "f64", "--column", "1"]);
    let (m, ms) = merged(d, &p, &[]);
    assert_same_spectrum(&w, &m);
    // the statistics name the channel by number for a binary record
    assert_eq!(stat(&ms, "full_cycles"), stat(&ws, "full_cycles"));
    assert_eq!(stat(&ms, "reversals"), stat(&ws, "reversals"));
    // quoted cells go to the reference reader
    let mut quoted = Vec::new();
    for (k, c) in cuts.windows(2).enumerate() {
        let f = d.join(format!("q-{}.csv", k + 1));
        let mut t = String::from("\"s\"\n");
        for x in &v[c[0]..c[1]] {
            t.push_str(&format!("\"{x}\"\n"));
        }
        std::fs::write(&f, t).unwrap();
        quoted.push(f);
    }
    let p = parts(&quoted, &["--column", "1"]);
    let (m, ms) = merged(d, &p, &[]);
    assert_same_spectrum(&w, &m);
    assert_same_stats(&ws, &ms);
}

/// A one-detail project (EN 1993-1-9 family, 25 years) whose normal stress is the
/// series `file` (column `sg4_microstrain`, µε, E = 210000 MPa) repeated 2000 times a
/// year, `extra` lines added to the series; invented demo numbers.
fn project(file: &str, extra: &str) -> String {
    safety_common::series_project(
        &format!(
            "            file: {file}\n            column: sg4_microstrain\n            unit: microstrain\n            modulus_mpa: 210000\n{extra}"
        ),
        "          per_year: 2000\n",
    )
}

#[test]
fn a_project_series_event_reads_a_merged_part_with_cells_at_their_largest_range() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows = demo_rows();
    let file = d.join("rec.csv");
    write_csv(&file, &["sg4_microstrain"], &rows);
    let files = split(d, "rec", &["sg4_microstrain"], &rows, &[9000, 20000]);
    let opts = [
        "--column",
        "sg4_microstrain",
        "--unit",
        "microstrain",
        "--modulus-mpa",
        "210000",
    ];
    let p = parts(&files, &opts);
    let joined = d.join("rec.part.json");
    let mut args = vec!["merge"];
    args.extend(p.iter().map(|x| s(x)));
    let tmp = d.join("tmp.csv");
    args.extend_from_slice(&["--spectrum-out", s(&joined), "-o", s(&tmp)]);
    assert_eq!(seamlife(&args).0, 0);
    let lib = seamlife::catalogue::Library::load(None).unwrap();
    let run = |yaml: String| {
        let y = d.join("p.yaml");
        std::fs::write(&y, yaml).unwrap();
        let r = seamlife::run_project(&y, &lib).unwrap();
        let project = seamlife::input::load_project_with(&y, &lib, Default::default()).unwrap();
        let fam = lib.get(&project.file.basis.family).unwrap();
        let h = seamlife::histories::build(&project).unwrap();
        let cells = seamlife::assess::assess(&project, fam, &h);
        let c = &cells.details[0];
        (
            r,
            c.components[0].damage,
            (c.reserve_factor, c.required_category),
        )
    };
    let (from_csv, csv_cells, csv_cell_searches) = run(project("rec.csv", ""));
    let (from_part, _, _) = run(project("rec.part.json", ""));
    let (a, b) = (
        &from_csv.details[0].components[0],
        &from_part.details[0].components[0],
    );
    let (ra, rb) = (
        serde_json::to_value(&a.counted[0]).unwrap(),
        serde_json::to_value(&b.counted[0]).unwrap(),
    );
    for key in [
        "samples",
        "reversals",
        "full_cycles",
        "half_cycles",
        "min_mpa",
        "max_mpa",
    ] {
        assert_eq!(ra[key], rb[key], "{key}");
    }
    assert_eq!(ra["per_cycle"], true);
    assert_eq!(rb["per_cycle"], false, "a part holds cells, not cycles");
    // the part's damage is that of the whole record's cells at their largest range
    // (the per-cell rule, the same cells: reference the CSV record's cell sum)
    let dp = b.damage;
    assert!(
        (dp - csv_cells).abs() <= 1e-9 * csv_cells,
        "{dp} vs {csv_cells}"
    );
    assert!(
        dp >= a.damage * (1.0 - 1e-12),
        "conservative: {dp} vs {}",
        a.damage
    );
    // its reserve factor and required category are searched on the same cells at
    // their largest range (no bins of cycles, so no bracket is stated); the CSV
    // record's searches bracket the exact factor, which is never below the cells'
    // (as-welded: each cycle at or below its cell's largest range), within one bin
    let (dc, dpart) = (&from_csv.details[0], &from_part.details[0]);
    let (k_cells, cat_cells) = csv_cell_searches;
    let k_part = dpart.reserve_factor.unwrap();
    assert!((k_part - k_cells.unwrap()).abs() <= 1e-12 * k_part);
    assert_eq!(dpart.required_category, cat_cells);
    assert_eq!(dpart.reserve_factor_upper, None);
    assert!(dc.reserve_factor_upper.is_some());
    let (lo, hi) = (dc.reserve_factor.unwrap(), dc.reserve_factor_upper.unwrap());
    let res = seamlife::histories::damage::RANGE_RESOLUTION;
    assert!(hi >= k_part * (1.0 - 1e-12), "{hi} vs {k_part}");
    assert!(lo >= k_part * (1.0 - res), "{lo} vs {k_part}");
    assert!(lo <= hi && hi / lo - 1.0 <= res, "{lo} {hi}");
    // the event's options must be those the part was counted with
    let y = d.join("p.yaml");
    std::fs::write(&y, project("rec.part.json", "            bins: 32\n")).unwrap();
    let (code, _, err) = seamlife(&["assess", s(&y)]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("bins") && err.contains("p.yaml"), "{err}");
    let other = project("rec.part.json", "").replace("column: sg4_microstrain", "column: sg5");
    std::fs::write(&y, other).unwrap();
    let (code, _, err) = seamlife(&["assess", s(&y)]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("no channel 'sg5'") && err.contains("sg4_microstrain"),
        "{err}"
    );
}
