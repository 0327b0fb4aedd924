//! The look ledger: one hash-chained JSON line per `surety run` of a study, so that confidence
//! spent on earlier looks at the data is counted and every look can be shown in the report.
//!
//! Running a fixed-n bound again and again until it passes inflates the chance of a false pass;
//! the union bound over looks (METHODS.md §11) only protects the claim if every look is counted.
//! The ledger is that count, kept beside the spec as JSON lines. Each line carries the SHA-256 of
//! the line before it (`prev`) and of itself (`hash`), so that editing, removing, reordering or
//! cutting short earlier lines is noticed the next time the ledger is read.
//!
//! This module is pure: [`Ledger::parse`] verifies bytes and [`Ledger::seal`] produces the next
//! line's text. All file access (locking, appending, setting an old file aside) is confined to
//! [`LockedLedger`].
//!
//! What the chain can and cannot show: it is not signed, so someone who rewrites the whole file
//! and recomputes every hash is not detected, and removing whole lines from the end leaves a
//! shorter ledger that is still valid. Both are caught only against a record kept elsewhere, for
//! which [`Ledger::line_sha256`] gives the digest of any line (results.json can carry the digest
//! of the line its run appended).

mod file;

pub use file::LockedLedger;

use crate::provenance::sha256_hex;
use serde::{Deserialize, Serialize, Serializer};
use std::fmt;

/// The format tag on every ledger line; a line with any other tag is refused, never guessed at.
pub const LEDGER_FORMAT: &str = "surety-ledger/1";

/// `prev` of the first line: there is no previous line.
const NO_PREVIOUS: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// Appended to every message about a damaged ledger: the two ways out that lose nothing.
const REMEDY: &str = "Restore the ledger from a backup, or start a new ledger with \
                      `surety run --new-ledger` (the old file is kept beside the new one).";

/// One line of the ledger: one look at the data, a re-issue of an earlier look, or the start of
/// a new ledger.
///
/// Serialized as one compact JSON object with the keys in the order of the fields below and
/// nothing else, which is the only form [`Ledger::parse`] accepts. Numbers are written in the
/// shortest form that reads back to the same `f64`, so every number round-trips bit for bit.
/// A non-finite number is written as a JSON string, which no reader accepts as a number; that
/// makes [`LockedLedger::append`] refuse the line, so NaN and infinity never reach a ledger.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Entry {
    /// Always [`LEDGER_FORMAT`] ([`Ledger::seal`] sets it).
    pub format: String,
    /// Line number: 1, 2, 3, … with no gaps ([`Ledger::seal`] sets it).
    pub seq: u64,
    /// What this line records.
    pub kind: EntryKind,
    /// The look number of a look; for a re-issue, the look it re-issues; 0 for a new ledger.
    pub look: u32,
    /// When the run happened, RFC 3339 in UTC, as supplied by the caller.
    pub time: String,
    /// SHA-256 hex identifying (claim, method, inputs): two runs with the same key are the same
    /// look.
    pub key: String,
    /// SHA-256 hex of the spec file's bytes.
    pub spec_sha256: String,
    /// Digest of every data file the run read.
    pub inputs: Vec<InputDigest>,
    /// The bound and verdict of each arm at this look.
    pub arms: Vec<ArmLook>,
    /// Id of the primary method (empty on a new-ledger line).
    pub method: String,
    /// `fixed-n` or `anytime`: the primary method's guarantee (empty on a new-ledger line).
    pub guarantee: String,
    /// The budget the look's bounds were computed at, before division by arms or sides.
    #[serde(serialize_with = "finite_number")]
    pub delta: f64,
    /// The overall verdict at this look.
    pub verdict: String,
    /// The δ this look spent from the claim's budget; 0 for re-issues, new-ledger lines and
    /// anytime-valid looks.
    #[serde(serialize_with = "finite_number")]
    pub delta_spent: f64,
    /// SHA-256 hex of the results.json the run produced.
    pub results_sha256: String,
    /// Free text, e.g. why a new ledger was started and which file it replaced.
    pub note: Option<String>,
    /// SHA-256 hex of the previous line's bytes without its line end; 64 zeros on line 1
    /// ([`Ledger::seal`] sets it).
    pub prev: String,
    /// SHA-256 hex of this line serialized with `hash` set to the empty string
    /// ([`Ledger::seal`] sets it).
    pub hash: String,
}

