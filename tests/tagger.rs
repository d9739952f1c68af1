//! `lexiclade train` and `tag`: the whole path from column files to a
//! model and back, determinism, and bad models and inputs.

use crate::util::{lexiclade, Dir};

fn setup() -> Dir {
    let dir = Dir::new();
    dir.write("train.conll", lexiclade::demo::labeled(300, 1, 1.0));
    dir.write("dev.conll", lexiclade::demo::labeled(100, 2, 1.0));
    dir.write("test.conll", lexiclade::demo::labeled(100, 3, 1.0));
    dir
}

fn train(dir: &Dir, model: &str, extra: &[&str]) {
    let mut args = vec![
        "train",
        "--train",
        "train.conll",
        "--dev",
        "dev.conll",
        "--model",
        model,
        "--epochs",
        "3",
        "-q",
    ];
    args.extend(extra);
    lexiclade(dir.path(), &args).ok();
}

#[test]
fn trains_tags_and_scores_the_demo_task() {
    let dir = setup();
    train(&dir, "m.bin", &[]);
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "test.conll", "--out", "pred.conll"],
    )
    .ok();
    let pred = dir.read("pred.conll");
    let first = pred.lines().next().unwrap();
    assert_eq!(
        first.split('\t').count(),
        3,
        "token, gold, predicted: {first:?}"
    );
    assert_eq!(
        pred.lines().filter(|l| l.is_empty()).count(),
        100,
        "a blank line after every sentence"
    );
    let run = lexiclade(dir.path(), &["eval", "pred.conll", "--json"]).ok();
    let report: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    let f1 = report["overall"]["f1"].as_f64().unwrap();
    assert!(f1 > 0.95, "the demo task is easy: F1 {f1}");
}

#[test]
fn same_seed_same_model_and_tagging_is_repeatable() {
    let dir = setup();
    train(&dir, "a.bin", &["--seed", "7"]);
    train(&dir, "b.bin", &["--seed", "7"]);
    let (a, b) = (
        std::fs::read(dir.join("a.bin")).unwrap(),
        std::fs::read(dir.join("b.bin")).unwrap(),
    );
    assert!(a == b, "same seed, different model bytes");
    let tag = |model: &str| {
        lexiclade(dir.path(), &["tag", "--model", model, "test.conll"])
            .ok()
            .stdout
    };
    assert_eq!(tag("a.bin"), tag("b.bin"));
    // Plain text gets token and label per line.
    dir.write(
        "plain.txt",
        "Heron left Cressfold at dawn .\n\nskipper Ada reports Otter\n",
    );
    let run = lexiclade(
        dir.path(),
        &["tag", "--model", "a.bin", "--plain", "plain.txt"],
    )
    .ok();
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines[0], "Heron\tB-VESSEL");
    assert_eq!(lines[2], "Cressfold\tB-PLACE");
    assert_eq!(lines.iter().filter(|l| l.is_empty()).count(), 2);
}

#[test]
fn crlf_bom_and_unseen_gold_types_are_normal_input() {
    let dir = setup();
    let crlf =
        format!("\u{feff}{}", dir.read("train.conll").replace('\n', "\r\n"));
    dir.write("train-crlf.conll", crlf);
    lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "train-crlf.conll",
            "--model",
            "m.bin",
            "--epochs",
            "2",
            "-q",
        ],
    )
    .ok();
    // A gold type the model never saw: tagging and scoring still work.
    dir.write("new.conll", "Heron\tB-VESSEL\nmet\tO\nZorba\tB-ALIEN\n\n");
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "new.conll", "--out", "p.conll"],
    )
    .ok();
    let run = lexiclade(dir.path(), &["eval", "p.conll", "--json"]).ok();
    let report: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(report["per_type"]["ALIEN"]["support"], 1);
    assert_eq!(report["per_type"]["ALIEN"]["recall"], 0.0);
}

