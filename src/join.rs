//! Joining PDFs typeset one part at a time into one PDF/A-3b file, written as it goes.
//!
//! A pack of many memos is typeset memo by memo, so that memory follows one memo and not
//! the whole pack (`pack`). Each part is a PDF/A-3b file from the same typesetter with
//! the same options; [`Joiner`] copies the objects each part's pages, outline entries and
//! attachments reach, renumbered, straight to its output, and writes at the end what
//! the parts share: one page tree, one outline, one list of attachments (the
//! `EmbeddedFiles` name tree and the catalog's `AF` array, each file specification
//! keeping its `AFRelationship`), and the XMP metadata, output intent, document
//! information and file identifier of the front part (the pack's cover), whose title
//! and date are the pack's. Only the front part's metadata and output intent are
//! copied, so the file holds one of each, as PDF/A requires.
//!
//! A part may carry pages that are not kept: the front part typesets one blank page
//! for each part after it, so that its links to those parts come out as links to page
//! objects; here each such page object is replaced by the first page of its part. A
//! memo ends with one blank page that only carries the pack's page count (see `pack`);
//! it is dropped.
//!
//! Parts are typeset without a structure tree (untagged, as PDF/A-3b allows), since the
//! tree of each part would have to be merged as well.

use crate::diag::Diagnostic;
use lopdf::{Dictionary, Document, Object, ObjectId, StringFormat, Writer};
use std::collections::{HashMap, HashSet};
use std::io::Write;

/// Keys a page inherits from the nodes above it in its page tree (ISO 32000-1, 7.7.3.4).
const INHERITED: [&[u8]; 4] = [b"Resources", b"MediaBox", b"CropBox", b"Rotate"];

/// Catalog entries rebuilt for the joined file, not copied from the front part.
const REBUILT: [&[u8]; 9] = [
    b"Type",
    b"Pages",
    b"Outlines",
    b"Names",
    b"AF",
    b"StructTreeRoot",
    b"MarkInfo",
    b"PageLabels",
    b"Dests",
];

fn failed(why: impl std::fmt::Display) -> Diagnostic {
    Diagnostic::error(
        "typeset",
        format!("cannot join the typeset parts into one PDF: {why}"),
    )
}

fn cannot_write(e: std::io::Error) -> Diagnostic {
    Diagnostic::error("write", format!("cannot write the joined PDF: {e}"))
}

/// What one part gave, besides the objects already written.
#[derive(Default)]
struct Copied {
    /// The new numbers of the kept pages, in order.
    pages: Vec<u32>,
    /// The part's top-level outline entries: new number and dictionary (links between
    /// entries and to the outline root are set when the outline is written).
    outline: Vec<(u32, Dictionary)>,
    /// Attachments: name and file specification.
    attachments: Vec<(Vec<u8>, Object)>,
    /// The catalog's `AF` entries.
    af: Vec<Object>,
    /// The catalog, with references renumbered (front part only).
    catalog: Dictionary,
    /// The document information dictionary's new number (front part only).
    info: Option<u32>,
    /// The file identifier (front part only).
    id: Option<Object>,
}

/// Writes a joined PDF to `out` part by part; see the module comment.
pub(crate) struct Joiner<W: Write> {
    out: W,
    written: u64,
    /// Byte offset of each object by its new number (index 0 is the free head).
    offsets: Vec<u64>,
    header: Option<Vec<u8>>,
    /// Where each part added starts among the pages added.
    starts: Vec<usize>,
    pages_root: u32,
    outline_root: u32,
    body: Copied,
}

impl<W: Write> Joiner<W> {
    /// A joiner writing to `out`.
    pub(crate) fn new(out: W) -> Self {
        Joiner {
            out,
            written: 0,
            offsets: vec![0, 0, 0],
            header: None,
            starts: Vec::new(),
            pages_root: 1,
            outline_root: 2,
            body: Copied::default(),
        }
    }

    fn put(&mut self, bytes: &[u8]) -> Result<(), Diagnostic> {
        self.out.write_all(bytes).map_err(cannot_write)?;
        self.written += bytes.len() as u64;
        Ok(())
    }

    fn allocate(&mut self) -> u32 {
        self.offsets.push(0);
        u32::try_from(self.offsets.len() - 1).unwrap_or(u32::MAX)
    }

