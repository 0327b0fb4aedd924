//! A serde `Deserializer` over the marked node tree.
//!
//! Scalars get their type from what the target asks for (`deserialize_u64` reads exact digits,
//! `deserialize_bool` only `true`/`false`, `deserialize_string` refuses text that another YAML
//! reader would take for a number), and every error is placed: at the key for an unknown key,
//! at the value for a wrong value, at the mapping for a missing key. Every key and value read
//! is recorded in a [`Trace`] under its dotted path, so that validation and later stages can
//! place their own errors.

use std::cell::RefCell;
use std::collections::BTreeMap;
use std::fmt;

use serde::de::{self, DeserializeOwned, DeserializeSeed, IntoDeserializer, Visitor};

use super::error::{Mark, Pending, RawError};
use super::number::{self, IntError, RealError};
use super::suggest;
use super::yaml::{Node, Style, Value, join_index, join_key, shorten};

/// Where one key and its value were written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Entry {
    /// The key, for mapping entries; `None` for list elements and the document itself.
    pub key: Option<Mark>,
    /// The value.
    pub value: Mark,
    /// How the value was written, when it is a scalar.
    pub style: Option<Style>,
    /// For a plain decimal number written with a fractional part or an exponent, the power of
    /// ten of its last digit (`1.120` → −3, `2.5e-3` → −4): the precision the author wrote.
    /// `None` for whole numbers written without an exponent and for anything else.
    pub last_place: Option<i64>,
}

/// Every place read, by dotted path (`claim.confidence`, `data.arms[1].events`; `` for the
/// document).
pub(crate) type Trace = BTreeMap<String, Entry>;

impl fmt::Display for RawError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for RawError {}

impl de::Error for RawError {
    fn custom<T: fmt::Display>(msg: T) -> Self {
        RawError::unplaced(msg.to_string())
    }

    fn invalid_type(unexp: de::Unexpected<'_>, exp: &dyn de::Expected) -> Self {
        let mut e = RawError::unplaced(format!("expected {exp}, found {unexp}"));
        e.pending = Pending::Expected(exp.to_string());
        e
    }

    fn invalid_value(unexp: de::Unexpected<'_>, exp: &dyn de::Expected) -> Self {
        Self::invalid_type(unexp, exp)
    }

    fn invalid_length(len: usize, exp: &dyn de::Expected) -> Self {
        RawError::unplaced(format!("expected {exp}, found a list of {len}"))
    }

    fn unknown_variant(variant: &str, expected: &'static [&'static str]) -> Self {
        let e = RawError::unplaced(format!(
            "unknown value `{}`; expected one of {}",
            shorten(variant),
            suggest::list(expected)
        ));
        match suggest::closest(variant, expected) {
            Some(s) => e.hint(format!("did you mean `{s}`?")),
            None => e,
        }
    }

    fn unknown_field(field: &str, expected: &'static [&'static str]) -> Self {
        let e = RawError::unplaced(format!(
            "unknown key `{}`; the keys allowed here are {}",
            shorten(field),
            suggest::list(expected)
        ));
        match suggest::closest(field, expected) {
            Some(s) => e.hint(format!("did you mean `{s}`?")),
            None => e,
        }
    }

    fn missing_field(field: &'static str) -> Self {
        let mut e = RawError::unplaced(format!("missing key `{field}`"));
        e.pending = Pending::Missing(field);
        e
    }

    fn duplicate_field(field: &'static str) -> Self {
        RawError::unplaced(format!("duplicate key `{field}`"))
    }
}

/// Places an error raised while reading `node` (at `path`), unless a deeper node placed it.
fn place(mut e: RawError, node: &Node, path: &str) -> RawError {
    if e.mark.is_none() {
        e.mark = Some(node.mark);
        e.key = Some(match &e.pending {
            Pending::Missing(field) => join_key(path, field),
            _ => path.to_owned(),
        });
        if let Pending::Expected(expected) = &e.pending {
            e.message = format!("expected {expected}, found {}", node.describe());
            e.pending = Pending::None;
        }
    }
    e
}

/// Deserializes the whole document into `T`, recording places into `trace`.
pub(crate) fn from_node<T: DeserializeOwned>(
    node: &Node,
    trace: &RefCell<Trace>,
) -> Result<T, RawError> {
    record(trace, "", None, node);
    T::deserialize(NodeDe {
        node,
        path: String::new(),
        trace,
    })
}

