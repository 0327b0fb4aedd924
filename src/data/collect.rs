//! Checked values → per-arm summaries, shared by every file format: range and type checks,
//! rescaling to [0, 1], compensated sums, histogram, and (on request) the ordered stream.

use std::cmp::Ordering;
use std::collections::HashMap;

use super::error::{DataError, Place, ProblemKind};
use super::tally::{Context, Tally};
use super::{ArmData, ClusterTotal, HISTOGRAM_BINS, ReadOptions, ValueKind};
use crate::bounds::Summary;
use crate::stats::sum::NeumaierSum;

/// A value of the order column. Integers are held exactly (timestamps in nanoseconds exceed
/// 2^53), decimals as doubles, Parquet strings as bytes.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Key {
    Int(i128),
    Float(f64),
    Text(Box<[u8]>),
}

impl Key {
    /// A total order: numbers by exact value (an integer and a double compare exactly, not
    /// after rounding the integer), texts by bytes (code-point order for UTF-8), numbers before
    /// texts. Equal keys keep their row order (the sort is stable).
    fn cmp(&self, other: &Key) -> Ordering {
        match (self, other) {
            (Key::Int(a), Key::Int(b)) => a.cmp(b),
            (Key::Float(a), Key::Float(b)) => a.partial_cmp(b).unwrap_or(Ordering::Equal),
            (Key::Int(a), Key::Float(b)) => cmp_int_float(*a, *b),
            (Key::Float(a), Key::Int(b)) => cmp_int_float(*b, *a).reverse(),
            (Key::Text(a), Key::Text(b)) => a.cmp(b),
            (Key::Text(_), _) => Ordering::Greater,
            (_, Key::Text(_)) => Ordering::Less,
        }
    }
}

/// Exact comparison of an integer with a finite double.
fn cmp_int_float(i: i128, f: f64) -> Ordering {
    const TWO_127: f64 = 170_141_183_460_469_231_731_687_303_715_884_105_728.0;
    if f >= TWO_127 {
        return Ordering::Less;
    }
    if f < -TWO_127 {
        return Ordering::Greater;
    }
    let t = f.trunc();
    // |t| < 2^127 and t is an integer, so the conversion is exact.
    match i.cmp(&(t as i128)) {
        Ordering::Equal => 0.0f64.partial_cmp(&(f - t)).unwrap_or(Ordering::Equal),
        o => o,
    }
}

/// The running sums of one arm: small and `Copy`, so a run of values can be added with them in
/// registers.
#[derive(Debug, Clone, Copy)]
struct Running {
    n: u64,
    events: u64,
    sum: NeumaierSum,
    sum_sq: NeumaierSum,
    above: NeumaierSum,
    below: NeumaierSum,
    min: f64,
    max: f64,
    raw_min: f64,
    raw_max: f64,
}

impl Running {
    /// Adds `x`, already known to lie in [low, low + width]; returns its value in [0, 1].
    #[inline(always)]
    fn add(
        &mut self,
        x: f64,
        low: f64,
        width: f64,
        binary: bool,
        histogram: &mut [u64; HISTOGRAM_BINS],
    ) -> f64 {
        // Rounding is monotone, so low <= x <= high gives 0 <= x - low <= high - low after
        // rounding too, and u lands in [0, 1] without clipping.
        let u = (x - low) / width;
        self.n += 1;
        self.events += u64::from(binary && x == 1.0);
        self.sum.add(u);
        self.sum_sq.add(u * u);
        // Both parts every time (one of them adds 0, which leaves a compensated sum unchanged):
        // no branch to mispredict on data that straddle the middle.
        self.above.add((u - 0.5).max(0.0));
        self.below.add((0.5 - u).max(0.0));
        self.min = self.min.min(u);
        self.max = self.max.max(u);
        self.raw_min = self.raw_min.min(x);
        self.raw_max = self.raw_max.max(x);
        let bin = ((u * HISTOGRAM_BINS as f64) as usize).min(HISTOGRAM_BINS - 1);
        histogram[bin] += 1;
        u
    }
}

