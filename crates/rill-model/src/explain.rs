//! What each diagnostic code means, with a wrong and a right example and
//! how to fix it: the text of `rill explain CODE` and of editor hovers on a
//! diagnostic code.

use crate::diagnostic::Code;

/// Documentation of one diagnostic code.
#[derive(Debug, Clone, Copy)]
pub struct Explanation {
    /// The code explained.
    pub code: Code,
    /// One sentence: what the code means.
    pub summary: &'static str,
    /// More on when it is raised and why.
    pub details: &'static str,
    /// A deck fragment that raises it.
    pub wrong: &'static str,
    /// The same fragment put right.
    pub right: &'static str,
    /// How to fix it.
    pub fix: &'static str,
}

/// The explanation of `code` (every code has one).
pub fn explain(code: Code) -> Option<&'static Explanation> {
    EXPLANATIONS.iter().find(|e| e.code == code)
}

/// Every explanation, one per code.
pub static EXPLANATIONS: &[Explanation] = &[
    Explanation {
        code: Code::SyntaxUnexpected,
        summary: "A token that does not fit where it stands.",
        details: "The parser expected one thing (a value after `=`, a key, a closing bracket) and found another. It skips to the end of the statement and goes on, so later mistakes are reported too.",
        wrong: "rock {\n  porosity = = 0.2\n}",
        right: "rock {\n  porosity = 0.2\n}",
        fix: "Read the message for what was expected; remove or replace the token it points at.",
    },
    Explanation {
        code: Code::SyntaxUnclosed,
        summary: "A `{`, `[`, `(` or string left open.",
        details: "Every block, list, tuple and string must be closed. The diagnostic points at the opening delimiter that has no partner.",
        wrong: "grid {\n  dz = [20 15 15 30 ft\n}",
        right: "grid {\n  dz = [20 15 15 30] ft\n}",
        fix: "Add the missing `}`, `]`, `)` or `\"`.",
    },
    Explanation {
        code: Code::DeckUnknownBlock,
        summary: "A block name that is not in the schema.",
        details: "Top-level blocks are case, grid, rock, fluid, initial, well, boundary, timeline and report; `rock` holds `patch`, `timeline` holds `at` events, which hold `well` changes.",
        wrong: "fluids {\n  viscosity = 0.8 cP\n}",
        right: "fluid {\n  viscosity = 0.8 cP\n}",
        fix: "Use the suggested nearest block name.",
    },
    Explanation {
        code: Code::DeckUnknownKey,
        summary: "A key that the block does not take.",
        details: "Each block has a fixed set of keys; a misspelt key would otherwise be silently ignored.",
        wrong: "rock {\n  porosty = 0.2\n}",
        right: "rock {\n  porosity = 0.2\n}",
        fix: "Use the suggested nearest key; the note lists all keys of the block.",
    },
    Explanation {
        code: Code::DeckMissingKey,
        summary: "A required block or key is absent.",
        details: "A case needs grid (cells, dx, dy, dz, top), rock (porosity, kx), fluid (viscosity, fvf, density), initial (pressure) and timeline (end, for a transient run); a well needs role, radius, control and its completions.",
        wrong: "fluid {\n  viscosity = 0.8 cP\n  density = 62.4 lb/ft^3\n}",
        right: "fluid {\n  viscosity = 0.8 cP\n  fvf = 1.02 rb/stb\n  density = 62.4 lb/ft^3\n}",
        fix: "Add the key; the quick fix inserts it with a placeholder value to edit.",
    },
    Explanation {
        code: Code::DeckDuplicateKey,
        summary: "A key given twice in one block, or a single block given twice.",
        details: "Later statements never silently replace earlier ones. To override part of a rock property, use a `patch` block.",
        wrong: "rock {\n  kx = 100 md\n  kx = 50 md\n}",
        right: "rock {\n  kx = 100 md\n  patch k = 2 {\n    kx = 50 md\n  }\n}",
        fix: "Remove one of the two, or move the override into a patch.",
    },
    Explanation {
        code: Code::DeckDuplicateName,
        summary: "Two wells or two boundaries with one name.",
        details: "Names identify wells and boundaries in events and in results; they must be unique.",
        wrong: "well \"LE-1\" { ... }\nwell \"LE-1\" { ... }",
        right: "well \"LE-1\" { ... }\nwell \"LE-2\" { ... }",
        fix: "Rename one of them.",
    },
    Explanation {
        code: Code::DeckInclude,
        summary: "An include or array file that is missing, unreadable, cyclic or outside the workspace.",
        details: "Paths are relative to the file that names them, and `..` is taken from its real folder. A file that includes itself, directly or through others, is refused; so is a path outside the workspace folders unless the editor settings allow it (with no folder open, a saved deck reads its own folder only and an unsaved buffer nothing). Only regular files are read: a FIFO, a device, a directory or a loop of symbolic links is refused at once, and so is an array file over 512 MiB or an included deck over 16 MiB.",
        wrong: "include \"wells-typo.rill\"",
        right: "include \"wells.rill\"",
        fix: "Correct the path, or create the file.",
    },
    Explanation {
        code: Code::DeckReference,
        summary: "A name that refers to nothing, or properties that refer to each other in a cycle.",
        details: "Rock expressions may refer to porosity, kx, ky and kz of the same block; events refer to wells by name. (An extension of the specification's minimum set.)",
        wrong: "kz = 0.1 * kxx",
        right: "kz = 0.1 * kx",
        fix: "Use the suggested name, or break the cycle.",
    },
    Explanation {
        code: Code::DeckValue,
        summary: "A value of the wrong form for its key.",
        details: "Each key takes a certain form: one quantity `0.3 ft`, text in quotes, a column `(i, j)`, a list of cells `[(i, j, k)]`, a control `rate 600 stb/day`, a pressure `at` a depth. A word that is not one of the choices is `deck.choice`, a number outside its range `deck.out-of-range`, arithmetic where none is allowed `deck.expression`. (An extension of the specification's minimum set.)",
        wrong: "location = 2",
        right: "location = (2, 2)",
        fix: "Write the form the message names.",
    },
    Explanation {
        code: Code::DeckChoice,
        summary: "A word that is not one of the choices its key allows.",
        details: "Some keys take one word from a fixed list: `role` (producer, injector), `side` of a boundary, `kind` of a run, report `units`, the mode of a `control` (rate, bhp, shut), the axes of a `patch` (i, j, k). The message lists the choices and, for a near miss, offers the nearest. (An extension of the specification's minimum set.)",
        wrong: "role = farmer",
        right: "role = producer",
        fix: "Write one of the listed choices.",
    },
    Explanation {
        code: Code::DeckOutOfRange,
        summary: "A number of the right form outside the range its key allows.",
        details: "`growth` of the time step lies between 1 and 10; a well rate is positive (the well's `role` says whether it produces or injects). Every number must be finite and below about 1.8e308 in SI and in the units rill shows it in: `1e309`, `1e306 darcy` (1e309 md) or `1e308 md * 10` is refused, as is any step of arithmetic that overflows. Physical properties out of range are `sanity.*` instead. (An extension of the specification's minimum set.)",
        wrong: "control = rate -600 stb/day",
        right: "control = rate 600 stb/day",
        fix: "Bring the value inside the range the message names; for a rate, drop the sign.",
    },
    Explanation {
        code: Code::DeckExpression,
        summary: "Arithmetic where the key takes a single value, or an operator without a value after it.",
        details: "Rock properties may be written as arithmetic over other properties (`kz = 0.1 * kx`); other keys take one value. An expression must not end in an operator. (An extension of the specification's minimum set.)",
        wrong: "dz = 20 ft + 5 ft",
        right: "dz = 25 ft",
        fix: "Write the value itself, or complete the expression.",
    },
    Explanation {
        code: Code::DeckPhases,
        summary: "A deck that mixes single-phase and oil-water parts: `fluid` with `oil` or `water`, only one of `oil` and `water`, or an oil-water block, key or control in a single-phase deck.",
        details: "A single-phase deck has one `fluid` block and well controls `rate`, `bhp` or `shut`. An oil-water deck has an `oil` and a `water` block instead, `relperm` blocks, a water contact or saturation in `initial`, and controls that name their phase (`oil_rate`, `liquid_rate`, `water_rate`). Which kind a deck is follows from its blocks: `oil` or `water` make it oil-water.",
        wrong: "fluid {\n  viscosity = 0.8 cP\n  fvf = 1.02 rb/stb\n  density = 62.4 lb/ft^3\n}\ninitial {\n  pressure = 3000 psi at 6000 ft\n  water_contact = 6040 ft\n}",
        right: "oil {\n  viscosity = 2 cP\n  fvf = 1.2 rb/stb\n  density = 52 lb/ft^3\n}\nwater {\n  viscosity = 0.5 cP\n  fvf = 1.01 rb/stb\n  density = 63.5 lb/ft^3\n}\ninitial {\n  pressure = 3000 psi at 6000 ft\n  water_contact = 6040 ft\n}",
        fix: "Decide which kind the deck is: for one liquid, keep `fluid` and remove the oil-water parts (the fix turns a phase rate into `rate`); for oil and water, replace `fluid` by `oil` and `water` (the fix removes a `fluid` that stands beside both, or adds the missing one).",
    },
    Explanation {
        code: Code::UnitUnknown,
        summary: "A unit name that is not in the registry.",
        details: "Units are case-sensitive (`cP`, `md`, `psi`). The registry holds lengths, areas, permeabilities, pressures, times, volumes (reservoir and surface), viscosities, masses and `%`.",
        wrong: "viscosity = 0.8 cp",
        right: "viscosity = 0.8 cP",
        fix: "Use the suggested nearest unit.",
    },
    Explanation {
        code: Code::UnitMissing,
        summary: "A dimensional value without a unit.",
        details: "There is no implicit unit system: `kx = 150` could be md or darcy, a factor of 1000 apart.",
        wrong: "kx = 150",
        right: "kx = 150 md",
        fix: "Add the unit; the quick fixes offer the usual ones for the key.",
    },
    Explanation {
        code: Code::UnitDimension,
        summary: "A unit of the wrong dimension for the key.",
        details: "Each key has a dimension (permeability is an area, pressure is force per area, ...). A unit of another dimension is a mistake, not a conversion.",
        wrong: "kx = 150 psi",
        right: "kx = 150 md",
        fix: "Use one of the accepted units listed in the message.",
    },
    Explanation {
        code: Code::UnitVolumeKind,
        summary: "Reservoir volume where surface volume is meant, or the reverse.",
        details: "Rates are at surface (stock-tank) conditions: stb/day or sm3/day. The formation volume factor is reservoir volume per surface volume (rb/stb); written as stb/rb it is upside down. rill keeps surface volume S apart from geometric volume L^3 to catch both.",
        wrong: "control = rate 500 bbl/day\nfvf = 0.98 stb/rb",
        right: "control = rate 490.196 stb/day   # 500 bbl/day / fvf 1.02\nfvf = 1.02041 rb/stb",
        fix: "A reservoir rate becomes a surface rate by dividing it by the formation volume factor: the fix writes the converted number with the surface unit (500 bbl/day at fvf 1.02 rb/stb is 490.196 stb/day); for an upside-down fvf write the reciprocal in rb/stb.",
    },
    Explanation {
        code: Code::UnitGauge,
        summary: "A gauge unit inside a compound unit or for a difference.",
        details: "`psig` and `barg` add atmospheric pressure (14.696 psi, 1.01325 bar). That only makes sense for an absolute pressure value standing alone, never inside `psig/ft` or in arithmetic.",
        wrong: "pressure = 3000 psig + 10 psig at 7000 ft",
        right: "pressure = 3014.7 psi at 7000 ft",
        fix: "Use the absolute unit (`psi`, `bar`).",
    },
    Explanation {
        code: Code::GridArrayLength,
        summary: "An array with the wrong number of values.",
        details: "`dx` lists NX widths, `dy` NY, `dz` NZ (or NX*NY*NZ with `cells`), `layers` NZ values, `cells` and `file` NX*NY*NZ, `columns` NX*NY. The message says how many were expected and found.",
        wrong: "cells = 3 x 1 x 4\n...\nkx = layers [150 40 300] md",
        right: "kx = layers [150 40 300 90] md",
        fix: "Add or remove values; check which layer is missing.",
    },
    Explanation {
        code: Code::GridCells,
        summary: "A grid size `cells = NX x NY x NZ` that is malformed, has a zero count, or is too large.",
        details: "`cells` takes three positive counts. rill holds at most 20 million cells: every per-cell property takes 8 bytes a cell and is re-checked on each edit, so a slip such as `600 x 2200 x 850` is refused rather than allocated. A 2D areal grid is NX x NY x 1. (An extension of the specification's minimum set.)",
        wrong: "cells = 30 x 20",
        right: "cells = 30 x 20 x 1",
        fix: "Give three positive counts whose product is at most 20 million.",
    },
    Explanation {
        code: Code::GridSpacing,
        summary: "A cell size that is zero or negative.",
        details: "Every width and thickness must be positive. Make a cell inactive with porosity 0 instead of a zero size. Grid sizes (`cells`) are `grid.cells`.",
        wrong: "dz = [20 0 15] ft",
        right: "dz = [20 5 15] ft",
        fix: "Give every cell a positive size.",
    },
    Explanation {
        code: Code::GridIndex,
        summary: "A patch range or other index outside the grid.",
        details: "Indices are 1-based: i in 1..NX, j in 1..NY, k in 1..NZ. Wells report `well.completion` instead.",
        wrong: "patch i = 12..14 k = 5 { kz = 0 md }   # NZ = 4",
        right: "patch i = 12..14 k = 4 { kz = 0 md }",
        fix: "Bring the range inside the grid.",
    },
    Explanation {
        code: Code::SanityPorosity,
        summary: "Porosity outside [0, 1] (error) or above 0.45 (warning).",
        details: "Porosity is a fraction. 22 written without `%` is 22, not 0.22. Values above 0.45 are rare for reservoir rock (common practice, no published source).",
        wrong: "porosity = 22",
        right: "porosity = 22 %",
        fix: "Write a fraction, or add `%`.",
    },
    Explanation {
        code: Code::SanityPermeability,
        summary: "Negative permeability (error) or above 20 darcy (warning).",
        details: "Very high values often come from a unit slip (darcy for md).",
        wrong: "kx = 150 darcy",
        right: "kx = 150 md",
        fix: "Check the unit and the value.",
    },
    Explanation {
        code: Code::SanityViscosity,
        summary: "Viscosity not positive (error) or outside 0.01-10000 cP (warning).",
        details: "Water at reservoir conditions is about 0.3-1 cP (common practice, no published source).",
        wrong: "viscosity = 0.8 Pa*s",
        right: "viscosity = 0.8 cP",
        fix: "Check the unit: 1 Pa*s is 1000 cP.",
    },
    Explanation {
        code: Code::SanityCompressibility,
        summary: "Negative compressibility (error) or above 1e-3 1/psi (warning).",
        details: "Water is about 3e-6 1/psi, consolidated rock about 3e-6 to 1e-5 1/psi (common practice, no published source).",
        wrong: "compressibility = 4e-6 1/Pa",
        right: "compressibility = 4e-6 1/psi",
        fix: "Check the unit and the exponent.",
    },
    Explanation {
        code: Code::SanityFvf,
        summary: "Formation volume factor not positive (error), outside 0.5-3 rb/stb, or an oil's below 1 rb/stb (warnings).",
        details: "A liquid's fvf is near 1 rb/stb. Oil in the reservoir holds its dissolved gas and fills more room than the stock-tank oil it gives, so an `oil` block's fvf below 1 rb/stb is most likely upside down (1/fvf); water and a single-phase `fluid` may sit just below 1.",
        wrong: "fvf = 10.2 rb/stb",
        right: "fvf = 1.02 rb/stb",
        fix: "Check the value; an fvf below 1 may be upside down.",
    },
    Explanation {
        code: Code::SanityDensity,
        summary: "A liquid density outside 500-1300 kg/m^3 (warning).",
        details: "Fresh water is 62.4 lb/ft^3 (1000 kg/m^3); brines reach about 1200 kg/m^3.",
        wrong: "density = 62.4 kg/m^3",
        right: "density = 62.4 lb/ft^3",
        fix: "Check the unit.",
    },
    Explanation {
        code: Code::SanityMobility,
        summary: "An endpoint mobility ratio `(krw_end / mu_w) / (kro_end / mu_o)` above 10: an unstable displacement.",
        details: "The ratio compares the mobility of the water behind a flood front with that of the oil ahead of it. Above 1 the water is the more mobile and the front can finger; well above it (10 is a rule of thumb, common practice, no published source) viscous fingers carry water far ahead of the mean front. A grid coarser than the fingers cannot show them: it smears the front, so water breaks through later and the water cut climbs faster than in the field. Nothing is wrong with the deck; the note says how far to trust a coarse model of the flood.",
        wrong: "oil {\n  viscosity = 40 cP\n  ...\n}\nrelperm \"sand\" {\n  krw_end = 0.3\n  kro_end = 0.8\n  ...\n}",
        right: "oil {\n  viscosity = 2 cP\n  ...\n}\nrelperm \"sand\" {\n  krw_end = 0.3\n  kro_end = 0.8\n  ...\n}",
        fix: "None needed when the viscosities and end points are right: refine the grid where the flood runs, or read the results as an optimistic bound. Check the viscosities' units (cP) and that `krw_end` and `kro_end` are not swapped.",
    },
    Explanation {
        code: Code::SanityRadius,
        summary: "A wellbore radius not below half the cell width (error) or below 1 inch (warning).",
        details: "Peaceman's well model needs the wellbore well inside its cell; a radius of 0.3 in where 0.3 ft was meant gives a wrong well index.",
        wrong: "radius = 3 ft   # in a 5 ft cell",
        right: "radius = 0.3 ft",
        fix: "Check the unit and the cell size.",
    },
    Explanation {
        code: Code::SanityPressure,
        summary: "An absolute pressure (BHP control or limit, boundary pressure) that is zero or negative.",
        details: "Pressures in rill are absolute; gauge units (psig, barg) count from 1 atm. A BHP of 0 psia or less, or a boundary held at it, cannot be reached by a liquid: usually a sign slip or a gauge value written in an absolute unit. (An extension of the specification's minimum set.)",
        wrong: "control = bhp -150 psi",
        right: "control = bhp 150 psi",
        fix: "Check the sign and the unit of the pressure.",
    },
    Explanation {
        code: Code::RelpermEndpoints,
        summary: "Saturation-function endpoints that cannot hold: a saturation outside [0, 1], `swc + sor` of 1 or more, an end-point relative permeability outside (0, 1]; a table whose first `krw` or last `kro` is not 0 (a warning; an error at sw = 0 or sw = 1).",
        details: "Corey curves need `0 <= swc`, `0 <= sor` and `swc + sor < 1`, so that some saturation range is left to flow in, and `krw_end` and `kro_end` above 0 and at most 1. A table's saturations and relative permeabilities lie between 0 and 1, some `krw` must be positive and the first `kro` too. A phase cannot flow where there is none of it: below a table's first row `krw` falls linearly to 0 at sw = 0, and above its last row `kro` falls linearly to 0 at sw = 1 (every other curve is held constant beyond the ends). So a first `krw` above 0 lets water flow below the table's lowest saturation and a last `kro` above 0 leaves no residual oil: both are allowed, with a warning. A positive `krw` in a row at sw = 0, or a positive `kro` in a row at sw = 1, would let a phase flow out of a cell that holds none of it: an error.",
        wrong: "relperm \"sand\" {\n  model = corey\n  swc = 0.2\n  sor = 0.85\n  ...\n}",
        right: "relperm \"sand\" {\n  model = corey\n  swc = 0.2\n  sor = 0.25\n  ...\n}",
        fix: "Check the saturation for a percentage written as a fraction (or the reverse) and for `swc` and `sor` swapped with `1 - swc` or `1 - sor`; end-point relative permeabilities are fractions of the absolute permeability.",
    },
    Explanation {
        code: Code::RelpermShape,
        summary: "A saturation table of the wrong shape: `sw` not increasing, `krw` falling, `kro` or `pc` rising, or lists of different lengths; a Corey exponent below 1 (a warning).",
        details: "A `model = table` relperm gives one row per saturation: `sw` increases strictly from row to row; as water saturation rises `krw` never falls, `kro` never rises and the capillary pressure `pc = p_oil - p_water` never rises; `sw`, `krw`, `kro` and `pc` have one value per row each, and there are at least two rows. A Corey exponent `nw` or `no` below 1 makes its curve rise with an infinite slope from its end point (`swc` for `krw`, `1 - sor` for `kro`): allowed, with a warning, since Newton cannot follow such a curve where the phase starts to flow and a run takes very short steps there. Measured Corey exponents lie between about 1 and 6 (common practice, no published source).",
        wrong: "relperm \"shaly\" {\n  model = table\n  sw = [0.2 0.4 0.6 0.75]\n  krw = [0 0.05 0.15 0.3]\n  kro = [0.8 0.35 0.4 0]\n}",
        right: "relperm \"shaly\" {\n  model = table\n  sw = [0.2 0.4 0.6 0.75]\n  krw = [0 0.05 0.15 0.3]\n  kro = [0.8 0.35 0.1 0]\n}",
        fix: "Look for a transposed digit or a row out of place at the value the diagnostic points at; a list shorter or longer than `sw` has lost or gained a value.",
    },
    Explanation {
        code: Code::InitialPressure,
        summary: "The initial pressure is zero, negative or below 1 atm somewhere in the grid.",
        details: "With `pressure = P at DEPTH` the initial state is the hydrostatic column through the datum; a datum far below the grid (metres written for feet, or a depth with the wrong sign) makes the pressure at the top of the grid fall below zero. The message gives the lowest pressure, the grid's depth range and the datum. A liquid below 1 atm would boil. (An extension of the specification's minimum set.)",
        wrong: "pressure = 3850 psi at 8450 m   # grid top at 8000 ft",
        right: "pressure = 3850 psi at 8450 ft",
        fix: "Put the datum in the grid's depth range with the right unit, or correct the pressure.",
    },
    Explanation {
        code: Code::InitialContact,
        summary: "A water contact above the top of the grid (every cell full of water) or below its base (no cell in the water).",
        details: "`water_contact` is the depth of the free water level, where the oil and water pressures are equal. Above the top of the grid every cell lies below it and starts with `sw = 1`, so there is no oil to produce. Below the base no cell starts in the water: only the capillary transition zone, if it is tall enough, reaches into the grid, and otherwise every cell starts at connate water. Both happen when a depth is in metres where feet were meant, or measured upward.",
        wrong: "grid {\n  top = 6000 ft\n  ...\n}\ninitial {\n  pressure = 3000 psi at 6000 ft\n  water_contact = 5900 ft\n}",
        right: "grid {\n  top = 6000 ft\n  ...\n}\ninitial {\n  pressure = 3000 psi at 6000 ft\n  water_contact = 6040 ft\n}",
        fix: "Check the contact's depth and unit against the grid's depths (the message gives both); a deck without a water leg may mean a contact below the base, which is then fine.",
    },
    Explanation {
        code: Code::WellCompletion,
        summary: "A completion outside the grid or in an inactive cell.",
        details: "Completed cells must be inside 1..NX, 1..NY, 1..NZ and have porosity above 0.",
        wrong: "location = (31, 10)   # NX = 30",
        right: "location = (30, 10)",
        fix: "Move the completion into an active cell of the grid.",
    },
    Explanation {
        code: Code::WellBhp,
        summary: "A producer's BHP above the initial pressure, or an injector's below it.",
        details: "A producer held above the reservoir pressure would inject, and an injector below it would produce. Compared at the depth of the top completion, with the initial pressure in hydrostatic equilibrium.",
        wrong: "role = producer\ncontrol = bhp 3500 psi   # reservoir at 3200 psi",
        right: "role = producer\ncontrol = bhp 1500 psi",
        fix: "Check the role and the pressure.",
    },
    Explanation {
        code: Code::WellProductivity,
        summary: "Every completion of a well has a zero well index: the well cannot flow.",
        details: "Peaceman's well index needs both permeabilities normal to the wellbore (kx and ky for a vertical completion) above zero, and an active cell. A well completed only in cells without them takes and gives nothing; its rate could never be met. Each completion is listed with the reason. (An extension of the specification's minimum set.)",
        wrong: "kx = 0 md   # the only completed layer",
        right: "kx = 120 md",
        fix: "Complete the well in permeable, active cells, or correct the permeabilities.",
    },
    Explanation {
        code: Code::WellControlPhase,
        summary: "A control whose phase does not fit the well's role: `oil_rate` or `liquid_rate` on an injector, `water_rate` on a producer, `max_water_cut` on an injector.",
        details: "In an oil-water deck injectors inject water, so their rate control is `water_rate`; producers hold their surface oil rate (`oil_rate`) or oil plus water rate (`liquid_rate`). `max_water_cut` shuts a producer whose water cut exceeds it and means nothing for an injector. `bhp` and `shut` fit both roles.",
        wrong: "well \"I-1\" {\n  role = injector\n  control = oil_rate 300 stb/day\n}",
        right: "well \"I-1\" {\n  role = injector\n  control = water_rate 300 stb/day\n}",
        fix: "Use the control of the well's role (the fix offers it), or correct the `role`.",
    },
    Explanation {
        code: Code::WellInjectionPressure,
        summary: "An injector BHP above 0.8 psi/ft times its depth.",
        details: "Such a pressure may exceed the fracture pressure of the rock (fracture gradients mostly fall between 0.6 and 0.9 psi/ft; common practice, no published source). The local fracture gradient, the injection permit and a licensed engineer decide; rill only warns.",
        wrong: "control = bhp 7000 psi   # top completion at 7150 ft",
        right: "control = bhp 5000 psi",
        fix: "Lower the pressure, or confirm the limit with local data and permits.",
    },
    Explanation {
        code: Code::FlowIsolated,
        summary: "An active cell with zero transmissibility on every face and no well.",
        details: "Its fluid can never move: usually zero permeabilities on all sides (a sealing streak above and below and zero kx, ky), or inactive neighbours all round. The warning stands on what cut the cells off: the patch that set a permeability to 0 there, or the fault that seals them, with the base value as related information.",
        wrong: "kx = 0 md in a cell whose kz faces are also zero",
        right: "porosity = 0 for cells meant to be inactive",
        fix: "Make the cell inactive, or check the zero permeabilities around it.",
    },
    Explanation {
        code: Code::FlowNoDrive,
        summary: "No well and no boundary: nothing moves.",
        details: "Without a well or a boundary nothing drives flow; only gravity can redistribute a non-equilibrium start.",
        wrong: "a case without well or boundary blocks",
        right: "well \"LE-1\" { ... }",
        fix: "Add a well or a boundary, unless an equilibrium test is meant.",
    },
    Explanation {
        code: Code::TimelineOrder,
        summary: "Events out of order, `first_step` above `end`, or an event after `end`.",
        details: "Events must come in increasing time within the run.",
        wrong: "end = 100 day\nat 180 day { ... }",
        right: "end = 365 day\nat 180 day { ... }",
        fix: "Reorder the events or extend `end`.",
    },
    Explanation {
        code: Code::BoundaryOverlap,
        summary: "Two boundaries, or a boundary and an aquifer, or two aquifers, hold the same outer face of the grid.",
        details: "A face can be held by one boundary or one aquifer only. Boundaries and aquifers on one side must select disjoint cells with their `i`, `j`, `k` selectors; the error is on the aquifer when one is involved, else on the later boundary.",
        wrong: "boundary \"A\" { side = east ... }\nboundary \"B\" { side = east; j = 1..5; ... }",
        right: "boundary \"A\" { side = east; j = 6..12; ... }\nboundary \"B\" { side = east; j = 1..5; ... }",
        fix: "Restrict one of them with `i`, `j` or `k` so that they do not share a face.",
    },
    Explanation {
        code: Code::FaultFaces,
        summary: "A fault that selects faces on the grid's edge, with no cell across.",
        details: "A `fault` scales the transmissibility of the faces on its `side` of every selected cell; each such face must lie between two cells. With `side = east` the selection must stop before the last column (i below NX), with `side = top` below the first layer, and so on. An omitted `i`, `j` or `k` means every index, so `side = east` without `i` reaches the east edge. An edge held at a pressure is a `boundary`; a closed edge needs nothing.",
        wrong: "fault \"Crane\" {\n  side = east\n  j = 1..12\n  multiplier = 0.02\n}",
        right: "fault \"Crane\" {\n  side = east\n  i = 20\n  j = 1..12\n  multiplier = 0.02\n}",
        fix: "Restrict `i`, `j` or `k` to cells with a neighbour on that side.",
    },
    Explanation {
        code: Code::TimelineSteps,
        summary: "The run cannot finish within `max_steps`, or `min_step` is above `first_step` or `max_step`.",
        details: "A run takes at least `end` / `max_step` steps; when that is above `max_steps` (default 100000) it would stop before the end. `min_step` (default 1 s, or `first_step` when shorter) is the shortest step a cut may leave: a step that fails at that length stops the run rather than creep on for hours.",
        wrong: "end = 100 day\nmax_step = 1e-4 day",
        right: "end = 100 day\nmax_step = 5 day",
        fix: "Raise `max_step`, shorten `end`, or raise `max_steps` when that many steps are really meant.",
    },
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_code_is_explained_once() {
        for code in Code::ALL {
            assert_eq!(
                EXPLANATIONS.iter().filter(|e| e.code == *code).count(),
                1,
                "{code}"
            );
        }
        assert_eq!(EXPLANATIONS.len(), Code::ALL.len());
    }
}
