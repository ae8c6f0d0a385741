//! Edits that break a deck the way typing does, for the no-panic
//! properties: deletions, insertions of syntax fragments and odd values,
//! duplicated pieces and long repeated fragments. Shared by the checker's
//! campaign (`robustness.rs`) and the oil-water engine's
//! (`rill-sim/tests/oil_water_robust.rs`, through a `#[path]` module).
#![allow(dead_code)]

use proptest::prelude::*;

/// One edit of a deck's text at a byte offset (taken modulo its length).
#[derive(Debug, Clone)]
pub enum Mutation {
    Delete(usize, usize),
    Insert(usize, String),
    Replace(usize, usize, String),
    Duplicate(usize, usize),
    /// A fragment inserted many times in a row: long arithmetic chains and
    /// high unit powers (`kx * kx * ...`), deep brackets.
    Repeat(usize, String, usize),
}

fn repeated() -> impl Strategy<Value = String> {
    prop_oneof![
        Just(" * kx".to_string()),
        Just(" * porosity".to_string()),
        Just(" * 1 md".to_string()),
        Just(" + 5 md".to_string()),
        Just(" / 2".to_string()),
        Just("^2".to_string()),
        Just("[".to_string()),
        Just("{".to_string()),
        Just("(".to_string()),
    ]
}

fn fragments() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("{".to_string()),
        Just("}".to_string()),
        Just("[".to_string()),
        Just("]".to_string()),
        Just("(".to_string()),
        Just("\"".to_string()),
        Just("=".to_string()),
        Just("\n".to_string()),
        Just(" md".to_string()),
        Just(" psi".to_string()),
        Just(" 0".to_string()),
        Just(" -1e308".to_string()),
        Just(" 1e999".to_string()),
        Just("..".to_string()),
        Just(" x ".to_string()),
        Just("patch i = 0..99 { kx = 0 md }".to_string()),
        Just("*".to_string()),
        Just(" layers [1 2]".to_string()),
        Just(" cells [1]".to_string()),
        Just(" file \"nope.txt\" md".to_string()),
        Just("Ω😀".to_string()),
        Just("include \"tamsin-ridge.rill\"\n".to_string()),
        // Oil-water words: phase controls on either role, the other form of
        // curves, a water-cut limit and a second set of curves anywhere.
        Just(" water_rate".to_string()),
        Just(" oil_rate".to_string()),
        Just(" liquid_rate".to_string()),
        Just(" table".to_string()),
        Just("\nmax_water_cut = 0.01\n".to_string()),
        Just("\nrelperm = \"b\"\n".to_string()),
        "[ -~]{0,12}",
    ]
}

pub fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), 0usize..40).prop_map(|(a, n)| Mutation::Delete(a, n)),
        (any::<usize>(), fragments()).prop_map(|(a, s)| Mutation::Insert(a, s)),
        (any::<usize>(), 0usize..12, fragments()).prop_map(|(a, n, s)| Mutation::Replace(a, n, s)),
        (any::<usize>(), 0usize..200).prop_map(|(a, n)| Mutation::Duplicate(a, n)),
        (any::<usize>(), repeated(), 1usize..400).prop_map(|(a, s, n)| Mutation::Repeat(a, s, n)),
    ]
}

fn floor_boundary(s: &str, mut i: usize) -> usize {
    i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// `text` with the edit `m` made.
pub fn apply(text: &str, m: &Mutation) -> String {
    let mut t = text.to_string();
    let len = t.len().max(1);
    match m {
        Mutation::Delete(a, n) => {
            let s = floor_boundary(&t, a % len);
            let e = floor_boundary(&t, s + n);
            t.replace_range(s..e, "");
        }
        Mutation::Insert(a, frag) => {
            let s = floor_boundary(&t, a % len);
            t.insert_str(s, frag);
        }
        Mutation::Replace(a, n, frag) => {
            let s = floor_boundary(&t, a % len);
            let e = floor_boundary(&t, s + n);
            t.replace_range(s..e, frag);
        }
        Mutation::Duplicate(a, n) => {
            let s = floor_boundary(&t, a % len);
            let e = floor_boundary(&t, s + n);
            let piece = t[s..e].to_string();
            t.insert_str(e, &piece);
        }
        Mutation::Repeat(a, frag, n) => {
            let s = floor_boundary(&t, a % len);
            t.insert_str(s, &frag.repeat(*n));
        }
    }
    t
}
