#!/usr/bin/env python3
"""An analyst's notebook doing the simpler season-forward audit of a pitch
log, the yardstick for tellscope's speed (BENCHMARKS in the README).

What it does, per pitcher with enough pitches in both seasons:
  * features: count, batter side, outs, bases, inning group, score group,
    previous pitch, times through the order (one-hot);
  * a scikit-learn DecisionTreeClassifier (depth 6, 20 per leaf) fitted on
    the earlier season, scored on the latest: accuracy and bits gained per
    pitch over his plain earlier-season mix;
  * 999 label permutations within the training season, each refitted and
    scored, for a permutation p-value; Benjamini-Hochberg over pitchers;
  * tells: for every level of every factor and every pitch type, Fisher's
    exact test of his share there against elsewhere; BH over all of them.

What it does not do (tellscope does): the rolling evaluation (newcomers
and mid-season arrivals), priors shrunk toward his usage, a pitch new to
him treated as new, permutation strata within blocks, the count x side
sheet and the beyond-the-sheet test, held-out checks of tells, the cost of
tells, early stopping, charts and a report.

Run:  python3 benches/notebook/season_forward_audit.py demo-data/demo-log.csv
Needs pandas, numpy, scipy and scikit-learn. Prints wall seconds.
"""
import sys
import time

import numpy as np
import pandas as pd
from scipy.stats import fisher_exact
from sklearn.tree import DecisionTreeClassifier

PERMUTATIONS = 999
MIN_TRAIN, MIN_TEST = 300, 100


def bh(p):
    p = np.asarray(p, dtype=float)
    m = len(p)
    if m == 0:
        return p
    order = np.argsort(p)
    q = p[order] * m / np.arange(1, m + 1)
    q = np.minimum.accumulate(q[::-1])[::-1]
    out = np.empty(m)
    out[order] = np.minimum(q, 1.0)
    return out


def situations(df):
    df = df.sort_values(["date", "game", "pa", "pitch_no"]).copy()
    df["count"] = df["balls"].astype(str) + "-" + df["strikes"].astype(str)
    df["bases"] = df["on_first"].astype(str) + df["on_second"].astype(str) + df["on_third"].astype(str)
    df["inning_group"] = pd.cut(df["inning"], [0, 3, 6, 99], labels=["1-3", "4-6", "7+"]).astype(str)
    df["score_group"] = np.sign(df["score_diff"]).astype(int).astype(str)
    same_pa = (df["game"] == df["game"].shift()) & (df["pa"] == df["pa"].shift()) & (df["pitcher"] == df["pitcher"].shift())
    df["prev_pitch"] = np.where(same_pa, df["pitch_type"].shift(), "none")
    pa_key = df["game"].astype(str) + "|" + df["pitcher"] + "|" + df["batter"]
    first = ~same_pa
    df["times_through"] = first.groupby(pa_key).cumsum().clip(upper=3).astype(str)
    return df


FACTORS = ["count", "bats", "outs", "bases", "inning_group", "score_group", "prev_pitch", "times_through"]


def bits(p_model, p_prior, y):
    idx = np.arange(len(y))
    return float(np.mean(np.log2(p_model[idx, y] / p_prior[y])))


def audit_pitcher(g, rng):
    seasons = sorted(g["season"].unique())
    if len(seasons) < 2:
        return None
    train, test = g[g["season"] < seasons[-1]], g[g["season"] == seasons[-1]]
    if len(train) < MIN_TRAIN or len(test) < MIN_TEST:
        return None
    types = sorted(train["pitch_type"].unique())
    test = test[test["pitch_type"].isin(types)]
    code = {t: i for i, t in enumerate(types)}
    X = pd.get_dummies(pd.concat([train, test])[FACTORS].astype(str)).to_numpy(dtype=np.float32)
    Xtr, Xte = X[: len(train)], X[len(train):]
    ytr = train["pitch_type"].map(code).to_numpy()
    yte = test["pitch_type"].map(code).to_numpy()
    prior = (np.bincount(ytr, minlength=len(types)) + 1) / (len(ytr) + len(types))

    def score(labels):
        tree = DecisionTreeClassifier(max_depth=6, min_samples_leaf=20, random_state=0).fit(Xtr, labels)
        p = np.full((len(yte), len(types)), 1e-6)
        p[:, tree.classes_] += tree.predict_proba(Xte)
        p /= p.sum(axis=1, keepdims=True)
        return bits(p, prior, yte)

    observed = score(ytr)
    null = [score(rng.permutation(ytr)) for _ in range(PERMUTATIONS)]
    p_value = (1 + sum(n >= observed for n in null)) / (1 + PERMUTATIONS)
    return observed, p_value


def tells(df):
    rows = []
    for pitcher, g in df.groupby("pitcher"):
        for f in FACTORS:
            for level, inside in g.groupby(f):
                outside = g[g[f] != level]
                for t in g["pitch_type"].unique():
                    a = int((inside["pitch_type"] == t).sum())
                    b = len(inside) - a
                    c = int((outside["pitch_type"] == t).sum())
                    d = len(outside) - c
                    if len(inside) >= 20:
                        rows.append((pitcher, f, level, t, fisher_exact([[a, b], [c, d]])[1]))
    q = bh([r[4] for r in rows])
    return sum(q <= 0.05), len(rows)


def run(path, audit_pitcher):
    """Audit every pitcher of the log at `path` with `audit_pitcher`, then
    the tells; print the counts and the wall seconds."""
    start = time.time()
    df = situations(pd.read_csv(path))
    rng = np.random.default_rng(1)
    results = {}
    for pitcher, g in df.groupby("pitcher"):
        r = audit_pitcher(g.reset_index(drop=True), rng)
        if r is not None:
            results[pitcher] = r
    q = bh([r[1] for r in results.values()])
    flagged, tested = tells(df)
    wall = time.time() - start
    print(f"{len(results)} pitchers audited, {sum(q <= 0.05)} significant; {flagged} of {tested} tells flagged")
    print(f"wall {wall:.1f} s")


if __name__ == "__main__":
    run(sys.argv[1], audit_pitcher)
