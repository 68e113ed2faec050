//! Shared report printing (being built).
