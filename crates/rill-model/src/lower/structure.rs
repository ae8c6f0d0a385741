use super::*;
use crate::{Edit, Fix};

/// A top-level item: its file and its index among the file's items.
#[derive(Clone, Copy)]
pub(super) struct TopItem {
    pub file: usize,
    pub index: usize,
}

/// The parsed deck and includes (by file index) and their top-level items in
/// deck order, includes expanded where they stand.
pub(super) struct Loaded {
    pub trees: Vec<Arc<rill_syntax::SourceFile>>,
    pub order: Vec<TopItem>,
}

impl<'s> Lowerer<'s> {
    /// Parse the main deck and, depth first, every include, and report
    /// their syntax errors.
    pub(super) fn load(&mut self, main_path: PathBuf, main_text: &str) -> Loaded {
        let mut trees: Vec<Arc<rill_syntax::SourceFile>> = Vec::new();
        let main_tree = Arc::new(rill_syntax::parse(main_text));
        self.files.push(FileInfo {
            path: main_path.clone(),
            text: main_text.into(),
            tree: Some(main_tree.clone()),
        });
        trees.push(main_tree);
        let mut order: Vec<TopItem> = Vec::new();
        let mut stack = vec![main_path.clone()];
        self.expand(0, &mut trees, &mut stack, &mut order, 0);
        for (file, tree) in trees.iter().enumerate() {
            for e in &tree.errors {
                let code = match e.kind {
                    rill_syntax::SyntaxErrorKind::Unexpected => Code::SyntaxUnexpected,
                    rill_syntax::SyntaxErrorKind::Unclosed => Code::SyntaxUnclosed,
                };
                let msg = match e.kind {
                    rill_syntax::SyntaxErrorKind::Unexpected => {
                        format!("expected {}, found {}", e.expected, e.found)
                    }
                    rill_syntax::SyntaxErrorKind::Unclosed => {
                        format!("unclosed: expected {}, found {}", e.expected, e.found)
                    }
                };
                let mut d = Diagnostic::error(code, Location::new(file, e.span), msg);
                if let Some(fix) = &e.fix {
                    d = d.with_fix(Fix {
                        title: fix.title.clone(),
                        edits: vec![Edit {
                            location: Location::new(file, fix.span),
                            replacement: fix.replacement.clone(),
                        }],
                    });
                }
                self.diags.push(d);
            }
        }
        Loaded { trees, order }
    }