fn record(trace: &RefCell<Trace>, path: &str, key: Option<Mark>, node: &Node) {
    let (style, last_place) = match &node.value {
        Value::Scalar { style, text } => {
            let place = number::parse_decimal(text)
                .filter(|d| *style == Style::Plain && (!d.frac_digits.is_empty() || d.has_exponent))
                .and_then(|d| {
                    i64::try_from(d.frac_digits.len())
                        .ok()
                        .map(|f| d.exponent - f)
                });
            (Some(*style), place)
        }
        _ => (None, None),
    };
    trace.borrow_mut().insert(
        path.to_owned(),
        Entry {
            key,
            value: node.mark,
            style,
            last_place,
        },
    );
}

pub(crate) struct NodeDe<'a> {
    node: &'a Node,
    path: String,
    trace: &'a RefCell<Trace>,
}

impl NodeDe<'_> {
    fn err(&self, message: impl Into<String>) -> RawError {
        RawError::new(self.node.mark, Some(self.path.clone()), message)
    }

    fn wrong(&self, expected: &str) -> RawError {
        let e = self.err(format!(
            "expected {expected}, found {}",
            self.node.describe()
        ));
        match &self.node.value {
            Value::Scalar {
                text,
                style: Style::Quoted,
            } if number::looks_numeric(text) => e.hint("remove the quotes: a quoted value is text"),
            _ => e,
        }
    }

    /// The text of a non-null plain scalar; anything else is not a number or boolean.
    fn plain(&self, expected: &str) -> Result<&str, RawError> {
        match &self.node.value {
            Value::Scalar {
                text,
                style: Style::Plain,
            } if !self.node.is_null() => Ok(text.as_str()),
            _ => Err(self.wrong(expected)),
        }
    }

    fn leading_zero(&self, text: &str) -> RawError {
        let (sign, digits) = match text.strip_prefix('-') {
            Some(d) => ("-", d),
            None => ("", text.strip_prefix('+').unwrap_or(text)),
        };
        let bare = digits.trim_start_matches('0');
        let bare = if bare.is_empty() { "0" } else { bare };
        self.err(format!(
            "`{text}` has a leading zero: YAML 1.1 reads it as an octal number, YAML 1.2 as decimal"
        ))
        .hint(format!(
            "write {sign}{bare} without the leading zero, or quote it if it is text"
        ))
    }

    fn integer(&self, expected: &str) -> Result<(bool, u64), RawError> {
        let text = self.plain(expected)?;
        number::parse_integer(text).map_err(|e| match e {
            IntError::NotNumber | IntError::NonFinite => self.wrong(expected),
            IntError::LeadingZero => self.leading_zero(text),
            IntError::NotDecimal => self
                .err(format!(
                    "expected {expected} in plain decimal digits, found `{text}`"
                ))
                .hint("write it without underscores, colons or a base prefix, for example 1000"),
            IntError::Fraction => self
                .err(format!(
                    "expected {expected}, found the fractional number `{text}`"
                ))
                .hint("counts are whole numbers"),
            IntError::TooLarge => self.err(format!(
                "`{}` is too large: at most {} is allowed",
                shorten(text),
                u64::MAX
            )),
        })
    }

    fn unsigned(&self, max: u64) -> Result<u64, RawError> {
        let (negative, value) = self.integer("a whole number")?;
        if negative && value != 0 {
            return Err(self.err(format!(
                "expected a whole number that is not negative, found `-{value}`"
            )));
        }
        if value > max {
            return Err(self.err(format!(
                "`{value}` is too large: at most {max} is allowed here"
            )));
        }
        Ok(value)
    }

    fn signed(&self, min: i64, max: i64) -> Result<i64, RawError> {
        let (negative, magnitude) = self.integer("a whole number")?;
        let value = if negative {
            -i128::from(magnitude)
        } else {
            i128::from(magnitude)
        };
        if value < i128::from(min) || value > i128::from(max) {
            return Err(self.err(format!(
                "`{value}` is out of range: expected a whole number from {min} to {max}"
            )));
        }
        // In range of i64 by the check above.
        Ok(value as i64)
    }

    fn real(&self) -> Result<f64, RawError> {
        let text = self.plain("a number")?;
        number::parse_real(text).map_err(|e| match e {
            RealError::NotNumber | RealError::NonFinite => {
                let e = self.wrong("a finite number");
                if matches!(
                    text.to_ascii_lowercase().trim_start_matches(['-', '+']),
                    ".inf" | ".nan"
                ) {
                    e.hint("infinite and not-a-number values are not allowed in a spec")
                } else {
                    e
                }
            }
            RealError::LeadingZero => self.leading_zero(text),
            RealError::NotDecimal => self
                .err(format!(
                    "expected a number in plain decimal digits, found `{text}`"
                ))
                .hint("write it without underscores, colons or a base prefix, for example 0.25"),
            RealError::TooLarge => self.err(format!(
                "`{}` is too large for a 64-bit number",
                shorten(text)
            )),
            RealError::Percent(p) => {
                let e = self.err(format!("expected a number, found the percentage `{text}`"));
                match number::parse_decimal(&p) {
                    Some(d) if !d.has_exponent && !d.negative => {
                        let (i, f) = number::shift_left(d.int_digits, d.frac_digits, 2);
                        let fraction = if f.is_empty() { i } else { format!("{i}.{f}") };
                        e.hint(format!("write it as a fraction: {fraction}"))
                    }
                    _ => e,
                }
            }
        })
    }

    /// Text that must be text: refuses plain scalars that some YAML reader takes for a number,
    /// boolean or null, so `id: 0117` cannot become 117 (or 79) anywhere.
    fn strict_text(&self) -> Result<String, RawError> {
        match &self.node.value {
            Value::Scalar { .. } if self.node.is_null() => Err(self.wrong("text")),
            Value::Scalar {
                text,
                style: Style::Plain,
            } => {
                if number::looks_numeric(text)
                    || number::yaml12_bool(text).is_some()
                    || number::is_yaml11_bool(text)
                {
                    Err(self.wrong("text").hint(format!(
                        "quote it so it is read exactly as written: \"{text}\""
                    )))
                } else {
                    Ok(text.clone())
                }
            }
            Value::Scalar { text, .. } => Ok(text.clone()),
            _ => Err(self.wrong("text")),
        }
    }

    fn scalar_text(&self) -> Option<&str> {
        match &self.node.value {
            Value::Scalar { text, .. } if !self.node.is_null() => Some(text),
            _ => None,
        }
    }
}

