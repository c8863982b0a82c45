//! Reading a CSV or Parquet file into text columns with polars. Only the
//! columns the contract knows are kept; everything is read as text so the
//! validator can name the line and the value of every breach.

use crate::error::catch_decode;
use crate::error::{Error, Result};
use polars::prelude::*;
use std::path::Path;

/// The input file's format, chosen by extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Csv,
    Parquet,
}

impl Format {
    /// Parquet by its name (`.parquet`, `.pq`) or, whatever the name, by
    /// its signature (`PAR1`: a Parquet export saved as `log.csv` or with
    /// no extension); CSV otherwise.
    pub fn of(path: &Path) -> Format {
        if starts_with(path, b"PAR1") {
            return Format::Parquet;
        }
        Format::by_name(path)
    }

    /// Parquet by its name alone (`.parquet`, `.pq`), CSV otherwise: the
    /// format a file about to be written takes.
    pub fn by_name(path: &Path) -> Format {
        match path.extension().and_then(|e| e.to_str()).map(|e| e.to_ascii_lowercase()) {
            Some(e) if e == "parquet" || e == "pq" => Format::Parquet,
            _ => Format::Csv,
        }
    }

    /// How a row is located for a user: CSV line numbers count the header
    /// as line 1; Parquet rows are 0-based indices.
    pub fn locator(self) -> &'static str {
        match self {
            Format::Csv => "line",
            Format::Parquet => "row",
        }
    }
}

/// One text column held as a dictionary of its distinct (trimmed) values
/// and a code per row: memory grows with the rows and the columns kept, not
/// with the length of the text. Codes take one byte while the column has
/// under 255 distinct values (balls, outs, hands, pitch types...), two under
/// 65,535, else four.
pub struct TextColumn {
    pub dict: Vec<String>,
    codes: Codes,
}

enum Codes {
    U8(Vec<u8>),
    U16(Vec<u16>),
    U32(Vec<u32>),
}

pub const NULL_CODE: u32 = u32::MAX;

impl Codes {
    #[inline]
    fn get(&self, i: usize) -> u32 {
        match self {
            Codes::U8(v) => if v[i] == u8::MAX { NULL_CODE } else { v[i] as u32 },
            Codes::U16(v) => if v[i] == u16::MAX { NULL_CODE } else { v[i] as u32 },
            Codes::U32(v) => v[i],
        }
    }

    fn len(&self) -> usize {
        match self {
            Codes::U8(v) => v.len(),
            Codes::U16(v) => v.len(),
            Codes::U32(v) => v.len(),
        }
    }

    /// Append a code (NULL_CODE for empty), widening when it no longer fits.
    fn push(&mut self, c: u32) {
        loop {
            match self {
                Codes::U8(v) if c == NULL_CODE || c < u8::MAX as u32 => {
                    v.push(if c == NULL_CODE { u8::MAX } else { c as u8 });
                    return;
                }
                Codes::U16(v) if c == NULL_CODE || c < u16::MAX as u32 => {
                    v.push(if c == NULL_CODE { u16::MAX } else { c as u16 });
                    return;
                }
                Codes::U32(v) => {
                    v.push(c);
                    return;
                }
                Codes::U8(v) => {
                    let mut w: Vec<u16> = Vec::with_capacity(v.capacity());
                    w.extend(v.iter().map(|&x| if x == u8::MAX { u16::MAX } else { x as u16 }));
                    *self = Codes::U16(w);
                }
                Codes::U16(v) => {
                    let mut w: Vec<u32> = Vec::with_capacity(v.capacity());
                    w.extend(v.iter().map(|&x| if x == u16::MAX { NULL_CODE } else { x as u32 }));
                    *self = Codes::U32(w);
                }
            }
        }
    }
}

impl TextColumn {
    fn from_chunked(ca: &StringChunked) -> TextColumn {
        let mut index: PlHashMap<&str, u32> = PlHashMap::default();
        let mut dict = Vec::new();
        let mut codes = Codes::U8(Vec::with_capacity(ca.len()));
        for v in ca.iter() {
            match v.map(str::trim).filter(|s| !s.is_empty()) {
                None => codes.push(NULL_CODE),
                Some(s) => {
                    let next = dict.len() as u32;
                    let c = *index.entry(s).or_insert_with(|| {
                        dict.push(s.to_string());
                        next
                    });
                    codes.push(c);
                }
            }
        }
        TextColumn { dict, codes }
    }

