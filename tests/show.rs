//! `lexiclade show`: the overview, --word, --prefix, --svg and their
//! errors, on a small corpus with four clear classes.

use std::collections::HashMap;

use crate::util::{lexiclade, Dir};

/// Four word classes that follow each other in a cycle: determiner,
/// noun, verb, adverb, determiner, ...
const CLASSES: [&[&str]; 4] = [
    &["the", "a", "this"],
    &["cat", "dog", "bird", "fish"],
    &["sat", "ran", "slept"],
    &["quickly", "slowly", "loudly"],
];

/// 300 lines of 12 words walking the cycle, each word drawn from its
/// class by a seeded generator: the first word half the time, so the
/// most frequent four words are one of each class.
fn corpus() -> String {
    let mut state: u64 = 12345;
    let mut text = String::new();
    for line in 0..300 {
        let mut class = line % 4;
        for t in 0..12 {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let words = CLASSES[class];
            let pick = match (state >> 33) % 8 {
                0..=3 => 0,
                4 | 5 => 1,
                6 => 2,
                _ => words.len() - 1,
            };
            if t > 0 {
                text.push(' ');
            }
            text.push_str(words[pick.min(words.len() - 1)]);
            class = (class + 1) % 4;
        }
        text.push('\n');
    }
    text
}

/// One row of clusters.tsv.
struct Row {
    word: String,
    path: String,
    class: String,
    count: u64,
}

/// A clustered corpus in a temp dir: the directory is `out`.
fn clustered() -> (Dir, Vec<Row>) {
    let dir = Dir::new();
    dir.write("corpus.txt", corpus());
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "corpus.txt",
            "--out",
            "out",
            "--classes",
            "4",
            "--quiet",
        ],
    )
    .ok();
    let rows = dir
        .read("out/clusters.tsv")
        .lines()
        .skip(1)
        .map(|line| {
            let f: Vec<&str> = line.split('\t').collect();
            Row {
                word: f[0].to_string(),
                path: f[1].to_string(),
                class: f[2].to_string(),
                count: f[3].parse().unwrap(),
            }
        })
        .collect::<Vec<_>>();
    // The corpus is made so that each class is found whole.
    for class in CLASSES {
        let first = rows.iter().find(|r| r.word == class[0]).unwrap();
        for w in class {
            let r = rows.iter().find(|r| r.word == *w).unwrap();
            assert_eq!(r.class, first.class, "{w} is not with {}", class[0]);
        }
    }
    (dir, rows)
}

fn shared(a: &str, b: &str) -> usize {
    a.bytes().zip(b.bytes()).take_while(|(x, y)| x == y).count()
}

/// The cells of each line.
fn cells(text: &str) -> Vec<Vec<&str>> {
    text.lines().map(|l| l.split_whitespace().collect()).collect()
}

#[test]
fn word_lists_class_mates_first_then_by_shared_prefix() {
    let (dir, rows) = clustered();
    let run = lexiclade(dir.path(), &["show", "out", "--word", "cat"]).ok();
    assert_eq!(run.stderr, "");
    let cat = rows.iter().find(|r| r.word == "cat").unwrap();

    // The brute-force twin of the ordering: class-mates, then shared
    // prefix length, then count, then rank.
    let mut others: Vec<(usize, &Row)> =
        rows.iter().enumerate().filter(|(_, r)| r.word != "cat").collect();
    others.sort_by_key(|&(rank, r)| {
        (
            r.class != cat.class,
            std::cmp::Reverse(shared(&r.path, &cat.path)),
            std::cmp::Reverse(r.count),
            rank,
        )
    });
    let mut want = format!(
        "word   cat\npath   {}\nclass  {}\ncount  {}\n\n\
         the 10 words sharing the longest path prefix with \"cat\":\n",
        cat.path, cat.class, cat.count
    );
    let table: Vec<[String; 4]> = std::iter::once([
        "word".to_string(),
        "path".to_string(),
        "shared".to_string(),
        "count".to_string(),
    ])
    .chain(others[..10].iter().map(|(_, r)| {
        [
            r.word.clone(),
            r.path.clone(),
            shared(&r.path, &cat.path).to_string(),
            r.count.to_string(),
        ]
    }))
    .collect();
    let width = |c: usize| table.iter().map(|row| row[c].len()).max().unwrap();
    let (w0, w1, w2, w3) = (width(0), width(1), width(2), width(3));
    for row in &table {
        want += &format!(
            "{:<w0$}  {:<w1$}  {:>w2$}  {:>w3$}\n",
            row[0], row[1], row[2], row[3]
        );
    }
    assert_eq!(run.stdout, want);

    // And in words: the other three nouns lead, sharing the whole path.
    let lines = cells(&run.stdout);
    let first: Vec<&str> = lines[7..10].iter().map(|c| c[0]).collect();
    let mut nouns = first.clone();
    nouns.sort();
    assert_eq!(nouns, ["bird", "dog", "fish"]);
    for c in &lines[7..10] {
        assert_eq!(c[2], cat.path.len().to_string());
    }
    for c in &lines[10..] {
        assert!(c[2].parse::<usize>().unwrap() < cat.path.len());
    }
}

