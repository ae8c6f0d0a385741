//! Completion on possibly incomplete text: the block structure comes from
//! the syntax tree (which recovers from errors), the statement being typed
//! from a scan of the current line up to the cursor, since the tree of
//! half-typed text (`kx = 150 `) does not say what comes next.

use crate::hover::{key_dim, value_words};
use crate::locate::{block_def, enclosing_blocks, locate, Node};
use crate::{CompletionItem, CompletionKind, Snapshot};
use rill_model::schema::{self, BlockDef, KeyDef, LabelRule, ValueKind};
use rill_syntax::{AtomKind, Block, Item, Span};
use rill_units::Dim;

pub(crate) fn completion(
    snap: &Snapshot,
    offset: usize,
    files: Option<&dyn rill_model::Source>,
) -> Vec<CompletionItem> {
    let off = snap.clamp(offset);
    let text = snap.text();
    let line_start = text[..off].rfind(['\n', '\r']).map_or(0, |p| p + 1);
    let line_end = text[off..]
        .find(['\n', '\r'])
        .map_or(text.len(), |p| off + p);
    let line = &text[line_start..off];
    // Scan the line for strings, comments and statement separators.
    let mut in_str = false;
    let mut escaped = false;
    let mut str_start = 0;
    let mut seg_start = 0;
    for (i, c) in line.char_indices() {
        if in_str {
            if escaped {
                escaped = false;
            } else if c == '\\' {
                escaped = true;
            } else if c == '"' {
                in_str = false;
            }
            continue;
        }
        match c {
            '"' => {
                in_str = true;
                str_start = i;
            }
            '#' => return Vec::new(),
            ';' | '{' | '}' => seg_start = i + 1,
            _ => {}
        }
    }
    let tree = snap.tree();
    let blocks = enclosing_blocks(&tree.items, off);
    let seg = &line[seg_start..];
    let t = seg.trim_start();
    let t_off = line_start + seg_start + (seg.len() - t.len());
    let innermost = blocks.last().map(|b| b.name.name.as_str());

    if in_str {
        // `well "LE|` in an event: well names.
        let before_quote = line[seg_start..str_start].trim();
        // The string's content, from after the quote to the closing quote.
        let content_start = line_start + str_start + 1;
        let end = text[off..line_end].find('"').map_or(off, |p| off + p);
        if before_quote == "well" && innermost == Some("at") {
            return well_names(snap)
                .into_iter()
                .map(|name| well_item(&name, escape_str(&name), Span::new(content_start, end)))
                .collect();
        }
        // `relperm = "sa|` in the rock or a patch: the relperm labels.
        let key_before = before_quote.strip_suffix('=').map(str::trim_end);
        if key_before == Some("relperm") && matches!(innermost, Some("rock" | "patch")) {
            return relperm_label_items(snap, Span::new(content_start, end));
        }
        // `include "more/|` and `kx = file "arrays/|`: names in that folder.
        let is_include = before_quote == "include";
        // `kx = file "`, also written `kx=file "`.
        let is_array = before_quote.strip_suffix("file").is_some_and(|key| {
            key.ends_with(|c: char| c == '=' || c.is_whitespace()) && key.trim_end().ends_with('=')
        });
        if let (true, Some(files)) = (is_include || is_array, files) {
            return path_items(snap, files, Span::new(content_start, off), end, is_include);
        }
        return Vec::new();
    }

    let word_after = text[off..line_end]
        .bytes()
        .take_while(|b| b.is_ascii_alphanumeric() || *b == b'_')
        .count();
    if t.bytes().all(|b| b.is_ascii_alphanumeric() || b == b'_')
        && !t.starts_with(|c: char| c.is_ascii_digit())
    {
        let replace = Span::new(t_off, off + word_after);
        return statement_start(snap, &blocks, replace);
    }
    if innermost == Some("at") {
        if let Some(rest) = t.strip_prefix("well") {
            if rest.trim().is_empty() && rest.starts_with([' ', '\t']) {
                return well_names(snap)
                    .into_iter()
                    .map(|name| {
                        well_item(
                            &name,
                            format!("\"{}\"", escape_str(&name)),
                            Span::new(off, off),
                        )
                    })
                    .collect();
            }
        }
    }
    // `patch i = 2..3 |`: the selectors not yet given.
    if innermost == Some("rock") {
        if let Some(rest) = t.strip_prefix("patch") {
            if rest.starts_with([' ', '\t']) {
                return patch_selectors(rest, off);
            }
        }
    }

    // `key = value...`: the key from the line, or from the tree when the
    // cursor is on a continuation line of a list.
    let (key, rest, rest_off) = match t.find('=') {
        Some(eq) => (t[..eq].trim(), &t[eq + 1..], t_off + eq + 1),
        None => {
            let hit = locate(&tree.items, off.saturating_sub(1));
            match hit.node {
                Node::Value(s, _) if s.eq.end <= off => {
                    (s.key.name.as_str(), &text[s.eq.end..off], s.eq.end)
                }
                _ => return Vec::new(),
            }
        }
    };
    if !key.bytes().all(|b| b.is_ascii_alphanumeric() || b == b'_') {
        return Vec::new();
    }
    let Some(def) = block_def(&blocks) else {
        return Vec::new();
    };
    let Some(kd) = def.key(key) else {
        return Vec::new();
    };
    value_completion(snap, &blocks, def, kd, rest, rest_off, off)
}

