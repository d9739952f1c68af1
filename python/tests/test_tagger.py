"""The tagger from Python against `lexiclade train` and `lexiclade tag`: the
same model file for the same seed, the same predictions."""

import re

import pytest

import lexiclade
from conftest import CONFIGS, DATA, column_sentences

TRAIN = DATA / "wnut17" / "train.conll.gz"
DEV = DATA / "wnut17" / "dev.conll.gz"
TEST = DATA / "wnut17" / "test.conll.gz"


@pytest.fixture(scope="module")
def trained(cli, wnut_clusters_dir, tmp_path_factory):
    """A model the command trains, and one Python trains alike."""
    dir = tmp_path_factory.mktemp("models")
    run = cli.run("train", "--train", TRAIN, "--dev", DEV, "--config",
                  CONFIGS / "ner.toml", "--clusters", wnut_clusters_dir,
                  "--epochs", "3", "--seed", "7", "--model", dir / "cmd.bin")
    # The command's last line: "N labels (SCHEME), N features, best epoch N".
    summary = re.search(r"(\d+) labels \((\w+)\), (\d+) features, best "
                        r"epoch (\d+)", run.stderr)
    tagger = lexiclade.Tagger.train(
        TRAIN, dev=DEV, config=CONFIGS / "ner.toml",
        clusters=lexiclade.Clusters.load(wnut_clusters_dir), epochs=3, seed=7)
    tagger.save(dir / "py.bin")
    return dir, tagger, summary


def test_the_same_model_file_for_the_same_seed(trained):
    dir, tagger, summary = trained
    assert (dir / "py.bin").read_bytes() == (dir / "cmd.bin").read_bytes()
    labels, scheme, features, best = summary.groups()
    assert len(tagger.labels) == int(labels)
    assert tagger.scheme == scheme == "iob2"
    assert tagger.feature_count == int(features)
    assert tagger.best_epoch == int(best)
    assert tagger.uses_clusters
    assert "B-person" in tagger.labels
    # A model the command wrote, loaded and saved again, is unchanged.
    lexiclade.Tagger.load(dir / "cmd.bin").save(dir / "again.bin")
    assert (dir / "again.bin").read_bytes() == (dir / "cmd.bin").read_bytes()


def test_the_same_predictions_as_tag(cli, trained):
    dir, tagger, _ = trained
    out = cli.run("tag", "--model", dir / "cmd.bin", TEST).stdout
    want = [[row.split("\t")[-1] for row in block.split("\n")]
            for block in out.split("\n\n") if block.strip()]
    tokens = [[row[0] for row in s] for s in column_sentences(TEST)]
    assert len(tokens) == len(want) == 1287
    assert tagger.tag(tokens) == want
    assert lexiclade.Tagger.load(dir / "cmd.bin").tag(tokens) == want


def test_sentences_given_in_memory_train_the_same_model(
        trained, wnut_clusters_dir, tmp_path):
    dir, _, _ = trained
    pairs = [([r[0] for r in s], [r[-1] for r in s])
             for s in column_sentences(TRAIN)]
    dev = [([r[0] for r in s], [r[-1] for r in s])
           for s in column_sentences(DEV)]
    tagger = lexiclade.Tagger.train(
        pairs, dev=dev, config=CONFIGS / "ner.toml",
        clusters=wnut_clusters_dir, epochs=3, seed=7)
    tagger.save(tmp_path / "m.bin")
    assert (tmp_path / "m.bin").read_bytes() == (dir / "cmd.bin").read_bytes()


def test_no_clusters_and_another_seed(cli, tmp_path):
    config = CONFIGS / "ner-no-clusters.toml"
    cli.run("train", "--train", TRAIN, "--config", config, "--epochs", "2",
            "--seed", "3", "--no-prune", "--model", tmp_path / "cmd.bin",
            "-q")
    tagger = lexiclade.Tagger.train(TRAIN, config=config, epochs=2, seed=3,
                                    prune=False)
    assert not tagger.uses_clusters
    tagger.save(tmp_path / "py.bin")
    assert (tmp_path / "py.bin").read_bytes() == \
        (tmp_path / "cmd.bin").read_bytes()
    # save refuses to replace a file unless forced.
    with pytest.raises(FileExistsError, match="force=True"):
        tagger.save(tmp_path / "py.bin")
    tagger.save(tmp_path / "py.bin", force=True)


def test_a_tiny_tagger_learns_its_sentences():
    data = [(["Paris", "is", "big"], ["B-LOC", "O", "O"]),
            (["I", "saw", "Paris"], ["O", "O", "B-LOC"]),
            (["New", "York", "is", "big"], ["B-LOC", "I-LOC", "O", "O"])] * 5
    tagger = lexiclade.Tagger.train(data, epochs=5)
    assert tagger.tag([["Paris", "is", "big"], []]) == [
        ["B-LOC", "O", "O"], []]
    with pytest.raises(ValueError, match="dev: sentence 1 has no tokens"):
        lexiclade.Tagger.train(data, dev=[([], [])])
    with pytest.raises(ValueError, match="sentence 2: 3 tokens and 2 labels"):
        lexiclade.Tagger.train([(["a"], ["O"]), (["a", "b", "c"],
                                                 ["O", "O"])])
