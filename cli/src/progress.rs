//! A progress line on stderr while a long computation runs, shown only when
//! stderr is a terminal (never in pipes, files or tests).
//!
//! The core's engines report no progress, so the line shows the engine, its
//! estimated steps and the time elapsed; it appears after half a second and
//! is erased when the work ends.

use std::io::{IsTerminal, Write};
use std::time::{Duration, Instant};

/// Runs `work`, with a progress line labelled `label` if it takes a while.
pub fn with_progress<T: Send>(label: &str, work: impl FnOnce() -> T + Send) -> T {
    if !std::io::stderr().is_terminal() {
        return work();
    }
    std::thread::scope(|scope| {
        let handle = scope.spawn(work);
        let start = Instant::now();
        let mut shown = false;
        let spinner = ['|', '/', '-', '\\'];
        let mut tick = 0usize;
        while !handle.is_finished() {
            std::thread::sleep(Duration::from_millis(100));
            let elapsed = start.elapsed();
            if elapsed >= Duration::from_millis(500) {
                let mut err = std::io::stderr().lock();
                let _ = write!(
                    err,
                    "\r{} {label}  {:.1} s ",
                    spinner[tick % 4],
                    elapsed.as_secs_f64()
                );
                let _ = err.flush();
                shown = true;
                tick += 1;
            }
        }
        if shown {
            let mut err = std::io::stderr().lock();
            let _ = write!(err, "\r\x1b[2K");
            let _ = err.flush();
        }
        match handle.join() {
            Ok(v) => v,
            Err(panic) => std::panic::resume_unwind(panic),
        }
    })
}

/// The library's steps with a progress line each (see [`with_progress`]).
pub struct Progress;

impl clout::drafting::Watch for Progress {
    fn step<T: Send>(&mut self, label: &str, work: impl FnOnce() -> T + Send) -> Result<T, clout::Failure> {
        Ok(with_progress(label, work))
    }
}
