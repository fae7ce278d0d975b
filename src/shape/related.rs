//! Several samples related by key references, written as one workload with `tables:`.
//!
//! The flow: [`layout`] picks the references the workload can state (a referenced column
//! becomes a `key`, a referring one an integer `references:` it, so a column cannot be
//! both, and no two references may point at each other), names the tables as SQL
//! identifiers, lets the largest sample's table follow the swept size and gives every
//! other table its share of it (`rows: a/b`, the samples' proportion); [`workload`] writes
//! the YAML with the comments of the one-table skeletons, and two placeholder SQL designs
//! that join the first reference's tables (count after the join, or count before it).
//!
//! A newcomer must know: generated keys are the integers 0..rows−1 whatever the sample's
//! keys were (text codes included), so a referring column is modelled by what joins see —
//! how many rows share a key (the skew), and how many find none (`unmatched`) — not by its
//! values.

use super::infer::{empty_spec, expected_seen, solve_pool, Inferred};
use super::refs::Reference;
use super::render::{columns_yaml, sizes_yaml, yaml_str, Remodel, TableDoc};
use crate::spec::model::{ColumnKind, ColumnSpec, Order};
use crate::spec::units::Share;

/// How the related workload is laid out.
#[derive(Debug, Clone)]
pub struct Layout {
    /// The references stated as `references:` keys (a subset of those found).
    pub used: Vec<Reference>,
    /// Each table's name in the workload (an SQL identifier), in the samples' order.
    pub names: Vec<String>,
    /// The table whose rows follow the swept size (the largest sample).
    pub swept: usize,
    /// Every other table's share of the swept size, `(a, b)` for `rows: a/b`.
    pub shares: Vec<Option<(u64, u64)>>,
}

/// A table name that SQL and the spec accept: letters, digits and `_`, not starting with a
/// digit, at most 64 characters, unique among `taken` (compared without case).
pub fn identifier(name: &str, taken: &[String]) -> String {
    let mut base: String = name.chars().map(|c| if c.is_ascii_alphanumeric() { c } else { '_' }).take(60).collect();
    if base.is_empty() || base.starts_with(|c: char| c.is_ascii_digit()) {
        base = format!("t_{base}");
        base.truncate(60);
    }
    let mut out = base.clone();
    let mut i = 2;
    while taken.iter().any(|t| t.eq_ignore_ascii_case(&out)) {
        out = format!("{base}_{i}");
        i += 1;
    }
    out
}

/// `rows / of` as `a/b` with 1 ≤ a ≤ 1000 and b ≤ 10⁶ (what `rows:` accepts), exact when
/// the reduced fraction fits, else the nearest with those bounds.
pub fn share(rows: usize, of: usize) -> (u64, u64) {
    fn gcd(a: u64, b: u64) -> u64 {
        if b == 0 {
            a
        } else {
            gcd(b, a % b)
        }
    }
    let (r, n) = (rows.max(1) as u64, of.max(1) as u64);
    let g = gcd(r, n);
    let (a, b) = (r / g, n / g);
    if a <= 1000 && b <= 1_000_000 {
        return (a, b);
    }
    let x = r as f64 / n as f64;
    let (a, b) = if x * 1e6 <= 1000.0 { (((x * 1e6).round() as u64).max(1), 1_000_000) } else { (1000, ((1000.0 / x).round() as u64).clamp(1, 1_000_000)) };
    let g = gcd(a, b);
    (a / g, b / g)
}

