"""Shared fixtures of the Python tests: the repository's example files and the package.

The tests run against the installed package (`pip install .` into a fresh virtual
environment, see tests/run-all.sh), never against the source tree."""

from pathlib import Path

import pytest

import pathsieve

ROOT = Path(__file__).resolve().parents[2]
SCHEMES = ROOT / "schemes"


@pytest.fixture(scope="session")
def dye():
    """Fluorescence-detected 2D of an invented dye: four collinear pulses, R, NR and 2Q wanted."""
    return pathsieve.read_experiment(SCHEMES / "dye-fluorescence-2d.toml")


@pytest.fixture(scope="session")
def dye_cycle(dye):
    return pathsieve.design(dye)


@pytest.fixture(scope="session")
def carbonyl():
    """Shaper 2D IR in pump-probe geometry of an invented carbonyl mode (two pumps, probe)."""
    return pathsieve.read_experiment(SCHEMES / "carbonyl-pump-probe.toml")


@pytest.fixture(scope="session")
def carbonyl_cycle():
    return pathsieve.read_cycle(SCHEMES / "carbonyl-2x2.cycle.toml")
