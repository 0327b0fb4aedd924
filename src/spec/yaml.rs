//! A YAML 1.2 node tree where every node keeps the place it was written, built from
//! saphyr-parser events.
//!
//! Scalars stay text here; they get a type only when the deserializer is asked for one
//! (see `de.rs`), so a spec is read by what each key needs and not by YAML's guesses.
//! Document-level rules of a study spec live here: exactly one document, a mapping at the top,
//! no tags, text keys, no duplicate keys.

use std::collections::BTreeMap;

use saphyr_parser::{Event, Parser, ScalarStyle, Span};

use super::error::{Mark, RawError};

/// Deeper nesting than this is refused; a study spec needs about four levels, and the limit
/// keeps recursion over the tree (and dropping it) far from the stack's end.
const MAX_DEPTH: usize = 64;

/// Upper bound on nodes in the tree, aliases expanded, so that an alias bomb cannot exhaust
/// memory. A study spec has a few hundred nodes.
const MAX_NODES: usize = 100_000;

/// How a scalar was written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Style {
    /// Unquoted: YAML would resolve it as null, bool, number or text.
    Plain,
    /// Single- or double-quoted: always text.
    Quoted,
    /// Literal (`|`) or folded (`>`) block: always text.
    Block,
}

#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Value {
    Scalar { text: String, style: Style },
    Seq(Vec<Node>),
    Map(Vec<(Node, Node)>),
}

#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Node {
    pub value: Value,
    pub mark: Mark,
}

impl Node {
    /// YAML 1.2 core-schema null: an empty plain scalar, `~`, or `null` in its three spellings.
    pub(crate) fn is_null(&self) -> bool {
        matches!(&self.value, Value::Scalar { text, style: Style::Plain }
            if matches!(text.as_str(), "" | "~" | "null" | "Null" | "NULL"))
    }

    /// The value of `key` if this node is a mapping that has it.
    pub(crate) fn get(&self, key: &str) -> Option<(&Node, &Node)> {
        match &self.value {
            Value::Map(entries) => entries
                .iter()
                .find(|(k, _)| k.scalar_text() == Some(key))
                .map(|(k, v)| (k, v)),
            _ => None,
        }
    }

    pub(crate) fn scalar_text(&self) -> Option<&str> {
        match &self.value {
            Value::Scalar { text, .. } => Some(text),
            _ => None,
        }
    }

    /// A short description of the node for messages: "a list", "the string `abc`", ...
    pub(crate) fn describe(&self) -> String {
        match &self.value {
            Value::Seq(_) => "a list".to_owned(),
            Value::Map(_) => "a mapping".to_owned(),
            Value::Scalar { .. } if self.is_null() => "nothing (an empty value)".to_owned(),
            Value::Scalar {
                text,
                style: Style::Plain,
            } => super::number::describe_plain(text),
            Value::Scalar {
                text,
                style: Style::Quoted,
            } => format!("the quoted string `\"{}\"`", shorten(text)),
            Value::Scalar {
                text,
                style: Style::Block,
            } => format!("the text block `{}`", shorten(text.trim_end())),
        }
    }
}

/// Keeps quoted user text in messages readable when it is long or spans lines.
pub(crate) fn shorten(text: &str) -> String {
    let one_line: String = text
        .chars()
        .map(|c| if c == '\n' { ' ' } else { c })
        .collect();
    if one_line.chars().count() > 40 {
        let head: String = one_line.chars().take(37).collect();
        format!("{head}...")
    } else {
        one_line
    }
}

fn mark_of(span: &Span) -> Mark {
    Mark {
        line: span.start.line(),
        col: span.start.col() + 1,
    }
}

enum Frame {
    Seq {
        mark: Mark,
        anchor: usize,
        items: Vec<Node>,
        path: String,
    },
    Map {
        mark: Mark,
        anchor: usize,
        items: Vec<Node>,
        path: String,
    },
}

/// Dotted path of the node that the next event starts; for a key, the path of its mapping.
fn next_path(stack: &[Frame]) -> String {
    match stack.last() {
        None => String::new(),
        Some(Frame::Seq { path, items, .. }) => join_index(path, items.len()),
        Some(Frame::Map { path, items, .. }) if items.len() % 2 == 0 => path.clone(),
        Some(Frame::Map { path, items, .. }) => join_key(
            path,
            items.last().and_then(Node::scalar_text).unwrap_or_default(),
        ),
    }
}

