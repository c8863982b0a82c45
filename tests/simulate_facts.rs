//! Facts the simulator must honour: the planted truth shows in the log at
//! its planted rate, a pitcher with no rule is a true null, the game looks
//! like baseball, and the same seed gives the same log. The plain staff of
//! the first release (tests/fixtures/plain-staff, no shared habits) is the
//! null world; the realistic demo club (demo-data) and the realistic league
//! (tests/fixtures/scenarios/realistic_league.toml) must look like a real
//! club's and a real league's logs (the bands at the end of this file).
//!
//! Situation levels are recomputed here from the log's own columns (count,
//! bases, outs, the previous pitch of the plate appearance, this batter's
//! plate appearances against this pitcher so far), independently of the
//! engine's bookkeeping, so an engine that tracked the state wrongly would
//! fail the planted-rate tests.

mod common;

use std::collections::BTreeMap;
use std::sync::OnceLock;
use tellscope::domain::PitchResult;
use tellscope::simulate::{simulate, BatSide, Role, Scenario, SimLog, SimPitch};
use tellscope::domain::levels::{
    bases_level, count_level, inning_level, outs_level, platoon_level, score_level,
    times_through_level, Factor, Hand, NO_PREV_PITCH,
};

/// The demo's seed, as `tellscope demo` uses it (src/cli/demo.rs, demo-data/README.md).
const DEMO_SEED: u64 = 2026;

fn read(path: &str) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{path}: {e}"))
}

/// The plain staff of the first release: every pitch drawn from the mix or
/// a rule, no shared habits (tests/fixtures/plain-staff/README.md).
fn demo_scenario() -> &'static Scenario {
    static S: OnceLock<Scenario> = OnceLock::new();
    S.get_or_init(|| {
        Scenario::from_toml_str(&read(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/fixtures/plain-staff/scenario.toml"
        )))
        .expect("the plain staff scenario is valid")
    })
}

fn demo_log() -> &'static SimLog {
    static L: OnceLock<SimLog> = OnceLock::new();
    L.get_or_init(|| simulate(demo_scenario(), DEMO_SEED))
}

fn fixture(name: &str) -> Scenario {
    let path = format!(
        "{}/tests/fixtures/scenarios/{name}",
        env!("CARGO_MANIFEST_DIR")
    );
    Scenario::from_toml_str(&read(&path)).unwrap_or_else(|e| panic!("{path}: {e}"))
}

/// Is this row the last pitch of its plate appearance?
fn ends_pa(rows: &[SimPitch], i: usize) -> bool {
    i + 1 == rows.len() || rows[i + 1].game != rows[i].game || rows[i + 1].pa != rows[i].pa
}

/// Every factor's level for every row, from the log's columns alone.
fn levels(log: &SimLog) -> Vec<[String; 9]> {
    let mut out = Vec::with_capacity(log.rows.len());
    // (game, pitcher, batter) -> plate appearances so far, and the last pa seen.
    let mut times: BTreeMap<(u32, u32, u32), (u32, u16)> = BTreeMap::new();
    for (i, r) in log.rows.iter().enumerate() {
        let throws = log.pitchers[r.pitcher as usize].throws;
        let prev = if r.pitch_no == 1 {
            NO_PREV_PITCH.to_string()
        } else {
            let p = &log.rows[i - 1];
            assert!(
                p.game == r.game && p.pa == r.pa,
                "pitch_no > 1 continues the plate appearance"
            );
            log.pitch_types[p.pitch_type as usize].clone()
        };
        let t = times.entry((r.game, r.pitcher, r.batter)).or_insert((0, 0));
        if t.1 != r.pa {
            *t = (t.0 + 1, r.pa);
        }
        let mut row: [String; 9] = Default::default();
        for (k, f) in Factor::ALL.iter().enumerate() {
            row[k] = match f {
                Factor::Count => count_level(r.balls, r.strikes).to_string(),
                Factor::Bats => r.bats.as_str().to_string(),
                Factor::Platoon => platoon_level(throws, r.bats).to_string(),
                Factor::Bases => bases_level(r.on_first, r.on_second, r.on_third).to_string(),
                Factor::Outs => outs_level(r.outs).to_string(),
                Factor::PrevPitch => prev.clone(),
                Factor::TimesThrough => times_through_level(t.0).to_string(),
                Factor::Inning => inning_level(r.inning as u32).to_string(),
                Factor::Score => score_level(r.score_diff as i32).to_string(),
            };
        }
        out.push(row);
    }
    out
}

fn slot(f: Factor) -> usize {
    Factor::ALL.iter().position(|g| *g == f).unwrap()
}

fn season_of(log: &SimLog, r: &SimPitch) -> i32 {
    log.games[r.game as usize].season
}

struct Rates {
    pa: f64,
    pitches_per_pa: f64,
    k: f64,
    bb: f64,
    pitches_per_start: f64,
    relief_outings_from_6th: f64,
}

fn rates(log: &SimLog) -> Rates {
    let rows = &log.rows;
    let (mut pa, mut k, mut bb) = (0usize, 0usize, 0usize);
    for i in 0..rows.len() {
        if !ends_pa(rows, i) {
            continue;
        }
        let r = &rows[i];
        pa += 1;
        match r.result {
            PitchResult::Ball if r.balls == 3 => bb += 1,
            PitchResult::CalledStrike | PitchResult::SwingingStrike if r.strikes == 2 => k += 1,
            _ => {}
        }
    }
    // (game, pitcher) -> pitches, first inning.
    let mut outings: BTreeMap<(u32, u32), (u32, u8)> = BTreeMap::new();
    for r in rows {
        outings
            .entry((r.game, r.pitcher))
            .or_insert((0, r.inning))
            .0 += 1;
    }
    let (mut start_pitches, mut starts, mut relief, mut relief_late) = (0u32, 0u32, 0u32, 0u32);
    for ((_, p), (n, first_inning)) in &outings {
        if log.pitchers[*p as usize].role == Role::Starter {
            start_pitches += n;
            starts += 1;
        } else {
            relief += 1;
            relief_late += (*first_inning >= 6) as u32;
        }
    }
    Rates {
        pa: pa as f64,
        pitches_per_pa: rows.len() as f64 / pa as f64,
        k: k as f64 / pa as f64,
        bb: bb as f64 / pa as f64,
        pitches_per_start: start_pitches as f64 / starts as f64,
        relief_outings_from_6th: relief_late as f64 / relief as f64,
    }
}

/// Loose bands of the trade, common practice (no source; round figures
/// any scout would give, not tuned to data): about 3.9 pitches per plate
/// appearance, strikeouts in 15-28% of plate appearances, walks in 5-11%,
/// a starter's outing 80-110 pitches on average, relievers mostly from
/// the sixth inning on.
fn assert_trade_facts(what: &str, r: &Rates) {
    assert!(
        (3.6..=4.2).contains(&r.pitches_per_pa),
        "{what}: pitches per PA {}",
        r.pitches_per_pa
    );
    assert!((0.15..=0.28).contains(&r.k), "{what}: K% {}", r.k);
    assert!((0.05..=0.11).contains(&r.bb), "{what}: BB% {}", r.bb);
    assert!(
        (80.0..=110.0).contains(&r.pitches_per_start),
        "{what}: pitches per start {}",
        r.pitches_per_start
    );
    assert!(
        r.relief_outings_from_6th >= 0.75,
        "{what}: relief outings from the 6th {}",
        r.relief_outings_from_6th
    );
}

