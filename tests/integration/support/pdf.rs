//! Reads back the PDFs candor writes with `lopdf`, a PDF library independent of the
//! typesetter that wrote them (typst writes through its own PDF writer): the page
//! count, the text of each page, the document information, the XMP metadata, the
//! attached files and the fonts, and a structural check that every reference resolves
//! and every stream decodes.
//!
//! Text comes from the page content streams: each string shown is decoded through its
//! font's `/ToUnicode` map (PDF 32000-1, 9.10.3), and a space stands wherever a string
//! starts away from where the one before it ended (see `Text`). Tests compare words, so
//! every run of whitespace is made one space.

use lopdf::content::Content;
use lopdf::{Dictionary, Document, Encoding, Object, ObjectId};
use std::collections::BTreeMap;
use std::path::Path;

/// A PDF read back.
pub struct Pdf {
    doc: Document,
}

/// One font dictionary of the file, as a PDF reader sees it.
#[derive(Debug)]
pub struct Font {
    /// `/BaseFont`, with a subset's six-letter tag (`ABCDEF+Name`) when there is one.
    pub name: String,
    /// The glyphs are in the file (a `/FontFile`, `/FontFile2` or `/FontFile3`
    /// stream in the descriptor, or the descendant font's descriptor for `Type0`;
    /// a `Type3` font's glyphs are content streams of the file by definition).
    pub embedded: bool,
}

impl Font {
    /// A subset font's name starts with six capital letters and a plus sign (PDF
    /// 32000-1, 9.6.4).
    pub fn subset(&self) -> bool {
        let b = self.name.as_bytes();
        b.len() > 7 && b[6] == b'+' && b[..6].iter().all(u8::is_ascii_uppercase)
    }
}

impl Pdf {
    /// Parses a PDF's bytes; panics with the reader's message when it cannot.
    pub fn parse(bytes: &[u8]) -> Pdf {
        let doc =
            Document::load_mem(bytes).unwrap_or_else(|e| panic!("lopdf cannot read the PDF: {e}"));
        Pdf { doc }
    }

    /// Reads and parses the PDF at `path`.
    pub fn open(path: &Path) -> Pdf {
        let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        Pdf::parse(&bytes)
    }

    /// The number of pages in the page tree.
    pub fn pages(&self) -> usize {
        self.doc.get_pages().len()
    }

    /// The words of every page, in order, one space between words.
    pub fn text(&self) -> String {
        words(
            &(1..=self.pages())
                .map(|p| self.page_text(p))
                .collect::<Vec<_>>()
                .join(" "),
        )
    }

    /// The words of page `number` (from 1), one space between words.
    pub fn page_text(&self, number: usize) -> String {
        let pages = self.doc.get_pages();
        let id = *pages
            .get(&(number as u32))
            .unwrap_or_else(|| panic!("no page {number}"));
        let resources = self.page_resources(id);
        let content = self.doc.get_page_content(id);
        let mut text = Text::default();
        self.show(&content, &resources, &mut text, 0);
        words(&text.out)
    }

    /// The resources of a page, inherited ones first and the page's own over them.
    fn page_resources(&self, page: ObjectId) -> Dictionary {
        let (own, inherited) = self.doc.get_page_resources(page).expect("page resources");
        let mut all = Dictionary::new();
        for id in inherited.iter().rev() {
            if let Ok(Object::Dictionary(d)) = self.doc.get_object(*id) {
                merge(&mut all, d);
            }
        }
        if let Some(d) = own {
            merge(&mut all, d);
        }
        all
    }

    /// A dictionary entry of `resources` (`Font`, `XObject`) as a dictionary.
    fn category<'a>(&'a self, resources: &'a Dictionary, key: &[u8]) -> Option<&'a Dictionary> {
        let obj = resources.get(key).ok()?;
        let (_, obj) = self.doc.dereference(obj).ok()?;
        obj.as_dict().ok()
    }