    /// A column from a dictionary and a code per row (`None` for an empty
    /// cell): one worked out from other columns (`derive`).
    pub fn from_codes(dict: Vec<String>, codes: impl ExactSizeIterator<Item = Option<u32>>) -> TextColumn {
        let mut out = Codes::U8(Vec::with_capacity(codes.len()));
        for c in codes {
            out.push(c.unwrap_or(NULL_CODE));
        }
        TextColumn { dict, codes: out }
    }

    /// The dictionary index of `row`'s value, `None` when it is empty.
    #[inline]
    pub fn code(&self, row: usize) -> Option<usize> {
        let c = self.codes.get(row);
        (c != NULL_CODE).then_some(c as usize)
    }

    /// How many rows hold each dictionary value (empty rows not counted).
    pub fn uses(&self) -> Vec<usize> {
        let mut uses = vec![0usize; self.dict.len()];
        for r in 0..self.codes.len() {
            if let Some(c) = self.code(r) {
                uses[c] += 1;
            }
        }
        uses
    }
}

/// Text columns read from a file, by the file's own header names.
pub struct RawTable {
    pub format: Format,
    pub header: Vec<String>,
    pub n_rows: usize,
    pub columns: Vec<(String, TextColumn)>,
    /// CSV rows (0-based, as `location` counts them) whose number of fields
    /// differs from the header's, with that number, ascending: their
    /// values cannot be placed in their columns, so they are rejected.
    pub ragged: Vec<(usize, usize)>,
    /// Fields in the header.
    pub width: usize,
    /// Headers read under a wanted name they match but for case, spaces
    /// and punctuation (`"Pitch Type"` as `pitch_type`): (header, name).
    pub renamed: Vec<(String, String)>,
}

/// The headers to read, in header order, each with the wanted name it is
/// read as: a header that is a wanted name as written; for a wanted name
/// no header has, the one header that matches it but for case, spaces and
/// punctuation (`"Pitch Type"`, `"PITCHER"`), unless that header is itself
/// wanted. Two such headers for one name are read as neither (the missing
/// column's message names them).
fn resolve_headers(header: &[String], wanted: &[String]) -> Vec<(String, String)> {
    use crate::domain::labels::loose_name;
    let mut out: Vec<(String, String)> = Vec::new();
    for h in header {
        if out.iter().any(|(k, _)| k == h) {
            continue;
        }
        if wanted.contains(h) {
            out.push((h.clone(), h.clone()));
            continue;
        }
        let key = loose_name(h);
        let Some(w) = wanted.iter().find(|w| !header.contains(w) && !key.is_empty() && loose_name(w) == key) else { continue };
        let rivals = header.iter().filter(|x| !wanted.contains(x) && loose_name(x) == key).count();
        if rivals == 1 {
            out.push((h.clone(), w.clone()));
        }
    }
    out
}

impl RawTable {
    pub fn column(&self, file_name: &str) -> Option<&TextColumn> {
        self.columns.iter().find(|(n, _)| n == file_name).map(|(_, c)| c)
    }

    /// Location of 0-based data row `i` as shown to users.
    pub fn location(&self, i: usize) -> u64 {
        match self.format {
            Format::Csv => i as u64 + 2,
            Format::Parquet => i as u64,
        }
    }
}