fn escape_str(s: &str) -> String {
    s.replace('\\', "\\\\").replace('"', "\\\"")
}

/// Entries of the folder typed so far in `typed` (a path relative to the
/// deck): decks for an include, other files for an array, and folders.
/// Each item replaces the last path segment up to `end`.
fn path_items(
    snap: &Snapshot,
    files: &dyn rill_model::Source,
    typed: Span,
    end: usize,
    decks: bool,
) -> Vec<CompletionItem> {
    let written = &snap.text()[typed.start..typed.end];
    if written.contains('\\') {
        return Vec::new(); // escapes: not a plain path
    }
    let cut = written.rfind('/').map_or(0, |p| p + 1);
    let (folder, prefix) = written.split_at(cut);
    let dir =
        rill_model::source::resolve(snap.path(), if folder.is_empty() { "." } else { folder });
    let replace = Span::new(typed.start + cut, end.max(typed.end));
    let mut items: Vec<CompletionItem> = files
        .list(&dir)
        .into_iter()
        .filter(|(name, is_dir)| {
            name.starts_with(prefix)
                && !name.contains(['"', '\\'])
                && (*is_dir || name.ends_with(".rill") == decks)
        })
        .map(|(name, is_dir)| {
            let label = if is_dir { format!("{name}/") } else { name };
            CompletionItem {
                kind: if is_dir {
                    CompletionKind::Folder
                } else {
                    CompletionKind::File
                },
                detail: Some(
                    if is_dir {
                        "folder"
                    } else if decks {
                        "deck"
                    } else {
                        "array file"
                    }
                    .into(),
                ),
                documentation: None,
                insert_text: label.clone(),
                snippet: false,
                replace,
                // Folders after files, each by name.
                sort_text: format!("{}{label}", u8::from(is_dir)),
                label,
            }
        })
        .collect();
    items.sort_by(|a, b| a.sort_text.cmp(&b.sort_text));
    items
}

fn well_item(name: &str, insert: String, replace: Span) -> CompletionItem {
    CompletionItem {
        label: name.to_string(),
        kind: CompletionKind::Well,
        detail: Some("well".into()),
        documentation: None,
        insert_text: insert,
        snippet: false,
        replace,
        sort_text: name.to_string(),
    }
}

