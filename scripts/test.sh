#!/usr/bin/env bash
# The project's test command: sets up the outside references, then runs the
# whole workspace's tests in the `checked` profile (optimised, with overflow
# checks; the heavy real-data checks run only in an optimised profile).
# Then, unless arguments were given, the Python package's checks
# (scripts/test-python.sh) against the binary the tests built. Extra
# arguments go to `cargo test` alone, e.g.
#   scripts/test.sh -p lexiclade-cluster -- --nocapture
set -euo pipefail

# Work from the repository root whatever the caller's cwd is.
cd "$(dirname "${BASH_SOURCE[0]}")/.."

if ! scripts/setup-reference.sh; then
    # Under CI a missing reference must fail the run: otherwise the outside
    # checks would be skipped and a green run would hide it. On a developer's
    # machine without network the rest of the suite is still worth running.
    if [ -n "${CI:-}" ]; then
        echo "test.sh: reference set-up failed (CI is set, so this is fatal)" >&2
        exit 1
    fi
    echo "test.sh: WARNING: reference set-up failed; the outside checks will be skipped" >&2
fi

cargo test --workspace --profile checked "$@"

if [ "$#" -eq 0 ]; then
    # cargo test built the checked binary for the integration tests.
    target_dir=${CARGO_TARGET_DIR:-target}
    case $target_dir in /*) ;; *) target_dir=$PWD/$target_dir ;; esac
    LEXICLADE_BIN="$target_dir/checked/lexiclade" scripts/test-python.sh
fi
