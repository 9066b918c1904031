//! wetload: exact hydrostatic loads on CAD surface meshes.
//!
//! The data walks one way: command line → pipeline → { mesh readers, sidecar } → the pure
//! core in [`hydro`] → report writers. See DEVELOPERS.md for the architecture map.

pub mod hydro;
pub mod mesh;
pub mod shapes;
pub mod sidecar;
