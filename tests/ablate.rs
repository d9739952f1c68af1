//! `lexiclade ablate` and the whole-pipeline `demo`.

use crate::util::{lexiclade, Dir};

/// A small experiment on the demo data: two feature sets, two sizes plus
/// all, two seeds.
fn setup() -> Dir {
    let dir = Dir::new();
    dir.write("raw.txt", lexiclade::demo::corpus(2_000, 1));
    dir.write("train.conll", lexiclade::demo::labeled(200, 11, 0.5));
    dir.write("dev.conll", lexiclade::demo::labeled(60, 12, 1.0));
    dir.write("test.conll", lexiclade::demo::labeled(60, 13, 1.0));
    let configs = crate::util::repo().join("configs");
    for name in ["ner.toml", "ner-no-clusters.toml"] {
        std::fs::copy(configs.join(name), dir.join(name)).unwrap();
    }
    dir.write(
        "exp.toml",
        r#"
        [data]
        train = "train.conll"
        dev = "dev.conll"
        test = "test.conll"
        [clusters]
        raw = ["raw.txt"]
        classes = 16
        [[features]]
        name = "no clusters"
        config = "ner-no-clusters.toml"
        [[features]]
        name = "prefixes 2, 4"
        config = "ner.toml"
        prefixes = [2, 4]
        [training]
        sizes = [25, 50]
        seeds = [1, 2]
        epochs = 3
        rounds = 500
        prune = false
        "#,
    );
    dir
}

fn rows(dir: &Dir, out: &str) -> Vec<Vec<String>> {
    let text = dir.read(&format!("{out}/runs.csv"));
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> =
        reader.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        header,
        [
            "features",
            "train_sentences",
            "seed",
            "status",
            "dev_score",
            "test_score",
            "test_accuracy",
            "test_oov_accuracy",
            "path_coverage",
            "best_epoch",
            "train_seconds"
        ]
    );
    reader
        .records()
        .map(|r| r.unwrap().iter().map(String::from).collect())
        .collect()
}

#[test]
fn serial_and_parallel_runs_agree_and_every_file_is_written() {
    let dir = setup();
    for (out, threads) in [("serial", "1"), ("parallel", "2")] {
        lexiclade(
            dir.path(),
            &[
                "ablate",
                "--config",
                "exp.toml",
                "--out",
                out,
                "--threads",
                threads,
                "-q",
            ],
        )
        .ok();
    }
    let (serial, parallel) = (rows(&dir, "serial"), rows(&dir, "parallel"));
    // 2 feature sets × (2 sizes + all) × 2 seeds.
    assert_eq!(serial.len(), 12);
    assert!(serial.iter().all(|r| r[3] == "ok"), "{serial:?}");
    for (a, b) in serial.iter().zip(&parallel) {
        assert_eq!(a[..10], b[..10], "runs differ beyond train_seconds");
    }
    for file in
        ["summary.md", "savings.csv", "learning-curve.svg", "prefixes.svg"]
    {
        assert!(dir.join("serial").join(file).is_file(), "{file} missing");
    }
    let summary = dir.read("serial/summary.md");
    assert!(summary.contains("| prefixes 2, 4 | 50 |"), "{summary}");
    assert!(summary.contains("## Label saving"));
    // Paths cover the test tokens in the cluster runs only.
    assert!(serial
        .iter()
        .all(|r| (r[0] == "no clusters") == (r[8] == "0.000000")));
}

#[test]
fn bad_experiment_configs_are_refused() {
    let dir = setup();
    let text =
        dir.read("exp.toml").replace("epochs = 3", "epochs = 3\nepoch = 4");
    dir.write("typo.toml", text);
    lexiclade(dir.path(), &["ablate", "--config", "typo.toml", "--out", "o"])
        .user_error("unknown field `epoch`");
    assert!(!dir.join("o").exists());
    // An output directory holding the inputs is refused, even with
    // --force.
    let here = dir.path().to_str().unwrap().to_string();
    lexiclade(
        dir.path(),
        &["ablate", "--config", "exp.toml", "--out", &here, "--force"],
    )
    .user_error("would overwrite the input");
    assert!(dir.join("exp.toml").exists());
    let twice =
        dir.read("exp.toml").replace("seeds = [1, 2]", "seeds = [1, 1]");
    dir.write("twice.toml", twice);
    lexiclade(dir.path(), &["ablate", "--config", "twice.toml", "--out", "o"])
        .user_error("a seed twice");
}

