//! Shrinkage estimators for usage rates and pitch mixes.
//!
//! Small samples make raw shares noisy: a pitcher who threw 4 of 5 sliders
//! in one count has not shown an 80% slider habit. The estimators here pull
//! each group's raw share towards a pooled value, by an amount the data
//! themselves choose (empirical Bayes):
//!
//! * [`james_stein`] — Efron & Morris (1975), equal sample sizes.
//! * [`fit_beta_binomial`] — a Beta(α, β) prior for success rates with
//!   unequal sample sizes, fitted by maximum likelihood of the beta-binomial
//!   marginal (method of moments as fallback); posterior means
//!   `(k + α) / (n + α + β)`.
//! * [`dirichlet_shrink`] / [`fit_dirichlet_strength`] — the same idea for a
//!   whole vector of category counts (a pitch mix), with a Dirichlet prior
//!   centred on a fixed mix and a fitted pseudo-count strength.

use statrs::function::factorial::ln_factorial;
use statrs::function::gamma::{digamma, ln_gamma};

/// Why a shrinkage fit could not be made.
#[derive(Debug, Clone, PartialEq)]
pub enum ShrinkError {
    /// Two inputs that must match in length do not.
    LengthMismatch { left: usize, right: usize },
    /// Not enough groups to estimate the spread between them.
    TooFewGroups { needed: usize, got: usize },
    /// A group has more successes than trials.
    SuccessesExceedTrials {
        index: usize,
        successes: u64,
        trials: u64,
    },
    /// Every group sits at 0% (or every one at 100%), or there are no
    /// trials: the prior mean is on the boundary and no Beta prior with
    /// positive parameters fits.
    NoSpread,
    /// A category has counts but prior share 0 (or a share is negative or
    /// not finite): the Dirichlet likelihood is zero.
    MixExcludesObserved { category: usize },
}

impl std::fmt::Display for ShrinkError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ShrinkError::LengthMismatch { left, right } => {
                write!(f, "inputs differ in length ({left} vs {right})")
            }
            ShrinkError::TooFewGroups { needed, got } => {
                write!(
                    f,
                    "shrinkage needs at least {needed} groups with data, got {got}"
                )
            }
            ShrinkError::SuccessesExceedTrials {
                index,
                successes,
                trials,
            } => {
                write!(
                    f,
                    "group {index} has {successes} successes in {trials} trials"
                )
            }
            ShrinkError::NoSpread => {
                write!(
                    f,
                    "all groups are at 0% or all at 100%; no prior can be fitted"
                )
            }
            ShrinkError::MixExcludesObserved { category } => {
                write!(
                    f,
                    "category {category} has counts but its prior share is not positive"
                )
            }
        }
    }
}

impl std::error::Error for ShrinkError {}

/// `ln Γ(x + c) - ln Γ(x)` = Σ_{j<c} ln(x + j), summed directly for short
/// runs (exact, no cancellation) and via `ln Γ` otherwise.
fn ln_rising(x: f64, c: u64) -> f64 {
    if c == 0 {
        0.0
    } else if c <= 64 {
        (0..c).map(|j| (x + j as f64).ln()).sum()
    } else {
        ln_gamma(x + c as f64) - ln_gamma(x)
    }
}

/// Trigamma ψ'(x) for x > 0: recurrence ψ'(x) = ψ'(x+1) + 1/x² up to x >= 10,
/// then the asymptotic series 1/x + 1/2x² + Σ B_2k / x^(2k+1)
/// (Abramowitz & Stegun 6.4.12); error below 1e-14 relative at x = 10.
pub(crate) fn trigamma(x: f64) -> f64 {
    let mut r = 0.0;
    let mut z = x;
    while z < 10.0 {
        r += 1.0 / (z * z);
        z += 1.0;
    }
    let iz = 1.0 / z;
    let iz2 = iz * iz;
    r + iz
        + 0.5 * iz2
        + iz * iz2
            * (1.0 / 6.0
                - iz2 * (1.0 / 30.0 - iz2 * (1.0 / 42.0 - iz2 * (1.0 / 30.0 - iz2 * 5.0 / 66.0))))
}

