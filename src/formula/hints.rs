//! Closest-name hints for misspelt names and functions, by edit distance.
//! It knows no grammar and no list of names of its own.

/// The closest candidate by edit distance, if reasonably close.
pub(crate) fn suggest<'a>(name: &str, candidates: impl Iterator<Item = &'a str>) -> Option<String> {
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        let d = if c.eq_ignore_ascii_case(name) {
            0
        } else {
            edit_distance(name, c)
        };
        if best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    let limit = (name.chars().count() / 3).clamp(1, 3);
    best.filter(|(d, c)| *d <= limit && *c != name)
        .map(|(_, c)| c.to_string())
}

/// Levenshtein distance over characters.
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distance_and_suggestions() {
        // Levenshtein's textbook pair (Levenshtein 1966; the kitten/sitting
        // example is common practice, no source).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(
            suggest("rh0", ["rho0", "R_in"].into_iter()),
            Some("rho0".into())
        );
        assert_eq!(suggest("zzzzzz", ["rho0"].into_iter()), None);
        assert_eq!(suggest("X", ["x"].into_iter()), Some("x".into()));
    }
}
