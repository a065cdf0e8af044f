//! Progress of a design run and how it is stopped: a terminal line, or JSON lines on stderr
//! (`--progress json`), refreshed at least once a second once the run passes a second;
//! `--time-limit` stops the search with the best design so far and its proven lower bound, as
//! the first Ctrl-C does (`super::signals`; a second Ctrl-C quits at once).

use clap::ValueEnum;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use pathsieve::design::lattice::Progress;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// How progress is shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ProgressMode {
    /// A line on a terminal (not with --json).
    Auto,
    /// JSON lines on stderr, one a second.
    Json,
    /// Nothing.
    None,
}

/// The line for a progress state.
fn text(p: Option<Progress>) -> String {
    match p {
        Some(Progress {
            best: Some(b),
            index,
            share_done,
            ..
        }) => {
            let share = share_done.map_or(String::new(), |s| format!(", ~{:.0} %", 100.0 * s));
            format!("best {b} steps, none below {index} proven{share} (Ctrl-C: stop with the best)")
        }
        Some(Progress { index, .. }) => {
            format!("no design yet, none below {index} steps proven (Ctrl-C: stop)")
        }
        None => "preparing the search (Ctrl-C: stop)".into(),
    }
}

/// One JSON progress line.
fn json_line(p: Option<Progress>, elapsed: f64) -> String {
    serde_json::json!({
        "event": "progress",
        "elapsed_s": (elapsed * 10.0).round() / 10.0,
        "best_steps": p.and_then(|p| p.best),
        "none_below": p.map(|p| p.index),
        "lattices_tested": p.map(|p| p.lattices_tested),
        "share_done": p.and_then(|p| p.share_done).map(|s| (s * 1000.0).round() / 1000.0),
    })
    .to_string()
}

/// Shows progress while `work` runs; stops the search after `time_limit` seconds.
pub fn with_progress<T: Send>(
    mode: ProgressMode,
    time_limit: Option<f64>,
    work: impl FnOnce(&(dyn Fn(Progress) + Sync)) -> T + Send,
) -> T {
    let state: Mutex<Option<Progress>> = Mutex::new(None);
    let bar = ProgressBar::with_draw_target(None, ProgressDrawTarget::hidden());
    bar.set_style(
        ProgressStyle::with_template("{spinner} {elapsed} {msg}")
            .unwrap_or_else(|_| ProgressStyle::default_spinner()),
    );
    bar.set_message(text(None));
    let update = |p: Progress| {
        if let Ok(mut s) = state.lock() {
            *s = Some(p);
        }
        bar.set_message(text(Some(p)));
    };
    let done = AtomicBool::new(false);
    let out = std::thread::scope(|scope| {
        scope.spawn(|| {
            let started = Instant::now();
            let mut shown = false;
            let mut last_json = 0u64;
            while !done.load(Ordering::SeqCst) {
                let t = started.elapsed().as_secs_f64();
                if time_limit.is_some_and(|l| t >= l) {
                    super::signals::CANCEL.store(true, Ordering::SeqCst);
                }
                match mode {
                    ProgressMode::Auto if t > 1.0 && !shown => {
                        bar.set_draw_target(ProgressDrawTarget::stderr());
                        bar.enable_steady_tick(Duration::from_millis(120));
                        shown = true;
                    }
                    ProgressMode::Json if t as u64 > last_json => {
                        last_json = t as u64;
                        let p = state.lock().ok().and_then(|s| *s);
                        eprintln!("{}", json_line(p, t));
                    }
                    _ => {}
                }
                std::thread::sleep(Duration::from_millis(20));
            }
        });
        let r = work(&update);
        done.store(true, Ordering::SeqCst);
        r
    });
    bar.finish_and_clear();
    out
}