/// Running totals of one cluster within one arm.
#[derive(Debug)]
struct Cluster {
    name: String,
    n: u64,
    sum: NeumaierSum,
    /// With an order column: the smallest order value among the cluster's trials and the
    /// row sequence number of the first trial holding it, which place the cluster in trial
    /// order. Without one, clusters are created in trial order already.
    first: Option<(Key, u64)>,
}

/// Running state of one arm.
#[derive(Debug)]
struct Arm {
    name: String,
    run: Running,
    histogram: [u64; HISTOGRAM_BINS],
    observations: Vec<f64>,
    keyed: Vec<(Key, f64)>,
    clusters: Vec<Cluster>,
    cluster_index: HashMap<Box<[u8]>, usize>,
    /// The cluster of this arm's previous trial: trials of one cluster usually come together.
    last_cluster: Option<usize>,
}

impl Arm {
    fn new(name: String) -> Self {
        Arm {
            name,
            run: Running {
                n: 0,
                events: 0,
                sum: NeumaierSum::new(),
                sum_sq: NeumaierSum::new(),
                above: NeumaierSum::new(),
                below: NeumaierSum::new(),
                min: f64::INFINITY,
                max: f64::NEG_INFINITY,
                raw_min: f64::INFINITY,
                raw_max: f64::NEG_INFINITY,
            },
            histogram: [0; HISTOGRAM_BINS],
            observations: Vec::new(),
            keyed: Vec::new(),
            clusters: Vec::new(),
            cluster_index: HashMap::new(),
            last_cluster: None,
        }
    }

    /// Adds the rescaled value `u` of the trial with row sequence number `seq` (and order
    /// value `key`, when there is an order column) to the cluster named `name`, which must be
    /// UTF-8 (the readers check it first).
    fn add_to_cluster(&mut self, name: &[u8], u: f64, key: Option<&Key>, seq: u64) {
        let found = match self.last_cluster {
            Some(i) if self.clusters[i].name.as_bytes() == name => Some(i),
            _ => self.cluster_index.get(name).copied(),
        };
        let i = match found {
            Some(i) => {
                let c = &mut self.clusters[i];
                if let (Some(k), Some((first, at))) = (key, &mut c.first)
                    && k.cmp(first) == Ordering::Less
                {
                    *first = k.clone();
                    *at = seq;
                }
                i
            }
            None => {
                let i = self.clusters.len();
                self.clusters.push(Cluster {
                    name: String::from_utf8_lossy(name).into_owned(),
                    n: 0,
                    sum: NeumaierSum::new(),
                    first: key.map(|k| (k.clone(), seq)),
                });
                self.cluster_index.insert(name.into(), i);
                i
            }
        };
        self.last_cluster = Some(i);
        let c = &mut self.clusters[i];
        c.n += 1;
        c.sum.add(u);
    }

    #[inline(always)]
    fn add(&mut self, x: f64, low: f64, width: f64, binary: bool) -> f64 {
        self.run.add(x, low, width, binary, &mut self.histogram)
    }

    fn running(&self) -> &Running {
        &self.run
    }

    fn running_mut(&mut self) -> &mut Running {
        &mut self.run
    }
}

/// Names of the columns that are read, for messages.
#[derive(Debug, Clone, Default)]
pub(crate) struct Columns {
    pub value: String,
    pub arm: Option<String>,
    pub order: Option<String>,
    pub cluster: Option<String>,
}

/// Collects checked values into arms; every refused cell goes to the tally instead, and the
/// scan goes on so that the refusal can say how many cells share the problem.
#[derive(Debug)]
pub(crate) struct Collector<'o> {
    low: f64,
    high: f64,
    width: f64,
    binary: bool,
    keep: bool,
    ordered: bool,
    clustered: bool,
    /// Values accepted so far: the row sequence number of the next one, for placing clusters
    /// whose first order values tie.
    seq: u64,
    expected: Option<&'o [String]>,
    arms: Vec<Arm>,
    index: HashMap<Box<[u8]>, usize>,
    /// The arm of the previous row: rows of one arm usually come together.
    last: Option<usize>,
    pub columns: Columns,
    pub tally: Tally,
}

