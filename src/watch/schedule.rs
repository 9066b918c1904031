//! When to recompute: a pure debouncer over (path, instant) pairs.
//!
//! A save is rarely one event: editors and CAD tools write a temporary file and rename
//! it, or truncate and write in chunks, and the file system reports several events per
//! save. The schedule holds each touched path until no event has arrived for it for the
//! quiet window, then hands it out once. It knows nothing of files or notify; the watcher
//! feeds it events and asks it which path is due, so the logic is testable with invented
//! instants.
//!
//! The one way to ask is [`Schedule::next_due`], which takes every event the watcher has
//! received but not yet fed (each with the instant it arrived) before it decides, and
//! hands out one path at a time. So no path is released while an event for it is still
//! waiting to be read: after a long computation, the events that queued up meanwhile
//! count before anything else is released, and the watcher asks again after each
//! recomputation rather than working through a list decided before it. Retries of files
//! that looked half-written and of results that could not be written go through the
//! same schedule.

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

    /// Feeds every event in `unread` (path, instant of arrival), then removes and
    /// returns the first path, in path order, that has been quiet since `now − quiet`.
    pub fn next_due(
        &mut self,
        unread: impl IntoIterator<Item = (PathBuf, Instant)>,
        now: Instant,
    ) -> Option<PathBuf> {
        for (path, at) in unread {
            self.touch(path, at);
        }
        let quiet = self.quiet;
        let due = self
            .pending
            .iter()
            .find(|(_, last)| now.saturating_duration_since(**last) >= quiet)
            .map(|(p, _)| p.clone())?;
        self.pending.remove(&due);
        Some(due)
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

    /// Every path due at `now` with nothing unread, in order.
    fn due(s: &mut Schedule, now: Instant) -> Vec<PathBuf> {
        std::iter::from_fn(|| s.next_due([], now)).collect()
    }

    #[test]
    fn a_path_with_unread_events_is_not_released_on_its_last_read_one() {
        // A slow computation held the watcher from 100 ms to 2000 ms; meanwhile b.obj was
        // written every 250 ms up to 1900 ms. Its events wait unread; the last one read
        // is from 0 ms.
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(500));
        s.touch(PathBuf::from("b.obj"), t0);
        let unread: Vec<(PathBuf, Instant)> = (1..=7)
            .map(|k| (PathBuf::from("b.obj"), t0 + ms(250 * k + 150)))
            .collect();
        assert_eq!(s.next_due(unread, t0 + ms(2000)), None);
        assert_eq!(s.next_in(t0 + ms(2000)), Some(ms(400)));
        assert_eq!(s.next_due([], t0 + ms(2400)), Some(PathBuf::from("b.obj")));
    }

    #[test]
    fn paths_are_released_one_at_a_time_so_events_between_count() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(100));
        s.touch(PathBuf::from("a.stl"), t0);
        s.touch(PathBuf::from("b.obj"), t0);
        assert_eq!(s.next_due([], t0 + ms(100)), Some(PathBuf::from("a.stl")));
        // While a.stl computed, b.obj was written again.
        let later = [(PathBuf::from("b.obj"), t0 + ms(150))];
        assert_eq!(s.next_due(later, t0 + ms(200)), None);
        assert_eq!(s.next_due([], t0 + ms(250)), Some(PathBuf::from("b.obj")));
    }

    #[test]
    fn a_burst_of_events_is_released_once_after_the_last() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(300));
        for i in 0..50 {
            s.touch(PathBuf::from("gate.stl"), t0 + ms(10 * i));
        }
        // Last event at 490 ms: nothing is due before 790 ms.
        assert!(due(&mut s, t0 + ms(789)).is_empty());
        assert_eq!(s.next_in(t0 + ms(700)), Some(ms(90)));
        assert_eq!(due(&mut s, t0 + ms(790)), vec![PathBuf::from("gate.stl")]);
        assert!(due(&mut s, t0 + ms(2000)).is_empty());
        assert!(s.is_empty());
    }

    #[test]
    fn paths_fall_due_independently() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(100));
        s.touch(PathBuf::from("a.stl"), t0);
        s.touch(PathBuf::from("b.obj"), t0 + ms(80));
        assert_eq!(due(&mut s, t0 + ms(120)), vec![PathBuf::from("a.stl")]);
        assert_eq!(due(&mut s, t0 + ms(180)), vec![PathBuf::from("b.obj")]);
    }

    #[test]
    fn an_out_of_order_instant_does_not_shorten_the_window() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(100));
        s.touch(PathBuf::from("a.stl"), t0 + ms(50));
        s.touch(PathBuf::from("a.stl"), t0);
        assert!(due(&mut s, t0 + ms(120)).is_empty());
        assert_eq!(due(&mut s, t0 + ms(150)).len(), 1);
    }
}
