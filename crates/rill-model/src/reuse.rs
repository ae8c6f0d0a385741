//! The one cache of an analysis, owned by its caller and passed in
//! (`analyze_text_with`): results of one analysis kept for the next, and
//! the parsed array files. A single check makes a fresh one that dies with
//! it (it still spares a second parse of an array file used twice); an
//! editor keeps one for the session.
//!
//! Kept results are per-cell arrays derived from the deck (a property
//! converted to SI, `0.1 * kx`, a patched property, a uniform value spread
//! over the cells) and the scans of the checks over them. An editor
//! re-analyses the whole deck on every keystroke; on a million-cell case
//! recomputing those arrays costs tens of milliseconds and, worse, tens of
//! megabytes of fresh pages each time. With a kept [`Reuse`], an edit that
//! leaves the rock alone finds every array and scan already made.
//!
//! Parsed array files are kept by path with the bytes they were parsed
//! from, and handed out only for the very same bytes (the same `Arc`: a
//! source that caches unchanged files hands out the same one), so that a
//! million-cell deck re-checks without re-parsing its arrays.
//!
//! A result is keyed by what was computed, the arrays it read (by identity:
//! the entry holds them, so no other array can take their address while it
//! lives) and its other inputs by value. Keys are exact, never hashes of
//! values, so a kept result is only ever handed out for the same inputs.
//!
//! It also keeps spare per-cell buffers: the arrays of dropped results go
//! back to it rather than to the allocator, and [`Reuse::prepare`] fills it
//! while the editor is idle, so that the array of the next edit is written
//! into memory already touched. Fresh memory was measured as the slowest
//! part of the first edits after opening a million-cell deck.
//!
//! This module must never decide what to compute: it only remembers.

use std::any::Any;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

/// Entries that none of the last `KEEP` analyses used are dropped. One:
/// the arrays of abandoned values (each version of `kz = 0.1 * kx` while it
/// is typed) go at once, so that the next version reuses their memory
/// instead of touching fresh pages, which measured as the slowest part of
/// the first edits after opening (worst 50 ms with four kept, 21 ms with
/// one, on the 1.12-million-cell case). An undo recomputes what it needs.
const KEEP: u64 = 1;

#[derive(Debug, Clone, PartialEq, Eq, Hash)]
struct Key {
    what: &'static str,
    arrays: Vec<usize>,
    params: Vec<u64>,
}

/// An input of a kept result, known by identity: any shared value.
pub type Held = Arc<dyn Any + Send + Sync>;

struct Entry {
    value: Box<dyn Any + Send + Sync>,
    /// Held so that the addresses in the key stay unique while the entry lives.
    inputs: Vec<Held>,
    used: u64,
}

/// Spare per-cell buffers kept at most: two for the arrays of the next edit,
/// two more for those its expression makes on the way.
const MAX_SPARES: usize = 4;

#[derive(Default)]
struct Inner {
    analysis: u64,
    entries: HashMap<Key, Entry>,
    /// Buffers of per-cell values whose contents no longer matter.
    spares: Vec<Vec<f64>>,
    /// The same for per-cell flags (the checker's flow passes).
    flag_spares: Vec<Vec<bool>>,
    /// Parsed array files by path. Not subject to [`KEEP`]: an array file
    /// stays parsed while its bytes are unchanged, whichever deck the
    /// last analysis was of.
    parsed: HashMap<PathBuf, ParsedArray>,
}

/// The numbers of an array file with the bytes they were parsed from.
struct ParsedArray {
    bytes: Arc<[u8]>,
    numbers: Arc<Vec<f64>>,
}

impl Inner {
    fn keep_spare(&mut self, v: Vec<f64>) {
        if self.spares.len() < MAX_SPARES && !v.is_empty() {
            self.spares.push(v);
        }
    }

    fn keep_flag_spare(&mut self, v: Vec<bool>) {
        if self.flag_spares.len() < MAX_SPARES && !v.is_empty() {
            self.flag_spares.push(v);
        }
    }

