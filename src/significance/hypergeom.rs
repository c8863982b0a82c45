//! Hypergeometric probabilities and Fisher's exact test for 2x2 tables.
//!
//! `X ~ Hypergeom(N, K, n)`: the number of successes in `n` draws without
//! replacement from a population of `N` items of which `K` are successes.
//!
//! Single probabilities use Catherine Loader's saddle-point form
//! ("Fast and accurate computation of binomial probabilities", 2000), the
//! form R's `dhyper` uses: the pmf is a ratio of three binomial
//! probabilities, each written with the Stirling-series error `stirlerr` and
//! the deviance term `bd0`. It costs O(1) and keeps about 14 significant
//! digits even for populations of millions, where differences of
//! log-factorials of size ~10^7 would lose half of them to cancellation.
//!
//! Tail sums start at the requested point and walk *away* from the mode
//! with the ratio `pmf(x+1)/pmf(x)`, so every term is smaller than the one
//! before and the walk stops as soon as the remaining terms cannot change the
//! sum. A tail that contains the mode is computed as one minus the opposite
//! tail. The cost is therefore O(standard deviation), not O(n).

/// Direction of the alternative hypothesis for [`fisher_2x2`], as in
/// `scipy.stats.fisher_exact(alternative=...)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Alternative {
    /// Odds ratio above 1: the top-left cell is larger than independence predicts.
    Greater,
    /// Odds ratio below 1.
    Less,
    /// Either direction (scipy's way of summing small tables, see [`fisher_2x2`]).
    TwoSided,
}

const LN_2PI: f64 = 1.837_877_066_409_345_5;

/// Terms smaller than this fraction of the running sum end a tail walk. The
/// terms fall at least geometrically past that point, so what is left is far
/// below double precision.
const TAIL_CUTOFF: f64 = 1e-20;

/// Error of Stirling's formula: `ln(n!) - [(n + 1/2) ln n - n + ln sqrt(2 pi)]`.
/// Loader (2000); series coefficients are the Stirling series 1/12, 1/360, ...
fn stirlerr(n: f64) -> f64 {
    const S0: f64 = 1.0 / 12.0;
    const S1: f64 = 1.0 / 360.0;
    const S2: f64 = 1.0 / 1260.0;
    const S3: f64 = 1.0 / 1680.0;
    const S4: f64 = 1.0 / 1188.0;
    if n <= 15.0 {
        // Small n: statrs keeps exact factorials up to 170!, so the direct
        // difference is accurate here.
        return statrs::function::factorial::ln_factorial(n as u64) - (n + 0.5) * n.ln() + n
            - 0.5 * LN_2PI;
    }
    let nn = n * n;
    if n > 500.0 {
        (S0 - S1 / nn) / n
    } else if n > 80.0 {
        (S0 - (S1 - S2 / nn) / nn) / n
    } else if n > 35.0 {
        (S0 - (S1 - (S2 - S3 / nn) / nn) / nn) / n
    } else {
        (S0 - (S1 - (S2 - (S3 - S4 / nn) / nn) / nn) / nn) / n
    }
}

/// Deviance term `x ln(x / np) + np - x`, by a Taylor series when `x` is
/// close to `np` (where the direct form cancels). Loader (2000).
fn bd0(x: f64, np: f64) -> f64 {
    if (x - np).abs() < 0.1 * (x + np) {
        let mut v = (x - np) / (x + np);
        let mut s = (x - np) * v;
        if s.abs() < f64::MIN_POSITIVE {
            return s;
        }
        let mut ej = 2.0 * x * v;
        v *= v;
        for j in 1..1000 {
            ej *= v;
            let s1 = s + ej / (2 * j + 1) as f64;
            if s1 == s {
                return s1;
            }
            s = s1;
        }
        return s;
    }
    x * (x / np).ln() + np - x
}