#[test]
fn bad_models_and_inputs_are_one_line_errors() {
    let dir = setup();
    train(&dir, "m.bin", &[]);
    let bytes = std::fs::read(dir.join("m.bin")).unwrap();
    dir.write("cut.bin", &bytes[..bytes.len() / 2]);
    let mut flipped = bytes.clone();
    let last = flipped.len() - 5;
    flipped[last] ^= 0x40;
    dir.write("flipped.bin", &flipped);
    let mut other = bytes.clone();
    // A file of an older format (version 1, before input columns).
    other[8] = 1;
    dir.write("v1.bin", &other);
    dir.write("text.bin", "not a model\n");
    let tag = |model: &str| {
        lexiclade(dir.path(), &["tag", "--model", model, "test.conll"])
    };
    tag("cut.bin").user_error("cut.bin: truncated model file");
    tag("flipped.bin").user_error("checksum mismatch");
    tag("v1.bin").user_error(
        "model format version 1 is not supported (this build reads version 4)",
    );
    tag("text.bin").user_error("not a lexiclade model file");
    tag("missing.bin").user_error("missing.bin");

    dir.write("ragged.conll", "a\tO\nb\tO\tX\n\n");
    dir.write("empty.conll", "");
    let train_on = |file: &str| {
        lexiclade(
            dir.path(),
            &["train", "--train", file, "--model", "n.bin", "-q"],
        )
    };
    train_on("ragged.conll").user_error("ragged.conll:2:");
    train_on("empty.conll").user_error("empty.conll");
    lexiclade(
        dir.path(),
        &["train", "--train", "train.conll", "--model", "train.conll"],
    )
    .user_error("would overwrite the input");
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "test.conll", "--out", "test.conll"],
    )
    .user_error("would overwrite the input");
    assert!(!dir.join("n.bin").exists());
}

/// A tab-separated file as some public corpora publish it: tokens holding
/// spaces (`ke s`), rows with an empty token, and sentences ended by a
/// line holding only a tab. It trains, and `tag` writes every row back
/// unchanged with the label after a tab.
#[test]
fn tab_separated_files_are_read_as_they_are() {
    let dir = setup();
    let mut text = dir.read("train.conll").replace("\n\n", "\n\t\n");
    text.push_str("ke s\tO\nat\tO\n\tO\nHeron\tB-VESSEL\n\t\n");
    text.push_str("\tO\nMoor  Hall\tB-PLACE\n\t\n");
    dir.write("public.conll", &text);
    let trained = lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "public.conll",
            "--model",
            "m.bin",
            "--epochs",
            "2",
        ],
    )
    .ok();
    assert!(!trained.stderr.contains("warning"), "{}", trained.stderr);
    let test = "ke s\tO\n\tO\nMoor  Hall\tB-PLACE\n\t\n-DOCSTART-\n\nHeron\tB-VESSEL\n";
    dir.write("t.conll", test);
    let run =
        lexiclade(dir.path(), &["tag", "--model", "m.bin", "t.conll"]).ok();
    let rows: Vec<&str> = test
        .lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with("-DOCSTART-"))
        .collect();
    let out: Vec<&str> =
        run.stdout.lines().filter(|l| !l.is_empty()).collect();
    assert_eq!(out.len(), rows.len(), "{}", run.stdout);
    for (got, row) in out.iter().zip(&rows) {
        let (cells, label) = got.rsplit_once('\t').unwrap();
        assert_eq!(cells, *row, "a row changed on its way through tag");
        assert!(!label.is_empty());
    }
    // The output is tab-separated too: it reads back with the same cells,
    // and eval scores it (the empty token is a token like any other).
    dir.write("p.conll", &run.stdout);
    let eval = lexiclade(dir.path(), &["eval", "p.conll", "--json"]).ok();
    let report: serde_json::Value =
        serde_json::from_str(&eval.stdout).unwrap();
    assert_eq!(report["tokens"], 4, "{}", eval.stdout);
    // featurize keeps the token whole, and the empty one.
    let config = crate::util::repo().join("configs/ner-no-clusters.toml");
    let features = lexiclade(
        dir.path(),
        &["featurize", "--config", config.to_str().unwrap(), "t.conll"],
    )
    .ok();
    let lines: Vec<&str> = features.stdout.lines().collect();
    assert!(lines[0].starts_with("ke s\tbias\tw=ke s\t"), "{}", lines[0]);
    assert!(lines[1].starts_with("\tbias\t"), "{}", lines[1]);
}

