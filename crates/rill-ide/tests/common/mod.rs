//! Helpers shared by the test files: snapshots of small decks, applying edits.
#![allow(dead_code)]

use rill_ide::{Snapshot, TextEdit};
use rill_model::MemorySource;
use std::path::Path;

pub fn snap(text: &str) -> Snapshot {
    Snapshot::new(Path::new("deck.rill"), text, &MemorySource::new())
}

pub fn snap_with(text: &str, source: &MemorySource) -> Snapshot {
    Snapshot::new(Path::new("deck.rill"), text, source)
}

/// Byte offset of the first `pat` plus `plus`.
pub fn at(text: &str, pat: &str, plus: usize) -> usize {
    text.find(pat)
        .unwrap_or_else(|| panic!("`{pat}` not in the deck"))
        + plus
}

/// Applies non-overlapping edits (any order).
pub fn apply(text: &str, edits: &[TextEdit]) -> String {
    let mut edits = edits.to_vec();
    edits.sort_by_key(|e| std::cmp::Reverse(e.span.start));
    let mut out = text.to_string();
    for e in edits {
        out.replace_range(e.span.start..e.span.end, &e.new_text);
    }
    out
}

/// The numbers in a markdown table row `| a | b | 1.5 | 2e-3 |`, cell by cell.
pub fn row_cells(row: &str) -> Vec<String> {
    row.trim()
        .trim_matches('|')
        .split('|')
        .map(|c| c.trim().to_string())
        .collect()
}

/// Relative closeness at the six significant digits that hover prints.
pub fn close6(shown: f64, exact: f64) -> bool {
    if exact == 0.0 {
        return shown == 0.0;
    }
    ((shown - exact) / exact).abs() < 6e-6
}

/// A small clean deck to edit in tests.
pub const BASE: &str = r#"case "Base" {
  title = "base deck"
}

grid {
  cells = 4 x 3 x 2
  dx = 100 ft
  dy = 100 ft
  dz = [20 30] ft
  top = 5000 ft
}

rock {
  porosity = 0.2
  kx = layers [150 40] md
  ky = kx
  kz = 0.1 * kx
  compressibility = 4e-6 1/psi
  patch i = 2..3 k = 2 {
    kz = 0 md
  }
}

fluid "brine" {
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  density = 62.4 lb/ft^3
}

initial {
  pressure = 3200 psi at 5000 ft
}

well "P-1" {
  role = producer
  location = (2, 2)
  layers = 1..2
  radius = 0.3 ft
  skin = 1.5
  control = rate 300 stb/day
  bhp_limit = 1000 psi
}

boundary "east aquifer" {
  side = east
  pressure = 3150 psi at 5000 ft
}

timeline {
  end = 100 day
  at 50 day {
    well "P-1" { control = bhp 1500 psi }
  }
}

report {
  units = field
}
"#;