#[test]
fn demo_scenario_is_as_advertised() {
    let s = demo_scenario();
    assert_eq!(
        s.seasons
            .iter()
            .map(|x| (x.year, x.games))
            .collect::<Vec<_>>(),
        [(2025, 130), (2026, 130)]
    );
    assert!(s.pitchers.len() >= 12);
    let starters = s
        .pitchers
        .iter()
        .filter(|p| p.role == Role::Starter)
        .count();
    assert_eq!(starters, 5);
    assert!(s.pitchers.len() - starters >= 7);
    let pure_nulls = s
        .pitchers
        .iter()
        .filter(|p| p.rules.is_empty() && p.changes.is_empty())
        .count();
    assert!(pure_nulls >= 4, "{pure_nulls} pure nulls");
    let factors: std::collections::BTreeSet<Factor> = s
        .pitchers
        .iter()
        .flat_map(|p| p.rules.iter().flat_map(|r| r.when.keys().copied()))
        .collect();
    assert!(factors.len() >= 5, "factors planted: {factors:?}");
    for f in [
        Factor::Count,
        Factor::PrevPitch,
        Factor::Platoon,
        Factor::Bases,
        Factor::TimesThrough,
    ] {
        assert!(factors.contains(&f), "no {f} tell planted");
    }
    // One pitcher adds a pitch in 2026.
    let adds = s
        .pitchers
        .iter()
        .filter(|p| {
            let before: Vec<String> = p.mix_in(2025).into_iter().map(|m| m.0).collect();
            p.mix_in(2026)
                .iter()
                .any(|(l, share)| !before.contains(l) && *share >= 0.2)
        })
        .count();
    assert_eq!(adds, 1);
    // Labels are the plain ones.
    let log = demo_log();
    for t in &log.pitch_types {
        assert!([
            "fastball",
            "sinker",
            "cutter",
            "slider",
            "curveball",
            "changeup",
            "splitter"
        ]
        .contains(&t.as_str()));
    }
    assert!(
        (30_000..=45_000).contains(&log.rows.len()),
        "{} pitches",
        log.rows.len()
    );
}

#[test]
fn demo_looks_like_baseball() {
    let r = rates(demo_log());
    assert!(r.pa > 9_000.0);
    assert_trade_facts("demo", &r);
}

#[test]
fn null_staff_looks_like_baseball() {
    let log = simulate(&fixture("null_staff.toml"), 3);
    assert!(log.planted.is_empty());
    assert_trade_facts("null staff", &rates(&log));
}

#[test]
fn league_scale_is_reached() {
    // Its speed is measured by scripts/bench.sh, never asserted here.
    let scenario = fixture("league.toml");
    let log = simulate(&scenario, 1);
    assert!(log.pitchers.len() >= 750, "{} pitchers", log.pitchers.len());
    assert!(log.rows.len() >= 1_500_000, "{} pitches", log.rows.len());
    assert_eq!(log.games.len(), 32 * 162 * 2);
    assert_trade_facts("league", &rates(&log));
    // Roughly one generated pitcher in ten carries a rule (planted_share = 0.1):
    // 768 draws, binomial sd about 8.3 (common practice: 4 sd).
    let with_rules: std::collections::BTreeSet<u32> =
        log.planted.iter().map(|p| p.pitcher).collect();
    assert!(
        (43..=111).contains(&with_rules.len()),
        "{} pitchers with rules",
        with_rules.len()
    );
    let ids: std::collections::BTreeSet<&str> = log.games.iter().map(|g| g.id.as_str()).collect();
    assert_eq!(ids.len(), log.games.len(), "game ids are unique");
}

/// Rows of a pitcher-season in which `rule_index` is the first rule that
/// holds (rules listed earlier win), and the rows in which none holds.
fn rule_rows(
    log: &SimLog,
    lv: &[[String; 9]],
    pitcher: u32,
    season: i32,
    rule_index: usize,
) -> (Vec<usize>, Vec<usize>) {
    let rules: Vec<_> = log
        .planted
        .iter()
        .filter(|p| p.pitcher == pitcher && p.season == season)
        .collect();
    let holds = |i: usize, k: usize| {
        rules[k]
            .when
            .iter()
            .all(|(f, levels)| levels.contains(&lv[i][slot(*f)]))
    };
    let (mut mine, mut none) = (Vec::new(), Vec::new());
    for (i, r) in log.rows.iter().enumerate() {
        if r.pitcher != pitcher || season_of(log, r) != season {
            continue;
        }
        match (0..rules.len()).find(|&k| holds(i, k)) {
            Some(k) if k == rule_index => mine.push(i),
            None => none.push(i),
            _ => {}
        }
    }
    (mine, none)
}

fn share_of(log: &SimLog, rows: &[usize], label: &str) -> (f64, usize) {
    let t = log.pitch_types.iter().position(|p| p == label).unwrap() as u16;
    let hits = rows
        .iter()
        .filter(|&&i| log.rows[i].pitch_type == t)
        .count();
    (hits as f64 / rows.len() as f64, rows.len())
}

/// `share` of `n` Bernoulli(`p`) draws lies within 4 binomial standard
/// errors sqrt(p(1-p)/n) of `p` (normal approximation to the binomial;
/// from memory, any statistics text). A rate of exactly 0 or 1 must hold
/// exactly.
fn assert_near(what: &str, share: f64, p: f64, n: usize) {
    let se = (p * (1.0 - p) / n as f64).sqrt();
    assert!(
        (share - p).abs() <= 4.0 * se + 1e-12,
        "{what}: share {share:.4} of {n}, planted {p:.4} (4 se = {:.4})",
        4.0 * se
    );
}

#[test]
fn every_planted_rule_shows_at_its_rate() {
    let log = demo_log();
    let lv = levels(log);
    assert!(log.planted.len() >= 7);
    let mut order: BTreeMap<(u32, i32), usize> = BTreeMap::new();
    for tell in &log.planted {
        let k = order.entry((tell.pitcher, tell.season)).or_insert(0);
        let (mine, none) = rule_rows(log, &lv, tell.pitcher, tell.season, *k);
        *k += 1;
        let who = format!(
            "{} {} {:?} -> {}",
            log.pitchers[tell.pitcher as usize].name, tell.season, tell.when, tell.throw
        );
        // Large enough to be found: 100+ pitches in the situation a season.
        assert!(
            mine.len() >= 100,
            "{who}: only {} pitches in the situation",
            mine.len()
        );
        let (share, n) = share_of(log, &mine, &tell.throw);
        assert_near(&who, share, tell.rate, n);
        // Where no rule holds he throws from his plain mix.
        let (base, m) = share_of(log, &none, &tell.throw);
        assert_near(&format!("{who} (no rule)"), base, tell.base_share, m);
        // Every tell is a shift of 0.2 or more, except the rule that returns
        // a pitcher to his plain share (the planted season-to-season change).
        if (tell.rate - tell.base_share).abs() > 1e-9 {
            assert!(
                (tell.rate - tell.base_share).abs() >= 0.2,
                "{who}: shift too small"
            );
        }
    }
}