/// Labels of the top-level `well` blocks of every deck of the analysis.
pub(crate) fn well_names(snap: &Snapshot) -> Vec<String> {
    let mut out = Vec::new();
    for f in &snap.analysis().files {
        let Some(tree) = &f.tree else { continue };
        for item in &tree.items {
            if let Item::Block(b) = item {
                if b.name.name == "well" {
                    if let Some(AtomKind::Str { value, .. }) = b.args.first().map(|a| &a.kind) {
                        if !out.contains(value) {
                            out.push(value.clone());
                        }
                    }
                }
            }
        }
    }
    out
}

/// Block names and keys where a statement starts.
fn statement_start(snap: &Snapshot, blocks: &[&Block], replace: Span) -> Vec<CompletionItem> {
    let mut out = Vec::new();
    let Some(inner) = blocks.last() else {
        let present: Vec<&str> = snap
            .tree()
            .items
            .iter()
            .filter_map(|i| match i {
                Item::Block(b)
                    if b.name.span.end < replace.start || b.name.span.start > replace.end =>
                {
                    Some(b.name.name.as_str())
                }
                _ => None,
            })
            .collect();
        for (n, def) in schema::TOP_LEVEL.iter().enumerate() {
            if !def.repeatable && present.contains(&def.name) {
                continue;
            }
            out.push(CompletionItem {
                label: def.name.to_string(),
                kind: CompletionKind::Block,
                detail: Some("block".into()),
                documentation: Some(def.doc.to_string()),
                insert_text: block_snippet(def),
                snippet: true,
                replace,
                sort_text: format!("{n:02}"),
            });
        }
        out.push(CompletionItem {
            label: "include".into(),
            kind: CompletionKind::Keyword,
            detail: Some("directive".into()),
            documentation: Some("Reads the blocks of another deck, relative to this file.".into()),
            insert_text: "include \"${1:more-wells.rill}\"$0".into(),
            snippet: true,
            replace,
            sort_text: "99".into(),
        });
        return out;
    };
    let Some(def) = block_def(blocks) else {
        return out;
    };
    let present: Vec<&str> = inner
        .items
        .iter()
        .filter_map(|i| match i {
            Item::Statement(s)
                if !(s.key.span.start <= replace.end && replace.start <= s.key.span.end) =>
            {
                Some(s.key.name.as_str())
            }
            _ => None,
        })
        .collect();
    for (n, k) in def.keys.iter().enumerate() {
        if present.contains(&k.name) {
            continue;
        }
        out.push(CompletionItem {
            label: k.name.to_string(),
            kind: CompletionKind::Key,
            detail: Some(format!(
                "{}{}",
                if k.required { "required: " } else { "" },
                value_words(k.kind)
            )),
            documentation: Some(k.doc.to_string()),
            insert_text: format!("{} = ", k.name),
            snippet: false,
            replace,
            sort_text: format!("{}{n:02}", if k.required { 0 } else { 1 }),
        });
    }
    for (n, child) in def.children.iter().enumerate() {
        let Some(cdef) = schema::child_block(def, child) else {
            continue;
        };
        let insert = match *child {
            "patch" => "patch i = ${1:1..2} {\n  ${2:kz} = $0\n}".to_string(),
            "at" => "at ${1:180 day} {\n  $0\n}".to_string(),
            "well" => "well \"$1\" { control = ${2:bhp 1500 psi} }$0".to_string(),
            other => format!("{other} {{\n  $0\n}}"),
        };
        out.push(CompletionItem {
            label: child.to_string(),
            kind: CompletionKind::Block,
            detail: Some("block".into()),
            documentation: Some(cdef.doc.to_string()),
            insert_text: insert,
            snippet: true,
            replace,
            sort_text: format!("2{n:02}"),
        });
    }
    out
}

