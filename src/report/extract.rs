//! Reading back the files a report PDF carries: `surety verify report.pdf` takes the spec and
//! results.json out of the PDF and recomputes them.
//!
//! This is a small PDF reader of our own, not a general one. It reads only what finding
//! embedded files needs: the cross-reference data (classic tables and cross-reference streams,
//! hybrid files, and the `/Prev` chain that incremental updates — such as a digital signature
//! added later — leave behind), objects inside object streams, the catalog's `EmbeddedFiles`
//! name tree and `/AF` array, and the stream filters an embedded file may use. It does not
//! repair broken files: anything that does not add up is an error, because a report whose
//! structure is damaged should not pass verification by luck.
//!
//! Hostile input cannot make it panic, loop or exhaust memory: every index is checked, nesting
//! and reference chains are bounded, loops over the file consume input or are bounded by its
//! size, and decoding stops once [`MAX_DECODED`] bytes have been produced.

use std::collections::{BTreeMap, BTreeSet};
use std::fmt;

/// Most bytes one call may decode, over all the streams it reads (cross-reference streams,
/// object streams, embedded files); beyond it the PDF is refused as
/// [`ExtractError::LimitExceeded`]. A report's attachments are far smaller; the bound keeps a
/// hostile file (a compression bomb, or thousands of names for one large stream) from
/// exhausting memory.
pub const MAX_DECODED: usize = 256 << 20;

/// Deepest nesting of arrays and dictionaries, of name-tree levels, and longest chain of
/// references resolved at once.
const MAX_DEPTH: usize = 64;

/// Most filters applied to one stream.
const MAX_FILTERS: usize = 8;

/// Most cross-reference sections followed through `/Prev`.
const MAX_SECTIONS: usize = 4096;

/// How far from the end `startxref` is looked for.
const TAIL: usize = 4096;

/// Why the attachments of a PDF could not be read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ExtractError {
    /// No `%PDF-` header in the first kilobyte: the input is not a PDF file.
    NotPdf,
    /// The file ends before the structure it announces is complete (typically a copy that was
    /// cut short).
    Truncated {
        /// What is missing, such as "it ends inside stream 12".
        what: String,
    },
    /// A structure is not what the PDF format requires.
    Malformed {
        /// Byte offset where the problem was noticed: in the file, or, for objects stored in an
        /// object stream, in that stream's decoded data (then `what` names the stream). `None`
        /// for problems of how objects relate (a loop, a missing catalog), which have no one
        /// place.
        offset: Option<usize>,
        /// What is wrong.
        what: String,
    },
    /// The document is encrypted; its attachments are not decrypted.
    Encrypted,
    /// A stream uses a filter this reader does not decode.
    UnsupportedFilter {
        /// The filter's name, such as `LZWDecode`.
        filter: String,
    },
    /// A safety limit was reached: nesting depth, chain length or decoded size.
    LimitExceeded {
        /// Which limit.
        what: String,
    },
    /// An embedded file decodes to a size other than the one its `/Params /Size` records.
    SizeMismatch {
        /// The attachment's file name.
        name: String,
        /// Size recorded in the PDF.
        declared: u64,
        /// Size decoded.
        actual: u64,
    },
}

impl fmt::Display for ExtractError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ExtractError::NotPdf => f.write_str("not a PDF file (no %PDF- header)"),
            ExtractError::Truncated { what } => {
                write!(f, "the PDF is cut short: {what}")
            }
            ExtractError::Malformed {
                offset: Some(offset),
                what,
            } => write!(f, "the PDF is damaged at byte {offset}: {what}"),
            ExtractError::Malformed { offset: None, what } => {
                write!(f, "the PDF is damaged: {what}")
            }
            ExtractError::Encrypted => {
                f.write_str("the PDF is encrypted; its embedded files cannot be read")
            }
            ExtractError::UnsupportedFilter { filter } => {
                write!(
                    f,
                    "the PDF uses the stream filter {filter}, which surety does not decode"
                )
            }
            ExtractError::LimitExceeded { what } => {
                write!(f, "the PDF exceeds a safety limit: {what}")
            }
            ExtractError::SizeMismatch {
                name,
                declared,
                actual,
            } => write!(
                f,
                "the embedded file {name} decodes to {actual} bytes, but the PDF records {declared}"
            ),
        }
    }
}

impl std::error::Error for ExtractError {}

type Result<T> = std::result::Result<T, ExtractError>;

fn malformed(offset: usize, what: impl Into<String>) -> ExtractError {
    ExtractError::Malformed {
        offset: Some(offset),
        what: what.into(),
    }
}

/// A problem with no one place in the file.
fn damaged(what: impl Into<String>) -> ExtractError {
    ExtractError::Malformed {
        offset: None,
        what: what.into(),
    }
}

fn limit(what: &str) -> ExtractError {
    ExtractError::LimitExceeded {
        what: what.to_owned(),
    }
}

/// One file embedded in a PDF, with what the PDF says about it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EmbeddedFile {
    /// The file name (`/UF`, else `/F`, else its key in the name tree), decoded from the PDF's
    /// text encodings.
    pub name: String,
    /// The file's bytes, decoded.
    pub data: Vec<u8>,
    /// The MIME type recorded as the stream's `/Subtype`, such as `application/json`.
    pub mime_type: Option<String>,
    /// The PDF/A-3 `/AFRelationship`, such as `Source` or `Data`.
    pub relationship: Option<String>,
    /// The file specification's `/Desc`.
    pub description: Option<String>,
}

/// The embedded files of `pdf` as (file name, bytes), in the order of the `EmbeddedFiles` name
/// tree, then any further files listed only in the catalog's `/AF`. A file listed in both
/// appears once. A PDF without attachments gives an empty list. Never panics; damaged,
/// truncated or foreign input gives an [`ExtractError`].
pub fn attachments(pdf: &[u8]) -> Result<Vec<(String, Vec<u8>)>> {
    Ok(embedded_files(pdf)?
        .into_iter()
        .map(|f| (f.name, f.data))
        .collect())
}

/// Like [`attachments`], with each file's MIME type, relationship and description.
pub fn embedded_files(pdf: &[u8]) -> Result<Vec<EmbeddedFile>> {
    embedded_files_within(pdf, MAX_DECODED)
}

/// [`embedded_files`] with another bound on the bytes decoded.
fn embedded_files_within(pdf: &[u8], max_decoded: usize) -> Result<Vec<EmbeddedFile>> {
    let mut reader = Reader::open(pdf, max_decoded)?;
    reader.embedded_files()
}

// ------------------------------------------------------------------------------------------
// Objects

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
struct Ref {
    num: u32,
    generation: u16,
}

type Dict = BTreeMap<Vec<u8>, Obj>;

#[derive(Debug, Clone, PartialEq)]
enum Obj {
    Null,
    Bool(bool),
    Int(i64),
    Real(f64),
    Name(Vec<u8>),
    Str(Vec<u8>),
    Array(Vec<Obj>),
    Dict(Dict),
    /// A stream: its dictionary and where its (still encoded) bytes lie in the file.
    Stream(Dict, std::ops::Range<usize>),
    Ref(Ref),
}

impl Obj {
    fn as_int(&self) -> Option<i64> {
        match self {
            Obj::Int(i) => Some(*i),
            _ => None,
        }
    }
}

fn get<'d>(dict: &'d Dict, key: &str) -> Option<&'d Obj> {
    dict.get(key.as_bytes())
}

// ------------------------------------------------------------------------------------------
// Lexer

#[derive(Debug, Clone, PartialEq)]
enum Tok<'a> {
    Int(i64),
    Real(f64),
    Name(Vec<u8>),
    Str(Vec<u8>),
    ArrayOpen,
    ArrayClose,
    DictOpen,
    DictClose,
    /// Any other run of regular characters: `true`, `R`, `obj`, `xref`, …
    Word(&'a [u8]),
}

