"""Exports and masks as arrays, and combine recovering known amplitudes from data simulated
here with NumPy (the convention of docs/combine.md: S_m = sum_b A_b exp(+i 2 pi b.phi_m))."""

import numpy as np
import pytest

import pathsieve
from conftest import SCHEMES
from test_design_check import SIGNATURES, numpy_filter, population_ball

RNG = np.random.default_rng(20261202)


def amplitude():
    return complex(RNG.uniform(0.5, 1.5) * np.exp(2j * np.pi * RNG.uniform()))


def profile(b, extra_shape):
    """The profile of term b along the extra data axes: 1 + 0.1 cos(k (1 + sum|b|)) at flat
    index k, so each term has its own shape and each position a different mixture."""
    k = np.arange(int(np.prod(extra_shape))).reshape(extra_shape)
    return 1.0 + 0.1 * np.cos(k * (1 + sum(abs(x) for x in b)))


def simulate(phases, terms, extra_shape=()):
    """Per-step data S[m, ...] = sum_b A_b g_b(...) exp(+i 2 pi b.phi_m)."""
    data = np.zeros((phases.shape[0],) + tuple(extra_shape), dtype=complex)
    for b, a in terms.items():
        g = profile(b, extra_shape)
        carrier = np.exp(2j * np.pi * (phases @ np.array(b)))
        data += a * np.multiply.outer(carrier, g)
    return data


def test_export_in_degrees_and_indices_matches_the_cycle(dye, dye_cycle):
    e = pathsieve.export_phases(dye, dye_cycle, unit="deg")
    assert e.fields == dye.fields and e.outputs == ["R", "NR", "2Q"]
    assert e.phases.dtype == np.float64 and e.unit == "degrees"
    assert np.allclose(e.phases, dye_cycle.phases * 360.0, atol=1e-12)
    assert np.array_equal(e.weights, dye_cycle.weights)
    assert e.meta["experiment_sha256"] == dye.sha256
    i = pathsieve.export_phases(dye, dye_cycle, unit="index:3")
    assert i.phases.dtype == np.int64
    assert np.array_equal(i.phases, np.rint(dye_cycle.phases * 3).astype(np.int64))
    with pytest.raises(pathsieve.PathsieveError, match="grid"):
        pathsieve.export_phases(dye, dye_cycle, unit="index:4")


def test_drift_order_is_a_permutation_of_the_designed_rows(dye, dye_cycle):
    e = pathsieve.export_phases(dye, dye_cycle, order="drift")
    assert sorted(e.source_steps.tolist()) == list(range(27))
    assert np.array_equal(e.phases, dye_cycle.phases[e.source_steps])
    assert np.array_equal(e.weights, dye_cycle.weights[e.source_steps])
    assert e.meta["step_order"] == "drift"


def test_masks_follow_the_documented_formula_by_numpy(carbonyl, carbonyl_cycle):
    m = pathsieve.masks(carbonyl, carbonyl_cycle, SCHEMES / "carbonyl-shaper.toml")
    assert m.masks.shape == (4, 128) and m.masks.dtype == np.complex128
    nu = 55.4 + 0.025 * np.arange(128)
    assert np.allclose(m.freqs_thz, nu, rtol=0, atol=1e-12)
    # docs/shaper-masks.md: M = s * sum_j a_j exp(i 2 pi phi_j) exp(i 2 pi (nu - nu0) tau_j)
    # with tau in fs, nu in THz (1e-3 turns per THz fs); pump 1 at 0 fs, pump 2 at 600 fs.
    phases = carbonyl_cycle.phases
    raw = np.exp(2j * np.pi * phases[:, [0]]) + np.exp(
        2j * np.pi * (phases[:, [1]] + (nu - 57.0) * 600.0 * 1e-3)
    )
    scale = min(1.0, 1.0 / np.abs(raw).max())
    assert np.allclose(m.masks, scale * raw, rtol=0, atol=1e-12)


