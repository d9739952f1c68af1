#!/usr/bin/env bash
# Speed of the chunking configs, single thread, release build, on the Brown
# noun-phrase chunk files that scripts/walkthrough-chunk.sh makes (run it
# first; DATA is its data directory): training throughput (tokens per
# second per epoch, the median over epochs), the model's size, features and
# load time (tagging one sentence), and tagging throughput including the
# load, on the test split and on new text: the prose sample of data/ (or
# LEXICLADE_PROSE) split into tokens and given POS tags by the
# walkthrough's POS model. Each timing is the fastest of RUNS runs.
# Prints a Markdown table.
# Usage: scripts/bench-chunk.sh [DATA] [EPOCHS] [RUNS]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
d=${1:-walkthroughs/brown-chunk/data}
epochs=${2:-5}
runs=${3:-3}
prose=${LEXICLADE_PROSE:-$PWD/data/gutenberg-sample/books-sample.txt.gz}
cargo build --release -q
bin=$PWD/target/release/lexiclade
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# New text with predicted POS tags: token and tag per row.
"$bin" tag --model "$d/pos.bin" --plain --tokenize "$prose" --out "$work/prose.conll"
# The first sentence of the test split, to time the model's load.
awk '!NF { exit } { print }' "$d/chunk-test.conll" > "$work/one.conll"
source scripts/timing.sh
rate() { # tokens seconds
    awk -v t="$1" -v s="$2" 'BEGIN {printf "%.0f", t / s}'
}
test_tokens=$(grep -c . "$d/chunk-test.conll")
prose_tokens=$(grep -c . "$work/prose.conll")
echo "| config | train tokens/s per epoch | model MB | features | load s | tag tokens/s, test split ($test_tokens) | tag tokens/s, prose ($prose_tokens) |"
echo "|---|---:|---:|---:|---:|---:|---:|"
for config in chunk-no-clusters chunk; do
    "$bin" train --train "$d/chunk-train.conll" --dev "$d/chunk-dev.conll" \
        --model "$work/m.bin" --force --config "configs/$config.toml" \
        --clusters "$d/clusters" --epochs "$epochs" 2> "$work/train.log"
    train=$(grep -o '[0-9]* tokens/s' "$work/train.log" | awk '{print $1}' | sort -n |
        awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
    features=$(grep -o '[0-9]* features' "$work/train.log" | awk '{print $1}')
    mb=$(stat -c %s "$work/m.bin" | awk '{printf "%.1f", $1 / 1e6}')
    tag() { "$bin" tag --model "$work/m.bin" "$1" --out "$work/pred" --force; }
    load=$(fastest tag "$work/one.conll")
    on_test=$(fastest tag "$d/chunk-test.conll")
    on_prose=$(fastest tag "$work/prose.conll")
    printf '| %s | %s | %s | %s | %.3f | %s | %s |\n' "$config" "$train" "$mb" \
        "$features" "$load" "$(rate "$test_tokens" "$on_test")" "$(rate "$prose_tokens" "$on_prose")"
done
