//! Benjamini–Hochberg false discovery rate control.
//!
//! Benjamini, Y. & Hochberg, Y. (1995) "Controlling the false discovery
//! rate: a practical and powerful approach to multiple testing", JRSS B 57,
//! 289–300. The q-value (BH-adjusted p-value) of the i-th smallest of m
//! p-values is `min_{j >= i} min(1, p_(j) m / j)`; rejecting every test with
//! q <= alpha is the BH step-up procedure at level alpha.

/// BH q-values for `p_values` in the order given.
///
/// Same values as statsmodels `multipletests(p, method="fdr_bh")[1]`: sort,
/// scale by m / rank, running minimum from the largest p down, cap at 1.
/// Tied p-values get the same q-value whatever their order, because the
/// running minimum carries the value of the highest rank among the ties
/// down to the others. An empty slice gives an empty vector.
///
/// # Panics
/// If a p-value is NaN or outside [0, 1]: that is a bug upstream, and any
/// q-value made from it would be meaningless.
pub fn bh_q_values(p_values: &[f64]) -> Vec<f64> {
    let m = p_values.len();
    for (i, &p) in p_values.iter().enumerate() {
        assert!(
            (0.0..=1.0).contains(&p),
            "p-value #{i} = {p} is not in [0, 1]"
        );
    }
    let mut order: Vec<usize> = (0..m).collect();
    // Stable sort: ties keep input order, which cannot matter (see above).
    order.sort_by(|&a, &b| p_values[a].total_cmp(&p_values[b]));
    let mut q = vec![0.0; m];
    let mut running = f64::INFINITY;
    for rank in (0..m).rev() {
        let i = order[rank];
        let scaled = p_values[i] * m as f64 / (rank + 1) as f64;
        running = running.min(scaled);
        q[i] = running.min(1.0);
    }
    q
}

/// Which tests the BH step-up procedure rejects at FDR level `alpha`
/// (q-value <= alpha).
pub fn bh_reject(p_values: &[f64], alpha: f64) -> Vec<bool> {
    bh_q_values(p_values)
        .into_iter()
        .map(|q| q <= alpha)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ties_share_a_q_value_and_order_does_not_matter() {
        // Property of the BH adjustment (statsmodels gives the same):
        // q-values are a function of the multiset of p-values.
        let p = [0.04, 0.01, 0.04, 0.03];
        let q = bh_q_values(&p);
        assert_eq!(q[0], q[2]);
        let mut rev = p;
        rev.reverse();
        let mut qr = bh_q_values(&rev);
        qr.reverse();
        assert_eq!(q, qr);
        // Hand computation: sorted 0.01,0.03,0.04,0.04 -> 0.04,0.04,0.04,0.04.
        for x in q {
            assert!((x - 0.04).abs() < 1e-15);
        }
    }

    #[test]
    fn capped_at_one_and_monotone() {
        let p = [0.9, 1.0, 0.95];
        let q = bh_q_values(&p);
        assert!(q.iter().all(|&x| x <= 1.0));
        assert!(bh_q_values(&[]).is_empty());
    }
}
