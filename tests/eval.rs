//! `lexiclade eval`: chunk-level scores checked against seqeval and
//! against the published WNUT 2017 results table, the output formats,
//! and bad input.

use std::path::Path;
use std::process::Command;

use serde_json::Value;

use crate::util::{lexiclade, lexiclade_stdin, python, repo_data, Dir};

/// The scores of `file` by seqeval 1.2.2 (`scripts/seqeval_check.py`).
fn seqeval(python: &Path, file: &Path) -> Value {
    let out = Command::new(python)
        .arg(crate::util::repo().join("scripts/seqeval_check.py"))
        .arg(file)
        .output()
        .expect("run seqeval_check.py");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("JSON from seqeval_check.py")
}

/// `lexiclade eval NAME --json` in `dir`, parsed.
fn eval_json(dir: &Dir, name: &str) -> Value {
    let run = lexiclade(dir.path(), &["eval", name, "--json"]).ok();
    serde_json::from_str(&run.stdout).expect("JSON from eval")
}

fn close(ours: &Value, theirs: &Value, what: &str) {
    let (a, b) = (ours.as_f64().unwrap(), theirs.as_f64().unwrap());
    assert!((a - b).abs() < 1e-9, "{what}: ours {a} vs seqeval {b}");
}

/// Every number seqeval gives equals ours: per type and overall
/// precision, recall, F1 and support, token accuracy, and the counts.
fn assert_matches_seqeval(ours: &Value, theirs: &Value, name: &str) {
    for key in ["sentences", "tokens"] {
        assert_eq!(ours[key], theirs[key], "{name}: {key}");
    }
    close(&ours["token_accuracy"], &theirs["token_accuracy"], name);
    let types = |v: &Value| -> Vec<String> {
        v["per_type"]
            .as_object()
            .map_or(vec![], |m| m.keys().cloned().collect())
    };
    assert_eq!(types(ours), types(theirs), "{name}: chunk types");
    let rows = types(theirs)
        .into_iter()
        .map(|t| {
            (ours["per_type"][&t].clone(), theirs["per_type"][&t].clone(), t)
        })
        .chain([(
            ours["overall"].clone(),
            theirs["overall"].clone(),
            "overall".to_string(),
        )]);
    for (a, b, kind) in rows {
        for key in ["precision", "recall", "f1"] {
            close(&a[key], &b[key], &format!("{name}: {kind} {key}"));
        }
        assert_eq!(a["support"], b["support"], "{name}: {kind} support");
    }
    assert_eq!(ours["gold_chunks"], theirs["overall"]["support"], "{name}");
}

