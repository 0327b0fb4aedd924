//! Parquet: one row per trial, flat (top-level, non-repeated) columns.
//!
//! The file is read once into memory, hashed in the same pass, and decoded from those bytes, so
//! the digest is that of exactly what was analysed (a Parquet reader needs the footer first, so
//! it cannot decode while streaming). Columns are then decoded in batches, in lockstep, and every
//! value goes through the same checks as a CSV cell. Rows are counted from 1.
//!
//! Value columns: DOUBLE, FLOAT, INT32, INT64 (signed or unsigned integers; not DECIMAL, dates or
//! times), and BOOLEAN for binary outcomes. Arm columns: strings or integers. Order columns:
//! strings, integers of any meaning (timestamps order as their integers), or floating point.
//! Cluster columns: strings, byte arrays without annotation, plain integers, or BOOLEAN.

use std::fs::File;
use std::panic::{AssertUnwindSafe, catch_unwind};

use parquet::basic::{Compression, ConvertedType, LogicalType, Type as PhysicalType};
use parquet::column::reader::{ColumnReader, ColumnReaderImpl};
use parquet::data_type::{ByteArray, DataType};
use parquet::file::reader::{FileReader, RowGroupReader};
use parquet::file::serialized_reader::SerializedFileReader;
use parquet::schema::types::ColumnDescriptor;

use super::collect::{Collector, Key};
use super::error::{DataError, Place, ProblemKind};
use super::source::{self, Digest256};
use super::{ArmData, ReadOptions};
use crate::spec::suggest;

/// Rows decoded per step.
const BATCH: usize = 64 * 1024;

/// A decoded cell, before the checks.
#[derive(Debug, Clone)]
enum Val {
    F(f64),
    I(i128),
    B(bool),
    S(ByteArray),
}

/// How a column's stored values are read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Stored {
    Bool,
    Int { unsigned: bool },
    Float,
    Text,
}