/// Checks the options that do not depend on the file: a usable declared range and distinct
/// column names.
pub(crate) fn check_options(file: &str, opts: &ReadOptions) -> Result<(), DataError> {
    if let ValueKind::Bounded { low, high } = opts.kind {
        let ok = low.is_finite() && high.is_finite() && low < high && (high - low).is_finite();
        if !ok {
            return Err(DataError::one(
                file,
                ProblemKind::BadOptions,
                None,
                format!(
                    "the declared range [{low}, {high}] is not a finite interval with low < high"
                ),
            ));
        }
    }
    let mut names = vec![("column", opts.column)];
    names.extend(opts.arm_column.map(|c| ("arm_column", c)));
    names.extend(opts.order_column.map(|c| ("order_column", c)));
    names.extend(opts.cluster_column.map(|c| ("cluster_column", c)));
    for (i, (ka, a)) in names.iter().enumerate() {
        for (kb, b) in &names[i + 1..] {
            if a == b {
                return Err(DataError::one(
                    file,
                    ProblemKind::BadOptions,
                    None,
                    format!(
                        "`{ka}` and `{kb}` both name column `{a}`; each must be a different column"
                    ),
                ));
            }
        }
    }
    Ok(())
}

impl<'o> Collector<'o> {
    /// A collector for `opts` (already checked by [`check_options`]).
    pub fn new(opts: &ReadOptions<'o>) -> Self {
        let (low, high, binary) = match opts.kind {
            ValueKind::Binary => (0.0, 1.0, true),
            ValueKind::Bounded { low, high } => (low, high, false),
        };
        let mut c = Collector {
            low,
            high,
            width: high - low,
            binary,
            keep: opts.keep_observations,
            ordered: opts.order_column.is_some(),
            clustered: opts.cluster_column.is_some(),
            seq: 0,
            expected: opts.expected_arms,
            arms: Vec::new(),
            index: HashMap::new(),
            last: None,
            columns: Columns {
                value: opts.column.to_owned(),
                arm: opts.arm_column.map(str::to_owned),
                order: opts.order_column.map(str::to_owned),
                cluster: opts.cluster_column.map(str::to_owned),
            },
            tally: Tally::default(),
        };
        if opts.arm_column.is_none() {
            c.arms.push(Arm::new("all".to_owned()));
            c.last = Some(0);
        }
        c
    }

    /// Whether outcomes are binary (0/1).
    pub fn binary(&self) -> bool {
        self.binary
    }

    /// The arm of a row without an arm column.
    pub fn single_arm(&self) -> Option<usize> {
        if self.columns.arm.is_none() {
            Some(0)
        } else {
            None
        }
    }

    /// The arm named `name` (the trimmed cell of the arm column), creating it on first sight;
    /// `None` (and a tallied problem) when the cell is empty, not UTF-8, or names an arm the spec
    /// does not list.
    pub fn arm(&mut self, name: &[u8], place: Place) -> Option<usize> {
        if let Some(i) = self.last
            && self.arms[i].name.as_bytes() == name
        {
            return Some(i);
        }
        if let Some(&i) = self.index.get(name) {
            self.last = Some(i);
            return Some(i);
        }
        let column = self.columns.arm.as_deref();
        if name.is_empty() {
            self.tally.note(ProblemKind::EmptyCell, column, place, name);
            return None;
        }
        let Ok(text) = std::str::from_utf8(name) else {
            self.tally
                .note(ProblemKind::InvalidText, column, place, name);
            return None;
        };
        if let Some(expected) = self.expected
            && !expected.iter().any(|e| e == text)
        {
            self.tally
                .note(ProblemKind::UnknownArm, column, place, name);
            return None;
        }
        let i = self.arms.len();
        self.arms.push(Arm::new(text.to_owned()));
        self.index.insert(name.into(), i);
        self.last = Some(i);
        Some(i)
    }

