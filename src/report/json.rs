//! `summary.json`: the results value, serialised.

use crate::audit::summary::Summary;
use crate::error::Result;

pub fn summary_json(summary: &Summary) -> Result<String> {
    super::export::json_text(summary)
}