fn is_white(b: u8) -> bool {
    matches!(b, 0 | b'\t' | b'\n' | 0x0C | b'\r' | b' ')
}

fn is_delimiter(b: u8) -> bool {
    matches!(
        b,
        b'(' | b')' | b'<' | b'>' | b'[' | b']' | b'{' | b'}' | b'/' | b'%'
    )
}

fn is_regular(b: u8) -> bool {
    !is_white(b) && !is_delimiter(b)
}

fn hex_value(b: u8) -> Option<u8> {
    match b {
        b'0'..=b'9' => Some(b - b'0'),
        b'a'..=b'f' => Some(b - b'a' + 10),
        b'A'..=b'F' => Some(b - b'A' + 10),
        _ => None,
    }
}

/// Tokens of PDF syntax over a byte buffer: the file itself, or an object stream's decoded
/// data (then `context` names it, for messages).
struct Lexer<'a> {
    s: &'a [u8],
    pos: usize,
    context: Option<u32>,
}

impl<'a> Lexer<'a> {
    fn new(s: &'a [u8], pos: usize) -> Self {
        Lexer {
            s,
            pos,
            context: None,
        }
    }

    fn eof(&self, what: &str) -> ExtractError {
        match self.context {
            None => ExtractError::Truncated {
                what: format!("it ends inside {what}"),
            },
            Some(stream) => malformed(
                self.pos,
                format!("object stream {stream} ends inside {what}"),
            ),
        }
    }

    fn bad(&self, at: usize, what: &str) -> ExtractError {
        match self.context {
            None => malformed(at, what),
            Some(stream) => malformed(at, format!("{what} (in object stream {stream})")),
        }
    }

    fn skip_white(&mut self) {
        while let Some(&b) = self.s.get(self.pos) {
            if is_white(b) {
                self.pos += 1;
            } else if b == b'%' {
                while let Some(&c) = self.s.get(self.pos) {
                    if c == b'\n' || c == b'\r' {
                        break;
                    }
                    self.pos += 1;
                }
            } else {
                break;
            }
        }
    }

    fn next(&mut self) -> Result<Tok<'a>> {
        self.skip_white();
        let start = self.pos;
        let Some(&b) = self.s.get(start) else {
            return Err(self.eof("an object"));
        };
        match b {
            b'[' => {
                self.pos += 1;
                Ok(Tok::ArrayOpen)
            }
            b']' => {
                self.pos += 1;
                Ok(Tok::ArrayClose)
            }
            b'<' if self.s.get(start + 1) == Some(&b'<') => {
                self.pos += 2;
                Ok(Tok::DictOpen)
            }
            b'>' if self.s.get(start + 1) == Some(&b'>') => {
                self.pos += 2;
                Ok(Tok::DictClose)
            }
            b'<' => self.hex_string(),
            b'(' => self.literal_string(),
            b'/' => self.name(),
            b')' | b'>' | b'{' | b'}' => Err(self.bad(start, "unexpected delimiter")),
            _ => {
                while self.s.get(self.pos).is_some_and(|&c| is_regular(c)) {
                    self.pos += 1;
                }
                let word = &self.s[start..self.pos];
                Ok(number(word).unwrap_or(Tok::Word(word)))
            }
        }
    }

    fn name(&mut self) -> Result<Tok<'a>> {
        self.pos += 1;
        let mut out = Vec::new();
        while let Some(&c) = self.s.get(self.pos) {
            if !is_regular(c) {
                break;
            }
            if c == b'#' {
                let pair = (
                    self.s.get(self.pos + 1).copied().and_then(hex_value),
                    self.s.get(self.pos + 2).copied().and_then(hex_value),
                );
                if let (Some(h), Some(l)) = pair {
                    out.push(h << 4 | l);
                    self.pos += 3;
                    continue;
                }
            }
            out.push(c);
            self.pos += 1;
        }
        Ok(Tok::Name(out))
    }

    fn hex_string(&mut self) -> Result<Tok<'a>> {
        self.pos += 1;
        let mut out = Vec::new();
        let mut high: Option<u8> = None;
        loop {
            let Some(&c) = self.s.get(self.pos) else {
                return Err(self.eof("a hexadecimal string"));
            };
            self.pos += 1;
            if c == b'>' {
                break;
            }
            if is_white(c) {
                continue;
            }
            let Some(v) = hex_value(c) else {
                return Err(self.bad(self.pos - 1, "invalid character in a hexadecimal string"));
            };
            match high.take() {
                Some(h) => out.push(h << 4 | v),
                None => high = Some(v),
            }
        }
        if let Some(h) = high {
            out.push(h << 4);
        }
        Ok(Tok::Str(out))
    }

    fn literal_string(&mut self) -> Result<Tok<'a>> {
        self.pos += 1;
        let mut out = Vec::new();
        let mut depth = 1usize;
        loop {
            let Some(&c) = self.s.get(self.pos) else {
                return Err(self.eof("a string"));
            };
            self.pos += 1;
            match c {
                b'(' => {
                    depth += 1;
                    out.push(c);
                }
                b')' => {
                    depth -= 1;
                    if depth == 0 {
                        break;
                    }
                    out.push(c);
                }
                b'\\' => {
                    let Some(&e) = self.s.get(self.pos) else {
                        return Err(self.eof("a string"));
                    };
                    self.pos += 1;
                    match e {
                        b'n' => out.push(b'\n'),
                        b'r' => out.push(b'\r'),
                        b't' => out.push(b'\t'),
                        b'b' => out.push(0x08),
                        b'f' => out.push(0x0C),
                        b'0'..=b'7' => {
                            let mut v = u32::from(e - b'0');
                            for _ in 0..2 {
                                match self.s.get(self.pos) {
                                    Some(&d @ b'0'..=b'7') => {
                                        v = v * 8 + u32::from(d - b'0');
                                        self.pos += 1;
                                    }
                                    _ => break,
                                }
                            }
                            // Three octal digits can exceed a byte; the high bit is dropped,
                            // as the format says.
                            out.push((v & 0xFF) as u8);
                        }
                        b'\r' => {
                            if self.s.get(self.pos) == Some(&b'\n') {
                                self.pos += 1;
                            }
                        }
                        b'\n' => {}
                        other => out.push(other),
                    }
                }
                b'\r' => {
                    // An end of line inside a string reads as a single line feed.
                    if self.s.get(self.pos) == Some(&b'\n') {
                        self.pos += 1;
                    }
                    out.push(b'\n');
                }
                _ => out.push(c),
            }
        }
        Ok(Tok::Str(out))
    }
}

/// A run of regular characters read as a number, if it is one.
fn number(word: &[u8]) -> Option<Tok<'_>> {
    let digits = word
        .strip_prefix(b"+")
        .or_else(|| word.strip_prefix(b"-"))
        .unwrap_or(word);
    if digits.is_empty() || !digits.iter().all(|&c| c.is_ascii_digit() || c == b'.') {
        return None;
    }
    let dots = digits.iter().filter(|&&c| c == b'.').count();
    let text = std::str::from_utf8(word).ok()?;
    match dots {
        0 => text.parse::<i64>().ok().map(Tok::Int),
        1 if digits.len() > 1 => text.parse::<f64>().ok().map(Tok::Real),
        _ => None,
    }
}

// ------------------------------------------------------------------------------------------
// Parser

