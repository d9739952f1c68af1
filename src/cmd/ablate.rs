//! `lexiclade ablate`: compare feature sets over training sizes and seeds.

use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};

use anyhow::Result;
use lexiclade::{
    atomic::AtomicDir,
    experiment::{config::Experiment, report, run},
    progress::Bars,
};

/// Measure what cluster features add: train and score every combination
/// of feature set, training size and seed from an experiment config, in
/// parallel, and write the results.
///
/// DIR gets runs.csv (one row per run), summary.md (mean ± sd per
/// feature set and size, the gain over the baseline, paired
/// approximate-randomization p-values with Holm's correction, the label
/// saving), savings.csv, learning-curve.svg and prefixes.svg. It is
/// written under a temporary name and renamed at the end. A failed run is
/// reported and recorded, the others go on, and the exit code is then 1.
///
/// With `refit = true` in the config's `[training]`, each run chooses its
/// epoch count on the development file and then trains afresh on its
/// training subset plus the whole development file, as `train --refit`.
#[derive(clap::Args)]
pub struct Args {
    /// The experiment config (TOML; see configs/ablate-prefixes.toml and
    /// configs/learning-curve.toml).
    #[arg(long, value_name = "C")]
    config: PathBuf,
    /// The output directory.
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// Replace DIR if it exists and is not empty.
    #[arg(long)]
    force: bool,
    /// Worker threads, 1 to 1,024. Default: the available cores, at most
    /// 8. Results other than timings are the same for any number.
    #[arg(long, value_name = "N")]
    threads: Option<usize>,
    /// No progress bar and no messages, only errors.
    #[arg(long, short)]
    quiet: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let exp = Experiment::read(&args.config)?;
    let mut inputs = vec![
        args.config.clone(),
        exp.data.train.clone(),
        exp.data.dev.clone(),
        exp.data.test.clone(),
    ];
    inputs.extend(exp.features.iter().map(|f| f.config.clone()));
    if let Some(c) = &exp.clusters {
        inputs.extend(c.dir.iter().cloned());
        inputs.extend(c.raw.iter().cloned());
    }
    lexiclade::atomic::refuse_overlap(&inputs, &args.out)?;
    let threads = super::threads(args.threads)?;
    let out = AtomicDir::create(&args.out, args.force)?;
    let quiet = args.quiet;
    let data = super::with_threads(threads, || {
        run::prepare(&exp, &mut |msg| {
            if !quiet {
                eprintln!("lexiclade: {msg}");
            }
        })
    })??;
    let dropped: Vec<usize> = exp
        .training
        .sizes
        .iter()
        .copied()
        .filter(|&n| n >= data.train.len())
        .collect();
    if !dropped.is_empty() && !quiet {
        eprintln!(
            "lexiclade: notice: sizes {dropped:?} are not below the {} training sentences; \
             the whole set stands for them",
            data.train.len()
        );
    }
    let total = run::combinations(&exp, data.train.len()).len();
    let bars = Bars::new(args.quiet);
    let bar = bars.steps("runs", total as u64, "runs");
    let failed = AtomicUsize::new(0);
    let runs = super::with_threads(threads, || {
        run::run(&exp, &data, threads > 1, &|r| {
            bar.inc(1);
            if let Some(e) = &r.error {
                failed.fetch_add(1, Ordering::Relaxed);
                bar.suspend(|| {
                    eprintln!(
                        "lexiclade: run {} / {} sentences / seed {} failed: {e}",
                        exp.features[r.features].name, r.train_sentences, r.seed
                    )
                });
            }
        })
    })?;
    bar.finish_and_clear();
    let comparisons = report::compare(&exp, data.scheme, &runs);
    let text = report::summary(&exp, data.scheme, &runs, &comparisons);
    out.fill(|dir| {
        report::write_runs(&exp, &runs, &dir.join("runs.csv"))?;
        report::write_summary_json(
            &exp,
            data.scheme,
            &runs,
            &dir.join("summary.json"),
        )?;
        report::write_savings(&exp, &comparisons, &dir.join("savings.csv"))?;
        out.write_file("summary.md", &text)?;
        report::draw(&exp, data.scheme, &comparisons, dir)
    })?;
    let target = out.target().to_path_buf();
    out.commit()?;
    if !args.quiet {
        print!("{text}");
        eprintln!("lexiclade: wrote {}", target.display());
    }
    let failed = failed.load(Ordering::Relaxed);
    if failed > 0 {
        return Err(super::Internal(format!(
            "{failed} of {total} runs failed; see summary.md"
        ))
        .into());
    }
    Ok(())
}
