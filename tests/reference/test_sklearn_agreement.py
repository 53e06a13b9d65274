"""Fold-by-fold agreement of popdecode's decoders with scikit-learn (version pinned in scripts/reference-venv.sh).

Each data set gets fold numbers from scikit-learn's StratifiedKFold; `popdecode predict` and a scikit-learn
Pipeline(StandardScaler(), decoder) are fitted on exactly those folds, and their test predictions must agree on
every trial for the linear SVM and shrinkage LDA, on at least 97 % for the others. References:
- linear SVM: sklearn.svm.LinearSVC (squared hinge, L2 penalty, intercept_scaling=1), solved to a tight tolerance so
  that both sides sit at the optimum of the same objective;
- shrinkage LDA: sklearn.discriminant_analysis.LinearDiscriminantAnalysis(solver='lsqr', shrinkage='auto');
- Gaussian naive Bayes: sklearn.naive_bayes.GaussianNB (default var_smoothing);
- logistic regression: sklearn.linear_model.LogisticRegression(C=1, L2), solved to a tight tolerance;
- RBF-kernel SVM: sklearn.svm.SVC(kernel='rbf', C=1, gamma='scale'), one-vs-one;
- nearest class mean by correlation and Poisson naive Bayes have no scikit-learn counterpart: they are written out
  below with numpy from their definitions (the Poisson one without standardisation, as popdecode fits it).
Data: iris (Fisher 1936) and wine (UCI wine data), as shipped with scikit-learn, and invented populations of
Poisson-spiking units made here (never real recordings).
"""
import os
import subprocess
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from sklearn.base import BaseEstimator, ClassifierMixin
from sklearn.datasets import load_iris, load_wine
from sklearn.discriminant_analysis import LinearDiscriminantAnalysis
from sklearn.linear_model import LogisticRegression
from sklearn.naive_bayes import GaussianNB
from sklearn.model_selection import StratifiedKFold
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from sklearn.svm import SVC, LinearSVC

ROOT = Path(__file__).resolve().parents[2]
BIN = Path(os.environ.get("POPDECODE_BIN", ROOT / "target" / "release" / "popdecode"))


def invented_population(n_per_class, n_classes, units, tuning, seed):
    """Poisson counts in 0.5 s windows from units log-normally tuned to each condition, in Hz."""
    rng = np.random.default_rng(seed)
    baseline = rng.uniform(2, 20, units)
    gains = rng.normal(0, tuning, (n_classes, units))
    labels = np.repeat(np.arange(n_classes), n_per_class)
    rates = baseline * np.exp(gains[labels])
    X = rng.poisson(rates * 0.5) / 0.5
    return X, np.array([f"odour_{c}" for c in labels])


def data_sets():
    iris = load_iris()
    wine = load_wine()
    yield "iris", iris.data, iris.target_names[iris.target]
    yield "wine", wine.data, wine.target_names[wine.target]
    yield "invented 4 x 58 x 52", *invented_population(58, 4, 52, 0.15, 1)
    yield "invented 2 x 150 x 40", *invented_population(150, 2, 40, 0.1, 2)
    yield "invented 3 x 200 x 150", *invented_population(200, 3, 150, 0.08, 3)
    # More units than training trials: the linear SVM takes its dual route here.
    yield "invented 3 x 20 x 120", *invented_population(20, 3, 120, 0.2, 4)
    # Between one and three training trials per unit: the dual route too (`dual_passes`).
    yield "invented 3 x 100 x 120", *invented_population(100, 3, 120, 0.1, 5)
    # Four training trials per unit, 200 with the intercept: a short run of the dual, then the primal (`dual_passes`).
    yield "invented 4 x 250 x 199", *invented_population(250, 4, 199, 0.1, 6)
    # 3.2 training trials per feature (600 with the intercept): a longer run of the dual, then the primal.
    yield "invented 4 x 600 x 599", *invented_population(600, 4, 599, 0.05, 7)


class CorrelationNearestMean(ClassifierMixin, BaseEstimator):
    """Assign the class whose mean training pattern has the largest Pearson correlation with the trial."""

    def fit(self, X, y):
        self.classes_ = np.unique(y)
        self.means_ = np.array([X[y == c].mean(axis=0) for c in self.classes_])
        return self

    def predict(self, X):
        def unit(A):
            A = A - A.mean(axis=1, keepdims=True)
            norm = np.linalg.norm(A, axis=1, keepdims=True)
            return np.divide(A, norm, out=np.zeros_like(A), where=norm > 0)

        return self.classes_[np.argmax(unit(X) @ unit(self.means_).T, axis=1)]


class PoissonNaiveBayes:
    """Independent Poisson counts per feature and class, rates (sum + 0.5) / n, training-proportion priors."""

    def fit(self, X, y):
        self.classes_ = np.unique(y)
        n = np.array([(y == c).sum() for c in self.classes_])
        self.rates_ = np.array([X[y == c].sum(axis=0) + 0.5 for c in self.classes_]) / n[:, None]
        self.log_prior_ = np.log(n / len(y))
        return self

    def predict(self, X):
        scores = self.log_prior_ + X @ np.log(self.rates_).T - self.rates_.sum(axis=1)
        return self.classes_[np.argmax(scores, axis=1)]


def standardised(model):
    return lambda: make_pipeline(StandardScaler(), model())


