#!/usr/bin/env python3
"""Outside check of lexiclade's cluster numbers, computed with scikit-learn.

The Rust code computes its own figures; this script recomputes two of them
with an independent, widely used implementation so that the tests can compare
the two. Each sub-command prints one JSON object on stdout.

  ami --clusters DIR --text FILE [FILE...]
      Average mutual information, in bits, between the classes of adjacent
      words. Reads DIR/clusters.tsv (header "word<TAB>path<TAB>class<TAB>count")
      and, if present, DIR/summary.json (its "lowercase" flag). Every line of
      the text files is one sentence, tokens separated by spaces or tabs. For
      each pair of adjacent tokens on a line that are both in clusters.tsv the
      pair (class of left token, class of right token) is recorded; the result
      is the mutual information of that joint distribution, with each side's
      own marginal. Prints {"pairs": N, "mi_bits": X}.

  vmeasure --truth FILE --clusters DIR
      Agreement of the learned classes with a planted truth. FILE is TSV with
      header "word<TAB>class". Over the words present in both files (exact,
      case-sensitive match) prints
      {"words": N, "v_measure": V, "homogeneity": H, "completeness": C}.

Source of the figures: scikit-learn's sklearn.metrics.mutual_info_score,
which returns natural-log units (nats), so it is divided by ln 2 here to give
bits; and sklearn.metrics.v_measure_score, homogeneity_score and
completeness_score (Rosenberg and Hirschberg 2007, V-measure).

Run it with the interpreter of the project's virtualenv, which
scripts/setup-reference.sh creates, e.g. .venv/bin/python scripts/sklearn_check.py.
An empty comparison (no pairs, no shared words) is an error (exit status 1),
since a silent zero could let a check pass without checking anything.
"""

import argparse
import json
import math
import re
import sys
from pathlib import Path

try:
    import numpy as np
    from sklearn.metrics import (
        completeness_score,
        homogeneity_score,
        mutual_info_score,
        v_measure_score,
    )
except ImportError as err:  # pragma: no cover - depends on the environment
    sys.exit(
        f"sklearn_check: {err}; run scripts/setup-reference.sh and use its "
        "virtualenv's python (.venv/bin/python)"
    )

CLUSTERS_HEADER = ["word", "path", "class", "count"]
TRUTH_HEADER = ["word", "class"]

# Only spaces and tabs separate tokens (not every Unicode space that
# str.split() would take), to match how the Rust side reads text.
TOKEN_SEP = re.compile(r"[ \t]+")


class CheckError(Exception):
    """A problem with the input, reported as one line on stderr."""


def read_lines(path):
    """Yield the lines of a UTF-8 file, without line ends.

    newline="\\n" splits at "\\n" only: Python's default would also break
    lines at a lone "\\r". One trailing "\\r" is dropped (CRLF files), and
    "utf-8-sig" drops a leading byte-order mark.
    """
    try:
        with open(path, encoding="utf-8-sig", newline="\n") as fh:
            for line in fh:
                if line.endswith("\n"):
                    line = line[:-1]
                if line.endswith("\r"):
                    line = line[:-1]
                yield line
    except UnicodeDecodeError as err:
        raise CheckError(f"{path}: not valid UTF-8 ({err})") from err
    except OSError as err:
        raise CheckError(f"{path}: {err.strerror}") from err


def read_tsv(path, header):
    """Return the rows of a TSV file whose first line must equal `header`."""
    lines = read_lines(path)
    first = next(lines, None)
    if first is None or first.split("\t") != header:
        raise CheckError(
            f"{path}: first line must be {'<TAB>'.join(header)!r}, found {first!r}"
        )
    rows = []
    for number, line in enumerate(lines, start=2):
        if line == "":
            continue
        fields = line.split("\t")
        if len(fields) != len(header):
            raise CheckError(
                f"{path}:{number}: expected {len(header)} tab-separated fields, "
                f"found {len(fields)}"
            )
        rows.append(fields)
    return rows


def word_to_class(path, rows, class_column):
    """Map word -> class label; a word listed twice is an error."""
    mapping = {}
    for fields in rows:
        word = fields[0]
        if word in mapping:
            raise CheckError(f"{path}: word {word!r} is listed more than once")
        mapping[word] = fields[class_column]
    return mapping


