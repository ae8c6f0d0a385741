//! Which decks include which files: the index a fragment (a file of well
//! or boundary blocks) is checked through. Decks are found by walking
//! folders for `*.rill` files; only their top-level `include "..."`
//! directives are read, with `rill_syntax`'s parser, and every read goes
//! through a [`Source`] (so an editor's buffers win over the disk, and a
//! `DiskSource` keeps to regular files, its size limit and the workspace).

use rill_model::source::{normalize, Source};
use rill_syntax::{AtomKind, Item};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// The most folder entries one walk visits: a workspace holding a large
/// unrelated tree is indexed in part (and says so) rather than stalling.
pub const MAX_ENTRIES: usize = 50_000;

/// The deepest folder a walk descends into, below its start.
pub const MAX_DEPTH: usize = 16;

/// For every deck found, the files its `include` directives name.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Includers {
    /// Deck path (normalised) to the paths it includes (resolved, normalised).
    decks: BTreeMap<PathBuf, Vec<PathBuf>>,
    /// A walk stopped at [`MAX_ENTRIES`].
    truncated: bool,
}

/// The files `text`, the deck at `deck`, includes: top-level `include`
/// directives, resolved the way the analysis resolves them.
pub fn includes_of(deck: &Path, text: &str, source: &dyn Source) -> Vec<PathBuf> {
    // Most decks include nothing: skip the parse when the word is absent.
    if memchr::memmem::find(text.as_bytes(), b"include").is_none() {
        return Vec::new();
    }
    includes_in(deck, &rill_syntax::parse(text).items, source)
}

/// [`includes_of`] on a deck already parsed (`items`: its top level).
pub fn includes_in(deck: &Path, items: &[Item], source: &dyn Source) -> Vec<PathBuf> {
    let mut out: Vec<PathBuf> = items
        .iter()
        .filter_map(|item| match item {
            Item::Directive(d) if d.name.name == "include" => {
                match d.args.first().map(|a| &a.kind) {
                    Some(AtomKind::Str { value, .. }) => {
                        Some(normalize(&source.resolve(deck, value)))
                    }
                    _ => None,
                }
            }
            _ => None,
        })
        .collect();
    out.sort();
    out.dedup();
    out
}

impl Includers {
    /// An empty index.
    pub fn new() -> Self {
        Self::default()
    }

    /// Index every `*.rill` file under `folders` (hidden entries and
    /// symbolic links to folders are skipped), read through `source`.
    pub fn scan(folders: &[PathBuf], source: &dyn Source) -> Self {
        let mut index = Self::new();
        for folder in folders {
            index.scan_folder(folder, None, source);
        }
        index
    }

    /// Index the `*.rill` files under `folder`, leaving out the subtree
    /// `skip` (already indexed). Returns how many decks were read.
    pub fn scan_folder(
        &mut self,
        folder: &Path,
        skip: Option<&Path>,
        source: &dyn Source,
    ) -> usize {
        let mut read = 0;
        let mut entries = 0;
        let walk = walkdir::WalkDir::new(folder)
            .max_depth(MAX_DEPTH)
            .follow_links(false)
            .sort_by_file_name()
            .into_iter()
            .filter_entry(|e| {
                let hidden = e.depth() > 0 && e.file_name().to_string_lossy().starts_with('.');
                !hidden && skip.is_none_or(|s| e.path() != s)
            });
        for entry in walk.flatten() {
            entries += 1;
            if entries > MAX_ENTRIES {
                self.truncated = true;
                break;
            }
            let path = entry.path();
            if path.extension().is_none_or(|x| x != "rill") || entry.file_type().is_dir() {
                continue;
            }
            // Unreadable decks (too large, outside the workspace, not a
            // regular file) are left out: they include nothing.
            self.refresh(path, source);
            if self.decks.contains_key(&normalize(path)) {
                read += 1;
            }
        }
        read
    }

    /// Record the includes of `deck` from `text` (an open buffer). Returns
    /// whether they changed.
    pub fn set_text(&mut self, deck: &Path, text: &str, source: &dyn Source) -> bool {
        self.set_includes(deck, includes_of(deck, text, source))
    }

