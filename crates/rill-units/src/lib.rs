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

use serde::Serialize;
use std::fmt;
use std::ops::{Div, Mul};
use std::sync::OnceLock;

// ---------------------------------------------------------------------------
// Dimensions
// ---------------------------------------------------------------------------

/// Exponents over length, mass, time and surface volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub struct Dim {
    pub l: i8,
    pub m: i8,
    pub t: i8,
    pub s: i8,
}

impl Dim {
    pub const fn new(l: i8, m: i8, t: i8, s: i8) -> Dim {
        Dim { l, m, t, s }
    }
    pub const NONE: Dim = Dim::new(0, 0, 0, 0);
    pub const LENGTH: Dim = Dim::new(1, 0, 0, 0);
    pub const AREA: Dim = Dim::new(2, 0, 0, 0);
    /// Permeability is an area.
    pub const PERMEABILITY: Dim = Dim::new(2, 0, 0, 0);
    pub const RESERVOIR_VOLUME: Dim = Dim::new(3, 0, 0, 0);
    pub const SURFACE_VOLUME: Dim = Dim::new(0, 0, 0, 1);
    pub const TIME: Dim = Dim::new(0, 0, 1, 0);
    pub const MASS: Dim = Dim::new(0, 1, 0, 0);
    pub const PRESSURE: Dim = Dim::new(-1, 1, -2, 0);
    pub const VISCOSITY: Dim = Dim::new(-1, 1, -1, 0);
    pub const DENSITY: Dim = Dim::new(-3, 1, 0, 0);
    pub const COMPRESSIBILITY: Dim = Dim::new(1, -1, 2, 0);
    pub const SURFACE_RATE: Dim = Dim::new(0, 0, -1, 1);
    pub const RESERVOIR_RATE: Dim = Dim::new(3, 0, -1, 0);
    /// Formation volume factor: reservoir volume per surface volume.
    pub const FVF: Dim = Dim::new(3, 0, 0, -1);
    /// Force (`N`, `lbf`).
    pub const FORCE: Dim = Dim::new(1, 1, -2, 0);
    /// Pressure per length (`psi/ft`, hydrostatic and fracture gradients).
    pub const PRESSURE_GRADIENT: Dim = Dim::new(-2, 1, -2, 0);
    /// Surface rate per pressure: transmissibility and productivity
    /// (`stb/day/psi`).
    pub const SURFACE_RATE_PER_PRESSURE: Dim = Dim::new(1, -1, 1, 1);
    /// Reservoir rate per pressure (`md*ft^2/(cP*ft)`, `m^3/(Pa*s)`), the
    /// transmissibility before division by the formation volume factor.
    pub const RESERVOIR_RATE_PER_PRESSURE: Dim = Dim::new(4, -1, 1, 0);
    /// Permeability per viscosity (`md/cP`).
    pub const MOBILITY: Dim = Dim::new(3, -1, 1, 0);

    /// True for the dimensionless vector.
    pub const fn is_none(self) -> bool {
        self.l == 0 && self.m == 0 && self.t == 0 && self.s == 0
    }

    /// `self` raised to an integer power (exponents multiplied).
    ///
    /// Panics on exponent overflow like integer arithmetic; see
    /// [`Dim::checked_pow`].
    pub fn pow(self, n: i8) -> Dim {
        self.checked_pow(n).expect("dimension exponent overflow")
    }

    /// `self` raised to `n`, or `None` when an exponent leaves `i8`.
    pub fn checked_pow(self, n: i8) -> Option<Dim> {
        Some(Dim {
            l: self.l.checked_mul(n)?,
            m: self.m.checked_mul(n)?,
            t: self.t.checked_mul(n)?,
            s: self.s.checked_mul(n)?,
        })
    }

    /// Product (exponents added), or `None` on exponent overflow.
    pub fn checked_mul(self, rhs: Dim) -> Option<Dim> {
        Some(Dim {
            l: self.l.checked_add(rhs.l)?,
            m: self.m.checked_add(rhs.m)?,
            t: self.t.checked_add(rhs.t)?,
            s: self.s.checked_add(rhs.s)?,
        })
    }

    /// Quotient (exponents subtracted), or `None` on exponent overflow.
    pub fn checked_div(self, rhs: Dim) -> Option<Dim> {
        Some(Dim {
            l: self.l.checked_sub(rhs.l)?,
            m: self.m.checked_sub(rhs.m)?,
            t: self.t.checked_sub(rhs.t)?,
            s: self.s.checked_sub(rhs.s)?,
        })
    }

