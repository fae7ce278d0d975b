//! Small wording helpers shared by every layout: multiples ("57×"), fragments made into
//! sentences, and ratios turned number-first.

/// "57×", "5.0×", "1.3×": how many times as fast, in framecost's own wording.
pub fn times(r: f64) -> String {
    if !r.is_finite() {
        "—".into()
    } else if r >= 10.0 {
        format!("{r:.0}×")
    } else {
        format!("{r:.1}×")
    }
}

/// A fragment made into a sentence: first letter upper-case, ending in a full stop.
pub fn sentence(s: &str) -> String {
    let t = s.trim().trim_end_matches([';', ',', ':']).trim_end();
    let mut out = String::with_capacity(t.len() + 1);
    let mut chars = t.chars();
    if let Some(c) = chars.next() {
        out.extend(c.to_uppercase());
        out.push_str(chars.as_str());
    }
    if !out.is_empty() && !out.ends_with(['.', '!', '?']) {
        out.push('.');
    }
    out
}

/// Ratios written the old way round ("×1.06") put the number first ("1.06×"), the way every
/// other multiple in framecost's summaries reads.
pub fn number_first(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '×' && chars.peek().is_some_and(|d| d.is_ascii_digit()) {
            let mut num = String::new();
            while let Some(&d) = chars.peek() {
                if d.is_ascii_digit() || (d == '.' && !num.is_empty()) {
                    num.push(d);
                    chars.next();
                } else {
                    break;
                }
            }
            let trail = if num.ends_with('.') { num.pop(); "." } else { "" };
            out.push_str(&num);
            out.push('×');
            out.push_str(trail);
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sentences_are_clean() {
        assert_eq!(sentence("the cost barely depends on rows"), "The cost barely depends on rows.");
        assert_eq!(sentence("`a` is fine;"), "`a` is fine.");
        assert_eq!(sentence("Done."), "Done.");
        assert_eq!(times(57.04), "57×");
        assert_eq!(times(4.96), "5.0×");
        assert_eq!(number_first("within the noise (×1.06 [×0.98–×1.12]) by ×2."), "within the noise (1.06× [0.98×–1.12×]) by 2×.");
    }
}