/// Reads one direct object (no streams) whose first token is `tok`.
fn parse_with<'a>(lex: &mut Lexer<'a>, tok: Tok<'a>, depth: usize) -> Result<Obj> {
    if depth > MAX_DEPTH {
        return Err(limit("arrays and dictionaries nested too deeply"));
    }
    Ok(match tok {
        Tok::Int(a) => {
            // `num gen R` is a reference; otherwise the integer stands alone.
            let save = lex.pos;
            let reference = match (u32::try_from(a), lex.next(), lex.next()) {
                (Ok(num), Ok(Tok::Int(g)), Ok(Tok::Word(b"R"))) => u16::try_from(g)
                    .ok()
                    .map(|generation| Ref { num, generation }),
                _ => None,
            };
            match reference {
                Some(r) => Obj::Ref(r),
                None => {
                    lex.pos = save;
                    Obj::Int(a)
                }
            }
        }
        Tok::Real(r) => Obj::Real(r),
        Tok::Name(n) => Obj::Name(n),
        Tok::Str(s) => Obj::Str(s),
        Tok::ArrayOpen => {
            let mut items = Vec::new();
            loop {
                match lex.next()? {
                    Tok::ArrayClose => break,
                    t => items.push(parse_with(lex, t, depth + 1)?),
                }
            }
            Obj::Array(items)
        }
        Tok::DictOpen => {
            let mut dict = Dict::new();
            loop {
                let at = lex.pos;
                match lex.next()? {
                    Tok::DictClose => break,
                    Tok::Name(key) => {
                        let t = lex.next()?;
                        let value = parse_with(lex, t, depth + 1)?;
                        dict.insert(key, value);
                    }
                    _ => return Err(lex.bad(at, "a dictionary key is not a name")),
                }
            }
            Obj::Dict(dict)
        }
        Tok::Word(b"true") => Obj::Bool(true),
        Tok::Word(b"false") => Obj::Bool(false),
        Tok::Word(b"null") => Obj::Null,
        Tok::ArrayClose | Tok::DictClose | Tok::Word(_) => {
            return Err(lex.bad(lex.pos, "unexpected token where an object should start"));
        }
    })
}

fn parse_obj(lex: &mut Lexer<'_>) -> Result<Obj> {
    let t = lex.next()?;
    parse_with(lex, t, 0)
}

/// Reads `num gen obj` at the lexer's position and returns the object number and generation.
fn object_header(lex: &mut Lexer<'_>) -> Result<Ref> {
    let at = lex.pos;
    match (lex.next()?, lex.next()?, lex.next()?) {
        (Tok::Int(n), Tok::Int(g), Tok::Word(b"obj")) => {
            match (u32::try_from(n), u16::try_from(g)) {
                (Ok(num), Ok(generation)) => Ok(Ref { num, generation }),
                _ => Err(lex.bad(at, "object number out of range")),
            }
        }
        _ => Err(lex.bad(at, "expected an object header `num gen obj`")),
    }
}

// ------------------------------------------------------------------------------------------
// The document

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Entry {
    Free,
    /// Stored at a byte offset, with its generation.
    InFile(usize, u16),
    /// Stored in object stream `stream` (its place there is read from the stream's header).
    InStream {
        stream: u32,
    },
}

struct Reader<'a> {
    s: &'a [u8],
    xref: BTreeMap<u32, Entry>,
    trailer: Dict,
    cache: BTreeMap<u32, Obj>,
    /// Object streams already unpacked into `cache`.
    unpacked: BTreeSet<u32>,
    /// Objects being read right now, to catch reference cycles.
    active: Vec<u32>,
    /// Bytes that may still be decoded (see [`MAX_DECODED`]).
    budget: usize,
}

impl<'a> Reader<'a> {
    fn open(s: &'a [u8], max_decoded: usize) -> Result<Self> {
        let head = &s[..s.len().min(1024)];
        if !head.windows(5).any(|w| w == b"%PDF-") {
            return Err(ExtractError::NotPdf);
        }
        let mut reader = Reader {
            s,
            xref: BTreeMap::new(),
            trailer: Dict::new(),
            cache: BTreeMap::new(),
            unpacked: BTreeSet::new(),
            active: Vec::new(),
            budget: max_decoded,
        };
        reader.read_xref()?;
        if reader.trailer.contains_key(b"Encrypt".as_slice()) {
            return Err(ExtractError::Encrypted);
        }
        Ok(reader)
    }

    /// The offset named by the last `startxref` (which must be followed by `%%EOF`).
    fn startxref(&self) -> Result<usize> {
        let from = self.s.len().saturating_sub(TAIL);
        let tail = &self.s[from..];
        let cut = || ExtractError::Truncated {
            what: "its last lines (`startxref` … `%%EOF`) are missing".to_owned(),
        };
        let at = rfind(tail, b"startxref").ok_or_else(cut)? + from;
        let eof = rfind(tail, b"%%EOF").ok_or_else(cut)? + from;
        if eof < at {
            return Err(cut());
        }
        let mut lex = Lexer::new(self.s, at + b"startxref".len());
        match lex.next()? {
            Tok::Int(off) => match usize::try_from(off) {
                Ok(off) if off < self.s.len() => Ok(off),
                Ok(_) => Err(ExtractError::Truncated {
                    what: "the cross-reference data `startxref` points to lie past its end"
                        .to_owned(),
                }),
                Err(_) => Err(malformed(at, "negative `startxref` offset")),
            },
            _ => Err(malformed(at, "`startxref` is not followed by an offset")),
        }
    }

    /// Reads every cross-reference section, newest first, so that newer entries win.
    fn read_xref(&mut self) -> Result<()> {
        let mut next = Some(self.startxref()?);
        let mut seen = BTreeSet::new();
        let mut newest: Option<Dict> = None;
        while let Some(offset) = next {
            if !seen.insert(offset) {
                return Err(malformed(
                    offset,
                    "the cross-reference sections form a loop",
                ));
            }
            if seen.len() > MAX_SECTIONS {
                return Err(limit("too many cross-reference sections"));
            }
            let trailer = self.read_section(offset)?;
            // A hybrid file keeps part of its entries in a cross-reference stream.
            if let Some(stream) = get(&trailer, "XRefStm").and_then(Obj::as_int) {
                let stream = usize::try_from(stream)
                    .map_err(|_| malformed(offset, "negative /XRefStm offset"))?;
                if seen.insert(stream) {
                    self.read_section(stream)?;
                }
            }
            next = match get(&trailer, "Prev") {
                None => None,
                Some(Obj::Int(p)) => Some(
                    usize::try_from(*p).map_err(|_| malformed(offset, "negative /Prev offset"))?,
                ),
                Some(_) => return Err(malformed(offset, "/Prev is not an offset")),
            };
            if newest.is_none() {
                newest = Some(trailer);
            }
        }
        self.trailer = newest.unwrap_or_default();
        Ok(())
    }

    fn add_entry(&mut self, num: u32, entry: Entry) {
        // A free entry in a newer section does not hide the object from older ones: for
        // reading attachments, an object deleted later is simply not referred to any more.
        let keep = matches!(self.xref.get(&num), Some(e) if *e != Entry::Free);
        if !keep {
            self.xref.insert(num, entry);
        }
    }

    /// Reads one section (a table with its trailer, or a cross-reference stream) and returns
    /// its trailer dictionary.
    fn read_section(&mut self, offset: usize) -> Result<Dict> {
        if offset >= self.s.len() {
            return Err(ExtractError::Truncated {
                what: "a cross-reference section lies past its end".to_owned(),
            });
        }
        let mut lex = Lexer::new(self.s, offset);
        if lex.next()? == Tok::Word(b"xref") {
            return self.read_table(&mut lex);
        }
        let (_, obj) = self.indirect_at(offset)?;
        let Obj::Stream(dict, range) = obj else {
            return Err(malformed(
                offset,
                "the cross-reference data is neither a table nor a stream",
            ));
        };
        if get(&dict, "Type") != Some(&Obj::Name(b"XRef".to_vec())) {
            return Err(malformed(
                offset,
                "the cross-reference stream is not of /Type /XRef",
            ));
        }
        let data = self.decode(&dict, range)?;
        self.read_xref_stream(&dict, &data, offset)?;
        Ok(dict)
    }

