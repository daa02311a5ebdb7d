"""Ctrl-C during a long assess raises KeyboardInterrupt promptly and writes nothing."""

import signal
import subprocess
import sys
import time

CHILD = r"""
import sys, numpy as np, embloom
rng = np.random.default_rng(0)
x = rng.normal(size=(4000, 64)).astype(np.float32)
y = rng.integers(0, 8, size=4000)
print("ready", flush=True)
try:
    res = embloom.assess(x, y, methods=["interpolate", "extrapolate", "principal-noise"],
                         folds=5, repeats=20, progress=False)
    res.write_report(sys.argv[1])
    print("finished", flush=True)
except KeyboardInterrupt:
    print("interrupted", flush=True)
    sys.exit(130)
"""


def test_sigint_stops_assess(tmp_path):
    report = tmp_path / "report"
    child = subprocess.Popen([sys.executable, "-c", CHILD, str(report)],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    assert child.stdout.readline().strip() == "ready"
    time.sleep(2.0)
    assert child.poll() is None, "the assessment ended before it could be interrupted"
    sent = time.monotonic()
    child.send_signal(signal.SIGINT)
    out, err = child.communicate(timeout=30)
    waited = time.monotonic() - sent
    assert child.returncode == 130, err
    assert out.strip() == "interrupted"
    # Within a second of the signal (the module polls for signals every 100 ms).
    assert waited < 1.0, waited
    assert not report.exists()
