//! Nearest-name suggestions for unknown units, and the units accepted for a
//! dimension (for fixes and completion).

use crate::{lookup, parse, registry, Dim, UnitDef};

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
    for d in registry() {
        if d.name != name && d.name.eq_ignore_ascii_case(name) {
            push_unique(&mut out, d.name);
        }
    }
    // `ft2`, `m2`, `in3`: a registry name followed by a power.
    if let Some(split) = name.find(|c: char| c.is_ascii_digit()) {
        let (base, digits) = name.split_at(split);
        if digits.bytes().all(|b| b.is_ascii_digit()) && digits != "1" && !base.is_empty() {
            let mut bases: Vec<&str> = registry()
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
        let mut scored: Vec<(usize, f64, usize, &str)> = registry()
            .iter()
            .enumerate()
            .filter_map(|(i, d)| {
                let cand = d.name.to_lowercase();
                // The distance is at least the difference in length; skip
                // the quadratic computation where it cannot pass.
                if n.abs_diff(cand.chars().count()) > max {
                    return None;
                }
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

// Accepted units per dimension

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
