#!/usr/bin/env python3
"""The same notebook doing the rolling evaluation tellscope does (issue 13's
yardstick: "an analyst's notebook doing the same work"), where
season_forward_audit.py does the simpler season-forward audit (issue 19's).

What it does, per pitcher:
  * his latest season's games, in date order, dealt into 5 blocks (fewer
    with fewer games); each block scored by a scikit-learn
    DecisionTreeClassifier (depth 6, 20 per leaf) fitted on every pitch of
    his before it (earlier seasons and earlier blocks); with no earlier
    season the first block only trains; pitchers with at least 300 pitches
    in the largest training set and 100 scored are audited;
  * features as in season_forward_audit.py (one-hot count, batter side,
    outs, bases, inning group, score group, previous pitch, times through
    the order);
  * a held-out pitch of a type under 1% of the block's training pitches is
    left out (new to him); bits gained per pitch over the block's plain
    training mix, pooled over the scored blocks;
  * 999 label permutations within each earlier season and each block of
    the latest season, every block refitted and scored, for a permutation
    p-value; Benjamini-Hochberg over pitchers;
  * tells: Fisher's exact test per level of every factor and pitch type,
    BH over all of them (season_forward_audit.tells).

What it does not do (tellscope does): priors shrunk toward his usage as
features, permutation of the previous pitch with the labels, the count x
side sheet and the beyond-the-sheet test, location, held-out checks of
tells, the cost of tells, early stopping, charts and a report.

Run:  python3 benches/notebook/rolling_audit.py demo-data/demo-log.csv
Needs pandas, numpy, scipy and scikit-learn. Prints wall seconds.
"""
import sys

import numpy as np
import pandas as pd
from sklearn.tree import DecisionTreeClassifier

from season_forward_audit import FACTORS, PERMUTATIONS, run

BLOCKS = 5
MIN_TRAIN, MIN_TEST = 300, 100
NEW_TYPE_SHARE = 0.01


def plan(g):
    """Each row's stratum and the folds: (training mask, scored mask)."""
    latest = g["season"].max()
    earlier = (g["season"] < latest).to_numpy()
    games = g.loc[~earlier, ["date", "game"]].drop_duplicates().sort_values(["date", "game"])
    n_games = len(games)
    blocks = max(1, min(BLOCKS, n_games))
    block_of_game = {gm: i * blocks // n_games for i, gm in enumerate(games["game"])}
    block = np.where(earlier, -1, g["game"].map(block_of_game).fillna(-1).to_numpy()).astype(int)
    seasons = sorted(g.loc[earlier, "season"].unique())
    stratum = np.where(earlier, g["season"].map({s: i for i, s in enumerate(seasons)}).fillna(0).to_numpy(), len(seasons) + block).astype(int)
    shift = 0 if earlier.any() else 1
    folds = [(earlier | ((block >= 0) & (block < b)), block == b) for b in range(shift, blocks)]
    return stratum, folds


def audit_pitcher(g, rng):
    stratum, folds = plan(g)
    if not folds or max(tr.sum() for tr, _ in folds) < MIN_TRAIN or sum(te.sum() for _, te in folds) < MIN_TEST:
        return None
    types = sorted(g["pitch_type"].unique())
    y = g["pitch_type"].map({t: i for i, t in enumerate(types)}).to_numpy()
    X = pd.get_dummies(g[FACTORS].astype(str)).to_numpy(dtype=np.float32)
    strata = [np.flatnonzero(stratum == s) for s in np.unique(stratum)]

    def score(labels):
        total, n = 0.0, 0
        for train, test in folds:
            ytr, yte = labels[train], labels[test]
            counts = np.bincount(ytr, minlength=len(types))
            seen = counts >= max(1, np.ceil(NEW_TYPE_SHARE * len(ytr)))
            keep = seen[yte]
            if not keep.any():
                continue
            prior = (counts + 1) / (len(ytr) + len(types))
            tree = DecisionTreeClassifier(max_depth=6, min_samples_leaf=20, random_state=0).fit(X[train], ytr)
            p = np.full((test.sum(), len(types)), 1e-6)
            p[:, tree.classes_] += tree.predict_proba(X[test])
            p /= p.sum(axis=1, keepdims=True)
            idx = np.flatnonzero(keep)
            total += float(np.sum(np.log2(p[idx, yte[idx]] / prior[yte[idx]])))
            n += len(idx)
        return total / max(n, 1)

    def shuffled():
        labels = y.copy()
        for rows in strata:
            labels[rows] = labels[rng.permutation(rows)]
        return labels

    observed = score(y)
    null = [score(shuffled()) for _ in range(PERMUTATIONS)]
    p_value = (1 + sum(n >= observed for n in null)) / (1 + PERMUTATIONS)
    return observed, p_value


if __name__ == "__main__":
    run(sys.argv[1], audit_pitcher)