/// One row without a tab in an otherwise tab-separated file: whitespace
/// splitting, and both lines named when that breaks the file or changes
/// what is read.
#[test]
fn mixed_tab_and_space_files_name_the_lines() {
    let dir = setup();
    dir.write("broken.conll", "ke s\tO\nHeron B-VESSEL\n\n");
    lexiclade(
        dir.path(),
        &["train", "--train", "broken.conll", "--model", "m.bin", "-q"],
    )
    .user_error(
        "broken.conll:2: 2 columns, but the sentence's first row (line 1) \
         has 3 (columns split on spaces and tabs because line 2 has no tab \
         while line 1 has one)",
    );
    assert!(!dir.join("m.bin").exists());
    // Parses on whitespace, but line 3 would split otherwise on tabs:
    // a warning names it; -q silences it.
    let mut text = dir.read("train.conll");
    text.push_str("ke s\tO\n\nHeron B-VESSEL\n\n");
    dir.write("mixed.conll", &text);
    // The last line is blank; Heron's is before it, `ke s` two above.
    let heron = text.lines().count() - 1;
    let run = lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "mixed.conll",
            "--model",
            "m.bin",
            "--epochs",
            "1",
        ],
    )
    .ok();
    let want = format!(
        "lexiclade: warning: mixed.conll: columns split on spaces and tabs \
         because line {} has no tab while line 1 has one; line {} would \
         split differently on tabs alone",
        heron,
        heron - 2
    );
    assert!(run.stderr.contains(&want), "{}", run.stderr);
    let quiet = lexiclade(
        dir.path(),
        &["train", "--train", "mixed.conll", "--model", "q.bin", "-q"],
    )
    .ok();
    assert_eq!(quiet.stderr, "");
    // A trailing tab makes an empty last column: an empty label is
    // refused with its line.
    dir.write("trailing.conll", "a\tO\t\nb\tO\t\n");
    lexiclade(
        dir.path(),
        &["train", "--train", "trailing.conll", "--model", "t.bin", "-q"],
    )
    .user_error("trailing.conll:1: the label (column -1) is empty");
}

#[test]
fn refit_trains_again_on_train_and_dev_for_the_chosen_epochs() {
    let dir = Dir::new();
    // Unseen words in dev, so that train and train+dev models differ.
    dir.write("train.conll", lexiclade::demo::labeled(200, 1, 0.5));
    dir.write("dev.conll", lexiclade::demo::labeled(80, 2, 1.0));
    let train = |model: &str, extra: &[&str]| {
        let mut args = vec!["train", "--model", model, "--seed", "3"];
        args.extend(extra);
        lexiclade(dir.path(), &args).ok()
    };
    let both =
        ["--train", "train.conll", "--dev", "dev.conll", "--epochs", "5"];
    let plain = train("plain.bin", &both);
    let refit = train("refit.bin", &[&both[..], &["--refit"]].concat());
    let summary = refit.stderr.lines().last().unwrap();
    let chosen: String = summary
        .split("epoch ")
        .nth(1)
        .unwrap()
        .chars()
        .take_while(char::is_ascii_digit)
        .collect();
    assert!(
        summary.contains(&format!("epoch {chosen} chosen on dev (",))
            && summary
                .contains(&format!("refit on train+dev for {chosen} epochs")),
        "{summary}"
    );
    assert!(
        plain.stderr.contains(&format!("best epoch {chosen};")),
        "{}",
        plain.stderr
    );
    assert_eq!(
        refit.stderr.matches("lexiclade: refit epoch").count(),
        chosen.parse::<usize>().unwrap(),
        "{}",
        refit.stderr
    );
    // By hand: the two files joined, the chosen epochs, no dev.
    let joined = dir.read("train.conll") + "\n" + &dir.read("dev.conll");
    dir.write("joined.conll", joined);
    train("hand.bin", &["--train", "joined.conll", "--epochs", &chosen, "-q"]);
    let again = train("again.bin", &[&both[..], &["--refit", "-q"]].concat());
    assert_eq!(again.stderr, "");
    let bytes = |m: &str| std::fs::read(dir.join(m)).unwrap();
    assert!(
        bytes("refit.bin") == bytes("hand.bin"),
        "refit is not train+dev by hand"
    );
    assert!(
        bytes("refit.bin") == bytes("again.bin"),
        "same seed, other bytes"
    );
    assert!(bytes("refit.bin") != bytes("plain.bin"), "refit changed nothing");

    lexiclade(
        dir.path(),
        &["train", "--train", "train.conll", "--model", "x.bin", "--refit"],
    )
    .user_error("--refit needs --dev");
    assert!(!dir.join("x.bin").exists());
}

