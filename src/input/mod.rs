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
use saphyr_parser::{Event, Parser, ScalarStyle, Span, Tag};
use std::collections::HashMap;

pub mod csv;

pub(crate) use crate::limits::{
    MAX_ALIASES, MAX_ALIAS_NODES, MAX_DEPTH, MAX_LIST_ENTRIES, MAX_NODES,
};

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
    pub(crate) fn scalar(&self) -> Option<&str> {
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

/// A collection being read: its items so far, where it starts, its anchor, and how
/// many items past [`MAX_LIST_ENTRIES`] it held (counted, not kept).
enum Frame {
    Sequence(Vec<Node>, Position, usize, usize),
    Mapping(Vec<(Node, Node)>, Option<Node>, Position, usize, usize),
}

impl Frame {
    fn position(&self) -> Position {
        match self {
            Frame::Sequence(_, p, ..) | Frame::Mapping(_, _, p, ..) => *p,
        }
    }
}

/// The field path of the collection on top of `stack` (the one being read), in the
/// validator's form: `cash_flows.amounts`, `memo.risks[3]`.
fn stack_path(stack: &[Frame]) -> String {
    let mut path = String::new();
    for frame in &stack[..stack.len().saturating_sub(1)] {
        match frame {
            Frame::Mapping(_, key, ..) => {
                let name = key.as_ref().and_then(Node::scalar).unwrap_or("?");
                if !path.is_empty() {
                    path.push('.');
                }
                path.push_str(name);
            }
            Frame::Sequence(items, _, _, skipped) => {
                path.push_str(&format!("[{}]", items.len() + skipped));
            }
        }
    }
    path
}

/// A list or mapping of more than [`MAX_LIST_ENTRIES`] items, worded as the validator words
/// a list of too many flows when it is one.
fn too_many_items(path: &str, count: usize, at: Position, mapping: bool) -> Diagnostic {
    use crate::diag::grouped;
    let flows = !mapping && (path.ends_with("amounts") || path.ends_with("dated"));
    let shown = if path.is_empty() {
        "the file".to_string()
    } else {
        format!("`{path}`")
    };
    let (code, what, hint) = if flows {
        (
            "too-many-flows",
            "flows",
            "aggregate the flows to a coarser period",
        )
    } else {
        (
            "too-many-items",
            if mapping { "entries" } else { "items" },
            "no list or mapping of a deal file needs that many; check that this is the file meant",
        )
    };
    let d = Diagnostic::error(
        code,
        format!(
            "{shown} holds {} {what}; at most {} are accepted",
            grouped(count as u64),
            grouped(MAX_LIST_ENTRIES as u64)
        ),
    )
    .at(at.line, at.column)
    .with_hint(hint);
    if path.is_empty() {
        d
    } else {
        d.at_field(path)
    }
}

/// A tag as the file writes it: `!!binary` for the YAML core schema's tags, `!name`
/// for local ones, the full name otherwise.
fn tag_words(tag: &Tag) -> String {
    match tag.handle.as_str() {
        "tag:yaml.org,2002:" => format!("!!{}", tag.suffix),
        "!" | "" => format!("!{}", tag.suffix),
        "!!" => format!("!!{}", tag.suffix),
        handle => format!("{handle}{}", tag.suffix),
    }
}

/// Refuses a tag (`!!binary`, `!custom`): candor reads every value from its text, so a
/// tag would be ignored silently, and `!!binary aGVsbG8=` would become the text
/// `aGVsbG8=`.
fn tag_diagnostic(tag: &Tag, at: Position, text: &str) -> Diagnostic {
    // The value starts after its tag: point at the tag itself, when it is on the line.
    let written = tag_words(tag);
    let at = text
        .lines()
        .nth(at.line.saturating_sub(1))
        .and_then(|line| {
            let before: String = line.chars().take(at.column.saturating_sub(1)).collect();
            before
                .rfind(&written)
                .map(|byte| before[..byte].chars().count() + 1)
        })
        .map_or(at, |column| Position {
            line: at.line,
            column,
        });
    Diagnostic::error(
        "yaml-tag",
        format!(
            "the file gives a value the YAML tag `{}`; candor does not apply tags",
            tag_words(tag)
        ),
    )
    .at(at.line, at.column)
    .with_hint(
        "delete the tag and write the value itself (amounts as plain decimals, text as text)",
    )
}

/// The short name of a control character, for messages.
fn control_name(c: char) -> &'static str {
    match c {
        '\0' => " (NUL)",
        '\u{7}' => " (BEL)",
        '\u{8}' => " (backspace)",
        '\t' => " (tab)",
        '\n' => " (line feed)",
        '\u{b}' => " (vertical tab)",
        '\u{c}' => " (form feed)",
        '\r' => " (carriage return)",
        '\u{1b}' => " (ESC)",
        '\u{7f}' => " (DEL)",
        '\u{85}' => " (next line)",
        '\u{9b}' => " (CSI)",
        _ => "",
    }
}

