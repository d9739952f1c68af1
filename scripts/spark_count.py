#!/usr/bin/env python3
"""Count words and within-line bigrams of pre-tokenised text shards with
Apache Spark and write the plain form of lexiclade's count file.

A corpus too large for one machine is counted where its shards live; only
the counts travel, and `lexiclade cluster --counts FILE...` sums and
clusters them. The reading rules are lexiclade's for text that is already
tokenised (no --tokenize): lines are split at "\\n" only, a trailing "\\r" is
dropped, tokens are split on spaces and tabs only, and bigrams never cross
a line, and a byte-order mark at the very start of a shard is dropped.

Output: tab-separated, header "kind first second count", then the totals
and every word and bigram record (see the README, "Output").

Usage: python scripts/spark_count.py --out COUNTS.tsv SHARD_OR_DIR [...]
"""

import argparse
import re
import sys

SPLIT = re.compile(r"[ \t]+")


def tokens(record):
    # Hadoop's text reader gives each line with its byte offset in its
    # file: offset 0 is a file's first line, the only place a BOM counts.
    # (Hadoop 3's reader already skips a UTF-8 BOM there; the job does not
    # rely on it.)
    offset, line = record
    if offset == 0 and line.startswith("\ufeff"):
        line = line[1:]
    if line.endswith("\r"):
        line = line[:-1]
    return [t for t in SPLIT.split(line) if t]


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("inputs", nargs="+", help="text files or directories")
    parser.add_argument("--out", required=True, help="the count file to write")
    args = parser.parse_args()

    from pyspark.sql import SparkSession

    spark = (
        SparkSession.builder.master("local[2]")
        .appName("lexiclade-count")
        .config("spark.ui.enabled", "false")
        .getOrCreate()
    )
    spark.sparkContext.setLogLevel("ERROR")
    # The delimiter "\n": the default would also break lines at a lone
    # "\r", which lexiclade keeps inside a line. Paths are joined with
    # commas, as Hadoop's input formats take them.
    lines = spark.sparkContext.newAPIHadoopFile(
        ",".join(args.inputs),
        "org.apache.hadoop.mapreduce.lib.input.TextInputFormat",
        "org.apache.hadoop.io.LongWritable",
        "org.apache.hadoop.io.Text",
        conf={"textinputformat.record.delimiter": "\n"},
    )
    sentences = lines.map(tokens).filter(lambda t: len(t) > 0).cache()
    totals = sentences.map(lambda t: (len(t), 1)).fold((0, 0), lambda a, b: (a[0] + b[0], a[1] + b[1]))
    words = sentences.flatMap(lambda t: [(w, 1) for w in t]).reduceByKey(lambda a, b: a + b).collect()
    bigrams = (
        sentences.flatMap(lambda t: [((a, b), 1) for a, b in zip(t, t[1:])])
        .reduceByKey(lambda a, b: a + b)
        .collect()
    )
    spark.stop()

    with open(args.out, "w", encoding="utf-8", newline="\n") as out:
        out.write("kind\tfirst\tsecond\tcount\n")
        out.write(f"total\ttokens\t\t{totals[0]}\n")
        out.write(f"total\tsentences\t\t{totals[1]}\n")
        for w, c in sorted(words):
            out.write(f"word\t{w}\t\t{c}\n")
        for (a, b), c in sorted(bigrams):
            out.write(f"bigram\t{a}\t{b}\t{c}\n")
    print(f"{totals[0]} tokens, {len(words)} words, {len(bigrams)} bigrams", file=sys.stderr)


if __name__ == "__main__":
    main()