/// What a ledger line records. Written as `look`, `re-issue` or `new-ledger`.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq)]
#[serde(rename_all = "kebab-case")]
pub enum EntryKind {
    /// A new look at the data; it may spend δ.
    Look,
    /// The same look again (same key), e.g. after a change to the report text; spends nothing.
    ReIssue,
    /// Starts a new ledger: looks before this line are no longer counted.
    NewLedger,
}

/// A data file as the run read it.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct InputDigest {
    /// Path as recorded in results.json (relative to the spec).
    pub path: String,
    /// SHA-256 hex of the file's bytes.
    pub sha256: String,
}

/// One arm's outcome at a look.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ArmLook {
    /// Arm name as in results.json.
    pub name: String,
    /// Number of trials seen at this look.
    pub n: u64,
    /// Upper confidence bound, if the claim has one (never NaN or infinite once written).
    #[serde(serialize_with = "finite_or_none")]
    pub upper: Option<f64>,
    /// Lower confidence bound, if the claim has one (never NaN or infinite once written).
    #[serde(serialize_with = "finite_or_none")]
    pub lower: Option<f64>,
    /// The arm's verdict at this look.
    pub verdict: String,
}

// A non-finite value becomes a string so that the line fails to read back as an entry; JSON's
// usual substitute, null, would read back silently as "no bound" for the optional fields.
fn finite_number<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    if x.is_finite() {
        s.serialize_f64(*x)
    } else {
        s.serialize_str(&x.to_string())
    }
}

fn finite_or_none<S: Serializer>(x: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match x {
        Some(v) => finite_number(v, s),
        None => s.serialize_none(),
    }
}

/// A verified ledger: every line well formed, self-consistent, chained to the line before it,
/// numbered 1, 2, 3, …, with look numbers and keys that agree (see [`Ledger::parse`]).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Ledger {
    /// The lines in file order.
    pub entries: Vec<Entry>,
}

impl Ledger {
    /// Read and verify a whole ledger file's bytes. Empty input is an empty ledger.
    ///
    /// Every line must end with `'\n'`, be the exact compact JSON that surety writes for an
    /// [`Entry`] of format [`LEDGER_FORMAT`], match its own `hash`, have `seq` equal to its line
    /// number, and carry in `prev` the SHA-256 of the previous line (64 zeros on line 1). Since
    /// the last new-ledger line (or the start), looks are numbered 1, 2, 3, … with distinct keys
    /// and δ in [0, 1]; a re-issue names an earlier look with the same key and spends nothing;
    /// a new-ledger line has look 0 and spends nothing. Lines are checked in file order and the
    /// first failure is returned, naming its line.
    pub fn parse(bytes: &[u8]) -> Result<Ledger, LedgerError> {
        let mut entries = Vec::new();
        let mut segment = Segment::default();
        let mut prev_line_hash = NO_PREVIOUS.to_string();
        let mut rest = bytes;
        let mut line_no: u64 = 0;
        while !rest.is_empty() {
            line_no += 1;
            let Some(end) = memchr::memchr(b'\n', rest) else {
                return Err(incomplete_last_line(line_no, rest.len()));
            };
            let line = &rest[..end];
            rest = &rest[end + 1..];
            let entry = read_line(line_no, line)?;
            check_place(line_no, &entry, &prev_line_hash)?;
            segment.admit(line_no, &entry)?;
            prev_line_hash = sha256_hex(line);
            entries.push(entry);
        }
        Ok(Ledger { entries })
    }

