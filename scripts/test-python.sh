#!/usr/bin/env bash
# The Python package's checks: builds the wheel of python/ with the
# virtualenv's maturin (as `pip install ./python` would, release profile),
# installs it into .venv, and runs the pytest checks in python/tests against
# the lexiclade binary. Extra arguments go to pytest, e.g.
#   scripts/test-python.sh -k score
# LEXICLADE_BIN names the binary to compare against; by default the
# `checked` build, built here if it is missing or stale.
set -euo pipefail

# Work from the repository root whatever the caller's cwd is.
cd "$(dirname "${BASH_SOURCE[0]}")/.."

PY=.venv/bin/python
if ! [ -x "$PY" ] || ! [ -x .venv/bin/maturin ]; then
    echo "test-python.sh: .venv with maturin is missing; run scripts/setup-reference.sh" >&2
    exit 1
fi

if [ -z "${LEXICLADE_BIN:-}" ]; then
    cargo build --profile checked --bin lexiclade --quiet
    LEXICLADE_BIN="$(cd "${CARGO_TARGET_DIR:-target}" && pwd)/checked/lexiclade"
fi
if ! [ -x "$LEXICLADE_BIN" ]; then
    echo "test-python.sh: LEXICLADE_BIN=$LEXICLADE_BIN is not an executable" >&2
    exit 1
fi
export LEXICLADE_BIN

dist="$(mktemp -d)"
trap 'rm -rf "$dist"' EXIT
start=$SECONDS
.venv/bin/maturin build --release --quiet --manifest-path python/Cargo.toml \
    --interpreter "$PY" --out "$dist"
wheels=("$dist"/*.whl)
wheel="${wheels[0]}"
echo "test-python.sh: built $(basename "$wheel"), $(stat -c %s "$wheel") bytes, in $((SECONDS - start)) s"
"$PY" -m pip install --quiet --disable-pip-version-check --force-reinstall \
    --no-deps "$wheel"

rc=0
"$PY" -m pytest python/tests -p no:cacheprovider "$@" || rc=$?
if [ "$rc" -eq 5 ]; then
    # pytest's "no tests were collected": a silent pass would hide it.
    echo "test-python.sh: pytest collected no tests" >&2
    exit 1
fi
exit "$rc"
