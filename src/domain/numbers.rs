//! How numbers are spelled for a user: the one place a p-value, a share, a
//! change in points or bits per pitch is written, so the page, the charts
//! and the terminal cannot spell one two ways.

/// A count for a reader: `1234567` as `1,234,567`.
pub fn fmt_n<N: TryInto<u64>>(n: N) -> String {
    let digits = n.try_into().map_or_else(|_| "?".to_string(), |n: u64| n.to_string());
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A lift for a reader: "+12%", or "—" when the usage prior was never
/// right (the lift, a ratio to its accuracy, is then not defined; the
/// figures carry 0).
pub fn lift_text(lift: f64, prior_accuracy: f64) -> String {
    if prior_accuracy > 0.0 {
        format!("{:+.0}%", 100.0 * lift)
    } else {
        "—".into()
    }
}

/// A p- or q-value in a table: three decimals, or "< 0.001".
pub fn p_text(p: f64) -> String {
    if p < 0.001 {
        "< 0.001".into()
    } else {
        format!("{p:.3}")
    }
}

/// A test's p and q in words: "p = 0.004, q = 0.031", "p < 0.001, q =
/// 0.012"; `estimated` (a test stopped once it could no longer pass the
/// false-discovery bar) writes "≈" for "=".
pub fn p_and_q(p: f64, q: f64, estimated: bool) -> String {
    let is = |x: f64| if x < 0.001 { "< 0.001".to_string() } else { format!("{} {x:.3}", if estimated { "≈" } else { "=" }) };
    format!("p {}, q {}", is(p), is(q))
}

/// A permutation test's p and q in words ([`p_and_q`]); for a test stopped
/// once it could no longer pass the false-discovery bar, its values are
/// estimates from the shuffles drawn, and it says so.
pub fn p_and_q_text(p: f64, q: f64, shuffles: usize, ruled_out: bool) -> String {
    let values = p_and_q(p, q, ruled_out);
    if ruled_out {
        format!("{values} (from {} shuffles: stopped once no further shuffle could bring it under the false-discovery bar)", fmt_n(shuffles))
    } else {
        values
    }
}

/// A p- or q-value in a narrow terminal column: "<0.001" or "0.012".
pub fn p_cell(p: f64) -> String {
    if p < 0.001 {
        "<0.001".into()
    } else {
        format!("{p:.3}")
    }
}

/// A p- or q-value after its name on a chart label: "= 0.012" or "< 0.001".
pub fn p_label(p: f64) -> String {
    if p < 0.001 {
        "< 0.001".to_string()
    } else {
        format!("= {:.3}", p)
    }
}

/// A q-value in a sentence: "q = 0.012" or "q < 0.001".
pub fn q_text(q: f64) -> String {
    if q < 0.001 {
        "q < 0.001".into()
    } else {
        format!("q = {:.3}", q)
    }
}

/// A share 0..1 as a whole percentage, "81%".
pub fn pct(x: f64) -> String {
    format!("{:.0}%", 100.0 * x)
}

/// A share as a coach reads it in compare: whole percent, one decimal
/// below 1%.
pub fn share_text(x: f64) -> String {
    if x > 0.0 && x < 0.0095 {
        format!("{:.1}%", 100.0 * x)
    } else {
        format!("{:.0}%", 100.0 * x)
    }
}

/// A share difference in percentage points, "+3 points", never "-0".
pub fn points(d: f64) -> String {
    let r = (100.0 * d).round();
    if r == 0.0 {
        "0 points".into()
    } else {
        format!("{r:+.0} points")
    }
}

/// Bits per pitch with a sign, "+0.042" (the audit's tables and charts).
pub fn bits(v: f64) -> String {
    format!("{:+.3}", v)
}

/// Bits per pitch in compare's sentences: signed, a typographic minus,
/// never "-0.000".
pub fn bits_text(x: f64) -> String {
    let s = format!("{x:+.3}");
    if s == "-0.000" {
        "+0.000".into()
    } else {
        s.replace('-', "−")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lift_is_not_spelled_when_the_prior_was_never_right() {
        assert_eq!(lift_text(0.104, 0.41), "+10%");
        assert_eq!(lift_text(-0.031, 0.52), "-3%");
        assert_eq!(lift_text(0.0, 0.0), "—");
    }

    // Spellings worked by hand from the rules above.
    #[test]
    fn spellings() {
        assert_eq!(p_text(0.0004), "< 0.001");
        // p and q after their names: never "p = < 0.001".
        assert_eq!(p_and_q(0.0005, 0.035, false), "p < 0.001, q = 0.035");
        assert_eq!(p_and_q(0.025, 0.334, true), "p ≈ 0.025, q ≈ 0.334");
        assert_eq!(p_and_q_text(0.004, 0.2, 500, false), "p = 0.004, q = 0.200");
        assert!(p_and_q_text(0.089, 0.647, 100, true).starts_with("p ≈ 0.089, q ≈ 0.647 (from 100 shuffles: stopped once"));
        assert_eq!(p_text(0.0123), "0.012");
        assert_eq!(p_label(0.5), "= 0.500");
        assert_eq!(q_text(0.0009), "q < 0.001");
        assert_eq!(pct(0.806), "81%");
        assert_eq!(pct(0.804), "80%");
        assert_eq!(share_text(0.0), "0%");
        assert_eq!(share_text(0.004), "0.4%");
        assert_eq!(share_text(0.5), "50%");
        assert_eq!(share_text(0.851), "85%");
        assert_eq!(points(-0.004), "0 points");
        assert_eq!(points(0.031), "+3 points");
        assert_eq!(bits(0.0421), "+0.042");
        assert_eq!(bits_text(-0.0001), "+0.000");
        assert_eq!(bits_text(-0.25), "−0.250");
        assert_eq!(bits_text(-0.0612), "−0.061");
    }
}