/// A skeleton of a block with its required keys as placeholders.
fn block_snippet(def: &BlockDef) -> String {
    let mut s = def.name.to_string();
    let mut n = 1;
    if def.label == LabelRule::Required || def.name == "case" {
        s.push_str(&format!(" \"${{{n}:name}}\""));
        n += 1;
    }
    s.push_str(" {\n");
    let mut any = false;
    for k in def.keys.iter().filter(|k| k.required || def.name == "case") {
        s.push_str(&format!(
            "  {} = ${{{n}:{}}}\n",
            k.name,
            example(k).replace('}', "\\}")
        ));
        n += 1;
        any = true;
    }
    if def.name == "well" {
        s.push_str(&format!("  location = ${{{n}:(1, 1)}}\n"));
    }
    if !any {
        s.push_str("  $0\n");
        s.push('}');
    } else {
        s.push_str("}$0");
    }
    s
}

fn example(k: &KeyDef) -> String {
    match k.kind {
        ValueKind::Text => "\"title\"".into(),
        ValueKind::Size => "10 x 10 x 1".into(),
        ValueKind::Spacing(_) => "100 ft".into(),
        ValueKind::Top => "5000 ft".into(),
        ValueKind::PressureAtDepth => "3000 psi at 5000 ft".into(),
        ValueKind::Choice(c) => c.first().copied().unwrap_or("").into(),
        ValueKind::Column => "(1, 1)".into(),
        ValueKind::LayerRange => "1..1".into(),
        ValueKind::Cells => "[(1, 1, 1)]".into(),
        ValueKind::Control => "rate 500 stb/day".into(),
        ValueKind::Times => "[1 2 6 12] hr".into(),
        ValueKind::TableColumn(d) if d == Dim::PRESSURE => "[6 2 0] psi".into(),
        ValueKind::TableColumn(_) => "[0.2 0.5 0.8]".into(),
        ValueKind::RelpermName => "\"rock\"".into(),
        ValueKind::Number => "0".into(),
        ValueKind::Quantity(d) | ValueKind::Property(d) => match d {
            Dim::NONE => "0.2".into(),
            Dim::PERMEABILITY => "100 md".into(),
            Dim::VISCOSITY => "1 cP".into(),
            Dim::FVF => "1.0 rb/stb".into(),
            Dim::DENSITY => "62.4 lb/ft^3".into(),
            Dim::LENGTH => "0.3 ft".into(),
            Dim::TIME => "365 day".into(),
            Dim::PRESSURE => "3000 psi".into(),
            Dim::COMPRESSIBILITY => "4e-6 1/psi".into(),
            other => match rill_units::accepted_units(other).first() {
                Some(u) => format!("1 {u}"),
                None => "0".into(),
            },
        },
    }
}

fn looks_like_number(tok: &str) -> bool {
    let tok = tok.trim_start_matches('[').trim_start_matches('(');
    !tok.is_empty() && tok.parse::<f64>().is_ok() && !tok.starts_with(['+', 'i', 'I', 'n', 'N'])
}

/// Bytes of a value scanned back from the cursor.
const MAX_SCAN: usize = 4096;

