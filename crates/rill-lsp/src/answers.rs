//! `rill-ide` answers (byte spans) to protocol types (ranges in the
//! negotiated encoding). Pure mapping: no analysis here.

use crate::position::{self, Encoding};
use rill_ide as ide;
use ropey::Rope;
use std::collections::HashMap;
use tower_lsp::lsp_types::{self as lsp, SemanticTokenType, Url};

pub fn range(rope: &Rope, span: ide::Span, enc: Encoding) -> lsp::Range {
    position::range(rope, span.start, span.end, enc)
}

pub fn span(rope: &Rope, range: lsp::Range, enc: Encoding) -> ide::Span {
    let (a, b) = position::span(rope, range, enc);
    ide::Span::new(a, b)
}

pub fn hover(rope: &Rope, h: ide::Hover, enc: Encoding) -> lsp::Hover {
    lsp::Hover {
        contents: lsp::HoverContents::Markup(lsp::MarkupContent {
            kind: lsp::MarkupKind::Markdown,
            value: h.markdown,
        }),
        range: Some(range(rope, h.range, enc)),
    }
}

fn completion_kind(k: ide::CompletionKind) -> lsp::CompletionItemKind {
    use ide::CompletionKind as K;
    match k {
        K::Block => lsp::CompletionItemKind::MODULE,
        K::Key => lsp::CompletionItemKind::PROPERTY,
        K::Unit => lsp::CompletionItemKind::UNIT,
        K::EnumValue => lsp::CompletionItemKind::ENUM_MEMBER,
        K::Well => lsp::CompletionItemKind::VARIABLE,
        K::Keyword => lsp::CompletionItemKind::KEYWORD,
        K::Reference => lsp::CompletionItemKind::REFERENCE,
        K::File => lsp::CompletionItemKind::FILE,
        K::Folder => lsp::CompletionItemKind::FOLDER,
    }
}

/// `${1:text}` becomes `text`, `$0` and `$1` vanish: for clients without snippets.
pub fn strip_snippet(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' => {
                if let Some(n) = chars.next() {
                    out.push(n);
                }
            }
            '$' => match chars.peek() {
                Some('{') => {
                    chars.next();
                    while chars.peek().is_some_and(|c| c.is_ascii_digit()) {
                        chars.next();
                    }
                    if chars.peek() == Some(&':') {
                        chars.next();
                    }
                    let mut depth = 1;
                    for c in chars.by_ref() {
                        match c {
                            '{' => depth += 1,
                            '}' => {
                                depth -= 1;
                                if depth == 0 {
                                    break;
                                }
                            }
                            _ => {}
                        }
                        if depth > 0 {
                            out.push(c);
                        }
                    }
                }
                Some(d) if d.is_ascii_digit() => {
                    while chars.peek().is_some_and(|c| c.is_ascii_digit()) {
                        chars.next();
                    }
                }
                _ => out.push('$'),
            },
            _ => out.push(c),
        }
    }
    out
}

pub fn completion(
    rope: &Rope,
    item: ide::CompletionItem,
    enc: Encoding,
    snippets: bool,
) -> lsp::CompletionItem {
    let (new_text, format) = if item.snippet && snippets {
        (item.insert_text, lsp::InsertTextFormat::SNIPPET)
    } else if item.snippet {
        (
            strip_snippet(&item.insert_text),
            lsp::InsertTextFormat::PLAIN_TEXT,
        )
    } else {
        (item.insert_text, lsp::InsertTextFormat::PLAIN_TEXT)
    };
    lsp::CompletionItem {
        label: item.label,
        kind: Some(completion_kind(item.kind)),
        detail: item.detail,
        documentation: item.documentation.map(|d| {
            lsp::Documentation::MarkupContent(lsp::MarkupContent {
                kind: lsp::MarkupKind::Markdown,
                value: d,
            })
        }),
        insert_text_format: Some(format),
        text_edit: Some(lsp::CompletionTextEdit::Edit(lsp::TextEdit {
            range: range(rope, item.replace, enc),
            new_text,
        })),
        ..Default::default()
    }
}

fn symbol_kind(k: ide::SymbolKind) -> lsp::SymbolKind {
    use ide::SymbolKind as K;
    match k {
        K::Case => lsp::SymbolKind::PACKAGE,
        K::Grid | K::Rock | K::Fluid | K::Oil | K::Water | K::Initial | K::Report => {
            lsp::SymbolKind::STRUCT
        }
        K::Relperm => lsp::SymbolKind::FUNCTION,
        K::Patch => lsp::SymbolKind::OBJECT,
        K::Well => lsp::SymbolKind::VARIABLE,
        K::Boundary | K::Fault | K::Aquifer => lsp::SymbolKind::INTERFACE,
        K::Timeline => lsp::SymbolKind::ARRAY,
        K::Event => lsp::SymbolKind::EVENT,
        K::WellChange => lsp::SymbolKind::PROPERTY,
        K::Include => lsp::SymbolKind::FILE,
        K::Unknown => lsp::SymbolKind::NULL,
    }
}

