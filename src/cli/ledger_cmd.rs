//! `tapwright ledger` (being built).
#[derive(Debug, clap::Args)]
pub struct LedgerArgs {}
pub fn run(_args: &LedgerArgs) -> anyhow::Result<()> {
    anyhow::bail!("the ledger subcommand is not built yet")
}
