#!/usr/bin/env bash
# Speed of the chunking configs: training throughput (tokens per second per
# epoch, the median over epochs) and tagging throughput (including loading
# the model), single thread, release build, on the Brown noun-phrase chunk
# files that scripts/walkthrough-chunk.sh makes (run it first; DATA is its
# data directory). Prints a Markdown table.
# Usage: scripts/bench-chunk.sh [DATA] [EPOCHS]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
d=${1:-walkthroughs/brown-chunk/data}
epochs=${2:-5}
cargo build --release -q
bin=$PWD/target/release/lexiclade
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
tokens=$(grep -c . "$d/chunk-test.conll")
echo "| config | train tokens/s per epoch | tag tokens/s |"
echo "|---|---:|---:|"
for config in chunk-no-clusters chunk; do
    "$bin" train --train "$d/chunk-train.conll" --dev "$d/chunk-dev.conll" \
        --model "$work/m.bin" --force --config "configs/$config.toml" \
        --clusters "$d/clusters" --epochs "$epochs" 2> "$work/train.log"
    rate=$(grep -o '[0-9]* tokens/s' "$work/train.log" | awk '{print $1}' | sort -n |
        awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
    start=$(date +%s.%N)
    "$bin" tag --model "$work/m.bin" "$d/chunk-test.conll" --out "$work/pred" --force
    end=$(date +%s.%N)
    tag=$(awk -v t="$tokens" -v a="$start" -v b="$end" 'BEGIN {printf "%.0f", t / (b - a)}')
    echo "| $config | $rate | $tag |"
done
