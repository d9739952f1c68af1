"""Long work releases the interpreter, and Ctrl-C stops it."""

import os
import signal
import subprocess
import sys
import textwrap
import threading
import time

import pytest

import lexiclade
from conftest import DATA

RAW = DATA / "wnut17" / "raw"
TRAIN = DATA / "wnut17" / "train.conll.gz"


def test_other_threads_run_while_clusters_are_learned():
    span = {}
    ticks = []

    def learn():
        span["start"] = time.monotonic()
        lexiclade.Clusters.learn(files=RAW, classes=100, threads=1)
        span["end"] = time.monotonic()

    worker = threading.Thread(target=learn)
    worker.start()
    while worker.is_alive():
        ticks.append(time.monotonic())
        time.sleep(0.01)
    worker.join()
    start, end = span["start"], span["end"]
    assert end - start > 0.5, "the workload is too small to tell"
    # Had learn held the interpreter, this thread could not have run in
    # the middle of it.
    inside = [t for t in ticks if start + 0.2 < t < end - 0.2]
    assert len(inside) >= 5, (len(inside), end - start)


SCRIPT = """
import sys, time
import lexiclade
print("started", flush=True)
begin = time.monotonic()
try:
    {work}
except KeyboardInterrupt:
    print("interrupted", flush=True)
    sys.exit(0)
print("finished", flush=True)
sys.exit(3)
"""

WORK = {
    # Each takes far longer than the second before the signal (600 classes
    # on the raw posts: about 40 s; 10,000 epochs).
    "learn": f"lexiclade.Clusters.learn(files={str(RAW)!r}, classes=600)",
    "train": f"lexiclade.Tagger.train({str(TRAIN)!r}, epochs=10000)",
    "count": "lexiclade.Clusters.learn(files=[" + repr(str(RAW)) + "] * 400)",
}


@pytest.mark.parametrize("work", sorted(WORK))
def test_ctrl_c_stops_long_work_with_keyboard_interrupt(work, tmp_path):
    script = tmp_path / "work.py"
    script.write_text(SCRIPT.format(work=WORK[work]))
    child = subprocess.Popen([sys.executable, str(script)],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True)
    try:
        assert child.stdout.readline().strip() == "started"
        time.sleep(1.0)
        child.send_signal(signal.SIGINT)
        out, err = child.communicate(timeout=60)
    finally:
        if child.poll() is None:
            child.kill()
    assert child.returncode == 0, (out, err)
    assert out.strip() == "interrupted", (out, err)
    assert err == ""