    /// SHA-256 hex of the last line's bytes (what the next line's `prev` must be), or 64 zeros
    /// for an empty ledger.
    pub fn head(&self) -> String {
        match self.entries.last() {
            // Parsing only accepts lines that equal their re-serialization, so hashing the
            // re-serialized entry is hashing the bytes that were in the file.
            Some(e) => sha256_hex(line_text(e).as_bytes()),
            None => NO_PREVIOUS.to_string(),
        }
    }

    /// The number the next new look gets: one more than the last look since the last
    /// new-ledger line, or 1 if there is none.
    pub fn next_look(&self) -> u32 {
        self.looks().last().map_or(1, |e| e.look.saturating_add(1))
    }

    /// The look (never a re-issue) with this key since the last new-ledger line, if any: a run
    /// with this key is that look again and spends nothing.
    pub fn find_key(&self, key: &str) -> Option<&Entry> {
        self.segment()
            .iter()
            .find(|e| e.kind == EntryKind::Look && e.key == key)
    }

    /// The looks since the last new-ledger line, in file order; re-issues are not looks.
    pub fn looks(&self) -> Vec<&Entry> {
        self.segment()
            .iter()
            .filter(|e| e.kind == EntryKind::Look)
            .collect()
    }

    /// Total δ spent by [`Ledger::looks`], summed with Neumaier's compensated summation so the
    /// result is as close to the exact sum of the recorded values as one rounding allows (a
    /// plain sum of ten looks at 0.1 gives 0.9999999999999999, this gives 1).
    pub fn spent(&self) -> f64 {
        compensated_sum(self.looks().iter().map(|e| e.delta_spent))
    }

    /// Turn `entry` into the next line: sets `format`, `seq` (one more than the last line's),
    /// `prev` (this ledger's [`Ledger::head`]) and `hash`, and returns the completed entry with
    /// its exact line text (no line end). Sealing is pure; whether the line is acceptable
    /// (look numbering, finite numbers, …) is checked when it is appended.
    pub fn seal(&self, entry: Entry) -> (Entry, String) {
        let mut entry = entry;
        entry.format = LEDGER_FORMAT.to_string();
        entry.seq = self.entries.last().map_or(1, |e| e.seq.saturating_add(1));
        entry.prev = self.head();
        entry.hash = self_hash(&entry);
        let text = line_text(&entry);
        (entry, text)
    }

    /// SHA-256 hex of the line with this `seq` as it is in the file, for checking against a
    /// digest recorded elsewhere (e.g. in results.json); `None` if there is no such line.
    pub fn line_sha256(&self, seq: u64) -> Option<String> {
        self.entries
            .iter()
            .find(|e| e.seq == seq)
            .map(|e| sha256_hex(line_text(e).as_bytes()))
    }

    /// The lines after the last new-ledger line: the part whose looks are counted.
    fn segment(&self) -> &[Entry] {
        match self
            .entries
            .iter()
            .rposition(|e| e.kind == EntryKind::NewLedger)
        {
            Some(i) => &self.entries[i + 1..],
            None => &self.entries,
        }
    }
}

/// The exact text of an entry's line.
fn line_text(entry: &Entry) -> String {
    // Cannot fail: every key is a fixed field name and the float serializers never error.
    serde_json::to_string(entry).expect("a ledger entry always serializes")
}

/// SHA-256 of the line with `hash` emptied; stored in `hash` so an edit of the line itself is
/// noticed even on the last line, which no later `prev` protects.
fn self_hash(entry: &Entry) -> String {
    let mut blank = entry.clone();
    blank.hash = String::new();
    sha256_hex(line_text(&blank).as_bytes())
}