/// After `key =`: enum values, value forms, units after a number, `at`.
fn value_completion(
    snap: &Snapshot,
    blocks: &[&Block],
    def: &BlockDef,
    kd: &KeyDef,
    rest: &str,
    rest_off: usize,
    off: usize,
) -> Vec<CompletionItem> {
    // Deep inside a long list only the last few tokens matter; the value's
    // first token (`rate`, `bhp`, a form) is then far away and irrelevant.
    let (rest, rest_off) = if rest.len() > MAX_SCAN {
        let mut cut = rest.len() - MAX_SCAN;
        while !rest.is_char_boundary(cut) {
            cut += 1;
        }
        (&rest[cut..], rest_off + cut)
    } else {
        (rest, rest_off)
    };
    let is_unit_char = |c: char| {
        c.is_ascii_alphanumeric()
            || matches!(c, '_' | '/' | '*' | '^' | '(' | ')' | '%' | '-' | '.')
    };
    let word_len = rest
        .chars()
        .rev()
        .take_while(|c| is_unit_char(*c))
        .map(char::len_utf8)
        .sum::<usize>();
    let word = &rest[rest.len() - word_len..];
    let before = rest[..rest.len() - word_len].trim_end();
    let replace = Span::new(rest_off + rest.len() - word_len, off);
    let tokens: Vec<&str> = before.split_whitespace().collect();
    let is_ident_prefix = word.bytes().all(|b| b.is_ascii_alphanumeric() || b == b'_')
        && !word.starts_with(|c: char| c.is_ascii_digit());
    if tokens.is_empty() {
        if !is_ident_prefix {
            return Vec::new();
        }
        return first_word_items(snap, blocks, def, kd, replace);
    }
    let prev = tokens.last().copied().unwrap_or("");
    let first = tokens.first().copied().unwrap_or("");
    let has_at = tokens.contains(&"at");
    let after_value = looks_like_number(prev)
        || prev.ends_with(']')
        || (prev.starts_with('"') && prev.ends_with('"') && prev.len() > 1);
    let unit_word = word.is_empty()
        || word.starts_with(|c: char| c.is_ascii_alphabetic() || c == '%' || c == '(')
        || word.starts_with("1/");
    if after_value && unit_word {
        return unit_items(kd, &tokens, first, has_at, replace);
    }
    if !is_ident_prefix {
        return Vec::new();
    }
    // `3200 psi |` -> `at`.
    if kd.kind == ValueKind::PressureAtDepth
        && !has_at
        && tokens.len() >= 2
        && looks_like_number(tokens[tokens.len() - 2])
    {
        return vec![item(
            "at",
            CompletionKind::Keyword,
            Some("datum depth".into()),
            "The depth at which the pressure holds.",
            replace,
            0,
        )];
    }
    if matches!(prev, "*" | "/" | "+" | "-") && matches!(kd.kind, ValueKind::Property(_)) {
        return references(kd, replace);
    }
    Vec::new()
}

/// The value's first word: the key's choices or control modes, its value
/// forms (`layers`, `cells`, `file`, `columns`) and, for rock properties,
/// the other properties to compute from.
fn first_word_items(
    snap: &Snapshot,
    blocks: &[&Block],
    def: &BlockDef,
    kd: &KeyDef,
    replace: Span,
) -> Vec<CompletionItem> {
    let mut out = Vec::new();
    let names: &[&str] = match kd.kind {
        ValueKind::Choice(names) => names,
        ValueKind::Control => control_words(snap, blocks),
        ValueKind::RelpermName => {
            return relperm_names(snap)
                .into_iter()
                .enumerate()
                .map(|(n, name)| {
                    let mut it = item(
                        &format!("\"{name}\""),
                        CompletionKind::Reference,
                        Some("relperm block".into()),
                        kd.doc,
                        replace,
                        n,
                    );
                    it.insert_text = format!("\"{}\"", escape_str(&name));
                    it
                })
                .collect();
        }
        _ => &[],
    };
    for (n, name) in names.iter().enumerate() {
        out.push(item(
            name,
            CompletionKind::EnumValue,
            Some(value_words(kd.kind)),
            kd.doc,
            replace,
            n,
        ));
    }
    let forms: &[(&str, &str)] = match kd.kind {
        ValueKind::Property(_) => &[
            ("layers", "layers [${1}]"),
            ("cells", "cells [${1}]"),
            ("file", "file \"${1}\""),
        ],
        ValueKind::Spacing(schema::Axis::Z) => {
            &[("cells", "cells [${1}]"), ("file", "file \"${1}\"")]
        }
        ValueKind::Top => &[("columns", "columns [${1}]"), ("file", "file \"${1}\"")],
        ValueKind::PressureAtDepth => &[
            ("layers", "layers [${1}]"),
            ("cells", "cells [${1}]"),
            ("file", "file \"${1}\""),
        ],
        _ => &[],
    };
    for (n, (label, snippet)) in forms.iter().enumerate() {
        let mut it = item(
            label,
            CompletionKind::Keyword,
            Some("value form".into()),
            "",
            replace,
            10 + n,
        );
        it.insert_text = snippet.to_string();
        it.snippet = true;
        it.documentation = None;
        out.push(it);
    }
    if matches!(kd.kind, ValueKind::Property(_)) && (def.name == "rock" || def.name == "patch") {
        out.extend(references(kd, replace));
    }
    out
}

