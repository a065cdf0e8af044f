"""pathsieve: design the smallest phase cycle for a multidimensional-spectroscopy experiment,
check any cycle exactly, export it for acquisition software and combine measured data.

Python bindings of the pathsieve Rust library (not of its command line). Arrays are NumPy
arrays: phases in turns as float64 with shape (steps, fields), weights complex128 with shape
(steps, outputs). Reports are plain dicts (the same JSON the command line prints). Every
error the library reports raises :class:`PathsieveError` (a ``ValueError``) with the
library's message, which names the bad value and the fix.

Conventions (docs/conventions.md, docs/combine.md): step m sets phases ``phi_m`` (turns); a
term of phase signature b contributes ``A_b exp(+i 2 pi b.phi_m)``; output
``C = s * sum_m w_m S_m``.

>>> import pathsieve
>>> exp = pathsieve.read_experiment("schemes/dye-fluorescence-2d.toml")  # doctest: +SKIP
>>> cycle = pathsieve.design(exp)                                           # doctest: +SKIP
>>> pathsieve.check(exp, cycle.phases)["clean"]                             # doctest: +SKIP
True
"""

from __future__ import annotations

import json
import os
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any, Callable, Dict, List, Mapping, Optional, Sequence, Union

import numpy as np

from . import _pathsieve as _native
from ._pathsieve import Experiment, PathsieveError, __version__

__all__ = [
    "Combined",
    "Cycle",
    "DesignRefused",
    "Experiment",
    "MaskExport",
    "PathsieveError",
    "PhaseExport",
    "__version__",
    "check",
    "combine",
    "design",
    "export_phases",
    "masks",
    "parse_experiment",
    "read_cycle",
    "read_experiment",
]

PathLike = Union[str, "os.PathLike[str]"]


class DesignRefused(PathsieveError):
    """No phase cycle meets the request (for example the wanted signals cannot be separated
    from a rejected term, or the step limit is too low). ``str(e)`` is the designer's summary
    with the reason; ``e.report`` is the whole design report as a dict."""

    def __init__(self, message: str, report: Dict[str, Any]):
        super().__init__(message)
        self.report = report


def read_experiment(path: PathLike) -> Experiment:
    """Read an experiment file (TOML, docs/experiment-format.md)."""
    return Experiment.from_file(os.fspath(path))


def parse_experiment(text: str, name: str = "experiment.toml") -> Experiment:
    """Parse experiment TOML text; ``name`` stands for the file in messages and metadata."""
    return Experiment.from_toml(text, name)