    /// The common name of a well-known dimension (`"pressure"`,
    /// `"surface rate"`, ...), or `""` when it has none.
    pub fn describe(self) -> &'static str {
        match self {
            Dim::NONE => "dimensionless",
            Dim::LENGTH => "length",
            Dim::AREA => "permeability or area",
            Dim::RESERVOIR_VOLUME => "reservoir volume",
            Dim::SURFACE_VOLUME => "surface volume",
            Dim::TIME => "time",
            Dim::MASS => "mass",
            Dim::PRESSURE => "pressure",
            Dim::VISCOSITY => "viscosity",
            Dim::DENSITY => "density",
            Dim::COMPRESSIBILITY => "compressibility",
            Dim::SURFACE_RATE => "surface rate",
            Dim::RESERVOIR_RATE => "reservoir rate",
            Dim::FVF => "formation volume factor",
            Dim::FORCE => "force",
            Dim::PRESSURE_GRADIENT => "pressure gradient",
            Dim::SURFACE_RATE_PER_PRESSURE => "surface rate per pressure",
            Dim::RESERVOIR_RATE_PER_PRESSURE => "reservoir rate per pressure",
            Dim::MOBILITY => "mobility",
            _ if self == Dim::FVF.pow(-1) => "surface volume per reservoir volume",
            _ if self == Dim::new(-1, 0, 0, 0) => "inverse length",
            _ if self == Dim::new(0, 0, -1, 0) => "frequency",
            _ if self == Dim::new(1, 0, -1, 0) => "velocity",
            _ => "",
        }
    }

    fn exps(self) -> [(char, i8); 4] {
        [('L', self.l), ('M', self.m), ('T', self.t), ('S', self.s)]
    }
}

impl Mul for Dim {
    type Output = Dim;
    fn mul(self, rhs: Dim) -> Dim {
        self.checked_mul(rhs).expect("dimension exponent overflow")
    }
}

impl Div for Dim {
    type Output = Dim;
    fn div(self, rhs: Dim) -> Dim {
        self.checked_div(rhs).expect("dimension exponent overflow")
    }
}

/// Positive exponents first, then negative ones, each in L M T S order:
/// `L^2`, `M L^-1 T^-2`, `S T^-1`, `L^3 S^-1`; dimensionless is `1`.
impl fmt::Display for Dim {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_none() {
            return f.write_str("1");
        }
        let exps = self.exps();
        let mut first = true;
        let ordered = exps
            .iter()
            .filter(|(_, e)| *e > 0)
            .chain(exps.iter().filter(|(_, e)| *e < 0));
        for (c, e) in ordered {
            if !first {
                f.write_str(" ")?;
            }
            first = false;
            if *e == 1 {
                write!(f, "{c}")?;
            } else {
                write!(f, "{c}^{e}")?;
            }
        }
        Ok(())
    }
}

// ---------------------------------------------------------------------------
// Units
// ---------------------------------------------------------------------------

/// One standard atmosphere in Pa (NIST SP 811, exact), the offset of the
/// gauge units.
pub const STANDARD_ATMOSPHERE_PA: f64 = 101325.0;

/// A parsed unit: SI value = number * `factor`, plus one standard
/// atmosphere when `gauge`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Unit {
    pub factor: f64,
    pub dim: Dim,
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
    pub name: &'static str,
    /// SI value of one of this unit (S counted in sm3).
    pub factor: f64,
    pub dim: Dim,
    /// A gauge pressure: one standard atmosphere is added on conversion.
    pub gauge: bool,
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
    pub const FT: f64 = 0.3048;
    pub const IN: f64 = 0.0254;
    pub const LB: f64 = 0.45359237;
    /// Standard acceleration of gravity, m/s^2 (exact by definition).
    pub const G_N: f64 = 9.80665;
    pub const LBF: f64 = LB * G_N;
    /// lbf / in^2 = 6894.757293168...
    pub const PSI: f64 = LBF / (IN * IN);
    pub const BBL: f64 = 0.158987294928;
    pub const DARCY: f64 = 9.869233e-13;
    pub const MD: f64 = DARCY * 1e-3;
    /// Centipoise, Pa s.
    pub const CP: f64 = 1e-3;
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

// ---------------------------------------------------------------------------
// Errors
// ---------------------------------------------------------------------------