/// The layout of `tables` (name, rows) related by `found`, or None when no reference can
/// be stated.
pub fn layout(tables: &[(&str, usize)], found: &[Reference]) -> Option<Layout> {
    // A larger table referring to a smaller one first (facts point at what they describe),
    // then references whose names relate, then those covering more of their values.
    let rows = |t: &str| tables.iter().find(|x| x.0 == t).map_or(0, |x| x.1);
    let rank = |r: &Reference| (rows(&r.table) > rows(&r.refers_to_table), r.names_relate, r.found as f64 / r.distinct.max(1) as f64);
    let mut order: Vec<&Reference> = found.iter().collect();
    order.sort_by(|x, y| rank(y).partial_cmp(&rank(x)).unwrap_or(std::cmp::Ordering::Equal));
    let mut used: Vec<Reference> = Vec::new();
    for r in order {
        let src = (&r.table, &r.column);
        let dst = (&r.refers_to_table, &r.refers_to_column);
        let is_target = |t: &String, c: &String| used.iter().any(|u| &u.refers_to_table == t && &u.refers_to_column == c);
        let is_source = |t: &String, c: &String| used.iter().any(|u| &u.table == t && &u.column == c);
        // A key cannot refer, a reference cannot be referred to, a column refers once.
        if is_target(src.0, src.1) || is_source(dst.0, dst.1) || is_source(src.0, src.1) {
            continue;
        }
        used.push(r.clone());
    }
    if used.is_empty() {
        return None;
    }
    let mut names: Vec<String> = Vec::new();
    for (n, _) in tables {
        let id = identifier(n, &names);
        names.push(id);
    }
    let swept = tables.iter().enumerate().max_by(|a, b| a.1 .1.cmp(&b.1 .1).then(b.0.cmp(&a.0))).map(|(i, _)| i)?;
    let shares = tables.iter().enumerate().map(|(i, t)| (i != swept).then(|| share(t.1, tables[swept].1))).collect();
    Some(Layout { used, names, swept, shares })
}

/// The share of `keys` that `draws` rows must be drawn from (with `skew`) to show `found`
/// distinct keys, as the sample did (the same occupancy solve as a category's pool,
/// [`super::infer::solve_pool`]); None when drawing from every key already shows no more
/// than a tenth over `found` (the referring column then covers the key as the model does).
pub fn coverage(found: u64, draws: u64, keys: u64, skew: f64) -> Option<f64> {
    if found == 0 || draws == 0 || keys <= found || expected_seen(keys, skew, draws as f64) <= 1.1 * found as f64 {
        return None;
    }
    let (pool, _) = solve_pool(found, skew, draws as f64, keys);
    Some(((pool as f64 / keys as f64) * 1e4).round().max(1.0) / 1e4)
}

/// A name as an SQL identifier in double quotes.
fn quoted(name: &str) -> String {
    format!("\"{}\"", name.replace('"', "\"\""))
}

/// The spec a column takes in the related workload, when it changes.
fn remodel(l: &Layout, docs: &[TableDoc], table: usize, c: &Inferred) -> Remodel {
    let name = &c.profile.name;
    let inferred = c.spec.as_ref().ok();
    let nulls = inferred.and_then(|s| s.nulls);
    let tname = docs[table].name;
    if let Some(r) = l.used.iter().find(|r| r.table == tname && &r.column == name) {
        let target = docs.iter().position(|d| d.name == r.refers_to_table)?;
        let skew = inferred.and_then(|s| s.skew);
        let unmatched = (r.unmatched_rows > 0.0).then(|| Share((r.unmatched_rows * 1e4).round().max(1.0) / 1e4));
        let matched_rows = ((c.profile.rows - c.profile.nulls) as f64 * (1.0 - r.unmatched_rows)).round() as u64;
        let coverage = coverage(r.found as u64, matched_rows, r.target_values as u64, skew.unwrap_or(0.0)).map(Share);
        let spec = ColumnSpec {
            nulls,
            skew,
            references: Some(format!("{}.{}", l.names[target], r.refers_to_column)),
            unmatched,
            coverage,
            ..empty_spec(name, ColumnKind::Int)
        };
        let why = format!(
            "related: drawn from {}the keys of {}.{}{}{}; the values themselves are integers like those keys",
            coverage.map(|v| format!("{:.2}% of ", v.0 * 100.0)).unwrap_or_default(),
            l.names[target],
            r.refers_to_column,
            skew.map(|s| format!(" with skew {s} (how unevenly rows share a key)")).unwrap_or_default(),
            unmatched.map(|u| format!(", {:.2}% of rows without a match (a join drops them)", u.0 * 100.0)).unwrap_or_default()
        );
        return Some((spec, why));
    }
    if l.used.iter().any(|r| r.refers_to_table == tname && &r.refers_to_column == name) {
        if inferred.is_some_and(|s| s.kind == ColumnKind::Key && s.duplicates.is_none()) {
            return None;
        }
        let order = match inferred.map(|s| s.order) {
            Some(o @ (Order::Sorted | Order::Reverse)) => o,
            _ => Order::Random,
        };
        let spec = ColumnSpec { order, ..empty_spec(name, ColumnKind::Key) };
        return Some((spec, "related: referenced by another table, so a key (the integers 0..rows−1, each once)".to_string()));
    }
    None
}