/// Hand-written fixtures: file name, extra arguments, the file (token,
/// gold, predicted).
const FIXTURES: &[(&str, &[&str], &str)] = &[
    (
        // IOB1: I- at the sentence start and after O, B- between two
        // touching chunks of one type; a sentence-final chunk.
        "iob1.conll",
        &[],
        "John I-PER I-PER\nSmith I-PER I-PER\nmet O O\nMary I-PER I-PER\n\
         Ann B-PER I-PER\nin O O\nParis I-LOC I-LOC\n\n\
         Rome I-LOC I-ORG\nis O O\nbig O I-MISC\n\n\
         -DOCSTART- O O\n\n\
         EU I-ORG I-ORG\nrejects O O\nGerman I-MISC I-MISC\n\
         call O O\nby O O\nIBM I-ORG B-ORG\n",
    ),
    (
        // IOB2 with single-token chunks, a chunk type that appears only
        // in the predictions (MISC) and one that is never predicted (LOC).
        "iob2.conll",
        &[],
        "Ann B-PER B-PER\nsaw O O\nBob B-PER B-PER\nand O O\n\
         Cyd B-PER B-MISC\n.\tO\tO\n\n\
         at O O\nthe O B-MISC\nBig B-LOC O\nApple I-LOC O\n\n\
         Dan B-PER B-PER\nEve B-PER I-PER\n",
    ),
    (
        // Type changes inside a run, I- after O, I- after B- of another
        // type, broken boundaries.
        "mixed.conll",
        &[],
        "a B-PER B-PER\nb I-PER I-LOC\nc O O\nd O I-LOC\ne O I-LOC\n\n\
         f B-PER B-PER\ng I-LOC I-PER\nh I-LOC I-PER\n\n\
         i O O\nj I-ORG B-ORG\nk I-ORG I-ORG\nl B-ORG B-ORG\n",
    ),
    (
        // IOBES, with E- and S- rules, touching chunks and a
        // sentence-final chunk.
        "iobes.conll",
        &[],
        "a B-PER B-PER\nb I-PER I-PER\nc E-PER E-PER\nd S-LOC S-LOC\n\
         e O O\nf B-ORG S-ORG\ng E-ORG S-ORG\n\n\
         h S-PER B-PER\ni S-PER E-PER\nj O O\nk B-LOC B-LOC\nl E-LOC I-LOC\n\n\
         m O E-PER\nn O O\no S-MISC S-MISC\n",
    ),
    (
        // No gold chunks of any type: every prediction is wrong and
        // recall is 0/0. The gold column alone reads as scheme none.
        "no-gold.conll",
        &["--scheme", "iobes"],
        "a O B-PER\nb O I-PER\nc O O\n\nd O S-LOC\n",
    ),
];

#[test]
fn hand_written_fixtures_match_seqeval() {
    let Some(python) = python() else { return };
    let dir = Dir::new();
    for (name, extra, text) in FIXTURES {
        let path = dir.write(name, text);
        let mut args = vec!["eval", name, "--json"];
        args.extend(*extra);
        let run = lexiclade(dir.path(), &args).ok();
        let ours: Value = serde_json::from_str(&run.stdout).unwrap();
        let theirs = seqeval(&python, &path);
        assert_matches_seqeval(&ours, &theirs, name);
    }
}

/// SplitMix64 (Steele, Lea and Flood 2014): a seeded source for the
/// random fixture.
struct SplitMix(u64);

impl SplitMix {
    fn below(&mut self, n: u64) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        (z ^ (z >> 31)) % n
    }
}

/// Random gold labels from every prefix and a few types (some
/// hyphenated), and predictions that copy them 70% of the time, so that
/// every rule of chunk reading is exercised in many combinations.
#[test]
fn random_labels_match_seqeval() {
    let Some(python) = python() else { return };
    const LABELS: [&str; 14] = [
        "O",
        "O",
        "O",
        "B-PER",
        "I-PER",
        "E-PER",
        "S-PER",
        "B-LOC",
        "I-LOC",
        "E-LOC",
        "I-ORG",
        "S-ORG",
        "B-creative-work",
        "I-creative-work",
    ];
    let dir = Dir::new();
    for seed in [1, 2, 3] {
        let mut rng = SplitMix(seed);
        let mut text = String::new();
        for s in 0..400 {
            if s > 0 {
                text.push('\n');
            }
            for t in 0..1 + rng.below(12) {
                let gold = LABELS[rng.below(LABELS.len() as u64) as usize];
                let pred = if rng.below(10) < 7 {
                    gold
                } else {
                    LABELS[rng.below(LABELS.len() as u64) as usize]
                };
                text.push_str(&format!("w{t}\t{gold}\t{pred}\n"));
            }
        }
        let name = format!("random-{seed}.conll");
        let path = dir.write(&name, &text);
        let ours = eval_json(&dir, &name);
        assert_matches_seqeval(&ours, &seqeval(&python, &path), &name);
    }
}

