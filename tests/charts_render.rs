//! Every chart renders to SVG and PNG from sample input: the SVG is a
//! document with the title and axis titles in it and user text escaped; the
//! PNG decodes at the chart's size and is not blank; both are byte-identical
//! when rendered twice.
//!
//! Set TELLSCOPE_CHART_OUT=DIR to also write every chart to DIR for review.
//! All names and figures below are invented.

use tellscope::report::charts::*;

const STAFF: [&str; 6] = ["CH", "CU", "FC", "four-seam", "SI", "SL"];

fn staff_labels() -> Vec<String> {
    STAFF.iter().map(|s| s.to_string()).collect()
}

fn count_grid_sample(pitcher: &str) -> CountGridInput {
    let cells = [
        ("0-0", 212, "four-seam", 0.58, false),
        ("0-1", 104, "SL", 0.47, false),
        ("0-2", 61, "SL", 0.81, true),
        ("1-0", 88, "four-seam", 0.64, false),
        ("1-1", 79, "CH", 0.41, false),
        ("1-2", 70, "SL", 0.74, true),
        ("2-0", 33, "four-seam", 0.88, true),
        ("2-1", 41, "four-seam", 0.61, false),
        ("2-2", 52, "SL", 0.52, false),
        ("3-0", 9, "four-seam", 1.0, false),
        ("3-1", 17, "four-seam", 0.82, false),
        // 3-2 left out: drawn as "no pitches".
    ];
    CountGridInput {
        pitcher: pitcher.to_string(),
        cells: cells
            .iter()
            .map(|&(c, n, p, s, f)| CountCell {
                count: c.into(),
                n,
                top_pitch: p.into(),
                top_share: s,
                flagged: f,
                above_league: f && n > 60,
            })
            .collect(),
        min_n: 20,
        fdr: 0.05,
        side: None,
    }
}

fn mix_sample(pitcher: &str) -> MixByCountInput {
    // Fastball-heavy early and behind, slider when ahead.
    let rows: [(&str, u64, [f64; 5]); 12] = [
        ("0-0", 212, [0.58, 0.14, 0.12, 0.10, 0.06]),
        ("0-1", 104, [0.33, 0.47, 0.10, 0.06, 0.04]),
        ("0-2", 61, [0.11, 0.81, 0.03, 0.05, 0.00]),
        ("1-0", 88, [0.64, 0.16, 0.12, 0.08, 0.00]),
        ("1-1", 79, [0.30, 0.25, 0.41, 0.04, 0.00]),
        ("1-2", 70, [0.12, 0.74, 0.08, 0.06, 0.00]),
        ("2-0", 33, [0.88, 0.06, 0.06, 0.00, 0.00]),
        ("2-1", 41, [0.61, 0.20, 0.19, 0.00, 0.00]),
        ("2-2", 52, [0.25, 0.52, 0.15, 0.08, 0.00]),
        ("3-0", 9, [1.00, 0.00, 0.00, 0.00, 0.00]),
        ("3-1", 17, [0.82, 0.12, 0.06, 0.00, 0.00]),
        ("3-2", 24, [0.50, 0.38, 0.12, 0.00, 0.00]),
    ];
    let types = ["four-seam", "SL", "CH", "CU", "SI"];
    MixByCountInput {
        pitcher: pitcher.to_string(),
        counts: rows
            .iter()
            .map(|(c, n, s)| CountMix {
                count: c.to_string(),
                n: *n,
                shares: types
                    .iter()
                    .zip(s)
                    .map(|(t, v)| (t.to_string(), *v))
                    .collect(),
            })
            .collect(),
        staff_labels: staff_labels(),
    }
}