/// Every CSV data line (0-based row index) whose number of fields differs
/// from the header's, quote-aware, read as a stream so a large file is
/// never held in memory; blank lines are left alone (they are not pitches).
fn ragged_rows(path: &Path) -> (Vec<(usize, usize)>, usize) {
    use std::io::BufRead;
    let Ok(file) = std::fs::File::open(path) else { return (Vec::new(), 0) };
    let fields = |l: &[u8]| {
        let mut n = 1;
        let mut quoted = false;
        for &c in l {
            match c {
                b'"' => quoted = !quoted,
                b',' if !quoted => n += 1,
                _ => {}
            }
        }
        n
    };
    let mut reader = std::io::BufReader::with_capacity(1 << 20, file);
    let mut line = Vec::new();
    let mut width = 0;
    let mut out = Vec::new();
    let mut i = 0usize;
    loop {
        line.clear();
        match reader.read_until(b'\n', &mut line) {
            Ok(0) | Err(_) => break,
            Ok(_) => {}
        }
        while matches!(line.last(), Some(b'\n' | b'\r')) {
            line.pop();
        }
        if i == 0 {
            width = fields(&line);
        } else if !line.iter().all(|c| c.is_ascii_whitespace()) {
            let f = fields(&line);
            if f != width {
                out.push((i - 1, f));
            }
        }
        i += 1;
    }
    (out, width)
}

/// Whether the file at `path` begins with the bytes `prefix` (a signature
/// or byte-order mark); a file shorter than it, or unreadable, does not.
pub fn starts_with(path: &Path, prefix: &[u8]) -> bool {
    let mut head = vec![0u8; prefix.len()];
    std::fs::File::open(path).and_then(|mut f| std::io::Read::read_exact(&mut f, &mut head)).is_ok_and(|_| head == prefix)
}

/// A CSV saved as UTF-16 (a spreadsheet's "Unicode text" export, known by
/// its byte-order mark) would be read as text full of NUL bytes: refuse it,
/// saying how to save it instead.
fn refuse_utf16(path: &Path) -> Result<()> {
    if starts_with(path, &[0xFF, 0xFE]) || starts_with(path, &[0xFE, 0xFF]) {
        return Err(Error::Data(format!(
            "{}: the file is UTF-16 text (a spreadsheet's \"Unicode text\" export); save it as comma-separated CSV in UTF-8",
            path.display()
        )));
    }
    Ok(())
}

/// A compressed file, or a zip archive (a spreadsheet workbook is one),
/// given as a CSV log: known by its signature and refused with the tool
/// that unpacks it, rather than read as text that is not UTF-8.
fn refuse_packed(path: &Path) -> Result<()> {
    const PACKED: [(&[u8], &str); 5] = [
        (&[0x1F, 0x8B], "gzip-compressed; decompress it first (gunzip -k FILE) or export the log as Parquet"),
        (&[0x28, 0xB5, 0x2F, 0xFD], "zstd-compressed; decompress it first (zstd -d FILE) or export the log as Parquet"),
        (b"BZh", "bzip2-compressed; decompress it first (bunzip2 -k FILE) or export the log as Parquet"),
        (&[0xFD, b'7', b'z', b'X', b'Z', 0x00], "xz-compressed; decompress it first (unxz -k FILE) or export the log as Parquet"),
        (b"PK\x03\x04", "a zip archive or a spreadsheet workbook (.xlsx, .ods); unzip it, or save the sheet as comma-separated CSV in UTF-8"),
    ];
    match PACKED.iter().find(|(magic, _)| starts_with(path, magic)) {
        Some((_, what)) => Err(Error::Data(format!("{}: the file is {what}", path.display()))),
        None => Ok(()),
    }
}

fn polars_err(path: &Path, e: PolarsError) -> Error {
    let text = e.to_string();
    let lower = text.to_lowercase();
    if lower.contains("utf-8") || lower.contains("utf8") {
        Error::Data(format!(
            "{}: the file is not UTF-8 text ({}); save it as comma-separated CSV in UTF-8 (a spreadsheet's \"CSV UTF-8\")",
            path.display(),
            text.lines().next().unwrap_or("")
        ))
    } else if lower.contains("empty") {
        Error::Data(format!("{}: the file is empty; export the pitch log with a header row and at least one pitch", path.display()))
    } else {
        Error::Data(format!(
            "{}: could not be read as {} ({}); check that it is a comma-separated file with a header row or a Parquet file",
            path.display(),
            match Format::of(path) { Format::Csv => "CSV", Format::Parquet => "Parquet" },
            text.lines().next().unwrap_or("")
        ))
    }
}

