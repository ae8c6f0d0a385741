//! Display units of the report system: the one place where this crate turns
//! SI values into the numbers a person reads. Every writer goes through
//! [`display_unit`], which takes its names and factors from
//! `rill_units::display_unit` (shown value = SI value / factor).

use rill_units::{Kind, System};

/// What a number is, for the choice of its display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Quantity {
    Time,
    Pressure,
    Length,
    SurfaceRate,
    SurfaceVolume,
    Permeability,
    /// A pure number (fractions, relative errors): unit name `-`.
    Dimensionless,
}

/// A display unit: shown value = SI value / `factor`.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Unit {
    pub name: String,
    pub factor: f64,
}

impl Unit {
    /// The shown value of an SI value.
    pub fn show(&self, si: f64) -> f64 {
        si / self.factor
    }
}

/// The display unit of `quantity` in `system`.
pub(crate) fn display_unit(quantity: Quantity, system: System) -> Unit {
    let kind = match quantity {
        Quantity::Time => Kind::Time,
        Quantity::Pressure => Kind::Pressure,
        Quantity::Length => Kind::Length,
        Quantity::SurfaceRate => Kind::SurfaceRate,
        Quantity::SurfaceVolume => Kind::SurfaceVolume,
        Quantity::Permeability => Kind::Permeability,
        Quantity::Dimensionless => {
            return Unit {
                name: "-".into(),
                factor: 1.0,
            }
        }
    };
    let unit = rill_units::display_unit(kind, system);
    Unit {
        name: unit.name.to_string(),
        factor: unit.factor,
    }
}

/// The name of a unit system as written in a deck (`report { units = ... }`).
pub(crate) fn system_name(system: System) -> &'static str {
    system.name()
}
