//! Oil-water decks: what `oil`, `water`, `relperm`, `rock.relperm`, the
//! initial saturation and the phase controls lower to, and the mistakes
//! the lowering refuses (`deck.phases`, `relperm.endpoints`,
//! `relperm.shape`, `well.control-phase`, `rate` in an oil-water deck).
//! The deck is a fictional 6 x 1 x 4 section.

use rill_model::{
    analyze_text, Analysis, Code, Control, Curves, InitialSaturation, MemorySource, Role, Severity,
};
use std::path::Path;

const DECK: &str = r#"grid {
  cells = 6 x 1 x 4
  dx = 200 ft
  dy = 200 ft
  dz = 25 ft
  top = 6000 ft
}

rock {
  porosity = 0.22
  kx = 150 md
  relperm = "sand"
  patch k = 4 {
    relperm = "silt"
  }
}

oil {
  viscosity = 2.4 cP
  fvf = 1.18 rb/stb
  compressibility = 1.2e-5 1/psi
  density = 51 lb/ft^3
}

water {
  viscosity = 0.5 cP
  fvf = 1.01 rb/stb
  compressibility = 3e-6 1/psi
  density = 63.8 lb/ft^3
}

relperm "sand" {
  model = corey
  swc = 0.18
  sor = 0.22
  krw_end = 0.32
  kro_end = 0.85
  nw = 2.5
  no = 2.0
  pc_entry = 2 psi
}

relperm "silt" {
  model = table
  sw = [0.25 0.45 0.72]
  krw = [0 0.07 0.35]
  kro = [0.7 0.21 0]
  pc = [9 1.6 0] psi
}

initial {
  pressure = 2900 psi at 6050 ft
  water_contact = 6080 ft
}

well "INJ" {
  role = injector
  location = (1, 1)
  radius = 0.3 ft
  control = water_rate 800 stb/day
}

well "PRD" {
  role = producer
  location = (6, 1)
  radius = 0.3 ft
  control = oil_rate 600 stb/day
  bhp_limit = 1500 psi
  max_water_cut = 0.95
}

timeline {
  end = 365 day
  at 100 day {
    well "PRD" { control = liquid_rate 900 stb/day }
  }
}
"#;

fn check(text: &str) -> Analysis {
    analyze_text(Path::new("/w/section.rill"), text, &MemorySource::new())
}

fn edited(from: &str, to: &str) -> Analysis {
    assert!(DECK.contains(from), "the deck has no `{from}`");
    check(&DECK.replacen(from, to, 1))
}

/// The diagnostics of `code`, with their messages, fix titles and the text they point at.
fn found(a: &Analysis, text: &str, code: Code) -> Vec<(Severity, String, Vec<String>, String)> {
    a.diagnostics
        .iter()
        .filter(|d| d.code == code)
        .map(|d| {
            (
                d.severity,
                d.message.clone(),
                d.fixes.iter().map(|f| f.title.clone()).collect(),
                text[d.location.start..d.location.end].to_string(),
            )
        })
        .collect()
}

const PSI: f64 = 6894.757293168361;
const CP: f64 = 1e-3;