/// Deterministic stand-in for a permutation null: roughly normal around a
/// small negative mean (held-out bits under shuffled labels), from a fixed
/// linear congruential generator (Knuth's MMIX constants) and Box-Muller.
fn null_sample(pitcher: &str) -> NullDistributionInput {
    let mut state: u64 = 0x2545_F491_4F6C_DD1D;
    let mut uniform = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    };
    let values: Vec<f64> = (0..999)
        .map(|_| {
            let (u1, u2) = (uniform(), uniform());
            let z = (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos();
            -0.004 + 0.011 * z
        })
        .collect();
    NullDistributionInput {
        pitcher: pitcher.to_string(),
        null_values: values,
        observed: 0.041,
        p_value: 0.001,
    }
}

fn staff_sample(metric: StaffMetric) -> StaffPredictabilityInput {
    let rows = [
        ("Dale Brennick", 1412, 0.061, 0.19, true),
        ("Marco Vessel", 988, 0.034, 0.11, true),
        ("Tobias Quill", 1205, 0.012, 0.04, false),
        ("Ray Okonkwo-Lind", 640, 0.047, 0.15, true),
        ("Sam Hadley", 402, -0.006, -0.02, false),
        ("Jun Arimatsu", 1530, 0.004, 0.01, false),
        ("Eli Varga", 275, 0.021, 0.08, false),
        ("Pete Sorrow", 860, -0.013, -0.05, false),
    ];
    StaffPredictabilityInput {
        staff: "Harbor City Gulls".into(),
        pitchers: rows
            .iter()
            .map(|&(p, n, b, l, s)| StaffPitcher {
                pitcher: p.into(),
                n,
                bits_gained: b,
                lift: l,
                significant: s,
            })
            .collect(),
        metric,
        fdr: 0.05,
    }
}

fn top_share_sample(pitcher: &str) -> CompareTopShareInput {
    let rows = [
        ("0-0", 0.58, 0.52, 212, 230),
        ("0-1", 0.47, 0.45, 104, 110),
        ("0-2", 0.81, 0.62, 61, 70),
        ("1-0", 0.64, 0.60, 88, 91),
        ("1-1", 0.41, 0.44, 79, 85),
        ("1-2", 0.74, 0.58, 70, 76),
        ("2-0", 0.88, 0.79, 33, 38),
        ("2-1", 0.61, 0.63, 41, 40),
        ("2-2", 0.52, 0.50, 52, 57),
        ("3-0", 1.00, 0.92, 9, 12),
        ("3-1", 0.82, 0.77, 17, 21),
        ("3-2", 0.50, 0.46, 24, 29),
    ];
    CompareTopShareInput {
        pitcher: pitcher.to_string(),
        before_label: "2023".into(),
        after_label: "2024".into(),
        pairs: rows
            .iter()
            .map(|&(c, a, b, na, nb)| TopSharePair {
                count: c.into(),
                before: Some(a),
                after: Some(b),
                n_before: na,
                n_after: nb,
            })
            .collect(),
        min_n: 20,
    }
}

fn mix_shift_sample(pitcher: &str) -> MixShiftInput {
    MixShiftInput {
        pitcher: pitcher.to_string(),
        before_label: "2023".into(),
        after_label: "2024".into(),
        n_before: 790,
        n_after: 859,
        before: vec![
            ("four-seam".into(), 0.48),
            ("SL".into(), 0.31),
            ("CH".into(), 0.13),
            ("CU".into(), 0.08),
        ],
        after: vec![
            ("four-seam".into(), 0.41),
            ("SL".into(), 0.27),
            ("CH".into(), 0.12),
            ("CU".into(), 0.06),
            ("FC".into(), 0.14),
        ],
    }
}

