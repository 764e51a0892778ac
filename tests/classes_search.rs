//! `seamlife classes FAMILY --search WORDS`: ranked hits, all words required, a clear
//! message with near matches and exit code 1 when nothing matches.

use assert_cmd::Command;

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::cargo_bin("seamlife")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn hits_hold_every_word_case_insensitive() {
    let (code, out, _) = run(&["classes", "en1993-1-9", "--search", "Cover", "PLATE"]);
    assert_eq!(code, 0, "{out}");
    // EN 1993-1-9 Table 8.5 details 6-7: four cover-plate thickness ranges and the
    // reinforced end (from memory)
    assert!(out.contains("5 of 124 catalogue entries"), "{out}");
    assert!(out.contains("cover-plate-end-tc-30-50"));
    assert!(!out.contains("lap-joint"));
    // the caution stays with every listing
    assert!(out.contains("category assignment is the engineer's responsibility"));
}

#[test]
fn no_match_says_so_with_a_near_word() {
    let (code, out, _) = run(&["classes", "iiw", "--search", "cruciferm"]);
    assert_eq!(code, 1);
    assert!(out.contains("no iiw catalogue entry holds every word of `cruciferm`"));
    assert!(out.contains("did you mean `cruciform`?"), "{out}");
    // words that each match but never together: the closest entries are named
    let (code, out, _) = run(&["classes", "iiw", "--search", "stud", "orthotropic"]);
    assert_eq!(code, 1);
    assert!(
        out.contains("entries holding the most words (1 of 2)"),
        "{out}"
    );
}

#[test]
fn every_family_without_a_name_and_bad_family() {
    let (code, out, _) = run(&["classes", "--search", "bolt"]);
    assert_eq!(code, 0);
    assert!(
        out.contains("en1993-1-9 —") && out.contains("dnv-rp-c203 —"),
        "{out}"
    );
    let (code, _, err) = run(&["classes", "en1993", "--search", "bolt"]);
    assert_eq!(code, 2);
    assert!(err.contains("unknown curve family `en1993`"), "{err}");
}
