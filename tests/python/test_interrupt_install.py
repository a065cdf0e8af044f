"""Ctrl-C cancels a long design; the package under test is the installed wheel."""

import os
import signal
import sys
import threading
import time
from pathlib import Path

import pytest

import pathsieve
from conftest import SCHEMES


@pytest.fixture(scope="module")
def sixth_order():
    # Six collinear pulses, sixth order: the designer searches for tens of seconds.
    return pathsieve.read_experiment(SCHEMES / "photocurrent-fifth-order.toml")


@pytest.mark.skipif(sys.platform == "win32", reason="SIGINT to oneself is POSIX")
def test_ctrl_c_stops_a_long_design_with_keyboard_interrupt(sixth_order):
    timer = threading.Timer(1.0, lambda: os.kill(os.getpid(), signal.SIGINT))
    started = time.monotonic()
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            pathsieve.design(sixth_order)
    finally:
        timer.cancel()
    # The search stops at its next node; the stages after it end within seconds.
    assert time.monotonic() - started < 20.0


def test_an_exception_in_the_progress_callback_stops_the_design(sixth_order):
    calls = []

    class Enough(Exception):
        pass

    def progress(steps, lattices_tested):
        calls.append((steps, lattices_tested))
        if len(calls) >= 2:
            raise Enough()

    started = time.monotonic()
    with pytest.raises(Enough):
        pathsieve.design(sixth_order, progress=progress)
    assert time.monotonic() - started < 20.0
    assert calls[0][0] >= 1 and calls[-1][0] >= calls[0][0]


def test_the_package_is_the_installed_wheel_with_stubs():
    pkg = Path(pathsieve.__file__).resolve().parent
    assert sys.prefix != sys.base_prefix, "run the tests in a virtual environment"
    assert Path(sys.prefix).resolve() in pkg.parents, pkg
    assert (pkg / "py.typed").is_file() and (pkg / "_pathsieve.pyi").is_file()
    assert pathsieve.__version__ == "0.1.0"
