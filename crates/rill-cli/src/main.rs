//! The `rill` binary: argument parsing, reading files from disk, and
//! rendering results for a terminal or as JSON. It must not contain logic
//! that the language server also needs; that lives in the library crates.

#![warn(clippy::too_many_lines)]

mod check;
mod fmt;
mod includers;
mod inspect;
mod positions;
mod run;

use clap::{Parser, Subcommand, ValueEnum};

// Re-checking a million-cell deck allocates and frees arrays of millions of
// values on every edit; mimalloc keeps those pages instead of returning and
// faulting them in again (measured: median re-check 46 ms -> 29 ms).
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// Let mimalloc back its arenas with 2 MiB pages where the kernel offers
/// them (transparent huge pages on `madvise`): a fresh million-cell array
/// then faults in a handful of pages instead of thousands of 4 KiB ones.
/// Measured on the 1.12-million-cell case: first check 242 -> 84 ms, worst
/// re-check while typing in `kz` 46 -> 19 ms (`--example recheck`).
fn use_large_pages() {
    // SAFETY: mi_option_set is not thread safe; this runs first thing in
    // main, before any thread is started, and only sets an option value.
    unsafe {
        libmimalloc_sys::mi_option_set(libmimalloc_sys::mi_option_large_os_pages, 1);
    }
}
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "rill",
    version,
    about = "Check, inspect, format and run reservoir flow cases written in the rill case language"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// A unit system for `rill inspect --units`.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Units {
    Field,
    Metric,
    Si,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Text,
    Json,
}

#[derive(Subcommand)]
enum Command {
    /// Parse and check decks; report every problem found.
    Check {
        #[arg(required = true)]
        files: Vec<PathBuf>,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
    },
    /// Show a cell: its properties, its six faces and any well in it.
    Inspect {
        file: PathBuf,
        /// 1-based cell indices, e.g. `--cell 15,10,2`.
        #[arg(long, value_name = "I,J,K")]
        cell: String,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
        /// Units of the text output; default: the deck's `report { units }`.
        /// The JSON keeps the specification's field-unit names.
        #[arg(long, value_enum)]
        units: Option<Units>,
    },
    /// Rewrite decks in the canonical layout; the meaning never changes.
    Fmt {
        #[arg(required = true)]
        files: Vec<PathBuf>,
        /// Report files that would change, write nothing.
        #[arg(long)]
        check: bool,
    },
    /// Run the case; results go to `<deck>.out/` (or --out).
    Run {
        file: PathBuf,
        /// Output directory; never the deck's own directory.
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Also write the first pressure system as MatrixMarket `matrix.mtx` and `rhs.mtx` into DIR.
        #[arg(long, value_name = "DIR")]
        export_system: Option<PathBuf>,
        /// No progress bar.
        #[arg(long, short)]
        quiet: bool,
        /// The engine: `embedded` (this process), or `petsc` (this process as
        /// one rank of an MPI run: `mpirun -n 4 rill run DECK --engine petsc`;
        /// needs a rill built with the `petsc` feature).
        #[arg(long, value_enum, default_value_t = run::EngineChoice::Embedded)]
        engine: run::EngineChoice,
        /// PETSc options over rill's defaults, e.g. "-pc_type gamg" (with
        /// `--engine petsc`; PETSC_OPTIONS in the environment is read too).
        #[arg(long, value_name = "OPTIONS", allow_hyphen_values = true)]
        petsc_options: Option<String>,
    },
    /// Explain a diagnostic code: what it means and how to fix it.
    Explain { code: String },
    /// The language server on stdin/stdout (for editors).
    Lsp,
}

fn main() -> ExitCode {
    use_large_pages();
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let usage = e.use_stderr();
            let _ = e.print();
            return if usage {
                ExitCode::from(2)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    if !matches!(cli.command, Command::Lsp) {
        end_quietly_on_closed_pipe();
    }
    let code = match cli.command {
        Command::Check { files, format } => check::run(&files, format),
        Command::Inspect {
            file,
            cell,
            format,
            units,
        } => inspect::run(&file, &cell, format, units),
        Command::Fmt { files, check } => fmt::run(&files, check),
        Command::Run {
            file,
            out,
            export_system,
            quiet,
            engine,
            petsc_options,
        } => run::run(run::Args {
            file,
            out,
            export_system,
            quiet,
            engine,
            petsc_options,
        }),
        Command::Explain { code } => explain(&code),
        Command::Lsp => rill_lsp::run_stdio(),
    };
    ExitCode::from(code)
}

/// A reader that stops early (`rill inspect ... | head`) closes the pipe;
/// like the usual Unix tools, the command then ends at its next write
/// (SIGPIPE) instead of panicking in `println!`. Not for `rill lsp`, whose
/// protocol layer handles a vanished client itself.
fn end_quietly_on_closed_pipe() {
    #[cfg(unix)]
    // SAFETY: restoring the default disposition of one signal at start-up,
    // before any thread is spawned; no handler code is involved.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}

fn explain(code: &str) -> u8 {
    use rill_model::Code;
    match Code::parse(code).and_then(rill_model::explain::explain) {
        Some(e) => {
            println!("{}: {}\n", e.code, e.summary);
            println!("{}\n", e.details);
            println!("Wrong:\n{}\n", indent(e.wrong));
            println!("Right:\n{}\n", indent(e.right));
            println!("Fix: {}", e.fix);
            0
        }
        None => {
            let near = rill_model::schema::nearest(code, Code::ALL.iter().map(|c| c.as_str()));
            eprintln!("error: `{code}` is not a rill diagnostic code");
            if let Some(n) = near {
                eprintln!("help: did you mean `{n}`?");
            }
            let all: Vec<&str> = Code::ALL.iter().map(|c| c.as_str()).collect();
            eprintln!("codes: {}", all.join(", "));
            2
        }
    }
}

fn indent(s: &str) -> String {
    s.lines()
        .map(|l| format!("    {l}"))
        .collect::<Vec<_>>()
        .join("\n")
}
