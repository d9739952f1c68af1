"""Shared helpers of the Python package's tests: the repository, the
``lexiclade`` command to compare against, and its shipped open data.

The command is found through the environment variable ``LEXICLADE_BIN``
(``.ci/run`` sets it to the binary its test step built), else in the
repository's ``target/{checked,release,debug}``. Without one the comparisons
are skipped, and under CI (``CI`` set) they fail instead.
"""

import gzip
import json
import os
import pathlib
import subprocess

import pytest

REPO = pathlib.Path(__file__).resolve().parents[2]
DATA = REPO / "data"
CONFIGS = REPO / "configs"


def _find_binary():
    named = os.environ.get("LEXICLADE_BIN")
    if named:
        return pathlib.Path(named)
    for profile in ("checked", "release", "debug"):
        candidate = REPO / "target" / profile / "lexiclade"
        if candidate.exists():
            return candidate
    return None


class Command:
    """Runs the ``lexiclade`` binary."""

    def __init__(self, path):
        self.path = path

    def run(self, *args, cwd=None, ok=True):
        done = subprocess.run(
            [str(self.path), *map(str, args)],
            cwd=cwd,
            capture_output=True,
            text=True,
            timeout=600,
        )
        if ok and done.returncode != 0:
            raise AssertionError(
                f"lexiclade {' '.join(map(str, args))} exited "
                f"{done.returncode}: {done.stderr}"
            )
        return done

    def error(self, *args, cwd=None):
        """The one-line message of a run that must fail with exit code 2,
        without the ``lexiclade: `` the command puts before it."""
        done = self.run(*args, cwd=cwd, ok=False)
        assert done.returncode == 2, (done.returncode, done.stderr)
        line = done.stderr.strip()
        assert "\n" not in line, line
        assert line.startswith("lexiclade: "), line
        return line[len("lexiclade: "):]

    def json(self, *args):
        return json.loads(self.run(*args).stdout)


@pytest.fixture(scope="session")
def cli():
    path = _find_binary()
    if path is None or not path.exists():
        message = (
            "the lexiclade binary was not found: set LEXICLADE_BIN or run "
            "`cargo build --release`"
        )
        if os.environ.get("CI"):
            pytest.fail(message)
        pytest.skip(message)
    return Command(path)


def read_gz_lines(path):
    with gzip.open(path, "rt", encoding="utf-8") as f:
        return f.read().split("\n")


def column_sentences(path):
    """The rows (lists of cells) of each sentence of a column file, read
    plainly: cells split at tabs and spaces, blank lines between
    sentences. The shipped WNUT-17 files have no document markers."""
    sentences, current = [], []
    opener = gzip.open if str(path).endswith(".gz") else open
    with opener(path, "rt", encoding="utf-8") as f:
        for line in f:
            cells = line.rstrip("\r\n").split()
            if cells:
                current.append(cells)
            elif current:
                sentences.append(current)
                current = []
    if current:
        sentences.append(current)
    return sentences


@pytest.fixture(scope="session")
def wnut_clusters_dir(cli, tmp_path_factory):
    """Clusters the command learns from the shipped WNUT-17 raw posts."""
    out = tmp_path_factory.mktemp("wnut") / "clusters"
    cli.run("cluster", DATA / "wnut17" / "raw", "--out", out, "--classes",
            "100", "--min-count", "2", "--tokenize", "--lowercase", "-q")
    return out
