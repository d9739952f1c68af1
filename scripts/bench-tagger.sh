#!/usr/bin/env bash
# Tagger speed: training throughput (tokens per second per epoch, the
# median over epochs) and tagging throughput (tokens per second including
# loading the model), single thread, with and without cluster features,
# on WNUT-17 train.conll and on the Brown POS split. Prints a Markdown
# table. Needs scripts/setup-reference.sh run once (for the Brown corpus);
# the WNUT-17 files and the prose sample are shipped in data/ (set
# LEXICLADE_PROSE to more raw prose for the Brown clusters). Each tagging
# time is the fastest of RUNS runs.
# Usage: scripts/bench-tagger.sh [RUNS]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
runs=${1:-3}
cargo build --release -q
bin=$PWD/target/release/lexiclade
prose=${LEXICLADE_PROSE:-$PWD/data/gutenberg-sample/books-sample.txt.gz}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# The shipped WNUT-17 files, decompressed (the token count below reads them).
data=$work/data
mkdir -p "$data/wnut17"
for part in train dev; do
    gzip -dc "data/wnut17/$part.conll.gz" > "$data/wnut17/$part.conll"
done

# The Brown POS split as column files (file number ending in 0: test,
# 5: dev, else train; tags cut at the first '-', '--...' kept as '--').
.venv/bin/python scripts/brown_split.py "$work" pos-

"$bin" cluster data/wnut17/raw --tokenize --classes 256 --min-count 2 --out "$work/wnut-clusters" -q
"$bin" cluster "$work/pos-words.txt" "$prose" --tokenize --classes 256 \
    --min-count 3 --out "$work/pos-clusters" -q

echo "| task | features | decoder | train tokens/s per epoch | tag tokens/s | tag tokens/s, model load excluded |"
echo "|---|---|---|---:|---:|---:|"
source scripts/timing.sh
run() { # name train dev test config clusters epochs
    local name=$1 train=$2 dev=$3 test=$4 config=$5 clusters=$6 epochs=$7
    local log=$work/train.log
    "$bin" train --train "$train" --dev "$dev" --model "$work/m.bin" --force --config "configs/$config.toml" \
        --clusters "$clusters" --epochs "$epochs" 2> "$log"
    local train_rate
    train_rate=$(grep -o '[0-9]* tokens/s' "$log" | awk '{print $1}' | sort -n |
        awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
    local tokens
    tokens=$(grep -c . "$test")
    local tag_seconds load_seconds
    tag_seconds=$(fastest "$bin" tag --model "$work/m.bin" "$test" --out "$work/pred.conll" --force)
    # The same with a one-sentence file: the cost of loading the model.
    printf 'the\tO\n\n' > "$work/one.conll"
    load_seconds=$(fastest "$bin" tag --model "$work/m.bin" "$work/one.conll" --out "$work/one.pred" --force)
    local tag_rate net_rate
    tag_rate=$(awk -v t="$tokens" -v s="$tag_seconds" 'BEGIN {printf "%.0f", t / s}')
    net_rate=$(awk -v t="$tokens" -v s="$tag_seconds" -v l="$load_seconds" \
        'BEGIN {printf "%.0f", t / (s - l)}')
    echo "| $name | $config | Viterbi, tag dictionary | $train_rate | $tag_rate | $net_rate |"
}
run "WNUT-17 (13 labels)" "$data/wnut17/train.conll" "$data/wnut17/dev.conll" \
    "$data/wnut17/train.conll" ner-no-clusters "$work/wnut-clusters" 10
run "WNUT-17 (13 labels)" "$data/wnut17/train.conll" "$data/wnut17/dev.conll" \
    "$data/wnut17/train.conll" ner "$work/wnut-clusters" 10
run "Brown POS (175 tags)" "$work/pos-train.conll" "$work/pos-dev.conll" \
    "$work/pos-test.conll" pos-no-clusters "$work/pos-clusters" 5
run "Brown POS (175 tags)" "$work/pos-train.conll" "$work/pos-dev.conll" \
    "$work/pos-test.conll" pos "$work/pos-clusters" 5