    fn write_object(&mut self, id: u32, object: &Object) -> Result<(), Diagnostic> {
        let mut buf = format!("{id} 0 obj").into_bytes();
        buf.push(if Writer::need_separator(object) {
            b' '
        } else {
            b'\n'
        });
        Writer::write_object(&mut buf, object).map_err(failed)?;
        buf.extend_from_slice(b"\nendobj\n");
        if let Some(slot) = self.offsets.get_mut(id as usize) {
            *slot = self.written;
        }
        self.put(&buf)
    }

    fn start(&mut self, pdf: &[u8]) -> Result<(), Diagnostic> {
        if self.header.is_some() {
            return Ok(());
        }
        let line_end = pdf
            .iter()
            .position(|b| *b == b'\n' || *b == b'\r')
            .filter(|&n| pdf.starts_with(b"%PDF-") && n <= 16)
            .ok_or_else(|| failed("a part does not start with a PDF header"))?;
        let mut header = pdf[..line_end].to_vec();
        // A comment of four bytes above 127 marks the file as binary (PDF/A requires it).
        header.extend_from_slice(b"\n%\xE2\xE3\xCF\xD3\n");
        self.put(&header)?;
        self.header = Some(header);
        Ok(())
    }

    /// Adds the first `kept` pages of a part (all when it has fewer), with its outline
    /// and attachments.
    pub(crate) fn add(&mut self, pdf: &[u8], kept: usize) -> Result<(), Diagnostic> {
        self.start(pdf)?;
        let copied = self.copy(pdf, kept, &HashMap::new(), false)?;
        if copied.pages.is_empty() {
            return Err(failed("a part has no pages"));
        }
        self.starts.push(self.body.pages.len());
        self.body.pages.extend(copied.pages);
        self.body.outline.extend(copied.outline);
        self.body.attachments.extend(copied.attachments);
        self.body.af.extend(copied.af);
        Ok(())
    }