    /// Whether `name` (a cluster cell, trimmed as the format says) can name a cluster: not
    /// empty and UTF-8; otherwise the problem is tallied.
    pub fn check_cluster(&mut self, name: &[u8], place: Place) -> bool {
        let kind = if name.is_empty() {
            ProblemKind::EmptyCell
        } else if std::str::from_utf8(name).is_err() {
            ProblemKind::InvalidText
        } else {
            return true;
        };
        self.refuse_cluster(kind, place, name);
        false
    }

    /// Parses a CSV/TSV value cell (already trimmed) into a value in data units.
    pub fn parse_value(&mut self, cell: &[u8], place: Place) -> Option<f64> {
        let column = Some(self.columns.value.as_str());
        if self.binary {
            return match cell {
                b"0" => Some(0.0),
                b"1" => Some(1.0),
                b"" => {
                    self.tally.note(ProblemKind::EmptyCell, column, place, cell);
                    None
                }
                _ => {
                    let kind = if is_boolean_text(cell) {
                        ProblemKind::BooleanText
                    } else {
                        ProblemKind::NotBinary
                    };
                    self.tally.note(kind, column, place, cell);
                    None
                }
            };
        }
        match parse_f64(cell) {
            Ok(x) => Some(x),
            Err(kind) => {
                self.tally.note(kind, column, place, cell);
                None
            }
        }
    }

    /// Parses a CSV/TSV order cell (already trimmed): integers exactly, else a decimal.
    pub fn parse_key(&mut self, cell: &[u8], place: Place) -> Option<Key> {
        let column = self.columns.order.as_deref();
        let digits = cell
            .strip_prefix(b"-")
            .or(cell.strip_prefix(b"+"))
            .unwrap_or(cell);
        if !digits.is_empty() && digits.len() <= 38 && digits.iter().all(u8::is_ascii_digit) {
            // At most 38 digits always fit in an i128.
            if let Some(i) = std::str::from_utf8(cell)
                .ok()
                .and_then(|s| s.parse::<i128>().ok())
            {
                return Some(Key::Int(i));
            }
        }
        match parse_f64(cell) {
            Ok(x) => Some(Key::Float(x)),
            Err(kind) => {
                self.tally.note(kind, column, place, cell);
                None
            }
        }
    }

    /// Tallies a problem with the value column (used by readers with typed columns).
    pub fn refuse_value(&mut self, kind: ProblemKind, place: Place, text: &[u8]) {
        let column = Some(self.columns.value.as_str());
        self.tally.note(kind, column, place, text);
    }

    /// Tallies a problem with the order column.
    pub fn refuse_key(&mut self, kind: ProblemKind, place: Place, text: &[u8]) {
        let column = self.columns.order.as_deref();
        self.tally.note(kind, column, place, text);
    }

    /// Tallies a problem with the arm column.
    pub fn refuse_arm(&mut self, kind: ProblemKind, place: Place, text: &[u8]) {
        let column = self.columns.arm.as_deref();
        self.tally.note(kind, column, place, text);
    }

    /// Tallies a problem with the cluster column.
    pub fn refuse_cluster(&mut self, kind: ProblemKind, place: Place, text: &[u8]) {
        let column = self.columns.cluster.as_deref();
        self.tally.note(kind, column, place, text);
    }

    /// Tallies a problem of a whole row (ragged row, blank line).
    pub fn refuse_row(&mut self, kind: ProblemKind, place: Place, text: &[u8]) {
        self.tally.note(kind, None, place, text);
    }

