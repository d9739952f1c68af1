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
    other[8] = 99;
    dir.write("v2.bin", &other);
    dir.write("text.bin", "not a model\n");
    let tag = |model: &str| {
        lexiclade(dir.path(), &["tag", "--model", model, "test.conll"])
    };
    tag("cut.bin").user_error("cut.bin: truncated model file");
    tag("flipped.bin").user_error("checksum mismatch");
    tag("v2.bin").user_error("model format version 99 is not supported");
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