/// Rows a Parquet file may declare: far more than every tracked pitch there
/// is (about 12 million), so a damaged footer claiming billions is refused
/// before anything is allocated for it.
pub const MAX_PARQUET_ROWS: usize = 200_000_000;

/// A damaged Parquet file, in one sentence (exit 3).
fn damaged(path: &Path, what: &str, detail: &str) -> Error {
    Error::Data(format!(
        "{}: {what} could not be decoded ({}); the file looks damaged or uses an encoding the reader does not support: export it again, or as CSV",
        path.display(),
        detail.lines().next().unwrap_or("").chars().take(200).collect::<String>()
    ))
}

/// The Parquet file's column names, after checking its footer (row counts,
/// every column chunk inside the file and of a plausible size) and the type
/// of each wanted column, so nothing is decoded from a footer that lies.
fn parquet_header(path: &Path, wanted: &[String], file_len: u64) -> Result<Vec<String>> {
    let read = catch_decode(|| -> PolarsResult<(std::sync::Arc<ArrowSchema>, std::sync::Arc<polars::io::parquet::read::FileMetadata>)> {
        let file = std::fs::File::open(path).map_err(|e| PolarsError::IO { error: std::sync::Arc::new(e), msg: None })?;
        let mut r = ParquetReader::new(file);
        let meta = r.get_metadata()?.clone();
        Ok((r.schema()?, meta))
    });
    let (schema, meta) = match read {
        Err(panic) => return Err(damaged(path, "the file's footer (its metadata)", panic.as_str())),
        Ok(Err(e)) => return Err(polars_err(path, e)),
        Ok(Ok(x)) => x,
    };
    if meta.num_rows > MAX_PARQUET_ROWS {
        return Err(damaged(path, "the file's footer", &format!("it declares {} rows, more than the {MAX_PARQUET_ROWS} a pitch log can hold", meta.num_rows)));
    }
    let mut rows = 0usize;
    for (g, rg) in meta.row_groups.iter().enumerate() {
        rows = rows.saturating_add(rg.num_rows());
        for c in rg.parquet_columns() {
            let range = c.byte_range();
            let name = c.descriptor().path_in_schema.join(".");
            let bad = if range.end > file_len || range.start > range.end {
                Some(format!("row group {g}, column {name}: its data lies outside the file"))
            } else if c.num_values() < 0 || c.num_values() as u64 > rg.num_rows() as u64 * 64 + 1024 {
                Some(format!("row group {g}, column {name}: {} values declared for {} rows", c.num_values(), rg.num_rows()))
            } else if c.uncompressed_size() < 0 || c.compressed_size() < 0 || c.uncompressed_size() > (1i64 << 34) {
                Some(format!("row group {g}, column {name}: declared sizes {} / {} bytes", c.compressed_size(), c.uncompressed_size()))
            } else {
                None
            };
            if let Some(b) = bad {
                return Err(damaged(path, "the file's footer", &b));
            }
        }
    }
    if rows != meta.num_rows {
        return Err(damaged(path, "the file's footer", &format!("its row groups hold {rows} rows, the file declares {}", meta.num_rows)));
    }
    // The columns that may be read: wanted by name, or loosely
    // (`resolve_headers`).
    let names: Vec<String> = schema.iter_names().map(|s| s.to_string()).collect();
    let wanted: Vec<String> = resolve_headers(&names, wanted).into_iter().map(|(h, _)| h).collect();
    check_pages(path, &meta, &wanted)?;
    for (name, field) in schema.iter() {
        if !wanted.iter().any(|w| w == name.as_str()) {
            continue;
        }
        use polars::prelude::ArrowDataType as A;
        let ok = matches!(
            field.dtype(),
            A::Null | A::Boolean | A::Int8 | A::Int16 | A::Int32 | A::Int64 | A::UInt8 | A::UInt16 | A::UInt32 | A::UInt64
                | A::Float32 | A::Float64 | A::Utf8 | A::LargeUtf8 | A::Utf8View | A::Binary | A::LargeBinary | A::BinaryView
                | A::Decimal(..) | A::Decimal32(..) | A::Decimal64(..) | A::Date32 | A::Date64 | A::Timestamp(..) | A::Dictionary(..)
        );
        if !ok {
            return Err(Error::Data(format!(
                "{}: column \"{name}\" is stored as {:?}, which a pitch log column cannot be; store it as text, numbers or a date",
                path.display(),
                field.dtype()
            )));
        }
        // Timestamps in a zone polars cannot place (one the time-zone
        // database lacks) would fail to decode; said so here, with the fix.
        if let A::Timestamp(_, Some(zone)) = field.dtype() {
            if polars::prelude::TimeZone::opt_try_new(Some(zone.clone())).is_err() {
                return Err(Error::Data(format!(
                    "{}: column \"{name}\" holds timestamps in the time zone \"{zone}\", which is not in the time-zone database: store them in UTC, in a zone such as America/Chicago, or as text, or export the log as CSV",
                    path.display()
                )));
            }
        }
    }
    Ok(schema.iter_names().map(|s| s.to_string()).collect())
}

