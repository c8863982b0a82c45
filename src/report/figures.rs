//! The audit's charts, filled from the results value: the staff chart, the
//! called-pitch outcomes chart (with results), and per pitcher the sheet's two
//! panels, the pitch mix by count and the permutation
//! null distribution. File names come from the pitchers' unique safe stems.

use super::charts::{self, Chart, ChartError};
use crate::audit::summary::Summary;
use crate::error::{Error, Result};
use rayon::prelude::*;
use std::collections::BTreeMap;


/// Pitchers need this many called swings, and as many other swings, in
/// counts where both happened, to get a row in the called-outcomes chart.
pub const CALLED_MIN_SWINGS: u64 = 50;

fn chart_err(e: ChartError) -> Error {
    Error::Internal(format!("drawing a chart: {e:?}"))
}

/// Every pitch label of the staff, sorted: fixes each label's colour.
fn staff_labels(s: &Summary) -> Vec<String> {
    let mut v: Vec<String> = s
        .pitchers
        .iter()
        .flat_map(|p| p.mix.iter().flat_map(|m| m.keys().cloned()).chain(p.test_mix.iter().flat_map(|m| m.keys().cloned())))
        .collect();
    v.sort();
    v.dedup();
    v
}

/// Draw every chart of an audit in turn, handing each to `sink` with its
/// pitcher (`None` for the staff chart), so a league's charts are never all
/// held in memory.
pub fn for_each_chart(
    s: &Summary,
    stems: &BTreeMap<String, String>,
    mut sink: impl FnMut(Option<&str>, Chart) -> Result<()>,
) -> Result<()> {
    let ok: Vec<_> = s.pitchers.iter().filter(|p| p.is_ok()).collect();
    if ok.is_empty() {
        return Ok(());
    }
    let staff = charts::staff_predictability(&charts::StaffPredictabilityInput {
        staff: String::new(),
        pitchers: ok
            .iter()
            .map(|p| charts::StaffPitcher {
                pitcher: p.pitcher.clone(),
                n: p.n_test as u64,
                bits_gained: p.bits_gained.unwrap_or(0.0),
                lift: p.lift.unwrap_or(0.0),
                significant: p.significant.unwrap_or(false),
            })
            .collect(),
        metric: charts::StaffMetric::BitsGained,
        fdr: s.settings.fdr,
    })
    .map_err(chart_err)?;
    sink(None, Chart { name: "staff-bits-gained".into(), ..staff })?;
    // With results: do predictable pitches cost them? The staff first, then
    // each pitcher, most costly first.
    if let Some(staff_fig) = &s.staff_called_outcomes {
        let mut rows = vec![charts::CalledRow {
            label: "whole staff".into(),
            n: staff_fig.called_swings,
            diff: staff_fig.whiff_rate_called - staff_fig.expected_whiff_rate,
            low: staff_fig.diff_low,
            high: staff_fig.diff_high,
        }];
        let mut per: Vec<charts::CalledRow> = ok
            .iter()
            .filter_map(|p| p.called_outcomes.as_ref().map(|c| (p, c)))
            // Too few called swings in counts where both happened for the
            // interval to mean much (its normal approximation needs them).
            .filter(|(_, c)| c.pooled.called_swings >= CALLED_MIN_SWINGS && c.pooled.other_swings >= CALLED_MIN_SWINGS)
            .map(|(p, c)| charts::CalledRow {
                label: p.pitcher.clone(),
                n: c.pooled.called_swings,
                diff: c.pooled.whiff_rate_called - c.pooled.expected_whiff_rate,
                low: c.pooled.diff_low,
                high: c.pooled.diff_high,
            })
            .collect();
        per.sort_by(|a, b| a.diff.total_cmp(&b.diff).then(a.label.cmp(&b.label)));
        rows.extend(per);
        let chart = charts::called_outcomes(&charts::CalledOutcomesInput { rows }).map_err(chart_err)?;
        sink(None, Chart { name: "called-outcomes".into(), ..chart })?;
    }
    // The staff against the league (or the rest of the staff): each
    // pitcher's percentiles, most predictable first.
    let mut ranks: Vec<charts::RankRow> = ok
        .iter()
        .filter_map(|p| {
            p.league_percentile.as_ref().map(|l| charts::RankRow { pitcher: p.pitcher.clone(), n: p.n_test as u64, bits: l.bits, beyond_bits: l.beyond_bits })
        })
        .collect();
    if !ranks.is_empty() {
        ranks.sort_by(|a, b| b.bits.total_cmp(&a.bits).then(a.pitcher.cmp(&b.pitcher)));
        let among = ok.iter().filter_map(|p| p.league_percentile.as_ref()).map(|l| l.among).max().unwrap_or(0);
        let whom = if s.yardstick == "league" { format!("{among} league pitchers") } else { format!("the other {among} pitchers of the staff") };
        let chart = charts::league_rank(&charts::LeagueRankInput { rows: ranks, among: format!("{whom} with the minimum sample") }).map_err(chart_err)?;
        sink(None, Chart { name: "staff-league-rank".into(), ..chart })?;
    }
    let labels = staff_labels(s);
    // Pitchers' charts are drawn in parallel a few dozen at a time and
    // handed on in staff order (the output does not depend on threads).
    for chunk in ok.chunks(32) {
        let drawn: Vec<Result<Vec<Chart>>> = chunk.par_iter().map(|p| pitcher_charts(s, stems, &labels, p)).collect();
        for (p, charts) in chunk.iter().zip(drawn) {
            for c in charts? {
                sink(Some(&p.pitcher), c)?;
            }
        }
    }
    Ok(())
}

