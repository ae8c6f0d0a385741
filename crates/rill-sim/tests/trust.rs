//! Runs an engineer can trust: a run that reaches a state no liquid can
//! have stops with an error that names the cell or well and the time.
//! Fictional "Wren" blocks.

mod common;

use common::*;
use rill_model::*;
use rill_sim::{run, ControlMode, NoObserver, RunError, RunOptions, WellAction};

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

/// A closed, compressible block of 5 x 1 x 4 cells, 50 ft layers from
/// 5000 ft, at 3000 psi at the top: a deep producer on a low BHP depletes
/// it, a shallow one on a rate with a BHP limit close to the initial
/// pressure at its datum.
fn depleting_block() -> Case {
    let mut case = block(
        vec![200.0 * FT; 5],
        vec![200.0 * FT],
        vec![50.0 * FT; 4],
        5000.0 * FT,
    );
    case.rock.compressibility = 4e-6 / PSI;
    case.timeline.end = 200.0 * DAY;
    case.timeline.max_step = 10.0 * DAY;
    case.timeline.report_every = Some(5.0 * DAY);
    let deep = well(
        &case,
        "Wren-D",
        Role::Producer,
        0,
        0,
        3,
        3,
        Control::Bhp(1500.0 * PSI),
    );
    let mut shallow = well(
        &case,
        "Wren-S",
        Role::Producer,
        4,
        0,
        0,
        0,
        Control::Rate(300.0 * STB_DAY),
    );
    // Initial pressure at the shallow datum (5025 ft) is about 3011 psi.
    shallow.bhp_limit = Some(2950.0 * PSI);
    case.wells.push(deep);
    case.wells.push(shallow);
    case
}

#[test]
fn producers_on_bhp_limits_at_different_depths_never_inject() {
    let case = depleting_block();
    let res = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    for w in &res.wells {
        for (n, (q, cum)) in w.rate.iter().zip(&w.cumulative).enumerate() {
            assert!(*q >= 0.0, "{} rate {q} at report {n}", w.name);
            assert!(*cum >= 0.0, "{} cumulative {cum} at report {n}", w.name);
        }
        assert!(w.cumulative.windows(2).all(|c| c[1] >= c[0]), "{}", w.name);
    }
    // The deep producer drew the block below the shallow one's limit: at
    // its limit it would have injected, so the run shut it and says so.
    let s = &res.wells[1];
    assert_eq!(*s.mode.last().unwrap(), ControlMode::Shut);
    assert_eq!(*s.rate.last().unwrap(), 0.0);
    assert!(*s.bhp.last().unwrap() < 2950.0 * PSI);
    let shut: Vec<_> = res.events.iter().filter(|e| e.well == "Wren-S").collect();
    assert_eq!(
        shut.first().map(|e| e.action),
        Some(WellAction::Shut),
        "{:?}",
        res.events
    );
    assert!(shut[0].time > 0.0 && shut[0].time < case.timeline.end);
    // It had produced before it was shut.
    assert!(*s.cumulative.last().unwrap() > 0.0);
}

#[test]
fn an_injector_limited_below_the_reservoir_pressure_stays_shut() {
    // The deep producer now draws the block only to 2900 psi at its datum:
    // the reservoir stays above the injector's limit all along.
    let mut case = depleting_block();
    case.wells.truncate(1);
    case.wells[0].control = Control::Bhp(2900.0 * PSI);
    let mut inj = well(
        &case,
        "Wren-I",
        Role::Injector,
        4,
        0,
        0,
        3,
        Control::Rate(200.0 * STB_DAY),
    );
    inj.bhp_limit = Some(2500.0 * PSI);
    case.wells.push(inj);
    let res = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let s = &res.wells[1];
    assert!(s.rate.iter().all(|q| *q == 0.0), "{:?}", s.rate);
    assert!(s.cumulative.iter().all(|q| *q == 0.0));
    assert!(
        s.mode[1..].iter().all(|m| *m == ControlMode::Shut),
        "{:?}",
        s.mode
    );
    let ev: Vec<_> = res.events.iter().filter(|e| e.well == "Wren-I").collect();
    assert_eq!(ev.len(), 1, "{:?}", res.events);
    assert_eq!((ev[0].action, ev[0].time), (WellAction::Shut, 0.0));
}