/// The sentences of a column file as rows of cells, read independently of
/// lexiclade: CRLF, spaces or tabs, blank lines between sentences.
fn read_rows(path: &Path) -> Vec<Vec<Vec<String>>> {
    let text = std::fs::read_to_string(path).expect("read shared data");
    let mut sentences = vec![];
    let mut current = vec![];
    for line in text.lines() {
        let cells: Vec<String> = line
            .split([' ', '\t', '\r'])
            .filter(|c| !c.is_empty())
            .map(String::from)
            .collect();
        if cells.is_empty() {
            if !current.is_empty() {
                sentences.push(std::mem::take(&mut current));
            }
        } else {
            current.push(cells);
        }
    }
    if !current.is_empty() {
        sentences.push(current);
    }
    sentences
}

/// The overall entity F1 (percent) of the seven WNUT 2017 systems, from
/// the results table of Derczynski, Nichols, van Erp and Limsopatham
/// (2017), "Results of the WNUT2017 Shared Task on Novel and Emerging
/// Entity Recognition"; seqeval 1.2.2 gives the same figures.
const WNUT17: [(&str, f64); 7] = [
    ("arcada", 39.98),
    ("drexel_cci", 26.30),
    ("flytxt", 38.35),
    ("mic-cis", 37.06),
    ("sjtu_adapt", 40.42),
    ("spinningbytes", 40.78),
    ("uh_ritual", 41.86),
];

/// Submissions whose tokens are not those of the test file. mic-cis's
/// output carries its system's normalised tokens (`gt` as `get`, `s` as
/// `is`, URLs as `url`) on exactly this many rows, with the test file's
/// sentence and row structure; anything else differing fails the check.
const REWRITTEN_TOKENS: [(&str, usize); 1] = [("mic-cis", 1283)];

#[test]
fn wnut17_submissions_reproduce_the_published_table() {
    let gold = read_rows(&repo_data("wnut17/test.conll"));
    assert_eq!(gold.len(), 1287, "sentences of test.conll");
    let dir = Dir::new();
    for (team, published) in WNUT17 {
        let file = repo_data(&format!("wnut17/submissions/{team}.conll"));
        let pred = read_rows(&file);
        assert_eq!(
            pred.len(),
            gold.len(),
            "{team}: {} sentences, test.conll has {}",
            pred.len(),
            gold.len()
        );
        let mut text = String::new();
        let mut rewritten = 0;
        for (s, (g, p)) in gold.iter().zip(&pred).enumerate() {
            assert_eq!(
                g.len(),
                p.len(),
                "{team}: sentence {} has {} rows, test.conll's has {}",
                s + 1,
                p.len(),
                g.len()
            );
            for (r, (g, p)) in g.iter().zip(p).enumerate() {
                assert!(
                    g.len() == 2 && p.len() == 2,
                    "{team}: sentence {} row {}: {g:?} vs {p:?}",
                    s + 1,
                    r + 1
                );
                if g[0] != p[0] {
                    rewritten += 1;
                }
                text.push_str(&format!("{}\t{}\t{}\n", g[0], g[1], p[1]));
            }
            text.push('\n');
        }
        let allowed = REWRITTEN_TOKENS
            .iter()
            .find(|(t, _)| *t == team)
            .map_or(0, |&(_, n)| n);
        assert_eq!(
            rewritten, allowed,
            "{team}: {rewritten} rows whose token differs from test.conll"
        );
        let name = format!("{team}.conll");
        dir.write(&name, text);
        let report = eval_json(&dir, &name);
        assert_eq!(report["scheme"], "iob2", "{team}");
        assert_eq!(report["gold_chunks"], 1079, "{team}");
        let f1 = 100.0 * report["overall"]["f1"].as_f64().unwrap();
        assert!(
            (f1 - published).abs() < 0.005 + 1e-9,
            "{team}: F1 {f1:.4} vs published {published:.2}"
        );
    }
}

const SMALL: &str = "\
EU B-ORG B-ORG
rejects O O
German B-MISC B-PER
call O O

Peter B-PER B-PER
Blackburn I-PER I-PER
";