    /// Adds one checked-for-type value `x` (data units) to arm `arm`: refuses it when it is not
    /// finite or outside the declared range, else rescales it to [0, 1] and records it. `key` is
    /// the row's order value (ignored unless observations are kept or clusters are placed).
    /// `cell` is the value as written, for the message; `None` shows the number itself (typed
    /// columns). `cluster` is the row's cluster, already passed by
    /// [`check_cluster`](Self::check_cluster); it must be given exactly when there is a
    /// cluster column.
    #[inline]
    pub fn push(
        &mut self,
        arm: usize,
        x: f64,
        key: Option<Key>,
        place: Place,
        cell: Option<&[u8]>,
        cluster: Option<&[u8]>,
    ) {
        if !x.is_finite() || x < self.low || x > self.high {
            let kind = if x.is_finite() {
                ProblemKind::OutOfRange
            } else {
                ProblemKind::NotFinite
            };
            match cell {
                Some(text) => self.refuse_value(kind, place, text),
                None => self.refuse_value(kind, place, x.to_string().as_bytes()),
            }
            return;
        }
        let (low, width, binary, keep, ordered) =
            (self.low, self.width, self.binary, self.keep, self.ordered);
        let a = &mut self.arms[arm];
        let u = a.add(x, low, width, binary);
        if let Some(name) = cluster {
            a.add_to_cluster(name, u, key.as_ref(), self.seq);
        }
        self.seq += 1;
        if keep {
            if ordered {
                if let Some(k) = key {
                    a.keyed.push((k, u));
                }
            } else {
                a.observations.push(u);
            }
        }
    }

    /// Parses a CSV/TSV value cell without recording problems: `None` sends the row through the
    /// checked path ([`parse_value`](Self::parse_value)), which records why.
    #[inline]
    pub fn parse_quiet(&self, cell: &[u8]) -> Option<f64> {
        if self.binary {
            match cell {
                b"0" => Some(0.0),
                b"1" => Some(1.0),
                _ => None,
            }
        } else {
            parse_f64(cell).ok()
        }
    }

    /// Adds the finite values `xs` of consecutive lines `first_line`, `first_line + 1`, … of
    /// one arm (no order keys), field `column`; `text(i)` is the cell of value i as written. The
    /// same arithmetic as [`push`](Self::push), with the running sums kept in registers. Only
    /// for files without a cluster column (runs carry no cluster names).
    pub fn push_run<'t>(
        &mut self,
        arm: usize,
        xs: &[f64],
        first_line: u64,
        column: u32,
        text: impl Fn(usize) -> &'t [u8],
    ) {
        let (lo, hi) = xs
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &x| {
                (l.min(x), h.max(x))
            });
        if !(lo >= self.low && hi <= self.high) {
            for (i, &x) in xs.iter().enumerate() {
                let place = Place::Line {
                    line: first_line + i as u64,
                    column: Some(column),
                };
                self.push(arm, x, None, place, Some(text(i)), None);
            }
            return;
        }
        let (low, width, binary) = (self.low, self.width, self.binary);
        let a = &mut self.arms[arm];
        let mut run = *a.running();
        if self.keep && !self.ordered {
            a.observations.reserve(xs.len());
            for &x in xs {
                let u = run.add(x, low, width, binary, &mut a.histogram);
                a.observations.push(u);
            }
        } else {
            for &x in xs {
                run.add(x, low, width, binary, &mut a.histogram);
            }
        }
        *a.running_mut() = run;
        self.seq += xs.len() as u64;
    }

    /// The arms, or every problem found (the tallied ones, `extra`, and arms the spec names
    /// without rows). `header_fields` is the header's field count (CSV/TSV).
    pub fn finish(
        self,
        file: &str,
        header_fields: usize,
        extra: Vec<super::error::Problem>,
    ) -> Result<Vec<ArmData>, DataError> {
        let mut arms = self.arms;
        let missing: Vec<&str> = self
            .expected
            .unwrap_or_default()
            .iter()
            .filter(|e| !arms.iter().any(|a| &a.name == *e))
            .map(String::as_str)
            .collect();
        let ctx = Context {
            range: (!self.binary).then_some((self.low, self.high)),
            header_fields,
            expected_arms: self.expected,
            arms_without_rows: &missing,
        };
        let mut problems = self.tally.into_problems(&ctx);
        if !extra.is_empty() {
            problems.extend(extra);
            problems.sort_by_key(|p| p.place);
        }
        if let Some(expected) = self.expected {
            if !missing.is_empty() {
                let column = self.columns.arm.as_deref().unwrap_or_default();
                let (what, verb) = if missing.len() == 1 {
                    ("arm", "has")
                } else {
                    ("arms", "have")
                };
                problems.push(super::error::Problem {
                    kind: ProblemKind::MissingArm,
                    place: None,
                    count: missing.len() as u64,
                    message: format!(
                        "{what} {} named in the spec {verb} no rows in column `{column}`",
                        crate::spec::suggest::list(&missing)
                    ),
                    hint: None,
                });
            }
            // Report arms in the order the spec names them.
            arms.sort_by_key(|a| expected.iter().position(|e| *e == a.name));
        }
        if !problems.is_empty() {
            return Err(DataError {
                file: file.to_owned(),
                problems,
            });
        }
        let binary = self.binary;
        let keep = self.keep;
        let ordered = self.ordered;
        let clustered = self.clustered;
        Ok(arms
            .into_iter()
            .map(|a| {
                let observations = keep.then(|| {
                    if ordered {
                        let mut keyed = a.keyed;
                        keyed.sort_by(|x, y| x.0.cmp(&y.0));
                        keyed.into_iter().map(|(_, u)| u).collect()
                    } else {
                        a.observations
                    }
                });
                let clusters = clustered.then(|| cluster_totals(a.clusters));
                let r = a.run;
                ArmData {
                    name: a.name,
                    summary: Summary {
                        n: r.n,
                        sum: r.sum.value(),
                        sum_sq: r.sum_sq.value(),
                        min: r.min,
                        max: r.max,
                        split: Some((r.above.value(), r.below.value())),
                    },
                    events: binary.then_some(r.events),
                    observations,
                    histogram: a.histogram.to_vec(),
                    raw_min: r.raw_min,
                    raw_max: r.raw_max,
                    clusters,
                }
            })
            .collect())
    }
}

