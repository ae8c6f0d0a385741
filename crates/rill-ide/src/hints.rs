//! Inlay hints: a quantity in another unit system, the cell count of a grid size.

use crate::locate::block_def;
use crate::present::{is_perm_unit, kind_of, pretty_unit, short, system_of};
use crate::{Config, InlayHint, InlayHintKind, Snapshot};
use rill_model::schema::ValueKind;
use rill_syntax::{Atom, AtomKind, Block, Item, Span};
use rill_units::{display_unit, Dim, Kind, System};

pub(crate) fn inlay_hints(snap: &Snapshot, range: Span, config: &Config) -> Vec<InlayHint> {
    let mut out = Vec::new();
    if !config.inlay_hints {
        return out;
    }
    let mut stack = Vec::new();
    walk(&snap.tree().items, range, config, &mut stack, &mut out);
    out
}

fn walk<'t>(
    items: &'t [Item],
    range: Span,
    config: &Config,
    stack: &mut Vec<&'t Block>,
    out: &mut Vec<InlayHint>,
) {
    let first = items.partition_point(|i| i.span().end < range.start);
    for item in &items[first..] {
        if item.span().start > range.end {
            break;
        }
        match item {
            Item::Block(b) => {
                stack.push(b);
                walk(&b.items, range, config, stack, out);
                stack.pop();
            }
            Item::Statement(s) => {
                let def = block_def(stack);
                let key = def.and_then(|d| d.key(&s.key.name));
                let perm = key.is_some_and(
                    |k| matches!(k.kind, ValueKind::Property(d) if d == Dim::PERMEABILITY),
                );
                for a in &s.value.atoms {
                    if a.span.end < range.start || a.span.start > range.end {
                        continue;
                    }
                    match &a.kind {
                        AtomKind::Size(parts) if s.key.name == "cells" => {
                            if let Some(n) = parts.iter().try_fold(1u64, |x, y| x.checked_mul(*y)) {
                                out.push(InlayHint {
                                    offset: a.span.end,
                                    label: format!("= {n} cells"),
                                    kind: InlayHintKind::Count,
                                });
                            }
                        }
                        AtomKind::Number { .. } => {
                            if let Some(label) = conversion(a, perm, config) {
                                out.push(InlayHint {
                                    offset: a.span.end,
                                    label,
                                    kind: InlayHintKind::Conversion,
                                });
                            }
                        }
                        _ => {}
                    }
                }
            }
            Item::Directive(_) => {}
        }
    }
}

/// `≈ 220.6 bar` for `3200 psi`: the other system (or the configured one),
/// or SI when the other system writes it the same (`md`).
pub(crate) fn conversion(atom: &Atom, perm: bool, config: &Config) -> Option<String> {
    let AtomKind::Number {
        value,
        unit: Some(u),
        ..
    } = &atom.kind
    else {
        return None;
    };
    let parsed = rill_units::parse(&u.text).ok()?;
    let kind = kind_of(parsed.dim, perm || is_perm_unit(&u.text))?;
    if matches!(kind, Kind::Time) {
        // Times are read as written; a conversion would only add noise.
        return None;
    }
    let si = parsed.to_si(*value);
    let target = match config.hint_system {
        Some(s) => s,
        None => match system_of(&u.text, kind) {
            Some(System::Field) => System::Metric,
            _ => System::Field,
        },
    };
    let mut du = display_unit(kind, target);
    if du.name == u.text {
        if config.hint_system.is_some() {
            return None;
        }
        du = display_unit(kind, System::Si);
        if du.name == u.text {
            return None;
        }
    }
    let v = du.from_si(si);
    let s = short(v);
    // A zero, or the same number in another name (`1.02 rb/stb` is `1.02 rm3/sm3`), says nothing new.
    if *value == 0.0 || s == short(*value) {
        return None;
    }
    let exact = s
        .parse::<f64>()
        .is_ok_and(|x| (x - v).abs() <= 1e-12 * v.abs());
    Some(format!(
        "{} {s} {}",
        if exact { "=" } else { "≈" },
        pretty_unit(du.name)
    ))
}