fn predictability_sample(pitcher: &str, seasons: usize) -> ComparePredictabilityInput {
    let rows = [
        ("2021", 702, 0.052, 0.031, 0.074),
        ("2022", 815, 0.047, 0.028, 0.066),
        ("2023", 790, 0.061, 0.040, 0.083),
        ("2024", 859, 0.018, 0.001, 0.036),
    ];
    ComparePredictabilityInput {
        pitcher: pitcher.to_string(),
        periods: rows[rows.len() - seasons..]
            .iter()
            .map(|&(l, n, b, lo, hi)| PeriodPredictability {
                label: l.into(),
                n,
                bits_gained: b,
                lower: lo,
                upper: hi,
            })
            .collect(),
        interval_label: "95% bootstrap interval".into(),
    }
}

/// Every chart with the given pitcher name, and the axis titles each must show.
fn rank_sample(pitcher: &str) -> LeagueRankInput {
    let rows = [(pitcher, 1412, 91.0, 40.0), ("Marco Vessel", 988, 55.0, 80.0), ("Tobias Quill", 402, 3.0, 12.0)];
    LeagueRankInput {
        rows: rows.iter().map(|&(p, n, b, y)| RankRow { pitcher: p.to_string(), n, bits: b, beyond_bits: y }).collect(),
        among: "412 league pitchers with the minimum sample".into(),
    }
}

fn all_charts(pitcher: &str) -> Vec<(Chart, Vec<&'static str>)> {
    let mut staff = staff_sample(StaffMetric::BitsGained);
    staff.pitchers[0].pitcher = pitcher.to_string();
    let mut staff_lift = staff_sample(StaffMetric::Lift);
    staff_lift.pitchers[0].pitcher = pitcher.to_string();
    vec![
        (
            count_grid(&count_grid_sample(pitcher)).unwrap(),
            vec!["strikes before the pitch", "balls before the pitch"],
        ),
        (
            mix_by_count(&mix_sample(pitcher)).unwrap(),
            vec!["count (balls-strikes)", "share of pitches in the count (%)"],
        ),
        (
            null_distribution(&null_sample(pitcher)).unwrap(),
            vec!["bits gained per pitch (held-out)", "permutations"],
        ),
        (
            staff_predictability(&staff).unwrap(),
            vec!["bits gained per pitch (held-out)"],
        ),
        (
            staff_predictability(&staff_lift).unwrap(),
            vec!["lift in accuracy over a usage-only guess (%)"],
        ),
        (
            league_rank(&rank_sample(pitcher)).unwrap(),
            vec!["percentile (0 = least predictable, 100 = most)"],
        ),
        (
            compare_top_share(&top_share_sample(pitcher)).unwrap(),
            vec!["count (balls-strikes)", "share of his top pitch (%)"],
        ),
        (
            compare_mix_shift(&mix_shift_sample(pitcher)).unwrap(),
            vec!["pitch type", "share of his pitches (%)"],
        ),
        (
            compare_predictability(&predictability_sample(pitcher, 2)).unwrap(),
            vec![
                "period (n = held-out pitches)",
                "bits gained per pitch (held-out)",
            ],
        ),
        (
            {
                // Same pitcher, so the same file stem; renamed here only so
                // both variants can be written side by side for review.
                let mut c = compare_predictability(&predictability_sample(pitcher, 4)).unwrap();
                c.name.push_str("-four-seasons");
                c
            },
            vec![
                "period (n = held-out pitches)",
                "bits gained per pitch (held-out)",
            ],
        ),
    ]
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
        .replace('\'', "&apos;")
}

