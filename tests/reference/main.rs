//! Reference checks: wetload's results against things outside the project.
//!
//! Each module compares with one kind of outside reference, named beside every check:
//! closed forms and the exact derived checks of the trade notes (`closed_form`), published
//! worked examples rebuilt as meshes (`textbook`), the mass properties and plane splits of
//! parry3d-f64 (`parry`), physical invariances (`invariance`), real CAD exports
//! (`real_exports`), flotation checks of buried tanks against a published worked example
//! and closed forms (`flotation`), level sweeps against single calculations (`sweep`), and floating bodies against parry's
//! tilted plane splits and under units, up axis and rotation (`floating`). Helpers live in `support`.
//!
//! `cargo test --test reference -- --nocapture` prints one `REF` line per comparison with
//! the error observed and the tolerance allowed.

mod closed_form;
mod floating;
mod flotation;
mod invariance;
mod nodal;
mod parry;
mod real_exports;
mod support;
mod sweep;
mod textbook;
