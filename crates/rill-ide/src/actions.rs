//! Code actions: the fixes the diagnostics carry, list-length fixes for
//! `grid.array-length`, and converting a quantity to field or metric units.

use crate::locate::{atom_path, block_def, locate, Node};
use crate::present::{is_perm_unit, kind_of};
use crate::{CodeAction, CodeActionKind, Snapshot, TextEdit};
use rill_model::schema::ValueKind;
use rill_syntax::{Atom, AtomKind, Span};
use rill_units::{display_unit, format_number, Dim, System};

fn touches(a: Span, b: Span) -> bool {
    a.start <= b.end && b.start <= a.end
}

pub(crate) fn code_actions(snap: &Snapshot, range: Span) -> Vec<CodeAction> {
    let text = snap.text();
    let range = Span::new(
        snap.clamp(range.start),
        snap.clamp(range.end.max(range.start)),
    );
    let mut out = Vec::new();
    for (index, d) in snap.diagnostics().iter().enumerate() {
        if d.location.file != snap.focus() || !touches(d.location.span(), range) {
            continue;
        }
        for fix in &d.fixes {
            // A fix that also edits another file cannot be applied here alone.
            if fix.edits.iter().any(|e| e.location.file != snap.focus()) {
                continue;
            }
            let mut edits: Vec<TextEdit> = fix
                .edits
                .iter()
                .filter(|e| e.location.end <= text.len() && e.location.start <= e.location.end)
                .map(|e| TextEdit {
                    span: e.location.span(),
                    new_text: e.replacement.clone(),
                })
                .collect();
            if edits.len() != fix.edits.len() {
                continue;
            }
            edits.sort_by_key(|e| e.span.start);
            out.push(CodeAction {
                title: fix.title.clone(),
                kind: CodeActionKind::QuickFix,
                edits,
                diagnostic: Some(index),
            });
        }
        if d.code == rill_model::Code::GridArrayLength {
            out.extend(array_length_fix(snap, index, d));
        }
    }
    let single = conversions(snap, range.start);
    if single.is_empty() {
        out.extend(list_conversions(snap, range.start));
    } else {
        out.extend(single);
    }
    out
}

/// `(expected, found)` from "... needs N values (...), found M".
fn counts(message: &str) -> Option<(usize, usize)> {
    let number_after = |s: &str, word: &str| -> Option<usize> {
        let at = s.find(word)? + word.len();
        let digits: String = s[at..].chars().take_while(|c| c.is_ascii_digit()).collect();
        digits.parse().ok()
    };
    let expected = number_after(message, "needs ")?;
    let found = number_after(&message[message.find("needs ")?..], ", found ")?;
    Some((expected, found))
}

/// Pad a short list by repeating its last value, or drop the values too many.
fn array_length_fix(
    snap: &Snapshot,
    index: usize,
    d: &rill_model::Diagnostic,
) -> Option<CodeAction> {
    let (expected, found) = counts(&d.message)?;
    let span = d.location.span();
    let hit = locate(&snap.tree().items, span.start);
    let Node::Value(stmt, _) = hit.node else {
        return None;
    };
    let list = find_atom(&stmt.value.atoms, span)?;
    let AtomKind::List {
        items,
        close: Some(close),
        ..
    } = &list.kind
    else {
        return None;
    };
    if items.len() != found || found == 0 || expected == found {
        return None;
    }
    let text = snap.text();
    let note = d.notes.first().cloned().unwrap_or_default();
    if found < expected {
        let last = items.last()?;
        let last_text = text.get(last.span.start..last.span.end)?;
        let missing = expected - found;
        // Very long pads are better typed by hand or read from a file.
        if missing > 100_000 {
            return None;
        }
        let mut pad = String::with_capacity(missing * (last_text.len() + 1));
        for _ in 0..missing {
            pad.push(' ');
            pad.push_str(last_text);
        }
        Some(CodeAction {
            title: format!("repeat the last value {missing} time(s): expected {expected}, found {found} ({note})"),
            kind: CodeActionKind::QuickFix,
            edits: vec![TextEdit { span: Span::new(last.span.end, last.span.end), new_text: pad }],
            diagnostic: Some(index),
        })
        .filter(|_| close.start >= last.span.end)
    } else {
        let keep = items.get(expected.checked_sub(1)?)?;
        let last = items.last()?;
        Some(CodeAction {
            title: format!(
                "drop the last {} value(s): expected {expected}, found {found}",
                found - expected
            ),
            kind: CodeActionKind::QuickFix,
            edits: vec![TextEdit {
                span: Span::new(keep.span.end, last.span.end),
                new_text: String::new(),
            }],
            diagnostic: Some(index),
        })
    }
}

