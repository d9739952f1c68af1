#!/usr/bin/env python3
"""Split WikiGold (data/wikigold/wikigold.conll.gz: token, space, IOB1
label; articles separated by -DOCSTART- lines) by article for the two-stage
walkthrough (scripts/walkthrough-twostage.sh). The rows before the first
-DOCSTART- are article 0, each -DOCSTART- starts the next one; article k
goes to test when k % 5 == 0, to dev when k % 5 == 1, else to train.
Writes OUT/wg-train.conll, wg-dev.conll, wg-test.conll (token TAB label, a
blank line after each sentence) and prints their article, sentence and
token counts.

Usage: python scripts/wikigold_split.py OUT
"""

import gzip
import sys

SOURCE = "data/wikigold/wikigold.conll.gz"


def main():
    out = sys.argv[1]
    files = {p: open(f"{out}/wg-{p}.conll", "w") for p in ("train", "dev", "test")}
    counts = {p: [0, 0, 0] for p in files}
    article, rows = 0, []
    seen = set()

    def part(k):
        return "test" if k % 5 == 0 else "dev" if k % 5 == 1 else "train"

    def flush():
        if rows:
            p = part(article)
            if article not in seen:
                seen.add(article)
                counts[p][0] += 1
            counts[p][1] += 1
            counts[p][2] += len(rows)
            files[p].write("".join(f"{t}\t{l}\n" for t, l in rows) + "\n")
            rows.clear()

    for line in gzip.open(SOURCE, "rt", encoding="utf-8"):
        cells = line.split()
        if not cells:
            flush()
        elif cells[0] == "-DOCSTART-":
            flush()
            article += 1
        else:
            rows.append((cells[0], cells[-1]))
    flush()
    for p, (a, s, t) in counts.items():
        print(f"wg-{p}.conll: {a} articles, {s} sentences, {t} tokens")


if __name__ == "__main__":
    main()