#[test]
fn the_season_change_and_the_new_pitch_show() {
    let log = demo_log();
    let lv = levels(log);
    let idx = |name: &str| log.pitchers.iter().position(|p| p.name == name).unwrap() as u32;
    // Mateo Lindqvist: first-pitch fastball share 0.85 in 2025, 0.50 in 2026.
    let p = idx("Mateo Lindqvist");
    let first_pitch = |season: i32| -> Vec<usize> {
        (0..log.rows.len())
            .filter(|&i| {
                log.rows[i].pitcher == p
                    && season_of(log, &log.rows[i]) == season
                    && lv[i][0] == "0-0"
            })
            .collect()
    };
    let (s25, n25) = share_of(log, &first_pitch(2025), "fastball");
    let (s26, n26) = share_of(log, &first_pitch(2026), "fastball");
    assert_near("Lindqvist 0-0 2025", s25, 0.85, n25);
    assert_near("Lindqvist 0-0 2026", s26, 0.50, n26);
    assert!(s25 - s26 >= 0.25);
    // Wes Halloran: no cutter in 2025, a quarter of his pitches in 2026.
    let w = idx("Wes Halloran");
    let rows = |season: i32| -> Vec<usize> {
        (0..log.rows.len())
            .filter(|&i| log.rows[i].pitcher == w && season_of(log, &log.rows[i]) == season)
            .collect()
    };
    let (c25, _) = share_of(log, &rows(2025), "cutter");
    let (c26, n) = share_of(log, &rows(2026), "cutter");
    assert_eq!(c25, 0.0);
    assert_near("Halloran cutter 2026", c26, 0.25, n);
}

/// Upper 0.9999 quantile of chi-square with df = 1..60:
/// `[round(float(scipy.stats.chi2.ppf(0.9999, d)), 3) for d in range(1, 61)]`
/// (scipy 1.17.1).
const CHI2_9999: [f64; 60] = [
    15.137, 18.421, 21.108, 23.513, 25.745, 27.856, 29.878, 31.828, 33.72, 35.564, 37.367, 39.134,
    40.871, 42.579, 44.263, 45.925, 47.566, 49.189, 50.795, 52.386, 53.962, 55.525, 57.075, 58.613,
    60.14, 61.657, 63.164, 64.662, 66.152, 67.633, 69.106, 70.571, 72.03, 73.481, 74.926, 76.365,
    77.798, 79.225, 80.646, 82.062, 83.473, 84.879, 86.281, 87.677, 89.07, 90.457, 91.841, 93.221,
    94.597, 95.969, 97.337, 98.702, 100.063, 101.421, 102.776, 104.127, 105.476, 106.821, 108.163,
    109.503,
];

/// Pearson's chi-square test of independence of pitch type and one
/// factor's level over `rows` (Pearson 1900; the statistic as in
/// `scipy.stats.chi2_contingency` without correction). Levels with fewer
/// than 50 pitches are left out so every expected cell count is at least
/// 5 for a pitch of share 0.1 or more (the usual rule of thumb, common
/// practice). Returns (statistic, df).
fn chi_square(log: &SimLog, lv: &[[String; 9]], rows: &[usize], factor: Factor) -> (f64, usize) {
    let k = slot(factor);
    let mut table: BTreeMap<&str, BTreeMap<u16, f64>> = BTreeMap::new();
    for &i in rows {
        *table
            .entry(lv[i][k].as_str())
            .or_default()
            .entry(log.rows[i].pitch_type)
            .or_default() += 1.0;
    }
    table.retain(|_, cells| cells.values().sum::<f64>() >= 50.0);
    let mut cols: BTreeMap<u16, f64> = BTreeMap::new();
    for cells in table.values() {
        for (t, n) in cells {
            *cols.entry(*t).or_default() += n;
        }
    }
    let total: f64 = cols.values().sum();
    let mut stat = 0.0;
    for cells in table.values() {
        let row_total: f64 = cells.values().sum();
        for (t, col_total) in &cols {
            let expected = row_total * col_total / total;
            let observed = cells.get(t).copied().unwrap_or(0.0);
            stat += (observed - expected).powi(2) / expected;
        }
    }
    let df = table.len().saturating_sub(1) * cols.len().saturating_sub(1);
    (stat, df)
}

/// Upper 0.99 quantile of chi-square with df = 1..10:
/// `[round(float(scipy.stats.chi2.ppf(0.99, d)), 3) for d in range(1, 11)]`
/// (scipy 1.17.1, recomputed with the script's environment).
const CHI2_99: [f64; 10] = [6.635, 9.21, 11.345, 13.277, 15.086, 16.812, 18.475, 20.09, 21.666, 23.209];

const NULL_FACTORS: [Factor; 8] = [
    Factor::Count,
    Factor::Platoon,
    Factor::Bases,
    Factor::Outs,
    Factor::PrevPitch,
    Factor::TimesThrough,
    Factor::Inning,
    Factor::Score,
];

/// Each pitcher with no rule, each season: his pitch type is independent
/// of every factor (chi-square at 0.9999, so some 100 tests together still
/// fail by chance well under 1% of the time).
fn assert_nulls_independent(log: &SimLog) -> usize {
    let lv = levels(log);
    let mut tested = 0;
    for (p, pitcher) in log.pitchers.iter().enumerate() {
        if log.planted.iter().any(|t| t.pitcher == p as u32) {
            continue;
        }
        for season in pitcher.mixes.iter().map(|m| m.season) {
            let rows: Vec<usize> = (0..log.rows.len())
                .filter(|&i| {
                    log.rows[i].pitcher == p as u32 && season_of(log, &log.rows[i]) == season
                })
                .collect();
            for f in NULL_FACTORS {
                let (stat, df) = chi_square(log, &lv, &rows, f);
                if df == 0 {
                    continue;
                }
                tested += 1;
                assert!(
                    stat < CHI2_9999[df - 1],
                    "{} {season}: pitch type depends on {f}: chi2 = {stat:.1}, df = {df}",
                    pitcher.name
                );
            }
        }
    }
    tested
}

#[test]
fn null_pitchers_choose_independently_of_the_situation() {
    let tested = assert_nulls_independent(demo_log());
    assert!(tested >= 60, "only {tested} tests run");
}

#[test]
fn null_staff_is_null() {
    let log = simulate(&fixture("null_staff.toml"), 5);
    let tested = assert_nulls_independent(&log);
    assert!(tested >= 100, "only {tested} tests run");
}

