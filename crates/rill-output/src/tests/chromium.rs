//! Renders a report with headless Chromium and checks that the screenshot
//! shows a real page (many colours, mostly not blank). Skipped, with a
//! message, where `chromium` is not installed (Debian package `chromium`).
//! Set `RILL_REPORT_SCREENSHOT=/path/shot.png` to keep the screenshot.

use std::io::Read;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use super::fixtures::*;
use crate::{write_results, RunMeta};
use rill_model::UnitSystem;

fn chromium() -> Option<String> {
    ["chromium", "chromium-browser", "google-chrome"]
        .into_iter()
        .find_map(|name| {
            let ok = Command::new(name)
                .arg("--version")
                .stdout(Stdio::null())
                .stderr(Stdio::null())
                .status()
                .ok()?;
            ok.success().then(|| name.to_string())
        })
}

fn screenshot(browser: &str, page: &Path, png: &Path) {
    let profile = tempfile::tempdir().unwrap();
    let mut child = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--screenshot={}", png.display()))
        .arg("--window-size=1200,2400")
        .arg(format!("file://{}", page.display()))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start chromium");
    let start = Instant::now();
    loop {
        if child.try_wait().unwrap().is_some() {
            break;
        }
        if start.elapsed() > Duration::from_secs(120) {
            let _ = child.kill();
            panic!("chromium did not finish within 120 s");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// Decodes an 8-bit RGB or RGBA PNG (non-interlaced) to (width, height, rgb pixels).
pub(crate) fn decode_png(bytes: &[u8]) -> (usize, usize, Vec<[u8; 3]>) {
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    let mut at = 8;
    let (mut width, mut height, mut channels) = (0, 0, 0);
    let mut idat = Vec::new();
    while at + 8 <= bytes.len() {
        let len = u32::from_be_bytes(bytes[at..at + 4].try_into().unwrap()) as usize;
        let kind = &bytes[at + 4..at + 8];
        let data = &bytes[at + 8..at + 8 + len];
        match kind {
            b"IHDR" => {
                width = u32::from_be_bytes(data[0..4].try_into().unwrap()) as usize;
                height = u32::from_be_bytes(data[4..8].try_into().unwrap()) as usize;
                assert_eq!(data[8], 8, "bit depth");
                channels = match data[9] {
                    2 => 3,
                    6 => 4,
                    other => panic!("colour type {other}"),
                };
                assert_eq!(data[12], 0, "not interlaced");
            }
            b"IDAT" => idat.extend_from_slice(data),
            _ => {}
        }
        at += 12 + len;
    }
    let mut raw = Vec::new();
    flate2::read::ZlibDecoder::new(&idat[..])
        .read_to_end(&mut raw)
        .unwrap();
    let stride = width * channels;
    let mut prev = vec![0u8; stride];
    let mut pixels = Vec::with_capacity(width * height);
    for row in 0..height {
        let line = &raw[row * (stride + 1)..(row + 1) * (stride + 1)];
        let filter = line[0];
        let mut cur = line[1..].to_vec();
        for x in 0..stride {
            let a = if x >= channels {
                cur[x - channels] as i32
            } else {
                0
            };
            let b = prev[x] as i32;
            let c = if x >= channels {
                prev[x - channels] as i32
            } else {
                0
            };
            let add = match filter {
                0 => 0,
                1 => a,
                2 => b,
                3 => (a + b) / 2,
                4 => {
                    let p = a + b - c;
                    let (pa, pb, pc) = ((p - a).abs(), (p - b).abs(), (p - c).abs());
                    if pa <= pb && pa <= pc {
                        a
                    } else if pb <= pc {
                        b
                    } else {
                        c
                    }
                }
                f => panic!("filter {f}"),
            };
            cur[x] = (cur[x] as i32 + add) as u8;
        }
        for px in cur.chunks(channels) {
            pixels.push([px[0], px[1], px[2]]);
        }
        prev = cur;
    }
    (width, height, pixels)
}

#[test]
fn report_renders_in_headless_chromium() {
    let Some(browser) = chromium() else {
        eprintln!("SKIPPED report_renders_in_headless_chromium: no chromium on PATH (apt-get install chromium)");
        return;
    };
    let (dir, deck) = deck_dir();
    let case = case(20, 15, 4, UnitSystem::Field);
    let mut results = results(&case);
    // A smooth field with a drawdown around the producer at (0, 0).
    for (t, p) in results.pressure.iter_mut().enumerate() {
        for (c, v) in p.iter_mut().enumerate() {
            let (i, j, k) = case.grid.ijk(c);
            let r = ((i * i + j * j) as f64).sqrt();
            if v.is_finite() {
                *v = (3000.0 - 40.0 * t as f64 / (1.0 + 0.3 * r) + 5.0 * k as f64) * PSI;
            }
        }
    }
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    let png = match std::env::var_os("RILL_REPORT_SCREENSHOT") {
        Some(p) => std::path::PathBuf::from(p),
        None => dir.path().join("shot.png"),
    };
    screenshot(&browser, &files.report_html, &png);
    let bytes = std::fs::read(&png).expect("chromium wrote a screenshot");
    let (width, height, pixels) = decode_png(&bytes);
    assert_eq!((width, height), (1200, 2400));
    let background = pixels[width * (height - 1) + width / 2];
    let busy = pixels.iter().filter(|p| **p != background).count() as f64 / pixels.len() as f64;
    let mut colours: Vec<[u8; 3]> = pixels.clone();
    colours.sort_unstable();
    colours.dedup();
    assert!(
        busy > 0.15,
        "only {:.1}% of the page differs from its background",
        busy * 100.0
    );
    assert!(
        colours.len() > 200,
        "only {} distinct colours: plots and maps missing?",
        colours.len()
    );
    // The maps rendered: many distinct levels of rill slate-to-amber are on the page.
    let ramp: Vec<[u8; 3]> = (0..crate::svg::LEVELS)
        .map(|lv| crate::svg::ramp((lv as f64 + 0.5) / crate::svg::LEVELS as f64))
        .collect();
    let mut near_ramp = std::collections::HashSet::new();
    for [r, g, b] in &ramp {
        for (dr, dg, db) in
            (-1..=1).flat_map(|x| (-1..=1).flat_map(move |y| (-1..=1).map(move |z| (x, y, z))))
        {
            let shift = |c: u8, d: i32| (c as i32 + d).clamp(0, 255) as u8;
            near_ramp.insert([shift(*r, dr), shift(*g, dg), shift(*b, db)]);
        }
    }
    let map_pixels = pixels.iter().filter(|p| near_ramp.contains(*p)).count();
    // The colour bar alone has 440 x 16 px; four layer maps have far more.
    assert!(
        map_pixels > 30_000,
        "only {map_pixels} px in map colours: layer maps missing?"
    );
}
