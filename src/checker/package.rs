//! Reading the files a calculation package carries as PDF attachments: the results
//! model (`seamlife-results.json`), the project file and the small series and table
//! files (`project/...`). The PDF is read with lopdf; each attachment's bytes are
//! inflated with a bound, so a compressed bomb inside a PDF is refused.

use std::collections::BTreeMap;
use std::io::Read;
use std::path::{Component, Path, PathBuf};

use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::report::{PROJECT_PREFIX, RESULTS_ATTACHMENT};

/// PDFs larger than this are refused (a package of many thousand detail sheets stays
/// well below it).
pub const MAX_PDF_BYTES: u64 = 512 * 1024 * 1024;
/// Largest attachment read back (the results model of a large batch included).
pub const MAX_ATTACHMENT_BYTES: u64 = 1 << 30;
/// Deepest name tree followed (the package's is one level).
const MAX_TREE_DEPTH: usize = 16;

/// A file starting with `%PDF-` (ISO 32000-1 7.5.2: the header comes first).
pub fn is_pdf_bytes(head: &[u8]) -> bool {
    head.starts_with(b"%PDF-")
}

/// True when `path` is named `.pdf` or starts like a PDF.
pub fn looks_like_pdf(path: &Path) -> bool {
    if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("pdf"))
    {
        return true;
    }
    let Ok(f) = crate::files::open_regular(path) else {
        return false;
    };
    let mut head = [0u8; 5];
    let mut r = f.take(5);
    matches!(r.read_exact(&mut head), Ok(())) && is_pdf_bytes(&head)
}

fn bad(path: &Path, kind: InputErrorKind, msg: impl Into<String>, hint: &str) -> Error {
    InputError::new(kind, Location::file(path), msg)
        .hint(hint)
        .into()
}

/// Every attachment of the PDF at `path`, by name.
pub fn read_attachments(path: &Path) -> Result<BTreeMap<String, Vec<u8>>, Error> {
    let bytes = crate::files::read_bytes_bounded(
        path,
        MAX_PDF_BYTES,
        "PDF packages",
        "give the results model (`assess --json`) and the project file instead",
    )?;
    if !is_pdf_bytes(&bytes) {
        return Err(bad(
            path,
            InputErrorKind::Syntax,
            "not a PDF (it does not start with `%PDF-`)",
            "give a package written by `seamlife report`, or a results model (.json)",
        ));
    }
    let corrupt = |e: String| {
        bad(
            path,
            InputErrorKind::Syntax,
            format!("the PDF cannot be read: {e}"),
            "the file may be damaged or cut short; ask for the package again, or verify the results model (.json) and the project file",
        )
    };
    // lopdf is careful with hostile input, but a panic inside it must not reach the
    // user: it is turned into the same error as a damaged file.
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let loaded = std::panic::catch_unwind(|| {
        let doc = lopdf::Document::load_mem(&bytes).map_err(|e| e.to_string())?;
        collect(&doc)
    });
    std::panic::set_hook(previous);
    let found = match loaded {
        Ok(Ok(f)) => f,
        Ok(Err(e)) => return Err(corrupt(e)),
        Err(_) => return Err(corrupt("its structure is malformed".into())),
    };
    if found.is_empty() {
        return Err(bad(
            path,
            InputErrorKind::MissingField,
            "the PDF carries no attached files",
            "packages written by seamlife (without --pdf-a) carry the results model and project; for another PDF give `seamlife verify RESULTS.json PROJECT.yaml`",
        ));
    }
    Ok(found)
}

/// The attachments of a loaded document: the `/EmbeddedFiles` name tree of the
/// catalogue's `/Names` (ISO 32000-1 7.7.4 and 7.11.4).
fn collect(doc: &lopdf::Document) -> Result<BTreeMap<String, Vec<u8>>, String> {
    let mut out = BTreeMap::new();
    let catalog = doc.catalog().map_err(|e| e.to_string())?;
    let Ok(names) = catalog.get_deref(b"Names", doc).and_then(|n| n.as_dict()) else {
        return Ok(out);
    };
    let Ok(tree) = names
        .get_deref(b"EmbeddedFiles", doc)
        .and_then(|n| n.as_dict())
    else {
        return Ok(out);
    };
    walk_tree(doc, tree, 0, &mut out)?;
    Ok(out)
}