#[test]
fn an_oil_water_deck_lowers_its_phases_curves_and_controls() {
    let a = check(DECK);
    assert!(
        a.diagnostics.iter().all(|d| d.severity == Severity::Info),
        "{:#?}",
        a.diagnostics
    );
    let case = a.case.expect("a case");
    // The oil stands where a single-phase deck's fluid does.
    assert!((case.fluid.viscosity - 2.4 * CP).abs() < 1e-15);
    let ow = case.oil_water.as_ref().expect("an oil-water case");
    assert!((ow.water.viscosity - 0.5 * CP).abs() < 1e-15);
    assert!((ow.water.fvf - 1.01).abs() < 1e-15);
    // The water's reference pressure defaults to the datum's oil pressure.
    assert!((ow.water.ref_pressure - 2900.0 * PSI).abs() < 1e-6);
    assert_eq!(ow.relperms.len(), 2);
    assert_eq!(ow.relperms[0].name, "sand");
    match &ow.relperms[0].curves {
        Curves::Corey(c) => {
            assert_eq!(
                (c.swc, c.sor, c.krw_end, c.kro_end, c.nw, c.no),
                (0.18, 0.22, 0.32, 0.85, 2.5, 2.0)
            );
            assert!((c.pc_entry - 2.0 * PSI).abs() < 1e-9);
        }
        other => panic!("expected Corey curves, found {other:?}"),
    }
    match &ow.relperms[1].curves {
        Curves::Table(t) => {
            assert_eq!(t.sw, vec![0.25, 0.45, 0.72]);
            assert_eq!(t.kro, vec![0.7, 0.21, 0.0]);
            assert!((t.pc[0] - 9.0 * PSI).abs() < 1e-9 && t.pc[2] == 0.0);
        }
        other => panic!("expected a table, found {other:?}"),
    }
    // Layers 1 to 3 use "sand", the patched layer 4 "silt".
    let g = &case.grid;
    for c in 0..g.cell_count() {
        let k = g.ijk(c).2;
        assert_eq!(ow.cell_relperm.of(c), usize::from(k == 3), "cell {c}");
    }
    match ow.saturation {
        InitialSaturation::Contact { depth } => assert!((depth - 6080.0 * 0.3048).abs() < 1e-9),
        ref other => panic!("expected a contact, found {other:?}"),
    }
    let (inj, prd) = (&case.wells[0], &case.wells[1]);
    assert_eq!(inj.role, Role::Injector);
    assert!(matches!(inj.control, Control::WaterRate(q) if q > 0.0));
    assert!(matches!(prd.control, Control::OilRate(q) if q > 0.0));
    assert_eq!(prd.max_water_cut, Some(0.95));
    assert_eq!(inj.max_water_cut, None);
    assert!(matches!(
        case.timeline.events[0].changes[0].control,
        Some(Control::LiquidRate(_))
    ));
}

#[test]
fn a_single_relperm_block_needs_no_rock_key_and_several_do() {
    let one = DECK
        .replace("  relperm = \"sand\"\n  patch k = 4 {\n    relperm = \"silt\"\n  }\n", "")
        .replace(
            "relperm \"silt\" {\n  model = table\n  sw = [0.25 0.45 0.72]\n  krw = [0 0.07 0.35]\n  kro = [0.7 0.21 0]\n  pc = [9 1.6 0] psi\n}\n",
            "",
        );
    let a = check(&one);
    assert!(!a.has_errors(), "{:#?}", a.diagnostics);
    let case = a.case.unwrap();
    let ow = case.oil_water.as_ref().unwrap();
    assert_eq!(ow.relperms.len(), 1);
    assert!((0..case.grid.cell_count()).all(|c| ow.cell_relperm.of(c) == 0));

    let text = DECK.replace("  relperm = \"sand\"\n", "");
    let a = check(&text);
    let missing = found(&a, &text, Code::DeckMissingKey);
    assert_eq!(missing.len(), 1, "{missing:?}");
    assert!(missing[0].1.contains("\"sand\", \"silt\""), "{missing:?}");
    assert_eq!(missing[0].2, vec!["add `relperm = \"sand\"`"]);
}

#[test]
fn a_relperm_label_that_names_no_block_suggests_the_nearest() {
    let text = DECK.replace("relperm = \"silt\"", "relperm = \"slit\"");
    let a = check(&text);
    let refs = found(&a, &text, Code::DeckReference);
    assert_eq!(refs.len(), 1, "{refs:?}");
    assert_eq!(refs[0].1, "no `relperm` block is labelled \"slit\"");
    assert_eq!(refs[0].2, vec!["replace by \"silt\""]);
    assert_eq!(refs[0].3, "\"slit\"");
    assert!(a.case.is_none());
}

#[test]
fn fluid_with_oil_and_water_or_one_phase_block_alone_is_deck_phases() {
    let text = DECK.replace(
        "oil {",
        "fluid {\n  viscosity = 1 cP\n  fvf = 1 rb/stb\n  density = 62.4 lb/ft^3\n}\n\noil {",
    );
    let a = check(&text);
    let p = found(&a, &text, Code::DeckPhases);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!(p[0].3, "fluid");
    assert_eq!(
        p[0].2,
        vec!["remove the `fluid` block (keep oil and water)"]
    );

    let water = "water {\n  viscosity = 0.5 cP\n  fvf = 1.01 rb/stb\n  compressibility = 3e-6 1/psi\n  density = 63.8 lb/ft^3\n}\n";
    let text = DECK.replace(water, "");
    let a = check(&text);
    let p = found(&a, &text, Code::DeckPhases);
    assert_eq!(p.len(), 1, "{p:?}");
    assert!(
        p[0].1.contains("it has `oil` but no `water` block"),
        "{p:?}"
    );
    assert_eq!(p[0].2, vec!["add a `water` block"]);
    assert!(a.case.is_none());
}

