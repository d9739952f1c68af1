//! Normalising words before counting and the same way before look-ups:
//! `--nfc` on `cluster` and `count`, whole-word `--lowercase`.

use crate::util::{lexiclade, Dir};

/// A small text where "café" is spelt composed and decomposed, and the
/// Greek word σοφος in capitals.
fn setup() -> Dir {
    let dir = Dir::new();
    let mut text = String::new();
    for k in 0..30 {
        let cafe = if k % 2 == 0 { "caf\u{e9}" } else { "cafe\u{301}" };
        text.push_str(&format!("the {cafe} was open\nthe shop was shut\n"));
        text.push_str("ΣΟΦΟΣ said so\nσοφος said no\n");
    }
    dir.write("raw.txt", text);
    dir.write("f.toml", "[clusters]\nprefix_lengths = [2]\n");
    dir
}

fn summary(dir: &Dir, out: &str) -> serde_json::Value {
    serde_json::from_str(&dir.read(&format!("{out}/summary.json"))).unwrap()
}

fn words(dir: &Dir, out: &str) -> Vec<String> {
    dir.read(&format!("{out}/clusters.tsv"))
        .lines()
        .skip(1)
        .map(|l| l.split('\t').next().unwrap().to_string())
        .collect()
}

#[test]
fn nfc_makes_one_word_of_two_spellings_and_is_recorded() {
    let dir = setup();
    let run = |extra: &[&str], out: &str| {
        let mut args = vec!["cluster", "raw.txt", "--classes", "3", "-q"];
        args.extend(["--out", out]);
        args.extend(extra);
        lexiclade(dir.path(), &args).ok();
    };
    run(&[], "plain");
    run(&["--nfc"], "nfc");
    let (plain, nfc) = (words(&dir, "plain"), words(&dir, "nfc"));
    assert!(plain.contains(&"cafe\u{301}".to_string()));
    assert!(plain.contains(&"caf\u{e9}".to_string()));
    assert!(nfc.contains(&"caf\u{e9}".to_string()));
    assert!(!nfc.contains(&"cafe\u{301}".to_string()));
    assert_eq!(plain.len(), nfc.len() + 1);
    assert_eq!(summary(&dir, "plain")["nfc"], false);
    assert_eq!(summary(&dir, "nfc")["nfc"], true);
    let shown = lexiclade(dir.path(), &["show", "nfc"]).ok().stdout;
    assert!(shown.contains("NFC"), "{shown}");
    let shown = lexiclade(dir.path(), &["show", "plain"]).ok().stdout;
    assert!(!shown.contains("NFC"), "{shown}");

    // The feature look-up puts words in NFC too: the decomposed spelling
    // finds the composed word's path.
    dir.write("t.conll", "cafe\u{301}\tO\n");
    let feats = |clusters: &str| {
        lexiclade(
            dir.path(),
            &[
                "featurize",
                "t.conll",
                "--config",
                "f.toml",
                "--clusters",
                clusters,
            ],
        )
        .ok()
        .stdout
    };
    assert!(feats("nfc").contains("p2[0]="), "{}", feats("nfc"));

    // Count files record the flag, and files counted otherwise are
    // refused together.
    lexiclade(
        dir.path(),
        &["count", "raw.txt", "--nfc", "--out", "n.tsv", "-q"],
    )
    .ok();
    assert!(dir.read("n.tsv").contains("meta\tnfc\ttrue\t\n"));
    lexiclade(dir.path(), &["count", "raw.txt", "--out", "p.tsv", "-q"]).ok();
    assert!(dir.read("p.tsv").contains("meta\tnfc\tfalse\t\n"));
    lexiclade(
        dir.path(),
        &["cluster", "--counts", "n.tsv", "p.tsv", "--out", "x"],
    )
    .user_error("p.tsv: counted with other flags than");
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "--counts",
            "n.tsv",
            "--classes",
            "3",
            "--out",
            "from-counts",
            "-q",
        ],
    )
    .ok();
    assert_eq!(summary(&dir, "from-counts")["nfc"], true);
    assert_eq!(words(&dir, "from-counts"), nfc);
    // --nfc with --counts is refused: the flag comes from the files.
    let run = lexiclade(
        dir.path(),
        &["cluster", "--counts", "n.tsv", "--nfc", "--out", "y"],
    );
    assert_eq!(run.status, 2, "{}", run.stderr);
}

#[test]
fn lowercase_takes_whole_words_on_both_sides() {
    let dir = setup();
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "raw.txt",
            "--classes",
            "3",
            "--lowercase",
            "--out",
            "low",
            "-q",
        ],
    )
    .ok();
    let words = words(&dir, "low");
    assert!(words.contains(&"σοφος".to_string()), "{words:?}");
    assert!(!words.contains(&"σοφοσ".to_string()), "{words:?}");
    // The look-up lowercases the same way: the capitals find the path.
    dir.write("t.conll", "ΣΟΦΟΣ\tO\n");
    let out = lexiclade(
        dir.path(),
        &["featurize", "t.conll", "--config", "f.toml", "--clusters", "low"],
    )
    .ok()
    .stdout;
    assert!(out.contains("p2[0]="), "{out}");
}
