//! Labels of training and scored files: the tag scheme detected despite
//! a few invalid labels, a given scheme the labels contradict, and a
//! label column that is the token column; in `train`, `eval` and
//! `ablate`.

use crate::util::{lexiclade, Dir};

/// The demo's IOB2 training data with the `B-PLACE` after `O` of the
/// first such pair turned into `I-PLACE`; also its 1-based line.
fn one_stray_start(train: &str) -> (String, usize) {
    let lines: Vec<&str> = train.lines().collect();
    let k = (1..lines.len())
        .find(|&k| {
            lines[k].ends_with("\tB-PLACE") && lines[k - 1].ends_with("\tO")
        })
        .expect("a B-PLACE after O");
    let mut out: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
    out[k] = out[k].replace("\tB-PLACE", "\tI-PLACE");
    (out.join("\n") + "\n", k + 1)
}

fn train_args<'a>(train: &'a str, model: &'a str) -> Vec<&'a str> {
    vec![
        "train",
        "--train",
        train,
        "--dev",
        "dev.conll",
        "--model",
        model,
        "--epochs",
        "3",
    ]
}

#[test]
fn one_stray_inside_start_keeps_iob2_warns_and_changes_nothing() {
    let dir = Dir::new();
    let clean = lexiclade::demo::labeled(300, 1, 1.0);
    let (stray, line) = one_stray_start(&clean);
    dir.write("clean.conll", &clean);
    dir.write("stray.conll", &stray);
    dir.write("dev.conll", lexiclade::demo::labeled(100, 2, 1.0));
    dir.write("test.conll", lexiclade::demo::labeled(100, 3, 1.0));

    let run = lexiclade(dir.path(), &train_args("clean.conll", "a.bin")).ok();
    assert!(!run.stderr.contains("warning"), "{}", run.stderr);
    let run = lexiclade(dir.path(), &train_args("stray.conll", "b.bin")).ok();
    let warning = format!(
        "lexiclade: warning: stray.conll:{line}: I-PLACE after O is invalid \
         in iob2 (1 such label in the file;"
    );
    assert!(run.stderr.contains(&warning), "{}", run.stderr);
    assert!(run.stderr.contains("labels (iob2)"), "{}", run.stderr);
    // The stray start reads as a chunk start, so the model learns the same
    // chunks and tags the test file exactly as the clean one.
    let tag = |model: &str| {
        lexiclade(dir.path(), &["tag", "--model", model, "test.conll"])
            .ok()
            .stdout
    };
    let (a, b) = (tag("a.bin"), tag("b.bin"));
    assert!(a == b, "the stray label changed the predictions");
    assert!(b.lines().any(|l| l.ends_with("\tB-PLACE")));
    // --quiet silences the warning.
    let mut args = train_args("stray.conll", "c.bin");
    args.push("-q");
    let run = lexiclade(dir.path(), &args).ok();
    assert_eq!(run.stderr, "");
}

#[test]
fn a_scheme_the_labels_contradict_is_refused_with_the_line() {
    let dir = Dir::new();
    dir.write("dev.conll", "Tollmouth\tB-PLACE\nat\tO\n");
    // IOB2: B-PLACE followed by O would be S-PLACE in IOBES.
    dir.write("iob2.conll", "O-word\tO\n\nTollmouth\tB-PLACE\nat\tO\n");
    let mut args = train_args("iob2.conll", "m.bin");
    args.extend(["--scheme", "iobes"]);
    lexiclade(dir.path(), &args).user_error(
        "iob2.conll:3: B-PLACE followed by O contradicts scheme iobes",
    );
    assert!(!dir.join("m.bin").exists());
    let mut args = train_args("iob2.conll", "m.bin");
    args.extend(["--scheme", "iob1"]);
    lexiclade(dir.path(), &args).user_error(
        "iob2.conll:3: B-PLACE at a sentence start contradicts scheme iob1",
    );
    // IOB1 labels given as IOB2.
    dir.write("iob1.conll", "at\tO\nTollmouth\tI-PLACE\n");
    let mut args = train_args("iob1.conll", "m.bin");
    args.extend(["--scheme", "iob2"]);
    lexiclade(dir.path(), &args)
        .user_error("iob1.conll:2: I-PLACE after O contradicts scheme iob2");
    // IOBES labels given as IOB1 or IOB2.
    dir.write("iobes.conll", "at\tO\nTollmouth\tS-PLACE\n");
    for scheme in ["iob1", "iob2"] {
        let mut args = train_args("iobes.conll", "m.bin");
        args.extend(["--scheme", scheme]);
        lexiclade(dir.path(), &args).user_error(&format!(
            "iobes.conll:2: S-PLACE contradicts scheme {scheme}"
        ));
    }
    // The dev file is checked against the training file's scheme.
    dir.write("dev-iobes.conll", "at\tO\nTollmouth\tS-PLACE\n");
    let args = [
        "train",
        "--train",
        "iob2.conll",
        "--dev",
        "dev-iobes.conll",
        "--model",
        "m.bin",
    ];
    lexiclade(dir.path(), &args)
        .user_error("dev-iobes.conll:2: S-PLACE contradicts scheme iob2");
}