/// The labels of the `relperm` blocks, to replace the string content at `replace`.
fn relperm_label_items(snap: &Snapshot, replace: Span) -> Vec<CompletionItem> {
    relperm_names(snap)
        .into_iter()
        .enumerate()
        .map(|(n, name)| CompletionItem {
            label: name.clone(),
            kind: CompletionKind::Reference,
            detail: Some("relperm block".into()),
            documentation: None,
            insert_text: escape_str(&name),
            snippet: false,
            replace,
            sort_text: format!("{n:02}"),
        })
        .collect()
}

/// Whether the deck (with its includes) is an oil-water deck: it has an
/// `oil` or a `water` block.
pub(crate) fn is_oil_water(snap: &Snapshot) -> bool {
    snap.analysis()
        .files
        .iter()
        .filter_map(|f| f.tree.as_ref())
        .any(|tree| {
            tree.items.iter().any(
                |i| matches!(i, Item::Block(b) if b.name.name == "oil" || b.name.name == "water"),
            )
        })
}

/// The labels of the deck's `relperm` blocks, in deck order.
pub(crate) fn relperm_names(snap: &Snapshot) -> Vec<String> {
    let mut out = Vec::new();
    for f in &snap.analysis().files {
        let Some(tree) = &f.tree else { continue };
        for item in &tree.items {
            let Item::Block(b) = item else { continue };
            if b.name.name != "relperm" {
                continue;
            }
            if let Some(AtomKind::Str { value, .. }) = b.args.first().map(|a| &a.kind) {
                if !out.contains(value) {
                    out.push(value.clone());
                }
            }
        }
    }
    out
}

/// The `role` of the well whose block (or event change) encloses the
/// cursor: from the block itself, or from the well block of that name.
fn enclosing_role(snap: &Snapshot, blocks: &[&Block]) -> Option<String> {
    let well = blocks.iter().rev().find(|b| b.name.name == "well")?;
    let role_of = |b: &Block| {
        let s = rill_model::lower::find(b, "role")?;
        match s.value.atoms.first().map(|a| &a.kind) {
            Some(AtomKind::Ident(r)) => Some(r.clone()),
            _ => None,
        }
    };
    if let Some(r) = role_of(well) {
        return Some(r);
    }
    let AtomKind::Str { value: name, .. } = &well.args.first()?.kind else {
        return None;
    };
    snap.analysis()
        .files
        .iter()
        .filter_map(|f| f.tree.as_ref())
        .flat_map(|t| t.items.iter())
        .find_map(|i| match i {
            Item::Block(b)
                if b.name.name == "well"
                    && rill_model::lower::label_of(b).as_ref() == Some(name) =>
            {
                role_of(b)
            }
            _ => None,
        })
}

/// The control words that fit the deck and the well's role: `rate` in a
/// single-phase deck, the phase rates of the role in an oil-water deck.
fn control_words(snap: &Snapshot, blocks: &[&Block]) -> &'static [&'static str] {
    if !is_oil_water(snap) {
        return schema::SINGLE_PHASE_CONTROLS;
    }
    match enclosing_role(snap, blocks).as_deref() {
        Some("producer") => schema::OIL_WATER_PRODUCER_CONTROLS,
        Some("injector") => schema::OIL_WATER_INJECTOR_CONTROLS,
        _ => &["oil_rate", "liquid_rate", "water_rate", "bhp", "shut"],
    }
}

