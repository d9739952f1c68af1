//! `lexiclade tag`: apply a trained model to column files or plain text.

use std::{io::Write, path::PathBuf};

use anyhow::{bail, Result};
use lexiclade::atomic::AtomicFile;
use lexiclade_cluster::{
    text::{split_tokens, LineReader, Source},
    tokenize::tokenize,
};
use lexiclade_tagger::{
    columns::{read_columns, Column},
    pipeline::{feature_column_indexes, TagBuffers, TaggerModel},
    Error as TaggerError,
};

/// Tag text with a model written by `lexiclade train`.
///
/// For column files, writes every input column and the predicted label
/// as a last column, tab-separated, a blank line between sentences. A
/// file whose every token row holds a tab is split on tabs only (tokens
/// may hold spaces or be empty, and come back unchanged); other files on
/// runs of spaces and tabs (see `train --help`). With
/// --plain, reads one sentence per line and writes the token and its
/// label per line. A model whose config reads input columns
/// ([[columns]]) reads them from the column files, numbered as at
/// training, and refuses --plain text; the output of one model can be
/// the input of another that reads the appended column.
#[derive(clap::Args)]
pub struct Args {
    /// The model file.
    #[arg(long, value_name = "M")]
    model: PathBuf,
    /// Input files; `-` reads standard input.
    #[arg(required = true, value_name = "INPUT")]
    inputs: Vec<PathBuf>,
    /// Where to write the output (default: standard output). Written to a
    /// temporary file beside it and renamed at the end.
    #[arg(long, value_name = "F")]
    out: Option<PathBuf>,
    /// The inputs are plain text, one sentence per line, tokens separated
    /// by spaces and tabs. An input without a token is refused, as a
    /// column file without token rows is.
    #[arg(long)]
    plain: bool,
    /// Replace the output file if it exists.
    #[arg(long)]
    force: bool,
    /// With --plain: split raw text into words and punctuation as
    /// `cluster --tokenize` does.
    #[arg(long, requires = "plain")]
    tokenize: bool,
    /// The token column of column files, 1-based; negative counts from
    /// the end.
    #[arg(
        long,
        default_value = "1",
        value_name = "N",
        allow_hyphen_values = true
    )]
    token_column: Column,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    if let Some(out) = &args.out {
        let mut inputs = args.inputs.clone();
        inputs.push(args.model.clone());
        lexiclade::atomic::refuse_overlap(&inputs, out)?;
    }
    let model = TaggerModel::load(&args.model)?;
    let features = model.columns();
    if args.plain && !features.is_empty() {
        let (column, name) = features[0];
        bail!(
            "{}: the model reads input column {column} ({name}) as a \
             feature, which --plain text does not have; tag a column file \
             that holds it",
            args.model.display()
        );
    }
    let mut work = TagBuffers::default();
    // Column files are read and checked whole before anything is
    // written, so that a bad row leaves no partial output.
    let mut files = Vec::new();
    if !args.plain {
        for input in &args.inputs {
            let file = read_columns(input)?;
            super::warn_mixed(&file, false);
            let mut wanted = Vec::with_capacity(file.sentences.len());
            for sentence in &file.sentences {
                sentence.column(args.token_column)?;
                let found = feature_column_indexes(sentence, &features, None)
                    .map_err(|e| match e {
                        TaggerError::FeatureColumn {
                            path,
                            line,
                            column,
                            name,
                            width,
                        } => anyhow::anyhow!(
                            "{}:{line}: the model {} reads column {column} \
                             ({name}) as a feature, but the row has {width} \
                             column{}",
                            path.display(),
                            args.model.display(),
                            if width == 1 { "" } else { "s" }
                        ),
                        e => e.into(),
                    })?;
                wanted.push(found);
            }
            files.push((file, wanted));
        }
    }
    let mut write = |out: &mut dyn Write| -> Result<()> {
        if args.plain {
            for input in &args.inputs {
                tag_plain(&model, input, args.tokenize, &mut work, out)?;
            }
        }
        // Each sentence's output is put together here and written in one
        // call: a write per cell cost several per cent of the time.
        let mut text = Vec::new();
        for (file, wanted) in &files {
            for (sentence, wanted) in file.sentences.iter().zip(wanted) {
                let tokens = sentence.column(args.token_column)?;
                let columns = sentence.cells_of(wanted);
                let columns: Vec<&[&str]> =
                    columns.iter().map(Vec::as_slice).collect();
                let labels = model.tag_with(&tokens, &columns, &mut work);
                text.clear();
                for (row, label) in labels.iter().enumerate() {
                    for cell in sentence.row(row) {
                        text.extend_from_slice(cell.as_bytes());
                        text.push(b'\t');
                    }
                    text.extend_from_slice(label.as_bytes());
                    text.push(b'\n');
                }
                text.push(b'\n');
                out.write_all(&text)?;
            }
        }
        Ok(())
    };
    match &args.out {
        None => {
            let mut out = lexiclade::atomic::standard_output();
            write(&mut out)?;
            out.flush()?;
        }
        Some(path) => {
            let mut file = AtomicFile::create(path, args.force)?;
            write(file.writer())?;
            file.commit()?;
        }
    }
    // The model and its caches can be large (millions of feature
    // strings); the process ends here, so leave them to the operating
    // system instead of freeing them one by one.
    std::mem::forget(work);
    std::mem::forget(model);
    Ok(())
}

fn tag_plain(
    model: &TaggerModel,
    input: &std::path::Path,
    raw: bool,
    work: &mut TagBuffers,
    out: &mut dyn Write,
) -> Result<()> {
    let source = if input.as_os_str() == "-" {
        Source::Stdin
    } else {
        Source::File(input.to_path_buf())
    };
    let mut reader = LineReader::new(source.open()?, source.name());
    let mut tagged = false;
    while let Some(line) = reader.next_line()? {
        let mut tokens: Vec<&str> = Vec::new();
        if raw {
            tokenize(line, &mut tokens);
        } else {
            tokens.extend(split_tokens(line));
        }
        if tokens.is_empty() {
            continue;
        }
        for (token, label) in tokens.iter().zip(model.tag(&tokens, work)) {
            writeln!(out, "{token}\t{label}")?;
        }
        writeln!(out)?;
        tagged = true;
    }
    if !tagged {
        // As a column file without token rows is refused.
        bail!("{}: no tokens to tag", source.name().display());
    }
    Ok(())
}