#[test]
fn eval_detects_robustly_and_warns_about_a_contradicted_scheme() {
    let dir = Dir::new();
    dir.write(
        "pred.conll",
        "skipper O O\nAda B-PERSON B-PERSON\nleft O O\n\
         Tollmouth I-PLACE B-PLACE\n",
    );
    let run = lexiclade(dir.path(), &["eval", "pred.conll"]).ok();
    assert!(run.stdout.contains("scheme iob2"), "{}", run.stdout);
    assert!(
        run.stderr.contains(
            "lexiclade: warning: pred.conll:4: gold label I-PLACE after O \
             is invalid in iob2 (1 such label"
        ),
        "{}",
        run.stderr
    );
    // A contradicted scheme changes no chunk, so eval warns and scores.
    let run =
        lexiclade(dir.path(), &["eval", "pred.conll", "--scheme", "iobes"])
            .ok();
    assert!(
        run.stderr.contains(
            "lexiclade: warning: pred.conll:2: gold label B-PERSON followed \
             by O contradicts scheme iobes"
        ),
        "{}",
        run.stderr
    );
    assert!(run.stdout.contains("scheme iobes"), "{}", run.stdout);
}

#[test]
fn a_label_column_that_is_the_token_column_is_refused() {
    let dir = Dir::new();
    dir.write("one.conll", "Ada\nleft\n\nTollmouth\n");
    dir.write("two.conll", "Ada B-PERSON\nleft O\n");
    dir.write("dev.conll", "Ada B-PERSON\nleft O\n");
    lexiclade(dir.path(), &train_args("one.conll", "m.bin")).user_error(
        "one.conll:1: a row of 1 column: training needs a label column",
    );
    for (token, label) in [("2", "2"), ("2", "-1"), ("-2", "1")] {
        let mut args = train_args("two.conll", "m.bin");
        args.extend(["--token-column", token, "--label-column", label]);
        lexiclade(dir.path(), &args).user_error(&format!(
            "two.conll:1: the token column ({token}) and the label column \
             ({label}) are the same column of a row of 2 columns"
        ));
    }
    assert!(!dir.join("m.bin").exists());
    // The dev file too.
    let args = [
        "train",
        "--train",
        "two.conll",
        "--dev",
        "one.conll",
        "--model",
        "m.bin",
    ];
    lexiclade(dir.path(), &args).user_error("one.conll:1: a row of 1 column");
}

#[test]
fn ablate_checks_label_columns_and_warns_about_stray_starts() {
    let dir = Dir::new();
    let clean = lexiclade::demo::labeled(60, 11, 1.0);
    let (stray, line) = one_stray_start(&clean);
    dir.write("train.conll", &stray);
    dir.write("dev.conll", lexiclade::demo::labeled(20, 12, 1.0));
    dir.write("test.conll", lexiclade::demo::labeled(20, 13, 1.0));
    dir.write("one.conll", "Ada\nleft\n");
    let configs = crate::util::repo().join("configs");
    std::fs::copy(
        configs.join("ner-no-clusters.toml"),
        dir.join("ner-no-clusters.toml"),
    )
    .unwrap();
    let experiment = |train: &str, extra: &str| {
        format!(
            "[data]\ntrain = \"{train}\"\ndev = \"dev.conll\"\n\
             test = \"test.conll\"\n{extra}\n\
             [[features]]\nname = \"base\"\n\
             config = \"ner-no-clusters.toml\"\n\
             [training]\nseeds = [1]\nepochs = 1\nrounds = 10\n"
        )
    };
    dir.write("exp.toml", experiment("train.conll", ""));
    let run = lexiclade(
        dir.path(),
        &["ablate", "--config", "exp.toml", "--out", "out"],
    )
    .ok();
    let warning = format!(
        "lexiclade: warning: train.conll:{line}: I-PLACE after O is invalid \
         in iob2"
    );
    assert!(run.stderr.contains(&warning), "{}", run.stderr);
    dir.write("one.toml", experiment("one.conll", ""));
    lexiclade(dir.path(), &["ablate", "--config", "one.toml", "--out", "o1"])
        .user_error("one.conll:1: a row of 1 column");
    dir.write("same.toml", experiment("train.conll", "token_column = -1"));
    lexiclade(dir.path(), &["ablate", "--config", "same.toml", "--out", "o2"])
        .user_error(
            "the token column (-1) and the label column (-1) are the same",
        );
    dir.write("iobes.toml", experiment("train.conll", "scheme = \"iobes\""));
    lexiclade(
        dir.path(),
        &["ablate", "--config", "iobes.toml", "--out", "o3"],
    )
    .user_error("contradicts scheme iobes");
    for out in ["o1", "o2", "o3"] {
        assert!(!dir.join(out).exists(), "{out} was written");
    }
}
