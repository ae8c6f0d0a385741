//! The assembly's analytic Jacobian against central differences of its residual.

use super::*;
use rill_model::*;

fn small_case() -> Case {
    let (nx, ny, nz) = (3, 2, 2);
    let n = nx * ny * nz;
    let mut porosity = vec![0.2; n];
    porosity[4] = 0.0;
    Case {
        title: None,
        name: None,
        grid: Grid {
            nx,
            ny,
            nz,
            dx: vec![10.0, 20.0, 15.0],
            dy: vec![12.0, 8.0],
            dz: (0..n).map(|c| 2.0 + c as f64 * 0.1).collect(),
            top: vec![1000.0, 1001.0, 1002.0, 1000.5, 1001.5, 1003.0],
        },
        rock: Rock {
            porosity: porosity.into(),
            kx: (0..n).map(|c| 1e-13 * (1.0 + c as f64)).collect(),
            ky: vec![2e-13; n].into(),
            kz: vec![1e-14; n].into(),
            compressibility: 1e-9,
            ref_pressure: 2e7,
        },
        fluid: Fluid {
            name: None,
            viscosity: 1e-3,
            fvf: 1.0,
            compressibility: 1e-9,
            density: 1000.0,
            ref_pressure: 2e7,
        },
        oil_water: None,
        initial: Initial::Datum {
            pressure: 2e7,
            depth: 1000.0,
        },
        wells: vec![Well {
            name: "P".into(),
            role: Role::Producer,
            completions: vec![
                Completion {
                    i: 1,
                    j: 1,
                    k: 0,
                    cell: 4,
                    direction: Direction::Z,
                },
                Completion {
                    i: 0,
                    j: 0,
                    k: 1,
                    cell: 6,
                    direction: Direction::Z,
                },
                Completion {
                    i: 2,
                    j: 1,
                    k: 1,
                    cell: 11,
                    direction: Direction::Z,
                },
            ],
            radius: 0.1,
            skin: 0.0,
            control: Control::Rate(1e-3),
            bhp_limit: None,
            max_water_cut: None,
            origin: Origin::default(),
        }],
        boundaries: vec![Boundary {
            name: "E".into(),
            side: Side::East,
            pressure: 2.1e7,
            datum: Some(1000.0),
            select: rill_model::Selection::default(),
            origin: Origin::default(),
        }],
        faults: Vec::new(),
        aquifers: Vec::new(),
        timeline: Timeline {
            kind: RunKind::Transient,
            end: 1e5,
            first_step: 1e3,
            max_step: 1e4,
            min_step: rill_model::Timeline::DEFAULT_MIN_STEP,
            max_steps: rill_model::Timeline::DEFAULT_MAX_STEPS,
            growth: 1.5,
            report_every: None,
            report_at: Vec::new(),
            events: vec![],
        },
        report: ReportSettings::default(),
    }
}

/// The analytic Jacobian agrees with central differences of the residual.
#[test]
fn jacobian_matches_finite_differences() {
    let case = small_case();
    let d = Disc::new(&case);
    assert_eq!(d.n_cells, 11);
    let pvt = Pvt::new(&case.fluid, &case.rock);
    let n = d.n();
    let mut x: Vec<f64> = (0..d.n_cells)
        .map(|i| 2e7 + 1e4 * d.depth[i] + 3e4 * (i as f64).sin())
        .collect();
    x.push(1.95e7);
    let mass_old = vec![0.9 * d.pv_ref.iter().sum::<f64>() / d.n_cells as f64; d.n_cells];
    let bface_p: Vec<f64> = d
        .bfaces
        .iter()
        .map(|f| 2.1e7 + 9000.0 * (f.face_depth - 1000.0))
        .collect();
    let drive = [WellDrive {
        shut: false,
        bhp: false,
        rate: 1e-3,
    }];
    let ctx = Ctx {
        pvt: &pvt,
        dt: 1e4,
        mass_old: Some(&mass_old),
        drive: &drive,
        bface_p: &bface_p,
        pinned: &[],
        pin_scale: 1.0,
        aquifer_old: None,
    };
    let mut a = Assembly::new(&d, 1);
    assemble(&d, &ctx, &x, &mut a);
    let jac = a.jac.clone();
    let mut ap = Assembly::new(&d, 1);
    let mut am = Assembly::new(&d, 1);
    for j in 0..n {
        let h = 1.0;
        let mut xp = x.clone();
        xp[j] += h;
        let mut xm = x.clone();
        xm[j] -= h;
        assemble(&d, &ctx, &xp, &mut ap);
        assemble(&d, &ctx, &xm, &mut am);
        for i in 0..n {
            let fd = (ap.resid[i] - am.resid[i]) / (2.0 * h);
            let an = jac.get(i, j);
            let scale = jac.get(i, i).abs();
            assert!(
                (fd - an).abs() <= 1e-6 * scale + 1e-14,
                "J[{i}][{j}]: analytic {an}, differences {fd}"
            );
        }
    }
}
