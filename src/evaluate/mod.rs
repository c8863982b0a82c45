//! Evaluate: held-out schemes, the per-pitcher fit, and the held-out
//! figures (accuracy, lift, bits gained) overall, per count and per type.

pub mod fit;
pub mod metrics;
pub mod split;
pub mod task;

use crate::domain::levels::COUNTS;
use fit::{argmax, Scored};
use serde::Serialize;
use task::PitcherTask;

/// Held-out figures of one group of scored pitches.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Default)]
pub struct HeldOut {
    pub n: usize,
    pub prior_accuracy: f64,
    pub model_accuracy: f64,
    /// (model − prior) / prior.
    pub lift: f64,
    /// Held-out log loss of the prior minus the model's, bits per pitch.
    pub bits_gained: f64,
}

/// One-vs-rest figures for one pitch type: is the next pitch this one?
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TypeFigures {
    pub pitch_type: String,
    pub train_share: f64,
    /// Accuracy of always answering the more likely of yes/no, max(p, 1 − p).
    pub prior_accuracy: f64,
    /// Accuracy of answering yes when the model gives the type over 50%.
    pub model_accuracy: f64,
    pub bits_gained: f64,
}

fn summarize(scored: &Scored, labels: &[u8], pick: impl Fn(usize) -> bool) -> HeldOut {
    let mut n = 0usize;
    let (mut pa, mut ma, mut bits) = (0usize, 0usize, 0.0f64);
    for (i, &r) in scored.rows.iter().enumerate() {
        if !pick(r as usize) {
            continue;
        }
        let y = labels[r as usize] as usize;
        let m = scored.model_row(i);
        let p = scored.prior_row(i);
        n += 1;
        pa += (argmax(p) == y) as usize;
        ma += (argmax(m) == y) as usize;
        bits += (m[y] / p[y]).log2();
    }
    if n == 0 {
        return HeldOut::default();
    }
    let prior_accuracy = pa as f64 / n as f64;
    let model_accuracy = ma as f64 / n as f64;
    HeldOut {
        n,
        prior_accuracy,
        model_accuracy,
        lift: if prior_accuracy > 0.0 { (model_accuracy - prior_accuracy) / prior_accuracy } else { 0.0 },
        bits_gained: bits / n as f64,
    }
}

/// Overall held-out figures.
pub fn overall(scored: &Scored, labels: &[u8]) -> HeldOut {
    summarize(scored, labels, |_| true)
}

/// Held-out figures per count, in COUNTS order.
pub fn per_count(task: &PitcherTask, scored: &Scored, labels: &[u8]) -> Vec<(&'static str, HeldOut)> {
    (0..12).map(|c| (COUNTS[c], summarize(scored, labels, |r| task.count[r] as usize == c))).collect()
}

/// One-vs-rest figures for every type with at least `min_train` training pitches.
pub fn per_type(task: &PitcherTask, scored: &Scored, labels: &[u8], names: &[String], min_train: usize) -> Vec<TypeFigures> {
    let k = task.n_classes;
    let train = &task.folds.last().map(|f| f.train.clone()).unwrap_or_default();
    let mut out = Vec::new();
    for cls in 0..k {
        let c = train.iter().filter(|&&r| labels[r as usize] as usize == cls).count();
        if c < min_train || train.is_empty() {
            continue;
        }
        let share = c as f64 / train.len() as f64;
        let prior_yes = share > 0.5;
        let n = scored.rows.len();
        let (mut pa, mut ma, mut bits) = (0usize, 0usize, 0.0f64);
        for (i, &r) in scored.rows.iter().enumerate() {
            let yes = labels[r as usize] as usize == cls;
            let pm = scored.model_row(i)[cls];
            let pp = scored.prior_row(i)[cls];
            pa += (prior_yes == yes) as usize;
            ma += ((pm > 0.5) == yes) as usize;
            let (qm, qp) = if yes { (pm, pp) } else { (1.0 - pm, 1.0 - pp) };
            bits += (qm / qp).log2();
        }
        if n == 0 {
            continue;
        }
        out.push(TypeFigures {
            pitch_type: names[task.class_types[cls] as usize].clone(),
            train_share: share,
            prior_accuracy: pa as f64 / n as f64,
            model_accuracy: ma as f64 / n as f64,
            bits_gained: bits / n as f64,
        });
    }
    out
}
