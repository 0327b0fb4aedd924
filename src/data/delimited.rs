//! CSV and TSV: a header line naming the columns, then one trial per record.
//!
//! Quoting follows RFC 4180 for both delimiters: a field that starts with `"` (after optional
//! blanks) runs to the next lone `"`, with `""` standing for one quote, and may span lines;
//! records end with LF or CRLF. Unquoted fields are trimmed of surrounding spaces (and tabs, in
//! CSV); quoted fields are kept as written, except that numbers are always read trimmed. A UTF-8
//! byte-order mark at the start is ignored.
//!
//! Speed: lines without a quote (and, in one-column files, without a delimiter) are split with
//! memchr over the whole buffer, with no copying; only a record that holds a quote goes through
//! the quote-aware splitter.

use std::fs::File;

use memchr::{memchr, memchr_iter, memchr2};

use super::collect::{Collector, Key};
use super::error::{DataError, Place, ProblemKind};
use super::source::{self, Digest256};
use super::{ArmData, ReadOptions};
use crate::spec::suggest;

/// The UTF-8 byte-order mark some spreadsheets write first.
const BOM: &[u8] = b"\xEF\xBB\xBF";
/// Marks a slot that no column fills.
const NONE: usize = usize::MAX;
/// Columns that can be read: value, arm, order, cluster.
const SLOTS: usize = 4;

/// Reads a delimited file: the arms, the digest of the bytes read, and the number of data rows.
pub(super) fn read(
    file: &str,
    f: File,
    total: u64,
    delim: u8,
    opts: &ReadOptions,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<(Vec<ArmData>, Digest256, u64), DataError> {
    let mut parser = Parser::new(file, delim, opts);
    let digest = source::stream(file, f, total, progress, &mut |data, eof| {
        parser.consume(data, eof)
    })?;
    let rows = parser.rows;
    let arms = parser.finish()?;
    Ok((arms, digest, rows))
}

/// The positions of the columns that are read.
#[derive(Debug, Clone, Copy)]
struct Header {
    /// Number of fields every record must have.
    fields: usize,
    /// Field index of the value, arm, order and cluster columns (slots 0, 1, 2, 3); [`NONE`]
    /// when unused.
    slots: [usize; SLOTS],
}

impl Header {
    fn slot_of(&self, field: usize) -> Option<usize> {
        self.slots.iter().position(|&s| s == field)
    }
}

/// A field gathered by the quote-aware splitter.
#[derive(Debug, Default, Clone)]
struct Piece {
    bytes: Vec<u8>,
    quoted: bool,
    /// Lines between the record's first line and the line where this field starts.
    line_off: u64,
    present: bool,
}

/// A field as the row handler sees it.
#[derive(Debug, Clone, Copy)]
struct Cell<'a> {
    bytes: &'a [u8],
    quoted: bool,
    line_off: u64,
}

/// What the quote-aware splitter found.
enum Split {
    /// A whole record ending just before `end` (after its line break), with `newlines` line
    /// breaks inside quoted fields and `fields` fields.
    Record {
        end: usize,
        newlines: u64,
        fields: usize,
    },
    /// The buffer ends inside the record; more bytes are needed.
    Incomplete,
    /// The file ends inside a quoted field that starts in field `field`, `line_off` lines down.
    Unclosed { field: usize, line_off: u64 },
}

struct Parser<'o, 'f> {
    file: &'f str,
    delim: u8,
    /// Whether tabs count as blanks around fields (CSV only: in TSV they are delimiters).
    trim_tabs: bool,
    opts: ReadOptions<'o>,
    collector: Collector<'o>,
    header: Option<Header>,
    started: bool,
    /// Physical line on which the next record starts.
    line: u64,
    /// Data records seen.
    rows: u64,
    pieces: Vec<Piece>,
    bad_quotes: Vec<(usize, u64)>,
    /// A problem that ended the scan (an unclosed quote), reported with the tallied ones.
    fatal: Option<DataError>,
}

impl<'o, 'f> Parser<'o, 'f> {
    fn new(file: &'f str, delim: u8, opts: &ReadOptions<'o>) -> Self {
        Parser {
            file,
            delim,
            trim_tabs: delim != b'\t',
            opts: *opts,
            collector: Collector::new(opts),
            header: None,
            started: false,
            line: 1,
            rows: 0,
            pieces: Vec::new(),
            bad_quotes: Vec::new(),
            fatal: None,
        }
    }

    fn is_blank(&self, b: u8) -> bool {
        b == b' ' || (self.trim_tabs && b == b'\t')
    }

