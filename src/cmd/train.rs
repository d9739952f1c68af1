//! `lexiclade train`: train an averaged-perceptron tagger on a column
//! file and save it as a self-contained model.

use std::path::PathBuf;

use anyhow::{bail, Context, Result};
use lexiclade::{atomic::AtomicFile, progress::Bars, VERSION};
use lexiclade_features::FeatureConfig;
use lexiclade_tagger::{
    columns::{read_columns, Column, ColumnSpec},
    pipeline::{column_names, Labeled, TaggerModel, TrainParams},
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
    /// prefix features as the config's [clusters] asks. Repeat as
    /// --clusters NAME=DIR for each of the config's [[cluster_sets]].
    #[arg(long, value_name = "[NAME=]DIR")]
    clusters: Vec<PathBuf>,
    /// The feature config (TOML, see configs/). Default: the built-in
    /// defaults, which equal configs/ner.toml. Its [[columns]] read
    /// further input columns (a POS tag, say) of --train and --dev,
    /// numbered as --token-column; the model records them, and `tag`
    /// then needs them in its input.
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
    /// Default: detected from the training labels.
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
    /// The label column, 1-based; negative counts from the end.
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
    /// No progress bars and no messages, only errors.
    #[arg(long, short)]
    quiet: bool,
}

/// Reads the labeled sentences of a column file with the values of the
/// feature columns `features`.
pub fn read_labeled(
    path: &std::path::Path,
    spec: &ColumnSpec,
    features: &[(i64, &str)],
) -> Result<Vec<Labeled>> {
    let file = read_columns(path)?;
    file.sentences
        .iter()
        .map(|s| Ok(Labeled::read(s, spec, features)?))
        .collect()
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let mut inputs = vec![args.train.clone()];
    inputs.extend(args.dev.iter().cloned());
    inputs.extend(args.config.iter().cloned());
    let dirs = super::ClusterDirs::parse(&args.clusters)?;
    inputs.extend(dirs.all());
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
    let config_name = match &args.config {
        Some(p) => p.display().to_string(),
        None => "default config".into(),
    };
    let config = config.check().with_context(|| config_name.clone())?;
    let quiet = args.quiet;
    let extractor = dirs.extractor(config, &config_name, &mut |notice| {
        if !quiet {
            eprintln!("lexiclade: notice: {notice}");
        }
    })?;
    let features = column_names(&extractor);
    let train = read_labeled(&args.train, &spec, &features)?;
    let dev = args
        .dev
        .as_deref()
        .map(|d| read_labeled(d, &spec, &features))
        .transpose()?;
    if args.epochs == 0 {
        bail!("--epochs must be at least 1");
    }
    let params = TrainParams {
        epochs: args.epochs,
        seed: args.seed,
        prune: !args.no_prune,
        scheme: args.scheme,
    };
    let bars = Bars::new(args.quiet);
    let bar = bars.steps("epoch 1", train.len() as u64, "sentences");
    let mut model = TaggerModel::train(
        &train,
        dev.as_deref(),
        extractor,
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