fn walk_tree(
    doc: &lopdf::Document,
    node: &lopdf::Dictionary,
    depth: usize,
    out: &mut BTreeMap<String, Vec<u8>>,
) -> Result<(), String> {
    if depth > MAX_TREE_DEPTH {
        return Err("the attachment list nests too deep".into());
    }
    if let Ok(kids) = node.get_deref(b"Kids", doc).and_then(|k| k.as_array()) {
        for k in kids {
            let (_, kid) = doc.dereference(k).map_err(|e| e.to_string())?;
            let kid = kid.as_dict().map_err(|e| e.to_string())?;
            walk_tree(doc, kid, depth + 1, out)?;
        }
    }
    if let Ok(pairs) = node.get_deref(b"Names", doc).and_then(|n| n.as_array()) {
        for pair in pairs.chunks(2) {
            let [name, spec] = pair else {
                return Err("an attachment without its file".into());
            };
            let name = text_string(name.as_str().map_err(|e| e.to_string())?);
            let (_, spec) = doc.dereference(spec).map_err(|e| e.to_string())?;
            let spec = spec.as_dict().map_err(|e| e.to_string())?;
            let ef = spec
                .get_deref(b"EF", doc)
                .and_then(|e| e.as_dict())
                .map_err(|e| format!("attachment `{}`: {e}", crate::files::shown(&name)))?;
            let stream = ef
                .get_deref(b"UF", doc)
                .or_else(|_| ef.get_deref(b"F", doc))
                .and_then(|s| s.as_stream())
                .map_err(|e| format!("attachment `{}`: {e}", crate::files::shown(&name)))?;
            let data = stream_bytes(stream)
                .map_err(|e| format!("attachment `{}`: {e}", crate::files::shown(&name)))?;
            out.insert(name, data);
        }
    }
    Ok(())
}

/// A PDF text string: UTF-16BE after a byte-order mark, else PDFDocEncoding, which
/// agrees with Latin-1 for the characters of file names (ISO 32000-1 7.9.2.2).
fn text_string(b: &[u8]) -> String {
    if let Some(rest) = b.strip_prefix(&[0xFE, 0xFF]) {
        let units: Vec<u16> = rest
            .chunks(2)
            .map(|c| u16::from_be_bytes([c[0], *c.get(1).unwrap_or(&0)]))
            .collect();
        return String::from_utf16_lossy(&units);
    }
    if let Ok(s) = std::str::from_utf8(b) {
        return s.to_string();
    }
    b.iter().map(|&c| c as char).collect()
}

/// The bytes of an embedded-file stream: as stored, or inflated (FlateDecode) to at
/// most [`MAX_ATTACHMENT_BYTES`].
fn stream_bytes(s: &lopdf::Stream) -> Result<Vec<u8>, String> {
    let filters = s.filters().unwrap_or_default();
    match filters.as_slice() {
        [] => {
            if s.content.len() as u64 > MAX_ATTACHMENT_BYTES {
                return Err("larger than the limit of attached files".into());
            }
            Ok(s.content.clone())
        }
        [f] if *f == b"FlateDecode" => {
            let mut out = Vec::new();
            flate2::read::ZlibDecoder::new(&s.content[..])
                .take(MAX_ATTACHMENT_BYTES + 1)
                .read_to_end(&mut out)
                .map_err(|e| format!("its compressed data is damaged ({e})"))?;
            if out.len() as u64 > MAX_ATTACHMENT_BYTES {
                return Err(format!(
                    "it inflates to more than {} MiB",
                    MAX_ATTACHMENT_BYTES >> 20
                ));
            }
            Ok(out)
        }
        other => Err(format!(
            "it is stored with filter {}, which seamlife does not read",
            other
                .iter()
                .map(|f| String::from_utf8_lossy(f).into_owned())
                .collect::<Vec<_>>()
                .join(", ")
        )),
    }
}

