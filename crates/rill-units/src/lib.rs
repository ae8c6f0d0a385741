//! `rill-units` owns the unit registry, dimension vectors over length L,
//! mass M, time T and surface volume S, the parsing of unit expressions
//! (`lb/ft^3`, `1/psi`, `rb/stb`), conversion to SI and to the field and
//! metric display units, and nearest-name suggestions.
//!
//! It must never know about case files, blocks or keys: it takes unit text
//! and answers questions about it.
//!
//! # Dimensions
//! A [`Dim`] is an exponent vector over L, M, T and S. S is volume at
//! stock-tank (standard) conditions and is kept apart from L^3, the
//! in-situ (reservoir, geometric) volume: `stb/day` is `S T^-1`, `rb/day` is
//! `L^3 T^-1`, `rb/stb` is `L^3 S^-1`. A surface rate written at reservoir
//! conditions, or a formation volume factor written upside down, therefore
//! has the wrong dimension. One `sm3` is worth one `m3` in SI numbers.
//!
//! # Grammar
//! `expr := term (("*" | "/") term)*`,
//! `term := name ("^" int)? | "1" | "(" expr ")" ("^" int)?`, left
//! associative (`stb/day/psi` is `(stb/day)/psi`). `int` may carry a sign
//! (`m^-1`) and lies in -12..=12. A name is an ASCII letter followed by
//! letters, digits and `_`, or `%`. Names are case-sensitive. ASCII
//! whitespace between tokens is ignored.
//!
//! # Registry (SI factor; S counted in sm3)
//! | kind | names |
//! |---|---|
//! | length | `m`, `cm`, `mm`, `km`, `ft` (0.3048), `in` (0.0254) |
//! | area | `acre` (4046.8564224 m^2, international acre) |
//! | permeability | `darcy` (9.869233e-13 m^2), `md` and its alias `mD` (9.869233e-16 m^2) |
//! | pressure | `Pa`, `mPa`, `kPa`, `MPa`, `bar` (1e5), `atm` (101325), `psi` and `psia` (6894.757293168), gauge `psig`, `barg` |
//! | force | `N`, `lbf` (4.4482216152605 N), so `lbf/in^2` is `psi` |
//! | time | `s`, `min`, `hr`, `day` (86400), `yr` (365.25 day) |
//! | reservoir volume (L^3) | `m3`, `cm3`, `ft3`, `bbl` and `rb` (0.158987294928 m^3), `rm3` |
//! | surface volume (S) | `stb` (0.158987294928), `Mstb`, `MMstb`, `sm3` (1) |
//! | viscosity | `cP` (1e-3 Pa s); `Pa*s` and `mPa*s` are compounds |
//! | mass | `kg`, `g`, `lb` (0.45359237 kg) |
//! | dimensionless | a bare number (`1`), `%` (0.01) |
//!
//! `mPa` is the millipascal, a pressure, so `mPa*s` parses as the product
//! of `mPa` and `s` (1e-3 Pa s, one centipoise). Mind `mPa` against `MPa`.
//!
//! # Gauge rule
//! `psig` and `barg` are gauge pressures: the SI value is the number times
//! the unit factor plus one standard atmosphere (101325 Pa, the 14.696 psi
//! or 1.01325 bar of the case language). A gauge unit is valid only on its
//! own (`3000 psig`), for an absolute pressure value: inside a compound
//! (`psig/ft`) or raised to a power (`psig^2`) it is
//! [`UnitErrorKind::GaugeInCompound`]. Whether a value is a difference
//! is for the caller to know.
//!
//! # Modules
//! [`Dim`] and its arithmetic in `dim`; the registry and [`Unit`] in
//! `registry`; [`parse`] in `parse`; [`UnitError`] in `error`;
//! [`suggest`] and [`accepted_units`] in `suggest`; display systems,
//! [`display_unit`] and [`format_si`] in `display`. Everything is
//! re-exported here.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

mod dim;
mod display;
mod error;
mod parse;
mod registry;
mod suggest;

pub use dim::Dim;
pub use display::{display_unit, format_number, format_si, DisplayUnit, Kind, System};
pub use error::{UnitError, UnitErrorKind};
pub use parse::parse;
pub use registry::{
    absolute_counterpart, factors, lookup, registry, Unit, UnitDef, STANDARD_ATMOSPHERE_PA,
};
pub use suggest::{accepted_units, suggest};
