"""embloom on a Ray cluster: grow and assess sets larger than one machine, with the
single-machine results to the bit.

    >>> import ray, embloom.ray
    >>> ds = ray.data.read_parquet("shards/")
    >>> embloom.ray.grow_dataset(ds, label_column="label", embedding_column="embedding",
    ...                          id_column="id", output="grown/", method="interpolate")
    >>> results = embloom.ray.assess_dataset(ds, label_column="label",
    ...                                      embedding_column="embedding", id_column="id")

Needs Ray, an optional extra: ``pip install "embloom[ray]"``. ``import embloom`` never
imports Ray; this subpackage does.
"""

from __future__ import annotations

try:
    import ray as _ray  # noqa: F401
    import pyarrow as _pyarrow  # noqa: F401
except ImportError as err:  # pragma: no cover - the message is the point
    raise ImportError(
        f"embloom.ray needs Ray with Ray Data and pyarrow ({err}); "
        'install them with: pip install "embloom[ray]"'
    ) from err

from ._assess import assess_dataset
from ._grow import NEEDS_OTHER_CLASSES, SINGLE_CLASS, grow_dataset

__all__ = ["NEEDS_OTHER_CLASSES", "SINGLE_CLASS", "assess_dataset", "grow_dataset"]
