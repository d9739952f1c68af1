//! The `lexiclade` command: parses arguments, reports progress and calls
//! the libraries. Each subcommand lives in its own file under `cmd/`.

use std::process::ExitCode;

use clap::{Parser, Subcommand};

mod cmd;

/// Learn word clusters from raw in-domain text and measure what they add
/// to a sequence labeler.
#[derive(Parser)]
#[command(name = "lexiclade", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    Cluster(cmd::cluster::Args),
    Count(cmd::count::Args),
    Show(cmd::show::Args),
    Featurize(cmd::featurize::Args),
    Train(cmd::train::Args),
    Tag(cmd::tag::Args),
    Eval(cmd::eval::Args),
    Ablate(cmd::ablate::Args),
    Demo(cmd::demo::Args),
    Bench(cmd::bench::Args),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    lexiclade::interrupt::install();
    // The tests' hook for changing an output just before its commit
    // (see `atomic::set_commit_gate`).
    if let Some(dir) = std::env::var_os("LEXICLADE_TEST_COMMIT_GATE") {
        lexiclade::atomic::set_commit_gate(dir.into());
    }
    let result = match cli.command {
        Command::Cluster(args) => cmd::cluster::run(args),
        Command::Count(args) => cmd::count::run(args),
        Command::Show(args) => cmd::show::run(args),
        Command::Featurize(args) => cmd::featurize::run(args),
        Command::Demo(args) => cmd::demo::run(args),
        Command::Bench(args) => cmd::bench::run(args),
        Command::Eval(args) => cmd::eval::run(args),
        Command::Train(args) => cmd::train::run(args),
        Command::Ablate(args) => cmd::ablate::run(args),
        Command::Tag(args) => cmd::tag::run(args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(err) => {
            if is_broken_pipe(&err) {
                return ExitCode::SUCCESS;
            }
            // One line: the chain of contexts, outermost first.
            let message = format!("{err:#}").replace('\n', " ");
            eprintln!("lexiclade: {message}");
            if err.downcast_ref::<cmd::Internal>().is_some() {
                ExitCode::from(1)
            } else {
                ExitCode::from(2)
            }
        }
    }
}

fn is_broken_pipe(err: &anyhow::Error) -> bool {
    err.chain().any(|cause| {
        cause
            .downcast_ref::<std::io::Error>()
            .is_some_and(|e| e.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
