//! `lexiclade cluster`: learn word clusters from raw text into a cluster
//! directory.

use std::{path::PathBuf, time::Instant};

use anyhow::{bail, Result};
use lexiclade::{atomic::AtomicDir, progress::Bars, VERSION};
use lexiclade_cluster::{
    cluster, cluster_refined, expand_inputs, ClusterOutput, ClusterParams,
    Counts, ExchangeParams, Progress, Stage, TokenOptions,
};

/// Learn word clusters from raw text (Brown et al. 1992 with a frequency
/// window) and write them to a directory.
///
/// The directory gets clusters.tsv (each word with its path, class and
/// count), merges.tsv (every merge with the AMI after it), summary.json
/// (sizes, options, AMI) and timing.json. It is written beside DIR under
/// a temporary name and renamed into place at the end, so a failed run
/// leaves nothing half-written.
#[derive(clap::Args)]
pub struct Args {
    /// Text files or directories (every regular file inside, in name
    /// order); `-` reads standard input; `.gz` files are decompressed.
    /// One sentence per line, tokens separated by spaces and tabs.
    #[arg(required_unless_present = "counts", value_name = "INPUT")]
    inputs: Vec<PathBuf>,
    /// Cluster from count files written by `lexiclade count` (or any
    /// engine writing the plain form) instead of text; several are
    /// summed. Their tokenising, lowercasing and NFC flags must agree and
    /// are taken from the files, so --tokenize, --lowercase and --nfc are
    /// refused. The summed counts must be ones some text could give
    /// (every bigram's words listed, covered by their counts, totals that
    /// match), or they are refused naming the record.
    #[arg(long, value_name = "COUNTS", num_args = 1.., conflicts_with_all = ["inputs", "tokenize", "lowercase", "nfc"])]
    counts: Vec<PathBuf>,
    /// The output directory.
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// The number of classes C: the frequency window's width and the
    /// number of leaves of the class hierarchy. Lowered, with a notice,
    /// to the number of clustered words when there are fewer. At least 2.
    #[arg(long, default_value_t = 1000, value_name = "N")]
    classes: usize,
    /// After the window phase, run up to N passes of the exchange
    /// algorithm (Kneser and Ney 1993): each word in turn moves to the
    /// class that raises the AMI most, if any does; the subtree of every
    /// class that changed is then rebuilt by greedy merging of its own
    /// words, and the top of the tree over the refined classes. 0, the
    /// default, leaves it out: the output is the greedy method's alone.
    #[arg(long, default_value_t = 0, value_name = "N")]
    exchange_passes: u32,
    /// Stop the exchange after a pass that raised the AMI by at most BITS
    /// (bits of AMI, at least 0).
    #[arg(long, default_value_t = lexiclade_cluster::exchange::DEFAULT_MIN_PASS_GAIN_BITS, value_name = "BITS")]
    exchange_min_gain: f64,
    /// Drop words seen fewer than N times, and every bigram touching them.
    #[arg(long, default_value_t = 1, value_name = "N")]
    min_count: u64,
    /// Split raw text into words and punctuation at Unicode word
    /// boundaries, keeping URLs, e-mail addresses, @handles and #hashtags
    /// whole. Without it, tokens are taken as they are.
    #[arg(long)]
    tokenize: bool,
    /// Lowercase every token before counting: the Unicode lowercase
    /// mapping of the whole token (a final capital sigma becomes ς).
    #[arg(long)]
    lowercase: bool,
    /// Put text in Unicode normalisation form C (canonical composition)
    /// before splitting and counting it, so that a word spelt with a
    /// precomposed letter and with a letter plus combining mark is one
    /// word; without it they are two. Recorded in summary.json; the
    /// tagger's cluster look-ups then normalise words the same way.
    #[arg(long)]
    nfc: bool,
    /// Worker threads for the merge phase, 1 to 1,024; the result is the
    /// same for any number. Default: the available cores, at most 8.
    #[arg(long, value_name = "N")]
    threads: Option<usize>,
    /// Replace DIR if it exists and is not empty.
    #[arg(long)]
    force: bool,
    /// No progress bars and no messages, only errors.
    #[arg(long, short)]
    quiet: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    if args.classes < 2 {
        bail!("--classes must be at least 2, got {}", args.classes);
    }
    let threads = super::threads(args.threads)?;
    if args.min_count == 0 {
        bail!("--min-count must be at least 1");
    }
    let exchange = ExchangeParams {
        max_passes: args.exchange_passes,
        min_pass_gain_bits: args.exchange_min_gain,
    };
    if args.exchange_passes > 0 {
        exchange.check().map_err(|_| {
            anyhow::anyhow!(
                "--exchange-min-gain must be a number of at least 0, got {}",
                args.exchange_min_gain
            )
        })?;
    }
    let from_counts = !args.counts.is_empty();
    let sources = expand_inputs(&args.inputs)?;
    if sources.is_empty() && !from_counts {
        bail!("no input files found in {}", display_list(&args.inputs));
    }
    lexiclade::atomic::refuse_overlap(&args.inputs, &args.out)?;
    lexiclade::atomic::refuse_overlap(&args.counts, &args.out)?;
    let out = AtomicDir::create(&args.out, args.force)?;
    let bars = Bars::new(args.quiet);
    let started = Instant::now();

