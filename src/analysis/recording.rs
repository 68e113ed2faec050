//! A whole recording (being built).
#[derive(Clone, Debug)]
pub struct RecordingReport {}
#[derive(Clone, Debug)]
pub struct TapRecord {}
pub fn analyze_recording() {}