    /// Sort the top-level blocks by kind; report duplicates of blocks that
    /// may be given once, unknown blocks, and statements outside any block.
    pub(super) fn sort_blocks<'t>(
        &mut self,
        loaded: &'t Loaded,
    ) -> HashMap<&'static str, Vec<Found<'t>>> {
        let trees = &loaded.trees;
        let mut blocks: HashMap<&'static str, Vec<Found>> = HashMap::new();
        for &TopItem { file, index } in &loaded.order {
            let item = &trees[file].items[index];
            match item {
                Item::Block(b) => match schema::top_block(&b.name.name) {
                    Some(def) => {
                        if let Some(prev) = blocks.get(def.name).and_then(|v| v.first()) {
                            if !def.repeatable {
                                let d = Diagnostic::error(
                                    Code::DeckDuplicateKey,
                                    Location::new(file, b.name.span),
                                    format!(
                                        "the block `{}` is given twice; write one `{}` block",
                                        def.name, def.name
                                    ),
                                )
                                .with_label(
                                    Location::new(prev.file, prev.block.name.span),
                                    "first given here",
                                );
                                self.diags.push(d);
                                continue;
                            }
                        }
                        blocks
                            .entry(def.name)
                            .or_default()
                            .push(Found { file, block: b });
                    }
                    None => {
                        let names = schema::TOP_LEVEL.iter().map(|d| d.name).chain(["include"]);
                        let mut d = Diagnostic::error(
                            Code::DeckUnknownBlock,
                            Location::new(file, b.name.span),
                            format!("unknown block `{}`", b.name.name),
                        );
                        if let Some(near) = schema::nearest(&b.name.name, names) {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, b.name.span),
                                near,
                            );
                        }
                        let all: Vec<&str> = schema::TOP_LEVEL.iter().map(|d| d.name).collect();
                        self.diags
                            .push(d.with_note(format!("blocks: {}", all.join(", "))));
                    }
                },
                Item::Statement(s) => {
                    let mut d = Diagnostic::error(
                        Code::DeckUnknownKey,
                        Location::new(file, s.key.span),
                        format!("`{} = ...` stands outside any block", s.key.name),
                    );
                    if let Some(owner) = schema::TOP_LEVEL
                        .iter()
                        .find(|b| b.key(&s.key.name).is_some())
                    {
                        d = d.with_note(format!(
                            "`{}` belongs in the `{}` block",
                            s.key.name, owner.name
                        ));
                    }
                    self.diags.push(d);
                }
                Item::Directive(dir) => {
                    if dir.name.name != "include" {
                        let mut d = Diagnostic::error(
                            Code::DeckUnknownBlock,
                            Location::new(file, dir.name.span),
                            format!("unknown block or directive `{}`", dir.name.name),
                        );
                        let names = schema::TOP_LEVEL.iter().map(|d| d.name).chain(["include"]);
                        if let Some(near) = schema::nearest(&dir.name.name, names) {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, dir.name.span),
                                near,
                            );
                        }
                        self.diags.push(d);
                    }
                }
            }
        }
        blocks
    }

    /// Parse and queue the includes of `file`, depth first, keeping deck order.
    pub(super) fn expand(
        &mut self,
        file: usize,
        trees: &mut Vec<Arc<rill_syntax::SourceFile>>,
        stack: &mut Vec<PathBuf>,
        order: &mut Vec<TopItem>,
        depth: usize,
    ) {
        let tree = trees[file].clone();
        for (idx, item) in tree.items.iter().enumerate() {
            order.push(TopItem { file, index: idx });
            let Item::Directive(dir) = item else { continue };
            if dir.name.name != "include" {
                continue;
            }
            let loc = Location::new(file, dir.span);
            let name = match dir.args.as_slice() {
                [Atom {
                    kind: AtomKind::Str { value, unit: None },
                    ..
                }] => value.clone(),
                _ => {
                    self.diags.push(Diagnostic::error(
                        Code::DeckInclude,
                        loc,
                        "`include` takes one file name in quotes: include \"more-wells.rill\"",
                    ));
                    continue;
                }
            };
            let path = self.source.resolve(&self.files[file].path, &name);
            if stack.contains(&path) {
                self.diags.push(Diagnostic::error(
                    Code::DeckInclude,
                    loc,
                    format!(
                        "\"{name}\" includes itself through a cycle ({})",
                        path.display()
                    ),
                ));
                continue;
            }
            if depth + 1 > MAX_INCLUDE_DEPTH {
                self.diags.push(Diagnostic::error(
                    Code::DeckInclude,
                    loc,
                    format!("includes nest deeper than {MAX_INCLUDE_DEPTH} files"),
                ));
                continue;
            }
            if self.files.iter().any(|f| f.path == path) {
                self.diags.push(Diagnostic::warning(
                    Code::DeckInclude,
                    loc,
                    format!("\"{name}\" is already included; it is read once"),
                ));
                continue;
            }
            let bytes = match self.source.read(&path) {
                Ok(b) => b,
                Err(e) => {
                    self.diags.push(Diagnostic::error(
                        Code::DeckInclude,
                        loc,
                        format!("cannot include \"{name}\" ({}): {e}", path.display()),
                    ));
                    continue;
                }
            };
            if bytes.len() as u64 > MAX_INCLUDE_LEN {
                self.diags.push(Diagnostic::error(
                    Code::DeckInclude,
                    loc,
                    format!(
                        "cannot include \"{name}\" ({}): expected a deck under {}, found a {} \
                         file ({} bytes); put bulk values in an array file (`file \"...\"`)",
                        path.display(),
                        crate::source::human_len(MAX_INCLUDE_LEN),
                        crate::source::human_len(bytes.len() as u64),
                        bytes.len()
                    ),
                ));
                continue;
            }
            let (text, tree) = rill_syntax::parse_bytes(&bytes);
            let tree = Arc::new(tree);
            let index = self.files.len();
            self.files.push(FileInfo {
                path: path.clone(),
                text: text.into(),
                tree: Some(tree.clone()),
            });
            trees.push(tree);
            stack.push(path);
            self.expand(index, trees, stack, order, depth + 1);
            stack.pop();
        }
    }

    pub(super) fn require<'t>(
        &mut self,
        blocks: &'t HashMap<&'static str, Vec<Found<'t>>>,
        name: &str,
        main: Location,
    ) -> Option<&'t Found<'t>> {
        let found = blocks.get(name).and_then(|v| v.first());
        if found.is_none() {
            let skeleton = match name {
                "grid" => "grid {\n  cells = 10 x 10 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 20 ft\n  top = 5000 ft\n}\n",
                "rock" => "rock {\n  porosity = 0.2\n  kx = 100 md\n}\n",
                "fluid" => "fluid {\n  viscosity = 1 cP\n  fvf = 1.0 rb/stb\n  density = 62.4 lb/ft^3\n}\n",
                "initial" => "initial {\n  pressure = 3000 psi at 5000 ft\n}\n",
                _ => "timeline {\n  end = 365 day\n}\n",
            };
            self.diags.push(
                Diagnostic::error(
                    Code::DeckMissingKey,
                    main,
                    format!("the case has no `{name}` block"),
                )
                .with_replacement(
                    format!("add a `{name}` block"),
                    main,
                    format!("{skeleton}\n"),
                ),
            );
        }
        found
    }

    /// Unknown and duplicate keys, misplaced blocks, missing required keys.
    pub(super) fn check_block_structure(&mut self, file: usize, block: &Block, def: &BlockDef) {
        let mut seen: HashMap<&str, Span> = HashMap::new();
        for item in &block.items {
            match item {
                Item::Statement(s) => {
                    if def.key(&s.key.name).is_none() {
                        let mut d = Diagnostic::error(
                            Code::DeckUnknownKey,
                            Location::new(file, s.key.span),
                            format!("`{}` is not a key of `{}`", s.key.name, def.name),
                        );
                        if let Some(near) =
                            schema::nearest(&s.key.name, def.keys.iter().map(|k| k.name))
                        {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, s.key.span),
                                near,
                            );
                        }
                        let keys: Vec<&str> = def.keys.iter().map(|k| k.name).collect();
                        if !keys.is_empty() {
                            d = d.with_note(format!("keys of `{}`: {}", def.name, keys.join(", ")));
                        }
                        self.diags.push(d);
                        continue;
                    }
                    if let Some(first) = seen.get(s.key.name.as_str()) {
                        self.diags.push(
                            Diagnostic::error(
                                Code::DeckDuplicateKey,
                                Location::new(file, s.key.span),
                                format!(
                                    "`{}` is given twice in `{}`; later statements never replace earlier ones",
                                    s.key.name, def.name
                                ),
                            )
                            .with_label(Location::new(file, *first), "first given here")
                            .with_note(if def.name == "rock" {
                                "use a `patch` block to override part of a property"
                            } else {
                                "remove one of them"
                            }),
                        );
                    } else {
                        seen.insert(&s.key.name, s.key.span);
                    }
                }
                Item::Block(child) => match schema::child_block(def, &child.name.name) {
                    Some(cdef) => self.check_block_structure(file, child, cdef),
                    None => {
                        let mut d = Diagnostic::error(
                            Code::DeckUnknownBlock,
                            Location::new(file, child.name.span),
                            format!("`{}` cannot stand inside `{}`", child.name.name, def.name),
                        );
                        if let Some(near) =
                            schema::nearest(&child.name.name, def.children.iter().copied())
                        {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, child.name.span),
                                near,
                            );
                        }
                        self.diags.push(d);
                    }
                },
                Item::Directive(dir) => {
                    let mut d = Diagnostic::error(
                        Code::DeckUnknownKey,
                        Location::new(file, dir.name.span),
                        format!(
                            "`{}` needs `= value` (or `{{ ... }}` for a block)",
                            dir.name.name
                        ),
                    );
                    if dir.name.name == "include" {
                        d = Diagnostic::error(
                            Code::DeckInclude,
                            Location::new(file, dir.name.span),
                            "`include` is allowed at the top level only",
                        );
                    } else if let Some(near) =
                        schema::nearest(&dir.name.name, def.keys.iter().map(|k| k.name))
                    {
                        d = d.with_note(format!("did you mean `{near} = ...`?"));
                    }
                    self.diags.push(d);
                }
            }
        }
        self.check_required_keys(file, block, def, &seen);
    }

    /// Required keys missing from `block` (`seen`: the keys it gives).
    fn check_required_keys(
        &mut self,
        file: usize,
        block: &Block,
        def: &BlockDef,
        seen: &HashMap<&str, Span>,
    ) {
        // Required keys (the well's `location`/`completions` pair is checked by the well).
        // A misspelt required key is reported once, as unknown with its fix,
        // not again as missing.
        let misspelt: Vec<&str> = block
            .items
            .iter()
            .filter_map(|i| match i {
                Item::Statement(s) if def.key(&s.key.name).is_none() => {
                    schema::nearest(&s.key.name, def.keys.iter().map(|k| k.name))
                }
                _ => None,
            })
            .collect();
        for k in def.keys.iter().filter(|k| k.required) {
            if !seen.contains_key(k.name) && !misspelt.contains(&k.name) {
                let at = Location::new(file, block.name.span);
                let mut d = Diagnostic::error(
                    Code::DeckMissingKey,
                    at,
                    format!("`{}` needs the key `{}`: {}", def.name, k.name, k.doc),
                );
                let example = example_value(k);
                d = d.with_replacement(
                    format!("add `{} = {example}`", k.name),
                    Location::new(file, Span::new(block.open.end, block.open.end)),
                    format!("\n  {} = {example}", k.name),
                );
                self.diags.push(d);
            }
        }
    }

    pub(super) fn check_labels(&mut self, blocks: &HashMap<&'static str, Vec<Found>>) {
        for (name, list) in blocks {
            let Some(def) = schema::top_block(name) else {
                continue;
            };
            let mut names: HashMap<String, Location> = HashMap::new();
            for f in list {
                let label = label_of(f.block);
                if def.label == LabelRule::Required && label.is_none() {
                    self.diags.push(Diagnostic::error(
                        Code::DeckMissingKey,
                        Location::new(f.file, f.block.name.span),
                        format!(
                            "a `{name}` block needs a name in quotes: {name} \"NAME\" {{ ... }}"
                        ),
                    ));
                }
                if def.label == LabelRule::None && !f.block.args.is_empty() {
                    self.diags.push(Diagnostic::error(
                        Code::SyntaxUnexpected,
                        Location::new(f.file, f.block.args[0].span),
                        format!(
                            "expected `{{` after `{name}`, found {}",
                            crate::props::atom_words(&f.block.args[0].kind)
                        ),
                    ));
                }
                if let Some(label) = label {
                    let loc = Location::new(f.file, f.block.args[0].span);
                    if let Some(first) = names.get(&label) {
                        self.diags.push(
                            Diagnostic::error(
                                Code::DeckDuplicateName,
                                loc,
                                format!("two `{name}` blocks are named \"{label}\""),
                            )
                            .with_label(*first, "first named here"),
                        );
                    } else {
                        names.insert(label, loc);
                    }
                }
            }
        }
    }
}