/// Why a unit expression was rejected, with the byte span (`start..end`
/// into the parsed text) of the offending part.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitError {
    pub kind: UnitErrorKind,
    pub start: usize,
    pub end: usize,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub enum UnitErrorKind {
    /// A name that is not in the registry, with the nearest names.
    Unknown {
        name: String,
        suggestions: Vec<String>,
    },
    /// Text that does not fit the grammar. Both strings are ready to show:
    /// `expected` is a phrase (``a unit name, `1` or `(` ``), `found` the
    /// offending token in backticks or `end of input`.
    Syntax { expected: String, found: String },
    /// `psig` or `barg` inside a compound unit or raised to a power.
    GaugeInCompound { name: String },
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.kind {
            UnitErrorKind::Unknown { name, suggestions } => {
                write!(f, "expected a known unit, found `{name}`")?;
                match suggestions.as_slice() {
                    [] => Ok(()),
                    [one] => write!(f, "; did you mean `{one}`?"),
                    [init @ .., last] => {
                        f.write_str("; did you mean ")?;
                        for (i, s) in init.iter().enumerate() {
                            if i > 0 {
                                f.write_str(", ")?;
                            }
                            write!(f, "`{s}`")?;
                        }
                        write!(f, " or `{last}`?")
                    }
                }
            }
            UnitErrorKind::Syntax { expected, found } => {
                write!(f, "expected {expected} in the unit, found {found}")
            }
            UnitErrorKind::GaugeInCompound { name } => {
                write!(
                    f,
                    "expected the gauge unit `{name}` on its own, for an absolute pressure, \
                     found it inside a compound unit or raised to a power"
                )?;
                if let Some(abs) = absolute_counterpart(name) {
                    write!(f, "; use `{abs}` here")?;
                }
                Ok(())
            }
        }
    }
}

impl std::error::Error for UnitError {}

// ---------------------------------------------------------------------------
// Parsing
// ---------------------------------------------------------------------------

/// Largest magnitude of an exponent literal (`m^12`).
const MAX_EXPONENT: i64 = 12;
/// Deepest parenthesis nesting accepted.
const MAX_DEPTH: usize = 32;

const EXPECT_TERM: &str = "a unit name, `1` or `(`";
const EXPECT_OP: &str = "`*`, `/` or the end of the unit";
const EXPECT_OP_OR_CLOSE: &str = "`*`, `/` or `)`";

/// Parse a unit expression (see the crate doc for the grammar).
pub fn parse(text: &str) -> Result<Unit, UnitError> {
    let mut p = Parser {
        text,
        pos: 0,
        gauges: Vec::new(),
    };
    let e = p.expr(0)?;
    p.skip_ws();
    if p.pos < text.len() {
        return Err(p.syntax_here(EXPECT_OP));
    }
    if let Some(&(start, end, name)) = p.gauges.first() {
        // A gauge unit is fine only as the whole expression (parentheses
        // around it are harmless).
        if !(e.simple && p.gauges.len() == 1) {
            return Err(UnitError {
                kind: UnitErrorKind::GaugeInCompound {
                    name: name.to_string(),
                },
                start,
                end,
            });
        }
    }
    Ok(Unit {
        factor: e.factor,
        dim: e.dim,
        gauge: e.simple && !p.gauges.is_empty(),
    })
}

struct Parsed {
    factor: f64,
    dim: Dim,
    /// A single name with no operator and no exponent.
    simple: bool,
}

struct Parser<'a> {
    text: &'a str,
    pos: usize,
    /// Spans and names of the gauge units met.
    gauges: Vec<(usize, usize, &'static str)>,
}