#[test]
fn demo_runs_end_to_end_and_clusters_beat_the_baseline() {
    let dir = Dir::new();
    let params = lexiclade::demo::DemoParams {
        sentences: 2_000,
        labeled: 200,
        sizes: vec![50],
        seeds: vec![1, 2],
        epochs: 3,
        rounds: 500,
        ..Default::default()
    };
    let report =
        lexiclade::demo::run(&dir.join("demo"), false, &params).unwrap();
    let largest = report.comparisons.iter().map(|c| c.size).max().unwrap();
    let at = |f: usize| {
        report
            .comparisons
            .iter()
            .find(|c| c.features == f && c.size == largest)
            .unwrap()
            .mean
    };
    assert!(at(1) > at(0), "clusters {} vs baseline {}", at(1), at(0));
    for file in [
        "runs.csv",
        "summary.md",
        "savings.csv",
        "learning-curve.svg",
        "clusters/clusters.tsv",
    ] {
        assert!(dir.join("demo").join(file).is_file(), "{file} missing");
    }
    // Running it again replaces the earlier demo without --force.
    lexiclade::demo::run(&dir.join("demo"), false, &params).unwrap();
    // It wrote exactly the files it recognises as its own.
    let mut written = Vec::new();
    let mut stack = vec![dir.join("demo")];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                let rel = p.strip_prefix(dir.join("demo")).unwrap();
                written.push(rel.to_string_lossy().into_owned());
            }
        }
    }
    written.sort();
    assert_eq!(written, lexiclade::demo::FILES);
    // A file a user added is not the demo's: refused without --force,
    // and left as it was.
    dir.write("demo/clusters/mine.txt", "precious");
    let Err(err) = lexiclade::demo::run(&dir.join("demo"), false, &params)
    else {
        panic!("a directory with a file of the user's was replaced");
    };
    let err = err.to_string();
    assert!(err.contains("holds clusters/mine.txt"), "{err}");
    assert_eq!(dir.read("demo/clusters/mine.txt"), "precious");
    lexiclade::demo::run(&dir.join("demo"), true, &params).unwrap();
    assert!(!dir.join("demo/clusters/mine.txt").exists());
}

/// A feature set may bring its own cluster directory: here the same
/// feature config over clusters learned with and without exchange passes
/// (the experiment's own clusters are learned from raw text with them).
#[test]
fn feature_sets_can_compare_cluster_directories() {
    let dir = setup();
    lexiclade(
        dir.path(),
        &["cluster", "raw.txt", "--out", "greedy", "--classes", "16", "-q"],
    )
    .ok();
    let exp = dir.read("exp.toml");
    let exp = exp
        .replace("classes = 16", "classes = 16\n        exchange_passes = 3")
        .replace(
            "name = \"no clusters\"\n        config = \"ner-no-clusters.toml\"",
            "name = \"greedy clusters\"\n        config = \"ner.toml\"\n        \
             clusters = \"greedy\"",
        )
        .replace("name = \"prefixes 2, 4\"", "name = \"exchange clusters\"")
        .replace("sizes = [25, 50]", "sizes = [25]")
        .replace("seeds = [1, 2]", "seeds = [1]");
    assert!(exp.contains("clusters = \"greedy\""), "{exp}");
    dir.write("compare.toml", exp);
    lexiclade(
        dir.path(),
        &["ablate", "--config", "compare.toml", "--out", "c", "-q"],
    )
    .ok();
    let runs = rows(&dir, "c");
    assert_eq!(runs.len(), 4, "{runs:?}");
    assert!(runs.iter().all(|r| r[3] == "ok" && r[8] != "0.000000"));
    let by = |name: &str| -> Vec<&Vec<String>> {
        runs.iter().filter(|r| r[0] == name).collect()
    };
    assert_eq!(by("greedy clusters").len(), 2);
    assert_eq!(by("exchange clusters").len(), 2);

    let missing =
        dir.read("compare.toml").replace("\"greedy\"", "\"nowhere\"");
    dir.write("missing.toml", missing);
    lexiclade(
        dir.path(),
        &["ablate", "--config", "missing.toml", "--out", "m", "-q"],
    )
    .user_error("greedy clusters");
}

