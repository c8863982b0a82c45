//! Held-out scores for pitch-type predictions: accuracy, log loss (in nats
//! and bits) and one-vs-rest accuracy against the majority guess.
//!
//! Classes are column indices `0..n_classes` of the probability rows; the
//! caller fixes the label set (the training label set), the equivalent of
//! passing `labels=` to scikit-learn, so a pitch type missing from a test
//! fold still has its column.

/// Why a score could not be computed.
#[derive(Debug, Clone, PartialEq)]
pub enum MetricsError {
    /// Predictions and labels differ in number.
    LengthMismatch { predictions: usize, labels: usize },
    /// Row `row` has a different number of classes than row 0.
    RaggedRow {
        row: usize,
        len: usize,
        expected: usize,
    },
    /// Row `row`'s true label is not a column of the probability rows.
    LabelOutOfRange {
        row: usize,
        label: usize,
        classes: usize,
    },
    /// A probability is below 0, above 1 or NaN (scikit-learn raises too).
    InvalidProbability { row: usize, value: f64 },
    /// No rows to score.
    Empty,
}

impl std::fmt::Display for MetricsError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            MetricsError::LengthMismatch {
                predictions,
                labels,
            } => {
                write!(f, "{predictions} predictions for {labels} labels")
            }
            MetricsError::RaggedRow { row, len, expected } => {
                write!(
                    f,
                    "probability row {row} has {len} classes, expected {expected}"
                )
            }
            MetricsError::LabelOutOfRange {
                row,
                label,
                classes,
            } => {
                write!(
                    f,
                    "row {row}: label {label} is not one of the {classes} classes"
                )
            }
            MetricsError::InvalidProbability { row, value } => {
                write!(f, "row {row}: probability {value} is not in [0, 1]")
            }
            MetricsError::Empty => write!(f, "no rows to score"),
        }
    }
}

impl std::error::Error for MetricsError {}

/// Share of rows where `predicted[i] == actual[i]`, as
/// `sklearn.metrics.accuracy_score(actual, predicted)`.
pub fn accuracy(predicted: &[usize], actual: &[usize]) -> Result<f64, MetricsError> {
    if predicted.len() != actual.len() {
        return Err(MetricsError::LengthMismatch {
            predictions: predicted.len(),
            labels: actual.len(),
        });
    }
    if actual.is_empty() {
        return Err(MetricsError::Empty);
    }
    let hits = predicted.iter().zip(actual).filter(|(p, a)| p == a).count();
    Ok(hits as f64 / actual.len() as f64)
}

/// Index of the largest probability; the first one on ties (numpy's
/// `argmax`, so a tie goes to the lower class index deterministically).
/// `None` for an empty row.
pub fn argmax(row: &[f64]) -> Option<usize> {
    let mut best: Option<usize> = None;
    for (i, &v) in row.iter().enumerate() {
        // Only a strictly larger value replaces the current best.
        if best.is_none_or(|b| v > row[b]) {
            best = Some(i);
        }
    }
    best
}

/// Mean log loss (cross-entropy) of probability rows against true labels.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LogLoss {
    /// Mean `-ln p(true class)`, natural log (scikit-learn's unit).
    pub nats: f64,
    /// The same in bits: `nats / ln 2`.
    pub bits: f64,
    /// Rows whose probabilities do not sum to 1 within scikit-learn's
    /// relative tolerance sqrt(ε) (it warns about these and we count them).
    pub rows_not_summing_to_one: usize,
}

