//! Completion, also on incomplete text.

mod common;
use common::*;
use rill_ide::{CompletionItem, CompletionKind, Span};

fn labels(items: &[CompletionItem]) -> Vec<&str> {
    items.iter().map(|i| i.label.as_str()).collect()
}

/// The deck cut at `cut` (the cursor at the end), plus `typed`.
fn typed(cut: &str, typed: &str) -> (String, usize) {
    let mut text = BASE[..at(BASE, cut, 0)].to_string();
    text.push_str(typed);
    let off = text.len();
    (text, off)
}

#[test]
fn units_after_a_number_on_incomplete_text() {
    // Everything after the cursor is gone: blocks are unclosed.
    let (text, off) = typed("  ky = kx", "  kx2 = 1\n  kz = 150 ");
    let s = snap(&text);
    let items = s.completion(off);
    let l = labels(&items);
    assert_eq!(&l[..2], &["md", "darcy"], "{l:?}");
    assert!(items
        .iter()
        .all(|i| i.kind == CompletionKind::Unit && i.replace == Span::new(off, off)));
    // A unit started: it is replaced.
    let (text, off) = typed("  ky = kx", "  kz = 150 da");
    let items = snap(&text).completion(off);
    assert!(labels(&items).contains(&"darcy"));
    assert_eq!(items[0].replace, Span::new(off - 2, off));
    // Pressure after a number, length after `at`.
    let (text, off) = typed("  pressure = 3200", "  pressure = 3200 ");
    let l: Vec<String> = snap(&text)
        .completion(off)
        .into_iter()
        .map(|i| i.label)
        .collect();
    assert_eq!(l.first().map(String::as_str), Some("psi"), "{l:?}");
    let (text, off) = typed("  pressure = 3200", "  pressure = 3200 psi at 5000 ");
    let l: Vec<String> = snap(&text)
        .completion(off)
        .into_iter()
        .map(|i| i.label)
        .collect();
    assert_eq!(l.first().map(String::as_str), Some("ft"), "{l:?}");
    let (text, off) = typed("  pressure = 3200", "  pressure = 3200 psi a");
    let l: Vec<String> = snap(&text)
        .completion(off)
        .into_iter()
        .map(|i| i.label)
        .collect();
    assert_eq!(l, vec!["at"]);
    // A list with its unit after `]`.
    let (text, off) = typed("  dz = [20 30] ft", "  dz = [20 30] ");
    assert_eq!(labels(&snap(&text).completion(off))[0], "ft");
    // Rate units after `control = rate 300`.
    let (text, off) = typed("  control = rate 300", "  control = rate 300 ");
    assert_eq!(
        labels(&snap(&text).completion(off)),
        vec!["stb/day", "sm3/day"]
    );
    let (text, off) = typed("  control = rate 300", "  control = bhp 300 ");
    assert_eq!(labels(&snap(&text).completion(off))[0], "psi");
}

#[test]
fn enum_values_after_choice_keys() {
    for (cut, typed_text, want) in [
        (
            "  role = producer",
            "  role = ",
            vec!["producer", "injector"],
        ),
        (
            "  role = producer",
            "  role = inj",
            vec!["producer", "injector"],
        ),
        (
            "  side = east",
            "  side = ",
            vec!["west", "east", "south", "north", "top", "bottom"],
        ),
        (
            "  control = rate",
            "  control = ",
            vec!["rate", "bhp", "shut"],
        ),
        // In an event too: a well may be shut from a time on.
        (
            "    well \"P-1\" { control = bhp",
            "    well \"P-1\" { control = ",
            vec!["rate", "bhp", "shut"],
        ),
        (
            "    well \"P-1\" { control = bhp",
            "    well \"P-1\" { control = sh",
            vec!["rate", "bhp", "shut"],
        ),
        (
            "  units = field",
            "  units = ",
            vec!["field", "metric", "si"],
        ),
    ] {
        let (text, off) = typed(cut, typed_text);
        let items = snap(&text).completion(off);
        assert_eq!(labels(&items), want, "{typed_text}");
        assert!(items.iter().all(|i| i.kind == CompletionKind::EnumValue));
    }
    let (text, off) = typed("  end = 100 day", "  kind = ");
    assert_eq!(
        labels(&snap(&text).completion(off)),
        vec!["transient", "steady"]
    );
    // Value forms and references for a rock property.
    let (text, off) = typed("  kz = 0.1", "  kz = ");
    let l: Vec<String> = snap(&text)
        .completion(off)
        .into_iter()
        .map(|i| i.label)
        .collect();
    assert!(
        l.contains(&"layers".to_string()) && l.contains(&"kx".to_string()),
        "{l:?}"
    );
}