// ------------------------------------------------------------------ (a)

/// The scale on which [`james_stein`] shrinks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum SteinScale {
    /// Efron & Morris (1975), the baseball example: `X = sqrt(n) asin(2y - 1)`
    /// has variance ≈ 1 whatever the true rate; shrink on that scale and
    /// transform back with `y = (sin(X / sqrt(n)) + 1) / 2`.
    Arcsine,
    /// Shrink the proportions themselves, with the binomial variance at the
    /// grand mean `ȳ(1 - ȳ)/n` (the form of Efron & Morris 1977, "Stein's
    /// paradox in statistics", Scientific American 236(5)).
    Plain,
}

/// James–Stein estimates of a set of proportions.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SteinEstimate {
    /// Shrunk proportion of each group, in input order.
    pub estimates: Vec<f64>,
    /// The weight `c` kept on each group's own deviation from the grand
    /// mean (0 = complete pooling, 1 = raw shares).
    pub shrinkage: f64,
    /// The grand mean on the proportion scale (for `Arcsine`, the
    /// back-transformed mean of the transformed values).
    pub grand_mean: f64,
    pub scale: SteinScale,
}

/// James–Stein estimator towards the grand mean, Efron, B. & Morris, C.
/// (1975) "Data analysis using Stein's estimator and its generalizations",
/// JASA 70, 311–319: with `k` groups of equal size `n`, values `x_i` of
/// known variance `σ²` and `S = Σ (x_i - x̄)²`,
///
/// ```text
/// z_i = x̄ + c (x_i - x̄),   c = max(0, 1 - (k - 3) σ² / S)
/// ```
///
/// (`k - 3` because the centre x̄ is estimated; the positive part keeps `c`
/// from going negative). Needs k >= 4 groups and the same `trials` for all.
pub fn james_stein(
    successes: &[u64],
    trials: u64,
    scale: SteinScale,
) -> Result<SteinEstimate, ShrinkError> {
    let k = successes.len();
    if k < 4 || trials == 0 {
        return Err(ShrinkError::TooFewGroups {
            needed: 4,
            got: if trials == 0 { 0 } else { k },
        });
    }
    if let Some((index, &s)) = successes.iter().enumerate().find(|(_, &s)| s > trials) {
        return Err(ShrinkError::SuccessesExceedTrials {
            index,
            successes: s,
            trials,
        });
    }
    let n = trials as f64;
    let y: Vec<f64> = successes.iter().map(|&s| s as f64 / n).collect();
    let (x, var): (Vec<f64>, f64) = match scale {
        SteinScale::Arcsine => (
            y.iter()
                .map(|&p| n.sqrt() * (2.0 * p - 1.0).asin())
                .collect(),
            1.0,
        ),
        SteinScale::Plain => {
            let ybar = y.iter().sum::<f64>() / k as f64;
            (y.clone(), ybar * (1.0 - ybar) / n)
        }
    };
    let xbar = x.iter().sum::<f64>() / k as f64;
    let s: f64 = x.iter().map(|&v| (v - xbar) * (v - xbar)).sum();
    let c = if s > 0.0 {
        (1.0 - (k as f64 - 3.0) * var / s).max(0.0)
    } else {
        0.0
    };
    let back = |z: f64| match scale {
        SteinScale::Arcsine => ((z / n.sqrt()).sin() + 1.0) / 2.0,
        SteinScale::Plain => z,
    };
    Ok(SteinEstimate {
        estimates: x.iter().map(|&v| back(xbar + c * (v - xbar))).collect(),
        shrinkage: c,
        grand_mean: back(xbar),
        scale,
    })
}

// ------------------------------------------------------------------ (b)

/// Smallest value allowed for α or β.
pub const BETA_PARAM_MIN: f64 = 1e-4;
/// Largest value allowed for α or β (and so, in effect, for the prior
/// strength α + β). Beyond a million pseudo-trials the prior is "pool
/// completely" for any sample this tool sees; fits that run here mean the
/// groups vary no more than binomial noise.
pub const BETA_PARAM_MAX: f64 = 1e6;

