"""A progress bar over finished steps: tqdm's when tqdm is installed, else one stderr line."""

from __future__ import annotations

import sys
import time
from typing import Any


class _Line:
    """One redrawn line on stderr, for when tqdm is not installed."""

    def __init__(self, total: int, what: str) -> None:
        self.total, self.what, self.done = total, what, 0
        self.start = time.monotonic()
        self._draw()

    def _draw(self) -> None:
        width = 30
        filled = width * self.done // max(self.total, 1)
        sys.stderr.write(
            f"\r{'#' * filled}{'-' * (width - filled)} {self.done}/{self.total} {self.what} "
            f"[{time.monotonic() - self.start:.0f}s]\x1b[K"
        )
        sys.stderr.flush()

    def update(self, n: int = 1) -> None:
        self.done += n
        self._draw()

    def close(self) -> None:
        sys.stderr.write("\r\x1b[K")
        sys.stderr.flush()


class _Silent:
    def update(self, n: int = 1) -> None:
        pass

    def close(self) -> None:
        pass


def bar(total: int, what: str, enabled: bool) -> Any:
    """A bar with ``update(n)`` and ``close()``."""
    if not enabled:
        return _Silent()
    try:
        from tqdm.auto import tqdm
    except ImportError:
        return _Line(total, what)
    return tqdm(total=total, desc=what, unit="step", file=sys.stderr)
