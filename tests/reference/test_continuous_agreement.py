"""Continuous and circular decoding against scikit-learn (version pinned in scripts/reference-venv.sh: 1.9.1) and
numpy 2.4.6 / scipy 1.17.1 on the same folds.

popdecode's `decode --classifier ridge` (and `circular-ridge`) writes, for observed repeat 0, every trial's fold and
prediction (`predictions` in the result JSON). Here each outer fold is refitted with scikit-learn on exactly those
training trials: GridSearchCV(Pipeline(StandardScaler(), Ridge()), alpha grid, cv = popdecode's inner folds (the
training rows in order, row i in inner fold i mod k), scoring = neg_mean_squared_error) — the nested choice of the
penalty with standardisation refitted on every inner training fold, then Ridge refitted on the whole training fold
with the chosen alpha. (RidgeCV is not the reference: with cv given it does not refit the scaler per inner fold, and
without cv it scores by leave-one-out on the whole fold.) The alphas are given largest first, so that GridSearchCV's
first-best rule picks the larger alpha on a tie, as popdecode does.

Scores: out-of-sample R² against each test trial's training-fold mean, checked directly and through scikit-learn's
r2_score per fold (which measures against the test fold's own mean): with SS_f = Σ(y − ȳ_test)², the pooled score is
1 − Σ_f (1 − r2_f)·SS_f / Σ_f (SS_f + n_f (ȳ_test − ȳ_train)²). Pearson's r by numpy.corrcoef; for angles the mean
absolute angular error, the circular correlation of Jammalamadaka & SenGupta (2001, eq. 8.2.2, written with numpy) and
the mean direction against scipy.stats.circmean. Data: invented populations made here (never real recordings).
"""
import json
import os
import subprocess
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy.stats import circmean
from sklearn.linear_model import Ridge
from sklearn.metrics import r2_score
from sklearn.model_selection import GridSearchCV
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler

ROOT = Path(__file__).resolve().parents[2]
BIN = Path(os.environ.get("POPDECODE_BIN", ROOT / "target" / "release" / "popdecode"))
ALPHAS = [1e-2, 1e-1, 1.0, 1e1, 1e2, 1e3, 1e4, 1e5]


def invented_running(n, units, seed):
    """Rates tuned linearly to speed and with von Mises curves to heading, plus Gaussian noise."""
    rng = np.random.default_rng(seed)
    speed = rng.uniform(5, 45, n)
    heading = rng.uniform(0, 360, n)
    slope = rng.normal(0, 0.15, units)
    amp = rng.uniform(0, 8, units)
    pref = rng.uniform(0, 2 * np.pi, units)
    theta = np.deg2rad(heading)
    rates = 20 + np.outer(speed - 25, slope) + amp * np.exp(2 * (np.cos(theta[:, None] - pref) - 1))
    rates += rng.normal(0, 4, rates.shape)
    table = pd.DataFrame(rates, columns=[f"u{j}" for j in range(units)])
    table.insert(0, "speed", speed)
    table.insert(1, "heading", heading)
    return table


def run(tmp_path, table, label, other, extra):
    csv = tmp_path / "data.csv"
    table.to_csv(csv, index=False, float_format="%.17g")
    out = tmp_path / "out.json"
    subprocess.run(
        [BIN, "decode", csv, "--label", label, "--ignore", other, "--repeats", "2", "--shuffles", "0",
         "--quiet", "--json", out, *extra],
        check=True, capture_output=True, text=True,
    )
    return json.loads(out.read_text())


