//! When to recompute: a pure debouncer over (path, instant) pairs.
//!
//! A save is rarely one event: editors and CAD tools write a temporary file and rename
//! it, or truncate and write in chunks, and the file system reports several events per
//! save. The schedule holds each touched path until no event has arrived for it for the
//! quiet window, then hands it out once. It knows nothing of files or notify; the watcher
//! feeds it events and asks it which paths are due, so the logic is testable with
//! invented instants.

use std::collections::BTreeMap;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Pending paths and the instant each was last touched.
#[derive(Debug)]
pub struct Schedule {
    quiet: Duration,
    pending: BTreeMap<PathBuf, Instant>,
}

impl Schedule {
    /// A schedule that releases a path once it has been quiet for `quiet`.
    pub fn new(quiet: Duration) -> Schedule {
        Schedule {
            quiet,
            pending: BTreeMap::new(),
        }
    }

    /// Records an event on `path` at `at`; a later event restarts the path's window.
    pub fn touch(&mut self, path: PathBuf, at: Instant) {
        let slot = self.pending.entry(path).or_insert(at);
        if at > *slot {
            *slot = at;
        }
    }

    /// Schedules `path` to be released at `at + quiet` unless touched again (a retry).
    pub fn retry(&mut self, path: PathBuf, at: Instant) {
        self.touch(path, at);
    }

    /// Removes and returns the paths quiet since `now − quiet`, in path order.
    pub fn due(&mut self, now: Instant) -> Vec<PathBuf> {
        let quiet = self.quiet;
        let due: Vec<PathBuf> = self
            .pending
            .iter()
            .filter(|(_, last)| now.saturating_duration_since(**last) >= quiet)
            .map(|(p, _)| p.clone())
            .collect();
        for p in &due {
            self.pending.remove(p);
        }
        due
    }

    /// How long until the next path falls due (`None` when nothing is pending).
    pub fn next_in(&self, now: Instant) -> Option<Duration> {
        self.pending
            .values()
            .map(|last| (*last + self.quiet).saturating_duration_since(now))
            .min()
    }

    /// Whether nothing is pending.
    pub fn is_empty(&self) -> bool {
        self.pending.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ms(n: u64) -> Duration {
        Duration::from_millis(n)
    }

    #[test]
    fn a_burst_of_events_is_released_once_after_the_last() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(300));
        for i in 0..50 {
            s.touch(PathBuf::from("gate.stl"), t0 + ms(10 * i));
        }
        // Last event at 490 ms: nothing is due before 790 ms.
        assert!(s.due(t0 + ms(789)).is_empty());
        assert_eq!(s.next_in(t0 + ms(700)), Some(ms(90)));
        assert_eq!(s.due(t0 + ms(790)), vec![PathBuf::from("gate.stl")]);
        assert!(s.due(t0 + ms(2000)).is_empty());
        assert!(s.is_empty());
    }

    #[test]
    fn paths_fall_due_independently() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(100));
        s.touch(PathBuf::from("a.stl"), t0);
        s.touch(PathBuf::from("b.obj"), t0 + ms(80));
        assert_eq!(s.due(t0 + ms(120)), vec![PathBuf::from("a.stl")]);
        assert_eq!(s.due(t0 + ms(180)), vec![PathBuf::from("b.obj")]);
    }

    #[test]
    fn an_out_of_order_instant_does_not_shorten_the_window() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(100));
        s.touch(PathBuf::from("a.stl"), t0 + ms(50));
        s.touch(PathBuf::from("a.stl"), t0);
        assert!(s.due(t0 + ms(120)).is_empty());
        assert_eq!(s.due(t0 + ms(150)).len(), 1);
    }
}
