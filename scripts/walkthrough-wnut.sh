#!/usr/bin/env bash
# Walkthrough 1: named entities in social-media text (WNUT-17, the shared
# data beside the checkout). Clusters are learned from the task's raw text
# (which holds no dev or test sentence), then the prefix ablation and the
# learning curve run on the official train/dev/test split. Results go to
# walkthroughs/wnut17/ (prefixes/ and learning-curve/), a few minutes on 2
# cores. Usage: scripts/walkthrough-wnut.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/wnut17}
cargo build --release -q
bin=target/release/lexiclade
mkdir -p "$out"
time "$bin" ablate --config configs/ablate-prefixes.toml --out "$out/prefixes" --force
time "$bin" ablate --config configs/learning-curve.toml --out "$out/learning-curve" --force
