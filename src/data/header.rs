//! The header row: reading it alone (the plan compiler expands feature globs
//! against it before the file is loaded), checking it, and finding a column
//! in it with a "did you mean" for near misses.
//!
//! Invariants: names are trimmed and unique; a leading UTF-8 byte-order mark
//! is not part of the first name; blank lines before the header are skipped
//! (the CSV reader skips empty lines everywhere); lines are counted from
//! bytes, with `\n`, `\r\n` and a lone `\r` each ending one line.

use std::collections::BTreeMap;
use std::fs::File;
use std::io::{self, BufRead, BufReader, Read};
use std::path::Path;

use csv::{ByteRecord, Reader, ReaderBuilder};

use super::error::{ColumnRole, DataError};

/// The UTF-8 byte-order mark some spreadsheet programs write first.
pub(crate) const BOM: &[u8] = b"\xEF\xBB\xBF";

/// Read only the header row of a data file: the column names, trimmed, in
/// file order.
pub fn read_header(path: &Path) -> Result<Vec<String>, DataError> {
    let file = path.display().to_string();
    let opened = File::open(path).map_err(|e| io_error(&file, e))?;
    let mut buffered = BufReader::new(opened);
    let blank = skip_bom_and_blank_lines(&mut buffered).map_err(|e| io_error(&file, e))?;
    let mut reader = csv_reader(buffered);
    let mut record = ByteRecord::new();
    if !next_record(&mut reader, &mut record, &file)? {
        return Err(DataError::NoHeader { file });
    }
    parse_header(&record, &file, blank + 1)
}

/// Skip a byte-order mark and the blank lines before the header, so that the
/// header's line is known without keeping the bytes; returns the number of
/// lines skipped.
fn skip_bom_and_blank_lines(reader: &mut impl BufRead) -> io::Result<u64> {
    if reader.fill_buf()?.starts_with(BOM) {
        reader.consume(BOM.len());
    }
    let (mut lines, mut after_cr) = (0, false);
    loop {
        let buf = reader.fill_buf()?;
        let blank = buf
            .iter()
            .take_while(|b| matches!(b, b'\r' | b'\n'))
            .count();
        for &b in &buf[..blank] {
            // `\r\n` ends one line, as do a lone `\r` and a lone `\n`.
            lines += u64::from(b == b'\r' || !after_cr);
            after_cr = b == b'\r';
        }
        let done = blank < buf.len() || buf.is_empty();
        reader.consume(blank);
        if done {
            return Ok(lines);
        }
    }
}

/// The line (1-based) of the record that starts at byte `offset` of
/// `bytes`. Counted here rather than taken from the CSV reader, whose line
/// count runs one behind after `\r\n` line ends; a record never starts with
/// a line end (blank lines are skipped), so any at `offset` are passed over.
pub(crate) fn line_at(bytes: &[u8], offset: u64) -> u64 {
    let mut start = usize::try_from(offset).map_or(bytes.len(), |o| o.min(bytes.len()));
    while start < bytes.len() && matches!(bytes[start], b'\r' | b'\n') {
        start += 1;
    }
    let ends = bytes[..start]
        .iter()
        .enumerate()
        .filter(|&(i, &b)| b == b'\n' || (b == b'\r' && bytes.get(i + 1) != Some(&b'\n')))
        .count();
    ends as u64 + 1
}

/// The error for a failed open or read: a missing file is told apart.
pub(crate) fn io_error(file: &str, source: io::Error) -> DataError {
    match source.kind() {
        io::ErrorKind::NotFound => DataError::NotFound {
            file: file.to_owned(),
        },
        _ => DataError::Unreadable {
            file: file.to_owned(),
            source,
        },
    }
}

/// A comma-separated reader that hands back every record, header included,
/// and lets rows of any length through so that ragged rows get our message.
pub(crate) fn csv_reader<R: Read>(input: R) -> Reader<R> {
    ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(input)
}

/// Read the next record; `false` at the end of the file.
pub(crate) fn next_record<R: Read>(
    reader: &mut Reader<R>,
    record: &mut ByteRecord,
    file: &str,
) -> Result<bool, DataError> {
    // With `flexible` and byte records, the reader's only failure is I/O;
    // anything else is still reported, without a line.
    reader.read_byte_record(record).map_err(|e| {
        let message = e.to_string();
        match e.into_kind() {
            csv::ErrorKind::Io(source) => io_error(file, source),
            _ => DataError::Csv {
                file: file.to_owned(),
                message,
            },
        }
    })
}

/// The byte offset a record starts at.
pub(crate) fn offset_of(record: &ByteRecord) -> u64 {
    record.position().map_or(0, csv::Position::byte)
}

/// Check and trim the header record's names.
pub(crate) fn parse_header(
    record: &ByteRecord,
    file: &str,
    line: u64,
) -> Result<Vec<String>, DataError> {
    let names = record
        .iter()
        .map(|field| match std::str::from_utf8(field) {
            Ok(name) => Ok(name.trim().to_owned()),
            Err(_) => Err(DataError::NotUtf8 {
                file: file.to_owned(),
                line,
            }),
        })
        .collect::<Result<Vec<_>, _>>()?;
    check_unique(&names, file, line)?;
    Ok(names)
}

