//! `lexiclade train`: train an averaged-perceptron tagger on a column
//! file and save it as a self-contained model.

use std::path::PathBuf;

use anyhow::{bail, Context, Result};
use lexiclade::{
    atomic::AtomicFile,
    labeled::{choose_scheme, LabeledFile},
    progress::Bars,
    VERSION,
};
use lexiclade_features::{FeatureConfig, Paths};
use lexiclade_tagger::{
    columns::{Column, ColumnSpec},
    pipeline::{TaggerModel, TrainParams},
    scheme::Scheme,
};

/// Train a tagger (structured averaged perceptron, Collins 2002, with
/// Viterbi decoding) on a labeled column file.
///
/// The model file holds everything needed to tag: the feature config,
/// the label set and scheme, the weights of the best epoch and, with
/// --clusters, the path of every clustered word, so that words unseen in
/// training still get their cluster features.
#[derive(clap::Args)]
pub struct Args {
    /// The training file: one token per line with its columns, a blank
    /// line between sentences.
    #[arg(long, value_name = "F")]
    train: PathBuf,
    /// A development file in the same format: it is scored after every
    /// epoch and the best epoch's weights are kept (otherwise the last).
    #[arg(long, value_name = "F")]
    dev: Option<PathBuf>,
    /// Where to write the model.
    #[arg(long, value_name = "M")]
    model: PathBuf,
    /// A cluster directory written by `lexiclade cluster`: adds path
    /// prefix features as the config asks.
    #[arg(long, value_name = "DIR")]
    clusters: Option<PathBuf>,
    /// The feature config (TOML, see configs/). Default: the built-in
    /// defaults, which equal configs/ner.toml.
    #[arg(long, value_name = "C")]
    config: Option<PathBuf>,
    /// Passes over the training sentences.
    #[arg(long, default_value_t = 10, value_name = "N")]
    epochs: usize,
    /// Seed of the shuffling before each epoch; the same seed gives the
    /// same model.
    #[arg(long, default_value_t = 1, value_name = "S")]
    seed: u64,
    /// Do not restrict frequent words to the labels seen with them in
    /// training (slower, usually no more accurate).
    #[arg(long)]
    no_prune: bool,
    /// The tag scheme of the labels (iob1, iob2/bio, iobes, none).
    /// Default: detected from the training labels: any S- or E- label
    /// means iobes; otherwise any B-X not right after another X label
    /// means iob2 (a few I-X chunk starts are then only warned about);
    /// otherwise an I-X chunk start means iob1. A scheme the labels
    /// contradict (iobes on labels with B-X followed by O, say) is
    /// refused with the first contradicting line; the dev labels are
    /// checked against the scheme too.
    #[arg(long, value_name = "S")]
    scheme: Option<Scheme>,
    /// The token column, 1-based; negative counts from the end.
    #[arg(
        long,
        default_value = "1",
        value_name = "N",
        allow_hyphen_values = true
    )]
    token_column: Column,
    /// The label column, 1-based; negative counts from the end. It must
    /// be another column than the token's.
    #[arg(
        long,
        default_value = "-1",
        value_name = "N",
        allow_hyphen_values = true
    )]
    label_column: Column,
    /// Replace the model file if it exists.
    #[arg(long)]
    force: bool,
    /// No progress bars, messages or warnings, only errors.
    #[arg(long, short)]
    quiet: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let mut inputs = vec![args.train.clone()];
    inputs.extend(args.dev.iter().cloned());
    inputs.extend(args.config.iter().cloned());
    inputs.extend(args.clusters.iter().cloned());
    lexiclade::atomic::refuse_overlap(&inputs, &args.model)?;
    if args.model.exists() && !args.force {
        bail!("{}: exists (use --force to replace it)", args.model.display());
    }
    let spec =
        ColumnSpec { token: args.token_column, label: args.label_column };
    let config = match &args.config {
        Some(path) => FeatureConfig::read(path)?,
        None => FeatureConfig::default(),
    };
    let config = config.check().with_context(|| match &args.config {
        Some(p) => p.display().to_string(),
        None => "default config".into(),
    })?;
    let paths = args.clusters.as_deref().map(Paths::read).transpose()?;
    if paths.is_some() && config.clusters.enabled == Some(false) && !args.quiet
    {
        eprintln!("lexiclade: notice: the config turns cluster features off; --clusters is unused");
    }
    let train = LabeledFile::read(&args.train, &spec)?;
    let dev = args
        .dev
        .as_deref()
        .map(|d| LabeledFile::read(d, &spec))
        .transpose()?;
    let others: Vec<&LabeledFile> = dev.iter().collect();
    let choice = choose_scheme(args.scheme, &train, &others)?;
    if !args.quiet {
        for warning in &choice.warnings {
            eprintln!("lexiclade: warning: {warning}");
        }
    }
    let (train, dev) = (train.sentences, dev.map(|d| d.sentences));
    if args.epochs == 0 {
        bail!("--epochs must be at least 1");
    }
    let params = TrainParams {
        epochs: args.epochs,
        seed: args.seed,
        prune: !args.no_prune,
        scheme: Some(choice.scheme),
    };
    let bars = Bars::new(args.quiet);
    let bar = bars.steps("epoch 1", train.len() as u64, "sentences");
    let quiet = args.quiet;
    let mut model = TaggerModel::train(
        &train,
        dev.as_deref(),
        config,
        paths,
        &params,
        &mut |done, _| bar.set_position(done as u64),
        &mut |report| {
            let dev = report
                .dev_score
                .map_or(String::new(), |s| format!(", dev {:.2}", 100.0 * s));
            let line = format!(
                "epoch {}: {:.0} tokens/s, {} mistakes{}",
                report.epoch, report.tokens_per_second, report.mistakes, dev
            );
            if bars.visible() {
                bar.println(&line);
            } else if !quiet {
                eprintln!("lexiclade: {line}");
            }
            bar.set_prefix(format!("epoch {}", report.epoch + 1));
            bar.set_position(0);
        },
    )?;
    bar.finish_and_clear();
    model.version = VERSION.to_string();
    // Through AtomicFile rather than the library's own atomic save, so
    // that an interrupt removes the partial file too.
    let mut file = AtomicFile::create(&args.model, args.force)?;
    file.writer().write_all(&lexiclade_tagger::model::encode(&model))?;
    file.commit()?;
    if !args.quiet {
        eprintln!(
            "lexiclade: {} labels ({}), {} features, best epoch {}; wrote {}",
            model.labels.len(),
            model.scheme,
            model.features.len(),
            model.best_epoch,
            args.model.display()
        );
    }
    Ok(())
}