#[test]
fn keys_not_yet_present_and_child_blocks() {
    let (text, off) = typed("  compressibility = 4e-6", "  ");
    let items = snap(&text).completion(off);
    let l = labels(&items);
    // porosity, kx, ky, kz are present; compressibility is being replaced by the cursor's line.
    assert!(!l.contains(&"porosity") && !l.contains(&"kx"), "{l:?}");
    assert!(
        l.contains(&"compressibility") && l.contains(&"ref_pressure") && l.contains(&"patch"),
        "{l:?}"
    );
    let comp = items.iter().find(|i| i.label == "compressibility").unwrap();
    assert_eq!(comp.kind, CompletionKind::Key);
    assert_eq!(comp.insert_text, "compressibility = ");
    assert!(comp.documentation.as_deref().unwrap().contains("Pore"));
    // A key prefix in a closed block, mid-document.
    let text = BASE.replace(
        "  density = 62.4 lb/ft^3\n",
        "  density = 62.4 lb/ft^3\n  comp\n",
    );
    let off = at(&text, "  comp\n", 6);
    let items = snap(&text).completion(off);
    let c = items
        .iter()
        .find(|i| i.label == "compressibility")
        .expect("key");
    assert_eq!(c.replace, Span::new(off - 4, off));
    assert!(!labels(&items).contains(&"viscosity"));
}

#[test]
fn block_names_with_skeletons_at_top_level() {
    let text = format!("{BASE}\n");
    let off = text.len();
    let items = snap(&text).completion(off);
    let l = labels(&items);
    // grid, rock, ... are present once already; well and boundary repeat.
    assert!(
        !l.contains(&"grid") && l.contains(&"well") && l.contains(&"include"),
        "{l:?}"
    );
    let empty = snap("").completion(0);
    let grid = empty.iter().find(|i| i.label == "grid").expect("grid");
    assert!(grid.snippet);
    assert!(
        grid.insert_text.contains("cells = ${1:10 x 10 x 1}"),
        "{}",
        grid.insert_text
    );
    assert!(grid.insert_text.contains("top = "));
    let well = empty.iter().find(|i| i.label == "well").unwrap();
    assert!(
        well.insert_text.starts_with("well \"${1:name}\" {"),
        "{}",
        well.insert_text
    );
}

#[test]
fn well_names_in_events() {
    let (text, off) = typed("    well \"P-1\" { control", "    well \"");
    let items = snap(&text).completion(off);
    assert_eq!(labels(&items), vec!["P-1"]);
    assert_eq!(items[0].kind, CompletionKind::Well);
    assert_eq!(items[0].replace, Span::new(off, off));
    // Inside existing quotes the partial name is replaced up to the closing quote.
    let off = at(BASE, "\"P-1\" { control", 2);
    let items = snap(BASE).completion(off);
    assert_eq!(items[0].insert_text, "P-1");
    assert_eq!(items[0].replace, Span::new(off - 1, off + 2));
    // After `well ` the name comes with its quotes.
    let (text, off) = typed("    well \"P-1\" { control", "    well ");
    let items = snap(&text).completion(off);
    assert_eq!(items[0].insert_text, "\"P-1\"");
}

#[test]
fn nothing_in_comments_or_after_unknown_keys() {
    let off = at(BASE, "\"base deck\"", 3);
    assert!(snap(BASE).completion(off).is_empty());
    let text = BASE.replace("  porosity = 0.2\n", "  porosity = 0.2  # kx = 150 \n");
    let off = at(&text, "# kx = 150 ", 11);
    assert!(snap(&text).completion(off).is_empty());
    let (text, off) = typed("  ky = kx", "  nonsense = 150 ");
    assert!(snap(&text).completion(off).is_empty());
}

#[test]
fn patch_selectors_not_yet_given() {
    let (text, off) = typed("  patch i = 2..3", "  patch i = 2..3 ");
    assert_eq!(labels(&snap(&text).completion(off)), vec!["j", "k"]);
    let (text, off) = typed("  patch i = 2..3", "  patch ");
    assert_eq!(labels(&snap(&text).completion(off)), vec!["i", "j", "k"]);
    let (text, off) = typed("  patch i = 2..3", "  patch i = ");
    assert!(snap(&text).completion(off).is_empty());
}

#[test]
fn file_and_folder_names_inside_include_and_file_strings() {
    let files = rill_model::MemorySource::new()
        .with("arrays/kx.txt", "1")
        .with("arrays/phi.txt", "1")
        .with("arrays/old/kx.txt", "1")
        .with("wells.rill", "")
        .with("notes.txt", "");
    // An array file: other files and folders, the last segment replaced.
    let (text, off) = typed("  ky = kx", "  kz = file \"arrays/");
    let s = snap(&text);
    let items = s.completion_with_files(off, &files);
    assert_eq!(labels(&items), ["kx.txt", "phi.txt", "old/"]);
    assert!(items.iter().all(|i| i.replace == Span::new(off, off)));
    assert_eq!(items[2].kind, CompletionKind::Folder);
    assert_eq!(items[0].kind, CompletionKind::File);
    let (text, off) = typed("  ky = kx", "  kz=file \"arrays/p");
    let items = snap(&text).completion_with_files(off, &files);
    assert_eq!(labels(&items), ["phi.txt"]);
    assert_eq!(items[0].replace, Span::new(off - 1, off));
    // An include: decks and folders only.
    let text = format!("{BASE}include \"");
    let off = text.len();
    let items = snap(&text).completion_with_files(off, &files);
    assert_eq!(labels(&items), ["wells.rill", "arrays/"]);
    // Without a source to list, and in other strings, nothing.
    assert!(snap(&text).completion(off).is_empty());
    let (text, off) = typed("  ky = kx", "  kz = \"arrays/");
    assert!(snap(&text).completion_with_files(off, &files).is_empty());
    let (text, off) = typed("  ky = kx", "  kz = profile \"arrays/");
    assert!(snap(&text).completion_with_files(off, &files).is_empty());
}