#[test]
fn several_words_and_a_short_count() {
    let (dir, _) = clustered();
    let run = lexiclade(
        dir.path(),
        &["show", "out", "--word", "the", "--word", "ran", "--count", "2"],
    )
    .ok();
    let sections: Vec<&str> = run.stdout.split("\n\nword ").collect();
    assert_eq!(sections.len(), 2, "{}", run.stdout);
    let lines = cells(&run.stdout);
    // word, path, class, count, blank, title, header, 2 rows; twice.
    assert_eq!(lines.len(), 2 * 9 + 1);
    let mates = |at: usize| {
        let mut w = vec![lines[at][0], lines[at + 1][0]];
        w.sort();
        w
    };
    assert_eq!(lines[0], ["word", "the"]);
    assert_eq!(mates(7), ["a", "this"]);
    assert_eq!(lines[10], ["word", "ran"]);
    assert_eq!(mates(17), ["sat", "slept"]);
}

#[test]
fn prefix_lists_words_by_count_and_how_many_more() {
    let (dir, rows) = clustered();
    let noun_path = &rows.iter().find(|r| r.word == "cat").unwrap().path;
    let run = lexiclade(
        dir.path(),
        &["show", "out", "--prefix", noun_path, "--count", "2"],
    )
    .ok();
    let mut nouns: Vec<&Row> =
        rows.iter().filter(|r| r.path == *noun_path).collect();
    nouns.sort_by_key(|r| std::cmp::Reverse(r.count)); // stable: by rank
    let (a, b) = (nouns[0], nouns[1]);
    let path_width = noun_path.len().max(4);
    let word_width = a.word.len().max(b.word.len()).max(4);
    let count_width = a.count.to_string().len().max(5);
    let row = |r: &Row| {
        format!(
            "{:<word_width$}  {:<path_width$}  {:>count_width$}\n",
            r.word, r.path, r.count
        )
    };
    let want = format!(
        "prefix {noun_path}: 4 words\n{}{}{}and 2 more words\n",
        format_args!(
            "{:<word_width$}  {:<path_width$}  {:>count_width$}\n",
            "word", "path", "count"
        ),
        row(a),
        row(b)
    );
    assert_eq!(run.stdout, want);

    // The root holds every word, a path no class has holds none.
    let run = lexiclade(
        dir.path(),
        &[
            "show", "out", "--prefix", "", "--prefix", "0000000", "--count",
            "0",
        ],
    )
    .ok();
    assert_eq!(
        run.stdout,
        "prefix \"\" (the root): 13 words\nand 13 more words\n\n\
         prefix 0000000: no words\n"
    );
}