/// Pages larger than this are refused unread (a pitch log's pages are a few
/// megabytes at most).
const MAX_PAGE_BYTES: usize = 1 << 30;

/// Every page header of the wanted columns, read without decoding a value:
/// a data page may hold at most its column chunk's values. A damaged header
/// declaring a negative or huge count would otherwise make the decoder
/// reserve memory without bound, which ends the process instead of failing.
fn check_pages(path: &Path, meta: &polars_parquet::parquet::metadata::FileMetadata, wanted: &[String]) -> Result<()> {
    use polars_parquet::parquet::page::{CompressedPage, DataPageHeader};
    use polars_parquet::parquet::read::PageReader;
    use std::io::{Read, Seek, SeekFrom};
    let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, "read the file", e))?;
    for (g, rg) in meta.row_groups.iter().enumerate() {
        for c in rg.parquet_columns() {
            let name = c.descriptor().path_in_schema.join(".");
            if !wanted.contains(&name) {
                continue;
            }
            let range = c.byte_range();
            let mut bytes = vec![0u8; (range.end - range.start) as usize];
            file.seek(SeekFrom::Start(range.start))
                .and_then(|_| file.read_exact(&mut bytes))
                .map_err(|e| Error::io(path, "read the file", e))?;
            let declared = c.num_values();
            let bad = catch_decode(|| -> Option<String> {
                let pages = PageReader::new(std::io::Cursor::new(polars_buffer::Buffer::from(bytes)), c, Vec::new(), MAX_PAGE_BYTES);
                for page in pages {
                    let n = match page {
                        Err(e) => return Some(format!("row group {g}, column {name}: a page header: {e}")),
                        Ok(CompressedPage::Data(p)) => match p.header() {
                            DataPageHeader::V1(h) => h.num_values as i64,
                            DataPageHeader::V2(h) => h.num_values as i64,
                        },
                        Ok(CompressedPage::Dict(_)) => continue,
                    };
                    if n < 0 || n > declared {
                        return Some(format!("row group {g}, column {name}: a page declares {n} values, its column chunk {declared}"));
                    }
                }
                None
            });
            match bad {
                Err(panic) => return Err(damaged(path, &format!("column \"{name}\"'s page headers"), panic.as_str())),
                Ok(Some(b)) => return Err(damaged(path, &format!("column \"{name}\""), &b)),
                Ok(None) => {}
            }
        }
    }
    Ok(())
}

/// Read a few Parquet columns; a decoder that fails or panics on damaged
/// data is retried column by column so the error names the column.
fn parquet_columns(path: &Path, group: &[String]) -> Result<DataFrame> {
    let read = |cols: &[String]| {
        catch_decode(|| -> PolarsResult<DataFrame> {
            let file = std::fs::File::open(path).map_err(|e| PolarsError::IO { error: std::sync::Arc::new(e), msg: None })?;
            ParquetReader::new(file).with_columns(Some(cols.to_vec())).finish()
        })
    };
    let failure = |r: std::result::Result<PolarsResult<DataFrame>, String>| match r {
        Ok(Ok(_)) => None,
        Ok(Err(e)) => Some(e.to_string()),
        Err(panic) => Some(panic),
    };
    match read(group) {
        Ok(Ok(df)) => Ok(df),
        first => {
            for c in group {
                if let Some(why) = failure(read(std::slice::from_ref(c))) {
                    return Err(damaged(path, &format!("column \"{c}\""), &why));
                }
            }
            Err(damaged(path, &format!("columns {}", group.join(", ")), &failure(first).unwrap_or_default()))
        }
    }
}

