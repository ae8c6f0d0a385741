//! The last run's values for hover. They are read from the deck's result
//! set on disk (`last_state.json` and `last_state.f64`, written by
//! `rill-output`), kept while those files stay the same, and handed to
//! hover only while the deck still lowers to the case that ran: the case
//! digest recorded by the run must equal the digest of the current
//! analysis, so any edit that changes a simulated value drops them at once
//! and a comment or a layout change keeps them.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex, Weak};
use std::time::SystemTime;

use rill_ide::{RunFlow, RunValues, RunWell};
use serde_json::Value;

use crate::state::{Analyzed, Shared};

/// Result sets read from disk and case digests of analyses, both kept.
#[derive(Default)]
pub struct LastRuns {
    sets: Mutex<HashMap<PathBuf, Loaded>>,
    /// The digest of each live analysis that asked (`None`: no case).
    digests: Mutex<Vec<(Weak<Analyzed>, Option<String>)>>,
}

/// A result set's last state as read, with the stamp of its files.
struct Loaded {
    stamp: Stamp,
    digest: String,
    values: Arc<RunValues>,
}

/// Modification time and length of both files: a new run replaces them.
type Stamp = [(Option<SystemTime>, u64); 2];

const HEADER: &str = "last_state.json";
const ARRAYS: &str = "last_state.f64";

/// The last run's values for hover on `analyzed`, when its deck has a
/// result set whose case digest matches the analysis. Reads files and
/// hashes the case: call it off the async runtime.
pub fn for_hover(shared: &Shared, analyzed: &Arc<Analyzed>) -> Option<Arc<RunValues>> {
    let snap = &analyzed.snap;
    let deck = snap.context().unwrap_or(snap.path()).to_path_buf();
    let config = shared.config();
    let dir = config.settings.output_dir(&deck, config.base());
    let (digest, values) = shared.last_runs.load(&dir)?;
    let current = shared.last_runs.digest(analyzed)?;
    (current == digest).then_some(values)
}

impl LastRuns {
    /// The set in `dir`: from memory while its files are unchanged.
    fn load(&self, dir: &Path) -> Option<(String, Arc<RunValues>)> {
        let stamp = stamp(dir)?;
        let mut sets = self.sets.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(l) = sets.get(dir).filter(|l| l.stamp == stamp) {
            return Some((l.digest.clone(), l.values.clone()));
        }
        let Some((digest, values)) = read(dir) else {
            sets.remove(dir);
            return None;
        };
        let values = Arc::new(values);
        sets.insert(
            dir.to_path_buf(),
            Loaded {
                stamp,
                digest: digest.clone(),
                values: values.clone(),
            },
        );
        Some((digest, values))
    }

    /// The case digest of `analyzed`, computed once per analysis.
    fn digest(&self, analyzed: &Arc<Analyzed>) -> Option<String> {
        let mut digests = self.digests.lock().unwrap_or_else(|e| e.into_inner());
        digests.retain(|(w, _)| w.strong_count() > 0);
        if let Some((_, d)) = digests
            .iter()
            .find(|(w, _)| std::ptr::eq(w.as_ptr(), Arc::as_ptr(analyzed)))
        {
            return d.clone();
        }
        let d = analyzed
            .snap
            .analysis()
            .case
            .as_ref()
            .map(rill_model::digest::case_digest);
        digests.push((Arc::downgrade(analyzed), d.clone()));
        d
    }
}

fn stamp(dir: &Path) -> Option<Stamp> {
    let one = |name: &str| {
        let m = std::fs::metadata(dir.join(name)).ok()?;
        Some((m.modified().ok(), m.len()))
    };
    Some([one(HEADER)?, one(ARRAYS)?])
}

/// Reads a result set's last state; `None` when it is missing, of another
/// format, or inconsistent.
fn read(dir: &Path) -> Option<(String, RunValues)> {
    let head: Value = serde_json::from_slice(&std::fs::read(dir.join(HEADER)).ok()?).ok()?;
    if head["format"] != "rill-last-state" || head["format_version"] != 1 {
        return None;
    }
    let digest = head["case_digest"].as_str()?.to_string();
    let grid: Vec<usize> = head["grid"]
        .as_array()?
        .iter()
        .map(|v| v.as_u64().map(|n| n as usize))
        .collect::<Option<_>>()?;
    let [nx, ny, nz] = grid[..] else { return None };
    let n = nx.checked_mul(ny)?.checked_mul(nz)?;
    if n == 0 {
        return None;
    }
    let bytes = std::fs::read(dir.join(ARRAYS)).ok()?;
    if bytes.len() != n.checked_mul(4 * 8)? {
        return None;
    }
    let mut arrays = bytes
        .chunks_exact(n * 8)
        .map(|a| {
            a.chunks_exact(8)
                .map(|b| f64::from_le_bytes(b.try_into().expect("8 bytes")))
                .collect::<Vec<f64>>()
        })
        .collect::<Vec<_>>()
        .into_iter();
    let pressure = arrays.next()?;
    let flux = [arrays.next()?, arrays.next()?, arrays.next()?];
    // A null (not finite) number reads as NaN.
    let num = |v: &Value| v.as_f64().unwrap_or(f64::NAN);
    let flows = |key: &str| -> Option<Vec<RunFlow>> {
        head[key]
            .as_array()?
            .iter()
            .map(|f| {
                Some(RunFlow {
                    name: f["name"].as_str()?.to_string(),
                    rate: num(&f["rate_m3_s"]),
                    cumulative: num(&f["cumulative_m3"]),
                    pressure: f.get("pressure_pa").map(num),
                })
            })
            .collect()
    };
    let wells = head["wells"]
        .as_array()?
        .iter()
        .map(|w| {
            Some(RunWell {
                name: w["name"].as_str()?.to_string(),
                rate: num(&w["rate_m3_s"]),
                bhp: num(&w["bhp_pa"]),
                cumulative: num(&w["cumulative_m3"]),
            })
        })
        .collect::<Option<Vec<_>>>()?;
    let values = RunValues {
        time: head["time_s"].as_f64()?,
        grid: (nx, ny, nz),
        pressure,
        flux,
        wells,
        boundaries: flows("boundaries")?,
        aquifers: flows("aquifers")?,
    };
    Some((digest, values))
}