    /// Appends the text shown by a content stream, following form XObjects.
    fn show(&self, content: &[u8], resources: &Dictionary, text: &mut Text, depth: usize) {
        assert!(depth < 16, "form XObjects nested too deep");
        let ops = Content::decode(content).expect("content stream parses");
        let mut fonts: BTreeMap<Vec<u8>, (Encoding, Widths)> = BTreeMap::new();
        if let Some(dict) = self.category(resources, b"Font") {
            for (name, font) in dict.iter() {
                let (_, font) = self.doc.dereference(font).expect("font reference");
                let font = font.as_dict().expect("font dictionary");
                let encoding = font.get_font_encoding(&self.doc).expect("font encoding");
                fonts.insert(name.clone(), (encoding, self.widths(font)));
            }
        }
        let num = |o: &Object| o.as_float().expect("a number operand") as f64;
        let mut font: Option<&(Encoding, Widths)> = None;
        for op in &ops.operations {
            let args = &op.operands;
            match op.operator.as_str() {
                "q" => text.saved.push(text.ctm),
                "Q" => text.ctm = text.saved.pop().unwrap_or(IDENTITY),
                "cm" => text.ctm = mul(&matrix(args), &text.ctm),
                "BT" => {
                    text.tm = IDENTITY;
                    text.tlm = IDENTITY;
                }
                "Tf" => {
                    let name = args[0].as_name().expect("font name");
                    font = fonts.get(name);
                    assert!(
                        font.is_some(),
                        "font {:?} not in the resources",
                        String::from_utf8_lossy(name)
                    );
                    text.size = num(&args[1]);
                }
                "Tc" => text.char_spacing = num(&args[0]),
                "Tw" => text.word_spacing = num(&args[0]),
                "Tz" => text.scaling = num(&args[0]) / 100.0,
                "TL" => text.leading = num(&args[0]),
                "Td" => text.next_line(num(&args[0]), num(&args[1])),
                "TD" => {
                    text.leading = -num(&args[1]);
                    text.next_line(num(&args[0]), num(&args[1]));
                }
                "T*" => text.next_line(0.0, -text.leading),
                "Tm" => {
                    text.tm = matrix(args);
                    text.tlm = text.tm;
                }
                "Tj" | "'" | "\"" => {
                    if op.operator != "Tj" {
                        text.next_line(0.0, -text.leading);
                    }
                    let f = font.expect("text shown before any font was set");
                    text.show(f, args.last().expect("string operand"));
                }
                "TJ" => {
                    let f = font.expect("text shown before any font was set");
                    for item in args[0].as_array().expect("TJ array") {
                        match item {
                            Object::String(..) => text.show(f, item),
                            other => text.advance(-num(other) / 1000.0 * text.size),
                        }
                    }
                }
                "Do" => {
                    let name = args[0].as_name().expect("XObject name");
                    let Some(xobjects) = self.category(resources, b"XObject") else {
                        continue;
                    };
                    let obj = xobjects.get(name).expect("XObject in the resources");
                    let (_, obj) = self.doc.dereference(obj).expect("XObject reference");
                    let stream = obj.as_stream().expect("XObject stream");
                    if stream.dict.get(b"Subtype").and_then(Object::as_name).ok() == Some(b"Form") {
                        let inner = stream
                            .decompressed_content()
                            .unwrap_or_else(|_| stream.content.clone());
                        let own = self.category(&stream.dict, b"Resources");
                        let res = own.unwrap_or(resources).clone();
                        let outer = text.ctm;
                        text.saved.push(outer);
                        if let Ok(m) = stream.dict.get(b"Matrix") {
                            text.ctm = mul(&matrix(m.as_array().expect("Matrix")), &outer);
                        }
                        self.show(&inner, &res, text, depth + 1);
                        text.ctm = text.saved.pop().unwrap_or(IDENTITY);
                    }
                }
                _ => {}
            }
        }
    }