/// A single-phase deck with oil-water blocks, keys and controls.
#[test]
fn oil_water_blocks_keys_and_controls_in_a_single_phase_deck_are_deck_phases() {
    let single = include_str!("../../../examples/teaching-block.rill");
    let text = format!(
        "{}\nrelperm \"r\" {{\n  model = corey\n  swc = 0.2\n  sor = 0.2\n  krw_end = 0.3\n  kro_end = 0.8\n  nw = 2\n  no = 2\n}}\n",
        single
            .replacen("initial {", "initial {\n  water_contact = 5000 ft", 1)
            .replacen("control = rate", "control = oil_rate", 1)
    );
    let a = check(&text);
    let p = found(&a, &text, Code::DeckPhases);
    let at: Vec<&str> = p.iter().map(|d| d.3.as_str()).collect();
    assert!(at.contains(&"relperm"), "{p:?}");
    assert!(at.contains(&"water_contact"), "{p:?}");
    assert!(at.contains(&"oil_rate"), "{p:?}");
    let oil_rate = p.iter().find(|d| d.3 == "oil_rate").unwrap();
    assert_eq!(oil_rate.2, vec!["replace by `rate`"]);
}

#[test]
fn rate_in_an_oil_water_deck_offers_the_phase_controls_of_the_role() {
    let text = DECK.replace("control = oil_rate 600", "control = rate 600");
    let a = check(&text);
    let v = found(&a, &text, Code::DeckValue);
    assert_eq!(v.len(), 1, "{v:?}");
    assert_eq!(v[0].3, "rate");
    assert_eq!(
        v[0].2,
        vec!["replace by `oil_rate`", "replace by `liquid_rate`"]
    );

    let text = DECK.replace("control = water_rate 800", "control = rate 800");
    let a = check(&text);
    let v = found(&a, &text, Code::DeckValue);
    assert_eq!(v.len(), 1, "{v:?}");
    assert_eq!(v[0].2, vec!["replace by `water_rate`"]);
}

#[test]
fn a_control_of_the_other_role_is_well_control_phase() {
    let text = DECK.replace("control = water_rate 800", "control = oil_rate 800");
    let a = check(&text);
    let v = found(&a, &text, Code::WellControlPhase);
    assert_eq!(v.len(), 1, "{v:?}");
    assert_eq!((v[0].0, v[0].3.as_str()), (Severity::Error, "oil_rate"));
    assert_eq!(v[0].2, vec!["replace by `water_rate`"]);

    let text = DECK.replace("control = liquid_rate 900", "control = water_rate 900");
    let a = check(&text);
    let v = found(&a, &text, Code::WellControlPhase);
    assert_eq!(v.len(), 1, "{v:?}");
    assert_eq!(
        v[0].2,
        vec!["replace by `oil_rate`", "replace by `liquid_rate`"]
    );

    let a = edited(
        "  control = water_rate 800 stb/day\n",
        "  control = water_rate 800 stb/day\n  max_water_cut = 0.9\n",
    );
    assert_eq!(
        a.diagnostics
            .iter()
            .filter(|d| d.code == Code::WellControlPhase)
            .count(),
        1,
        "{:#?}",
        a.diagnostics
    );
    let a = edited("max_water_cut = 0.95", "max_water_cut = 1.5");
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::DeckOutOfRange),
        "{:#?}",
        a.diagnostics
    );
}

