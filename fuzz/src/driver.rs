//! The campaign loop, replay and minimisation.

use std::fs;
use std::io::Write;
use std::panic::{self, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use crate::coverage::Coverage;
use crate::mutate::{mutate, Rng};
use crate::targets::Target;

/// What a campaign does.
pub struct Campaign {
    /// The target.
    pub target: Target,
    /// Seed inputs (`fuzz/corpus/<target>`).
    pub seeds: PathBuf,
    /// Where the queue, crashes and hangs go.
    pub out: PathBuf,
    /// How long to run.
    pub duration: Duration,
    /// Random seed.
    pub seed: u64,
    /// A run longer than this is a hang: the input is saved and the process exits.
    pub timeout: Duration,
}

/// The last panic's location and message, captured by the hook.
static LAST_PANIC: Mutex<String> = Mutex::new(String::new());

fn quiet_panics() {
    panic::set_hook(Box::new(|info| {
        let at = info
            .location()
            .map(|l| format!("{}:{}", l.file(), l.line()))
            .unwrap_or_default();
        let msg = info
            .payload()
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| info.payload().downcast_ref::<String>().cloned())
            .unwrap_or_default();
        if let Ok(mut last) = LAST_PANIC.lock() {
            *last = format!("{at}: {msg}");
        }
    }));
}

/// Runs `input`; the panic's location and message if it panicked.
pub fn execute(target: Target, input: &[u8]) -> Option<String> {
    match panic::catch_unwind(AssertUnwindSafe(|| (target.run)(input))) {
        Ok(()) => None,
        Err(_) => Some(LAST_PANIC.lock().map(|s| s.clone()).unwrap_or_default()),
    }
}

fn read_dir(dir: &Path) -> Vec<Vec<u8>> {
    let mut paths: Vec<PathBuf> = fs::read_dir(dir)
        .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    paths.sort();
    paths
        .iter()
        .filter(|p| p.is_file())
        .filter_map(|p| fs::read(p).ok())
        .collect()
}

fn hash(bytes: &[u8]) -> u64 {
    // FNV-1a: a stable file name for an input.
    bytes.iter().fold(0xcbf2_9ce4_8422_2325u64, |h, &b| {
        (h ^ u64::from(b)).wrapping_mul(0x100_0000_01b3)
    })
}

/// Figures of a finished campaign.
#[derive(Debug, Default)]
pub struct Summary {
    /// Inputs run.
    pub execs: u64,
    /// Wall-clock seconds.
    pub seconds: f64,
    /// Corpus entries at the end.
    pub corpus: usize,
    /// Edges reached.
    pub edges: usize,
    /// Counters available.
    pub counters: usize,
    /// Distinct panics (by location and message).
    pub crashes: usize,
}

struct Runner<'c> {
    c: &'c Campaign,
    coverage: Coverage,
    corpus: Vec<Vec<u8>>,
    crashes: Vec<String>,
    execs: u64,
    started: Instant,
    running_since: Arc<AtomicU64>,
    current: Arc<Mutex<Vec<u8>>>,
    queue_dir: PathBuf,
    crash_dir: PathBuf,
}

impl Runner<'_> {
    fn run_one(&mut self, input: &[u8], keep: bool) {
        if let Ok(mut cur) = self.current.lock() {
            cur.clear();
            cur.extend_from_slice(input);
        }
        self.coverage.reset();
        self.running_since
            .store(self.started.elapsed().as_millis() as u64 + 1, Ordering::SeqCst);
        let result = execute(self.c.target, input);
        self.running_since.store(0, Ordering::SeqCst);
        self.execs += 1;
        let new = self.coverage.collect();
        if let Some(what) = result {
            if !self.crashes.contains(&what) {
                let path = self.crash_dir.join(format!("{:016x}", hash(input)));
                let _ = fs::write(&path, input);
                eprintln!("[{}] CRASH {} -> {}", self.c.target.name, what, path.display());
                self.crashes.push(what);
            }
            return;
        }
        if new || keep {
            let path = self.queue_dir.join(format!("{:016x}", hash(input)));
            if !path.exists() {
                let _ = fs::write(&path, input);
            }
            self.corpus.push(input.to_vec());
        }
    }
}