#[test]
fn prefix_must_be_bits() {
    let (dir, _) = clustered();
    let run = lexiclade(dir.path(), &["show", "out", "--prefix", "01x"]);
    run.user_error(r#"--prefix "01x": expected a path of 0s and 1s"#);
}

#[test]
fn unknown_word_is_a_user_error_and_prints_nothing() {
    let (dir, _) = clustered();
    let run = lexiclade(
        dir.path(),
        &["show", "out", "--word", "cat", "--word", "zebra"],
    );
    assert_eq!(run.stdout, "");
    run.user_error(r#"out: no word "zebra" in clusters.tsv"#);
}

#[test]
fn overview_has_sizes_and_every_class() {
    let (dir, rows) = clustered();
    let run = lexiclade(dir.path(), &["show", "out"]).ok();
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines[0], "clusters in out");
    assert_eq!(lines[1], "words    13 clustered of 13 types (min count 1)");
    assert_eq!(lines[2], "tokens   3600 in 300 sentences, as given");
    assert_eq!(lines[3], "classes  4");
    assert!(lines[4].starts_with("AMI      ") && lines[4].ends_with(" bits"));
    assert_eq!(lines[6], "all 4 classes, by words:");
    assert_eq!(cells(lines[7])[0], ["class", "path", "words", "top", "words"]);
    // The nouns are the largest class; the other three tie at three
    // words and go by their most frequent word's rank.
    let class_of = |w: &str| rows.iter().find(|r| r.word == w).unwrap();
    let cat = class_of("cat");
    let mut top_nouns: Vec<&Row> =
        rows.iter().filter(|r| r.class == cat.class).collect();
    top_nouns.sort_by_key(|r| std::cmp::Reverse(r.count));
    let mut want = vec![cat.class.as_str(), cat.path.as_str(), "4"];
    want.extend(top_nouns.iter().map(|r| r.word.as_str()));
    assert_eq!(cells(lines[8])[0], want);
    assert_eq!(lines.len(), 12);
    let mut sizes: HashMap<&str, usize> = HashMap::new();
    for l in &lines[8..] {
        let c = cells(l).remove(0);
        sizes.insert(c[0], c[2].parse().unwrap());
        assert_eq!(c.len() - 3, c[2].parse::<usize>().unwrap());
    }
    assert_eq!(sizes.values().sum::<usize>(), 13);
}

#[test]
fn svg_draws_one_leaf_per_class() {
    let (dir, rows) = clustered();
    let run = lexiclade(
        dir.path(),
        &[
            "show",
            "out",
            "--svg",
            "tree.svg",
            "--levels",
            "6",
            "--leaf-words",
            "2",
        ],
    )
    .ok();
    assert_eq!(run.stdout, "");
    // Four classes make a tree shallower than 6 levels: the message says
    // how many were drawn.
    let depth = rows.iter().map(|r| r.path.len()).max().unwrap();
    assert!(depth < 6);
    assert_eq!(
        run.stderr,
        format!(
            "lexiclade: drew the top {depth} levels of the hierarchy into \
             tree.svg (--levels 6: the tree is no deeper)\n"
        )
    );
    let svg = dir.read("tree.svg");
    assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    // A title and four leaves, each the class's path, its two most
    // frequent words and its size.
    assert_eq!(svg.matches("<text").count(), 5, "{svg}");
    assert!(svg.contains("13 words in 4 classes"), "{svg}");
    for class in CLASSES {
        let first = rows.iter().find(|r| r.word == class[0]).unwrap();
        let mut members: Vec<&Row> =
            rows.iter().filter(|r| r.class == first.class).collect();
        members.sort_by_key(|r| std::cmp::Reverse(r.count));
        let label = format!(
            "{}: {} {} ({} words)",
            first.path,
            members[0].word,
            members[1].word,
            members.len()
        );
        assert!(svg.contains(&label), "{label:?} not in {svg}");
    }
    // The same again, to standard output, byte for byte.
    let again = lexiclade(
        dir.path(),
        &["show", "out", "--svg", "-", "--levels", "6", "--leaf-words", "2"],
    )
    .ok();
    assert_eq!(again.stdout, svg);
}

#[test]
fn svg_refuses_the_directory_own_files() {
    let (dir, _) = clustered();
    let before = dir.read("out/clusters.tsv");
    let run =
        lexiclade(dir.path(), &["show", "out", "--svg", "out/clusters.tsv"]);
    run.user_error("out/clusters.tsv: is a file of the cluster directory out");
    assert_eq!(dir.read("out/clusters.tsv"), before);
    // Also through another spelling of the same path.
    let run = lexiclade(
        dir.path(),
        &["show", "out", "--svg", "./out/../out/summary.json"],
    );
    run.user_error("is a file of the cluster directory out");
}

#[test]
fn levels_need_svg() {
    let (dir, _) = clustered();
    let run = lexiclade(dir.path(), &["show", "out", "--levels", "3"]);
    assert_eq!(run.status, 2);
    assert!(run.stderr.contains("--svg"), "{}", run.stderr);
}