    /// Adds the front parts (each `(pdf, kept, parts)`: its first `kept` pages go
    /// before every page added so far, and its pages after those stand, in order, for
    /// the first pages of the parts numbered `parts`, counted from 0 in the order they
    /// were added; the first front part gives the file its metadata), writes what the
    /// parts share and the cross-reference table, and returns the output.
    pub(crate) fn finish(
        mut self,
        fronts: &[(Vec<u8>, usize, std::ops::Range<usize>)],
    ) -> Result<W, Diagnostic> {
        let mut front = Copied::default();
        for (k, (pdf, kept, parts)) in fronts.iter().enumerate() {
            self.start(pdf)?;
            let doc = load(pdf)?;
            let pages: Vec<ObjectId> = doc.get_pages().into_values().collect();
            let starts = self.starts.get(parts.clone()).unwrap_or_default();
            if pages.len() < kept + parts.len() || starts.len() != parts.len() {
                return Err(failed(format!(
                    "a front part has {} pages where {} were expected",
                    pages.len(),
                    kept + parts.len()
                )));
            }
            let stand_ins: HashMap<ObjectId, u32> = pages[*kept..kept + parts.len()]
                .iter()
                .copied()
                .zip(starts.iter().map(|&s| self.body.pages[s]))
                .collect();
            drop(doc);
            let copied = self.copy(pdf, *kept, &stand_ins, k == 0)?;
            front.pages.extend(copied.pages);
            front.outline.extend(copied.outline);
            front.attachments.extend(copied.attachments);
            front.af.extend(copied.af);
            if k == 0 {
                front.catalog = copied.catalog;
                front.info = copied.info;
                front.id = copied.id;
            }
        }

        // The page tree: one node over every page.
        let pages: Vec<u32> = front
            .pages
            .iter()
            .chain(self.body.pages.iter())
            .copied()
            .collect();
        let mut tree = Dictionary::new();
        tree.set("Type", Object::Name(b"Pages".to_vec()));
        tree.set(
            "Kids",
            Object::Array(pages.iter().map(|&p| Object::Reference((p, 0))).collect()),
        );
        tree.set("Count", Object::Integer(pages.len() as i64));
        self.write_object(self.pages_root, &Object::Dictionary(tree))?;

        // The outline: the front part's entries, then each part's, in order.
        let mut entries = front.outline;
        entries.append(&mut self.body.outline);
        let mut visible = 0i64;
        for k in 0..entries.len() {
            let prev = k.checked_sub(1).map(|j| entries[j].0);
            let next = entries.get(k + 1).map(|e| e.0);
            let (id, dict) = &mut entries[k];
            dict.set("Parent", Object::Reference((self.outline_root, 0)));
            dict.remove(b"Prev");
            dict.remove(b"Next");
            if let Some(p) = prev {
                dict.set("Prev", Object::Reference((p, 0)));
            }
            if let Some(n) = next {
                dict.set("Next", Object::Reference((n, 0)));
            }
            visible += 1 + dict
                .get(b"Count")
                .and_then(Object::as_i64)
                .unwrap_or(0)
                .max(0);
            let (id, dict) = (*id, Object::Dictionary(dict.clone()));
            self.write_object(id, &dict)?;
        }
        let mut outline = Dictionary::new();
        outline.set("Type", Object::Name(b"Outlines".to_vec()));
        if let (Some(first), Some(last)) = (entries.first(), entries.last()) {
            outline.set("First", Object::Reference((first.0, 0)));
            outline.set("Last", Object::Reference((last.0, 0)));
        }
        outline.set("Count", Object::Integer(visible));
        self.write_object(self.outline_root, &Object::Dictionary(outline))?;

        // Attachments: one name tree, sorted by name as a name tree must be.
        let mut attachments = front.attachments;
        attachments.append(&mut self.body.attachments);
        attachments.sort_by(|a, b| a.0.cmp(&b.0));
        let mut af = front.af;
        af.append(&mut self.body.af);

        let mut catalog = front.catalog;
        catalog.set("Type", Object::Name(b"Catalog".to_vec()));
        catalog.set("Pages", Object::Reference((self.pages_root, 0)));
        catalog.set("Outlines", Object::Reference((self.outline_root, 0)));
        if !attachments.is_empty() {
            let names: Vec<Object> = attachments
                .into_iter()
                .flat_map(|(name, spec)| [Object::String(name, StringFormat::Literal), spec])
                .collect();
            let mut tree = Dictionary::new();
            tree.set("Names", Object::Array(names));
            let mut names = Dictionary::new();
            names.set("EmbeddedFiles", Object::Dictionary(tree));
            catalog.set("Names", Object::Dictionary(names));
        }
        if !af.is_empty() {
            catalog.set("AF", Object::Array(af));
        }
        let root = self.allocate();
        self.write_object(root, &Object::Dictionary(catalog))?;

        // The cross-reference table and the trailer.
        let xref_at = self.written;
        let mut table = format!("xref\n0 {}\n0000000000 65535 f \n", self.offsets.len());
        for offset in &self.offsets[1..] {
            table.push_str(&format!("{offset:010} 00000 n \n"));
        }
        self.put(table.as_bytes())?;
        let mut trailer = Dictionary::new();
        trailer.set("Size", Object::Integer(self.offsets.len() as i64));
        trailer.set("Root", Object::Reference((root, 0)));
        if let Some(info) = front.info {
            trailer.set("Info", Object::Reference((info, 0)));
        }
        if let Some(id) = front.id {
            trailer.set("ID", id);
        }
        let mut end = b"trailer\n".to_vec();
        Writer::write_object(&mut end, &Object::Dictionary(trailer)).map_err(failed)?;
        end.extend_from_slice(format!("\nstartxref\n{xref_at}\n%%EOF\n").as_bytes());
        self.put(&end)?;
        self.out.flush().map_err(cannot_write)?;
        Ok(self.out)
    }

