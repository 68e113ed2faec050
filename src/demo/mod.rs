//! What tapwright ships to show itself without a microphone or a build of
//! the maker's own: the demo plate (its recording, the generator that made
//! it, and the same plate as a live synthetic source) and the sample
//! builds. Everything here is invented: no real maker, instrument or brand.

mod builds;
mod plate;

pub use builds::{sample_build, SampleBuild, SAMPLE_BUILDS};
pub use plate::{
    demo_plate_modes, demo_plate_taps, demo_recording, synthesize_demo_plate, DEMO_SAMPLE_RATE_HZ,
    DEMO_WAV_BYTES, DEMO_WAV_NAME,
};
