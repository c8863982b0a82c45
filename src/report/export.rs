//! One shape for every way a run's results are shown. An [`Exporter`]
//! renders one format (the JSON summary, the CSV tables, the page with its
//! charts, the terminal table) of one results value (an audit or a
//! comparison) into a [`Sink`]: the report folder being staged, a list of
//! files in memory, or standard output. Both commands write their folders
//! through [`write_report`], so a new format is one exporter added to one
//! list.

use super::{ReportFile, Staging};
use crate::error::{Error, Result};
use std::io::Write;
use std::path::Path;

/// Where an exporter's outputs go.
pub trait Sink {
    /// One output, named by its path within the report folder.
    fn put(&mut self, name: &str, bytes: &[u8]) -> Result<()>;

    /// One output written in pieces by `write` (a long CSV): a sink that
    /// writes files streams it, others collect it first.
    fn put_with(&mut self, name: &str, write: &mut dyn FnMut(&mut dyn Write) -> Result<()>) -> Result<()> {
        let mut buf = Vec::new();
        write(&mut buf)?;
        self.put(name, &buf)
    }
}

impl Sink for Staging {
    fn put(&mut self, name: &str, bytes: &[u8]) -> Result<()> {
        self.add(name, bytes)
    }

    fn put_with(&mut self, name: &str, write: &mut dyn FnMut(&mut dyn Write) -> Result<()>) -> Result<()> {
        self.add_with(name, |w| write(w))
    }
}

/// The files in memory, in the order they were put.
impl Sink for Vec<ReportFile> {
    fn put(&mut self, name: &str, bytes: &[u8]) -> Result<()> {
        self.push(ReportFile::new(name, bytes));
        Ok(())
    }
}

/// Standard output: each output printed whole as it comes, its name not
/// shown (`--json`, the terminal table).
pub struct Stdout;

impl Sink for Stdout {
    fn put(&mut self, name: &str, bytes: &[u8]) -> Result<()> {
        let mut out = std::io::stdout().lock();
        out.write_all(bytes).and_then(|_| out.flush()).map_err(|e| Error::Io(format!("printing {name}: {e}")))
    }
}

/// One format of one kind of results.
pub trait Exporter<R>: Sync {
    fn export(&self, results: &R, sink: &mut dyn Sink) -> Result<()>;
}

/// `summary.json`: the results value, serialised.
pub struct Json;

/// The CSV tables of the report folder (`rejected.csv` among them).
pub struct Csv;

/// `index.html` and every chart under `charts/`.
pub struct Html;

/// The compact table a command prints when it is done, ending with where
/// the report is.
pub struct Table<'a> {
    pub report: &'a Path,
}

/// The JSON text of a results value, with a final newline.
pub fn json_text(value: &impl serde::Serialize) -> Result<String> {
    let mut s = serde_json::to_string_pretty(value).map_err(|e| Error::Internal(format!("summary.json: {e}")))?;
    s.push('\n');
    Ok(s)
}

/// Write a report folder whole or not at all: the page and its charts are
/// rendered while the data exporters write theirs (each into a staging of
/// its own, committed together).
pub fn write_report<R: Sync>(dir: &Path, results: &R, page: &dyn Exporter<R>, data: &[&dyn Exporter<R>]) -> Result<()> {
    let mut st = Staging::new(dir);
    let (drawn, written) = rayon::join(
        || page.export(results, &mut st),
        || -> Result<Staging> {
            let mut staged = Staging::new(dir);
            for e in data {
                e.export(results, &mut staged)?;
            }
            Ok(staged)
        },
    );
    // Both stagings clean up after themselves if either failed.
    let written = written?;
    drawn?;
    st.absorb(written);
    st.commit()
}

/// Every file a report folder would hold, in memory.
pub fn report_files<R>(results: &R, exporters: &[&dyn Exporter<R>]) -> Result<Vec<ReportFile>> {
    let mut files = Vec::new();
    for e in exporters {
        e.export(results, &mut files)?;
    }
    Ok(files)
}
