"""A time course from an NWB file written by pynwb (the reference writer, pinned in scripts/reference-venv.sh), split
into parts with --part K/N and joined by `popdecode combine`: the result is the single run's, byte for byte, and
the SHA-256 the parts record for the file is the SHA-256 of its bytes (which combine checks before reading it
again). The recording is invented (test_nwb.write_nwb)."""
import hashlib
import json
import subprocess

from test_nwb import write_nwb
from test_sklearn_agreement import BIN

ANALYSIS = ["timecourse", "--label", "odour", "--start", "-0.5", "--end", "1", "--width", "0.25", "--step", "0.25",
            "--classifier", "nearest-mean", "--repeats", "3", "--shuffles", "5", "--generalize",
            "--units", "quality=good", "--quiet"]


def run(*args):
    return subprocess.run([BIN, *map(str, args)], check=True, capture_output=True, text=True).stdout


def test_nwb_time_course_in_parts_equals_one_run(tmp_path):
    path = tmp_path / "odours.nwb"
    write_nwb(path)
    single_text = run(*ANALYSIS, "--nwb", path, "--json", tmp_path / "single.json", "--plots", tmp_path / "single")
    for n in (3, 7):
        parts = [tmp_path / f"part-{k}-of-{n}.json" for k in range(1, n + 1)]
        for k, part in enumerate(parts, start=1):
            run(*ANALYSIS, "--nwb", path, "--part", f"{k}/{n}", "--json", part)
        recorded = json.loads(parts[0].read_text())["files"]
        assert [f["sha256"] for f in recorded] == [hashlib.sha256(path.read_bytes()).hexdigest()]
        text = run("combine", *reversed(parts), "--json", tmp_path / f"combined-{n}.json",
                   "--plots", tmp_path / f"combined-{n}")
        assert text == single_text
        assert (tmp_path / f"combined-{n}.json").read_bytes() == (tmp_path / "single.json").read_bytes()
        single_files = sorted(p.name for p in (tmp_path / "single").iterdir())
        assert single_files == sorted(p.name for p in (tmp_path / f"combined-{n}").iterdir())
        for name in single_files:
            assert (tmp_path / f"combined-{n}" / name).read_bytes() == (tmp_path / "single" / name).read_bytes()
