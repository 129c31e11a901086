//! "Did you mean" suggestions for unknown names.

/// Levenshtein edit distance between two strings (by characters).
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The candidate nearest to `name`, if it is close enough to be a likely typo
/// (distance at most a third of the length, at least 2), or if one contains the other.
pub fn nearest<'a>(name: &str, candidates: &[&'a str]) -> Option<&'a str> {
    let limit = (name.chars().count() / 3).max(2);
    candidates
        .iter()
        .map(|c| (edit_distance(name, c), *c))
        .filter(|(d, c)| {
            *d <= limit || (name.len() >= 4 && (c.contains(name) || name.contains(*c)))
        })
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

/// `"; did you mean `x`?"` or an empty string.
pub fn did_you_mean(name: &str, candidates: &[&str]) -> String {
    match nearest(name, candidates) {
        Some(c) => format!("; did you mean `{c}`?"),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distances() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(nearest("vout", &["output_voltage", "vouts"]), Some("vouts"));
        assert_eq!(
            nearest("output_votlage", &["output_voltage", "output_current"]),
            Some("output_voltage")
        );
        assert_eq!(nearest("zzz", &["output_voltage"]), None);
    }
}