/// Units after a number: those of the key's dimension (of the control's
/// mode, or a length after `at`), none inside arithmetic.
fn unit_items(
    kd: &KeyDef,
    tokens: &[&str],
    first: &str,
    has_at: bool,
    replace: Span,
) -> Vec<CompletionItem> {
    let mut out = Vec::new();
    let dim = match kd.kind {
        ValueKind::Control => match first {
            "rate" | "oil_rate" | "liquid_rate" | "water_rate" => Some(Dim::SURFACE_RATE),
            "bhp" => Some(Dim::PRESSURE),
            _ => None,
        },
        ValueKind::PressureAtDepth if has_at => Some(Dim::LENGTH),
        other => key_dim(other),
    };
    // Inside arithmetic (`0.1 * kx`) a bare factor needs no unit.
    let arithmetic = tokens.iter().any(|t| matches!(*t, "*" | "/" | "+" | "-"));
    if let (Some(dim), false) = (dim, arithmetic) {
        for (n, u) in rill_units::accepted_units(dim)
            .into_iter()
            .filter(|u| u != "1")
            .enumerate()
        {
            let detail = rill_units::lookup(&u)
                .map(|d| d.description.to_string())
                .or_else(|| Some(dim.describe().to_string()));
            out.push(CompletionItem {
                label: u.clone(),
                kind: CompletionKind::Unit,
                detail,
                documentation: None,
                insert_text: u,
                snippet: false,
                replace,
                sort_text: format!("{n:02}"),
            });
        }
    }
    out
}

fn item(
    label: &str,
    kind: CompletionKind,
    detail: Option<String>,
    doc: &str,
    replace: Span,
    n: usize,
) -> CompletionItem {
    CompletionItem {
        label: label.to_string(),
        kind,
        detail,
        documentation: (!doc.is_empty()).then(|| doc.to_string()),
        insert_text: label.to_string(),
        snippet: false,
        replace,
        sort_text: format!("{n:02}"),
    }
}

/// Other rock properties, for arithmetic (`kz = 0.1 * kx`).
fn references(kd: &KeyDef, replace: Span) -> Vec<CompletionItem> {
    schema::ROCK_KEYS
        .iter()
        .filter(|k| k.name != kd.name && matches!(k.kind, ValueKind::Property(_)))
        .enumerate()
        .map(|(n, k)| {
            item(
                k.name,
                CompletionKind::Reference,
                Some("property of this block".into()),
                k.doc,
                replace,
                20 + n,
            )
        })
        .collect()
}

/// Selector keys after `patch` (`i`, `j`, `k`), where a new selector may start.
fn patch_selectors(rest: &str, off: usize) -> Vec<CompletionItem> {
    let word = rest
        .bytes()
        .rev()
        .take_while(|b| b.is_ascii_alphabetic())
        .count();
    let before = rest[..rest.len() - word].trim_end();
    // Right after `=` a value is expected, not a key.
    if before.ends_with('=') || (word > 0 && !rest[..rest.len() - word].ends_with([' ', '\t'])) {
        return Vec::new();
    }
    let given: Vec<&str> = before
        .split(|c: char| c.is_whitespace() || c == '=')
        .filter(|w| matches!(*w, "i" | "j" | "k"))
        .collect();
    let replace = Span::new(off - word, off);
    [
        ("i", "columns along x"),
        ("j", "rows along y"),
        ("k", "layers, 1 at the top"),
    ]
    .iter()
    .enumerate()
    .filter(|(_, (name, _))| !given.contains(name))
    .map(|(n, (name, what))| CompletionItem {
        label: name.to_string(),
        kind: CompletionKind::Key,
        detail: Some(format!("patch selector: {what}")),
        documentation: Some(
            "An index or an inclusive range, e.g. `2..5`; an omitted axis means all.".into(),
        ),
        insert_text: format!("{name} = "),
        snippet: false,
        replace,
        sort_text: format!("{n:02}"),
    })
    .collect()
}