impl Parser<'_> {
    fn skip_ws(&mut self) {
        let b = self.text.as_bytes();
        while self.pos < b.len() && b[self.pos].is_ascii_whitespace() {
            self.pos += 1;
        }
    }

    fn peek(&self) -> Option<char> {
        self.text[self.pos..].chars().next()
    }

    /// A syntax error at the token starting at `self.pos`.
    fn syntax_here(&self, expected: &str) -> UnitError {
        let (found, end) = self.token_at(self.pos);
        UnitError {
            kind: UnitErrorKind::Syntax {
                expected: expected.to_string(),
                found,
            },
            start: self.pos,
            end,
        }
    }

    /// Describe the token at `pos` and give its end.
    fn token_at(&self, pos: usize) -> (String, usize) {
        let rest = &self.text[pos..];
        let Some(c) = rest.chars().next() else {
            return ("end of input".to_string(), pos);
        };
        let len = if c.is_ascii_alphanumeric() || c == '_' || c == '.' {
            rest.find(|c: char| !(c.is_ascii_alphanumeric() || c == '_' || c == '.'))
                .unwrap_or(rest.len())
        } else {
            c.len_utf8()
        };
        (format!("`{}`", &rest[..len]), pos + len)
    }

    fn expr(&mut self, depth: usize) -> Result<Parsed, UnitError> {
        let mut acc = self.term(depth)?;
        loop {
            self.skip_ws();
            let op = match self.peek() {
                Some('*') => Op::Mul,
                Some('/') => Op::Div,
                _ => return Ok(acc),
            };
            let op_start = self.pos;
            self.pos += 1;
            let rhs = self.term(depth)?;
            let dim = match op {
                Op::Mul => acc.dim.checked_mul(rhs.dim),
                Op::Div => acc.dim.checked_div(rhs.dim),
            };
            let Some(dim) = dim else {
                return Err(overflow(op_start, self.pos));
            };
            acc = Parsed {
                factor: match op {
                    Op::Mul => acc.factor * rhs.factor,
                    Op::Div => acc.factor / rhs.factor,
                },
                dim,
                simple: false,
            };
        }
    }

    fn term(&mut self, depth: usize) -> Result<Parsed, UnitError> {
        self.skip_ws();
        let start = self.pos;
        let bytes = self.text.as_bytes();
        match self.peek() {
            Some('(') => {
                if depth >= MAX_DEPTH {
                    return Err(UnitError {
                        kind: UnitErrorKind::Syntax {
                            expected: format!("at most {MAX_DEPTH} nested parentheses"),
                            found: "deeper nesting".to_string(),
                        },
                        start,
                        end: start + 1,
                    });
                }
                self.pos += 1;
                let inner = self.expr(depth + 1)?;
                self.skip_ws();
                if self.peek() != Some(')') {
                    return Err(self.syntax_here(EXPECT_OP_OR_CLOSE));
                }
                self.pos += 1;
                self.exponent(inner, start)
            }
            Some('%') => {
                self.pos += 1;
                self.named("%", start)
            }
            Some(c) if c.is_ascii_alphabetic() => {
                let mut end = self.pos + 1;
                while end < bytes.len()
                    && (bytes[end].is_ascii_alphanumeric() || bytes[end] == b'_')
                {
                    end += 1;
                }
                self.pos = end;
                let name = &self.text[start..end];
                self.named(name, start)
            }
            Some(c) if c.is_ascii_digit() => {
                let (found, end) = self.token_at(start);
                if &self.text[start..end] == "1" {
                    self.pos = end;
                    Ok(Parsed {
                        factor: 1.0,
                        dim: Dim::NONE,
                        simple: false,
                    })
                } else {
                    Err(UnitError {
                        kind: UnitErrorKind::Syntax {
                            expected: EXPECT_TERM.to_string(),
                            found,
                        },
                        start,
                        end,
                    })
                }
            }
            _ => Err(self.syntax_here(EXPECT_TERM)),
        }
    }

    /// A name just read at `start..self.pos`, with its optional exponent.
    fn named(&mut self, name: &str, start: usize) -> Result<Parsed, UnitError> {
        let end = self.pos;
        let Some(def) = lookup(name) else {
            // A suggestion replaces the name in place: where it is a compound
            // (`stb/day`) after a `/` or before a `^`, bracket it so that the
            // meaning is kept (`1/(lb/ft^3)`).
            let after_slash = self.text[..start].trim_end().ends_with('/');
            let before_caret = self.text[end..].trim_start().starts_with('^');
            let suggestions = suggest(name)
                .into_iter()
                .map(|s| {
                    let compound = s.contains(['*', '/']);
                    if (after_slash && compound) || (before_caret && (compound || s.contains('^')))
                    {
                        format!("({s})")
                    } else {
                        s
                    }
                })
                .collect();
            return Err(UnitError {
                kind: UnitErrorKind::Unknown {
                    name: name.to_string(),
                    suggestions,
                },
                start,
                end,
            });
        };
        if def.gauge {
            self.gauges.push((start, end, def.name));
        }
        let base = Parsed {
            factor: def.factor,
            dim: def.dim,
            simple: true,
        };
        self.exponent(base, start)
    }

    /// An optional `^int` after a term that started at `start`.
    fn exponent(&mut self, base: Parsed, start: usize) -> Result<Parsed, UnitError> {
        let save = self.pos;
        self.skip_ws();
        if self.peek() != Some('^') {
            self.pos = save;
            return Ok(base);
        }
        self.pos += 1;
        self.skip_ws();
        let int_start = self.pos;
        let bytes = self.text.as_bytes();
        let mut end = self.pos;
        if end < bytes.len() && (bytes[end] == b'-' || bytes[end] == b'+') {
            end += 1;
        }
        let digits_start = end;
        while end < bytes.len() && bytes[end].is_ascii_digit() {
            end += 1;
        }
        if end == digits_start {
            self.pos = digits_start;
            return Err(self.syntax_here("an integer exponent"));
        }
        let lit = &self.text[int_start..end];
        // Saturate long literals; anything past the limit is rejected below.
        let n: i64 = lit.parse().unwrap_or(if lit.starts_with('-') {
            i64::MIN
        } else {
            i64::MAX
        });
        if !(-MAX_EXPONENT..=MAX_EXPONENT).contains(&n) {
            return Err(UnitError {
                kind: UnitErrorKind::Syntax {
                    expected: format!("an exponent from -{MAX_EXPONENT} to {MAX_EXPONENT}"),
                    found: format!("`{lit}`"),
                },
                start: int_start,
                end,
            });
        }
        self.pos = end;
        let n = n as i8;
        let Some(dim) = base.dim.checked_pow(n) else {
            return Err(overflow(start, end));
        };
        Ok(Parsed {
            factor: base.factor.powi(n as i32),
            dim,
            simple: false,
        })
    }
}