#[test]
fn every_chart_renders_svg_and_png() {
    let charts = all_charts("Dale Brennick");
    let out = std::env::var_os("TELLSCOPE_CHART_OUT");
    let mut names = std::collections::BTreeSet::new();
    for (chart, axis_titles) in &charts {
        assert!(
            names.insert(chart.name.clone()),
            "duplicate chart name {}",
            chart.name
        );
        assert!(!chart.name.is_empty());
        assert!(
            chart
                .name
                .chars()
                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-' || c == '_'),
            "unsafe file stem {:?}",
            chart.name
        );

        // SVG: a document with the title and every axis title as text.
        let svg = &chart.svg;
        assert!(
            svg.starts_with("<svg"),
            "{}: SVG does not start with <svg",
            chart.name
        );
        assert!(
            svg.trim_end().ends_with("</svg>"),
            "{}: SVG not closed",
            chart.name
        );
        assert!(svg.contains("xmlns=\"http://www.w3.org/2000/svg\""));
        assert!(
            svg.contains(&format!(">\n{}\n</text>", escape(&chart.title))),
            "{}: title text missing",
            chart.name
        );
        for t in axis_titles {
            assert!(
                svg.contains(&escape(t)),
                "{}: axis title {t:?} missing",
                chart.name
            );
        }
        assert!(
            svg.contains("font-family=\"DejaVu Sans, sans-serif\""),
            "{}: font family",
            chart.name
        );
        assert!(
            !svg.contains("font-family=\"sans-serif\""),
            "{}: plotters' default font used",
            chart.name
        );
        // Balanced <text> elements: a cheap well-formedness check.
        assert_eq!(svg.matches("<text").count(), svg.matches("</text>").count());

        // PNG: decodes, has the promised size, is not one flat colour.
        let img = image::load_from_memory_with_format(&chart.png, image::ImageFormat::Png)
            .unwrap_or_else(|e| panic!("{}: PNG does not decode: {e}", chart.name))
            .to_rgb8();
        let (w, h) = svg_size(svg);
        assert_eq!(
            (img.width(), img.height()),
            (w, h),
            "{}: PNG size differs from SVG",
            chart.name
        );
        assert_eq!(w, 720, "{}", chart.name);
        assert!(h >= 480, "{}", chart.name);
        let first = *img.get_pixel(0, 0);
        assert!(
            img.pixels().any(|p| *p != first),
            "{}: PNG is a single colour",
            chart.name
        );
        // Text really was rasterised: the title band (top left, where only
        // the title is drawn) holds plenty of ink. Without glyphs it is blank.
        let title_ink = (8..38)
            .flat_map(|y| (16..300).map(move |x| (x, y)))
            .filter(|&(x, y)| img.get_pixel(x, y).0.iter().all(|&c| c < 100))
            .count();
        assert!(
            title_ink > 300,
            "{}: only {title_ink} dark pixels in the title band",
            chart.name
        );

        if let Some(dir) = &out {
            let dir = std::path::Path::new(dir);
            std::fs::create_dir_all(dir).unwrap();
            std::fs::write(dir.join(format!("{}.png", chart.name)), &chart.png).unwrap();
            std::fs::write(dir.join(format!("{}.svg", chart.name)), &chart.svg).unwrap();
        }
    }
}

fn svg_size(svg: &str) -> (u32, u32) {
    let attr = |name: &str| -> u32 {
        let start = svg.find(&format!("{name}=\"")).unwrap() + name.len() + 2;
        let end = start + svg[start..].find('"').unwrap();
        svg[start..end].parse().unwrap()
    };
    (attr("width"), attr("height"))
}

#[test]
fn rendering_is_deterministic() {
    let a = all_charts("Dale Brennick");
    let b = all_charts("Dale Brennick");
    for ((x, _), (y, _)) in a.iter().zip(&b) {
        assert_eq!(x.svg, y.svg, "{}: SVG differs between runs", x.name);
        assert_eq!(x.png, y.png, "{}: PNG differs between runs", x.name);
    }
    // And the output does depend on the input.
    let c = count_grid(&count_grid_sample("Marco Vessel")).unwrap();
    assert_ne!(c.svg, a[0].0.svg);
    assert_ne!(c.png, a[0].0.png);
}