#[test]
fn prints_an_aligned_table() {
    let dir = Dir::new();
    dir.write("t.conll", SMALL);
    let run = lexiclade(dir.path(), &["eval", "t.conll"]).ok();
    let want = "\
scheme iob2: 2 sentences, 6 tokens

type     precision     recall         f1    support  predicted    correct
MISC          0.00       0.00       0.00          1          0          0
ORG         100.00     100.00     100.00          1          1          1
PER          50.00     100.00      66.67          1          2          1
overall      66.67      66.67      66.67          3          3          2

token accuracy   83.33%
";
    assert_eq!(run.stdout, want);
    assert_eq!(run.stderr, "");
}

#[test]
fn json_has_the_documented_fields() {
    let dir = Dir::new();
    dir.write("t.conll", SMALL);
    let json = eval_json(&dir, "t.conll");
    assert_eq!(json["format_version"], 1);
    assert_eq!(json["scheme"], "iob2");
    assert_eq!(json["sentences"], 2);
    assert_eq!(json["tokens"], 6);
    assert_eq!(json["gold_chunks"], 3);
    assert_eq!(json["predicted_chunks"], 3);
    assert_eq!(json["overall"]["precision"], 2.0 / 3.0);
    assert_eq!(json["per_type"]["PER"]["precision"], 0.5);
    assert_eq!(json["per_type"]["PER"]["support"], 1);
    assert_eq!(json["token_accuracy"], 5.0 / 6.0);
    assert!(json.get("oov_accuracy").is_none());
}

#[test]
fn train_adds_oov_accuracy() {
    let dir = Dir::new();
    dir.write("t.conll", SMALL);
    // Training words: EU, call, Peter (and "german", another case).
    dir.write("train.conll", "EU B-ORG\ncall O\n\nPeter B-PER\ngerman O\n");
    let run = lexiclade(
        dir.path(),
        &["eval", "t.conll", "--train", "train.conll", "--json"],
    )
    .ok();
    let json: Value = serde_json::from_str(&run.stdout).unwrap();
    // OOV: rejects (right), German (wrong), Blackburn (right).
    assert_eq!(json["oov_tokens"], 3);
    assert_eq!(json["oov_accuracy"], 2.0 / 3.0);
    assert_eq!(json["oov_share"], 0.5);
    let table =
        lexiclade(dir.path(), &["eval", "t.conll", "--train", "train.conll"])
            .ok();
    assert!(
        table.stdout.ends_with(
            "token accuracy   83.33%\n\
             OOV accuracy     66.67%  (3 tokens, 50.00% of all)\n"
        ),
        "{}",
        table.stdout
    );
}

#[test]
fn scheme_is_detected_or_overridden() {
    let dir = Dir::new();
    dir.write("iob1.conll", "a I-X I-X\nb O O\n");
    dir.write("iobes.conll", "a S-X S-X\nb O O\n");
    dir.write("pos.conll", "a DT DT\nb NN VB\n");
    assert_eq!(eval_json(&dir, "iob1.conll")["scheme"], "iob1");
    assert_eq!(eval_json(&dir, "iobes.conll")["scheme"], "iobes");
    let pos = eval_json(&dir, "pos.conll");
    assert_eq!(pos["scheme"], "none");
    assert!(pos.get("overall").is_none());
    assert_eq!(pos["token_accuracy"], 0.5);
    let run = lexiclade(
        dir.path(),
        &["eval", "iob1.conll", "--scheme", "none", "--json"],
    )
    .ok();
    let json: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(json["scheme"], "none");
    assert!(json.get("overall").is_none());
    let run = lexiclade(
        dir.path(),
        &["eval", "iob1.conll", "--scheme", "bio", "--json"],
    )
    .ok();
    let json: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(json["scheme"], "iob2");
    assert_eq!(json["overall"]["f1"], 1.0);
    let run = lexiclade(dir.path(), &["eval", "pos.conll", "--scheme", "x"]);
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(run.stderr.contains("unknown tag scheme"), "{}", run.stderr);
}

