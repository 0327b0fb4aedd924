//! "Did you mean ...?" for misspelt keys and values.

/// Optimal-string-alignment distance: insertions, deletions, substitutions and swaps of two
/// neighbouring characters each cost 1 (a swap is the commonest typo: `cofnidence`).
fn distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let width = b.len() + 1;
    let mut d = vec![0usize; (a.len() + 1) * width];
    for i in 0..=a.len() {
        d[i * width] = i;
    }
    for (j, cell) in d.iter_mut().enumerate().take(width) {
        *cell = j;
    }
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut best = (d[(i - 1) * width + j] + 1)
                .min(d[i * width + j - 1] + 1)
                .min(d[(i - 1) * width + j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                best = best.min(d[(i - 2) * width + j - 2] + 1);
            }
            d[i * width + j] = best;
        }
    }
    d[a.len() * width + b.len()]
}

/// The candidate closest to `word`, if it is close enough to be a plausible typo: at most one
/// edit for short words, up to a third of the word's length for longer ones. Case and `_`/`-`
/// confusions count as no edit.
pub(crate) fn closest<'a>(word: &str, candidates: &[&'a str]) -> Option<&'a str> {
    let norm = |s: &str| s.to_lowercase().replace('_', "-");
    let w = norm(word);
    let limit = (w.chars().count() / 3).max(1);
    candidates
        .iter()
        .map(|c| (distance(&w, &norm(c)), *c))
        .filter(|(d, _)| *d <= limit)
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

/// `a`, `b`, `c` for messages.
pub(crate) fn list(candidates: &[&str]) -> String {
    candidates
        .iter()
        .map(|c| format!("`{c}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn typos() {
        let keys = ["quantity", "side", "limit", "confidence", "scope"];
        assert_eq!(closest("confidnce", &keys), Some("confidence"));
        assert_eq!(closest("cofnidence", &keys), Some("confidence"));
        assert_eq!(closest("Limit", &keys), Some("limit"));
        assert_eq!(closest("colour", &keys), None);
        assert_eq!(
            closest("arm-column", &["arm_column", "column"]),
            Some("arm_column")
        );
    }
}
