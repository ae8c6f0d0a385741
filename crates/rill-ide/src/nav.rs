//! Go to definition and references: well names, include and array file
//! paths, property references.

use crate::locate::{locate, Hit, Node};
use crate::{Snapshot, Target};
use rill_syntax::{AtomKind, Block, Item, Span};

/// The well name under the cursor: on a top-level well block or an event's
/// well change (name or label).
fn well_name<'t>(hit: &Hit<'t>) -> Option<&'t str> {
    let b = hit.block()?;
    if !matches!(hit.node, Node::BlockName | Node::BlockArg(_)) || b.name.name != "well" {
        return None;
    }
    let is_top = hit.blocks.len() == 1;
    let is_event = hit.blocks.len() == 3
        && hit.blocks[0].name.name == "timeline"
        && hit.blocks[1].name.name == "at";
    if !is_top && !is_event {
        return None;
    }
    match b.args.first().map(|a| &a.kind) {
        Some(AtomKind::Str { value, .. }) => Some(value.as_str()),
        _ => None,
    }
}

fn hit_at(snap: &Snapshot, offset: usize) -> Hit<'_> {
    let off = snap.clamp(offset);
    let hit = locate(&snap.tree().items, off);
    if matches!(hit.node, Node::Gap) && off > 0 {
        return locate(
            &snap.tree().items,
            crate::floor_boundary(snap.text(), off - 1),
        );
    }
    hit
}

fn label_span(b: &Block) -> Span {
    b.args.first().map_or(b.name.span, |a| a.span)
}

pub(crate) fn definition(snap: &Snapshot, offset: usize) -> Option<Target> {
    let hit = hit_at(snap, offset);
    if let Some(name) = well_name(&hit) {
        let analysis = snap.analysis();
        for (index, f) in analysis.files.iter().enumerate() {
            let Some(tree) = &f.tree else { continue };
            for item in &tree.items {
                let Item::Block(b) = item else { continue };
                if b.name.name == "well"
                    && matches!(b.args.first().map(|a| &a.kind), Some(AtomKind::Str { value, .. }) if value == name)
                {
                    let file = if index == 0 {
                        snap.path().to_path_buf()
                    } else {
                        f.path.clone()
                    };
                    return Some(Target {
                        file,
                        span: label_span(b),
                    });
                }
            }
        }
        return None;
    }
    match &hit.node {
        Node::DirectiveArg(d, steps) if d.name.name == "include" => {
            let AtomKind::Str { value, .. } = &steps.first()?.atom.kind else {
                return None;
            };
            Some(Target {
                file: rill_model::source::resolve(snap.path(), value),
                span: Span::new(0, 0),
            })
        }
        Node::Value(stmt, steps) => {
            // `kx = file "kx.txt" md`: the array file, from its start.
            if let (Some(AtomKind::Ident(form)), AtomKind::Str { value, .. }) = (
                stmt.value.atoms.first().map(|a| &a.kind),
                &steps.last()?.atom.kind,
            ) {
                if form == "file" {
                    return Some(Target {
                        file: rill_model::source::resolve(snap.path(), value),
                        span: Span::new(0, 0),
                    });
                }
            }
            // `ky = kx`: the statement that defines `kx` in the same block, or in `rock` for a patch.
            let AtomKind::Ident(name) = &steps.last()?.atom.kind else {
                return None;
            };
            let block = hit.block()?;
            let mut candidates = vec![block];
            if block.name.name == "patch" {
                candidates.insert(0, hit.blocks.first()?);
            }
            for b in candidates {
                if !matches!(b.name.name.as_str(), "rock" | "patch") {
                    continue;
                }
                if let Some(s) = rill_model::lower::find(b, name) {
                    return Some(Target {
                        file: snap.path().to_path_buf(),
                        span: s.key.span,
                    });
                }
            }
            None
        }
        _ => None,
    }
}

pub(crate) fn references(snap: &Snapshot, offset: usize) -> Vec<Span> {
    let hit = hit_at(snap, offset);
    let Some(name) = well_name(&hit) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let named = |b: &Block| {
        b.name.name == "well"
            && matches!(b.args.first().map(|a| &a.kind), Some(AtomKind::Str { value, .. }) if value == name)
    };
    for item in &snap.tree().items {
        let Item::Block(b) = item else { continue };
        if named(b) {
            out.push(label_span(b));
        }
        if b.name.name == "timeline" {
            for ev in &b.items {
                let Item::Block(ev) = ev else { continue };
                if ev.name.name != "at" {
                    continue;
                }
                for ch in &ev.items {
                    if let Item::Block(w) = ch {
                        if named(w) {
                            out.push(label_span(w));
                        }
                    }
                }
            }
        }
    }
    out.sort_by_key(|s| s.start);
    out
}
