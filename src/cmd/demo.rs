//! `lexiclade demo`: the clustering stage on an embedded corpus, so that
//! a newcomer sees the result in one command.

use std::path::PathBuf;

use anyhow::Result;
use lexiclade::demo::{self, DemoParams};

/// Cluster the embedded demo corpus (radio logs of an invented barge
/// line) and show what came out.
///
/// Writes the generated text and the cluster directory into DIR and
/// prints sizes, the AMI and a few words with their nearest neighbours.
/// A directory written by an earlier demo is replaced.
#[derive(clap::Args)]
pub struct Args {
    /// Where to write the demo's files.
    #[arg(long, value_name = "DIR", default_value = "lexiclade-demo")]
    out: PathBuf,
    /// Replace DIR even if an earlier demo did not write it.
    #[arg(long)]
    force: bool,
}

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    let params = DemoParams::default();
    eprintln!(
        "lexiclade demo: {} sentences of radio logs of the Vell Valley \
         Barge Line (invented), {} classes",
        params.sentences, params.classes
    );
    let report = demo::run(&args.out, args.force, &params)?;
    println!(
        "raw text: {} sentences, {} tokens, {} distinct words",
        report.sentences, report.tokens, report.types
    );
    println!(
        "learned {} classes; AMI between adjacent classes {:.3} bits",
        report.classes, report.ami_bits
    );
    println!();
    println!(
        "{:<10} {:<8} nearest words (longest shared path prefix)",
        "word", "path"
    );
    for (word, path, near) in &report.neighbours {
        println!("{word:<10} {path:<8} {}", near.join(", "));
    }
    println!();
    let dir = args.out.display();
    println!(
        "files: {dir}/raw.txt (the text), {dir}/clusters/ (clusters.tsv,"
    );
    println!("       merges.tsv, summary.json); explore with");
    println!("       lexiclade show {dir}/clusters --word Heron");
    Ok(())
}
