//! `rill-syntax` owns the text-to-tree step for rill case files: the lexer,
//! the `nom` parser with error recovery, the syntax tree with a byte span on
//! every node, and the canonical formatter (a pure function of the tree).
//!
//! It must never know what a key means (that is `rill-model`), never do I/O,
//! and never panic on any input.

pub mod ast;

pub use ast::*;