fn compensated_sum(values: impl Iterator<Item = f64>) -> f64 {
    let mut sum = 0.0_f64;
    let mut carry = 0.0_f64;
    for x in values {
        let t = sum + x;
        // Neumaier's variant: keep the low-order part of whichever operand was smaller.
        if sum.abs() >= x.abs() {
            carry += (sum - t) + x;
        } else {
            carry += (x - t) + sum;
        }
        sum = t;
    }
    sum + carry
}

/// Only the format tag, read before the full entry so that a line from another format version
/// is named as such rather than as a missing or unknown field.
#[derive(Deserialize)]
struct FormatProbe {
    format: Option<serde_json::Value>,
}

/// Parse one line (without its line end) and check that it is exactly what surety would have
/// written for it, including its own hash.
fn read_line(line_no: u64, line: &[u8]) -> Result<Entry, LedgerError> {
    if line.is_empty() {
        return Err(LedgerError::at(
            line_no,
            None,
            LedgerErrorKind::NotJson,
            format!(
                "line {line_no} of the ledger is empty; every line should be one entry. {REMEDY}"
            ),
        ));
    }
    let probe: FormatProbe = serde_json::from_slice(line).map_err(|e| json_error(line_no, &e))?;
    match probe.format {
        Some(serde_json::Value::String(f)) if f == LEDGER_FORMAT => {}
        Some(serde_json::Value::String(f)) => {
            return Err(LedgerError::at(
                line_no,
                None,
                LedgerErrorKind::WrongFormat,
                format!(
                    "line {line_no} of the ledger has format `{f}`, but this surety reads \
                     `{LEDGER_FORMAT}`. Use the surety version that wrote it, or start a new \
                     ledger with `surety run --new-ledger` (the old file is kept beside the new \
                     one)."
                ),
            ));
        }
        _ => {
            return Err(LedgerError::at(
                line_no,
                None,
                LedgerErrorKind::WrongFormat,
                format!(
                    "line {line_no} of the ledger has no `format` tag `{LEDGER_FORMAT}`, so it \
                     is not a surety ledger line. {REMEDY}"
                ),
            ));
        }
    }
    let entry: Entry = serde_json::from_slice(line).map_err(|e| json_error(line_no, &e))?;
    let canonical = line_text(&entry);
    if canonical.as_bytes() != line {
        let column = first_difference(canonical.as_bytes(), line) as u64 + 1;
        return Err(LedgerError::at(
            line_no,
            Some(column),
            LedgerErrorKind::BadHash,
            format!(
                "line {line_no} of the ledger was changed after it was written: from byte \
                 {column} on it differs from the form surety writes for the same content. \
                 {REMEDY}"
            ),
        ));
    }
    if self_hash(&entry) != entry.hash {
        return Err(LedgerError::at(
            line_no,
            None,
            LedgerErrorKind::BadHash,
            format!(
                "line {line_no} of the ledger was changed after it was written: its content no \
                 longer matches its own `hash`. {REMEDY}"
            ),
        ));
    }
    Ok(entry)
}

/// Check that a self-consistent line sits where it was written: right number, right
/// predecessor.
fn check_place(line_no: u64, entry: &Entry, prev_line_hash: &str) -> Result<(), LedgerError> {
    if entry.seq != line_no {
        let what = if entry.seq > line_no {
            "lines before it were removed, or lines were reordered"
        } else {
            "it repeats an earlier line, or lines were reordered"
        };
        return Err(LedgerError::at(
            line_no,
            None,
            LedgerErrorKind::SeqGap,
            format!(
                "line {line_no} of the ledger is numbered {} (seq), not {line_no}: {what}. \
                 {REMEDY}",
                entry.seq
            ),
        ));
    }
    if entry.prev != prev_line_hash {
        let message = if line_no == 1 {
            format!(
                "line 1 of the ledger names a previous line, so it was not written as the \
                 first line: earlier lines were removed. {REMEDY}"
            )
        } else {
            format!(
                "line {line_no} of the ledger does not follow line {}: it was written after a \
                 different line {}, so line {} was replaced or edited (and re-hashed) later. \
                 {REMEDY}",
                line_no - 1,
                line_no - 1,
                line_no - 1
            )
        };
        return Err(LedgerError::at(
            line_no,
            None,
            LedgerErrorKind::BrokenChain,
            message,
        ));
    }
    Ok(())
}

