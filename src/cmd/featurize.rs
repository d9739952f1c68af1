//! `lexiclade featurize`: write the features of every token of column
//! files, to see what a feature config gives the tagger.

use std::{io::Write, path::PathBuf};

use anyhow::{Context, Result};
use lexiclade::atomic::AtomicFile;
use lexiclade_features::{Extractor, FeatureConfig, Features};
use lexiclade_tagger::{
    columns::{read_columns, Column},
    pipeline::{column_names, feature_column_indexes},
};

/// Write the features a config gives each token of column files.
///
/// Each output line is a token, then its features, separated by tabs; a
/// blank line ends each sentence. Features are strings such as `w=Paris`
/// (the word), `w[-1]=in` (a neighbour), `p4[0]=0110` (a 4-bit prefix of
/// the word's cluster path), `path[+1]:none` (the next word has no path)
/// and `w[-2]:start` (a position before the sentence).
///
/// The column files hold one token a line with the token in the first
/// column (split on tabs only when every token row holds a tab, so that
/// a token may hold spaces or be empty, otherwise on runs of spaces and
/// tabs; the other columns are ignored unless the config's [[columns]]
/// read them, as `pos[-1]=DT`), blank lines between sentences, and
/// `-DOCSTART-` lines, which are skipped and end a sentence. Conjunctions
/// show as `NAME=a|b`, cluster sets as `SET.p4[0]=0110`.
#[derive(clap::Args)]
pub struct Args {
    /// Column files, read in order; `-` reads standard input.
    #[arg(required = true, value_name = "INPUT")]
    inputs: Vec<PathBuf>,
    /// The feature config, a TOML file (see configs/ner.toml for every
    /// key with comments). A key it does not know is an error.
    #[arg(long, value_name = "FILE")]
    config: PathBuf,
    /// A cluster directory written by `lexiclade cluster`, for the
    /// cluster path features. Required when the config sets
    /// `clusters.enabled = true`, unused when it sets false; when the
    /// config leaves the key out, cluster features are on exactly when
    /// this is given. Repeat as --clusters NAME=DIR for each of the
    /// config's [[cluster_sets]], with the same rules per set.
    #[arg(long, value_name = "[NAME=]DIR")]
    clusters: Vec<PathBuf>,
    /// The token column, 1-based; negative counts from the end.
    #[arg(
        long,
        default_value = "1",
        value_name = "N",
        allow_hyphen_values = true
    )]
    token_column: Column,
    /// Write to FILE instead of standard output (`-` is standard output).
    /// FILE is written under a temporary name beside it and renamed at
    /// the end, so a failed run leaves nothing half-written; it may not
    /// be an input, the config or a file of the cluster directory.
    #[arg(long, value_name = "FILE")]
    out: Option<PathBuf>,
    /// Replace --out FILE if it exists.
    #[arg(long)]
    force: bool,
    /// No notices, only errors.
    #[arg(long, short)]
    quiet: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let config = FeatureConfig::read(&args.config)?
        .check()
        .with_context(|| args.config.display().to_string())?;
    let dirs = super::ClusterDirs::parse(&args.clusters)?;
    let quiet = args.quiet;
    let name = args.config.display().to_string();
    let extractor = dirs.extractor(config, &name, &mut |notice| {
        if !quiet {
            eprintln!("lexiclade: notice: {notice}");
        }
    })?;

    let out = match &args.out {
        Some(p) if p.as_os_str() != "-" => Some(p.as_path()),
        _ => None,
    };
    let Some(out) = out else {
        let mut w = lexiclade::atomic::standard_output();
        featurize(
            &extractor,
            &args.inputs,
            args.token_column,
            args.quiet,
            &mut w,
        )?;
        w.flush()?;
        return Ok(());
    };

    let mut read = args.inputs.clone();
    read.push(args.config.clone());
    for dir in dirs.all() {
        read.extend(
            ["clusters.tsv", "merges.tsv", "summary.json", "timing.json"]
                .map(|f| dir.join(f)),
        );
        read.push(dir);
    }
    lexiclade::atomic::refuse_overlap(&read, out)?;
    let mut file = AtomicFile::create(out, args.force)?;
    let (sentences, tokens) = featurize(
        &extractor,
        &args.inputs,
        args.token_column,
        args.quiet,
        file.writer(),
    )?;
    file.commit()?;
    if !args.quiet {
        eprintln!(
            "lexiclade: {sentences} sentences, {tokens} tokens; wrote {}",
            out.display()
        );
    }
    Ok(())
}

/// Writes the features of every sentence of `inputs`; returns the
/// numbers of sentences and tokens.
fn featurize(
    extractor: &Extractor,
    inputs: &[PathBuf],
    token_column: Column,
    quiet: bool,
    w: &mut dyn Write,
) -> Result<(u64, u64)> {
    let mut features = Features::new();
    let (mut sentences, mut tokens_seen) = (0, 0);
    let wanted = column_names(extractor);
    // Every file is read and its columns checked before anything is
    // written, so that a row without a column leaves no partial output.
    let mut files = Vec::new();
    for input in inputs {
        let file = read_columns(input)?;
        super::warn_mixed(&file, quiet);
        let mut found = Vec::with_capacity(file.sentences.len());
        for sentence in &file.sentences {
            sentence.column(token_column)?;
            found.push(feature_column_indexes(sentence, &wanted, None)?);
        }
        files.push((file, found));
    }
    for (file, found) in &files {
        for (sentence, found) in file.sentences.iter().zip(found) {
            let tokens = sentence.column(token_column)?;
            let columns = sentence.cells_of(found);
            let columns: Vec<&[&str]> =
                columns.iter().map(Vec::as_slice).collect();
            extractor.extract_with(&tokens, &columns, &mut features);
            for (token, feats) in tokens.iter().zip(features.iter()) {
                w.write_all(token.as_bytes())?;
                for f in feats {
                    w.write_all(b"\t")?;
                    w.write_all(f.as_bytes())?;
                }
                w.write_all(b"\n")?;
            }
            sentences += 1;
            tokens_seen += tokens.len() as u64;
            w.write_all(b"\n")?;
        }
    }
    Ok((sentences, tokens_seen))
}