#[test]
fn corey_endpoints_that_cannot_hold_are_relperm_endpoints() {
    for (from, to, at) in [
        ("swc = 0.18", "swc = 1.2", "1.2"),
        ("sor = 0.22", "sor = 0.85", "0.85"),
        ("krw_end = 0.32", "krw_end = 0", "0"),
        ("kro_end = 0.85", "kro_end = 1.4", "1.4"),
    ] {
        let text = DECK.replace(from, to);
        let a = check(&text);
        let e = found(&a, &text, Code::RelpermEndpoints);
        assert_eq!(e.len(), 1, "{to}: {e:?}");
        assert_eq!(
            (e[0].0, e[0].3.as_str()),
            (Severity::Error, at),
            "{to}: {e:?}"
        );
    }
    // A percentage typed for a fraction: the fix gives the fraction.
    for (from, to, fix) in [
        (
            "krw_end = 0.32",
            "krw_end = 32",
            "replace by 0.32 (a percentage as a fraction)",
        ),
        (
            "swc = 0.18",
            "swc = 18",
            "replace by 0.18 (a percentage as a fraction)",
        ),
    ] {
        let text = DECK.replace(from, to);
        let e = found(&check(&text), &text, Code::RelpermEndpoints);
        assert_eq!(e.len(), 1, "{to}: {e:?}");
        assert_eq!(e[0].2, vec![fix.to_string()], "{to}: {e:?}");
    }
    let a = edited("nw = 2.5", "nw = -1");
    assert!(a.diagnostics.iter().any(|d| d.code == Code::DeckOutOfRange));
    // A key of the table form in a Corey block.
    let a = edited(
        "  pc_entry = 2 psi\n",
        "  pc_entry = 2 psi\n  sw = [0.2 0.8]\n",
    );
    assert!(a
        .diagnostics
        .iter()
        .any(|d| d.code == Code::DeckUnknownKey && d.message.contains("table form")));
}

#[test]
fn a_table_of_the_wrong_shape_is_relperm_shape() {
    for (from, to, at) in [
        ("sw = [0.25 0.45 0.72]", "sw = [0.25 0.45 0.40]", "0.40"),
        ("krw = [0 0.07 0.35]", "krw = [0 0.07 0.05]", "0.05"),
        ("kro = [0.7 0.21 0]", "kro = [0.7 0.81 0]", "0.81"),
        ("pc = [9 1.6 0] psi", "pc = [9 10 0] psi", "10"),
        ("kro = [0.7 0.21 0]", "kro = [0.7 0]", "[0.7 0]"),
    ] {
        let text = DECK.replace(from, to);
        let a = check(&text);
        let e = found(&a, &text, Code::RelpermShape);
        assert_eq!(e.len(), 1, "{to}: {e:?}");
        assert_eq!(
            (e[0].0, e[0].3.as_str()),
            (Severity::Error, at),
            "{to}: {e:?}"
        );
    }
    // A table whose krw does not start at 0 runs, with a warning.
    let text = DECK.replace("krw = [0 0.07 0.35]", "krw = [0.01 0.07 0.35]");
    let a = check(&text);
    let e = found(&a, &text, Code::RelpermEndpoints);
    assert_eq!(e.len(), 1, "{e:?}");
    assert_eq!((e[0].0, e[0].3.as_str()), (Severity::Warning, "0.01"));
    assert!(!a.has_errors());
    // The same at the table's ends (sw = 0, sw = 1): a phase would flow out
    // of a cell that holds none of it.
    for (edits, at) in [
        (
            [
                ("sw = [0.25 0.45 0.72]", "sw = [0 0.45 0.72]"),
                ("krw = [0 0.07 0.35]", "krw = [0.01 0.07 0.35]"),
            ],
            "0.01",
        ),
        (
            [
                ("sw = [0.25 0.45 0.72]", "sw = [0.25 0.45 1]"),
                ("kro = [0.7 0.21 0]", "kro = [0.7 0.21 0.02]"),
            ],
            "0.02",
        ),
    ] {
        let text = edits
            .iter()
            .fold(DECK.to_string(), |t, (f, to)| t.replace(f, to));
        let a = check(&text);
        let e = found(&a, &text, Code::RelpermEndpoints);
        assert_eq!(e.len(), 1, "{e:?}");
        assert_eq!((e[0].0, e[0].3.as_str()), (Severity::Error, at), "{e:?}");
        assert!(e[0].1.contains("holds none"), "{e:?}");
    }
}

#[test]
fn a_corey_exponent_below_one_is_a_relperm_shape_warning() {
    for (from, to, at) in [
        ("nw = 2.5", "nw = 0.4", "0.4"),
        ("no = 2.0", "no = 0.7", "0.7"),
    ] {
        let text = DECK.replace(from, to);
        let a = check(&text);
        let e = found(&a, &text, Code::RelpermShape);
        assert_eq!(e.len(), 1, "{to}: {e:?}");
        assert_eq!(
            (e[0].0, e[0].3.as_str()),
            (Severity::Warning, at),
            "{to}: {e:?}"
        );
        assert!(e[0].1.contains("infinitely steeply"), "{e:?}");
        assert!(!a.has_errors(), "{to}");
    }
    let a = edited("nw = 2.5", "nw = 1");
    assert!(found(&a, DECK, Code::RelpermShape).is_empty());
}

