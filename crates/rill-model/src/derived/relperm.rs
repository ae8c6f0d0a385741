//! Saturation functions of an oil-water deck: relative permeabilities and
//! capillary pressure of a `relperm` block as functions of the water
//! saturation, their inverse in capillary pressure, and the one-dimensional
//! displacement they give (Buckley-Leverett fractional flow without gravity
//! or capillarity, with Welge's tangent construction). Hover, the checks
//! and a two-phase engine read the curves here, so they agree.

use crate::case::{Corey, Curves, SatTable};

/// Linear interpolation in a table with increasing `x`, held constant
/// beyond its ends.
fn interpolate(x: &[f64], y: &[f64], at: f64) -> f64 {
    let n = x.len().min(y.len());
    if n == 0 {
        return 0.0;
    }
    if at <= x[0] {
        return y[0];
    }
    if at >= x[n - 1] {
        return y[n - 1];
    }
    // The first row at or above `at`; 1 <= i < n here.
    let i = x[..n].partition_point(|&v| v < at).clamp(1, n - 1);
    let (x0, x1, y0, y1) = (x[i - 1], x[i], y[i - 1], y[i]);
    if x1 <= x0 {
        return y1;
    }
    y0 + (y1 - y0) * (at - x0) / (x1 - x0)
}

/// The slope of the table's interpolant at `at` (the right-hand slope at a
/// row, 0 beyond the ends).
fn slope(x: &[f64], y: &[f64], at: f64) -> f64 {
    let n = x.len().min(y.len());
    if n < 2 || at < x[0] || at >= x[n - 1] {
        return 0.0;
    }
    let i = x[..n].partition_point(|&v| v <= at).clamp(1, n - 1);
    let (x0, x1) = (x[i - 1], x[i]);
    if x1 <= x0 {
        return 0.0;
    }
    (y[i] - y[i - 1]) / (x1 - x0)
}

impl Corey {
    /// The normalised saturation `S = (sw - swc) / (1 - swc - sor)`, clipped to [0, 1].
    pub fn normalised(&self, sw: f64) -> f64 {
        let span = 1.0 - self.swc - self.sor;
        if span <= 0.0 {
            return 0.0;
        }
        ((sw - self.swc) / span).clamp(0.0, 1.0)
    }
}

impl SatTable {
    /// The first saturation at which `kro` reaches 0 (`1 - sor`), or 1
    /// when no row has `kro` 0 (above its last row `kro` falls to 0 at
    /// sw = 1).
    pub fn oil_end(&self) -> f64 {
        self.sw
            .iter()
            .zip(&self.kro)
            .find(|(_, &k)| k <= 0.0)
            .map_or(1.0, |(&s, _)| s)
    }

    /// `krw` and its slope at `sw`: the table, and below its first row a
    /// line to 0 at sw = 0 (no water flows where there is none).
    fn water(&self, sw: f64) -> (f64, f64) {
        match (self.sw.first(), self.krw.first()) {
            (Some(&s0), Some(&k0)) if k0 > 0.0 && s0 > 0.0 && sw < s0 => {
                (k0 * sw.max(0.0) / s0, if sw >= 0.0 { k0 / s0 } else { 0.0 })
            }
            _ => (
                interpolate(&self.sw, &self.krw, sw),
                slope(&self.sw, &self.krw, sw),
            ),
        }
    }

    /// `kro` and its slope at `sw`: the table, and from its last row a
    /// line to 0 at sw = 1 (no oil flows where there is none).
    fn oil(&self, sw: f64) -> (f64, f64) {
        let n = self.sw.len().min(self.kro.len());
        if n > 0 {
            let (s1, k1) = (self.sw[n - 1], self.kro[n - 1]);
            if k1 > 0.0 && s1 < 1.0 && sw >= s1 {
                let v = k1 * ((1.0 - sw) / (1.0 - s1)).clamp(0.0, 1.0);
                return (v, if sw < 1.0 { -k1 / (1.0 - s1) } else { 0.0 });
            }
        }
        (
            interpolate(&self.sw, &self.kro, sw),
            slope(&self.sw, &self.kro, sw),
        )
    }
}

