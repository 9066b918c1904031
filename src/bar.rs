//! The progress bar of long work on a terminal: a [`Progress`] sink drawn on stderr with
//! `indicatif`.
//!
//! When it is drawn ([`Settings::decide`]): only when stderr is a terminal, never for
//! `--json` output, never with `WETLOAD_PROGRESS=off`, and only once a recomputation has
//! taken [`DELAY`] (300 ms; `WETLOAD_PROGRESS_DELAY_MS` sets another): quick work, which is
//! most of it, draws nothing and nothing flickers. Time rather than a facet count decides,
//! because a small mesh with a long sweep or a floating case can take longer than a big
//! mesh without. The bar is cleared when the [`Bar`] is dropped, which its callers do
//! before they print anything (`calc`'s summary, the watcher's lines), so its line never
//! mixes with theirs.
//!
//! It does not decide what is counted (the stages are [`crate::hydro::Stage`], reported by
//! the pipeline and the core) nor write anything but the bar.

use std::io::IsTerminal;
use std::sync::mpsc;
use std::thread::JoinHandle;
use std::time::Duration;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use crate::hydro::{Progress, Stage};

/// How long a recomputation runs before its bar is drawn.
pub const DELAY: Duration = Duration::from_millis(300);

/// The environment variable that turns the bar off (`off`, `0`, `no`, `never`, `false`).
pub const ENV_SWITCH: &str = "WETLOAD_PROGRESS";

/// The environment variable that sets the delay before the bar is drawn, in milliseconds.
pub const ENV_DELAY: &str = "WETLOAD_PROGRESS_DELAY_MS";

/// Whether bars are drawn, and after how long.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Settings {
    pub show: bool,
    pub delay: Duration,
}

impl Settings {
    /// No bar at all.
    pub const OFF: Settings = Settings {
        show: false,
        delay: DELAY,
    };

    /// The settings of this process: stderr's kind and the environment (see
    /// [`Settings::decide`]).
    pub fn from_env(json: bool) -> Settings {
        Settings::decide(
            json,
            std::io::stderr().is_terminal(),
            std::env::var(ENV_SWITCH).ok().as_deref(),
            std::env::var(ENV_DELAY).ok().as_deref(),
        )
    }

    /// Drawn when the output is not `json`, stderr is a terminal and `switch` (the value
    /// of [`ENV_SWITCH`]) does not say off; after `delay_ms` (the value of [`ENV_DELAY`],
    /// whole milliseconds) or else [`DELAY`].
    pub fn decide(
        json: bool,
        stderr_terminal: bool,
        switch: Option<&str>,
        delay_ms: Option<&str>,
    ) -> Settings {
        let off = switch.is_some_and(|v| {
            ["off", "0", "no", "never", "false"].contains(&v.trim().to_ascii_lowercase().as_str())
        });
        let delay = delay_ms
            .and_then(|v| v.trim().parse::<u64>().ok())
            .map_or(DELAY, Duration::from_millis);
        Settings {
            show: !json && stderr_terminal && !off,
            delay,
        }
    }
}

/// The bar of one recomputation: hidden until the delay has passed, cleared when dropped.
pub struct Bar {
    shown: Option<Shown>,
}

struct Shown {
    bar: ProgressBar,
    /// Dropped to wake the waiter early: the work ended before the delay.
    stop: Option<mpsc::Sender<()>>,
    /// The thread that draws the bar once the delay has passed.
    waiter: Option<JoinHandle<()>>,
}

impl Bar {
    /// A bar for the work on `name` (the mesh's file name); draws nothing unless
    /// `settings.show`.
    pub fn start(settings: Settings, name: &str) -> Bar {
        if !settings.show {
            return Bar { shown: None };
        }
        let style = ProgressStyle::with_template("{spinner} {prefix} · {msg} {wide_bar} {elapsed}")
            .expect("the template is valid")
            .progress_chars("█▌ ");
        let bar = ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::hidden())
            .with_style(style)
            .with_prefix(name.to_owned())
            .with_message("starting");
        let (stop, wait) = mpsc::channel::<()>();
        let delayed = bar.clone();
        let delay = settings.delay;
        let waiter = std::thread::Builder::new()
            .name("progress-bar".into())
            .spawn(move || {
                if let Err(mpsc::RecvTimeoutError::Timeout) = wait.recv_timeout(delay) {
                    delayed.set_draw_target(ProgressDrawTarget::stderr());
                    delayed.enable_steady_tick(Duration::from_millis(120));
                }
            })
            .ok();
        Bar {
            shown: Some(Shown {
                bar,
                stop: Some(stop),
                waiter,
            }),
        }
    }
}