    /// The glyph widths of a font (thousandths of the text size).
    fn widths(&self, font: &Dictionary) -> Widths {
        let subtype = name_of(font.get(b"Subtype").ok());
        if subtype == "Type0" {
            let kids = font
                .get_deref(b"DescendantFonts", &self.doc)
                .and_then(Object::as_array)
                .expect("DescendantFonts");
            let (_, cid) = self.doc.dereference(&kids[0]).expect("descendant font");
            let cid = cid.as_dict().expect("descendant font dictionary");
            let default = cid.get(b"DW").and_then(Object::as_float).unwrap_or(1000.0) as f64;
            let mut map = BTreeMap::new();
            if let Ok(w) = cid.get_deref(b"W", &self.doc).and_then(Object::as_array) {
                let mut i = 0;
                while i + 1 < w.len() {
                    let first = w[i].as_i64().expect("CID") as u32;
                    if let Ok(list) = self
                        .doc
                        .dereference(&w[i + 1])
                        .and_then(|(_, o)| o.as_array())
                    {
                        for (k, v) in list.iter().enumerate() {
                            map.insert(first + k as u32, v.as_float().expect("width") as f64);
                        }
                        i += 2;
                    } else {
                        let last = w[i + 1].as_i64().expect("CID") as u32;
                        let v = w[i + 2].as_float().expect("width") as f64;
                        for c in first..=last {
                            map.insert(c, v);
                        }
                        i += 3;
                    }
                }
            }
            Widths {
                two_bytes: true,
                map,
                default,
            }
        } else {
            let first = font.get(b"FirstChar").and_then(Object::as_i64).unwrap_or(0) as u32;
            let mut map = BTreeMap::new();
            if let Ok(w) = font
                .get_deref(b"Widths", &self.doc)
                .and_then(Object::as_array)
            {
                for (k, v) in w.iter().enumerate() {
                    map.insert(first + k as u32, v.as_float().unwrap_or(0.0) as f64);
                }
            }
            Widths {
                two_bytes: false,
                map,
                default: 0.0,
            }
        }
    }

    /// A text string of the document information dictionary (`Title`, `Author`, ...).
    pub fn info(&self, key: &str) -> Option<String> {
        let info = self.doc.trailer.get(b"Info").ok()?;
        let (_, info) = self.doc.dereference(info).ok()?;
        let value = info.as_dict().ok()?.get(key.as_bytes()).ok()?;
        lopdf::decode_text_string(value).ok()
    }

    /// The catalog's XMP metadata stream as text.
    pub fn xmp(&self) -> String {
        let catalog = self.doc.catalog().expect("catalog");
        let (_, meta) = self
            .doc
            .dereference(catalog.get(b"Metadata").expect("a /Metadata stream"))
            .expect("metadata reference");
        let stream = meta.as_stream().expect("metadata is a stream");
        let bytes = stream
            .decompressed_content()
            .unwrap_or_else(|_| stream.content.clone());
        String::from_utf8(bytes).expect("XMP is UTF-8")
    }

    /// The page number (from 1) of a destination: an explicit destination array
    /// `[page /XYZ ...]` (PDF 32000-1, 12.3.2.2), given directly or by reference.
    fn destination_page(&self, dest: &Object) -> Option<usize> {
        let (_, dest) = self.doc.dereference(dest).ok()?;
        let page = dest.as_array().ok()?.first()?.as_reference().ok()?;
        self.doc
            .get_pages()
            .into_iter()
            .find(|(_, id)| *id == page)
            .map(|(n, _)| n as usize)
    }

    /// The catalog's dictionary `key` (`Outlines`, `Names`), directly or by reference.
    fn catalog_dict(&self, key: &[u8]) -> Option<&Dictionary> {
        let catalog = self.doc.catalog().expect("catalog");
        catalog
            .get_deref(key, &self.doc)
            .and_then(Object::as_dict)
            .ok()
    }

