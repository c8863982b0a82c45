//! r x c contingency-table tests of independence: Pearson's chi-square and
//! the G-test (log-likelihood ratio), matching
//! `scipy.stats.chi2_contingency(observed, correction, lambda_)`.
//!
//! * Expected counts: `row_total * column_total / grand_total`.
//! * Pearson: `X² = Σ (O - E)² / E`. G-test: `G = 2 Σ O ln(O / E)` with
//!   `0 ln 0 = 0`. Both are referred to chi-square with
//!   `dof = (r - 1)(c - 1)`.
//! * Yates' continuity correction (Yates 1934), only when `dof == 1` and asked
//!   for, done as scipy does it: every observed count is moved towards its
//!   expected count by `min(0.5, |O - E|)` before the statistic is computed.
//!   scipy applies this shift to the G statistic too, and so do we.
//! * `dof == 0` (one row or one column left): statistic 0, p-value 1, as scipy.
//!
//! All-zero rows and columns: an empty row or column has expected count 0
//! everywhere, which scipy rejects with an error. It carries no information
//! about association, so we drop it before testing and compute the degrees of
//! freedom on the reduced table (what scipy gives on the table with those
//! rows and columns deleted). The indices that were kept are reported. A
//! table with no counts at all gives statistic 0, p = 1, dof 0.

use statrs::distribution::{ChiSquared, ContinuousCDF};

/// Which statistic to compute.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum TableStatistic {
    /// Pearson's chi-square, `Σ (O - E)² / E`.
    PearsonChiSquare,
    /// G-test, `2 Σ O ln(O / E)` (scipy's `lambda_="log-likelihood"`).
    LogLikelihoodRatio,
}

/// Result of a contingency-table test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TableTest {
    pub statistic: f64,
    pub dof: usize,
    pub p_value: f64,
    /// Expected counts under independence, for the kept rows and columns.
    pub expected: Vec<Vec<f64>>,
    /// Indices of the input rows kept (rows with a non-zero total).
    pub kept_rows: Vec<usize>,
    /// Indices of the input columns kept (columns with a non-zero total).
    pub kept_columns: Vec<usize>,
    /// Whether Yates' correction was applied (asked for and dof == 1).
    pub yates_applied: bool,
}

/// The table was not rectangular.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RaggedTable {
    pub row: usize,
    pub len: usize,
    pub expected_len: usize,
}

impl std::fmt::Display for RaggedTable {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "contingency table row {} has {} cells, expected {}",
            self.row, self.len, self.expected_len
        )
    }
}

impl std::error::Error for RaggedTable {}

/// Test independence of rows and columns of `table` (counts, rows of equal
/// length). `yates`: apply Yates' continuity correction when dof == 1
/// (scipy's `correction=True`, its default).
pub fn table_test<R: AsRef<[u64]>>(
    table: &[R],
    statistic: TableStatistic,
    yates: bool,
) -> Result<TableTest, RaggedTable> {
    let width = table.first().map_or(0, |r| r.as_ref().len());
    for (i, r) in table.iter().enumerate() {
        if r.as_ref().len() != width {
            return Err(RaggedTable {
                row: i,
                len: r.as_ref().len(),
                expected_len: width,
            });
        }
    }
    let row_tot: Vec<u64> = table.iter().map(|r| r.as_ref().iter().sum()).collect();
    let col_tot: Vec<u64> = (0..width)
        .map(|j| table.iter().map(|r| r.as_ref()[j]).sum())
        .collect();
    let kept_rows: Vec<usize> = (0..table.len()).filter(|&i| row_tot[i] > 0).collect();
    let kept_columns: Vec<usize> = (0..width).filter(|&j| col_tot[j] > 0).collect();
    let total: u64 = row_tot.iter().sum();

    let expected: Vec<Vec<f64>> = kept_rows
        .iter()
        .map(|&i| {
            kept_columns
                .iter()
                .map(|&j| row_tot[i] as f64 * col_tot[j] as f64 / total as f64)
                .collect()
        })
        .collect();
    let dof = kept_rows.len().saturating_sub(1) * kept_columns.len().saturating_sub(1);
    if dof == 0 {
        return Ok(TableTest {
            statistic: 0.0,
            dof,
            p_value: 1.0,
            expected,
            kept_rows,
            kept_columns,
            yates_applied: false,
        });
    }
    let yates_applied = yates && dof == 1;
    let mut stat = 0.0;
    for (ei, &i) in kept_rows.iter().enumerate() {
        for (ej, &j) in kept_columns.iter().enumerate() {
            let e = expected[ei][ej];
            let mut o = table[i].as_ref()[j] as f64;
            if yates_applied {
                let diff = e - o;
                o += diff.signum() * diff.abs().min(0.5);
            }
            stat += match statistic {
                TableStatistic::PearsonChiSquare => (o - e) * (o - e) / e,
                TableStatistic::LogLikelihoodRatio => g_term(o, e),
            };
        }
    }
    let chi = ChiSquared::new(dof as f64).expect("dof > 0");
    let p_value = chi.sf(stat).clamp(0.0, 1.0);
    Ok(TableTest {
        statistic: stat,
        dof,
        p_value,
        expected,
        kept_rows,
        kept_columns,
        yates_applied,
    })
}

/// One cell's term of the G statistic: 2·o·ln(o/e), 0 for an empty cell.
pub fn g_term(observed: f64, expected: f64) -> f64 {
    if observed > 0.0 {
        2.0 * observed * (observed / expected).ln()
    } else {
        0.0
    }
}

/// Whether expected counts are large enough to trust the chi-square
/// approximation, by Cochran's rule: no expected count below 1 and at least
/// 80% of them at 5 or more. Cochran, W. G. (1954) "Some methods for
/// strengthening the common χ² tests", Biometrics 10, 417–451. When this
/// says no, use an exact test (e.g. Fisher's for 2x2) or a permutation test.
/// An empty table gives `false`.
pub fn expected_counts_allow_asymptotic<R: AsRef<[f64]>>(expected: &[R]) -> bool {
    let cells: Vec<f64> = expected
        .iter()
        .flat_map(|r| r.as_ref().iter().copied())
        .collect();
    if cells.is_empty() || cells.iter().any(|&e| e.is_nan() || e < 1.0) {
        return false;
    }
    let at_least_five = cells.iter().filter(|&&e| e >= 5.0).count();
    // 80% without floating point: 5 * count >= 4 * cells.
    5 * at_least_five >= 4 * cells.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ragged_table_is_an_error() {
        let t: Vec<Vec<u64>> = vec![vec![1, 2], vec![3]];
        assert!(table_test(&t, TableStatistic::PearsonChiSquare, true).is_err());
    }

    #[test]
    fn empty_table_has_no_evidence() {
        let t = [[0u64, 0], [0, 0]];
        let r = table_test(&t, TableStatistic::PearsonChiSquare, true).unwrap();
        assert_eq!((r.statistic, r.p_value, r.dof), (0.0, 1.0, 0));
    }

    #[test]
    fn cochran_rule() {
        // Cochran (1954): all >= 1 and >= 80% at 5 or more.
        assert!(!expected_counts_allow_asymptotic(&[[5.0, 5.0], [5.0, 1.0]])); // 75% >= 5
        assert!(expected_counts_allow_asymptotic(&[[
            5.0, 5.0, 5.0, 5.0, 1.0
        ]])); // 80%
        assert!(!expected_counts_allow_asymptotic(&[[
            50.0, 50.0, 50.0, 50.0, 0.9
        ]]));
        assert!(!expected_counts_allow_asymptotic::<[f64; 0]>(&[]));
    }
}
