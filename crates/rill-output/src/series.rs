//! The time series of a run in display units: one table that `series.csv`,
//! `series.json` and the report's plots and summary all read, so the three
//! can never disagree.
//!
//! # Zero is written as zero
//! A rate or cumulative volume whose magnitude is at most
//! [`ZERO_RELATIVE`] times the run's scale of that measure is written as 0:
//! a shut-in well's `-1.15697e-12 stb/day` is round-off of a flow the
//! solver never resolved, not a flow. The scale of rates is the larger of
//! the largest |rate| of any well or boundary at any report time and the
//! flow the reservoir's pressure could drive through its most conductive
//! cell (`RunResults::flow_per_pascal` times the largest average
//! pressure), so that a run in which nothing flows still has a scale; the
//! scale of cumulatives is the larger of the largest |cumulative| and the
//! volume the rate scale moves over the run. Only what is written changes:
//! `RunResults` keep the simulator's numbers. Pressures, times and the
//! balance error (already relative, and small on purpose) are never
//! snapped. An oil-water run's phase rates and cumulatives are snapped
//! against the same scales (its well rates are the liquid, so they bound
//! the phases); its fractions (water cut, recovery, `sw_avg`, pore volumes
//! injected), oil in place and phase balance errors are not.

use rill_model::{Case, Role};
use rill_sim::RunResults;
use rill_units::System;

use crate::units::{display_unit, Quantity, Unit};

/// Relative size below which a rate or cumulative is written as zero: the
/// Newton solver's own relative tolerances (mass balance per cell, well
/// rates) are 1e-9, so nothing smaller than that share of the run's flow is
/// a resolved number.
pub(crate) const ZERO_RELATIVE: f64 = 1e-9;

/// When a rate or cumulative is written as zero (see the module doc): the
/// run's scales of rates and cumulatives, SI. The summary of a run uses it
/// too, so that it prints what the files hold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ZeroScale {
    rate: f64,
    volume: f64,
}

impl ZeroScale {
    /// The scales of `results`: the largest rate and cumulative of any
    /// well, boundary or aquifer, and the flow the average pressure drives.
    pub fn new(results: &RunResults) -> ZeroScale {
        let largest = |series: &mut dyn Iterator<Item = &f64>| {
            series
                .filter(|v| v.is_finite())
                .fold(0.0f64, |m, v| m.max(v.abs()))
        };
        let rate = largest(
            &mut results
                .wells
                .iter()
                .flat_map(|w| &w.rate)
                .chain(results.boundaries.iter().flat_map(|b| &b.rate))
                .chain(results.aquifers.iter().flat_map(|a| &a.rate)),
        );
        let drive = results.flow_per_pascal * largest(&mut results.pressure_avg.iter());
        let rate = if drive.is_finite() {
            rate.max(drive)
        } else {
            rate
        };
        let cumulative = largest(
            &mut results
                .wells
                .iter()
                .flat_map(|w| &w.cumulative)
                .chain(results.boundaries.iter().flat_map(|b| &b.cumulative))
                .chain(results.aquifers.iter().flat_map(|a| &a.cumulative)),
        );
        let span = match (results.times.first(), results.times.last()) {
            (Some(a), Some(b)) if (b - a).is_finite() => (b - a).abs(),
            _ => 0.0,
        };
        let moved = rate * span;
        ZeroScale {
            rate,
            volume: cumulative.max(if moved.is_finite() { moved } else { 0.0 }),
        }
    }

    /// `v` (SI) as written: 0 when it is round-off against `scale`.
    fn snap(v: f64, scale: f64) -> f64 {
        if v.abs() <= ZERO_RELATIVE * scale {
            0.0
        } else {
            v
        }
    }

    /// A rate as written.
    pub fn rate(&self, v: f64) -> f64 {
        Self::snap(v, self.rate)
    }

    /// A cumulative volume as written.
    pub fn volume(&self, v: f64) -> f64 {
        Self::snap(v, self.volume)
    }
}

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Measure {
    Time,
    PressureAvg,
    Bhp,
    Rate,
    Cumulative,
    /// An aquifer's pressure.
    Pressure,
    BalanceError,
    // Oil-water runs: per well (surface, the sign of `Rate`)...
    OilRate,
    WaterRate,
    /// A producer's surface water cut, water over liquid.
    WaterCut,
    CumulativeOil,
    CumulativeWater,
    // ... and for the field.
    OilInPlace,
    /// Produced oil over the initial oil in place.
    Recovery,
    /// Pore-volume weighted average water saturation.
    SwAvg,
    PoreVolumesInjected,
    BalanceErrorOil,
    BalanceErrorWater,
}