#[test]
fn the_initial_saturation_is_a_contact_or_given_and_not_both() {
    let a = edited(
        "water_contact = 6080 ft",
        "water_saturation = layers [0.2 0.2 0.3 0.9]",
    );
    assert!(!a.has_errors(), "{:#?}", a.diagnostics);
    let case = a.case.unwrap();
    match &case.oil_water.as_ref().unwrap().saturation {
        InitialSaturation::Cells(v) => {
            assert_eq!(v.len(), 24);
            assert_eq!(v[23], 0.9);
        }
        other => panic!("expected cells, found {other:?}"),
    }
    let a = edited(
        "water_contact = 6080 ft",
        "water_contact = 6080 ft\n  water_saturation = 0.2",
    );
    assert!(a
        .diagnostics
        .iter()
        .any(|d| d.code == Code::DeckDuplicateKey));
    let text = DECK.replace("  water_contact = 6080 ft\n", "");
    let a = check(&text);
    let m = found(&a, &text, Code::DeckMissingKey);
    assert_eq!(m.len(), 1, "{m:?}");
    assert_eq!(m[0].2, vec!["add `water_contact` at the base of the grid"]);
}

/// `rill run` refuses an oil-water case before it starts; the checker and
/// the case digest take every value of the second phase into account.
#[test]
fn the_digest_follows_the_second_phase() {
    let digest = |a: Analysis| rill_model::digest::case_digest(&a.case.unwrap());
    let base = digest(check(DECK));
    assert_ne!(base, digest(edited("nw = 2.5", "nw = 2.6")));
    assert_ne!(
        base,
        digest(edited("water_contact = 6080 ft", "water_contact = 6081 ft"))
    );
    assert_ne!(
        base,
        digest(edited("viscosity = 0.5 cP", "viscosity = 0.6 cP"))
    );
}

#[test]
fn an_adverse_endpoint_mobility_ratio_is_a_note_on_its_relperm_block() {
    // (0.32 / 0.5) / (0.85 / 2.4) = 1.807: no note.
    assert!(!check(DECK)
        .diagnostics
        .iter()
        .any(|d| d.code == Code::SanityMobility));
    // With 24 cP oil: (0.32 / 0.5) / (0.85 / 24) = 18.071 for "sand" and
    // (0.35 / 0.5) / (0.7 / 24) = 24 for "silt" (its table's end points).
    let text = DECK.replace("viscosity = 2.4 cP", "viscosity = 24 cP");
    let a = check(&text);
    let m = found(&a, &text, Code::SanityMobility);
    assert_eq!(m.len(), 2, "{m:?}");
    assert!(m.iter().all(|d| d.0 == Severity::Info));
    assert_eq!(m[0].3, "relperm \"sand\"");
    assert!(
        m[0].1
            .contains("of \"sand\" is 18.071 = (0.32 / 0.5 cP) / (0.85 / 24 cP)"),
        "{m:?}"
    );
    assert!(
        m[1].1
            .contains("of \"silt\" is 24 = (0.35 / 0.5 cP) / (0.7 / 24 cP)"),
        "{m:?}"
    );
}

#[test]
fn a_contact_outside_the_grid_is_a_warning_that_says_where_the_grid_is() {
    // The grid reaches from 6000 ft to 6100 ft.
    let text = DECK.replace("water_contact = 6080 ft", "water_contact = 5950 ft");
    let a = check(&text);
    let w = found(&a, &text, Code::InitialContact);
    assert_eq!(w.len(), 1, "{w:?}");
    assert_eq!((w[0].0, w[0].3.as_str()), (Severity::Warning, "5950 ft"));
    assert!(
        w[0].1
            .contains("above the top of the grid (the grid reaches from 6000 ft to 6100 ft deep)"),
        "{w:?}"
    );
    let below = |depth: &str| {
        let text = DECK.replace(
            "water_contact = 6080 ft",
            &format!("water_contact = {depth}"),
        );
        let a = check(&text);
        let d = a
            .diagnostics
            .iter()
            .find(|d| d.code == Code::InitialContact)
            .cloned()
            .expect("a warning");
        assert!(d.message.contains("below the base of the grid"), "{d:?}");
        d.notes[0].clone()
    };
    // 9 psi of table pc over (63.8 - 51) lb/ft^3 of density difference
    // stands 9 * 144 / 12.8 = 101 ft high: from 6110 ft it reaches the grid.
    assert!(below("6110 ft").starts_with("only the capillary transition zone"));
    assert!(below("6300 ft").starts_with("no cell reaches the capillary transition zone"));
    assert!(!check(DECK)
        .diagnostics
        .iter()
        .any(|d| d.code == Code::InitialContact));
}