#[derive(Clone, Copy)]
enum Op {
    Mul,
    Div,
}

fn overflow(start: usize, end: usize) -> UnitError {
    UnitError {
        kind: UnitErrorKind::Syntax {
            expected: "a unit whose dimension exponents stay within -127..=127".to_string(),
            found: "a larger exponent".to_string(),
        },
        start,
        end,
    }
}

// ---------------------------------------------------------------------------
// Suggestions
// ---------------------------------------------------------------------------

/// Shorthands engineers write for which the right spelling is a compound.
const SHORTHANDS: &[(&str, &str)] = &[
    ("stbd", "stb/day"),
    ("stbpd", "stb/day"),
    ("bpd", "stb/day"),
    ("bopd", "stb/day"),
    ("bwpd", "stb/day"),
    ("blpd", "stb/day"),
    ("rbd", "rb/day"),
    ("rbpd", "rb/day"),
    ("d", "day"),
    ("days", "day"),
    ("h", "hr"),
    ("hrs", "hr"),
    ("hour", "hr"),
    ("hours", "hr"),
    ("sec", "s"),
    ("y", "yr"),
    ("year", "yr"),
    ("years", "yr"),
    ("feet", "ft"),
    ("foot", "ft"),
    ("inch", "in"),
    ("meter", "m"),
    ("metre", "m"),
    ("millidarcy", "md"),
    ("centipoise", "cP"),
    ("percent", "%"),
    ("pcf", "lb/ft^3"),
    ("ppf", "psi/ft"),
];

/// The nearest registry names (or spellings) to an unknown `name`, best
/// first, at most three, only reasonably close ones.
///
/// Case-insensitive matches come first (`MD` gives `md`, `cp` gives `cP`);
/// a name with a trailing power (`ft2`) gives the power form (`ft^2`); a
/// few common shorthands map to their compound (`stbd` gives `stb/day`).
/// Only when none of those apply are names within a small edit distance
/// offered.
pub fn suggest(name: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let lower = name.to_lowercase();
    for d in REGISTRY {
        if d.name != name && d.name.eq_ignore_ascii_case(name) {
            push_unique(&mut out, d.name);
        }
    }
    // `ft2`, `m2`, `in3`: a registry name followed by a power.
    if let Some(split) = name.find(|c: char| c.is_ascii_digit()) {
        let (base, digits) = name.split_at(split);
        if digits.bytes().all(|b| b.is_ascii_digit()) && digits != "1" && !base.is_empty() {
            let mut bases: Vec<&str> = REGISTRY
                .iter()
                .filter(|d| d.name.eq_ignore_ascii_case(base))
                .map(|d| d.name)
                .collect();
            // The exact spelling first.
            bases.sort_by_key(|b| *b != base);
            for b in bases {
                let candidate = format!("{b}^{digits}");
                if parse(&candidate).is_ok() {
                    push_unique(&mut out, &candidate);
                }
            }
        }
    }
    for (short, full) in SHORTHANDS {
        if *short == lower {
            push_unique(&mut out, full);
        }
    }
    if out.is_empty() {
        let n = lower.chars().count();
        let max = match n {
            0..=1 => 0,
            2..=4 => 1,
            5..=7 => 2,
            _ => 3,
        };
        let mut scored: Vec<(usize, f64, usize, &str)> = REGISTRY
            .iter()
            .enumerate()
            .filter_map(|(i, d)| {
                let cand = d.name.to_lowercase();
                let dist = strsim::damerau_levenshtein(&lower, &cand);
                // Never "correct" a name into a totally different short one.
                let shorter = n.min(cand.chars().count());
                (dist <= max && dist < shorter)
                    .then(|| (dist, strsim::jaro_winkler(&lower, &cand), i, d.name))
            })
            .collect();
        scored.sort_by(|a, b| a.0.cmp(&b.0).then(b.1.total_cmp(&a.1)).then(a.2.cmp(&b.2)));
        for (_, _, _, n) in scored {
            push_unique(&mut out, n);
        }
    }
    out.truncate(3);
    out
}