impl Progress for Bar {
    fn report(&self, stage: Stage, done: u64, total: u64) {
        if let Some(s) = &self.shown {
            s.bar.set_length(total);
            s.bar.set_position(done);
            s.bar.set_message(label(stage, done, total));
        }
    }
}

impl Drop for Bar {
    fn drop(&mut self) {
        if let Some(s) = &mut self.shown {
            drop(s.stop.take());
            if let Some(w) = s.waiter.take() {
                let _ = w.join();
            }
            s.bar.finish_and_clear();
        }
    }
}

/// What the bar says of `done` of `total` of `stage`, in plain words.
pub fn label(stage: Stage, done: u64, total: u64) -> String {
    let case = |case: usize, cases: usize| {
        if cases > 1 {
            format!("case {case}/{cases}: ")
        } else {
            String::new()
        }
    };
    match stage {
        Stage::ReadingMesh => format!(
            "reading mesh, {:.1} of {:.1} MB",
            done as f64 / 1e6,
            total as f64 / 1e6
        ),
        Stage::Topology => "checking topology".to_owned(),
        Stage::Case { case: c, cases } => format!("{}integrating loads", case(c, cases)),
        Stage::Sweep { case: c, cases } => {
            format!("{}sweep {done}/{total} levels", case(c, cases))
        }
        Stage::FlotationLimit { case: c, cases } => {
            format!("{}flotation limit, halving {done}", case(c, cases))
        }
        Stage::Curve { case: c, cases } => {
            format!(
                "{}stability curve {done}/{total} heel angles",
                case(c, cases)
            )
        }
        Stage::Writing => "writing results".to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_bar_is_drawn_on_a_terminal_only_without_json_and_unless_switched_off() {
        let on = |json, term, switch| Settings::decide(json, term, switch, None).show;
        assert!(on(false, true, None));
        assert!(!on(true, true, None), "--json");
        assert!(!on(false, false, None), "stderr not a terminal");
        for off in ["off", "OFF", "0", "no", "never", "false", " off "] {
            assert!(!on(false, true, Some(off)), "{off}");
        }
        assert!(on(false, true, Some("on")));
        assert!(on(false, true, Some("")));
    }

    #[test]
    fn the_delay_is_the_default_unless_a_whole_number_of_milliseconds_is_given() {
        let delay = |v| Settings::decide(false, true, None, v).delay;
        assert_eq!(delay(None), DELAY);
        assert_eq!(delay(Some("0")), Duration::ZERO);
        assert_eq!(delay(Some("1500")), Duration::from_millis(1500));
        assert_eq!(delay(Some("soon")), DELAY);
        assert_eq!(delay(Some("-5")), DELAY);
    }

    #[test]
    fn the_labels_are_plain_words_with_the_case_only_when_there_are_several() {
        assert_eq!(
            label(Stage::Sweep { case: 2, cases: 3 }, 40, 101),
            "case 2/3: sweep 40/101 levels"
        );
        assert_eq!(
            label(Stage::Sweep { case: 1, cases: 1 }, 40, 101),
            "sweep 40/101 levels"
        );
        assert_eq!(
            label(Stage::Curve { case: 1, cases: 2 }, 30, 91),
            "case 1/2: stability curve 30/91 heel angles"
        );
        assert_eq!(
            label(Stage::ReadingMesh, 12_500_000, 50_000_084),
            "reading mesh, 12.5 of 50.0 MB"
        );
        assert_eq!(label(Stage::Topology, 0, 1), "checking topology");
        assert_eq!(label(Stage::Writing, 1, 4), "writing results");
    }

    #[test]
    fn a_bar_that_is_not_shown_draws_nothing_and_ends_quietly() {
        // Settings::OFF: no thread, no drawing; reports and the drop are no-ops.
        let bar = Bar::start(Settings::OFF, "m.stl");
        assert!(bar.shown.is_none());
        bar.report(Stage::Topology, 0, 1);
        drop(bar);
    }
}