    fn trim<'a>(&self, s: &'a [u8]) -> &'a [u8] {
        trim_bytes(s, self.trim_tabs)
    }

    /// Consumes whole records from `data`; see [`source::stream`].
    fn consume(&mut self, data: &[u8], eof: bool) -> Result<usize, DataError> {
        let mut p = 0;
        if !self.started {
            if data.len() < BOM.len() && !eof {
                return Ok(0);
            }
            if data.starts_with(BOM) {
                p = BOM.len();
            }
            self.started = true;
        }
        let header = match self.header {
            Some(h) => h,
            None => match self.read_header(data, p, eof)? {
                Some((h, end)) => {
                    self.header = Some(h);
                    p = end;
                    h
                }
                None => return Ok(p),
            },
        };
        let single = header.fields == 1;
        // One column, so no arms, order or clusters: values can be added in runs.
        let plain = single && self.collector.single_arm().is_some() && header.slots[3] == NONE;
        let len = data.len();
        loop {
            let rest = &data[p..];
            let special = if single {
                memchr2(b'"', self.delim, rest)
            } else {
                memchr(b'"', rest)
            }
            .map_or(len, |o| p + o);
            if plain {
                p = self.plain_lines(&header, data, p, special);
            } else {
                let base = p;
                for nl in memchr_iter(b'\n', &data[base..special]) {
                    let end = base + nl;
                    self.simple_line(&header, &data[p..end]);
                    p = end + 1;
                }
            }
            if special == len {
                if eof && p < len {
                    self.simple_line(&header, &data[p..len]);
                    p = len;
                }
                return Ok(p);
            }
            match self.split(data, p, eof, |f| header.slot_of(f)) {
                Split::Incomplete => return Ok(p),
                Split::Unclosed { field, line_off } => {
                    // The file ends inside this record: report it with what was found before.
                    self.fatal = Some(self.unclosed(field, line_off));
                    return Ok(len);
                }
                Split::Record {
                    end,
                    newlines,
                    fields,
                } => {
                    let line = self.line;
                    self.line += 1 + newlines;
                    self.rows += 1;
                    let blank = matches!(&data[p..end], b"\n" | b"\r\n" | b"" | b"\r");
                    if blank {
                        self.blank(line);
                    } else {
                        let mut cells = [None; SLOTS];
                        for (slot, piece) in self.pieces.iter().enumerate().take(SLOTS) {
                            if piece.present {
                                cells[slot] = Some(Cell {
                                    bytes: &piece.bytes,
                                    quoted: piece.quoted,
                                    line_off: piece.line_off,
                                });
                            }
                        }
                        for &(field, off) in &self.bad_quotes {
                            let column = self.name_of_field(&header, field);
                            let place = Place::Line {
                                line: line + off,
                                column: Some(field as u32 + 1),
                            };
                            self.collector.tally.note(
                                ProblemKind::BadQuote,
                                column.as_deref(),
                                place,
                                b"",
                            );
                        }
                        row(
                            &mut self.collector,
                            &header,
                            self.trim_tabs,
                            line,
                            fields,
                            &cells,
                        );
                    }
                    p = end;
                }
            }
        }
    }

    /// The spec's name for field `field`, if that field is one that is read.
    fn name_of_field(&self, header: &Header, field: usize) -> Option<String> {
        match header.slot_of(field)? {
            0 => Some(self.opts.column.to_owned()),
            1 => self.opts.arm_column.map(str::to_owned),
            2 => self.opts.order_column.map(str::to_owned),
            _ => self.opts.cluster_column.map(str::to_owned),
        }
    }

    /// The whole lines of a one-column file in `data[p..special]` (none holds a quote or a
    /// delimiter), their values parsed into runs and added with [`Collector::push_run`]; a line
    /// that does not parse goes through [`simple_line`](Self::simple_line), which says why.
    /// Returns the start of the first line not handled.
    fn plain_lines(&mut self, header: &Header, data: &[u8], mut p: usize, special: usize) -> usize {
        const RUN: usize = 4096;
        let mut xs: Vec<f64> = Vec::with_capacity(RUN);
        let mut spans: Vec<(usize, usize)> = Vec::with_capacity(RUN);
        let mut run_line = self.line;
        // `spans` holds each value's line; the cell is recovered from it only for a message.
        let flush =
            |c: &mut Collector, xs: &mut Vec<f64>, spans: &mut Vec<(usize, usize)>, line: u64| {
                if !xs.is_empty() {
                    c.push_run(0, xs, line, 1, |i| {
                        let (a, b) = spans[i];
                        trim_bytes(strip_cr(&data[a..b]), true)
                    });
                    xs.clear();
                    spans.clear();
                }
            };
        let base = p;
        for nl in memchr_iter(b'\n', &data[base..special]) {
            let end = base + nl;
            let line = strip_cr(&data[p..end]);
            let cell = trim_bytes(line, true);
            match self.collector.parse_quiet(cell) {
                Some(x) if !line.is_empty() => {
                    if xs.is_empty() {
                        run_line = self.line;
                    }
                    xs.push(x);
                    spans.push((p, end));
                    self.line += 1;
                    self.rows += 1;
                    if xs.len() == RUN {
                        flush(&mut self.collector, &mut xs, &mut spans, run_line);
                    }
                }
                _ => {
                    flush(&mut self.collector, &mut xs, &mut spans, run_line);
                    self.simple_line(header, &data[p..end]);
                }
            }
            p = end + 1;
        }
        flush(&mut self.collector, &mut xs, &mut spans, run_line);
        p
    }

    /// A line with no quote (and, in a one-column file, no delimiter).
    #[inline]
    fn simple_line(&mut self, header: &Header, line: &[u8]) {
        let line_no = self.line;
        self.line += 1;
        self.rows += 1;
        let line = strip_cr(line);
        if line.is_empty() {
            self.blank(line_no);
            return;
        }
        if header.fields == 1 {
            let cell = Cell {
                bytes: line,
                quoted: false,
                line_off: 0,
            };
            row(
                &mut self.collector,
                header,
                self.trim_tabs,
                line_no,
                1,
                &[Some(cell), None, None, None],
            );
            return;
        }
        let mut cells = [None; SLOTS];
        let mut field = 0;
        let mut start = 0;
        for d in memchr_iter(self.delim, line) {
            take(header, field, &line[start..d], &mut cells);
            field += 1;
            start = d + 1;
        }
        take(header, field, &line[start..], &mut cells);
        row(
            &mut self.collector,
            header,
            self.trim_tabs,
            line_no,
            field + 1,
            &cells,
        );
    }

    fn blank(&mut self, line: u64) {
        self.collector.refuse_row(
            ProblemKind::BlankLine,
            Place::Line { line, column: None },
            b"",
        );
    }

    /// Quote-aware split of the record starting at `p`; fields for which `slot` gives a slot
    /// are copied (unescaped) into `self.pieces[slot]`.
    fn split(
        &mut self,
        data: &[u8],
        p: usize,
        eof: bool,
        slot: impl Fn(usize) -> Option<usize>,
    ) -> Split {
        for piece in &mut self.pieces {
            piece.bytes.clear();
            piece.present = false;
        }
        self.bad_quotes.clear();
        let len = data.len();
        let delim = self.delim;
        let mut i = p;
        let mut field = 0usize;
        let mut newlines = 0u64;
        loop {
            let target = slot(field);
            if let Some(s) = target
                && self.pieces.len() <= s
            {
                self.pieces.resize(s + 1, Piece::default());
            }
            let line_off = newlines;
            let mut j = i;
            while j < len && self.is_blank(data[j]) {
                j += 1;
            }
            let quoted = j < len && data[j] == b'"';
            // `stop`: index of the byte that ends the field (delimiter, LF, or len at the end).
            let stop;
            if quoted {
                let mut k = j + 1;
                loop {
                    let Some(off) = memchr(b'"', &data[k..]) else {
                        return if eof {
                            Split::Unclosed { field, line_off }
                        } else {
                            Split::Incomplete
                        };
                    };
                    let q = k + off;
                    newlines += memchr_iter(b'\n', &data[k..q]).count() as u64;
                    if let Some(s) = target {
                        self.pieces[s].bytes.extend_from_slice(&data[k..q]);
                    }
                    if q + 1 < len && data[q + 1] == b'"' {
                        if let Some(s) = target {
                            self.pieces[s].bytes.push(b'"');
                        }
                        k = q + 2;
                        continue;
                    }
                    if q + 1 >= len && !eof {
                        return Split::Incomplete;
                    }
                    i = q + 1;
                    break;
                }
                while i < len && self.is_blank(data[i]) {
                    i += 1;
                }
                let at_end = i >= len
                    || data[i] == delim
                    || data[i] == b'\n'
                    || (data[i] == b'\r' && (i + 1 >= len || data[i + 1] == b'\n'));
                if i + 1 >= len && !eof && (i >= len || data[i] == b'\r') {
                    return Split::Incomplete;
                }
                if !at_end {
                    self.bad_quotes.push((field, newlines));
                }
                match memchr2(delim, b'\n', &data[i..]) {
                    Some(o) => stop = i + o,
                    None if eof => stop = len,
                    None => return Split::Incomplete,
                }
            } else {
                match memchr2(delim, b'\n', &data[i..]) {
                    Some(o) => stop = i + o,
                    None if eof => stop = len,
                    None => return Split::Incomplete,
                }
                if let Some(s) = target {
                    let mut content = &data[i..stop];
                    if stop == len || data[stop] == b'\n' {
                        content = content.strip_suffix(b"\r").unwrap_or(content);
                    }
                    self.pieces[s].bytes.extend_from_slice(content);
                }
            }
            if let Some(s) = target {
                let piece = &mut self.pieces[s];
                piece.quoted = quoted;
                piece.line_off = line_off;
                piece.present = true;
            }
            field += 1;
            if stop < len && data[stop] == delim {
                i = stop + 1;
                continue;
            }
            let end = if stop < len { stop + 1 } else { len };
            return Split::Record {
                end,
                newlines,
                fields: field,
            };
        }
    }

    /// Reads the header record at `p`: `None` if more bytes are needed.
    fn read_header(
        &mut self,
        data: &[u8],
        p: usize,
        eof: bool,
    ) -> Result<Option<(Header, usize)>, DataError> {
        let file = self.file;
        let (end, newlines, fields) = match self.split(data, p, eof, Some) {
            Split::Incomplete => return Ok(None),
            Split::Unclosed { field, line_off } => return Err(self.unclosed(field, line_off)),
            Split::Record {
                end,
                newlines,
                fields,
            } => (end, newlines, fields),
        };
        if end == p {
            // Only a byte-order mark, or nothing at all.
            return Err(super::empty(file));
        }
        let mut names = Vec::with_capacity(fields);
        for (i, piece) in self.pieces.iter().take(fields).enumerate() {
            let bytes = if piece.quoted {
                &piece.bytes[..]
            } else {
                self.trim(&piece.bytes)
            };
            let Ok(name) = std::str::from_utf8(bytes) else {
                return Err(DataError::one(
                    file,
                    ProblemKind::InvalidText,
                    Some(Place::Line {
                        line: 1 + piece.line_off,
                        column: Some(i as u32 + 1),
                    }),
                    "the column name is not UTF-8 text",
                )
                .with_hint("save the file with UTF-8 encoding"));
            };
            names.push(name.to_owned());
        }
        if fields == 1 && names[0].is_empty() {
            return Err(DataError::one(
                file,
                ProblemKind::BlankHeader,
                Some(Place::Line {
                    line: 1,
                    column: None,
                }),
                "the first line is blank",
            )
            .with_hint("the first line must name the columns, e.g. `build,drop_m,cycle`"));
        }
        let mut slots = [NONE; SLOTS];
        let wanted = [
            Some(self.opts.column),
            self.opts.arm_column,
            self.opts.order_column,
            self.opts.cluster_column,
        ];
        for (slot, want) in wanted.iter().enumerate() {
            let Some(want) = *want else { continue };
            let hits: Vec<usize> = (0..fields).filter(|&i| names[i] == want).collect();
            match hits.as_slice() {
                [one] => slots[slot] = *one,
                [] => return Err(self.missing_column(want, &names)),
                [first, second, ..] => {
                    return Err(DataError::one(
                        file,
                        ProblemKind::DuplicateColumn,
                        Some(Place::Line {
                            line: 1,
                            column: Some(*second as u32 + 1),
                        }),
                        format!(
                            "column `{want}` appears {} times in the header (fields {} and {}), so \
                             which one to read is ambiguous",
                            hits.len(),
                            first + 1,
                            second + 1
                        ),
                    )
                    .with_hint("rename the columns so that each name occurs once"));
                }
            }
        }
        self.line = 2 + newlines;
        Ok(Some((Header { fields, slots }, end)))
    }

    fn missing_column(&self, want: &str, names: &[String]) -> DataError {
        const SHOWN: usize = 30;
        let candidates: Vec<&str> = names.iter().map(String::as_str).collect();
        let mut listed = suggest::list(&candidates[..candidates.len().min(SHOWN)]);
        if candidates.len() > SHOWN {
            listed.push_str(&format!(" and {} more", candidates.len() - SHOWN));
        }
        let err = DataError::one(
            self.file,
            ProblemKind::MissingColumn,
            Some(Place::Line {
                line: 1,
                column: None,
            }),
            format!("no column named `{want}`; the header names {listed}"),
        );
        let other = if self.delim == b',' { b'\t' } else { b',' };
        if let Some(c) = suggest::closest(want, &candidates) {
            err.with_hint(format!("did you mean `{c}`?"))
        } else if names.len() == 1 && names[0].contains(';') {
            err.with_hint(
                "the header contains `;`: surety reads commas in .csv files and tabs in .tsv \
                 files; save the file with one of those",
            )
        } else if names.len() == 1 && names[0].as_bytes().contains(&other) {
            let (found, ext) = if other == b'\t' {
                ("tabs", ".tsv")
            } else {
                ("commas", ".csv")
            };
            err.with_hint(format!(
                "the header is separated by {found}: name the file {ext} so it is read that way"
            ))
        } else {
            err
        }
    }

    fn unclosed(&self, field: usize, line_off: u64) -> DataError {
        DataError::one(
            self.file,
            ProblemKind::UnclosedQuote,
            Some(Place::Line {
                line: self.line + line_off,
                column: Some(field as u32 + 1),
            }),
            "this quoted field is never closed: the file ends inside it",
        )
        .with_hint("every field that starts with `\"` needs a closing `\"`")
    }

    fn finish(self) -> Result<Vec<ArmData>, DataError> {
        let Some(header) = self.header else {
            return Err(super::empty(self.file));
        };
        if self.rows == 0 {
            return Err(DataError::one(
                self.file,
                ProblemKind::NoDataRows,
                Some(Place::Line {
                    line: 1,
                    column: None,
                }),
                "the file has a header line but no data rows",
            ));
        }
        let extra = self.fatal.map(|e| e.problems).unwrap_or_default();
        self.collector.finish(self.file, header.fields, extra)
    }
}