/// Parses `text` into the single document of a study spec, whose top level is a mapping.
pub(crate) fn parse_document(text: &str) -> Result<Node, RawError> {
    check_version_directive(text)?;
    let mut stack: Vec<Frame> = Vec::new();
    let mut anchors: BTreeMap<usize, Node> = BTreeMap::new();
    let mut root: Option<Node> = None;
    let mut documents = 0usize;
    let mut nodes = 0usize;

    for event in Parser::new_from_str(text) {
        let (event, span) = event.map_err(|e| {
            let mark = Mark { line: e.marker().line(), col: e.marker().col() + 1 };
            let hint = if e.info().contains("tabs") {
                "YAML indents with spaces only; replace the tab characters"
            } else if e.info().contains("quoted scalar") {
                "a quoted text is not closed: look for a missing quote from this line upwards"
            } else {
                "check indentation, colons, quotes and brackets on this line and the lines before it"
            };
            RawError::new(mark, None, format!("YAML syntax error: {}", e.info())).hint(hint)
        })?;
        let mark = mark_of(&span);
        let completed = match event {
            Event::StreamStart | Event::StreamEnd | Event::DocumentEnd | Event::Nothing => None,
            Event::DocumentStart(_) => {
                documents += 1;
                if documents > 1 {
                    return Err(RawError::new(mark, None, "this file holds more than one YAML document; a study spec is exactly one")
                        .hint("remove the `---` line and everything after it, or put each study in its own file"));
                }
                None
            }
            Event::Scalar(value, style, anchor, tag) => {
                if let Some(tag) = tag {
                    return Err(tag_error(
                        mark,
                        next_path(&stack),
                        &tag_text(&tag.handle, &tag.suffix),
                    ));
                }
                let style = match style {
                    ScalarStyle::Plain => Style::Plain,
                    ScalarStyle::SingleQuoted | ScalarStyle::DoubleQuoted => Style::Quoted,
                    ScalarStyle::Literal | ScalarStyle::Folded => Style::Block,
                };
                let node = Node {
                    value: Value::Scalar {
                        text: value.into_owned(),
                        style,
                    },
                    mark,
                };
                nodes += 1;
                if anchor > 0 {
                    anchors.insert(anchor, node.clone());
                }
                Some(node)
            }
            Event::SequenceStart(anchor, ref tag) | Event::MappingStart(anchor, ref tag) => {
                if let Some(tag) = tag {
                    return Err(tag_error(
                        mark,
                        next_path(&stack),
                        &tag_text(&tag.handle, &tag.suffix),
                    ));
                }
                if stack.len() >= MAX_DEPTH {
                    return Err(RawError::new(
                        mark,
                        Some(next_path(&stack)),
                        format!("nesting deeper than {MAX_DEPTH} levels"),
                    ));
                }
                let is_seq = matches!(event, Event::SequenceStart(..));
                let path = next_path(&stack);
                stack.push(if is_seq {
                    Frame::Seq {
                        mark,
                        anchor,
                        items: Vec::new(),
                        path,
                    }
                } else {
                    Frame::Map {
                        mark,
                        anchor,
                        items: Vec::new(),
                        path,
                    }
                });
                None
            }
            Event::SequenceEnd | Event::MappingEnd => {
                let (node, anchor) = match stack.pop() {
                    Some(Frame::Seq {
                        mark,
                        anchor,
                        items,
                        ..
                    }) => (
                        Node {
                            value: Value::Seq(items),
                            mark,
                        },
                        anchor,
                    ),
                    Some(Frame::Map {
                        mark,
                        anchor,
                        items,
                        ..
                    }) => {
                        let mut entries = Vec::with_capacity(items.len() / 2);
                        let mut it = items.into_iter();
                        while let (Some(k), Some(v)) = (it.next(), it.next()) {
                            entries.push((k, v));
                        }
                        (
                            Node {
                                value: Value::Map(entries),
                                mark,
                            },
                            anchor,
                        )
                    }
                    None => {
                        return Err(RawError::new(
                            mark,
                            None,
                            "YAML syntax error: unbalanced end of a collection",
                        ));
                    }
                };
                nodes += 1;
                if anchor > 0 {
                    anchors.insert(anchor, node.clone());
                }
                Some(node)
            }
            Event::Alias(id) => {
                let Some(target) = anchors.get(&id) else {
                    return Err(RawError::new(
                        mark,
                        None,
                        "YAML alias refers to an anchor that is not defined before it",
                    ));
                };
                nodes += count_nodes(target);
                let mut node = target.clone();
                // Point messages about the value at the place it is used.
                node.mark = mark;
                Some(node)
            }
        };
        if nodes > MAX_NODES {
            return Err(RawError::new(
                mark,
                None,
                format!(
                    "the document is too large: more than {MAX_NODES} values once aliases are expanded"
                ),
            ));
        }
        if let Some(node) = completed {
            match stack.last_mut() {
                Some(Frame::Seq { items, .. } | Frame::Map { items, .. }) => items.push(node),
                None => root = Some(node),
            }
        }
    }

    let start = Mark { line: 1, col: 1 };
    let root = match root {
        None => return Err(empty_error(start)),
        Some(node) if node.is_null() => return Err(empty_error(start)),
        Some(node) => node,
    };
    if !matches!(root.value, Value::Map(_)) {
        return Err(RawError::new(root.mark, None, format!("the top level of a study spec must be a mapping of keys, found {}", root.describe()))
            .hint("a study spec starts with `surety: 1` followed by `study:`, `claim:`, `outcome:` and `data:`"));
    }
    check_keys(&root, "")?;
    Ok(root)
}