macro_rules! unsigned {
    ($method:ident, $visit:ident, $ty:ty) => {
        fn $method<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
            // `as` is lossless: `unsigned` checked the value against the type's maximum.
            let v = self.unsigned(<$ty>::MAX as u64)? as $ty;
            visitor
                .$visit(v)
                .map_err(|e| place(e, self.node, &self.path))
        }
    };
}

macro_rules! signed {
    ($method:ident, $visit:ident, $ty:ty) => {
        fn $method<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
            // `as` is lossless: `signed` checked the value against the type's range.
            let v = self.signed(<$ty>::MIN as i64, <$ty>::MAX as i64)? as $ty;
            visitor
                .$visit(v)
                .map_err(|e| place(e, self.node, &self.path))
        }
    };
}

impl<'de> de::Deserializer<'de> for NodeDe<'_> {
    type Error = RawError;

    /// Without a type hint, a scalar is its text as written (null is unit).
    fn deserialize_any<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let result = match &self.node.value {
            Value::Scalar { .. } if self.node.is_null() => visitor.visit_unit(),
            Value::Scalar { text, .. } => visitor.visit_str(text),
            Value::Seq(items) => return self.visit_items(items, visitor),
            Value::Map(entries) => return self.visit_entries(entries, visitor),
        };
        result.map_err(|e| place(e, self.node, &self.path))
    }

    fn deserialize_bool<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let text = self.plain("true or false")?;
        match number::yaml12_bool(text) {
            Some(b) => visitor.visit_bool(b).map_err(|e| place(e, self.node, &self.path)),
            None if number::is_yaml11_bool(text) => Err(self
                .err(format!("`{text}` is a boolean only in YAML 1.1; a study spec is read as YAML 1.2, where it is text"))
                .hint("write true or false")),
            None => Err(self.wrong("true or false")),
        }
    }

    unsigned!(deserialize_u8, visit_u8, u8);
    unsigned!(deserialize_u16, visit_u16, u16);
    unsigned!(deserialize_u32, visit_u32, u32);
    unsigned!(deserialize_u64, visit_u64, u64);
    signed!(deserialize_i8, visit_i8, i8);
    signed!(deserialize_i16, visit_i16, i16);
    signed!(deserialize_i32, visit_i32, i32);
    signed!(deserialize_i64, visit_i64, i64);

    fn deserialize_f32<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let v = self.real()?;
        if v.abs() > f64::from(f32::MAX) {
            return Err(self.err("the number is too large for a 32-bit number"));
        }
        // Range checked above; the rounding to f32 is what was asked for.
        visitor
            .visit_f32(v as f32)
            .map_err(|e| place(e, self.node, &self.path))
    }

    fn deserialize_f64<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let v = self.real()?;
        visitor
            .visit_f64(v)
            .map_err(|e| place(e, self.node, &self.path))
    }

    fn deserialize_char<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let text = self.strict_text()?;
        let mut chars = text.chars();
        match (chars.next(), chars.next()) {
            (Some(c), None) => visitor
                .visit_char(c)
                .map_err(|e| place(e, self.node, &self.path)),
            _ => Err(self.wrong("a single character")),
        }
    }

    fn deserialize_str<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        let text = self.strict_text()?;
        visitor
            .visit_string(text)
            .map_err(|e| place(e, self.node, &self.path))
    }

    fn deserialize_string<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        self.deserialize_str(visitor)
    }

    fn deserialize_bytes<V: Visitor<'de>>(self, _visitor: V) -> Result<V::Value, RawError> {
        Err(self.err("binary data cannot be read from a study spec"))
    }

    fn deserialize_byte_buf<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        self.deserialize_bytes(visitor)
    }

    fn deserialize_option<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        if self.node.is_null() {
            visitor
                .visit_none()
                .map_err(|e| place(e, self.node, &self.path))
        } else {
            let (node, path) = (self.node, self.path.clone());
            visitor.visit_some(self).map_err(|e| place(e, node, &path))
        }
    }

    fn deserialize_unit<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        if self.node.is_null() {
            visitor
                .visit_unit()
                .map_err(|e| place(e, self.node, &self.path))
        } else {
            Err(self.wrong("nothing (an empty value)"))
        }
    }

    fn deserialize_unit_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        visitor: V,
    ) -> Result<V::Value, RawError> {
        self.deserialize_unit(visitor)
    }

    fn deserialize_newtype_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        visitor: V,
    ) -> Result<V::Value, RawError> {
        let (node, path) = (self.node, self.path.clone());
        visitor
            .visit_newtype_struct(self)
            .map_err(|e| place(e, node, &path))
    }

    fn deserialize_seq<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        match &self.node.value {
            Value::Seq(items) => self.visit_items(items, visitor),
            _ => Err(self.wrong("a list")),
        }
    }

    fn deserialize_tuple<V: Visitor<'de>>(
        self,
        _len: usize,
        visitor: V,
    ) -> Result<V::Value, RawError> {
        self.deserialize_seq(visitor)
    }

    fn deserialize_tuple_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        _len: usize,
        visitor: V,
    ) -> Result<V::Value, RawError> {
        self.deserialize_seq(visitor)
    }

    fn deserialize_map<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        match &self.node.value {
            Value::Map(entries) => self.visit_entries(entries, visitor),
            _ => Err(self.wrong("a mapping of keys to values")),
        }
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        _fields: &'static [&'static str],
        visitor: V,
    ) -> Result<V::Value, RawError> {
        self.deserialize_map(visitor)
    }

    fn deserialize_enum<V: Visitor<'de>>(
        self,
        _name: &'static str,
        variants: &'static [&'static str],
        visitor: V,
    ) -> Result<V::Value, RawError> {
        match self.scalar_text() {
            Some(text) => visitor
                .visit_enum(IntoDeserializer::<RawError>::into_deserializer(text))
                .map_err(|e| place(e, self.node, &self.path)),
            None => Err(self.wrong(&format!("one of {}", suggest::list(variants)))),
        }
    }

    fn deserialize_identifier<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        self.deserialize_str(visitor)
    }

    fn deserialize_ignored_any<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        visitor.visit_unit()
    }
}