    /// Copies what the first `kept` pages of `pdf`, its outline entries and attachments
    /// reach (and for the front part its catalog entries and document information),
    /// renumbered; references to the pages in `stand_ins` go to the given pages.
    fn copy(
        &mut self,
        pdf: &[u8],
        kept: usize,
        stand_ins: &HashMap<ObjectId, u32>,
        front: bool,
    ) -> Result<Copied, Diagnostic> {
        let doc = load(pdf)?;
        let catalog_id = doc
            .trailer
            .get(b"Root")
            .and_then(Object::as_reference)
            .map_err(failed)?;
        let catalog = doc.get_dictionary(catalog_id).map_err(failed)?.clone();
        let all_pages: Vec<ObjectId> = doc.get_pages().into_values().collect();
        let mut copy = Renumber {
            doc: &doc,
            map: HashMap::new(),
            queue: Vec::new(),
            skipped: HashSet::new(),
            stand_ins,
        };
        // Page tree nodes, the catalog and the outline root are rebuilt, never copied.
        copy.skipped.insert(catalog_id);
        for (&id, object) in &doc.objects {
            if let Ok(dict) = object.as_dict() {
                if dict
                    .get(b"Type")
                    .and_then(Object::as_name)
                    .is_ok_and(|t| t == b"Pages")
                {
                    copy.map.insert(id, self.pages_root);
                }
            }
        }
        let outline_root = catalog.get(b"Outlines").and_then(Object::as_reference).ok();
        if let Some(id) = outline_root {
            copy.map.insert(id, self.outline_root);
        }
        let mut out = Copied::default();
        let kept_pages: Vec<ObjectId> = all_pages.iter().take(kept).copied().collect();
        let dropped: HashSet<ObjectId> = all_pages.iter().skip(kept).copied().collect();
        // A reference to a page not kept and not stood in for comes out as null.
        copy.skipped
            .extend(dropped.iter().filter(|p| !stand_ins.contains_key(p)));
        for &page in &kept_pages {
            out.pages.push(copy.number(self, page));
        }
        // The top-level outline entries.
        let mut top = HashSet::new();
        if let Some(root) = outline_root {
            let mut next = doc
                .get_dictionary(root)
                .and_then(|d| d.get(b"First"))
                .and_then(Object::as_reference)
                .ok();
            while let Some(id) = next {
                if !top.insert(id) {
                    break;
                }
                let entry = doc.get_dictionary(id).map_err(failed)?;
                let points_at_dropped = entry
                    .get(b"Dest")
                    .and_then(Object::as_array)
                    .ok()
                    .and_then(|d| d.first())
                    .and_then(|p| p.as_reference().ok())
                    .is_some_and(|p| dropped.contains(&p) && !stand_ins.contains_key(&p));
                if !points_at_dropped {
                    let number = copy.number(self, id);
                    out.outline.push((number, Dictionary::new()));
                }
                next = entry.get(b"Next").and_then(Object::as_reference).ok();
            }
        }
        // Attachments: the name tree's file specifications and the catalog's AF array.
        if let Ok(names) = catalog.get(b"Names").and_then(|n| resolve(&doc, n)) {
            if let Ok(files) = names.get(b"EmbeddedFiles").and_then(|n| resolve(&doc, n)) {
                let mut found = Vec::new();
                name_tree(&doc, files, &mut found, 0)?;
                for (name, spec) in found {
                    let spec = copy.convert(self, &spec);
                    out.attachments.push((name, spec));
                }
            }
        }
        if let Ok(af) = catalog.get(b"AF").and_then(|a| resolve_array(&doc, a)) {
            out.af = af.iter().map(|o| copy.convert(self, o)).collect();
        }
        if front {
            for (key, value) in catalog.iter() {
                if !REBUILT.contains(&key.as_slice()) {
                    let value = copy.convert(self, value);
                    out.catalog.set(key.clone(), value);
                }
            }
            if let Ok(info) = doc.trailer.get(b"Info").and_then(Object::as_reference) {
                out.info = Some(copy.number(self, info));
            }
            out.id = doc.trailer.get(b"ID").ok().cloned();
        }
        // Everything reached, written as it is reached.
        let kept_set: HashSet<ObjectId> = kept_pages.iter().copied().collect();
        while let Some(old) = copy.queue.pop() {
            let new = copy.map[&old];
            let mut object = doc.get_object(old).map_err(failed)?.clone();
            if let Object::Dictionary(dict) = &mut object {
                // Set anew below and when the outline is written.
                if kept_set.contains(&old) {
                    dict.remove(b"Parent");
                }
                if top.contains(&old) {
                    for key in [&b"Parent"[..], b"Prev", b"Next"] {
                        dict.remove(key);
                    }
                }
            }
            let mut object = copy.convert_direct(self, &object);
            if kept_set.contains(&old) {
                if let Object::Dictionary(page) = &mut object {
                    inherit(&doc, old, page, &mut copy, self);
                    page.set("Parent", Object::Reference((self.pages_root, 0)));
                    page.remove(b"StructParents");
                }
            }
            if top.contains(&old) {
                if let (Object::Dictionary(dict), Some(slot)) =
                    (&object, out.outline.iter_mut().find(|(n, _)| *n == new))
                {
                    slot.1 = dict.clone();
                }
                continue;
            }
            if let Object::Stream(stream) = &mut object {
                let length = stream.content.len() as i64;
                stream.dict.set("Length", Object::Integer(length));
            }
            self.write_object(new, &object)?;
        }
        Ok(out)
    }
}

/// One part's renumbering: old object number to new, and the objects still to write.
struct Renumber<'a> {
    doc: &'a Document,
    map: HashMap<ObjectId, u32>,
    queue: Vec<ObjectId>,
    skipped: HashSet<ObjectId>,
    stand_ins: &'a HashMap<ObjectId, u32>,
}