REFERENCES = {
    "linear-svm": standardised(lambda: LinearSVC(C=1.0, loss="squared_hinge", dual=False, tol=1e-8, max_iter=100_000)),
    "shrinkage-lda": standardised(lambda: LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto")),
    "gaussian-nb": standardised(GaussianNB),
    "logistic": standardised(lambda: LogisticRegression(C=1.0, tol=1e-10, max_iter=100_000)),
    "nearest-mean": standardised(CorrelationNearestMean),
    "rbf-svm": standardised(lambda: SVC(kernel="rbf", C=1.0, gamma="scale")),
    "poisson-nb": PoissonNaiveBayes,
}

# Cases checked for one decoder only: they exist for a route of that decoder, and their size would make the other
# references slow for nothing new.
ONLY = {"invented 4 x 600 x 599": ("linear-svm",)}
CASES = [(name, clf) for name, *_ in data_sets() for clf in REFERENCES if clf in ONLY.get(name, REFERENCES)]


def agreement(name, classifier, reference, extra, tmp_path):
    """Fraction of test trials on which `popdecode predict` (with `extra` arguments) and `reference` agree."""
    X, y = next((X, y) for n, X, y in data_sets() if n == name)
    folds = np.zeros(len(y), dtype=int)
    for f, (_, test) in enumerate(StratifiedKFold(5, shuffle=True, random_state=0).split(X, y)):
        folds[test] = f
    table = pd.DataFrame(X, columns=[f"unit {j}" for j in range(X.shape[1])])
    table.insert(0, "condition", y)
    table.insert(1, "fold", folds)
    csv = tmp_path / "data.csv"
    table.to_csv(csv, index=False, float_format="%.17g")
    out = subprocess.run(
        [BIN, "predict", csv, "--label", "condition", "--fold-column", "fold", "--classifier", classifier, *extra],
        capture_output=True, text=True, check=True,
    )
    ours = pd.read_csv(pd.io.common.StringIO(out.stdout))
    assert (ours["true"].to_numpy() == y).all()

    theirs = np.empty(len(y), dtype=object)
    for f in range(5):
        train, test = folds != f, folds == f
        model = reference().fit(X[train], y[train])
        theirs[test] = model.predict(X[test])
    share = (ours["predicted"].to_numpy() == theirs).mean()
    print(f"{name} {classifier} {' '.join(extra)}: agreement {share:.4f}")
    return share


@pytest.mark.parametrize("name,classifier", CASES)
def test_predictions_agree_fold_by_fold(name, classifier, tmp_path):
    share = agreement(name, classifier, REFERENCES[classifier], [], tmp_path)
    # Every test trial for the linear SVM and shrinkage LDA: their solvers were rebuilt for speed on the same
    # objective, so a prediction may move only where two classes' scores are within the solvers' tolerances, and the
    # speed issue asks these cases to show that none does. 97 % for the others (stated in their issue).
    floor = 1.0 if classifier in ("linear-svm", "shrinkage-lda") else 0.97
    assert share >= floor, f"{name} {classifier}: agreement {share:.4f}"


class SquaredHingeOneVsRest(ClassifierMixin, BaseEstimator):
    """The linear SVM's objective, one class against the rest, minimised in numpy to a gradient of 1e-10 (relative to
    the gradient at w = 0) by the finite Newton method with an exact line search (Keerthi & DeCoste, JMLR 2005):
    written from the definition here because at large C scikit-learn's LinearSVC stops at its iteration cap on these
    data (1.9.1: ConvergenceWarning at C = 500 after 100 000 iterations)."""

    def __init__(self, C=1.0):
        self.C = C

    def fit(self, X, y):
        self.classes_ = np.unique(y)
        A = np.hstack([X, np.ones((len(X), 1))])
        # Two classes: one problem, the second class positive (as popdecode fits it); more: one against the rest each.
        positive = self.classes_[1:] if len(self.classes_) == 2 else self.classes_
        self.w_ = np.array([self._solve(A, np.where(y == k, 1.0, -1.0)) for k in positive])
        return self

    def _solve(self, A, s):
        w = np.zeros(A.shape[1])
        first = None
        for _ in range(500):
            m = s * (A @ w)
            inside = m < 1
            g = w - 2 * self.C * A[inside].T @ (s[inside] * (1 - m[inside]))
            first = np.linalg.norm(g) if first is None else first
            if np.linalg.norm(g) <= 1e-10 * first:
                return w
            H = np.eye(len(w)) + 2 * self.C * A[inside].T @ A[inside]
            d = -np.linalg.solve(H, g)
            dm, t = s * (A @ d), 1.0
            for _ in range(100):
                slack = 1 - m - t * dm
                on = slack > 0
                slope = (w + t * d) @ d - 2 * self.C * np.sum(slack[on] * dm[on])
                next_t = t - slope / (d @ d + 2 * self.C * np.sum(dm[on] ** 2))
                if abs(next_t - t) <= 1e-15 * max(abs(t), 1.0):
                    break
                t = next_t
            w = w + t * d
        raise AssertionError("the reference Newton method did not converge")

    def predict(self, X):
        scores = np.hstack([X, np.ones((len(X), 1))]) @ self.w_.T
        if len(self.classes_) == 2:
            return self.classes_[(scores[:, 0] > 0).astype(int)]
        return self.classes_[np.argmax(scores, axis=1)]


@pytest.mark.parametrize("name", ["invented 4 x 58 x 52", "invented 3 x 100 x 120", "invented 4 x 250 x 199"])
def test_linear_svm_in_double_precision_throughout_agrees(name, tmp_path):
    """At C = 500 the bound on the Hessian's conditioning is past the linear SVM's limit for single precision
    (`SINGLE_PRECISION_LIMIT`), so these fits (the primal from w = 0; the dual; a short dual, then the primal) run
    in double precision throughout: that path must agree on every test trial too."""
    reference = standardised(lambda: SquaredHingeOneVsRest(C=500.0))
    share = agreement(name, "linear-svm", reference, ["--c", "500"], tmp_path)
    assert share == 1.0, f"{name}: agreement {share:.4f}"
