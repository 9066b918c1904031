//! The progress seam: how long work says how far it has got, without knowing who listens.
//!
//! A [`Progress`] sink receives coarse stages with a count done of a total (bytes of the
//! mesh read, levels of a sweep, heel angles of a stability curve); [`Quiet`] ignores them
//! and is what every caller that does not care passes. The core reports per block, per
//! level or per angle, never per facet, so a report costs nothing next to the work it
//! counts; a [`Tally`] makes the counts of work shared by several threads rise in order.
//!
//! It lives in the core because the core reports through it and imports nothing; it knows
//! nothing of terminals (the bar that listens is `src/bar.rs`). Reporting never changes a
//! computed number: the counts are read by the sink only.

use std::sync::{Mutex, PoisonError};

/// A stage of one recomputation. Case numbers count from 1.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stage {
    /// Reading and parsing the mesh file: bytes done of the file's size.
    ReadingMesh,
    /// The internal frame, the topology and which side of each facet is wet: 0 or 1 of 1.
    Topology,
    /// Integrating a case: 0 or 1 of 1.
    Case { case: usize, cases: usize },
    /// The level sweep of a case: levels done of the sweep's levels.
    Sweep { case: usize, cases: usize },
    /// The bisection for a case's flotation limit: halvings done of at most `total`.
    FlotationLimit { case: usize, cases: usize },
    /// The equilibrium and righting-lever curve of a floating case: heel angles solved.
    Curve { case: usize, cases: usize },
    /// Writing the result, its exports, the change log and the page: steps done.
    Writing,
}

/// Where progress goes. Called from any thread (hence `Sync`), so it must be cheap and
/// must not block for long.
pub trait Progress: Sync {
    /// `done` of `total` of `stage` is finished (`done ≤ total`).
    fn report(&self, stage: Stage, done: u64, total: u64);
}

/// The sink that ignores everything: what callers pass when nobody watches.
#[derive(Clone, Copy, Debug, Default)]
pub struct Quiet;

impl Progress for Quiet {
    fn report(&self, _: Stage, _: u64, _: u64) {}
}

/// A count of one stage, reported to a sink as it rises. Work done on several threads
/// adds to it in any order; the sink still sees each count once, increasing, and the last
/// report is `total` of `total` once all is added.
pub struct Tally<'a> {
    sink: &'a dyn Progress,
    stage: Stage,
    /// Done and total; the lock is held while reporting, so reports arrive in order.
    count: Mutex<(u64, u64)>,
}

impl<'a> Tally<'a> {
    /// A count of `stage` for `sink`; nothing is reported until [`Tally::begin`].
    pub fn new(sink: &'a dyn Progress, stage: Stage) -> Tally<'a> {
        Tally {
            sink,
            stage,
            count: Mutex::new((0, 0)),
        }
    }

    /// A count nobody hears.
    pub fn quiet() -> Tally<'static> {
        Tally::new(&Quiet, Stage::Topology)
    }

    /// Sets the total and reports 0 of it.
    pub fn begin(&self, total: u64) {
        let mut c = self.count.lock().unwrap_or_else(PoisonError::into_inner);
        *c = (0, total);
        self.sink.report(self.stage, 0, total);
    }

    /// Adds `n` done and reports the new count (never above the total; a count that does
    /// not change is not reported again).
    pub fn add(&self, n: u64) {
        let mut c = self.count.lock().unwrap_or_else(PoisonError::into_inner);
        let next = c.0.saturating_add(n).min(c.1);
        if next != c.0 {
            c.0 = next;
            self.sink.report(self.stage, c.0, c.1);
        }
    }

    /// Reports the stage finished (`total` of `total`), as a loop that stops early is.
    pub fn finish(&self) {
        let mut c = self.count.lock().unwrap_or_else(PoisonError::into_inner);
        if c.0 < c.1 {
            c.0 = c.1;
            self.sink.report(self.stage, c.0, c.1);
        }
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    /// A sink that keeps every report, for tests of the seam.
    #[derive(Default)]
    pub struct Recorder(pub Mutex<Vec<(Stage, u64, u64)>>);

    impl Progress for Recorder {
        fn report(&self, stage: Stage, done: u64, total: u64) {
            self.0
                .lock()
                .unwrap_or_else(PoisonError::into_inner)
                .push((stage, done, total));
        }
    }

    impl Recorder {
        /// The reports of one stage, in order.
        pub fn of(&self, stage: Stage) -> Vec<(u64, u64)> {
            self.0
                .lock()
                .unwrap_or_else(PoisonError::into_inner)
                .iter()
                .filter(|r| r.0 == stage)
                .map(|r| (r.1, r.2))
                .collect()
        }
    }

    /// The counts rise by at least one each time from 0 and end at the total, which never
    /// changes.
    pub fn assert_counts_up_to(reports: &[(u64, u64)], total: u64) {
        assert!(!reports.is_empty(), "nothing reported");
        assert_eq!(reports[0], (0, total), "{reports:?}");
        assert!(
            reports.windows(2).all(|w| w[0].0 < w[1].0),
            "not increasing: {reports:?}"
        );
        assert!(reports.iter().all(|r| r.1 == total), "{reports:?}");
        assert_eq!(reports.last(), Some(&(total, total)), "{reports:?}");
    }

    #[test]
    fn a_tally_added_to_from_many_threads_reports_each_count_once_in_order() {
        use rayon::prelude::*;
        let sink = Recorder::default();
        let tally = Tally::new(&sink, Stage::Writing);
        tally.begin(1000);
        (0..1000).into_par_iter().for_each(|_| tally.add(1));
        tally.finish();
        let got = sink.of(Stage::Writing);
        assert_counts_up_to(&got, 1000);
        assert_eq!(
            got.len(),
            1001,
            "one report per addition, and none on finish"
        );
    }

    #[test]
    fn finish_reports_the_total_of_a_loop_that_stopped_early_and_add_never_passes_it() {
        let sink = Recorder::default();
        let tally = Tally::new(&sink, Stage::Topology);
        tally.begin(80);
        tally.add(3);
        tally.finish();
        tally.add(5);
        assert_eq!(sink.of(Stage::Topology), vec![(0, 80), (3, 80), (80, 80)]);
    }
}