/// The first control character (Unicode category Cc) of a value once YAML has read
/// its escapes, other than a line feed or a tab (whose places the validator judges).
/// Escapes in double quotes (`"\x1b"`, `"\r"`, `"\N"`) get past the check of the
/// raw bytes in [`first_control`], and would reach the terminal and the memo.
pub(crate) fn value_control(text: &str) -> Option<char> {
    if !may_hold_control(text, true) {
        return None;
    }
    text.chars()
        .find(|c| c.is_control() && *c != '\n' && *c != '\t')
}

/// False when `text` certainly holds no control character other than tab and line
/// feed (in a whole file, where `value` is false, also carriage return and
/// next-line), nor U+FFFE or U+FFFF: a check of the UTF-8 bytes, for the common case.
/// True means "look closer".
fn may_hold_control(text: &str, value: bool) -> bool {
    let b = text.as_bytes();
    b.iter().enumerate().any(|(i, &x)| match x {
        b'\t' | b'\n' => false,
        b'\r' => value,
        0..=0x1f | 0x7f => true,
        // U+0080 to U+009F are C2 80 to C2 9F; U+0085 (next-line) is printable in a
        // file (YAML 1.2, section 5.1) but not in a value.
        0xc2 => b
            .get(i + 1)
            .is_some_and(|&y| (0x80..=0x9f).contains(&y) && (value || y != 0x85)),
        // U+FFFE and U+FFFF are EF BF BE and EF BF BF.
        0xef => b.get(i + 1) == Some(&0xbf) && matches!(b.get(i + 2), Some(0xbe | 0xbf)),
        _ => false,
    })
}

fn value_control_diagnostic(c: char, at: Position) -> Diagnostic {
    Diagnostic::error(
        "control-character",
        format!(
            "a value holds the control character U+{:04X}{} once its escapes are read",
            u32::from(c),
            control_name(c)
        ),
    )
    .at(at.line, at.column)
    .with_hint("delete the escape (such as `\\x1b`, `\\r` or `\\e`): a deal's values hold text, numbers and dates, and a line break belongs only in a block of text such as `memo.summary`")
}