/// Runs the campaign.
pub fn run(c: &Campaign) -> Summary {
    quiet_panics();
    let queue_dir = c.out.join("queue");
    let crash_dir = c.out.join("crashes");
    let hang_dir = c.out.join("hangs");
    for d in [&queue_dir, &crash_dir, &hang_dir] {
        let _ = fs::create_dir_all(d);
    }
    let mut rng = Rng::new(c.seed);
    let mut seeds = read_dir(&c.seeds);
    seeds.extend(read_dir(&queue_dir));
    if seeds.is_empty() {
        seeds.push(Vec::new());
    }
    let mut r = Runner {
        c,
        coverage: Coverage::new(),
        corpus: Vec::new(),
        crashes: Vec::new(),
        execs: 0,
        started: Instant::now(),
        running_since: Arc::new(AtomicU64::new(0)),
        current: Arc::new(Mutex::new(Vec::new())),
        queue_dir,
        crash_dir,
    };
    watchdog(c, r.started, r.running_since.clone(), r.current.clone(), hang_dir);
    let blind = r.coverage.counters() == 0;
    for s in &seeds {
        r.run_one(s, blind);
    }
    if r.corpus.is_empty() {
        r.corpus.push(Vec::new());
    }
    let mut last_status = Instant::now();
    let mut input = Vec::new();
    while r.started.elapsed() < c.duration {
        let parent = &r.corpus[rng.below(r.corpus.len())];
        input.clear();
        input.extend_from_slice(parent);
        mutate(
            &mut input,
            &mut rng,
            &r.corpus,
            c.target.dictionary,
            c.target.max_len,
        );
        r.run_one(&input, false);
        if last_status.elapsed() > Duration::from_secs(30) {
            last_status = Instant::now();
            let secs = r.started.elapsed().as_secs_f64();
            eprintln!(
                "[{}] {:.0}s execs {} ({:.0}/s) corpus {} edges {}/{} crashes {}",
                c.target.name,
                secs,
                r.execs,
                r.execs as f64 / secs,
                r.corpus.len(),
                r.coverage.edges(),
                r.coverage.counters(),
                r.crashes.len()
            );
        }
    }
    Summary {
        execs: r.execs,
        seconds: r.started.elapsed().as_secs_f64(),
        corpus: r.corpus.len(),
        edges: r.coverage.edges(),
        counters: r.coverage.counters(),
        crashes: r.crashes.len(),
    }
}

fn watchdog(
    c: &Campaign,
    started: Instant,
    running_since: Arc<AtomicU64>,
    current: Arc<Mutex<Vec<u8>>>,
    hang_dir: PathBuf,
) {
    let timeout = c.timeout.as_millis() as u64;
    let name = c.target.name;
    std::thread::spawn(move || loop {
        std::thread::sleep(Duration::from_millis(100));
        let since = running_since.load(Ordering::SeqCst);
        let now = started.elapsed().as_millis() as u64 + 1;
        if since != 0 && now.saturating_sub(since) > timeout {
            let input = current.lock().map(|i| i.clone()).unwrap_or_default();
            let path = hang_dir.join(format!("{:016x}", hash(&input)));
            let _ = fs::write(&path, &input);
            eprintln!("[{name}] HANG over {timeout} ms -> {}", path.display());
            let _ = std::io::stderr().flush();
            std::process::exit(3);
        }
    });
}

/// Runs each file once; returns how many panicked.
pub fn replay(target: Target, files: &[PathBuf]) -> usize {
    quiet_panics();
    let mut failed = 0;
    for f in files {
        let Ok(input) = fs::read(f) else {
            eprintln!("cannot read {}", f.display());
            failed += 1;
            continue;
        };
        let t = Instant::now();
        match execute(target, &input) {
            None => eprintln!(
                "ok    {} ({:.1} ms)",
                f.display(),
                t.elapsed().as_secs_f64() * 1e3
            ),
            Some(what) => {
                eprintln!("PANIC {}: {}", f.display(), what);
                failed += 1;
            }
        }
    }
    failed
}

/// Shrinks a panicking input while it still panics at the same place.
pub fn minimize(target: Target, input: &[u8]) -> Vec<u8> {
    quiet_panics();
    let Some(what) = execute(target, input) else {
        return input.to_vec();
    };
    let place = what.split(": ").next().unwrap_or("").to_string();
    let same = |x: &[u8]| execute(target, x).is_some_and(|w| w.starts_with(&place));
    let mut best = input.to_vec();
    let mut chunk = best.len().max(1);
    while chunk >= 1 {
        let mut i = 0;
        let mut shrunk = false;
        while i < best.len() {
            let mut cand = best.clone();
            cand.drain(i..(i + chunk).min(best.len()));
            if same(&cand) {
                best = cand;
                shrunk = true;
            } else {
                i += chunk;
            }
        }
        if !shrunk {
            if chunk == 1 {
                break;
            }
            chunk /= 2;
        }
    }
    // Then simplify bytes towards '0'/0.
    for i in 0..best.len() {
        for v in [0u8, b'0', b' ', b'a'] {
            if best[i] != v {
                let mut cand = best.clone();
                cand[i] = v;
                if same(&cand) {
                    best = cand;
                    break;
                }
            }
        }
    }
    best
}
