//! Per-tap modal estimation (being built).
use serde::{Deserialize, Serialize};
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AnalysisSettings {}
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Mode {}
#[derive(Clone, Debug)]
pub struct TapAnalysis {}
#[derive(Debug)]
pub struct TapAnalyzer {}