#[test]
fn the_independence_test_can_fail() {
    // The same test on planted pitchers, on the factor of their tell, must
    // reject: otherwise the null tests above prove nothing.
    let log = demo_log();
    let lv = levels(log);
    for (name, factor) in [
        ("Oren Vasquell", Factor::Count),
        ("Teodor Brimley", Factor::Platoon),
        ("Inigo Marchetti", Factor::TimesThrough),
        ("Jory Kestenbaum", Factor::Bases),
        ("Anselm Drury", Factor::PrevPitch),
    ] {
        let p = log.pitchers.iter().position(|x| x.name == name).unwrap() as u32;
        let rows: Vec<usize> = (0..log.rows.len())
            .filter(|&i| log.rows[i].pitcher == p && season_of(log, &log.rows[i]) == 2026)
            .collect();
        let (stat, df) = chi_square(log, &lv, &rows, factor);
        assert!(
            stat > CHI2_9999[df - 1],
            "{name}: {factor} tell not detected (chi2 {stat:.1}, df {df})"
        );
    }
}

#[test]
fn counts_outs_and_innings_follow_the_rules() {
    let log = demo_log();
    let rows = &log.rows;
    let mut two_strike_fouls = 0;
    for i in 0..rows.len() {
        let r = &rows[i];
        assert!(r.balls <= 3 && r.strikes <= 2 && r.outs <= 2 && r.inning >= 1);
        let first_of_game = i == 0 || rows[i - 1].game != r.game;
        if first_of_game {
            assert_eq!((r.pa, r.pitch_no, r.inning, r.outs), (1, 1, 1, 0));
        }
        if r.pitch_no == 1 {
            assert_eq!((r.balls, r.strikes), (0, 0));
            if !first_of_game {
                assert_eq!(r.pa, rows[i - 1].pa + 1, "plate appearances count up");
                assert!(r.inning >= rows[i - 1].inning);
            }
        }
        let ends = match r.result {
            PitchResult::Ball => r.balls == 3,
            PitchResult::CalledStrike | PitchResult::SwingingStrike => r.strikes == 2,
            PitchResult::Foul => false,
            PitchResult::InPlay | PitchResult::HitByPitch => true,
            PitchResult::Other => panic!("row {i}: the simulator wrote `other`, which it never draws"),
        };
        assert_eq!(ends, ends_pa(rows, i), "row {i}: {r:?}");
        if !ends {
            let n = &rows[i + 1];
            assert_eq!(n.pitch_no, r.pitch_no + 1);
            assert_eq!(
                (n.pitcher, n.batter, n.inning, n.outs),
                (r.pitcher, r.batter, r.inning, r.outs)
            );
            let want = match r.result {
                PitchResult::Ball => (r.balls + 1, r.strikes),
                PitchResult::Foul => (r.balls, (r.strikes + 1).min(2)),
                _ => (r.balls, r.strikes + 1),
            };
            assert_eq!((n.balls, n.strikes), want, "row {i}");
            if r.result == PitchResult::Foul && r.strikes == 2 {
                two_strike_fouls += 1;
            }
        }
    }
    assert!(two_strike_fouls > 1000);
    // The score moves both ways.
    assert!(rows.iter().any(|r| r.score_diff > 2) && rows.iter().any(|r| r.score_diff < -2));
}

#[test]
fn batters_bat_from_their_side_and_switch_hitters_switch() {
    let log = demo_log();
    let mut switch = 0;
    for r in &log.rows {
        let throws = log.pitchers[r.pitcher as usize].throws;
        match log.batters[r.batter as usize].bats {
            BatSide::L => assert_eq!(r.bats, Hand::L),
            BatSide::R => assert_eq!(r.bats, Hand::R),
            BatSide::Switch => {
                switch += 1;
                assert_ne!(r.bats, throws)
            }
        }
    }
    assert!(switch > 1000);
}

#[test]
fn speeds_and_locations_are_plausible() {
    // Common practice: a staff's fastballs average 91-96 mph, its
    // curveballs 75-83 (a dozen pitchers, each with his own velocity); a
    // called strike is in the zone, a ball outside it.
    let log = demo_log();
    let mean_speed = |label: &str| {
        let t = log.pitch_types.iter().position(|p| p == label).unwrap() as u16;
        let v: Vec<f32> = log
            .rows
            .iter()
            .filter(|r| r.pitch_type == t)
            .map(|r| r.speed_mph)
            .collect();
        v.iter().sum::<f32>() / v.len() as f32
    };
    assert!((91.0..=96.0).contains(&mean_speed("fastball")));
    assert!((75.0..=83.0).contains(&mean_speed("curveball")));
    for r in &log.rows {
        assert!((60.0..=105.0).contains(&r.speed_mph));
        assert!(r.loc_side_ft.abs() < 3.5 && (0.0..6.0).contains(&r.loc_height_ft), "{} {}", r.loc_side_ft, r.loc_height_ft);
    }
}

/// Where pitches go follows the shared zone habit: inside the rule-book
/// zone 32% of the time at 0-2 and 62% at 3-1 (facts of the trade, common
/// practice), each within its 99% binomial band, among the pitchers with no
/// planted spot. In the simulator the location does not depend on the
/// result (results depend on the count only).
#[test]
fn the_zone_share_moves_with_the_count() {
    use tellscope::situations::regions::region_of;
    let log = realistic_demo();
    let spotted = ["Oren Vasquell", "Ned Castellane", "Silas Wetherby"];
    let at = |balls: u8, strikes: u8| {
        let rows: Vec<&SimPitch> = log
            .rows
            .iter()
            .filter(|r| r.balls == balls && r.strikes == strikes && !spotted.contains(&log.pitchers[r.pitcher as usize].name.as_str()))
            .collect();
        let inside = rows.iter().filter(|r| region_of(r.loc_side_ft as f64, r.loc_height_ft as f64, r.bats).in_zone()).count();
        (inside as u64, rows.len() as u64)
    };
    for ((b, s), share) in [((0, 2), 0.32), ((3, 1), 0.62), ((0, 0), 0.50)] {
        let (k, n) = at(b, s);
        let (lo, hi) = common::band(n, share);
        assert!(n > 500 && (lo..=hi).contains(&k), "{b}-{s}: {k} of {n} in the zone; 99% band {lo}..={hi} around {share}");
    }
}


/// The plain staff has no shared habits: 48% in the zone at every count.
#[test]
fn without_habits_the_zone_share_is_flat() {
    use tellscope::situations::regions::region_of;
    let log = demo_log();
    for (b, s) in [(0u8, 2u8), (3, 1), (0, 0)] {
        let rows: Vec<&SimPitch> = log.rows.iter().filter(|r| r.balls == b && r.strikes == s).collect();
        let k = rows.iter().filter(|r| region_of(r.loc_side_ft as f64, r.loc_height_ft as f64, r.bats).in_zone()).count() as u64;
        let n = rows.len() as u64;
        let (lo, hi) = common::band(n, 0.48);
        assert!(n > 300 && (lo..=hi).contains(&k), "{b}-{s}: {k} of {n} in the zone; 99% band {lo}..={hi} around 0.48");
    }
}

