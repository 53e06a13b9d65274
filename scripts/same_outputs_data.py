"""Inputs for scripts/same-outputs.sh that need the reference venv: an NWB file written by pynwb, and the
reference cases of tests/reference (iris, wine and the invented populations) as trial tables with the fold numbers
scikit-learn's StratifiedKFold gives them. Usage: python same_outputs_data.py OUT_DIR"""
import sys
from pathlib import Path

import numpy as np
import pandas as pd
from sklearn.model_selection import StratifiedKFold

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "reference"))
from test_nwb import write_nwb  # noqa: E402
from test_sklearn_agreement import data_sets  # noqa: E402

out = Path(sys.argv[1])
out.mkdir(parents=True, exist_ok=True)
write_nwb(out / "odours.nwb", seed=5)
for name, X, y in data_sets():
    table = pd.DataFrame(X, columns=[f"f{j}" for j in range(X.shape[1])])
    table.insert(0, "label", y)
    folds = StratifiedKFold(5, shuffle=True, random_state=0).split(X, y)
    table.insert(1, "fold", 0)
    for f, (_, test) in enumerate(folds):
        table.loc[test, "fold"] = f
    table.to_csv(out / (name.replace(" ", "_") + ".csv"), index=False)
