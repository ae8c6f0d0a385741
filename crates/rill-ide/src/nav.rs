//! Go to definition, references and rename: well and boundary names
//! (across the deck and its includes), include and array file paths,
//! property references.

use crate::locate::{locate, Hit, Node};
use crate::{FileEdit, Snapshot, Target, TextEdit};
use rill_syntax::{AtomKind, Block, Item, Span};

/// What kind of named block a name belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Named {
    Well,
    Boundary,
}

impl Named {
    fn block(self) -> &'static str {
        match self {
            Named::Well => "well",
            Named::Boundary => "boundary",
        }
    }
}

/// The well name under the cursor: on a top-level well block or an event's
/// well change (name or label).
fn well_name<'t>(hit: &Hit<'t>) -> Option<&'t str> {
    match named_at(hit)? {
        (Named::Well, name) => Some(name),
        _ => None,
    }
}

/// The well or boundary name under the cursor: on a top-level well or
/// boundary block, or an event's well change (its name or label).
fn named_at<'t>(hit: &Hit<'t>) -> Option<(Named, &'t str)> {
    let b = hit.block()?;
    if !matches!(hit.node, Node::BlockName | Node::BlockArg(_)) {
        return None;
    }
    let is_top = hit.blocks.len() == 1;
    let kind = match b.name.name.as_str() {
        "well" => Named::Well,
        "boundary" if is_top => Named::Boundary,
        _ => return None,
    };
    let is_event = hit.blocks.len() == 3
        && hit.blocks[0].name.name == "timeline"
        && hit.blocks[1].name.name == "at";
    if !is_top && !is_event {
        return None;
    }
    match b.args.first().map(|a| &a.kind) {
        Some(AtomKind::Str { value, .. }) => Some((kind, value.as_str())),
        _ => None,
    }
}

/// Whether `b` is a `kind` block labelled `name`.
fn is_named(b: &Block, kind: Named, name: &str) -> bool {
    b.name.name == kind.block()
        && matches!(b.args.first().map(|a| &a.kind), Some(AtomKind::Str { value, .. }) if value == name)
}

/// The labels in `items` (a deck's top level) that name `name`: its
/// blocks and, for a well, its changes in timeline events.
fn name_spans(items: &[Item], kind: Named, name: &str) -> Vec<Span> {
    let mut out = Vec::new();
    for item in items {
        let Item::Block(b) = item else { continue };
        if is_named(b, kind, name) {
            out.push(label_span(b));
        }
        if kind == Named::Well && b.name.name == "timeline" {
            for ev in &b.items {
                let Item::Block(ev) = ev else { continue };
                if ev.name.name != "at" {
                    continue;
                }
                for ch in &ev.items {
                    if let Item::Block(w) = ch {
                        if is_named(w, kind, name) {
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

/// The path of file `index` of the analysis as the editor knows it.
fn file_path(snap: &Snapshot, index: usize) -> std::path::PathBuf {
    if index == snap.focus() {
        snap.path().to_path_buf()
    } else {
        snap.analysis().files[index].path.clone()
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
                    return Some(Target {
                        file: file_path(snap, index),
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
    let Some((kind, name)) = named_at(&hit) else {
        return Vec::new();
    };
    name_spans(&snap.tree().items, kind, name)
}

pub(crate) fn references_everywhere(snap: &Snapshot, offset: usize) -> Vec<Target> {
    let hit = hit_at(snap, offset);
    let Some((kind, name)) = named_at(&hit) else {
        return Vec::new();
    };
    let mut out: Vec<Target> = Vec::new();
    for (index, f) in snap.analysis().files.iter().enumerate() {
        // The open document's own tree: the one positions refer to.
        let items = if index == snap.focus() {
            &snap.tree().items
        } else {
            match &f.tree {
                Some(tree) => &tree.items,
                None => continue,
            }
        };
        let file = file_path(snap, index);
        out.extend(
            name_spans(items, kind, name)
                .into_iter()
                .map(|span| Target {
                    file: file.clone(),
                    span,
                }),
        );
    }
    out.sort_by(|a, b| (&a.file, a.span.start).cmp(&(&b.file, b.span.start)));
    out.dedup();
    out
}

pub(crate) fn prepare_rename(snap: &Snapshot, offset: usize) -> Option<(Span, String)> {
    let hit = hit_at(snap, offset);
    let (_, name) = named_at(&hit)?;
    Some((label_span(hit.block()?), name.to_string()))
}

/// Why `name` cannot be written as a label, if it cannot: labels are
/// one-line strings without escapes.
fn label_problem(name: &str) -> Option<&'static str> {
    if name.trim().is_empty() {
        Some("a name cannot be empty")
    } else if name.contains(['"', '\\']) {
        Some("a name cannot contain `\"` or `\\`")
    } else if name.chars().any(char::is_control) {
        Some("a name must be one line of text")
    } else {
        None
    }
}

pub(crate) fn rename(
    snap: &Snapshot,
    offset: usize,
    new_name: &str,
) -> Result<Vec<FileEdit>, String> {
    let hit = hit_at(snap, offset);
    let Some((kind, name)) = named_at(&hit) else {
        return Err("only the name of a well or boundary can be renamed".to_string());
    };
    if let Some(problem) = label_problem(new_name) {
        return Err(problem.to_string());
    }
    if new_name == name {
        return Ok(Vec::new());
    }
    let taken = snap
        .analysis()
        .files
        .iter()
        .filter_map(|f| f.tree.as_ref())
        .any(|t| {
            t.items
                .iter()
                .any(|i| matches!(i, Item::Block(b) if is_named(b, kind, new_name)))
        });
    if taken {
        return Err(format!(
            "a {} named \"{new_name}\" already exists",
            kind.block()
        ));
    }
    Ok(references_everywhere(snap, offset)
        .into_iter()
        .map(|t| FileEdit {
            file: t.file,
            edit: TextEdit {
                span: t.span,
                new_text: format!("\"{new_name}\""),
            },
        })
        .collect())
}