#[test]
fn given_saturations_outside_zero_to_one_and_each_phase_are_checked() {
    let text = DECK.replace(
        "water_contact = 6080 ft",
        "water_saturation = layers [0.2 0.3 1.2 1]",
    );
    let a = check(&text);
    let e = found(&a, &text, Code::DeckOutOfRange);
    assert_eq!(e.len(), 1, "{e:?}");
    assert!(
        e[0].1
            .contains("6 cell(s) are outside, the first (1, 1, 3) with 1.2"),
        "{e:?}"
    );
    // The water's checks name the water.
    let text = DECK.replace("viscosity = 0.5 cP", "viscosity = 0 cP");
    let a = check(&text);
    let v = found(&a, &text, Code::SanityViscosity);
    assert_eq!(v.len(), 1, "{v:?}");
    assert_eq!(v[0].1, "water viscosity must be positive");
    assert_eq!(v[0].3, "0 cP");
}

/// The equilibrium of the deck, cell by cell, against hand-derived values,
/// with incompressible phases (the deck's compressibilities removed). The
/// density difference is (63.8 - 51) lb/ft^3 = 12.8 lb/ft^3, so a column
/// h ft high above the contact holds pc = 12.8 h / 144 psi.
#[test]
fn saturations_from_the_contact_invert_each_cells_curves() {
    use rill_model::derived::saturation::{initial_water_saturation, initial_water_saturations};
    let incompressible = DECK
        .replace("  compressibility = 1.2e-5 1/psi\n", "")
        .replace("  compressibility = 3e-6 1/psi\n", "");
    assert!(!incompressible.contains("compressibility"));
    let sw_at = |text: &str, k: usize| {
        let text = text.replace(DECK, &incompressible);
        let case = check(&text).case.expect("a case");
        let all = initial_water_saturations(&case);
        assert_eq!(all.len(), case.grid.cell_count());
        let c = case.grid.index(2, 0, k);
        assert_eq!(Some(all[c]), initial_water_saturation(&case, c));
        all[c]
    };
    // Layer 3 ("sand", centre 6062.5 ft), 17.5 ft above the contact at
    // 6080 ft: pc = 12.8 * 17.5 / 144 = 1.5556 psi; Corey with
    // pc_entry = 2 psi: S = 1 - 1.5556 / 2 = 0.22222,
    // sw = 0.18 + 0.6 S = 0.31333.
    assert!((sw_at(DECK, 2) - (0.18 + 0.6 * (1.0 - 12.8 * 17.5 / 144.0 / 2.0))).abs() < 1e-12);
    assert!((sw_at(DECK, 2) - 0.313_333_3).abs() < 1e-7);
    // Layers 1 and 2 (6012.5 and 6037.5 ft) stand 67.5 and 42.5 ft above
    // it: pc above 2 psi, so connate water.
    assert_eq!(sw_at(DECK, 0), 0.18);
    assert_eq!(sw_at(DECK, 1), 0.18);
    // Layer 4 lies below the contact: water only.
    assert_eq!(sw_at(DECK, 3), 1.0);
    // With the contact at 6110 ft, layer 4 ("silt", the table, centre
    // 6087.5 ft) stands 22.5 ft above it: pc = 12.8 * 22.5 / 144 = 2 psi,
    // between the rows (0.25, 9 psi) and (0.45, 1.6 psi):
    // sw = 0.25 + 0.2 (9 - 2) / (9 - 1.6) = 0.43919.
    let lower = incompressible.replace("water_contact = 6080 ft", "water_contact = 6110 ft");
    assert!((sw_at(&lower, 3) - (0.25 + 0.2 * 7.0 / 7.4)).abs() < 1e-12);
    assert!((sw_at(&lower, 3) - 0.439_189_2).abs() < 1e-7);
    // The deck as written has slightly compressible phases: the oil is
    // 7e-5 denser 7 psi below the datum, and the transition a little lower.
    let compressible = check(DECK).case.expect("a case");
    let c = compressible.grid.index(2, 0, 2);
    let sw = initial_water_saturation(&compressible, c).unwrap();
    assert!(sw > 0.313_333_3 && sw < 0.3136, "{sw}");
}

