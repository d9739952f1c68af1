//! `lexiclade demo`: the whole pipeline on an embedded corpus, so that a
//! newcomer sees it in one command.

use std::path::PathBuf;

use anyhow::Result;
use lexiclade::demo::{self, DemoParams};
use lexiclade::experiment::savings::Saving;

/// Run the whole pipeline on an embedded demo (radio logs of an invented
/// barge line): cluster the raw text, train taggers with and without
/// cluster features on a small labeled set, compare them over training
/// sizes and seeds, and report.
///
/// The labeled training set names only half of the barges, places and
/// skippers; the raw text and the test set name them all, so cluster
/// features can show what they are for. DIR gets the text, the labeled
/// files, the configs, the clusters and the files `ablate` writes. A
/// directory written by an earlier demo (it holds the file
/// lexiclade-demo.txt and only files the demo writes) is replaced; any
/// other non-empty directory is refused unless --force.
#[derive(clap::Args)]
pub struct Args {
    /// Where to write the demo's files.
    #[arg(long, value_name = "DIR", default_value = "lexiclade-demo")]
    out: PathBuf,
    /// Replace DIR even if an earlier demo did not write it, or it holds
    /// files the demo does not write.
    #[arg(long)]
    force: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let params = DemoParams::default();
    eprintln!(
        "lexiclade demo: radio logs of the Vell Valley Barge Line (invented); \
         clustering, then {} taggers",
        2 * params.seeds.len() * (params.sizes.len() + 1)
    );
    let r = demo::run(&args.out, args.force, &params)?;
    println!(
        "raw text: {} sentences, {} tokens, {} distinct words",
        r.sentences, r.tokens, r.types
    );
    println!(
        "clusters: {} classes; AMI between adjacent classes {:.3} bits",
        r.classes, r.ami_bits
    );
    println!();
    println!(
        "{:<10} {:<8} nearest words (longest shared path prefix)",
        "word", "path"
    );
    for (word, path, near) in &r.neighbours {
        println!("{word:<10} {path:<8} {}", near.join(", "));
    }
    println!();
    println!(
        "labeled: {} train (half of the names withheld), {} dev, {} test sentences",
        r.labeled[0], r.labeled[1], r.labeled[2]
    );
    println!(
        "{:>16} {:>14} {:>14} {:>8} {:>8}",
        "train sentences", "no clusters", "clusters", "gain", "p"
    );
    let base = |n: usize| {
        r.comparisons.iter().find(|c| c.features == 0 && c.size == n)
    };
    for c in r.comparisons.iter().filter(|c| c.features == 1) {
        let Some(b) = base(c.size) else { continue };
        println!(
            "{:>16} {:>8.2} ± {:<4.2} {:>8.2} ± {:<4.2} {:>+8.2} {:>8}",
            c.size,
            100.0 * b.mean,
            100.0 * b.sd,
            100.0 * c.mean,
            100.0 * c.sd,
            100.0 * c.gain,
            c.p.map_or("—".into(), |p| format!(
                "{p:.4}{}",
                if c.significant { "*" } else { "" }
            ))
        );
    }
    println!("(test entity F1 %, mean ± sd over seeds; p: paired randomization test, * significant after Holm)");
    println!();
    for c in r.comparisons.iter().filter(|c| c.features == 1) {
        match c.saving {
            Saving::Sentences(x) => println!(
                "label saving at {} sentences: the baseline needs {:.0} ({:.1}×)",
                c.size,
                x,
                x / c.size as f64
            ),
            other => println!(
                "label saving at {} sentences: the baseline needs {other}",
                c.size
            ),
        }
    }
    println!();
    let dir = args.out.display();
    println!("files in {dir}/: raw.txt, train/dev/test.conll, ner.toml, ner-no-clusters.toml,");
    println!("  clusters/ (clusters.tsv, merges.tsv, summary.json), runs.csv, summary.md,");
    println!("  savings.csv, learning-curve.svg, prefixes.svg");
    println!("next: lexiclade show {dir}/clusters --word Heron");
    Ok(())
}