/// The CSV header as written (first line, comma-separated, double quotes
/// honoured, values trimmed); `None` when it cannot be read as text.
fn raw_csv_header(path: &Path) -> Option<Vec<String>> {
    use std::io::{BufRead, Read};
    let mut line = String::new();
    std::io::BufReader::new(std::fs::File::open(path).ok()?.take(1 << 20)).read_line(&mut line).ok()?;
    let line = line.trim_end_matches(['\n', '\r']).trim_start_matches('\u{feff}');
    let (mut out, mut cur, mut quoted) = (Vec::new(), String::new(), false);
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            '"' => quoted = !quoted,
            ',' if !quoted => out.push(std::mem::take(&mut cur).trim().to_string()),
            c => cur.push(c),
        }
    }
    out.push(cur.trim().to_string());
    Some(out)
}

/// Read the header names only.
fn csv_header(path: &Path) -> Result<Vec<String>> {
    let df = CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(Some(0))
        .map_parse_options(|o| o.with_truncate_ragged_lines(true))
        .with_n_rows(Some(0))
        .try_into_reader_with_file_path(Some(path.to_path_buf()))
        .map_err(|e| polars_err(path, e))?
        .finish()
        .map_err(|e| polars_err(path, e))?;
    Ok(df.get_column_names().iter().map(|s| s.to_string()).collect())
}

/// Read the wanted columns (file names) of `path` as text.
/// Files up to this size are read in one pass; a larger one (every
/// tracked pitch there is, over a GB) three columns at a time, so its text
/// is never held whole.
const ONE_PASS_BYTES: u64 = 320 << 20;

