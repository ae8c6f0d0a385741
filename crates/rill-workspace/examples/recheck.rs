//! Re-check latency: analyse a deck once (reading and parsing its arrays),
//! then again N times through the same `DiskSource` and cache (`Reuse`), as
//! the language server does after each edit of the main file. Prints the first time and the
//! median and worst of the re-checks (`RECHECK_RAW=1`: each re-check too;
//! `RECHECK_DROP=1`: drop the first analysis before re-checking, unlike the
//! server, which keeps the previous analysis alive for hover;
//! `RECHECK_FRESH=1`: keep nothing between analyses, as `rill check` does;
//! `RECHECK_NO_PREPARE=1`: do not prepare spare buffers after the first
//! analysis, which the server does while the user reads its diagnostics;
//! `RECHECK_AFTER=TEXT`: type the digits after the first `TEXT` in the deck,
//! such as `kz = 0.1`, instead of in a comment at the end;
//! `RECHECK_REPLACE=TEXT`: replace the character after `TEXT`, such as
//! `kz = 0.`, by the digits 1 to 9 in turn, so that no value repeats soon).
//!
//! usage: cargo run --release -p rill-workspace --example recheck -- DECK [N]

use rill_model::Reuse;
use rill_workspace::DiskSource;

// The same allocator as the `rill` binary, so the timings match the server.
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;
use std::time::Instant;

fn main() {
    // As the `rill` binary does, first thing (see `use_large_pages` there).
    // SAFETY: no other thread runs yet; this only sets an option value.
    unsafe {
        libmimalloc_sys::mi_option_set(libmimalloc_sys::mi_option_large_os_pages, 1);
    }
    let mut args = std::env::args().skip(1);
    let Some(deck) = args.next() else {
        eprintln!("usage: recheck DECK [N]");
        std::process::exit(2);
    };
    let n: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(20);
    let path = std::path::PathBuf::from(deck);
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) => {
            eprintln!("cannot read {}: {e}", path.display());
            std::process::exit(2);
        }
    };
    let source = DiskSource::unconfined();
    let fresh = std::env::var_os("RECHECK_FRESH").is_some();
    let kept = Reuse::new();
    let check = |text: &str| {
        if fresh {
            rill_model::analyze_text(&path, text, &source)
        } else {
            rill_model::analyze_text_with(&path, text, &source, &kept)
        }
    };
    let t0 = Instant::now();
    let first = check(&text);
    let first_ms = t0.elapsed().as_secs_f64() * 1e3;
    let first_count = first.diagnostics.len();
    if std::env::var_os("RECHECK_NO_PREPARE").is_none() {
        if let (false, Some(case)) = (fresh, &first.case) {
            kept.prepare(case.grid.cell_count(), 2);
        }
    }
    if std::env::var_os("RECHECK_DROP").is_some() {
        drop(first);
    }
    let mut times = Vec::with_capacity(n);
    for i in 0..n {
        // One more character typed, as a typist would: in a comment at the
        // end, or after RECHECK_AFTER.
        let at = |var: &str| {
            let needle = std::env::var(var).ok()?;
            Some(text.find(&needle)? + needle.len())
        };
        let edited = if let Some(at) = at("RECHECK_REPLACE") {
            let digit = char::from(b'1' + (i % 9) as u8);
            let rest = text[at..].chars().skip(1).collect::<String>();
            format!("{}{digit}{rest}", &text[..at])
        } else if let Some(at) = at("RECHECK_AFTER") {
            format!("{}{}{}", &text[..at], "1".repeat(i + 1), &text[at..])
        } else {
            format!("{text}#{}\n", "x".repeat(i + 1))
        };
        let t = Instant::now();
        let a = check(&edited);
        times.push(t.elapsed().as_secs_f64() * 1e3);
        if std::env::var_os("RECHECK_RAW").is_some() {
            eprint!("{:.0} ", times[times.len() - 1]);
        }
        assert_eq!(a.diagnostics.len(), first_count);
    }
    times.sort_by(f64::total_cmp);
    println!(
        "first check {first_ms:.1} ms; {n} re-checks: median {:.1} ms, worst {:.1} ms; {} diagnostics",
        times[n / 2],
        times[n - 1],
        first_count
    );
}