/// `training.refit = true` runs what `train --refit` does: on the whole
/// training file, one seed, the run's test score equals scoring a
/// `train --refit` model by hand; the summary records the option.
#[test]
fn refit_runs_match_train_refit() {
    let dir = setup();
    let exp = dir
        .read("exp.toml")
        .replace("sizes = [25, 50]", "refit = true")
        .replace("seeds = [1, 2]", "seeds = [4]");
    dir.write("refit.toml", exp);
    lexiclade(
        dir.path(),
        &["ablate", "--config", "refit.toml", "--out", "r", "-q"],
    )
    .ok();
    let runs = rows(&dir, "r");
    let run = runs.iter().find(|r| r[0] == "no clusters").unwrap();
    assert_eq!(run[1], "200");
    let summary: serde_json::Value =
        serde_json::from_str(&dir.read("r/summary.json")).unwrap();
    assert_eq!(summary["refit"], true);

    let run_cli = |args: &[&str]| lexiclade(dir.path(), args).ok();
    let trained = run_cli(&[
        "train",
        "--train",
        "train.conll",
        "--dev",
        "dev.conll",
        "--model",
        "m.bin",
        "--config",
        "ner-no-clusters.toml",
        "--epochs",
        "3",
        "--seed",
        "4",
        "--no-prune",
        "--refit",
    ]);
    let chosen = format!("epoch {} chosen on dev", run[9]);
    assert!(trained.stderr.contains(&chosen), "{}", trained.stderr);
    run_cli(&["tag", "--model", "m.bin", "test.conll", "--out", "p.conll"]);
    let eval = run_cli(&["eval", "p.conll", "--json"]);
    let report: serde_json::Value =
        serde_json::from_str(&eval.stdout).unwrap();
    let f1 = report["overall"]["f1"].as_f64().unwrap();
    let score: f64 = run[5].parse().unwrap();
    assert!((f1 - score).abs() < 1e-6, "ablate {score} vs train --refit {f1}");
}

/// Feature sets that read an input column and a named cluster set: each
/// reads its own columns, and the experiment's `[cluster_sets]` reach
/// the set that requires them.
#[test]
fn feature_sets_with_columns_and_cluster_sets() {
    use crate::tagger::{tag_fixture, TAG_CONFIG};
    let dir = Dir::new();
    dir.write("train.tsv", tag_fixture(120, 7));
    dir.write("dev.tsv", tag_fixture(30, 8));
    dir.write("test.tsv", tag_fixture(30, 9));
    let words: String = tag_fixture(120, 7)
        .lines()
        .map(|l| l.split('\t').next().unwrap_or(""))
        .collect::<Vec<_>>()
        .join(" ");
    dir.write("raw.txt", words);
    lexiclade(
        dir.path(),
        &["cluster", "raw.txt", "--out", "clusters", "--classes", "4", "-q"],
    )
    .ok();
    dir.write("words.toml", "iobes = false\n");
    dir.write("tag.toml", TAG_CONFIG);
    dir.write(
        "set.toml",
        "iobes = false\n[[cluster_sets]]\nname = \"lc\"\nenabled = true\n",
    );
    let experiment = r#"
        [data]
        train = "train.tsv"
        dev = "dev.tsv"
        test = "test.tsv"
        scheme = "none"
        [cluster_sets]
        lc = "clusters"
        [[features]]
        name = "words"
        config = "words.toml"
        [[features]]
        name = "tag column"
        config = "tag.toml"
        [[features]]
        name = "cluster set"
        config = "set.toml"
        [training]
        seeds = [1]
        epochs = 4
        rounds = 200
    "#;
    dir.write("exp.toml", experiment);
    lexiclade(
        dir.path(),
        &["ablate", "--config", "exp.toml", "--out", "out", "-q"],
    )
    .ok();
    let runs = rows(&dir, "out");
    let score = |name: &str| -> f64 {
        let row = runs.iter().find(|r| r[0] == name).unwrap();
        assert_eq!(row[3], "ok", "{row:?}");
        row[5].parse().unwrap()
    };
    assert_eq!(score("tag column"), 1.0);
    assert!(score("words") < 0.8, "{}", score("words"));
    score("cluster set");
    // Without the experiment's directory the set that requires it fails.
    dir.write("exp2.toml", experiment.replace("lc = \"clusters\"", ""));
    let run = lexiclade(
        dir.path(),
        &["ablate", "--config", "exp2.toml", "--out", "out2", "-q"],
    );
    assert_ne!(run.status, 0);
    assert!(
        run.stderr.contains("cluster set \"lc\" sets enabled = true"),
        "{}",
        run.stderr
    );
}
