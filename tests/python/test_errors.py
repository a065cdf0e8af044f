"""Bad input raises pathsieve.PathsieveError (a ValueError) with the library's message, which
names the file, line and column or the bad value, and the fix."""

import numpy as np
import pytest

import pathsieve
from conftest import SCHEMES


def test_the_error_is_a_value_error():
    assert issubclass(pathsieve.PathsieveError, ValueError)
    assert issubclass(pathsieve.DesignRefused, pathsieve.PathsieveError)


def test_bad_toml_names_the_name_line_and_column():
    with pytest.raises(pathsieve.PathsieveError) as e:
        pathsieve.parse_experiment("order = 3\n[detection\nmode = 1\n", "lab.toml")
    msg = str(e.value)
    assert "lab.toml:2" in msg  # file:line, as every reader of the library writes it


def test_a_missing_file_is_named(tmp_path):
    p = tmp_path / "nope.toml"
    with pytest.raises(pathsieve.PathsieveError, match="nope.toml"):
        pathsieve.read_experiment(p)


def test_phases_of_the_wrong_width_say_what_fits(dye):
    with pytest.raises(pathsieve.PathsieveError, match="3 cycled fields and 4 fields in all"):
        pathsieve.check(dye, np.zeros((27, 2)))
    with pytest.raises(pathsieve.PathsieveError, match=r"one column per field \[1, 2\]"):
        pathsieve.check(dye, np.zeros((27, 3)), fields=["1", "2"])


def test_a_nan_phase_names_step_and_column(dye, dye_cycle):
    ph = dye_cycle.phases.copy()
    ph[2, 1] = np.nan
    with pytest.raises(pathsieve.PathsieveError, match="step 3, column 2"):
        pathsieve.check(dye, ph)


def test_an_unknown_unit_lists_the_units(dye, dye_cycle):
    with pytest.raises(pathsieve.PathsieveError, match=r"turns, degrees \(deg\), radians \(rad\) or index:M"):
        pathsieve.check(dye, dye_cycle.phases, unit="grad")


def test_fractional_grid_indices_are_phases_off_the_grid(dye, dye_cycle):
    # k/M turn for any k, as the command line reads them: half a step off the grid leaks.
    k = np.rint(dye_cycle.phases * 3)
    assert pathsieve.check(dye, k, unit="index:3")["clean"] is True
    k[5, 2] += 0.5
    assert pathsieve.check(dye, k, unit="index:3")["clean"] is False


def test_weights_with_the_wrong_column_count(dye, dye_cycle):
    with pytest.raises(pathsieve.PathsieveError, match="one column per output"):
        pathsieve.check(dye, dye_cycle.phases, dye_cycle.weights[:, :2])


def test_a_design_below_the_minimum_is_refused_with_its_report(dye):
    with pytest.raises(pathsieve.DesignRefused) as e:
        pathsieve.design(dye, max_steps=8)
    assert isinstance(e.value.report, dict) and e.value.report.get("steps") is None
    assert str(e.value)


def test_a_cycle_for_another_experiment_is_refused(dye, carbonyl_cycle):
    with pytest.raises(pathsieve.PathsieveError, match="fields"):
        pathsieve.check(dye, carbonyl_cycle)


def test_a_shaper_is_needed_for_masks(carbonyl, carbonyl_cycle):
    with pytest.raises(pathsieve.PathsieveError, match="shaper"):
        pathsieve.masks(carbonyl, carbonyl_cycle)
    with pytest.raises(pathsieve.PathsieveError, match="shaper.toml"):
        pathsieve.masks(carbonyl, carbonyl_cycle, shaper_toml="[calibration]\nkind = 3\n")


def test_arrays_beyond_the_file_limits_are_refused_before_they_are_read(dye):
    # The limits of a cycle file (src/limits.rs): at most 12 fields, 1,000,000 steps and
    # 4,000,000 cells (steps x (phase columns + weight columns)), checked from the shapes.
    with pytest.raises(pathsieve.PathsieveError, match="at most 12 fields"):
        pathsieve.check(dye, np.zeros((4, 13)))
    with pytest.raises(pathsieve.PathsieveError, match="1000001 rows"):
        pathsieve.check(dye, np.zeros((1_000_001, 3)))
    with pytest.raises(pathsieve.PathsieveError, match="limit of 4000000 cells"):
        pathsieve.check(dye, np.zeros((1_000_000, 4)), np.zeros((1_000_000, 1), complex), outputs=["R"])
