//! The deal file as written: a YAML tree in which every node keeps its line and
//! column, read from the span-aware event stream of `saphyr-parser`. Scalars keep
//! their original text, so numbers never pass through binary floating point, and
//! every later problem can point at the exact place in the file.
//!
//! The reader also holds the limits that keep hostile input harmless: a bound on
//! aliases and on what they expand to, and on nesting depth.

use crate::diag::{Diagnostic, Position};
use saphyr_parser::{Event, Parser, ScalarStyle, Span};
use std::collections::HashMap;

pub mod csv;

/// Most alias uses (`*name`) accepted in one file.
pub const MAX_ALIASES: usize = 100;
/// Most nodes that aliases may add to the tree in all, so that a chain of aliases to
/// aliases cannot grow exponentially.
pub const MAX_ALIAS_NODES: usize = 10_000;
/// Deepest nesting of sequences and mappings accepted.
pub const MAX_DEPTH: usize = 64;

/// One node of the YAML tree with where it starts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Node {
    /// What the node holds.
    pub value: Value,
    /// Where the node starts (for a mapping entry's value: where the value starts).
    pub position: Position,
}

/// The content of a node.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Value {
    /// A scalar, with its text exactly as written (after YAML unquoting).
    Scalar {
        /// The text.
        text: String,
        /// True when the scalar was quoted or a block scalar, so `~` stays text.
        quoted: bool,
    },
    /// A sequence.
    Sequence(Vec<Node>),
    /// A mapping, in file order; keys are nodes too, so they keep their positions.
    Mapping(Vec<(Node, Node)>),
}

impl Node {
    /// True for an empty plain scalar, `~` or `null`: a key given without a value.
    pub fn is_null(&self) -> bool {
        match &self.value {
            Value::Scalar {
                text,
                quoted: false,
            } => {
                matches!(text.as_str(), "" | "~" | "null" | "Null" | "NULL")
            }
            _ => false,
        }
    }

    /// The scalar's text, if the node is a scalar.
    pub fn scalar(&self) -> Option<&str> {
        match &self.value {
            Value::Scalar { text, .. } => Some(text),
            _ => None,
        }
    }

    /// A word for the kind of node, for messages.
    pub fn kind(&self) -> &'static str {
        match &self.value {
            _ if self.is_null() => "nothing",
            Value::Scalar { .. } => "a single value",
            Value::Sequence(_) => "a list",
            Value::Mapping(_) => "a mapping",
        }
    }

    /// How many nodes this subtree holds, counting itself.
    fn size(&self) -> usize {
        1 + match &self.value {
            Value::Scalar { .. } => 0,
            Value::Sequence(items) => items.iter().map(Node::size).sum(),
            Value::Mapping(entries) => entries.iter().map(|(k, v)| k.size() + v.size()).sum(),
        }
    }
}

/// The deal file as written: the root node of its YAML document.
#[derive(Debug, Clone)]
pub struct RawDeal {
    /// The root of the document; `None` for an empty file.
    pub root: Option<Node>,
}

fn position(span: &Span) -> Position {
    Position {
        line: span.start.line(),
        column: span.start.col() + 1,
    }
}

enum Frame {
    Sequence(Vec<Node>, Position, usize),
    Mapping(Vec<(Node, Node)>, Option<Node>, Position, usize),
}

