//! `tapwright air` (being built).
#[derive(Debug, clap::Args)]
pub struct AirArgs {}
pub fn run(_args: &AirArgs) -> anyhow::Result<()> {
    anyhow::bail!("the air subcommand is not built yet")
}
