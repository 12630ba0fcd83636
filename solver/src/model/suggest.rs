//! Nearest-name suggestions for misspelt keys, choices and references.

/// Edit distance counting insertions, deletions, substitutions and swaps of
/// two neighbouring characters (optimal string alignment distance).
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().flat_map(char::to_lowercase).collect();
    let b: Vec<char> = b.chars().flat_map(char::to_lowercase).collect();
    let (n, m) = (a.len(), b.len());
    // Three rows: two back (for swaps), one back, current.
    let mut prev2 = vec![0usize; m + 1];
    let mut prev: Vec<usize> = (0..=m).collect();
    let mut cur = vec![0usize; m + 1];
    for i in 1..=n {
        cur[0] = i;
        for j in 1..=m {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut d = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                d = d.min(prev2[j - 2] + 1);
            }
            cur[j] = d;
        }
        std::mem::swap(&mut prev2, &mut prev);
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[m]
}

/// The candidate nearest to `word`, if it is near enough to be a likely typo:
/// at most a third of the longer word's characters differ (and at least one
/// edit is allowed for short words).
pub(crate) fn nearest<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<&'a str> {
    let mut best: Option<(usize, &'a str)> = None;
    for c in candidates {
        let d = edit_distance(word, c);
        if best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    let (d, c) = best?;
    let len = word.chars().count().max(c.chars().count());
    let allowed = (len / 3).max(1);
    (d <= allowed).then_some(c)
}

/// `"; did you mean `x`?"` or an empty string.
pub(crate) fn did_you_mean<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> String {
    match nearest(word, candidates) {
        Some(c) => format!("; did you mean `{c}`?"),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distances_of_known_pairs() {
        // Worked by hand: kitten -> sitting is 3 edits (2 substitutions, 1 insertion).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("abc", "abc"), 0);
        // One swap of neighbours.
        assert_eq!(edit_distance("trun", "turn"), 1);
    }

    #[test]
    fn suggests_only_near_names() {
        let keys = ["relative_permeability", "remanence", "stacking_factor"];
        assert_eq!(
            nearest("relative_permability", keys),
            Some("relative_permeability")
        );
        assert_eq!(nearest("colour", keys), None);
    }
}