pub fn read_table(path: &Path, wanted: &[String]) -> Result<RawTable> {
    if !path.exists() {
        return Err(Error::Data(format!("{}: no such file; check the path", path.display())));
    }
    let meta = std::fs::metadata(path).map_err(|e| Error::io(path, "read the file", e))?;
    if meta.len() == 0 {
        return Err(Error::Data(format!(
            "{}: the file is empty; export the pitch log with a header row and at least one pitch",
            path.display()
        )));
    }
    let format = Format::of(path);
    if format == Format::Csv {
        refuse_utf16(path)?;
        refuse_packed(path)?;
    }
    let header: Vec<String> = match format {
        Format::Csv => csv_header(path)?,
        Format::Parquet => parquet_header(path, wanted, meta.len())?,
    };
    // A wanted column named twice in the header would be read first-wins,
    // silently: refuse it, naming it. (Polars renames a CSV's duplicate
    // names, so the CSV header is checked as written.)
    let written = match format {
        Format::Csv => raw_csv_header(path).unwrap_or_else(|| header.clone()),
        Format::Parquet => header.clone(),
    };
    for (i, h) in written.iter().enumerate() {
        if wanted.contains(h) && written[..i].contains(h) {
            return Err(Error::Data(format!(
                "{}: the header names the column \"{h}\" twice (columns {} and {}); rename or remove one so it is clear which to read",
                path.display(),
                written.iter().position(|x| x == h).unwrap() + 1,
                i + 1
            )));
        }
    }
    let resolved = resolve_headers(&header, wanted);
    let keep: Vec<String> = resolved.iter().map(|(h, _)| h.clone()).collect();
    let renamed: Vec<(String, String)> = resolved.into_iter().filter(|(h, w)| h != w).collect();
    // Columns are read a few at a time and turned into dictionary codes at
    // once, so the text of the whole file is never held in memory.
    // A league's season or two (a few hundred MB) is read in one pass.
    let group_size = if meta.len() <= ONE_PASS_BYTES { keep.len().max(1) } else { 3 };
    // The lines' field counts are taken while the columns are read (the
    // scan reads the file once more, on the other core).
    let read_columns = || -> Result<(Vec<(String, TextColumn)>, Option<usize>)> {
        let mut columns = Vec::new();
        let mut n_rows = None;
        // A file with none of the wanted columns has nothing to read (the
        // caller then names the missing columns).
        let groups: Vec<&[String]> = keep.chunks(group_size).collect();
        for group in groups {
            let df = match format {
                Format::Csv => {
                    let names: Vec<PlSmallStr> = group.iter().map(|h| PlSmallStr::from(h.as_str())).collect();
                    CsvReadOptions::default()
                        .with_has_header(true)
                        .with_infer_schema_length(Some(0))
                        // Extra fields are cut off here; such rows are rejected
                        // whole by their line (`ragged`), never read shifted.
                        .map_parse_options(|o| o.with_truncate_ragged_lines(true))
                        .with_columns(Some(names.into()))
                        .try_into_reader_with_file_path(Some(path.to_path_buf()))
                        .map_err(|e| polars_err(path, e))?
                        .finish()
                        .map_err(|e| polars_err(path, e))?
                }
                Format::Parquet => parquet_columns(path, group)?,
            };
            // Each column is dictionary-coded on its own, so columns are coded
            // in parallel (the result does not depend on the thread count).
            use rayon::prelude::*;
            let coded: Vec<Result<(String, TextColumn)>> = df
                .columns()
                .par_iter()
                .map(|col| {
                    let name = col.name().to_string();
                    // A timestamp is read as its calendar date (as stored,
                    // UTC for a zoned one): the contract's `date` is a day.
                    let series = col.as_materialized_series();
                    // polars panics on a date or timestamp outside the
                    // calendar it can print (a damaged file): the casts run
                    // as decoders do, under `catch_decode`.
                    let cast = |s: &Series, to: &DataType| catch_decode(|| s.cast(to)).unwrap_or_else(|panic| Err(PolarsError::ComputeError(panic.into())));
                    let series = match series.dtype() {
                        DataType::Datetime(unit, zone) => {
                            // A zoned stamp is read as the wall time of its
                            // zone (an evening game on the west coast is on
                            // its own day, not the next one in UTC); polars
                            // has placed the zone (`parquet_header` refuses
                            // one it cannot).
                            let naive = match zone {
                                Some(z) => cast(series, &DataType::Int64)
                                    .map(|t| z.to_chrono().map_or(t.clone(), |tz| local_stamps(&t, *unit, tz)))
                                    .and_then(|t| cast(&t, &DataType::Datetime(*unit, None))),
                                None => Ok(series.clone()),
                            };
                            let unreadable = |e: PolarsError| {
                                Error::Data(format!("{}: column {name} holds timestamps that cannot be read as dates ({e})", path.display()))
                            };
                            let naive = naive.map_err(unreadable)?;
                            let dates = cast(&naive, &DataType::Date).map_err(unreadable)?;
                            // Stamps with a time of day are kept as text
                            // (date and time), so each game is dated as a
                            // text column of stamps is (`derive`); stamps
                            // at midnight are the dates they hold.
                            let back = cast(&dates, naive.dtype()).ok();
                            let timed = back.as_ref().is_none_or(|b| b.not_equal_missing(&naive).map_or(true, |ne| ne.any()));
                            if timed {
                                cast(&naive, &DataType::String).unwrap_or(dates)
                            } else {
                                dates
                            }
                        }
                        _ => series.clone(),
                    };
                    let s = cast(&series, &DataType::String).map_err(|e| {
                        Error::Data(format!("{}: column {name} cannot be read as text ({e}); store it as text or numbers", path.display()))
                    })?;
                    let ca = s.str().map_err(|e| Error::Internal(e.to_string()))?;
                    Ok((name, TextColumn::from_chunked(ca)))
                })
                .collect();
            // A damaged file can decode a column to another length than
            // its neighbours: every column must have the table's rows.
            let rows = *n_rows.get_or_insert(df.height());
            for c in coded {
                let (name, col) = c?;
                // A header matched loosely is known by the wanted name.
                let name = renamed.iter().find(|(h, _)| *h == name).map_or(name, |(_, w)| w.clone());
                if col.codes.len() != rows {
                    return Err(damaged(path, &format!("column \"{name}\""), &format!("{} values where the file has {rows} rows", col.codes.len())));
                }
                columns.push((name, col));
            }
        }
        Ok((columns, n_rows))
    };
    let scan = || match format {
        Format::Csv => ragged_rows(path),
        Format::Parquet => (Vec::new(), header.len()),
    };
    let (read, (ragged, width)) = rayon::join(read_columns, scan);
    let (columns, n_rows) = read?;
    Ok(RawTable { format, header, n_rows: n_rows.unwrap_or(0), columns, ragged, width, renamed })
}