    /// Take the buffers of a dropped entry that nothing else holds.
    fn reclaim(&mut self, entry: Entry) {
        let Entry { value, inputs, .. } = entry;
        let mut arrays: Vec<Arc<Vec<f64>>> = inputs
            .into_iter()
            .filter_map(|input| input.downcast::<Vec<f64>>().ok())
            .collect();
        let mut flags = None;
        if let Some(a) = value.downcast_ref::<Arc<Vec<f64>>>() {
            arrays.push(a.clone());
        } else if let Some(Some(crate::props::Field::Cells(a))) =
            value.downcast_ref::<Option<crate::props::Field>>()
        {
            arrays.push(a.clone());
        } else if let Some(f) = value.downcast_ref::<Arc<Vec<bool>>>() {
            flags = Some(f.clone());
        }
        // The entry's own hold goes first, so that ours may be the last.
        drop(value);
        for a in arrays {
            if let Ok(v) = Arc::try_unwrap(a) {
                self.keep_spare(v);
            }
        }
        if let Some(Ok(v)) = flags.map(Arc::try_unwrap) {
            self.keep_flag_spare(v);
        }
    }
}

/// Kept results, shared by the analyses made through one source.
#[derive(Default)]
pub struct Reuse {
    inner: Mutex<Inner>,
}

impl std::fmt::Debug for Reuse {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Reuse")
            .field("entries", &self.len())
            .finish()
    }
}

impl Reuse {
    /// An empty cache.
    pub fn new() -> Self {
        Self::default()
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, Inner> {
        // The map is consistent between statements; a panic elsewhere must
        // not stop later analyses from using it.
        self.inner.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// Start an analysis: count it and drop what the last analyses left unused.
    pub fn begin(&self) {
        let mut inner = self.lock();
        inner.analysis += 1;
        let now = inner.analysis;
        let stale: Vec<Key> = inner
            .entries
            .iter()
            .filter(|(_, e)| e.used + KEEP < now)
            .map(|(k, _)| k.clone())
            .collect();
        for key in stale {
            if let Some(entry) = inner.entries.remove(&key) {
                inner.reclaim(entry);
            }
        }
    }

    /// A buffer of exactly `len` values whose contents do not matter, if a
    /// spare one is kept.
    pub fn spare(&self, len: usize) -> Option<Vec<f64>> {
        let mut inner = self.lock();
        let at = inner.spares.iter().position(|v| v.len() == len)?;
        Some(inner.spares.swap_remove(at))
    }

    /// A buffer of exactly `len` flags whose contents do not matter, if a
    /// spare one is kept.
    pub fn spare_flags(&self, len: usize) -> Option<Vec<bool>> {
        let mut inner = self.lock();
        let at = inner.flag_spares.iter().position(|v| v.len() == len)?;
        Some(inner.flag_spares.swap_remove(at))
    }

    /// Give back a buffer that is no longer needed.
    pub fn give_back(&self, v: Vec<f64>) {
        self.lock().keep_spare(v);
    }

    /// Make sure that `count` spare buffers of `len` values are kept, their
    /// memory written once, and drop spares of other lengths (the grid
    /// changed). Meant for idle time: right after a deck is opened.
    /// Also one buffer of `len` flags, for the flow pass of the axis typed in.
    pub fn prepare(&self, len: usize, count: usize) {
        let (missing, flags_missing) = {
            let mut inner = self.lock();
            inner.spares.retain(|v| v.len() == len);
            inner.flag_spares.retain(|v| v.len() == len);
            (
                count.min(MAX_SPARES).saturating_sub(inner.spares.len()),
                inner.flag_spares.is_empty(),
            )
        };
        for _ in 0..missing {
            // Written element by element (not calloc'ed), so that the pages
            // are really there when an edit needs them.
            let mut v = Vec::with_capacity(len);
            v.resize(len, 0.0);
            std::hint::black_box(&mut v);
            self.lock().keep_spare(v);
        }
        if flags_missing {
            let mut v = Vec::with_capacity(len);
            v.resize(len, true);
            std::hint::black_box(&mut v);
            self.lock().keep_flag_spare(v);
        }
    }

    /// Number of spare buffers kept (values, flags).
    pub fn spares(&self) -> (usize, usize) {
        let inner = self.lock();
        (inner.spares.len(), inner.flag_spares.len())
    }

    /// Numbers parsed earlier from exactly these `bytes` of the array file
    /// at `path` (the same `Arc`, not equal contents).
    pub fn parsed_numbers(&self, path: &Path, bytes: &Arc<[u8]>) -> Option<Arc<Vec<f64>>> {
        let inner = self.lock();
        let held = inner.parsed.get(path)?;
        Arc::ptr_eq(&held.bytes, bytes).then(|| held.numbers.clone())
    }

    /// Keep the numbers parsed from `bytes` of the array file at `path`,
    /// replacing those of an earlier version.
    pub fn keep_parsed_numbers(&self, path: &Path, bytes: &Arc<[u8]>, numbers: &Arc<Vec<f64>>) {
        self.lock().parsed.insert(
            path.to_path_buf(),
            ParsedArray {
                bytes: bytes.clone(),
                numbers: numbers.clone(),
            },
        );
    }

    /// Forget the parsed numbers of the file at `path` (it changed on disk).
    pub fn forget_file(&self, path: &Path) {
        self.lock().parsed.remove(path);
    }

    /// Forget every parsed array file.
    pub fn clear_files(&self) {
        self.lock().parsed.clear();
    }

    /// Number of kept results.
    pub fn len(&self) -> usize {
        self.lock().entries.len()
    }

    /// Whether no result is kept.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The result of `compute` on `arrays` and `params`, kept under `what`.
    /// `params` must hold every input other than the arrays, in an encoding
    /// that `what` makes unambiguous.
    pub fn get_or<T: Clone + Send + Sync + 'static>(
        &self,
        what: &'static str,
        arrays: &[Arc<Vec<f64>>],
        params: &[u64],
        compute: impl FnOnce() -> T,
    ) -> T {
        let held: Vec<Held> = arrays.iter().map(|a| a.clone() as Held).collect();
        self.get_or_held(what, &held, params, compute)
    }

    /// [`Reuse::get_or`] with inputs of any type (a kept result of another
    /// computation, say), known by identity.
    pub fn get_or_held<T: Clone + Send + Sync + 'static>(
        &self,
        what: &'static str,
        inputs: &[Held],
        params: &[u64],
        compute: impl FnOnce() -> T,
    ) -> T {
        let key = Key {
            what,
            arrays: inputs
                .iter()
                .map(|a| Arc::as_ptr(a) as *const () as usize)
                .collect(),
            params: params.to_vec(),
        };
        {
            let mut inner = self.lock();
            let now = inner.analysis;
            if let Some(entry) = inner.entries.get_mut(&key) {
                if let Some(value) = entry.value.downcast_ref::<T>() {
                    entry.used = now;
                    return value.clone();
                }
            }
        }
        // Computed outside the lock: other analyses may use the map meanwhile.
        let value = compute();
        let mut inner = self.lock();
        let now = inner.analysis;
        inner.entries.insert(
            key,
            Entry {
                value: Box::new(value.clone()),
                inputs: inputs.to_vec(),
                used: now,
            },
        );
        value
    }
}