/// The curves and their slopes at one water saturation, for a Newton
/// Jacobian: relative permeabilities, capillary pressure (Pa) and their
/// derivatives in `sw` (exact for the Corey form; the slope of the linear
/// piece, from the right at a row, for a table; 0 where a curve is held
/// constant).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SatPoint {
    /// Water relative permeability.
    pub krw: f64,
    /// d krw / d sw.
    pub dkrw: f64,
    /// Oil relative permeability.
    pub kro: f64,
    /// d kro / d sw.
    pub dkro: f64,
    /// Capillary pressure `p_oil - p_water`, Pa.
    pub pc: f64,
    /// d pc / d sw, Pa.
    pub dpc: f64,
}

impl Curves {
    /// Every curve and its slope at `sw` (see [`SatPoint`]).
    pub fn at(&self, sw: f64) -> SatPoint {
        match self {
            Curves::Corey(c) => {
                let span = 1.0 - c.swc - c.sor;
                let s = c.normalised(sw);
                let inside = span > 0.0 && sw > c.swc && sw < 1.0 - c.sor;
                let ds = if inside { 1.0 / span } else { 0.0 };
                SatPoint {
                    krw: c.krw_end * s.powf(c.nw),
                    dkrw: if inside {
                        c.krw_end * c.nw * s.powf(c.nw - 1.0) * ds
                    } else {
                        0.0
                    },
                    kro: c.kro_end * (1.0 - s).powf(c.no),
                    dkro: if inside {
                        -c.kro_end * c.no * (1.0 - s).powf(c.no - 1.0) * ds
                    } else {
                        0.0
                    },
                    pc: c.pc_entry * (1.0 - s),
                    dpc: -c.pc_entry * ds,
                }
            }
            Curves::Table(t) => {
                let (krw, dkrw) = t.water(sw);
                let (kro, dkro) = t.oil(sw);
                SatPoint {
                    krw,
                    dkrw,
                    kro,
                    dkro,
                    pc: interpolate(&t.sw, &t.pc, sw),
                    dpc: slope(&t.sw, &t.pc, sw),
                }
            }
        }
    }

    /// The water saturation where the fractional flow `f_w` (no gravity,
    /// no capillarity) is steepest, between the connate saturation and
    /// `1 - sor`: the inflection point of the S-shaped curve, where a
    /// Newton update of a saturation should not cross in one step.
    /// Found on a grid of 2000 points (a table's slope is piecewise, so
    /// the steepest grid point is the answer to the table's resolution).
    pub fn steepest_flow(&self, mu_w: f64, mu_o: f64) -> f64 {
        let (lo, hi) = (self.swc(), self.sw_max());
        if hi <= lo {
            return lo;
        }
        const POINTS: usize = 2000;
        (0..=POINTS)
            .map(|i| lo + (hi - lo) * i as f64 / POINTS as f64)
            .max_by(|&a, &b| {
                self.fractional_flow_slope(a, mu_w, mu_o)
                    .total_cmp(&self.fractional_flow_slope(b, mu_w, mu_o))
            })
            .unwrap_or(lo)
    }

    /// Water relative permeability at water saturation `sw`.
    pub fn krw(&self, sw: f64) -> f64 {
        match self {
            Curves::Corey(c) => c.krw_end * c.normalised(sw).powf(c.nw),
            Curves::Table(t) => t.water(sw).0,
        }
    }

    /// Oil relative permeability at water saturation `sw`.
    pub fn kro(&self, sw: f64) -> f64 {
        match self {
            Curves::Corey(c) => c.kro_end * (1.0 - c.normalised(sw)).powf(c.no),
            Curves::Table(t) => t.oil(sw).0,
        }
    }