    /// Record that `deck` includes `includes` (from [`includes_in`] on a
    /// tree an analysis already parsed). Returns whether that changed.
    pub fn set_includes(&mut self, deck: &Path, includes: Vec<PathBuf>) -> bool {
        let key = normalize(deck);
        if self.decks.get(&key) == Some(&includes) {
            return false;
        }
        self.decks.insert(key, includes);
        true
    }

    /// Read `deck` again through `source` (it changed on disk, or its
    /// buffer closed); a deck that can no longer be read is forgotten.
    /// Returns whether its includes changed.
    pub fn refresh(&mut self, deck: &Path, source: &dyn Source) -> bool {
        match source.read(deck) {
            Ok(bytes) => {
                let (text, _) = rill_syntax::parse_bytes(&bytes);
                self.set_text(deck, &text, source)
            }
            Err(_) => self.remove(deck),
        }
    }

    /// Forget `deck` (deleted). Returns whether it was known.
    pub fn remove(&mut self, deck: &Path) -> bool {
        self.decks.remove(&normalize(deck)).is_some()
    }

    /// Whether a walk stopped early at [`MAX_ENTRIES`].
    pub fn is_truncated(&self) -> bool {
        self.truncated
    }

    /// How many decks are indexed.
    pub fn len(&self) -> usize {
        self.decks.len()
    }

    /// Whether no deck is indexed.
    pub fn is_empty(&self) -> bool {
        self.decks.is_empty()
    }

    /// The decks that include `file` directly, sorted.
    pub fn includers(&self, file: &Path) -> Vec<PathBuf> {
        let file = normalize(file);
        self.decks
            .iter()
            .filter(|(deck, inc)| **deck != file && inc.contains(&file))
            .map(|(deck, _)| deck.clone())
            .collect()
    }

    /// The outermost decks that read `file`, through any chain of includes:
    /// those no indexed deck includes (or, when every includer is itself
    /// included in a cycle, the direct includers). Sorted as
    /// [`Includers::choose`] ranks them, without regard to open buffers.
    pub fn top_decks(&self, file: &Path) -> Vec<PathBuf> {
        let file = normalize(file);
        let direct = self.includers(&file);
        let mut seen: BTreeSet<PathBuf> = BTreeSet::new();
        seen.insert(file.clone());
        let mut todo = direct.clone();
        let mut tops = Vec::new();
        while let Some(deck) = todo.pop() {
            if !seen.insert(deck.clone()) {
                continue;
            }
            let up: Vec<PathBuf> = self
                .includers(&deck)
                .into_iter()
                .filter(|u| *u != file)
                .collect();
            if up.is_empty() {
                tops.push(deck);
            } else {
                todo.extend(up.into_iter().filter(|u| !seen.contains(u)));
            }
        }
        if tops.is_empty() {
            tops = direct;
        }
        tops.sort_by(|a, b| rank(a).cmp(&rank(b)));
        tops
    }

    /// The deck to check `file` in: among [`Includers::top_decks`], an open
    /// one first (`is_open`), then the shortest path (fewest folders),
    /// then the alphabetically first. `None` when nothing includes it.
    pub fn choose(&self, file: &Path, is_open: &dyn Fn(&Path) -> bool) -> Option<PathBuf> {
        self.top_decks(file)
            .into_iter()
            .min_by(|a, b| (!is_open(a), rank(a)).cmp(&(!is_open(b), rank(b))))
    }
}