#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be given.
pub fn symbol(rope: &Rope, s: ide::Symbol, enc: Encoding) -> lsp::DocumentSymbol {
    let full = range(rope, s.range, enc);
    let mut selection = range(rope, s.selection, enc);
    // The protocol wants the selection inside the whole range.
    if selection.start < full.start || selection.end > full.end {
        selection = full;
    }
    lsp::DocumentSymbol {
        name: if s.name.is_empty() {
            "(unnamed)".into()
        } else {
            s.name
        },
        detail: s.detail,
        kind: symbol_kind(s.kind),
        tags: None,
        deprecated: None,
        range: full,
        selection_range: selection,
        children: (!s.children.is_empty()).then(|| {
            s.children
                .into_iter()
                .map(|c| symbol(rope, c, enc))
                .collect()
        }),
    }
}

/// Flat symbols for clients without hierarchical support.
pub fn flatten(
    uri: &Url,
    symbols: Vec<lsp::DocumentSymbol>,
    container: Option<String>,
    out: &mut Vec<lsp::SymbolInformation>,
) {
    for s in symbols {
        #[allow(deprecated)]
        out.push(lsp::SymbolInformation {
            name: s.name.clone(),
            kind: s.kind,
            tags: None,
            deprecated: None,
            location: lsp::Location {
                uri: uri.clone(),
                range: s.range,
            },
            container_name: container.clone(),
        });
        if let Some(children) = s.children {
            flatten(uri, children, Some(s.name), out);
        }
    }
}

/// The token kinds in legend order, with the standard token type each is
/// shown as (so that every colour theme has a colour for it).
pub const TOKEN_LEGEND: &[(ide::TokenKind, SemanticTokenType)] = &[
    (ide::TokenKind::Block, SemanticTokenType::NAMESPACE),
    (ide::TokenKind::Key, SemanticTokenType::PROPERTY),
    (ide::TokenKind::Unit, SemanticTokenType::TYPE),
    (ide::TokenKind::Number, SemanticTokenType::NUMBER),
    (ide::TokenKind::Name, SemanticTokenType::VARIABLE),
    (ide::TokenKind::String, SemanticTokenType::STRING),
    (ide::TokenKind::Comment, SemanticTokenType::COMMENT),
    (ide::TokenKind::EnumValue, SemanticTokenType::ENUM_MEMBER),
    (ide::TokenKind::Operator, SemanticTokenType::OPERATOR),
    (ide::TokenKind::Keyword, SemanticTokenType::KEYWORD),
];

fn token_index(k: ide::TokenKind) -> u32 {
    // An exhaustive match, so that a new kind in `rill-ide` fails to
    // compile here until it has a place in the legend.
    use ide::TokenKind as K;
    match k {
        K::Block => 0,
        K::Key => 1,
        K::Unit => 2,
        K::Number => 3,
        K::Name => 4,
        K::String => 5,
        K::Comment => 6,
        K::EnumValue => 7,
        K::Operator => 8,
        K::Keyword => 9,
    }
}

pub fn legend() -> lsp::SemanticTokensLegend {
    lsp::SemanticTokensLegend {
        token_types: TOKEN_LEGEND.iter().map(|(_, t)| t.clone()).collect(),
        token_modifiers: Vec::new(),
    }
}

/// Relative encoding of the protocol: tokens sorted, one line each
/// (a token over several lines is split at its line ends).
pub fn semantic_tokens(
    rope: &Rope,
    mut tokens: Vec<ide::SemanticToken>,
    enc: Encoding,
) -> Vec<lsp::SemanticToken> {
    tokens.sort_by_key(|t| (t.span.start, t.span.end));
    let mut out = Vec::with_capacity(tokens.len());
    let (mut prev_line, mut prev_start) = (0u32, 0u32);
    let mut last_end = 0usize;
    for t in tokens {
        let start = t.span.start.max(last_end);
        let end = t.span.end.min(rope.len_bytes());
        if start >= end {
            continue;
        }
        last_end = end;
        let a = position::position(rope, start, enc);
        let b = position::position(rope, end, enc);
        let mut pieces = Vec::new();
        if a.line == b.line {
            pieces.push((a.line, a.character, b.character - a.character));
        } else {
            for line in a.line..=b.line {
                let col0 = if line == a.line { a.character } else { 0 };
                let col1 = if line == b.line {
                    b.character
                } else {
                    position::position(
                        rope,
                        position::offset(rope, lsp::Position::new(line, u32::MAX), enc),
                        enc,
                    )
                    .character
                };
                if col1 > col0 {
                    pieces.push((line, col0, col1 - col0));
                }
            }
        }
        for (line, col, len) in pieces {
            let delta_line = line - prev_line;
            let delta_start = if delta_line == 0 {
                col - prev_start
            } else {
                col
            };
            out.push(lsp::SemanticToken {
                delta_line,
                delta_start,
                length: len,
                token_type: token_index(t.kind),
                token_modifiers_bitset: 0,
            });
            prev_line = line;
            prev_start = col;
        }
    }
    out
}