/// A Beta(α, β) prior for a success rate.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BetaPrior {
    pub alpha: f64,
    pub beta: f64,
}

impl BetaPrior {
    /// Prior mean α / (α + β).
    pub fn mean(&self) -> f64 {
        self.alpha / (self.alpha + self.beta)
    }

    /// Prior strength α + β, in pseudo-trials.
    pub fn strength(&self) -> f64 {
        self.alpha + self.beta
    }

    /// Posterior mean `(k + α) / (n + α + β)` after `k` successes in `n` trials.
    pub fn posterior_mean(&self, k: u64, n: u64) -> f64 {
        (k as f64 + self.alpha) / (n as f64 + self.alpha + self.beta)
    }
}

/// How a [`BetaBinomialFit`] was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum FitMethod {
    MaximumLikelihood,
    /// The likelihood had no interior maximum (or the search failed);
    /// moment estimates were used.
    MethodOfMoments,
}

/// A fitted Beta prior.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BetaBinomialFit {
    pub prior: BetaPrior,
    pub method: FitMethod,
    /// Beta-binomial log-likelihood at the fitted prior (see
    /// [`beta_binomial_log_likelihood`]).
    pub log_likelihood: f64,
}

fn check_binomial(successes: &[u64], trials: &[u64]) -> Result<(), ShrinkError> {
    if successes.len() != trials.len() {
        return Err(ShrinkError::LengthMismatch {
            left: successes.len(),
            right: trials.len(),
        });
    }
    for (index, (&k, &n)) in successes.iter().zip(trials).enumerate() {
        if k > n {
            return Err(ShrinkError::SuccessesExceedTrials {
                index,
                successes: k,
                trials: n,
            });
        }
    }
    Ok(())
}

/// Σ_i ln BetaBinomial(k_i | n_i, α, β), including the binomial
/// coefficients, i.e. the sum of `scipy.stats.betabinom.logpmf(k, n, α, β)`.
///
/// # Panics
/// If the slices differ in length.
pub fn beta_binomial_log_likelihood(
    successes: &[u64],
    trials: &[u64],
    alpha: f64,
    beta: f64,
) -> f64 {
    assert_eq!(successes.len(), trials.len());
    successes
        .iter()
        .zip(trials)
        .map(|(&k, &n)| {
            ln_factorial(n) - ln_factorial(k) - ln_factorial(n - k)
                + ln_rising(alpha, k)
                + ln_rising(beta, n - k)
                - ln_rising(alpha + beta, n)
        })
        .sum()
}

/// Method-of-moments Beta prior. With `p̂ = Σk/Σn`, `S = Σ n_i (k_i/n_i - p̂)²`
/// and `N = Σ n_i`, the beta-binomial model (intra-class correlation
/// `ρ = 1/(α+β+1)`) gives `E[S] = p(1-p) [a + ρ b]` with
/// `a = Σ (1 - n_i/N)` and `b = Σ (n_i - 1)(1 - n_i/N)`; solving for ρ gives
/// the estimator (derived here; the weighting is that of Kleinman 1973,
/// "Proportions with extraneous variance", JASA 68 — from memory). A
/// negative ρ̂ (less spread than binomial noise) is taken as complete
/// pooling: strength [`BETA_PARAM_MAX`].
pub fn beta_binomial_moments(successes: &[u64], trials: &[u64]) -> Result<BetaPrior, ShrinkError> {
    check_binomial(successes, trials)?;
    let groups: Vec<(f64, f64)> = successes
        .iter()
        .zip(trials)
        .filter(|(_, &n)| n > 0)
        .map(|(&k, &n)| (k as f64, n as f64))
        .collect();
    if groups.len() < 2 {
        return Err(ShrinkError::TooFewGroups {
            needed: 2,
            got: groups.len(),
        });
    }
    let big_n: f64 = groups.iter().map(|g| g.1).sum();
    let p = groups.iter().map(|g| g.0).sum::<f64>() / big_n;
    if p <= 0.0 || p >= 1.0 {
        return Err(ShrinkError::NoSpread);
    }
    let s: f64 = groups
        .iter()
        .map(|&(k, n)| n * (k / n - p) * (k / n - p))
        .sum();
    let a: f64 = groups.iter().map(|&(_, n)| 1.0 - n / big_n).sum();
    let b: f64 = groups
        .iter()
        .map(|&(_, n)| (n - 1.0) * (1.0 - n / big_n))
        .sum();
    if b <= 0.0 {
        // Every group has a single trial: spread between groups cannot be
        // told from binomial noise.
        return Err(ShrinkError::TooFewGroups { needed: 2, got: 0 });
    }
    let rho = (s / (p * (1.0 - p)) - a) / b;
    let strength = if rho <= 1.0 / (BETA_PARAM_MAX + 1.0) {
        BETA_PARAM_MAX
    } else {
        1.0 / rho - 1.0
    };
    Ok(clamp_prior(p * strength, (1.0 - p) * strength))
}

