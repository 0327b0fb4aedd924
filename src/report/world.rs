//! An in-memory typst World: every file the document may read is handed over up front, fonts
//! come from the binary, packages are refused and the date is pinned, so a compilation cannot
//! see the host (its files, its fonts, its clock or the network).

use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

use typst::diag::{FileError, FileResult};
use typst::foundations::{Bytes, Datetime, Duration};
use typst::syntax::{FileId, RootedPath, Source, VirtualPath, VirtualRoot};
use typst::text::{Font, FontBook};
use typst::utils::LazyHash;
use typst::{Library, LibraryExt, World};

use super::fonts::FontSet;

/// The standard library, built once: it holds no per-report state.
fn library() -> &'static LazyHash<Library> {
    static LIBRARY: OnceLock<LazyHash<Library>> = OnceLock::new();
    LIBRARY.get_or_init(|| LazyHash::new(Library::builder().build()))
}

/// The id of a project file. Ids are interned for the whole process, so callers use a fixed set
/// of names (plus one per distinct spec name) rather than fresh names per report.
pub(crate) fn file_id(path: &str) -> Result<FileId, String> {
    let vpath =
        VirtualPath::new(path).map_err(|e| format!("invalid virtual path {path:?}: {e}"))?;
    Ok(RootedPath::new(VirtualRoot::Project, vpath).intern())
}

/// A World over a fixed set of in-memory files.
pub(crate) struct ReportWorld {
    main: FileId,
    files: HashMap<FileId, Bytes>,
    sources: Mutex<HashMap<FileId, Source>>,
    fonts: &'static FontSet,
    today: Datetime,
}

impl ReportWorld {
    /// A world whose main file is `main` and whose `datetime.today()` is `today`, whatever
    /// offset the document asks for: the report date is a property of the study, not of the
    /// time zone it is rendered in.
    pub(crate) fn new(
        main: FileId,
        files: HashMap<FileId, Bytes>,
        fonts: &'static FontSet,
        today: Datetime,
    ) -> Self {
        Self {
            main,
            files,
            sources: Mutex::new(HashMap::new()),
            fonts,
            today,
        }
    }

    fn lookup(&self, id: FileId) -> FileResult<&Bytes> {
        if let VirtualRoot::Package(_) = id.root() {
            return Err(FileError::Other(Some(
                "packages are disabled in surety reports (no network, no package cache)".into(),
            )));
        }
        self.files
            .get(&id)
            .ok_or_else(|| FileError::NotFound(id.vpath().get_without_slash().into()))
    }
}

impl World for ReportWorld {
    fn library(&self) -> &LazyHash<Library> {
        library()
    }

    fn book(&self) -> &LazyHash<FontBook> {
        &self.fonts.book
    }

    fn main(&self) -> FileId {
        self.main
    }

    fn source(&self, id: FileId) -> FileResult<Source> {
        let bytes = self.lookup(id)?;
        // A poisoned lock only means another thread panicked while inserting; the map itself is
        // still a valid cache.
        let mut cache = self.sources.lock().unwrap_or_else(|p| p.into_inner());
        if let Some(source) = cache.get(&id) {
            return Ok(source.clone());
        }
        let text = std::str::from_utf8(bytes.as_slice()).map_err(|_| FileError::InvalidUtf8)?;
        let source = Source::new(id, text.to_owned());
        cache.insert(id, source.clone());
        Ok(source)
    }

    fn file(&self, id: FileId) -> FileResult<Bytes> {
        self.lookup(id).cloned()
    }

    fn font(&self, index: usize) -> Option<Font> {
        self.fonts.fonts.get(index).cloned()
    }

    fn today(&self, _offset: Option<Duration>) -> Option<Datetime> {
        Some(self.today)
    }
}
