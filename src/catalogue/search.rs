//! Finding catalogue entries by words: every word must occur (case-insensitive, as a
//! part of a word) in an entry's key, description or reference; the hits are ranked.

use super::{CatalogueEntry, Family};

/// One entry that matches every word, with its score (higher first).
#[derive(Debug, Clone)]
pub struct Hit<'a> {
    pub entry: &'a CatalogueEntry,
    pub score: u32,
}

/// What a search found: the ranked hits, or why there are none.
#[derive(Debug, Clone)]
pub struct Found<'a> {
    pub words: Vec<String>,
    pub hits: Vec<Hit<'a>>,
    /// Words that occur in no entry at all, each with the nearest word of the catalogue.
    pub unknown: Vec<(String, Option<String>)>,
    /// With no hit: the entries that match the most words (at most 3), and how many.
    pub partial: Vec<(&'a CatalogueEntry, usize)>,
}

/// The search words: every argument split at white space, lower case, empty ones
/// dropped.
pub fn words<S: AsRef<str>>(args: &[S]) -> Vec<String> {
    args.iter()
        .flat_map(|a| a.as_ref().split_whitespace())
        .map(str::to_lowercase)
        .collect()
}

/// Score of one word in one entry, 0 when it does not occur: a hit in the key counts
/// most, then the description, then the reference; a whole word counts one more.
fn word_score(e: &CatalogueEntry, w: &str) -> u32 {
    let mut s = 0;
    for (text, weight) in [
        (e.key.to_lowercase(), 4),
        (e.description.to_lowercase(), 3),
        (e.reference.to_lowercase(), 2),
    ] {
        if text.contains(w) {
            s += weight;
            if tokens(&text).any(|t| t == w) {
                s += 1;
            }
        }
    }
    s
}

/// The words of a text: runs of letters and digits (and dots, for "8.3").
fn tokens(text: &str) -> impl Iterator<Item = &str> {
    text.split(|c: char| !(c.is_alphanumeric() || c == '.'))
        .map(|t| t.trim_matches('.'))
        .filter(|t| !t.is_empty())
}

/// Search a family's catalogue for entries holding every word.
pub fn search<'a>(fam: &'a Family, words: &[String]) -> Found<'a> {
    let mut hits: Vec<Hit<'a>> = Vec::new();
    let mut partial: Vec<(&'a CatalogueEntry, usize)> = Vec::new();
    for e in &fam.catalogue {
        let scores: Vec<u32> = words.iter().map(|w| word_score(e, w)).collect();
        let matched = scores.iter().filter(|&&s| s > 0).count();
        if matched == words.len() {
            hits.push(Hit {
                entry: e,
                score: scores.iter().sum(),
            });
        } else if matched > 0 {
            partial.push((e, matched));
        }
    }
    // best first; the catalogue order among equals (stable sort)
    hits.sort_by_key(|h| std::cmp::Reverse(h.score));
    let mut unknown = Vec::new();
    if hits.is_empty() {
        let vocabulary: std::collections::BTreeSet<String> = fam
            .catalogue
            .iter()
            .flat_map(|e| {
                let text = format!("{} {} {}", e.key, e.description, e.reference).to_lowercase();
                tokens(&text)
                    .filter(|t| t.chars().count() > 2)
                    .map(str::to_string)
                    .collect::<Vec<_>>()
            })
            .collect();
        for w in words {
            if !fam.catalogue.iter().any(|e| word_score(e, w) > 0) {
                let near = crate::files::suggest(w, vocabulary.iter().map(|s| s.as_str()))
                    .map(str::to_string);
                unknown.push((w.clone(), near));
            }
        }
        partial.sort_by_key(|p| std::cmp::Reverse(p.1));
        partial.truncate(3);
    } else {
        partial.clear();
    }
    Found {
        words: words.to_vec(),
        hits,
        unknown,
        partial,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::catalogue::Library;

    #[test]
    fn every_word_must_match_and_key_hits_rank_first() {
        let lib = Library::load(None).unwrap();
        let en = lib.get("en1993-1-9").unwrap();
        let f = search(en, &words(&["Backing", "STRIP"]));
        let keys: Vec<&str> = f.hits.iter().map(|h| h.entry.key.as_str()).collect();
        // the three Table 8.3 backing-strip entries, and nothing without both words
        assert_eq!(keys.len(), 3, "{keys:?}");
        assert!(keys.iter().all(|k| k.contains("backing-strip")));
        assert!(f.hits.iter().all(|h| h
            .entry
            .description
            .to_lowercase()
            .contains("backing strip")));
        // a word in the key outranks one only in the description
        let f = search(en, &words(&["cope"]));
        assert!(f.hits[0].entry.key.contains("cope"));
        assert!(f.hits.windows(2).all(|w| w[0].score >= w[1].score));
        // words split at white space inside one argument
        assert_eq!(words(&["butt  weld", "8.3"]), vec!["butt", "weld", "8.3"]);
        let f = search(en, &words(&["table 8.7"]));
        assert_eq!(f.hits.len(), 8);
    }

    #[test]
    fn nothing_found_names_the_unknown_word_and_a_near_one() {
        let lib = Library::load(None).unwrap();
        let en = lib.get("en1993-1-9").unwrap();
        let f = search(en, &words(&["gusett"]));
        assert!(f.hits.is_empty());
        assert_eq!(f.unknown.len(), 1);
        assert_eq!(f.unknown[0].1.as_deref(), Some("gusset"));
        // each word known, but no entry holds both: the best partial matches instead
        let f = search(en, &words(&["bolt", "orthotropic"]));
        assert!(f.hits.is_empty() && f.unknown.is_empty());
        assert!(!f.partial.is_empty() && f.partial[0].1 == 1);
    }
}
