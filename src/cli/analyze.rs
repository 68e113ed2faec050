//! `tapwright analyze` (being built).
#[derive(Debug, clap::Args)]
pub struct AnalyzeArgs {}
pub fn run(_args: &AnalyzeArgs) -> anyhow::Result<()> { anyhow::bail!("not built yet") }
