//! The unit registry: every named unit with its SI factor and dimension,
//! and the parsed [`Unit`].

use crate::Dim;
use serde::Serialize;

/// One standard atmosphere in Pa (NIST SP 811, exact), the offset of the
/// gauge units.
pub const STANDARD_ATMOSPHERE_PA: f64 = 101325.0;

/// A parsed unit: SI value = number * `factor`, plus one standard
/// atmosphere when `gauge`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Unit {
    /// SI value of one of this unit (S counted in sm3).
    pub factor: f64,
    /// Its dimension.
    pub dim: Dim,
    /// A gauge pressure: one standard atmosphere is added on conversion.
    pub gauge: bool,
}

impl Unit {
    /// The dimensionless unit `1`.
    pub const ONE: Unit = Unit {
        factor: 1.0,
        dim: Dim::NONE,
        gauge: false,
    };

    /// The value `v`, given in this unit, in SI.
    pub fn to_si(&self, v: f64) -> f64 {
        if self.gauge {
            v * self.factor + STANDARD_ATMOSPHERE_PA
        } else {
            v * self.factor
        }
    }

    /// The SI value `si` expressed in this unit.
    pub fn from_si(&self, si: f64) -> f64 {
        if self.gauge {
            (si - STANDARD_ATMOSPHERE_PA) / self.factor
        } else {
            si / self.factor
        }
    }
}

/// One entry of the unit registry.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct UnitDef {
    /// The name as written in a deck.
    pub name: &'static str,
    /// SI value of one of this unit (S counted in sm3).
    pub factor: f64,
    /// Its dimension.
    pub dim: Dim,
    /// A gauge pressure: one standard atmosphere is added on conversion.
    pub gauge: bool,
    /// What it is, in words, for hover and completion.
    pub description: &'static str,
}

impl UnitDef {
    /// This entry as a [`Unit`].
    pub fn unit(&self) -> Unit {
        Unit {
            factor: self.factor,
            dim: self.dim,
            gauge: self.gauge,
        }
    }
}

/// SI values of the units the checks and the registry are built on, from
/// NIST Special Publication 811 (2008), Appendix B: one place for them, so
/// that a limit written as `20_000.0 * MD` means exactly what `20000 md`
/// does in a deck.
pub mod factors {
    /// International foot, m.
    pub const FT: f64 = 0.3048;
    /// Inch, m.
    pub const IN: f64 = 0.0254;
    /// Avoirdupois pound, kg.
    pub const LB: f64 = 0.45359237;
    /// Standard acceleration of gravity, m/s^2 (exact by definition).
    pub const G_N: f64 = 9.80665;
    /// Pound-force, N.
    pub const LBF: f64 = LB * G_N;
    /// lbf / in^2 = 6894.757293168...
    pub const PSI: f64 = LBF / (IN * IN);
    /// Oil barrel (42 US gallons), m^3.
    pub const BBL: f64 = 0.158987294928;
    /// Darcy, m^2.
    pub const DARCY: f64 = 9.869233e-13;
    /// Millidarcy, m^2.
    pub const MD: f64 = DARCY * 1e-3;
    /// Centipoise, Pa s.
    pub const CP: f64 = 1e-3;
    /// Day, s.
    pub const DAY: f64 = 86400.0;
}
use factors::{BBL, DARCY, DAY, FT, IN, LB, LBF, MD, PSI};

const fn def(name: &'static str, factor: f64, dim: Dim, description: &'static str) -> UnitDef {
    UnitDef {
        name,
        factor,
        dim,
        gauge: false,
        description,
    }
}

