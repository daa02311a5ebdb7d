"""An output folder that appears whole or not at all.

Tasks write into a temporary folder beside the final one (so on the same filesystem) and
the driver renames it at the end; a run stopped halfway leaves only the temporary folder,
never a partial folder under the final name.
"""

from __future__ import annotations

import os
import shutil
import uuid
from pathlib import Path
from typing import Union

from .._embloom import InputError


class Staging:
    """The temporary folder of one run and its final name."""

    def __init__(self, final: Union[str, os.PathLike], force: bool) -> None:
        self.final = Path(final).resolve()
        if self.final.exists() and not force:
            raise InputError(
                f"{self.final} already exists\n"
                "  fix: choose another output folder, or pass force=True to replace it"
            )
        parent = self.final.parent
        if not parent.is_dir():
            raise InputError(
                f"{parent} is not a folder\n  fix: create the output's parent folder first"
            )
        self.tmp = parent / f".{self.final.name}.tmp-{uuid.uuid4().hex[:12]}"
        self.tmp.mkdir()

    def publish(self) -> Path:
        """Move the finished folder to its final name (replacing an old one under force)."""
        if self.final.exists():
            old = self.final.parent / f".{self.final.name}.old-{uuid.uuid4().hex[:12]}"
            os.replace(self.final, old)
            os.replace(self.tmp, self.final)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(self.tmp, self.final)
        return self.final

    def discard(self) -> None:
        shutil.rmtree(self.tmp, ignore_errors=True)


def write_table_whole(table, path: Path) -> None:
    """Write a Parquet file under ``path`` only once it is complete: a task killed while
    writing leaves a ``.part`` file its retry overwrites, never a short file."""
    import pyarrow.parquet as pq

    part = path.with_name(path.name + ".part")
    pq.write_table(table, part)
    os.replace(part, path)
