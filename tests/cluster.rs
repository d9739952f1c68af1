//! `lexiclade cluster`: inputs, outputs, errors and determinism.

use std::collections::HashMap;
use std::io::Write;

use crate::util::{lexiclade, lexiclade_stdin, Dir};

const TEXT: &str = "the cat sat on the mat\nthe dog sat on the rug\n\
                    a cat ran to the door\na dog ran to the gate\n";

fn rows(tsv: &str) -> Vec<Vec<String>> {
    tsv.lines()
        .skip(1)
        .map(|l| l.split('\t').map(String::from).collect())
        .collect()
}

#[test]
fn writes_the_three_files_and_timing() {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    lexiclade(
        dir.path(),
        &["cluster", "t.txt", "--out", "o", "--classes", "4", "--quiet"],
    )
    .ok();
    let clusters = dir.read("o/clusters.tsv");
    assert!(clusters.starts_with("word\tpath\tclass\tcount\n"));
    let rows = rows(&clusters);
    assert_eq!(rows.len(), 12);
    // Ranked by count, then bytes: "the" (6) first, then "cat dog on ran
    // sat to" (2 each) in byte order.
    let words: Vec<&str> = rows.iter().map(|r| r[0].as_str()).collect();
    assert_eq!(
        &words[..8],
        ["the", "a", "cat", "dog", "on", "ran", "sat", "to"]
    );
    assert_eq!(rows[0][3], "6");
    // Four classes, their paths distinct and prefix-free, one per class.
    let mut path_of_class = HashMap::new();
    for r in &rows {
        let old = path_of_class.insert(r[2].clone(), r[1].clone());
        assert!(old.is_none() || old.as_ref() == Some(&r[1]));
    }
    assert_eq!(path_of_class.len(), 4);
    let paths: Vec<&String> = path_of_class.values().collect();
    for a in &paths {
        for b in &paths {
            assert!(
                a == b || !b.starts_with(a.as_str()),
                "{a} is a prefix of {b}"
            );
        }
    }
    let merges = dir.read("o/merges.tsv");
    assert!(merges.starts_with("step\tchild0\tchild1\tparent\tami_bits\n"));
    assert_eq!(merges.lines().count(), 12);
    let summary: serde_json::Value =
        serde_json::from_str(&dir.read("o/summary.json")).unwrap();
    assert_eq!(summary["format_version"], 1);
    assert_eq!(summary["tokens"], 24);
    assert_eq!(summary["sentences"], 4);
    assert_eq!(summary["types"], 12);
    assert_eq!(summary["clustered_types"], 12);
    assert_eq!(summary["classes"], 4);
    let timing: serde_json::Value =
        serde_json::from_str(&dir.read("o/timing.json")).unwrap();
    assert!(timing["total_seconds"].as_f64().unwrap() >= 0.0);
    // Nothing else is left beside the output.
    let mut names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    assert_eq!(names, ["o", "t.txt"]);
}

#[test]
fn crlf_bom_gzip_stdin_and_directories_read_the_same() {
    let dir = Dir::new();
    dir.write("plain.txt", TEXT);
    let crlf = format!("\u{feff}{}", TEXT.replace('\n', "\r\n"));
    dir.write("crlf.txt", crlf.trim_end_matches("\r\n"));
    let mut gz = flate2_free_gzip(TEXT.as_bytes());
    dir.write("t.txt.gz", &mut gz);
    std::fs::create_dir(dir.join("corpus")).unwrap();
    let half = TEXT.find("a cat").unwrap();
    std::fs::write(dir.join("corpus/1.txt"), &TEXT[..half]).unwrap();
    std::fs::write(dir.join("corpus/2.txt"), &TEXT[half..]).unwrap();
    let args = ["--classes", "3", "--quiet"];
    let run = |input: &str, out: &str| {
        let mut all = vec!["cluster", input, "--out", out];
        all.extend(args);
        lexiclade(dir.path(), &all).ok();
        dir.read(&format!("{out}/clusters.tsv"))
    };
    let want = run("plain.txt", "a");
    assert_eq!(run("crlf.txt", "b"), want);
    assert_eq!(run("t.txt.gz", "c"), want);
    assert_eq!(run("corpus", "d"), want);
    let mut all = vec!["cluster", "-", "--out", "e"];
    all.extend(args);
    lexiclade_stdin(dir.path(), &all, TEXT.as_bytes()).ok();
    assert_eq!(dir.read("e/clusters.tsv"), want);
}

