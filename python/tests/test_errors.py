"""Bad input raises ValueError, unreadable files OSError, each with the
one-line message the command prints for the same input."""

import pytest

import lexiclade
from conftest import CONFIGS, DATA


def test_a_missing_text_file(cli, tmp_path):
    missing = tmp_path / "missing.txt"
    want = cli.error("cluster", missing, "--out", tmp_path / "o")
    with pytest.raises(FileNotFoundError) as err:
        lexiclade.Clusters.learn(files=missing)
    assert str(err.value) == want
    assert isinstance(err.value, OSError)


def test_invalid_utf8_text(cli, tmp_path):
    bad = tmp_path / "bad.txt"
    bad.write_bytes(b"good words here\nbad \xff byte\n")
    want = cli.error("cluster", bad, "--out", tmp_path / "o")
    with pytest.raises(ValueError) as err:
        lexiclade.Clusters.learn(files=bad)
    assert str(err.value) == want
    assert want.endswith("bad.txt:2: invalid UTF-8")


def test_too_few_words(cli, tmp_path):
    one = tmp_path / "one.txt"
    one.write_text("same same same\n")
    want = cli.error("cluster", one, "--out", tmp_path / "o")
    with pytest.raises(ValueError) as err:
        lexiclade.Clusters.learn(files=one)
    assert str(err.value) == want
    with pytest.raises(ValueError, match="at least 2 distinct words"):
        lexiclade.Clusters.learn(["same same"])


def test_bad_options():
    with pytest.raises(ValueError, match="classes must be at least 2, got 1"):
        lexiclade.Clusters.learn(["a b"], classes=1)
    with pytest.raises(ValueError, match="min_count must be at least 1"):
        lexiclade.Clusters.learn(["a b"], min_count=0)
    with pytest.raises(ValueError, match="threads must be at least 1"):
        lexiclade.Clusters.learn(["a b"], threads=0)
    with pytest.raises(TypeError, match="either lines or files"):
        lexiclade.Clusters.learn()
    with pytest.raises(TypeError, match="item 1 is int"):
        lexiclade.Clusters.learn(["a b", 3])
    with pytest.raises(ValueError, match="epochs must be at least 1"):
        lexiclade.Tagger.train([(["a"], ["O"])], epochs=0)
    with pytest.raises(ValueError, match="token_column must not be 0"):
        lexiclade.Tagger.train([(["a"], ["O"])], token_column=0)


def test_a_broken_cluster_directory(cli, tmp_path, wnut_clusters_dir):
    broken = tmp_path / "broken"
    broken.mkdir()
    for name in ("summary.json", "merges.tsv"):
        (broken / name).write_bytes((wnut_clusters_dir / name).read_bytes())
    rows = (wnut_clusters_dir / "clusters.tsv").read_text().split("\n")
    rows[3] = "word-without-fields"
    (broken / "clusters.tsv").write_text("\n".join(rows))
    dev = DATA / "wnut17" / "dev.conll.gz"
    want = cli.error("featurize", dev, "--config", CONFIGS / "ner.toml",
                     "--clusters", broken)
    assert "clusters.tsv:4:" in want
    with pytest.raises(ValueError) as err:
        lexiclade.Clusters.load(broken)
    assert str(err.value) == want
    with pytest.raises(ValueError) as err:
        lexiclade.Features(CONFIGS / "ner.toml", clusters=broken)
    assert str(err.value) == want
    # A directory that is not there.
    with pytest.raises(FileNotFoundError) as err:
        lexiclade.Clusters.load(tmp_path / "nowhere")
    assert str(err.value) == cli.error(
        "featurize", dev, "--config", CONFIGS / "ner.toml", "--clusters",
        tmp_path / "nowhere")


def test_bad_configs(cli, tmp_path):
    dev = DATA / "wnut17" / "dev.conll.gz"
    unknown = tmp_path / "unknown.toml"
    unknown.write_text("[lexical]\nno_such_key = 1\n")
    out_of_range = tmp_path / "range.toml"
    out_of_range.write_text("[clusters]\nprefix_lengths = [0]\n")
    for config in (unknown, out_of_range):
        want = cli.error("featurize", dev, "--config", config)
        assert str(config) in want
        with pytest.raises(ValueError) as err:
            lexiclade.Features(config)
        assert str(err.value) == want
        train = cli.error("train", "--train", DATA / "wnut17" / "train.conll.gz",
                          "--config", config, "--model", tmp_path / "m.bin")
        with pytest.raises(ValueError) as err:
            lexiclade.Tagger.train(DATA / "wnut17" / "train.conll.gz",
                                   config=config)
        assert str(err.value) == train
    with pytest.raises(FileNotFoundError) as err:
        lexiclade.Features(tmp_path / "none.toml")
    assert str(err.value) == cli.error("featurize", dev, "--config",
                                       tmp_path / "none.toml")


def test_a_ragged_column_file(cli, tmp_path):
    ragged = tmp_path / "ragged.conll"
    ragged.write_text("Paris\tB-LOC\nis\tO\tX\n\nbig\tO\n")
    want = cli.error("train", "--train", ragged, "--model", tmp_path / "m")
    assert "ragged.conll:2:" in want
    with pytest.raises(ValueError) as err:
        lexiclade.Tagger.train(ragged)
    assert str(err.value) == want


def test_a_model_file_that_is_not_one(cli, tmp_path):
    fake = tmp_path / "fake.bin"
    fake.write_bytes(b"not a model at all")
    text = tmp_path / "t.conll"
    text.write_text("Paris\n")
    want = cli.error("tag", "--model", fake, text)
    with pytest.raises(ValueError) as err:
        lexiclade.Tagger.load(fake)
    assert str(err.value) == want
    with pytest.raises(FileNotFoundError) as err:
        lexiclade.Tagger.load(tmp_path / "none.bin")
    assert str(err.value) == cli.error("tag", "--model",
                                       tmp_path / "none.bin", text)