#[test]
fn crlf_bom_stdin_and_two_columns_read_the_same() {
    let dir = Dir::new();
    dir.write("lf.conll", SMALL);
    let crlf = format!("\u{feff}{}", SMALL.replace('\n', "\r\n"));
    dir.write("crlf.conll", crlf.trim_end());
    let two: String = SMALL
        .lines()
        .map(|l| l.split_once(' ').map_or("", |(_, rest)| rest).to_string())
        .map(|l| l + "\n")
        .collect();
    dir.write("two.conll", two);
    let want = eval_json(&dir, "lf.conll");
    assert_eq!(eval_json(&dir, "crlf.conll"), want);
    assert_eq!(eval_json(&dir, "two.conll"), want);
    let run = lexiclade_stdin(
        dir.path(),
        &["eval", "-", "--json"],
        SMALL.as_bytes(),
    )
    .ok();
    assert_eq!(serde_json::from_str::<Value>(&run.stdout).unwrap(), want);
}

#[test]
fn a_type_only_predicted_is_scored() {
    let dir = Dir::new();
    dir.write("t.conll", "a B-PER B-NEW\nb O I-NEW\nc B-PER B-PER\n");
    let json = eval_json(&dir, "t.conll");
    let new = &json["per_type"]["NEW"];
    assert_eq!(new["support"], 0);
    assert_eq!(new["predicted"], 1);
    assert_eq!(
        (new["precision"].as_f64(), new["f1"].as_f64()),
        (Some(0.0), Some(0.0))
    );
    assert_eq!(json["per_type"]["PER"]["recall"], 0.5);
}

#[test]
fn bad_input_is_one_line_and_exit_2() {
    let dir = Dir::new();
    dir.write("empty.conll", "\n \n");
    lexiclade(dir.path(), &["eval", "empty.conll"])
        .user_error("lexiclade: empty.conll: no token rows");
    dir.write("cols.conll", "a B-X B-X\nb O O\n\nc O O\nd O\n");
    lexiclade(dir.path(), &["eval", "cols.conll"]).user_error(
        "cols.conll:5: 2 columns, but the sentence's first row (line 4) \
         has 3",
    );
    dir.write("utf8.conll", b"a O O\nb\xff O O\n");
    lexiclade(dir.path(), &["eval", "utf8.conll"])
        .user_error("utf8.conll:2: invalid UTF-8");
    dir.write("one.conll", "a\nb\n");
    lexiclade(dir.path(), &["eval", "one.conll"]).user_error(
        "one.conll:1: eval needs a gold and a predicted label column (the \
         last two), found 1 column",
    );
    dir.write("two.conll", "O O\n");
    lexiclade(dir.path(), &["eval", "two.conll", "--train", "two.conll"])
        .user_error(
            "two.conll:1: with --train or --model, eval needs a token column",
        );
    lexiclade(dir.path(), &["eval", "missing.conll"])
        .user_error("lexiclade: missing.conll: ");
    dir.write("t.conll", SMALL);
    lexiclade(dir.path(), &["eval", "t.conll", "--train", "nope.conll"])
        .user_error("lexiclade: nope.conll: ");
    lexiclade(dir.path(), &["eval", "t.conll", "--train", "utf8.conll"])
        .user_error("utf8.conll:2: invalid UTF-8");
}

#[test]
fn gold_without_chunks_gives_a_notice() {
    let dir = Dir::new();
    dir.write("t.conll", "a O B-PER\nb O O\n");
    let run = lexiclade(dir.path(), &["eval", "t.conll", "--json"]).ok();
    let json: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(json["scheme"], "none");
    assert!(run.stderr.contains("give --scheme"), "{}", run.stderr);
    let run =
        lexiclade(dir.path(), &["eval", "t.conll", "--scheme", "iob2"]).ok();
    assert_eq!(run.stderr, "");
    assert!(run.stdout.contains("\noverall"), "{}", run.stdout);
}
