//! Prints the tree and errors of a case file read from stdin, or with
//! `--fmt` its canonical formatting: `cargo run -p rill-syntax --example dump -- --fmt < deck.rill`.
use std::io::Read;

fn main() {
    let mut bytes = Vec::new();
    if let Err(e) = std::io::stdin().read_to_end(&mut bytes) {
        eprintln!("cannot read stdin: {e}");
        std::process::exit(2);
    }
    let (text, file) = rill_syntax::parse_bytes(&bytes);
    if std::env::args().any(|a| a == "--fmt") {
        print!("{}", rill_syntax::format(&file, &text));
        return;
    }
    for e in &file.errors {
        println!(
            "error {:?} {}..{}: expected {}, found {}",
            e.kind, e.span.start, e.span.end, e.expected, e.found
        );
    }
    println!("{:#?}", file.items);
}