#[test]
fn the_closer_closes() {
    // Common practice: the closer's outings begin in the ninth or later.
    let log = demo_log();
    let closer = log
        .pitchers
        .iter()
        .position(|p| p.name == "Jory Kestenbaum")
        .unwrap() as u32;
    let mut first: BTreeMap<u32, u8> = BTreeMap::new();
    for r in log.rows.iter().filter(|r| r.pitcher == closer) {
        first.entry(r.game).or_insert(r.inning);
    }
    let late = first.values().filter(|&&i| i >= 9).count();
    assert!(
        first.len() >= 60 && late as f64 >= 0.8 * first.len() as f64,
        "{late} of {}",
        first.len()
    );
}

#[test]
fn games_have_ids_and_dates_in_order() {
    let log = demo_log();
    assert_eq!(log.games.len(), 260);
    assert_eq!(log.games[0].id, "G2025-001");
    assert_eq!(log.games[0].date, "2025-04-03");
    assert_eq!(log.games[130].id, "G2026-001");
    for w in log.games.windows(2) {
        assert!(w[0].date < w[1].date);
    }
    for g in &log.games {
        assert!(g.date.starts_with(&g.season.to_string()));
    }
    // Rows come in game order.
    assert!(log.rows.windows(2).all(|w| w[0].game <= w[1].game));
}

#[test]
fn same_seed_same_log_other_seed_other_log() {
    let s = demo_scenario();
    assert_eq!(simulate(s, 11), simulate(s, 11));
    assert_ne!(simulate(s, 11).rows, simulate(s, 12).rows);
}

#[test]
fn thread_count_does_not_change_the_log() {
    let s = Scenario::from_toml_str(&REALISTIC_HEAD.replace("games = 30", "games = 12")).unwrap();
    assert_eq!(same_at_any_thread_count(&s).games.len(), 6 * 24);
    // With every kind of churn and the shared habits.
    let churned = Scenario::from_toml_str(&format!(
        "{}\narsenal = \"full\"\nturnover = 0.3\ntrades = 0.2\ncall_ups = 2\ninjuries = 0.3\nadds = 0.3\ndrops = 0.2\ndrift = 0.2\n[habits]\n",
        REALISTIC_HEAD
    ))
    .unwrap();
    same_at_any_thread_count(&churned);
}

/// The log of `s` at seed 9 on 1, 2 and 5 threads: the same every time.
fn same_at_any_thread_count(s: &Scenario) -> SimLog {
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| simulate(s, 9))
    };
    let one = run(1);
    assert_eq!(one, run(2));
    assert_eq!(one, run(5));
    one
}

const REALISTIC_HEAD: &str = r#"
[club]
name = "Churn Check"
[[season]]
year = 2025
games = 30
start = "2025-04-03"
[[season]]
year = 2026
games = 30
start = "2026-04-03"
[batters]
pool = 120
left = 0.4
right = 0.5
switch = 0.1
[league]
teams = 6
starters = 5
relievers = 8
planted_share = 0.5"#;

#[test]
fn the_first_listed_rule_wins() {
    let s = Scenario::from_toml_str(
        r#"
        [club]
        name = "Order Check"
        [[season]]
        year = 2025
        games = 20
        start = "2025-04-03"
        [batters]
        pool = 60
        left = 0.5
        right = 0.5
        switch = 0.0
        [[pitcher]]
        name = "First Wins"
        throws = "R"
        role = "starter"
        mix = { fastball = 50, slider = 30, changeup = 20 }
          [[pitcher.rule]]
          when = { count = "0-0" }
          throw = "slider"
          rate = 1.0
          [[pitcher.rule]]
          when = { platoon = "same" }
          throw = "fastball"
          rate = 1.0
        [[pitcher]]
        name = "Helper"
        throws = "L"
        role = "reliever"
        mix = { fastball = 1 }
        "#,
    )
    .unwrap();
    let log = simulate(&s, 4);
    let lv = levels(&log);
    let slider = log.pitch_types.iter().position(|t| t == "slider").unwrap() as u16;
    let fastball = log
        .pitch_types
        .iter()
        .position(|t| t == "fastball")
        .unwrap() as u16;
    let (mut both, mut same_only) = (0, 0);
    for (i, r) in log.rows.iter().enumerate().filter(|(_, r)| r.pitcher == 0) {
        let first = lv[i][slot(Factor::Count)] == "0-0";
        let same = lv[i][slot(Factor::Platoon)] == "same";
        if first && same {
            both += 1;
            assert_eq!(
                r.pitch_type, slider,
                "0-0 to a same-side batter: the first rule decides"
            );
        } else if same {
            same_only += 1;
            assert_eq!(r.pitch_type, fastball);
        } else if first {
            assert_eq!(r.pitch_type, slider);
        }
    }
    assert!(both > 50 && same_only > 100);
}

#[test]
fn fixtures_parse_and_run() {
    let tiny = fixture("tiny.toml");
    let log = simulate(&tiny, 0);
    assert!((1_000..=6_000).contains(&log.rows.len()));
    assert_eq!(log.planted.len(), 4); // two rules, each in both seasons
    let null = fixture("null_staff.toml");
    assert!(null
        .pitchers
        .iter()
        .all(|p| p.rules.is_empty() && p.changes.is_empty()));
    assert!(null.pitchers.len() >= 6);
}

fn error_of(text: &str) -> String {
    Scenario::from_toml_str(text).expect_err("should be rejected")
}

const HEAD: &str = r#"
[club]
name = "Error Check"
[[season]]
year = 2025
games = 10
start = "2025-04-03"
[batters]
pool = 40
left = 0.4
right = 0.5
switch = 0.1
[[pitcher]]
name = "Backup Arm"
throws = "R"
role = "reliever"
mix = { fastball = 1, slider = 1 }
"#;

fn with_pitcher(body: &str) -> String {
    format!("{HEAD}\n[[pitcher]]\nname = \"Ace Testa\"\nthrows = \"R\"\nrole = \"starter\"\nmix = {{ fastball = 60, slider = 40 }}\n{body}")
}

