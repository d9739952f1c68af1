"""Clusters from Python against the command: the same cluster files for the
same text and options, and every query against the files read plainly."""

import json

import pytest

import lexiclade
from conftest import DATA, read_gz_lines

FILES = ["clusters.tsv", "merges.tsv", "summary.json"]


def same_files(a, b):
    for name in FILES:
        assert (a / name).read_bytes() == (b / name).read_bytes(), name


@pytest.fixture(scope="module")
def prose(tmp_path_factory):
    """10,000 lines of the shipped prose sample, as a file and a list."""
    lines = read_gz_lines(DATA / "gutenberg-sample" / "books-sample.txt.gz")
    lines = lines[:10000]
    path = tmp_path_factory.mktemp("prose") / "prose.txt"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path, lines


def test_learn_from_lines_and_files_writes_the_commands_files(
        cli, prose, tmp_path):
    path, lines = prose
    cli.run("cluster", path, "--out", tmp_path / "cmd", "--classes", "60",
            "-q")
    from_lines = lexiclade.Clusters.learn(lines, classes=60)
    from_lines.save(tmp_path / "lines")
    same_files(tmp_path / "cmd", tmp_path / "lines")
    # One string holding every line, and the file itself, count the same.
    lexiclade.Clusters.learn("\n".join(lines), classes=60).save(
        tmp_path / "text")
    same_files(tmp_path / "cmd", tmp_path / "text")
    lexiclade.Clusters.learn(files=path, classes=60).save(tmp_path / "file")
    same_files(tmp_path / "cmd", tmp_path / "file")
    # CRLF line ends and a leading byte-order mark are dropped as the file
    # reader drops them.
    crlf = ["\ufeff" + lines[0] + "\r"]
    crlf += [line + "\r" for line in lines[1:]]
    lexiclade.Clusters.learn(crlf, classes=60).save(tmp_path / "crlf")
    same_files(tmp_path / "cmd", tmp_path / "crlf")


@pytest.mark.parametrize("threads", [1, 2])
def test_learn_options_match_the_commands_flags(cli, tmp_path, threads):
    raw = DATA / "wnut17" / "raw"
    cli.run("cluster", raw, "--out", tmp_path / "cmd", "--classes", "80",
            "--min-count", "3", "--tokenize", "--lowercase", "--threads", "2",
            "-q")
    cl = lexiclade.Clusters.learn(files=[raw], classes=80, min_count=3,
                                  tokenize=True, lowercase=True,
                                  threads=threads)
    cl.save(tmp_path / "py")
    same_files(tmp_path / "cmd", tmp_path / "py")


def test_exchange_passes_match_the_command(cli, prose, tmp_path):
    path, lines = prose
    cli.run("cluster", path, "--out", tmp_path / "cmd", "--classes", "40",
            "--exchange-passes", "2", "--exchange-min-gain", "0.001", "-q")
    cl = lexiclade.Clusters.learn(lines, classes=40, exchange_passes=2,
                                  exchange_min_gain=0.001)
    assert cl.summary["exchange"]["passes_run"] >= 1
    cl.save(tmp_path / "py")
    same_files(tmp_path / "cmd", tmp_path / "py")
    with pytest.raises(ValueError, match="exchange_min_gain must be"):
        lexiclade.Clusters.learn(lines, exchange_passes=1,
                                 exchange_min_gain=-1.0)


def read_table(dir):
    """clusters.tsv as (word, path, class, count) rows, parsed plainly."""
    lines = (dir / "clusters.tsv").read_text(encoding="utf-8").splitlines()
    assert lines[0] == "word\tpath\tclass\tcount"
    rows = []
    for line in lines[1:]:
        word, path, cls, count = line.split("\t")
        rows.append((word, path, int(cls), int(count)))
    return rows