/// The shipped WNUT-17 files are tab-separated with a lone tab between
/// some sentences: read on tabs, with the split's published post counts
/// (train 3,394, dev 1,009, test 1,287; Derczynski et al. 2017, from
/// memory) and the token counts `eval` and the README use.
#[test]
fn shipped_wnut17_files_read_as_tab_separated() {
    use lexiclade_tagger::columns::{read_columns, Separator};
    for (part, sentences, tokens) in [
        ("train", 3394, 62_730),
        ("dev", 1009, 15_733),
        ("test", 1287, 23_394),
    ] {
        let path = crate::util::repo_data(&format!("wnut17/{part}.conll"));
        let file = read_columns(&path).unwrap();
        assert_eq!(file.separator, Separator::Tab, "{part}");
        assert_eq!(file.mixed, None, "{part}");
        assert_eq!(file.sentences.len(), sentences, "{part}");
        assert_eq!(file.tokens(), tokens, "{part}");
        assert!(file.sentences.iter().all(|s| s.width() == 2), "{part}");
    }
}

/// Sentences of `token TAB tag TAB label` whose label depends on the
/// tags alone: `Y` where a token's tag equals the previous token's, `N`
/// elsewhere. The words are drawn independently of the tags, so a model
/// of the words cannot do better than chance, and the label is an XOR
/// of two tags, which the single tags cannot express either: only the
/// tag bigram can.
pub(crate) fn tag_fixture(sentences: usize, seed: u64) -> String {
    let mut state = seed.wrapping_mul(6364136223846793005).wrapping_add(1);
    let mut next = |n: u64| {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 33) % n
    };
    let mut out = String::new();
    for _ in 0..sentences {
        let mut last = None;
        for _ in 0..8 {
            let word = format!("w{}", next(40));
            let tag = if next(2) == 0 { "a" } else { "b" };
            let label = if last == Some(tag) { "Y" } else { "N" };
            out.push_str(&format!("{word}\t{tag}\t{label}\n"));
            last = Some(tag);
        }
        out.push('\n');
    }
    out
}

pub(crate) const TAG_CONFIG: &str = "iobes = false\n\
    [[columns]]\nname = \"tag\"\ncolumn = 2\nwindow = [0]\nngrams = [[-1, 0]]\n";

fn token_accuracy(dir: &Dir, pred: &str) -> f64 {
    let run = lexiclade(dir.path(), &["eval", pred, "--json"]).ok();
    let report: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    report["token_accuracy"].as_f64().unwrap()
}

#[test]
fn a_column_feature_learns_what_the_words_cannot() {
    let dir = Dir::new();
    dir.write("train.tsv", tag_fixture(300, 1));
    dir.write("test.tsv", tag_fixture(60, 2));
    dir.write("tag.toml", TAG_CONFIG);
    dir.write("words.toml", "iobes = false\n");
    dir.write(
        "unigrams.toml",
        TAG_CONFIG
            .replace("ngrams = [[-1, 0]]", "window = [-1]")
            .replace("window = [0]\n", ""),
    );
    let mut accuracy = Vec::new();
    for config in ["tag", "words", "unigrams"] {
        let model = format!("{config}.bin");
        lexiclade(
            dir.path(),
            &[
                "train",
                "--train",
                "train.tsv",
                "--model",
                &model,
                "--config",
                &format!("{config}.toml"),
                "--epochs",
                "5",
                "-q",
            ],
        )
        .ok();
        let pred = format!("{config}.pred");
        lexiclade(
            dir.path(),
            &["tag", "--model", &model, "test.tsv", "--out", &pred],
        )
        .ok();
        accuracy.push(token_accuracy(&dir, &pred));
    }
    assert_eq!(accuracy[0], 1.0, "the tag bigram decides every label");
    assert!(accuracy[1] < 0.8, "words alone are near chance: {}", accuracy[1]);
    assert!(
        accuracy[2] < 0.8,
        "the single tags cannot express an XOR: {}",
        accuracy[2]
    );
}

