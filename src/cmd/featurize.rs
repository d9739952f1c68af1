//! `lexiclade featurize`: write the features of every token of column
//! files, to see what a feature config gives the tagger.

use std::{
    fs::File,
    io::{self, BufRead, BufReader, BufWriter, Read, Write},
    path::{Path, PathBuf},
};

use anyhow::{bail, Context, Result};
use lexiclade_features::{Extractor, FeatureConfig, Features, Paths};

/// Write the features a config gives each token of column files.
///
/// Each output line is a token, then its features, separated by tabs; a
/// blank line ends each sentence. Features are strings such as `w=Paris`
/// (the word), `w[-1]=in` (a neighbour), `p4[0]=0110` (a 4-bit prefix of
/// the word's cluster path), `path[+1]:none` (the next word has no path)
/// and `w[-2]:start` (a position before the sentence).
///
/// The column files hold one token a line with the token in the first
/// column (columns are separated by spaces or tabs; the others are
/// ignored), blank lines between sentences, and `-DOCSTART-` lines,
/// which are skipped and end a sentence.
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
    /// this is given.
    #[arg(long, value_name = "DIR")]
    clusters: Option<PathBuf>,
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
    let paths = match (&args.clusters, config.clusters.enabled) {
        (Some(dir), Some(false)) => {
            if !args.quiet {
                eprintln!(
                    "lexiclade: notice: {} sets clusters.enabled = false; \
                     --clusters {} is not used",
                    args.config.display(),
                    dir.display()
                );
            }
            None
        }
        (Some(dir), _) => Some(Paths::read(dir)?),
        (None, Some(true)) => bail!(
            "{}: sets clusters.enabled = true, so --clusters DIR is needed \
             (the -no-clusters configs are the baselines without clusters)",
            args.config.display()
        ),
        (None, _) => None,
    };
    let extractor = Extractor::new(config, paths)?;

    let out = match &args.out {
        Some(p) if p.as_os_str() != "-" => Some(p.as_path()),
        _ => None,
    };
    let Some(out) = out else {
        let stdout = io::stdout();
        let mut w = BufWriter::new(stdout.lock());
        featurize(&extractor, &args.inputs, &mut w)?;
        w.flush()?;
        return Ok(());
    };

    let mut read = args.inputs.clone();
    read.push(args.config.clone());
    if let Some(dir) = &args.clusters {
        read.extend(
            ["clusters.tsv", "merges.tsv", "summary.json", "timing.json"]
                .map(|f| dir.join(f)),
        );
        read.push(dir.clone());
    }
    lexiclade::atomic::refuse_overlap(&read, out)?;
    if out.exists() && !args.force {
        bail!("{}: exists (use --force to replace it)", out.display());
    }
    let name = out
        .file_name()
        .with_context(|| format!("{}: not a file name", out.display()))?
        .to_string_lossy()
        .into_owned();
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let temp = tempfile::Builder::new()
        .prefix(&format!(".{name}.partial-"))
        .tempfile_in(parent)
        .with_context(|| {
            format!("{}: cannot create a file here", parent.display())
        })?;
    let mut w = BufWriter::new(temp);
    let (sentences, tokens) = featurize(&extractor, &args.inputs, &mut w)?;
    let temp = w.into_inner().map_err(|e| e.into_error())?;
    temp.as_file().sync_all()?;
    temp.persist(out).with_context(|| {
        format!("{}: cannot move the output into place", out.display())
    })?;
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
    w: &mut dyn Write,
) -> Result<(u64, u64)> {
    let mut features = Features::new();
    let (mut sentences, mut tokens) = (0, 0);
    for input in inputs {
        let reader: Box<dyn Read> = if input.as_os_str() == "-" {
            Box::new(io::stdin().lock())
        } else {
            Box::new(
                File::open(input)
                    .with_context(|| input.display().to_string())?,
            )
        };
        let mut write_sentence = |sentence: &[&str]| -> io::Result<()> {
            extractor.extract(sentence, &mut features);
            for (token, feats) in sentence.iter().zip(features.iter()) {
                w.write_all(token.as_bytes())?;
                for f in feats {
                    w.write_all(b"\t")?;
                    w.write_all(f.as_bytes())?;
                }
                w.write_all(b"\n")?;
            }
            sentences += 1;
            tokens += sentence.len() as u64;
            w.write_all(b"\n")
        };
        read_columns(input, reader, &mut write_sentence)?;
    }
    Ok((sentences, tokens))
}

/// Reads the first column of a column file and calls `sentence` with the
/// tokens of each sentence.
///
/// A stand-in until the tagger's column reader can be used here: one
/// token a line in the first field (fields split at spaces and tabs),
/// blank lines end sentences, `-DOCSTART-` lines are skipped and end a
/// sentence. A byte-order mark and CRLF line ends are accepted. Invalid
/// UTF-8 and a file without a token are errors naming the file and line.
fn read_columns(
    path: &Path,
    reader: impl Read,
    sentence: &mut dyn FnMut(&[&str]) -> io::Result<()>,
) -> Result<()> {
    let mut reader = BufReader::new(reader);
    let mut line = Vec::new();
    // The tokens of the current sentence, end to end, and where each
    // ends: no allocation per token.
    let mut text = String::new();
    let mut ends: Vec<usize> = Vec::new();
    let mut number = 0u64;
    let mut any_token = false;
    let mut flush = |text: &mut String, ends: &mut Vec<usize>| {
        if ends.is_empty() {
            return Ok(());
        }
        let mut start = 0;
        let tokens: Vec<&str> = ends
            .iter()
            .map(|&end| {
                let t = &text[start..end];
                start = end;
                t
            })
            .collect();
        let result = sentence(&tokens);
        text.clear();
        ends.clear();
        result
    };
    loop {
        line.clear();
        let read = reader
            .read_until(b'\n', &mut line)
            .with_context(|| path.display().to_string())?;
        if read == 0 {
            break;
        }
        number += 1;
        let mut bytes = line.as_slice();
        if number == 1 {
            bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
        }
        let Ok(s) = std::str::from_utf8(bytes) else {
            bail!("{}:{}: invalid UTF-8", path.display(), number);
        };
        match s.split_whitespace().next() {
            None | Some("-DOCSTART-") => flush(&mut text, &mut ends)?,
            Some(token) => {
                text.push_str(token);
                ends.push(text.len());
                any_token = true;
            }
        }
    }
    flush(&mut text, &mut ends)?;
    if !any_token {
        if number == 0 {
            bail!("{}: empty file, no tokens", path.display());
        }
        bail!(
            "{}:{}: end of file and no token in any line",
            path.display(),
            number
        );
    }
    Ok(())
}