#[test]
fn user_text_is_escaped_in_svg() {
    let nasty = "Lefty <script>alert(1)</script> & Sons";
    for (chart, _) in all_charts(nasty) {
        assert!(
            !chart.svg.contains("<script"),
            "{}: raw <script> in SVG",
            chart.name
        );
        assert!(
            !chart.svg.contains("& Sons"),
            "{}: raw & in SVG",
            chart.name
        );
        // Every chart shows the name (in the title or, for the staff charts,
        // a row label), escaped, possibly cut short with "…".
        assert!(
            chart.svg.contains("Lefty &lt;script&gt;"),
            "{}: escaped name missing",
            chart.name
        );
        assert!(
            chart.title.contains(nasty) || chart.name.starts_with("staff"),
            "{}",
            chart.name
        );
    }
}

#[test]
fn pitch_colours_follow_the_staff_list() {
    // The same label keeps its colour whoever throws it and whatever else
    // he throws: only the staff-wide sorted list decides.
    let staff = staff_labels();
    let sl = palette::pitch_colour("SL", &staff);
    let mut shuffled = staff.clone();
    shuffled.reverse();
    assert_eq!(palette::pitch_colour("SL", &shuffled), sl);
    let svg = mix_by_count(&mix_sample("Dale Brennick")).unwrap().svg;
    assert!(
        svg.contains(&format!("fill=\"{}\"", palette::hex(sl).to_uppercase()))
            || svg.contains(&format!("fill=\"{}\"", palette::hex(sl)))
    );
}

#[test]
fn bad_input_is_rejected_not_drawn() {
    let mut g = count_grid_sample("x");
    g.cells[0].count = "4-0".into();
    assert!(matches!(count_grid(&g), Err(ChartError::InvalidInput(_))));
    let mut g = count_grid_sample("x");
    g.cells[1].top_share = 1.3;
    assert!(matches!(count_grid(&g), Err(ChartError::InvalidInput(_))));
    let mut g = count_grid_sample("x");
    g.cells.push(g.cells[0].clone());
    assert!(matches!(count_grid(&g), Err(ChartError::InvalidInput(_))));

    let mut n = null_sample("x");
    n.null_values.clear();
    assert!(matches!(
        null_distribution(&n),
        Err(ChartError::InvalidInput(_))
    ));
    let mut n = null_sample("x");
    n.observed = f64::NAN;
    assert!(matches!(
        null_distribution(&n),
        Err(ChartError::InvalidInput(_))
    ));

    let mut p = predictability_sample("x", 2);
    p.periods[0].lower = 0.2;
    assert!(matches!(
        compare_predictability(&p),
        Err(ChartError::InvalidInput(_))
    ));

    let mut s = staff_sample(StaffMetric::Lift);
    s.pitchers.clear();
    assert!(matches!(
        staff_predictability(&s),
        Err(ChartError::InvalidInput(_))
    ));

    let mut r = rank_sample("x");
    r.rows[1].bits = f64::NAN;
    assert!(matches!(league_rank(&r), Err(ChartError::InvalidInput(_))));
    r.rows.clear();
    assert!(matches!(league_rank(&r), Err(ChartError::InvalidInput(_))));
}

#[test]
fn edge_cases_still_render() {
    // One pitcher, one period, one pitch type, an empty grid, a null with
    // every value equal and the observed value far outside it.
    let mut s = staff_sample(StaffMetric::BitsGained);
    s.pitchers.truncate(1);
    staff_predictability(&s).unwrap();
    compare_predictability(&predictability_sample("x", 1)).unwrap();
    let mut m = mix_shift_sample("x");
    m.before.truncate(1);
    m.after.truncate(1);
    compare_mix_shift(&m).unwrap();
    let mut g = count_grid_sample("x");
    g.cells.clear();
    count_grid(&g).unwrap();
    let n = NullDistributionInput {
        pitcher: "x".into(),
        null_values: vec![0.0; 50],
        observed: 0.2,
        p_value: 0.0196,
    };
    null_distribution(&n).unwrap();
    let mut t = top_share_sample("x");
    t.pairs[0].after = None;
    compare_top_share(&t).unwrap();
}