#[test]
fn an_oil_formation_volume_factor_below_one_is_upside_down() {
    let a = edited("fvf = 1.18 rb/stb", "fvf = 0.8 rb/stb");
    let text = DECK.replacen("fvf = 1.18 rb/stb", "fvf = 0.8 rb/stb", 1);
    let e = found(&a, &text, Code::SanityFvf);
    assert_eq!(e.len(), 1, "{e:?}");
    assert_eq!(
        (e[0].0, e[0].3.as_str()),
        (Severity::Warning, "0.8 rb/stb"),
        "{e:?}"
    );
    assert!(e[0].1.contains("below 1"), "{e:?}");
    // Water may sit just below 1; so may the single fluid of a
    // single-phase deck (a water-filled aquifer model).
    let a = edited("fvf = 1.01 rb/stb", "fvf = 0.99 rb/stb");
    assert!(found(&a, DECK, Code::SanityFvf).is_empty());
}

/// Below the water contact the initial pressure follows the water's
/// hydrostat through the contact, as the engine starts its water leg:
/// a producer completed there, held to a BHP between the oil's hydrostat
/// carried on below the contact and the water's, would produce (no
/// `well.bhp`), and one above the water's pressure would inject (one).
/// An aquifer starts on the water's hydrostat too.
#[test]
fn below_the_contact_the_initial_pressure_is_the_waters() {
    let a = check(DECK);
    let case = a.case.as_ref().expect("the deck lowers");
    let eq = rill_model::derived::saturation::equilibrium(case).expect("a contact and a datum");
    // Layer 4's centre, 6087.5 ft, lies 7.5 ft below the contact at 6080 ft.
    let z = 6087.5 * 0.3048;
    let (p_oil, p_water) = (eq.oil_pressure(z), eq.water_pressure(z));
    let p0 = rill_model::checks::initial_pressure_at(case, z).expect("a datum");
    assert_eq!(p0, p_water);
    // The water is denser: 7.5 ft more of its column than of the oil's,
    // about 0.09 psi/ft apart (63.8 and 51 lb/ft^3 over 144 in^2/ft^2).
    let gap = (p_water - p_oil) / PSI;
    assert!((0.6..0.75).contains(&gap), "{gap} psi");
    // Above the contact, the oil's.
    let above = 6062.5 * 0.3048;
    assert_eq!(
        rill_model::checks::initial_pressure_at(case, above),
        Some(eq.oil_pressure(above))
    );
    let bhp_between = format!("{:.2} psi", (p_oil + p_water) / 2.0 / PSI);
    let bhp_above = format!("{:.2} psi", p_water / PSI + 0.2);
    for (bhp, warned) in [(bhp_between, false), (bhp_above, true)] {
        let text = DECK.replacen(
            "  location = (6, 1)\n  radius = 0.3 ft\n  control = oil_rate 600 stb/day",
            &format!("  location = (6, 1)\n  layers = 4\n  radius = 0.3 ft\n  control = bhp {bhp}"),
            1,
        );
        assert_ne!(text, DECK);
        let got = found(&check(&text), &text, Code::WellBhp);
        assert_eq!(!got.is_empty(), warned, "BHP {bhp}: {got:?}");
    }
    // An aquifer on the west side: its faces' mean depth is the grid's
    // middle, 6050 ft, above the contact, and still it starts on the
    // water's hydrostat.
    let text = format!(
        "{DECK}\naquifer \"west leg\" {{\n  side = west\n  water_volume = 2e7 rb\n  compressibility = 7e-6 1/psi\n  productivity = 40 rb/day/psi\n}}\n"
    );
    let a = check(&text);
    let case = a.case.as_ref().expect("the deck lowers");
    let faces = rill_model::aquifer::faces(case, &case.aquifers[0]);
    let depth = rill_model::aquifer::mean_depth(&faces).expect("faces");
    assert!((depth / 0.3048 - 6050.0).abs() < 1e-6, "{depth}");
    let eq = rill_model::derived::saturation::equilibrium(case).expect("a contact and a datum");
    assert_eq!(
        rill_model::aquifer::initial_pressure(case, &faces),
        Some(eq.water_pressure(depth))
    );
}
