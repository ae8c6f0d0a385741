//! The time series of a run in display units: one table that `series.csv`,
//! `series.json` and the report's plots and summary all read, so the three
//! can never disagree.

use rill_sim::RunResults;
use rill_units::System;

use crate::units::{display_unit, Quantity, Unit};

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
    /// well its BHP, rate and cumulative, for every boundary its rate, for
    /// every aquifer its rate, cumulative and pressure, and the balance
    /// error.
    pub fn new(results: &RunResults, system: System) -> SeriesTable {
        let unit = |q| display_unit(q, system);
        let column = |name: String, measure, owner, unit: Unit, si: &[f64]| Column {
            values: si.iter().map(|&v| unit.show(v)).collect(),
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
