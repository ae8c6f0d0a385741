//! The shape of the document: symbols, folding ranges, the run lens.

use crate::{CodeLens, Snapshot, Symbol, SymbolKind};
use rill_model::Severity;
use rill_syntax::{Atom, AtomKind, Block, Item, Span};

pub(crate) fn symbols(snap: &Snapshot) -> Vec<Symbol> {
    snap.tree()
        .items
        .iter()
        .filter_map(|i| item_symbol(snap.text(), i, &[]))
        .collect()
}

fn label(b: &Block) -> Option<(&str, Span)> {
    match b.args.first() {
        Some(Atom {
            kind: AtomKind::Str { value, .. },
            span,
        }) => Some((value.as_str(), *span)),
        _ => None,
    }
}

/// Source text of a span with runs of whitespace collapsed to one space.
fn span_text(text: &str, span: Span) -> String {
    text.get(span.start..span.end)
        .unwrap_or("")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

fn key_text(text: &str, b: &Block, key: &str) -> Option<String> {
    let s = rill_model::lower::find(b, key)?;
    Some(span_text(text, s.value.span))
}

fn header_text(text: &str, b: &Block) -> String {
    match (b.args.first(), b.args.last()) {
        (Some(f), Some(l)) => span_text(text, f.span.join(l.span)),
        _ => String::new(),
    }
}

fn item_symbol(text: &str, item: &Item, parents: &[&str]) -> Option<Symbol> {
    match item {
        Item::Directive(d) if d.name.name == "include" && parents.is_empty() => {
            let name = match d.args.first().map(|a| &a.kind) {
                Some(AtomKind::Str { value, .. }) => value.clone(),
                _ => "include".to_string(),
            };
            Some(Symbol {
                name,
                detail: Some("include".into()),
                kind: SymbolKind::Include,
                range: d.span,
                selection: d.args.first().map_or(d.name.span, |a| a.span),
                children: Vec::new(),
            })
        }
        Item::Block(b) => Some(block_symbol(text, b, parents)),
        _ => None,
    }
}

fn block_symbol(text: &str, b: &Block, parents: &[&str]) -> Symbol {
    let name = b.name.name.as_str();
    let kind = match (parents.last().copied(), name) {
        (None, "case") => SymbolKind::Case,
        (None, "grid") => SymbolKind::Grid,
        (None, "rock") => SymbolKind::Rock,
        (None, "fluid") => SymbolKind::Fluid,
        (None, "oil") => SymbolKind::Oil,
        (None, "water") => SymbolKind::Water,
        (None, "relperm") => SymbolKind::Relperm,
        (None, "initial") => SymbolKind::Initial,
        (None, "well") => SymbolKind::Well,
        (None, "boundary") => SymbolKind::Boundary,
        (None, "fault") => SymbolKind::Fault,
        (None, "aquifer") => SymbolKind::Aquifer,
        (None, "timeline") => SymbolKind::Timeline,
        (None, "report") => SymbolKind::Report,
        (Some("rock"), "patch") => SymbolKind::Patch,
        (Some("timeline"), "at") => SymbolKind::Event,
        (Some("at"), "well") => SymbolKind::WellChange,
        _ => SymbolKind::Unknown,
    };
    let lab = label(b);
    let (sym_name, detail) = match kind {
        SymbolKind::Case => (
            lab.map_or("case".to_string(), |l| l.0.to_string()),
            Some("case".to_string()),
        ),
        SymbolKind::Grid => ("grid".to_string(), key_text(text, b, "cells")),
        SymbolKind::Fluid => ("fluid".to_string(), lab.map(|l| l.0.to_string())),
        SymbolKind::Oil | SymbolKind::Water => (name.to_string(), key_text(text, b, "viscosity")),
        SymbolKind::Relperm => (
            lab.map_or("relperm".to_string(), |l| l.0.to_string()),
            key_text(text, b, "model").map(|m| format!("relperm, {m}")),
        ),
        SymbolKind::Well => (
            lab.map_or("well".to_string(), |l| l.0.to_string()),
            key_text(text, b, "role"),
        ),
        SymbolKind::Boundary => (
            lab.map_or("boundary".to_string(), |l| l.0.to_string()),
            key_text(text, b, "side"),
        ),
        SymbolKind::Fault => (
            lab.map_or("fault".to_string(), |l| l.0.to_string()),
            match (key_text(text, b, "side"), key_text(text, b, "multiplier")) {
                (Some(side), Some(m)) => Some(format!("{side}, multiplier {m}")),
                (side, m) => side.or(m),
            },
        ),
        SymbolKind::Aquifer => (
            lab.map_or("aquifer".to_string(), |l| l.0.to_string()),
            key_text(text, b, "side"),
        ),
        SymbolKind::Patch => (format!("patch {}", header_text(text, b)), None),
        SymbolKind::Event => (format!("at {}", header_text(text, b)), None),
        SymbolKind::WellChange => (
            lab.map_or("well".to_string(), |l| l.0.to_string()),
            key_text(text, b, "control"),
        ),
        _ => (name.to_string(), None),
    };
    let mut path: Vec<&str> = parents.to_vec();
    path.push(name);
    let children = b
        .items
        .iter()
        .filter_map(|i| item_symbol(text, i, &path))
        .collect();
    Symbol {
        name: sym_name,
        detail,
        kind,
        range: b.span,
        selection: lab.map_or(b.name.span, |l| l.1),
        children,
    }
}

pub(crate) fn folding_ranges(snap: &Snapshot) -> Vec<Span> {
    let text = snap.text();
    let mut out = Vec::new();
    let multi = |s: Span| {
        text.get(s.start..s.end)
            .is_some_and(|t| t.contains(['\n', '\r']))
    };
    fn walk(items: &[Item], out: &mut Vec<Span>, multi: &dyn Fn(Span) -> bool) {
        for item in items {
            match item {
                Item::Block(b) => {
                    if multi(b.span) {
                        out.push(b.span);
                    }
                    walk(&b.items, out, multi);
                }
                Item::Statement(s) => {
                    for a in &s.value.atoms {
                        // Up to the closing bracket: the unit after it is not folded.
                        let span = match &a.kind {
                            AtomKind::List { close, .. } | AtomKind::Tuple { close, .. } => {
                                Span::new(a.span.start, close.map_or(a.span.end, |c| c.end))
                            }
                            _ => continue,
                        };
                        if multi(span) {
                            out.push(span);
                        }
                    }
                }
                Item::Directive(_) => {}
            }
        }
    }
    walk(&snap.tree().items, &mut out, &multi);
    // Runs of own-line comments on consecutive lines.
    let comments = &snap.tree().comments;
    let own_line = |c: &rill_syntax::Comment| {
        let ls = text[..c.span.start]
            .rfind(['\n', '\r'])
            .map_or(0, |p| p + 1);
        text[ls..c.span.start].trim().is_empty()
    };
    let mut i = 0;
    while i < comments.len() {
        if !own_line(&comments[i]) {
            i += 1;
            continue;
        }
        let mut j = i;
        while j + 1 < comments.len() && own_line(&comments[j + 1]) {
            let between = &text[comments[j].span.end..comments[j + 1].span.start];
            let breaks = between
                .matches('\n')
                .count()
                .max(between.matches('\r').count());
            if breaks != 1 || !between.trim().is_empty() {
                break;
            }
            j += 1;
        }
        if j > i {
            out.push(Span::new(comments[i].span.start, comments[j].span.end));
        }
        i = j + 1;
    }
    out.sort_by_key(|s| (s.start, std::cmp::Reverse(s.end)));
    out
}

pub(crate) fn code_lenses(snap: &Snapshot) -> Vec<CodeLens> {
    // A fragment is run through its deck, not on its own.
    if snap.context().is_some() {
        return Vec::new();
    }
    let Some(first) = snap.tree().items.iter().find_map(|i| match i {
        Item::Block(b) => Some(b),
        _ => None,
    }) else {
        return Vec::new();
    };
    let analysis = snap.analysis();
    let is_case = analysis.case.is_some()
        || snap
            .tree()
            .items
            .iter()
            .any(|i| matches!(i, Item::Block(b) if b.name.name == "grid"));
    if !is_case {
        return Vec::new();
    }
    let errors = analysis
        .diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count();
    let span = first.name.span;
    if errors == 0 && analysis.case.is_some() {
        vec![CodeLens {
            span,
            title: "▶ Run case".into(),
            command: Some("rill.run".into()),
        }]
    } else {
        let n = errors.max(1);
        vec![CodeLens {
            span,
            title: format!(
                "Run case: fix {n} error{} first",
                if n == 1 { "" } else { "s" }
            ),
            command: None,
        }]
    }
}
