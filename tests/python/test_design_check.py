"""design -> NumPy arrays -> check, cross-checked with NumPy's own arithmetic.

NumPy is the independent route: every filter value below is computed here as
F(b) = sum_m w_m exp(+i 2 pi b.phi_m) (the convention of docs/combine.md) from the arrays the
package returns, not by the library."""

from fractions import Fraction

import numpy as np
import pytest

import pathsieve

# Phase signatures over the four pulses of population-detected (fluorescence) 2D:
# Tan, J. Chem. Phys. 129, 124501 (2008) (memory): rephasing (-1, +1, +1, -1),
# non-rephasing (+1, -1, +1, -1), double quantum (+1, +1, -1, -1).
SIGNATURES = {
    "R": np.array([-1, 1, 1, -1]),
    "NR": np.array([1, -1, 1, -1]),
    "2Q": np.array([1, 1, -1, -1]),
}


def numpy_filter(weights, phases, b):
    """F(b) = sum_m w_m exp(+i 2 pi b.phi_m), phases in turns (steps x fields)."""
    return np.sum(weights * np.exp(2j * np.pi * (phases @ b)))


def population_ball(n_fields, order):
    """Every signature b with sum(b) = 0 and sum|b| <= order (the population-detection
    rejection rule through the order, domain notes section 1; common practice)."""
    out = []
    for b in np.ndindex(*([2 * order + 1] * n_fields)):
        v = np.array(b) - order
        if v.sum() == 0 and np.abs(v).sum() <= order:
            out.append(v)
    return out


def test_design_gives_float_turns_exact_fractions_and_complex_weights(dye, dye_cycle):
    c = dye_cycle
    assert c.phases.dtype == np.float64 and c.phases.shape == (c.steps, 4)
    assert c.weights.dtype == np.complex128 and c.weights.shape == (c.steps, 3)
    assert c.fields == ["1", "2", "3", "4"] and c.outputs == ["R", "NR", "2Q"]
    exact = c.exact_phases
    assert exact is not None and all(isinstance(x, Fraction) for row in exact for x in row)
    assert np.array_equal(np.array([[float(x) for x in row] for row in exact]), c.phases)
    # 27 steps: the nested 3 x 3 x 3 cycle for R, NR and 2Q together (Tan 2008, memory),
    # and the designer proves no lattice design is shorter.
    assert c.steps == 27
    report = c.report
    assert report["steps"] == 27 and report["proven_minimal"] is True
    assert "27" in c.summary


def test_designed_weights_keep_each_signal_with_unit_gain_by_numpy(dye_cycle):
    c = dye_cycle
    for o, name in enumerate(c.outputs):
        for other, b in SIGNATURES.items():
            f = numpy_filter(c.weights[:, o], c.phases, b)
            assert abs(f - (1.0 if other == name else 0.0)) < 1e-12, (name, other, f)


def test_designed_cycle_cancels_the_whole_population_ball_by_numpy(dye_cycle):
    c = dye_cycle
    kept = {tuple(v) for v in SIGNATURES.values()}
    for b in population_ball(4, 4):
        if tuple(b) in kept:
            continue
        for o in range(3):
            assert abs(numpy_filter(c.weights[:, o], c.phases, b)) < 1e-12, (b, o)


def test_check_of_the_designed_arrays_is_clean_in_every_unit(dye, dye_cycle):
    ph = dye_cycle.phases
    r = pathsieve.check(dye, ph)
    assert r["clean"] is True and r["steps"] == 27
    assert pathsieve.check(dye, ph, dye_cycle.weights)["clean"] is True
    assert pathsieve.check(dye, ph * 360.0, unit="deg")["clean"] is True
    assert pathsieve.check(dye, ph * 2 * np.pi, unit="rad")["clean"] is True
    assert pathsieve.check(dye, np.rint(ph * 3), unit="index:3")["clean"] is True
    weights = {n: dye_cycle.weights[:, i] for i, n in enumerate(dye_cycle.outputs)}
    assert pathsieve.check(dye, ph, weights)["clean"] is True


