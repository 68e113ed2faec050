//! What can go wrong with audio in or out, and which way the sound goes.

use thiserror::Error;

/// What can go wrong opening or running an audio device, a recording or a
/// synthetic source. Each message is one sentence.
#[derive(Clone, Debug, Error, PartialEq, Eq)]
pub enum AudioError {
    /// The computer has no usable audio system at all.
    #[error("no audio system is available on this computer ({detail})")]
    NoAudioSystem { detail: String },
    /// No input device exists (or the default cannot be found).
    #[error("there is no audio input device: connect a microphone or audio interface")]
    NoInputDevice,
    /// No output device exists (or the default cannot be found).
    #[error(
        "there is no audio output device: connect a loudspeaker, amplifier or audio interface"
    )]
    NoOutputDevice,
    /// `--device NAME` named nothing known.
    #[error("no {direction} device is called '{name}' (known: {known}){}", .direction.listing_hint())]
    DeviceNotFound {
        direction: Direction,
        name: String,
        known: String,
    },
    /// The name matched several devices.
    #[error(
        "'{name}' matches several {direction} devices ({matches}); give the full name or the id"
    )]
    AmbiguousDevice {
        direction: Direction,
        name: String,
        matches: String,
    },
    /// Another program holds the device.
    #[error("the {direction} device '{device}' is busy: another program may be using it")]
    DeviceBusy {
        direction: Direction,
        device: String,
    },
    /// The system's default device cannot be opened (no sound card, or the
    /// default points at one that is missing).
    #[error("there is no usable audio {direction} device: the default {direction} '{device}' cannot be opened{detail}; {}", .direction.connect_hint())]
    DefaultUnavailable {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The device is gone or cannot be reached.
    #[error(
        "the {direction} device '{device}' cannot be opened: it is missing or disconnected{detail}"
    )]
    DeviceUnavailable {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The system refused access.
    #[error("permission to {} '{device}' was refused{detail}", .direction.use_verb())]
    PermissionDenied {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The device cannot take any sample format tapwright makes or reads.
    #[error("the {direction} device '{device}' offers no sample format tapwright can {}", .direction.format_verb())]
    NoUsableFormat {
        direction: Direction,
        device: String,
    },
    /// Anything else the audio system reported while opening.
    #[error("cannot open the {direction} device '{device}': {detail}")]
    Open {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// A recording or synthetic source with nothing to play.
    #[error("the {what} holds no samples")]
    EmptySource { what: String },
    /// A rate tapwright does not work at.
    #[error(
        "a sample rate of {rate_hz} Hz is outside the 8 000 to 192 000 Hz tapwright works with"
    )]
    SampleRate { rate_hz: u32 },
    /// The operating system would not start a thread.
    #[error("cannot start the audio thread: {detail}")]
    Thread { detail: String },
    /// The worker ended before it could answer.
    #[error("the capture worker stopped before the source was opened")]
    WorkerGone,
}

/// Which way the sound goes through a device.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    /// Recording (a microphone).
    Input,
    /// Playing (a loudspeaker, for the drive tone).
    Output,
}

impl Direction {
    fn listing_hint(self) -> &'static str {
        match self {
            Direction::Input => "; `tapwright devices` lists them",
            Direction::Output => "",
        }
    }

    fn connect_hint(self) -> &'static str {
        match self {
            Direction::Input => "connect a microphone or audio interface",
            Direction::Output => "connect a loudspeaker, amplifier or audio interface",
        }
    }

    fn use_verb(self) -> &'static str {
        match self {
            Direction::Input => "record from",
            Direction::Output => "play through",
        }
    }

    fn format_verb(self) -> &'static str {
        match self {
            Direction::Input => "read",
            Direction::Output => "write",
        }
    }
}

impl std::fmt::Display for Direction {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Direction::Input => "input",
            Direction::Output => "output",
        })
    }
}