/// Reads a Parquet file: the arms, the digest of its bytes, and the number of rows.
pub(super) fn read(
    file: &str,
    f: File,
    total: u64,
    opts: &ReadOptions,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<(Vec<ArmData>, Digest256, u64), DataError> {
    // The size on disk is a hint, not a promise (the file may change while it is read).
    let mut whole: Vec<u8> = Vec::with_capacity(usize::try_from(total.min(1 << 30)).unwrap_or(0));
    let digest = source::stream(file, f, total, progress, &mut |data, _eof| {
        whole.extend_from_slice(data);
        Ok(data.len())
    })?;
    // The parquet crate asserts on some malformed inputs; a panic there must still come out as
    // a refusal of the file, never as a crash.
    let decoded = catch_unwind(AssertUnwindSafe(|| decode(file, whole, opts)));
    match decoded {
        Ok(result) => {
            let (arms, rows) = result?;
            Ok((arms, digest, rows))
        }
        Err(_) => Err(bad(file, "the Parquet decoder failed on malformed data")),
    }
}

fn bad(file: &str, why: impl std::fmt::Display) -> DataError {
    DataError::one(
        file,
        ProblemKind::BadParquet,
        None,
        format!("not a readable Parquet file: {why}"),
    )
}

fn decode(
    file: &str,
    whole: Vec<u8>,
    opts: &ReadOptions,
) -> Result<(Vec<ArmData>, u64), DataError> {
    let reader = SerializedFileReader::new(bytes::Bytes::from(whole)).map_err(|e| bad(file, e))?;
    let meta = reader.metadata();
    let schema = meta.file_metadata().schema_descr();
    let mut collector = Collector::new(opts);
    let binary = collector.binary();

    let value = find_column(file, schema, opts.column)?;
    let value_stored = stored(schema.column(value).as_ref());
    let value_ok = match value_stored {
        Some(Stored::Bool) => binary,
        Some(Stored::Int { .. }) | Some(Stored::Float) => {
            !(binary && value_stored == Some(Stored::Float))
        }
        _ => false,
    };
    if !value_ok {
        let need = if binary {
            "binary outcomes need a BOOLEAN column or an integer column holding 0 and 1"
        } else {
            "bounded outcomes need a DOUBLE, FLOAT or plain integer column"
        };
        return Err(unsupported(file, schema.column(value).as_ref(), need));
    }
    let arm = match opts.arm_column {
        Some(name) => {
            let i = find_column(file, schema, name)?;
            match stored(schema.column(i).as_ref()) {
                Some(Stored::Text) | Some(Stored::Int { .. }) => Some(i),
                _ => {
                    return Err(unsupported(
                        file,
                        schema.column(i).as_ref(),
                        "an arm column holds strings or integers",
                    ));
                }
            }
        }
        None => None,
    };
    let order = match opts.order_column {
        Some(name) => {
            let i = find_column(file, schema, name)?;
            let d = schema.column(i);
            let ok = match d.physical_type() {
                PhysicalType::INT32
                | PhysicalType::INT64
                | PhysicalType::FLOAT
                | PhysicalType::DOUBLE => true,
                PhysicalType::BYTE_ARRAY => stored(d.as_ref()) == Some(Stored::Text),
                _ => false,
            };
            if !ok {
                return Err(unsupported(
                    file,
                    d.as_ref(),
                    "an order column holds integers (timestamps and dates included), floating-point numbers or strings",
                ));
            }
            Some(i)
        }
        None => None,
    };
    let cluster = match opts.cluster_column {
        Some(name) => {
            let i = find_column(file, schema, name)?;
            let d = schema.column(i);
            let raw_bytes = d.physical_type() == PhysicalType::BYTE_ARRAY
                && d.logical_type_ref().is_none()
                && d.converted_type() == ConvertedType::NONE;
            match stored(d.as_ref()) {
                Some(Stored::Text) | Some(Stored::Int { .. }) | Some(Stored::Bool) => {}
                None if raw_bytes => {}
                _ => {
                    return Err(unsupported(
                        file,
                        d.as_ref(),
                        "a cluster column holds strings, byte arrays, integers or booleans",
                    ));
                }
            }
            Some((i, raw_bytes))
        }
        None => None,
    };

    // Refuse codecs this build does not decode up front, with a message that names the column.
    for g in meta.row_groups() {
        for i in [Some(value), arm, order, cluster.map(|(i, _)| i)]
            .into_iter()
            .flatten()
        {
            let codec = g.column(i).compression();
            let unread = match codec {
                Compression::BROTLI(_) => Some("Brotli"),
                Compression::LZO => Some("LZO"),
                _ => None,
            };
            if let Some(codec) = unread {
                let name = schema.column(i).name().to_owned();
                return Err(DataError::one(
                    file,
                    ProblemKind::UnsupportedType,
                    None,
                    format!(
                        "column `{name}` is compressed with {codec}, which surety does not decode"
                    ),
                )
                .with_hint("write the file with zstd, snappy, gzip, lz4 or no compression"));
            }
        }
    }

    let rows_declared = u64::try_from(meta.file_metadata().num_rows()).unwrap_or(0);
    let mut row: u64 = 0;
    for g in 0..reader.num_row_groups() {
        let group = reader.get_row_group(g).map_err(|e| bad(file, e))?;
        let group_rows = usize::try_from(group.metadata().num_rows()).unwrap_or(0);
        let mut value_r = Column::open(file, group.as_ref(), value, schema.column(value).as_ref())?;
        let mut arm_r = match arm {
            Some(i) => Some(Column::open(
                file,
                group.as_ref(),
                i,
                schema.column(i).as_ref(),
            )?),
            None => None,
        };
        let mut order_r = match order {
            Some(i) => Some(Column::open(
                file,
                group.as_ref(),
                i,
                schema.column(i).as_ref(),
            )?),
            None => None,
        };
        let mut cluster_r = match cluster {
            Some((i, _)) => Some(Column::open(
                file,
                group.as_ref(),
                i,
                schema.column(i).as_ref(),
            )?),
            None => None,
        };
        let raw_cluster = matches!(cluster, Some((_, true)));
        let mut cluster_name: Vec<u8> = Vec::new();
        let mut done = 0usize;
        while done < group_rows {
            let want = BATCH.min(group_rows - done);
            let values = value_r.next(file, want)?;
            let arms = match &mut arm_r {
                Some(r) => Some(r.next(file, want)?),
                None => None,
            };
            let keys = match &mut order_r {
                Some(r) => Some(r.next(file, want)?),
                None => None,
            };
            let cluster_cells = match &mut cluster_r {
                Some(r) => Some(r.next(file, want)?),
                None => None,
            };
            for i in 0..want {
                let place = Place::Row {
                    row: row + i as u64 + 1,
                };
                let arm_index = match &arms {
                    None => collector.single_arm(),
                    Some(cells) => match &cells[i] {
                        None => {
                            collector.refuse_arm(ProblemKind::NullValue, place, b"null");
                            None
                        }
                        Some(Val::S(s)) => collector.arm(s.data(), place),
                        Some(Val::I(n)) => collector.arm(n.to_string().as_bytes(), place),
                        Some(Val::B(b)) => collector.arm(b.to_string().as_bytes(), place),
                        Some(Val::F(x)) => collector.arm(x.to_string().as_bytes(), place),
                    },
                };
                let mut key_ok = true;
                let key = match &keys {
                    None => None,
                    Some(cells) => {
                        let k = match &cells[i] {
                            None => {
                                collector.refuse_key(ProblemKind::NullValue, place, b"null");
                                None
                            }
                            Some(Val::I(n)) => Some(Key::Int(*n)),
                            Some(Val::F(x)) if x.is_finite() => Some(Key::Float(*x)),
                            Some(Val::F(x)) => {
                                collector.refuse_key(
                                    ProblemKind::NotFinite,
                                    place,
                                    x.to_string().as_bytes(),
                                );
                                None
                            }
                            Some(Val::S(s)) => Some(Key::Text(s.data().into())),
                            Some(Val::B(b)) => Some(Key::Int(i128::from(*b))),
                        };
                        key_ok = k.is_some();
                        k
                    }
                };
                let mut cluster_ok = true;
                if let Some(cells) = &cluster_cells {
                    cluster_name.clear();
                    match &cells[i] {
                        None => {
                            collector.refuse_cluster(ProblemKind::NullValue, place, b"null");
                            cluster_ok = false;
                        }
                        Some(Val::S(s)) if raw_cluster => hex_name(s.data(), &mut cluster_name),
                        Some(Val::S(s)) => cluster_name.extend_from_slice(s.data()),
                        Some(Val::I(n)) => cluster_name.extend_from_slice(n.to_string().as_bytes()),
                        Some(Val::B(b)) => cluster_name.extend_from_slice(b.to_string().as_bytes()),
                        Some(Val::F(x)) => cluster_name.extend_from_slice(x.to_string().as_bytes()),
                    }
                    cluster_ok = cluster_ok && collector.check_cluster(&cluster_name, place);
                }
                let x = match &values[i] {
                    None => {
                        collector.refuse_value(ProblemKind::NullValue, place, b"null");
                        continue;
                    }
                    Some(Val::B(b)) => f64::from(u8::from(*b)),
                    Some(Val::F(x)) => *x,
                    Some(Val::I(n)) => {
                        if binary && *n != 0 && *n != 1 {
                            collector.refuse_value(
                                ProblemKind::NotBinary,
                                place,
                                n.to_string().as_bytes(),
                            );
                            continue;
                        }
                        let x = *n as f64;
                        // Integers beyond 2^53 may round; refuse rather than compare a rounded value.
                        if x as i128 != *n {
                            collector.refuse_value(
                                ProblemKind::Inexact,
                                place,
                                n.to_string().as_bytes(),
                            );
                            continue;
                        }
                        x
                    }
                    Some(Val::S(s)) => {
                        collector.refuse_value(ProblemKind::NotANumber, place, s.data());
                        continue;
                    }
                };
                if let Some(a) = arm_index
                    && key_ok
                    && cluster_ok
                {
                    let cluster = cluster_cells.is_some().then_some(&cluster_name[..]);
                    collector.push(a, x, key, place, None, cluster);
                }
            }
            done += want;
            row += want as u64;
        }
    }
    if row != rows_declared {
        return Err(bad(
            file,
            format!("the footer declares {rows_declared} rows but the row groups hold {row}"),
        ));
    }
    if row == 0 {
        return Err(DataError::one(
            file,
            ProblemKind::NoDataRows,
            None,
            "the file has no rows",
        ));
    }
    let arms = collector.finish(file, 0, Vec::new())?;
    Ok((arms, row))
}

/// `bytes` as a cluster name: `0x` and two lower-case hex digits per byte, so that names of
/// byte arrays that are not text stay distinct and printable. An empty array stays empty, to
/// be refused as an empty cell.
fn hex_name(bytes: &[u8], out: &mut Vec<u8>) {
    const DIGITS: &[u8; 16] = b"0123456789abcdef";
    if bytes.is_empty() {
        return;
    }
    out.extend_from_slice(b"0x");
    for &b in bytes {
        out.push(DIGITS[usize::from(b >> 4)]);
        out.push(DIGITS[usize::from(b & 15)]);
    }
}

/// The leaf index of top-level column `name`, or the error naming the columns that exist.
fn find_column(
    file: &str,
    schema: &parquet::schema::types::SchemaDescriptor,
    name: &str,
) -> Result<usize, DataError> {
    for (i, c) in schema.columns().iter().enumerate() {
        let parts = c.path().parts();
        if parts.first().map(String::as_str) != Some(name) {
            continue;
        }
        if parts.len() > 1 || c.max_rep_level() > 0 {
            return Err(DataError::one(
                file,
                ProblemKind::UnsupportedType,
                None,
                format!(
                    "column `{name}` is nested or repeated; surety reads flat columns, one value per row"
                ),
            ));
        }
        return Ok(i);
    }
    let names: Vec<&str> = schema
        .root_schema()
        .get_fields()
        .iter()
        .map(|f| f.name())
        .collect();
    let err = DataError::one(
        file,
        ProblemKind::MissingColumn,
        None,
        format!(
            "no column named `{name}`; the file has {}",
            suggest::list(&names)
        ),
    );
    Err(match suggest::closest(name, &names) {
        Some(c) => err.with_hint(format!("did you mean `{c}`?")),
        None => err,
    })
}

/// How a column's values are read, or `None` for types surety does not read as values.
fn stored(d: &ColumnDescriptor) -> Option<Stored> {
    let logical = d.logical_type_ref();
    match d.physical_type() {
        PhysicalType::BOOLEAN => Some(Stored::Bool),
        PhysicalType::INT32 | PhysicalType::INT64 => {
            let plain = match logical {
                None => matches!(
                    d.converted_type(),
                    ConvertedType::NONE
                        | ConvertedType::INT_8
                        | ConvertedType::INT_16
                        | ConvertedType::INT_32
                        | ConvertedType::INT_64
                        | ConvertedType::UINT_8
                        | ConvertedType::UINT_16
                        | ConvertedType::UINT_32
                        | ConvertedType::UINT_64
                ),
                Some(LogicalType::Integer(_)) => true,
                Some(_) => false,
            };
            let unsigned = match logical {
                Some(LogicalType::Integer(t)) => !t.is_signed,
                _ => matches!(
                    d.converted_type(),
                    ConvertedType::UINT_8
                        | ConvertedType::UINT_16
                        | ConvertedType::UINT_32
                        | ConvertedType::UINT_64
                ),
            };
            plain.then_some(Stored::Int { unsigned })
        }
        PhysicalType::FLOAT | PhysicalType::DOUBLE => Some(Stored::Float),
        PhysicalType::BYTE_ARRAY => {
            let text = matches!(logical, Some(LogicalType::String) | Some(LogicalType::Enum))
                || matches!(
                    d.converted_type(),
                    ConvertedType::UTF8 | ConvertedType::ENUM
                );
            text.then_some(Stored::Text)
        }
        _ => None,
    }
}

fn unsupported(file: &str, d: &ColumnDescriptor, need: &str) -> DataError {
    DataError::one(
        file,
        ProblemKind::UnsupportedType,
        None,
        format!("column `{}` has type {}; {need}", d.name(), type_text(d)),
    )
}

/// A column's type as Parquet tools print it: the physical type, and the annotation if any.
fn type_text(d: &ColumnDescriptor) -> String {
    let physical = d.physical_type().to_string();
    let annotation = match d.logical_type_ref() {
        None if d.converted_type() == ConvertedType::NONE => return physical,
        None => d.converted_type().to_string(),
        Some(LogicalType::Decimal(t)) => format!("DECIMAL({}, {})", t.precision, t.scale),
        Some(LogicalType::Integer(t)) => {
            format!("{}INT{}", if t.is_signed { "" } else { "U" }, t.bit_width)
        }
        Some(LogicalType::String) => "STRING".to_owned(),
        Some(LogicalType::Date) => "DATE".to_owned(),
        Some(LogicalType::Time(_)) => "TIME".to_owned(),
        Some(LogicalType::Timestamp(_)) => "TIMESTAMP".to_owned(),
        Some(LogicalType::Float16) => "FLOAT16".to_owned(),
        Some(other) => format!("{other:?}").to_uppercase(),
    };
    format!("{physical} ({annotation})")
}

/// A typed reader over one column chunk, yielding decoded cells (`None` for null).
struct Column {
    reader: Typed,
    name: String,
    max_def: i16,
    unsigned: bool,
    defs: Vec<i16>,
    out: Vec<Option<Val>>,
}

enum Typed {
    Bool(ColumnReaderImpl<parquet::data_type::BoolType>, Vec<bool>),
    I32(ColumnReaderImpl<parquet::data_type::Int32Type>, Vec<i32>),
    I64(ColumnReaderImpl<parquet::data_type::Int64Type>, Vec<i64>),
    F32(ColumnReaderImpl<parquet::data_type::FloatType>, Vec<f32>),
    F64(ColumnReaderImpl<parquet::data_type::DoubleType>, Vec<f64>),
    Bytes(
        ColumnReaderImpl<parquet::data_type::ByteArrayType>,
        Vec<ByteArray>,
    ),
}

impl Column {
    fn open(
        file: &str,
        group: &dyn RowGroupReader,
        index: usize,
        d: &ColumnDescriptor,
    ) -> Result<Column, DataError> {
        let reader = match group.get_column_reader(index).map_err(|e| bad(file, e))? {
            ColumnReader::BoolColumnReader(r) => Typed::Bool(r, Vec::new()),
            ColumnReader::Int32ColumnReader(r) => Typed::I32(r, Vec::new()),
            ColumnReader::Int64ColumnReader(r) => Typed::I64(r, Vec::new()),
            ColumnReader::FloatColumnReader(r) => Typed::F32(r, Vec::new()),
            ColumnReader::DoubleColumnReader(r) => Typed::F64(r, Vec::new()),
            ColumnReader::ByteArrayColumnReader(r) => Typed::Bytes(r, Vec::new()),
            _ => return Err(unsupported(file, d, "this column type is not read")),
        };
        Ok(Column {
            reader,
            name: d.name().to_owned(),
            max_def: d.max_def_level(),
            unsigned: matches!(stored(d), Some(Stored::Int { unsigned: true })),
            defs: Vec::new(),
            out: Vec::new(),
        })
    }

    /// The next `n` cells of the column; an error if the chunk holds fewer.
    fn next(&mut self, file: &str, n: usize) -> Result<&[Option<Val>], DataError> {
        let unsigned = self.unsigned;
        let max_def = self.max_def;
        self.out.clear();
        let got = match &mut self.reader {
            Typed::Bool(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |b| {
                Val::B(*b)
            }),
            Typed::I32(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |x| {
                Val::I(if unsigned {
                    i128::from(*x as u32)
                } else {
                    i128::from(*x)
                })
            }),
            Typed::I64(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |x| {
                Val::I(if unsigned {
                    i128::from(*x as u64)
                } else {
                    i128::from(*x)
                })
            }),
            Typed::F32(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |x| {
                Val::F(f64::from(*x))
            }),
            Typed::F64(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |x| {
                Val::F(*x)
            }),
            Typed::Bytes(r, v) => fill(r, v, &mut self.defs, &mut self.out, n, max_def, |s| {
                Val::S(s.clone())
            }),
        }
        .map_err(|e| bad(file, format!("column `{}`: {e}", self.name)))?;
        if got != n {
            return Err(bad(
                file,
                format!(
                    "column `{}` holds {got} values where its row group declares {n}",
                    self.name
                ),
            ));
        }
        Ok(&self.out)
    }
}

/// Decodes up to `n` records into `out`, nulls as `None`; returns how many were decoded.
fn fill<T: DataType>(
    r: &mut ColumnReaderImpl<T>,
    values: &mut Vec<T::T>,
    defs: &mut Vec<i16>,
    out: &mut Vec<Option<Val>>,
    n: usize,
    max_def: i16,
    conv: impl Fn(&T::T) -> Val,
) -> parquet::errors::Result<usize> {
    values.clear();
    defs.clear();
    let (records, nvalues, levels) = r.read_records(n, Some(defs), None, values)?;
    if max_def == 0 {
        out.extend(values.iter().take(nvalues).map(|v| Some(conv(v))));
    } else {
        let mut it = values.iter().take(nvalues);
        for &d in defs.iter().take(levels) {
            if d == max_def {
                match it.next() {
                    Some(v) => out.push(Some(conv(v))),
                    None => {
                        return Err(parquet::errors::ParquetError::General(
                            "fewer values than definition levels".into(),
                        ));
                    }
                }
            } else {
                out.push(None);
            }
        }
    }
    if out.len() != records {
        return Err(parquet::errors::ParquetError::General(format!(
            "{records} records decoded into {} cells",
            out.len()
        )));
    }
    Ok(records)
}