/// Parses the text of a deal file into a positioned tree. On failure returns every
/// problem found (a syntax error stops the reading, so there is usually one).
/// Diagnostics carry positions but no file name; the caller adds it.
pub fn parse(text: &str) -> Result<RawDeal, Vec<Diagnostic>> {
    let mut stack: Vec<Frame> = Vec::new();
    let mut anchors: HashMap<usize, Node> = HashMap::new();
    let mut aliases = 0usize;
    let mut alias_nodes = 0usize;
    let mut root: Option<Node> = None;
    let mut documents = 0usize;

    for item in Parser::new_from_str(text) {
        let (event, span) = match item {
            Ok(pair) => pair,
            Err(e) => {
                let m = e.marker();
                return Err(vec![Diagnostic::error(
                    "yaml-syntax",
                    format!("the file is not valid YAML: {}", e.info()),
                )
                .at(m.line(), m.col() + 1)
                .with_hint(syntax_hint(text, m.line()))]);
            }
        };
        let pos = position(&span);
        let finished: Option<(Node, usize)> = match event {
            Event::DocumentStart(_) => {
                documents += 1;
                if documents > 1 {
                    return Err(vec![Diagnostic::error(
                        "yaml-syntax",
                        "the file holds more than one YAML document",
                    )
                    .at(pos.line, pos.column)
                    .with_hint("a deal file is one document: remove the second `---`")]);
                }
                None
            }
            Event::Scalar(value, style, anchor, _) => Some((
                Node {
                    value: Value::Scalar {
                        text: value.into_owned(),
                        quoted: style != ScalarStyle::Plain,
                    },
                    position: pos,
                },
                anchor,
            )),
            Event::SequenceStart(anchor, _) | Event::MappingStart(anchor, _) => {
                if stack.len() >= MAX_DEPTH {
                    return Err(vec![Diagnostic::error(
                        "too-deep",
                        format!("the file nests lists and mappings more than {MAX_DEPTH} deep"),
                    )
                    .at(pos.line, pos.column)]);
                }
                stack.push(if matches!(event, Event::SequenceStart(..)) {
                    Frame::Sequence(Vec::new(), pos, anchor)
                } else {
                    Frame::Mapping(Vec::new(), None, pos, anchor)
                });
                None
            }
            Event::SequenceEnd => match stack.pop() {
                Some(Frame::Sequence(items, p, anchor)) => Some((
                    Node {
                        value: Value::Sequence(items),
                        position: p,
                    },
                    anchor,
                )),
                _ => None,
            },
            Event::MappingEnd => match stack.pop() {
                Some(Frame::Mapping(entries, _, p, anchor)) => Some((
                    Node {
                        value: Value::Mapping(entries),
                        position: p,
                    },
                    anchor,
                )),
                _ => None,
            },
            Event::Alias(id) => {
                aliases += 1;
                let node = anchors.get(&id).cloned();
                let size = node.as_ref().map_or(1, Node::size);
                alias_nodes = alias_nodes.saturating_add(size);
                if aliases > MAX_ALIASES || alias_nodes > MAX_ALIAS_NODES {
                    return Err(vec![Diagnostic::error(
                        "alias-limit",
                        "the file uses YAML aliases (`*name`) beyond what a deal file needs",
                    )
                    .at(pos.line, pos.column)
                    .with_hint(format!(
                        "at most {MAX_ALIASES} aliases expanding to {MAX_ALIAS_NODES} values in all; write the values out"
                    ))]);
                }
                match node {
                    Some(mut n) => {
                        n.position = pos;
                        Some((n, 0))
                    }
                    None => {
                        return Err(vec![Diagnostic::error(
                            "yaml-syntax",
                            "an alias refers to an anchor that is not defined before it",
                        )
                        .at(pos.line, pos.column)]);
                    }
                }
            }
            Event::StreamStart | Event::StreamEnd | Event::DocumentEnd | Event::Nothing => None,
        };
        if let Some((node, anchor)) = finished {
            if anchor != 0 {
                anchors.insert(anchor, node.clone());
            }
            match stack.last_mut() {
                Some(Frame::Sequence(items, ..)) => items.push(node),
                Some(Frame::Mapping(entries, key, ..)) => match key.take() {
                    Some(k) => entries.push((k, node)),
                    None => *key = Some(node),
                },
                None => root = Some(node),
            }
        }
    }
    Ok(RawDeal { root })
}

/// A hint for the commonest cause of a syntax error on a line.
fn syntax_hint(text: &str, line: usize) -> String {
    let around = text
        .lines()
        .skip(line.saturating_sub(2))
        .take(2)
        .any(|l| l.trim_end().starts_with(|c: char| c.is_whitespace()) && l.contains('\t'));
    if around {
        "YAML indents with spaces only; replace the tab characters with spaces".to_string()
    } else {
        "check the indentation and that every `key: value` pair has a colon followed by a space"
            .to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn positions_are_one_based() {
        let raw = parse("a: 1\nbb:\n  - x\n").unwrap();
        let Some(Node {
            value: Value::Mapping(entries),
            ..
        }) = raw.root
        else {
            panic!("not a mapping")
        };
        assert_eq!(entries[0].0.position, Position { line: 1, column: 1 });
        assert_eq!(entries[0].1.position, Position { line: 1, column: 4 });
        let Value::Sequence(items) = &entries[1].1.value else {
            panic!("not a list")
        };
        assert_eq!(items[0].position, Position { line: 3, column: 5 });
    }

    #[test]
    fn scalars_keep_their_text() {
        let raw = parse("a: 0.10\nb: '~'\nc:\n").unwrap();
        let Some(Node {
            value: Value::Mapping(entries),
            ..
        }) = raw.root
        else {
            panic!("not a mapping")
        };
        assert_eq!(entries[0].1.scalar(), Some("0.10"));
        assert!(!entries[1].1.is_null());
        assert!(entries[2].1.is_null());
    }

    #[test]
    fn alias_bomb_is_refused() {
        let mut text = String::from("a0: &a0 [x, x, x, x, x, x, x, x, x, x]\n");
        for i in 1..9 {
            let p = i - 1;
            text.push_str(&format!(
                "a{i}: &a{i} [*a{p}, *a{p}, *a{p}, *a{p}, *a{p}, *a{p}, *a{p}, *a{p}, *a{p}]\n"
            ));
        }
        let err = parse(&text).unwrap_err();
        assert_eq!(err[0].code, "alias-limit");
    }

    #[test]
    fn syntax_errors_and_depth() {
        assert_eq!(parse("a: [1, 2\n").unwrap_err()[0].code, "yaml-syntax");
        let deep = "[".repeat(200) + &"]".repeat(200);
        assert_eq!(parse(&deep).unwrap_err()[0].code, "too-deep");
        assert_eq!(
            parse("a: 1\n---\nb: 2\n").unwrap_err()[0].code,
            "yaml-syntax"
        );
    }
}
