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
use lexiclade_features::FeatureConfig;
use lexiclade_tagger::{
    columns::{Column, ColumnSpec},
    pipeline::{column_names, TaggerModel, TrainParams},
    scheme::Scheme,
};

/// Train a tagger (structured averaged perceptron, Collins 2002, with
/// Viterbi decoding) on a labeled column file.
///
/// Column files: one token per line with its columns, a blank line (or
/// one of only spaces and tabs) between sentences, `-DOCSTART-` lines
/// skipped. When every token row of a file holds a tab, its columns are
/// split on tabs only, so a token may contain spaces and an empty field
/// is an empty token; otherwise on runs of spaces and tabs. A file that
/// mixes rows with and without a tab is split on spaces and tabs, with a
/// warning naming the lines when tabs alone would have split a row
/// otherwise.
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
    /// Passes over the training sentences (with --dev: the most tried).
    #[arg(long, default_value_t = 10, value_name = "N")]
    epochs: usize,
    /// After choosing the epoch count on --dev (required), train afresh
    /// on the training sentences followed by the development sentences
    /// for that many epochs, with the same seed, and save that model
    /// (the same model as `train` on a file holding both, with --epochs
    /// set to the chosen count and no --dev).
    #[arg(long)]
    refit: bool,
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
    let dirs = super::ClusterDirs::parse(&args.clusters)?;
    inputs.extend(dirs.all());
    lexiclade::atomic::refuse_overlap(&inputs, &args.model)?;
    // Created before the training, so that the commit can tell whether
    // something appeared at (or changed under) M meanwhile.
    let mut file = AtomicFile::create(&args.model, args.force)?;
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
    if args.refit && args.dev.is_none() {
        bail!(
            "--refit needs --dev: the epoch count to refit with is chosen \
             on the development file"
        );
    }
    let features = column_names(&extractor);
    let train = LabeledFile::read(&args.train, &spec, &features)?;
    let dev = args
        .dev
        .as_deref()
        .map(|d| LabeledFile::read(d, &spec, &features))
        .transpose()?;
    let others: Vec<&LabeledFile> = dev.iter().collect();
    let choice = choose_scheme(args.scheme, &train, &others)?;
    if !args.quiet {
        let mixed = std::iter::once(&train)
            .chain(&dev)
            .filter_map(|f| f.mixed.as_ref());
        for warning in mixed.chain(&choice.warnings) {
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
        refit: args.refit,
    };
    let bars = Bars::new(args.quiet);
    let bar = bars.steps("epoch 1", train.len() as u64, "sentences");
    let (epochs, refit) = (args.epochs, args.refit);
    let mut best_dev: Option<f64> = None;
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
            if let Some(score) = report.dev_score {
                // Strictly better only, as the trainer chooses.
                if best_dev.is_none_or(|b| score > b) {
                    best_dev = Some(score);
                }
            }
            let stage = if report.refit { "refit epoch" } else { "epoch" };
            let line = format!(
                "{stage} {}: {:.0} tokens/s, {} mistakes{}",
                report.epoch, report.tokens_per_second, report.mistakes, dev
            );
            if bars.visible() {
                bar.println(&line);
            } else if !quiet {
                eprintln!("lexiclade: {line}");
            }
            let next = if !report.refit && report.epoch == epochs && refit {
                "refit epoch 1".to_string()
            } else {
                format!("{stage} {}", report.epoch + 1)
            };
            bar.set_prefix(next);
            bar.set_position(0);
        },
    )?;
    bar.finish_and_clear();
    model.version = VERSION.to_string();
    // Through AtomicFile rather than the library's own atomic save, so
    // that an interrupt removes the partial file too.
    file.writer().write_all(&lexiclade_tagger::model::encode(&model))?;
    file.commit()?;
    if !args.quiet {
        let epoch = match (args.refit, best_dev) {
            (true, Some(score)) => format!(
                "epoch {} chosen on dev ({:.2}), refit on train+dev for {} \
                 epochs",
                model.best_epoch,
                100.0 * score,
                model.best_epoch
            ),
            _ => format!("best epoch {}", model.best_epoch),
        };
        eprintln!(
            "lexiclade: {} labels ({}), {} features, {epoch}; wrote {}",
            model.labels.len(),
            model.scheme,
            model.features.len(),
            args.model.display()
        );
    }
    Ok(())
}
