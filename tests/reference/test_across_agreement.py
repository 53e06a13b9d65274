"""Generalization across conditions against an independent numpy implementation on the same trials and folds.

popdecode's `decode --across` writes, for observed repeat 0 of every assignment, the training and testing trials
(after its balancing), each testing trial's predicted class, and the within-condition folds with their predictions
(`first_repeat` in the result JSON). Here, with numpy 2.4.6 and scikit-learn 1.9.1 (pinned in
scripts/reference-venv.sh):
- the design is checked: training trials come from the training levels only, testing trials from the testing levels,
  the sets are disjoint, and every level × class cell of a set holds the count the report states;
- the decoder is refitted on exactly those training trials and tested on exactly those testing trials — nearest class
  mean by correlation written here from its definition (with training-set standardisation), and
  LinearDiscriminantAnalysis(solver='lsqr', shrinkage='auto') in a StandardScaler pipeline for shrinkage-lda — and the
  generalization accuracy computed here must equal the report's; the within-condition cross-validation is redone on
  the exported folds the same way;
- with no assignment named and 4 levels, the 6 balanced dichotomies (Bernardi et al., 2020) are the assignments, and
  the summary is their mean.
Data: invented populations made here (never real recordings).
"""
import itertools
import json
import os
import subprocess
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from sklearn.discriminant_analysis import LinearDiscriminantAnalysis
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler

ROOT = Path(__file__).resolve().parents[2]
BIN = Path(os.environ.get("POPDECODE_BIN", ROOT / "target" / "release" / "popdecode"))


def invented_choices(contexts, per_cell, units, seed, shared=True):
    """Poisson rates: baseline + context offset ± half a choice weight (shared or one unit set per context)."""
    rng = np.random.default_rng(seed)
    base = rng.uniform(8, 24, units)
    offsets = rng.normal(0, 2, (len(contexts), units))
    weights = rng.normal(0, 3, units)
    rows = []
    for c, name in enumerate(contexts):
        n_cell = per_cell[c] if isinstance(per_cell, list) else (per_cell, per_cell)
        for k, choice in enumerate(["left", "right"]):
            for _ in range(n_cell[k]):
                carried = weights if shared else np.where(np.arange(units) % len(contexts) == c, weights, 0)
                rate = np.maximum(base + offsets[c] + (k - 0.5) * carried, 0.5)
                rows.append([choice, name, *(rng.poisson(rate * 0.5) / 0.5)])
    rng.shuffle(rows)
    return pd.DataFrame(rows, columns=["choice", "context", *[f"u{j}" for j in range(units)]])


class NearestMean:
    """Class whose mean training pattern correlates best with the trial, on training-standardised features."""

    def fit(self, X, y):
        self.mu, sd = X.mean(axis=0), X.std(axis=0)
        self.sd = np.where(sd <= 1e-12 * np.maximum(np.abs(self.mu), 1), 1, sd)
        Z = (X - self.mu) / self.sd
        self.classes_ = np.unique(y)
        self.means_ = np.array([Z[y == c].mean(axis=0) for c in self.classes_])
        return self

    def predict(self, X):
        def unit(A):
            A = A - A.mean(axis=1, keepdims=True)
            return A / np.linalg.norm(A, axis=1, keepdims=True)

        Z = (X - self.mu) / self.sd
        return self.classes_[np.argmax(unit(Z) @ unit(self.means_).T, axis=1)]


DECODERS = {
    "nearest-mean": (NearestMean, 1.0),
    "shrinkage-lda": (lambda: make_pipeline(StandardScaler(), LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto")), 0.98),
}


def run(tmp_path, table, classifier, extra):
    csv = tmp_path / "data.csv"
    table.to_csv(csv, index=False, float_format="%.17g")
    out = tmp_path / "out.json"
    subprocess.run(
        [BIN, "decode", csv, "--label", "choice", "--across", "context", "--classifier", classifier,
         "--repeats", "1", "--shuffles", "0", "--quiet", "--json", out, *extra],
        check=True, capture_output=True, text=True,
    )
    return json.loads(out.read_text())


def check(report, table, classifier):
    make, floor = DECODERS[classifier]
    X = table.drop(columns=["choice", "context"]).to_numpy()
    classes = report["classes"]
    y = np.array([classes.index(c) for c in table["choice"]])
    levels = np.array([report["levels"].index(c) for c in table["context"]])
    for a, d in zip(report["assignments"], report["first_repeat"]):
        train, test = np.array(d["train"]), np.array(d["test"])
        train_levels = {report["levels"].index(l) for l in a["train"]}
        test_levels = {report["levels"].index(l) for l in a["test"]}
        assert set(levels[train]) == train_levels and set(levels[test]) == test_levels
        assert not set(train) & set(test)
        for idx, per_cell in [(train, a["balance"]["train_per_cell"]), (test, a["balance"]["test_per_cell"])]:
            cells = {(l, c): ((levels[idx] == l) & (y[idx] == c)).sum() for l in set(levels[idx]) for c in range(2)}
            assert set(cells.values()) == {per_cell}, cells
        theirs = make().fit(X[train], y[train]).predict(X[test])
        agreement = (theirs == np.array(d["predicted"])).mean()
        assert agreement >= floor, f"{a['train']} → {a['test']}: agreement {agreement}"
        if floor == 1.0:
            assert a["accuracy"]["mean"] == pytest.approx((theirs == y[test]).mean(), abs=1e-12)
        within = np.empty(len(test), dtype=int)
        fold = np.array(d["within_fold"])
        for f in np.unique(fold):
            tr, te = fold != f, fold == f
            within[te] = make().fit(X[test][tr], y[test][tr]).predict(X[test][te])
        assert (within == np.array(d["within_predicted"])).mean() >= floor
        if floor == 1.0:
            assert a["within"]["accuracy"]["mean"] == pytest.approx((within == y[test]).mean(), abs=1e-12)
    mean = np.mean([a["accuracy"]["mean"] for a in report["assignments"]])
    assert report["summary"]["accuracy"]["mean"] == pytest.approx(mean, abs=1e-12)


@pytest.mark.parametrize("classifier", list(DECODERS))
def test_named_assignments_with_unequal_cells(tmp_path, classifier):
    table = invented_choices(["a", "b", "c"], [(30, 24), (20, 26), (28, 28)], 30, seed=7)
    report = run(tmp_path, table, classifier,
                 ["--train-levels", "a,b", "--test-levels", "c", "--train-levels", "c", "--test-levels", "b"])
    assert [(a["train"], a["test"]) for a in report["assignments"]] == [(["a", "b"], ["c"]), (["c"], ["b"])]
    assert report["assignments"][0]["balance"]["train_per_cell"] == 20
    check(report, table, classifier)


@pytest.mark.parametrize("classifier", list(DECODERS))
def test_balanced_dichotomies_of_four_levels(tmp_path, classifier):
    contexts = ["p", "q", "r", "s"]
    table = invented_choices(contexts, 18, 24, seed=8)
    report = run(tmp_path, table, classifier, [])
    expected = [(list(t), [c for c in contexts if c not in t]) for t in itertools.combinations(contexts, 2)]
    assert [(a["train"], a["test"]) for a in report["assignments"]] == expected
    check(report, table, classifier)


def test_orthogonal_code_stays_at_chance_in_both_implementations(tmp_path):
    table = invented_choices(["a", "b"], 80, 40, seed=9, shared=False)
    report = run(tmp_path, table, "nearest-mean", [])
    check(report, table, "nearest-mean")
    assert abs(report["summary"]["accuracy"]["mean"] - 0.5) < 0.1
    assert report["within"]["accuracy"]["mean"] > 0.7
