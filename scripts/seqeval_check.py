#!/usr/bin/env python3
"""Outside check of `lexiclade eval`, computed with seqeval.

The Rust code scores predicted labels against gold labels itself; this script
scores the same file with an independent, widely used implementation so that
the tests can compare the two.

  seqeval_check.py FILE

FILE is a column file: one token per line, columns separated by spaces or
tabs, a blank line (or one of only spaces and tabs) between sentences, lines
whose first column is -DOCSTART- skipped (they end a sentence too), CRLF line
ends and a leading byte-order mark accepted. The second-to-last column is the
gold label, the last the predicted one. Prints one JSON object:

  {"sentences": N, "tokens": N, "token_accuracy": X,
   "overall": {"precision": P, "recall": R, "f1": F, "support": S},
   "per_type": {TYPE: {"precision": P, "recall": R, "f1": F, "support": S}}}

Source of the figures: seqeval 1.2.2 is the source of every reference figure
the tests compare `lexiclade eval` against. They come from
seqeval.metrics.classification_report(y_true, y_pred, output_dict=True) in its
default mode (mode=None, no scheme), which reads chunks with the start and end
rules of the CoNLL-2000 shared task's conlleval script; its per-type rows and
its "micro avg" row (as "overall") are copied out unchanged. Token accuracy is
seqeval.metrics.accuracy_score. A precision or recall whose denominator is zero
is 0 there (seqeval warns; the warning is silenced here).

Run it with the interpreter of the project's virtualenv, which
scripts/setup-reference.sh creates, e.g. .venv/bin/python
scripts/seqeval_check.py FILE. A file without token rows, or with a row of
fewer than two columns, is an error (exit status 1).
"""

import json
import re
import sys
import warnings

try:
    from seqeval.metrics import accuracy_score, classification_report
except ImportError as err:  # pragma: no cover - depends on the environment
    sys.exit(f"seqeval_check.py: seqeval is missing ({err}); run "
             "scripts/setup-reference.sh")


def read(path):
    """The (gold, predicted) label lists of each sentence of `path`."""
    gold, pred = [], []
    cur_gold, cur_pred = [], []

    def end_sentence():
        if cur_gold:
            gold.append(list(cur_gold))
            pred.append(list(cur_pred))
            cur_gold.clear()
            cur_pred.clear()

    with open(path, encoding="utf-8-sig", newline="") as f:
        for number, line in enumerate(f, 1):
            line = line.rstrip("\n")
            if line.endswith("\r"):
                line = line[:-1]
            cells = [c for c in re.split(r"[ \t]+", line) if c]
            if not cells or cells[0] == "-DOCSTART-":
                end_sentence()
                continue
            if len(cells) < 2:
                sys.exit(f"seqeval_check.py: {path}:{number}: fewer than "
                         "two columns")
            cur_gold.append(cells[-2])
            cur_pred.append(cells[-1])
    end_sentence()
    if not gold:
        sys.exit(f"seqeval_check.py: {path}: no token rows")
    return gold, pred


def scores(row):
    return {
        "precision": float(row["precision"]),
        "recall": float(row["recall"]),
        "f1": float(row["f1-score"]),
        "support": int(row["support"]),
    }


def main():
    if len(sys.argv) != 2:
        sys.exit("usage: seqeval_check.py FILE")
    gold, pred = read(sys.argv[1])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        report = classification_report(gold, pred, output_dict=True)
    averages = {"micro avg", "macro avg", "weighted avg"}
    out = {
        "sentences": len(gold),
        "tokens": sum(len(s) for s in gold),
        "token_accuracy": float(accuracy_score(gold, pred)),
        "overall": scores(report["micro avg"]),
        "per_type": {
            name: scores(row)
            for name, row in sorted(report.items())
            if name not in averages
        },
    }
    json.dump(out, sys.stdout, indent=2, sort_keys=True)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