/// Look numbering and keys within the current segment (since the last new-ledger line).
#[derive(Default)]
struct Segment {
    last_look: u32,
    /// (key, look) of every look in the segment; ledgers are short, so a list is enough.
    looks: Vec<(String, u32)>,
}

impl Segment {
    fn admit(&mut self, line_no: u64, e: &Entry) -> Result<(), LedgerError> {
        let bad = |what: String| {
            Err(LedgerError::at(
                line_no,
                None,
                LedgerErrorKind::Inconsistent,
                format!("line {line_no} of the ledger is inconsistent: {what}. {REMEDY}"),
            ))
        };
        match e.kind {
            EntryKind::NewLedger => {
                if e.look != 0 || e.delta_spent != 0.0 {
                    return bad(format!(
                        "a new-ledger line must have look 0 and spend nothing, this one has look \
                         {} and δ {}",
                        e.look, e.delta_spent
                    ));
                }
                *self = Segment::default();
            }
            EntryKind::Look => {
                let expected = self.last_look.checked_add(1);
                if expected != Some(e.look) {
                    return bad(format!(
                        "it is look {}, but the previous look was {}",
                        e.look, self.last_look
                    ));
                }
                if let Some((_, n)) = self.looks.iter().find(|(k, _)| *k == e.key) {
                    return bad(format!(
                        "it records look {} with the key of look {n}; the same key is the same \
                         look and should have been a re-issue",
                        e.look
                    ));
                }
                if !(0.0..=1.0).contains(&e.delta_spent) {
                    return bad(format!("it spends δ {}, outside [0, 1]", e.delta_spent));
                }
                self.last_look = e.look;
                self.looks.push((e.key.clone(), e.look));
            }
            EntryKind::ReIssue => {
                if e.delta_spent != 0.0 {
                    return bad(format!(
                        "a re-issue spends nothing, this one records δ {}",
                        e.delta_spent
                    ));
                }
                match self.looks.iter().find(|(_, n)| *n == e.look) {
                    Some((k, _)) if *k == e.key => {}
                    Some(_) => {
                        return bad(format!(
                            "it re-issues look {} under a different key",
                            e.look
                        ));
                    }
                    None => {
                        return bad(format!(
                            "it re-issues look {}, which this ledger does not have",
                            e.look
                        ));
                    }
                }
            }
        }
        Ok(())
    }
}

fn first_difference(a: &[u8], b: &[u8]) -> usize {
    a.iter()
        .zip(b)
        .position(|(x, y)| x != y)
        .unwrap_or(a.len().min(b.len()))
}

fn incomplete_last_line(line_no: u64, len: usize) -> LedgerError {
    LedgerError::at(
        line_no,
        None,
        LedgerErrorKind::IncompleteLastLine,
        format!(
            "line {line_no} of the ledger is incomplete ({len} bytes with no line end): the file \
             was cut short, or a run was interrupted while writing it. surety never removes it \
             by itself. If you know it is the partial line of an interrupted run (that run \
             issued no result), delete that partial line; otherwise restore the ledger from a \
             backup, or start a new ledger with `surety run --new-ledger` (the old file is kept \
             beside the new one)."
        ),
    )
}

fn json_error(line_no: u64, e: &serde_json::Error) -> LedgerError {
    // Each line is parsed on its own, so serde_json's own "at line 1 column c" is dropped in
    // favour of the ledger's line number.
    let text = e.to_string();
    let suffix = format!(" at line {} column {}", e.line(), e.column());
    let detail = text.strip_suffix(&suffix).unwrap_or(&text);
    let column = e.column() as u64;
    let (kind, what) = match e.classify() {
        serde_json::error::Category::Data => (
            LedgerErrorKind::BadEntry,
            format!("is JSON but not a ledger entry ({detail}, at byte {column})"),
        ),
        _ => (
            LedgerErrorKind::NotJson,
            format!("is not valid JSON ({detail}, at byte {column})"),
        ),
    };
    LedgerError::at(
        line_no,
        Some(column),
        kind,
        format!("line {line_no} of the ledger {what}. {REMEDY}"),
    )
}