def load_clusters(directory):
    path = Path(directory) / "clusters.tsv"
    rows = read_tsv(path, CLUSTERS_HEADER)
    return word_to_class(path, rows, CLUSTERS_HEADER.index("class"))


def load_lowercase_flag(directory):
    path = Path(directory) / "summary.json"
    if not path.exists():
        return False
    try:
        with open(path, encoding="utf-8-sig") as fh:
            summary = json.load(fh)
    except (OSError, ValueError) as err:
        raise CheckError(f"{path}: {err}") from err
    return summary.get("lowercase") is True


def cmd_ami(args):
    clusters = load_clusters(args.clusters)
    lowercase = load_lowercase_flag(args.clusters)

    # Class labels become small ints so numpy and sklearn work on int arrays.
    class_ids = {}
    word_ids = {}
    for word, label in clusters.items():
        word_ids[word] = class_ids.setdefault(label, len(class_ids))

    # One flat int array for all text: a token's class id, or -1 for a token
    # not in clusters.tsv, and a -1 after every line so that no pair spans
    # two lines. Adjacent pairs are then just (ids[:-1], ids[1:]) with both
    # sides >= 0: no per-pair Python loop.
    ids = []
    get = word_ids.get
    for text in args.text:
        for line in read_lines(text):
            if lowercase:
                line = line.lower()  # same as lowering each token
            ids.extend([get(tok, -1) for tok in TOKEN_SEP.split(line) if tok])
            ids.append(-1)
    ids = np.asarray(ids, dtype=np.int64)
    left, right = ids[:-1], ids[1:]
    keep = (left >= 0) & (right >= 0)
    left, right = left[keep], right[keep]

    pairs = int(left.size)
    if pairs == 0:
        raise CheckError("no pair of adjacent tokens has both tokens in clusters.tsv")
    mi_nats = mutual_info_score(left, right)
    return {"pairs": pairs, "mi_bits": float(mi_nats) / math.log(2)}


def cmd_vmeasure(args):
    truth_path = Path(args.truth)
    truth = word_to_class(truth_path, read_tsv(truth_path, TRUTH_HEADER), 1)
    predicted = load_clusters(args.clusters)

    words = sorted(set(truth) & set(predicted))
    if not words:
        raise CheckError(f"no word is in both {truth_path} and clusters.tsv")
    labels_true = [truth[w] for w in words]
    labels_pred = [predicted[w] for w in words]
    return {
        "words": len(words),
        "v_measure": float(v_measure_score(labels_true, labels_pred)),
        "homogeneity": float(homogeneity_score(labels_true, labels_pred)),
        "completeness": float(completeness_score(labels_true, labels_pred)),
    }


def build_parser():
    parser = argparse.ArgumentParser(
        prog="sklearn_check.py",
        description=__doc__,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    ami = sub.add_parser(
        "ami", help="mutual information (bits) of adjacent words' classes"
    )
    ami.add_argument(
        "--clusters", required=True, metavar="DIR",
        help="folder holding clusters.tsv (and optionally summary.json)",
    )
    ami.add_argument(
        "--text", required=True, nargs="+", metavar="FILE",
        help="UTF-8 text, one sentence per line",
    )
    ami.set_defaults(run=cmd_ami)

    vm = sub.add_parser(
        "vmeasure", help="V-measure of the classes against a planted truth"
    )
    vm.add_argument(
        "--truth", required=True, metavar="FILE",
        help='TSV with header "word<TAB>class"',
    )
    vm.add_argument(
        "--clusters", required=True, metavar="DIR", help="folder holding clusters.tsv"
    )
    vm.set_defaults(run=cmd_vmeasure)
    return parser


def main(argv=None):
    args = build_parser().parse_args(argv)
    try:
        result = args.run(args)
    except CheckError as err:
        print(f"sklearn_check: {err}", file=sys.stderr)
        return 1
    print(json.dumps(result, allow_nan=False))
    return 0


if __name__ == "__main__":
    sys.exit(main())
