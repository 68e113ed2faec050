//! `tapwright drive`: play a steady (or slowly swept) tone through an
//! output device for a set time, with fades, for Chladni patterns.

use std::time::{Duration, Instant};

use anyhow::{bail, Context};

use super::output::{note, write_stdout};
use crate::audio::open_tone_output;
use crate::audio::tone::{
    check_duration, ToneError, ToneSettings, DEFAULT_LEVEL_CAP_DB, DEFAULT_LEVEL_DB,
};

/// How often the output is looked at while it plays.
const POLL: Duration = Duration::from_millis(20);
/// Extra time allowed beyond `--seconds` before giving up on a device that
/// does not take samples.
const GRACE: Duration = Duration::from_secs(5);

/// What `drive` prints on stderr before it starts.
pub const CAUTION: &str =
    "Caution: loud tones damage hearing and loudspeakers; start at a low level, \
     protect your ears, and follow your local rules.";

#[derive(Debug, clap::Args)]
pub struct DriveArgs {
    /// Frequency of the tone, Hz (a mode's frequency).
    #[arg(long, value_name = "F")]
    pub hz: f64,
    /// Length of the whole tone, fades included, seconds.
    #[arg(long, value_name = "S", default_value_t = 10.0)]
    pub seconds: f64,
    /// Peak level, dBFS (0 dBFS is a full-scale sine); never above --cap-db.
    #[arg(long, value_name = "L", default_value_t = DEFAULT_LEVEL_DB, allow_negative_numbers = true)]
    pub level_db: f64,
    /// The level cap, dBFS (at most −3); a higher --level-db is refused.
    #[arg(long, value_name = "C", default_value_t = DEFAULT_LEVEL_CAP_DB, allow_negative_numbers = true)]
    pub cap_db: f64,
    /// Sweep slowly ± this many Hz around the frequency (0: steady).
    #[arg(long, value_name = "W", default_value_t = 0.0)]
    pub sweep_hz: f64,
    /// Time for one sweep down and up, seconds.
    #[arg(long, value_name = "P", default_value_t = 20.0)]
    pub sweep_period_s: f64,
    /// Output device: a name or id (default: the system default).
    #[arg(long, value_name = "NAME")]
    pub device: Option<String>,
}

impl DriveArgs {
    fn settings(&self) -> ToneSettings {
        ToneSettings {
            frequency_hz: self.hz,
            fine_tune_hz: 0.0,
            sweep_hz: self.sweep_hz,
            sweep_period_s: self.sweep_period_s,
            level_db: self.level_db,
            level_cap_db: self.cap_db,
        }
    }
}

/// Which option a refused setting came from.
fn option_of(error: &ToneError) -> &'static str {
    match error {
        ToneError::Frequency { .. } | ToneError::FineTune { .. } => "--hz",
        ToneError::Sweep { .. } => "--sweep-hz/--sweep-period-s",
        ToneError::Cap { .. } => "--cap-db",
        ToneError::AboveCap { .. } | ToneError::BelowLowest { .. } => "--level-db",
        ToneError::Duration { .. } => "--seconds",
    }
}

fn checked(result: Result<(), ToneError>) -> anyhow::Result<()> {
    result.map_err(|error| {
        let option = option_of(&error);
        anyhow::Error::new(error).context(format!("option {option}"))
    })
}

/// `tapwright drive`: check every value, open the output, play the tone for
/// `--seconds` (fading in and out), and close.
pub fn run(args: &DriveArgs) -> anyhow::Result<()> {
    let settings = args.settings();
    checked(settings.check(None))?;
    checked(check_duration(args.seconds))?;
    let output = open_tone_output(args.device.as_deref(), &settings)?;
    checked(settings.check(Some(output.sample_rate_hz())))
        .with_context(|| format!("on {}", output.description()))?;
    note(CAUTION);
    note(&format!(
        "Playing {:.3} Hz at {:.1} dBFS for {} s on {}.",
        args.hz,
        args.level_db,
        args.seconds,
        output.description()
    ));
    let mut output = output;
    output.controls().play_for(args.seconds);
    let deadline = Instant::now() + Duration::from_secs_f64(args.seconds) + GRACE;
    loop {
        if let Some(problem) = output.problem() {
            bail!("{problem}");
        }
        if output.wait_until_finished(POLL) {
            break;
        }
        if Instant::now() >= deadline {
            bail!(
                "the output device {} stopped taking sound before the tone ended",
                output.description()
            );
        }
    }
    let description = output.description().to_owned();
    // Dropping plays out the device's buffer, then closes the stream.
    drop(output);
    write_stdout(&format!(
        "Played {:.3} Hz at {:.1} dBFS for {} s on {description}.\n",
        args.hz, args.level_db, args.seconds
    ))
}