/// One arm's clusters in trial order of their first trial: by smallest order value, ties by
/// the row of its first occurrence (without an order column they are in that order already).
fn cluster_totals(mut clusters: Vec<Cluster>) -> Vec<ClusterTotal> {
    clusters.sort_by(|a, b| match (&a.first, &b.first) {
        (Some((ka, sa)), Some((kb, sb))) => ka.cmp(kb).then(sa.cmp(sb)),
        _ => Ordering::Equal,
    });
    clusters
        .into_iter()
        .map(|c| ClusterTotal {
            name: c.name,
            n: c.n,
            sum: c.sum.value(),
        })
        .collect()
}

/// Parses a decimal number, correctly rounded to the nearest double. `nan`, `inf` and
/// overflowing literals are refused as not finite, anything else that is not a number as such.
#[inline]
pub(crate) fn parse_f64(cell: &[u8]) -> Result<f64, ProblemKind> {
    if cell.is_empty() {
        return Err(ProblemKind::EmptyCell);
    }
    if let Some(x) = parse_short_decimal(cell) {
        return Ok(x);
    }
    let Ok(text) = std::str::from_utf8(cell) else {
        return Err(ProblemKind::NotANumber);
    };
    match text.parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        Ok(_) => Err(ProblemKind::NotFinite),
        Err(_) => Err(ProblemKind::NotANumber),
    }
}

/// Powers of ten that doubles hold exactly.
const POW10: [f64; 16] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
];

/// The common case of measurement data, `[+-]digits[.digits]` with at most 15 digits, by
/// Clinger's fast path (W. D. Clinger, "How to read floating point numbers accurately", PLDI
/// 1990): the digits form an integer w < 10^15 < 2^53 and the value is w / 10^k with k <= 15,
/// both exact doubles, so the one IEEE division rounds the exact quotient to nearest — the same
/// double a full decimal parser returns. Anything else (exponents, more digits, stray bytes)
/// returns `None` and goes to std's parser.
#[inline]
fn parse_short_decimal(cell: &[u8]) -> Option<f64> {
    let (negative, body) = match cell {
        [b'-', rest @ ..] => (true, rest),
        [b'+', rest @ ..] => (false, rest),
        _ => (false, cell),
    };
    let mut w: u64 = 0;
    let mut digits = 0usize;
    let mut frac: Option<usize> = None;
    for &b in body {
        match b {
            b'0'..=b'9' => {
                w = w * 10 + u64::from(b - b'0');
                digits += 1;
                if digits > 15 {
                    return None;
                }
            }
            b'.' if frac.is_none() => frac = Some(digits),
            _ => return None,
        }
    }
    if digits == 0 {
        return None;
    }
    let k = frac.map_or(0, |at| digits - at);
    let x = w as f64 / POW10[k];
    Some(if negative { -x } else { x })
}