fn push_unique(out: &mut Vec<String>, s: &str) {
    if !out.iter().any(|o| o == s) {
        out.push(s.to_string());
    }
}

// ---------------------------------------------------------------------------
// Accepted units per dimension
// ---------------------------------------------------------------------------

/// Unit expressions valid for `dim`, common ones first, for fixes and
/// completion. Every entry parses to a unit of dimension `dim`; `"1"` is
/// the bare-number form of a dimensionless value. Where no list is curated
/// one expression per display system is composed from the registry
/// (`psi/ft`, `bar/m`, `Pa/m`); an empty vector when none can be.
pub fn accepted_units(dim: Dim) -> Vec<String> {
    let curated: &[&str] = match dim {
        Dim::NONE => &["1", "%"],
        Dim::LENGTH => &["ft", "m", "in", "cm", "mm", "km"],
        Dim::AREA => &["md", "darcy", "m^2", "ft^2", "acre"],
        Dim::RESERVOIR_VOLUME => &["rb", "rm3", "bbl", "m3", "ft3"],
        Dim::SURFACE_VOLUME => &["stb", "sm3", "Mstb", "MMstb"],
        Dim::TIME => &["day", "hr", "yr", "s", "min"],
        Dim::MASS => &["lb", "kg", "g"],
        Dim::PRESSURE => &["psi", "bar", "kPa", "MPa", "Pa", "atm", "psia"],
        Dim::VISCOSITY => &["cP", "mPa*s", "Pa*s"],
        Dim::DENSITY => &["lb/ft^3", "kg/m^3", "g/cm^3"],
        Dim::COMPRESSIBILITY => &["1/psi", "1/bar", "1/kPa", "1/Pa"],
        Dim::SURFACE_RATE => &["stb/day", "sm3/day"],
        Dim::RESERVOIR_RATE => &["rb/day", "rm3/day"],
        Dim::FVF => &["rb/stb", "rm3/sm3"],
        Dim::PRESSURE_GRADIENT => &["psi/ft", "bar/m", "kPa/m"],
        Dim::SURFACE_RATE_PER_PRESSURE => &["stb/day/psi", "sm3/day/bar"],
        Dim::RESERVOIR_RATE_PER_PRESSURE => &["rb/day/psi", "rm3/day/bar"],
        Dim::MOBILITY => &["md/cP", "darcy/cP", "m^2/(Pa*s)"],
        Dim::FORCE => &["lbf", "N"],
        _ => &[],
    };
    if !curated.is_empty() {
        return curated.iter().map(|s| s.to_string()).collect();
    }
    let mut out = Vec::new();
    for bases in [FIELD_BASES, METRIC_BASES, SI_BASES] {
        if let Some(e) = compose(dim, bases) {
            if !out.contains(&e) {
                out.push(e);
            }
        }
    }
    out
}

/// Building blocks of composed expressions, most preferred first.
const FIELD_BASES: &[&str] = &["stb", "psi", "ft", "day", "cP", "lb", "rb"];
const METRIC_BASES: &[&str] = &["sm3", "bar", "m", "day", "cP", "kg", "rm3"];
const SI_BASES: &[&str] = &["sm3", "Pa", "m", "s", "kg"];

