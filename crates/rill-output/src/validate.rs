//! The check that a run's results fit its case before anything is written,
//! so that no writer can index out of bounds.

use rill_model::Case;
use rill_sim::RunResults;

use crate::{oil_water, OutputError};

/// Checks that every series has one value per report time and every cell
/// array one value per cell, so that no writer can index out of bounds.
/// (How many pressure arrays there are is checked by the callers.) An
/// oil-water run's series and saturations are checked by
/// [`oil_water::validate`].
pub(crate) fn results(case: &Case, results: &RunResults) -> Result<(), OutputError> {
    let n = results.times.len();
    let grid = &case.grid;
    let cells = grid.cell_count();
    let bad = |what: String| Err(OutputError::Inconsistent(what));
    if n == 0 {
        return bad("there are no report times".into());
    }
    let check = |name: &str, len: usize| -> Result<(), OutputError> {
        if len == n {
            Ok(())
        } else {
            Err(OutputError::Inconsistent(format!(
                "{name} has {len} values for {n} report times"
            )))
        }
    };
    check("pressure_avg", results.pressure_avg.len())?;
    check("balance_error", results.balance_error.len())?;
    for w in &results.wells {
        check(&format!("well \"{}\" bhp", w.name), w.bhp.len())?;
        check(&format!("well \"{}\" rate", w.name), w.rate.len())?;
        check(
            &format!("well \"{}\" cumulative", w.name),
            w.cumulative.len(),
        )?;
        if !w.mode.is_empty() {
            check(&format!("well \"{}\" control mode", w.name), w.mode.len())?;
        }
    }
    for b in &results.boundaries {
        check(&format!("boundary \"{}\" rate", b.name), b.rate.len())?;
        check(
            &format!("boundary \"{}\" cumulative", b.name),
            b.cumulative.len(),
        )?;
    }
    for a in &results.aquifers {
        check(&format!("aquifer \"{}\" rate", a.name), a.rate.len())?;
        check(
            &format!("aquifer \"{}\" cumulative", a.name),
            a.cumulative.len(),
        )?;
        check(
            &format!("aquifer \"{}\" pressure", a.name),
            a.pressure.len(),
        )?;
    }
    if cells == 0 {
        return bad("the grid has no cells".into());
    }
    if grid.dx.len() != grid.nx
        || grid.dy.len() != grid.ny
        || grid.dz.len() != cells
        || grid.top.len() != grid.nx * grid.ny
    {
        return bad("the grid's dx, dy, dz or top arrays do not match its size".into());
    }
    let rock = &case.rock;
    if [
        rock.porosity.len(),
        rock.kx.len(),
        rock.ky.len(),
        rock.kz.len(),
    ]
    .iter()
    .any(|&l| l != cells)
    {
        return bad("the rock arrays do not have one value per cell".into());
    }
    if let Some((t, p)) = results
        .pressure
        .iter()
        .enumerate()
        .find(|(_, p)| p.len() != cells)
    {
        return bad(format!(
            "cell pressures at report time {t} have {} values for {cells} cells",
            p.len()
        ));
    }
    oil_water::validate(case, results)
}