/// A spec is read as YAML 1.2 whatever it declares; a `%YAML 1.1` directive asks other readers
/// for the YAML 1.1 meanings (`no` as false, `0123` as octal), so the file would mean different
/// things to different tools. Directives start in the first column, where no content line of a
/// block scalar can.
fn check_version_directive(text: &str) -> Result<(), RawError> {
    for (i, line) in text.lines().enumerate() {
        if line == "---" || line.starts_with("--- ") {
            break;
        }
        if let Some(rest) = line.strip_prefix("%YAML") {
            let version = rest.split('#').next().unwrap_or("").trim();
            if version != "1.2" {
                return Err(RawError::new(Mark { line: i + 1, col: 1 }, None, format!("this directive asks for YAML {version}, but a study spec is read as YAML 1.2"))
                    .hint("remove the %YAML line"));
            }
        }
    }
    Ok(())
}

fn empty_error(mark: Mark) -> RawError {
    RawError::new(mark, None, "the file is empty: it holds no YAML document")
        .hint("`surety init FILE` writes an annotated starter spec")
}

fn tag_error(mark: Mark, path: String, tag: &str) -> RawError {
    RawError::new(
        mark,
        Some(path),
        format!("YAML tags such as `{tag}` are not used in a study spec"),
    )
    .hint("remove the tag; quote the value if it is meant as text")
}

/// A tag as its author wrote it: the parser expands `!!int` to `tag:yaml.org,2002:int`.
fn tag_text(handle: &str, suffix: &str) -> String {
    if handle == "tag:yaml.org,2002:" {
        format!("!!{suffix}")
    } else {
        format!("{handle}{suffix}")
    }
}

fn count_nodes(node: &Node) -> usize {
    match &node.value {
        Value::Scalar { .. } => 1,
        Value::Seq(items) => 1 + items.iter().map(count_nodes).sum::<usize>(),
        Value::Map(entries) => {
            1 + entries
                .iter()
                .map(|(k, v)| count_nodes(k) + count_nodes(v))
                .sum::<usize>()
        }
    }
}

/// Dotted path of a mapping entry: `claim` + `limit` → `claim.limit`.
pub(crate) fn join_key(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_owned()
    } else {
        format!("{parent}.{key}")
    }
}

/// Path of a list element: `data.arms` + 1 → `data.arms[1]`.
pub(crate) fn join_index(parent: &str, index: usize) -> String {
    format!("{parent}[{index}]")
}

/// Every key is text and appears once per mapping. Runs before any value is read, so a
/// duplicate is reported even where the second value would otherwise be used silently.
fn check_keys(node: &Node, path: &str) -> Result<(), RawError> {
    match &node.value {
        Value::Scalar { .. } => Ok(()),
        Value::Seq(items) => {
            for (i, item) in items.iter().enumerate() {
                check_keys(item, &join_index(path, i))?;
            }
            Ok(())
        }
        Value::Map(entries) => {
            let mut seen: BTreeMap<&str, Mark> = BTreeMap::new();
            for (key, value) in entries {
                let text = match &key.value {
                    Value::Scalar { text, .. } if !text.is_empty() => text.as_str(),
                    _ => {
                        return Err(RawError::new(
                            key.mark,
                            Some(path.to_owned()),
                            format!("a key must be a plain word, found {}", key.describe()),
                        ));
                    }
                };
                let key_path = join_key(path, text);
                if let Some(first) = seen.get(text) {
                    return Err(RawError::new(
                        key.mark,
                        Some(key_path),
                        format!(
                            "duplicate key `{text}`: it is already given on line {}",
                            first.line
                        ),
                    )
                    .hint("YAML keeps only one of the two values; remove one of them"));
                }
                seen.insert(text, key.mark);
                check_keys(value, &key_path)?;
            }
            Ok(())
        }
    }
}