/// Why a ledger could not be read, verified or written.
#[derive(Clone, Debug, PartialEq)]
pub struct LedgerError {
    /// The 1-based line the problem is on, when it is about one line.
    pub line: Option<u64>,
    /// The 1-based byte within that line, when known.
    pub column: Option<u64>,
    /// What kind of problem it is.
    pub kind: LedgerErrorKind,
    /// A full sentence for the user: what was found, where, and what they can do.
    pub message: String,
}

impl LedgerError {
    fn at(line: u64, column: Option<u64>, kind: LedgerErrorKind, message: String) -> LedgerError {
        LedgerError {
            line: Some(line),
            column,
            kind,
            message,
        }
    }
}

impl fmt::Display for LedgerError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for LedgerError {}

/// The kinds of [`LedgerError`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LedgerErrorKind {
    /// A line is empty or not valid JSON (including invalid UTF-8).
    NotJson,
    /// A line is JSON with the right format tag but not a ledger entry (missing, unknown or
    /// mistyped field, or a non-finite number).
    BadEntry,
    /// A line has another format tag, or none.
    WrongFormat,
    /// A line was edited: it does not match its own hash, or is not byte for byte the form
    /// surety writes.
    BadHash,
    /// A line's `seq` is not its line number: a line was removed, duplicated or moved.
    SeqGap,
    /// A line's `prev` is not the hash of the line before it: that earlier line was replaced
    /// or edited and re-hashed.
    BrokenChain,
    /// The file does not end with a line end: it was cut short or a write was interrupted.
    IncompleteLastLine,
    /// Look numbers, keys or δ do not agree with the lines before.
    Inconsistent,
    /// The ledger file changed, moved or was replaced between reading it and appending to it.
    Changed,
    /// An append was attempted without a successful read in the same lock.
    NotRead,
    /// The file system refused an operation.
    Io,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compensated_sum_keeps_low_order_bits() {
        // Python documentation, math.fsum: sum([.1]*10) is 0.9999999999999999, fsum gives 1.0.
        assert_eq!(compensated_sum(std::iter::repeat_n(0.1, 10)), 1.0);
        assert_eq!(compensated_sum(std::iter::empty()), 0.0);
    }

    #[test]
    fn first_difference_finds_the_byte() {
        assert_eq!(first_difference(b"abcd", b"abXd"), 2);
        assert_eq!(first_difference(b"abc", b"abcd"), 3);
    }

    #[test]
    fn non_finite_numbers_cannot_read_back() {
        let entry = Entry {
            format: LEDGER_FORMAT.into(),
            seq: 1,
            kind: EntryKind::Look,
            look: 1,
            time: "2026-11-30T08:00:00Z".into(),
            key: "k".into(),
            spec_sha256: "s".into(),
            inputs: vec![],
            arms: vec![ArmLook {
                name: "all".into(),
                n: 10,
                upper: Some(f64::NAN),
                lower: None,
                verdict: "pass".into(),
            }],
            method: "exact".into(),
            guarantee: "fixed-n".into(),
            delta: 0.05,
            verdict: "pass".into(),
            delta_spent: f64::INFINITY,
            results_sha256: "r".into(),
            note: None,
            prev: NO_PREVIOUS.into(),
            hash: String::new(),
        };
        let text = line_text(&entry);
        assert!(serde_json::from_str::<Entry>(&text).is_err(), "{text}");
        assert_eq!(NO_PREVIOUS.len(), 64);
    }
}
