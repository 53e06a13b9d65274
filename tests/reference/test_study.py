"""Group statistics of `popdecode study` against independent numpy/scipy implementations, on the sessions' own
null scores as the CLI's JSON reports them.

The studies are made of sessions of the invented demo study in samples/study (never real data): sessions with and
without information, so that the p-values fall in the range where a wrong implementation would show.

* The group permutation test (Stelzer, Chen & Turner 2013): each session's pool is its observed score and its
  shuffle scores; one draw picks one pool value per session, averages within subject, then across subjects. numpy
  enumerates *every* combination of pool values here, which gives the exact tail probability that popdecode's
  random draws estimate; popdecode's p = (b + 1)/(B + 1) (Phipson & Smyth 2010) must lie within the Monte Carlo
  error of B draws.
* Prevalence inference with the minimum statistic (Allefeld, Görgen & Haynes 2016): the global-null p-value is the
  probability that the smallest unit score of a draw reaches the observed smallest, which with independent draws
  per unit is a product over units (computed exactly here); the largest prevalence bound is
  gamma0 = (alpha^(1/N) - p^(1/N)) / (1 - p^(1/N)), computed here from popdecode's own p.
* The second-level t-test and the t interval against scipy 1.17.1 (scipy.stats.ttest_1samp, scipy.stats.t).
"""
import json
import subprocess

import numpy as np
import pytest
from scipy import stats

from test_sklearn_agreement import BIN, ROOT

SAMPLES = ROOT / "samples" / "study"
DRAWS = 100000


def run_study(tmp_path, rows, subjects):
    """Run the CLI on a study table of sample sessions; rows are (file, session, subject)."""
    table = tmp_path / "study.csv"
    lines = ["file,session" + (",subject" if subjects else "")]
    for file, session, subject in rows:
        lines.append(f"{SAMPLES / file},{session}" + (f",{subject}" if subjects else ""))
    table.write_text("\n".join(lines) + "\n")
    out = tmp_path / "study.json"
    subprocess.run(
        [str(BIN), "study", str(table), "--label", "odour", "--repeats", "3", "--shuffles", "19",
         "--group-draws", str(DRAWS), "--quiet", "--json", str(out)],
        check=True,
    )
    return json.loads(out.read_text())


def pools(result):
    """Each session's pool: its observed score (mean over repeats), then its shuffles' scores."""
    return [np.array([s["accuracy"]["mean"]] + s["null"]) for s in result["sessions"]]


def units_of(result):
    """Sessions (indices) of each unit of the second level, in the report's order."""
    index = {s["session"]: i for i, s in enumerate(result["sessions"])}
    return [[index[name] for name in u["sessions"]] for u in result["units"]]


def unit_values(pool, members):
    """Every combination of one pool value per member session, averaged within the unit (sessions in order)."""
    grids = np.meshgrid(*[pool[s] for s in members], indexing="ij")
    return sum(g.ravel() for g in grids) / len(members)


def monte_carlo_close(ours, exact, draws):
    """popdecode's (b + 1)/(B + 1) against the exact tail probability: within 4 SD of B binomial draws, plus the +1."""
    return abs(ours - exact) <= 4 * np.sqrt(exact * (1 - exact) / draws) + 2 / (draws + 1)


STUDIES = {
    # Three sessions, no subjects: two without information, one weakly informative.
    "sessions": ([("m3-d1.csv", "a", None), ("m1-d2.csv", "b", None), ("m3-d2.csv", "c", None)], False),
    # Four sessions of three subjects: subject m3's two sessions are averaged first.
    "subjects": ([("m3-d1.csv", "a", "m3"), ("m3-d2.csv", "b", "m3"), ("m1-d2.csv", "c", "m1"),
                  ("m4-d2.csv", "d", "m4")], True),
}


@pytest.mark.parametrize("name", sorted(STUDIES))
def test_group_permutation_test_matches_exact_enumeration(tmp_path, name):
    """Stelzer, Chen & Turner 2013: the exact null of the group mean from every combination of pool values."""
    rows, subjects = STUDIES[name]
    r = run_study(tmp_path, rows, subjects)
    pool, units = pools(r), units_of(r)
    observed_units = np.array([np.mean([pool[s][0] for s in m]) for m in units])
    assert np.allclose(observed_units, [u["score"] for u in r["units"]], rtol=0, atol=1e-12)
    observed = observed_units.mean()
    assert abs(observed - r["group"]["mean"]) < 1e-12
    # The group mean of every combination: units are independent, so combine their value grids.
    per_unit = [unit_values(pool, m) for m in units]
    group = sum(np.meshgrid(*per_unit, indexing="ij")) / len(units)
    # Ties within round-off are counted as reaching the observed mean (as popdecode counts them).
    exact = np.mean(group >= observed - 1e-12)
    assert monte_carlo_close(r["group"]["p_value"], exact, DRAWS), (r["group"]["p_value"], exact)
    assert 0.001 < exact < 0.5, f"the study should give a p-value worth checking, got {exact}"