    /// The top-level entries of the document outline (bookmarks): title and the page
    /// each goes to, in order.
    pub fn outline(&self) -> Vec<(String, Option<usize>)> {
        let Some(root) = self.catalog_dict(b"Outlines") else {
            return Vec::new();
        };
        let mut out = Vec::new();
        let mut next = root.get(b"First").ok().cloned();
        while let Some(item) = next {
            let (_, item) = self.doc.dereference(&item).expect("outline entry");
            let item = item.as_dict().expect("outline entry dictionary");
            let title = item
                .get(b"Title")
                .map(|t| lopdf::decode_text_string(t).expect("title"))
                .unwrap_or_default();
            let page = item
                .get(b"Dest")
                .ok()
                .and_then(|d| self.destination_page(d));
            out.push((title, page));
            assert!(out.len() < 100_000, "the outline does not end");
            next = item.get(b"Next").ok().cloned();
        }
        out
    }

    /// The pages the link annotations of page `number` go to, in order.
    pub fn links(&self, number: usize) -> Vec<Option<usize>> {
        let pages = self.doc.get_pages();
        let page = self
            .doc
            .get_dictionary(pages[&(number as u32)])
            .expect("page");
        let Ok(annots) = page
            .get_deref(b"Annots", &self.doc)
            .and_then(Object::as_array)
        else {
            return Vec::new();
        };
        annots
            .iter()
            .filter_map(|a| self.doc.dereference(a).ok())
            .filter_map(|(_, a)| a.as_dict().ok())
            .filter(|a| a.get(b"Subtype").and_then(Object::as_name).ok() == Some(b"Link"))
            .map(|a| a.get(b"Dest").ok().and_then(|d| self.destination_page(d)))
            .collect()
    }

    /// How many entries the catalog's array `key` has (`OutputIntents`, `AF`), and for
    /// `AF` whether each file specification names its relationship to the document
    /// (`/AFRelationship`, PDF/A-3, ISO 19005-3 6.8).
    pub fn catalog_array(&self, key: &str) -> (usize, bool) {
        let catalog = self.doc.catalog().expect("catalog");
        let Ok(items) = catalog
            .get_deref(key.as_bytes(), &self.doc)
            .and_then(Object::as_array)
        else {
            return (0, false);
        };
        let related = items.iter().all(|i| {
            self.doc
                .dereference(i)
                .ok()
                .and_then(|(_, d)| d.as_dict().ok())
                .is_some_and(|d| d.get(b"AFRelationship").is_ok())
        });
        (items.len(), related)
    }

    /// The embedded files of the catalog's `/EmbeddedFiles` name tree, in tree order:
    /// (file name, bytes).
    pub fn attachments(&self) -> Vec<(String, Vec<u8>)> {
        let Some(names) = self.catalog_dict(b"Names") else {
            return Vec::new();
        };
        let Ok(tree) = names
            .get_deref(b"EmbeddedFiles", &self.doc)
            .and_then(Object::as_dict)
        else {
            return Vec::new();
        };
        let mut out = Vec::new();
        self.name_tree(tree, &mut out, 0);
        out
    }

    fn name_tree(&self, node: &Dictionary, out: &mut Vec<(String, Vec<u8>)>, depth: usize) {
        assert!(depth < 32, "name tree too deep");
        if let Ok(kids) = node
            .get_deref(b"Kids", &self.doc)
            .and_then(Object::as_array)
        {
            for kid in kids {
                let (_, kid) = self.doc.dereference(kid).expect("name tree kid");
                self.name_tree(kid.as_dict().expect("kid dictionary"), out, depth + 1);
            }
        }
        if let Ok(pairs) = node
            .get_deref(b"Names", &self.doc)
            .and_then(Object::as_array)
        {
            for pair in pairs.chunks(2) {
                let (_, spec) = self.doc.dereference(&pair[1]).expect("file specification");
                let spec = spec.as_dict().expect("file specification dictionary");
                let name = spec
                    .get(b"UF")
                    .or_else(|_| spec.get(b"F"))
                    .map(|n| lopdf::decode_text_string(n).expect("file name"))
                    .unwrap_or_else(|_| lopdf::decode_text_string(&pair[0]).expect("key"));
                let ef = spec
                    .get_deref(b"EF", &self.doc)
                    .and_then(Object::as_dict)
                    .expect("/EF");
                let file = ef
                    .get_deref(b"F", &self.doc)
                    .and_then(Object::as_stream)
                    .expect("embedded file stream");
                let bytes = file
                    .decompressed_content()
                    .unwrap_or_else(|_| file.content.clone());
                out.push((name, bytes));
            }
        }
    }

