//! Human units, in one home for every stage that prints a number or a name: times (ns, µs,
//! ms, s, min), bytes (B, KiB, MiB, GiB), row counts and sizes (950, 64k, 1.02M), ratios,
//! and names made safe to print. Pure functions of their arguments with no dependency on
//! the rest of the crate, so the results, the analysis, the explanations and the
//! presentation can all word numbers the same way without importing one another
//! (`present::units` and `spec::units::rows_label` re-export them).

/// Characters a printed name must not carry as they are: control characters (newlines,
/// terminal escape codes) and the invisible marks that reorder or hide text (bidirectional
/// overrides and isolates, zero-width characters, the byte-order mark).
pub fn unprintable(ch: char) -> bool {
    ch.is_control() || matches!(ch, '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FEFF}')
}

/// A name read from a spec or a results file, made safe to print: [`unprintable`]
/// characters are shown as `\n`, `\u{1b}`, `\u{202e}` and so on, so a name can neither
/// break a line of output, drive the terminal nor reorder what is shown. Other text is
/// unchanged.
pub fn escaped(name: &str) -> std::borrow::Cow<'_, str> {
    if !name.chars().any(unprintable) {
        return std::borrow::Cow::Borrowed(name);
    }
    let mut out = String::with_capacity(name.len() + 8);
    for ch in name.chars() {
        if unprintable(ch) {
            out.extend(ch.escape_default());
        } else {
            out.push(ch);
        }
    }
    std::borrow::Cow::Owned(out)
}

/// A time in the unit it reads best in; from two minutes on in minutes when `minutes`.
fn time_unit(ns: f64, minutes: bool) -> (f64, &'static str) {
    if ns < 1e3 {
        (ns, "ns")
    } else if ns < 1e6 {
        (ns / 1e3, "µs")
    } else if ns < 1e9 {
        (ns / 1e6, "ms")
    } else if ns < 120e9 || !minutes {
        (ns / 1e9, "s")
    } else {
        (ns / 60e9, "min")
    }
}

/// `812 ns`, `4.20 µs`, `13.1 ms`, `2.05 s`, `3.4 min`.
pub fn time_ns(ns: f64) -> String {
    if !ns.is_finite() {
        return "—".into();
    }
    let (v, u) = time_unit(ns, true);
    format!("{} {u}", three_digits(v))
}

/// `512 B`, `3.00 KiB`, `41.2 MiB`, `1.50 GiB`.
pub fn bytes(b: f64) -> String {
    if !b.is_finite() {
        return "—".into();
    }
    const K: f64 = 1024.0;
    let (v, u) = if b < K {
        (b, "B")
    } else if b < K * K {
        (b / K, "KiB")
    } else if b < K * K * K {
        (b / (K * K), "MiB")
    } else if b < K * K * K * K {
        (b / (K * K * K), "GiB")
    } else if b < K.powi(5) {
        (b / K.powi(4), "TiB")
    } else if b < K.powi(6) {
        (b / K.powi(5), "PiB")
    } else if b < K.powi(7) {
        (b / K.powi(6), "EiB")
    } else {
        // (An estimate of a join's rows can reach this; nothing holds it.)
        return format!("{b:.1e} B");
    };
    if u == "B" {
        format!("{} B", b.round())
    } else {
        format!("{} {u}", three_digits(v))
    }
}

fn three_digits(v: f64) -> String {
    if v >= 100.0 {
        format!("{v:.0}")
    } else if v >= 10.0 {
        format!("{v:.1}")
    } else {
        format!("{v:.2}")
    }
}

/// A time tick: round values print without trailing zeros (`500 µs`, `2 ms`, `1 s`,
/// `200 s`); seconds stay seconds on an axis.
pub fn time_tick(ns: f64) -> String {
    if !ns.is_finite() {
        return "—".into();
    }
    let (v, u) = time_unit(ns, false);
    format!("{} {u}", short(v))
}

/// A byte tick in binary units without trailing zeros: `512 B`, `4 KiB`, `1 MiB`, `1.5 GiB`.
pub fn bytes_tick(b: f64) -> String {
    let full = bytes(b);
    match full.split_once(' ') {
        Some((v, u)) if u != "B" => format!("{} {u}", v.parse::<f64>().map(short).unwrap_or_else(|_| v.to_string())),
        _ => full,
    }
}