/// One data record: checks its shape and every cell that is read, then adds the value.
#[inline]
fn row(
    c: &mut Collector,
    header: &Header,
    trim_tabs: bool,
    line: u64,
    fields: usize,
    cells: &[Option<Cell>; SLOTS],
) {
    if fields != header.fields {
        let column = fields.min(header.fields) as u32 + 1;
        c.refuse_row(
            ProblemKind::RaggedRow,
            Place::Line {
                line,
                column: Some(column),
            },
            fields.to_string().as_bytes(),
        );
        return;
    }
    let place = |slot: usize, cell: &Cell| Place::Line {
        line: line + cell.line_off,
        column: Some(header.slots[slot] as u32 + 1),
    };
    let arm = match &cells[1] {
        None => c.single_arm(),
        Some(cell) => {
            let name = if cell.quoted {
                cell.bytes
            } else {
                trim_bytes(cell.bytes, trim_tabs)
            };
            c.arm(name, place(1, cell))
        }
    };
    let mut key_ok = true;
    let key: Option<Key> = match &cells[2] {
        None => None,
        Some(cell) => {
            let text = trim_bytes(cell.bytes, true);
            let k = if text.is_empty() {
                c.refuse_key(ProblemKind::EmptyCell, place(2, cell), text);
                None
            } else {
                c.parse_key(text, place(2, cell))
            };
            key_ok = k.is_some();
            k
        }
    };
    // Cluster names are read like arm names: quoted cells as written, others trimmed.
    let mut cluster_ok = true;
    let cluster = cells[3].as_ref().map(|cell| {
        let name = if cell.quoted {
            cell.bytes
        } else {
            trim_bytes(cell.bytes, trim_tabs)
        };
        cluster_ok = c.check_cluster(name, place(3, cell));
        name
    });
    let Some(cell) = &cells[0] else { return };
    let text = trim_bytes(cell.bytes, true);
    let at = place(0, cell);
    if let Some(x) = c.parse_value(text, at)
        && let Some(arm) = arm
        && key_ok
        && cluster_ok
    {
        c.push(arm, x, key, at, Some(text), cluster);
    }
}

/// Puts field `field` of a simple line into its slot, if it is read.
#[inline]
fn take<'a>(header: &Header, field: usize, bytes: &'a [u8], cells: &mut [Option<Cell<'a>>; SLOTS]) {
    if let Some(slot) = header.slot_of(field) {
        cells[slot] = Some(Cell {
            bytes,
            quoted: false,
            line_off: 0,
        });
    }
}

/// A line without the CR of a CRLF ending.
#[inline]
fn strip_cr(line: &[u8]) -> &[u8] {
    line.strip_suffix(b"\r").unwrap_or(line)
}

/// `s` without surrounding spaces (and tabs, when `tabs`).
#[inline]
fn trim_bytes(mut s: &[u8], tabs: bool) -> &[u8] {
    let blank = |b: u8| b == b' ' || (tabs && b == b'\t');
    while let [first, rest @ ..] = s
        && blank(*first)
    {
        s = rest;
    }
    while let [rest @ .., last] = s
        && blank(*last)
    {
        s = rest;
    }
    s
}
