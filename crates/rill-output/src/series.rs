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
//! snapped.

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
    /// Columns in the order of the spec: time, average pressure, for every
    /// well its BHP, rate and cumulative, for every boundary its rate (and,
    /// beyond the spec, its cumulative), for every aquifer its rate,
    /// cumulative and pressure, and the balance error. Rates and
    /// cumulatives that are round-off are 0 (see the module doc).
    pub fn new(results: &RunResults, system: System) -> SeriesTable {
        let unit = |q| display_unit(q, system);
        let zero = ZeroScale::new(results);
        let column = |name: String, measure, owner, unit: Unit, si: &[f64]| Column {
            values: si
                .iter()
                .map(|&v| {
                    let v = match measure {
                        Measure::Rate => zero.rate(v),
                        Measure::Cumulative => zero.volume(v),
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
        columns.push(column(
            "balance_error".into(),
            Measure::BalanceError,
            None,
            unit(Quantity::Dimensionless),
            &results.balance_error,
        ));
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