#[test]
fn errors_name_the_pitcher_and_the_key() {
    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { cnt = \"0-2\" }\nthrow = \"slider\"\nrate = 0.8\n",
    ));
    assert!(
        e.contains("Ace Testa") && e.contains("cnt") && e.contains("count"),
        "{e}"
    );

    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { count = \"3-3\" }\nthrow = \"slider\"\nrate = 0.8\n",
    ));
    assert!(
        e.contains("Ace Testa") && e.contains("3-3") && e.contains("3-2"),
        "{e}"
    );

    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { count = \"0-2\" }\nthrow = \"curveball\"\nrate = 0.8\n",
    ));
    assert!(
        e.contains("Ace Testa") && e.contains("curveball") && e.contains("mix"),
        "{e}"
    );

    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { count = \"0-2\" }\nthrow = \"slider\"\nrate = 1.5\n",
    ));
    assert!(e.contains("Ace Testa") && e.contains("rate"), "{e}");

    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { prev_pitch = \"sinker\" }\nthrow = \"slider\"\nrate = 0.5\n",
    ));
    assert!(e.contains("prev_pitch") && e.contains("none"), "{e}");

    let e = error_of(&with_pitcher(
        "[[pitcher.change]]\nseason = 2027\nadd = { cutter = 0.2 }\n",
    ));
    assert!(e.contains("Ace Testa") && e.contains("2027"), "{e}");

    let e = error_of(&with_pitcher(
        "[[pitcher.change]]\nseason = 2025\nadd = { slider = 0.2 }\n",
    ));
    assert!(e.contains("already throws"), "{e}");

    let e = error_of(&HEAD.replace("throws = \"R\"", "throws = \"X\""));
    assert!(e.contains("Backup Arm") && e.contains("throws"), "{e}");

    let e = error_of(&HEAD.replace("role = \"reliever\"", "role = \"closer\""));
    assert!(e.contains("Backup Arm") && e.contains("starter"), "{e}");

    // A typo in a key is caught by the parser, with the key named.
    let e = error_of(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { count = \"0-2\" }\nthrow = \"slider\"\nrat = 0.8\n",
    ));
    assert!(e.contains("rat"), "{e}");

    let e = error_of(&HEAD.replace("switch = 0.1", "switch = 0.3"));
    assert!(e.contains("batters") && e.contains("add up to 1"), "{e}");

    let e = error_of(&HEAD.replace("start = \"2025-04-03\"", "start = \"2025-13-03\""));
    assert!(e.contains("YYYY-MM-DD"), "{e}");

    // A club without a starter cannot field a rotation.
    let e = error_of(HEAD);
    assert!(e.contains("starter"), "{e}");

    // The keys of the realistic world.
    let e = error_of(&with_pitcher("seasons = [2027]\n"));
    assert!(e.contains("Ace Testa") && e.contains("2027"), "{e}");
    let e = error_of(&with_pitcher("joins = \"2025-04-31\"\n"));
    assert!(e.contains("Ace Testa") && e.contains("joins") && e.contains("YYYY-MM-DD"), "{e}");
    // The only starter leaves after the first game: games without a starter.
    let e = error_of(&with_pitcher("leaves = \"2025-04-03\"\n"));
    assert!(e.contains("no starter") && e.contains("2025-04-04"), "{e}");
    let e = error_of(&with_pitcher("[[pitcher.change]]\nseason = 2025\ndrop = [\"cutter\"]\n"));
    assert!(e.contains("Ace Testa") && e.contains("cutter"), "{e}");
    let e = error_of(&with_pitcher("[[pitcher.change]]\nseason = 2025\nsplit = { slider = { sweeper = 1.5 } }\n"));
    assert!(e.contains("split.slider"), "{e}");
    let e = error_of(&format!("{}\n[habits]\noutcomes = \"real\"\n", with_pitcher("")));
    assert!(e.contains("[habits]") && e.contains("league"), "{e}");
    let e = error_of(&format!("{}\n[habits]\nfastball_share = {{ \"4-0\" = 0.9 }}\n", with_pitcher("")));
    assert!(e.contains("4-0") && e.contains("3-2"), "{e}");
    let e = error_of(&format!("{REALISTIC_HEAD}\narsenal = \"huge\"\n"));
    assert!(e.contains("arsenal") && e.contains("full"), "{e}");
    let e = error_of(&format!("{REALISTIC_HEAD}\ntrades = 1.5\n"));
    assert!(e.contains("trades"), "{e}");
}

#[test]
fn a_valid_scenario_round_trips_its_keys() {
    let s = Scenario::from_toml_str(&with_pitcher(
        "[[pitcher.rule]]\nwhen = { outs = 2, bases = [\"-2-\", \"12-\"] }\nthrow = \"slider\"\nrate = 0.7\nfrom = 2025\n",
    ))
    .unwrap();
    let rule = &s.pitchers[1].rules[0];
    assert_eq!(rule.when[&Factor::Outs], vec!["2".to_string()]);
    assert_eq!(
        rule.when[&Factor::Bases],
        vec!["-2-".to_string(), "12-".to_string()]
    );
    assert!(rule.active_in(2025));
}

// ---------------------------------------------------------------------------
// The realistic world (issue: a simulated league that looks like the real
// one). The bands below are facts of the trade measured on a real
// two-season league log (common practice, no published source), taken as
// loose bands, never as tuned targets; each band is several times wider
// than the sampling error of a log this size.

fn realistic_demo() -> &'static SimLog {
    static L: OnceLock<SimLog> = OnceLock::new();
    L.get_or_init(|| {
        let text = read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/scenario.toml"));
        simulate(&Scenario::from_toml_str(&text).expect("the demo scenario is valid"), DEMO_SEED)
    })
}

fn realistic_league() -> &'static SimLog {
    static L: OnceLock<SimLog> = OnceLock::new();
    L.get_or_init(|| simulate(&fixture("realistic_league.toml"), 1))
}

/// Per pitcher and season: pitches by pitch label, and the teams he pitched for.
#[derive(Default)]
struct PitcherSeason {
    n: usize,
    by_type: BTreeMap<String, usize>,
    teams: std::collections::BTreeSet<String>,
    first_day: String,
}

fn pitcher_seasons(log: &SimLog) -> BTreeMap<(u32, i32), PitcherSeason> {
    let mut out: BTreeMap<(u32, i32), PitcherSeason> = BTreeMap::new();
    for r in &log.rows {
        let g = &log.games[r.game as usize];
        let ps = out.entry((r.pitcher, g.season)).or_default();
        ps.n += 1;
        *ps.by_type.entry(log.pitch_types[r.pitch_type as usize].clone()).or_default() += 1;
        ps.teams.insert(g.team.clone());
        if ps.first_day.is_empty() || g.date < ps.first_day {
            ps.first_day = g.date.clone();
        }
    }
    out
}

fn share_in(ps: Option<&PitcherSeason>, label: &str) -> f64 {
    ps.map_or(0.0, |p| p.by_type.get(label).copied().unwrap_or(0) as f64 / p.n as f64)
}

fn assert_band(what: &str, value: f64, low: f64, high: f64) {
    assert!((low..=high).contains(&value), "{what}: {value:.4} outside {low}..{high}");
}

