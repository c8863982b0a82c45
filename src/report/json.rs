//! `summary.json`: the results value, serialised.

use crate::audit::summary::Summary;
use crate::error::{Error, Result};

pub fn summary_json(summary: &Summary) -> Result<String> {
    let mut s = serde_json::to_string_pretty(summary).map_err(|e| Error::Internal(format!("summary.json: {e}")))?;
    s.push('\n');
    Ok(s)
}