static REGISTRY: &[UnitDef] = &[
    // length
    def("m", 1.0, Dim::LENGTH, "metre"),
    def("cm", 1e-2, Dim::LENGTH, "centimetre"),
    def("mm", 1e-3, Dim::LENGTH, "millimetre"),
    def("km", 1e3, Dim::LENGTH, "kilometre"),
    def("ft", FT, Dim::LENGTH, "foot (0.3048 m)"),
    def("in", IN, Dim::LENGTH, "inch (0.0254 m)"),
    // area and permeability
    def(
        "acre",
        4046.8564224,
        Dim::AREA,
        "international acre (4046.8564224 m^2)",
    ),
    def(
        "darcy",
        DARCY,
        Dim::PERMEABILITY,
        "darcy (9.869233e-13 m^2)",
    ),
    def("md", MD, Dim::PERMEABILITY, "millidarcy (9.869233e-16 m^2)"),
    def(
        "mD",
        DARCY * 1e-3,
        Dim::PERMEABILITY,
        "millidarcy, alias of md",
    ),
    // pressure
    def("Pa", 1.0, Dim::PRESSURE, "pascal"),
    def("mPa", 1e-3, Dim::PRESSURE, "millipascal (not MPa)"),
    def("kPa", 1e3, Dim::PRESSURE, "kilopascal"),
    def("MPa", 1e6, Dim::PRESSURE, "megapascal"),
    def("bar", 1e5, Dim::PRESSURE, "bar (1e5 Pa)"),
    def(
        "atm",
        STANDARD_ATMOSPHERE_PA,
        Dim::PRESSURE,
        "standard atmosphere (101325 Pa)",
    ),
    def(
        "psi",
        PSI,
        Dim::PRESSURE,
        "pound-force per square inch (6894.757 Pa)",
    ),
    def("psia", PSI, Dim::PRESSURE, "psi absolute, same as psi"),
    UnitDef {
        name: "psig",
        factor: PSI,
        dim: Dim::PRESSURE,
        gauge: true,
        description: "psi gauge: psi plus one atmosphere (14.696 psi); alone only",
    },
    UnitDef {
        name: "barg",
        factor: 1e5,
        dim: Dim::PRESSURE,
        gauge: true,
        description: "bar gauge: bar plus one atmosphere (1.01325 bar); alone only",
    },
    // force
    def("N", 1.0, Dim::FORCE, "newton"),
    def("lbf", LBF, Dim::FORCE, "pound-force (4.4482216152605 N)"),
    // time
    def("s", 1.0, Dim::TIME, "second"),
    def("min", 60.0, Dim::TIME, "minute"),
    def("hr", 3600.0, Dim::TIME, "hour"),
    def("day", DAY, Dim::TIME, "day (86400 s)"),
    def("yr", 365.25 * DAY, Dim::TIME, "year of 365.25 days"),
    // reservoir volume
    def(
        "m3",
        1.0,
        Dim::RESERVOIR_VOLUME,
        "cubic metre (reservoir volume)",
    ),
    def("cm3", 1e-6, Dim::RESERVOIR_VOLUME, "cubic centimetre"),
    def(
        "ft3",
        FT * FT * FT,
        Dim::RESERVOIR_VOLUME,
        "cubic foot (reservoir volume)",
    ),
    def(
        "bbl",
        BBL,
        Dim::RESERVOIR_VOLUME,
        "oil barrel, 42 US gal (reservoir volume)",
    ),
    def(
        "rb",
        BBL,
        Dim::RESERVOIR_VOLUME,
        "reservoir barrel (0.158987294928 m^3)",
    ),
    def("rm3", 1.0, Dim::RESERVOIR_VOLUME, "reservoir cubic metre"),
    // surface volume
    def(
        "stb",
        BBL,
        Dim::SURFACE_VOLUME,
        "stock-tank barrel (surface volume)",
    ),
    def(
        "Mstb",
        BBL * 1e3,
        Dim::SURFACE_VOLUME,
        "thousand stock-tank barrels",
    ),
    def(
        "MMstb",
        BBL * 1e6,
        Dim::SURFACE_VOLUME,
        "million stock-tank barrels",
    ),
    def(
        "sm3",
        1.0,
        Dim::SURFACE_VOLUME,
        "standard cubic metre (surface volume)",
    ),
    // viscosity
    def("cP", factors::CP, Dim::VISCOSITY, "centipoise (1e-3 Pa s)"),
    // mass
    def("kg", 1.0, Dim::MASS, "kilogram"),
    def("g", 1e-3, Dim::MASS, "gram"),
    def("lb", LB, Dim::MASS, "pound, avoirdupois (0.45359237 kg)"),
    // dimensionless
    def("%", 0.01, Dim::NONE, "percent (0.01)"),
];

/// The whole registry, in a stable order (grouped by kind).
pub fn registry() -> &'static [UnitDef] {
    REGISTRY
}

/// The registry entry of `name` (case-sensitive).
pub fn lookup(name: &str) -> Option<&'static UnitDef> {
    REGISTRY.iter().find(|d| d.name == name)
}

/// For a gauge unit, the absolute unit to write instead.
pub fn absolute_counterpart(name: &str) -> Option<&'static str> {
    match name {
        "psig" => Some("psia"),
        "barg" => Some("bar"),
        _ => None,
    }
}
