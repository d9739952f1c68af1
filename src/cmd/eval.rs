//! `lexiclade eval`: score predicted labels against gold labels, chunk by
//! chunk, from one column file.

use std::{collections::HashSet, io::Write, path::PathBuf};

use anyhow::{bail, Result};
use lexiclade_tagger::{
    columns::{read_columns, Column, ColumnFile, Sentence},
    eval::Evaluator,
    pipeline::TaggerModel,
    scheme::{Detection, Detector, Scheme, Site},
};

/// Score predicted labels against gold labels: chunk-level precision,
/// recall and F1 per type and overall, and token accuracy.
///
/// PRED is a column file: one token per line, a blank line between
/// sentences, `-DOCSTART-` lines skipped; columns are split on tabs only
/// when every token row holds a tab (tokens may then hold spaces or be
/// empty), otherwise on runs of spaces and tabs.
/// The second-to-last column is the gold label, the last the predicted
/// one; the first column is the token when there are at least three. A
/// chunk counts as correct only with exactly the gold boundaries and
/// type; chunks are read with the CoNLL-2000 evaluation's rules in every
/// scheme. Prints a table, or JSON with --json; figures in the table are
/// percentages, in the JSON fractions.
#[derive(clap::Args)]
pub struct Args {
    /// The column file with gold and predicted labels in its last two
    /// columns; `-` reads standard input.
    #[arg(value_name = "PRED")]
    pred: PathBuf,
    /// The tag scheme of the labels: iob1, iob2 (or bio), iobes, or none
    /// (plain tags: token accuracy only). Default: detected from the gold
    /// column: any S- or E- label means iobes; otherwise any B-X not
    /// right after another X label means iob2 (I-X chunk starts are then
    /// warned about); otherwise an I-X at a sentence start, after O or
    /// after another type means iob1; otherwise any B- or I- label means
    /// iob2; otherwise none. A scheme the gold labels contradict is
    /// warned about with the first contradicting line, and used: chunks
    /// read the same in every scheme.
    #[arg(long, value_name = "S")]
    scheme: Option<Scheme>,
    /// A training file in the same column format, its token in the first
    /// column: adds the accuracy on test tokens whose word never occurs in
    /// it (exact, case-sensitive match) and their share of all tokens.
    /// PRED then needs a token column before its two label columns.
    #[arg(long, value_name = "F")]
    train: Option<PathBuf>,
    /// The model that made the predictions: if it was trained with
    /// clusters, adds the share of tokens whose word has a cluster path
    /// (PRED then needs a token column).
    #[arg(long, value_name = "M")]
    model: Option<PathBuf>,
    /// Print the figures as one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The gold column: second to last.
const GOLD: Column = match Column::new(-2) {
    Some(column) => column,
    None => unreachable!(),
};

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let file = read_columns(&args.pred)?;
    super::warn_mixed(&file, false);
    let need =
        if args.train.is_some() || args.model.is_some() { 3 } else { 2 };
    for sentence in &file.sentences {
        check_width(sentence, need, need == 3)?;
    }
    let train = args.train.as_deref().map(read_columns).transpose()?;
    if let Some(train) = &train {
        super::warn_mixed(train, false);
    }
    let vocabulary: Option<HashSet<&str>> =
        train.as_ref().map(|t| t.vocabulary(Column::FIRST)).transpose()?;
    let known =
        |word: &str| vocabulary.as_ref().is_some_and(|v| v.contains(word));

    let labelled = labelled(&file)?;
    let detector = Detector::of(labelled.iter().map(|(_, g, _)| g));
    let at = |site: Site| {
        let line = file.sentences[site.sentence].lines()[site.token];
        format!("{}:{line}", file.path.display())
    };
    let detection = match args.scheme {
        // Chunks are read with the same rules in every scheme, so a
        // contradicted scheme changes no score: it is named in a warning
        // rather than refused (training refuses it; there the scheme
        // decides the labels written).
        Some(scheme) => detector.check(scheme).unwrap_or_else(|c| {
            eprintln!(
                "lexiclade: warning: {}: gold label {c}; scored as {scheme} \
                 anyway (the chunks read the same)",
                at(c.first.site)
            );
            Detection { scheme, invalid: None }
        }),
        None => {
            let gold = detector.detection();
            let predicted = Scheme::detect(labelled.iter().map(|(_, _, p)| p));
            if !gold.scheme.has_chunks() && predicted.has_chunks() {
                // Detection looks at the gold column only; all-O gold
                // would silently hide every predicted chunk.
                eprintln!(
                    "lexiclade: notice: the gold labels hold no chunks, so \
                     only tokens are scored; give --scheme to score the \
                     predicted chunks"
                );
            }
            gold
        }
    };
    if let Some(invalid) = &detection.invalid {
        eprintln!(
            "lexiclade: warning: {}: gold label {} is invalid in {} ({} \
             such label{} in the gold column; chunks are read with the \
             CoNLL rules)",
            at(invalid.site),
            invalid.what,
            detection.scheme,
            invalid.count,
            if invalid.count == 1 { "" } else { "s" }
        );
    }
    let scheme = detection.scheme;
    let model = args.model.as_deref().map(TaggerModel::load).transpose()?;
    let paths = model.as_ref().and_then(|m| m.extractor.paths());
    let has_path = |word: &str| paths.is_some_and(|p| p.path(word).is_some());
    let mut eval = Evaluator::new(scheme);
    if vocabulary.is_some() {
        eval = eval.known_words(&known);
    }
    if paths.is_some() {
        eval = eval.clustered_words(&has_path);
    }
    for (tokens, gold, predicted) in &labelled {
        eval.add(tokens, gold, predicted)?;
    }
    let report = eval.report();

    let mut out = lexiclade::atomic::standard_output();
    if args.json {
        serde_json::to_writer_pretty(&mut out, &report)?;
        writeln!(out)?;
    } else {
        report.write_table(&mut out)?;
    }
    out.flush()?;
    Ok(())
}

/// Refuses a sentence with fewer than `need` columns, naming its first
/// line.
fn check_width(sentence: &Sentence, need: usize, train: bool) -> Result<()> {
    if sentence.width() >= need {
        return Ok(());
    }
    let what = if train {
        "with --train or --model, eval needs a token column and then a gold and a \
         predicted label column"
    } else {
        "eval needs a gold and a predicted label column (the last two)"
    };
    bail!(
        "{}:{}: {what}, found {} column{}",
        sentence.path().display(),
        sentence.lines()[0],
        sentence.width(),
        if sentence.width() == 1 { "" } else { "s" }
    )
}

/// Each sentence's tokens, gold and predicted labels. With only two
/// columns there are no tokens, and the gold labels stand in for them
/// (they are then used for nothing).
type Labelled<'a> = (Vec<&'a str>, Vec<&'a str>, Vec<&'a str>);

fn labelled(file: &ColumnFile) -> Result<Vec<Labelled<'_>>> {
    file.sentences
        .iter()
        .map(|s| {
            Ok((
                s.column(Column::FIRST)?,
                s.column(GOLD)?,
                s.column(Column::LAST)?,
            ))
        })
        .collect()
}