/// The whole related workload: every table, the references as keys, two SQL placeholders.
pub fn workload(l: &Layout, docs: &[TableDoc], seed: u64) -> String {
    let main = &docs[l.swept];
    let files: Vec<String> = docs.iter().map(|d| format!("{} ({} rows)", d.file, d.rows)).collect();
    let refs: Vec<String> = l.used.iter().map(|r| format!("{}.{} → {}.{}", named(l, docs, &r.table), r.column, named(l, docs, &r.refers_to_table), r.refers_to_column)).collect();
    let mut y = String::new();
    y += &format!("# Workload skeleton written by `framecost shape` from {}.\n", files.join(", "));
    y += "# The tables mirror the samples and are related by the key references found between them:\n";
    for r in &refs {
        y += &format!("#   {r}\n");
    }
    y += "# A referring column draws its values from the referenced key, so a join finds as many\n";
    y += "# rows per key and as many rows without a match as in the samples. The designs below\n";
    y += "# are placeholders: replace them with the designs you want to compare.\n";
    let mut name: String = docs.iter().map(|d| d.name).collect::<Vec<_>>().join("-");
    name.truncate(64);
    y += &format!("name: {}\n", yaml_str(name.trim_end_matches('-')));
    y += &format!(
        "about: >\n  Tables shaped like {}, related by {}.\n",
        docs.iter().map(|d| format!("{} ({} rows, {} columns)", d.file, d.rows, d.columns.len())).collect::<Vec<_>>().join(" and "),
        refs.join(", ")
    );
    y += &format!("seed: {seed}\n");
    y += "tables:\n";
    for (i, d) in docs.iter().enumerate() {
        y += &format!("  - name: {}\n", l.names[i]);
        match l.shares[i] {
            None => y += &format!("    # the largest sample ({} rows): its rows follow the sizes below\n", d.rows),
            Some((a, b)) => {
                y += &format!(
                    "    # {} rows beside the {} of `{}` in the samples: that share of every swept size\n    # (`rows: {}` would keep it at the sample's size whatever the sweep)\n",
                    d.rows, main.rows, l.names[l.swept], d.rows
                );
                y += &format!("    rows: {a}/{b}\n");
            }
        }
        y += "    columns:\n";
        y += &columns_yaml(d, "      ", &|c| remodel(l, docs, i, c));
    }
    y += &sizes_yaml(main.rows, main.full_rows);
    y += "budget: {per_point: 2s, whole_run: 60s}\n";
    y += &placeholders(l, docs);
    y
}

/// The workload's name of the sample table `table`.
fn named<'a>(l: &'a Layout, docs: &[TableDoc], table: &'a str) -> &'a str {
    docs.iter().position(|d| d.name == table).map_or(table, |i| l.names[i].as_str())
}

