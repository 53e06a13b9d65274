"""Time scikit-learn on the benchmark protocol of popdecode-bench, for the ratio in README.md.

Usage: python scripts/bench_sklearn.py TABLE.csv [rbf]. Same data, 100 repeats x 5 stratified folds (with `rbf`:
the large table, SVC with a Gaussian kernel, 10 repeats), standardisation fitted on the training fold (Pipeline), one
thread. The classes are already balanced, so no undersampling.
   python scripts/bench_sklearn.py grid DIR SHAPES: for each shape (TRIALSxNEURONS, comma-separated) the table
DIR/SHAPE.csv written by `popdecode-bench grid --tables DIR`, SVC(kernel='linear') and LDA(lsqr, auto) (or only the models
whose name contains MODEL, a fourth argument), 10 repeats x
5 folds; one line per (model, shape).
Reference library: scikit-learn (version printed).
"""
import sys
import time

import numpy as np
import pandas as pd
import sklearn
from sklearn.discriminant_analysis import LinearDiscriminantAnalysis
from sklearn.model_selection import StratifiedKFold
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from sklearn.svm import SVC, LinearSVC
from threadpoolctl import threadpool_limits



def load(path):
    table = pd.read_csv(path)
    y = table["odour"].to_numpy()
    return table[[c for c in table.columns if c.startswith("unit_")]].to_numpy(float), y


def cross_validate(make, X, y, repeats):
    """Seconds and accuracy of `repeats` x 5 stratified folds, scaler and model fitted on each training fold."""
    start = time.perf_counter()
    correct = 0
    for repeat in range(repeats):
        for train, test in StratifiedKFold(5, shuffle=True, random_state=repeat).split(X, y):
            model = make_pipeline(StandardScaler(), make()).fit(X[train], y[train])
            correct += (model.predict(X[test]) == y[test]).sum()
    return time.perf_counter() - start, correct / (repeats * len(y))


if sys.argv[1] == "grid":
    grid_models = {
        "SVC(kernel='linear')": lambda: SVC(kernel="linear", C=1.0),
        "LDA(lsqr, auto)": lambda: LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto"),
    }
    # An optional fourth argument keeps only the models whose name contains it (e.g. LDA).
    only = sys.argv[4] if len(sys.argv) > 4 else ""
    print(f"scikit-learn {sklearn.__version__}")
    with threadpool_limits(1):
        for shape in sys.argv[3].split(","):
            X, y = load(f"{sys.argv[2]}/{shape}.csv")
            for name, make in grid_models.items():
                if only not in name:
                    continue
                seconds, accuracy = cross_validate(make, X, y, 10)
                print(f"grid {name:<22} {shape:>9} {seconds:9.3f} s (accuracy {accuracy:.3f})", flush=True)
    sys.exit()

X, y = load(sys.argv[1])
models = {
    "SVC(kernel='linear')": lambda: SVC(kernel="linear", C=1.0),
    "LinearSVC": lambda: LinearSVC(C=1.0, dual=True, max_iter=1000),
    "LDA(lsqr, auto)": lambda: LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto"),
}
repeats = 100
if sys.argv[2:] == ["rbf"]:
    models = {"SVC(kernel='rbf')": lambda: SVC(kernel="rbf", C=1.0, gamma="scale")}
    repeats = 10
print(f"scikit-learn {sklearn.__version__}, {X.shape[0]} trials x {X.shape[1]} units, {repeats} repeats x 5 folds")
with threadpool_limits(1):
    for name, make in models.items():
        seconds, accuracy = cross_validate(make, X, y, repeats)
        print(f"{name:<22} {seconds:8.3f} s (accuracy {accuracy:.3f})")