    fn read_table(&mut self, lex: &mut Lexer<'a>) -> Result<Dict> {
        loop {
            let at = lex.pos;
            match lex.next()? {
                Tok::Word(b"trailer") => break,
                Tok::Int(first) => {
                    let count = match lex.next()? {
                        Tok::Int(c) => c,
                        _ => return Err(malformed(at, "bad cross-reference subsection header")),
                    };
                    let (Ok(first), Ok(count)) = (u32::try_from(first), u32::try_from(count))
                    else {
                        return Err(malformed(at, "bad cross-reference subsection header"));
                    };
                    for i in 0..count {
                        let at = lex.pos;
                        let (offset, generation, kind) = (lex.next()?, lex.next()?, lex.next()?);
                        let (Tok::Int(offset), Tok::Int(generation)) = (offset, generation) else {
                            return Err(malformed(at, "bad cross-reference entry"));
                        };
                        let Some(num) = first.checked_add(i) else {
                            return Err(malformed(at, "object number out of range"));
                        };
                        let entry = match (kind, usize::try_from(offset), u16::try_from(generation))
                        {
                            (Tok::Word(b"n"), Ok(o), Ok(g)) => Entry::InFile(o, g),
                            (Tok::Word(b"f"), _, _) => Entry::Free,
                            _ => return Err(malformed(at, "bad cross-reference entry")),
                        };
                        self.add_entry(num, entry);
                    }
                }
                _ => {
                    return Err(malformed(
                        at,
                        "expected a cross-reference subsection or `trailer`",
                    ));
                }
            }
        }
        let at = lex.pos;
        match parse_obj(lex)? {
            Obj::Dict(d) => Ok(d),
            _ => Err(malformed(at, "the trailer is not a dictionary")),
        }
    }

    fn read_xref_stream(&mut self, dict: &Dict, data: &[u8], offset: usize) -> Result<()> {
        let bad = |what: &str| malformed(offset, format!("cross-reference stream: {what}"));
        let widths: Vec<usize> = match get(dict, "W") {
            Some(Obj::Array(w)) if w.len() == 3 => w
                .iter()
                .map(|v| {
                    v.as_int()
                        .and_then(|i| usize::try_from(i).ok())
                        .filter(|&i| i <= 8)
                })
                .collect::<Option<Vec<_>>>()
                .ok_or_else(|| bad("/W widths must be whole numbers from 0 to 8"))?,
            _ => return Err(bad("/W must list three widths")),
        };
        let row = widths.iter().sum::<usize>();
        if row == 0 {
            return Err(bad("/W widths add up to 0"));
        }
        let size = get(dict, "Size")
            .and_then(Obj::as_int)
            .and_then(|s| u32::try_from(s).ok())
            .ok_or_else(|| bad("/Size is missing"))?;
        let index: Vec<(u32, u32)> = match get(dict, "Index") {
            None => vec![(0, size)],
            Some(Obj::Array(a)) if a.len() % 2 == 0 => a
                .chunks_exact(2)
                .map(|p| {
                    let f = p[0].as_int().and_then(|v| u32::try_from(v).ok());
                    let c = p[1].as_int().and_then(|v| u32::try_from(v).ok());
                    f.zip(c)
                })
                .collect::<Option<Vec<_>>>()
                .ok_or_else(|| bad("/Index must hold pairs of whole numbers"))?,
            Some(_) => return Err(bad("/Index must hold pairs of whole numbers")),
        };
        let rows: u64 = index.iter().map(|&(_, c)| u64::from(c)).sum();
        let needed = rows.saturating_mul(row as u64);
        if needed > data.len() as u64 {
            return Err(bad("the stream holds fewer entries than /Index announces"));
        }
        let field = |bytes: &[u8], default: u64| -> u64 {
            if bytes.is_empty() {
                default
            } else {
                bytes.iter().fold(0u64, |acc, &b| acc << 8 | u64::from(b))
            }
        };
        let mut at = 0usize;
        for (first, count) in index {
            for i in 0..count {
                let cells = &data[at..at + row];
                at += row;
                let (a, rest) = cells.split_at(widths[0]);
                let (b, c) = rest.split_at(widths[1]);
                let Some(num) = first.checked_add(i) else {
                    return Err(bad("object number out of range"));
                };
                let entry = match field(a, 1) {
                    0 => Entry::Free,
                    1 => match (usize::try_from(field(b, 0)), u16::try_from(field(c, 0))) {
                        (Ok(o), Ok(g)) => Entry::InFile(o, g),
                        _ => return Err(bad("entry out of range")),
                    },
                    2 => match u32::try_from(field(b, 0)) {
                        Ok(stream) => Entry::InStream { stream },
                        Err(_) => return Err(bad("entry out of range")),
                    },
                    // Unknown entry types are to be read as references to the null object.
                    _ => Entry::Free,
                };
                self.add_entry(num, entry);
            }
        }
        Ok(())
    }

    /// Parses the indirect object at `offset` in the file, streams included.
    fn indirect_at(&mut self, offset: usize) -> Result<(Ref, Obj)> {
        let mut lex = Lexer::new(self.s, offset);
        let r = object_header(&mut lex)?;
        let obj = parse_obj(&mut lex)?;
        let Obj::Dict(dict) = obj else {
            return Ok((r, obj));
        };
        if lex.next() != Ok(Tok::Word(b"stream")) {
            return Ok((r, Obj::Dict(dict)));
        }
        // The keyword is followed by an end of line: CR LF or LF (a lone CR is tolerated).
        let mut start = lex.pos;
        match (self.s.get(start), self.s.get(start + 1)) {
            (Some(b'\r'), Some(b'\n')) => start += 2,
            (Some(b'\n'), _) | (Some(b'\r'), _) => start += 1,
            (None, _) => {
                return Err(ExtractError::Truncated {
                    what: format!("it ends inside stream {}", r.num),
                });
            }
            _ => {
                return Err(malformed(
                    start,
                    "`stream` is not followed by an end of line",
                ));
            }
        }
        let length = match get(&dict, "Length") {
            Some(Obj::Ref(l)) => {
                self.active.push(r.num);
                let resolved = self.object(*l);
                self.active.pop();
                resolved?
            }
            Some(other) => other.clone(),
            None => {
                return Err(malformed(
                    offset,
                    format!("stream {} has no /Length", r.num),
                ));
            }
        };
        let length = length
            .as_int()
            .and_then(|l| usize::try_from(l).ok())
            .ok_or_else(|| malformed(offset, format!("stream {} has a bad /Length", r.num)))?;
        let end = start
            .checked_add(length)
            .filter(|&e| e <= self.s.len())
            .ok_or_else(|| ExtractError::Truncated {
                what: format!("it ends inside stream {}", r.num),
            })?;
        let mut after = Lexer::new(self.s, end);
        match after.next() {
            Ok(Tok::Word(b"endstream")) => Ok((r, Obj::Stream(dict, start..end))),
            Err(e @ ExtractError::Truncated { .. }) => Err(e),
            _ => Err(malformed(
                end,
                format!("stream {} does not end where its /Length says", r.num),
            )),
        }
    }

    /// The object `r` refers to; the null object when the cross-reference data do not list it.
    fn object(&mut self, r: Ref) -> Result<Obj> {
        if let Some(o) = self.cache.get(&r.num) {
            return Ok(o.clone());
        }
        if self.active.contains(&r.num) {
            return Err(damaged(format!("object {} refers to itself", r.num)));
        }
        if self.active.len() >= MAX_DEPTH {
            return Err(limit("chain of references too long"));
        }
        self.active.push(r.num);
        let found = self.load(r);
        self.active.pop();
        let obj = found?;
        self.cache.insert(r.num, obj.clone());
        Ok(obj)
    }

