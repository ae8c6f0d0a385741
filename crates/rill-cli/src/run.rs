//! `rill run`: check the deck, run it through the shared pipeline
//! (`rill_run`) with a progress bar on stderr, and print the pipeline's
//! summary with the caution that results are engineering estimates.

use indicatif::{ProgressBar, ProgressStyle};
use rill_run::{Failure, Request, SystemExport};
use rill_sim::{Observer, Progress};
use rill_units::format_number;
use rill_workspace::DiskSource;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

pub struct Args {
    pub file: PathBuf,
    pub out: Option<PathBuf>,
    pub export_system: Option<PathBuf>,
    pub quiet: bool,
}

/// Progress bar and Ctrl-C.
struct CliObserver {
    bar: Option<ProgressBar>,
    started: Instant,
    cancel: Arc<AtomicBool>,
    quiet: bool,
}

impl CliObserver {
    fn bar(&mut self, end: f64) -> Option<&ProgressBar> {
        // Only for runs longer than a moment, only on a terminal.
        if self.bar.is_none()
            && !self.quiet
            && std::io::stderr().is_terminal()
            && self.started.elapsed() > Duration::from_millis(300)
        {
            let bar = ProgressBar::new(1000);
            bar.set_style(
                ProgressStyle::with_template("{spinner} [{elapsed_precise}] {bar:30} {msg}")
                    .unwrap_or_else(|_| ProgressStyle::default_bar()),
            );
            bar.set_length((end / 86400.0 * 1000.0).max(1.0) as u64);
            self.bar = Some(bar);
        }
        self.bar.as_ref()
    }
}

impl Observer for CliObserver {
    fn progress(&mut self, p: &Progress) {
        if let Some(bar) = self.bar(p.end) {
            bar.set_position((p.time / 86400.0 * 1000.0) as u64);
            bar.set_message(format!(
                "t = {} day, step {} ({} day), {} Newton / {} linear iterations",
                format_number(p.time / 86400.0),
                p.step,
                format_number(p.step_size / 86400.0),
                p.newton_iterations,
                p.linear_iterations
            ));
        }
    }

    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }
}

pub fn run(args: Args) -> u8 {
    let started = Instant::now();
    let source = DiskSource::unconfined();
    let analysis = match crate::check::load(&args.file, &source) {
        Ok(a) => a,
        Err(e) => {
            eprintln!("error: {e}");
            return 2;
        }
    };
    if !analysis.diagnostics.is_empty() {
        crate::check::render_text(&analysis);
    }
    let cancel = Arc::new(AtomicBool::new(false));
    {
        let cancel = cancel.clone();
        // A second Ctrl-C while the run winds down ends the process the usual way.
        let _ = ctrlc::set_handler(move || {
            if cancel.swap(true, Ordering::Relaxed) {
                std::process::exit(130);
            }
        });
    }
    let mut observer = CliObserver {
        bar: None,
        started,
        cancel,
        quiet: args.quiet,
    };
    let out_dir = args
        .out
        .clone()
        .unwrap_or_else(|| rill_output::default_out_dir(&args.file));
    let mut request = Request::new(&analysis, &args.file, &out_dir);
    request.export_system = args.export_system.clone();
    let outcome = rill_run::run(&request, &mut observer);
    if let Some(bar) = observer.bar.take() {
        bar.finish_and_clear();
    }
    match outcome.export {
        SystemExport::Written(files) => {
            for f in files {
                eprintln!("wrote {}", f.display());
            }
        }
        SystemExport::Failed(e) => eprintln!("error: --export-system: {e}"),
        SystemExport::NoSystem => {
            eprintln!("note: --export-system: the run solved no linear system")
        }
        SystemExport::NotAsked => {}
    }
    match outcome.result {
        Ok(done) => {
            println!("{}", done.summary.text());
            0
        }
        Err(e @ Failure::Run(_)) => {
            eprintln!("error: {e}");
            eprintln!("note: earlier results, if any, are left as they were");
            1
        }
        Err(e) => {
            eprintln!("error: {e}");
            1
        }
    }
}
