"""Exports that load unedited: the command line's plain-csv/plain-tsv tables read by
numpy.loadtxt and by Python's csv module with no option beyond the delimiter, equal to the
arrays the package returns for the same export; the receiver/LO table reproduces the weights;
the NPZ bundle loads with np.load (no pickling) and carries its metadata as JSON.

The tables come from the `pathsieve` binary (`cargo build`; tests/run-all.sh builds it with
`cargo test` before pytest, or set PATHSIEVE_BIN)."""

import csv
import json
import os
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

import pathsieve
from conftest import ROOT, SCHEMES


def _binary():
    if os.environ.get("PATHSIEVE_BIN"):
        return Path(os.environ["PATHSIEVE_BIN"])
    for p in (ROOT / "target" / "debug" / "pathsieve", ROOT / "target" / "release" / "pathsieve"):
        if p.exists():
            return p
    found = shutil.which("pathsieve")
    return Path(found) if found else None


BIN = _binary()
pytestmark = pytest.mark.skipif(BIN is None, reason="the pathsieve binary is not built (cargo build)")

EXP = SCHEMES / "dye-fluorescence-2d.toml"
CYC = SCHEMES / "dye-fluorescence-27step.cycle.toml"


def export(tmp_path, *args):
    r = subprocess.run([str(BIN), "export", str(EXP), str(CYC), *map(str, args)],
                       capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 0, r.stderr


@pytest.fixture(scope="module")
def reference(dye):
    return pathsieve.export_phases(dye, pathsieve.read_cycle(CYC), unit="deg", order="drift")


@pytest.mark.parametrize("fmt,ext,delim", [("plain-csv", "csv", ","), ("plain-tsv", "tsv", "\t")])
def test_numpy_and_the_csv_module_read_the_plain_table_as_is(tmp_path, reference, fmt, ext, delim):
    out = tmp_path / f"phases.{ext}"
    w = tmp_path / f"weights.{ext}"
    export(tmp_path, "--format", fmt, "--unit", "deg", "--order", "drift", "--out", out, "--weights", w)
    a = np.loadtxt(out, delimiter=delim, skiprows=1)
    assert a.shape == (27, 1 + len(reference.fields))
    assert np.array_equal(a[:, 0], np.arange(1, 28))  # steps counted from 1, as in the tool's tables
    assert np.allclose(a[:, 1:], reference.phases, atol=1e-12)
    with open(out, newline="") as f:
        rows = list(csv.reader(f, delimiter=delim))
    assert rows[0] == ["step"] + list(reference.fields)
    assert np.allclose(np.array(rows[1:], dtype=float), a, atol=0)
    b = np.loadtxt(w, delimiter=delim, skiprows=1)
    assert np.allclose(b[:, 1::2] + 1j * b[:, 2::2], reference.weights, atol=1e-15)
    meta = json.loads(Path(f"{out}.meta.json").read_text(encoding="ascii"))
    assert meta["unit"] == "degrees" and meta["layout"] == fmt and meta["steps"] == 27
    assert meta["source_steps"] == reference.source_steps.tolist()


def test_the_receiver_table_reproduces_the_weights(tmp_path, reference):
    rx = tmp_path / "rx.csv"
    export(tmp_path, "--format", "plain-csv", "--order", "drift", "--out", tmp_path / "p.csv", "--receiver", rx)
    r = np.loadtxt(rx, delimiter=",", skiprows=1)
    phase, amp = r[:, 1::2], r[:, 2::2]
    assert np.allclose(amp * np.exp(-2j * np.pi * phase) / 27, reference.weights, atol=1e-15)
    assert ((0 <= phase) & (phase < 1)).all()


def test_one_file_per_field_is_one_column(tmp_path, reference):
    export(tmp_path, "--format", "plain-csv", "--per-field", "--unit", "deg", "--order", "drift",
           "--out", tmp_path / "f.csv")
    for j, name in enumerate(reference.fields):
        col = np.loadtxt(tmp_path / f"f.{name}.csv", delimiter=",", skiprows=1)
        assert np.allclose(col, reference.phases[:, j], atol=1e-12)


def test_the_npz_bundle_loads_without_pickling(tmp_path, reference):
    z = tmp_path / "c.npz"
    export(tmp_path, "--format", "npz", "--unit", "deg", "--order", "drift", "--out", z)
    with np.load(z, allow_pickle=False) as d:
        assert sorted(d.files) == ["meta", "phases", "weights"]
        assert np.allclose(d["phases"], reference.phases, atol=1e-12)
        assert np.allclose(d["weights"], reference.weights, atol=1e-15)
        meta = json.loads(str(d["meta"]))
    assert meta["schema_version"] == 1 and meta["unit"] == "degrees"
