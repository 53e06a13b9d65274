"""Write the NWB files the fuzzer starts from (scripts/fuzz.sh): pynwb's own layout of invented recordings, from
tests/reference/test_nwb.py's write_nwb (pynwb pinned in scripts/reference-venv.sh)."""
import pathlib
import sys

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent.parent / "tests" / "reference"))
from test_nwb import write_nwb  # noqa: E402

out = pathlib.Path(sys.argv[1])
out.mkdir(parents=True, exist_ok=True)
write_nwb(out / "odours.nwb", seed=5)
write_nwb(out / "no-trials.nwb", with_trials=False, seed=6)
