//! Progress on standard error: a bar on a terminal, one line per file otherwise, or nothing.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use sixray::calculation::FileJob;
use sixray::progress::Progress;
use std::io::IsTerminal;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

/// How progress is shown.
pub enum Display {
    /// An indicatif bar with count, rate, ETA and the file in progress.
    Bar(ProgressBar),
    /// One line per finished or failed file, for logs and pipelines.
    Lines { done: AtomicUsize, total: usize, start: Instant },
    /// Nothing.
    Quiet,
}

impl Display {
    /// The display suited to standard error for `total` orbitals.
    pub fn new(total: usize, quiet: bool) -> Self {
        if quiet {
            return Display::Quiet;
        }
        if !std::io::stderr().is_terminal() {
            return Display::Lines { done: AtomicUsize::new(0), total, start: Instant::now() };
        }
        let bar = ProgressBar::with_draw_target(Some(total as u64), ProgressDrawTarget::stderr());
        bar.set_style(
            ProgressStyle::with_template("{bar:30} {pos}/{len} orbitals  {per_sec}  ETA {eta}  {wide_msg}")
                .expect("the template is valid")
                .progress_chars("█▉▊▋▌▍▎▏ "),
        );
        Display::Bar(bar)
    }

    /// Clears the bar (if any) once the run is over.
    pub fn finish(&self) {
        if let Display::Bar(bar) = self {
            bar.finish_and_clear();
        }
    }

    fn line(&self, text: &str) {
        match self {
            Display::Bar(bar) => bar.println(text),
            Display::Lines { .. } => eprintln!("{text}"),
            Display::Quiet => {}
        }
    }
}

fn name(job: &FileJob) -> String {
    let file = job.path.file_name().map_or_else(|| job.path.display().to_string(), |n| n.to_string_lossy().into_owned());
    if job.calculation.is_empty() { file } else { format!("{}: {file}", job.calculation) }
}

impl Progress for Display {
    fn file_started(&self, job: &FileJob) {
        if let Display::Bar(bar) = self {
            bar.set_message(name(job));
        }
    }

    fn file_done(&self, job: &FileJob, orbitals: usize, cached: usize) {
        match self {
            Display::Bar(bar) => bar.inc(orbitals as u64),
            Display::Lines { done, total, start } => {
                let n = done.fetch_add(orbitals, Ordering::Relaxed) + orbitals;
                let from_cache = if cached > 0 { format!(", {cached} from cache") } else { String::new() };
                eprintln!(
                    "sixray: [{n}/{total}] {} ({orbitals} orbital{}{from_cache}; {:.1} s elapsed)",
                    name(job),
                    if orbitals == 1 { "" } else { "s" },
                    start.elapsed().as_secs_f64()
                );
            }
            Display::Quiet => {}
        }
    }

    fn file_failed(&self, job: &FileJob, error: &str) {
        if let Display::Lines { done, .. } = self {
            done.fetch_add(1, Ordering::Relaxed);
        }
        if let Display::Bar(bar) = self {
            bar.inc(1);
        }
        self.line(&format!("sixray: error: {}: {error}", job.calculation));
    }

    fn warning(&self, message: &str) {
        self.line(&format!("sixray: warning: {message}"));
    }
}