/// A size on an axis or in a label: exact sizes as the rest of the tool writes them
/// ([`rows_label`]: 500, 64k, 2M) when that is short, otherwise three digits
/// (1.02M, never 1024k).
pub fn size_label(n: f64) -> String {
    if n.is_finite() && n >= 1.0 && n.fract() == 0.0 && n < 1e15 {
        let exact = rows_label(n as u64);
        let digits = exact.chars().filter(|c| c.is_ascii_digit()).count();
        if digits <= 3 {
            return exact;
        }
    }
    rows_label_f(n)
}

/// Short human form of a row count: 950, 12k, 1.5M.
pub fn rows_label(n: u64) -> String {
    fn trim(v: f64) -> String {
        let s = format!("{v:.1}");
        s.strip_suffix(".0").map(str::to_string).unwrap_or(s)
    }
    if n >= 1_000_000_000 && n % 100_000_000 == 0 {
        format!("{}G", trim(n as f64 / 1e9))
    } else if n >= 1_000_000 && n % 100_000 == 0 {
        format!("{}M", trim(n as f64 / 1e6))
    } else if n >= 1000 && n % 100 == 0 {
        format!("{}k", trim(n as f64 / 1e3))
    } else {
        n.to_string()
    }
}

/// A row count on an axis: 500, 1k, 2.5M (any positive number).
pub fn rows_label_f(n: f64) -> String {
    if !n.is_finite() || n <= 0.0 {
        return String::new();
    }
    if n >= 1e15 {
        return format!("{n:.1e}");
    }
    let (v, u) = if n >= 1e12 {
        (n / 1e12, "T")
    } else if n >= 1e9 {
        (n / 1e9, "G")
    } else if n >= 1e6 {
        (n / 1e6, "M")
    } else if n >= 1e3 {
        (n / 1e3, "k")
    } else {
        (n, "")
    };
    format!("{}{u}", short(v))
}

/// A number in at most three significant digits without trailing zeros: 2, 2.5, 12, 120.
pub fn short(v: f64) -> String {
    let s = if v >= 100.0 {
        format!("{v:.0}")
    } else if v >= 10.0 {
        format!("{v:.1}")
    } else {
        format!("{v:.2}")
    };
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// `×1.00`, `×12.3`, `×410`.
pub fn ratio(r: f64) -> String {
    if !r.is_finite() {
        return "—".into();
    }
    format!("×{}", three_digits(r))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_scale() {
        assert_eq!(time_ns(812.0), "812 ns");
        assert_eq!(time_ns(4200.0), "4.20 µs");
        assert_eq!(time_ns(13.1e6), "13.1 ms");
        assert_eq!(time_ns(2.05e9), "2.05 s");
        assert_eq!(bytes(512.0), "512 B");
        assert_eq!(bytes(3.0 * 1024.0), "3.00 KiB");
        assert_eq!(bytes(1.5 * 1024.0 * 1024.0 * 1024.0), "1.50 GiB");
        assert_eq!(bytes(3.0 * 1024f64.powi(5)), "3.00 PiB");
        assert_eq!(bytes(6.4e301), "6.4e301 B");
        assert_eq!(rows_label_f(1.53e9), "1.53G");
        assert_eq!(rows_label_f(2.5e12), "2.5T");
        assert_eq!(rows_label_f(1.5e60), "1.5e60");
        assert_eq!(ratio(12.34), "×12.3");
        assert_eq!(time_tick(5e5), "500 µs");
        assert_eq!(time_tick(2e6), "2 ms");
        assert_eq!(time_tick(2e11), "200 s");
        assert_eq!(bytes_tick(4096.0), "4 KiB");
        assert_eq!(bytes_tick(1024.0 * 1024.0), "1 MiB");
        assert_eq!(bytes_tick(512.0), "512 B");
        assert_eq!(size_label(64_000.0), "64k");
        assert_eq!(size_label(2_000_000.0), "2M");
        assert_eq!(size_label(1_024_000.0), "1.02M");
        assert_eq!(size_label(1500.0), "1.5k");
        assert_eq!(rows_label(1500), "1.5k");
        assert_eq!(rows_label(2_000_000), "2M");
        assert_eq!(rows_label(1234), "1234");
    }
}