#[test]
fn long_labels_and_large_inputs_render() {
    // Long names, eight pitch types with long labels, a big staff, many
    // periods with date-range labels: everything must still render, at the
    // promised size, with long text cut rather than spilling.
    let long = "Christopher Montgomery-Alvarez Jr., the Third of Harbor City";
    let types = [
        "changeup",
        "curveball",
        "cutter",
        "four-seam fastball",
        "knuckle-curve",
        "sinker",
        "slider",
        "split-finger",
    ];
    let staff: Vec<String> = types.iter().map(|s| s.to_string()).collect();
    let mix = MixByCountInput {
        pitcher: long.into(),
        counts: COUNTS
            .iter()
            .enumerate()
            .map(|(i, c)| {
                let raw: Vec<f64> = (0..8)
                    .map(|k| 1.0 + ((i * 7 + k * 3) % 11) as f64)
                    .collect();
                let total: f64 = raw.iter().sum();
                CountMix {
                    count: c.to_string(),
                    n: 1000 + 997 * i as u64,
                    shares: types
                        .iter()
                        .zip(&raw)
                        .map(|(t, v)| (t.to_string(), v / total))
                        .collect(),
                }
            })
            .collect(),
        staff_labels: staff.clone(),
    };
    let mut grid = count_grid_sample(long);
    for c in &mut grid.cells {
        c.top_pitch = "four-seam fastball".into();
        c.n *= 100;
    }
    let staff_input = StaffPredictabilityInput {
        staff: "Harbor City Gulls".into(),
        pitchers: (0..24)
            .map(|i| StaffPitcher {
                pitcher: if i == 3 {
                    long.to_string()
                } else {
                    format!("Pitcher {i:02}")
                },
                n: 150 + 61 * i as u64,
                bits_gained: 0.004 * (i as f64 - 6.0),
                lift: 0.01 * (i as f64 - 6.0),
                significant: i > 14,
            })
            .collect(),
        metric: StaffMetric::BitsGained,
        fdr: 0.1,
    };
    let periods = ComparePredictabilityInput {
        pitcher: long.into(),
        periods: (0..6)
            .map(|i| PeriodPredictability {
                label: format!("2024-0{}-01..2024-0{}-30", i + 1, i + 2),
                n: 300 + 20 * i as u64,
                bits_gained: 0.01 * i as f64 - 0.01,
                lower: 0.01 * i as f64 - 0.03,
                upper: 0.01 * i as f64 + 0.012,
            })
            .collect(),
        interval_label: "95% bootstrap interval".into(),
    };
    let mut shift = mix_shift_sample(long);
    shift.before = types.iter().map(|t| (t.to_string(), 0.125)).collect();
    shift.after = types
        .iter()
        .enumerate()
        .map(|(i, t)| (t.to_string(), if i == 3 { 0.3 } else { 0.1 }))
        .collect();
    let charts = vec![
        mix_by_count(&mix).unwrap(),
        count_grid(&grid).unwrap(),
        staff_predictability(&staff_input).unwrap(),
        compare_predictability(&periods).unwrap(),
        compare_mix_shift(&shift).unwrap(),
    ];
    for c in charts {
        let img = image::load_from_memory(&c.png).unwrap();
        assert_eq!(img.width(), 720);
        if c.name.starts_with("staff") {
            // 24 rows need more than the usual 480 pixels.
            assert!(img.height() > 480);
        }
        if let Some(dir) = std::env::var_os("TELLSCOPE_CHART_OUT") {
            let dir = std::path::Path::new(&dir);
            std::fs::write(dir.join(format!("{}-stress.png", c.name)), &c.png).unwrap();
            std::fs::write(dir.join(format!("{}-stress.svg", c.name)), &c.svg).unwrap();
        }
        // Text that does not fit is cut with an ellipsis, never clipped.
        assert!(c.svg.contains('…'), "{}: long text not shortened", c.name);
    }
}