/// ln P(Binomial(n, p) = x) with `q = 1 - p` passed separately (Loader 2000).
fn ln_dbinom_raw(x: f64, n: f64, p: f64, q: f64) -> f64 {
    if p == 0.0 {
        return if x == 0.0 { 0.0 } else { f64::NEG_INFINITY };
    }
    if q == 0.0 {
        return if x == n { 0.0 } else { f64::NEG_INFINITY };
    }
    if x == 0.0 {
        if n == 0.0 {
            return 0.0;
        }
        return if p < 0.1 {
            -bd0(n, n * q) - n * p
        } else {
            n * q.ln()
        };
    }
    if x == n {
        return if q < 0.1 {
            -bd0(n, n * p) - n * q
        } else {
            n * p.ln()
        };
    }
    if x < 0.0 || x > n {
        return f64::NEG_INFINITY;
    }
    let lc = stirlerr(n) - stirlerr(x) - stirlerr(n - x) - bd0(x, n * p) - bd0(n - x, n * q);
    let lf = LN_2PI + x.ln() + (-x / n).ln_1p();
    lc - 0.5 * lf
}

fn check(big_n: u64, big_k: u64, n: u64) {
    assert!(
        big_k <= big_n && n <= big_n,
        "hypergeometric parameters need successes ({big_k}) and draws ({n}) <= population ({big_n})"
    );
}

/// Smallest and largest possible value of X.
fn support(big_n: u64, big_k: u64, n: u64) -> (u64, u64) {
    (n.saturating_sub(big_n - big_k), n.min(big_k))
}

/// The mode `floor((n + 1)(K + 1) / (N + 2))`, as scipy's `fisher_exact` computes it.
fn mode(big_n: u64, big_k: u64, n: u64) -> u64 {
    ((n as u128 + 1) * (big_k as u128 + 1) / (big_n as u128 + 2)) as u64
}

/// ln P(X = k); `-inf` outside the support.
///
/// # Panics
/// If `big_k > big_n` or `n > big_n`.
pub fn ln_pmf(k: u64, big_n: u64, big_k: u64, n: u64) -> f64 {
    check(big_n, big_k, n);
    let (lo, hi) = support(big_n, big_k, n);
    if k < lo || k > hi {
        return f64::NEG_INFINITY;
    }
    if big_n == 0 {
        return 0.0;
    }
    // Loader's form, as in R's dhyper: P(X=k) = b(k; K, p) b(n-k; N-K, p) / b(n; N, p)
    // with p = n / N; the choice of p cancels exactly but makes every factor O(1).
    let nf = big_n as f64;
    let p = n as f64 / nf;
    let q = (big_n - n) as f64 / nf;
    ln_dbinom_raw(k as f64, big_k as f64, p, q)
        + ln_dbinom_raw((n - k) as f64, (big_n - big_k) as f64, p, q)
        - ln_dbinom_raw(n as f64, nf, p, q)
}

/// P(X = k).
///
/// # Panics
/// If `big_k > big_n` or `n > big_n`.
pub fn pmf(k: u64, big_n: u64, big_k: u64, n: u64) -> f64 {
    ln_pmf(k, big_n, big_k, n).exp()
}

/// Σ_{x=k}^{hi} P(X = x) for k above the mode (terms decrease).
fn sum_up(k: u64, big_n: u64, big_k: u64, n: u64, hi: u64) -> f64 {
    let lead = ln_pmf(k, big_n, big_k, n);
    if lead == f64::NEG_INFINITY {
        return 0.0;
    }
    let (kf, nf, bn, bk) = (k as f64, n as f64, big_n as f64, big_k as f64);
    let rest = bn - bk - nf; // N - K - n, may be negative
    let (mut s, mut t) = (1.0f64, 1.0f64);
    let mut x = kf;
    for _ in k..hi {
        // pmf(x+1)/pmf(x) = (K-x)(n-x) / ((x+1)(N-K-n+x+1))
        t *= (bk - x) * (nf - x) / ((x + 1.0) * (rest + x + 1.0));
        s += t;
        if t < s * TAIL_CUTOFF {
            break;
        }
        x += 1.0;
    }
    (lead + s.ln()).exp()
}