    fn load(&mut self, r: Ref) -> Result<Obj> {
        match self.xref.get(&r.num).copied() {
            None | Some(Entry::Free) => Ok(Obj::Null),
            Some(Entry::InFile(offset, generation)) => {
                if generation != r.generation {
                    return Ok(Obj::Null);
                }
                if offset >= self.s.len() {
                    return Err(ExtractError::Truncated {
                        what: format!("object {} lies past its end", r.num),
                    });
                }
                let (found, obj) = self.indirect_at(offset)?;
                if found.num != r.num {
                    return Err(malformed(
                        offset,
                        format!(
                            "object {} is listed here, but object {} is found",
                            r.num, found.num
                        ),
                    ));
                }
                Ok(obj)
            }
            Some(Entry::InStream { stream }) => {
                if r.generation != 0 {
                    return Ok(Obj::Null);
                }
                self.unpack(stream)?;
                self.cache.get(&r.num).cloned().ok_or_else(|| {
                    damaged(format!(
                        "object {} is missing from object stream {stream}",
                        r.num
                    ))
                })
            }
        }
    }

    /// Reads every object stored in object stream `num` into the cache.
    fn unpack(&mut self, num: u32) -> Result<()> {
        if !self.unpacked.insert(num) {
            return Ok(());
        }
        let offset = match self.xref.get(&num) {
            Some(Entry::InFile(o, _)) => *o,
            _ => {
                return Err(damaged(format!(
                    "object stream {num} is not stored in the file"
                )));
            }
        };
        let stream = self.object(Ref { num, generation: 0 })?;
        let Obj::Stream(dict, range) = stream else {
            return Err(malformed(
                offset,
                format!("object {num} is not an object stream"),
            ));
        };
        let count = get(&dict, "N")
            .and_then(Obj::as_int)
            .and_then(|n| usize::try_from(n).ok());
        let first = get(&dict, "First")
            .and_then(Obj::as_int)
            .and_then(|n| usize::try_from(n).ok());
        let (Some(count), Some(first)) = (count, first) else {
            return Err(malformed(
                offset,
                format!("object stream {num} lacks /N or /First"),
            ));
        };
        let data = self.decode(&dict, range)?;
        let mut header = Lexer {
            s: &data,
            pos: 0,
            context: Some(num),
        };
        let mut members = Vec::new();
        for _ in 0..count {
            let at = header.pos;
            match (header.next()?, header.next()?) {
                (Tok::Int(n), Tok::Int(o)) => match (u32::try_from(n), usize::try_from(o)) {
                    (Ok(n), Ok(o)) => members.push((n, o)),
                    _ => return Err(header.bad(at, "bad object stream header")),
                },
                _ => return Err(header.bad(at, "bad object stream header")),
            }
        }
        for (member, at) in members {
            // Only objects the cross-reference data place in this stream are taken: a newer
            // revision may have replaced the others.
            if self.xref.get(&member) != Some(&Entry::InStream { stream: num })
                || self.cache.contains_key(&member)
            {
                continue;
            }
            let Some(start) = first.checked_add(at).filter(|&s| s <= data.len()) else {
                return Err(malformed(
                    at,
                    format!("object stream {num} places object {member} past its end"),
                ));
            };
            let mut lex = Lexer {
                s: &data,
                pos: start,
                context: Some(num),
            };
            let obj = parse_obj(&mut lex)?;
            self.cache.insert(member, obj);
        }
        Ok(())
    }

    /// `obj` with references followed.
    fn resolve(&mut self, obj: &Obj) -> Result<Obj> {
        let mut current = obj.clone();
        for _ in 0..MAX_DEPTH {
            match current {
                Obj::Ref(r) => current = self.object(r)?,
                other => return Ok(other),
            }
        }
        Err(limit("chain of references too long"))
    }

    fn resolve_key(&mut self, dict: &Dict, key: &str) -> Result<Obj> {
        match get(dict, key) {
            Some(o) => self.resolve(o),
            None => Ok(Obj::Null),
        }
    }

    /// The stream's bytes with its filters undone.
    fn decode(&mut self, dict: &Dict, range: std::ops::Range<usize>) -> Result<Vec<u8>> {
        let at = range.start;
        let raw = self.s.get(range).ok_or_else(|| ExtractError::Truncated {
            what: "it ends inside a stream".to_owned(),
        })?;
        let filters = match self.resolve_key(dict, "Filter")? {
            Obj::Null => Vec::new(),
            Obj::Name(n) => vec![n],
            Obj::Array(items) => {
                let mut names = Vec::new();
                for item in &items {
                    match self.resolve(item)? {
                        Obj::Name(n) => names.push(n),
                        _ => {
                            return Err(malformed(at, "/Filter lists something other than a name"));
                        }
                    }
                }
                names
            }
            _ => return Err(malformed(at, "/Filter is neither a name nor a list")),
        };
        if filters.len() > MAX_FILTERS {
            return Err(limit("too many filters on one stream"));
        }
        let params: Vec<Option<Dict>> = match self.resolve_key(dict, "DecodeParms")? {
            Obj::Dict(d) => vec![Some(d)],
            Obj::Array(items) => {
                let mut out = Vec::new();
                for item in &items {
                    out.push(match self.resolve(item)? {
                        Obj::Dict(d) => Some(d),
                        _ => None,
                    });
                }
                out
            }
            _ => Vec::new(),
        };
        let mut data = raw.to_vec();
        for (i, filter) in filters.iter().enumerate() {
            let p = params.get(i).cloned().flatten().unwrap_or_default();
            data = match filter.as_slice() {
                b"FlateDecode" | b"Fl" => predict(inflate(&data, at, self.budget)?, &p, at)?,
                b"ASCIIHexDecode" | b"AHx" => ascii_hex(&data, at)?,
                b"ASCII85Decode" | b"A85" => ascii85(&data, at)?,
                b"RunLengthDecode" | b"RL" => run_length(&data, at, self.budget)?,
                other => {
                    return Err(ExtractError::UnsupportedFilter {
                        filter: String::from_utf8_lossy(other).into_owned(),
                    });
                }
            };
            // The text filters shrink their input and the others stop at the budget, so one
            // step never holds much more than the budget allows.
            self.budget = self
                .budget
                .checked_sub(data.len())
                .ok_or_else(|| limit("the streams decode to more than the size limit"))?;
        }
        Ok(data)
    }

    fn embedded_files(&mut self) -> Result<Vec<EmbeddedFile>> {
        let root = match self.trailer.get(b"Root".as_slice()).cloned() {
            Some(r) => self.resolve(&r)?,
            None => return Err(damaged("the trailer has no /Root (document catalog)")),
        };
        let Obj::Dict(catalog) = root else {
            return Err(damaged("the document catalog is not a dictionary"));
        };
        // (key in the name tree, the file specification as written there)
        let mut specs: Vec<(Option<Vec<u8>>, Obj)> = Vec::new();
        if let Obj::Dict(names) = self.resolve_key(&catalog, "Names")?
            && let Some(tree) = get(&names, "EmbeddedFiles").cloned()
        {
            let mut visited = BTreeSet::new();
            self.name_tree(&tree, 0, &mut visited, &mut specs)?;
        }
        match self.resolve_key(&catalog, "AF")? {
            Obj::Array(items) => specs.extend(items.into_iter().map(|i| (None, i))),
            Obj::Null => {}
            _ => return Err(damaged("the catalog's /AF is not a list")),
        }
        let mut seen_refs = BTreeSet::new();
        let mut out: Vec<EmbeddedFile> = Vec::new();
        for (key, spec) in specs {
            if let Obj::Ref(r) = &spec
                && !seen_refs.insert(*r)
            {
                continue;
            }
            let from_af = key.is_none();
            let Some(file) = self.file_spec(key.as_deref(), &spec)? else {
                continue;
            };
            // A direct file specification in /AF that repeats one already read is the same
            // file (the comparison is only made for those, so it stays cheap).
            if from_af && !matches!(spec, Obj::Ref(_)) && out.contains(&file) {
                continue;
            }
            out.push(file);
        }
        Ok(out)
    }