    /// Capillary pressure `p_oil - p_water` at water saturation `sw`, Pa.
    pub fn pc(&self, sw: f64) -> f64 {
        match self {
            Curves::Corey(c) => c.pc_entry * (1.0 - c.normalised(sw)),
            Curves::Table(t) => interpolate(&t.sw, &t.pc, sw),
        }
    }

    /// The connate (lowest) water saturation: `swc`, or a table's first `sw`.
    pub fn swc(&self) -> f64 {
        match self {
            Curves::Corey(c) => c.swc,
            Curves::Table(t) => t.sw.first().copied().unwrap_or(0.0),
        }
    }

    /// The water saturation at which oil stops flowing, `1 - sor`.
    pub fn sw_max(&self) -> f64 {
        match self {
            Curves::Corey(c) => 1.0 - c.sor,
            Curves::Table(t) => t.oil_end(),
        }
    }

    /// The end points `(krw at 1 - sor, kro at swc)`.
    pub fn endpoints(&self) -> (f64, f64) {
        (self.krw(self.sw_max()), self.kro(self.swc()))
    }

    /// The endpoint mobility ratio `(krw_end / mu_w) / (kro_end / mu_o)`:
    /// above 1 the water behind the front is more mobile than the oil ahead.
    pub fn mobility_ratio(&self, mu_w: f64, mu_o: f64) -> f64 {
        let (krw, kro) = self.endpoints();
        (krw / mu_w) / (kro / mu_o)
    }

    /// The highest capillary pressure of the curves (at the lowest saturation), Pa.
    pub fn pc_max(&self) -> f64 {
        match self {
            Curves::Corey(c) => c.pc_entry,
            Curves::Table(t) => t.pc.iter().copied().fold(0.0, f64::max),
        }
    }

    /// The water saturation where the capillary pressure is `pc` (Pa), for
    /// the equilibrium above a contact: the connate saturation where `pc`
    /// reaches the curve's top (or the curve is zero everywhere), the
    /// saturation where the curve falls to `pc` in between, the highest
    /// where the curve stays above `pc`. `pc` at or below 0 gives the
    /// saturation where the curve reaches 0.
    pub fn sw_at_pc(&self, pc: f64) -> f64 {
        match self {
            Curves::Corey(c) => {
                if c.pc_entry <= 0.0 {
                    return c.swc;
                }
                // pc = pc_entry (1 - S), inverted.
                let s = (1.0 - pc / c.pc_entry).clamp(0.0, 1.0);
                c.swc + s * (1.0 - c.swc - c.sor)
            }
            Curves::Table(t) => {
                let (sw, p) = (&t.sw, &t.pc);
                let n = sw.len().min(p.len());
                if n == 0 {
                    return 0.0;
                }
                if pc >= p[0] {
                    return sw[0];
                }
                for i in 1..n {
                    if pc >= p[i] {
                        // p[i] <= pc < p[i - 1]: between the rows.
                        let (p0, p1) = (p[i - 1], p[i]);
                        return sw[i - 1] + (sw[i] - sw[i - 1]) * (p0 - pc) / (p0 - p1);
                    }
                }
                sw[n - 1]
            }
        }
    }

    /// The water fractional flow `f_w = (krw / mu_w) / (krw / mu_w + kro / mu_o)`
    /// at `sw`, without gravity or capillarity; 0 where neither phase flows
    /// (below the connate saturation) and 1 where only water does.
    pub fn fractional_flow(&self, sw: f64, mu_w: f64, mu_o: f64) -> f64 {
        let lw = self.krw(sw) / mu_w;
        let lo = self.kro(sw) / mu_o;
        if lw + lo <= 0.0 {
            return if sw >= self.sw_max() { 1.0 } else { 0.0 };
        }
        lw / (lw + lo)
    }

