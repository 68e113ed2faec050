//! WAV files in and out (being built).