#[test]
fn the_model_keeps_its_columns_and_refuses_input_without_them() {
    let dir = Dir::new();
    dir.write("train.tsv", tag_fixture(100, 3));
    dir.write("tag.toml", TAG_CONFIG);
    let train = |extra: &[&str]| {
        let mut args = vec![
            "train",
            "--train",
            "train.tsv",
            "--model",
            "m.bin",
            "--config",
            "tag.toml",
            "--epochs",
            "2",
            "-q",
        ];
        args.extend(extra);
        lexiclade(dir.path(), &args)
    };
    train(&[]).ok();
    // Tagging after the round trip through the file reads column 2.
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "train.tsv", "--out", "a.pred"],
    )
    .ok();
    assert!(token_accuracy(&dir, "a.pred") > 0.99);
    // The same rows with the tags swapped give other labels: the model
    // reads the column, not just the words.
    let swapped = dir
        .read("train.tsv")
        .replace("\ta\t", "\tc\t")
        .replace("\tb\t", "\ta\t")
        .replace("\tc\t", "\tb\t");
    dir.write("swapped.tsv", &swapped);
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "swapped.tsv", "--out", "s.pred"],
    )
    .ok();
    assert!(
        token_accuracy(&dir, "s.pred") > 0.99,
        "swapping a and b keeps every equality"
    );

    // A file without column 2, anywhere: one line naming file, line
    // and model; nothing written.
    dir.write("short.tsv", "w1\ta\tN\nw2\ta\tY\n\nw3\n");
    lexiclade(dir.path(), &["tag", "--model", "m.bin", "short.tsv", "--out", "x.pred"])
        .user_error("short.tsv:4: the model m.bin reads column 2 (tag) as a feature, but the row has 1 column");
    assert!(!dir.join("x.pred").exists());
    lexiclade(dir.path(), &["tag", "--model", "m.bin", "short.tsv"])
        .user_error("short.tsv:4:");
    // Plain text has no columns.
    dir.write("plain.txt", "w1 w2 w3\n");
    lexiclade(dir.path(), &["tag", "--model", "m.bin", "--plain", "plain.txt"])
        .user_error("m.bin: the model reads input column 2 (tag) as a feature, which --plain text does not have");

    // Training: the label column as a feature, and a column a row lacks.
    std::fs::remove_file(dir.join("m.bin")).unwrap();
    train(&["--label-column", "2"]).user_error("train.tsv:1: column 2 is the label column here; the features may not read it (tag)");
    let config = TAG_CONFIG.replace("column = 2", "column = -1");
    dir.write("tag.toml", &config);
    train(&[]).user_error("train.tsv:1: column -1 is the label column here");
    dir.write("tag.toml", TAG_CONFIG.replace("column = 2", "column = 5"));
    train(&[]).user_error("train.tsv:1: the features read column 5 (tag), but the row has 3 columns");
    assert!(!dir.join("m.bin").exists(), "nothing written");
    // A bad config entry names its key.
    dir.write(
        "tag.toml",
        TAG_CONFIG.replace("ngrams = [[-1, 0]]", "ngrams = [[-1, 1]]"),
    );
    train(&[]).user_error("invalid columns[0].ngrams");
    dir.write("tag.toml", format!("{TAG_CONFIG}[[conjunctions]]\nname = \"x\"\nparts = [\"word\", \"pos\"]\n"));
    train(&[]).user_error(
        "invalid conjunctions[0].parts: \"pos\": unknown feature \"pos\"",
    );
    dir.write("tag.toml", format!("{TAG_CONFIG}colour = 1\n"));
    train(&[]).user_error("colour");
    assert!(!dir.join("m.bin").exists(), "nothing written");
}