    fn name_tree(
        &mut self,
        node: &Obj,
        depth: usize,
        visited: &mut BTreeSet<Ref>,
        out: &mut Vec<(Option<Vec<u8>>, Obj)>,
    ) -> Result<()> {
        if depth > MAX_DEPTH {
            return Err(limit("name tree too deep"));
        }
        if let Obj::Ref(r) = node
            && !visited.insert(*r)
        {
            return Err(damaged("the embedded-files name tree contains a loop"));
        }
        let Obj::Dict(dict) = self.resolve(node)? else {
            return Err(damaged(
                "a node of the embedded-files name tree is not a dictionary",
            ));
        };
        match self.resolve_key(&dict, "Names")? {
            Obj::Array(pairs) => {
                if pairs.len() % 2 != 0 {
                    return Err(damaged(
                        "the embedded-files name tree has a key without a value",
                    ));
                }
                for pair in pairs.chunks_exact(2) {
                    let key = match self.resolve(&pair[0])? {
                        Obj::Str(s) => s,
                        _ => {
                            return Err(damaged(
                                "a key of the embedded-files name tree is not a string",
                            ));
                        }
                    };
                    out.push((Some(key), pair[1].clone()));
                }
            }
            Obj::Null => {}
            _ => {
                return Err(damaged(
                    "/Names of the embedded-files name tree is not a list",
                ));
            }
        }
        match self.resolve_key(&dict, "Kids")? {
            Obj::Array(kids) => {
                for kid in &kids {
                    self.name_tree(kid, depth + 1, visited, out)?;
                }
            }
            Obj::Null => {}
            _ => {
                return Err(damaged(
                    "/Kids of the embedded-files name tree is not a list",
                ));
            }
        }
        Ok(())
    }

    /// The embedded file a file specification describes; `None` for a specification of an
    /// external file (no `/EF`).
    fn file_spec(&mut self, key: Option<&[u8]>, spec: &Obj) -> Result<Option<EmbeddedFile>> {
        let dict = match self.resolve(spec)? {
            Obj::Dict(d) => d,
            // A bare string is a file specification of an external file.
            Obj::Str(_) | Obj::Null => return Ok(None),
            _ => return Err(damaged("a file specification is not a dictionary")),
        };
        let Obj::Dict(ef) = self.resolve_key(&dict, "EF")? else {
            return Ok(None);
        };
        let mut name = None;
        for k in ["UF", "F", "Unix", "DOS", "Mac"] {
            if let Obj::Str(s) = self.resolve_key(&dict, k)? {
                name = Some(text(&s));
                break;
            }
        }
        let name = name
            .or_else(|| key.map(text))
            .ok_or_else(|| damaged("an embedded file has no name"))?;
        let stream = match self.resolve_key(&ef, "UF")? {
            Obj::Null => self.resolve_key(&ef, "F")?,
            s => s,
        };
        let Obj::Stream(sdict, range) = stream else {
            return Err(damaged(format!("the embedded file {name} is not a stream")));
        };
        let data = self.decode(&sdict, range)?;
        if let Obj::Dict(params) = self.resolve_key(&sdict, "Params")?
            && let Obj::Int(size) = self.resolve_key(&params, "Size")?
            && u64::try_from(size).ok() != Some(data.len() as u64)
        {
            return Err(ExtractError::SizeMismatch {
                name,
                declared: u64::try_from(size).unwrap_or(0),
                actual: data.len() as u64,
            });
        }
        let name_text = |o: Obj| match o {
            Obj::Name(n) => Some(String::from_utf8_lossy(&n).into_owned()),
            _ => None,
        };
        let mime_type = name_text(self.resolve_key(&sdict, "Subtype")?);
        let relationship = name_text(self.resolve_key(&dict, "AFRelationship")?);
        let description = match self.resolve_key(&dict, "Desc")? {
            Obj::Str(s) => Some(text(&s)),
            _ => None,
        };
        Ok(Some(EmbeddedFile {
            name,
            data,
            mime_type,
            relationship,
            description,
        }))
    }
}

fn rfind(hay: &[u8], needle: &[u8]) -> Option<usize> {
    hay.windows(needle.len()).rposition(|w| w == needle)
}

// ------------------------------------------------------------------------------------------
// Text strings

/// A PDF text string: UTF-16BE or UTF-8 with a byte-order mark, else PDFDocEncoding.
fn text(bytes: &[u8]) -> String {
    if let Some(rest) = bytes.strip_prefix(&[0xFE, 0xFF]) {
        let units = rest
            .chunks_exact(2)
            .map(|p| u16::from_be_bytes([p[0], p[1]]));
        return char::decode_utf16(units)
            .map(|c| c.unwrap_or(char::REPLACEMENT_CHARACTER))
            .collect();
    }
    if let Some(rest) = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]) {
        return String::from_utf8_lossy(rest).into_owned();
    }
    bytes.iter().map(|&b| pdf_doc_char(b)).collect()
}

/// PDFDocEncoding (ISO 32000-1, Annex D.2): Latin-1 except for the ranges 0x18–0x1F and
/// 0x80–0xA0, which hold typographic characters; 0x7F, 0x9F and 0xAD are undefined. The table
/// was written from memory of Annex D; tests/extract.rs checks every entry against the names
/// qpdf writes in this encoding.
fn pdf_doc_char(b: u8) -> char {
    const LOW: [char; 8] = ['˘', 'ˇ', 'ˆ', '˙', '˝', '˛', '˚', '˜'];
    const HIGH: [char; 33] = [
        '•', '†', '‡', '…', '—', '–', 'ƒ', '⁄', '‹', '›', '−', '‰', '„', '“', '”', '‘', '’', '‚',
        '™', 'ﬁ', 'ﬂ', 'Ł', 'Œ', 'Š', 'Ÿ', 'Ž', 'ı', 'ł', 'œ', 'š', 'ž', '\u{FFFD}', '€',
    ];
    match b {
        0x18..=0x1F => LOW[usize::from(b - 0x18)],
        0x80..=0xA0 => HIGH[usize::from(b - 0x80)],
        0x7F | 0xAD => char::REPLACEMENT_CHARACTER,
        _ => char::from(b),
    }
}

// ------------------------------------------------------------------------------------------
// Filters

fn inflate(data: &[u8], at: usize, max: usize) -> Result<Vec<u8>> {
    use miniz_oxide::inflate::{TINFLStatus, decompress_to_vec_zlib_with_limit};
    decompress_to_vec_zlib_with_limit(data, max).map_err(|e| match e.status {
        TINFLStatus::HasMoreOutput => limit("the streams decode to more than the size limit"),
        _ => malformed(
            at,
            "the compressed data of a stream are corrupt or cut short",
        ),
    })
}