/// Result shares of a real league (common practice, measured on a real
/// league log): ball 35.5%, called strike 16.4%, swinging strike 12.2%,
/// foul 18.1%, in play 17.4%, hit by pitch 0.3%; about 3.9 pitches per
/// plate appearance.
fn assert_real_results(what: &str, log: &SimLog) {
    let n = log.rows.len() as f64;
    for (kind, real) in [
        (PitchResult::Ball, 0.355),
        (PitchResult::CalledStrike, 0.164),
        (PitchResult::SwingingStrike, 0.122),
        (PitchResult::Foul, 0.181),
        (PitchResult::InPlay, 0.174),
        (PitchResult::HitByPitch, 0.003),
    ] {
        let share = log.rows.iter().filter(|r| r.result == kind).count() as f64 / n;
        assert_band(&format!("{what} {kind:?} share"), share, real - 0.02, real + 0.02);
    }
    let r = rates(log);
    assert_band(&format!("{what} pitches per plate appearance"), r.pitches_per_pa, 3.6, 4.1);
    assert_trade_facts(what, &r);
    // Fouls never make strike three: a two-strike foul ends no plate appearance.
    for i in 0..log.rows.len() {
        if ends_pa(&log.rows, i) {
            assert_ne!(log.rows[i].result, PitchResult::Foul, "{what}: a plate appearance ended on a foul");
        }
    }
}

#[test]
fn realistic_demo_and_league_have_real_result_shares() {
    assert_real_results("realistic demo", realistic_demo());
    assert_real_results("realistic league", realistic_league());
}

const FASTBALLS: [&str; 2] = ["fastball", "sinker"];

/// Fastball share (four-seam and sinker) by count across the league
/// (common practice, measured on a real league log): about 52% at 0-0, 40%
/// at 0-2 and 1-2, 61% at 2-0, 68% at 3-1, 90% at 3-0; the average
/// pitcher's top-pitch share rising from about 0.47 at 0-2 to 0.82 at 3-0.
#[test]
fn count_habits_look_real() {
    for (what, log) in [("realistic league", realistic_league()), ("realistic demo", realistic_demo())] {
        let mut by_count: BTreeMap<(u8, u8), (usize, usize)> = BTreeMap::new();
        // (pitcher, count) -> pitches by type
        let mut per: BTreeMap<(u32, u8, u8), BTreeMap<u16, usize>> = BTreeMap::new();
        for r in &log.rows {
            let e = by_count.entry((r.balls, r.strikes)).or_default();
            e.1 += 1;
            if FASTBALLS.contains(&log.pitch_types[r.pitch_type as usize].as_str()) {
                e.0 += 1;
            }
            *per.entry((r.pitcher, r.balls, r.strikes)).or_default().entry(r.pitch_type).or_default() += 1;
        }
        let fb = |b, s| {
            let (f, n) = by_count[&(b, s)];
            f as f64 / n as f64
        };
        for (b, s, real) in [(0, 0, 0.52), (0, 2, 0.40), (1, 2, 0.40), (2, 0, 0.61), (3, 1, 0.68), (3, 0, 0.90)] {
            assert_band(&format!("{what} fastball share at {b}-{s}"), fb(b, s), real - 0.08, real + 0.08);
        }
        // The average pitcher's top-pitch share, over pitchers with 30 or
        // more pitches at that count.
        let top = |b: u8, s: u8| {
            let shares: Vec<f64> = per
                .iter()
                .filter(|((_, pb, ps), t)| *pb == b && *ps == s && t.values().sum::<usize>() >= 30)
                .map(|(_, t)| *t.values().max().unwrap() as f64 / t.values().sum::<usize>() as f64)
                .collect();
            shares.iter().sum::<f64>() / shares.len() as f64
        };
        let (t02, t31, t30) = (top(0, 2), top(3, 1), top(3, 0));
        assert_band(&format!("{what} mean top-pitch share at 0-2"), t02, 0.38, 0.60);
        assert_band(&format!("{what} mean top-pitch share at 3-0"), t30, 0.70, 0.95);
        assert!(t02 < t31 && t31 < t30, "{what}: top-pitch share does not rise toward hitters' counts: {t02} {t31} {t30}");
    }
}

/// Against same-side batters more sliders and sinkers (about 21% and 20%
/// against 12% and 12%), against opposite-side batters more changeups and
/// four-seams (common practice, measured on a real league log); and a
/// platoon difference in every pitcher's mix (each pitcher-season of 1,000
/// or more pitches rejects independence of type and platoon at 0.9999).
#[test]
fn platoon_habits_look_real() {
    for (what, log) in [("realistic league", realistic_league()), ("realistic demo", realistic_demo())] {
        let lv = levels(log);
        let pl = slot(Factor::Platoon);
        let mut count: BTreeMap<(&str, &str), usize> = BTreeMap::new();
        let mut side_total: BTreeMap<&str, usize> = BTreeMap::new();
        for (i, r) in log.rows.iter().enumerate() {
            let side = lv[i][pl].as_str();
            *count.entry((side, log.pitch_types[r.pitch_type as usize].as_str())).or_default() += 1;
            *side_total.entry(side).or_default() += 1;
        }
        let share = |side: &str, label: &str| {
            count.get(&(side, label)).copied().unwrap_or(0) as f64 / side_total[side] as f64
        };
        for label in ["slider", "sinker"] {
            let ratio = share("same", label) / share("opposite", label);
            assert_band(&format!("{what} {label} same/opposite"), ratio, 1.3, 2.4);
        }
        for label in ["changeup", "fastball"] {
            assert!(share("opposite", label) > share("same", label), "{what}: {label} not more often to opposite-side batters");
        }
        let seasons = pitcher_seasons(log);
        let (mut tested, mut rejected) = (0usize, 0usize);
        for ((p, season), ps) in &seasons {
            if ps.n < 1000 {
                continue;
            }
            let rows: Vec<usize> = (0..log.rows.len())
                .filter(|&i| log.rows[i].pitcher == *p && season_of(log, &log.rows[i]) == *season)
                .collect();
            let (stat, df) = chi_square(log, &lv, &rows, Factor::Platoon);
            tested += 1;
            rejected += (stat > CHI2_99[df - 1]) as usize;
            if tested >= 150 {
                break; // enough pitcher-seasons; the chi-square scans are slow on the league
            }
        }
        // The league's tilts give each such pitcher-season a noncentrality
        // of about 20 or more at 1,000 pitches (the weakest arsenal, cutter,
        // curveball, four-seam and changeup, is about 22), so each rejects
        // at 0.99 with probability about 0.9 or more; three in four is many
        // standard errors below that.
        assert!(rejected as f64 >= 0.75 * tested as f64, "{what}: only {rejected} of {tested} pitcher-seasons show a platoon difference");
        assert!(tested >= 10, "{what}: only {tested} pitcher-seasons tested");
    }
}