def test_load_save_and_queries_agree_with_the_files(
        wnut_clusters_dir, tmp_path):
    cl = lexiclade.Clusters.load(wnut_clusters_dir)
    cl.save(tmp_path / "copy")
    same_files(wnut_clusters_dir, tmp_path / "copy")

    rows = read_table(wnut_clusters_dir)
    summary = json.loads((wnut_clusters_dir / "summary.json").read_text())
    assert len(cl) == len(rows) == summary["clustered_types"]
    assert cl.classes == summary["classes"] == 100
    assert cl.ami_bits == summary["ami_bits"]
    assert cl.summary == summary
    assert cl.lowercase is True
    assert cl.to_records() == [
        {"word": w, "path": p, "class": c, "count": n} for w, p, c, n in rows
    ]
    for word, path, _, _ in rows:
        assert cl.path(word) == path
        assert word in cl
        for bits in (1, 4, 30):
            assert cl.prefix(word, bits) == path[:bits]
    # The clusters were lowercased: a capitalised word finds its path.
    assert cl.path("The") == cl.path("the") is not None
    assert cl.path("zzzz-not-a-word") is None
    assert cl.prefix("zzzz-not-a-word", 4) is None
    assert "zzzz-not-a-word" not in cl

    # words(prefix): every word under the prefix, by count, ties by row.
    for prefix in ["", "0", "1", "01", "110", rows[5][1], rows[5][1] + "0"]:
        under = [(n, k) for k, (w, p, _, n) in enumerate(rows)
                 if p.startswith(prefix)]
        want = [rows[k][0] for _, k in sorted(under, key=lambda x: -x[0])]
        assert cl.words(prefix) == want, prefix
    with pytest.raises(ValueError, match="0s and 1s"):
        cl.words("012")


def shared(a, b):
    n = 0
    while n < min(len(a), len(b)) and a[n] == b[n]:
        n += 1
    return n


def test_nearest_orders_class_mates_then_shared_prefix(wnut_clusters_dir):
    cl = lexiclade.Clusters.load(wnut_clusters_dir)
    rows = read_table(wnut_clusters_dir)
    for probe in ["monday", "lol", "the", rows[-1][0]]:
        me = next(r for r in rows if r[0] == probe)
        keyed = sorted(
            (r[2] != me[2], -shared(me[1], r[1]), -r[3], k)
            for k, r in enumerate(rows) if r[0] != probe)
        want = [rows[k][0] for *_, k in keyed[:15]]
        assert cl.nearest(probe, 15) == want, probe
    with pytest.raises(KeyError):
        cl.nearest("zzzz-not-a-word")


def test_to_records_make_a_table(wnut_clusters_dir):
    records = lexiclade.Clusters.load(wnut_clusters_dir).to_records()
    assert all(list(r) == ["word", "path", "class", "count"] for r in records)
    assert records[0]["count"] >= records[-1]["count"]


def test_save_refuses_a_non_empty_directory_unless_forced(tmp_path):
    cl = lexiclade.Clusters.learn(["a b c", "a b d"], classes=2)
    out = tmp_path / "out"
    out.mkdir()
    (out / "keep").write_text("x")
    with pytest.raises(FileExistsError, match=r"force=True"):
        cl.save(out)
    assert (out / "keep").exists()
    cl.save(out, force=True)
    assert sorted(p.name for p in out.iterdir()) == FILES
    # Nothing is left beside the output.
    assert [p.name for p in tmp_path.iterdir()] == ["out"]


def test_a_tiny_corpus_clusters_as_expected():
    # cat/dog and sat/ran occur in the same contexts: with three classes
    # each pair shares a class (the cluster crate's own example).
    lines = ["the cat sat", "the dog sat", "a cat ran", "a dog ran"]
    cl = lexiclade.Clusters.learn(lines, classes=3)
    assert len(cl) == 6 and cl.classes == 3
    with pytest.warns(UserWarning, match="classes 10 lowered to 6"):
        assert lexiclade.Clusters.learn(lines, classes=10).classes == 6
    assert cl.path("cat") == cl.path("dog")
    assert cl.path("cat") != cl.path("sat")
    assert set(cl.words(cl.path("cat"))) == {"cat", "dog"}


def show_words(out, header):
    """The first column of the table after `header` in `show`'s output."""
    lines = out.split("\n")
    start = next(i for i, line in enumerate(lines) if line.startswith(header))
    words = []
    for line in lines[start + 2:]:
        if not line.strip() or line.startswith("and "):
            break
        words.append(line.split()[0])
    return words


def test_nearest_and_words_list_what_show_lists(cli, wnut_clusters_dir):
    cl = lexiclade.Clusters.load(wnut_clusters_dir)
    for probe in ["monday", "lol", "the"]:
        out = cli.run("show", wnut_clusters_dir, "--word", probe, "--count",
                      "12").stdout
        assert cl.nearest(probe, 12) == show_words(out, "the 12 words"), \
            probe
    for prefix in ["0", "0110", "1111110"]:
        out = cli.run("show", wnut_clusters_dir, "--prefix", prefix,
                      "--count", "8").stdout
        assert cl.words(prefix)[:8] == show_words(out, f"prefix {prefix}:")