    /// d f_w / d sw at `sw`: exact for the Corey form, the slope of the
    /// linear pieces (from the right at a row) for a table.
    pub fn fractional_flow_slope(&self, sw: f64, mu_w: f64, mu_o: f64) -> f64 {
        let (krw, kro) = (self.krw(sw), self.kro(sw));
        let (dkrw, dkro) = match self {
            Curves::Corey(c) => {
                let span = 1.0 - c.swc - c.sor;
                let s = c.normalised(sw);
                if span <= 0.0 || sw <= c.swc || sw >= 1.0 - c.sor {
                    (0.0, 0.0)
                } else {
                    (
                        c.krw_end * c.nw * s.powf(c.nw - 1.0) / span,
                        -c.kro_end * c.no * (1.0 - s).powf(c.no - 1.0) / span,
                    )
                }
            }
            Curves::Table(t) => (slope(&t.sw, &t.krw, sw), slope(&t.sw, &t.kro, sw)),
        };
        let (lw, lo) = (krw / mu_w, kro / mu_o);
        let total = lw + lo;
        if total <= 0.0 {
            return 0.0;
        }
        // f = lw / (lw + lo): f' = (lw' lo - lw lo') / (lw + lo)^2.
        (dkrw / mu_w * lo - lw * dkro / mu_o) / (total * total)
    }

    /// Welge's construction on the Buckley-Leverett fractional-flow curve
    /// for water displacing oil at the connate saturation (no gravity, no
    /// capillarity): the tangent to `f_w` from `(swc, 0)`. `None` when the
    /// viscosities are not positive.
    pub fn welge(&self, mu_w: f64, mu_o: f64) -> Option<Welge> {
        if !(mu_w > 0.0 && mu_o > 0.0) {
            return None;
        }
        let (swc, end) = (self.swc(), self.sw_max());
        if end <= swc {
            return None;
        }
        let f = |s: f64| self.fractional_flow(s, mu_w, mu_o);
        // The secant slope from (swc, 0); the tangent maximises it.
        let secant = |s: f64| f(s) / (s - swc);
        // Dense sampling finds the bracket of the maximum ...
        const SAMPLES: usize = 4000;
        let at = |i: usize| swc + (end - swc) * i as f64 / SAMPLES as f64;
        let best = (1..=SAMPLES)
            .max_by(|&a, &b| secant(at(a)).total_cmp(&secant(at(b))))
            .unwrap_or(SAMPLES);
        // ... and bisection on the tangency condition f'(S) (S - swc) = f(S)
        // (its sign is that of the secant's derivative) closes it.
        let tangency = |s: f64| self.fractional_flow_slope(s, mu_w, mu_o) * (s - swc) - f(s);
        let (mut lo, mut hi) = (at(best - 1).max(swc + 1e-12), at((best + 1).min(SAMPLES)));
        let shock = if best == SAMPLES {
            // The secant grows up to 1 - sor: a piston-like front.
            end
        } else {
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if tangency(mid) > 0.0 {
                    lo = mid;
                } else {
                    hi = mid;
                }
                if hi - lo <= 1e-15 {
                    break;
                }
            }
            // A kink of a table may leave the two ends on either side of
            // it: keep the better of the two.
            if secant(lo) >= secant(hi) {
                lo
            } else {
                hi
            }
        };
        let fw = f(shock);
        if fw <= 0.0 {
            return None;
        }
        // The tangent through (swc, 0) and (S_f, f_f) reaches f = 1 at the
        // average saturation behind the front; its slope is f'(S_f).
        let slope = fw / (shock - swc);
        let average = swc + 1.0 / slope;
        Some(Welge {
            front_saturation: shock,
            front_fractional_flow: fw,
            average_saturation: average,
            breakthrough_pore_volumes: 1.0 / slope,
            breakthrough_recovery: (average - swc) / (1.0 - swc),
        })
    }
}

