//! The deal file as written: a YAML tree in which every node keeps its line and
//! column, read from the span-aware event stream of `saphyr-parser`. Scalars keep
//! their original text, so numbers never pass through binary floating point, and
//! every later problem can point at the exact place in the file.
//!
//! The reader also holds the limits that keep hostile input harmless: a bound on
//! aliases and on what they expand to, and on nesting depth; and [`decode`], which
//! turns a file's bytes into text (UTF-8 only, a leading byte-order mark dropped) and
//! says plainly when a file is in another encoding.

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

/// The UTF-8 byte-order mark as a character.
const BOM: char = '\u{feff}';

/// Byte-order marks of encodings other than UTF-8, longest first: UTF-32's
/// little-endian mark begins with UTF-16's (Unicode 15, section 23.8).
const OTHER_MARKS: [(&[u8], &str); 4] = [
    (&[0xFF, 0xFE, 0, 0], "UTF-32LE"),
    (&[0, 0, 0xFE, 0xFF], "UTF-32BE"),
    (&[0xFF, 0xFE], "UTF-16LE"),
    (&[0xFE, 0xFF], "UTF-16BE"),
];

/// Why a file's bytes are not text candor can read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DecodeError {
    /// The file is in another Unicode encoding.
    OtherEncoding {
        /// The encoding's name, as IANA registers it (`UTF-16LE`).
        name: &'static str,
        /// True when a byte-order mark says so; false when zero bytes suggest it.
        marked: bool,
    },
    /// A byte that is not valid UTF-8.
    NotUtf8 {
        /// The first such byte.
        byte: u8,
        /// Where it is, counting characters of the valid text before it.
        position: Position,
    },
}

impl DecodeError {
    /// The problem in words, for the file it concerns (`the file ...`).
    pub fn message(&self) -> String {
        match self {
            DecodeError::OtherEncoding { name, marked: true } => {
                format!("the file is {name} text (its byte-order mark says so); candor reads UTF-8 only")
            }
            DecodeError::OtherEncoding {
                name,
                marked: false,
            } => {
                format!("the file looks like {name} text (zero bytes between the letters); candor reads UTF-8 only")
            }
            DecodeError::NotUtf8 { byte, .. } => {
                format!("the file is not UTF-8 text: the byte 0x{byte:02X} is not valid UTF-8")
            }
        }
    }

    /// How to mend it.
    pub fn hint(&self) -> String {
        let save = "save the file as UTF-8 (most editors offer the encoding when saving)";
        match self {
            DecodeError::NotUtf8 { byte, .. } if *byte >= 0x80 => format!(
                "{save}; a lone byte such as 0x{byte:02X} where an accented letter or a dash belongs means the file was saved as Latin-1 or Windows-1252"
            ),
            _ => save.to_string(),
        }
    }

    /// Where the problem is, when it is at a place rather than the whole file.
    pub fn position(&self) -> Option<Position> {
        match self {
            DecodeError::NotUtf8 { position, .. } => Some(*position),
            DecodeError::OtherEncoding { .. } => None,
        }
    }

    /// The problem as a diagnostic (code `not-utf8`), without a file name.
    pub fn diagnostic(&self) -> Diagnostic {
        let d = Diagnostic::error("not-utf8", self.message()).with_hint(self.hint());
        match self.position() {
            Some(p) => d.at(p.line, p.column),
            None => d,
        }
    }
}

/// The text of a deal or CSV file: its bytes as UTF-8, without a leading byte-order
/// mark (editors on Windows add one; positions then count from the character after
/// it, as the editor shows them). A file in UTF-16 or UTF-32 is named as such; for
/// bytes that are not UTF-8 the error gives the line and column of the first.
pub fn decode(bytes: &[u8]) -> Result<&str, DecodeError> {
    for (mark, name) in OTHER_MARKS {
        if bytes.starts_with(mark) {
            return Err(DecodeError::OtherEncoding { name, marked: true });
        }
    }
    // Without a mark, text in UTF-16 or UTF-32 shows itself by zero bytes beside its
    // first character when that is below U+0100, as `candor`, `date` or `#` are.
    // (In UTF-8 a zero byte is NUL, refused anyway, so only the words can be wrong.)
    let guess = match bytes {
        [a, 0, 0, 0, ..] if *a != 0 => Some("UTF-32LE"),
        [0, 0, 0, b, ..] if *b != 0 => Some("UTF-32BE"),
        [a, 0, ..] if *a != 0 => Some("UTF-16LE"),
        [0, b, ..] if *b != 0 => Some("UTF-16BE"),
        _ => None,
    };
    if let Some(name) = guess {
        return Err(DecodeError::OtherEncoding {
            name,
            marked: false,
        });
    }
    let bytes = bytes.strip_prefix("\u{feff}".as_bytes()).unwrap_or(bytes);
    std::str::from_utf8(bytes).map_err(|e| {
        let good = &bytes[..e.valid_up_to()];
        let line = good.iter().filter(|b| **b == b'\n').count() + 1;
        let line_start = good.iter().rposition(|b| *b == b'\n').map_or(0, |i| i + 1);
        // The prefix is valid UTF-8, so this counts characters, not bytes.
        let column = String::from_utf8_lossy(&good[line_start..]).chars().count() + 1;
        DecodeError::NotUtf8 {
            byte: bytes.get(e.valid_up_to()).copied().unwrap_or_default(),
            position: Position { line, column },
        }
    })
}

/// True for a character that YAML 1.2 (section 5.1, `c-printable`) allows in a file:
/// tab, line feed, carriage return, the printable ASCII range, next-line (U+0085) and
/// everything from U+00A0 on except surrogates, U+FFFE and U+FFFF.
fn printable(c: char) -> bool {
    matches!(c, '\t' | '\n' | '\r' | ' '..='~' | '\u{85}')
        || (c >= '\u{a0}' && c != '\u{fffe}' && c != '\u{ffff}')
}

