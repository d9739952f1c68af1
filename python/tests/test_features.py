"""Features from Python against `lexiclade featurize` on the same file."""

import pytest

import lexiclade
from conftest import CONFIGS, DATA


def featurized(cli, *args):
    """featurize's output: per sentence, the (token, features) rows."""
    out = cli.run("featurize", *args).stdout
    sentences = []
    for block in out.split("\n\n"):
        if block.strip():
            rows = [line.split("\t") for line in block.split("\n")]
            sentences.append([(r[0], r[1:]) for r in rows])
    return sentences


def check(fx, sentences):
    assert len(sentences) > 100
    tokens = [[t for t, _ in s] for s in sentences]
    want = [[f for _, f in s] for s in sentences]
    for toks, feats in zip(tokens, want):
        assert fx.sentence(toks) == feats
    assert fx.sentences(tokens) == want


def test_features_with_learned_and_loaded_clusters(cli, wnut_clusters_dir):
    dev = DATA / "wnut17" / "dev.conll.gz"
    config = CONFIGS / "ner.toml"
    want = featurized(cli, dev, "--config", config, "--clusters",
                      wnut_clusters_dir)
    # A Clusters object and the directory itself give the same features.
    cl = lexiclade.Clusters.load(wnut_clusters_dir)
    fx = lexiclade.Features(config, clusters=cl)
    assert fx.uses_clusters
    check(fx, want)
    check(lexiclade.Features(str(config), clusters=str(wnut_clusters_dir)),
          want)
    # Cluster features are there: some token has a prefix feature.
    assert any(f.startswith("p4[0]=") for s in want for _, fs in s
               for f in fs)
    # The built-in defaults equal configs/ner.toml.
    check(lexiclade.Features(clusters=cl), want)


def test_features_of_clusters_learned_in_python(cli, tmp_path):
    dev = DATA / "wnut17" / "dev.conll.gz"
    cl = lexiclade.Clusters.learn(files=DATA / "wnut17" / "raw", classes=50,
                                  min_count=3, tokenize=True)
    cl.save(tmp_path / "c")
    want = featurized(cli, dev, "--config", CONFIGS / "pos.toml",
                      "--clusters", tmp_path / "c")
    check(lexiclade.Features(CONFIGS / "pos.toml", clusters=cl), want)


def test_features_without_clusters(cli):
    dev = DATA / "wnut17" / "dev.conll.gz"
    config = CONFIGS / "ner-no-clusters.toml"
    want = featurized(cli, dev, "--config", config)
    fx = lexiclade.Features(config)
    assert not fx.uses_clusters
    check(fx, want)
    assert "[clusters]" in fx.config


def test_a_config_that_needs_clusters_without_them(tmp_path):
    config = tmp_path / "c.toml"
    config.write_text("[clusters]\nenabled = true\n")
    with pytest.raises(ValueError, match="clusters.enabled = true"):
        lexiclade.Features(config)