/// The second stage reads the column the first stage's `tag` appended.
#[test]
fn a_predicted_column_feeds_a_second_model() {
    let dir = Dir::new();
    // Stage 1 learns the tags from the words (a word's tag is fixed by
    // its number), stage 2 the labels from the predicted tags.
    let words_to_tags = |text: &str| -> String {
        text.lines()
            .map(|l| match l.split('\t').collect::<Vec<_>>()[..] {
                [w, _, label] => {
                    let n: u32 = w[1..].parse().unwrap();
                    format!(
                        "{w}\t{}\t{label}\n",
                        if n % 2 == 0 { "a" } else { "b" }
                    )
                }
                _ => "\n".to_string(),
            })
            .collect()
    };
    // Relabel: with tags fixed by the words, Y where consecutive words
    // have the same parity.
    let relabel = |text: &str| -> String {
        let mut last = None;
        text.lines()
            .map(|l| match l.split('\t').collect::<Vec<_>>()[..] {
                [w, t, _] => {
                    let label =
                        if last == Some(t.to_string()) { "Y" } else { "N" };
                    last = Some(t.to_string());
                    format!("{w}\t{t}\t{label}\n")
                }
                _ => {
                    last = None;
                    "\n".to_string()
                }
            })
            .collect()
    };
    let train = relabel(&words_to_tags(&tag_fixture(200, 4)));
    let test = relabel(&words_to_tags(&tag_fixture(40, 5)));
    // Stage 1 trains on token and tag; stage 2 on token, label and the
    // predicted tag, as `tag` writes them.
    let first: String = train
        .lines()
        .map(|l| match l.rsplit_once('\t') {
            Some((token_and_tag, _)) => format!("{token_and_tag}\n"),
            None => "\n".to_string(),
        })
        .collect();
    dir.write("stage1.tsv", first);
    lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "stage1.tsv",
            "--model",
            "pos.bin",
            "--scheme",
            "none",
            "--epochs",
            "3",
            "-q",
        ],
    )
    .ok();
    // Drop the gold tags: token and label only, then append predictions.
    let strip = |text: &str| -> String {
        text.lines()
            .map(|l| match l.split('\t').collect::<Vec<_>>()[..] {
                [w, _, label] => format!("{w}\t{label}\n"),
                _ => "\n".to_string(),
            })
            .collect()
    };
    dir.write("train2.tsv", strip(&train));
    dir.write("test2.tsv", strip(&test));
    for part in ["train2", "test2"] {
        lexiclade(
            dir.path(),
            &[
                "tag",
                "--model",
                "pos.bin",
                &format!("{part}.tsv"),
                "--out",
                &format!("{part}.tagged"),
            ],
        )
        .ok();
    }
    let first_row = dir.read("train2.tagged");
    assert_eq!(
        first_row.lines().next().unwrap().split('\t').count(),
        3,
        "token, label, predicted tag"
    );
    dir.write("ner.toml", TAG_CONFIG.replace("column = 2", "column = 3"));
    lexiclade(
        dir.path(),
        &[
            "train",
            "--train",
            "train2.tagged",
            "--model",
            "ner.bin",
            "--config",
            "ner.toml",
            "--label-column",
            "2",
            "--epochs",
            "5",
            "-q",
        ],
    )
    .ok();
    // Stage 2 tags the tagged test file (token, gold label, predicted
    // tag) and appends its label; eval reads the last two columns, so
    // put the gold label before the prediction.
    lexiclade(
        dir.path(),
        &["tag", "--model", "ner.bin", "test2.tagged", "--out", "test2.pred"],
    )
    .ok();
    let rows: String = dir
        .read("test2.pred")
        .lines()
        .map(|l| match l.split('\t').collect::<Vec<_>>()[..] {
            [w, gold, _, pred] => format!("{w}\t{gold}\t{pred}\n"),
            _ => "\n".to_string(),
        })
        .collect();
    dir.write("scored.tsv", rows);
    assert!(token_accuracy(&dir, "scored.tsv") > 0.99);
}