/// Log loss of `probabilities` (one row per pitch, one column per class)
/// against `actual` labels, matching `sklearn.metrics.log_loss(actual,
/// probabilities, labels=0..n_classes)` as of scikit-learn 1.9:
///
/// * each probability is clipped to `[ε, 1 - ε]` (ε = f64 machine epsilon),
///   so a true class given probability 0 costs `-ln ε ≈ 36.04` nats, not ∞;
/// * rows are **not** renormalised: a row that does not sum to 1 is scored
///   on its true-class entry as given (scikit-learn warns; releases before
///   1.5 divided by the row sum instead). Such rows are counted in
///   `rows_not_summing_to_one`.
pub fn log_loss<R: AsRef<[f64]>>(
    probabilities: &[R],
    actual: &[usize],
) -> Result<LogLoss, MetricsError> {
    if probabilities.len() != actual.len() {
        return Err(MetricsError::LengthMismatch {
            predictions: probabilities.len(),
            labels: actual.len(),
        });
    }
    if actual.is_empty() {
        return Err(MetricsError::Empty);
    }
    let classes = probabilities[0].as_ref().len();
    let eps = f64::EPSILON;
    let tol = eps.sqrt();
    let mut total = 0.0;
    let mut off = 0;
    for (row, (p, &label)) in probabilities.iter().zip(actual).enumerate() {
        let p = p.as_ref();
        if p.len() != classes {
            return Err(MetricsError::RaggedRow {
                row,
                len: p.len(),
                expected: classes,
            });
        }
        if label >= classes {
            return Err(MetricsError::LabelOutOfRange {
                row,
                label,
                classes,
            });
        }
        if let Some(&value) = p.iter().find(|&&v| !(0.0..=1.0).contains(&v)) {
            return Err(MetricsError::InvalidProbability { row, value });
        }
        let s: f64 = p.iter().sum();
        // numpy isclose(s, 1, rtol=sqrt(eps)): |s - 1| <= atol + rtol * 1, atol = 1e-8.
        if (s - 1.0).abs() > 1e-8 + tol {
            off += 1;
        }
        total -= p[label].clamp(eps, 1.0 - eps).ln();
    }
    let nats = total / actual.len() as f64;
    Ok(LogLoss {
        nats,
        bits: nats / std::f64::consts::LN_2,
        rows_not_summing_to_one: off,
    })
}

/// One class scored as a yes/no question ("is the next pitch this type?").
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct OneVsRest {
    /// Share of rows where "yes if probability > 0.5" was right.
    pub accuracy: f64,
    /// Accuracy of always giving the more common answer: `max(p, 1 - p)`
    /// with `p` the share of "yes" rows among the labels scored.
    pub prior_accuracy: f64,
    /// Number of rows scored.
    pub n: usize,
}

/// One-vs-rest accuracy of `probability` (the predicted probability of the
/// class, one per row) against `is_class`, beside the majority-guess
/// baseline `max(p, 1-p)`. A probability of exactly 0.5 counts as "no", as
/// an argmax over `[1 - q, q]` picks the first column on a tie.
pub fn one_vs_rest(probability: &[f64], is_class: &[bool]) -> Result<OneVsRest, MetricsError> {
    if probability.len() != is_class.len() {
        return Err(MetricsError::LengthMismatch {
            predictions: probability.len(),
            labels: is_class.len(),
        });
    }
    if is_class.is_empty() {
        return Err(MetricsError::Empty);
    }
    let n = is_class.len();
    let hits = probability
        .iter()
        .zip(is_class)
        .filter(|(&q, &y)| (q > 0.5) == y)
        .count();
    let p = is_class.iter().filter(|&&y| y).count() as f64 / n as f64;
    Ok(OneVsRest {
        accuracy: hits as f64 / n as f64,
        prior_accuracy: p.max(1.0 - p),
        n,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn argmax_takes_the_first_of_ties() {
        // numpy.argmax convention.
        assert_eq!(argmax(&[0.2, 0.4, 0.4]), Some(1));
        assert_eq!(argmax(&[]), None);
    }

    #[test]
    fn sklearn_docstring_example() {
        // scikit-learn log_loss docstring: log_loss(["spam", "ham", "ham",
        // "spam"], [[.1, .9], [.9, .1], [.8, .2], [.35, .65]]) = 0.21616...
        // (classes sorted: ham = 0, spam = 1).
        let p = [[0.1, 0.9], [0.9, 0.1], [0.8, 0.2], [0.35, 0.65]];
        let l = log_loss(&p, &[1, 0, 0, 1]).unwrap();
        assert!((l.nats - 0.21616).abs() < 5e-6, "{}", l.nats);
        assert!((l.bits - l.nats / 2f64.ln()).abs() < 1e-15);
    }

    #[test]
    fn one_vs_rest_baseline() {
        // 3 of 4 rows are "yes": always-yes is right 75% of the time.
        let r = one_vs_rest(&[0.9, 0.2, 0.6, 0.5], &[true, true, true, false]).unwrap();
        assert_eq!(r.prior_accuracy, 0.75);
        assert_eq!(r.accuracy, 0.75);
    }

    #[test]
    fn bad_input_is_an_error() {
        assert!(log_loss(&[[0.5, 0.6]], &[2]).is_err());
        assert!(log_loss(&[[1.5, 0.0]], &[0]).is_err());
        assert!(accuracy(&[1], &[1, 2]).is_err());
    }
}