/// Undoes the PNG (10–15) or TIFF (2) predictor of a Flate stream.
fn predict(data: Vec<u8>, params: &Dict, at: usize) -> Result<Vec<u8>> {
    let int = |key: &str, default: i64| get(params, key).and_then(Obj::as_int).unwrap_or(default);
    let predictor = int("Predictor", 1);
    if predictor == 1 {
        return Ok(data);
    }
    let colors = int("Colors", 1);
    let bits = int("BitsPerComponent", 8);
    let columns = int("Columns", 1);
    if !(1..=32).contains(&colors)
        || ![1, 2, 4, 8, 16].contains(&bits)
        || !(1..=1 << 24).contains(&columns)
    {
        return Err(malformed(at, "bad predictor parameters"));
    }
    // All positive and small by the checks above; the row length (up to 2^30 bytes) is
    // computed in 64 bits and must fit the platform.
    let row = usize::try_from((colors * bits * columns + 7) / 8)
        .map_err(|_| limit("predictor rows too long"))?;
    let pixel = usize::try_from(((colors * bits + 7) / 8).max(1))
        .map_err(|_| limit("predictor rows too long"))?;
    let bits = usize::try_from(bits).unwrap_or(8);
    match predictor {
        2 => {
            if bits != 8 {
                return Err(ExtractError::UnsupportedFilter {
                    filter: format!("TIFF predictor with {bits} bits per component"),
                });
            }
            let mut out = data;
            for line in out.chunks_mut(row) {
                for i in pixel..line.len() {
                    line[i] = line[i].wrapping_add(line[i - pixel]);
                }
            }
            Ok(out)
        }
        10..=15 => {
            // Checked before `prior` is allocated, so the row length is bounded by the data.
            if data.is_empty() {
                return Ok(data);
            }
            if !data.len().is_multiple_of(row + 1) {
                return Err(malformed(at, "predicted data do not fill whole rows"));
            }
            let mut out = Vec::with_capacity(data.len() / (row + 1) * row);
            let mut prior = vec![0u8; row];
            for line in data.chunks_exact(row + 1) {
                let (kind, bytes) = (line[0], &line[1..]);
                let mut cur = vec![0u8; row];
                for i in 0..row {
                    let left = if i >= pixel { cur[i - pixel] } else { 0 };
                    let up = prior[i];
                    let up_left = if i >= pixel { prior[i - pixel] } else { 0 };
                    let base = match kind {
                        0 => 0,
                        1 => left,
                        2 => up,
                        3 => ((u16::from(left) + u16::from(up)) / 2) as u8,
                        4 => paeth(left, up, up_left),
                        _ => return Err(malformed(at, "unknown PNG predictor type")),
                    };
                    cur[i] = bytes[i].wrapping_add(base);
                }
                out.extend_from_slice(&cur);
                prior = cur;
            }
            Ok(out)
        }
        _ => Err(ExtractError::UnsupportedFilter {
            filter: format!("predictor {predictor}"),
        }),
    }
}

fn paeth(a: u8, b: u8, c: u8) -> u8 {
    let p = i16::from(a) + i16::from(b) - i16::from(c);
    let (pa, pb, pc) = (
        (p - i16::from(a)).abs(),
        (p - i16::from(b)).abs(),
        (p - i16::from(c)).abs(),
    );
    if pa <= pb && pa <= pc {
        a
    } else if pb <= pc {
        b
    } else {
        c
    }
}

fn ascii_hex(data: &[u8], at: usize) -> Result<Vec<u8>> {
    let mut out = Vec::with_capacity(data.len() / 2);
    let mut high: Option<u8> = None;
    for &c in data {
        if c == b'>' {
            break;
        }
        if is_white(c) {
            continue;
        }
        let v = hex_value(c).ok_or_else(|| malformed(at, "invalid character in ASCIIHex data"))?;
        match high.take() {
            Some(h) => out.push(h << 4 | v),
            None => high = Some(v),
        }
    }
    if let Some(h) = high {
        out.push(h << 4);
    }
    Ok(out)
}

fn ascii85(data: &[u8], at: usize) -> Result<Vec<u8>> {
    let bad = || malformed(at, "invalid ASCII85 data");
    let body = data.strip_prefix(b"<~").unwrap_or(data);
    let mut out = Vec::with_capacity(body.len() / 5 * 4);
    let mut group = [0u8; 5];
    let mut n = 0usize;
    let iter = body.iter();
    for &c in iter {
        match c {
            b'~' => break,
            b'z' if n == 0 => out.extend_from_slice(&[0; 4]),
            b'!'..=b'u' => {
                group[n] = c - b'!';
                n += 1;
                if n == 5 {
                    out.extend_from_slice(&base85(&group).ok_or_else(bad)?);
                    n = 0;
                }
            }
            c if is_white(c) => {}
            _ => return Err(bad()),
        }
    }
    match n {
        0 => {}
        1 => return Err(bad()),
        _ => {
            for g in group.iter_mut().skip(n) {
                *g = b'u' - b'!';
            }
            let word = base85(&group).ok_or_else(bad)?;
            out.extend_from_slice(&word[..n - 1]);
        }
    }
    Ok(out)
}

fn base85(group: &[u8; 5]) -> Option<[u8; 4]> {
    let v = group
        .iter()
        .try_fold(0u64, |acc, &d| Some(acc * 85 + u64::from(d)))?;
    u32::try_from(v).ok().map(u32::to_be_bytes)
}