/// Σ_{x=lo}^{k} P(X = x) for k below the mode (terms decrease going down).
fn sum_down(k: u64, big_n: u64, big_k: u64, n: u64, lo: u64) -> f64 {
    let lead = ln_pmf(k, big_n, big_k, n);
    if lead == f64::NEG_INFINITY {
        return 0.0;
    }
    let (nf, bn, bk) = (n as f64, big_n as f64, big_k as f64);
    let rest = bn - bk - nf;
    let (mut s, mut t) = (1.0f64, 1.0f64);
    let mut x = k as f64;
    for _ in lo..k {
        // pmf(x-1)/pmf(x) = x (N-K-n+x) / ((K-x+1)(n-x+1))
        t *= x * (rest + x) / ((bk - x + 1.0) * (nf - x + 1.0));
        s += t;
        if t < s * TAIL_CUTOFF {
            break;
        }
        x -= 1.0;
    }
    (lead + s.ln()).exp()
}

/// Upper tail P(X >= k) of Hypergeom(population `big_n`, successes `big_k`,
/// draws `n`); equals `scipy.stats.hypergeom.sf(k - 1, big_n, big_k, n)`.
///
/// # Panics
/// If `big_k > big_n` or `n > big_n`.
pub fn upper_tail(k: u64, big_n: u64, big_k: u64, n: u64) -> f64 {
    check(big_n, big_k, n);
    let (lo, hi) = support(big_n, big_k, n);
    if k <= lo {
        return 1.0;
    }
    if k > hi {
        return 0.0;
    }
    if k > mode(big_n, big_k, n) {
        sum_up(k, big_n, big_k, n, hi).min(1.0)
    } else {
        (1.0 - sum_down(k - 1, big_n, big_k, n, lo)).clamp(0.0, 1.0)
    }
}

/// Lower tail P(X <= k); equals `scipy.stats.hypergeom.cdf(k, big_n, big_k, n)`.
///
/// # Panics
/// If `big_k > big_n` or `n > big_n`.
pub fn lower_tail(k: u64, big_n: u64, big_k: u64, n: u64) -> f64 {
    check(big_n, big_k, n);
    let (lo, hi) = support(big_n, big_k, n);
    if k >= hi {
        return 1.0;
    }
    if k < lo {
        return 0.0;
    }
    if k < mode(big_n, big_k, n) {
        sum_down(k, big_n, big_k, n, lo).min(1.0)
    } else {
        (1.0 - sum_up(k + 1, big_n, big_k, n, hi)).clamp(0.0, 1.0)
    }
}

/// Largest `i` in `lo..=hi` with `f(i) <= d` for ascending `f` (or `lo - 1`);
/// the same search as scipy's `_binary_search_for_binom_tst`, so ties and
/// near-ties resolve the same way.
fn binary_search(f: impl Fn(i64) -> f64, d: f64, mut lo: i64, mut hi: i64) -> i64 {
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        let v = f(mid);
        if v < d {
            lo = mid + 1;
        } else if v > d {
            hi = mid - 1;
        } else {
            return mid;
        }
    }
    if f(lo) <= d {
        lo
    } else {
        lo - 1
    }
}

