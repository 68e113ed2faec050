//! capture (work in progress).