fn clamp_prior(alpha: f64, beta: f64) -> BetaPrior {
    BetaPrior {
        alpha: alpha.clamp(BETA_PARAM_MIN, BETA_PARAM_MAX),
        beta: beta.clamp(BETA_PARAM_MIN, BETA_PARAM_MAX),
    }
}

/// Log-likelihood with gradient and Hessian in (u, v) = (ln α, ln β).
fn bb_derivatives(ks: &[u64], ns: &[u64], u: f64, v: f64) -> (f64, [f64; 2], [[f64; 2]; 2]) {
    let (a, b) = (u.exp(), v.exp());
    let ll = beta_binomial_log_likelihood(ks, ns, a, b);
    let (mut ga, mut gb, mut haa, mut hbb, mut hab) = (0.0, 0.0, 0.0, 0.0, 0.0);
    let (dg_ab, tg_ab, dg_a, tg_a, dg_b, tg_b) = (
        digamma(a + b),
        trigamma(a + b),
        digamma(a),
        trigamma(a),
        digamma(b),
        trigamma(b),
    );
    for (&k, &n) in ks.iter().zip(ns) {
        let (kf, nf) = (k as f64, n as f64);
        let common_d = dg_ab - digamma(nf + a + b);
        let common_t = tg_ab - trigamma(nf + a + b);
        ga += digamma(kf + a) - dg_a + common_d;
        gb += digamma(nf - kf + b) - dg_b + common_d;
        haa += trigamma(kf + a) - tg_a + common_t;
        hbb += trigamma(nf - kf + b) - tg_b + common_t;
        hab += common_t;
    }
    // Chain rule for α = e^u, β = e^v.
    let g = [a * ga, b * gb];
    let h = [
        [a * a * haa + a * ga, a * b * hab],
        [a * b * hab, b * b * hbb + b * gb],
    ];
    (ll, g, h)
}

