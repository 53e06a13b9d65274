"""Time scikit-learn on the benchmark protocol of popdecode-bench, for the ratio in README.md.

Usage: python scripts/bench_sklearn.py TABLE.csv [rbf]. Same data, 100 repeats x 5 stratified folds (with `rbf`:
the large table, SVC with a Gaussian kernel, 10 repeats), standardisation fitted on the training fold (Pipeline), one
thread. The classes are already balanced, so no undersampling.
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

table = pd.read_csv(sys.argv[1])
y = table["odour"].to_numpy()
X = table[[c for c in table.columns if c.startswith("unit_")]].to_numpy(float)
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
        start = time.perf_counter()
        correct = 0
        for repeat in range(repeats):
            for train, test in StratifiedKFold(5, shuffle=True, random_state=repeat).split(X, y):
                model = make_pipeline(StandardScaler(), make()).fit(X[train], y[train])
                correct += (model.predict(X[test]) == y[test]).sum()
        seconds = time.perf_counter() - start
        print(f"{name:<22} {seconds:8.3f} s (accuracy {correct / (repeats * len(y)):.3f})")