class Cycle:
    """A phase cycle: one phase per field per step, one weight per output per step.

    Made by :func:`design`, :func:`read_cycle`, :meth:`from_text` or :meth:`from_arrays`.
    """

    __slots__ = ("_native",)

    def __init__(self, native: "_native.Cycle"):
        self._native = native

    @classmethod
    def from_file(cls, path: PathLike, unit: Optional[str] = None) -> "Cycle":
        """Read a cycle table (TOML cycle file or CSV/TSV, docs/cycle-format.md)."""
        return cls(_native.Cycle.from_file(os.fspath(path), unit))

    @classmethod
    def from_text(cls, text: str, name: str = "cycle.toml", unit: Optional[str] = None) -> "Cycle":
        """Parse cycle text: TOML, or CSV/TSV when ``name`` ends in .csv, .tsv or .txt."""
        return cls(_native.Cycle.from_text(text, name, unit))

    @classmethod
    def from_arrays(
        cls,
        experiment: Experiment,
        phases: Any,
        weights: Any = None,
        *,
        unit: str = "turns",
        fields: Optional[Sequence[str]] = None,
        outputs: Optional[Sequence[str]] = None,
    ) -> "Cycle":
        """A cycle from arrays: ``phases`` (steps x fields) in ``unit`` (turns, deg, rad or
        index:M), ``weights`` (steps x outputs, complex) or a dict {output: weights} or None
        (each wanted signal's weights derived from its signature). Without ``fields`` the
        columns are the experiment's cycled fields, or all its fields, in order (by count);
        ``outputs`` defaults to its wanted signals. Phases are read as ``pathsieve check``
        reads a bare NumPy array: whole ``index:M`` values are exact, other floats snap to
        exact fractions within the checker's snapping tolerance (each snap is reported);
        weights are taken as written in double precision."""
        ph = np.ascontiguousarray(np.asarray(phases, dtype=np.float64))
        if ph.ndim == 1 and fields is not None and len(fields) == 1:
            ph = ph.reshape(-1, 1)
        if ph.ndim != 2:
            raise PathsieveError(
                f"phases must be a 2-D array (steps x fields), got shape {ph.shape}"
            )
        w = None
        names = list(outputs) if outputs is not None else None
        if isinstance(weights, Mapping):
            names = list(weights.keys())
            cols = [np.asarray(weights[n], dtype=np.complex128).reshape(-1) for n in names]
            lengths = {len(c) for c in cols}
            if len(lengths) > 1:
                raise PathsieveError(
                    f"the weight columns have different lengths {sorted(lengths)}; give one weight per step for every output"
                )
            w = np.stack(cols, axis=1) if cols else None
        elif weights is not None:
            w = np.asarray(weights, dtype=np.complex128)
            if w.ndim == 1:
                w = w.reshape(-1, 1)
            if w.ndim != 2:
                raise PathsieveError(
                    f"weights must be a 2-D array (steps x outputs), got shape {w.shape}"
                )
        if w is not None:
            w = np.ascontiguousarray(w)
        return cls(
            _native.Cycle.from_arrays(
                experiment,
                ph,
                w,
                unit,
                list(fields) if fields is not None else None,
                names,
            )
        )

    @property
    def fields(self) -> List[str]:
        """Field names, one per phase column."""
        return self._native.fields

    @property
    def outputs(self) -> List[str]:
        """Output names, one per weight column."""
        return self._native.outputs

    @property
    def steps(self) -> int:
        """Number of steps N."""
        return self._native.steps

    def __len__(self) -> int:
        return self._native.steps

    @property
    def phases(self) -> np.ndarray:
        """Phases in turns, float64, shape (steps, fields)."""
        return self._native.phases

    @property
    def exact_phases(self) -> Optional[List[List[Fraction]]]:
        """Phases as exact fractions of a turn (``fractions.Fraction``), per step and field;
        None when some phase is known only approximately."""
        rows = self._native.exact_phases
        if rows is None:
            return None
        return [[Fraction(n, d) for (n, d) in row] for row in rows]

    @property
    def weights(self) -> np.ndarray:
        """Weights, complex128, shape (steps, outputs)."""
        return self._native.weights

    @property
    def weight_texts(self) -> List[List[str]]:
        """Each weight's exact text as cycle files write it, per step and output."""
        return self._native.weight_texts

    @property
    def is_exact(self) -> bool:
        """True when every phase and weight is exact."""
        return self._native.is_exact

    @property
    def grid(self) -> Optional[List[int]]:
        """Phase grid (steps per turn per field) when the cycle declares one."""
        return self._native.grid

    @property
    def report(self) -> Optional[Dict[str, Any]]:
        """The design report (cycles from :func:`design`), as ``pathsieve design --json``
        prints it."""
        text = self._native.report_json
        return None if text is None else json.loads(text)

    @property
    def summary(self) -> Optional[str]:
        """The design summary paragraph (cycles from :func:`design`)."""
        return self._native.summary

    def to_toml(self) -> str:
        """The cycle file (TOML) that ``pathsieve check`` reads."""
        return self._native.to_toml()

    def to_csv(self) -> str:
        """The cycle as a CSV table (docs/cycle-format.md)."""
        return self._native.to_csv()

    def __repr__(self) -> str:
        return repr(self._native)