/// A gzip member with stored (uncompressed) deflate blocks, so the test
/// needs no compressor: RFC 1952 header, RFC 1951 stored blocks, CRC-32
/// and length trailer.
fn flate2_free_gzip(data: &[u8]) -> Vec<u8> {
    let mut out = vec![0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 255];
    let chunks: Vec<&[u8]> = data.chunks(65_535).collect();
    for (k, chunk) in chunks.iter().enumerate() {
        out.push(u8::from(k + 1 == chunks.len()));
        let len = chunk.len() as u16;
        out.extend(len.to_le_bytes());
        out.extend((!len).to_le_bytes());
        out.extend(*chunk);
    }
    let mut crc = 0xffff_ffffu32;
    for &b in data {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc =
                if crc & 1 == 1 { (crc >> 1) ^ 0xedb8_8320 } else { crc >> 1 };
        }
    }
    out.extend((!crc).to_le_bytes());
    out.extend((data.len() as u32).to_le_bytes());
    out
}

#[test]
fn tokenize_and_lowercase_are_recorded_and_applied() {
    let dir = Dir::new();
    dir.write("t.txt", "Mail me at ann@example.org, or @ann!\nThe end.\n");
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "t.txt",
            "--out",
            "o",
            "--tokenize",
            "--lowercase",
            "--quiet",
        ],
    )
    .ok();
    let words: Vec<String> = rows(&dir.read("o/clusters.tsv"))
        .into_iter()
        .map(|r| r[0].clone())
        .collect();
    for w in ["ann@example.org", "@ann", ",", "!", ".", "the", "mail"] {
        assert!(words.contains(&w.to_string()), "{w} missing from {words:?}");
    }
    let summary = dir.read("o/summary.json");
    assert!(
        summary.contains("\"tokenize\": true")
            && summary.contains("\"lowercase\": true")
    );
}

#[test]
fn min_count_and_lowered_classes() {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    let run = lexiclade(
        dir.path(),
        &[
            "cluster",
            "t.txt",
            "--out",
            "o",
            "--min-count",
            "2",
            "--classes",
            "50",
        ],
    )
    .ok();
    assert!(
        run.stderr.contains("--classes 50 lowered to 8"),
        "{}",
        run.stderr
    );
    let rows = rows(&dir.read("o/clusters.tsv"));
    assert_eq!(rows.len(), 8);
    assert!(rows.iter().all(|r| r[3].parse::<u64>().unwrap() >= 2));
    let summary = dir.read("o/summary.json");
    assert!(
        summary.contains("\"types\": 12")
            && summary.contains("\"clustered_types\": 8")
    );
}

#[test]
fn bad_input_is_a_one_line_error_with_exit_code_2() {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    dir.write("empty.txt", "");
    dir.write("blank.txt", "\n  \n\t\n");
    dir.write("bad.txt", b"fine line\nsecond\nthird \xff\xfe bytes\n");
    let cluster = |args: &[&str]| {
        let mut all = vec!["cluster"];
        all.extend(args);
        lexiclade(dir.path(), &all)
    };
    cluster(&["empty.txt", "--out", "o"])
        .user_error("empty.txt: no tokens to cluster");
    cluster(&["blank.txt", "--out", "o"]).user_error("no tokens");
    cluster(&["bad.txt", "--out", "o"]).user_error("bad.txt:3: invalid UTF-8");
    cluster(&["missing.txt", "--out", "o"]).user_error("missing.txt");
    cluster(&["t.txt", "--out", "o", "--classes", "1"])
        .user_error("at least 2");
    cluster(&["t.txt", "--out", "t.txt"])
        .user_error("would overwrite the input");
    cluster(&["t.txt", "--out", "o", "--threads", "0"])
        .user_error("--threads");
    dir.write("one.txt", "same same same\n");
    cluster(&["one.txt", "--out", "o"])
        .user_error("at least 2 distinct words");
    // None of these left an output or a temporary directory behind.
    let mut names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    assert_eq!(
        names,
        ["bad.txt", "blank.txt", "empty.txt", "one.txt", "t.txt"]
    );
}

#[test]
fn existing_output_needs_force_and_stays_intact_on_failure() {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    std::fs::create_dir(dir.join("o")).unwrap();
    dir.write("o/keep.txt", "precious");
    lexiclade(dir.path(), &["cluster", "t.txt", "--out", "o"])
        .user_error("--force");
    dir.write("bad.txt", b"\xff\n");
    lexiclade(dir.path(), &["cluster", "bad.txt", "--out", "o", "--force"])
        .user_error("invalid UTF-8");
    assert_eq!(dir.read("o/keep.txt"), "precious");
    lexiclade(
        dir.path(),
        &["cluster", "t.txt", "--out", "o", "--force", "--quiet"],
    )
    .ok();
    assert!(!dir.join("o/keep.txt").exists());
    assert!(dir.join("o/clusters.tsv").exists());
    // An output that is a file is refused, even with --force.
    dir.write("file", "x");
    lexiclade(dir.path(), &["cluster", "t.txt", "--out", "file", "--force"])
        .user_error("file: exists and is not a directory");
    // An empty directory is fine without --force.
    std::fs::create_dir(dir.join("empty")).unwrap();
    lexiclade(dir.path(), &["cluster", "t.txt", "--out", "empty", "--quiet"])
        .ok();
}

