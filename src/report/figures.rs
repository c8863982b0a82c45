//! The audit's charts, filled from the results value.

use super::charts::Chart;
use crate::audit::summary::Summary;
use crate::error::Result;
use std::collections::BTreeMap;

#[derive(Default)]
pub struct BuiltCharts {
    pub staff: Vec<Chart>,
    pub per_pitcher: BTreeMap<String, Vec<Chart>>,
}

pub fn audit_charts(_s: &Summary, _stems: &BTreeMap<String, String>) -> Result<BuiltCharts> {
    Ok(BuiltCharts::default())
}