impl Measure {
    /// The word used in column names and in `series.json`.
    pub fn key(self) -> &'static str {
        match self {
            Measure::Time => "time",
            Measure::PressureAvg => "pressure_avg",
            Measure::Bhp => "bhp",
            Measure::Rate => "rate",
            Measure::Cumulative => "cumulative",
            Measure::Pressure => "pressure",
            Measure::BalanceError => "balance_error",
            Measure::OilRate => "oil_rate",
            Measure::WaterRate => "water_rate",
            Measure::WaterCut => "water_cut",
            Measure::CumulativeOil => "cumulative_oil",
            Measure::CumulativeWater => "cumulative_water",
            Measure::OilInPlace => "oil_in_place",
            Measure::Recovery => "recovery",
            Measure::SwAvg => "sw_avg",
            Measure::PoreVolumesInjected => "pore_volumes_injected",
            Measure::BalanceErrorOil => "balance_error_oil",
            Measure::BalanceErrorWater => "balance_error_water",
        }
    }
}

/// A well, a boundary or an aquifer that a column belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Owner {
    Well(usize),
    Boundary(usize),
    Aquifer(usize),
}

#[derive(Debug, Clone)]
pub(crate) struct Column {
    /// `time`, `pressure_avg`, `<WELL> bhp`, ... (the CSV header without its unit).
    pub name: String,
    pub measure: Measure,
    pub owner: Option<Owner>,
    pub unit: Unit,
    /// Display values, one per report time.
    pub values: Vec<f64>,
}

impl Column {
    /// The CSV header: name and unit, `LE-1 bhp [psi]`.
    pub fn header(&self) -> String {
        format!("{} [{}]", self.name, self.unit.name)
    }
}

#[derive(Debug, Clone)]
pub(crate) struct SeriesTable {
    pub columns: Vec<Column>,
}

impl SeriesTable {
    /// The table of a run of `case`, with the wells' roles, which decide
    /// an oil-water run's phase columns (see [`SeriesTable::build`]).
    pub fn for_case(case: &Case, results: &RunResults) -> SeriesTable {
        let injector = |w: usize| {
            results.wells.get(w).is_some_and(|well| {
                case.wells
                    .iter()
                    .any(|cw| cw.name == well.name && cw.role == Role::Injector)
            })
        };
        SeriesTable::build(results, case.report.units, &injector)
    }

    /// The table of `results` without the wells' roles: an oil-water run's
    /// wells all get a producer's phase columns (the writers use
    /// [`SeriesTable::for_case`]).
    #[cfg(test)]
    pub fn new(results: &RunResults, system: System) -> SeriesTable {
        SeriesTable::build(results, system, &|_| false)
    }