/// Timestamps (`stamps`, integers in `unit` since 1970 UTC) moved to the
/// wall time of `zone` (polars reads a writer's fixed offset `-05:00` as
/// `Etc/GMT+5`): each stamp plus its zone's offset from UTC at that
/// instant.
fn local_stamps(stamps: &Series, unit: TimeUnit, zone: chrono_tz::Tz) -> Series {
    use chrono::{Offset, TimeZone as _};
    let per_second: i64 = match unit {
        TimeUnit::Nanoseconds => 1_000_000_000,
        TimeUnit::Microseconds => 1_000_000,
        TimeUnit::Milliseconds => 1_000,
    };
    // The offset in seconds at a UTC second.
    let offset_at = |secs: i64| match chrono::DateTime::from_timestamp(secs, 0) {
        Some(t) => i64::from(zone.offset_from_utc_datetime(&t.naive_utc()).fix().local_minus_utc()),
        None => 0,
    };
    let Ok(values) = stamps.i64() else {
        return stamps.clone();
    };
    // Offsets change at a zone's transitions only, on the hour or half
    // hour: one lookup per quarter hour of stamps in a row.
    let mut last: Option<(i64, i64)> = None;
    let local: Int64Chunked = values
        .downcast_iter()
        .flat_map(|a| a.iter().map(|v| v.copied()))
        .map(|v| {
            v.map(|t| {
                let quarter = t.div_euclid(per_second * 900);
                let off = match last {
                    Some((q, off)) if q == quarter => off,
                    _ => {
                        let off = offset_at(t.div_euclid(per_second));
                        last = Some((quarter, off));
                        off
                    }
                };
                t.saturating_add(off.saturating_mul(per_second))
            })
        })
        .collect();
    local.with_name(stamps.name().clone()).into_series()
}

#[cfg(test)]
mod zone_tests {
    use super::*;

    /// Stamps in a zone are moved to its wall time: 02:10 UTC on 4 April
    /// 2025 is 19:10 on 3 April in Los Angeles (daylight time, UTC−7) and
    /// 21:10 at −05:00 (polars' `Etc/GMT+5`); 02:10 UTC on 4 January is
    /// 18:10 (standard time, UTC−8). (Offsets from the IANA zone rules as
    /// published: common knowledge.) A zone polars cannot place never gets
    /// here: `parquet_header` refuses it (tests/ingest_contract.rs,
    /// unknown-zone.parquet).
    #[test]
    fn zoned_stamps_read_as_their_wall_time() {
        let s = |v: Vec<Option<i64>>| Series::new("date".into(), v);
        let zone = |z: &str| z.parse::<chrono_tz::Tz>().unwrap();
        let apr = 1_743_732_600i64; // 2025-04-04 02:10:00 UTC
        let jan = 1_735_956_600i64; // 2025-01-04 02:10:00 UTC
        let got = local_stamps(&s(vec![Some(apr * 1000), None, Some(jan * 1000)]), TimeUnit::Milliseconds, zone("America/Los_Angeles"));
        let want = s(vec![Some((apr - 7 * 3600) * 1000), None, Some((jan - 8 * 3600) * 1000)]);
        assert!(got.equals_missing(&want), "{got:?}");
        let got = local_stamps(&s(vec![Some(apr * 1_000_000)]), TimeUnit::Microseconds, zone("Etc/GMT+5"));
        assert!(got.equals_missing(&s(vec![Some((apr - 5 * 3600) * 1_000_000)])), "{got:?}");
    }
}
