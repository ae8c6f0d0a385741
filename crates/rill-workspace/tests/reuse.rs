//! Analyses that keep parsed and derived arrays between analyses (a
//! `Reuse` passed to `analyze_text_with`, as the language server does) must give exactly
//! what a fresh analysis gives, edit after edit, including edits of the
//! array files on disk; and edits that leave the rock alone must not
//! recompute its arrays.

use rill_model::{analyze_text, analyze_text_with, Analysis, Reuse};
use rill_workspace::DiskSource;
use std::path::Path;
use std::sync::Arc;

/// A 6 x 5 x 3 deck whose rock, grid and initial blocks are filled in per variant.
fn deck(rock: &str, dz: &str, initial: &str, extra: &str) -> String {
    format!(
        r#"# Fictional test block.
case "Reuse check block" {{
  title = "kept arrays"
}}

grid {{
  cells = 6 x 5 x 3
  dx = 50 ft
  dy = 40 ft
  dz = {dz}
  top = 6000 ft
}}

rock {{
{rock}
  compressibility = 4e-6 1/psi
}}

fluid "brine" {{
  viscosity = 0.7 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 62.4 lb/ft^3
}}

initial {{
  pressure = {initial}
}}

well "RC-1" {{
  role = producer
  location = (2, 2)
  radius = 0.3 ft
  control = bhp 1500 psi
}}
{extra}
timeline {{
  end = 30 day
  first_step = 1 day
  max_step = 10 day
  report_every = 10 day
}}
"#
    )
}

const ROCKS: &[&str] = &[
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  ky = kx\n  kz = 0.1 * kx",
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  ky = kx\n  kz = 0.2 * kx",
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" darcy\n  ky = 0.5 * kx\n  kz = kx * 0.1 + 1 md",
    "  porosity = 0.21\n  kx = file \"kx.txt\" md\n  kz = 0.1 * kx",
    "  porosity = file \"phi.txt\"\n  kx = layers [120 80 40] md\n  ky = kx\n  kz = 0.1 * ky",
    // A sealing patch: cells with zero permeability on every face (flow.isolated).
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  kz = 0.1 * kx\n  patch i = 5..6 j = 4..5 {\n    kx = 0 md\n    ky = 0 md\n    kz = 0 md\n  }",
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  kz = 0.1 * kx\n  patch i = 5..6 j = 3..5 {\n    kx = 0 md\n    ky = 0 md\n    kz = 0 md\n  }",
    // Porosity above the warning limit in a patch, then out of range.
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  patch k = 2 {\n    porosity = 0.5\n  }",
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" md\n  patch k = 2 {\n    porosity = 1.5\n  }",
    // A unit mistake: 30 darcy.
    "  porosity = file \"phi.txt\"\n  kx = file \"kx.txt\" darcy\n  ky = kx\n  kz = kx",
];
const DZS: &[&str] = &["10 ft", "[10 12 8] ft", "layers [10 12 8] ft", "0 ft"];
const INITIALS: &[&str] = &["3000 psi at 6000 ft", "3000 psi"];
const EXTRAS: &[&str] = &[
    "",
    "\nboundary \"east aquifer\" {\n  side = east\n  pressure = 3000 psi at 6000 ft\n}\n",
    "\nwell \"RC-2\" {\n  role = injector\n  location = (6, 5)\n  radius = 0.3 ft\n  control = bhp 3500 psi\n}\n",
];

fn write_arrays(dir: &Path, seed: u64) {
    let n = 6 * 5 * 3;
    let phi: Vec<String> = (0..n)
        .map(|c| {
            format!(
                "{:.3}",
                0.12 + 0.1 * (((c as u64 * 7 + seed) % 11) as f64) / 11.0
            )
        })
        .collect();
    let kx: Vec<String> = (0..n)
        .map(|c| format!("{}", 5 + (c as u64 * 13 + seed * 3) % 300))
        .collect();
    std::fs::write(dir.join("phi.txt"), phi.join(" ")).unwrap();
    // Every third rewrite also changes the length (grid.array-length).
    let kx = if seed % 3 == 2 {
        kx[1..].join("\n")
    } else {
        kx.join("\n")
    };
    std::fs::write(dir.join("kx.txt"), kx).unwrap();
}

