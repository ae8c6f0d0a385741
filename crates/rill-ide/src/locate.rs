//! Finding the syntax node at a byte offset, by binary search on the
//! (sorted, non-overlapping) spans of items and atoms, so that a query on a
//! million-item list costs a few dozen comparisons.

use rill_model::schema::{self, BlockDef};
use rill_syntax::{Atom, AtomKind, Block, Directive, Item, Span, Statement, UnitExpr};

/// One step down into atoms: the atom and its index among its siblings
/// (statement atoms, block arguments, or list/tuple items).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Step<'t> {
    pub index: usize,
    pub atom: &'t Atom,
}

#[derive(Debug, Clone)]
pub(crate) enum Node<'t> {
    /// The name of the innermost block of the stack.
    BlockName,
    /// Inside a header argument of the innermost block.
    BlockArg(Vec<Step<'t>>),
    /// The key of a statement.
    Key(&'t Statement),
    /// Inside the value of a statement.
    Value(&'t Statement, Vec<Step<'t>>),
    DirectiveName(&'t Directive),
    DirectiveArg(&'t Directive, Vec<Step<'t>>),
    /// Between items (inside the innermost block, or at the top level).
    Gap,
}

#[derive(Debug, Clone)]
pub(crate) struct Hit<'t> {
    /// Enclosing blocks, outermost first. For `BlockName`/`BlockArg` the
    /// last one is the block whose header is hit.
    pub blocks: Vec<&'t Block>,
    pub node: Node<'t>,
}

impl<'t> Hit<'t> {
    /// The unit expression under the cursor, if the innermost atom has one there.
    pub fn unit(&self, offset: usize) -> Option<(&'t UnitExpr, &'t Atom)> {
        let atom = self.innermost()?;
        let unit = match &atom.kind {
            AtomKind::Number { unit, .. }
            | AtomKind::Str { unit, .. }
            | AtomKind::List { unit, .. } => unit.as_ref(),
            _ => None,
        }?;
        unit.span.contains(offset).then_some((unit, atom))
    }

    pub fn steps(&self) -> &[Step<'t>] {
        match &self.node {
            Node::BlockArg(s) | Node::Value(_, s) | Node::DirectiveArg(_, s) => s,
            _ => &[],
        }
    }

    pub fn innermost(&self) -> Option<&'t Atom> {
        self.steps().last().map(|s| s.atom)
    }

    pub fn block(&self) -> Option<&'t Block> {
        self.blocks.last().copied()
    }
}

/// The item containing `offset`.
fn item_at(items: &[Item], offset: usize) -> Option<&Item> {
    let idx = items.partition_point(|it| it.span().end <= offset);
    items.get(idx).filter(|it| it.span().contains(offset))
}

/// The chain of atoms containing `offset`.
pub(crate) fn atom_path(atoms: &[Atom], offset: usize) -> Vec<Step<'_>> {
    let mut path = Vec::new();
    let mut cur = atoms;
    loop {
        let idx = cur.partition_point(|a| a.span.end <= offset);
        let Some(atom) = cur.get(idx).filter(|a| a.span.contains(offset)) else {
            break;
        };
        path.push(Step { index: idx, atom });
        match &atom.kind {
            AtomKind::List { items, .. } | AtomKind::Tuple { items, .. } => cur = items,
            AtomKind::Selector { key, value } => {
                if key.span.contains(offset) {
                    break;
                }
                cur = std::slice::from_ref(value.as_ref());
            }
            _ => break,
        }
    }
    path
}

pub(crate) fn locate(items: &[Item], offset: usize) -> Hit<'_> {
    let mut blocks = Vec::new();
    let mut items = items;
    loop {
        let Some(item) = item_at(items, offset) else {
            return Hit {
                blocks,
                node: Node::Gap,
            };
        };
        match item {
            Item::Statement(s) => {
                let node = if s.key.span.contains(offset) {
                    Node::Key(s)
                } else {
                    Node::Value(s, atom_path(&s.value.atoms, offset))
                };
                return Hit { blocks, node };
            }
            Item::Directive(d) => {
                let node = if d.name.span.contains(offset) {
                    Node::DirectiveName(d)
                } else {
                    Node::DirectiveArg(d, atom_path(&d.args, offset))
                };
                return Hit { blocks, node };
            }
            Item::Block(b) => {
                blocks.push(b);
                if b.name.span.contains(offset) {
                    return Hit {
                        blocks,
                        node: Node::BlockName,
                    };
                }
                if offset < b.open.start {
                    return Hit {
                        blocks,
                        node: Node::BlockArg(atom_path(&b.args, offset)),
                    };
                }
                if offset < b.open.end || b.close.is_some_and(|c| c.contains(offset)) {
                    return Hit {
                        blocks,
                        node: Node::Gap,
                    };
                }
                items = &b.items;
            }
        }
    }
}

/// The blocks whose body (between `{` and `}`, or to the end for an
/// unclosed block) holds `offset`, outermost first. Unlike [`locate`] this
/// also finds the block when the cursor is past its last item.
pub(crate) fn enclosing_blocks(items: &[Item], offset: usize) -> Vec<&Block> {
    let mut out = Vec::new();
    let mut items = items;
    loop {
        // Items are in order: only the last one starting before the offset
        // can be a block whose body holds it.
        let idx = items.partition_point(|it| it.span().start < offset);
        let Some(Item::Block(b)) = idx.checked_sub(1).and_then(|i| items.get(i)) else {
            return out;
        };
        let inside = b.open.end <= offset && b.close.is_none_or(|c| offset <= c.start);
        if !inside {
            return out;
        }
        out.push(b);
        items = &b.items;
    }
}

/// The schema definition of the innermost of `blocks` (outermost first).
pub(crate) fn block_def(blocks: &[&Block]) -> Option<&'static BlockDef> {
    let (first, rest) = blocks.split_first()?;
    let mut def = schema::top_block(&first.name.name)?;
    for b in rest {
        def = schema::child_block(def, &b.name.name)?;
    }
    Some(def)
}

/// The span of a number without its unit.
pub(crate) fn number_span(atom: &Atom) -> Span {
    match &atom.kind {
        AtomKind::Number { raw, .. } => Span::new(
            atom.span.start,
            (atom.span.start + raw.len()).min(atom.span.end),
        ),
        _ => atom.span,
    }
}

/// The 1-based inclusive box `(lo, hi)` of patch selectors, clamped to the grid.
pub(crate) fn patch_box(
    args: &[Atom],
    n: (usize, usize, usize),
) -> ((usize, usize, usize), (usize, usize, usize)) {
    let mut r = [(1usize, n.0.max(1)), (1, n.1.max(1)), (1, n.2.max(1))];
    for a in args {
        let AtomKind::Selector { key, value } = &a.kind else {
            continue;
        };
        let axis = match key.name.as_str() {
            "i" => 0,
            "j" => 1,
            "k" => 2,
            _ => continue,
        };
        let max = r[axis].1 as i64;
        let (lo, hi) = match &value.kind {
            AtomKind::Range { start, end } => (*start, *end),
            AtomKind::Number { value, .. } if value.fract() == 0.0 => {
                (*value as i64, *value as i64)
            }
            _ => continue,
        };
        let lo = lo.clamp(1, max);
        let hi = hi.clamp(lo, max);
        r[axis] = (lo as usize, hi as usize);
    }
    ((r[0].0, r[1].0, r[2].0), (r[0].1, r[1].1, r[2].1))
}
