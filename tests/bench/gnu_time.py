"""Reads the wall time and peak resident memory from a GNU `time -v` output file (the
benchmark scripts run each side under /usr/bin/time -v)."""

import re


def time_v(path):
    """(wall seconds, peak RSS in bytes) from the file at `path`."""
    text = path.read_text()
    wall = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (\S+)", text).group(1)
    secs = 0.0
    for part in wall.split(":"):
        secs = secs * 60 + float(part)
    rss = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", text).group(1))
    return secs, rss * 1024
