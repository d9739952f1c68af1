#!/usr/bin/env bash
# Walkthrough: WNUT-17 as the shared task trained, with train --refit.
# Clusters of the task's raw text (data/wnut17/raw: --tokenize --lowercase
# --min-count 2, 1000 classes, about 3 minutes on one core), then for
# seeds 1, 2 and 3, with configs/ner.toml (clusters) and
# configs/ner-no-clusters.toml: train on train with dev choosing the epoch
# (up to 10), and the same with --refit (the chosen number of epochs
# again on train+dev); each model tags test and eval scores it. Writes
# OUT/results.tsv (one row per model: features, refit, seed, chosen epoch,
# test entity P/R/F1 %) and OUT/summary.md (means over the seeds).
# Usage: scripts/walkthrough-wnut-refit.sh [OUT]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
out=${1:-walkthroughs/wnut17/refit}
cargo build --release -q
bin=$PWD/target/release/lexiclade
work="$out/data"   # models, predictions and clusters; not committed
mkdir -p "$work"
wnut=data/wnut17

if [ ! -f "$work/clusters/clusters.tsv" ]; then
    "$bin" cluster "$wnut/raw" --tokenize --lowercase --min-count 2 \
        --classes 1000 --out "$work/clusters" -q --force
fi

printf 'features\trefit\tseed\tepoch\tprecision\trecall\tf1\n' > "$out/results.tsv"
for features in no-clusters clusters; do
    if [ "$features" = clusters ]; then
        extra=(--config configs/ner.toml --clusters "$work/clusters")
    else
        extra=(--config configs/ner-no-clusters.toml)
    fi
    for refit in no yes; do
        flag=()
        if [ "$refit" = yes ]; then flag=(--refit); fi
        for seed in 1 2 3; do
            name="$work/$features-refit-$refit-seed$seed"
            "$bin" train --train "$wnut/train.conll.gz" --dev "$wnut/dev.conll.gz" \
                --model "$name.bin" --seed "$seed" --epochs 10 "${extra[@]}" \
                "${flag[@]}" --force 2> "$name.log"
            epoch=$(tail -n 1 "$name.log" | sed -E 's/.*(best )?epoch ([0-9]+).*/\2/')
            "$bin" tag --model "$name.bin" "$wnut/test.conll.gz" --out "$name.pred" --force
            "$bin" eval "$name.pred" --json | python3 -c '
import json, sys
o = json.load(sys.stdin)["overall"]
print("\t".join("%.2f" % (100 * o[k]) for k in ("precision", "recall", "f1")))
' | sed "s/^/$features\t$refit\t$seed\t$epoch\t/" >> "$out/results.tsv"
        done
    done
done

python3 - "$out/results.tsv" > "$out/summary.md" <<'PY'
import csv, statistics, sys
rows = list(csv.DictReader(open(sys.argv[1]), delimiter="\t"))
print("| features | trained on | epochs chosen (seeds 1, 2, 3) | test F1 per seed | mean F1 |")
print("|---|---|---|---|---:|")
for features in ("no-clusters", "clusters"):
    for refit in ("no", "yes"):
        got = [r for r in rows if r["features"] == features and r["refit"] == refit]
        f1 = [float(r["f1"]) for r in got]
        on = "train+dev (--refit)" if refit == "yes" else "train (dev picks the epoch)"
        print(f"| {features} | {on} | {', '.join(r['epoch'] for r in got)} | "
              f"{', '.join('%.2f' % x for x in f1)} | {statistics.mean(f1):.2f} |")
PY
cat "$out/summary.md"
