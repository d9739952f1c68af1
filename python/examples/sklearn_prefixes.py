"""Cluster path prefixes as features of a scikit-learn classifier.

Learns word clusters from the shipped WNUT-17 raw posts with the Python
package, then trains a logistic regression that labels each token of the
WNUT-17 training file on its own (no sequence model), once with plain
lexical features and once with the cluster path prefixes of the token and
its neighbours added, and scores both on the WNUT-17 test file with
lexiclade.score (entity F1, CoNLL chunk rules) and token accuracy.

Run from the repository root with a Python that has lexiclade and
scikit-learn installed:

    python python/examples/sklearn_prefixes.py [--classes N] [--seed S]
"""

import argparse
import gzip
import pathlib
import time

from sklearn.feature_extraction import DictVectorizer
from sklearn.linear_model import LogisticRegression

import lexiclade

DATA = pathlib.Path(__file__).resolve().parents[2] / "data" / "wnut17"
PREFIXES = (2, 4, 6, 8, 12, 16)


def read(path):
    """(tokens, labels) of each sentence of a tab-separated column file."""
    sentences, tokens, labels = [], [], []
    with gzip.open(path, "rt", encoding="utf-8") as f:
        for line in f:
            cells = line.rstrip("\r\n").split("\t")
            if cells == [""]:
                if tokens:
                    sentences.append((tokens, labels))
                tokens, labels = [], []
            else:
                tokens.append(cells[0])
                labels.append(cells[-1])
    if tokens:
        sentences.append((tokens, labels))
    return sentences


def shape(word):
    out = []
    for ch in word:
        c = "X" if ch.isupper() else "x" if ch.islower() else \
            "d" if ch.isdigit() else ch
        if not out or out[-1] != c:
            out.append(c)
    return "".join(out)


def token_features(tokens, i, clusters):
    word = tokens[i]
    f = {
        "w=" + word.lower(): 1,
        "suf3=" + word[-3:].lower(): 1,
        "shape=" + shape(word): 1,
        "first": int(i == 0),
        "title": int(word.istitle()),
    }
    for off in (-1, 1):
        j = i + off
        f[f"w[{off}]=" + (tokens[j].lower() if 0 <= j < len(tokens)
                          else "<edge>")] = 1
    if clusters is not None:
        for off in (-1, 0, 1):
            j = i + off
            if not 0 <= j < len(tokens):
                continue
            path = clusters.path(tokens[j])
            if path is None:
                f[f"path[{off}]:none"] = 1
                continue
            for n in PREFIXES:
                f[f"p{n}[{off}]=" + path[:n]] = 1
    return f


def rows(sentences, clusters):
    return [token_features(toks, i, clusters)
            for toks, _ in sentences for i in range(len(toks))]


def run(train, test, clusters, seed):
    vec = DictVectorizer()
    x = vec.fit_transform(rows(train, clusters))
    y = [label for _, labels in train for label in labels]
    model = LogisticRegression(C=1.0, max_iter=300, random_state=seed)
    model.fit(x, y)
    flat = list(model.predict(vec.transform(rows(test, clusters))))
    pred, k = [], 0
    for toks, _ in test:
        pred.append(flat[k:k + len(toks)])
        k += len(toks)
    report = lexiclade.score([labels for _, labels in test], pred)
    return report, x.shape[1]


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--classes", type=int, default=200)
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args()

    started = time.monotonic()
    clusters = lexiclade.Clusters.learn(files=DATA / "raw",
                                        classes=args.classes, min_count=2,
                                        tokenize=True, lowercase=True)
    print(f"clusters: {clusters!r} in {time.monotonic() - started:.1f} s")
    train, test = read(DATA / "train.conll.gz"), read(DATA / "test.conll.gz")
    print(f"{'features':<24}{'columns':>9}{'entity F1':>11}"
          f"{'token acc.':>12}")
    for name, cl in (("lexical", None), ("lexical + prefixes", clusters)):
        report, width = run(train, test, cl, args.seed)
        print(f"{name:<24}{width:>9}{100 * report['overall']['f1']:>10.2f}%"
              f"{100 * report['token_accuracy']:>11.2f}%")


if __name__ == "__main__":
    main()