def read_cycle(path: PathLike, unit: Optional[str] = None) -> Cycle:
    """Read a cycle table (TOML cycle file or CSV/TSV table)."""
    return Cycle.from_file(path, unit)


def design(
    experiment: Experiment,
    *,
    grid: Union[None, int, Sequence[int]] = None,
    max_steps: int = 4096,
    max_phases: Optional[int] = None,
    order: Optional[int] = None,
    from_pathways: bool = False,
    geometry: Optional[bool] = None,
    progress: Optional[Callable[[int, int], None]] = None,
) -> Cycle:
    """Design the smallest phase cycle keeping the experiment's ``[[signal]]``s and cancelling
    every other term through the order (as ``pathsieve design``).

    ``grid``: steps per turn, one for all fields or one per field (0 = any rational phase).
    ``progress(steps, lattices_tested)`` is called from the calling thread while the lattice
    search runs. Ctrl-C stops the search and raises ``KeyboardInterrupt``. Raises
    :class:`DesignRefused` (with ``.report``) when no design meets the request."""
    if isinstance(grid, (int, np.integer)):
        grid = [int(grid)]
    cycle, report, summary = _native.design(
        experiment,
        grid=list(grid) if grid is not None else None,
        max_steps=max_steps,
        max_phases=max_phases,
        order=order,
        from_pathways=from_pathways,
        geometry=geometry,
        progress=progress,
    )
    if cycle is None:
        raise DesignRefused(summary, json.loads(report))
    return Cycle(cycle)


def check(
    experiment: Experiment,
    phases: Any,
    weights: Any = None,
    *,
    unit: str = "turns",
    fields: Optional[Sequence[str]] = None,
    outputs: Optional[Sequence[str]] = None,
    order: Optional[int] = None,
    from_pathways: bool = False,
    geometry: Optional[bool] = None,
    max_listed: int = 1000,
) -> Dict[str, Any]:
    """Check a cycle exactly; returns the report as a dict (``report["clean"]``,
    ``report["outputs"][i]["leaks"]`` ...), as ``pathsieve check --json`` prints it.

    ``phases`` is a :class:`Cycle` or an array (steps x fields) in ``unit`` (turns, deg, rad,
    index:M); ``weights`` an array (steps x outputs, complex), a dict {output: weights} or None
    (derived from each wanted signal's signature). Without ``fields`` the columns are the
    experiment's cycled fields, or all its fields (by count). The same array gets the same
    verdict as ``pathsieve check`` gives it saved with ``np.save``: float phases snap to exact
    fractions within the checker's snapping tolerance, listed in ``report["snaps"]``; each
    output's ``class`` says how its verdict was reached."""
    if isinstance(phases, Cycle):
        if weights is not None or fields is not None or outputs is not None or unit != "turns":
            raise PathsieveError(
                "check(experiment, cycle): the cycle carries its own weights, fields and unit; pass arrays instead to give them"
            )
        cycle = phases
    else:
        cycle = Cycle.from_arrays(
            experiment, phases, weights, unit=unit, fields=fields, outputs=outputs
        )
    text = _native.check(
        experiment,
        cycle._native,
        order=order,
        from_pathways=from_pathways,
        geometry=geometry,
        max_listed=max_listed,
    )
    return json.loads(text)


@dataclass
class PhaseExport:
    """Phases and weights for acquisition software, rows in export order."""

    phases: np.ndarray
    """float64 (turns, deg or rad) or int64 grid indices, shape (rows, fields)."""
    weights: np.ndarray
    """complex128, shape (rows, outputs)."""
    source_steps: np.ndarray
    """int64: the cycle step (0-based) each row comes from."""
    fields: List[str]
    outputs: List[str]
    unit: str
    meta: Dict[str, Any] = field(repr=False)
    """The metadata ``pathsieve export`` writes."""


