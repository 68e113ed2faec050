//! `tapwright devices` and `tapwright listen` (being built).
#[derive(Debug, clap::Args)]
pub struct DevicesArgs {}
#[derive(Debug, clap::Args)]
pub struct ListenArgs {}
pub fn run_devices(_args: &DevicesArgs) -> anyhow::Result<()> {
    anyhow::bail!("the devices subcommand is not built yet")
}
pub fn run_listen(_args: &ListenArgs) -> anyhow::Result<()> {
    anyhow::bail!("the listen subcommand is not built yet")
}