/// What Welge's tangent construction gives for a waterflood from the
/// connate saturation (one-dimensional, no gravity, no capillarity).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Welge {
    /// The water saturation just behind the shock front, `S_wf`.
    pub front_saturation: f64,
    /// The water fractional flow at the front, `f_w(S_wf)`.
    pub front_fractional_flow: f64,
    /// The average water saturation behind the front at breakthrough.
    pub average_saturation: f64,
    /// Pore volumes of water injected at breakthrough, `1 / f_w'(S_wf)`.
    pub breakthrough_pore_volumes: f64,
    /// Oil recovered at breakthrough, as a fraction of the oil in place
    /// at the connate saturation: `(S_avg - swc) / (1 - swc)`.
    pub breakthrough_recovery: f64,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn corey(swc: f64, sor: f64, krw_end: f64, kro_end: f64, nw: f64, no: f64) -> Curves {
        Curves::Corey(Corey {
            swc,
            sor,
            krw_end,
            kro_end,
            nw,
            no,
            pc_entry: 0.0,
        })
    }

    /// Hand-derived: nw = no = 2, swc = sor = 0, krw_end = kro_end = 1,
    /// mu_o / mu_w = 1, so f = S^2 / D with D = S^2 + (1 - S)^2 = 2S^2 - 2S + 1.
    /// f' = (2S D - S^2 D') / D^2 with D' = 4S - 2. The tangent from (0, 0)
    /// touches where f / S = f': S / D = (2S D - S^2 (4S - 2)) / D^2, i.e.
    /// S D = 2 S D - S^2 (4S - 2), so D = S (4S - 2): 2S^2 - 2S + 1 = 4S^2 - 2S,
    /// 2S^2 = 1, S_f = 1/sqrt(2). There D = 2 - sqrt(2), so
    /// f(S_f) = (1/2) / (2 - sqrt 2) = (2 + sqrt 2) / 4. The tangent's slope is
    /// f_f / S_f, so the average saturation behind the front is
    /// S_f / f_f = (1/sqrt 2) 4 / (2 + sqrt 2) = 2 / (1 + sqrt 2) = 2 (sqrt 2 - 1),
    /// and the pore volumes injected at breakthrough, 1 / f'(S_f), the same
    /// number (swc = 0).
    #[test]
    fn welge_matches_the_hand_derived_symmetric_case() {
        let c = corey(0.0, 0.0, 1.0, 1.0, 2.0, 2.0);
        let w = c.welge(1e-3, 1e-3).expect("a front");
        let r2 = 2f64.sqrt();
        assert!((w.front_saturation - 1.0 / r2).abs() < 1e-10, "{w:?}");
        assert!(
            (w.front_fractional_flow - (2.0 + r2) / 4.0).abs() < 1e-10,
            "{w:?}"
        );
        assert!(
            (w.average_saturation - 2.0 * (r2 - 1.0)).abs() < 1e-10,
            "{w:?}"
        );
        assert!(
            (w.breakthrough_pore_volumes - 2.0 * (r2 - 1.0)).abs() < 1e-10,
            "{w:?}"
        );
        assert!((w.breakthrough_recovery - 2.0 * (r2 - 1.0)).abs() < 1e-10);
        // The mobility ratio of equal end points and viscosities is 1.
        assert!((c.mobility_ratio(1e-3, 1e-3) - 1.0).abs() < 1e-15);
    }

    /// An adverse case (mu_o / mu_w = 8, unequal exponents and end points)
    /// against an independent computation: the brute-force maximum of the
    /// secant slope f_w(S) / (S - swc) over a grid of a million saturations.
    #[test]
    fn welge_matches_a_brute_force_maximum_of_the_secant() {
        let c = corey(0.18, 0.22, 0.32, 0.85, 2.5, 2.0);
        let (mu_w, mu_o) = (0.5e-3, 4.0e-3);
        let w = c.welge(mu_w, mu_o).expect("a front");
        let (swc, end) = (0.18, 0.78);
        let n = 1_000_000;
        let (mut best_s, mut best) = (swc, 0.0);
        for i in 1..=n {
            let s = swc + (end - swc) * i as f64 / n as f64;
            let v = c.fractional_flow(s, mu_w, mu_o) / (s - swc);
            if v > best {
                (best_s, best) = (s, v);
            }
        }
        // The grid step is 6e-7; the maximum is flat, so the saturation
        // agrees to about the square root of the secant's precision.
        assert!(
            (w.front_saturation - best_s).abs() < 1e-5,
            "{w:?} vs {best_s}"
        );
        assert!(
            (w.breakthrough_pore_volumes - 1.0 / best).abs() < 1e-9,
            "{w:?} vs {}",
            1.0 / best
        );
        assert!(w.front_saturation > swc && w.front_saturation < end);
        // Tangency: the slope at the front equals the secant.
        let slope = c.fractional_flow_slope(w.front_saturation, mu_w, mu_o);
        assert!((slope * w.breakthrough_pore_volumes - 1.0).abs() < 1e-6);
    }

    #[test]
    fn tables_interpolate_linearly_and_hold_their_ends() {
        let t = Curves::Table(SatTable {
            sw: vec![0.2, 0.5, 0.8],
            krw: vec![0.0, 0.1, 0.4],
            kro: vec![0.9, 0.2, 0.0],
            pc: vec![6000.0, 1000.0, 0.0],
        });
        assert_eq!(t.krw(0.1), 0.0);
        assert!((t.krw(0.65) - 0.25).abs() < 1e-15);
        assert!((t.kro(0.35) - 0.55).abs() < 1e-15);
        assert_eq!(t.kro(0.95), 0.0);
        assert_eq!(t.swc(), 0.2);
        assert_eq!(t.sw_max(), 0.8);
        assert_eq!(t.endpoints(), (0.4, 0.9));
        // pc is inverted on its linear pieces: 3500 Pa lies half way
        // between the first two rows.
        assert!((t.sw_at_pc(3500.0) - 0.35).abs() < 1e-15);
        assert_eq!(t.sw_at_pc(7000.0), 0.2);
        assert_eq!(t.sw_at_pc(0.0), 0.8);
        // A table front agrees with the brute-force maximum too.
        let w = t.welge(1e-3, 2e-3).expect("a front");
        let (mut best_s, mut best) = (0.2, 0.0);
        for i in 1..=600_000 {
            let s = 0.2 + 0.6 * i as f64 / 600_000.0;
            let v = t.fractional_flow(s, 1e-3, 2e-3) / (s - 0.2);
            if v > best {
                (best_s, best) = (s, v);
            }
        }
        assert!(
            (w.front_saturation - best_s).abs() < 1e-5,
            "{w:?} vs {best_s}"
        );
        assert!((w.breakthrough_pore_volumes - 1.0 / best).abs() < 1e-9);
    }

    /// Corey curves at hand-computed points: S = (0.5 - 0.2) / 0.6 = 0.5.
    #[test]
    fn corey_curves_follow_their_power_laws() {
        let c = Curves::Corey(Corey {
            swc: 0.2,
            sor: 0.2,
            krw_end: 0.4,
            kro_end: 0.8,
            nw: 2.0,
            no: 3.0,
            pc_entry: 8000.0,
        });
        assert!((c.krw(0.5) - 0.4 * 0.25).abs() < 1e-15);
        assert!((c.kro(0.5) - 0.8 * 0.125).abs() < 1e-15);
        assert!((c.pc(0.5) - 4000.0).abs() < 1e-12);
        assert_eq!(c.krw(0.1), 0.0);
        assert_eq!(c.kro(0.9), 0.0);
        assert!((c.sw_at_pc(4000.0) - 0.5).abs() < 1e-15);
        assert_eq!(c.sw_at_pc(9000.0), 0.2);
        // (0.4 / mu_w) / (0.8 / mu_o) with mu_o = 4 mu_w: 2.
        assert!((c.mobility_ratio(1e-3, 4e-3) - 2.0).abs() < 1e-12);
    }
}