    /// Columns in the order of the spec: time, average pressure, for every
    /// well its BHP, rate and cumulative, for every boundary its rate (and,
    /// beyond the spec, its cumulative), for every aquifer its rate,
    /// cumulative and pressure, and the balance error. Rates and
    /// cumulatives that are round-off are 0 (see the module doc).
    ///
    /// An oil-water run adds, after each well's cumulative, a producer's
    /// oil rate, water rate, water cut and cumulative oil and water, or an
    /// injector's (`injector(w)`) water rate and cumulative water; before
    /// the balance error, oil in place, recovery, the average water
    /// saturation and the pore volumes injected; after it, the oil and
    /// water balance errors.
    // One list of columns in file order: split, the order would be spread
    // over several functions.
    #[allow(clippy::too_many_lines)]
    fn build(
        results: &RunResults,
        system: System,
        injector: &dyn Fn(usize) -> bool,
    ) -> SeriesTable {
        let unit = |q| display_unit(q, system);
        let zero = ZeroScale::new(results);
        let column = |name: String, measure, owner, unit: Unit, si: &[f64]| Column {
            values: si
                .iter()
                .map(|&v| {
                    let v = match measure {
                        Measure::Rate | Measure::OilRate | Measure::WaterRate => zero.rate(v),
                        Measure::Cumulative | Measure::CumulativeOil | Measure::CumulativeWater => {
                            zero.volume(v)
                        }
                        _ => v,
                    };
                    unit.show(v)
                })
                .collect(),
            name,
            measure,
            owner,
            unit,
        };
        let ow = results.oil_water.as_ref();
        let mut columns = vec![
            column(
                "time".into(),
                Measure::Time,
                None,
                unit(Quantity::Time),
                &results.times,
            ),
            column(
                "pressure_avg".into(),
                Measure::PressureAvg,
                None,
                unit(Quantity::Pressure),
                &results.pressure_avg,
            ),
        ];
        for (w, well) in results.wells.iter().enumerate() {
            let owner = Some(Owner::Well(w));
            columns.push(column(
                format!("{} bhp", well.name),
                Measure::Bhp,
                owner,
                unit(Quantity::Pressure),
                &well.bhp,
            ));
            columns.push(column(
                format!("{} rate", well.name),
                Measure::Rate,
                owner,
                unit(Quantity::SurfaceRate),
                &well.rate,
            ));
            columns.push(column(
                format!("{} cumulative", well.name),
                Measure::Cumulative,
                owner,
                unit(Quantity::SurfaceVolume),
                &well.cumulative,
            ));
            let Some(phases) = ow.and_then(|ow| ow.wells.get(w)) else {
                continue;
            };
            let rate = unit(Quantity::SurfaceRate);
            let volume = unit(Quantity::SurfaceVolume);
            let fraction = unit(Quantity::Dimensionless);
            let mut phase = |key: Measure, unit: &Unit, si: &[f64]| {
                columns.push(column(
                    format!("{} {}", well.name, key.key()),
                    key,
                    owner,
                    unit.clone(),
                    si,
                ));
            };
            if injector(w) {
                phase(Measure::WaterRate, &rate, &phases.water_rate);
                phase(Measure::CumulativeWater, &volume, &phases.cumulative_water);
            } else {
                phase(Measure::OilRate, &rate, &phases.oil_rate);
                phase(Measure::WaterRate, &rate, &phases.water_rate);
                phase(Measure::WaterCut, &fraction, &phases.water_cut);
                phase(Measure::CumulativeOil, &volume, &phases.cumulative_oil);
                phase(Measure::CumulativeWater, &volume, &phases.cumulative_water);
            }
        }
        for (b, boundary) in results.boundaries.iter().enumerate() {
            columns.push(column(
                format!("{} rate", boundary.name),
                Measure::Rate,
                Some(Owner::Boundary(b)),
                unit(Quantity::SurfaceRate),
                &boundary.rate,
            ));
            columns.push(column(
                format!("{} cumulative", boundary.name),
                Measure::Cumulative,
                Some(Owner::Boundary(b)),
                unit(Quantity::SurfaceVolume),
                &boundary.cumulative,
            ));
        }
        for (a, aquifer) in results.aquifers.iter().enumerate() {
            let owner = Some(Owner::Aquifer(a));
            columns.push(column(
                format!("{} rate", aquifer.name),
                Measure::Rate,
                owner,
                unit(Quantity::SurfaceRate),
                &aquifer.rate,
            ));
            columns.push(column(
                format!("{} cumulative", aquifer.name),
                Measure::Cumulative,
                owner,
                unit(Quantity::SurfaceVolume),
                &aquifer.cumulative,
            ));
            columns.push(column(
                format!("{} pressure", aquifer.name),
                Measure::Pressure,
                owner,
                unit(Quantity::Pressure),
                &aquifer.pressure,
            ));
        }
        let fraction = unit(Quantity::Dimensionless);
        let mut field = |measure: Measure, unit: &Unit, si: &[f64]| {
            columns.push(column(
                measure.key().into(),
                measure,
                None,
                unit.clone(),
                si,
            ));
        };
        if let Some(ow) = ow {
            field(
                Measure::OilInPlace,
                &unit(Quantity::SurfaceVolume),
                &ow.oil_in_place,
            );
            field(Measure::Recovery, &fraction, &ow.recovery);
            field(Measure::SwAvg, &fraction, &ow.sw_avg);
            field(
                Measure::PoreVolumesInjected,
                &fraction,
                &ow.pore_volumes_injected,
            );
        }
        field(Measure::BalanceError, &fraction, &results.balance_error);
        if let Some(ow) = ow {
            field(Measure::BalanceErrorOil, &fraction, &ow.balance_error_oil);
            field(
                Measure::BalanceErrorWater,
                &fraction,
                &ow.balance_error_water,
            );
        }
        SeriesTable { columns }
    }

    pub fn time(&self) -> &Column {
        &self.columns[0]
    }

    pub fn find(&self, owner: Option<Owner>, measure: Measure) -> Option<&Column> {
        self.columns
            .iter()
            .find(|c| c.owner == owner && c.measure == measure)
    }

    pub fn rows(&self) -> usize {
        self.columns[0].values.len()
    }
}
