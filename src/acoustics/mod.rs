//! acoustics (work in progress).
