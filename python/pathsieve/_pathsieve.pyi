# Type stubs of the native module built from python/src (PyO3). The public API is in
# __init__.py; these describe what it calls.
from typing import Any, Callable, List, Optional, Sequence, Tuple

import numpy as np
import numpy.typing as npt

__version__: str

class PathsieveError(ValueError): ...

class Experiment:
    @staticmethod
    def from_file(path: str) -> Experiment: ...
    @staticmethod
    def from_toml(text: str, name: str = "experiment.toml") -> Experiment: ...
    @property
    def title(self) -> str: ...
    @property
    def name(self) -> str: ...
    @property
    def fields(self) -> List[str]: ...
    @property
    def cycled_fields(self) -> List[str]: ...
    @property
    def signals(self) -> List[str]: ...
    @property
    def order(self) -> int: ...
    @property
    def sha256(self) -> str: ...
    @property
    def source(self) -> str: ...
    def to_json(self) -> str: ...

class Cycle:
    @staticmethod
    def from_file(path: str, unit: Optional[str] = None) -> Cycle: ...
    @staticmethod
    def from_text(text: str, name: str = "cycle.toml", unit: Optional[str] = None) -> Cycle: ...
    @staticmethod
    def from_arrays(
        experiment: Experiment,
        phases: npt.NDArray[np.float64],
        weights: Optional[npt.NDArray[np.complex128]] = None,
        unit: str = "turns",
        fields: Optional[List[str]] = None,
        outputs: Optional[List[str]] = None,
    ) -> Cycle: ...
    @property
    def fields(self) -> List[str]: ...
    @property
    def outputs(self) -> List[str]: ...
    @property
    def steps(self) -> int: ...
    def __len__(self) -> int: ...
    @property
    def phases(self) -> npt.NDArray[np.float64]: ...
    @property
    def exact_phases(self) -> Optional[List[List[Tuple[int, int]]]]: ...
    @property
    def is_exact(self) -> bool: ...
    @property
    def weights(self) -> npt.NDArray[np.complex128]: ...
    @property
    def weight_texts(self) -> List[List[str]]: ...
    @property
    def approximate(self) -> List[List[bool]]: ...
    @property
    def grid(self) -> Optional[List[int]]: ...
    @property
    def report_json(self) -> Optional[str]: ...
    @property
    def summary(self) -> Optional[str]: ...
    def to_toml(self) -> str: ...
    def to_csv(self) -> str: ...

def design(
    experiment: Experiment,
    *,
    grid: Optional[List[int]] = None,
    max_steps: int = 4096,
    max_phases: Optional[int] = None,
    order: Optional[int] = None,
    from_pathways: bool = False,
    geometry: Optional[bool] = None,
    progress: Optional[Callable[[int, int], Any]] = None,
) -> Tuple[Optional[Cycle], str, str]: ...
def check(
    experiment: Experiment,
    cycle: Cycle,
    *,
    order: Optional[int] = None,
    from_pathways: bool = False,
    geometry: Optional[bool] = None,
    max_listed: int = 1000,
) -> str: ...
def export_phases(
    experiment: Experiment, cycle: Cycle, *, unit: str = "turns", order: str = "designed"
) -> Tuple[npt.NDArray[Any], npt.NDArray[np.complex128], List[int], str]: ...
def masks(
    experiment: Experiment,
    cycle: Cycle,
    *,
    shaper: Optional[str] = None,
    shaper_toml: Optional[str] = None,
    order: str = "designed",
) -> Tuple[npt.NDArray[np.complex128], npt.NDArray[np.float64], List[int], str]: ...
def combine_real(
    experiment: Experiment,
    cycle: Cycle,
    data: npt.NDArray[np.float64],
    *,
    step_axis: int = 0,
    order: Optional[Sequence[int]] = None,
    as_written: bool = False,
) -> Tuple[List[Tuple[str, npt.NDArray[Any]]], str]: ...
def combine_complex(
    experiment: Experiment,
    cycle: Cycle,
    data: npt.NDArray[np.complex128],
    *,
    step_axis: int = 0,
    order: Optional[Sequence[int]] = None,
    as_written: bool = False,
) -> Tuple[List[Tuple[str, npt.NDArray[Any]]], str]: ...
def export_order(cycle: Cycle, export: str) -> Tuple[List[int], str]: ...