    let options = TokenOptions {
        tokenize: args.tokenize,
        lowercase: args.lowercase,
        nfc: args.nfc,
    };
    let bar = bars.bytes("counting");
    let counts = if from_counts {
        let paths: Vec<&std::path::Path> =
            args.counts.iter().map(PathBuf::as_path).collect();
        lexiclade_cluster::count_file::read_all(&paths)?.finish(args.min_count)
    } else {
        Counts::from_sources(&sources, options, args.min_count, &mut |b| {
            bar.set_position(b)
        })?
    };
    bar.finish_and_clear();
    let counted = started.elapsed().as_secs_f64();
    if counts.len() < 2 {
        bail!(
            "{}: clustering needs at least 2 distinct words, found {}",
            display_list(if from_counts {
                &args.counts
            } else {
                &args.inputs
            }),
            counts.len()
        );
    }
    if counts.len() < args.classes && !args.quiet {
        eprintln!(
            "lexiclade: notice: --classes {} lowered to {}, the number of \
             clustered words",
            args.classes,
            counts.len()
        );
    }

    let params = ClusterParams { classes: args.classes };
    let words = counts.len() as u64;
    let mut bar = bars.steps("merging", words.saturating_sub(1), "merges");
    let mut stage = Stage::Merging;
    let mut show = |p: Progress| {
        if p.stage != stage {
            bar.finish_and_clear();
            bar = match p.stage {
                Stage::Merging => unreachable!("merging comes first"),
                Stage::Exchange { pass } => bars.steps(
                    &format!("exchange {pass}"),
                    p.words_total,
                    "words",
                ),
                Stage::Rebuilding => {
                    bars.steps("rebuilding", p.merges_total, "merges")
                }
            };
            stage = p.stage;
        }
        match p.stage {
            Stage::Exchange { .. } => bar.set_position(p.words_added),
            _ => bar.set_position(p.merges_done),
        }
        if p.stage == Stage::Merging && p.merges_done % 64 == 0 {
            bar.set_message(format!(
                "({} of {} words added)",
                p.words_added, p.words_total
            ));
        }
    };
    let (hierarchy, refined) = super::with_threads(threads, || {
        if args.exchange_passes == 0 {
            cluster(&counts, &params, &mut show).map(|h| (h, None))
        } else {
            cluster_refined(
                &counts,
                &params,
                &exchange,
                &mut show,
                &mut |_| {},
            )
            .map(|(h, report)| (h, Some(report)))
        }
    })??;
    bar.finish_and_clear();
    let clustered = started.elapsed().as_secs_f64() - counted;

    let result = ClusterOutput { counts: &counts, hierarchy: &hierarchy };
    out.fill(|dir| Ok(result.write_dir(dir, VERSION)?))?;
    let mut timing = serde_json::json!({
        "count_seconds": counted,
        "bytes_read": counts.bytes,
        "cluster_seconds": clustered,
        "total_seconds": started.elapsed().as_secs_f64(),
        "threads": threads,
        "peak_rss_bytes": lexiclade::bench::peak_rss_bytes(),
    });
    if let Some(report) = &refined {
        timing["window_seconds"] = report.window_seconds.into();
        timing["exchange_seconds"] = report.exchange_seconds.into();
        timing["rebuild_seconds"] = report.rebuild_seconds.into();
        timing["exchange_pass_seconds"] =
            report.passes.iter().map(|p| p.seconds).collect();
        timing["exchange_pass_ami_bits"] =
            report.passes.iter().map(|p| p.ami_bits).collect();
    }
    out.fill(|_| {
        out.write_file(
            "timing.json",
            serde_json::to_string_pretty(&timing)? + "\n",
        )
    })?;
    let target = out.target().to_path_buf();
    out.commit()?;
    if let (Some(report), false) = (&refined, args.quiet) {
        eprintln!(
            "lexiclade: exchange: AMI {:.4} -> {:.4} bits in {} passes \
             ({} words moved, {} subtrees rebuilt, {:.1} s)",
            report.ami_before_bits,
            report.ami_after_bits,
            report.passes.len(),
            report.words_moved,
            report.classes_rebuilt,
            report.exchange_seconds + report.rebuild_seconds
        );
    }
    if !args.quiet {
        eprintln!(
            "lexiclade: {} words in {} classes, AMI {:.4} bits, {:.1} s; \
             wrote {}",
            counts.len(),
            hierarchy.classes,
            hierarchy.ami_bits,
            started.elapsed().as_secs_f64(),
            target.display()
        );
    }
    Ok(())
}

fn display_list(paths: &[PathBuf]) -> String {
    paths
        .iter()
        .map(|p| p.display().to_string())
        .collect::<Vec<_>>()
        .join(", ")
}
