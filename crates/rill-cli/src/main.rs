//! The `rill` binary. It parses arguments, reads files and renders results;
//! it must not contain logic that the language server also needs.

fn main() {
    eprintln!("rill: under construction");
    std::process::exit(2);
}
