use std::io::Read;
fn main() {
    let mut b = Vec::new();
    std::io::stdin().read_to_end(&mut b).unwrap();
    let (text, f) = rill_syntax::parse_bytes(&b);
    if std::env::args().any(|a| a == "--fmt") {
        print!("{}", rill_syntax::format(&f, &text));
        return;
    }
    for e in &f.errors { println!("ERR {:?} {:?} {} | {}", e.kind, e.span, e.expected, e.found); }
    println!("{:#?}", f.items);
}