/// Maximum-likelihood Beta prior for success counts `successes[i]` out of
/// `trials[i]`, maximising the beta-binomial marginal likelihood (the
/// quantity scipy's `betabinom.logpmf` sums). Newton's method on
/// (ln α, ln β) with analytic gradient and Hessian (digamma/trigamma) and a
/// backtracking line search, started from the moment estimates; α and β
/// are kept in [[`BETA_PARAM_MIN`], [`BETA_PARAM_MAX`]].
///
/// If the search does not settle at an interior maximum (typically the
/// groups vary no more than binomial noise, so the likelihood keeps rising
/// with α + β), the method-of-moments prior is returned instead and
/// `method` says so. Groups with no trials are ignored.
pub fn fit_beta_binomial(
    successes: &[u64],
    trials: &[u64],
) -> Result<BetaBinomialFit, ShrinkError> {
    let moments = beta_binomial_moments(successes, trials)?;
    let (ks, ns): (Vec<u64>, Vec<u64>) = successes
        .iter()
        .zip(trials)
        .filter(|(_, &n)| n > 0)
        .map(|(&k, &n)| (k, n))
        .unzip();
    let (lo, hi) = (BETA_PARAM_MIN.ln(), BETA_PARAM_MAX.ln());
    let start = clamp_prior(moments.alpha.min(1e4), moments.beta.min(1e4));
    let (mut u, mut v) = (start.alpha.ln(), start.beta.ln());
    let mut converged = false;
    for _ in 0..500 {
        let (ll, g, h) = bb_derivatives(&ks, &ns, u, v);
        if g[0].abs().max(g[1].abs()) < 1e-9 {
            converged = true;
            break;
        }
        let det = h[0][0] * h[1][1] - h[0][1] * h[1][0];
        let mut step = if h[0][0] < 0.0 && det > 0.0 {
            // Negative definite: Newton step -H⁻¹ g.
            [
                -(h[1][1] * g[0] - h[0][1] * g[1]) / det,
                -(-h[1][0] * g[0] + h[0][0] * g[1]) / det,
            ]
        } else {
            // Otherwise climb the gradient.
            let norm = (g[0] * g[0] + g[1] * g[1]).sqrt();
            [g[0] / norm, g[1] / norm]
        };
        let len = (step[0] * step[0] + step[1] * step[1]).sqrt();
        if len > 2.0 {
            step = [2.0 * step[0] / len, 2.0 * step[1] / len];
        }
        let mut t = 1.0;
        let mut moved = false;
        while t > 1e-12 {
            let (nu, nv) = (
                (u + t * step[0]).clamp(lo, hi),
                (v + t * step[1]).clamp(lo, hi),
            );
            let nll = beta_binomial_log_likelihood(&ks, &ns, nu.exp(), nv.exp());
            if nll >= ll {
                moved = (nu - u).abs() + (nv - v).abs() > 0.0;
                u = nu;
                v = nv;
                break;
            }
            t *= 0.5;
        }
        if !moved {
            // No ascent possible: at a maximum (to rounding) or pinned at a bound.
            let (_, g, _) = bb_derivatives(&ks, &ns, u, v);
            converged = g[0].abs().max(g[1].abs()) < 1e-6;
            break;
        }
    }
    let at_bound = |x: f64| (x - lo).abs() < 1e-9 || (x - hi).abs() < 1e-9;
    if converged && !at_bound(u) && !at_bound(v) {
        let prior = BetaPrior {
            alpha: u.exp(),
            beta: v.exp(),
        };
        Ok(BetaBinomialFit {
            prior,
            method: FitMethod::MaximumLikelihood,
            log_likelihood: beta_binomial_log_likelihood(&ks, &ns, prior.alpha, prior.beta),
        })
    } else {
        Ok(BetaBinomialFit {
            prior: moments,
            method: FitMethod::MethodOfMoments,
            log_likelihood: beta_binomial_log_likelihood(&ks, &ns, moments.alpha, moments.beta),
        })
    }
}

/// Posterior means `(k_i + α) / (n_i + α + β)` for every group.
///
/// # Panics
/// If the slices differ in length.
pub fn posterior_means(successes: &[u64], trials: &[u64], prior: &BetaPrior) -> Vec<f64> {
    assert_eq!(successes.len(), trials.len());
    successes
        .iter()
        .zip(trials)
        .map(|(&k, &n)| prior.posterior_mean(k, n))
        .collect()
}

// ------------------------------------------------------------------ (c)

/// Lower end of the search range for the Dirichlet strength `s`
/// (pseudo-counts). Below 0.1 the prior would carry less than a tenth of
/// one pitch: no shrinkage worth the name.
pub const STRENGTH_MIN: f64 = 0.1;
/// Upper end of the range. At 10,000 pseudo-counts every vector of the
/// sizes seen here (at most a few hundred pitches per count and season) is
/// replaced by the prior mix; a fit at this bound means "no detectable
/// difference from the mix".
pub const STRENGTH_MAX: f64 = 1e4;