/// Fewest path components first, then alphabetical.
fn rank(path: &Path) -> (usize, &Path) {
    (path.components().count(), path)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rill_model::MemorySource;

    fn source() -> MemorySource {
        MemorySource::new()
            .with(
                "/w/main.rill",
                "grid {}\ninclude \"wells.rill\"\n# include \"no.rill\"\n",
            )
            .with("/w/wells.rill", "well \"A\" {}\n")
            .with(
                "/w/sub/alt.rill",
                "include \"../wells.rill\"\ninclude \"mid.rill\"\n",
            )
            .with("/w/sub/mid.rill", "include \"deep.rill\"\n")
            .with("/w/sub/deep.rill", "well \"B\" {}\n")
    }

    fn index(s: &MemorySource) -> Includers {
        let mut i = Includers::new();
        for deck in [
            "/w/main.rill",
            "/w/wells.rill",
            "/w/sub/alt.rill",
            "/w/sub/mid.rill",
            "/w/sub/deep.rill",
        ] {
            i.refresh(Path::new(deck), s);
        }
        i
    }

    #[test]
    fn includers_come_from_directives_not_comments() {
        let s = source();
        let i = index(&s);
        assert_eq!(
            i.includers(Path::new("/w/wells.rill")),
            vec![
                PathBuf::from("/w/main.rill"),
                PathBuf::from("/w/sub/alt.rill")
            ]
        );
        assert!(i.includers(Path::new("/w/no.rill")).is_empty());
    }

    #[test]
    fn the_outermost_deck_is_chosen_open_first_then_shortest() {
        let s = source();
        let i = index(&s);
        let none = |_: &Path| false;
        assert_eq!(
            i.choose(Path::new("/w/wells.rill"), &none),
            Some(PathBuf::from("/w/main.rill"))
        );
        let alt_open = |p: &Path| p == Path::new("/w/sub/alt.rill");
        assert_eq!(
            i.choose(Path::new("/w/wells.rill"), &alt_open),
            Some(PathBuf::from("/w/sub/alt.rill"))
        );
        // Through a chain: deep is read by mid, which alt includes.
        assert_eq!(
            i.top_decks(Path::new("/w/sub/deep.rill")),
            vec![PathBuf::from("/w/sub/alt.rill")]
        );
        assert_eq!(i.choose(Path::new("/w/main.rill"), &none), None);
    }

    #[test]
    fn a_cycle_still_names_its_includers() {
        let s = MemorySource::new()
            .with("/c/a.rill", "include \"b.rill\"\n")
            .with("/c/b.rill", "include \"a.rill\"\n");
        let mut i = Includers::new();
        i.refresh(Path::new("/c/a.rill"), &s);
        i.refresh(Path::new("/c/b.rill"), &s);
        assert_eq!(
            i.top_decks(Path::new("/c/a.rill")),
            vec![PathBuf::from("/c/b.rill")]
        );
    }

    #[test]
    fn edits_and_deletions_update_the_index() {
        let s = source();
        let mut i = index(&s);
        assert!(i.set_text(Path::new("/w/main.rill"), "grid {}\n", &s));
        assert!(!i.set_text(Path::new("/w/main.rill"), "grid {}\n", &s));
        assert_eq!(
            i.includers(Path::new("/w/wells.rill")),
            vec![PathBuf::from("/w/sub/alt.rill")]
        );
        assert!(!i.refresh(Path::new("/w/gone.rill"), &s));
        assert!(i.remove(Path::new("/w/sub/alt.rill")));
        assert!(i.includers(Path::new("/w/wells.rill")).is_empty());
    }

    #[test]
    fn a_walk_reads_decks_only_skipping_hidden_folders_and_outside_files() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path();
        std::fs::create_dir_all(root.join("case/.old")).unwrap();
        std::fs::write(root.join("case/main.rill"), "include \"wells.rill\"\n").unwrap();
        std::fs::write(root.join("case/wells.rill"), "well \"A\" {}\n").unwrap();
        std::fs::write(
            root.join("case/.old/main.rill"),
            "include \"../wells.rill\"\n",
        )
        .unwrap();
        std::fs::write(root.join("case/notes.txt"), "include \"wells.rill\"\n").unwrap();
        std::fs::create_dir(root.join("case/fifo.rill")).unwrap();
        let source = crate::DiskSource::confined(vec![root.join("case")], vec![]);
        let i = Includers::scan(&[root.to_path_buf()], &source);
        assert_eq!(i.len(), 2);
        assert_eq!(
            i.includers(&root.join("case/wells.rill")),
            vec![root.join("case/main.rill")]
        );
        // Nothing outside the source's reach is read.
        let elsewhere = crate::DiskSource::confined(vec![root.join("other")], vec![]);
        assert!(Includers::scan(&[root.to_path_buf()], &elsewhere).is_empty());
    }
}
