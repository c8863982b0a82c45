//! Pass rules shared by the statistical tests: 99% binomial bands, so a
//! correct procedure fails a rule less than 1% of the time. Not every test
//! file uses every rule.
#![allow(dead_code)]

use statrs::distribution::{Binomial, DiscreteCDF};

/// Central 99% band of Binomial(n, p).
pub fn band(n: u64, p: f64) -> (u64, u64) {
    (quantile(n, p, 0.005), quantile(n, p, 0.995))
}

/// The least k with P(Binomial(n, p) ≤ k) ≥ q: a band's edge at any level,
/// for a test that splits its 1% among several rules.
pub fn quantile(n: u64, p: f64, q: f64) -> u64 {
    let b = Binomial::new(p, n).unwrap();
    (0..=n).find(|&k| b.cdf(k) >= q).unwrap()
}

/// Uniform p-values: the count at or below 0.05 and at or below 0.5 each
/// inside its 99% binomial band. "At or below": with Besag-Clifford
/// stopping after h = 10 exceedances, 0.05 (10/200) and 0.5 (10/20) are
/// attainable p-values, each holding an atom of probability, and a valid
/// p-value has P(p <= a) = a at such points (Besag & Clifford 1991,
/// Biometrika 78:301, recalled from memory).
pub fn assert_uniform(what: &str, p_values: &[f64]) {
    let n = p_values.len() as u64;
    assert!(n >= 100, "{what}: only {n} p-values");
    for cut in [0.05, 0.5] {
        let below = p_values.iter().filter(|&&p| p <= cut + 1e-12).count() as u64;
        let (lo, hi) = band(n, cut);
        assert!((lo..=hi).contains(&below), "{what}: {below} of {n} p-values below {cut}; 99% band {lo}..={hi}");
    }
}

/// Every file of a report folder (top level and `charts/`), by relative
/// path, with its bytes, sorted: to compare two reports byte for byte.
pub fn report_files(dir: &std::path::Path) -> Vec<(String, Vec<u8>)> {
    let mut files = Vec::new();
    for sub in ["", "charts"] {
        for e in std::fs::read_dir(dir.join(sub)).unwrap() {
            let p = e.unwrap().path();
            if p.is_file() {
                files.push((p.strip_prefix(dir).unwrap().display().to_string(), std::fs::read(&p).unwrap()));
            }
        }
    }
    files.sort();
    files
}