impl Renumber<'_> {
    /// The new number of object `old`, queued for writing when first seen.
    fn number<W: Write>(&mut self, joiner: &mut Joiner<W>, old: ObjectId) -> u32 {
        if let Some(&new) = self.stand_ins.get(&old) {
            return new;
        }
        if let Some(&new) = self.map.get(&old) {
            return new;
        }
        let new = joiner.allocate();
        self.map.insert(old, new);
        self.queue.push(old);
        new
    }

    /// `object` with every reference renumbered (a reference to a skipped or missing
    /// object becomes null).
    fn convert<W: Write>(&mut self, joiner: &mut Joiner<W>, object: &Object) -> Object {
        match object {
            Object::Reference(old) => {
                let known = self.stand_ins.contains_key(old) || self.map.contains_key(old);
                if self.skipped.contains(old) || (!known && self.doc.get_object(*old).is_err()) {
                    Object::Null
                } else {
                    Object::Reference((self.number(joiner, *old), 0))
                }
            }
            _ => self.convert_direct(joiner, object),
        }
    }

    fn convert_direct<W: Write>(&mut self, joiner: &mut Joiner<W>, object: &Object) -> Object {
        match object {
            Object::Array(items) => {
                Object::Array(items.iter().map(|o| self.convert(joiner, o)).collect())
            }
            Object::Dictionary(dict) => Object::Dictionary(self.convert_dict(joiner, dict)),
            Object::Stream(stream) => {
                let mut stream = stream.clone();
                stream.dict = self.convert_dict(joiner, &stream.dict);
                Object::Stream(stream)
            }
            Object::Reference(_) => self.convert(joiner, object),
            other => other.clone(),
        }
    }

    fn convert_dict<W: Write>(&mut self, joiner: &mut Joiner<W>, dict: &Dictionary) -> Dictionary {
        let mut out = Dictionary::new();
        for (key, value) in dict.iter() {
            out.set(key.clone(), self.convert(joiner, value));
        }
        out
    }
}

/// Copies into `page` the inheritable entries it takes from the page tree above it.
fn inherit<W: Write>(
    doc: &Document,
    page_id: ObjectId,
    page: &mut Dictionary,
    copy: &mut Renumber<'_>,
    joiner: &mut Joiner<W>,
) {
    let mut parent = doc
        .get_dictionary(page_id)
        .and_then(|p| p.get(b"Parent"))
        .and_then(Object::as_reference)
        .ok();
    let mut depth = 0;
    while let Some(id) = parent {
        let Ok(node) = doc.get_dictionary(id) else {
            break;
        };
        for key in INHERITED {
            if !page.has(key) {
                if let Ok(value) = node.get(key) {
                    let value = copy.convert(joiner, value);
                    page.set(key.to_vec(), value);
                }
            }
        }
        depth += 1;
        if depth > 64 {
            break;
        }
        parent = node.get(b"Parent").and_then(Object::as_reference).ok();
    }
}

fn load(pdf: &[u8]) -> Result<Document, Diagnostic> {
    Document::load_mem(pdf).map_err(failed)
}

fn resolve<'a>(doc: &'a Document, object: &'a Object) -> lopdf::Result<&'a Dictionary> {
    match object {
        Object::Reference(id) => doc.get_dictionary(*id),
        other => other.as_dict(),
    }
}

fn resolve_array<'a>(doc: &'a Document, object: &'a Object) -> lopdf::Result<&'a Vec<Object>> {
    match object {
        Object::Reference(id) => doc.get_object(*id).and_then(Object::as_array),
        other => other.as_array(),
    }
}

/// The (name, value) pairs of a name tree, in order.
fn name_tree(
    doc: &Document,
    node: &Dictionary,
    found: &mut Vec<(Vec<u8>, Object)>,
    depth: usize,
) -> Result<(), Diagnostic> {
    if depth > 32 {
        return Err(failed("a name tree is nested too deeply"));
    }
    if let Ok(names) = node.get(b"Names").and_then(|n| resolve_array(doc, n)) {
        for pair in names.chunks(2) {
            if let [Object::String(name, _), value] = pair {
                found.push((name.clone(), value.clone()));
            }
        }
    }
    if let Ok(kids) = node.get(b"Kids").and_then(|k| resolve_array(doc, k)) {
        for kid in kids {
            let kid = resolve(doc, kid).map_err(failed)?;
            name_tree(doc, kid, found, depth + 1)?;
        }
    }
    Ok(())
}
