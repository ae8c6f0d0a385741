//! `last_state.json` and `last_state.f64`: the state at the last report
//! time, for tools that show a run's numbers beside the deck (the language
//! server's hover) and for scripts.
//!
//! `last_state.json` holds the header, in SI units whatever the report
//! units: the case digest (`rill_model::digest`), which says whether the
//! deck still describes this run; the time; the grid size; each well's
//! rate, BHP and cumulative, each boundary's and aquifer's rate and
//! cumulative; and the layout of the binary file. `last_state.f64` holds
//! four arrays of little-endian doubles, one value per grid cell in grid
//! order (i fastest, then j, then k): `pressure` (Pa, NaN in inactive
//! cells; the oil pressure in an oil-water run), then `flux_x`, `flux_y`,
//! `flux_z`, the surface flux through each cell's `+i`, `+j`, `+k` face
//! (m^3/s, positive towards the larger index; 0 on the grid's edge; oil
//! plus water in an oil-water run), and in an oil-water run a fifth,
//! `water_saturation` (NaN in inactive cells). The header's
//! `arrays.order` names them. In Python:
//! `numpy.fromfile("last_state.f64", "<f8").reshape(len(order), nz, ny, nx)`.
//!
//! Rates and cumulatives are written as the series write them (round-off
//! as 0, see [`crate::ZeroScale`]).

use std::io::{self, Write};

use rill_model::Case;
use rill_sim::{FaceFluxes, RunResults};
use serde_json::json;

use crate::ZeroScale;

/// What the writer needs beyond the results: the case digest and the face
/// fluxes at the last report time (computed by the caller with the
/// simulator's own formula).
#[derive(Debug, Clone, PartialEq)]
pub struct LastState {
    /// `rill_model::digest::case_digest` of the case that ran.
    pub digest: String,
    /// Fluxes at the last report time.
    pub fluxes: FaceFluxes,
}

/// Names of the arrays in `last_state.f64`, in file order.
pub const ARRAYS: [&str; 4] = ["pressure", "flux_x", "flux_y", "flux_z"];

/// The arrays of an oil-water run: those of [`ARRAYS`], then the cells'
/// water saturation.
pub const OIL_WATER_ARRAYS: [&str; 5] =
    ["pressure", "flux_x", "flux_y", "flux_z", "water_saturation"];

/// The water saturation at the last report time of an oil-water run.
pub(crate) fn last_saturation(results: &RunResults) -> Option<&[f64]> {
    results
        .oil_water
        .as_ref()
        .and_then(|ow| ow.saturation.last())
        .map(Vec::as_slice)
}

/// Writes the header.
pub(crate) fn write_header(
    w: &mut dyn Write,
    case: &Case,
    results: &RunResults,
    state: &LastState,
) -> io::Result<()> {
    let zero = ZeroScale::new(results);
    let last = |v: &[f64]| v.last().copied().unwrap_or(0.0);
    let g = &case.grid;
    let order: &[&str] = if last_saturation(results).is_some() {
        &OIL_WATER_ARRAYS
    } else {
        &ARRAYS
    };
    let doc = json!({
        "format": "rill-last-state",
        "format_version": 1,
        "case_digest": state.digest,
        "time_s": results.times.last().copied().unwrap_or(0.0),
        "report_time_index": results.times.len().saturating_sub(1),
        "grid": [g.nx, g.ny, g.nz],
        "units": "si",
        "arrays": {"file": "last_state.f64", "order": order, "dtype": "<f8"},
        "wells": results.wells.iter().map(|w| json!({
            "name": w.name,
            "rate_m3_s": zero.rate(last(&w.rate)),
            "bhp_pa": finite(last(&w.bhp)),
            "cumulative_m3": zero.volume(last(&w.cumulative)),
        })).collect::<Vec<_>>(),
        "boundaries": results.boundaries.iter().map(|b| json!({
            "name": b.name,
            "rate_m3_s": zero.rate(last(&b.rate)),
            "cumulative_m3": zero.volume(last(&b.cumulative)),
        })).collect::<Vec<_>>(),
        "aquifers": results.aquifers.iter().map(|a| json!({
            "name": a.name,
            "rate_m3_s": zero.rate(last(&a.rate)),
            "cumulative_m3": zero.volume(last(&a.cumulative)),
            "pressure_pa": finite(last(&a.pressure)),
        })).collect::<Vec<_>>(),
    });
    serde_json::to_writer_pretty(&mut *w, &doc).map_err(io::Error::other)?;
    w.write_all(b"\n")
}

/// A non-finite value as JSON null.
fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// Writes the arrays: `pressure`, the three flux arrays and, in an
/// oil-water run, the water saturation.
pub(crate) fn write_arrays(
    w: &mut dyn Write,
    pressure: &[f64],
    state: &LastState,
    water_saturation: Option<&[f64]>,
) -> io::Result<()> {
    let f = &state.fluxes;
    for array in [pressure, &f.x, &f.y, &f.z]
        .into_iter()
        .chain(water_saturation)
    {
        for v in array {
            w.write_all(&v.to_le_bytes())?;
        }
    }
    Ok(())
}