def dye_terms(cycle):
    """Kept terms at order-one amplitudes, every other population-ball term at 1000x; real
    (fluorescence) detection pairs b with -b at the conjugate amplitude."""
    terms = {}
    kept = {tuple(v) for v in SIGNATURES.values()}
    for b in population_ball(4, 4):
        key = tuple(int(x) for x in b)
        if key in terms:
            continue
        a = amplitude() * (1.0 if key in kept else 1000.0)
        if all(x == 0 for x in key):
            terms[key] = complex(a.real)
            continue
        neg = tuple(-x for x in key)
        if neg in kept and key not in kept:
            continue  # filled from its kept partner below
        terms[key] = a
        terms[neg] = a.conjugate()
    for t in kept:
        neg = tuple(-x for x in t)
        if t not in terms:
            terms[t] = terms[neg].conjugate()
    return terms


def test_combine_recovers_the_kept_amplitudes_of_a_designed_cycle(dye, dye_cycle):
    terms = dye_terms(dye_cycle)
    data = simulate(dye_cycle.phases, terms, extra_shape=(5,))
    assert np.abs(data.imag).max() < 1e-9 * np.abs(data).max()  # real detection
    out = pathsieve.combine(dye, dye_cycle, data.real)
    for name, b in SIGNATURES.items():
        want = terms[tuple(b)] * profile(tuple(b), (5,))
        got = out[name]
        assert got.shape == (5,) and got.dtype == np.complex128
        assert np.abs(got - want).max() < 1e-9, (name, got, want)
    assert out.info["real_data"] is True


def test_combine_with_the_step_axis_last_and_a_shuffled_order(dye, dye_cycle):
    terms = dye_terms(dye_cycle)
    data = simulate(dye_cycle.phases, terms, extra_shape=(3,)).real
    perm = RNG.permutation(27)
    shuffled = data[perm]  # data row p holds cycle step perm[p]
    a = pathsieve.combine(dye, dye_cycle, data)
    b = pathsieve.combine(dye, dye_cycle, shuffled.T.copy(), step_axis=1, order=perm)
    for name in a.outputs:
        assert np.abs(a[name] - b[name]).max() < 1e-9


def test_combine_a_weighted_published_cycle_normalises_the_gain(carbonyl, carbonyl_cycle):
    # Pump-probe 2x2 with weights +-1 (common practice): F(R) = F(NR) = 4, so the combined
    # output is A_R + A_NR after dividing by 4. Backgrounds and scatter at 1000x.
    a_r = amplitude()
    terms = {(-1, 1): a_r, (1, -1): a_r.conjugate()}  # real detection: NR term is R's conjugate
    for b in [(0, 0), (1, 0), (0, 1), (2, 0), (0, 2), (1, 1), (2, -2)]:
        if b == (1, 1):
            continue  # not in the rejection set of order 3 with a fixed probe
        big = amplitude() * 1000.0
        terms[b] = complex(big.real) if b == (0, 0) else big
        if b != (0, 0):
            terms[tuple(-x for x in b)] = big.conjugate()
    ph = carbonyl_cycle.phases
    w = carbonyl_cycle.weights[:, 0]
    for b in terms:
        if b not in [(-1, 1), (1, -1)]:
            assert abs(numpy_filter(w, ph, np.array(b))) < 1e-12, b
    data = simulate(ph, terms).real
    out = pathsieve.combine(carbonyl, carbonyl_cycle, data)
    got = out["absorptive"]
    assert got.dtype == np.float64  # real data, real weights: a real output
    want = (a_r + a_r.conjugate()) * profile((-1, 1), ())
    assert abs(got - want) < 1e-9
    raw = pathsieve.combine(carbonyl, carbonyl_cycle, data, as_written=True)["absorptive"]
    assert abs(raw - 4 * got) < 1e-9


def test_combine_refuses_a_wrong_step_count(dye, dye_cycle):
    with pytest.raises(pathsieve.PathsieveError, match="27 steps"):
        pathsieve.combine(dye, dye_cycle, np.zeros((26, 4)))
