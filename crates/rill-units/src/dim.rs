//! Dimension vectors over length L, mass M, time T and surface volume S,
//! and their checked arithmetic.

use serde::Serialize;
use std::fmt;
use std::ops::{Div, Mul};

/// Exponents over length, mass, time and surface volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub struct Dim {
    /// Exponent of length.
    pub l: i8,
    /// Exponent of mass.
    pub m: i8,
    /// Exponent of time.
    pub t: i8,
    /// Exponent of surface volume.
    pub s: i8,
}

impl Dim {
    /// The vector with these exponents.
    pub const fn new(l: i8, m: i8, t: i8, s: i8) -> Dim {
        Dim { l, m, t, s }
    }
    /// Dimensionless.
    pub const NONE: Dim = Dim::new(0, 0, 0, 0);
    /// Length (`m`, `ft`).
    pub const LENGTH: Dim = Dim::new(1, 0, 0, 0);
    /// Area (`acre`, `m^2`).
    pub const AREA: Dim = Dim::new(2, 0, 0, 0);
    /// Permeability is an area.
    pub const PERMEABILITY: Dim = Dim::new(2, 0, 0, 0);
    /// Reservoir (in-situ, geometric) volume (`rb`, `m3`).
    pub const RESERVOIR_VOLUME: Dim = Dim::new(3, 0, 0, 0);
    /// Surface volume, at standard conditions (`stb`, `sm3`).
    pub const SURFACE_VOLUME: Dim = Dim::new(0, 0, 0, 1);
    /// Time (`day`, `s`).
    pub const TIME: Dim = Dim::new(0, 0, 1, 0);
    /// Mass (`kg`, `lb`).
    pub const MASS: Dim = Dim::new(0, 1, 0, 0);
    /// Pressure (`psi`, `Pa`).
    pub const PRESSURE: Dim = Dim::new(-1, 1, -2, 0);
    /// Dynamic viscosity (`cP`, `Pa*s`).
    pub const VISCOSITY: Dim = Dim::new(-1, 1, -1, 0);
    /// Density (`lb/ft^3`, `kg/m3`).
    pub const DENSITY: Dim = Dim::new(-3, 1, 0, 0);
    /// Compressibility, inverse pressure (`1/psi`).
    pub const COMPRESSIBILITY: Dim = Dim::new(1, -1, 2, 0);
    /// Surface volume per time (`stb/day`).
    pub const SURFACE_RATE: Dim = Dim::new(0, 0, -1, 1);
    /// Reservoir volume per time (`rb/day`).
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

    /// `self` raised to an integer power (exponents multiplied), for
    /// constants such as `Dim::FVF.pow(-1)`.
    ///
    /// # Panics
    /// When an exponent leaves `i8`. Anything computed from input (a unit
    /// or an expression in a deck) must use [`Dim::checked_pow`],
    /// [`Dim::checked_mul`] and [`Dim::checked_div`] and report the `None`.
    #[track_caller]
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

/// Product of constants (exponents added).
///
/// # Panics
/// When an exponent leaves `i8`; input-driven code uses [`Dim::checked_mul`].
impl Mul for Dim {
    type Output = Dim;
    #[track_caller]
    fn mul(self, rhs: Dim) -> Dim {
        self.checked_mul(rhs).expect("dimension exponent overflow")
    }
}

/// Quotient of constants (exponents subtracted).
///
/// # Panics
/// When an exponent leaves `i8`; input-driven code uses [`Dim::checked_div`].
impl Div for Dim {
    type Output = Dim;
    #[track_caller]
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