impl<'a> NodeDe<'a> {
    fn visit_items<'de, V: Visitor<'de>>(
        &self,
        items: &'a [Node],
        visitor: V,
    ) -> Result<V::Value, RawError> {
        let mut access = SeqAcc {
            items: items.iter().enumerate(),
            path: &self.path,
            trace: self.trace,
        };
        let value = visitor
            .visit_seq(&mut access)
            .map_err(|e| place(e, self.node, &self.path))?;
        let left = access.items.len();
        if left > 0 {
            return Err(self.err(format!("this list has {left} more item(s) than expected")));
        }
        Ok(value)
    }

    fn visit_entries<'de, V: Visitor<'de>>(
        &self,
        entries: &'a [(Node, Node)],
        visitor: V,
    ) -> Result<V::Value, RawError> {
        let access = MapAcc {
            entries: entries.iter(),
            current: None,
            path: &self.path,
            trace: self.trace,
        };
        visitor
            .visit_map(access)
            .map_err(|e| place(e, self.node, &self.path))
    }
}

struct SeqAcc<'a, 'p> {
    items: std::iter::Enumerate<std::slice::Iter<'a, Node>>,
    path: &'p str,
    trace: &'a RefCell<Trace>,
}

impl<'de> de::SeqAccess<'de> for &mut SeqAcc<'_, '_> {
    type Error = RawError;

