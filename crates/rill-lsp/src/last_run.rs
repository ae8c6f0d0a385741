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
    // The arrays the file holds, in order: the four of every run, then an
    // oil-water run's water saturation.
    let order: Vec<&str> = head["arrays"]["order"]
        .as_array()?
        .iter()
        .map(Value::as_str)
        .collect::<Option<_>>()?;
    let oil_water = match order[..] {
        ["pressure", "flux_x", "flux_y", "flux_z"] => false,
        ["pressure", "flux_x", "flux_y", "flux_z", "water_saturation"] => true,
        _ => return None,
    };
    let bytes = std::fs::read(dir.join(ARRAYS)).ok()?;
    if bytes.len() != n.checked_mul(order.len() * 8)? {
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
    let water_saturation = if oil_water {
        Some(arrays.next()?)
    } else {
        None
    };
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
        water_saturation,
        wells,
        boundaries: flows("boundaries")?,
        aquifers: flows("aquifers")?,
    };
    Some((digest, values))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A result set of a 2 x 1 x 1 grid whose header lists `order` and whose
    /// file holds `arrays` arrays, array `a` cell `c` holding `10 a + c`.
    fn set(order: &[&str], arrays: usize) -> tempfile::TempDir {
        let dir = tempfile::tempdir().unwrap();
        let head = serde_json::json!({
            "format": "rill-last-state",
            "format_version": 1,
            "case_digest": "d",
            "time_s": 86400.0,
            "grid": [2, 1, 1],
            "arrays": {"file": ARRAYS, "order": order, "dtype": "<f8"},
            "wells": [],
            "boundaries": [],
            "aquifers": [],
        });
        std::fs::write(dir.path().join(HEADER), head.to_string()).unwrap();
        let bytes: Vec<u8> = (0..arrays * 2)
            .flat_map(|k| (10.0 * (k / 2) as f64 + (k % 2) as f64).to_le_bytes())
            .collect();
        std::fs::write(dir.path().join(ARRAYS), bytes).unwrap();
        dir
    }

    const FOUR: [&str; 4] = ["pressure", "flux_x", "flux_y", "flux_z"];
    const FIVE: [&str; 5] = ["pressure", "flux_x", "flux_y", "flux_z", "water_saturation"];

    #[test]
    fn an_oil_water_set_gives_its_saturations_and_a_single_phase_set_none() {
        let dir = set(&FIVE, 5);
        let (_, v) = read(dir.path()).unwrap();
        assert_eq!(v.pressure, [0.0, 1.0]);
        assert_eq!(v.flux[2], [30.0, 31.0]);
        assert_eq!(v.water_saturation, Some(vec![40.0, 41.0]));
        let dir = set(&FOUR, 4);
        let (_, v) = read(dir.path()).unwrap();
        assert_eq!(v.water_saturation, None);
        assert_eq!(v.flux[2], [30.0, 31.0]);
    }

    #[test]
    fn a_set_whose_arrays_do_not_match_its_header_is_not_read() {
        // Five arrays named, four written; four named, five written; an
        // array of a name this reader does not know.
        assert!(read(set(&FIVE, 4).path()).is_none());
        assert!(read(set(&FOUR, 5).path()).is_none());
        let odd = ["pressure", "flux_x", "flux_y", "flux_z", "oil_saturation"];
        assert!(read(set(&odd, 5).path()).is_none());
    }
}