/// Text a spreadsheet might write for a boolean.
fn is_boolean_text(cell: &[u8]) -> bool {
    const WORDS: [&[u8]; 8] = [b"true", b"false", b"yes", b"no", b"t", b"f", b"y", b"n"];
    WORDS.iter().any(|w| cell.eq_ignore_ascii_case(w))
}

#[cfg(test)]
mod unit {
    use super::*;
    use proptest::prelude::*;

    /// The reference for every decimal string is Rust's own `str::parse::<f64>`, which is
    /// correctly rounded (round to nearest, ties to even).
    fn std_parse(s: &str) -> Result<f64, ProblemKind> {
        match s.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(x),
            Ok(_) => Err(ProblemKind::NotFinite),
            Err(_) if s.is_empty() => Err(ProblemKind::EmptyCell),
            Err(_) => Err(ProblemKind::NotANumber),
        }
    }

    proptest! {
        #[test]
        fn fast_path_agrees_with_std(s in "[+-]?[0-9]{0,18}(\\.[0-9]{0,18})?") {
            let got = parse_f64(s.as_bytes());
            let want = std_parse(&s);
            prop_assert_eq!(got.map(f64::to_bits), want.map(f64::to_bits), "{}", s);
        }

        #[test]
        fn shortest_round_trip_strings_come_back_exactly(x in any::<f64>().prop_filter("finite", |x| x.is_finite())) {
            prop_assert_eq!(parse_f64(format!("{x}").as_bytes()).map(f64::to_bits), Ok(x.to_bits()));
            prop_assert_eq!(parse_f64(format!("{x:e}").as_bytes()).map(f64::to_bits), Ok(x.to_bits()));
        }
    }

    #[test]
    fn edge_spellings() {
        // Each agrees with std (see std_parse): signs, lone points, zeros, 15 vs 16 digits.
        for s in [
            "0",
            "-0",
            "+0",
            "-0.0",
            ".5",
            "5.",
            "+.5",
            "-.5",
            ".",
            "+",
            "-",
            "1.2.3",
            "00000.1",
            "123456789012345",
            "1234567890123456",
            "0.000000000000001",
            "9007199254740993",
            "1e5",
            "1E-5",
            "nan",
            "inf",
            "-infinity",
            "1e400",
            "0x10",
            "1_000",
            " 1",
            "",
        ] {
            assert_eq!(
                parse_f64(s.as_bytes()).map(f64::to_bits),
                std_parse(s).map(f64::to_bits),
                "{s:?}"
            );
        }
    }

    #[test]
    fn integers_and_doubles_compare_exactly() {
        // 2^53 + 1 is not a double: it is greater than the double 2^53 (exact arithmetic).
        let two53 = 9_007_199_254_740_992i128;
        assert_eq!(
            cmp_int_float(two53 + 1, 9_007_199_254_740_992.0),
            Ordering::Greater
        );
        assert_eq!(
            cmp_int_float(two53, 9_007_199_254_740_992.0),
            Ordering::Equal
        );
        assert_eq!(cmp_int_float(3, 3.5), Ordering::Less);
        assert_eq!(cmp_int_float(-3, -3.5), Ordering::Greater);
        assert_eq!(cmp_int_float(i128::from(i64::MAX), 1e300), Ordering::Less);
        assert_eq!(
            cmp_int_float(i128::from(i64::MIN), -1e300),
            Ordering::Greater
        );
        assert_eq!(Key::Int(2).cmp(&Key::Float(1.5)), Ordering::Greater);
        assert_eq!(Key::Float(1.5).cmp(&Key::Int(2)), Ordering::Less);
    }
}
