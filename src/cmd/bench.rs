//! `lexiclade bench` (being written).

/// Arguments (being written).
#[derive(clap::Args)]
pub struct Args {}

/// Runs the command.
pub fn run(_args: Args) -> anyhow::Result<()> {
    anyhow::bail!("bench is not written yet")
}
