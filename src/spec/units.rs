//! Small value types of workload files that people write in human form: row counts
//! (`250000`, `250k`, `1.5M`), durations (`800ms`, `10s`, `2m`) and shares (`0.03`, `3%`).
//!
//! Each has a serde visitor, so a malformed value is reported by serde_yaml at the exact
//! line and column of the scalar. Range checks (a share above 1, a zero budget) are left to
//! `validate`, which knows what the value is for.

use serde::de::{self, Deserializer, Visitor};
use serde::{Deserialize, Serialize};
use std::fmt;

/// A number of rows. Written as an integer or with a `k` / `M` / `G` suffix.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(transparent)]
pub struct RowCount(pub u64);

/// Parse `250k`, `1.5M`, `3G`, `1000`, `1_000`.
pub fn parse_rows(text: &str) -> Result<u64, String> {
    let t = text.trim().replace('_', "");
    let (num, mult) = match t.chars().last() {
        Some('k') | Some('K') => (&t[..t.len() - 1], 1e3),
        Some('M') | Some('m') => (&t[..t.len() - 1], 1e6),
        Some('G') | Some('g') => (&t[..t.len() - 1], 1e9),
        _ => (&t[..], 1.0),
    };
    let v: f64 = num
        .trim()
        .parse()
        .map_err(|_| format!("a row count such as 5000, 250k or 1.5M, found `{text}`"))?;
    let rows = v * mult;
    if !rows.is_finite() || rows < 0.0 {
        return Err(format!("a row count of zero or more, found `{text}`"));
    }
    if rows.fract() != 0.0 {
        return Err(format!("a whole number of rows, found `{text}`"));
    }
    if rows > 1e15 {
        return Err(format!("a row count below 10^15, found `{text}`"));
    }
    Ok(rows as u64)
}

impl<'de> Deserialize<'de> for RowCount {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = RowCount;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a row count such as 5000, 250k or 1.5M")
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<RowCount, E> {
                Ok(RowCount(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<RowCount, E> {
                if v < 0 {
                    Err(E::custom(format!("expected a row count of zero or more, found {v}")))
                } else {
                    Ok(RowCount(v as u64))
                }
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<RowCount, E> {
                parse_rows(&v.to_string()).map(RowCount).map_err(|e| E::custom(format!("expected {e}")))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<RowCount, E> {
                parse_rows(v).map(RowCount).map_err(|e| E::custom(format!("expected {e}")))
            }
        }
        d.deserialize_any(V)
    }
}

/// Short human form of a row count (kept here for the callers that parse and print rows).
pub use crate::units::rows_label;

/// A time span in seconds. Written as `800ms`, `10s`, `2m`, `1h` or a bare number of seconds.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Serialize)]
#[serde(transparent)]
pub struct Seconds(pub f64);

pub fn parse_seconds(text: &str) -> Result<f64, String> {
    let t = text.trim();
    // The unit is the trailing run of letters (so the `e` of `1e-3s` stays with the number).
    let split = t.trim_end_matches(|c: char| c.is_ascii_alphabetic() || c == 'µ').len();
    let (num, unit) = t.split_at(split);
    let v: f64 = num
        .trim()
        .parse()
        .map_err(|_| format!("a duration such as 500ms, 10s or 2m, found `{text}`"))?;
    let scale = match unit.trim() {
        "" | "s" | "sec" => 1.0,
        "ms" => 1e-3,
        "us" | "µs" => 1e-6,
        "m" | "min" => 60.0,
        "h" => 3600.0,
        other => return Err(format!("a duration unit of ms, s, m or h, found `{other}` in `{text}`")),
    };
    Ok(v * scale)
}

impl<'de> Deserialize<'de> for Seconds {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Seconds;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a duration such as 500ms, 10s or 2m")
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Seconds, E> {
                Ok(Seconds(v as f64))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Seconds, E> {
                Ok(Seconds(v as f64))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Seconds, E> {
                Ok(Seconds(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Seconds, E> {
                parse_seconds(v).map(Seconds).map_err(|e| E::custom(format!("expected {e}")))
            }
        }
        d.deserialize_any(V)
    }
}

/// A fraction. Written as `0.03` or `3%`.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Serialize)]
#[serde(transparent)]
pub struct Share(pub f64);

pub fn parse_share(text: &str) -> Result<f64, String> {
    let t = text.trim();
    if let Some(p) = t.strip_suffix('%') {
        p.trim()
            .parse::<f64>()
            .map(|v| v / 100.0)
            .map_err(|_| format!("a share such as 0.05 or 5%, found `{text}`"))
    } else {
        t.parse::<f64>().map_err(|_| format!("a share such as 0.05 or 5%, found `{text}`"))
    }
}

impl<'de> Deserialize<'de> for Share {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Share;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a share such as 0.05 or 5%")
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Share, E> {
                Ok(Share(v as f64))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Share, E> {
                Ok(Share(v as f64))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Share, E> {
                Ok(Share(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Share, E> {
                parse_share(v).map(Share).map_err(|e| E::custom(format!("expected {e}")))
            }
        }
        d.deserialize_any(V)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_forms() {
        assert_eq!(parse_rows("250k"), Ok(250_000));
        assert_eq!(parse_rows("1.5M"), Ok(1_500_000));
        assert_eq!(parse_rows("1_000"), Ok(1000));
        assert!(parse_rows("1.5").is_err());
        assert!(parse_rows("-3").is_err());
        assert!(parse_rows("lots").is_err());
    }

    #[test]
    fn durations_and_shares() {
        assert_eq!(parse_seconds("800ms"), Ok(0.8));
        assert_eq!(parse_seconds("2m"), Ok(120.0));
        assert_eq!(parse_seconds("1.5"), Ok(1.5));
        assert!(parse_seconds("10 parsecs").is_err());
        assert_eq!(parse_share("3%"), Ok(0.03));
        assert_eq!(parse_share("0.25"), Ok(0.25));
        assert!(parse_share("half").is_err());
    }
}