/// The first character a text file should not hold (a control character such as NUL,
/// which appears when binary data or another encoding is pasted in), with where it is.
/// Positions count characters from 1; a leading byte-order mark is not counted.
pub fn first_control(text: &str) -> Option<Diagnostic> {
    let text = text.strip_prefix(BOM).unwrap_or(text);
    let (mut line, mut column) = (1usize, 1usize);
    for c in text.chars() {
        if !printable(c) {
            let name = match c {
                '\0' => " (NUL)".to_string(),
                '\u{7f}' => " (DEL)".to_string(),
                _ => String::new(),
            };
            return Some(
                Diagnostic::error(
                    "control-character",
                    format!(
                        "the file holds a control character, U+{:04X}{name}",
                        u32::from(c)
                    ),
                )
                .at(line, column)
                .with_hint("delete it: it usually comes from pasting out of another program or from a file in another encoding"),
            );
        }
        if c == '\n' {
            line += 1;
            column = 1;
        } else {
            column += 1;
        }
    }
    None
}

/// Parses the text of a deal file into a positioned tree. On failure returns every
/// problem found (a syntax error stops the reading, so there is usually one).
/// A leading byte-order mark is ignored, and positions count characters after it.
/// Diagnostics carry positions but no file name; the caller adds it.
pub fn parse(text: &str) -> Result<RawDeal, Vec<Diagnostic>> {
    let text = text.strip_prefix(BOM).unwrap_or(text);
    if let Some(d) = first_control(text) {
        return Err(vec![d]);
    }
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
                .with_hint(syntax_hint(text, m.line(), e.info()))]);
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

/// A hint for the commonest cause of a syntax error on a line, given the parser's words.
fn syntax_hint(text: &str, line: usize, info: &str) -> String {
    let around = text
        .lines()
        .skip(line.saturating_sub(2))
        .take(2)
        .any(|l| l.trim_end().starts_with(|c: char| c.is_whitespace()) && l.contains('\t'));
    if around {
        "YAML indents with spaces only; replace the tab characters with spaces".to_string()
    } else if info.contains("unknown anchor") {
        "an alias `*name` repeats a value marked `&name` earlier in the file; mark it, or write the value out".to_string()
    } else if info.contains("quoted scalar") {
        "check that every quoted text has its closing quote, and that a line break inside one is indented".to_string()
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
    fn byte_order_mark_is_dropped_and_positions_follow_the_editor() {
        let raw = parse("\u{feff}candor: 1\nb: x\n").unwrap();
        let Some(Node {
            value: Value::Mapping(entries),
            ..
        }) = raw.root
        else {
            panic!("not a mapping")
        };
        assert_eq!(entries[0].0.scalar(), Some("candor"));
        assert_eq!(entries[0].1.position, Position { line: 1, column: 9 });
        assert_eq!(decode(b"\xEF\xBB\xBFa: 1\n"), Ok("a: 1\n"));
    }

    #[test]
    fn columns_count_characters_not_bytes() {
        // Two-, three- and four-byte characters before the value.
        let raw = parse("a: { n: \"é–😀\", c: x }\n").unwrap();
        let Some(Node {
            value: Value::Mapping(entries),
            ..
        }) = raw.root
        else {
            panic!("not a mapping")
        };
        let Value::Mapping(inner) = &entries[0].1.value else {
            panic!("not a mapping")
        };
        assert_eq!(
            inner[1].1.position,
            Position {
                line: 1,
                column: 19
            }
        );
        let err = parse("m: { s: \"ééé\" \"x\" }\n").unwrap_err();
        assert_eq!(
            err[0].position,
            Some(Position {
                line: 1,
                column: 15
            })
        );
        let bad = decode(b"a: \xC3\xA9\xC3\xA9\xE9\n").unwrap_err();
        assert_eq!(bad.position(), Some(Position { line: 1, column: 6 }));
    }

    #[test]
    fn other_encodings_are_named() {
        let name = |b: &[u8]| match decode(b) {
            Err(DecodeError::OtherEncoding { name, marked }) => (name, marked),
            other => panic!("{other:?}"),
        };
        assert_eq!(name(b"\xFF\xFEc\x00"), ("UTF-16LE", true));
        assert_eq!(name(b"\xFE\xFF\x00c"), ("UTF-16BE", true));
        assert_eq!(name(b"\xFF\xFE\x00\x00c\x00\x00\x00"), ("UTF-32LE", true));
        assert_eq!(name(b"\x00\x00\xFE\xFF\x00\x00\x00c"), ("UTF-32BE", true));
        assert_eq!(name(b"c\x00a\x00"), ("UTF-16LE", false));
        assert_eq!(name(b"\x00c\x00a"), ("UTF-16BE", false));
        assert_eq!(name(b"c\x00\x00\x00"), ("UTF-32LE", false));
        let d = decode(b"\xFF\xFEc\x00").unwrap_err().diagnostic();
        assert_eq!(d.code, "not-utf8");
        assert!(d.message.contains("UTF-16LE") && d.position.is_none());
    }

    #[test]
    fn control_characters_are_refused_with_their_place() {
        let err = parse("a: 1\nb: x\u{1}y\n").unwrap_err();
        assert_eq!(err[0].code, "control-character");
        assert_eq!(err[0].position, Some(Position { line: 2, column: 5 }));
        assert!(parse("a: x\u{0}\n").is_err());
        assert!(parse("a: x\u{7f}\n").is_err());
        // Tabs, carriage returns, next-line and everything printable are fine.
        assert!(first_control("a:\t\"x\"\r\nb: \u{85}é\u{2028}\n").is_none());
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
