"""score() against `lexiclade eval --json` and against seqeval 1.2.2 on the
WNUT-17 shared task's submissions.

Outside sources: the submissions and the test file are those of the WNUT-17
shared task (Derczynski et al. 2017, "Results of the WNUT2017 shared task on
novel and emerging entity recognition"); the entity F1 of each team is the
value its table publishes (the same figures tests/eval.rs checks). seqeval
1.2.2 (default mode, which reads chunks with the CoNLL-2000 evaluation's
rules) is the reference library for every precision, recall and F1.
"""

import math
import os
import warnings

import pytest

import lexiclade
from conftest import DATA, column_sentences

# Team: entity F1 (percent) published in the shared task's results table.
PUBLISHED = {
    "arcada": 39.98,
    "drexel_cci": 26.30,
    "flytxt": 38.35,
    "mic-cis": 37.06,
    "sjtu_adapt": 40.42,
    "spinningbytes": 40.78,
    "uh_ritual": 41.86,
}


@pytest.fixture(scope="module")
def test_rows():
    return column_sentences(DATA / "wnut17" / "test.conll.gz")


def aligned(test_rows, team):
    """Gold labels from test.conll and the team's predicted labels, row by
    row. The submissions keep the test file's sentences and rows; one
    (mic-cis) rewrote tokens, so rows are matched by position, not token."""
    pred_rows = column_sentences(DATA / "wnut17" / "submissions" /
                                 f"{team}.conll.gz")
    assert len(pred_rows) == len(test_rows) == 1287
    gold, pred = [], []
    for g, p in zip(test_rows, pred_rows):
        assert len(g) == len(p)
        gold.append([row[-1] for row in g])
        pred.append([row[-1] for row in p])
    return gold, pred


def write_eval_file(path, gold, pred):
    with open(path, "w", encoding="utf-8") as f:
        for g, p in zip(gold, pred):
            for a, b in zip(g, p):
                f.write(f"x\t{a}\t{b}\n")
            f.write("\n")


def seqeval_figures(gold, pred):
    if os.environ.get("CI"):
        # Under CI a missing reference fails instead of skipping.
        import seqeval.metrics as metrics
    else:
        metrics = pytest.importorskip("seqeval.metrics")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        report = metrics.classification_report(gold, pred, output_dict=True)
    return report, metrics.accuracy_score(gold, pred)


def close(a, b):
    return math.isclose(a, b, rel_tol=0, abs_tol=1e-12)


@pytest.mark.parametrize("team", sorted(PUBLISHED))
def test_score_equals_eval_json_and_seqeval(cli, test_rows, team, tmp_path):
    gold, pred = aligned(test_rows, team)
    got = lexiclade.score(gold, pred)

    write_eval_file(tmp_path / "p.conll", gold, pred)
    assert got == cli.json("eval", tmp_path / "p.conll", "--json")

    assert got["scheme"] == "iob2"
    assert got["gold_chunks"] == 1079
    assert abs(100 * got["overall"]["f1"] - PUBLISHED[team]) < 0.005 + 1e-9

    report, accuracy = seqeval_figures(gold, pred)
    assert close(got["token_accuracy"], accuracy)
    rows = dict(got["per_type"], overall=got["overall"])
    want = {k: v for k, v in report.items()
            if k not in ("macro avg", "weighted avg")}
    want["overall"] = want.pop("micro avg")
    # seqeval lists the types of the gold labels; a type only predicted
    # has no gold chunk, and is in our table with support 0.
    assert set(want) <= set(rows)
    for name, scores in rows.items():
        if name not in want:
            assert scores["support"] == 0 and scores["correct"] == 0
            continue
        for key in ("precision", "recall", "f1"):
            assert close(scores[key], want[name][f"{key}-score"
                                                 if key == "f1" else key]), \
                (team, name, key)
        assert scores["support"] == want[name]["support"]


def test_scheme_argument_matches_the_flag(cli, test_rows, tmp_path):
    gold, pred = aligned(test_rows, "arcada")
    write_eval_file(tmp_path / "p.conll", gold, pred)
    for scheme in ("iob1", "iobes", "none"):
        assert lexiclade.score(gold, pred, scheme=scheme) == cli.json(
            "eval", tmp_path / "p.conll", "--json", "--scheme", scheme)


def test_a_small_worked_example():
    # Two gold chunks (PER, LOC); the prediction finds PER and a wrong ORG.
    gold = [["B-PER", "I-PER", "O", "B-LOC"]]
    pred = [["B-PER", "I-PER", "O", "B-ORG"]]
    got = lexiclade.score(gold, pred)
    assert got["overall"]["precision"] == 0.5
    assert got["overall"]["recall"] == 0.5
    assert got["token_accuracy"] == 0.75
    assert got["per_type"]["PER"]["f1"] == 1.0
    with pytest.raises(ValueError, match="1 gold sentences but 2"):
        lexiclade.score(gold, pred * 2)
    with pytest.raises(ValueError, match="sentence 1"):
        lexiclade.score(gold, [["O"]])
    with pytest.raises(ValueError, match="unknown tag scheme"):
        lexiclade.score(gold, pred, scheme="bilou")