    /// Every font dictionary in the file (descendant CID fonts are read through their
    /// `Type0` parent).
    pub fn fonts(&self) -> Vec<Font> {
        let mut out = Vec::new();
        for obj in self.doc.objects.values() {
            let Ok(d) = obj.as_dict() else { continue };
            if d.get(b"Type").and_then(Object::as_name).ok() != Some(b"Font") {
                continue;
            }
            let subtype = name_of(d.get(b"Subtype").ok());
            if subtype == "CIDFontType0" || subtype == "CIDFontType2" {
                continue;
            }
            let embedded = match subtype.as_str() {
                "Type3" => true,
                "Type0" => {
                    let kids = d
                        .get_deref(b"DescendantFonts", &self.doc)
                        .and_then(Object::as_array)
                        .expect("DescendantFonts");
                    kids.iter().all(|k| {
                        let (_, k) = self.doc.dereference(k).expect("descendant font");
                        self.has_font_file(k.as_dict().expect("descendant dictionary"))
                    })
                }
                _ => self.has_font_file(d),
            };
            out.push(Font {
                name: name_of(d.get(b"BaseFont").ok()),
                embedded,
            });
        }
        out.sort_by(|a, b| a.name.cmp(&b.name));
        out
    }

    fn has_font_file(&self, font: &Dictionary) -> bool {
        let Ok(desc) = font
            .get_deref(b"FontDescriptor", &self.doc)
            .and_then(Object::as_dict)
        else {
            return false;
        };
        [&b"FontFile"[..], b"FontFile2", b"FontFile3"]
            .iter()
            .any(|k| {
                desc.get_deref(k, &self.doc)
                    .and_then(Object::as_stream)
                    .is_ok()
            })
    }

    /// The structure holds together: the trailer names a catalog with a page tree,
    /// every indirect reference in the file points at an object that exists, and every
    /// stream decodes with its filters.
    pub fn check_structure(&self) {
        let catalog = self.doc.catalog().expect("the trailer names a catalog");
        assert!(
            catalog.get(b"Pages").is_ok(),
            "the catalog has no page tree"
        );
        assert!(self.pages() > 0, "no pages");
        let mut refs = Vec::new();
        for (id, obj) in &self.doc.objects {
            collect_refs(obj, &mut refs);
            if let Object::Stream(s) = obj {
                if s.dict.get(b"Filter").is_ok() {
                    s.decompressed_content()
                        .unwrap_or_else(|e| panic!("stream {id:?} does not decode: {e}"));
                }
            }
        }
        for r in refs {
            assert!(
                self.doc.objects.contains_key(&r),
                "dangling reference {r:?}"
            );
        }
    }
}

fn collect_refs(obj: &Object, out: &mut Vec<ObjectId>) {
    match obj {
        Object::Reference(id) => out.push(*id),
        Object::Array(a) => a.iter().for_each(|o| collect_refs(o, out)),
        Object::Dictionary(d) => d.iter().for_each(|(_, o)| collect_refs(o, out)),
        Object::Stream(s) => s.dict.iter().for_each(|(_, o)| collect_refs(o, out)),
        _ => {}
    }
}

fn merge(into: &mut Dictionary, from: &Dictionary) {
    for (k, v) in from.iter() {
        into.set(k.clone(), v.clone());
    }
}

fn name_of(obj: Option<&Object>) -> String {
    obj.and_then(|o| o.as_name().ok())
        .map(|n| String::from_utf8_lossy(n).into_owned())
        .unwrap_or_default()
}

/// Glyph widths of a font, in thousandths of the text size, by character code.
struct Widths {
    /// Codes are two bytes (`Type0` fonts with the Identity encodings typst writes).
    two_bytes: bool,
    map: BTreeMap<u32, f64>,
    default: f64,
}

type Matrix = [f64; 6];

