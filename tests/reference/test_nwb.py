"""NWB files written by pynwb (version pinned in scripts/reference-venv.sh) are read back by popdecode spike by spike.

The recordings are invented here (Poisson spike trains, never real data): three odours, information from 0.2 to
0.6 s after each trial's start. pynwb is the reference writer of the NWB 2.x standard.
"""
import subprocess
import uuid
from datetime import datetime, timezone

import numpy as np
import pytest
from pynwb import NWBHDF5IO, NWBFile
from pynwb.ecephys import ElectricalSeries

from test_sklearn_agreement import BIN


QUALITY = ["good"] * 8 + ["mua"] * 2 + ["noise"] * 2  # a spike sorter's labels of the 12 invented units
LOCATIONS = ["piriform cortex", "olfactory tubercle"]
# Each unit's electrodes: unit u on channels 2u and 2u + 1, so units 0-7 in piriform cortex, 8-11 in the tubercle;
# unit 7 also on channel 16, spanning both.
ELECTRODES = [[2 * u, 2 * u + 1] + ([16] if u == 7 else []) for u in range(12)]


def write_nwb(path, with_trials=True, with_units=True, seed=5, raw_mb=0):
    """raw_mb: also store that many MB of invented raw voltage (int16, 32 channels) in the acquisition group, as a
    recording session's file would; popdecode must not read it."""
    rng = np.random.default_rng(seed)
    nwb = NWBFile(
        session_description="invented odour responses",
        identifier=str(uuid.uuid4()),
        session_start_time=datetime(2026, 1, 1, tzinfo=timezone.utc),
    )
    odours = np.repeat(["citral", "eugenol", "hexanal"], 20)
    rng.shuffle(odours)
    starts = 3.0 * np.arange(len(odours)) + 1.0
    gains = rng.lognormal(0.0, 0.7, (3, 12))
    if with_trials:
        nwb.add_trial_column(name="odour", description="odour presented")
        for start, odour in zip(starts, odours):
            nwb.add_trial(start_time=start, stop_time=start + 1.5, odour=str(odour))
    # A 32-channel probe whose first 16 channels sit in piriform cortex and the rest in the olfactory tubercle.
    device = nwb.create_device(name="probe")
    shank = nwb.create_electrode_group(
        name="shank0", description="invented shank", location="piriform cortex", device=device
    )
    channels = 32
    for ch in range(channels):
        nwb.add_electrode(group=shank, location=LOCATIONS[ch // 16])
    if raw_mb:
        region = nwb.create_electrode_table_region(region=list(range(channels)), description="every channel")
        samples = int(raw_mb * 1e6) // (2 * channels)
        voltage = rng.integers(-500, 500, (samples, channels), dtype=np.int16)
        nwb.add_acquisition(
            ElectricalSeries(name="raw", data=voltage, electrodes=region, starting_time=0.0, rate=30000.0)
        )
    if with_units:
        nwb.add_unit_column(name="quality", description="spike sorter's label")
        nwb.add_unit_column(name="snr", description="signal-to-noise ratio of the mean waveform")
        for u in range(12):
            times = []
            for start, odour in zip(starts, odours):
                k = ["citral", "eugenol", "hexanal"].index(odour)
                for a, b, rate in [(-0.5, 0.2, 8.0), (0.2, 0.6, 8.0 * gains[k, u]), (0.6, 1.0, 8.0)]:
                    n = rng.poisson(rate * (b - a))
                    times.extend(start + rng.uniform(a, b, n))
            nwb.add_unit(spike_times=np.sort(np.array(times)), quality=QUALITY[u], snr=float(2.0 + u % 5),
                         electrodes=ELECTRODES[u])
    with NWBHDF5IO(str(path), "w") as io:
        io.write(nwb)


def test_spikes_read_back_one_by_one(tmp_path):
    path = tmp_path / "odours.nwb"
    write_nwb(path)
    spikes = tmp_path / "spikes.csv"
    out = subprocess.run([BIN, "inspect", path, "--spikes", spikes], capture_output=True, text=True, check=True)
    assert "12 units" in out.stdout and "60 trials" in out.stdout
    assert "odour" in out.stdout and "citral (20)" in out.stdout
    ours = [line.split(",") for line in spikes.read_text().splitlines()[1:]]
    with NWBHDF5IO(str(path), "r") as io:
        units = io.read().units
        theirs = [(f"unit {units.id[u]}", t) for u in range(len(units)) for t in units["spike_times"][u]]
    assert len(ours) == len(theirs)
    for (unit, time), (ref_unit, ref_time) in zip(ours, theirs):
        assert unit == ref_unit
        assert float(time) == ref_time  # bit for bit: written with Rust's round-trip float format


def test_time_course_from_nwb_finds_the_information(tmp_path):
    path = tmp_path / "odours.nwb"
    write_nwb(path)
    result = tmp_path / "result.json"
    subprocess.run(
        [BIN, "timecourse", "--nwb", path, "--label", "odour", "--start", "-0.5", "--end", "1", "--width", "0.2",
         "--step", "0.1", "--classifier", "shrinkage-lda", "--repeats", "5", "--shuffles", "0", "--quiet",
         "--json", result],
        check=True, capture_output=True, text=True,
    )
    import json

    r = json.loads(result.read_text())
    assert r["input"]["kind"] == "nwb" and r["input"]["trials"] == 60 and len(r["input"]["neurons"]) == 12
    curve = {round(w["time"], 3): w["accuracy"]["mean"] for w in r["windows"]}
    assert curve[0.4] > 0.6, curve  # window [0.3, 0.5): inside the informative period (chance 1/3)
    assert curve[-0.3] < 0.55, curve  # before odour onset


def test_units_kept_by_a_units_column(tmp_path):
    path = tmp_path / "odours.nwb"
    write_nwb(path, raw_mb=4)
    out = subprocess.run([BIN, "inspect", path], capture_output=True, text=True, check=True)
    assert "units columns" in out.stdout and "good (8), mua (2), noise (2)" in out.stdout, out.stdout
    result = tmp_path / "result.json"
    run = subprocess.run(
        [BIN, "timecourse", "--nwb", path, "--label", "odour", "--start", "-0.5", "--end", "1", "--width", "0.2",
         "--step", "0.1", "--units", "quality=good,mua", "--units", "snr>=3", "--repeats", "2", "--shuffles",
         "0", "--quiet", "--json", result],
        check=True, capture_output=True, text=True,
    )
    import json

    r = json.loads(result.read_text())
    with NWBHDF5IO(str(path), "r") as io:
        units = io.read().units
        expected = [
            f"unit {units.id[u]}"
            for u in range(len(units))
            if units["quality"][u] in ("good", "mua") and units["snr"][u] >= 3
        ]
    assert r["input"]["neurons"] == expected and len(expected) == 8
    assert r["recipe"]["time"]["input"]["units"][1] == {"column": "snr", "op": ">=", "values": ["3"]}
    assert f"{len(expected)} of 12 units kept (quality = good,mua and snr >= 3)" in r["warnings"]
    assert "those with quality = good,mua and snr >= 3" in run.stdout
    # The file's hash is of the whole file, though only its tables were read.
    import hashlib

    assert r["input"]["files"][0]["sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()
    # Units kept by brain area, read through the units' electrodes from the electrodes table.
    assert "electrode location" in out.stdout and "olfactory tubercle (4)" in out.stdout, out.stdout
    assert "olfactory tubercle + piriform cortex (1), piriform cortex (7)" in out.stdout, out.stdout
    subprocess.run(
        [BIN, "timecourse", "--nwb", path, "--label", "odour", "--start", "-0.5", "--end", "1", "--width", "0.2",
         "--units", "electrode location=piriform cortex", "--repeats", "2", "--shuffles", "0", "--quiet",
         "--json", result],
        check=True, capture_output=True, text=True,
    )
    r = json.loads(result.read_text())
    assert r["input"]["neurons"] == [f"unit {u}" for u in range(7)]
    bad = subprocess.run(
        [BIN, "timecourse", "--nwb", path, "--label", "odour", "--start", "0", "--end", "1", "--units",
         "area=piriform", "--quiet"],
        capture_output=True, text=True,
    )
    assert bad.returncode == 2
    assert "odours.nwb: the units table has no column 'area'" in bad.stderr, bad.stderr


@pytest.mark.parametrize("missing,words", [("trials", "no trials table"), ("units", "no units table")])
def test_missing_tables_are_named(tmp_path, missing, words):
    path = tmp_path / "partial.nwb"
    write_nwb(path, with_trials=missing != "trials", with_units=missing != "units")
    out = subprocess.run(
        [BIN, "timecourse", "--nwb", path, "--label", "odour", "--start", "0", "--end", "1", "--quiet"],
        capture_output=True, text=True,
    )
    assert out.returncode == 2
    assert words in out.stderr and "partial.nwb" in out.stderr, out.stderr