/// Dirichlet posterior mean of a category-count vector: `(c_k + s m_k) / (n + s)`
/// with `n = Σ c_k`, prior mix `m` (normalised here to sum to 1) and
/// strength `s` in pseudo-counts. With no counts and `s = 0` the mix is
/// returned.
///
/// # Panics
/// If `counts` and `mix` differ in length, or the mix does not have a
/// positive finite total.
pub fn dirichlet_shrink(counts: &[f64], mix: &[f64], strength: f64) -> Vec<f64> {
    assert_eq!(
        counts.len(),
        mix.len(),
        "dirichlet_shrink: counts and mix differ in length"
    );
    let mtot: f64 = mix.iter().sum();
    assert!(
        mtot > 0.0 && mtot.is_finite(),
        "dirichlet_shrink: mix total {mtot}"
    );
    let n: f64 = counts.iter().sum();
    if n + strength <= 0.0 {
        return mix.iter().map(|m| m / mtot).collect();
    }
    counts
        .iter()
        .zip(mix)
        .map(|(&c, &m)| (c + strength * m / mtot) / (n + strength))
        .collect()
}

/// Golden-section search for the maximum of a unimodal `f` on [a, b]; the
/// midpoint of the final bracket, once it is narrower than `tol` (the end
/// points themselves are never evaluated).
pub fn golden_section_max(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64, tol: f64) -> f64 {
    let inv_phi = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - inv_phi * (b - a);
    let mut d = a + inv_phi * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    while b - a > tol {
        if fc >= fd {
            b = d;
            d = c;
            fd = fc;
            c = b - inv_phi * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + inv_phi * (b - a);
            fd = f(d);
        }
    }
    0.5 * (a + b)
}

/// Result of [`fit_dirichlet_strength`].
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StrengthFit {
    /// Fitted strength `s` (pseudo-counts), within [`STRENGTH_MIN`, `STRENGTH_MAX`].
    pub strength: f64,
    /// Dirichlet-multinomial log-likelihood at `strength`.
    pub log_likelihood: f64,
    /// The maximum is at (or against) the lower end of the range: the
    /// vectors differ from the mix more than any sane prior allows.
    pub at_lower_bound: bool,
    /// The maximum is at the upper end: no spread beyond multinomial noise.
    pub at_upper_bound: bool,
}

fn normalised_mix(mix: &[f64]) -> Result<Vec<f64>, ShrinkError> {
    if let Some(category) = mix.iter().position(|&m| !m.is_finite() || m < 0.0) {
        return Err(ShrinkError::MixExcludesObserved { category });
    }
    let tot: f64 = mix.iter().sum();
    if tot <= 0.0 {
        return Err(ShrinkError::MixExcludesObserved { category: 0 });
    }
    Ok(mix.iter().map(|m| m / tot).collect())
}

fn check_vectors<R: AsRef<[u64]>>(vectors: &[R], mix: &[f64]) -> Result<(), ShrinkError> {
    for v in vectors {
        let v = v.as_ref();
        if v.len() != mix.len() {
            return Err(ShrinkError::LengthMismatch {
                left: v.len(),
                right: mix.len(),
            });
        }
        if let Some(category) = (0..v.len()).find(|&k| v[k] > 0 && mix[k] == 0.0) {
            return Err(ShrinkError::MixExcludesObserved { category });
        }
    }
    Ok(())
}

fn dm_log_likelihood<R: AsRef<[u64]>>(vectors: &[R], mix: &[f64], s: f64) -> f64 {
    let mut ll = 0.0;
    for v in vectors {
        let v = v.as_ref();
        let n: u64 = v.iter().sum();
        if n == 0 {
            continue;
        }
        // Multinomial coefficient, so the value equals scipy's logpmf sum.
        ll += ln_factorial(n) - v.iter().map(|&c| ln_factorial(c)).sum::<f64>();
        ll -= ln_rising(s, n);
        for (k, &c) in v.iter().enumerate() {
            if c > 0 {
                ll += ln_rising(s * mix[k], c);
            }
        }
    }
    ll
}