const IDENTITY: Matrix = [1.0, 0.0, 0.0, 1.0, 0.0, 0.0];

/// `a × b` for PDF's row-vector matrices `[a b c d e f]` (PDF 32000-1, 8.3.4).
fn mul(a: &Matrix, b: &Matrix) -> Matrix {
    [
        a[0] * b[0] + a[1] * b[2],
        a[0] * b[1] + a[1] * b[3],
        a[2] * b[0] + a[3] * b[2],
        a[2] * b[1] + a[3] * b[3],
        a[4] * b[0] + a[5] * b[2] + b[4],
        a[4] * b[1] + a[5] * b[3] + b[5],
    ]
}

fn matrix(args: &[Object]) -> Matrix {
    let mut m = IDENTITY;
    for (slot, o) in m.iter_mut().zip(args) {
        *slot = o.as_float().expect("matrix entry") as f64;
    }
    m
}

/// The text state of a content stream as PDF 32000-1, 9.3 and 9.4 define it, kept to
/// tell where one word ends: a string that starts away from where the last one ended
/// (a new line, a moved origin, a gap wider than a fifth of the text size) is a new
/// word; glyphs placed one by one (chart labels, letter-spaced headings, the rotated
/// DRAFT mark) still read as one.
struct Text {
    out: String,
    ctm: Matrix,
    saved: Vec<Matrix>,
    tm: Matrix,
    tlm: Matrix,
    size: f64,
    char_spacing: f64,
    word_spacing: f64,
    scaling: f64,
    leading: f64,
    /// Where the last string ended, in device space, and the size of its text there.
    end: Option<(f64, f64, f64)>,
}

impl Default for Text {
    fn default() -> Self {
        Text {
            out: String::new(),
            ctm: IDENTITY,
            saved: Vec::new(),
            tm: IDENTITY,
            tlm: IDENTITY,
            size: 0.0,
            char_spacing: 0.0,
            word_spacing: 0.0,
            scaling: 1.0,
            leading: 0.0,
            end: None,
        }
    }
}

impl Text {
    fn next_line(&mut self, tx: f64, ty: f64) {
        self.tlm = mul(&[1.0, 0.0, 0.0, 1.0, tx, ty], &self.tlm);
        self.tm = self.tlm;
    }

    /// Moves along the line by `tx` unscaled text space units.
    fn advance(&mut self, tx: f64) {
        self.tm = mul(&[1.0, 0.0, 0.0, 1.0, tx * self.scaling, 0.0], &self.tm);
    }

    /// The text origin in device space, and the size of the text there.
    fn here(&self) -> (f64, f64, f64) {
        let m = mul(&self.tm, &self.ctm);
        let scale = (m[0] * m[3] - m[1] * m[2]).abs().sqrt();
        (m[4], m[5], self.size * scale)
    }

    fn show(&mut self, (encoding, widths): &(Encoding, Widths), s: &Object) {
        let bytes = s.as_str().expect("string operand");
        let (x, y, size) = self.here();
        if let Some((ex, ey, _)) = self.end {
            let gap = ((x - ex).powi(2) + (y - ey).powi(2)).sqrt();
            if gap > 0.2 * size && !self.out.ends_with(' ') {
                self.out.push(' ');
            }
        }
        self.out.push_str(
            &Document::decode_text(encoding, bytes).expect("text decodes through the font's map"),
        );
        let codes: Vec<u32> = if widths.two_bytes {
            bytes
                .chunks(2)
                .map(|c| (u32::from(c[0]) << 8) | u32::from(*c.get(1).unwrap_or(&0)))
                .collect()
        } else {
            bytes.iter().map(|&b| u32::from(b)).collect()
        };
        for code in codes {
            let w = widths.map.get(&code).copied().unwrap_or(widths.default);
            let space = if !widths.two_bytes && code == 32 {
                self.word_spacing
            } else {
                0.0
            };
            self.advance(w / 1000.0 * self.size + self.char_spacing + space);
        }
        self.end = Some(self.here());
    }
}

/// Every run of whitespace made one space, trimmed.
pub fn words(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}
