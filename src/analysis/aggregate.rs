//! Combining taps into a pass (being built).
#[derive(Clone, Debug)]
pub struct PassMode {}
#[derive(Clone, Debug)]
pub struct PassResult {}
pub fn aggregate_taps() {}
