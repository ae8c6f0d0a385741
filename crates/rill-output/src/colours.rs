//! The report's colours, all of our own design.
//!
//! - **rill slate-to-amber**, the sequential ramp of the pressure maps: five
//!   stops in OKLCH, lightness rising evenly from 0.27 (deep slate blue)
//!   through a grey teal and sand to 0.90 (pale amber), hue turning
//!   262° → 75°, interpolated in OKLab. Lightness increases monotonically,
//!   so the order of values reads without the colour bar and survives
//!   greyscale printing and the common colour-vision deficiencies.
//! - **rill umber-to-tide**, the ramp of the water saturation maps: five
//!   stops in OKLCH, lightness rising from 0.30 (dark umber, where oil
//!   remains) through ochre and a grey olive to 0.93 (pale tide blue,
//!   where water has swept), hue turning 55° → 232°. Monotonic in
//!   lightness like the other, and unlike it in hue, so a saturation map
//!   is not mistaken for a pressure map.
//! - **rill series colours**, eight hues for lines, combined with dash
//!   patterns so that the ninth series differs from the first.

/// Stops of a ramp: (L, C, h°) in OKLCH.
type Stops = [(f64, f64, f64); 5];

/// The stops of rill slate-to-amber.
const SLATE_TO_AMBER: Stops = [
    (0.27, 0.060, 262.0),
    (0.43, 0.075, 245.0),
    (0.59, 0.060, 205.0),
    (0.75, 0.080, 105.0),
    (0.90, 0.140, 75.0),
];

/// The stops of rill umber-to-tide.
const UMBER_TO_TIDE: Stops = [
    (0.30, 0.060, 55.0),
    (0.46, 0.085, 68.0),
    (0.62, 0.060, 100.0),
    (0.78, 0.055, 205.0),
    (0.93, 0.045, 232.0),
];

/// Which ramp a map is coloured with.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Palette {
    /// rill slate-to-amber (pressures).
    SlateToAmber,
    /// rill umber-to-tide (water saturations).
    UmberToTide,
}

impl Palette {
    /// The colour at `t` in [0, 1], as sRGB bytes.
    pub fn colour(self, t: f64) -> [u8; 3] {
        match self {
            Palette::SlateToAmber => along(&SLATE_TO_AMBER, t),
            Palette::UmberToTide => along(&UMBER_TO_TIDE, t),
        }
    }
}

/// Colour of rill slate-to-amber at `t` in [0, 1], as sRGB bytes (the
/// Chromium test looks for the maps' pixels by it).
#[cfg(test)]
pub(crate) fn ramp(t: f64) -> [u8; 3] {
    Palette::SlateToAmber.colour(t)
}

/// The colour of `stops` at `t` in [0, 1], interpolated in OKLab.
fn along(stops: &Stops, t: f64) -> [u8; 3] {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let segments = (stops.len() - 1) as f64;
    let x = t * segments;
    let n = (x.floor() as usize).min(stops.len() - 2);
    let f = x - n as f64;
    let lab = |(l, c, h): (f64, f64, f64)| {
        let h = h.to_radians();
        (l, c * h.cos(), c * h.sin())
    };
    let (l0, a0, b0) = lab(stops[n]);
    let (l1, a1, b1) = lab(stops[n + 1]);
    oklab_to_srgb(l0 + (l1 - l0) * f, a0 + (a1 - a0) * f, b0 + (b1 - b0) * f)
}

/// OKLab (Björn Ottosson, 2020) to gamma-encoded sRGB, clipped to the gamut.
fn oklab_to_srgb(l: f64, a: f64, b: f64) -> [u8; 3] {
    let l_ = l + 0.3963377774 * a + 0.2158037573 * b;
    let m_ = l - 0.1055613458 * a - 0.0638541728 * b;
    let s_ = l - 0.0894841775 * a - 1.2914855480 * b;
    let (l3, m3, s3) = (l_ * l_ * l_, m_ * m_ * m_, s_ * s_ * s_);
    let lin = [
        4.0767416621 * l3 - 3.3077115913 * m3 + 0.2309699292 * s3,
        -1.2684380046 * l3 + 2.6097574011 * m3 - 0.3413193965 * s3,
        -0.0041960863 * l3 - 0.7034186147 * m3 + 1.7076147010 * s3,
    ];
    lin.map(|c| {
        let c = c.clamp(0.0, 1.0);
        let g = if c <= 0.0031308 {
            12.92 * c
        } else {
            1.055 * c.powf(1.0 / 2.4) - 0.055
        };
        (g * 255.0).round() as u8
    })
}

pub(crate) fn hex([r, g, b]: [u8; 3]) -> String {
    format!("#{r:02x}{g:02x}{b:02x}")
}

/// rill series colours.
const SERIES_COLOURS: [&str; 8] = [
    "#1d4e89", "#c8553d", "#2e8b57", "#d4a017", "#7b4f9d", "#3a9fd8", "#8a5a44", "#56646c",
];
const DASHES: [&str; 3] = ["", "7 4", "2 3"];

/// Stroke colour and dash pattern of the `n`-th series.
pub(crate) fn series_style(n: usize) -> (&'static str, &'static str) {
    (
        SERIES_COLOURS[n % SERIES_COLOURS.len()],
        DASHES[(n / SERIES_COLOURS.len()) % DASHES.len()],
    )
}

/// Fill of cells without a value (inactive).
pub(crate) const NO_DATA: &str = "#e4e4e7";

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative luminance (sRGB, ITU-R BT.709 weights).
    fn luminance([r, g, b]: [u8; 3]) -> f64 {
        let lin = |c: u8| {
            let c = c as f64 / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
    }

    #[test]
    fn ramp_lightness_rises_monotonically() {
        for palette in [Palette::SlateToAmber, Palette::UmberToTide] {
            let mut last = -1.0;
            for n in 0..=64 {
                let l = luminance(palette.colour(n as f64 / 64.0));
                assert!(l > last, "{palette:?} step {n}: {l} <= {last}");
                last = l;
            }
        }
    }

    /// The two ramps differ visibly along their length, so that the
    /// saturation maps are not read as pressure maps.
    #[test]
    fn the_saturation_ramp_is_not_the_pressure_ramp() {
        for n in 1..8 {
            let t = n as f64 / 8.0;
            let (a, b) = (
                Palette::SlateToAmber.colour(t),
                Palette::UmberToTide.colour(t),
            );
            let distance: i32 = a
                .iter()
                .zip(&b)
                .map(|(x, y)| (i32::from(*x) - i32::from(*y)).abs())
                .sum();
            assert!(distance > 30, "at {t}: {a:?} and {b:?}");
        }
    }
}