fn check_unique(names: &[String], file: &str, line: u64) -> Result<(), DataError> {
    let mut seen: BTreeMap<&str, usize> = BTreeMap::new();
    for (index, name) in names.iter().enumerate() {
        if let Some(&first) = seen.get(name.as_str()) {
            return Err(DataError::DuplicateHeader {
                file: file.to_owned(),
                line,
                column: name.clone(),
                first: first + 1,
                second: index + 1,
            });
        }
        seen.insert(name, index);
    }
    Ok(())
}

/// The index of column `name` in `header`, or an error naming the role the
/// plan gave it and the closest header name.
pub(crate) fn find_column(
    header: &[String],
    name: &str,
    role: ColumnRole,
    file: &str,
) -> Result<usize, DataError> {
    header
        .iter()
        .position(|h| h == name)
        .ok_or_else(|| DataError::MissingColumn {
            file: file.to_owned(),
            role,
            column: name.to_owned(),
            hint: missing_hint(header, name),
        })
}

fn missing_hint(header: &[String], name: &str) -> String {
    if let Some(close) = closest(header, name) {
        return format!("did you mean `{close}`?");
    }
    if let [only] = header
        && (only.contains(';') || only.contains('\t'))
    {
        return format!("the header is a single column `{only}`: the file must be comma-separated");
    }
    format!("the header has {}", listed(header))
}

/// The header name most like `name` (Jaro-Winkler on lowercase text, which
/// favours a shared prefix such as `fault` for `fault_within_30d`), if any
/// scores at least 0.8; the threshold is our own choice. Ties go to the
/// first in header order.
fn closest<'a>(header: &'a [String], name: &str) -> Option<&'a str> {
    let wanted = name.to_lowercase();
    let mut best: Option<(f64, &str)> = None;
    for candidate in header {
        let score = strsim::jaro_winkler(&wanted, &candidate.to_lowercase());
        if score >= 0.8 && best.is_none_or(|(top, _)| score > top) {
            best = Some((score, candidate));
        }
    }
    best.map(|(_, candidate)| candidate)
}

/// Up to ten names, in backticks, and how many there are when cut short.
fn listed(header: &[String]) -> String {
    const SHOWN: usize = 10;
    let names: Vec<String> = header
        .iter()
        .take(SHOWN)
        .map(|h| format!("`{h}`"))
        .collect();
    let mut text = names.join(", ");
    if header.len() > SHOWN {
        text.push_str(&format!(", ... ({} columns in all)", header.len()));
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_end_at_lf_crlf_and_lone_cr() {
        let cases: [(&[u8], u64, u64); 7] = [
            (b"a\nb\nc", 4, 3),
            (b"a\r\nb\r\nc", 6, 3),
            // The CSV reader may report a record as starting on the line end.
            (b"a\r\nb\r\nc", 5, 3),
            (b"a\rb\rc", 4, 3),
            (b"a\n\n\r\nb", 5, 4),
            (b"\"x\ny\"\nb", 6, 3),
            (b"a", 0, 1),
        ];
        for (bytes, offset, line) in cases {
            assert_eq!(line_at(bytes, offset), line, "{bytes:?} at {offset}");
        }
    }

    #[test]
    fn header_lines_count_the_blank_lines_before_it() {
        let cases: [(&[u8], u64); 4] = [
            (b"a,b,a\n", 1),
            (b"\n\na,b,a\n", 3),
            (b"\r\n\r\na,b,a\r\n", 3),
            (b"\xEF\xBB\xBF\r\r\na,b,a\n", 3),
        ];
        for (bytes, line) in cases {
            let dir = tempfile::TempDir::new().expect("temp dir");
            let path = dir.path().join("h.csv");
            std::fs::write(&path, bytes).expect("temp file");
            match read_header(&path) {
                Err(DataError::DuplicateHeader { line: got, .. }) => assert_eq!(got, line),
                other => panic!("{bytes:?}: expected a duplicate, got {other:?}"),
            }
        }
    }

    #[test]
    fn near_names_are_suggested_and_far_ones_are_not() {
        let header: Vec<String> = ["turbine", "oil_temp", "fault_within_30d", "Site"]
            .map(String::from)
            .to_vec();
        let cases = [
            ("oil_tmp", Some("oil_temp")),
            ("fault", Some("fault_within_30d")),
            ("site", Some("Site")),
            ("turbnie", Some("turbine")),
            ("wind_speed", None),
        ];
        for (name, expected) in cases {
            assert_eq!(closest(&header, name), expected, "{name}");
        }
    }

    #[test]
    fn long_headers_are_listed_cut_short() {
        let header: Vec<String> = (1..=12).map(|i| format!("c{i}")).collect();
        assert_eq!(
            listed(&header),
            "`c1`, `c2`, `c3`, `c4`, `c5`, `c6`, `c7`, `c8`, `c9`, `c10`, ... (12 columns in all)"
        );
    }
}
