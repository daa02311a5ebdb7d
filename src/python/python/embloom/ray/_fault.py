"""Fault injection for the tests: a worker that dies once, as a crash or a lost node would."""

from __future__ import annotations

import os

# When set to a path that does not exist yet, the first task to reach `crash_once` creates it
# and ends its worker process at once; Ray then runs the task again elsewhere.
CRASH_ONCE = "EMBLOOM_RAY_CRASH_ONCE"


def crash_once() -> None:
    marker = os.environ.get(CRASH_ONCE)
    if not marker:
        return
    try:
        fd = os.open(marker, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
    except FileExistsError:
        return
    os.close(fd)
    os._exit(1)
