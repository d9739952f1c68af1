//! Count files that no text could give (`cluster --counts`): refused
//! with the file and line of the record at fault, nothing written.

use crate::util::{lexiclade, Dir};

const HEADER: &str = "kind\tfirst\tsecond\tcount\n";

#[test]
fn inconsistent_count_files_are_refused_with_file_and_line() {
    let dir = Dir::new();
    let cases = [
        (
            "word\tthe\t\t40\nword\tcat\t\t3\nbigram\tthe\tcat\t30\n",
            "c.tsv:4: bigram count 30 is above the count of \"cat\" (3)",
        ),
        (
            "total\ttokens\t\t5\nword\tthe\t\t40\nword\tcat\t\t3\n",
            "c.tsv:2: total tokens 5 (summed over the files) is not the sum \
             of the word counts (43)",
        ),
        (
            "word\tthe\t\t40\nword\tcat\t\t0\nbigram\tthe\tcat\t1\n",
            "c.tsv:4: bigram of \"cat\", whose word count is 0",
        ),
        (
            "word\tthe\t\t40\nbigram\tthe\tdog\t1\n",
            "c.tsv:3: bigram of \"dog\", which has no word record",
        ),
    ];
    for (body, want) in cases {
        dir.write("c.tsv", format!("{HEADER}{body}"));
        lexiclade(
            dir.path(),
            &["cluster", "--counts", "c.tsv", "--classes", "2", "--out", "o"],
        )
        .user_error(want);
        assert!(!dir.join("o").exists());
    }
}

#[test]
fn shards_are_checked_summed_and_lexiclade_counts_pass() {
    let dir = Dir::new();
    dir.write("a.txt", "the cat sat\nthe dog sat\n");
    lexiclade(dir.path(), &["count", "a.txt", "--out", "a.counts", "-q"]).ok();
    // A second shard holding only a total: the sum is refused at it.
    dir.write("t.tsv", format!("{HEADER}total\ttokens\t\t1\n"));
    lexiclade(
        dir.path(),
        &["cluster", "--counts", "a.counts", "t.tsv", "--out", "o"],
    )
    .user_error("t.tsv:2: total tokens 7 (summed over the files)");
    // Words and bigrams in separate plain-form shards add up fine.
    dir.write(
        "w.tsv",
        format!("{HEADER}word\tx\t\t2\nword\ty\t\t2\nword\tz\t\t1\n"),
    );
    dir.write("b.tsv", format!("{HEADER}bigram\tx\ty\t2\nbigram\ty\tz\t1\n"));
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "--counts",
            "w.tsv",
            "b.tsv",
            "--classes",
            "2",
            "--out",
            "clusters",
            "-q",
        ],
    )
    .ok();
    let summary: serde_json::Value =
        serde_json::from_str(&dir.read("clusters/summary.json")).unwrap();
    // No totals given: tokens are the word counts' sum, sentences the
    // tokens minus the bigrams.
    assert_eq!(
        (summary["tokens"].as_u64(), summary["sentences"].as_u64()),
        (Some(5), Some(2))
    );
}