fn run_length(data: &[u8], at: usize, max: usize) -> Result<Vec<u8>> {
    let mut out = Vec::new();
    let mut i = 0usize;
    while let Some(&len) = data.get(i) {
        i += 1;
        match len {
            128 => break,
            0..=127 => {
                let n = usize::from(len) + 1;
                let run = data
                    .get(i..i + n)
                    .ok_or_else(|| malformed(at, "RunLength data cut short"))?;
                out.extend_from_slice(run);
                i += n;
            }
            _ => {
                let b = *data
                    .get(i)
                    .ok_or_else(|| malformed(at, "RunLength data cut short"))?;
                i += 1;
                out.extend(std::iter::repeat_n(b, 257 - usize::from(len)));
            }
        }
        if out.len() > max {
            return Err(limit("the streams decode to more than the size limit"));
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn obj(text: &[u8]) -> Obj {
        parse_obj(&mut Lexer::new(text, 0)).unwrap_or_else(|e| panic!("{e}"))
    }

    // Expected values: the syntax examples of ISO 32000-1:2008 §7.3.4 (strings) and §7.3.5
    // (names), recalled from memory.
    #[test]
    fn names_and_strings() {
        assert_eq!(obj(b"/A#42"), Obj::Name(b"AB".to_vec()));
        assert_eq!(
            obj(b"/paired#28#29parentheses"),
            Obj::Name(b"paired()parentheses".to_vec())
        );
        assert_eq!(
            obj(b"/The_Key_of_F#23_Minor"),
            Obj::Name(b"The_Key_of_F#_Minor".to_vec())
        );
        assert_eq!(obj(b"<901FA3>"), Obj::Str(vec![0x90, 0x1F, 0xA3]));
        assert_eq!(obj(b"<901FA>"), Obj::Str(vec![0x90, 0x1F, 0xA0]));
        assert_eq!(
            obj(b"(Strings may contain balanced parentheses ( ) and\nspecial characters (*!&}^% and so on).)"),
            Obj::Str(b"Strings may contain balanced parentheses ( ) and\nspecial characters (*!&}^% and so on).".to_vec())
        );
        assert_eq!(obj(b"(\\0053)"), Obj::Str(vec![0x05, b'3']));
        assert_eq!(obj(b"(a\\\r\nb\r\nc)"), Obj::Str(b"ab\nc".to_vec()));
    }

    #[test]
    fn arrays_dicts_and_references() {
        let Obj::Dict(d) = obj(b"<< /Type /Filespec /K [1 -2 .5 3 0 R true null] /N 12 0 R >>")
        else {
            panic!("dictionary expected")
        };
        assert_eq!(get(&d, "Type"), Some(&Obj::Name(b"Filespec".to_vec())));
        assert_eq!(
            get(&d, "K"),
            Some(&Obj::Array(vec![
                Obj::Int(1),
                Obj::Int(-2),
                Obj::Real(0.5),
                Obj::Ref(Ref {
                    num: 3,
                    generation: 0
                }),
                Obj::Bool(true),
                Obj::Null
            ]))
        );
        assert_eq!(
            get(&d, "N"),
            Some(&Obj::Ref(Ref {
                num: 12,
                generation: 0
            }))
        );
    }

    /// A compression bomb: 4 MiB of zeros in a few kilobytes, read with a 1 MiB budget; and
    /// the same small stream named a thousand times, which the budget also stops.
    #[test]
    fn decoding_stops_at_the_budget() {
        use miniz_oxide::deflate::compress_to_vec_zlib;
        let bomb = compress_to_vec_zlib(&vec![0u8; 4 << 20], 9);
        assert!(bomb.len() < 16 << 10);
        let pdf = one_file_pdf(&bomb, "/Filter /FlateDecode", 1);
        let e = embedded_files_within(&pdf, 1 << 20).expect_err("over budget");
        assert!(matches!(e, ExtractError::LimitExceeded { .. }), "{e}");
        assert_eq!(
            embedded_files_within(&pdf, 8 << 20).map(|f| f[0].data.len()),
            Ok(4 << 20)
        );
        let small = compress_to_vec_zlib(&vec![7u8; 4 << 10], 9);
        let pdf = one_file_pdf(&small, "/Filter /FlateDecode", 1000);
        let e = embedded_files_within(&pdf, 1 << 20).expect_err("over budget");
        assert!(matches!(e, ExtractError::LimitExceeded { .. }), "{e}");
        assert_eq!(
            embedded_files_within(&pdf, 8 << 20).map(|f| f.len()),
            Ok(1000)
        );
    }

    /// A PDF with one embedded stream, named `names` times in the name tree (direct file
    /// specifications, all pointing at object 3).
    fn one_file_pdf(data: &[u8], filter: &str, names: usize) -> Vec<u8> {
        let mut out = b"%PDF-1.7\n".to_vec();
        let o1 = out.len();
        let pairs: String = (0..names)
            .map(|i| format!("(f{i:04}) << /Type /Filespec /UF (f{i:04}) /EF << /F 3 0 R >> >> "))
            .collect();
        out.extend_from_slice(
            "1 0 obj\n<< /Type /Catalog /Names << /EmbeddedFiles 2 0 R >> >>\nendobj\n"
                .to_string()
                .as_bytes(),
        );
        let o2 = out.len();
        out.extend_from_slice(format!("2 0 obj\n<< /Names [{pairs}] >>\nendobj\n").as_bytes());
        let o3 = out.len();
        out.extend_from_slice(
            format!("3 0 obj\n<< /Length {} {filter} >>\nstream\n", data.len()).as_bytes(),
        );
        out.extend_from_slice(data);
        out.extend_from_slice(b"\nendstream\nendobj\n");
        let x = out.len();
        out.extend_from_slice(format!("xref\n0 4\n0000000000 65535 f\r\n{o1:010} 00000 n\r\n{o2:010} 00000 n\r\n{o3:010} 00000 n\r\ntrailer\n<< /Size 4 /Root 1 0 R >>\nstartxref\n{x}\n%%EOF\n").as_bytes());
        out
    }

    #[test]
    fn huge_predictor_rows_are_refused_before_allocating() {
        let mut p = Dict::new();
        p.insert(b"Predictor".to_vec(), Obj::Int(12));
        p.insert(b"Columns".to_vec(), Obj::Int(1 << 24));
        p.insert(b"Colors".to_vec(), Obj::Int(32));
        p.insert(b"BitsPerComponent".to_vec(), Obj::Int(16));
        assert!(predict(vec![2; 10], &p, 0).is_err());
        assert_eq!(predict(Vec::new(), &p, 0), Ok(Vec::new()));
    }

    #[test]
    fn deep_nesting_is_refused_without_overflow() {
        let text = vec![b'['; 100_000];
        let e = parse_obj(&mut Lexer::new(&text, 0)).expect_err("too deep");
        assert!(matches!(e, ExtractError::LimitExceeded { .. }), "{e}");
    }

    // Reference values: Python 3 `base64.a85decode(..., adobe=True)` and `bytes.fromhex`
    // (`7` alone is 0x70: a missing last digit is taken as 0, ISO 32000-1 §7.4.2).
    #[test]
    fn ascii_filters() {
        assert_eq!(
            ascii85(b"<~87cURD]i,\"Ebo80~>", 0).ok(),
            Some(b"Hello World!".to_vec())
        );
        assert_eq!(
            ascii85(b"<~87cURD]i,\"Ebo7~>", 0).ok(),
            Some(b"Hello World".to_vec())
        );
        assert_eq!(ascii85(b"9jqo^z~>", 0).ok(), Some(b"Man \0\0\0\0".to_vec()));
        assert_eq!(
            ascii85(b"9jqo^BlbD-BleB1DJ+*+F(f,q~>", 0).ok(),
            Some(b"Man is distinguished".to_vec())
        );
        assert!(ascii85(b"s8W-\"~>", 0).is_err(), "above 2^32 - 1");
        assert_eq!(
            ascii_hex(b"48 65 6C 6c 6F>", 0).ok(),
            Some(b"Hello".to_vec())
        );
        assert_eq!(ascii_hex(b"7>", 0).ok(), Some(vec![0x70]));
        assert!(ascii_hex(b"4G>", 0).is_err());
    }

    // Worked by hand from the definitions: RunLength in ISO 32000-1 §7.4.5; PNG filter types in
    // the PNG specification (W3C, 2003), §9.2.
    #[test]
    fn run_length_and_predictors() {
        assert_eq!(
            run_length(&[2, b'a', b'b', b'c', 254, b'z', 128, b'!'], 0, 100).ok(),
            Some(b"abczzz".to_vec())
        );
        assert!(run_length(&[5, b'a'], 0, 100).is_err());
        assert!(matches!(
            run_length(&[129; 64], 0, 1000),
            Err(ExtractError::LimitExceeded { .. })
        ));
        let mut p = Dict::new();
        p.insert(b"Predictor".to_vec(), Obj::Int(12));
        p.insert(b"Columns".to_vec(), Obj::Int(3));
        // Rows, one byte per pixel: none → 1 2 3; up → 1+1 2+1 3+1 = 2 3 4; sub → 5, 1+5, 1+6 =
        // 5 6 7; average of left and up → 4+⌊(0+5)/2⌋, 4+⌊(6+6)/2⌋, 4+⌊(10+7)/2⌋ = 6 10 12;
        // Paeth (picks up for each byte here) → 1+6, 1+10, 1+12 = 7 11 13.
        let data = vec![0, 1, 2, 3, 2, 1, 1, 1, 1, 5, 1, 1, 3, 4, 4, 4, 4, 1, 1, 1];
        assert_eq!(
            predict(data, &p, 0).ok(),
            Some(vec![1, 2, 3, 2, 3, 4, 5, 6, 7, 6, 10, 12, 7, 11, 13])
        );
        assert!(predict(vec![0, 1, 2], &p, 0).is_err(), "not a whole row");
        assert!(
            predict(vec![7, 1, 2, 3], &p, 0).is_err(),
            "unknown row type"
        );
    }

    // PDFDocEncoding: ISO 32000-1 Annex D, table D.2 (recalled from memory; the integration
    // test on qpdf-written names checks the whole table).
    #[test]
    fn text_strings() {
        assert_eq!(text(b"results.json"), "results.json");
        assert_eq!(text(&[0xFE, 0xFF, 0x00, b'a', 0x20, 0xAC]), "a€");
        assert_eq!(text(&[0xEF, 0xBB, 0xBF, 0xC3, 0xA9]), "é");
        assert_eq!(text(&[0x80, 0x84, 0xA0, 0xE9]), "•—€é");
    }
}