def test_check_of_the_cycle_object_is_exact_and_clean(dye, dye_cycle):
    r = pathsieve.check(dye, dye_cycle)
    assert r["clean"] is True and r["exact"] is True
    assert r["schema_version"] == 1  # the same JSON layout as `pathsieve check --json`


def test_float_phases_snap_within_the_tolerance_and_every_snap_is_listed(dye, dye_cycle):
    # 1/3 computed in floating point is the exact third after snapping.
    r = pathsieve.check(dye, dye_cycle.phases)
    assert r["exact"] is True and r["clean"] is True
    # 1e-7 turn off is inside the snapping tolerance (1e-5 turn): snapped, and the snap shown.
    ph = dye_cycle.phases.copy()
    ph[4, 2] = (ph[4, 2] + 1e-7) % 1.0
    r = pathsieve.check(dye, ph)
    assert r["clean"] is True
    snapped = {(s["step"], s["column"]): s for s in r["snaps"]}
    # Every float cell that is not exactly a simple fraction of a turn is snapped, and listed
    # (0.0 and 0.5 are exactly 0 and 1/2 turn; 1/3 in floating point is not exactly a third).
    inexact = sum(1 for x in ph.flat if Fraction(float(x)).denominator > 3600)
    assert inexact > 0 and len(snapped) == inexact
    assert snapped[(5, "3")]["written"] != snapped[(5, "3")]["exact"]
    # 1e-3 turn off is not: a numeric verdict, which finds the leak.
    ph[4, 2] = (dye_cycle.phases[4, 2] + 1e-3) % 1.0
    assert pathsieve.check(dye, ph)["clean"] is False


def test_columns_of_the_cycled_fields_only_are_assigned_by_count(dye, dye_cycle):
    # Field 1 is fixed: three columns are the cycled fields 2, 3, 4.
    r = pathsieve.check(dye, dye_cycle.phases[:, 1:])
    assert r["clean"] is True


def test_a_wrong_cell_leaks_and_numpy_agrees_on_the_leak(dye, dye_cycle):
    ph = dye_cycle.phases.copy()
    ph[5, 2] = (ph[5, 2] + 1.0 / 3.0) % 1.0
    w = dye_cycle.weights
    r = pathsieve.check(dye, ph, w)
    assert r["clean"] is False
    out = r["outputs"][0]
    assert out["name"] == "R" and out["leak_count"] > 0
    assert 6 in out["suspect_steps"]
    for leak in out["leaks"][:10]:
        b = np.array(leak["signature"])
        f = numpy_filter(w[:, 0], ph, b)
        assert abs(abs(f) - leak["value"]["abs"]) < 1e-9, (leak, f)


def test_the_published_two_by_two_pump_probe_cycle_is_clean(carbonyl, carbonyl_cycle):
    # 2x2 pump-pair cycle with weights +-1 keeps R + NR in pump-probe geometry (common
    # practice; Hamm & Zanni, Concepts and Methods of 2D Infrared Spectroscopy (2011), ch. 4
    # (memory)).
    r = pathsieve.check(carbonyl, carbonyl_cycle)
    assert r["clean"] is True
    ph = np.array([[0, 0], [0, 0.5], [0.5, 0], [0.5, 0.5]])
    w = np.array([[1], [-1], [-1], [1]], dtype=complex)
    assert pathsieve.check(carbonyl, ph, w, fields=["pu1", "pu2"])["clean"] is True
    # The same table with the weights' signs flipped on one step leaks the background.
    w[1, 0] = 1
    assert pathsieve.check(carbonyl, ph, w, fields=["pu1", "pu2"])["clean"] is False


def test_cycle_text_round_trips_through_toml(dye, dye_cycle):
    again = pathsieve.Cycle.from_text(dye_cycle.to_toml())
    assert again.exact_phases == dye_cycle.exact_phases
    assert np.array_equal(again.weights, dye_cycle.weights)
    assert pathsieve.check(dye, again)["clean"] is True


def test_experiment_from_a_toml_string(dye):
    text = dye.source
    e = pathsieve.parse_experiment(text, "inline.toml")
    assert e.fields == dye.fields and e.signals == ["R", "NR", "2Q"]
    assert e.name == "inline.toml" and e.sha256 == dye.sha256
    assert e.cycled_fields == ["2", "3", "4"]