/// `reuse.get_or(...)` when there is a `Reuse`, else just `compute()`.
pub fn kept<T: Clone + Send + Sync + 'static>(
    reuse: Option<&Reuse>,
    what: &'static str,
    arrays: &[Arc<Vec<f64>>],
    params: &[u64],
    compute: impl FnOnce() -> T,
) -> T {
    match reuse {
        Some(r) => r.get_or(what, arrays, params, compute),
        None => compute(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::cell::Cell;

    #[test]
    fn same_arrays_and_params_compute_once() {
        let reuse = Reuse::new();
        let a = Arc::new(vec![1.0, 2.0]);
        let calls = Cell::new(0);
        let sum = || {
            calls.set(calls.get() + 1);
            a.iter().sum::<f64>()
        };
        reuse.begin();
        assert_eq!(reuse.get_or("sum", std::slice::from_ref(&a), &[], sum), 3.0);
        assert_eq!(reuse.get_or("sum", std::slice::from_ref(&a), &[], sum), 3.0);
        assert_eq!(calls.get(), 1);
        // Other params, another array with equal values, another name: computed again.
        assert_eq!(
            reuse.get_or("sum", std::slice::from_ref(&a), &[1], sum),
            3.0
        );
        let b = Arc::new(vec![1.0, 2.0]);
        assert_eq!(
            reuse.get_or("sum", std::slice::from_ref(&b), &[], || b
                .iter()
                .sum::<f64>()),
            3.0
        );
        assert_eq!(
            reuse.get_or("total", std::slice::from_ref(&a), &[], sum),
            3.0
        );
        assert_eq!(calls.get(), 3);
        assert_eq!(reuse.len(), 4);
    }

    #[test]
    fn entries_unused_for_a_while_are_dropped_and_release_their_inputs() {
        let reuse = Reuse::new();
        let a = Arc::new(vec![1.0]);
        reuse.begin();
        reuse.get_or("first", std::slice::from_ref(&a), &[], || a[0]);
        assert_eq!(Arc::strong_count(&a), 2, "the entry holds its input");
        for _ in 0..KEEP {
            reuse.begin();
        }
        assert_eq!(reuse.len(), 1, "kept for the last {KEEP} analyses");
        reuse.begin();
        assert!(reuse.is_empty());
        assert_eq!(Arc::strong_count(&a), 1);
    }

    #[test]
    fn arrays_of_dropped_entries_become_spares_unless_held_elsewhere() {
        let reuse = Reuse::new();
        reuse.begin();
        let held_elsewhere = reuse.get_or("a", &[], &[1], || Arc::new(vec![1.0; 8]));
        reuse.get_or("b", &[], &[2], || Arc::new(vec![2.0; 8]));
        reuse.get_or("flags", &[], &[3], || Arc::new(vec![true; 8]));
        for _ in 0..=KEEP {
            reuse.begin();
        }
        assert!(reuse.is_empty());
        assert_eq!(reuse.spares(), (1, 1), "only the arrays nothing else holds");
        assert_eq!(held_elsewhere[0], 1.0, "the held array is untouched");
        assert_eq!(reuse.spare(8).map(|v| v.len()), Some(8));
        assert_eq!(reuse.spare(8), None);
        assert_eq!(reuse.spare_flags(8).map(|v| v.len()), Some(8));
    }

    #[test]
    fn prepare_keeps_spares_of_one_length() {
        let reuse = Reuse::new();
        reuse.prepare(16, 2);
        assert_eq!(reuse.spares(), (2, 1));
        reuse.prepare(16, 2);
        assert_eq!(reuse.spares(), (2, 1), "already there");
        assert_eq!(reuse.spare(15), None, "only exact lengths");
        assert_eq!(reuse.spare_flags(16).map(|v| v.len()), Some(16));
        reuse.prepare(32, 1);
        assert_eq!(
            reuse.spares(),
            (1, 1),
            "spares of the old length are dropped"
        );
        for _ in 0..10 {
            reuse.give_back(vec![0.0; 32]);
        }
        assert_eq!(reuse.spares().0, MAX_SPARES);
    }

    #[test]
    fn a_use_renews_an_entry() {
        let reuse = Reuse::new();
        let a = Arc::new(vec![1.0]);
        for _ in 0..3 * KEEP {
            reuse.begin();
            reuse.get_or("first", std::slice::from_ref(&a), &[], || a[0]);
        }
        assert_eq!(reuse.len(), 1);
    }

    #[test]
    fn a_value_of_another_type_under_the_same_key_is_computed() {
        let reuse = Reuse::new();
        reuse.begin();
        assert_eq!(reuse.get_or("x", &[], &[], || 1u32), 1);
        assert_eq!(reuse.get_or("x", &[], &[], || 2.5f64), 2.5);
        assert_eq!(reuse.get_or("x", &[], &[], || 2.0f64), 2.5);
    }

    #[test]
    fn parsed_arrays_are_kept_while_the_bytes_are_unchanged() {
        let path = Path::new("/w/kx.txt");
        let reuse = Reuse::new();
        let bytes: Arc<[u8]> = Arc::from(&b"1 2"[..]);
        reuse.keep_parsed_numbers(path, &bytes, &Arc::new(vec![1.0, 2.0]));
        assert_eq!(
            reuse.parsed_numbers(path, &bytes.clone()).as_deref(),
            Some(&vec![1.0, 2.0])
        );
        // Equal contents in another buffer are another version of the file.
        let reread: Arc<[u8]> = Arc::from(&b"1 2"[..]);
        assert!(reuse.parsed_numbers(path, &reread).is_none());
        let changed: Arc<[u8]> = Arc::from(&b"1 2 3"[..]);
        assert!(reuse.parsed_numbers(path, &changed).is_none());
        reuse.forget_file(path);
        assert!(reuse.parsed_numbers(path, &bytes).is_none());
    }
}