    fn next_element_seed<T: DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, RawError> {
        let Some((i, node)) = self.items.next() else {
            return Ok(None);
        };
        let path = join_index(self.path, i);
        record(self.trace, &path, None, node);
        seed.deserialize(NodeDe {
            node,
            path,
            trace: self.trace,
        })
        .map(Some)
    }

    fn size_hint(&self) -> Option<usize> {
        Some(self.items.len())
    }
}

struct MapAcc<'a, 'p> {
    entries: std::slice::Iter<'a, (Node, Node)>,
    current: Option<&'a (Node, Node)>,
    path: &'p str,
    trace: &'a RefCell<Trace>,
}

impl<'de> de::MapAccess<'de> for MapAcc<'_, '_> {
    type Error = RawError;

    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, RawError> {
        let Some(entry) = self.entries.next() else {
            return Ok(None);
        };
        self.current = Some(entry);
        let key = &entry.0;
        let text = key.scalar_text().unwrap_or_default();
        let path = join_key(self.path, text);
        seed.deserialize(KeyDe {
            text,
            mark: key.mark,
            path: &path,
        })
        .map(Some)
    }

    fn next_value_seed<V: DeserializeSeed<'de>>(&mut self, seed: V) -> Result<V::Value, RawError> {
        let Some((key, node)) = self.current.take() else {
            return Err(RawError::unplaced(
                "internal: a value was read before its key",
            ));
        };
        let path = join_key(self.path, key.scalar_text().unwrap_or_default());
        record(self.trace, &path, Some(key.mark), node);
        seed.deserialize(NodeDe {
            node,
            path,
            trace: self.trace,
        })
    }

    fn size_hint(&self) -> Option<usize> {
        Some(self.entries.len())
    }
}

/// A mapping key: always its text (keys were checked to be non-empty scalars when the tree was
/// built). Errors, such as an unknown key, are placed at the key.
struct KeyDe<'a> {
    text: &'a str,
    mark: Mark,
    path: &'a str,
}

impl<'de> de::Deserializer<'de> for KeyDe<'_> {
    type Error = RawError;

    fn deserialize_any<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, RawError> {
        visitor.visit_str(self.text).map_err(|mut e: RawError| {
            if e.mark.is_none() {
                e.mark = Some(self.mark);
                e.key = Some(self.path.to_owned());
                if let Pending::Expected(expected) = &e.pending {
                    e.message = format!(
                        "expected a key that is {expected}, found `{}`",
                        shorten(self.text)
                    );
                    e.pending = Pending::None;
                }
            }
            e
        })
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char str string
        bytes byte_buf option unit unit_struct newtype_struct seq tuple
        tuple_struct map struct enum identifier ignored_any
    }
}
