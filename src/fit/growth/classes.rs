//! The vocabulary of growth: the terms a curve is made of, the six classes named by
//! their leading term, their labels ("n or n log n"), and the log-log slopes each class
//! can show over the largest sizes. Kept apart from the fitting so that everything that
//! only names or evaluates a class (labels, curves, parsing old results) needs none of it.

/// One term of a growth curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Term {
    One,
    Log,
    N,
    NLogN,
    N2,
    N3,
}

impl Term {
    /// The term's value at size `n`.
    pub fn at(self, n: f64) -> f64 {
        match self {
            Term::One => 1.0,
            Term::Log => n.ln(),
            Term::N => n,
            Term::NLogN => n * n.ln(),
            Term::N2 => n * n,
            Term::N3 => n * n * n,
        }
    }

    /// "1", "log n", "n", "n log n", "n²", "n³".
    pub fn label(self) -> &'static str {
        match self {
            Term::One => "1",
            Term::Log => "log n",
            Term::N => "n",
            Term::NLogN => "n log n",
            Term::N2 => "n²",
            Term::N3 => "n³",
        }
    }

    /// Parse a [`label`](Self::label) back.
    pub fn from_label(text: &str) -> Option<Term> {
        [Term::One, Term::Log, Term::N, Term::NLogN, Term::N2, Term::N3].into_iter().find(|t| t.label() == text)
    }
}

/// "n", "n or n log n" for neighbouring classes, "n to n²" when a class between
/// the two is plausible too.
pub fn pair_label(best: GrowthClass, alternative: Option<GrowthClass>) -> String {
    let Some(alt) = alternative else { return best.label().to_string() };
    let (lo, hi) = if alt.rank() < best.rank() { (alt, best) } else { (best, alt) };
    if hi.rank() == lo.rank() + 1 {
        format!("{} or {}", lo.label(), hi.label())
    } else {
        format!("{} to {}", lo.label(), hi.label())
    }
}

/// The value of a curve `Σ coefᵢ·termᵢ(n)`.
pub fn curve_at(terms: &[(Term, f64)], n: f64) -> f64 {
    terms.iter().map(|(t, c)| c * t.at(n)).sum()
}

/// The log-log slopes a class's leading term can show over the largest sizes
/// (inclusive). Fitted with lower-order terms, a class's local slope lies
/// between 0 and its leading exponent; these bounds keep a class from being
/// named where its leading term has not shown (n² at slope 0.1) or cannot
/// explain the rise (constant across a hundredfold rise). A superlinear
/// class needs a slope near 1 at least — a quadratic term hidden under a
/// per-row cost shows as a slope just above 1, and AICc, not the slope,
/// decides whether its curvature is real. The margins cover the slope's own
/// noise: its standard error over four sizes of a doubling ladder is about
/// 0.07 at 10 % noise.
pub fn admissible_slopes(class: GrowthClass) -> (f64, f64) {
    match class {
        GrowthClass::Constant => (f64::NEG_INFINITY, 0.25),
        GrowthClass::Log => (f64::NEG_INFINITY, 0.6),
        GrowthClass::Linear => (0.3, 1.5),
        GrowthClass::Linearithmic => (0.5, 1.65),
        GrowthClass::Quadratic => (0.95, 2.6),
        GrowthClass::Cubic => (1.5, f64::INFINITY),
    }
}

/// How a cost grows with the size `n`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum GrowthClass {
    /// `a`: does not depend on `n`.
    Constant,
    /// `a + b·log n`.
    Log,
    /// `a + b·n`.
    Linear,
    /// `a + b·n·log n`.
    Linearithmic,
    /// `a + b·n²`.
    Quadratic,
    /// `a + b·n³`.
    Cubic,
}

impl GrowthClass {
    /// Every class, simplest first (the tie-break order).
    pub const ALL: [GrowthClass; 6] = [
        GrowthClass::Constant,
        GrowthClass::Log,
        GrowthClass::Linear,
        GrowthClass::Linearithmic,
        GrowthClass::Quadratic,
        GrowthClass::Cubic,
    ];

    /// Plain label: "constant", "log n", "n", "n log n", "n²", "n³".
    pub fn label(self) -> &'static str {
        match self {
            GrowthClass::Constant => "constant",
            GrowthClass::Log => "log n",
            GrowthClass::Linear => "n",
            GrowthClass::Linearithmic => "n log n",
            GrowthClass::Quadratic => "n²",
            GrowthClass::Cubic => "n³",
        }
    }

    /// Parse a label back. Accepts the exact [`label`](Self::label) strings
    /// and ASCII spellings ("1", "logn", "nlogn", "n^2", "n2", "n^3", "n3"),
    /// ignoring case and surrounding spaces.
    pub fn from_label(text: &str) -> Option<GrowthClass> {
        let t = text.trim().to_lowercase();
        let squashed: String = t.chars().filter(|c| !c.is_whitespace()).collect();
        match squashed.as_str() {
            "constant" | "1" => Some(GrowthClass::Constant),
            "logn" => Some(GrowthClass::Log),
            "n" => Some(GrowthClass::Linear),
            "nlogn" => Some(GrowthClass::Linearithmic),
            "n²" | "n^2" | "n2" => Some(GrowthClass::Quadratic),
            "n³" | "n^3" | "n3" => Some(GrowthClass::Cubic),
            _ => None,
        }
    }

    /// The shape `f(n)` multiplying `b`; 0 for the constant class, which has
    /// no `b`.
    pub fn shape(self, n: f64) -> f64 {
        match self {
            GrowthClass::Constant => 0.0,
            _ => self.leading().at(n),
        }
    }

    /// Every term the class is fitted with, lower-order terms first and the
    /// leading term last (module doc).
    pub fn terms(self) -> &'static [Term] {
        match self {
            GrowthClass::Constant => &[Term::One],
            GrowthClass::Log => &[Term::One, Term::Log],
            GrowthClass::Linear => &[Term::One, Term::N],
            GrowthClass::Linearithmic => &[Term::One, Term::N, Term::NLogN],
            GrowthClass::Quadratic => &[Term::One, Term::N, Term::N2],
            GrowthClass::Cubic => &[Term::One, Term::N, Term::N2, Term::N3],
        }
    }

    /// The term that names the class.
    pub fn leading(self) -> Term {
        *self.terms().last().unwrap_or(&Term::One)
    }

    /// Position in [`ALL`](Self::ALL): larger grows faster.
    pub fn rank(self) -> usize {
        GrowthClass::ALL.iter().position(|c| *c == self).unwrap_or(0)
    }
}

impl std::fmt::Display for GrowthClass {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_round_trip() {
        for c in GrowthClass::ALL {
            assert_eq!(GrowthClass::from_label(c.label()), Some(c));
        }
        assert_eq!(
            GrowthClass::from_label(" N^2 "),
            Some(GrowthClass::Quadratic)
        );
        assert_eq!(
            GrowthClass::from_label("nlogn"),
            Some(GrowthClass::Linearithmic)
        );
        assert_eq!(GrowthClass::from_label("n^1.1"), None);
        assert_eq!(GrowthClass::Cubic.to_string(), "n³");
    }
}
