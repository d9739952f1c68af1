//! `lexiclade count`: count words and within-line bigrams into a count
//! file, for clustering elsewhere with `cluster --counts`.

use std::{io::Write, path::PathBuf};

use anyhow::{bail, Result};
use lexiclade::{atomic::AtomicFile, progress::Bars};
use lexiclade_cluster::{count_file, expand_inputs, Counts, TokenOptions};

/// Count words and within-line bigrams of text into a count file.
///
/// The file is plain tab-separated text with the header
/// `kind first second count` (documented in the README): the tokenising
/// and lowercasing flags, the token and sentence totals, every word and
/// every bigram, unfiltered. `lexiclade cluster --counts` sums one or
/// more such files and clusters them exactly as it would the text.
#[derive(clap::Args)]
pub struct Args {
    /// Text files or directories, `-` for standard input, `.gz` allowed,
    /// read as `cluster` reads them.
    #[arg(required = true, value_name = "INPUT")]
    inputs: Vec<PathBuf>,
    /// The count file to write; `-` writes it to standard output. A file
    /// is written under a temporary name beside it and renamed at the end.
    #[arg(long, value_name = "COUNTS")]
    out: PathBuf,
    /// Split raw text as `cluster --tokenize` does.
    #[arg(long)]
    tokenize: bool,
    /// Lowercase every token (the whole token's Unicode lowercase
    /// mapping, as `cluster --lowercase`).
    #[arg(long)]
    lowercase: bool,
    /// Put text in Unicode normalisation form C before counting, as
    /// `cluster --nfc`; recorded in the count file.
    #[arg(long)]
    nfc: bool,
    /// Replace COUNTS if it exists.
    #[arg(long)]
    force: bool,
    /// No progress bar.
    #[arg(long, short)]
    quiet: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let sources = expand_inputs(&args.inputs)?;
    if sources.is_empty() {
        bail!("no input files found");
    }
    let to_stdout = args.out.as_os_str() == "-";
    let mut file = if to_stdout {
        None
    } else {
        lexiclade::atomic::refuse_overlap(&args.inputs, &args.out)?;
        Some(AtomicFile::create(&args.out, args.force)?)
    };
    let bar = Bars::new(args.quiet).bytes("counting");
    let options = TokenOptions {
        tokenize: args.tokenize,
        lowercase: args.lowercase,
        nfc: args.nfc,
    };
    let counts = Counts::from_sources(&sources, options, 1, &mut |b| {
        bar.set_position(b)
    })
    .map_err(|e| match e {
        // The library's wording is the clustering's.
        lexiclade_cluster::Error::EmptyInput { what } => {
            anyhow::anyhow!("{what}: no tokens to count")
        }
        e => e.into(),
    })?;
    bar.finish_and_clear();
    let wrote = match &mut file {
        Some(file) => {
            count_file::write(&counts, file.writer())?;
            args.out.display().to_string()
        }
        None => {
            let mut out = lexiclade::atomic::standard_output();
            count_file::write(&counts, &mut out)?;
            out.flush()?;
            "standard output".to_string()
        }
    };
    if let Some(file) = file {
        file.commit()?;
    }
    if !args.quiet {
        eprintln!(
            "lexiclade: {} tokens, {} words, {} bigrams; wrote {wrote}",
            counts.tokens,
            counts.len(),
            counts.bigrams.len(),
        );
    }
    Ok(())
}