pub fn inlay_hint(rope: &Rope, h: ide::InlayHint, enc: Encoding) -> lsp::InlayHint {
    lsp::InlayHint {
        position: position::position(rope, h.offset, enc),
        label: lsp::InlayHintLabel::String(h.label),
        kind: None,
        text_edits: None,
        tooltip: None,
        padding_left: Some(true),
        padding_right: None,
        data: None,
    }
}

pub fn text_edits(rope: &Rope, edits: Vec<ide::TextEdit>, enc: Encoding) -> Vec<lsp::TextEdit> {
    edits
        .into_iter()
        .map(|e| lsp::TextEdit {
            range: range(rope, e.span, enc),
            new_text: e.new_text,
        })
        .collect()
}

pub fn code_action(
    uri: &Url,
    rope: &Rope,
    a: ide::CodeAction,
    diagnostic: Option<lsp::Diagnostic>,
    preferred: bool,
    enc: Encoding,
) -> lsp::CodeAction {
    let kind = match a.kind {
        ide::CodeActionKind::QuickFix => lsp::CodeActionKind::QUICKFIX,
        ide::CodeActionKind::Refactor => lsp::CodeActionKind::REFACTOR_REWRITE,
    };
    let mut changes = HashMap::new();
    changes.insert(uri.clone(), text_edits(rope, a.edits, enc));
    lsp::CodeAction {
        title: a.title,
        kind: Some(kind),
        diagnostics: diagnostic.map(|d| vec![d]),
        edit: Some(lsp::WorkspaceEdit {
            changes: Some(changes),
            ..Default::default()
        }),
        is_preferred: preferred.then_some(true),
        ..Default::default()
    }
}

pub fn folding_range(rope: &Rope, span: ide::Span, enc: Encoding) -> Option<lsp::FoldingRange> {
    let a = position::position(rope, span.start, enc);
    // A span that ends just after a line end folds up to the line before.
    let end = if span.end > span.start
        && matches!(
            rope.byte(span.end.min(rope.len_bytes()).saturating_sub(1)),
            b'\n' | b'\r'
        ) {
        span.end - 1
    } else {
        span.end
    };
    let b = position::position(rope, end, enc);
    (b.line > a.line).then_some(lsp::FoldingRange {
        start_line: a.line,
        start_character: None,
        end_line: b.line,
        end_character: None,
        kind: None,
        collapsed_text: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn snippets_stripped_for_plain_clients() {
        assert_eq!(
            strip_snippet("well \"${1:name}\" {\n  $0\n}"),
            "well \"name\" {\n  \n}"
        );
        assert_eq!(strip_snippet("a${2}b\\$c"), "ab$c");
    }

    #[test]
    fn tokens_are_relative_and_split_per_line() {
        let rope = Rope::from_str("grid {\n  dx = 50 ft # Ω\n}\n");
        let tok = |start, end, kind| ide::SemanticToken {
            span: ide::Span::new(start, end),
            kind,
        };
        let toks = vec![
            tok(9, 11, ide::TokenKind::Key),
            tok(0, 4, ide::TokenKind::Block),
            tok(17, 19, ide::TokenKind::Unit),
            tok(14, 16, ide::TokenKind::Number),
        ];
        let out = semantic_tokens(&rope, toks, Encoding::Utf16);
        let flat: Vec<_> = out
            .iter()
            .map(|t| (t.delta_line, t.delta_start, t.length, t.token_type))
            .collect();
        assert_eq!(
            flat,
            vec![(0, 0, 4, 0), (1, 2, 2, 1), (0, 5, 2, 3), (0, 3, 2, 2)]
        );
        // A token over a line end becomes two.
        let out = semantic_tokens(
            &rope,
            vec![tok(0, 11, ide::TokenKind::Comment)],
            Encoding::Utf16,
        );
        let flat: Vec<_> = out
            .iter()
            .map(|t| (t.delta_line, t.delta_start, t.length))
            .collect();
        assert_eq!(flat, vec![(0, 0, 6), (1, 0, 4)]);
    }

    #[test]
    fn folding_excludes_the_trailing_line_end() {
        let rope = Rope::from_str("grid {\n  dx = 1 ft\n}\nrock {}\n");
        let f = folding_range(&rope, ide::Span::new(0, 21), Encoding::Utf16).unwrap();
        assert_eq!((f.start_line, f.end_line), (0, 2));
        assert!(folding_range(&rope, ide::Span::new(21, 28), Encoding::Utf16).is_none());
    }
}
