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

/// What an event says about a path.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Signal {
    /// Something changed and more may follow (a write, a create, a truncation): the path
    /// waits for the quiet window, and any completion seen before it no longer counts.
    Progress,
    /// A save is known to be complete: a writer closed the file or renamed a finished file
    /// into place, and the content passed its format's completeness check (see
    /// `watch::complete`). The path is due at once unless another event follows.
    Complete,
    /// A save is complete by its writer's word alone (an OBJ renamed into place: no end
    /// marker to check): due after this short settle unless another event follows, so
    /// that the events of a write that began at once are read first.
    Settle(Duration),
}

/// One event as the schedule takes it: a path, when the event arrived, what it says.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Touch {
    pub path: PathBuf,
    pub at: Instant,
    pub signal: Signal,
}

impl Touch {
    /// A progress event on `path` at `at`.
    pub fn progress(path: PathBuf, at: Instant) -> Touch {
        Touch {
            path,
            at,
            signal: Signal::Progress,
        }
    }
}

/// A pending path: its last event, and when a completed save makes it due (`None`: only
/// the quiet window does).
#[derive(Clone, Copy, Debug)]
struct Pending {
    last: Instant,
    ready: Option<Instant>,
}

/// Pending paths and the instant each was last touched.
#[derive(Debug)]
pub struct Schedule {
    quiet: Duration,
    pending: BTreeMap<PathBuf, Pending>,
}

impl Schedule {
    /// A schedule that releases a path once it has been quiet for `quiet`, or at once
    /// when its last event completed a save.
    pub fn new(quiet: Duration) -> Schedule {
        Schedule {
            quiet,
            pending: BTreeMap::new(),
        }
    }

    /// Records an event. The latest event decides: a completion followed by any later
    /// event waits for the quiet window again, and an event older than the latest one
    /// (instants can arrive out of order) only keeps the window from shortening.
    pub fn feed(&mut self, touch: Touch) {
        let ready = match touch.signal {
            Signal::Progress => None,
            Signal::Complete => Some(touch.at),
            Signal::Settle(d) => Some(touch.at + d),
        };
        match self.pending.get_mut(&touch.path) {
            None => {
                self.pending.insert(
                    touch.path,
                    Pending {
                        last: touch.at,
                        ready,
                    },
                );
            }
            Some(p) if touch.at >= p.last => {
                p.last = touch.at;
                p.ready = ready;
            }
            Some(_) => {}
        }
    }

    /// Records a progress event on `path` at `at`: a later event restarts the window.
    pub fn touch(&mut self, path: PathBuf, at: Instant) {
        self.feed(Touch::progress(path, at));
    }

    /// Schedules `path` to be released at `at + quiet` unless touched again (a retry).
    pub fn retry(&mut self, path: PathBuf, at: Instant) {
        self.touch(path, at);
    }

    /// Feeds every event in `unread`, then removes and returns the first path, in path
    /// order, that is due at `now`: its last event completed a save, or it has been quiet
    /// since `now − quiet`.
    pub fn next_due(
        &mut self,
        unread: impl IntoIterator<Item = Touch>,
        now: Instant,
    ) -> Option<PathBuf> {
        self.next_due_since(unread, now).map(|(path, _)| path)
    }

    /// [`Schedule::next_due`], with the instant of the path's last event.
    pub fn next_due_since(
        &mut self,
        unread: impl IntoIterator<Item = Touch>,
        now: Instant,
    ) -> Option<(PathBuf, Instant)> {
        for touch in unread {
            self.feed(touch);
        }
        let quiet = self.quiet;
        let due = self
            .pending
            .iter()
            .find(|(_, p)| {
                p.ready.is_some_and(|r| now >= r) || now.saturating_duration_since(p.last) >= quiet
            })
            .map(|(path, _)| path.clone())?;
        let p = self.pending.remove(&due)?;
        Some((due, p.last))
    }

    /// How long until the next path falls due (`None` when nothing is pending).
    pub fn next_in(&self, now: Instant) -> Option<Duration> {
        self.pending
            .values()
            .map(|p| {
                let quiet = (p.last + self.quiet).saturating_duration_since(now);
                p.ready
                    .map_or(quiet, |r| r.saturating_duration_since(now).min(quiet))
            })
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

    fn progress(path: &str, at: Instant) -> Touch {
        Touch::progress(PathBuf::from(path), at)
    }

    fn complete(path: &str, at: Instant) -> Touch {
        Touch {
            path: PathBuf::from(path),
            at,
            signal: Signal::Complete,
        }
    }

    #[test]
    fn a_path_with_unread_events_is_not_released_on_its_last_read_one() {
        // A slow computation held the watcher from 100 ms to 2000 ms; meanwhile b.obj was
        // written every 250 ms up to 1900 ms. Its events wait unread; the last one read
        // is from 0 ms.
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(500));
        s.touch(PathBuf::from("b.obj"), t0);
        let unread: Vec<Touch> = (1..=7)
            .map(|k| progress("b.obj", t0 + ms(250 * k + 150)))
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
        let later = [progress("b.obj", t0 + ms(150))];
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

    #[test]
    fn a_completed_save_is_due_at_once_unless_something_follows() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(500));
        // Written in three chunks, then renamed into place: due as soon as that is read.
        let save = [
            progress("gate.stl", t0),
            progress("gate.stl", t0 + ms(20)),
            complete("gate.stl", t0 + ms(40)),
        ];
        assert_eq!(
            s.next_due(save, t0 + ms(41)),
            Some(PathBuf::from("gate.stl"))
        );
        // A writer that closes and then writes again: the later event takes the
        // completion back, and the quiet window decides.
        let reopen = [complete("b.stl", t0), progress("b.stl", t0 + ms(30))];
        assert_eq!(s.next_due(reopen, t0 + ms(31)), None);
        assert_eq!(s.next_in(t0 + ms(31)), Some(ms(499)));
        assert_eq!(s.next_due([], t0 + ms(530)), Some(PathBuf::from("b.stl")));
        // An older completion read after a newer write does not release the path.
        s.feed(progress("c.stl", t0 + ms(100)));
        s.feed(complete("c.stl", t0 + ms(90)));
        assert_eq!(s.next_due([], t0 + ms(101)), None);
        // Nothing pending: nothing to wait for.
        assert_eq!(s.next_due([], t0 + ms(600)), Some(PathBuf::from("c.stl")));
        assert!(s.is_empty() && s.next_in(t0).is_none());
    }

    #[test]
    fn a_save_complete_by_its_writers_word_waits_a_short_settle() {
        let t0 = Instant::now();
        let mut s = Schedule::new(ms(500));
        let settle = |path: &str, at: Instant| Touch {
            path: PathBuf::from(path),
            at,
            signal: Signal::Settle(ms(40)),
        };
        s.feed(settle("a.obj", t0));
        assert_eq!(s.next_due([], t0 + ms(39)), None);
        assert_eq!(s.next_in(t0 + ms(10)), Some(ms(30)));
        assert_eq!(s.next_due([], t0 + ms(40)), Some(PathBuf::from("a.obj")));
        // A write read during the settle sends it back to the quiet window.
        s.feed(settle("b.obj", t0));
        assert_eq!(
            s.next_due([progress("b.obj", t0 + ms(20))], t0 + ms(60)),
            None
        );
        assert_eq!(s.next_due([], t0 + ms(520)), Some(PathBuf::from("b.obj")));
    }
}