/// The simplest product of powers of `bases` with dimension `dim`: fewest
/// factors, then smallest total exponent, then earliest bases.
fn compose(dim: Dim, bases: &[&str]) -> Option<String> {
    const EXPS: [i8; 6] = [1, -1, 2, -2, 3, -3];
    let defs: Vec<&UnitDef> = bases.iter().filter_map(|b| lookup(b)).collect();
    // (factors, total |exponent|, sum of base indices): lower is simpler.
    type Score = (usize, i32, usize);
    let mut best: Option<(Score, Vec<(usize, i8)>)> = None;
    let mut consider = |factors: Vec<(usize, i8)>| {
        let mut d = Dim::NONE;
        for &(i, e) in &factors {
            match defs[i].dim.checked_pow(e).and_then(|p| d.checked_mul(p)) {
                Some(x) => d = x,
                None => return,
            }
        }
        if d != dim {
            return;
        }
        let score = (
            factors.len(),
            factors.iter().map(|&(_, e)| (e as i32).abs()).sum(),
            factors.iter().map(|&(i, _)| i).sum(),
        );
        if best.as_ref().is_none_or(|(s, _)| score < *s) {
            best = Some((score, factors));
        }
    };
    let n = defs.len();
    for a in 0..n {
        for &ea in &EXPS {
            consider(vec![(a, ea)]);
            for b in a + 1..n {
                for &eb in &EXPS {
                    consider(vec![(a, ea), (b, eb)]);
                    for c in b + 1..n {
                        for &ec in &EXPS {
                            consider(vec![(a, ea), (b, eb), (c, ec)]);
                        }
                    }
                }
            }
        }
    }
    let (_, factors) = best?;
    let power = |i: usize, e: i8| {
        let name = defs[i].name;
        if e.abs() == 1 {
            name.to_string()
        } else {
            format!("{name}^{}", e.abs())
        }
    };
    let num: Vec<String> = factors
        .iter()
        .filter(|f| f.1 > 0)
        .map(|&(i, e)| power(i, e))
        .collect();
    let mut s = if num.is_empty() {
        "1".to_string()
    } else {
        num.join("*")
    };
    for &(i, e) in factors.iter().filter(|f| f.1 < 0) {
        s.push('/');
        s.push_str(&power(i, e));
    }
    Some(s)
}

// ---------------------------------------------------------------------------
// Display systems
// ---------------------------------------------------------------------------

/// How values are shown to the user.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub enum System {
    #[default]
    Field,
    Metric,
    Si,
}

impl System {
    pub const ALL: [System; 3] = [System::Field, System::Metric, System::Si];

    /// `"field"`, `"metric"` or `"si"`, as written in a case.
    pub fn name(self) -> &'static str {
        match self {
            System::Field => "field",
            System::Metric => "metric",
            System::Si => "si",
        }
    }

    /// The system written `name` (exact, lower case).
    pub fn from_name(name: &str) -> Option<System> {
        System::ALL.into_iter().find(|s| s.name() == name)
    }
}

impl fmt::Display for System {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What a shown quantity is, which picks its display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
pub enum Kind {
    Length,
    Area,
    Permeability,
    Pressure,
    Time,
    Viscosity,
    Density,
    Compressibility,
    SurfaceRate,
    ReservoirRate,
    SurfaceVolume,
    ReservoirVolume,
    Fvf,
    /// Surface rate per pressure.
    Transmissibility,
    /// Geometric well index, permeability times length (`md*ft`).
    WellIndex,
    /// Surface rate per pressure.
    Productivity,
}

impl Kind {
    pub const ALL: [Kind; 16] = [
        Kind::Length,
        Kind::Area,
        Kind::Permeability,
        Kind::Pressure,
        Kind::Time,
        Kind::Viscosity,
        Kind::Density,
        Kind::Compressibility,
        Kind::SurfaceRate,
        Kind::ReservoirRate,
        Kind::SurfaceVolume,
        Kind::ReservoirVolume,
        Kind::Fvf,
        Kind::Transmissibility,
        Kind::WellIndex,
        Kind::Productivity,
    ];

