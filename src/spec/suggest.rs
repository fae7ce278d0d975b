//! Did-you-mean suggestions for unknown keys, values and step names.

/// The closest candidate to `word`, if it is close enough to be a likely typo.
pub fn closest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let w = word.to_lowercase();
    let mut best: Option<(&str, f64)> = None;
    for c in candidates {
        let score = strsim::normalized_damerau_levenshtein(&w, &c.to_lowercase())
            .max(strsim::jaro_winkler(&w, &c.to_lowercase()) - 0.15);
        if score >= 0.6 && best.is_none_or(|(_, b)| score > b) {
            best = Some((c, score));
        }
    }
    best.map(|(c, _)| c)
}

#[cfg(test)]
mod tests {
    use super::closest;

    #[test]
    fn suggests_typos_only() {
        let keys = ["sizes", "seed", "designs", "budget", "table"];
        assert_eq!(closest("sizs", keys), Some("sizes"));
        assert_eq!(closest("desings", keys), Some("designs"));
        assert_eq!(closest("zzzzzz", keys), None);
        assert_eq!(closest("append_row", ["append_rows", "build_from_records"]), Some("append_rows"));
    }
}
