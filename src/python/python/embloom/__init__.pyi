from os import PathLike
from typing import Any, Iterator, Literal, Optional, Sequence, Union

import numpy as np

__all__ = [
    "Dataset",
    "Grown",
    "InputError",
    "ParameterError",
    "Results",
    "Stream",
    "assess",
    "grow",
    "inspect",
    "read",
    "write",
]

_Path = Union[str, PathLike[str]]

class InputError(ValueError): ...
class ParameterError(ValueError): ...

class Dataset:
    x: np.ndarray
    y: np.ndarray
    ids: Optional[np.ndarray]
    groups: Optional[np.ndarray]
    folds: Optional[np.ndarray]
    notes: list[str]

class Grown:
    x: np.ndarray
    y: np.ndarray
    origin: np.ndarray
    parent: np.ndarray
    partner: np.ndarray
    weight: np.ndarray
    partner_label: Optional[np.ndarray]

class Results:
    data: dict[str, Any]
    summary: list[dict[str, Any]]
    per_class: list[dict[str, Any]]
    confusion_changes: list[dict[str, Any]]
    warnings: list[str]
    def to_json(self) -> str: ...
    def to_pandas(self) -> Any: ...
    def write_report(self, dir: _Path, *, force: bool = ...) -> None: ...

def read(
    path: _Path,
    *,
    embeddings_key: str = ...,
    labels_key: str = ...,
    label_column: str = ...,
    fold_key: str = ...,
    labels_file: Optional[_Path] = ...,
    drop_nonfinite: bool = ...,
) -> Dataset: ...
def write(
    path: _Path,
    x: Any,
    y: Any,
    *,
    ids: Optional[Sequence[Any]] = ...,
    groups: Optional[Sequence[Any]] = ...,
    folds: Optional[Sequence[int]] = ...,
    force: bool = ...,
) -> None: ...
def grow(
    x: Any,
    y: Any,
    *,
    method: str = ...,
    target: str = ...,
    classes: Optional[Sequence[str]] = ...,
    seed: int = ...,
    unit_norm: str = ...,
    path: Literal["chord", "sphere"] = ...,
    borrowed_classes: int = ...,
    tukey: Union[None, Literal["off"], float] = ...,
    **method_params: Any,
) -> Grown: ...
def assess(
    x: Any,
    y: Any,
    *,
    methods: Sequence[str] = ...,
    probes: Sequence[str] = ...,
    folds: int = ...,
    repeats: int = ...,
    groups: Optional[Sequence[Any]] = ...,
    fold: Optional[Sequence[int]] = ...,
    seed: int = ...,
    progress: bool = ...,
    target: str = ...,
    classes: Optional[Sequence[str]] = ...,
    unit_norm: str = ...,
    knn_k: Optional[int] = ...,
    knn_metric: Optional[str] = ...,
    knn_standardize: Optional[bool] = ...,
    linear_l2: Optional[float] = ...,
    linear_max_iter: Optional[int] = ...,
    interval: Optional[str] = ...,
    diagnostics: bool = ...,
    external: Optional[dict[str, tuple[Any, Any, Any]]] = ...,
    external_budget: Union[str, int] = ...,
    path: Literal["chord", "sphere"] = ...,
    borrowed_classes: int = ...,
    tukey: Union[None, Literal["off"], float] = ...,
    **method_params: Any,
) -> Results: ...
def inspect(
    x: Any,
    y: Any = ...,
    *,
    ids: Optional[Sequence[Any]] = ...,
    groups: Optional[Sequence[Any]] = ...,
    folds: Optional[Sequence[int]] = ...,
    name: str = ...,
) -> dict[str, Any]: ...

_ScheduleSpec = Union[None, str, tuple[str, float], tuple[str, Sequence[tuple[int, float]]]]

class Stream:
    classes: np.ndarray
    epochs: int
    notes: list[str]
    def __init__(
        self,
        x: Any,
        y: Any,
        *,
        method: str = ...,
        target: str = ...,
        classes: Optional[Sequence[str]] = ...,
        batch_size: int = ...,
        epochs: int = ...,
        synthetic_share: Optional[float] = ...,
        schedule: Union[_ScheduleSpec, dict[str, _ScheduleSpec]] = ...,
        unit_norm: str = ...,
        seed: int = ...,
        path: Literal["chord", "sphere"] = ...,
        borrowed_classes: int = ...,
        tukey: Union[None, Literal["off"], float] = ...,
        **method_params: Any,
    ) -> None: ...
    def __len__(self) -> int: ...
    def __iter__(self) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]: ...
    def batches_in(self, epoch: int) -> int: ...
    def epoch(self, epoch: int) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]: ...