/// Σ_v ln DirichletMultinomial(c_v | s m): the log-likelihood of count
/// vectors `vectors` under a Dirichlet prior with mean `mix` (normalised
/// here) and strength `s`, including multinomial coefficients (the sum of
/// `scipy.stats.dirichlet_multinomial.logpmf(c_v, s m, n_v)`).
pub fn dirichlet_multinomial_log_likelihood<R: AsRef<[u64]>>(
    vectors: &[R],
    mix: &[f64],
    strength: f64,
) -> Result<f64, ShrinkError> {
    let mix = normalised_mix(mix)?;
    check_vectors(vectors, &mix)?;
    Ok(dm_log_likelihood(vectors, &mix, strength))
}

/// Empirical-Bayes strength `s` for shrinking count vectors (e.g. one
/// pitcher's pitch-type counts in each ball-strike count) towards a fixed
/// mix `m` (e.g. his overall usage): the `s` maximising the
/// Dirichlet-multinomial marginal likelihood with `m` held fixed (Minka
/// 2000, "Estimating a Dirichlet distribution", treats the same likelihood).
///
/// One-dimensional search on ln s over [[`STRENGTH_MIN`], [`STRENGTH_MAX`]]:
/// a grid of 49 points to find the best bracket, then golden-section search
/// inside it to 1e-10 in ln s. Vectors with no counts are ignored.
pub fn fit_dirichlet_strength<R: AsRef<[u64]>>(
    vectors: &[R],
    mix: &[f64],
) -> Result<StrengthFit, ShrinkError> {
    let mix = normalised_mix(mix)?;
    check_vectors(vectors, &mix)?;
    let used = vectors
        .iter()
        .filter(|v| v.as_ref().iter().sum::<u64>() > 0)
        .count();
    if used == 0 {
        return Err(ShrinkError::TooFewGroups { needed: 1, got: 0 });
    }
    let f = |t: f64| dm_log_likelihood(vectors, &mix, t.exp());
    let (lo, hi) = (STRENGTH_MIN.ln(), STRENGTH_MAX.ln());
    const GRID: usize = 49;
    let grid: Vec<f64> = (0..GRID)
        .map(|i| lo + (hi - lo) * i as f64 / (GRID - 1) as f64)
        .collect();
    let vals: Vec<f64> = grid.iter().map(|&t| f(t)).collect();
    let best = (0..GRID).fold(0, |b, i| if vals[i] > vals[b] { i } else { b });
    let (a, b) = (grid[best.saturating_sub(1)], grid[(best + 1).min(GRID - 1)]);
    let mut t = golden_section_max(f, a, b, 1e-10);
    // The ends of the range are candidates too (golden section never
    // evaluates the bracket's end points).
    for end in [lo, hi] {
        if f(end) > f(t) {
            t = end;
        }
    }
    let strength = t.exp().clamp(STRENGTH_MIN, STRENGTH_MAX);
    Ok(StrengthFit {
        strength,
        log_likelihood: f(t),
        at_lower_bound: t - lo < 1e-6,
        at_upper_bound: hi - t < 1e-6,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    #[test]
    fn trigamma_known_values() {
        // Abramowitz & Stegun 6.4.2: ψ'(1) = π²/6; ψ'(1/2) = π²/2.
        let pi2 = std::f64::consts::PI * std::f64::consts::PI;
        assert!((trigamma(1.0) - pi2 / 6.0).abs() < 1e-13);
        assert!((trigamma(0.5) - pi2 / 2.0).abs() < 1e-13);
        // Recurrence ψ'(x) - ψ'(x+1) = 1/x².
        assert!((trigamma(3.7) - trigamma(4.7) - 1.0 / (3.7 * 3.7)).abs() < 1e-14);
    }

    #[test]
    fn ln_rising_both_branches_agree() {
        // ln Γ(x + c) - ln Γ(x) (definition), direct sum vs ln Γ.
        let direct: f64 = (0..64u64).map(|j| (2.5 + j as f64).ln()).sum();
        let via_gamma = ln_gamma(2.5 + 64.0) - ln_gamma(2.5);
        assert!((direct - via_gamma).abs() < 1e-10);
        assert!((ln_rising(2.5, 64) - direct).abs() < 1e-12);
    }

    /// Beta(a, b) with integer a, b: the a-th smallest of a + b - 1
    /// uniforms (order statistics of the uniform; e.g. David & Nagaraja,
    /// "Order Statistics", 2.1).
    fn beta_draw(rng: &mut ChaCha8Rng, a: usize, b: usize) -> f64 {
        let mut u: Vec<f64> = (0..a + b - 1).map(|_| rng.random::<f64>()).collect();
        u.sort_by(f64::total_cmp);
        u[a - 1]
    }

    #[test]
    fn beta_binomial_fit_recovers_a_known_prior() {
        // Simulated from Beta(2, 5): both estimators should land near (2, 5)
        // with 400 groups (sampling error of the MLE is roughly 15%).
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let mut ks = vec![];
        let mut ns = vec![];
        for i in 0..400 {
            let n = 10 + (i % 30) as u64;
            let p = beta_draw(&mut rng, 2, 5);
            ks.push((0..n).filter(|_| rng.random::<f64>() < p).count() as u64);
            ns.push(n);
        }
        let fit = fit_beta_binomial(&ks, &ns).unwrap();
        assert_eq!(fit.method, FitMethod::MaximumLikelihood);
        assert!((fit.prior.mean() - 2.0 / 7.0).abs() < 0.02, "{:?}", fit);
        assert!((fit.prior.strength() - 7.0).abs() < 2.0, "{:?}", fit);
        let mom = beta_binomial_moments(&ks, &ns).unwrap();
        assert!((mom.mean() - 2.0 / 7.0).abs() < 0.02, "{:?}", mom);
        assert!((mom.strength() - 7.0).abs() < 2.5, "{:?}", mom);
    }

    #[test]
    fn no_extra_spread_falls_back_to_moments_and_pools() {
        // Identical groups: the likelihood rises without bound in α + β.
        let ks = [5u64, 5, 5, 5, 5];
        let ns = [20u64, 20, 20, 20, 20];
        let fit = fit_beta_binomial(&ks, &ns).unwrap();
        assert_eq!(fit.method, FitMethod::MethodOfMoments);
        assert!((fit.prior.mean() - 0.25).abs() < 1e-12);
        assert_eq!(fit.prior.strength(), BETA_PARAM_MAX);
    }

    #[test]
    fn degenerate_inputs_are_errors() {
        assert_eq!(
            fit_beta_binomial(&[0, 0], &[5, 9]),
            Err(ShrinkError::NoSpread)
        );
        assert!(matches!(
            fit_beta_binomial(&[1], &[5]),
            Err(ShrinkError::TooFewGroups { .. })
        ));
        assert!(matches!(
            fit_beta_binomial(&[6, 1], &[5, 3]),
            Err(ShrinkError::SuccessesExceedTrials { .. })
        ));
        assert!(matches!(
            james_stein(&[1, 2, 3], 10, SteinScale::Plain),
            Err(ShrinkError::TooFewGroups { .. })
        ));
    }

    #[test]
    fn dirichlet_shrink_formula() {
        // (c_k + s m_k) / (n + s): counts (6, 2, 2), mix (0.5, 0.25, 0.25), s = 10
        // -> (11/20, 4.5/20, 4.5/20).
        let r = dirichlet_shrink(&[6.0, 2.0, 2.0], &[2.0, 1.0, 1.0], 10.0);
        for (x, y) in r.iter().zip([0.55, 0.225, 0.225]) {
            assert!((x - y).abs() < 1e-15);
        }
        assert_eq!(
            dirichlet_shrink(&[0.0, 0.0], &[1.0, 3.0], 0.0),
            vec![0.25, 0.75]
        );
    }

    #[test]
    fn dirichlet_mix_must_cover_observed_categories() {
        let v = [[3u64, 1, 0]];
        assert!(fit_dirichlet_strength(&v, &[0.5, 0.5, 0.0]).is_ok());
        assert_eq!(
            fit_dirichlet_strength(&v, &[0.5, 0.0, 0.5]),
            Err(ShrinkError::MixExcludesObserved { category: 1 })
        );
    }
}
