//! Runs an engineer can trust: a run that reaches a state no liquid can
//! have stops with an error that names the cell or well and the time.
//! Fictional "Wren" blocks.

mod common;

use common::*;
use rill_model::*;
use rill_sim::{run, NoObserver, RunError, RunOptions};

#[test]
fn over_produced_closed_block_stops_naming_cell_time_and_cause() {
    // One closed cell of 7124 bbl pore volume with a total compressibility
    // of 3e-6 1/psi: about 64 stb takes it from 3000 psi to zero, so a
    // producer on 100 stb/day without a BHP limit empties it in about 0.64
    // day, well inside the 10-day run.
    let mut case = block(
        vec![100.0 * FT],
        vec![100.0 * FT],
        vec![20.0 * FT],
        5000.0 * FT,
    );
    let w = well(
        &case,
        "Wren-1",
        Role::Producer,
        0,
        0,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    );
    case.wells.push(w);
    let err = run(&case, &RunOptions::default(), &mut NoObserver).unwrap_err();
    let RunError::Unphysical { time, reason, .. } = &err else {
        panic!("expected an unphysical-state error, got {err:?}");
    };
    assert!(*time > 0.3 * DAY && *time < 2.0 * DAY, "{time}");
    assert!(reason.contains("cell (1, 1, 1)"), "{reason}");
    assert!(reason.contains("\"Wren-1\""), "{reason}");
    assert!(err.to_string().contains("the run stopped"), "{err}");
}

#[test]
fn the_same_block_with_a_bhp_limit_runs_to_the_end() {
    let mut case = block(
        vec![100.0 * FT],
        vec![100.0 * FT],
        vec![20.0 * FT],
        5000.0 * FT,
    );
    let mut w = well(
        &case,
        "Wren-1",
        Role::Producer,
        0,
        0,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    );
    w.bhp_limit = Some(500.0 * PSI);
    case.wells.push(w);
    let res = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let last = *res.pressure_avg.last().unwrap();
    assert!(last > 0.0 && last.is_finite(), "{last}");
}

#[test]
fn a_rate_well_without_productivity_is_refused_by_name() {
    let mut case = block(
        vec![100.0 * FT; 2],
        vec![100.0 * FT],
        vec![20.0 * FT],
        5000.0 * FT,
    );
    let mut kx = case.rock.kx.to_vec();
    kx[1] = 0.0;
    case.rock.kx = kx.clone().into();
    case.rock.ky = kx.into();
    let w = well(
        &case,
        "Wren-2",
        Role::Producer,
        1,
        0,
        0,
        0,
        Control::Rate(10.0 * STB_DAY),
    );
    case.wells.push(w);
    let err = run(&case, &RunOptions::default(), &mut NoObserver).unwrap_err();
    assert!(matches!(err, RunError::Setup(_)), "{err:?}");
    assert!(err.to_string().contains("\"Wren-2\""), "{err}");
}