/// Fisher's exact test p-value for the 2x2 table `[[a, b], [c, d]]`, matching
/// `scipy.stats.fisher_exact(table, alternative)` (scipy 1.17).
///
/// Conditioning on the margins, `a ~ Hypergeom(N = a+b+c+d, K = a+b, n = a+c)`.
/// * `Greater`: P(X >= a). `Less`: P(X <= a).
/// * `TwoSided`: the sum of P(X = x) over all x with P(X = x) <= P(X = a),
///   comparing with scipy's relative tolerance `(1 + 1e-14)` so that tables
///   of equal probability (e.g. mirror images) count as "as extreme". The
///   observed table's own tail is summed whole; the opposite tail is found by
///   binary search, as scipy does. A table at the mode gives 1.
/// * A table with an empty row or column gives 1 (scipy's convention).
pub fn fisher_2x2(a: u64, b: u64, c: u64, d: u64, alternative: Alternative) -> f64 {
    if a + b == 0 || c + d == 0 || a + c == 0 || b + d == 0 {
        return 1.0;
    }
    let big_n = a + b + c + d;
    let big_k = a + b;
    let n = a + c;
    let p = match alternative {
        Alternative::Less => lower_tail(a, big_n, big_k, n),
        Alternative::Greater => upper_tail(a, big_n, big_k, n),
        Alternative::TwoSided => {
            let lpmf = |x: i64| -> f64 {
                if x < 0 {
                    f64::NEG_INFINITY
                } else {
                    ln_pmf(x as u64, big_n, big_k, n)
                }
            };
            let m = mode(big_n, big_k, n);
            let l_exact = lpmf(a as i64);
            let l_mode = lpmf(m as i64);
            // scipy: |pexact - pmode| / max(pexact, pmode) <= 1e-14 -> p = 1.
            let (lmax, lmin) = if l_exact > l_mode {
                (l_exact, l_mode)
            } else {
                (l_mode, l_exact)
            };
            if -(lmin - lmax).exp_m1() <= 1e-14 {
                return 1.0;
            }
            // Compare probabilities on the log scale: p > pexact * gamma.
            let l_target = l_exact + 1e-14f64.ln_1p();
            if a < m {
                let plower = lower_tail(a, big_n, big_k, n);
                if lpmf(n as i64) > l_target {
                    return plower;
                }
                let guess = binary_search(|x| -lpmf(x), -l_target, m as i64, n as i64);
                plower + upper_tail((guess + 1) as u64, big_n, big_k, n)
            } else {
                let pupper = upper_tail(a, big_n, big_k, n);
                if lpmf(0) > l_target {
                    return pupper;
                }
                let guess = binary_search(lpmf, l_target, 0, m as i64);
                let other = if guess < 0 {
                    0.0
                } else {
                    lower_tail(guess as u64, big_n, big_k, n)
                };
                pupper + other
            }
        }
    };
    p.min(1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Direct sum of exact pmf values for small populations.
    fn brute(big_n: u64, big_k: u64, n: u64) -> Vec<f64> {
        use statrs::function::factorial::binomial;
        (0..=n)
            .map(|x| {
                if x > big_k || n - x > big_n - big_k {
                    0.0
                } else {
                    binomial(big_k, x) * binomial(big_n - big_k, n - x) / binomial(big_n, n)
                }
            })
            .collect()
    }

    #[test]
    fn tails_match_exact_sums_on_small_populations() {
        // Reference: exact binomial-coefficient ratios (definition of the
        // hypergeometric pmf), summed directly.
        for big_n in [1u64, 2, 7, 13, 30] {
            for big_k in 0..=big_n {
                for n in 0..=big_n {
                    let p = brute(big_n, big_k, n);
                    for k in 0..=n + 1 {
                        let up: f64 = p.iter().skip(k as usize).sum();
                        let low: f64 = p.iter().take(k as usize + 1).sum();
                        let (u, l) = (
                            upper_tail(k, big_n, big_k, n),
                            lower_tail(k, big_n, big_k, n),
                        );
                        assert!(
                            (u - up).abs() <= 1e-13 * up.max(1e-300) + 1e-15,
                            "{k} {big_n} {big_k} {n}"
                        );
                        assert!(
                            (l - low).abs() <= 1e-13 * low.max(1e-300) + 1e-15,
                            "{k} {big_n} {big_k} {n}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn pmf_sums_to_one_for_a_large_population() {
        // Reference: a probability distribution sums to 1 (definition).
        let (big_n, big_k, n) = (1_500_000u64, 90_000u64, 20_000u64);
        let total: f64 = (0..=n).map(|x| pmf(x, big_n, big_k, n)).sum();
        assert!((total - 1.0).abs() < 1e-12, "{total}");
    }

    #[test]
    fn fisher_tea_tasting() {
        // Fisher (1935) lady tasting tea, 3 of 4 cups right: one-sided
        // p = 17/70 = 0.242857, two-sided 34/70 (textbook value, exact).
        assert!((fisher_2x2(3, 1, 1, 3, Alternative::Greater) - 17.0 / 70.0).abs() < 1e-14);
        assert!((fisher_2x2(3, 1, 1, 3, Alternative::TwoSided) - 34.0 / 70.0).abs() < 1e-14);
    }
}