fn find_atom(atoms: &[Atom], span: Span) -> Option<&Atom> {
    atom_path(atoms, span.start)
        .into_iter()
        .map(|s| s.atom)
        .find(|a| a.span == span)
}

/// "Convert to field units" / "to metric units" for the quantity at `off`.
fn conversions(snap: &Snapshot, off: usize) -> Vec<CodeAction> {
    let mut out = Vec::new();
    let mut hit = locate(&snap.tree().items, off);
    let is_quantity = |h: &crate::locate::Hit| {
        matches!(
            h.innermost().map(|a| &a.kind),
            Some(AtomKind::Number { unit: Some(_), .. })
        )
    };
    if !is_quantity(&hit) && off > 0 {
        hit = locate(
            &snap.tree().items,
            crate::floor_boundary(snap.text(), off - 1),
        );
    }
    if !is_quantity(&hit) {
        return out;
    }
    let Some(atom) = hit.innermost() else {
        return out;
    };
    let AtomKind::Number {
        value,
        raw,
        unit: Some(u),
    } = &atom.kind
    else {
        return out;
    };
    let perm = match &hit.node {
        Node::Value(s, _) => block_def(&hit.blocks)
            .and_then(|d| d.key(&s.key.name))
            .is_some_and(|k| matches!(k.kind, ValueKind::Property(d) if d == Dim::PERMEABILITY)),
        _ => false,
    };
    let Ok(parsed) = rill_units::parse(&u.text) else {
        return out;
    };
    let Some(kind) = kind_of(parsed.dim, perm || is_perm_unit(&u.text)) else {
        return out;
    };
    let si = parsed.to_si(*value);
    for (sys, words) in [(System::Field, "field"), (System::Metric, "metric")] {
        let du = display_unit(kind, sys);
        if du.name == u.text {
            continue;
        }
        let new_text = format!("{} {}", format_number(du.from_si(si)), du.name);
        out.push(CodeAction {
            title: format!("convert `{raw} {}` to {words} units: {new_text}", u.text),
            kind: CodeActionKind::Refactor,
            edits: vec![TextEdit {
                span: atom.span,
                new_text,
            }],
            diagnostic: None,
        });
    }
    out
}

/// Longest list converted in one action: each item is an edit.
const MAX_CONVERTED_ITEMS: usize = 10_000;

/// "Convert to field / metric units" for a list with one unit after `]`
/// (`dz = [20 15] ft`): every item and the unit, keeping the layout.
fn list_conversions(snap: &Snapshot, off: usize) -> Vec<CodeAction> {
    let mut out = Vec::new();
    let hit = locate(&snap.tree().items, off);
    let Node::Value(stmt, steps) = &hit.node else {
        return out;
    };
    let Some(list) = steps
        .iter()
        .rev()
        .map(|s| s.atom)
        .find(|a| matches!(&a.kind, AtomKind::List { unit: Some(_), .. }))
    else {
        return out;
    };
    let AtomKind::List {
        items,
        unit: Some(u),
        ..
    } = &list.kind
    else {
        return out;
    };
    if items.is_empty() || items.len() > MAX_CONVERTED_ITEMS {
        return out;
    }
    let mut values = Vec::with_capacity(items.len());
    for item in items {
        match &item.kind {
            AtomKind::Number {
                value, unit: None, ..
            } => values.push((*value, item.span)),
            _ => return out,
        }
    }
    let perm = block_def(&hit.blocks)
        .and_then(|d| d.key(&stmt.key.name))
        .is_some_and(|k| matches!(k.kind, ValueKind::Property(d) if d == Dim::PERMEABILITY));
    let Ok(parsed) = rill_units::parse(&u.text) else {
        return out;
    };
    let Some(kind) = kind_of(parsed.dim, perm || is_perm_unit(&u.text)) else {
        return out;
    };
    for (sys, words) in [(System::Field, "field"), (System::Metric, "metric")] {
        let du = display_unit(kind, sys);
        if du.name == u.text {
            continue;
        }
        let mut edits: Vec<TextEdit> = values
            .iter()
            .map(|(v, span)| TextEdit {
                span: *span,
                new_text: format_number(du.from_si(parsed.to_si(*v))),
            })
            .collect();
        edits.push(TextEdit {
            span: u.span,
            new_text: du.name.to_string(),
        });
        out.push(CodeAction {
            title: format!(
                "convert the list from `{}` to {words} units (`{}`)",
                u.text, du.name
            ),
            kind: CodeActionKind::Refactor,
            edits,
            diagnostic: None,
        });
    }
    out
}