/// Whether the innermost collection open at a syntax error is a flow collection
/// (`[` or `{`) that the error leaves unclosed: its opening bracket, for the message.
fn open_flow(
    text: &str,
    stack: &[Frame],
    error_line: usize,
    info: &str,
) -> Option<(Position, char)> {
    let frame = stack.last()?;
    let at = frame.position();
    let line = text.lines().nth(at.line.checked_sub(1)?)?;
    let bracket = line.chars().nth(at.column.checked_sub(1)?)?;
    if bracket != '[' && bracket != '{' {
        return None;
    }
    // The parser stops where it expected the closing bracket: at the end of the file,
    // or on a later line that cannot belong to the list (`hurdle_rate: 9%` read as
    // part of `[unclosed`). An error on the bracket's own line is another mistake.
    let expected_close = info.contains("expected ','");
    (error_line > at.line || expected_close).then_some((at, bracket))
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
    pub(crate) fn hint(&self) -> String {
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
pub(crate) fn first_control(text: &str) -> Option<Diagnostic> {
    let text = text.strip_prefix(BOM).unwrap_or(text);
    // Most files hold none: a pass over the bytes says so, and only a file that does
    // is read again character by character for the place.
    if !may_hold_control(text, false) {
        return None;
    }
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
    let mut nodes = 0usize;
    let mut root: Option<Node> = None;
    let mut documents = 0usize;
    // Values that hold control characters once unescaped, and tags: every one reported.
    let mut problems: Vec<Diagnostic> = Vec::new();

    for item in Parser::new_from_str(text) {
        let (event, span) = match item {
            Ok(pair) => pair,
            Err(e) => {
                let m = e.marker();
                if let Some((at, bracket)) = open_flow(text, &stack, m.line(), e.info()) {
                    let (what, close) = if bracket == '[' {
                        ("list", ']')
                    } else {
                        ("mapping", '}')
                    };
                    problems.push(
                        Diagnostic::error(
                            "yaml-syntax",
                            format!(
                                "the file is not valid YAML: the {what} that opens with `{bracket}` here is never closed"
                            ),
                        )
                        .at(at.line, at.column)
                        .with_hint(format!(
                            "close it with `{close}`; the reader stopped at line {}, column {}: {}",
                            m.line(),
                            m.col() + 1,
                            e.info()
                        )),
                    );
                    return Err(problems);
                }
                problems.push(
                    Diagnostic::error(
                        "yaml-syntax",
                        format!("the file is not valid YAML: {}", e.info()),
                    )
                    .at(m.line(), m.col() + 1)
                    .with_hint(syntax_hint(text, m.line(), e.info())),
                );
                return Err(problems);
            }
        };
        let pos = position(&span);
        if matches!(
            event,
            Event::Scalar(..) | Event::SequenceStart(..) | Event::MappingStart(..)
        ) {
            nodes += 1;
            if nodes > MAX_NODES {
                problems.push(
                    Diagnostic::error(
                        "too-many-values",
                        format!(
                            "the file holds more than {} values (numbers, words, lists and mappings)",
                            crate::diag::grouped(MAX_NODES as u64)
                        ),
                    )
                    .at(pos.line, pos.column)
                    .with_hint("a deal of 100,000 dated flows holds about 500,000; check that this is the file meant"),
                );
                return Err(problems);
            }
        }
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
            Event::Scalar(value, style, anchor, tag) => {
                if problems.len() < crate::limits::MAX_DIAGNOSTICS {
                    if let Some(tag) = tag {
                        problems.push(tag_diagnostic(&tag, pos, text));
                    }
                    if let Some(c) = value_control(&value) {
                        problems.push(value_control_diagnostic(c, pos));
                    }
                }
                // The scanner's buffer may be far larger than the text: a tree of a
                // million values keeps a copy of just the text (shrinking the buffer
                // in place would leave a million small holes in the heap).
                let text = String::from(value.as_ref());
                Some((
                    Node {
                        value: Value::Scalar {
                            text,
                            quoted: style != ScalarStyle::Plain,
                        },
                        position: pos,
                    },
                    anchor,
                ))
            }
            Event::SequenceStart(anchor, ref tag) | Event::MappingStart(anchor, ref tag) => {
                if let Some(tag) = tag
                    .as_ref()
                    .filter(|_| problems.len() < crate::limits::MAX_DIAGNOSTICS)
                {
                    problems.push(tag_diagnostic(tag, pos, text));
                }
                if stack.len() >= MAX_DEPTH {
                    return Err(vec![Diagnostic::error(
                        "too-deep",
                        format!("the file nests lists and mappings more than {MAX_DEPTH} deep"),
                    )
                    .at(pos.line, pos.column)]);
                }
                stack.push(if matches!(event, Event::SequenceStart(..)) {
                    Frame::Sequence(Vec::new(), pos, anchor, 0)
                } else {
                    Frame::Mapping(Vec::new(), None, pos, anchor, 0)
                });
                None
            }
            Event::SequenceEnd | Event::MappingEnd
                if matches!(
                    stack.last(),
                    Some(Frame::Sequence(.., 1..) | Frame::Mapping(.., 1..))
                ) =>
            {
                let path = stack_path(&stack);
                let (count, at, mapping) = match stack.last() {
                    Some(Frame::Sequence(items, p, _, skipped)) => {
                        (items.len() + skipped, *p, false)
                    }
                    Some(Frame::Mapping(entries, _, p, _, skipped)) => {
                        (entries.len() + skipped, *p, true)
                    }
                    None => (0, pos, false),
                };
                problems.push(too_many_items(&path, count, at, mapping));
                return Err(problems);
            }
            Event::SequenceEnd => match stack.pop() {
                Some(Frame::Sequence(mut items, p, anchor, _)) => {
                    // Without the slack of growing, as the tree is kept whole.
                    items.shrink_to_fit();
                    Some((
                        Node {
                            value: Value::Sequence(items),
                            position: p,
                        },
                        anchor,
                    ))
                }
                _ => None,
            },
            Event::MappingEnd => match stack.pop() {
                Some(Frame::Mapping(mut entries, _, p, anchor, _)) => {
                    entries.shrink_to_fit();
                    Some((
                        Node {
                            value: Value::Mapping(entries),
                            position: p,
                        },
                        anchor,
                    ))
                }
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
                Some(Frame::Sequence(items, _, _, skipped)) => {
                    if items.len() < MAX_LIST_ENTRIES {
                        items.push(node);
                    } else {
                        *skipped += 1;
                    }
                }
                Some(Frame::Mapping(entries, key, _, _, skipped))
                    if entries.len() >= MAX_LIST_ENTRIES =>
                {
                    if key.take().is_none() {
                        *key = Some(node);
                    } else {
                        *skipped += 1;
                    }
                }
                Some(Frame::Mapping(entries, key, ..)) => match key.take() {
                    Some(k) => entries.push((k, node)),
                    None => *key = Some(node),
                },
                None => root = Some(node),
            }
        }
    }
    if !problems.is_empty() {
        return Err(problems);
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
    fn control_characters_written_as_escapes_are_refused() {
        // YAML 1.2, section 5.7: `\n`, `\r`, `\e`, `\x1b`, `\a` and `\N` are escapes
        // for line feed, carriage return, escape, escape, bell and next line.
        for (text, code) in [
            ("a: \"x\\ry\"\n", 0x0d),
            ("a: \"x\\e[2K\"\n", 0x1b),
            ("a: \"x\\x1b]0;t\\a\"\n", 0x1b),
            ("\"k\\x07\": 1\n", 0x07),
            ("a: \"x\\Ny\"\n", 0x85),
            ("a: \"\\x9b1m\"\n", 0x9b),
        ] {
            let err = parse(text).unwrap_err();
            assert_eq!(err[0].code, "control-character", "{text}");
            assert!(
                err[0].message.contains(&format!("U+{code:04X}")),
                "{text}: {}",
                err[0].message
            );
        }
        // Every such value is reported, each where it starts.
        let err = parse("a: \"\\e\"\nb: \"\\0\"\n").unwrap_err();
        assert_eq!(err.len(), 2);
        assert_eq!(err[1].position, Some(Position { line: 2, column: 4 }));
        // Line feeds and tabs are left to the validator, which knows the field.
        assert!(parse("a: \"x\\ny\\tz\"\nb: |\n  two\n  lines\n").is_ok());
    }

    #[test]
    fn tags_are_refused() {
        for (text, shown) in [
            ("a: !!binary aGVsbG8=\n", "!!binary"),
            ("a: !!str 12\n", "!!str"),
            ("a: !local [1, 2]\n", "!local"),
            ("a: !!map {b: 1}\n", "!!map"),
        ] {
            let err = parse(text).unwrap_err();
            assert_eq!(err[0].code, "yaml-tag", "{text}");
            assert!(
                err[0].message.contains(&format!("`{shown}`")),
                "{}",
                err[0].message
            );
            assert_eq!(err[0].position, Some(Position { line: 1, column: 4 }));
        }
        // Pointing at the tag, not at the value after it.
        let err = parse("a:\n  b: !!binary aGVsbG8=\n").unwrap_err();
        assert_eq!(err[0].position, Some(Position { line: 2, column: 6 }));
    }

    #[test]
    fn an_unclosed_flow_list_is_reported_at_its_bracket() {
        let err = parse("candor: 1\ndeal: [unclosed\n").unwrap_err();
        assert_eq!(err[0].code, "yaml-syntax");
        assert_eq!(err[0].position, Some(Position { line: 2, column: 7 }));
        assert!(
            err[0].message.contains("never closed"),
            "{}",
            err[0].message
        );
        let err = parse("a: 1\nb: { c: [1, 2]\nd: 3\n").unwrap_err();
        assert_eq!(err[0].position, Some(Position { line: 2, column: 4 }));
        // Other syntax errors keep the parser's own place.
        let err = parse("a: \"x\nb: 1\n").unwrap_err();
        assert!(!err[0].message.contains("never closed"));
    }

    #[test]
    fn collections_and_values_are_bounded_while_reading() {
        let long = format!("a:\n  b: [{}]\n", "1, ".repeat(MAX_LIST_ENTRIES + 5) + "1");
        let err = parse(&long).unwrap_err();
        assert_eq!(err[0].code, "too-many-items");
        assert_eq!(
            err[0].message,
            "`a.b` holds 100,006 items; at most 100,000 are accepted"
        );
        assert_eq!(err[0].position, Some(Position { line: 2, column: 6 }));
        let flows = format!(
            "c:\n  - amounts: [{}]\n",
            "1, ".repeat(MAX_LIST_ENTRIES) + "1"
        );
        let err = parse(&flows).unwrap_err();
        assert_eq!(err[0].code, "too-many-flows");
        assert!(err[0]
            .message
            .starts_with("`c[0].amounts` holds 100,001 flows"));
        let keys: String = (0..=MAX_LIST_ENTRIES)
            .map(|i| format!("k{i}: 1\n"))
            .collect();
        assert_eq!(parse(&keys).unwrap_err()[0].code, "too-many-items");
        let lists: String = (0..13)
            .map(|i| format!("l{i}: [{}]\n", "1,".repeat(99_999) + "1"))
            .collect();
        assert_eq!(parse(&lists).unwrap_err()[0].code, "too-many-values");
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