/// The attached inputs written out in a temporary folder laid out as the project
/// folder; removed when dropped (and on interruption).
#[derive(Debug)]
pub struct Extracted {
    dir: tempfile::TempDir,
    _reg: crate::files::cleanup::Registered,
    /// The attached project file, in the folder.
    pub project: PathBuf,
    /// The attached results model, as text.
    pub results_text: String,
    /// Input files the results name that the package carries by hash only.
    pub missing: Vec<String>,
}

impl Extracted {
    pub fn dir(&self) -> &Path {
        self.dir.path()
    }
}

/// A relative path of ordinary components, as a path under `dir`.
fn under(dir: &Path, rel: &str) -> Option<PathBuf> {
    let p = Path::new(rel);
    if rel.is_empty()
        || !p
            .components()
            .all(|c| matches!(c, Component::Normal(_) | Component::CurDir))
    {
        return None;
    }
    Some(dir.join(p))
}

/// Read the package at `pdf`, take its results model and write its attached project
/// and input files into a temporary folder.
pub fn extract(pdf: &Path) -> Result<Extracted, Error> {
    let mut files = read_attachments(pdf)?;
    let Some(results) = files.remove(RESULTS_ATTACHMENT) else {
        return Err(bad(
            pdf,
            InputErrorKind::MissingField,
            format!("the PDF carries no `{RESULTS_ATTACHMENT}`"),
            "the package was not written by `seamlife report`, or with --pdf-a; give `seamlife verify RESULTS.json PROJECT.yaml`",
        ));
    };
    let results_text = String::from_utf8(results).map_err(|_| {
        bad(
            pdf,
            InputErrorKind::Syntax,
            format!("the attached `{RESULTS_ATTACHMENT}` is not UTF-8 text"),
            "the attachment is damaged; ask for the package again",
        )
    })?;
    let submitted = super::parse_results(
        &results_text,
        &PathBuf::from(format!("{}#{RESULTS_ATTACHMENT}", pdf.display())),
    )?;
    let dir = tempfile::Builder::new()
        .prefix("seamlife-verify-")
        .tempdir()
        .map_err(|source| Error::Output {
            path: std::env::temp_dir(),
            source,
        })?;
    let reg = crate::files::cleanup::register(dir.path(), true);
    let project_name = format!("{PROJECT_PREFIX}{}", submitted.input.file_name);
    let project = match (
        files.contains_key(&project_name),
        under(dir.path(), &submitted.input.file_name),
    ) {
        (true, Some(p)) if submitted.input.file_name.split('/').count() == 1 => p,
        _ => {
            return Err(bad(
                pdf,
                InputErrorKind::MissingField,
                format!(
                    "the PDF carries no project file `{}`",
                    crate::files::shown(&submitted.input.file_name)
                ),
                "give the project file: seamlife verify PACKAGE.pdf PROJECT.yaml",
            ))
        }
    };
    for (name, data) in &files {
        let Some(rel) = name.strip_prefix(PROJECT_PREFIX) else {
            continue;
        };
        let Some(target) = under(dir.path(), rel) else {
            return Err(bad(
                pdf,
                InputErrorKind::PathOutsideProject,
                format!(
                    "attachment `{}` names a path outside the project folder",
                    crate::files::shown(name)
                ),
                "the package is not one seamlife wrote; verify the results model and project file instead",
            ));
        };
        if let Some(parent) = target.parent() {
            std::fs::create_dir_all(parent).map_err(|source| Error::Output {
                path: parent.to_path_buf(),
                source,
            })?;
        }
        std::fs::write(&target, data).map_err(|source| Error::Output {
            path: target.clone(),
            source,
        })?;
    }
    let missing = submitted
        .input
        .series_files
        .iter()
        .chain(&submitted.input.table_files)
        .filter(|f| !files.contains_key(&format!("{PROJECT_PREFIX}{}", f.file)))
        .map(|f| f.file.clone())
        .collect();
    Ok(Extracted {
        dir,
        _reg: reg,
        project,
        results_text,
        missing,
    })
}