/// Two SQL designs over the first reference: count each key's referring rows after joining,
/// or count them first and join the counts. Both give one row per matched key.
fn placeholders(l: &Layout, docs: &[TableDoc]) -> String {
    let r = &l.used[0];
    let (fact_name, dim_name) = (named(l, docs, &r.table), named(l, docs, &r.refers_to_table));
    let (fact, dim) = (quoted(fact_name), quoted(dim_name));
    let (fc, dc) = (quoted(&r.column), quoted(&r.refers_to_column));
    let mut y = format!("designs:   # placeholders: two ways to count the rows of {fact_name} per key of {dim_name}\n");
    y += "  - name: join-then-count\n";
    y += &format!("    about: join every row of {fact_name} to its {dim_name} row, then count per key\n");
    y += "    steps:\n      - sql:\n          query: |\n";
    y += &format!("            SELECT f.{fc} AS referenced_key, COUNT(*) AS matched_rows\n");
    y += &format!("            FROM {fact} AS f JOIN {dim} AS d ON f.{fc} = d.{dc}\n");
    y += &format!("            GROUP BY f.{fc}\n");
    y += "            ORDER BY referenced_key\n";
    y += "  - name: count-then-join\n";
    y += &format!("    about: count the rows of {fact_name} per key first, then join the counts to {dim_name}\n");
    y += "    steps:\n      - sql:\n          query: |\n";
    y += &format!("            SELECT c.k AS referenced_key, c.matched_rows\n");
    y += &format!("            FROM (SELECT {fc} AS k, COUNT(*) AS matched_rows FROM {fact} GROUP BY {fc}) AS c\n");
    y += &format!("            JOIN {dim} AS d ON c.k = d.{dc}\n");
    y += "            ORDER BY referenced_key\n";
    y
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shares_are_exact_when_they_fit_and_nearest_within_the_bounds_otherwise() {
        assert_eq!(share(120, 5000), (3, 125));
        assert_eq!(share(5000, 5000), (1, 1));
        // 3376/5366 reduces to 1688/2683: a over 1000, so 1000/1589 (5366 × 1000/1589 = 3376.9).
        assert_eq!(share(3376, 5366), (1000, 1589));
        // Very small tables: a share of a million.
        assert_eq!(share(3, 10_000_000), (1, 1_000_000));
    }

    #[test]
    fn identifiers_are_sql_names_and_unique() {
        assert_eq!(identifier("flights-airport", &[]), "flights_airport");
        assert_eq!(identifier("2024 sales", &[]), "t_2024_sales");
        assert_eq!(identifier("a", &["A".into()]), "a_2");
    }

    fn r(t: &str, c: &str, rt: &str, rc: &str) -> Reference {
        Reference { table: t.into(), column: c.into(), refers_to_table: rt.into(), refers_to_column: rc.into(), distinct: 10, found: 10, target_values: 10, names_relate: true, unmatched_rows: 0.0 }
    }

    #[test]
    fn a_key_never_refers_and_two_unique_columns_do_not_refer_to_each_other() {
        // Two one-to-one tables: each `id` lies within the other. Only one direction is kept.
        let found = [r("a", "id", "b", "id"), r("b", "id", "a", "id"), r("c", "a_id", "a", "id")];
        let l = layout(&[("a", 100), ("b", 100), ("c", 1000)], &found).expect("layout");
        assert_eq!(l.used.len(), 2, "{:?}", l.used);
        assert!(l.used.iter().any(|u| u.table == "c"));
        for u in &l.used {
            assert!(!l.used.iter().any(|v| v.refers_to_table == u.table && v.refers_to_column == u.column), "{:?}", l.used);
        }
        assert_eq!(l.swept, 2);
        assert_eq!(l.shares, vec![Some((1, 10)), Some((1, 10)), None]);
    }

    #[test]
    fn coverage_reproduces_the_distinct_keys_a_sample_referred_to() {
        // Uniform draws: 5366 draws from m keys show m·(1 − (1 − 1/m)^5366) distinct on
        // average (the classical occupancy expectation, balls in boxes; Feller, An
        // Introduction to Probability Theory, vol. 1, ch. II — cited from memory); 303
        // distinct need m just above 303.
        let c = coverage(303, 5366, 3376, 0.0).expect("a subset");
        let m = (c * 3376.0).round() as u64;
        assert!((303..=306).contains(&m), "{c} → {m}");
        let direct = m as f64 * (1.0 - (1.0 - 1.0 / m as f64).powf(5366.0));
        assert!((direct - 303.0).abs() < 1.0, "{direct}");
        // Every key drawn many times: the full key, no coverage.
        assert_eq!(coverage(120, 5000, 120, 0.15), None);
        // With a strong skew, more keys are needed to show the same distinct count.
        let skewed = coverage(303, 5366, 3376, 1.2).expect("a subset");
        assert!(skewed > c, "{skewed} vs {c}");
        assert!((expected_seen((skewed * 3376.0).round() as u64, 1.2, 5366.0) - 303.0).abs() < 3.0);
    }
}