fn same(kept: &Analysis, fresh: &Analysis, what: &str) {
    assert_eq!(kept.case, fresh.case, "case differs after {what}");
    assert_eq!(
        kept.diagnostics, fresh.diagnostics,
        "diagnostics differ after {what}"
    );
}

/// A small deterministic generator (xorshift), so that failures reproduce.
struct Steps(u64);
impl Steps {
    fn pick(&mut self, n: usize) -> usize {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 % n as u64) as usize
    }
}

#[test]
fn kept_arrays_give_the_same_analysis_as_a_fresh_one_edit_after_edit() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("block.rill");
    let mut seed = 0;
    write_arrays(dir.path(), seed);
    let kept = DiskSource::unconfined();
    let cache = Reuse::new();
    let mut steps = Steps(0x9e37_79b9_7f4a_7c15);
    let mut codes = std::collections::BTreeSet::new();
    for step in 0..400 {
        if steps.pick(10) == 0 {
            // The array files change on disk (the server invalidates on the
            // watched-file notification).
            seed += 1;
            write_arrays(dir.path(), seed);
            kept.invalidate(&dir.path().join("phi.txt"));
            kept.invalidate(&dir.path().join("kx.txt"));
        }
        if steps.pick(4) == 0 {
            // Spare buffers, as the server prepares them (flags all true,
            // values zero): every array written into one must be whole.
            cache.prepare(6 * 5 * 3, 2);
        }
        let text = deck(
            ROCKS[steps.pick(ROCKS.len())],
            DZS[steps.pick(DZS.len())],
            INITIALS[steps.pick(INITIALS.len())],
            EXTRAS[steps.pick(EXTRAS.len())],
        );
        let a = analyze_text_with(&path, &text, &kept, &cache);
        let b = analyze_text(&path, &text, &DiskSource::unconfined());
        same(&a, &b, &format!("step {step} (array seed {seed})"));
        codes.extend(a.diagnostics.iter().map(|d| d.code.as_str()));
    }
    // The variants reach the checks whose scans are kept.
    for code in [
        "flow.isolated",
        "sanity.porosity",
        "sanity.permeability",
        "grid.spacing",
        "grid.array-length",
    ] {
        assert!(
            codes.contains(code),
            "no variant produced {code}: {codes:?}"
        );
    }
}

#[test]
fn an_edit_outside_the_rock_reuses_every_per_cell_array() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("block.rill");
    write_arrays(dir.path(), 0);
    let kept = DiskSource::unconfined();
    let cache = Reuse::new();
    let first = analyze_text_with(
        &path,
        &deck(ROCKS[5], DZS[0], INITIALS[1], ""),
        &kept,
        &cache,
    );
    // A comment and a new well: nothing that the rock arrays depend on.
    let edited =
        deck(ROCKS[5], DZS[0], INITIALS[1], EXTRAS[2]).replace("# Fictional", "# A fictional");
    let second = analyze_text_with(&path, &edited, &kept, &cache);
    let (a, b) = (first.case.unwrap(), second.case.unwrap());
    for (what, x, y) in [
        ("porosity", &a.rock.porosity, &b.rock.porosity),
        ("kx", &a.rock.kx, &b.rock.kx),
        ("ky", &a.rock.ky, &b.rock.ky),
        ("kz", &a.rock.kz, &b.rock.kz),
        ("dz", &a.grid.dz, &b.grid.dz),
    ] {
        assert!(Arc::ptr_eq(x.shared(), y.shared()), "{what} was recomputed");
    }
    let (rill_model::Initial::Cells(p1), rill_model::Initial::Cells(p2)) = (&a.initial, &b.initial)
    else {
        panic!("initial pressure per cell expected");
    };
    assert!(Arc::ptr_eq(p1.shared(), p2.shared()));
    // Without a kept result the same edit builds new arrays.
    let fresh = DiskSource::unconfined();
    let c = analyze_text(&path, &edited, &fresh).case.unwrap();
    assert!(!Arc::ptr_eq(a.rock.kz.shared(), c.rock.kz.shared()));
    assert_eq!(a.rock.kz, c.rock.kz);
}