#[test]
fn long_lines_are_normal_input() {
    let dir = Dir::new();
    let mut line = String::new();
    // A 10 MB line, tabs and spaces mixed.
    for k in 0..5_000_000 {
        line.push_str(["x", "y", "z", "w"][k % 4]);
        line.push(if k % 7 == 0 { '\t' } else { ' ' });
    }
    let mut file = std::fs::File::create(dir.join("long.txt")).unwrap();
    writeln!(file, "{line}").unwrap();
    write!(file, "x y").unwrap();
    drop(file);
    lexiclade(
        dir.path(),
        &["cluster", "long.txt", "--out", "o", "--classes", "2", "--quiet"],
    )
    .ok();
    assert!(dir.read("o/summary.json").contains("\"tokens\": 5000002"));
}

#[test]
fn help_explains_every_option() {
    let dir = Dir::new();
    let run = lexiclade(dir.path(), &["cluster", "--help"]).ok();
    for flag in [
        "--out",
        "--classes",
        "--min-count",
        "--tokenize",
        "--lowercase",
        "--threads",
        "--force",
        "--quiet",
        "--exchange-passes",
        "--exchange-min-gain",
    ] {
        assert!(run.stdout.contains(flag), "{flag} missing from --help");
    }
}

/// An interrupt (SIGINT), SIGTERM or SIGHUP leaves the previous output
/// as it was, no temporary directory behind, and exit code 130, 143 or
/// 129.
#[test]
#[cfg(unix)]
fn interrupt_leaves_previous_output_and_no_temporary_files() {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    lexiclade(
        dir.path(),
        &["cluster", "t.txt", "--out", "o", "--classes", "3", "-q"],
    )
    .ok();
    let before = dir.read("o/clusters.tsv");
    // A corpus big enough that clustering takes a few seconds.
    let mut big = std::fs::File::create(dir.join("big.txt")).unwrap();
    lexiclade::synth::ZipfCorpus::new(20_000, 3_000_000, 1)
        .write_to(&mut big)
        .unwrap();
    drop(big);
    for (signal, code) in crate::util::STOP_SIGNALS {
        crate::util::stop(
            dir.path(),
            &[
                "cluster",
                "big.txt",
                "--out",
                "o",
                "--classes",
                "500",
                "--force",
                "-q",
            ],
            std::time::Duration::from_millis(1500),
            signal,
            code,
        );
        assert_eq!(dir.read("o/clusters.tsv"), before);
        let mut names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .collect();
        names.sort();
        assert_eq!(names, ["big.txt", "o", "t.txt"], "{signal}");
    }
}

/// Counting shards and clustering the summed counts gives the same files
/// as clustering the text (summary, classes and merges byte for byte).
#[test]
fn clustering_counts_equals_clustering_text() {
    let dir = Dir::new();
    let text = lexiclade::demo::corpus(600, 3);
    let half = text.len() / 2;
    let cut = half + text[half..].find('\n').unwrap() + 1;
    dir.write("all.txt", &text);
    dir.write("a.txt", &text[..cut]);
    dir.write("b.txt", &text[cut..]);
    let args = ["--classes", "12", "--min-count", "2", "-q"];
    let run = |extra: &[&str]| {
        let mut all = vec!["cluster"];
        all.extend(extra);
        all.extend(args);
        lexiclade(dir.path(), &all).ok();
    };
    run(&["all.txt", "--out", "from-text"]);
    lexiclade(dir.path(), &["count", "a.txt", "--out", "a.counts", "-q"]).ok();
    lexiclade(dir.path(), &["count", "b.txt", "--out", "b.counts", "-q"]).ok();
    run(&["--counts", "a.counts", "b.counts", "--out", "from-counts"]);
    for file in ["clusters.tsv", "merges.tsv", "summary.json"] {
        assert!(
            dir.read(&format!("from-text/{file}"))
                == dir.read(&format!("from-counts/{file}")),
            "{file} differs"
        );
    }
    // Files counted with other flags are refused, and so are text flags.
    lexiclade(
        dir.path(),
        &["count", "b.txt", "--out", "low.counts", "--lowercase", "-q"],
    )
    .ok();
    lexiclade(
        dir.path(),
        &["cluster", "--counts", "a.counts", "low.counts", "--out", "x"],
    )
    .user_error("other flags");
    let refused = lexiclade(
        dir.path(),
        &["cluster", "--counts", "a.counts", "--tokenize", "--out", "x"],
    );
    assert_eq!(refused.status, 2);
    // A count file cut at a line end is noticed by its missing trailer.
    let whole = dir.read("a.counts");
    let cut = whole[..whole.len() / 2].rfind('\n').unwrap() + 1;
    dir.write("cut.counts", &whole[..cut]);
    lexiclade(
        dir.path(),
        &["cluster", "--counts", "cut.counts", "--out", "x"],
    )
    .user_error("cut.counts: truncated count file");
    dir.write("bad.counts", "kind\tfirst\tsecond\tcount\nword\tx\t\tmany\n");
    lexiclade(
        dir.path(),
        &["cluster", "--counts", "bad.counts", "--out", "x"],
    )
    .user_error("bad.counts:2: the count is not a whole number");
    assert!(!dir.join("x").exists());
}

