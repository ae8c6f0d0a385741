//! The open documents: one `ropey` rope per buffer, changed incrementally
//! in the order the client sent the changes (the caller guarantees that
//! order, see `sequencer`), with versions checked.

use crate::position::{self, Encoding};
use ropey::Rope;
use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::Arc;
use tower_lsp::lsp_types::{TextDocumentContentChangeEvent, Url};

/// An open document: the client's text of it, as of its latest version.
#[derive(Debug, Clone)]
pub struct Document {
    /// The version the client gave with the last change applied.
    pub version: i32,
    /// The text, as a rope so that incremental changes are cheap.
    pub rope: Rope,
    /// The file the buffer stands for; `None` for unsaved `untitled:` buffers.
    pub path: Option<PathBuf>,
    /// The whole text, made on demand and kept until the next change.
    text: Option<Arc<str>>,
}

impl Document {
    /// A document as `didOpen` gives it.
    pub fn new(uri: &Url, version: i32, text: &str) -> Self {
        Document {
            version,
            rope: Rope::from_str(text),
            path: uri_path(uri),
            text: None,
        }
    }

    /// The whole text, shared; made once per version.
    pub fn text(&mut self) -> Arc<str> {
        if let Some(t) = &self.text {
            return t.clone();
        }
        let t: Arc<str> = Arc::from(self.rope.to_string());
        self.text = Some(t.clone());
        t
    }

    /// Apply one content change: a range replacement, or the whole text
    /// when the change has no range.
    pub fn apply(&mut self, change: &TextDocumentContentChangeEvent, enc: Encoding) {
        self.text = None;
        match change.range {
            None => self.rope = Rope::from_str(&change.text),
            Some(range) => {
                let (start, end) = position::span(&self.rope, range, enc);
                let (cs, ce) = (self.rope.byte_to_char(start), self.rope.byte_to_char(end));
                self.rope.remove(cs..ce);
                self.rope.insert(cs, &change.text);
            }
        }
    }
}

/// The local file path of a `file:` URI.
pub fn uri_path(uri: &Url) -> Option<PathBuf> {
    if uri.scheme() == "file" {
        uri.to_file_path().ok()
    } else {
        None
    }
}

/// Why a `didChange` was not applied.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ChangeError {
    /// No open document with that URI.
    NotOpen,
    /// The change carries a version not above the one held: it was
    /// superseded or repeated, and is dropped.
    Stale {
        /// The version the server holds.
        held: i32,
        /// The version the change carried.
        got: i32,
    },
}

impl std::fmt::Display for ChangeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ChangeError::NotOpen => write!(f, "the document is not open"),
            ChangeError::Stale { held, got } => write!(
                f,
                "version {got} is not newer than the version held ({held}); change dropped"
            ),
        }
    }
}

/// The open documents by URI: the only text the server holds that the
/// client owns.
#[derive(Debug, Default)]
pub struct Documents {
    docs: HashMap<Url, Document>,
}

impl Documents {
    /// Hold a document as opened (replacing one with the same URI).
    pub fn open(&mut self, uri: Url, version: i32, text: &str) {
        let doc = Document::new(&uri, version, text);
        self.docs.insert(uri, doc);
    }

    /// Apply one `didChange`: its changes in order, then its version.
    /// Changes with a version not above the held one are refused.
    pub fn change(
        &mut self,
        uri: &Url,
        version: i32,
        changes: &[TextDocumentContentChangeEvent],
        enc: Encoding,
    ) -> Result<&mut Document, ChangeError> {
        let doc = self.docs.get_mut(uri).ok_or(ChangeError::NotOpen)?;
        if version <= doc.version {
            return Err(ChangeError::Stale {
                held: doc.version,
                got: version,
            });
        }
        // Changes in one notification apply one after the other, each to
        // the text left by the previous one.
        for c in changes {
            doc.apply(c, enc);
        }
        doc.version = version;
        Ok(doc)
    }

    /// Forget a closed document, giving it back.
    pub fn close(&mut self, uri: &Url) -> Option<Document> {
        self.docs.remove(uri)
    }

    /// The open document at `uri`.
    pub fn get(&self, uri: &Url) -> Option<&Document> {
        self.docs.get(uri)
    }