@pytest.mark.parametrize("name", sorted(STUDIES))
def test_prevalence_matches_the_minimum_statistic_formulas(tmp_path, name):
    """Allefeld, Görgen & Haynes 2016: global-null p of the minimum statistic, and the largest prevalence bound."""
    rows, subjects = STUDIES[name]
    r = run_study(tmp_path, rows, subjects)
    pool, units = pools(r), units_of(r)
    per_unit = [unit_values(pool, m) for m in units]
    minimum = min(np.mean([pool[s][0] for s in m]) for m in units)
    assert abs(minimum - r["prevalence"]["minimum"]) < 1e-12
    # P(min over units >= observed minimum) = product over units of P(unit value >= observed minimum).
    exact = np.prod([np.mean(u >= minimum - 1e-12) for u in per_unit])
    p = r["prevalence"]["global_p"]
    assert monte_carlo_close(p, exact, DRAWS), (p, exact)
    n, alpha = len(units), r["prevalence"]["alpha"]
    if p <= alpha:
        gamma0 = (alpha ** (1 / n) - p ** (1 / n)) / (1 - p ** (1 / n))
        assert abs(r["prevalence"]["gamma0"] - gamma0) < 1e-12
    else:
        assert r["prevalence"]["gamma0"] is None
    p_min = 1 / (DRAWS + 1)
    limit = (alpha ** (1 / n) - p_min ** (1 / n)) / (1 - p_min ** (1 / n))
    assert abs(r["prevalence"]["gamma0_limit"] - limit) < 1e-12


def test_t_test_and_interval_match_scipy(tmp_path):
    """scipy 1.17.1: one-sided one-sample t-test of the unit scores against chance, and the 95 % t interval."""
    rows, subjects = STUDIES["subjects"]
    r = run_study(tmp_path, rows, subjects)
    scores = np.array([u["score"] for u in r["units"]])
    t = stats.ttest_1samp(scores, r["chance"], alternative="greater")
    assert abs(r["t_test"]["t"] - t.statistic) < 1e-10
    assert abs(r["t_test"]["p_value"] - t.pvalue) < 1e-10
    assert r["t_test"]["df"] == len(scores) - 1
    low, high = stats.t.interval(0.95, len(scores) - 1, loc=scores.mean(), scale=stats.sem(scores))
    assert abs(r["group"]["interval"]["low"] - low) < 1e-10
    assert abs(r["group"]["interval"]["high"] - high) < 1e-10


def test_nwb_sessions_are_each_their_own_time_course(tmp_path):
    """A study of NWB files written by pynwb 4.2.0: each session's curve equals `timecourse --nwb` on that file
    with the session's seed, number for number (the study reads each file through the same extract); pooled, the
    sessions' units form one population."""
    from test_nwb import write_nwb

    names = ["r1.nwb", "r2.nwb", "r3.nwb"]
    for i, name in enumerate(names):
        write_nwb(tmp_path / name, seed=20 + i)
    (tmp_path / "study.csv").write_text(
        "file,session,subject\n" + "".join(f"{n},{n[:2]},{'ab'[i % 2]}\n" for i, n in enumerate(names))
    )
    window = ["--label", "odour", "--start", "-0.5", "--end", "1", "--width", "0.25", "--step", "0.25",
              "--classifier", "nearest-mean", "--repeats", "2", "--shuffles", "4", "--quiet"]
    out = tmp_path / "study.json"
    subprocess.run([str(BIN), "study", str(tmp_path / "study.csv"), *window, "--group-draws", "200", "--json",
                    str(out)], check=True)
    r = json.loads(out.read_text())
    assert r["study"]["kind"] == "nwb" and len(r["sessions"]) == 3
    for name, s in zip(names, r["sessions"]):
        one = tmp_path / f"{name}.json"
        subprocess.run([str(BIN), "timecourse", "--nwb", str(tmp_path / name), *window, "--seed", str(s["seed"]),
                        "--json", str(one)], check=True)
        alone = json.loads(one.read_text())
        assert s["curve"] == [w["accuracy"]["mean"] for w in alone["windows"]]
        assert s["files"] == alone["input"]["files"]
    pooled = tmp_path / "pooled.json"
    subprocess.run([str(BIN), "study", str(tmp_path / "study.csv"), *window, "--pool", "--json", str(pooled)],
                   check=True)
    p = json.loads(pooled.read_text())["pooled"]
    assert len(p["input"]["neurons"]) == 36 and p["input"]["neurons"][0].startswith("r1/")
    assert p["design"]["split"] == {"pseudo": {"folds": 5}}