fn pitcher_charts(
    s: &Summary,
    stems: &BTreeMap<String, String>,
    labels: &[String],
    p: &crate::audit::summary::PitcherSummary,
) -> Result<Vec<Chart>> {
        let stem = stems.get(&p.pitcher).cloned().unwrap_or_else(|| "pitcher".into());
        // The sheet, one panel per batter side: his latest season's top
        // pitch by count, marked where he leans on it beyond his season share.
        let panel = |side: &str| {
            charts::count_grid(&charts::CountGridInput {
                pitcher: p.pitcher.clone(),
                cells: p
                    .sheet
                    .iter()
                    .filter(|c| c.bats == side && c.n > 0)
                    .map(|c| charts::CountCell {
                        count: c.count.clone(),
                        n: c.n as u64,
                        top_pitch: c.top_pitch.clone(),
                        top_share: c.top_share,
                        flagged: c.leans,
                        above_league: c.above_league,
                    })
                    .collect(),
                min_n: s.settings.tell_min_n as u64,
                fdr: s.settings.fdr,
                side: Some(side.to_string()),
            })
            .map_err(chart_err)
        };
        let (left, right) = (panel("L")?, panel("R")?);
        let mix = charts::mix_by_count(&charts::MixByCountInput {
            pitcher: p.pitcher.clone(),
            counts: p
                .counts
                .iter()
                .map(|c| charts::CountMix {
                    count: c.count.clone(),
                    n: c.n as u64,
                    shares: c.mix.iter().map(|(k, v)| (k.clone(), *v)).collect(),
                })
                .collect(),
            staff_labels: labels.to_vec(),
        })
        .map_err(chart_err)?;
        let mut out = vec![
            Chart { name: format!("sheet-left-{stem}"), ..left },
            Chart { name: format!("sheet-right-{stem}"), ..right },
            Chart { name: format!("mix-by-count-{stem}"), ..mix },
        ];
        if !p.location_mix.is_empty() {
            let panels = p
                .location_mix
                .iter()
                .map(|m| {
                    let mut shares = [0.0; 13];
                    for (name, v) in &m.shares {
                        if let Some(r) = crate::situations::regions::Region::from_name(name) {
                            shares[r as usize] = *v;
                        }
                    }
                    charts::RegionPanel { pitch_type: m.pitch_type.clone(), count_group: m.count_group.clone(), n: m.n as u64, shares }
                })
                .collect();
            let chart = charts::where_it_goes(&charts::WhereItGoesInput { pitcher: p.pitcher.clone(), panels, min_n: s.settings.tell_min_n as u64 })
                .map_err(chart_err)?;
            out.push(Chart { name: format!("where-it-goes-{stem}"), ..chart });
        }
        if !p.null_statistics.is_empty() {
            let null = charts::null_distribution(&charts::NullDistributionInput {
                pitcher: p.pitcher.clone(),
                null_values: p.null_statistics.clone(),
                observed: p.observed_statistic.unwrap_or(0.0),
                p_value: p.p_value.unwrap_or(1.0),
            })
            .map_err(chart_err)?;
            out.push(Chart { name: format!("null-distribution-{stem}"), ..null });
        }
    Ok(out)
}