def inner_splits(n):
    k = max(2, min(5, n // 2))
    fold = np.arange(n) % k
    return [(np.flatnonzero(fold != f), np.flatnonzero(fold == f)) for f in range(k)]


def sklearn_fold(X, Y, train):
    search = GridSearchCV(
        make_pipeline(StandardScaler(), Ridge()),
        {"ridge__alpha": ALPHAS[::-1]},
        cv=inner_splits(train.sum()),
        scoring="neg_mean_squared_error",
    )
    search.fit(X[train], Y[train])
    return search


@pytest.mark.parametrize("seed,n,units", [(1, 200, 15), (2, 120, 40), (3, 60, 80)])
def test_ridge_agrees_fold_by_fold(tmp_path, seed, n, units):
    table = invented_running(n, units, seed)
    report = run(tmp_path, table, "speed", "heading", ["--classifier", "ridge"])
    X = table.drop(columns=["speed", "heading"]).to_numpy()
    y = table["speed"].to_numpy()
    fold = np.array(report["predictions"]["fold"])
    ours = np.array(report["predictions"]["predicted"])
    theirs, train_mean = np.empty(n), np.empty(n)
    num, den, chosen = 0.0, 0.0, []
    for f in np.unique(fold):
        train, test = fold != f, fold == f
        search = sklearn_fold(X, y, train)
        theirs[test] = search.predict(X[test])
        train_mean[test] = y[train].mean()
        chosen.append(search.best_params_["ridge__alpha"])
        ss = ((y[test] - y[test].mean()) ** 2).sum()
        num += (1 - r2_score(y[test], theirs[test])) * ss
        den += ss + test.sum() * (y[test].mean() - y[train].mean()) ** 2
    print(f"seed {seed}: alphas {chosen}, max |difference| {np.abs(ours - theirs).max():.3g}")
    np.testing.assert_allclose(ours, theirs, rtol=1e-7, atol=1e-7 * np.abs(y).max())
    r2 = 1 - ((y - ours) ** 2).sum() / ((y - train_mean) ** 2).sum()
    assert report["repeats"][0]["r2"] == pytest.approx(r2, abs=1e-10)
    assert report["repeats"][0]["r2"] == pytest.approx(1 - num / den, abs=1e-7)
    assert report["repeats"][0]["correlation"] == pytest.approx(np.corrcoef(y, ours)[0, 1], abs=1e-10)
    counts = {c["alpha"]: c["fits"] for c in report["penalty"]["chosen"]}
    # Repeat 0's choices are among those counted over the observed repeats.
    assert all(counts[a] > 0 for a in chosen)


def circular_correlation(a, b):
    """Jammalamadaka & SenGupta (2001), eq. 8.2.2, with the mean directions of each sample."""
    ma = np.arctan2(np.sin(a).sum(), np.cos(a).sum())
    mb = np.arctan2(np.sin(b).sum(), np.cos(b).sum())
    sa, sb = np.sin(a - ma), np.sin(b - mb)
    return (sa * sb).sum() / np.sqrt((sa**2).sum() * (sb**2).sum())


@pytest.mark.parametrize("seed", [4, 5])
def test_circular_ridge_agrees_fold_by_fold(tmp_path, seed):
    n = 180
    table = invented_running(n, 20, seed)
    report = run(tmp_path, table, "heading", "speed", ["--classifier", "circular-ridge", "--angle-unit", "degrees"])
    X = table.drop(columns=["speed", "heading"]).to_numpy()
    theta = np.deg2rad(table["heading"].to_numpy())
    Y = np.column_stack([np.cos(theta), np.sin(theta)])
    fold = np.array(report["predictions"]["fold"])
    predicted, train_mean = np.empty((n, 2)), np.empty((n, 2))
    for f in np.unique(fold):
        train, test = fold != f, fold == f
        predicted[test] = sklearn_fold(X, Y, train).predict(X[test])
        train_mean[test] = Y[train].mean(axis=0)
    theirs = np.rad2deg(np.arctan2(predicted[:, 1], predicted[:, 0])) % 360
    ours = np.array(report["predictions"]["predicted"])
    gap = np.abs((ours - theirs + 180) % 360 - 180)
    print(f"seed {seed}: max angular difference {gap.max():.3g}°")
    assert gap.max() < 1e-6
    error = np.abs((theirs - table["heading"].to_numpy() + 180) % 360 - 180).mean()
    assert report["repeats"][0]["angular_error"] == pytest.approx(error, abs=1e-7)
    assert report["repeats"][0]["correlation"] == pytest.approx(
        circular_correlation(theta, np.deg2rad(theirs)), abs=1e-7)
    r2 = 1 - ((Y - predicted) ** 2).sum() / ((Y - train_mean) ** 2).sum()
    assert report["repeats"][0]["r2"] == pytest.approx(r2, abs=1e-7)
    assert report["target"]["mean_direction"] == pytest.approx(
        np.rad2deg(circmean(theta)), abs=1e-8)