def export_phases(
    experiment: Experiment, cycle: Cycle, *, unit: str = "turns", order: str = "designed"
) -> PhaseExport:
    """The phase list of a cycle over the experiment's fields, in ``unit`` (turns, deg, rad,
    index or index:M), rows ``designed`` or ``drift`` ordered (as ``pathsieve export``)."""
    phases, weights, source, meta = _native.export_phases(
        experiment, cycle._native, unit=unit, order=order
    )
    m = json.loads(meta)
    return PhaseExport(
        phases=phases,
        weights=weights,
        source_steps=np.asarray(source, dtype=np.int64),
        fields=m["fields"],
        outputs=m["outputs"],
        unit=m["unit"],
        meta=m,
    )


@dataclass
class MaskExport:
    """Shaper masks of every step, rows in export order."""

    masks: np.ndarray
    """complex128, shape (rows, pixels)."""
    freqs_thz: np.ndarray
    """float64 pixel frequencies in THz."""
    source_steps: np.ndarray
    """int64: the cycle step (0-based) each row comes from."""
    meta: Dict[str, Any] = field(repr=False)


def masks(
    experiment: Experiment,
    cycle: Cycle,
    shaper: Optional[PathLike] = None,
    *,
    shaper_toml: Optional[str] = None,
    order: str = "designed",
) -> MaskExport:
    """The 4f-shaper mask of every step (docs/shaper-masks.md), from a shaper file (``shaper``)
    or TOML text (``shaper_toml``)."""
    m, f, source, meta = _native.masks(
        experiment,
        cycle._native,
        shaper=os.fspath(shaper) if shaper is not None else None,
        shaper_toml=shaper_toml,
        order=order,
    )
    return MaskExport(
        masks=m,
        freqs_thz=f,
        source_steps=np.asarray(source, dtype=np.int64),
        meta=json.loads(meta),
    )


@dataclass
class Combined:
    """Combined outputs: one array per output (float64 when real, else complex128), shaped as
    the data without the step axis."""

    outputs: Dict[str, np.ndarray]
    info: Dict[str, Any] = field(repr=False)
    """Order, scales, gains, kept and unpaired terms per output (docs/combine.md)."""

    def __getitem__(self, name: str) -> np.ndarray:
        return self.outputs[name]


def combine(
    experiment: Experiment,
    cycle: Cycle,
    data: Any,
    *,
    step_axis: int = 0,
    order: Optional[Sequence[int]] = None,
    export: Optional[PathLike] = None,
    as_written: bool = False,
) -> Combined:
    """Apply the cycle's weights to measured per-step data (as ``pathsieve combine``):
    ``C = s * sum_m w_m S_m`` with ``s = 1/F(t)`` of the kept terms unless ``as_written``.

    ``data`` holds one entry per step along ``step_axis``. Its step order is the cycle's,
    or ``order`` (data position p holds cycle step ``order[p]``), or that of the phase list
    the acquisition ran (``export``: a file ``pathsieve export`` wrote, every row checked
    against the cycle). Real data give complex outputs where the output keeps a term without
    its conjugate (``info["outputs"][i]["unpaired"]``)."""
    if order is not None and export is not None:
        raise PathsieveError("give the step order as order=[...] or export=PATH, not both")
    if export is not None:
        order, _ = _native.export_order(cycle._native, os.fspath(export))
    a = np.asarray(data)
    if a.ndim == 0:
        raise PathsieveError("data must have at least one axis (the steps)")
    axis = step_axis + a.ndim if step_axis < 0 else step_axis
    if axis < 0 or axis >= a.ndim:
        raise PathsieveError(
            f"step_axis {step_axis} is out of range for data of shape {a.shape}"
        )
    ordering = [int(k) for k in order] if order is not None else None
    if np.iscomplexobj(a):
        run = _native.combine_complex
        a = np.asarray(a, dtype=np.complex128)
    else:
        run = _native.combine_real
        a = np.asarray(a, dtype=np.float64)
    outs, info = run(
        experiment, cycle._native, a, step_axis=axis, order=ordering, as_written=as_written
    )
    return Combined(outputs=dict(outs), info=json.loads(info))
