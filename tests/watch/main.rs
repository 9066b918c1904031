//! `wetload watch` end to end: real file-system events in temporary folders against the
//! real binary, every expected load a closed form (see [`support::expected`]).
//!
//! Each test spawns its own watcher with a 150 ms debounce window, saves files the way
//! CAD tools and editors do, polls for the expected result with a deadline (never a fixed
//! sleep for something that should happen), and kills the watcher at the end.
//! The crash test SIGKILLs watchers computing 200k-facet meshes at random moments; set
//! `WETLOAD_CRASH_SEED` to repeat a run's kill moments.

mod complete;
mod crash;
mod defects;
mod policy;
mod runs;
mod saves;
mod soak;
mod support;
