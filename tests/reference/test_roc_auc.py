"""The area under the ROC curve of two-class decoders, against scikit-learn (version pinned in
scripts/reference-venv.sh) on the same decision values.

`popdecode predict --decision` writes each trial's cross-validated decision value (folds from scikit-learn's
StratifiedKFold, as in test_sklearn_agreement.py) and prints the AUC of those values pooled over the folds, the rule
popdecode's reports use within a repeat. sklearn.metrics.roc_auc_score on the very same values (the second class
positive) must give the same number, ties included; and every decision value must agree in sign with the
prediction (positive where the second class is predicted).
"""
import re
import subprocess

import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_iris, load_wine
from sklearn.metrics import roc_auc_score
from sklearn.model_selection import StratifiedKFold

from test_sklearn_agreement import BIN, REFERENCES, invented_population


def two_class_sets():
    iris = load_iris()
    keep = iris.target > 0  # versicolor and virginica, the two that overlap
    yield "iris 2 classes", iris.data[keep], iris.target_names[iris.target[keep]]
    wine = load_wine()
    keep = wine.target < 2
    yield "wine 2 classes", wine.data[keep], wine.target_names[wine.target[keep]]
    yield "invented 2 x 150 x 40", *invented_population(150, 2, 40, 0.1, 2)
    # Few trials and coarse counts: decision values tie (the Poisson and nearest-mean rules on whole numbers).
    X, y = invented_population(12, 2, 3, 0.4, 9)
    yield "invented 2 x 12 x 3", np.round(X * 0.5), y


CASES = [(name, clf) for name, *_ in two_class_sets() for clf in REFERENCES]


@pytest.mark.parametrize("name,classifier", CASES)
def test_auc_matches_roc_auc_score_on_the_same_decision_values(name, classifier, tmp_path):
    X, y = next((X, y) for n, X, y in two_class_sets() if n == name)
    folds = np.zeros(len(y), dtype=int)
    for f, (_, test) in enumerate(StratifiedKFold(5, shuffle=True, random_state=0).split(X, y)):
        folds[test] = f
    table = pd.DataFrame(X, columns=[f"unit {j}" for j in range(X.shape[1])])
    table.insert(0, "condition", y)
    table.insert(1, "fold", folds)
    csv = tmp_path / "data.csv"
    table.to_csv(csv, index=False, float_format="%.17g")
    out = subprocess.run(
        [BIN, "predict", csv, "--label", "condition", "--fold-column", "fold", "--classifier", classifier,
         "--decision"],
        capture_output=True, text=True, check=True,
    )
    ours = pd.read_csv(pd.io.common.StringIO(out.stdout))
    match = re.search(r"AUC (\S+) .*'([^']+)' positive", out.stderr)
    assert match, out.stderr
    auc, positive = float(match.group(1)), match.group(2)
    assert positive == sorted(set(y))[1]
    theirs = roc_auc_score(ours["true"] == positive, ours["decision"])
    print(f"{name} {classifier}: AUC {auc:.6f}, roc_auc_score {theirs:.6f}")
    assert abs(auc - theirs) < 1e-12
    decision = ours["decision"].to_numpy()
    second = ours["predicted"].to_numpy() == positive
    assert (second[decision > 0]).all() and (~second[decision < 0]).all()