/// The exchange option: the AMI does not drop, the summary says what
/// happened, `merges.tsv` is still a tree over all words whose top merges
/// give paths that agree with the classes, and the result is the same
/// for any number of threads.
#[test]
fn exchange_refines_and_keeps_a_consistent_tree() {
    let dir = Dir::new();
    let mut text = Vec::new();
    lexiclade::synth::ZipfCorpus::new(600, 60_000, 5)
        .write_to(&mut text)
        .unwrap();
    dir.write("z.txt", &text);
    let run = |out: &str, threads: &str, passes: &str| {
        lexiclade(
            dir.path(),
            &[
                "cluster",
                "z.txt",
                "--out",
                out,
                "--classes",
                "24",
                "-q",
                "--threads",
                threads,
                "--exchange-passes",
                passes,
            ],
        )
        .ok();
    };
    run("plain", "1", "0");
    run("one", "1", "4");
    run("two", "2", "4");
    for name in ["clusters.tsv", "merges.tsv", "summary.json"] {
        assert_eq!(
            dir.read(&format!("one/{name}")),
            dir.read(&format!("two/{name}")),
            "{name} depends on the thread count"
        );
    }
    let plain: serde_json::Value =
        serde_json::from_str(&dir.read("plain/summary.json")).unwrap();
    assert!(plain.get("exchange").is_none());
    let summary: serde_json::Value =
        serde_json::from_str(&dir.read("one/summary.json")).unwrap();
    let ex = &summary["exchange"];
    assert_eq!(ex["max_passes"], 4);
    let before = ex["ami_before_bits"].as_f64().unwrap();
    assert_eq!(before, plain["ami_bits"].as_f64().unwrap());
    assert!(summary["ami_bits"].as_f64().unwrap() > before, "{summary}");
    assert!(ex["words_moved"].as_u64().unwrap() > 0);
    let timing: serde_json::Value =
        serde_json::from_str(&dir.read("one/timing.json")).unwrap();
    assert_eq!(
        timing["exchange_pass_seconds"].as_array().unwrap().len() as u64,
        ex["passes_run"].as_u64().unwrap()
    );

    let clusters = rows(&dir.read("one/clusters.tsv"));
    let words = clusters.len();
    let merges = rows(&dir.read("one/merges.tsv"));
    assert_eq!(merges.len(), words - 1);
    // Leaves under every node; paths from the root down.
    let mut leaves: Vec<Vec<usize>> = (0..words).map(|w| vec![w]).collect();
    let mut children = Vec::new();
    for (step, m) in merges.iter().enumerate() {
        let (a, b): (usize, usize) =
            (m[1].parse().unwrap(), m[2].parse().unwrap());
        assert_eq!(m[3].parse::<usize>().unwrap(), words + step);
        let mut both = leaves[a].clone();
        both.extend(leaves[b].clone());
        leaves.push(both);
        children.push((a, b));
    }
    let mut path_of_word = vec![String::new(); words];
    let mut stack = vec![(2 * words - 2, String::new())];
    let first_final = words - 24;
    while let Some((node, path)) = stack.pop() {
        if node >= words + first_final {
            let (a, b) = children[node - words];
            stack.push((a, format!("{path}0")));
            stack.push((b, format!("{path}1")));
        } else {
            for &w in &leaves[node] {
                path_of_word[w] = path.clone();
            }
        }
    }
    for (rank, row) in clusters.iter().enumerate() {
        assert_eq!(row[1], path_of_word[rank], "word {}", row[0]);
    }
    let classes: std::collections::HashSet<&String> =
        clusters.iter().map(|r| &r[2]).collect();
    assert_eq!(classes.len(), 24);

    lexiclade(
        dir.path(),
        &[
            "cluster",
            "z.txt",
            "--out",
            "bad",
            "--exchange-passes",
            "2",
            "--exchange-min-gain=-1",
        ],
    )
    .user_error("--exchange-min-gain");
}
