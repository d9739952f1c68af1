//! `lexiclade bench`: measure counting and clustering speed and memory.

use std::path::PathBuf;

use anyhow::{Context, Result};
use lexiclade::bench::{self, BenchPlan};

/// Measure counting throughput, merge-phase time and peak memory on
/// seeded synthetic Zipfian corpora (generated on the fly and deleted
/// afterwards) and, if given, on real text; then fit the exponents of
/// the merge time in C and in V. Prints a Markdown table to stdout.
///
/// Each run is a separate `lexiclade cluster` process, so its peak
/// memory is its own. The full default plan takes several minutes.
#[derive(clap::Args)]
pub struct Args {
    /// Vocabulary sizes V of the synthetic corpora, comma-separated.
    #[arg(long, value_delimiter = ',', default_values_t = [12_500, 25_000, 50_000])]
    types: Vec<usize>,
    /// Tokens per synthetic corpus.
    #[arg(long, default_value_t = 20_000_000)]
    tokens: u64,
    /// Class counts C, comma-separated.
    #[arg(long, value_delimiter = ',', default_values_t = [256, 512, 1000])]
    classes: Vec<usize>,
    /// Real text (files as `cluster` reads them, `.gz` allowed) to
    /// cluster too, with --tokenize --min-count 5.
    #[arg(long = "real-text", value_name = "FILE")]
    real_text: Option<PathBuf>,
    /// A small plan for a quick look: V = 2,000 and 4,000, 500,000
    /// tokens, C = 64 and 128 (overrides the three options above).
    #[arg(long)]
    quick: bool,
    /// Run every clustering with up to N exchange passes after the window
    /// phase (as `cluster --exchange-passes N`) and add a table of the AMI
    /// gained and the time it took. 0, the default, leaves them out.
    #[arg(long, default_value_t = 0, value_name = "N")]
    exchange_passes: u32,
    /// Worker threads per run, 1 to 1,024. Default: the available cores,
    /// at most 8.
    #[arg(long, value_name = "N")]
    threads: Option<usize>,
    /// Where to write the temporary corpora (default: the system's
    /// temporary directory). Needs about 100 MB per 20 M tokens.
    #[arg(long, value_name = "DIR")]
    work_dir: Option<PathBuf>,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let threads = super::threads(args.threads)?;
    let mut plan = BenchPlan {
        types: args.types,
        tokens: args.tokens,
        classes: args.classes,
        text: args.real_text,
        threads,
        exchange_passes: args.exchange_passes,
    };
    if args.quick {
        plan.types = vec![2_000, 4_000];
        plan.tokens = 500_000;
        plan.classes = vec![64, 128];
    }
    let work = match &args.work_dir {
        Some(dir) => tempfile::tempdir_in(dir),
        None => tempfile::tempdir(),
    }
    .context("cannot create a work directory")?;
    let exe = std::env::current_exe().context("cannot find this program")?;
    let rows = bench::run(&plan, &exe, work.path(), &mut |row| {
        eprintln!(
            "lexiclade bench: {} C={}: merge {:.2} s, total {:.2} s",
            row.corpus, row.classes, row.cluster_seconds, row.total_seconds
        );
    })?;
    print!("{}", bench::report(&rows));
    Ok(())
}