    /// The dimension of quantities of this kind.
    pub fn dim(self) -> Dim {
        match self {
            Kind::Length => Dim::LENGTH,
            Kind::Area => Dim::AREA,
            Kind::Permeability => Dim::PERMEABILITY,
            Kind::Pressure => Dim::PRESSURE,
            Kind::Time => Dim::TIME,
            Kind::Viscosity => Dim::VISCOSITY,
            Kind::Density => Dim::DENSITY,
            Kind::Compressibility => Dim::COMPRESSIBILITY,
            Kind::SurfaceRate => Dim::SURFACE_RATE,
            Kind::ReservoirRate => Dim::RESERVOIR_RATE,
            Kind::SurfaceVolume => Dim::SURFACE_VOLUME,
            Kind::ReservoirVolume => Dim::RESERVOIR_VOLUME,
            Kind::Fvf => Dim::FVF,
            Kind::Transmissibility | Kind::Productivity => Dim::SURFACE_RATE_PER_PRESSURE,
            Kind::WellIndex => Dim::RESERVOIR_VOLUME,
        }
    }

    fn unit_names(self) -> [&'static str; 3] {
        // [field, metric, si]
        match self {
            Kind::Length => ["ft", "m", "m"],
            Kind::Area => ["ft^2", "m^2", "m^2"],
            Kind::Permeability => ["md", "md", "m^2"],
            Kind::Pressure => ["psi", "bar", "Pa"],
            Kind::Time => ["day", "day", "s"],
            Kind::Viscosity => ["cP", "cP", "Pa*s"],
            Kind::Density => ["lb/ft^3", "kg/m^3", "kg/m^3"],
            Kind::Compressibility => ["1/psi", "1/bar", "1/Pa"],
            Kind::SurfaceRate => ["stb/day", "sm3/day", "sm3/s"],
            Kind::ReservoirRate => ["rb/day", "rm3/day", "m3/s"],
            Kind::SurfaceVolume => ["stb", "sm3", "sm3"],
            Kind::ReservoirVolume => ["rb", "rm3", "m3"],
            Kind::Fvf => ["rb/stb", "rm3/sm3", "m3/sm3"],
            Kind::Transmissibility | Kind::Productivity => {
                ["stb/day/psi", "sm3/day/bar", "sm3/s/Pa"]
            }
            Kind::WellIndex => ["md*ft", "md*m", "m^3"],
        }
    }
}

/// The unit a quantity is shown in: value shown = SI value / `factor`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DisplayUnit {
    pub name: &'static str,
    pub factor: f64,
}

impl DisplayUnit {
    /// The SI value `si` in this unit.
    pub fn from_si(&self, si: f64) -> f64 {
        si / self.factor
    }
    /// The value `v`, given in this unit, in SI.
    pub fn to_si(&self, v: f64) -> f64 {
        v * self.factor
    }
}

fn system_index(system: System) -> usize {
    match system {
        System::Field => 0,
        System::Metric => 1,
        System::Si => 2,
    }
}

/// The unit `kind` is shown in under `system`.
pub fn display_unit(kind: Kind, system: System) -> DisplayUnit {
    static TABLE: OnceLock<Vec<[DisplayUnit; 3]>> = OnceLock::new();
    let table = TABLE.get_or_init(|| {
        Kind::ALL
            .iter()
            .map(|k| {
                k.unit_names().map(|name| DisplayUnit {
                    name,
                    // The names are fixed above and covered by tests.
                    factor: parse(name).map(|u| u.factor).unwrap_or(f64::NAN),
                })
            })
            .collect()
    });
    // `Kind::ALL` lists the variants in declaration order.
    table[kind as usize][system_index(system)]
}

/// `si` shown in the display unit of `kind` under `system`, e.g.
/// `"1250.3 psi"`: six significant digits without trailing zeros, exponent
/// form below 1e-4 and from 1e7 on.
pub fn format_si(si: f64, kind: Kind, system: System) -> String {
    let unit = display_unit(kind, system);
    format!("{} {}", format_number(unit.from_si(si)), unit.name)
}

/// A number with six significant digits and no trailing zeros.
pub fn format_number(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    // Round to six significant digits first, so that the form is chosen
    // from the number shown (999999.7 shows as 1000000, 9999999 as 1e7).
    let sci = format!("{v:.5e}");
    let rounded: f64 = sci.parse().unwrap_or(v);
    let a = rounded.abs();
    if !(1e-4..1e7).contains(&a) {
        let (mant, exp) = sci.split_once('e').unwrap_or((&sci, "0"));
        return format!("{}e{exp}", trim_zeros(mant));
    }
    let mag = a.log10().floor() as i32;
    let decimals = (5 - mag).max(0) as usize;
    let s = format!("{rounded:.decimals$}");
    trim_zeros(&s).to_string()
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}