    /// The open document at `uri`, to change it.
    pub fn get_mut(&mut self, uri: &Url) -> Option<&mut Document> {
        self.docs.get_mut(uri)
    }

    /// The URIs of every open document.
    pub fn uris(&self) -> Vec<Url> {
        self.docs.keys().cloned().collect()
    }

    /// The open document for a file path, if any.
    pub fn by_path(&self, path: &std::path::Path) -> Option<(&Url, &Document)> {
        self.docs
            .iter()
            .find(|(_, d)| d.path.as_deref() == Some(path))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use tower_lsp::lsp_types::{Position, Range};

    fn edit(sl: u32, sc: u32, el: u32, ec: u32, text: &str) -> TextDocumentContentChangeEvent {
        TextDocumentContentChangeEvent {
            range: Some(Range::new(Position::new(sl, sc), Position::new(el, ec))),
            range_length: None,
            text: text.into(),
        }
    }

    fn uri() -> Url {
        Url::parse("file:///w/deck.rill").unwrap()
    }

    #[test]
    fn incremental_edits_apply_in_order() {
        let mut d = Documents::default();
        d.open(uri(), 1, "kx = 150 psi\nporosity = 0.2\n");
        // Replace `psi` by `md`, then insert a line, in one notification.
        let doc = d
            .change(
                &uri(),
                2,
                &[edit(0, 9, 0, 12, "md"), edit(1, 0, 1, 0, "# Ω😀\n")],
                Encoding::Utf16,
            )
            .unwrap();
        assert_eq!(&*doc.text(), "kx = 150 md\n# Ω😀\nporosity = 0.2\n");
        // An edit after the emoji, in UTF-16 columns: `# Ω😀` is 5 units.
        let doc = d
            .change(&uri(), 3, &[edit(1, 5, 1, 5, "!")], Encoding::Utf16)
            .unwrap();
        assert_eq!(&*doc.text(), "kx = 150 md\n# Ω😀!\nporosity = 0.2\n");
        // The same place in UTF-8 columns is byte 8.
        let doc = d
            .change(&uri(), 4, &[edit(1, 8, 1, 9, "?")], Encoding::Utf8)
            .unwrap();
        assert_eq!(&*doc.text(), "kx = 150 md\n# Ω😀?\nporosity = 0.2\n");
        // A change without a range replaces everything.
        let full = TextDocumentContentChangeEvent {
            range: None,
            range_length: None,
            text: "grid {}".into(),
        };
        let doc = d.change(&uri(), 5, &[full], Encoding::Utf16).unwrap();
        assert_eq!(&*doc.text(), "grid {}");
    }

    #[test]
    fn stale_and_repeated_versions_are_dropped() {
        let mut d = Documents::default();
        d.open(uri(), 3, "abc");
        assert_eq!(
            d.change(&uri(), 3, &[edit(0, 0, 0, 0, "x")], Encoding::Utf16)
                .err(),
            Some(ChangeError::Stale { held: 3, got: 3 })
        );
        assert_eq!(
            d.change(&uri(), 2, &[edit(0, 0, 0, 0, "x")], Encoding::Utf16)
                .err(),
            Some(ChangeError::Stale { held: 3, got: 2 })
        );
        assert_eq!(d.get_mut(&uri()).unwrap().text().as_ref(), "abc");
        // Versions may skip numbers; only their order matters.
        d.change(&uri(), 7, &[edit(0, 3, 0, 3, "d")], Encoding::Utf16)
            .unwrap();
        assert_eq!(d.get(&uri()).unwrap().version, 7);
        let other = Url::parse("file:///w/other.rill").unwrap();
        assert_eq!(
            d.change(&other, 1, &[], Encoding::Utf16).err(),
            Some(ChangeError::NotOpen)
        );
    }

    #[test]
    fn ranges_past_the_end_and_reversed_clamp() {
        let mut d = Documents::default();
        d.open(uri(), 1, "ab\ncd");
        let doc = d
            .change(&uri(), 2, &[edit(1, 1, 9, 9, "X")], Encoding::Utf16)
            .unwrap();
        assert_eq!(&*doc.text(), "ab\ncX");
        let doc = d
            .change(&uri(), 3, &[edit(0, 2, 0, 1, "")], Encoding::Utf16)
            .unwrap();
        assert_eq!(&*doc.text(), "a\ncX");
    }
}