/// Who pitches (common practice, measured on a real league log): of the
/// pitchers with 300 pitches in a season about half (389 of 758) reach it
/// in both seasons, 177 arrive in the second and 192 leave after the first;
/// about 1 pitcher-season in 9 is split between two clubs; half the
/// pitchers throw fewer than 800 pitches over two seasons.
#[test]
fn the_league_turns_over_like_a_real_one() {
    let log = realistic_league();
    let seasons = pitcher_seasons(log);
    assert!(log.rows.len() >= 1_300_000, "{} pitches", log.rows.len());
    let ids: std::collections::BTreeSet<u32> = seasons.keys().map(|k| k.0).collect();
    let big = |p: u32, y: i32| seasons.get(&(p, y)).is_some_and(|s| s.n >= 300);
    let regulars: Vec<u32> = ids.iter().copied().filter(|&p| big(p, 2025) || big(p, 2026)).collect();
    assert!(regulars.len() >= 600, "{} pitchers with a 300-pitch season", regulars.len());
    let frac = |f: &dyn Fn(u32) -> bool| regulars.iter().filter(|&&p| f(p)).count() as f64 / regulars.len() as f64;
    assert_band("both seasons", frac(&|p| big(p, 2025) && big(p, 2026)), 0.35, 0.70);
    assert_band("second season only", frac(&|p| !big(p, 2025) && big(p, 2026)), 0.12, 0.40);
    assert_band("first season only", frac(&|p| big(p, 2025) && !big(p, 2026)), 0.12, 0.40);
    let split = seasons.values().filter(|s| s.teams.len() >= 2).count() as f64 / seasons.len() as f64;
    assert_band("pitcher-seasons split between two clubs", split, 0.05, 0.20);
    let totals: Vec<usize> = ids.iter().map(|&p| seasons.range((p, i32::MIN)..=(p, i32::MAX)).map(|(_, s)| s.n).sum()).collect();
    let small = totals.iter().filter(|&&n| n < 800).count() as f64 / totals.len() as f64;
    assert_band("pitchers under 800 pitches over two seasons", small, 0.30, 0.70);
    // Mid-season arrivals: a first game more than a month into the season.
    let late = seasons.iter().filter(|((_, y), s)| s.first_day.as_str() > format!("{y}-05-01").as_str()).count();
    assert!(late >= 50, "{late} mid-season arrivals");
}

/// Arsenals (common practice, measured on a real league log): 3-6 pitch
/// types used at least 3% in a pitcher-season, mostly 4; between seasons
/// 22% add a pitch (5% or more after, under 1% before), 12% drop one; the
/// median total-variation change of the mix is 0.13, a quarter exceed 0.20.
#[test]
fn arsenals_look_and_move_like_real_ones() {
    let log = realistic_league();
    let seasons = pitcher_seasons(log);
    let used = |ps: &PitcherSeason| ps.by_type.values().filter(|&&n| n as f64 >= 0.03 * ps.n as f64).count();
    let sizes: Vec<usize> = seasons.values().filter(|s| s.n >= 300).map(used).collect();
    let in_range = sizes.iter().filter(|&&k| (3..=6).contains(&k)).count() as f64 / sizes.len() as f64;
    assert!(in_range >= 0.85, "only {in_range:.3} of pitcher-seasons use 3-6 types");
    let mut hist = [0usize; 8];
    for &k in &sizes {
        hist[k.min(7)] += 1;
    }
    let mode = (0..8).max_by_key(|&k| hist[k]).unwrap();
    assert_eq!(mode, 4, "types per pitcher-season: {hist:?}");

    let ids: std::collections::BTreeSet<u32> = seasons.keys().map(|k| k.0).collect();
    let (mut both, mut adds, mut drops) = (0usize, 0usize, 0usize);
    let mut tv = Vec::new();
    for p in ids {
        let (a, b) = (seasons.get(&(p, 2025)), seasons.get(&(p, 2026)));
        if !(a.is_some_and(|s| s.n >= 300) && b.is_some_and(|s| s.n >= 300)) {
            continue;
        }
        both += 1;
        let labels: std::collections::BTreeSet<&String> = a.unwrap().by_type.keys().chain(b.unwrap().by_type.keys()).collect();
        adds += labels.iter().any(|l| share_in(a, l) < 0.01 && share_in(b, l) >= 0.05) as usize;
        drops += labels.iter().any(|l| share_in(a, l) >= 0.05 && share_in(b, l) < 0.01) as usize;
        tv.push(labels.iter().map(|l| (share_in(a, l) - share_in(b, l)).abs()).sum::<f64>() / 2.0);
    }
    assert!(both >= 200, "{both} pitchers with two 300-pitch seasons");
    assert_band("share adding a pitch", adds as f64 / both as f64, 0.10, 0.35);
    assert_band("share dropping a pitch", drops as f64 / both as f64, 0.05, 0.25);
    tv.sort_by(f64::total_cmp);
    assert_band("median total-variation change", tv[tv.len() / 2], 0.07, 0.22);
    let over = tv.iter().filter(|&&x| x > 0.20).count() as f64 / tv.len() as f64;
    assert_band("share changing by more than 0.20", over, 0.08, 0.45);
}

/// The realistic demo club is shaped like a real club's two seasons
/// (demo-data/README.md): 20-30 pitchers, some in one season only, a
/// mid-season arrival, pitches added between seasons, a label split in two.
#[test]
fn the_realistic_demo_is_shaped_like_a_club() {
    let log = realistic_demo();
    let seasons = pitcher_seasons(log);
    assert_band("pitchers", log.pitchers.len() as f64, 20.0, 30.0);
    let in_season = |p: u32, y: i32| seasons.contains_key(&(p, y));
    let n = log.pitchers.len() as u32;
    assert!((0..n).filter(|&p| in_season(p, 2025) != in_season(p, 2026)).count() >= 4);
    assert!(seasons.iter().any(|((_, y), s)| s.first_day.as_str() > format!("{y}-06-01").as_str()), "no mid-season arrival");
    let adds = (0..n)
        .filter(|&p| {
            let (a, b) = (seasons.get(&(p, 2025)), seasons.get(&(p, 2026)));
            a.is_some() && b.is_some_and(|b| b.by_type.keys().any(|l| share_in(a, l) < 0.01 && share_in(Some(b), l) >= 0.05))
        })
        .count();
    assert!(adds >= 2, "{adds} pitchers added a pitch");
    assert!(log.pitch_types.iter().any(|t| t == "sweeper"), "no split label");
    for ((p, y), s) in &seasons {
        if s.n >= 300 {
            let used = s.by_type.values().filter(|&&k| k as f64 >= 0.03 * s.n as f64).count();
            assert_band(&format!("{} {y} pitch types", log.pitchers[*p as usize].name), used as f64, 3.0, 6.0);
        }
    }
}

/// Planted rules still show at their planted rate, on top of the shared
/// habits: within 4 binomial standard errors (see `assert_near`).
#[test]
fn planted_rules_show_at_their_rate_on_top_of_the_habits() {
    let log = realistic_demo();
    let lv = levels(log);
    assert!(log.planted.len() >= 8);
    let mut order: BTreeMap<(u32, i32), usize> = BTreeMap::new();
    for tell in &log.planted {
        let k = order.entry((tell.pitcher, tell.season)).or_insert(0);
        let (mine, _) = rule_rows(log, &lv, tell.pitcher, tell.season, *k);
        *k += 1;
        let who = format!("{} {} {:?} -> {}", log.pitchers[tell.pitcher as usize].name, tell.season, tell.when, tell.throw);
        assert!(mine.len() >= 100, "{who}: only {} pitches in the situation", mine.len());
        let (share, n) = share_of(log, &mine, &tell.throw);
        assert_near(&who, share, tell.rate, n);
    }
}