#[test]
fn a_shut_producer_reopens_when_an_injector_lifts_the_pressure() {
    // The deep producer depletes the block and the shallow one shuts. The
    // third well, an injector held at 1000 psi (below the reservoir: it
    // would produce), is shut from the start. At 100 days the deep
    // producer's BHP rises to 4000 psi, above the reservoir (it would
    // inject: it shuts), and the injector turns to 800 stb/day: the pressure
    // rises and the shallow producer reopens.
    let mut case = depleting_block();
    let mut inj = well(
        &case,
        "Wren-I",
        Role::Injector,
        2,
        0,
        3,
        3,
        Control::Rate(800.0 * STB_DAY),
    );
    inj.bhp_limit = Some(4500.0 * PSI);
    inj.control = Control::Bhp(1000.0 * PSI);
    case.wells.push(inj);
    case.timeline.events.push(Event {
        time: 100.0 * DAY,
        changes: vec![
            WellChange {
                well: 0,
                control: Some(Control::Bhp(4000.0 * PSI)),
                bhp_limit: None,
                skin: None,
            },
            WellChange {
                well: 2,
                control: Some(Control::Rate(800.0 * STB_DAY)),
                bhp_limit: None,
                skin: None,
            },
        ],
        origin: Origin::default(),
    });
    let res = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let names = |w: &str| -> Vec<WellAction> {
        res.events
            .iter()
            .filter(|e| e.well == w)
            .map(|e| e.action)
            .collect()
    };
    assert_eq!(
        names("Wren-S").first(),
        Some(&WellAction::Shut),
        "{:?}",
        res.events
    );
    assert!(
        names("Wren-S").contains(&WellAction::Reopened),
        "{:?}",
        res.events
    );
    let reopened = res
        .events
        .iter()
        .find(|e| e.well == "Wren-S" && e.action == WellAction::Reopened)
        .unwrap();
    assert!(reopened.time >= 100.0 * DAY, "{:?}", res.events);
    for w in &res.wells[..2] {
        assert!(w.rate.iter().all(|q| *q >= 0.0), "{}: {:?}", w.name, w.rate);
    }
    assert!(
        res.wells[2].rate.iter().all(|q| *q <= 0.0),
        "{:?}",
        res.wells[2].rate
    );
}

#[test]
fn a_well_shut_by_the_deck_flows_nothing_until_an_event_opens_it() {
    let mut case = depleting_block();
    case.wells[1].control = Control::Shut;
    case.timeline.events.push(Event {
        time: 50.0 * DAY,
        changes: vec![WellChange {
            well: 1,
            control: Some(Control::Rate(300.0 * STB_DAY)),
            bhp_limit: Some(1000.0 * PSI),
            skin: None,
        }],
        origin: Origin::default(),
    });
    case.wells[0].control = Control::Bhp(2900.0 * PSI);
    let res = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let s = &res.wells[1];
    for (n, t) in res.times.iter().enumerate() {
        if *t <= 50.0 * DAY {
            assert_eq!(s.rate[n], 0.0, "t = {t}");
            assert_eq!(s.mode[n], ControlMode::Shut);
        } else {
            // On its rate, or on its limit once the block cannot give it.
            assert!(
                s.rate[n] > 0.0 && s.rate[n] <= 300.0 * STB_DAY * (1.0 + 1e-8),
                "t = {t}"
            );
            assert_ne!(s.mode[n], ControlMode::Shut);
        }
    }
    let ev: Vec<_> = res.events.iter().filter(|e| e.well == "Wren-S").collect();
    assert_eq!(ev.len(), 1, "{:?}", res.events);
    assert_eq!(
        (ev[0].action, ev[0].time),
        (WellAction::Reopened, 50.0 * DAY)
    );
}
